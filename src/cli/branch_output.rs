//! The outputs of `lamina branch`: the CSV of the product brief, the JSON document, a summary
//! on stderr (how the branch started, why each end stopped, the special points), and the
//! picture; every file computed first and written atomically.

use std::io::Write;
use std::path::Path;

use anyhow::{Context, Result};
use lamina_core::branch::{Branch, BranchOf, BranchStart, SpecialKind, SpecialPoint, Spectrum};
use lamina_core::cycle::Number;
use lamina_export::{AtomicFile, BranchCsv, write_bytes_atomically};
use serde::Serialize;

use super::branch::Followed;
use super::branch_picture::branch_picture;
use super::cycle_output::{JsonComplex, NamedState, write_json_line};
use super::prepare::Prepared;
use super::rest::named;

/// Where the outputs go.
pub struct Outputs<'a> {
    /// The CSV file, if any (else the CSV goes to stdout unless `json`).
    pub csv: Option<&'a Path>,
    /// JSON on stdout.
    pub json: bool,
    /// The picture, if any.
    pub png: Option<&'a Path>,
}

/// Writes every output asked for: the picture is drawn before any file is written, each file
/// is written atomically, stdout last; the summary goes to stderr.
pub fn write_outputs(
    prepared: &Prepared,
    path: &Path,
    followed: &Followed,
    outputs: &Outputs<'_>,
) -> Result<()> {
    let names = prepared.model.names().states.clone();
    let picture = match outputs.png {
        Some(_) => Some(branch_picture(prepared, path, followed, (1200, 900))?),
        None => None,
    };
    if let Some(csv) = outputs.csv {
        let mut file = AtomicFile::create(csv)?;
        write_csv(&mut file, followed, &names)?;
        file.commit()?;
    }
    if let (Some(png), Some((bytes, note))) = (outputs.png, &picture) {
        write_bytes_atomically(png, bytes)?;
        eprintln!("wrote {} ({note})", png.display());
    }
    let mut stdout = std::io::stdout().lock();
    if outputs.json {
        write_json(&mut stdout, followed, &names)?;
    } else if outputs.csv.is_none() {
        write_csv(&mut stdout, followed, &names)?;
    }
    stdout.flush().context("writing to stdout")?;
    eprint!("{}", summary(followed, &names));
    Ok(())
}

/// The CSV: `<parameter>,stable,period,<state names>`, one row per point in branch order.
fn write_csv(out: &mut dyn Write, followed: &Followed, names: &[String]) -> Result<()> {
    let mut csv = BranchCsv::new(out, &followed.parameter, names)?;
    for point in &followed.branch.points {
        csv.write_point(point.value, point.stable, point.period, &point.state)?;
    }
    csv.finish()?;
    Ok(())
}

/// One point in JSON.
#[derive(Serialize)]
struct JsonPoint<'a> {
    value: f64,
    state: NamedState<'a>,
    stable: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    period: Option<f64>,
    unstable: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    kind: Option<&'static str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    eigenvalues: Option<Vec<JsonComplex>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    multipliers: Option<Vec<JsonComplex>>,
}

/// One special point in JSON.
#[derive(Serialize)]
struct JsonSpecial<'a> {
    kind: &'static str,
    value: f64,
    state: NamedState<'a>,
    #[serde(skip_serializing_if = "Option::is_none")]
    period: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    frequency: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    angle: Option<f64>,
}

/// How the branch started, in JSON.
#[derive(Serialize)]
struct JsonStart {
    from: &'static str,
    value: f64,
    description: String,
}

/// One end of the branch in JSON.
#[derive(Serialize)]
struct JsonEnd {
    toward: f64,
    points: usize,
    reason: String,
}

/// The JSON document of the product brief (with the start and the ends added).
#[derive(Serialize)]
struct Json<'a> {
    parameter: &'a str,
    of: &'static str,
    start: JsonStart,
    points: Vec<JsonPoint<'a>>,
    special: Vec<JsonSpecial<'a>>,
    ends: Vec<JsonEnd>,
}

fn complex<T>(values: &[T], parts: impl Fn(&T) -> (f64, f64)) -> Vec<JsonComplex> {
    values
        .iter()
        .map(|v| {
            let (re, im) = parts(v);
            JsonComplex { re, im }
        })
        .collect()
}

