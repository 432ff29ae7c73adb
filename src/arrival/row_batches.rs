//! Correcting many rows at once: rows are grouped by observer (each ground site, the
//! geocentre; rows already at the barycentre share the geocentre's clock terms), sorted on
//! TT, and split into clusters of rows whose interpolation nodes overlap. A cluster is
//! corrected through the table nodes of [`NodeGrid`] when it needs fewer nodes than it has
//! rows (each node costs one exact correction); otherwise, and for every row the nodes
//! cannot serve (spacecraft, times on TDB or TCB recorded at an observer, a leap second or
//! the edge of the Earth-orientation table among the nodes, a node that failed), the row is
//! corrected exactly. Interpolated and exact rows agree to ≤ 1e-11 s (bound derived in
//! [`super::interpolated`]; `tests/arrival_table_nodes.rs` checks ≤ 1 ns on every row).
//!
//! The exact rows themselves run at two speeds where that pays: rows of every observer
//! (ground sites, the geocentre, spacecraft, rows already barycentric) whose instants
//! share the coarse nodes of [`super::slow_terms`] (every day of TT) — clusters needing
//! fewer nodes than they have rows — take precession–nutation and the geocentric
//! TDB − TT from those nodes and everything else (Earth rotation, the ephemeris, the
//! delays) per row ([`BarycentricCorrector::correct_with_slow_parts`]; ≤ 3e-12 s from the
//! exact correction). Readings on TDB or TCB at an observer keep the series themselves.
//! The table nodes take their slow parts from the same daily nodes where those are fewer
//! (≤ 3e-12 s more per node).
//!
//! The plan depends only on how many rows need each range of node slots ([`KeyCounts`]):
//! [`CorrectionPlan`] is made once from the counts of all rows, then corrects rows in any
//! number of blocks with the results the whole table would get.

use std::collections::HashMap;

use rayon::prelude::*;

use super::correction::{ArrivalError, BarycentricCorrector, Corrected, DelayBreakdown, NodeTerms, ReferencePoint};
use super::interpolated::{NodeGrid, slot_instant, slots_used, table_slot};
use super::slow_terms::{SlowParts, SlowTermGrid, slow_slot, slow_slots_used};
use crate::observer::{Observer, SpacecraftPosition};
use crate::time::scales::tcb_to_tdb;
use crate::time::{Instant, TimeScale};

/// How the rows of a table are corrected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub enum CorrectionPath {
    /// Through interpolation nodes wherever they pay, exactly elsewhere (the default).
    #[default]
    Automatic,
    /// Every row through the exact per-row correction (for audits and comparisons).
    ExactEveryRow,
}

/// Who recorded one row.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RowObserver {
    /// Index into the list of fixed observers (ground sites and the geocentre).
    Fixed(usize),
    /// A spacecraft at the position given in the row.
    Spacecraft(SpacecraftPosition),
}

/// One row to correct: its clock reading (on the clock's scale), where that reading is
/// referred to, and who recorded it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RowTime {
    /// The clock reading.
    pub time: Instant,
    /// Observer, heliocentric or barycentric.
    pub reference: ReferencePoint,
    /// Who recorded it.
    pub observer: RowObserver,
}

/// How one row was corrected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowPath {
    /// Interpolated between the table nodes (every smooth term).
    TableNodes,
    /// Exactly, with precession–nutation and geocentric TDB − TT from the slow-term nodes.
    SlowTermNodes,
    /// Exactly, every series evaluated for the row.
    Exact,
}

/// The corrected rows, in input order, and how many went through the nodes.
#[derive(Debug)]
pub struct BatchOutcome {
    /// One result per row.
    pub rows: Vec<Result<Corrected, ArrivalError>>,
    /// Rows corrected by interpolation between table nodes.
    pub interpolated: usize,
    /// Rows corrected exactly with the slow parts from the slow-term nodes.
    pub slow_term_rows: usize,
    /// Table nodes computed.
    pub nodes: usize,
    /// Slow-term nodes computed.
    pub slow_term_nodes: usize,
}

