//! The sheet model: header, statements, the cells and checks they define,
//! the dependency graph between cells and the order to evaluate them in.

pub(crate) mod edit;
mod files;
pub mod fingerprint;
mod graph;
mod header;
mod imports;
mod names;
mod parts;
mod passes;
mod resolve;
mod runs;
mod tables;

pub use files::SheetFiles;
pub use graph::{EvaluationOrder, evaluation_order};
pub use header::{DEFAULT_SIG_FIGS, Header, read_header};
pub use imports::{
    Export, Import, LoadProblem, Loaded, NoFiles, Reloaded, SheetLoader, UsedError, UsedSheet,
};
pub use names::NameTable;
pub(crate) use parts::has_aggregate;
pub use tables::{Column, Table};

use std::sync::Arc;

use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::syntax::ast::{
    BodyDef, CaseBlock, CellDef, CheckDef, Description, Expr, ExprKind, Ident, Override,
    SimulateBlock, SolveBlock, Statement, StatementKind, Target, Tolerance, UnitExpr,
};
use crate::syntax::{self, ParsedSheet};
use crate::units;
use passes::{Entered, Outline, enter_names, evaluation_nodes, outline, report_cycles};
use resolve::{Columns, Linked, Resolved, resolve_statements};

/// Index of a cell in [`Sheet::cells`].
pub type CellId = usize;

/// Index of an evaluation node in [`Sheet::nodes`].
pub type NodeId = usize;

/// Where a cell is defined.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CellOrigin {
    /// A cell or body statement: `name = formula`, `body name: forces`.
    Formula {
        /// The statement's index.
        statement: usize,
    },
    /// An unknown of a solve block.
    Unknown {
        /// The solve block's statement index.
        statement: usize,
        /// Which unknown of the block.
        index: usize,
    },
    /// The time (index 0) or a state (index 1, 2, …) of a simulate block;
    /// its value after evaluation is the one at the end of the run.
    Simulated {
        /// The simulate block's statement index.
        statement: usize,
        /// 0 for the time, k for the k-th state.
        index: usize,
    },
    /// A cell a parts list or a lift gives: an item's quantity
    /// (`skid[pump].m`), or a lift's weight, centre, point or load.
    Member {
        /// The block's statement index.
        statement: usize,
        /// Which of the block's cells.
        index: usize,
    },
}

/// A cell's declaration, whatever defines it.
#[derive(Clone, Copy, Debug)]
pub struct CellDecl<'a> {
    /// The name.
    pub name: &'a Ident,
    /// The unit in brackets, if any (always present for an unknown).
    pub unit: Option<&'a UnitExpr>,
    /// The formula (none for an unknown of a solve block).
    pub expr: Option<&'a Expr>,
    /// The description, if any.
    pub description: Option<&'a Description>,
}

/// A unit of evaluation: one cell, or a solve block that gives all its
/// unknowns at once.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Node {
    /// A cell with a formula.
    Cell(CellId),
    /// A solve block.
    Solve {
        /// The block's statement index.
        statement: usize,
        /// Its unknowns' cells, in written order.
        unknowns: Box<[CellId]>,
    },
    /// A simulate block.
    Simulate {
        /// The block's statement index.
        statement: usize,
        /// Its time's cell, then its states' cells in written order.
        cells: Box<[CellId]>,
    },
}

impl Node {
    /// The cells it computes.
    pub fn cells(&self) -> &[CellId] {
        match self {
            Node::Cell(id) => std::slice::from_ref(id),
            Node::Solve { unknowns, .. } => unknowns,
            Node::Simulate { cells, .. } => cells,
        }
    }
}

/// What a statement contributes to the sheet, in file order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Item {
    /// A heading, at this statement index.
    Heading(usize),
    /// A note, at this statement index.
    Note(usize),
    /// A cell (a body's resultant included).
    Cell(CellId),
    /// A check, index into [`Sheet::checks`].
    Check(usize),
    /// A line that did not parse, at this statement index.
    Invalid(usize),
    /// A solve block, at this statement index.
    Solve(usize),
    /// A load case, at this statement index.
    Case(usize),
    /// A simulate block, at this statement index.
    Simulate(usize),
    /// A review mark or sign-off line, at this statement index.
    Review(usize),
    /// A `use` line, at this statement index.
    Use(usize),
    /// A parts list or a lift, at this statement index.
    Members(usize),
    /// A sweep block, at this statement index.
    Sweep(usize),
    /// A table, at this statement index.
    Table(usize),
}

