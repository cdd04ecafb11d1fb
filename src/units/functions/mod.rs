//! The built-in functions: one table, [`FUNCTIONS`], with one entry per
//! function carrying everything heft needs of it — its name and arguments,
//! what it does with angles (for the lints), its dimension and domain
//! rule, and its numeric rule, which gives its
//! value in the interpreter, the op compiled programs run (solve equations,
//! simulate rates), its enclosure over a box (tolerance ranges) and its
//! derivative (Newton's Jacobian, first-order bounds, run extrema). The
//! rule's fields are all required, so a function cannot be added without
//! its range or its derivative; a function that takes or gives vectors says
//! so in its entry ([`Kind::Vectors`]), and compiling a call of it answers
//! that it needs vectors, which each consumer handles by its own path.
//!
//! `scalar.rs` holds the scalar functions' rules, `vectors.rs` the vector
//! functions' values.

mod scalar;
mod vectors;

use super::{Dimension, Quantity, Value};
use crate::numeric::{BinaryRule, UnaryRule};

/// How many arguments a function takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Arity {
    /// Exactly this many.
    Exactly(usize),
    /// At least this many.
    AtLeast(usize),
    /// From the first to the second, inclusive.
    Between(usize, usize),
}

impl Arity {
    /// Whether `n` arguments fit.
    pub fn accepts(self, n: usize) -> bool {
        match self {
            Arity::Exactly(expected) => n == expected,
            Arity::AtLeast(minimum) => n >= minimum,
            Arity::Between(minimum, maximum) => (minimum..=maximum).contains(&n),
        }
    }

    /// "1 argument", "at least 2 arguments".
    pub fn describe(self) -> String {
        let plural = |n: usize| if n == 1 { "argument" } else { "arguments" };
        match self {
            Arity::Exactly(n) => format!("{n} {}", plural(n)),
            Arity::AtLeast(n) => format!("at least {n} {}", plural(n)),
            Arity::Between(low, high) => format!("{low} to {high} {}", plural(high)),
        }
    }
}

/// Why a call has no value; `argument` indexes the offending argument.
#[derive(Clone, Debug, PartialEq)]
pub enum CallError {
    /// The argument must be a plain number (angles are plain numbers).
    NotDimensionless {
        /// Which argument.
        argument: usize,
    },
    /// Arguments that must share a dimension do not.
    Mismatch {
        /// The argument that differs from the first.
        argument: usize,
    },
    /// A square root of a quantity whose dimension has odd exponents.
    OddRoot,
    /// The argument must be a scalar, not a vector.
    NotScalar {
        /// Which argument.
        argument: usize,
    },
    /// The argument must be a vector.
    NotVector {
        /// Which argument.
        argument: usize,
    },
    /// The argument is outside the function's domain.
    Domain {
        /// Which argument.
        argument: usize,
        /// What the domain is, e.g. "a number from -1 to 1".
        expected: &'static str,
    },
}

/// A scalar function's dimension and domain rule: the dimension of its
/// result for these arguments, or why they are refused.
pub type Check = fn(&[Quantity]) -> Result<Dimension, CallError>;

/// What a function is, with the rules that say so.
#[derive(Clone, Copy, Debug)]
pub enum Kind {
    /// f(x) of one scalar: `check` gives the result's dimension, `rule` its
    /// value on the SI value and every other number type.
    Unary {
        /// Dimensions and domain.
        check: Check,
        /// The numeric rule, compiled as it stands.
        rule: &'static UnaryRule,
    },
    /// f(a, b, …) of scalars, folded left over its arguments:
    /// f(f(a, b), c); a single argument is itself.
    Binary {
        /// Dimensions and domain (of every argument).
        check: Check,
        /// The numeric rule, compiled as it stands.
        rule: &'static BinaryRule,
    },
    /// Takes or gives vectors, which compiled programs do not carry:
    /// compiling a call answers that it needs vectors, and each consumer
    /// takes its own path (rates interpreted, ranges from corners).
    Vectors(fn(&[Value]) -> Result<Value, CallError>),
}

/// What a function does with angles, which are plain numbers in radians
/// (the lints read it to tell degrees from radians).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Angles {
    /// It takes an angle as this argument: `sin(θ)`, `polar(F, θ)`.
    Takes(usize),
    /// It gives an angle: `asin(x)`, `atan2(y, x)`, `angle(v)`.
    Gives,
    /// Neither.
    Neither,
}

