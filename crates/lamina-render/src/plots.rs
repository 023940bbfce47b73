//! The 3D trajectory and the 2D point cloud, and the frame and axes every 2D picture shares.

use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

use crate::figure::{FONT, Figure, RenderError, draw_error, encode_png, register_font};
use crate::span::{axis_range, is_one_value, tick_label, value_range};

const BACKGROUND: RGBColor = RGBColor(255, 255, 255);
pub(crate) const INK: RGBColor = RGBColor(30, 34, 42);
pub(crate) const TRACE: RGBColor = RGBColor(36, 98, 160);

/// Lamina's ramp (deep blue to coral) for colouring by order or return time.
pub(crate) fn ramp(u: f64) -> RGBColor {
    let stops: [(f64, [u8; 3]); 5] = [
        (0.0, [40, 56, 140]),
        (0.3, [34, 132, 160]),
        (0.55, [72, 170, 120]),
        (0.8, [214, 170, 60]),
        (1.0, [228, 96, 70]),
    ];
    let u = if u.is_finite() {
        u.clamp(0.0, 1.0)
    } else {
        0.0
    };
    for pair in stops.windows(2) {
        let (a, ca) = pair[0];
        let (b, cb) = pair[1];
        if u <= b {
            let f = (u - a) / (b - a);
            let mix = |i: usize| {
                (f64::from(ca[i]) + f * (f64::from(cb[i]) - f64::from(ca[i]))).round() as u8
            };
            return RGBColor(mix(0), mix(1), mix(2));
        }
    }
    RGBColor(228, 96, 70)
}

pub(crate) fn range_of(values: impl Iterator<Item = f64>) -> (f64, f64) {
    value_range(values)
        .and_then(|(lo, hi)| axis_range(lo, hi))
        .unwrap_or((-1.0, 1.0))
}

fn caption_area<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    figure: &Figure,
) -> Result<(), RenderError> {
    let (_, h) = root.dim_in_pixel();
    let size = (f64::from(h) * 0.022).max(11.0);
    root.draw(&Text::new(
        figure.caption.clone(),
        (12, h as i32 - (size * 1.6) as i32),
        (FONT, size).into_font().color(&INK),
    ))
    .map_err(draw_error)
}

pub(crate) fn font_size(figure: &Figure, fraction: f64, min: f64) -> f64 {
    (f64::from(figure.size.1) * fraction).max(min)
}

/// The PNG of `figure`: a white canvas of its size with the caption at the bottom, on which
/// `draw` puts the rest.
pub(crate) fn picture(
    figure: &Figure,
    draw: impl FnOnce(
        &DrawingArea<BitMapBackend<'_>, plotters::coord::Shift>,
    ) -> Result<(), RenderError>,
) -> Result<Vec<u8>, RenderError> {
    figure.check()?;
    register_font();
    let (w, h) = figure.size;
    let mut buffer = vec![0u8; (w * h * 3) as usize];
    {
        let root = BitMapBackend::with_buffer(&mut buffer, (w, h)).into_drawing_area();
        root.fill(&BACKGROUND).map_err(draw_error)?;
        caption_area(&root, figure)?;
        draw(&root)?;
        root.present().map_err(draw_error)?;
    }
    encode_png(buffer, figure.size)
}

