//! `lamina map`: the regime map of two parameters in batch, as CSV (and optionally PNG and
//! JSON), shardable over the tasks of a batch scheduler.

use std::collections::BTreeMap;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result};
use lamina_core::regime_map::{MapCell, Regime};
use lamina_export::write_map_cells;
use serde_json::{Map, Value, json};

use super::map_picture::map_png;
use super::map_run::{MapRun, run_map, stopped_map};
use super::outputs;
use super::shard::{ShardArg, parse_shard};
use super::signals::interrupt_on_signal;

/// Arguments of `lamina map`.
#[derive(clap::Args, Debug)]
pub struct MapArgs {
    /// Scenario file (.ron) with a `map` block.
    file: PathBuf,
    /// Write CSV to this file (atomically) instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    out: Option<PathBuf>,
    /// Also draw the map into this PNG.
    #[arg(long, value_name = "FILE.png")]
    png: Option<PathBuf>,
    /// Run only every N-th cell starting at I, for spreading one map over several machines;
    /// `auto` takes I and N from a Slurm array job. `lamina merge` joins the shards.
    #[arg(long, value_name = "I/N|auto", value_parser = parse_shard)]
    shard: Option<ShardArg>,
    /// Print the cells as JSON on stdout (the CSV then goes only to --out).
    #[arg(long)]
    json: bool,
}

impl MapArgs {
    /// Whether the command prints JSON.
    pub fn json(&self) -> bool {
        self.json
    }
}

/// Writes the cells as the map's CSV: rows by y then x.
pub fn write_map_csv(out: &mut dyn Write, run: &MapRun) -> Result<()> {
    let (x_name, y_name) = run.parameter_names();
    write_map_cells(out, (&x_name, &y_name), &run.cells)?;
    Ok(())
}

/// `lamina map`.
pub fn map(args: &MapArgs) -> Result<ExitCode> {
    let paths = outputs::out_and_png(&args.file, args.out.as_deref(), args.png.as_deref())?;
    let shard = args.shard.map(ShardArg::resolve).transpose()?;
    // Ctrl-C stops the map between (and inside) cells; installed before the output files
    let interrupt = interrupt_on_signal()?;
    // every output is opened before the map, so a bad path fails at once
    let out_file = outputs::open_if("--out", args.out.as_deref())?;
    let png_file = outputs::open_if("--png", args.png.as_deref())?;
    let run = run_map(&args.file, shard, &interrupt)?;
    if interrupt.is_raised() {
        let written: Vec<&Path> = paths.iter().map(|(_, p)| *p).collect();
        return Err(stopped_map(&run, &written).into());
    }
    let mut notes = Vec::new();
    match out_file {
        Some(mut file) => {
            write_map_csv(&mut file, &run)?;
            notes.push(outputs::finish(file, true, "the map's CSV")?);
        }
        None if args.json => {}
        None => {
            let mut stdout = std::io::stdout().lock();
            write_map_csv(&mut stdout, &run)?;
            stdout.flush()?;
        }
    }
    if let Some(mut file) = png_file {
        let bytes = map_png((1200, 900), &run)?;
        file.write_all(&bytes).context("--png")?;
        notes.push(outputs::finish(file, true, "the map picture")?);
    }
    if args.json {
        let mut stdout = std::io::stdout().lock();
        writeln!(stdout, "{}", map_json(&run, shard))?;
        stdout.flush()?;
    }
    for line in summary(&run) {
        eprintln!("{line}");
    }
    for note in notes {
        eprintln!("{note}");
    }
    Ok(ExitCode::SUCCESS)
}

/// The cells as JSON: the axes, every cell with its regime in words, and the count of each
/// regime.
fn map_json(run: &MapRun, shard: Option<(usize, usize)>) -> Value {
    let (x_name, y_name) = run.parameter_names();
    let axis = |name: &str, a: &lamina_core::regime_map::MapAxisSpec| json!({"parameter": name, "from": a.from, "to": a.to, "values": a.values});
    let cells: Vec<Value> = run.cells.iter().map(cell_json).collect();
    let mut counts = Map::new();
    for (word, n) in counts_by_word(&run.cells) {
        counts.insert(word.to_string(), json!(n));
    }
    json!({
        "x": axis(&x_name, &run.spec.x),
        "y": axis(&y_name, &run.spec.y),
        "settle": run.spec.settle,
        "span": run.spec.span,
        "shard": shard.map(|(i, n)| json!({"index": i, "count": n})),
        "cells": cells,
        "counts": counts,
    })
}

fn cell_json(cell: &MapCell) -> Value {
    let reason = match &cell.regime {
        Regime::Escaped { .. } | Regime::Failed(_) => Some(cell.regime.to_string()),
        _ => None,
    };
    json!({
        "x": cell.x,
        "y": cell.y,
        "regime": cell.regime.word(),
        "returns": cell.regime.returns(),
        "lyapunov": cell.lyapunov.filter(|l| l.is_finite()),
        "settled": cell.settled,
        "reason": reason,
    })
}

/// How many cells of each regime word, in the legend's order.
fn counts_by_word(cells: &[MapCell]) -> Vec<(&'static str, usize)> {
    let words = [
        "resting",
        "periodic",
        "quasi_periodic",
        "chaotic",
        "escaped",
        "failed",
    ];
    words
        .iter()
        .map(|w| (*w, cells.iter().filter(|c| c.regime.word() == *w).count()))
        .filter(|(_, n)| *n > 0)
        .collect()
}

/// The map told in lines for a person: the count of each regime (periodic ones by their
/// returns), the cells that escaped or failed and why, and the cells that had not settled.
fn summary(run: &MapRun) -> Vec<String> {
    let (x_name, y_name) = run.parameter_names();
    let mut by_label: BTreeMap<(usize, usize), (String, usize)> = BTreeMap::new();
    for cell in &run.cells {
        let (order, label) = match cell.regime {
            Regime::Resting => ((0, 0), "resting".to_string()),
            Regime::Periodic { returns } => ((1, returns), cell.regime.to_string()),
            Regime::QuasiPeriodic => ((2, 0), "quasi-periodic".to_string()),
            Regime::Chaotic => ((3, 0), "chaotic".to_string()),
            Regime::Escaped { .. } => ((4, 0), "escaped".to_string()),
            Regime::Failed(_) => ((5, 0), "failed".to_string()),
        };
        by_label.entry(order).or_insert((label, 0)).1 += 1;
    }
    let counts: Vec<String> = by_label
        .values()
        .map(|(label, n)| format!("{n} {label}"))
        .collect();
    let mut lines = vec![format!(
        "{} cell(s) of {x_name} x {y_name}: {}",
        run.cells.len(),
        counts.join(", ")
    )];
    for cell in &run.cells {
        if matches!(cell.regime, Regime::Failed(_)) {
            lines.push(format!(
                "{x_name} = {}, {y_name} = {}: {}",
                cell.x, cell.y, cell.regime
            ));
        }
    }
    let unsettled = run.cells.iter().filter(|c| !c.settled).count();
    if unsettled > 0 {
        lines.push(format!(
            "{unsettled} cell(s) had not settled: their points still converged or drifted, so \
             they show the regime they approach; lengthen the map's settle time"
        ));
    }
    lines
}
