//! The Dormand–Prince 5(4) pair with local extrapolation (the fifth-order
//! solution is kept), FSAL, a PI step-size controller, Shampine's dense
//! output, event location on the dense output, and the stiffness test of
//! Hairer and Wanner. Coefficients: J. R. Dormand and P. J. Prince, "A
//! family of embedded Runge–Kutta formulae", J. Comp. Appl. Math. 6 (1980);
//! dense output: L. F. Shampine, Math. Comp. 46 (1986); controller and
//! stiffness test: E. Hairer, S. P. Nørsett, G. Wanner, Solving Ordinary
//! Differential Equations I, 2nd ed. (1993), II.4 and IV.2.

use super::roots::find_crossing;
use super::trajectory::{COEFFICIENTS, Trajectory};

// The Butcher tableau.
const C2: f64 = 1.0 / 5.0;
const C3: f64 = 3.0 / 10.0;
const C4: f64 = 4.0 / 5.0;
const C5: f64 = 8.0 / 9.0;
const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
const A71: f64 = 35.0 / 384.0;
const A73: f64 = 500.0 / 1113.0;
const A74: f64 = 125.0 / 192.0;
const A75: f64 = -2187.0 / 6784.0;
const A76: f64 = 11.0 / 84.0;
// Fifth- minus fourth-order weights: the local error estimate.
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;
// Dense output.
const D1: f64 = -12715105075.0 / 11282082432.0;
const D3: f64 = 87487479700.0 / 32700410799.0;
const D4: f64 = -10690763975.0 / 1880347072.0;
const D5: f64 = 701980252875.0 / 199316789632.0;
const D6: f64 = -1453857185.0 / 822651844.0;
const D7: f64 = 69997945.0 / 29380423.0;

/// Step-size controller: safety factor, bounds on the change per step, and
/// the PI (Lund) stabilisation exponent, as in Hairer's DOPRI5.
const SAFETY: f64 = 0.9;
const FAC_MIN: f64 = 0.2;
const FAC_MAX: f64 = 10.0;
const BETA: f64 = 0.04;
/// Largest |h·λ| estimate still inside the method's stability region.
const STABILITY_LIMIT: f64 = 3.25;
/// The stiffness test runs every this many accepted steps (and on every
/// step once it has fired), and stiffness is declared after this many
/// positive tests in a row.
const STIFFNESS_PERIOD: usize = 1000;
const STIFFNESS_CONFIRMATIONS: usize = 15;

/// A system of first-order equations y′ = f(t, y), with event functions.
pub trait System {
    /// Writes f(t, y) into `rates`.
    fn rates(&mut self, t: f64, y: &[f64], rates: &mut [f64]);
    /// Event function `index` at (t, y): its condition holds where the value
    /// is positive (or, unless the condition is strict, zero); see
    /// [`Condition::holds`].
    fn event(&mut self, index: usize, t: f64, y: &[f64]) -> f64;
}

/// What an event does when it happens.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EventKind {
    /// Ends the run.
    Stop,
    /// Is recorded; the run goes on.
    Record,
}

/// An event's condition as the integrator sees it: what happening does, and
/// whether the event function must be strictly positive for it to hold.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Condition {
    /// Stop the run, or record and go on.
    pub kind: EventKind,
    /// Holds only where the event function is positive (`<`, `>`), not
    /// where it is zero (`<=`, `>=`).
    pub strict: bool,
}

impl Condition {
    /// Whether the condition holds where its event function is `value`:
    /// `value > 0` when strict, `value >= 0` otherwise; never for NaN. The
    /// start test, the test for becoming true inside a step and the
    /// root-finder all ask this one function.
    pub fn holds(self, value: f64) -> bool {
        if self.strict {
            value > 0.0
        } else {
            value >= 0.0
        }
    }
}

/// What the tolerance bounds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ErrorControl {
    /// Each step's local error (the usual convention of ODE codes); the
    /// error at the end of a long run can be many times the tolerance.
    PerStep,
    /// Each step's local error per unit time, scaled by the whole run's
    /// span ("error per unit step"): the local errors of all steps add up to
    /// at most the tolerance, so the accumulated error stays within it
    /// unless the equations themselves amplify errors.
    PerUnitTime,
}

