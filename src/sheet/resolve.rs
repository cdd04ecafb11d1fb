//! The pass that resolves every statement's names once all cells are
//! entered: each kind of statement gives its formulas their targets and its
//! cells their uses — a cell or a body its own, a solve or simulate block
//! one set shared by its cells, a check its sides, a load case its
//! overrides and the cells they replace.

use super::{CellId, CellOrigin, MAX_SUGGESTIONS, NameTable, did_you_mean, resolve_names, runs};
use crate::base::{Code, Diagnostic};
use crate::syntax::ast::{
    CaseBlock, Expr, ExprKind, SolveBlock, Statement, StatementKind, Target, Tolerance,
};

/// What earlier passes of linking give this one to read.
pub(super) struct Linked<'l> {
    /// Every cell by name.
    pub names: &'l NameTable,
    /// Where each cell comes from.
    pub cells: &'l [CellOrigin],
    /// The cells whose formulas were resolved while names were entered.
    pub resolved_early: &'l [bool],
}

/// The per-cell columns this pass fills in.
pub(super) struct Columns<'c> {
    /// Whether each cell is broken.
    pub broken: &'c mut [bool],
    /// What each cell uses.
    pub uses: &'c mut [Vec<CellId>],
}

/// What the pass gives beyond the per-cell columns.
pub(super) struct Resolved {
    /// What each check uses, in check order.
    pub check_uses: Vec<Vec<CellId>>,
    /// Whether each check names something undefined.
    pub broken_checks: Vec<bool>,
    /// Whether each load case is broken.
    pub broken_cases: Vec<bool>,
    /// Whether any formula left to this pass reads a run.
    pub reads_runs: bool,
}

/// Resolves the names of every statement not already resolved early.
pub(super) fn resolve_statements(
    statements: &mut [Statement],
    linked: Linked<'_>,
    columns: Columns<'_>,
    reads_runs: bool,
    diagnostics: &mut Vec<Diagnostic>,
) -> Resolved {
    let Columns { broken, uses } = columns;
    let mut resolver = Resolver {
        names: linked.names,
        suggestions_left: MAX_SUGGESTIONS,
    };
    let mut resolved = Resolved {
        check_uses: Vec::new(),
        broken_checks: Vec::new(),
        broken_cases: Vec::new(),
        reads_runs,
    };
    let mut next_cell = 0;
    for statement in statements {
        let early = match statement.kind {
            StatementKind::Cell(_) | StatementKind::Body(_) => linked.resolved_early[next_cell],
            _ => false,
        };
        resolved.reads_runs |= !early && runs::mentions_run_query(statement);
        match &mut statement.kind {
            StatementKind::Cell(cell) => {
                let id = next_cell;
                next_cell += 1;
                broken[id] |= matches!(cell.expr.kind, ExprKind::Invalid);
                if early {
                    continue;
                }
                let tolerance = cell.tolerance.as_deref_mut().map(Tolerance::expr_mut);
                let (cell_uses, ok) = resolver.uses(
                    &mut std::iter::once(&mut cell.expr).chain(tolerance),
                    diagnostics,
                );
                broken[id] |= !ok;
                uses[id] = cell_uses;
            }
            StatementKind::Body(body) => {
                let id = next_cell;
                next_cell += 1;
                if early {
                    continue;
                }
                let (cell_uses, ok) =
                    resolver.uses(&mut std::iter::once(&mut body.resultant.expr), diagnostics);
                broken[id] |= !ok;
                uses[id] = cell_uses;
            }
            StatementKind::Solve(block) => {
                let own = next_cell..next_cell + block.unknowns.len();
                next_cell = own.end;
                let complete = block.complete;
                let (block_uses, ok) = resolver.uses(&mut solve_exprs(block), diagnostics);
                share_block_uses(own, block_uses, ok && complete, broken, uses);
            }
            StatementKind::Simulate(block) => {
                // The block's time, then its states.
                let own = next_cell..next_cell + block.states.len() + 1;
                next_cell = own.end;
                let complete = block.complete;
                let (block_uses, ok) = resolver.uses(&mut block.exprs_mut(), diagnostics);
                share_block_uses(own, block_uses, ok && complete, broken, uses);
            }
            StatementKind::Parts(_) | StatementKind::Lift(_) => {
                let (cells, complete) = match &mut statement.kind {
                    StatementKind::Parts(block) => (&mut block.cells, block.complete),
                    StatementKind::Lift(block) => (&mut block.cells, block.complete),
                    _ => continue,
                };
                for cell in cells.iter_mut() {
                    let id = next_cell;
                    next_cell += 1;
                    let tolerance = cell.tolerance.as_deref_mut().map(Tolerance::expr_mut);
                    let (cell_uses, ok) = resolver.uses(
                        &mut std::iter::once(&mut cell.expr).chain(tolerance),
                        diagnostics,
                    );
                    broken[id] |= !ok || !complete || matches!(cell.expr.kind, ExprKind::Invalid);
                    uses[id] = cell_uses;
                }
            }
            StatementKind::Check(check) => {
                let (used, ok) = resolver.uses(
                    &mut [&mut check.lhs, &mut check.rhs].into_iter(),
                    diagnostics,
                );
                resolved.check_uses.push(used);
                resolved.broken_checks.push(!ok);
            }
            StatementKind::Case(case) => {
                let ok = resolver.case(case, linked.cells, diagnostics);
                resolved.broken_cases.push(!ok);
            }
            StatementKind::Sweep(sweep) => {
                // Undefined names are reported here; the block itself is
                // checked when it runs (`blocks::sweep`).
                resolver.uses(&mut sweep.exprs_mut(), diagnostics);
            }
            StatementKind::Heading { .. }
            | StatementKind::Note { .. }
            | StatementKind::Review(_)
            | StatementKind::SignOff(_)
            | StatementKind::Use(_)
            | StatementKind::Table(_)
            | StatementKind::Invalid => {}
        }
    }
    resolved
}

