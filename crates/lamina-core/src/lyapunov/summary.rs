//! Reading a computed spectrum: the running-estimate trace, its spread, the Kaplan–Yorke
//! dimension and a plain verdict on the kind of steady state.

/// The running estimates over time, thinned to a bounded number of samples (for a
/// convergence plot): `exponents[i][k]` is the estimate of exponent `i` at time `t[k]`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Trace {
    /// Sample times, increasing.
    pub t: Vec<f64>,
    /// One series per exponent, each as long as `t`.
    pub exponents: Vec<Vec<f64>>,
}

impl Trace {
    /// An empty trace for `m` exponents.
    pub fn new(m: usize) -> Self {
        Self {
            t: Vec::new(),
            exponents: vec![Vec::new(); m],
        }
    }

    /// Number of samples.
    pub fn len(&self) -> usize {
        self.t.len()
    }

    /// Whether there are no samples.
    pub fn is_empty(&self) -> bool {
        self.t.is_empty()
    }

    /// Appends the estimates at time `t`.
    pub fn push(&mut self, t: f64, estimates: &[f64]) {
        self.t.push(t);
        for (series, &value) in self.exponents.iter_mut().zip(estimates) {
            series.push(value);
        }
    }

    /// The estimates of sample `k`.
    pub fn sample(&self, k: usize) -> Vec<f64> {
        self.exponents
            .iter()
            .map(|s| s.get(k).copied().unwrap_or(f64::NAN))
            .collect()
    }

    /// For each exponent, the largest minus the smallest running estimate among the samples
    /// in the last `tail_fraction` of the time from `t_from` to the last sample; not a number
    /// when fewer than two samples lie there.
    pub fn spread(&self, t_from: f64, tail_fraction: f64) -> Vec<f64> {
        let Some(&t_last) = self.t.last() else {
            return vec![f64::NAN; self.exponents.len()];
        };
        let t_tail = t_last - tail_fraction * (t_last - t_from);
        let first = self.t.partition_point(|&t| t < t_tail);
        self.exponents
            .iter()
            .map(|series| {
                let tail = series.get(first..).unwrap_or(&[]);
                if tail.len() < 2 {
                    return f64::NAN;
                }
                let max = tail.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                let min = tail.iter().copied().fold(f64::INFINITY, f64::min);
                max - min
            })
            .collect()
    }
}

/// The Kaplan–Yorke (Lyapunov) dimension `k + (l_1 + ... + l_k) / |l_(k+1)|` of a spectrum,
/// where the exponents are taken largest first and `k` is the largest count whose partial
/// sum is not negative. 0 when the largest exponent is negative; `None` when the sum of all
/// the given exponents is not negative (then the given exponents do not determine it) or an
/// exponent is not a number.
pub fn kaplan_yorke(exponents: &[f64]) -> Option<f64> {
    if exponents.iter().any(|l| l.is_nan()) {
        return None;
    }
    let mut sorted = exponents.to_vec();
    sorted.sort_by(|a, b| b.total_cmp(a));
    let mut sum = 0.0;
    for (k, &l) in sorted.iter().enumerate() {
        if sum + l < 0.0 {
            return Some(k as f64 + sum / l.abs());
        }
        sum += l;
    }
    None
}

/// A plain reading of the spectrum: what the steady state is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// The largest exponent is clearly positive: chaos (`n_positive` > 1: several directions
    /// stretch, sometimes called hyperchaos). This reading assumes bounded motion that is
    /// not sitting exactly on an unstable resting point, which also has a positive exponent.
    Chaotic {
        /// Exponents clearly above zero.
        n_positive: usize,
    },
    /// Several exponents are zero within their error and none is positive: motion on a
    /// torus of that dimension (counting the time direction of a forced model).
    QuasiPeriodic {
        /// Exponents zero within their error, with the time direction of a forced model.
        n_zero: usize,
    },
    /// One exponent is zero (for a forced model: the time direction alone), the others
    /// clearly negative: a periodic orbit.
    Periodic,
    /// Every exponent is clearly negative (and the model is not forced): a resting point.
    Equilibrium,
    /// Not chaotic and not at rest, but too few exponents were computed to tell a periodic
    /// orbit from a torus.
    Regular,
    /// The run was too short to judge (fewer than two samples in the tail of the trace), or
    /// it ended before the end of its span (stopped on a signal, chattering, a value not finite, a
    /// collapsing step): exponents of an unfinished run say nothing about the steady state.
    Undecided,
    /// A state passed the escape size: the motion grows without bound, and the exponents
    /// measure the escape, not a steady state.
    Unbounded,
}

