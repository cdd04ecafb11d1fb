//! The notebook's file I/O: atomic save that keeps untouched bytes, refusal
//! to overwrite a file changed on disk (before and during the save), links,
//! owners and permissions kept, read-only files asked about, two notebooks
//! on one sheet kept apart, recovery copies that are not trusted blindly,
//! and temporary files of stopped saves cleaned up.

#![cfg(unix)]

use std::fs;
use std::os::unix::fs::{MetadataExt, PermissionsExt};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, SystemTime};

use heftsheet::tui::app::{Mode, Question};
use heftsheet::tui::files::{Fingerprint, KeptCopy, Opened, SaveError, Session};
use heftsheet::tui::theme::Theme;
use heftsheet::tui::{App, Effect, Message, update};
use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use ratatui::layout::Rect;

const SHEET: &str =
    "// hand-aligned, CRLF, no final break\r\nm   = 12 kg   \"mass\"\r\nW [N] = m * g0";

/// The names in `directory`, sorted.
fn names_in(directory: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(directory)
        .expect("list")
        .map(|entry| {
            entry
                .expect("entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    names.sort();
    names
}

/// A sheet with `text` in a new temporary directory.
fn sheet_with(text: &str) -> (tempfile::TempDir, PathBuf) {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("fixture.heft");
    fs::write(&path, text).expect("write");
    (directory, path)
}

/// A process id that no longer runs: a child that has exited and been
/// waited for (its id is free until the system hands it out again, which
/// Linux does only after going round the whole id range; common practice).
fn dead_pid() -> u32 {
    let mut child = std::process::Command::new("true")
        .spawn()
        .expect("`true` runs");
    let pid = child.id();
    child.wait().expect("`true` exits");
    pid
}

/// The host name heft writes into its lock files ("host NAME" line).
fn host_in_lock(lock: &Path) -> String {
    let text = fs::read_to_string(lock).expect("the lock file");
    text.lines()
        .find_map(|line| line.strip_prefix("host "))
        .expect("a host line")
        .to_string()
}

/// Whether the tests run as root (a file they create is owned by uid 0).
fn running_as_root(directory: &Path) -> bool {
    let probe = directory.join("probe");
    fs::write(&probe, "").expect("probe");
    let root = fs::metadata(&probe).expect("probe").uid() == 0;
    fs::remove_file(&probe).expect("probe");
    root
}

/// Runs `start` on a thread and gives up after a while: a recovery copy
/// that is a pipe or a device must not make opening wait or read forever.
fn start_within_seconds(path: &Path) -> (Session, Opened) {
    let (send, receive) = mpsc::channel();
    let path = path.to_path_buf();
    std::thread::spawn(move || {
        let _ = send.send(Session::start(&path));
    });
    receive
        .recv_timeout(Duration::from_secs(10))
        .expect("opening finished within 10 s")
        .expect("opened")
}

fn mode_of(path: &Path) -> u32 {
    fs::metadata(path).expect("metadata").permissions().mode() & 0o7777
}

#[test]
fn opening_reads_the_text_and_its_fingerprint() {
    let (_directory, path) = sheet_with(SHEET);
    let (_session, opened) = Session::start(&path).expect("open");
    assert_eq!(opened.text, SHEET);
    assert_eq!(opened.disk, Some(Fingerprint::of(SHEET.as_bytes())));
    assert!(opened.recovery.is_empty());
    assert!(opened.notices.is_empty(), "{:?}", opened.notices);
}

#[test]
fn a_new_name_opens_an_empty_sheet_and_saving_creates_it() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("new.heft");
    let (session, opened) = Session::start(&path).expect("open");
    assert_eq!((opened.text.as_str(), opened.disk), ("", None));
    let fingerprint = session
        .save("m = 1 kg\n", None, false, false)
        .expect("save");
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 1 kg\n");
    assert_eq!(fingerprint, Fingerprint::of(b"m = 1 kg\n"));
    assert_eq!(mode_of(&path), 0o644);
}

#[test]
fn a_file_that_is_not_utf8_is_refused_rather_than_saved_back_changed() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("latin1.heft");
    fs::write(&path, b"m = 12 kg \"\xe9\"\n").expect("write");
    let error = Session::start(&path).expect_err("refused");
    assert!(
        error.to_string().contains("not valid UTF-8 from byte 11"),
        "{error}"
    );
}

#[test]
fn saving_replaces_the_file_whole_and_quitting_leaves_nothing_behind() {
    let (directory, path) = sheet_with(SHEET);
    let (session, _) = Session::start(&path).expect("open");
    assert_eq!(
        session.lock_path().expect("a lock"),
        directory.path().join(".fixture.heft.heft-lock")
    );
    assert!(session.lock_path().expect("a lock").exists());
    let edited = SHEET.replace("12 kg", "14 kg");
    session
        .save(
            &edited,
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
        )
        .expect("save");
    assert_eq!(fs::read(&path).expect("read"), edited.as_bytes());
    // Quitting removes the lock; no temporary file is left.
    drop(session);
    assert_eq!(names_in(directory.path()), vec!["fixture.heft"]);
}

#[test]
fn a_file_changed_on_disk_is_not_overwritten_unless_asked() {
    let (_directory, path) = sheet_with(SHEET);
    let (session, _) = Session::start(&path).expect("open");
    let opened_as = Fingerprint::of(SHEET.as_bytes());
    // Someone else saves the file meanwhile.
    fs::write(&path, "m = 99 kg\n").expect("write");
    let refused = session.save("m = 13 kg\n", Some(opened_as), false, false);
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 99 kg\n");
    // Removed meanwhile counts as changed too.
    fs::remove_file(&path).expect("remove");
    assert!(matches!(
        session.save("m = 13 kg\n", Some(opened_as), false, false),
        Err(SaveError::ChangedOnDisk)
    ));
    session
        .save("m = 13 kg\n", Some(opened_as), true, false)
        .expect("overwrite when asked");
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 13 kg\n");
}

#[test]
fn the_recovery_copy_is_kept_private_offered_and_dropped() {
    let (directory, path) = sheet_with(SHEET);
    let (session, _) = Session::start(&path).expect("open");
    let recovery = session.recovery_path().to_path_buf();
    assert_eq!(
        recovery,
        directory.path().join(".fixture.heft.heft-unsaved")
    );
    session.keep_recovery("m = 15 kg\n").expect("keep");
    assert_eq!(mode_of(&recovery), 0o600);
    drop(session);
    let (session, opened) = Session::start(&path).expect("open");
    assert_eq!(
        opened.recovery,
        vec![KeptCopy {
            path: recovery.clone(),
            text: "m = 15 kg\n".to_string()
        }]
    );
    // The offered copy is not written over: this notebook keeps its own.
    assert_ne!(session.recovery_path(), recovery);
    session.adopt(&recovery, "m = 15 kg\n").expect("restore it");
    assert!(!recovery.exists());
    assert_eq!(
        fs::read_to_string(session.recovery_path()).expect("own copy"),
        "m = 15 kg\n"
    );
    // A copy equal to the file is nothing to recover.
    session.keep_recovery(SHEET).expect("keep");
    drop(session);
    let (session, opened) = Session::start(&path).expect("open");
    assert!(opened.recovery.is_empty());
    session.drop_recovery().expect("drop");
    session.drop_recovery().expect("dropping twice is fine");
    drop(session);
    assert_eq!(names_in(directory.path()), vec!["fixture.heft"]);
}

// ----- item: two notebooks on one sheet -----

#[test]
fn two_notebooks_on_one_sheet_keep_their_unsaved_work_apart() {
    let (directory, path) = sheet_with(SHEET);
    let (first, opened_first) = Session::start(&path).expect("first notebook");
    assert!(opened_first.notices.is_empty());
    let (second, opened_second) = Session::start(&path).expect("second notebook");
    // The second is told, with the first's process and host.
    let pid = std::process::id().to_string();
    let told = opened_second.notices.first().expect("a notice");
    assert!(
        told.contains("another notebook has this sheet open") && told.contains(&pid),
        "{told}"
    );
    assert!(told.contains(".fixture.heft.heft-unsaved-1"), "{told}");
    // And the first learns of the second.
    assert_eq!(
        first
            .other_notebooks()
            .iter()
            .map(|other| other.lock.clone())
            .collect::<Vec<_>>(),
        vec![second.lock_path().expect("a lock").to_path_buf()]
    );
    assert_ne!(first.recovery_path(), second.recovery_path());

    let by_first = SHEET.replace("12 kg", "13 kg");
    let by_second = SHEET.replace("12 kg", "27 kg");
    second.keep_recovery(&by_second).expect("second keeps");
    first.keep_recovery(&by_first).expect("first keeps");
    first
        .save(
            &by_first,
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
        )
        .expect("first saves");
    first.drop_recovery().expect("first drops its copy");
    // The first's edit, save and quit leave the second's work alone.
    drop(first);
    assert_eq!(
        fs::read_to_string(second.recovery_path()).expect("second's copy"),
        by_second
    );
    assert!(!directory.path().join(".fixture.heft.heft-lock").exists());
    // The second saves late: the file changed under it, so it asks.
    assert!(matches!(
        second.save(
            &by_second,
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false
        ),
        Err(SaveError::ChangedOnDisk)
    ));

    // The second dies: its lock names a process that is gone.
    let lock = second.lock_path().expect("a lock").to_path_buf();
    let copy = second.recovery_path().to_path_buf();
    let lock_text = fs::read_to_string(&lock).expect("lock");
    std::mem::forget(second);
    fs::write(
        &lock,
        lock_text.replace(&format!("pid {pid}\n"), &format!("pid {}\n", dead_pid())),
    )
    .expect("lock rewritten");
    let (third, opened_third) = Session::start(&path).expect("third notebook");
    assert!(
        opened_third.notices.is_empty(),
        "{:?}",
        opened_third.notices
    );
    assert!(!lock.exists(), "the stale lock is removed");
    assert_eq!(opened_third.text, by_first);
    assert_eq!(
        opened_third.recovery,
        vec![KeptCopy {
            path: copy,
            text: by_second
        }]
    );
    assert_eq!(
        third.lock_path().expect("a lock"),
        directory.path().join(".fixture.heft.heft-lock")
    );
}

#[test]
fn every_kept_copy_that_differs_from_the_file_is_offered_newest_first() {
    let (directory, path) = sheet_with(SHEET);
    let older = directory.path().join(".fixture.heft.heft-unsaved");
    let newer = directory.path().join(".fixture.heft.heft-unsaved-3");
    let same = directory.path().join(".fixture.heft.heft-unsaved-1");
    for (copy, text, age) in [
        (&older, "m = 1 kg\n", 300),
        (&newer, "m = 2 kg\n", 60),
        (&same, SHEET, 30),
    ] {
        fs::write(copy, text).expect("copy");
        fs::set_permissions(copy, fs::Permissions::from_mode(0o600)).expect("mode");
        fs::File::options()
            .write(true)
            .open(copy)
            .and_then(|file| file.set_modified(SystemTime::now() - Duration::from_secs(age)))
            .expect("age");
    }
    let (session, opened) = Session::start(&path).expect("open");
    let offered: Vec<&Path> = opened
        .recovery
        .iter()
        .map(|kept| kept.path.as_path())
        .collect();
    assert_eq!(offered, vec![newer.as_path(), older.as_path()]);
    assert!(!same.exists(), "a copy equal to the file is removed");
    // The free number with no copy under it: 1 (now empty), not 0 or 3.
    assert_eq!(session.recovery_path(), same);
}

#[test]
fn a_lock_from_another_host_counts_as_live_and_a_stale_one_is_taken_over() {
    let (directory, path) = sheet_with(SHEET);
    let lock = directory.path().join(".fixture.heft.heft-lock");
    fs::write(
        &lock,
        "heft notebook lock\npid 4242\nhost workshop-laptop.example\nstarted 0\n",
    )
    .expect("lock");
    let (session, opened) = Session::start(&path).expect("open");
    assert!(
        opened.notices[0].contains("process 4242 on workshop-laptop.example"),
        "{:?}",
        opened.notices
    );
    assert_eq!(
        session.lock_path().expect("a lock"),
        directory.path().join(".fixture.heft.heft-lock-1")
    );
    let host = host_in_lock(session.lock_path().expect("a lock"));
    drop(session);
    assert!(lock.exists(), "another host's lock is never removed");

    fs::write(
        &lock,
        format!(
            "heft notebook lock\npid {}\nhost {host}\nstarted 0\n",
            dead_pid()
        ),
    )
    .expect("lock");
    let (session, opened) = Session::start(&path).expect("open");
    assert!(opened.notices.is_empty(), "{:?}", opened.notices);
    assert_eq!(session.lock_path().expect("a lock"), lock);
    let text = fs::read_to_string(&lock).expect("lock");
    assert!(
        text.contains(&format!("pid {}\n", std::process::id())),
        "{text}"
    );
}

#[test]
fn a_sheet_where_no_lock_can_be_made_still_opens_and_says_so() {
    let directory = tempfile::tempdir().expect("directory");
    // A new sheet in a folder not made yet: nothing can be written beside it.
    let path = directory.path().join("not-yet").join("new.heft");
    let (session, opened) = Session::start(&path).expect("it opens");
    assert_eq!(session.lock_path(), None);
    assert!(
        opened.notices[0].starts_with("no lock on this sheet (cannot create a temporary file in"),
        "{:?}",
        opened.notices
    );
    assert!(
        opened.notices[0].contains("not-yet"),
        "the error names the folder"
    );
}

#[test]
fn the_notebook_says_on_opening_what_the_files_told_it() {
    let (_directory, path) = sheet_with(SHEET);
    let (_first, _) = Session::start(&path).expect("first notebook");
    let (_second, opened) = Session::start(&path).expect("second notebook");
    let app = App::new(opened.clone(), Rect::new(0, 0, 80, 24), Theme::new(false));
    assert_eq!(app.message(), Some(opened.notices.join(" · ").as_str()));
}

// ----- item: a change made during the save -----

#[test]
fn a_change_made_while_the_new_text_is_written_is_never_overwritten() {
    // Large enough that its contents are not read again at the last check:
    // the file's identity, size and change time must catch it.
    let original = format!(
        "m = 12 kg\n{}",
        "// filler line of a long sheet\n".repeat(100_000)
    );
    let (directory, path) = sheet_with(&original);
    let (session, _) = Session::start(&path).expect("open");
    let theirs = original.replace("m = 12 kg", "m = 99 kg");
    assert_eq!(theirs.len(), original.len());
    let mine = original.replace("m = 12 kg", "m = 13 kg");
    let refused = session.save_with_pause(
        &mine,
        Some(Fingerprint::of(original.as_bytes())),
        false,
        false,
        || {
            // Past the file system's timestamp tick, then written in place.
            std::thread::sleep(Duration::from_millis(20));
            fs::write(&path, &theirs).expect("someone else writes");
        },
    );
    assert!(
        matches!(refused, Err(SaveError::ChangedOnDisk)),
        "{refused:?}"
    );
    assert_eq!(fs::read_to_string(&path).expect("read"), theirs);

    // Replaced by a new file meanwhile (another editor's save), small this time.
    let (small_directory, small) = sheet_with(SHEET);
    let (small_session, _) = Session::start(&small).expect("open");
    let refused = small_session.save_with_pause(
        "m = 13 kg\n",
        Some(Fingerprint::of(SHEET.as_bytes())),
        false,
        false,
        || {
            let aside = small_directory.path().join("editor-save.tmp");
            fs::write(&aside, SHEET).expect("same text, new file");
            fs::rename(&aside, &small).expect("renamed over");
        },
    );
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    assert_eq!(fs::read_to_string(&small).expect("read"), SHEET);

    // Changed in place at once, same size: a small file is read again.
    let same_size = SHEET.replace("12 kg", "21 kg");
    let refused = small_session.save_with_pause(
        "m = 13 kg\n",
        Some(Fingerprint::of(SHEET.as_bytes())),
        false,
        false,
        || fs::write(&small, &same_size).expect("someone else writes"),
    );
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    assert_eq!(fs::read_to_string(&small).expect("read"), same_size);

    // A new file created by someone else meanwhile is not replaced either.
    let new = directory.path().join("new.heft");
    let (new_session, _) = Session::start(&new).expect("open");
    let refused = new_session.save_with_pause("m = 1 kg\n", None, false, false, || {
        fs::write(&new, "m = 2 kg\n").expect("someone creates it");
    });
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    assert_eq!(fs::read_to_string(&new).expect("read"), "m = 2 kg\n");

    // No temporary file is left by a refused save.
    drop((session, small_session, new_session));
    assert_eq!(names_in(directory.path()), vec!["fixture.heft", "new.heft"]);
    assert_eq!(names_in(small_directory.path()), vec!["fixture.heft"]);
}

#[test]
fn a_save_the_notebook_is_told_was_refused_asks_before_overwriting() {
    let (_directory, path) = sheet_with(SHEET);
    let (session, opened) = Session::start(&path).expect("open");
    let mut app = App::new(opened, Rect::new(0, 0, 80, 24), Theme::new(false));
    let edit =
        |app: &mut App, code| update(app, Message::Key(KeyEvent::new(code, KeyModifiers::NONE)));
    edit(&mut app, KeyCode::Char('x'));
    let effects = edit(&mut app, KeyCode::Char('s'));
    let [
        Effect::Save {
            text,
            expected,
            overwrite,
            replace_read_only,
        },
    ] = effects.as_slice()
    else {
        panic!("s saves: {effects:?}");
    };
    let refused = session.save_with_pause(text, *expected, *overwrite, *replace_read_only, || {
        fs::write(&path, "m = 99 kg\n").expect("someone else writes");
    });
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    update(&mut app, Message::SaveRefused);
    assert!(matches!(app.mode(), Mode::Ask(Question::Overwrite)));
}

// ----- item: links, owner, permissions, read-only files -----

#[test]
fn saving_through_symbolic_links_writes_the_file_they_lead_to() {
    let directory = tempfile::tempdir().expect("directory");
    let real_folder = directory.path().join("sheets");
    fs::create_dir(&real_folder).expect("folder");
    let real = real_folder.join("hoist.heft");
    fs::write(&real, SHEET).expect("write");
    let link = directory.path().join("current.heft");
    let link_to_link = directory.path().join("latest.heft");
    std::os::unix::fs::symlink("sheets/hoist.heft", &link).expect("link");
    std::os::unix::fs::symlink("current.heft", &link_to_link).expect("link");

    let (session, opened) = Session::start(&link_to_link).expect("open");
    assert_eq!(opened.text, SHEET);
    // Heft's own files go beside the file itself.
    assert_eq!(
        session.recovery_path(),
        real_folder.join(".hoist.heft.heft-unsaved")
    );
    session
        .save(
            "m = 14 kg\n",
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
        )
        .expect("save");
    assert_eq!(fs::read_to_string(&real).expect("read"), "m = 14 kg\n");
    for (name, target) in [
        (&link, "sheets/hoist.heft"),
        (&link_to_link, "current.heft"),
    ] {
        assert!(
            fs::symlink_metadata(name)
                .expect("link")
                .file_type()
                .is_symlink()
        );
        assert_eq!(fs::read_link(name).expect("link"), Path::new(target));
    }
    drop(session);
    assert_eq!(names_in(&real_folder), vec!["hoist.heft"]);
    assert_eq!(
        names_in(directory.path()),
        vec!["current.heft", "latest.heft", "sheets"]
    );

    // A link to a file not there yet: the save creates the file.
    let ahead = directory.path().join("ahead.heft");
    std::os::unix::fs::symlink("sheets/later.heft", &ahead).expect("link");
    let (session, _) = Session::start(&ahead).expect("open");
    session
        .save("m = 1 kg\n", None, false, false)
        .expect("save");
    assert_eq!(
        fs::read_to_string(real_folder.join("later.heft")).expect("read"),
        "m = 1 kg\n"
    );
    assert!(
        fs::symlink_metadata(&ahead)
            .expect("link")
            .file_type()
            .is_symlink()
    );
}

#[test]
fn a_file_with_several_names_is_written_in_place_so_every_name_shows_the_save() {
    let (directory, path) = sheet_with(SHEET);
    let other_name = directory.path().join("hoist-rev-c.heft");
    fs::hard_link(&path, &other_name).expect("hard link");
    fs::set_permissions(&path, fs::Permissions::from_mode(0o664)).expect("mode");
    let inode = fs::metadata(&path).expect("metadata").ino();
    let (session, _) = Session::start(&path).expect("open");
    let edited = SHEET.replace("12 kg", "16 kg");
    session
        .save(
            &edited,
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
        )
        .expect("save");
    for name in [&path, &other_name] {
        assert_eq!(fs::read_to_string(name).expect("read"), edited);
        let metadata = fs::metadata(name).expect("metadata");
        assert_eq!((metadata.ino(), metadata.nlink()), (inode, 2));
    }
    assert_eq!(mode_of(&path), 0o664);
    // The text was set aside first, in the recovery copy, for a crash
    // in the middle of the write; the notebook drops it once saved.
    assert_eq!(
        fs::read_to_string(session.recovery_path()).expect("set aside"),
        edited
    );
    // A shorter text leaves no tail of the longer one.
    session
        .save(
            "m = 1 kg\n",
            Some(Fingerprint::of(edited.as_bytes())),
            false,
            false,
        )
        .expect("save");
    assert_eq!(fs::read_to_string(&other_name).expect("read"), "m = 1 kg\n");
}

#[test]
fn saving_keeps_the_permissions_and_as_root_the_owner_and_group() {
    let (directory, path) = sheet_with(SHEET);
    fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).expect("mode");
    let as_root = running_as_root(directory.path());
    if as_root {
        std::os::unix::fs::chown(&path, Some(1234), Some(1234)).expect("chown");
    }
    let (session, _) = Session::start(&path).expect("open");
    session
        .save(
            "m = 14 kg\n",
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
        )
        .expect("save");
    let metadata = fs::metadata(&path).expect("metadata");
    assert_eq!(metadata.permissions().mode() & 0o7777, 0o640);
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 14 kg\n");
    if as_root {
        assert_eq!((metadata.uid(), metadata.gid()), (1234, 1234));
    } else {
        eprintln!("not root: the owner part of this test is skipped");
    }
}

