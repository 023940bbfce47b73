//! Crossings that come and go inside one step: a surface function `g` with one sign at both
//! ends of a step may still have crossed zero twice in between (a cut near the edge of an
//! orbit, a threshold only just reached, a switch that goes and comes back).
//!
//! The screen is cheap and runs on every step: from `g` and its time derivative
//! `dg/dt = grad g . f (+ dg/dt at fixed state)` at both ends (the rates at the end of a step
//! come free with the first-same-as-last methods), the cubic Hermite interpolant of `g` over
//! the step is built and its interior extrema found from a quadratic. Only a step whose
//! Hermite interpolant turns back towards zero and comes near it is examined further: the
//! extremum of `g` is located on the step's dense output (Brent's minimisation without
//! derivatives, stopping as soon as `g` changes sign), and every sign change between the
//! step's ends and its extrema brackets one crossing for the caller's root finder.
//!
//! This is the event location with a check of the derivative's sign of L. F. Shampine and
//! S. Thompson, "Event location for ordinary differential equations", Computers and
//! Mathematics with Applications 39 (2000) 43-54, on the dense output of Hairer, Nørsett &
//! Wanner, Solving Ordinary Differential Equations I, sec. II.6.

/// Interior extrema of a step's cubic Hermite interpolant of `g`, as fractions of the step,
/// in increasing order; empty when none of them comes near zero.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct Turns {
    s: [f64; 2],
    /// `+1` for a minimum, `-1` for a maximum.
    kind: [f64; 2],
    n: usize,
}

impl Turns {
    /// Whether the step needs no closer look.
    #[inline]
    pub(crate) fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// The fractions of the step at which the interpolant has an extremum.
    pub(crate) fn fractions(&self) -> &[f64] {
        &self.s[..self.n]
    }
}

/// How near zero, in units of how far it went, an extremum of the Hermite interpolant must
/// come for the first screen of a live step, whose slopes come from the rates at the step's
/// ends; generous, so that it passes every step that [`REACH`] passes on the slopes of the
/// dense output (which differ from those by round-off or, for the stiff method, by about the
/// tolerance).
pub(crate) const FIRST_REACH: f64 = 4.0;
/// How near zero an extremum must come on the dense output's own slopes for the step to be
/// examined: at least as near as it went from the farther end of the step.
pub(crate) const REACH: f64 = 1.0;

/// The screen: `g0`, `g1` the values of `g` at the ends of a step, `m0`, `m1` its
/// derivatives with respect to the step fraction (the time derivatives times the step size).
/// Returns the interior extrema of the cubic Hermite interpolant when one of them turns back
/// towards zero and ends within `reach` times the distance it went from the farther end of
/// the step to zero (or beyond); then the step may hide crossings that its ends do not show.
/// A non-finite input screens nothing.
#[inline]
pub(crate) fn screen(g0: f64, g1: f64, m0: f64, m1: f64, reach: f64) -> Turns {
    let mut turns = Turns::default();
    // p(s) = g0 + m0 s + b s^2 + c s^3, p'(s) = m0 + 2 b s + 3 c s^2
    let delta = g1 - g0;
    let b = 3.0 * delta - 2.0 * m0 - m1;
    let c = m0 + m1 - 2.0 * delta;
    let (qa, qb, qc) = (3.0 * c, 2.0 * b, m0);
    // most steps: p' has one sign at both ends and at its vertex, so no root inside
    // (decided without a square root)
    if m0 * m1 > 0.0 {
        // the vertex -qb / (2 qa) lies inside (0, 1) when qb and 2 qa + qb have opposite
        // signs to qa and its value qc - qb^2 / (4 qa) has the sign of m0 when
        // (4 qa qc - qb^2) qa m0 > 0 (without the division, which every step would wait on)
        let inside = qa * qb < 0.0 && qa * (2.0 * qa + qb) > 0.0;
        if !inside || (4.0 * qa * qc - qb * qb) * qa * m0 > 0.0 {
            return turns;
        }
    }
    let mut roots = [f64::NAN; 2];
    if qa.abs() <= 1e-12 * (qb.abs() + qc.abs()) {
        if qb != 0.0 {
            roots[0] = -qc / qb;
        }
    } else {
        let disc = qb * qb - 4.0 * qa * qc;
        if disc < 0.0 {
            return turns;
        }
        // the root of larger magnitude without cancellation, the other from the product
        let q = -0.5 * (qb + disc.sqrt().copysign(qb));
        roots[0] = q / qa;
        if q != 0.0 {
            roots[1] = qc / q;
        }
    }
    let p = |s: f64| g0 + s * (m0 + s * (b + s * c));
    let mut values = [0.0; 2];
    for &s in &roots {
        if s > 0.0 && s < 1.0 {
            values[turns.n] = p(s);
            turns.s[turns.n] = s;
            turns.kind[turns.n] = if 2.0 * b + 6.0 * c * s >= 0.0 {
                1.0
            } else {
                -1.0
            };
            turns.n += 1;
        }
    }
    let near = if (g0 > 0.0) == (g1 > 0.0) && (g0 < 0.0) == (g1 < 0.0) {
        // one sign at both ends: an extremum that turns back towards zero and reaches it,
        // or gets at least as near to it as it went from the farther end
        values[..turns.n].iter().any(|&value| {
            let depth = (g0 - value).abs().max((g1 - value).abs());
            let towards_zero = (g0 - value).signum() == g0.signum() || g0 == 0.0;
            (value > 0.0) != (g1 > 0.0) || (towards_zero && value.abs() <= reach * depth)
        })
    } else {
        // a crossing step hides two more crossings only between two extrema, one of them
        // near zero
        turns.n == 2
            && values[0].abs().min(values[1].abs()) <= reach * (values[0] - values[1]).abs()
    };
    if !near {
        turns.n = 0;
    }
    if turns.n == 2 && turns.s[0] > turns.s[1] {
        turns.s.swap(0, 1);
        turns.kind.swap(0, 1);
    }
    turns
}

