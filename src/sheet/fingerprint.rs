//! The sheet's content fingerprint and per-cell digests.
//!
//! The fingerprint is the SHA-256 of the sheet's *normalized* text, so that
//! what a checker signed can be recognised later. Normalization, exactly:
//!
//! 1. the text is split into lines at `\n` (a `\r` before it is dropped);
//! 2. lines that hold a review mark or a sign-off are dropped (adding a mark,
//!    or signing, does not change what was checked);
//! 3. each remaining line is trimmed at both ends, and every run of spaces
//!    and tabs outside double quotes becomes one space (re-aligning columns
//!    changes nothing; text inside a description does);
//! 4. lines that are then empty are dropped;
//! 5. the lines are joined with `\n`, with a final `\n`, and hashed as UTF-8;
//! 6. then, for every file the sheet read beside it (a table's CSV file), in
//!    order of its path as written: the bytes `\0file\0`, the path's length
//!    (8 bytes, little-endian) and UTF-8, the file's length (8 bytes,
//!    little-endian) and its bytes, unnormalized ([`hash_read_files`]). A
//!    sheet that reads no file hashes its text alone.
//!
//! Everything else counts: the header, headings, notes, cells, checks and
//! `//` comments. A sheet that uses other sheets (`use "…" as gear`) then
//! has, for each in file order, a line `use ALIAS PATH FINGERPRINT` added
//! after its own lines (before the files of step 6), so an edit to a used sheet (or to one it uses in
//! turn) changes the fingerprint of every sheet over it; a sheet with no
//! `use` line keeps the fingerprint of its text alone. A cell's digest is
//! the first 8 hex digits of the SHA-256 of its own normalized line.

use sha2::{Digest, Sha256};

use crate::sheet::{Sheet, SheetFiles};
use crate::syntax::ast::StatementKind;

/// Number of hex digits kept of a cell digest.
pub const CELL_DIGEST_LEN: usize = 8;

/// The normalized text the fingerprint is taken of (see the module docs).
pub fn normalized_text(source: &str, sheet: &Sheet) -> String {
    let mut review_line_starts: Vec<usize> = sheet
        .statements
        .iter()
        .filter(|statement| {
            matches!(
                statement.kind,
                StatementKind::Review(_) | StatementKind::SignOff(_)
            )
        })
        .map(|statement| statement.span.start())
        .collect();
    review_line_starts.sort_unstable();
    let mut normalized = String::with_capacity(source.len());
    let mut line_start = 0;
    for line in source.split('\n') {
        let start = line_start;
        line_start += line.len() + 1;
        if review_line_starts.binary_search(&start).is_ok() {
            continue;
        }
        let before = normalized.len();
        normalize_line_into(line, &mut normalized);
        if normalized.len() > before {
            normalized.push('\n');
        }
    }
    normalized
}

/// Appends `line` trimmed, with blank runs outside quotes collapsed.
fn normalize_line_into(line: &str, out: &mut String) {
    let mut quotes = crate::syntax::Quotes::default();
    let mut pending_blank = false;
    for c in line.trim().chars() {
        if quotes.step(c) {
            out.push(c);
            continue;
        }
        if c == ' ' || c == '\t' || c == '\r' {
            pending_blank = true;
            continue;
        }
        if pending_blank {
            out.push(' ');
            pending_blank = false;
        }
        out.push(c);
    }
}

/// The sheet's fingerprint: 64 lower-case hex digits.
pub fn fingerprint(source: &str, sheet: &Sheet) -> String {
    let mut text = normalized_text(source, sheet);
    for import in &sheet.imports {
        // A sheet that could not be read is fingerprinted as missing: the
        // sheet over it cannot be signed as current once it is found.
        let used = import
            .sheet()
            .map_or("missing", |used| used.fingerprint.as_str());
        text.push_str(&format!(
            "use {} {} {used}\n",
            import.alias.text, import.path
        ));
    }
    let mut hasher = Sha256::new();
    hasher.update(text.as_bytes());
    hash_read_files(&mut hasher, &sheet.files);
    hex(&hasher.finalize())
}

/// Adds the files a sheet read (a table's CSV file) to a fingerprint: for
/// each, in path order, a separator, the path's length and the path, the
/// content's length and the content. A sheet that read none adds nothing.
pub fn hash_read_files(hasher: &mut Sha256, files: &SheetFiles) {
    for (path, bytes) in files.read_files() {
        hasher.update(b"\0file\0");
        hasher.update((path.len() as u64).to_le_bytes());
        hasher.update(path.as_bytes());
        hasher.update((bytes.len() as u64).to_le_bytes());
        hasher.update(bytes);
    }
}

/// The digest of one statement's text (its normalized line), 8 hex digits.
pub fn statement_digest(statement_text: &str) -> String {
    let mut line = String::with_capacity(statement_text.len());
    normalize_line_into(statement_text, &mut line);
    let mut digest = hex(&Sha256::digest(line.as_bytes()));
    digest.truncate(CELL_DIGEST_LEN);
    digest
}

/// Bytes as lower-case hex, two digits a byte.
fn hex(bytes: &[u8]) -> String {
    use std::fmt::Write as _;
    bytes
        .iter()
        .fold(String::with_capacity(bytes.len() * 2), |mut text, byte| {
            let _ = write!(text, "{byte:02x}");
            text
        })
}