/// How to integrate.
#[derive(Clone, Debug, PartialEq)]
pub struct Settings {
    /// Relative tolerance on every component.
    pub relative_tolerance: f64,
    /// Absolute tolerance per component (each > 0).
    pub absolute_tolerance: Vec<f64>,
    /// Most accepted steps before giving up.
    pub max_steps: usize,
    /// The events' conditions, in the order [`System::event`] numbers them.
    pub events: Vec<Condition>,
    /// What the tolerances bound.
    pub error_control: ErrorControl,
}

/// One occurrence of an event.
#[derive(Clone, Debug, PartialEq)]
pub struct EventHit {
    /// Which event.
    pub event: usize,
    /// When.
    pub t: f64,
    /// The state then.
    pub y: Vec<f64>,
}

/// Why a run could not finish.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Failure {
    /// The step size is held down by stability rather than accuracy.
    Stiff {
        /// Where this was found.
        t: f64,
        /// The step size there.
        step: f64,
    },
    /// The step size fell below what the time can resolve.
    StepTooSmall {
        /// Where.
        t: f64,
        /// The step size.
        step: f64,
    },
    /// More than [`Settings::max_steps`] steps.
    TooManySteps {
        /// How far the run got.
        t: f64,
        /// The limit it reached.
        limit: usize,
    },
    /// A rate was infinite or not a number.
    NotFinite {
        /// Where (the start of the step that met it).
        t: f64,
    },
}

/// How a run ended.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Outcome {
    /// It reached the end time.
    Reached,
    /// A stop event ended it.
    Stopped {
        /// Which event.
        event: usize,
    },
    /// It failed part way; the trajectory holds what was integrated.
    Failed(Failure),
}

/// Work counts of a run.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Stats {
    /// Accepted steps.
    pub accepted: usize,
    /// Rejected steps.
    pub rejected: usize,
    /// Evaluations of the rates.
    pub evaluations: usize,
}

/// A finished (or failed) run.
#[derive(Clone, Debug, PartialEq)]
pub struct Run {
    /// The states over time.
    pub trajectory: Trajectory,
    /// Every event occurrence, in time order.
    pub hits: Vec<EventHit>,
    /// How it ended.
    pub outcome: Outcome,
    /// Work done.
    pub stats: Stats,
}

/// Work arrays of one step.
struct Stages {
    k: [Vec<f64>; 7],
    y_new: Vec<f64>,
    /// The argument of the sixth stage (for the stiffness test).
    y_stiff: Vec<f64>,
    scratch: Vec<f64>,
}

impl Stages {
    fn new(n: usize) -> Self {
        Stages {
            k: std::array::from_fn(|_| vec![0.0; n]),
            y_new: vec![0.0; n],
            y_stiff: vec![0.0; n],
            scratch: vec![0.0; n],
        }
    }

    /// Stages 2–7 of a step of size `h` from (t, y), with `k[0]` = f(t, y)
    /// already set. Leaves the fifth-order result in `y_new`.
    fn step<S: System>(&mut self, system: &mut S, t: f64, y: &[f64], h: f64) {
        let Stages {
            k,
            y_new,
            y_stiff,
            scratch,
        } = self;
        let [k1, k2, k3, k4, k5, k6, k7] = k;
        for i in 0..y.len() {
            scratch[i] = y[i] + h * A21 * k1[i];
        }
        system.rates(t + C2 * h, scratch, k2);
        for i in 0..y.len() {
            scratch[i] = y[i] + h * (A31 * k1[i] + A32 * k2[i]);
        }
        system.rates(t + C3 * h, scratch, k3);
        for i in 0..y.len() {
            scratch[i] = y[i] + h * (A41 * k1[i] + A42 * k2[i] + A43 * k3[i]);
        }
        system.rates(t + C4 * h, scratch, k4);
        for i in 0..y.len() {
            scratch[i] = y[i] + h * (A51 * k1[i] + A52 * k2[i] + A53 * k3[i] + A54 * k4[i]);
        }
        system.rates(t + C5 * h, scratch, k5);
        for i in 0..y.len() {
            y_stiff[i] =
                y[i] + h * (A61 * k1[i] + A62 * k2[i] + A63 * k3[i] + A64 * k4[i] + A65 * k5[i]);
        }
        system.rates(t + h, y_stiff, k6);
        for i in 0..y.len() {
            y_new[i] =
                y[i] + h * (A71 * k1[i] + A73 * k3[i] + A74 * k4[i] + A75 * k5[i] + A76 * k6[i]);
        }
        system.rates(t + h, y_new, k7);
    }

