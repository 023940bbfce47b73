//! Machine code for a program: its instruction list translated by the Cranelift code generator
//! into one native function of the states, the parameters and the time.
//!
//! This is the fastest form of a program (a chain of coupled oscillators runs close to a
//! hand-written closure; the closure evaluator of [`super::nodes`] pays a call per operation).
//! The arithmetic is that of the reference evaluator operation for operation: additions,
//! products, quotients, negation, `sqrt` and `abs` are single machine instructions (IEEE
//! results, never fused into multiply-adds), and every other function calls the same Rust
//! function the reference evaluator calls. So results agree with [`Program::eval_reference`]
//! bit for bit (checked by property tests on random expressions).
//!
//! The code is made once per program, with the parameters read from memory on each call, so a
//! parameter change (a sweep, a slider) costs no new code. If the host has no code generator
//! (an architecture Cranelift does not support) or generation fails, there is no native code and
//! the closure evaluator is used instead.
//!
//! [`Program::eval_reference`]: super::Program::eval_reference

use std::sync::{Arc, Mutex};

use cranelift_codegen::ir::condcodes::FloatCC;
use cranelift_codegen::ir::types::{F64, I32};
use cranelift_codegen::ir::{AbiParam, FuncRef, InstBuilder, MemFlagsData, UserFuncName, Value};
use cranelift_codegen::settings::{self, Configurable};
use cranelift_frontend::{FunctionBuilder, FunctionBuilderContext};
use cranelift_jit::{JITBuilder, JITModule};
use cranelift_module::{Linkage, Module, default_libcall_names};

use super::instr::{Func1, Instr};
use super::native_calls::{Call, calls};
use super::native_tangent::{Sparse, tangents};

/// The generated function: `(states, parameters, time, outputs)`.
type Entry = extern "C" fn(*const f64, *const f64, f64, *mut f64);

/// Most states a program may have for the form of its rates that takes them in registers.
pub const MOST_STATES_IN_REGISTERS: usize = 4;

/// The rates taking the states in registers: `(x0, x1, x2, x3, time, parameters, outputs)`
/// (states past the program's count are ignored).
type EntryInRegisters = extern "C" fn(f64, f64, f64, f64, f64, *const f64, *mut f64);

/// A program compiled to machine code: the function's address, the counts it reads and
/// writes, and a share in the memory holding the code. Cheap to clone (kernels keep a copy
/// inline, so a call is one load and an indirect call).
#[derive(Clone)]
pub(super) struct NativeCode {
    entry: Entry,
    /// The same function taking the states in registers (rates of at most
    /// [`MOST_STATES_IN_REGISTERS`] states only).
    in_registers: Option<(EntryInRegisters, Arc<Owner>)>,
    n_states: usize,
    n_parameters: usize,
    n_outputs: usize,
    /// Keeps the code mapped while any copy of `entry` exists (and tells copies apart).
    owner: Arc<Owner>,
}

/// The module owning the code's memory; frees it when the last [`NativeCode`] sharing it is
/// dropped. Only touched then (the mutex makes it shareable between threads).
struct Owner(Mutex<Option<JITModule>>);

impl Drop for Owner {
    fn drop(&mut self) {
        if let Some(module) = self.0.get_mut().ok().and_then(Option::take) {
            free(module);
        }
    }
}

impl NativeCode {
    /// Machine code for `instrs` with the given outputs; `None` if the host has no code
    /// generator or generation fails.
    pub(super) fn compile(
        instrs: &[Instr],
        outputs: &[u32],
        n_states: usize,
        n_parameters: usize,
    ) -> Option<Self> {
        let body = |g: &mut Gen<'_, '_>| {
            let values = g.values(instrs)?;
            for (k, &o) in outputs.iter().enumerate() {
                let v = values.get(o as usize).copied()?;
                g.store(v, k)?;
            }
            Some(())
        };
        let mut code = Self::build(instrs, outputs.len(), n_states, n_parameters, body)?;
        if n_states <= MOST_STATES_IN_REGISTERS {
            code.in_registers = Self::build_in_registers(body);
        }
        Some(code)
    }

