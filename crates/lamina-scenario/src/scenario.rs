//! The scenario document, format 2: serde types that mirror the file field for field.
//!
//! These are the only serializable copies of Lamina's settings; the core types they convert
//! into (see [`crate::convert`]) know nothing of files. Files of format 1 are read through
//! their own types (`crate::format1`) and converted into these.

use std::fmt;

use serde::de::{MapAccess, Visitor};
use serde::ser::SerializeMap;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::number::Short;
use crate::source::SourceMap;

/// The scenario format this version of Lamina writes (and reads, besides [`OLDEST_FORMAT`]).
pub const FORMAT: u32 = 2;

/// The oldest format this version of Lamina reads: format 1, the first, whose old words the
/// loader maps to format 2's.
pub const OLDEST_FORMAT: u32 = 1;

/// One scenario: the model, how to integrate it, how to cut and strobe it, what to sweep and
/// map, and optionally how to look at it.
///
/// Equality compares the scenario's content only, not where its fields were in a file nor
/// which format the file was.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Format version of the file; [`FORMAT`] for files this version writes.
    pub format: u32,
    /// Short title.
    pub title: String,
    /// Free text; empty when left out.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub notes: String,
    /// State variables in order.
    pub states: Vec<State>,
    /// Parameters in order.
    pub parameters: Vec<Parameter>,
    /// Integration method and tolerances.
    pub integrator: Integrator,
    /// Time window.
    pub time: Time,
    /// The cut (Poincaré section), if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cut: Option<Cut>,
    /// The strobe (time-T map), if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub strobe: Option<Strobe>,
    /// The parameter sweep, if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sweep: Option<Sweep>,
    /// The regime map over two parameters, if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub map: Option<RegimeMap>,
    /// Run limits; [`Limits::default`] when left out.
    #[serde(default)]
    pub limits: Limits,
    /// How the explorer shows the scenario, if saved from it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub view: Option<View>,
    /// Where each field was in the text this scenario was loaded from.
    #[serde(skip)]
    pub(crate) source: SourceMap,
    /// The format of the text this scenario was loaded from.
    #[serde(skip)]
    pub(crate) format_read: FormatRead,
}

/// The format a scenario's text was written in, when it was loaded from text; equal to every
/// other (a converted format-1 scenario equals its format-2 twin).
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct FormatRead(pub(crate) Option<u32>);

impl PartialEq for FormatRead {
    fn eq(&self, _other: &Self) -> bool {
        true
    }
}

/// One state variable.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct State {
    /// Name used in expressions.
    pub name: String,
    /// Start value.
    pub start: f64,
    /// Rate expression `d name / dt`.
    pub rate: String,
    /// Unit, free text shown beside values, on axes and in captions (no unit arithmetic).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "plain_text"
    )]
    pub unit: Option<String>,
}

/// One named parameter with its slider range.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Parameter {
    /// Name used in expressions.
    pub name: String,
    /// Current value.
    pub value: f64,
    /// Slider range `(low, high)`.
    pub range: (f64, f64),
    /// Unit, free text shown beside values, on axes and in captions (no unit arithmetic).
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "plain_text"
    )]
    pub unit: Option<String>,
}

/// Integration method as chosen in the file.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum MethodChoice {
    /// Let Lamina choose: Dormand–Prince 8(5,3), changing to the stiff method while the
    /// model is stiff.
    Automatic,
    /// Dormand–Prince 5(4).
    Dp5,
    /// Dormand–Prince 8(5,3).
    Dp853,
    /// The stiff method (the Rosenbrock method Rodas4).
    Stiff,
}

/// Integration method and step control.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Integrator {
    /// Method.
    pub method: MethodChoice,
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance.
    pub atol: f64,
    /// Largest step, if limited.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_step: Option<f64>,
}

/// The time window: start, transient not recorded, recorded length.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Time {
    /// Start time.
    pub start: f64,
    /// Transient integrated but not recorded.
    pub settle: f64,
    /// Length of the recorded window.
    pub span: f64,
    /// Unit of time, free text shown beside times, on axes and in captions.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        serialize_with = "plain_text"
    )]
    pub unit: Option<String>,
}

