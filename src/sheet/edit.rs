//! Editing a sheet's text one line at a time, for the notebook.
//!
//! The text is the document: every line the user did not touch is kept byte
//! for byte (comments, spacing, order, line endings), and an edit replaces,
//! inserts or removes one line. Spans in the syntax tree are byte offsets
//! into one text, so that an edit never has to shift the spans of the lines
//! after it, the [`Document`] keeps an append-only *arena*: the text as
//! opened, followed by the text of every line written since. A line is a
//! span into the arena; the file's text is the lines joined in order.
//!
//! Hand-written rather than a rope crate: heft needs stable offsets for its
//! syntax tree, not fast edits inside long lines (a line is one statement).

use crate::syntax::ast::{CellDef, Statement};
use crate::syntax::{self, HeaderBlock, MAX_SOURCE_LEN, Span};

/// How a line ends in the file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineEnding {
    /// The last line of a file without a final line break.
    None,
    /// `\n`
    Lf,
    /// `\r\n`
    CrLf,
}

impl LineEnding {
    /// The bytes of the line break.
    pub fn as_str(self) -> &'static str {
        match self {
            LineEnding::None => "",
            LineEnding::Lf => "\n",
            LineEnding::CrLf => "\r\n",
        }
    }
}

/// One line of the document: where its text is in the arena, and its break.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct DocumentLine {
    text: Span,
    ending: LineEnding,
}

/// Why an edit was refused. The text stays as it was.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EditError {
    /// There is no such line.
    NoSuchLine {
        /// The 0-based line asked for.
        line: usize,
    },
    /// The line belongs to the `+++` header block, which the notebook shows
    /// but does not edit.
    InHeader {
        /// The 0-based line asked for.
        line: usize,
    },
    /// The new text has a line break in it; an edit is one line.
    LineBreak,
    /// The cell is not a `name = formula` line of its own (a body's
    /// resultant, a block's unknown or state): edit its line instead.
    NotOwnLine {
        /// The 0-based line of its statement.
        line: usize,
    },
    /// The document would grow past what a span can address.
    TooLarge,
}

impl std::fmt::Display for EditError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            EditError::NoSuchLine { line } => write!(f, "there is no line {}", line + 1),
            EditError::InHeader { line } => write!(
                f,
                "line {} is part of the +++ header, which is edited in a text editor",
                line + 1
            ),
            EditError::LineBreak => f.write_str("a statement is one line; remove the line break"),
            EditError::NotOwnLine { line } => write!(
                f,
                "this cell is defined inside the statement on line {}; edit that line",
                line + 1
            ),
            EditError::TooLarge => f.write_str("the sheet would grow past 4 GiB"),
        }
    }
}

impl std::error::Error for EditError {}

/// A sheet's text as lines, with the arena their spans point into.
#[derive(Clone, Debug)]
pub struct Document {
    arena: String,
    lines: Vec<DocumentLine>,
    /// First line after the header block (0 without a header).
    body_start: usize,
    /// Whether a header was opened but never closed (it then runs to the end).
    header_unclosed: bool,
    /// First line an edit may touch: the body, or with an unclosed header
    /// the line after its opening `+++`, so that it can still be closed.
    editable_from: usize,
    /// The 0-based line of each statement, ascending.
    statement_lines: Vec<u32>,
    /// Bytes of the arena that no line refers to any more.
    unused_bytes: usize,
    /// The break given to new lines: the file's first one, else `\n`.
    newline: LineEnding,
    /// Whether some statement spans several lines (a block), so that a
    /// line is no longer a statement and every edit reads the text again.
    has_blocks: bool,
}

