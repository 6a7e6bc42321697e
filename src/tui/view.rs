//! Drawing only: every figure shown here was computed in `update` (see `Computed`). This
//! file lays out the frame (header, body, status line) and hands the body to the view
//! shown and then to the open overlay; each draws itself (`views`, `overlays`).
//! Meaning is never carried by colour alone: selection has a marker, severities and flags
//! have words and signs, and with `NO_COLOR` no colour is used at all.

use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Paragraph, Wrap};
use ratatui::Frame;

use super::model::{Model, Overlay, View};
use super::theme::Theme;
pub use super::theme::{MIN_HEIGHT, MIN_WIDTH};
use super::{overlays, views};
use crate::gas::Catalogue;
use crate::ron_format::{clip, wrap_words};

/// Draw the whole screen.
pub fn view(model: &Model, catalogue: &Catalogue, frame: &mut Frame) {
    let area = frame.area();
    let theme = Theme { color: model.color };
    if area.width < MIN_WIDTH || area.height < MIN_HEIGHT {
        let text = format!(
            "The terminal is {}×{}; fillwright needs at least {MIN_WIDTH}×{MIN_HEIGHT} to show every column of the \
             Fill sheet. Enlarge the window or make the font smaller; nothing is lost meanwhile (q quits). \
             Without a larger window, the command line does every job: fillwright plan NAME.",
            area.width, area.height
        );
        frame.render_widget(Paragraph::new(text).wrap(Wrap { trim: true }), area);
        return;
    }
    let status_h = status_rows(model, usize::from(area.width));
    let [top, body, status] =
        Layout::vertical([Constraint::Length(1), Constraint::Min(1), Constraint::Length(status_h)]).areas(area);
    header(model, &theme, frame, top);
    views::of(model.view).draw(model, &theme, frame, body);
    status_line(model, &theme, frame, status);
    overlays::draw(model, catalogue, &theme, frame, body);
    if let Some(pane) = &model.verification {
        // The pane has its own foot line with its keys, over the status line.
        overlays::verification::draw(pane, model.color, frame, body.union(status));
    }
}

fn header(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let mut spans = vec![Span::styled("fillwright ", theme.bold())];
    for (i, v) in View::ALL.iter().enumerate() {
        let label = format!("{} {}", i + 1, v.title());
        if *v == model.view {
            spans.push(Span::styled(format!("[{label}]"), theme.selected()));
        } else {
            spans.push(Span::raw(format!(" {label} ")));
        }
    }
    if let Some(doc) = &model.doc {
        // The recipe's name and state; the body's block titles repeat it where there is room.
        let dirty = if doc.dirty() { "*" } else { "" };
        spans.push(Span::raw(format!(" {}{dirty}", doc.name)));
    }
    frame.render_widget(Paragraph::new(Line::from(spans)), area);
}

/// The keys that matter now, most important first; `? help` always leads.
fn keys_hint(model: &Model) -> &'static str {
    match model.overlay {
        Overlay::None => views::of(model.view).hints(model),
        _ => "Esc closes",
    }
}

/// The status line: what just happened, then as many key hints as fit, most important
/// first; the first hint (`? help`) is always shown, the message is cut to make room.
/// Rows of the status line: one, or a message too long for it wrapped whole above the
/// keys (at most three rows of message).
fn status_rows(model: &Model, width: usize) -> u16 {
    let first = keys_hint(model).split(" · ").next().unwrap_or("").chars().count();
    if model.status.chars().count() + 3 + first <= width {
        1
    } else {
        1 + wrap_words(&model.status, width).len().min(3) as u16
    }
}

fn status_line(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let width = usize::from(area.width);
    let hints: Vec<&str> = keys_hint(model).split(" · ").collect();
    let first = hints.first().copied().unwrap_or("");
    if area.height > 1 {
        // A long message, whole above the keys.
        let mut lines: Vec<Line> = wrap_words(&model.status, width)
            .into_iter()
            .take(usize::from(area.height) - 1)
            .map(|l| Line::styled(l, theme.bold()))
            .collect();
        lines.push(Line::styled(hints.join(" · "), theme.dim()));
        frame.render_widget(Paragraph::new(lines), area);
        return;
    }
    let status = if model.status.is_empty() {
        String::new()
    } else {
        // Room for the first hint and the separator.
        clip(&model.status, width.saturating_sub(first.chars().count() + 3).max(1))
    };
    let used = if status.is_empty() { 0 } else { status.chars().count() + 3 };
    let mut shown = String::from(first);
    for h in hints.iter().skip(1) {
        if used + shown.chars().count() + 3 + h.chars().count() > width {
            break;
        }
        shown.push_str(" · ");
        shown.push_str(h);
    }
    let line = if status.is_empty() {
        Line::from(Span::styled(shown, theme.dim()))
    } else {
        Line::from(vec![Span::styled(status, theme.bold()), Span::raw(" │ "), Span::styled(shown, theme.dim())])
    };
    frame.render_widget(Paragraph::new(line), area);
}
