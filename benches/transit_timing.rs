//! Speed of mid-transit timing: 100 transits of 200 points each (invented planet, seeded
//! white noise) timed by `skyclock::transit::time_transits` (analytic Mandel & Agol model,
//! exact limb-darkening derivatives, per-transit fits in parallel, two passes), and in the
//! same run by a straightforward reference: the flux integrated numerically over 200 rings
//! of the disc, every derivative by central differences, one pass, one thread. Issue 16
//! target: well under a second. Run: `cargo bench --bench transit_timing`.

use skyclock::fit::SeededRng;
use skyclock::fit::levenberg::{LevenbergOptions, LsqModel, levenberg_marquardt};
use skyclock::oc::ReferenceEphemeris;
use skyclock::time::{Instant, TimeScale};
use skyclock::transit::{
    QuadraticLimbDarkening, TransitCurve, TransitShape, TransitTimingOptions, TransitTimingRequest, time_transits,
};
use std::f64::consts::{PI, TAU};
use std::time::Instant as Clock;

const PERIOD_D: f64 = 2.85;
const TRANSITS: usize = 100;
const POINTS: usize = 200;

/// Reference model: relative flux by midpoint integration over `RINGS` rings (law of cosines
/// for the occulted arc of each ring), circular orbit.
fn ring_flux(q: &[f64], dt: f64) -> f64 {
    const RINGS: usize = 200;
    let (p, a, b, u1, u2) = (q[0].abs(), q[1], q[2].abs(), q[3], q[4]);
    let phase = TAU * dt / PERIOD_D;
    let cos_i = b / a;
    let z = a * (phase.sin().powi(2) + (cos_i * phase.cos()).powi(2)).sqrt();
    if phase.cos() <= 0.0 || z >= 1.0 + p {
        return 1.0;
    }
    let (mut lost, mut total) = (0.0, 0.0);
    for k in 0..RINGS {
        let r = (k as f64 + 0.5) / RINGS as f64;
        let m = 1.0 - (1.0 - r * r).sqrt();
        let i = 1.0 - u1 * m - u2 * m * m;
        let theta = if r + z <= p {
            PI
        } else if r >= z + p || r <= z - p {
            0.0
        } else {
            ((r * r + z * z - p * p) / (2.0 * r * z)).clamp(-1.0, 1.0).acos()
        };
        lost += i * r * theta;
        total += i * r * PI;
    }
    1.0 - lost / total
}

/// Plain least squares: any model, Jacobian by central differences.
struct Plain<'a> {
    n_params: usize,
    y: &'a [f64],
    w: &'a [f64],
    f: &'a dyn Fn(&[f64], usize) -> f64,
}

impl LsqModel for Plain<'_> {
    fn n_params(&self) -> usize {
        self.n_params
    }
    fn n_obs(&self) -> usize {
        self.y.len()
    }
    fn predict(&self, q: &[f64], out: &mut [f64]) {
        for (i, o) in out.iter_mut().enumerate() {
            *o = (self.f)(q, i);
        }
    }
    fn jacobian(&self, q: &[f64], jac: &mut [f64]) {
        let p = self.n_params;
        for j in 0..p {
            // Steps of 1e-4 (days for the time shift): the ring sum is not smooth on finer scales.
            let h = 1e-4 * q[j].abs().max(1.0);
            let (mut up, mut down) = (q.to_vec(), q.to_vec());
            up[j] += h;
            down[j] -= h;
            for i in 0..self.y.len() {
                jac[i * p + j] = ((self.f)(&up, i) - (self.f)(&down, i)) / (2.0 * h);
            }
        }
    }
    fn observed(&self) -> &[f64] {
        self.y
    }
    fn weight(&self) -> &[f64] {
        self.w
    }
}

