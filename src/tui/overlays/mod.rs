//! What is drawn over a view and takes the keys while it is open: help, questions, the
//! line being typed, the gas picker, history, trash, settings, drafts, premixes, fill
//! records, and the
//! verification pane. Each is one module with its keys and its drawing; this file only
//! hands them the key or the frame.

pub mod confirm;
pub mod history;
pub mod picker;
pub mod premixes;
pub mod prompt;
pub mod records;
pub mod recover;
pub mod settings;
pub mod trash;
pub mod verification;

use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::Frame;

use crate::gas::Catalogue;
use crate::tui::context::{Context, Key};
use crate::tui::model::{Model, Overlay, View};
use crate::tui::theme::{boxed, centered, Theme};

/// The open overlay takes the key; it closes unless its handler puts it back.
pub fn on_key(model: &mut Model, key: Key, ctx: &mut Context) {
    match std::mem::replace(&mut model.overlay, Overlay::None) {
        Overlay::None | Overlay::Help => {}
        Overlay::ConfirmQuit => confirm::on_quit(model, ctx, key),
        Overlay::ConfirmDelete(name) => confirm::on_delete(model, ctx, key, name),
        Overlay::ConfirmSaveInvalid { note, .. } => confirm::on_save_invalid(model, ctx, key, note),
        Overlay::ConfirmStop(finding) => confirm::on_stop(model, key, finding),
        Overlay::Conflict => confirm::on_conflict(model, ctx, key),
        Overlay::ConfirmFillKind(_) => confirm::on_fill_kind(model, ctx, key),
        Overlay::Premixes { selected, scroll } => premixes::on_key(model, ctx, key, selected, scroll),
        Overlay::Trash { entries, selected } => trash::on_key(model, ctx, key, entries, selected),
        Overlay::Settings { selected, values } => settings::on_key(model, ctx, key, selected, values),
        Overlay::Prompt { purpose, input } => prompt::on_key(model, ctx, key, purpose, input),
        Overlay::Picker { input, selected, purpose } => picker::on_key(model, ctx, key, input, selected, purpose),
        history @ Overlay::History { .. } => history::on_key(model, ctx, key, history),
        Overlay::Drafts { drafts, selected } => recover::on_key(model, ctx, key, drafts, selected),
        Overlay::Records(list) => records::on_key(model, ctx, key, list),
    }
}

/// Draw the open overlay over `area`.
pub fn draw(model: &Model, catalogue: &Catalogue, theme: &Theme, frame: &mut Frame, area: Rect) {
    match &model.overlay {
        Overlay::None => {}
        Overlay::Help => draw_help(model.view, frame, area),
        Overlay::ConfirmQuit => confirm::draw_quit(frame, area),
        Overlay::ConfirmDelete(name) => confirm::draw_delete(frame, area, name),
        Overlay::ConfirmSaveInvalid { why, .. } => confirm::draw_save_invalid(theme, frame, area, why),
        Overlay::ConfirmStop(finding) => confirm::draw_stop(theme, frame, area, finding),
        Overlay::Conflict => confirm::draw_conflict(frame, area),
        Overlay::ConfirmFillKind(said) => confirm::draw_fill_kind(frame, area, said),
        Overlay::Premixes { selected, scroll } => premixes::draw(model, theme, frame, area, *selected, *scroll),
        Overlay::Trash { entries, selected } => trash::draw(theme, frame, area, entries, selected),
        Overlay::Settings { selected, values } => settings::draw(theme, frame, area, selected, values),
        Overlay::Prompt { purpose, input } => prompt::draw(theme, frame, area, purpose, input),
        Overlay::Picker { input, selected, purpose } => {
            picker::draw(theme, frame, area, catalogue, input, selected, purpose)
        }
        history @ Overlay::History { .. } => history::draw(theme, frame, area, history),
        Overlay::Drafts { drafts, selected } => recover::draw(theme, frame, area, drafts, selected),
        Overlay::Records(list) => records::draw(theme, frame, area, list),
    }
}

/// The keys of the view shown, then the keys every view shares.
fn draw_help(view: View, frame: &mut Frame, area: Rect) {
    let shared = [
        "",
        "Tab, S-Tab  next, previous view   1-5 go to a view",
        "s or F2     save (S: save with a note)",
        "Esc         back out              ? help   q quit",
    ];
    let lines: Vec<Line> =
        crate::tui::views::of(view).help().iter().chain(shared.iter()).map(|l| Line::raw(*l)).collect();
    // As wide as its longest line, so that no line wraps.
    let w = lines.iter().map(Line::width).max().unwrap_or(0) as u16 + 2;
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, w.max(40), h), &format!("Keys: {}", view.title()), lines);
}
