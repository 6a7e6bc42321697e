//! Every key press becomes a [`Msg`]; [`update`] hands it on: to the verification pane or
//! the open overlay when there is one, else the keys every view shares (help, quit, views,
//! save) are taken here and the rest go to the view shown (`views`). It touches the disk
//! only through the library in [`Context`], so it runs in tests without a terminal.

pub use super::context::{Context, Key, Msg};
pub use super::document::{new_recipe, open, recipe_as_typed, refresh, start, start_with};

use super::context::input;
use super::document::save_checked;
use super::model::{Document, Model, Overlay, Prompt, View};
use super::{overlays, views};

/// The top-level update.
pub fn update(model: &mut Model, msg: Msg, ctx: &mut Context) {
    let before = model.view;
    match msg {
        Msg::Key(key) => on_key(model, key, ctx),
    }
    // Back on the Library: which recipes have a fill in progress may have changed.
    if model.view == View::Library && before != View::Library {
        super::document::refresh_filling(model, ctx);
    }
    // The Models view shows the comparison of following each model's readings.
    if model.view == View::Models {
        super::document::ensure_following(model, ctx);
    }
}

fn on_key(model: &mut Model, key: Key, ctx: &mut Context) {
    // The verification pane, while open, takes every key.
    if let Some(pane) = model.verification.as_mut() {
        if overlays::verification::on_key(pane, key, ctx) == overlays::verification::After::Close {
            model.verification = None;
        }
        return;
    }
    // Overlays take the keys first, then a view that is being typed into.
    if !matches!(model.overlay, Overlay::None) {
        overlays::on_key(model, key, ctx);
        return;
    }
    let screen = views::of(model.view);
    if screen.typing(model) {
        screen.on_key(model, key, ctx);
        return;
    }
    match key {
        Key::Char('?') | Key::F(1) => model.overlay = Overlay::Help,
        Key::Char('q') | Key::Ctrl('q') => {
            if model.doc.as_ref().is_some_and(Document::dirty) {
                model.overlay = Overlay::ConfirmQuit;
            } else {
                model.quit = true;
            }
        }
        Key::Tab => switch_view(model, 1),
        Key::BackTab => switch_view(model, -1),
        Key::Char(c @ '1'..='5') => {
            let v = View::ALL[(c as u8 - b'1') as usize];
            go_to(model, v);
        }
        Key::Char('s') | Key::F(2) if model.doc.is_some() && model.view != View::Library => {
            save_checked(model, ctx, None)
        }
        Key::Char('S') if model.doc.is_some() && model.view != View::Library => {
            model.overlay = Overlay::Prompt { purpose: Prompt::SaveNote, input: input("") }
        }
        Key::Esc if model.view != View::Library && screen.leaves_on_esc() => model.view = View::Library,
        _ => screen.on_key(model, key, ctx),
    }
}

fn go_to(model: &mut Model, v: View) {
    if v != View::Library && model.doc.is_none() {
        model.status = "open a recipe first (Enter on a library line)".into();
    } else {
        // What the status said belongs to the view left.
        if model.view != v {
            model.status.clear();
        }
        model.view = v;
    }
}

fn switch_view(model: &mut Model, step: i32) {
    let n = View::ALL.len() as i32;
    let i = View::ALL.iter().position(|v| *v == model.view).unwrap_or(0) as i32;
    let next = View::ALL[((i + step).rem_euclid(n)) as usize];
    go_to(model, next);
}
