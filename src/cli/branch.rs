//! `lamina branch`: follow a resting point or a periodic orbit through the sweep block's
//! parameter range and locate where the behaviour changes; CSV, JSON and a picture.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::branch::{
    Branch, BranchPoint, BranchRange, BranchSettings, BranchSink, OrbitMap, OrbitStart,
    SpecialKind, SpecialPoint, doubled_orbits, follow_orbit_branch, follow_rest_branch,
    orbits_from_hopf,
};
use lamina_core::cycle::{FlowMap, MapKind, MapSettings, NewtonSettings, Number, find_cycle};
use lamina_core::rest::{RestNewtonSettings, solve_resting_point};
use lamina_core::run::{Run, Sink};

use super::branch_output::{Outputs, write_outputs};
use super::cycle::{MapArg, SeedOrigin, seeds_from_run};
use super::prepare::{Prepared, prepare};
use super::progress::Progress;

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
    let prepared = prepare(&args.file)?;
    let followed = follow(
        &prepared,
        &args.file,
        args.of,
        args.map,
        args.returns,
        args.start,
    )?;
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
) -> Result<Followed> {
    let (range, parameter) = branch_range(prepared)?;
    if returns == Some(0) {
        bail!("--returns must be at least 1");
    }
    if of == OfArg::Cycle && !prepared.model.uses_time() && prepared.model.start().len() < 2 {
        bail!("a model with one state has no periodic orbits (its states only rise or fall)");
    }
    let settings = BranchSettings::default();
    let interrupt = Interrupt::new();
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
            let (state, origin) = resting_start(prepared)?;
            let how = format!("from {}", origin.words());
            let branch = follow_rest_branch(
                model,
                &range,
                &state,
                &settings,
                &mut bar((0.0, 1.0)),
                &interrupt,
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
            let (orbit_map, orbit, found) = settled_orbit(prepared, path, map, returns)?;
            let how = format!("from {found}");
            let branch = follow_orbit_branch(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &orbit,
                &settings,
                &mut bar((0.0, 1.0)),
                &interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how,
            }
        }
        (OfArg::Cycle, StartArg::Hopf) => {
            let orbit_map = map_for(prepared, map, true)?;
            let (state, origin) = resting_start(prepared)?;
            let how = origin.words();
            let resting = follow_rest_branch(
                model,
                &range,
                &state,
                &settings,
                &mut bar((0.0, 0.3)),
                &interrupt,
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
                &interrupt,
            )?;
            Followed {
                branch,
                parameter: parameter.clone(),
                how: format!("on the branch of {how}"),
            }
        }
        (OfArg::Cycle, StartArg::PeriodDoubling) => {
            let (orbit_map, orbit, how) = settled_orbit(prepared, path, map, returns)?;
            let single = follow_orbit_branch(
                model,
                &orbit_map,
                &prepared.spec,
                &range,
                &orbit,
                &settings,
                &mut bar((0.0, 0.5)),
                &interrupt,
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
                &interrupt,
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

/// Discards what a run finds.
struct Quiet<'a>(&'a Progress);

impl Sink for Quiet<'_> {
    fn progress(&mut self, t: f64, fraction: f64) {
        self.0.update(t, fraction);
    }
}

/// Whether the scenario's run ends at a resting point (Newton's method from its end state
/// converges next to it).
pub fn run_settles_at_rest(prepared: &Prepared) -> bool {
    !prepared.model.uses_time()
        && resting_start(prepared).is_ok_and(|(_, origin)| origin == RestOrigin::Settled)
}

/// Where the resting point a branch starts from was found.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RestOrigin {
    /// Where the scenario's run settles.
    Settled,
    /// Newton's method from the start state.
    FromStart,
}

impl RestOrigin {
    /// In words, for the output.
    pub fn words(self) -> &'static str {
        match self {
            Self::Settled => "the resting point the run settles into",
            Self::FromStart => "the resting point Newton's method reaches from the start state",
        }
    }
}

