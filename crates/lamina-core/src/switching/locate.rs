//! Finding where a step crossed into another branch, on the step's dense output, and
//! ending the step there.

use super::{BOUNCE_FRACTION, Switching};
use crate::integrate::dense::eval_prefix;
use crate::integrate::{DenseSegment, Integrator, Rates, StepError};
use crate::run::graze;
use crate::run::root::brent;

/// A step that crossed into another branch.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Crossing {
    /// Time of the crossing, where the integrator now stands.
    pub t: f64,
    /// Whether a step up to the crossing stands: false when the crossing was at the start
    /// of the step, which was then taken back.
    pub step_kept: bool,
}

/// Rates that hold a model's switches: the held rates themselves ([`Switching`]) or a
/// system built on them (the held rates with tangent vectors), whose first states are the
/// model's.
pub trait SwitchingRates: Rates {
    /// The switching state.
    fn switching(&mut self) -> &mut Switching;
}

impl SwitchingRates for Switching {
    fn switching(&mut self) -> &mut Switching {
        self
    }
}

impl Switching {
    /// Checks the step that `integrator` just took (with these rates) for switching values
    /// that crossed into another branch. If one did, locates the first crossing on the
    /// step's dense output, and replaces the step by one that ends there (or takes it back
    /// when the crossing is at its start); call [`Switching::apply`] next, after using the
    /// step, to change branch.
    ///
    /// # Errors
    /// As [`Integrator::ensure_dense`] and [`Integrator::shorten_last_step`].
    pub fn inspect(&mut self, integrator: &mut Integrator) -> Result<Option<Crossing>, StepError> {
        inspect_through(self, integrator)
    }
}

/// [`Switching::inspect`] for an integrator of `rates`, a system whose first states are the
/// model's (the others, such as tangent vectors, are carried along).
///
/// # Errors
/// As [`Switching::inspect`].
pub fn inspect_through<R: SwitchingRates>(
    rates: &mut R,
    integrator: &mut Integrator,
) -> Result<Option<Crossing>, StepError> {
    let n = rates.switching().state.len();
    let t1 = integrator.t();
    let mut f = std::mem::take(&mut rates.switching().rates_here);
    f.copy_from_slice(&integrator.rates_here(rates)?[..n]);
    let this = rates.switching();
    let mut state = std::mem::take(&mut this.state);
    state.copy_from_slice(&integrator.x()[..n]);
    this.measure_slopes(t1, &state, &f);
    this.rates_here = f;
    this.state = state;
    // a margin of one sign at both ends may still have crossed and come back inside the
    // step: screened on the margins and their slopes at the ends (run::graze)
    let h = integrator.segment().h;
    let mut grazing = false;
    for k in 0..this.margins.len() {
        let (g0, g1) = (this.start_margins[k], this.margins[k]);
        if g1 >= 0.0 && g0 > 0.0 {
            let (m0, m1) = (h * this.start_slopes[k], h * this.slopes[k]);
            grazing |= !graze::screen(g0, g1, m0, m1, graze::FIRST_REACH).is_empty();
        }
    }
    if !grazing && !this.margins.iter().any(|&m| m < 0.0) {
        this.start_margins.copy_from_slice(&this.margins);
        this.start_slopes.copy_from_slice(&this.slopes);
        return Ok(None);
    }
    integrator.ensure_dense(rates)?;
    let this = rates.switching();
    let segment = integrator.segment();
    let (t0, h) = (segment.t0, segment.h);
    let end_margins = this.margins.clone();
    let end_slopes = this.slopes.clone();
    let mut found: Vec<(usize, f64)> = Vec::new();
    for (k, &g1) in end_margins.iter().enumerate() {
        let g0 = this.start_margins[k];
        if g1 < 0.0 {
            let s = this.locate(k, segment, g0, g1);
            found.push((k, s));
        } else if grazing && g0 > 0.0 {
            let (m0, m1) = (h * this.start_slopes[k], h * end_slopes[k]);
            let turns = graze::screen(g0, g1, m0, m1, graze::FIRST_REACH);
            if let Some(s) = this.locate_inside(k, segment, g0, g1, &turns) {
                found.push((k, s));
            }
        }
    }
    if found.is_empty() {
        // the screen's alarm was false: the step stands as it is
        this.start_margins.copy_from_slice(&end_margins);
        this.start_slopes.copy_from_slice(&end_slopes);
        return Ok(None);
    }
    let first = found.iter().map(|&(_, s)| s).fold(1.0, f64::min);
    this.crossing.clear();
    this.crossing.extend(
        found
            .iter()
            .filter(|&&(_, s)| s <= first + 4.0 * f64::EPSILON)
            .map(|&(k, _)| k),
    );
    let h_cross = first * h;
    let undo = h_cross <= 2.0 * crate::integrate::min_step_at(t0);
    // a switch right at the start of the step after another switch: the value turned
    // back at once
    this.bounce = this.last_switch == Some(t0) && (undo || first <= BOUNCE_FRACTION);
    if undo {
        integrator.undo_last_step();
        return Ok(Some(Crossing {
            t: t0,
            step_kept: false,
        }));
    }
    integrator.shorten_last_step(rates, h_cross)?;
    end_past_the_crossing(rates, integrator, h_cross, h)?;
    integrator.limit_next_step(h);
    Ok(Some(Crossing {
        t: integrator.t(),
        step_kept: true,
    }))
}

