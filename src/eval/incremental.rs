//! Incremental evaluation: a sheet that is edited line by line and
//! recomputes only what an edit affects.
//!
//! [`LiveSheet`] owns the [`Document`] (the text), the linked [`Sheet`] and
//! every result. An edit that keeps a cell a cell of the same name, whose
//! new formula uses only cells evaluated before it, re-resolves that one
//! formula and re-evaluates the cell and everything downstream of it (found
//! through reverse dependency edges, in the existing dependency order), and
//! the checks that use them. Edits between headings, notes and broken lines
//! evaluate nothing; a check edit evaluates that check. Anything else (a
//! rename, a cell added or removed, a new dependency that breaks the order)
//! relinks the sheet and evaluates it whole. Both paths run the same
//! evaluator, and `tests/live.rs` checks that an edited sheet always ends up
//! exactly where evaluating its text from scratch does.

use super::{CellResult, CellStatus, CheckResult, Evaluator, Spread};
use crate::base::{Code, Diagnostic, Severity};
use crate::base::{LineIndex, Span};
use crate::sheet::edit::{self, Document};
use crate::sheet::{
    CellId, CellOrigin, Header, Item, MAX_SUGGESTIONS, Node, Sheet, read_header, resolve_names,
};
use crate::syntax;
use crate::syntax::ast::{
    BinaryOp, CellDef, CheckDef, Expr, ExprKind, Statement, StatementKind, Target,
};
use crate::units::{self, DisplaySystem, DisplayUnit, Value, pick_unit};

pub use crate::sheet::edit::{CellField, EditError, FieldEditor, LineEnding, Splice, WrittenLine};

/// One finding, placed by line and column of the file as it is now.
#[derive(Clone, Debug, PartialEq)]
pub struct Finding {
    /// Error, warning or info.
    pub severity: Severity,
    /// The stable code.
    pub code: Code,
    /// 1-based line.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
    /// What is wrong.
    pub message: String,
    /// The suggested fix.
    pub help: Option<String>,
    /// The statement it belongs to (none for the header).
    pub statement: Option<usize>,
}

