//! Pseudo-arclength continuation (H. B. Keller 1977; E. L. Allgower and K. Georg,
//! Introduction to Numerical Continuation Methods): a step along the tangent, Newton's method
//! back onto the branch with the step's length held by a bordering row, the new tangent from
//! the same bordered matrix, and a step size that follows Newton's convergence.

use super::error::StepFailure;
use super::linear::{Bordered, max_norm, null_vector};
use super::problem::{Layout, Measured, Problem};
use super::settings::BranchSettings;
use super::types::{BranchPoint, BranchSink, EndReason, SpecialPoint};
use crate::Interrupt;

/// A converged point with its tangent.
#[derive(Clone, Debug)]
pub(crate) struct Station {
    /// The unknowns, the parameter last.
    pub(crate) u: Vec<f64>,
    /// The unit tangent (in the weighted norm), oriented along the walk.
    pub(crate) tangent: Vec<f64>,
    /// The measured point (`None` at a degenerate start such as a Hopf point).
    pub(crate) measured: Option<Measured>,
    /// The branch-point test: the scaled determinant of `[DF; tangent]`.
    pub(crate) bordered: Option<f64>,
    /// Distance walked from the start.
    pub(crate) arclength: f64,
    /// The normal of the next step's bordering row when it is not the weighted tangent: at
    /// the start of a branch born at a special point, the tangent made orthogonal to the
    /// branch it is born from, so that Newton's method cannot slide back onto that branch.
    pub(crate) normal: Option<Vec<f64>>,
}

impl Station {
    /// The parameter value.
    pub(crate) fn value(&self) -> f64 {
        self.u[self.u.len() - 1]
    }
    /// The parameter component of the tangent.
    pub(crate) fn slope(&self) -> f64 {
        self.tangent[self.tangent.len() - 1]
    }
}

/// What one direction of a branch gave.
#[derive(Clone, Debug)]
pub(crate) struct Half {
    /// Points in the order computed.
    pub(crate) points: Vec<BranchPoint>,
    /// Special points with the number of points computed before each (0: between the start
    /// and the first point).
    pub(crate) special: Vec<(SpecialPoint, usize)>,
    /// Why it stopped.
    pub(crate) end: EndReason,
}

/// What Newton's corrector returns.
pub(crate) struct Corrected {
    pub(crate) u: Vec<f64>,
    pub(crate) iterations: usize,
    pub(crate) jacobian: Vec<f64>,
}

/// The extra equation of a correction.
pub(crate) enum Constraint<'c> {
    /// `normal . (u - base) = 0`: the step's length along the previous tangent.
    Arclength {
        /// The weighted previous tangent.
        normal: &'c [f64],
        /// The predicted point.
        base: &'c [f64],
    },
    /// The parameter held at a value (landing on an end of the range, or the start).
    Parameter(f64),
}

/// Newton steps in a correction up to which the step grows (the count includes the step
/// that shows convergence: three for quadratic convergence from a good prediction).
const EASY_ITERATIONS: usize = 3;
/// Newton steps from which the step shrinks.
const HARD_ITERATIONS: usize = 6;
/// A Newton step this many tolerances long that no longer shrinks counts as the noise floor.
const NOISE_FLOOR: f64 = 1e3;

/// Walks a branch of one problem.
pub(crate) struct Walker<'a, P: Problem> {
    pub(crate) problem: P,
    pub(crate) settings: &'a BranchSettings,
    pub(crate) low: f64,
    pub(crate) high: f64,
    pub(crate) width: f64,
    pub(crate) interrupt: &'a Interrupt,
}

impl<'a, P: Problem> Walker<'a, P> {
    /// The weighted tangent `W t`.
    pub(crate) fn weighted(&self, t: &[f64]) -> Vec<f64> {
        t.iter()
            .zip(self.problem.weights())
            .map(|(a, w)| a * w)
            .collect()
    }

