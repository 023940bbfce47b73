//! Switching functions: the places in a program where `sign`, `abs`, `step`, `min`, `max`,
//! `floor` or `ceil` changes branch as the state moves, the values whose zero crossings are
//! those changes, and the program with every one of them held on one branch (a smooth
//! function, so that an integrator keeps its order inside a step).
//!
//! The switching value of `sign(u)`, `abs(u)`, `step(u)`, `floor(u)` and `ceil(u)` is `u`; of
//! `min(a, b)` it is `b - a` and of `max(a, b)` it is `a - b`, so that in both the first
//! argument is chosen where the value is not negative. Only functions whose arguments depend
//! on the states or the time switch; one of parameters alone is left as it is.

use super::compile::Builder;
use super::instr::{Func1, Func2, Instr};
use super::program::Program;

/// Which function switches.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum SwitchKind {
    /// `sign(u)`: -1 or 1 (0 only exactly at `u = 0`).
    Sign,
    /// `abs(u)`: `-u` or `u`.
    Abs,
    /// `step(u)`: 0 or 1.
    Step,
    /// `min(a, b)`: `a` or `b`.
    Min,
    /// `max(a, b)`: `a` or `b`.
    Max,
    /// `floor(u)`: the integer at or below `u`.
    Floor,
    /// `ceil(u)`: the integer at or above `u`.
    Ceil,
}

/// The branch a switching function is on, or is held on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Branch {
    /// The switching value is not negative (`sign` 1, `abs(u) = u`, `step` 1, `min` and
    /// `max` choose their first argument).
    Positive,
    /// The switching value is negative.
    Negative,
    /// `floor` or `ceil` holds this integer.
    Integer(i64),
}

/// One switching function of a program.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Switch {
    /// Which function.
    pub kind: SwitchKind,
    /// The instruction's slot in the program.
    slot: u32,
    /// Its argument slots (the second only for `min` and `max`).
    args: [u32; 2],
}

impl Switch {
    /// The branch that the switching value `value` lies on (a value of exactly 0, or NaN,
    /// counts as `Positive`).
    pub fn branch_of(&self, value: f64) -> Branch {
        match self.kind {
            SwitchKind::Floor => Branch::Integer(value.floor() as i64),
            SwitchKind::Ceil => Branch::Integer(value.ceil() as i64),
            _ if value < 0.0 => Branch::Negative,
            _ => Branch::Positive,
        }
    }

    /// How far inside `branch` the switching value `value` lies: not negative while the
    /// branch holds, negative once the value has crossed to another. For `floor` held at
    /// `k` it is `(value - k) (k + 1 - value)`, for `ceil` `(value - k + 1) (k - value)`.
    pub fn margin(&self, branch: Branch, value: f64) -> f64 {
        match (self.kind, branch) {
            (SwitchKind::Floor, Branch::Integer(k)) => {
                let k = k as f64;
                (value - k) * (k + 1.0 - value)
            }
            (SwitchKind::Ceil, Branch::Integer(k)) => {
                let k = k as f64;
                (value - k + 1.0) * (k - value)
            }
            (_, Branch::Negative) => -value,
            _ => value,
        }
    }

    /// The branch after the switching value left `branch`, being `value` now (near the
    /// boundary it crossed).
    pub fn across(&self, branch: Branch, value: f64) -> Branch {
        match branch {
            Branch::Positive => Branch::Negative,
            Branch::Negative => Branch::Positive,
            Branch::Integer(k) => {
                let middle = match self.kind {
                    SwitchKind::Ceil => k as f64 - 0.5,
                    _ => k as f64 + 0.5,
                };
                if value > middle {
                    Branch::Integer(k.saturating_add(1))
                } else {
                    Branch::Integer(k.saturating_sub(1))
                }
            }
        }
    }
}

impl Program {
    /// The switching functions of this program whose arguments depend on the states or the
    /// time, in program order.
    pub fn switches(&self) -> Vec<Switch> {
        let mut varies = vec![false; self.instrs.len()];
        let mut switches = Vec::new();
        for (idx, instr) in self.instrs.iter().enumerate() {
            let args = instr.args();
            varies[idx] = matches!(instr, Instr::State(_) | Instr::Time)
                || args.iter().any(|&a| varies[a as usize]);
            if !varies[idx] {
                continue;
            }
            let kind = match *instr {
                Instr::F1(Func1::Sign, _) => SwitchKind::Sign,
                Instr::F1(Func1::Abs, _) => SwitchKind::Abs,
                Instr::F1(Func1::Step, _) => SwitchKind::Step,
                Instr::F1(Func1::Floor, _) => SwitchKind::Floor,
                Instr::F1(Func1::Ceil, _) => SwitchKind::Ceil,
                Instr::F2(Func2::Min, ..) => SwitchKind::Min,
                Instr::F2(Func2::Max, ..) => SwitchKind::Max,
                _ => continue,
            };
            let second = args.get(1).copied().unwrap_or(args[0]);
            switches.push(Switch {
                kind,
                slot: idx as u32,
                args: [args[0], second],
            });
        }
        switches
    }

