//! Compiled formulas: an expression checked for dimensions once and turned
//! into a flat stack program over plain numbers, for code that evaluates the
//! same formula many times with changing inputs (integrating equations of
//! motion, propagating tolerances and derivatives).
//!
//! The program is generic over [`Number`], so one compiled formula runs on
//! `f64` and on any other number type that implements the trait (intervals,
//! dual numbers). Parts of a formula that do not depend on the changing
//! inputs are evaluated once, at compile time, by the ordinary evaluator.
//! Hand-written because the evaluator must keep heft's own dimension rules and
//! diagnostics; a general expression-compiler crate would know neither.

use super::Evaluator;
use super::explain::{Operand, mismatch};
use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::numeric::{BinaryRule, Number, UnaryRule};
use crate::syntax::ast::{BinaryOp, Expr, ExprKind, NameRef, Relation};
use crate::units::functions::{self, Function, Kind};
use crate::units::{Dimension, Quantity, Value};

/// One instruction of a stack program.
#[derive(Clone, Copy, Debug)]
pub enum Op {
    /// Push a constant (SI value).
    Constant(f64),
    /// Push input number `n`.
    Input(u32),
    /// Pop b, a; push a + b.
    Add,
    /// Pop b, a; push a − b.
    Sub,
    /// Pop b, a; push a · b.
    Mul,
    /// Pop b, a; push a / b.
    Div,
    /// Negate the top.
    Neg,
    /// Raise the top to an integer power.
    Powi(i32),
    /// Pop b, a; push a^b.
    Pow,
    /// Apply a one-argument function to the top, by its rule from the
    /// function table.
    Unary(&'static UnaryRule),
    /// Pop b, a; push f(a, b), by its rule from the function table.
    Binary(&'static BinaryRule),
    /// Pop b, a; push whether `a RELATION b` holds onto the test stack.
    Compare(Relation),
    /// Pop two tests; push whether both hold.
    And,
    /// Pop two tests; push whether either holds.
    Or,
    /// Negate the top test.
    Not,
    /// Pop a test, then b (the `else` branch) and a (the `then` branch);
    /// push a where the test holds, b where it does not, and either across
    /// the jump where it may go both ways (the test is written at the span).
    Select(Span),
}

/// Whether a test holds: surely, surely not, or (over a box) either way.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Truth {
    /// It holds.
    Holds,
    /// It does not hold.
    Fails,
    /// It holds somewhere and fails somewhere (or cannot be told: NaN).
    Either,
}

impl Truth {
    fn of(holds: bool, fails: bool) -> Truth {
        match (holds, fails) {
            (true, false) => Truth::Holds,
            (false, true) => Truth::Fails,
            _ => Truth::Either,
        }
    }

    /// Whether `a RELATION b` holds for numbers of type `T`.
    pub fn compare<T: Number>(relation: Relation, a: T, b: T) -> Truth {
        match relation {
            Relation::AtMost => Truth::of(a.certainly_at_most(b), b.certainly_less(a)),
            Relation::Below => Truth::of(a.certainly_less(b), b.certainly_at_most(a)),
            Relation::AtLeast => Truth::of(b.certainly_at_most(a), a.certainly_less(b)),
            Relation::Above => Truth::of(b.certainly_less(a), a.certainly_at_most(b)),
            Relation::Equal => Truth::of(
                a.certainly_at_most(b) && b.certainly_at_most(a),
                a.certainly_less(b) || b.certainly_less(a),
            ),
            Relation::NotEqual => Truth::compare(Relation::Equal, a, b).negated(),
        }
    }

    fn negated(self) -> Truth {
        match self {
            Truth::Holds => Truth::Fails,
            Truth::Fails => Truth::Holds,
            Truth::Either => Truth::Either,
        }
    }

    fn and(self, other: Truth) -> Truth {
        match (self, other) {
            (Truth::Fails, _) | (_, Truth::Fails) => Truth::Fails,
            (Truth::Holds, Truth::Holds) => Truth::Holds,
            _ => Truth::Either,
        }
    }

