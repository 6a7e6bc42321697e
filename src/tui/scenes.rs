//! The screen in each of its views on a demo recipe, for the snapshot tests and for
//! `cargo run --example screenshots` (which writes `screenshots/*.svg`).

use std::path::Path;

use ratatui::backend::TestBackend;
use ratatui::buffer::Buffer;
use ratatui::Terminal;

use super::model::Model;
use super::update::{self, Context, Key, Msg};
use crate::gas::Catalogue;
use crate::library::Library;
use crate::settings::Settings;

fn stamp() -> String {
    "2026-12-01T09:00:00Z".into()
}

/// A context on a fresh copy of the demo library in `dir`.
pub fn demo_context(dir: &Path) -> Context {
    let _ = std::fs::remove_dir_all(dir);
    Context {
        library: Library::at(dir).expect("a writable temporary folder"),
        catalogue: Catalogue::built_in(),
        settings: Settings::default().resolve("", "defaults").expect("the defaults resolve"),
        drafts: None,
        sources: None,
        now: stamp,
        session: "demo".into(),
        settings_file: None,
    }
}

fn press(model: &mut Model, ctx: &mut Context, keys: &[Key]) {
    for k in keys {
        update::update(model, Msg::Key(*k), ctx);
    }
}

fn type_text(model: &mut Model, ctx: &mut Context, text: &str) {
    for c in text.chars() {
        update::update(model, Msg::Key(Key::Char(c)), ctx);
    }
}

/// The keys that lead to a scene from a fresh start.
pub type Steps = Box<dyn Fn(&mut Model, &mut Context)>;

/// Each scene: its name and how to get there.
pub fn scenes() -> Vec<(&'static str, Steps)> {
    let open_flue = |m: &mut Model, c: &mut Context| {
        press(m, c, &[Key::Char('/')]);
        type_text(m, c, "flue-gas");
        press(m, c, &[Key::Enter]);
    };
    vec![
        ("library", Box::new(|_: &mut Model, _: &mut Context| {})),
        ("editor", Box::new(move |m: &mut Model, c: &mut Context| open_flue(m, c))),
        (
            "fill-sheet",
            Box::new(move |m: &mut Model, c: &mut Context| {
                open_flue(m, c);
                press(m, c, &[Key::Char('3'), Key::Char(' '), Key::Char('t'), Key::Ctrl('u')]);
                type_text(m, c, "28C");
                press(m, c, &[Key::Enter]);
            }),
        ),
        (
            "fill-sheet-stop",
            Box::new(|m: &mut Model, c: &mut Context| {
                // The flue-gas order filled above its cylinder's working pressure.
                if let Ok(opened) = c.library.open("flue-gas-span") {
                    let r = crate::recipe::Recipe {
                        fill: crate::recipe::FillTarget::Pressure("230bar".into()),
                        ..opened.recipe
                    };
                    let _ = c.library.save_as("flue-gas-overfilled", &r, &stamp());
                }
                super::update::refresh(m, c);
                press(m, c, &[Key::Char('/')]);
                type_text(m, c, "overfilled");
                press(m, c, &[Key::Enter, Key::Char('3'), Key::Char('t')]);
                type_text(m, c, "30C");
                press(m, c, &[Key::Enter, Key::Char(' '), Key::Char('y'), Key::Char(' '), Key::Char('r')]);
                type_text(m, c, "250bar");
                press(m, c, &[Key::Enter]);
            }),
        ),
        (
            "models",
            Box::new(move |m: &mut Model, c: &mut Context| {
                open_flue(m, c);
                press(m, c, &[Key::Char('4')]);
            }),
        ),
        (
            "screening",
            Box::new(|m: &mut Model, c: &mut Context| {
                press(m, c, &[Key::Char('/')]);
                type_text(m, c, "lpg");
                press(m, c, &[Key::Enter, Key::Char('5')]);
            }),
        ),
        (
            "help",
            Box::new(move |m: &mut Model, c: &mut Context| {
                open_flue(m, c);
                press(m, c, &[Key::Char('?')]);
            }),
        ),
        (
            "gas-picker",
            Box::new(move |m: &mut Model, c: &mut Context| {
                open_flue(m, c);
                press(m, c, &[Key::Char('a')]);
                type_text(m, c, "bu");
            }),
        ),
    ]
}

/// Render one scene at `width`×`height`, on a demo library in `dir`.
pub fn render(dir: &Path, scene: &dyn Fn(&mut Model, &mut Context), width: u16, height: u16, color: bool) -> Buffer {
    render_in(dir, scene, width, height, color, crate::units::Shown::default())
}

/// As [`render`], with figures shown in other units.
pub fn render_in(
    dir: &Path,
    scene: &dyn Fn(&mut Model, &mut Context),
    width: u16,
    height: u16,
    color: bool,
    shown: crate::units::Shown,
) -> Buffer {
    let mut ctx = demo_context(dir);
    let mut model = Model::new("demo library".into(), color);
    model.shown = shown;
    update::start(&mut model, &mut ctx);
    model.status.clear();
    scene(&mut model, &mut ctx);
    let mut terminal = Terminal::new(TestBackend::new(width, height)).expect("a test terminal");
    terminal.draw(|f| super::view::view(&model, &ctx.catalogue, f)).expect("drawing on a test terminal");
    terminal.backend().buffer().clone()
}

/// A buffer as plain text, one line per row.
pub fn text(buffer: &Buffer) -> String {
    let area = buffer.area;
    let mut out = String::new();
    for y in 0..area.height {
        let mut line = String::new();
        for x in 0..area.width {
            line.push_str(buffer[(x, y)].symbol());
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}
