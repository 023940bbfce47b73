//! Undo and redo of the document: a snapshot of the scenario before each change, with a
//! name for the change ("remove parameter k3"). Changes to one field in quick succession
//! (typing in a field, dragging a slider or the cut) are one step: a change merges into the
//! last step when it touches the same field within [`MERGE_WITHIN`] and nothing else came
//! between (any other command seals the last step).

use std::time::{Duration, Instant};

use lamina_scenario::Scenario;

/// Changes of one field closer together than this are one step.
pub const MERGE_WITHIN: Duration = Duration::from_secs(2);

/// The most steps kept; the oldest go first.
const MAX_STEPS: usize = 200;

/// One step that can be undone (or redone): the scenario to go back to and what the step did.
#[derive(Clone, Debug)]
struct Step {
    /// The scenario before the step (for redo: after it).
    scenario: Scenario,
    /// What the step did, in words: "remove parameter k3".
    label: String,
    /// Which field the step changed; a change of the same field may merge into it.
    key: String,
    /// When the step last took a change.
    last: Instant,
}

/// The undo and redo stacks of one document.
#[derive(Clone, Debug, Default)]
pub struct History {
    undo: Vec<Step>,
    redo: Vec<Step>,
    /// The last step takes no more changes.
    sealed: bool,
}

impl History {
    /// Records a change from `before` to `after` (nothing if they are equal); merges it into
    /// the last step if it changed the same field a moment ago. Clears the redo stack.
    pub fn record(&mut self, before: &Scenario, after: &Scenario, now: Instant) {
        let Some((label, key)) = describe_change(before, after) else {
            return;
        };
        self.redo.clear();
        if !self.sealed
            && let Some(last) = self.undo.last_mut()
            && last.key == key
            && now.duration_since(last.last) < MERGE_WITHIN
        {
            last.last = now;
            last.label = label;
            return;
        }
        self.undo.push(Step {
            scenario: before.clone(),
            label,
            key,
            last: now,
        });
        if self.undo.len() > MAX_STEPS {
            self.undo.remove(0);
        }
        self.sealed = false;
    }

    /// The last step takes no more changes: the next change is a step of its own.
    pub fn seal(&mut self) {
        self.sealed = true;
    }

    /// Forgets every step (another document was opened).
    pub fn clear(&mut self) {
        *self = Self::default();
    }

    /// Takes the last step back: returns the scenario to restore and the step's name, and
    /// keeps `current` for redo.
    pub fn undo(&mut self, current: &Scenario) -> Option<(Scenario, String)> {
        let step = self.undo.pop()?;
        Some(self.swap(step, current, Direction::Back))
    }

    /// Does the last undone step again: returns the scenario to restore and the step's name,
    /// and keeps `current` for undo.
    pub fn redo(&mut self, current: &Scenario) -> Option<(Scenario, String)> {
        let step = self.redo.pop()?;
        Some(self.swap(step, current, Direction::Forward))
    }

    /// Keeps `current` under `step`'s name on the other list from the one `step` came off
    /// (redo's after an undo, undo's after a redo), and returns `step`'s scenario and name.
    fn swap(&mut self, step: Step, current: &Scenario, went: Direction) -> (Scenario, String) {
        let kept = Step {
            scenario: current.clone(),
            label: step.label.clone(),
            key: step.key,
            last: step.last,
        };
        match went {
            Direction::Back => self.redo.push(kept),
            Direction::Forward => self.undo.push(kept),
        }
        self.sealed = true;
        (step.scenario, step.label)
    }

    /// The name of the step Undo would take back.
    pub fn undo_label(&self) -> Option<&str> {
        self.undo.last().map(|s| s.label.as_str())
    }

    /// The name of the step Redo would do again.
    pub fn redo_label(&self) -> Option<&str> {
        self.redo.last().map(|s| s.label.as_str())
    }

    /// Number of steps that can be undone.
    pub fn n_undo(&self) -> usize {
        self.undo.len()
    }
}

