//! Values a formula can have: a scalar quantity or a 2D/3D vector quantity
//! whose components share one dimension (a force, a velocity, a position).

use super::{Dimension, Quantity, QuantityError};

/// A vector quantity: up to three components in coherent SI units, one
/// dimension for all of them.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct VectorQuantity {
    /// Components x, y, z in SI units (z is 0 for a 2D vector).
    pub si: [f64; 3],
    /// 2 or 3.
    pub n_components: u8,
    /// The dimension every component shares.
    pub dimension: Dimension,
}

/// The value of a formula.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Value {
    /// A scalar: `1850 kg`, `0.35`.
    Scalar(Quantity),
    /// A vector: `vec(120 N, -40 N)`, `polar(40 N, 30 deg)`.
    Vector(VectorQuantity),
}

/// Why an operation on values has no result, beyond [`QuantityError`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ValueError {
    /// A scalar rule was broken (dimensions, division by zero, …).
    Quantity(QuantityError),
    /// A vector and a scalar were added, subtracted or compared.
    VectorAndScalar,
    /// Two vectors were multiplied or divided (use `dot` or `cross`), or a
    /// scalar was divided by a vector.
    VectorProduct,
    /// A vector was raised to a power.
    VectorPower,
}

impl From<QuantityError> for ValueError {
    fn from(error: QuantityError) -> Self {
        ValueError::Quantity(error)
    }
}

impl VectorQuantity {
    /// A vector from its SI components (2 or 3 of them).
    pub fn new(components: &[f64], dimension: Dimension) -> Self {
        let mut si = [0.0; 3];
        for (slot, value) in si.iter_mut().zip(components) {
            *slot = *value;
        }
        VectorQuantity {
            si,
            n_components: if components.len() >= 3 { 3 } else { 2 },
            dimension,
        }
    }

    /// The components in use.
    pub fn components(&self) -> &[f64] {
        &self.si[..usize::from(self.n_components)]
    }

    /// Its length, with the vector's dimension.
    pub fn magnitude(&self) -> Quantity {
        let [x, y, z] = self.si;
        Quantity::new(libm::sqrt(x * x + y * y + z * z), self.dimension)
    }

    /// One component (0 = x, 1 = y, 2 = z) as a scalar.
    pub fn component(&self, axis: usize) -> Quantity {
        Quantity::new(self.si[axis.min(2)], self.dimension)
    }

    fn zip_with(
        self,
        other: VectorQuantity,
        op: fn(f64, f64) -> f64,
    ) -> Result<VectorQuantity, ValueError> {
        Quantity::new(0.0, self.dimension).same_dimension(Quantity::new(0.0, other.dimension))?;
        let mut si = [0.0; 3];
        for (i, slot) in si.iter_mut().enumerate() {
            *slot = op(self.si[i], other.si[i]);
        }
        Ok(VectorQuantity {
            si,
            n_components: self.n_components.max(other.n_components),
            dimension: self.dimension,
        })
    }

    fn scaled(self, factor: Quantity, divide: bool) -> Result<VectorQuantity, ValueError> {
        let unit = Quantity::new(1.0, self.dimension);
        let dimension = if divide {
            unit.try_div(Quantity::new(1.0, factor.dimension))?
        } else {
            unit.try_mul(factor)?
        }
        .dimension;
        if divide && factor.si == 0.0 {
            return Err(QuantityError::DivisionByZero.into());
        }
        let si = self
            .si
            .map(|c| if divide { c / factor.si } else { c * factor.si });
        Ok(VectorQuantity {
            si,
            n_components: self.n_components,
            dimension,
        })
    }

    /// The dot product, a scalar with the product of the dimensions.
    pub fn dot(self, other: VectorQuantity) -> Result<Quantity, ValueError> {
        let dimension = self
            .dimension
            .checked_mul(other.dimension)
            .ok_or(QuantityError::DimensionOverflow)?;
        let si = (0..3).map(|i| self.si[i] * other.si[i]).sum();
        Ok(Quantity::new(si, dimension))
    }

