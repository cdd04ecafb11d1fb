//! Cuts a sheet into its `+++` header and its statements, one per line, and
//! parses each statement on its own so that one bad line never hides the rest.

use pest::Parser;

use super::ast::{CellDef, Expr, ExprKind, Statement, StatementKind};
use super::parser::{HeftParser, Rule, describe_error};
use super::{Span, build};
use crate::diag::{Code, Diagnostic};

/// Deepest bracket nesting a statement may have. pest and the tree walkers
/// recurse once per level, so the limit keeps any input from overflowing the
/// stack; real formulas stay far below it.
pub const MAX_NESTING: usize = 64;

/// Most operators a statement may have (every operator can deepen the tree).
pub const MAX_OPERATORS: usize = 1000;

/// The `+++` header block.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct HeaderBlock {
    /// From the opening `+++` to the end of the closing one.
    pub span: Span,
    /// The TOML text between the delimiters.
    pub body: Span,
}

/// A parsed sheet: header block, statements and the syntax errors found.
#[derive(Clone, Debug, Default)]
pub struct ParsedSheet {
    /// The header block, if the sheet has one.
    pub header: Option<HeaderBlock>,
    /// Every statement that is not blank or a comment, in file order.
    pub statements: Vec<Statement>,
    /// Syntax errors, in file order.
    pub diagnostics: Vec<Diagnostic>,
}

/// A line of the source: its span without the line break.
struct Line {
    start: usize,
    end: usize,
}

fn lines(source: &str) -> impl Iterator<Item = Line> + '_ {
    let mut start = 0;
    std::iter::from_fn(move || {
        if start > source.len() || (start == source.len() && !source.is_empty()) {
            return None;
        }
        let rest = &source[start..];
        let (end, next) = match rest.find('\n') {
            Some(newline) => (start + newline, start + newline + 1),
            None => (source.len(), source.len() + 1),
        };
        let end = if end > start && source.as_bytes()[end - 1] == b'\r' {
            end - 1
        } else {
            end
        };
        let line = Line { start, end };
        start = next;
        Some(line)
    })
}

/// Parses a whole sheet. Never fails: problems become diagnostics and the
/// statements that did parse are kept.
pub fn parse(source: &str) -> ParsedSheet {
    let mut sheet = ParsedSheet::default();
    let mut lines = lines(source).peekable();

    // The header must open on the first line that is not blank or a comment.
    while lines.peek().is_some_and(|line| {
        let text = source[line.start..line.end].trim();
        text.is_empty() || text.starts_with("//")
    }) {
        lines.next();
    }
    if let Some(open) = lines.next_if(|line| is_header_delimiter(&source[line.start..line.end])) {
        let body_start = (open.end + 1).min(source.len());
        let close = lines
            .by_ref()
            .find(|line| is_header_delimiter(&source[line.start..line.end]));
        match close {
            Some(close) => {
                sheet.header = Some(HeaderBlock {
                    span: Span::new(open.start, close.end),
                    body: Span::new(body_start, close.start.max(body_start)),
                });
            }
            None => {
                sheet.diagnostics.push(
                    Diagnostic::error(
                        Code::HeaderError,
                        Span::new(open.start, open.end),
                        "the header opened here is never closed",
                    )
                    .with_help("add a line `+++` after the last header key"),
                );
                sheet.header = Some(HeaderBlock {
                    span: Span::new(open.start, source.len()),
                    body: Span::new(body_start, source.len()),
                });
            }
        }
    }

    let spans: Vec<Span> = lines
        .filter(|line| is_statement_line(&source[line.start..line.end]))
        .map(|line| Span::new(line.start, line.end))
        .collect();
    // Statements parse independently, so large sheets parse on every core.
    let parsed: Vec<(StatementKind, Option<Diagnostic>)> = if spans.len() < PARALLEL_THRESHOLD {
        spans
            .iter()
            .map(|span| parse_statement(span.text(source), span.start()))
            .collect()
    } else {
        use rayon::prelude::*;
        spans
            .par_iter()
            .with_min_len(1024)
            .map(|span| parse_statement(span.text(source), span.start()))
            .collect()
    };
    sheet.statements.reserve(spans.len());
    for (span, (kind, diagnostic)) in spans.into_iter().zip(parsed) {
        sheet.diagnostics.extend(diagnostic);
        sheet.statements.push(Statement { span, kind });
    }
    sheet
}

/// Whether a line (after the header) is a statement: neither blank nor a
/// `//` comment.
pub fn is_statement_line(text: &str) -> bool {
    let trimmed = text.trim_start();
    !trimmed.is_empty() && !trimmed.starts_with("//")
}

/// Whether a line opens or closes a `+++` header block.
pub fn is_header_delimiter(text: &str) -> bool {
    text.trim() == "+++"
}

/// Parses one statement line that sits at byte `offset` of the text its
/// spans point into: what [`parse`] does for each line, for callers that
/// edit a sheet one statement at a time.
pub fn parse_line(text: &str, offset: usize) -> (StatementKind, Option<Diagnostic>) {
    parse_statement(text, offset)
}

