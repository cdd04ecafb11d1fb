//! Incremental recompute: one input edited in a 100,000-cell sheet, where
//! the input feeds 99 cells (so the edit evaluates 100 cells).
//!
//! Run with `cargo bench --bench live_edit`; figures are recorded in docs/performance.md.

use criterion::{Criterion, criterion_group, criterion_main};
use heftsheet::live::{CellField, LiveSheet};

mod common;
use common::sectioned_sheet;

/// The binary uses mimalloc; measure with the same allocator and settings
/// (`heftsheet::allocator::configure`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn one_input_edit(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut live = LiveSheet::open(&sectioned_sheet(1000));
    assert_eq!(live.n_cells(), 100_000);
    assert_eq!(live.count(heftsheet::base::Severity::Error), 0);
    let input = live.cell_named("m500").expect("the input of section 500");
    let mut group = c.benchmark_group("live_edit");
    let mut flip = false;
    group.bench_function("one input of 100,000 cells, 100 evaluated", |b| {
        b.iter(|| {
            flip = !flip;
            let formula = if flip { "120 kg" } else { "125 kg" };
            live.set_cell_field(input, CellField::Formula, formula)
                .expect("edit");
        })
    });
    group.finish();
    assert_eq!(live.last_evaluated(), 100);
}

criterion_group!(benches, one_input_edit);
criterion_main!(benches);
