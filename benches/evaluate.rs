//! Parse + link + evaluate a generated sheet of 100,000 and 1,000,000 cells.
//!
//! Run with `cargo bench --bench evaluate`; figures are recorded in docs/performance.md.

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

#[path = "generated.rs"]
#[allow(dead_code)]
mod generated;
use generated::generated_sheet;

/// The binary uses mimalloc; measure with the same allocator and settings
/// (`heftsheet::allocator::configure`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn parse_and_evaluate(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut group = c.benchmark_group("parse_and_evaluate");
    group.sample_size(10);
    for n_cells in [100_000usize, 1_000_000] {
        let source = generated_sheet(n_cells);
        assert!(
            heftsheet::blocks::evaluate_source(&source)
                .diagnostics
                .is_empty()
        );
        group.throughput(Throughput::Elements(n_cells as u64));
        group.bench_with_input(
            BenchmarkId::from_parameter(n_cells),
            &source,
            // Freeing the result is not part of parsing and evaluating (the
            // CLI exits without it); criterion drops it outside the timing.
            |b, source| b.iter_with_large_drop(|| heftsheet::blocks::evaluate_source(source)),
        );
    }
    group.finish();
}

criterion_group!(benches, parse_and_evaluate);
criterion_main!(benches);
