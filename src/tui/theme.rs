//! How the screen looks: the colours (none with `NO_COLOR`), the boxes overlays are drawn
//! in, and the smallest window it draws in.

use ratatui::layout::Rect;
use ratatui::style::{Color, Modifier, Style};
use ratatui::text::Line;
use ratatui::widgets::{Block, Borders, Clear, Paragraph, Wrap};
use ratatui::Frame;

use crate::checks::Severity;

/// Smallest terminal the screen draws in: 80×24, where every view has its columns whole
/// (below it the Fill sheet would drop its readings and the Models view its reference).
pub const MIN_WIDTH: u16 = 80;

pub const MIN_HEIGHT: u16 = 24;

pub struct Theme {
    pub color: bool,
}

impl Theme {
    pub fn fg(&self, c: Color) -> Style {
        if self.color {
            Style::default().fg(c)
        } else {
            Style::default()
        }
    }
    pub fn selected(&self) -> Style {
        Style::default().add_modifier(Modifier::REVERSED)
    }
    pub fn bold(&self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }
    pub fn dim(&self) -> Style {
        if self.color {
            Style::default().fg(Color::DarkGray)
        } else {
            Style::default()
        }
    }
    pub fn severity(&self, s: Severity) -> Style {
        self.fg(match s {
            Severity::Ok => Color::Green,
            Severity::Caution => Color::Yellow,
            Severity::Stop => Color::Red,
        })
    }
}

pub fn centered(area: Rect, width: u16, height: u16) -> Rect {
    let w = width.min(area.width);
    let h = height.min(area.height);
    Rect { x: area.x + (area.width - w) / 2, y: area.y + (area.height - h) / 2, width: w, height: h }
}

pub fn boxed(frame: &mut Frame, area: Rect, title: &str, lines: Vec<Line>) -> Rect {
    frame.render_widget(Clear, area);
    let block = Block::default().borders(Borders::ALL).title(format!(" {title} "));
    let inner = block.inner(area);
    frame.render_widget(Paragraph::new(lines).block(block).wrap(Wrap { trim: false }), area);
    inner
}
