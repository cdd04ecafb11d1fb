//! Review marks and sign-off in the sheet: syntax, round trip, attachment,
//! the fingerprint's normalization, and stale sign-offs naming what changed.

use crate::common;

use heftsheet::blocks::evaluate_source;
use heftsheet::review::{self, MarkTarget, Review, SignOffState};
use heftsheet::syntax::ast::ReviewKind;

const SHEET: &str = r#"+++
title = "Fixture plate hoist"
revision = "A"
+++
review question "Is this the right plate?" by "K. Brandt" on 2026-12-01
# Loads
m_plate = 120 kg        "fixture plate"
review change "Weigh the plate" by "K. Brandt" on 2026-12-01
a = 0.4 m/s^2
T [kN] = m_plate * (g0 + a)   "sling tension"
review accepted by "K. Brandt" on 2026-12-02
check T <= 5 kN "sling within its rating"
review resolved "Rating from the tag" by "R. Okafor" on 2026-12-03
"#;

#[test]
fn marks_attach_to_the_item_above_them() {
    let evaluated = common::run_clean(SHEET);
    let review = Review::of(&evaluated);
    let targets: Vec<(ReviewKind, MarkTarget)> =
        review.marks.iter().map(|m| (m.kind, m.target)).collect();
    let plate = evaluated.cell("m_plate").expect("m_plate").id;
    let tension = evaluated.cell("T").expect("T").id;
    assert_eq!(
        targets,
        [
            (ReviewKind::Question, MarkTarget::Sheet),
            (ReviewKind::Change, MarkTarget::Cell(plate)),
            (ReviewKind::Accepted, MarkTarget::Cell(tension)),
            (ReviewKind::Resolved, MarkTarget::Check(0)),
        ]
    );
    let mark = &review.marks[1];
    assert_eq!(mark.text.as_deref(), Some("Weigh the plate"));
    assert_eq!(mark.by, "K. Brandt");
    assert_eq!(mark.on, "2026-12-01");
    assert_eq!(mark.line, 8);
    assert_eq!(review.open_marks().count(), 2);
    // Marks are not content: the sheet still has exactly its three cells and one check.
    assert_eq!(evaluated.n_cells(), 3);
    assert_eq!(evaluated.checks.len(), 1);
}

#[test]
fn a_mark_under_a_heading_belongs_to_the_heading() {
    let source =
        "# Loads\n> a note\nreview question \"Which crane?\" by \"K\" on 2026-12-01\nm = 3 kg\n";
    let evaluated = common::run_clean(source);
    let review = Review::of(&evaluated);
    assert_eq!(review.marks[0].target, MarkTarget::Heading(0));
}

#[test]
fn a_signoff_line_round_trips_and_is_current() {
    let evaluated = common::run_clean(SHEET);
    let line = review::signoff_line(&evaluated, "K. \"Kit\" Brandt", "2026-12-04");
    assert!(line.starts_with("signoff by \"K. \\\"Kit\\\" Brandt\" on 2026-12-04 fingerprint "));
    let signed = format!("{SHEET}{line}\n");
    let evaluated = common::run_clean(&signed);
    let review = Review::of(&evaluated);
    let signoff = review.signoff().expect("a sign-off");
    assert_eq!(signoff.by, "K. \"Kit\" Brandt");
    assert_eq!(signoff.on, "2026-12-04");
    assert_eq!(signoff.state, SignOffState::Current);
    // Printing the sign-off again from the signed sheet gives the same line:
    // the sign-off itself is not part of what it signs.
    assert_eq!(
        review::signoff_line(&evaluated, "K. \"Kit\" Brandt", "2026-12-04"),
        line
    );
}

fn fingerprint_of(source: &str) -> String {
    Review::of(&evaluate_source(source)).fingerprint
}

#[test]
fn the_fingerprint_ignores_marks_blank_lines_and_alignment() {
    let base = fingerprint_of(SHEET);
    assert_eq!(base.len(), 64);
    assert!(base.chars().all(|c| c.is_ascii_hexdigit()));
    let without_marks: String = SHEET
        .lines()
        .filter(|line| !line.starts_with("review"))
        .map(|line| format!("{line}\n"))
        .collect();
    assert_eq!(
        fingerprint_of(&without_marks),
        base,
        "review marks changed it"
    );
    let realigned = SHEET.replace("m_plate = 120 kg        ", "m_plate    =   120 kg ");
    assert_eq!(
        fingerprint_of(&realigned),
        base,
        "blanks outside quotes changed it"
    );
    let spaced = format!("\n\n{}\n\n   \n", SHEET.replace('\n', "\r\n\n"));
    assert_eq!(
        fingerprint_of(&spaced),
        base,
        "blank lines or CRLF changed it"
    );
}

