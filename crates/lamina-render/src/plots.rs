//! The 3D trajectory and the 2D point cloud, and the frame and axes every 2D picture shares.

use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

use crate::figure::{FONT, Figure, RenderError, draw_error, encode_png, register_font};

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
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if lo > hi {
        return (-1.0, 1.0);
    }
    let pad = ((hi - lo) * 0.04)
        .max(1e-9 * lo.abs().max(1.0))
        .max(f64::MIN_POSITIVE);
    if hi - lo < 1e-12 * lo.abs().max(1.0) {
        return (lo - 0.5 * lo.abs().max(1.0), hi + 0.5 * hi.abs().max(1.0));
    }
    (lo - pad, hi + pad)
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
        .y_label_area_size((f64::from(w) * 0.09) as u32)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(draw_error)?;
    chart
        .configure_mesh()
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

/// A 2D scatter of `points`, coloured by `colour_keys` (order or return time) if given.
pub fn scatter_png(
    figure: &Figure,
    points: &[(f64, f64)],
    colour_keys: Option<&[f64]>,
) -> Result<Vec<u8>, RenderError> {
    picture(figure, |root| {
        let body = body(figure, root);
        let mut chart = axes(figure, &body, points)?;
        let (klo, khi) = colour_keys.map_or((0.0, 1.0), |k| range_of(k.iter().copied()));
        let radius = dot_radius(points.len());
        chart
            .draw_series(points.iter().enumerate().map(|(i, &(x, y))| {
                let colour = match colour_keys {
                    Some(k) => ramp((k.get(i).copied().unwrap_or(f64::NAN) - klo) / (khi - klo)),
                    None => TRACE,
                };
                Circle::new((x, y), radius, colour.filled())
            }))
            .map_err(draw_error)?;
        Ok(())
    })
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

/// Splits a line of 3D points into pieces wherever coordinate `axis` (0, 1 or 2) falls
/// from one point to the next, as the time within the drive period does when it wraps around; with no axis, one
/// piece.
pub fn split_where_it_wraps(
    points: impl IntoIterator<Item = (f64, f64, f64)>,
    axis: Option<usize>,
) -> Vec<Vec<(f64, f64, f64)>> {
    let coord = |q: (f64, f64, f64), k: usize| [q.0, q.1, q.2].get(k).copied();
    let mut pieces: Vec<Vec<(f64, f64, f64)>> = vec![Vec::new()];
    for p in points {
        let wrapped = match (axis, pieces.last().and_then(|piece| piece.last())) {
            (Some(k), Some(&last)) => coord(p, k) < coord(last, k),
            _ => false,
        };
        if wrapped {
            pieces.push(Vec::new());
        }
        if let Some(piece) = pieces.last_mut() {
            piece.push(p);
        }
    }
    pieces
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_line_splits_where_its_third_coordinate_wraps() {
        // [analytic] 0.5, 0.9, then 0.1 (wrapped), 0.4: two pieces of two points
        let points = [0.5, 0.9, 0.1, 0.4].map(|within| (1.0, 2.0, within));
        let pieces = split_where_it_wraps(points, Some(2));
        assert_eq!(pieces.len(), 2);
        assert_eq!(pieces[0], vec![(1.0, 2.0, 0.5), (1.0, 2.0, 0.9)]);
        assert_eq!(pieces[1], vec![(1.0, 2.0, 0.1), (1.0, 2.0, 0.4)]);
        // no wrapping axis: one piece
        assert_eq!(split_where_it_wraps(points, None).len(), 1);
    }
}