/// A whole sheet, parsed and linked: everything the evaluator needs.
#[derive(Clone, Debug)]
pub struct Sheet {
    /// The header (defaults where absent).
    pub header: Header,
    /// The statements in file order.
    pub statements: Vec<Statement>,
    /// Where each cell is defined.
    pub cells: Vec<CellOrigin>,
    /// Statement index of each check.
    pub checks: Vec<usize>,
    /// The sheet's items in file order.
    pub items: Vec<Item>,
    /// Cell by name (first definition wins).
    pub names: NameTable,
    /// For each cell, the cells its formula uses (no repeats, in first-use
    /// order); for an unknown, what its block's equations use outside it.
    pub uses: Vec<Vec<CellId>>,
    /// For each check, the cells it uses.
    pub check_uses: Vec<Vec<CellId>>,
    /// Cells that cannot be evaluated for a reason found before evaluation
    /// (duplicate, undefined name, cycle, broken block); their diagnostic is
    /// already given.
    pub broken: Vec<bool>,
    /// Checks that cannot be evaluated (undefined name).
    pub broken_checks: Vec<bool>,
    /// Statement index of each load case.
    pub cases: Vec<usize>,
    /// Load cases that cannot be evaluated (a line did not parse, an unknown
    /// name or target); their diagnostic is already given.
    pub broken_cases: Vec<bool>,
    /// The evaluation nodes.
    pub nodes: Vec<Node>,
    /// The node that computes each cell.
    pub node_of_cell: Vec<NodeId>,
    /// The order to evaluate nodes in, and the loops among cells.
    pub order: EvaluationOrder,
    /// The sheets its `use` lines name, in file order.
    pub imports: Vec<Import>,
    /// Findings from parsing and linking.
    pub diagnostics: Vec<Diagnostic>,
    /// The tables, in file order.
    pub tables: Vec<Table>,
    /// The files the sheet read beside it (a table's CSV file).
    pub files: std::sync::Arc<SheetFiles>,
}

/// How many did-you-mean searches a sheet gets; each scans every name.
pub(crate) const MAX_SUGGESTIONS: usize = 64;

impl Sheet {
    /// Parses and links `source`, a sheet with no file: a `use` line is an
    /// error. Never fails: problems become diagnostics.
    pub fn parse(source: &str) -> Sheet {
        Sheet::parse_with(source, &NoFiles)
    }

    /// Parses and links `source`, loading the sheets its `use` lines name
    /// with `loader`. Never fails: problems become diagnostics.
    pub fn parse_with(source: &str, loader: &dyn SheetLoader) -> Sheet {
        let ParsedSheet {
            header,
            statements,
            mut diagnostics,
        } = syntax::parse(source);
        let header = read_header(source, header, &mut diagnostics);
        let files = loader.sheet_files(source);
        Sheet::link_with(header, statements, diagnostics, loader, files)
    }

    /// Links parsed statements of a sheet with no file.
    pub fn link(header: Header, statements: Vec<Statement>, diagnostics: Vec<Diagnostic>) -> Sheet {
        Sheet::link_with(header, statements, diagnostics, &NoFiles, Arc::default())
    }

