//! Names resolve to the same cells whatever the order of the sheet and its
//! size: linking resolves most formulas as their names are entered and the
//! rest against the whole table, large sheets parse on several threads, and
//! neither may change a result or the order of the findings.

use crate::common;

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

#[test]
fn a_decomposed_name_is_the_cell_written_precomposed() {
    // "é" as U+0065 U+0301 and as U+00E9: one name in normalization form C
    // (Unicode UAX #15), so the formula uses the cell, with no finding.
    let evaluated = run("cafe\u{301} = 2 kg\nW [N] = caf\u{e9} * g0\ncheck W <= 30 N\n");
    assert!(
        codes(&evaluated).iter().all(|c| *c != "undefined-name"),
        "{:?}",
        codes(&evaluated)
    );
    assert!((si(&evaluated, "W") - 2.0 * 9.80665).abs() < 1e-12);
    // Defined once each way, it is defined twice.
    let twice = run("cafe\u{301} = 2 kg\ncaf\u{e9} = 3 kg\n");
    assert!(codes(&twice).contains(&"duplicate-name"));
}

#[test]
fn a_check_on_a_look_alike_decoy_is_flagged_beside_the_real_cell() {
    // The decoy `Fо` has a Cyrillic о (U+043E); its check passes while the
    // real `Fo` is 30 kN. TR 39's skeletons of the two names are equal.
    let evaluated =
        run("Fo = 30 kN\nF\u{43e} = 20 kN\nWLL = 25 kN\ncheck F\u{43e} <= WLL\nz = Fo * 2\n");
    let found = codes(&evaluated);
    assert!(found.contains(&"confusable-names"), "{found:?}");
    assert!(found.contains(&"mixed-script-name"), "{found:?}");
    let warning = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "confusable-names")
        .expect("the finding");
    assert_eq!(
        evaluated.lines.line_of(warning.span.start()),
        1,
        "the decoy's line"
    );
    assert!(warning.message.contains("U+043E"), "{}", warning.message);
}

#[test]
fn greek_with_latin_and_ascii_look_alikes_are_left_alone() {
    // Engineering names mix Greek and Latin (μ_s, σ_max, Δx); ASCII pairs
    // such as m1 and ml are the sheet's own business.
    let evaluated =
        run("μ_s = 0.3\nσ_max = 2 MPa\nΔx = 1 m\nm1 = 2 kg\nml = 3 kg\nl1 = 1\nll = 2\n");
    let found = codes(&evaluated);
    assert!(
        !found
            .iter()
            .any(|c| *c == "confusable-names" || *c == "mixed-script-name"),
        "{found:?}"
    );
    // The micro sign and the Greek mu read alike.
    let micro = run("μ_s = 0.3\n\u{b5}_s = 0.2\n");
    assert!(codes(&micro).contains(&"confusable-names"));
}

#[test]
fn greek_symbols_beside_latin_letters_are_meant_but_greek_capitals_drawn_as_latin_are_not() {
    // An angle α beside an acceleration a, Poisson's ν beside a speed v, a
    // density ρ beside a pressure p: small Greek letters are symbols.
    let symbols = run("a = 2 m/s^2
α = 25 deg
v = 1 m/s
ν = 0.3
p = 1 kPa
ρ = 1000 kg/m^3
");
    assert!(
        !codes(&symbols).contains(&"confusable-names"),
        "{:?}",
        codes(&symbols)
    );
    // A Greek capital Alpha (U+0391) and omicron (U+03BF) look exactly like
    // Latin A and o: decoys.
    for decoy in ["T_\u{391} = 2 kN\n", "F\u{3bf} = 2 kN\n"] {
        let sheet = run(&format!("T_A = 1 kN\nFo = 1 kN\n{decoy}"));
        assert!(
            codes(&sheet).contains(&"confusable-names"),
            "{decoy}: {:?}",
            codes(&sheet)
        );
    }
}
