//! The scalar functions' rules, which their entries in [`super::FUNCTIONS`]
//! name: dimension and domain checks, and per function its numeric rule —
//! value (libm, so every machine gives the same bits), enclosure over a box
//! (correct for non-monotonic functions: the extrema inside the box are
//! found, not just the ends), and slope or derivative, each written once
//! over [`Number`] and named for a point and for a box.

use std::f64::consts::{LN_10, PI};

use super::CallError;
use crate::numeric::{BinaryDerivative, BinaryRule, Dual, Interval, Number, Slope, UnaryRule};
use crate::units::{Dimension, Quantity};

// Dimension and domain checks (`super::Check`).

/// A plain number in, a plain number out.
pub(super) fn plain(args: &[Quantity]) -> Result<Dimension, CallError> {
    match args
        .iter()
        .position(|arg| !arg.dimension.is_dimensionless())
    {
        Some(argument) => Err(CallError::NotDimensionless { argument }),
        None => Ok(Dimension::NONE),
    }
}

/// A plain number from −1 to 1.
pub(super) fn plain_from_minus_one_to_one(args: &[Quantity]) -> Result<Dimension, CallError> {
    plain(args)?;
    if !(-1.0..=1.0).contains(&args[0].si) {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number from -1 to 1",
        });
    }
    Ok(Dimension::NONE)
}

/// A plain number of 1 or more (the domain of acosh).
pub(super) fn plain_at_least_one(args: &[Quantity]) -> Result<Dimension, CallError> {
    plain(args)?;
    if args[0].si.is_nan() || args[0].si < 1.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number of 1 or more",
        });
    }
    Ok(Dimension::NONE)
}

/// A plain number strictly between −1 and 1 (the domain of atanh).
pub(super) fn plain_between_minus_one_and_one(args: &[Quantity]) -> Result<Dimension, CallError> {
    plain(args)?;
    if !(args[0].si > -1.0 && args[0].si < 1.0) {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number between -1 and 1 (not either end)",
        });
    }
    Ok(Dimension::NONE)
}

/// A plain number above zero.
pub(super) fn plain_positive(args: &[Quantity]) -> Result<Dimension, CallError> {
    plain(args)?;
    if args[0].si <= 0.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a number greater than zero",
        });
    }
    Ok(Dimension::NONE)
}

/// A value of zero or more whose dimension has even exponents; the result
/// has half of each.
pub(super) fn half_dimension(args: &[Quantity]) -> Result<Dimension, CallError> {
    let dimension = args[0].dimension.root(2).ok_or(CallError::OddRoot)?;
    if args[0].si < 0.0 {
        return Err(CallError::Domain {
            argument: 0,
            expected: "a value of zero or more",
        });
    }
    Ok(dimension)
}

/// Any dimension, kept.
pub(super) fn same_dimension(args: &[Quantity]) -> Result<Dimension, CallError> {
    Ok(args[0].dimension)
}

/// Every argument of the first one's dimension, which the result has.
pub(super) fn one_dimension(args: &[Quantity]) -> Result<Dimension, CallError> {
    let first = args[0].dimension;
    match args.iter().position(|arg| arg.dimension != first) {
        Some(argument) => Err(CallError::Mismatch { argument }),
        None => Ok(first),
    }
}

/// Every argument of one dimension; the result is a plain number.
pub(super) fn one_dimension_to_plain(args: &[Quantity]) -> Result<Dimension, CallError> {
    one_dimension(args)?;
    Ok(Dimension::NONE)
}

// The numeric rules, one per function.

/// √x; slope 1 / (2√x).
pub(super) const SQRT: UnaryRule = UnaryRule {
    value: libm::sqrt,
    enclosure: sqrt_enclosure,
    slope: Slope {
        at_point: sqrt_slope,
        over_box: sqrt_slope,
    },
};

/// |x|; slope the sign of x (0 at 0).
pub(super) const ABS: UnaryRule = UnaryRule {
    value: f64::abs,
    enclosure: Interval::abs,
    slope: Slope {
        at_point: abs_slope,
        over_box: abs_slope,
    },
};

/// sin x; slope cos x.
pub(super) const SIN: UnaryRule = UnaryRule {
    value: libm::sin,
    enclosure: sin_enclosure,
    slope: Slope {
        at_point: sin_slope,
        over_box: sin_slope,
    },
};

/// cos x; slope −sin x.
pub(super) const COS: UnaryRule = UnaryRule {
    value: libm::cos,
    enclosure: cos_enclosure,
    slope: Slope {
        at_point: cos_slope,
        over_box: cos_slope,
    },
};

/// tan x; slope 1 + tan² x.
pub(super) const TAN: UnaryRule = UnaryRule {
    value: libm::tan,
    enclosure: tan_enclosure,
    slope: Slope {
        at_point: tan_slope,
        over_box: tan_slope,
    },
};

