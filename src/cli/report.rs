//! `heft report FILE -o OUT.html|OUT.md`: the calc report, written to a file.

use std::io;
use std::path::Path;

use super::{EXIT_CLEAN, EXIT_FINDINGS, load_sheet};
use crate::report::{self, Format};

/// Runs `heft report`.
pub fn run(path: &Path, output: &Path) -> io::Result<u8> {
    let format = format_of(output)?;
    if same_file(path, output) {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "the report would overwrite the sheet {}; choose another output file",
                path.display()
            ),
        ));
    }
    let evaluated = load_sheet(path)?;
    let text = report::render(&evaluated, format);
    std::fs::write(output, text).map_err(|error| {
        io::Error::new(
            error.kind(),
            format!("cannot write {}: {error}", output.display()),
        )
    })?;
    let kind = match format {
        Format::Html => "HTML",
        Format::Markdown => "Markdown",
    };
    super::print(
        &format!(
            "wrote {} ({kind} report of {})\n",
            output.display(),
            path.display()
        ),
        false,
    )?;
    Ok(if evaluated.is_clean() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

/// The format an output file's extension asks for.
fn format_of(output: &Path) -> io::Result<Format> {
    let extension = output
        .extension()
        .and_then(|ext| ext.to_str())
        .map(str::to_ascii_lowercase);
    match extension.as_deref() {
        Some("html" | "htm") => Ok(Format::Html),
        Some("md" | "markdown") => Ok(Format::Markdown),
        _ => Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "cannot tell the report format from {}: end the file name in .html or .md",
                output.display()
            ),
        )),
    }
}

/// Whether two paths name the same existing file: the same device and
/// inode (volume and file index on Windows), so a hard link, a symbolic
/// link or a bind mount of the sheet counts as the sheet.
fn same_file(a: &Path, b: &Path) -> bool {
    same_file::is_same_file(a, b).unwrap_or(false)
}
