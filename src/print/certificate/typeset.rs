//! A typeset PDF for documents made of blocks: a title block, headings, paragraphs,
//! ruled tables and signature lines, on A4 pages with a running head and page numbers.
//! Set in the standard fonts Helvetica and Helvetica-Bold (every PDF reader has them, so
//! nothing is embedded), measured with their Adobe metrics ([`super::metrics`]), written
//! with `pdf-writer`. Nothing is orphaned: a heading stays with the first lines of what
//! follows it, a short table or a signature block is never split, a long table repeats
//! its header on the next page, and a paragraph leaves no single line behind.

use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, Str, TextStr};

use super::metrics::{HELVETICA, HELVETICA_BOLD};
use super::pdf::win_ansi;

const PAGE_W: f32 = 595.0;
const PAGE_H: f32 = 842.0;
const MARGIN: f32 = 50.0;
const TOP: f32 = PAGE_H - MARGIN - 14.0;
const BOTTOM: f32 = MARGIN + 18.0;
const WIDTH: f32 = PAGE_W - 2.0 * MARGIN;
const SIZE: f32 = 9.0;
const LEADING: f32 = 12.0;
const CELL_PAD: f32 = 4.0;

/// One piece of a document.
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// The document's name, a line under it, and its key facts in a ruled grid of two
    /// label–value columns.
    Title {
        title: String,
        subtitle: String,
        facts: Vec<(String, String)>,
    },
    /// A boxed warning in bold (a stop, a fill in progress).
    Banner(Vec<String>),
    Heading(String),
    /// A paragraph, wrapped to the width.
    Text(String),
    /// A list of paragraphs, each with a dash.
    List(Vec<String>),
    /// A ruled table: column headers (true: right-aligned) and rows.
    Table {
        columns: Vec<(String, bool)>,
        rows: Vec<Vec<String>>,
    },
    /// Lines to sign on: one per role.
    Signatures(Vec<String>),
}

/// The width of `text` in points at `size` in Helvetica (bold or not).
pub fn text_width(text: &str, size: f32, bold: bool) -> f32 {
    let table = if bold { &HELVETICA_BOLD } else { &HELVETICA };
    let units: u32 = win_ansi(text)
        .iter()
        .map(|&b| match table[usize::from(b)] {
            0 => 278,
            w => u32::from(w),
        })
        .sum();
    units as f32 * size / 1000.0
}

/// A word wider than `width` in pieces that fit: after its commas where it has them (an
/// analysis: `CO=0.5%±0.002%,N2=balance`), else character by character.
fn split_word(word: &str, width: f32, size: f32, bold: bool) -> Vec<String> {
    if text_width(word, size, bold) <= width {
        return vec![word.to_string()];
    }
    let mut pieces = Vec::new();
    let mut piece = String::new();
    for part in word.split_inclusive(',') {
        if !piece.is_empty() && text_width(&format!("{piece}{part}"), size, bold) > width {
            pieces.push(std::mem::take(&mut piece));
        }
        piece.push_str(part);
        // A part wider than the line by itself is cut character by character.
        while text_width(&piece, size, bold) > width && piece.chars().count() > 1 {
            let mut head = String::new();
            for c in piece.chars() {
                if !head.is_empty() && text_width(&format!("{head}{c}"), size, bold) > width {
                    break;
                }
                head.push(c);
            }
            piece = piece[head.len()..].to_string();
            pieces.push(head);
        }
    }
    if !piece.is_empty() {
        pieces.push(piece);
    }
    pieces
}

