//! The 3D view of the trajectory: any three coordinates in orthographic projection, turned by
//! dragging, zoomed by the wheel, with the cut plane drawn as a translucent polygon clipped to
//! the trajectory's box and a handle that drags the plane along its normal.

use egui::{Color32, Pos2, Rect, Sense, Shape, Stroke, Ui, Vec2, pos2, vec2};

use crate::results::{AxisLabels, PointCloud, Trajectory};

/// Camera and axis choice of the 3D view.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SpaceView {
    /// Turn about the vertical axis, radians.
    pub yaw: f32,
    /// Tilt, radians.
    pub pitch: f32,
    /// Magnification; 1 fits the box.
    pub zoom: f32,
    /// State indices on the three axes (the third is vertical).
    pub axes: [usize; 3],
}

impl Default for SpaceView {
    fn default() -> Self {
        Self {
            yaw: 0.6,
            pitch: 0.45,
            zoom: 1.0,
            axes: [0, 1, 2],
        }
    }
}

/// Value of a 3D-view axis: a state (index below `dim`), the time (`dim`), or the time within
/// the strobe period (`dim + 1`, the time modulo the period).
pub fn axis_value(axis: usize, state: &[f64], t: f64, period: Option<f64>) -> f64 {
    let dim = state.len();
    if axis < dim {
        state[axis]
    } else if axis == dim {
        t
    } else {
        period.map_or(t, |p| t.rem_euclid(p))
    }
}

/// Name of a 3D-view axis, with its unit.
pub fn axis_name(axis: usize, labels: &AxisLabels) -> String {
    let dim = labels.states.len();
    if axis < dim {
        labels.state(axis)
    } else if axis == dim {
        labels.time()
    } else {
        labels.time_within_period()
    }
}

/// The plane to draw: weights on the three shown axes and the right-hand side there.
pub struct PlaneGeometry {
    /// Weights of the three shown coordinates.
    pub normal: [f64; 3],
    /// `normal . p = offset` for shown points `p`.
    pub offset: f64,
}

/// Most points of the trajectory drawn (the dense path has at most 200,000); longer
/// trajectories are thinned for drawing only.
const MAX_DRAWN_SAMPLES: usize = 200_000;

/// Points per drawn piece of line (each piece one shade of the age colouring).
const LINE_CHUNK: usize = 256;

/// The data box of the view: centre and half-extent per axis.
#[derive(Clone, Copy)]
struct DataBox {
    lo: [f64; 3],
    hi: [f64; 3],
}

/// What a data box was computed from: the revisions of the trajectory and the points, the
/// axes and the period's bits.
type DataBoxKey = (u64, u64, [usize; 3], Option<u64>);

impl DataBox {
    /// The box of the data, computed again only when the data, the axes or the period changed
    /// (kept in the view's memory; a pass over 400,000 samples costs about a millisecond).
    fn cached(
        ui: &Ui,
        trajectory: &Trajectory,
        cloud: &PointCloud,
        axes: [usize; 3],
        period: Option<f64>,
    ) -> Option<Self> {
        let id = ui.scope_id().with("data box");
        let key: DataBoxKey = (
            trajectory.revision,
            cloud.revision,
            axes,
            period.map(f64::to_bits),
        );
        if let Some((k, b)) = ui.data(|d| d.get_temp::<(DataBoxKey, Option<Self>)>(id))
            && k == key
        {
            return b;
        }
        let b = Self::of(trajectory, cloud, axes, period);
        ui.data_mut(|d| d.insert_temp(id, (key, b)));
        b
    }

    fn of(
        trajectory: &Trajectory,
        cloud: &PointCloud,
        axes: [usize; 3],
        period: Option<f64>,
    ) -> Option<Self> {
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        let mut grow = |s: &[f64], t: f64| {
            for k in 0..3 {
                let v = axis_value(axes[k], s, t, period);
                if v.is_finite() {
                    lo[k] = lo[k].min(v);
                    hi[k] = hi[k].max(v);
                }
            }
        };
        for i in 0..trajectory.len() {
            grow(trajectory.state(i), trajectory.t[i]);
        }
        for i in 0..cloud.len() {
            grow(cloud.state(i), cloud.t[i]);
        }
        if lo.iter().zip(&hi).any(|(l, h)| l > h) {
            return None;
        }
        for k in 0..3 {
            if hi[k] - lo[k] < 1e-12 {
                lo[k] -= 0.5;
                hi[k] += 0.5;
            }
        }
        Some(Self { lo, hi })
    }

