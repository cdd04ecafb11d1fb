//! Interval arithmetic with outward rounding: every operation widens its
//! result by one unit in the last place each way, so the true value of a
//! formula over a box of inputs is always inside the computed interval.
//! The enclosures of the built-in functions are written with their entries
//! in `units::functions`, from the building blocks here (`outward`,
//! `increasing`, `increasing_on`, `from_corners`, `contains_periodic`).

use super::number::Number;
use super::rule::{BinaryRule, UnaryRule};

/// A closed interval `[lo, hi]`; `lo > hi` never happens, NaN marks an
/// undefined result (a square root of a wholly negative interval, …).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interval {
    /// Lower bound.
    pub lo: f64,
    /// Upper bound.
    pub hi: f64,
}

impl Interval {
    /// `[lo, hi]` (swapped if given the wrong way round).
    pub fn new(lo: f64, hi: f64) -> Self {
        if lo <= hi {
            Interval { lo, hi }
        } else {
            Interval { lo: hi, hi: lo }
        }
    }

    /// The single point `value`.
    pub fn point(value: f64) -> Self {
        Interval {
            lo: value,
            hi: value,
        }
    }

    /// The undefined result (NaN bounds).
    pub fn undefined() -> Self {
        Interval {
            lo: f64::NAN,
            hi: f64::NAN,
        }
    }

    /// Every real number.
    pub fn entire() -> Self {
        Interval {
            lo: f64::NEG_INFINITY,
            hi: f64::INFINITY,
        }
    }

    /// The midpoint.
    pub fn mid(self) -> f64 {
        0.5 * (self.lo + self.hi)
    }

    /// Half the width.
    pub fn radius(self) -> f64 {
        0.5 * (self.hi - self.lo)
    }

    /// Whether `value` lies inside.
    pub fn contains(self, value: f64) -> bool {
        self.lo <= value && value <= self.hi
    }

    /// Whether the interval is undefined.
    pub fn is_nan(self) -> bool {
        self.lo.is_nan() || self.hi.is_nan()
    }

    /// The intersection, or `self` if they do not meet (both enclose the
    /// same true range, so they always meet unless rounding disagrees).
    pub fn intersect(self, other: Interval) -> Interval {
        let (lo, hi) = (self.lo.max(other.lo), self.hi.min(other.hi));
        if lo <= hi { Interval { lo, hi } } else { self }
    }

    /// The smallest interval holding both.
    pub fn hull(self, other: Interval) -> Interval {
        Interval {
            lo: self.lo.min(other.lo),
            hi: self.hi.max(other.hi),
        }
    }

    /// `[lo, hi]` widened by one unit in the last place each way (a bound
    /// computed with one rounding lies inside it); undefined if either is
    /// NaN.
    pub fn outward(lo: f64, hi: f64) -> Interval {
        if lo.is_nan() || hi.is_nan() {
            return Interval::undefined();
        }
        Interval {
            lo: lo.next_down(),
            hi: hi.next_up(),
        }
    }

    /// `[lo^p, hi^p]` (p ≥ 1) widened by what `f64::powi` may err: repeated
    /// squaring compounds a rounding per multiplication, so x^p carries a
    /// relative error of up to about (p − 1) units of rounding (45 ulps seen
    /// at high powers); the bounds are widened by p + 1 ulps each way.
    fn widened_power(lo: f64, hi: f64, power: i32) -> Interval {
        let (lo, hi) = (lo.powi(power), hi.powi(power));
        if lo.is_nan() || hi.is_nan() {
            return Interval::outward(lo, hi);
        }
        let relative = f64::from(power.unsigned_abs() + 1) * f64::EPSILON;
        let widen = |value: f64, outward: f64| value + outward * value.abs() * relative;
        Interval::outward(widen(lo, -1.0), widen(hi, 1.0))
    }

    /// The outward-rounded hull of four values (a function's values at the
    /// corners of a box, each computed with one rounding).
    pub fn from_corners(values: [f64; 4]) -> Interval {
        let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        Interval::outward(lo, hi)
    }