#[test]
fn a_read_only_file_is_replaced_only_when_the_user_says_so() {
    let (_directory, path) = sheet_with(SHEET);
    fs::set_permissions(&path, fs::Permissions::from_mode(0o444)).expect("mode");
    let (session, _) = Session::start(&path).expect("open");
    let expected = Some(Fingerprint::of(SHEET.as_bytes()));
    assert!(matches!(
        session.save("m = 14 kg\n", expected, false, false),
        Err(SaveError::ReadOnly)
    ));
    assert_eq!(fs::read_to_string(&path).expect("read"), SHEET);
    session
        .save("m = 14 kg\n", expected, false, true)
        .expect("saved when allowed");
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 14 kg\n");
    assert_eq!(mode_of(&path), 0o444, "it stays read-only");
}

#[test]
fn the_notebook_asks_before_replacing_a_read_only_file() {
    let (_directory, path) = sheet_with(SHEET);
    let (_session, opened) = Session::start(&path).expect("open");
    let mut app = App::new(opened, Rect::new(0, 0, 80, 24), Theme::new(false));
    let press = |app: &mut App, c| {
        update(
            app,
            Message::Key(KeyEvent::new(KeyCode::Char(c), KeyModifiers::NONE)),
        )
    };
    press(&mut app, 'x');
    press(&mut app, 's');
    update(&mut app, Message::SaveReadOnly);
    assert!(matches!(app.mode(), Mode::Ask(Question::ReplaceReadOnly)));
    assert!(
        Question::ReplaceReadOnly.prompt().contains("read-only"),
        "the question says why"
    );
    let effects = press(&mut app, 'o');
    assert!(matches!(
        effects.as_slice(),
        [Effect::Save {
            replace_read_only: true,
            overwrite: false,
            ..
        }]
    ));
    // Then it turns out to have changed on disk too: both answers hold.
    update(&mut app, Message::SaveRefused);
    let effects = press(&mut app, 'o');
    assert!(matches!(
        effects.as_slice(),
        [Effect::Save {
            replace_read_only: true,
            overwrite: true,
            ..
        }]
    ));
    // A new save starts with no answers given.
    update(&mut app, Message::SaveFailed("disk full".into()));
    let effects = press(&mut app, 's');
    assert!(matches!(
        effects.as_slice(),
        [Effect::Save {
            replace_read_only: false,
            overwrite: false,
            ..
        }]
    ));
}

