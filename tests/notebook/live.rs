//! The live sheet the notebook edits: every edit keeps the text byte for
//! byte outside the edited line, and an edited sheet always has exactly the
//! results that evaluating its text from scratch gives.

use heftsheet::base::Code;
use heftsheet::blocks::evaluate_source;
use heftsheet::eval::CellStatus;
use heftsheet::live::{CellField, EditError, LiveSheet};
use proptest::prelude::*;

/// Asserts that `live` agrees with a from-scratch evaluation of its text:
/// every cell (value to the bit, status, unit shown, uses), every check, and
/// every finding with its line, column and message.
#[track_caller]
fn assert_matches_full_evaluation(live: &LiveSheet) {
    let text = live.text();
    let full = evaluate_source(&text);
    assert_eq!(live.n_cells(), full.n_cells(), "cells of\n{text}");
    for id in 0..full.n_cells() {
        let (mine, theirs) = (live.cell(id), full.cell_at(id));
        let context = format!("cell `{}` of\n{text}", theirs.name);
        assert_eq!(mine.name, theirs.name, "{context}");
        assert_eq!(mine.line, theirs.line, "{context}");
        assert_eq!(mine.formula, theirs.formula, "{context}");
        assert_eq!(mine.description, theirs.description, "{context}");
        assert_eq!(mine.status, theirs.status, "{context}");
        assert_eq!(
            mine.value.map(|v| (v.si.to_bits(), v.dimension)),
            theirs.value.map(|v| (v.si.to_bits(), v.dimension)),
            "{context}"
        );
        assert_eq!(mine.display, theirs.display, "{context}");
        assert_eq!(mine.is_input, theirs.is_input, "{context}");
        assert_eq!(mine.uses, theirs.uses, "{context}");
    }
    assert_eq!(live.n_checks(), full.checks.len(), "checks of\n{text}");
    for (index, theirs) in full.checks.iter().enumerate() {
        let mine = live.check(index);
        assert_eq!(mine.status, theirs.status, "check {index} of\n{text}");
        assert_eq!(
            mine.utilization.map(f64::to_bits),
            theirs.utilization.map(f64::to_bits)
        );
        assert_eq!(mine.display, theirs.display, "check {index} of\n{text}");
        assert_eq!(mine.label, theirs.label);
        assert_eq!(
            (&mine.lhs_text, &mine.rhs_text),
            (&theirs.lhs_text, &theirs.rhs_text)
        );
    }
    let mut expected: Vec<(usize, usize, Code, String, Option<String>)> = full
        .diagnostics
        .iter()
        .map(|d| {
            let place = full.lines.line_column(&text, d.span.start());
            (
                place.line,
                place.column,
                d.code,
                d.message.clone(),
                d.help.clone(),
            )
        })
        .collect();
    expected.sort();
    let mut found: Vec<(usize, usize, Code, String, Option<String>)> = live
        .findings()
        .into_iter()
        .map(|f| (f.line, f.column, f.code, f.message, f.help))
        .collect();
    found.sort();
    assert_eq!(found, expected, "findings of\n{text}");
}

const SKID_LIFT: &str = include_str!("../../sheets/skid_lift.heft");
const CART_TRAIN: &str = include_str!("../../sheets/cart_train.heft");
const SLIDE_FIXTURE: &str = include_str!("../../sheets/slide_fixture.heft");

