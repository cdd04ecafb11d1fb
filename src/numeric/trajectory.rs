//! The run as a continuous function of time: one Dormand–Prince dense-output
//! polynomial per accepted step (Shampine's fourth-order continuous
//! extension), so a state can be read at any time, not only at step ends.

use super::roots::{find_crossing, golden_section};

/// A scalar function of a run's time and state whose largest or smallest
/// value is sought ([`Trajectory::extremum`]).
pub trait Objective {
    /// Its value at (t, y); NaN where it is undefined.
    fn value(&mut self, t: f64, y: &[f64]) -> f64;
    /// Its exact rate of change at (t, y) when the time advances at one and
    /// the state at `rates` (the chain rule through the function), or
    /// `None` when only values are known; the trajectory then takes
    /// differences of values instead.
    fn slope(&mut self, t: f64, y: &[f64], rates: &[f64]) -> Option<f64>;
}

/// A function of (t, y) alone is an objective known by its values.
impl<F: FnMut(f64, &[f64]) -> f64> Objective for F {
    fn value(&mut self, t: f64, y: &[f64]) -> f64 {
        self(t, y)
    }
    fn slope(&mut self, _t: f64, _y: &[f64], _rates: &[f64]) -> Option<f64> {
        None
    }
}

/// Coefficients of one step's polynomial per state component.
pub const COEFFICIENTS: usize = 5;

/// A run's states over time: step boundaries and, per step, the dense-output
/// coefficients of every component.
#[derive(Clone, Debug, PartialEq)]
pub struct Trajectory {
    n_components: usize,
    /// Step boundaries: `times[i]` to `times[i + 1]` is step `i`.
    times: Vec<f64>,
    /// `COEFFICIENTS * n_components` numbers per step: r1 (the state at the
    /// step's start), r2 … r5, each a block of `n_components`.
    coefficients: Vec<f64>,
    /// The state at the last time.
    last: Vec<f64>,
}

impl Trajectory {
    /// A trajectory that starts at `t0` with state `y0` and has no steps yet.
    pub(super) fn new(t0: f64, y0: &[f64]) -> Self {
        Trajectory {
            n_components: y0.len(),
            times: vec![t0],
            coefficients: Vec::new(),
            last: y0.to_vec(),
        }
    }

    /// Appends a step ending at `t_end` with state `y_end`; `coefficients`
    /// holds r1 … r5 for every component.
    pub(super) fn push(&mut self, t_end: f64, coefficients: &[f64], y_end: &[f64]) {
        self.times.push(t_end);
        self.coefficients.extend_from_slice(coefficients);
        self.last.copy_from_slice(y_end);
    }

    /// Number of state components.
    pub fn n_components(&self) -> usize {
        self.n_components
    }

    /// Number of accepted steps.
    pub fn n_steps(&self) -> usize {
        self.times.len() - 1
    }

    /// Where the run starts.
    pub fn start(&self) -> f64 {
        self.times[0]
    }

    /// Where the run ends (its last step's end).
    pub fn end(&self) -> f64 {
        self.times[self.times.len() - 1]
    }

    /// The state at the end.
    pub fn last(&self) -> &[f64] {
        &self.last
    }

    /// Every step boundary, from the start to the end.
    pub fn times(&self) -> &[f64] {
        &self.times
    }

    /// The state at step boundary `index` (0 is the start, `n_steps()` the end).
    pub fn state_at_boundary(&self, index: usize) -> &[f64] {
        if index >= self.n_steps() {
            return &self.last;
        }
        let start = index * COEFFICIENTS * self.n_components;
        &self.coefficients[start..start + self.n_components]
    }

    /// Writes the state at time `t` into `out`; times outside the run are
    /// clamped to its ends.
    pub fn state_at(&self, t: f64, out: &mut [f64]) {
        let n_steps = self.n_steps();
        if n_steps == 0 || t >= self.end() {
            out.copy_from_slice(&self.last);
            return;
        }
        if t <= self.start() {
            out.copy_from_slice(self.state_at_boundary(0));
            return;
        }
        // The step whose interval holds t.
        let step = self.times.partition_point(|&boundary| boundary <= t) - 1;
        let step = step.min(n_steps - 1);
        let (t0, t1) = (self.times[step], self.times[step + 1]);
        self.interpolate(step, (t - t0) / (t1 - t0), out);
    }

    /// Writes the rate of change of the state at time `t` into `out`: the
    /// derivative of the dense output (continuous across steps, equal to the
    /// rates at every step boundary); clamped to the run's ends like
    /// [`Trajectory::state_at`].
    pub fn rate_at(&self, t: f64, out: &mut [f64]) {
        let n_steps = self.n_steps();
        if n_steps == 0 {
            out.fill(0.0);
            return;
        }
        let (step, theta) = if t >= self.end() {
            (n_steps - 1, 1.0)
        } else if t <= self.start() {
            (0, 0.0)
        } else {
            let step = (self.times.partition_point(|&boundary| boundary <= t) - 1).min(n_steps - 1);
            let (t0, t1) = (self.times[step], self.times[step + 1]);
            (step, (t - t0) / (t1 - t0))
        };
        let length = self.times[step + 1] - self.times[step];
        let n = self.n_components;
        let block = &self.coefficients[step * COEFFICIENTS * n..(step + 1) * COEFFICIENTS * n];
        let theta1 = 1.0 - theta;
        for (i, rate) in out.iter_mut().enumerate() {
            let r = |k: usize| block[k * n + i];
            // y = r0 + θ A, A = r1 + (1−θ) B, B = r2 + θ C, C = r3 + (1−θ) r4.
            let c = r(3) + theta1 * r(4);
            let b = r(2) + theta * c;
            let a = r(1) + theta1 * b;
            let d_c = -r(4);
            let d_b = c + theta * d_c;
            let d_a = -b + theta1 * d_b;
            *rate = (a + theta * d_a) / length;
        }
    }