// ----- item: text being typed reaches the recovery copy -----

#[test]
fn typing_asks_for_the_recovery_copy_and_it_holds_the_line_being_typed() {
    let text = "m = 12 kg\n";
    let (_directory, path) = sheet_with(text);
    let (_session, opened) = Session::start(&path).expect("open");
    let mut app = App::new(opened, Rect::new(0, 0, 80, 24), Theme::new(false));
    let press =
        |app: &mut App, code| update(app, Message::Key(KeyEvent::new(code, KeyModifiers::NONE)));
    press(&mut app, KeyCode::Enter);
    let effects = press(&mut app, KeyCode::Char('5'));
    assert!(effects.contains(&Effect::KeepRecoverySoon), "{effects:?}");
    assert_eq!(
        app.recovery_effect(),
        Effect::KeepRecovery("m = 12 kg5\n".to_string())
    );
    // Typed back to the text on disk: nothing to keep.
    press(&mut app, KeyCode::Backspace);
    assert_eq!(app.recovery_effect(), Effect::DropRecovery);
}

// ----- item: recovery copies planted by someone else -----

/// Opens `path` with a file planted at its first recovery copy's name and
/// checks it is ignored, said so, and left alone.
#[track_caller]
fn planted_copy_is_ignored(path: &Path, planted: &Path, reason: &str) {
    let (session, opened) = start_within_seconds(path);
    assert!(opened.recovery.is_empty(), "{:?}", opened.recovery);
    assert!(
        opened.notices.iter().any(
            |notice| notice.contains(&planted.display().to_string()) && notice.contains(reason)
        ),
        "{:?}",
        opened.notices
    );
    assert_ne!(session.recovery_path(), planted);
    session.keep_recovery("m = 15 kg\n").expect("own copy");
    assert_eq!(mode_of(session.recovery_path()), 0o600);
    session.drop_recovery().expect("own copy dropped");
}

