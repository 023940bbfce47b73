//! How an orbit branch starts: from an orbit already found (its point, period and monodromy
//! matrix), from a Hopf point (the small orbit along the eigenvector of the pair on the
//! imaginary axis), or from a period doubling (the orbit run twice, pushed along the
//! eigenvector of the multiplier -1).

use super::shooting::{OrbitProblem, Timing};
use crate::branch::error::StepFailure;
use crate::branch::linear::{apply, multiply, norm, null_vector};
use crate::branch::types::Anchor;
use crate::cycle::CycleReport;
use crate::cycle::linalg::solve_least_norm;
use crate::integrate::Rates;

/// A periodic orbit to start a branch from.
#[derive(Clone, Debug, PartialEq)]
pub struct OrbitStart {
    /// The time of `state` (for a forced model a strobe time: the orbit is then held at the
    /// strobe's first time, which the forcing's period makes equivalent).
    pub t: f64,
    /// A point of the orbit (on the cut for an orbit of the cut map).
    pub state: Vec<f64>,
    /// The period: the total time of one round.
    pub period: f64,
    /// Strobe periods per period for a forced model (for an autonomous model the returns to
    /// the cut, for the record only).
    pub returns: usize,
    /// The monodromy matrix over the period (`n x n` row-major), if known: how strongly the
    /// orbit stretches decides how many shooting segments it needs.
    pub monodromy: Option<Vec<f64>>,
}

impl OrbitStart {
    /// The orbit of a periodic-orbit report ([`crate::cycle::find_cycle`]).
    pub fn from_report(report: &CycleReport) -> Self {
        Self {
            t: report.point.t,
            state: report.point.state.clone(),
            period: report.period,
            returns: report.k,
            monodromy: Some(report.monodromy.clone()),
        }
    }

    /// Shooting segments for this orbit: enough that no segment stretches a perturbation by
    /// more than `growth_limit`, at most `max_segments`.
    pub(crate) fn segments(&self, growth_limit: f64, max_segments: usize) -> usize {
        let n = self.state.len();
        let growth = self.monodromy.as_ref().map_or(1.0, |m| {
            m.chunks_exact(n.max(1))
                .map(|row| row.iter().map(|v| v.abs()).sum::<f64>())
                .fold(1.0, f64::max)
        });
        let needed = (growth.ln() / growth_limit.ln()).ceil();
        if needed.is_finite() && needed > 1.0 {
            (needed as usize).min(max_segments.max(1))
        } else {
            1
        }
    }
}

impl OrbitProblem {
    /// The unknowns of the orbit through `x1` with period `period` at parameter `p`: the
    /// further segments' starts integrated from it.
    pub(crate) fn unknowns_through(
        &mut self,
        x1: &[f64],
        period: f64,
        p: f64,
    ) -> Result<Vec<f64>, StepFailure> {
        let n = self.n;
        let m = self.segments;
        self.model.set_parameter(self.parameter, p);
        let mut u = vec![0.0; self.size()];
        u[..n].copy_from_slice(x1);
        if self.autonomous() {
            u[n * m] = period;
        }
        let last = u.len() - 1;
        u[last] = p;
        let schedule = self.schedule(&u)?;
        for j in 1..m {
            let x0 = u[(j - 1) * n..j * n].to_vec();
            self.flow_plain(
                schedule.t0 + (j - 1) as f64 * schedule.tau,
                &x0,
                schedule.tau,
            )?;
            u[j * n..(j + 1) * n].copy_from_slice(self.plain.x());
        }
        Ok(u)
    }

