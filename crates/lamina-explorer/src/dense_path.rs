//! The recorded window drawn from the stored run's dense output: a few points inside every
//! accepted step besides its ends, so a switching converter's ramps show and the cut points
//! lie on the drawn path, bounded in total. The 3D view, the time plot and their PNG and CSV
//! exports draw this path once a run has finished; while it runs they draw the step ends.

use lamina_core::run::StoredRun;

use crate::results::{Results, Trajectory};

pub use lamina_render::MAX_DENSE_SAMPLES;

/// The path through `stored`'s steps inside its recorded window (see
/// [`lamina_render::dense_path`]); `None` when nothing is stored.
pub fn sample_stored(stored: &StoredRun, max_samples: usize) -> Option<Trajectory> {
    let mut path = Trajectory::new(stored.dim());
    lamina_render::dense_path(stored, max_samples, |t, state| path.push(t, state)).then_some(path)
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
