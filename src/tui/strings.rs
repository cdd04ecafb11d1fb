//! Every word the notebook shows, in one place.

/// The program's name in the title bar.
pub const APP_NAME: &str = "heft";
/// Said on leaving after a termination signal.
pub const STOPPED_BY_SIGNAL: &str = "the notebook was stopped by a signal; unsaved work is kept beside the sheet and offered when it is opened again";
/// Title of a sheet whose header gives none.
pub const UNTITLED: &str = "(untitled sheet)";
/// Marks in the title bar for the file's state.
pub const STATE_SAVED: &str = "saved";
/// The file has edits that are not saved.
pub const STATE_MODIFIED: &str = "● modified";
/// The file does not exist yet.
pub const STATE_NEW: &str = "new file";

/// Column headings of the sheet table.
pub const COLUMN_STATE: &str = "state";
/// Column heading: the cell's name.
pub const COLUMN_NAME: &str = "name";
/// Column heading: the formula as written.
pub const COLUMN_FORMULA: &str = "formula";
/// Column heading: the value and unit.
pub const COLUMN_VALUE: &str = "value";

/// Status marks (each five columns wide, readable without colour).
pub const MARK_OK: &str = "ok";
/// A finding of warning severity.
pub const MARK_WARNING: &str = "warn";
/// The cell's own formula or definition is wrong.
pub const MARK_ERROR: &str = "error";
/// A cell it uses failed.
pub const MARK_BLOCKED: &str = "block";
/// A check that holds.
pub const MARK_PASS: &str = "pass";
/// A check that does not hold.
pub const MARK_FAIL: &str = "FAIL";
/// A check heft could not establish everywhere it must hold.
pub const MARK_UNKNOWN: &str = "unkn";
/// Checks not established, in the status line.
pub const UNKNOWN: &str = "unknown";
/// A note line.
pub const MARK_NOTE: &str = "note";

/// The detail pane.
pub const PANE_DETAIL: &str = "detail";
/// The help overlay.
pub const PANE_HELP: &str = "keys";
/// The findings overlay.
pub const PANE_FINDINGS: &str = "findings";
/// The find overlay.
pub const PANE_FIND: &str = "find a cell";

/// Detail labels.
pub const LABEL_FORMULA: &str = "formula";
/// The formula with values put in.
pub const LABEL_WITH_VALUES: &str = "with values";
/// The result.
pub const LABEL_RESULT: &str = "result";
/// The value in SI.
pub const LABEL_SI: &str = "in SI";
/// The value in FPS.
pub const LABEL_FPS: &str = "in FPS";
/// The cells this one uses.
pub const LABEL_USES: &str = "uses";
/// The cells and checks that use this one.
pub const LABEL_USED_BY: &str = "used by";
/// Findings on this line.
pub const LABEL_FINDINGS: &str = "findings";
/// The suggested fix.
pub const LABEL_FIX: &str = "fix";
/// The sheet's checks.
pub const LABEL_CHECKS: &str = "checks, failed and most used first";
/// Findings on other lines.
pub const LABEL_ELSEWHERE: &str = "findings elsewhere in the sheet";
/// A check's comparison.
pub const LABEL_COMPARES: &str = "compares";
/// A check's utilization.
pub const LABEL_UTILIZATION: &str = "utilization";
/// The line as written.
pub const LABEL_LINE: &str = "line";
/// Detail label: the range over the tolerances.
pub const LABEL_RANGE: &str = "range";
/// Detail label: the value or utilization in each load case.
pub const LABEL_CASES: &str = "load cases";
/// Detail label: a check's verdict and where it comes from.
pub const LABEL_VERDICT: &str = "verdict";
/// Detail label: a check at the worst case of the tolerances.
pub const LABEL_WORST: &str = "worst case";
/// Nothing to list.
pub const NONE: &str = "none";
/// The cell's input marker.
pub const INPUT: &str = "input";
/// A value that could not be computed.
pub const NO_VALUE: &str = "—";
/// Blocked by another cell.
pub const BLOCKED_BY: &str = "blocked by";

/// Unit view names in the status line.
pub const UNITS_SHEET: &str = "units as written";
/// Everything in SI.
pub const UNITS_SI: &str = "all SI";
/// Everything in FPS.
pub const UNITS_FPS: &str = "all FPS";
/// Significant figures.
pub const SIG_FIGS: &str = "sig. fig.";
/// The hint at the right of the status line.
pub const HINT_HELP: &str = "? keys";

