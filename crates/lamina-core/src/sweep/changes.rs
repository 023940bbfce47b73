//! Where a sweep's behaviour changes: every value's kept points classified by the one
//! recurrence detector ([`crate::recurrence`]), and the changes of label between neighbouring
//! values. The list, the colours of an orbit diagram and its
//! legend all come from these labels, so they tell one story.

use super::SweepColumn;
use crate::recurrence::{Recurrence, RecurrenceKind, RecurrenceSettings, find_recurrence};

/// The recurrence of one value's kept points, judged with the sweep's integrator tolerances
/// (`settings`).
pub fn column_recurrence(column: &SweepColumn, settings: &RecurrenceSettings) -> Recurrence {
    find_recurrence(&column.points, settings)
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

impl Change {
    /// `1-return orbit to 2-return orbit between a = 0.234 and 0.236`, the values in their
    /// shortest round-trip form.
    pub fn describe(&self, parameter: &str) -> String {
        format!(
            "{} to {} between {parameter} = {} and {}",
            self.from, self.to, self.below, self.above
        )
    }
}

/// The sweep told in lines for a person, in the one wording of the command line and the
/// window: the first value's label (`kp = 2.5: 1-return orbit`), then each change
/// ([`Change::describe`]), then advice when some values have not settled.
pub fn describe(parameter: &str, labels: &[(f64, RecurrenceKind)]) -> Vec<String> {
    let mut lines = Vec::new();
    if let Some((value, kind)) = labels.first() {
        lines.push(format!("{parameter} = {value}: {kind}"));
    }
    lines.extend(changes(labels).iter().map(|c| c.describe(parameter)));
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
    fn changes_are_listed_in_one_wording() {
        use RecurrenceKind::*;
        let no_repeat = NoRepeat { max_k: 12 };
        let labels = [
            (1.0, Returns(1)),
            (2.0, Returns(1)),
            (3.0, Returns(2)),
            (4.0, NotSettled),
            (5.0, no_repeat),
            (6.0, no_repeat),
        ];
        let c = changes(&labels);
        // [analytic] a change wherever neighbouring labels differ
        assert_eq!(c.len(), 3);
        assert_eq!((c[0].below, c[0].above, c[0].to), (2.0, 3.0, Returns(2)));
        let lines = describe("kp", &labels);
        assert_eq!(lines[0], "kp = 1: 1-return orbit");
        assert_eq!(
            lines[1],
            "1-return orbit to 2-return orbit between kp = 2 and 3"
        );
        assert_eq!(
            lines[3],
            "not settled to no repeat within 12 returns between kp = 4 and 5"
        );
        assert!(lines[4].starts_with("1 value(s) not settled"));
    }
}