#[test]
fn an_input_edit_changes_one_line_and_recomputes_only_what_depends_on_it() {
    let mut live = LiveSheet::open(SKID_LIFT);
    let id = live.cell_named("a_up").expect("a_up");
    let t_up = live.cell_named("T_up").expect("T_up");
    let before = live.cell(t_up).value.expect("T_up has a value").si;
    live.set_cell_field(id, CellField::Formula, "0.5 m/s^2")
        .expect("edit");
    // a_up is used by T_up only; the check on T_up is re-evaluated too.
    assert_eq!(live.last_evaluated(), 2);
    let after = live.cell(t_up).value.expect("T_up has a value").si;
    // T = m (g0 + a): the change is m_tot × 0.15 m/s² (closed form, Newton's second law).
    let m_tot = live
        .cell(live.cell_named("m_tot").expect("m_tot"))
        .value
        .expect("m")
        .si;
    assert!((after - before - m_tot * 0.15).abs() < 1e-9 * after);
    let text = live.text();
    let changed: Vec<(&str, &str)> = SKID_LIFT
        .lines()
        .zip(text.lines())
        .filter(|(a, b)| a != b)
        .collect();
    assert_eq!(
        changed,
        vec![(
            "a_up   = 0.35 m/s^2            \"start-of-hoist acceleration\"",
            "a_up   = 0.5 m/s^2            \"start-of-hoist acceleration\""
        )]
    );
    assert_eq!(text.len(), SKID_LIFT.len() - 1);
    assert_matches_full_evaluation(&live);
}

#[test]
fn invalid_input_stays_in_the_text_marked_until_fixed() {
    let mut live = LiveSheet::open(SKID_LIFT);
    let id = live.cell_named("m_rig").expect("m_rig");
    live.set_cell_field(id, CellField::Formula, "42 kg +* 3")
        .expect("edit");
    assert!(live.text().contains("m_rig  = 42 kg +* 3"));
    assert_eq!(live.cell(id).status, CellStatus::Error);
    let statement = live.cell_statement(id);
    let findings = live.statement_findings(statement);
    assert_eq!(findings[0].code, Code::ParseError);
    assert_matches_full_evaluation(&live);
    let m_tot = live.cell_named("m_tot").expect("m_tot");
    assert_eq!(live.cell(m_tot).status, CellStatus::Blocked { by: id });
    live.set_cell_field(id, CellField::Formula, "45 kg")
        .expect("edit");
    assert_eq!(live.cell(m_tot).status, CellStatus::Ok);
    assert_matches_full_evaluation(&live);
}

#[test]
fn a_weight_used_as_a_mass_is_flagged_as_soon_as_it_is_written() {
    let mut live = LiveSheet::open(SKID_LIFT);
    let id = live.cell_named("m_tot").expect("m_tot");
    live.set_cell_field(id, CellField::Formula, "W + m_rig")
        .expect("edit");
    // W comes after m_tot in dependency order, so this edit relinks.
    assert_matches_full_evaluation(&live);
    let findings = live.findings();
    assert!(
        findings.iter().any(|f| f.code == Code::Cycle),
        "W uses m_tot, so m_tot = W + m_rig is a loop: {findings:#?}"
    );
    live.set_cell_field(id, CellField::Formula, "m_skid + 400 N")
        .expect("edit");
    assert!(
        live.findings()
            .iter()
            .any(|f| f.code == Code::MassWeightMixup)
    );
    assert_matches_full_evaluation(&live);
}

#[test]
fn fields_renames_inserts_and_removals_match_a_full_evaluation() {
    let mut live = LiveSheet::open(CART_TRAIN);
    let first = live.cell_named(live.cell(0).name).expect("first cell");
    live.set_cell_field(first, CellField::Unit, "lbf")
        .expect("unit");
    assert_matches_full_evaluation(&live);
    live.set_cell_field(first, CellField::Description, "a \"quoted\" note")
        .expect("desc");
    assert_matches_full_evaluation(&live);
    live.set_cell_field(first, CellField::Name, "renamed")
        .expect("name");
    assert_matches_full_evaluation(&live);
    let line = live.statement_line(live.cell_statement(first));
    live.insert_line(line + 1, "extra [kN] = renamed * 2")
        .expect("insert");
    assert_matches_full_evaluation(&live);
    live.remove_line(line + 1).expect("remove");
    assert_matches_full_evaluation(&live);
    assert_eq!(live.text().lines().count(), CART_TRAIN.lines().count());
}

