//! Dual numbers for compiled programs: a value and its derivative along one
//! direction, carried through every operation by the chain rule (forward
//! automatic differentiation). A simulate run uses them to get the exact
//! rate of change of a run query's expression along the run (`t at max of
//! k * x` is where that rate is zero), which values alone give only to
//! about the square root of the machine precision.
//!
//! Written here rather than taken from a dual-number crate because it must
//! implement [`Number`] with the same `libm` functions as `f64` programs, so
//! a value computed on duals is the `f64` value bit for bit.

use super::program::{Binary, Number, Unary};

/// `value + slope·ε` with ε² = 0.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Dual {
    /// The value.
    pub value: f64,
    /// Its derivative along the chosen direction.
    pub slope: f64,
}

impl Dual {
    /// A value changing at `slope`.
    pub fn new(value: f64, slope: f64) -> Self {
        Dual { value, slope }
    }

    /// `f(self)`, where `derivative` is f′ at `self.value`.
    fn chain(self, value: f64, derivative: f64) -> Self {
        Dual {
            value,
            slope: derivative * self.slope,
        }
    }
}

impl Number for Dual {
    fn constant(value: f64) -> Self {
        Dual { value, slope: 0.0 }
    }
    fn add(self, other: Self) -> Self {
        Dual::new(self.value + other.value, self.slope + other.slope)
    }
    fn sub(self, other: Self) -> Self {
        Dual::new(self.value - other.value, self.slope - other.slope)
    }
    fn mul(self, other: Self) -> Self {
        Dual::new(
            self.value * other.value,
            self.slope * other.value + self.value * other.slope,
        )
    }
    fn div(self, other: Self) -> Self {
        let value = self.value / other.value;
        Dual::new(value, (self.slope - value * other.slope) / other.value)
    }
    fn neg(self) -> Self {
        Dual::new(-self.value, -self.slope)
    }
    fn certainly_less(self, other: Self) -> bool {
        self.value < other.value
    }
    fn either(self, _other: Self) -> Self {
        self
    }
    fn powi(self, power: i32) -> Self {
        let derivative = if power == 0 {
            0.0
        } else {
            f64::from(power) * self.value.powi(power - 1)
        };
        self.chain(self.value.powi(power), derivative)
    }
    fn powf(self, power: Self) -> Self {
        let value = libm::pow(self.value, power.value);
        // d(a^b) = b a^(b−1) da + a^b ln(a) db; the second term only when b
        // changes, so a negative base with a fixed exponent keeps its slope.
        let mut slope = if self.slope == 0.0 {
            0.0
        } else {
            power.value * libm::pow(self.value, power.value - 1.0) * self.slope
        };
        if power.slope != 0.0 {
            slope += value * libm::log(self.value) * power.slope;
        }
        Dual::new(value, slope)
    }
    fn apply(self, function: Unary) -> Self {
        let x = self.value;
        match function {
            Unary::Sqrt => {
                let root = libm::sqrt(x);
                self.chain(root, 0.5 / root)
            }
            Unary::Abs => self.chain(x.abs(), if x < 0.0 { -1.0 } else { 1.0 }),
            Unary::Sin => self.chain(libm::sin(x), libm::cos(x)),
            Unary::Cos => self.chain(libm::cos(x), -libm::sin(x)),
            Unary::Tan => {
                let tan = libm::tan(x);
                self.chain(tan, 1.0 + tan * tan)
            }
            Unary::Asin => self.chain(libm::asin(x), 1.0 / libm::sqrt(1.0 - x * x)),
            Unary::Acos => self.chain(libm::acos(x), -1.0 / libm::sqrt(1.0 - x * x)),
            Unary::Atan => self.chain(libm::atan(x), 1.0 / (1.0 + x * x)),
            Unary::Exp => {
                let exp = libm::exp(x);
                self.chain(exp, exp)
            }
            Unary::Ln => self.chain(libm::log(x), 1.0 / x),
            Unary::Log10 => self.chain(libm::log10(x), 1.0 / (x * std::f64::consts::LN_10)),
        }
    }
    fn apply2(self, other: Self, function: Binary) -> Self {
        match function {
            Binary::Atan2 => {
                // atan2(y, x): d = (x dy − y dx) / (x² + y²).
                let (y, x) = (self.value, other.value);
                Dual::new(
                    libm::atan2(y, x),
                    (x * self.slope - y * other.slope) / (x * x + y * y),
                )
            }
            Binary::Hypot => {
                let value = libm::hypot(self.value, other.value);
                Dual::new(
                    value,
                    (self.value * self.slope + other.value * other.slope) / value,
                )
            }
            // The side that is taken carries its slope (at a tie, the first).
            Binary::Min => {
                if other.value < self.value {
                    other
                } else {
                    self
                }
            }
            Binary::Max => {
                if other.value > self.value {
                    other
                } else {
                    self
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every operation's slope against a central difference of its `f64`
    /// value (the definition of the derivative), at points away from kinks.
    #[test]
    fn slopes_match_differences_of_the_values() {
        let unary = [
            Unary::Sqrt,
            Unary::Abs,
            Unary::Sin,
            Unary::Cos,
            Unary::Tan,
            Unary::Asin,
            Unary::Acos,
            Unary::Atan,
            Unary::Exp,
            Unary::Ln,
            Unary::Log10,
        ];
        let close = |slope: f64, difference: f64, what: &str| {
            assert!(
                (slope - difference).abs() <= 1e-7 * difference.abs().max(1.0),
                "{what}: {slope} vs {difference}"
            );
        };
        let h = 1e-6;
        for x in [0.3, 0.7] {
            let d = Dual::new(x, 1.0);
            for function in unary {
                let value = |x: f64| x.apply(function);
                let difference = (value(x + h) - value(x - h)) / (2.0 * h);
                let result = d.apply(function);
                assert_eq!(result.value, value(x), "{function:?}");
                close(result.slope, difference, &format!("{function:?}({x})"));
            }
            for power in [-2, 0, 3] {
                let difference = ((x + h).powi(power) - (x - h).powi(power)) / (2.0 * h);
                close(d.powi(power).slope, difference, &format!("{x}^{power}"));
            }
            let y = 1.9;
            let e = Dual::new(y, 1.0);
            for function in [Binary::Atan2, Binary::Hypot] {
                // Along (1, 1): d/ds f(x + s, y + s).
                let value = |x: f64, y: f64| x.apply2(y, function);
                let difference = (value(x + h, y + h) - value(x - h, y - h)) / (2.0 * h);
                close(
                    d.apply2(e, function).slope,
                    difference,
                    &format!("{function:?}"),
                );
            }
            let difference = (libm::pow(x + h, y + h) - libm::pow(x - h, y - h)) / (2.0 * h);
            close(d.powf(e).slope, difference, "pow");
            close(d.mul(e).slope, x + y, "product");
            close(d.div(e).slope, (y - x) / (y * y), "quotient");
        }
        // min and max take the slope of the side they return.
        let (a, b) = (Dual::new(1.0, 5.0), Dual::new(2.0, -3.0));
        assert_eq!(a.apply2(b, Binary::Min).slope, 5.0);
        assert_eq!(a.apply2(b, Binary::Max).slope, -3.0);
        // A fixed exponent on a negative base keeps a finite slope.
        assert_eq!(Dual::new(-2.0, 1.0).powf(Dual::constant(3.0)).slope, 12.0);
    }
}
