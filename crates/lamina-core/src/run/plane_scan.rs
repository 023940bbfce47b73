//! The scan of a re-slice by a plane: `g = normal . x - offset` at every stored step end in
//! one pass over contiguous memory, specialised to the number of states so that the dot
//! product is unrolled. Besides the steps whose ends lie on the two sides, it reports the
//! steps next to a turn of `g` (its change over a step changes sign), which may hold a pair
//! of crossings inside ([`super::graze`]).

use std::ops::ControlFlow;

use super::Direction;
use super::cut::plane_value;
use super::graze::turn_near_zero;

/// Calls `crossing(step index, g0, g1)` for every step whose ends are on the two sides of the
/// plane in `direction`, and for every step next to a turn of `g` near zero
/// ([`super::graze::turn_near_zero`]), in order, until it breaks. `starts` are the steps' start states
/// (`dim` each, contiguous), `last_end` the end state of the last step; the start of a step is
/// the end of the step before.
pub(super) fn scan(
    starts: &[f64],
    last_end: &[f64],
    normal: &[f64],
    offset: f64,
    direction: Direction,
    crossing: impl FnMut(usize, f64, f64) -> ControlFlow<()>,
) {
    macro_rules! fixed {
        ($($n:literal)*) => {
            match normal.len() {
                $($n => {
                    if let Ok(normal) = <&[f64; $n]>::try_from(normal) {
                        return scan_fixed::<$n>(starts, last_end, normal, offset, direction, crossing);
                    }
                })*
                _ => {}
            }
        };
    }
    fixed!(1 2 3 4 5 6 7 8);
    let dim = normal.len();
    let (Some(first), true) = (starts.get(..dim), dim > 0 && last_end.len() == dim) else {
        return;
    };
    let ends = starts[dim..].chunks_exact(dim).chain([last_end]);
    run(
        plane_value(normal, offset, first),
        ends,
        direction,
        crossing,
        |x| plane_value(normal, offset, x),
    );
}

fn scan_fixed<const D: usize>(
    starts: &[f64],
    last_end: &[f64],
    normal: &[f64; D],
    offset: f64,
    direction: Direction,
    crossing: impl FnMut(usize, f64, f64) -> ControlFlow<()>,
) {
    let (Some(first), Ok(last_end)) = (starts.get(..D), <&[f64; D]>::try_from(last_end)) else {
        return;
    };
    let (ends, _) = starts[D..].as_chunks::<D>();
    let ends = ends.iter().chain([last_end]);
    run(
        plane_value(normal, offset, first),
        ends,
        direction,
        crossing,
        |x| plane_value(normal, offset, x),
    );
}

#[inline(always)]
fn run<'a, X: 'a + ?Sized>(
    mut g0: f64,
    ends: impl Iterator<Item = &'a X>,
    direction: Direction,
    mut crossing: impl FnMut(usize, f64, f64) -> ControlFlow<()>,
    g: impl Fn(&X) -> f64,
) {
    // a step is reported one step late, once it is known whether g turns at its end
    let mut pending: Option<(usize, f64, f64, bool)> = None;
    let mut d_before = f64::NAN;
    for (idx, end) in ends.enumerate() {
        let g1 = g(end);
        let d = g1 - g0;
        let turn = !d_before.is_nan() && turn_near_zero(g0, d_before, d);
        if let Some((p_idx, p_g0, p_g1, wanted)) = pending
            && (wanted || turn)
            && crossing(p_idx, p_g0, p_g1).is_break()
        {
            return;
        }
        pending = Some((idx, g0, g1, turn || direction.crosses(g0, g1)));
        d_before = d;
        g0 = g1;
    }
    if let Some((p_idx, p_g0, p_g1, true)) = pending {
        let _ = crossing(p_idx, p_g0, p_g1);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The crossings a plain loop over the steps finds.
    fn expected(dim: usize, starts: &[f64], end: &[f64], normal: &[f64]) -> Vec<(usize, f64, f64)> {
        let mut states: Vec<&[f64]> = starts.chunks_exact(dim).collect();
        states.push(end);
        states
            .windows(2)
            .enumerate()
            .filter_map(|(idx, pair)| {
                let (g0, g1) = (
                    plane_value(normal, 0.5, pair[0]),
                    plane_value(normal, 0.5, pair[1]),
                );
                Direction::Both.crosses(g0, g1).then_some((idx, g0, g1))
            })
            .collect()
    }

    #[test]
    fn every_state_count_finds_the_crossings_of_a_plain_loop() {
        for dim in [1, 3, 8, 9, 20] {
            let n_steps = 500;
            let values: Vec<f64> = (0..(n_steps + 1) * dim)
                .map(|k| ((k as f64) * 0.37).sin() * 1.3)
                .collect();
            let (starts, end) = values.split_at(n_steps * dim);
            let normal: Vec<f64> = (0..dim).map(|i| 1.0 / (i as f64 + 1.0)).collect();
            let mut found = Vec::new();
            scan(starts, end, &normal, 0.5, Direction::Both, |idx, g0, g1| {
                // the steps next to a turn are reported too
                if Direction::Both.crosses(g0, g1) {
                    found.push((idx, g0, g1));
                }
                ControlFlow::Continue(())
            });
            assert!(!found.is_empty(), "dim {dim}");
            assert_eq!(found, expected(dim, starts, end, &normal), "dim {dim}");
            let mut first = None;
            scan(starts, end, &normal, 0.5, Direction::Both, |idx, g0, g1| {
                if !Direction::Both.crosses(g0, g1) {
                    return ControlFlow::Continue(());
                }
                first = Some(idx);
                ControlFlow::Break(())
            });
            assert_eq!(first, Some(found[0].0), "stops at the first");
        }
    }
}
