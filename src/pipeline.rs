//! The one way from a sheet to its results: decode, parse, link, evaluate
//! (solve and simulate blocks, tolerances, load cases), lint, and judge
//! every check; then every fix a finding offers is verified. Every command
//! (`check`, `report`, `audit`, `signoff`, `diff`) calls [`run`] or
//! [`run_bytes`], so no two can disagree on a finding, a fix or a verdict; the notebook evaluates edits incrementally and is
//! held to the same counts by `tests/language/oracles.rs`.

use crate::base::Diagnostic;
use crate::eval::Evaluated;

/// Parses, links, evaluates and lints a sheet's text, and checks every fix
/// a finding offers by evaluating the sheet with it applied
/// ([`crate::audit::verify_fixes`]) before it becomes the finding's help.
pub fn run(source: &str) -> Evaluated {
    let mut evaluated = crate::blocks::evaluate_source(source);
    crate::audit::add_lints(&mut evaluated);
    crate::audit::verify_fixes(&mut evaluated);
    evaluated
}

/// [`run`] on a file's bytes: invalid UTF-8 is replaced and reported at its
/// first byte (an `encoding-error`), and the rest is still checked.
pub fn run_bytes(bytes: &[u8]) -> Evaluated {
    let (text, encoding_problem) = crate::decode_source(bytes);
    let mut evaluated = run(&text);
    if let Some(diagnostic) = encoding_problem {
        evaluated.diagnostics.insert(0, diagnostic);
    }
    evaluated
}

/// What the notebook's lint thread gives for a sheet's text: the lint
/// findings, and the evaluation findings that offer a fix with that fix
/// verified as [`run`] verifies it. The notebook evaluates edits itself, so
/// it takes these two from here to show what every command shows.
#[derive(Clone, Debug, PartialEq)]
pub struct Linted {
    /// The lint findings, fixes verified.
    pub lints: Vec<Diagnostic>,
    /// The evaluation findings that offered a fix, with their help now.
    pub fixed: Vec<Diagnostic>,
}

/// The lints and the verified fixes of `source` (see [`Linted`]).
pub fn lint(source: &str) -> Linted {
    let mut evaluated = crate::blocks::evaluate_source(source);
    let n_evaluation = evaluated.diagnostics.len();
    let offers_fix: Vec<bool> = evaluated
        .diagnostics
        .iter()
        .map(|diagnostic| !diagnostic.fixes.is_empty())
        .collect();
    let lints = crate::audit::lint(&evaluated);
    evaluated.diagnostics.extend(lints);
    crate::audit::verify_fixes(&mut evaluated);
    let lints = evaluated.diagnostics.split_off(n_evaluation);
    let fixed = evaluated
        .diagnostics
        .into_iter()
        .zip(offers_fix)
        .filter_map(|(diagnostic, offered)| offered.then_some(diagnostic))
        .collect();
    Linted { lints, fixed }
}
