//! A regime map's cells as CSV, the one writer `lamina map --out` and the window's export
//! share, so both write the same bytes.

use std::io::Write;

use lamina_core::regime_map::MapCell;

use crate::{ExportError, MapCsv};

/// Writes `cells` (in the order given: rows by y, then x, for a whole map) under the header
/// of the two mapped parameters `names`; returns the inner writer.
///
/// # Errors
/// [`ExportError`] when writing fails.
pub fn write_map_cells<W: Write>(
    out: W,
    names: (&str, &str),
    cells: &[MapCell],
) -> Result<W, ExportError> {
    let mut csv = MapCsv::new(out, names.0, names.1)?;
    for cell in cells {
        csv.write_cell(
            cell.x,
            cell.y,
            cell.regime.word(),
            cell.regime.returns(),
            cell.lyapunov,
        )?;
    }
    csv.finish()
}

#[cfg(test)]
mod tests {
    use lamina_core::regime_map::Regime;

    use super::*;

    fn cell(index: usize, x: f64, y: f64, regime: Regime, lyapunov: Option<f64>) -> MapCell {
        MapCell {
            index,
            x,
            y,
            regime,
            lyapunov,
            settled: true,
            n_points: 10,
            end: (0.0, vec![0.0]),
        }
    }

    #[test]
    fn cells_are_written_with_words_counts_and_empty_fields() {
        let cells = [
            cell(0, 0.1, 0.8, Regime::Resting, Some(-0.5)),
            cell(1, 0.6, 0.8, Regime::Periodic { returns: 2 }, None),
        ];
        let bytes = write_map_cells(Vec::new(), ("a", "w"), &cells).expect("written");
        // [common practice] CSV (RFC 4180): a header, then one row per cell; the columns and
        // words as PRODUCT.md gives them, an unknown value left empty
        assert_eq!(
            String::from_utf8(bytes).expect("UTF-8"),
            "a,w,regime,returns,lyapunov\n0.1,0.8,resting,,-0.5\n0.6,0.8,periodic,2,\n"
        );
    }
}
