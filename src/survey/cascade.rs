//! The survey cascade: every light curve described by each model in turn — a sinusoid
//! (generalised Lomb–Scargle), a harmonic series at the strongest peaks and at half their
//! frequency, and a box search (transits and eclipses) — the best description chosen by one
//! criterion that counts parameters (the Bayesian information criterion with the error scale
//! profiled, BIC = N ln(χ²/N) + k ln N; Schwarz 1978, Ann. Stat. 6, 461), then a class with
//! its evidence and a false-alarm probability that counts the trials searched.
//!
//! Whether a source is variable at all is decided by the false-alarm probability of the
//! winning model, carried over the number of frequencies (and phases and durations for the
//! box) searched, the three models tried, and the number of sources of the field
//! ([`Classification::field_false_alarm`]); a source above the field level is "constant".

use super::false_alarm::{chi2_tail_even, normal_upper_tail, over_trials};
use crate::fit::weighted_linear_lsq;
use crate::fold::refine::refine_period;
use crate::frequencies::model::{Sinusoid, fit_sinusoids};
use crate::periodogram::bls::{
    BoxDetection, BoxDurations, BoxOptions, box_detection, box_search, plan_box_grid_for, settle_eclipse_period,
};
use crate::periodogram::peaks::local_maxima;
use crate::periodogram::significance::baluev_fap;
use crate::periodogram::{
    Algorithm, FrequencyGrid, GeneralisedLombScargle, MultiBandLombScargle, Periodogram, SearchError, Series, Spectrum,
};
use std::f64::consts::TAU;

/// Relative depth above which a box event is too deep for a planet and taken as an eclipse
/// (5 %: the deepest planetary transits, of giant planets before small stars, reach a few
/// per cent; common practice, from memory).
pub const PLANET_DEPTH_LIMIT: f64 = 0.05;

/// S/N of a secondary dip (away from the primary) above which a box event is an eclipsing
/// binary (common practice in transit vetting: a significant secondary eclipse).
pub const SECONDARY_SNR_LIMIT: f64 = 5.0;

/// Share of the cycle spent dimmer than mid-range below which a one-minimum harmonic light
/// curve is eclipse-shaped (narrow dips between flat maxima): a sinusoid spends 0.5, a
/// pulsator with a sharp rise ≈ 0.5 or more (chosen here).
pub const ECLIPSE_SHAPE_LIMIT: f64 = 0.35;

/// Duty cycles of the cascade's box stage: 1.5 % to 15 % in 7 steps (ratio 1.47, S/N loss
/// ≤ 9 % inside the range) — coarser at the short end than the box method's default
/// ([`crate::periodogram::bls::DEFAULT_DUTY_CYCLES`], 0.5 %): the box grid's length and its
/// phase bins both scale as 1/q_min, so a survey of many sources costs a ninth as much.
/// Transits shorter than 1.5 % of their period lose up to 1 − √(q/0.015) of their S/N (give
/// `--durations-d`, or search them with `--method box`).
pub const CASCADE_DUTY_CYCLES: (f64, f64, usize) = (0.015, 0.15, 7);

/// Options of the cascade.
#[derive(Debug, Clone, PartialEq)]
pub struct CascadeOptions {
    /// Harmonics of the harmonic-series stage at a sinusoid peak (1..=5; the stage also
    /// tries half the frequency with twice as many).
    pub harmonics: usize,
    /// Sinusoid peaks tried by the harmonic stage (1..=10).
    pub candidates: usize,
    /// The box search: durations and whether values are magnitudes.
    pub box_options: BoxOptions,
    /// Highest frequency of the box stage, c/d (default 5: periods ≥ 0.2 d; shorter
    /// periods are left to the sinusoid and harmonic stages).
    pub box_max_freq_per_day: f64,
    /// Oversampling of the box stage's screening grid (edge drift over the baseline between
    /// neighbouring trial frequencies ≤ shortest duration / this; default 1: the candidates
    /// are then refined on fine local grids, [`crate::periodogram::bls::box_detection`]).
    pub box_oversampling: f64,
    /// Phase bins per shortest duration of the box stage's screening pass over the whole
    /// grid (default [`CASCADE_SCREEN_BINS_PER_DURATION`]); the strongest
    /// [`CascadeOptions::box_candidates`] peaks are then measured at the full edge
    /// resolution ([`crate::periodogram::bls::box_detection`]). Pass
    /// `box_options.bins_per_duration` for a single full-resolution pass.
    pub box_screen_bins_per_duration: usize,
    /// Distinct box peaks of the screening pass measured at full resolution (1..=20,
    /// default 5); the one with the highest Δχ² there is taken.
    pub box_candidates: usize,
}

