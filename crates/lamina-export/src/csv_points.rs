//! CSV writers for cut points, strobe samples, trajectories, sweeps, branches and regime maps,
//! with the column layout of the product brief and numbers in shortest round-trip form.

use std::io::Write;

use lamina_core::run::{CutPoint, StrobeSample};

use crate::ExportError;

/// Formats `v` so that parsing it gives back exactly `v`: the shortest digits that round-trip
/// (Ryū), with `.0` on whole numbers and an exponent below `1e-5` and from `1e16` up. Rust's
/// `f64` parser and Python's `float()` both read it.
pub fn format_number(v: f64) -> String {
    ryu::Buffer::new().format(v).to_string()
}

/// A CSV error as an export error; a failed write stays an I/O error with its kind, so a
/// caller can tell a closed pipe from a full disk.
fn output_error(err: csv::Error) -> ExportError {
    if !err.is_io_error() {
        return ExportError::Csv(err);
    }
    let source = match err.into_kind() {
        csv::ErrorKind::Io(source) => source,
        other => std::io::Error::other(format!("{other:?}")),
    };
    ExportError::Io {
        path: "CSV output".into(),
        source,
    }
}

/// Bytes the CSV writer gathers before it hands them to the output in one write.
const BUFFER_BYTES: usize = 64 * 1024;

/// The part every writer shares: the CSV writer with a large buffer, the header, and the
/// number formatters, which write each field straight into that buffer (no string per field).
struct Rows<W: Write> {
    out: csv::Writer<W>,
    integers: itoa::Buffer,
    floats: ryu::Buffer,
}

/// One field of a row.
enum Field {
    /// A row or point count.
    Count(u64),
    /// A number, in the form of [`format_number`].
    Number(f64),
    /// A word.
    Word(&'static str),
    /// An empty cell.
    Empty,
}

impl<W: Write> Rows<W> {
    /// Writes the header: the `leading` columns, then the state names.
    fn new(out: W, leading: &[&str], state_names: &[String]) -> Result<Self, ExportError> {
        let mut out = csv::WriterBuilder::new()
            .has_headers(false)
            .buffer_capacity(BUFFER_BYTES)
            .from_writer(out);
        let header = leading
            .iter()
            .copied()
            .chain(state_names.iter().map(String::as_str));
        out.write_record(header).map_err(output_error)?;
        Ok(Self {
            out,
            integers: itoa::Buffer::new(),
            floats: ryu::Buffer::new(),
        })
    }

    /// Writes `fields` followed by the numbers of `state`, then ends the row.
    fn write<const N: usize>(
        &mut self,
        fields: [Field; N],
        state: &[f64],
    ) -> Result<(), ExportError> {
        for field in fields {
            match field {
                Field::Count(k) => self.out.write_field(self.integers.format(k)),
                Field::Number(v) => self.out.write_field(self.floats.format(v)),
                Field::Word(word) => self.out.write_field(word),
                Field::Empty => self.out.write_field([]),
            }
            .map_err(output_error)?;
        }
        for &v in state {
            self.out
                .write_field(self.floats.format(v))
                .map_err(output_error)?;
        }
        self.out.write_record(None::<&[u8]>).map_err(output_error)
    }

    /// Flushes and returns the inner writer.
    fn finish(self) -> Result<W, ExportError> {
        self.out.into_inner().map_err(|e| ExportError::Io {
            path: "CSV output".into(),
            source: e.into_error(),
        })
    }
}

/// Writes cut points: `k,t,return_time,<state names>`; `return_time` is empty for `k = 0`.
pub struct CutCsv<W: Write> {
    rows: Rows<W>,
    k: u64,
}

impl<W: Write> CutCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(out, &["k", "t", "return_time"], state_names)?,
            k: 0,
        })
    }

    /// Writes one point as row `k` (counting from 0).
    pub fn write(&mut self, point: &CutPoint) -> Result<(), ExportError> {
        let return_time = match point.return_time {
            Some(r) if self.k > 0 => Field::Number(r),
            _ => Field::Empty,
        };
        self.rows.write(
            [Field::Count(self.k), Field::Number(point.t), return_time],
            &point.state,
        )?;
        self.k += 1;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}

