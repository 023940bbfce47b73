//! Compiling a scenario for the core in one place: the model, the run settings, the cut, the
//! strobe and the sweep. The command line's batch commands and the window both call
//! [`Scenario::compile`], so a scenario that compiles for one compiles for the other.

use lamina_core::model::Model;
use lamina_core::run::{Cut, RunSpec, Strobe, StrobeSpec};
use lamina_core::sweep::SweepSpec;

use crate::Scenario;
use crate::error::ScenarioError;

/// A scenario compiled for the core.
#[derive(Clone, Debug)]
pub struct Compiled {
    /// The model at the scenario's parameter values.
    pub model: Model,
    /// Integrator, time window and limits.
    pub run: RunSpec,
    /// The cut, if the scenario has one.
    pub cut: Option<Cut>,
    /// The strobe, if the scenario has one.
    pub strobe: Option<Strobe>,
    /// The strobe as typed: a sweep compiles it again per value, as its period may use the
    /// swept parameter.
    pub strobe_spec: Option<StrobeSpec>,
    /// The sweep, if the scenario has one whose parameter is one of the model's.
    pub sweep: Option<SweepSpec>,
}

impl Scenario {
    /// Compiles the model, the cut and the strobe, and gathers the run and sweep settings.
    ///
    /// This does not run the scenario's checks ([`Scenario::check`]); a scenario with errors
    /// may still fail here, with the field that does not compile named.
    pub fn compile(&self) -> Result<Compiled, ScenarioError> {
        let model = Model::compile(&self.model_spec()).map_err(|e| ScenarioError::Compile {
            field: "states",
            source: e.into(),
        })?;
        let cut = self
            .cut_spec()
            .map(|spec| Cut::compile(&spec, &model))
            .transpose()
            .map_err(|source| ScenarioError::Compile {
                field: "cut",
                source,
            })?;
        let strobe_spec = self.strobe_spec();
        let strobe = strobe_spec
            .as_ref()
            .map(|spec| Strobe::compile(spec, &model))
            .transpose()
            .map_err(|source| ScenarioError::Compile {
                field: "strobe",
                source,
            })?;
        Ok(Compiled {
            run: self.run_spec(),
            sweep: self.sweep_spec(),
            model,
            cut,
            strobe,
            strobe_spec,
        })
    }
}
