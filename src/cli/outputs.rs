//! The output files of a command: checked against the scenario and each other and opened
//! before the computation starts (so a bad path fails in a second, not after an hour), and
//! never put over a good file by a run that failed.

use std::path::Path;

use anyhow::{Context, Result, bail};
use lamina_export::{AtomicFile, FileIdentity, Written};

/// Refuses outputs that would write over the scenario file or over each other: `outputs`
/// are `(flag, path)` pairs, compared as files (a link, a hard link or another spelling of
/// the same path counts as the same file; `/dev/null` may take several).
pub fn check_paths(scenario: &Path, outputs: &[(&str, &Path)]) -> Result<()> {
    let input = FileIdentity::of(scenario);
    for (i, (flag, path)) in outputs.iter().enumerate() {
        let identity = FileIdentity::of(path);
        if identity.clashes_with(&input) {
            bail!(
                "{flag} {} is the scenario file itself: writing there would destroy it; choose \
                 another file",
                path.display()
            );
        }
        for (other_flag, other_path) in &outputs[..i] {
            if identity.clashes_with(&FileIdentity::of(other_path)) {
                bail!(
                    "{other_flag} {} and {flag} {} are the same file: one would overwrite the \
                     other; choose two files",
                    other_path.display(),
                    path.display()
                );
            }
        }
    }
    Ok(())
}

/// The `--out` and `--png` files of a command, as `(flag, path)` pairs, checked against the
/// scenario and each other (see [`check_paths`]).
pub fn out_and_png<'a>(
    scenario: &Path,
    out: Option<&'a Path>,
    png: Option<&'a Path>,
) -> Result<Vec<(&'static str, &'a Path)>> {
    let paths: Vec<(&'static str, &'a Path)> = [("--out", out), ("--png", png)]
        .into_iter()
        .filter_map(|(flag, path)| Some((flag, path?)))
        .collect();
    check_paths(scenario, &paths)?;
    Ok(paths)
}

/// Opens the output of `flag` now if one was asked for (see [`open`]).
pub fn open_if(flag: &str, path: Option<&Path>) -> Result<Option<AtomicFile>> {
    path.map(|path| open(flag, path)).transpose()
}

/// Opens `path` for the output of `flag` now (a temporary file beside it, or the device
/// itself), so that a missing or unwritable directory is reported before the run.
pub fn open(flag: &str, path: &Path) -> Result<AtomicFile> {
    AtomicFile::create(path).with_context(|| format!("{flag} {}", path.display()))
}

/// Checks now that `path` can take the output of `flag` (a temporary file is made in its
/// directory and removed again), for a command that writes its files only at the end. A
/// device or FIFO is not opened here (a FIFO's reader would see its end at once).
pub fn probe(flag: &str, path: &Path) -> Result<()> {
    let special = std::fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir());
    if !special {
        drop(open(flag, path)?);
    }
    Ok(())
}

/// Commits `file` and says where `what` went: to its target when the run `succeeded` or
/// nothing was there, else beside the existing file, which is left as it was.
pub fn finish(file: AtomicFile, succeeded: bool, what: &str) -> Result<String> {
    let written = file.commit_unless_failed(succeeded)?;
    Ok(match written {
        Written::Target(path) => format!("wrote {what} to {}", path.display()),
        Written::Beside { kept, written } => format!(
            "{} was left as it was (a failed run does not replace a file); {what} went to {}",
            kept.display(),
            written.display()
        ),
    })
}

/// `"nothing was written to A, B"` for the outputs of a command stopped on a signal (their
/// temporary files are removed, the targets left as they were).
pub fn nothing_written(paths: &[&Path]) -> String {
    if paths.is_empty() {
        return "nothing was written".to_string();
    }
    let names: Vec<String> = paths.iter().map(|p| p.display().to_string()).collect();
    format!("nothing was written to {}", names.join(", "))
}