/// Corrects `rows`; `observers[0]` must be the geocentre and every `Fixed` index must lie in
/// `observers`. Results are in row order and do not depend on the thread count.
pub fn correct_rows(
    corrector: &BarycentricCorrector,
    observers: &[Observer],
    rows: &[RowTime],
    path: CorrectionPath,
) -> BatchOutcome {
    let prepared = PreparedRows::new(corrector, observers, rows, path);
    let results = prepared.correct_range(0..rows.len());
    let count = |path: RowPath| results.iter().filter(|(_, p)| *p == path).count();
    let (interpolated, slow_term_rows) = (count(RowPath::TableNodes), count(RowPath::SlowTermNodes));
    BatchOutcome {
        rows: results.into_iter().map(|(r, _)| r).collect(),
        interpolated,
        slow_term_rows,
        nodes: prepared.nodes(),
        slow_term_nodes: prepared.slow_term_nodes(),
    }
}

/// What the planning needs of one row: the group and inclusive range of table-node slots
/// it would be interpolated from (margin included), and the slow-term slots of the
/// two-speed exact path. Rows with equal keys are corrected the same way, so the plan of a
/// table depends only on how many rows carry each key ([`KeyCounts`]) — a table read in
/// blocks is planned exactly as the same table read whole.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct RowKey {
    table: Option<(usize, i64, i64)>,
    slow: Option<(i64, i64)>,
}

impl RowKey {
    /// The key of row `r`; `observers[0]` must be the geocentre.
    pub fn of(corrector: &BarycentricCorrector, observers: &[Observer], r: &RowTime) -> RowKey {
        RowKey::from_key_tt(observers, r, key_tt(corrector, r))
    }

    /// As [`RowKey::of`] with the row's key TT ([`key_tt`]) already computed.
    fn from_key_tt(observers: &[Observer], r: &RowTime, key: Option<Instant>) -> RowKey {
        let (table, slow) = row_slots(observers, r, key);
        let table = table.map(|(group, slot, margin)| {
            let range = slots_used(slot);
            (group, range.start() - margin, range.end() + margin)
        });
        let slow = slow.map(|(slot, margin)| {
            let range = slow_slots_used(slot);
            (range.start() - margin, range.end() + margin)
        });
        RowKey { table, slow }
    }
}

/// How many rows carry each [`RowKey`]: all the planning of a table needs. Its size grows
/// with the number of distinct node slots touched (the time span), not with the rows.
#[derive(Debug, Clone, Default)]
pub struct KeyCounts {
    counts: HashMap<RowKey, usize>,
}

impl KeyCounts {
    /// The counts of the keys of `rows` (computed in parallel).
    pub fn of_rows(corrector: &BarycentricCorrector, observers: &[Observer], rows: &[RowTime]) -> KeyCounts {
        let keys: Vec<RowKey> = rows.par_iter().map(|r| RowKey::of(corrector, observers, r)).collect();
        let mut counts = KeyCounts::default();
        // Runs of equal keys (rows in time order) are counted at once.
        let mut start = 0;
        while start < keys.len() {
            let end = start + keys[start..].iter().take_while(|k| **k == keys[start]).count();
            counts.add(keys[start], end - start);
            start = end;
        }
        counts
    }

    /// Counts `rows` more rows with key `key`.
    pub fn add(&mut self, key: RowKey, rows: usize) {
        *self.counts.entry(key).or_default() += rows;
    }

    /// Adds every count of `other`.
    pub fn merge(&mut self, other: KeyCounts) {
        for (k, n) in other.counts {
            self.add(k, n);
        }
    }

    /// Rows counted.
    pub fn rows(&self) -> usize {
        self.counts.values().sum()
    }
}