/// What one statement of the sheet is, for presentation.
// Rows are built one at a time for the rows on screen and never stored in
// bulk, so the large cell variant costs nothing worth boxing for.
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Copy, Debug)]
pub enum Row<'a> {
    /// `# Heading` (level 1) or `## Sub-heading` (level 2).
    Heading {
        /// Number of `#` marks.
        level: u8,
        /// The heading text.
        text: &'a str,
    },
    /// `> A note`.
    Note {
        /// The note text.
        text: &'a str,
    },
    /// A cell.
    Cell(CellResult<'a>),
    /// A check, with its index.
    Check(usize, &'a CheckResult),
    /// A solve, simulate or load-case block, by its first line; its cells
    /// are in [`LiveSheet::block_cells`].
    Block {
        /// The block's first line as written.
        head: &'a str,
    },
    /// A review mark or sign-off line, as written.
    Review {
        /// The line as written.
        text: &'a str,
    },
    /// A line that does not parse, as written.
    Invalid {
        /// The line as written.
        text: &'a str,
    },
}

/// A sheet being edited: its text, its linked model and every result, kept
/// current edit by edit.
#[derive(Debug)]
pub struct LiveSheet {
    document: Document,
    sheet: Sheet,
    /// Findings in the header block (they never change while editing).
    header_diagnostics: Vec<Diagnostic>,
    /// Line index of the text as opened, to place header findings.
    opened_lines: LineIndex,
    /// The parse error of each statement, if any.
    parse_diagnostics: Vec<Option<Diagnostic>>,
    values: Vec<Option<Value>>,
    statuses: Vec<CellStatus>,
    spreads: Vec<Option<Spread>>,
    displays: Vec<DisplayUnit>,
    inputs: Vec<bool>,
    cell_findings: Vec<Vec<Diagnostic>>,
    checks: Vec<CheckResult>,
    check_findings: Vec<Vec<Diagnostic>>,
    /// Findings of blocks, tolerances and load cases (placed by their spans).
    block_findings: Vec<Diagnostic>,
    /// Ranges, load cases and governing cases of the last whole evaluation.
    judgement: super::SheetJudgement,
    /// Whether every edit must evaluate the whole sheet: it has blocks,
    /// tolerances or load cases, whose results depend on the whole sheet.
    whole_sheet_only: bool,
    /// For each cell, the cells that use it.
    dependents: Vec<Vec<CellId>>,
    /// For each cell, the checks that use it.
    check_dependents: Vec<Vec<usize>>,
    /// Position of each cell in the evaluation order.
    rank: Vec<u32>,
    /// Statements in presentation order (cells in dependency order, each
    /// heading, note and broken line just before the cell that follows it).
    rows: Vec<u32>,
    /// Position of each statement in `rows`.
    row_positions: Vec<u32>,
    /// Visit marks for the downstream walk (compared with `visit_stamp`).
    visited: Vec<u32>,
    visited_checks: Vec<u32>,
    visit_stamp: u32,
    /// Cells evaluated by the last edit.
    last_evaluated: usize,
    /// The revision of the text: a new one, unique in the process, after
    /// every edit and for every sheet opened.
    revision: u64,
    /// The lint findings of the text at this revision (none until they are
    /// put in with [`LiveSheet::set_lints`]; every edit drops them).
    lints: Vec<Finding>,
    /// The verified help of each evaluation finding that offers a fix, by
    /// (line, column, code), for the text at this revision (put in with
    /// [`LiveSheet::set_fix_helps`]; every edit drops them). Until then such
    /// a finding shows only its plain advice, never an unchecked fix.
    fix_helps: Vec<(usize, usize, Code, Option<String>)>,
}

/// A revision number not given before in this process.
fn next_revision() -> u64 {
    static NEXT: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(1);
    NEXT.fetch_add(1, std::sync::atomic::Ordering::Relaxed)
}

/// Past this many unused arena bytes (and more than the text itself), the
/// arena is rebuilt from the text.
const COMPACT_AFTER_BYTES: usize = 1 << 24;

impl LiveSheet {
    /// Parses, links and evaluates `text`.
    pub fn open(text: &str) -> LiveSheet {
        let syntax::ParsedSheet {
            header,
            statements,
            diagnostics,
        } = syntax::parse(text);
        let document = Document::open(text, header, &statements);
        // Each parse error belongs to the statement it lies in; the rest to
        // the header (and to the sheet as a whole: a second finding in one
        // statement, such as a CR-only file's, is kept there, not dropped).
        let mut parse_diagnostics = vec![None; statements.len()];
        let mut header_diagnostics = Vec::new();
        for diagnostic in diagnostics {
            let index = statements.partition_point(|s| s.span.start() <= diagnostic.span.start());
            match index.checked_sub(1) {
                Some(index)
                    if parse_diagnostics[index].is_none()
                        && diagnostic.span.start() <= statements[index].span.end()
                        && header
                            .is_none_or(|block| diagnostic.span.start() >= block.span.end()) =>
                {
                    parse_diagnostics[index] = Some(diagnostic)
                }
                _ => header_diagnostics.push(diagnostic),
            }
        }
        let header = read_header(text, header, &mut header_diagnostics);
        let mut live = LiveSheet {
            opened_lines: LineIndex::new(text),
            document,
            sheet: Sheet::link(Header::default(), Vec::new(), Vec::new()),
            header_diagnostics,
            parse_diagnostics,
            values: Vec::new(),
            statuses: Vec::new(),
            spreads: Vec::new(),
            displays: Vec::new(),
            inputs: Vec::new(),
            cell_findings: Vec::new(),
            checks: Vec::new(),
            check_findings: Vec::new(),
            block_findings: Vec::new(),
            judgement: super::SheetJudgement::default(),
            whole_sheet_only: false,
            dependents: Vec::new(),
            check_dependents: Vec::new(),
            rank: Vec::new(),
            rows: Vec::new(),
            row_positions: Vec::new(),
            visited: Vec::new(),
            visited_checks: Vec::new(),
            visit_stamp: 0,
            last_evaluated: 0,
            revision: next_revision(),
            lints: Vec::new(),
            fix_helps: Vec::new(),
        };
        live.sheet.header = header;
        live.relink(statements);
        live
    }

    // ----- reading -----

    /// The file's text as it is now.
    pub fn text(&self) -> String {
        self.document.text()
    }

    /// The document (lines and the arena spans point into).
    pub fn document(&self) -> &Document {
        &self.document
    }

    /// The linked sheet.
    pub fn sheet(&self) -> &Sheet {
        &self.sheet
    }

    /// The header (title block and display settings).
    pub fn header(&self) -> &Header {
        &self.sheet.header
    }

    /// Number of cells.
    pub fn n_cells(&self) -> usize {
        self.sheet.cells.len()
    }

    /// Number of statements.
    pub fn n_statements(&self) -> usize {
        self.sheet.statements.len()
    }

    /// Statements in presentation order: cells in dependency order, each
    /// heading, note and broken line just before the cell that follows it
    /// in the file, checks and trailing lines where they stand.
    pub fn rows(&self) -> &[u32] {
        &self.rows
    }

    /// Where statement `index` is in [`LiveSheet::rows`].
    pub fn row_position(&self, index: usize) -> Option<usize> {
        self.row_positions
            .get(index)
            .map(|&position| position as usize)
    }

    /// An editor for one field of cell `id` (see [`FieldEditor`]); `None`
    /// for a cell not written as `name = formula` on a line of its own (a
    /// body's resultant, a block's unknown or state), whose line is edited
    /// whole.
    pub fn field_editor(&self, id: CellId, field: CellField) -> Option<FieldEditor> {
        let cell = self.own_line_cell(id)?;
        let span = self.sheet.cell_span(id);
        Some(FieldEditor::new(
            cell,
            span.text(self.document.arena()),
            span.start(),
            field,
        ))
    }

    /// The definition of cell `id` if it is a cell statement of its own.
    fn own_line_cell(&self, id: CellId) -> Option<&CellDef> {
        match &self.sheet.statements[self.sheet.cell_statement(id)].kind {
            StatementKind::Cell(cell) => Some(cell),
            _ => None,
        }
    }

    /// The cells a block statement gives (a solve block's unknowns, a
    /// simulate block's time and states), in written order.
    pub fn block_cells(&self, statement: usize) -> Vec<CellId> {
        (0..self.sheet.cells.len())
            .filter(|&id| match self.sheet.cells[id] {
                CellOrigin::Unknown { statement: s, .. }
                | CellOrigin::Simulated { statement: s, .. } => s == statement,
                CellOrigin::Formula { .. } => false,
            })
            .collect()
    }

    /// What statement `index` is, with its results.
    pub fn row(&self, index: usize) -> Row<'_> {
        match self.sheet.items[index] {
            Item::Cell(id) => Row::Cell(self.cell(id)),
            Item::Check(check) => Row::Check(check, &self.checks[check]),
            Item::Review(index) => Row::Review {
                text: self.statement_text(index),
            },
            Item::Solve(index) | Item::Case(index) | Item::Simulate(index) => Row::Block {
                head: self.statement_text(index).lines().next().unwrap_or(""),
            },
            Item::Heading(_) | Item::Note(_) | Item::Invalid(_) => {
                match &self.sheet.statements[index].kind {
                    StatementKind::Heading { level, text } => Row::Heading {
                        level: *level,
                        text,
                    },
                    StatementKind::Note { text } => Row::Note { text },
                    _ => Row::Invalid {
                        text: self.statement_text(index),
                    },
                }
            }
        }
    }

    /// The text of statement `index` as written.
    pub fn statement_text(&self, index: usize) -> &str {
        self.sheet.statements[index]
            .span
            .text(self.document.arena())
    }

    /// The 0-based line of statement `index`.
    pub fn statement_line(&self, index: usize) -> usize {
        self.document.statement_line(index)
    }

    /// The statement on 0-based `line`, if any.
    pub fn statement_at_line(&self, line: usize) -> Option<usize> {
        self.document.statement_at_line(line)
    }

    /// The statement that defines cell `id`.
    pub fn cell_statement(&self, id: CellId) -> usize {
        self.sheet.cell_statement(id)
    }

    /// The statement of check `index`.
    pub fn check_statement(&self, index: usize) -> usize {
        self.sheet.checks[index]
    }

    /// The 0-based line of cell `id`'s name (inside its block for a block's
    /// cell; a block's lines are contiguous in the arena, as blocks are
    /// always read whole).
    fn name_line(&self, id: CellId) -> usize {
        let statement = self.sheet.cell_statement(id);
        let start = self.sheet.statements[statement].span.start();
        let name = self.sheet.cell(id).name.span.start().max(start);
        let lines_before = Span::new(start, name)
            .text(self.document.arena())
            .matches('\n')
            .count();
        self.statement_line(statement) + lines_before
    }

    /// Cell `id` with its results.
    pub fn cell(&self, id: CellId) -> CellResult<'_> {
        let cell = self.sheet.cell(id);
        let arena = self.document.arena();
        CellResult {
            id,
            name: &cell.name.text,
            span: self.sheet.cell_span(id),
            line: self.name_line(id) + 1,
            formula: super::model::formula_text(&self.sheet, id, arena),
            description: cell.description.as_ref().map(|d| d.text.as_str()),
            declared_unit: cell.unit.is_some(),
            is_input: self.inputs[id],
            display: &self.displays[id],
            value: self.values[id].and_then(|value| value.scalar()),
            vector: self.values[id].and_then(|value| value.vector()),
            status: self.statuses[id],
            uses: &self.sheet.uses[id],
            solved_by: None,
            spread: self.spreads[id],
        }
    }

    /// The cell named `name`.
    pub fn cell_named(&self, name: &str) -> Option<CellId> {
        self.sheet.names.get(name).copied()
    }

    /// Check `index` with its result.
    pub fn check(&self, index: usize) -> &CheckResult {
        &self.checks[index]
    }

    /// Number of checks.
    pub fn n_checks(&self) -> usize {
        self.checks.len()
    }

    /// The cells that use cell `id`.
    pub fn dependents(&self, id: CellId) -> &[CellId] {
        &self.dependents[id]
    }

    /// The checks that use cell `id`.
    pub fn check_dependents(&self, id: CellId) -> &[usize] {
        &self.check_dependents[id]
    }

    /// The cells check `index` uses.
    pub fn check_uses(&self, index: usize) -> &[CellId] {
        &self.sheet.check_uses[index]
    }

    /// Cells evaluated by the last edit (the whole sheet after a relink).
    pub fn last_evaluated(&self) -> usize {
        self.last_evaluated
    }

    /// The current text of one field of cell `id`.
    pub fn cell_field(&self, id: CellId, field: CellField) -> String {
        let arena = self.document.arena();
        if let Some(cell) = self.own_line_cell(id) {
            let span = self.sheet.cell_span(id);
            return edit::cell_field_text(cell, span.text(arena), span.start(), field);
        }
        let cell = self.sheet.cell(id);
        match field {
            CellField::Name => cell.name.text.to_string(),
            CellField::Unit => cell
                .unit
                .map_or(String::new(), |unit| unit.span.text(arena).to_string()),
            CellField::Formula => cell
                .expr
                .map_or(String::new(), |expr| expr.span.text(arena).to_string()),
            CellField::Description => cell
                .description
                .map_or(String::new(), |description| description.text.clone()),
        }
    }

    /// The unit cell `id` is shown in: its own display unit, or with
    /// `system`, the readable unit of that system for its value.
    pub fn display_unit(&self, id: CellId, system: Option<DisplaySystem>) -> DisplayUnit {
        match (system, self.values[id]) {
            (Some(system), Some(value)) => {
                pick_unit(value.dimension(), value.magnitude_si(), system)
            }
            _ => self.displays[id].clone(),
        }
    }

    /// Cell `id`'s formula with every name replaced by its value, shown in
    /// `system` (or each cell's own unit) to `sig_figs` digits:
    /// `m_tot * (g0 + a_up)` reads `(1892 kg) * (9.807 m/s^2 + 0.35 m/s^2)`.
    pub fn substituted_formula(
        &self,
        id: CellId,
        system: Option<DisplaySystem>,
        sig_figs: u32,
    ) -> String {
        let Some(formula) = self.sheet.cell(id).expr else {
            return String::new();
        };
        let formula_span = formula.span;
        let arena = self.document.arena();
        let mut replacements = Vec::new();
        collect_names(formula, None, &mut replacements);
        let mut text = String::new();
        let mut position = formula_span.start();
        for (expr, parent) in replacements {
            let ExprKind::Name(name) = &expr.kind else {
                continue;
            };
            let (value, unit) = match name.target {
                // A broken cell may keep a stale target: trust it only if the name matches.
                Target::Cell(used)
                    if used < self.n_cells() && self.sheet.cell(used).name.text == *name.text =>
                {
                    (self.values[used], Some(self.display_unit(used, system)))
                }
                Target::Constant(index) => {
                    let value = units::CONSTANTS.get(index).map(|constant| constant.value);
                    let system = system.unwrap_or(self.sheet.header.display);
                    (
                        value.map(Value::Scalar),
                        value.map(|v| pick_unit(v.dimension, v.si, system)),
                    )
                }
                _ => (None, None),
            };
            text.push_str(Span::new(position, expr.span.start()).text(arena));
            match (value, unit) {
                (Some(value), Some(unit)) => {
                    let shown = super::format_value(value, &unit, sig_figs);
                    let has_unit = !unit.text.is_empty();
                    let negative = value.scalar().is_some_and(|q| q.si < 0.0);
                    let needs_brackets = negative
                        || parent == Some(Parent::Power)
                        || (has_unit
                            && matches!(
                                parent,
                                Some(Parent::Multiply | Parent::Divide | Parent::Negate)
                            ));
                    if needs_brackets {
                        text.push('(');
                        text.push_str(&shown);
                        text.push(')');
                    } else {
                        text.push_str(&shown);
                    }
                }
                _ => text.push('?'),
            }
            position = expr.span.end();
        }
        text.push_str(Span::new(position, formula_span.end()).text(arena));
        text
    }

    /// Every finding, by line and column.
    pub fn findings(&self) -> Vec<Finding> {
        let mut by_start: Vec<(usize, usize, usize)> = self
            .sheet
            .statements
            .iter()
            .enumerate()
            .map(|(index, statement)| (statement.span.start(), statement.span.end(), index))
            .collect();
        by_start.sort_unstable();
        let statement_of = |span: Span| {
            let index = by_start.partition_point(|entry| entry.0 <= span.start());
            index
                .checked_sub(1)
                .map(|index| by_start[index])
                .filter(|&(_, end, _)| span.start() <= end)
                .map(|(_, _, statement)| statement)
        };
        let mut findings: Vec<Finding> = self
            .all_diagnostics()
            .map(|diagnostic| {
                let statement = if self.header_diagnostics.contains(diagnostic) {
                    None
                } else {
                    statement_of(diagnostic.span)
                };
                self.finding(diagnostic, statement)
            })
            .collect();
        findings.extend(self.lints.iter().cloned());
        findings.sort_by(|a, b| {
            (a.line, a.column, a.code, &a.message).cmp(&(b.line, b.column, b.code, &b.message))
        });
        findings
    }

    /// The findings that lie in statement `index`.
    /// Also those placed elsewhere that point a label here (the other
    /// members of a loop, the first of two cells of one name).
    pub fn statement_findings(&self, index: usize) -> Vec<Finding> {
        let span = self.sheet.statements[index].span;
        let mut findings: Vec<Finding> = self
            .statement_diagnostics(index)
            .filter_map(|d| {
                if within(d.span, span) {
                    Some(self.finding(d, Some(index)))
                } else if d.labels.iter().any(|label| within(label.span, span)) {
                    let owner = self
                        .sheet
                        .statements
                        .iter()
                        .position(|statement| within(d.span, statement.span));
                    Some(self.finding(d, owner))
                } else {
                    None
                }
            })
            .collect();
        findings.extend(self.statement_lints(index).cloned());
        findings.sort_by_key(|finding| (finding.line, finding.column));
        findings
    }

    /// The most serious finding in statement `index`, if any.
    pub fn statement_severity(&self, index: usize) -> Option<Severity> {
        let span = self.sheet.statements[index].span;
        self.statement_diagnostics(index)
            .filter(|d| span.start() <= d.span.start() && d.span.start() <= span.end())
            .map(|diagnostic| diagnostic.severity)
            .chain(self.statement_lints(index).map(|finding| finding.severity))
            .max()
    }

    /// Number of findings in the whole sheet.
    pub fn n_findings(&self) -> usize {
        self.all_diagnostics().count() + self.lints.len()
    }

    /// The counts the status line shows, from the same function as every
    /// other presentation.
    pub fn summary(&self) -> super::Summary {
        super::Summary::of(
            self.sheet.cells.len(),
            &self.checks,
            self.all_diagnostics()
                .map(|d| d.severity)
                .chain(self.lints.iter().map(|f| f.severity)),
        )
    }

    /// Ranges over the tolerances, load cases and governing cases, as the
    /// whole-sheet evaluation gives them (empty for a sheet with neither
    /// tolerances nor cases).
    pub fn judgement(&self) -> &super::SheetJudgement {
        &self.judgement
    }

    /// Number of findings of `severity` in the whole sheet.
    pub fn count(&self, severity: Severity) -> usize {
        let lints = self.lints.iter().filter(|f| f.severity == severity);
        self.all_diagnostics()
            .filter(|diagnostic| diagnostic.severity == severity)
            .count()
            + lints.count()
    }

    /// Diagnostics that may lie in statement `index`: the sheet's (parse and
    /// link) and those of its own evaluation.
    fn statement_diagnostics(&self, index: usize) -> impl Iterator<Item = &Diagnostic> {
        let own: &[Diagnostic] = match self.sheet.items[index] {
            Item::Cell(id) => &self.cell_findings[id],
            Item::Check(check) => &self.check_findings[check],
            _ => &[],
        };
        self.sheet
            .diagnostics
            .iter()
            .chain(own)
            .chain(&self.block_findings)
    }

    fn all_diagnostics(&self) -> impl Iterator<Item = &Diagnostic> {
        self.sheet
            .diagnostics
            .iter()
            .chain(self.cell_findings.iter().flatten())
            .chain(self.check_findings.iter().flatten())
            .chain(&self.block_findings)
    }

    fn finding(&self, diagnostic: &Diagnostic, statement: Option<usize>) -> Finding {
        let arena = self.document.arena();
        let (line, column) = match statement {
            Some(index) => {
                // A block's lines are contiguous in the arena (blocks are
                // always read whole), so its line breaks count its lines.
                let start = self.sheet.statements[index].span.start();
                let before = Span::new(start, diagnostic.span.start().max(start)).text(arena);
                let lines_before = before.matches('\n').count();
                let column = before.rsplit('\n').next().unwrap_or(before).chars().count();
                (self.statement_line(index) + 1 + lines_before, column + 1)
            }
            None => {
                let place = self
                    .opened_lines
                    .line_column(arena, diagnostic.span.start());
                (place.line, place.column)
            }
        };
        let help = if diagnostic.fixes.is_empty() {
            diagnostic.help.clone()
        } else {
            self.fix_helps
                .iter()
                .find(|(at_line, at_column, code, _)| {
                    (*at_line, *at_column, *code) == (line, column, diagnostic.code)
                })
                .map_or_else(|| diagnostic.help.clone(), |(.., help)| help.clone())
        };
        Finding {
            severity: diagnostic.severity,
            code: diagnostic.code,
            line,
            column,
            message: diagnostic.message.clone(),
            help,
            statement,
        }
    }

    // ----- editing -----

    /// Replaces one field of cell `id` (see [`CellField`]); the rest of its
    /// line is kept as written.
    pub fn set_cell_field(
        &mut self,
        id: CellId,
        field: CellField,
        value: &str,
    ) -> Result<(), EditError> {
        let statement = self.sheet.cell_statement(id);
        let span = self.sheet.cell_span(id);
        let Some(cell) = self.own_line_cell(id) else {
            return Err(EditError::NotOwnLine {
                line: self.statement_line(statement),
            });
        };
        let line_text = edit::with_cell_field(
            cell,
            span.text(self.document.arena()),
            span.start(),
            field,
            value,
        );
        self.replace_line(self.statement_line(statement), &line_text)
    }

    /// Replaces the text of 0-based `line` (a body line).
    pub fn replace_line(&mut self, line: usize, text: &str) -> Result<(), EditError> {
        self.document.check_body_lines(line, 1)?;
        let splice = self.document.plan(line, 1, &[text])?;
        self.apply(&splice)
    }

    /// Inserts `text` as a new line before 0-based `at` (at the end when
    /// `at` is the number of lines).
    pub fn insert_line(&mut self, at: usize, text: &str) -> Result<(), EditError> {
        self.document.check_body_lines(at, 0)?;
        let splice = self.document.plan(at, 0, &[text])?;
        self.apply(&splice)
    }

    /// Removes 0-based `line` (a body line).
    pub fn remove_line(&mut self, line: usize) -> Result<(), EditError> {
        self.document.check_body_lines(line, 1)?;
        let splice = self.document.plan(line, 1, &[])?;
        self.apply(&splice)
    }

    /// Applies `splice` (made with [`Document::plan`], or the inverse of
    /// one applied before): any lines, a block's or the header's included.
    /// A change of one statement line among one-line statements is
    /// evaluated incrementally; a change that touches the header, a
    /// block's first or `end` line, or a sheet with blocks reads the whole
    /// text again.
    pub fn apply(&mut self, splice: &Splice) -> Result<(), EditError> {
        if splice.is_empty() {
            return Ok(());
        }
        let first = splice.first;
        let touches_header = first < self.document.body_start() || self.document.header_unclosed();
        let n_removed = splice
            .before
            .iter()
            .enumerate()
            .filter(|(offset, line)| self.document.is_statement(first + offset, &line.text))
            .count();
        let index = self.document.statements_before(first);
        self.document.apply(splice)?;
        self.begin_edit();
        let regroups = splice.before.iter().chain(&splice.after).any(|line| {
            syntax::is_block_line(&line.text) || syntax::is_header_delimiter(&line.text)
        });
        if touches_header || regroups || self.needs_reopen() {
            self.reopen();
            return Ok(());
        }
        let mut added = Vec::new();
        for (offset, line) in splice.after.iter().enumerate() {
            if !self.document.is_statement(first + offset, &line.text) {
                continue;
            }
            let Some(span) = self.document.line_span(first + offset) else {
                continue;
            };
            let (kind, diagnostic) = syntax::parse_line(&line.text, span.start());
            added.push((Statement { span, kind }, diagnostic));
        }
        match (n_removed, added.len()) {
            (0, 0) => {}
            (1, 1) if splice.before.len() == 1 && splice.after.len() == 1 => {
                if let Some((statement, diagnostic)) = added.pop() {
                    self.replace_statement(index, statement, diagnostic);
                }
            }
            _ => {
                let mut statements = std::mem::take(&mut self.sheet.statements);
                let (new_statements, new_diagnostics): (Vec<_>, Vec<_>) = added.into_iter().unzip();
                statements.splice(index..index + n_removed, new_statements);
                self.parse_diagnostics
                    .splice(index..index + n_removed, new_diagnostics);
                self.relink(statements);
            }
        }
        self.compact_if_worthwhile();
        Ok(())
    }

    /// The 0-based lines of statement `index`: one line, or a block's
    /// lines from its first to its `end` (blank and comment lines between
    /// included).
    pub fn statement_lines(&self, index: usize) -> std::ops::Range<usize> {
        let first = self.statement_line(index);
        first..first + self.statement_text(index).matches('\n').count() + 1
    }

    /// Rebuilds the arena from the text (every span is then fresh). The
    /// text is unchanged, so its lint findings stay.
    pub fn compact(&mut self) {
        let lints = std::mem::take(&mut self.lints);
        let fix_helps = std::mem::take(&mut self.fix_helps);
        self.reopen();
        self.lints = lints;
        self.fix_helps = fix_helps;
    }

    /// Starts an edit: a new revision, whose lint findings are not known yet.
    fn begin_edit(&mut self) {
        self.last_evaluated = 0;
        self.revision = next_revision();
        self.lints.clear();
        self.fix_helps.clear();
    }

    /// The revision of the text, unique in the process: answers about an
    /// older text (or another sheet's) are told apart by it.
    pub fn revision(&self) -> u64 {
        self.revision
    }

    /// Puts in the lint findings (`audit::lint` over a fresh evaluation) of
    /// `text`, the text at `revision`. Findings of an older revision are
    /// dropped, since lines may have moved; returns whether they were taken.
    pub fn set_lints(&mut self, revision: u64, text: &str, lints: &[Diagnostic]) -> bool {
        if revision != self.revision {
            return false;
        }
        let lines = LineIndex::new(text);
        self.lints = lints
            .iter()
            .map(|diagnostic| {
                let place = lines.line_column(text, diagnostic.span.start());
                let line = place.line - 1;
                let statement = self
                    .document
                    .statement_at_line(line)
                    .or_else(|| self.document.statements_before(line + 1).checked_sub(1));
                Finding {
                    severity: diagnostic.severity,
                    code: diagnostic.code,
                    line: place.line,
                    column: place.column,
                    message: diagnostic.message.clone(),
                    help: diagnostic.help.clone(),
                    statement,
                }
            })
            .collect();
        true
    }

    /// Puts in the verified help of the evaluation findings of `text` (the
    /// text at `revision`) that offer a fix, as [`crate::pipeline::lint`]
    /// gives them; returns whether they were taken.
    pub fn set_fix_helps(&mut self, revision: u64, text: &str, findings: &[Diagnostic]) -> bool {
        if revision != self.revision {
            return false;
        }
        let lines = LineIndex::new(text);
        self.fix_helps = findings
            .iter()
            .map(|diagnostic| {
                let place = lines.line_column(text, diagnostic.span.start());
                (
                    place.line,
                    place.column,
                    diagnostic.code,
                    diagnostic.help.clone(),
                )
            })
            .collect();
        true
    }

    /// The lint findings in statement `index`.
    fn statement_lints(&self, index: usize) -> impl Iterator<Item = &Finding> {
        self.lints
            .iter()
            .filter(move |finding| finding.statement == Some(index))
    }

    fn compact_if_worthwhile(&mut self) {
        let unused = self.document.unused_bytes();
        if unused > COMPACT_AFTER_BYTES && unused > self.document.arena().len() / 2 {
            self.compact();
        }
    }

    /// Whether the text must be read again: the header's extent may have
    /// changed, or statements span several lines (blocks), which the
    /// line-by-line paths do not handle. An edit that writes a block's
    /// first or `end` line reads it again too.
    fn needs_reopen(&self) -> bool {
        self.document.header_unclosed()
            || self.document.first_statement_opens_header()
            || self.document.has_blocks()
    }

    fn reopen(&mut self) {
        let text = self.document.text();
        let revision = self.revision;
        *self = LiveSheet::open(&text);
        self.revision = revision;
    }

    /// Puts `statement` in place of statement `index`, recomputing as little
    /// as the change allows.
    fn replace_statement(
        &mut self,
        index: usize,
        mut statement: Statement,
        parse_diagnostic: Option<Diagnostic>,
    ) {
        let old_span = self.sheet.statements[index].span;
        let item = self.sheet.items[index];
        let old_is_inert = matches!(item, Item::Heading(_) | Item::Note(_) | Item::Invalid(_));
        let change = match (item, &mut statement.kind) {
            (_, StatementKind::Heading { .. }) if old_is_inert => {
                self.sheet.items[index] = Item::Heading(index);
                Change::Inert
            }
            (_, StatementKind::Note { .. }) if old_is_inert => {
                self.sheet.items[index] = Item::Note(index);
                Change::Inert
            }
            (_, StatementKind::Invalid) if old_is_inert => {
                self.sheet.items[index] = Item::Invalid(index);
                Change::Inert
            }
            (Item::Cell(id), StatementKind::Cell(new))
                if self.sheet.cell(id).name.text == new.name.text =>
            {
                self.update_cell(id, old_span, new, parse_diagnostic.as_ref())
            }
            (Item::Check(check), StatementKind::Check(new)) => {
                self.update_check(check, old_span, new, parse_diagnostic.as_ref())
            }
            _ => Change::Relink,
        };
        if let Change::Inert = change {
            self.swap_statement_diagnostics(old_span, parse_diagnostic.iter().cloned());
        }
        self.parse_diagnostics[index] = parse_diagnostic;
        match change {
            Change::Relink => {
                let mut statements = std::mem::take(&mut self.sheet.statements);
                statements[index] = statement;
                self.relink(statements);
            }
            Change::Inert => self.sheet.statements[index] = statement,
            Change::Cell(id) => {
                self.sheet.statements[index] = statement;
                self.recompute(&[id], &[]);
            }
            Change::Check(check) => {
                self.sheet.statements[index] = statement;
                self.recompute(&[], &[check]);
            }
        }
    }

    /// Removes the sheet diagnostics that lie in `old_span` and adds `new`.
    fn swap_statement_diagnostics(
        &mut self,
        old_span: Span,
        new: impl Iterator<Item = Diagnostic>,
    ) {
        self.sheet.diagnostics.retain(|d| !within(d.span, old_span));
        self.sheet.diagnostics.extend(new);
    }

    /// Whether the undefined names of an edited statement get the same
    /// did-you-mean here as a full link would give them (it gives one to the
    /// first few undefined names only).
    fn undefined_names_fit(&self, old_span: Span, new_undefined: usize) -> bool {
        if new_undefined == 0 {
            return true;
        }
        let existing = self
            .sheet
            .diagnostics
            .iter()
            .filter(|d| d.code == Code::UndefinedName && !within(d.span, old_span))
            .count();
        existing + new_undefined <= MAX_SUGGESTIONS
    }

    /// Resolves the names of one edited line's `exprs`: the cells they use,
    /// the line's diagnostics (its parse diagnostic first) and whether every
    /// name was defined; `None` when the line's undefined names would
    /// overrun the sheet's did-you-mean budget, so only a relink is right.
    fn resolve_line<'e>(
        &self,
        exprs: impl IntoIterator<Item = &'e mut Expr>,
        old_span: Span,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Option<(Vec<CellId>, Vec<Diagnostic>, bool)> {
        let mut uses = Vec::new();
        let mut diagnostics: Vec<Diagnostic> = parse_diagnostic.into_iter().cloned().collect();
        let before = diagnostics.len();
        // `undefined_names_fit` checks the sheet's did-you-mean budget after.
        let mut suggestions_left = MAX_SUGGESTIONS;
        let ok = resolve_names(
            exprs,
            &self.sheet.names,
            &mut uses,
            &mut diagnostics,
            &mut suggestions_left,
        );
        self.undefined_names_fit(old_span, diagnostics.len() - before)
            .then_some((uses, diagnostics, ok))
    }

    /// A cell keeps its name and gets a new formula, unit or description:
    /// resolve its names and keep the order if its uses still come first.
    fn update_cell(
        &mut self,
        id: CellId,
        old_span: Span,
        new: &mut CellDef,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Change {
        if self.whole_sheet_only
            || new.tolerance.is_some()
            || !self.sheet.order.cycles.is_empty()
            || self.sheet.names.get(new.name.text.as_str()) != Some(&id)
        {
            return Change::Relink;
        }
        let Some((uses, diagnostics, ok)) =
            self.resolve_line([&mut new.expr], old_span, parse_diagnostic)
        else {
            return Change::Relink;
        };
        if uses.iter().any(|&used| self.rank[used] >= self.rank[id]) {
            return Change::Relink;
        }
        self.swap_statement_diagnostics(old_span, diagnostics.into_iter());
        self.sheet.broken[id] = !ok || matches!(new.expr.kind, ExprKind::Invalid);
        rewire(&mut self.dependents, &self.sheet.uses[id], &uses, id);
        self.sheet.uses[id] = uses;
        Change::Cell(id)
    }

    /// A check gets a new comparison or label.
    fn update_check(
        &mut self,
        check: usize,
        old_span: Span,
        new: &mut CheckDef,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Change {
        if self.whole_sheet_only {
            return Change::Relink;
        }
        let Some((uses, diagnostics, ok)) =
            self.resolve_line([&mut new.lhs, &mut new.rhs], old_span, parse_diagnostic)
        else {
            return Change::Relink;
        };
        self.swap_statement_diagnostics(old_span, diagnostics.into_iter());
        self.sheet.broken_checks[check] = !ok;
        rewire(
            &mut self.check_dependents,
            &self.sheet.check_uses[check],
            &uses,
            check,
        );
        self.sheet.check_uses[check] = uses;
        Change::Check(check)
    }

    // ----- evaluating -----

    /// Links `statements` afresh and evaluates the whole sheet.
    fn relink(&mut self, statements: Vec<Statement>) {
        let mut diagnostics = self.header_diagnostics.clone();
        diagnostics.extend(self.parse_diagnostics.iter().flatten().cloned());
        let header = std::mem::take(&mut self.sheet.header);
        self.sheet = Sheet::link(header, statements, diagnostics);
        let n_cells = self.sheet.cells.len();
        let n_checks = self.sheet.checks.len();
        self.dependents = vec![Vec::new(); n_cells];
        for (id, uses) in self.sheet.uses.iter().enumerate() {
            for &used in uses {
                self.dependents[used].push(id);
            }
        }
        self.check_dependents = vec![Vec::new(); n_cells];
        for (check, uses) in self.sheet.check_uses.iter().enumerate() {
            for &used in uses {
                self.check_dependents[used].push(check);
            }
        }
        self.rank = vec![0; n_cells];
        for (position, id) in self.sheet.cell_order().enumerate() {
            self.rank[id] = position as u32;
        }
        self.whole_sheet_only = self.sheet.nodes.len() != n_cells
            || !self.sheet.cases.is_empty()
            || (0..n_cells).any(|id| self.sheet.tolerance(id).is_some());
        self.rows = presentation_order(&self.sheet);
        self.row_positions = vec![0; self.rows.len()];
        for (position, &statement) in self.rows.iter().enumerate() {
            self.row_positions[statement as usize] = position as u32;
        }
        self.visited = vec![0; n_cells];
        self.visited_checks = vec![0; n_checks];
        self.visit_stamp = 0;
        self.evaluate_all();
    }

    /// Evaluates every node and check, then the tolerances and load
    /// cases, as `heft check` does.
    fn evaluate_all(&mut self) {
        let n_cells = self.sheet.cells.len();
        let arena = self.document.arena();
        let mut evaluator = Evaluator::new(&self.sheet, arena);
        // The sheet's own findings are kept in `self.sheet.diagnostics`.
        evaluator.diagnostics.clear();
        self.cell_findings = vec![Vec::new(); n_cells];
        self.block_findings = Vec::new();
        for &node in &self.sheet.order.order {
            evaluator.run_node(node);
            if evaluator.diagnostics.is_empty() {
                continue;
            }
            let found = std::mem::take(&mut evaluator.diagnostics);
            match self.sheet.nodes[node] {
                Node::Cell(id) => self.cell_findings[id] = found,
                _ => self.block_findings.extend(found),
            }
        }
        self.check_findings = vec![Vec::new(); self.sheet.checks.len()];
        let mut checks: Vec<CheckResult> = (0..self.sheet.checks.len())
            .map(|check| {
                let result = evaluator.evaluate_check(check);
                self.check_findings[check] = std::mem::take(&mut evaluator.diagnostics);
                result
            })
            .collect();
        if self.whole_sheet_only {
            self.judgement = evaluator.judge_sheet(&mut checks);
            self.block_findings.append(&mut evaluator.diagnostics);
        } else {
            self.judgement = super::SheetJudgement::default();
            for (index, check) in checks.iter_mut().enumerate() {
                super::verdict::judge_check(&self.sheet, index, check, &[]);
            }
        }
        self.checks = checks;
        (self.displays, self.inputs) = evaluator.display_units();
        self.values = evaluator.values;
        self.statuses = evaluator.statuses;
        self.spreads = evaluator.spreads;
        self.last_evaluated = n_cells;
    }

    /// Re-evaluates `cells` and everything downstream of them, in dependency
    /// order, then `checks` and every check that uses a re-evaluated cell.
    fn recompute(&mut self, cells: &[CellId], checks: &[usize]) {
        self.visit_stamp = self.visit_stamp.wrapping_add(1);
        if self.visit_stamp == 0 {
            self.visited.fill(0);
            self.visited_checks.fill(0);
            self.visit_stamp = 1;
        }
        let stamp = self.visit_stamp;
        let mut affected = Vec::new();
        let mut stack = cells.to_vec();
        while let Some(id) = stack.pop() {
            if self.visited[id] == stamp {
                continue;
            }
            self.visited[id] = stamp;
            affected.push(id);
            stack.extend_from_slice(&self.dependents[id]);
        }
        affected.sort_unstable_by_key(|&id| self.rank[id]);
        let mut affected_checks = Vec::new();
        for &check in checks
            .iter()
            .chain(affected.iter().flat_map(|&id| &self.check_dependents[id]))
        {
            if self.visited_checks[check] != stamp {
                self.visited_checks[check] = stamp;
                affected_checks.push(check);
            }
        }

        let arena = self.document.arena();
        let mut evaluator = Evaluator::resume(
            &self.sheet,
            arena,
            std::mem::take(&mut self.values),
            std::mem::take(&mut self.statuses),
            std::mem::take(&mut self.spreads),
        );
        for &id in &affected {
            evaluator.values[id] = None;
            evaluator.evaluate_cell(id);
            self.cell_findings[id] = std::mem::take(&mut evaluator.diagnostics);
            let (display, is_input) = evaluator.display_unit(id, evaluator.values[id]);
            self.displays[id] = display;
            self.inputs[id] = is_input;
        }
        for &check in &affected_checks {
            let mut result = evaluator.evaluate_check(check);
            super::verdict::judge_check(&self.sheet, check, &mut result, &[]);
            self.checks[check] = result;
            self.check_findings[check] = std::mem::take(&mut evaluator.diagnostics);
        }
        self.values = evaluator.values;
        self.statuses = evaluator.statuses;
        self.spreads = evaluator.spreads;
        self.last_evaluated = affected.len();
    }
}

/// What an edit of one statement needs recomputed.
enum Change {
    /// Nothing to evaluate (headings, notes, broken lines).
    Inert,
    /// This cell and what is downstream of it.
    Cell(CellId),
    /// This check.
    Check(usize),
    /// The whole sheet, relinked.
    Relink,
}

/// Whether `inner` starts within `outer`.
fn within(inner: Span, outer: Span) -> bool {
    outer.start() <= inner.start() && inner.start() <= outer.end()
}

/// Statements in presentation order: for each node (a cell, or a solve or
/// simulate block) in dependency order, the statements between the node
/// before it in the file and itself, then the node's own statement; then
/// the statements after the last node.
fn presentation_order(sheet: &Sheet) -> Vec<u32> {
    let statement_of = |node: &Node| match node {
        Node::Cell(id) => sheet.cell_statement(*id),
        Node::Solve { statement, .. } | Node::Simulate { statement, .. } => *statement,
    };
    let mut in_file_order: Vec<usize> = sheet.nodes.iter().map(statement_of).collect();
    in_file_order.sort_unstable();
    let mut rows = Vec::with_capacity(sheet.statements.len());
    for &node in &sheet.order.order {
        let statement = statement_of(&sheet.nodes[node]);
        let position = in_file_order.partition_point(|&s| s < statement);
        let first = position
            .checked_sub(1)
            .map_or(0, |before| in_file_order[before] + 1);
        rows.extend((first..=statement).map(|index| index as u32));
    }
    let tail = in_file_order.last().map_or(0, |&last| last + 1);
    rows.extend((tail..sheet.statements.len()).map(|index| index as u32));
    rows
}

/// Where a name sits in its formula, for bracketing its substituted value.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Parent {
    Sum,
    Multiply,
    Divide,
    Power,
    Negate,
    Call,
}