impl std::fmt::Display for Verdict {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Chaotic { n_positive: 1 } => write!(f, "chaotic (one positive exponent)"),
            Self::Chaotic { n_positive } => {
                write!(f, "chaotic ({n_positive} positive exponents)")
            }
            Self::QuasiPeriodic { n_zero } => {
                write!(f, "quasi-periodic (a torus: {n_zero} zero exponents)")
            }
            Self::Periodic => write!(f, "periodic (one zero exponent, the rest negative)"),
            Self::Equilibrium => write!(f, "an equilibrium (every exponent negative)"),
            Self::Regular => write!(
                f,
                "periodic or quasi-periodic (compute more exponents to tell which)"
            ),
            Self::Undecided => write!(
                f,
                "undecided (the run is too short to judge, or it ended early)"
            ),
            Self::Unbounded => write!(
                f,
                "unbounded (a state passed the escape size: the exponents measure the escape, not a steady state)"
            ),
        }
    }
}

impl Verdict {
    /// A one-word name (`chaotic`, `quasi-periodic`, `periodic`, `equilibrium`, `regular`,
    /// `undecided`, `unbounded`), for machine-readable output.
    pub fn name(&self) -> &'static str {
        match self {
            Self::Chaotic { .. } => "chaotic",
            Self::QuasiPeriodic { .. } => "quasi-periodic",
            Self::Periodic => "periodic",
            Self::Equilibrium => "equilibrium",
            Self::Regular => "regular",
            Self::Undecided => "undecided",
            Self::Unbounded => "unbounded",
        }
    }
}

/// Whether a bounded motion of a flow of `flow_dimension` dimensions (the states, plus one
/// for the time of a forced model) can be chaotic or quasi-periodic: not below three, by the
/// Poincaré–Bendixson theorem (a bounded orbit of a plane flow tends to a resting point or a
/// periodic orbit).
pub fn admits_chaos(flow_dimension: usize) -> bool {
    flow_dimension >= 3
}

/// An exponent counts as zero when it lies within this many spreads of zero...
const ZERO_BAND_SPREADS: f64 = 6.0;
/// ...or within this fraction of the largest exponent magnitude.
const ZERO_BAND_RELATIVE: f64 = 1e-3;

/// How far from zero exponent `i` must be to count as clearly non-zero: the larger of
/// a few spreads of its running estimate and a small fraction of the largest magnitude in
/// the spectrum (a zero exponent converges only like 1/T, so its spread alone is not a safe
/// measure).
pub fn zero_band(exponents: &[f64], spread: &[f64]) -> Vec<f64> {
    let scale = exponents.iter().map(|l| l.abs()).fold(0.0, f64::max);
    spread
        .iter()
        .map(|s| (ZERO_BAND_SPREADS * s).max(ZERO_BAND_RELATIVE * scale))
        .collect()
}