/// Edit prompts, by what is edited.
pub const EDIT_FORMULA: &str = "formula";
/// Editing the unit.
pub const EDIT_UNIT: &str = "unit (empty: none)";
/// Editing the description.
pub const EDIT_DESCRIPTION: &str = "description (empty: none)";
/// Editing the name.
pub const EDIT_NAME: &str = "new name";
/// Editing a whole line.
pub const EDIT_LINE: &str = "line";
/// Editing a block's lines.
pub const EDIT_BLOCK: &str = "block";
/// Editing the header.
pub const EDIT_HEADER: &str = "header";
/// The header a sheet without one gets to fill in. Other keys: project,
/// date, checked_by, display ("SI" or "FPS"), sig_figs, case_results.
pub const NEW_HEADER: &[&str] = &[
    "+++",
    "title = \"\"",
    "revision = \"\"",
    "prepared_by = \"\"",
    "+++",
];
/// Adding a cell.
pub const ADD_CELL: &str = "new cell  name [unit] = formula \"description\"";
/// Adding a heading.
pub const ADD_HEADING: &str = "new heading";
/// Adding a note.
pub const ADD_NOTE: &str = "new note";
/// Adding a check.
pub const ADD_CHECK: &str = "new check  check A <= B \"label\"";
/// How an edit ends.
pub const EDIT_KEYS: &str = "Enter keep · Esc undo this edit";
/// How an edit of several lines ends.
pub const EDIT_BLOCK_KEYS: &str = "Enter new line · Ctrl+S keep · Esc undo this edit";

/// Questions.
pub const ASK_QUIT: &str =
    "Unsaved changes. s: save and quit · d: discard and quit · Esc: keep working";
/// The file changed on disk.
pub const ASK_OVERWRITE: &str =
    "The file changed on disk since it was opened. o: overwrite it · Esc: do not save";
/// A recovery copy was found.
pub const ASK_RECOVER: &str =
    "Unsaved work from an earlier session was kept. r: restore it · d: discard it";

/// Messages.
pub const SAVED: &str = "saved";
/// Nothing to save.
pub const NOTHING_TO_SAVE: &str = "nothing to save: no changes since the last save";
/// Nothing to undo.
pub const NOTHING_TO_UNDO: &str = "nothing to undo";
/// Nothing to redo.
pub const NOTHING_TO_REDO: &str = "nothing to redo";
/// Undone.
pub const UNDONE: &str = "undone";
/// Redone.
pub const REDONE: &str = "redone";
/// Not a cell.
pub const NOT_A_CELL: &str = "that is not a cell: Enter or e edits the whole line";
/// No jump to go back to.
pub const NO_JUMP_BACK: &str = "no earlier place to go back to";
/// Nothing to link to.
pub const NO_LINKS: &str = "this line uses nothing and nothing uses it";
/// Restored from the recovery copy.
pub const RESTORED: &str = "restored the unsaved work; save to keep it";
/// The recovery copy was discarded.
pub const DISCARDED: &str = "discarded the kept copy";
/// A comment was written.
pub const COMMENT_ADDED: &str = "kept as a comment or blank line: in the file, not shown as a row";
/// Shown when the notebook opens.
pub const OPENING_CAUTION: &str =
    "Results support, never replace, an engineer's judgment and an independent check";
/// No findings.
pub const NO_FINDINGS: &str = "no findings";
/// No cell matches.
pub const NO_MATCH: &str = "no cell by that name";
/// A new header kept as it came, with nothing typed.
pub const NO_HEADER_ADDED: &str = "no header added: nothing was typed into it";
/// The line cannot be deleted.
pub const NOTHING_TO_DELETE: &str = "nothing to delete";
/// Shown in an empty sheet.
pub const EMPTY_SHEET: &str =
    "Empty sheet: Enter or a adds a cell; h heading, t note, c check, T header.";
/// Help footer.
pub const HELP_FOOTER: &str = "Esc or ? closes · ↑↓ scroll";

/// The name column of a check row.
pub const ROW_CHECK: &str = "check";
/// The prompt of the find overlay.
pub const FIND_PROMPT: &str = "name › ";
/// Running the notebook without a terminal.
pub const NEEDS_TERMINAL: &str =
    "the notebook needs a terminal; for scripts and CI use `heft check FILE`";

/// A check by its number: `check 2`.
pub fn check_name(index: usize) -> String {
    format!("check {}", index + 1)
}

/// A line by its number: `line 12`.
pub fn line_name(line: usize) -> String {
    format!("line {line}")
}

/// The label of a sweep's number of points.
pub const LABEL_SWEEP_POINTS: &str = "points";

/// A sweep's points: `13 values; a study, no verdict changes`, or why
/// there are none.
pub fn sweep_points(n: usize) -> String {
    if n == 0 {
        "not run: see the findings".to_string()
    } else {
        format!("{n} values; a study: it changes no verdict")
    }
}

/// A check's label in a sweep's margins: `check 2`.
pub fn sweep_check_name(number: usize) -> String {
    format!("check {number}")
}

/// Lines by their numbers: `lines 12–15`, or `line 12`.
pub fn lines_name(first: usize, last: usize) -> String {
    if first >= last {
        line_name(first)
    } else {
        format!("lines {first}–{last}")
    }
}

