//! The files a sheet reads beside it (a table's CSV file), as the front end
//! read them before evaluation: `sheet` does no I/O, so the bytes are handed
//! in, and a file's bytes belong to the sheet's fingerprint
//! (`sheet::fingerprint`).

use std::collections::BTreeMap;
use std::sync::Arc;

/// The files named by a sheet, read from its folder.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct SheetFiles {
    /// The sheet's folder as shown in messages; `None` for a sheet that has
    /// no file (read from standard input or from text), which can read none.
    pub folder: Option<String>,
    /// Each file by its path as written in the sheet: its bytes, or why it
    /// could not be read.
    pub files: BTreeMap<String, Result<Arc<[u8]>, String>>,
}

impl SheetFiles {
    /// The files of a sheet read from a file in `folder`.
    pub fn in_folder(folder: impl Into<String>) -> SheetFiles {
        SheetFiles {
            folder: Some(folder.into()),
            files: BTreeMap::new(),
        }
    }

    /// Adds a file's bytes (or why it could not be read) under the path the
    /// sheet writes.
    pub fn with_file(mut self, path: impl Into<String>, read: Result<Vec<u8>, String>) -> Self {
        self.files.insert(path.into(), read.map(Arc::from));
        self
    }

    /// The bytes of the file the sheet names `path`, or why there are none.
    pub fn bytes(&self, path: &str) -> Result<&[u8], String> {
        match (&self.folder, self.files.get(path)) {
            (_, Some(Ok(bytes))) => Ok(bytes),
            (_, Some(Err(reason))) => Err(reason.clone()),
            (None, None) => Err(format!(
                "this sheet was not read from a file, so it has no folder to read `{path}` from"
            )),
            (Some(folder), None) => Err(format!("`{path}` was not read from {folder}")),
        }
    }

    /// Every file read, by path, with its bytes (in path order): what the
    /// fingerprint covers beside the sheet's own text.
    pub fn read_files(&self) -> impl Iterator<Item = (&str, &[u8])> {
        self.files
            .iter()
            .filter_map(|(path, read)| Some((path.as_str(), read.as_deref().ok()?)))
    }
}
