//! The one way from a sheet to its results: decode, parse, link, evaluate
//! (solve and simulate blocks, tolerances, load cases), lint, and judge
//! every check; then every fix a finding offers is verified. Every command
//! (`check`, `report`, `audit`, `signoff`, `diff`) calls [`run`] or
//! [`run_bytes`], so no two can disagree on a finding, a fix or a verdict; the notebook evaluates edits incrementally and is
//! held to the same counts by `tests/language/oracles.rs`.

use std::io::Read as _;
use std::path::Path;
use std::sync::Arc;

use crate::base::Diagnostic;
use crate::eval::Evaluated;
use crate::sheet::SheetFiles;

/// The largest file a table reads (a load chart is a few kilobytes).
pub const MAX_TABLE_FILE_LEN: u64 = 16 * 1024 * 1024;

/// Reads the files the sheet at `sheet_path` names (its tables' CSV files)
/// from the sheet's folder: the one place a sheet's own files are read, by
/// every front end, before evaluation. A path must be relative; only a
/// regular file of at most [`MAX_TABLE_FILE_LEN`] bytes is read (a pipe or
/// a device would never end). What cannot be read is kept with the reason,
/// which the table's error gives.
pub fn read_sheet_files(sheet_path: &Path, source: &str) -> SheetFiles {
    let folder = sheet_path
        .parent()
        .filter(|folder| !folder.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let mut files = SheetFiles::in_folder(format!("the sheet's folder {}", folder.display()));
    for path in crate::syntax::table_files(source) {
        let read = read_table_file(folder, &path);
        files = files.with_file(path, read);
    }
    files
}

fn read_table_file(folder: &Path, path: &str) -> Result<Vec<u8>, String> {
    let relative = Path::new(path);
    if relative.is_absolute() {
        return Err(format!(
            "`{path}` is an absolute path; a table's file is named relative to the sheet's folder"
        ));
    }
    let full = folder.join(relative);
    let metadata = std::fs::metadata(&full)
        .map_err(|error| format!("{} cannot be read: {error}", full.display()))?;
    if !metadata.is_file() {
        return Err(format!("{} is not a regular file", full.display()));
    }
    if metadata.len() > MAX_TABLE_FILE_LEN {
        return Err(format!(
            "{} is larger than {MAX_TABLE_FILE_LEN} bytes",
            full.display()
        ));
    }
    let mut bytes = Vec::new();
    std::fs::File::open(&full)
        .and_then(|file| file.take(MAX_TABLE_FILE_LEN + 1).read_to_end(&mut bytes))
        .map_err(|error| format!("{} cannot be read: {error}", full.display()))?;
    if bytes.len() as u64 > MAX_TABLE_FILE_LEN {
        return Err(format!(
            "{} is larger than {MAX_TABLE_FILE_LEN} bytes",
            full.display()
        ));
    }
    Ok(bytes)
}

/// Parses, links, evaluates and lints a sheet's text, and checks every fix
/// a finding offers by evaluating the sheet with it applied
/// ([`crate::audit::verify_fixes`]) before it becomes the finding's help.
pub fn run(source: &str) -> Evaluated {
    run_with_files(source, Arc::default())
}

/// [`run`] for a sheet whose tables read their files from `files` (see
/// [`read_sheet_files`]).
pub fn run_with_files(source: &str, files: Arc<SheetFiles>) -> Evaluated {
    let mut evaluated = crate::blocks::evaluate_source_with_files(source, files);
    crate::audit::add_lints(&mut evaluated);
    crate::audit::verify_fixes(&mut evaluated);
    evaluated
}

/// [`run`] on a file's bytes: invalid UTF-8 is replaced and reported at its
/// first byte (an `encoding-error`), and the rest is still checked.
pub fn run_bytes(bytes: &[u8]) -> Evaluated {
    run_bytes_with_files(bytes, Arc::default())
}

/// [`run_bytes`] for a sheet whose tables read their files from `files`.
pub fn run_bytes_with_files(bytes: &[u8], files: Arc<SheetFiles>) -> Evaluated {
    let (text, encoding_problem) = crate::decode_source(bytes);
    let mut evaluated = run_with_files(&text, files);
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
    lint_with_files(source, Arc::default())
}

/// [`lint`] for a sheet whose tables read their files from `files`.
pub fn lint_with_files(source: &str, files: Arc<SheetFiles>) -> Linted {
    let mut evaluated = crate::blocks::evaluate_source_with_files(source, files);
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
