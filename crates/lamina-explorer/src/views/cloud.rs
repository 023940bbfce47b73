//! A 2D view of a point cloud (cut points or strobe samples) in two chosen coordinates,
//! coloured by arrival order or by return time. Up to [`MESH_LIMIT`] points are drawn as
//! small squares in one mesh; larger clouds as a density image binned at screen resolution,
//! so 200,000 points pan and zoom smoothly.

use egui::{Color32, ColorImage, Mesh, Pos2, Rect, TextureHandle, TextureOptions, Ui, pos2, vec2};
use egui_plot::PlotPoint;

use super::palette::ramp;
use super::plot_input;
use crate::results::{AxisLabels, PointCloud};
use crate::vocabulary::CloudAxis;

/// Clouds up to this size are drawn point by point.
pub const MESH_LIMIT: usize = 40_000;

/// How points are coloured.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum ColourBy {
    /// Early points blue, late points coral.
    Arrival,
    /// Short return times blue, long ones coral.
    ReturnTime,
}

/// Per-view state: colouring, the selected point, the density image cache.
#[derive(Default)]
pub struct CloudView {
    /// Selected point index.
    pub selected: Option<usize>,
    density: Option<(DensityKey, TextureHandle)>,
}

#[derive(Clone, PartialEq)]
struct DensityKey {
    revision: u64,
    bounds: [f64; 4],
    size: [usize; 2],
    axes: [CloudAxis; 2],
    colour_by: ColourBy,
}

/// What the user did in the view.
#[derive(Default)]
pub struct CloudResponse {
    /// A point was clicked: its index.
    pub clicked: Option<usize>,
    /// The plot's screen rectangle (for PNG export).
    pub rect: Option<Rect>,
}

/// A point the caller wants marked (for example the current parameter's cycle points).
pub struct Mark {
    /// Position in the view's coordinates.
    pub at: [f64; 2],
    /// Colour.
    pub colour: Color32,
}

impl CloudView {
    /// Draws `cloud` in coordinates `axes` with axis labels from `labels`.
    #[allow(clippy::too_many_arguments)]
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        id: &str,
        labels: &AxisLabels,
        cloud: &PointCloud,
        axes: [CloudAxis; 2],
        colour_by: ColourBy,
        marks: &[Mark],
    ) -> CloudResponse {
        let mut out = CloudResponse::default();
        let (colour_key, key_range) = colour_keys(cloud, colour_by);
        let extent = extent(cloud, axes);
        let plot = plot_input::plot(id)
            .x_axis_label(axes[0].label(labels))
            .y_axis_label(axes[1].label(labels))
            .show_crosshair(false);
        let response = plot.show(ui, |plot_ui| {
            plot_input::wheel_zoom(plot_ui);
            // invisible corners so that automatic bounds fit the cloud
            plot_input::fit_to(plot_ui, extent.and_then(|e| e.window));
            plot_ui.pointer_coordinate()
        });
        let transform = response.transform;
        let frame = *transform.frame();
        out.rect = Some(response.response.rect);
        let painter = ui.painter_at(frame);
        let n = cloud.len();
        if n <= MESH_LIMIT {
            let mut mesh = Mesh::default();
            let half = if n < 2000 { 1.8 } else { 1.1 };
            for (i, key) in colour_key.iter().enumerate().take(n) {
                let p = transform.position_from_point(&PlotPoint::new(
                    cloud.value(i, axes[0]),
                    cloud.value(i, axes[1]),
                ));
                if frame.expand(2.0).contains(p) {
                    let u = normalise(*key, key_range);
                    mesh.add_colored_rect(
                        Rect::from_center_size(p, vec2(2.0 * half, 2.0 * half)),
                        ramp(u),
                    );
                }
            }
            painter.add(mesh);
        } else {
            let b = transform.bounds();
            let key = DensityKey {
                revision: cloud.revision,
                bounds: [b.min()[0], b.min()[1], b.max()[0], b.max()[1]],
                size: [
                    (frame.width() / 2.0).max(1.0) as usize,
                    (frame.height() / 2.0).max(1.0) as usize,
                ],
                axes,
                colour_by,
            };
            if self.density.as_ref().is_none_or(|(k, _)| *k != key) {
                let image = density_image(cloud, &key, &colour_key, key_range);
                match &mut self.density {
                    Some((k, texture)) => {
                        texture.set(image, TextureOptions::NEAREST);
                        *k = key;
                    }
                    None => {
                        self.density = Some((
                            key,
                            ui.ctx().load_texture(
                                format!("{id}-density"),
                                image,
                                TextureOptions::NEAREST,
                            ),
                        ))
                    }
                }
            }
            if let Some((_, texture)) = &self.density {
                painter.image(
                    texture.id(),
                    frame,
                    Rect::from_min_max(pos2(0.0, 0.0), pos2(1.0, 1.0)),
                    Color32::WHITE,
                );
            }
        }
        for mark in marks {
            let p = transform.position_from_point(&PlotPoint::new(mark.at[0], mark.at[1]));
            painter.circle_stroke(p, 6.0, egui::Stroke::new(2.0, mark.colour));
        }
        if let Some(sel) = self.selected.filter(|&s| s < n) {
            let p = transform.position_from_point(&PlotPoint::new(
                cloud.value(sel, axes[0]),
                cloud.value(sel, axes[1]),
            ));
            painter.circle_stroke(p, 5.0, egui::Stroke::new(1.5, Color32::WHITE));
        }
        if response.response.clicked()
            && let Some(pointer) = response.response.interact_pointer_pos()
        {
            let nearest = nearest_point(
                cloud,
                axes,
                |x, y| transform.position_from_point(&PlotPoint::new(x, y)),
                pointer,
            );
            self.selected = nearest;
            out.clicked = nearest;
        }
        legend_ui(&painter, frame, colour_by, key_range, n);
        if let Some(e) = extent
            && e.one_point
        {
            // a label of its own (not painted text), so that it can be read out and tested
            // bottom left, clear of the colour key in the top right corner
            let note = Rect::from_min_size(
                frame.left_bottom() + vec2(8.0, -24.0),
                vec2((frame.width() - 16.0).max(60.0), 18.0),
            );
            ui.put(
                note,
                egui::Label::new(
                    egui::RichText::new(lamina_render::one_point_note(n, e.spread))
                        .color(Color32::from_gray(220)),
                )
                .selectable(false)
                .truncate(),
            );
        }
        if let Some(pointer) = response.response.hover_pos()
            && let Some(k) = nearest_point(
                cloud,
                axes,
                |x, y| transform.position_from_point(&PlotPoint::new(x, y)),
                pointer,
            )
        {
            let text = samples_near(cloud, axes, k);
            let galley = painter.layout_no_wrap(
                text,
                egui::FontId::proportional(12.0),
                Color32::from_gray(230),
            );
            let at = (pointer + vec2(14.0, 14.0)).min(frame.right_bottom() - galley.size());
            painter.rect_filled(
                Rect::from_min_size(at, galley.size()).expand(3.0),
                3.0,
                Color32::from_black_alpha(200),
            );
            painter.galley(at, galley, Color32::WHITE);
        }
        out
    }
}