    /// The weighted inner product.
    pub(crate) fn dot(&self, a: &[f64], b: &[f64]) -> f64 {
        a.iter()
            .zip(b)
            .zip(self.problem.weights())
            .map(|((x, y), w)| x * y * w)
            .sum()
    }

    /// Newton's method from `predicted` onto the branch with the extra equation
    /// `constraint`. Converged when a step is within the tolerance; the point after that step
    /// is evaluated once more, so the returned Jacobian (and the stability measured from it)
    /// is exactly the point's. (Using the last iterate's Jacobian instead would save that
    /// evaluation, but near a fold of orbits it moved the multipliers by a millionth.)
    pub(crate) fn correct(
        &mut self,
        predicted: &[f64],
        constraint: &Constraint<'_>,
    ) -> Result<Corrected, StepFailure> {
        let size = self.problem.n_unknowns();
        let tolerance = self.problem.tolerance();
        let mut residual = vec![0.0; size - 1];
        let mut jacobian = vec![0.0; (size - 1) * size];
        let border: Vec<f64> = match constraint {
            Constraint::Arclength { normal, .. } => normal.to_vec(),
            Constraint::Parameter(_) => {
                let mut e = vec![0.0; size];
                e[size - 1] = 1.0;
                e
            }
        };
        let mut w = predicted.to_vec();
        let mut last_step: Option<f64> = None;
        for iteration in 0..=self.settings.max_iterations {
            if self.interrupt.is_raised() {
                return Err(StepFailure::Cancelled);
            }
            self.problem
                .evaluate(&w, predicted, &mut residual, &mut jacobian)?;
            let scale = max_norm(&w).max(1.0);
            if let Some(step) = last_step
                && step <= tolerance * scale
            {
                return Ok(Corrected {
                    u: w,
                    iterations: iteration,
                    jacobian,
                });
            }
            if iteration == self.settings.max_iterations {
                return Err(StepFailure::NoConvergence {
                    iterations: iteration,
                    step: last_step.unwrap_or(f64::INFINITY),
                });
            }
            let extra = match constraint {
                Constraint::Arclength { normal, base } => normal
                    .iter()
                    .zip(w.iter().zip(base.iter()))
                    .map(|(n, (a, b))| n * (a - b))
                    .sum::<f64>(),
                Constraint::Parameter(value) => w[size - 1] - value,
            };
            let mut rhs: Vec<f64> = residual.iter().map(|r| -r).collect();
            rhs.push(-extra);
            let step = Bordered::new(&jacobian, &border)
                .and_then(|b| b.solve(&rhs))
                .ok_or(StepFailure::Singular)?;
            let length = max_norm(&step);
            if let Some(previous) = last_step
                && length > 0.5 * previous
            {
                if length <= NOISE_FLOOR * tolerance * scale {
                    // the steps stopped shrinking at the noise of the evaluation
                    return Ok(Corrected {
                        u: w,
                        iterations: iteration,
                        jacobian,
                    });
                }
                return Err(StepFailure::NotContracting { step: length });
            }
            for (a, d) in w.iter_mut().zip(&step) {
                *a += d;
            }
            last_step = Some(length);
        }
        unreachable_no_convergence()
    }

    /// The unit tangent at a corrected point, oriented along `previous` (weighted), and the
    /// branch-point test there.
    pub(crate) fn tangent_at(&self, jacobian: &[f64], previous: &[f64]) -> Option<(Vec<f64>, f64)> {
        let border = self.weighted(previous);
        let bordered = Bordered::new(jacobian, &border)?;
        let mut t = bordered.solve_last_unit()?;
        let length = self.dot(&t, &t).sqrt();
        if !(length > 0.0 && length.is_finite()) {
            return None;
        }
        for v in &mut t {
            *v /= length;
        }
        Some((t, bordered.scaled_determinant()))
    }