/// Every name in `expr`, in written order, with what it is an operand of.
fn collect_names<'e>(
    expr: &'e Expr,
    parent: Option<Parent>,
    out: &mut Vec<(&'e Expr, Option<Parent>)>,
) {
    match &expr.kind {
        ExprKind::Name(_) => out.push((expr, parent)),
        ExprKind::Negate(inner) => collect_names(inner, Some(Parent::Negate), out),
        ExprKind::Binary { op, lhs, rhs } => {
            let parent = Some(match op {
                BinaryOp::Add | BinaryOp::Subtract => Parent::Sum,
                BinaryOp::Multiply => Parent::Multiply,
                BinaryOp::Divide => Parent::Divide,
                BinaryOp::Power => Parent::Power,
            });
            collect_names(lhs, parent, out);
            collect_names(rhs, parent, out);
        }
        ExprKind::Call { args, .. } => {
            for arg in args {
                collect_names(arg, Some(Parent::Call), out);
            }
        }
        // A component or a run query reads as written: its names are a
        // vector or a run's states, not one value to put in their place.
        ExprKind::Number(_)
        | ExprKind::Quantity { .. }
        | ExprKind::UnitValue(_)
        | ExprKind::Slope { .. }
        | ExprKind::Component { .. }
        | ExprKind::RunQuery(_)
        | ExprKind::Invalid => {}
    }
}

/// Moves `user` (a cell or a check) in `dependents` from the cells it used
/// (`before`) to the cells it uses now (`after`).
fn rewire(dependents: &mut [Vec<usize>], before: &[CellId], after: &[CellId], user: usize) {
    for &used in before {
        dependents[used].retain(|&dependent| dependent != user);
    }
    for &used in after {
        dependents[used].push(user);
    }
}
