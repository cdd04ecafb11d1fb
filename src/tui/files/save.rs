//! Saving a sheet: through symbolic links to the file they name, keeping
//! the file's owner, group and permissions, asking before replacing a
//! read-only file, writing a file with several names (hard links) in place,
//! and checking once more, just before the new text takes the file's place,
//! that nobody changed the file meanwhile.

use std::fs;
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

use super::{Fingerprint, SaveError, platform, with_path};

/// Most symbolic links followed from the sheet's name to its file, as the
/// system's own limit (Linux's `MAXSYMLINKS`, common practice).
const MAX_LINKS: usize = 40;

/// The file a sheet's name leads to: `path` itself, or the file at the end
/// of its chain of symbolic links (which may not exist yet).
pub fn final_target(path: &Path) -> io::Result<PathBuf> {
    let mut current = path.to_path_buf();
    for _ in 0..MAX_LINKS {
        match fs::symlink_metadata(&current) {
            Ok(metadata) if metadata.file_type().is_symlink() => {
                let points_to = fs::read_link(&current)
                    .map_err(|error| with_path("read the link", &current, error))?;
                current = match current.parent() {
                    Some(folder) if points_to.is_relative() => folder.join(points_to),
                    _ => points_to,
                };
            }
            _ => return Ok(current),
        }
    }
    Err(io::Error::other(format!(
        "cannot follow {}: more than {MAX_LINKS} symbolic links in a row",
        path.display()
    )))
}

/// The folder a file is in (`.` for a bare name).
pub fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    }
}

/// Files up to this size are read once more at the last check before the
/// rename, so a change that leaves the size and the timestamps as they were
/// (two writes within one tick of the file system's clock) is still caught;
/// reading a larger one would widen the window it closes.
const REREAD_LIMIT: u64 = 1 << 20;

/// The file on disk as the save found it.
struct Found {
    /// Its metadata; `None` if there is no file.
    metadata: Option<fs::Metadata>,
    /// The fingerprint of its bytes, if they were read.
    fingerprint: Option<Fingerprint>,
}

impl Found {
    fn identity(&self) -> Option<[i64; 7]> {
        self.metadata.as_ref().map(platform::identity)
    }
}

/// Looks at the file at `target`: its metadata first, then (if `read`) its
/// bytes, so that a write after the look shows in the last check.
fn look(target: &Path, read: bool) -> Result<Found, SaveError> {
    let mut file = match open_to_read(target) {
        Ok(file) => file,
        Err(error) if error.kind() == io::ErrorKind::NotFound => {
            return Ok(Found {
                metadata: None,
                fingerprint: None,
            });
        }
        Err(error) => return Err(SaveError::Io(with_path("read", target, error))),
    };
    let metadata = file
        .metadata()
        .map_err(|error| SaveError::Io(with_path("read", target, error)))?;
    if !metadata.is_file() {
        return Err(SaveError::Io(io::Error::other(format!(
            "{} is {}, not a file",
            target.display(),
            super::kept::describe(&metadata.file_type())
        ))));
    }
    let fingerprint = if read {
        let mut bytes = Vec::new();
        file.read_to_end(&mut bytes)
            .map_err(|error| SaveError::Io(with_path("read", target, error)))?;
        Some(Fingerprint::of(&bytes))
    } else {
        None
    };
    Ok(Found {
        metadata: Some(metadata),
        fingerprint,
    })
}

/// Opens `path` for reading without waiting if it is a pipe.
fn open_to_read(path: &Path) -> io::Result<fs::File> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        fs::OpenOptions::new()
            .read(true)
            .custom_flags(rustix::fs::OFlags::NONBLOCK.bits() as std::ffi::c_int)
            .open(path)
    }
    #[cfg(not(unix))]
    {
        fs::File::open(path)
    }
}

/// What a save is asked to do.
pub struct Request<'a> {
    /// The sheet's name as opened (a link is followed to its file).
    pub path: &'a Path,
    /// The whole new text.
    pub text: &'a str,
    /// The fingerprint the file should still have (`None`: not there).
    pub expected: Option<Fingerprint>,
    /// Save even if the file changed on disk since `expected`.
    pub overwrite: bool,
    /// Save even if the file is read-only.
    pub replace_read_only: bool,
    /// Keeps the new text somewhere safe before a file with several names
    /// is written in place (the notebook's recovery copy).
    pub set_aside: &'a dyn Fn(&str) -> io::Result<()>,
    /// The prefix of the temporary file's name.
    pub temporary_prefix: &'a str,
}

/// Saves as `request` says; `pause` runs when the new text is written and
/// flushed aside and the last check that the file is unchanged is about to
/// happen.
pub fn save(request: Request<'_>, pause: impl FnOnce()) -> Result<Fingerprint, SaveError> {
    let target = final_target(request.path).map_err(SaveError::Io)?;
    let found = look(&target, !request.overwrite)?;
    if !request.overwrite && found.fingerprint != request.expected {
        return Err(SaveError::ChangedOnDisk);
    }
    if let Some(metadata) = &found.metadata
        && !request.replace_read_only
        && (metadata.permissions().readonly() || !platform::may_write(&target))
    {
        return Err(SaveError::ReadOnly);
    }
    let bytes = request.text.as_bytes();
    match &found.metadata {
        Some(metadata) if platform::link_count(metadata) > 1 => {
            (request.set_aside)(request.text).map_err(SaveError::Io)?;
            pause();
            write_in_place(&target, bytes, &found)?;
        }
        _ => replace_whole(&target, bytes, &found, request.temporary_prefix, pause)?,
    }
    Ok(Fingerprint::of(bytes))
}