    /// The degenerate start at a Hopf point `(x_star, p_star)` with angular frequency
    /// `omega`: the resting point held as an orbit of period `2 pi / omega`, the tangent
    /// along the small orbits `Re(q e^(i omega t))` (`q` the eigenvector of `i omega`, turned so
    /// that its real part is longest, scaled to length 1 there), and the first step's normal:
    /// that tangent made orthogonal to the resting branch.
    pub(crate) fn hopf_start(
        &mut self,
        x_star: &[f64],
        p_star: f64,
        omega: f64,
    ) -> Result<Born, StepFailure> {
        let n = self.n;
        let m = self.segments;
        self.model.set_parameter(self.parameter, p_star);
        let mut jacobian = vec![0.0; n * n];
        self.model.jacobian(0.0, x_star, &mut jacobian);
        // [[J, omega I], [-omega I, J]] (q_r, q_i) = 0
        let size = 2 * n;
        let mut a = vec![0.0; size * size];
        for i in 0..n {
            for j in 0..n {
                a[i * size + j] = jacobian[i * n + j];
                a[(n + i) * size + n + j] = jacobian[i * n + j];
            }
            a[i * size + n + i] = omega;
            a[(n + i) * size + i] = -omega;
        }
        let q = null_vector(&a, size, size).ok_or(StepFailure::Singular)?;
        let (q_r, q_i) = q.split_at(n);
        let rr: f64 = q_r.iter().map(|v| v * v).sum();
        let ii: f64 = q_i.iter().map(|v| v * v).sum();
        let ri: f64 = q_r.iter().zip(q_i).map(|(a, b)| a * b).sum();
        let theta = 0.5 * (-2.0 * ri).atan2(rr - ii);
        let (c, s) = (theta.cos(), theta.sin());
        let real: Vec<f64> = q_r.iter().zip(q_i).map(|(r, i)| r * c - i * s).collect();
        let imaginary: Vec<f64> = q_r.iter().zip(q_i).map(|(r, i)| r * s + i * c).collect();
        let length = norm(&real);
        if length.is_nan() || length <= 0.0 {
            return Err(StepFailure::Singular);
        }
        let period = std::f64::consts::TAU / omega;
        let mut u = Vec::with_capacity(self.size());
        let mut tangent = Vec::with_capacity(self.size());
        for j in 0..m {
            let phase = omega * period * j as f64 / m as f64;
            u.extend_from_slice(x_star);
            tangent.extend(
                real.iter()
                    .zip(&imaginary)
                    .map(|(r, i)| (r * phase.cos() - i * phase.sin()) / length),
            );
        }
        if self.autonomous() {
            u.push(period);
            tangent.push(0.0);
        }
        u.push(p_star);
        tangent.push(0.0);
        // the resting branch through the point: x*'(p) = -J^-1 f_p in every segment, period
        // free, parameter 1
        let mut derivative = vec![0.0; n];
        self.model
            .parameter_derivative(0.0, x_star, self.parameter, &mut derivative);
        let minus: Vec<f64> = derivative.iter().map(|v| -v).collect();
        let (slope, _) = solve_least_norm(&jacobian, n, &minus).ok_or(StepFailure::Singular)?;
        let mut resting = Vec::with_capacity(self.size());
        for _ in 0..m {
            resting.extend_from_slice(&slope);
        }
        if self.autonomous() {
            resting.push(0.0);
        }
        resting.push(1.0);
        let normal = orthogonal_normal(&self.weights, &tangent, &resting);
        Ok(Born {
            problem: self.clone(),
            start: u,
            tangent,
            normal,
        })
    }