    /// Links parsed statements: the sheets they use (loaded with
    /// `loader`), the tables (their files from `files`), names,
    /// dependencies and evaluation order.
    pub fn link_with(
        header: Header,
        mut statements: Vec<Statement>,
        mut diagnostics: Vec<Diagnostic>,
        loader: &dyn SheetLoader,
        files: Arc<SheetFiles>,
    ) -> Sheet {
        let imports = imports::load_uses(&statements, loader, &mut diagnostics);
        parts::expand_aggregates(&mut statements, &mut diagnostics);
        let Outline {
            cells,
            checks,
            cases,
            items,
        } = outline(&statements);
        // Tables first: whether a lookup's last word is its reading or a
        // key depends on its table, and names are resolved after.
        let tables = tables::read_tables(&statements, &files, &mut diagnostics);
        let unreadable = tables::link_lookups(&mut statements, &tables, &mut diagnostics);

        let Entered {
            names,
            mut broken,
            mut uses,
            resolved_early,
            reads_runs,
        } = enter_names(&mut statements, &cells, &mut diagnostics);
        let mut names = names;
        names.set_imported(imports::qualified_names(&imports));

        runs::name_run_events(&mut statements, &names, &mut diagnostics);

        let Resolved {
            check_uses,
            mut broken_checks,
            mut broken_cases,
            reads_runs,
        } = resolve_statements(
            &mut statements,
            Linked {
                names: &names,
                cells: &cells,
                resolved_early: &resolved_early,
            },
            Columns {
                broken: &mut broken,
                uses: &mut uses,
            },
            reads_runs,
            &mut diagnostics,
        );
        runs::link_run_queries(
            reads_runs,
            &mut statements,
            &cells,
            &checks,
            &mut broken,
            &mut broken_checks,
            &mut diagnostics,
        );

        tables::mark_unreadable(
            &unreadable,
            &cells,
            &checks,
            &cases,
            (&mut broken, &mut broken_checks, &mut broken_cases),
        );

        let (nodes, node_of_cell) = evaluation_nodes(&cells);
        // What each node uses: the uses of its first cell (a block's cells
        // share theirs), as nodes.
        let node_uses = |node: NodeId| {
            let first = match &nodes[node] {
                Node::Cell(id) => *id,
                Node::Solve { unknowns, .. } => unknowns.first().copied().unwrap_or_default(),
                Node::Simulate { cells, .. } => cells.first().copied().unwrap_or_default(),
            };
            uses.get(first)
                .into_iter()
                .flatten()
                .map(|&cell| node_of_cell[cell])
        };
        let node_order = evaluation_order(nodes.len(), node_uses);
        let cycles = report_cycles(
            &node_order.cycles,
            &nodes,
            &statements,
            &cells,
            &mut broken,
            &mut diagnostics,
        );

        Sheet {
            header,
            statements,
            cells,
            checks,
            items,
            names,
            uses,
            check_uses,
            broken,
            broken_checks,
            cases,
            broken_cases,
            nodes,
            node_of_cell,
            order: EvaluationOrder {
                order: node_order.order,
                cycles,
            },
            imports,
            diagnostics,
            tables,
            files,
        }
    }

