//! The notebook's file I/O, called only from the event loop: opening a
//! sheet, noticing that it changed on disk, saving it safely, the recovery
//! copies that keep unsaved work through a crash, and the lock files that
//! let two notebooks on one sheet know of each other.
//!
//! Every file heft keeps for a sheet lies beside the file the sheet's name
//! leads to (through any symbolic links), named after it: for
//! `hoist.heft`, notebook number k (0 for the first, 1 for a second one
//! open at the same time, …) holds the lock `.hoist.heft.heft-lock` (or
//! `…-lock-k`) and keeps its unsaved work in `.hoist.heft.heft-unsaved` (or
//! `…-unsaved-k`). Temporary files are `.heft-save-HOST-PID-RANDOM`.

mod kept;
mod lock;
mod platform;
mod save;

use std::collections::hash_map::DefaultHasher;
use std::fs;
use std::hash::{Hash, Hasher};
use std::io::{self, Read};
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

pub use kept::Refusal;
pub use lock::{Holder, OtherNotebook};

use super::strings;

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

/// Unsaved work an earlier notebook kept beside the sheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct KeptCopy {
    /// The recovery copy's file.
    pub path: PathBuf,
    /// Its text.
    pub text: String,
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
    /// Unsaved work kept by earlier notebooks that differs from the file,
    /// newest first.
    pub recovery: Vec<KeptCopy>,
    /// What the notebook says on opening: other notebooks on the sheet,
    /// files under a recovery copy's name that were not trusted, temporary
    /// files cleaned up.
    pub notices: Vec<String>,
}

/// Why a save did not happen.
#[derive(Debug)]
pub enum SaveError {
    /// The file on disk is not what was opened (or last saved), or it
    /// changed while the new text was being written.
    ChangedOnDisk,
    /// The file is read-only (or this user may not write it).
    ReadOnly,
    /// Writing failed.
    Io(io::Error),
}

/// An error about `path`: "cannot `doing` PATH: error".
fn with_path(doing: &str, path: &Path, error: io::Error) -> io::Error {
    io::Error::new(
        error.kind(),
        format!("cannot {doing} {}: {error}", path.display()),
    )
}

/// Temporary files older than this whose process is gone are removed.
const STALE_TEMPORARY_AGE: Duration = Duration::from_secs(60);
/// Most notebooks open on one sheet at the same time.
const MAX_NOTEBOOKS: usize = 64;
/// How every temporary file heft writes begins.
const TEMPORARY_MARK: &str = ".heft-save-";

/// The names of heft's files beside one sheet.
#[derive(Debug)]
struct Names {
    /// The folder the sheet's file is in.
    directory: PathBuf,
    /// The file's own name.
    file_name: String,
}

impl Names {
    fn of(target: &Path) -> Names {
        let file_name = target
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_else(|| "sheet".to_string());
        Names {
            directory: save::folder_of(target).to_path_buf(),
            file_name,
        }
    }

    fn numbered(&self, kind: &str, slot: usize) -> PathBuf {
        let name = match slot {
            0 => format!(".{}.heft-{kind}", self.file_name),
            _ => format!(".{}.heft-{kind}-{slot}", self.file_name),
        };
        self.directory.join(name)
    }

    fn slot_of(&self, kind: &str, name: &str) -> Option<usize> {
        let rest = name
            .strip_prefix('.')?
            .strip_prefix(self.file_name.as_str())?
            .strip_prefix(".heft-")?
            .strip_prefix(kind)?;
        match rest.strip_prefix('-') {
            None if rest.is_empty() => Some(0),
            Some(number)
                if !number.starts_with('0') && number.bytes().all(|b| b.is_ascii_digit()) =>
            {
                number.parse().ok().filter(|&slot| slot > 0)
            }
            _ => None,
        }
    }

    fn lock(&self, slot: usize) -> PathBuf {
        self.numbered("lock", slot)
    }

    fn recovery(&self, slot: usize) -> PathBuf {
        self.numbered("unsaved", slot)
    }

    fn lock_slot(&self, name: &str) -> Option<usize> {
        self.slot_of("lock", name)
    }

    fn recovery_slot(&self, name: &str) -> Option<usize> {
        self.slot_of("unsaved", name)
    }

