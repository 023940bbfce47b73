//! `lamina lyapunov`: the Lyapunov exponents of a scenario, as text or JSON, with the running
//! estimates as CSV on request.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, Result};
use lamina_core::lyapunov::{ExponentSettings, ExponentSink, Spectrum, spectrum, workspace_bytes};
use lamina_core::recheck::{self, Recheck, RecheckError};
use lamina_core::run::StopReason;
use lamina_export::{AtomicFile, TrajectoryCsv, format_number};

use super::failure::Interrupted;
use super::memory;
use super::outputs::{self, check_paths};
use super::prepare::prepare;
use super::progress::Progress;
use super::recheck::{JsonRecheck, recheck_lines};
use super::signals::interrupt_on_signal;

/// Arguments of `lyapunov`.
#[derive(clap::Args, Debug)]
pub struct LyapunovArgs {
    /// Scenario file (.ron); the exponents are averaged over its span, after its settle time.
    file: PathBuf,
    /// Print JSON instead of text.
    #[arg(long)]
    json: bool,
    /// Write the running estimates as CSV (`t,l1,l2,...`) to this file (atomically).
    #[arg(long, value_name = "FILE.csv")]
    trace: Option<PathBuf>,
    /// Compute only the N largest exponents (1 is the cheapest); default: all.
    #[arg(long, value_name = "N")]
    exponents: Option<usize>,
    /// Compute the exponents again with both integrator tolerances divided by 100 and report
    /// the significant digits on which the two agree (each exponent judged with the spread
    /// of its running estimate), with the exponent that agrees least.
    #[arg(long)]
    recheck: bool,
}

impl LyapunovArgs {
    /// Whether the result goes out as JSON.
    pub fn json(&self) -> bool {
        self.json
    }
}

/// Progress on the terminal's bar, and the last time reported (for saying where a run
/// stopped on a signal stood).
struct Bar {
    bar: Progress,
    t: f64,
    fraction: f64,
}

impl ExponentSink for Bar {
    fn progress(&mut self, t: f64, fraction: f64) {
        self.bar.update(t, fraction);
        self.t = t;
        self.fraction = fraction;
    }
}

/// Computes the exponents of the scenario and prints them (and writes the trace).
pub fn lyapunov(args: &LyapunovArgs) -> Result<ExitCode> {
    if let Some(trace) = &args.trace {
        check_paths(&args.file, &[("--trace", trace)])?;
    }
    let prepared = prepare(&args.file)?;
    let settings = ExponentSettings {
        count: args.exponents,
        ..ExponentSettings::all()
    };
    let n = prepared.model.start().len();
    let m = args.exponents.unwrap_or(n).min(n);
    if m > 0 {
        memory::ensure_fits(
            workspace_bytes(n, m, prepared.spec.method),
            &format!("computing {m} exponent(s) of {n} state(s)"),
            "compute fewer with --exponents N (the cost grows with N)",
        )?;
    }
    // Ctrl-C stops the run at its next step; installed before the trace's temporary file
    let interrupt = interrupt_on_signal()?;
    let trace_file = match &args.trace {
        Some(path) => Some(outputs::open("--trace", path)?),
        None => None,
    };
    let mut bar = Bar {
        bar: Progress::new("lyapunov"),
        t: prepared.spec.t_start,
        fraction: 0.0,
    };
    let result = spectrum(
        prepared.model.clone(),
        &prepared.spec,
        &settings,
        &mut bar,
        &interrupt,
    );
    bar.bar.finish();
    let result = result.with_context(|| format!("{}", args.file.display()))?;
    if let StopReason::Cancelled { t } = result.reason {
        let written: Vec<&Path> = args.trace.iter().map(PathBuf::as_path).collect();
        return Err(Interrupted(format!(
            "stopped at t = {t} on a signal ({:.0} % of the run): no exponents printed; {}",
            100.0 * bar.fraction,
            outputs::nothing_written(&written)
        ))
        .into());
    }
    let recheck = args.recheck.then(|| {
        let mut bar = Bar {
            bar: Progress::new("recheck"),
            t: prepared.spec.t_start,
            fraction: 0.0,
        };
        let recheck = recheck::exponents(
            prepared.model,
            &prepared.spec,
            &settings,
            &result,
            &mut bar,
            &interrupt,
        );
        bar.bar.finish();
        recheck
    });
    if interrupt.is_raised() {
        let written: Vec<&Path> = args.trace.iter().map(PathBuf::as_path).collect();
        return Err(Interrupted(format!(
            "stopped on a signal during the recheck: no exponents printed; {}",
            outputs::nothing_written(&written)
        ))
        .into());
    }
    let finished = result.reason == StopReason::Finished;
    let trace_note = match trace_file {
        Some(file) => Some(write_trace(file, &result, finished)?),
        None => None,
    };
    let text = if args.json {
        json(&result, recheck.as_ref())?
    } else {
        let mut text = plain(&result, settings.tail_fraction);
        if let Some(recheck) = &recheck {
            for line in recheck_lines(recheck) {
                text.push('\n');
                text.push_str(&line);
            }
        }
        text
    };
    let mut stdout = std::io::stdout().lock();
    writeln!(stdout, "{text}")
        .and_then(|()| stdout.flush())
        .context("writing to stdout")?;
    if let Some(note) = trace_note {
        eprintln!("{note}");
    }
    if let Some(Err(err)) = &recheck {
        eprintln!("the recheck failed, so the exponents above are not confirmed: {err}");
        return Ok(ExitCode::FAILURE);
    }
    if finished {
        Ok(ExitCode::SUCCESS)
    } else {
        eprintln!(
            "the run ended early ({}); the exponents are averaged up to t = {} and not read \
             (verdict: {})",
            result.reason,
            result.t_end,
            result.verdict.name()
        );
        Ok(ExitCode::FAILURE)
    }
}