    /// The start: `u0` corrected at its parameter value, measured, with its tangent (a null
    /// vector of `DF`, parameter component made non-negative); and the start's point.
    pub(crate) fn settle_start(
        &mut self,
        u0: &[f64],
    ) -> Result<(Station, BranchPoint), StepFailure> {
        let value = u0[u0.len() - 1];
        let corrected = self.correct(u0, &Constraint::Parameter(value))?;
        let size = corrected.u.len();
        let mut t =
            null_vector(&corrected.jacobian, size - 1, size).ok_or(StepFailure::Singular)?;
        if t[size - 1] < 0.0 {
            for v in &mut t {
                *v = -*v;
            }
        }
        let length = self.dot(&t, &t).sqrt();
        if length.is_nan() || length <= 0.0 {
            return Err(StepFailure::Singular);
        }
        for v in &mut t {
            *v /= length;
        }
        let (tangent, bordered) = self
            .tangent_at(&corrected.jacobian, &t)
            .ok_or(StepFailure::Singular)?;
        let mut measured = self.problem.measure(&corrected.u, None)?;
        measured.point.iterations = corrected.iterations;
        let point = measured.point.clone();
        let station = Station {
            u: corrected.u,
            tangent,
            measured: Some(measured),
            bordered: Some(bordered),
            arclength: 0.0,
            normal: None,
        };
        Ok((station, point))
    }

    /// Walks from `start` along its tangent until an end, reporting each point to `sink`.
    /// `progress` maps this walk's own fraction to the sink's.
    pub(crate) fn walk(
        &mut self,
        start: Station,
        first_step: f64,
        toward: f64,
        sink: &mut dyn BranchSink,
        progress: &dyn Fn(f64) -> f64,
    ) -> Half {
        let h_min = self.settings.min_step * self.width;
        let h_max = self.settings.max_step * self.width;
        let mut h = first_step.clamp(h_min, h_max);
        let mut points: Vec<BranchPoint> = Vec::new();
        let mut special: Vec<(SpecialPoint, usize)> = Vec::new();
        let origin = start.u.clone();
        let origin_tangent = start.tangent.clone();
        let start_value = start.value();
        let mut current = start;
        let mut furthest = 0.0f64;
        let end = loop {
            if self.interrupt.is_raised() {
                break EndReason::Cancelled;
            }
            if points.len() >= self.settings.max_points {
                break EndReason::PointLimit {
                    n_points: points.len(),
                };
            }
            let attempt = self.step(&current, h);
            let (next, landed) = match attempt {
                Ok(found) => found,
                Err(StepFailure::Cancelled) => break EndReason::Cancelled,
                Err(failure) => {
                    h *= 0.5;
                    if h >= h_min {
                        continue;
                    }
                    if let Ok(Some(layout)) =
                        self.problem
                            .refine_layout(&current.u, &current.tangent, true)
                        && let Some(station) = self.relayout(&current, layout)
                    {
                        current = station;
                        h = (self.settings.initial_step * self.width).clamp(h_min, h_max);
                        continue;
                    }
                    break EndReason::NewtonFailed {
                        value: current.value(),
                        detail: failure.to_string(),
                    };
                }
            };
            let Some(measured) = next.measured.as_ref() else {
                break EndReason::NewtonFailed {
                    value: current.value(),
                    detail: "the point could not be measured".to_string(),
                };
            };
            let iterations = measured.point.iterations;
            for located in self.detect(&current, &next) {
                sink.special(&located);
                special.push((located, points.len()));
            }
            let mut point = measured.point.clone();
            point.arclength = next.arclength;
            let end_here = measured.end.clone();
            points.push(point);
            let sink_stopped = sink.point(points.last().expect("just pushed")).is_break();
            furthest = furthest.max((next.value() - start_value).abs());
            let by_distance = furthest / (toward - start_value).abs().max(f64::MIN_POSITIVE);
            let by_points = points.len() as f64 / self.settings.max_points as f64;
            sink.progress(progress(by_distance.max(by_points).min(1.0)));
            if sink_stopped {
                break EndReason::Cancelled;
            }
            if let Some(end) = landed {
                break EndReason::Bound { value: end };
            }
            if let Some(reason) = end_here {
                break reason;
            }
            let back_home = points.len() >= 3
                && self.distance(&next.u, &origin) < h
                && self.dot(&next.tangent, &origin_tangent) > 0.5;
            if back_home {
                break EndReason::ClosedLoop;
            }
            h = if iterations <= EASY_ITERATIONS {
                (1.5 * h).min(h_max)
            } else if iterations >= HARD_ITERATIONS {
                (0.6 * h).max(h_min)
            } else {
                h
            };
            current = next;
            if let Ok(Some(layout)) =
                self.problem
                    .refine_layout(&current.u, &current.tangent, false)
                && let Some(station) = self.relayout(&current, layout)
            {
                current = station;
            }
        };
        Half {
            points,
            special,
            end,
        }
    }