    /// A program of one output per switch in `switches` (from [`Program::switches`]): its
    /// switching value, with every switching function held on its branch in `branches`
    /// (one per switch), or with none held when `branches` is `None`.
    pub fn switching_values(&self, switches: &[Switch], branches: Option<&[Branch]>) -> Program {
        let (mut builder, map) = self.rebuild(switches, branches);
        let outputs = switches
            .iter()
            .map(|s| {
                let [a, b] = s.args.map(|slot| map[slot as usize]);
                match s.kind {
                    SwitchKind::Min => builder.push(Instr::Sub(b, a)),
                    SwitchKind::Max => builder.push(Instr::Sub(a, b)),
                    _ => a,
                }
            })
            .collect();
        Program::from_graph(
            builder.instrs,
            outputs,
            self.n_states(),
            self.n_parameters(),
        )
    }

    /// This program with every switch in `switches` held on its branch in `branches`: a
    /// smooth continuation of its value on that branch (for `sign`, `step`, `floor`, `ceil` a
    /// constant, for `abs` `u` or `-u`, for `min` and `max` one argument).
    pub fn held(&self, switches: &[Switch], branches: &[Branch]) -> Program {
        let (builder, map) = self.rebuild(switches, Some(branches));
        let outputs = self.outputs.iter().map(|&o| map[o as usize]).collect();
        Program::from_graph(
            builder.instrs,
            outputs,
            self.n_states(),
            self.n_parameters(),
        )
    }

    /// The instructions again, switches held on `branches` if given; returns the builder
    /// and where each old slot went.
    fn rebuild(&self, switches: &[Switch], branches: Option<&[Branch]>) -> (Builder, Vec<u32>) {
        let mut branch_of_slot: Vec<Option<Branch>> = vec![None; self.instrs.len()];
        if let Some(branches) = branches {
            for (s, b) in switches.iter().zip(branches) {
                if let Some(entry) = branch_of_slot.get_mut(s.slot as usize) {
                    *entry = Some(*b);
                }
            }
        }
        let mut builder = Builder::default();
        let mut map = vec![0u32; self.instrs.len()];
        for (idx, instr) in self.instrs.iter().enumerate() {
            let held = branch_of_slot[idx].and_then(|b| hold(instr, b, &map));
            map[idx] = match held {
                Some(Held::Slot(slot)) => slot,
                Some(Held::Instr(i)) => builder.push(i),
                None => builder.push(instr.remap(&map)),
            };
        }
        (builder, map)
    }
}

/// What a held switching function becomes.
enum Held {
    /// An existing (new) slot.
    Slot(u32),
    /// A new instruction.
    Instr(Instr),
}