/// Plane normal weights by state name, in the file's order.
///
/// Written as a RON map `{"v": 1.0}`; kept as pairs so that saving keeps the user's order
/// and a name given twice can be reported instead of silently dropped.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Weights(pub Vec<(String, f64)>);

impl Serialize for Weights {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.0.len()))?;
        for (name, weight) in &self.0 {
            map.serialize_entry(name, weight)?;
        }
        map.end()
    }
}

impl<'de> Deserialize<'de> for Weights {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct WeightsVisitor;
        impl<'de> Visitor<'de> for WeightsVisitor {
            type Value = Weights;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a map from state name to weight, like {\"v\": 1.0}")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut access: A) -> Result<Weights, A::Error> {
                let mut pairs = Vec::new();
                while let Some((name, weight)) = access.next_entry::<String, f64>()? {
                    pairs.push((name, weight));
                }
                Ok(Weights(pairs))
            }
        }
        deserializer.deserialize_map(WeightsVisitor)
    }
}

/// The cut surface.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub enum Surface {
    /// The hyperplane `sum normal_i x_i = offset`.
    Plane {
        /// Weights by state name; states left out weigh 0.
        normal: Weights,
        /// Right-hand side.
        offset: f64,
    },
    /// The level surface `g(x, t) = 0` of an expression.
    Level(String),
}

/// Which crossings of the cut count.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum Direction {
    /// From negative to positive.
    Rising,
    /// From positive to negative.
    Falling,
    /// Either way.
    Both,
}

/// The cut (Poincaré section).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Cut {
    /// Surface.
    pub surface: Surface,
    /// Which crossings count.
    pub direction: Direction,
    /// The two state names plotted for the cut points.
    pub axes: (String, String),
}

/// The strobe (time-T map).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Strobe {
    /// Period expression in parameters and constants, e.g. `2*pi/w`.
    pub period: String,
    /// Absolute time of sample 0; samples at `first_at + k * period`.
    pub first_at: f64,
    /// The two state names plotted for the samples.
    pub axes: (String, String),
}

/// Which points a sweep or a regime map keeps.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum SweepSource {
    /// Cut points.
    Cut,
    /// Strobe samples.
    Strobe,
}

/// A one-parameter sweep (orbit diagram).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Sweep {
    /// The parameter varied.
    pub parameter: String,
    /// First value.
    pub from: f64,
    /// Last value.
    pub to: f64,
    /// Number of parameter values, both ends included.
    pub values: u32,
    /// Transient per value, not recorded.
    pub settle: f64,
    /// Points kept per value (the last ones).
    pub keep: u32,
    /// Start each value from the previous value's end state (follow the branch).
    pub follow: bool,
    /// Cut points or strobe samples.
    pub source: SweepSource,
    /// The state plotted against the parameter.
    pub coordinate: String,
}

/// One axis of a regime map: a parameter over a range of values.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MapAxis {
    /// The parameter varied along this axis.
    pub parameter: String,
    /// First value.
    pub from: f64,
    /// Last value.
    pub to: f64,
    /// Number of parameter values, both ends included.
    pub values: u32,
}

/// A regime map: two parameters on a grid, each cell run and classified.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegimeMap {
    /// The parameter across.
    pub x: MapAxis,
    /// The parameter up.
    pub y: MapAxis,
    /// Transient per cell, not recorded.
    pub settle: f64,
    /// Recorded time per cell, after the transient.
    pub span: f64,
    /// Cut points or strobe samples.
    pub source: SweepSource,
}

/// Run limits.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Limits {
    /// A run stops after this many cut points or strobe samples.
    pub max_points: u64,
    /// The escape size: a run stops when a state's magnitude passes it.
    pub escape: f64,
}

impl Default for Limits {
    /// 200 000 points, escape size 1e6.
    fn default() -> Self {
        Self {
            max_points: 200_000,
            escape: 1e6,
        }
    }
}

