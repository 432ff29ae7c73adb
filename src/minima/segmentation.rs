//! Cutting a long light curve into events around the predicted times of a linear
//! ephemeris.
//!
//! Predicted centre of cycle E: T(E) = T₀ + (E + k)·P, with k = 0 for primaries and maxima
//! and k = ½ for secondaries (common practice; the same convention as `oc::cycles`). Each
//! event keeps the points within a half-width w of T(E), given in days or as a fraction of
//! the period. An event is skipped, with its reason, when a branch has fewer than the
//! required points (e.g. a night that ends at mid-eclipse) or when the window holds fewer
//! points than the method needs. Predicted events inside the light curve's span whose
//! window holds no point at all are counted, not listed.

use super::MinimaError;
use crate::constants::SECONDS_PER_DAY;
use crate::oc::{EventKind, ReferenceEphemeris};
use crate::time::Instant;

/// Half-width of the window around each predicted centre.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum EventWindow {
    /// Half-width in days.
    HalfWidthDays(f64),
    /// Half-width as a fraction of the period (cycles).
    HalfWidthPhase(f64),
}

impl EventWindow {
    /// The half-width in days for a period of `period_d` days.
    pub fn half_width_d(self, period_d: f64) -> f64 {
        match self {
            EventWindow::HalfWidthDays(d) => d,
            EventWindow::HalfWidthPhase(p) => p * period_d,
        }
    }
}

/// Minimum data per event.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SegmentOptions {
    /// Fewest points in the whole window.
    pub min_points: usize,
    /// Fewest points on each side (branch) of the predicted centre.
    pub min_points_per_branch: usize,
}

impl Default for SegmentOptions {
    fn default() -> Self {
        SegmentOptions { min_points: 12, min_points_per_branch: 3 }
    }
}

/// The points of one event: indices `first_index..=last_index` of the light curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Segment {
    /// Cycle number (half-integral for secondaries).
    pub cycle: f64,
    /// Predicted centre, days since the light curve's reference instant.
    pub predicted_d: f64,
    /// First index inside the window.
    pub first_index: usize,
    /// Last index inside the window.
    pub last_index: usize,
}

impl Segment {
    /// Number of points.
    pub fn points(&self) -> usize {
        self.last_index + 1 - self.first_index
    }
}

/// Which side of the predicted centre.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Branch {
    /// Before the predicted centre (descending branch of a minimum).
    Before,
    /// After the predicted centre.
    After,
}

/// Why an event was not timed.
#[derive(Debug, Clone, PartialEq)]
pub enum SkipReason {
    /// A branch has too few points.
    BranchMissing {
        /// The branch that is short.
        branch: Branch,
        /// Points in the window before the predicted centre.
        before: usize,
        /// Points in the window after the predicted centre.
        after: usize,
        /// Points needed on each branch.
        needed: usize,
    },
    /// Too few points in the window.
    TooFewPoints {
        /// Points in the window.
        got: usize,
        /// Points needed in the window.
        needed: usize,
    },
    /// The timing method failed (the message says why).
    Failed(String),
    /// The measured centre lies outside the window or outside the points.
    CentreOutside {
        /// The measured centre, days since the light curve's reference instant.
        centre_d: f64,
        /// The predicted centre, days since the same reference.
        predicted_d: f64,
    },
}

impl SkipReason {
    /// A short machine-readable code.
    pub fn code(&self) -> &'static str {
        match self {
            SkipReason::BranchMissing { .. } => "branch_missing",
            SkipReason::TooFewPoints { .. } => "too_few_points",
            SkipReason::Failed(_) => "timing_failed",
            SkipReason::CentreOutside { .. } => "centre_outside_window",
        }
    }
}

impl std::fmt::Display for SkipReason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SkipReason::BranchMissing { branch, before, after, needed } => write!(
                f,
                "the branch {} the predicted centre has too few points ({} before, {} after; at least {needed} needed on each side)",
                if *branch == Branch::Before { "before" } else { "after" },
                before,
                after
            ),
            SkipReason::TooFewPoints { got, needed } => {
                write!(f, "only {got} points in the window; at least {needed} needed")
            }
            SkipReason::Failed(m) => write!(f, "{m}"),
            SkipReason::CentreOutside { centre_d, predicted_d } => {
                write!(
                    f,
                    "the measured centre is {:.6} d from the predicted one, outside the window or the points",
                    centre_d - predicted_d
                )
            }
        }
    }
}

/// An event with data that was not timed.
#[derive(Debug, Clone, PartialEq)]
pub struct SkippedEvent {
    /// Cycle number.
    pub cycle: f64,
    /// Predicted centre, days since the light curve's reference instant.
    pub predicted_d: f64,
    /// Points in its window.
    pub points: usize,
    /// Index (into the light curve arrays) of the first point in its window.
    pub first_index: usize,
    /// Index of the last point in its window.
    pub last_index: usize,
    /// Why.
    pub reason: SkipReason,
}

/// Most predicted events one call will consider (a guard against a period far too short
/// for the span).
pub const MAX_EVENTS: f64 = 5.0e6;

