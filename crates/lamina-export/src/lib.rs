//! Lamina's exports: CSV point sets with the columns of the product brief, written through
//! an atomic file so a failed export never replaces a good file (and a link, device or FIFO
//! is written through, never replaced).

mod atomic;
mod csv_points;
mod map_cells;

pub use atomic::{
    AtomicFile, FileIdentity, UNFINISHED, Written, beside, write_atomically, write_bytes_atomically,
};
pub use csv_points::{
    BranchCsv, CutCsv, MapCsv, StrobeCsv, SweepCsv, TrajectoryCsv, format_number,
};
pub use map_cells::write_map_cells;

/// Errors of an export.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    /// Reading or writing a file failed.
    #[error("{path}: {source}")]
    Io {
        /// The file concerned.
        path: String,
        /// The underlying error.
        source: std::io::Error,
    },
    /// Writing CSV failed.
    #[error("CSV output: {0}")]
    Csv(#[from] csv::Error),
}
