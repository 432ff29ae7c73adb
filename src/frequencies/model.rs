//! Sums of sinusoids with per-band zero points, fitted jointly by nonlinear least squares:
//! y(t) = z_band + Σ_k A_k cos(2π(f_k t − φ_k)). Frequencies in c/d, times in days from the
//! caller's epoch, amplitudes in the units of the values, phases in cycles (φ is the phase
//! at which component k peaks, referred to t = 0).
//! Uncertainties: Montgomery & O'Donoghue (1999), DSSN 13, 28, eqs. (2)–(4):
//! σ_A = √(2/N) σ_N, σ_f = √(6/N) σ_N / (π A T), σ_φ = √(2/N) σ_N / (2π A) (in cycles),
//! with σ_N the (weighted) rms of the residuals and T the baseline.

use crate::fit::{LevenbergOptions, LsqModel, levenberg_marquardt};
use crate::periodogram::turns::cis_turns_many;
use crate::periodogram::{SearchError, Series};
use std::f64::consts::TAU;

/// One sinusoid: A cos(2π(f t − φ)).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sinusoid {
    /// Frequency f, cycles per day.
    pub freq_per_day: f64,
    /// Semi-amplitude A, in the units of the values.
    pub amplitude: f64,
    /// Phase φ at which the sinusoid peaks, cycles, referred to t = 0.
    pub phase_cycles: f64,
}

impl Sinusoid {
    /// Value at time `t_d` (days).
    pub fn value_at(&self, t_d: f64) -> f64 {
        self.amplitude * (TAU * (self.freq_per_day * t_d - self.phase_cycles)).cos()
    }
}

/// A fitted sinusoid with Montgomery & O'Donoghue (1999) uncertainties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FittedSinusoid {
    /// Frequency f, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day: √(6/N) σ_N / (π A T).
    pub freq_err_per_day: f64,
    /// Semi-amplitude A, in the units of the values.
    pub amplitude: f64,
    /// 1σ of the semi-amplitude, in the units of the values: √(2/N) σ_N.
    pub amplitude_err: f64,
    /// Phase φ at which the sinusoid peaks, cycles in [0, 1), referred to t = 0.
    pub phase_cycles: f64,
    /// 1σ of the phase, cycles: √(2/N) σ_N / (2π A).
    pub phase_err_cycles: f64,
}

impl FittedSinusoid {
    /// The sinusoid without uncertainties.
    pub fn sinusoid(&self) -> Sinusoid {
        Sinusoid { freq_per_day: self.freq_per_day, amplitude: self.amplitude, phase_cycles: self.phase_cycles }
    }
    /// Period, days.
    pub fn period_d(&self) -> f64 {
        1.0 / self.freq_per_day
    }
    /// Period uncertainty, days (σ_P = σ_f / f²).
    pub fn period_err_d(&self) -> f64 {
        self.freq_err_per_day / (self.freq_per_day * self.freq_per_day)
    }
}

/// Result of a joint fit of several sinusoids.
#[derive(Debug, Clone, PartialEq)]
pub struct MultiSineFit {
    /// Zero point per band (band index order of the series).
    pub zero_points: Vec<f64>,
    /// The fitted sinusoids, in the order of the starting values.
    pub components: Vec<FittedSinusoid>,
    /// Observed minus model, one per point of the series.
    pub residuals: Vec<f64>,
    /// Weighted rms of the residuals σ_N (units of the values).
    pub residual_rms: f64,
    /// Weighted sum of squared residuals (χ² with uncertainties, value² without).
    pub chi2: f64,
    /// Whether the Levenberg–Marquardt iteration met its convergence test.
    pub converged: bool,
}

