//! An orbit branch's points measured: the multipliers from the monodromy matrix (restricted
//! to the plane across the flow for an autonomous model, so exactly the `n - 1` of its
//! return map), their test functions, the orbit's recorded points (crossings of the cut or
//! strobe samples) and the checks that end a branch (the orbit shrank, the period grew).

use super::shooting::{OrbitProblem, Recording, Timing};
use crate::branch::error::StepFailure;
use crate::branch::linear::{max_norm, multiply, norm};
use crate::branch::problem::{Layout, Measured, Problem, Tests};
use crate::branch::types::{Anchor, BranchPoint, EndReason, Spectrum};
use crate::cycle::linalg::{complement_basis, restrict};
use crate::cycle::{Multiplier, Verdict, multipliers};
use crate::integrate::Rates;

/// Relative distance from the cut within which a segment's start counts as on it.
const ON_CUT: f64 = 1e-10;

/// An orbit whose size falls below this fraction of `max(1, |x|)` has shrunk onto a resting
/// point.
const SHRUNK: f64 = 1e-4;

impl OrbitProblem {
    /// The monodromy matrix of the last evaluation: the segments' `Phi` multiplied in order.
    fn monodromy(&self) -> Vec<f64> {
        let n = self.n;
        let mut product = identity(n);
        for phi in &self.blocks {
            product = multiply(phi, &product, n);
        }
        product
    }

    /// The multipliers at `u` (last evaluated): the return map's `n - 1` for an autonomous
    /// model (the linearisation `(I - e e^T) M` restricted to the plane across the flow
    /// direction `e` at the first point), the strobe map's `n` for a forced one.
    fn multipliers_at(&mut self, u: &[f64]) -> Result<Vec<Multiplier>, StepFailure> {
        let n = self.n;
        let monodromy = self.monodromy();
        if !self.autonomous() {
            return multipliers(&monodromy, n).map_err(|_| StepFailure::Spectrum);
        }
        let mut flow = vec![0.0; n];
        self.model.rates(0.0, &u[..n], &mut flow);
        let speed = norm(&flow);
        if !(speed > 0.0 && speed.is_finite()) {
            return Err(StepFailure::NoFlow);
        }
        let e: Vec<f64> = flow.iter().map(|f| f / speed).collect();
        // (I - e e^T) M
        let mut projected = monodromy.clone();
        for c in 0..n {
            let along: f64 = (0..n).map(|r| e[r] * monodromy[r * n + c]).sum();
            for r in 0..n {
                projected[r * n + c] -= e[r] * along;
            }
        }
        let basis = complement_basis(&e);
        let restricted = restrict(&projected, &basis, n, n - 1);
        multipliers(&restricted, n - 1).map_err(|_| StepFailure::Spectrum)
    }

    /// The orbit's recorded points over one period in time order, and its size (the largest
    /// distance of an integrator step's end from the first point).
    fn record(&mut self, u: &[f64]) -> Result<(Vec<Vec<f64>>, f64), StepFailure> {
        let n = self.n;
        let m = self.segments;
        let schedule = self.schedule(u)?;
        let x1 = u[..n].to_vec();
        let mut points = Vec::new();
        let strobe = match &self.timing {
            Timing::Forced { first_at, .. } => {
                let k = self.returns();
                points.push(x1.clone());
                let period = schedule.tau * m as f64 / k as f64;
                Some((*first_at, period, k))
            }
            Timing::Autonomous => None,
        };
        let mut size = 0.0f64;
        let mut state = vec![0.0; n];
        for j in 0..m {
            let t0 = schedule.t0 + j as f64 * schedule.tau;
            let t_end = t0 + schedule.tau;
            let x0 = u[j * n..(j + 1) * n].to_vec();
            self.plain.reset(&mut self.model, t0, &x0);
            let parameters = self.model.parameters().to_vec();
            let mut g_previous = match &mut self.recording {
                Recording::Cut(cut) => {
                    let g = cut.value(t0, &x0, &parameters);
                    cut.gradient(t0, &x0, &parameters, &mut state);
                    // a start on the cut (to round-off) is not a crossing
                    if g.abs() <= ON_CUT * norm(&state) * max_norm(&x0).max(1.0) {
                        0.0
                    } else {
                        g
                    }
                }
                _ => 0.0,
            };
            while self.plain.t() < t_end {
                self.plain.step(&mut self.model, t_end)?;
                let x = self.plain.x();
                if x.iter().any(|v| v.abs() > self.escape) {
                    return Err(StepFailure::Escaped {
                        escape: self.escape,
                    });
                }
                size = size.max(distance(x, &x1));
                let segment = self.plain.segment();
                match &mut self.recording {
                    Recording::Cut(cut) => {
                        let g = cut.value(segment.t1(), x, &parameters);
                        if cut.direction.crosses(g_previous, g) {
                            cut.locate(
                                &segment.coeffs[..n],
                                &segment.coeffs[n..],
                                segment.t0,
                                segment.h,
                                g_previous,
                                g,
                                &parameters,
                                &mut state,
                            );
                            points.push(state.clone());
                        }
                        g_previous = g;
                    }
                    Recording::Strobe => {
                        if let Some((first_at, period, k)) = strobe {
                            for i in 1..k {
                                let ts = first_at + i as f64 * period;
                                if ts > segment.t0 && ts <= segment.t1() {
                                    segment.eval(ts, &mut state);
                                    points.push(state.clone());
                                }
                            }
                        }
                    }
                    Recording::Nothing => {}
                }
            }
        }
        Ok((points, size))
    }
}