    /// Machine code for the Jacobian of the outputs with respect to the states, row-major
    /// (`n_states` entries per output): forward-mode tangents pushed through the instructions
    /// exactly as [`super::tangent`] does (same coefficients, same skipping of zero
    /// tangents), but only along the states each value depends on.
    pub(super) fn compile_jacobian(
        instrs: &[Instr],
        outputs: &[u32],
        n_states: usize,
        n_parameters: usize,
    ) -> Option<Self> {
        let n_outputs = outputs.len().checked_mul(n_states)?;
        Self::build(instrs, n_outputs, n_states, n_parameters, |g| {
            let values = g.values(instrs)?;
            let tangents = tangents(g, instrs, &values, true, |g, i| {
                let one = g.b.ins().f64const(1.0);
                Some(Sparse::new(vec![(i, one)]))
            })?;
            let zero = g.b.ins().f64const(0.0);
            for (row, &o) in outputs.iter().enumerate() {
                let tangent = tangents.get(o as usize)?;
                for j in 0..n_states {
                    let v = tangent.get(j).unwrap_or(zero);
                    g.store(v, row * n_states + j)?;
                }
            }
            Some(())
        })
    }

    /// Machine code for the outputs and their derivatives along `m` given vectors, in one
    /// function: it reads `x` (`n_states` values) followed by the vectors `q_0 .. q_{m-1}`
    /// (`n_states` values each), and writes the outputs followed by `J q_0 .. J q_{m-1}`
    /// (one value per output each), `J` the Jacobian with respect to the states. Forward mode
    /// along the vectors: state `i` is seeded with `q_k[i]` along direction `k`, and the
    /// tangents go through the instructions by the rules of [`Self::compile_jacobian`]. The
    /// outputs are those of [`Self::compile`] bit for bit (the same values are emitted); the
    /// derivatives agree with the Jacobian times the vectors to rounding (summed in another
    /// order).
    ///
    /// The derivatives are first formed with plain sums of products; only where one of them
    /// is not finite (a coefficient that is, say, the infinite slope of a square root at
    /// zero, times a zero entry) are they formed again with the reference's rule that a zero
    /// entry in a sum is skipped, which costs a comparison and a choice for every product.
    /// Where the plain ones are finite, both are the same bit for bit (see
    /// [`super::native_tangent::tangents`]).
    pub(super) fn compile_directional(
        instrs: &[Instr],
        outputs: &[u32],
        n_states: usize,
        n_parameters: usize,
        m: usize,
    ) -> Option<Self> {
        let n_inputs = n_states.checked_mul(m.checked_add(1)?)?;
        let n_outputs = outputs.len().checked_mul(m.checked_add(1)?)?;
        let n_out = outputs.len();
        Self::build(instrs, n_outputs, n_inputs, n_parameters, |g| {
            let values = g.values(instrs)?;
            let mut seed = |g: &mut Gen<'_, '_>, i: u32| {
                let entries = (0..m)
                    .map(|k| {
                        let at = (k + 1).checked_mul(n_states)?.checked_add(i as usize)?;
                        Some((u32::try_from(k).ok()?, g.load_input(at)?))
                    })
                    .collect::<Option<Vec<_>>>()?;
                Some(Sparse::new(entries))
            };
            let zero = g.b.ins().f64const(0.0);
            let plain = tangents(g, instrs, &values, false, &mut seed)?;
            // v - v is zero for a finite value and NaN for any other: one sum to test
            let mut test = zero;
            for &o in outputs {
                let tangent = plain.get(o as usize)?;
                for k in 0..m {
                    if let Some(v) = tangent.get(k) {
                        let difference = g.b.ins().fsub(v, v);
                        test = g.b.ins().fadd(test, difference);
                    }
                }
            }
            let finite = g.b.ins().fcmp(FloatCC::Equal, test, zero);
            let store_plain = g.b.create_block();
            let again = g.b.create_block();
            g.b.ins().brif(finite, store_plain, &[], again, &[]);
            g.b.seal_block(store_plain);
            g.b.seal_block(again);
            let store = |g: &mut Gen<'_, '_>, tangents: &[Sparse]| -> Option<()> {
                for (row, &o) in outputs.iter().enumerate() {
                    let v = values.get(o as usize).copied()?;
                    g.store(v, row)?;
                    let tangent = tangents.get(o as usize)?;
                    for k in 0..m {
                        let v = tangent.get(k).unwrap_or(zero);
                        g.store(v, (k + 1) * n_out + row)?;
                    }
                }
                Some(())
            };
            g.b.switch_to_block(store_plain);
            store(g, &plain)?;
            g.b.ins().return_(&[]);
            g.b.switch_to_block(again);
            let careful = tangents(g, instrs, &values, true, &mut seed)?;
            store(g, &careful)
        })
    }

