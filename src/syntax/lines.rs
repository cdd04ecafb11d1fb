//! What the statement splitter and the block parsers share: a block's
//! lines, and the limits every statement is held to before anything
//! recursive reads it.

use crate::base::{Code, Diagnostic, Span};

/// Deepest bracket nesting a statement may have. pest and the tree walkers
/// recurse once per level, so the limit keeps any input from overflowing the
/// stack; real formulas stay far below it.
pub const MAX_NESTING: usize = 64;

/// Most operators a statement may have (every operator can deepen the tree).
pub const MAX_OPERATORS: usize = 1000;

/// The lines of a block statement.
pub(super) struct BlockLines {
    pub(super) head: Span,
    pub(super) body: Vec<Span>,
    pub(super) end: Option<Span>,
}

/// The error for a statement with more than [`MAX_OPERATORS`] operators
/// (components included), at the one past the limit.
fn too_many_operators(at: usize) -> Diagnostic {
    Diagnostic::error(
        Code::ParseError,
        Span::new(at, at + 1),
        format!("this statement has more than {MAX_OPERATORS} operators"),
    )
    .with_help("split the formula into several cells")
}

/// The error of a block whose head `keyword …:` at `head` has no `end`.
pub(super) fn unclosed_block(head: Span, keyword: &str) -> Diagnostic {
    Diagnostic::error(
        Code::ParseError,
        head,
        format!("this {keyword} block is never closed"),
    )
    .with_help("end the block with a line `end`")
}

/// Where a line's quoted text is (`"…"`, with `\"` and `\\` escaped),
/// one character at a time: what checks a line's brackets and what
/// normalizes it for a fingerprint both skip the text inside quotes.
#[derive(Default)]
pub(crate) struct Quotes {
    inside: bool,
    escaped: bool,
}

impl Quotes {
    /// Whether `c`, the next character, is quoted text (the closing quote
    /// included; the opening one is not, but opens the quotes).
    pub(crate) fn step(&mut self, c: char) -> bool {
        if !self.inside {
            self.inside = c == '"';
            return false;
        }
        match (self.escaped, c) {
            (true, _) => self.escaped = false,
            (false, '\\') => self.escaped = true,
            (false, '"') => self.inside = false,
            _ => {}
        }
        true
    }
}

/// Whether `c` continues a name.
fn is_word_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// The word (letters, digits, `_`) that `text` starts with.
fn word_at(text: &str) -> &str {
    let end = text
        .char_indices()
        .find(|&(_, c)| !is_word_char(c))
        .map_or(text.len(), |(index, _)| index);
    &text[..end]
}

/// Refuses statements nested deeper than [`MAX_NESTING`] or with more than
/// [`MAX_OPERATORS`] operators, before any recursive code sees them.
pub(super) fn check_limits(text: &str, offset: usize) -> Option<Diagnostic> {
    let mut depth = 0usize;
    let mut n_operators = 0usize;
    let mut quotes = Quotes::default();
    let mut previous = '\0';
    let mut n_nesting_words = 0usize;
    for (position, c) in text.char_indices() {
        if quotes.step(c) {
            continue;
        }
        match c {
            '/' if previous == '/' => break,
            '(' | '[' => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Some(
                        Diagnostic::error(
                            Code::ParseError,
                            Span::new(offset + position, offset + position + 1),
                            format!("brackets nest more than {MAX_NESTING} deep here"),
                        )
                        .with_help("split the formula into several cells"),
                    );
                }
            }
            ')' | ']' => depth = depth.saturating_sub(1),
            // A component (`F.x`) nests its vector like an operator does.
            '.' if text[position + 1..].starts_with(|next: char| next.is_ascii_alphabetic()) => {
                n_operators += 1;
                if n_operators > MAX_OPERATORS {
                    return Some(too_many_operators(offset + position));
                }
            }
            '+' | '-' | '*' | '/' | '^' => {
                n_operators += 1;
                if n_operators > MAX_OPERATORS {
                    return Some(too_many_operators(offset + position));
                }
            }
            // A conditional's `if` and a test's `not` nest what follows them.
            'i' | 'n' | 'a' | 'o' if !is_word_char(previous) => match word_at(&text[position..]) {
                "if" | "not" => {
                    n_nesting_words += 1;
                    if n_nesting_words > MAX_NESTING {
                        return Some(
                            Diagnostic::error(
                                Code::ParseError,
                                Span::new(offset + position, offset + position + 1),
                                format!("more than {MAX_NESTING} `if` and `not` in one statement"),
                            )
                            .with_help("split the formula into several cells"),
                        );
                    }
                }
                "and" | "or" => {
                    n_operators += 1;
                    if n_operators > MAX_OPERATORS {
                        return Some(too_many_operators(offset + position));
                    }
                }
                _ => {}
            },
            _ => {}
        }
        previous = c;
    }
    None
}
