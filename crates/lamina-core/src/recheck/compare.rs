//! The comparisons of a recheck: two periodic orbits, two sequences of points from a common
//! start, two Lyapunov spectra. Each names every number it compares and finds the worst.

use super::{
    Comparison, MAX_DIGITS, Recheck, RecheckError, digits_of_agreement, significant_digits,
};
use crate::cycle::{CycleReport, MapPoint, Multiplier, UNIT_CIRCLE_BAND};
use crate::integrate::StepControl;
use crate::lyapunov::{Spectrum, zero_band};

/// Points of a run compared one by one after their common start when the run is sensitive
/// to small changes (a chaotic run): about as far as two computations of the Lorenz attractor
/// at a tolerance of 1e-9 stay together (REFERENCES.md, note on chaotic runs).
pub const HORIZON: usize = 20;

/// Digits lost between the short horizon and the whole run beyond which the run counts as
/// parting (its later points no longer compare one by one).
const PARTING_DIGITS: f64 = 2.0;

/// Compares two computations of one periodic orbit: the period, the point (state by state,
/// named by `names`) and the multipliers of the map (paired nearest first, named
/// `multiplier 1`, `multiplier 2`, ... by decreasing modulus of the first).
///
/// States within `atol` (the first computation's absolute tolerance) of zero in both count as
/// the same zero (a coordinate fixed by the cut plane); multipliers below the unit circle's
/// band (1e-6) in both count as zero (they say nothing about stability). A complex
/// multiplier's digits are those of the complex difference against its modulus; its values
/// in [`super::Compared`] are the moduli. `second` is the step control of the second
/// computation, reported with the result.
///
/// When the second computation found an orbit of another number of returns, nothing agrees:
/// 0 digits, the worst number `returns`.
///
/// # Errors
/// [`RecheckError::NothingToCompare`] only if there is no number at all (no states).
pub fn compare_cycles(
    first: &CycleReport,
    second: &CycleReport,
    names: &[String],
    atol: f64,
    control: &StepControl,
) -> Result<Recheck, RecheckError> {
    let mut comparison = Comparison::default();
    if first.k != second.k || first.map != second.map {
        comparison.add("returns", first.k as f64, second.k as f64, 0.0);
        return comparison.finish(
            control,
            Some(format!(
                "the second computation converged to another orbit ({} returns instead of {})",
                second.k, first.k
            )),
        );
    }
    comparison.add(
        "period",
        first.period,
        second.period,
        digits_of_agreement(first.period, second.period, 0.0),
    );
    for ((name, &a), &b) in names
        .iter()
        .zip(&first.point.state)
        .zip(&second.point.state)
    {
        comparison.add(name.clone(), a, b, digits_of_agreement(a, b, atol));
    }
    for (idx, (m1, m2)) in pair_nearest(&first.multipliers, &second.multipliers)
        .into_iter()
        .enumerate()
    {
        let scale = m1.modulus().max(m2.modulus());
        let digits = if scale <= UNIT_CIRCLE_BAND {
            f64::from(MAX_DIGITS)
        } else {
            significant_digits(0.0, (m1.re - m2.re).hypot(m1.im - m2.im), scale)
        };
        let (a, b) = if m1.is_real() && m2.is_real() {
            (m1.re, m2.re)
        } else {
            (m1.modulus(), m2.modulus())
        };
        comparison.add(format!("multiplier {}", idx + 1), a, b, digits);
    }
    comparison.finish(control, None)
}

/// Pairs each multiplier of `first` with the nearest one of `second` not yet taken (the
/// sorting by modulus can swap two of nearly equal modulus).
fn pair_nearest(first: &[Multiplier], second: &[Multiplier]) -> Vec<(Multiplier, Multiplier)> {
    let mut taken = vec![false; second.len()];
    let mut pairs = Vec::with_capacity(first.len());
    for m1 in first {
        let distance = |m2: &Multiplier| (m1.re - m2.re).hypot(m1.im - m2.im);
        let best = second
            .iter()
            .enumerate()
            .filter(|(j, _)| !taken[*j])
            .min_by(|(_, p), (_, q)| distance(p).total_cmp(&distance(q)));
        if let Some((j, m2)) = best {
            taken[j] = true;
            pairs.push((*m1, *m2));
        }
    }
    pairs
}

