//! Loading a scenario for a batch command: parse, check, compile into a core run.

use std::path::Path;

use anyhow::{Context, Result, bail};
use lamina_core::model::Model;
use lamina_core::run::{Cut, RunSpec, Strobe};

/// A scenario compiled for the core.
#[derive(Clone)]
pub struct Prepared {
    /// The scenario as loaded.
    pub scenario: lamina_scenario::Scenario,
    /// The compiled model.
    pub model: Model,
    /// Run settings.
    pub spec: RunSpec,
    /// The cut, if the scenario has one.
    pub cut: Option<Cut>,
    /// The strobe, if the scenario has one.
    pub strobe: Option<Strobe>,
}

/// Loads and checks `path`; any problem is an error listing all of them.
pub fn prepare(path: &Path) -> Result<Prepared> {
    let scenario = lamina_scenario::load_file(path)
        .with_context(|| format!("cannot load {}", path.display()))?;
    let problems: Vec<_> = scenario
        .check()
        .into_iter()
        .filter(|p| p.is_error())
        .collect();
    if !problems.is_empty() {
        let list: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
        bail!(
            "{} has {} problem(s):\n{}",
            path.display(),
            problems.len(),
            list.join("\n")
        );
    }
    let compiled = scenario
        .compile()
        .with_context(|| format!("cannot compile {}", path.display()))?;
    Ok(Prepared {
        scenario,
        model: compiled.model,
        spec: compiled.run,
        cut: compiled.cut,
        strobe: compiled.strobe,
    })
}
