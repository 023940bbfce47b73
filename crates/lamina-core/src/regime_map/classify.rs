//! The verdict on one cell from what its run recorded: the motion's range over the span, its
//! cut points or strobe samples (through the one recurrence detector) and its largest
//! Lyapunov exponent.

use super::regime::{Failure, Regime};
use crate::lyapunov::admits_chaos;
use crate::recurrence::{Recurrence, RecurrenceSettings, find_recurrence};

/// What a cell's run recorded, for [`classify`].
#[derive(Clone, Copy, Debug)]
pub struct Evidence<'a> {
    /// Cut points or strobe samples of the span, in time order.
    pub points: &'a [Vec<f64>],
    /// The largest range (maximum minus minimum) of any state over the span's steps.
    pub motion: f64,
    /// The root-mean-square of the states' largest magnitudes over the span (the size the
    /// tolerances scale with).
    pub size: f64,
    /// The largest Lyapunov exponent and the band around zero within which it counts as
    /// zero ([`crate::lyapunov::zero_band`]); `None` when it could not be estimated.
    pub exponent: Option<(f64, f64)>,
    /// The model does not use the time (it is not forced): its periodic orbits have a zero
    /// largest exponent and its resting points a negative one.
    pub autonomous: bool,
    /// The number of states, plus one for the time of a forced model: the dimension of the
    /// flow. Below 3 a bounded motion can neither be chaotic nor fill a torus
    /// (Poincaré–Bendixson), so it is read as an orbit still being approached.
    pub flow_dimension: usize,
}

/// The regime of a cell, and whether its points had settled (`false`: the points still
/// converged or drifted at the end of the span, and the regime is the one they approach).
///
/// In order: a motion whose range over the span is within the repeat tolerance of the
/// recurrence detector is resting; points that repeat after k returns are periodic with k
/// returns; points still converging are read by the exponent (clearly negative in an
/// unforced model: resting; clearly positive: chaotic; else periodic with the number of
/// returns they approach); points that do not repeat are chaotic when the exponent is
/// clearly positive and quasi-periodic otherwise. In a flow of fewer than three dimensions
/// neither can happen: points that still move or do not repeat there are an orbit not yet
/// reached (a short span near a Hopf point, say), and the regime is periodic and unsettled.
pub fn classify(evidence: &Evidence<'_>, settings: &RecurrenceSettings) -> (Regime, bool) {
    if evidence.motion <= settings.tolerance(evidence.size) {
        return (Regime::Resting, true);
    }
    let exponent = evidence
        .exponent
        .filter(|(l, b)| l.is_finite() && b.is_finite());
    let negative = exponent.is_some_and(|(l, band)| l < -band);
    let can_be_chaotic = admits_chaos(evidence.flow_dimension);
    let positive = can_be_chaotic && exponent.is_some_and(|(l, band)| l > band);
    let resting = negative && evidence.autonomous;
    match find_recurrence(evidence.points, settings) {
        Recurrence::Repeats { k, .. } => (Regime::Periodic { returns: k }, true),
        Recurrence::NoRepeat { closest_k, .. } if !can_be_chaotic => {
            let regime = if resting {
                Regime::Resting
            } else {
                Regime::Periodic { returns: closest_k }
            };
            (regime, false)
        }
        Recurrence::NotSettled { closest_k, .. } => {
            let regime = if resting {
                Regime::Resting
            } else if positive {
                Regime::Chaotic
            } else {
                Regime::Periodic { returns: closest_k }
            };
            (regime, false)
        }
        Recurrence::NoRepeat { .. } => match exponent {
            None => (Regime::Failed(Failure::NoExponent), true),
            Some(_) if positive => (Regime::Chaotic, true),
            Some(_) => (Regime::QuasiPeriodic, true),
        },
        Recurrence::TooFewPoints { n_points } => {
            if resting {
                (Regime::Resting, false)
            } else {
                (Regime::Failed(Failure::TooFewPoints { n_points }), true)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn evidence(points: &[Vec<f64>], motion: f64, exponent: Option<(f64, f64)>) -> Evidence<'_> {
        Evidence {
            points,
            motion,
            size: 1.0,
            exponent,
            autonomous: true,
            flow_dimension: 3,
        }
    }

    fn circle(n: usize, k: usize) -> Vec<Vec<f64>> {
        (0..n)
            .map(|i| {
                let phase = std::f64::consts::TAU * (i % k) as f64 / k as f64;
                vec![phase.cos(), phase.sin()]
            })
            .collect()
    }

    fn irrational(n: usize) -> Vec<Vec<f64>> {
        let golden = (5f64.sqrt() - 1.0) / 2.0;
        (0..n)
            .map(|i| {
                let phase = std::f64::consts::TAU * golden * i as f64;
                vec![phase.cos(), phase.sin()]
            })
            .collect()
    }

    #[test]
    fn each_kind_of_evidence_reads_as_its_regime() {
        let settings = RecurrenceSettings::default();
        // [analytic] a motion that does not move rests
        let still = evidence(&[], 0.0, None);
        assert_eq!(classify(&still, &settings), (Regime::Resting, true));
        // [analytic] points repeating every 3 returns: a 3-return orbit
        let three = circle(60, 3);
        let (regime, settled) = classify(&evidence(&three, 2.0, Some((0.0, 0.01))), &settings);
        assert_eq!((regime, settled), (Regime::Periodic { returns: 3 }, true));
        // [analytic] rotation by the golden angle never repeats: a torus unless the exponent
        // is clearly positive
        let torus = irrational(200);
        let quasi = classify(&evidence(&torus, 2.0, Some((0.001, 0.01))), &settings);
        assert_eq!(quasi.0, Regime::QuasiPeriodic);
        let chaos = classify(&evidence(&torus, 2.0, Some((0.5, 0.01))), &settings);
        assert_eq!(chaos.0, Regime::Chaotic);
        let unknown = classify(&evidence(&torus, 2.0, None), &settings);
        assert_eq!(unknown.0, Regime::Failed(Failure::NoExponent));
        // [analytic] no points and a clearly negative exponent: decaying to rest
        let decaying = classify(&evidence(&[], 1.0, Some((-0.3, 0.01))), &settings);
        assert_eq!(decaying, (Regime::Resting, false));
        let lost = classify(&evidence(&[], 1.0, Some((0.0, 0.01))), &settings);
        assert_eq!(
            lost.0,
            Regime::Failed(Failure::TooFewPoints { n_points: 0 })
        );
    }

    #[test]
    fn a_plane_flow_is_never_chaotic_or_quasi_periodic() {
        let settings = RecurrenceSettings::default();
        let torus = irrational(200);
        let plane = |exponent| Evidence {
            flow_dimension: 2,
            ..evidence(&torus, 2.0, Some((exponent, 0.01)))
        };
        // [analytic] Poincaré–Bendixson: a bounded orbit of a plane flow tends to a resting
        // point or a periodic orbit, so points that do not repeat have not settled yet
        for exponent in [0.5, 0.001] {
            let (regime, settled) = classify(&plane(exponent), &settings);
            assert!(matches!(regime, Regime::Periodic { .. }), "{regime:?}");
            assert!(!settled);
        }
    }
}