impl Problem for OrbitProblem {
    fn n_unknowns(&self) -> usize {
        self.size()
    }

    fn weights(&self) -> &[f64] {
        &self.weights
    }

    fn tolerance(&self) -> f64 {
        self.tolerance
    }

    fn evaluate(
        &mut self,
        u: &[f64],
        reference: &[f64],
        residual: &mut [f64],
        jacobian: &mut [f64],
    ) -> Result<(), StepFailure> {
        self.shoot(u, reference, residual, jacobian)
    }

    fn measure(&mut self, u: &[f64], previous: Option<&[f64]>) -> Result<Measured, StepFailure> {
        let n = self.n;
        let size = self.size();
        // the last evaluation serves when it is of this layout and at most a Newton step
        // within the tolerance away (the corrector's last step, taken without a new
        // evaluation)
        let near = self.evaluated_at.len() == u.len()
            && self
                .evaluated_at
                .iter()
                .zip(u)
                .all(|(a, b)| (a - b).abs() <= 2.0 * self.tolerance * max_norm(u).max(1.0));
        if !near {
            let mut residual = vec![0.0; size - 1];
            let mut jacobian = vec![0.0; (size - 1) * size];
            self.shoot(u, u, &mut residual, &mut jacobian)?;
        }
        let p = u[size - 1];
        self.model.set_parameter(self.parameter, p);
        let values = self.multipliers_at(u)?;
        let verdict = Verdict::of(&values);
        let n_unstable = match verdict {
            Verdict::Unstable { n_unstable } => n_unstable,
            _ => 0,
        };
        let period = self.period(u)?;
        let (mut points, orbit_size) = self.record(u)?;
        if let Some(previous) = previous
            && !points.is_empty()
            && !matches!(self.recording, Recording::Strobe)
        {
            // continue the crossing nearest the previous point's
            let nearest = (0..points.len())
                .min_by(|&a, &b| {
                    distance(&points[a], previous).total_cmp(&distance(&points[b], previous))
                })
                .unwrap_or(0);
            points.rotate_left(nearest);
        }
        let state = points.first().cloned().unwrap_or_else(|| u[..n].to_vec());
        let scale = max_norm(&u[..n]).max(1.0);
        let end = if orbit_size <= SHRUNK * scale {
            Some(EndReason::OrbitShrank { value: p })
        } else if period > self.period_limit * self.start_period {
            Some(EndReason::PeriodGrew { value: p, period })
        } else {
            None
        };
        let tests = Tests {
            hopf: None,
            period_doubling: Some(period_doubling_test(&values)),
            torus: torus_test(&values),
        };
        Ok(Measured {
            point: BranchPoint {
                value: p,
                state,
                period: Some(period),
                points,
                stable: verdict.is_stable(),
                n_unstable,
                kind: None,
                spectrum: Spectrum::Multipliers(values),
                iterations: 0,
                arclength: 0.0,
            },
            tests,
            end,
        })
    }

    fn refine_layout(
        &mut self,
        u: &[f64],
        tangent: &[f64],
        force: bool,
    ) -> Result<Option<Layout>, StepFailure> {
        let m = self.segments;
        if m >= self.max_segments || self.evaluated_at.len() != u.len() {
            return Ok(None);
        }
        let growth = self
            .blocks
            .iter()
            .map(|phi| matrix_norm(phi, self.n))
            .fold(1.0f64, f64::max);
        let new_m = if force {
            2 * m
        } else if growth > self.growth_limit {
            m * (growth.ln() / self.growth_limit.ln()).ceil().max(2.0) as usize
        } else {
            return Ok(None);
        }
        .min(self.max_segments);
        self.relayout(u, tangent, new_m).map(Some)
    }

