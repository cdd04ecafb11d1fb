//! Reading a recovery copy without trusting it: anyone who can write the
//! sheet's folder can put a file there under a recovery copy's name. Only a
//! regular file owned by this user, with no other name, writable by no one
//! else and no larger than a sheet may be, is read; a link, a pipe or a
//! device is refused before a byte is read.

use std::fmt;
use std::fs;
use std::io::{self, Read};
use std::path::Path;

use super::platform;

/// Why a file under a recovery copy's name was not read.
#[derive(Debug)]
pub enum Refusal {
    /// A symbolic link: it could point at any file.
    Link,
    /// Not a regular file: a pipe, a device, a folder or a socket.
    NotAFile(&'static str),
    /// Owned by another user.
    OtherOwner(u32),
    /// Writable by other users.
    WritableByOthers(u32),
    /// More names than one (hard links): it is also some other file.
    OtherNames(u64),
    /// Larger than a sheet may be.
    TooLarge,
    /// Not UTF-8 text.
    NotText,
    /// It could not be opened or read.
    Unreadable(io::Error),
}

impl fmt::Display for Refusal {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Refusal::Link => write!(f, "a symbolic link"),
            Refusal::NotAFile(kind) => write!(f, "{kind}, not a file"),
            Refusal::OtherOwner(uid) => write!(f, "owned by another user (uid {uid})"),
            Refusal::WritableByOthers(mode) => {
                write!(f, "writable by other users (mode {mode:04o})")
            }
            Refusal::OtherNames(n) => write!(f, "a file with {n} names (hard links)"),
            Refusal::TooLarge => write!(f, "larger than 4 GiB"),
            Refusal::NotText => write!(f, "not UTF-8 text"),
            Refusal::Unreadable(error) => write!(f, "unreadable: {error}"),
        }
    }
}

/// The text of the recovery copy at `path`; `Ok(None)` if there is none.
pub fn read(path: &Path) -> Result<Option<String>, Refusal> {
    let file = match platform::open_no_follow(path) {
        Ok(file) => file,
        Err(error) if error.kind() == io::ErrorKind::NotFound => return Ok(None),
        Err(error) if platform::is_link_refusal(&error) => return Err(Refusal::Link),
        Err(error) => return Err(Refusal::Unreadable(error)),
    };
    let metadata = file.metadata().map_err(Refusal::Unreadable)?;
    check(&metadata)?;
    let limit = crate::base::MAX_SOURCE_LEN as u64;
    let mut bytes = Vec::new();
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(Refusal::Unreadable)?;
    if bytes.len() as u64 > limit {
        return Err(Refusal::TooLarge);
    }
    String::from_utf8(bytes)
        .map(Some)
        .map_err(|_| Refusal::NotText)
}

fn check(metadata: &fs::Metadata) -> Result<(), Refusal> {
    let kind = metadata.file_type();
    if !kind.is_file() {
        return Err(Refusal::NotAFile(describe(&kind)));
    }
    if let (Some(owner), Some(own)) = (platform::owner_of(metadata), platform::own_uid())
        && owner != own
    {
        return Err(Refusal::OtherOwner(owner));
    }
    if let Some(mode) = platform::mode_of(metadata)
        && mode & 0o022 != 0
    {
        return Err(Refusal::WritableByOthers(mode));
    }
    let names = platform::link_count(metadata);
    if names > 1 {
        return Err(Refusal::OtherNames(names));
    }
    if metadata.len() > crate::base::MAX_SOURCE_LEN as u64 {
        return Err(Refusal::TooLarge);
    }
    Ok(())
}

/// What kind of thing a file that is not a regular file is.
pub fn describe(kind: &fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if kind.is_fifo() {
            return "a named pipe";
        }
        if kind.is_char_device() || kind.is_block_device() {
            return "a device";
        }
        if kind.is_socket() {
            return "a socket";
        }
    }
    if kind.is_dir() {
        "a folder"
    } else if kind.is_symlink() {
        "a symbolic link"
    } else {
        "something other than a file"
    }
}