/// A solve block's formulas: both sides of every equation, then the guesses.
fn solve_exprs(block: &mut SolveBlock) -> impl Iterator<Item = &mut Expr> {
    let SolveBlock {
        unknowns,
        equations,
        ..
    } = block;
    equations
        .iter_mut()
        .flat_map(|equation| [&mut equation.lhs, &mut equation.rhs])
        .chain(
            unknowns
                .iter_mut()
                .filter_map(|unknown| unknown.guess.as_mut()),
        )
}

/// A block's cells share what the block uses outside itself; all are broken
/// if the block is.
fn share_block_uses(
    own: std::ops::Range<CellId>,
    mut block_uses: Vec<CellId>,
    ok: bool,
    broken: &mut [bool],
    uses: &mut [Vec<CellId>],
) {
    block_uses.retain(|id| !own.contains(id));
    for id in own {
        broken[id] |= !ok;
        uses[id] = block_uses.clone();
    }
}

/// Resolves names against the table, with a budget of did-you-mean
/// suggestions shared by the whole sheet.
struct Resolver<'n> {
    names: &'n NameTable,
    suggestions_left: usize,
}

impl Resolver<'_> {
    /// The cells these formulas use, and whether every name in them is
    /// defined.
    fn uses(
        &mut self,
        exprs: &mut dyn Iterator<Item = &mut Expr>,
        diagnostics: &mut Vec<Diagnostic>,
    ) -> (Vec<CellId>, bool) {
        let mut uses = Vec::new();
        let ok = resolve_names(
            exprs,
            self.names,
            &mut uses,
            diagnostics,
            &mut self.suggestions_left,
        );
        // Kept for the sheet's life: no spare capacity per cell.
        uses.shrink_to_fit();
        (uses, ok)
    }

    /// A load case's overrides: their formulas, and the formula cells they
    /// replace (a cell a block gives cannot be set). Whether the case is
    /// whole.
    fn case(
        &mut self,
        case: &mut CaseBlock,
        cells: &[CellOrigin],
        diagnostics: &mut Vec<Diagnostic>,
    ) -> bool {
        let mut ok = case.complete;
        for replacement in &mut case.overrides {
            let tolerance = replacement
                .tolerance
                .as_deref_mut()
                .map(Tolerance::expr_mut);
            let (_, resolved) = self.uses(
                &mut std::iter::once(&mut replacement.expr).chain(tolerance),
                diagnostics,
            );
            ok &= resolved;
            match self
                .names
                .get(&replacement.cell.text)
                .map(|&id| (id, cells[id]))
            {
                Some((id, CellOrigin::Formula { .. })) => {
                    replacement.cell.target = Target::Cell(id)
                }
                Some((
                    _,
                    CellOrigin::Unknown { .. }
                    | CellOrigin::Simulated { .. }
                    | CellOrigin::Member { .. },
                )) => {
                    ok = false;
                    diagnostics.push(
                        Diagnostic::error(
                            Code::UndefinedName,
                            replacement.cell_span,
                            format!(
                                "`{}` is given by a block; a case cannot set it",
                                replacement.cell.text
                            ),
                        )
                        .with_help("override the inputs the solve block uses instead"),
                    );
                }
                None => {
                    ok = false;
                    let mut diagnostic = Diagnostic::error(
                        Code::UndefinedName,
                        replacement.cell_span,
                        format!(
                            "`{}` is not a cell of this sheet, so the case cannot override it",
                            replacement.cell.text
                        ),
                    );
                    if let Some(similar) = did_you_mean(&replacement.cell.text, self.names) {
                        diagnostic = diagnostic.with_help(format!("did you mean `{similar}`?"));
                    }
                    diagnostics.push(diagnostic);
                }
            }
        }
        ok
    }
}
