//! The regime-map view: one tile per cell in its regime's colour (the palette of the PNG and
//! of `lamina map --png`, periodic cells shaded by their number of returns), cells not yet
//! done left blank, the two parameters on the axes and a legend in words. Hovering a cell
//! shows its values; a click picks it.

use egui::{Align2, Color32, FontId, Rect, Sense, Stroke, Ui, pos2, vec2};
use lamina_core::regime_map::{MapCell, Regime, RegimeMapSpec};

/// Colour of a regime on screen: the PNG's colour.
pub fn regime_colour(regime: &Regime) -> Color32 {
    let [r, g, b] = lamina_render::regime_colour(regime);
    Color32::from_rgb(r, g, b)
}

/// A cell's values in words: both parameters, the regime, its returns and its largest
/// exponent.
pub fn cell_readout(cell: &MapCell, names: &(String, String)) -> String {
    let returns = cell
        .regime
        .returns()
        .map_or_else(|| "—".to_string(), |k| k.to_string());
    let lyapunov = cell
        .lyapunov
        .filter(|l| l.is_finite())
        .map_or_else(|| "—".to_string(), |l| format!("{l:.4}"));
    let mut text = format!(
        "{} = {}, {} = {}: {}, returns: {returns}, largest exponent: {lyapunov}",
        names.0,
        cell.x,
        names.1,
        cell.y,
        lamina_render::regime_legend(&cell.regime),
    );
    if !cell.settled {
        text.push_str(" (not settled: the regime it approaches)");
    }
    text
}

/// Space kept left and below the grid for the axis numbers and names.
const MARGIN: [f32; 2] = [56.0, 36.0];

/// Width of the legend to the right of the grid.
const LEGEND_WIDTH: f32 = 150.0;

/// Draws the map with a line below it giving the hovered cell's values; returns the cell
/// clicked, if any.
pub fn regime_map_ui<'a>(
    ui: &mut Ui,
    spec: &RegimeMapSpec,
    cells: &'a [MapCell],
    labels: &(String, String),
    names: &(String, String),
    current: Option<(f64, f64)>,
) -> Option<&'a MapCell> {
    // a line below the map for the hovered cell's values
    let size = (ui.available_size() - vec2(0.0, 22.0)).max(vec2(120.0, 80.0));
    let (rect, response) = ui.allocate_exact_size(size, Sense::click());
    response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Image, true, "regime map cells"));
    let painter = ui.painter_at(rect);
    let ink = ui.visuals().text_color();
    let font = FontId::proportional(11.0);
    let grid = Rect::from_min_max(
        pos2(rect.left() + MARGIN[0], rect.top() + 4.0),
        pos2(
            (rect.right() - LEGEND_WIDTH).max(rect.left() + MARGIN[0] + 20.0),
            rect.bottom() - MARGIN[1],
        ),
    );
    let (nx, ny) = (spec.x.n_values().max(1), spec.y.n_values().max(1));
    let (w, h) = (grid.width() / nx as f32, grid.height() / ny as f32);
    // rows by y from the bottom, as the PNG: the y parameter grows upwards
    let cell_rect = |i: usize, j: usize| {
        Rect::from_min_size(
            pos2(
                grid.left() + i as f32 * w,
                grid.bottom() - (j + 1) as f32 * h,
            ),
            vec2(w, h),
        )
    };
    painter.rect_filled(grid, 0.0, ui.visuals().extreme_bg_color);
    for cell in cells {
        let (i, j) = spec.cell_position(cell.index);
        painter.rect_filled(cell_rect(i, j), 0.0, regime_colour(&cell.regime));
    }
    painter.rect_stroke(grid, 0.0, Stroke::new(1.0, ink), egui::StrokeKind::Outside);
    // axis ends and names
    let number = |v: f64| {
        format!("{v:.4}")
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_string()
    };
    painter.text(
        grid.left_bottom() + vec2(0.0, 2.0),
        Align2::LEFT_TOP,
        number(spec.x.from),
        font.clone(),
        ink,
    );
    painter.text(
        grid.right_bottom() + vec2(0.0, 2.0),
        Align2::RIGHT_TOP,
        number(spec.x.to),
        font.clone(),
        ink,
    );
    painter.text(
        pos2(grid.center().x, grid.bottom() + 18.0),
        Align2::CENTER_TOP,
        &labels.0,
        font.clone(),
        ink,
    );
    painter.text(
        grid.left_bottom() - vec2(4.0, 0.0),
        Align2::RIGHT_BOTTOM,
        number(spec.y.from),
        font.clone(),
        ink,
    );
    painter.text(
        grid.left_top() - vec2(4.0, 0.0),
        Align2::RIGHT_TOP,
        number(spec.y.to),
        font.clone(),
        ink,
    );
    painter.text(
        pos2(rect.left() + 2.0, grid.center().y),
        Align2::LEFT_CENTER,
        &labels.1,
        font.clone(),
        ink,
    );
    // the model's current parameters
    if let Some((x, y)) = current {
        let fx = grid_fraction(x, spec.x.from, spec.x.to, nx);
        let fy = grid_fraction(y, spec.y.from, spec.y.to, ny);
        if let (Some(fx), Some(fy)) = (fx, fy) {
            let at = pos2(
                grid.left() + fx * grid.width(),
                grid.bottom() - fy * grid.height(),
            );
            painter.circle_stroke(at, 5.0, Stroke::new(2.0, Color32::WHITE));
            painter.circle_stroke(at, 6.5, Stroke::new(1.0, Color32::BLACK));
        }
    }
    legend(&painter, grid, cells, ink, &font);
    let pointer = response.hover_pos().filter(|p| grid.contains(*p));
    let under = pointer.and_then(|p| {
        let i = (((p.x - grid.left()) / w) as usize).min(nx - 1);
        let j = (((grid.bottom() - p.y) / h) as usize).min(ny - 1);
        let index = spec.cell_index(i, j);
        let at = cells.binary_search_by_key(&index, |c| c.index).ok()?;
        Some(&cells[at])
    });
    if let Some(cell) = under {
        let (i, j) = spec.cell_position(cell.index);
        painter.rect_stroke(
            cell_rect(i, j),
            0.0,
            Stroke::new(2.0, ink),
            egui::StrokeKind::Inside,
        );
    }
    let readout = match under {
        Some(cell) => egui::RichText::new(cell_readout(cell, names))
            .monospace()
            .small(),
        None => {
            egui::RichText::new("hover a cell to see its values; click it to run the model there")
                .weak()
                .small()
        }
    };
    ui.add(egui::Label::new(readout).truncate());
    if response.clicked() { under } else { None }
}