/// Retakes the shortened step (of size `h_cross`, from a step of size `h_full` whose end
/// was past the crossing) a little longer while its end has not crossed yet, so that the
/// new branches start on their own side (a step that starts on the wrong side of a
/// switching value that is also a cut could hide a crossing of the cut). The interpolant
/// and the step differ by about the tolerance, so one retake usually suffices.
fn end_past_the_crossing<R: SwitchingRates>(
    rates: &mut R,
    integrator: &mut Integrator,
    mut h_cross: f64,
    h_full: f64,
) -> Result<(), StepError> {
    for _ in 0..MAX_RETAKES {
        let this = rates.switching();
        let n = this.state.len();
        let worst = this.worst_crossing_margin(integrator.t(), &integrator.x()[..n]);
        // (a NaN margin says nothing either way)
        if worst.is_nan() || worst <= 0.0 || h_cross >= h_full {
            return Ok(());
        }
        // how fast the margin falls at the end of the step, from its interpolant
        let segment = integrator.segment();
        let before = SLOPE_FRACTION;
        let mut falling = 0.0_f64;
        for idx in 0..this.crossing.len() {
            let k = this.crossing[idx];
            let g = this.margin_at(k, segment, 1.0) - this.margin_at(k, segment, 1.0 - before);
            falling = falling.min(g / (before * h_cross));
        }
        let t = integrator.t();
        let resolution = 4.0 * (t.abs() * f64::EPSILON).max(f64::MIN_POSITIVE);
        let extra = if falling < 0.0 {
            2.0 * worst / -falling
        } else {
            h_cross * 1e-12
        };
        h_cross = (h_cross + extra + resolution).min(h_full);
        integrator.shorten_last_step(rates, h_cross)?;
    }
    Ok(())
}

impl Switching {
    /// The largest margin, on their current branches, of the switches that cross, at
    /// `(t, x)`.
    fn worst_crossing_margin(&mut self, t: f64, x: &[f64]) -> f64 {
        let mut state = std::mem::take(&mut self.state);
        state.copy_from_slice(x);
        self.evaluate_margins(t, &state);
        self.state = state;
        self.crossing
            .iter()
            .map(|&k| self.margins[k])
            .fold(f64::NEG_INFINITY, f64::max)
    }

    /// Margin of switch `k` at the fraction `s` of `segment`.
    fn margin_at(&mut self, k: usize, segment: &DenseSegment, s: f64) -> f64 {
        let mut state = std::mem::take(&mut self.state);
        eval_prefix(&segment.coeffs, segment.dim, s, &mut state);
        self.evaluate_margins(segment.t0 + s * segment.h, &state);
        self.state = state;
        self.margins[k]
    }