    fn or(self, other: Truth) -> Truth {
        self.negated().and(other.negated()).negated()
    }
}

/// A compiled formula: its program and the dimension of its result.
#[derive(Clone, Debug)]
pub struct Program {
    ops: Vec<Op>,
    /// The dimension of the result.
    pub dimension: Dimension,
}

impl Program {
    /// Runs the program with `inputs[n]` for `Op::Input(n)`.
    pub fn run<T: Number>(&self, inputs: &[T]) -> T {
        let mut stack: Vec<T> = Vec::with_capacity(8);
        self.run_with(inputs, &mut stack)
    }

    /// Runs the program reusing `stack` (no allocation in a hot loop).
    pub fn run_with<T: Number>(&self, inputs: &[T], stack: &mut Vec<T>) -> T {
        self.run_noting(inputs, stack, &mut None)
    }

    /// Where the first test that went either way (over a box that straddles
    /// it) is written, if one did; the program run as [`Program::run`].
    pub fn straddled_test<T: Number>(&self, inputs: &[T]) -> Option<Span> {
        let mut straddled = None;
        self.run_noting(inputs, &mut Vec::with_capacity(8), &mut straddled);
        straddled
    }

    /// Runs the program, noting in `straddled` the first test that went
    /// either way.
    fn run_noting<T: Number>(
        &self,
        inputs: &[T],
        stack: &mut Vec<T>,
        straddled: &mut Option<Span>,
    ) -> T {
        stack.clear();
        // Empty, and so never allocated, for a formula without tests.
        let mut truths: Vec<Truth> = Vec::new();
        for op in &self.ops {
            let value = match *op {
                Op::Constant(value) => T::constant(value),
                Op::Input(index) => inputs
                    .get(index as usize)
                    .copied()
                    .unwrap_or(T::constant(f64::NAN)),
                Op::Neg => pop(stack).neg(),
                Op::Powi(power) => pop(stack).powi(power),
                Op::Unary(rule) => pop(stack).apply(rule),
                Op::Compare(relation) => {
                    let b = pop(stack);
                    let a = pop(stack);
                    truths.push(Truth::compare(relation, a, b));
                    continue;
                }
                Op::And | Op::Or => {
                    let b = truths.pop().unwrap_or(Truth::Either);
                    let a = truths.pop().unwrap_or(Truth::Either);
                    truths.push(if matches!(op, Op::And) {
                        a.and(b)
                    } else {
                        a.or(b)
                    });
                    continue;
                }
                Op::Not => {
                    let a = truths.pop().unwrap_or(Truth::Either);
                    truths.push(a.negated());
                    continue;
                }
                Op::Select(test) => {
                    let otherwise = pop(stack);
                    let then = pop(stack);
                    match truths.pop().unwrap_or(Truth::Either) {
                        Truth::Holds => then,
                        Truth::Fails => otherwise,
                        Truth::Either => {
                            straddled.get_or_insert(test);
                            then.across_jump(otherwise)
                        }
                    }
                }
                Op::Add | Op::Sub | Op::Mul | Op::Div | Op::Pow | Op::Binary(_) => {
                    let b = pop(stack);
                    let a = pop(stack);
                    match *op {
                        Op::Add => a.add(b),
                        Op::Sub => a.sub(b),
                        Op::Mul => a.mul(b),
                        Op::Div => a.div(b),
                        Op::Pow => a.powf(b),
                        Op::Binary(rule) => a.apply2(b, rule),
                        _ => a,
                    }
                }
            };
            stack.push(value);
        }
        pop(stack)
    }

    /// The instructions, for tests and inspection.
    pub fn ops(&self) -> &[Op] {
        &self.ops
    }

    /// The indices of the inputs the program reads.
    pub fn inputs(&self) -> impl Iterator<Item = u32> + '_ {
        self.ops.iter().filter_map(|op| match op {
            Op::Input(index) => Some(*index),
            _ => None,
        })
    }
}

