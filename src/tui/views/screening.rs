//! The Screening view: condensation, rating, flammability, oxidising power, toxicity and
//! incompatible pairs, worst first, with the chosen check's figures.

use ratatui::layout::Rect;
use ratatui::style::Modifier;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph, Wrap};
use ratatui::Frame;

use super::Screen;
use crate::ron_format::clip;
use crate::tui::context::{Context, Key};
use crate::tui::model::Model;
use crate::tui::theme::Theme;

/// The checks of the recipe.
pub struct Screening;

impl Screen for Screening {
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
        screening(model, theme, frame, area)
    }
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context) {
        let _ = ctx;
        on_checks_key(model, key)
    }
    fn hints(&self, _model: &Model) -> &'static str {
        "? help · ↑↓ choose a check · Tab next view · Esc library"
    }
    fn help(&self) -> &'static [&'static str] {
        &[
            "↑↓ or j k   choose a check; its figures show below",
            "checks: condensation, rating, flammability, oxidising,",
            "toxicity and incompatible pairs, worst first",
        ]
    }
}

/// Keys of the Screening view: move in the order shown (worst first), remember the check
/// itself.
fn on_checks_key(model: &mut Model, key: Key) {
    // Move in the order shown (worst first), remember the check itself.
    let order = model
        .doc
        .as_ref()
        .and_then(|d| d.computed.checks.as_deref())
        .map(crate::tui::model::checks_worst_first)
        .unwrap_or_default();
    let at = model.check_selected.and_then(|c| order.iter().position(|&i| i == c)).unwrap_or(0);
    let to = match key {
        Key::Up | Key::Char('k') => at.saturating_sub(1),
        Key::Down | Key::Char('j') => (at + 1).min(order.len().saturating_sub(1)),
        _ => at,
    };
    if let Some(&i) = order.get(to) {
        model.check_selected = Some(i);
    }
}
fn screening(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    let block = Block::default().borders(Borders::ALL).title(" Screening before the fill ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let Some(checks) = &doc.computed.checks else {
        frame.render_widget(Paragraph::new("The recipe does not plan yet; see the Recipe view."), inner);
        return;
    };
    let mut lines = Vec::new();
    let order = crate::tui::model::checks_worst_first(checks);
    let sorted: Vec<_> = order.iter().map(|&i| &checks[i]).collect();
    let w = inner.width as usize;
    // Until one is chosen, the worst check leads and is shown.
    let chosen = model.check_selected.and_then(|c| order.iter().position(|&i| i == c)).unwrap_or(0);
    for (k, c) in sorted.iter().enumerate() {
        let marker = if k == chosen { "▶" } else { " " };
        lines.push(Line::from(vec![
            Span::raw(marker),
            Span::styled(
                format!("[{:<7}] ", c.severity.key()),
                theme.severity(c.severity).add_modifier(Modifier::BOLD),
            ),
            Span::styled(format!("{:<16}", c.id), theme.bold()),
            Span::raw(clip(&c.message, w.saturating_sub(27))),
        ]));
    }
    if let Some(c) = sorted.get(chosen) {
        lines.push(Line::raw(String::new()));
        lines.push(Line::styled(format!("{}: {}", c.id, c.message), theme.bold()));
        for d in &c.details {
            lines.push(Line::raw(format!("  {d}")));
        }
    }
    lines.push(Line::raw(String::new()));
    for c in crate::checks::cautions_for(checks) {
        lines.push(Line::styled(format!("- {c}"), theme.dim()));
    }
    frame.render_widget(Paragraph::new(lines).wrap(Wrap { trim: false }), inner);
}
