//! A check's margin over a sweep: between two neighbouring points where its
//! verdict changes, the input value where its utilization reaches exactly
//! 100 %, found by root finding on the sheet itself and verified by
//! evaluating the sheet there and on either side.
//!
//! The root finder is `numeric::find_crossing` (Illinois regula falsi with
//! bisection whenever it stalls), the one simulate events use: the
//! utilization along a sweep is a function of one variable with a sign
//! change bracketed by the table, which is exactly what it is for.

use super::{Evaluation, Study};
use crate::eval::{Crossing, MARGIN_TOLERANCE, Margin, SweepCheck, SweepPoint, VerifiedMargin};

/// The bracket, as a fraction of the range, to which a margin is located:
/// far below what any figure shows, and a few steps of bisection beyond
/// what the secant reaches on a smooth utilization.
const MARGIN_RESOLUTION: f64 = 1e-12;

/// How far either side of a margin (as a fraction of the range, at most a
/// quarter of the bracket) the verdict is looked at to confirm it changes
/// there.
const SIDE_OFFSET: f64 = 1e-6;

/// The most evaluations one margin search may take: `find_crossing` takes
/// at most 200 iterations of two evaluations, then three to verify.
const MAX_MARGIN_EVALUATIONS: usize = 403;

impl Study<'_, '_> {
    /// A check's margin over the sweep, from its verdicts at the points.
    pub(super) fn margin(
        &mut self,
        check: usize,
        points: &[SweepPoint],
        fractions: &[f64],
    ) -> Margin {
        let verdicts: Vec<Option<bool>> = points
            .iter()
            .map(|point| point.checks.get(check).and_then(SweepCheck::passed))
            .collect();
        let unknown_points = verdicts.iter().filter(|v| v.is_none()).count();
        let mut crossings = Vec::new();
        for k in 1..points.len() {
            if let (Some(before), Some(after)) = (verdicts[k - 1], verdicts[k])
                && before != after
            {
                crossings.push(self.crossing(
                    check,
                    (fractions[k - 1], &points[k - 1]),
                    (fractions[k], &points[k]),
                    before,
                ));
            }
        }
        if unknown_points > 0 {
            return Margin::NotEstablished {
                unknown_points,
                crossings,
            };
        }
        match (crossings.is_empty(), verdicts.first().copied().flatten()) {
            (true, Some(true)) => Margin::PassesThroughout,
            (true, _) => Margin::FailsThroughout,
            (false, _) => Margin::Crossings(crossings),
        }
    }

    /// The crossing between two neighbouring points whose verdicts differ:
    /// the check passes at the first if `passes_first`.
    fn crossing(
        &mut self,
        check: usize,
        (first, first_point): (f64, &SweepPoint),
        (second, second_point): (f64, &SweepPoint),
        passes_first: bool,
    ) -> Crossing {
        let increasing = first_point.input < second_point.input;
        let utilization = |point: &SweepPoint| point.checks.get(check).and_then(|c| c.utilization);
        let at = match (utilization(first_point), utilization(second_point)) {
            (Some(u_first), Some(u_second)) => {
                self.find_margin(check, (first, u_first), (second, u_second), passes_first)
            }
            _ => Err("the check has no utilization (it compares with zero), so there is no 100 % point to find; its verdict changes between these points".to_string()),
        };
        Crossing {
            between: (first_point.input, second_point.input),
            passes_below: passes_first == increasing,
            at,
        }
    }

    /// Finds where the utilization reaches 100 % between two fractions of
    /// the range, then verifies it: the sheet evaluated there gives a
    /// utilization within [`MARGIN_TOLERANCE`] of 100 %, passes on the side
    /// it passed on and fails on the other.
    fn find_margin(
        &mut self,
        check: usize,
        (first, u_first): (f64, f64),
        (second, u_second): (f64, f64),
        passes_first: bool,
    ) -> Result<VerifiedMargin, String> {
        let n_cells = self.evaluator.sheet.cells.len().max(1);
        let cost = MAX_MARGIN_EVALUATIONS.saturating_mul(n_cells);
        if self.evaluations_left < cost {
            return Err(format!(
                "not searched: a search may take {cost} cell evaluations, and the sweep's margins have {} of their {} left",
                self.evaluations_left,
                super::MAX_SWEEP_CELL_EVALUATIONS
            ));
        }
        // Negative on the passing side, positive on the failing side.
        let toward_failure = |u: f64| if passes_first { u - 1.0 } else { 1.0 - u };
        let mut evaluations = 0usize;
        let root = {
            let mut excess = |fraction: f64| {
                evaluations += 1;
                self.checks_at(fraction)
                    .checks
                    .get(check)
                    .and_then(|c| c.utilization)
                    .map_or(f64::NAN, toward_failure)
            };
            crate::numeric::find_crossing(
                &mut excess,
                (first, toward_failure(u_first)),
                (second, toward_failure(u_second)),
                |value| value > 0.0,
                MARGIN_RESOLUTION,
            )
        };
        let offset = SIDE_OFFSET.min(0.25 * (second - first));
        let at: Evaluation = self.checks_at(root);
        let below = self.checks_at((root - offset).max(first));
        let above = self.checks_at((root + offset).min(second));
        self.evaluations_left = self
            .evaluations_left
            .saturating_sub((evaluations + 3).saturating_mul(n_cells));
        let (Some(input), Some(utilization)) =
            (at.input, at.checks.get(check).and_then(|c| c.utilization))
        else {
            return Err("the sheet could not be evaluated where the root finder ended".to_string());
        };
        if (utilization - 1.0).abs() > MARGIN_TOLERANCE {
            return Err(format!(
                "the root finder ended where the utilization is {} %, not within {} of 100 %: the utilization may jump there",
                crate::units::format_significant(utilization * 100.0, 6),
                crate::units::format_significant(MARGIN_TOLERANCE, 1)
            ));
        }
        let verdict =
            |evaluation: &Evaluation| evaluation.checks.get(check).and_then(SweepCheck::passed);
        let (pass_side, fail_side) = if passes_first {
            (verdict(&below), verdict(&above))
        } else {
            (verdict(&above), verdict(&below))
        };
        if pass_side != Some(true) || fail_side != Some(false) {
            return Err(
                "the check does not pass on one side of the point found and fail on the other"
                    .to_string(),
            );
        }
        Ok(VerifiedMargin { input, utilization })
    }
}
