//! The branch picture: a followed branch over the orbit diagram, stable parts solid,
//! unstable parts dashed, the special points marked, with a legend in words.

use plotters::element::DashedPathElement;
use plotters::prelude::*;

use crate::figure::{FONT, Figure, RenderError, draw_error};
use crate::plots::{INK, draw_key, picture, range_of};

/// One piece of a branch, drawn as one line: stable or not throughout.
#[derive(Clone, Debug, PartialEq)]
pub struct BranchLine {
    /// (parameter, coordinate) points in branch order.
    pub points: Vec<(f64, f64)>,
    /// Stable (drawn solid) or unstable (dashed).
    pub stable: bool,
}

/// A special point to mark.
#[derive(Clone, Debug, PartialEq)]
pub struct BranchMark {
    /// The parameter value.
    pub x: f64,
    /// The coordinate.
    pub y: f64,
    /// What it is, in words (`period doubling`); marks with the same words share a symbol
    /// and one legend entry.
    pub label: String,
}

/// The cloud of the orbit diagram.
const CLOUD: RGBColor = RGBColor(178, 186, 200);
/// The branch.
const BRANCH: RGBColor = RGBColor(24, 78, 140);
/// The marks' colours, one per kind in order of appearance.
const MARKS: [RGBColor; 6] = [
    RGBColor(214, 96, 44),
    RGBColor(46, 150, 88),
    RGBColor(164, 52, 128),
    RGBColor(196, 150, 20),
    RGBColor(40, 40, 40),
    RGBColor(90, 120, 210),
];

/// Draws `lines` (and `marks`) over the orbit diagram `cloud` ((parameter, coordinate)
/// points; may be empty) into a PNG.
pub fn branch_png(
    figure: &Figure,
    cloud: &[(f64, f64)],
    lines: &[BranchLine],
    marks: &[BranchMark],
) -> Result<Vec<u8>, RenderError> {
    picture(figure, |root| {
        let (w, h) = figure.size;
        let font = |fraction: f64, min: f64| (f64::from(h) * fraction).max(min);
        let body = root.margin(8, font(0.05, 20.0) as u32, 8, 16);
        let xs = cloud
            .iter()
            .map(|p| p.0)
            .chain(lines.iter().flat_map(|l| l.points.iter().map(|p| p.0)))
            .chain(marks.iter().map(|m| m.x));
        let ys = cloud
            .iter()
            .map(|p| p.1)
            .chain(lines.iter().flat_map(|l| l.points.iter().map(|p| p.1)))
            .chain(marks.iter().map(|m| m.y));
        let (x0, x1) = range_of(xs);
        let (y0, y1) = range_of(ys);
        let mut chart = ChartBuilder::on(&body)
            .caption(
                &figure.title,
                (FONT, font(0.035, 14.0)).into_font().color(&INK),
            )
            .x_label_area_size((f64::from(h) * 0.08) as u32)
            .y_label_area_size((f64::from(w) * 0.09) as u32)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(draw_error)?;
        chart
            .configure_mesh()
            .x_desc(&figure.x_label)
            .y_desc(&figure.y_label)
            .label_style((FONT, font(0.02, 11.0)).into_font().color(&INK))
            .axis_desc_style((FONT, font(0.025, 12.0)).into_font().color(&INK))
            .light_line_style(RGBColor(236, 238, 242))
            .draw()
            .map_err(draw_error)?;
        if !cloud.is_empty() {
            let radius = if cloud.len() > 20_000 { 1 } else { 2 };
            chart
                .draw_series(
                    cloud
                        .iter()
                        .map(|&(x, y)| Circle::new((x, y), radius, CLOUD.filled())),
                )
                .map_err(draw_error)?
                .label("orbit diagram (sweep)")
                .legend(|(x, y)| Circle::new((x + 10, y), 3, CLOUD.filled()));
        }
        let width = (f64::from(h) / 450.0).round().max(1.0) as u32 + 1;
        let solid = BRANCH.stroke_width(width);
        let dash = (f64::from(h) / 90.0).max(4.0);
        let mut labelled = [false, false];
        for line in lines {
            if line.points.len() < 2 {
                continue;
            }
            let slot = usize::from(!line.stable);
            let series = if line.stable {
                chart.draw_series(LineSeries::new(line.points.iter().copied(), solid))
            } else {
                chart.draw_series(DashedLineSeries::new(
                    line.points.iter().copied(),
                    dash,
                    0.8 * dash,
                    solid,
                ))
            }
            .map_err(draw_error)?;
            if !labelled[slot] {
                labelled[slot] = true;
                if line.stable {
                    series
                        .label("stable")
                        .legend(move |(x, y)| PathElement::new([(x, y), (x + 24, y)], solid));
                } else {
                    series.label("unstable").legend(move |(x, y)| {
                        DashedPathElement::new([(x, y), (x + 24, y)], 5, 4, solid)
                    });
                }
            }
        }
        let mut kinds: Vec<&str> = Vec::new();
        for mark in marks {
            if !kinds.contains(&mark.label.as_str()) {
                kinds.push(&mark.label);
            }
        }
        let size = (f64::from(h) / 110.0).max(5.0) as i32;
        for (idx, kind) in kinds.iter().enumerate() {
            let colour = MARKS[idx % MARKS.len()];
            let shape = idx % 4;
            let points: Vec<(f64, f64)> = marks
                .iter()
                .filter(|m| m.label == *kind)
                .map(|m| (m.x, m.y))
                .collect();
            let outline = INK.stroke_width(1);
            chart
                .draw_series(points.iter().map(|&p| {
                    EmptyElement::at(p)
                        + Polygon::new(corners(shape, size), colour.filled())
                        + PathElement::new(corners(shape, size), outline)
                }))
                .map_err(draw_error)?
                .label(*kind)
                .legend(move |(x, y)| {
                    EmptyElement::at((x + 12, y))
                        + Polygon::new(corners(shape, size), colour.filled())
                        + PathElement::new(corners(shape, size), outline)
                });
        }
        // the branch and its marks weigh more than the cloud: the legend may hide some dots,
        // not the branch
        let corner = emptiest_corner(
            cloud
                .iter()
                .map(|&p| (p, 1))
                .chain(
                    lines
                        .iter()
                        .flat_map(|l| line_samples(&l.points).into_iter().map(|p| (p, 50))),
                )
                .chain(marks.iter().map(|m| ((m.x, m.y), 500))),
            (x0, x1),
            (y0, y1),
        );
        draw_key(&mut chart, corner, font(0.022, 11.0))?;
        Ok(())
    })
}