#[test]
fn header_lines_are_refused_and_the_text_is_unchanged() {
    let mut live = LiveSheet::open(SKID_LIFT);
    assert_eq!(
        live.replace_line(1, "title = \"x\""),
        Err(EditError::InHeader { line: 1 })
    );
    assert_eq!(live.replace_line(20, "a\nb"), Err(EditError::LineBreak));
    assert_eq!(live.text(), SKID_LIFT);
}

#[test]
fn a_sheet_started_empty_grows_line_by_line() {
    let mut live = LiveSheet::open("");
    live.insert_line(0, "m = 12 kg").expect("insert");
    live.insert_line(1, "W [N] = m * g0").expect("insert");
    assert_eq!(live.text(), "m = 12 kg\nW [N] = m * g0\n");
    assert_matches_full_evaluation(&live);
    // A header typed at the top is read as one.
    live.insert_line(0, "+++").expect("insert");
    assert_matches_full_evaluation(&live);
    live.insert_line(1, "+++").expect("insert");
    assert_matches_full_evaluation(&live);
    assert_eq!(live.n_cells(), 2);
}

#[test]
fn compacting_keeps_text_and_results() {
    let mut live = LiveSheet::open(SLIDE_FIXTURE);
    for value in 1..50 {
        let id = live.cell_named(live.cell(0).name).expect("first cell");
        let formula = live.cell_field(id, CellField::Formula);
        let number: String = formula
            .chars()
            .take_while(|c| c.is_ascii_digit() || *c == '.')
            .collect();
        let rest = &formula[number.len()..];
        live.set_cell_field(id, CellField::Formula, &format!("{value}{rest}"))
            .expect("edit");
    }
    let text = live.text();
    let arena_before = live.document().arena().len();
    live.compact();
    assert!(live.document().arena().len() < arena_before);
    assert_eq!(live.text(), text);
    assert_matches_full_evaluation(&live);
}

/// One edit, chosen by numbers that are read against the sheet as it is.
#[derive(Clone, Debug)]
enum Edit {
    Field {
        cell: usize,
        field: usize,
        choice: usize,
    },
    Replace {
        line: usize,
        choice: usize,
    },
    Insert {
        line: usize,
        choice: usize,
    },
    Remove {
        line: usize,
    },
}

const FORMULAS: &[&str] = &[
    "12 kg",
    "0.8 m/s^2",
    "2.5 kN",
    "{other} * 2",
    "{other} + {other}",
    "{other} * g0",
    "sqrt({other} * {other})",
    "{other} / 0",
    "undefined_thing + 1",
    "3 lb",
    "(1 +",
    "{self} + 1",
    "-{other}",
    "450 lbm * g0",
];
const UNITS: &[&str] = &["kN", "kg", "", "lbf", "m/s^2", "N", "bogus"];
const LINES: &[&str] = &[
    "# A heading",
    "## A sub-heading",
    "> a note",
    "// a comment",
    "",
    "check {other} <= 30 kN \"a check\"",
    "check {other} > 0 kg",
    "fresh = {other} * 3",
    "fresh2 [kN] = 2 kN \"new\"",
    "{other} = 5 kg",
    "this is not a statement",
    "+++",
];

fn fill(template: &str, live: &LiveSheet, cell: usize, pick: usize) -> String {
    let n_cells = live.n_cells().max(1);
    let other = if live.n_cells() == 0 {
        "nothing".to_string()
    } else {
        live.cell((pick / 7) % n_cells).name.to_string()
    };
    let this = if live.n_cells() == 0 {
        "nothing".to_string()
    } else {
        live.cell(cell % n_cells).name.to_string()
    };
    template.replace("{other}", &other).replace("{self}", &this)
}

