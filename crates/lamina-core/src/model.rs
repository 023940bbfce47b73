//! A model ready to integrate: compiled rates, parameter values and start state, plus the
//! plain specifications (names and expression texts) that it is compiled from.

use crate::expr::{CompileError, Kernel, Names, Program, Scratch};
use crate::integrate::Rates;

/// One state variable as the user typed it.
#[derive(Clone, Debug, PartialEq)]
pub struct StateSpec {
    /// Name used in expressions.
    pub name: String,
    /// Start value.
    pub start: f64,
    /// Rate expression `d name / dt`.
    pub rate: String,
}

/// One named parameter.
#[derive(Clone, Debug, PartialEq)]
pub struct ParameterSpec {
    /// Name used in expressions.
    pub name: String,
    /// Current value.
    pub value: f64,
}

/// The model as typed: states with rates, parameters with values.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ModelSpec {
    /// State variables in order.
    pub states: Vec<StateSpec>,
    /// Parameters in order.
    pub parameters: Vec<ParameterSpec>,
}

impl ModelSpec {
    /// The names known to expressions of this model.
    pub fn names(&self) -> Names {
        Names {
            states: self.states.iter().map(|s| s.name.clone()).collect(),
            parameters: self.parameters.iter().map(|p| p.name.clone()).collect(),
        }
    }
}

/// A compiled model: evaluates all rates in one program.
///
/// The rates are evaluated by a [`Kernel`] specialised to the current parameter values
/// (made again by [`Model::set_parameter`]), or by the program itself when it is too large
/// for a kernel.
#[derive(Clone, Debug)]
pub struct Model {
    names: Names,
    program: Program,
    kernel: Option<Kernel>,
    parameters: Vec<f64>,
    start: Vec<f64>,
    scratch: Scratch,
}

impl Model {
    /// Compiles every rate of `spec`; errors are labelled `state NAME rate`.
    pub fn compile(spec: &ModelSpec) -> Result<Self, CompileError> {
        Self::compile_with(spec, Program::specialise)
    }

    /// [`Model::compile`] without making machine code: the rates run by the closure evaluator
    /// (the same numbers bit for bit), for a model evaluated only a few times, such as the
    /// checks of a scenario, where making the code would cost more than it saves. A
    /// [`Model::set_parameter`] makes the code after all.
    pub fn compile_plain(spec: &ModelSpec) -> Result<Self, CompileError> {
        Self::compile_with(spec, Program::specialise_closures)
    }

    /// Compiles `spec` with the kernel made by `kernel` from the program and the parameters.
    fn compile_with(
        spec: &ModelSpec,
        kernel: fn(&Program, &[f64]) -> Option<Kernel>,
    ) -> Result<Self, CompileError> {
        let names = spec.names();
        let sources: Vec<(String, &str)> = spec
            .states
            .iter()
            .map(|s| (format!("rate of state '{}'", s.name), s.rate.as_str()))
            .collect();
        let program = Program::compile(&names, &sources)?;
        let scratch = program.scratch();
        let parameters: Vec<f64> = spec.parameters.iter().map(|p| p.value).collect();
        Ok(Self {
            names,
            kernel: kernel(&program, &parameters),
            program,
            parameters,
            start: spec.states.iter().map(|s| s.start).collect(),
            scratch,
        })
    }

    /// State and parameter names.
    pub fn names(&self) -> &Names {
        &self.names
    }

    /// The compiled rate program.
    pub fn program(&self) -> &Program {
        &self.program
    }

    /// Start state.
    pub fn start(&self) -> &[f64] {
        &self.start
    }

    /// Parameter values in order.
    pub fn parameters(&self) -> &[f64] {
        &self.parameters
    }

    /// Whether the rates run as machine code (else by the slower closure evaluator: the host
    /// has no code generator).
    pub fn runs_machine_code(&self) -> bool {
        self.kernel.as_ref().is_some_and(Kernel::is_native)
    }

    /// Sets parameter `idx` to `value` (and specialises the rates to the new values).
    pub fn set_parameter(&mut self, idx: usize, value: f64) {
        if self.parameters[idx].to_bits() != value.to_bits() {
            self.parameters[idx] = value;
            self.kernel = self.program.specialise(&self.parameters);
        }
    }

    /// Sets the start state.
    pub fn set_start(&mut self, start: &[f64]) {
        self.start.copy_from_slice(start);
    }

    /// Jacobian of the rates with respect to the states at `(t, x)`, row-major `n x n`
    /// (`out[i * n + j] = d rate_i / d x_j`).
    pub fn jacobian(&mut self, t: f64, x: &[f64], out: &mut [f64]) {
        self.program
            .jacobian(&mut self.scratch, t, x, &self.parameters, out);
    }

    /// Derivative of every rate with respect to parameter `param_idx` at `(t, x)`.
    pub fn parameter_derivative(&mut self, t: f64, x: &[f64], param_idx: usize, out: &mut [f64]) {
        self.program.parameter_derivative(
            &mut self.scratch,
            t,
            x,
            &self.parameters,
            param_idx,
            out,
        );
    }

    /// The rates of a model too large for a kernel (kept out of line, so that the usual path
    /// stays small where the integrator inlines it).
    #[cold]
    #[inline(never)]
    fn rates_without_kernel(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        self.program
            .eval(&mut self.scratch, t, x, &self.parameters, dx);
    }

    /// Whether a rate can jump as the states change (`sign`, `step`, `floor`, `ceil` or `%` of
    /// a state): the variational equations then miss the jumps of the flow's derivative.
    pub fn jumps_with_states(&self) -> bool {
        self.program.jumps_with_states()
    }

    /// Whether any rate uses the time `t` (a forced, non-autonomous model).
    pub fn uses_time(&self) -> bool {
        self.program.uses_time()
    }
}

impl Rates for Model {
    fn dim(&self) -> usize {
        self.start.len()
    }

    /// The kernel's machine code, where the rates run as that.
    fn machine_call(&self) -> Option<crate::expr::MachineCall<'_>> {
        self.kernel.as_ref()?.machine_call()
    }
    #[inline(always)]
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        match &mut self.kernel {
            Some(kernel) => kernel.eval(t, x, dx),
            None => self.rates_without_kernel(t, x, dx),
        }
    }

    /// The compiled Jacobian (forward-mode derivatives of the rate program).
    fn exact_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) -> bool {
        self.jacobian(t, x, jacobian);
        true
    }

    /// The compiled time derivative (zero without evaluating when no rate uses `t`).
    fn exact_time_derivative(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> bool {
        if self.program.uses_time() {
            self.program
                .time_derivative(&mut self.scratch, t, x, &self.parameters, out);
        } else {
            out.fill(0.0);
        }
        true
    }
}
