//! A recipe's history: its revisions, what changed between two of them in the trade's
//! words, and restoring one as a new revision.

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;

use crate::library::Saved;
use crate::ron_format::clip;
use crate::tui::context::{Context, Key};
use crate::tui::document::{open, refresh};
use crate::tui::model::{Document, Model, Overlay};
use crate::tui::theme::{boxed, centered, Theme};

pub fn show_history(model: &mut Model, ctx: &Context, name: &str) {
    match ctx.library.history(name) {
        Ok(revisions) => {
            let selected = revisions.len().saturating_sub(1);
            let mut overlay =
                Overlay::History { name: name.to_string(), revisions, selected, changes: Vec::new(), base: None };
            history_changes(&mut overlay, ctx);
            model.overlay = overlay;
        }
        Err(e) => model.status = e.to_string(),
    }
}

/// The changes between two revisions, in the trade's words: from the marked one (or the
/// selected one) to the selected one (or the newest).
fn history_changes(overlay: &mut Overlay, ctx: &Context) {
    if let Overlay::History { name, revisions, selected, changes, base } = overlay {
        let newest = revisions.last().map(|r| r.revision);
        let chosen = revisions.get(*selected).map(|r| r.revision);
        let (from, to) = match base {
            Some(b) => (Some(*b), chosen),
            None => (chosen, newest),
        };
        *changes = match (from, to) {
            (Some(a), Some(b)) if a != b => match (ctx.library.revision(name, a), ctx.library.revision(name, b)) {
                (Ok(ra), Ok(rb)) => {
                    let list = crate::recipe::changes::describe(&ra, &rb);
                    if list.is_empty() {
                        vec![format!("revisions {a} and {b} are the same order")]
                    } else {
                        list
                    }
                }
                (Err(e), _) | (_, Err(e)) => vec![e.to_string()],
            },
            _ => vec!["the same revision: choose another, or Space to compare from this one".into()],
        };
    }
}
/// Keys of the history.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, history: Overlay) {
    let Overlay::History { name, revisions, mut selected, changes, mut base } = history else { return };
    match key {
        Key::Up | Key::Char('k') | Key::Down | Key::Char('j') | Key::Char(' ') => {
            match key {
                Key::Up | Key::Char('k') => selected = selected.saturating_sub(1),
                Key::Down | Key::Char('j') => selected = (selected + 1).min(revisions.len().saturating_sub(1)),
                _ => {
                    let here = revisions.get(selected).map(|r| r.revision);
                    base = if base == here { None } else { here };
                }
            }
            let mut o = Overlay::History { name, revisions, selected, changes, base };
            history_changes(&mut o, ctx);
            model.overlay = o;
        }
        Key::Char('r') => {
            let rev = revisions.get(selected).map_or(0, |r| r.revision);
            let open_here = model.doc.as_ref().filter(|d| d.name == name);
            if open_here.is_some_and(Document::dirty) {
                model.status = format!("{name} has unsaved edits: save them (s) or undo them before restoring");
                model.overlay = Overlay::History { name, revisions, selected, changes, base };
                return;
            }
            let reload = open_here.is_some();
            match ctx.library.restore(&name, rev, &(ctx.now)()) {
                Ok(Saved::Written { revision, .. }) => {
                    // The open editor shows what is now on disk, so that the next save
                    // builds on the restored revision.
                    if reload {
                        let view = model.view;
                        open(model, ctx, &name);
                        model.view = view;
                    }
                    model.status = format!("restored revision {rev} of {name} as revision {revision}")
                }
                Ok(Saved::Unchanged { .. }) => model.status = "that revision is the current content".into(),
                Err(e) => model.status = e.to_string(),
            }
            refresh(model, ctx);
        }
        Key::Esc | Key::Char('q') => {}
        _ => model.overlay = Overlay::History { name, revisions, selected, changes, base },
    }
}

/// The revisions and the changes chosen.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, history: &Overlay) {
    let Overlay::History { name, revisions, selected, changes, base } = history else { return };
    // As wide as the screen allows; the note gets what the fixed columns leave.
    let width = area.width.saturating_sub(4).clamp(40, 120);
    let note_room = usize::from(width).saturating_sub(2 + 8 + 22 + 12 + 2);
    let mut lines: Vec<Line> = revisions
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let when = r.saved.as_deref().map_or("-".to_string(), |s| s.replace('T', " "));
            let text = format!(
                "{} rev {:>3}  {:<20}  {:<10}  {}",
                if k == *selected { "▶" } else { " " },
                r.revision,
                clip(&when, 20),
                clip(r.saved_by.as_deref().unwrap_or("-"), 10),
                clip(r.note.as_deref().unwrap_or(""), note_room)
            );
            Line::styled(text, if k == *selected { theme.selected() } else { Style::default() })
        })
        .collect();
    lines.push(Line::styled(
        match base {
            Some(b) => format!("from revision {b} to the chosen one:"),
            None => "from the chosen revision to the newest:".to_string(),
        },
        theme.bold(),
    ));
    lines.extend(changes.iter().map(|c| Line::raw(format!("  {c}"))));
    lines.push(Line::styled("↑↓ choose · Space compare from here · r restore · Esc close", theme.dim()));
    let h = (lines.len() as u16 + 2).min(area.height);
    boxed(frame, centered(area, width, h), &format!("History of {name}"), lines);
}
