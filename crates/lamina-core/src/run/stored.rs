//! The stored run: accepted steps with their dense output, for re-slicing without
//! integrating again.

use std::ops::ControlFlow;

use super::graze::{self, Bracket};
use super::plane_scan;
use super::{Cut, CutPoint, Strobe, StrobeSample};
use crate::integrate::DenseSegment;
use crate::integrate::dense::eval_split;

/// Crossings located together in a re-slice by a plane.
const BATCH: usize = 128;

/// Accepted steps of a run with their dense-output coefficients.
///
/// Start states are kept contiguously apart from the other interpolation terms, so that a
/// moved cut is re-sliced by one pass over the start states (a dot product per step for a
/// plane) and a root search only in the few steps where the sign changes.
#[derive(Clone, Debug, Default)]
pub struct StoredRun {
    dim: usize,
    n_rest_terms: usize,
    t0: Vec<f64>,
    h: Vec<f64>,
    starts: Vec<f64>,
    terms: Vec<f64>,
    end_state: Vec<f64>,
    budget_steps: usize,
    truncated_at: Option<f64>,
    window: (f64, f64),
}

impl StoredRun {
    /// An empty store for a run that records over `window = (t_record, t_end)`, keeping at
    /// most `budget_bytes` of step data.
    pub fn new(dim: usize, window: (f64, f64), budget_bytes: usize) -> Self {
        Self {
            dim,
            window,
            budget_steps: budget_bytes,
            ..Self::default()
        }
    }

    /// Appends one accepted step whose end state is `end` (the integrator's state, so that
    /// re-slicing sees exactly the values the live run saw). Returns false once the memory
    /// budget is used up (the step is then not stored).
    pub fn push(&mut self, segment: &DenseSegment, end: &[f64]) -> bool {
        if self.truncated_at.is_some() {
            return false;
        }
        if self.t0.is_empty() {
            self.n_rest_terms = segment.n_terms().saturating_sub(1);
            let bytes_per_step = 8 * (2 + self.dim * (1 + self.n_rest_terms));
            self.budget_steps /= bytes_per_step.max(1);
        }
        if self.t0.len() >= self.budget_steps {
            self.truncated_at = Some(segment.t0);
            return false;
        }
        self.t0.push(segment.t0);
        self.h.push(segment.h);
        self.starts.extend_from_slice(&segment.coeffs[..self.dim]);
        self.terms.extend_from_slice(&segment.coeffs[self.dim..]);
        self.end_state.clear();
        self.end_state.extend_from_slice(end);
        true
    }

    /// Number of stored steps.
    pub fn n_steps(&self) -> usize {
        self.t0.len()
    }

    /// Number of states.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Bytes held by the step data.
    pub fn bytes(&self) -> usize {
        8 * (self.t0.len() * 2 + self.starts.len() + self.terms.len() + self.end_state.len())
    }

    /// The recorded window `(t_record, t_end)`.
    pub fn window(&self) -> (f64, f64) {
        self.window
    }

    /// Sets the end of the recorded window (a continued run records further).
    pub fn extend_window(&mut self, t_end: f64) {
        self.window.1 = t_end;
    }

    /// Time where storing stopped for lack of memory, if it did.
    pub fn truncated_at(&self) -> Option<f64> {
        self.truncated_at
    }

    /// Start state of step `idx`.
    pub fn start_state(&self, idx: usize) -> &[f64] {
        &self.starts[idx * self.dim..(idx + 1) * self.dim]
    }

    /// Start time of step `idx`.
    pub fn step_start_time(&self, idx: usize) -> f64 {
        self.t0[idx]
    }

    /// End state of step `idx` (the start of the next one, or the final state).
    pub fn end_state(&self, idx: usize) -> &[f64] {
        if idx + 1 < self.t0.len() {
            self.start_state(idx + 1)
        } else {
            &self.end_state
        }
    }

    /// Time and state at the end of the stored data.
    pub fn last(&self) -> Option<(f64, &[f64])> {
        let idx = self.t0.len().checked_sub(1)?;
        Some((self.t0[idx] + self.h[idx], &self.end_state))
    }