/// Disjoint clusters of touching slot ranges, sorted, each with whether it pays (needs
/// fewer nodes than it has rows).
#[derive(Debug, Clone, Default)]
struct Clusters {
    spans: Vec<(i64, i64, bool)>,
}

impl Clusters {
    /// Merges the ranges `members` (inclusive slot range and the rows having it) into
    /// clusters of ranges that touch; returns them and the slots of the clusters that pay.
    fn merge(mut members: Vec<(i64, i64, usize)>) -> (Clusters, Vec<i64>) {
        members.sort_unstable();
        let mut spans = Vec::new();
        let mut slots = Vec::new();
        let mut start = 0;
        while start < members.len() {
            let (lo, mut hi, mut rows) = members[start];
            let mut end = start + 1;
            while end < members.len() && members[end].0 <= hi + 1 {
                hi = hi.max(members[end].1);
                rows += members[end].2;
                end += 1;
            }
            let pays = ((hi - lo + 1) as usize) < rows;
            if pays {
                slots.extend(lo..=hi);
            }
            spans.push((lo, hi, pays));
            start = end;
        }
        (Clusters { spans }, slots)
    }

    /// Whether the range `lo..=hi` lies in a cluster that pays.
    fn pays(&self, lo: i64, hi: i64) -> bool {
        let k = self.spans.partition_point(|s| s.0 <= lo);
        k > 0 && self.spans[k - 1].2 && hi <= self.spans[k - 1].1
    }
}

/// The plan of a table's correction: which rows go through table nodes, which take the
/// two-speed exact path, and the nodes both need, computed once from the [`KeyCounts`] of
/// all rows. Rows are then corrected in any number of blocks, with results identical to
/// correcting them all at once.
pub struct CorrectionPlan<'a> {
    corrector: &'a BarycentricCorrector,
    observers: &'a [Observer],
    active: bool,
    table: Vec<Clusters>,
    slow_clusters: Clusters,
    grids: Vec<NodeGrid>,
    slow: SlowTermGrid,
}

