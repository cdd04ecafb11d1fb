//! Cuts a sheet into its `+++` header and its statements, one per line, and
//! parses each statement on its own so that one bad line never hides the rest.

use std::sync::{Mutex, PoisonError};

use pest::Parser;

use super::ast::{CaseBlock, CellDef, Expr, ExprKind, SolveBlock, Statement, StatementKind};
use super::build;
use super::lines::{BlockLines, check_limits};
use super::parser::{HeftParser, Rule, describe_error};
use crate::base::Span;
use crate::base::{Code, Diagnostic};

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

/// The UTF-8 byte-order mark some editors write at the start of a file.
pub const BYTE_ORDER_MARK: char = '\u{feff}';

/// The lines of `source`; a byte-order mark at its start belongs to no line
/// (it is kept in the text, so a save writes it back).
fn lines(source: &str) -> impl Iterator<Item = Line> + '_ {
    let mut start = if source.starts_with(BYTE_ORDER_MARK) {
        BYTE_ORDER_MARK.len_utf8()
    } else {
        0
    };
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
    sheet.diagnostics.extend(carriage_returns_only(source));
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

    let statements = gather_statements(source, lines);
    // Statements parse independently, so large sheets parse on every core.
    // Their diagnostics (rare) are gathered with the statement's index and put
    // back in file order, so the statements collect straight into one vector.
    let failures = Mutex::new(Vec::new());
    let parse_one = |(index, raw): (usize, &RawStatement)| {
        let (kind, diagnostics) = match raw.block.as_deref() {
            None => {
                let (kind, diagnostic) = parse_statement(raw.span.text(source), raw.span.start());
                (kind, diagnostic.into_iter().collect())
            }
            Some(block) if code_of(block.head.text(source)).starts_with("simulate") => {
                super::simulate::parse_simulate_block(source, block)
            }
            Some(block) if super::parts::opens_parts_or_lift(block.head.text(source)) => {
                super::parts::parse_parts_or_lift(source, block)
            }
            Some(block) if code_of(block.head.text(source)).starts_with("sweep") => {
                super::sweep::parse_sweep_block(source, block)
            }
            Some(block) if code_of(block.head.text(source)).starts_with("table") => {
                super::table::parse_table_block(source, block)
            }
            Some(block) => parse_block(source, block),
        };
        if !diagnostics.is_empty() {
            let mut failures = failures.lock().unwrap_or_else(PoisonError::into_inner);
            failures.push((index, diagnostics));
        }
        Statement {
            span: raw.span,
            kind,
        }
    };
    sheet.statements = if statements.len() < PARALLEL_THRESHOLD {
        statements.iter().enumerate().map(parse_one).collect()
    } else {
        use rayon::prelude::*;
        statements
            .par_iter()
            .enumerate()
            .with_min_len(1024)
            .map(parse_one)
            .collect()
    };
    let mut failures = failures
        .into_inner()
        .unwrap_or_else(PoisonError::into_inner);
    failures.sort_unstable_by_key(|&(index, _)| index);
    sheet.diagnostics.extend(
        failures
            .into_iter()
            .flat_map(|(_, diagnostics)| diagnostics),
    );
    sheet
}

/// A statement before parsing: one line, or a block of lines.
struct RawStatement {
    /// From the first line's start to the last line's end.
    span: Span,
    /// For a block: its head line, the lines inside, and its `end` line if
    /// it has one (blank and comment lines left out).
    /// Boxed: a million-line sheet has few blocks and many lines.
    block: Option<Box<BlockLines>>,
}

/// Words that open a block running to a line `end`.
const BLOCK_KEYWORDS: &[&str] = &[
    "solve", "case", "simulate", "parts", "lift", "sweep", "table",
];

/// The code of a line without a trailing `//` comment, trimmed.
pub(super) fn code_of(text: &str) -> &str {
    text.split("//").next().unwrap_or(text).trim()
}

fn opens_block(text: &str) -> bool {
    let code = code_of(text);
    BLOCK_KEYWORDS.iter().any(|keyword| {
        code.strip_prefix(keyword).is_some_and(|rest| {
            // `lift = 2 m` is a cell named like a keyword, not a block.
            rest.starts_with(|c: char| c.is_whitespace())
                && !rest.trim_start().starts_with(['=', '['])
        })
            // A table read from a file is one line; a written one ends its
            // head with `:` and runs to `end`.
            && (*keyword != "table" || code.ends_with(':'))
    })
}

/// Groups the remaining lines into statements, skipping blank and comment
/// lines, and gathering each block up to its `end`.
fn gather_statements(source: &str, lines: impl Iterator<Item = Line>) -> Vec<RawStatement> {
    // At most one statement per line: counting lines first allocates once.
    let mut statements = Vec::with_capacity(crate::base::span::line_count(source));
    let mut lines = lines.filter(|line| is_statement_line(&source[line.start..line.end]));
    while let Some(line) = lines.next() {
        let span = Span::new(line.start, line.end);
        if !opens_block(span.text(source)) {
            statements.push(RawStatement { span, block: None });
            continue;
        }
        let mut block = BlockLines {
            head: span,
            body: Vec::new(),
            end: None,
        };
        for inner in lines.by_ref() {
            let inner = Span::new(inner.start, inner.end);
            if code_of(inner.text(source)) == "end" {
                block.end = Some(inner);
                break;
            }
            block.body.push(inner);
        }
        let last = block.end.or(block.body.last().copied()).unwrap_or(span);
        statements.push(RawStatement {
            span: span.to(last),
            block: Some(Box::new(block)),
        });
    }
    statements
}

