//! Pictures of the screen for the README: a rendered buffer as an SVG of monospace text.

use ratatui::buffer::Buffer;
use ratatui::style::{Color, Modifier};

fn rgb(c: Color, fallback: &str) -> String {
    match c {
        Color::Reset => fallback.to_string(),
        Color::Black => "#000000".into(),
        Color::Red => "#cd3131".into(),
        Color::Green => "#0dbc79".into(),
        Color::Yellow => "#e5e510".into(),
        Color::Blue => "#2472c8".into(),
        Color::Magenta => "#bc3fbc".into(),
        Color::Cyan => "#11a8cd".into(),
        Color::Gray => "#e5e5e5".into(),
        Color::DarkGray => "#888888".into(),
        Color::White => "#ffffff".into(),
        Color::Rgb(r, g, b) => format!("#{r:02x}{g:02x}{b:02x}"),
        _ => fallback.to_string(),
    }
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;")
}

/// The buffer as an SVG image, 8.4 × 17 px per cell, light text on a dark background.
pub fn render(buffer: &Buffer) -> String {
    let (cw, ch) = (8.4, 17.0);
    let area = buffer.area;
    let (w, h) = (f64::from(area.width) * cw, f64::from(area.height) * ch);
    let mut out = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\">\n\
         <rect width=\"100%\" height=\"100%\" fill=\"#1e1e1e\"/>\n\
         <g font-family=\"DejaVu Sans Mono, Menlo, Consolas, monospace\" font-size=\"14\" xml:space=\"preserve\">\n"
    );
    for y in 0..area.height {
        for x in 0..area.width {
            let cell = &buffer[(x, y)];
            let reversed = cell.modifier.contains(Modifier::REVERSED);
            let (mut fg, mut bg) = (rgb(cell.fg, "#d4d4d4"), rgb(cell.bg, "#1e1e1e"));
            if reversed {
                std::mem::swap(&mut fg, &mut bg);
            }
            let (px, py) = (f64::from(x) * cw, f64::from(y) * ch);
            if bg != "#1e1e1e" {
                out.push_str(&format!(
                    "<rect x=\"{px:.1}\" y=\"{py:.1}\" width=\"{cw}\" height=\"{ch}\" fill=\"{bg}\"/>\n"
                ));
            }
            let sym = cell.symbol();
            if sym.trim().is_empty() {
                continue;
            }
            let weight = if cell.modifier.contains(Modifier::BOLD) { " font-weight=\"bold\"" } else { "" };
            out.push_str(&format!(
                "<text x=\"{px:.1}\" y=\"{:.1}\" fill=\"{fg}\"{weight}>{}</text>\n",
                py + 13.0,
                escape(sym)
            ));
        }
    }
    out.push_str("</g>\n</svg>\n");
    out
}