    /// One predictor–corrector step of length `h` from `current`; lands on an end of the
    /// range when the prediction would leave it (and then says which end).
    fn step(&mut self, current: &Station, h: f64) -> Result<(Station, Option<f64>), StepFailure> {
        let slope = current.slope();
        let value = current.value();
        let predicted_value = value + h * slope;
        let end = if predicted_value > self.high && slope > 0.0 {
            Some(self.high)
        } else if predicted_value < self.low && slope < 0.0 {
            Some(self.low)
        } else {
            None
        };
        let length = match end {
            Some(b) => (b - value) / slope,
            None => h,
        };
        let predicted: Vec<f64> = current
            .u
            .iter()
            .zip(&current.tangent)
            .map(|(a, t)| a + length * t)
            .collect();
        let normal = current
            .normal
            .clone()
            .unwrap_or_else(|| self.weighted(&current.tangent));
        let corrected = match end {
            Some(b) => self.correct(&predicted, &Constraint::Parameter(b))?,
            None => self.correct(
                &predicted,
                &Constraint::Arclength {
                    normal: &normal,
                    base: &predicted,
                },
            )?,
        };
        let (tangent, bordered) = self
            .tangent_at(&corrected.jacobian, &current.tangent)
            .ok_or(StepFailure::Singular)?;
        let turn = self.dot(&tangent, &current.tangent).clamp(-1.0, 1.0).acos();
        let h_floor = 16.0 * self.settings.min_step * self.width;
        if turn > self.settings.max_turn && h > h_floor {
            return Err(StepFailure::Turn { angle: turn });
        }
        let previous_state = current.measured.as_ref().map(|m| m.point.state.clone());
        let mut measured = self
            .problem
            .measure(&corrected.u, previous_state.as_deref())?;
        measured.point.iterations = corrected.iterations;
        let walked = self.distance(&corrected.u, &current.u);
        Ok((
            Station {
                u: corrected.u,
                tangent,
                measured: Some(measured),
                bordered: Some(bordered),
                arclength: current.arclength + walked,
                normal: None,
            },
            end,
        ))
    }

    /// The station `current` in a new layout.
    fn relayout(&mut self, current: &Station, layout: Layout) -> Option<Station> {
        let Layout {
            unknowns: u,
            tangent: guess,
        } = layout;
        let size = self.problem.n_unknowns();
        let mut residual = vec![0.0; size - 1];
        let mut jacobian = vec![0.0; (size - 1) * size];
        self.problem
            .evaluate(&u, &u, &mut residual, &mut jacobian)
            .ok()?;
        let (tangent, bordered) = self.tangent_at(&jacobian, &guess)?;
        Some(Station {
            u,
            tangent,
            measured: current.measured.clone(),
            bordered: Some(bordered),
            arclength: current.arclength,
            normal: None,
        })
    }

    /// Weighted distance.
    pub(crate) fn distance(&self, a: &[f64], b: &[f64]) -> f64 {
        let d: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
        self.dot(&d, &d).sqrt()
    }
}

/// The loop in [`Walker::correct`] returns before it runs out (its last pass ends in a
/// convergence test or the limit); this keeps the compiler content without a panic.
fn unreachable_no_convergence() -> Result<Corrected, StepFailure> {
    Err(StepFailure::NoConvergence {
        iterations: 0,
        step: f64::INFINITY,
    })
}