/// Replaces the zero points and the (a, b) of every component in `p` by their weighted
/// least-squares values at the frequencies of `p` (the model is linear in them: normal
/// equations of size bands + 2·components, one pass over the points). Levenberg–Marquardt
/// then starts at the best amplitudes and phases for the starting frequencies and only has
/// the frequencies left to move: a few iterations instead of tens when the caller's
/// amplitude or phase is a guess. Leaves `p` unchanged when the normal equations are
/// singular. Source: the separable (variable-projection) structure of the sinusoid model,
/// Golub & Pereyra (1973), SIAM J. Numer. Anal. 10, 413 (used here for the start only).
fn linear_start(model: &Model, p: &mut [f64]) -> Option<f64> {
    let (nb, nc) = (model.n_bands, model.n_comp);
    let q = nb + 2 * nc;
    let mut ata = vec![0.0; q * q];
    let mut atb = vec![0.0; q];
    let syy = if nc == 1 {
        one_sinusoid_normal_equations(model, p[nb], &mut ata, &mut atb)
    } else {
        let mut syy = 0.0;
        let mut row = vec![0.0; q];
        let mut phases = vec![0.0; 2 * nc * PHASE_CHUNK];
        for start in (0..model.t.len()).step_by(PHASE_CHUNK) {
            let len = PHASE_CHUNK.min(model.t.len() - start);
            for (k, pair) in phases.chunks_exact_mut(2 * PHASE_CHUNK).enumerate() {
                let (c, s) = pair.split_at_mut(PHASE_CHUNK);
                cis_turns_many(p[nb + 3 * k], &model.t[start..start + len], c, s);
            }
            for j in 0..len {
                let i = start + j;
                row.iter_mut().for_each(|v| *v = 0.0);
                row[model.band[i]] = 1.0;
                for k in 0..nc {
                    row[nb + 2 * k] = phases[2 * k * PHASE_CHUNK + j];
                    row[nb + 2 * k + 1] = phases[(2 * k + 1) * PHASE_CHUNK + j];
                }
                let (w, y) = (model.w[i], model.y[i]);
                syy += w * y * y;
                for a in 0..q {
                    let wa = w * row[a];
                    if wa == 0.0 {
                        continue;
                    }
                    atb[a] += wa * y;
                    for b in 0..=a {
                        ata[a * q + b] += wa * row[b];
                    }
                }
            }
        }
        syy
    };
    for a in 0..q {
        for b in 0..a {
            ata[b * q + a] = ata[a * q + b];
        }
    }
    let rhs = atb.clone();
    if !crate::fit::small::cholesky_solve_in_place(&mut ata, &mut atb, q) || atb.iter().any(|v| !v.is_finite()) {
        return None;
    }
    p[..nb].copy_from_slice(&atb[..nb]);
    for k in 0..nc {
        p[nb + 3 * k + 1] = atb[nb + 2 * k];
        p[nb + 3 * k + 2] = atb[nb + 2 * k + 1];
    }
    // χ² of the linear solution: Σ w y² − xᵀ(Aᵀ W y)
    Some((syy - atb.iter().zip(&rhs).map(|(x, r)| x * r).sum::<f64>()).max(0.0))
}

/// Points per batch of phases (cos and sin computed together, see [`cis_turns_many`]).
const PHASE_CHUNK: usize = 512;