/// Writes the JSON document as one line.
fn write_json(out: &mut impl Write, followed: &Followed, names: &[String]) -> Result<()> {
    let branch = &followed.branch;
    let points = branch
        .points
        .iter()
        .map(|p| {
            let (eigenvalues, multipliers) = match &p.spectrum {
                Spectrum::Eigenvalues(values) => (Some(complex(values, |e| (e.re, e.im))), None),
                Spectrum::Multipliers(values) => (None, Some(complex(values, |m| (m.re, m.im)))),
            };
            JsonPoint {
                value: p.value,
                state: NamedState {
                    names,
                    values: &p.state,
                },
                stable: p.stable,
                period: p.period,
                unstable: p.n_unstable,
                kind: p.kind.map(|k| k.key()),
                eigenvalues,
                multipliers,
            }
        })
        .collect();
    let special = branch
        .special
        .iter()
        .map(|s| JsonSpecial {
            kind: s.kind.key(),
            value: s.value,
            state: NamedState {
                names,
                values: &s.state,
            },
            period: s.period,
            frequency: (s.kind == SpecialKind::Hopf)
                .then_some(s.frequency)
                .flatten(),
            angle: (s.kind == SpecialKind::Torus)
                .then_some(s.frequency)
                .flatten(),
        })
        .collect();
    let (from, value) = match branch.start {
        BranchStart::Given { value } => ("given", value),
        BranchStart::Hopf { value, .. } => ("hopf", value),
        BranchStart::PeriodDoubling { value, .. } => ("period_doubling", value),
    };
    let json = Json {
        parameter: &followed.parameter,
        of: branch.of.key(),
        start: JsonStart {
            from,
            value,
            description: start_words(followed),
        },
        points,
        special,
        ends: branch
            .ends
            .iter()
            .map(|e| JsonEnd {
                toward: e.toward,
                points: e.n_points,
                reason: e.reason.describe(&followed.parameter),
            })
            .collect(),
    };
    write_json_line(&mut *out, &json)?;
    Ok(())
}

/// The summary for a person: what was followed and from where, why each end stopped, and
/// the special points.
fn summary(followed: &Followed, names: &[String]) -> String {
    let branch: &Branch = &followed.branch;
    let parameter = &followed.parameter;
    let mut text = String::new();
    let mut line = |s: String| {
        text.push_str(&s);
        text.push('\n');
    };
    let what = match branch.of {
        BranchOf::Rest => "resting points",
        BranchOf::Orbit => "periodic orbits",
    };
    line(format!(
        "branch of {what} in {parameter}: {} points, {}",
        branch.points.len(),
        start_words(followed)
    ));
    for end in &branch.ends {
        line(format!(
            "  toward {parameter} = {}: {} ({} points)",
            Number(end.toward),
            end.reason.describe(parameter),
            end.n_points
        ));
    }
    if branch.of == BranchOf::Orbit {
        line(format!(
            "  stability from the multipliers of the return map ({}), {}",
            if branch.from_differences {
                "derivatives from central differences: the rates jump with the states"
            } else {
                "variational equations"
            },
            if branch.most_segments > 1 {
                format!("up to {} shooting segments", branch.most_segments)
            } else {
                "single shooting".to_string()
            }
        ));
    }
    if branch.special.is_empty() {
        line("no special points on the branch".to_string());
    } else {
        line("special points:".to_string());
        for s in &branch.special {
            line(format!("  {}", special_line(s, parameter, names)));
        }
    }
    text
}

/// How the branch started, in one phrase: "started at a = 1 from the resting point the run
/// settles into", "born at the Hopf point a = 2 (period at birth 6.28) on the branch of ...".
pub fn start_words(followed: &Followed) -> String {
    let parameter = &followed.parameter;
    let start = match followed.branch.start {
        BranchStart::Given { value } => format!("started at {parameter} = {}", Number(value)),
        BranchStart::Hopf { value, period } => format!(
            "born at the Hopf point {parameter} = {} (period at birth {})",
            Number(value),
            Number(period)
        ),
        BranchStart::PeriodDoubling { value, period } => format!(
            "born at the period doubling {parameter} = {} (where the orbit of period {} doubles)",
            Number(value),
            Number(period)
        ),
    };
    format!("{start} {}", followed.how)
}

/// One special point for people.
fn special_line(s: &SpecialPoint, parameter: &str, names: &[String]) -> String {
    let extra = match s.kind {
        SpecialKind::Hopf => s
            .period
            .map(|p| format!("; the orbit born there has period {}", Number(p)))
            .unwrap_or_default(),
        SpecialKind::Torus => s
            .frequency
            .map(|a| {
                format!(
                    "; multipliers at the angle +-{} rad on the unit circle",
                    Number(a.abs())
                )
            })
            .unwrap_or_default(),
        _ => s
            .period
            .map(|p| format!("; period {}", Number(p)))
            .unwrap_or_default(),
    };
    format!(
        "{:<16} {parameter} = {}   {}{extra}",
        s.kind.words(),
        Number(s.value),
        named(names, &s.state)
    )
}