/// Box-edge resolution of the cascade's screening pass: bins of a third of the shortest
/// duration (edges within a sixth of a duration of an event's, S/N loss ≤ 1 − √(5/6) ≈
/// 9 % before the candidates are measured at a tenth). The scan over the grid costs about a
/// third of a full-resolution pass on sparse light curves; chosen here, measured in
/// docs/search-stage.md.
pub const CASCADE_SCREEN_BINS_PER_DURATION: usize = 3;

impl CascadeOptions {
    /// 3 harmonics, 3 candidates, [`CASCADE_DUTY_CYCLES`], box up to 5 c/d, box
    /// oversampling 1, screening at [`CASCADE_SCREEN_BINS_PER_DURATION`] bins per shortest
    /// duration, 5 box candidates.
    pub fn new(values_are_magnitudes: bool) -> Self {
        let (shortest, longest, count) = CASCADE_DUTY_CYCLES;
        CascadeOptions {
            harmonics: 3,
            candidates: 3,
            box_options: BoxOptions {
                durations: BoxDurations::DutyCycles { shortest, longest, count },
                ..BoxOptions::scaled(values_are_magnitudes)
            },
            box_max_freq_per_day: 5.0,
            box_oversampling: 1.0,
            box_screen_bins_per_duration: CASCADE_SCREEN_BINS_PER_DURATION,
            box_candidates: 5,
        }
    }
}

/// The class given to a source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum VariabilityClass {
    /// No model is significant at the field's false-alarm level.
    Constant,
    /// A sinusoid describes the light curve best.
    Sinusoidal,
    /// A harmonic series with one minimum per cycle.
    NonSinusoidalPulsator,
    /// Two minima per cycle, a significant secondary eclipse, unequal alternate minima, or
    /// an event too deep for a planet.
    EclipsingBinary,
    /// A box-shaped dip with no secondary, shallow enough for a planet.
    TransitLike,
}

impl VariabilityClass {
    /// The label written in tables.
    pub fn label(&self) -> &'static str {
        match self {
            VariabilityClass::Constant => "constant",
            VariabilityClass::Sinusoidal => "sinusoidal",
            VariabilityClass::NonSinusoidalPulsator => "non-sinusoidal-pulsator",
            VariabilityClass::EclipsingBinary => "eclipsing-binary",
            VariabilityClass::TransitLike => "transit-like",
        }
    }
    /// All classes, in table order.
    pub const ALL: [VariabilityClass; 5] = [
        VariabilityClass::Sinusoidal,
        VariabilityClass::NonSinusoidalPulsator,
        VariabilityClass::EclipsingBinary,
        VariabilityClass::TransitLike,
        VariabilityClass::Constant,
    ];
    /// The class of a label ([`VariabilityClass::label`]).
    pub fn from_label(label: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|c| c.label() == label)
    }
}

/// A model of the cascade.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CascadeModel {
    /// One sinusoid (generalised Lomb–Scargle peak, refined).
    Sinusoid,
    /// A Fourier series of several harmonics sharing one frequency.
    Harmonics,
    /// A box-shaped dip (transit or eclipse).
    Box,
}

