//! Pulse profiles from photon events: folding with a timing model, the binned profile with
//! Poisson errors, and smooth templates (a Fourier series from the photons' trigonometric
//! moments, or a sum of wrapped Gaussian components fitted to those moments).
//!
//! Phases are in cycles. A template is a probability density in phase, ∫₀¹ f(φ) dφ = 1:
//! f(φ) = 1 + Σₖ [aₖ cos 2πkφ + bₖ sin 2πkφ], k = 1..n.
//!
//! Photon weights wⱼ ∈ [0, 1] are read as probabilities that photon j comes from the pulsar
//! (Kerr 2011, ApJ 732, 38): photon j has density wⱼ f(φ) + (1 − wⱼ). Then
//! E[Σⱼ wⱼ cos 2πkφⱼ] = (aₖ/2) Σⱼ wⱼ², so âₖ = 2 Σⱼ wⱼ cos 2πkφⱼ / Σⱼ wⱼ² (and b̂ₖ with sin)
//! is an unbiased estimate of the pulsar's own profile; for unit weights it is the empirical
//! Fourier coefficient 2⟨cos 2πkφ⟩ of the Z²ₙ statistic (Buccheri et al. 1983, A&A 128, 245),
//! and Z²ₙ = Σₖ (âₖ² + b̂ₖ²)·Σw²/2.

use crate::constants::SECONDS_PER_DAY;
use std::f64::consts::TAU;

use super::PulsarError;
use super::model::{ArrivalTime, TimingModel};
use super::statistics::HTest;
use crate::fit::{LevenbergOptions, LsqModel, levenberg_marquardt};

/// Rotational phase (cycles, fractional part in [0, 1)) of each event under a timing model.
///
/// Given: `times_s`, barycentric (TDB) event times in seconds after the model's epoch, sorted
/// and finite; `valid_for_s`, the half-width of the interval around the epoch where the
/// model is trusted (a Taylor spin model drifts away from it); `instrument`, the instrument
/// name for the model's instrument delays. Returned: phases φ(tⱼ) − ⌊φ(tⱼ)⌋ including the
/// model's phase offset and binary delays (X-ray/γ-ray events: no dispersion).
/// Accuracy: ~1e-16·|φ| cycles (3e-6 cycle for 300 Hz at 1e8 s). Errors name the event
/// (1-based, the table row) and the fault. Source: common practice.
pub fn fold_events(
    model: &TimingModel,
    times_s: &[f64],
    valid_for_s: f64,
    instrument: &str,
) -> Result<Vec<f64>, PulsarError> {
    model.validate()?;
    model.require_no_position_offset()?;
    check_event_times(times_s, valid_for_s)?;
    Ok(times_s.iter().map(|&t| event_phase_cycles(model, t, instrument).rem_euclid(1.0)).collect())
}

/// Pulse phase (cycles, whole turns included) of one event at `t_s` after the epoch.
pub fn event_phase_cycles(model: &TimingModel, t_s: f64, instrument: &str) -> f64 {
    model.phase_cycles(&ArrivalTime {
        t_s,
        error_s: 1.0,
        freq_mhz: None,
        instrument: instrument.to_string(),
        observer: None,
    })
}

/// Checks event times: at least one, finite, sorted (non-decreasing) and inside
/// ±`valid_for_s` of the epoch. Errors name the event (1-based row) and what would be accepted.
pub fn check_event_times(times_s: &[f64], valid_for_s: f64) -> Result<(), PulsarError> {
    if times_s.is_empty() {
        return Err(PulsarError::Input("no events: a pulse profile needs at least one photon".into()));
    }
    for (i, &t) in times_s.iter().enumerate() {
        if !t.is_finite() {
            return Err(PulsarError::Input(format!(
                "event {} (row {}) has time {t}; finite times are required",
                i + 1,
                i + 1
            )));
        }
        if t.abs() > valid_for_s {
            return Err(PulsarError::Input(format!(
                "event {} (row {}) lies {:.1} days from the model epoch, outside the model's validity of ±{:.1} days; use a model with an epoch nearer the data or widen the validity",
                i + 1,
                i + 1,
                t / SECONDS_PER_DAY,
                valid_for_s / SECONDS_PER_DAY
            )));
        }
        if i > 0 && t < times_s[i - 1] {
            return Err(PulsarError::Input(format!(
                "event {} (row {}) is {:.9} s earlier than the event before it: the events must be sorted by time",
                i + 1,
                i + 1,
                times_s[i - 1] - t
            )));
        }
    }
    Ok(())
}

