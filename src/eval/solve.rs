//! Solve blocks: equations `lhs = rhs` solved for their unknowns by Newton's
//! method on scaled variables, with a central-difference Jacobian, a
//! backtracking line search, Levenberg–Marquardt steps where Newton's step
//! fails, and diagnostics for under- and over-determined systems, singular
//! Jacobians, non-convergence and other roots near the guess.

use nalgebra::{DMatrix, DVector};

use super::explain::{Operand, mismatch};
use super::model::{EquationReport, SolveReport, SolveStatus};
use super::program::{CompileError, Input, Program};
use super::{CellStatus, Evaluator};
use crate::diag::{Code, Diagnostic, Severity};
use crate::sheet::CellId;
use crate::syntax::ast::{BinaryOp, Equation, Expr, ExprKind, NameRef, SolveBlock, Target};
use crate::units::{Dimension, Quantity, Value, pick_unit};

/// Scaled residual below which the system counts as solved.
const TOLERANCE: f64 = 1e-12;
/// Scaled residual accepted when no step can reduce it further (the
/// rounding floor of the equations' arithmetic).
const STAGNATION_TOLERANCE: f64 = 1e-9;
/// Newton iterations before giving up.
const MAX_ITERATIONS: usize = 100;
/// Reciprocal condition below which the Jacobian counts as singular.
const SINGULAR: f64 = 1e-12;

/// One scalar equation: an equation of the block, or one component of a
/// vector equation.
struct ScalarEquation<'e> {
    equation: &'e Equation,
    /// Which component of a vector equation (`None` for a scalar one).
    component: Option<usize>,
    dimension: Dimension,
    /// Typical size of its sides at the guess, to scale the residual.
    scale: f64,
    /// Which of the block's unknowns it mentions (its Jacobian row is zero
    /// elsewhere, so only these columns need it re-evaluated).
    mentions: Vec<bool>,
    /// `lhs - rhs` compiled with the unknowns (SI values) as inputs; `None`
    /// for a vector equation, which is interpreted instead.
    program: Option<Program>,
}

/// Why an attempt to solve stopped.
enum Stop {
    /// A diagnostic ends the attempt.
    Fail(Box<Diagnostic>),
}

/// The result of Newton's method from one start.
struct Root {
    x: DVector<f64>,
    iterations: usize,
    /// The Jacobian of the last step (at the solution if no step was needed).
    jacobian: DMatrix<f64>,
    /// The Jacobian at the start.
    first_jacobian: DMatrix<f64>,
}