/// How the explorer shows the scenario. Every part may be left out.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct View {
    /// The 3D camera.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub camera: Option<Camera>,
    /// The three coordinates of the 3D view: state names, or `t` for time.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub axes: Option<(String, String, String)>,
    /// Colours of the drawn items.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub colours: Option<Colours>,
}

/// Orbit camera of the 3D view.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Camera {
    /// Turn about the vertical axis, degrees.
    pub yaw_deg: f64,
    /// Tilt above the horizontal, degrees (-90 to 90).
    pub pitch_deg: f64,
    /// Magnification, positive; 1 fits the trajectory.
    pub zoom: f64,
}

/// Colours as `#rrggbb` or `#rrggbbaa`; a colour left out uses the explorer's default.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Colours {
    /// The trajectory line.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trajectory: Option<String>,
    /// The cut surface.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub surface: Option<String>,
    /// Cut points.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cut_points: Option<String>,
    /// Strobe samples.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub strobe_samples: Option<String>,
}

impl Scenario {
    /// A scenario of format [`FORMAT`] with the given model and time window and nothing else:
    /// no notes, units, cut, strobe, sweep, map or view, default limits, method `Automatic`,
    /// tolerances 1e-9 and 1e-12.
    pub fn new(title: &str, states: Vec<State>, parameters: Vec<Parameter>, time: Time) -> Self {
        Self {
            format: FORMAT,
            title: title.to_owned(),
            notes: String::new(),
            states,
            parameters,
            integrator: Integrator {
                method: MethodChoice::Automatic,
                rtol: 1e-9,
                atol: 1e-12,
                max_step: None,
            },
            time,
            cut: None,
            strobe: None,
            sweep: None,
            map: None,
            limits: Limits::default(),
            view: None,
            source: SourceMap::default(),
            format_read: FormatRead::default(),
        }
    }

    /// One line for a picture's caption: the parameter values with their units, the recorded
    /// time window and the tolerances, numbers in short form.
    pub fn caption(&self) -> String {
        let params: Vec<String> = self
            .parameters
            .iter()
            .map(|p| format!("{} = {}", p.name, with_unit(p.value, p.unit.as_deref())))
            .collect();
        let t0 = self.time.start + self.time.settle;
        let unit = self
            .time
            .unit
            .as_deref()
            .map(|u| format!(" {u}"))
            .unwrap_or_default();
        format!(
            "{}   |   t from {} to {}{unit}, rtol {:e}, atol {:e}",
            params.join(", "),
            Short(t0),
            Short(t0 + self.time.span),
            self.integrator.rtol,
            self.integrator.atol
        )
    }

    /// One line for a regime map's caption: the parameters the map leaves fixed with their
    /// units, the settle time and span of each cell, what the cells are classified from, and
    /// the tolerances.
    pub fn map_caption(&self, spec: &lamina_core::regime_map::RegimeMapSpec) -> String {
        let mapped = [spec.x.parameter, spec.y.parameter];
        let fixed: Vec<String> = (self.parameters.iter().enumerate())
            .filter(|(idx, _)| !mapped.contains(idx))
            .map(|(_, p)| match &p.unit {
                Some(unit) => format!("{} = {} {unit}", p.name, p.value),
                None => format!("{} = {}", p.name, p.value),
            })
            .collect();
        let unit = (self.time.unit.as_deref())
            .map(|u| format!(" {u}"))
            .unwrap_or_default();
        let source = match spec.source {
            lamina_core::sweep::SweepSource::Cut => "cut points",
            lamina_core::sweep::SweepSource::Strobe => "strobe samples",
        };
        let fixed = if fixed.is_empty() {
            "no other parameters".to_string()
        } else {
            fixed.join(", ")
        };
        format!(
            "{fixed}   |   per cell: settle {}{unit}, span {}{unit}, by {source}, rtol {:e}, atol {:e}",
            spec.settle, spec.span, self.integrator.rtol, self.integrator.atol
        )
    }