#[test]
fn a_planted_link_pipe_or_device_is_not_taken_for_unsaved_work() {
    let (directory, path) = sheet_with(SHEET);
    let planted = directory.path().join(".fixture.heft.heft-unsaved");

    // A link to a file only the victim can read.
    let secret = directory.path().join("secret.txt");
    fs::write(&secret, "the victim's private notes").expect("secret");
    fs::set_permissions(&secret, fs::Permissions::from_mode(0o600)).expect("mode");
    std::os::unix::fs::symlink(&secret, &planted).expect("link");
    planted_copy_is_ignored(&path, &planted, "a symbolic link");
    assert_eq!(
        fs::read_to_string(&secret).expect("secret"),
        "the victim's private notes"
    );
    fs::remove_file(&planted).expect("remove");

    // A link to a file anyone may write.
    let open_to_all = directory.path().join("open.txt");
    fs::write(&open_to_all, "m = 1 kg\n").expect("file");
    fs::set_permissions(&open_to_all, fs::Permissions::from_mode(0o666)).expect("mode");
    std::os::unix::fs::symlink(&open_to_all, &planted).expect("link");
    planted_copy_is_ignored(&path, &planted, "a symbolic link");
    fs::remove_file(&planted).expect("remove");

    // A named pipe: opening must not wait for a writer.
    let status = std::process::Command::new("mkfifo")
        .arg(&planted)
        .status()
        .expect("mkfifo runs");
    assert!(status.success());
    planted_copy_is_ignored(&path, &planted, "a named pipe, not a file");
    fs::remove_file(&planted).expect("remove");

    // A link to an endless device.
    std::os::unix::fs::symlink("/dev/zero", &planted).expect("link");
    planted_copy_is_ignored(&path, &planted, "a symbolic link");
}