    /// Generates one function with `body` and makes it callable. A panic inside the code
    /// generator (a bug there, never expected) means no machine code rather than a crash: the
    /// closures evaluate the program instead.
    fn build(
        instrs: &[Instr],
        n_outputs: usize,
        n_states: usize,
        n_parameters: usize,
        body: impl FnOnce(&mut Gen<'_, '_>) -> Option<()>,
    ) -> Option<Self> {
        std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            Self::build_unguarded(instrs, n_outputs, n_states, n_parameters, body)
        }))
        .ok()
        .flatten()
    }

    /// The function of `body` taking the states in registers, in a module of its own.
    fn build_in_registers(
        body: impl FnOnce(&mut Gen<'_, '_>) -> Option<()>,
    ) -> Option<(EntryInRegisters, Arc<Owner>)> {
        std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            let (address, module) = generated(true, body)?;
            // SAFETY: as for `Entry` in `build_unguarded`, with the states in the first four
            // floating-point arguments: the function reads no states from memory, reads
            // `parameters[0..n_parameters]` and writes `outputs[0..n_outputs]` of the same
            // program, which `MachineCall::eval_small` checks before each call.
            #[allow(unsafe_code)]
            let entry = unsafe { std::mem::transmute::<*const u8, EntryInRegisters>(address) };
            Some((entry, Arc::new(Owner(Mutex::new(Some(module))))))
        }))
        .ok()
        .flatten()
    }

    /// [`NativeCode::build`] without the guard.
    fn build_unguarded(
        instrs: &[Instr],
        n_outputs: usize,
        n_states: usize,
        n_parameters: usize,
        body: impl FnOnce(&mut Gen<'_, '_>) -> Option<()>,
    ) -> Option<Self> {
        let (address, module) = generated(false, body)?;
        // SAFETY: `address` is the start of the function just generated with the signature
        // `(pointer, pointer, f64, pointer)` in the host's default calling convention, which is
        // the C convention of `Entry`. The function reads `states[0..n_states]` and
        // `parameters[0..n_parameters]` and writes `outputs[0..n_outputs]` only (the counts
        // below cover every index in the instructions, and `Gen::store` is given indices below
        // `n_outputs`), and `eval` checks the slice lengths before each call. The code stays
        // mapped as long as `module` lives: it goes into an `Owner` that every copy of the
        // pointer (every clone of the `NativeCode`) holds a share of.
        #[allow(unsafe_code)]
        let entry = unsafe { std::mem::transmute::<*const u8, Entry>(address) };
        let max_state = instrs.iter().filter_map(|i| match *i {
            Instr::State(k) => Some(k as usize + 1),
            _ => None,
        });
        let max_param = instrs.iter().filter_map(|i| match *i {
            Instr::Param(k) => Some(k as usize + 1),
            _ => None,
        });
        Some(Self {
            entry,
            in_registers: None,
            n_states: max_state.max().unwrap_or(0).max(n_states),
            n_parameters: max_param.max().unwrap_or(0).max(n_parameters),
            n_outputs,
            owner: Arc::new(Owner(Mutex::new(Some(module)))),
        })
    }

    /// Whether both copies share one piece of machine code.
    pub(super) fn same_code_as(&self, other: &Self) -> bool {
        Arc::ptr_eq(&self.owner, &other.owner)
    }

    /// The code with `parameters` as one call ([`MachineCall`]); `None` when `parameters` is
    /// shorter than the code reads.
    pub(super) fn call_with<'a>(&'a self, parameters: &'a [f64]) -> Option<MachineCall<'a>> {
        (parameters.len() >= self.n_parameters).then_some(MachineCall {
            entry: self.entry,
            in_registers: self.in_registers.as_ref().map(|(entry, _)| *entry),
            n_states: self.n_states,
            n_outputs: self.n_outputs,
            parameters,
        })
    }

    /// Evaluates every output into `out`. Returns `false` (and evaluates nothing) when a slice
    /// is shorter than the program needs.
    #[inline(always)]
    pub(super) fn eval(&self, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) -> bool {
        if x.len() < self.n_states || p.len() < self.n_parameters || out.len() < self.n_outputs {
            return false;
        }
        (self.entry)(x.as_ptr(), p.as_ptr(), t, out.as_mut_ptr());
        true
    }
}

