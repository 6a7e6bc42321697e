//! Drafts left by a session that ended with unsaved edits: recover one into the editor,
//! discard it, or keep them for later.

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;

use crate::recipe::Recipe;
use crate::ron_format::clip;
use crate::tui::context::{Context, Key};
use crate::tui::document::open_document;
use crate::tui::drafts::{self, DraftEntry};
use crate::tui::model::{Model, Overlay, View};
use crate::tui::theme::{boxed, centered, Theme};

/// Keys of the drafts offered.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, drafts: Vec<DraftEntry>, mut selected: usize) {
    match key {
        Key::Up => {
            selected = selected.saturating_sub(1);
            model.overlay = Overlay::Drafts { drafts, selected };
        }
        Key::Down => {
            selected = (selected + 1).min(drafts.len().saturating_sub(1));
            model.overlay = Overlay::Drafts { drafts, selected };
        }
        Key::Enter | Key::Char('y') => {
            if let Some(d) = drafts.get(selected) {
                recover_draft(model, ctx, d);
            }
        }
        Key::Char('d') => {
            let Some(gone) = drafts.get(selected).cloned() else { return };
            let _ = std::fs::remove_file(&gone.path);
            model.status = format!("draft of {} discarded", gone.name);
            let rest: Vec<_> = drafts.into_iter().filter(|d| d.path != gone.path).collect();
            if !rest.is_empty() {
                model.overlay = Overlay::Drafts { drafts: rest, selected: 0 };
            }
        }
        _ => model.status = "drafts kept for later".into(),
    }
}

fn recover_draft(model: &mut Model, ctx: &Context, draft: &drafts::DraftEntry) {
    match drafts::read(&draft.path) {
        Ok(recipe) => {
            let name = draft.name.as_str();
            let opened = ctx.library.open(name).ok();
            let mut doc = open_document(name, recipe, opened, ctx);
            if doc.opened.is_none() {
                doc.saved = Recipe::blank();
            }
            doc.recovered_draft = Some(draft.path.clone());
            model.doc = Some(doc);
            model.check_selected = None;
            model.view = View::Editor;
            model.status = format!("recovered the unsaved edits of {}: s saves them", draft.file.display());
        }
        Err(e) => model.status = format!("the draft cannot be read: {e}"),
    }
}
/// The drafts waiting.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, drafts: &[DraftEntry], selected: &usize) {
    let mut lines = vec![Line::raw("A session ended with unsaved edits; they were kept:")];
    for (k, d) in drafts.iter().enumerate() {
        let when = d.written.get(..16).unwrap_or(&d.written).replace('T', " ");
        lines.push(Line::styled(
            format!("{} {}  {when}", if k == *selected { "▶" } else { " " }, clip(&d.name, 38)),
            if k == *selected { theme.selected() } else { Style::default() },
        ));
    }
    lines.push(Line::styled("Enter recover · d discard · Esc later", theme.dim()));
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, 60, h), "Recover unsaved edits?", lines);
}
