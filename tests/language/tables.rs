//! Tables: readings against a general-purpose numerical library's
//! interpolation (values computed with numpy 2.4 and scipy 1.17 and pasted
//! here, the call named beside each list), conservative readings against
//! the rows themselves, a property that a linear reading at a row's key is
//! the row and lies between its neighbours elsewhere, CSV files beside a
//! sheet, and the fingerprint over them.

use std::sync::Arc;

use heftsheet::blocks::evaluate_source_with;
use heftsheet::sheet::SheetFiles;
use proptest::prelude::*;

use crate::common::{run, run_clean, si};

/// A one-key table of irregular spacing.
const HOIST: &str = "table t by x:\n  x [m] | y [kN]\n  0.5 | 14.2\n  1.2 | 12.9\n  2.0 | 11.35\n  3.7 | 8.6\n  5.0 | 7.05\nend\n";
const HOIST_X: [f64; 5] = [0.5, 1.2, 2.0, 3.7, 5.0];
const HOIST_Y: [f64; 5] = [14.2, 12.9, 11.35, 8.6, 7.05];

/// A crane chart by radius and boom length.
const CHART: &str = "table c by r, b:\n  r [m] | b [m] | cap [t]\n  6 | 22 | 18.0\n  6 | 30 | 15.5\n  6 | 38 | 13.0\n  8 | 22 | 13.4\n  8 | 30 | 12.1\n  8 | 38 | 10.6\n  10 | 22 | 10.2\n  10 | 30 | 9.6\n  10 | 38 | 8.7\n  12 | 22 | 8.1\n  12 | 30 | 7.8\n  12 | 38 | 7.2\nend\n";
const CHART_R: [f64; 4] = [6.0, 8.0, 10.0, 12.0];
const CHART_B: [f64; 3] = [22.0, 30.0, 38.0];
const CHART_CAP: [[f64; 3]; 4] = [
    [18.0, 15.5, 13.0],
    [13.4, 12.1, 10.6],
    [10.2, 9.6, 8.7],
    [8.1, 7.8, 7.2],
];

fn close(found: f64, expected: f64, what: &str) {
    assert!(
        (found - expected).abs() <= 1e-12 * expected.abs().max(1.0),
        "{what}: {found} against {expected}"
    );
}

#[test]
fn linear_readings_match_numpy_interp() {
    // numpy.interp(x, [0.5, 1.2, 2.0, 3.7, 5.0], [14.2, 12.9, 11.35, 8.6, 7.05]), numpy 2.4.6.
    let reference = [
        (0.5, 14.2),
        (0.77, 13.698571428571428),
        (1.2, 12.9),
        (1.9, 11.54375),
        (2.0, 11.35),
        (2.45, 10.62205882352941),
        (3.1, 9.570588235294117),
        (4.99, 7.061923076923076),
        (5.0, 7.05),
    ];
    let mut sheet = HOIST.to_string();
    for (index, (x, _)) in reference.iter().enumerate() {
        sheet.push_str(&format!("y{index} [kN] = lookup(t.y, {x} m, linear)\n"));
    }
    let evaluated = run_clean(&sheet);
    for (index, (x, y)) in reference.iter().enumerate() {
        close(
            si(&evaluated, &format!("y{index}")),
            y * 1000.0,
            &format!("x = {x}"),
        );
    }
}

#[test]
fn bilinear_readings_match_scipy_regular_grid_interpolator() {
    // scipy.interpolate.RegularGridInterpolator(([6, 8, 10, 12], [22, 30, 38]),
    // CHART_CAP, method="linear")([(r, b)]), scipy 1.17.1.
    let reference = [
        (6.0, 22.0, 18.0),
        (7.3, 29.9, 13.311499999999999),
        (9.99, 38.0, 8.709499999999998),
        (11.2, 30.0, 8.52),
        (6.5, 33.3, 13.721874999999999),
        (12.0, 38.0, 7.2),
        (8.8, 24.1, 11.85225),
    ];
    let mut sheet = CHART.to_string();
    for (index, (r, b, _)) in reference.iter().enumerate() {
        sheet.push_str(&format!(
            "c{index} [t] = lookup(c.cap, {r} m, {b} m, linear)\n"
        ));
    }
    let evaluated = run_clean(&sheet);
    for (index, (r, b, cap)) in reference.iter().enumerate() {
        close(
            si(&evaluated, &format!("c{index}")),
            cap * 1000.0,
            &format!("r = {r}, b = {b}"),
        );
    }
}

