//! What the current run has produced, as the views need it: point clouds, the trajectory,
//! the run's state, and the finished run itself (kept for re-slicing and running on).

use std::time::Duration;

use lamina_core::run::{CutPoint, Run, StopReason, StrobeSample};
use lamina_scenario::Scenario;

use crate::vocabulary::{CloudAxis, unit_suffix};

impl CloudAxis {
    /// Name shown on the axis, with its unit.
    pub fn label(self, labels: &AxisLabels) -> String {
        match self {
            Self::State(i) => labels.state(i),
            Self::Time => labels.time(),
            Self::ReturnTime => labels.return_time(),
        }
    }
}

/// What the views write on their axes: each state's name with its unit (`x (um)`), and the
/// time's labels with the unit of time.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct AxisLabels {
    /// The states' labels, in the order of the run's states.
    pub states: Vec<String>,
    /// The unit of time, if the scenario gives one.
    pub time_unit: Option<String>,
}

impl AxisLabels {
    /// The labels of the run's states `names`, with the units the scenario gives them (a
    /// name the scenario no longer has is shown plain).
    pub fn new(scenario: &Scenario, names: &[String]) -> Self {
        let states = names
            .iter()
            .map(|name| match scenario.state_index(name) {
                Some(idx) => scenario.state_label(idx),
                None => name.clone(),
            })
            .collect();
        Self {
            states,
            time_unit: scenario.time.unit.clone(),
        }
    }

    /// The label of state `idx` (empty past the last).
    pub fn state(&self, idx: usize) -> String {
        self.states.get(idx).cloned().unwrap_or_default()
    }

    /// `t`, or `t (us)`.
    pub fn time(&self) -> String {
        self.with_time_unit("t")
    }

    /// `return time`, or `return time (us)`.
    pub fn return_time(&self) -> String {
        self.with_time_unit("return time")
    }

    /// The time within the strobe period: `t mod T`, or `t mod T (us)`.
    pub fn time_within_period(&self) -> String {
        self.with_time_unit("t mod T")
    }

    fn with_time_unit(&self, label: &str) -> String {
        match self.time_unit.as_deref() {
            Some(unit) if !unit.trim().is_empty() => format!("{label} ({unit})"),
            _ => label.to_owned(),
        }
    }
}

impl PointCloud {
    /// Point `k` in words, with the scenario's units: `k = 3, t = 12.5 us, return time =
    /// 10 us, il = 2 A, vo = 4.9 V`.
    pub fn readout(&self, k: usize, names: &[String], scenario: &Scenario) -> String {
        let time_unit = unit_suffix(scenario.time.unit.as_deref());
        let mut text = format!("k = {k}, t = {}{time_unit}", self.t[k]);
        if self.return_time[k].is_finite() {
            text.push_str(&format!(
                ", return time = {}{time_unit}",
                self.return_time[k]
            ));
        }
        for (name, v) in names.iter().zip(self.state(k)) {
            let unit = scenario
                .state_index(name)
                .and_then(|i| scenario.states[i].unit.as_deref());
            text.push_str(&format!(", {name} = {v}{}", unit_suffix(unit)));
        }
        text
    }
}

/// A growing set of points (cut points or strobe samples) stored flat.
#[derive(Clone, Debug, Default)]
pub struct PointCloud {
    dim: usize,
    /// Time of each point.
    pub t: Vec<f64>,
    /// Return time of each point (NaN where there is none).
    pub return_time: Vec<f64>,
    states: Vec<f64>,
    /// Bumped on every change, so views can cache what they derive.
    pub revision: u64,
}

/// A first revision no other cloud or trajectory of this process has started from, so a view's
/// cache keyed by a revision never mistakes a new run's data for an old run's.
fn first_revision() -> u64 {
    static EPOCHS: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(1);
    EPOCHS.fetch_add(1, std::sync::atomic::Ordering::Relaxed) << 40
}

impl PointCloud {
    /// An empty cloud of `dim`-state points.
    pub fn new(dim: usize) -> Self {
        Self {
            dim,
            revision: first_revision(),
            ..Self::default()
        }
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.t.len()
    }

    /// Whether there are none.
    pub fn is_empty(&self) -> bool {
        self.t.is_empty()
    }