/// asin x; slope 1 / √(1 − x²).
pub(super) const ASIN: UnaryRule = UnaryRule {
    value: libm::asin,
    enclosure: asin_enclosure,
    slope: Slope {
        at_point: asin_slope,
        over_box: asin_slope,
    },
};

/// acos x; slope −1 / √(1 − x²).
pub(super) const ACOS: UnaryRule = UnaryRule {
    value: libm::acos,
    enclosure: acos_enclosure,
    slope: Slope {
        at_point: acos_slope,
        over_box: acos_slope,
    },
};

/// atan x; slope 1 / (1 + x²).
pub(super) const ATAN: UnaryRule = UnaryRule {
    value: libm::atan,
    enclosure: atan_enclosure,
    slope: Slope {
        at_point: atan_slope,
        over_box: atan_slope,
    },
};

/// sinh x; slope cosh x.
pub(super) const SINH: UnaryRule = UnaryRule {
    value: libm::sinh,
    enclosure: sinh_enclosure,
    slope: Slope {
        at_point: sinh_slope,
        over_box: sinh_slope,
    },
};

/// cosh x; slope sinh x.
pub(super) const COSH: UnaryRule = UnaryRule {
    value: libm::cosh,
    enclosure: cosh_enclosure,
    slope: Slope {
        at_point: cosh_slope,
        over_box: cosh_slope,
    },
};

/// tanh x; slope 1 − tanh² x.
pub(super) const TANH: UnaryRule = UnaryRule {
    value: libm::tanh,
    enclosure: tanh_enclosure,
    slope: Slope {
        at_point: tanh_slope,
        over_box: tanh_slope,
    },
};

/// asinh x; slope 1 / √(x² + 1).
pub(super) const ASINH: UnaryRule = UnaryRule {
    value: libm::asinh,
    enclosure: asinh_enclosure,
    slope: Slope {
        at_point: asinh_slope,
        over_box: asinh_slope,
    },
};

/// acosh x for x ≥ 1; slope 1 / √(x² − 1).
pub(super) const ACOSH: UnaryRule = UnaryRule {
    value: libm::acosh,
    enclosure: acosh_enclosure,
    slope: Slope {
        at_point: acosh_slope,
        over_box: acosh_slope,
    },
};

/// atanh x for −1 < x < 1; slope 1 / (1 − x²).
pub(super) const ATANH: UnaryRule = UnaryRule {
    value: libm::atanh,
    enclosure: atanh_enclosure,
    slope: Slope {
        at_point: atanh_slope,
        over_box: atanh_slope,
    },
};

/// eˣ; slope eˣ.
pub(super) const EXP: UnaryRule = UnaryRule {
    value: libm::exp,
    enclosure: exp_enclosure,
    slope: Slope {
        at_point: exp_slope,
        over_box: exp_slope,
    },
};

/// ln x; slope 1 / x.
pub(super) const LN: UnaryRule = UnaryRule {
    value: libm::log,
    enclosure: Interval::ln,
    slope: Slope {
        at_point: ln_slope,
        over_box: ln_slope,
    },
};

/// log₁₀ x; slope 1 / (x ln 10).
pub(super) const LOG10: UnaryRule = UnaryRule {
    value: libm::log10,
    enclosure: log10_enclosure,
    slope: Slope {
        at_point: log10_slope,
        over_box: log10_slope,
    },
};

/// atan2(y, x), the angle of the point (x, y).
pub(super) const ATAN2: BinaryRule = BinaryRule {
    value: libm::atan2,
    enclosure: atan2_enclosure,
    derivative: BinaryDerivative {
        at_point: atan2_derivative,
        over_box: atan2_derivative,
    },
};

/// √(a² + b²).
pub(super) const HYPOT: BinaryRule = BinaryRule {
    value: libm::hypot,
    enclosure: hypot_enclosure,
    derivative: BinaryDerivative {
        at_point: hypot_derivative,
        over_box: hypot_derivative,
    },
};

/// The smaller of a and b.
pub(super) const MIN: BinaryRule = BinaryRule {
    value: f64::min,
    enclosure: min_enclosure,
    derivative: BinaryDerivative {
        at_point: min_derivative,
        over_box: min_derivative,
    },
};

/// The larger of a and b.
pub(super) const MAX: BinaryRule = BinaryRule {
    value: f64::max,
    enclosure: max_enclosure,
    derivative: BinaryDerivative {
        at_point: max_derivative,
        over_box: max_derivative,
    },
};

// Enclosures.