/// The chart of a 2D picture: its title, axes with labels and light grid lines, over the
/// range of `points`.
pub(crate) type Chart<'a, 'b> =
    ChartContext<'a, BitMapBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Width of the vertical axis's label area: room for the longest tick label (a one-value
/// series has long ones, `1.33839060`) and the axis's name beside it.
fn y_label_area(figure: &Figure, w: u32, y0: f64, y1: f64) -> u32 {
    let longest = [y0, y1, 0.5 * (y0 + y1)]
        .iter()
        .map(|&v| tick_label(v, y0, y1, TICKS).chars().count())
        .max()
        .unwrap_or(4);
    let label = font_size(figure, 0.02, 11.0) * 0.6 * longest as f64;
    let name = font_size(figure, 0.025, 12.0) * 2.2;
    (f64::from(w) * 0.09).max(label + name) as u32
}

/// About how many ticks an axis of a 2D picture has.
const TICKS: usize = 8;

/// Draws the title and the axes of a 2D picture over the range of `points`.
pub(crate) fn axes<'a, 'b>(
    figure: &Figure,
    body: &'a DrawingArea<BitMapBackend<'b>, plotters::coord::Shift>,
    points: &[(f64, f64)],
) -> Result<Chart<'a, 'b>, RenderError> {
    let (w, h) = figure.size;
    let (x0, x1) = range_of(points.iter().map(|p| p.0));
    let (y0, y1) = range_of(points.iter().map(|p| p.1));
    let mut chart = ChartBuilder::on(body)
        .caption(
            &figure.title,
            (FONT, font_size(figure, 0.035, 14.0))
                .into_font()
                .color(&INK),
        )
        .x_label_area_size((f64::from(h) * 0.08) as u32)
        .y_label_area_size(y_label_area(figure, w, y0, y1))
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(draw_error)?;
    let x_ticks = |v: &f64| tick_label(*v, x0, x1, TICKS);
    let y_ticks = |v: &f64| tick_label(*v, y0, y1, TICKS);
    chart
        .configure_mesh()
        .x_labels(TICKS)
        .y_labels(TICKS)
        .x_label_formatter(&x_ticks)
        .y_label_formatter(&y_ticks)
        .x_desc(&figure.x_label)
        .y_desc(&figure.y_label)
        .label_style(
            (FONT, font_size(figure, 0.02, 11.0))
                .into_font()
                .color(&INK),
        )
        .axis_desc_style(
            (FONT, font_size(figure, 0.025, 12.0))
                .into_font()
                .color(&INK),
        )
        .light_line_style(RGBColor(236, 238, 242))
        .draw()
        .map_err(draw_error)?;
    Ok(chart)
}

/// The drawing area of a 2D picture inside its margins.
pub(crate) fn body<'b>(
    figure: &Figure,
    root: &DrawingArea<BitMapBackend<'b>, plotters::coord::Shift>,
) -> DrawingArea<BitMapBackend<'b>, plotters::coord::Shift> {
    root.margin(8, (font_size(figure, 0.05, 20.0)) as u32, 8, 16)
}

/// Radius of the dots of a scatter of `n` points.
pub(crate) fn dot_radius(n: usize) -> i32 {
    if n > 20_000 { 1 } else { 2 }
}

/// How the dots of a scatter are coloured along Lamina's ramp, named in the picture's key.
#[derive(Clone, Copy, Debug)]
pub enum ColourKey<'a> {
    /// By arrival order: the first point deep blue, the last coral.
    Arrival,
    /// By these values (one per point), named by `label` (`return time (us)`).
    Value {
        /// One value per point.
        keys: &'a [f64],
        /// What the values are, with their unit.
        label: &'a str,
    },
}

/// A 2D scatter of `points`, coloured as `colour` says (with its key in the top right
/// corner) or in one colour. Points that are one value in both coordinates (see
/// [`crate::span::is_one_value`]) are said to be one point.
pub fn scatter_png(
    figure: &Figure,
    points: &[(f64, f64)],
    colour: Option<ColourKey<'_>>,
) -> Result<Vec<u8>, RenderError> {
    let n = points.len();
    let order: Vec<f64>;
    let (keys, key_text) = match colour {
        None => (None, None),
        Some(ColourKey::Arrival) => {
            order = (0..n).map(|i| i as f64).collect();
            (
                Some(order.as_slice()),
                Some((
                    "arrival order".to_owned(),
                    "first".to_owned(),
                    "last".to_owned(),
                )),
            )
        }
        Some(ColourKey::Value { keys, label }) => {
            let (lo, hi) = value_range(keys.iter().copied()).unwrap_or((0.0, 1.0));
            let ends = (tick_label(lo, lo, hi, 4), tick_label(hi, lo, hi, 4));
            (Some(keys), Some((label.to_owned(), ends.0, ends.1)))
        }
    };
    picture(figure, |root| {
        let body = body(figure, root);
        let mut chart = axes(figure, &body, points)?;
        let (klo, khi) =
            keys.and_then(|k| value_range(k.iter().copied()))
                .map_or(
                    (0.0, 1.0),
                    |(lo, hi)| if hi > lo { (lo, hi) } else { (lo, lo + 1.0) },
                );
        let radius = dot_radius(n);
        chart
            .draw_series(points.iter().enumerate().map(|(i, &(x, y))| {
                let colour = match keys {
                    Some(k) => ramp((k.get(i).copied().unwrap_or(f64::NAN) - klo) / (khi - klo)),
                    None => TRACE,
                };
                Circle::new((x, y), radius, colour.filled())
            }))
            .map_err(draw_error)?;
        if let Some((title, low, high)) = &key_text {
            ramp_key(root, figure, title, low, high)?;
        }
        let xs = value_range(points.iter().map(|p| p.0));
        let ys = value_range(points.iter().map(|p| p.1));
        if let (Some((x0, x1)), Some((y0, y1))) = (xs, ys)
            && is_one_value(x0, x1)
            && is_one_value(y0, y1)
        {
            let note = one_point_note(n, (x1 - x0).max(y1 - y0));
            let (w, _) = root.dim_in_pixel();
            root.draw(&Text::new(
                note,
                (
                    (f64::from(w) * 0.12) as i32,
                    (font_size(figure, 0.05, 20.0) * 1.3) as i32,
                ),
                (FONT, font_size(figure, 0.022, 11.0))
                    .into_font()
                    .color(&INK),
            ))
            .map_err(draw_error)?;
        }
        Ok(())
    })
}

