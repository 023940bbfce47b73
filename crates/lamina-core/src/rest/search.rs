//! The search for every resting point: the scenario's run gives the settled state and samples
//! of the trajectory, a spread of seeds covers the run's box, Newton refines each seed, and
//! points found twice are kept once.

use super::RestError;
use super::classify::{Eigenvalue, RestKind, classify, eigenvalues_of};
use super::newton::{RestNewtonSettings, norm, solve_resting_point};
use crate::Interrupt;
use crate::integrate::Rates;
use crate::model::Model;
use crate::run::{Run, RunSpec, Sink, StopReason};

/// Settings of the resting-point search.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RestSettings {
    /// Seeds taken from the recorded trajectory, evenly spread over it.
    pub n_run_seeds: usize,
    /// Seeds spread (by a Halton sequence) over the box of the run and the origin, widened by
    /// `box_margin`.
    pub n_spread_seeds: usize,
    /// The box of the run is widened by this fraction of its width on every side.
    pub box_margin: f64,
    /// Two points closer than this times `max(1, |x|)` are the same point.
    pub distinct: f64,
    /// Newton's method for each seed.
    pub newton: RestNewtonSettings,
}

impl Default for RestSettings {
    fn default() -> Self {
        Self {
            n_run_seeds: 48,
            n_spread_seeds: 160,
            box_margin: 0.5,
            distinct: 1e-6,
            newton: RestNewtonSettings::default(),
        }
    }
}

/// One resting point with what its eigenvalues say.
#[derive(Clone, Debug, PartialEq)]
pub struct RestingPoint {
    /// The state.
    pub state: Vec<f64>,
    /// Eigenvalues of the Jacobian there, most unstable first.
    pub eigenvalues: Vec<Eigenvalue>,
    /// Every eigenvalue has a negative real part.
    pub stable: bool,
    /// Eigenvalues with a positive real part.
    pub n_unstable: usize,
    /// The kind in words.
    pub kind: RestKind,
    /// `|f(x)|` at the point.
    pub residual: f64,
    /// The scenario's run ends next to it (it is where the run settles).
    pub reached_by_run: bool,
}

impl RestingPoint {
    /// Measures a point: eigenvalues of `jacobian` (`n x n` row-major) and their verdict.
    /// `None` when the Jacobian has non-finite entries.
    pub fn measure(state: Vec<f64>, jacobian: &[f64], residual: f64) -> Option<Self> {
        let n = state.len();
        let eigenvalues = eigenvalues_of(jacobian, n)?;
        let stability = classify(&eigenvalues);
        Some(Self {
            state,
            eigenvalues,
            stable: stability.stable,
            n_unstable: stability.n_unstable,
            kind: stability.kind,
            residual,
            reached_by_run: false,
        })
    }
}

/// What the search found.
#[derive(Clone, Debug, PartialEq)]
pub struct RestReport {
    /// The distinct resting points: the one the run settles to first, then by the number of
    /// unstable directions.
    pub points: Vec<RestingPoint>,
    /// Seeds tried.
    pub n_seeds: usize,
    /// Seeds from which Newton's method converged.
    pub n_converged: usize,
    /// How the scenario's run ended.
    pub run_reason: StopReason,
    /// The state where the run ended.
    pub settled_state: Vec<f64>,
}

/// Receives the search's progress and each new point as it is found.
pub trait RestSink {
    /// The fraction of the search done (the run is the first half, the seeds the second).
    fn progress(&mut self, fraction: f64) {
        let _ = fraction;
    }
    /// A point not seen before.
    fn found(&mut self, point: &RestingPoint) {
        let _ = point;
    }
}

impl RestSink for () {}

/// Most trajectory samples kept for seeding (thinned evenly beyond this).
const MAX_SAMPLES: usize = 4096;

/// Keeps a thinned copy of the recorded trajectory and forwards progress.
struct SampleSink<'a> {
    samples: Vec<Vec<f64>>,
    stride: usize,
    count: usize,
    outer: &'a mut dyn RestSink,
}

impl Sink for SampleSink<'_> {
    fn step(&mut self, _t: f64, state: &[f64]) {
        if self.count.is_multiple_of(self.stride) {
            self.samples.push(state.to_vec());
            if self.samples.len() >= 2 * MAX_SAMPLES {
                // keep every other one and take half as many from now on
                let mut keep = false;
                self.samples.retain(|_| {
                    keep = !keep;
                    keep
                });
                self.stride *= 2;
            }
        }
        self.count += 1;
    }
    fn progress(&mut self, _t: f64, fraction: f64) {
        self.outer.progress(0.5 * fraction);
    }
}