/// Events whose time equals the previous event's: (how many, first such event 1-based).
/// Detectors with coarse time resolution record several photons in one tick, so repeats
/// are allowed; many of them may also mean a table with duplicated rows.
pub fn repeated_times(times_s: &[f64]) -> (usize, Option<usize>) {
    let mut count = 0;
    let mut first = None;
    for i in 1..times_s.len() {
        if times_s[i] == times_s[i - 1] {
            count += 1;
            first.get_or_insert(i + 1);
        }
    }
    (count, first)
}

/// Checks weights: one per photon, each in [0, 1]. Errors name the photon (1-based).
pub fn check_weights(n: usize, weights: Option<&[f64]>) -> Result<(), PulsarError> {
    if let Some(w) = weights {
        if w.len() != n {
            return Err(PulsarError::Input(format!("{} weights for {n} photons; give one weight per photon", w.len())));
        }
        if let Some((i, v)) = w.iter().enumerate().find(|(_, v)| !(v.is_finite() && (0.0..=1.0).contains(*v))) {
            return Err(PulsarError::Input(format!(
                "weight of photon {} (row {}) is {v}; weights are probabilities in [0, 1]",
                i + 1,
                i + 1
            )));
        }
        if w.iter().all(|v| *v == 0.0) {
            return Err(PulsarError::Input("all photon weights are zero".into()));
        }
    }
    Ok(())
}

/// A binned pulse profile.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BinnedProfile {
    /// Bin centres, cycles.
    pub phase_center_cycles: Vec<f64>,
    /// Weighted counts Σ wⱼ per bin (plain counts without weights).
    pub counts: Vec<f64>,
    /// 1-σ Poisson error per bin, √(Σ wⱼ²) over the bin's photons.
    pub count_errors: Vec<f64>,
    /// Counts as a density in phase, counts·bins/Σw (1 = the mean level).
    pub relative_intensity: Vec<f64>,
    /// 1-σ error of `relative_intensity`.
    pub relative_intensity_errors: Vec<f64>,
    /// Σ w over all photons.
    pub total_weight: f64,
    /// Σ w² over all photons.
    pub sum_weights_squared: f64,
}

impl BinnedProfile {
    /// The relative intensity a template predicts for this profile at `phase_cycles`:
    /// with probability weights the weighted counts dilute the pulsar's profile f by the
    /// background, E = 1 + (Σw²/Σw)(f − 1) (from the mixture model of the module notes);
    /// without weights it is f itself.
    pub fn expected_relative_intensity(&self, template: &PulseTemplate, phase_cycles: f64) -> f64 {
        1.0 + self.sum_weights_squared / self.total_weight * template.pulsed(phase_cycles, 0)
    }
}

