//! Editing a sheet's text by lines, for the notebook.
//!
//! The text is the document: every line the user did not touch is kept byte
//! for byte (comments, spacing, order, line endings), and an edit is a
//! [`Splice`]: some consecutive lines as they were, and the lines put in
//! their place (one line for a cell, all of a block's lines, or the `+++`
//! header). A splice keeps both sides with their line breaks, so undoing it
//! gives the text back byte for byte. Spans in the syntax tree are byte
//! offsets into one text, so that an edit never has to shift the spans of the
//! lines after it, the [`Document`] keeps an append-only *arena*: the text as
//! opened, followed by the text of every line written since. A line is a
//! span into the arena; the file's text is the lines joined in order.
//!
//! Hand-written rather than a rope crate: heft needs stable offsets for its
//! syntax tree, not fast edits inside long lines (a line is short).

use std::ops::Range;

use crate::base::{MAX_SOURCE_LEN, Span};
use crate::syntax::ast::{CellDef, Statement};
use crate::syntax::{self, HeaderBlock};

/// The line break after a line.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineEnding {
    /// `\n`
    Lf,
    /// `\r\n`
    CrLf,
}

impl LineEnding {
    /// The bytes of the line break.
    pub fn as_str(self) -> &'static str {
        match self {
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

/// A line as written: its text and the break after it. The last line of a
/// file without a final break still has one here (the file's usual break),
/// so that lines keep their break wherever an edit moves them; the file's
/// text leaves it off (see `Document::text`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WrittenLine {
    /// The text, without its break.
    pub text: String,
    /// The break after it.
    pub ending: LineEnding,
}

/// One edit of the document: the lines `first..first + before.len()` as
/// they were, and the lines that take their place. Applying
/// [`Splice::inverse`] afterwards gives the text back byte for byte.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Splice {
    /// The 0-based line where the change begins.
    pub first: usize,
    /// The lines as they were.
    pub before: Vec<WrittenLine>,
    /// The lines put in their place.
    pub after: Vec<WrittenLine>,
}

impl Splice {
    /// The splice that undoes this one.
    pub fn inverse(&self) -> Splice {
        Splice {
            first: self.first,
            before: self.after.clone(),
            after: self.before.clone(),
        }
    }

    /// Whether it changes nothing.
    pub fn is_empty(&self) -> bool {
        self.before == self.after
    }

    /// The same change without the lines it leaves as they were at its
    /// start and end, so that it names only the lines that change.
    pub fn trimmed(mut self) -> Splice {
        let prefix = self
            .before
            .iter()
            .zip(&self.after)
            .take_while(|(old, new)| old == new)
            .count();
        let suffix = self.before[prefix..]
            .iter()
            .rev()
            .zip(self.after[prefix..].iter().rev())
            .take_while(|(old, new)| old == new)
            .count();
        self.before.truncate(self.before.len() - suffix);
        self.after.truncate(self.after.len() - suffix);
        self.before.drain(..prefix);
        self.after.drain(..prefix);
        self.first += prefix;
        self
    }
}

/// Why an edit was refused. The text stays as it was.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EditError {
    /// There is no such line.
    NoSuchLine {
        /// The 0-based line asked for.
        line: usize,
    },
    /// The line belongs to the `+++` header block, which is edited as a
    /// whole (a splice over its lines), not one line at a time.
    InHeader {
        /// The 0-based line asked for.
        line: usize,
    },
    /// The new text has a line break in it; a line is one line.
    LineBreak,
    /// The cell is not a `name = formula` line of its own (a body's
    /// resultant, a block's unknown or state): edit its line instead.
    NotOwnLine {
        /// The 0-based line of its statement.
        line: usize,
    },
    /// A line is not as the edit expects it (the edit was made for
    /// another state of the text).
    Stale {
        /// The 0-based line that differs.
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
                "line {} is part of the +++ header, which is edited as a whole",
                line + 1
            ),
            EditError::LineBreak => f.write_str("a line cannot hold a line break"),
            EditError::NotOwnLine { line } => write!(
                f,
                "this cell is defined inside the statement on line {}; edit that line",
                line + 1
            ),
            EditError::Stale { line } => write!(
                f,
                "line {} is not as this edit expects; nothing was changed",
                line + 1
            ),
            EditError::TooLarge => f.write_str("the sheet would grow past 4 GiB"),
        }
    }
}

