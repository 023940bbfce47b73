//! The output of `--recheck`: the `recheck` object of the JSON documents and the lines of the
//! human output.

use lamina_core::recheck::{Recheck, RecheckError};
use serde::Serialize;

/// The `recheck` object of the product brief (`rtol`, `atol`, `digits`, `worst`), with the note
/// on what was compared; `digits` and `worst` are null and `error` says why when the second
/// computation failed.
#[derive(Serialize)]
pub struct JsonRecheck {
    rtol: Option<f64>,
    atol: Option<f64>,
    digits: Option<u32>,
    worst: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    note: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<String>,
}

impl JsonRecheck {
    /// The JSON of a recheck or of its failure.
    pub fn of(recheck: &Result<Recheck, RecheckError>) -> Self {
        match recheck {
            Ok(r) => Self {
                rtol: Some(r.rtol),
                atol: Some(r.atol),
                digits: Some(r.digits),
                worst: Some(r.worst.name.clone()),
                note: r.note.clone(),
                error: None,
            },
            Err(err) => {
                let (rtol, atol) = match err {
                    RecheckError::Failed { rtol, atol, .. } => (Some(*rtol), Some(*atol)),
                    _ => (None, None),
                };
                Self {
                    rtol,
                    atol,
                    digits: None,
                    worst: None,
                    note: None,
                    error: Some(err.to_string()),
                }
            }
        }
    }
}

/// The recheck as lines for a person: the digits and the worst number, then the note.
pub fn recheck_lines(recheck: &Result<Recheck, RecheckError>) -> Vec<String> {
    match recheck {
        Ok(r) => {
            let mut lines = vec![format!("recheck: {r}")];
            if let Some(note) = &r.note {
                lines.push(format!("         ({note})"));
            }
            lines
        }
        Err(err) => vec![format!("recheck: failed: {err}")],
    }
}
