//! The vector functions' values, which their entries in
//! [`super::FUNCTIONS`] name: building vectors from components or from
//! magnitude and direction, and the products, lengths and angles of vectors.

use super::CallError;
use crate::units::{Dimension, Quantity, Value, VectorQuantity};

fn scalar_at(args: &[Value], argument: usize) -> Result<Quantity, CallError> {
    args[argument]
        .scalar()
        .ok_or(CallError::NotScalar { argument })
}

fn vector_at(args: &[Value], argument: usize) -> Result<VectorQuantity, CallError> {
    args[argument]
        .vector()
        .ok_or(CallError::NotVector { argument })
}

pub(super) fn make_vector(args: &[Value]) -> Result<Value, CallError> {
    let components = (0..args.len())
        .map(|i| scalar_at(args, i))
        .collect::<Result<Vec<_>, _>>()?;
    let dimension = components[0].dimension;
    if let Some(argument) = components.iter().position(|c| c.dimension != dimension) {
        return Err(CallError::Mismatch { argument });
    }
    let si: Vec<f64> = components.iter().map(|c| c.si).collect();
    Ok(Value::Vector(VectorQuantity::new(&si, dimension)))
}

pub(super) fn polar(args: &[Value]) -> Result<Value, CallError> {
    let magnitude = scalar_at(args, 0)?;
    let direction = scalar_at(args, 1)?;
    if !direction.dimension.is_dimensionless() {
        return Err(CallError::NotDimensionless { argument: 1 });
    }
    let (sin, cos) = (libm::sin(direction.si), libm::cos(direction.si));
    Ok(Value::Vector(VectorQuantity::new(
        &[magnitude.si * cos, magnitude.si * sin],
        magnitude.dimension,
    )))
}

pub(super) fn dot(args: &[Value]) -> Result<Value, CallError> {
    let (a, b) = (vector_at(args, 0)?, vector_at(args, 1)?);
    a.dot(b)
        .map(Value::Scalar)
        .map_err(|_| CallError::Mismatch { argument: 1 })
}

pub(super) fn cross(args: &[Value]) -> Result<Value, CallError> {
    let (a, b) = (vector_at(args, 0)?, vector_at(args, 1)?);
    a.cross(b)
        .map(Value::Vector)
        .map_err(|_| CallError::Mismatch { argument: 1 })
}

pub(super) fn magnitude(args: &[Value]) -> Result<Value, CallError> {
    Ok(Value::Scalar(vector_at(args, 0)?.magnitude()))
}

pub(super) fn unit_vector(args: &[Value]) -> Result<Value, CallError> {
    let v = vector_at(args, 0)?;
    let length = v.magnitude().si;
    if length == 0.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a vector of non-zero length",
        });
    }
    Ok(Value::Vector(VectorQuantity {
        si: v.si.map(|c| c / length),
        n_components: v.n_components,
        dimension: Dimension::NONE,
    }))
}

pub(super) fn angle(args: &[Value]) -> Result<Value, CallError> {
    let a = vector_at(args, 0)?;
    if args.len() == 1 {
        return Ok(Value::Scalar(Quantity::number(libm::atan2(
            a.si[1], a.si[0],
        ))));
    }
    let b = vector_at(args, 1)?;
    let lengths = a.magnitude().si * b.magnitude().si;
    if lengths == 0.0 {
        return Err(CallError::Domain {
            argument: if a.magnitude().si == 0.0 { 0 } else { 1 },
            expected: "a vector of non-zero length",
        });
    }
    // atan2(|a × b|, a · b) stays accurate for nearly parallel vectors.
    let [cx, cy, cz] = [
        a.si[1] * b.si[2] - a.si[2] * b.si[1],
        a.si[2] * b.si[0] - a.si[0] * b.si[2],
        a.si[0] * b.si[1] - a.si[1] * b.si[0],
    ];
    let sine = libm::sqrt(cx * cx + cy * cy + cz * cz);
    let cosine: f64 = (0..3).map(|i| a.si[i] * b.si[i]).sum();
    Ok(Value::Scalar(Quantity::number(libm::atan2(sine, cosine))))
}
