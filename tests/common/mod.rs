//! Helpers shared by the command-line tests: demo paths, scenario files, directory listings.
//! (Each test binary uses some of them.)
#![allow(dead_code)]

use std::fs;
use std::path::{Path, PathBuf};

/// Demo scenario `name` in `demo_scenarios/`.
pub fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo_scenarios")
        .join(name)
}

/// Writes `text` to `name` in `dir` and returns the path.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    fs::write(&path, text).expect("scenario written");
    path
}

/// The sorted file names in `dir`, hidden ones included.
pub fn listing(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(dir)
        .expect("directory is readable")
        .map(|entry| {
            let entry = entry.expect("directory entry");
            entry.file_name().to_string_lossy().into_owned()
        })
        .collect();
    names.sort();
    names
}