    /// The declaration of a cell.
    pub fn cell(&self, id: CellId) -> CellDecl<'_> {
        decl(&self.statements, self.cells[id])
    }

    /// The definition of a formula cell (a cell statement or a body's
    /// resultant); `None` for an unknown of a solve block.
    pub fn formula_cell(&self, id: CellId) -> Option<&CellDef> {
        if let CellOrigin::Member { statement, index } = self.cells[id] {
            return member(&self.statements[statement].kind, index);
        }
        match &self.statements[self.cell_statement(id)].kind {
            StatementKind::Cell(cell) => Some(cell),
            StatementKind::Body(body) => Some(&body.resultant),
            _ => None,
        }
    }

    /// The definition of a check.
    pub fn check(&self, index: usize) -> &CheckDef {
        match &self.statements[self.checks[index]].kind {
            StatementKind::Check(check) => check,
            other => unreachable!("expected a check statement, found {other:?}"),
        }
    }

    /// The span of the statement that defines a cell (a solve block's whole
    /// span for its unknowns).
    pub fn cell_span(&self, id: CellId) -> Span {
        self.statements[self.cell_statement(id)].span
    }

    /// The index of the statement that defines a cell.
    pub fn cell_statement(&self, id: CellId) -> usize {
        match self.cells[id] {
            CellOrigin::Formula { statement }
            | CellOrigin::Unknown { statement, .. }
            | CellOrigin::Simulated { statement, .. }
            | CellOrigin::Member { statement, .. } => statement,
        }
    }

    /// The span of a check's whole statement.
    pub fn check_span(&self, index: usize) -> Span {
        self.statements[self.checks[index]].span
    }

    /// The solve block at a statement index, if it is one.
    pub fn solve_block(&self, statement: usize) -> Option<&SolveBlock> {
        match &self.statements.get(statement)?.kind {
            StatementKind::Solve(block) => Some(block),
            _ => None,
        }
    }

    /// The load case at a statement index, if it is one.
    pub fn case_block(&self, statement: usize) -> Option<&CaseBlock> {
        match &self.statements.get(statement)?.kind {
            StatementKind::Case(case) => Some(case),
            _ => None,
        }
    }

    /// The simulate block at a statement index, if it is one.
    pub fn simulate_block(&self, statement: usize) -> Option<&SimulateBlock> {
        match &self.statements.get(statement)?.kind {
            StatementKind::Simulate(block) => Some(block),
            _ => None,
        }
    }

    /// The tolerance written on a cell, if any.
    pub fn tolerance(&self, id: CellId) -> Option<&Tolerance> {
        if let CellOrigin::Member { .. } = self.cells[id] {
            return self.formula_cell(id)?.tolerance.as_deref();
        }
        match &self.statements[self.cell_statement(id)].kind {
            StatementKind::Cell(cell) => cell.tolerance.as_deref(),
            _ => None,
        }
    }

    /// Whether a cell is the time or a state of a simulate block.
    pub fn is_simulated(&self, id: CellId) -> bool {
        matches!(self.cells[id], CellOrigin::Simulated { .. })
    }

    /// The body statement defining a cell, if the cell is a body's resultant.
    pub fn body(&self, id: CellId) -> Option<&BodyDef> {
        match &self.statements[self.cell_statement(id)].kind {
            StatementKind::Body(body) => Some(body),
            _ => None,
        }
    }

    /// Cell ids in evaluation order (a solve block's unknowns together).
    pub fn cell_order(&self) -> impl Iterator<Item = CellId> + '_ {
        self.order
            .order
            .iter()
            .flat_map(|&node| self.nodes[node].cells().iter().copied())
    }

    /// The node order when some cells' formulas are replaced (a load case):
    /// `replaced` gives each replaced cell's new uses. A replacement may use
    /// a cell the sheet's own order puts after it, so the order is found
    /// again; file order never matters.
    pub fn order_with_replaced_uses(&self, replaced: &[(CellId, Vec<CellId>)]) -> Vec<NodeId> {
        let node_uses = |node: NodeId| {
            let first = self.nodes[node].cells().first().copied();
            let uses = match (&self.nodes[node], first) {
                (Node::Cell(id), _) => replaced
                    .iter()
                    .find(|(replaced, _)| replaced == id)
                    .map_or(self.uses[*id].as_slice(), |(_, uses)| uses.as_slice()),
                (_, Some(first)) => self.uses[first].as_slice(),
                (_, None) => &[],
            };
            uses.iter().map(|&cell| self.node_of_cell[cell])
        };
        evaluation_order(self.nodes.len(), node_uses).order
    }
}

/// The cells a load case's replacement formula and its tolerance use.
pub fn override_uses(replacement: &Override) -> Vec<CellId> {
    let mut uses = Vec::new();
    let tolerance = replacement.tolerance.as_deref().map(Tolerance::expr);
    for expr in std::iter::once(&replacement.expr).chain(tolerance) {
        expr.walk(&mut |node| {
            if let ExprKind::Name(crate::syntax::ast::NameRef {
                target: Target::Cell(id),
                ..
            }) = &node.kind
                && !uses.contains(id)
            {
                uses.push(*id);
            }
        });
    }
    uses
}

/// The declaration of the cell at `origin`.
fn decl(statements: &[Statement], origin: CellOrigin) -> CellDecl<'_> {
    match origin {
        CellOrigin::Formula { statement } => match &statements[statement].kind {
            StatementKind::Cell(cell) => formula_decl(cell),
            StatementKind::Body(body) => formula_decl(&body.resultant),
            other => unreachable!("expected a cell or body statement, found {other:?}"),
        },
        CellOrigin::Unknown { statement, index } => match &statements[statement].kind {
            StatementKind::Solve(block) => {
                let unknown = &block.unknowns[index];
                CellDecl {
                    name: &unknown.name,
                    unit: Some(&unknown.unit),
                    expr: None,
                    description: None,
                }
            }
            other => unreachable!("expected a solve block, found {other:?}"),
        },
        CellOrigin::Simulated { statement, index } => match &statements[statement].kind {
            StatementKind::Simulate(block) if index == 0 => CellDecl {
                name: &block.time,
                unit: None,
                expr: None,
                description: None,
            },
            StatementKind::Simulate(block) => {
                let state = &block.states[index - 1];
                CellDecl {
                    name: &state.name,
                    unit: None,
                    expr: None,
                    description: state.description.as_ref(),
                }
            }
            other => unreachable!("expected a simulate block, found {other:?}"),
        },
        CellOrigin::Member { statement, index } => match member(&statements[statement].kind, index)
        {
            Some(cell) => formula_decl(cell),
            None => unreachable!("expected a parts list or lift with cell {index}"),
        },
    }
}