/// A program's machine code with its parameter values, looked up and checked once, for a
/// caller that evaluates it many times in a row (the stages of a step): each evaluation is
/// then two length comparisons and one call, without going through the kernel (or the
/// tangent system) and its checks every time.
#[derive(Clone, Copy)]
pub struct MachineCall<'a> {
    entry: Entry,
    in_registers: Option<EntryInRegisters>,
    n_states: usize,
    n_outputs: usize,
    parameters: &'a [f64],
}

impl MachineCall<'_> {
    /// Evaluates every output at `(t, x)` into `out` (NaN in every output when `x` or `out`
    /// is shorter than the program needs), as the kernel it came from does.
    #[inline(always)]
    pub fn eval(&self, t: f64, x: &[f64], out: &mut [f64]) {
        if x.len() < self.n_states || out.len() < self.n_outputs {
            out.fill(f64::NAN);
            return;
        }
        (self.entry)(x.as_ptr(), self.parameters.as_ptr(), t, out.as_mut_ptr());
    }

    /// Whether [`MachineCall::eval_small`] takes `D` states in registers.
    pub fn takes_states_in_registers<const D: usize>(&self) -> bool {
        self.in_registers.is_some() && D <= MOST_STATES_IN_REGISTERS && self.n_states <= D
    }

    /// [`MachineCall::eval`] with the `D` states passed in registers where the code has that
    /// form (`D` at most [`MOST_STATES_IN_REGISTERS`]): a small model's stage then does not
    /// wait for its states to go through memory.
    #[inline(always)]
    pub fn eval_small<const D: usize>(&self, t: f64, x: [f64; D], out: &mut [f64]) {
        if let Some(entry) = self.in_registers
            && self.takes_states_in_registers::<D>()
            && out.len() >= self.n_outputs
        {
            // value by value: a copy through an array can become a wide load of narrow
            // stores, which waits for them
            let at = |i: usize| if i < D { x[i] } else { 0.0 };
            let p = self.parameters.as_ptr();
            entry(at(0), at(1), at(2), at(3), t, p, out.as_mut_ptr());
        } else {
            self.eval_small_by_memory(t, x, out);
        }
    }

    /// [`MachineCall::eval_small`] where the states cannot come in registers (kept out of
    /// line, so that the usual call does not keep the states in memory for it).
    #[cold]
    #[inline(never)]
    fn eval_small_by_memory<const D: usize>(&self, t: f64, x: [f64; D], out: &mut [f64]) {
        self.eval(t, &x, out);
    }
}

impl std::fmt::Debug for MachineCall<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("MachineCall")
            .field("n_states", &self.n_states)
            .field("n_outputs", &self.n_outputs)
            .finish_non_exhaustive()
    }
}

impl std::fmt::Debug for NativeCode {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("NativeCode")
            .field("n_states", &self.n_states)
            .field("n_parameters", &self.n_parameters)
            .field("n_outputs", &self.n_outputs)
            .finish_non_exhaustive()
    }
}

/// Releases the memory of `module`.
fn free(module: JITModule) {
    // SAFETY: called only when no pointer into the module's code survives: on a failed
    // generation (no pointer was taken) or when the last `NativeCode` sharing the `Owner` is
    // dropped (so no call can be running: a call borrows a `NativeCode`).
    #[allow(unsafe_code)]
    unsafe {
        module.free_memory();
    }
}

