//! The number types compiled programs run on: what arithmetic they need
//! ([`Number`]), the functions a program may call ([`Unary`], [`Binary`]),
//! and plain `f64` as the first such type, with every transcendental
//! function from libm so results are the same on every machine.

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
    /// −1, 0 or 1 by the sign of `self` (for intervals: every sign it
    /// holds); the slope of |x|, taken as 0 at 0.
    fn sign(self) -> Self;
    /// `self` to an integer power.
    fn powi(self, power: i32) -> Self;
    /// `self` to a real power.
    fn powf(self, power: Self) -> Self;
    /// A one-argument function.
    fn apply(self, function: Unary) -> Self;
    /// A two-argument function.
    fn apply2(self, other: Self, function: Binary) -> Self;
}

/// One-argument functions of a program.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Unary {
    /// √x
    Sqrt,
    /// |x|
    Abs,
    /// sin x
    Sin,
    /// cos x
    Cos,
    /// tan x
    Tan,
    /// asin x
    Asin,
    /// acos x
    Acos,
    /// atan x
    Atan,
    /// eˣ
    Exp,
    /// ln x
    Ln,
    /// log₁₀ x
    Log10,
}

/// Two-argument functions of a program.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Binary {
    /// atan2(y, x)
    Atan2,
    /// √(a² + b²)
    Hypot,
    /// the smaller
    Min,
    /// the larger
    Max,
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
    fn apply(self, function: Unary) -> Self {
        match function {
            Unary::Sqrt => libm::sqrt(self),
            Unary::Abs => self.abs(),
            Unary::Sin => libm::sin(self),
            Unary::Cos => libm::cos(self),
            Unary::Tan => libm::tan(self),
            Unary::Asin => libm::asin(self),
            Unary::Acos => libm::acos(self),
            Unary::Atan => libm::atan(self),
            Unary::Exp => libm::exp(self),
            Unary::Ln => libm::log(self),
            Unary::Log10 => libm::log10(self),
        }
    }
    fn apply2(self, other: Self, function: Binary) -> Self {
        match function {
            Binary::Atan2 => libm::atan2(self, other),
            Binary::Hypot => libm::hypot(self, other),
            Binary::Min => self.min(other),
            Binary::Max => self.max(other),
        }
    }
}
