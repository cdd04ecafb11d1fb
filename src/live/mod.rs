//! Incremental evaluation: a sheet that is edited line by line and
//! recomputes only what an edit affects.
//!
//! [`LiveSheet`] owns the `Document` (the text), the linked [`Sheet`] and
//! every result. An edit that keeps a cell a cell of the same name, whose
//! new formula uses only cells evaluated before it, re-resolves that one
//! formula and re-evaluates the cell and everything downstream of it (found
//! through reverse dependency edges, in the existing dependency order), and
//! the checks that use them. Edits between headings, notes and broken lines
//! evaluate nothing; a check edit evaluates that check. Anything else (a
//! rename, a cell added or removed, a new dependency that breaks the order)
//! relinks the sheet and evaluates it whole. Both paths run the same
//! evaluator, and `tests/notebook/live.rs` checks that an edited sheet always ends up
//! exactly where evaluating its text from scratch does.

mod edits;
mod findings;
mod recompute;

use std::sync::Arc;

use crate::base::{Code, Diagnostic, Severity};
use crate::base::{LineIndex, Span};
use crate::eval::{CellResult, CellStatus, CheckResult, Evaluator, Spread};
use crate::sheet::edit::{self, Document};
use crate::sheet::{
    CellId, CellOrigin, Header, Item, MAX_SUGGESTIONS, NoFiles, Node, Sheet, SheetLoader,
    read_header, resolve_names,
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
    /// What reads the sheets `use` lines name.
    loader: Arc<dyn SheetLoader + Send + Sync>,
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
    judgement: crate::blocks::SheetJudgement,
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
    /// The files the sheet's tables read, as read when it was opened.
    files: std::sync::Arc<crate::sheet::SheetFiles>,
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
    /// Parses, links and evaluates `text`, a sheet with no file (a `use`
    /// line is an error).
    pub fn open(text: &str) -> LiveSheet {
        LiveSheet::open_with(text, Arc::new(NoFiles))
    }

    /// Parses, links and evaluates `text`, reading the sheets its `use`
    /// lines name with `loader` (kept for every relink).
    pub fn open_with(text: &str, loader: Arc<dyn SheetLoader + Send + Sync>) -> LiveSheet {
        let files = loader.sheet_files(text);
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
            judgement: crate::blocks::SheetJudgement::default(),
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
            loader,
            files,
        };
        live.sheet.header = header;
        live.relink(statements);
        live
    }

    // ----- reading -----

    /// What reads the sheets its `use` lines name.
    pub fn loader(&self) -> Arc<dyn SheetLoader + Send + Sync> {
        Arc::clone(&self.loader)
    }

    /// The file's text as it is now.
    pub fn text(&self) -> String {
        self.document.text()
    }

    /// The document (lines and the arena spans point into).
    pub fn document(&self) -> &Document {
        &self.document
    }

    /// The files the sheet's tables read.
    pub fn files(&self) -> std::sync::Arc<crate::sheet::SheetFiles> {
        std::sync::Arc::clone(&self.files)
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
                | CellOrigin::Simulated { statement: s, .. }
                | CellOrigin::Member { statement: s, .. } => s == statement,
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
            Item::Solve(index)
            | Item::Case(index)
            | Item::Simulate(index)
            | Item::Members(index)
            | Item::Sweep(index)
            | Item::Table(index)
            | Item::Use(index) => Row::Block {
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
            formula: crate::eval::model::formula_text(&self.sheet, id, arena),
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
                Target::Imported { sheet, cell } => {
                    let value = self
                        .sheet
                        .imports
                        .get(sheet as usize)
                        .and_then(|import| import.sheet())
                        .and_then(|used| used.exports.get(cell as usize))
                        .and_then(|export| export.value);
                    let system = system.unwrap_or(self.sheet.header.display);
                    let scalar = value.and_then(|v| v.scalar());
                    (value, scalar.map(|v| pick_unit(v.dimension, v.si, system)))
                }
                _ => (None, None),
            };
            text.push_str(Span::new(position, expr.span.start()).text(arena));
            match (value, unit) {
                (Some(value), Some(unit)) => {
                    let shown = crate::eval::format_value(value, &unit, sig_figs);
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

    // ----- editing -----

    // ----- evaluating -----
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
    // A parts list or a lift is one statement of several nodes (a cell
    // each): it is placed with the first of them.
    in_file_order.dedup();
    let mut placed = vec![false; sheet.statements.len()];
    let mut rows = Vec::with_capacity(sheet.statements.len());
    for &node in &sheet.order.order {
        let statement = statement_of(&sheet.nodes[node]);
        if std::mem::replace(&mut placed[statement], true) {
            continue;
        }
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
        // A test's sides and both branches are operands as a call's arguments are.
        ExprKind::Conditional(conditional) => {
            conditional
                .test
                .for_each_side(&mut |side| collect_names(side, Some(Parent::Call), out));
            collect_names(&conditional.then, Some(Parent::Call), out);
            collect_names(&conditional.otherwise, Some(Parent::Call), out);
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
        ExprKind::Lookup(lookup) => {
            for key in &lookup.keys {
                collect_names(key, Some(Parent::Call), out);
            }
        }
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