/// A module for the host, optimising for speed; `None` if the host is not supported.
fn new_module() -> Option<JITModule> {
    let mut flags = settings::builder();
    flags.set("opt_level", "speed").ok()?;
    // the generated functions are checked where the tests run (debug builds); a release
    // build skips the check, which took about an eighth of the time to make the code
    let verify = if cfg!(debug_assertions) {
        "true"
    } else {
        "false"
    };
    flags.set("enable_verifier", verify).ok()?;
    // long-range calls and absolute addresses, as the JIT needs (see `JITBuilder::with_flags`)
    flags.set("use_colocated_libcalls", "false").ok()?;
    flags.set("is_pic", "false").ok()?;
    let isa = cranelift_native::builder()
        .ok()?
        .finish(settings::Flags::new(flags))
        .ok()?;
    let mut builder = JITBuilder::with_isa(isa, default_libcall_names());
    for (name, address) in calls() {
        builder.symbol(name, address);
    }
    Some(JITModule::new(builder))
}

/// A new module holding the function of `body`, generated and made callable: the function's
/// address and the module; `None` if anything fails (the module is freed then).
fn generated(
    in_registers: bool,
    body: impl FnOnce(&mut Gen<'_, '_>) -> Option<()>,
) -> Option<(*const u8, JITModule)> {
    let mut module = new_module()?;
    let Some(id) = generate(&mut module, in_registers, body) else {
        free(module);
        return None;
    };
    if module.finalize_definitions().is_err() {
        free(module);
        return None;
    }
    let address = module.get_finalized_function(id);
    Some((address, module))
}

/// Declares and defines the entry function, its body written by `body`; `None` if something
/// does not fit.
fn generate(
    module: &mut JITModule,
    in_registers: bool,
    body: impl FnOnce(&mut Gen<'_, '_>) -> Option<()>,
) -> Option<cranelift_module::FuncId> {
    let config = module.target_config();
    let pointer = config.pointer_type();
    let mut signature = module.make_signature();
    if in_registers {
        for _ in 0..MOST_STATES_IN_REGISTERS + 1 {
            signature.params.push(AbiParam::new(F64));
        }
        signature.params.push(AbiParam::new(pointer));
        signature.params.push(AbiParam::new(pointer));
    } else {
        signature.params.push(AbiParam::new(pointer));
        signature.params.push(AbiParam::new(pointer));
        signature.params.push(AbiParam::new(F64));
        signature.params.push(AbiParam::new(pointer));
    }
    let id = module
        .declare_function("lamina_rates", Linkage::Local, &signature)
        .ok()?;
    let mut context = module.make_context();
    context.func.signature = signature;
    context.func.name = UserFuncName::user(0, id.as_u32());
    let mut builder_context = FunctionBuilderContext::new();
    {
        let mut b = FunctionBuilder::new(&mut context.func, &mut builder_context);
        let block = b.create_block();
        b.append_block_params_for_function_params(block);
        b.switch_to_block(block);
        b.seal_block(block);
        let params = b.block_params(block).to_vec();
        let (x, p, t, out, states) = if in_registers {
            let [x0, x1, x2, x3, t, p, out] = params[..] else {
                return None;
            };
            (p, p, t, out, vec![x0, x1, x2, x3])
        } else {
            let [x, p, t, out] = params[..] else {
                return None;
            };
            (x, p, t, out, Vec::new())
        };
        let mut g = Gen {
            module: &mut *module,
            b,
            calls: Vec::new(),
            x,
            p,
            t,
            out,
            states,
        };
        body(&mut g)?;
        let mut b = g.b;
        b.ins().return_(&[]);
        b.finalize(config);
    }
    module.define_function(id, &mut context).ok()?;
    module.clear_context(&mut context);
    Some(id)
}

/// The function being generated: its builder, its arguments and the functions it calls.
pub(super) struct Gen<'m, 'f> {
    module: &'m mut JITModule,
    /// The instruction builder.
    pub(super) b: FunctionBuilder<'f>,
    calls: Vec<(Call, FuncRef)>,
    x: Value,
    p: Value,
    t: Value,
    out: Value,
    /// The states when they come in registers (else they are loaded from `x`).
    states: Vec<Value>,
}