/// A piece of a step on which `g` changes sign once: fractions `a < b` with the values there.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Bracket {
    /// Start of the piece.
    pub a: f64,
    /// End of the piece.
    pub b: f64,
    /// `g(a)`.
    pub ga: f64,
    /// `g(b)`.
    pub gb: f64,
}

/// The pieces of a step on which `g` (evaluated at a fraction of the step by `g`) changes
/// sign, in time order, given its values `g0`, `g1` at the ends and the extrema `turns` of
/// its Hermite interpolant from [`screen`]. Each extremum is located on `g` itself between
/// its neighbours (Brent's minimisation), and the step is split there. At most three
/// pieces; `out` receives them and the count is returned.
pub(crate) fn brackets(
    mut g: impl FnMut(f64) -> f64,
    g0: f64,
    g1: f64,
    turns: &Turns,
    out: &mut [Bracket; 3],
) -> usize {
    let fractions = turns.fractions();
    // the points splitting the step: its ends and the located extrema
    let mut points = [(0.0, g0), (0.0, 0.0), (0.0, 0.0), (1.0, g1)];
    let mut n_points = 1;
    for (i, &s) in fractions.iter().enumerate() {
        let lower = if i == 0 {
            0.0
        } else {
            0.5 * (fractions[i - 1] + s)
        };
        let upper = fractions.get(i + 1).map_or(1.0, |&next| 0.5 * (s + next));
        // a maximum of g is a minimum of -g
        let sign = turns.kind[i];
        let g_here = g(s);
        let (at, value) = local_min(|x| sign * g(x), lower, upper, s, sign * g_here);
        points[n_points] = (at, sign * value);
        n_points += 1;
    }
    points[n_points] = (1.0, g1);
    n_points += 1;
    let mut n = 0;
    for pair in points[..n_points].windows(2) {
        let ((a, ga), (b, gb)) = (pair[0], pair[1]);
        if b > a && ((ga < 0.0 && gb >= 0.0) || (ga > 0.0 && gb <= 0.0)) {
            out[n] = Bracket { a, b, ga, gb };
            n += 1;
        }
    }
    n
}

/// The minimum of `f` on `[a, b]` starting from `x0` (with `f(x0) = f0`), by Brent's method
/// (golden section with parabolic steps): R. P. Brent, Algorithms for Minimization without
/// Derivatives (1973), ch. 5. Stops early, returning that point, as soon as `f` is negative:
/// a crossing is bracketed then. At most 60 evaluations.
fn local_min(mut f: impl FnMut(f64) -> f64, a: f64, b: f64, x0: f64, f0: f64) -> (f64, f64) {
    const GOLDEN: f64 = 0.381_966_011_250_105_1;
    let (mut a, mut b) = (a, b);
    let (mut x, mut fx) = (x0.clamp(a, b), f0);
    let (mut w, mut fw, mut v, mut fv) = (x, fx, x, fx);
    let (mut d, mut e) = (0.0_f64, 0.0_f64);
    for _ in 0..60 {
        if fx < 0.0 {
            break;
        }
        let m = 0.5 * (a + b);
        let tol = f64::EPSILON.sqrt() * x.abs() + 1e-12;
        let tol2 = 2.0 * tol;
        if (x - m).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let (mut p, mut q, mut r) = (0.0, 0.0, 0.0);
        if e.abs() > tol {
            r = (x - w) * (fx - fv);
            q = (x - v) * (fx - fw);
            p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            } else {
                q = -q;
            }
            r = e;
            e = d;
        }
        if p.abs() < (0.5 * q * r).abs() && p > q * (a - x) && p < q * (b - x) {
            d = p / q;
            let u = x + d;
            if u - a < tol2 || b - u < tol2 {
                d = if x < m { tol } else { -tol };
            }
        } else {
            e = if x < m { b - x } else { a - x };
            d = GOLDEN * e;
        }
        let u = if d.abs() >= tol {
            x + d
        } else {
            x + tol.copysign(d)
        };
        let fu = f(u);
        if fu <= fx {
            if u < x {
                b = x;
            } else {
                a = x;
            }
            (v, fv, w, fw, x, fx) = (w, fw, x, fx, u, fu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                (v, fv, w, fw) = (w, fw, u, fu);
            } else if fu <= fv || v == x || v == w {
                (v, fv) = (u, fu);
            }
        }
    }
    (x, fx)
}