/// Writes strobe samples: `k,t,<state names>`.
pub struct StrobeCsv<W: Write> {
    rows: Rows<W>,
    k: u64,
}

impl<W: Write> StrobeCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(out, &["k", "t"], state_names)?,
            k: 0,
        })
    }

    /// Writes one sample as row `k` (counting from 0).
    pub fn write(&mut self, sample: &StrobeSample) -> Result<(), ExportError> {
        self.rows.write(
            [Field::Count(self.k), Field::Number(sample.t)],
            &sample.state,
        )?;
        self.k += 1;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}

/// Writes trajectory samples: `t,<state names>`.
pub struct TrajectoryCsv<W: Write> {
    rows: Rows<W>,
}

impl<W: Write> TrajectoryCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(out, &["t"], state_names)?,
        })
    }

    /// Writes the state at time `t`.
    pub fn write(&mut self, t: f64, state: &[f64]) -> Result<(), ExportError> {
        self.rows.write([Field::Number(t)], state)
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}

/// Writes sweep points: `<parameter name>,k,<state names>`, `k` counting the kept points of
/// each parameter value from 0.
pub struct SweepCsv<W: Write> {
    rows: Rows<W>,
}

impl<W: Write> SweepCsv<W> {
    /// Writes the header for the swept parameter and `state_names`.
    pub fn new(out: W, parameter: &str, state_names: &[String]) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(out, &[parameter, "k"], state_names)?,
        })
    }

    /// Writes the kept points of one parameter value.
    pub fn write_column(&mut self, value: f64, points: &[Vec<f64>]) -> Result<(), ExportError> {
        for (k, state) in points.iter().enumerate() {
            self.rows
                .write([Field::Number(value), Field::Count(k as u64)], state)?;
        }
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}

/// Writes the points of a branch: `<parameter name>,stable,period,<state names>`; `stable` is
/// `true` or `false`, `period` is empty for a resting point.
pub struct BranchCsv<W: Write> {
    rows: Rows<W>,
}

impl<W: Write> BranchCsv<W> {
    /// Writes the header for the branch's parameter and `state_names`.
    pub fn new(out: W, parameter: &str, state_names: &[String]) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(out, &[parameter, "stable", "period"], state_names)?,
        })
    }

    /// Writes one point of the branch.
    pub fn write_point(
        &mut self,
        value: f64,
        stable: bool,
        period: Option<f64>,
        state: &[f64],
    ) -> Result<(), ExportError> {
        let stable = Field::Word(if stable { "true" } else { "false" });
        let period = period.map_or(Field::Empty, Field::Number);
        self.rows
            .write([Field::Number(value), stable, period], state)
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}

/// Writes the cells of a regime map: `<x parameter>,<y parameter>,regime,returns,lyapunov`;
/// `returns` is empty unless the regime is `periodic`, `lyapunov` empty when no estimate was
/// made. The caller writes the cells by rows (y outer, x inner).
pub struct MapCsv<W: Write> {
    rows: Rows<W>,
}

impl<W: Write> MapCsv<W> {
    /// Writes the header for the two mapped parameters.
    pub fn new(out: W, x_parameter: &str, y_parameter: &str) -> Result<Self, ExportError> {
        Ok(Self {
            rows: Rows::new(
                out,
                &[x_parameter, y_parameter, "regime", "returns", "lyapunov"],
                &[],
            )?,
        })
    }

    /// Writes one cell: its parameter values, its regime's word, its number of returns and
    /// its largest exponent.
    pub fn write_cell(
        &mut self,
        x: f64,
        y: f64,
        regime: &'static str,
        returns: Option<usize>,
        lyapunov: Option<f64>,
    ) -> Result<(), ExportError> {
        let returns = returns.map_or(Field::Empty, |k| Field::Count(k as u64));
        let lyapunov = lyapunov
            .filter(|l| l.is_finite())
            .map_or(Field::Empty, Field::Number);
        self.rows.write(
            [
                Field::Number(x),
                Field::Number(y),
                Field::Word(regime),
                returns,
                lyapunov,
            ],
            &[],
        )
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}
