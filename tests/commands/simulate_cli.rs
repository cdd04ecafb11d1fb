//! Simulate runs as a user sees them from the `heft` binary: the run's table
//! in the text report, the `runs` of the JSON, `--csv` of every step and
//! `--svg` of the plot.

use crate::common;

use common::heft;

const DROP: &str = "sheets/package_drop.heft";

#[test]
fn the_text_report_shows_the_run_its_table_and_its_results() {
    let (code, out, _) = heft(&["check", DROP]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("simulate t from 0 s to 10 s  (Dormand–Prince 5(4)"),
        "{out}"
    );
    assert!(
        out.contains("stopped at t = 0.9345 s where x >= h_drop"),
        "{out}"
    );
    assert!(out.contains("t [s]") && out.contains("x [m]") && out.contains("v [m/s]"));
    assert!(out.contains("stop: x >= h_drop"), "{out}");
    assert!(out.contains("halfway: x >= h_drop / 2"), "{out}");
    assert!(out.contains("v_floor    = v at stop"), "{out}");
    assert!(out.contains("Caution"));
}

#[test]
fn the_json_report_lists_each_run() {
    let (code, out, _) = heft(&["check", "--json", DROP]);
    assert_eq!(code, 0);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let run = &json["runs"][0];
    assert_eq!(run["status"], "stopped");
    assert_eq!(run["time"], "t");
    assert_eq!(run["states"], serde_json::json!(["x", "v"]));
    assert_eq!(run["stopped_by"], "stop: x >= h_drop");
    assert_eq!(run["relative_tolerance"], 1e-6);
    assert_eq!(run["compiled"], true);
    assert!(run["steps"].as_u64().is_some_and(|n| n > 3));
    let cells = json["cells"].as_array().expect("cells");
    let t_fall = cells
        .iter()
        .find(|c| c["name"] == "t_fall")
        .and_then(|c| c["si"].as_f64())
        .expect("t_fall");
    assert_eq!(run["final_time_s"].as_f64(), Some(t_fall));
    let events = run["events"].as_array().expect("events");
    assert_eq!(events.len(), 2);
    assert_eq!(events[1]["name"], "halfway");
    assert_eq!(events[1]["stops"], false);
    assert_eq!(events[0]["times_s"][0].as_f64(), Some(t_fall));
    let table = &run["table"];
    assert_eq!(table["time_unit"], "s");
    assert_eq!(table["columns"][0]["label"], "x");
    assert_eq!(table["columns"][1]["unit"], "m/s");
    let rows = table["rows"].as_array().expect("rows");
    let last = rows.last().expect("a last row");
    assert_eq!(last["events"][0], "stop: x >= h_drop");
    // The last row is the floor: x = h_drop = 4.2 m to the run's tolerance.
    let x = last["values"][0].as_f64().unwrap_or(f64::NAN);
    assert!((x - 4.2).abs() < 1e-5, "{x}");
}

#[test]
fn csv_export_has_every_step_and_the_events() {
    let (code, out, err) = heft(&["check", "--csv", DROP]);
    assert_eq!(code, 0, "{err}");
    let mut lines = out.lines();
    assert_eq!(lines.next(), Some("t [s],x [m],v [m/s],event"));
    let rows: Vec<Vec<&str>> = lines.map(|line| line.split(',').collect()).collect();
    assert!(rows.iter().all(|row| row.len() == 4));
    let times: Vec<f64> = rows
        .iter()
        .map(|row| row[0].parse().expect("a number"))
        .collect();
    assert_eq!(times[0], 0.0);
    assert!(times.windows(2).all(|pair| pair[0] < pair[1]), "{times:?}");
    let events: Vec<&str> = rows
        .iter()
        .map(|row| row[3])
        .filter(|e| !e.is_empty())
        .collect();
    assert_eq!(events, ["halfway: x >= h_drop / 2", "stop: x >= h_drop"]);
    let last = rows.last().expect("rows");
    let x: f64 = last[1].parse().expect("a number");
    assert!((x - 4.2).abs() < 1e-5);
}