impl<'a> CorrectionPlan<'a> {
    /// Plans the correction of the rows counted in `counts` (see the module doc);
    /// `observers[0]` must be the geocentre, else every row is exact. The table nodes take
    /// precession–nutation and TDB − TT from daily slow-term nodes where those are fewer
    /// (≤ 3e-12 s from exact nodes; bound in [`super::slow_terms`]).
    pub fn new(
        corrector: &'a BarycentricCorrector,
        observers: &'a [Observer],
        counts: &KeyCounts,
        path: CorrectionPath,
    ) -> CorrectionPlan<'a> {
        let mut plan = CorrectionPlan {
            corrector,
            observers,
            active: false,
            table: Vec::new(),
            slow_clusters: Clusters::default(),
            grids: Vec::new(),
            slow: SlowTermGrid::default(),
        };
        if path == CorrectionPath::ExactEveryRow || !matches!(observers.first(), Some(Observer::Geocentre)) {
            return plan;
        }
        plan.active = true;
        let mut table_slots = Vec::with_capacity(observers.len());
        for group in 0..observers.len() {
            let members = counts
                .counts
                .iter()
                .filter_map(|(k, &n)| k.table.filter(|t| t.0 == group).map(|t| (t.1, t.2, n)))
                .collect();
            let (clusters, slots) = Clusters::merge(members);
            plan.table.push(clusters);
            table_slots.push(slots);
        }
        // The rest: exact, with the slow parts from coarse nodes where clusters pay.
        let members = counts
            .counts
            .iter()
            .filter(|(k, _)| !k.table.is_some_and(|t| plan.table[t.0].pays(t.1, t.2)))
            .filter_map(|(k, &n)| k.slow.map(|s| (s.0, s.1, n)))
            .collect();
        let (slow_clusters, mut slow_slots) = Clusters::merge(members);
        plan.slow_clusters = slow_clusters;
        // Table nodes of a group take the slow parts from slow-term nodes where fewer.
        let node_slow_slots: Vec<Vec<i64>> = table_slots
            .iter()
            .map(|slots| {
                let mut s: Vec<i64> =
                    slots.iter().flat_map(|&slot| slow_slots_used(slow_slot(&slot_instant(slot)).0)).collect();
                s.sort_unstable();
                s.dedup();
                s
            })
            .collect();
        let with_slow: Vec<bool> =
            table_slots.iter().zip(&node_slow_slots).map(|(t, s)| !t.is_empty() && s.len() < t.len()).collect();
        for (s, &w) in node_slow_slots.iter().zip(&with_slow) {
            if w {
                slow_slots.extend(s);
            }
        }
        plan.slow = SlowTermGrid::build(&slow_slots);
        plan.grids = table_slots
            .iter()
            .enumerate()
            .map(|(group, slots)| {
                let slow = if with_slow[group] { SlowParts::Interpolated(&plan.slow) } else { SlowParts::Exact };
                if slots.is_empty() {
                    NodeGrid::default()
                } else {
                    NodeGrid::build_with_slow_parts(corrector, &observers[group], slots, slow)
                }
            })
            .collect();
        plan
    }

    /// Table nodes computed.
    pub fn nodes(&self) -> usize {
        self.grids.iter().map(NodeGrid::len).sum()
    }

    /// Slow-term nodes computed.
    pub fn slow_term_nodes(&self) -> usize {
        self.slow.len()
    }

    /// The corrections of `rows` (in order, in parallel), each with the way it was
    /// corrected; every row must have been counted in the plan's [`KeyCounts`].
    pub fn correct(&self, rows: &[RowTime]) -> Vec<(Result<Corrected, ArrivalError>, RowPath)> {
        rows.par_iter().map(|r| self.correct_row(r)).collect()
    }

    /// One row, as [`CorrectionPlan::correct`].
    pub fn correct_row(&self, r: &RowTime) -> (Result<Corrected, ArrivalError>, RowPath) {
        let exact = |slow: SlowParts<'_>| {
            let spacecraft;
            let observer = match r.observer {
                RowObserver::Fixed(i) => self.observers.get(i).unwrap_or(&Observer::Geocentre),
                RowObserver::Spacecraft(s) => {
                    spacecraft = Observer::Spacecraft(s);
                    &spacecraft
                }
            };
            self.corrector.correct_with_slow_parts(&r.time, observer, r.reference, slow)
        };
        if !self.active {
            return (exact(SlowParts::Exact), RowPath::Exact);
        }
        // the reading's TT, once for the key and the interpolation
        let tt = key_tt(self.corrector, r);
        let key = RowKey::from_key_tt(self.observers, r, tt);
        if let Some((group, lo, hi)) = key.table
            && self.table.get(group).is_some_and(|c| c.pays(lo, hi))
            && let Some(tt) = tt
        {
            if let Some(c) = interpolate_row(self.corrector, &self.grids[0], &self.grids[group], r, tt) {
                return (Ok(c), RowPath::TableNodes);
            }
            return (exact(SlowParts::Exact), RowPath::Exact);
        }
        if let Some((lo, hi)) = key.slow
            && self.slow_clusters.pays(lo, hi)
        {
            return (exact(SlowParts::Interpolated(&self.slow)), RowPath::SlowTermNodes);
        }
        (exact(SlowParts::Exact), RowPath::Exact)
    }
}

/// Rows with their correction planned and the nodes computed, ready to be corrected range by
/// range (so that a caller can keep only one range of results in memory at a time).
pub struct PreparedRows<'a> {
    plan: CorrectionPlan<'a>,
    rows: &'a [RowTime],
}