    /// The names in the folder (those that are UTF-8; heft's all are).
    fn entries(&self) -> Vec<String> {
        fs::read_dir(&self.directory)
            .map(|entries| {
                entries
                    .filter_map(|entry| entry.ok()?.file_name().into_string().ok())
                    .collect()
            })
            .unwrap_or_default()
    }

    /// A new temporary file in the folder, private and created exclusively.
    fn temporary_file(&self) -> io::Result<tempfile::NamedTempFile> {
        tempfile::Builder::new()
            .prefix(&temporary_prefix())
            .tempfile_in(&self.directory)
            .map_err(|error| with_path("create a temporary file in", &self.directory, error))
    }
}

/// The start of this process's temporary files' names: the mark, the host
/// and the process id, so a later notebook can tell whose they are.
fn temporary_prefix() -> String {
    format!(
        "{TEMPORARY_MARK}{}-{}-",
        platform::host_name(),
        platform::own_pid()
    )
}

/// The host and process a temporary file's name gives; `None` for a name
/// heft did not make this way (an older heft's, for one).
fn temporary_owner(name: &str) -> Option<(&str, u32)> {
    let rest = name.strip_prefix(TEMPORARY_MARK)?;
    let (head, random) = rest.rsplit_once('-')?;
    let (host, pid) = head.rsplit_once('-')?;
    if host.is_empty() || random.is_empty() || !random.bytes().all(|b| b.is_ascii_alphanumeric()) {
        return None;
    }
    Some((host, pid.parse().ok()?))
}

/// Removes the temporary files in the folder that are provably left over
/// from a save of this host's heft that was stopped: named for a process of
/// this host that no longer runs, a regular file of this user, older than a
/// minute. Nothing else is touched. Returns what to say.
fn clean_temporary_files(names: &Names) -> Vec<String> {
    let host = platform::host_name();
    let (mut removed, mut removed_bytes, mut unknown) = (0usize, 0u64, 0usize);
    for name in names.entries() {
        if !name.starts_with(TEMPORARY_MARK) {
            continue;
        }
        let Some((owner_host, pid)) = temporary_owner(&name) else {
            unknown += 1;
            continue;
        };
        if owner_host != host || platform::process_alive(pid) {
            continue;
        }
        let path = names.directory.join(&name);
        let Ok(metadata) = fs::symlink_metadata(&path) else {
            continue;
        };
        let old = metadata
            .modified()
            .ok()
            .and_then(|modified| SystemTime::now().duration_since(modified).ok())
            .is_some_and(|age| age >= STALE_TEMPORARY_AGE);
        let own = platform::owner_of(&metadata) == platform::own_uid();
        if metadata.is_file() && own && old && fs::remove_file(&path).is_ok() {
            removed += 1;
            removed_bytes += metadata.len();
        }
    }
    let mut notices = Vec::new();
    if removed > 0 {
        notices.push(strings::temporary_files_removed(
            removed,
            removed_bytes,
            &names.directory,
        ));
    }
    if unknown > 0 {
        notices.push(strings::temporary_files_left(unknown, &names.directory));
    }
    notices
}

/// A notebook's hold on a sheet: its lock file, and the recovery copy that
/// is its own. Dropping the session removes the lock.
#[derive(Debug)]
pub struct Session {
    path: PathBuf,
    names: Names,
    /// `None` if no lock file could be made (a folder heft may not write).
    lock: Option<PathBuf>,
    holder: Holder,
    recovery: PathBuf,
}

