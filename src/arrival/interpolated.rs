//! Fast barycentric correction for long, dense event lists (photon arrival times).
//!
//! The correction f(t) = t_BJD_TDB − t_TT is smooth: its fastest parts are the diurnal
//! rotation of a ground site (≤ 21 ms amplitude, period 1 d) and, for a spacecraft, the
//! orbit (handled per row by the exact corrector, not here). It is evaluated exactly at
//! nodes spaced `node_spacing_s` apart on the TT axis and interpolated at each event with
//! a four-point (cubic) Lagrange polynomial. For a sinusoid of amplitude A and period P the
//! cubic interpolation error is below A·(2πh/P)⁴·3/128; with A = 21 ms, P = 1 d and the
//! default h = 300 s this is < 3e-10 s, so the interpolated times agree with the exact ones
//! to ≤ 1 ns (checked by the tests against the exact corrector).
//! UTC inputs are first carried to TT exactly (leap seconds make f jump in a UTC argument).
//!
//! Tables of arrival times use a second, sparser grid ([`NodeGrid`]): nodes every
//! [`TABLE_NODE_SPACING_S`] = 1800 s on the TT axis, fixed to TT midnight, each holding every
//! smooth term of the correction ([`NodeTerms`]: Einstein, Rømer, curvature and Shapiro
//! delays, the Sun's projection for repairing heliocentric times, and the observer's
//! barycentric position), interpolated by the 8-point (degree 7) Lagrange polynomial on the
//! nodes −3 … +4 around the interval that holds the instant. Error bound: for a term
//! A·sin(ωt) the remainder is ≤ A·(ωh)⁸·max|∏(u − j)|/8! with max|∏| = 43.07 at u = ½, i.e.
//! 1.07e-3·A·(ωh)⁸. The fastest term is the diurnal Rømer delay of a ground site
//! (A ≤ R⊕/c = 21.3 ms, ω = 7.29e-5 rad/s, ωh = 0.131): 2.0e-12 s. The Earth's orbit and the
//! Moon's pull (periods ≥ 27 d) add < 1e-20 s; nutation (fastest term of note 5.6 d,
//! amplitude ≤ 1 mas on a 21 ms lever) < 1e-18 s; the Einstein term's daily part (≤ 2 µs)
//! < 1e-15 s; the linear interpolation of UT1 − UTC and polar motion between daily table
//! values puts a kink in the slope of at most ~2e-15 s/s, which the polynomial smooths
//! with an error ≲ slope change × h = 4e-12 s. The bound is therefore < 1e-11 s, far below
//! the 1 ns the table path promises. Leap seconds (UTC enters the site's rotation and
//! the Einstein term's time of day) and the edges of the Earth-orientation table are real
//! steps: each node records its regime ([`Regime`]) and an instant is interpolated only
//! when all eight of its nodes share one, otherwise the caller corrects it exactly.

use std::collections::HashMap;
use std::sync::Mutex;

use rayon::prelude::*;

use super::correction::{ArrivalError, BarycentricCorrector, NodeTerms, ReferencePoint};
use super::slow_terms::SlowParts;
use crate::observer::Observer;
use crate::time::{Instant, TimeScale};

/// Default node spacing, s (see module doc for the error bound).
pub const DEFAULT_NODE_SPACING_S: f64 = 300.0;

/// Interpolating corrector for events given as seconds after a TT reference instant.
pub struct InterpolatedCorrector<'a> {
    exact: &'a BarycentricCorrector,
    observer: Observer,
    reference_tt: Instant,
    node_spacing_s: f64,
    nodes: Mutex<HashMap<i64, f64>>,
}