impl CascadeModel {
    /// Name in tables.
    pub fn label(&self) -> &'static str {
        match self {
            CascadeModel::Sinusoid => "sinusoid",
            CascadeModel::Harmonics => "harmonic-series",
            CascadeModel::Box => "box",
        }
    }
}

/// One stage's best description.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageEvidence {
    /// The model of this stage.
    pub model: CascadeModel,
    /// Frequency, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day (NaN when the fit did not refine it).
    pub freq_err_per_day: f64,
    /// Period, days.
    pub period_d: f64,
    /// 1σ of the period, days (NaN when the fit did not refine it).
    pub period_err_d: f64,
    /// Weighted sum of squared residuals of the model.
    pub chi2: f64,
    /// Parameters of the model (zero point, shape, frequency, phase …).
    pub n_params: usize,
    /// N ln(χ²/N) + k ln N.
    pub bic: f64,
    /// False-alarm probability of this stage for this source over the trials it searched.
    pub false_alarm: f64,
    /// Harmonics of the series: 1 for the sinusoid, K for the harmonic series, 0 for the box.
    pub harmonics: usize,
    /// χ²/dof of the fit (value² without uncertainties).
    pub reduced_chi2: f64,
    /// Factor by which the period σ was inflated (√χ²_red when > 1 on data with
    /// uncertainties), 1 when not.
    pub err_scale: f64,
}

/// The cascade's description of one light curve.
#[derive(Debug, Clone, PartialEq)]
pub struct Classification {
    /// Class if the source is variable (see [`Classification::class_in_field`]).
    pub variable_class: VariabilityClass,
    /// The winning model.
    pub model: CascadeModel,
    /// Period taken, days.
    pub period_d: f64,
    /// 1σ of the period, days.
    pub period_err_d: f64,
    /// Frequency taken, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day.
    pub freq_err_per_day: f64,
    /// Factor by which the period σ was inflated by √χ²_red (1 when not).
    pub err_scale: f64,
    /// Semi-amplitude (sinusoid), half the peak-to-peak (harmonic series) or depth (box),
    /// units of the values.
    pub amplitude: f64,
    /// False-alarm probability of the winning model for this source, over its trials and
    /// the three models tried.
    pub false_alarm: f64,
    /// BIC of a constant.
    pub bic_constant: f64,
    /// Every stage that ran.
    pub stages: Vec<StageEvidence>,
    /// Dimming episodes per cycle of the best harmonic fit (0 when that stage did not run).
    pub minima_per_cycle: usize,
    /// Share of the cycle spent dimmer than mid-range in the best harmonic fit.
    pub dim_fraction: f64,
    /// The box stage's detection at the period it settled on.
    pub box_detection: Option<BoxDetection>,
    /// What was decided about the period and the class, and why.
    pub note: String,
    /// The sinusoid spectrum.
    pub spectrum: Spectrum,
}

impl Classification {
    /// The source's false-alarm probability in a field of `n_sources` searched alike.
    pub fn field_false_alarm(&self, n_sources: usize) -> f64 {
        super::false_alarm::field_false_alarm(self.false_alarm, n_sources)
    }
    /// Whether the source is variable at field false-alarm level `level` among `n_sources`.
    pub fn is_variable(&self, n_sources: usize, level: f64) -> bool {
        self.field_false_alarm(n_sources) < level
    }
    /// The class in a field of `n_sources` at false-alarm level `level` (e.g. 0.01):
    /// [`VariabilityClass::Constant`] unless the source is variable.
    pub fn class_in_field(&self, n_sources: usize, level: f64) -> VariabilityClass {
        if self.is_variable(n_sources, level) { self.variable_class } else { VariabilityClass::Constant }
    }
    /// The evidence of `model`, when that stage ran.
    pub fn stage(&self, model: CascadeModel) -> Option<&StageEvidence> {
        self.stages.iter().find(|s| s.model == model)
    }
}

fn bic(chi2: f64, n: usize, k: usize) -> f64 {
    let nf = n as f64;
    nf * (chi2.max(1e-300) / nf).ln() + k as f64 * nf.ln()
}