#[test]
fn the_fingerprint_sees_every_change_to_content() {
    let base = fingerprint_of(SHEET);
    for (from, to) in [
        ("120 kg", "125 kg"),
        ("\"fixture plate\"", "\"fixture  plate\""),
        ("check T <= 5 kN", "check T < 5 kN"),
        ("# Loads", "# Load"),
        ("revision = \"A\"", "revision = \"B\""),
        ("a = 0.4 m/s^2", "a = 0.4 m/s^2 // from the drive"),
    ] {
        assert!(SHEET.contains(from));
        assert_ne!(
            fingerprint_of(&SHEET.replace(from, to)),
            base,
            "{from} → {to}"
        );
    }
}

#[test]
fn a_stale_signoff_names_changed_added_removed_and_affected_cells() {
    let evaluated = common::run_clean(SHEET);
    let line = review::signoff_line(&evaluated, "K. Brandt", "2026-12-04");
    let revised = format!("{SHEET}{line}\n")
        .replace("a = 0.4 m/s^2", "a = 0.6 m/s^2")
        .replace(
            "m_plate = 120 kg        \"fixture plate\"\n",
            "m_plate = 120 kg        \"fixture plate\"\nm_bolts = 4 kg\n",
        );
    let evaluated = common::run_clean(&revised);
    let review = Review::of(&evaluated);
    let SignOffState::Stale(changes) = &review.signoff().expect("sign-off").state else {
        panic!("the sign-off should be stale");
    };
    assert_eq!(changes.changed, ["a"]);
    assert_eq!(changes.added, ["m_bolts"]);
    assert!(changes.removed.is_empty());
    assert_eq!(changes.affected, ["T"]);

    let removed =
        format!("{SHEET}{line}\n").replace("check T <= 5 kN \"sling within its rating\"\n", "");
    let review = Review::of(&evaluate_source(&removed));
    let SignOffState::Stale(changes) = &review.signoff().expect("sign-off").state else {
        panic!("removing a check must make the sign-off stale");
    };
    assert_eq!(changes.removed, ["check/1"]);
    assert!(!changes.only_other_text());
    assert_eq!(heftsheet::report::stale_summary(changes), "removed check 1");
}

#[test]
fn a_stale_signoff_names_an_edited_load_case() {
    let sheet = format!("{SHEET}case heavy \"heavier plate\":\n  m_plate = 150 kg\nend\n");
    let evaluated = common::run_clean(&sheet);
    let line = review::signoff_line(&evaluated, "K. Brandt", "2026-12-04");
    assert!(line.contains(" case/heavy:"), "{line}");
    let revised = format!("{sheet}{line}\n").replace("m_plate = 150 kg", "m_plate = 160 kg");
    let review = Review::of(&evaluate_source(&revised));
    let SignOffState::Stale(changes) = &review.signoff().expect("sign-off").state else {
        panic!("editing a case must make the sign-off stale");
    };
    assert_eq!(changes.changed, ["case/heavy"]);
    assert_eq!(
        heftsheet::report::stale_summary(changes),
        "changed case heavy"
    );
}

#[test]
fn an_older_signoff_with_cell_digests_only_names_no_case_or_check() {
    // A sign-off line written before cases and checks had digests: its
    // cells alone are compared, so the checks are not "added".
    let evaluated = common::run_clean(SHEET);
    let line = review::signoff_line(&evaluated, "K. Brandt", "2026-12-04");
    let cells_only: String = line
        .split(' ')
        .filter(|word| !word.starts_with("case/") && !word.starts_with("check/"))
        .collect::<Vec<_>>()
        .join(" ");
    let revised = format!("{SHEET}{cells_only}\n").replace("a = 0.4 m/s^2", "a = 0.6 m/s^2");
    let review = Review::of(&evaluate_source(&revised));
    let SignOffState::Stale(changes) = &review.signoff().expect("sign-off").state else {
        panic!("the sign-off should be stale");
    };
    assert_eq!(changes.changed, ["a"]);
    assert!(changes.added.is_empty(), "{:?}", changes.added);
}

