//! The slowly varying parts of the exact correction, tabulated on coarse nodes: the
//! two-speed exact path for rows too sparse for the table nodes of [`super::interpolated`].
//!
//! Most of the exact correction's cost is two series that depend on TT alone and change
//! slowly: the CIP coordinates X, Y and the CIO locator s of the IAU 2006/2000A
//! precession–nutation (SOFA `iauXys06a`, ~1300 nutation terms; the celestial-to-
//! intermediate matrix is rebuilt from them per row by `iauC2ixys`, as `iauC2i06a` does),
//! and the geocentric TDB − TT of Fairhead & Bretagnon (SOFA `iauDtdb` without its
//! topocentric part, ~790 terms). They are evaluated exactly at nodes every
//! [`SLOW_NODE_SPACING_S`] = 1 d of TT (at TT midnight) and interpolated by the
//! 8-point Lagrange polynomial on the nodes −3 … +4 around the instant's interval
//! ([`super::interpolated::lagrange_weights`]). Everything fast stays per row and exact:
//! the Earth rotation angle (UT1), polar motion and UT1 − UTC from the table, s′, the
//! site's topocentric TDB − TT term ([`crate::time::scales::topocentric_tdb_minus_tt_s`]),
//! the ephemeris, the source direction and every delay formula.
//!
//! Error bound. For a term A·sin(ωt + φ) the 8-point remainder is ≤ 1.07e-3·A·(ωh)⁸
//! (module doc of [`super::interpolated`]), here h = 1 d. Summed over every term of the
//! series as sofars 0.6.3 tabulates them (`tests/reference/slow_terms_bound.py` reads its
//! tables; |t| ≤ 150 years from J2000 for the Fairhead & Bretagnon terms in t, t², …):
//! - nutation, all 1365 IAU 2000A terms (luni-solar and planetary, |Δψ| and |Δε|
//!   amplitudes, the shortest period 3.5 d): ≤ 1.15e-10 rad in X, Y (s follows from X, Y and
//!   slow terms); the largest contributions are the 5.64-d, 6.86-d and 9.13-d terms.
//!   Precession is a polynomial of low degree (no error). An angular error δ moves a
//!   ground site by R⊕·δ, 21.3 ms·δ of Rømer delay: ≤ 2.5e-12 s;
//! - TDB − TT, all 787 terms: ≤ 3.6e-13 s (largest from the 7.25-d and 9.84-d terms).
//!
//! The bound is therefore ≤ 3e-12 s against the exact path, far below the 1 ns promised;
//! the tests below find 2.1e-11 rad and 2.4e-13 s at random instants over 1960–2100, and
//! `tests/arrival_table_nodes.rs` checks whole rows against the exact path (≤ 1 ns on every
//! row; the largest difference seen is the ~1e-11 s rounding of the delay columns). Neither
//! series has steps (they are functions of TT; no leap second enters), so unlike the table
//! nodes no regime check is needed. Cost: a node costs about one exact row (the two
//! series); a cluster of rows takes the nodes when it needs fewer nodes than it has rows.

use rayon::prelude::*;

use super::interpolated::{TABLE_NODE_POINTS, lagrange_weights};
use crate::time::{Instant, TimeScale};

/// Spacing of the slow-term nodes on the TT axis, s (one a day).
pub const SLOW_NODE_SPACING_S: f64 = 86_400.0;
const NODES_PER_DAY: i64 = 1;
const FIRST_NODE_OFFSET: i64 = -3;

/// The slow-term grid slot of a TT instant: the node at or before it (counted from MJD 0
/// at TT midnight) and the position u ∈ [0, 1) between it and the next.
pub fn slow_slot(tt: &Instant) -> (i64, f64) {
    let x = tt.seconds_of_day() / SLOW_NODE_SPACING_S;
    let k = (x.floor() as i64).clamp(0, NODES_PER_DAY - 1);
    (tt.mjd_day() * NODES_PER_DAY + k, (x - k as f64).clamp(0.0, 1.0))
}

