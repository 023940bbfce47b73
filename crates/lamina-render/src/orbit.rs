//! The orbit diagram: for each parameter value its kept points of one coordinate, coloured by
//! what the recurrence detector says they settled into, with a legend. The colours are
//! [`recurrence_colour`], which the window's orbit-diagram view uses too, so a picture and the
//! window tell the same story.

use lamina_core::recurrence::RecurrenceKind;
use plotters::prelude::*;

use crate::figure::{FONT, Figure, RenderError, draw_error};
use crate::plots::{INK, TRACE, axes, body, dot_radius, font_size, picture, ramp};

/// The colour of a label: an orbit of k returns along Lamina's ramp (1 deep blue, 2 teal,
/// 4 green, 8 sand), "no repeat" coral, "not settled" grey (its points say nothing yet),
/// "too few points" light grey.
pub fn recurrence_colour(kind: RecurrenceKind) -> [u8; 3] {
    match kind {
        RecurrenceKind::Returns(k) => {
            let RGBColor(r, g, b) = ramp(((k.max(1) as f64).log2() / 4.0).min(0.85));
            [r, g, b]
        }
        RecurrenceKind::NoRepeat { .. } => [228, 96, 70],
        RecurrenceKind::NotSettled => [150, 152, 160],
        RecurrenceKind::TooFewPoints => [200, 202, 208],
    }
}

/// The order of labels in a legend: orbits by returns, then no repeat, not settled, too few.
fn legend_order(kind: &RecurrenceKind) -> (usize, usize) {
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
        present.sort_by_key(legend_order);
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
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.85))
            .border_style(INK)
            .label_font(
                (FONT, font_size(figure, 0.02, 11.0))
                    .into_font()
                    .color(&INK),
            )
            .draw()
            .map_err(draw_error)?;
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_have_distinct_colours() {
        let kinds = [
            RecurrenceKind::Returns(1),
            RecurrenceKind::Returns(2),
            RecurrenceKind::Returns(4),
            RecurrenceKind::NoRepeat { max_k: 12 },
            RecurrenceKind::NotSettled,
        ];
        for (i, a) in kinds.iter().enumerate() {
            for b in &kinds[i + 1..] {
                assert_ne!(recurrence_colour(*a), recurrence_colour(*b), "{a} and {b}");
            }
        }
    }
}