/// Cuts a light curve (times in days since `reference`, strictly increasing) into the
/// events of `kind` around the reference ephemeris (epoch of cycle 0, period).
///
/// Returned: the events to time, the skipped events with reasons, and the number of
/// predicted events inside the span with an empty window. Errors: a period or half-width
/// that is not positive, a half-width above half the period (windows would overlap), or
/// options below the minimum of 1 point per branch and 3 in all.
pub fn segment_events(
    time_d: &[f64],
    reference: Instant,
    ephemeris: &ReferenceEphemeris,
    kind: EventKind,
    window: EventWindow,
    options: &SegmentOptions,
) -> Result<(Vec<Segment>, Vec<SkippedEvent>, usize), MinimaError> {
    let p = ephemeris.period_d;
    if !(p.is_finite() && p > 0.0) {
        return Err(MinimaError::BadOption(format!("the period must be a positive number of days, got {p}")));
    }
    let w = window.half_width_d(p);
    if !(w.is_finite() && w > 0.0 && w <= 0.5 * p) {
        return Err(MinimaError::BadOption(format!(
            "the window half-width must be > 0 and at most half the period ({:.6} d) so that windows do not overlap, got {w} d",
            0.5 * p
        )));
    }
    if options.min_points_per_branch < 1 || options.min_points < 3 {
        return Err(MinimaError::BadOption(format!(
            "at least 1 point per branch and 3 in all are needed, got {} and {}",
            options.min_points_per_branch, options.min_points
        )));
    }
    for i in 0..time_d.len() {
        if !time_d[i].is_finite() {
            return Err(MinimaError::NonFinite { what: "time", index: i, value: time_d[i] });
        }
        if i > 0 && time_d[i] <= time_d[i - 1] {
            return Err(MinimaError::UnsortedTimes { index: i, time_d: time_d[i], previous_d: time_d[i - 1] });
        }
    }
    let (mut segments, mut skipped, mut empty) = (Vec::new(), Vec::new(), 0usize);
    let Some((&first, &last)) = time_d.first().zip(time_d.last()) else {
        return Ok((segments, skipped, empty));
    };
    let epoch_d = ephemeris.epoch.seconds_since(&reference) / SECONDS_PER_DAY;
    let k = kind.cycle_offset();
    let e_lo = ((first - w - epoch_d) / p - k).ceil();
    let e_hi = ((last + w - epoch_d) / p - k).floor();
    if e_hi - e_lo > MAX_EVENTS {
        return Err(MinimaError::BadOption(format!(
            "the period {p} d predicts {:.0} events in the light curve; check the period",
            e_hi - e_lo
        )));
    }
    let mut e = e_lo;
    while e <= e_hi {
        let cycle = e + k;
        let predicted_d = epoch_d + cycle * p;
        e += 1.0;
        let lo = time_d.partition_point(|&t| t < predicted_d - w);
        let hi = time_d.partition_point(|&t| t <= predicted_d + w);
        let n = hi - lo;
        if n == 0 {
            if predicted_d >= first && predicted_d <= last {
                empty += 1;
            }
            continue;
        }
        let before = time_d[lo..hi].iter().filter(|&&t| t < predicted_d).count();
        let after = time_d[lo..hi].iter().filter(|&&t| t > predicted_d).count();
        let needed = options.min_points_per_branch;
        let reason = if before < needed {
            Some(SkipReason::BranchMissing { branch: Branch::Before, before, after, needed })
        } else if after < needed {
            Some(SkipReason::BranchMissing { branch: Branch::After, before, after, needed })
        } else if n < options.min_points {
            Some(SkipReason::TooFewPoints { got: n, needed: options.min_points })
        } else {
            None
        };
        match reason {
            Some(reason) => skipped.push(SkippedEvent {
                cycle,
                predicted_d,
                points: n,
                first_index: lo,
                last_index: hi - 1,
                reason,
            }),
            None => segments.push(Segment { cycle, predicted_d, first_index: lo, last_index: hi - 1 }),
        }
    }
    Ok((segments, skipped, empty))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::time::TimeScale;

    #[test]
    fn events_cut_and_reasons_given() {
        let reference = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.0);
        let eph = ReferenceEphemeris {
            epoch: Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.25),
            period_d: 1.0,
            period_sigma_d: 0.0,
        };
        // Cycle 0 at 0.25 d: full coverage; cycle 1 at 1.25: only before; cycle 2 at 2.25: 4 points.
        let mut t: Vec<f64> = (0..40).map(|i| 0.15 + 0.005 * i as f64).collect();
        t.extend((0..10).map(|i| 1.16 + 0.005 * i as f64));
        t.extend([2.2, 2.23, 2.27, 2.3]);
        let (seg, skip, empty) = segment_events(
            &t,
            reference,
            &eph,
            EventKind::Primary,
            EventWindow::HalfWidthPhase(0.1),
            &SegmentOptions { min_points: 10, min_points_per_branch: 2 },
        )
        .unwrap();
        assert_eq!(seg.len(), 1);
        assert_eq!(seg[0].cycle, 0.0);
        assert_eq!(seg[0].points(), 40);
        assert_eq!(skip.len(), 2);
        assert!(matches!(skip[0].reason, SkipReason::BranchMissing { branch: Branch::After, .. }));
        assert!(matches!(skip[1].reason, SkipReason::TooFewPoints { got: 4, needed: 10 }));
        assert_eq!(empty, 0);
        let (seg, skip, empty) = segment_events(
            &t,
            reference,
            &eph,
            EventKind::Secondary,
            EventWindow::HalfWidthDays(0.05),
            &SegmentOptions::default(),
        )
        .unwrap();
        assert!(seg.is_empty() && skip.is_empty());
        assert_eq!(empty, 2, "secondaries at 0.75 and 1.75 d have no points");
        assert!(
            segment_events(
                &t,
                reference,
                &eph,
                EventKind::Primary,
                EventWindow::HalfWidthPhase(0.6),
                &SegmentOptions::default()
            )
            .is_err()
        );
    }
}