/// Bins phases into `bins` equal bins on [0, 1).
///
/// Given: phases (cycles), optional weights in [0, 1], bins ≥ 2. Returned: weighted counts,
/// their Poisson errors √Σw² (common practice; exact for unit weights: √n) and the same as a
/// density in phase. An empty bin has error 0.
pub fn binned_profile(
    phase_cycles: &[f64],
    weights: Option<&[f64]>,
    bins: usize,
) -> Result<BinnedProfile, PulsarError> {
    if bins < 2 {
        return Err(PulsarError::Input(format!("a binned profile needs at least 2 phase bins, got {bins}")));
    }
    if phase_cycles.is_empty() {
        return Err(PulsarError::Input("no photons to bin".into()));
    }
    check_weights(phase_cycles.len(), weights)?;
    let mut counts = vec![0.0; bins];
    let mut w2 = vec![0.0; bins];
    for (j, &p) in phase_cycles.iter().enumerate() {
        let w = weights.map_or(1.0, |w| w[j]);
        let b = ((p.rem_euclid(1.0) * bins as f64) as usize).min(bins - 1);
        counts[b] += w;
        w2[b] += w * w;
    }
    let total: f64 = counts.iter().sum();
    let scale = bins as f64 / total;
    let count_errors: Vec<f64> = w2.iter().map(|v| v.sqrt()).collect();
    Ok(BinnedProfile {
        phase_center_cycles: (0..bins).map(|i| (i as f64 + 0.5) / bins as f64).collect(),
        relative_intensity: counts.iter().map(|c| c * scale).collect(),
        relative_intensity_errors: count_errors.iter().map(|e| e * scale).collect(),
        counts,
        count_errors,
        total_weight: total,
        sum_weights_squared: w2.iter().sum(),
    })
}

/// One wrapped Gaussian pulse component.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GaussianComponent {
    /// Fraction of the photons in this component (its integral over one cycle).
    pub fraction: f64,
    /// Phase of the peak, cycles.
    pub center_cycles: f64,
    /// Standard deviation, cycles.
    pub width_cycles: f64,
}

impl GaussianComponent {
    /// Fourier coefficients (aₖ, bₖ) of the component as part of a density:
    /// aₖ = 2A e^{−2π²k²σ²} cos 2πkμ, bₖ = 2A e^{−2π²k²σ²} sin 2πkμ (the characteristic
    /// function of the wrapped normal distribution; Mardia & Jupp 2000, §3.5.7 — from memory).
    pub fn coefficients(&self, k: usize) -> (f64, f64) {
        let kf = k as f64;
        let damp = 2.0 * self.fraction * (-0.5 * (TAU * kf * self.width_cycles).powi(2)).exp();
        let (s, c) = (TAU * kf * self.center_cycles).sin_cos();
        (damp * c, damp * s)
    }
}

/// A smooth pulse template: a probability density in phase given by its Fourier series.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PulseTemplate {
    /// What the template is (`fourier` or `gaussian`) and how it was made.
    pub kind: String,
    /// aₖ, k = 1..n (dimensionless).
    pub cos_coefficients: Vec<f64>,
    /// bₖ, k = 1..n.
    pub sin_coefficients: Vec<f64>,
    /// 1-σ errors of aₖ (from the photons; empty for a template given by hand).
    #[serde(default)]
    pub cos_errors: Vec<f64>,
    /// 1-σ errors of bₖ.
    #[serde(default)]
    pub sin_errors: Vec<f64>,
    /// Gaussian components, when the template is a sum of them (the coefficients are then
    /// theirs, up to `cos_coefficients.len()` harmonics).
    #[serde(default)]
    pub gaussian_components: Vec<GaussianComponent>,
    /// Photons used.
    #[serde(default)]
    pub photons: usize,
    /// Σ w² of those photons (= photons without weights).
    #[serde(default)]
    pub sum_weights_squared: f64,
}

impl PulseTemplate {
    /// A template from coefficients given by hand (e.g. an invented profile in a test).
    pub fn from_coefficients(
        cos_coefficients: Vec<f64>,
        sin_coefficients: Vec<f64>,
    ) -> Result<PulseTemplate, PulsarError> {
        let t = PulseTemplate {
            kind: "fourier".into(),
            cos_coefficients,
            sin_coefficients,
            cos_errors: vec![],
            sin_errors: vec![],
            gaussian_components: vec![],
            photons: 0,
            sum_weights_squared: 0.0,
        };
        t.validate()?;
        Ok(t)
    }

