//! The one way from a sheet to its results: decode, parse, link, evaluate
//! (solve and simulate blocks, tolerances, load cases), lint, and judge
//! every check. Every command (`check`, `report`, `audit`, `signoff`,
//! `diff`) calls [`run`] or [`run_bytes`], so no two can disagree on a
//! finding or a verdict; the notebook evaluates edits incrementally and is
//! held to the same counts by `tests/oracles.rs`.

use crate::eval::{self, Evaluated};

/// Parses, links, evaluates and lints a sheet's text.
pub fn run(source: &str) -> Evaluated {
    let mut evaluated = eval::evaluate_source(source);
    crate::audit::add_lints(&mut evaluated);
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