/// Below this many statements, parsing on one thread is faster.
const PARALLEL_THRESHOLD: usize = 4096;

/// Parses one statement written at `offset`. On failure the statement is
/// [`StatementKind::Invalid`], or, when the line still reads as
/// `name [unit] =`, a cell whose formula is [`ExprKind::Invalid`], so the name
/// stays defined and its dependents are blocked rather than undefined.
fn parse_statement(text: &str, offset: usize) -> (StatementKind, Option<Diagnostic>) {
    let code_part = text.split("//").next().unwrap_or(text);
    if code_part.trim() == "+++" {
        let diagnostic = Diagnostic::error(
            Code::HeaderError,
            Span::new(offset, offset + text.len()),
            "a `+++` header block must come first in the sheet",
        )
        .with_help(
            "move the header to the top; only blank lines and `//` comments may come before it",
        );
        return (StatementKind::Invalid, Some(diagnostic));
    }
    let failure = if let Some(diagnostic) = check_limits(text, offset) {
        diagnostic
    } else {
        match HeftParser::parse(Rule::line, text) {
            Ok(pairs) => match build::statement(pairs, offset) {
                Ok(Some(kind)) => return (kind, None),
                Ok(None) => return (StatementKind::Invalid, None),
                Err(error) => Diagnostic::error(Code::ParseError, error.span, error.message),
            },
            Err(error) => {
                let (span, message) = describe_error(&error, text, offset);
                Diagnostic::error(Code::ParseError, span, message)
            }
        }
    };
    (
        recover_cell(text, offset).unwrap_or(StatementKind::Invalid),
        Some(failure),
    )
}

/// The cell a broken line still defines, read from its `name [unit] =` head.
fn recover_cell(text: &str, offset: usize) -> Option<StatementKind> {
    let pairs = HeftParser::parse(Rule::cell_head, text).ok()?;
    let (name, unit, formula_start) = build::cell_head(pairs, offset)?;
    let code_end = offset + text.split("//").next().unwrap_or(text).trim_end().len();
    let formula = &text[formula_start - offset..];
    let blank = formula.len() - formula.trim_start().len();
    let rest = Span::new((formula_start + blank).min(code_end), code_end);
    Some(StatementKind::Cell(Box::new(CellDef {
        name,
        unit,
        expr: Expr {
            kind: ExprKind::Invalid,
            span: rest,
        },
        description: None,
    })))
}

/// Refuses statements nested deeper than [`MAX_NESTING`] or with more than
/// [`MAX_OPERATORS`] operators, before any recursive code sees them.
fn check_limits(text: &str, offset: usize) -> Option<Diagnostic> {
    let mut depth = 0usize;
    let mut n_operators = 0usize;
    let mut in_quotes = false;
    let mut escaped = false;
    let mut previous = '\0';
    for (position, c) in text.char_indices() {
        if in_quotes {
            match (escaped, c) {
                (true, _) => escaped = false,
                (false, '\\') => escaped = true,
                (false, '"') => in_quotes = false,
                _ => {}
            }
            continue;
        }
        match c {
            '"' => in_quotes = true,
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
            '+' | '-' | '*' | '/' | '^' => {
                n_operators += 1;
                if n_operators > MAX_OPERATORS {
                    return Some(
                        Diagnostic::error(
                            Code::ParseError,
                            Span::new(offset + position, offset + position + 1),
                            format!("this statement has more than {MAX_OPERATORS} operators"),
                        )
                        .with_help("split the formula into several cells"),
                    );
                }
            }
            _ => {}
        }
        previous = c;
    }
    None
}

/// Parses `text` as one expression (for `heft convert`).
pub fn parse_expression(text: &str) -> Result<super::ast::Expr, Diagnostic> {
    if let Some(diagnostic) = check_limits(text, 0) {
        return Err(diagnostic);
    }
    let pairs = HeftParser::parse(Rule::expression_only, text).map_err(|error| {
        let (span, message) = describe_error(&error, text, 0);
        Diagnostic::error(Code::ParseError, span, message)
    })?;
    match build::expression(pairs) {
        Ok(Some(expr)) => Ok(expr),
        Ok(None) => Err(Diagnostic::error(
            Code::ParseError,
            Span::new(0, text.len()),
            "expected an expression",
        )),
        Err(error) => Err(Diagnostic::error(
            Code::ParseError,
            error.span,
            error.message,
        )),
    }
}

/// Parses `text` as one unit expression (for `heft convert`).
pub fn parse_unit(text: &str) -> Result<super::ast::UnitExpr, Diagnostic> {
    let pairs = HeftParser::parse(Rule::unit_only, text).map_err(|error| {
        let (span, message) = describe_error(&error, text, 0);
        Diagnostic::error(Code::ParseError, span, message)
    })?;
    match build::unit(pairs) {
        Ok(Some(unit)) => Ok(unit),
        Ok(None) => Err(Diagnostic::error(
            Code::ParseError,
            Span::new(0, text.len()),
            "expected a unit",
        )),
        Err(error) => Err(Diagnostic::error(
            Code::ParseError,
            error.span,
            error.message,
        )),
    }
}
