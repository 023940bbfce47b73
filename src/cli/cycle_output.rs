//! The output of `lamina cycle`: a readable report, or JSON with full round-trip precision.

use std::io::Write;

use anyhow::{Context, Result};
use lamina_core::cycle::{CycleReport, MapChoice, Multiplier, Number};
use lamina_core::recheck::{Recheck, RecheckError};
use lamina_scenario::{Scenario, State};
use serde::Serialize;
use serde::ser::{SerializeMap, Serializer};

use super::cycle::SeedOrigin;
use super::recheck::{JsonRecheck, recheck_lines};

/// The JSON document of the product brief.
#[derive(Serialize)]
struct Json<'a> {
    period: f64,
    point: NamedState<'a>,
    multipliers: Vec<JsonComplex>,
    stable: bool,
    residual: f64,
    k: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    floquet: Option<Vec<JsonComplex>>,
    /// Returns asked for (differs from `k` when only an orbit of fewer returns was found).
    asked_k: usize,
    /// How the search went, when it did not simply find what was asked.
    #[serde(skip_serializing_if = "Option::is_none")]
    note: Option<String>,
    /// The stability margin in words.
    margin: String,
    /// Where the derivatives came from, in words.
    derivatives: String,
    /// Switches crossed with a saltation matrix.
    saltations: u64,
    /// Whether central differences were used.
    from_differences: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    recheck: Option<JsonRecheck>,
}

/// A state as an object of state names, in the model's order.
pub struct NamedState<'a> {
    /// The state names.
    pub names: &'a [String],
    /// The values, in the same order.
    pub values: &'a [f64],
}

impl Serialize for NamedState<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.names.len()))?;
        for (name, value) in self.names.iter().zip(self.values) {
            map.serialize_entry(name, value)?;
        }
        map.end()
    }
}

/// A complex number in JSON.
#[derive(Serialize)]
pub struct JsonComplex {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

fn complex(values: &[Multiplier]) -> Vec<JsonComplex> {
    values
        .iter()
        .map(|m| JsonComplex { re: m.re, im: m.im })
        .collect()
}

/// Writes `value` as one line of JSON. The text is made first and written as bytes, so a
/// reader that closed the pipe shows as the `io::Error` it is (serde_json's own writer hides
/// it), and the command ends quietly.
pub fn write_json_line(out: &mut impl Write, value: &impl Serialize) -> Result<()> {
    let mut text = serde_json::to_string(value).context("writing JSON")?;
    text.push('\n');
    out.write_all(text.as_bytes())?;
    Ok(())
}

/// Writes the report as one JSON line (serde_json writes the shortest text that reads back
/// to the same f64).
pub fn write_json(
    out: &mut impl Write,
    report: &CycleReport,
    names: &[String],
    recheck: Option<&Result<Recheck, RecheckError>>,
) -> Result<()> {
    let json = Json {
        period: report.period,
        point: NamedState {
            names,
            values: &report.point.state,
        },
        multipliers: complex(&report.multipliers),
        stable: report.is_stable(),
        residual: report.residual,
        k: report.k,
        floquet: report.floquet.as_deref().map(complex),
        asked_k: report.search.asked,
        note: report.search_note(),
        margin: report.outlook.to_string(),
        derivatives: report.derivatives(),
        saltations: report.n_saltations,
        from_differences: report.from_differences,
        recheck: recheck.map(JsonRecheck::of),
    };
    write_json_line(&mut *out, &json)?;
    Ok(())
}

/// Writes the report for a person to read, with the scenario's units.
pub fn write_human(
    out: &mut impl Write,
    report: &CycleReport,
    scenario: &Scenario,
    origin: &SeedOrigin,
    recheck: Option<&Result<Recheck, RecheckError>>,
) -> Result<()> {
    let time_unit = unit_suffix(scenario.time.unit.as_deref());
    let states = &scenario.states;
    let map = match report.map {
        MapChoice::Cut => "cut map",
        MapChoice::Strobe => "strobe map",
    };
    let mut text = String::new();
    let mut line = |s: String| {
        text.push_str(&s);
        text.push('\n');
    };
    line(format!(
        "{}-return orbit of the {map}, period {}{time_unit}",
        report.k, report.period
    ));
    if let Some(note) = report.search_note() {
        line(format!("  note          {note}"));
    }
    line(format!(
        "  point         {}  (t = {}{time_unit})",
        named(states, &report.point.state),
        report.point.t
    ));
    for (idx, other) in report.orbit.iter().enumerate().skip(1) {
        line(format!(
            "  point {}       {}  (t = {}{time_unit})",
            idx + 1,
            named(states, &other.state),
            other.t
        ));
    }
    line(format!(
        "  multipliers of the {map} (applied {} time(s)), by modulus:",
        report.k
    ));
    for m in &report.multipliers {
        line(format!("      {m}    |m| = {}", Number(m.modulus())));
    }
    if let Some(floquet) = &report.floquet {
        line("  Floquet multipliers (monodromy matrix over the period):".to_string());
        let trivial = floquet
            .iter()
            .enumerate()
            .min_by(|(_, a), (_, b)| distance_to_one(a).total_cmp(&distance_to_one(b)))
            .map(|(idx, _)| idx);
        for (idx, m) in floquet.iter().enumerate() {
            let note = if Some(idx) == trivial {
                "    (trivial: along the flow)"
            } else {
                ""
            };
            line(format!("      {m}{note}"));
        }
    }
    line(format!(
        "  residual      {:e} after {} Newton step(s)",
        report.residual, report.iterations
    ));
    line(format!("  derivatives   {}", report.derivatives()));
    line(format!("  verdict       {}", report.verdict));
    line(format!("  margin        {}", report.outlook));
    match origin {
        SeedOrigin::Start => line("  seed          the start state".to_string()),
        SeedOrigin::CloseReturn {
            recurrence,
            distance,
            n_points,
        } => line(format!(
            "  seed          closest return of {n_points} settled points (distance {distance:.1e}); {recurrence}"
        )),
    }
    if let Some(recheck) = recheck {
        for l in recheck_lines(recheck) {
            line(format!("  {l}"));
        }
    }
    out.write_all(text.as_bytes())
        .context("writing to stdout")?;
    Ok(())
}

fn distance_to_one(m: &Multiplier) -> f64 {
    (m.re - 1.0).hypot(m.im)
}

/// `x = 1 um, v = 2` with full precision and each state's unit.
fn named(states: &[State], values: &[f64]) -> String {
    states
        .iter()
        .zip(values)
        .map(|(s, v)| {
            let unit = unit_suffix(s.unit.as_deref());
            format!("{} = {}{unit}", s.name, Number(*v))
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// ` um` for a unit, nothing without one.
fn unit_suffix(unit: Option<&str>) -> String {
    match unit {
        Some(unit) if !unit.trim().is_empty() => format!(" {unit}"),
        _ => String::new(),
    }
}
