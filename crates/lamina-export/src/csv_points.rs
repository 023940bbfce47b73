//! CSV writers for cut points, strobe samples and trajectories, with the column layout of
//! the product brief and numbers in shortest round-trip form.

use std::io::Write;

use lamina_core::run::{CutPoint, StrobeSample};

use crate::ExportError;

/// Formats `v` so that parsing it gives back exactly `v` (Rust's shortest round-trip form,
/// with an exponent for very large or small magnitudes).
pub fn format_number(v: f64) -> String {
    format!("{v:?}")
}

fn writer<W: Write>(out: W, header: Vec<String>) -> Result<csv::Writer<W>, ExportError> {
    let mut w = csv::WriterBuilder::new()
        .has_headers(false)
        .from_writer(out);
    w.write_record(&header)?;
    Ok(w)
}

/// Writes cut points: `k,t,return_time,<state names>`; `return_time` is empty for `k = 0`.
pub struct CutCsv<W: Write> {
    out: csv::Writer<W>,
    k: u64,
    row: Vec<String>,
}

impl<W: Write> CutCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        let mut header = vec!["k".to_string(), "t".into(), "return_time".into()];
        header.extend(state_names.iter().cloned());
        Ok(Self {
            out: writer(out, header)?,
            k: 0,
            row: Vec::new(),
        })
    }

    /// Writes one point as row `k` (counting from 0).
    pub fn write(&mut self, point: &CutPoint) -> Result<(), ExportError> {
        self.row.clear();
        self.row.push(self.k.to_string());
        self.row.push(format_number(point.t));
        self.row.push(if self.k == 0 {
            String::new()
        } else {
            point.return_time.map(format_number).unwrap_or_default()
        });
        self.row
            .extend(point.state.iter().map(|&v| format_number(v)));
        self.out.write_record(&self.row)?;
        self.k += 1;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.out.into_inner().map_err(|e| ExportError::Io {
            path: "CSV output".into(),
            source: e.into_error(),
        })
    }
}

/// Writes strobe samples: `k,t,<state names>`.
pub struct StrobeCsv<W: Write> {
    out: csv::Writer<W>,
    k: u64,
    row: Vec<String>,
}

impl<W: Write> StrobeCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        let mut header = vec!["k".to_string(), "t".into()];
        header.extend(state_names.iter().cloned());
        Ok(Self {
            out: writer(out, header)?,
            k: 0,
            row: Vec::new(),
        })
    }

    /// Writes one sample as row `k` (counting from 0).
    pub fn write(&mut self, sample: &StrobeSample) -> Result<(), ExportError> {
        self.row.clear();
        self.row.push(self.k.to_string());
        self.row.push(format_number(sample.t));
        self.row
            .extend(sample.state.iter().map(|&v| format_number(v)));
        self.out.write_record(&self.row)?;
        self.k += 1;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.out.into_inner().map_err(|e| ExportError::Io {
            path: "CSV output".into(),
            source: e.into_error(),
        })
    }
}

/// Writes trajectory samples: `t,<state names>`.
pub struct TrajectoryCsv<W: Write> {
    out: csv::Writer<W>,
    row: Vec<String>,
}

impl<W: Write> TrajectoryCsv<W> {
    /// Writes the header for `state_names`.
    pub fn new(out: W, state_names: &[String]) -> Result<Self, ExportError> {
        let mut header = vec!["t".to_string()];
        header.extend(state_names.iter().cloned());
        Ok(Self {
            out: writer(out, header)?,
            row: Vec::new(),
        })
    }

    /// Writes the state at time `t`.
    pub fn write(&mut self, t: f64, state: &[f64]) -> Result<(), ExportError> {
        self.row.clear();
        self.row.push(format_number(t));
        self.row.extend(state.iter().map(|&v| format_number(v)));
        self.out.write_record(&self.row)?;
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.out.into_inner().map_err(|e| ExportError::Io {
            path: "CSV output".into(),
            source: e.into_error(),
        })
    }
}

/// Writes sweep points: `<parameter name>,k,<state names>`, `k` counting the kept points of
/// each parameter value from 0.
pub struct SweepCsv<W: Write> {
    out: csv::Writer<W>,
    row: Vec<String>,
}

impl<W: Write> SweepCsv<W> {
    /// Writes the header for the swept parameter and `state_names`.
    pub fn new(out: W, parameter: &str, state_names: &[String]) -> Result<Self, ExportError> {
        let mut header = vec![parameter.to_string(), "k".into()];
        header.extend(state_names.iter().cloned());
        Ok(Self {
            out: writer(out, header)?,
            row: Vec::new(),
        })
    }

    /// Writes the kept points of one parameter value.
    pub fn write_column(&mut self, value: f64, points: &[Vec<f64>]) -> Result<(), ExportError> {
        for (k, state) in points.iter().enumerate() {
            self.row.clear();
            self.row.push(format_number(value));
            self.row.push(k.to_string());
            self.row.extend(state.iter().map(|&v| format_number(v)));
            self.out.write_record(&self.row)?;
        }
        Ok(())
    }

    /// Flushes and returns the inner writer.
    pub fn finish(self) -> Result<W, ExportError> {
        self.out.into_inner().map_err(|e| ExportError::Io {
            path: "CSV output".into(),
            source: e.into_error(),
        })
    }
}
