//! `lamina sweep`: an orbit diagram in batch, as CSV (and optionally PNG), shardable.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Mutex;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::model::Model;
use lamina_core::recurrence::{RecurrenceKind, RecurrenceSettings};
use lamina_core::run::{StopReason, Strobe};
use lamina_core::sweep::{
    SweepColumn, SweepSpec, column_recurrence, describe, sweep_follow, sweep_restart,
};
use lamina_export::SweepCsv;
use lamina_scenario::Scenario;

use super::failure::Interrupted;
use super::outputs;
use super::prepare::prepare;
use super::progress::Progress;
use super::shard::{ShardArg, parse_shard};
use super::signals::interrupt_on_signal;

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
    /// (a sweep with `follow: false` only); `auto` takes I and N from a Slurm array job.
    /// `lamina merge` joins the shards into the whole sweep.
    #[arg(long, value_name = "I/N|auto", value_parser = parse_shard)]
    shard: Option<ShardArg>,
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

/// A sweep run (or the part of it done before an interrupt).
pub struct SweepRun {
    /// The scenario as loaded.
    pub scenario: Scenario,
    /// The sweep settings.
    pub spec: SweepSpec,
    /// Index of the plotted coordinate.
    pub coordinate: usize,
    /// The values done, in sweep order.
    pub columns: Vec<SweepColumn>,
    /// How many values were to be run.
    pub n_values: usize,
}

/// Runs the whole sweep (or one shard), reporting progress; `interrupt` stops it between
/// (and inside) values.
pub fn run_sweep(
    path: &std::path::Path,
    shard: Option<(usize, usize)>,
    interrupt: &Interrupt,
) -> Result<SweepRun> {
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
    let columns = if spec.follow {
        let mut columns = Vec::new();
        sweep_follow(
            &prepared.model,
            &prepared.spec,
            prepared.cut.as_ref(),
            &strobe_for,
            &spec,
            &indices,
            interrupt,
            &mut |c| {
                if !matches!(c.reason, StopReason::Cancelled { .. }) {
                    columns.push(c.clone());
                }
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
            interrupt,
            &|c| {
                if let Ok(mut d) = done.lock() {
                    *d += 1;
                    progress.update(c.value, *d as f64 / total);
                }
            },
        )?
    };
    progress.finish();
    Ok(SweepRun {
        scenario,
        spec,
        coordinate,
        columns,
        n_values: indices.len(),
    })
}

/// What a sweep stopped on a signal did: how many values were done and the last one in sweep
/// order.
pub fn stopped_sweep(run: &SweepRun, parameter: &str, written: &[&Path]) -> Interrupted {
    let last = run
        .columns
        .last()
        .map(|c| format!(" (the last done in order: {parameter} = {})", c.value))
        .unwrap_or_default();
    Interrupted(format!(
        "stopped on a signal after {} of {} value(s){last}; {}",
        run.columns.len(),
        run.n_values,
        outputs::nothing_written(written)
    ))
}

/// `lamina sweep`.
pub fn sweep(args: &SweepArgs) -> Result<ExitCode> {
    let paths = outputs::out_and_png(&args.file, args.out.as_deref(), args.png.as_deref())?;
    let shard = args.shard.map(ShardArg::resolve).transpose()?;
    // Ctrl-C stops the sweep between (and inside) values; installed before the output files
    let interrupt = interrupt_on_signal()?;
    // every output is opened before the sweep, so a bad path fails at once
    let out_file = outputs::open_if("--out", args.out.as_deref())?;
    let png_file = outputs::open_if("--png", args.png.as_deref())?;
    let run = run_sweep(&args.file, shard, &interrupt)?;
    let SweepRun {
        scenario,
        spec,
        coordinate,
        columns,
        ..
    } = &run;
    let parameter = scenario.parameters[spec.parameter].name.clone();
    if interrupt.is_raised() {
        let written: Vec<&Path> = paths.iter().map(|(_, p)| *p).collect();
        return Err(stopped_sweep(&run, &parameter, &written).into());
    }
    let names: Vec<String> = scenario.states.iter().map(|s| s.name.clone()).collect();
    let troubled: Vec<String> = columns
        .iter()
        .filter(|c| c.reason.is_trouble())
        .map(|c| format!("{parameter} = {}: {}", c.value, c.reason))
        .collect();
    let succeeded = troubled.is_empty();
    let write = |out: &mut dyn Write| -> Result<()> {
        let mut csv = SweepCsv::new(out, &parameter, &names)?;
        for c in columns {
            csv.write_column(c.value, &c.points)?;
        }
        csv.finish()?;
        Ok(())
    };
    let mut notes = Vec::new();
    match out_file {
        Some(mut file) => {
            write(&mut file)?;
            notes.push(outputs::finish(file, succeeded, "the sweep's CSV")?);
        }
        None => {
            let mut stdout = std::io::stdout().lock();
            write(&mut stdout)?;
            stdout.flush()?;
        }
    }
    let kinds = labels(scenario, columns);
    if let Some(mut file) = png_file {
        let bytes = super::render::orbit_diagram_png(
            (1200, 900),
            scenario,
            spec,
            *coordinate,
            columns,
            &kinds,
        )?;
        file.write_all(&bytes).context("--png")?;
        notes.push(outputs::finish(file, succeeded, "the orbit diagram")?);
    }
    let labelled: Vec<(f64, RecurrenceKind)> = columns
        .iter()
        .zip(&kinds)
        .map(|(c, k)| (c.value, *k))
        .collect();
    for line in describe(&parameter, &labelled) {
        eprintln!("{line}");
    }
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
    for note in notes {
        eprintln!("{note}");
    }
    if !succeeded {
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