fn apply(live: &mut LiveSheet, edit: &Edit) {
    let n_lines = live.document().n_lines();
    let body = live.document().editable_from();
    let body_line = |line: usize| body + line % (n_lines - body).max(1);
    let outcome = match *edit {
        Edit::Field {
            cell,
            field,
            choice,
        } if live.n_cells() > 0 => {
            let id = cell % live.n_cells();
            let (field, value) = match field % 4 {
                0 => (
                    CellField::Formula,
                    fill(FORMULAS[choice % FORMULAS.len()], live, id, choice),
                ),
                1 => (CellField::Unit, UNITS[choice % UNITS.len()].to_string()),
                2 => (
                    CellField::Description,
                    ["", "why \"so\"", "note"][choice % 3].to_string(),
                ),
                _ => (
                    CellField::Name,
                    ["x1", "renamed", "g0", "m_skid"][choice % 4].to_string(),
                ),
            };
            live.set_cell_field(id, field, &value)
        }
        Edit::Field { .. } => Ok(()),
        Edit::Replace { line, choice } if n_lines > body => {
            let text = fill(LINES[choice % LINES.len()], live, 0, choice);
            live.replace_line(body_line(line), &text)
        }
        Edit::Replace { .. } => Ok(()),
        Edit::Insert { line, choice } => {
            let text = fill(LINES[choice % LINES.len()], live, 0, choice);
            let at = body + line % (n_lines - body + 1);
            live.insert_line(at, &text)
        }
        Edit::Remove { line } if n_lines > body => live.remove_line(body_line(line)),
        Edit::Remove { .. } => Ok(()),
    };
    assert_eq!(outcome, Ok(()), "{edit:?}");
}