    /// The scaled RMS norm of the local error estimate.
    fn error(&self, y: &[f64], h: f64, scale: impl Fn(usize, f64, f64) -> f64) -> f64 {
        let [k1, _, k3, k4, k5, k6, k7] = &self.k;
        let mut sum = 0.0;
        for i in 0..y.len() {
            let estimate =
                h * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
            let ratio = estimate / scale(i, y[i], self.y_new[i]);
            sum += ratio * ratio;
        }
        (sum / y.len().max(1) as f64).sqrt()
    }

    /// Shampine's dense-output coefficients r1 … r5 of the step just taken.
    fn dense(&self, y: &[f64], h: f64, out: &mut [f64]) {
        let n = y.len();
        let [k1, _, k3, k4, k5, k6, k7] = &self.k;
        for i in 0..n {
            let difference = self.y_new[i] - y[i];
            let b_spline = h * k1[i] - difference;
            out[i] = y[i];
            out[n + i] = difference;
            out[2 * n + i] = b_spline;
            out[3 * n + i] = difference - h * k7[i] - b_spline;
            out[4 * n + i] =
                h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
        }
    }

    fn all_finite(&self) -> bool {
        self.k.iter().all(|k| k.iter().all(|v| v.is_finite()))
            && self.y_new.iter().all(|v| v.is_finite())
    }
}

/// The dense-output polynomial at fraction `theta` of a step.
fn interpolate(coefficients: &[f64], n: usize, theta: f64, out: &mut [f64]) {
    let theta1 = 1.0 - theta;
    for (i, value) in out.iter_mut().enumerate() {
        let r = |k: usize| coefficients[k * n + i];
        *value = r(0) + theta * (r(1) + theta1 * (r(2) + theta * (r(3) + theta1 * r(4))));
    }
}

