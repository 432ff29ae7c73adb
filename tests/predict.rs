//! The prediction stage: sky geometry against astropy, uncertainty propagation against a
//! Monte-Carlo of the ephemeris covariance, the Sun caution, and the `predict-events`
//! command end to end with its bad inputs.

#[path = "common/json.rs"]
mod json;

use std::path::PathBuf;
use std::process::Command;

use skyclock::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
use skyclock::ephemeris::{Body, Ephemeris, embedded};
use skyclock::fit::Estimates;
use skyclock::fit::SeededRng;
use skyclock::observer::{EarthOrientation, Observer, Site};
use skyclock::oc::EventKind;
use skyclock::oc::{FittedEphemeris, ModelKind, ReferenceEphemeris};
use skyclock::predict::{PredictionOptions, SkyGeometry, predict_events};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeFormat, TimeScale, parse_time};

/// The invented site of tests/reference/predict/generate_altaz.py.
fn quarry_hill() -> Site {
    Site::from_degrees("quarry-hill", -7.625, 38.418, 740.0).unwrap()
}

fn converter() -> ScaleConverter {
    ScaleConverter::new(LeapSecondTable::builtin())
}

/// Angle between two (altitude, azimuth) directions, degrees.
fn sky_angle_deg(alt1: f64, az1: f64, alt2: f64, az2: f64) -> f64 {
    let v = |alt: f64, az: f64| {
        let (a, z) = (alt.to_radians(), az.to_radians());
        [a.cos() * z.cos(), a.cos() * z.sin(), a.sin()]
    };
    let (p, q) = (v(alt1, az1), v(alt2, az2));
    let cr = [p[1] * q[2] - p[2] * q[1], p[2] * q[0] - p[0] * q[2], p[0] * q[1] - p[1] * q[0]];
    let n = (cr[0] * cr[0] + cr[1] * cr[1] + cr[2] * cr[2]).sqrt();
    n.atan2(p[0] * q[0] + p[1] * q[1] + p[2] * q[2]).to_degrees()
}

/// Reference: astropy 8.0.2 AltAz, pressure 0, UT1 = UTC (tests/reference/predict/README.md).
/// Tolerances: target and Sun 0.6″ on the sky (measured 0.50″ and 0.46″). Budget: polar
/// motion, which skyclock leaves out without an Earth-orientation table while astropy applies
/// its bundled IERS values, ≤ 0.5″ (common practice); light deflection, also left out, ≤ 4 mas
/// at the rows' elongations (≥ 1.75″ only at the solar limb; from memory); everything else is
/// the same IAU 2006/2000A chain. Faults this catches: annual aberration dropped (≤ 20.5″),
/// nutation dropped (≤ 17″), precession from the wrong epoch (50″ per year), the Earth
/// rotation angle taken for sidereal time or vice versa (≥ arcminutes), a site height or
/// latitude on the wrong ellipsoid (parallax of the Sun ≤ 8.8″). Diurnal aberration (≤ 0.32″)
/// is inside the budget and not caught. Moon 0.5° (the Astronomical Almanac low-precision
/// formulae state ≈0.3° in longitude and 0.2° in latitude; astropy uses ERFA moon98);
/// Moon–target separation 0.5°; illuminated fraction 0.01 (a 0.3° phase-angle error moves
/// it by ≤ 0.003).
#[test]
fn altitudes_and_azimuths_agree_with_astropy() {
    let text =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/reference/predict/altaz.csv")).unwrap();
    let conv = converter();
    let sky = SkyGeometry::new(embedded(), conv.clone(), EarthOrientation::Ignored);
    let site = quarry_hill();
    let (mut worst_target, mut worst_sun, mut worst_moon, mut worst_sep, mut worst_frac) =
        (0.0f64, 0.0f64, 0.0f64, 0.0f64, 0.0f64);
    let mut rows = 0;
    for line in text.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let num = |i: usize| f[i].parse::<f64>().unwrap();
        let utc = parse_time(f[0], TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
        let source = Source::fixed_degrees(f[1], num(2), num(3)).unwrap();
        let s = sky.snapshot(&site, &utc, &source).unwrap();
        let dt = sky_angle_deg(s.target.altitude_deg, s.target.azimuth_deg, num(4), num(5));
        let ds = sky_angle_deg(s.sun.altitude_deg, s.sun.azimuth_deg, num(6), num(7));
        let dm = sky_angle_deg(s.moon.altitude_deg, s.moon.azimuth_deg, num(8), num(9));
        let dsep = (s.moon_separation_deg - num(10)).abs();
        let dfrac = (s.moon_illuminated_fraction - num(11)).abs();
        let arcsec = 1.0 / 3600.0;
        assert!(dt < 0.6 * arcsec, "{line}: target off by {}″", dt * 3600.0);
        assert!((s.target.altitude_deg - num(4)).abs() < 0.6 * arcsec, "{line}: target altitude");
        assert!(ds < 0.6 * arcsec, "{line}: Sun off by {}″", ds * 3600.0);
        assert!(dm < 0.5, "{line}: Moon off by {dm}°");
        assert!(dsep < 0.5, "{line}: Moon separation off by {dsep}°");
        assert!(dfrac < 0.01, "{line}: illuminated fraction off by {dfrac}");
        worst_target = worst_target.max(dt);
        worst_sun = worst_sun.max(ds);
        worst_moon = worst_moon.max(dm);
        worst_sep = worst_sep.max(dsep);
        worst_frac = worst_frac.max(dfrac);
        rows += 1;
    }
    assert_eq!(rows, 60);
    eprintln!(
        "max differences vs astropy over {rows} rows: target {:.2}″, Sun {:.2}″, Moon {:.3}°, Moon separation {:.3}°, illuminated fraction {:.4}",
        worst_target * 3600.0,
        worst_sun * 3600.0,
        worst_moon,
        worst_sep,
        worst_frac
    );
}

