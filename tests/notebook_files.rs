//! The notebook's file I/O: atomic save that keeps untouched bytes, refusal
//! to overwrite a file changed on disk, and the recovery copy.

use std::fs;

use heftsheet::tui::files::{self, Fingerprint, SaveError};

const SHEET: &str =
    "// hand-aligned, CRLF, no final break\r\nm   = 12 kg   \"mass\"\r\nW [N] = m * g0";

#[test]
fn opening_reads_the_text_and_its_fingerprint() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("fixture.heft");
    fs::write(&path, SHEET).expect("write");
    let opened = files::open(&path).expect("open");
    assert_eq!(opened.text, SHEET);
    assert_eq!(opened.disk, Some(Fingerprint::of(SHEET.as_bytes())));
    assert_eq!(opened.recovery, None);
}

#[test]
fn a_new_name_opens_an_empty_sheet_and_saving_creates_it() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("new.heft");
    let opened = files::open(&path).expect("open");
    assert_eq!((opened.text.as_str(), opened.disk), ("", None));
    let fingerprint = files::save(&path, "m = 1 kg\n", None, false).expect("save");
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 1 kg\n");
    assert_eq!(fingerprint, Fingerprint::of(b"m = 1 kg\n"));
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = fs::metadata(&path).expect("metadata").permissions().mode();
        assert_eq!(mode & 0o777, 0o644);
    }
}

#[test]
fn a_file_that_is_not_utf8_is_refused_rather_than_saved_back_changed() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("latin1.heft");
    fs::write(&path, b"m = 12 kg \"\xe9\"\n").expect("write");
    let error = files::open(&path).expect_err("refused");
    assert!(
        error.to_string().contains("not valid UTF-8 from byte 11"),
        "{error}"
    );
}

#[test]
fn saving_replaces_the_file_whole_and_leaves_no_temporary_file() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("fixture.heft");
    fs::write(&path, SHEET).expect("write");
    let edited = SHEET.replace("12 kg", "14 kg");
    files::save(
        &path,
        &edited,
        Some(Fingerprint::of(SHEET.as_bytes())),
        false,
    )
    .expect("save");
    assert_eq!(fs::read(&path).expect("read"), edited.as_bytes());
    let names: Vec<String> = fs::read_dir(directory.path())
        .expect("list")
        .map(|entry| {
            entry
                .expect("entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    assert_eq!(names, vec!["fixture.heft"]);
}

#[test]
fn a_file_changed_on_disk_is_not_overwritten_unless_asked() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("fixture.heft");
    fs::write(&path, SHEET).expect("write");
    let opened_as = Fingerprint::of(SHEET.as_bytes());
    // Someone else saves the file meanwhile.
    fs::write(&path, "m = 99 kg\n").expect("write");
    let refused = files::save(&path, "m = 13 kg\n", Some(opened_as), false);
    assert!(matches!(refused, Err(SaveError::ChangedOnDisk)));
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 99 kg\n");
    // Removed meanwhile counts as changed too.
    fs::remove_file(&path).expect("remove");
    assert!(matches!(
        files::save(&path, "m = 13 kg\n", Some(opened_as), false),
        Err(SaveError::ChangedOnDisk)
    ));
    files::save(&path, "m = 13 kg\n", Some(opened_as), true).expect("overwrite when asked");
    assert_eq!(fs::read_to_string(&path).expect("read"), "m = 13 kg\n");
}

#[test]
fn the_recovery_copy_is_kept_offered_and_dropped() {
    let directory = tempfile::tempdir().expect("directory");
    let path = directory.path().join("fixture.heft");
    fs::write(&path, SHEET).expect("write");
    let recovery = files::recovery_path(&path);
    assert_eq!(
        recovery,
        directory.path().join(".fixture.heft.heft-unsaved")
    );
    files::keep_recovery(&path, "m = 15 kg\n").expect("keep");
    assert_eq!(
        files::open(&path).expect("open").recovery.as_deref(),
        Some("m = 15 kg\n")
    );
    // A copy equal to the file is nothing to recover.
    files::keep_recovery(&path, SHEET).expect("keep");
    assert_eq!(files::open(&path).expect("open").recovery, None);
    files::drop_recovery(&path).expect("drop");
    assert!(!recovery.exists());
    files::drop_recovery(&path).expect("dropping twice is fine");
}
