//! Solve blocks: a 50-unknown coupled linear system (a train of 50 carts)
//! and a 10-unknown nonlinear one (a chain of hardening springs), each parsed,
//! solved and evaluated as a whole sheet.
//!
//! Run with `cargo bench --bench solve`; figures are recorded in docs/performance.md.

use criterion::{Criterion, criterion_group, criterion_main};

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// A tug pulling 50 carts: unknowns a and the 49 couplings.
fn cart_train(n_carts: usize) -> String {
    let mut sheet = String::from("F = 9 kN\nC = 0.015\n");
    for i in 1..=n_carts {
        sheet.push_str(&format!("m{i} = {} kg\n", 100 + 7 * (i % 5)));
    }
    let unknowns: Vec<String> = std::iter::once("a [m/s^2] ~ 0.1".to_string())
        .chain((1..n_carts).map(|i| format!("T{i} [N] ~ 100")))
        .collect();
    sheet.push_str(&format!("solve {}:\n", unknowns.join(", ")));
    for i in 1..=n_carts {
        let pulled = if i == 1 {
            "F".to_string()
        } else {
            format!("T{}", i - 1)
        };
        let trailing = if i == n_carts {
            String::new()
        } else {
            format!(" - T{i}")
        };
        sheet.push_str(&format!(
            "  {pulled}{trailing} - C * m{i} * g0 = m{i} * a\n"
        ));
    }
    sheet.push_str("end\n");
    sheet
}

/// Ten nodes between two walls, joined by hardening springs k d + k3 d³.
fn spring_chain(n_nodes: usize) -> String {
    let mut sheet = String::from("k = 2000 N/m\nk3 = 5e6 N/m^3\n");
    for i in 1..=n_nodes {
        sheet.push_str(&format!("P{i} = {} N\n", 50 + 10 * i));
    }
    let unknowns: Vec<String> = (1..=n_nodes).map(|i| format!("x{i} [mm] ~ 5")).collect();
    sheet.push_str(&format!("solve {}:\n", unknowns.join(", ")));
    let stretch = |i: usize| match (i, i == n_nodes + 1) {
        (1, _) => "x1".to_string(),
        (_, true) => format!("(0 m - x{})", i - 1),
        _ => format!("(x{i} - x{})", i - 1),
    };
    for i in 1..=n_nodes {
        let (left, right) = (stretch(i), stretch(i + 1));
        sheet.push_str(&format!(
            "  k * {right} + k3 * {right}^3 - k * {left} - k3 * {left}^3 + P{i} = 0 N\n"
        ));
    }
    sheet.push_str("end\n");
    sheet
}

fn solve(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut group = c.benchmark_group("solve");
    for (name, sheet) in [
        ("linear_50_unknowns", cart_train(50)),
        ("nonlinear_10_unknowns", spring_chain(10)),
    ] {
        let evaluated = heftsheet::blocks::evaluate_source(&sheet);
        assert!(
            evaluated.diagnostics.is_empty(),
            "{name}: {:?}",
            evaluated.diagnostics
        );
        assert_eq!(
            evaluated.solves[0].status,
            heftsheet::eval::SolveStatus::Solved
        );
        group.bench_function(name, |b| {
            b.iter(|| heftsheet::blocks::evaluate_source(&sheet))
        });
    }
    group.finish();
}

criterion_group!(benches, solve);
criterion_main!(benches);
