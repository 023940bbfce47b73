//! The recorded window drawn from the stored run's dense output: a few points inside every
//! accepted step besides its ends, so a switching converter's ramps show and the cut points
//! lie on the drawn path, bounded in total. The 3D view, the time plot and their PNG and CSV
//! exports draw this path once a run has finished; while it runs they draw the step ends.

use lamina_core::run::StoredRun;

use crate::results::{Results, Trajectory};

/// Most points of a dense path.
pub const MAX_DENSE_SAMPLES: usize = 200_000;

/// Most points inside one step (besides its end).
const MAX_POINTS_PER_STEP: usize = 16;

/// The path through `stored`'s steps inside its recorded window: the state at the window's
/// start, then in every step `k - 1` evenly spaced interior points and its end, with `k` as
/// large as [`MAX_DENSE_SAMPLES`] allows (at most [`MAX_POINTS_PER_STEP`]); with more steps
/// than that, only the ends of evenly spaced steps. `None` when nothing is stored.
pub fn sample_stored(stored: &StoredRun, max_samples: usize) -> Option<Trajectory> {
    let n = stored.n_steps();
    let dim = stored.dim();
    if n == 0 || max_samples == 0 {
        return None;
    }
    let (t_record, t_end) = stored.window();
    let step_end = |idx: usize| {
        if idx + 1 < n {
            stored.step_start_time(idx + 1)
        } else {
            stored.last().map_or(f64::NAN, |(t, _)| t)
        }
    };
    let per_step = (max_samples / n).clamp(1, MAX_POINTS_PER_STEP);
    let stride = n.div_ceil(max_samples).max(1);
    let mut path = Trajectory::new(dim);
    let mut state = vec![0.0; dim];
    let first_t = stored.step_start_time(0).max(t_record);
    if stored.state_at(first_t, &mut state) {
        path.push(first_t, &state);
    }
    for idx in (0..n).step_by(stride) {
        let (t0, t1) = (stored.step_start_time(idx), step_end(idx));
        for j in 1..per_step {
            let t = t0 + (t1 - t0) * j as f64 / per_step as f64;
            if t > first_t && t <= t_end && stored.state_at(t, &mut state) {
                path.push(t, &state);
            }
        }
        if t1 > first_t {
            path.push(t1, stored.end_state(idx));
        }
    }
    Some(path)
}

/// The dense path of the current results, made once per finished run (or run on) and kept.
#[derive(Default)]
pub struct DensePath {
    key: Option<(u64, usize, u64)>,
    path: Option<Trajectory>,
}

impl DensePath {
    /// The path to draw for `results`: the stored run's dense path once the run has finished,
    /// else the step ends.
    pub fn of<'a>(&'a mut self, results: &'a Results) -> &'a Trajectory {
        let Some(run) = results.run.as_deref() else {
            return &results.trajectory;
        };
        let stored = run.stored();
        let key = (
            results.serial,
            stored.n_steps(),
            stored.window().1.to_bits(),
        );
        if self.key != Some(key) {
            self.key = Some(key);
            self.path = sample_stored(stored, MAX_DENSE_SAMPLES);
        }
        self.path.as_ref().unwrap_or(&results.trajectory)
    }
}

/// The path of `results` made now (for an export): the dense path of a finished run, else
/// the step ends.
pub fn path_of(results: &Results) -> std::borrow::Cow<'_, Trajectory> {
    match results
        .run
        .as_deref()
        .and_then(|run| sample_stored(run.stored(), MAX_DENSE_SAMPLES))
    {
        Some(path) => std::borrow::Cow::Owned(path),
        None => std::borrow::Cow::Borrowed(&results.trajectory),
    }
}