/// A built-in function: an entry of [`FUNCTIONS`].
#[derive(Debug)]
pub struct Function {
    /// The name used in formulas.
    pub name: &'static str,
    /// Its arguments.
    pub arity: Arity,
    /// What it computes, for the language reference.
    pub doc: &'static str,
    /// What it does with angles.
    pub angles: Angles,
    /// Its rules.
    pub kind: Kind,
}

/// Every built-in function, the scalar ones first. Adding a function is one
/// entry here (see DEVELOPERS.md, "How to add… a function").
pub const FUNCTIONS: &[Function] = &[
    unary(
        "sqrt",
        "square root; halves every dimension exponent",
        Angles::Neither,
        scalar::half_dimension,
        &scalar::SQRT,
    ),
    unary(
        "abs",
        "absolute value, same dimension",
        Angles::Neither,
        scalar::same_dimension,
        &scalar::ABS,
    ),
    unary(
        "sin",
        "sine of an angle (a plain number in radians; write 30 deg)",
        Angles::Takes(0),
        scalar::plain,
        &scalar::SIN,
    ),
    unary(
        "cos",
        "cosine of an angle",
        Angles::Takes(0),
        scalar::plain,
        &scalar::COS,
    ),
    unary(
        "tan",
        "tangent of an angle",
        Angles::Takes(0),
        scalar::plain,
        &scalar::TAN,
    ),
    unary(
        "asin",
        "inverse sine, in radians",
        Angles::Gives,
        scalar::plain_from_minus_one_to_one,
        &scalar::ASIN,
    ),
    unary(
        "acos",
        "inverse cosine, in radians",
        Angles::Gives,
        scalar::plain_from_minus_one_to_one,
        &scalar::ACOS,
    ),
    unary(
        "atan",
        "inverse tangent, in radians",
        Angles::Gives,
        scalar::plain,
        &scalar::ATAN,
    ),
    binary(
        "atan2",
        Arity::Exactly(2),
        "angle of the point (x, y): atan2(y, x), both of one dimension",
        Angles::Gives,
        scalar::one_dimension_to_plain,
        &scalar::ATAN2,
    ),
    unary(
        "sinh",
        "hyperbolic sine of a plain number",
        Angles::Neither,
        scalar::plain,
        &scalar::SINH,
    ),
    unary(
        "cosh",
        "hyperbolic cosine of a plain number",
        Angles::Neither,
        scalar::plain,
        &scalar::COSH,
    ),
    unary(
        "tanh",
        "hyperbolic tangent of a plain number (a falling load with drag: v = v_t tanh(g t / v_t))",
        Angles::Neither,
        scalar::plain,
        &scalar::TANH,
    ),
    unary(
        "asinh",
        "inverse hyperbolic sine of a plain number",
        Angles::Neither,
        scalar::plain,
        &scalar::ASINH,
    ),
    unary(
        "acosh",
        "inverse hyperbolic cosine of a plain number of 1 or more",
        Angles::Neither,
        scalar::plain_at_least_one,
        &scalar::ACOSH,
    ),
    unary(
        "atanh",
        "inverse hyperbolic tangent of a plain number between -1 and 1",
        Angles::Neither,
        scalar::plain_between_minus_one_and_one,
        &scalar::ATANH,
    ),
    unary(
        "exp",
        "e to the power of a plain number",
        Angles::Neither,
        scalar::plain,
        &scalar::EXP,
    ),
    unary(
        "ln",
        "natural logarithm of a positive plain number",
        Angles::Neither,
        scalar::plain_positive,
        &scalar::LN,
    ),
    unary(
        "log10",
        "base-10 logarithm of a positive plain number",
        Angles::Neither,
        scalar::plain_positive,
        &scalar::LOG10,
    ),
    binary(
        "min",
        Arity::AtLeast(1),
        "smallest of its arguments, all of one dimension",
        Angles::Neither,
        scalar::one_dimension,
        &scalar::MIN,
    ),
    binary(
        "max",
        Arity::AtLeast(1),
        "largest of its arguments, all of one dimension",
        Angles::Neither,
        scalar::one_dimension,
        &scalar::MAX,
    ),
    binary(
        "hypot",
        Arity::AtLeast(2),
        "√(a² + b² + …), all of one dimension",
        Angles::Neither,
        scalar::one_dimension,
        &scalar::HYPOT,
    ),
    vector(
        "vec",
        Arity::Between(2, 3),
        "a vector from its components, all of one dimension: vec(120 N, -40 N)",
        Angles::Neither,
        vectors::make_vector,
    ),
    vector(
        "polar",
        Arity::Exactly(2),
        "a 2D vector from its magnitude and direction from +x: polar(40 N, 30 deg) or polar(40 N, 3:4)",
        Angles::Takes(1),
        vectors::polar,
    ),
    vector(
        "dot",
        Arity::Exactly(2),
        "the dot product of two vectors, a scalar",
        Angles::Neither,
        vectors::dot,
    ),
    vector(
        "cross",
        Arity::Exactly(2),
        "the cross product of two vectors, a 3D vector",
        Angles::Neither,
        vectors::cross,
    ),
    vector(
        "mag",
        Arity::Exactly(1),
        "the length of a vector, with its dimension",
        Angles::Neither,
        vectors::magnitude,
    ),
    vector(
        "unit",
        Arity::Exactly(1),
        "the vector divided by its length (a plain direction)",
        Angles::Neither,
        vectors::unit_vector,
    ),
    vector(
        "angle",
        Arity::Between(1, 2),
        "angle(v): direction of v from +x in the x-y plane; angle(a, b): the angle between two vectors",
        Angles::Gives,
        vectors::angle,
    ),
];