impl Gen<'_, '_> {
    /// Emits every instruction's value, in order.
    fn values(&mut self, instrs: &[Instr]) -> Option<Vec<Value>> {
        let flags = MemFlagsData::trusted();
        let mut values: Vec<Value> = Vec::with_capacity(instrs.len());
        for instr in instrs {
            let arg = |a: u32| values.get(a as usize).copied();
            let v = match *instr {
                Instr::Const(c) => self.b.ins().f64const(c),
                Instr::State(i) if !self.states.is_empty() => {
                    self.states.get(i as usize).copied()?
                }
                Instr::State(i) => self.b.ins().load(F64, flags, self.x, offset(i)?),
                Instr::Param(i) => self.b.ins().load(F64, flags, self.p, offset(i)?),
                Instr::Time => self.t,
                Instr::Neg(a) => self.b.ins().fneg(arg(a)?),
                Instr::Add(a, c) => self.b.ins().fadd(arg(a)?, arg(c)?),
                Instr::Sub(a, c) => self.b.ins().fsub(arg(a)?, arg(c)?),
                Instr::Mul(a, c) => self.b.ins().fmul(arg(a)?, arg(c)?),
                Instr::Div(a, c) => self.b.ins().fdiv(arg(a)?, arg(c)?),
                Instr::Rem(a, c) => self.call(Call::Rem, &[arg(a)?, arg(c)?])?,
                Instr::Pow(a, c) => self.call(Call::Pow, &[arg(a)?, arg(c)?])?,
                Instr::PowI(a, n) => self.powi(arg(a)?, n)?,
                Instr::F1(Func1::Sqrt, a) => self.b.ins().sqrt(arg(a)?),
                Instr::F1(Func1::Abs, a) => self.b.ins().fabs(arg(a)?),
                Instr::F1(func, a) => self.call(Call::F1(func), &[arg(a)?])?,
                Instr::F2(func, a, c) => self.call(Call::F2(func), &[arg(a)?, arg(c)?])?,
            };
            values.push(v);
        }
        Some(values)
    }

    /// Loads element `k` of the states argument.
    pub(super) fn load_input(&mut self, k: usize) -> Option<Value> {
        let at = offset(u32::try_from(k).ok()?)?;
        Some(self.b.ins().load(F64, MemFlagsData::trusted(), self.x, at))
    }

    /// `a^n` as the reference computes it (`f64::powi`).
    pub(super) fn powi(&mut self, a: Value, n: i32) -> Option<Value> {
        Some(match n {
            // what `powi` computes for these exponents, exactly
            1 => a,
            2 => self.b.ins().fmul(a, a),
            _ => {
                let n = self.b.ins().iconst(I32, i64::from(n));
                self.call(Call::PowI, &[a, n])?
            }
        })
    }

    /// Stores `v` as output `k`.
    fn store(&mut self, v: Value, k: usize) -> Option<()> {
        let at = offset(u32::try_from(k).ok()?)?;
        self.b.ins().store(MemFlagsData::trusted(), v, self.out, at);
        Some(())
    }

    /// Emits a call of `call` and returns its result, importing the function on first use.
    pub(super) fn call(&mut self, call: Call, args: &[Value]) -> Option<Value> {
        let f = match self.calls.iter().find(|(c, _)| *c == call) {
            Some(&(_, f)) => f,
            None => {
                let signature = call.signature(self.module);
                let id = self
                    .module
                    .declare_function(call.symbol(), Linkage::Import, &signature)
                    .ok()?;
                let f = self.module.declare_func_in_func(id, self.b.func);
                self.calls.push((call, f));
                f
            }
        };
        let inst = self.b.ins().call(f, args);
        self.b.inst_results(inst).first().copied()
    }
}

/// Byte offset of element `i` of an `f64` array.
fn offset(i: u32) -> Option<i32> {
    i32::try_from(u64::from(i) * 8).ok()
}