/// The slots of the nodes an instant in slot `slot` is interpolated from.
pub fn slow_slots_used(slot: i64) -> std::ops::RangeInclusive<i64> {
    slot + FIRST_NODE_OFFSET..=slot + FIRST_NODE_OFFSET + TABLE_NODE_POINTS as i64 - 1
}

/// The TT instant of node `slot` (exact: TT midnight of a day).
fn slow_slot_instant(slot: i64) -> Instant {
    Instant::from_mjd_parts(
        TimeScale::Tt,
        slot.div_euclid(NODES_PER_DAY),
        slot.rem_euclid(NODES_PER_DAY) as f64 * SLOW_NODE_SPACING_S,
    )
}

/// The slow parts at one TT instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlowValues {
    /// CIP X, rad (IAU 2006/2000A, SOFA `iauXys06a`).
    pub cip_x_rad: f64,
    /// CIP Y, rad.
    pub cip_y_rad: f64,
    /// CIO locator s, rad.
    pub cio_locator_rad: f64,
    /// Geocentric TDB − TT, s (SOFA `iauDtdb` with the site arguments zero).
    pub geocentric_tdb_minus_tt_s: f64,
}

impl SlowValues {
    /// The exact values at TT instant `tt` (the series themselves).
    pub fn exact(tt: &Instant) -> SlowValues {
        let (tt1, tt2) = tt.jd_two_part();
        let (x, y, s) = sofars::pnp::xys06a(tt1, tt2);
        SlowValues {
            cip_x_rad: x,
            cip_y_rad: y,
            cio_locator_rad: s,
            geocentric_tdb_minus_tt_s: crate::time::scales::tdb_minus_tt_s(tt, None, 0.0),
        }
    }

    fn as_array(&self) -> [f64; 4] {
        [self.cip_x_rad, self.cip_y_rad, self.cio_locator_rad, self.geocentric_tdb_minus_tt_s]
    }

    /// The celestial-to-intermediate matrix Q(t)ᵀ of these X, Y, s (SOFA `iauC2ixys`), the
    /// matrix `iauC2i06a` returns when the values are exact.
    pub fn celestial_to_intermediate(&self) -> [[f64; 3]; 3] {
        sofars::pnp::c2ixys(self.cip_x_rad, self.cip_y_rad, self.cio_locator_rad)
    }
}

/// Nodes of the slow parts at the slots asked for (see the module doc).
#[derive(Debug, Clone, Default)]
pub struct SlowTermGrid {
    nodes: Vec<(i64, [f64; 4])>,
}

impl SlowTermGrid {
    /// Computes the nodes at `slots` (any order, duplicates allowed), in parallel.
    pub fn build(slots: &[i64]) -> SlowTermGrid {
        let mut slots = slots.to_vec();
        slots.sort_unstable();
        slots.dedup();
        let nodes = slots.par_iter().map(|&s| (s, SlowValues::exact(&slow_slot_instant(s)).as_array())).collect();
        SlowTermGrid { nodes }
    }

    /// Number of nodes held.
    pub fn len(&self) -> usize {
        self.nodes.len()
    }

    /// True when no node is held.
    pub fn is_empty(&self) -> bool {
        self.nodes.is_empty()
    }

    /// The interpolated values at TT instant `tt`; `None` when one of its eight nodes was
    /// not computed.
    pub fn interpolate(&self, tt: &Instant) -> Option<SlowValues> {
        let (slot, u) = slow_slot(tt);
        let first = *slow_slots_used(slot).start();
        let start = self.nodes.partition_point(|(s, _)| *s < first);
        let window = self.nodes.get(start..start + TABLE_NODE_POINTS)?;
        if window[TABLE_NODE_POINTS - 1].0 != first + TABLE_NODE_POINTS as i64 - 1 || window[0].0 != first {
            return None;
        }
        let w = lagrange_weights(u);
        let mut v = [0.0; 4];
        for (j, (_, node)) in window.iter().enumerate() {
            for (acc, x) in v.iter_mut().zip(node) {
                *acc += w[j] * x;
            }
        }
        Some(SlowValues { cip_x_rad: v[0], cip_y_rad: v[1], cio_locator_rad: v[2], geocentric_tdb_minus_tt_s: v[3] })
    }
}