impl Document {
    /// The document of `text`, whose parse gave `header` and `statements`
    /// (spans into `text`).
    pub fn open(text: &str, header: Option<HeaderBlock>, statements: &[Statement]) -> Document {
        let mut lines = Vec::new();
        let mut start = 0;
        while start < text.len() {
            let (end, ending, next) = match text[start..].find('\n') {
                Some(at) if at > 0 && text.as_bytes()[start + at - 1] == b'\r' => {
                    (start + at - 1, LineEnding::CrLf, start + at + 1)
                }
                Some(at) => (start + at, LineEnding::Lf, start + at + 1),
                None => (text.len(), LineEnding::None, text.len()),
            };
            lines.push(DocumentLine {
                text: Span::new(start, end),
                ending,
            });
            start = next;
        }
        let newline = lines
            .iter()
            .map(|line| line.ending)
            .find(|ending| *ending != LineEnding::None)
            .unwrap_or(LineEnding::Lf);
        let line_of = |offset: usize| {
            lines
                .partition_point(|line| line.text.start() <= offset)
                .saturating_sub(1)
        };
        let (body_start, header_unclosed, editable_from) = match header {
            None => (0, false, 0),
            // An unclosed header runs to the end of the text.
            Some(block) if block.body.end() == block.span.end() => {
                (lines.len(), true, line_of(block.span.start()) + 1)
            }
            Some(block) => {
                let body_start = line_of(block.span.end().saturating_sub(1)) + 1;
                (body_start, false, body_start)
            }
        };
        let statement_lines = statements
            .iter()
            .map(|statement| line_of(statement.span.start()) as u32)
            .collect();
        let has_blocks = statements
            .iter()
            .any(|statement| statement.span.text(text).contains('\n'));
        Document {
            arena: text.to_string(),
            lines,
            body_start,
            header_unclosed,
            editable_from,
            statement_lines,
            unused_bytes: 0,
            newline,
            has_blocks,
        }
    }

    /// The text every span points into (not the file's text: see [`Document::text`]).
    pub fn arena(&self) -> &str {
        &self.arena
    }

    /// The file's text: every line and its break, in order.
    pub fn text(&self) -> String {
        let mut text = String::with_capacity(self.arena.len() - self.unused_bytes);
        for line in &self.lines {
            text.push_str(line.text.text(&self.arena));
            text.push_str(line.ending.as_str());
        }
        text
    }

    /// Number of lines.
    pub fn n_lines(&self) -> usize {
        self.lines.len()
    }

    /// The text of 0-based `line`, without its break.
    pub fn line_text(&self, line: usize) -> Option<&str> {
        self.lines.get(line).map(|l| l.text.text(&self.arena))
    }

    /// The first line after the header block.
    pub fn body_start(&self) -> usize {
        self.body_start
    }

    /// The first line an edit may touch (see [`EditError::InHeader`]).
    pub fn editable_from(&self) -> usize {
        self.editable_from
    }

    /// Whether the header block is opened but never closed.
    pub fn header_unclosed(&self) -> bool {
        self.header_unclosed
    }

    /// The 0-based line of statement `index`.
    pub fn statement_line(&self, index: usize) -> usize {
        self.statement_lines[index] as usize
    }

    /// The statement on 0-based `line`, if the line is one.
    pub fn statement_at_line(&self, line: usize) -> Option<usize> {
        let index = self
            .statement_lines
            .partition_point(|&statement_line| (statement_line as usize) < line);
        (self.statement_lines.get(index) == Some(&(line as u32))).then_some(index)
    }

    /// How many statements come before 0-based `line`.
    pub fn statements_before(&self, line: usize) -> usize {
        self.statement_lines
            .partition_point(|&statement_line| (statement_line as usize) < line)
    }

    /// Whether 0-based `line` (a body line with this text) is a statement.
    pub fn is_statement(&self, line: usize, text: &str) -> bool {
        line >= self.body_start && syntax::is_statement_line(text)
    }

    /// Bytes of the arena that no line uses any more.
    pub fn unused_bytes(&self) -> usize {
        self.unused_bytes
    }

    /// Checks that `line` may be replaced or removed and `text` is one line.
    pub fn check_edit(&self, line: usize, text: Option<&str>) -> Result<(), EditError> {
        if line >= self.lines.len() {
            return Err(EditError::NoSuchLine { line });
        }
        if line < self.editable_from {
            return Err(EditError::InHeader { line });
        }
        self.check_text(text)
    }

    /// Checks that a line may be inserted before 0-based `at`.
    pub fn check_insert(&self, at: usize, text: &str) -> Result<(), EditError> {
        if at > self.lines.len() {
            return Err(EditError::NoSuchLine { line: at });
        }
        if at < self.editable_from {
            return Err(EditError::InHeader { line: at });
        }
        self.check_text(Some(text))
    }