/// Where the cursor is in an editor of several lines: `line 2 of 4`.
pub fn line_of(row: usize, n_lines: usize) -> String {
    format!("line {row} of {n_lines}")
}

/// What a delete did: `deleted (< undoes)`, `deleted 4 lines (< undoes)`.
pub fn deleted_lines(n_lines: usize) -> String {
    if n_lines == 1 {
        "deleted (< undoes)".to_string()
    } else {
        format!("deleted {n_lines} lines (< undoes)")
    }
}

/// `1 error`, `3 warnings`: the one plural rule of every front end.
pub use crate::eval::count;

/// A finding in the header, which has no row to jump to.
pub fn in_header(line: usize, message: &str) -> String {
    format!("line {line}: {message} (in the header)")
}

/// A save that failed.
pub fn save_failed(path: &std::path::Path, error: &std::io::Error) -> String {
    format!("could not save {}: {error}", path.display())
}

/// A recovery copy that could not be written or removed.
pub fn recovery_failed(path: &std::path::Path, error: &std::io::Error) -> String {
    format!(
        "could not keep or remove the recovery copy beside {}: {error}",
        path.display()
    )
}

/// The file could not be replaced: it is read-only.
pub const ASK_READ_ONLY: &str = "The file is read-only (or you may not write it). o: save over it anyway, keeping its permissions · Esc: do not save";
/// A further recovery copy after one was discarded.
pub const ASK_RECOVER_NEXT: &str =
    "More unsaved work was kept, by another earlier session. r: restore it · d: discard it";

/// Restored one kept copy while others stay on disk for the next opening.
pub fn restored_others_left(n_left: usize) -> String {
    format!(
        "{RESTORED}; {} more kept {} beside the sheet, offered when it is next opened",
        n_left,
        if n_left == 1 {
            "copy stays"
        } else {
            "copies stay"
        }
    )
}

/// A message, then what the notebook had to say on opening.
pub fn with_notice(message: &str, notice: Option<String>) -> String {
    match notice {
        Some(notice) => format!("{message} · {notice}"),
        None => message.to_string(),
    }
}

fn holder_words(other: &crate::tui::files::OtherNotebook) -> String {
    match &other.holder {
        Some(holder) => format!(
            "process {} on {}, open {} min",
            holder.pid,
            holder.host,
            holder.minutes_open()
        ),
        None => format!("lock {} unreadable", other.lock.display()),
    }
}

/// Other notebooks have the sheet open: said on opening.
pub fn other_notebooks(
    others: &[crate::tui::files::OtherNotebook],
    own_recovery: &std::path::Path,
) -> String {
    let who: Vec<String> = others.iter().map(holder_words).collect();
    format!(
        "{} this sheet open too ({}): unsaved work is kept apart, this notebook's in {}; a save asks if the other saved first",
        if others.len() == 1 {
            "another notebook has".to_string()
        } else {
            format!("{} other notebooks have", others.len())
        },
        who.join("; "),
        own_recovery
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_default()
    )
}

/// Another notebook opened the sheet while this one had it open.
pub fn other_notebook_opened(other: &crate::tui::files::OtherNotebook) -> String {
    format!(
        "another notebook opened this sheet ({}): a save asks if the other saved first",
        holder_words(other)
    )
}

/// No lock file could be made beside the sheet.
pub fn not_locked(error: &std::io::Error) -> String {
    format!("no lock on this sheet ({error}): another notebook opening it will not be told")
}

/// A file under a recovery copy's name that was not read.
pub fn recovery_copy_ignored(path: &std::path::Path, why: &crate::tui::files::Refusal) -> String {
    format!(
        "ignored {}: {why}, not a recovery copy heft wrote; remove it if it is not yours",
        path.display()
    )
}

/// Sizes of files, for the user: `12.5 MB`, `3 kB`.
fn size_words(bytes: u64) -> String {
    if bytes >= 1_000_000 {
        format!("{:.1} MB", bytes as f64 / 1e6)
    } else {
        format!("{} kB", bytes.div_ceil(1000))
    }
}

/// Temporary files of stopped saves were removed on opening.
pub fn temporary_files_removed(n: usize, bytes: u64, folder: &std::path::Path) -> String {
    format!(
        "removed {n} temporary {} ({}) left in {} by saves that were stopped",
        if n == 1 { "file" } else { "files" },
        size_words(bytes),
        folder.display()
    )
}

/// Temporary files heft cannot tell the owner of were left alone.
pub fn temporary_files_left(n: usize, folder: &std::path::Path) -> String {
    format!(
        "{n} temporary {} .heft-save-* in {} heft cannot tell the owner of (an older heft's?): left alone; remove them when no heft is saving there",
        if n == 1 { "file" } else { "files" },
        folder.display()
    )
}