impl<'a> InterpolatedCorrector<'a> {
    /// An interpolator around `exact` for `observer`, with event times counted in seconds
    /// from `reference_tt` (TT). Only ground sites and the geocentre are accepted (a
    /// spacecraft's orbit is too fast for the default node spacing).
    pub fn new(
        exact: &'a BarycentricCorrector,
        observer: Observer,
        reference_tt: Instant,
        node_spacing_s: f64,
    ) -> InterpolatedCorrector<'a> {
        InterpolatedCorrector {
            exact,
            observer,
            reference_tt: reference_tt.relabel(TimeScale::Tt),
            node_spacing_s,
            nodes: Mutex::new(HashMap::new()),
        }
    }

    /// The exact correction t_BJD_TDB − t_TT, s, at `seconds` after the reference (TT).
    pub fn exact_correction_s(&self, seconds: f64) -> Result<f64, ArrivalError> {
        let tt = self.reference_tt.add_seconds(seconds);
        let out = self.exact.correct(&tt, &self.observer, ReferencePoint::Observer)?;
        Ok(out.bjd_tdb.seconds_since(&tt))
    }

    /// Makes sure all nodes needed for events in `[first_s, last_s]` exist (computed in parallel).
    /// Both ends must lie within ±[`MAX_EVENT_OFFSET_S`] of the reference.
    pub fn prepare(&self, first_s: f64, last_s: f64) -> Result<(), ArrivalError> {
        for t in [first_s, last_s] {
            check_offset(t)?;
        }
        let h = self.node_spacing_s;
        let k0 = (first_s / h).floor() as i64 - 1;
        let k1 = (last_s / h).floor() as i64 + 2;
        self.compute_nodes((k0..=k1).collect(), k0)
    }

    /// Computes the nodes `wanted` that are not yet known, then forgets those before `oldest - 4`.
    fn compute_nodes(&self, wanted: Vec<i64>, oldest: i64) -> Result<(), ArrivalError> {
        let h = self.node_spacing_s;
        let missing: Vec<i64> = {
            let nodes = self.nodes.lock().unwrap_or_else(|p| p.into_inner());
            wanted.into_iter().filter(|k| !nodes.contains_key(k)).collect()
        };
        let computed: Vec<(i64, f64)> = missing
            .par_iter()
            .map(|&k| self.exact_correction_s(k as f64 * h).map(|v| (k, v)))
            .collect::<Result<_, _>>()?;
        let mut nodes = self.nodes.lock().unwrap_or_else(|p| p.into_inner());
        nodes.extend(computed);
        // Forget nodes well before this block (events are processed in time order in blocks).
        nodes.retain(|&k, _| k >= oldest - 4);
        Ok(())
    }

    /// Corrects events in place: each value, seconds after the reference on TT, becomes
    /// seconds after the same reference instant read on TDB at the barycentre
    /// (t_BJD_TDB − reference). Nodes are prepared automatically. Events need not be sorted.
    /// Every event must be finite and within ±[`MAX_EVENT_OFFSET_S`] of the reference
    /// (else [`ArrivalError::EventOutOfRange`], nothing changed). Memory is bounded by the
    /// number of events, not by their span: when the events are sparse in their span (a
    /// lone event far from the rest), only the nodes around each event are computed.
    pub fn correct_in_place(&self, seconds: &mut [f64]) -> Result<(), ArrivalError> {
        if seconds.is_empty() {
            return Ok(());
        }
        for &t in seconds.iter() {
            check_offset(t)?;
        }
        let (lo, hi) = seconds.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)));
        let h = self.node_spacing_s;
        let k0 = (lo / h).floor() as i64 - 1;
        let k1 = (hi / h).floor() as i64 + 2;
        let dense = ((k1 - k0) as u64) <= 4 * seconds.len() as u64 + 64;
        if !dense {
            let mut wanted: Vec<i64> =
                seconds.iter().flat_map(|t| ((t / h).floor() as i64 - 1)..=((t / h).floor() as i64 + 2)).collect();
            wanted.sort_unstable();
            wanted.dedup();
            self.compute_nodes(wanted, k0)?;
            let nodes = self.nodes.lock().unwrap_or_else(|p| p.into_inner());
            for t in seconds.iter_mut() {
                let k = (*t / h).floor() as i64;
                let p = [nodes[&(k - 1)], nodes[&k], nodes[&(k + 1)], nodes[&(k + 2)]];
                *t += cubic_lagrange(p, *t / h - k as f64);
            }
            return Ok(());
        }
        self.prepare(lo, hi)?;
        let nodes = self.nodes.lock().unwrap_or_else(|p| p.into_inner());
        let table: Vec<f64> = (k0..=k1).map(|k| nodes[&k]).collect();
        drop(nodes);
        seconds.par_chunks_mut(1 << 14).for_each(|chunk| {
            for t in chunk.iter_mut() {
                let x = *t / h;
                let k = x.floor() as i64;
                let i = (k - 1 - k0) as usize;
                let u = x - k as f64; // in [0, 1): between nodes k and k+1
                *t += cubic_lagrange([table[i], table[i + 1], table[i + 2], table[i + 3]], u);
            }
        });
        Ok(())
    }
}

/// Largest |event time − reference| an event list may have, s (1e11 s ≈ 3170 years, wider
/// than any ephemeris; it keeps node numbers far inside the integers).
pub const MAX_EVENT_OFFSET_S: f64 = 1e11;

fn check_offset(t: f64) -> Result<(), ArrivalError> {
    if !(t.abs() <= MAX_EVENT_OFFSET_S) {
        return Err(ArrivalError::EventOutOfRange(t));
    }
    Ok(())
}