fn colour_keys(cloud: &PointCloud, colour_by: ColourBy) -> (Vec<f64>, (f64, f64)) {
    let n = cloud.len();
    match colour_by {
        ColourBy::Arrival => (
            (0..n).map(|i| i as f64).collect(),
            (0.0, n.saturating_sub(1).max(1) as f64),
        ),
        ColourBy::ReturnTime => {
            let keys: Vec<f64> = cloud.return_time.clone();
            let finite = keys.iter().copied().filter(|v| v.is_finite());
            let lo = finite.clone().fold(f64::INFINITY, f64::min);
            let hi = finite.fold(f64::NEG_INFINITY, f64::max);
            let range = if lo.is_finite() {
                (lo, if hi > lo { hi } else { lo + 1.0 })
            } else {
                (0.0, 1.0)
            };
            (keys, range)
        }
    }
}

fn normalise(v: f64, (lo, hi): (f64, f64)) -> f32 {
    if !v.is_finite() {
        return 0.0;
    }
    ((v - lo) / (hi - lo)) as f32
}

/// The cloud's window by the one span rule, and whether all its points are one point.
#[derive(Clone, Copy)]
struct Extent {
    window: Option<[f64; 4]>,
    one_point: bool,
    spread: f64,
}

fn extent(cloud: &PointCloud, axes: [CloudAxis; 2]) -> Option<Extent> {
    let finite = |i: usize| {
        let (x, y) = (cloud.value(i, axes[0]), cloud.value(i, axes[1]));
        (x.is_finite() && y.is_finite()).then_some((x, y))
    };
    let x = plot_input::range((0..cloud.len()).filter_map(finite).map(|p| p.0))?;
    let y = plot_input::range((0..cloud.len()).filter_map(finite).map(|p| p.1))?;
    use lamina_render::span::is_one_value;
    Some(Extent {
        window: plot_input::fitted_window(x, y),
        one_point: is_one_value(x.0, x.1) && is_one_value(y.0, y.1),
        spread: (x.1 - x.0).max(y.1 - y.0),
    })
}

/// The relative distance under which samples count as on the same point: a thousandth of the
/// span under which a cloud is one point.
const SAME_POINT: f64 = 1e-3 * lamina_render::span::MIN_RELATIVE_SPAN;

/// `9,750 samples within 8.7e-10 of this point` for point `k` (within [`SAME_POINT`] of its
/// size in both coordinates shown), or `1 sample at this point (k = 3)`.
pub fn samples_near(cloud: &PointCloud, axes: [CloudAxis; 2], k: usize) -> String {
    let (x, y) = (cloud.value(k, axes[0]), cloud.value(k, axes[1]));
    let tol_x = SAME_POINT * x.abs().max(f64::MIN_POSITIVE);
    let tol_y = SAME_POINT * y.abs().max(f64::MIN_POSITIVE);
    let count = (0..cloud.len())
        .filter(|&i| {
            (cloud.value(i, axes[0]) - x).abs() <= tol_x
                && (cloud.value(i, axes[1]) - y).abs() <= tol_y
        })
        .count();
    if count <= 1 {
        format!("1 sample at this point (k = {k})")
    } else {
        format!(
            "{} samples within {:.1e} of this point",
            lamina_render::thousands(count),
            tol_x.max(tol_y)
        )
    }
}

