//! The few questions about processes, users and files that the standard
//! library does not answer: is a process alive, who am I, what is this
//! host called, and opening a file without following a link or waiting on
//! a pipe. On Unix they go through rustix; elsewhere they answer
//! cautiously (every process counts as alive, so nothing is removed).

use std::fs;
use std::io;
use std::path::Path;

/// This process's id.
pub fn own_pid() -> u32 {
    std::process::id()
}

/// This host's name, as lock files and temporary files record it: only
/// ASCII letters, digits, `.` and `-` (others become `_`), at most 64 bytes,
/// so it fits in a file name and a lock file's line.
pub fn host_name() -> String {
    let name = raw_host_name();
    let cleaned: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '.' || c == '-' {
                c
            } else {
                '_'
            }
        })
        .take(64)
        .collect();
    if cleaned.is_empty() {
        "localhost".to_string()
    } else {
        cleaned
    }
}

#[cfg(unix)]
fn raw_host_name() -> String {
    rustix::system::uname()
        .nodename()
        .to_string_lossy()
        .into_owned()
}

#[cfg(not(unix))]
fn raw_host_name() -> String {
    std::env::var("COMPUTERNAME").unwrap_or_default()
}

/// Whether process `pid` of this host is running. A process that exists
/// but belongs to another user counts as running.
#[cfg(unix)]
pub fn process_alive(pid: u32) -> bool {
    let Some(pid) = i32::try_from(pid)
        .ok()
        .and_then(rustix::process::Pid::from_raw)
    else {
        // Not a process id at all: nothing runs under it.
        return false;
    };
    match rustix::process::test_kill_process(pid) {
        Ok(()) => true,
        Err(error) => error != rustix::io::Errno::SRCH,
    }
}

/// Whether process `pid` of this host is running: without a way to ask,
/// every process counts as running, so nothing of it is ever removed.
#[cfg(not(unix))]
pub fn process_alive(_pid: u32) -> bool {
    true
}

/// The user this process acts as (its effective user id); `None` where
/// files have no owner id.
#[cfg(unix)]
pub fn own_uid() -> Option<u32> {
    Some(rustix::process::geteuid().as_raw())
}

/// The user this process acts as: unknown here.
#[cfg(not(unix))]
pub fn own_uid() -> Option<u32> {
    None
}

/// The owner of the file `metadata` describes; `None` where files have no
/// owner id.
#[cfg(unix)]
pub fn owner_of(metadata: &fs::Metadata) -> Option<u32> {
    use std::os::unix::fs::MetadataExt;
    Some(metadata.uid())
}

/// The owner of a file: unknown here.
#[cfg(not(unix))]
pub fn owner_of(_metadata: &fs::Metadata) -> Option<u32> {
    None
}

/// The permission bits of the file `metadata` describes (`0o644`); `None`
/// where files have none.
#[cfg(unix)]
pub fn mode_of(metadata: &fs::Metadata) -> Option<u32> {
    use std::os::unix::fs::PermissionsExt;
    Some(metadata.permissions().mode() & 0o7777)
}

/// The permission bits of a file: none here.
#[cfg(not(unix))]
pub fn mode_of(_metadata: &fs::Metadata) -> Option<u32> {
    None
}

/// Opens `path` for reading without following a symbolic link in its last
/// component and without waiting for a writer if it is a pipe; the caller
/// then looks at what it opened (`File::metadata`) before reading a byte.
#[cfg(unix)]
pub fn open_no_follow(path: &Path) -> io::Result<fs::File> {
    use std::os::unix::fs::OpenOptionsExt;
    let flags = rustix::fs::OFlags::NOFOLLOW | rustix::fs::OFlags::NONBLOCK;
    fs::OpenOptions::new()
        .read(true)
        .custom_flags(flags.bits() as i32)
        .open(path)
}

/// Opens `path` for reading, refusing a symbolic link (looked at first,
/// which leaves a moment between the look and the open).
#[cfg(not(unix))]
pub fn open_no_follow(path: &Path) -> io::Result<fs::File> {
    if fs::symlink_metadata(path)?.file_type().is_symlink() {
        return Err(io::Error::other("a symbolic link"));
    }
    fs::File::open(path)
}

