//! Simulate blocks: integrator steps per second on a two-state problem (the
//! bare Dormand–Prince core, and a whole sheet whose rates run as compiled
//! programs), and a whole sheet integrating 10,000 periods of an undamped
//! oscillator.
//!
//! Run with `cargo bench --bench simulate`; figures are recorded in docs/performance.md.

use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use heftsheet::numeric::{ErrorControl, Settings, System, integrate};

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// x″ = −ω² x as two first-order equations, hand-written.
struct Oscillator {
    omega_squared: f64,
}

impl System for Oscillator {
    fn rates(&mut self, _t: f64, y: &[f64], rates: &mut [f64]) {
        rates[0] = y[1];
        rates[1] = -self.omega_squared * y[0];
    }
    fn event(&mut self, _index: usize, _t: f64, _y: &[f64]) -> f64 {
        -1.0
    }
}

/// The test fixture of 4 kg on 1600 N/m (ω = 20 rad/s, period π/10 s) for
/// `periods` periods at a relative tolerance.
fn oscillator_sheet(periods: u32, tolerance: &str) -> String {
    format!(
        "m = 4 kg\nk = 1600 N/m\n\
         simulate t from 0 s to {:.15} s:\n  x' = v\n  v' = -k / m * x\n  x(0) = 0.02 m\n  v(0) = 0.5 m/s\n  tolerance {tolerance}\nend\n\
         E0 [J] = (k * x^2 / 2 + m * v^2 / 2) at start\nE1 [J] = (k * x^2 / 2 + m * v^2 / 2) at end\n",
        f64::from(periods) * std::f64::consts::PI / 10.0
    )
}

/// Evaluates a sheet once, checks it ran clean, and returns its step count.
fn steps_of(sheet: &str, energy_tolerance: f64) -> u64 {
    let evaluated = heftsheet::blocks::evaluate_source(sheet);
    assert!(
        evaluated.diagnostics.is_empty(),
        "{:?}",
        evaluated.diagnostics
    );
    let energy = |name: &str| {
        evaluated
            .cell(name)
            .and_then(|cell| cell.value)
            .map_or(f64::NAN, |q| q.si)
    };
    let drift = (energy("E1") / energy("E0") - 1.0).abs();
    assert!(drift <= energy_tolerance, "energy drift {drift:e}");
    evaluated.runs[0].stats.accepted as u64
}

fn simulate(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut group = c.benchmark_group("simulate");
    group.measurement_time(Duration::from_secs(10));

    // The bare core: 1000 periods, error per step 1e-6.
    let settings = Settings {
        relative_tolerance: 1e-6,
        absolute_tolerance: vec![1e-9, 1e-9],
        max_steps: 10_000_000,
        events: Vec::new(),
        error_control: ErrorControl::PerStep,
    };
    let span = 1000.0 * std::f64::consts::PI / 10.0;
    let run = || {
        integrate(
            &mut Oscillator {
                omega_squared: 400.0,
            },
            0.0,
            span,
            &[0.02, 0.5],
            &settings,
        )
    };
    let core_steps = run().stats.accepted as u64;
    group.throughput(Throughput::Elements(core_steps));
    group.bench_function("core_two_state_1000_periods", |b| b.iter(run));

    // A whole sheet: parse, check, compile, integrate, table, plot, queries.
    let sheet = oscillator_sheet(1000, "1e-6");
    group.throughput(Throughput::Elements(steps_of(&sheet, 1e-6)));
    group.bench_function("sheet_two_state_1000_periods", |b| {
        b.iter(|| heftsheet::blocks::evaluate_source(&sheet))
    });

    group.sample_size(10);
    let sheet = oscillator_sheet(10_000, "1e-4");
    group.throughput(Throughput::Elements(steps_of(&sheet, 1e-4)));
    group.bench_function("sheet_oscillator_10000_periods", |b| {
        b.iter(|| heftsheet::blocks::evaluate_source(&sheet))
    });
    group.finish();
}

criterion_group!(benches, simulate);
criterion_main!(benches);