    /// Data point to the unit cube [-1, 1]^3.
    fn unit(&self, p: [f64; 3]) -> [f32; 3] {
        let mut u = [0.0f32; 3];
        for k in 0..3 {
            u[k] = (2.0 * (p[k] - self.lo[k]) / (self.hi[k] - self.lo[k]) - 1.0) as f32;
        }
        u
    }
}

/// Screen projection of unit-cube points.
struct Projection {
    centre: Pos2,
    scale: f32,
    yaw: (f32, f32),
    pitch: (f32, f32),
}

impl Projection {
    fn new(rect: Rect, view: &SpaceView) -> Self {
        Self {
            centre: rect.center(),
            scale: 0.36 * rect.width().min(rect.height()) * view.zoom,
            yaw: view.yaw.sin_cos(),
            pitch: view.pitch.sin_cos(),
        }
    }

    /// Screen position and depth (larger is nearer) of a unit-cube point.
    fn screen_from_unit(&self, u: [f32; 3]) -> (Pos2, f32) {
        let (sy, cy) = self.yaw;
        let (sp, cp) = self.pitch;
        let x = cy * u[0] - sy * u[1];
        let depth = sy * u[0] + cy * u[1];
        let up = cp * u[2] - sp * depth;
        let toward = sp * u[2] + cp * depth;
        (
            pos2(
                self.centre.x + self.scale * x,
                self.centre.y - self.scale * up,
            ),
            toward,
        )
    }
}

/// What the 3D view draws.
#[derive(Clone, Copy)]
pub struct SpaceScene<'a> {
    /// Axis labels of the states and the time.
    pub labels: &'a AxisLabels,
    /// The trajectory.
    pub trajectory: &'a Trajectory,
    /// Cut points, drawn as dots.
    pub cut_points: &'a PointCloud,
    /// The cut plane in the view's coordinates, if it is a plane.
    pub plane: Option<&'a PlaneGeometry>,
    /// Colours.
    pub colours: &'a SpaceColours,
    /// The strobe period, for the axis of the time within the period.
    pub period: Option<f64>,
    /// A periodic orbit to draw over the trajectory: times and states.
    pub orbit: &'a [(f64, Vec<f64>)],
    /// Resting points to mark: state and whether it is stable (filled) or not (hollow).
    pub resting: &'a [(Vec<f64>, bool)],
}

/// What the user did in the view.
#[derive(Default)]
pub struct SpaceResponse {
    /// New plane offset from dragging the handle (the drag goes on).
    pub new_offset: Option<f64>,
    /// A drag of the handle ended this frame.
    pub drag_ended: bool,
}

/// How far from the handle's centre (in points) a press grabs it.
const HANDLE_GRAB_RADIUS: f32 = 12.0;