/// Break `text` into lines no wider than `width` points.
fn wrap(text: &str, width: f32, size: f32, bold: bool) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    let words: Vec<String> = text.split_whitespace().flat_map(|w| split_word(w, width, size, bold)).collect();
    for word in &words {
        let word = word.as_str();
        let candidate = if line.is_empty() { word.to_string() } else { format!("{line} {word}") };
        if text_width(&candidate, size, bold) > width && !line.is_empty() {
            lines.push(std::mem::take(&mut line));
            line = word.to_string();
        } else {
            line = candidate;
        }
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// What is drawn on a page.
#[derive(Debug, Clone)]
enum Op {
    Text { x: f32, y: f32, size: f32, bold: bool, text: String },
    Line { x0: f32, y0: f32, x1: f32, y1: f32, width: f32 },
    Fill { x: f32, y: f32, w: f32, h: f32, grey: f32 },
}

/// A unit that must not be split over pages: its height and what it draws from its top.
struct Piece {
    height: f32,
    ops: Vec<Op>,
    /// Kept on the page of the piece after it (a heading).
    keep_with_next: bool,
    /// Repeated at the top of a new page when the piece after it lands there (a table
    /// header).
    header: Option<Box<Piece>>,
}

impl Piece {
    fn new(height: f32, ops: Vec<Op>) -> Piece {
        Piece { height, ops, keep_with_next: false, header: None }
    }
}

fn text_op(x: f32, y: f32, size: f32, bold: bool, text: &str) -> Op {
    Op::Text { x, y, size, bold, text: text.to_string() }
}

/// The pieces of one block; the y of each op is measured down from the piece's top.
fn pieces(block: &Block) -> Vec<Piece> {
    match block {
        Block::Title { title, subtitle, facts } => vec![title_piece(title, subtitle, facts)],
        Block::Banner(lines) => {
            let h = lines.len() as f32 * LEADING + 10.0;
            let mut ops = vec![Op::Fill { x: MARGIN, y: 0.0, w: WIDTH, h, grey: 0.85 }];
            for (k, l) in lines.iter().enumerate() {
                ops.push(text_op(MARGIN + 6.0, 5.0 + (k as f32 + 0.8) * LEADING, SIZE + 1.0, true, l));
            }
            vec![Piece::new(h + 8.0, ops)]
        }
        Block::Heading(h) => {
            let ops = vec![
                text_op(MARGIN, 16.0, SIZE + 2.0, true, h),
                Op::Line { x0: MARGIN, y0: 20.0, x1: MARGIN + WIDTH, y1: 20.0, width: 0.6 },
            ];
            vec![Piece { keep_with_next: true, ..Piece::new(26.0, ops) }]
        }
        Block::Text(t) => paragraph(t, "", 0.0),
        Block::List(items) => items.iter().flat_map(|t| paragraph(t, "–", 10.0)).collect(),
        Block::Table { columns, rows } => table_pieces(columns, rows),
        Block::Signatures(roles) => {
            let mut ops = Vec::new();
            for (k, role) in roles.iter().enumerate() {
                let y = 30.0 + k as f32 * 36.0;
                ops.push(text_op(MARGIN, y, SIZE, false, role));
                let x = MARGIN + 90.0;
                ops.push(Op::Line { x0: x, y0: y + 1.0, x1: x + 210.0, y1: y + 1.0, width: 0.5 });
                ops.push(text_op(x + 225.0, y, SIZE, false, "date"));
                ops.push(Op::Line { x0: x + 250.0, y0: y + 1.0, x1: MARGIN + WIDTH, y1: y + 1.0, width: 0.5 });
            }
            vec![Piece::new(roles.len() as f32 * 36.0 + 12.0, ops)]
        }
    }
}

/// A paragraph as pieces of two lines at least (no widow, no orphan).
fn paragraph(text: &str, mark: &str, indent: f32) -> Vec<Piece> {
    let lines = wrap(text, WIDTH - indent, SIZE, false);
    let mut out = Vec::new();
    let mut k = 0;
    while k < lines.len() {
        // Two lines a piece, three where one would be left alone at the end.
        let take = if lines.len() - k == 3 { 3 } else { 2.min(lines.len() - k) };
        let mut ops = Vec::new();
        for (j, l) in lines[k..k + take].iter().enumerate() {
            if k == 0 && j == 0 && !mark.is_empty() {
                ops.push(text_op(MARGIN, (j as f32 + 0.8) * LEADING, SIZE, false, mark));
            }
            ops.push(text_op(MARGIN + indent, (j as f32 + 0.8) * LEADING, SIZE, false, l));
        }
        let last = k + take == lines.len();
        out.push(Piece::new(take as f32 * LEADING + if last { 4.0 } else { 0.0 }, ops));
        k += take;
    }
    out
}

/// The title: the name large and bold, the subtitle, and a ruled grid of facts.
fn title_piece(title: &str, subtitle: &str, facts: &[(String, String)]) -> Piece {
    let mut ops = vec![text_op(MARGIN, 18.0, 16.0, true, title)];
    let mut y = 24.0;
    for l in wrap(subtitle, WIDTH, SIZE, false) {
        y += LEADING;
        ops.push(text_op(MARGIN, y, SIZE, false, &l));
    }
    y += 8.0;
    let label_w = facts.iter().map(|(l, _)| text_width(l, SIZE, true)).fold(0.0, f32::max) + 2.0 * CELL_PAD;
    let top = y;
    ops.push(Op::Line { x0: MARGIN, y0: y, x1: MARGIN + WIDTH, y1: y, width: 0.8 });
    for (label, value) in facts {
        let lines = wrap(value, WIDTH - label_w - 2.0 * CELL_PAD, SIZE, false);
        let h = lines.len().max(1) as f32 * LEADING + 4.0;
        ops.push(Op::Fill { x: MARGIN, y, w: label_w, h, grey: 0.93 });
        ops.push(text_op(MARGIN + CELL_PAD, y + LEADING - 1.0, SIZE, true, label));
        for (j, l) in lines.iter().enumerate() {
            ops.push(text_op(MARGIN + label_w + CELL_PAD, y + (j as f32 + 1.0) * LEADING - 1.0, SIZE, false, l));
        }
        y += h;
        ops.push(Op::Line { x0: MARGIN, y0: y, x1: MARGIN + WIDTH, y1: y, width: 0.3 });
    }
    ops.push(Op::Line { x0: MARGIN, y0: top, x1: MARGIN, y1: y, width: 0.3 });
    ops.push(Op::Line { x0: MARGIN + label_w, y0: top, x1: MARGIN + label_w, y1: y, width: 0.3 });
    ops.push(Op::Line { x0: MARGIN + WIDTH, y0: top, x1: MARGIN + WIDTH, y1: y, width: 0.3 });
    Piece::new(y + 10.0, ops)
}

/// A ruled table: a shaded header row, a rule under every row. A table of up to eight rows
/// is one piece; a longer one is a piece per row with the header repeated on a new page.
fn table_pieces(columns: &[(String, bool)], rows: &[Vec<String>]) -> Vec<Piece> {
    let mut widths: Vec<f32> = columns.iter().map(|(h, _)| text_width(h, SIZE, true)).collect();
    for row in rows {
        for (k, cell) in row.iter().enumerate().take(widths.len()) {
            widths[k] = widths[k].max(text_width(cell, SIZE, false));
        }
    }
    let natural: f32 = widths.iter().sum::<f32>() + 2.0 * CELL_PAD * widths.len() as f32;
    // The last column takes what is left (it holds the longest text, such as a source),
    // and its cells wrap when that is less than they need.
    if let Some(last) = widths.last_mut() {
        *last = (*last + WIDTH - natural).max(60.0);
    }
    let xs: Vec<f32> = widths
        .iter()
        .scan(MARGIN, |x, w| {
            let at = *x;
            *x += w + 2.0 * CELL_PAD;
            Some(at)
        })
        .collect();
    let row_h = LEADING + 3.0;
    let last = widths.len().saturating_sub(1);
    let lines_of =
        |cells: &[String]| -> usize { cells.get(last).map_or(1, |c| wrap(c, widths[last], SIZE, false).len().max(1)) };
    let height = |cells: &[String]| row_h + (lines_of(cells) - 1) as f32 * LEADING;
    let cells = |cells: &[String], bold: bool, y: f32| -> Vec<Op> {
        let mut ops = Vec::new();
        for (k, cell) in cells.iter().enumerate().take(xs.len()) {
            let lines = if k == last { wrap(cell, widths[k], SIZE, bold) } else { vec![cell.clone()] };
            for (j, line) in lines.iter().enumerate() {
                let x = if columns[k].1 {
                    xs[k] + CELL_PAD + widths[k] - text_width(line, SIZE, bold)
                } else {
                    xs[k] + CELL_PAD
                };
                ops.push(text_op(x, y + LEADING - 1.0 + j as f32 * LEADING, SIZE, bold, line));
            }
        }
        let h = row_h + (lines_of(cells) - 1) as f32 * LEADING;
        ops.push(Op::Line { x0: MARGIN, y0: y + h, x1: MARGIN + WIDTH, y1: y + h, width: 0.3 });
        ops
    };
    let headers: Vec<String> = columns.iter().map(|(h, _)| h.clone()).collect();
    let mut header_ops = vec![
        Op::Fill { x: MARGIN, y: 0.0, w: WIDTH, h: row_h, grey: 0.9 },
        Op::Line { x0: MARGIN, y0: 0.0, x1: MARGIN + WIDTH, y1: 0.0, width: 0.8 },
    ];
    header_ops.extend(cells(&headers, true, 0.0));
    let header = Piece::new(row_h, header_ops);
    if rows.len() <= 8 {
        let mut ops = header.ops.clone();
        let mut y = row_h;
        for row in rows {
            ops.extend(cells(row, false, y));
            y += height(row);
        }
        return vec![Piece::new(y + 8.0, ops)];
    }
    let mut out = vec![Piece { keep_with_next: true, ..Piece::new(row_h, header.ops.clone()) }];
    for (k, row) in rows.iter().enumerate() {
        let pad = if k + 1 == rows.len() { 8.0 } else { 0.0 };
        out.push(Piece {
            header: Some(Box::new(Piece::new(row_h, header.ops.clone()))),
            ..Piece::new(height(row) + pad, cells(row, false, 0.0))
        });
    }
    out
}

/// Lay the pieces out on pages: each page's ops in page coordinates (y up).
fn paginate(all: Vec<Piece>, first_top: f32) -> Vec<Vec<Op>> {
    let mut pages: Vec<Vec<Op>> = vec![Vec::new()];
    let mut y = first_top;
    let place = |page: &mut Vec<Op>, piece: &Piece, top: f32| {
        for op in &piece.ops {
            page.push(match op.clone() {
                Op::Text { x, y, size, bold, text } => Op::Text { x, y: top - y, size, bold, text },
                Op::Line { x0, y0, x1, y1, width } => Op::Line { x0, y0: top - y0, x1, y1: top - y1, width },
                Op::Fill { x, y, w, h, grey } => Op::Fill { x, y: top - y - h, w, h, grey },
            });
        }
    };
    let mut k = 0;
    while k < all.len() {
        // A heading (or a table's header) goes with the piece after it.
        let mut group = vec![k];
        while all[*group.last().unwrap_or(&k)].keep_with_next && group.last().is_some_and(|&j| j + 1 < all.len()) {
            group.push(group.last().unwrap_or(&k) + 1);
        }
        let height: f32 = group.iter().map(|&j| all[j].height).sum();
        if y - height < BOTTOM && y < TOP {
            pages.push(Vec::new());
            y = TOP;
            if let Some(h) = &all[group[0]].header {
                let page = pages.last_mut().expect("a page");
                place(page, h, y);
                y -= h.height;
            }
        }
        let page = pages.last_mut().expect("a page");
        for &j in &group {
            place(page, &all[j], y);
            y -= all[j].height;
        }
        k = group.last().unwrap_or(&k) + 1;
    }
    pages
}

/// The document as a PDF: `running` at the top of every page after the first, and
/// `banner` (a fill in progress) at the top of every page.
pub fn render(blocks: &[Block], title: &str, running: &str, banner: Option<&str>) -> Vec<u8> {
    let mut all: Vec<Piece> = Vec::new();
    for b in blocks {
        all.extend(pieces(b));
    }
    let first_top = TOP;
    let pages = paginate(all, first_top);
    let n = pages.len();
    let mut pdf = Pdf::new();
    let (catalog, tree, regular, bold, info) = (Ref::new(1), Ref::new(2), Ref::new(3), Ref::new(4), Ref::new(5));
    let page_ids: Vec<Ref> = (0..n).map(|k| Ref::new(10 + 2 * k as i32)).collect();
    pdf.catalog(catalog).pages(tree);
    pdf.pages(tree).kids(page_ids.iter().copied()).count(n as i32);
    pdf.type1_font(regular).base_font(Name(b"Helvetica")).encoding_predefined(Name(b"WinAnsiEncoding"));
    pdf.type1_font(bold).base_font(Name(b"Helvetica-Bold")).encoding_predefined(Name(b"WinAnsiEncoding"));
    pdf.document_info(info).title(TextStr(title)).producer(TextStr("fillwright"));
    for (k, ops) in pages.iter().enumerate() {
        let content_id = Ref::new(11 + 2 * k as i32);
        let mut page = pdf.page(page_ids[k]);
        page.media_box(Rect::new(0.0, 0.0, PAGE_W, PAGE_H));
        page.parent(tree);
        page.contents(content_id);
        {
            let mut resources = page.resources();
            let mut fonts = resources.fonts();
            fonts.pair(Name(b"F1"), regular);
            fonts.pair(Name(b"F2"), bold);
        }
        page.finish();
        let mut c = Content::new();
        let mut frame = Vec::new();
        if k > 0 {
            frame.push(text_op(MARGIN, PAGE_H - MARGIN + 6.0, SIZE - 1.0, false, running));
        }
        if let Some(b) = banner {
            frame.push(text_op(MARGIN, PAGE_H - MARGIN + 18.0, SIZE, true, b));
        }
        let footer = format!("page {} of {n}", k + 1);
        frame.push(text_op(
            MARGIN + WIDTH - text_width(&footer, SIZE - 1.0, false),
            MARGIN,
            SIZE - 1.0,
            false,
            &footer,
        ));
        frame.push(Op::Line { x0: MARGIN, y0: MARGIN + 10.0, x1: MARGIN + WIDTH, y1: MARGIN + 10.0, width: 0.3 });
        for op in ops.iter().chain(&frame) {
            draw(&mut c, op);
        }
        pdf.stream(content_id, &c.finish());
    }
    pdf.finish()
}

fn draw(c: &mut Content, op: &Op) {
    match op {
        Op::Text { x, y, size, bold, text } => {
            c.begin_text();
            c.set_font(Name(if *bold { b"F2" } else { b"F1" }), *size);
            c.next_line(*x, *y);
            c.show(Str(&win_ansi(text)));
            c.end_text();
        }
        Op::Line { x0, y0, x1, y1, width } => {
            c.set_line_width(*width);
            c.move_to(*x0, *y0);
            c.line_to(*x1, *y1);
            c.stroke();
        }
        Op::Fill { x, y, w, h, grey } => {
            c.set_fill_gray(*grey);
            c.rect(*x, *y, *w, *h);
            c.fill_nonzero();
            c.set_fill_gray(0.0);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn widths_follow_the_metrics() {
        // Helvetica: "1" is 556/1000 em, "i" 222; bold "1" also 556 (Adobe AFM).
        assert!((text_width("1", 10.0, false) - 5.56).abs() < 1e-4);
        assert!((text_width("i", 10.0, false) - 2.22).abs() < 1e-4);
        assert!(text_width("Wm", 9.0, true) > text_width("Wm", 9.0, false));
    }

    #[test]
    fn nothing_runs_past_the_right_margin() {
        let source = "CO=0.5%±0.002%,NO=50ppm±1ppm,SO2=20ppm±0.4ppm,H2O=<5ppm,O2=<2ppm,N2=balance (source PX-118)";
        let long = "x".repeat(300);
        let blocks = vec![
            Block::Table {
                columns: vec![("#".into(), true), ("added".into(), true), ("source".into(), false)],
                rows: vec![vec!["1".into(), "92.850 g".into(), format!("{source} {source}")]],
            },
            Block::Text(format!("{source}{source} {long}")),
            Block::Title { title: "T".into(), subtitle: long.clone(), facts: vec![("recipe".into(), long.clone())] },
        ];
        for b in &blocks {
            for piece in pieces(b) {
                for op in &piece.ops {
                    if let Op::Text { x, size, bold, text, .. } = op {
                        let right = x + text_width(text, *size, *bold);
                        assert!(right <= MARGIN + WIDTH + 0.5, "{text:?} ends at {right}");
                    }
                }
            }
        }
    }

    #[test]
    fn a_heading_never_ends_a_page_and_long_tables_repeat_their_header() {
        let rows: Vec<Vec<String>> = (0..150).map(|k| vec![format!("{k}"), "x".into()]).collect();
        let blocks = vec![
            Block::Heading("FIRST".into()),
            Block::Table { columns: vec![("n".into(), true), ("v".into(), false)], rows },
            Block::Heading("SECOND".into()),
            Block::Text("a paragraph".into()),
        ];
        let mut all = Vec::new();
        for b in &blocks {
            all.extend(pieces(b));
        }
        let pages = paginate(all, TOP);
        assert!(pages.len() >= 3, "{}", pages.len());
        for page in &pages {
            let texts: Vec<(f32, &str)> = page
                .iter()
                .filter_map(|o| match o {
                    Op::Text { y, text, .. } => Some((*y, text.as_str())),
                    _ => None,
                })
                .collect();
            // Every page of the table starts with its header; no page ends with a heading.
            let lowest = texts.iter().fold((f32::MAX, ""), |a, t| if t.0 < a.0 { *t } else { a });
            assert!(lowest.1 != "FIRST" && lowest.1 != "SECOND", "{texts:?}");
            assert!(texts.iter().any(|t| t.1 == "n"), "a table page without its header");
        }
    }
}
