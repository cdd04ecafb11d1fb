//! Sweep blocks: the sheet evaluated at a range of values of one input —
//! each point a load case with that one override, evaluated by the load
//! cases' own machinery (`cases::evaluate_overridden`) — tabulated with the
//! shown results and every check's utilization and verdict, and each
//! check's margin: where its utilization reaches 100 % (`margins.rs`).
//!
//! A sweep is a study: it never changes a verdict, and the findings of its
//! points are not the sheet's (a check that fails at some value of the
//! range is what the study shows, not an error).

mod margins;

use rustc_hash::FxHashMap;

use super::cases::{MAX_TOLERANCE_PAIRS, Overridden, evaluate_overridden};
use crate::base::{Code, Diagnostic, Span};
use crate::eval::{CellStatus, Evaluator, SweepCheck, SweepColumn, SweepPoint, SweepReport};
use crate::sheet::{CellId, CellOrigin};
use crate::syntax::ast::{
    BinaryOp, Expr, ExprKind, NameRef, Override, StatementKind, SweepBlock, SweepSpacing, Target,
};
use crate::units::{DisplayUnit, Value, pick_unit};

/// The most points one sweep evaluates: each is a whole evaluation of the
/// sheet, so a sweep costs at most this many evaluations plus its margins'.
pub const MAX_SWEEP_POINTS: usize = 1000;

/// The most cell evaluations (points × cells) one sweep may spend on its
/// points, and as many again on its margin searches: past the first the
/// sweep is refused (`sweep-too-large`), past the second a margin not yet
/// searched says so, rather than running for minutes.
pub const MAX_SWEEP_CELL_EVALUATIONS: usize = 20_000_000;

/// How close (as a fraction of the range) a step count must come to a
/// whole number to count as one: `0.2 m to 1.4 m step 0.1 m` is 12 steps,
/// though 1.2 / 0.1 is 11.999999999999998 in binary.
const WHOLE_STEPS: f64 = 1e-9;