/// Column names of the exponents: `l1`, `l2`, ...
fn exponent_names(m: usize) -> Vec<String> {
    (1..=m).map(|i| format!("l{i}")).collect()
}

/// Writes the running estimates as `t,l1,l2,...` into `file`: over its target when the run
/// finished (or nothing was there), else beside it. Says where they went.
fn write_trace(file: AtomicFile, result: &Spectrum, finished: bool) -> Result<String> {
    let trace = &result.trace;
    let mut csv = TrajectoryCsv::new(file, &exponent_names(trace.exponents.len()))?;
    for (k, &t) in trace.t.iter().enumerate() {
        csv.write(t, &trace.sample(k))?;
    }
    outputs::finish(csv.finish()?, finished, "the running estimates")
}

/// The JSON of the product brief (`exponents`, `time`) with the rest of the result. Numbers
/// are written in shortest round-trip form; a number that is not finite (an exponent when
/// nothing was averaged, a spread with too few samples) is written as `null`.
fn json(result: &Spectrum, recheck: Option<&Result<Recheck, RecheckError>>) -> Result<String> {
    let mut value = serde_json::json!({
        "exponents": result.exponents,
        "time": result.time,
        "spread": result.spread,
        "sum": result.sum(),
        "kaplan_yorke": result.kaplan_yorke,
        "verdict": result.verdict.name(),
        "verdict_text": result.verdict.to_string(),
        "time_direction_omitted": result.time_direction_omitted,
        "rates_jump": result.rates_jump,
        "saltations": result.n_saltations,
        "switches_not_transversal": result.n_not_transversal,
        "t_end": result.t_end,
        "finished": result.reason == StopReason::Finished,
        "stop_reason": result.reason.to_string(),
        "reorthonormalisations": result.n_reorthonormalisations,
        "rate_evaluations": result.stats.n_rate_evaluations,
    });
    if result.reason != StopReason::Finished
        && let Some(object) = value.as_object_mut()
    {
        // a run that did not finish is a failure: say so where a script looks for one
        object.insert(
            "error".into(),
            serde_json::Value::String(format!("the run ended early: {}", result.reason)),
        );
    }
    if let Some(recheck) = recheck {
        value["recheck"] =
            serde_json::to_value(JsonRecheck::of(recheck)).context("writing JSON")?;
    }
    let text = serde_json::to_string(&value).context("writing JSON")?;
    Ok(text)
}

/// The result as text for a person, numbers in full precision.
fn plain(result: &Spectrum, tail_fraction: f64) -> String {
    let mut lines = Vec::new();
    let t_from = result.t_end - result.time;
    lines.push(format!(
        "Lyapunov exponents of {} state(s), averaged over {} time units (t = {} to {}):",
        result.n_states,
        format_number(result.time),
        format_number(t_from),
        format_number(result.t_end)
    ));
    for (i, (l, spread)) in result.exponents.iter().zip(&result.spread).enumerate() {
        lines.push(format!(
            "  l{} = {}   (spread {})",
            i + 1,
            format_number(*l),
            format_number(*spread)
        ));
    }
    lines.push(format!(
        "spread: largest minus smallest running estimate over the last {} % of the time",
        100.0 * tail_fraction
    ));
    lines.push(format!("sum: {}", format_number(result.sum())));
    lines.push(match result.kaplan_yorke {
        Some(d) => format!("Kaplan–Yorke dimension: {}", format_number(d)),
        None => "Kaplan–Yorke dimension: not determined by these exponents".to_string(),
    });
    lines.push(format!("verdict: {}", result.verdict));
    if result.n_saltations > 0 {
        lines.push(format!(
            "switches: {} crossed, each with its saltation matrix",
            result.n_saltations
        ));
    }
    if result.n_not_transversal > 0 {
        lines.push(format!(
            "caution: {} switches were not crossed transversally (the flow slid along or \
             grazed the switching surface): the exponents leave out the stretching there and \
             may be wrong",
            result.n_not_transversal
        ));
    } else if result.rates_jump {
        lines.push(
            "caution: the rates jump with the state (%): the exponents leave out the \
             stretching at the jumps and may be wrong"
                .to_string(),
        );
    }
    if result.time_direction_omitted {
        lines.push(
            "note: the model uses t (it is forced): the zero exponent of the time direction is \
             not listed"
                .to_string(),
        );
    }
    lines.join("\n")
}