/// Parses one line of a block with `rule`, building it with `build`.
pub(super) fn parse_block_line<T>(
    source: &str,
    line: Span,
    rule: Rule,
    build: impl FnOnce(pest::iterators::Pairs<'_, Rule>, usize) -> Result<T, build::BuildError>,
) -> Result<T, Diagnostic> {
    let text = line.text(source);
    if let Some(diagnostic) = check_limits(text, line.start()) {
        return Err(diagnostic);
    }
    let pairs = HeftParser::parse(rule, text).map_err(|error| {
        let (span, message) = describe_error(&error, text, line.start());
        Diagnostic::error(Code::ParseError, span, message)
    })?;
    build(pairs, line.start())
        .map_err(|error| Diagnostic::error(Code::ParseError, error.span, error.message))
}

/// Parses the lines inside a block, reporting each line that fails.
fn parse_body<T>(
    source: &str,
    block: &BlockLines,
    rule: Rule,
    build: fn(pest::iterators::Pairs<'_, Rule>, usize) -> Result<T, build::BuildError>,
    complete: &mut bool,
    diagnostics: &mut Vec<Diagnostic>,
) -> Vec<T> {
    let mut parsed = Vec::with_capacity(block.body.len());
    for &line in &block.body {
        match parse_block_line(source, line, rule, build) {
            Ok(item) => parsed.push(item),
            Err(diagnostic) => {
                *complete = false;
                diagnostics.push(diagnostic);
            }
        }
    }
    parsed
}

/// Parses a block statement line by line: every line's error is reported,
/// and the block is marked incomplete if any line failed or `end` is missing.
fn parse_block(source: &str, block: &BlockLines) -> (StatementKind, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let mut complete = block.end.is_some();
    let keyword = code_of(block.head.text(source))
        .split_whitespace()
        .next()
        .unwrap_or("");
    if !complete {
        diagnostics.push(super::lines::unclosed_block(block.head, keyword));
    }
    let kind = if keyword == "case" {
        let overrides = parse_body(
            source,
            block,
            Rule::override_line,
            build::override_of,
            &mut complete,
            &mut diagnostics,
        );
        match parse_block_line(source, block.head, Rule::case_line, |pairs, offset| {
            Ok(build::case_head(pairs, offset))
        }) {
            Ok((name, label)) => StatementKind::Case(Box::new(CaseBlock {
                name,
                label,
                overrides,
                complete,
                head: block.head,
            })),
            Err(diagnostic) => {
                diagnostics.push(diagnostic.with_help("write `case name \"label\":`"));
                StatementKind::Invalid
            }
        }
    } else {
        let equations = parse_body(
            source,
            block,
            Rule::equation_line,
            build::equation,
            &mut complete,
            &mut diagnostics,
        );
        let unknowns =
            match parse_block_line(source, block.head, Rule::solve_line, build::solve_head) {
                Ok(unknowns) => unknowns,
                Err(diagnostic) => {
                    diagnostics.push(
                        diagnostic.with_help("write `solve name [unit], name [unit] ~ guess:`"),
                    );
                    complete = false;
                    Vec::new()
                }
            };
        StatementKind::Solve(Box::new(SolveBlock {
            unknowns,
            equations,
            complete,
            head: block.head,
        }))
    };
    diagnostics.sort_by_key(|d| d.span.start());
    (kind, diagnostics)
}

/// Whether a line (after the header) is a statement: neither blank nor a
/// `//` comment.
pub fn is_statement_line(text: &str) -> bool {
    let trimmed = text.trim_start();
    !trimmed.is_empty() && !trimmed.starts_with("//")
}

/// Whether a line opens a block (`solve`, `case`, `simulate`) or ends one
/// (`end`): a line that changes how the lines after it group.
pub fn is_block_line(text: &str) -> bool {
    opens_block(text) || code_of(text) == "end"
}

/// A file whose lines end in a carriage return alone (no line feed) reads
/// as one long line; say so at the first one rather than only fail to parse.
fn carriage_returns_only(source: &str) -> Option<Diagnostic> {
    if source.contains('\n') {
        return None;
    }
    let at = source.find('\r').filter(|&at| at + 1 < source.len())?;
    Some(
        Diagnostic::error(
            Code::EncodingError,
            Span::new(at, at + 1),
            "this file ends its lines with a carriage return alone (CR), so heft reads it as one line",
        )
        .with_help("save the sheet with LF or CRLF line endings"),
    )
}

/// Whether a line opens a block (`solve`, `case`, `simulate`), whose lines
/// run to a line `end`.
pub fn is_block_head(text: &str) -> bool {
    opens_block(text)
}

/// Whether a line opens or closes a `+++` header block.
pub fn is_header_delimiter(text: &str) -> bool {
    text.trim() == "+++"
}

/// The files a sheet's tables are read from (`table … from "file.csv"`), as
/// written, in file order: only lines that open with `table` are parsed.
pub fn table_files(source: &str) -> Vec<String> {
    let mut files = Vec::new();
    for line in lines(source) {
        let text = &source[line.start..line.end];
        if !code_of(text).starts_with("table") || opens_block(text) {
            continue;
        }
        if let (StatementKind::Table(table), None) = parse_statement(text, line.start)
            && let super::ast::TableSource::File { path } = table.source
            && !files.contains(&path.text)
        {
            files.push(path.text);
        }
    }
    files
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
    // The head is parsed recursively too (its unit may nest): only a head
    // within the limits is read.
    let head = text.split('=').next().unwrap_or(text);
    if check_limits(head, offset).is_some() {
        return None;
    }
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
        tolerance: None,
        description: None,
    })))
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
    if let Some(diagnostic) = check_limits(text, 0) {
        return Err(diagnostic);
    }
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
