//! Load cases and tolerances at the sheet level: the cells a checker looks
//! at, every check at the worst case of the tolerances, and each `case`
//! evaluated with its overrides.

use rustc_hash::FxHashMap;

use super::model::{CaseCheck, CaseOutcome, CaseValue, CellRange, CheckResult, CheckStatus};
use super::ranges::RangeOf;
use super::{CellStatus, Evaluator};
use crate::diag::{Code, Diagnostic};
use crate::sheet::{CellId, Sheet};
use crate::syntax::ast::{ExprKind, NameRef, Target};
use crate::units;

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

impl Evaluator<'_> {
    /// Ranges of every cell, the chosen ones refined to their corners, and
    /// every check judged at its worst case (a check that fails there fails).
    pub(super) fn apply_tolerances(
        &mut self,
        checks: &mut [CheckResult],
        chosen: &[CellId],
        case: Option<&str>,
    ) -> Vec<Option<CellRange>> {
        let Some(ranges) = self.ranges() else {
            return Vec::new();
        };
        let mut cell_ranges: Vec<Option<CellRange>> = (0..self.sheet.cells.len())
            .map(|id| self.range_of(&ranges, RangeOf::Cell(id), chosen.contains(&id)))
            .collect();
        for (index, result) in checks.iter_mut().enumerate() {
            let (Some(lhs), Some(rhs)) = (result.lhs, result.rhs) else {
                continue;
            };
            let check = self.sheet.check(index);
            let compile = |expr| {
                self.compile(expr, &|name| self.input_for(name))
                    .ok()
                    .filter(|p| ranges.supports(p))
            };
            let (Some(left), Some(right)) = (compile(&check.lhs), compile(&check.rhs)) else {
                continue;
            };
            let sides = (
                self.range_of(&ranges, RangeOf::Program(&left, lhs.si), true),
                self.range_of(&ranges, RangeOf::Program(&right, rhs.si), true),
            );
            let (Some(lhs_range), Some(rhs_range)) = sides else {
                continue;
            };
            let worst = self.worst_case(check.comparison, lhs_range, rhs_range);
            if !worst.passes && result.status == CheckStatus::Passed {
                result.status = CheckStatus::Failed;
                let label = result
                    .label
                    .as_deref()
                    .map(|l| format!(": {l}"))
                    .unwrap_or_default();
                let in_case = case
                    .map(|name| format!(" in case `{name}`"))
                    .unwrap_or_default();
                let utilization = worst
                    .worst_utilization
                    .map(|u| {
                        format!(
                            " (utilization {} %)",
                            units::format_significant(u * 100.0, 4)
                        )
                    })
                    .unwrap_or_default();
                self.diagnostics.push(
                    Diagnostic::error(
                        Code::CheckFailed,
                        result.span,
                        format!(
                            "check fails at the worst case of the tolerances{in_case}{label}: {} {} {} does not hold when {} reaches {} and {} reaches {}{utilization}",
                            result.lhs_text,
                            check.comparison.symbol(),
                            result.rhs_text,
                            result.lhs_text,
                            self.style.show_in(worst_side(check.comparison, &worst).0, &result.display.text, result.display.si_factor),
                            result.rhs_text,
                            self.style.show_in(worst_side(check.comparison, &worst).1, &result.display.text, result.display.si_factor),
                        ),
                    )
                    .with_help("it passes at the nominal values only; tighten the tolerances or change the design"),
                );
            }
            result.worst = Some(worst);
        }
        // Check sides that are plain cells keep their refined ranges.
        for &id in chosen {
            if cell_ranges[id].as_ref().is_some_and(|r| !r.at_corners) {
                cell_ranges[id] = self.range_of(&ranges, RangeOf::Cell(id), true);
            }
        }
        cell_ranges
    }

    /// Runs every node of the sheet.
    pub(super) fn run_nodes(&mut self) {
        for &node in &self.sheet.order.order {
            self.run_node(node);
        }
    }

    /// Runs one node: a cell, a solve block or a simulate block.
    pub(super) fn run_node(&mut self, node: crate::sheet::NodeId) {
        let sheet = self.sheet;
        match &sheet.nodes[node] {
            crate::sheet::Node::Cell(id) => self.evaluate_cell(*id),
            crate::sheet::Node::Solve {
                statement,
                unknowns,
            } => self.evaluate_solve(*statement, unknowns),
            crate::sheet::Node::Simulate { statement, cells } => {
                self.evaluate_simulate(*statement, cells)
            }
        }
    }
}

/// The left and right sides' values at a check's worst case.
fn worst_side(
    comparison: crate::syntax::ast::Comparison,
    worst: &super::model::CheckRange,
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
        let mut evaluator = Evaluator::new(sheet, source);
        let known = evaluator.diagnostics.len();
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
        evaluator.overrides = overrides;
        evaluator.run_nodes();
        let mut checks: Vec<CheckResult> = (0..sheet.checks.len())
            .map(|index| evaluator.evaluate_check(index))
            .collect();
        let ranges = evaluator.apply_tolerances(&mut checks, chosen, Some(&case.name.text));
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
            .map(|check| CaseCheck {
                status: check.status,
                utilization: check.utilization,
                worst: check.worst,
            })
            .collect();
        outcome.evaluated = true;
        outcomes.push(outcome);
    }
    (outcomes, diagnostics)
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
        let uses = super::override_uses(replacement);
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