    fn anchor(&self, u: &[f64]) -> Anchor {
        Anchor {
            unknowns: u.to_vec(),
            segments: self.segments,
            returns: self.returns(),
        }
    }

    fn most_segments(&self) -> usize {
        self.most_segments
    }

    fn uses_differences(&self) -> bool {
        self.differences
    }
}

impl OrbitProblem {
    /// The unknowns `u` (in the current layout) in a layout of `new_m` segments: each new
    /// segment's start integrated from the old segment that contains it; the tangent guess
    /// keeps its first point, period and parameter parts.
    pub(super) fn relayout(
        &mut self,
        u: &[f64],
        tangent: &[f64],
        new_m: usize,
    ) -> Result<Layout, StepFailure> {
        let n = self.n;
        let m = self.segments;
        let old_size = self.size();
        let schedule = self.schedule(u)?;
        let period = schedule.tau * m as f64;
        let mut starts = Vec::with_capacity(n * new_m);
        for i in 0..new_m {
            let t_rel = period * i as f64 / new_m as f64;
            let j = ((t_rel / schedule.tau).floor() as usize).min(m - 1);
            let t0 = schedule.t0 + j as f64 * schedule.tau;
            let offset = t_rel - j as f64 * schedule.tau;
            let x0 = u[j * n..(j + 1) * n].to_vec();
            if offset > 0.0 {
                self.flow_plain(t0, &x0, offset)?;
                starts.extend_from_slice(self.plain.x());
            } else {
                starts.extend_from_slice(&x0);
            }
        }
        let mut new_u = starts;
        let mut new_tangent = vec![0.0; n * new_m];
        new_tangent[..n].copy_from_slice(&tangent[..n]);
        if self.autonomous() {
            new_u.push(u[n * m]);
            new_tangent.push(tangent[n * m]);
        }
        new_u.push(u[old_size - 1]);
        new_tangent.push(tangent[old_size - 1]);
        self.set_segments(new_m);
        Ok(Layout {
            unknowns: new_u,
            tangent: new_tangent,
        })
    }
}

/// `prod (m_i + 1)`, real: conjugate factors pair up.
fn period_doubling_test(values: &[Multiplier]) -> f64 {
    let (mut re, mut im) = (1.0f64, 0.0f64);
    for m in values {
        let (fr, fi) = (m.re + 1.0, m.im);
        (re, im) = (re * fr - im * fi, re * fi + im * fr);
    }
    re
}

/// `prod_{i<j} (m_i m_j - 1)`, real; `None` with fewer than two multipliers.
fn torus_test(values: &[Multiplier]) -> Option<f64> {
    if values.len() < 2 {
        return None;
    }
    let (mut re, mut im) = (1.0f64, 0.0f64);
    for (i, a) in values.iter().enumerate() {
        for b in &values[i + 1..] {
            let (fr, fi) = (a.re * b.re - a.im * b.im - 1.0, a.re * b.im + a.im * b.re);
            (re, im) = (re * fr - im * fi, re * fi + im * fr);
        }
    }
    Some(re)
}

/// The `n x n` identity, row-major.
fn identity(n: usize) -> Vec<f64> {
    let mut out = vec![0.0; n * n];
    for i in 0..n {
        out[i * n + i] = 1.0;
    }
    out
}

/// The largest row sum of magnitudes (the infinity norm).
fn matrix_norm(a: &[f64], n: usize) -> f64 {
    a.chunks_exact(n.max(1))
        .map(|row| row.iter().map(|v| v.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// Euclidean distance.
fn distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q) * (p - q))
        .sum::<f64>()
        .sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(re: f64, im: f64) -> Multiplier {
        Multiplier { re, im }
    }

    #[test]
    fn multiplier_tests_change_sign_where_they_should() {
        // [analytic] prod (m + 1) changes sign when a real multiplier passes -1
        assert!(period_doubling_test(&[m(-0.9, 0.0), m(0.1, 0.0)]) > 0.0);
        assert!(period_doubling_test(&[m(-1.1, 0.0), m(0.1, 0.0)]) < 0.0);
        // [analytic] a complex pair r e^(+-i a) gives m1 m2 - 1 = r^2 - 1
        let (c, s) = (0.3f64.cos(), 0.3f64.sin());
        let inside = torus_test(&[m(0.9 * c, 0.9 * s), m(0.9 * c, -0.9 * s)]).expect("pair");
        let outside = torus_test(&[m(1.1 * c, 1.1 * s), m(1.1 * c, -1.1 * s)]).expect("pair");
        assert!((inside - (0.81 - 1.0)).abs() < 1e-12 && (outside - 0.21).abs() < 1e-12);
        assert!(torus_test(&[m(0.5, 0.0)]).is_none());
    }
}