impl SpaceView {
    /// Draws the view into the available space.
    pub fn ui(&mut self, ui: &mut Ui, scene: &SpaceScene<'_>) -> SpaceResponse {
        let SpaceScene {
            labels,
            trajectory,
            cut_points,
            plane,
            colours,
            period,
            orbit,
            resting,
        } = *scene;
        let mut out = SpaceResponse::default();
        let dim = labels.states.len();
        let n_axes = dim + if period.is_some() { 2 } else { 1 };
        ui.horizontal(|ui| {
            for (k, label) in ["across", "depth", "up"].into_iter().enumerate() {
                let current = axis_name(self.axes[k], labels);
                egui::ComboBox::from_id_salt(("space_axis", k))
                    .selected_text(current)
                    .width(56.0)
                    .show_ui(ui, |ui| {
                        for idx in 0..n_axes {
                            ui.selectable_value(&mut self.axes[k], idx, axis_name(idx, labels));
                        }
                    })
                    .response
                    .on_hover_text(format!("Coordinate shown {label}"));
            }
            if ui
                .small_button("reset view")
                .on_hover_text("Back to the default angle and zoom")
                .clicked()
            {
                let axes = self.axes;
                *self = Self {
                    axes,
                    ..Self::default()
                };
            }
        });
        // the axis of the time within the period may wait for the run to know its period
        for a in &mut self.axes {
            if *a >= dim + 2 {
                *a = 0;
            }
        }
        let (rect, response) = ui.allocate_exact_size(
            ui.available_size().max(vec2(50.0, 50.0)),
            Sense::click_and_drag(),
        );
        let painter = ui.painter_at(rect);
        painter.rect_filled(rect, 0.0, colours.background);
        let Some(data_box) = DataBox::cached(ui, trajectory, cut_points, self.axes, period) else {
            painter.text(
                rect.center(),
                egui::Align2::CENTER_CENTER,
                "no trajectory yet — press Run",
                egui::FontId::proportional(14.0),
                Color32::GRAY,
            );
            return out;
        };
        if response.hovered() {
            let scroll = ui.input(|i| i.smooth_scroll_delta.y);
            if scroll != 0.0 {
                self.zoom = (self.zoom * (scroll * 0.002).exp()).clamp(0.05, 50.0);
            }
        }
        let projection = Projection::new(rect, self);
        let handle = plane.and_then(|p| plane_polygon(p, &data_box).map(|poly| (p, poly)));
        let handle_pos = handle.as_ref().map(|(_, poly)| {
            let c = centroid(poly);
            projection.screen_from_unit(data_box.unit(c)).0
        });
        // the handle is grabbed when the press began on it (egui reports a drag only once
        // the pointer has moved a few pixels, by then possibly off the handle); a drag that
        // grabbed it moves the plane only, one that did not turns the view only
        let grab_id = response.id.with("handle");
        if response.drag_started() {
            let origin = ui
                .input(|i| i.pointer.press_origin())
                .or(response.interact_pointer_pos());
            let on_handle = handle_pos
                .zip(origin)
                .is_some_and(|(h, p)| h.distance(p) < HANDLE_GRAB_RADIUS);
            ui.memory_mut(|m| m.data.insert_temp(grab_id, on_handle));
        }
        let dragging_handle = ui.memory(|m| m.data.get_temp::<bool>(grab_id).unwrap_or(false));
        if response.dragged() {
            let delta = response.drag_delta();
            if dragging_handle {
                if let Some((p, poly)) = &handle {
                    out.new_offset = drag_plane(p, poly, &data_box, &projection, delta);
                }
            } else {
                self.yaw -= delta.x * 0.01;
                self.pitch = (self.pitch + delta.y * 0.01).clamp(-1.55, 1.55);
            }
        }
        if response.drag_stopped() {
            out.drag_ended = dragging_handle;
            ui.memory_mut(|m| m.data.insert_temp(grab_id, false));
        }
        if response.double_clicked() {
            let axes = self.axes;
            *self = Self {
                axes,
                ..Self::default()
            };
        }
        let projection = Projection::new(rect, self);
        draw_box(&painter, &projection, labels, self.axes);
        let wrapping_axis = self.axes.iter().position(|&a| a == dim + 1);
        // trajectory, older parts fainter, in pieces split where the time within the period
        // wraps (each piece closed at the wrap and the next opened there)
        let n = trajectory.len();
        let stride = n.div_ceil(MAX_DRAWN_SAMPLES).max(1);
        let wrap = wrapping_axis.zip(period);
        let points = (0..n).step_by(stride).map(|i| {
            let (s, t) = (trajectory.state(i), trajectory.t[i]);
            let v = self.axes.map(|a| axis_value(a, s, t, period));
            (v[0], v[1], v[2])
        });
        let pieces = lamina_render::split_where_it_wraps(points, wrap);
        let mut segments = Vec::new();
        let mut drawn = 0usize;
        let total = (n / stride).max(1);
        for piece in &pieces {
            let screen: Vec<Pos2> = piece
                .iter()
                .map(|&(a, b, c)| projection.screen_from_unit(data_box.unit([a, b, c])).0)
                .collect();
            for chunk_start in (0..screen.len().saturating_sub(1)).step_by(LINE_CHUNK) {
                let chunk_end = (chunk_start + LINE_CHUNK + 1).min(screen.len());
                let age = (drawn + chunk_start) as f32 / total as f32;
                let colour = colours.trajectory.gamma_multiply(0.25 + 0.75 * age);
                segments.push(Shape::line(
                    screen[chunk_start..chunk_end].to_vec(),
                    Stroke::new(1.0, colour),
                ));
            }
            drawn += piece.len();
        }
        painter.extend(segments);
        if let Some((_, poly)) = &handle {
            let points: Vec<Pos2> = poly
                .iter()
                .map(|p| projection.screen_from_unit(data_box.unit(*p)).0)
                .collect();
            painter.add(Shape::convex_polygon(
                points,
                colours.surface,
                Stroke::new(1.0, colours.surface.gamma_multiply(2.5)),
            ));
        }
        // the periodic orbit found in the analysis panel, bright and on top
        let orbit_points: Vec<Pos2> = orbit
            .iter()
            .map(|(t, s)| {
                projection
                    .screen_from_unit(
                        data_box.unit(self.axes.map(|a| axis_value(a, s, *t, period))),
                    )
                    .0
            })
            .collect();
        if orbit_points.len() > 1 {
            painter.add(Shape::line(
                orbit_points,
                Stroke::new(2.5, Color32::from_rgb(255, 255, 255)),
            ));
        }
        // resting points: stable filled, unstable hollow, at time 0 of a time axis
        for (state, stable) in resting {
            let u = data_box.unit(self.axes.map(|a| axis_value(a, state, 0.0, period)));
            let p = projection.screen_from_unit(u).0;
            let colour = Color32::from_rgb(120, 240, 150);
            if *stable {
                painter.circle_filled(p, 5.5, colour);
            } else {
                painter.circle_stroke(p, 5.5, Stroke::new(2.0, colour));
            }
        }
        // cut points as one mesh of small squares, thinned past MAX_DRAWN_SAMPLES / 3
        let n_cut = cut_points.len();
        let cut_stride = n_cut.div_ceil(MAX_DRAWN_SAMPLES / 3).max(1);
        let mut mesh = egui::Mesh::default();
        // few points (a settled orbit's, often on top of each other) get larger dots
        let dot = if n_cut < 5_000 { 4.5 } else { 2.6 };
        for i in (0..n_cut).step_by(cut_stride) {
            let s = cut_points.state(i);
            let u = data_box.unit(self.axes.map(|a| axis_value(a, s, cut_points.t[i], period)));
            let p = projection.screen_from_unit(u).0;
            mesh.add_colored_rect(
                Rect::from_center_size(p, vec2(dot, dot)),
                colours.cut_points,
            );
        }
        painter.add(mesh);
        if let Some(h) = handle_pos {
            let active = dragging_handle && response.dragged();
            painter.circle(
                h,
                if active { 8.0 } else { 6.0 },
                colours.surface.gamma_multiply(3.0),
                Stroke::new(1.5, Color32::WHITE),
            );
            if response
                .hover_pos()
                .is_some_and(|p| p.distance(h) < HANDLE_GRAB_RADIUS)
            {
                ui.ctx().set_cursor_icon(egui::CursorIcon::Grab);
            }
        }
        out
    }
}