/// Compares two computations of a run's points (cut points or strobe samples) that start at
/// a common point: `first[0]` and `second[0]` are that point, and the points after it are
/// compared one by one, state by state (named `point 7: x`, numbered from the common start
/// as 0), and with `return_times` (cut points) also the time since the point before.
///
/// States within `atol` of zero in both count as the same zero. When the points part
/// (a chaotic run: the whole run agrees in at least [`PARTING_DIGITS`] fewer digits than its
/// first [`HORIZON`] points), only those first points count, and the note says so. A
/// different number of points is compared as far as both go, and said.
///
/// # Errors
/// [`RecheckError::NothingToCompare`] when either has no point after the common start.
pub fn compare_points(
    first: &[MapPoint],
    second: &[MapPoint],
    names: &[String],
    return_times: bool,
    atol: f64,
    control: &StepControl,
) -> Result<Recheck, RecheckError> {
    let n = first.len().min(second.len());
    if n < 2 {
        return Err(RecheckError::NothingToCompare(format!(
            "the first computation has {} point(s) after the common start, the second {}",
            first.len().saturating_sub(1),
            second.len().saturating_sub(1)
        )));
    }
    // the numbers of each point, and the fewest digits of each point
    let per_point: Vec<Comparison> = (1..n)
        .map(|i| {
            let mut numbers = Comparison::default();
            if return_times {
                let (r1, r2) = (first[i].t - first[i - 1].t, second[i].t - second[i - 1].t);
                numbers.add(
                    format!("point {i}: return time"),
                    r1,
                    r2,
                    digits_of_agreement(r1, r2, 0.0),
                );
            }
            for ((name, &a), &b) in names.iter().zip(&first[i].state).zip(&second[i].state) {
                numbers.add(
                    format!("point {i}: {name}"),
                    a,
                    b,
                    digits_of_agreement(a, b, atol),
                );
            }
            numbers
        })
        .collect();
    let fewest = |c: &Comparison| c.worst().map_or(f64::from(MAX_DIGITS), |w| w.digits);
    let digits: Vec<f64> = per_point.iter().map(fewest).collect();
    let horizon = HORIZON.min(digits.len());
    let within = digits[..horizon]
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min);
    let overall = digits.iter().copied().fold(f64::INFINITY, f64::min);
    let parting = digits.len() > horizon && overall < within - PARTING_DIGITS;
    let counted = if parting { horizon } else { digits.len() };
    let mut notes = Vec::new();
    if parting {
        let from = digits
            .iter()
            .position(|&d| d < within - PARTING_DIGITS)
            .map_or(digits.len(), |i| i + 1);
        notes.push(format!(
            "compared over the first {horizon} points after the common start only: further on \
             the two computations drift apart (down to {} digit(s) from point {from} on), as \
             a chaotic run's points do; compare the cloud's statistics there",
            overall.floor().max(0.0)
        ));
    } else {
        notes.push(format!(
            "all {} points after the common start compared",
            digits.len()
        ));
    }
    if first.len() != second.len() {
        notes.push(format!(
            "the first computation gave {} points, the second {}",
            first.len(),
            second.len()
        ));
    }
    let mut comparison = Comparison::default();
    for point in per_point.into_iter().take(counted) {
        comparison.numbers.extend(point.numbers);
    }
    comparison.finish(control, Some(notes.join("; ")))
}

