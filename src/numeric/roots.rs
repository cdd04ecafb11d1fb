//! One-dimensional searches used inside a step: where an event function
//! turns non-negative, and where a smooth function peaks.

/// Most iterations of either search; both shrink their bracket by a fixed
/// fraction at worst, so this is far beyond what `f64` can resolve.
const MAX_ITERATIONS: usize = 200;

/// Finds where a condition on the value of `f` starts to hold between `a`
/// and `b`, given that it does not hold at `a` (`fa = f(a)`) and does at `b`
/// (`fb = f(b)`); `holds` is the condition, the caller's own test (for an
/// event, [`super::Condition::holds`]: `> 0` when strict, `>= 0` otherwise),
/// so the root-finder puts each point on the side that test says and a
/// stretch where `f` is exactly zero counts as holding for `>= 0` and not
/// for `> 0`. The Illinois variant of regula falsi (a secant step that
/// halves the stale end's value when the same end is kept twice), with
/// bisection whenever the secant step stalls.
///
/// Returns the right end of the final bracket, so the condition holds at the
/// point returned; the bracket is at most `resolution` wide, or a few units
/// in the last place of `b` where that is wider.
pub fn find_crossing(
    mut f: impl FnMut(f64) -> f64,
    (mut a, mut fa): (f64, f64),
    (mut b, mut fb): (f64, f64),
    holds: impl Fn(f64) -> bool,
    resolution: f64,
) -> f64 {
    // NaN cannot tell the side: it counts as holding, which moves the right
    // end towards the known change.
    let holds = |value: f64| value.is_nan() || holds(value);
    let mut kept = 0i8; // +1 when b was kept last time, -1 when a was
    for _ in 0..MAX_ITERATIONS {
        let width = b - a;
        if width <= resolution.max(4.0 * f64::EPSILON * a.abs().max(b.abs()) + f64::MIN_POSITIVE) {
            break;
        }
        let secant = b - fb * width / (fb - fa);
        let c = if secant > a && secant < b && secant.is_finite() {
            secant
        } else {
            a + 0.5 * width
        };
        if c <= a || c >= b {
            break; // no representable point left inside the bracket
        }
        let fc = f(c);
        if holds(fc) {
            b = c;
            // A NaN end keeps the old value, so the secant stays finite.
            if !fc.is_nan() {
                fb = fc;
            }
            if kept == -1 {
                fa *= 0.5;
            }
            kept = -1;
        } else {
            a = c;
            fa = fc;
            if kept == 1 {
                fb *= 0.5;
            }
            kept = 1;
        }
        // Guarantee progress: if the bracket shrank by less than half, bisect.
        if b - a > 0.5 * width {
            let mid = a + 0.5 * (b - a);
            let fm = f(mid);
            if holds(fm) {
                b = mid;
                if !fm.is_nan() {
                    fb = fm;
                }
            } else {
                a = mid;
                fa = fm;
            }
            kept = 0;
        }
    }
    b
}

/// The largest (or, with `maximize` false, smallest) value of a smooth
/// function on `[a, b]`, found by golden-section search: returns where it
/// is and its value. The bracket must hold a single peak (the caller brackets
/// it between samples), and the ends count as candidates. The search stops
/// once the bracket is `width` wide (or a few units in the last place).
///
/// Values alone place a smooth peak only to about √ε of its scale, since
/// near the peak they differ by less than their rounding; callers that need
/// more find where the function's slope changes sign instead.
pub fn golden_section(
    mut f: impl FnMut(f64) -> f64,
    a: f64,
    b: f64,
    maximize: bool,
    width: f64,
) -> (f64, f64) {
    let sign = if maximize { 1.0 } else { -1.0 };
    let mut g = |x: f64| {
        let value = f(x);
        (
            if value.is_nan() {
                f64::NEG_INFINITY
            } else {
                sign * value
            },
            value,
        )
    };
    // 1/φ: each step keeps this fraction of the bracket.
    const INVERSE_PHI: f64 = 0.618_033_988_749_894_8;
    let (mut lo, mut hi) = (a.min(b), a.max(b));
    let (mut best_x, mut best) = (lo, g(lo));
    let end = g(hi);
    if end.0 > best.0 {
        (best_x, best) = (hi, end);
    }
    let mut x1 = hi - INVERSE_PHI * (hi - lo);
    let mut x2 = lo + INVERSE_PHI * (hi - lo);
    let (mut f1, mut f2) = (g(x1), g(x2));
    for _ in 0..MAX_ITERATIONS {
        if hi - lo <= width.max(4.0 * f64::EPSILON * lo.abs().max(hi.abs()) + f64::MIN_POSITIVE) {
            break;
        }
        if f1.0 >= f2.0 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - INVERSE_PHI * (hi - lo);
            f1 = g(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + INVERSE_PHI * (hi - lo);
            f2 = g(x2);
        }
    }
    for (x, candidate) in [(x1, f1), (x2, f2)] {
        if candidate.0 > best.0 {
            (best_x, best) = (x, candidate);
        }
    }
    (best_x, best.1)
}

