//! The block kinds — solve blocks, simulate blocks, and the sheet-level
//! judgement over tolerances and load cases — and the evaluation of a whole
//! sheet, which hands each node of the dependency order to the core
//! evaluator (a cell) or to its block kind. This is the only code outside
//! `syntax` and `sheet` that runs a block kind; [`crate::eval`] computes
//! cells and checks and never calls in here.

mod cases;
mod parts;
mod simulate;
mod solve;
mod sweep;

use std::sync::Arc;

use crate::base::LineIndex;
use crate::eval::{CaseOutcome, CellRange, CheckResult, Evaluated, Evaluator, OutlineItem};
use crate::sheet::{CellId, Item, Node, NodeId, Sheet, SheetLoader};
use crate::syntax::ast::StatementKind;

pub use cases::MAX_TOLERANCE_PAIRS;
pub(crate) use parts::is_withdrawn;
pub use parts::{COLLINEAR_TOLERANCE, LIFT_LINE_TOLERANCE};
pub use simulate::{DEFAULT_RELATIVE_TOLERANCE, MAX_KEPT_COEFFICIENTS, MAX_STEPS, step_limit};
pub use solve::MAX_SOLVE_UNKNOWNS;
pub use sweep::{MAX_SWEEP_CELL_EVALUATIONS, MAX_SWEEP_POINTS};

/// Parses, links and evaluates a sheet's source text in one call (a sheet
/// with no file: a `use` line is an error).
pub fn evaluate_source(source: &str) -> Evaluated {
    evaluate(Arc::new(Sheet::parse(source)), Arc::from(source))
}

/// [`evaluate_source`] with the sheets its `use` lines name loaded by
/// `loader`.
pub fn evaluate_source_with(source: &str, loader: &dyn SheetLoader) -> Evaluated {
    evaluate(
        Arc::new(Sheet::parse_with(source, loader)),
        Arc::from(source),
    )
}

/// Evaluates every cell, solve block and check of a linked sheet, then
/// judges every check as written, at the worst case of its tolerances and
/// in every load case.
pub fn evaluate(sheet: Arc<Sheet>, source: Arc<str>) -> Evaluated {
    let mut evaluator = evaluator(&sheet, &source);
    evaluator.run_nodes();
    let mut checks: Vec<CheckResult> = (0..sheet.checks.len())
        .map(|index| evaluator.evaluate_check(index))
        .collect();
    let judged = evaluator.judge_sheet(&mut checks);
    let mut evaluated = evaluator.finish(checks, &sheet, &source);
    evaluated.ranges = judged.ranges;
    evaluated.vector_ranges = judged.vector_ranges;
    evaluated.cases = judged.cases;
    evaluated.case_results = judged.case_results;
    evaluated.governing = judged.governing;
    evaluated.sweeps = judged.sweeps;
    evaluated
}

/// What the sheet gives as a whole, beyond each cell: ranges over the
/// tolerances, the load cases, and which case governs each check.
#[derive(Clone, Debug, Default)]
pub struct SheetJudgement {
    /// Each cell's range over the tolerances (empty when no cell has one).
    pub ranges: Vec<Option<CellRange>>,
    /// Each vector cell's range by component (SI lowest and highest),
    /// found at the corners of the tolerances, by cell id.
    pub vector_ranges: Vec<(CellId, Vec<(f64, f64)>)>,
    /// The load cases, in file order.
    pub cases: Vec<CaseOutcome>,
    /// The cells tabulated for every case.
    pub case_results: Vec<CellId>,
    /// For each check, the case that governs it.
    pub governing: Vec<Option<usize>>,
    /// The names' spans of the lift points whose loads were withdrawn:
    /// their statics formulas' findings are not the sheet's
    /// ([`is_withdrawn`]).
    pub withdrawn: Vec<crate::base::Span>,
    /// Each sweep block's study, in file order.
    pub sweeps: Vec<crate::eval::SweepReport>,
}

/// An evaluator whose expressions can read the sheet's finished runs
/// (`v at stop`): the core evaluator with the simulate block's answer to a
/// run query.
pub(crate) fn evaluator<'a>(sheet: &'a Sheet, source: &'a str) -> Evaluator<'a> {
    with_blocks(Evaluator::new(sheet, source))
}