    fn check_text(&self, text: Option<&str>) -> Result<(), EditError> {
        let text = text.unwrap_or("");
        if text.contains(['\n', '\r']) {
            return Err(EditError::LineBreak);
        }
        if self.arena.len() + text.len() + 1 >= MAX_SOURCE_LEN {
            return Err(EditError::TooLarge);
        }
        Ok(())
    }

    /// Writes `text` into the arena and returns its span; a line is then
    /// pointed at it with [`Document::set_line`] or [`Document::insert_line`].
    pub fn append(&mut self, text: &str) -> Span {
        // A line break keeps each appended line a line of its own, so that
        // an arena offset never reads across two statements.
        if !self.arena.is_empty() && !self.arena.ends_with('\n') {
            self.arena.push('\n');
            self.unused_bytes += 1;
        }
        let start = self.arena.len();
        self.arena.push_str(text);
        self.arena.push('\n');
        self.unused_bytes += 1;
        Span::new(start, start + text.len())
    }

    /// Points 0-based `line` at `text` (a span from [`Document::append`]).
    /// Returns whether the line was a statement before and is one now.
    pub fn set_line(&mut self, line: usize, text: Span) -> (bool, bool) {
        let old = self.lines[line].text;
        let was = self.is_statement(line, old.text(&self.arena));
        let is = self.is_statement(line, text.text(&self.arena));
        self.unused_bytes += old.end() - old.start();
        self.lines[line].text = text;
        if was != is {
            self.index_statements();
        }
        (was, is)
    }

    /// Inserts a line before 0-based `at` (at the end if `at` is the number
    /// of lines). Returns whether it is a statement.
    pub fn insert_line(&mut self, at: usize, text: Span) -> bool {
        if let Some(last) = self.lines.last_mut()
            && last.ending == LineEnding::None
        {
            // The old last line gains a break; the new line ends the file
            // without one, as the old one did.
            last.ending = self.newline;
            let ending = if at == self.lines.len() {
                LineEnding::None
            } else {
                self.newline
            };
            self.lines.insert(at, DocumentLine { text, ending });
        } else {
            self.lines.insert(
                at,
                DocumentLine {
                    text,
                    ending: self.newline,
                },
            );
        }
        self.index_statements();
        self.is_statement(at, text.text(&self.arena))
    }

    /// Removes 0-based `line`; returns whether it was a statement.
    pub fn remove_line(&mut self, line: usize) -> bool {
        let removed = self.lines.remove(line);
        self.unused_bytes += removed.text.end() - removed.text.start();
        if removed.ending == LineEnding::None
            && let Some(last) = self.lines.last_mut()
        {
            last.ending = LineEnding::None;
        }
        self.index_statements();
        self.is_statement(line, removed.text.text(&self.arena))
    }

    /// Recomputes which lines are statements (after lines came or went).
    fn index_statements(&mut self) {
        let arena = &self.arena;
        self.statement_lines = self
            .lines
            .iter()
            .enumerate()
            .skip(self.body_start)
            .filter(|(_, line)| syntax::is_statement_line(line.text.text(arena)))
            .map(|(index, _)| index as u32)
            .collect();
    }

    /// Whether some statement spans several lines.
    pub fn has_blocks(&self) -> bool {
        self.has_blocks
    }

    /// Whether the first statement opens a header block (so the whole text
    /// must be read again to find where the header ends).
    pub fn first_statement_opens_header(&self) -> bool {
        self.body_start == 0
            && self.statement_lines.first().is_some_and(|&line| {
                self.line_text(line as usize)
                    .is_some_and(syntax::is_header_delimiter)
            })
    }
}

/// The parts of a cell the notebook edits one at a time.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CellField {
    /// The name before `=` (and before the unit).
    Name,
    /// The declared unit between brackets; empty for none.
    Unit,
    /// The expression after `=`.
    Formula,
    /// The quoted description; empty for none.
    Description,
}

/// One field of one cell being edited: keeps the line as it was when the
/// edit began, so each new value is spliced into the same original line
/// however the line reads in between (broken, half typed).
#[derive(Clone, Debug)]
pub struct FieldEditor {
    cell: CellDef,
    line_text: String,
    line_start: usize,
    field: CellField,
}