fn density_image(
    cloud: &PointCloud,
    key: &DensityKey,
    colour_key: &[f64],
    range: (f64, f64),
) -> ColorImage {
    let [w, h] = key.size;
    let [x0, y0, x1, y1] = key.bounds;
    let mut count = vec![0u32; w * h];
    let mut latest = vec![0.0f64; w * h];
    let (sx, sy) = (w as f64 / (x1 - x0), h as f64 / (y1 - y0));
    for (i, &colour) in colour_key.iter().enumerate().take(cloud.len()) {
        let (x, y) = (cloud.value(i, key.axes[0]), cloud.value(i, key.axes[1]));
        let (cx, cy) = ((x - x0) * sx, (y1 - y) * sy);
        if cx >= 0.0 && cy >= 0.0 && (cx as usize) < w && (cy as usize) < h {
            let cell = cy as usize * w + cx as usize;
            count[cell] += 1;
            latest[cell] = colour;
        }
    }
    let max = count.iter().copied().max().unwrap_or(1).max(1) as f32;
    let pixels = count
        .iter()
        .zip(&latest)
        .map(|(&c, &k)| {
            if c == 0 {
                Color32::TRANSPARENT
            } else {
                let alpha = 0.45 + 0.55 * ((c as f32).ln_1p() / max.ln_1p());
                ramp(normalise(k, range)).gamma_multiply(alpha)
            }
        })
        .collect();
    ColorImage::new([w, h], pixels)
}

fn nearest_point(
    cloud: &PointCloud,
    axes: [CloudAxis; 2],
    screen: impl Fn(f64, f64) -> Pos2,
    pointer: Pos2,
) -> Option<usize> {
    let mut best = None;
    let mut best_d = 10.0f32;
    for i in 0..cloud.len() {
        let d = screen(cloud.value(i, axes[0]), cloud.value(i, axes[1])).distance(pointer);
        if d < best_d {
            best_d = d;
            best = Some(i);
        }
    }
    best
}

fn legend_ui(
    painter: &egui::Painter,
    frame: Rect,
    colour_by: ColourBy,
    (lo, hi): (f64, f64),
    n: usize,
) {
    if n == 0 {
        return;
    }
    let width = 90.0;
    let top_right = pos2(frame.right() - width - 10.0, frame.top() + 8.0);
    let bar = Rect::from_min_size(top_right + vec2(0.0, 14.0), vec2(width, 6.0));
    let mut mesh = Mesh::default();
    let steps = 24;
    for s in 0..steps {
        let r = Rect::from_min_size(
            pos2(
                bar.left() + bar.width() * s as f32 / steps as f32,
                bar.top(),
            ),
            vec2(bar.width() / steps as f32 + 0.5, bar.height()),
        );
        mesh.add_colored_rect(r, ramp(s as f32 / (steps - 1) as f32));
    }
    painter.add(mesh);
    let font = egui::FontId::proportional(10.0);
    let text_colour = Color32::from_gray(190);
    let title = match colour_by {
        ColourBy::Arrival => "arrival order".to_string(),
        ColourBy::ReturnTime => "return time".to_string(),
    };
    painter.text(
        top_right,
        egui::Align2::LEFT_TOP,
        title,
        font.clone(),
        text_colour,
    );
    let (a, b) = match colour_by {
        ColourBy::Arrival => ("first".to_string(), "last".to_string()),
        ColourBy::ReturnTime => (format!("{lo:.4}"), format!("{hi:.4}")),
    };
    painter.text(
        bar.left_bottom() + vec2(0.0, 2.0),
        egui::Align2::LEFT_TOP,
        a,
        font.clone(),
        text_colour,
    );
    painter.text(
        bar.right_bottom() + vec2(0.0, 2.0),
        egui::Align2::RIGHT_TOP,
        b,
        font,
        text_colour,
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use lamina_core::run::CutPoint;

    #[test]
    fn hovering_a_stack_of_samples_counts_them() {
        // [analytic] 9,750 samples at (0.8673, 1.25) up to 1e-12, then 250 elsewhere
        let mut cloud = PointCloud::new(2);
        for i in 0..10_000 {
            let state = if i < 9_750 {
                vec![0.8673 + 1e-12 * (i % 7) as f64, 1.25]
            } else {
                vec![i as f64, -1.0]
            };
            cloud.push_cut(&CutPoint {
                t: i as f64,
                return_time: Some(1.0),
                state,
            });
        }
        let axes = [CloudAxis::State(0), CloudAxis::State(1)];
        let text = samples_near(&cloud, axes, 17);
        assert!(text.starts_with("9,750 samples within "), "{text}");
        assert_eq!(
            samples_near(&cloud, axes, 9_900),
            "1 sample at this point (k = 9900)"
        );
    }
}