fn pop<T: Number>(stack: &mut Vec<T>) -> T {
    stack.pop().unwrap_or(T::constant(f64::NAN))
}

/// An input of a program: which number, and a sample value whose dimension
/// the input always has (the sample also appears in messages).
#[derive(Clone, Copy, Debug)]
pub struct Input {
    /// Its index in the inputs slice.
    pub index: u32,
    /// A representative value (the dimension is what matters).
    pub sample: Quantity,
}

/// Compiling stops: with a diagnostic, or because the formula needs
/// something a program cannot do (a vector that depends on the inputs).
#[derive(Debug)]
pub enum CompileError {
    /// A problem in the formula, reported to the user.
    Diagnostic(Box<Diagnostic>),
    /// The formula uses vectors that change with the inputs.
    NeedsVectors(Span),
}

impl From<Box<Diagnostic>> for CompileError {
    fn from(diagnostic: Box<Diagnostic>) -> Self {
        CompileError::Diagnostic(diagnostic)
    }
}

impl Evaluator<'_> {
    /// Every cell named in a formula is an input of its program.
    pub(crate) fn input_for(&self, name: &NameRef) -> Option<Input> {
        let crate::syntax::ast::Target::Cell(id) = name.target else {
            return None;
        };
        Some(Input {
            index: u32::try_from(id).ok()?,
            sample: self.values[id]?.scalar()?,
        })
    }

    /// Compiles `expr` with the names for which `input_of` gives an input
    /// reading from the inputs slice; every other name is a constant (its
    /// current value). Dimensions are checked here, once.
    pub(crate) fn compile(
        &self,
        expr: &Expr,
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
    ) -> Result<Program, CompileError> {
        let mut ops = Vec::new();
        let sample = self.compile_into(expr, input_of, &mut ops)?;
        Ok(Program {
            ops,
            dimension: sample.dimension,
        })
    }

    /// Emits `expr`'s program and returns a sample of its value (the result
    /// at the inputs' sample values), which carries its dimension.
    fn compile_into(
        &self,
        expr: &Expr,
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
        ops: &mut Vec<Op>,
    ) -> Result<Quantity, CompileError> {
        if !mentions_input(expr, input_of) {
            return match self.eval(expr)? {
                Value::Scalar(q) => {
                    ops.push(Op::Constant(q.si));
                    Ok(q)
                }
                Value::Vector(_) => Err(CompileError::NeedsVectors(expr.span)),
            };
        }
        match &expr.kind {
            ExprKind::Name(name) => {
                let input = input_of(name).ok_or(CompileError::NeedsVectors(expr.span))?;
                ops.push(Op::Input(input.index));
                Ok(input.sample)
            }
            ExprKind::Negate(inner) => {
                let sample = self.compile_into(inner, input_of, ops)?;
                ops.push(Op::Neg);
                Ok(-sample)
            }
            ExprKind::Binary { op, lhs, rhs } => {
                let left = self.compile_into(lhs, input_of, ops)?;
                if *op == BinaryOp::Power && !mentions_input(rhs, input_of) {
                    return self.compile_power(lhs, left, rhs, expr.span, ops);
                }
                let right = self.compile_into(rhs, input_of, ops)?;
                let (instruction, result) = match op {
                    BinaryOp::Add => (Op::Add, left.try_add(right)),
                    BinaryOp::Subtract => (Op::Sub, left.try_sub(right)),
                    BinaryOp::Multiply => (Op::Mul, left.try_mul(right)),
                    BinaryOp::Divide => (
                        Op::Div,
                        left.try_div(Quantity::new(nonzero(right.si), right.dimension)),
                    ),
                    BinaryOp::Power => (Op::Pow, left.try_pow(right)),
                };
                let result = result.map_err(|_| {
                    self.compile_mismatch(*op, (lhs, left), (rhs, right), expr.span)
                })?;
                ops.push(instruction);
                Ok(result)
            }
            ExprKind::Call { function, args } => {
                self.compile_call(&function.text, expr, args, input_of, ops)
            }
            ExprKind::Conditional(conditional) => {
                self.compile_conditional(conditional, input_of, ops)
            }
            _ => Err(CompileError::NeedsVectors(expr.span)),
        }
    }

    /// `base ^ exponent` with an exponent fixed at compile time.
    fn compile_power(
        &self,
        lhs: &Expr,
        base: Quantity,
        rhs: &Expr,
        span: Span,
        ops: &mut Vec<Op>,
    ) -> Result<Quantity, CompileError> {
        let exponent = match self.eval(rhs)? {
            Value::Scalar(q) => q,
            Value::Vector(_) => return Err(CompileError::NeedsVectors(rhs.span)),
        };
        let result = base.try_pow(exponent).map_err(|_| {
            self.compile_mismatch(BinaryOp::Power, (lhs, base), (rhs, exponent), span)
        })?;
        if exponent.si.fract() == 0.0 && exponent.si.abs() <= 64.0 {
            ops.push(Op::Powi(exponent.si as i32));
        } else {
            ops.push(Op::Constant(exponent.si));
            ops.push(Op::Pow);
        }
        Ok(result)
    }

    /// A call, by the op its entry in the function table gives.
    fn compile_call(
        &self,
        name: &str,
        expr: &Expr,
        args: &[Expr],
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
        ops: &mut Vec<Op>,
    ) -> Result<Quantity, CompileError> {
        // The ordinary evaluator checks the call once at the sample values:
        // arity, dimensions and domain, with its usual messages.
        let samples = args
            .iter()
            .map(|arg| {
                let mut scratch = Vec::new();
                self.compile_into(arg, input_of, &mut scratch)
                    .map(|q| (q, scratch))
            })
            .collect::<Result<Vec<_>, _>>()?;
        let (function, result) = self.check_call_at_samples(
            name,
            expr,
            args,
            &samples.iter().map(|(q, _)| *q).collect::<Vec<_>>(),
        )?;
        match function.kind {
            Kind::Unary { rule, .. } => {
                ops.extend(samples.into_iter().flat_map(|(_, code)| code));
                ops.push(Op::Unary(rule));
            }
            Kind::Binary { rule, .. } => {
                let mut samples = samples.into_iter();
                if let Some((_, first)) = samples.next() {
                    ops.extend(first);
                }
                for (_, code) in samples {
                    ops.extend(code);
                    ops.push(Op::Binary(rule));
                }
            }
            // The entry says so: programs carry no vectors.
            Kind::Vectors(_) => return Err(CompileError::NeedsVectors(expr.span)),
        }
        Ok(result)
    }

    /// Runs the function's own check and rule once on sample values to
    /// check the call; gives its entry and the sample result.
    fn check_call_at_samples(
        &self,
        name: &str,
        expr: &Expr,
        args: &[Expr],
        samples: &[Quantity],
    ) -> Result<(&'static Function, Quantity), CompileError> {
        let function = functions::function(name).ok_or_else(|| {
            CompileError::Diagnostic(Box::new(Diagnostic::error(
                Code::BadCall,
                expr.span,
                format!("there is no function `{name}`"),
            )))
        })?;
        if !function.arity.accepts(args.len()) {
            return Err(CompileError::Diagnostic(Box::new(Diagnostic::error(
                Code::BadCall,
                expr.span,
                format!(
                    "`{name}` takes {}, not {}",
                    function.arity.describe(),
                    args.len()
                ),
            ))));
        }
        let Some(result) = function.call_scalars(samples) else {
            return Err(CompileError::NeedsVectors(expr.span));
        };
        let result = result.map_err(|_| {
            // Report with the evaluator's own wording at the sample values.
            match self.eval(expr) {
                Err(diagnostic) => CompileError::Diagnostic(diagnostic),
                Ok(_) => CompileError::Diagnostic(Box::new(Diagnostic::error(
                    Code::DimensionMismatch,
                    expr.span,
                    format!("`{name}` cannot take these arguments"),
                ))),
            }
        })?;
        Ok((function, result))
    }

    fn compile_mismatch(
        &self,
        op: BinaryOp,
        (lhs, left): (&Expr, Quantity),
        (rhs, right): (&Expr, Quantity),
        span: Span,
    ) -> CompileError {
        let text = |expr: &Expr| expr.span.text(self.source);
        let diagnostic = match op {
            BinaryOp::Add | BinaryOp::Subtract => mismatch(
                if op == BinaryOp::Add {
                    "add"
                } else {
                    "subtract"
                },
                &Operand {
                    span: lhs.span,
                    text: text(lhs),
                    value: Value::Scalar(left),
                },
                &Operand {
                    span: rhs.span,
                    text: text(rhs),
                    value: Value::Scalar(right),
                },
                self.style,
            ),
            _ => Diagnostic::error(
                Code::DimensionMismatch,
                span,
                format!(
                    "`{}` ({}) and `{}` ({}) cannot be combined this way",
                    text(lhs),
                    left.dimension.describe(),
                    text(rhs),
                    right.dimension.describe()
                ),
            ),
        };
        CompileError::Diagnostic(Box::new(diagnostic))
    }
}

