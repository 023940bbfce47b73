//! `lamina branch`: follow a resting point or a periodic orbit through the sweep block's
//! parameter range and locate where the behaviour changes; CSV, JSON and a picture.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::branch::{
    Branch, BranchPoint, BranchRange, BranchSettings, BranchSink, SpecialKind, SpecialPoint,
    doubled_orbits, follow_orbit_branch, follow_rest_branch, orbits_from_hopf,
};
use lamina_core::cycle::Number;

use super::branch_output::{Outputs, write_outputs};
use super::branch_start::{map_for, resting_start, settled_orbit};
use super::cycle::MapArg;
use super::failure::Interrupted;
use super::outputs;
use super::prepare::{Prepared, prepare};
use super::progress::Progress;
use super::signals::interrupt_on_signal;

/// Arguments of `lamina branch`.
#[derive(clap::Args, Debug)]
pub struct BranchArgs {
    /// Scenario file (.ron) with a `sweep` block: its parameter is moved over [from, to],
    /// starting at the parameter's value in the scenario.
    file: PathBuf,
    /// What to follow: a resting point or a periodic orbit.
    #[arg(long, value_enum)]
    of: OfArg,
    /// The map of an orbit: `cut` (autonomous models) or `strobe` (forced models). Default:
    /// the strobe for a model that uses t, else the cut.
    #[arg(long, value_enum, value_name = "MAP")]
    map: Option<MapArg>,
    /// Returns per period of the orbit to start from. Default: the repeat found in the run's
    /// settled points.
    #[arg(long, value_name = "K")]
    returns: Option<usize>,
    /// Where an orbit branch starts: at the orbit the run settles into, at the Hopf point of
    /// the resting branch (the orbits born there), or at the period doubling of the settled
    /// orbit's branch (the orbits of twice the period born there); the special point nearest
    /// the scenario's value is taken.
    #[arg(long, value_enum, default_value = "settled")]
    start: StartArg,
    /// Write the branch as CSV to this file (atomically); without --json and --out the CSV
    /// goes to stdout.
    #[arg(long, value_name = "FILE.csv")]
    out: Option<PathBuf>,
    /// Write the branch as JSON on stdout.
    #[arg(long)]
    json: bool,
    /// Draw the branch over the orbit diagram into this PNG.
    #[arg(long, value_name = "FILE.png")]
    png: Option<PathBuf>,
}

impl BranchArgs {
    /// Whether the result goes out as JSON.
    pub fn json(&self) -> bool {
        self.json
    }
}

/// The `--of` choices.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum OfArg {
    /// A resting point (equilibrium).
    Rest,
    /// A periodic orbit.
    Cycle,
}

/// The `--start` choices.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum StartArg {
    /// The resting point or orbit the scenario's run settles into.
    Settled,
    /// The orbits born at the Hopf point of the resting branch.
    Hopf,
    /// The orbits of twice the period born at a period doubling of the orbit branch.
    PeriodDoubling,
}

/// A branch with what the output needs to describe it.
pub struct Followed {
    /// The branch.
    pub branch: Branch,
    /// The parameter's name.
    pub parameter: String,
    /// Where the point it started from came from, in words: "the resting point the run
    /// settles into", or for a branch born at a special point "on the branch of ...".
    pub how: String,
}

/// Progress on the terminal's bar: the share of the work and the parameter value reached.
struct Bar<'a> {
    progress: &'a Progress,
    parameter: &'a str,
    /// The part of the bar this branch fills: `(start, share)`.
    part: (f64, f64),
}

impl BranchSink for Bar<'_> {
    fn point(&mut self, point: &BranchPoint) -> std::ops::ControlFlow<()> {
        self.progress
            .show(&format!("{} = {}", self.parameter, Number(point.value)));
        std::ops::ControlFlow::Continue(())
    }
    fn progress(&mut self, fraction: f64) {
        self.progress
            .update_fraction(self.part.0 + self.part.1 * fraction);
    }
}

/// `lamina branch`.
pub fn branch(args: &BranchArgs) -> Result<ExitCode> {
    // every output path is checked before the branch is followed
    let paths = outputs::out_and_png(&args.file, args.out.as_deref(), args.png.as_deref())?;
    for (flag, path) in &paths {
        outputs::probe(flag, path)?;
    }
    let prepared = prepare(&args.file)?;
    // Ctrl-C stops the walk at its next point; nothing is written for a stopped branch
    let interrupt = interrupt_on_signal()?;
    let followed = follow(
        &prepared,
        &args.file,
        args.of,
        args.map,
        args.returns,
        args.start,
        &interrupt,
    );
    if interrupt.is_raised() {
        return Err(stopped_branch(followed.ok().as_ref(), &paths).into());
    }
    let followed = followed?;
    write_outputs(
        &prepared,
        &args.file,
        &followed,
        &Outputs {
            csv: args.out.as_deref(),
            json: args.json,
            png: args.png.as_deref(),
        },
    )?;
    Ok(ExitCode::SUCCESS)
}

