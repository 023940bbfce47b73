//! The outputs of a program together with their derivatives along given vectors (`J q` for
//! each vector `q`, `J` the Jacobian with respect to the states), from one call of machine
//! code: what the variational equations need at every step.

use super::native::NativeCode;
use super::program::Program;

/// Machine code evaluating a program's outputs `f(t, x)` and the directional derivatives
/// `J(t, x) q_k` for `m` vectors in one call (forward mode along the vectors). Made once per
/// program and `m`, and shared by every clone of the program; cheap to clone.
#[derive(Clone, Debug)]
pub struct DirectionalKernel {
    code: NativeCode,
    m: usize,
}

impl Program {
    /// The kernel for `m` vectors, made on the first call for this `m` (by this program or any
    /// clone of it) and shared after; `None` where the host has no code generator or
    /// generation failed (use [`Program::eval`] and [`Program::jacobian`] then).
    pub fn directional_kernel(&self, m: usize) -> Option<DirectionalKernel> {
        self.native_directional_code(m)
            .map(|code| DirectionalKernel { code, m })
    }
}

impl DirectionalKernel {
    /// Number of vectors `m`.
    pub fn n_vectors(&self) -> usize {
        self.m
    }

    /// Whether both kernels run the same machine code (made once, then shared).
    pub fn shares_code_with(&self, other: &Self) -> bool {
        self.code.same_code_as(&other.code)
    }

    /// Evaluates at time `t` with parameters `p`, where `y` is the state `x` (n values)
    /// followed by the vectors `q_0 .. q_{m-1}` (n values each): writes the outputs followed by
    /// `J q_0 .. J q_{m-1}` (one value per output each) into `out`. The outputs are those of
    /// [`Program::eval_reference`] bit for bit; the derivatives are those of the forward-mode
    /// Jacobian ([`Program::jacobian`], with its rules for zero tangents and jumps) times the
    /// vectors, to rounding. Returns `false` (and evaluates nothing) when a slice is shorter
    /// than that.
    #[inline(always)]
    pub fn eval(&self, t: f64, y: &[f64], p: &[f64], out: &mut [f64]) -> bool {
        self.code.eval(t, y, p, out)
    }
}
