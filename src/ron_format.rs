//! How every RON file of the program is read: optional fields may be written bare
//! (`tolerance: "2%rel"` rather than `tolerance: Some("2%rel")`); and the two text helpers
//! shared by the file readers and the printers.

/// The RON options for reading recipes, settings and catalogue files.
pub fn options() -> ron::Options {
    ron::Options::default().with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
}

/// A RON error message in the words of the file, without the program's type names:
/// "missing field `test_pressure` in `CylinderLine`" becomes "missing field `test_pressure`".
pub fn plain_ron_message(message: &str) -> String {
    match message.find(" in `") {
        Some(i) if message[i + 5..].ends_with('`') => message[..i].to_string(),
        _ => message.to_string(),
    }
}

/// Line and column (1-based) of the first occurrence of `needle` in `text`, or 1:1, to place
/// a problem found after parsing (a value that parsed but is not acceptable). A field name
/// is found where it is written as a field, never inside a quoted string or a comment; a
/// needle that is itself quoted (`"15%"`) is found where that string starts.
pub fn locate(text: &str, needle: &str) -> (usize, usize) {
    let position = |pos: usize| {
        let before = &text[..pos];
        (
            before.matches('\n').count() + 1,
            before.chars().count() - before.rfind('\n').map_or(0, |nl| before[..=nl].chars().count()) + 1,
        )
    };
    let mut in_string = false;
    let mut escaped = false;
    let mut in_comment = false;
    for (pos, c) in text.char_indices() {
        if in_comment {
            in_comment = c != '\n';
            continue;
        }
        if in_string {
            match (escaped, c) {
                (true, _) => escaped = false,
                (false, '\\') => escaped = true,
                (false, '"') => in_string = false,
                _ => {}
            }
            continue;
        }
        if text[pos..].starts_with(needle) {
            return position(pos);
        }
        match c {
            '"' => in_string = true,
            '/' if text[pos..].starts_with("//") => in_comment = true,
            _ => {}
        }
    }
    (1, 1)
}

/// Where a RON parser stopped, and what to say: a NUL byte (the file is damaged), a file
/// cut short (the parser ran out of text), a file that is not a `head` at all (`Recipe(`),
/// or the parser's own words without the program's type names.
pub fn parse_problem(text: &str, e: &ron::error::SpannedError, what: &str, head: &str) -> (usize, usize, String) {
    if let Some(pos) = text.find('\0') {
        let (line, column) = locate(text, "\0");
        let _ = pos;
        return (line, column, format!("a NUL byte: a {what} file is text, and this one looks damaged"));
    }
    let (line, column) = (e.position.line, e.position.col);
    let offset: usize = text.split_inclusive('\n').take(line.saturating_sub(1)).map(str::len).sum::<usize>()
        + text
            .split_inclusive('\n')
            .nth(line.saturating_sub(1))
            .map_or(0, |l| l.char_indices().nth(column.saturating_sub(1)).map_or(l.len(), |(i, _)| i));
    let runs_out = matches!(e.code, ron::Error::Eof | ron::Error::ExpectedStringEnd);
    let at_end = runs_out || offset >= text.trim_end().len();
    let is_head = text.trim_start().starts_with(head);
    let message = match &e.code {
        _ if at_end && is_head => {
            format!("the file ends before the {what} is complete (cut short?): a `{head}` is not closed")
        }
        ron::Error::ExpectedDifferentStructName { .. } | ron::Error::ExpectedNamedStructLike(_) if !is_head => {
            format!("this is not a {what}: a {what} file begins with `{head}`")
        }
        code => shorten(&plain_ron_message(&code.to_string())),
    };
    (line, column, message)
}

/// A file's text without a UTF-8 byte-order mark (some editors write one).
pub fn without_bom(text: &str) -> &str {
    text.strip_prefix('\u{feff}').unwrap_or(text)
}

