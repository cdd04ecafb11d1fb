//! Sheet text made safe to show. A sheet is passed between people, so its
//! text (a title, a description, a label, a comment, even its file name)
//! may hold characters a terminal obeys rather than shows: a carriage
//! return and `ESC[K` that rewrite a printed line, an OSC 52 sequence that
//! sets the clipboard, a right-to-left override that reverses what a
//! checker reads. Every piece of sheet text bound for a terminal or a text
//! file goes through [`visible`], which writes such characters as visible
//! escapes (`\u{1b}`); JSON keeps the text exact, and the final text of
//! every command passes [`visible_output`] on its way out.
//!
//! Written by hand: it is a short character filter, and the set of
//! characters (C0, DEL, C1, the bidirectional controls, the line and
//! paragraph separators) is heft's own choice.

use std::borrow::Cow;
use std::fmt::Write as _;

/// Whether a terminal or a text viewer would obey `c` rather than show it:
/// the C0 controls, DEL and the C1 controls (`char::is_control`), the
/// bidirectional marks, embeddings, overrides and isolates (Unicode
/// UAX #9), and the line and paragraph separators.
pub fn is_hidden_control(c: char) -> bool {
    c.is_control()
        || matches!(
            c,
            '\u{061C}'
                | '\u{200E}'
                | '\u{200F}'
                | '\u{202A}'..='\u{202E}'
                | '\u{2066}'..='\u{2069}'
                | '\u{2028}'
                | '\u{2029}'
        )
}

/// `text` with every hidden control written as a visible `\u{…}` escape
/// (lower-case hex, as Rust writes it); text without one is borrowed as it is.
pub fn visible(text: &str) -> Cow<'_, str> {
    escape_where(text, is_hidden_control)
}

/// The final text of a command, on its way to the terminal or a file: like
/// [`visible`], but line breaks stay line breaks and, when `colour` is on,
/// heft's own colour sequences (`ESC [ digits ; m`, select graphic
/// rendition only: they cannot move the cursor or erase) stay as they are.
/// Sheet text inside it has already passed [`visible`], so any escape left
/// here is heft's own.
pub fn visible_output(text: &str, colour: bool) -> Cow<'_, str> {
    let is_kept = |at: usize, c: char| {
        c == '\n' || (colour && c == '\u{1b}' && sgr_length(&text[at..]).is_some())
    };
    if !text
        .char_indices()
        .any(|(at, c)| is_hidden_control(c) && !is_kept(at, c))
    {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    let mut rest = text.char_indices().peekable();
    while let Some((at, c)) = rest.next() {
        if c == '\u{1b}'
            && colour
            && let Some(length) = sgr_length(&text[at..])
        {
            out.push_str(&text[at..at + length]);
            while rest.peek().is_some_and(|&(next, _)| next < at + length) {
                rest.next();
            }
            continue;
        }
        if is_hidden_control(c) && c != '\n' {
            push_escape(&mut out, c);
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// The length of a select-graphic-rendition sequence at the start of
/// `text` (`ESC [`, digits and semicolons, `m`), if one starts there.
fn sgr_length(text: &str) -> Option<usize> {
    let body = text.strip_prefix("\u{1b}[")?;
    let parameters = body
        .bytes()
        .take_while(|b| b.is_ascii_digit() || *b == b';')
        .count();
    (body.as_bytes().get(parameters) == Some(&b'm')).then_some(2 + parameters + 1)
}

/// JSON text with every hidden control inside its strings written as a
/// `\uXXXX` escape: the same text once parsed, but nothing a terminal would
/// obey when the JSON itself is shown. (serde_json escapes C0 already; the
/// rest of the set is in the Basic Multilingual Plane, one escape each.)
pub fn visible_json(json: &str) -> Cow<'_, str> {
    if !json.chars().any(is_hidden_control_but_newline) {
        return Cow::Borrowed(json);
    }
    let mut out = String::with_capacity(json.len() + 16);
    for c in json.chars() {
        if is_hidden_control_but_newline(c) {
            let _ = write!(out, "\\u{:04x}", u32::from(c));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

fn is_hidden_control_but_newline(c: char) -> bool {
    c != '\n' && is_hidden_control(c)
}

fn escape_where(text: &str, hidden: impl Fn(char) -> bool) -> Cow<'_, str> {
    if !text.chars().any(&hidden) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    for c in text.chars() {
        if hidden(c) {
            push_escape(&mut out, c);
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

fn push_escape(out: &mut String, c: char) {
    let _ = write!(out, "\\u{{{:x}}}", u32::from(c));
}

/// Escapes text for HTML (and SVG) element content and quoted attribute
/// values; hidden controls (which would reorder or vanish from the page)
/// are shown as escapes (`visible`).
pub fn escape_markup(text: &str) -> String {
    let text = visible(text);
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn controls_become_escapes_and_plain_text_is_borrowed() {
        assert!(matches!(visible("hoist rope, 6×36 — ok"), Cow::Borrowed(_)));
        assert_eq!(visible("a\rb\u{1b}[K"), "a\\u{d}b\\u{1b}[K");
        assert_eq!(
            visible("x\u{202e}y\u{9b}z\u{7f}"),
            "x\\u{202e}y\\u{9b}z\\u{7f}"
        );
        assert_eq!(visible("two\nlines"), "two\\u{a}lines");
    }

    #[test]
    fn output_keeps_line_breaks_and_only_colour_sequences() {
        let text = "\u{1b}[1mpass\u{1b}[0m\n\u{1b}]52;c;ZWNobw==\u{7}\u{1b}[2K";
        assert_eq!(
            visible_output(text, true),
            "\u{1b}[1mpass\u{1b}[0m\n\\u{1b}]52;c;ZWNobw==\\u{7}\\u{1b}[2K"
        );
        assert_eq!(
            visible_output(text, false),
            "\\u{1b}[1mpass\\u{1b}[0m\n\\u{1b}]52;c;ZWNobw==\\u{7}\\u{1b}[2K"
        );
        assert!(matches!(visible_output("plain\n", false), Cow::Borrowed(_)));
    }

    #[test]
    fn json_escapes_read_back_as_the_same_text() {
        let text = "label\u{202e}\u{85}\u{1b}[K\u{2028}end";
        let json =
            serde_json::to_string_pretty(&serde_json::json!({ "label": text })).unwrap_or_default();
        let shown = visible_json(&json);
        assert!(!shown.chars().any(is_hidden_control_but_newline));
        let back: serde_json::Value = serde_json::from_str(&shown).unwrap_or_default();
        assert_eq!(back["label"], text);
    }

    #[test]
    fn no_hidden_control_survives_either_function() {
        for code in (0u32..0x3000).chain([0xFEFF, 0x10FFFF]) {
            let Some(c) = char::from_u32(code) else {
                continue;
            };
            let text = format!("a{c}b");
            for shown in [visible(&text), visible_output(&text, true)] {
                assert!(
                    !shown.chars().any(|s| is_hidden_control(s) && s != '\n'),
                    "U+{code:04X} survived as {shown:?}"
                );
            }
        }
    }
}
