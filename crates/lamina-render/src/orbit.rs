//! The orbit diagram: for each parameter value its kept points of one coordinate, coloured by
//! what the recurrence detector says they settled into, with a legend. The colours are
//! [`recurrence_colour`], which the window's orbit-diagram view uses too, so a picture and the
//! window tell the same story.

use lamina_core::recurrence::RecurrenceKind;
use plotters::prelude::*;

use crate::figure::{Figure, RenderError, draw_error};
use crate::plots::{TRACE, axes, body, dot_radius, draw_key, font_size, picture};

/// The one fixed colour of each repeat period, 1 to 12 returns: Lamina's own palette, chosen
/// so that neighbouring periods (a period doubling 1, 2, 4, 8) differ clearly.
const PERIOD_COLOURS: [[u8; 3]; 12] = [
    [40, 96, 170],   // 1 deep blue
    [56, 150, 100],  // 2 green
    [196, 150, 40],  // 3 ochre
    [140, 80, 160],  // 4 plum
    [60, 170, 190],  // 5 teal
    [160, 100, 60],  // 6 brown
    [100, 120, 220], // 7 periwinkle
    [214, 120, 170], // 8 rose
    [120, 160, 50],  // 9 olive
    [70, 80, 110],   // 10 slate
    [230, 190, 90],  // 11 sand
    [80, 200, 150],  // 12 mint
];

/// The colour of a label, the same on screen and in every picture: a repeat after k returns
/// its period's own colour (k from 1 to 12; longer ones, which the detector does not report,
/// the colour of 12), "no repeat" coral, "not settled" grey (its points say nothing yet), "too
/// few points" light grey.
pub fn recurrence_colour(kind: RecurrenceKind) -> [u8; 3] {
    match kind {
        RecurrenceKind::Returns(k) => PERIOD_COLOURS[k.clamp(1, 12) - 1],
        RecurrenceKind::NoRepeat { .. } => [228, 96, 70],
        RecurrenceKind::NotSettled => [150, 152, 160],
        RecurrenceKind::TooFewPoints => [200, 202, 208],
    }
}

/// The order of labels in a key: orbits by returns, then no repeat, not settled, too few.
pub fn recurrence_order(kind: &RecurrenceKind) -> (usize, usize) {
    match kind {
        RecurrenceKind::Returns(k) => (0, *k),
        RecurrenceKind::NoRepeat { max_k } => (1, *max_k),
        RecurrenceKind::NotSettled => (2, 0),
        RecurrenceKind::TooFewPoints => (3, 0),
    }
}

/// An orbit diagram: for each parameter value (`columns`: the value and its kept points of
/// the plotted coordinate) its points, coloured by `kinds` (one label per column) with a
/// legend of the labels present, or all in one colour without labels.
pub fn orbit_diagram_png(
    figure: &Figure,
    columns: &[(f64, Vec<f64>)],
    kinds: Option<&[RecurrenceKind]>,
) -> Result<Vec<u8>, RenderError> {
    let points: Vec<(f64, f64)> = columns
        .iter()
        .flat_map(|(value, coords)| coords.iter().map(move |&c| (*value, c)))
        .collect();
    let radius = dot_radius(points.len());
    picture(figure, |root| {
        let body = body(figure, root);
        let mut chart = axes(figure, &body, &points)?;
        let Some(kinds) = kinds else {
            chart
                .draw_series(
                    points
                        .iter()
                        .map(|&(x, y)| Circle::new((x, y), radius, TRACE.filled())),
                )
                .map_err(draw_error)?;
            return Ok(());
        };
        let mut present: Vec<RecurrenceKind> = Vec::new();
        for (idx, (_, coords)) in columns.iter().enumerate() {
            let kind = kinds
                .get(idx)
                .copied()
                .unwrap_or(RecurrenceKind::TooFewPoints);
            if !coords.is_empty() && !present.contains(&kind) {
                present.push(kind);
            }
        }
        present.sort_by_key(recurrence_order);
        for kind in present {
            let [r, g, b] = recurrence_colour(kind);
            let colour = RGBColor(r, g, b);
            let dots = columns
                .iter()
                .enumerate()
                .filter(|(idx, _)| kinds.get(*idx).copied() == Some(kind))
                .flat_map(|(_, (value, coords))| {
                    coords
                        .iter()
                        .map(move |&c| Circle::new((*value, c), radius, colour.filled()))
                });
            chart
                .draw_series(dots)
                .map_err(draw_error)?
                .label(kind.to_string())
                .legend(move |(x, y)| Circle::new((x, y), 4, colour.filled()));
        }
        draw_key(
            &mut chart,
            SeriesLabelPosition::UpperRight,
            font_size(figure, 0.02, 11.0),
        )?;
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_have_distinct_colours() {
        let mut kinds: Vec<RecurrenceKind> = (1..=12).map(RecurrenceKind::Returns).collect();
        kinds.extend([
            RecurrenceKind::NoRepeat { max_k: 12 },
            RecurrenceKind::NotSettled,
            RecurrenceKind::TooFewPoints,
        ]);
        for (i, a) in kinds.iter().enumerate() {
            for b in &kinds[i + 1..] {
                assert_ne!(recurrence_colour(*a), recurrence_colour(*b), "{a} and {b}");
            }
        }
    }
}