/// A function of one scalar.
const fn unary(
    name: &'static str,
    doc: &'static str,
    angles: Angles,
    check: Check,
    rule: &'static UnaryRule,
) -> Function {
    Function {
        name,
        arity: Arity::Exactly(1),
        doc,
        angles,
        kind: Kind::Unary { check, rule },
    }
}

/// A function of scalars folded left by a two-argument rule.
const fn binary(
    name: &'static str,
    arity: Arity,
    doc: &'static str,
    angles: Angles,
    check: Check,
    rule: &'static BinaryRule,
) -> Function {
    Function {
        name,
        arity,
        doc,
        angles,
        kind: Kind::Binary { check, rule },
    }
}

/// A function that takes or gives vectors.
const fn vector(
    name: &'static str,
    arity: Arity,
    doc: &'static str,
    angles: Angles,
    apply: fn(&[Value]) -> Result<Value, CallError>,
) -> Function {
    Function {
        name,
        arity,
        doc,
        angles,
        kind: Kind::Vectors(apply),
    }
}

/// The function with this name.
pub fn function(name: &str) -> Option<&'static Function> {
    FUNCTIONS.iter().find(|function| function.name == name)
}

impl Function {
    /// The value of a call on these arguments (as many as `arity` accepts):
    /// a scalar function refuses a vector argument, then checks dimensions
    /// and domain and computes its rule's value on the SI values.
    pub fn call(&self, args: &[Value]) -> Result<Value, CallError> {
        match self.kind {
            Kind::Vectors(apply) => apply(args),
            Kind::Unary { check, rule } => scalars(args)
                .and_then(|scalars| unary_value(check, rule, &scalars))
                .map(Value::Scalar),
            Kind::Binary { check, rule } => scalars(args)
                .and_then(|scalars| binary_value(check, rule, &scalars))
                .map(Value::Scalar),
        }
    }

    /// A scalar function's value on scalars (checked first), computed by the
    /// same rule compiled programs run; `None` for a vector function.
    pub fn call_scalars(&self, args: &[Quantity]) -> Option<Result<Quantity, CallError>> {
        match self.kind {
            Kind::Unary { check, rule } => Some(unary_value(check, rule, args)),
            Kind::Binary { check, rule } => Some(binary_value(check, rule, args)),
            Kind::Vectors(_) => None,
        }
    }
}

/// The arguments as scalars, or the first that is a vector.
fn scalars(args: &[Value]) -> Result<Vec<Quantity>, CallError> {
    args.iter()
        .enumerate()
        .map(|(argument, value)| value.scalar().ok_or(CallError::NotScalar { argument }))
        .collect()
}

fn unary_value(check: Check, rule: &UnaryRule, args: &[Quantity]) -> Result<Quantity, CallError> {
    let dimension = check(args)?;
    let value = args.first().map_or(f64::NAN, |arg| (rule.value)(arg.si));
    Ok(Quantity::new(value, dimension))
}

fn binary_value(check: Check, rule: &BinaryRule, args: &[Quantity]) -> Result<Quantity, CallError> {
    let dimension = check(args)?;
    let value = args
        .iter()
        .map(|arg| arg.si)
        .reduce(rule.value)
        .unwrap_or(f64::NAN);
    Ok(Quantity::new(value, dimension))
}
