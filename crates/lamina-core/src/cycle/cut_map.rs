//! The cut map's part of [`FlowMap`]: following the orbit to its k-th crossing of the cut,
//! locating each crossing on the dense output, and the linearised cut map with the correction
//! for the varying return time.

use super::CycleError;
use super::flow_map::{FlowMap, GRAZING, MapImage, MapKind, MapPoint, ON_CUT, flow_rates, norm};
use crate::integrate::Rates;
use crate::run::graze::{self, Bracket};

impl FlowMap {
    /// The k-th crossing of the cut after the seed, with the linearised cut map.
    pub(super) fn cut_returns(
        &mut self,
        seed: &MapPoint,
        k: usize,
    ) -> Result<MapImage, CycleError> {
        let max_return_time = self.settings.max_return_time;
        let mut g_prev = self.cut_value(seed.t, &seed.state);
        let on_cut =
            ON_CUT * norm(&self.gradient).max(f64::MIN_POSITIVE) * norm(&seed.state).max(1.0);
        if g_prev.abs() <= on_cut {
            // a start on the surface is not a crossing
            g_prev = 0.0;
        }
        let mut orbit: Vec<MapPoint> = Vec::with_capacity(k);
        let mut t_last = seed.t;
        let mut slope_prev = self.end_slope()?;
        loop {
            let t_limit = t_last + max_return_time;
            if self.integrator.t() >= t_limit {
                return Err(CycleError::LostCrossing {
                    found: orbit.len(),
                    k,
                    t: t_last,
                    max_return_time,
                });
            }
            self.step(t_limit)?;
            let mut g1 = self.end_value();
            let mut slope = self.end_slope()?;
            // a pair of crossings inside the step (a cut near the edge of the orbit) shows in
            // the screen of run::graze on g and dg/dt at the step's ends
            let h = self.integrator.segment().h;
            let mut turns = graze::screen(g_prev, g1, h * slope_prev, h * slope, graze::REACH);
            let mut crosses = self.crosses(g_prev, g1);
            // the crossing is located on the dense output; a stiff step too long for its
            // interpolant is shortened first, and the crossing may then lie beyond it
            if (crosses || !turns.is_empty()) && self.accurate_dense()? {
                g1 = self.end_value();
                slope = self.end_slope()?;
                let h = self.integrator.segment().h;
                turns = graze::screen(g_prev, g1, h * slope_prev, h * slope, graze::REACH);
                crosses = self.crosses(g_prev, g1);
            }
            let mut brackets = [Bracket {
                a: 0.0,
                b: 1.0,
                ga: g_prev,
                gb: g1,
            }; 3];
            let n_brackets = if turns.is_empty() {
                usize::from(crosses)
            } else {
                self.inside_brackets(g_prev, g1, &turns, &mut brackets)
            };
            for bracket in &brackets[..n_brackets] {
                if !self.crosses(bracket.ga, bracket.gb) {
                    continue;
                }
                let tc = self.locate_crossing(bracket);
                self.check_transversal(tc)?;
                orbit.push(MapPoint {
                    t: tc,
                    state: self.x_cross.clone(),
                });
                t_last = tc;
                if orbit.len() == k {
                    return Ok(self.cut_image(seed.t, tc, orbit));
                }
            }
            g_prev = g1;
            slope_prev = slope;
        }
    }

    /// `dg/dt` of the cut at the end of the last step, from the rates the next step starts
    /// with (no evaluation after a step).
    fn end_slope(&mut self) -> Result<f64, CycleError> {
        let n = self.n;
        let mut rates = flow_rates(&mut self.switched, &mut self.model, self.with_matrix);
        let f = self.integrator.rates_here(&mut rates)?;
        self.rates.copy_from_slice(&f[..n]);
        let t1 = self.integrator.t();
        self.x_start.copy_from_slice(&self.integrator.x()[..n]);
        let MapKind::Cut(cut) = &mut self.kind else {
            return Ok(0.0);
        };
        Ok(cut.slope(t1, &self.x_start, &self.rates, self.model.parameters()))
    }

    /// The pieces of the last step on which the cut's value changes sign, given the extrema
    /// `turns` of its Hermite interpolant.
    fn inside_brackets(
        &mut self,
        g0: f64,
        g1: f64,
        turns: &graze::Turns,
        out: &mut [Bracket; 3],
    ) -> usize {
        self.split_terms();
        let segment = self.integrator.segment();
        let (t0, h) = (segment.t0, segment.h);
        let MapKind::Cut(cut) = &mut self.kind else {
            return 0;
        };
        cut.brackets(
            &self.x_start,
            &self.x_terms,
            t0,
            h,
            g0,
            g1,
            turns,
            self.model.parameters(),
            &mut self.x_cross,
            out,
        )
    }