impl std::error::Error for EditError {}

/// Whether a line opens a block (`solve`, `case`, `simulate`), whose lines
/// run to a line `end`: how an editor of the document knows that a line
/// being typed will take the lines after it.
pub fn opens_block(line: &str) -> bool {
    syntax::is_block_head(line)
}

/// A sheet's text as lines, with the arena their spans point into.
#[derive(Clone, Debug)]
pub struct Document {
    arena: String,
    lines: Vec<DocumentLine>,
    /// Whether the last line ends with a break (an empty text counts as
    /// ending with one, so lines added to it get breaks).
    final_break: bool,
    /// The 0-based line of the header's opening `+++`, if there is a header.
    header_start: Option<usize>,
    /// First line after the header block (0 without a header).
    body_start: usize,
    /// Whether a header was opened but never closed (it then runs to the end).
    header_unclosed: bool,
    /// First line a one-line edit may touch: the body, or with an unclosed
    /// header the line after its opening `+++`, so that it can still be closed.
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
        let mut endings = Vec::new();
        let mut start = 0;
        while start < text.len() {
            let (end, ending, next) = match text[start..].find('\n') {
                Some(at) if at > 0 && text.as_bytes()[start + at - 1] == b'\r' => {
                    (start + at - 1, Some(LineEnding::CrLf), start + at + 1)
                }
                Some(at) => (start + at, Some(LineEnding::Lf), start + at + 1),
                None => (text.len(), None, text.len()),
            };
            lines.push(Span::new(start, end));
            endings.push(ending);
            start = next;
        }
        let newline = endings
            .iter()
            .flatten()
            .next()
            .copied()
            .unwrap_or(LineEnding::Lf);
        let final_break = text.is_empty() || text.ends_with('\n');
        let lines: Vec<DocumentLine> = lines
            .into_iter()
            .zip(endings)
            .map(|(text, ending)| DocumentLine {
                text,
                ending: ending.unwrap_or(newline),
            })
            .collect();
        let line_of = |offset: usize| {
            lines
                .partition_point(|line| line.text.start() <= offset)
                .saturating_sub(1)
        };
        let header_start = header.map(|block| line_of(block.span.start()));
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
            final_break,
            header_start,
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

    /// The file's text: every line and its break, in order (the last
    /// line's break left off if the file had none).
    pub fn text(&self) -> String {
        let mut text = String::with_capacity(self.arena.len() - self.unused_bytes);
        for line in &self.lines {
            text.push_str(line.text.text(&self.arena));
            text.push_str(line.ending.as_str());
        }
        if !self.final_break
            && let Some(last) = self.lines.last()
        {
            text.truncate(text.len() - last.ending.as_str().len());
        }
        text
    }

    /// Whether the last line is empty and has no break of its own (a line
    /// just added at the end of a file without a final break): the text
    /// then ends in the break of the line before, which the text read
    /// afresh takes for a final break (`A\n` is one line).
    pub fn ends_in_unbroken_empty_line(&self) -> bool {
        !self.final_break
            && self
                .lines
                .last()
                .is_some_and(|line| line.text.start() == line.text.end())
    }

    /// Puts back the empty last line without a break that
    /// [`Document::ends_in_unbroken_empty_line`] found, after the same text
    /// was read afresh; does nothing unless the text ends in a break.
    pub fn restore_unbroken_empty_line(&mut self) {
        if !self.final_break {
            return;
        }
        let text = self.append("");
        self.lines.push(DocumentLine {
            text,
            ending: self.newline,
        });
        self.final_break = false;
        if self.header_unclosed {
            self.body_start = self.lines.len();
        }
    }

    /// Number of lines.
    pub fn n_lines(&self) -> usize {
        self.lines.len()
    }

    /// The text of 0-based `line`, without its break.
    pub fn line_text(&self, line: usize) -> Option<&str> {
        self.lines.get(line).map(|l| l.text.text(&self.arena))
    }