/// Cell `index` of a parts list or a lift.
fn member(kind: &StatementKind, index: usize) -> Option<&CellDef> {
    match kind {
        StatementKind::Parts(block) => block.cells.get(index),
        StatementKind::Lift(block) => block.cells.get(index),
        _ => None,
    }
}

fn formula_decl(cell: &CellDef) -> CellDecl<'_> {
    CellDecl {
        name: &cell.name,
        unit: cell.unit.as_ref(),
        expr: Some(&cell.expr),
        description: cell.description.as_ref(),
    }
}

/// `a → b → c → a`.
fn cycle_text(names: &[String]) -> String {
    let mut text = names.join(" → ");
    if let Some(first) = names.first() {
        text.push_str(" → ");
        text.push_str(first);
    }
    text
}

/// The defined name or constant most like `name`.
/// Warns of names a reader could take for one another, and of names that
/// mix scripts ([`NameTable::lookalikes`]): a check on a decoy `Fо` (with
/// a Cyrillic `о`) must not pass unnoticed beside the real `Fo`.
fn lookalike_names(
    names: &NameTable,
    statements: &[Statement],
    cells: &[CellOrigin],
    diagnostics: &mut Vec<Diagnostic>,
) {
    let lookalikes = names.lookalikes();
    let name_of = |id: CellId| decl(statements, cells[id]).name;
    for (first, other) in lookalikes.confusable {
        let (first, other) = (name_of(first), name_of(other));
        diagnostics.push(
            Diagnostic::warning(
                Code::ConfusableNames,
                other.span,
                format!(
                    "`{}` reads like `{}` but is another cell ({})",
                    other.text,
                    first.text,
                    code_points(&other.text)
                ),
            )
            .with_label(
                first.span,
                format!("`{}` ({})", first.text, code_points(&first.text)),
            )
            .with_help("give the two cells names that differ at a glance"),
        );
    }
    for id in lookalikes.mixed_scripts {
        let name = name_of(id);
        diagnostics.push(
            Diagnostic::warning(
                Code::MixedScriptName,
                name.span,
                format!(
                    "`{}` mixes letters of different scripts ({})",
                    name.text,
                    code_points(&name.text)
                ),
            )
            .with_help("write the name in one script (Latin with Greek is fine)"),
        );
    }
}

/// The code points of a name's characters that are not ASCII, to tell
/// look-alikes apart in a message (`о U+043E`), each named once.
fn code_points(name: &str) -> String {
    let mut shown: Vec<char> = Vec::new();
    for c in name.chars().filter(|c| !c.is_ascii()) {
        if !shown.contains(&c) {
            shown.push(c);
        }
    }
    let points: Vec<String> = shown
        .iter()
        .map(|&c| format!("{c} U+{:04X}", u32::from(c)))
        .collect();
    if points.is_empty() {
        "all ASCII".to_string()
    } else {
        points.join(", ")
    }
}

fn did_you_mean(name: &str, names: &NameTable) -> Option<String> {
    let candidates = names
        .keys()
        .chain(names.imported_names())
        .chain(units::CONSTANTS.iter().map(|constant| constant.name));
    let lower = name.to_lowercase();
    candidates
        .map(|candidate| {
            let score = if candidate.to_lowercase() == lower {
                2.0
            } else {
                strsim::jaro_winkler(name, candidate)
            };
            (score, candidate)
        })
        .filter(|(score, _)| *score >= 0.85)
        .max_by(|a, b| a.0.total_cmp(&b.0).then_with(|| b.1.cmp(a.1)))
        .map(|(_, candidate)| candidate.to_string())
}

/// How many cells ahead linking starts loading the name table's slot for a
/// name, so that the slot is in cache when the name is entered.
const PREFETCH_AHEAD: usize = 16;