    fn step_terms(&self, idx: usize) -> &[f64] {
        let len = self.dim * self.n_rest_terms;
        &self.terms[idx * len..(idx + 1) * len]
    }

    /// Interpolated state at time `t` (inside the stored steps) into `out`; false outside.
    pub fn state_at(&self, t: f64, out: &mut [f64]) -> bool {
        let idx = self.t0.partition_point(|&t0| t0 <= t);
        let Some(idx) = idx.checked_sub(1) else {
            return false;
        };
        if t > self.t0[idx] + self.h[idx] {
            return false;
        }
        let s = (t - self.t0[idx]) / self.h[idx];
        eval_split(
            self.start_state(idx),
            self.step_terms(idx),
            self.dim,
            s,
            out,
        );
        true
    }

    /// Cuts the stored steps with `cut` inside the recorded window, reporting each crossing
    /// to `each` in time order. `parameters` are the model's values (for level surfaces).
    /// The result is exactly what a fresh run with this cut records.
    ///
    /// A plane is scanned in one tight pass over the contiguous start states (a dot product
    /// per step, no dispatch), and the root search runs only in the steps where the sign
    /// changes.
    pub fn reslice(
        &self,
        cut: &mut Cut,
        parameters: &[f64],
        mut each: impl FnMut(&CutPoint) -> ControlFlow<()>,
    ) {
        let mut point = CutPoint {
            t: 0.0,
            return_time: None,
            state: vec![0.0; self.dim],
        };
        let mut last_t: Option<f64> = None;
        let (t_record, t_end) = self.window;
        let mut emit = |t: f64, state: &[f64]| {
            if t < t_record || t > t_end {
                return ControlFlow::Continue(());
            }
            point.t = t;
            point.return_time = last_t.map(|last| t - last);
            last_t = Some(t);
            point.state.copy_from_slice(state);
            each(&point)
        };
        if cut.as_plane(parameters).is_some() {
            self.reslice_plane(cut, parameters, &mut emit);
            return;
        }
        let Some(mut g0) = self
            .t0
            .first()
            .map(|&t| cut.value(t, self.start_state(0), parameters))
        else {
            return;
        };
        let mut state = vec![0.0; self.dim];
        // a step is examined one step late, once it is known whether g turns at its end
        let mut pending: Option<(usize, f64, f64, bool)> = None;
        let mut d_before = f64::NAN;
        for idx in 0..=self.t0.len() {
            let next = self.t0.get(idx).map(|&t0| {
                let g1 = cut.value(t0 + self.h[idx], self.end_state(idx), parameters);
                (g1, g1 - g0)
            });
            let turn = match next {
                Some((_, d)) => !d_before.is_nan() && graze::turn_near_zero(g0, d_before, d),
                None => false,
            };
            if let Some((p_idx, p_g0, p_g1, wanted)) = pending
                && (wanted || turn)
                && self
                    .examine(cut, p_idx, p_g0, p_g1, parameters, &mut state, &mut emit)
                    .is_break()
            {
                return;
            }
            let Some((g1, d)) = next else {
                break;
            };
            pending = Some((idx, g0, g1, turn || cut.direction.crosses(g0, g1)));
            d_before = d;
            g0 = g1;
        }
    }

