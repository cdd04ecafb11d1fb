//! Load cases and tolerances at the sheet level: the cells a checker looks
//! at, every check at the worst case of the tolerances, and each `case`
//! evaluated with its overrides.

mod corners;
mod ranges;
mod straddle;
mod tables;

use rustc_hash::FxHashMap;

use super::SheetJudgement;
use crate::base::{Code, Diagnostic};
use crate::eval::model::{
    CaseCheck, CaseOutcome, CaseValue, CellRange, CheckRange, CheckResult, CheckStatus, RangeMethod,
};
use crate::eval::{CellStatus, Evaluator};
use crate::sheet::{CellId, Sheet};
use crate::syntax::ast::{ExprKind, NameRef, Target};
use corners::{CornerInput, CornerRange, MAX_CORNER_INPUTS};
use ranges::RangeOf;

/// Ranges over the tolerances: of scalar cells by id (empty when no cell
/// has a tolerance), and of vector cells by component.
#[derive(Default)]
pub(super) struct CellRanges {
    scalars: Vec<Option<CellRange>>,
    vectors: Vec<(CellId, Vec<(f64, f64)>)>,
}

/// The cells tabulated per case: the header's `case_results`, or else every
/// cell a check names directly.
pub(super) fn case_results(sheet: &Sheet, diagnostics: &mut Vec<Diagnostic>) -> Vec<CellId> {
    if !sheet.header.case_results.is_empty() {
        let span = sheet.header.case_results_span.unwrap_or_default();
        return sheet
            .header
            .case_results
            .iter()
            .filter_map(|name| {
                let id = sheet.names.get(name.as_str()).copied();
                if id.is_none() {
                    diagnostics.push(Diagnostic::error(
                        Code::UndefinedName,
                        span,
                        format!("case_results names `{name}`, which is not a cell of this sheet"),
                    ));
                }
                id
            })
            .collect();
    }
    let mut chosen = Vec::new();
    for index in 0..sheet.checks.len() {
        let check = sheet.check(index);
        for side in [&check.lhs, &check.rhs] {
            if let ExprKind::Name(NameRef {
                target: Target::Cell(id),
                ..
            }) = &side.kind
                && !chosen.contains(id)
            {
                chosen.push(*id);
            }
        }
    }
    chosen
}

/// The most (toleranced input, cell) pairs the tolerance analyses of one
/// sheet follow, as written and in all its load cases together: memory
/// grows with the pairs of one analysis (about 100 bytes a pair) and time
/// with all of them (about 0.2 µs a pair), measured 2026-12-03. Past the
/// bound (about 1 GB and 2 s), the worst cases not yet looked for are
/// unknown with the reason rather than exhausting the machine.
pub const MAX_TOLERANCE_PAIRS: usize = 10_000_000;

