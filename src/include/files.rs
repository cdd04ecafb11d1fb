//! The files a sheet's tables read beside it (a load chart's CSV file),
//! read from the sheet's folder before evaluation.

use std::io::Read as _;
use std::path::Path;

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
    read_files_in(folder, source)
}

/// The files `source` names, read from `folder` (see [`read_sheet_files`]).
pub(super) fn read_files_in(folder: &Path, source: &str) -> SheetFiles {
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