/// Finds every resting point of `model` that Newton's method reaches from the start state,
/// from the end and samples of the run over `run`'s window, and from a spread of seeds over
/// the box that run covers (with the origin), widened.
///
/// # Errors
/// [`RestError::Forced`] for a model that uses `t`, [`RestError::NoStates`],
/// [`RestError::Cancelled`] when `interrupt` is raised.
pub fn find_resting_points(
    model: &Model,
    run: &RunSpec,
    settings: &RestSettings,
    sink: &mut dyn RestSink,
    interrupt: &Interrupt,
) -> Result<RestReport, RestError> {
    if model.uses_time() {
        return Err(RestError::Forced);
    }
    let n = model.dim();
    if n == 0 {
        return Err(RestError::NoStates);
    }
    let mut samples = SampleSink {
        samples: Vec::new(),
        stride: 1,
        count: 0,
        outer: sink,
    };
    let outcome =
        Run::new(model.clone(), run.clone(), None, None, false).execute(&mut samples, interrupt);
    if interrupt.is_raised() {
        return Err(RestError::Cancelled);
    }
    let SampleSink {
        samples: trajectory,
        outer: sink,
        ..
    } = samples;
    let settled = outcome.final_state.clone();
    let seeds = seeds(model.start(), &settled, &trajectory, settings);
    let mut model = model.clone();
    let mut points: Vec<RestingPoint> = Vec::new();
    let mut n_converged = 0;
    for (idx, seed) in seeds.iter().enumerate() {
        if interrupt.is_raised() {
            return Err(RestError::Cancelled);
        }
        sink.progress(0.5 + 0.5 * idx as f64 / seeds.len() as f64);
        let Ok(solved) = solve_resting_point(&mut model, seed, run.escape, &settings.newton) else {
            continue;
        };
        n_converged += 1;
        let scale = norm(&solved.state).max(1.0);
        if points
            .iter()
            .any(|p| distance(&p.state, &solved.state) <= settings.distinct * scale)
        {
            continue;
        }
        let Some(mut point) =
            RestingPoint::measure(solved.state, &solved.jacobian, solved.residual)
        else {
            continue;
        };
        point.reached_by_run = point.stable
            && outcome.reason == StopReason::Finished
            && distance(&point.state, &settled) <= 1e-3 * scale;
        sink.found(&point);
        points.push(point);
    }
    sink.progress(1.0);
    points.sort_by(|p, q| {
        q.reached_by_run
            .cmp(&p.reached_by_run)
            .then(p.n_unstable.cmp(&q.n_unstable))
            .then_with(|| {
                p.state
                    .iter()
                    .zip(&q.state)
                    .map(|(a, b)| a.total_cmp(b))
                    .find(|o| o.is_ne())
                    .unwrap_or(std::cmp::Ordering::Equal)
            })
    });
    Ok(RestReport {
        points,
        n_seeds: seeds.len(),
        n_converged,
        run_reason: outcome.reason,
        settled_state: settled,
    })
}

/// The seeds in the order they are tried: the start, the settled state, samples of the
/// trajectory, then the spread over the widened box.
fn seeds(
    start: &[f64],
    settled: &[f64],
    trajectory: &[Vec<f64>],
    settings: &RestSettings,
) -> Vec<Vec<f64>> {
    let n = start.len();
    let mut seeds = vec![start.to_vec()];
    if settled.len() == n && settled.iter().all(|v| v.is_finite()) {
        seeds.push(settled.to_vec());
    }
    let take = settings.n_run_seeds.min(trajectory.len());
    for j in 0..take {
        seeds.push(trajectory[j * trajectory.len() / take].clone());
    }
    // the box of the run, with the origin (where many models rest), widened
    let mut low: Vec<f64> = start.iter().map(|v| v.min(0.0)).collect();
    let mut high: Vec<f64> = start.iter().map(|v| v.max(0.0)).collect();
    for state in seeds.iter().chain(trajectory) {
        for ((lo, hi), &v) in low.iter_mut().zip(high.iter_mut()).zip(state) {
            if v.is_finite() {
                *lo = lo.min(v);
                *hi = hi.max(v);
            }
        }
    }
    for (lo, hi) in low.iter_mut().zip(high.iter_mut()) {
        let width = (*hi - *lo).max(1e-3 * lo.abs().max(hi.abs()).max(1.0));
        *lo -= settings.box_margin * width;
        *hi += settings.box_margin * width;
    }
    let bases = first_primes(n);
    for i in 1..=settings.n_spread_seeds {
        seeds.push(
            (0..n)
                .map(|d| low[d] + (high[d] - low[d]) * radical_inverse(i, bases[d]))
                .collect(),
        );
    }
    seeds
}

/// The `i`-th element of van der Corput's sequence in `base` (one coordinate of Halton's
/// sequence), in `[0, 1)`.
fn radical_inverse(mut i: usize, base: usize) -> f64 {
    let mut inverse = 0.0;
    let mut factor = 1.0 / base as f64;
    while i > 0 {
        inverse += (i % base) as f64 * factor;
        i /= base;
        factor /= base as f64;
    }
    inverse
}

/// The first `n` primes.
fn first_primes(n: usize) -> Vec<usize> {
    let mut primes = Vec::with_capacity(n);
    let mut candidate = 2;
    while primes.len() < n {
        if primes.iter().all(|p| candidate % p != 0) {
            primes.push(candidate);
        }
        candidate += 1;
    }
    primes
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

    #[test]
    fn halton_coordinates() {
        // [analytic] van der Corput in base 2: 1/2, 1/4, 3/4; base 3: 1/3, 2/3, 1/9
        assert_eq!(radical_inverse(1, 2), 0.5);
        assert_eq!(radical_inverse(2, 2), 0.25);
        assert_eq!(radical_inverse(3, 2), 0.75);
        assert!((radical_inverse(3, 3) - 1.0 / 9.0).abs() < 1e-15);
        assert_eq!(first_primes(5), vec![2, 3, 5, 7, 11]);
    }
}