/// What `name` refers to among `names` and the built-in constants, if
/// anything: a cell wins over a constant of the same name.
fn target_of(name: &str, names: &NameTable) -> Option<Target> {
    if name.contains('.') {
        // A parts list's cells (`skid[pump].m`) hold a dot too.
        if let Some(&id) = names.get(name) {
            return Some(Target::Cell(id));
        }
        return names
            .imported(name)
            .map(|(sheet, cell)| Target::Imported { sheet, cell });
    }
    match names.get(name) {
        Some(&id) => Some(Target::Cell(id)),
        None => units::CONSTANTS
            .iter()
            .position(|constant| constant.name == name)
            .map(Target::Constant),
    }
}

/// A formula cell resolved as its name was entered.
struct EarlyUses {
    /// The cells it uses, no repeats, in first-use order.
    uses: Vec<CellId>,
    /// Whether it reads a built-in constant.
    reads_constant: bool,
    /// Whether it reads a simulate run (`v at stop`).
    reads_run: bool,
}

/// Resolves a formula cell's names against the cells entered so far (not
/// yet its own), for [`Sheet::link`], or gives `None` (leaving the cell to
/// be resolved against the whole table) if a name is not entered yet. A
/// cell entered so far is the name's first definition (later ones are
/// duplicates), so what is found here stands; a constant stands unless a
/// cell takes its name. `scratch` is a buffer for the uses, so that each
/// cell allocates only its exact list.
fn resolve_early(
    kind: &mut StatementKind,
    names: &NameTable,
    scratch: &mut Vec<CellId>,
) -> Option<EarlyUses> {
    let (expr, tolerance) = match kind {
        StatementKind::Cell(cell) => (
            &mut cell.expr,
            cell.tolerance.as_deref_mut().map(Tolerance::expr_mut),
        ),
        StatementKind::Body(body) => (&mut body.resultant.expr, None),
        _ => return None,
    };
    scratch.clear();
    let (mut complete, mut reads_constant, mut reads_run) = (true, false, false);
    for expr in std::iter::once(expr).chain(tolerance) {
        expr.walk_mut(&mut |node| match &mut node.kind {
            ExprKind::Name(name) => match target_of(&name.text, names) {
                Some(target) => {
                    name.target = target;
                    match target {
                        Target::Cell(used) if !scratch.contains(&used) => scratch.push(used),
                        Target::Constant(_) => reads_constant = true,
                        _ => {}
                    }
                }
                None => complete = false,
            },
            ExprKind::RunQuery(_) => reads_run = true,
            _ => {}
        });
    }
    complete.then(|| EarlyUses {
        uses: scratch.to_vec(),
        reads_constant,
        reads_run,
    })
}

/// Resolves the names of `exprs` against `names` and the constants: fills
/// their targets, adds the cells used to `uses` (no repeats, first-use
/// order) and gives a diagnostic for each undefined name, with a
/// did-you-mean while `suggestions_left` lasts. Returns whether every name
/// was defined. Linking and the notebook's one-line edits both use it.
pub(crate) fn resolve_names<'e>(
    exprs: impl IntoIterator<Item = &'e mut Expr>,
    names: &NameTable,
    uses: &mut Vec<CellId>,
    diagnostics: &mut Vec<Diagnostic>,
    suggestions_left: &mut usize,
) -> bool {
    let mut ok = true;
    for expr in exprs {
        expr.walk_names_mut(&mut |name, span| {
            if name.text == parts::FAILED_AGGREGATE {
                // Its aggregate's diagnostic is given already.
                ok = false;
            } else if let Some(target) = target_of(&name.text, names) {
                name.target = target;
                if let Target::Cell(id) = target
                    && !uses.contains(&id)
                {
                    uses.push(id);
                }
            } else {
                ok = false;
                let mut diagnostic = Diagnostic::error(
                    Code::UndefinedName,
                    span,
                    format!("`{}` is not defined", name.text),
                );
                if names.is_alias(&name.text) {
                    diagnostic = diagnostic.with_help(format!(
                        "`{0}` names a used sheet: read its cells as `{0}.NAME` (a cell named x, y or z cannot be read so, since `.x`, `.y` and `.z` read a vector's components)",
                        name.text
                    ));
                } else if *suggestions_left > 0 {
                    *suggestions_left -= 1;
                    if let Some(similar) = did_you_mean(&name.text, names) {
                        diagnostic = diagnostic.with_help(format!("did you mean `{similar}`?"));
                    }
                }
                diagnostics.push(diagnostic);
            }
        });
    }
    ok
}