#[test]
fn a_copy_anyone_may_write_another_user_owns_or_with_two_names_is_not_trusted() {
    let (directory, path) = sheet_with(SHEET);
    let planted = directory.path().join(".fixture.heft.heft-unsaved");
    fs::write(&planted, "m = 1 kg\n").expect("copy");
    fs::set_permissions(&planted, fs::Permissions::from_mode(0o666)).expect("mode");
    planted_copy_is_ignored(&path, &planted, "writable by other users (mode 0666)");

    fs::set_permissions(&planted, fs::Permissions::from_mode(0o600)).expect("mode");
    let elsewhere = directory.path().join("elsewhere.txt");
    fs::hard_link(&planted, &elsewhere).expect("hard link");
    planted_copy_is_ignored(&path, &planted, "a file with 2 names");
    fs::remove_file(&elsewhere).expect("remove");

    if running_as_root(directory.path()) {
        std::os::unix::fs::chown(&planted, Some(1234), Some(1234)).expect("chown");
        planted_copy_is_ignored(&path, &planted, "owned by another user (uid 1234)");
    } else {
        eprintln!("not root: the other-owner part of this test is skipped");
    }
}

#[test]
fn a_recovery_copy_is_written_as_a_new_private_file_not_through_a_planted_link() {
    let (directory, path) = sheet_with(SHEET);
    let (session, _) = Session::start(&path).expect("open");
    // Planted after opening, at this notebook's own name.
    let target = directory.path().join("open.txt");
    fs::write(&target, "untouched").expect("file");
    fs::set_permissions(&target, fs::Permissions::from_mode(0o666)).expect("mode");
    std::os::unix::fs::symlink(&target, session.recovery_path()).expect("link");
    session.keep_recovery("m = 15 kg\n").expect("keep");
    assert_eq!(fs::read_to_string(&target).expect("read"), "untouched");
    let copy = fs::symlink_metadata(session.recovery_path()).expect("copy");
    assert!(copy.is_file());
    assert_eq!(copy.permissions().mode() & 0o7777, 0o600);
}