    /// The crossings of `cut` inside step `idx` (with the cut's values `g0`, `g1` at its
    /// ends), in time order, to `emit`: the one its ends show, or those the screen of
    /// [`graze`] finds on the dense output.
    #[allow(clippy::too_many_arguments)]
    fn examine(
        &self,
        cut: &mut Cut,
        idx: usize,
        g0: f64,
        g1: f64,
        parameters: &[f64],
        state: &mut [f64],
        emit: &mut impl FnMut(f64, &[f64]) -> ControlFlow<()>,
    ) -> ControlFlow<()> {
        let (start, terms) = (self.start_state(idx), self.step_terms(idx));
        let (t0, h) = (self.t0[idx], self.h[idx]);
        let turns = cut.turns_on_step(start, terms, t0, h, g0, g1, parameters, state);
        if turns.is_empty() {
            if cut.direction.crosses(g0, g1) {
                let t = cut.locate(start, terms, t0, h, g0, g1, parameters, state);
                return emit(t, state);
            }
            return ControlFlow::Continue(());
        }
        let mut brackets = [Bracket {
            a: 0.0,
            b: 1.0,
            ga: g0,
            gb: g1,
        }; 3];
        let n = cut.brackets(
            start,
            terms,
            t0,
            h,
            g0,
            g1,
            &turns,
            parameters,
            state,
            &mut brackets,
        );
        for bracket in &brackets[..n] {
            if cut.direction.crosses(bracket.ga, bracket.gb) {
                let t = cut.locate_in(start, terms, t0, h, bracket, parameters, state);
                emit(t, state)?;
            }
        }
        ControlFlow::Continue(())
    }

    /// Re-slices with the plane `normal . x = offset`: one tight pass over the contiguous
    /// start states finds the steps whose ends lie on the two sides, and those are located in
    /// batches (their dense-output terms are scattered through memory, so all of a batch's
    /// terms are requested before any is used). Calls `crossing(step index, time, state)` in
    /// order until it breaks.
    fn reslice_plane(
        &self,
        cut: &mut Cut,
        parameters: &[f64],
        emit: &mut impl FnMut(f64, &[f64]) -> ControlFlow<()>,
    ) {
        let dim = self.dim;
        let direction = cut.direction;
        let Some((normal, offset)) = cut.as_plane(parameters) else {
            return;
        };
        let (normal, offset) = (normal.to_vec(), offset);
        if self.t0.is_empty() || dim == 0 || normal.len() != dim {
            return;
        }
        let mut batch: Vec<(usize, f64, f64)> = Vec::with_capacity(BATCH);
        let mut state = vec![0.0; dim];
        let mut locate_batch = |batch: &mut Vec<(usize, f64, f64)>| {
            // ask for every line the batch needs before using any (the misses then overlap)
            let mut touched = 0.0;
            for &(idx, ..) in batch.iter() {
                touched += self.t0[idx] + self.h[idx];
                let terms = self.step_terms(idx);
                touched += terms.iter().step_by(8).sum::<f64>() + terms.last().unwrap_or(&0.0);
            }
            std::hint::black_box(touched);
            for &(idx, g0, g1) in batch.iter() {
                if self
                    .examine(cut, idx, g0, g1, parameters, &mut state, emit)
                    .is_break()
                {
                    return ControlFlow::Break(());
                }
            }
            batch.clear();
            ControlFlow::Continue(())
        };
        let starts = &self.starts[..self.t0.len() * dim];
        let mut stopped = false;
        plane_scan::scan(
            starts,
            &self.end_state,
            &normal,
            offset,
            direction,
            |idx, g0, g1| {
                batch.push((idx, g0, g1));
                if batch.len() == BATCH && locate_batch(&mut batch).is_break() {
                    stopped = true;
                    return ControlFlow::Break(());
                }
                ControlFlow::Continue(())
            },
        );
        if !stopped {
            let _ = locate_batch(&mut batch);
        }
    }

    pub fn reslice_points(&self, cut: &mut Cut, parameters: &[f64]) -> Vec<CutPoint> {
        let mut points = Vec::new();
        self.reslice(cut, parameters, |p| {
            points.push(p.clone());
            ControlFlow::Continue(())
        });
        points
    }

    /// Strobe samples of the stored steps inside the recorded window.
    pub fn strobe_samples(&self, strobe: &Strobe) -> Vec<StrobeSample> {
        let (t_record, t_end) = self.window;
        let mut samples = Vec::new();
        let mut k = strobe.first_index_from(t_record);
        let mut state = vec![0.0; self.dim];
        loop {
            let t = strobe.time_of(k);
            if t > t_end || !self.state_at(t, &mut state) {
                break;
            }
            samples.push(StrobeSample {
                index: k,
                t,
                state: state.clone(),
            });
            k += 1;
        }
        samples
    }
}
