//! Special points: the sign changes of their test functions between two neighbouring points
//! of a branch, each root located on the branch itself by the Illinois variant of regula
//! falsi in the arclength (every trial corrected onto the branch by Newton's method), then
//! checked for what it really is (Y. A. Kuznetsov, Elements of Applied Bifurcation Theory,
//! 3rd ed. 2004, ch. 10).

use super::problem::{Measured, Problem};
use super::types::{SpecialKind, SpecialPoint, Spectrum};
use super::walk::{Constraint, Station, Walker};

/// Most corrections spent locating one special point.
const MAX_LOCATE_STEPS: usize = 40;
/// A located pair or multiplier must lie this close to where its kind puts it.
const CHECK_TOLERANCE: f64 = 1e-3;

/// The kinds tested on every interval, in the order they are reported when several change
/// between the same two points.
const KINDS: [SpecialKind; 5] = [
    SpecialKind::Fold,
    SpecialKind::BranchPoint,
    SpecialKind::Hopf,
    SpecialKind::PeriodDoubling,
    SpecialKind::Torus,
];

/// The value of `kind`'s test function at a station, where it is finite and not zero (a
/// sign to compare).
fn test_value(kind: SpecialKind, station: &Station) -> Option<f64> {
    raw_test_value(kind, station).filter(|&v| v != 0.0)
}

/// The value of `kind`'s test function at a station, where it is finite.
fn raw_test_value(kind: SpecialKind, station: &Station) -> Option<f64> {
    let measured = station.measured.as_ref()?;
    let value = match kind {
        SpecialKind::Fold => Some(station.slope()),
        SpecialKind::BranchPoint => station.bordered,
        SpecialKind::Hopf => measured.tests.hopf,
        SpecialKind::PeriodDoubling => measured.tests.period_doubling,
        SpecialKind::Torus => measured.tests.torus,
    }?;
    value.is_finite().then_some(value)
}

impl<P: Problem> Walker<'_, P> {
    /// The special points between `a` and `b`, located, in the order of their arclength.
    pub(crate) fn detect(&mut self, a: &Station, b: &Station) -> Vec<SpecialPoint> {
        let mut found = Vec::new();
        for kind in KINDS {
            let (Some(fa), Some(fb)) = (test_value(kind, a), test_value(kind, b)) else {
                continue;
            };
            if (fa > 0.0) == (fb > 0.0) {
                continue;
            }
            // a simple fold keeps the bordered determinant's sign; where the parameter turns
            // and the determinant flips too, another branch crosses there (the curved half of
            // a pitchfork turns back at it): report the branch point alone
            if kind == SpecialKind::Fold
                && let (Some(da), Some(db)) = (
                    test_value(SpecialKind::BranchPoint, a),
                    test_value(SpecialKind::BranchPoint, b),
                )
                && (da > 0.0) != (db > 0.0)
            {
                continue;
            }
            if let Some(point) = self.locate(kind, a, b, fa, fb) {
                found.push(point);
            }
        }
        found.sort_by(|p, q| p.arclength.total_cmp(&q.arclength));
        found
    }

    /// Locates the root of `kind`'s test function between `a` and `b` (values `fa`, `fb` of
    /// opposite sign) and checks it.
    fn locate(
        &mut self,
        kind: SpecialKind,
        a: &Station,
        b: &Station,
        fa: f64,
        fb: f64,
    ) -> Option<SpecialPoint> {
        let normal = self.weighted(&a.tangent);
        let along = |u: &[f64]| -> f64 {
            normal
                .iter()
                .zip(u.iter().zip(&a.u))
                .map(|(n, (x, y))| n * (x - y))
                .sum()
        };
        let (mut s_low, mut f_low, mut low) = (0.0, fa, a.clone());
        let (mut s_high, mut f_high, mut high) = (along(&b.u), fb, b.clone());
        let scale = a.u.iter().fold(1.0f64, |m, v| m.max(v.abs()));
        let s_tolerance = self.problem.tolerance().max(1e-9) * scale;
        let value_tolerance = self.settings.locate_tolerance;
        // the end kept twice in a row has its value halved (Illinois)
        let mut kept_low = 0usize;
        let mut kept_high = 0usize;
        for _ in 0..MAX_LOCATE_STEPS {
            let value_gap = (high.value() - low.value()).abs();
            let value_scale = low.value().abs().max(1.0);
            let narrow_in_value =
                kind != SpecialKind::Fold && value_gap <= value_tolerance * value_scale;
            if narrow_in_value || (s_high - s_low).abs() <= s_tolerance {
                break;
            }
            let mut s = s_high - f_high * (s_high - s_low) / (f_high - f_low);
            let margin = 1e-3 * (s_high - s_low);
            if !s.is_finite() || (s - s_low) * (s - s_high) >= 0.0 {
                s = 0.5 * (s_low + s_high);
            } else {
                s = s.clamp(
                    s_low.min(s_high) + margin.abs(),
                    s_low.max(s_high) - margin.abs(),
                );
            }
            let trial = self.station_at(a, &normal, s)?;
            let f = raw_test_value(kind, &trial)?;
            if f == 0.0 {
                // on the root itself
                (s_low, f_low, low) = (s, f, trial);
                break;
            }
            if (f > 0.0) == (f_low > 0.0) {
                s_low = s;
                f_low = f;
                low = trial;
                kept_high += 1;
                kept_low = 0;
                if kept_high >= 2 {
                    f_high *= 0.5;
                }
            } else {
                s_high = s;
                f_high = f;
                high = trial;
                kept_low += 1;
                kept_high = 0;
                if kept_low >= 2 {
                    f_low *= 0.5;
                }
            }
        }
        let (station, s) = if f_low.abs() <= f_high.abs() {
            (low, s_low)
        } else {
            (high, s_high)
        };
        let measured = station.measured.as_ref()?;
        let (period, frequency) = check(kind, measured)?;
        Some(SpecialPoint {
            kind,
            value: station.value(),
            state: measured.point.state.clone(),
            points: measured.point.points.clone(),
            period,
            frequency,
            after: 0,
            arclength: a.arclength + s,
            anchor: self.problem.anchor(&station.u),
        })
    }

    /// The corrected, measured station at arclength `s` along `a`'s tangent.
    fn station_at(&mut self, a: &Station, normal: &[f64], s: f64) -> Option<Station> {
        let predicted: Vec<f64> = a.u.iter().zip(&a.tangent).map(|(x, t)| x + s * t).collect();
        let corrected = self
            .correct(
                &predicted,
                &Constraint::Arclength {
                    normal,
                    base: &predicted,
                },
            )
            .ok()?;
        let (tangent, bordered) = self.tangent_at(&corrected.jacobian, &a.tangent)?;
        let previous = a.measured.as_ref().map(|m| m.point.state.clone());
        let measured = self
            .problem
            .measure(&corrected.u, previous.as_deref())
            .ok()?;
        Some(Station {
            u: corrected.u,
            tangent,
            measured: Some(measured),
            bordered: Some(bordered),
            arclength: a.arclength + s,
            normal: None,
        })
    }
}

