//! The certificate as a printable PDF: the 80-column text set in Courier (one of the
//! standard fonts every PDF reader has, so nothing is embedded) on A4 pages, written with
//! `pdf-writer`.

use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, Str, TextStr};

const PAGE_W: f32 = 595.0;
const PAGE_H: f32 = 842.0;
const MARGIN: f32 = 56.0;
const FONT_SIZE: f32 = 9.0;
const LEADING: f32 = 11.5;

/// Lay out `text` (lines of at most 80 columns) on as many pages as it needs.
pub fn render(text: &str, title: &str) -> Vec<u8> {
    render_with_banner(text, title, None)
}

/// As [`render`], with `banner` as the first line of every page (a fill in progress).
pub fn render_with_banner(text: &str, title: &str, banner: Option<&str>) -> Vec<u8> {
    let lines: Vec<&str> = text.lines().collect();
    let per_page = ((PAGE_H - 2.0 * MARGIN) / LEADING).floor() as usize - usize::from(banner.is_some()) * 2;
    let pages: Vec<&[&str]> = lines.chunks(per_page.max(1)).collect();
    let mut pdf = Pdf::new();
    let catalog = Ref::new(1);
    let tree = Ref::new(2);
    let font = Ref::new(3);
    let info = Ref::new(4);
    let page_ids: Vec<Ref> = (0..pages.len()).map(|k| Ref::new(10 + 2 * k as i32)).collect();
    pdf.catalog(catalog).pages(tree);
    pdf.pages(tree).kids(page_ids.iter().copied()).count(pages.len() as i32);
    pdf.type1_font(font).base_font(Name(b"Courier")).encoding_predefined(Name(b"WinAnsiEncoding"));
    pdf.document_info(info).title(TextStr(title)).producer(TextStr("fillwright"));
    for (k, chunk) in pages.iter().enumerate() {
        let content_id = Ref::new(11 + 2 * k as i32);
        let mut page = pdf.page(page_ids[k]);
        page.media_box(Rect::new(0.0, 0.0, PAGE_W, PAGE_H));
        page.parent(tree);
        page.contents(content_id);
        page.resources().fonts().pair(Name(b"F1"), font);
        page.finish();
        let mut content = Content::new();
        content.begin_text();
        content.set_font(Name(b"F1"), FONT_SIZE);
        content.set_leading(LEADING);
        content.next_line(MARGIN, PAGE_H - MARGIN);
        if let Some(b) = banner.filter(|_| k > 0) {
            content.show(Str(&win_ansi(b)));
            content.next_line_using_leading();
            content.next_line_using_leading();
        }
        for line in chunk.iter() {
            content.show(Str(&win_ansi(line)));
            content.next_line_using_leading();
        }
        content.next_line_using_leading();
        content.show(Str(&win_ansi(&format!("page {} of {}", k + 1, pages.len()))));
        content.end_text();
        pdf.stream(content_id, &content.finish());
    }
    pdf.finish()
}

/// The text in the Windows-1252 (WinAnsi) encoding of the standard fonts; characters it
/// lacks become their nearest ASCII spelling.
pub(super) fn win_ansi(text: &str) -> Vec<u8> {
    let mut out = Vec::with_capacity(text.len());
    for c in text.chars() {
        match c {
            ' '..='~' => out.push(c as u8),
            '\u{a0}'..='\u{ff}' => out.push(c as u32 as u8),
            '–' => out.push(0x96),
            '—' => out.push(0x97),
            '…' => out.push(0x85),
            '‘' | '’' => out.push(b'\''),
            '“' | '”' => out.push(b'"'),
            '√' => out.extend_from_slice(b"sqrt"),
            'Σ' => out.extend_from_slice(b"sum"),
            '≤' => out.extend_from_slice(b"<="),
            '≥' => out.extend_from_slice(b">="),
            _ => out.push(b'?'),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_pdf_has_its_header_and_pages() {
        let text = "line\n".repeat(130);
        let bytes = render(&text, "t");
        assert!(bytes.starts_with(b"%PDF-"));
        let s = String::from_utf8_lossy(&bytes);
        // 130 lines at 63 a page: three pages, each numbered.
        assert!(s.contains("(page 3 of 3)") && !s.contains("of 4)"), "{s}");
    }

    #[test]
    fn winansi_keeps_the_trade_signs() {
        assert_eq!(win_ansi("±°µ–"), vec![0xb1, 0xb0, 0xb5, 0x96]);
        assert_eq!(win_ansi("u²√"), b"u\xb2sqrt".to_vec());
    }
}