/// Where `v` lies across a grid of `n` values from `from` to `to` drawn as `n` equal cells
/// (0 the left edge of the first, 1 the right edge of the last); `None` outside.
fn grid_fraction(v: f64, from: f64, to: f64, n: usize) -> Option<f32> {
    let t = if n > 1 && to != from {
        (v - from) / (to - from) * (n - 1) as f64 + 0.5
    } else {
        0.5
    };
    let f = t / n as f64;
    (0.0..=1.0).contains(&f).then_some(f as f32)
}

/// The legend of the regimes present, in the PNG's order and words.
fn legend(painter: &egui::Painter, grid: Rect, cells: &[MapCell], ink: Color32, font: &FontId) {
    let mut present: Vec<(String, Color32, (usize, usize))> = Vec::new();
    for cell in cells {
        let label = lamina_render::regime_legend(&cell.regime);
        if !present.iter().any(|(l, ..)| *l == label) {
            let order = match cell.regime {
                Regime::Resting => (0, 0),
                Regime::Periodic { returns } => (1, returns),
                Regime::QuasiPeriodic => (2, 0),
                Regime::Chaotic => (3, 0),
                Regime::Escaped { .. } => (4, 0),
                Regime::Failed(_) => (5, 0),
            };
            present.push((label, regime_colour(&cell.regime), order));
        }
    }
    present.sort_by_key(|(_, _, order)| *order);
    for (row, (label, colour, _)) in present.iter().enumerate() {
        let top = grid.top() + row as f32 * 18.0;
        let swatch = Rect::from_min_size(pos2(grid.right() + 10.0, top), vec2(12.0, 12.0));
        painter.rect_filled(swatch, 0.0, *colour);
        painter.rect_stroke(
            swatch,
            0.0,
            Stroke::new(1.0, ink),
            egui::StrokeKind::Outside,
        );
        painter.text(
            swatch.right_center() + vec2(6.0, 0.0),
            Align2::LEFT_CENTER,
            label,
            font.clone(),
            ink,
        );
    }
}