    /// The cross product, always 3D (2D vectors lie in the x-y plane).
    pub fn cross(self, other: VectorQuantity) -> Result<VectorQuantity, ValueError> {
        let dimension = self
            .dimension
            .checked_mul(other.dimension)
            .ok_or(QuantityError::DimensionOverflow)?;
        let ([ax, ay, az], [bx, by, bz]) = (self.si, other.si);
        Ok(VectorQuantity {
            si: [ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx],
            n_components: 3,
            dimension,
        })
    }
}

impl std::ops::Neg for Value {
    type Output = Value;

    /// `-v`, same dimension.
    fn neg(self) -> Value {
        match self {
            Value::Scalar(q) => Value::Scalar(-q),
            Value::Vector(v) => Value::Vector(VectorQuantity {
                si: v.si.map(|c| -c),
                ..v
            }),
        }
    }
}

impl Value {
    /// The dimension of the value (of each component for a vector).
    pub fn dimension(&self) -> Dimension {
        match self {
            Value::Scalar(q) => q.dimension,
            Value::Vector(v) => v.dimension,
        }
    }

    /// The scalar, if this is one.
    pub fn scalar(&self) -> Option<Quantity> {
        match self {
            Value::Scalar(q) => Some(*q),
            Value::Vector(_) => None,
        }
    }

    /// The vector, if this is one.
    pub fn vector(&self) -> Option<VectorQuantity> {
        match self {
            Value::Vector(v) => Some(*v),
            Value::Scalar(_) => None,
        }
    }

    /// The magnitude used to pick a display unit (|s|, or a vector's length).
    pub fn magnitude_si(&self) -> f64 {
        match self {
            Value::Scalar(q) => q.si.abs(),
            Value::Vector(v) => v.magnitude().si,
        }
    }

    /// Whether every number in it is finite.
    pub fn is_finite(&self) -> bool {
        match self {
            Value::Scalar(q) => q.si.is_finite(),
            Value::Vector(v) => v.si.iter().all(|c| c.is_finite()),
        }
    }

    /// `self + other`.
    pub fn try_add(self, other: Value) -> Result<Value, ValueError> {
        match (self, other) {
            (Value::Scalar(a), Value::Scalar(b)) => Ok(Value::Scalar(a.try_add(b)?)),
            (Value::Vector(a), Value::Vector(b)) => Ok(Value::Vector(a.zip_with(b, |x, y| x + y)?)),
            _ => Err(ValueError::VectorAndScalar),
        }
    }

    /// `self - other`.
    pub fn try_sub(self, other: Value) -> Result<Value, ValueError> {
        match (self, other) {
            (Value::Scalar(a), Value::Scalar(b)) => Ok(Value::Scalar(a.try_sub(b)?)),
            (Value::Vector(a), Value::Vector(b)) => Ok(Value::Vector(a.zip_with(b, |x, y| x - y)?)),
            _ => Err(ValueError::VectorAndScalar),
        }
    }

    /// `self * other`: scalars, or a vector scaled by a scalar.
    pub fn try_mul(self, other: Value) -> Result<Value, ValueError> {
        match (self, other) {
            (Value::Scalar(a), Value::Scalar(b)) => Ok(Value::Scalar(a.try_mul(b)?)),
            (Value::Vector(v), Value::Scalar(s)) | (Value::Scalar(s), Value::Vector(v)) => {
                Ok(Value::Vector(v.scaled(s, false)?))
            }
            (Value::Vector(_), Value::Vector(_)) => Err(ValueError::VectorProduct),
        }
    }

    /// `self / other`: scalars, or a vector divided by a scalar.
    pub fn try_div(self, other: Value) -> Result<Value, ValueError> {
        match (self, other) {
            (Value::Scalar(a), Value::Scalar(b)) => Ok(Value::Scalar(a.try_div(b)?)),
            (Value::Vector(v), Value::Scalar(s)) => Ok(Value::Vector(v.scaled(s, true)?)),
            _ => Err(ValueError::VectorProduct),
        }
    }

    /// `self ^ other`: scalars only.
    pub fn try_pow(self, other: Value) -> Result<Value, ValueError> {
        match (self, other) {
            (Value::Scalar(a), Value::Scalar(b)) => Ok(Value::Scalar(a.try_pow(b)?)),
            _ => Err(ValueError::VectorPower),
        }
    }
}