/// Propagation σ² = gᵀCg checked against an independent Monte-Carlo: parameters drawn from
/// the multivariate normal N(θ, C) (Cholesky factor, seeded), the spread of T(E) measured.
/// With 40 000 draws the sample σ scatters by 1/√(2n) ≈ 0.35 %; tolerance 2 %.
#[test]
fn propagated_sigma_matches_a_monte_carlo_of_the_covariance() {
    let epoch = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_100.5, 0.3125);
    // A correlated covariance of (T0, P, Q), d²: σ = 4e-4 d, 2e-7 d, 5e-12 d; ρ(T0,P) = −0.6,
    // ρ(P,Q) = −0.8, ρ(T0,Q) = 0.3 (positive definite).
    let sig = [4e-4, 2e-7, 5e-12];
    let rho = [[1.0, -0.6, 0.3], [-0.6, 1.0, -0.8], [0.3, -0.8, 1.0]];
    let mut c = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            c[i][j] = rho[i][j] * sig[i] * sig[j];
        }
    }
    let estimates = Estimates::new(
        ModelKind::Quadratic.parameters(),
        vec![0.0, 0.0, 2e-10],
        c.iter().map(|r| r.to_vec()).collect(),
    )
    .unwrap();
    let reference = ReferenceEphemeris { epoch, period_d: 1.234567, period_sigma_d: sig[1] };
    let eph = FittedEphemeris::new(reference, ModelKind::Quadratic, estimates).unwrap();
    // Cholesky L (lower) of C.
    let mut l = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..=i {
            let mut s = c[i][j];
            s -= (0..j).map(|k| l[i][k] * l[j][k]).sum::<f64>();
            l[i][j] = if i == j { s.sqrt() } else { s / l[j][j] };
        }
    }
    let cycles = [-4000.0, -250.5, 0.0, 1200.0, 9000.5];
    let n = 40_000;
    let mut rng = SeededRng::new(4242);
    let mut sum = [0.0; 5];
    let mut sum2 = [0.0; 5];
    for _ in 0..n {
        let z = [rng.normal(), rng.normal(), rng.normal()];
        let d: Vec<f64> = (0..3).map(|i| (0..3).map(|k| l[i][k] * z[k]).sum()).collect();
        for (j, &e) in cycles.iter().enumerate() {
            // Deviation of T(E) from the nominal, days.
            let dev = d[0] + d[1] * e + d[2] * e * e;
            sum[j] += dev;
            sum2[j] += dev * dev;
        }
    }
    for (j, &e) in cycles.iter().enumerate() {
        let mean = sum[j] / n as f64;
        let sd = (sum2[j] / n as f64 - mean * mean).sqrt();
        let want = eph.sigma_d(e);
        assert!((sd / want - 1.0).abs() < 0.02, "cycle {e}: Monte-Carlo σ {sd} vs propagated {want}");
    }
}

