//! What the mouse does in every 2D plot of the window: the wheel zooms about the pointer
//! (egui_plot would pan), dragging pans, a double click fits the data again; and the one
//! rule for a plot's automatic window, never narrower than a millionth of the values' size
//! (`lamina_render::span`, which the PNG pictures use too).

use egui::Vec2;
use egui_plot::{Plot, PlotPoints, PlotUi, Points};

/// How strongly one wheel step (in points of scroll) zooms.
const WHEEL_ZOOM_RATE: f32 = 0.002;

/// A plot with the window's mouse rules: wheel scrolling off (the wheel zooms through
/// [`wheel_zoom`], called inside `show`), dragging pans, a double click resets.
pub fn plot(id: &str) -> Plot<'static> {
    Plot::new(id)
        .allow_scroll(false)
        .allow_drag(true)
        .allow_zoom(true)
        .allow_double_click_reset(true)
}

/// Zooms the plot about the pointer by the mouse wheel while it is hovered (scrolling up
/// zooms in). Call inside `Plot::show` of a plot made by [`plot`].
pub fn wheel_zoom(plot_ui: &mut PlotUi<'_>) {
    wheel_zoom_along(plot_ui, [true, true]);
}

/// [`wheel_zoom`] along the horizontal axis only (a time plot: the wheel narrows the time
/// window and the values stay in view).
pub fn wheel_zoom_time(plot_ui: &mut PlotUi<'_>) {
    wheel_zoom_along(plot_ui, [true, false]);
}

fn wheel_zoom_along(plot_ui: &mut PlotUi<'_>, along: [bool; 2]) {
    if !plot_ui.response().hovered() {
        return;
    }
    let scroll = plot_ui.ctx().input(|i| i.smooth_scroll_delta);
    let amount = if scroll.y != 0.0 { scroll.y } else { scroll.x };
    if amount != 0.0 {
        let factor = (amount * WHEEL_ZOOM_RATE).exp();
        let on = |yes: bool| if yes { factor } else { 1.0 };
        plot_ui.zoom_bounds_around_hovered(Vec2::new(on(along[0]), on(along[1])));
    }
}

/// The window that shows points ranging over `x` and `y` (each `(lo, hi)`), by the one
/// span rule: `[x0, y0, x1, y1]`.
pub fn fitted_window(x: (f64, f64), y: (f64, f64)) -> Option<[f64; 4]> {
    let (x0, x1) = lamina_render::span::axis_range(x.0, x.1)?;
    let (y0, y1) = lamina_render::span::axis_range(y.0, y.1)?;
    Some([x0, y0, x1, y1])
}

/// Invisible corner points that make the plot's automatic bounds fit `window`.
pub fn fit_to(plot_ui: &mut PlotUi<'_>, window: Option<[f64; 4]>) {
    if let Some([x0, y0, x1, y1]) = window {
        plot_ui.points(
            Points::new("", PlotPoints::new(vec![[x0, y0], [x1, y1]]))
                .radius(0.0)
                .color(egui::Color32::TRANSPARENT)
                .allow_hover(false),
        );
    }
}

/// `(lo, hi)` of the finite values, or `None`.
pub fn range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    lamina_render::span::value_range(values)
}

