//! The number types compiled programs run on: what arithmetic they need
//! ([`Number`]) and plain `f64` as the first such type. A function a
//! program calls comes with its own rule for each number type
//! ([`UnaryRule`], [`BinaryRule`]).

use super::rule::{BinaryRule, UnaryRule};

/// Arithmetic a compiled program needs from its number type.
pub trait Number: Copy + std::fmt::Debug {
    /// A constant.
    fn constant(value: f64) -> Self;
    /// `self + other`.
    fn add(self, other: Self) -> Self;
    /// `self - other`.
    fn sub(self, other: Self) -> Self;
    /// `self * other`.
    fn mul(self, other: Self) -> Self;
    /// `self / other`.
    fn div(self, other: Self) -> Self;
    /// `-self`.
    fn neg(self) -> Self;
    /// Whether `self` is surely below `other` (for intervals: wholly below).
    fn certainly_less(self, other: Self) -> bool;
    /// A value that may be either (for intervals: their hull).
    fn either(self, other: Self) -> Self;
    /// Whether `self` is surely at most `other` (for intervals: wholly).
    fn certainly_at_most(self, other: Self) -> bool;
    /// A value that may be either of two different functions' values, as
    /// the branches of a piecewise formula over a box that straddles its
    /// test: for intervals their hull (undefined if either is), for a
    /// derivative unbounded; at a point (which straddles only for NaN) NaN.
    fn across_jump(self, other: Self) -> Self;
    /// A value nothing is known of (NaN at a point, every number over a box).
    fn unbounded() -> Self;
    /// −1, 0 or 1 by the sign of `self` (for intervals: every sign it
    /// holds); the slope of |x|, taken as 0 at 0.
    fn sign(self) -> Self;
    /// `self` to an integer power.
    fn powi(self, power: i32) -> Self;
    /// `self` to a real power.
    fn powf(self, power: Self) -> Self;
    /// A one-argument function, by its rule for this number type.
    fn apply(self, rule: &UnaryRule) -> Self;
    /// A two-argument function `f(self, other)`, by its rule for this
    /// number type.
    fn apply2(self, other: Self, rule: &BinaryRule) -> Self;
}

impl Number for f64 {
    fn constant(value: f64) -> Self {
        value
    }
    fn add(self, other: Self) -> Self {
        self + other
    }
    fn sub(self, other: Self) -> Self {
        self - other
    }
    fn mul(self, other: Self) -> Self {
        self * other
    }
    fn div(self, other: Self) -> Self {
        self / other
    }
    fn neg(self) -> Self {
        -self
    }
    fn certainly_less(self, other: Self) -> bool {
        self < other
    }
    fn either(self, _other: Self) -> Self {
        self
    }
    fn certainly_at_most(self, other: Self) -> bool {
        self <= other
    }
    fn across_jump(self, _other: Self) -> Self {
        f64::NAN
    }
    fn unbounded() -> Self {
        f64::NAN
    }
    fn sign(self) -> Self {
        if self > 0.0 {
            1.0
        } else if self < 0.0 {
            -1.0
        } else {
            self * 0.0
        }
    }
    fn powi(self, power: i32) -> Self {
        f64::powi(self, power)
    }
    fn powf(self, power: Self) -> Self {
        libm::pow(self, power)
    }
    fn apply(self, rule: &UnaryRule) -> Self {
        (rule.value)(self)
    }
    fn apply2(self, other: Self, rule: &BinaryRule) -> Self {
        (rule.value)(self, other)
    }
}
