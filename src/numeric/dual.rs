//! Forward-mode dual numbers: a value and its derivative along one input,
//! carried through every operation by the chain rule. `Dual<f64>` gives exact
//! derivatives at a point; `Dual<Interval>` encloses a derivative over a box.

use super::interval::Interval;
use super::number::Number;
use super::rule::{BinaryRule, UnaryRule};

/// `value + derivative·ε` with ε² = 0.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Dual<T> {
    /// The value.
    pub value: T,
    /// Its derivative along the chosen input.
    pub derivative: T,
}

impl<T: Number> Dual<T> {
    /// The chosen input itself (derivative one).
    pub fn variable(value: T) -> Self {
        Dual {
            value,
            derivative: T::constant(1.0),
        }
    }

    /// A quantity that does not depend on the chosen input.
    pub fn fixed(value: T) -> Self {
        Dual {
            value,
            derivative: T::constant(0.0),
        }
    }

    fn chain(self, value: T, slope: T) -> Self {
        Dual {
            value,
            derivative: slope.mul(self.derivative),
        }
    }
}

/// A number a dual number is built on: `f64` at a point, [`Interval`] over
/// a box. Each picks its own field of a function's rule.
pub trait Primal: Number {
    /// The slope rule for this number type.
    fn slope(rule: &UnaryRule) -> fn(Self, Self) -> Self;
    /// The two-argument derivative rule for this number type.
    fn derivative(rule: &BinaryRule) -> fn(Dual<Self>, Dual<Self>, Self) -> Self;
    /// ln x (the derivative of a real power needs it).
    fn ln(self) -> Self;
}

impl Primal for f64 {
    fn slope(rule: &UnaryRule) -> fn(f64, f64) -> f64 {
        rule.slope.at_point
    }
    fn derivative(rule: &BinaryRule) -> fn(Dual<f64>, Dual<f64>, f64) -> f64 {
        rule.derivative.at_point
    }
    fn ln(self) -> f64 {
        libm::log(self)
    }
}

impl Primal for Interval {
    fn slope(rule: &UnaryRule) -> fn(Interval, Interval) -> Interval {
        rule.slope.over_box
    }
    fn derivative(rule: &BinaryRule) -> fn(Dual<Interval>, Dual<Interval>, Interval) -> Interval {
        rule.derivative.over_box
    }
    fn ln(self) -> Interval {
        Interval::ln(self)
    }
}

impl<T: Primal> Number for Dual<T> {
    fn constant(value: f64) -> Self {
        Dual::fixed(T::constant(value))
    }

    fn add(self, other: Self) -> Self {
        Dual {
            value: self.value.add(other.value),
            derivative: self.derivative.add(other.derivative),
        }
    }

    fn sub(self, other: Self) -> Self {
        Dual {
            value: self.value.sub(other.value),
            derivative: self.derivative.sub(other.derivative),
        }
    }

    fn mul(self, other: Self) -> Self {
        Dual {
            value: self.value.mul(other.value),
            derivative: self
                .derivative
                .mul(other.value)
                .add(self.value.mul(other.derivative)),
        }
    }

    fn div(self, other: Self) -> Self {
        let value = self.value.div(other.value);
        // (u/v)' = (u' − (u/v)·v') / v
        Dual {
            value,
            derivative: self
                .derivative
                .sub(value.mul(other.derivative))
                .div(other.value),
        }
    }

    fn neg(self) -> Self {
        Dual {
            value: self.value.neg(),
            derivative: self.derivative.neg(),
        }
    }

    fn certainly_less(self, other: Self) -> bool {
        self.value.certainly_less(other.value)
    }

    fn either(self, other: Self) -> Self {
        Dual {
            value: self.value.either(other.value),
            derivative: self.derivative.either(other.derivative),
        }
    }

    fn certainly_at_most(self, other: Self) -> bool {
        self.value.certainly_at_most(other.value)
    }

    fn across_jump(self, other: Self) -> Self {
        // Across a jump no derivative bounds the change.
        Dual {
            value: self.value.across_jump(other.value),
            derivative: T::unbounded(),
        }
    }

    fn unbounded() -> Self {
        Dual {
            value: T::unbounded(),
            derivative: T::unbounded(),
        }
    }

    fn sign(self) -> Self {
        // Constant wherever it is defined: no derivative.
        Dual::fixed(self.value.sign())
    }

    fn powi(self, power: i32) -> Self {
        if power == 0 {
            return Dual::constant(1.0);
        }
        let slope = T::constant(f64::from(power)).mul(self.value.powi(power - 1));
        self.chain(self.value.powi(power), slope)
    }

    fn powf(self, power: Self) -> Self {
        // d(u^v) = u^v (v' ln u + v u'/u)
        let value = self.value.powf(power.value);
        let derivative = value.mul(
            power
                .derivative
                .mul(self.value.ln())
                .add(power.value.mul(self.derivative).div(self.value)),
        );
        Dual { value, derivative }
    }

    fn apply(self, rule: &UnaryRule) -> Self {
        let value = self.value.apply(rule);
        let slope = T::slope(rule)(self.value, value);
        self.chain(value, slope)
    }

    fn apply2(self, other: Self, rule: &BinaryRule) -> Self {
        let value = self.value.apply2(other.value, rule);
        Dual {
            value,
            derivative: T::derivative(rule)(self, other, value),
        }
    }
}
