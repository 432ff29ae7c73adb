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

use rayon::prelude::*;

use super::correction::{ArrivalError, BarycentricCorrector, Corrected, DelayBreakdown, NodeTerms, ReferencePoint};
use super::interpolated::{NodeGrid, slots_used, table_slot};
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

/// Rows with their correction planned and the nodes computed, ready to be corrected range by
/// range (so that a caller can keep only one range of results in memory at a time).
pub struct PreparedRows<'a> {
    corrector: &'a BarycentricCorrector,
    observers: &'a [Observer],
    rows: &'a [RowTime],
    plan: Vec<Option<Plan>>,
    chosen: Vec<bool>,
    grids: Vec<NodeGrid>,
    slow_chosen: Vec<bool>,
    slow: SlowTermGrid,
}

impl<'a> PreparedRows<'a> {
    /// Groups and clusters `rows` and computes the nodes the chosen clusters need (see the
    /// module doc); `observers[0]` must be the geocentre, else every row is exact.
    pub fn new(
        corrector: &'a BarycentricCorrector,
        observers: &'a [Observer],
        rows: &'a [RowTime],
        path: CorrectionPath,
    ) -> PreparedRows<'a> {
        let mut prepared = PreparedRows {
            corrector,
            observers,
            rows,
            plan: Vec::new(),
            chosen: Vec::new(),
            grids: Vec::new(),
            slow_chosen: Vec::new(),
            slow: SlowTermGrid::default(),
        };
        if path == CorrectionPath::ExactEveryRow || !matches!(observers.first(), Some(Observer::Geocentre)) {
            return prepared;
        }
        prepared.plan = rows.par_iter().map(|r| plan_row(corrector, observers, r)).collect();
        prepared.chosen = vec![false; rows.len()];
        prepared.grids = (0..observers.len())
            .map(|group| {
                let slots = choose_clusters(&prepared.plan, group, &mut prepared.chosen);
                if slots.is_empty() {
                    NodeGrid::default()
                } else {
                    NodeGrid::build(corrector, &observers[group], &slots)
                }
            })
            .collect();
        // The rest: exact, with the slow parts from coarse nodes where clusters pay.
        let members: Vec<(i64, i64, usize)> = rows
            .par_iter()
            .enumerate()
            .filter(|(i, _)| !prepared.chosen[*i])
            .filter_map(|(i, r)| {
                let (slot, margin) = slow_key(corrector, observers, r)?;
                let range = slow_slots_used(slot);
                Some((range.start() - margin, range.end() + margin, i))
            })
            .collect();
        prepared.slow_chosen = vec![false; rows.len()];
        let slots = clusters_that_pay(members, &mut prepared.slow_chosen);
        prepared.slow = SlowTermGrid::build(&slots);
        prepared
    }

    /// Table nodes computed.
    pub fn nodes(&self) -> usize {
        self.grids.iter().map(NodeGrid::len).sum()
    }

    /// Slow-term nodes computed.
    pub fn slow_term_nodes(&self) -> usize {
        self.slow.len()
    }

    /// The corrections of rows `range` (in order), each with the way it was corrected.
    pub fn correct_range(&self, range: std::ops::Range<usize>) -> Vec<(Result<Corrected, ArrivalError>, RowPath)> {
        let exact = |r: &RowTime, slow: SlowParts<'_>| {
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
        range
            .into_par_iter()
            .map(|i| {
                let r = &self.rows[i];
                if self.chosen.get(i).copied().unwrap_or(false)
                    && let Some(Some(p)) = self.plan.get(i)
                    && let Some(c) = interpolate_row(self.corrector, &self.grids[0], &self.grids[p.group], r)
                {
                    return (Ok(c), RowPath::TableNodes);
                }
                if self.slow_chosen.get(i).copied().unwrap_or(false) {
                    return (exact(r, SlowParts::Interpolated(&self.slow)), RowPath::SlowTermNodes);
                }
                (exact(r, SlowParts::Exact), RowPath::Exact)
            })
            .collect()
    }
}

/// Where a row would be interpolated: its group (observer index; 0 for rows already at the
/// barycentre), its grid slot, and whether it needs one node of margin either side (its TT
/// is only approximately known from the key: times on TDB/TCB, heliocentric times).
#[derive(Debug, Clone, Copy)]
struct Plan {
    group: usize,
    slot: i64,
    margin: i64,
}