impl Session {
    /// Opens `path` for a notebook: reads the sheet (a file that does not
    /// exist is a new, empty sheet; one that is not UTF-8 is refused, since
    /// the notebook could not save it back unchanged), removes stale lock
    /// and temporary files beside it, finds the unsaved work earlier
    /// notebooks kept, and takes a lock and a recovery copy of its own.
    pub fn start(path: &Path) -> io::Result<(Session, Opened)> {
        let target = save::final_target(path)?;
        let (text, disk) = read_sheet(&target)?;
        let names = Names::of(&target);
        let mut notices = clean_temporary_files(&names);
        let others = lock::live_locks(&names, None);
        let (recovery, refused) = kept_copies(&names, &others, &text);
        notices.extend(
            refused
                .iter()
                .map(|(path, why)| strings::recovery_copy_ignored(path, why)),
        );
        let holder = Holder::this_process();
        let (slot, lock) = claim(&names, &holder);
        let lock = match lock {
            Ok(lock) => Some(lock),
            Err(error) => {
                notices.push(strings::not_locked(&error));
                None
            }
        };
        let session = Session {
            path: path.to_path_buf(),
            lock,
            recovery: names.recovery(slot),
            names,
            holder,
        };
        // Other notebooks first: what the user most needs to know.
        let others: Vec<OtherNotebook> = others.into_iter().map(|(_, other)| other).collect();
        if !others.is_empty() {
            notices.insert(0, strings::other_notebooks(&others, &session.recovery));
        }
        let opened = Opened {
            path: path.to_path_buf(),
            text,
            disk,
            recovery,
            notices,
        };
        Ok((session, opened))
    }

    /// The sheet's name as opened.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// This notebook's recovery copy.
    pub fn recovery_path(&self) -> &Path {
        &self.recovery
    }

    /// This notebook's lock file; `None` if none could be made.
    pub fn lock_path(&self) -> Option<&Path> {
        self.lock.as_deref()
    }

    /// Keeps `text` as this notebook's recovery copy: a private file (mode
    /// 0600) written whole and renamed into place.
    pub fn keep_recovery(&self, text: &str) -> io::Result<()> {
        save::write_private(&self.recovery, text.as_bytes(), &temporary_prefix())
    }

    /// Removes this notebook's recovery copy, if there is one.
    pub fn drop_recovery(&self) -> io::Result<()> {
        remove_if_there(&self.recovery)
    }

    /// Takes over the kept copy at `copy` (restored as `text`): keeps the
    /// text as this notebook's recovery copy, then removes the old one.
    pub fn adopt(&self, copy: &Path, text: &str) -> io::Result<()> {
        self.keep_recovery(text)?;
        if copy != self.recovery {
            remove_if_there(copy)?;
        }
        Ok(())
    }

    /// Removes the kept copy at `copy`, which the user discarded.
    pub fn discard(&self, copy: &Path) -> io::Result<()> {
        remove_if_there(copy)
    }

    /// The other notebooks that have the sheet open now (their locks);
    /// stale locks found on the way are removed.
    pub fn other_notebooks(&self) -> Vec<OtherNotebook> {
        lock::live_locks(&self.names, self.lock.as_deref())
            .into_iter()
            .map(|(_, other)| other)
            .collect()
    }

    /// Saves `text` to the sheet. Unless `overwrite`, refuses when the file
    /// on disk no longer has the fingerprint `expected` (`None`: the file
    /// must still not exist); unless `replace_read_only`, refuses to replace
    /// a read-only file. Returns the new fingerprint. See [`Session::save_with_pause`].
    pub fn save(
        &self,
        text: &str,
        expected: Option<Fingerprint>,
        overwrite: bool,
        replace_read_only: bool,
    ) -> Result<Fingerprint, SaveError> {
        self.save_with_pause(text, expected, overwrite, replace_read_only, || {})
    }

    /// [`Session::save`], calling `pause` at the moment a change by someone
    /// else would be hardest to notice: the new text is written and flushed
    /// aside, and the last look at the file before it is replaced is about
    /// to happen. A change made during `pause` refuses the save with
    /// [`SaveError::ChangedOnDisk`]. The notebook passes a `pause` that does
    /// nothing; tests change the file in it.
    ///
    /// A symbolic link is followed to its file, which is replaced by a new
    /// file in its own folder with the old one's owner, group and
    /// permissions (as far as this user may set them). A file with several
    /// names (hard links) is written in place, so every name shows the new
    /// text; the text is first kept in the recovery copy, so a crash in the
    /// middle of that write loses nothing.
    pub fn save_with_pause(
        &self,
        text: &str,
        expected: Option<Fingerprint>,
        overwrite: bool,
        replace_read_only: bool,
        pause: impl FnOnce(),
    ) -> Result<Fingerprint, SaveError> {
        let set_aside = |text: &str| self.keep_recovery(text);
        let prefix = temporary_prefix();
        save::save(
            save::Request {
                path: &self.path,
                text,
                expected,
                overwrite,
                replace_read_only,
                set_aside: &set_aside,
                temporary_prefix: &prefix,
            },
            pause,
        )
    }
}