/// Four-point Lagrange interpolation on nodes at offsets −1, 0, 1, 2 (values `p`) at `u` in [0, 1).
fn cubic_lagrange(p: [f64; 4], u: f64) -> f64 {
    let um1 = u + 1.0;
    let u1 = u - 1.0;
    let u2 = u - 2.0;
    -p[0] * u * u1 * u2 / 6.0 + p[1] * um1 * u1 * u2 / 2.0 - p[2] * um1 * u * u2 / 2.0 + p[3] * um1 * u * u1 / 6.0
}

/// Node spacing of the table corrector on the TT axis, s (48 nodes per TT day).
pub const TABLE_NODE_SPACING_S: f64 = 1800.0;
/// Nodes per interpolation of the table corrector (Lagrange, degree 7).
pub const TABLE_NODE_POINTS: usize = 8;
const NODES_PER_DAY: i64 = 48;
/// Offset of the first interpolation node from the left node of an instant's interval.
const FIRST_NODE_OFFSET: i64 = -3;

/// The table grid slot of a TT instant: the number of the node at or before it (counted
/// from MJD 0 at TT midnight) and the position u ∈ [0, 1) between that node and the next.
pub fn table_slot(tt: &Instant) -> (i64, f64) {
    let x = tt.seconds_of_day() / TABLE_NODE_SPACING_S;
    let k = (x.floor() as i64).clamp(0, NODES_PER_DAY - 1);
    (tt.mjd_day() * NODES_PER_DAY + k, (x - k as f64).clamp(0.0, 1.0))
}

/// The TT instant of node `slot` (exact: an integral day and a multiple of 1800 s).
pub fn slot_instant(slot: i64) -> Instant {
    Instant::from_mjd_parts(
        TimeScale::Tt,
        slot.div_euclid(NODES_PER_DAY),
        slot.rem_euclid(NODES_PER_DAY) as f64 * TABLE_NODE_SPACING_S,
    )
}

/// The slots of the nodes an instant in slot `slot` is interpolated from.
pub fn slots_used(slot: i64) -> std::ops::RangeInclusive<i64> {
    slot + FIRST_NODE_OFFSET..=slot + FIRST_NODE_OFFSET + TABLE_NODE_POINTS as i64 - 1
}

/// Weights of the 8-point Lagrange polynomial on equispaced nodes at offsets −3 … +4 (in
/// units of the spacing) evaluated at `u`; they sum to 1 and reproduce polynomials of
/// degree ≤ 7 exactly (common practice).
pub fn lagrange_weights(u: f64) -> [f64; TABLE_NODE_POINTS] {
    let mut w = [0.0; TABLE_NODE_POINTS];
    for (j, wj) in w.iter_mut().enumerate() {
        let xj = (j as i64 + FIRST_NODE_OFFSET) as f64;
        let mut num = 1.0;
        let mut den = 1.0;
        for m in 0..TABLE_NODE_POINTS {
            if m != j {
                let xm = (m as i64 + FIRST_NODE_OFFSET) as f64;
                num *= u - xm;
                den *= xj - xm;
            }
        }
        *wj = num / den;
    }
    w
}

/// The continuity class of a node: TAI − UTC and the 1961–1971 rate drift of its UTC day
/// (bit patterns), and whether Earth orientation came from a table. Two instants with the
/// same regime are joined by a smooth correction; a leap second or the edge of the
/// Earth-orientation table changes it. The geocentre has one regime for all time.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Regime {
    tai_minus_utc_bits: u64,
    drift_bits: u64,
    earth_orientation_from_table: bool,
}

/// One node of the table corrector.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TableNode {
    /// The exact terms at the node.
    pub terms: NodeTerms,
    /// Its continuity class.
    pub regime: Regime,
}

/// Interpolated terms at one instant, with the Earth-orientation flag of its regime.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InterpolatedTerms {
    /// The values in the order of [`NodeTerms`].
    pub values: [f64; NodeTerms::COUNT],
    /// Whether Earth orientation came from a table (as at every one of its nodes).
    pub earth_orientation_from_table: bool,
}

/// The table corrector's nodes for one observer (ground site or geocentre), on the fixed
/// grid of [`table_slot`]; only the slots asked for are computed. A node whose exact
/// correction fails (e.g. a site before 1960) is kept as missing, and instants that need it
/// are left to the exact path.
#[derive(Debug, Clone, Default)]
pub struct NodeGrid {
    nodes: Vec<(i64, Option<TableNode>)>,
}