/// A divisor for dimension bookkeeping: a sample of zero must not stop the
/// compile-time dimension check (the run itself divides by the real value).
fn nonzero(value: f64) -> f64 {
    if value == 0.0 { 1.0 } else { value }
}

/// Whether any name in `expr` is an input.
fn mentions_input(expr: &Expr, input_of: &dyn Fn(&NameRef) -> Option<Input>) -> bool {
    let mut found = false;
    expr.walk(&mut |node| {
        if let ExprKind::Name(name) = &node.kind
            && input_of(name).is_some()
        {
            found = true;
        }
    });
    found
}

mod conditional;

#[cfg(test)]
mod every_function;

#[cfg(test)]
mod tests {
    use std::sync::Arc;

    use super::*;
    use crate::sheet::Sheet;
    use crate::syntax::ast::Target;

    /// Compiles cell `name`'s formula with cell `input` as input 0, then
    /// checks the program against the interpreter at several input values.
    fn agrees(source: &str, name: &str, input: &str, values: &[f64]) {
        let sheet = Arc::new(Sheet::parse(source));
        let source: Arc<str> = Arc::from(source);
        let mut evaluator = Evaluator::new(&sheet, &source);
        for &node in &sheet.order.order {
            if let crate::sheet::Node::Cell(id) = &sheet.nodes[node] {
                evaluator.evaluate_cell(*id);
            }
        }
        let input_id = sheet.names[input];
        let sample = evaluator.values[input_id]
            .and_then(|v| v.scalar())
            .expect("input evaluates");
        let expr = sheet.cell(sheet.names[name]).expr.expect("a formula");
        let input_of = |n: &NameRef| {
            (n.target == Target::Cell(input_id)).then_some(Input { index: 0, sample })
        };
        let program = evaluator.compile(expr, &input_of).expect("compiles");
        for &value in values {
            evaluator.values[input_id] =
                Some(Value::Scalar(Quantity::new(value, sample.dimension)));
            let interpreted = evaluator
                .eval(expr)
                .expect("evaluates")
                .scalar()
                .expect("scalar")
                .si;
            let compiled = program.run(&[value]);
            assert!(
                (compiled - interpreted).abs() <= 1e-12 * interpreted.abs().max(1.0),
                "{value}: {compiled} vs {interpreted}"
            );
        }
    }