// ----- item: temporary files of stopped saves -----

#[test]
fn temporary_files_of_stopped_saves_are_removed_and_nothing_else() {
    let (directory, path) = sheet_with(SHEET);
    let host = {
        let (session, _) = Session::start(&path).expect("open");
        host_in_lock(session.lock_path().expect("a lock"))
    };
    let dead = dead_pid();
    let own = std::process::id();
    let old = SystemTime::now() - Duration::from_secs(120);
    let plant = |name: &str, age: Option<SystemTime>| {
        let file = directory.path().join(name);
        fs::write(&file, "x".repeat(2000)).expect("plant");
        if let Some(time) = age {
            fs::File::options()
                .write(true)
                .open(&file)
                .and_then(|f| f.set_modified(time))
                .expect("age");
        }
        file
    };
    let stale = plant(&format!(".heft-save-{host}-{dead}-Ab12Cd"), Some(old));
    let recent = plant(&format!(".heft-save-{host}-{dead}-Ef34Gh"), None);
    let running = plant(&format!(".heft-save-{host}-{own}-Ij56Kl"), Some(old));
    let foreign = plant(&format!(".heft-save-other-box-{dead}-Mn78Op"), Some(old));
    let unnamed = plant(".heft-save-Qr90St", Some(old));
    let unrelated = plant("notes.txt", Some(old));

    let (_session, opened) = Session::start(&path).expect("open");
    assert!(!stale.exists());
    for kept in [&recent, &running, &foreign, &unnamed, &unrelated] {
        assert!(kept.exists(), "{} must stay", kept.display());
    }
    assert!(
        opened
            .notices
            .iter()
            .any(|notice| notice.contains("removed 1 temporary file (2 kB)")),
        "{:?}",
        opened.notices
    );
    assert!(
        opened
            .notices
            .iter()
            .any(|notice| notice.starts_with("1 temporary file .heft-save-*")),
        "{:?}",
        opened.notices
    );
}

#[test]
fn a_save_names_its_temporary_file_with_the_host_and_process() {
    let (directory, path) = sheet_with(SHEET);
    let (session, _) = Session::start(&path).expect("open");
    let host = host_in_lock(session.lock_path().expect("a lock"));
    let mut seen = Vec::new();
    session
        .save_with_pause(
            "m = 1 kg\n",
            Some(Fingerprint::of(SHEET.as_bytes())),
            false,
            false,
            || {
                seen = names_in(directory.path());
            },
        )
        .expect("save");
    let prefix = format!(".heft-save-{host}-{}-", std::process::id());
    assert!(
        seen.iter().any(|name| name.starts_with(&prefix)),
        "{prefix} in {seen:?}"
    );
}