/// The corner of the plot (a box of 40 % of its width and 30 % of its height) with the
/// least weight of drawn points, for the legend: the upper right one when they tie.
fn emptiest_corner(
    points: impl Iterator<Item = ((f64, f64), usize)>,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> SeriesLabelPosition {
    // upper right, upper left, lower right, lower left
    let mut counts = [0usize; 4];
    for ((x, y), weight) in points {
        let u = (x - x0) / (x1 - x0);
        let v = (y - y0) / (y1 - y0);
        let right = u >= 0.6;
        let left = u <= 0.4;
        let top = v >= 0.7;
        let bottom = v <= 0.3;
        for (count, inside) in
            counts
                .iter_mut()
                .zip([right && top, left && top, right && bottom, left && bottom])
        {
            *count += if inside { weight } else { 0 };
        }
    }
    match (0..4).min_by_key(|&i| counts[i]) {
        Some(1) => SeriesLabelPosition::UpperLeft,
        Some(2) => SeriesLabelPosition::LowerRight,
        Some(3) => SeriesLabelPosition::LowerLeft,
        _ => SeriesLabelPosition::UpperRight,
    }
}

/// Points along a line, ten on every piece between its corners (so that a long straight
/// piece through a corner of the plot counts there).
fn line_samples(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut samples = Vec::with_capacity(points.len() * 10);
    for pair in points.windows(2) {
        let ((xa, ya), (xb, yb)) = (pair[0], pair[1]);
        for k in 0..10 {
            let f = f64::from(k) / 10.0;
            samples.push((xa + f * (xb - xa), ya + f * (yb - ya)));
        }
    }
    samples.extend(points.last());
    samples
}

/// The corners of one of four mark shapes (an octagon for a disc, a square, a triangle, a
/// diamond) around the origin, in pixels, closed (the first corner repeated).
fn corners(shape: usize, size: i32) -> Vec<(i32, i32)> {
    let r = f64::from(size);
    let mut points: Vec<(i32, i32)> = match shape {
        0 => (0..8)
            .map(|k| {
                let a = std::f64::consts::PI * (0.125 + 0.25 * f64::from(k));
                ((r * a.cos()).round() as i32, (r * a.sin()).round() as i32)
            })
            .collect(),
        1 => vec![(-size, -size), (size, -size), (size, size), (-size, size)],
        2 => vec![(0, -size - 2), (size + 2, size), (-size - 2, size)],
        _ => vec![(0, -size - 2), (size + 2, 0), (0, size + 2), (-size - 2, 0)],
    };
    points.push(points[0]);
    points
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_branch_picture_is_a_png_of_the_asked_size() {
        let figure = Figure {
            size: (640, 480),
            title: "branch".into(),
            caption: "a = 1".into(),
            x_label: "a".into(),
            y_label: "x".into(),
        };
        let lines = [
            BranchLine {
                points: vec![(0.0, 0.0), (1.0, 1.0)],
                stable: true,
            },
            BranchLine {
                points: vec![(1.0, 1.0), (2.0, 0.5)],
                stable: false,
            },
        ];
        let marks = [BranchMark {
            x: 1.0,
            y: 1.0,
            label: "fold".into(),
        }];
        let bytes = branch_png(&figure, &[(0.5, 0.2)], &lines, &marks).expect("drawn");
        // [common practice] the PNG signature, then the IHDR chunk with width and height
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
        assert_eq!(
            u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]),
            640
        );
        assert_eq!(
            u32::from_be_bytes([bytes[20], bytes[21], bytes[22], bytes[23]]),
            480
        );
    }
}
