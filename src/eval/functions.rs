//! The built-in functions: name, arguments, dimension rule and value.

use crate::units::{Dimension, Quantity, Value};

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

/// How a built-in function computes its value.
#[derive(Clone, Copy)]
pub enum Apply {
    /// On scalars only (vector arguments are refused before the call).
    Scalar(fn(&[Quantity]) -> Result<Quantity, CallError>),
    /// On any values (the vector functions).
    Value(fn(&[Value]) -> Result<Value, CallError>),
}

/// A built-in function.
pub struct Function {
    /// The name used in formulas.
    pub name: &'static str,
    /// Its arguments.
    pub arity: Arity,
    /// What it computes, for the language reference.
    pub doc: &'static str,
    /// Computes the value, checking dimensions and domain.
    pub apply: Apply,
}

/// The scalar built-in functions.
pub const FUNCTIONS: &[Function] = &[
    scalar(
        "sqrt",
        Arity::Exactly(1),
        "square root; halves every dimension exponent",
        sqrt,
    ),
    scalar(
        "abs",
        Arity::Exactly(1),
        "absolute value, same dimension",
        abs,
    ),
    scalar(
        "sin",
        Arity::Exactly(1),
        "sine of an angle (a plain number in radians; write 30 deg)",
        |a| plain(a, libm::sin),
    ),
    scalar("cos", Arity::Exactly(1), "cosine of an angle", |a| {
        plain(a, libm::cos)
    }),
    scalar("tan", Arity::Exactly(1), "tangent of an angle", |a| {
        plain(a, libm::tan)
    }),
    scalar("asin", Arity::Exactly(1), "inverse sine, in radians", |a| {
        unit_interval(a, libm::asin)
    }),
    scalar(
        "acos",
        Arity::Exactly(1),
        "inverse cosine, in radians",
        |a| unit_interval(a, libm::acos),
    ),
    scalar(
        "atan",
        Arity::Exactly(1),
        "inverse tangent, in radians",
        |a| plain(a, libm::atan),
    ),
    scalar(
        "atan2",
        Arity::Exactly(2),
        "angle of the point (x, y): atan2(y, x), both of one dimension",
        atan2,
    ),
    scalar(
        "exp",
        Arity::Exactly(1),
        "e to the power of a plain number",
        |a| plain(a, libm::exp),
    ),
    scalar(
        "ln",
        Arity::Exactly(1),
        "natural logarithm of a positive plain number",
        |a| positive(a, libm::log),
    ),
    scalar(
        "log10",
        Arity::Exactly(1),
        "base-10 logarithm of a positive plain number",
        |a| positive(a, libm::log10),
    ),
    scalar(
        "min",
        Arity::AtLeast(1),
        "smallest of its arguments, all of one dimension",
        |a| extreme(a, f64::min),
    ),
    scalar(
        "max",
        Arity::AtLeast(1),
        "largest of its arguments, all of one dimension",
        |a| extreme(a, f64::max),
    ),
    scalar(
        "hypot",
        Arity::AtLeast(2),
        "√(a² + b² + …), all of one dimension",
        hypot,
    ),
];

/// A function on scalars.
const fn scalar(
    name: &'static str,
    arity: Arity,
    doc: &'static str,
    apply: fn(&[Quantity]) -> Result<Quantity, CallError>,
) -> Function {
    Function {
        name,
        arity,
        doc,
        apply: Apply::Scalar(apply),
    }
}

/// The vector functions, from `eval::vectors`.
const VECTOR_FUNCTIONS: &[Function] = &super::vectors::FUNCTIONS;

/// The function with this name.
pub fn function(name: &str) -> Option<&'static Function> {
    all().find(|function| function.name == name)
}

/// Every function, scalar ones first.
pub fn all() -> impl Iterator<Item = &'static Function> {
    FUNCTIONS.iter().chain(VECTOR_FUNCTIONS)
}

fn require_plain(args: &[Quantity]) -> Result<(), CallError> {
    match args
        .iter()
        .position(|arg| !arg.dimension.is_dimensionless())
    {
        Some(argument) => Err(CallError::NotDimensionless { argument }),
        None => Ok(()),
    }
}

fn require_same(args: &[Quantity]) -> Result<Dimension, CallError> {
    let first = args[0].dimension;
    match args.iter().position(|arg| arg.dimension != first) {
        Some(argument) => Err(CallError::Mismatch { argument }),
        None => Ok(first),
    }
}

fn plain(args: &[Quantity], f: fn(f64) -> f64) -> Result<Quantity, CallError> {
    require_plain(args)?;
    Ok(Quantity::number(f(args[0].si)))
}

fn unit_interval(args: &[Quantity], f: fn(f64) -> f64) -> Result<Quantity, CallError> {
    require_plain(args)?;
    if !(-1.0..=1.0).contains(&args[0].si) {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number from -1 to 1",
        });
    }
    Ok(Quantity::number(f(args[0].si)))
}

fn positive(args: &[Quantity], f: fn(f64) -> f64) -> Result<Quantity, CallError> {
    require_plain(args)?;
    if args[0].si <= 0.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number greater than zero",
        });
    }
    Ok(Quantity::number(f(args[0].si)))
}

fn sqrt(args: &[Quantity]) -> Result<Quantity, CallError> {
    let dimension = args[0].dimension.root(2).ok_or(CallError::OddRoot)?;
    if args[0].si < 0.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a value of zero or more",
        });
    }
    Ok(Quantity::new(libm::sqrt(args[0].si), dimension))
}

fn abs(args: &[Quantity]) -> Result<Quantity, CallError> {
    Ok(Quantity::new(args[0].si.abs(), args[0].dimension))
}

fn atan2(args: &[Quantity]) -> Result<Quantity, CallError> {
    require_same(args)?;
    Ok(Quantity::number(libm::atan2(args[0].si, args[1].si)))
}

fn extreme(args: &[Quantity], pick: fn(f64, f64) -> f64) -> Result<Quantity, CallError> {
    let dimension = require_same(args)?;
    let value = args
        .iter()
        .map(|arg| arg.si)
        .reduce(pick)
        .unwrap_or(f64::NAN);
    Ok(Quantity::new(value, dimension))
}

fn hypot(args: &[Quantity]) -> Result<Quantity, CallError> {
    let dimension = require_same(args)?;
    let value = args.iter().map(|arg| arg.si).fold(0.0, libm::hypot);
    Ok(Quantity::new(value, dimension))
}
