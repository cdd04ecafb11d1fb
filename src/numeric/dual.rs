//! Forward-mode dual numbers: a value and its derivative along one input,
//! carried through every operation by the chain rule. `Dual<f64>` gives exact
//! derivatives at a point; `Dual<Interval>` encloses a derivative over a box.

use super::number::{Binary, Number, Unary};

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

impl<T: Number> Number for Dual<T> {
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
                .mul(self.value.apply(Unary::Ln))
                .add(power.value.mul(self.derivative).div(self.value)),
        );
        Dual { value, derivative }
    }

    fn apply(self, function: Unary) -> Self {
        let x = self.value;
        let one = T::constant(1.0);
        let value = x.apply(function);
        let slope = match function {
            Unary::Sqrt => one.div(T::constant(2.0).mul(value)),
            Unary::Abs => x.sign(),
            Unary::Sin => x.apply(Unary::Cos),
            Unary::Cos => x.apply(Unary::Sin).neg(),
            Unary::Tan => one.add(value.mul(value)),
            Unary::Asin => one.div(one.sub(x.mul(x)).apply(Unary::Sqrt)),
            Unary::Acos => one.div(one.sub(x.mul(x)).apply(Unary::Sqrt)).neg(),
            Unary::Atan => one.div(one.add(x.mul(x))),
            Unary::Exp => value,
            Unary::Ln => one.div(x),
            Unary::Log10 => one.div(x.mul(T::constant(std::f64::consts::LN_10))),
        };
        self.chain(value, slope)
    }

    fn apply2(self, other: Self, function: Binary) -> Self {
        let value = self.value.apply2(other.value, function);
        let derivative = match function {
            // The derivative of the argument taken; where either may be
            // taken (ties, overlapping intervals), what covers both.
            Binary::Min | Binary::Max => {
                // The argument the function takes where one is surely below
                // the other: min takes the lower, max the higher.
                let (lower, higher) = if self.value.certainly_less(other.value) {
                    (Some(self), Some(other))
                } else if other.value.certainly_less(self.value) {
                    (Some(other), Some(self))
                } else {
                    (None, None)
                };
                let taken = if function == Binary::Min {
                    lower
                } else {
                    higher
                };
                match taken {
                    Some(taken) => taken.derivative,
                    None => self.derivative.either(other.derivative),
                }
            }
            // (a a' + b b') / hypot(a, b); at the origin hypot has a kink,
            // like |x| at 0, and its slope is taken as 0 there (as the
            // slope of |x| is), not 0/0.
            Binary::Hypot if value.certainly_less(T::constant(f64::MIN_POSITIVE)) => {
                T::constant(0.0)
            }
            Binary::Hypot => self
                .value
                .mul(self.derivative)
                .add(other.value.mul(other.derivative))
                .div(value),
            Binary::Atan2 => {
                // atan2(y, x)' = (x y' − y x') / (x² + y²)
                let (y, x) = (self.value, other.value);
                x.mul(self.derivative)
                    .sub(y.mul(other.derivative))
                    .div(x.mul(x).add(y.mul(y)))
            }
        };
        Dual { value, derivative }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hypot_has_a_slope_everywhere_and_zero_at_the_origin() {
        let along = |value: f64| Dual {
            value,
            derivative: 1.0,
        };
        // d/dt hypot(3 + t, 4) = 3 / 5 at t = 0 (closed form).
        let away = along(3.0).apply2(
            Dual {
                value: 4.0,
                derivative: 0.0,
            },
            Binary::Hypot,
        );
        assert!((away.derivative - 0.6).abs() < 1e-15);
        // At the origin: 0, like the slope of |x| at 0, never NaN.
        let origin = along(0.0).apply2(along(0.0), Binary::Hypot);
        assert_eq!((origin.value, origin.derivative), (0.0, 0.0));
    }
}