    /// The length of the step that holds `t` (the last step past the end).
    fn step_length_at(&self, t: f64) -> f64 {
        let n_steps = self.n_steps();
        if n_steps == 0 {
            return 0.0;
        }
        let step = self
            .times
            .partition_point(|&boundary| boundary <= t)
            .saturating_sub(1)
            .min(n_steps - 1);
        self.times[step + 1] - self.times[step]
    }

    /// The dense-output polynomial of `step` at fraction `theta` of it.
    fn interpolate(&self, step: usize, theta: f64, out: &mut [f64]) {
        let n = self.n_components;
        let block = &self.coefficients[step * COEFFICIENTS * n..(step + 1) * COEFFICIENTS * n];
        let theta1 = 1.0 - theta;
        for (i, value) in out.iter_mut().enumerate() {
            let r = |k: usize| block[k * n + i];
            *value = r(0) + theta * (r(1) + theta1 * (r(2) + theta * (r(3) + theta1 * r(4))));
        }
    }

    /// The largest (or smallest) value of `objective` over the run and
    /// when it happens. It is sampled at every step boundary and at a
    /// quarter, half and three quarters of every step; between the best
    /// sample's neighbours the time is then found where the objective's
    /// rate of change along the run changes sign (its exact slope, or a
    /// fourth-order difference of values), to the last digits of the time.
    /// Where the slope does not change sign there (a peak at an end of the
    /// run, or a kink), a golden-section search on the values narrows the
    /// bracket to `time_tolerance`.
    pub fn extremum(
        &self,
        objective: &mut impl Objective,
        maximize: bool,
        time_tolerance: f64,
    ) -> (f64, f64) {
        let mut state = vec![0.0; self.n_components];
        let better = |candidate: f64, best: f64| {
            !candidate.is_nan()
                && (best.is_nan()
                    || if maximize {
                        candidate > best
                    } else {
                        candidate < best
                    })
        };
        // Sample times in order; remember the best one's neighbours.
        let times = &self.times;
        let samples = (0..self.n_steps())
            .flat_map(|step| {
                let (t0, t1) = (times[step], times[step + 1]);
                (0..4).map(move |quarter| t0 + (t1 - t0) * f64::from(quarter) * 0.25)
            })
            .chain(std::iter::once(self.end()));
        let (mut value, mut best_t) = (f64::NAN, self.start());
        let (mut left, mut right, mut previous) = (best_t, best_t, best_t);
        let mut right_pending = false;
        for t in samples {
            self.state_at(t, &mut state);
            let sample = objective.value(t, &state);
            if right_pending {
                right = t;
                right_pending = false;
            }
            if better(sample, value) {
                (value, best_t, left, right) = (sample, t, previous, t);
                right_pending = true;
            }
            previous = t;
        }
        if left == right {
            return (best_t, value);
        }
        // Where the slope turns (falls through zero at a largest value,
        // rises through it at a smallest); a largest value's slope is
        // negated so that both look for a change from negative to not.
        let sign = if maximize { -1.0 } else { 1.0 };
        let mut turning = |t: f64| sign * self.slope_at(objective, t);
        let (at_left, at_right) = (turning(left), turning(right));
        if at_left < 0.0 && at_right >= 0.0 {
            let at = find_crossing(
                &mut turning,
                (left, at_left),
                (right, at_right),
                |slope| slope >= 0.0,
                0.0,
            );
            self.state_at(at, &mut state);
            let refined = objective.value(at, &state);
            // The values near a smooth peak differ only by their rounding,
            // so the turning point stands unless it is clearly worse.
            let rounding = 8.0 * f64::EPSILON * value.abs();
            let clearly_worse = refined.is_nan()
                || if maximize {
                    refined < value - rounding
                } else {
                    refined > value + rounding
                };
            if !clearly_worse {
                return (at, refined);
            }
        }
        let (at, refined) = golden_section(
            |t| {
                self.state_at(t, &mut state);
                objective.value(t, &state)
            },
            left,
            right,
            maximize,
            time_tolerance,
        );
        if better(refined, value) {
            (at, refined)
        } else {
            (best_t, value)
        }
    }

    /// The objective's rate of change along the run at `t`: exact if the
    /// objective gives it; otherwise from values on the line through
    /// (t, y(t)) along (1, y′(t)), a central difference with Richardson's
    /// extrapolation (error of fourth order in the spacing, a sixty-fourth
    /// of the step). Off the run's path only along that line, so the
    /// dense output's joins between steps do not spoil the difference.
    fn slope_at(&self, objective: &mut impl Objective, t: f64) -> f64 {
        let n = self.n_components;
        let (mut state, mut rates) = (vec![0.0; n], vec![0.0; n]);
        self.state_at(t, &mut state);
        self.rate_at(t, &mut rates);
        if let Some(slope) = objective.slope(t, &state, &rates) {
            return slope;
        }
        let mut moved = vec![0.0; n];
        let mut difference = |spacing: f64| {
            let mut at = |offset: f64| {
                for ((slot, y), rate) in moved.iter_mut().zip(&state).zip(&rates) {
                    *slot = y + offset * rate;
                }
                objective.value(t + offset, &moved)
            };
            (at(spacing) - at(-spacing)) / (2.0 * spacing)
        };
        let spacing = self.step_length_at(t) / 64.0;
        if spacing <= 0.0 {
            return f64::NAN;
        }
        let (coarse, fine) = (difference(spacing), difference(spacing / 2.0));
        (4.0 * fine - coarse) / 3.0
    }
}