impl Evaluator<'_> {
    /// Ranges of every cell, the chosen ones refined to their corners, and
    /// every check judged at its worst case (a check that fails there
    /// fails). Where the interval engine cannot follow a result (solve and
    /// simulate blocks, vectors), the sheet is evaluated at the corners of
    /// the inputs that reach it; where that cannot be done either, the
    /// check's worst case is unknown and says why.
    pub(super) fn apply_tolerances(
        &mut self,
        checks: &mut [CheckResult],
        chosen: &[CellId],
        case: Option<&str>,
        budget: &mut usize,
    ) -> CellRanges {
        let n_cells = self.sheet.cells.len();
        let n_toleranced = (0..n_cells)
            .filter(|&cell| self.spreads[cell].is_some())
            .count();
        let pairs = n_toleranced.saturating_mul(n_cells);
        if pairs > *budget {
            // Past the bound, the worst case is not looked for: every check
            // a toleranced input reaches is unknown, and says why.
            let reached = self.reached_by(&self.corner_inputs());
            let spent = MAX_TOLERANCE_PAIRS - *budget;
            let earlier = if spent > 0 {
                format!(", after {spent} pairs spent on the sheet's other analyses")
            } else {
                String::new()
            };
            for (index, result) in checks.iter_mut().enumerate() {
                if result.holds.is_some()
                    && self.sheet.check_uses[index].iter().any(|&id| reached[id])
                {
                    result.worst_unknown = Some(format!(
                        "following {n_toleranced} toleranced inputs through {n_cells} cells ({pairs} pairs{earlier}) is beyond heft's limit of {MAX_TOLERANCE_PAIRS} pairs a sheet"
                    ));
                }
            }
            return CellRanges::default();
        }
        *budget -= pairs;
        let Some(ranges) = self.ranges() else {
            return CellRanges::default();
        };
        let mut cell_ranges: Vec<Option<CellRange>> = (0..n_cells)
            .map(|id| self.range_of(&ranges, RangeOf::Cell(id), chosen.contains(&id)))
            .collect();
        let inputs = self.corner_inputs();
        let reached = self.reached_by(&inputs);
        let mut corner_checks = Vec::new();
        let mut straddled_checks = Vec::new();
        for (index, result) in checks.iter_mut().enumerate() {
            if result.holds.is_none() || !self.sheet.check_uses[index].iter().any(|&id| reached[id])
            {
                continue;
            }
            match self.interval_worst_case(&ranges, index, result, &reached) {
                Some((worst, straddled)) => {
                    result.worst = Some(worst);
                    straddled_checks.extend(straddled.map(|span| (index, span)));
                }
                None => corner_checks.push(index),
            }
        }
        self.note_straddles(&ranges, &cell_ranges, &straddled_checks, case);
        // Results the tolerances reach that the interval engine cannot follow.
        let corner_cells: Vec<CellId> = (0..n_cells)
            .filter(|&id| {
                reached[id]
                    && cell_ranges[id].is_none()
                    && self.statuses[id] == CellStatus::Ok
                    && self.values[id].is_some()
            })
            .collect();
        let mut vector_ranges = Vec::new();
        if !corner_checks.is_empty() || !corner_cells.is_empty() {
            vector_ranges = self.corner_worst_cases(
                &inputs,
                &corner_cells,
                &corner_checks,
                checks,
                &mut cell_ranges,
            );
            self.add_first_order(&ranges, &corner_cells, &mut cell_ranges);
        }
        // A toleranced input's own range is its tolerance, exactly.
        for input in &inputs {
            if let Some(range) = cell_ranges[input.cell].as_mut() {
                range.low = input.nominal - input.below;
                range.high = input.nominal + input.above;
                range.method = RangeMethod::WorstCorners;
            }
        }
        // A result no toleranced input reaches has no range.
        for (id, range) in cell_ranges.iter_mut().enumerate() {
            if !reached[id] {
                *range = None;
            }
        }
        self.bound_table_readings(&reached, &mut cell_ranges, checks);
        for (index, result) in checks.iter_mut().enumerate() {
            let Some(worst) = &result.worst else {
                continue;
            };
            if !worst.passes && result.status == CheckStatus::Passed {
                result.status = CheckStatus::Failed;
                let message = self.worst_case_failure(index, result, case);
                self.diagnostics.push(
                    Diagnostic::error(Code::CheckFailed, result.span, message)
                        .with_help("it passes at the nominal values only; tighten the tolerances or change the design"),
                );
            }
        }
        // Check sides that are plain cells keep their refined ranges.
        for &id in chosen {
            if cell_ranges[id]
                .as_ref()
                .is_some_and(|r| r.method == RangeMethod::Guaranteed)
            {
                cell_ranges[id] = self.range_of(&ranges, RangeOf::Cell(id), true);
            }
        }
        CellRanges {
            scalars: cell_ranges,
            vectors: vector_ranges,
        }
    }

    /// Every toleranced input that evaluated, with its nominal value and
    /// spread.
    fn corner_inputs(&self) -> Vec<CornerInput> {
        (0..self.sheet.cells.len())
            .filter_map(|cell| {
                let spread = self.spreads[cell]?;
                let nominal = self.values[cell]?.scalar()?.si;
                (self.statuses[cell] == CellStatus::Ok).then_some(CornerInput {
                    cell,
                    nominal,
                    below: spread.below,
                    above: spread.above,
                })
            })
            .collect()
    }

    /// Which cells depend on a toleranced input, through any node.
    fn reached_by(&self, inputs: &[CornerInput]) -> Vec<bool> {
        let mut reached = vec![false; self.sheet.cells.len()];
        for input in inputs {
            reached[input.cell] = true;
        }
        for &node in self.node_order() {
            let cells = self.sheet.nodes[node].cells();
            let hit = cells
                .iter()
                .any(|&id| reached[id] || self.uses_of(id).iter().any(|&used| reached[used]));
            if hit {
                for &id in cells {
                    reached[id] = true;
                }
            }
        }
        reached
    }

    /// A check's worst case from the interval engine, if it can follow both
    /// sides.
    fn interval_worst_case(
        &self,
        ranges: &ranges::Ranges,
        index: usize,
        result: &CheckResult,
        reached: &[bool],
    ) -> Option<(CheckRange, Option<crate::base::Span>)> {
        let (lhs, rhs) = (result.lhs?, result.rhs?);
        let check = self.sheet.check(index);
        let compile = |expr| {
            self.compile(expr, &|name| self.input_for(name))
                .ok()
                .filter(|p| ranges.supports(p))
        };
        let (left, right) = (compile(&check.lhs)?, compile(&check.rhs)?);
        // A cell the tolerances reach that a side folded to a constant (a
        // vector, which is no program input) would freeze the worst case at
        // the nominal value: leave such a check to the corners.
        let inputs: Vec<u32> = left.inputs().chain(right.inputs()).collect();
        let folded = self.sheet.check_uses[index]
            .iter()
            .any(|&id| reached[id] && !inputs.contains(&(id as u32)));
        if folded {
            return None;
        }
        let lhs_range = self.range_of(ranges, RangeOf::Program(&left, lhs.si), true)?;
        let rhs_range = self.range_of(ranges, RangeOf::Program(&right, rhs.si), true)?;
        let straddled = RangeOf::Program(&left, lhs.si)
            .straddled(ranges)
            .or_else(|| RangeOf::Program(&right, rhs.si).straddled(ranges));
        Some((
            self.worst_case(check.comparison, lhs_range, rhs_range),
            straddled,
        ))
    }

    /// Worst cases found by evaluating the sheet at the corners of the
    /// toleranced inputs; a check whose corners are too many, or that
    /// cannot be evaluated at one, gets the reason instead.
    fn corner_worst_cases(
        &self,
        inputs: &[CornerInput],
        cells: &[CellId],
        corner_checks: &[usize],
        checks: &mut [CheckResult],
        cell_ranges: &mut [Option<CellRange>],
    ) -> Vec<(CellId, Vec<(f64, f64)>)> {
        let reaching = self.inputs_reaching(inputs, cells, corner_checks);
        let mut vectors = Vec::new();
        if reaching.len() <= MAX_CORNER_INPUTS {
            let found = self.corner_ranges(&reaching, cells, corner_checks, checks);
            for (id, range) in found.cells {
                match range {
                    CornerRange::Scalar(range) => cell_ranges[id] = Some(range),
                    CornerRange::Vector(components) => vectors.push((id, components)),
                    CornerRange::Unknown => {}
                }
            }
            take_corner_checks(found.checks, checks);
            return vectors;
        }
        // Too many together: each check on its own, if its own are few enough.
        for &index in corner_checks {
            let own = self.inputs_reaching(inputs, &[], &[index]);
            if own.len() > MAX_CORNER_INPUTS {
                checks[index].worst_unknown = Some(format!(
                    "{} toleranced inputs reach it through results the interval bounds cannot follow (solve or simulate blocks, vectors), and evaluating the sheet at their 2^{} corners is beyond heft's limit of {} inputs ({} corners)",
                    own.len(),
                    own.len(),
                    MAX_CORNER_INPUTS,
                    1u64 << MAX_CORNER_INPUTS
                ));
                continue;
            }
            let found = self.corner_ranges(&own, &[], &[index], checks);
            take_corner_checks(found.checks, checks);
        }
        vectors
    }

    /// The message of a check that fails at the worst case: at which
    /// corner, or by how much its bounds (a conservative bound where the
    /// range is not exact) cross.
    fn worst_case_failure(&self, index: usize, result: &CheckResult, case: Option<&str>) -> String {
        let check = self.sheet.check(index);
        let label = result
            .label
            .as_deref()
            .map(|l| format!(": {l}"))
            .unwrap_or_default();
        let in_case = case
            .map(|name| format!(" in case `{name}`"))
            .unwrap_or_default();
        let Some(worst) = &result.worst else {
            return String::new();
        };
        let utilization = crate::eval::utilization_note(worst.worst_utilization);
        let statement = format!(
            "{} {} {}",
            result.lhs_text,
            check.comparison.symbol(),
            result.rhs_text
        );
        let show = |si: f64| {
            self.style
                .show_in(si, &result.display.text, result.display.si_factor)
        };
        let (lhs_at, rhs_at) = worst_side(check.comparison, worst);
        match (&result.worst_corner, worst.method) {
            (Some(corner), _) => format!(
                "check fails at the worst case of the tolerances{in_case}{label}: {statement} does not hold at the corner where {}{utilization}",
                self.describe_values(corner)
            ),
            (None, RangeMethod::WorstCorners) => format!(
                "check fails at the worst case of the tolerances{in_case}{label}: {statement} does not hold when {} reaches {} and {} reaches {}{utilization}",
                result.lhs_text,
                show(lhs_at),
                result.rhs_text,
                show(rhs_at),
            ),
            (None, _) => format!(
                "check not shown to hold over the tolerances{in_case}{label}: the guaranteed bounds of {statement} cross: {} up to {} against {} down to {} (bounds: the true worst case may be less severe, but heft cannot show that it holds){utilization}",
                result.lhs_text,
                show(lhs_at),
                result.rhs_text,
                show(rhs_at),
            ),
        }
    }
    /// The steps after the nodes and checks, shared by a whole evaluation
    /// and the notebook: tolerances, load cases, then every check's verdict.
    pub(crate) fn judge_sheet(&mut self, checks: &mut [CheckResult]) -> SheetJudgement {
        let case_results = case_results(self.sheet, &mut self.diagnostics);
        let mut budget = MAX_TOLERANCE_PAIRS;
        let CellRanges {
            scalars: ranges,
            vectors: vector_ranges,
        } = self.apply_tolerances(checks, &case_results, None, &mut budget);
        let withdrawn = self.judge_members(&ranges);
        let (cases, case_diagnostics) =
            evaluate_cases(self.sheet, self.source, &case_results, &mut budget);
        self.diagnostics.extend(case_diagnostics);
        crate::eval::verdict::judge(self.sheet, checks, &cases, &mut self.diagnostics);
        let governing = governing(checks, &cases);
        let sweeps = self.run_sweeps();
        SheetJudgement {
            ranges,
            vector_ranges,
            cases,
            case_results,
            governing,
            withdrawn,
            sweeps,
        }
    }
}

