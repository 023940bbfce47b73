//! Opening the explorer window.

use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Result, anyhow};

/// Opens the explorer on `file`, or on the built-in demo scenario.
pub fn open_explorer(file: Option<PathBuf>) -> Result<ExitCode> {
    if let Some(path) = &file
        && !path.exists()
    {
        return Err(anyhow!("{}: no such file", path.display()));
    }
    lamina_explorer::run_window(file).map_err(|e| anyhow!(e))?;
    Ok(ExitCode::SUCCESS)
}