impl<'a> PreparedRows<'a> {
    /// Plans `rows` ([`CorrectionPlan::new`] on their [`KeyCounts`]); `observers[0]` must be
    /// the geocentre, else every row is exact.
    pub fn new(
        corrector: &'a BarycentricCorrector,
        observers: &'a [Observer],
        rows: &'a [RowTime],
        path: CorrectionPath,
    ) -> PreparedRows<'a> {
        let counts = if path == CorrectionPath::ExactEveryRow || !matches!(observers.first(), Some(Observer::Geocentre))
        {
            KeyCounts::default()
        } else {
            KeyCounts::of_rows(corrector, observers, rows)
        };
        PreparedRows { plan: CorrectionPlan::new(corrector, observers, &counts, path), rows }
    }

    /// Table nodes computed.
    pub fn nodes(&self) -> usize {
        self.plan.nodes()
    }

    /// Slow-term nodes computed.
    pub fn slow_term_nodes(&self) -> usize {
        self.plan.slow_term_nodes()
    }

    /// The corrections of rows `range` (in order), each with the way it was corrected.
    pub fn correct_range(&self, range: std::ops::Range<usize>) -> Vec<(Result<Corrected, ArrivalError>, RowPath)> {
        self.plan.correct(&self.rows[range])
    }
}

/// The node slots of a row: its table-node group, slot and margin (`None` where the table
/// nodes cannot serve it) and its slow-term slot and margin (`None` for readings on TDB or
/// TCB at an observer). The group is the observer index (0 for rows already at the
/// barycentre); one node of margin either side is needed where the row's TT is only
/// approximately known from the key (times on TDB/TCB, heliocentric times).
#[allow(clippy::type_complexity)]
fn row_slots(
    observers: &[Observer],
    r: &RowTime,
    key: Option<Instant>,
) -> (Option<(usize, i64, i64)>, Option<(i64, i64)>) {
    let on_tdb = matches!(r.time.scale(), TimeScale::Tdb | TimeScale::Tcb);
    let at_observer_on_tdb = on_tdb && r.reference != ReferencePoint::Barycentric;
    let group = match (r.observer, r.reference) {
        (RowObserver::Spacecraft(_), _) => None,
        (_, _) if at_observer_on_tdb => None,
        (RowObserver::Fixed(_), ReferencePoint::Barycentric) => Some(0),
        (RowObserver::Fixed(index), _) => Some(index),
    };
    let group = group.filter(|&g| matches!(observers.get(g), Some(Observer::Geocentre | Observer::Site(_))));
    let slow_possible = !at_observer_on_tdb
        && match r.observer {
            RowObserver::Fixed(index) => index < observers.len(),
            RowObserver::Spacecraft(_) => true,
        };
    if group.is_none() && !slow_possible {
        return (None, None);
    }
    let Some(key) = key else { return (None, None) };
    let margin = i64::from(on_tdb || r.reference == ReferencePoint::Heliocentric);
    (group.map(|g| (g, table_slot(&key).0, margin)), slow_possible.then(|| (slow_slot(&key).0, margin)))
}

/// The TT that places row `r` among the node slots: its reading converted to TT, or for a
/// reading on TDB (TCB via TDB) the same number taken as TT (hence the margin of one node
/// in [`row_slots`]); `None` where the reading cannot be converted.
fn key_tt(corrector: &BarycentricCorrector, r: &RowTime) -> Option<Instant> {
    match r.time.scale() {
        TimeScale::Tdb => Some(r.time.relabel(TimeScale::Tt)),
        TimeScale::Tcb => Some(tcb_to_tdb(&r.time).relabel(TimeScale::Tt)),
        _ => corrector.converter().convert(&r.time, TimeScale::Tt).ok(),
    }
}

/// TT for a reading on TDB, by the fixed-point iteration of the exact converter with the
/// geocentric TDB − TT interpolated from the geocentre's nodes.
fn tdb_to_tt(geocentre: &NodeGrid, tdb: &Instant) -> Option<Instant> {
    let mut tt = tdb.relabel(TimeScale::Tt);
    for _ in 0..3 {
        let dt = geocentre.interpolate(&tt)?.values[NodeTerms::EINSTEIN];
        tt = tdb.add_seconds(-dt).relabel(TimeScale::Tt);
    }
    Some(tt)
}