impl FieldEditor {
    /// An editor for `field` of `cell`, written in `line_text` at arena offset `line_start`.
    pub fn new(cell: &CellDef, line_text: &str, line_start: usize, field: CellField) -> Self {
        FieldEditor {
            cell: cell.clone(),
            line_text: line_text.to_string(),
            line_start,
            field,
        }
    }

    /// The field being edited.
    pub fn field(&self) -> CellField {
        self.field
    }

    /// The field's text when the edit began.
    pub fn value(&self) -> String {
        cell_field_text(&self.cell, &self.line_text, self.line_start, self.field)
    }

    /// The line with the field set to `value`.
    pub fn line_with(&self, value: &str) -> String {
        with_cell_field(
            &self.cell,
            &self.line_text,
            self.line_start,
            self.field,
            value,
        )
    }
}

/// The current text of one field of `cell`, written in the line `line_text`
/// whose first byte is at arena offset `line_start`.
pub fn cell_field_text(
    cell: &CellDef,
    line_text: &str,
    line_start: usize,
    field: CellField,
) -> String {
    let slice = |span: Span| {
        line_text
            .get(span.start().saturating_sub(line_start)..span.end().saturating_sub(line_start))
            .unwrap_or("")
            .to_string()
    };
    match field {
        CellField::Name => cell.name.text.to_string(),
        CellField::Unit => cell
            .unit
            .as_ref()
            .map(|unit| slice(unit.span))
            .unwrap_or_default(),
        CellField::Formula => slice(cell.expr.span),
        CellField::Description => cell
            .description
            .as_ref()
            .map(|description| description.text.clone())
            .unwrap_or_default(),
    }
}

/// The line `line_text` (of `cell`, starting at arena offset `line_start`)
/// with one field replaced by `value`; the rest of the line, spacing and
/// trailing comment included, is kept as it was. An empty unit or
/// description removes it.
pub fn with_cell_field(
    cell: &CellDef,
    line_text: &str,
    line_start: usize,
    field: CellField,
    value: &str,
) -> String {
    let at = |offset: usize| offset.saturating_sub(line_start).min(line_text.len());
    let splice = |start: usize, end: usize, insert: &str| {
        let end = end.max(start);
        format!("{}{insert}{}", &line_text[..start], &line_text[end..])
    };
    match field {
        CellField::Name => splice(at(cell.name.span.start()), at(cell.name.span.end()), value),
        CellField::Formula => splice(at(cell.expr.span.start()), at(cell.expr.span.end()), value),
        CellField::Unit => {
            let value = value.trim();
            match &cell.unit {
                Some(unit) if value.is_empty() => {
                    // Drop `[unit]` with the blanks before it; keep one blank before `=`.
                    let (open, close) =
                        bracket_around(line_text, at(unit.span.start()), at(unit.span.end()));
                    let start = line_text[..open].trim_end_matches([' ', '\t']).len();
                    let glue = if line_text[close..].starts_with([' ', '\t']) {
                        ""
                    } else {
                        " "
                    };
                    splice(start, close, glue)
                }
                Some(unit) => splice(at(unit.span.start()), at(unit.span.end()), value),
                None if value.is_empty() => line_text.to_string(),
                None => {
                    let end = at(cell.name.span.end());
                    splice(end, end, &format!(" [{value}]"))
                }
            }
        }
        CellField::Description => match &cell.description {
            Some(description) if value.is_empty() => {
                let start = line_text[..at(description.span.start())]
                    .trim_end_matches([' ', '\t'])
                    .len();
                splice(start, at(description.span.end()), "")
            }
            Some(description) => splice(
                at(description.span.start()),
                at(description.span.end()),
                &format!("\"{}\"", escape_description(value)),
            ),
            None if value.is_empty() => line_text.to_string(),
            None => {
                let end = at(cell.expr.span.end());
                splice(end, end, &format!("  \"{}\"", escape_description(value)))
            }
        },
    }
}

/// The `[` before and one past the `]` after a declared unit written at
/// `start..end` of `line`.
fn bracket_around(line: &str, start: usize, end: usize) -> (usize, usize) {
    let open = line[..start].rfind('[').unwrap_or(start);
    let close = line[end..].find(']').map_or(end, |offset| end + offset + 1);
    (open, close)
}