fn plan_row(corrector: &BarycentricCorrector, observers: &[Observer], r: &RowTime) -> Option<Plan> {
    let RowObserver::Fixed(index) = r.observer else { return None };
    let on_tdb = matches!(r.time.scale(), TimeScale::Tdb | TimeScale::Tcb);
    let group = match r.reference {
        ReferencePoint::Barycentric => 0,
        _ if on_tdb => return None,
        _ => index,
    };
    if !matches!(observers.get(group)?, Observer::Geocentre | Observer::Site(_)) {
        return None;
    }
    let key = match r.time.scale() {
        TimeScale::Tdb => r.time.relabel(TimeScale::Tt),
        TimeScale::Tcb => tcb_to_tdb(&r.time).relabel(TimeScale::Tt),
        _ => corrector.converter().convert(&r.time, TimeScale::Tt).ok()?,
    };
    let margin = i64::from(on_tdb || r.reference == ReferencePoint::Heliocentric);
    Some(Plan { group, slot: table_slot(&key).0, margin })
}

/// The slow-term slot of a row that may take the two-speed exact path, with one slot of
/// margin where its TT is only approximately known (heliocentric readings, TDB and TCB);
/// `None` for readings on TDB or TCB at an observer.
fn slow_key(corrector: &BarycentricCorrector, observers: &[Observer], r: &RowTime) -> Option<(i64, i64)> {
    let on_tdb = matches!(r.time.scale(), TimeScale::Tdb | TimeScale::Tcb);
    if on_tdb && r.reference != ReferencePoint::Barycentric {
        return None;
    }
    if let RowObserver::Fixed(index) = r.observer {
        observers.get(index)?;
    }
    let key = match r.time.scale() {
        TimeScale::Tdb => r.time.relabel(TimeScale::Tt),
        TimeScale::Tcb => tcb_to_tdb(&r.time).relabel(TimeScale::Tt),
        _ => corrector.converter().convert(&r.time, TimeScale::Tt).ok()?,
    };
    let margin = i64::from(on_tdb || r.reference == ReferencePoint::Heliocentric);
    Some((slow_slot(&key).0, margin))
}

/// Marks the rows of `group` that go through the nodes and returns the node slots they
/// need: clusters of rows whose node ranges touch, kept when they need fewer nodes than
/// they have rows.
fn choose_clusters(plan: &[Option<Plan>], group: usize, chosen: &mut [bool]) -> Vec<i64> {
    let members: Vec<(i64, i64, usize)> = plan
        .iter()
        .enumerate()
        .filter_map(|(i, p)| {
            p.filter(|p| p.group == group).map(|p| {
                let range = slots_used(p.slot);
                (range.start() - p.margin, range.end() + p.margin, i)
            })
        })
        .collect();
    clusters_that_pay(members, chosen)
}

/// Given each candidate row's inclusive range of node slots and its index, marks in
/// `chosen` the rows of clusters (rows whose ranges touch) that need fewer nodes than they
/// have rows, and returns the slots those clusters need.
fn clusters_that_pay(mut members: Vec<(i64, i64, usize)>, chosen: &mut [bool]) -> Vec<i64> {
    members.sort_unstable();
    let mut slots = Vec::new();
    let mut start = 0;
    while start < members.len() {
        let (lo, mut hi, _) = members[start];
        let mut end = start + 1;
        while end < members.len() && members[end].0 <= hi + 1 {
            hi = hi.max(members[end].1);
            end += 1;
        }
        let nodes = (hi - lo + 1) as usize;
        if nodes < end - start {
            slots.extend(lo..=hi);
            for m in &members[start..end] {
                chosen[m.2] = true;
            }
        }
        start = end;
    }
    slots
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
/// it; `None` where the nodes cannot serve it.
fn interpolate_row(
    corrector: &BarycentricCorrector,
    geocentre: &NodeGrid,
    grid: &NodeGrid,
    r: &RowTime,
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
                    let tt = corrector.converter().convert(&r.time, TimeScale::Tt).ok()?;
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
        ReferencePoint::Observer => at_observer(corrector, grid, &r.time, 0.0),
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
            at_observer(corrector, grid, &obs_time, helio)
        }
    }
}

fn at_observer(
    corrector: &BarycentricCorrector,
    grid: &NodeGrid,
    clock: &Instant,
    heliocentric_removed_s: f64,
) -> Option<Corrected> {
    let tt = corrector.converter().convert(clock, TimeScale::Tt).ok()?;
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
