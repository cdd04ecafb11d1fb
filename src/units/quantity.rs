//! Runtime quantities: an SI value with its dimension, and the arithmetic on
//! them with the dimension checked at every operation. Span-free: callers
//! attach places to the errors.

use super::Dimension;

/// A scalar quantity: its value in coherent SI units and its dimension.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Quantity {
    /// The value in coherent SI units (kg, m, s, N, Pa, …).
    pub si: f64,
    /// Its dimension.
    pub dimension: Dimension,
}

/// Why an operation on quantities has no result.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum QuantityError {
    /// The operands of `+`, `-`, a comparison or a function must share a
    /// dimension and do not.
    Mismatch {
        /// The left (or first) operand's dimension.
        left: Dimension,
        /// The right (or offending) operand's dimension.
        right: Dimension,
    },
    /// An exponent of the result's dimension does not fit.
    DimensionOverflow,
    /// A power with a dimensioned base and an exponent that would give a
    /// non-integer dimension (`(2 m)^0.5`), or a dimensioned exponent.
    BadExponent,
    /// Division by exactly zero.
    DivisionByZero,
}

impl Quantity {
    /// A quantity from its SI value and dimension.
    pub fn new(si: f64, dimension: Dimension) -> Self {
        Quantity { si, dimension }
    }

    /// A plain number.
    pub fn number(value: f64) -> Self {
        Quantity::new(value, Dimension::NONE)
    }

    /// `self + other`, same dimension required.
    pub fn try_add(self, other: Quantity) -> Result<Quantity, QuantityError> {
        self.same_dimension(other)?;
        Ok(Quantity::new(self.si + other.si, self.dimension))
    }

    /// `self - other`, same dimension required.
    pub fn try_sub(self, other: Quantity) -> Result<Quantity, QuantityError> {
        self.same_dimension(other)?;
        Ok(Quantity::new(self.si - other.si, self.dimension))
    }

    /// `self * other`.
    pub fn try_mul(self, other: Quantity) -> Result<Quantity, QuantityError> {
        let dimension = self
            .dimension
            .checked_mul(other.dimension)
            .ok_or(QuantityError::DimensionOverflow)?;
        Ok(Quantity::new(self.si * other.si, dimension))
    }

    /// `self / other`; an exact zero divisor is an error.
    pub fn try_div(self, other: Quantity) -> Result<Quantity, QuantityError> {
        if other.si == 0.0 {
            return Err(QuantityError::DivisionByZero);
        }
        let dimension = self
            .dimension
            .checked_div(other.dimension)
            .ok_or(QuantityError::DimensionOverflow)?;
        Ok(Quantity::new(self.si / other.si, dimension))
    }

    /// `self ^ exponent`: the exponent must be a plain number, and an integer
    /// (or give integer dimension exponents) when the base has a dimension.
    pub fn try_pow(self, exponent: Quantity) -> Result<Quantity, QuantityError> {
        if !exponent.dimension.is_dimensionless() {
            return Err(QuantityError::BadExponent);
        }
        let power = exponent.si;
        if self.dimension.is_dimensionless() {
            return Ok(Quantity::number(libm::pow(self.si, power)));
        }
        let dimension = power_dimension(self.dimension, power).ok_or(QuantityError::BadExponent)?;
        let si = if power.fract() == 0.0 && power.abs() <= f64::from(i32::MAX) {
            // Integer powers by repeated multiplication stay exact where powf may not.
            self.si.powi(power as i32)
        } else {
            libm::pow(self.si, power)
        };
        Ok(Quantity::new(si, dimension))
    }

    /// Fails unless both quantities share a dimension.
    pub fn same_dimension(self, other: Quantity) -> Result<(), QuantityError> {
        if self.dimension == other.dimension {
            Ok(())
        } else {
            Err(QuantityError::Mismatch {
                left: self.dimension,
                right: other.dimension,
            })
        }
    }
}

impl std::ops::Neg for Quantity {
    type Output = Quantity;

    /// `-self`, same dimension.
    fn neg(self) -> Quantity {
        Quantity::new(-self.si, self.dimension)
    }
}

/// The dimension of `base ^ power` when it has integer exponents.
fn power_dimension(base: Dimension, power: f64) -> Option<Dimension> {
    if power.fract() == 0.0 && power.abs() <= 127.0 {
        return base.checked_powi(power as i32);
    }
    // Rational powers such as 0.5 or 1/3 are fine if every exponent divides.
    for denominator in 2..=6i8 {
        let numerator = power * f64::from(denominator);
        if (numerator - numerator.round()).abs() < 1e-12 && numerator.abs() <= 127.0 {
            return base
                .root(denominator)?
                .checked_powi(numerator.round() as i32);
        }
    }
    None
}