    /// Checks lengths and finiteness; at least one harmonic.
    pub fn validate(&self) -> Result<(), PulsarError> {
        let n = self.cos_coefficients.len();
        if n == 0 || self.sin_coefficients.len() != n {
            return Err(PulsarError::Input(format!(
                "a template needs n ≥ 1 cosine and n sine coefficients; got {} and {}",
                n,
                self.sin_coefficients.len()
            )));
        }
        if self.cos_coefficients.iter().chain(&self.sin_coefficients).any(|v| !v.is_finite()) {
            return Err(PulsarError::Input("template coefficients must be finite".into()));
        }
        if self.cos_coefficients.iter().zip(&self.sin_coefficients).all(|(a, b)| *a == 0.0 && *b == 0.0) {
            return Err(PulsarError::Input(
                "the template is flat (all coefficients zero): it has no pulse to align".into(),
            ));
        }
        Ok(())
    }

    /// Number of harmonics n.
    pub fn harmonics(&self) -> usize {
        self.cos_coefficients.len()
    }

    /// Density f(φ) at phase φ (cycles); ∫₀¹ f = 1. A noisy estimate can dip below 0.
    pub fn density(&self, phase_cycles: f64) -> f64 {
        1.0 + self.pulsed(phase_cycles, 0)
    }

    /// The pulsed part h(φ) = f(φ) − 1 and its derivatives: `order` 0, 1, 2 gives h, dh/dφ,
    /// d²h/dφ² (per cycle).
    pub fn pulsed(&self, phase_cycles: f64, order: u32) -> f64 {
        let (s1, c1) = (TAU * phase_cycles.rem_euclid(1.0)).sin_cos();
        let (mut ck, mut sk) = (c1, s1);
        let mut sum = 0.0;
        for k in 0..self.harmonics() {
            let (a, b) = (self.cos_coefficients[k], self.sin_coefficients[k]);
            let w = TAU * (k + 1) as f64;
            sum += match order {
                0 => a * ck + b * sk,
                1 => w * (-a * sk + b * ck),
                _ => -w * w * (a * ck + b * sk),
            };
            let next = ck * c1 - sk * s1;
            sk = sk * c1 + ck * s1;
            ck = next;
        }
        sum
    }

    /// Phase of the template's maximum, cycles in [0, 1) (grid of 64·n points, then golden
    /// section to 1e-10 cycle).
    pub fn peak_phase_cycles(&self) -> f64 {
        let m = 64 * self.harmonics();
        let best = (0..m)
            .map(|i| i as f64 / m as f64)
            .max_by(|a, b| self.density(*a).total_cmp(&self.density(*b)))
            .unwrap_or(0.0);
        golden_maximum(|x| self.density(x), best - 1.0 / m as f64, best + 1.0 / m as f64).rem_euclid(1.0)
    }
}

/// Golden-section search for the maximum of a unimodal `f` on [lo, hi].
pub(crate) fn golden_maximum(f: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = hi - g * (hi - lo);
    let mut x2 = lo + g * (hi - lo);
    let (mut f1, mut f2) = (f(x1), f(x2));
    for _ in 0..200 {
        if hi - lo < 1e-12 {
            break;
        }
        if f1 < f2 {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            f2 = f(x2);
        } else {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            f1 = f(x1);
        }
    }
    0.5 * (lo + hi)
}