    /// The first fraction of `segment` where switch `k`'s margin, positive at both ends
    /// (`g0`, `g1`), turns negative inside, given the extrema `turns` of its Hermite
    /// interpolant; `None` when it stays positive (Shampine and Thompson's check of the
    /// derivative's sign, see `run::graze`).
    fn locate_inside(
        &mut self,
        k: usize,
        segment: &DenseSegment,
        g0: f64,
        g1: f64,
        turns: &graze::Turns,
    ) -> Option<f64> {
        if turns.is_empty() {
            return None;
        }
        let mut brackets = [graze::Bracket {
            a: 0.0,
            b: 1.0,
            ga: g0,
            gb: g1,
        }; 3];
        let n = graze::brackets(
            |s| self.margin_at(k, segment, s),
            g0,
            g1,
            turns,
            &mut brackets,
        );
        let bracket = brackets[..n].iter().find(|b| b.ga > 0.0 && b.gb <= 0.0)?;
        let (a, b) = (bracket.a, bracket.b);
        let s = brent(
            |s| self.margin_at(k, segment, s),
            a,
            b,
            bracket.ga,
            bracket.gb,
        );
        // the crossing is where the branch ends: on the negative side
        if self.margin_at(k, segment, s) < 0.0 {
            Some(s)
        } else {
            Some(s.next_up().min(b))
        }
    }

    /// The first fraction of `segment` where switch `k`'s margin, `g0` at the start and
    /// `g1 < 0` at the end, turns negative after being positive; 0 when it is nowhere
    /// positive (the value turned back at once, as in a sliding mode).
    ///
    /// The margin is probed at fractions growing geometrically from `8^-12` to 1/8 and then
    /// evenly to 1, so that an early crossing in a long step is found, and a start on the
    /// boundary (`g0 <= 0`, just after a switch) is told apart from a return; Brent's method
    /// then locates the crossing between the last positive and the first negative probe.
    fn locate(&mut self, k: usize, segment: &DenseSegment, g0: f64, g1: f64) -> f64 {
        let (mut a, mut ga) = (0.0, g0);
        let mut positive = g0 > 0.0;
        let (mut b, mut gb) = (1.0, g1);
        for s in PROBES.iter().copied() {
            let g = self.margin_at(k, segment, s);
            if g > 0.0 {
                positive = true;
                (a, ga) = (s, g);
            } else if g < 0.0 && positive {
                (b, gb) = (s, g);
                break;
            }
        }
        if !positive {
            return 0.0;
        }
        let s = brent(|s| self.margin_at(k, segment, s), a, b, ga, gb);
        // the root finder may stop on either side; the crossing is where the branch ends
        if self.margin_at(k, segment, s) < 0.0 {
            s
        } else {
            s.next_up().min(b)
        }
    }
}

/// How often a shortened step is retaken longer to end past its crossing.
const MAX_RETAKES: u32 = 4;
/// Fraction of the step over which the slope of a margin at its end is measured.
const SLOPE_FRACTION: f64 = 1e-3;

/// The fractions of a step at which a margin is probed, increasing: `8^-12, ..., 8^-1`, then
/// `2/8, ..., 7/8`.
const PROBES: [f64; 18] = [
    1.0 / 68_719_476_736.0,
    1.0 / 8_589_934_592.0,
    1.0 / 1_073_741_824.0,
    1.0 / 134_217_728.0,
    1.0 / 16_777_216.0,
    1.0 / 2_097_152.0,
    1.0 / 262_144.0,
    1.0 / 32_768.0,
    1.0 / 4_096.0,
    1.0 / 512.0,
    1.0 / 64.0,
    1.0 / 8.0,
    2.0 / 8.0,
    3.0 / 8.0,
    4.0 / 8.0,
    5.0 / 8.0,
    6.0 / 8.0,
    7.0 / 8.0,
];
