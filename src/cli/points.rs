//! `lamina cut` and `lamina strobe`: stream points as CSV to stdout or to a file.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::cycle::{MapKind, MapPoint};
use lamina_core::recheck::{self, RecheckError};
use lamina_core::run::{CutPoint, Run, Sink, StopReason, StrobeSample};
use lamina_export::{AtomicFile, CutCsv, ExportError, StrobeCsv};

use super::prepare::prepare;
use super::progress::Progress;
use super::signals::{INTERRUPTED, interrupt_on_signal};

/// Arguments shared by `cut` and `strobe`.
#[derive(clap::Args, Debug)]
pub struct PointsArgs {
    /// Scenario file (.ron).
    file: PathBuf,
    /// Stop after this many points.
    #[arg(long, value_name = "N")]
    count: Option<usize>,
    /// Write CSV to this file (atomically) instead of stdout.
    #[arg(long, value_name = "FILE.csv")]
    out: Option<PathBuf>,
    /// Integrate again from the first point with both tolerances divided by 100 and report on
    /// stderr the significant digits on which the two agree (for a chaotic run over the first
    /// 20 points only, and said), with the number that agrees least.
    #[arg(long)]
    recheck: bool,
}

/// Which point set a command writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PointKind {
    /// Cut points.
    Cut,
    /// Strobe samples.
    Strobe,
}

enum Writer<W: Write> {
    Cut(CutCsv<W>),
    Strobe(StrobeCsv<W>),
}

/// Streams rows into the CSV writer and stops after `count` points.
struct CsvSink<W: Write> {
    writer: Writer<W>,
    count: Option<usize>,
    written: usize,
    error: Option<ExportError>,
    progress: Progress,
    /// Every point written, kept for a recheck.
    kept: Option<Vec<MapPoint>>,
}

impl<W: Write> CsvSink<W> {
    fn after_row(
        &mut self,
        result: Result<(), ExportError>,
        t: f64,
        state: &[f64],
    ) -> ControlFlow<()> {
        if let Err(err) = result {
            self.error = Some(err);
            return ControlFlow::Break(());
        }
        if let Some(kept) = &mut self.kept {
            kept.push(MapPoint {
                t,
                state: state.to_vec(),
            });
        }
        self.written += 1;
        match self.count {
            Some(n) if self.written >= n => ControlFlow::Break(()),
            _ => ControlFlow::Continue(()),
        }
    }
}

impl<W: Write> Sink for CsvSink<W> {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        match &mut self.writer {
            Writer::Cut(w) => {
                let result = w.write(point);
                self.after_row(result, point.t, &point.state)
            }
            Writer::Strobe(_) => ControlFlow::Continue(()),
        }
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        match &mut self.writer {
            Writer::Strobe(w) => {
                let result = w.write(sample);
                self.after_row(result, sample.t, &sample.state)
            }
            Writer::Cut(_) => ControlFlow::Continue(()),
        }
    }
    fn progress(&mut self, t: f64, fraction: f64) {
        self.progress.update(t, fraction);
    }
}

/// Runs the scenario and writes its cut points or strobe samples.
pub fn points(kind: PointKind, args: &PointsArgs) -> Result<ExitCode> {
    let prepared = prepare(&args.file)?;
    let names = prepared.model.names().states.clone();
    match kind {
        PointKind::Cut if prepared.cut.is_none() => bail!(
            "{} has no cut: add a `cut: Some((...))` block",
            args.file.display()
        ),
        PointKind::Strobe if prepared.strobe.is_none() => {
            bail!(
                "{} has no strobe: add a `strobe: Some((...))` block",
                args.file.display()
            )
        }
        _ => {}
    }
    if args.count == Some(0) {
        bail!("--count must be at least 1");
    }
    // Only the requested point set is computed.
    let (cut, strobe) = match kind {
        PointKind::Cut => (prepared.cut, None),
        PointKind::Strobe => (None, prepared.strobe),
    };
    // what a recheck integrates again: the same model, window and cut or strobe
    let again = match (&cut, strobe) {
        (Some(cut), _) => Some(MapKind::Cut(cut.clone())),
        (None, Some(strobe)) => Some(MapKind::Strobe(strobe)),
        (None, None) => None,
    }
    .filter(|_| args.recheck)
    .map(|map| (prepared.model.clone(), prepared.spec.clone(), map));
    let mut run = Run::new(prepared.model, prepared.spec, cut, strobe, false);
    let label = match kind {
        PointKind::Cut => "cut",
        PointKind::Strobe => "strobe",
    };
    // Ctrl-C stops the run at its next step instead of ending the process, so the output is
    // left in order; installed before the temporary output file exists.
    let interrupt = interrupt_on_signal()?;
    let setup = Setup {
        kind,
        count: args.count,
        names: &names,
        keep: again.is_some(),
        label,
    };
    let (code, kept) = match &args.out {
        Some(path) => {
            let file = AtomicFile::create(path)?;
            let (reason, kept, file) = execute(&setup, file, &mut run, &interrupt)?;
            if let StopReason::Cancelled { .. } = reason {
                // a stopped run is not a result: the temporary file goes, the target
                // stays as it was
                drop(file);
            } else {
                // A run stopped by numerical trouble still keeps the valid points it found.
                file.commit()?;
            }
            (report(reason, kept.len(), label, Some(path))?, kept)
        }
        None => {
            let stdout = std::io::stdout().lock();
            let (reason, kept, mut out) = execute(&setup, stdout, &mut run, &interrupt)?;
            // the rows so far, also of a stopped run: each is a whole, valid row
            out.flush().context("writing to stdout")?;
            (report(reason, kept.len(), label, None)?, kept)
        }
    };
    match again {
        Some((model, spec, map)) if code != ExitCode::from(INTERRUPTED) => {
            let result = recheck::points(&model, &spec, &map, &kept.points, &names, &interrupt);
            match result {
                Ok(recheck) => {
                    for line in super::recheck::recheck_lines(&Ok(recheck)) {
                        eprintln!("{line}");
                    }
                    Ok(code)
                }
                Err(RecheckError::Cancelled { t }) => {
                    eprintln!("recheck: stopped at t = {t} on a signal");
                    Ok(ExitCode::from(INTERRUPTED))
                }
                Err(err) => {
                    eprintln!("recheck: failed, so the points are not confirmed: {err}");
                    Ok(ExitCode::FAILURE)
                }
            }
        }
        _ => Ok(code),
    }
}

