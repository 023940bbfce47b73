//! Scenario files of format 1, the first: their serde types with the old words, and their
//! conversion into format 2.
//!
//! Format 1 words and their format 2 names: `method: Auto` -> `Automatic`; strobe `phase` ->
//! `first_at`; sweep `steps` (intervals) -> `values` (= steps + 1); `limits.bound` ->
//! `escape`; view colour `strobe_points` -> `strobe_samples`. Format 1 has no units and no
//! regime map. Every other field is the same in both.

use serde::Deserialize;

use crate::scenario::{
    self, Camera, Cut, FORMAT, FormatRead, Integrator, Limits, MethodChoice, Parameter, State,
    Strobe, Sweep, SweepSource, Time, View,
};
use crate::source::SourceMap;

/// The paths of format 1's renamed fields and their format 2 paths, for locating problems.
pub(crate) const RENAMED_PATHS: [(&str, &str); 4] = [
    ("strobe.phase", "strobe.first_at"),
    ("sweep.steps", "sweep.values"),
    ("limits.bound", "limits.escape"),
    ("view.colours.strobe_points", "view.colours.strobe_samples"),
];

/// Format 1's words beside format 2's, for a hint when a file mixes them up.
pub(crate) const RENAMED_WORDS: [(&str, &str); 5] = [
    ("Auto", "Automatic"),
    ("phase", "first_at"),
    ("steps", "values"),
    ("bound", "escape"),
    ("strobe_points", "strobe_samples"),
];

/// A format-1 scenario, field for field as the first release wrote it.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct Scenario {
    #[allow(
        dead_code,
        reason = "read to be checked by the loader, then replaced by FORMAT"
    )]
    format: u32,
    title: String,
    #[serde(default)]
    notes: String,
    states: Vec<State1>,
    parameters: Vec<Parameter1>,
    integrator: Integrator1,
    time: Time1,
    #[serde(default)]
    cut: Option<Cut>,
    #[serde(default)]
    strobe: Option<Strobe1>,
    #[serde(default)]
    sweep: Option<Sweep1>,
    #[serde(default)]
    limits: Limits1,
    #[serde(default)]
    view: Option<View1>,
}

#[derive(Deserialize)]
#[serde(rename = "State", deny_unknown_fields)]
struct State1 {
    name: String,
    start: f64,
    rate: String,
}

#[derive(Deserialize)]
#[serde(rename = "Parameter", deny_unknown_fields)]
struct Parameter1 {
    name: String,
    value: f64,
    range: (f64, f64),
}

#[derive(Clone, Copy, Deserialize)]
#[serde(rename = "MethodChoice")]
enum Method1 {
    Auto,
    Dp5,
    Dp853,
    Stiff,
}

#[derive(Deserialize)]
#[serde(rename = "Integrator", deny_unknown_fields)]
struct Integrator1 {
    method: Method1,
    rtol: f64,
    atol: f64,
    #[serde(default)]
    max_step: Option<f64>,
}

#[derive(Deserialize)]
#[serde(rename = "Time", deny_unknown_fields)]
struct Time1 {
    start: f64,
    settle: f64,
    span: f64,
}

#[derive(Deserialize)]
#[serde(rename = "Strobe", deny_unknown_fields)]
struct Strobe1 {
    period: String,
    phase: f64,
    axes: (String, String),
}

#[derive(Deserialize)]
#[serde(rename = "Sweep", deny_unknown_fields)]
struct Sweep1 {
    parameter: String,
    from: f64,
    to: f64,
    steps: u32,
    settle: f64,
    keep: u32,
    follow: bool,
    source: SweepSource,
    coordinate: String,
}

#[derive(Deserialize)]
#[serde(rename = "Limits", deny_unknown_fields, default)]
struct Limits1 {
    max_points: u64,
    bound: f64,
}

impl Default for Limits1 {
    fn default() -> Self {
        let limits = Limits::default();
        Self {
            max_points: limits.max_points,
            bound: limits.escape,
        }
    }
}

#[derive(Deserialize)]
#[serde(rename = "View", deny_unknown_fields)]
struct View1 {
    #[serde(default)]
    camera: Option<Camera>,
    #[serde(default)]
    axes: Option<(String, String, String)>,
    #[serde(default)]
    colours: Option<Colours1>,
}

#[derive(Deserialize)]
#[serde(rename = "Colours", deny_unknown_fields)]
struct Colours1 {
    #[serde(default)]
    trajectory: Option<String>,
    #[serde(default)]
    surface: Option<String>,
    #[serde(default)]
    cut_points: Option<String>,
    #[serde(default)]
    strobe_points: Option<String>,
}

impl Scenario {
    /// The same scenario in format 2, with the text's locations under the new field paths.
    pub(crate) fn into_current(self, mut source: SourceMap) -> scenario::Scenario {
        for (old, new) in RENAMED_PATHS {
            source.rename(old, new);
        }
        scenario::Scenario {
            format: FORMAT,
            title: self.title,
            notes: self.notes,
            states: self
                .states
                .into_iter()
                .map(|s| State {
                    name: s.name,
                    start: s.start,
                    rate: s.rate,
                    unit: None,
                })
                .collect(),
            parameters: self
                .parameters
                .into_iter()
                .map(|p| Parameter {
                    name: p.name,
                    value: p.value,
                    range: p.range,
                    unit: None,
                })
                .collect(),
            integrator: Integrator {
                method: match self.integrator.method {
                    Method1::Auto => MethodChoice::Automatic,
                    Method1::Dp5 => MethodChoice::Dp5,
                    Method1::Dp853 => MethodChoice::Dp853,
                    Method1::Stiff => MethodChoice::Stiff,
                },
                rtol: self.integrator.rtol,
                atol: self.integrator.atol,
                max_step: self.integrator.max_step,
            },
            time: Time {
                start: self.time.start,
                settle: self.time.settle,
                span: self.time.span,
                unit: None,
            },
            cut: self.cut,
            strobe: self.strobe.map(|s| Strobe {
                period: s.period,
                first_at: s.phase,
                axes: s.axes,
            }),
            sweep: self.sweep.map(|s| Sweep {
                parameter: s.parameter,
                from: s.from,
                to: s.to,
                values: s.steps.saturating_add(1),
                settle: s.settle,
                keep: s.keep,
                follow: s.follow,
                source: s.source,
                coordinate: s.coordinate,
            }),
            map: None,
            limits: Limits {
                max_points: self.limits.max_points,
                escape: self.limits.bound,
            },
            view: self.view.map(|v| View {
                camera: v.camera,
                axes: v.axes,
                colours: v.colours.map(|c| scenario::Colours {
                    trajectory: c.trajectory,
                    surface: c.surface,
                    cut_points: c.cut_points,
                    strobe_samples: c.strobe_points,
                }),
            }),
            source,
            format_read: FormatRead(Some(1)),
        }
    }
}