/// Each check's worst case from the corners, or why there is none.
fn take_corner_checks(
    found: Vec<(usize, Result<corners::CornerCheck, String>)>,
    checks: &mut [CheckResult],
) {
    for (index, outcome) in found {
        match outcome {
            Ok(corner) => {
                checks[index].worst_corner = Some(corner.worst_corner);
                checks[index].worst = Some(corner.worst);
            }
            Err(reason) => checks[index].worst_unknown = Some(reason),
        }
    }
}

/// The left and right sides' values at a check's worst case.
fn worst_side(
    comparison: crate::syntax::ast::Comparison,
    worst: &crate::eval::model::CheckRange,
) -> (f64, f64) {
    use crate::syntax::ast::Comparison;
    match comparison {
        Comparison::AtMost | Comparison::Below => (worst.lhs.high, worst.rhs.low),
        Comparison::AtLeast | Comparison::Above => (worst.lhs.low, worst.rhs.high),
    }
}

/// Evaluates every load case; returns the outcomes and the diagnostics that
/// belong to the cases (errors in their overrides, checks that fail in them).
pub(super) fn evaluate_cases(
    sheet: &Sheet,
    source: &str,
    chosen: &[CellId],
    budget: &mut usize,
) -> (Vec<CaseOutcome>, Vec<Diagnostic>) {
    let mut outcomes = Vec::new();
    let mut diagnostics = Vec::new();
    for (case_index, &statement) in sheet.cases.iter().enumerate() {
        let Some(case) = sheet.case_block(statement) else {
            continue;
        };
        let mut outcome = CaseOutcome {
            statement,
            name: case.name.text.to_string(),
            label: case.label.as_ref().map(|l| l.text.clone()),
            results: Vec::new(),
            checks: Vec::new(),
            evaluated: false,
        };
        if sheet.broken_cases[case_index] {
            outcomes.push(outcome);
            continue;
        }
        let overrides: FxHashMap<CellId, _> = case
            .overrides
            .iter()
            .filter_map(|replacement| match replacement.cell.target {
                Target::Cell(id) => Some((id, replacement)),
                _ => None,
            })
            .collect();
        if let Some(diagnostic) = override_loop(sheet, &overrides) {
            diagnostics.push(diagnostic);
            outcomes.push(outcome);
            continue;
        }
        let Overridden {
            mut evaluator,
            checks,
            ranges,
            known,
        } = evaluate_overridden(
            sheet,
            source,
            overrides,
            chosen,
            Some(&case.name.text),
            budget,
        );
        // Keep what is new in this case: errors in its overrides and its
        // failed checks (named with the case); the rest repeats the sheet's.
        for mut diagnostic in evaluator.diagnostics.drain(known..) {
            let in_case = case.head.start() <= diagnostic.span.start()
                && diagnostic.span.start() <= sheet.statements[statement].span.end();
            if diagnostic.code == Code::CheckFailed {
                if !diagnostic.message.contains(" in case `") {
                    diagnostic.message =
                        format!("in case `{}`: {}", case.name.text, diagnostic.message);
                }
                diagnostics.push(diagnostic);
            } else if in_case {
                diagnostics.push(diagnostic);
            }
        }
        outcome.results = chosen
            .iter()
            .map(|&id| CaseValue {
                value: (evaluator.statuses[id] == CellStatus::Ok)
                    .then(|| evaluator.values[id])
                    .flatten(),
                range: ranges.get(id).cloned().flatten(),
            })
            .collect();
        outcome.checks = checks
            .into_iter()
            .enumerate()
            .map(|(index, mut check)| {
                // This case's own verdict, by the one rule: a worst case
                // it could not establish makes it unknown, never passed.
                crate::eval::verdict::judge_check(sheet, index, &mut check, &[]);
                check
            })
            .map(|check| CaseCheck {
                status: check.status,
                holds: check.holds,
                utilization: check.utilization,
                worst: check.worst,
                worst_unknown: check.worst_unknown,
            })
            .collect();
        outcome.evaluated = true;
        outcomes.push(outcome);
    }
    (outcomes, diagnostics)
}