/// One row through the nodes, term for term as [`BarycentricCorrector::correct`] computes
/// it; `None` where the nodes cannot serve it. `key` is the row's [`key_tt`]: for a reading
/// on neither TDB nor TCB, its TT.
fn interpolate_row(
    corrector: &BarycentricCorrector,
    geocentre: &NodeGrid,
    grid: &NodeGrid,
    r: &RowTime,
    key: Instant,
) -> Option<Corrected> {
    match r.reference {
        ReferencePoint::Barycentric => {
            let (tt, tdb) = match r.time.scale() {
                TimeScale::Tdb => (tdb_to_tt(geocentre, &r.time)?, r.time),
                TimeScale::Tcb => {
                    let tdb = tcb_to_tdb(&r.time);
                    (tdb_to_tt(geocentre, &tdb)?, tdb)
                }
                _ => {
                    let tt = key;
                    let g = geocentre.interpolate(&tt)?.values[NodeTerms::EINSTEIN];
                    (tt, tt.add_seconds(g).relabel(TimeScale::Tdb))
                }
            };
            let delays = DelayBreakdown {
                clock_to_tt_s: tt.seconds_since(&r.time),
                einstein_s: tdb.seconds_since(&tt),
                ..Default::default()
            };
            Some(Corrected {
                bjd_tdb: tdb,
                observer_tdb: tdb,
                delays,
                earth_orientation_from_table: false,
                observer_barycentric_km: None,
            })
        }
        // no key for a reading on TDB or TCB at an observer: such rows take the exact path
        ReferencePoint::Observer => at_observer(grid, &r.time, key, 0.0),
        ReferencePoint::Heliocentric => {
            // The exact path's fixed-point iteration, with the heliocentric light time
            // (r_obs − r_Sun)·n̂/c interpolated.
            let mut obs_time = r.time;
            let mut helio = 0.0;
            for _ in 0..4 {
                let tt = corrector.converter().convert(&obs_time, TimeScale::Tt).ok()?;
                let v = grid.interpolate(&tt)?.values;
                helio = v[NodeTerms::ROEMER] - v[NodeTerms::SUN_PROJECTION];
                obs_time = r.time.add_seconds(-helio);
            }
            let tt = corrector.converter().convert(&obs_time, TimeScale::Tt).ok()?;
            at_observer(grid, &obs_time, tt, helio)
        }
    }
}

/// The correction of the reading `clock` (its TT `tt`) at the observer of `grid`.
fn at_observer(grid: &NodeGrid, clock: &Instant, tt: Instant, heliocentric_removed_s: f64) -> Option<Corrected> {
    let terms = grid.interpolate(&tt)?;
    let v = terms.values;
    let tdb = tt.add_seconds(v[NodeTerms::EINSTEIN]).relabel(TimeScale::Tdb);
    let delays = DelayBreakdown {
        clock_to_tt_s: tt.seconds_since(clock),
        einstein_s: tdb.seconds_since(&tt),
        roemer_s: v[NodeTerms::ROEMER],
        curvature_s: v[NodeTerms::CURVATURE],
        shapiro_sun_s: v[NodeTerms::SHAPIRO_SUN],
        shapiro_planets_s: v[NodeTerms::SHAPIRO_PLANETS],
        heliocentric_removed_s,
    };
    let p = NodeTerms::POSITION;
    Some(Corrected {
        bjd_tdb: tdb.add_seconds(delays.barycentric_s()),
        observer_tdb: tdb,
        delays,
        earth_orientation_from_table: terms.earth_orientation_from_table,
        observer_barycentric_km: Some([v[p], v[p + 1], v[p + 2]]),
    })
}
