//! Running a scenario's regime map (or one shard of it) on all cores with a progress bar:
//! what `lamina map` and `lamina render --view map` share.

use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::model::Model;
use lamina_core::regime_map::{MapCell, MapProblem, RegimeMapSpec, run_cells};
use lamina_core::run::Strobe;
use lamina_scenario::Scenario;

use super::failure::Interrupted;
use super::outputs;
use super::prepare::prepare;
use super::progress::Progress;

/// The map of a scenario as core settings.
pub fn map_spec(scenario: &Scenario) -> Result<RegimeMapSpec> {
    if scenario.map.is_none() {
        bail!("the scenario has no map: add a `map: Some((x: ..., y: ..., ...))` block");
    }
    scenario
        .map_spec()
        .context("a map axis names a parameter the scenario does not have")
}

/// A map run (or the part of it done before an interrupt).
pub struct MapRun {
    /// The scenario as loaded.
    pub scenario: Scenario,
    /// The map settings.
    pub spec: RegimeMapSpec,
    /// The cells done, by cell number.
    pub cells: Vec<MapCell>,
    /// How many cells were to be run.
    pub n_cells: usize,
}

impl MapRun {
    /// The x and y parameters' names.
    pub fn parameter_names(&self) -> (String, String) {
        let name = |idx: usize| self.scenario.parameters[idx].name.clone();
        (name(self.spec.x.parameter), name(self.spec.y.parameter))
    }
}

/// Runs the cells of the scenario's map (all, or shard `(I, N)`: every N-th cell from I) in
/// parallel on rayon's pool, with a progress bar of cells on stderr; `interrupt` stops it
/// between (and inside) cells.
pub fn run_map(
    path: &Path,
    shard: Option<(usize, usize)>,
    interrupt: &Interrupt,
) -> Result<MapRun> {
    let prepared = prepare(path)?;
    let scenario = prepared.scenario.clone();
    let spec = map_spec(&scenario)?;
    let indices: Vec<usize> = match shard {
        Some((i, n)) => spec.shard_indices(i, n),
        None => (0..spec.n_cells()).collect(),
    };
    let strobe_spec = scenario.strobe_spec();
    let strobe_for = move |m: &Model| {
        strobe_spec
            .as_ref()
            .and_then(|s| Strobe::compile(s, m).ok())
    };
    let problem = MapProblem {
        model: &prepared.model,
        run: &prepared.spec,
        cut: prepared.cut.as_ref(),
        strobe_for: &strobe_for,
        map: &spec,
    };
    let progress = Progress::new("map");
    let total = indices.len();
    let done = AtomicUsize::new(0);
    let cells = run_cells(&problem, &indices, interrupt, &|_| {
        let d = done.fetch_add(1, Ordering::Relaxed) + 1;
        progress.update_fraction(d as f64 / total.max(1) as f64);
        progress.show(&format!("{d} of {total} cells"));
    })?;
    progress.finish();
    Ok(MapRun {
        scenario,
        spec,
        cells,
        n_cells: total,
    })
}

/// What a map stopped on a signal did.
pub fn stopped_map(run: &MapRun, written: &[&Path]) -> Interrupted {
    Interrupted(format!(
        "stopped on a signal after {} of {} cell(s); {}",
        run.cells.len(),
        run.n_cells,
        outputs::nothing_written(written)
    ))
}