/// The sheet evaluated with some formulas replaced: the evaluator with
/// its values, the checks (not yet judged) and the ranges over the
/// tolerances.
pub(super) struct Overridden<'a> {
    /// The evaluator, holding every cell's value in this evaluation.
    pub(super) evaluator: Evaluator<'a>,
    /// Every check, evaluated and at its worst case, not yet judged.
    pub(super) checks: Vec<CheckResult>,
    /// The chosen cells' ranges over the tolerances.
    pub(super) ranges: Vec<Option<CellRange>>,
    /// How many of the evaluator's diagnostics are the sheet's own (from
    /// linking), before this evaluation's.
    pub(super) known: usize,
}

/// Evaluates the sheet with `overrides` replacing formulas, in the order
/// the replaced formulas need, and its checks at the worst case of the
/// tolerances: what a load case and a point of a sweep both are.
pub(super) fn evaluate_overridden<'a>(
    sheet: &'a Sheet,
    source: &'a str,
    overrides: FxHashMap<CellId, &'a crate::syntax::ast::Override>,
    chosen: &[CellId],
    case: Option<&str>,
    budget: &mut usize,
) -> Overridden<'a> {
    let mut evaluator = super::evaluator(sheet, source);
    let known = evaluator.diagnostics.len();
    let replaced: Vec<(CellId, Vec<CellId>)> = overrides
        .iter()
        .map(|(&id, replacement)| (id, crate::sheet::override_uses(replacement)))
        .collect();
    evaluator.case_order = Some(sheet.order_with_replaced_uses(&replaced));
    evaluator.overrides = overrides;
    evaluator.run_nodes();
    let mut checks: Vec<CheckResult> = (0..sheet.checks.len())
        .map(|index| evaluator.evaluate_check(index))
        .collect();
    let ranges = evaluator
        .apply_tolerances(&mut checks, chosen, case, budget)
        .scalars;
    Overridden {
        evaluator,
        checks,
        ranges,
        known,
    }
}