/// The lower triangle of AᵀWA and AᵀWy of [`linear_start`] for one sinusoid at `freq`
/// (columns: one zero point per band, then cos and sin), accumulated as per-band and
/// joint sums in one pass; returns Σ w y². Same normal equations as the general loop.
fn one_sinusoid_normal_equations(model: &Model, freq: f64, ata: &mut [f64], atb: &mut [f64]) -> f64 {
    let nb = model.n_bands;
    let q = nb + 2;
    let (mut band_w, mut band_c, mut band_s, mut band_y) = (vec![0.0; nb], vec![0.0; nb], vec![0.0; nb], vec![0.0; nb]);
    let (mut scc, mut scs, mut sss, mut syc, mut sys, mut syy) = (0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
    let (mut cos, mut sin) = ([0.0; PHASE_CHUNK], [0.0; PHASE_CHUNK]);
    for start in (0..model.t.len()).step_by(PHASE_CHUNK) {
        let end = (start + PHASE_CHUNK).min(model.t.len());
        let len = end - start;
        cis_turns_many(freq, &model.t[start..end], &mut cos, &mut sin);
        let (w, y) = (&model.w[start..end], &model.y[start..end]);
        for j in 0..len {
            let (wc, ws) = (w[j] * cos[j], w[j] * sin[j]);
            scc += wc * cos[j];
            scs += wc * sin[j];
            sss += ws * sin[j];
            syc += wc * y[j];
            sys += ws * y[j];
            syy += w[j] * y[j] * y[j];
        }
        if nb == 1 {
            for j in 0..len {
                band_w[0] += w[j];
                band_c[0] += w[j] * cos[j];
                band_s[0] += w[j] * sin[j];
                band_y[0] += w[j] * y[j];
            }
        } else {
            for j in 0..len {
                let b = model.band[start + j];
                band_w[b] += w[j];
                band_c[b] += w[j] * cos[j];
                band_s[b] += w[j] * sin[j];
                band_y[b] += w[j] * y[j];
            }
        }
    }
    for b in 0..nb {
        ata[b * q + b] = band_w[b];
        ata[nb * q + b] = band_c[b];
        ata[(nb + 1) * q + b] = band_s[b];
        atb[b] = band_y[b];
    }
    ata[nb * q + nb] = scc;
    ata[(nb + 1) * q + nb] = scs;
    ata[(nb + 1) * q + nb + 1] = sss;
    atb[nb] = syc;
    atb[nb + 1] = sys;
    syy
}

/// For one sinusoid: moves the frequency of `p` to the minimum of the projected χ²(f)
/// (the χ² with the zero points and (a, b) at their least-squares values for each f, see
/// [`linear_start`]) by three rounds of a parabola through f − h, f, f + h, starting from
/// h = 0.05/T (T the baseline) and dividing h by 10 each round; every step is held within
/// 2h and kept only when it lowers χ². Each evaluation is one pass over the points. A weak
/// peak (amplitude small against the noise) is where Gauss–Newton, which drops the
/// residual-curvature term of the Hessian, converges only linearly (tens of passes); the
/// parabola uses the full curvature, so Levenberg–Marquardt starts at the optimum and stops
/// after one or two steps. Source: successive parabolic interpolation (Brent 1973,
/// Algorithms for Minimization without Derivatives, ch. 5) on the variable-projection
/// functional of Golub & Pereyra (1973). Returns χ² at the frequency kept.
fn refine_single_frequency(model: &Model, p: &mut [f64], chi2: f64, baseline_d: f64) -> f64 {
    let nb = model.n_bands;
    if model.n_comp != 1 || !(baseline_d > 0.0) {
        return chi2;
    }
    let eval = |f: f64, from: &[f64]| -> Option<(f64, Vec<f64>)> {
        if !(f > 0.0) {
            return None;
        }
        let mut q = from.to_vec();
        q[nb] = f;
        linear_start(model, &mut q).map(|c| (c, q))
    };
    let mut best = chi2;
    let mut h = 0.05 / baseline_d;
    for _ in 0..3 {
        let f = p[nb];
        let (Some((cm, _)), Some((cp, _))) = (eval(f - h, p), eval(f + h, p)) else { break };
        let curvature = cm + cp - 2.0 * best;
        if !(curvature > 0.0) {
            break;
        }
        let step = (0.5 * h * (cm - cp) / curvature).clamp(-2.0 * h, 2.0 * h);
        if let Some((c, q)) = eval(f + step, p)
            && c < best
        {
            best = c;
            p.copy_from_slice(&q);
        }
        if step.abs() < 1e-3 * h {
            break; // already at the vertex to a thousandth of the spacing
        }
        h *= 0.1;
    }
    best
}

/// Internal parametrisation: [z_0..z_B, (f, a, b) per component], a cos + b sin of
/// 2π f (t − t_mid) (mid-baseline reference keeps f and phase uncorrelated).
struct Model<'a> {
    t: Vec<f64>,
    band: &'a [usize],
    n_bands: usize,
    n_comp: usize,
    y: &'a [f64],
    w: &'a [f64],
}

