//! The path a picture of a trajectory draws: the stored run's dense output sampled inside
//! every accepted step besides its ends, so a switching converter's ramps show and the cut
//! points lie on the drawn line, bounded in total. The window's 3D view and time plot draw
//! the same path.

use lamina_core::run::StoredRun;

/// Most points of a dense path.
pub const MAX_DENSE_SAMPLES: usize = 200_000;

/// Most points inside one step (besides its end).
const MAX_POINTS_PER_STEP: usize = 16;

/// Sends the path through `stored`'s steps inside its recorded window to `each` (time,
/// state), in time order: the state at the window's start, then in every step `k - 1` evenly
/// spaced interior points and its end, with `k` as large as `max_samples` allows (at most
/// 16); with more steps than that, only the ends of evenly spaced steps. Returns false when
/// nothing is stored.
pub fn dense_path(
    stored: &StoredRun,
    max_samples: usize,
    mut each: impl FnMut(f64, &[f64]),
) -> bool {
    let n = stored.n_steps();
    if n == 0 || max_samples == 0 {
        return false;
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
    let mut state = vec![0.0; stored.dim()];
    let first_t = stored.step_start_time(0).max(t_record);
    if stored.state_at(first_t, &mut state) {
        each(first_t, &state);
    }
    for idx in (0..n).step_by(stride) {
        let (t0, t1) = (stored.step_start_time(idx), step_end(idx));
        for j in 1..per_step {
            let t = t0 + (t1 - t0) * j as f64 / per_step as f64;
            if t > first_t && t <= t_end && stored.state_at(t, &mut state) {
                each(t, &state);
            }
        }
        if t1 > first_t {
            each(t1, stored.end_state(idx));
        }
    }
    true
}
