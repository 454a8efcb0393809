//! User text in messages and reports: control characters made visible.
//!
//! Plan strings (ids, names, file paths) and lines from input files reach the terminal in
//! error messages, warnings and tables. A control character there (NUL, ESC, a C1 code) could
//! move the cursor, change colours or hide text, so every such character is shown as an
//! escape instead: `\0`, `\x1b`, `\u{9b}`. Tab stays a tab; [`escape_controls`] also keeps
//! line breaks for whole multi-line texts, [`escape_line`] shows them as `\n` and `\r` for
//! one-line values such as an id or a path.

use std::borrow::Cow;
use std::fmt::Write;

/// True for a character that must not reach a terminal raw: C0 (except tab, line feed and
/// carriage return when `keep_breaks`), DEL, and C1.
fn must_escape(c: char, keep_breaks: bool) -> bool {
    match c {
        '\t' => false,
        '\n' | '\r' => !keep_breaks,
        c => c.is_control(),
    }
}

fn escape(s: &str, keep_breaks: bool) -> Cow<'_, str> {
    if !s.chars().any(|c| must_escape(c, keep_breaks)) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        if !must_escape(c, keep_breaks) {
            out.push(c);
            continue;
        }
        match c {
            '\0' => out.push_str("\\0"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            c if (c as u32) < 0x80 => {
                let _ = write!(out, "\\x{:02x}", c as u32);
            }
            c => {
                let _ = write!(out, "\\u{{{:x}}}", c as u32);
            }
        }
    }
    Cow::Owned(out)
}

/// A multi-line text (a whole message, a report) with every control character except tab
/// and line breaks shown as an escape.
pub fn escape_controls(s: &str) -> Cow<'_, str> {
    escape(s, true)
}

/// A one-line value (an id, a name, a path, a line quoted from a file) with every control
/// character except tab shown as an escape, line breaks included.
pub fn escape_line(s: &str) -> Cow<'_, str> {
    escape(s, false)
}

/// True when `s` holds a character that [`escape_controls`] would escape.
pub fn has_raw_controls(s: &str) -> bool {
    s.chars().any(|c| must_escape(c, true))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Worked by hand: NUL → `\0`, ESC (0x1b) → `\x1b`, DEL (0x7f) → `\x7f`, CSI (0x9b, C1)
    /// → `\u{9b}`; tab and line feed stay in a multi-line text.
    #[test]
    fn controls_are_shown_as_escapes() {
        assert_eq!(escape_controls("a\0b\u{1b}[31mc"), "a\\0b\\x1b[31mc");
        assert_eq!(escape_controls("x\u{7f}\u{9b}y"), "x\\x7f\\u{9b}y");
        assert_eq!(escape_controls("one\ttwo\nthree"), "one\ttwo\nthree");
        assert_eq!(escape_line("one\ntwo\r"), "one\\ntwo\\r");
        assert!(matches!(escape_line("plain é ü"), Cow::Borrowed(_)));
        assert!(has_raw_controls("a\u{1b}"));
        assert!(!has_raw_controls("a\tb\nc"));
    }
}