impl LsqModel for Model<'_> {
    fn n_params(&self) -> usize {
        self.n_bands + 3 * self.n_comp
    }
    fn n_obs(&self) -> usize {
        self.t.len()
    }
    fn predict(&self, p: &[f64], out: &mut [f64]) {
        for (o, &b) in out.iter_mut().zip(self.band) {
            *o = p[b];
        }
        let (mut cos, mut sin) = ([0.0; PHASE_CHUNK], [0.0; PHASE_CHUNK]);
        for start in (0..self.t.len()).step_by(PHASE_CHUNK) {
            let end = (start + PHASE_CHUNK).min(self.t.len());
            for k in 0..self.n_comp {
                let q = &p[self.n_bands + 3 * k..self.n_bands + 3 * k + 3];
                cis_turns_many(q[0], &self.t[start..end], &mut cos, &mut sin);
                for (j, o) in out[start..end].iter_mut().enumerate() {
                    *o += q[1] * cos[j] + q[2] * sin[j];
                }
            }
        }
    }
    fn jacobian(&self, p: &[f64], jac: &mut [f64]) {
        let np = self.n_params();
        for (i, row) in jac.chunks_exact_mut(np).take(self.t.len()).enumerate() {
            row.iter_mut().for_each(|v| *v = 0.0);
            row[self.band[i]] = 1.0;
        }
        let (mut cos, mut sin) = ([0.0; PHASE_CHUNK], [0.0; PHASE_CHUNK]);
        for start in (0..self.t.len()).step_by(PHASE_CHUNK) {
            let end = (start + PHASE_CHUNK).min(self.t.len());
            for k in 0..self.n_comp {
                let q = &p[self.n_bands + 3 * k..self.n_bands + 3 * k + 3];
                cis_turns_many(q[0], &self.t[start..end], &mut cos, &mut sin);
                let col = self.n_bands + 3 * k;
                for (j, i) in (start..end).enumerate() {
                    let row = &mut jac[i * np..(i + 1) * np];
                    let (c, s) = (cos[j], sin[j]);
                    row[col] = TAU * self.t[i] * (-q[1] * s + q[2] * c);
                    row[col + 1] = c;
                    row[col + 2] = s;
                }
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

/// Joint nonlinear least-squares fit of sinusoids with per-band zero points, starting from
/// `start` (frequencies must be > 0 and distinct). Needs more points than 3·k + bands.
/// Accuracy: the least-squares optimum; uncertainties per Montgomery & O'Donoghue (1999).
pub fn fit_sinusoids(series: &Series, start: &[Sinusoid]) -> Result<MultiSineFit, SearchError> {
    let n_bands = series.n_bands();
    let n_par = n_bands + 3 * start.len();
    if series.len() <= n_par {
        return Err(SearchError::TooFewPoints {
            needed: n_par + 1,
            got: series.len(),
            dropped: series.n_dropped,
            reason: "a fit of this many sinusoids",
        });
    }
    for s in start {
        if !(s.freq_per_day.is_finite() && s.freq_per_day > 0.0) {
            return Err(SearchError::InvalidParameter {
                name: "starting frequency (c/d)",
                value: s.freq_per_day,
                expected: "a finite frequency > 0",
            });
        }
    }
    let t_mid = 0.5 * (series.time_d[0] + series.time_d[series.len() - 1]);
    let model = Model {
        t: series.time_d.iter().map(|t| t - t_mid).collect(),
        band: &series.band,
        n_bands,
        n_comp: start.len(),
        y: &series.value,
        w: &series.weight,
    };
    let mut p0 = vec![0.0; n_par];
    let mut sw = vec![0.0; n_bands];
    for i in 0..series.len() {
        p0[series.band[i]] += series.weight[i] * series.value[i];
        sw[series.band[i]] += series.weight[i];
    }
    for b in 0..n_bands {
        p0[b] /= sw[b].max(1e-300);
    }
    for (k, s) in start.iter().enumerate() {
        // phase referred to t_mid: φ' = φ − f t_mid
        let ph = TAU * (s.phase_cycles - s.freq_per_day * t_mid);
        p0[n_bands + 3 * k] = s.freq_per_day;
        p0[n_bands + 3 * k + 1] = s.amplitude * ph.cos();
        p0[n_bands + 3 * k + 2] = s.amplitude * ph.sin();
    }
    let chi2_start =
        linear_start(&model, &mut p0).map(|c| refine_single_frequency(&model, &mut p0, c, series.baseline_d()));
    let dof = (series.len() - n_par) as f64;
    let absolute_tolerance = chi2_start.map_or(0.0, |c| 1e-6 * c / dof);
    let fit = levenberg_marquardt(
        &model,
        &p0,
        &LevenbergOptions { covariance: false, absolute_tolerance, ..LevenbergOptions::default() },
    )?;
    let mut pred = vec![0.0; series.len()];
    model.predict(&fit.params, &mut pred);
    let residuals: Vec<f64> = series.value.iter().zip(&pred).map(|(y, m)| y - m).collect();
    let swt: f64 = series.weight.iter().sum();
    let rms = (residuals.iter().zip(&series.weight).map(|(r, w)| w * r * r).sum::<f64>() / swt).sqrt();
    let n = series.len() as f64;
    let big_t = series.baseline_d();
    let components = (0..start.len())
        .map(|k| {
            let q = &fit.params[n_bands + 3 * k..n_bands + 3 * k + 3];
            let amp = q[1].hypot(q[2]);
            // a cos x + b sin x = A cos(x − θ), θ = atan2(b, a); φ = θ/2π + f t_mid
            let phase = (q[2].atan2(q[1]) / TAU + q[0] * t_mid).rem_euclid(1.0);
            FittedSinusoid {
                freq_per_day: q[0],
                freq_err_per_day: (6.0 / n).sqrt() * rms / (std::f64::consts::PI * amp * big_t),
                amplitude: amp,
                amplitude_err: (2.0 / n).sqrt() * rms,
                phase_cycles: phase,
                phase_err_cycles: (2.0 / n).sqrt() * rms / (TAU * amp),
            }
        })
        .collect();
    Ok(MultiSineFit {
        zero_points: fit.params[..n_bands].to_vec(),
        components,
        residuals,
        residual_rms: rms,
        chi2: fit.chi2,
        converged: fit.converged,
    })
}
