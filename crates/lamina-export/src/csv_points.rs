//! CSV writers for cut points, strobe samples, trajectories and sweeps, with the column
//! layout of the product brief and numbers in shortest round-trip form.

use std::io::Write;

use lamina_core::run::{CutPoint, StrobeSample};

use crate::ExportError;

/// Formats `v` so that parsing it gives back exactly `v` (Rust's shortest round-trip form,
/// with an exponent for very large or small magnitudes).
pub fn format_number(v: f64) -> String {
    format!("{v:?}")
}

/// The part every writer shares: the CSV writer, the header, and one reused row buffer.
struct Rows<W: Write> {
    out: csv::Writer<W>,
    row: Vec<String>,
}

impl<W: Write> Rows<W> {
    /// Writes the header: the `leading` columns, then the state names.
    fn new(out: W, leading: &[&str], state_names: &[String]) -> Result<Self, ExportError> {
        let mut out = csv::WriterBuilder::new()
            .has_headers(false)
            .from_writer(out);
        let header: Vec<String> = leading
            .iter()
            .map(|c| c.to_string())
            .chain(state_names.iter().cloned())
            .collect();
        out.write_record(&header)?;
        Ok(Self {
            out,
            row: Vec::new(),
        })
    }

    /// Writes `fields` followed by the numbers of `state`.
    fn write(
        &mut self,
        fields: impl IntoIterator<Item = String>,
        state: &[f64],
    ) -> Result<(), ExportError> {
        self.row.clear();
        self.row.extend(fields);
        self.row.extend(state.iter().map(|&v| format_number(v)));
        self.out.write_record(&self.row)?;
        Ok(())
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
        let return_time = if self.k == 0 {
            String::new()
        } else {
            point.return_time.map(format_number).unwrap_or_default()
        };
        self.rows.write(
            [self.k.to_string(), format_number(point.t), return_time],
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
        self.rows
            .write([self.k.to_string(), format_number(sample.t)], &sample.state)?;
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
        self.rows.write([format_number(t)], state)
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
                .write([format_number(value), k.to_string()], state)?;
        }
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.rows.finish()
    }
}
