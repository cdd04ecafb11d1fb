//! Linking what simulate blocks add to a sheet: event names used as points
//! of a run (`t at slow`), the block each run query reads (`v at stop`), and
//! states used where a formula would see only one moment of the run.

use rustc_hash::{FxHashMap as HashMap, FxHashSet as HashSet};

use super::{CellId, CellOrigin};
use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::syntax::ast::{Expr, ExprKind, Ident, RunPoint, Statement, StatementKind, Target};

/// Every expression of a statement, mutably.
pub(super) fn statement_exprs_mut(kind: &mut StatementKind) -> Vec<&mut Expr> {
    match kind {
        StatementKind::Cell(cell) => vec![&mut cell.expr],
        StatementKind::Parts(block) => block.cells.iter_mut().map(|cell| &mut cell.expr).collect(),
        StatementKind::Lift(block) => block.cells.iter_mut().map(|cell| &mut cell.expr).collect(),
        StatementKind::Body(body) => vec![&mut body.resultant.expr],
        StatementKind::Check(check) => vec![&mut check.lhs, &mut check.rhs],
        StatementKind::Solve(block) => {
            let super::SolveBlock {
                unknowns,
                equations,
                ..
            } = &mut **block;
            equations
                .iter_mut()
                .flat_map(|equation| [&mut equation.lhs, &mut equation.rhs])
                .chain(unknowns.iter_mut().filter_map(|u| u.guess.as_mut()))
                .collect()
        }
        StatementKind::Simulate(block) => block.exprs_mut().collect(),
        StatementKind::Sweep(sweep) => sweep.exprs_mut().collect(),
        StatementKind::Case(case) => case
            .overrides
            .iter_mut()
            .flat_map(|replacement| {
                let tolerance = replacement
                    .tolerance
                    .as_deref_mut()
                    .map(super::Tolerance::expr_mut);
                std::iter::once(&mut replacement.expr).chain(tolerance)
            })
            .collect(),
        StatementKind::Heading { .. }
        | StatementKind::Note { .. }
        | StatementKind::Review(_)
        | StatementKind::SignOff(_)
        | StatementKind::Use(_)
        | StatementKind::Table(_)
        | StatementKind::Invalid => Vec::new(),
    }
}

/// Turns `at NAME` into an event point where NAME is an event of a simulate
/// block and no cell; reports event names that clash with cells or repeat
/// within their block.
pub(super) fn name_run_events(
    statements: &mut [Statement],
    names: &super::NameTable,
    diagnostics: &mut Vec<Diagnostic>,
) {
    let mut events: HashSet<String> = HashSet::default();
    for statement in statements.iter() {
        let StatementKind::Simulate(block) = &statement.kind else {
            continue;
        };
        let mut seen: HashMap<&str, Span> = HashMap::default();
        for name in block.events.iter().filter_map(|event| event.name.as_ref()) {
            if names.contains_key(name.text.as_str()) {
                diagnostics.push(
                    Diagnostic::error(
                        Code::DuplicateName,
                        name.span,
                        format!("the event `{}` has the name of a cell", name.text),
                    )
                    .with_help("give the event a name no cell uses"),
                );
            } else if let Some(&first) = seen.get(name.text.as_str()) {
                diagnostics.push(
                    Diagnostic::error(
                        Code::DuplicateName,
                        name.span,
                        format!("the event `{}` is already defined in this block", name.text),
                    )
                    .with_label(first, "first defined here"),
                );
            } else {
                seen.insert(&name.text, name.span);
                events.insert(name.text.to_string());
            }
        }
    }
    if events.is_empty() {
        return;
    }
    for statement in statements.iter_mut() {
        for expr in statement_exprs_mut(&mut statement.kind) {
            expr.walk_run_queries_mut(&mut |query| {
                if let RunPoint::Time(Expr {
                    kind: ExprKind::Name(name),
                    span,
                }) = &query.point
                    && events.contains(&*name.text)
                    && !names.contains_key(&name.text)
                {
                    query.point = RunPoint::Event(Ident {
                        text: name.text.clone(),
                        span: *span,
                    });
                }
            });
        }
    }
}

/// The simulate block (statement index) a cell belongs to, if it is the
/// time or a state of one.
fn block_of(cells: &[CellOrigin], target: Target) -> Option<usize> {
    match target {
        Target::Cell(id) => match cells.get(id)? {
            CellOrigin::Simulated { statement, .. } => Some(*statement),
            _ => None,
        },
        _ => None,
    }
}