/// A case whose override uses a cell that depends on the overridden cell
/// would loop; reports the first such override.
fn override_loop(
    sheet: &Sheet,
    overrides: &FxHashMap<CellId, &crate::syntax::ast::Override>,
) -> Option<Diagnostic> {
    // Cells that use each cell, to walk downstream.
    let mut used_by: Vec<Vec<CellId>> = vec![Vec::new(); sheet.cells.len()];
    for (id, uses) in sheet.uses.iter().enumerate() {
        for &used in uses {
            used_by[used].push(id);
        }
    }
    for (&target, replacement) in overrides {
        let uses = crate::sheet::override_uses(replacement);
        let mut seen = vec![false; sheet.cells.len()];
        let mut stack = vec![target];
        while let Some(cell) = stack.pop() {
            if uses.contains(&cell) {
                return Some(
                    Diagnostic::error(
                        Code::Cycle,
                        replacement.span,
                        format!(
                            "in this case `{}` would depend on itself through `{}`",
                            replacement.cell.text,
                            sheet.cell(cell).name.text
                        ),
                    )
                    .with_help("a case's formula may use only cells that do not depend on the cell it replaces"),
                );
            }
            for &next in &used_by[cell] {
                if !seen[next] {
                    seen[next] = true;
                    stack.push(next);
                }
            }
        }
    }
    None
}

/// For each check, the case with the highest utilization: `None` for the
/// sheet as written, else the case's index.
pub(super) fn governing(checks: &[CheckResult], cases: &[CaseOutcome]) -> Vec<Option<usize>> {
    checks
        .iter()
        .enumerate()
        .map(|(index, check)| {
            let mut best = (
                check.governing_utilization().unwrap_or(f64::NEG_INFINITY),
                None,
            );
            for (case_index, case) in cases.iter().enumerate() {
                if let Some(u) = case
                    .checks
                    .get(index)
                    .and_then(CaseCheck::governing_utilization)
                    && u > best.0
                {
                    best = (u, Some(case_index));
                }
            }
            best.1
        })
        .collect()
}