/// What a picture or view says when its points are one point: `one point (9,750 samples
/// within 3e-10 of each other)`.
pub fn one_point_note(n: usize, spread: f64) -> String {
    if n <= 1 {
        return "one point".to_owned();
    }
    if spread == 0.0 {
        return format!("one point ({} samples, all equal)", thousands(n));
    }
    format!(
        "one point ({} samples within {spread:.0e} of each other)",
        thousands(n)
    )
}

/// `9750` as `9,750`.
pub fn thousands(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The colour key of a picture coloured along the ramp, in its top right corner: `title,
/// low -> high` over a bar of the ramp.
pub(crate) fn ramp_key(
    root: &DrawingArea<BitMapBackend<'_>, plotters::coord::Shift>,
    figure: &Figure,
    title: &str,
    low: &str,
    high: &str,
) -> Result<(), RenderError> {
    let (w, _) = root.dim_in_pixel();
    let size = font_size(figure, 0.02, 11.0);
    let bar_w = (f64::from(w) * 0.16).max(80.0) as i32;
    let right = w as i32 - 16;
    let top = (font_size(figure, 0.05, 20.0) * 1.1) as i32;
    let text = format!("{title}, {low} -> {high}");
    let style = (FONT, size).into_font().color(&INK);
    let (tw, _) = root.estimate_text_size(&text, &style).map_err(draw_error)?;
    root.draw(&Text::new(text, (right - tw as i32, top), style))
        .map_err(draw_error)?;
    let bar_top = top + (size * 1.3) as i32;
    let steps = 32;
    for s in 0..steps {
        let x0 = right - bar_w + bar_w * s / steps;
        let x1 = right - bar_w + bar_w * (s + 1) / steps;
        root.draw(&Rectangle::new(
            [(x0, bar_top), (x1, bar_top + 8)],
            ramp(f64::from(s) / f64::from(steps - 1)).filled(),
        ))
        .map_err(draw_error)?;
    }
    Ok(())
}

/// A 3D trajectory in orthographic projection: pieces of line (each a list of (across, depth,
/// up) points; the time within the drive period starts a new piece where it wraps around).
pub fn trajectory_png(
    figure: &Figure,
    z_label: &str,
    pieces: &[Vec<(f64, f64, f64)>],
) -> Result<Vec<u8>, RenderError> {
    let points: Vec<(f64, f64, f64)> = pieces.iter().flatten().copied().collect();
    picture(figure, |root| {
        let body = root.margin(8, (font_size(figure, 0.05, 20.0)) as u32, 8, 8);
        let (x0, x1) = range_of(points.iter().map(|p| p.0));
        let (y0, y1) = range_of(points.iter().map(|p| p.1));
        let (z0, z1) = range_of(points.iter().map(|p| p.2));
        let mut chart = ChartBuilder::on(&body)
            .caption(
                &figure.title,
                (FONT, font_size(figure, 0.035, 14.0))
                    .into_font()
                    .color(&INK),
            )
            .build_cartesian_3d(x0..x1, z0..z1, y0..y1)
            .map_err(draw_error)?;
        chart.with_projection(|mut p| {
            p.yaw = 0.6;
            p.pitch = 0.35;
            p.scale = 0.8;
            p.into_matrix()
        });
        chart
            .configure_axes()
            .label_style(
                (FONT, font_size(figure, 0.018, 10.0))
                    .into_font()
                    .color(&INK),
            )
            .light_grid_style(RGBColor(236, 238, 242))
            .draw()
            .map_err(draw_error)?;
        let stride = points.len().div_ceil(200_000).max(1);
        for piece in pieces {
            chart
                .draw_series(LineSeries::new(
                    piece.iter().step_by(stride).map(|&(x, y, z)| (x, z, y)),
                    TRACE.stroke_width(1),
                ))
                .map_err(draw_error)?;
        }
        let label = format!(
            "axes: {} (across), {} (depth), {z_label} (up)",
            figure.x_label, figure.y_label
        );
        root.draw(&Text::new(
            label,
            (12, (font_size(figure, 0.05, 20.0) * 1.2) as i32),
            (FONT, font_size(figure, 0.02, 11.0))
                .into_font()
                .color(&INK),
        ))
        .map_err(draw_error)
    })
}

/// Splits a line of 3D points into pieces wherever coordinate `axis` of `wrap = (axis,
/// period)`, the time within the drive period, falls from one point to the next as it wraps
/// around. The line between the two points is not lost: the piece before ends at the period
/// and the piece after starts at 0, both at the point of the line where the time within the
/// period reaches the period (it grows at rate 1, so that is a fraction `(period - a) /
/// (period - a + b)` of the way from a point at `a` to the next at `b`); every other
/// coordinate is interpolated linearly there. With no wrap, one piece.
pub fn split_where_it_wraps(
    points: impl IntoIterator<Item = (f64, f64, f64)>,
    wrap: Option<(usize, f64)>,
) -> Vec<Vec<(f64, f64, f64)>> {
    let coord = |q: (f64, f64, f64), k: usize| [q.0, q.1, q.2].get(k).copied().unwrap_or(0.0);
    let mut pieces: Vec<Vec<(f64, f64, f64)>> = vec![Vec::new()];
    for p in points {
        let last = pieces.last().and_then(|piece| piece.last()).copied();
        if let (Some((k, period)), Some(last)) = (wrap, last)
            && coord(p, k) < coord(last, k)
        {
            let (a, b) = (coord(last, k), coord(p, k));
            let gap = period - a + b;
            let f = if gap > 0.0 {
                ((period - a) / gap).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let lerp = |x: f64, y: f64| x + f * (y - x);
            let mut at = [lerp(last.0, p.0), lerp(last.1, p.1), lerp(last.2, p.2)];
            at[k] = period;
            if let Some(piece) = pieces.last_mut() {
                piece.push((at[0], at[1], at[2]));
            }
            at[k] = 0.0;
            pieces.push(vec![(at[0], at[1], at[2])]);
        }
        if let Some(piece) = pieces.last_mut() {
            piece.push(p);
        }
    }
    pieces
}

/// Draws the chart's key (the labelled series) in `corner` on a pale box, in text of
/// `size` pixels.
pub(crate) fn draw_key<'a, DB: DrawingBackend + 'a, CT: CoordTranslate>(
    chart: &mut ChartContext<'a, DB, CT>,
    corner: SeriesLabelPosition,
    size: f64,
) -> Result<(), RenderError> {
    chart
        .configure_series_labels()
        .position(corner)
        .background_style(WHITE.mix(0.85))
        .border_style(INK)
        .label_font((FONT, size).into_font().color(&INK))
        .draw()
        .map_err(draw_error)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_line_splits_where_its_third_coordinate_wraps() {
        // [analytic] times within a period of 1: 0.5, 0.9, then 0.1 (wrapped), 0.4; the step
        // from 0.9 to 0.1 crosses the wrap half way (0.1 to go, 0.1 after), so the first
        // piece ends at (1.5, 2, 1) and the second starts at (1.5, 2, 0)
        let points = [
            (1.0, 2.0, 0.5),
            (1.0, 2.0, 0.9),
            (2.0, 2.0, 0.1),
            (2.0, 2.0, 0.4),
        ];
        let pieces = split_where_it_wraps(points, Some((2, 1.0)));
        assert_eq!(pieces.len(), 2);
        assert_eq!(pieces[0].len(), 3);
        assert_eq!(pieces[1].len(), 3);
        let end = pieces[0][2];
        let start = pieces[1][0];
        assert!(
            (end.0 - 1.5).abs() < 1e-12 && (end.2 - 1.0).abs() < 1e-12,
            "{end:?}"
        );
        assert!((start.0 - 1.5).abs() < 1e-12 && start.2 == 0.0, "{start:?}");
        assert_eq!(pieces[1][2], (2.0, 2.0, 0.4));
        // no wrapping axis: one piece
        assert_eq!(split_where_it_wraps(points, None).len(), 1);
    }
}