fn main() {
    let truth = TransitShape {
        radius_ratio: 0.1,
        scaled_semi_major_axis: 9.0,
        impact_parameter: 0.3,
        limb_darkening: QuadraticLimbDarkening { u1: 0.4, u2: 0.25 },
        eccentricity: 0.0,
        periastron_argument_rad: 0.0,
    };
    let mut rng = SeededRng::new(16);
    let (mut time_d, mut flux) = (Vec::new(), Vec::new());
    let cadence = 0.26 / POINTS as f64;
    for e in 0..TRANSITS {
        let mid = e as f64 * PERIOD_D + 40.0 / 86_400.0 * (e as f64 / 6.0).sin();
        for i in 0..POINTS {
            let t = e as f64 * PERIOD_D - 0.13 + i as f64 * cadence;
            time_d.push(t);
            flux.push(truth.flux(PERIOD_D, t - mid, &[0.0]) + 1e-3 * rng.normal());
        }
    }
    let error = vec![1e-3; time_d.len()];
    let rows: Vec<usize> = (1..=time_d.len()).collect();
    let reference = Instant::from_jd_two_part(TimeScale::Tdb, 2_460_000.5, 0.0);
    let mut start = truth;
    start.radius_ratio = 0.095;
    start.scaled_semi_major_axis = 8.5;
    let request = TransitTimingRequest {
        curve: TransitCurve { reference, time_d: &time_d, flux: &flux, error: Some(&error), input_rows: &rows },
        ephemeris: ReferenceEphemeris { epoch: reference, period_d: PERIOD_D, period_sigma_d: 0.0 },
        start,
        options: TransitTimingOptions { window_half_width_d: Some(0.13), ..TransitTimingOptions::default() },
    };
    let threads = rayon::current_num_threads();
    // Ours, best of three.
    let mut ours = f64::INFINITY;
    let mut report = None;
    for _ in 0..3 {
        let t0 = Clock::now();
        let r = time_transits(&request).expect("timed");
        ours = ours.min(t0.elapsed().as_secs_f64());
        report = Some(r);
    }
    let report = report.unwrap();
    let median_err_s = report.median_error_d * 86_400.0;

    // Reference: folded fit [p, a, b, u1, u2, dt, level], then per transit [dt, c0, c1].
    let t0 = Clock::now();
    let folded_dt: Vec<f64> = time_d.iter().enumerate().map(|(i, t)| t - (i / POINTS) as f64 * PERIOD_D).collect();
    let w: Vec<f64> = error.iter().map(|e| 1.0 / (e * e)).collect();
    let global = |q: &[f64], i: usize| q[6] * ring_flux(q, folded_dt[i] - q[5]);
    let model = Plain { n_params: 7, y: &flux, w: &w, f: &global };
    let opts = LevenbergOptions { max_iterations: 100, relative_tolerance: 1e-10, ..LevenbergOptions::default() };
    let fit = levenberg_marquardt(&model, &[0.095, 8.5, 0.3, 0.4, 0.25, 0.0, 1.0], &opts).expect("reference fit");
    let shape = fit.params.clone();
    let mut ref_sigma = Vec::new();
    for e in 0..TRANSITS {
        let lo = e * POINTS;
        let tau: Vec<f64> = (0..POINTS).map(|i| folded_dt[lo + i]).collect();
        let one = |q: &[f64], i: usize| (q[1] + q[2] * tau[i]) * ring_flux(&shape, tau[i] - q[0]);
        let m = Plain { n_params: 3, y: &flux[lo..lo + POINTS], w: &w[lo..lo + POINTS], f: &one };
        let f = levenberg_marquardt(&m, &[shape[5], 1.0, 0.0], &opts).expect("reference transit fit");
        ref_sigma.push(f.sigma(0) * 86_400.0);
    }
    let reference_s = t0.elapsed().as_secs_f64();
    ref_sigma.sort_by(|a, b| a.total_cmp(b));
    println!("transit timing, {TRANSITS} transits × {POINTS} points, {threads} threads:");
    println!(
        "  time_transits (analytic model, two passes): {ours:.3} s  ({} timed, median σ {median_err_s:.1} s, p = {:.4})",
        report.transits.len(),
        report.shape.radius_ratio.value
    );
    println!(
        "  reference (200-ring numerical model, central differences, one pass, one thread): {reference_s:.3} s  (median σ {:.1} s, p = {:.4})",
        ref_sigma[TRANSITS / 2],
        shape[0]
    );
    println!("  ratio reference / time_transits: {:.1}×", reference_s / ours);
}
