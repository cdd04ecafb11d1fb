//! Names resolve to the same cells whatever the order of the sheet and its
//! size: linking resolves most formulas as their names are entered and the
//! rest against the whole table, large sheets parse on several threads, and
//! neither may change a result or the order of the findings.

mod common;

use common::{codes, run, si};

#[test]
fn a_cell_named_like_a_constant_stands_for_it_above_its_definition_too() {
    // A user may define their own g0 or pi; every formula then uses the cell,
    // also one written above it.
    let evaluated = run("W = 2 kg * g0\ng0 = 10 m/s^2\nturns = pi * 2\npi = 3\n");
    assert_eq!(si(&evaluated, "W"), 20.0);
    assert_eq!(si(&evaluated, "turns"), 6.0);
}

#[test]
fn forward_and_backward_uses_resolve_alike() {
    let evaluated = run("above = a * 2\na = 3\nbelow = a * 2\n");
    assert_eq!(si(&evaluated, "above"), 6.0);
    assert_eq!(si(&evaluated, "below"), 6.0);
}

#[test]
fn every_use_of_a_duplicated_name_means_its_first_definition() {
    let evaluated = run("early = x\nx = 1\nmiddle = x\nx = 2\nlate = x\n");
    assert_eq!(codes(&evaluated), ["duplicate-name"]);
    assert_eq!(
        evaluated
            .lines
            .line_of(evaluated.diagnostics[0].span.start()),
        3
    );
    for name in ["early", "middle", "late"] {
        assert_eq!(si(&evaluated, name), 1.0, "{name}");
    }
}

#[test]
fn a_cell_that_uses_itself_is_a_cycle_whichever_way_it_is_found() {
    let evaluated = run("a = 1\nx = x + a\n");
    assert_eq!(codes(&evaluated), ["cycle"]);
}

#[test]
fn findings_of_a_large_sheet_come_in_file_order() {
    // Above 4096 statements the sheet parses on several threads; the
    // findings must still come in file order, each on its own line.
    let mut source = String::new();
    let mut broken_lines = Vec::new();
    for i in 0..20_000 {
        if i % 997 == 0 {
            source.push_str(&format!("bad{i} = 3 +\n"));
            broken_lines.push(i);
        } else if i % 1009 == 0 {
            source.push_str(&format!("typo{i} = c{} * nope\n", i - 1));
            broken_lines.push(i);
        } else {
            source.push_str(&format!("c{i} = {i} kg\n"));
        }
    }
    let evaluated = run(&source);
    let lines: Vec<usize> = evaluated
        .diagnostics
        .iter()
        .map(|diagnostic| evaluated.lines.line_of(diagnostic.span.start()))
        .collect();
    assert_eq!(lines, broken_lines);
    assert_eq!(si(&evaluated, "c19999"), 19999.0);
}