    /// The problem of the doubled orbit at the period doubling held by `anchor` (made by a
    /// problem like this one), its degenerate start (the orbit run twice) and the tangent
    /// along the doubled orbits (the eigenvector of the multiplier -1 carried around).
    pub(crate) fn doubled_start(&self, anchor: &Anchor) -> Result<Born, StepFailure> {
        let n = self.n;
        let m = anchor.segments;
        let mut base = self.clone();
        base.set_returns(anchor.returns);
        base.set_segments(m);
        if anchor.unknowns.len() != base.size() {
            return Err(StepFailure::Singular);
        }
        let u = &anchor.unknowns;
        let size = base.size();
        let mut residual = vec![0.0; size - 1];
        let mut jacobian = vec![0.0; (size - 1) * size];
        base.shoot(u, u, &mut residual, &mut jacobian)?;
        let blocks = base.blocks.clone();
        let single = null_vector(&jacobian, size - 1, size).ok_or(StepFailure::Singular)?;
        let mut monodromy_plus_one = monodromy_of(&blocks, n);
        for i in 0..n {
            monodromy_plus_one[i * n + i] += 1.0;
        }
        let w = null_vector(&monodromy_plus_one, n, n).ok_or(StepFailure::Singular)?;
        let mut doubled = base.clone();
        let period = base.period(u)?;
        doubled.set_returns(2 * anchor.returns);
        doubled.set_segments(2 * m);
        doubled.start_period = 2.0 * period;
        let mut start = Vec::with_capacity(doubled.size());
        let mut tangent = Vec::with_capacity(doubled.size());
        // the branch of the orbit run once, in the doubled layout
        let mut once = Vec::with_capacity(doubled.size());
        let mut delta = w;
        for j in 0..2 * m {
            start.extend_from_slice(&u[(j % m) * n..(j % m + 1) * n]);
            tangent.extend_from_slice(&delta);
            once.extend_from_slice(&single[(j % m) * n..(j % m + 1) * n]);
            delta = apply(&blocks[j % m], &delta);
        }
        if doubled.autonomous() {
            // shift along the flow so that the first point's change is across the flow (the
            // phase condition's direction): add alpha f(x_j) to every segment's change
            let mut flows = Vec::with_capacity(n * 2 * m);
            let mut f = vec![0.0; n];
            for j in 0..2 * m {
                doubled.model.rates(0.0, &start[j * n..(j + 1) * n], &mut f);
                flows.extend_from_slice(&f);
            }
            let along: f64 = flows[..n]
                .iter()
                .zip(&tangent[..n])
                .map(|(a, b)| a * b)
                .sum();
            let speed: f64 = flows[..n].iter().map(|a| a * a).sum();
            if speed > 0.0 {
                for (t, f) in tangent.iter_mut().zip(&flows) {
                    *t -= along / speed * f;
                }
            }
            let length = norm(&tangent[..n]);
            if length > 0.0 {
                for t in &mut tangent {
                    *t /= length;
                }
            }
            start.push(2.0 * period);
            tangent.push(0.0);
            once.push(2.0 * single[n * m]);
        }
        start.push(u[size - 1]);
        tangent.push(0.0);
        once.push(single[size - 1]);
        let normal = orthogonal_normal(&doubled.weights, &tangent, &once);
        Ok(Born {
            problem: doubled,
            start,
            tangent,
            normal,
        })
    }

    /// Sets the strobe periods per orbit period (forced models).
    pub(super) fn set_returns(&mut self, k: usize) {
        if let Timing::Forced { returns, .. } = &mut self.timing {
            *returns = k.max(1);
        }
    }
}

/// The start of a branch born at a special point.
pub(crate) struct Born {
    /// The problem of the born orbits.
    pub(crate) problem: OrbitProblem,
    /// The special point as unknowns of that problem.
    pub(crate) start: Vec<f64>,
    /// The unit tangent along the born branch.
    pub(crate) tangent: Vec<f64>,
    /// The first step's normal: `W tangent` made orthogonal to the branch it is born from.
    pub(crate) normal: Vec<f64>,
}

/// `W (d - beta other)` with `beta` making it orthogonal to `other`: a bordering row that
/// holds the step along `d` but not along `other`.
fn orthogonal_normal(weights: &[f64], d: &[f64], other: &[f64]) -> Vec<f64> {
    let dot = |a: &[f64], b: &[f64]| -> f64 {
        a.iter()
            .zip(b)
            .zip(weights)
            .map(|((x, y), w)| x * y * w)
            .sum()
    };
    let size = dot(other, other);
    let beta = if size > 0.0 {
        dot(d, other) / size
    } else {
        0.0
    };
    d.iter()
        .zip(other)
        .zip(weights)
        .map(|((a, b), w)| w * (a - beta * b))
        .collect()
}

/// The product of the segments' `Phi` in order (the monodromy matrix).
fn monodromy_of(blocks: &[Vec<f64>], n: usize) -> Vec<f64> {
    let mut product = vec![0.0; n * n];
    for i in 0..n {
        product[i * n + i] = 1.0;
    }
    for phi in blocks {
        product = multiply(phi, &product, n);
    }
    product
}
