//! Forward-mode derivatives: tangents pushed through the instruction list alongside the
//! values, several directions at once (the states, given vectors, a parameter or the time).

use super::instr::Instr;
use super::program::{Program, Scratch};

/// Which inputs carry a tangent.
#[derive(Clone, Copy)]
enum Seed<'a> {
    /// Direction `j` is state `j` (all states at once).
    States,
    /// Direction `k` is the vector `k` of these `m` vectors of `n_states` values each, one
    /// after another: state `i` carries `q_k[i]` along it.
    Vectors(&'a [f64], usize),
    /// One direction: parameter `idx`.
    Parameter(usize),
    /// One direction: the time.
    Time,
}

impl Program {
    /// Values and tangents for `n_dir` directions; tangent of slot `s`, direction `d` at
    /// `s * n_dir + d`.
    fn propagate(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        seed: Seed<'_>,
    ) -> usize {
        self.run(scratch, t, x, p);
        let n_dir = match seed {
            Seed::States => self.n_states(),
            Seed::Vectors(_, m) => m,
            Seed::Parameter(_) | Seed::Time => 1,
        };
        let Scratch {
            values, tangents, ..
        } = scratch;
        tangents.clear();
        tangents.resize(self.instrs.len() * n_dir, 0.0);
        for (idx, instr) in self.instrs.iter().enumerate() {
            let (out, before) = {
                let (before, rest) = tangents.split_at_mut(idx * n_dir);
                (&mut rest[..n_dir], before)
            };
            let tan = |slot: u32| &before[slot as usize * n_dir..(slot as usize + 1) * n_dir];
            let val = |slot: u32| values[slot as usize];
            match *instr {
                Instr::Const(_) => {}
                Instr::State(i) => match seed {
                    Seed::States => out[i as usize] = 1.0,
                    Seed::Vectors(vectors, _) => {
                        let n = self.n_states();
                        for (k, o) in out.iter_mut().enumerate() {
                            *o = vectors[k * n + i as usize];
                        }
                    }
                    Seed::Parameter(_) | Seed::Time => {}
                },
                Instr::Param(i) => {
                    if let Seed::Parameter(k) = seed
                        && k == i as usize
                    {
                        out[0] = 1.0;
                    }
                }
                Instr::Time => {
                    if let Seed::Time = seed {
                        out[0] = 1.0;
                    }
                }
                Instr::Neg(a) => combine1(out, tan(a), -1.0),
                Instr::Add(a, b) => combine2(out, tan(a), 1.0, tan(b), 1.0),
                Instr::Sub(a, b) => combine2(out, tan(a), 1.0, tan(b), -1.0),
                Instr::Mul(a, b) => combine2(out, tan(a), val(b), tan(b), val(a)),
                Instr::Div(a, b) => {
                    let inv = 1.0 / val(b);
                    combine2(out, tan(a), inv, tan(b), -values[idx] * inv)
                }
                Instr::Rem(a, b) => combine2(out, tan(a), 1.0, tan(b), -(val(a) / val(b)).trunc()),
                Instr::Pow(a, b) => {
                    let (base, exponent) = (val(a), val(b));
                    let da = exponent * base.powf(exponent - 1.0);
                    let tb = tan(b);
                    // the log term only where the exponent varies, so a^c stays defined for a <= 0
                    let db = if tb.iter().all(|&v| v == 0.0) {
                        0.0
                    } else {
                        values[idx] * base.ln()
                    };
                    combine2(out, tan(a), da, tb, db)
                }
                Instr::PowI(a, n) => {
                    let d = if n == 0 {
                        0.0
                    } else {
                        f64::from(n) * val(a).powi(n - 1)
                    };
                    combine1(out, tan(a), d)
                }
                Instr::F1(f, a) => combine1(out, tan(a), f.derivative(val(a), values[idx])),
                Instr::F2(f, a, b) => {
                    let (da, db) = f.derivatives(val(a), val(b));
                    combine2(out, tan(a), da, tan(b), db)
                }
            }
        }
        n_dir
    }