/// Fourier template from photon phases: the unbiased empirical coefficients
/// âₖ = 2 Σ wⱼ cos 2πkφⱼ / Σ wⱼ², b̂ₖ likewise (see the module notes), with 1-σ errors from
/// the photons themselves, σ²(âₖ) = 4 Σⱼ wⱼ² (cos 2πkφⱼ − wⱼ âₖ/2)² / (Σ wⱼ²)² (for a weak
/// pulse ≈ 2/Σw², the Z²ₙ normalisation).
///
/// Given: phases (cycles), optional weights in [0, 1], harmonics n ≥ 1. Returned: the
/// template. Accuracy: f64 sums; harmonic k is computed by the angle-addition recurrence
/// (error ≲ k·1e-16). Source: Buccheri et al. 1983 (moments); Kerr 2011 (weights).
pub fn fourier_template(
    phase_cycles: &[f64],
    weights: Option<&[f64]>,
    harmonics: usize,
) -> Result<PulseTemplate, PulsarError> {
    if harmonics == 0 {
        return Err(PulsarError::Input("a Fourier template needs at least one harmonic".into()));
    }
    check_weights(phase_cycles.len(), weights)?;
    let (c, s, w2) = super::statistics::trigonometric_moments(phase_cycles, weights, harmonics)?;
    let a: Vec<f64> = c.iter().map(|v| 2.0 * v / w2).collect();
    let b: Vec<f64> = s.iter().map(|v| 2.0 * v / w2).collect();
    let mut va = vec![0.0; harmonics];
    let mut vb = vec![0.0; harmonics];
    for (j, &p) in phase_cycles.iter().enumerate() {
        let w = weights.map_or(1.0, |w| w[j]);
        let (s1, c1) = (TAU * p.rem_euclid(1.0)).sin_cos();
        let (mut ck, mut sk) = (c1, s1);
        for k in 0..harmonics {
            va[k] += w * w * (ck - w * a[k] / 2.0).powi(2);
            vb[k] += w * w * (sk - w * b[k] / 2.0).powi(2);
            let next = ck * c1 - sk * s1;
            sk = sk * c1 + ck * s1;
            ck = next;
        }
    }
    let t = PulseTemplate {
        kind: format!("fourier: {harmonics} harmonics from {} photons", phase_cycles.len()),
        cos_coefficients: a,
        sin_coefficients: b,
        cos_errors: va.iter().map(|v| 2.0 * v.sqrt() / w2).collect(),
        sin_errors: vb.iter().map(|v| 2.0 * v.sqrt() / w2).collect(),
        gaussian_components: vec![],
        photons: phase_cycles.len(),
        sum_weights_squared: w2,
    };
    Ok(t)
}

/// The Fourier coefficients of a Gaussian-component fit, as a least-squares problem.
struct GaussianFit<'a> {
    components: usize,
    harmonics: usize,
    observed: Vec<f64>,
    weight: Vec<f64>,
    _template: &'a PulseTemplate,
}

impl GaussianFit<'_> {
    fn component(p: &[f64], c: usize) -> GaussianComponent {
        GaussianComponent { fraction: p[3 * c], center_cycles: p[3 * c + 1], width_cycles: p[3 * c + 2] }
    }
}

impl LsqModel for GaussianFit<'_> {
    fn n_params(&self) -> usize {
        3 * self.components
    }
    fn n_obs(&self) -> usize {
        2 * self.harmonics
    }
    fn predict(&self, params: &[f64], out: &mut [f64]) {
        out.iter_mut().for_each(|v| *v = 0.0);
        for c in 0..self.components {
            let g = Self::component(params, c);
            for k in 0..self.harmonics {
                let (a, b) = g.coefficients(k + 1);
                out[2 * k] += a;
                out[2 * k + 1] += b;
            }
        }
    }
    fn jacobian(&self, params: &[f64], jac: &mut [f64]) {
        let p = self.n_params();
        jac.iter_mut().for_each(|v| *v = 0.0);
        for c in 0..self.components {
            let g = Self::component(params, c);
            for k in 0..self.harmonics {
                let kf = (k + 1) as f64;
                let damp = 2.0 * (-0.5 * (TAU * kf * g.width_cycles).powi(2)).exp();
                let (s, co) = (TAU * kf * g.center_cycles).sin_cos();
                let dwidth = -(TAU * kf).powi(2) * g.width_cycles;
                let (ra, rb) = (2 * k * p, (2 * k + 1) * p);
                jac[ra + 3 * c] = damp * co;
                jac[rb + 3 * c] = damp * s;
                jac[ra + 3 * c + 1] = -g.fraction * damp * TAU * kf * s;
                jac[rb + 3 * c + 1] = g.fraction * damp * TAU * kf * co;
                jac[ra + 3 * c + 2] = g.fraction * damp * co * dwidth;
                jac[rb + 3 * c + 2] = g.fraction * damp * s * dwidth;
            }
        }
    }
    fn observed(&self) -> &[f64] {
        &self.observed
    }
    fn weight(&self) -> &[f64] {
        &self.weight
    }
}

