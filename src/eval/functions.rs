//! The built-in functions: name, arguments, dimension rule and value.

use crate::units::{Dimension, Quantity};

/// How many arguments a function takes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Arity {
    /// Exactly this many.
    Exactly(usize),
    /// At least this many.
    AtLeast(usize),
}

impl Arity {
    /// Whether `n` arguments fit.
    pub fn accepts(self, n: usize) -> bool {
        match self {
            Arity::Exactly(expected) => n == expected,
            Arity::AtLeast(minimum) => n >= minimum,
        }
    }

    /// "1 argument", "at least 2 arguments".
    pub fn describe(self) -> String {
        let plural = |n: usize| if n == 1 { "argument" } else { "arguments" };
        match self {
            Arity::Exactly(n) => format!("{n} {}", plural(n)),
            Arity::AtLeast(n) => format!("at least {n} {}", plural(n)),
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
    /// The argument is outside the function's domain.
    Domain {
        /// Which argument.
        argument: usize,
        /// What the domain is, e.g. "a number from -1 to 1".
        expected: &'static str,
    },
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
    pub apply: fn(&[Quantity]) -> Result<Quantity, CallError>,
}

/// Every built-in function.
pub const FUNCTIONS: &[Function] = &[
    Function {
        name: "sqrt",
        arity: Arity::Exactly(1),
        doc: "square root; halves every dimension exponent",
        apply: sqrt,
    },
    Function {
        name: "abs",
        arity: Arity::Exactly(1),
        doc: "absolute value, same dimension",
        apply: abs,
    },
    Function {
        name: "sin",
        arity: Arity::Exactly(1),
        doc: "sine of an angle (a plain number in radians; write 30 deg)",
        apply: |a| plain(a, libm::sin),
    },
    Function {
        name: "cos",
        arity: Arity::Exactly(1),
        doc: "cosine of an angle",
        apply: |a| plain(a, libm::cos),
    },
    Function {
        name: "tan",
        arity: Arity::Exactly(1),
        doc: "tangent of an angle",
        apply: |a| plain(a, libm::tan),
    },
    Function {
        name: "asin",
        arity: Arity::Exactly(1),
        doc: "inverse sine, in radians",
        apply: |a| unit_interval(a, libm::asin),
    },
    Function {
        name: "acos",
        arity: Arity::Exactly(1),
        doc: "inverse cosine, in radians",
        apply: |a| unit_interval(a, libm::acos),
    },
    Function {
        name: "atan",
        arity: Arity::Exactly(1),
        doc: "inverse tangent, in radians",
        apply: |a| plain(a, libm::atan),
    },
    Function {
        name: "atan2",
        arity: Arity::Exactly(2),
        doc: "angle of the point (x, y): atan2(y, x), both of one dimension",
        apply: atan2,
    },
    Function {
        name: "exp",
        arity: Arity::Exactly(1),
        doc: "e to the power of a plain number",
        apply: |a| plain(a, libm::exp),
    },
    Function {
        name: "ln",
        arity: Arity::Exactly(1),
        doc: "natural logarithm of a positive plain number",
        apply: |a| positive(a, libm::log),
    },
    Function {
        name: "log10",
        arity: Arity::Exactly(1),
        doc: "base-10 logarithm of a positive plain number",
        apply: |a| positive(a, libm::log10),
    },
    Function {
        name: "min",
        arity: Arity::AtLeast(1),
        doc: "smallest of its arguments, all of one dimension",
        apply: |a| extreme(a, f64::min),
    },
    Function {
        name: "max",
        arity: Arity::AtLeast(1),
        doc: "largest of its arguments, all of one dimension",
        apply: |a| extreme(a, f64::max),
    },
    Function {
        name: "hypot",
        arity: Arity::AtLeast(2),
        doc: "√(a² + b² + …), all of one dimension",
        apply: hypot,
    },
];

/// The function with this name.
pub fn function(name: &str) -> Option<&'static Function> {
    FUNCTIONS.iter().find(|function| function.name == name)
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
