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

mod equations;
mod findings;
mod newton;

use nalgebra::{DMatrix, DVector};

use crate::base::{Code, Diagnostic, Severity};
use crate::eval::explain::{Operand, mismatch};
use crate::eval::model::{EquationReport, SolveReport, SolveStatus};
use crate::eval::program::{CompileError, Input, Program};
use crate::eval::{CellStatus, Evaluator};
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
        self.settle_block_cells(unknowns, status);
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
                        crate::eval::count(unknowns.len(), "unknown")
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
                        crate::eval::count(equations.len(), "equation"),
                        crate::eval::count(unknowns.len(), "unknown"),
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