/// Integrates `system` from (t0, y0) to `t_end` (> t0), stopping early at
/// a stop event or a failure.
pub fn integrate<S: System>(
    system: &mut S,
    t0: f64,
    t_end: f64,
    y0: &[f64],
    settings: &Settings,
) -> Run {
    let n = y0.len();
    let mut run = Run {
        trajectory: Trajectory::new(t0, y0),
        hits: Vec::new(),
        outcome: Outcome::Reached,
        stats: Stats::default(),
    };
    let mut stages = Stages::new(n);
    let mut y = y0.to_vec();
    let mut t = t0;
    let rtol = settings.relative_tolerance;
    let atol = &settings.absolute_tolerance;
    // The largest magnitude each component has reached: errors are scaled
    // by it, so a state that passes through zero keeps its accuracy.
    let mut peak: Vec<f64> = y0.iter().map(|v| v.abs()).collect();

    system.rates(t, &y, &mut stages.k[0]);
    run.stats.evaluations += 1;
    if stages.k[0].iter().any(|v| !v.is_finite()) {
        run.outcome = Outcome::Failed(Failure::NotFinite { t });
        return run;
    }

    let span = t_end - t0;
    // Events: a condition that holds at the start happens at the start (a
    // strict one that is only equal there does not hold).
    let mut event_values: Vec<f64> = (0..settings.events.len())
        .map(|index| system.event(index, t, &y))
        .collect();
    for (index, &value) in event_values.iter().enumerate() {
        let condition = settings.events[index];
        if condition.holds(value) {
            run.hits.push(EventHit {
                event: index,
                t,
                y: y.clone(),
            });
            if condition.kind == EventKind::Stop {
                run.outcome = Outcome::Stopped { event: index };
                return run;
            }
        }
    }

    if !(span.is_finite() && span > 0.0) {
        run.outcome = Outcome::Failed(Failure::StepTooSmall { t, step: span });
        return run;
    }
    let resolution = time_resolution(t0, span);
    // The error estimate is O(h⁵); per unit time it is O(h⁴), and the step
    // controller's exponent follows.
    let per_unit_time = settings.error_control == ErrorControl::PerUnitTime;
    let exponent = if per_unit_time { 0.25 } else { 0.2 };
    let mut h = initial_step(system, &mut stages, t, &y, span, rtol, atol, &mut run.stats);
    let mut coefficients = vec![0.0; COEFFICIENTS * n];
    let mut fac_old = 1e-4_f64;
    let mut last_rejected = false;
    let (mut stiff_count, mut non_stiff_count) = (0usize, 0usize);

    loop {
        if run.stats.accepted >= settings.max_steps {
            run.outcome = Outcome::Failed(Failure::TooManySteps {
                t,
                limit: settings.max_steps,
            });
            return run;
        }
        let last = t + 1.01 * h >= t_end;
        if last {
            h = t_end - t;
        }
        if h.is_nan() || h <= time_resolution(t, span) {
            run.outcome = Outcome::Failed(Failure::StepTooSmall { t, step: h });
            return run;
        }
        stages.step(system, t, &y, h);
        run.stats.evaluations += 6;
        if !stages.all_finite() {
            // Maybe the step went too far; retry much shorter, and give up
            // only when the step cannot shrink any more.
            if h <= 1e3 * f64::EPSILON * t.abs().max(span.abs()) {
                run.outcome = Outcome::Failed(Failure::NotFinite { t });
                return run;
            }
            run.stats.rejected += 1;
            h *= 0.1;
            last_rejected = true;
            continue;
        }
        let mut error = stages.error(&y, h, |i, old, new| {
            atol[i] + rtol * old.abs().max(new.abs()).max(peak[i])
        });
        if per_unit_time {
            error *= span / h;
        }
        let fac11 = libm::pow(error, exponent - BETA * 0.75);
        if error <= 1.0 {
            // Accepted.
            let mut fac = fac11 / libm::pow(fac_old, BETA);
            fac = (fac / SAFETY).clamp(1.0 / FAC_MAX, 1.0 / FAC_MIN);
            let mut h_new = h / fac;
            fac_old = error.max(1e-4);
            run.stats.accepted += 1;

            if run.stats.accepted.is_multiple_of(STIFFNESS_PERIOD) || stiff_count > 0 {
                let [.., k6, k7] = &stages.k;
                let numerator: f64 = k7.iter().zip(k6).map(|(a, b)| (a - b) * (a - b)).sum();
                let denominator: f64 = stages
                    .y_new
                    .iter()
                    .zip(&stages.y_stiff)
                    .map(|(a, b)| (a - b) * (a - b))
                    .sum();
                if denominator > 0.0 {
                    let h_lambda = h * (numerator / denominator).sqrt();
                    if h_lambda > STABILITY_LIMIT {
                        non_stiff_count = 0;
                        stiff_count += 1;
                        if stiff_count == STIFFNESS_CONFIRMATIONS {
                            run.outcome = Outcome::Failed(Failure::Stiff { t, step: h });
                            return run;
                        }
                    } else {
                        non_stiff_count += 1;
                        if non_stiff_count == 6 {
                            stiff_count = 0;
                        }
                    }
                }
            }

            stages.dense(&y, h, &mut coefficients);
            if !settings.events.is_empty()
                && let Some(stop) = locate_events(
                    system,
                    settings,
                    &mut event_values,
                    &coefficients,
                    n,
                    (t, h),
                    (t0, resolution),
                    &stages.y_new,
                    &mut run.hits,
                )
            {
                // Retake the step exactly to the stop, for a fifth-order end state.
                let (event, t_stop) = stop;
                let h_stop = t_stop - t;
                if h_stop > 0.0 {
                    stages.step(system, t, &y, h_stop);
                    run.stats.evaluations += 6;
                    stages.dense(&y, h_stop, &mut coefficients);
                    run.trajectory.push(t_stop, &coefficients, &stages.y_new);
                }
                if let Some(hit) = run.hits.last_mut() {
                    hit.y.copy_from_slice(run.trajectory.last());
                }
                run.outcome = Outcome::Stopped { event };
                return run;
            }
            run.trajectory.push(t + h, &coefficients, &stages.y_new);

            // First same as last: the last stage is the next step's first.
            let [k1, .., k7] = &mut stages.k;
            std::mem::swap(k1, k7);
            std::mem::swap(&mut y, &mut stages.y_new);
            for (p, v) in peak.iter_mut().zip(&y) {
                *p = p.max(v.abs());
            }
            t = if last { t_end } else { t + h };
            if last {
                return run;
            }
            if last_rejected {
                h_new = h_new.min(h);
            }
            last_rejected = false;
            h = h_new;
        } else {
            run.stats.rejected += 1;
            last_rejected = true;
            h /= (fac11 / SAFETY).min(1.0 / FAC_MIN);
        }
    }
}