#[test]
fn svg_export_draws_each_series_and_marks_the_events() {
    let (code, out, _) = heft(&["check", "--svg", DROP]);
    assert_eq!(code, 0);
    assert!(out.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    assert!(out.trim_end().ends_with("</svg>"));
    assert_eq!(out.matches("<polyline").count(), 2, "x and v");
    assert!(out.contains(">x [m]</text>") && out.contains(">v [m/s]</text>"));
    assert!(out.contains(">halfway</text>") && out.contains(">stop</text>"));
    assert!(out.contains(">t [s]</text>"));
}

#[test]
fn choosing_a_run_that_is_not_there_is_a_usage_error() {
    let (code, _, err) = heft(&["check", "--csv", "--run", "3", DROP]);
    assert_eq!(code, 2);
    assert!(err.contains("no simulate block starts on line 3"), "{err}");
    assert!(err.contains("line 31"), "{err}");
    let (code, out, _) = heft(&["check", "--csv", "--run", "31", DROP]);
    assert_eq!(code, 0);
    assert!(out.starts_with("t [s]"));
    let (code, _, err) = heft(&["check", "--csv", "sheets/skid_lift.heft"]);
    assert_eq!(code, 2);
    assert!(err.contains("no simulate block"), "{err}");
    let (code, _, _) = heft(&["check", "--csv", "--json", DROP]);
    assert_eq!(code, 2);
}

#[test]
fn a_run_that_failed_has_nothing_to_export_and_says_why() {
    let (code, out, err) = heft(&["check", "--csv", "tests/sheets/err/simulate_stiff.heft"]);
    assert_eq!(code, 1);
    assert!(out.is_empty());
    assert!(err.contains("stiff-system"), "{err}");
    assert!(err.contains("nothing to export"), "{err}");
}

#[test]
fn the_text_report_of_a_hoist_run_up() {
    let source = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("sheets/hoist_runup.heft"),
    )
    .expect("demo sheet");
    let evaluated = heftsheet::blocks::evaluate_source(&source);
    let text = heftsheet::cli::check_text("hoist_runup.heft", &source, &evaluated);
    insta::assert_snapshot!(text);
}

/// The sweep demo: the starting acceleration's sweep opens on line 41.
const HOIST_SWEEP: &str = "sheets/hoist_sweep.heft";

#[test]
fn a_sweeps_table_and_margins_are_printed_and_change_no_verdict() {
    let (code, out, _) = heft(&["check", HOIST_SWEEP]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("sweep a_start from 0 m/s^2 to 3 m/s^2 count 13 (line 41)"),
        "{out}"
    );
    // The rope fails over part of the range; the sheet still passes.
    assert!(out.contains("101 % FAIL"), "{out}");
    // Closed form at the heaviest die (+2 %): 2 WLL / (1.02 m_die + m_rig +
    // m_block) − g0 = 18 kN / 1475 kg − 9.80665 m/s² = 2.397 m/s².
    assert!(
        out.contains("check 1: T_rope <= WLL_rope: passes up to a_start = 2.397 m/s^2"),
        "{out}"
    );
    assert!(out.contains("2 checks: 2 passed"), "{out}");
}

#[test]
fn a_sweeps_plot_is_printed_for_its_line() {
    let (code, out, _) = heft(&["check", "--svg", "--run", "41", HOIST_SWEEP]);
    assert_eq!(code, 0, "{out}");
    assert!(out.starts_with("<svg") && out.ends_with("</svg>\n"));
    assert!(out.contains(">100 %</text>"), "{out}");
    assert!(out.contains("check 1: 100 % at 2.397 m/s^2"), "{out}");
    assert!(out.contains("a_start [m/s^2]"), "{out}");
    // A line that starts no block names the lines there are.
    let (code, _, err) = heft(&["check", "--svg", "--run", "3", HOIST_SWEEP]);
    assert_eq!(code, 2, "{err}");
}

#[test]
fn a_sweep_in_the_json_report_carries_its_points_and_verified_margins() {
    let (code, out, _) = heft(&["check", "--json", HOIST_SWEEP]);
    assert_eq!(code, 0);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let sweep = &json["sweeps"][0];
    assert_eq!(sweep["variable"], "a_start");
    assert_eq!(sweep["points"].as_array().map(Vec::len), Some(13));
    let margin = &sweep["margins"][0];
    assert_eq!(margin["kind"], "crossings");
    assert_eq!(margin["crossings"][0]["verified"], true);
    let input = margin["crossings"][0]["input"].as_f64().unwrap_or(f64::NAN);
    // Closed form as above.
    let closed_form = 18_000.0 / (1.02 * 1350.0 + 60.0 + 38.0) - 9.80665;
    assert!((input - closed_form).abs() < 1e-9 * closed_form, "{input}");
    assert_eq!(sweep["margins"][1]["kind"], "passes-throughout");
    let stepped = &json["sweeps"][1];
    assert_eq!(stepped["points"].as_array().map(Vec::len), Some(9));
    assert_eq!(stepped["short_last_step"], serde_json::Value::Null);
}
