//! `lamina cycle`: find a periodic orbit of the cut map or the strobe map, measure its
//! multipliers and say how stable it is.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::cycle::{FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, find_cycle};
use lamina_core::recheck::{self, Recheck, RecheckError};
use lamina_core::recurrence::{Recurrence, RecurrenceSettings, close_returns, find_recurrence};
use lamina_core::run::{CutPoint, Run, Sink, StrobeSample};

use super::cycle_output::{write_human, write_json};
use super::prepare::{Prepared, prepare};
use super::progress::Progress;

/// Seeds tried, closest return first (more are tried only when the first ones fail or close
/// after fewer returns than asked).
const MAX_SEEDS: usize = 8;
/// The longest return time allowed is this many times the longest one seen in the run.
const RETURN_TIME_MARGIN: f64 = 10.0;

/// Arguments of `lamina cycle`.
#[derive(clap::Args, Debug)]
pub struct CycleArgs {
    /// Scenario file (.ron).
    file: PathBuf,
    /// The return map: `cut` or `strobe`. Default: the cut if the scenario has one and its
    /// model does not use t, otherwise the strobe.
    #[arg(long, value_enum, value_name = "MAP")]
    map: Option<MapArg>,
    /// Returns of the map per orbit (look for a K-return orbit; its period is the time of the
    /// K returns). Default: the repeat found in the settled points (1 with --from-start).
    #[arg(long, value_name = "K")]
    returns: Option<usize>,
    /// Start Newton's method from the scenario's start state (its first cut point or strobe
    /// sample) instead of the closest return of the settled points.
    #[arg(long)]
    from_start: bool,
    /// Write the result as JSON on stdout.
    #[arg(long)]
    json: bool,
    /// Find the orbit again with both integrator tolerances divided by 100 (and Newton's
    /// tolerance with them) and report the significant digits on which the two agree, with
    /// the number that agrees least.
    #[arg(long)]
    recheck: bool,
}

/// The `--map` choices.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum MapArg {
    /// The cut map (Poincaré map).
    Cut,
    /// The strobe map (time-T map).
    Strobe,
}

/// How the seeds were chosen, for the report.
pub enum SeedOrigin {
    /// From the start state.
    Start,
    /// From the closest returns of the settled points.
    CloseReturn {
        /// What the recurrence search said.
        recurrence: Recurrence,
        /// Distance of the closest return used first.
        distance: f64,
        /// Settled points searched.
        n_points: usize,
    },
}

/// Finds, measures and prints the periodic orbit of the scenario at `args.file`.
pub fn cycle(args: &CycleArgs) -> Result<ExitCode> {
    let path = &args.file;
    let prepared = prepare(path)?;
    let scenario = prepared.scenario.clone();
    let choice = choose_map(args.map, &prepared, path)?;
    if args.returns == Some(0) {
        bail!("--returns must be at least 1");
    }
    let names = prepared.model.names().states.clone();
    let rtol = prepared.spec.control.rtol;
    let span = prepared.spec.t_end() - prepared.spec.t_start;
    let kind = match choice {
        MapArg::Cut => prepared.cut.clone().map(MapKind::Cut),
        MapArg::Strobe => prepared.strobe.map(MapKind::Strobe),
    }
    .context("no such map in the scenario")?;

    let (seeds, k, origin, max_return_time) = if args.from_start {
        let settings = MapSettings::from_run(&prepared.spec, span);
        let mut map = FlowMap::new(prepared.model.clone(), kind.clone(), settings)?;
        let seed = map
            .first_point(prepared.spec.t_start, prepared.model.start())
            .context("cannot reach the map from the start state")?;
        (
            vec![seed],
            args.returns.unwrap_or(1),
            SeedOrigin::Start,
            span,
        )
    } else {
        seeds_from_run(prepared.clone(), choice, args.returns, path)?
    };

    let settings = MapSettings::from_run(&prepared.spec, max_return_time);
    let mut map = FlowMap::new(prepared.model.clone(), kind.clone(), settings)?;
    let report = find_cycle(&mut map, &seeds, k, &NewtonSettings::for_rtol(rtol))
        .with_context(|| format!("no {k}-return orbit found from {} seed(s)", seeds.len()))?;
    let recheck: Option<Result<Recheck, RecheckError>> = args
        .recheck
        .then(|| recheck::cycle(prepared.model, kind, &settings, &report, &names));
    let mut out = std::io::stdout().lock();
    if args.json {
        write_json(&mut out, &report, &names, recheck.as_ref())?;
    } else {
        write_human(&mut out, &report, &scenario, &origin, recheck.as_ref())?;
    }
    out.flush().context("writing to stdout")?;
    match recheck {
        Some(Err(err)) => {
            eprintln!("the recheck failed, so the orbit above is not confirmed: {err}");
            Ok(ExitCode::FAILURE)
        }
        _ => Ok(ExitCode::SUCCESS),
    }
}