/// Looks for events inside the step (t, t + h) on its dense output, records
/// every occurrence up to the first stop, and returns that stop (its event
/// and time) if there is one. Each event's function is sampled at a quarter,
/// half, three quarters and the end of the step, so an event that happens
/// and clears again within one step is still seen unless it is shorter
/// than a quarter step; each change from not holding to holding (with the
/// condition's own strictness, [`Condition::holds`]) is then located by
/// root-finding on the dense output. A condition that becomes true within
/// `resolution` of the run's start `t0` (a strict one that was equal there
/// and holds at once after) happens at the start itself.
#[allow(clippy::too_many_arguments)]
fn locate_events<S: System>(
    system: &mut S,
    settings: &Settings,
    event_values: &mut [f64],
    coefficients: &[f64],
    n: usize,
    (t, h): (f64, f64),
    (t0, resolution): (f64, f64),
    y_end: &[f64],
    hits: &mut Vec<EventHit>,
) -> Option<(usize, f64)> {
    let mut state = vec![0.0; n];
    let mut found: Vec<(f64, usize)> = Vec::new();
    let value_at = |system: &mut S, index: usize, theta: f64, state: &mut [f64]| {
        if theta >= 1.0 {
            system.event(index, t + h, y_end)
        } else {
            interpolate(coefficients, n, theta, state);
            system.event(index, t + theta * h, state)
        }
    };
    for (index, previous) in event_values.iter_mut().enumerate() {
        let condition = settings.events[index];
        let mut theta_before = 0.0;
        let mut value_before = *previous;
        for quarter in 1..=4 {
            let theta = f64::from(quarter) * 0.25;
            let value = value_at(system, index, theta, &mut state);
            if !value_before.is_nan() && !condition.holds(value_before) && condition.holds(value) {
                let theta_hit = find_crossing(
                    |theta| value_at(system, index, theta, &mut state),
                    (theta_before, value_before),
                    (theta, value),
                    |value| condition.holds(value),
                    STEP_FRACTION_RESOLUTION,
                );
                let t_hit = t + theta_hit * h;
                found.push((if t_hit - t0 <= resolution { t0 } else { t_hit }, index));
                if condition.kind == EventKind::Stop {
                    break;
                }
            }
            theta_before = theta;
            value_before = value;
        }
        *previous = value_before;
    }
    found.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    for (t_hit, index) in found {
        let theta = ((t_hit - t) / h).clamp(0.0, 1.0);
        interpolate(coefficients, n, theta, &mut state);
        hits.push(EventHit {
            event: index,
            t: t_hit,
            y: state.clone(),
        });
        if settings.events[index].kind == EventKind::Stop {
            return Some((index, t_hit));
        }
    }
    None
}

/// How finely an event is located inside its step, as a fraction of the
/// step: a few units in the last place of the step's length.
const STEP_FRACTION_RESOLUTION: f64 = 4.0 * f64::EPSILON;

/// The shortest time the run can resolve near `t` in a run of length
/// `span`: a step shorter than this fails (`StepTooSmall`), and an event
/// found this close to the start happens at the start.
fn time_resolution(t: f64, span: f64) -> f64 {
    10.0 * f64::EPSILON * t.abs().max(span.abs())
}

/// A first step size from the rates at the start (Hairer's HINIT): small
/// enough that an explicit Euler step's error would be about 1 % of the
/// tolerance, and consistent with the second derivative's size.
#[allow(clippy::too_many_arguments)]
fn initial_step<S: System>(
    system: &mut S,
    stages: &mut Stages,
    t: f64,
    y: &[f64],
    span: f64,
    rtol: f64,
    atol: &[f64],
    stats: &mut Stats,
) -> f64 {
    let n = y.len().max(1) as f64;
    let scale = |i: usize| atol[i] + rtol * y[i].abs();
    let f0 = &stages.k[0];
    let norm = |values: &[f64]| {
        (values
            .iter()
            .enumerate()
            .map(|(i, v)| (v / scale(i)).powi(2))
            .sum::<f64>()
            / n)
            .sqrt()
    };
    let (d_rates, d_state) = (norm(f0), norm(y));
    let mut h = if d_rates <= 1e-10 || d_state <= 1e-10 {
        1e-6 * span
    } else {
        0.01 * d_state / d_rates
    };
    h = h.min(span);
    for i in 0..y.len() {
        stages.scratch[i] = y[i] + h * f0[i];
    }
    let Stages { k, scratch, .. } = stages;
    let [k1, k2, ..] = k;
    system.rates(t + h, scratch, k2);
    stats.evaluations += 1;
    let second: Vec<f64> = k2.iter().zip(k1.iter()).map(|(b, a)| (b - a) / h).collect();
    let d_second = norm(&second);
    let largest = d_second.max(d_rates);
    let h_second = if largest <= 1e-15 || !largest.is_finite() {
        (1e-6 * span).max(h * 1e-3)
    } else {
        libm::pow(0.01 / largest, 0.2)
    };
    (100.0 * h).min(h_second).min(span)
}