/// Where a correction takes its slow parts from.
#[derive(Debug, Clone, Copy, Default)]
pub enum SlowParts<'a> {
    /// The series themselves, at every instant (the exact path).
    #[default]
    Exact,
    /// Interpolated from these nodes, the series themselves where a node is missing.
    Interpolated(&'a SlowTermGrid),
}

impl SlowParts<'_> {
    /// The values at TT instant `tt`.
    pub fn at(&self, tt: &Instant) -> SlowValues {
        match self {
            SlowParts::Exact => SlowValues::exact(tt),
            SlowParts::Interpolated(grid) => grid.interpolate(tt).unwrap_or_else(|| SlowValues::exact(tt)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::random::SeededRng;

    #[test]
    fn interpolated_slow_parts_match_the_series_within_the_bound() {
        // Reference: the series themselves (SOFA iauXys06a and iauDtdb via sofars 0.6.3).
        // Random TT instants over 1960–2100, each with its own eight nodes.
        let mut rng = SeededRng::new(2026);
        let (mut worst_angle, mut worst_time) = (0.0_f64, 0.0_f64);
        for _ in 0..300 {
            let tt = Instant::from_mjd_parts(
                TimeScale::Tt,
                36_934 + (rng.uniform() * 51_000.0) as i64,
                rng.uniform() * 86_400.0,
            );
            let slots: Vec<i64> = slow_slots_used(slow_slot(&tt).0).collect();
            let grid = SlowTermGrid::build(&slots);
            let fast = grid.interpolate(&tt).unwrap();
            let exact = SlowValues::exact(&tt);
            worst_angle = worst_angle
                .max((fast.cip_x_rad - exact.cip_x_rad).abs())
                .max((fast.cip_y_rad - exact.cip_y_rad).abs())
                .max((fast.cio_locator_rad - exact.cio_locator_rad).abs());
            worst_time = worst_time.max((fast.geocentric_tdb_minus_tt_s - exact.geocentric_tdb_minus_tt_s).abs());
        }
        eprintln!("largest interpolation error: {worst_angle:.2e} rad, {worst_time:.2e} s");
        // The bounds of the module doc: 1.15e-10 rad (2.5e-12 s of Rømer delay for a ground
        // site) and 3.6e-13 s.
        assert!(worst_angle < 1.15e-10, "{worst_angle}");
        assert!(worst_time < 3.6e-13, "{worst_time}");
    }

    #[test]
    fn a_missing_node_falls_back_to_the_series() {
        let tt = Instant::from_mjd_parts(TimeScale::Tt, 60_000, 30_000.0);
        let mut slots: Vec<i64> = slow_slots_used(slow_slot(&tt).0).collect();
        slots.remove(4);
        let grid = SlowTermGrid::build(&slots);
        assert!(grid.interpolate(&tt).is_none());
        assert_eq!(SlowParts::Interpolated(&grid).at(&tt), SlowValues::exact(&tt));
    }

    #[test]
    fn the_matrix_from_exact_values_is_sofas_c2i06a() {
        // iauC2i06a is iauXys06a followed by iauC2ixys (SOFA): bit-identical.
        let tt = Instant::from_mjd_parts(TimeScale::Tt, 61_000, 12_345.0);
        let (t1, t2) = tt.jd_two_part();
        assert_eq!(SlowValues::exact(&tt).celestial_to_intermediate(), sofars::pnp::c2i06a(t1, t2));
    }
}
