//! The run as a continuous function of time: one Dormand–Prince dense-output
//! polynomial per accepted step (Shampine's fourth-order continuous
//! extension), so a state can be read at any time, not only at step ends.

use super::roots::golden_section;

/// Coefficients of one step's polynomial per state component.
pub(super) const COEFFICIENTS: usize = 5;

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

    /// The largest (or smallest) value of `f(t, state)` over the run and
    /// when it happens. `f` is sampled at every step boundary and at a
    /// quarter, half and three quarters of every step, then the best sample
    /// is refined by golden-section search on the dense output between its
    /// neighbouring samples.
    pub fn extremum(&self, mut f: impl FnMut(f64, &[f64]) -> f64, maximize: bool) -> (f64, f64) {
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
            let sample = f(t, &state);
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
        let (at, refined) = golden_section(
            |t| {
                self.state_at(t, &mut state);
                f(t, &state)
            },
            left,
            right,
            maximize,
        );
        if better(refined, value) {
            (at, refined)
        } else {
            (best_t, value)
        }
    }
}