    /// The dense output of the states alone (without the variational matrix) into
    /// `x_start` and `x_terms`.
    fn split_terms(&mut self) {
        let n = self.n;
        let segment = self.integrator.segment();
        let dim = segment.dim;
        let n_terms = segment.n_terms();
        self.x_terms.clear();
        for term in 1..n_terms {
            self.x_terms
                .extend_from_slice(&segment.coeffs[term * dim..term * dim + n]);
        }
        self.x_start.copy_from_slice(&segment.coeffs[..n]);
    }

    /// The cut's value at the end of the last step.
    fn end_value(&mut self) -> f64 {
        let n = self.n;
        let t1 = self.integrator.t();
        self.x_start.copy_from_slice(&self.integrator.x()[..n]);
        let x1 = std::mem::take(&mut self.x_start);
        let g1 = self.cut_value(t1, &x1);
        self.x_start = x1;
        g1
    }

    /// Whether the cut's value going from `g0` to `g1` is a crossing of the cut's direction.
    fn crosses(&self, g0: f64, g1: f64) -> bool {
        match &self.kind {
            MapKind::Cut(cut) => cut.direction.crosses(g0, g1),
            MapKind::Strobe(_) => false,
        }
    }

    fn cut_value(&mut self, t: f64, x: &[f64]) -> f64 {
        let MapKind::Cut(cut) = &mut self.kind else {
            return f64::NAN;
        };
        let parameters = self.model.parameters();
        cut.gradient(t, x, parameters, &mut self.gradient);
        cut.value(t, x, parameters)
    }

    /// Locates the crossing inside the piece `bracket` of the last step on the dense output
    /// of the states alone and evaluates the whole augmented state there (into `x_cross` and
    /// `z_cross`).
    fn locate_crossing(&mut self, bracket: &Bracket) -> f64 {
        let n = self.n;
        self.split_terms();
        let segment = self.integrator.segment();
        let dim = segment.dim;
        let (t0, h) = (segment.t0, segment.h);
        self.z_cross.resize(dim, 0.0);
        let whole_step = bracket.a == 0.0 && bracket.b == 1.0;
        let parameters = self.model.parameters();
        let tc = match &mut self.kind {
            MapKind::Cut(cut) if whole_step => cut.locate(
                &self.x_start,
                &self.x_terms,
                t0,
                h,
                bracket.ga,
                bracket.gb,
                parameters,
                &mut self.x_cross,
            ),
            MapKind::Cut(cut) => cut.locate_in(
                &self.x_start,
                &self.x_terms,
                t0,
                h,
                bracket,
                parameters,
                &mut self.x_cross,
            ),
            MapKind::Strobe(_) => t0 + h,
        };
        let segment = self.integrator.segment();
        segment.eval(tc, &mut self.z_cross);
        // the state from the located root, so the point lies on the surface to round-off
        self.z_cross[..n].copy_from_slice(&self.x_cross);
        tc
    }

    /// Fails when the flow at the crossing is (nearly) tangent to the surface.
    fn check_transversal(&mut self, tc: f64) -> Result<(), CycleError> {
        let x = std::mem::take(&mut self.x_cross);
        self.cut_value(tc, &x);
        self.model.rates(tc, &x, &mut self.rates);
        self.x_cross = x;
        let slope: f64 = self
            .gradient
            .iter()
            .zip(&self.rates)
            .map(|(g, f)| g * f)
            .sum();
        if slope.abs() <= GRAZING * norm(&self.gradient) * norm(&self.rates) || !slope.is_finite() {
            return Err(CycleError::Tangent { t: tc });
        }
        Ok(())
    }

    /// The image at the crossing just located: `Phi` there and `Q Phi` with
    /// `Q = I - f grad g^T / (grad g . f)` (`gradient` and `rates` hold the values at the
    /// crossing, from [`FlowMap::check_transversal`]).
    fn cut_image(&self, t_start: f64, tc: f64, orbit: Vec<MapPoint>) -> MapImage {
        let n = self.n;
        let phi = &self.z_cross[n..];
        let f = &self.rates;
        let g = &self.gradient;
        let slope: f64 = g.iter().zip(f).map(|(a, b)| a * b).sum();
        // grad g^T Phi, a row
        let mut row = vec![0.0; n];
        for (gi, phi_row) in g.iter().zip(phi.chunks_exact(n)) {
            for (r, &p) in row.iter_mut().zip(phi_row) {
                *r += gi * p;
            }
        }
        let mut jacobian = phi.to_vec();
        for (i, out_row) in jacobian.chunks_exact_mut(n).enumerate() {
            let c = f[i] / slope;
            for (o, &r) in out_row.iter_mut().zip(&row) {
                *o -= c * r;
            }
        }
        MapImage {
            t_start,
            t: tc,
            state: self.x_cross.clone(),
            monodromy: phi.to_vec(),
            jacobian,
            orbit,
        }
    }
}