    /// Jacobian of the outputs with respect to the states at `(t, x)`, row-major:
    /// `out[i * n + j] = d output_i / d x_j`. The first calls of a program and its clones run
    /// [`Program::jacobian_reference`]; later ones run machine code (made once then) where the
    /// host has a code generator. Both give the same numbers bit for bit: making the code
    /// costs as much as some thousands of reference calls, so a caller that asks for a few
    /// Jacobians (a resting cell of a regime map) never pays for it.
    pub fn jacobian(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) {
        if self.jacobian_before_code() {
            self.jacobian_reference(scratch, t, x, p, out);
            return;
        }
        if let Some(code) = self.native_jacobian_code()
            && code.eval(t, x, p, out)
        {
            return;
        }
        self.jacobian_reference(scratch, t, x, p, out);
    }

    /// [`Program::jacobian`] by its machine code (made now if not yet), whatever the count of
    /// earlier calls; `false` (and nothing written) where the host has none. For comparing
    /// the two forms.
    pub fn jacobian_machine_code(&self, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) -> bool {
        self.native_jacobian_code()
            .is_some_and(|code| code.eval(t, x, p, out))
    }

    /// [`Program::jacobian`] by tangents pushed through the instruction list itself: the
    /// reference the machine code reproduces.
    pub fn jacobian_reference(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        out: &mut [f64],
    ) {
        let n = self.propagate(scratch, t, x, p, Seed::States);
        for (row, &slot) in self.outputs.iter().enumerate() {
            let s = slot as usize;
            out[row * n..(row + 1) * n].copy_from_slice(&scratch.tangents[s * n..(s + 1) * n]);
        }
    }

    /// The outputs and their derivatives along `m` vectors by tangents pushed through the
    /// instruction list itself: the reference the machine code of
    /// [`Program::directional_kernel`] reproduces bit for bit. `y` is the state (`n` values)
    /// followed by the vectors (`n` values each); `out` receives the outputs followed by
    /// `J q_0 .. J q_{m-1}` (one value per output each).
    pub fn directional_reference(
        &self,
        scratch: &mut Scratch,
        t: f64,
        y: &[f64],
        p: &[f64],
        m: usize,
        out: &mut [f64],
    ) {
        let n = self.n_states();
        let (x, vectors) = y.split_at(n);
        self.propagate(scratch, t, x, p, Seed::Vectors(&vectors[..n * m], m));
        let n_out = self.outputs.len();
        for (row, &slot) in self.outputs.iter().enumerate() {
            let s = slot as usize;
            out[row] = scratch.values[s];
            for k in 0..m {
                out[(k + 1) * n_out + row] = scratch.tangents[s * m + k];
            }
        }
    }

    /// Derivative of every output with respect to parameter `param_idx`.
    pub fn parameter_derivative(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        param_idx: usize,
        out: &mut [f64],
    ) {
        self.propagate(scratch, t, x, p, Seed::Parameter(param_idx));
        for (o, &slot) in out.iter_mut().zip(&self.outputs) {
            *o = scratch.tangents[slot as usize];
        }
    }

    /// Derivative of every output with respect to the time `t`.
    pub fn time_derivative(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        out: &mut [f64],
    ) {
        self.propagate(scratch, t, x, p, Seed::Time);
        for (o, &slot) in out.iter_mut().zip(&self.outputs) {
            *o = scratch.tangents[slot as usize];
        }
    }
}

#[inline]
fn combine1(out: &mut [f64], ta: &[f64], ca: f64) {
    for (o, &a) in out.iter_mut().zip(ta) {
        *o = if a != 0.0 { ca * a } else { 0.0 };
    }
}

#[inline]
fn combine2(out: &mut [f64], ta: &[f64], ca: f64, tb: &[f64], cb: f64) {
    for ((o, &a), &b) in out.iter_mut().zip(ta).zip(tb) {
        // skip zero tangents so that an infinite or NaN coefficient does not poison them
        let mut v = 0.0;
        if a != 0.0 {
            v += ca * a;
        }
        if b != 0.0 {
            v += cb * b;
        }
        *o = v;
    }
}
