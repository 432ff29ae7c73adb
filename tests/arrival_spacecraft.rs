//! Spacecraft observers: per-row positions, geocentric or barycentric, must give the same
//! arrival time at the barycentre; the Rømer delay grows by r_sc·n̂/c and TDB at the
//! spacecraft by v⊕·r_sc/c² (the topocentric term of TDB − TT, Fairhead & Bretagnon 1990;
//! SOFA iauDtdb documentation).

use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
use skyclock::ephemeris::{Body, Ephemeris, SPEED_OF_LIGHT_KM_PER_S, embedded};
use skyclock::observer::{EarthOrientation, Observer, PositionOrigin, SpacecraftPosition};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale};

#[test]
fn geocentric_and_barycentric_spacecraft_positions_agree() {
    let source = Source::fixed_degrees("invented burster", 250.0, -30.0).unwrap();
    let c = BarycentricCorrector::new(
        embedded(),
        ScaleConverter::new(LeapSecondTable::builtin()),
        EarthOrientation::Ignored,
        source.clone(),
        DelayOptions::default(),
    );
    let n = source.direction_at(&Instant::from_mjd_parts(TimeScale::Tdb, 60_000, 0.0)).unit;
    for (k, r_sc) in [[6_878.0, 0.0, 0.0], [-3_000.0, 5_000.0, 3_500.0], [0.0, 0.0, -42_164.0]].iter().enumerate() {
        let t = Instant::from_mjd_parts(TimeScale::Tt, 60_000 + 37 * k as i64, 1_000.0 + 7_000.0 * k as f64);
        let geo = c.correct(&t, &Observer::Geocentre, ReferencePoint::Observer).unwrap();
        let sc = Observer::Spacecraft(SpacecraftPosition { position_km: *r_sc, origin: PositionOrigin::Geocentric });
        let out = c.correct(&t, &sc, ReferencePoint::Observer).unwrap();
        // Rømer grows by r·n̂/c (the source direction changes negligibly in these instants).
        let extra = (r_sc[0] * n[0] + r_sc[1] * n[1] + r_sc[2] * n[2]) / SPEED_OF_LIGHT_KM_PER_S;
        assert!((out.delays.roemer_s - geo.delays.roemer_s - extra).abs() < 2e-9, "k={k}");
        // Einstein delay grows by v⊕·r/c².
        let earth = embedded().state(Body::Earth, &geo.observer_tdb).unwrap();
        let v = earth.velocity_km_per_s;
        let topo = (v[0] * r_sc[0] + v[1] * r_sc[1] + v[2] * r_sc[2]) / SPEED_OF_LIGHT_KM_PER_S.powi(2);
        assert!((out.delays.einstein_s - geo.delays.einstein_s - topo).abs() < 1e-11, "k={k}");
        // The same spacecraft given as a barycentric position.
        let e = embedded().state(Body::Earth, &out.observer_tdb).unwrap().position_km;
        let bary = Observer::Spacecraft(SpacecraftPosition {
            position_km: [e[0] + r_sc[0], e[1] + r_sc[1], e[2] + r_sc[2]],
            origin: PositionOrigin::Barycentric,
        });
        let out2 = c.correct(&t, &bary, ReferencePoint::Observer).unwrap();
        assert!(
            out2.bjd_tdb.seconds_since(&out.bjd_tdb).abs() < 1e-9,
            "k={k}: {}",
            out2.bjd_tdb.seconds_since(&out.bjd_tdb)
        );
    }
}
