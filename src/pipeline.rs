//! The one way from a sheet to its results: decode, parse, link, evaluate
//! (solve and simulate blocks, tolerances, load cases), lint, and judge
//! every check; then every fix a finding offers is verified. Every command
//! (`check`, `report`, `audit`, `signoff`, `diff`) calls [`run`] or
//! [`run_bytes`], so no two can disagree on a finding, a fix or a verdict; the notebook evaluates edits incrementally and is
//! held to the same counts by `tests/language/oracles.rs`.

use std::path::Path;

use crate::base::Diagnostic;
use crate::eval::Evaluated;
use crate::include::FileLoader;
use crate::sheet::{NoFiles, SheetLoader};

pub use crate::include::{MAX_TABLE_FILE_LEN, read_sheet_files};

/// Parses, links, evaluates and lints a sheet's text, and checks every fix
/// a finding offers by evaluating the sheet with it applied
/// ([`crate::audit::verify_fixes`]) before it becomes the finding's help.
pub fn run(source: &str) -> Evaluated {
    run_with(source, &NoFiles)
}

/// [`run`] with the sheets its `use` lines name loaded by `loader`.
pub fn run_with(source: &str, loader: &dyn SheetLoader) -> Evaluated {
    let mut evaluated = crate::blocks::evaluate_source_with(source, loader);
    crate::audit::add_lints(&mut evaluated);
    crate::audit::verify_fixes(&mut evaluated);
    evaluated
}

/// [`run`] on a file's bytes: invalid UTF-8 is replaced and reported at its
/// first byte (an `encoding-error`), and the rest is still checked. A `use`
/// line is an error: the sheet has no folder (see [`run_file_bytes`]).
pub fn run_bytes(bytes: &[u8]) -> Evaluated {
    run_bytes_with(bytes, &NoFiles)
}

/// [`run_bytes`] of a sheet read from `path`: its `use` lines name sheets
/// relative to its folder.
pub fn run_file_bytes(bytes: &[u8], path: &Path) -> Evaluated {
    run_bytes_with(bytes, &FileLoader::for_sheet(path))
}

fn run_bytes_with(bytes: &[u8], loader: &dyn SheetLoader) -> Evaluated {
    let (text, encoding_problem) = crate::decode_source(bytes);
    let mut evaluated = run_with(&text, loader);
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
    lint_with(source, &NoFiles)
}

/// [`lint`] with the sheets its `use` lines name loaded by `loader`.
pub fn lint_with(source: &str, loader: &dyn SheetLoader) -> Linted {
    let mut evaluated = crate::blocks::evaluate_source_with(source, loader);
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
