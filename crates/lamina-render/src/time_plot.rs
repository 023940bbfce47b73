//! The time plot: chosen states against time over the recorded window, one line each in the
//! series colours, with the strobe instants (squares) and the cut crossings (diamonds) marked
//! on the lines and a key naming both.

use plotters::prelude::*;

use crate::figure::{Figure, RenderError, draw_error};
use crate::plots::{axes, body, draw_key, font_size, picture, thousands};

/// The colours of the time plot's lines, in the order of the states shown (the window's time
/// plot uses the same): Lamina's deep blue, coral, green, sand, plum, then they repeat.
pub fn series_colour(index: usize) -> [u8; 3] {
    const COLOURS: [[u8; 3]; 6] = [
        [40, 96, 170],
        [222, 92, 66],
        [56, 150, 100],
        [196, 150, 40],
        [140, 80, 160],
        [60, 150, 170],
    ];
    COLOURS[index % COLOURS.len()]
}

/// Colour of the strobe-instant marks.
pub const STROBE_MARK: [u8; 3] = [20, 20, 24];
/// Colour of the cut-crossing marks.
pub const CUT_MARK: [u8; 3] = [200, 60, 150];

/// One state's line of a time plot: its label (name with unit) and points `(t, value)` in
/// time order, with the values at the strobe instants and at the cut crossings to mark.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TimeSeries {
    /// The state's label, for the key.
    pub label: String,
    /// `(t, value)` along the line, in time order.
    pub points: Vec<(f64, f64)>,
    /// `(t, value)` at the strobe instants.
    pub strobe: Vec<(f64, f64)>,
    /// `(t, value)` at the cut crossings.
    pub cut: Vec<(f64, f64)>,
}

/// Least room, in pixels of width, per mark of a kind: more marks would hide the lines.
const MARK_SPACING: usize = 6;

/// Most points of one line drawn; longer lines keep the smallest and largest value of each
/// of this many stretches, so ramps and spikes stay.
const MAX_LINE_POINTS: usize = 20_000;

/// The time plot of `series` (the figure's x label is the time's, the y label names what is
/// shown).
pub fn time_plot_png(figure: &Figure, series: &[TimeSeries]) -> Result<Vec<u8>, RenderError> {
    let all: Vec<(f64, f64)> = series
        .iter()
        .flat_map(|s| s.points.iter().copied())
        .collect();
    picture(figure, |root| {
        let body = body(figure, root);
        let mut chart = axes(figure, &body, &all)?;
        for (i, s) in series.iter().enumerate() {
            let [r, g, b] = series_colour(i);
            let colour = RGBColor(r, g, b);
            chart
                .draw_series(LineSeries::new(
                    min_max_thinned(&s.points, MAX_LINE_POINTS),
                    colour.stroke_width(2),
                ))
                .map_err(draw_error)?
                .label(s.label.clone())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x - 8, y), (x + 8, y)], colour.stroke_width(2))
                });
        }
        let [r, g, b] = STROBE_MARK;
        let strobe_colour = RGBColor(r, g, b);
        // marks only when they can be told apart (one per MARK_SPACING pixels of width);
        // else the key says how many there are
        let room = figure.size.0 as usize / MARK_SPACING;
        if let Some((strobe, label)) = marks(series, |s| &s.strobe, room, "strobe instant") {
            chart
                .draw_series(strobe.iter().map(|&(t, v)| {
                    EmptyElement::at((t, v))
                        + Rectangle::new([(-3, -3), (3, 3)], strobe_colour.filled())
                }))
                .map_err(draw_error)?
                .label(label)
                .legend(move |(x, y)| square_at(x, y, strobe_colour));
        }
        let [r, g, b] = CUT_MARK;
        let cut_colour = RGBColor(r, g, b);
        if let Some((cut, label)) = marks(series, |s| &s.cut, room, "cut crossing") {
            chart
                .draw_series(cut.iter().map(|&(t, v)| {
                    EmptyElement::at((t, v))
                        + Polygon::new(vec![(0, -5), (5, 0), (0, 5), (-5, 0)], cut_colour.filled())
                }))
                .map_err(draw_error)?
                .label(label)
                .legend(move |(x, y)| diamond_at(x, y, cut_colour));
        }
        draw_key(
            &mut chart,
            SeriesLabelPosition::UpperRight,
            font_size(figure, 0.02, 11.0),
        )?;
        Ok(())
    })
}

