//! Solve blocks: equations `lhs = rhs` solved for their unknowns by Newton's
//! method with an exact Jacobian (the compiled equations run on dual
//! numbers), a backtracking line search and Levenberg–Marquardt steps where
//! Newton's step fails. Each unknown is measured against its value (or one
//! of its unit) and each equation against the size of its terms, both
//! afresh at every iteration, so a far guess cannot make a large residual
//! look small. Every solution, and
//! every other root named in a warning, is verified afterwards by evaluating
//! each equation at it; an ill-conditioned solution is warned about with
//! the digits it costs.

use nalgebra::{DMatrix, DVector};

use super::explain::{Operand, mismatch};
use super::model::{EquationReport, SolveReport, SolveStatus};
use super::program::{CompileError, Input, Program};
use super::{CellStatus, Evaluator};
use crate::base::{Code, Diagnostic, Severity};
use crate::numeric::Dual;
use crate::sheet::CellId;
use crate::syntax::ast::{BinaryOp, Equation, Expr, ExprKind, NameRef, SolveBlock, Target};
use crate::units::{Dimension, DisplayUnit, Quantity, Value, pick_unit};

/// Scaled residual below which the system counts as solved.
const TOLERANCE: f64 = 1e-12;
/// Scaled residual accepted when no step can reduce it further (the
/// rounding floor of the equations' arithmetic), and the most any equation
/// may miss by, relative to its terms, when a solution is verified.
const VERIFIED: f64 = 1e-9;
/// Newton iterations before giving up.
const MAX_ITERATIONS: usize = 100;
/// The most unknowns one solve block may have: the solver's Jacobian is
/// dense, so memory grows with the square of the unknowns and time with
/// the cube (2,000 unknowns: 32 MB a matrix, about 40 s; 20,000 would need
/// 3.2 GB a matrix and aborted on allocation, measured 2026-12-03).
pub const MAX_SOLVE_UNKNOWNS: usize = 2_000;
/// Condition number beyond which the Jacobian counts as singular (fewer
/// than four of the sixteen significant digits of a double survive).
const SINGULAR: f64 = 1e12;
/// Condition number from which a solution is warned about as
/// ill-conditioned: it costs five or more significant digits. A double
/// root, met only to the square root of the residual tolerance, gives
/// about 10⁶.
const ILL_CONDITIONED: f64 = 1e5;

/// One scalar equation: an equation of the block, or one component of a
/// vector equation.
struct ScalarEquation<'e> {
    equation: &'e Equation,
    /// Which component of a vector equation (`None` for a scalar one).
    component: Option<usize>,
    dimension: Dimension,
    /// The terms of both sides (the operands of their outermost sums and
    /// differences), whose size at a point is the equation's scale there.
    terms: Vec<&'e Expr>,
    /// Which of the block's unknowns it mentions (its Jacobian row is zero
    /// elsewhere).
    mentions: Vec<bool>,
    /// `lhs - rhs` compiled with the unknowns (SI values) as inputs; `None`
    /// for a vector equation, which is interpreted instead.
    program: Option<Program>,
}

/// A block's equations and unknowns, as Newton's method sees them.
struct System<'s, 'e> {
    equations: &'s [ScalarEquation<'e>],
    unknowns: &'s [CellId],
    dimensions: Vec<Dimension>,
    /// One of each unknown's unit, in SI: the least size an unknown is
    /// measured against (so a root at zero still has a scale).
    units: Vec<f64>,
}

/// Why an attempt to solve stopped.
enum Stop {
    /// A diagnostic ends the attempt.
    Fail(Box<Diagnostic>),
}

/// A point Newton's method stopped at, with what was measured there.
struct Root {
    /// The unknowns, in SI.
    x: DVector<f64>,
    /// Newton steps taken.
    iterations: usize,
    /// The Jacobian of the residuals (SI) at `x`.
    jacobian: DMatrix<f64>,
    /// Each equation's scale at `x`.
    scales: DVector<f64>,
}