    /// One line for a sweep's caption (its orbit diagram): the swept parameter's range with
    /// its unit and number of values, the parameters the sweep leaves fixed, the settle time
    /// and what is kept per value, and the tolerances. The main run's time window and the
    /// swept parameter's current value play no part in a sweep, so they are not shown.
    pub fn sweep_caption(&self, spec: &lamina_core::sweep::SweepSpec) -> String {
        let swept = self.parameters.get(spec.parameter);
        let unit_of = |u: Option<&str>| {
            u.filter(|u| !u.trim().is_empty())
                .map(|u| format!(" {u}"))
                .unwrap_or_default()
        };
        let range = match swept {
            Some(p) => format!(
                "{} from {} to {}{} ({} values{})",
                p.name,
                Short(spec.from),
                Short(spec.to),
                unit_of(p.unit.as_deref()),
                spec.values,
                if spec.follow {
                    ", each from the last"
                } else {
                    ", each from the start"
                }
            ),
            None => String::new(),
        };
        let fixed: Vec<String> = (self.parameters.iter().enumerate())
            .filter(|(idx, _)| *idx != spec.parameter)
            .map(|(_, p)| format!("{} = {}", p.name, with_unit(p.value, p.unit.as_deref())))
            .collect();
        let unit = unit_of(self.time.unit.as_deref());
        let source = match spec.source {
            lamina_core::sweep::SweepSource::Cut => "cut points",
            lamina_core::sweep::SweepSource::Strobe => "strobe samples",
        };
        format!(
            "{range}   |   {}   |   per value: settle {}{unit}, keep {} {source}, rtol {:e}, atol {:e}",
            fixed.join(", "),
            Short(spec.settle),
            spec.keep,
            self.integrator.rtol,
            self.integrator.atol
        )
    }

    /// The axis label of state `idx`: its name, with its unit in parentheses if it has one
    /// (`x (um)`); empty for an index that is not a state.
    pub fn state_label(&self, idx: usize) -> String {
        self.states
            .get(idx)
            .map(|s| label(&s.name, s.unit.as_deref()))
            .unwrap_or_default()
    }

    /// The axis label of parameter `idx`, like [`Scenario::state_label`].
    pub fn parameter_label(&self, idx: usize) -> String {
        self.parameters
            .get(idx)
            .map(|p| label(&p.name, p.unit.as_deref()))
            .unwrap_or_default()
    }

    /// The axis label of the time: `t`, or `t (us)` with a unit.
    pub fn time_label(&self) -> String {
        label("t", self.time.unit.as_deref())
    }

    /// The format of the text this scenario was loaded from: [`FORMAT`], or 1 for a file of
    /// the first format (converted on loading; it saves as format 2). `None` for a scenario
    /// made in code.
    pub fn format_read(&self) -> Option<u32> {
        self.format_read.0
    }

    /// What to tell the user about the format the scenario was read from, if anything: for a
    /// format-1 file, that its old words were mapped and that saving writes format 2.
    pub fn format_note(&self) -> Option<String> {
        match self.format_read() {
            Some(found) if found < FORMAT => Some(format!(
                "read format {found} (its old words are mapped to format {FORMAT}'s); saving writes format {FORMAT}"
            )),
            _ => None,
        }
    }

    /// Forgets where the fields were in the loaded text (for example after editing, when the
    /// old lines no longer match).
    pub fn forget_source(&mut self) {
        self.source = SourceMap::default();
    }
}

/// A unit written as the text alone (`unit: "um"`, not `unit: Some("um")`); the loader reads
/// both.
fn plain_text<S: Serializer>(text: &Option<String>, serializer: S) -> Result<S::Ok, S::Error> {
    match text {
        Some(text) => serializer.serialize_str(text),
        None => serializer.serialize_none(),
    }
}

/// `name (unit)`, or `name` without a unit (or with an empty one).
fn label(name: &str, unit: Option<&str>) -> String {
    match unit {
        Some(unit) if !unit.trim().is_empty() => format!("{name} ({unit})"),
        _ => name.to_owned(),
    }
}

/// `0.3 N`, or `0.3` without a unit (numbers in short form: `1e308`, not 309 digits).
fn with_unit(value: f64, unit: Option<&str>) -> String {
    match unit {
        Some(unit) if !unit.trim().is_empty() => format!("{} {unit}", Short(value)),
        _ => Short(value).to_string(),
    }
}