/// The evaluator with the block kinds attached: its expressions can read
/// the sheet's finished runs.
pub(crate) fn with_blocks(evaluator: Evaluator<'_>) -> Evaluator<'_> {
    evaluator.answering_run_queries(simulate::run_query)
}

impl Evaluator<'_> {
    /// Runs every node of the sheet, in the order of the load case being
    /// evaluated (if any).
    pub(crate) fn run_nodes(&mut self) {
        for position in 0..self.node_order().len() {
            self.run_node(self.node_order()[position]);
        }
    }

    /// The order nodes are evaluated in: the load case's, or the sheet's.
    pub(crate) fn node_order(&self) -> &[NodeId] {
        self.case_order
            .as_deref()
            .unwrap_or(&self.sheet.order.order)
    }

    /// Runs one node: a cell, a solve block or a simulate block.
    pub(crate) fn run_node(&mut self, node: NodeId) {
        let sheet = self.sheet;
        match &sheet.nodes[node] {
            Node::Cell(id) => self.evaluate_cell(*id),
            Node::Solve {
                statement,
                unknowns,
            } => self.evaluate_solve(*statement, unknowns),
            Node::Simulate { statement, cells } => self.evaluate_simulate(*statement, cells),
        }
    }

    /// The evaluated model: the core's cells and checks, each block's
    /// report, the outline in file order, and the findings sorted by place.
    fn finish(
        mut self,
        checks: Vec<CheckResult>,
        sheet: &Arc<Sheet>,
        source: &Arc<str>,
    ) -> Evaluated {
        let lines = LineIndex::new(source);
        let (displays, inputs) = self.display_units();
        // A statement the outline cannot show as what it should be.
        let invalid = |index: usize| OutlineItem::Invalid {
            span: sheet.statements[index].span,
        };
        let mut outline = Vec::with_capacity(sheet.items.len());
        // Every sweep statement has its report, in file order.
        let mut next_sweep = 0;
        outline.extend(
            sheet
                .items
                .iter()
                .filter(|item| !matches!(item, Item::Review(_)))
                .map(|item| match *item {
                    Item::Heading(index) => match &sheet.statements[index].kind {
                        StatementKind::Heading { level, text } => OutlineItem::Heading {
                            level: *level,
                            text: text.clone(),
                        },
                        _ => invalid(index),
                    },
                    Item::Note(index) => match &sheet.statements[index].kind {
                        StatementKind::Note { text } => OutlineItem::Note { text: text.clone() },
                        _ => invalid(index),
                    },
                    Item::Cell(id) => OutlineItem::Cell(id),
                    Item::Check(index) => OutlineItem::Check(index),
                    Item::Case(statement) => OutlineItem::Case(statement),
                    Item::Solve(statement) => self
                        .solves
                        .iter()
                        .position(|report| report.statement == statement)
                        .map_or_else(|| invalid(statement), OutlineItem::Solve),
                    Item::Invalid(index) | Item::Review(index) => invalid(index),
                    Item::Use(statement) => sheet
                        .imports
                        .iter()
                        .position(|import| import.statement == statement)
                        .map_or_else(|| invalid(statement), OutlineItem::Use),
                    Item::Simulate(statement) => self
                        .runs
                        .iter()
                        .position(|report| report.statement == statement)
                        .map_or_else(|| invalid(statement), OutlineItem::Simulate),
                    Item::Members(statement) => parts::members_report(sheet, statement)
                        .map_or_else(
                            || invalid(statement),
                            |report| OutlineItem::Members(Box::new(report)),
                        ),
                    Item::Sweep(_) => {
                        next_sweep += 1;
                        OutlineItem::Sweep(next_sweep - 1)
                    }
                    Item::Table(statement) => sheet
                        .tables
                        .iter()
                        .position(|table| table.statement == statement)
                        .map_or_else(|| invalid(statement), OutlineItem::Table),
                }),
        );
        let mut diagnostics = std::mem::take(&mut self.diagnostics);
        let mut table_reads = self.table_reads.take();
        table_reads.sort_by_key(|read| read.span.start());
        diagnostics.sort_by_key(|diagnostic| (diagnostic.span.start(), diagnostic.code));
        Evaluated {
            sheet: Arc::clone(sheet),
            source: Arc::clone(source),
            values: std::mem::take(&mut self.values),
            statuses: std::mem::take(&mut self.statuses),
            spreads: std::mem::take(&mut self.spreads),
            displays,
            inputs,
            checks,
            solves: std::mem::take(&mut self.solves),
            ranges: Vec::new(),
            vector_ranges: Vec::new(),
            cases: Vec::new(),
            case_results: Vec::new(),
            governing: Vec::new(),
            runs: std::mem::take(&mut self.runs),
            sweeps: Vec::new(),
            outline,
            diagnostics,
            lines,
            table_reads,
            tables_readable: self.tables.iter().map(Option::is_some).collect(),
        }
    }
}