/// Compares two computations of a Lyapunov spectrum, exponent by exponent (`l1`, `l2`, ...).
///
/// An exponent is only as good as its running estimate has settled: its uncertainty is the
/// larger of the difference between the two computations and the spread of either running
/// estimate, and its digits are measured against the larger of its magnitude and 1e-3 of the
/// largest magnitude in the spectrum. An exponent that both computations find zero (within
/// the band the verdict uses, [`crate::lyapunov::zero_band`]) counts as the same zero: its
/// printed digits mean nothing, the agreement on "zero" is what counts. The note says
/// whether the spread or the tolerance limits the worst exponent.
///
/// # Errors
/// [`RecheckError::NothingToCompare`] when the two have different numbers of exponents or
/// none.
pub fn compare_spectra(
    first: &Spectrum,
    second: &Spectrum,
    control: &StepControl,
) -> Result<Recheck, RecheckError> {
    if first.exponents.len() != second.exponents.len() || first.exponents.is_empty() {
        return Err(RecheckError::NothingToCompare(format!(
            "{} exponent(s) against {}",
            first.exponents.len(),
            second.exponents.len()
        )));
    }
    let largest = first
        .exponents
        .iter()
        .chain(&second.exponents)
        .filter(|l| l.is_finite())
        .fold(0.0f64, |m, l| m.max(l.abs()));
    let floor = 1e-3 * largest;
    let spread_of = |s: &Spectrum, i: usize| {
        s.spread
            .get(i)
            .copied()
            .filter(|v| v.is_finite())
            .unwrap_or(0.0)
    };
    let band1 = zero_band(&first.exponents, &first.spread);
    let band2 = zero_band(&second.exponents, &second.spread);
    let mut comparison = Comparison::default();
    let mut limits = Vec::new();
    for (i, (&l1, &l2)) in first.exponents.iter().zip(&second.exponents).enumerate() {
        let difference = (l1 - l2).abs();
        let spread = spread_of(first, i).max(spread_of(second, i));
        let scale = l1.abs().max(l2.abs()).max(floor);
        let zero = |l: f64, band: &[f64]| band.get(i).is_some_and(|b| l.abs() <= *b);
        let digits = if !l1.is_finite() || !l2.is_finite() {
            significant_digits(l1, l2, scale)
        } else if zero(l1, &band1) && zero(l2, &band2) {
            f64::from(MAX_DIGITS)
        } else {
            significant_digits(0.0, difference.max(spread), scale)
        };
        comparison.add(format!("l{}", i + 1), l1, l2, digits);
        limits.push((difference, spread));
    }
    let worst = comparison
        .numbers
        .iter()
        .enumerate()
        .reduce(|w, c| if c.1.digits < w.1.digits { c } else { w })
        .map(|(i, _)| i);
    let note = worst.and_then(|i| {
        let (difference, spread) = limits[i];
        let name = &comparison.numbers[i].name;
        if !difference.is_finite() {
            None
        } else if spread >= difference {
            Some(format!(
                "{name} is limited by the spread of its running estimate ({spread:.1e}), not by \
                 the tolerance (the two computations differ by {difference:.1e}): a longer \
                 span would sharpen it"
            ))
        } else {
            Some(format!(
                "{name} differs between the two computations ({difference:.1e}) by more than \
                 the spread of its running estimate ({spread:.1e}): the tolerance limits it"
            ))
        }
    });
    comparison.finish(control, note)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lyapunov::{Trace, Verdict};
    use crate::run::StopReason;

    fn point(t: f64, state: &[f64]) -> MapPoint {
        MapPoint {
            t,
            state: state.to_vec(),
        }
    }

    fn names() -> Vec<String> {
        vec!["x".to_string(), "y".to_string()]
    }

    #[test]
    fn points_that_part_are_compared_over_a_short_horizon() {
        // [analytic] a difference growing tenfold every 5 points from 1e-12, as two chaotic
        // computations do: the first 20 points agree to about 8 digits, later none
        let first: Vec<MapPoint> = (0..60)
            .map(|i| point(i as f64, &[1.0 + 0.1 * i as f64, 2.0]))
            .collect();
        let second: Vec<MapPoint> = first
            .iter()
            .enumerate()
            .map(|(i, p)| {
                let off = if i == 0 {
                    0.0
                } else {
                    (1e-12 * 10f64.powf(i as f64 / 5.0)).min(1.0)
                };
                point(p.t, &[p.state[0] + off, 2.0])
            })
            .collect();
        let recheck = compare_points(
            &first,
            &second,
            &names(),
            false,
            1e-12,
            &StepControl::default(),
        )
        .expect("points");
        // point 20: off = 1e-8 on x = 3: 8.5 digits
        assert_eq!(recheck.digits, 8, "{recheck}");
        assert_eq!(recheck.worst.name, "point 20: x");
        let note = recheck.note.expect("note");
        assert!(note.contains("first 20 points"), "{note}");
        assert_eq!(recheck.n_compared, 40);
    }

    #[test]
    fn points_that_stay_together_are_all_compared() {
        // [analytic] a constant relative difference of 3e-10: 9.5 digits everywhere
        let first: Vec<MapPoint> = (0..50).map(|i| point(i as f64, &[2.0, 1e-17])).collect();
        let second: Vec<MapPoint> = first
            .iter()
            .map(|p| point(p.t * (1.0 + 3e-10), &[2.0 * (1.0 + 3e-10), -1e-18]))
            .collect();
        let recheck = compare_points(
            &first,
            &second,
            &names(),
            true,
            1e-12,
            &StepControl::default(),
        )
        .expect("points");
        // the return times (1 against 1 + 3e-10) and x agree in 9.5 digits, y is zero
        assert_eq!(recheck.digits, 9, "{recheck}");
        assert!(recheck.note.expect("note").starts_with("all 49 points"));
    }

    fn spectrum(exponents: &[f64], spread: &[f64]) -> Spectrum {
        Spectrum {
            exponents: exponents.to_vec(),
            spread: spread.to_vec(),
            time: 1000.0,
            t_end: 1000.0,
            n_states: exponents.len(),
            time_direction_omitted: false,
            rates_jump: false,
            n_saltations: 0,
            n_not_transversal: 0,
            kaplan_yorke: None,
            verdict: Verdict::Undecided,
            trace: Trace::new(exponents.len()),
            reason: StopReason::Finished,
            stats: Default::default(),
            n_reorthonormalisations: 0,
        }
    }

    #[test]
    fn exponents_are_only_as_good_as_their_spread() {
        // [analytic] Lorenz-like: the estimates differ by 1e-6 but spread 2e-3: the spread
        // limits l1 to about 2.7 digits (0.906 / 2e-3); the middle exponent is zero within
        // its band (6 spreads) in both, so it agrees as zero
        let first = spectrum(&[0.906, 1e-4, -14.57], &[2e-3, 1e-3, 1e-4]);
        let second = spectrum(&[0.906001, -2e-4, -14.5701], &[2e-3, 1e-3, 1e-4]);
        let recheck = compare_spectra(&first, &second, &StepControl::default()).expect("same");
        assert_eq!(recheck.worst.name, "l1");
        assert_eq!(recheck.digits, 2, "{recheck}");
        let note = recheck.note.expect("note");
        assert!(note.contains("spread"), "{note}");
        // [analytic] a middle exponent of 0.02 is not zero (band 1e-3 of 14.57): judged against its
        // magnitude with its spread 1e-3, about 1.3 digits
        let first = spectrum(&[0.906, 0.02, -14.57], &[2e-3, 1e-3, 1e-4]);
        let second = spectrum(&[0.906001, 0.0201, -14.5701], &[2e-3, 1e-3, 1e-4]);
        let recheck = compare_spectra(&first, &second, &StepControl::default()).expect("same");
        assert_eq!(recheck.worst.name, "l2");
        assert_eq!(recheck.digits, 1, "{recheck}");
        // a different number of exponents has nothing to compare
        assert!(
            compare_spectra(&first, &spectrum(&[0.9], &[0.0]), &StepControl::default()).is_err()
        );
    }

    #[test]
    fn multipliers_pair_with_their_nearest() {
        let real = |re: f64| Multiplier { re, im: 0.0 };
        // two of nearly equal modulus sorted the other way round are still paired right
        let pairs = pair_nearest(
            &[real(0.5), real(-0.5000001)],
            &[real(-0.5000002), real(0.5)],
        );
        assert_eq!(pairs[0].1.re, 0.5);
        assert_eq!(pairs[1].1.re, -0.5000002);
    }
}