#[cfg(test)]
// The tests' reference values use std's functions, independent of libm.
#[allow(clippy::disallowed_methods)]
mod tests {
    use super::*;

    /// y′ = −y (closed form e^−t), with one event: y falls to `level`.
    struct Decay {
        level: f64,
    }

    impl System for Decay {
        fn rates(&mut self, _t: f64, y: &[f64], rates: &mut [f64]) {
            rates[0] = -y[0];
        }
        fn event(&mut self, _index: usize, _t: f64, y: &[f64]) -> f64 {
            self.level - y[0]
        }
    }

    /// x″ = −ω² x as x′ = v, v′ = −ω² x (closed form x = cos ωt for x(0) = 1).
    struct Oscillator {
        omega: f64,
    }

    impl System for Oscillator {
        fn rates(&mut self, _t: f64, y: &[f64], rates: &mut [f64]) {
            rates[0] = y[1];
            rates[1] = -self.omega * self.omega * y[0];
        }
        fn event(&mut self, _index: usize, _t: f64, y: &[f64]) -> f64 {
            -y[0] // x reaches zero going down
        }
    }

    fn settings(rtol: f64, n: usize, events: Vec<EventKind>) -> Settings {
        Settings {
            relative_tolerance: rtol,
            absolute_tolerance: vec![rtol * 1e-3; n],
            max_steps: 1_000_000,
            events: events
                .into_iter()
                .map(|kind| Condition {
                    kind,
                    strict: false,
                })
                .collect(),
            error_control: ErrorControl::PerStep,
        }
    }

    #[test]
    fn exponential_decay_is_within_tolerance_at_the_end_and_between_steps() {
        let run = integrate(
            &mut Decay { level: -1.0 },
            0.0,
            5.0,
            &[1.0],
            &settings(1e-8, 1, vec![]),
        );
        assert_eq!(run.outcome, Outcome::Reached);
        assert_eq!(run.trajectory.end(), 5.0);
        // Closed form e^−t.
        assert!((run.trajectory.last()[0] - (-5f64).exp()).abs() < 1e-8 * 1.0);
        let mut state = [0.0];
        for i in 0..=100 {
            let t = 0.05 * f64::from(i);
            run.trajectory.state_at(t, &mut state);
            assert!(
                (state[0] - (-t).exp()).abs() < 1e-8,
                "t = {t}: {}",
                state[0]
            );
        }
        assert!(run.stats.accepted > 5 && run.stats.evaluations > 6 * run.stats.accepted);
    }

    #[test]
    fn a_stop_event_is_located_inside_its_step() {
        // e^−t falls to 0.3 at t = ln(1/0.3) (closed form).
        let run = integrate(
            &mut Decay { level: 0.3 },
            0.0,
            10.0,
            &[1.0],
            &settings(1e-9, 1, vec![EventKind::Stop]),
        );
        assert_eq!(run.outcome, Outcome::Stopped { event: 0 });
        let expected = (1.0f64 / 0.3).ln();
        assert!(
            (run.trajectory.end() - expected).abs() < 1e-9,
            "{}",
            run.trajectory.end()
        );
        assert!((run.trajectory.last()[0] - 0.3).abs() < 1e-9);
        assert_eq!(run.hits.len(), 1);
        assert_eq!(run.hits[0].t, run.trajectory.end());
    }

