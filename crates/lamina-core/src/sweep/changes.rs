//! Where a sweep's behaviour changes: every value's kept points classified by the one
//! recurrence detector ([`crate::recurrence`]), stretches of neighbouring values with the same
//! label, and the changes between them. The list, the colours of an orbit diagram and its
//! legend all come from these labels, so they tell one story.

use std::fmt;

use super::SweepColumn;
use crate::recurrence::{Recurrence, RecurrenceKind, RecurrenceSettings, find_recurrence};

/// The recurrence of one value's kept points, judged with the sweep's integrator tolerances
/// (`settings`).
pub fn column_recurrence(column: &SweepColumn, settings: &RecurrenceSettings) -> Recurrence {
    find_recurrence(&column.points, settings)
}

/// Neighbouring parameter values with the same label.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stretch {
    /// First value of the stretch.
    pub first: f64,
    /// Last value of the stretch.
    pub last: f64,
    /// Values in it.
    pub n_values: usize,
    /// Their label.
    pub kind: RecurrenceKind,
}

impl fmt::Display for Stretch {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.n_values == 1 {
            write!(f, "{}: {}", self.first, self.kind)
        } else {
            write!(
                f,
                "{} to {} ({} values): {}",
                self.first, self.last, self.n_values, self.kind
            )
        }
    }
}

/// A change of label between two neighbouring values.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Change {
    /// The last value with the old label.
    pub below: f64,
    /// The first value with the new label.
    pub above: f64,
    /// The old label.
    pub from: RecurrenceKind,
    /// The new label.
    pub to: RecurrenceKind,
}

/// The stretches of `(value, label)` in sweep order.
pub fn stretches(labels: &[(f64, RecurrenceKind)]) -> Vec<Stretch> {
    let mut out: Vec<Stretch> = Vec::new();
    for &(value, kind) in labels {
        match out.last_mut() {
            Some(last) if last.kind == kind => {
                last.last = value;
                last.n_values += 1;
            }
            _ => out.push(Stretch {
                first: value,
                last: value,
                n_values: 1,
                kind,
            }),
        }
    }
    out
}

/// The changes of label between neighbouring values of `(value, label)`.
pub fn changes(labels: &[(f64, RecurrenceKind)]) -> Vec<Change> {
    labels
        .windows(2)
        .filter(|w| w[0].1 != w[1].1)
        .map(|w| Change {
            below: w[0].0,
            above: w[1].0,
            from: w[0].1,
            to: w[1].1,
        })
        .collect()
}

/// The sweep told in lines for a person: a headline with the number of changes, one line per
/// stretch (`kp = 2.5 to 3.2 (15 values): 1 return`), and advice when some values have not
/// settled.
pub fn describe(parameter: &str, labels: &[(f64, RecurrenceKind)]) -> Vec<String> {
    let stretches = stretches(labels);
    let n_changes = stretches.len().saturating_sub(1);
    let mut lines = vec![format!(
        "{} value(s) of {parameter}, {n_changes} change(s) of behaviour:",
        labels.len()
    )];
    lines.extend(stretches.iter().map(|s| format!("  {parameter} = {s}")));
    let unsettled = labels
        .iter()
        .filter(|(_, k)| *k == RecurrenceKind::NotSettled)
        .count();
    if unsettled > 0 {
        lines.push(format!(
            "{unsettled} value(s) not settled: their points still drift, so they say nothing \
             yet about the orbit; lengthen the sweep's settle time"
        ));
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stretches_and_changes_agree() {
        use RecurrenceKind::*;
        let labels = [
            (1.0, Returns(1)),
            (2.0, Returns(1)),
            (3.0, Returns(2)),
            (4.0, NotSettled),
            (5.0, NoRepeat),
            (6.0, NoRepeat),
        ];
        let s = stretches(&labels);
        assert_eq!(s.len(), 4);
        assert_eq!((s[0].first, s[0].last, s[0].n_values), (1.0, 2.0, 2));
        let c = changes(&labels);
        // [analytic] one change between each pair of stretches
        assert_eq!(c.len(), s.len() - 1);
        assert_eq!((c[0].below, c[0].above, c[0].to), (2.0, 3.0, Returns(2)));
        let lines = describe("kp", &labels);
        assert_eq!(lines[0], "6 value(s) of kp, 3 change(s) of behaviour:");
        assert_eq!(lines[1], "  kp = 1 to 2 (2 values): 1 return");
        assert_eq!(lines[3], "  kp = 4: not settled");
        assert!(lines[5].starts_with("1 value(s) not settled"));
    }
}
