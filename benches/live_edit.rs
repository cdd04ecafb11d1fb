//! Incremental recompute: one input edited in a 100,000-cell sheet, where
//! the input feeds 99 cells (so the edit evaluates 100 cells).
//!
//! Run with `cargo bench --bench live_edit`; figures are recorded in README.

use criterion::{Criterion, criterion_group, criterion_main};
use heftsheet::eval::{CellField, LiveSheet};

/// The binary uses mimalloc; measure with the same allocator.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// 1,000 sections of 100 cells: an input mass, its weight, and a chain of
/// 98 loads each built on the one before (invented figures).
pub fn sectioned_sheet(n_sections: usize) -> String {
    let mut text = String::from("+++\ntitle = \"generated\"\n+++\n");
    for section in 0..n_sections {
        text.push_str(&format!("# Section {section}\n"));
        text.push_str(&format!(
            "m{section} = {} kg \"input mass\"\n",
            100 + section % 900
        ));
        text.push_str(&format!("w{section}_0 [kN] = m{section} * g0\n"));
        for k in 1..99 {
            text.push_str(&format!(
                "w{section}_{k} [kN] = w{section}_{} * 1.01 + 0.2 kN\n",
                k - 1
            ));
        }
        text.push_str(&format!(
            "check w{section}_98 <= 5000 kN \"section {section}\"\n"
        ));
    }
    text
}

fn one_input_edit(c: &mut Criterion) {
    let mut live = LiveSheet::open(&sectioned_sheet(1000));
    assert_eq!(live.n_cells(), 100_000);
    assert_eq!(live.count(heftsheet::diag::Severity::Error), 0);
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