/// Template made of `components` wrapped Gaussians, fitted by weighted least squares
/// (Levenberg–Marquardt) to the empirical Fourier coefficients of `empirical` (their errors
/// as weights); components are started one by one at the highest residual peak.
///
/// Given: an empirical template with errors (from [`fourier_template`], n harmonics, 2n >
/// 3·components), 1 ≤ components ≤ 5. Returned: the Gaussian template, its coefficients
/// evaluated to the same n harmonics. Fit parameters are checked: fractions > 0, widths in
/// (0, 0.5) cycle. Source: common practice (wrapped normal: Mardia & Jupp 2000 — from memory).
pub fn gaussian_template(empirical: &PulseTemplate, components: usize) -> Result<PulseTemplate, PulsarError> {
    empirical.validate()?;
    let n = empirical.harmonics();
    if !(1..=5).contains(&components) {
        return Err(PulsarError::Input(format!("{components} Gaussian components: use 1 to 5")));
    }
    if 2 * n <= 3 * components || empirical.cos_errors.len() != n || empirical.sin_errors.len() != n {
        return Err(PulsarError::Input(format!(
            "{components} Gaussian components need an empirical template with errors and more than {} harmonics; it has {n}",
            3 * components / 2
        )));
    }
    let mut observed = Vec::with_capacity(2 * n);
    let mut weight = Vec::with_capacity(2 * n);
    for k in 0..n {
        observed.push(empirical.cos_coefficients[k]);
        observed.push(empirical.sin_coefficients[k]);
        weight.push(1.0 / empirical.cos_errors[k].max(1e-12).powi(2));
        weight.push(1.0 / empirical.sin_errors[k].max(1e-12).powi(2));
    }
    let mut params: Vec<f64> = vec![];
    let options = LevenbergOptions::default();
    let mut last = None;
    for c in 1..=components {
        // start the next component at the peak of the residual profile
        let mut residual = empirical.clone();
        for j in 0..c - 1 {
            let g = GaussianFit::component(&params, j);
            for k in 0..n {
                let (a, b) = g.coefficients(k + 1);
                residual.cos_coefficients[k] -= a;
                residual.sin_coefficients[k] -= b;
            }
        }
        let centre = residual.peak_phase_cycles();
        let height = residual.density(centre) - 1.0;
        let width = 0.03_f64.max(0.5 / n as f64);
        let fraction = (height.max(0.05) * width * TAU.sqrt()).min(0.9);
        params.extend([fraction, centre, width]);
        let problem = GaussianFit {
            components: c,
            harmonics: n,
            observed: observed.clone(),
            weight: weight.clone(),
            _template: empirical,
        };
        let fit = levenberg_marquardt(&problem, &params, &options)
            .map_err(|e| PulsarError::Fit(format!("Gaussian template with {c} components: {e}")))?;
        params = fit.params.clone();
        last = Some(fit);
    }
    let comps: Vec<GaussianComponent> = (0..components)
        .map(|c| {
            let mut g = GaussianFit::component(&params, c);
            g.width_cycles = g.width_cycles.abs();
            g.center_cycles = g.center_cycles.rem_euclid(1.0);
            g
        })
        .collect();
    for (i, g) in comps.iter().enumerate() {
        if !(g.fraction > 0.0 && g.width_cycles > 0.0 && g.width_cycles < 0.5) {
            return Err(PulsarError::Fit(format!(
                "Gaussian component {} ended with fraction {:.3} and width {:.3} cycle, not a pulse; use fewer components or a Fourier template",
                i + 1,
                g.fraction,
                g.width_cycles
            )));
        }
    }
    let fit = last.ok_or_else(|| PulsarError::Fit("no component fitted".into()))?;
    let mut a = vec![0.0; n];
    let mut b = vec![0.0; n];
    for g in &comps {
        for k in 0..n {
            let (ak, bk) = g.coefficients(k + 1);
            a[k] += ak;
            b[k] += bk;
        }
    }
    Ok(PulseTemplate {
        kind: format!(
            "gaussian: {components} wrapped Gaussian components fitted to {n} harmonics (χ² = {:.2} for {} degrees of freedom)",
            fit.chi2, fit.dof
        ),
        cos_coefficients: a,
        sin_coefficients: b,
        cos_errors: vec![],
        sin_errors: vec![],
        gaussian_components: comps,
        photons: empirical.photons,
        sum_weights_squared: empirical.sum_weights_squared,
    })
}

