//! Lock files: one per open notebook, beside the sheet, naming the process
//! that holds it (`.NAME.heft-lock` for the first notebook, then
//! `.NAME.heft-lock-1`, …). A lock whose process no longer runs on this
//! host is stale and removed; a lock from another host is taken as live,
//! since heft cannot ask there.

use std::fs;
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};
use std::time::{SystemTime, UNIX_EPOCH};

use super::platform;
use super::{Names, with_path};

/// The first line of every lock file.
const LOCK_HEADER: &str = "heft notebook lock";
/// A lock file is a few short lines; anything longer is not one of ours.
const MAX_LOCK_LEN: u64 = 4096;

/// Who holds a lock: a notebook's process, its host, and when it started.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Holder {
    /// The process id.
    pub pid: u32,
    /// The host the process runs on.
    pub host: String,
    /// When the notebook started, in seconds since 1970 (UTC).
    pub started: u64,
}

impl Holder {
    /// This process, starting now.
    pub(super) fn this_process() -> Holder {
        Holder {
            pid: platform::own_pid(),
            host: platform::host_name(),
            started: seconds_since_epoch(SystemTime::now()),
        }
    }

    fn to_text(&self) -> String {
        format!(
            "{LOCK_HEADER}\npid {}\nhost {}\nstarted {}\n",
            self.pid, self.host, self.started
        )
    }

    fn parse(text: &str) -> Option<Holder> {
        let mut lines = text.lines();
        if lines.next()? != LOCK_HEADER {
            return None;
        }
        let mut field = |name: &str| {
            lines
                .next()
                .and_then(|line| line.strip_prefix(name))
                .and_then(|rest| rest.strip_prefix(' '))
                .map(str::to_string)
        };
        let pid = field("pid")?.parse().ok()?;
        let host = field("host")?;
        let started = field("started")?.parse().ok()?;
        Some(Holder { pid, host, started })
    }

    /// Whether the holder is a process of this host that no longer runs.
    fn is_gone(&self) -> bool {
        self.host == platform::host_name() && !platform::process_alive(self.pid)
    }

    /// How long ago the notebook started, in whole minutes.
    pub fn minutes_open(&self) -> u64 {
        seconds_since_epoch(SystemTime::now()).saturating_sub(self.started) / 60
    }
}

fn seconds_since_epoch(time: SystemTime) -> u64 {
    time.duration_since(UNIX_EPOCH)
        .map_or(0, |since| since.as_secs())
}

/// Another notebook that has the sheet open, as its lock file says.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OtherNotebook {
    /// Its lock file.
    pub lock: PathBuf,
    /// Who holds it; `None` if the lock file could not be read as one.
    pub holder: Option<Holder>,
}

/// What a lock file says.
enum LockState {
    /// No lock file.
    Absent,
    /// A lock held by a running process (or one heft cannot check).
    Live(Option<Holder>),
    /// A lock whose process of this host no longer runs.
    Stale(Holder),
}

fn read_lock(path: &Path) -> LockState {
    let file = match platform::open_no_follow(path) {
        Ok(file) => file,
        Err(error) if error.kind() == io::ErrorKind::NotFound => return LockState::Absent,
        Err(_) => return LockState::Live(None),
    };
    let is_small_file = file
        .metadata()
        .is_ok_and(|metadata| metadata.is_file() && metadata.len() <= MAX_LOCK_LEN);
    let mut text = String::new();
    if !is_small_file || file.take(MAX_LOCK_LEN).read_to_string(&mut text).is_err() {
        return LockState::Live(None);
    }
    match Holder::parse(&text) {
        Some(holder) if holder.is_gone() => LockState::Stale(holder),
        holder => LockState::Live(holder),
    }
}

/// Removes the lock at `path` if it still names `holder`: a lock another
/// notebook has just taken in its place stays. (The moment between the
/// second read and the removal remains.)
fn remove_if_held_by(path: &Path, holder: &Holder) {
    let still = match read_lock(path) {
        LockState::Stale(now) | LockState::Live(Some(now)) => now == *holder,
        _ => false,
    };
    if still {
        let _ = fs::remove_file(path);
    }
}

/// The slot each lock file beside the sheet is for, read from its name.
fn lock_slots(names: &Names) -> Vec<(usize, PathBuf)> {
    names
        .entries()
        .into_iter()
        .filter_map(|name| Some((names.lock_slot(&name)?, names.directory.join(name))))
        .collect()
}

/// Removes the stale locks beside the sheet and returns the live ones
/// (other than `own`, the lock of this notebook if it has one yet), by slot.
pub(super) fn live_locks(names: &Names, own: Option<&Path>) -> Vec<(usize, OtherNotebook)> {
    let mut live = Vec::new();
    for (slot, path) in lock_slots(names) {
        if Some(path.as_path()) == own {
            continue;
        }
        match read_lock(&path) {
            LockState::Absent => {}
            LockState::Stale(holder) => remove_if_held_by(&path, &holder),
            LockState::Live(holder) => live.push((slot, OtherNotebook { lock: path, holder })),
        }
    }
    live.sort_by_key(|(slot, _)| *slot);
    live
}

/// Tries to take the lock at `path` for `holder`: the lock file appears
/// whole, with its text, or not at all (written aside, then linked in
/// place, which fails if the name exists). `Ok(false)`: someone holds it.
pub(super) fn try_take(names: &Names, path: &Path, holder: &Holder) -> io::Result<bool> {
    let mut written = names.temporary_file()?;
    let text = holder.to_text();
    written
        .write_all(text.as_bytes())
        .and_then(|()| platform::set_mode(written.as_file(), 0o644))
        .map_err(|error| with_path("write", written.path(), error))?;
    match fs::hard_link(written.path(), path) {
        Ok(()) => Ok(true),
        Err(error) if error.kind() == io::ErrorKind::AlreadyExists => Ok(false),
        // A file system without hard links: create the name exclusively.
        Err(_) => match fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(path)
        {
            Ok(mut file) => {
                file.write_all(text.as_bytes())
                    .map_err(|error| with_path("write", path, error))?;
                Ok(true)
            }
            Err(error) if error.kind() == io::ErrorKind::AlreadyExists => Ok(false),
            Err(error) => Err(with_path("create the lock file", path, error)),
        },
    }
}

/// Removes this notebook's lock at `path`, unless another notebook has
/// taken its place.
pub(super) fn release(path: &Path, holder: &Holder) {
    remove_if_held_by(path, holder);
}