/// Colours of the 3D view.
pub struct SpaceColours {
    /// Background.
    pub background: Color32,
    /// The trajectory line.
    pub trajectory: Color32,
    /// The cut plane fill.
    pub surface: Color32,
    /// Cut points.
    pub cut_points: Color32,
}

fn draw_box(
    painter: &egui::Painter,
    projection: &Projection,
    labels: &AxisLabels,
    axes: [usize; 3],
) {
    let stroke = Stroke::new(0.5, Color32::from_gray(90));
    let corners = |i: usize| {
        [
            if i & 1 == 0 { -1.0 } else { 1.0 },
            if i & 2 == 0 { -1.0 } else { 1.0 },
            if i & 4 == 0 { -1.0 } else { 1.0 },
        ]
    };
    for i in 0..8usize {
        for bit in [1usize, 2, 4] {
            if i & bit == 0 {
                let a = projection.screen_from_unit(corners(i)).0;
                let b = projection.screen_from_unit(corners(i | bit)).0;
                painter.line_segment([a, b], stroke);
            }
        }
    }
    let font = egui::FontId::proportional(12.0);
    for (k, end) in [
        [1.15f32, -1.0, -1.0],
        [-1.0, 1.15, -1.0],
        [-1.0, -1.0, 1.15],
    ]
    .into_iter()
    .enumerate()
    {
        let centre = projection.screen_from_unit(end).0;
        let colour = Color32::from_gray(170);
        let galley = painter.layout_no_wrap(axis_name(axes[k], labels), font.clone(), colour);
        // kept whole inside the view: a turned or zoomed box may put an axis end outside it
        let clip = painter.clip_rect();
        let half = galley.size() / 2.0;
        let x = centre.x.clamp(
            clip.left() + half.x,
            (clip.right() - half.x).max(clip.left() + half.x),
        );
        let y = centre.y.clamp(
            clip.top() + half.y,
            (clip.bottom() - half.y).max(clip.top() + half.y),
        );
        painter.galley(egui::pos2(x, y) - half, galley, colour);
    }
}

