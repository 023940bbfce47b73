//! What an output file does to what is already there: links are written through, devices
//! and FIFOs written directly and never replaced, permissions kept or given as usual, a failed
//! run's output set beside an existing file, and two paths of one file recognised.

#![cfg(unix)]

use std::fs;
use std::io::{Read, Write};
use std::os::unix::fs::{FileTypeExt, PermissionsExt, symlink};
use std::path::Path;
use std::process::Command;

use lamina_export::{AtomicFile, FileIdentity, Written, write_bytes_atomically};

fn mode(path: &Path) -> u32 {
    fs::metadata(path).expect("exists").permissions().mode() & 0o7777
}

#[test]
fn a_symbolic_link_is_written_through_and_stays_a_link() {
    let dir = tempfile::tempdir().expect("tempdir");
    let real = dir.path().join("real.csv");
    fs::write(&real, "old\n").expect("seed");
    let link = dir.path().join("link.csv");
    symlink(&real, &link).expect("link");
    write_bytes_atomically(&link, b"new\n").expect("written");
    assert!(
        fs::symlink_metadata(&link)
            .expect("link")
            .file_type()
            .is_symlink()
    );
    assert_eq!(fs::read_to_string(&real).expect("read"), "new\n");
    // a link whose file does not exist yet makes that file
    let dangling = dir.path().join("dangling.csv");
    symlink("made.csv", &dangling).expect("link");
    write_bytes_atomically(&dangling, b"made\n").expect("written");
    assert!(
        fs::symlink_metadata(&dangling)
            .expect("link")
            .file_type()
            .is_symlink()
    );
    assert_eq!(
        fs::read_to_string(dir.path().join("made.csv")).expect("read"),
        "made\n"
    );
}

#[test]
fn a_fifo_is_written_directly_and_never_replaced() {
    let dir = tempfile::tempdir().expect("tempdir");
    let fifo = dir.path().join("pipe");
    let made = Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    let reader_path = fifo.clone();
    let reader = std::thread::spawn(move || {
        let mut text = String::new();
        fs::File::open(&reader_path)
            .expect("open for reading")
            .read_to_string(&mut text)
            .expect("read");
        text
    });
    let mut file = AtomicFile::create(&fifo).expect("opened");
    assert!(!file.replaces_existing());
    file.write_all(b"through the pipe\n").expect("write");
    assert_eq!(
        file.commit_unless_failed(false).expect("flushed"),
        Written::Target(fifo.clone())
    );
    assert_eq!(reader.join().expect("reader"), "through the pipe\n");
    assert!(
        fs::metadata(&fifo)
            .expect("still there")
            .file_type()
            .is_fifo()
    );
    let listing = fs::read_dir(dir.path()).expect("list").count();
    assert_eq!(listing, 1, "no temporary file beside the FIFO");
}

#[test]
fn a_directory_is_refused_by_name() {
    let dir = tempfile::tempdir().expect("tempdir");
    let Err(err) = AtomicFile::create(dir.path()) else {
        panic!("a directory is not an output file");
    };
    assert!(err.to_string().contains("is a directory"), "{err}");
}

#[test]
fn a_replaced_file_keeps_its_permissions_and_a_new_one_gets_the_usual() {
    let dir = tempfile::tempdir().expect("tempdir");
    let shared = dir.path().join("shared.csv");
    fs::write(&shared, "old").expect("seed");
    fs::set_permissions(&shared, fs::Permissions::from_mode(0o664)).expect("chmod");
    write_bytes_atomically(&shared, b"new").expect("written");
    // [common practice] replacing a file's contents keeps its permissions
    assert_eq!(mode(&shared), 0o664);
    fs::set_permissions(&shared, fs::Permissions::from_mode(0o640)).expect("chmod");
    write_bytes_atomically(&shared, b"newer").expect("written");
    assert_eq!(mode(&shared), 0o640);
    // [common practice] a new file gets 0666 under the umask, as any program's would (the
    // reference file is made by the standard library with exactly that)
    let reference = dir.path().join("reference");
    fs::File::create(&reference).expect("reference");
    let fresh = dir.path().join("fresh.csv");
    write_bytes_atomically(&fresh, b"x").expect("written");
    assert_eq!(mode(&fresh), mode(&reference));
    assert_ne!(mode(&fresh), 0o600);
}

#[test]
fn a_failed_run_sets_its_output_beside_an_existing_file() {
    let dir = tempfile::tempdir().expect("tempdir");
    let good = dir.path().join("points.csv");
    fs::write(&good, "good\n").expect("seed");
    let mut file = AtomicFile::create(&good).expect("create");
    assert!(file.replaces_existing());
    file.write_all(b"partial\n").expect("write");
    let written = file.commit_unless_failed(false).expect("set aside");
    let beside = dir.path().join("points.unfinished.csv");
    assert_eq!(
        written,
        Written::Beside {
            kept: good.clone(),
            written: beside.clone()
        }
    );
    assert_eq!(fs::read_to_string(&good).expect("read"), "good\n");
    assert_eq!(fs::read_to_string(&beside).expect("read"), "partial\n");
    // with nothing to lose the failed run's valid points go to the target itself
    let new = dir.path().join("new.csv");
    let mut file = AtomicFile::create(&new).expect("create");
    file.write_all(b"partial\n").expect("write");
    assert_eq!(
        file.commit_unless_failed(false).expect("written"),
        Written::Target(new.clone())
    );
    assert_eq!(fs::read_to_string(&new).expect("read"), "partial\n");
}

#[test]
fn two_paths_of_one_file_are_recognised() {
    let dir = tempfile::tempdir().expect("tempdir");
    let file = dir.path().join("model.ron");
    fs::write(&file, "x").expect("seed");
    let link = dir.path().join("link.ron");
    symlink(&file, &link).expect("link");
    let hard = dir.path().join("hard.ron");
    fs::hard_link(&file, &hard).expect("hard link");
    let dotted = dir.path().join(".").join("model.ron");
    let id = FileIdentity::of(&file);
    for other in [&link, &hard, &dotted] {
        assert!(id.clashes_with(&FileIdentity::of(other)), "{other:?}");
    }
    let new_a = dir.path().join("out.png");
    let new_b = dir.path().join(".").join("out.png");
    assert!(FileIdentity::of(&new_a).clashes_with(&FileIdentity::of(&new_b)));
    assert!(!FileIdentity::of(&new_a).clashes_with(&id));
    // /dev/null may take any number of outputs
    let null = Path::new("/dev/null");
    assert!(!FileIdentity::of(null).clashes_with(&FileIdentity::of(null)));
}