/// Whether an error from [`open_no_follow`] means the path is a symbolic
/// link.
#[cfg(unix)]
pub fn is_link_refusal(error: &io::Error) -> bool {
    error.raw_os_error() == Some(rustix::io::Errno::LOOP.raw_os_error())
}

/// Whether an error from [`open_no_follow`] means the path is a symbolic
/// link.
#[cfg(not(unix))]
pub fn is_link_refusal(error: &io::Error) -> bool {
    error.to_string() == "a symbolic link"
}

/// Gives `file` the owner and group `like` has, as far as this process may
/// (a user who is not root can only give a file a group they belong to),
/// then `like`'s permission bits (after the owner: a change of owner clears
/// the set-user-id bit).
#[cfg(unix)]
pub fn copy_owner_and_mode(file: &fs::File, like: &fs::Metadata) -> io::Result<()> {
    use std::os::unix::fs::{MetadataExt, PermissionsExt};
    let (uid, gid) = (like.uid(), like.gid());
    if std::os::unix::fs::fchown(file, Some(uid), Some(gid)).is_err() {
        // Not allowed to give the file away: keep at least the group if we may.
        let _ = std::os::unix::fs::fchown(file, None, Some(gid));
    }
    file.set_permissions(fs::Permissions::from_mode(like.mode() & 0o7777))
}

/// Gives `file` the permissions `like` has.
#[cfg(not(unix))]
pub fn copy_owner_and_mode(file: &fs::File, like: &fs::Metadata) -> io::Result<()> {
    file.set_permissions(like.permissions())
}

/// Gives a new file `mode` (a sheet is readable by others, as a file made
/// by an editor would be; a recovery copy is private).
#[cfg(unix)]
pub fn set_mode(file: &fs::File, mode: u32) -> io::Result<()> {
    use std::os::unix::fs::PermissionsExt;
    file.set_permissions(fs::Permissions::from_mode(mode))
}

/// Permission bits do not exist here.
#[cfg(not(unix))]
pub fn set_mode(_file: &fs::File, _mode: u32) -> io::Result<()> {
    Ok(())
}

/// Whether this process may write to the file at `path` itself (its
/// permission bits and the process's user, as the system judges them; root
/// may write to any file on a writable file system).
#[cfg(unix)]
pub fn may_write(path: &Path) -> bool {
    rustix::fs::access(path, rustix::fs::Access::WRITE_OK).is_ok()
}

/// Whether the file at `path` may be written: its read-only flag.
#[cfg(not(unix))]
pub fn may_write(path: &Path) -> bool {
    fs::metadata(path).is_ok_and(|metadata| !metadata.permissions().readonly())
}

/// How many names (hard links) the file `metadata` describes has.
#[cfg(unix)]
pub fn link_count(metadata: &fs::Metadata) -> u64 {
    use std::os::unix::fs::MetadataExt;
    metadata.nlink()
}

/// How many names a file has: taken as one here.
#[cfg(not(unix))]
pub fn link_count(_metadata: &fs::Metadata) -> u64 {
    1
}

/// What identifies one state of a file on disk: which file (device and
/// inode), its length, and when its contents and its inode last changed,
/// to the nanosecond. A write changes the change time even when the writer
/// sets the modification time back.
#[cfg(unix)]
pub fn identity(metadata: &fs::Metadata) -> [i64; 7] {
    use std::os::unix::fs::MetadataExt;
    [
        metadata.dev() as i64,
        metadata.ino() as i64,
        metadata.size() as i64,
        metadata.mtime(),
        metadata.mtime_nsec(),
        metadata.ctime(),
        metadata.ctime_nsec(),
    ]
}

/// What identifies one state of a file: its length and modification time.
#[cfg(not(unix))]
pub fn identity(metadata: &fs::Metadata) -> [i64; 7] {
    let modified = metadata
        .modified()
        .ok()
        .and_then(|time| time.duration_since(std::time::UNIX_EPOCH).ok())
        .unwrap_or_default();
    [
        0,
        0,
        metadata.len() as i64,
        modified.as_secs() as i64,
        i64::from(modified.subsec_nanos()),
        0,
        0,
    ]
}