fn sqrt_enclosure(x: Interval) -> Interval {
    if x.hi < 0.0 {
        return Interval::undefined();
    }
    Interval::outward(libm::sqrt(x.lo.max(0.0)), libm::sqrt(x.hi))
        .intersect(Interval::new(0.0, f64::INFINITY))
}

fn sin_enclosure(x: Interval) -> Interval {
    if x.hi - x.lo >= 2.0 * PI || !x.lo.is_finite() || !x.hi.is_finite() {
        return Interval::new(-1.0, 1.0);
    }
    let (a, b) = (libm::sin(x.lo), libm::sin(x.hi));
    let hi = if x.contains_periodic(PI / 2.0, 2.0 * PI) {
        1.0
    } else {
        a.max(b)
    };
    let lo = if x.contains_periodic(-PI / 2.0, 2.0 * PI) {
        -1.0
    } else {
        a.min(b)
    };
    Interval::outward(lo, hi).intersect(Interval::new(-1.0, 1.0))
}

fn cos_enclosure(x: Interval) -> Interval {
    if x.hi - x.lo >= 2.0 * PI || !x.lo.is_finite() || !x.hi.is_finite() {
        return Interval::new(-1.0, 1.0);
    }
    let (a, b) = (libm::cos(x.lo), libm::cos(x.hi));
    let hi = if x.contains_periodic(0.0, 2.0 * PI) {
        1.0
    } else {
        a.max(b)
    };
    let lo = if x.contains_periodic(PI, 2.0 * PI) {
        -1.0
    } else {
        a.min(b)
    };
    Interval::outward(lo, hi).intersect(Interval::new(-1.0, 1.0))
}

fn tan_enclosure(x: Interval) -> Interval {
    if x.hi - x.lo >= PI || x.contains_periodic(PI / 2.0, PI) {
        return Interval::entire();
    }
    x.increasing(libm::tan)
}

fn asin_enclosure(x: Interval) -> Interval {
    x.increasing_on(-1.0, 1.0, libm::asin)
}

fn acos_enclosure(x: Interval) -> Interval {
    if x.hi < -1.0 || x.lo > 1.0 {
        return Interval::undefined();
    }
    let inside = Interval::new(x.lo.max(-1.0), x.hi.min(1.0));
    Interval::outward(libm::acos(inside.hi), libm::acos(inside.lo))
}

fn atan_enclosure(x: Interval) -> Interval {
    x.increasing(libm::atan)
}

fn sinh_enclosure(x: Interval) -> Interval {
    x.increasing(libm::sinh)
}

/// cosh falls to its least value, 1, at 0 and rises on either side.
fn cosh_enclosure(x: Interval) -> Interval {
    let (a, b) = (libm::cosh(x.lo), libm::cosh(x.hi));
    let lo = if x.contains(0.0) { 1.0 } else { a.min(b) };
    Interval::outward(lo, a.max(b)).intersect(Interval::new(1.0, f64::INFINITY))
}

fn tanh_enclosure(x: Interval) -> Interval {
    x.increasing(libm::tanh).intersect(Interval::new(-1.0, 1.0))
}

fn asinh_enclosure(x: Interval) -> Interval {
    x.increasing(libm::asinh)
}

fn acosh_enclosure(x: Interval) -> Interval {
    x.increasing_on(1.0, f64::INFINITY, libm::acosh)
        .intersect(Interval::new(0.0, f64::INFINITY))
}

fn atanh_enclosure(x: Interval) -> Interval {
    x.increasing_on(-1.0, 1.0, libm::atanh)
}

fn exp_enclosure(x: Interval) -> Interval {
    x.increasing(libm::exp)
}

fn log10_enclosure(x: Interval) -> Interval {
    x.increasing_on(0.0, f64::INFINITY, libm::log10)
}

/// y = `y`, x = `x`. A box touching the negative x-axis (or the origin)
/// wraps around ±π; otherwise the extreme angles are at its corners.
fn atan2_enclosure(y: Interval, x: Interval) -> Interval {
    if x.lo <= 0.0 && y.contains(0.0) {
        return Interval::new(-PI, PI);
    }
    Interval::from_corners([
        libm::atan2(y.lo, x.lo),
        libm::atan2(y.lo, x.hi),
        libm::atan2(y.hi, x.lo),
        libm::atan2(y.hi, x.hi),
    ])
}

fn hypot_enclosure(a: Interval, b: Interval) -> Interval {
    let (a, b) = (a.abs(), b.abs());
    Interval::outward(libm::hypot(a.lo, b.lo), libm::hypot(a.hi, b.hi))
}

fn min_enclosure(a: Interval, b: Interval) -> Interval {
    Interval::new(a.lo.min(b.lo), a.hi.min(b.hi))
}

fn max_enclosure(a: Interval, b: Interval) -> Interval {
    Interval::new(a.lo.max(b.lo), a.hi.max(b.hi))
}