/// What went wrong at a point Newton's method could not get past.
enum Miss {
    /// An equation cannot be evaluated there (a square root of a negative, …).
    Undefined,
    /// The equations were evaluated but do not hold.
    NotSolved(Box<(Root, DVector<f64>)>),
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
        if unknowns.len() > MAX_SOLVE_UNKNOWNS {
            return Err(Stop::Fail(Box::new(
                Diagnostic::error(
                    Code::SolveTooLarge,
                    block.head,
                    format!(
                        "this block has {}; heft solves at most {MAX_SOLVE_UNKNOWNS} at once",
                        super::count(unknowns.len(), "unknown")
                    ),
                )
                .with_help("split the block into smaller blocks that solve in turn, or write the chain as ordinary cells"),
            )));
        }
        // Units, dimensions and starting values of the unknowns.
        let mut dimensions = Vec::with_capacity(unknowns.len());
        let mut guess = Vec::with_capacity(unknowns.len());
        let mut units = Vec::with_capacity(unknowns.len());
        for unknown in &block.unknowns {
            let unit = self.resolve_unit(&unknown.unit).map_err(Stop::Fail)?;
            let start = match &unknown.guess {
                None => unit.si_factor,
                Some(expr) => match self.eval(expr).map_err(Stop::Fail)? {
                    // A guess written as a plain number is in the unknown's
                    // own unit (`θ [deg] ~ 20` is 20°, `μ [%] ~ 10` is 10 %).
                    Value::Scalar(q) if q.dimension.is_dimensionless() && written_bare(expr) => {
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
            dimensions.push(unit.dimension);
            units.push(unit.si_factor.abs());
            guess.push(start);
        }
        for (i, &id) in unknowns.iter().enumerate() {
            self.values[id] = Some(Value::Scalar(Quantity::new(guess[i], dimensions[i])));
        }

        let equations = self.scalar_equations(block, unknowns)?;
        let names = self.unknown_names(block);
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
                        "this block has {} for {} ({names}): {word} equations than unknowns",
                        super::count(equations.len(), "equation"),
                        super::count(unknowns.len(), "unknown"),
                    ),
                )
                .with_help(if equations.len() < unknowns.len() {
                    "add an equation for each unknown, or give the extra unknowns values as ordinary cells"
                } else {
                    "remove the extra equations, or make one of the fixed values an unknown"
                }),
            )));
        }
        let system = System {
            equations: &equations,
            unknowns,
            dimensions,
            units,
        };

        let x0 = DVector::from_vec(guess);
        let (root, start_jacobian) = match self.newton(&system, x0.clone()) {
            Ok(solved) => solved,
            Err(Miss::Undefined) => return Err(self.undefined_at_guess(block)),
            Err(Miss::NotSolved(missed)) => {
                let (at, residuals) = *missed;
                return Err(self.not_converged(block, &system, &at, &residuals));
            }
        };
        report.iterations = root.iterations;
        report.equations = self.equation_reports(&system, &root);

        // Verified by the interpreter, equation by equation, at the solution.
        if let Some(residuals) = self.unverified(&system, &root) {
            return Err(self.not_converged(block, &system, &root, &residuals));
        }

        // Singular or ill-conditioned at the solution: the unknowns are not
        // (well) fixed.
        let scaled = scaled_jacobian(&system, &root);
        let svd = scaled.clone().svd(true, true);
        let (largest, smallest) = singular_extremes(&svd.singular_values);
        let condition = largest.max(1.0) / smallest;
        report.condition = condition.is_finite().then_some(condition);
        if condition.is_nan() || condition > SINGULAR {
            return Err(Stop::Fail(Box::new(
                self.singular_diagnostic(block, &equations, &svd),
            )));
        }
        if condition >= ILL_CONDITIONED {
            self.diagnostics
                .push(ill_conditioned(block, condition, &names));
        }

        // Linear: the Jacobian is the same at the guess as at the solution.
        report.linear =
            (&start_jacobian - &root.jacobian).abs().max() <= 1e-9 * root.jacobian.abs().max();

        // Other roots near the guess (same signs, other magnitudes).
        if !report.linear {
            self.look_for_other_roots(&system, &x0, &root, condition, block);
        }

        self.set_unknowns(&system, &root.x);
        report.status = SolveStatus::Solved;
        Ok(())
    }

    /// Each equation's report at `root`: its text, residual, and a unit
    /// for the residual shared by every equation of its dimension.
    fn equation_reports(&mut self, system: &System<'_, '_>, root: &Root) -> Vec<EquationReport> {
        self.set_unknowns(system, &root.x);
        // The largest scale of each dimension, and its unit (a block has a
        // handful of dimensions, however many equations).
        let mut units: Vec<(Dimension, f64)> = Vec::new();
        for (equation, &scale) in system.equations.iter().zip(root.scales.iter()) {
            match units.iter_mut().find(|(d, _)| *d == equation.dimension) {
                Some((_, size)) => *size = size.max(scale),
                None => units.push((equation.dimension, scale)),
            }
        }
        let units: Vec<(Dimension, DisplayUnit)> = units
            .into_iter()
            .map(|(dimension, size)| (dimension, pick_unit(dimension, size, self.style.system)))
            .collect();
        system
            .equations
            .iter()
            .map(|e| EquationReport {
                text: equation_text(self.source, e),
                span: e.equation.span,
                residual: self.side_difference(e).ok(),
                display: units
                    .iter()
                    .find(|(d, _)| *d == e.dimension)
                    .map_or_else(DisplayUnit::none, |(_, unit)| unit.clone()),
            })
            .collect()
    }

    /// The residuals at `root` if an equation, evaluated afresh by the
    /// interpreter, misses by more than [`VERIFIED`] of its terms' size;
    /// `None` when every equation holds.
    fn unverified(&mut self, system: &System<'_, '_>, root: &Root) -> Option<DVector<f64>> {
        self.set_unknowns(system, &root.x);
        let mut residuals = DVector::zeros(system.equations.len());
        let mut holds = true;
        for (j, equation) in system.equations.iter().enumerate() {
            let residual = self.side_difference(equation).map_or(f64::NAN, |q| q.si);
            residuals[j] = residual;
            if residual.is_nan() || residual.abs() > VERIFIED * root.scales[j] {
                holds = false;
            }
        }
        (!holds).then_some(residuals)
    }

    /// Whether `x` solves the system, verified as a solution is.
    fn solves(&mut self, system: &System<'_, '_>, x: &DVector<f64>) -> bool {
        self.measure(system, x, 0)
            .is_some_and(|(root, _)| self.unverified(system, &root).is_none())
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
                return Err(Stop::Fail(Box::new(self.unequal_sides(equation, lhs, rhs))));
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
            let mut terms = equation.lhs.terms();
            terms.extend(equation.rhs.terms());
            match (lhs, rhs) {
                (Value::Vector(l), Value::Vector(r)) => {
                    for component in 0..usize::from(l.n_components.max(r.n_components)) {
                        scalars.push(ScalarEquation {
                            equation,
                            component: Some(component),
                            dimension: l.dimension,
                            terms: terms.clone(),
                            mentions: mentions.clone(),
                            program: None,
                        });
                    }
                }
                _ => scalars.push(ScalarEquation {
                    equation,
                    component: None,
                    dimension: lhs.dimension(),
                    terms,
                    mentions,
                    program: self.compile_difference(equation, unknowns)?,
                }),
            }
        }
        Ok(scalars)
    }

    /// The error for an equation whose sides differ in dimension or kind.
    fn unequal_sides(&self, equation: &Equation, lhs: Value, rhs: Value) -> Diagnostic {
        let text = |expr: &Expr| expr.span.text(self.source);
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
                "write both sides as vectors, or equate one component (F.x = m * a)".to_string(),
            );
        }
        diagnostic
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
        let difference = difference_of(equation);
        match self.compile(&difference, &input_of) {
            Ok(program) => Ok(Some(program)),
            Err(CompileError::NeedsVectors(_)) => Ok(None),
            Err(CompileError::Diagnostic(diagnostic)) => Err(Stop::Fail(diagnostic)),
        }
    }

    /// Left minus right of one scalar equation, in SI units, by the
    /// interpreter at the unknowns' current values.
    fn side_difference(&self, equation: &ScalarEquation<'_>) -> Result<Quantity, Box<Diagnostic>> {
        let lhs = self.eval(&equation.equation.lhs)?;
        let rhs = self.eval(&equation.equation.rhs)?;
        Ok(Quantity::new(
            pick(lhs, equation.component) - pick(rhs, equation.component),
            equation.dimension,
        ))
    }

    /// Gives the unknowns the SI values `x`.
    fn set_unknowns(&mut self, system: &System<'_, '_>, x: &DVector<f64>) {
        for (i, &id) in system.unknowns.iter().enumerate() {
            self.values[id] = Some(Value::Scalar(Quantity::new(x[i], system.dimensions[i])));
        }
    }

    /// Left minus right of every equation at `x` (SI); `None` if one
    /// cannot be evaluated there or is not finite.
    fn residuals(&mut self, system: &System<'_, '_>, x: &DVector<f64>) -> Option<DVector<f64>> {
        self.set_unknowns(system, x);
        let mut residuals = DVector::zeros(system.equations.len());
        for (j, equation) in system.equations.iter().enumerate() {
            let value = match &equation.program {
                Some(program) => program.run(x.as_slice()),
                None => self.side_difference(equation).ok()?.si,
            };
            if !value.is_finite() {
                return None;
            }
            residuals[j] = value;
        }
        Some(residuals)
    }

    /// Each equation's scale at `x` (the unknowns already set there): the
    /// largest of its terms, or of the change its unknowns would make if
    /// each changed by its own size, whichever is more.
    fn scales(
        &self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
        jacobian: &DMatrix<f64>,
    ) -> Option<DVector<f64>> {
        let mut scales = DVector::zeros(system.equations.len());
        for (j, equation) in system.equations.iter().enumerate() {
            let mut largest: f64 = 0.0;
            for term in &equation.terms {
                let value = pick(self.eval(term).ok()?, equation.component);
                largest = largest.max(value.abs());
            }
            let moved: f64 = (0..x.len()).map(|i| (jacobian[(j, i)] * x[i]).abs()).sum();
            scales[j] = largest.max(moved);
            if !scales[j].is_finite() {
                return None;
            }
        }
        Some(scales)
    }

    /// The exact Jacobian of the residuals (SI) at `x`, the unknowns already
    /// set there: each compiled equation run on dual numbers, a vector
    /// equation's component by central differences of the interpreter.
    fn jacobian(&mut self, system: &System<'_, '_>, x: &DVector<f64>) -> Option<DMatrix<f64>> {
        let n = x.len();
        let mut jacobian = DMatrix::zeros(system.equations.len(), n);
        let mut duals: Vec<Dual<f64>> = x.iter().map(|&v| Dual::fixed(v)).collect();
        for (j, equation) in system.equations.iter().enumerate() {
            for i in (0..n).filter(|&i| equation.mentions[i]) {
                let slope = match &equation.program {
                    Some(program) => {
                        duals[i] = Dual::variable(x[i]);
                        let slope = program.run(&duals).derivative;
                        duals[i] = Dual::fixed(x[i]);
                        slope
                    }
                    None => self.central_difference(system, equation, x, i)?,
                };
                if !slope.is_finite() {
                    return None;
                }
                jacobian[(j, i)] = slope;
            }
        }
        Some(jacobian)
    }

    /// d(residual)/d(unknown `i`) of an interpreted equation, by a central
    /// difference of relative step 10⁻⁶ (truncation and rounding both near
    /// 10⁻¹⁰ of the slope).
    fn central_difference(
        &mut self,
        system: &System<'_, '_>,
        equation: &ScalarEquation<'_>,
        x: &DVector<f64>,
        i: usize,
    ) -> Option<f64> {
        let h = 1e-6 * x[i].abs().max(system.units[i]);
        let mut at = |offset: f64| {
            let mut shifted = x.clone();
            shifted[i] += offset;
            self.set_unknowns(system, &shifted);
            self.side_difference(equation).ok().map(|q| q.si)
        };
        let (forward, backward) = (at(h), at(-h));
        self.set_unknowns(system, x);
        Some((forward? - backward?) / (2.0 * h))
    }

    /// The point `x` measured: Jacobian, scales and residuals.
    fn measure(
        &mut self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
        iterations: usize,
    ) -> Option<(Root, DVector<f64>)> {
        let residuals = self.residuals(system, x)?;
        let jacobian = self.jacobian(system, x)?;
        let scales = self.scales(system, x, &jacobian)?;
        Some((
            Root {
                x: x.clone(),
                iterations,
                jacobian,
                scales,
            },
            residuals,
        ))
    }

    /// Newton's method from `start` with a backtracking line search, falling
    /// back to Levenberg–Marquardt steps when the Newton step is unusable.
    /// The equations are scaled afresh at every point it reaches. Gives the
    /// root reached and the Jacobian at the start (which tells a linear
    /// system: the same at both).
    fn newton(
        &mut self,
        system: &System<'_, '_>,
        start: DVector<f64>,
    ) -> Result<(Root, DMatrix<f64>), Miss> {
        let mut x = start;
        let mut damping = 1e-3;
        let mut reached: Option<(Root, DVector<f64>)> = None;
        let mut start_jacobian: Option<DMatrix<f64>> = None;
        let solved = |root: Root, start_jacobian: Option<DMatrix<f64>>| {
            let start_jacobian = start_jacobian.unwrap_or_else(|| root.jacobian.clone());
            (root, start_jacobian)
        };
        for iteration in 0..=MAX_ITERATIONS {
            let Some((root, residuals)) = self.measure(system, &x, iteration) else {
                return Err(
                    reached.map_or(Miss::Undefined, |missed| Miss::NotSolved(Box::new(missed)))
                );
            };
            let r = scaled_residuals(&residuals, &root.scales);
            if r.amax() <= TOLERANCE {
                return Ok(solved(root, start_jacobian));
            }
            if iteration == MAX_ITERATIONS {
                return Err(Miss::NotSolved(Box::new((root, residuals))));
            }
            if iteration == 0 {
                start_jacobian = Some(root.jacobian.clone());
            }
            let columns = column_sizes(system, &root.x);
            let jacobian = scaled_jacobian(system, &root);
            let merit = r.norm_squared();
            let scaled_at = |this: &mut Self, step: &DVector<f64>| {
                let candidate = &x + step.component_mul(&columns);
                let next = this.residuals(system, &candidate)?;
                Some((
                    candidate,
                    scaled_residuals(&next, &root.scales).norm_squared(),
                ))
            };
            let mut accepted = None;
            if let Some(step) = jacobian
                .clone()
                .lu()
                .solve(&(-&r))
                .filter(|s| s.iter().all(|v| v.is_finite()))
            {
                let mut t = 1.0;
                while t > 1e-10 {
                    if let Some((candidate, next)) = scaled_at(self, &(&step * t))
                        && next <= (1.0 - 1e-4 * t) * merit
                    {
                        accepted = Some(candidate);
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
                    if let Some(step) = damped.lu().solve(&(-&gradient))
                        && let Some((candidate, next)) = scaled_at(self, &step)
                        && next < merit
                    {
                        accepted = Some(candidate);
                        damping = (damping / 10.0).max(1e-12);
                        break;
                    }
                    damping *= 10.0;
                }
            }
            match accepted {
                Some(next) => x = next,
                None if r.amax() <= VERIFIED => return Ok(solved(root, start_jacobian)),
                None => return Err(Miss::NotSolved(Box::new((root, residuals)))),
            }
            reached = Some((root, residuals));
        }
        Err(reached.map_or(Miss::Undefined, |missed| Miss::NotSolved(Box::new(missed))))
    }

    /// The error for equations that cannot be evaluated at the guess.
    fn undefined_at_guess(&self, block: &SolveBlock) -> Stop {
        Stop::Fail(Box::new(
            Diagnostic::error(
                Code::NoConvergence,
                block.head,
                "the equations cannot be evaluated at the starting guess",
            )
            .with_help(format!(
                "give each unknown a guess with `~` inside the range where its equations are defined ({})",
                self.unknown_names(block)
            )),
        ))
    }

    /// The error for a point that does not solve the equations, naming
    /// those furthest from holding and by how much.
    fn not_converged(
        &mut self,
        block: &SolveBlock,
        system: &System<'_, '_>,
        at: &Root,
        residuals: &DVector<f64>,
    ) -> Stop {
        let mut worst: Vec<(f64, usize)> = scaled_residuals(residuals, &at.scales)
            .iter()
            .enumerate()
            .map(|(j, v)| (if v.is_nan() { f64::INFINITY } else { v.abs() }, j))
            .collect();
        worst.sort_by(|a, b| b.0.total_cmp(&a.0));
        let described: Vec<String> = worst
            .iter()
            .take(3)
            .map(|&(_, j)| {
                let equation = &system.equations[j];
                let off = self
                    .style
                    .show(Quantity::new(residuals[j], equation.dimension));
                format!("`{}` (off by {off})", equation_text(self.source, equation))
            })
            .collect();
        let mut diagnostic = Diagnostic::error(
            Code::NoConvergence,
            block.head,
            format!(
                "no solution found for {}: at the closest point reached ({}) the equations furthest from holding are {}",
                self.unknown_names(block),
                self.unknowns_at(block, system, &at.x),
                described.join(", ")
            ),
        )
        .with_help("give better guesses with `~`, check the equations' signs, or check that a solution exists");
        for &(_, j) in worst.iter().take(3) {
            diagnostic = diagnostic.with_label(system.equations[j].equation.span, "does not hold");
        }
        self.set_unknowns(system, &at.x);
        Stop::Fail(Box::new(diagnostic))
    }

    /// The implicit derivatives of a solved block's unknowns: for each
    /// unknown, ∂x/∂c for every other cell c its equations name, from
    /// dx/dc = −J⁻¹ ∂F/∂c with both Jacobians exact (the equations compiled
    /// over every cell they name and run on dual numbers) at the solution.
    /// `None` for a block with vector equations, or one whose Jacobian
    /// cannot be inverted there.
    pub(super) fn solve_slopes(
        &self,
        statement: usize,
        unknowns: &[CellId],
    ) -> Option<Vec<Vec<(CellId, f64)>>> {
        let block = self.sheet.solve_block(statement)?;
        if block.equations.len() != unknowns.len() {
            return None;
        }
        let mut programs = Vec::with_capacity(block.equations.len());
        for equation in &block.equations {
            let difference = difference_of(equation);
            programs.push(
                self.compile(&difference, &|name| self.input_for(name))
                    .ok()?,
            );
        }
        let mut outside: Vec<CellId> = programs
            .iter()
            .flat_map(|program| program.inputs().map(|id| id as usize))
            .filter(|id| !unknowns.contains(id))
            .collect();
        outside.sort_unstable();
        outside.dedup();
        let values: Vec<f64> = (0..self.sheet.cells.len())
            .map(|id| self.scalar_si(id).unwrap_or(f64::NAN))
            .collect();
        let mut duals: Vec<Dual<f64>> = values.iter().map(|&v| Dual::fixed(v)).collect();
        let mut slope = |program: &Program, cell: CellId| {
            duals[cell] = Dual::variable(values[cell]);
            let derivative = program.run(&duals).derivative;
            duals[cell] = Dual::fixed(values[cell]);
            derivative
        };
        let n = unknowns.len();
        let mut jacobian = DMatrix::zeros(n, n);
        let mut forcing = DMatrix::zeros(n, outside.len());
        for (j, program) in programs.iter().enumerate() {
            for (i, &unknown) in unknowns.iter().enumerate() {
                jacobian[(j, i)] = slope(program, unknown);
            }
            for (k, &cell) in outside.iter().enumerate() {
                forcing[(j, k)] = -slope(program, cell);
            }
        }
        let solved = jacobian.lu().solve(&forcing)?;
        if solved.iter().any(|v| !v.is_finite()) {
            return None;
        }
        Some(
            (0..n)
                .map(|i| {
                    outside
                        .iter()
                        .enumerate()
                        .map(|(k, &cell)| (cell, solved[(i, k)]))
                        .collect()
                })
                .collect(),
        )
    }

    /// `T = 546 N, θ = 23.68 deg`: the unknowns at `x`, each in its own
    /// unit (a component at the rounding floor of its size reads as zero).
    fn unknowns_at(&self, block: &SolveBlock, system: &System<'_, '_>, x: &DVector<f64>) -> String {
        let size = column_sizes(system, x);
        block
            .unknowns
            .iter()
            .enumerate()
            .map(|(i, u)| {
                let value = if x[i].abs() < 1e-9 * size[i] {
                    0.0
                } else {
                    x[i]
                };
                format!(
                    "{} = {}",
                    u.name.text,
                    self.style
                        .show_in(value, u.unit.span.text(self.source), system.units[i])
                )
            })
            .collect::<Vec<_>>()
            .join(", ")
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
    /// signs): a different point found there that is verified to solve the
    /// equations is reported as a warning.
    fn look_for_other_roots(
        &mut self,
        system: &System<'_, '_>,
        x0: &DVector<f64>,
        root: &Root,
        condition: f64,
        block: &SolveBlock,
    ) {
        let size = column_sizes(system, &root.x);
        for factor in [0.1, 0.5, 2.0, 10.0] {
            let Ok((other, _)) = self.newton(system, x0 * factor) else {
                continue;
            };
            if !distinct(system, &root.x, &other.x, &size, condition)
                || !self.solves(system, &other.x)
            {
                continue;
            }
            self.diagnostics.push(
                Diagnostic::new(
                    Severity::Warning,
                    Code::SeveralRoots,
                    block.head,
                    format!(
                        "these equations have more than one solution near the guess: heft took {} (reached from the guess), but {} also solves them",
                        self.unknowns_at(block, system, &root.x),
                        self.unknowns_at(block, system, &other.x)
                    ),
                )
                .with_help("move the guesses (`~`) closer to the solution you mean, so that no other lies within a factor of 10 of them"),
            );
            return;
        }
    }
}

/// Whether `other` is a different solution from `root`: apart by more than
/// either can be trusted to (10⁻⁶ of their size, or more for an
/// ill-conditioned system), and not the same angles a whole number of turns
/// apart.
fn distinct(
    system: &System<'_, '_>,
    root: &DVector<f64>,
    other: &DVector<f64>,
    size: &DVector<f64>,
    condition: f64,
) -> bool {
    let trusted = 1e-6_f64.max(condition * 1e-11);
    let turn = std::f64::consts::TAU;
    (0..root.len()).any(|i| {
        let apart = other[i] - root[i];
        let apart = if system.dimensions[i].is_dimensionless() {
            apart - turn * (apart / turn).round()
        } else {
            apart
        };
        apart.abs() > trusted * size[i]
    })
}

/// Whether a guess is written as a plain number (no unit and no name in it),
/// so that it is read in the unknown's own unit.
fn written_bare(expr: &Expr) -> bool {
    match &expr.kind {
        ExprKind::Number(_) => true,
        ExprKind::Negate(inner) => written_bare(inner),
        ExprKind::Binary { lhs, rhs, .. } => written_bare(lhs) && written_bare(rhs),
        _ => false,
    }
}

/// `lhs - rhs` of an equation, as one expression to compile.
fn difference_of(equation: &Equation) -> Expr {
    Expr {
        span: equation.span,
        kind: ExprKind::Binary {
            op: BinaryOp::Subtract,
            lhs: Box::new(equation.lhs.clone()),
            rhs: Box::new(equation.rhs.clone()),
        },
    }
}

/// One number of a value: a vector's component, or the scalar itself.
fn pick(value: Value, component: Option<usize>) -> f64 {
    match (value, component) {
        (Value::Vector(v), Some(axis)) => v.si[axis],
        (value, _) => value.scalar().map_or(f64::NAN, |q| q.si),
    }
}

/// Residuals divided by their equations' scales (an equation whose terms
/// are all zero holds only if its residual is zero).
fn scaled_residuals(residuals: &DVector<f64>, scales: &DVector<f64>) -> DVector<f64> {
    residuals.zip_map(scales, |r, s| {
        if s > 0.0 {
            r / s
        } else if r == 0.0 {
            0.0
        } else {
            f64::INFINITY
        }
    })
}

/// The size each unknown is measured against at `x`: its value, or one of
/// its unit, whichever is larger.
fn column_sizes(system: &System<'_, '_>, x: &DVector<f64>) -> DVector<f64> {
    DVector::from_iterator(
        x.len(),
        x.iter()
            .zip(&system.units)
            .map(|(v, unit)| v.abs().max(*unit)),
    )
}

/// The Jacobian at `root` with each unknown measured against its size and
/// each equation against its scale: its condition number is the factor by
/// which a relative change in the equations' terms moves the unknowns.
fn scaled_jacobian(system: &System<'_, '_>, root: &Root) -> DMatrix<f64> {
    let columns = column_sizes(system, &root.x);
    let mut scaled = root.jacobian.clone();
    for (j, mut row) in scaled.row_iter_mut().enumerate() {
        let moved: f64 = row
            .iter()
            .zip(columns.iter())
            .map(|(d, c)| (d * c).abs())
            .sum();
        let scale = if root.scales[j] > 0.0 {
            root.scales[j]
        } else if moved > 0.0 {
            moved
        } else {
            1.0
        };
        for (i, entry) in row.iter_mut().enumerate() {
            *entry *= columns[i] / scale;
        }
    }
    scaled
}

fn singular_extremes(values: &DVector<f64>) -> (f64, f64) {
    let largest = values.iter().copied().fold(0.0, f64::max);
    let smallest = values.iter().copied().fold(f64::INFINITY, f64::min);
    (largest, if smallest.is_finite() { smallest } else { 0.0 })
}

/// The warning for a solution of condition number `condition`.
fn ill_conditioned(block: &SolveBlock, condition: f64, names: &str) -> Diagnostic {
    let lost = libm::log10(condition).round();
    Diagnostic::new(
        Severity::Warning,
        Code::IllConditioned,
        block.head,
        format!(
            "the solution for {names} is ill-conditioned (condition number {condition:.1e}): it costs about {lost} of the 16 significant digits, and small changes in the inputs move it far",
        ),
    )
    .with_help("look for nearly dependent equations, or a double root (a curve that only touches its target); an independent equation, or an inputs' margin, makes the answer firm")
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