/// The rows either side of `x` (one row at a key).
fn bracketing(keys: &[f64], x: f64) -> Vec<usize> {
    match keys.iter().position(|&key| key == x) {
        Some(at) => vec![at],
        None => {
            let upper = keys
                .iter()
                .position(|&key| key > x)
                .expect("x lies inside the keys");
            vec![upper - 1, upper]
        }
    }
}

#[test]
fn least_and_greatest_readings_are_the_bracketing_rows_extremes() {
    // By construction from the rows: the smallest and largest value of the
    // row (or rows) either side of the key, and of the four corners for two keys.
    let xs = [0.5, 0.9, 1.2, 3.0, 4.2, 5.0];
    let mut sheet = HOIST.to_string();
    for (index, x) in xs.iter().enumerate() {
        sheet.push_str(&format!(
            "lo{index} [kN] = lookup(t.y, {x} m, least)\nhi{index} [kN] = lookup(t.y, {x} m, greatest)\n"
        ));
    }
    let points = [(6.0, 22.0), (7.0, 25.0), (10.0, 31.0), (11.9, 38.0)];
    sheet.push_str(CHART);
    for (index, (r, b)) in points.iter().enumerate() {
        sheet.push_str(&format!(
            "clo{index} [t] = lookup(c.cap, {r} m, {b} m, least)\nchi{index} [t] = lookup(c.cap, {r} m, {b} m, greatest)\n"
        ));
    }
    let evaluated = run_clean(&sheet);
    for (index, &x) in xs.iter().enumerate() {
        let rows: Vec<f64> = bracketing(&HOIST_X, x)
            .iter()
            .map(|&i| HOIST_Y[i])
            .collect();
        let least = rows.iter().copied().fold(f64::INFINITY, f64::min);
        let greatest = rows.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        assert_eq!(si(&evaluated, &format!("lo{index}")), least * 1000.0);
        assert_eq!(si(&evaluated, &format!("hi{index}")), greatest * 1000.0);
    }
    for (index, &(r, b)) in points.iter().enumerate() {
        let mut corners = Vec::new();
        for i in bracketing(&CHART_R, r) {
            for j in bracketing(&CHART_B, b) {
                corners.push(CHART_CAP[i][j]);
            }
        }
        let least = corners.iter().copied().fold(f64::INFINITY, f64::min);
        let greatest = corners.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        assert_eq!(si(&evaluated, &format!("clo{index}")), least * 1000.0);
        assert_eq!(si(&evaluated, &format!("chi{index}")), greatest * 1000.0);
    }
}

#[test]
fn a_key_in_another_unit_is_converted_and_a_wrong_dimension_refused() {
    // 2 ft = 0.6096 m (1959 yard and pound); numpy.interp(0.6096, HOIST_X, HOIST_Y) = 13.996457142857142.
    let sheet = format!("{HOIST}y [kN] = lookup(t.y, 2 ft, linear)\n");
    close(si(&run_clean(&sheet), "y"), 13996.457142857142, "2 ft");
    let wrong = format!("{HOIST}y = lookup(t.y, 2 s, linear)\n");
    let evaluated = run(&wrong);
    assert!(
        evaluated
            .diagnostics
            .iter()
            .any(|d| d.code.as_str() == "dimension-mismatch")
    );
}

#[test]
fn a_key_outside_the_table_names_the_tables_range() {
    let evaluated = run(&format!("{HOIST}y = lookup(t.y, 5.01 m, linear)\n"));
    let outside: Vec<_> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() == "table-key-outside")
        .collect();
    assert_eq!(outside.len(), 1);
    assert!(
        outside[0].message.contains("runs from 0.5 m to 5.0 m"),
        "{}",
        outside[0].message
    );
}