#[test]
fn review_lines_that_do_not_parse_say_what_is_expected() {
    for (line, expected) in [
        ("review maybe \"x\" by \"K\" on 2026-12-01", "a review kind"),
        ("review question \"x\" on 2026-12-01", "`by`"),
        ("review question \"x\" by \"K\"", "`on` and a date"),
        (
            "review question \"x\" by \"K\" on 2026-13-01",
            "not a calendar date",
        ),
        (
            "review question \"x\" by \"K\" on 2026-02-30",
            "not a calendar date",
        ),
        (
            "signoff by \"K\" on 2026-12-01 fingerprint abc",
            "64 hex digits",
        ),
    ] {
        let evaluated = evaluate_source(&format!("m = 3 kg\n{line}\n"));
        let messages: Vec<&str> = evaluated
            .diagnostics
            .iter()
            .map(|d| d.message.as_str())
            .collect();
        assert_eq!(common::codes(&evaluated), ["parse-error"], "{line}");
        assert!(
            messages[0].contains(expected),
            "{line}: expected `{expected}` in {messages:?}"
        );
        assert_eq!(
            evaluated
                .lines
                .line_of(evaluated.diagnostics[0].span.start()),
            1
        );
    }
}

#[test]
fn a_cell_named_review_is_still_a_cell() {
    let evaluated = common::run_clean("review = 3 kg\nsignoff [N] = review * g0\n");
    assert_eq!(evaluated.n_cells(), 2);
    assert!(Review::of(&evaluated).marks.is_empty());
}

mod properties {
    use proptest::prelude::*;

    use heftsheet::blocks::evaluate_source;
    use heftsheet::review::Review;

    fn fingerprint_of(source: &str) -> String {
        Review::of(&evaluate_source(source)).fingerprint
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// Review marks and blank lines anywhere never change the fingerprint.
        #[test]
        fn marks_and_blank_lines_keep_the_fingerprint(
            insert_at in proptest::collection::vec((0usize..20, 0usize..3), 0..8),
        ) {
            let base = super::SHEET;
            let mut lines: Vec<String> = base.lines().map(str::to_string).collect();
            // After the header's closing `+++` (line 3) only: a review line
            // inside the TOML header would be header text, not a mark.
            for (position, kind) in insert_at {
                let at = 4 + position % (lines.len() - 3);
                let line = match kind {
                    0 => "review question \"why?\" by \"Q\" on 2026-12-01".to_string(),
                    1 => "   ".to_string(),
                    _ => String::new(),
                };
                lines.insert(at, line);
            }
            let edited = lines.join("\n");
            prop_assert_eq!(fingerprint_of(&edited), fingerprint_of(base));
        }

        /// Changing any one digit of the sheet changes the fingerprint.
        #[test]
        fn any_digit_changes_the_fingerprint(index in 0usize..1000) {
            let base = super::SHEET;
            let digits: Vec<usize> = base
                .char_indices()
                .filter(|(_, c)| c.is_ascii_digit())
                .map(|(i, _)| i)
                .collect();
            let at = digits[index % digits.len()];
            let original = base.as_bytes()[at];
            let replacement = if original == b'9' { '0' } else { char::from(original + 1) };
            let mut edited = base.to_string();
            edited.replace_range(at..at + 1, &replacement.to_string());
            // A digit inside a review line is not content: skip those.
            let line = edited[..at].rsplit('\n').next().unwrap_or("");
            prop_assume!(!line.trim_start().starts_with("review"));
            prop_assert_ne!(fingerprint_of(&edited), fingerprint_of(base));
        }
    }
}

#[test]
fn the_normalized_text_is_exactly_as_documented() {
    let source = "+++\r\ntitle = \"Plate   lift\"\r\n+++\r\n\r\n  m   =  3 kg\t\"a  plate\"   // weighed \r\nreview accepted by \"K\" on 2026-12-01\n\n# Loads\t\n";
    let evaluated = evaluate_source(source);
    assert_eq!(
        review::normalized_text(source, evaluated.sheet()),
        "+++\ntitle = \"Plate   lift\"\n+++\nm = 3 kg \"a  plate\" // weighed\n# Loads\n"
    );
}