// Slopes f′(x), given x and f(x).

fn sqrt_slope<T: Number>(_x: T, value: T) -> T {
    T::constant(1.0).div(T::constant(2.0).mul(value))
}

fn abs_slope<T: Number>(x: T, _value: T) -> T {
    x.sign()
}

fn sin_slope<T: Number>(x: T, _value: T) -> T {
    x.apply(&COS)
}

fn cos_slope<T: Number>(x: T, _value: T) -> T {
    x.apply(&SIN).neg()
}

fn tan_slope<T: Number>(_x: T, value: T) -> T {
    T::constant(1.0).add(value.mul(value))
}

fn asin_slope<T: Number>(x: T, _value: T) -> T {
    let one = T::constant(1.0);
    one.div(one.sub(x.mul(x)).apply(&SQRT))
}

fn acos_slope<T: Number>(x: T, value: T) -> T {
    asin_slope(x, value).neg()
}

fn atan_slope<T: Number>(x: T, _value: T) -> T {
    let one = T::constant(1.0);
    one.div(one.add(x.mul(x)))
}

fn sinh_slope<T: Number>(x: T, _value: T) -> T {
    x.apply(&COSH)
}

fn cosh_slope<T: Number>(x: T, _value: T) -> T {
    x.apply(&SINH)
}

fn tanh_slope<T: Number>(_x: T, value: T) -> T {
    T::constant(1.0).sub(value.mul(value))
}

fn asinh_slope<T: Number>(x: T, _value: T) -> T {
    let one = T::constant(1.0);
    one.div(x.mul(x).add(one).apply(&SQRT))
}

fn acosh_slope<T: Number>(x: T, _value: T) -> T {
    let one = T::constant(1.0);
    one.div(x.mul(x).sub(one).apply(&SQRT))
}

fn atanh_slope<T: Number>(x: T, _value: T) -> T {
    let one = T::constant(1.0);
    one.div(one.sub(x.mul(x)))
}

fn exp_slope<T: Number>(_x: T, value: T) -> T {
    value
}

fn ln_slope<T: Number>(x: T, _value: T) -> T {
    T::constant(1.0).div(x)
}

fn log10_slope<T: Number>(x: T, _value: T) -> T {
    T::constant(1.0).div(x.mul(T::constant(LN_10)))
}

// Derivatives of two-argument functions along the chosen input.

/// atan2(y, x)′ = (x y′ − y x′) / (x² + y²).
fn atan2_derivative<T: Number>(y: Dual<T>, x: Dual<T>, _value: T) -> T {
    let (y_value, x_value) = (y.value, x.value);
    x_value
        .mul(y.derivative)
        .sub(y_value.mul(x.derivative))
        .div(x_value.mul(x_value).add(y_value.mul(y_value)))
}

/// (a a′ + b b′) / hypot(a, b); at the origin hypot has a kink, like |x| at
/// 0, and its slope is taken as 0 there (as the slope of |x| is), not 0/0.
fn hypot_derivative<T: Number>(a: Dual<T>, b: Dual<T>, value: T) -> T {
    if value.certainly_less(T::constant(f64::MIN_POSITIVE)) {
        return T::constant(0.0);
    }
    a.value
        .mul(a.derivative)
        .add(b.value.mul(b.derivative))
        .div(value)
}

fn min_derivative<T: Number>(a: Dual<T>, b: Dual<T>, _value: T) -> T {
    derivative_of_taken(a, b, Taken::Lower)
}

fn max_derivative<T: Number>(a: Dual<T>, b: Dual<T>, _value: T) -> T {
    derivative_of_taken(a, b, Taken::Higher)
}

/// Which argument min or max takes.
#[derive(Clone, Copy, PartialEq)]
enum Taken {
    Lower,
    Higher,
}

/// The derivative of the argument taken where one is surely below the
/// other; where either may be taken (ties, overlapping intervals), what
/// covers both.
fn derivative_of_taken<T: Number>(a: Dual<T>, b: Dual<T>, taken: Taken) -> T {
    let (lower, higher) = if a.value.certainly_less(b.value) {
        (a, b)
    } else if b.value.certainly_less(a.value) {
        (b, a)
    } else {
        return a.derivative.either(b.derivative);
    };
    match taken {
        Taken::Lower => lower.derivative,
        Taken::Higher => higher.derivative,
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
        let away = along(3.0).apply2(Dual::fixed(4.0), &HYPOT);
        assert!((away.derivative - 0.6).abs() < 1e-15);
        // At the origin: 0, like the slope of |x| at 0, never NaN.
        let origin = along(0.0).apply2(along(0.0), &HYPOT);
        assert_eq!((origin.value, origin.derivative), (0.0, 0.0));
    }
}