    /// Number of states per point.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// State of point `idx`.
    pub fn state(&self, idx: usize) -> &[f64] {
        &self.states[idx * self.dim..(idx + 1) * self.dim]
    }

    /// Coordinate `axis` of point `idx`.
    pub fn coord(&self, idx: usize, axis: usize) -> f64 {
        self.states[idx * self.dim + axis]
    }

    /// Value of `axis` at point `idx`.
    pub fn value(&self, idx: usize, axis: CloudAxis) -> f64 {
        match axis {
            CloudAxis::State(k) if k < self.dim => self.states[idx * self.dim + k],
            CloudAxis::State(_) => f64::NAN,
            CloudAxis::Time => self.t[idx],
            CloudAxis::ReturnTime => self.return_time[idx],
        }
    }

    /// Appends a cut point.
    pub fn push_cut(&mut self, point: &CutPoint) {
        self.t.push(point.t);
        self.return_time.push(point.return_time.unwrap_or(f64::NAN));
        self.states.extend_from_slice(&point.state);
        self.revision += 1;
    }

    /// Appends a strobe sample (its return time is the time since the previous sample).
    pub fn push_strobe(&mut self, sample: &StrobeSample) {
        let rt = self.t.last().map_or(f64::NAN, |last| sample.t - last);
        self.t.push(sample.t);
        self.return_time.push(rt);
        self.states.extend_from_slice(&sample.state);
        self.revision += 1;
    }

    /// Replaces everything with `points`.
    pub fn set_cut_points(&mut self, points: &[CutPoint]) {
        self.clear();
        for p in points {
            self.push_cut(p);
        }
    }

    /// Removes every point.
    pub fn clear(&mut self) {
        self.t.clear();
        self.return_time.clear();
        self.states.clear();
        self.revision += 1;
    }

    /// As cut points (for exports).
    pub fn cut_points(&self) -> impl Iterator<Item = CutPoint> + '_ {
        (0..self.len()).map(|i| CutPoint {
            t: self.t[i],
            return_time: Some(self.return_time[i]).filter(|r| r.is_finite()),
            state: self.state(i).to_vec(),
        })
    }

    /// As strobe samples (for exports).
    pub fn strobe_samples(&self) -> impl Iterator<Item = StrobeSample> + '_ {
        (0..self.len()).map(|i| StrobeSample {
            index: i as i64,
            t: self.t[i],
            state: self.state(i).to_vec(),
        })
    }
}

/// Step-end states of the recorded part of the run, for the 3D view and the CSV export.
#[derive(Clone, Debug, Default)]
pub struct Trajectory {
    dim: usize,
    /// Time of each sample.
    pub t: Vec<f64>,
    states: Vec<f64>,
    /// Sum of each state over the samples kept (for [`Trajectory::mean`]).
    sums: Vec<f64>,
    /// Bumped on every change, so views can cache what they derive.
    pub revision: u64,
}

/// Most trajectory samples kept; past it every other sample is dropped (the view decimates
/// anyway, and the stored run keeps full accuracy).
const MAX_TRAJECTORY_SAMPLES: usize = 400_000;

impl Trajectory {
    /// An empty trajectory of `dim` states.
    pub fn new(dim: usize) -> Self {
        Self {
            dim,
            sums: vec![0.0; dim],
            revision: first_revision(),
            ..Self::default()
        }
    }

    /// Number of samples.
    pub fn len(&self) -> usize {
        self.t.len()
    }

    /// Whether there are none.
    pub fn is_empty(&self) -> bool {
        self.t.is_empty()
    }

    /// Number of states.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// State of sample `idx`.
    pub fn state(&self, idx: usize) -> &[f64] {
        &self.states[idx * self.dim..(idx + 1) * self.dim]
    }

    /// Appends a sample, thinning the oldest half when full.
    pub fn push(&mut self, t: f64, state: &[f64]) {
        if self.t.len() >= MAX_TRAJECTORY_SAMPLES {
            self.thin();
        }
        self.t.push(t);
        self.states.extend_from_slice(state);
        add_to(&mut self.sums, state);
        self.revision += 1;
    }

