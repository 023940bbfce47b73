//! Opening the explorer window.

use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Result, bail};

/// Opens the explorer on `file`, or on the built-in demo scenario.
pub fn open_explorer(file: Option<PathBuf>) -> Result<ExitCode> {
    let _ = file;
    bail!("the explorer window is not built yet; use `lamina cut`, `lamina strobe` or `lamina check`")
}