    #[test]
    fn compiled_formulas_match_the_interpreter() {
        agrees(
            "v = 3 m/s\nc = 0.02 kg/m\nm = 5 kg\nF = m * g0 - c * v * abs(v)\n",
            "F",
            "v",
            &[-10.0, 0.0, 2.5, 49.5],
        );
        agrees(
            "x = 0.2 m\nk = 800 N/m\nE = k * x^2 / 2 + sqrt(x^2 + (0.3 m)^2) * 1 N\n",
            "E",
            "x",
            &[0.0, 0.1, 1.7],
        );
        agrees(
            "θ = 0.3\ny = atan2(sin(θ), cos(θ)) + max(θ, 0.5, θ^3) - hypot(θ, 1) + exp(-θ) * ln(2 + θ)\n",
            "y",
            "θ",
            &[0.1, 1.0, 2.0],
        );
    }

    #[test]
    fn compiled_piecewise_formulas_match_the_interpreter() {
        agrees(
            "v = 0.5 m/s\nF [N] = if v <= 1 m/s and not v == 0.3 m/s then 10 N * v / (1 m/s) else if v > 2 m/s or v < 0 m/s then 3 N else 20 N * (v / (1 m/s))^2\n",
            "F",
            "v",
            &[-1.0, 0.0, 0.3, 0.5, 1.0, 1.5, 2.0, 2.5],
        );
    }

