//! How a function is given to compiled programs: its rule on every number
//! type a program runs on — its value at a point (`f64`), an enclosure over
//! a box ([`Interval`]) and its derivative ([`Dual`] over either). Every
//! field is required, so a function cannot reach programs without its range
//! and its derivative. The functions themselves are written in
//! `units::functions`, one entry each; this module only says what a rule is.

use super::{Dual, Interval};

/// A function of one number, on every number type programs run on.
#[derive(Clone, Copy, Debug)]
pub struct UnaryRule {
    /// f(x) at a point (libm for transcendental functions, so every machine
    /// gives the same bits).
    pub value: fn(f64) -> f64,
    /// An interval holding f(x) for every x of the argument's interval where
    /// f is defined, rounded outward; NaN where f is defined nowhere on it.
    pub enclosure: fn(Interval) -> Interval,
    /// f′(x), for the chain rule of dual numbers.
    pub slope: Slope,
}

/// A slope rule f′(x) given x and f(x), at a point and over a box. Written
/// once, generic over [`super::Number`], and named for both fields
/// (`Slope { at_point: rule, over_box: rule }`).
#[derive(Clone, Copy, Debug)]
pub struct Slope {
    /// f′ at a point: for `Dual<f64>`.
    pub at_point: fn(f64, f64) -> f64,
    /// An enclosure of f′ over a box: for `Dual<Interval>`.
    pub over_box: fn(Interval, Interval) -> Interval,
}

/// A function of two numbers `f(a, b)`, on every number type programs run
/// on. A call with more arguments is folded left: `f(f(a, b), c)`.
#[derive(Clone, Copy, Debug)]
pub struct BinaryRule {
    /// f(a, b) at a point (libm, as for [`UnaryRule::value`]).
    pub value: fn(f64, f64) -> f64,
    /// An interval holding f(a, b) for every point of the box of `a` and
    /// `b` where f is defined, rounded outward.
    pub enclosure: fn(Interval, Interval) -> Interval,
    /// The derivative of f(a, b) along the chosen input.
    pub derivative: BinaryDerivative,
}

/// The derivative of f(a, b) along the chosen input, given both arguments
/// as dual numbers and f's value: at a point and over a box. Written once,
/// generic over [`super::Number`], and named for both fields.
#[derive(Clone, Copy, Debug)]
pub struct BinaryDerivative {
    /// At a point: for `Dual<f64>`.
    pub at_point: fn(Dual<f64>, Dual<f64>, f64) -> f64,
    /// An enclosure over a box: for `Dual<Interval>`.
    pub over_box: fn(Dual<Interval>, Dual<Interval>, Interval) -> Interval,
}
