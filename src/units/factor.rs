//! Exact conversion factors: a rational number times a power of π.
//!
//! Factors are kept exact so that `heft convert` and the audit can print the
//! definition-exact value (1 slug = 8896443230521/609600000000 kg); the
//! evaluator uses the `f64` rounded once from it.

use std::fmt;

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};

/// An exact factor `ratio × π^pi_power`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ExactFactor {
    /// The rational part.
    pub ratio: BigRational,
    /// The power of π (1 for deg, rev and rpm; 0 for most units).
    pub pi_power: i32,
}

impl ExactFactor {
    /// Exactly one.
    pub fn one() -> Self {
        ExactFactor {
            ratio: BigRational::one(),
            pi_power: 0,
        }
    }

    /// A decimal literal such as `"0.45359237"` or `"1e-3"`, read exactly.
    ///
    /// Only used on the catalog's own constant strings.
    pub fn decimal(text: &str) -> Self {
        let (mantissa, exponent) = match text.split_once(['e', 'E']) {
            Some((mantissa, exponent)) => (mantissa, exponent.parse::<i32>().unwrap_or(0)),
            None => (text, 0),
        };
        let (whole, fraction) = mantissa.split_once('.').unwrap_or((mantissa, ""));
        let digits: BigInt = format!("{whole}{fraction}").parse().unwrap_or_default();
        let scale = exponent - i32::try_from(fraction.len()).unwrap_or(0);
        let ten = BigRational::from_integer(BigInt::from(10));
        ExactFactor {
            ratio: BigRational::from_integer(digits) * pow(&ten, scale),
            pi_power: 0,
        }
    }

    /// The integer `n`.
    pub fn integer(n: i64) -> Self {
        ExactFactor {
            ratio: BigRational::from_integer(BigInt::from(n)),
            pi_power: 0,
        }
    }

    /// π.
    pub fn pi() -> Self {
        ExactFactor {
            ratio: BigRational::one(),
            pi_power: 1,
        }
    }

    /// The product of two factors.
    pub fn times(&self, other: &ExactFactor) -> ExactFactor {
        ExactFactor {
            ratio: &self.ratio * &other.ratio,
            pi_power: self.pi_power + other.pi_power,
        }
    }

    /// The quotient of two factors.
    pub fn over(&self, other: &ExactFactor) -> ExactFactor {
        if other.ratio.is_zero() {
            return self.clone();
        }
        ExactFactor {
            ratio: &self.ratio / &other.ratio,
            pi_power: self.pi_power - other.pi_power,
        }
    }

    /// The factor raised to an integer power.
    pub fn powi(&self, power: i32) -> ExactFactor {
        ExactFactor {
            ratio: pow(&self.ratio, power),
            pi_power: self.pi_power * power,
        }
    }

    /// The nearest `f64`.
    pub fn to_f64(&self) -> f64 {
        let ratio = self.ratio.to_f64().unwrap_or(f64::NAN);
        ratio * std::f64::consts::PI.powi(self.pi_power)
    }

    /// Whether the decimal expansion terminates (and no π is involved).
    pub fn terminates(&self) -> bool {
        if self.pi_power != 0 {
            return false;
        }
        let mut denominator = self.ratio.denom().abs();
        for prime in [2u32, 5] {
            let prime = BigInt::from(prime);
            while (&denominator % &prime).is_zero() {
                denominator /= &prime;
            }
        }
        denominator.is_one()
    }

    /// The exact value written out: a terminating decimal in full, or a
    /// fraction, times π^k where needed.
    pub fn exact_text(&self) -> String {
        let rational = if self.terminates() || self.ratio.is_integer() {
            decimal_text(&self.ratio)
        } else {
            format!("{}/{}", self.ratio.numer(), self.ratio.denom())
        };
        match self.pi_power {
            0 => rational,
            1 => format!("{rational}·π"),
            -1 => format!("{rational}/π"),
            k => format!("{rational}·π^{k}"),
        }
    }
}

impl fmt::Display for ExactFactor {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.exact_text())
    }
}

/// `base` to an integer power, by repeated squaring (num-traits' `pow`), so
/// the cost grows with the exponent's digits, not its size.
fn pow(base: &BigRational, exponent: i32) -> BigRational {
    let result = num_traits::pow(base.clone(), exponent.unsigned_abs() as usize);
    if exponent < 0 && !result.is_zero() {
        result.recip()
    } else {
        result
    }
}

impl ExactFactor {
    /// The value to `significant` digits, followed by `…` when that is not
    /// the whole expansion (π factors fall back to `f64`).
    pub fn approximate_text(&self, significant: usize) -> String {
        if self.pi_power != 0 {
            let digits = u32::try_from(significant.min(16)).unwrap_or(16);
            return format!("{}…", super::format_significant(self.to_f64(), digits));
        }
        if self.terminates() {
            return decimal_text(&self.ratio);
        }
        let negative = self.ratio.is_negative();
        let ratio = self.ratio.abs();
        let (numerator, denominator) = (ratio.numer().clone(), ratio.denom().clone());
        let ten = BigInt::from(10);
        // Scale so that the integer quotient has `significant` digits.
        let mut scale = 0i32;
        let mut scaled = numerator.clone();
        let lowest = num_traits::pow(ten.clone(), significant.saturating_sub(1));
        while (&scaled / &denominator) < lowest && scale < 400 {
            scaled *= &ten;
            scale += 1;
        }
        let digits = (&scaled / &denominator).to_string();
        let n_decimals = usize::try_from(scale).unwrap_or(0);
        let text = if n_decimals == 0 {
            digits
        } else {
            let padded = format!("{digits:0>width$}", width = n_decimals + 1);
            let (whole, fraction) = padded.split_at(padded.len() - n_decimals);
            format!("{whole}.{fraction}")
        };
        format!("{}{text}…", if negative { "-" } else { "" })
    }
}

/// A terminating rational as a plain decimal string.
fn decimal_text(ratio: &BigRational) -> String {
    let negative = ratio.is_negative();
    let ratio = ratio.abs();
    let mut numerator = ratio.numer().clone();
    let denominator = ratio.denom().clone();
    let ten = BigInt::from(10);
    let mut n_decimals = 0usize;
    while !(&numerator % &denominator).is_zero() && n_decimals < 60 {
        numerator *= &ten;
        n_decimals += 1;
    }
    let digits = (numerator / denominator).to_string();
    let text = if n_decimals == 0 {
        digits
    } else {
        let padded = format!("{digits:0>width$}", width = n_decimals + 1);
        let (whole, fraction) = padded.split_at(padded.len() - n_decimals);
        format!("{whole}.{fraction}")
    };
    if negative { format!("-{text}") } else { text }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn powers_by_squaring_equal_repeated_products() {
        // 0.3048 (the international foot, 1959) to every power from −20 to
        // 20, against the product written out one factor at a time.
        let foot = BigRational::new(BigInt::from(3048), BigInt::from(10_000));
        for exponent in -20i32..=20 {
            let mut product = BigRational::one();
            for _ in 0..exponent.unsigned_abs() {
                product *= &foot;
            }
            if exponent < 0 {
                product = product.recip();
            }
            assert_eq!(pow(&foot, exponent), product, "0.3048^{exponent}");
        }
    }
}
