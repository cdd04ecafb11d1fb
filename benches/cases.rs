//! Load cases and tolerances: a 10,000-cell sheet with ± 3 % on five inputs
//! and five load cases, against the same sheet plain.
//!
//! Run with `cargo bench --bench cases`; figures are recorded in docs/performance.md.

use criterion::{Criterion, criterion_group, criterion_main};

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

#[path = "generated.rs"]
#[allow(dead_code)]
mod generated;

fn cases(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let plain = generated::generated_sheet(10_000);
    let with_cases = generated::generated_sheet_with_cases(10_000, 5);
    let evaluated = heftsheet::blocks::evaluate_source(&with_cases);
    assert!(
        evaluated.diagnostics.is_empty(),
        "{:?}",
        evaluated.diagnostics.first()
    );
    assert_eq!(evaluated.cases.len(), 5);
    assert!(!evaluated.ranges.is_empty());
    let mut group = c.benchmark_group("cases");
    group.sample_size(20);
    group.bench_function("plain_10000_cells", |b| {
        b.iter(|| heftsheet::blocks::evaluate_source(&plain))
    });
    group.bench_function("tolerances_and_5_cases_10000_cells", |b| {
        b.iter(|| heftsheet::blocks::evaluate_source(&with_cases))
    });
    group.finish();
}

criterion_group!(benches, cases);
criterion_main!(benches);