/// What changed from `before` to `after`, in words, and a key naming the field; `None` if
/// nothing changed.
pub fn describe_change(before: &Scenario, after: &Scenario) -> Option<(String, String)> {
    if before == after {
        return None;
    }
    let (b, a) = (before, after);
    let found = list_change(
        "state",
        "states",
        &names(b.states.iter().map(|s| &s.name)),
        &names(a.states.iter().map(|s| &s.name)),
    )
    .or_else(|| {
        list_change(
            "parameter",
            "parameters",
            &names(b.parameters.iter().map(|p| &p.name)),
            &names(a.parameters.iter().map(|p| &p.name)),
        )
    });
    if let Some(found) = found {
        return Some(found);
    }
    for (i, (sb, sa)) in b.states.iter().zip(&a.states).enumerate() {
        let n = &sb.name;
        if sb.rate != sa.rate {
            return Some((format!("edit d{n}/dt"), format!("states[{i}].rate")));
        }
        if sb.start != sa.start {
            return Some((format!("start of {n}"), format!("states[{i}].start")));
        }
        if sb.unit != sa.unit {
            return Some((format!("unit of {n}"), format!("states[{i}].unit")));
        }
    }
    for (i, (pb, pa)) in b.parameters.iter().zip(&a.parameters).enumerate() {
        let n = &pb.name;
        if pb.value != pa.value {
            return Some((
                format!("{n} = {}", pa.value),
                format!("parameters[{i}].value"),
            ));
        }
        if pb.range != pa.range {
            return Some((format!("range of {n}"), format!("parameters[{i}].range")));
        }
        if pb.unit != pa.unit {
            return Some((format!("unit of {n}"), format!("parameters[{i}].unit")));
        }
    }
    let block = |name: &str, on_b: bool, on_a: bool, key: &str| -> (String, String) {
        match (on_b, on_a) {
            (false, true) => (format!("add the {name}"), format!("{key}.on")),
            (true, false) => (format!("remove the {name}"), format!("{key}.on")),
            _ => (format!("change the {name}"), key.to_string()),
        }
    };
    if b.cut != a.cut {
        if let (Some(cb), Some(ca)) = (&b.cut, &a.cut)
            && cb.direction == ca.direction
            && cb.axes == ca.axes
            && matches!(
                (&cb.surface, &ca.surface),
                (
                    lamina_scenario::Surface::Plane { normal: nb, .. },
                    lamina_scenario::Surface::Plane { normal: na, .. },
                ) if nb == na
            )
        {
            return Some(("move the cut".into(), "cut.offset".into()));
        }
        if let (Some(cb), Some(ca)) = (&b.cut, &a.cut)
            && cb.surface == ca.surface
            && cb.direction == ca.direction
        {
            return Some(("axes of the cut view".into(), "cut.axes".into()));
        }
        return Some(block("cut", b.cut.is_some(), a.cut.is_some(), "cut"));
    }
    if let (Some(sb), Some(sa)) = (&b.strobe, &a.strobe)
        && sb.period == sa.period
        && sb.first_at == sa.first_at
        && sb.axes != sa.axes
    {
        return Some(("axes of the strobe view".into(), "strobe.axes".into()));
    }
    if b.strobe != a.strobe {
        return Some(block(
            "strobe",
            b.strobe.is_some(),
            a.strobe.is_some(),
            "strobe",
        ));
    }
    if b.sweep != a.sweep {
        return Some(block(
            "sweep",
            b.sweep.is_some(),
            a.sweep.is_some(),
            "sweep",
        ));
    }
    if b.map != a.map {
        return Some(block("regime map", b.map.is_some(), a.map.is_some(), "map"));
    }
    if b.integrator != a.integrator {
        return Some(("integrator settings".into(), "integrator".into()));
    }
    if b.time != a.time {
        return Some(("time window".into(), "time".into()));
    }
    if b.limits != a.limits {
        return Some(("run limits".into(), "limits".into()));
    }
    if b.title != a.title {
        return Some(("edit the title".into(), "title".into()));
    }
    if b.notes != a.notes {
        return Some(("edit the notes".into(), "notes".into()));
    }
    Some(("change the view".into(), "view".into()))
}

fn names<'a>(it: impl Iterator<Item = &'a String>) -> Vec<&'a str> {
    it.map(String::as_str).collect()
}

/// An added, removed or renamed entry of a list of names.
fn list_change(word: &str, key: &str, before: &[&str], after: &[&str]) -> Option<(String, String)> {
    use std::cmp::Ordering;
    match after.len().cmp(&before.len()) {
        Ordering::Greater => {
            let new = after.iter().find(|n| !before.contains(n))?;
            Some((format!("add {word} {new}"), format!("{key}.add")))
        }
        Ordering::Less => {
            let gone = before.iter().find(|n| !after.contains(n))?;
            Some((format!("remove {word} {gone}"), format!("{key}.remove")))
        }
        Ordering::Equal => {
            let (old, new) = before.iter().zip(after).find(|(b, a)| b != a)?;
            Some((format!("rename {old} to {new}"), format!("{key}.rename")))
        }
    }
}

/// Which way a step of the history was taken.
#[derive(Clone, Copy)]
enum Direction {
    /// Undone.
    Back,
    /// Redone.
    Forward,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scenario() -> Scenario {
        lamina_scenario::load_str(crate::document::DEMO_SCENARIO).expect("demo loads")
    }

    #[test]
    fn typing_in_one_field_is_one_step_and_another_field_a_second() {
        let mut h = History::default();
        let s0 = scenario();
        let now = Instant::now();
        let mut s1 = s0.clone();
        s1.states[0].rate.push_str(" + 1");
        h.record(&s0, &s1, now);
        let mut s2 = s1.clone();
        s2.states[0].rate.push('0');
        h.record(&s1, &s2, now + Duration::from_millis(300));
        assert_eq!(h.n_undo(), 1);
        let mut s3 = s2.clone();
        s3.parameters[0].value += 1.0;
        h.record(&s2, &s3, now + Duration::from_millis(600));
        assert_eq!(h.n_undo(), 2);
        let (back, label) = h.undo(&s3).expect("a step");
        assert_eq!(back, s2);
        assert!(label.starts_with(&s0.parameters[0].name), "{label}");
        let (back, _) = h.undo(&s2).expect("a step");
        assert_eq!(back, s0);
        assert!(h.undo(&s0).is_none());
        let (again, _) = h.redo(&s0).expect("redo");
        assert_eq!(again, s2);
    }

    #[test]
    fn a_pause_or_a_seal_starts_a_new_step() {
        let mut h = History::default();
        let s0 = scenario();
        let now = Instant::now();
        let mut s1 = s0.clone();
        s1.title = "a".into();
        h.record(&s0, &s1, now);
        let mut s2 = s1.clone();
        s2.title = "ab".into();
        h.record(&s1, &s2, now + MERGE_WITHIN);
        assert_eq!(h.n_undo(), 2);
        h.seal();
        let mut s3 = s2.clone();
        s3.title = "abc".into();
        h.record(&s2, &s3, now + MERGE_WITHIN);
        assert_eq!(h.n_undo(), 3);
    }

    #[test]
    fn removing_a_parameter_is_named() {
        let s0 = scenario();
        let mut s1 = s0.clone();
        let gone = s1.parameters.remove(0).name;
        let (label, _) = describe_change(&s0, &s1).expect("a change");
        assert_eq!(label, format!("remove parameter {gone}"));
    }
}