impl Evaluator<'_> {
    /// Every sweep block of the sheet, studied with the sheet as written
    /// (this evaluator's values): one report per sweep statement, in file
    /// order, whether or not it could run.
    pub(super) fn run_sweeps(&mut self) -> Vec<SweepReport> {
        let sheet = self.sheet;
        sheet
            .statements
            .iter()
            .enumerate()
            .filter_map(|(index, statement)| match &statement.kind {
                StatementKind::Sweep(block) => Some(self.run_sweep(index, block)),
                _ => None,
            })
            .collect()
    }

    /// One sweep block: checked, then evaluated at every point, then each
    /// check's margin found and verified.
    fn run_sweep(&mut self, statement: usize, block: &SweepBlock) -> SweepReport {
        let source = self.source;
        let name = block
            .variable_name()
            .map_or_else(String::new, |name| name.text.to_string());
        let mut report = SweepReport {
            statement,
            head: block.head,
            title: Span::new(block.head.start(), block.spacing.expr().span.end())
                .text(source)
                .to_string(),
            label: block.label.as_ref().map(|label| label.text.clone()),
            variable: block.variable_cell(),
            variable_name: name,
            display: DisplayUnit::none(),
            shown: Vec::new(),
            points: Vec::new(),
            margins: Vec::new(),
            short_last_step: None,
        };
        report.shown = block
            .shown
            .iter()
            .map(|expr| self.shown_column(expr, source))
            .collect();
        if !block.complete {
            return report; // its parse error is reported
        }
        let Some(plan) = self.plan(block) else {
            return report;
        };
        report.display = self.display_unit(plan.input, self.values[plan.input]).0;
        report.short_last_step = plan.short_last_step;
        let mut study = Study::new(self, block, &plan);
        report.points = plan
            .fractions
            .iter()
            .map(|&fraction| study.point(fraction))
            .collect();
        report.margins = (0..self.sheet.checks.len())
            .map(|check| study.margin(check, &report.points, &plan.fractions))
            .collect();
        report
    }

    /// A shown result's column: its text, and the unit it is shown in (a
    /// cell's own unit for a cell's name). An expression that cannot be
    /// evaluated as written is reported here, once.
    fn shown_column(&mut self, expr: &Expr, source: &str) -> SweepColumn {
        let label = expr.span.text(source).to_string();
        let value = match self.eval(expr) {
            Ok(value) => Some(value),
            Err(diagnostic) => {
                // A value blocked by a failed cell is reported at that cell.
                if !self.blocked_by_failed_cell(expr) {
                    self.diagnostics.push(*diagnostic);
                }
                None
            }
        };
        let display = match (&expr.kind, value) {
            (
                ExprKind::Name(NameRef {
                    target: Target::Cell(id),
                    ..
                }),
                value,
            ) => self.display_unit(*id, value).0,
            (_, Some(value)) => {
                pick_unit(value.dimension(), value.magnitude_si(), self.style.system)
            }
            (_, None) => DisplayUnit::none(),
        };
        SweepColumn { label, display }
    }

    /// Whether an expression names a cell that failed (its own finding
    /// says so).
    fn blocked_by_failed_cell(&self, expr: &Expr) -> bool {
        let mut blocked = false;
        expr.walk(&mut |node| {
            if let ExprKind::Name(NameRef {
                target: Target::Cell(id),
                ..
            }) = &node.kind
            {
                blocked |= self.statuses[*id] != CellStatus::Ok;
            }
        });
        blocked
    }

    /// What the sweep's head asks for, checked: the input, its bounds and
    /// the points as fractions of the range. `None` (with a finding) when
    /// the block cannot run.
    fn plan(&mut self, block: &SweepBlock) -> Option<Plan> {
        let variable = block.variable_name()?;
        let at = block.variable.span;
        let input = match variable.target {
            Target::Cell(id) => id,
            Target::Constant(_) => {
                self.diagnostics.push(
                    Diagnostic::error(
                        Code::SweepNotInput,
                        at,
                        format!("`{}` is a built-in constant; a sweep varies an input cell of the sheet", variable.text),
                    )
                    .with_help("define the value as a cell (`g_site = 9.81 m/s^2`), use it, and sweep that"),
                );
                return None;
            }
            Target::Imported { .. } => {
                self.diagnostics.push(
                    Diagnostic::error(
                        Code::SweepNotInput,
                        at,
                        format!("`{}` is a cell of a used sheet; a sweep varies an input cell of this sheet", variable.text),
                    )
                    .with_help("copy the value into a cell of this sheet, use that cell, and sweep it"),
                );
                return None;
            }
            Target::Unresolved => return None, // reported as undefined
        };
        if !self.check_input(input, at) {
            return None;
        }
        let dimension = self.values[input]?.scalar()?.dimension;
        let from = self.bound(&block.from, input, dimension)?;
        let to = self.bound(&block.to, input, dimension)?;
        if from == to {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::BadSweepRange,
                    block.from.span.to(block.to.span),
                    "the sweep's range is empty: it starts and ends at the same value",
                )
                .with_help("give two different values: `from 0.2 m to 1.4 m`"),
            );
            return None;
        }
        let (fractions, short_last_step) = self.fractions(&block.spacing, from, to, dimension)?;
        let n_cells = self.sheet.cells.len().max(1);
        if fractions.len().saturating_mul(n_cells) > MAX_SWEEP_CELL_EVALUATIONS {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::SweepTooLarge,
                    block.spacing.expr().span,
                    format!(
                        "{} points of a sheet of {n_cells} cells are {} cell evaluations, beyond heft's limit of {MAX_SWEEP_CELL_EVALUATIONS} a sweep",
                        fractions.len(),
                        fractions.len().saturating_mul(n_cells)
                    ),
                )
                .with_help("sweep fewer points"),
            );
            return None;
        }
        Some(Plan {
            input,
            from,
            to,
            fractions,
            short_last_step,
        })
    }

    /// Whether the swept cell is an input: a formula cell written as one
    /// quantity (`x_cg = 0.8 m`, so a scalar), that evaluated.
    fn check_input(&mut self, input: CellId, at: Span) -> bool {
        let name = self.sheet.cell(input).name.text.to_string();
        let not_input = |message: String, help: &str| {
            Diagnostic::error(Code::SweepNotInput, at, message).with_help(help.to_string())
        };
        let is_formula = matches!(self.sheet.cells[input], CellOrigin::Formula { .. })
            && self.sheet.body(input).is_none();
        if !is_formula {
            self.diagnostics.push(not_input(
                format!("`{name}` is given by a block or a body, not written as an input"),
                "sweep one of the inputs it comes from",
            ));
            return false;
        }
        if !self.display_unit(input, self.values[input]).1 {
            self.diagnostics.push(not_input(
                format!("`{name}` is computed from a formula; a sweep varies an input, a cell written as one quantity (`x_cg = 0.8 m`)"),
                "sweep one of the inputs its formula uses",
            ));
            return false;
        }
        if self.statuses[input] != CellStatus::Ok {
            return false; // its own finding says why
        }
        true
    }

    /// A bound's value (SI): of the input's dimension, finite, and not
    /// depending on the swept input.
    fn bound(
        &mut self,
        expr: &Expr,
        input: CellId,
        dimension: crate::units::Dimension,
    ) -> Option<f64> {
        let name = self.sheet.cell(input).name.text.to_string();
        if self.depends_on(expr, input) {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::BadSweepRange,
                    expr.span,
                    format!("this bound depends on `{name}`, the input being swept"),
                )
                .with_help(
                    "write the bounds as values, or from cells the swept input does not feed",
                ),
            );
            return None;
        }
        let value = match self.eval(expr) {
            Ok(value) => value,
            Err(diagnostic) => {
                if !self.blocked_by_failed_cell(expr) {
                    self.diagnostics.push(*diagnostic);
                }
                return None;
            }
        };
        let bad = |message: String| {
            Diagnostic::error(Code::BadSweepRange, expr.span, message)
                .with_help(format!("give the bounds in a unit of `{name}`'s dimension"))
        };
        match value {
            Value::Scalar(q) if q.dimension == dimension && q.si.is_finite() => Some(q.si),
            Value::Scalar(q) if q.dimension == dimension => {
                self.diagnostics
                    .push(bad("this bound is not finite".to_string()));
                None
            }
            Value::Scalar(q) => {
                self.diagnostics.push(bad(format!(
                    "this bound is {} but `{name}` is {}",
                    q.dimension.describe(),
                    dimension.describe()
                )));
                None
            }
            Value::Vector(_) => {
                self.diagnostics
                    .push(bad("a bound is a scalar, not a vector".to_string()));
                None
            }
        }
    }

    /// Whether an expression uses the input or anything computed from it.
    fn depends_on(&self, expr: &Expr, input: CellId) -> bool {
        let mut downstream = vec![false; self.sheet.cells.len()];
        downstream[input] = true;
        for id in self.sheet.cell_order() {
            if self.sheet.uses[id].iter().any(|&used| downstream[used]) {
                downstream[id] = true;
            }
        }
        let mut depends = false;
        expr.walk(&mut |node| {
            if let ExprKind::Name(NameRef {
                target: Target::Cell(id),
                ..
            }) = &node.kind
            {
                depends |= downstream[*id];
            }
        });
        depends
    }

    /// The points as fractions of the range (0 the first bound, 1 the
    /// last), and with a step that does not divide the range, how short the
    /// last interval is (SI).
    fn fractions(
        &mut self,
        spacing: &SweepSpacing,
        from: f64,
        to: f64,
        dimension: crate::units::Dimension,
    ) -> Option<(Vec<f64>, Option<f64>)> {
        let expr = spacing.expr();
        let bad = |message: String, help: &str| {
            Diagnostic::error(Code::BadSweepSpacing, expr.span, message).with_help(help.to_string())
        };
        let value = match self.eval(expr) {
            Ok(Value::Scalar(q)) => q,
            Ok(Value::Vector(_)) => {
                self.diagnostics.push(bad(
                    "a count or step is a scalar, not a vector".to_string(),
                    "write `count 13` or `step 0.1 m`",
                ));
                return None;
            }
            Err(diagnostic) => {
                if !self.blocked_by_failed_cell(expr) {
                    self.diagnostics.push(*diagnostic);
                }
                return None;
            }
        };
        let too_many = |n: String| {
            Diagnostic::error(
                Code::SweepTooLarge,
                expr.span,
                format!("this sweep has {n} points, more than heft's limit of {MAX_SWEEP_POINTS}"),
            )
            .with_help("sweep fewer points, or a narrower range")
        };
        match spacing {
            SweepSpacing::Count(_) => {
                let n = value.si;
                if !value.dimension.is_dimensionless() {
                    self.diagnostics.push(bad(
                        format!(
                            "a sweep's count is a plain number, not {}",
                            value.dimension.describe()
                        ),
                        "write `count 13`: the bounds and 11 values evenly between them",
                    ));
                    return None;
                }
                if n.fract() != 0.0 || n < 2.0 {
                    self.diagnostics.push(bad(
                        format!(
                            "a sweep's count is a whole number of at least 2, not {}",
                            crate::units::format_significant(n, 6)
                        ),
                        "write `count 13`: the bounds and 11 values evenly between them",
                    ));
                    return None;
                }
                if n > MAX_SWEEP_POINTS as f64 {
                    self.diagnostics
                        .push(too_many(crate::units::format_significant(n, 6)));
                    return None;
                }
                let n = n as usize;
                let last = (n - 1) as f64;
                Some(((0..n).map(|k| k as f64 / last).collect(), None))
            }
            SweepSpacing::Step(_) => {
                if value.dimension != dimension {
                    self.diagnostics.push(bad(
                        format!(
                            "the step is {} but the swept input is {}",
                            value.dimension.describe(),
                            dimension.describe()
                        ),
                        "give the step in a unit of the input's dimension",
                    ));
                    return None;
                }
                if value.si <= 0.0 || !value.si.is_finite() {
                    self.diagnostics.push(bad(
                        "a sweep's step must be positive (the sweep goes from the first bound towards the second either way)".to_string(),
                        "write a positive step: `step 0.5 m`",
                    ));
                    return None;
                }
                let width = (to - from).abs();
                let steps = width / value.si;
                let whole = libm::round(steps);
                let divides = (steps - whole).abs() <= WHOLE_STEPS * steps.max(1.0) && whole >= 1.0;
                let n_points = if divides {
                    whole + 1.0
                } else {
                    libm::floor(steps) + 2.0
                };
                if n_points > MAX_SWEEP_POINTS as f64 {
                    self.diagnostics
                        .push(too_many(crate::units::format_significant(n_points, 15)));
                    return None;
                }
                if divides {
                    let n = whole as usize;
                    return Some(((0..=n).map(|k| k as f64 / whole).collect(), None));
                }
                let full = libm::floor(steps) as usize;
                let mut fractions: Vec<f64> =
                    (0..=full).map(|k| k as f64 * value.si / width).collect();
                fractions.push(1.0);
                let short = width - full as f64 * value.si;
                Some((fractions, Some(short)))
            }
        }
    }
}