/// Writes `bytes` to a temporary file beside `target`, gives it the old
/// file's owner, group and permissions, flushes it to the disk, checks that
/// the file is still as `found`, and renames it over the file: a reader
/// sees the old file or the new one, never half of one.
fn replace_whole(
    target: &Path,
    bytes: &[u8],
    found: &Found,
    temporary_prefix: &str,
    pause: impl FnOnce(),
) -> Result<(), SaveError> {
    let folder = folder_of(target);
    let mut temporary = tempfile::Builder::new()
        .prefix(temporary_prefix)
        .tempfile_in(folder)
        .map_err(|error| SaveError::Io(with_path("create a temporary file in", folder, error)))?;
    let written = temporary.path().to_path_buf();
    let io = |error| SaveError::Io(with_path("write", &written, error));
    temporary.write_all(bytes).map_err(io)?;
    temporary.flush().map_err(io)?;
    match &found.metadata {
        Some(metadata) => platform::copy_owner_and_mode(temporary.as_file(), metadata),
        None => platform::set_mode(temporary.as_file(), 0o644),
    }
    .map_err(io)?;
    temporary.as_file().sync_all().map_err(io)?;
    pause();
    // The last check: from here to the rename is the window that remains.
    if !reads_the_same(target, found)? || current_identity(target)? != found.identity() {
        // Dropping the temporary file removes it.
        return Err(SaveError::ChangedOnDisk);
    }
    if found.metadata.is_none() {
        // A new file: the name is linked to the written file only if it is
        // still free, so a file created meanwhile is never replaced.
        match fs::hard_link(temporary.path(), target) {
            Ok(()) => {
                sync_folder(folder);
                return Ok(());
            }
            Err(error) if error.kind() == io::ErrorKind::AlreadyExists => {
                return Err(SaveError::ChangedOnDisk);
            }
            // No hard links on this file system: rename as for a file that exists.
            Err(_) => {}
        }
    }
    temporary
        .persist(target)
        .map_err(|error| SaveError::Io(with_path("replace", target, error.error)))?;
    sync_folder(folder);
    Ok(())
}

/// Writes `bytes` into the file at `target` itself, so every name of it
/// shows the new text; its owner and permissions stay as they are.
fn write_in_place(target: &Path, bytes: &[u8], found: &Found) -> Result<(), SaveError> {
    let io = |error| SaveError::Io(with_path("write", target, error));
    let mut file = fs::OpenOptions::new()
        .write(true)
        .open(target)
        .map_err(io)?;
    // The last check, on the very file about to be written.
    let opened = file.metadata().map_err(io)?;
    if Some(platform::identity(&opened)) != found.identity() {
        return Err(SaveError::ChangedOnDisk);
    }
    file.write_all(bytes).map_err(io)?;
    file.set_len(bytes.len() as u64).map_err(io)?;
    file.sync_all().map_err(io)?;
    Ok(())
}

/// Whether a small file still has the bytes `found` read (a larger one, or
/// one whose bytes were not read, is judged by its identity alone).
fn reads_the_same(target: &Path, found: &Found) -> Result<bool, SaveError> {
    let (Some(metadata), Some(fingerprint)) = (&found.metadata, found.fingerprint) else {
        return Ok(true);
    };
    if metadata.len() > REREAD_LIMIT {
        return Ok(true);
    }
    let mut bytes = Vec::new();
    match open_to_read(target).and_then(|file| file.take(REREAD_LIMIT + 1).read_to_end(&mut bytes))
    {
        Ok(_) => Ok(Fingerprint::of(&bytes) == fingerprint),
        Err(error) if error.kind() == io::ErrorKind::NotFound => Ok(false),
        Err(error) => Err(SaveError::Io(with_path("read", target, error))),
    }
}

/// The identity of whatever is at `target` now (a link is not followed: a
/// link put in the file's place is a change).
fn current_identity(target: &Path) -> Result<Option<[i64; 7]>, SaveError> {
    match fs::symlink_metadata(target) {
        Ok(metadata) => Ok(Some(platform::identity(&metadata))),
        Err(error) if error.kind() == io::ErrorKind::NotFound => Ok(None),
        Err(error) => Err(SaveError::Io(with_path("look at", target, error))),
    }
}

/// Makes a rename in `folder` durable where the platform allows it.
fn sync_folder(folder: &Path) {
    if let Ok(directory) = fs::File::open(folder) {
        let _ = directory.sync_all();
    }
}

/// Writes `bytes` to a new private file (mode 0600, created exclusively)
/// beside `path`, flushes it, and renames it over `path`, which is never
/// followed if it is a link.
pub fn write_private(path: &Path, bytes: &[u8], temporary_prefix: &str) -> io::Result<()> {
    let folder = folder_of(path);
    let mut temporary = tempfile::Builder::new()
        .prefix(temporary_prefix)
        .tempfile_in(folder)
        .map_err(|error| with_path("create a temporary file in", folder, error))?;
    let written = temporary.path().to_path_buf();
    let io = |error| with_path("write", &written, error);
    temporary.write_all(bytes).map_err(io)?;
    platform::set_mode(temporary.as_file(), 0o600).map_err(io)?;
    temporary.as_file().sync_all().map_err(io)?;
    temporary
        .persist(path)
        .map_err(|error| with_path("replace", path, error.error))?;
    sync_folder(folder);
    Ok(())
}
