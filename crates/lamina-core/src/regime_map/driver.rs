//! Running the cells of a regime map: all at once on rayon's current pool (every cell from
//! the scenario's start), or one after the other, each from where the one before ended.

use std::ops::ControlFlow;

use rayon::prelude::*;

use super::cell::{MapCell, MapProblem, run_cell};
use crate::Interrupt;
use crate::sweep::SweepSource;

/// Why a map could not run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum MapError {
    /// The map is classified by cut points but there is no cut (or by strobe samples
    /// without a strobe).
    #[error("the map is classified by {0} but the scenario has none")]
    MissingSource(&'static str),
    /// An axis names a parameter the model does not have.
    #[error("the map's {0} axis varies a parameter the model does not have")]
    NoParameter(&'static str),
    /// A cell number is past the last cell.
    #[error("cell {index} is past the map's {n_cells} cells")]
    NoCell {
        /// The cell asked for.
        index: usize,
        /// Cells of the map.
        n_cells: usize,
    },
}

fn check(problem: &MapProblem<'_>, indices: &[usize]) -> Result<(), MapError> {
    let n_parameters = problem.model.parameters().len();
    if problem.map.x.parameter >= n_parameters {
        return Err(MapError::NoParameter("x"));
    }
    if problem.map.y.parameter >= n_parameters {
        return Err(MapError::NoParameter("y"));
    }
    let n_cells = problem.map.n_cells();
    if let Some(&index) = indices.iter().find(|&&i| i >= n_cells) {
        return Err(MapError::NoCell { index, n_cells });
    }
    match problem.map.source {
        SweepSource::Cut if problem.cut.is_none() => Err(MapError::MissingSource("cut points")),
        SweepSource::Strobe if (problem.strobe_for)(problem.model).is_none() => {
            Err(MapError::MissingSource("strobe samples"))
        }
        _ => Ok(()),
    }
}

/// Runs the cells `indices`, each from the model's start at the run's start time, in
/// parallel on rayon's current pool. `each` sees every cell as it finishes (in any order,
/// from any pool thread); the result is sorted by cell number. Cells not finished because of
/// the interrupt are left out.
///
/// # Errors
/// [`MapError`] when the map does not fit the model, cut or strobe.
pub fn run_cells(
    problem: &MapProblem<'_>,
    indices: &[usize],
    interrupt: &Interrupt,
    each: &(dyn Fn(&MapCell) + Sync),
) -> Result<Vec<MapCell>, MapError> {
    check(problem, indices)?;
    let start = problem.model.start();
    let mut cells: Vec<MapCell> = indices
        .par_iter()
        .filter_map(|&index| {
            if interrupt.is_raised() {
                return None;
            }
            let cell = run_cell(problem, index, (problem.run.t_start, start), interrupt);
            if cell.is_cancelled() {
                return None;
            }
            each(&cell);
            Some(cell)
        })
        .collect();
    cells.sort_by_key(|c| c.index);
    Ok(cells)
}

/// Runs the cells `indices` one after the other, each starting at the time and state where
/// the one before ended (the first, and any after an escape or a failure, from the model's
/// start): a map that follows its attractors from neighbour to neighbour. `each` sees every
/// cell as it finishes; `Break` or the interrupt stops the map.
///
/// # Errors
/// [`MapError`] when the map does not fit the model, cut or strobe.
pub fn run_cells_in_order(
    problem: &MapProblem<'_>,
    indices: &[usize],
    interrupt: &Interrupt,
    each: &mut dyn FnMut(&MapCell) -> ControlFlow<()>,
) -> Result<(), MapError> {
    check(problem, indices)?;
    let scenario_start = (problem.run.t_start, problem.model.start().to_vec());
    let mut start = scenario_start.clone();
    for &index in indices {
        if interrupt.is_raised() {
            break;
        }
        let cell = run_cell(problem, index, (start.0, &start.1), interrupt);
        if cell.is_cancelled() {
            break;
        }
        start = match cell.regime {
            super::Regime::Escaped { .. } | super::Regime::Failed(_) => scenario_start.clone(),
            _ => cell.end.clone(),
        };
        if each(&cell).is_break() {
            break;
        }
    }
    Ok(())
}