proptest! {
    #[test]
    fn a_linear_reading_is_the_row_at_its_key_and_between_its_neighbours(
        rows in prop::collection::vec((0.01f64..10.0, -50.0f64..50.0), 2..8),
        at in 0.0f64..1.0,
    ) {
        // Keys: running sums of positive steps, so strictly increasing.
        let mut keys = Vec::new();
        let mut key = 0.0;
        for (step, _) in &rows {
            key += step;
            keys.push((key * 1000.0).round() / 1000.0);
        }
        keys.dedup();
        prop_assume!(keys.len() >= 2);
        let values: Vec<f64> = rows.iter().map(|(_, v)| (v * 100.0).round() / 100.0).collect();
        let mut sheet = String::from("table t by x:\n  x [m] | y [N]\n");
        for (key, value) in keys.iter().zip(&values) {
            sheet.push_str(&format!("  {key} | {value}\n"));
        }
        sheet.push_str("end\n");
        for (index, key) in keys.iter().enumerate() {
            sheet.push_str(&format!("at{index} = lookup(t.y, {key} m, linear)\n"));
        }
        let x = keys[0] + at * (keys[keys.len() - 1] - keys[0]);
        sheet.push_str(&format!("x = {x:e} m\nmid = lookup(t.y, x, linear)\n"));
        let evaluated = run_clean(&sheet);
        for (index, value) in values.iter().take(keys.len()).enumerate() {
            prop_assert_eq!(si(&evaluated, &format!("at{index}")), *value);
        }
        let x = si(&evaluated, "x");
        let upper = keys.iter().position(|&k| k >= x).unwrap_or(keys.len() - 1).max(1);
        let (a, b) = (values[upper - 1], values[upper]);
        let mid = si(&evaluated, "mid");
        prop_assert!(mid >= a.min(b) - 1e-9 && mid <= a.max(b) + 1e-9, "{mid} not between {a} and {b}");
    }
}

const SLINGS_CSV: &[u8] = b"angle [deg],capacity [t]\n0,8.5\n15,8.2\n30,7.3\n45,6.0\n60,4.2\n";

fn with_csv(bytes: &[u8]) -> Arc<SheetFiles> {
    Arc::new(SheetFiles::in_folder("the test's folder").with_file("slings.csv", Ok(bytes.to_vec())))
}

const CSV_SHEET: &str =
    "table slings by angle from \"slings.csv\"\nC [t] = lookup(slings.capacity, 20 deg, least)\n";

#[test]
fn a_table_reads_its_csv_file_and_the_file_is_part_of_the_fingerprint() {
    // By construction: 20° lies between the rows at 15° (8.2 t) and 30° (7.3 t).
    let evaluated = evaluate_source_with(CSV_SHEET, &*with_csv(SLINGS_CSV));
    assert!(
        evaluated.diagnostics.is_empty(),
        "{:?}",
        evaluated.diagnostics
    );
    assert_eq!(si(&evaluated, "C"), 7300.0);
    let fingerprint = |bytes: &[u8]| {
        let evaluated = evaluate_source_with(CSV_SHEET, &*with_csv(bytes));
        heftsheet::review::fingerprint(CSV_SHEET, evaluated.sheet())
    };
    let changed = b"angle [deg],capacity [t]\n0,8.5\n15,8.2\n30,7.4\n45,6.0\n60,4.2\n";
    assert_eq!(fingerprint(SLINGS_CSV), fingerprint(SLINGS_CSV));
    assert_ne!(fingerprint(SLINGS_CSV), fingerprint(changed));
    // A sheet reading no file keeps the fingerprint of its text alone.
    let plain = "m = 1 kg\n";
    let alone = heftsheet::review::fingerprint(plain, run(plain).sheet());
    let text_hash = {
        use sha2::Digest;
        let digest = sha2::Sha256::digest(b"m = 1 kg\n");
        digest
            .iter()
            .map(|byte| format!("{byte:02x}"))
            .collect::<String>()
    };
    assert_eq!(alone, text_hash);
}