    /// Where the text of 0-based `line` is in the arena.
    pub fn line_span(&self, line: usize) -> Option<Span> {
        self.lines.get(line).map(|l| l.text)
    }

    /// The lines in `range`, as written.
    pub fn written_lines(&self, range: Range<usize>) -> Vec<WrittenLine> {
        self.lines
            .get(range)
            .unwrap_or_default()
            .iter()
            .map(|line| WrittenLine {
                text: line.text.text(&self.arena).to_string(),
                ending: line.ending,
            })
            .collect()
    }

    /// The first line after the header block.
    pub fn body_start(&self) -> usize {
        self.body_start
    }

    /// The lines of the `+++` header block, from its opening `+++` (to the
    /// end of the text if it is never closed); `None` without a header.
    pub fn header_lines(&self) -> Option<Range<usize>> {
        self.header_start.map(|start| start..self.body_start)
    }

    /// The first line a one-line edit may touch (see [`EditError::InHeader`]).
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

    /// Checks that `n` lines from 0-based `line` exist and lie where a
    /// one-line edit may touch them (after the header).
    pub fn check_body_lines(&self, line: usize, n: usize) -> Result<(), EditError> {
        if line + n > self.lines.len() {
            return Err(EditError::NoSuchLine {
                line: (line + n).saturating_sub(1),
            });
        }
        if line < self.editable_from {
            return Err(EditError::InHeader { line });
        }
        Ok(())
    }

    /// The splice that puts `texts` in place of the `n_old` lines from
    /// 0-based `first` (`n_old` = 0 inserts before `first`), trimmed to the
    /// lines that change. Lines the texts leave as they were at the start
    /// and end keep their breaks; the others take the break of the line
    /// they replace, or the file's usual one.
    pub fn plan(&self, first: usize, n_old: usize, texts: &[&str]) -> Result<Splice, EditError> {
        if first + n_old > self.lines.len() {
            return Err(EditError::NoSuchLine {
                line: (first + n_old).saturating_sub(1).max(first),
            });
        }
        if texts.iter().any(|text| text.contains(['\n', '\r'])) {
            return Err(EditError::LineBreak);
        }
        let before = self.written_lines(first..first + n_old);
        let prefix = before
            .iter()
            .zip(texts)
            .take_while(|(old, new)| old.text == **new)
            .count();
        let suffix = before[prefix..]
            .iter()
            .rev()
            .zip(texts[prefix..].iter().rev())
            .take_while(|(old, new)| old.text == **new)
            .count();
        let after = texts
            .iter()
            .enumerate()
            .map(|(index, text)| {
                let ending = if index < prefix {
                    before[index].ending
                } else if index >= texts.len() - suffix {
                    before[n_old - (texts.len() - index)].ending
                } else if index < n_old - suffix {
                    before[index].ending
                } else {
                    self.newline
                };
                WrittenLine {
                    text: text.to_string(),
                    ending,
                }
            })
            .collect();
        Ok(Splice {
            first,
            before,
            after,
        }
        .trimmed())
    }

    /// Applies `splice` as it stands (its lines and breaks verbatim),
    /// refusing it unless its `before` lines are the document's.
    pub fn apply(&mut self, splice: &Splice) -> Result<(), EditError> {
        let first = splice.first;
        let end = first + splice.before.len();
        if first > self.lines.len() || end > self.lines.len() {
            return Err(EditError::NoSuchLine {
                line: end.saturating_sub(1).max(first),
            });
        }
        for (offset, old) in splice.before.iter().enumerate() {
            let line = self.lines[first + offset];
            if line.text.text(&self.arena) != old.text || line.ending != old.ending {
                return Err(EditError::Stale {
                    line: first + offset,
                });
            }
        }
        if splice
            .after
            .iter()
            .any(|line| line.text.contains(['\n', '\r']))
        {
            return Err(EditError::LineBreak);
        }
        let added: usize = splice.after.iter().map(|line| line.text.len() + 2).sum();
        if self.arena.len() + added >= MAX_SOURCE_LEN {
            return Err(EditError::TooLarge);
        }
        let same_statements =
            splice.before.len() == splice.after.len()
                && splice.before.iter().zip(&splice.after).enumerate().all(
                    |(offset, (old, new))| {
                        self.is_statement(first + offset, &old.text)
                            == self.is_statement(first + offset, &new.text)
                    },
                );
        let new_lines: Vec<DocumentLine> = splice
            .after
            .iter()
            .map(|line| DocumentLine {
                text: self.append(&line.text),
                ending: line.ending,
            })
            .collect();
        let removed: usize = self
            .lines
            .splice(first..end, new_lines)
            .map(|line| line.text.end() - line.text.start())
            .sum();
        self.unused_bytes += removed;
        if !same_statements {
            self.index_statements();
        }
        Ok(())
    }

