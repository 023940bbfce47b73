//! `lamina check`: every problem of a scenario with its location.

use std::path::Path;
use std::process::ExitCode;

use anyhow::Result;

/// Prints every problem of the scenario at `path` to stderr, then a line that counts them
/// (`ok`, `ok, 1 warning`, `2 error(s), 1 warning`); exit code 1 if any is an error.
pub fn check(path: &Path) -> Result<ExitCode> {
    let scenario = match lamina_scenario::load_file(path) {
        Ok(s) => s,
        // An I/O error already names the file.
        Err(err @ lamina_scenario::ScenarioError::Io { .. }) => {
            eprintln!("{err}");
            return Ok(ExitCode::FAILURE);
        }
        Err(err) => {
            eprintln!("{}: {err}", path.display());
            return Ok(ExitCode::FAILURE);
        }
    };
    if let Some(note) = scenario.format_note() {
        eprintln!("{}: {note}", path.display());
    }
    let problems = scenario.check();
    for problem in &problems {
        eprintln!("{}: {problem}", path.display());
    }
    let n_errors = problems.iter().filter(|p| p.is_error()).count();
    let n_warnings = problems.len() - n_errors;
    let warnings = match n_warnings {
        0 => String::new(),
        1 => ", 1 warning".to_owned(),
        n => format!(", {n} warnings"),
    };
    if n_errors > 0 {
        eprintln!("{}: {n_errors} error(s){warnings}", path.display());
        Ok(ExitCode::FAILURE)
    } else {
        eprintln!("{}: ok{warnings}", path.display());
        Ok(ExitCode::SUCCESS)
    }
}