    /// Mean of state `idx` over the samples kept (NaN when there are none).
    pub fn mean(&self, idx: usize) -> f64 {
        match self.sums.get(idx) {
            Some(sum) if !self.t.is_empty() => sum / self.t.len() as f64,
            _ => f64::NAN,
        }
    }

    fn thin(&mut self) {
        let dim = self.dim;
        let n = self.t.len();
        let mut w = 0;
        for r in (0..n).step_by(2) {
            self.t[w] = self.t[r];
            self.states.copy_within(r * dim..(r + 1) * dim, w * dim);
            w += 1;
        }
        self.t.truncate(w);
        self.states.truncate(w * dim);
        self.sums = vec![0.0; dim];
        for state in self.states.chunks_exact(dim.max(1)) {
            add_to(&mut self.sums, state);
        }
    }
}

/// Adds `state` to the running `sums`, component by component.
fn add_to(sums: &mut [f64], state: &[f64]) {
    for (sum, v) in sums.iter_mut().zip(state) {
        *sum += v;
    }
}

/// Where the current run stands.
#[derive(Clone, Debug, PartialEq)]
pub enum RunState {
    /// Nothing has run yet (or the results were cleared).
    Idle,
    /// The worker is integrating.
    Running,
    /// The run reached the end of its window.
    Finished,
    /// The user stopped it.
    Stopped,
    /// It ended early for the reason given (numerical trouble, the point limit).
    EndedEarly(StopReason),
    /// Its thread ended without handing the run back (an internal error).
    Lost,
}

/// Everything the current run has produced.
pub struct Results {
    /// State names, in order.
    pub names: Vec<String>,
    /// Cut points.
    pub cut: PointCloud,
    /// Strobe samples.
    pub strobe: PointCloud,
    /// Step-end states.
    pub trajectory: Trajectory,
    /// The run's state.
    pub state: RunState,
    /// Simulated time reached.
    pub t_reached: f64,
    /// Accepted steps.
    pub n_steps: u64,
    /// Fraction of the window done.
    pub fraction: f64,
    /// Wall-clock time of the run so far.
    pub elapsed: Duration,
    /// The finished (or stopped) run, with its stored steps; `None` while running.
    pub run: Option<Box<Run>>,
    /// The strobe period of the run, for the axis of the time within the period.
    pub strobe_period: Option<f64>,
    /// A number no other results of this process have: a view's selection made in other
    /// results is dropped.
    pub serial: u64,
}

impl Results {
    /// Empty results for a model with these state names.
    pub fn new(names: Vec<String>) -> Self {
        let dim = names.len();
        Self {
            names,
            cut: PointCloud::new(dim),
            strobe: PointCloud::new(dim),
            trajectory: Trajectory::new(dim),
            state: RunState::Idle,
            t_reached: 0.0,
            n_steps: 0,
            fraction: 0.0,
            elapsed: Duration::ZERO,
            run: None,
            strobe_period: None,
            serial: first_revision(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_running_mean_follows_pushes_and_thinning() {
        let mut trajectory = Trajectory::new(2);
        assert!(trajectory.mean(0).is_nan());
        let n = MAX_TRAJECTORY_SAMPLES + 10;
        for i in 0..n {
            let v = i as f64;
            trajectory.push(v, &[v, 1.0]);
        }
        // after one thinning the even samples 0, 2, ..., up to the limit are kept, then the
        // last ten pushes: the mean is that of the values kept [analytic]
        let kept: Vec<f64> = (0..trajectory.len())
            .map(|i| trajectory.state(i)[0])
            .collect();
        let direct = kept.iter().sum::<f64>() / kept.len() as f64;
        assert!((trajectory.mean(0) - direct).abs() <= 1e-9 * direct);
        assert_eq!(trajectory.mean(1), 1.0);
        assert!(trajectory.mean(2).is_nan());
    }

    #[test]
    fn new_clouds_and_trajectories_never_share_a_revision() {
        // [common practice] cache keys must not repeat across runs
        let a = PointCloud::new(2);
        let b = PointCloud::new(2);
        let c = Trajectory::new(2);
        assert_ne!(a.revision, b.revision);
        assert_ne!(b.revision, c.revision);
    }
}