/// A description as written between quotes: `\` and `"` escaped.
pub fn escape_description(text: &str) -> String {
    text.replace('\\', "\\\\").replace('"', "\\\"")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::syntax::ast::StatementKind;

    fn cell_of(line: &str) -> CellDef {
        match syntax::parse_line(line, 100).0 {
            StatementKind::Cell(cell) => *cell,
            other => panic!("expected a cell, found {other:?}"),
        }
    }

    fn edit(line: &str, field: CellField, value: &str) -> String {
        with_cell_field(&cell_of(line), line, 100, field, value)
    }

    #[test]
    fn a_formula_edit_keeps_the_spacing_description_and_comment() {
        let line = "m_skid = 1850 kg      \"weighed\"   // ticket 4411";
        assert_eq!(
            edit(line, CellField::Formula, "1900 kg"),
            "m_skid = 1900 kg      \"weighed\"   // ticket 4411"
        );
    }

    #[test]
    fn units_are_added_changed_and_removed() {
        assert_eq!(edit("W = m * g0", CellField::Unit, "kN"), "W [kN] = m * g0");
        assert_eq!(
            edit("W [kN] = m * g0", CellField::Unit, "lbf"),
            "W [lbf] = m * g0"
        );
        assert_eq!(edit("W [kN] = m * g0", CellField::Unit, ""), "W = m * g0");
        assert_eq!(
            edit("W    [kN] = m * g0", CellField::Unit, ""),
            "W = m * g0"
        );
    }

    #[test]
    fn descriptions_are_added_escaped_and_removed() {
        assert_eq!(
            edit("x = 2 m", CellField::Description, "the \"long\" side"),
            "x = 2 m  \"the \\\"long\\\" side\""
        );
        assert_eq!(
            edit("x = 2 m \"old\" // c", CellField::Description, "new"),
            "x = 2 m \"new\" // c"
        );
        assert_eq!(
            edit("x = 2 m   \"old\" // c", CellField::Description, ""),
            "x = 2 m // c"
        );
    }

    #[test]
    fn a_rename_changes_only_the_name() {
        assert_eq!(
            edit("x [m] = 2 m", CellField::Name, "span"),
            "span [m] = 2 m"
        );
    }

    #[test]
    fn lines_keep_their_breaks_and_a_missing_final_break() {
        let text = "a = 1\r\nb = 2\n\n// note\nc = 3";
        let parsed = syntax::parse(text);
        let mut document = Document::open(text, parsed.header, &parsed.statements);
        assert_eq!(document.text(), text);
        assert_eq!(document.statement_at_line(4), Some(2));
        assert_eq!(document.statement_at_line(3), None);
        let span = document.append("d = 4");
        document.insert_line(5, span);
        assert_eq!(document.text(), "a = 1\r\nb = 2\n\n// note\nc = 3\r\nd = 4");
        document.remove_line(5);
        assert_eq!(document.text(), text);
    }

    #[test]
    fn a_statement_over_several_lines_is_noticed() {
        let text = "a = 1\nblock\n  inside\nend\n";
        let one_line = syntax::parse(text);
        assert!(!Document::open(text, None, &one_line.statements).has_blocks());
        // A statement spanning lines 2 to 4, as a multi-line block would.
        let block = Statement {
            span: Span::new(6, 22),
            kind: StatementKind::Invalid,
        };
        let document = Document::open(text, None, &[one_line.statements[0].clone(), block]);
        assert!(document.has_blocks());
        assert_eq!(document.statement_line(1), 1);
    }

    #[test]
    fn header_lines_are_not_edited() {
        let text = "+++\ntitle = \"t\"\n+++\nx = 1\n";
        let parsed = syntax::parse(text);
        let document = Document::open(text, parsed.header, &parsed.statements);
        assert_eq!(document.body_start(), 3);
        assert_eq!(
            document.check_edit(1, Some("y")),
            Err(EditError::InHeader { line: 1 })
        );
        assert_eq!(
            document.check_edit(3, Some("a\nb")),
            Err(EditError::LineBreak)
        );
        assert!(document.check_edit(3, Some("x = 2")).is_ok());
    }
}