/// The marks of one kind (`of` a series: its strobe instants or cut crossings, `one` the
/// word for one of them) with their key: all of them when the series with the most has at
/// most `room`, none (the key then counting them) when more; `None` when there are none.
fn marks(
    series: &[TimeSeries],
    of: fn(&TimeSeries) -> &Vec<(f64, f64)>,
    room: usize,
    one: &str,
) -> Option<(Vec<(f64, f64)>, String)> {
    let most = series.iter().map(|s| of(s).len()).max().unwrap_or(0);
    if most == 0 {
        return None;
    }
    if most > room {
        let label = format!("{} {one}s, too many to mark", thousands(most));
        return Some((Vec::new(), label));
    }
    let all = series.iter().flat_map(|s| of(s).iter().copied()).collect();
    Some((all, one.to_owned()))
}

fn square_at(x: i32, y: i32, colour: RGBColor) -> Rectangle<(i32, i32)> {
    Rectangle::new([(x - 3, y - 3), (x + 3, y + 3)], colour.filled())
}

fn diamond_at(x: i32, y: i32, colour: RGBColor) -> Polygon<(i32, i32)> {
    Polygon::new(
        vec![(x, y - 5), (x + 5, y), (x, y + 5), (x - 5, y)],
        colour.filled(),
    )
}

/// `points` (in time order) thinned to about `max` points: each of `max / 2` stretches keeps
/// its smallest and its largest value, in time order, so a ramp's corners and a spike stay.
pub fn min_max_thinned(points: &[(f64, f64)], max: usize) -> Vec<(f64, f64)> {
    let buckets = (max / 2).max(1);
    if points.len() <= max {
        return points.to_vec();
    }
    let per = points.len().div_ceil(buckets);
    let mut out = Vec::with_capacity(2 * buckets + 1);
    for chunk in points.chunks(per) {
        let (mut lo, mut hi) = (0, 0);
        for (i, p) in chunk.iter().enumerate() {
            if p.1 < chunk[lo].1 {
                lo = i;
            }
            if p.1 > chunk[hi].1 {
                hi = i;
            }
        }
        let (a, b) = if lo <= hi { (lo, hi) } else { (hi, lo) };
        out.push(chunk[a]);
        if b != a {
            out.push(chunk[b]);
        }
    }
    if let (Some(last), Some(kept)) = (points.last(), out.last())
        && last != kept
    {
        out.push(*last);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thinning_keeps_every_corner_of_a_sawtooth() {
        // [analytic] a sawtooth of 100 teeth sampled 1000 times per tooth: thinned to 400
        // points, each tooth's top (0.999) and bottom (0) is still there
        let points: Vec<(f64, f64)> = (0..100_000)
            .map(|i| (i as f64, (i % 1000) as f64 / 1000.0))
            .collect();
        let thin = min_max_thinned(&points, 400);
        assert!(thin.len() <= 402);
        let tops = thin.iter().filter(|p| p.1 == 0.999).count();
        let bottoms = thin.iter().filter(|p| p.1 == 0.0).count();
        assert_eq!(tops, 100);
        assert_eq!(bottoms, 100);
        assert!(thin.windows(2).all(|w| w[0].0 < w[1].0));
    }

    #[test]
    fn a_time_plot_is_drawn() {
        let series = TimeSeries {
            label: "x (V)".into(),
            points: (0..500)
                .map(|i| (i as f64 * 0.01, (i as f64 * 0.01).sin()))
                .collect(),
            strobe: vec![(1.0, 1f64.sin())],
            cut: vec![(std::f64::consts::PI, 0.0)],
        };
        let figure = Figure {
            size: (320, 240),
            title: "t".into(),
            caption: "c".into(),
            x_label: "t (ms)".into(),
            y_label: "x (V)".into(),
        };
        let png = time_plot_png(&figure, &[series]).unwrap();
        // [common practice] the PNG signature
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    }
}