/// What `pulse_profile` makes: bins, template and where the model applies.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ProfileRequest {
    /// Phase bins of the profile (≥ 2).
    pub bins: usize,
    /// Harmonics n of the Fourier template (≥ 1).
    pub harmonics: usize,
    /// Make the template from this many wrapped Gaussian components instead (1..=5).
    pub gaussian_components: Option<usize>,
    /// Half-width, s, of the interval around the model epoch where the model is trusted.
    pub valid_for_s: f64,
    /// Instrument name for the model's instrument delays.
    pub instrument: String,
}

/// A folded pulse profile with its template and periodicity tests.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PulseProfile {
    /// Events folded.
    pub events: usize,
    /// Phase bins.
    pub bins: usize,
    /// Harmonics of the Fourier template.
    pub harmonics: usize,
    /// Σ w over all photons (the count without weights).
    pub total_weight: f64,
    /// H-test of the folded phases.
    pub h_test: HTest,
    /// Z²ₙ of the folded phases with n = `harmonics`.
    pub z2_of_template_harmonics: f64,
    /// Kind of the template ("fourier" or Gaussian components), as in `template.kind`.
    pub template_kind: String,
    /// Phase of the template's maximum, cycles in [0, 1).
    pub template_peak_phase_cycles: f64,
    /// The binned profile.
    pub profile: BinnedProfile,
    /// The template's prediction for each bin of `profile` (relative intensity, diluted by
    /// the background when weighted; see [`BinnedProfile::expected_relative_intensity`]).
    pub template_density: Vec<f64>,
    /// The template that `event_arrival_times` matches.
    pub template: PulseTemplate,
    /// The empirical Fourier coefficients of the folded phases (with errors).
    pub empirical_fourier: PulseTemplate,
}

/// Fewest photons [`pulse_profile`] accepts. Common practice: with a handful of photons the
/// H-test's calibration and a Fourier template of even one harmonic are meaningless.
pub const MIN_PROFILE_PHOTONS: usize = 10;