/// Fits the plot to `window` every frame (a growing run's whole range) until the user zooms
/// or pans it (wheel, drag, pinch); from then on the user's view is kept, until a double
/// click fits it again. Call inside `Plot::show`, before [`wheel_zoom`].
pub fn fit_until_user_moves(plot_ui: &mut PlotUi<'_>, window: Option<[f64; 4]>) {
    let response = plot_ui.response().clone();
    let ctx = plot_ui.ctx().clone();
    let id = response.id.with("moved by the user");
    let mut moved = ctx.data(|d| d.get_temp::<bool>(id)).unwrap_or(false);
    if response.double_clicked() {
        moved = false;
    }
    let (scroll, zoom) = ctx.input(|i| (i.smooth_scroll_delta, i.zoom_delta()));
    if response.dragged() || (response.hovered() && (scroll != Vec2::ZERO || zoom != 1.0)) {
        moved = true;
    }
    ctx.data_mut(|d| d.insert_temp(id, moved));
    if !moved && let Some([x0, y0, x1, y1]) = window {
        plot_ui.set_plot_bounds(egui_plot::PlotBounds::from_min_max([x0, y0], [x1, y1]));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use egui_kittest::Harness;

    /// A turn of the mouse wheel away from the user by `dy` points.
    fn wheel_up(dy: f32) -> egui::Event {
        egui::Event::MouseWheel {
            unit: egui::MouseWheelUnit::Point,
            delta: egui::vec2(0.0, dy),
            modifiers: egui::Modifiers::NONE,
            phase: egui::TouchPhase::Move,
            source: egui::MouseWheelSource::Wheel,
        }
    }

    #[test]
    fn the_wheel_zooms_a_plot_instead_of_panning_it() {
        // the last frame's bounds: [x0, y0, x1, y1]
        let mut h = Harness::builder()
            .with_size(egui::vec2(400.0, 300.0))
            .build_ui_state(
                |ui, bounds: &mut [f64; 4]| {
                    let response = plot("wheel").show(ui, |plot_ui| {
                        wheel_zoom(plot_ui);
                        fit_to(plot_ui, Some([0.0, 0.0, 10.0, 10.0]));
                    });
                    let b = response.transform.bounds();
                    *bounds = [b.min()[0], b.min()[1], b.max()[0], b.max()[1]];
                },
                [0.0; 4],
            );
        h.run();
        let before = *h.state();
        h.hover_at(egui::pos2(200.0, 150.0));
        h.event(wheel_up(120.0));
        for _ in 0..10 {
            h.step();
        }
        let after = *h.state();
        // [common practice] scrolling up over a plot zooms in about the pointer: both spans
        // shrink and the window stays around the pointer (not moved off as by a pan)
        let (w0, w1) = (before[2] - before[0], after[2] - after[0]);
        let (h0, h1) = (before[3] - before[1], after[3] - after[1]);
        assert!(w1 < 0.9 * w0 && h1 < 0.9 * h0, "{before:?} -> {after:?}");
        let centre = |b: [f64; 4]| [(b[0] + b[2]) / 2.0, (b[1] + b[3]) / 2.0];
        let (c0, c1) = (centre(before), centre(after));
        assert!((c0[0] - c1[0]).abs() < 0.2 * w0, "{before:?} -> {after:?}");
    }

    #[test]
    fn a_growing_plot_follows_its_data_until_the_user_zooms() {
        // state: the window to fit, and the last frame's bounds
        let mut h = Harness::builder()
            .with_size(egui::vec2(400.0, 300.0))
            .build_ui_state(
                |ui, (window, bounds): &mut ([f64; 4], [f64; 4])| {
                    let w = *window;
                    let response = plot("grow").show(ui, |plot_ui| {
                        fit_until_user_moves(plot_ui, Some(w));
                        wheel_zoom(plot_ui);
                    });
                    let b = response.transform.bounds();
                    *bounds = [b.min()[0], b.min()[1], b.max()[0], b.max()[1]];
                },
                ([0.0, -1.0, 2.0, 1.0], [0.0; 4]),
            );
        h.run();
        // [common practice] the run grows from t = 2 to t = 1000: the plot shows all of it
        h.state_mut().0 = [0.0, -1.0, 1000.0, 1.0];
        for _ in 0..3 {
            h.step();
        }
        let b = h.state().1;
        assert!(b[0] <= 0.0 && b[2] >= 1000.0, "{b:?}");
        // the user zooms: the user's view stays while the data grows further
        h.hover_at(egui::pos2(200.0, 150.0));
        h.event(wheel_up(200.0));
        for _ in 0..10 {
            h.step();
        }
        let zoomed = h.state().1;
        assert!(zoomed[2] - zoomed[0] < 900.0, "{zoomed:?}");
        h.state_mut().0 = [0.0, -1.0, 2000.0, 1.0];
        for _ in 0..3 {
            h.step();
        }
        assert_eq!(h.state().1, zoomed);
    }
}