    /// A monotone increasing function applied to the bounds, rounded
    /// outward.
    pub fn increasing(self, f: fn(f64) -> f64) -> Interval {
        Interval::outward(f(self.lo), f(self.hi))
    }

    /// Whether `lo ≤ offset + k·period ≤ hi` for some integer k.
    pub fn contains_periodic(self, offset: f64, period: f64) -> bool {
        let k = ((self.lo - offset) / period).ceil();
        offset + k * period <= self.hi
    }

    /// |x| over the interval.
    pub fn abs(self) -> Interval {
        if self.lo >= 0.0 {
            self
        } else if self.hi <= 0.0 {
            Interval {
                lo: -self.hi,
                hi: -self.lo,
            }
        } else {
            Interval {
                lo: 0.0,
                hi: (-self.lo).max(self.hi),
            }
        }
    }

    /// A function defined on `[domain_lo, domain_hi]`, increasing there,
    /// over the part of the interval inside its domain; undefined if none
    /// is.
    pub fn increasing_on(self, domain_lo: f64, domain_hi: f64, f: fn(f64) -> f64) -> Interval {
        if self.hi < domain_lo || self.lo > domain_hi {
            return Interval::undefined();
        }
        Interval::new(self.lo.max(domain_lo), self.hi.min(domain_hi)).increasing(f)
    }

    /// ln x over the part of the interval above zero (a real power,
    /// x^p = exp(p ln x), needs it).
    pub fn ln(self) -> Interval {
        self.increasing_on(0.0, f64::INFINITY, libm::log)
    }
}

impl Number for Interval {
    fn constant(value: f64) -> Self {
        Interval::point(value)
    }

    fn add(self, other: Self) -> Self {
        Interval::outward(self.lo + other.lo, self.hi + other.hi)
    }

    fn sub(self, other: Self) -> Self {
        Interval::outward(self.lo - other.hi, self.hi - other.lo)
    }

    fn mul(self, other: Self) -> Self {
        Interval::from_corners([
            self.lo * other.lo,
            self.lo * other.hi,
            self.hi * other.lo,
            self.hi * other.hi,
        ])
    }

    fn div(self, other: Self) -> Self {
        if other.contains(0.0) {
            return Interval::entire();
        }
        Interval::from_corners([
            self.lo / other.lo,
            self.lo / other.hi,
            self.hi / other.lo,
            self.hi / other.hi,
        ])
    }

    fn neg(self) -> Self {
        Interval {
            lo: -self.hi,
            hi: -self.lo,
        }
    }

    fn certainly_less(self, other: Self) -> bool {
        self.hi < other.lo
    }

    fn either(self, other: Self) -> Self {
        self.hull(other)
    }

    fn certainly_at_most(self, other: Self) -> bool {
        self.hi <= other.lo
    }

    fn across_jump(self, other: Self) -> Self {
        if self.is_nan() || other.is_nan() {
            Interval::undefined()
        } else {
            self.hull(other)
        }
    }

    fn unbounded() -> Self {
        Interval::entire()
    }

    fn sign(self) -> Self {
        Interval::new(
            <f64 as Number>::sign(self.lo),
            <f64 as Number>::sign(self.hi),
        )
    }

    fn powi(self, power: i32) -> Self {
        match power {
            0 => Interval::point(1.0),
            p if p < 0 => Interval::point(1.0).div(self.powi(-p)),
            p if p % 2 == 0 => {
                let magnitude = self.abs();
                Interval::widened_power(magnitude.lo, magnitude.hi, p)
            }
            p => Interval::widened_power(self.lo, self.hi, p),
        }
    }

    fn powf(self, power: Self) -> Self {
        if power.lo == power.hi && power.lo.fract() == 0.0 && power.lo.abs() <= 64.0 {
            return self.powi(power.lo as i32);
        }
        // x^p = exp(p ln x) for x > 0.
        self.ln().mul(power).increasing(libm::exp)
    }

    fn apply(self, rule: &UnaryRule) -> Self {
        (rule.enclosure)(self)
    }

    fn apply2(self, other: Self, rule: &BinaryRule) -> Self {
        (rule.enclosure)(self, other)
    }
}
