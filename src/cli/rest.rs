//! `lamina rest`: every resting point Newton's method reaches, with eigenvalues, stability
//! and kind, as text or JSON.

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result};
use lamina_core::Interrupt;
use lamina_core::cycle::Number;
use lamina_core::rest::{RestError, RestReport, RestSettings, RestSink, find_resting_points};
use serde::Serialize;

use super::cycle_output::{JsonComplex, NamedState, write_json_line};
use super::prepare::prepare;
use super::progress::Progress;

/// Arguments of `lamina rest`.
#[derive(clap::Args, Debug)]
pub struct RestArgs {
    /// Scenario file (.ron); its run (settle and span) gives the settled state and the samples
    /// that seed Newton's method.
    file: PathBuf,
    /// Write the result as JSON on stdout.
    #[arg(long)]
    json: bool,
}

/// Progress on the terminal's bar.
struct Bar(Progress);

impl RestSink for Bar {
    fn progress(&mut self, fraction: f64) {
        self.0.update_fraction(fraction);
    }
}

/// One point of the JSON document.
#[derive(Serialize)]
struct JsonPoint<'a> {
    state: NamedState<'a>,
    eigenvalues: Vec<JsonComplex>,
    stable: bool,
    unstable: usize,
    kind: &'static str,
    reached_by_run: bool,
}

/// The JSON document of the product brief.
#[derive(Serialize)]
struct Json<'a> {
    points: Vec<JsonPoint<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    note: Option<String>,
}

/// Finds and prints the resting points of the scenario at `args.file`.
pub fn rest(args: &RestArgs) -> Result<ExitCode> {
    let prepared = prepare(&args.file)?;
    let names = prepared.model.names().states.clone();
    let mut bar = Bar(Progress::new("resting points"));
    let outcome = find_resting_points(
        &prepared.model,
        &prepared.spec,
        &RestSettings::default(),
        &mut bar,
        &Interrupt::new(),
    );
    bar.0.finish();
    let mut out = std::io::stdout().lock();
    let report = match outcome {
        Ok(report) => report,
        Err(RestError::Forced) => {
            let note = format!(
                "{}: {}; find it with `lamina cycle {} --map strobe`",
                args.file.display(),
                RestError::Forced,
                args.file.display()
            );
            if args.json {
                let json = Json {
                    points: Vec::new(),
                    note: Some(note),
                };
                write_json_line(&mut out, &json)?;
            } else {
                writeln!(out, "{note}").context("writing to stdout")?;
            }
            out.flush().context("writing to stdout")?;
            return Ok(ExitCode::SUCCESS);
        }
        Err(err) => return Err(err).with_context(|| format!("{}", args.file.display())),
    };
    if args.json {
        let json = Json {
            points: report
                .points
                .iter()
                .map(|p| JsonPoint {
                    state: NamedState {
                        names: &names,
                        values: &p.state,
                    },
                    eigenvalues: p
                        .eigenvalues
                        .iter()
                        .map(|e| JsonComplex { re: e.re, im: e.im })
                        .collect(),
                    stable: p.stable,
                    unstable: p.n_unstable,
                    kind: p.kind.key(),
                    reached_by_run: p.reached_by_run,
                })
                .collect(),
            note: None,
        };
        write_json_line(&mut out, &json)?;
    } else {
        out.write_all(plain(&report, &names).as_bytes())
            .context("writing to stdout")?;
    }
    out.flush().context("writing to stdout")?;
    if report.run_reason.is_trouble() {
        eprintln!(
            "the run stopped early ({}); its samples and the spread seeds were still tried",
            report.run_reason
        );
    }
    Ok(ExitCode::SUCCESS)
}

/// The report for a person to read.
fn plain(report: &RestReport, names: &[String]) -> String {
    let mut text = String::new();
    let mut line = |s: String| {
        text.push_str(&s);
        text.push('\n');
    };
    let count = match report.points.len() {
        0 => "no resting point".to_string(),
        1 => "1 resting point".to_string(),
        n => format!("{n} resting points"),
    };
    line(format!(
        "{count} found by Newton's method from {} seeds (the start, the run's end and samples, \
         a spread over the run's box); {} converged",
        report.n_seeds, report.n_converged
    ));
    for (idx, p) in report.points.iter().enumerate() {
        let directions = match p.n_unstable {
            0 => String::new(),
            1 => ", 1 unstable direction".to_string(),
            n => format!(", {n} unstable directions"),
        };
        let settles = if p.reached_by_run {
            "  (the run settles here)"
        } else {
            ""
        };
        line(format!("  {}. {}{directions}{settles}", idx + 1, p.kind));
        line(format!("       {}", named(names, &p.state)));
        let values: Vec<String> = p.eigenvalues.iter().map(|e| e.to_string()).collect();
        line(format!("       eigenvalues  {}", values.join(",  ")));
    }
    if !report.points.iter().any(|p| p.reached_by_run) {
        let ending = if report.run_reason.is_trouble() {
            format!(" (it stopped early: {})", report.run_reason)
        } else {
            String::new()
        };
        line(format!(
            "the run does not settle at a resting point{ending}"
        ));
    }
    text
}

/// `a = 1, b = 2` with full precision.
pub fn named(names: &[String], values: &[f64]) -> String {
    names
        .iter()
        .zip(values)
        .map(|(n, v)| format!("{n} = {}", Number(*v)))
        .collect::<Vec<_>>()
        .join(", ")
}
