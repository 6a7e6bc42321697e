//! The trash: deleted recipes, brought back with Enter.

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;

use crate::ron_format::clip_middle;
use crate::tui::context::{Context, Key};
use crate::tui::document::refresh;
use crate::tui::model::{Model, Overlay};
use crate::tui::theme::{boxed, centered, Theme};

/// Keys of the trash.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, entries: Vec<(String, String)>, mut selected: usize) {
    match key {
        Key::Up | Key::Char('k') => {
            selected = selected.saturating_sub(1);
            model.overlay = Overlay::Trash { entries, selected };
        }
        Key::Down | Key::Char('j') => {
            selected = (selected + 1).min(entries.len().saturating_sub(1));
            model.overlay = Overlay::Trash { entries, selected };
        }
        Key::Enter | Key::Char('y') => {
            let Some((name, deleted)) = entries.get(selected).cloned() else { return };
            match ctx.library.undelete(&name, None, Some(&deleted)) {
                Ok(back) => {
                    model.status = format!("{back} is back in the library");
                    refresh(model, ctx);
                }
                Err(e) => model.status = e.to_string(),
            }
        }
        _ => {}
    }
}

/// The deleted recipes, newest first.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, entries: &[(String, String)], selected: &usize) {
    let mut lines: Vec<Line> = entries
        .iter()
        .enumerate()
        .map(|(k, (name, when))| {
            Line::styled(
                format!("{} {:<40} deleted {when}", if k == *selected { "▶" } else { " " }, clip_middle(name, 40)),
                if k == *selected { theme.selected() } else { Style::default() },
            )
        })
        .collect();
    lines.push(Line::styled("↑↓ choose · Enter bring it back · Esc close", theme.dim()));
    let h = (lines.len() as u16 + 2).min(area.height);
    boxed(frame, centered(area, 70, h), "Trash", lines);
}
