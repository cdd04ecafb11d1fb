//! The lints and the conversion audit on the generated 100,000-cell sheet
//! of `benches/evaluate.rs`, beside the evaluation they follow, so the
//! figures compare directly.
//!
//! Run with `cargo bench --bench audit`; figures are recorded in docs/performance.md.

#[path = "generated.rs"]
#[allow(dead_code)]
mod generated;
use generated::generated_sheet;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};

/// The binary uses mimalloc; measure with the same allocator and settings
/// (`heftsheet::allocator::configure`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn lints_against_evaluation(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let n_cells = 100_000usize;
    let source = generated_sheet(n_cells);
    let evaluated = heftsheet::blocks::evaluate_source(&source);
    assert!(evaluated.diagnostics.is_empty());
    assert!(heftsheet::audit::lint(&evaluated).is_empty());
    let mut group = c.benchmark_group("audit_100000");
    group.sample_size(10);
    group.throughput(Throughput::Elements(n_cells as u64));
    group.bench_function("parse_and_evaluate", |b| {
        b.iter(|| heftsheet::blocks::evaluate_source(&source))
    });
    group.bench_function("lints", |b| b.iter(|| heftsheet::audit::lint(&evaluated)));
    group.bench_function("conversion_audit", |b| {
        b.iter(|| heftsheet::audit::conversion_audit(&evaluated))
    });
    group.finish();
}

criterion_group!(benches, lints_against_evaluation);
criterion_main!(benches);