impl Evaluator<'_> {
    /// Solves the block at `statement` and records its unknowns' values.
    pub(super) fn evaluate_solve(&mut self, statement: usize, unknowns: &[CellId]) {
        let Some(block) = self.sheet.solve_block(statement) else {
            return;
        };
        let mut report = SolveReport {
            statement,
            span: self.sheet.statements[statement].span,
            unknowns: unknowns.to_vec(),
            equations: Vec::new(),
            iterations: 0,
            condition: None,
            linear: false,
            status: SolveStatus::NotRun,
        };
        let status = if unknowns.iter().any(|&id| self.sheet.broken[id]) {
            CellStatus::Error
        } else if let Some(blocker) = unknowns
            .first()
            .and_then(|&id| self.blocker(&self.sheet.uses[id]))
        {
            CellStatus::Blocked { by: blocker }
        } else {
            match self.solve(block, unknowns, &mut report) {
                Ok(()) => CellStatus::Ok,
                Err(Stop::Fail(diagnostic)) => {
                    self.diagnostics.push(*diagnostic);
                    report.status = SolveStatus::Failed;
                    CellStatus::Error
                }
            }
        };
        for &id in unknowns {
            self.statuses[id] = status;
            if status != CellStatus::Ok {
                self.values[id] = None;
            }
        }
        self.solves.push(report);
    }

    fn solve(
        &mut self,
        block: &SolveBlock,
        unknowns: &[CellId],
        report: &mut SolveReport,
    ) -> Result<(), Stop> {
        // Units, dimensions and starting values of the unknowns.
        let mut factors = Vec::with_capacity(unknowns.len());
        let mut guess = Vec::with_capacity(unknowns.len());
        for unknown in &block.unknowns {
            let unit = self.resolve_unit(&unknown.unit).map_err(Stop::Fail)?;
            let start = match &unknown.guess {
                None => unit.si_factor,
                Some(expr) => match self.eval(expr).map_err(Stop::Fail)? {
                    Value::Scalar(q)
                        if q.dimension.is_dimensionless() && !unit.dimension.is_dimensionless() =>
                    {
                        q.si * unit.si_factor
                    }
                    Value::Scalar(q) if q.dimension == unit.dimension => q.si,
                    other => {
                        return Err(Stop::Fail(Box::new(
                            Diagnostic::error(
                                Code::DimensionMismatch,
                                expr.span,
                                format!(
                                    "the guess for `{}` is {}, but `{}` is {}",
                                    unknown.name.text,
                                    self.style.show_value(other),
                                    unknown.name.text,
                                    unit.dimension.describe()
                                ),
                            )
                            .with_help("give a number (taken in the unknown's unit) or a quantity of the same dimension"),
                        )));
                    }
                },
            };
            factors.push((unit.dimension, unit.si_factor));
            guess.push(start);
        }
        let scales: Vec<f64> = guess
            .iter()
            .zip(&factors)
            .map(|(g, (_, factor))| if g.abs() > 0.0 { g.abs() } else { factor.abs() })
            .collect();
        for (&id, &value) in unknowns.iter().zip(&guess) {
            self.values[id] = Some(Value::Scalar(Quantity::new(
                value,
                factors[self.index_of(unknowns, id)].0,
            )));
        }

        let equations = self.scalar_equations(block, unknowns)?;
        report.equations = equations
            .iter()
            .map(|e| EquationReport {
                text: equation_text(self.source, e),
                span: e.equation.span,
                residual: None,
                display: pick_unit(e.dimension, e.scale, self.style.system),
            })
            .collect();
        let names: Vec<String> = block
            .unknowns
            .iter()
            .map(|u| format!("`{}`", u.name.text))
            .collect();
        if equations.len() != unknowns.len() {
            let (code, word) = if equations.len() < unknowns.len() {
                (Code::Underdetermined, "fewer")
            } else {
                (Code::Overdetermined, "more")
            };
            return Err(Stop::Fail(Box::new(
                Diagnostic::error(
                    code,
                    block.head,
                    format!(
                        "this block has {} equation{} for {} unknown{} ({}): {word} equations than unknowns",
                        equations.len(),
                        if equations.len() == 1 { "" } else { "s" },
                        unknowns.len(),
                        if unknowns.len() == 1 { "" } else { "s" },
                        names.join(", ")
                    ),
                )
                .with_help(if equations.len() < unknowns.len() {
                    "add an equation for each unknown, or give the extra unknowns values as ordinary cells"
                } else {
                    "remove the extra equations, or make one of the fixed values an unknown"
                }),
            )));
        }

        let x0 = DVector::from_iterator(guess.len(), guess.iter().zip(&scales).map(|(g, s)| g / s));
        let root = self.newton(&equations, unknowns, &factors, &scales, x0.clone(), block)?;
        report.iterations = root.iterations;

        // Singular or ill-conditioned at the solution: the unknowns are not fixed.
        let svd = root.jacobian.clone().svd(true, true);
        let (largest, smallest) = singular_extremes(&svd.singular_values);
        report.condition = (smallest > 0.0).then(|| largest / smallest);
        if largest == 0.0 || smallest / largest < SINGULAR {
            return Err(Stop::Fail(Box::new(
                self.singular_diagnostic(block, &equations, &svd),
            )));
        }

        // Linear: the Jacobian did not change on the way to the solution.
        report.linear = (&root.first_jacobian - &root.jacobian).abs().max()
            <= 1e-7 * root.jacobian.abs().max().max(1.0);

        // Other roots near the guess (same signs, other magnitudes).
        if !report.linear {
            self.look_for_other_roots(&equations, unknowns, &factors, &scales, &x0, &root, block);
        }

        self.set_unknowns(unknowns, &factors, &scales, &root.x);
        for (entry, equation) in report.equations.iter_mut().zip(&equations) {
            entry.residual = self.side_difference(equation).ok();
        }
        report.status = SolveStatus::Solved;
        Ok(())
    }

    fn index_of(&self, unknowns: &[CellId], id: CellId) -> usize {
        unknowns.iter().position(|&u| u == id).unwrap_or(0)
    }

    /// Splits the block's equations into scalar ones, checking that both
    /// sides of each agree in dimension and kind at the guess.
    fn scalar_equations<'e>(
        &self,
        block: &'e SolveBlock,
        unknowns: &[CellId],
    ) -> Result<Vec<ScalarEquation<'e>>, Stop> {
        let mut scalars = Vec::new();
        for equation in &block.equations {
            let lhs = self.eval(&equation.lhs).map_err(Stop::Fail)?;
            let rhs = self.eval(&equation.rhs).map_err(Stop::Fail)?;
            if lhs.dimension() != rhs.dimension()
                || lhs.vector().is_some() != rhs.vector().is_some()
            {
                let text = |expr: &crate::syntax::ast::Expr| expr.span.text(self.source);
                let mut diagnostic = mismatch(
                    "equate",
                    &Operand {
                        span: equation.lhs.span,
                        text: text(&equation.lhs),
                        value: lhs,
                    },
                    &Operand {
                        span: equation.rhs.span,
                        text: text(&equation.rhs),
                        value: rhs,
                    },
                    self.style,
                );
                if lhs.vector().is_some() != rhs.vector().is_some() {
                    diagnostic.message =
                        "one side of this equation is a vector and the other a scalar".to_string();
                    diagnostic.code = Code::DimensionMismatch;
                    diagnostic.help = Some(
                        "write both sides as vectors, or equate one component (F.x = m * a)"
                            .to_string(),
                    );
                }
                return Err(Stop::Fail(Box::new(diagnostic)));
            }
            let mut mentions = vec![false; unknowns.len()];
            for side in [&equation.lhs, &equation.rhs] {
                side.walk(&mut |node| {
                    if let ExprKind::Name(NameRef {
                        target: Target::Cell(id),
                        ..
                    }) = &node.kind
                        && let Some(index) = unknowns.iter().position(|u| u == id)
                    {
                        mentions[index] = true;
                    }
                });
            }
            let program = match (lhs, rhs) {
                (Value::Scalar(_), Value::Scalar(_)) => {
                    self.compile_difference(equation, unknowns)?
                }
                _ => None,
            };
            match (lhs, rhs) {
                (Value::Vector(l), Value::Vector(r)) => {
                    for component in 0..usize::from(l.n_components.max(r.n_components)) {
                        scalars.push(ScalarEquation {
                            equation,
                            component: Some(component),
                            dimension: l.dimension,
                            scale: l.si[component].abs().max(r.si[component].abs()),
                            mentions: mentions.clone(),
                            program: None,
                        });
                    }
                }
                _ => scalars.push(ScalarEquation {
                    equation,
                    component: None,
                    dimension: lhs.dimension(),
                    scale: lhs.magnitude_si().max(rhs.magnitude_si()),
                    mentions,
                    program,
                }),
            }
        }
        // Equations that are zero on both sides at the guess are scaled by the
        // largest typical size of their dimension, or left unscaled.
        let fallback: Vec<f64> = scalars
            .iter()
            .map(|s| if s.scale > 0.0 { s.scale } else { 1.0 })
            .collect();
        for (scalar, scale) in scalars.iter_mut().zip(fallback) {
            scalar.scale = scale;
        }
        Ok(scalars)
    }

    /// `lhs - rhs` of a scalar equation as one program over the unknowns.
    fn compile_difference(
        &self,
        equation: &Equation,
        unknowns: &[CellId],
    ) -> Result<Option<Program>, Stop> {
        let input_of = |name: &NameRef| match name.target {
            Target::Cell(id) => unknowns.iter().position(|&u| u == id).and_then(|index| {
                let sample = self.values[id].and_then(|v| v.scalar())?;
                Some(Input {
                    index: u32::try_from(index).ok()?,
                    sample,
                })
            }),
            _ => None,
        };
        let difference = Expr {
            span: equation.span,
            kind: ExprKind::Binary {
                op: BinaryOp::Subtract,
                lhs: Box::new(equation.lhs.clone()),
                rhs: Box::new(equation.rhs.clone()),
            },
        };
        match self.compile(&difference, &input_of) {
            Ok(program) => Ok(Some(program)),
            Err(CompileError::NeedsVectors(_)) => Ok(None),
            Err(CompileError::Diagnostic(diagnostic)) => Err(Stop::Fail(diagnostic)),
        }
    }

    /// Left minus right of one scalar equation, in SI units, at the
    /// unknowns' current values (`inputs`, in SI).
    fn difference_at(
        &self,
        equation: &ScalarEquation<'_>,
        inputs: &[f64],
    ) -> Result<Quantity, Box<Diagnostic>> {
        match &equation.program {
            Some(program) => Ok(Quantity::new(program.run(inputs), equation.dimension)),
            None => self.side_difference(equation),
        }
    }

    /// Left minus right of one scalar equation, in SI units.
    fn side_difference(&self, equation: &ScalarEquation<'_>) -> Result<Quantity, Box<Diagnostic>> {
        let lhs = self.eval(&equation.equation.lhs)?;
        let rhs = self.eval(&equation.equation.rhs)?;
        let pick = |value: Value| match (value, equation.component) {
            (Value::Vector(v), Some(axis)) => v.si[axis],
            (value, _) => value.scalar().map_or(f64::NAN, |q| q.si),
        };
        Ok(Quantity::new(pick(lhs) - pick(rhs), equation.dimension))
    }

    fn set_unknowns(
        &mut self,
        unknowns: &[CellId],
        factors: &[(Dimension, f64)],
        scales: &[f64],
        x: &DVector<f64>,
    ) {
        for (i, &id) in unknowns.iter().enumerate() {
            self.values[id] = Some(Value::Scalar(Quantity::new(x[i] * scales[i], factors[i].0)));
        }
    }

    /// The scaled residuals at scaled point `x`; `None` if an equation
    /// cannot be evaluated there (a square root of a negative, …).
    fn residuals(
        &mut self,
        equations: &[ScalarEquation<'_>],
        unknowns: &[CellId],
        factors: &[(Dimension, f64)],
        scales: &[f64],
        x: &DVector<f64>,
    ) -> Option<DVector<f64>> {
        self.set_unknowns(unknowns, factors, scales, x);
        let inputs: Vec<f64> = x.iter().zip(scales).map(|(x, s)| x * s).collect();
        let mut r = DVector::zeros(equations.len());
        for (j, equation) in equations.iter().enumerate() {
            r[j] = self.scaled_residual(equation, &inputs)?;
        }
        Some(r)
    }

    /// One equation's residual divided by its scale; `None` where it cannot
    /// be evaluated or is not finite.
    fn scaled_residual(&self, equation: &ScalarEquation<'_>, inputs: &[f64]) -> Option<f64> {
        let value = self.difference_at(equation, inputs).ok()?.si / equation.scale;
        value.is_finite().then_some(value)
    }

    /// Jacobian of the scaled residuals at `x` by central differences. With
    /// the unknowns scaled to about one, a step of 1e-3 keeps rounding near
    /// 1e-13 (so a linear system is solved in one Newton step) and truncation
    /// near 1e-6 (so Newton's method still converges fast on nonlinear ones).
    fn jacobian(
        &mut self,
        equations: &[ScalarEquation<'_>],
        unknowns: &[CellId],
        factors: &[(Dimension, f64)],
        scales: &[f64],
        x: &DVector<f64>,
    ) -> Result<DMatrix<f64>, ()> {
        let n = x.len();
        let mut jacobian = DMatrix::zeros(equations.len(), n);
        for i in 0..n {
            let h = 1e-3 * x[i].abs().max(1.0);
            let mut at = |offset: f64| -> Result<Vec<(usize, f64)>, ()> {
                let mut shifted = x.clone();
                shifted[i] += offset;
                self.set_unknowns(unknowns, factors, scales, &shifted);
                let inputs: Vec<f64> = shifted.iter().zip(scales).map(|(x, s)| x * s).collect();
                // Only the equations that mention unknown i change with it.
                equations
                    .iter()
                    .enumerate()
                    .filter(|(_, equation)| equation.mentions[i])
                    .map(|(j, equation)| {
                        self.scaled_residual(equation, &inputs)
                            .map(|value| (j, value))
                            .ok_or(())
                    })
                    .collect()
            };
            let (plus, minus) = (at(h)?, at(-h)?);
            for ((j, forward), (_, backward)) in plus.into_iter().zip(minus) {
                jacobian[(j, i)] = (forward - backward) / (2.0 * h);
            }
        }
        self.set_unknowns(unknowns, factors, scales, x);
        Ok(jacobian)
    }

    /// Newton's method with a backtracking line search, falling back to
    /// Levenberg–Marquardt steps when the Newton step is unusable.
    fn newton(
        &mut self,
        equations: &[ScalarEquation<'_>],
        unknowns: &[CellId],
        factors: &[(Dimension, f64)],
        scales: &[f64],
        start: DVector<f64>,
        block: &SolveBlock,
    ) -> Result<Root, Stop> {
        let fail_at_guess = |this: &Self| {
            Stop::Fail(Box::new(
                Diagnostic::error(
                    Code::NoConvergence,
                    block.head,
                    "the equations cannot be evaluated at the starting guess",
                )
                .with_help(format!(
                    "give each unknown a guess with `~` inside the range where its equations are defined ({})",
                    this.unknown_names(block)
                )),
            ))
        };
        let mut x = start;
        let mut r = self
            .residuals(equations, unknowns, factors, scales, &x)
            .ok_or_else(|| fail_at_guess(self))?;
        let mut damping = 1e-3;
        // The Jacobian of the last step (an estimate of the one at the
        // solution for the condition number) and the one at the start.
        let mut latest: Option<DMatrix<f64>> = None;
        let mut first: Option<DMatrix<f64>> = None;
        for iteration in 0..=MAX_ITERATIONS {
            if r.amax() <= TOLERANCE {
                let jacobian = match latest {
                    Some(jacobian) => jacobian,
                    None => self
                        .jacobian(equations, unknowns, factors, scales, &x)
                        .map_err(|()| fail_at_guess(self))?,
                };
                return Ok(Root {
                    x,
                    iterations: iteration,
                    first_jacobian: first.unwrap_or_else(|| jacobian.clone()),
                    jacobian,
                });
            }
            if iteration == MAX_ITERATIONS {
                break;
            }
            let jacobian = self
                .jacobian(equations, unknowns, factors, scales, &x)
                .map_err(|()| fail_at_guess(self))?;
            if first.is_none() {
                first = Some(jacobian.clone());
            }
            latest = Some(jacobian.clone());
            let merit = r.norm_squared();
            let newton_step = jacobian.clone().lu().solve(&(-&r));
            let mut accepted = None;
            if let Some(step) = newton_step.filter(|s| s.iter().all(|v| v.is_finite())) {
                let mut t = 1.0;
                while t > 1e-10 {
                    let candidate = &x + &step * t;
                    if let Some(next) =
                        self.residuals(equations, unknowns, factors, scales, &candidate)
                        && next.norm_squared() <= (1.0 - 1e-4 * t) * merit
                    {
                        accepted = Some((candidate, next));
                        break;
                    }
                    t *= 0.5;
                }
            }
            if accepted.is_none() {
                // Levenberg–Marquardt: (JᵀJ + λ·diag(JᵀJ)) d = −Jᵀr, λ raised until the merit falls.
                let normal = jacobian.transpose() * &jacobian;
                let gradient = jacobian.transpose() * &r;
                while damping < 1e12 && accepted.is_none() {
                    let mut damped = normal.clone();
                    for k in 0..damped.nrows() {
                        damped[(k, k)] += damping * normal[(k, k)].max(1e-12);
                    }
                    if let Some(step) = damped.lu().solve(&(-&gradient)) {
                        let candidate = &x + step;
                        if let Some(next) =
                            self.residuals(equations, unknowns, factors, scales, &candidate)
                            && next.norm_squared() < merit
                        {
                            accepted = Some((candidate, next));
                            damping = (damping / 10.0).max(1e-12);
                            break;
                        }
                    }
                    damping *= 10.0;
                }
            }
            match accepted {
                Some((next_x, next_r)) => {
                    x = next_x;
                    r = next_r;
                }
                None if r.amax() <= STAGNATION_TOLERANCE => {
                    return Ok(Root {
                        x,
                        iterations: iteration + 1,
                        first_jacobian: first.unwrap_or_else(|| jacobian.clone()),
                        jacobian,
                    });
                }
                None => break,
            }
        }
        // Not converged: name the equations that are furthest from holding.
        self.set_unknowns(unknowns, factors, scales, &x);
        let mut worst: Vec<(f64, usize)> =
            r.iter().enumerate().map(|(j, v)| (v.abs(), j)).collect();
        worst.sort_by(|a, b| b.0.total_cmp(&a.0));
        let described: Vec<String> = worst
            .iter()
            .take(3)
            .map(|&(_, j)| format!("`{}`", equation_text(self.source, &equations[j])))
            .collect();
        let mut diagnostic = Diagnostic::error(
            Code::NoConvergence,
            block.head,
            format!(
                "Newton's method did not converge for {}; furthest from holding: {}",
                self.unknown_names(block),
                described.join(", ")
            ),
        )
        .with_help("give better guesses with `~`, check the equations' signs, or check that a solution exists");
        for &(_, j) in worst.iter().take(3) {
            diagnostic = diagnostic.with_label(equations[j].equation.span, "does not hold");
        }
        Err(Stop::Fail(Box::new(diagnostic)))
    }

    fn unknown_names(&self, block: &SolveBlock) -> String {
        block
            .unknowns
            .iter()
            .map(|u| format!("`{}`", u.name.text))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The diagnostic for a singular Jacobian, naming the unknowns and
    /// equations involved (the largest entries of the singular vectors).
    fn singular_diagnostic(
        &self,
        block: &SolveBlock,
        equations: &[ScalarEquation<'_>],
        svd: &nalgebra::SVD<f64, nalgebra::Dyn, nalgebra::Dyn>,
    ) -> Diagnostic {
        let smallest = (0..svd.singular_values.len())
            .min_by(|&a, &b| svd.singular_values[a].total_cmp(&svd.singular_values[b]))
            .unwrap_or(0);
        let involved = |vector: Option<DVector<f64>>, count: usize| -> Vec<usize> {
            let Some(vector) = vector else {
                return Vec::new();
            };
            let biggest = vector.amax();
            (0..count)
                .filter(|&k| vector[k].abs() >= 0.1 * biggest)
                .collect()
        };
        let unknown_vector = svd.v_t.as_ref().map(|v_t| v_t.row(smallest).transpose());
        let equation_vector = svd.u.as_ref().map(|u| u.column(smallest).into_owned());
        let unknowns: Vec<String> = involved(unknown_vector, block.unknowns.len())
            .into_iter()
            .map(|k| format!("`{}`", block.unknowns[k].name.text))
            .collect();
        let involved_equations = involved(equation_vector, equations.len());
        let equation_list: Vec<String> = involved_equations
            .iter()
            .map(|&j| format!("`{}`", equation_text(self.source, &equations[j])))
            .collect();
        let mut diagnostic = Diagnostic::error(
            Code::SingularSystem,
            block.head,
            format!(
                "the equations do not fix {}: the Jacobian is singular (equations {} depend on each other, or these unknowns hardly affect them)",
                unknowns.join(", "),
                equation_list.join(", ")
            ),
        )
        .with_help("replace one of the dependent equations by an independent one, or give one of these unknowns a value");
        for &j in &involved_equations {
            diagnostic = diagnostic.with_label(equations[j].equation.span, "involved");
        }
        diagnostic
    }

    /// Starts Newton again from the guess scaled by 0.1, 0.5, 2 and 10 (same
    /// signs): a different root found there is reported as a warning.
    #[allow(clippy::too_many_arguments)]
    fn look_for_other_roots(
        &mut self,
        equations: &[ScalarEquation<'_>],
        unknowns: &[CellId],
        factors: &[(Dimension, f64)],
        scales: &[f64],
        x0: &DVector<f64>,
        root: &Root,
        block: &SolveBlock,
    ) {
        for factor in [0.1, 0.5, 2.0, 10.0] {
            let start = x0 * factor;
            let Ok(other) = self.newton(equations, unknowns, factors, scales, start, block) else {
                continue;
            };
            let distance = (&other.x - &root.x).amax();
            if distance > 1e-6 * (1.0 + root.x.amax()) {
                // Components at the rounding floor of the root's size read as zero.
                let floor = 1e-9 * root.x.amax().max(1.0);
                let describe = |x: &DVector<f64>| {
                    let x = x.map(|v| if v.abs() < floor { 0.0 } else { v });
                    block
                        .unknowns
                        .iter()
                        .enumerate()
                        .map(|(i, u)| {
                            format!(
                                "{} = {}",
                                u.name.text,
                                self.style.show_in(
                                    x[i] * scales[i],
                                    u.unit.span.text(self.source),
                                    factors[i].1
                                )
                            )
                        })
                        .collect::<Vec<_>>()
                        .join(", ")
                };
                self.diagnostics.push(
                    Diagnostic::new(
                        Severity::Warning,
                        Code::SeveralRoots,
                        block.head,
                        format!(
                            "these equations have more than one solution near the guess: heft took {} (reached from the guess), but {} also solves them",
                            describe(&root.x),
                            describe(&other.x)
                        ),
                    )
                    .with_help("move the guesses (`~`) closer to the solution you mean, so that no other lies within a factor of 10 of them"),
                );
                return;
            }
        }
    }
}

fn singular_extremes(values: &DVector<f64>) -> (f64, f64) {
    let largest = values.iter().copied().fold(0.0, f64::max);
    let smallest = values.iter().copied().fold(f64::INFINITY, f64::min);
    (largest, if smallest.is_finite() { smallest } else { 0.0 })
}

/// `lhs = rhs`, with `(x)` for a component of a vector equation.
fn equation_text(source: &str, equation: &ScalarEquation<'_>) -> String {
    let text = format!(
        "{} = {}",
        equation.equation.lhs.span.text(source),
        equation.equation.rhs.span.text(source)
    );
    match equation.component {
        Some(axis) => format!("{text} ({})", ["x", "y", "z"][axis.min(2)]),
        None => text,
    }
}