/// The verdict on `exponents` (largest first) with their `spread`s, for a model of
/// `n_states` states; `time_direction_omitted` for a forced model, whose time direction
/// adds one zero exponent that is not listed.
///
/// A flow of fewer than three dimensions (two unforced states, or one forced) can be neither
/// chaotic nor quasi-periodic (Poincaré–Bendixson): where the estimates read so, the span was
/// too short for them (a cycle still growing near a Hopf point, a slow spiral), and the
/// verdict is [`Verdict::Undecided`]. So it is when every exponent (with the time direction
/// of a forced model) is zero within its band: none is resolved from zero.
pub fn classify(
    exponents: &[f64],
    spread: &[f64],
    n_states: usize,
    time_direction_omitted: bool,
) -> Verdict {
    if exponents.is_empty() || exponents.iter().chain(spread).any(|v| !v.is_finite()) {
        return Verdict::Undecided;
    }
    let band = zero_band(exponents, spread);
    let n_positive = exponents
        .iter()
        .zip(&band)
        .filter(|(l, b)| **l > **b)
        .count();
    let flow_dimension = n_states + usize::from(time_direction_omitted);
    let plane_flow = !admits_chaos(flow_dimension);
    if n_positive > 0 {
        if plane_flow {
            return Verdict::Undecided;
        }
        return Verdict::Chaotic { n_positive };
    }
    let n_zero = exponents
        .iter()
        .zip(&band)
        .filter(|(l, b)| l.abs() <= **b)
        .count()
        + usize::from(time_direction_omitted);
    // with some exponents left out, more zeros may hide among them unless the smallest
    // computed one is already clearly negative
    let complete = exponents.len() >= n_states
        || exponents
            .iter()
            .zip(&band)
            .next_back()
            .is_some_and(|(l, b)| *l < -*b);
    // every direction of the flow zero within its band: no exponent is resolved from zero
    // (a span short against the model's time scale), which says nothing of the motion
    match (n_zero, complete) {
        (0, _) => Verdict::Equilibrium,
        (1, true) => Verdict::Periodic,
        (1, false) => Verdict::Regular,
        (_, _) if plane_flow => Verdict::Undecided,
        (n_zero, true) if n_zero >= flow_dimension => Verdict::Undecided,
        (n_zero, _) => Verdict::QuasiPeriodic { n_zero },
    }
}

/// `verdict`, unless it is [`Verdict::Equilibrium`] while the state kept moving: over the
/// tail of the span its path was `tail_path` long, against `size`, the largest state
/// magnitude over the span. A state that travels more than twice its size in the tail is not
/// at rest, whatever the exponents say (they missed something, such as a jump the tangent
/// vectors could not follow), so the verdict is [`Verdict::Undecided`] then: a periodic orbit
/// never reads as a resting point.
pub fn unless_moving(verdict: Verdict, tail_path: f64, size: f64) -> Verdict {
    if verdict == Verdict::Equilibrium && tail_path > MOVING * size.max(f64::MIN_POSITIVE) {
        Verdict::Undecided
    } else {
        verdict
    }
}

/// Path length in the tail, in units of the state's size, beyond which a state is moving.
const MOVING: f64 = 2.0;

/// The exponents with those within their zero band set to exactly zero, and the time
/// direction's zero added for a forced model: the spectrum the Kaplan–Yorke dimension is
/// read from (a zero exponent computed as -1e-4 would otherwise drop the dimension of a
/// periodic orbit from 1 to 0).
pub fn settled_spectrum(
    exponents: &[f64],
    spread: &[f64],
    time_direction_omitted: bool,
) -> Vec<f64> {
    let band = zero_band(exponents, spread);
    let mut settled: Vec<f64> = exponents
        .iter()
        .zip(&band)
        .map(|(&l, &b)| if l.abs() <= b { 0.0 } else { l })
        .collect();
    if time_direction_omitted {
        settled.push(0.0);
    }
    settled
}

#[cfg(test)]
mod moving_tests {
    use super::*;

    #[test]
    fn a_moving_state_is_never_at_rest() {
        // [common practice] a resting point does not travel: a state whose path in the tail
        // is many times its size is moving, whatever its exponents
        assert_eq!(
            unless_moving(Verdict::Equilibrium, 50.0, 1.0),
            Verdict::Undecided
        );
        assert_eq!(
            unless_moving(Verdict::Equilibrium, 1e-3, 1.0),
            Verdict::Equilibrium
        );
        assert_eq!(
            unless_moving(Verdict::Periodic, 50.0, 1.0),
            Verdict::Periodic
        );
    }
}