/// `text` cut to `width` characters, an ellipsis marking the cut.
pub fn clip(text: &str, width: usize) -> String {
    if text.chars().count() <= width {
        text.to_string()
    } else if width == 0 {
        String::new()
    } else {
        text.chars().take(width - 1).chain(std::iter::once('…')).collect()
    }
}

/// `text` in lines of at most `width` characters, broken at spaces.
pub fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// `text` cut to `width` characters in the middle, keeping its beginning and its end: names
/// that differ only at the end (`…-winter`, `…-summer`) stay apart.
pub fn clip_middle(text: &str, width: usize) -> String {
    let n = text.chars().count();
    if n <= width {
        return text.to_string();
    }
    if width < 3 {
        return clip(text, width);
    }
    let tail = (width - 1) / 2;
    let head = width - 1 - tail;
    let chars: Vec<char> = text.chars().collect();
    chars[..head].iter().chain(std::iter::once(&'…')).chain(&chars[n - tail..]).collect()
}

/// A message with every overlong word in it (a pasted value, a runaway number) shortened:
/// its beginning and end stay, the middle is replaced by how many characters were left
/// out. Messages then stay readable when a file or an option holds a huge value.
pub fn shorten(message: &str) -> String {
    const KEEP: usize = 30;
    let mut out = String::with_capacity(message.len().min(4096));
    for (i, word) in message.split(' ').enumerate() {
        if i > 0 {
            out.push(' ');
        }
        let n = word.chars().count();
        if n <= 2 * KEEP + 20 {
            out.push_str(word);
        } else {
            out.extend(word.chars().take(KEEP));
            out.push_str(&format!("…[{} characters left out]…", n - 2 * KEEP));
            out.extend(word.chars().skip(n - KEEP));
        }
    }
    out
}

/// A file's canonical text: named structs, three levels of indentation, optional fields
/// bare, a final newline (records and verification files).
pub fn to_text<T: serde::Serialize>(value: &T) -> String {
    let config = ron::ser::PrettyConfig::new()
        .depth_limit(3)
        .struct_names(true)
        .extensions(ron::extensions::Extensions::IMPLICIT_SOME);
    let mut text = ron::ser::to_string_pretty(value, config).unwrap_or_default();
    text.push('\n');
    text
}

/// A CSV field, quoted where it holds a comma, a quote or a line break (RFC 4180).
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// One CSV row (RFC 4180), with its line end.
pub fn csv_row<S: AsRef<str>>(fields: &[S]) -> String {
    fields.iter().map(|f| csv_field(f.as_ref())).collect::<Vec<_>>().join(",") + "\n"
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_messages_are_shortened_with_both_ends_kept() {
        let long = format!("--volume: \"{}\" is not a number", "9".repeat(100_000));
        let short = shorten(&long);
        assert!(short.chars().count() < 200, "{short}");
        assert!(short.starts_with("--volume: \"999"));
        assert!(short.ends_with("is not a number"));
        assert!(short.contains("characters left out"));
        assert_eq!(shorten("short message"), "short message");
    }

    #[test]
    fn places_and_clips() {
        assert_eq!(locate("ab\ncd \"x\"", "\"x\""), (2, 4));
        assert_eq!(locate("abc", "zz"), (1, 1));
        assert_eq!(clip("abcdef", 4), "abc…");
        assert_eq!(clip("abc", 4), "abc");
        assert_eq!(clip("abc", 0), "");
        assert_eq!(wrap_words("settled pressure 230 bar", 12), ["settled", "pressure 230", "bar"]);
        assert_eq!(wrap_words("", 12), Vec::<String>::new());
        let a = clip_middle("lpg-in-methane-2026-winter-batch", 21);
        let b = clip_middle("lpg-in-methane-2026-summer-batch", 21);
        assert_eq!(a.chars().count(), 21);
        assert_ne!(a, b, "names that differ near the end stay apart");
        assert_eq!(clip_middle("short", 21), "short");
    }
}