/// Unit vector Sun direction from the geocentre (DE440 pack), as RA/Dec degrees.
fn sun_ra_dec_deg(tdb: &Instant) -> (f64, f64) {
    let e = embedded();
    let s = e.state(Body::Sun, tdb).unwrap().position_km;
    let g = e.state(Body::Earth, tdb).unwrap().position_km;
    let v = [s[0] - g[0], s[1] - g[1], s[2] - g[2]];
    let r = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    (v[1].atan2(v[0]).to_degrees().rem_euclid(360.0), (v[2] / r).asin().to_degrees())
}

fn events_for(source: Source, start: &str, end: &str) -> Vec<skyclock::predict::PredictedEvent> {
    let conv = converter();
    let site = quarry_hill();
    let start = parse_time(start, TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
    let end = parse_time(end, TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
    let eph = FittedEphemeris::linear(Instant::from_jd_two_part(TimeScale::Tdb, 2_461_000.5, 0.1), 0.377, 1e-4, 1e-7)
        .unwrap();
    let corrector =
        BarycentricCorrector::new(embedded(), conv.clone(), EarthOrientation::Ignored, source, DelayOptions::default());
    let sky = SkyGeometry::new(embedded(), conv.clone(), EarthOrientation::Ignored);
    let options = PredictionOptions { event_duration_d: Some(0.1), ..Default::default() };
    predict_events(&eph, &[EventKind::Primary, EventKind::Secondary], &start, &end, &site, &corrector, &sky, &options)
        .unwrap()
}

/// The caution (the 15° rule) triggers for a target at the Sun's position and for
/// one 10° away, never marks those events observable, and stays silent for targets 20° and
/// 180° from the Sun.
#[test]
fn sun_caution_triggers_near_the_sun_only() {
    let tdb = Instant::from_jd_two_part(TimeScale::Tdb, 2_461_394.5, 0.0); // 2026-12-20
    let (ra, dec) = sun_ra_dec_deg(&tdb);
    let at_sun = Source::fixed_degrees("at-sun", ra, dec).unwrap();
    let ev = events_for(at_sun, "2026-12-19T12:00", "2026-12-21T12:00");
    assert!(ev.len() >= 8, "{}", ev.len());
    for e in &ev {
        assert!(e.sky.sun_separation_deg < 3.0, "{}", e.sky.sun_separation_deg);
        let c = e.sun_caution.as_ref().expect("caution expected");
        assert!(c.contains("cannot be observed safely") && c.contains("near the Sun"), "{c}");
        assert!(!e.observable && e.window_observable == Some(false));
    }
    // 10° and 20° north of the Sun along its hour circle; 180°: the antisolar point.
    let near = Source::fixed_degrees("near", ra, dec + 10.0).unwrap();
    for e in events_for(near, "2026-12-19T12:00", "2026-12-21T12:00") {
        assert!((9.0..11.5).contains(&e.sky.sun_separation_deg), "{}", e.sky.sun_separation_deg);
        assert!(e.sun_caution.is_some() && !e.observable);
    }
    let clear = Source::fixed_degrees("clear", ra, dec + 20.0).unwrap();
    for e in events_for(clear, "2026-12-19T12:00", "2026-12-21T12:00") {
        assert!(e.sky.sun_separation_deg > 18.0);
        assert!(e.sun_caution.is_none());
    }
    let opposite = Source::fixed_degrees("opposite", (ra + 180.0) % 360.0, -dec).unwrap();
    let ev = events_for(opposite, "2026-12-19T12:00", "2026-12-21T12:00");
    assert!(ev.iter().all(|e| e.sun_caution.is_none() && e.sky.sun_separation_deg > 175.0));
    // At the antisolar point the target is high around local midnight: some events observable.
    assert!(ev.iter().any(|e| e.observable), "no observable event at opposition");
    // Observable events satisfy the limits; a fully observable window satisfies them at
    // both of its ends too (duration 0.1 d, centred on the event).
    let conv = converter();
    let sky = SkyGeometry::new(embedded(), conv, EarthOrientation::Ignored);
    let opposite = Source::fixed_degrees("opposite", (ra + 180.0) % 360.0, -dec).unwrap();
    for e in ev.iter().filter(|e| e.observable) {
        assert!(e.sky.target.altitude_deg >= 30.0 && e.sky.sun.altitude_deg <= -12.0);
    }
    let mut windows = 0;
    for e in ev.iter().filter(|e| e.window_observable == Some(true)) {
        for half in [-0.05, 0.05] {
            let s = sky.snapshot(&quarry_hill(), &e.utc.add_seconds(half * 86_400.0), &opposite).unwrap();
            assert!(s.target.altitude_deg >= 30.0 && s.sun.altitude_deg <= -12.0, "{half}: {s:?}");
        }
        windows += 1;
    }
    assert!(windows > 0);
    // A Moon limit removes exactly the events closer to the Moon than it.
    let limit = 50.0; // the Moon is 38°–61° from this target over these days
    let conv = converter();
    let start = parse_time("2026-12-19T12:00", TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
    let end = parse_time("2026-12-21T12:00", TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
    let eph = FittedEphemeris::linear(Instant::from_jd_two_part(TimeScale::Tdb, 2_461_000.5, 0.1), 0.377, 1e-4, 1e-7)
        .unwrap();
    let corrector = BarycentricCorrector::new(
        embedded(),
        conv.clone(),
        EarthOrientation::Ignored,
        opposite.clone(),
        DelayOptions::default(),
    );
    let options =
        PredictionOptions { event_duration_d: Some(0.1), min_moon_separation_deg: limit, ..Default::default() };
    let limited = predict_events(
        &eph,
        &[EventKind::Primary, EventKind::Secondary],
        &start,
        &end,
        &quarry_hill(),
        &corrector,
        &sky,
        &options,
    )
    .unwrap();
    assert_eq!(limited.len(), ev.len());
    let (mut kept, mut removed) = (0, 0);
    for (a, b) in ev.iter().zip(&limited) {
        assert_eq!(b.observable, a.observable && a.sky.moon_separation_deg >= limit);
        kept += usize::from(b.observable);
        removed += usize::from(a.observable && !b.observable);
    }
    assert!(kept > 0 && removed > 0, "kept {kept}, removed {removed}");
    assert!(ev.iter().all(|e| e.observable || e.window_observable != Some(true)));
}

/// The clock time at the site maps back to the event's BJD_TDB through the forward
/// correction (inverse and forward are independent code paths of the arrival stage).
#[test]
fn site_clock_time_returns_to_the_predicted_bjd() {
    let source = Source::fixed_degrees("invented-F", 250.0, 30.0).unwrap();
    let ev = events_for(source.clone(), "2027-05-01", "2027-05-04");
    let conv = converter();
    let corrector =
        BarycentricCorrector::new(embedded(), conv, EarthOrientation::Ignored, source, DelayOptions::default());
    let obs = Observer::Site(quarry_hill());
    assert!((15..=17).contains(&ev.len()), "3 days of a 0.377-d period with secondaries: {}", ev.len());
    for e in &ev {
        let back = corrector.correct(&e.utc, &obs, ReferencePoint::Observer).unwrap();
        assert!(back.bjd_tdb.seconds_since(&e.bjd_tdb).abs() < 1e-6);
        assert_eq!(e.kind == EventKind::Secondary, e.cycle.fract() != 0.0);
    }
}

// ---- the command ----

fn skyclock() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skyclock"))
}

fn workdir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock-predict-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

const STAR: [&str; 4] = ["--ra", "16:40:00", "--dec", "+30:00:00"];
const SITE: &str = "--site-coordinates=-7.625,38.418,740";

/// timing-residuals writes a summary; predict-events reads its quadratic model and writes a
/// table whose times follow that model and whose σ grows away from the data.
#[test]
fn command_round_trip_from_a_timing_summary() {
    let d = workdir("round");
    // Invented timings of an invented binary: T = T0 + P E + Q E², small seeded noise.
    let (t0, p, q) = (2_459_500.312_34_f64, 0.6123457_f64, 1.5e-10_f64);
    let mut rng = SeededRng::new(7);
    let mut csv = String::from("time,error_d,kind\n");
    for k in 0..60 {
        let e = (k * 50) as f64 + if k % 3 == 0 { 0.5 } else { 0.0 };
        let t = t0 + p * e + q * e * e + 2e-4 * rng.normal();
        csv.push_str(&format!("{t:.6},0.0002,{}\n", if e.fract() != 0.0 { "secondary" } else { "primary" }));
    }
    let input = d.join("minima.csv");
    std::fs::write(&input, csv).unwrap();
    let summary = d.join("residuals.json");
    let o = skyclock()
        .args(["timing-residuals", "--input"])
        .arg(&input)
        .args(["--time-column", "time", "--clock", "bjd_tdb", "--error-column", "error_d", "--kind-column", "kind"])
        .args(STAR)
        .args(["--epoch-bjd-tdb", "2459500.3123", "--period-d", "0.612346", "--models", "linear,quadratic", "--output"])
        .arg(d.join("oc.csv"))
        .arg("--summary")
        .arg(&summary)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let out = d.join("upcoming.csv");
    let o = skyclock()
        .args(["predict-events", "--ephemeris-summary"])
        .arg(&summary)
        .args([
            "--summary-model",
            "quadratic",
            "--kinds",
            "primary,secondary",
            "--from",
            "2026-03-01",
            "--until",
            "2026-03-11",
            SITE,
        ])
        .args(STAR)
        .args(["--event-duration-hours", "3", "--json", "--output"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let events = v["events"].as_array().unwrap();
    // The --json output is the serialisation of the library's Forecast.
    let typed = json::assert_summary_round_trip::<skyclock::predict::Forecast>(&String::from_utf8_lossy(&o.stdout));
    assert_eq!(typed.result.events.len(), events.len());
    assert_eq!(typed.result.ephemeris.model, ModelKind::Quadratic);
    // The σ written is the propagation of the summary's quadratic covariance.
    let sv: serde_json::Value = serde_json::from_slice(&std::fs::read(&summary).unwrap()).unwrap();
    let model = sv["models"].as_array().unwrap().iter().find(|m| m["model"] == "quadratic").unwrap();
    let c: Vec<f64> = model["covariance"].as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect();
    // 10 days / 0.612 d per cycle, two kinds: 32 to 34 events.
    assert!((32..=34).contains(&events.len()), "{}", events.len());
    let table = std::fs::read_to_string(&out).unwrap();
    assert_eq!(table.lines().count(), events.len() + 1);
    let header: Vec<&str> = table.lines().next().unwrap().split(',').collect();
    for col in [
        "kind",
        "cycle",
        "bjd_tdb",
        "sigma_d",
        "utc_iso",
        "target_altitude_deg",
        "sun_altitude_deg",
        "sky_condition",
        "moon_separation_deg",
        "observable",
        "window_observable",
        "caution",
    ] {
        assert!(header.contains(&col), "{header:?}");
    }
    let prov = std::fs::read_to_string(d.join("upcoming.csv.provenance.json")).unwrap();
    assert!(prov.contains("predict-events") && prov.contains("DE440") && prov.contains("quadratic model"), "{prov}");
    // Times follow the true ephemeris within 5σ.
    for e in events {
        let cycle = e["cycle"].as_f64().unwrap();
        let bjd: f64 = e["bjd_tdb"].as_str().unwrap().parse().unwrap();
        let truth = t0 + p * cycle + q * cycle * cycle;
        let sigma = e["sigma_d"].as_f64().unwrap();
        assert!(sigma > 1e-6 && sigma < 1e-3, "{sigma}");
        let g = [1.0, cycle, cycle * cycle];
        let var: f64 = (0..3).map(|i| (0..3).map(|j| g[i] * c[i * 3 + j] * g[j]).sum::<f64>()).sum();
        assert!((sigma / var.sqrt() - 1.0).abs() < 1e-9, "{sigma} vs {}", var.sqrt());
        assert!((bjd - truth).abs() < 5.0 * sigma + 1e-6, "cycle {cycle}: {bjd} vs {truth} ± {sigma}");
    }
    // The output may not replace an input: the summary is left untouched.
    let before = std::fs::read(&summary).unwrap();
    let o = skyclock()
        .args(["predict-events", "--ephemeris-summary"])
        .arg(&summary)
        .args(["--from", "2026-03-01", "--until", "2026-03-03", SITE, "--output"])
        .arg(&summary)
        .args(STAR)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("residuals.json")
            && String::from_utf8_lossy(&o.stderr).contains("also an input")
    );
    assert_eq!(std::fs::read(&summary).unwrap(), before);
    // The human listing.
    let o = skyclock()
        .args(["predict-events", "--ephemeris-summary"])
        .arg(&summary)
        .args(["--from", "2026-03-01", "--until", "2026-03-03", SITE])
        .args(STAR)
        .output()
        .unwrap();
    assert!(o.status.success());
    let listing = String::from_utf8_lossy(&o.stdout);
    assert!(listing.contains("event(s)") && listing.contains("primary"), "{listing}");
}

/// A target placed at the Sun: the caution reaches stderr and the table.
#[test]
fn command_prints_the_sun_caution() {
    let d = workdir("caution");
    let tdb = Instant::from_jd_two_part(TimeScale::Tdb, 2_461_117.5, 0.0); // 2026-03-18
    let (ra, dec) = sun_ra_dec_deg(&tdb);
    let out = d.join("near-sun.parquet");
    let o = skyclock()
        .args(["predict-events", "--ra", &format!("{ra}"), "--dec", &format!("{dec}"), SITE])
        .args([
            "--epoch-bjd-tdb",
            "2461000.25",
            "--period-d",
            "0.9",
            "--from",
            "2026-03-17",
            "--until",
            "2026-03-19",
            "--output",
        ])
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("cannot be observed safely"), "{err}");
    assert!(String::from_utf8_lossy(&o.stdout).contains("CAUTION"));
    assert!(!err.contains("leap-second table"), "{err}");
    // Far beyond the built-in leap-second table the UTC times carry a warning.
    let o = skyclock()
        .args(["predict-events", "--ra", "100.0", "--dec", "20.0", SITE])
        .args(["--epoch-bjd-tdb", "2461000.25", "--period-d", "0.9", "--from", "2034-01-01", "--until", "2034-01-03"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stderr).contains("leap-second table"), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(std::fs::metadata(&out).unwrap().len() > 0);
}

/// A quadratic ephemeris from the command line: T(E) = T₀ + P·E + ½(dP/dE)·E² (common
/// practice), σ² = σ_T0² + E²σ_P² + E⁴(½σ_dP/dE)² for independent errors.
#[test]
fn command_quadratic_ephemeris_from_values() {
    let (t0, p, dpde) = (2_458_000.4_f64, 1.3_f64, 4e-9_f64);
    let (s0, sp, sd) = (2e-4_f64, 1e-7_f64, 1e-10_f64);
    let o = skyclock()
        .args(["predict-events", SITE])
        .args(STAR)
        .args(["--epoch-bjd-tdb", "2458000.4", "--period-d", "1.3", "--period-change-per-cycle-d", "4e-9"])
        .args(["--epoch-sigma-d", "2e-4", "--period-sigma-d", "1e-7", "--period-change-per-cycle-sigma-d", "1e-10"])
        .args(["--from", "2026-05-01", "--until", "2026-05-08", "--json"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let events = v["events"].as_array().unwrap();
    assert!((5..=6).contains(&events.len()), "{}", events.len());
    for e in events {
        let cycle = e["cycle"].as_f64().unwrap();
        let bjd: f64 = e["bjd_tdb"].as_str().unwrap().parse().unwrap();
        assert!((bjd - (t0 + p * cycle + 0.5 * dpde * cycle * cycle)).abs() < 1e-8, "cycle {cycle}");
        let want = (s0 * s0 + (cycle * sp).powi(2) + (0.5 * sd * cycle * cycle).powi(2)).sqrt();
        assert!((e["sigma_d"].as_f64().unwrap() / want - 1.0).abs() < 1e-9);
    }
}

#[test]
fn bad_inputs_fail_with_clear_messages() {
    let d = workdir("bad");
    let base = |extra: &[&str]| {
        let mut c = skyclock();
        c.arg("predict-events").args(STAR).args(["--epoch-bjd-tdb", "2461000.25"]).args(extra);
        if !extra.iter().any(|a| a.starts_with("--period-d")) {
            c.args(["--period-d", "0.9"]);
        }
        c.output().unwrap()
    };
    let cases: &[(&[&str], &[&str])] = &[
        (&["--from", "2026-03-10", "--until", "2026-03-01", SITE], &["ends", "before it starts"]),
        (
            &["--from", "2026-03-01", "--until", "2026-03-10", "--kinds", "primary,transitt", SITE],
            &["unknown event kind", "transitt"],
        ),
        (&["--from", "2026-03-01", "--until", "2026-03-10"], &["no site given"]),
        (&["--from", "2026-02-30", "--until", "2026-03-10", SITE], &["--from", "2026-02-30"]),
        (&["--from", "2026-03-01", "--until", "2026-03-10", "--sun-caution-deg", "5", SITE], &["cannot be below 15"]),
        (&["--from", "2026-03-01", "--until", "2026-03-10", "--min-target-altitude-deg", "95", SITE], &["-90..90"]),
        (
            &["--from", "2026-03-01", "--until", "2027-03-10", "--period-d", "0.0001", SITE],
            &["more than the limit", "narrow the date range"],
        ),
        (&["--from", "2026-03-01", "--until", "2026-03-10", "--period-d=-2", SITE], &["period must be a positive"]),
    ];
    for (args, want) in cases {
        let o = base(args);
        assert_eq!(o.status.code(), Some(1), "{args:?}");
        let err = String::from_utf8_lossy(&o.stderr);
        for w in *want {
            assert!(err.contains(w), "{args:?}: {err}");
        }
    }
    // A missing ephemeris.
    let o = skyclock()
        .args(["predict-events", "--from", "2026-03-01", "--until", "2026-03-10", SITE])
        .args(STAR)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no ephemeris given"));
    // A summary that is not one.
    let bogus = d.join("bogus.json");
    std::fs::write(&bogus, "{\"hello\": 1}").unwrap();
    let o = skyclock()
        .args(["predict-events", "--ephemeris-summary"])
        .arg(&bogus)
        .args(["--from", "2026-03-01", "--until", "2026-03-10", SITE])
        .args(STAR)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("bogus.json") && err.contains("reference_ephemeris"), "{err}");
    // Help carries the worked example.
    let o = skyclock().args(["predict-events", "--help"]).output().unwrap();
    let help = String::from_utf8_lossy(&o.stdout);
    assert!(help.contains("Example (invented star and site)") && help.contains("--event-duration-hours"));
}

/// Predictions from a light-time O–C model (invented third body): the predicted times equal
/// the O–C model evaluated at those cycles (`oc::models::evaluate`, the fitted model itself),
/// and the propagated σ agrees with the spread of predictions over 20 000 seeded draws from
/// the parameter covariance (independent Monte-Carlo, Cholesky factor; 3 % tolerance).
#[test]
fn light_time_models_are_extrapolated_with_their_covariance() {
    use skyclock::oc::models::evaluate;
    let kind = ModelKind::QuadraticLightTime;
    let reference = skyclock::time::Instant::from_jd_two_part(skyclock::time::TimeScale::Tdb, 2_459_000.5, -0.15432110);
    let p_ref = 0.837_123_45;
    let params = [2e-5, 3e-8, 4e-11, 0.0025, 3_300.0, -0.28, 0.49, 1.0];
    // An invented, positive-definite covariance: diagonal σ² with a few correlations.
    let sig = [4e-5, 2e-9, 3e-12, 5e-5, 12.0, 0.02, 0.02, 0.03];
    let n = 8;
    let mut cov = vec![0.0; n * n];
    for i in 0..n {
        cov[i * n + i] = sig[i] * sig[i];
    }
    for &(i, j, r) in &[(1usize, 2usize, -0.6), (3, 4, 0.4), (4, 7, -0.5), (0, 3, 0.3)] {
        cov[i * n + j] = r * sig[i] * sig[j];
        cov[j * n + i] = cov[i * n + j];
    }
    let estimates =
        Estimates::new(kind.parameters(), params.to_vec(), (0..n).map(|i| cov[i * n..(i + 1) * n].to_vec()).collect())
            .unwrap();
    let e = FittedEphemeris::new(
        ReferenceEphemeris { epoch: reference, period_d: p_ref, period_sigma_d: 0.0 },
        kind,
        estimates,
    )
    .unwrap();
    // Cholesky factor of the covariance for the Monte-Carlo draws.
    let mut l = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..=i {
            let s: f64 = (0..j).map(|k| l[i * n + k] * l[j * n + k]).sum();
            l[i * n + j] = if i == j { (cov[i * n + i] - s).sqrt() } else { (cov[i * n + j] - s) / l[j * n + j] };
        }
    }
    let mut rng = skyclock::fit::SeededRng::new(77);
    let draws: Vec<[f64; 8]> = (0..20_000)
        .map(|_| {
            let z: Vec<f64> = (0..n).map(|_| rng.normal()).collect();
            let mut p = params;
            for i in 0..n {
                p[i] += (0..=i).map(|k| l[i * n + k] * z[k]).sum::<f64>();
            }
            p
        })
        .collect();
    for cycle in [2_800.0, 3_000.5, 4_200.0] {
        let model_at = |p: &[f64]| {
            // O–C model: T = T_ref + P_ref E + (O − C)(E, t), t = T − T_ref (the time the
            // event is seen), solved here by 20 fixed-point steps.
            let mut t_d = p_ref * cycle;
            for _ in 0..20 {
                t_d = p_ref * cycle + evaluate(kind, p, cycle, t_d);
            }
            t_d
        };
        let predicted_d = e.time_at(cycle).seconds_since(&reference) / 86_400.0;
        assert!(
            (predicted_d - model_at(&params)).abs() < 1e-9,
            "cycle {cycle}: {predicted_d} vs {}",
            model_at(&params)
        );
        let values: Vec<f64> = draws.iter().map(|p| model_at(p)).collect();
        let mean = values.iter().sum::<f64>() / values.len() as f64;
        let sd = (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (values.len() - 1) as f64).sqrt();
        let s = e.sigma_d(cycle);
        assert!((s / sd - 1.0).abs() < 0.03, "cycle {cycle}: propagated σ {s} vs Monte-Carlo {sd}");
        // The cycle search inverts the light-time ephemeris.
        assert!((e.cycle_at(&e.time_at(cycle)).unwrap() - cycle).abs() < 1e-9);
    }
}

/// "When can I next observe it?" gives an answer from any start date: for the demo's
/// invented target and site (datasets/kx_inventa_sites.toml), from the first of each month
/// of 2027 the search finds observable minima within a year, the window it returns holds
/// them, and every window it passed over holds none (checked again window by window).
#[test]
fn the_next_observable_window_is_found_from_any_date() {
    use skyclock::predict::{ForecastRequest, first_observable_window, forecast};
    let description = skyclock::config::read_description(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/datasets/kx_inventa_sites.toml"
    )))
    .unwrap();
    let site = description.sites.get("Ridge Hollow Observatory").unwrap().clone();
    let source = description.source.clone().unwrap();
    let conv = converter();
    let corrector =
        BarycentricCorrector::new(embedded(), conv.clone(), EarthOrientation::Ignored, source, DelayOptions::default());
    let sky = SkyGeometry::new(embedded(), conv.clone(), EarthOrientation::Ignored);
    let eph =
        FittedEphemeris::linear(Instant::from_jd_two_part(TimeScale::Tdb, 2_459_000.5, -0.154), 0.8371234, 1e-4, 1e-7)
            .unwrap();
    let kinds = [EventKind::Primary, EventKind::Secondary];
    let mut moved = 0;
    for month in 1..=12 {
        let start =
            parse_time(&format!("2027-{month:02}-01"), TimeFormat::Iso, TimeScale::Utc, conv.leap_seconds()).unwrap();
        let request = ForecastRequest {
            ephemeris: &eph,
            ephemeris_origin: "test".into(),
            kinds: &kinds,
            start,
            end: start,
            site: &site,
            options: PredictionOptions { event_duration_d: Some(2.5 / 24.0), ..Default::default() },
            only_observable: true,
        };
        let (found, passed) = first_observable_window(&request, 30.0, 13, &corrector, &sky).unwrap();
        assert!(found.fully_observable() > 0, "2027-{month:02}: nothing observable within a year");
        assert!(found.events.iter().all(|e| e.fully_observable()));
        for k in 0..passed {
            let s = start.add_seconds(k as f64 * 30.0 * 86_400.0);
            let r = forecast(
                &ForecastRequest { start: s, end: s.add_seconds(30.0 * 86_400.0), ..request.clone() },
                &corrector,
                &sky,
            )
            .unwrap();
            assert_eq!(r.fully_observable(), 0, "2027-{month:02}: window {k} was passed over but holds events");
        }
        moved += (passed > 0) as usize;
    }
    // The target (RA 5h) is behind the Sun in northern summer: some start dates must move on.
    assert!(moved >= 2, "only {moved} start dates needed a later window");
}