/// Whether an extremum of `g` may lie near the step end between two steps whose changes of
/// `g` are `d_before` and `d_after`: they differ in sign (or one is zero). A re-slice, which
/// has no rates, examines both steps then (on their dense output's slopes with [`REACH`]).
#[inline]
pub(crate) fn turns_between(d_before: f64, d_after: f64) -> bool {
    !(d_before > 0.0 && d_after > 0.0 || d_before < 0.0 && d_after < 0.0)
}

/// How far from zero, in units of the changes of `g` over the two steps around it, a turn
/// of `g` may lie and still come near zero (the extremum lies within about one change of the
/// value at the shared end, and the screen passes only an extremum within one change of
/// zero; the factor leaves a margin).
const TURN_REACH: f64 = 3.0;

/// Whether the steps around a shared step end where `g` is `g_end` and changed by
/// `d_before` and `d_after` must be examined: `g` turns there ([`turns_between`]) and not
/// so far from zero that no extremum near the turn can reach the screen's [`REACH`].
#[inline]
pub(crate) fn turn_near_zero(g_end: f64, d_before: f64, d_after: f64) -> bool {
    turns_between(d_before, d_after) && g_end.abs() <= TURN_REACH * (d_before.abs() + d_after.abs())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `g` and its derivative in the step fraction of `g(s) = (s - 0.5)^2 - depth`.
    fn dip(depth: f64) -> (impl Fn(f64) -> f64, f64, f64, f64, f64) {
        let g = move |s: f64| (s - 0.5) * (s - 0.5) - depth;
        (g, 0.25 - depth, 0.25 - depth, -1.0, 1.0)
    }

    #[test]
    fn a_dip_through_zero_gives_both_crossings() {
        // [analytic] (s - 0.5)^2 = 0.01 at s = 0.4 and 0.6
        let (g, g0, g1, m0, m1) = dip(0.01);
        let turns = screen(g0, g1, m0, m1, REACH);
        assert_eq!(turns.fractions(), &[0.5]);
        let mut out = [Bracket {
            a: 0.0,
            b: 0.0,
            ga: 0.0,
            gb: 0.0,
        }; 3];
        let n = brackets(&g, g0, g1, &turns, &mut out);
        assert_eq!(n, 2);
        assert!(out[0].a < 0.4 && out[0].b > 0.4 && out[0].ga > 0.0);
        assert!(out[1].a < 0.6 && out[1].b > 0.6 && out[1].gb > 0.0);
    }

    #[test]
    fn a_dip_that_stays_above_zero_gives_none() {
        // [analytic] (s - 0.5)^2 + 0.01 > 0
        let (g, g0, g1, m0, m1) = dip(-0.01);
        let turns = screen(g0, g1, m0, m1, REACH);
        let mut out = [Bracket {
            a: 0.0,
            b: 0.0,
            ga: 0.0,
            gb: 0.0,
        }; 3];
        assert_eq!(brackets(&g, g0, g1, &turns, &mut out), 0);
    }

    #[test]
    fn monotone_and_far_steps_are_not_examined() {
        // [analytic] g = s + 1 has no extremum; g = (s - 0.5)^2 + 10 turns back far from zero
        assert!(screen(1.0, 2.0, 1.0, 1.0, REACH).is_empty());
        assert!(screen(10.25, 10.25, -1.0, 1.0, REACH).is_empty());
        // a maximum of a positive g turns away from zero
        assert!(screen(0.1, 0.1, 1.0, -1.0, REACH).is_empty());
    }

    #[test]
    fn a_grazing_touch_is_found_to_round_off() {
        // [analytic] sin(pi s) - 1 + 1e-10 crosses zero twice near s = 0.5
        let eps = 1e-10;
        let pi = std::f64::consts::PI;
        let g = |s: f64| -(pi * s).sin() + 1.0 - eps;
        let (g0, g1, m0, m1) = (1.0 - eps, 1.0 - eps, -pi, pi);
        let turns = screen(g0, g1, m0, m1, REACH);
        assert!(!turns.is_empty());
        let mut out = [Bracket {
            a: 0.0,
            b: 0.0,
            ga: 0.0,
            gb: 0.0,
        }; 3];
        assert_eq!(brackets(g, g0, g1, &turns, &mut out), 2);
    }

    #[test]
    fn a_crossing_step_with_an_extra_pair_gives_three() {
        // [analytic] (s - 0.2)(s - 0.5)(s - 0.8) has three roots in (0, 1)
        let g = |s: f64| (s - 0.2) * (s - 0.5) * (s - 0.8);
        let dg = |s: f64| 3.0 * s * s - 3.0 * s + 0.66;
        let turns = screen(g(0.0), g(1.0), dg(0.0), dg(1.0), REACH);
        assert_eq!(turns.fractions().len(), 2);
        let mut out = [Bracket {
            a: 0.0,
            b: 0.0,
            ga: 0.0,
            gb: 0.0,
        }; 3];
        assert_eq!(brackets(g, g(0.0), g(1.0), &turns, &mut out), 3);
    }
}