/// The range of the scenario's sweep block, checked against the parameter's value.
pub fn branch_range(prepared: &Prepared) -> Result<(BranchRange, String)> {
    let scenario = &prepared.scenario;
    let Some(sweep) = &scenario.sweep else {
        bail!(
            "the scenario has no sweep block: a branch moves the sweep's parameter over its \
             range [from, to]; add `sweep: Some((parameter: \"...\", from: ..., to: ..., ...))`"
        );
    };
    let parameter = scenario
        .parameter_index(&sweep.parameter)
        .with_context(|| {
            format!(
                "sweep.parameter '{}' is not a parameter of the model",
                sweep.parameter
            )
        })?;
    let value = scenario.parameters[parameter].value;
    let (low, high) = (sweep.from.min(sweep.to), sweep.from.max(sweep.to));
    if sweep.from == sweep.to {
        bail!(
            "sweep.from and sweep.to are both {}: a branch needs a range",
            sweep.from
        );
    }
    if !(low..=high).contains(&value) {
        bail!(
            "parameters[{parameter}].value: '{}' is {value}, outside the sweep's range [{low}, \
             {high}] (sweep.from, sweep.to); a branch starts at the scenario's value, so move \
             the value into the range or widen the range",
            sweep.parameter
        );
    }
    Ok((
        BranchRange {
            parameter,
            from: sweep.from,
            to: sweep.to,
        },
        sweep.parameter.clone(),
    ))
}

/// Follows the branch the arguments ask for.
pub fn follow(
    prepared: &Prepared,
    path: &Path,
    of: OfArg,
    map: Option<MapArg>,
    returns: Option<usize>,
    start: StartArg,
    interrupt: &Interrupt,
) -> Result<Followed> {
    let (range, parameter) = branch_range(prepared)?;
    if returns == Some(0) {
        bail!("--returns must be at least 1");
    }
    if of == OfArg::Cycle && !prepared.model.uses_time() && prepared.model.start().len() < 2 {
        bail!("a model with one state has no periodic orbits (its states only rise or fall)");
    }
    let settings = BranchSettings::default();
    let progress = Progress::new("branch");
    let bar = |part: (f64, f64)| Bar {
        progress: &progress,
        parameter: &parameter,
        part,
    };
    let model = &prepared.model;
    let result = match (of, start) {
        (OfArg::Rest, StartArg::Settled) => {
            if model.uses_time() {
                bail!(lamina_core::branch::BranchError::Forced);
            }
            let (state, origin) = resting_start(prepared, interrupt)?;
            let how = format!("from {}", origin.words());
            let branch = follow_rest_branch(
                model,
                &range,
                &state,
                &settings,
                &mut bar((0.0, 1.0)),
                interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how,
            }
        }
        (OfArg::Rest, _) => bail!(
            "--start hopf and --start period-doubling start orbit branches: use them with \
             --of cycle"
        ),
        (OfArg::Cycle, StartArg::Settled) => {
            let (orbit_map, orbit, found) = settled_orbit(prepared, path, map, returns, interrupt)?;
            let how = format!("from {found}");
            let branch = follow_orbit_branch(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &orbit,
                &settings,
                &mut bar((0.0, 1.0)),
                interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how,
            }
        }
        (OfArg::Cycle, StartArg::Hopf) => {
            let orbit_map = map_for(prepared, map, true)?;
            let (state, origin) = resting_start(prepared, interrupt)?;
            let how = origin.words();
            let resting = follow_rest_branch(
                model,
                &range,
                &state,
                &settings,
                &mut bar((0.0, 0.3)),
                interrupt,
            )?;
            let hopf = nearest(
                &resting,
                SpecialKind::Hopf,
                model.parameters()[range.parameter],
            )
            .with_context(|| {
                format!(
                    "the resting branch from {how} has no Hopf point in [{}, {}], so no \
                         orbits are born on it there",
                    range.low(),
                    range.high()
                )
            })?;
            let branch = orbits_from_hopf(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &hopf,
                &settings,
                &mut bar((0.3, 0.7)),
                interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how: format!("on the branch of {how}"),
            }
        }
        (OfArg::Cycle, StartArg::PeriodDoubling) => {
            let (orbit_map, orbit, how) = settled_orbit(prepared, path, map, returns, interrupt)?;
            let single = follow_orbit_branch(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &orbit,
                &settings,
                &mut bar((0.0, 0.5)),
                interrupt,
            )?;
            let doubling = nearest(
                &single,
                SpecialKind::PeriodDoubling,
                model.parameters()[range.parameter],
            )
            .with_context(|| {
                format!(
                    "the branch of {how} has no period doubling in [{}, {}]",
                    range.low(),
                    range.high()
                )
            })?;
            let branch = doubled_orbits(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &doubling,
                &settings,
                &mut bar((0.5, 0.5)),
                interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how: format!("on the branch of {how}"),
            }
        }
    };
    progress.finish();
    Ok(result)
}

/// The special point of `kind` nearest the value `value` in the parameter.
fn nearest(branch: &Branch, kind: SpecialKind, value: f64) -> Option<SpecialPoint> {
    branch
        .special
        .iter()
        .filter(|s| s.kind == kind)
        .min_by(|a, b| (a.value - value).abs().total_cmp(&(b.value - value).abs()))
        .cloned()
}

/// What a branch stopped on a signal did: where its walk stood (the parameter values its
/// points reached) and that no output was written.
fn stopped_branch(followed: Option<&Followed>, outputs: &[(&str, &Path)]) -> Interrupted {
    let reached = followed
        .filter(|f| !f.branch.points.is_empty())
        .map_or_else(
            || " before the branch had its first point".to_string(),
            |f| {
                let values = f.branch.points.iter().map(|p| p.value);
                let low = values.clone().fold(f64::INFINITY, f64::min);
                let high = values.fold(f64::NEG_INFINITY, f64::max);
                format!(
                    " after {} point(s), {} from {} to {}",
                    f.branch.points.len(),
                    f.parameter,
                    Number(low),
                    Number(high)
                )
            },
        );
    let paths: Vec<&Path> = outputs.iter().map(|(_, path)| *path).collect();
    let written = super::outputs::nothing_written(&paths);
    Interrupted(format!("stopped on a signal{reached}; {written}"))
}