/// Settles which block each run query reads, and reports states and times
/// of a run used outside a run query. The cells, checks and blocks with
/// such a problem are marked broken. `reads_runs` says whether any
/// statement holds a run query: without one and without simulate blocks
/// there is nothing to do.
pub(super) fn link_run_queries(
    reads_runs: bool,
    statements: &mut [Statement],
    cells: &[CellOrigin],
    checks: &[usize],
    broken: &mut [bool],
    broken_checks: &mut [bool],
    diagnostics: &mut Vec<Diagnostic>,
) {
    let heads: HashMap<usize, Span> = statements
        .iter()
        .enumerate()
        .filter_map(|(index, statement)| match &statement.kind {
            StatementKind::Simulate(block) => Some((index, block.head)),
            _ => None,
        })
        .collect();
    if heads.is_empty() && !reads_runs {
        return;
    }
    let mut cells_of: HashMap<usize, Vec<CellId>> = HashMap::default();
    for (id, origin) in cells.iter().enumerate() {
        let statement = match *origin {
            CellOrigin::Formula { statement }
            | CellOrigin::Unknown { statement, .. }
            | CellOrigin::Simulated { statement, .. }
            | CellOrigin::Member { statement, .. } => statement,
        };
        cells_of.entry(statement).or_default().push(id);
    }
    for (index, statement) in statements.iter_mut().enumerate() {
        let own_block = matches!(statement.kind, StatementKind::Simulate(_)).then_some(index);
        let mut found = Vec::new();
        for expr in statement_exprs_mut(&mut statement.kind) {
            expr.walk_run_queries_mut(&mut |query| {
                let mut blocks: Vec<(usize, String)> = Vec::new();
                let mut note = |expr: &Expr| {
                    expr.walk(&mut |node| {
                        if let ExprKind::Name(name) = &node.kind
                            && let Some(block) = block_of(cells, name.target)
                            && !blocks.iter().any(|(b, _)| *b == block)
                        {
                            blocks.push((block, name.text.to_string()));
                        }
                    })
                };
                note(&query.value);
                if let RunPoint::Extremum { of, .. } = &query.point {
                    note(of);
                }
                match blocks.as_slice() {
                    [(block, _)] if Some(*block) == own_block => found.push(
                        Diagnostic::error(
                            Code::BadRunQuery,
                            query.value.span,
                            "a simulate block cannot read its own run: the run is not known while it is being computed",
                        )
                        .with_help("use the state itself (`x`), or read the run from a cell after the block"),
                    ),
                    [(block, _)] => query.block = Some(*block),
                    [] => found.push(
                        Diagnostic::error(
                            Code::BadRunQuery,
                            query.value.span,
                            "this value names no state or time of a simulate block, so no run can give it",
                        )
                        .with_help("name a state or the time of the run: `v at stop`, `t at stop`, `max of k * x`"),
                    ),
                    [(first, a), (second, b), ..] => {
                        let mut diagnostic = Diagnostic::error(
                            Code::BadRunQuery,
                            query.value.span,
                            format!("this value mixes two simulate runs: `{a}` and `{b}` belong to different blocks"),
                        )
                        .with_help("read each run on its own, then combine the cells");
                        for block in [first, second] {
                            if let Some(&head) = heads.get(block) {
                                diagnostic = diagnostic.with_label(head, "a simulate block");
                            }
                        }
                        found.push(diagnostic);
                    }
                }
            });
            let mut outside = Vec::new();
            names_outside_queries(expr, &mut outside);
            for (span, name, target) in outside {
                let Some(block) = block_of(cells, target) else {
                    continue;
                };
                if Some(block) == own_block {
                    continue;
                }
                let mut diagnostic = Diagnostic::error(
                    Code::BadRunQuery,
                    span,
                    format!(
                        "`{name}` changes over a simulate run, so a formula cannot use it on its own"
                    ),
                )
                .with_help(format!(
                    "ask for one value of the run: `{name} at end`, `{name} at stop`, `{name} at 2 s` or `max of {name}`"
                ));
                if let Some(&head) = heads.get(&block) {
                    diagnostic = diagnostic.with_label(head, "the run it belongs to");
                }
                found.push(diagnostic);
            }
        }
        if found.is_empty() {
            continue;
        }
        diagnostics.extend(found);
        if let Some(check) = checks.iter().position(|&at| at == index) {
            broken_checks[check] = true;
        }
        for &id in cells_of.get(&index).into_iter().flatten() {
            broken[id] = true;
        }
    }
}

/// Whether a statement holds a run query at all (a sheet without simulate
/// blocks skips the pass unless it asks for a run).
pub(super) fn mentions_run_query(statement: &Statement) -> bool {
    let (first, second): (Option<&Expr>, Option<&Expr>) = match &statement.kind {
        StatementKind::Cell(cell) => (Some(&cell.expr), None),
        StatementKind::Check(check) => (Some(&check.lhs), Some(&check.rhs)),
        StatementKind::Solve(block) => {
            return block
                .equations
                .iter()
                .any(|equation| has_run_query(&equation.lhs) || has_run_query(&equation.rhs));
        }
        _ => (None, None),
    };
    first.into_iter().chain(second).any(has_run_query)
}

/// Whether `expr` holds a run query.
fn has_run_query(expr: &Expr) -> bool {
    let mut found = false;
    expr.walk(&mut |node| found |= matches!(node.kind, ExprKind::RunQuery(_)));
    found
}

/// Names used outside the value of any run query (a query's time point
/// counts as outside: it is evaluated as an ordinary formula).
fn names_outside_queries(expr: &Expr, out: &mut Vec<(Span, String, Target)>) {
    match &expr.kind {
        ExprKind::Name(name) => out.push((expr.span, name.text.to_string(), name.target)),
        ExprKind::Negate(inner) | ExprKind::Component { vector: inner, .. } => {
            names_outside_queries(inner, out)
        }
        ExprKind::Binary { lhs, rhs, .. } => {
            names_outside_queries(lhs, out);
            names_outside_queries(rhs, out);
        }
        ExprKind::Call { args, .. } => args.iter().for_each(|arg| names_outside_queries(arg, out)),
        ExprKind::Conditional(conditional) => {
            conditional
                .test
                .for_each_side(&mut |side| names_outside_queries(side, out));
            names_outside_queries(&conditional.then, out);
            names_outside_queries(&conditional.otherwise, out);
        }
        ExprKind::RunQuery(query) => {
            if let RunPoint::Time(time) = &query.point {
                names_outside_queries(time, out);
            }
        }
        ExprKind::Lookup(lookup) => lookup
            .keys
            .iter()
            .for_each(|key| names_outside_queries(key, out)),
        ExprKind::Number(_)
        | ExprKind::Quantity { .. }
        | ExprKind::Slope { .. }
        | ExprKind::UnitValue(_)
        | ExprKind::Invalid => {}
    }
}
