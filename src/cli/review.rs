//! The checker's workflow on the command line: `heft signoff` prints the
//! sign-off line for a sheet, and `heft check` lists open review marks and
//! the state of the sign-off.

use std::fmt::Write as _;
use std::io;
use std::path::Path;

use super::{EXIT_CLEAN, EXIT_FINDINGS, eprint, load_sheet, print};
use crate::eval::{Evaluated, OutlineItem};
use crate::review::{self, MarkTarget, Review, SignOffState};

/// Runs `heft signoff FILE --by NAME --on DATE`: prints the line to add to
/// the sheet (heft never rewrites a sheet). Refuses a sheet with errors or
/// failed checks (exit 1), a bad name or date (exit 2).
pub fn run_signoff(path: &Path, by: &str, on: &str) -> io::Result<u8> {
    let invalid = |message: String| io::Error::new(io::ErrorKind::InvalidInput, message);
    if by.trim().is_empty() || by.chars().any(char::is_control) {
        return Err(invalid(
            "--by needs the checker's name on one line".to_string(),
        ));
    }
    let is_date = on.len() == 10
        && on
            .parse::<toml::value::Datetime>()
            .is_ok_and(|value| value.date.is_some() && value.time.is_none());
    if !is_date {
        return Err(invalid(format!(
            "--on {on} is not a date: write YYYY-MM-DD"
        )));
    }
    let evaluated = load_sheet(path)?;
    let review = Review::of(&evaluated);
    let open: Vec<String> = review
        .open_marks()
        .map(|mark| {
            let text = mark
                .text
                .as_deref()
                .map(|t| format!(": {t}"))
                .unwrap_or_default();
            format!(
                "  line {}: {} on {}{text}",
                mark.line,
                mark.kind.keyword(),
                target_text(&evaluated, mark.target)
            )
        })
        .collect();
    if !open.is_empty() {
        eprint(
            &format!(
                "heft: {} has {} open review mark{} (a required change or a question); a sheet is signed off only when every one is answered:\n{}\n",
                path.display(),
                open.len(),
                if open.len() == 1 { "" } else { "s" },
                open.join("\n")
            ),
            false,
        );
        return Ok(EXIT_FINDINGS);
    }
    if !evaluated.is_clean() {
        eprint(
            &format!(
                "heft: {} has errors or failed checks (run `heft check`); a sheet is signed off only when it is clean\n",
                path.display()
            ),
            false,
        );
        return Ok(EXIT_FINDINGS);
    }
    print(
        &format!("{}\n", review::signoff_line(&evaluated, by, on)),
        false,
    )?;
    Ok(EXIT_CLEAN)
}

/// The review part of `heft check`'s text: open marks and the sign-off's
/// state. Empty when the sheet has neither marks nor a sign-off.
pub fn review_text(evaluated: &Evaluated) -> String {
    let review = Review::of(evaluated);
    let mut out = String::new();
    if review.marks.is_empty() && review.signoffs.is_empty() {
        return out;
    }
    let _ = writeln!(out, "\nReview");
    for mark in review.open_marks() {
        let text = mark
            .text
            .as_deref()
            .map(|t| format!(": {t}"))
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "  open {:<8} on {} (line {}){text}  [{}, {}]",
            mark.kind.keyword(),
            target_text(evaluated, mark.target),
            mark.line,
            mark.by,
            mark.on
        );
    }
    let n_open = review.open_marks().count();
    let _ = writeln!(
        out,
        "  {n_open} open of {} review marks",
        review.marks.len()
    );
    match review.signoff() {
        None => {
            let _ = writeln!(out, "  not signed off");
        }
        Some(signoff) => {
            let state = match &signoff.state {
                SignOffState::Current => "current (the sheet is the one signed)".to_string(),
                SignOffState::Stale(changes) => format!(
                    "STALE: the sheet changed after sign-off; {}",
                    crate::report::stale_summary(changes)
                ),
            };
            let _ = writeln!(
                out,
                "  signed off by {} on {} (line {}): {state}",
                signoff.by, signoff.on, signoff.line
            );
        }
    }
    // No colour here: the whole block is sheet text and plain words.
    crate::base::visible::visible_output(&out, false).into_owned()
}

/// What a mark is about, in words.
pub(super) fn target_text(evaluated: &Evaluated, target: MarkTarget) -> String {
    match target {
        MarkTarget::Sheet => "the sheet".to_string(),
        MarkTarget::Cell(id) => evaluated.cell_at(id).name.to_string(),
        MarkTarget::Check(index) => {
            let check = &evaluated.checks[index];
            format!(
                "check {} {} {}",
                check.lhs_text,
                check.comparison.symbol(),
                check.rhs_text
            )
        }
        MarkTarget::Heading(position) => match evaluated.outline.get(position) {
            Some(OutlineItem::Heading { text, .. }) => format!("heading \"{text}\""),
            _ => "a heading".to_string(),
        },
    }
}