/// Folds barycentric event times with a timing model and makes the binned profile, the
/// template (Fourier, or Gaussian components fitted to it) and the H and Z²ₙ tests.
///
/// Given: the model, event times in seconds after its epoch (TDB, barycentric, sorted),
/// optional weights in [0, 1], the request. Errors: as [`fold_events`], [`binned_profile`],
/// [`fourier_template`] and [`gaussian_template`], naming the event or photon (1-based);
/// fewer than [`MIN_PROFILE_PHOTONS`] photons are refused.
pub fn pulse_profile(
    model: &TimingModel,
    times_s: &[f64],
    weights: Option<&[f64]>,
    request: &ProfileRequest,
) -> Result<PulseProfile, PulsarError> {
    if times_s.len() < MIN_PROFILE_PHOTONS {
        return Err(PulsarError::Input(format!(
            "{} photon(s): a pulse profile, template and H-test need at least {MIN_PROFILE_PHOTONS} photons",
            times_s.len()
        )));
    }
    let phases = fold_events(model, times_s, request.valid_for_s, &request.instrument)?;
    let profile = binned_profile(&phases, weights, request.bins)?;
    let empirical = fourier_template(&phases, weights, request.harmonics)?;
    let template = match request.gaussian_components {
        Some(c) => gaussian_template(&empirical, c)?,
        None => empirical.clone(),
    };
    let h_test = super::statistics::h_test(&phases, weights)?;
    let z2 = super::statistics::z2n(&phases, weights, request.harmonics)?;
    let template_density =
        profile.phase_center_cycles.iter().map(|x| profile.expected_relative_intensity(&template, *x)).collect();
    Ok(PulseProfile {
        events: phases.len(),
        bins: request.bins,
        harmonics: request.harmonics,
        total_weight: profile.total_weight,
        h_test,
        z2_of_template_harmonics: z2,
        template_kind: template.kind.clone(),
        template_peak_phase_cycles: template.peak_phase_cycles(),
        profile,
        template_density,
        template,
        empirical_fourier: empirical,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn density_integrates_to_one_and_derivatives_match() {
        let t = PulseTemplate::from_coefficients(vec![0.8, -0.3], vec![0.2, 0.4]).unwrap();
        let m = 1000;
        let integral: f64 = (0..m).map(|i| t.density((i as f64 + 0.5) / m as f64)).sum::<f64>() / m as f64;
        assert!((integral - 1.0).abs() < 1e-12);
        let (x, h) = (0.37, 1e-5);
        let d1 = (t.pulsed(x + h, 0) - t.pulsed(x - h, 0)) / (2.0 * h);
        let d2 = (t.pulsed(x + h, 1) - t.pulsed(x - h, 1)) / (2.0 * h);
        assert!((d1 - t.pulsed(x, 1)).abs() < 1e-6 * d1.abs().max(1.0));
        assert!((d2 - t.pulsed(x, 2)).abs() < 1e-5 * d2.abs().max(1.0));
    }

    #[test]
    fn template_power_is_the_z2_statistic() {
        // Z²ₙ = Σₖ (âₖ² + b̂ₖ²)·Σw²/2 (module notes; Buccheri et al. 1983, Kerr 2011)
        let p: Vec<f64> = (0..300).map(|i| ((i * i) as f64 * 0.0137).fract()).collect();
        let w: Vec<f64> = (0..300).map(|i| 0.2 + 0.7 * ((i as f64 * 0.31).sin().abs())).collect();
        let t = fourier_template(&p, Some(&w), 3).unwrap();
        let power: f64 = t.cos_coefficients.iter().zip(&t.sin_coefficients).map(|(a, b)| a * a + b * b).sum::<f64>()
            * t.sum_weights_squared
            / 2.0;
        let z2 = crate::pulsar::statistics::z2n(&p, Some(&w), 3).unwrap();
        assert!((power - z2).abs() < 1e-9 * z2.max(1.0), "{power} {z2}");
    }

    #[test]
    fn binned_errors_are_root_sum_of_squared_weights() {
        let p = [0.05, 0.06, 0.55, 0.95];
        let w = [0.5, 0.5, 1.0, 0.2];
        let b = binned_profile(&p, Some(&w), 2).unwrap();
        assert!((b.counts[0] - 1.0).abs() < 1e-15 && (b.counts[1] - 1.2).abs() < 1e-15);
        assert!((b.count_errors[0] - 0.5f64.sqrt()).abs() < 1e-15);
        assert!((b.count_errors[1] - 1.04f64.sqrt()).abs() < 1e-15);
        assert!(binned_profile(&p, Some(&[0.5, 2.0, 1.0, 1.0]), 2).unwrap_err().to_string().contains("photon 2"));
    }

    #[test]
    fn gaussian_coefficients_are_the_wrapped_normal_transform() {
        // numeric Fourier transform of a wrapped Gaussian density (sum over 7 wraps)
        let g = GaussianComponent { fraction: 0.4, center_cycles: 0.3, width_cycles: 0.05 };
        let m = 4000;
        let (mut a, mut b) = (0.0, 0.0);
        for i in 0..m {
            let x = (i as f64 + 0.5) / m as f64;
            let dens: f64 = (-3..=3)
                .map(|w| {
                    let d = x - g.center_cycles + w as f64;
                    g.fraction * (-0.5 * (d / g.width_cycles).powi(2)).exp() / (g.width_cycles * TAU.sqrt())
                })
                .sum();
            a += 2.0 * dens * (TAU * 2.0 * x).cos() / m as f64;
            b += 2.0 * dens * (TAU * 2.0 * x).sin() / m as f64;
        }
        let (ea, eb) = g.coefficients(2);
        assert!((a - ea).abs() < 1e-9 && (b - eb).abs() < 1e-9, "{a} {ea} {b} {eb}");
    }
}