impl NodeGrid {
    /// Computes the nodes at `slots` (any order, duplicates allowed) for `observer`, in
    /// parallel.
    pub fn build(exact: &BarycentricCorrector, observer: &Observer, slots: &[i64]) -> NodeGrid {
        Self::build_with_slow_parts(exact, observer, slots, SlowParts::Exact)
    }

    /// As [`NodeGrid::build`], each node with precession–nutation and the geocentric
    /// TDB − TT taken from `slow` ([`BarycentricCorrector::node_terms_with_slow_parts`]; the
    /// nodes then differ from exact ones by ≤ 3e-12 s, bound in [`super::slow_terms`]).
    pub fn build_with_slow_parts(
        exact: &BarycentricCorrector,
        observer: &Observer,
        slots: &[i64],
        slow: SlowParts<'_>,
    ) -> NodeGrid {
        let mut slots = slots.to_vec();
        slots.sort_unstable();
        slots.dedup();
        let nodes = slots.par_iter().map(|&slot| (slot, Self::node(exact, observer, slot, slow))).collect::<Vec<_>>();
        NodeGrid { nodes }
    }

    fn node(exact: &BarycentricCorrector, observer: &Observer, slot: i64, slow: SlowParts<'_>) -> Option<TableNode> {
        let tt = slot_instant(slot);
        let terms = exact.node_terms_with_slow_parts(&tt, observer, slow).ok()?;
        let regime = match observer {
            Observer::Site(_) => {
                let converter = exact.converter();
                let utc = converter.convert(&tt, TimeScale::Utc).ok()?;
                let leap = converter.leap_seconds();
                Regime {
                    tai_minus_utc_bits: leap.tai_minus_utc(utc.mjd_day(), 0.0).ok()?.to_bits(),
                    drift_bits: leap.rate_drift_per_day_s(utc.mjd_day()).ok()?.to_bits(),
                    earth_orientation_from_table: terms.earth_orientation_from_table,
                }
            }
            _ => Regime::default(),
        };
        Some(TableNode { terms, regime })
    }

    /// Number of nodes held (including missing ones).
    pub fn len(&self) -> usize {
        self.nodes.len()
    }

    /// True when no node is held.
    pub fn is_empty(&self) -> bool {
        self.nodes.is_empty()
    }

    /// The terms at TT instant `tt`, interpolated; `None` when a node is missing, was not
    /// computed, or the nodes straddle a change of regime (then correct exactly).
    pub fn interpolate(&self, tt: &Instant) -> Option<InterpolatedTerms> {
        let (slot, u) = table_slot(tt);
        let first = *slots_used(slot).start();
        let start = self.nodes.partition_point(|(s, _)| *s < first);
        let window = self.nodes.get(start..start + TABLE_NODE_POINTS)?;
        let regime = window[0].1.as_ref()?.regime;
        let w = lagrange_weights(u);
        let mut values = [0.0; NodeTerms::COUNT];
        for (j, (s, node)) in window.iter().enumerate() {
            let node = node.as_ref()?;
            if *s != first + j as i64 || node.regime != regime {
                return None;
            }
            for (v, t) in values.iter_mut().zip(node.terms.values) {
                *v += w[j] * t;
            }
        }
        Some(InterpolatedTerms { values, earth_orientation_from_table: regime.earth_orientation_from_table })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lagrange_weights_reproduce_a_degree_seven_polynomial() {
        // Property of Lagrange interpolation (common practice): exact for degree ≤ 7.
        let p = |x: f64| 0.3 - 1.2 * x + 0.5 * x.powi(3) - 0.01 * x.powi(7);
        for u in [0.0, 0.25, 0.5, 0.999] {
            let w = lagrange_weights(u);
            let sum: f64 = w.iter().sum();
            assert!((sum - 1.0).abs() < 1e-14);
            let value: f64 = w.iter().enumerate().map(|(j, wj)| wj * p(j as f64 - 3.0)).sum();
            assert!((value - p(u)).abs() < 1e-12, "u = {u}: {value} vs {}", p(u));
        }
    }

    #[test]
    fn slots_are_fixed_to_tt_midnight() {
        let t = Instant::from_mjd_parts(TimeScale::Tt, 60_000, 3_700.0);
        let (slot, u) = table_slot(&t);
        assert_eq!(slot, 60_000 * 48 + 2);
        assert!((u - 100.0 / 1800.0).abs() < 1e-12);
        assert_eq!(slot_instant(slot), Instant::from_mjd_parts(TimeScale::Tt, 60_000, 3_600.0));
        assert_eq!(slots_used(slot), slot - 3..=slot + 4);
    }
}
