//! `heft report` without the file I/O: parse, evaluate, read the review
//! state, build the document and write it as HTML and as Markdown — for the
//! largest demo sheet and for a generated sheet of 10,000 cells.
//!
//! Run with `cargo bench --bench report`; figures are recorded in docs/performance.md.
//! Targets: the largest demo sheet ≤ 100 ms, 10,000 cells ≤ 2 s.

use std::path::Path;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use heftsheet::blocks::evaluate_source;
use heftsheet::report::{self, Format};

/// The binary uses mimalloc; measure with the same allocator and settings
/// (`heftsheet::allocator::configure`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// A long calculation: inputs with units and descriptions, formulas over
/// recent cells, a heading every 50 cells, a check every 100, and a review
/// mark every 250 cells.
fn generated_sheet(n_cells: usize) -> String {
    let mut text = String::from(
        "+++\ntitle = \"generated\"\nrevision = \"A\"\nprepared_by = \"bench\"\ndisplay = \"SI\"\n+++\n",
    );
    for i in 0..n_cells {
        if i % 50 == 0 {
            text.push_str(&format!("# Block {}\n> Cells {i} onwards.\n", i / 50));
        }
        let line = match i % 5 {
            0 => format!("m_{i} = {} kg \"input mass {i}\"\n", 100 + i % 900),
            1 => format!("a_{i} = 0.{} m/s^2 \"acceleration {i}\"\n", 1 + i % 9),
            2 => format!(
                "T_{i} [kN] = m_{} * (g0 + a_{}) \"tension {i}\"\n",
                i - 2,
                i - 1
            ),
            3 => format!("u_{i} = T_{} / (m_{} * g0)\n", i - 1, i - 3),
            _ => format!(
                "F_{i} [kN] = max(T_{}, 2 kN) * 1.25 \"design force {i}\"\n",
                i - 2
            ),
        };
        text.push_str(&line);
        if i % 100 == 99 {
            text.push_str(&format!("check F_{i} <= 100 kN \"block {i}\"\n"));
        }
        if i % 250 == 4 {
            text.push_str(
                "review question \"source of this figure?\" by \"bench\" on 2026-12-01\n",
            );
        }
    }
    text
}

/// The largest sheet in `sheets/`, by size.
fn largest_demo_sheet() -> String {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("sheets");
    std::fs::read_dir(&dir)
        .into_iter()
        .flatten()
        .filter_map(|entry| entry.ok().map(|e| e.path()))
        .filter(|path| path.extension().is_some_and(|ext| ext == "heft"))
        .filter_map(|path| std::fs::read_to_string(path).ok())
        .max_by_key(String::len)
        .unwrap_or_default()
}

fn report_of(source: &str, format: Format) -> String {
    report::render(&evaluate_source(source), format)
}

fn reports(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut group = c.benchmark_group("report");
    group.sample_size(10);
    let demo = largest_demo_sheet();
    let generated = generated_sheet(10_000);
    assert!(evaluate_source(&generated).diagnostics.is_empty());
    for (name, source) in [("largest_demo", &demo), ("10000_cells", &generated)] {
        for (label, format) in [("html", Format::Html), ("markdown", Format::Markdown)] {
            group.bench_with_input(BenchmarkId::new(name, label), source, |b, source| {
                b.iter(|| report_of(source, format))
            });
        }
    }
    group.finish();
}

criterion_group!(benches, reports);
criterion_main!(benches);