/// What `execute` writes and keeps.
struct Setup<'a> {
    kind: PointKind,
    count: Option<usize>,
    names: &'a [String],
    /// Keep the points for a recheck.
    keep: bool,
    label: &'a str,
}

/// The points written: their number, and the points themselves when kept for a recheck.
struct Written {
    count: usize,
    points: Vec<MapPoint>,
}

impl Written {
    fn len(&self) -> usize {
        self.count
    }
}

fn execute<W: Write>(
    setup: &Setup<'_>,
    out: W,
    run: &mut Run,
    interrupt: &Interrupt,
) -> Result<(StopReason, Written, W)> {
    let writer = match setup.kind {
        PointKind::Cut => Writer::Cut(CutCsv::new(out, setup.names)?),
        PointKind::Strobe => Writer::Strobe(StrobeCsv::new(out, setup.names)?),
    };
    let mut sink = CsvSink {
        writer,
        count: setup.count,
        written: 0,
        error: None,
        progress: Progress::new(setup.label),
        kept: setup.keep.then(Vec::new),
    };
    let outcome = run.execute(&mut sink, interrupt);
    sink.progress.finish();
    // the automatic method says when and why it changed (the first change, and how many)
    if let Some(first) = outcome.method_changes.first() {
        match outcome.method_changes.len() {
            1 => eprintln!("note: {first}"),
            n => eprintln!("note: {first} ({n} changes of method in all)"),
        }
    }
    if let Some(err) = sink.error {
        return Err(err.into());
    }
    let out = match sink.writer {
        Writer::Cut(w) => w.finish()?,
        Writer::Strobe(w) => w.finish()?,
    };
    let written = Written {
        count: sink.written,
        points: sink.kept.unwrap_or_default(),
    };
    Ok((outcome.reason, written, out))
}

fn report(
    reason: StopReason,
    written: usize,
    label: &str,
    path: Option<&PathBuf>,
) -> Result<ExitCode> {
    let target = path
        .map(|p| format!(" to {}", p.display()))
        .unwrap_or_default();
    match reason {
        StopReason::Cancelled { t } => {
            match path {
                Some(path) => eprintln!(
                    "stopped at t = {t} on a signal; nothing was written to {}",
                    path.display()
                ),
                None => {
                    eprintln!("stopped at t = {t} on a signal; wrote {written} {label} point(s)")
                }
            }
            Ok(ExitCode::from(INTERRUPTED))
        }
        StopReason::Finished | StopReason::SinkStopped { .. } => {
            if path.is_some() {
                eprintln!("wrote {written} {label} point(s){target}");
            }
            Ok(ExitCode::SUCCESS)
        }
        StopReason::PointLimit { t } => {
            eprintln!(
                "wrote {written} {label} point(s){target}; stopped at the point limit (limits.max_points) at t = {t}"
            );
            Ok(ExitCode::SUCCESS)
        }
        other => {
            eprintln!(
                "wrote {written} valid {label} point(s){target}; the run ended early: {other}"
            );
            Ok(ExitCode::FAILURE)
        }
    }
}
