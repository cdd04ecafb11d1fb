//! Text fitted to a number of terminal columns: cut with `…`, padded,
//! right-aligned, or wrapped between words. Widths are display columns
//! (`unicode-width`), not characters or bytes.

use ratatui::text::{Line, Span};
use unicode_width::{UnicodeWidthChar, UnicodeWidthStr};

/// `text` cut to `width` columns, with `…` where it was cut.
pub(super) fn fit(text: &str, width: usize) -> String {
    if text.width() <= width {
        return text.to_string();
    }
    let mut out = String::new();
    let mut used = 0;
    for c in text.chars() {
        let w = c.width().unwrap_or(0);
        if used + w + 1 > width {
            break;
        }
        out.push(c);
        used += w;
    }
    if width > 0 {
        out.push('…');
    }
    out
}

/// `text` fitted and padded to exactly `width` columns.
pub(super) fn pad(text: &str, width: usize) -> String {
    let fitted = fit(text, width);
    let fill = width.saturating_sub(fitted.width());
    format!("{fitted}{}", " ".repeat(fill))
}

/// `text` fitted and right-aligned in `width` columns.
pub(super) fn pad_left(text: &str, width: usize) -> String {
    let fitted = fit(text, width);
    let fill = width.saturating_sub(fitted.width());
    format!("{}{fitted}", " ".repeat(fill))
}

/// `text` cut into pieces of at most `room` columns (at least one piece),
/// between words where it can be and inside a word that is too long.
pub(super) fn wrap(text: &str, room: usize) -> Vec<String> {
    let room = room.max(1);
    let mut pieces = Vec::new();
    let mut current = String::new();
    let mut used = 0;
    for word in text.split(' ') {
        if !current.is_empty() && used + 1 + word.width() > room {
            pieces.push(std::mem::take(&mut current));
            used = 0;
        }
        if !current.is_empty() {
            current.push(' ');
            used += 1;
        }
        for c in word.chars() {
            let w = c.width().unwrap_or(0);
            if !current.is_empty() && used + w > room {
                pieces.push(std::mem::take(&mut current));
                used = 0;
            }
            current.push(c);
            used += w;
        }
    }
    pieces.push(current);
    pieces
}

/// `line` cut to `width` columns.
pub(super) fn fit_line(line: Line<'static>, width: usize) -> Line<'static> {
    let mut used = 0;
    let mut spans = Vec::new();
    for span in line.spans {
        let room = width.saturating_sub(used);
        if room == 0 {
            break;
        }
        let fitted = fit(&span.content, room);
        used += fitted.width();
        spans.push(Span::styled(fitted, span.style));
    }
    Line::from(spans)
}
