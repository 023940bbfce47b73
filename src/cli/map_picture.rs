//! The picture of a regime map: tiles coloured by regime, the parameters on the axes and a
//! caption with the fixed parameters and each cell's settle time and span.

use anyhow::Result;
use lamina_render::{Figure, GridAxis, MapTile, picture_title, regime_map_png, view_names};

use super::map_run::MapRun;

/// The caption: the parameters the map does not vary, then the time per cell and the
/// tolerances (`k3 = 1, zeta = 0.05   |   per cell: settle 300, span 300, rtol 1e-9, ...`).
pub fn map_caption(run: &MapRun) -> String {
    let scenario = &run.scenario;
    let mapped = [run.spec.x.parameter, run.spec.y.parameter];
    let fixed: Vec<String> = (scenario.parameters.iter().enumerate())
        .filter(|(idx, _)| !mapped.contains(idx))
        .map(|(_, p)| match &p.unit {
            Some(unit) => format!("{} = {} {unit}", p.name, p.value),
            None => format!("{} = {}", p.name, p.value),
        })
        .collect();
    let unit = scenario
        .time
        .unit
        .as_deref()
        .map(|u| format!(" {u}"))
        .unwrap_or_default();
    let source = match run.spec.source {
        lamina_core::sweep::SweepSource::Cut => "cut points",
        lamina_core::sweep::SweepSource::Strobe => "strobe samples",
    };
    let fixed = if fixed.is_empty() {
        "no other parameters".to_string()
    } else {
        fixed.join(", ")
    };
    format!(
        "{fixed}   |   per cell: settle {}{unit}, span {}{unit}, by {source}, rtol {:e}, atol {:e}",
        run.spec.settle, run.spec.span, scenario.integrator.rtol, scenario.integrator.atol
    )
}

/// The regime map of `run` as PNG bytes of `size` pixels.
pub fn map_png(size: (u32, u32), run: &MapRun) -> Result<Vec<u8>> {
    let scenario = &run.scenario;
    let figure = Figure {
        size,
        title: picture_title(&scenario.title, view_names::REGIME_MAP),
        caption: map_caption(run),
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