/// The plane clipped to the data box: the convex polygon where it meets the box's edges.
fn plane_polygon(plane: &PlaneGeometry, b: &DataBox) -> Option<Vec<[f64; 3]>> {
    let n = plane.normal;
    if n.iter().all(|&w| w == 0.0) {
        return None;
    }
    let corner = |i: usize| {
        [
            if i & 1 == 0 { b.lo[0] } else { b.hi[0] },
            if i & 2 == 0 { b.lo[1] } else { b.hi[1] },
            if i & 4 == 0 { b.lo[2] } else { b.hi[2] },
        ]
    };
    let g = |p: [f64; 3]| n[0] * p[0] + n[1] * p[1] + n[2] * p[2] - plane.offset;
    let mut points = Vec::new();
    for i in 0..8usize {
        for bit in [1usize, 2, 4] {
            if i & bit == 0 {
                let (p, q) = (corner(i), corner(i | bit));
                let (gp, gq) = (g(p), g(q));
                if (gp <= 0.0) != (gq <= 0.0) {
                    let s = gp / (gp - gq);
                    points.push([
                        p[0] + s * (q[0] - p[0]),
                        p[1] + s * (q[1] - p[1]),
                        p[2] + s * (q[2] - p[2]),
                    ]);
                }
            }
        }
    }
    if points.len() < 3 {
        return None;
    }
    // order around the centroid, in the plane's own 2D frame (scaled to the box)
    let c = centroid(&points);
    let scale = [b.hi[0] - b.lo[0], b.hi[1] - b.lo[1], b.hi[2] - b.lo[2]];
    let rel = |p: &[f64; 3]| {
        [
            (p[0] - c[0]) / scale[0],
            (p[1] - c[1]) / scale[1],
            (p[2] - c[2]) / scale[2],
        ]
    };
    let first = rel(&points[0]);
    let nn = [n[0] * scale[0], n[1] * scale[1], n[2] * scale[2]];
    let second = cross(nn, first);
    let mut keyed: Vec<(f64, [f64; 3])> = points
        .iter()
        .map(|p| {
            let r = rel(p);
            (dot(r, second).atan2(dot(r, first)), *p)
        })
        .collect();
    keyed.sort_by(|a, b| a.0.total_cmp(&b.0));
    Some(keyed.into_iter().map(|(_, p)| p).collect())
}

fn centroid(points: &[[f64; 3]]) -> [f64; 3] {
    let n = points.len().max(1) as f64;
    let mut c = [0.0; 3];
    for p in points {
        for k in 0..3 {
            c[k] += p[k] / n;
        }
    }
    c
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// The offset after dragging the handle by `delta` on screen: the drag is projected onto the
/// screen direction of the plane's normal.
fn drag_plane(
    plane: &PlaneGeometry,
    poly: &[[f64; 3]],
    b: &DataBox,
    projection: &Projection,
    delta: Vec2,
) -> Option<f64> {
    let n = plane.normal;
    let norm = dot(n, n).sqrt();
    if norm == 0.0 {
        return None;
    }
    let c = centroid(poly);
    // a step along the unit normal of a tenth of the box diagonal
    let diag =
        ((b.hi[0] - b.lo[0]).powi(2) + (b.hi[1] - b.lo[1]).powi(2) + (b.hi[2] - b.lo[2]).powi(2))
            .sqrt();
    let step = 0.1 * diag;
    let moved = [
        c[0] + step * n[0] / norm,
        c[1] + step * n[1] / norm,
        c[2] + step * n[2] / norm,
    ];
    let a = projection.screen_from_unit(b.unit(c)).0;
    let z = projection.screen_from_unit(b.unit(moved)).0;
    let v = z - a;
    let len2 = v.length_sq();
    if len2 < 1.0 {
        return None; // the normal points at the viewer: dragging would be ill-defined
    }
    let along = (delta.x * v.x + delta.y * v.y) / len2; // in units of `step`
    Some(plane.offset + f64::from(along) * step * norm)
}