fn edit_strategy() -> impl Strategy<Value = Edit> {
    prop_oneof![
        4 => (any::<usize>(), any::<usize>(), any::<usize>())
            .prop_map(|(cell, field, choice)| Edit::Field { cell, field, choice }),
        2 => (any::<usize>(), any::<usize>()).prop_map(|(line, choice)| Edit::Replace { line, choice }),
        1 => (any::<usize>(), any::<usize>()).prop_map(|(line, choice)| Edit::Insert { line, choice }),
        1 => any::<usize>().prop_map(|line| Edit::Remove { line }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]

    #[test]
    fn any_sequence_of_edits_ends_where_a_full_evaluation_does(
        sheet in 0usize..4,
        edits in proptest::collection::vec(edit_strategy(), 1..12),
    ) {
        let text = [SKID_LIFT, CART_TRAIN, SLIDE_FIXTURE, "x = 1 m\r\ny = x * 2 // no final break"][sheet];
        let mut live = LiveSheet::open(text);
        for edit in &edits {
            apply(&mut live, edit);
            assert_matches_full_evaluation(&live);
        }
    }
}

#[test]
fn every_member_of_a_loop_lists_the_loop_among_its_findings() {
    let live = LiveSheet::open("a = b + 1 m\nb = c * 2\nc = a / 3\n");
    for name in ["a", "b", "c"] {
        let statement = live.cell_statement(live.cell_named(name).expect("cell"));
        let findings = live.statement_findings(statement);
        assert_eq!(findings.len(), 1, "{name}: {findings:?}");
        assert_eq!(findings[0].code, Code::Cycle);
        // Placed where it is reported: the first member's name, line 1.
        assert_eq!((findings[0].line, findings[0].column), (1, 1));
    }
}

/// Sheets with solve and simulate blocks, tolerances and load cases: their
/// results depend on the whole sheet, so every edit evaluates it whole, and
/// the live sheet still agrees with `heft check`'s evaluation.
#[test]
fn sheets_with_blocks_tolerances_and_cases_stay_equal_to_a_full_evaluation() {
    let sheets = [
        include_str!("../../sheets/lift_slide_clamp.heft"),
        include_str!("../../sheets/hoist_runup.heft"),
        include_str!("../../sheets/gantry_cases.heft"),
        include_str!("../../sheets/ramp_tug.heft"),
        include_str!("../../sheets/package_drop.heft"),
        include_str!("../../sheets/fixture_mount_impact.heft"),
    ];
    for text in sheets {
        let mut live = LiveSheet::open(text);
        assert_matches_full_evaluation(&live);
        let input = (0..live.n_cells())
            .find(|&id| {
                live.cell(id).is_input && live.field_editor(id, CellField::Formula).is_some()
            })
            .expect("an input cell");
        let before: Vec<_> = (0..live.n_cells()).map(|id| live.cell(id).value).collect();
        let formula = live.cell_field(input, CellField::Formula);
        live.set_cell_field(input, CellField::Formula, &format!("1.25 * ({formula})"))
            .expect("edit");
        assert_matches_full_evaluation(&live);
        let after: Vec<_> = (0..live.n_cells()).map(|id| live.cell(id).value).collect();
        assert_ne!(
            before,
            after,
            "scaling an input changed nothing in\n{}",
            live.text()
        );
        assert_eq!(live.last_evaluated(), live.n_cells(), "evaluated whole");
    }
}

#[test]
fn a_solved_unknown_follows_an_edited_input() {
    let mut live = LiveSheet::open(include_str!("../../sheets/lift_slide_clamp.heft"));
    let unknown = live.cell_named("N_req").expect("N_req");
    let mass = live.cell_named("m_part").expect("m_part");
    let before = live.cell(unknown).value.expect("solved").si;
    let formula = live.cell_field(mass, CellField::Formula);
    live.set_cell_field(mass, CellField::Formula, &format!("2 * ({formula})"))
        .expect("edit");
    let after = live.cell(unknown).value.expect("solved").si;
    // N_req is proportional to m_part (SF · m · (g + a) = 2 μ N).
    assert!((after / before - 2.0).abs() < 1e-9, "{before} -> {after}");
    assert!(live.field_editor(unknown, CellField::Formula).is_none());
    assert!(matches!(
        live.set_cell_field(unknown, CellField::Formula, "3 N"),
        Err(EditError::NotOwnLine { .. })
    ));
}

#[test]
fn typing_a_block_head_regroups_the_lines_after_it() {
    let mut live = LiveSheet::open("m = 10 kg\nF = 50 N\nx = 1 m\n");
    live.replace_line(2, "solve a [m/s^2] ~ 1:").expect("edit");
    live.insert_line(3, "  F = m * a").expect("edit");
    live.insert_line(4, "end").expect("edit");
    assert_matches_full_evaluation(&live);
    let a = live.cell_named("a").expect("a");
    assert!((live.cell(a).value.expect("solved").si - 5.0).abs() < 1e-9);
}

/// A splice of several lines: a block's equation, a whole block, the
/// whole header, and two cells made three in a sheet without blocks.
/// Each ends where a fresh evaluation of the text does, and the inverses
/// give the text back byte for byte.
#[test]
fn splices_over_blocks_and_the_header_match_a_full_evaluation_and_undo_exactly() {
    let text = include_str!("../../sheets/lift_slide_clamp.heft");
    let mut live = LiveSheet::open(text);
    let solve_block = |live: &LiveSheet| {
        (0..live.n_statements())
            .find(|&s| live.statement_text(s).starts_with("solve"))
            .map(|s| live.statement_lines(s))
    };
    let lines = solve_block(&live).expect("the solve block");
    assert_eq!(lines.len(), 3);
    let unknown = live.cell_named("N_req").expect("N_req");
    let two_faces = live.cell(unknown).value.expect("solved").si;
    let four_faces = live
        .document()
        .plan(
            lines.start,
            lines.len(),
            &[
                "solve N_req [N] ~ 100:",
                "  SF * m_part * (g0 + a_up) = 4 * μ_jaw * N_req",
                "end",
            ],
        )
        .expect("plan");
    assert_eq!(
        four_faces.first,
        lines.start + 1,
        "only the equation changes"
    );
    live.apply(&four_faces).expect("apply");
    assert_matches_full_evaluation(&live);
    // SF m (g0 + a) = 4 μ N: half the force of two faces (closed form).
    let unknown = live.cell_named("N_req").expect("N_req");
    let solved = live.cell(unknown).value.expect("solved").si;
    assert!((solved - two_faces / 2.0).abs() < 1e-9 * two_faces);

    // A broken equation: the block is kept, marked, its finding placed on
    // the equation's own line and column, as `heft check` places it.
    let broken = live
        .document()
        .plan(
            lines.start + 1,
            1,
            &["  SF * m_part * (g0 + a_up) = 4 * μ_jaw * N_req +*"],
        )
        .expect("plan");
    live.apply(&broken).expect("apply");
    assert_matches_full_evaluation(&live);
    let finding = live
        .findings()
        .into_iter()
        .find(|f| f.code == heftsheet::base::Code::ParseError)
        .expect("the broken equation's finding");
    assert_eq!(finding.line, lines.start + 2);
    live.apply(&broken.inverse()).expect("undo");

    let removal = live
        .document()
        .plan(lines.start, lines.len(), &[])
        .expect("plan");
    live.apply(&removal).expect("apply");
    assert_matches_full_evaluation(&live);
    assert!(solve_block(&live).is_none());
    assert!(live.cell_named("N_req").is_none());

    let header = live.document().header_lines().expect("a header");
    let new_header = live
        .document()
        .plan(
            header.start,
            header.len(),
            &[
                "+++",
                "title = \"Clamp, four faces\"",
                "sig_figs = 6",
                "+++",
            ],
        )
        .expect("plan");
    live.apply(&new_header).expect("apply");
    assert_eq!(live.header().title.as_deref(), Some("Clamp, four faces"));
    assert_eq!(live.header().sig_figs, 6);
    assert_matches_full_evaluation(&live);

    for splice in [&new_header, &removal, &four_faces] {
        live.apply(&splice.inverse()).expect("undo");
        assert_matches_full_evaluation(&live);
    }
    assert_eq!(live.text(), text);
    // Undone once, the same undo no longer fits the text and is refused.
    assert!(matches!(
        live.apply(&four_faces.inverse()),
        Err(EditError::Stale { .. })
    ));
    assert_eq!(live.text(), text);

    let mut plain = LiveSheet::open(SKID_LIFT);
    let id = plain.cell_named("m_skid").expect("m_skid");
    let line = plain.cell(id).line - 1;
    let two_into_three = plain
        .document()
        .plan(
            line,
            2,
            &["m_skid = 1850 kg", "m_rig = 40 kg", "m_slings = 2 kg"],
        )
        .expect("plan");
    plain.apply(&two_into_three).expect("apply");
    assert_matches_full_evaluation(&plain);
    plain.apply(&two_into_three.inverse()).expect("undo");
    assert_matches_full_evaluation(&plain);
    assert_eq!(plain.text(), SKID_LIFT);
}

#[test]
fn piecewise_formulas_and_angles_edit_like_any_formula() {
    // The speed moves across the switch and back; the dependent results,
    // the branch taken and the unit shown (degrees for an inverse sine)
    // always match a fresh evaluation of the text.
    let mut live = LiveSheet::open(
        "v = 0.5 m/s\nphi = if v <= 1 m/s then 1.25 else 1.40\nT [kN] = phi * 1000 kg * g0\nθ = asin(0.5)\nψ = 2 * θ\n",
    );
    assert_matches_full_evaluation(&live);
    for speed in ["1.5 m/s", "1 m/s", "0.2 m/s"] {
        let id = live.cell_named("v").expect("v");
        live.set_cell_field(id, CellField::Formula, speed)
            .expect("edit");
        assert_matches_full_evaluation(&live);
    }
    live.replace_line(1, "phi = if v <= 1 m/s then 1.25 else 1.40 m")
        .expect("edit");
    assert_matches_full_evaluation(&live);
    let phi = live.cell_named("phi").expect("phi");
    assert_eq!(live.cell(phi).status, CellStatus::Error);
}