#[cfg(test)]
// The tests' reference values use std's functions, independent of libm.
#[allow(clippy::disallowed_methods)]
mod tests {
    use super::*;

    #[test]
    fn a_crossing_is_found_to_the_last_digits() {
        // 0.5 - cos t turns non-negative at acos(0.5) = π/3 (closed form).
        let root = find_crossing(
            |t: f64| 0.5 - t.cos(),
            (0.0, -0.5),
            (2.0, 0.5 - 2f64.cos()),
            |v| v >= 0.0,
            0.0,
        );
        assert!((root - std::f64::consts::FRAC_PI_3).abs() < 1e-14, "{root}");
        assert!(
            0.5 - root.cos() >= 0.0,
            "the condition holds at the point returned"
        );
    }

    #[test]
    fn a_flat_then_steep_function_still_converges() {
        // Regula falsi alone stalls on this shape; the Illinois halving and
        // the bisection guard must not.
        let f = |x: f64| x.powi(9) - 1e-9;
        let root = find_crossing(f, (0.0, f(0.0)), (1.0, f(1.0)), |v| v >= 0.0, 0.0);
        assert!((root - 0.1).abs() < 1e-14, "{root}");
    }

    #[test]
    fn a_strict_condition_starts_to_hold_where_the_function_leaves_zero() {
        // max(x − 0.5, 0) is zero up to 0.5 and positive after: "> 0" starts
        // to hold at 0.5, and the point returned is past it; "≥ 0" would
        // hold everywhere, so the same bracket is not a change for it.
        let f = |x: f64| (x - 0.5).max(0.0);
        let root = find_crossing(f, (0.0, f(0.0)), (1.0, f(1.0)), |v| v > 0.0, 0.0);
        assert!(f(root) > 0.0, "the strict condition holds at {root}");
        assert!((root - 0.5).abs() < 1e-14, "{root}");
        // A resolution stops the search early, still on the holding side.
        let rough = find_crossing(f, (0.0, f(0.0)), (1.0, f(1.0)), |v| v > 0.0, 1e-3);
        assert!(f(rough) > 0.0 && rough - 0.5 <= 1e-3, "{rough}");
    }

    #[test]
    fn a_peak_is_found_inside_its_bracket() {
        // sin t peaks at π/2 with value 1.
        let (at, value) = golden_section(f64::sin, 1.0, 2.0, true, 0.0);
        assert!((at - std::f64::consts::FRAC_PI_2).abs() < 1e-7, "{at}");
        assert!((value - 1.0).abs() < 1e-14);
        // On a monotone stretch the peak is the end.
        let (at, value) = golden_section(|t| t * t, 1.0, 3.0, false, 0.0);
        assert_eq!((at, value), (1.0, 1.0));
        // A width stops the search early: fewer evaluations, the peak
        // still within that width.
        let mut calls = 0;
        let (at, _) = golden_section(
            |t: f64| {
                calls += 1;
                t.sin()
            },
            1.0,
            2.0,
            true,
            1e-3,
        );
        assert!((at - std::f64::consts::FRAC_PI_2).abs() <= 1e-3, "{at}");
        assert!(calls < 20, "{calls} evaluations");
    }
}
