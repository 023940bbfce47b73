//! From the file's blocks to the core's plain specifications (and the regime map's plain
//! settings, [`RegimeMapSpec`]), and from names to indices.

use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{ModelSpec, ParameterSpec, StateSpec};
use lamina_core::run::{self, CutSpec, RunSpec, StrobeSpec, SurfaceSpec};

use crate::scenario::{Direction, MapAxis, MethodChoice, Scenario, Surface, SweepSource};

impl From<Direction> for run::Direction {
    fn from(direction: Direction) -> Self {
        match direction {
            Direction::Rising => Self::Rising,
            Direction::Falling => Self::Falling,
            Direction::Both => Self::Both,
        }
    }
}

impl From<run::Direction> for Direction {
    fn from(direction: run::Direction) -> Self {
        match direction {
            run::Direction::Rising => Self::Rising,
            run::Direction::Falling => Self::Falling,
            run::Direction::Both => Self::Both,
        }
    }
}

impl From<SweepSource> for lamina_core::sweep::SweepSource {
    fn from(source: SweepSource) -> Self {
        match source {
            SweepSource::Cut => Self::Cut,
            SweepSource::Strobe => Self::Strobe,
        }
    }
}

pub use lamina_core::regime_map::{MapAxisSpec, RegimeMapSpec};

/// One coordinate of the 3D view.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ViewAxis {
    /// The state with this index.
    State(usize),
    /// The time `t`.
    Time,
}

impl MethodChoice {
    /// The core method this choice runs with (every choice has one in this version; `None`
    /// is kept for a choice a later file format might name that a build does not have).
    pub fn method(self) -> Option<Method> {
        Some(match self {
            Self::Automatic => Method::Automatic,
            Self::Dp853 => Method::Dp853,
            Self::Dp5 => Method::Dp5,
            Self::Stiff => Method::Rodas4,
        })
    }
}

impl Scenario {
    /// The model as the core takes it: states with start values and rates, parameters with
    /// values.
    pub fn model_spec(&self) -> ModelSpec {
        ModelSpec {
            states: self
                .states
                .iter()
                .map(|s| StateSpec {
                    name: s.name.clone(),
                    start: s.start,
                    rate: s.rate.clone(),
                })
                .collect(),
            parameters: self
                .parameters
                .iter()
                .map(|p| ParameterSpec {
                    name: p.name.clone(),
                    value: p.value,
                })
                .collect(),
        }
    }

    /// The run settings, with the method of [`MethodChoice::method`]. The stored-steps
    /// budget is the core's default.
    pub fn run_spec(&self) -> RunSpec {
        let integrator = &self.integrator;
        RunSpec {
            method: integrator.method.method().unwrap_or(Method::Dp853),
            control: StepControl {
                rtol: integrator.rtol,
                atol: integrator.atol,
                max_step: integrator.max_step,
                initial_step: None,
            },
            t_start: self.time.start,
            settle: self.time.settle,
            span: self.time.span,
            escape: self.limits.escape,
            max_points: usize::try_from(self.limits.max_points).unwrap_or(usize::MAX),
            ..RunSpec::default()
        }
    }

    /// The cut as the core takes it, if the scenario has one.
    pub fn cut_spec(&self) -> Option<CutSpec> {
        let cut = self.cut.as_ref()?;
        let surface = match &cut.surface {
            Surface::Plane { normal, offset } => SurfaceSpec::Plane {
                normal: normal.0.clone(),
                offset: *offset,
            },
            Surface::Level(expression) => SurfaceSpec::Level(expression.clone()),
        };
        Some(CutSpec {
            surface,
            direction: cut.direction.into(),
        })
    }

    /// The strobe as the core takes it, if the scenario has one.
    pub fn strobe_spec(&self) -> Option<StrobeSpec> {
        let strobe = self.strobe.as_ref()?;
        Some(StrobeSpec {
            period: strobe.period.clone(),
            first_at: strobe.first_at,
        })
    }

    /// Index of the state called `name`.
    pub fn state_index(&self, name: &str) -> Option<usize> {
        self.states.iter().position(|s| s.name == name)
    }

    /// Index of the parameter called `name`.
    pub fn parameter_index(&self, name: &str) -> Option<usize> {
        self.parameters.iter().position(|p| p.name == name)
    }

    /// State indices of the cut's two plot axes; `None` without a cut or with an unknown name.
    pub fn cut_axes(&self) -> Option<[usize; 2]> {
        let (a, b) = &self.cut.as_ref()?.axes;
        Some([self.state_index(a)?, self.state_index(b)?])
    }

    /// The sweep block as core settings (`None` without a sweep, or with a parameter that is
    /// not one). Each value records at most `time.span` after its own transient.
    pub fn sweep_spec(&self) -> Option<lamina_core::sweep::SweepSpec> {
        let sweep = self.sweep.as_ref()?;
        Some(lamina_core::sweep::SweepSpec {
            parameter: self.sweep_parameter_index()?,
            from: sweep.from,
            to: sweep.to,
            values: sweep.values,
            settle: sweep.settle,
            keep: sweep.keep as usize,
            span: self.time.span,
            follow: sweep.follow,
            source: sweep.source.into(),
        })
    }

    /// The regime map as plain settings with the parameters as indices (`None` without a
    /// map, or with an axis whose parameter is not one).
    pub fn map_spec(&self) -> Option<RegimeMapSpec> {
        let map = self.map.as_ref()?;
        let axis = |axis: &MapAxis| {
            Some(MapAxisSpec {
                parameter: self.parameter_index(&axis.parameter)?,
                from: axis.from,
                to: axis.to,
                values: axis.values,
            })
        };
        Some(RegimeMapSpec {
            x: axis(&map.x)?,
            y: axis(&map.y)?,
            settle: map.settle,
            span: map.span,
            source: map.source.into(),
        })
    }

    /// The one state a plane cut fixes (its normal weighs only that state), if any: that
    /// coordinate is the same for every cut point, so views show the return time instead.
    pub fn cut_fixed_state(&self) -> Option<usize> {
        let crate::Surface::Plane { normal, .. } = &self.cut.as_ref()?.surface else {
            return None;
        };
        let mut nonzero = normal.0.iter().filter(|(_, w)| *w != 0.0);
        let (name, _) = nonzero.next()?;
        if nonzero.next().is_some() {
            return None;
        }
        self.state_index(name)
    }

    /// State indices of the strobe's two plot axes; `None` without a strobe or with an
    /// unknown name.
    pub fn strobe_axes(&self) -> Option<[usize; 2]> {
        let (a, b) = &self.strobe.as_ref()?.axes;
        Some([self.state_index(a)?, self.state_index(b)?])
    }

    /// Index of the swept parameter; `None` without a sweep or with an unknown name.
    pub fn sweep_parameter_index(&self) -> Option<usize> {
        self.parameter_index(&self.sweep.as_ref()?.parameter)
    }

    /// State index of the sweep's plotted coordinate; `None` without a sweep or with an
    /// unknown name.
    pub fn sweep_coordinate_index(&self) -> Option<usize> {
        self.state_index(&self.sweep.as_ref()?.coordinate)
    }

    /// The three coordinates of the 3D view, if the view block chooses them and they all
    /// name states or `t`.
    pub fn view_axes(&self) -> Option<[ViewAxis; 3]> {
        let (a, b, c) = self.view.as_ref()?.axes.as_ref()?;
        let axis = |name: &str| match name {
            "t" => Some(ViewAxis::Time),
            _ => self.state_index(name).map(ViewAxis::State),
        };
        Some([axis(a)?, axis(b)?, axis(c)?])
    }
}