/// Dropping the session (the notebook quits) removes its lock, unless
/// another notebook has taken its place meanwhile.
impl Drop for Session {
    fn drop(&mut self) {
        if let Some(lock) = &self.lock {
            lock::release(lock, &self.holder);
        }
    }
}

fn remove_if_there(path: &Path) -> io::Result<()> {
    match fs::remove_file(path) {
        Err(error) if error.kind() != io::ErrorKind::NotFound => {
            Err(with_path("remove", path, error))
        }
        _ => Ok(()),
    }
}

/// Reads the sheet at `target`; a file that does not exist is a new sheet.
fn read_sheet(target: &Path) -> io::Result<(String, Option<Fingerprint>)> {
    let mut file = match fs::File::open(target) {
        Ok(file) => file,
        Err(error) if error.kind() == io::ErrorKind::NotFound => return Ok((String::new(), None)),
        Err(error) => return Err(with_path("read", target, error)),
    };
    let mut bytes = Vec::new();
    file.read_to_end(&mut bytes)
        .map_err(|error| with_path("read", target, error))?;
    let disk = Fingerprint::of(&bytes);
    Ok((text_of(target, bytes)?, Some(disk)))
}

fn text_of(path: &Path, bytes: Vec<u8>) -> io::Result<String> {
    if bytes.len() > crate::base::MAX_SOURCE_LEN {
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

/// The recovery copies beside the sheet that belong to no running
/// notebook: those that differ from `text` (newest first), and the files
/// under a recovery copy's name that were not trusted. A trusted copy equal
/// to `text` holds nothing to recover and is removed.
fn kept_copies(
    names: &Names,
    live: &[(usize, OtherNotebook)],
    text: &str,
) -> (Vec<KeptCopy>, Vec<(PathBuf, Refusal)>) {
    let mut found = Vec::new();
    let mut refused = Vec::new();
    for name in names.entries() {
        let Some(slot) = names.recovery_slot(&name) else {
            continue;
        };
        if live.iter().any(|(held, _)| *held == slot) {
            // A running notebook's work in progress.
            continue;
        }
        let path = names.directory.join(&name);
        match kept::read(&path) {
            Ok(None) => {}
            Ok(Some(kept)) if kept == text => {
                let _ = fs::remove_file(&path);
            }
            Ok(Some(kept)) => {
                let modified = fs::symlink_metadata(&path)
                    .and_then(|metadata| metadata.modified())
                    .unwrap_or(SystemTime::UNIX_EPOCH);
                found.push((modified, KeptCopy { path, text: kept }));
            }
            Err(why) => refused.push((path, why)),
        }
    }
    found.sort_by_key(|(modified, _)| std::cmp::Reverse(*modified));
    refused.sort_by(|a, b| a.0.cmp(&b.0));
    (found.into_iter().map(|(_, copy)| copy).collect(), refused)
}

/// Takes the first notebook number whose lock is free and under whose
/// name no recovery copy lies (a copy there is someone's unsaved work,
/// offered on opening, and must not be written over). Returns the number
/// and its lock file, or, if no lock could be made, the number to work
/// under without one and why.
fn claim(names: &Names, holder: &Holder) -> (usize, io::Result<PathBuf>) {
    for slot in 0..MAX_NOTEBOOKS {
        if fs::symlink_metadata(names.recovery(slot)).is_ok() {
            continue;
        }
        let lock = names.lock(slot);
        match lock::try_take(names, &lock, holder) {
            Ok(true) => return (slot, Ok(lock)),
            Ok(false) => {}
            Err(error) => return (slot, Err(error)),
        }
    }
    let error = io::Error::other(format!(
        "{MAX_NOTEBOOKS} notebooks hold {} open or left unsaved work beside it",
        names.directory.join(&names.file_name).display()
    ));
    (MAX_NOTEBOOKS, Err(error))
}