#[test]
fn a_csv_table_without_a_folder_or_with_bad_rows_says_where() {
    let evaluated = run(CSV_SHEET);
    let missing: Vec<_> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() == "table-file-missing")
        .collect();
    assert_eq!(missing.len(), 1);
    assert!(
        missing[0].message.contains("no folder"),
        "{}",
        missing[0].message
    );
    let bad = evaluate_source_with(
        CSV_SHEET,
        &*with_csv(b"angle [deg],capacity [t]\n0,8.5\n15,lots\n"),
    );
    let row = bad
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "table-row-error")
        .expect("a row error");
    assert!(
        row.message.contains("line 3 of slings.csv"),
        "{}",
        row.message
    );
    assert_eq!(row.span.start(), 0, "at the table's line");
}

#[test]
fn the_corpus_sheet_beside_its_csv_file_reads_through_the_pipeline() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/sheets/files/crane_bridle.heft");
    let evaluated = crate::common::run_sheet(&path);
    assert!(
        evaluated.diagnostics.is_empty(),
        "{:?}",
        evaluated.diagnostics
    );
    // By construction: 23.58° lies between the rows at 15° and 30°; the least is 7.3 t.
    assert_eq!(si(&evaluated, "C_bridle"), 7300.0);
    assert_eq!(evaluated.table_reads.len(), 1);
    assert_eq!(evaluated.table_reads[0].rows, vec![1, 2]);
}

#[test]
fn the_notebook_edits_a_sheet_with_a_table_as_a_fresh_evaluation_reads_it() {
    // The live sheet after edits (a key moved, a row edited) against the
    // same text evaluated afresh.
    let text = format!("{HOIST}v = 1.0 m\ny [kN] = lookup(t.y, v, least)\n");
    let mut live = heftsheet::LiveSheet::open(&text);
    let lines: Vec<&str> = text.lines().collect();
    let v_line = lines
        .iter()
        .position(|line| line.starts_with("v ="))
        .expect("v");
    live.replace_line(v_line, "v = 2.7 m")
        .expect("an edit of a cell");
    let row_line = lines
        .iter()
        .position(|line| line.contains("3.7 |"))
        .expect("a row");
    live.replace_line(row_line, "  3.7 | 8.0")
        .expect("an edit of a row");
    let fresh = run_clean(&live.text());
    let id = live.sheet().names.get("y").copied().expect("y");
    let edited = live.cell(id).value.expect("a value").si;
    assert_eq!(edited, si(&fresh, "y"));
    // By construction: 2.7 m lies between the rows at 2.0 m and 3.7 m (now 8.0 kN).
    assert_eq!(edited, 8000.0);
}

#[test]
fn a_tolerance_through_a_table_is_bounded_only_over_monotone_rows() {
    use heftsheet::eval::CheckStatus;
    // Falling capacities: the corners bound the reading, and the worst case
    // is at the longest radius (R = 12.1 m reads 6.4 t with `least`).
    let falling = "table c by r:\n  r [m] | cap [t]\n  10 | 9.6\n  12 | 7.8\n  14 | 6.4\nend\nm = 6.0 t ± 2 %\nR = 11.9 m ± 0.2 m\nC [t] = lookup(c.cap, R, least)\ncheck m <= C \"crane\"\n";
    let evaluated = heftsheet::pipeline::run(falling);
    assert_eq!(evaluated.checks[0].status, CheckStatus::Passed);
    // A capacity that rises again between the rows the tolerance reaches:
    // the corners do not bound it, so the check is unknown, never a pass.
    let wavy = falling.replace("14 | 6.4", "14 | 8.4");
    let evaluated = heftsheet::pipeline::run(&wavy);
    assert_eq!(evaluated.checks[0].status, CheckStatus::Unknown);
    assert!(
        evaluated.checks[0]
            .worst_unknown
            .as_deref()
            .is_some_and(|reason| reason.contains("not monotone")),
        "{:?}",
        evaluated.checks[0].worst_unknown
    );
}