/// χ² of a linear harmonic series (zero point + `harmonics` cosine/sine pairs) at a fixed
/// frequency (c/d); None when the fit is singular.
fn harmonic_chi2(series: &Series, freq: f64, harmonics: usize) -> Option<f64> {
    let np = 1 + 2 * harmonics;
    if series.len() <= np + 1 {
        return None;
    }
    let mut design = Vec::with_capacity(series.len() * np);
    for &t in &series.time_d {
        design.push(1.0);
        for h in 1..=harmonics {
            let (s, c) = (TAU * h as f64 * freq * t).sin_cos();
            design.push(c);
            design.push(s);
        }
    }
    weighted_linear_lsq(&design, np, &series.value, &series.weight).ok().map(|f| f.chi2)
}

/// Shape of a harmonic fit: (dimming episodes per cycle, share of the cycle dimmer than
/// mid-range, half the peak-to-peak).
fn harmonic_shape(series: &Series, freq: f64, harmonics: usize, dip_sign: f64) -> Option<(usize, f64, f64)> {
    let np = 1 + 2 * harmonics;
    let mut design = Vec::with_capacity(series.len() * np);
    for &t in &series.time_d {
        design.push(1.0);
        for h in 1..=harmonics {
            let (s, c) = (TAU * h as f64 * freq * t).sin_cos();
            design.push(c);
            design.push(s);
        }
    }
    let fit = weighted_linear_lsq(&design, np, &series.value, &series.weight).ok()?;
    const M: usize = 400;
    let curve: Vec<f64> = (0..M)
        .map(|j| {
            let x = TAU * j as f64 / M as f64;
            let mut v = 0.0;
            for h in 1..=harmonics {
                let (s, c) = (h as f64 * x).sin_cos();
                v += fit.params[2 * h - 1] * c + fit.params[2 * h] * s;
            }
            dip_sign * v
        })
        .collect();
    let (lo, hi) = curve.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let range = hi - lo;
    if !(range > 0.0) {
        return None;
    }
    let dim_fraction = curve.iter().filter(|&&v| v > lo + 0.5 * range).count() as f64 / M as f64;
    // dimming episodes: circular runs above 20 % of the range, counted at their starts
    let above: Vec<bool> = curve.iter().map(|&v| v > lo + 0.2 * range).collect();
    let starts = (0..M).filter(|&j| above[j] && !above[(j + M - 1) % M]).count();
    Some((starts.max(1), dim_fraction, 0.5 * range))
}

/// Indices of the `count` highest positive values of a box spectrum, each more than
/// `separation` grid steps from a higher one taken, highest first.
fn box_peaks(power: &[f64], count: usize, separation: usize) -> Vec<usize> {
    let mut order: Vec<usize> = (0..power.len()).filter(|&i| power[i] > 0.0).collect();
    // the separation test below needs only the strongest few hundred
    let keep = (count * separation.max(1) * 4).min(order.len());
    if keep > 0 && keep < order.len() {
        order.select_nth_unstable_by(keep - 1, |&a, &b| power[b].total_cmp(&power[a]));
        order.truncate(keep);
    }
    order.sort_unstable_by(|&a, &b| power[b].total_cmp(&power[a]).then(a.cmp(&b)));
    let mut out: Vec<usize> = Vec::with_capacity(count);
    for k in order {
        if out.len() == count {
            break;
        }
        if out.iter().all(|&j| j.abs_diff(k) > separation) {
            out.push(k);
        }
    }
    out
}

/// Grid steps between distinct box peaks: a box peak stays high while the edge drift over
/// the baseline stays under the event's duration, about (duration / shortest duration) ×
/// oversampling steps either side; the longest trial duration sets the separation, so one
/// lobe does not take two candidate places.
fn box_peak_separation(durations: &BoxDurations, oversampling: f64) -> usize {
    let ratio = match durations {
        BoxDurations::DutyCycles { shortest, longest, .. } => longest / shortest,
        BoxDurations::Fixed(d) => {
            let (lo, hi) = d.iter().fold((f64::INFINITY, 0.0f64), |(a, b), &v| (a.min(v), b.max(v)));
            hi / lo
        }
    };
    ((ratio * oversampling).ceil() as usize).clamp(1, 10_000)
}