/// The map asked for, or the default: the cut for an autonomous model that has one, else the
/// strobe (the cut map of a forced model is not a map of the state).
fn choose_map(asked: Option<MapArg>, prepared: &Prepared, path: &Path) -> Result<MapArg> {
    let (has_cut, has_strobe) = (prepared.cut.is_some(), prepared.strobe.is_some());
    match asked {
        Some(MapArg::Cut) if !has_cut => bail!(
            "{} has no cut: add a `cut: Some((...))` block or use --map strobe",
            path.display()
        ),
        Some(MapArg::Strobe) if !has_strobe => bail!(
            "{} has no strobe: add a `strobe: Some((...))` block or use --map cut",
            path.display()
        ),
        Some(map) => Ok(map),
        None if has_cut && (has_strobe && prepared.model.uses_time()) => Ok(MapArg::Strobe),
        None if has_cut => Ok(MapArg::Cut),
        None if has_strobe => Ok(MapArg::Strobe),
        None => bail!(
            "{} has neither a cut nor a strobe: a periodic orbit is found on one of them",
            path.display()
        ),
    }
}

/// Collects the chosen map's points and shows progress.
struct CloudSink {
    choice: MapArg,
    points: Vec<MapPoint>,
    longest_return: f64,
    progress: Progress,
}

impl Sink for CloudSink {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        if self.choice == MapArg::Cut {
            if let Some(r) = point.return_time {
                self.longest_return = self.longest_return.max(r);
            }
            self.points.push(MapPoint {
                t: point.t,
                state: point.state.clone(),
            });
        }
        ControlFlow::Continue(())
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        if self.choice == MapArg::Strobe {
            self.points.push(MapPoint {
                t: sample.t,
                state: sample.state.clone(),
            });
        }
        ControlFlow::Continue(())
    }
    fn progress(&mut self, t: f64, fraction: f64) {
        self.progress.update(t, fraction);
    }
}

/// Runs the scenario, finds the repeat in its settled points and picks the closest returns
/// as seeds. Returns the seeds, k, where they came from and the longest return time allowed.
pub(super) fn seeds_from_run(
    prepared: Prepared,
    choice: MapArg,
    returns: Option<usize>,
    path: &Path,
) -> Result<(Vec<MapPoint>, usize, SeedOrigin, f64)> {
    let span = prepared.spec.t_end() - prepared.spec.t_start;
    let prepared_control = prepared.spec.control;
    let (cut, strobe) = match choice {
        MapArg::Cut => (prepared.cut, None),
        MapArg::Strobe => (None, prepared.strobe),
    };
    let mut run = Run::new(prepared.model, prepared.spec, cut, strobe, false);
    let mut sink = CloudSink {
        choice,
        points: Vec::new(),
        longest_return: 0.0,
        progress: Progress::new("settling"),
    };
    let outcome = run.execute(&mut sink, &Interrupt::new());
    sink.progress.finish();
    if outcome.reason.is_trouble() {
        bail!(
            "the run of {} ended early ({}) after {} point(s)",
            path.display(),
            outcome.reason,
            sink.points.len()
        );
    }
    let points = sink.points;
    let label = match choice {
        MapArg::Cut => "cut points",
        MapArg::Strobe => "strobe samples",
    };
    if points.len() < 2 {
        bail!(
            "the run of {} gave {} {label}: too few to find a periodic orbit (lengthen time.span)",
            path.display(),
            points.len()
        );
    }
    let recurrence = find_recurrence(&points, &RecurrenceSettings::for_control(&prepared_control));
    let k = match (returns, recurrence.search_k()) {
        (Some(k), _) | (None, Some(k)) => k,
        (None, None) => bail!(
            "{} {label}: {recurrence}; give --returns K to look for a K-return orbit \
             (unstable orbits inside chaos are found that way)",
            points.len()
        ),
    };
    let returns = close_returns(&points, k, MAX_SEEDS);
    let Some(closest) = returns.first() else {
        bail!(
            "{} {label} are too few for a {k}-return orbit: lengthen time.span",
            points.len()
        );
    };
    let origin = SeedOrigin::CloseReturn {
        recurrence,
        distance: closest.distance,
        n_points: points.len(),
    };
    let seeds = returns.iter().map(|r| points[r.index].clone()).collect();
    let max_return_time = if sink.longest_return > 0.0 {
        RETURN_TIME_MARGIN * sink.longest_return
    } else {
        span
    };
    Ok((seeds, k, origin, max_return_time))
}