    #[test]
    fn a_box_across_a_test_gives_the_hull_and_an_unbounded_slope() {
        use crate::numeric::{Dual, Interval};
        let source = "v = 0.5\nphi = if v <= 1 then 1.25 * v else 1.40 * v\n";
        let sheet = Arc::new(Sheet::parse(source));
        let text: Arc<str> = Arc::from(source);
        let mut evaluator = Evaluator::new(&sheet, &text);
        evaluator.evaluate_cell(0);
        let sample = Quantity::number(0.5);
        let input_of =
            |n: &NameRef| (n.target == Target::Cell(0)).then_some(Input { index: 0, sample });
        let expr = sheet.cell(1).expr.expect("a formula");
        let program = evaluator.compile(expr, &input_of).expect("compiles");
        // Inside one branch: that branch's enclosure, no straddle.
        let inside = program.run(&[Interval::new(0.2, 0.8)]);
        assert!(inside.lo <= 0.25 && inside.hi >= 1.0 && inside.hi < 1.0 + 1e-12);
        assert_eq!(program.straddled_test(&[Interval::new(0.2, 0.8)]), None);
        // Across the switch at 1: the hull of 1.25·[0.8, 1.2] and 1.40·[0.8, 1.2].
        let across = program.run(&[Interval::new(0.8, 1.2)]);
        assert!(across.lo <= 1.0 && across.hi >= 1.68 - 1e-12);
        assert!(program.straddled_test(&[Interval::new(0.8, 1.2)]).is_some());
        let slope = program
            .run(&[Dual::variable(Interval::new(0.8, 1.2))])
            .derivative;
        assert!(slope.lo == f64::NEG_INFINITY && slope.hi == f64::INFINITY);
        // At a point: the taken branch's derivative (d/dv of 1.40 v is 1.40).
        let at_point = program.run(&[Dual::variable(1.5)]);
        assert_eq!((at_point.value, at_point.derivative), (1.40 * 1.5, 1.40));
        assert_eq!(program.run(&[Dual::variable(1.0)]).derivative, 1.25);
    }

    #[test]
    fn dimensions_are_checked_when_compiling() {
        let sheet = Arc::new(Sheet::parse("x = 2 m\nbad = x + 1 kg\n"));
        let source: Arc<str> = Arc::from("x = 2 m\nbad = x + 1 kg\n");
        let mut evaluator = Evaluator::new(&sheet, &source);
        evaluator.evaluate_cell(0);
        let sample = Quantity::new(2.0, Dimension::LENGTH);
        let input_of =
            |n: &NameRef| (n.target == Target::Cell(0)).then_some(Input { index: 0, sample });
        let expr = sheet.cell(1).expr.expect("a formula");
        assert!(matches!(
            evaluator.compile(expr, &input_of),
            Err(CompileError::Diagnostic(_))
        ));
    }
}