/// `instr` held on `branch`, its argument slots already renumbered through `map`; `None`
/// for a branch that does not fit the function (then it is kept as it is).
fn hold(instr: &Instr, branch: Branch, map: &[u32]) -> Option<Held> {
    let m = |slot: u32| map[slot as usize];
    let positive = match branch {
        Branch::Positive => true,
        Branch::Negative => false,
        Branch::Integer(k) => {
            return match instr {
                Instr::F1(Func1::Floor | Func1::Ceil, _) => {
                    Some(Held::Instr(Instr::Const(k as f64)))
                }
                _ => None,
            };
        }
    };
    let sign = if positive { 1.0 } else { -1.0 };
    Some(match *instr {
        Instr::F1(Func1::Sign, _) => Held::Instr(Instr::Const(sign)),
        Instr::F1(Func1::Step, _) => Held::Instr(Instr::Const(if positive { 1.0 } else { 0.0 })),
        Instr::F1(Func1::Abs, a) if positive => Held::Slot(m(a)),
        Instr::F1(Func1::Abs, a) => Held::Instr(Instr::Neg(m(a))),
        Instr::F2(Func2::Min | Func2::Max, a, b) => Held::Slot(m(if positive { a } else { b })),
        _ => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::expr::Names;

    fn program(sources: &[&str]) -> Program {
        let names = Names {
            states: vec!["x".into(), "y".into()],
            parameters: vec!["p".into()],
        };
        let labelled: Vec<(String, &str)> = sources
            .iter()
            .enumerate()
            .map(|(i, s)| (format!("output {i}"), *s))
            .collect();
        Program::compile(&names, &labelled).unwrap_or_else(|e| panic!("{e}"))
    }

    const SOURCES: [&str; 3] = [
        "abs(x - 1) + min(x, y)*sign(y) + step(x*y)",
        "max(x^2, 2*y) - floor(3*x) + ceil(y - t)",
        "sign(p)*x + abs(p)",
    ];

    #[test]
    fn switches_are_the_functions_of_moving_arguments() {
        let kinds: Vec<SwitchKind> = program(&SOURCES)
            .switches()
            .iter()
            .map(|s| s.kind)
            .collect();
        // sign(p) and abs(p) depend on a parameter only and do not switch
        assert_eq!(kinds.len(), 7);
        for kind in [
            SwitchKind::Abs,
            SwitchKind::Min,
            SwitchKind::Sign,
            SwitchKind::Step,
            SwitchKind::Max,
            SwitchKind::Floor,
            SwitchKind::Ceil,
        ] {
            assert!(kinds.contains(&kind), "{kind:?} in {kinds:?}");
        }
    }

    #[test]
    fn held_program_agrees_with_the_program_on_its_branches() {
        let program = program(&SOURCES);
        let switches = program.switches();
        let free = program.switching_values(&switches, None);
        let p = [-0.7];
        for (x, y, t) in [(0.3, 0.8, 0.1), (1.7, -0.4, 2.5), (-1.2, 2.2, 0.9)] {
            let state = [x, y];
            let mut values = vec![0.0; switches.len()];
            free.eval_reference(&mut free.scratch(), t, &state, &p, &mut values);
            let branches: Vec<Branch> = switches
                .iter()
                .zip(&values)
                .map(|(s, &v)| s.branch_of(v))
                .collect();
            let held = program.held(&switches, &branches);
            let (mut a, mut b) = ([0.0; 3], [0.0; 3]);
            program.eval_reference(&mut program.scratch(), t, &state, &p, &mut a);
            held.eval_reference(&mut held.scratch(), t, &state, &p, &mut b);
            // [analytic] on its branch a switching function is exactly its held form
            assert_eq!(a, b, "at {state:?}, t = {t}");
            let (mut ja, mut jb) = ([0.0; 6], [0.0; 6]);
            program.jacobian(&mut program.scratch(), t, &state, &p, &mut ja);
            held.jacobian(&mut held.scratch(), t, &state, &p, &mut jb);
            assert_eq!(ja, jb, "at {state:?}, t = {t}");
            // and every margin is not negative where the branches were chosen
            let held_values = program.switching_values(&switches, Some(&branches));
            held_values.eval_reference(&mut held_values.scratch(), t, &state, &p, &mut values);
            for ((s, b), v) in switches.iter().zip(&branches).zip(&values) {
                assert!(s.margin(*b, *v) >= 0.0, "{s:?} {b:?} {v}");
            }
        }
    }

    #[test]
    fn margins_and_crossings_of_each_branch() {
        let program = program(&["floor(x) + ceil(x) + sign(x)"]);
        let switches = program.switches();
        let [floor, ceil, sign] = [switches[0], switches[1], switches[2]];
        // [analytic] floor held at 2 holds for 2 <= x <= 3, ceil held at 3 for 2 <= x <= 3
        assert_eq!(floor.branch_of(2.5), Branch::Integer(2));
        assert_eq!(ceil.branch_of(2.5), Branch::Integer(3));
        assert!(floor.margin(Branch::Integer(2), 2.5) > 0.0);
        assert!(floor.margin(Branch::Integer(2), 3.01) < 0.0);
        assert!(floor.margin(Branch::Integer(2), 1.99) < 0.0);
        assert!(ceil.margin(Branch::Integer(3), 2.01) > 0.0);
        assert!(ceil.margin(Branch::Integer(3), 1.99) < 0.0);
        assert_eq!(floor.across(Branch::Integer(2), 3.0), Branch::Integer(3));
        assert_eq!(floor.across(Branch::Integer(2), 2.0), Branch::Integer(1));
        assert_eq!(ceil.across(Branch::Integer(3), 3.0), Branch::Integer(4));
        assert_eq!(ceil.across(Branch::Integer(3), 2.0), Branch::Integer(2));
        assert_eq!(sign.branch_of(-1e-300), Branch::Negative);
        assert_eq!(sign.branch_of(0.0), Branch::Positive);
        assert_eq!(sign.margin(Branch::Negative, -2.0), 2.0);
        assert_eq!(sign.across(Branch::Negative, 0.0), Branch::Positive);
    }
}
