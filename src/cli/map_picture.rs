//! The picture of a regime map: tiles coloured by regime, the parameters on the axes and a
//! caption with the fixed parameters and each cell's settle time and span.

use anyhow::Result;
use lamina_render::{Figure, GridAxis, MapTile, picture_title, regime_map_png, view_names};

use super::map_run::MapRun;

/// The regime map of `run` as PNG bytes of `size` pixels.
pub fn map_png(size: (u32, u32), run: &MapRun) -> Result<Vec<u8>> {
    let scenario = &run.scenario;
    let figure = Figure {
        size,
        title: picture_title(&scenario.title, view_names::REGIME_MAP),
        caption: run.scenario.map_caption(&run.spec),
        x_label: scenario.parameter_label(run.spec.x.parameter),
        y_label: scenario.parameter_label(run.spec.y.parameter),
    };
    let axis = |a: &lamina_core::regime_map::MapAxisSpec| GridAxis {
        from: a.from,
        to: a.to,
        values: a.values,
    };
    let tiles: Vec<MapTile> = run
        .cells
        .iter()
        .map(|c| MapTile {
            x: c.x,
            y: c.y,
            regime: c.regime,
        })
        .collect();
    Ok(regime_map_png(
        &figure,
        axis(&run.spec.x),
        axis(&run.spec.y),
        &tiles,
    )?)
}
