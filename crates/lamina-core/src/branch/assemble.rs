//! Putting a branch together: the walks from its start toward both ends of the range (or one
//! way from a special point), joined in branch order with their special points and ends.

use super::follow::walker;
use super::orbit::Born;
use super::problem::Problem;
use super::settings::BranchSettings;
use super::types::{
    Branch, BranchEnd, BranchOf, BranchPoint, BranchRange, BranchSink, BranchStart, SpecialPoint,
};
use super::walk::{Half, Station};
use crate::Interrupt;

/// Walks from `start` toward `to` and toward `from` (each unless the start is on that end)
/// and joins the halves in branch order.
#[allow(clippy::too_many_arguments)]
pub(super) fn both_ways<P: Problem>(
    problem: P,
    start: Station,
    start_point: BranchPoint,
    range: &BranchRange,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
    of: BranchOf,
    how: BranchStart,
) -> Branch {
    let value = start.value();
    let targets: Vec<f64> = [range.to, range.from]
        .into_iter()
        .filter(|&end| end != value)
        .collect();
    let n_walks = targets.len() as f64;
    let first_step = settings.initial_step * range.width();
    let mut halves: Vec<(f64, Half)> = Vec::new();
    let mut most_segments = problem.most_segments();
    let from_differences = problem.uses_differences();
    for (idx, &toward) in targets.iter().enumerate() {
        let mut station = start.clone();
        let wanted = (toward - value).signum();
        let slope = station.slope();
        let flip = if slope == 0.0 {
            idx == 1
        } else {
            slope * wanted < 0.0
        };
        if flip {
            for t in &mut station.tangent {
                *t = -*t;
            }
            station.bordered = station.bordered.map(|b| -b);
        }
        let mut walk = walker(problem.clone(), range, settings, interrupt);
        let done = idx as f64;
        let half = walk.walk(station, first_step, toward, sink, &|f| (done + f) / n_walks);
        most_segments = most_segments.max(walk.problem.most_segments());
        halves.push((toward, half));
    }
    let mut start_point = start_point;
    start_point.arclength = 0.0;
    let mut points = Vec::new();
    let mut special = Vec::new();
    let mut ends = Vec::new();
    // toward `from`, reversed, comes first
    let from_half = halves.iter().find(|(toward, _)| *toward == range.from);
    let to_half = halves.iter().find(|(toward, _)| *toward == range.to);
    if let Some((toward, half)) = from_half {
        let count = half.points.len();
        for point in half.points.iter().rev() {
            let mut point = point.clone();
            point.arclength = -point.arclength;
            points.push(point);
        }
        for (located, before) in &half.special {
            let mut located = located.clone();
            located.arclength = -located.arclength;
            located.after = count - before - 1;
            special.push(located);
        }
        ends.push(BranchEnd {
            toward: *toward,
            reason: half.end.clone(),
            n_points: count,
        });
    }
    let start_index = points.len();
    points.push(start_point);
    if let Some((toward, half)) = to_half {
        points.extend(half.points.iter().cloned());
        for (located, before) in &half.special {
            let mut located = located.clone();
            located.after = start_index + before;
            special.push(located);
        }
        ends.push(BranchEnd {
            toward: *toward,
            reason: half.end.clone(),
            n_points: half.points.len(),
        });
    }
    special.sort_by(|p, q| p.arclength.total_cmp(&q.arclength));
    sink.progress(1.0);
    Branch {
        of,
        parameter: range.parameter,
        points,
        start_index: Some(start_index),
        special,
        start: how,
        born_at: None,
        ends,
        from_differences,
        most_segments,
    }
}

/// Walks from the special point `born_at` along the born branch's tangent until an end.
#[allow(clippy::too_many_arguments)]
pub(super) fn one_way(
    born: Born,
    born_at: SpecialPoint,
    first_step: f64,
    range: &BranchRange,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
    how: BranchStart,
) -> Branch {
    let Born {
        problem,
        start,
        tangent,
        normal,
    } = born;
    let start = Station {
        u: start,
        tangent,
        measured: None,
        bordered: None,
        arclength: 0.0,
        normal: Some(normal),
    };
    let from_differences = problem.uses_differences();
    let mut walk = walker(problem, range, settings, interrupt);
    // heading for the end the branch's parameter moves toward at first (decided on the way)
    let toward = if start.value() - range.low() < range.high() - start.value() {
        range.high()
    } else {
        range.low()
    };
    let half = walk.walk(start, first_step, toward, sink, &|f| f);
    let special = half
        .special
        .iter()
        .map(|(located, before)| {
            let mut located = located.clone();
            located.after = before.saturating_sub(1);
            located
        })
        .collect();
    sink.progress(1.0);
    let toward = match half.points.last() {
        Some(last) if last.value >= half.points[0].value => range.high(),
        Some(_) => range.low(),
        None => toward,
    };
    Branch {
        of: BranchOf::Orbit,
        parameter: range.parameter,
        start_index: None,
        special,
        start: how,
        born_at: Some(born_at),
        ends: vec![BranchEnd {
            toward,
            reason: half.end,
            n_points: half.points.len(),
        }],
        from_differences,
        most_segments: walk.problem.most_segments(),
        points: half.points,
    }
}
