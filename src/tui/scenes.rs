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
        beside: None,
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
        ("verification", Box::new(verification_scene)),
        ("records", Box::new(records_scene)),
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

/// The fill records of the demo library: one finished, one in progress.
fn records_scene(m: &mut Model, c: &mut Context) {
    let records = c.library.dir().join("records");
    let _ = std::fs::create_dir_all(&records);
    let _ = std::fs::write(records.join("FC-10-2291-20261202.ron"), DEMO_RECORD);
    let _ = std::fs::write(records.join("FC-10-2304-20261203.ron"), DEMO_RECORD_IN_PROGRESS);
    press(m, c, &[Key::Char('f'), Key::Down]);
}

/// The verification pane on a finished fill of the flue-gas demo.
fn verification_scene(m: &mut Model, c: &mut Context) {
    // A finished fill of the flue-gas demo and its CO2 verified on an NDIR
    // (invented readings).
    let records = c.library.dir().join("records");
    let _ = std::fs::create_dir_all(&records);
    let _ = std::fs::write(records.join("FC-10-2291-20261202.ron"), DEMO_RECORD);
    if let Ok(v) = crate::verification::Verification::parse(DEMO_VERIFICATION, "demo") {
        let _ = c.library.save_verification("FC-10-2291-CO2", &v);
    }
    press(m, c, &[Key::Char('v'), Key::Enter, Key::Down, Key::Down, Key::Down, Key::Right]);
}

/// A finished fill of the flue-gas demo (invented readings).
const DEMO_RECORD: &str = r#"Record(
    format: 1,
    recipe: "flue-gas-span",
    recipe_revision: 1,
    cylinder: "FC-10-2291",
    operator: "R. Okafor",
    finished: "2026-12-02T10:00:00Z",
    scale_uncertainty: "0.010g",
    weighings: ["13412.000g", "13504.850g", "13942.450g", "15473.450g"],
    additions: [
        (source: "CO=1%±0.002%,N2=balance"),
        (source: "CO2=balance,N2=<10ppm"),
        (source: "N2=balance,O2=<2ppm,Ar=5ppm±1ppm"),
    ],
)
"#;

/// A second cylinder of the flue-gas demo, its fill in progress (invented readings).
const DEMO_RECORD_IN_PROGRESS: &str = r#"Record(
    format: 1,
    recipe: "flue-gas-span",
    recipe_revision: 1,
    cylinder: "FC-10-2304",
    operator: "M. Lindqvist",
    balance: "BAL-07, calibrated 2026-10-14",
    started: "2026-12-03T08:40:00Z",
    scale_uncertainty: "0.029g",
    weighings: ["13398.120g", "13490.990g"],
    additions: [
        (source: "CO=1%±0.002%,N2=balance", time: "2026-12-03T08:52:00Z"),
    ],
)
"#;

/// Its CO2 analysed against three reference mixtures (invented readings).
const DEMO_VERIFICATION: &str = r#"Verification(
    format: 1,
    gas: "CO2",
    analyser: "NDIR, bench 2",
    function: "linear",
    standards: [
        (name: "RM-A 4471", content: "12.002%±0.004%", response: "1.20020±0.00030"),
        (name: "RM-B 4472", content: "14.010%±0.004%", response: "1.40095±0.00030"),
        (name: "RM-C 4473", content: "16.005%±0.005%", response: "1.60054±0.00030"),
    ],
    sample: (record: "FC-10-2291-20261202", responses: ["1.46390", "1.46431", "1.46402"]),
)
"#;

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
