//! The notebook's file I/O, called only from the event loop: opening a
//! sheet, noticing that it changed on disk, saving it atomically, and the
//! recovery copy that keeps unsaved work through a crash.

use std::collections::hash_map::DefaultHasher;
use std::fs;
use std::hash::{Hash, Hasher};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// What the notebook knows of the file's bytes on disk, to tell whether
/// someone else changed it since.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Fingerprint {
    len: u64,
    hash: u64,
}

impl Fingerprint {
    /// The fingerprint of `bytes`.
    pub fn of(bytes: &[u8]) -> Fingerprint {
        let mut hasher = DefaultHasher::new();
        bytes.hash(&mut hasher);
        Fingerprint {
            len: bytes.len() as u64,
            hash: hasher.finish(),
        }
    }
}

/// A sheet as opened.
#[derive(Clone, Debug)]
pub struct Opened {
    /// Where it lives.
    pub path: PathBuf,
    /// Its text (empty for a new file).
    pub text: String,
    /// Its fingerprint on disk; `None` if the file does not exist yet.
    pub disk: Option<Fingerprint>,
    /// Unsaved work kept from an earlier session, if it differs from the file.
    pub recovery: Option<String>,
}

/// Opens `path` for the notebook; a file that does not exist is a new,
/// empty sheet. A file that is not UTF-8 is refused: the notebook could
/// not save it back unchanged.
pub fn open(path: &Path) -> io::Result<Opened> {
    let (text, disk) = match fs::read(path) {
        Ok(bytes) => {
            let disk = Fingerprint::of(&bytes);
            (text_of(path, bytes)?, Some(disk))
        }
        Err(error) if error.kind() == io::ErrorKind::NotFound => (String::new(), None),
        Err(error) => {
            return Err(io::Error::new(
                error.kind(),
                format!("cannot read {}: {error}", path.display()),
            ));
        }
    };
    let recovery = match fs::read(recovery_path(path)) {
        Ok(bytes) => String::from_utf8(bytes).ok().filter(|kept| *kept != text),
        Err(_) => None,
    };
    Ok(Opened {
        path: path.to_path_buf(),
        text,
        disk,
        recovery,
    })
}

fn text_of(path: &Path, bytes: Vec<u8>) -> io::Result<String> {
    if bytes.len() > crate::syntax::MAX_SOURCE_LEN {
        return Err(io::Error::new(
            io::ErrorKind::InvalidData,
            format!("{} is larger than 4 GiB", path.display()),
        ));
    }
    String::from_utf8(bytes).map_err(|error| {
        io::Error::new(
            io::ErrorKind::InvalidData,
            format!(
                "{} is not valid UTF-8 from byte {} on, so the notebook could not save it back unchanged; \
                 `heft check` shows the place, and the file must be saved as UTF-8 first",
                path.display(),
                error.utf8_error().valid_up_to()
            ),
        )
    })
}

/// Where unsaved work on `path` is kept: a hidden file beside it.
pub fn recovery_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|name| name.to_string_lossy().into_owned())
        .unwrap_or_else(|| "sheet".to_string());
    path.with_file_name(format!(".{name}.heft-unsaved"))
}

/// Why a save did not happen.
#[derive(Debug)]
pub enum SaveError {
    /// The file on disk is not what was opened (or last saved).
    ChangedOnDisk,
    /// Writing failed.
    Io(io::Error),
}

/// Saves `text` to `path` atomically. Unless `overwrite`, refuses when the
/// file on disk no longer has the fingerprint `expected` (`None`: the file
/// must still not exist). Returns the new fingerprint.
pub fn save(
    path: &Path,
    text: &str,
    expected: Option<Fingerprint>,
    overwrite: bool,
) -> Result<Fingerprint, SaveError> {
    if !overwrite {
        let on_disk = match fs::read(path) {
            Ok(bytes) => Some(Fingerprint::of(&bytes)),
            Err(error) if error.kind() == io::ErrorKind::NotFound => None,
            Err(error) => return Err(SaveError::Io(error)),
        };
        if on_disk != expected {
            return Err(SaveError::ChangedOnDisk);
        }
    }
    write_atomically(path, text.as_bytes()).map_err(SaveError::Io)?;
    Ok(Fingerprint::of(text.as_bytes()))
}

/// Keeps `text` as the recovery copy of `path`.
pub fn keep_recovery(path: &Path, text: &str) -> io::Result<()> {
    write_atomically(&recovery_path(path), text.as_bytes())
}

/// Removes the recovery copy of `path`, if there is one.
pub fn drop_recovery(path: &Path) -> io::Result<()> {
    match fs::remove_file(recovery_path(path)) {
        Err(error) if error.kind() != io::ErrorKind::NotFound => Err(error),
        _ => Ok(()),
    }
}

/// Writes a temporary file in the same directory, flushes it to the disk,
/// and renames it over `path`: a reader sees the old file or the new one,
/// never half of one. The file keeps its permissions.
fn write_atomically(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let directory = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let mut temporary = tempfile::Builder::new()
        .prefix(".heft-save-")
        .tempfile_in(directory)?;
    temporary.write_all(bytes)?;
    temporary.flush()?;
    match fs::metadata(path) {
        Ok(metadata) => temporary
            .as_file()
            .set_permissions(metadata.permissions())?,
        Err(_) => set_new_file_permissions(temporary.as_file())?,
    }
    temporary.as_file().sync_all()?;
    temporary.persist(path).map_err(|error| error.error)?;
    // Make the rename itself durable where the platform allows it.
    if let Ok(directory) = fs::File::open(directory) {
        let _ = directory.sync_all();
    }
    Ok(())
}

/// A new sheet is readable by others, as a file made by an editor would be
/// (the temporary file starts private).
#[cfg(unix)]
fn set_new_file_permissions(file: &fs::File) -> io::Result<()> {
    use std::os::unix::fs::PermissionsExt;
    file.set_permissions(fs::Permissions::from_mode(0o644))
}

#[cfg(not(unix))]
fn set_new_file_permissions(_file: &fs::File) -> io::Result<()> {
    Ok(())
}
