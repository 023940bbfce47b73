//! `lamina sweep`: an orbit diagram in batch, as CSV (and optionally PNG), shardable.

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::Mutex;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::model::Model;
use lamina_core::recurrence::{RecurrenceKind, RecurrenceSettings};
use lamina_core::run::Strobe;
use lamina_core::sweep::{
    SweepColumn, SweepSpec, column_recurrence, describe, sweep_follow, sweep_restart,
};
use lamina_export::{AtomicFile, SweepCsv};
use lamina_scenario::Scenario;

use super::prepare::prepare;
use super::progress::Progress;

/// Arguments of `lamina sweep`.
#[derive(clap::Args, Debug)]
pub struct SweepArgs {
    /// Scenario file (.ron) with a `sweep` block.
    file: PathBuf,
    /// Write CSV to this file (atomically) instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    out: Option<PathBuf>,
    /// Also draw the orbit diagram into this PNG.
    #[arg(long, value_name = "FILE.png")]
    png: Option<PathBuf>,
    /// Run only every N-th value starting at I, for spreading one sweep over several machines
    /// (a sweep with `follow: false` only); concatenating the shards' rows and sorting by the
    /// parameter value gives the whole sweep.
    #[arg(long, value_name = "I/N", value_parser = parse_shard)]
    shard: Option<(usize, usize)>,
}

fn parse_shard(text: &str) -> Result<(usize, usize), String> {
    let (i, n) = text
        .split_once('/')
        .ok_or("expected I/N, for example 0/4")?;
    let i: usize = i
        .trim()
        .parse()
        .map_err(|_| format!("'{i}' is not a shard number"))?;
    let n: usize = n
        .trim()
        .parse()
        .map_err(|_| format!("'{n}' is not a shard count"))?;
    if n == 0 || i >= n {
        return Err(format!("shard {i}/{n}: need 0 <= I < N"));
    }
    Ok((i, n))
}

/// The sweep of a scenario as core settings, with the index of the plotted coordinate.
pub fn sweep_spec(scenario: &Scenario) -> Result<(SweepSpec, usize)> {
    if scenario.sweep.is_none() {
        bail!("the scenario has no sweep: add a `sweep: Some((...))` block");
    }
    let spec = scenario
        .sweep_spec()
        .context("the swept parameter is not a parameter")?;
    let coordinate = scenario
        .sweep_coordinate_index()
        .context("the sweep coordinate is not a state")?;
    Ok((spec, coordinate))
}

/// Runs the whole sweep (or one shard), reporting progress.
pub fn run_sweep(
    path: &std::path::Path,
    shard: Option<(usize, usize)>,
) -> Result<(Scenario, SweepSpec, usize, Vec<SweepColumn>)> {
    let prepared = prepare(path)?;
    let scenario = prepared.scenario.clone();
    let (spec, coordinate) = sweep_spec(&scenario)?;
    let indices: Vec<usize> = match shard {
        Some((i, n)) => {
            if spec.follow {
                bail!(
                    "a sweep that follows the branch (follow: true) runs its values in order and cannot be sharded; set follow: false to shard"
                );
            }
            spec.shard_indices(i, n)
        }
        None => (0..spec.n_values()).collect(),
    };
    let strobe_spec = scenario.strobe_spec();
    let strobe_for = move |m: &Model| {
        strobe_spec
            .as_ref()
            .and_then(|s| Strobe::compile(s, m).ok())
    };
    let progress = Progress::new("sweep");
    let total = indices.len().max(1) as f64;
    let interrupt = Interrupt::new();
    let columns = if spec.follow {
        let mut columns = Vec::new();
        sweep_follow(
            &prepared.model,
            &prepared.spec,
            prepared.cut.as_ref(),
            &strobe_for,
            &spec,
            &indices,
            &interrupt,
            &mut |c| {
                columns.push(c.clone());
                progress.update(c.value, columns.len() as f64 / total);
                std::ops::ControlFlow::Continue(())
            },
        )?;
        columns
    } else {
        let done = Mutex::new(0usize);
        sweep_restart(
            &prepared.model,
            &prepared.spec,
            prepared.cut.as_ref(),
            &strobe_for,
            &spec,
            &indices,
            &interrupt,
            &|c| {
                if let Ok(mut d) = done.lock() {
                    *d += 1;
                    progress.update(c.value, *d as f64 / total);
                }
            },
        )?
    };
    progress.finish();
    Ok((scenario, spec, coordinate, columns))
}

/// `lamina sweep`.
pub fn sweep(args: &SweepArgs) -> Result<ExitCode> {
    let (scenario, spec, coordinate, columns) = run_sweep(&args.file, args.shard)?;
    let parameter = scenario.parameters[spec.parameter].name.clone();
    let names: Vec<String> = scenario.states.iter().map(|s| s.name.clone()).collect();
    let write = |out: &mut dyn Write| -> Result<()> {
        let mut csv = SweepCsv::new(out, &parameter, &names)?;
        for c in &columns {
            csv.write_column(c.value, &c.points)?;
        }
        csv.finish()?;
        Ok(())
    };
    match &args.out {
        Some(path) => {
            let mut file = AtomicFile::create(path)?;
            write(&mut file)?;
            file.commit()?;
        }
        None => {
            let mut stdout = std::io::stdout().lock();
            write(&mut stdout)?;
            stdout.flush()?;
        }
    }
    let kinds = labels(&scenario, &columns);
    if let Some(png) = &args.png {
        super::render::write_orbit_diagram(
            png,
            (1200, 900),
            &scenario,
            &spec,
            coordinate,
            &columns,
            &kinds,
        )?;
    }
    let labelled: Vec<(f64, RecurrenceKind)> = columns
        .iter()
        .zip(&kinds)
        .map(|(c, k)| (c.value, *k))
        .collect();
    for line in describe(&parameter, &labelled) {
        eprintln!("{line}");
    }
    let troubled: Vec<String> = columns
        .iter()
        .filter(|c| c.reason.is_trouble())
        .map(|c| format!("{parameter} = {}: {}", c.value, c.reason))
        .collect();
    let short: Vec<String> = columns
        .iter()
        .filter(|c| c.points.len() < spec.keep)
        .map(|c| format!("{}", c.value))
        .collect();
    if !short.is_empty() {
        eprintln!(
            "{} value(s) kept fewer than {} points (no crossings, or the span ended): {parameter} = {}",
            short.len(),
            spec.keep,
            short.join(", ")
        );
    }
    if !troubled.is_empty() {
        eprintln!(
            "numerical trouble at {} value(s):\n{}",
            troubled.len(),
            troubled.join("\n")
        );
        return Ok(ExitCode::FAILURE);
    }
    Ok(ExitCode::SUCCESS)
}

/// Every value's label from the one recurrence detector, judged with the scenario's
/// integrator tolerances: what the list, the colours and the legend all show.
pub fn labels(scenario: &Scenario, columns: &[SweepColumn]) -> Vec<RecurrenceKind> {
    let settings = RecurrenceSettings::for_control(&scenario.run_spec().control);
    columns
        .iter()
        .map(|c| column_recurrence(c, &settings).kind())
        .collect()
}