/// Runs the cascade on `series` over `grid` (the sinusoid grid; the box stage plans its own
/// from the baseline) with the Lomb–Scargle kernel `algorithm` and grid memory limit
/// `memory_limit_bytes`. Errors: too few points or bad options; a stage that cannot run on
/// this light curve (too few points for its model, a box grid over the memory limit) is left
/// out and said so in the note.
pub fn classify_series(
    series: &Series,
    grid: &FrequencyGrid,
    algorithm: Algorithm,
    memory_limit_bytes: u128,
    options: &CascadeOptions,
) -> Result<Classification, SearchError> {
    for (name, value, range, expected) in [
        (
            "cascade harmonics",
            options.harmonics,
            1..=5,
            "1 to 5 (the half-frequency model uses twice as many, at most 10)",
        ),
        ("cascade box candidates", options.box_candidates, 1..=20, "1 to 20"),
        ("cascade box screening bins per duration", options.box_screen_bins_per_duration, 1..=100, "1 to 100"),
        ("cascade candidates", options.candidates, 1..=10, "1 to 10"),
    ] {
        if !range.contains(&value) {
            return Err(SearchError::InvalidParameter { name, value: value as f64, expected });
        }
    }
    let n = series.len();
    let t_base = series.baseline_d();
    let fmin = grid.start_per_day.max(1.0 / t_base);
    let fmax = grid.max_freq_per_day();
    let dip_sign = if options.box_options.values_are_magnitudes { 1.0 } else { -1.0 };
    let yc = series.band_centred_values();
    let chi0: f64 = yc.iter().zip(&series.weight).map(|(y, w)| w * y * y).sum();
    let bic_constant = bic(chi0, n, series.n_bands());
    let mut notes: Vec<String> = Vec::new();
    let mut stages: Vec<StageEvidence> = Vec::new();

    // 1. Sinusoid.
    let spectrum = if series.n_bands() > 1 {
        MultiBandLombScargle { algorithm }.evaluate(series, grid)?
    } else {
        GeneralisedLombScargle { algorithm }.evaluate(series, grid)?
    };
    let peaks = local_maxima(&spectrum, options.candidates, 1.0 / t_base);
    let Some(&top) = peaks.first() else {
        return Err(SearchError::InvalidParameter {
            name: "sinusoid spectrum",
            value: f64::NAN,
            expected: "a spectrum with at least one finite peak",
        });
    };
    let z = spectrum.power[top];
    let f_grid = grid.freq_per_day(top);
    let amp0 = spectrum.amplitude.as_ref().map_or(0.0, |a| a[top]);
    let sin_fap = baluev_fap(z, series, fmax).unwrap_or(f64::NAN);
    let mut sin_amplitude = amp0;
    let k_sin = series.n_bands() + 3;
    let sin_stage = match fit_sinusoids(
        series,
        &[Sinusoid { freq_per_day: f_grid, amplitude: amp0.max(1e-12), phase_cycles: 0.0 }],
    ) {
        Ok(fit) if (fit.components[0].freq_per_day - f_grid).abs() <= 2.0 * grid.step_per_day => {
            let c = fit.components[0];
            sin_amplitude = c.amplitude;
            StageEvidence {
                model: CascadeModel::Sinusoid,
                freq_per_day: c.freq_per_day,
                freq_err_per_day: c.freq_err_per_day,
                period_d: c.period_d(),
                period_err_d: c.period_err_d(),
                chi2: fit.chi2,
                n_params: k_sin,
                bic: bic(fit.chi2, n, k_sin),
                false_alarm: sin_fap,
                harmonics: 1,
                reduced_chi2: fit.chi2 / (n as f64 - k_sin as f64).max(1.0),
                err_scale: 1.0,
            }
        }
        _ => {
            let chi2 = chi0 * (1.0 - z);
            StageEvidence {
                model: CascadeModel::Sinusoid,
                freq_per_day: f_grid,
                freq_err_per_day: f64::NAN,
                period_d: 1.0 / f_grid,
                period_err_d: f64::NAN,
                chi2,
                n_params: k_sin,
                bic: bic(chi2, n, k_sin),
                false_alarm: sin_fap,
                harmonics: 1,
                reduced_chi2: chi2 / (n as f64 - k_sin as f64).max(1.0),
                err_scale: 1.0,
            }
        }
    };
    stages.push(sin_stage);

    // 2. Harmonic series at the sinusoid peaks and at half their frequency: each candidate
    // scored by a linear fit at its frequency (which cannot fail to converge), the best one
    // then refined by nonlinear least squares.
    let mut best_c: Option<(f64, usize, bool, f64, f64)> = None; // (f, harmonics, halved, χ², BIC)
    for &k in &peaks {
        // every candidate at a least-squares frequency: a grid frequency is up to half a step
        // off, a phase drift the odd harmonics of the halved model would partly absorb
        let f = if k == top {
            sin_stage.freq_per_day
        } else {
            let g = grid.freq_per_day(k);
            let a = spectrum.amplitude.as_ref().map_or(1e-3, |a| a[k].max(1e-12));
            match fit_sinusoids(series, &[Sinusoid { freq_per_day: g, amplitude: a, phase_cycles: 0.0 }]) {
                Ok(fit) if (fit.components[0].freq_per_day - g).abs() <= 2.0 * grid.step_per_day => {
                    fit.components[0].freq_per_day
                }
                _ => g,
            }
        };
        // f with K and with 2K terms, f/2 with 2K: the halved model must beat a model of f
        // with as many terms, so that a misfit of f leaking into odd harmonics through the
        // window cannot double the period
        let k2 = (2 * options.harmonics).min(10);
        for (fc, kh, halved) in [(f, options.harmonics, false), (f, k2, false), (0.5 * f, k2, true)] {
            if fc < fmin * (1.0 - 1e-9) {
                continue;
            }
            let Some(chi2) = harmonic_chi2(series, fc, kh) else { continue };
            let b = bic(chi2, n, 2 * kh + 2);
            if best_c.is_none_or(|c| b < c.4) {
                best_c = Some((fc, kh, halved, chi2, b));
            }
        }
    }
    let mut best_h: Option<(StageEvidence, bool)> = None;
    if let Some((fc, kh, halved, chi2_lin, _)) = best_c {
        let kp = 2 * kh + 2;
        let refined = refine_period(series, fc, kh).ok().filter(|r| r.chi2 <= chi2_lin * (1.0 + 1e-9));
        let (f, f_err, chi2, scale) = match refined {
            Some(r) => (r.freq_per_day, r.freq_err_per_day, r.chi2, if r.err_inflated { r.err_scale } else { 1.0 }),
            None => (fc, f64::NAN, chi2_lin, 1.0),
        };
        let red = chi2 / (n as f64 - kp as f64).max(1.0);
        let x = (chi0 - chi2).max(0.0) / red.max(1e-300);
        let trials = ((fmax - fmin) * t_base).max(1.0) * kh as f64;
        let fap = over_trials(chi2_tail_even(x, 2 * kh), trials);
        best_h = Some((
            StageEvidence {
                model: CascadeModel::Harmonics,
                freq_per_day: f,
                freq_err_per_day: f_err,
                period_d: 1.0 / f,
                period_err_d: f_err / (f * f),
                chi2,
                n_params: kp,
                bic: bic(chi2, n, kp),
                false_alarm: fap,
                harmonics: kh,
                reduced_chi2: red,
                err_scale: scale,
            },
            halved,
        ));
    }
    let (mut minima_per_cycle, mut dim_fraction, mut harmonic_amplitude) = (0usize, f64::NAN, f64::NAN);
    let mut halved = false;
    if let Some((s, h)) = best_h {
        stages.push(s);
        halved = h;
        if let Some((m, d, a)) = harmonic_shape(series, s.freq_per_day, s.harmonics, dip_sign) {
            (minima_per_cycle, dim_fraction, harmonic_amplitude) = (m, d, a);
        }
    } else {
        notes.push("harmonic series not fitted (too few points or no convergence)".into());
    }

    // 3. Box search.
    let mut box_det = None;
    let mut box_note = String::new();
    let fmax_box = fmax.min(options.box_max_freq_per_day);
    if fmax_box > fmin * 1.01 {
        let b = &options.box_options;
        match plan_box_grid_for(t_base, fmin, fmax_box, &b.durations, options.box_oversampling, memory_limit_bytes) {
            Ok(plan) => {
                let screen = BoxOptions { bins_per_duration: options.box_screen_bins_per_duration, ..b.clone() };
                let bs = box_search(series, &plan.grid, &screen)?;
                // the strongest distinct peaks of the screening pass, each measured at the
                // full edge resolution; the highest Δχ² there wins
                let best = box_peaks(
                    &bs.power,
                    options.box_candidates,
                    box_peak_separation(&b.durations, options.box_oversampling),
                )
                .into_iter()
                .filter_map(|k| box_detection(series, &bs, k, b).ok())
                .max_by(|x, y| x.power.total_cmp(&y.power));
                if let Some(det) = best
                    && let Ok(dec) = settle_eclipse_period(series, &det, plan.grid.step_per_day, b)
                {
                    let d = dec.detection;
                    let m = d.measurement;
                    if m.n_events >= 2 && d.depth > 0.0 {
                        let sec_snr = m.secondary_search_snr();
                        let with_sec = sec_snr.is_finite() && sec_snr >= 3.0;
                        let (chi2, kp) = if with_sec { (m.chi2_with_secondary, 7) } else { (m.chi2_box, 5) };
                        let s2 = if series.has_errors { m.reduced_chi2.max(1.0) } else { m.reduced_chi2 };
                        let x = (chi0 - m.chi2_box).max(0.0) / s2.max(1e-300);
                        let q_min = match &b.durations {
                            BoxDurations::DutyCycles { shortest, .. } => *shortest,
                            BoxDurations::Fixed(_) => b.durations.shortest_d(1.0) * fmin,
                        };
                        let trials = (plan.grid.len as f64 / options.box_oversampling).max(1.0)
                            * (1.0 / q_min)
                            * b.durations.count() as f64;
                        let fap = over_trials(normal_upper_tail(x.sqrt()), trials);
                        stages.push(StageEvidence {
                            model: CascadeModel::Box,
                            freq_per_day: d.freq_per_day,
                            freq_err_per_day: d.freq_err_per_day,
                            period_d: d.period_d,
                            period_err_d: d.period_err_d,
                            chi2,
                            n_params: kp,
                            bic: bic(chi2, n, kp),
                            false_alarm: fap,
                            harmonics: 0,
                            reduced_chi2: m.reduced_chi2,
                            err_scale: if series.has_errors && m.reduced_chi2 > 1.0 { m.err_scale } else { 1.0 },
                        });
                        box_note = dec.note;
                        box_det = Some(d);
                    } else {
                        notes.push(format!("box search: best box has {} event(s) observed, not a period", m.n_events));
                    }
                }
            }
            Err(e) => notes.push(format!("box search not run: {e}")),
        }
    }

    // Choose by BIC.
    let best = *stages.iter().min_by(|a, b| a.bic.total_cmp(&b.bic)).unwrap_or(&sin_stage);
    let false_alarm = over_trials(best.false_alarm, stages.len() as f64);
    let others: Vec<String> = stages
        .iter()
        .filter(|s| s.model != best.model)
        .map(|s| format!("{} +{:.1}", s.model.label(), s.bic - best.bic))
        .collect();
    let mut period_d = best.period_d;
    let mut period_err_d = best.period_err_d;
    let mut freq = best.freq_per_day;
    let mut freq_err = best.freq_err_per_day;
    let (class, amplitude, why) = match best.model {
        CascadeModel::Sinusoid => {
            (VariabilityClass::Sinusoidal, sin_amplitude, "a sinusoid describes it best".to_string())
        }
        CascadeModel::Harmonics => {
            if minima_per_cycle >= 2 {
                (
                    VariabilityClass::EclipsingBinary,
                    harmonic_amplitude,
                    format!(
                        "{}-harmonic series with {minima_per_cycle} minima per cycle{}",
                        best.harmonics,
                        if halved { " at half the sinusoid frequency (alternate minima differ)" } else { "" }
                    ),
                )
            } else if dim_fraction < ECLIPSE_SHAPE_LIMIT {
                period_d *= 2.0;
                period_err_d *= 2.0;
                freq *= 0.5;
                freq_err *= 0.5;
                (
                    VariabilityClass::EclipsingBinary,
                    harmonic_amplitude,
                    format!(
                        "period doubled: one eclipse-shaped minimum per harmonic cycle (dimmer than mid-range {:.0} % of the cycle), taken as an eclipsing binary with equal minima",
                        100.0 * dim_fraction
                    ),
                )
            } else {
                (
                    VariabilityClass::NonSinusoidalPulsator,
                    harmonic_amplitude,
                    format!("{}-harmonic series with one minimum per cycle", best.harmonics),
                )
            }
        }
        CascadeModel::Box => {
            let d = box_det.as_ref().map_or(f64::NAN, |d| d.depth);
            let m = box_det.map(|d| d.measurement);
            let sec = m.map_or(f64::NAN, |m| m.secondary_search_snr());
            let rel = if options.box_options.values_are_magnitudes {
                d
            } else {
                d / series.weighted_mean().abs().max(1e-300)
            };
            let doubled = box_note.contains("alternate minima differ");
            if doubled {
                (VariabilityClass::EclipsingBinary, d, box_note.clone())
            } else if sec.is_finite() && sec >= SECONDARY_SNR_LIMIT {
                (
                    VariabilityClass::EclipsingBinary,
                    d,
                    format!(
                        "{box_note}; secondary dip at phase {:.3} with S/N {sec:.1}",
                        m.map_or(f64::NAN, |m| m.secondary_search_phase)
                    ),
                )
            } else if rel > PLANET_DEPTH_LIMIT {
                (
                    VariabilityClass::EclipsingBinary,
                    d,
                    format!("{box_note}; depth {:.1} % is too deep for a planet", 100.0 * rel),
                )
            } else {
                (
                    VariabilityClass::TransitLike,
                    d,
                    format!(
                        "{box_note}; no secondary above S/N {SECONDARY_SNR_LIMIT} (an eclipsing binary with equal minima would have twice this period)"
                    ),
                )
            }
        }
    };
    let mut note = format!("{} preferred ({why})", best.model.label());
    if !others.is_empty() {
        note.push_str(&format!("; BIC of the others: {}", others.join(", ")));
    }
    if best.err_scale > 1.0 {
        note.push_str(&format!(
            "; period sigma inflated x{:.2} by sqrt(reduced chi2 {:.2})",
            best.err_scale, best.reduced_chi2
        ));
    }
    for extra in notes {
        note.push_str("; ");
        note.push_str(&extra);
    }
    Ok(Classification {
        variable_class: class,
        model: best.model,
        period_d,
        period_err_d,
        freq_per_day: freq,
        freq_err_per_day: freq_err,
        err_scale: best.err_scale,
        amplitude,
        false_alarm,
        bic_constant,
        stages,
        minima_per_cycle,
        dim_fraction,
        box_detection: box_det,
        note,
        spectrum,
    })
}