/// Checks a located root for what it is and gives its period and frequency; `None` for a
/// root that is something else (a neutral saddle: a real pair `l, -l` or real multipliers
/// `m, 1/m`).
fn check(kind: SpecialKind, measured: &Measured) -> Option<(Option<f64>, Option<f64>)> {
    let period = measured.point.period;
    match (kind, &measured.point.spectrum) {
        (SpecialKind::Hopf, Spectrum::Eigenvalues(values)) => {
            let scale = values.iter().map(|e| e.modulus()).fold(0.0f64, f64::max);
            // the eigenvalue nearest the imaginary axis, relative to its size
            let nearest = values
                .iter()
                .filter(|e| e.im > 0.0 && !e.is_real())
                .min_by(|p, q| {
                    (p.re / p.modulus())
                        .abs()
                        .total_cmp(&(q.re / q.modulus()).abs())
                })?;
            if nearest.re.abs() > CHECK_TOLERANCE * scale.max(f64::MIN_POSITIVE) {
                return None;
            }
            let omega = nearest.im;
            Some((Some(std::f64::consts::TAU / omega), Some(omega)))
        }
        (SpecialKind::Torus, Spectrum::Multipliers(values)) => {
            let on_circle = values
                .iter()
                .filter(|m| m.im > 0.0 && !m.is_real())
                .min_by(|p, q| {
                    (p.modulus() - 1.0)
                        .abs()
                        .total_cmp(&(q.modulus() - 1.0).abs())
                })?;
            if (on_circle.modulus() - 1.0).abs() > CHECK_TOLERANCE {
                return None;
            }
            Some((period, Some(on_circle.im.atan2(on_circle.re))))
        }
        (SpecialKind::PeriodDoubling, Spectrum::Multipliers(values)) => {
            let near = values
                .iter()
                .map(|m| (m.re + 1.0).hypot(m.im))
                .fold(f64::INFINITY, f64::min);
            (near <= CHECK_TOLERANCE).then_some((period, None))
        }
        (SpecialKind::Fold | SpecialKind::BranchPoint, Spectrum::Multipliers(values)) => {
            // an orbit's fold or branch point has a multiplier +1 besides the trivial one
            let near = values
                .iter()
                .map(|m| (m.re - 1.0).hypot(m.im))
                .fold(f64::INFINITY, f64::min);
            (near <= CHECK_TOLERANCE).then_some((period, None))
        }
        (SpecialKind::Fold | SpecialKind::BranchPoint, Spectrum::Eigenvalues(_)) => {
            Some((period, None))
        }
        _ => None,
    }
}