    /// Writes `text` into the arena and returns its span.
    fn append(&mut self, text: &str) -> Span {
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

    fn document(text: &str) -> Document {
        let parsed = syntax::parse(text);
        Document::open(text, parsed.header, &parsed.statements)
    }

    #[test]
    fn lines_keep_their_breaks_and_a_missing_final_break() {
        let text = "a = 1\r\nb = 2\n\n// note\nc = 3";
        let mut document = document(text);
        assert_eq!(document.text(), text);
        assert_eq!(document.statement_at_line(4), Some(2));
        assert_eq!(document.statement_at_line(3), None);
        let insert = document.plan(5, 0, &["d = 4"]).expect("plan");
        document.apply(&insert).expect("insert");
        // The file's first break (CRLF) is its usual one; the file still
        // ends without a break.
        assert_eq!(document.text(), "a = 1\r\nb = 2\n\n// note\nc = 3\r\nd = 4");
        document.apply(&insert.inverse()).expect("undo");
        assert_eq!(document.text(), text);
        // Removing the last line and putting it back is exact too.
        let remove = document.plan(4, 1, &[]).expect("plan");
        document.apply(&remove).expect("remove");
        assert_eq!(document.text(), "a = 1\r\nb = 2\n\n// note");
        document.apply(&remove.inverse()).expect("undo");
        assert_eq!(document.text(), text);
    }

    #[test]
    fn a_splice_names_only_the_lines_that_change_and_keeps_their_breaks() {
        let text = "solve x ~ 1:\r\n  x = 2\n  // why\r\nend\n";
        let mut document = document(text);
        let splice = document
            .plan(
                0,
                4,
                &["solve x ~ 1:", "  x = 3", "  x2 = 1", "  // why", "end"],
            )
            .expect("plan");
        assert_eq!(splice.first, 1);
        assert_eq!(splice.before.len(), 1);
        assert_eq!(splice.after.len(), 2);
        document.apply(&splice).expect("apply");
        assert_eq!(
            document.text(),
            "solve x ~ 1:\r\n  x = 3\n  x2 = 1\r\n  // why\r\nend\n"
        );
        // Applied twice, the second is refused: its lines are gone.
        assert_eq!(document.apply(&splice), Err(EditError::Stale { line: 1 }));
        document.apply(&splice.inverse()).expect("undo");
        assert_eq!(document.text(), text);
        assert_eq!(document.plan(0, 1, &["a\nb"]), Err(EditError::LineBreak));
        assert!(document.plan(3, 2, &[]).is_err());
        assert!(document.plan(0, 0, &[]).expect("plan").is_empty());
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
    fn header_lines_are_not_edited_one_at_a_time_and_are_found_whole() {
        let text = "// job 12\n+++\ntitle = \"t\"\n+++\nx = 1\n";
        let document = document(text);
        assert_eq!(document.body_start(), 4);
        assert_eq!(document.header_lines(), Some(1..4));
        assert_eq!(
            document.check_body_lines(2, 1),
            Err(EditError::InHeader { line: 2 })
        );
        assert!(document.check_body_lines(4, 1).is_ok());
        assert_eq!(
            document.check_body_lines(4, 2),
            Err(EditError::NoSuchLine { line: 5 })
        );
        assert_eq!(Document::open("x = 1\n", None, &[]).header_lines(), None);
    }
}