/// A sweep's checked plan: the input and the points as fractions of the
/// range.
struct Plan {
    input: CellId,
    /// The bounds (SI).
    from: f64,
    to: f64,
    fractions: Vec<f64>,
    short_last_step: Option<f64>,
}

/// A sweep being evaluated: the sheet with the input replaced by the value
/// a fraction of the way along the range.
struct Study<'s, 'a> {
    evaluator: &'s Evaluator<'a>,
    block: &'s SweepBlock,
    input: CellId,
    /// The bounds (SI).
    from: f64,
    to: f64,
    /// Cell evaluations left for this sweep's margins.
    evaluations_left: usize,
    /// The tolerance analyses' budget of pairs, shared by every point.
    budget: usize,
}

/// The sheet at one point: the input's value and every check there.
pub(super) struct Evaluation {
    input: Option<f64>,
    checks: Vec<SweepCheck>,
}

impl<'s, 'a> Study<'s, 'a> {
    fn new(evaluator: &'s Evaluator<'a>, block: &'s SweepBlock, plan: &Plan) -> Self {
        Study {
            evaluator,
            block,
            input: plan.input,
            from: plan.from,
            to: plan.to,
            evaluations_left: MAX_SWEEP_CELL_EVALUATIONS,
            budget: MAX_TOLERANCE_PAIRS,
        }
    }