    #[test]
    fn recorded_events_repeat_and_the_run_goes_on() {
        // cos(2t) reaches zero going down at t = π/4 + kπ (closed form).
        let run = integrate(
            &mut Oscillator { omega: 2.0 },
            0.0,
            10.0,
            &[1.0, 0.0],
            &settings(1e-10, 2, vec![EventKind::Record]),
        );
        assert_eq!(run.outcome, Outcome::Reached);
        let times: Vec<f64> = run.hits.iter().map(|hit| hit.t).collect();
        assert_eq!(times.len(), 3, "{times:?}");
        for (k, t) in times.iter().enumerate() {
            let expected = std::f64::consts::FRAC_PI_4 + k as f64 * std::f64::consts::PI;
            assert!((t - expected).abs() < 1e-9, "{t} vs {expected}");
        }
    }

    #[test]
    fn a_condition_that_holds_at_the_start_happens_at_the_start() {
        let run = integrate(
            &mut Decay { level: 2.0 },
            0.0,
            1.0,
            &[1.0],
            &settings(1e-6, 1, vec![EventKind::Stop]),
        );
        assert_eq!(run.outcome, Outcome::Stopped { event: 0 });
        assert_eq!(run.trajectory.n_steps(), 0);
        assert_eq!(run.hits[0].t, 0.0);
    }

    #[test]
    fn a_strict_condition_that_is_only_equal_at_the_start_does_not_hold_there() {
        // x = sin 2t from x = 0 going up: −x is zero at the start, negative
        // until π/2, then positive (closed form). "−x > 0" first holds after
        // π/2; "−x ≥ 0" holds at the start too.
        let hits = |strict: bool, kind: EventKind| {
            let mut settings = settings(1e-10, 2, vec![]);
            settings.events = vec![Condition { kind, strict }];
            integrate(
                &mut Oscillator { omega: 2.0 },
                0.0,
                2.0,
                &[0.0, 2.0],
                &settings,
            )
        };
        let strict = hits(true, EventKind::Record);
        let times: Vec<f64> = strict.hits.iter().map(|hit| hit.t).collect();
        assert_eq!(times.len(), 1, "{times:?}");
        assert!(
            (times[0] - std::f64::consts::FRAC_PI_2).abs() < 1e-9,
            "{times:?}"
        );
        let inclusive = hits(false, EventKind::Record);
        let times: Vec<f64> = inclusive.hits.iter().map(|hit| hit.t).collect();
        assert_eq!(times.len(), 2, "{times:?}");
        assert_eq!(times[0], 0.0);
        // As a stop: the strict one runs to π/2, the other stops at once.
        let stopped = hits(true, EventKind::Stop);
        assert!((stopped.trajectory.end() - std::f64::consts::FRAC_PI_2).abs() < 1e-9);
        assert_eq!(hits(false, EventKind::Stop).trajectory.n_steps(), 0);
    }

    #[test]
    fn a_strict_condition_that_holds_at_once_after_the_start_happens_at_the_start() {
        // e^−t from 1: "1 − y > 0" is false at t = 0 and true at every t > 0.
        let mut settings = settings(1e-8, 1, vec![]);
        settings.events = vec![Condition {
            kind: EventKind::Stop,
            strict: true,
        }];
        let run = integrate(&mut Decay { level: 1.0 }, 0.0, 1.0, &[1.0], &settings);
        assert_eq!(run.outcome, Outcome::Stopped { event: 0 });
        assert_eq!(run.trajectory.n_steps(), 0);
        assert_eq!(run.hits[0].t, 0.0);
    }

    #[test]
    fn the_peak_of_an_oscillation_is_found_between_steps() {
        let run = integrate(
            &mut Oscillator { omega: 3.0 },
            0.0,
            2.0,
            &[0.0, 3.0],
            &settings(1e-10, 2, vec![]),
        );
        // x = sin 3t peaks at 1 when t = π/6 (closed form).
        let mut x = |_: f64, y: &[f64]| y[0];
        let (at, peak) = run.trajectory.extremum(&mut x, true, 2e-10);
        assert!((peak - 1.0).abs() < 1e-9, "{peak}");
        assert!((at - std::f64::consts::PI / 6.0).abs() < 1e-9, "{at}");
        let (at, low) = run.trajectory.extremum(&mut x, false, 2e-10);
        assert!((low + 1.0).abs() < 1e-9 && (at - std::f64::consts::PI / 2.0).abs() < 1e-9);
        // The dense output's derivative is the rate: ẋ = 3 cos 3t.
        let mut rates = [0.0; 2];
        for t in [0.0, 0.3, 1.1, 2.0] {
            run.trajectory.rate_at(t, &mut rates);
            assert!(
                (rates[0] - 3.0 * (3.0 * t).cos()).abs() < 1e-8,
                "{t}: {rates:?}"
            );
        }
    }