/// The resting point a resting branch starts from: the one the run settles into, else the
/// one Newton's method reaches from the start state; and how it was found, in words.
pub fn resting_start(prepared: &Prepared) -> Result<(Vec<f64>, RestOrigin)> {
    let mut model = prepared.model.clone();
    let settings = RestNewtonSettings::default();
    let bound = prepared.spec.bound;
    let progress = Progress::new("settling");
    let outcome = Run::new(model.clone(), prepared.spec.clone(), None, None, false)
        .execute(&mut Quiet(&progress), &Interrupt::new());
    progress.finish();
    if !outcome.reason.is_trouble()
        && let Ok(solved) = solve_resting_point(&mut model, &outcome.final_state, bound, &settings)
    {
        let scale = solved.state.iter().fold(1.0f64, |m, v| m.max(v.abs()));
        let gap = solved
            .state
            .iter()
            .zip(&outcome.final_state)
            .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
        if gap <= 1e-3 * scale {
            return Ok((solved.state, RestOrigin::Settled));
        }
    }
    let start = model.start().to_vec();
    match solve_resting_point(&mut model, &start, bound, &settings) {
        Ok(solved) => Ok((solved.state, RestOrigin::FromStart)),
        Err(err) => bail!(
            "the start is not near a resting point: the run does not settle at one ({}), and \
             from the start state {err}; `lamina rest` lists the resting points Newton's method \
             finds from many seeds (set the start state near the one to follow)",
            outcome.reason
        ),
    }
}

/// The map an orbit branch is followed on (`born`: for orbits born at a Hopf point, which
/// need no cut).
fn map_for(prepared: &Prepared, asked: Option<MapArg>, born: bool) -> Result<OrbitMap> {
    let forced = prepared.model.uses_time();
    match (forced, asked) {
        (true, Some(MapArg::Cut)) => bail!(lamina_core::branch::BranchError::ForcedCut),
        (true, _) => {
            let spec = prepared.scenario.strobe_spec().context(
                "the model uses t (it is forced): its orbits are followed on the strobe map; \
                 add a `strobe: Some((...))` block with the forcing period",
            )?;
            Ok(OrbitMap::Strobe(spec))
        }
        (false, Some(MapArg::Strobe)) => bail!(lamina_core::branch::BranchError::AutonomousStrobe),
        (false, _) => match &prepared.cut {
            Some(cut) => Ok(OrbitMap::Cut(cut.clone())),
            None if born => Ok(OrbitMap::Flow),
            None => bail!(
                "the scenario has no cut: the orbit to follow is found on the cut map; add a \
                 `cut: Some((...))` block"
            ),
        },
    }
}

/// The orbit the run settles into, found as `lamina cycle` finds it; with its map and how it
/// was found, in words.
fn settled_orbit(
    prepared: &Prepared,
    path: &Path,
    asked: Option<MapArg>,
    returns: Option<usize>,
) -> Result<(OrbitMap, OrbitStart, String)> {
    let orbit_map = map_for(prepared, asked, false)?;
    let (choice, kind) = match &orbit_map {
        OrbitMap::Cut(cut) => (MapArg::Cut, MapKind::Cut(cut.clone())),
        OrbitMap::Strobe(_) => {
            let strobe = prepared.strobe.context("the scenario has no strobe")?;
            (MapArg::Strobe, MapKind::Strobe(strobe))
        }
        OrbitMap::Flow => bail!("the scenario has no cut"),
    };
    let (seeds, k, origin, max_return_time) =
        seeds_from_run(prepared.clone(), choice, returns, path).with_context(|| {
            "the start is not near a periodic orbit (if the run settles to rest, follow the \
             orbits born at its Hopf point with --start hopf)"
        })?;
    let settings = MapSettings::from_run(&prepared.spec, max_return_time);
    let mut flow_map = FlowMap::new(prepared.model.clone(), kind, settings)?;
    let rtol = prepared.spec.control.rtol;
    let report = find_cycle(&mut flow_map, &seeds, k, &NewtonSettings::for_rtol(rtol))
        .with_context(|| {
            format!(
                "the start is not near a periodic orbit: none of period {k} found from {} seed(s)",
                seeds.len()
            )
        })?;
    let returns_words = if k == 1 {
        "1 return".to_string()
    } else {
        format!("{k} returns")
    };
    let map_words = match choice {
        MapArg::Cut => "cut map",
        MapArg::Strobe => "strobe map",
    };
    let seed_words = match origin {
        SeedOrigin::Start => "the start state",
        SeedOrigin::CloseReturn { .. } => "the closest return of the run's settled points",
    };
    let how = format!(
        "the orbit of the {map_words} with {returns_words} (period {}) found by Newton's method \
         from {seed_words}",
        Number(report.period)
    );
    Ok((orbit_map, OrbitStart::from_report(&report), how))
}
