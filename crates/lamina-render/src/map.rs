//! The regime map: one filled tile per cell in the colour of its regime (periodic cells
//! shaded by their number of returns, as the orbit diagram colours orbits), axes named by the
//! two parameters and a legend in words beside the plot.

use lamina_core::recurrence::RecurrenceKind;
use lamina_core::regime_map::Regime;
use plotters::prelude::*;

use crate::figure::{FONT, Figure, RenderError, draw_error};
use crate::orbit::recurrence_colour;
use crate::plots::{INK, axes, body, font_size, picture};

/// One cell of a regime map picture.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapTile {
    /// The x parameter's value.
    pub x: f64,
    /// The y parameter's value.
    pub y: f64,
    /// The cell's regime.
    pub regime: Regime,
}

/// One axis of the grid: first value, last value, number of values.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GridAxis {
    /// First value.
    pub from: f64,
    /// Last value.
    pub to: f64,
    /// Number of values, both ends included.
    pub values: u32,
}

impl GridAxis {
    /// Half the distance between neighbouring values (half the span for a single value).
    fn half_step(&self) -> f64 {
        let span = (self.to - self.from).abs();
        let half = if self.values > 1 {
            0.5 * span / f64::from(self.values - 1)
        } else {
            0.5 * self.from.abs().max(1.0)
        };
        if half > 0.0 { half } else { 0.5 }
    }
}

/// The colour of a regime in Lamina's palette: resting a pale stone, periodic along the
/// ramp by its number of returns (the orbit diagram's colours), quasi-periodic violet,
/// chaotic coral, escaped near-black, failed light grey.
pub fn regime_colour(regime: &Regime) -> [u8; 3] {
    match regime {
        Regime::Resting => [222, 214, 196],
        Regime::Periodic { returns } => recurrence_colour(RecurrenceKind::Returns(*returns)),
        Regime::QuasiPeriodic => [146, 104, 188],
        Regime::Chaotic => [228, 96, 70],
        Regime::Escaped { .. } => [44, 44, 52],
        Regime::Failed(_) => [190, 192, 198],
    }
}

/// The legend's words for a regime (`periodic, 2 returns`).
pub fn regime_legend(regime: &Regime) -> String {
    match regime {
        Regime::Periodic { returns: 1 } => "periodic, 1 return".to_string(),
        Regime::Periodic { returns } => format!("periodic, {returns} returns"),
        Regime::QuasiPeriodic => "quasi-periodic".to_string(),
        other => other.word().to_string(),
    }
}

/// The order of regimes in the legend.
fn legend_order(regime: &Regime) -> (usize, usize) {
    match regime {
        Regime::Resting => (0, 0),
        Regime::Periodic { returns } => (1, *returns),
        Regime::QuasiPeriodic => (2, 0),
        Regime::Chaotic => (3, 0),
        Regime::Escaped { .. } => (4, 0),
        Regime::Failed(_) => (5, 0),
    }
}

/// A regime map: every tile a filled rectangle one grid step wide and high, centred on its
/// parameter values, with a legend of the regimes present to the right of the plot. Cells
/// without a tile (those of other shards) stay white.
pub fn regime_map_png(
    figure: &Figure,
    x_axis: GridAxis,
    y_axis: GridAxis,
    tiles: &[MapTile],
) -> Result<Vec<u8>, RenderError> {
    let (hx, hy) = (x_axis.half_step(), y_axis.half_step());
    let corners = [
        (
            x_axis.from.min(x_axis.to) - hx,
            y_axis.from.min(y_axis.to) - hy,
        ),
        (
            x_axis.from.max(x_axis.to) + hx,
            y_axis.from.max(y_axis.to) + hy,
        ),
    ];
    let mut present: Vec<(String, [u8; 3], (usize, usize))> = Vec::new();
    for tile in tiles {
        let label = regime_legend(&tile.regime);
        if !present.iter().any(|(l, ..)| *l == label) {
            let order = legend_order(&tile.regime);
            present.push((label, regime_colour(&tile.regime), order));
        }
    }
    present.sort_by_key(|(_, _, order)| *order);
    picture(figure, |root| {
        let body = body(figure, root);
        let (width, _) = body.dim_in_pixel();
        let (plot, legend) = body.split_horizontally((f64::from(width) * 0.8) as u32);
        let mut chart = axes(figure, &plot, &corners)?;
        chart
            .draw_series(tiles.iter().map(|tile| {
                let [r, g, b] = regime_colour(&tile.regime);
                Rectangle::new(
                    [(tile.x - hx, tile.y - hy), (tile.x + hx, tile.y + hy)],
                    RGBColor(r, g, b).filled(),
                )
            }))
            .map_err(draw_error)?;
        let size = font_size(figure, 0.022, 11.0);
        let line = (size * 1.6) as i32;
        let top = (font_size(figure, 0.035, 14.0) * 2.5) as i32;
        for (row, (label, [r, g, b], _)) in present.iter().enumerate() {
            let y = top + row as i32 * line;
            let swatch = line * 2 / 3;
            legend
                .draw(&Rectangle::new(
                    [(12, y), (12 + swatch, y + swatch)],
                    RGBColor(*r, *g, *b).filled(),
                ))
                .map_err(draw_error)?;
            legend
                .draw(&Rectangle::new([(12, y), (12 + swatch, y + swatch)], INK))
                .map_err(draw_error)?;
            legend
                .draw(&Text::new(
                    label.clone(),
                    (20 + swatch, y),
                    (FONT, size).into_font().color(&INK),
                ))
                .map_err(draw_error)?;
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use lamina_core::regime_map::Failure;

    #[test]
    fn regimes_have_distinct_colours_and_a_map_draws() {
        let regimes = [
            Regime::Resting,
            Regime::Periodic { returns: 1 },
            Regime::Periodic { returns: 2 },
            Regime::Periodic { returns: 12 },
            Regime::QuasiPeriodic,
            Regime::Chaotic,
            Regime::Escaped { t: 1.0 },
            Regime::Failed(Failure::NoExponent),
        ];
        for (i, a) in regimes.iter().enumerate() {
            for b in &regimes[i + 1..] {
                assert_ne!(regime_colour(a), regime_colour(b), "{a} and {b}");
            }
        }
        let axis = GridAxis {
            from: 0.0,
            to: 1.0,
            values: 3,
        };
        let tiles: Vec<MapTile> = (0..9)
            .map(|i| MapTile {
                x: 0.5 * (i % 3) as f64,
                y: 0.5 * (i / 3) as f64,
                regime: regimes[i % regimes.len()],
            })
            .collect();
        let figure = Figure {
            size: (320, 240),
            title: "map".into(),
            caption: "caption".into(),
            x_label: "a".into(),
            y_label: "b".into(),
        };
        let png = regime_map_png(&figure, axis, axis, &tiles).expect("drawn");
        // [common practice] a PNG file starts with its 8-byte signature
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    }
}