    #[test]
    fn per_unit_time_control_bounds_the_accumulated_error() {
        // 200 periods of cos 2t: the error at the end against the closed
        // form, per step versus per unit time, at the same tolerance.
        let span = 200.0 * std::f64::consts::PI;
        let end_error = |control: ErrorControl| {
            let mut settings = settings(1e-6, 2, vec![]);
            settings.error_control = control;
            let run = integrate(
                &mut Oscillator { omega: 2.0 },
                0.0,
                span,
                &[1.0, 0.0],
                &settings,
            );
            assert_eq!(run.outcome, Outcome::Reached);
            let [x, v] = [run.trajectory.last()[0], run.trajectory.last()[1]];
            // x = cos 2t, v = −2 sin 2t; at t = 200π: x = 1, v = 0.
            ((x - 1.0).powi(2) + (v / 2.0).powi(2)).sqrt()
        };
        let per_step = end_error(ErrorControl::PerStep);
        let per_unit_time = end_error(ErrorControl::PerUnitTime);
        assert!(per_unit_time <= 1e-6, "{per_unit_time:e}");
        assert!(per_step > 10.0 * 1e-6, "per step accumulates: {per_step:e}");
    }

    #[test]
    fn a_range_that_cannot_be_represented_fails_at_once() {
        let run = integrate(
            &mut Decay { level: -1.0 },
            -1e308,
            1e308,
            &[1.0],
            &settings(1e-6, 1, vec![]),
        );
        assert!(matches!(
            run.outcome,
            Outcome::Failed(Failure::StepTooSmall { .. })
        ));
        assert_eq!(run.stats.accepted, 0);
    }

    /// y′ = −10⁶ (y − cos t): the solution is smooth, but an explicit
    /// method's step is held at about 3.3 µs by stability (a classic stiff test).
    struct Stiff;

    impl System for Stiff {
        fn rates(&mut self, t: f64, y: &[f64], rates: &mut [f64]) {
            rates[0] = -1e6 * (y[0] - t.cos());
        }
        fn event(&mut self, _index: usize, _t: f64, _y: &[f64]) -> f64 {
            -1.0
        }
    }

    #[test]
    fn a_stiff_problem_is_reported_instead_of_crawling() {
        let run = integrate(&mut Stiff, 0.0, 10.0, &[1.0], &settings(1e-6, 1, vec![]));
        assert!(
            matches!(run.outcome, Outcome::Failed(Failure::Stiff { .. })),
            "{:?}",
            run.outcome
        );
        assert!(run.stats.accepted < 5000, "{}", run.stats.accepted);
    }

    /// y′ = y² from y(0) = 1 blows up at t = 1 (closed form 1/(1 − t)).
    struct Blowup;

    impl System for Blowup {
        fn rates(&mut self, _t: f64, y: &[f64], rates: &mut [f64]) {
            rates[0] = y[0] * y[0];
        }
        fn event(&mut self, _index: usize, _t: f64, _y: &[f64]) -> f64 {
            -1.0
        }
    }

    #[test]
    fn a_blow_up_fails_near_its_time_and_the_step_limit_is_kept() {
        let run = integrate(&mut Blowup, 0.0, 2.0, &[1.0], &settings(1e-6, 1, vec![]));
        match run.outcome {
            Outcome::Failed(Failure::StepTooSmall { t, .. } | Failure::NotFinite { t }) => {
                assert!((t - 1.0).abs() < 1e-3, "{t}")
            }
            other => panic!("expected a failure near t = 1, got {other:?}"),
        }
        let mut few = settings(1e-6, 2, vec![]);
        few.max_steps = 10;
        let run = integrate(
            &mut Oscillator { omega: 1.0 },
            0.0,
            100.0,
            &[1.0, 0.0],
            &few,
        );
        assert!(matches!(
            run.outcome,
            Outcome::Failed(Failure::TooManySteps { .. })
        ));
        assert_eq!(run.stats.accepted, 10);
    }
}