    /// The formula that puts the input `fraction` of the way from the first
    /// bound to the second: `from * (1 - f) + to * f`, exactly each bound at
    /// 0 and 1, evaluated by the evaluator with the bounds' own units.
    fn formula(&self, fraction: f64) -> Expr {
        let at = self.block.head;
        let node = |kind| Expr { kind, span: at };
        let times = |lhs: &Expr, weight: f64| {
            node(ExprKind::Binary {
                op: BinaryOp::Multiply,
                lhs: Box::new(lhs.clone()),
                rhs: Box::new(node(ExprKind::Number(weight))),
            })
        };
        node(ExprKind::Binary {
            op: BinaryOp::Add,
            lhs: Box::new(times(&self.block.from, 1.0 - fraction)),
            rhs: Box::new(times(&self.block.to, fraction)),
        })
    }

    /// Evaluates the sheet with the input at `fraction` of the range,
    /// and hands the evaluation to `read`.
    fn evaluate<T>(&mut self, fraction: f64, read: impl FnOnce(&Overridden<'_>) -> T) -> T {
        let evaluator = self.evaluator;
        let replacement = Override {
            cell: NameRef {
                text: evaluator.sheet.cell(self.input).name.text.clone(),
                target: Target::Cell(self.input),
            },
            cell_span: self.block.variable.span,
            expr: self.formula(fraction),
            tolerance: None,
            span: self.block.head,
        };
        let mut overrides = FxHashMap::default();
        overrides.insert(self.input, &replacement);
        let mut evaluated = evaluate_overridden(
            evaluator.sheet,
            evaluator.source,
            overrides,
            &[],
            None,
            &mut self.budget,
        );
        for (index, check) in evaluated.checks.iter_mut().enumerate() {
            crate::eval::verdict::judge_check(evaluator.sheet, index, check, &[]);
        }
        read(&evaluated)
    }

    /// The input's value and every check at `fraction`.
    fn checks_at(&mut self, fraction: f64) -> Evaluation {
        let input = self.input;
        self.evaluate(fraction, |evaluated| Evaluation {
            input: evaluated.evaluator.scalar_si(input),
            checks: evaluated.checks.iter().map(sweep_check).collect(),
        })
    }

    /// The input's value at `fraction` (SI) as the override's formula
    /// gives it, for a point where the sheet could not give it back.
    fn value_at(&self, fraction: f64) -> f64 {
        self.from * (1.0 - fraction) + self.to * fraction
    }

    /// One row of the table: the input, the shown results and the checks.
    fn point(&mut self, fraction: f64) -> SweepPoint {
        let input = self.input;
        let block = self.block;
        let fallback = self.value_at(fraction);
        self.evaluate(fraction, |evaluated| {
            let evaluator = &evaluated.evaluator;
            SweepPoint {
                input: evaluator.scalar_si(input).unwrap_or(fallback),
                shown: block
                    .shown
                    .iter()
                    .map(|expr| evaluator.eval(expr).ok())
                    .collect(),
                checks: evaluated.checks.iter().map(sweep_check).collect(),
            }
        })
    }
}

/// A check at a point: its verdict, and the utilization that decides it
/// where the verdict is established.
fn sweep_check(check: &crate::eval::CheckResult) -> SweepCheck {
    let established = check.passed().is_some();
    SweepCheck {
        status: check.status,
        utilization: if established {
            check.governing_utilization()
        } else {
            None
        },
    }
}
