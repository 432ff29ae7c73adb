//! One-call period search of a validated light curve: plan the grid from the baseline,
//! evaluate the chosen method, pick and refine the top peaks, annotate aliases (including
//! spectral-window sidelobes), and attach false-alarm probabilities.

use super::cascade::{CascadeOptions, Classification, classify_series};
use crate::frequencies::peaks::{DEFAULT_REFINE_HARMONICS, PeakOptions, RefinementFit, describe_peaks_with_fits};
use crate::periodogram::bls::{
    BoxDetection, BoxDurations, BoxFitPeriodogram, BoxOptions, DEFAULT_BINS_PER_DURATION, box_detection, box_search,
    plan_box_grid_for, settle_eclipse_period,
};
use crate::periodogram::dispersion::PhaseDispersion;
use crate::periodogram::entropy::ConditionalEntropy;
use crate::periodogram::multiharmonic::MultiHarmonic;
use crate::periodogram::peaks::Peak;
use crate::periodogram::significance::{BootstrapOptions, baluev_log10_fap, bootstrap_fap};
use crate::periodogram::window::strongest_window_sidelobes;
use crate::periodogram::{
    Algorithm, ClassicalLombScargle, GeneralisedLombScargle, GridRequest, MultiBandLombScargle, Periodogram,
    SearchError, Series, Spectrum, plan_grid,
};

/// The statistic searched.
#[derive(Debug, Clone, PartialEq)]
pub enum SearchMethod {
    /// Generalised Lomb–Scargle (floating mean, weights); per-band zero points when the
    /// light curve has several bands.
    Sinusoid,
    /// Classical Lomb–Scargle on mean-subtracted data.
    ClassicalSinusoid,
    /// Fourier series of this many harmonics.
    Harmonics(usize),
    /// Phase dispersion minimisation with this many phase bins (power = 1 − θ).
    PhaseDispersion(usize),
    /// Conditional entropy with phase × value bins (power = ln n_value − H_c).
    ConditionalEntropy {
        /// Number of phase bins.
        phase_bins: usize,
        /// Number of bins of the scaled values.
        value_bins: usize,
    },
    /// Box least squares over these durations (fixed in days, or scaling with the trial
    /// period), on the box grid of [`plan_box_grid_for`].
    Box {
        /// Trial box durations.
        durations: BoxDurations,
        /// Values are magnitudes (a dip is an increase) rather than fluxes.
        values_are_magnitudes: bool,
    },
    /// The survey cascade (sinusoid, harmonic series, box search; best by BIC, with a
    /// class): [`super::cascade`].
    Cascade(CascadeOptions),
}

impl SearchMethod {
    /// Whether the analytic (Baluev 2008) false-alarm probability applies: the
    /// Lomb–Scargle family with power normalised to [0, 1].
    pub fn has_analytic_fap(&self) -> bool {
        matches!(self, SearchMethod::Sinusoid | SearchMethod::ClassicalSinusoid)
    }

    /// Short descriptive name for outputs.
    pub fn label(&self) -> String {
        match self {
            SearchMethod::Sinusoid => "sinusoid (generalised Lomb-Scargle)".into(),
            SearchMethod::ClassicalSinusoid => "classical Lomb-Scargle".into(),
            SearchMethod::Harmonics(k) => format!("{k}-harmonic Fourier series"),
            SearchMethod::PhaseDispersion(b) => format!("phase dispersion, {b} bins"),
            SearchMethod::ConditionalEntropy { phase_bins, value_bins } => {
                format!("conditional entropy, {phase_bins}x{value_bins} bins")
            }
            SearchMethod::Box { durations, .. } => format!("box least squares, {}", durations.label()),
            SearchMethod::Cascade(c) => format!(
                "cascade: sinusoid, {}-harmonic series, box least squares ({}); best by BIC",
                c.harmonics,
                c.box_options.durations.label()
            ),
        }
    }
}

/// What to search and how much to report.
#[derive(Debug, Clone, PartialEq)]
pub struct SearchPlan {
    /// The periodogram method (or the cascade).
    pub method: SearchMethod,
    /// Kernel for the Lomb–Scargle family.
    pub algorithm: Algorithm,
    /// Grid request (its `max_freq_per_day` is the highest frequency searched, c/d).
    pub grid: GridRequest,
    /// Number of peaks to describe.
    pub peaks: usize,
    /// Refine peaks by least squares (Montgomery & O'Donoghue 1999 errors).
    pub refine_peaks: bool,
    /// Number of spectral-window sidelobes tested as alias sources (0: no window).
    pub window_sidelobes: usize,
    /// Bootstrap false-alarm probability of the top peak (trials, seed), any method.
    pub bootstrap: Option<BootstrapOptions>,
}

impl SearchPlan {
    /// GLS with the auto kernel up to `max_freq_per_day`, 5 peaks, 3 window sidelobes.
    pub fn sinusoid_up_to(max_freq_per_day: f64) -> SearchPlan {
        SearchPlan {
            method: SearchMethod::Sinusoid,
            algorithm: Algorithm::Auto,
            grid: GridRequest::up_to(max_freq_per_day),
            peaks: 5,
            refine_peaks: true,
            window_sidelobes: 3,
            bootstrap: None,
        }
    }
}

/// A described peak with its false-alarm probability.
#[derive(Debug, Clone, PartialEq)]
pub struct RatedPeak {
    /// The refined, alias-annotated peak.
    pub peak: Peak,
    /// Analytic (Baluev 2008) FAP of a peak this high, where the method has one (NaN
    /// otherwise); for the cascade, the winning model's FAP over its trials. 0 where the
    /// probability is below the smallest `f64` (~1e-308): see `log10_fap`.
    pub fap: f64,
    /// log₁₀ of `fap`, computed in log space for the analytic probability
    /// ([`baluev_log10_fap`]), so that it keeps its digits where `fap` underflows (NaN where
    /// the method has none, −∞ for a perfect fit).
    pub log10_fap: f64,
    /// How the peak's uncertainties were obtained (None when not refined by a fit; box
    /// peaks carry their σ from the Δχ² profile, see [`SearchOutcome::box_detection`]).
    pub refinement: Option<RefinementFit>,
}

/// Everything a search returns.
#[derive(Debug, Clone, PartialEq)]
pub struct SearchOutcome {
    /// The periodogram (power and amplitude emptied in survey batches).
    pub spectrum: Spectrum,
    /// The highest peaks, strongest first (the cascade's chosen period first; the box
    /// method's peaks carry the box depth and its σ as amplitude).
    pub peaks: Vec<RatedPeak>,
    /// Spectral-window sidelobes used for alias notes, c/d.
    pub window_sidelobes_per_day: Vec<f64>,
    /// Bootstrap FAP of the top peak, when asked.
    pub bootstrap_fap: Option<f64>,
    /// Box details at the top peak, for the box method and the cascade (at the period
    /// settled between P and 2P).
    pub box_detection: Option<BoxDetection>,
    /// What was decided about the top peak's period and why (box: odd/even minima; cascade:
    /// the model, class and period chosen), when there was a decision.
    pub period_note: Option<String>,
    /// The cascade's description and class.
    pub classification: Option<Classification>,
    /// Points used in the search.
    pub n_points: usize,
    /// Rows dropped because a time, value or uncertainty was NaN or infinite.
    pub n_dropped: usize,
    /// Time span of the points used (last minus first time), days.
    pub baseline_d: f64,
}

/// Runs `plan` on `series`. Errors: an unresolvable frequency range or an oversized grid
/// (with the estimate), too few points for the method, bad method parameters.
pub fn search_series(series: &Series, plan: &SearchPlan) -> Result<SearchOutcome, SearchError> {
    if plan.peaks == 0 {
        return Err(SearchError::InvalidParameter { name: "number of peaks", value: 0.0, expected: "at least 1" });
    }
    let baseline_d = series.baseline_d();
    let grid = match &plan.method {
        SearchMethod::Box { durations, .. } => {
            let fmin = plan.grid.min_freq_per_day.unwrap_or(1.0 / baseline_d);
            plan_box_grid_for(
                baseline_d,
                fmin,
                plan.grid.max_freq_per_day,
                durations,
                plan.grid.oversampling,
                plan.grid.memory_limit_bytes,
            )?
            .grid
        }
        _ => plan_grid(baseline_d, &plan.grid)?.grid,
    };
    let multiband = series.n_bands() > 1;
    let mut box_run: Option<(crate::periodogram::bls::BoxSpectrum, BoxOptions)> = None;
    let mut classification = None;
    // The spectral window (a grid of its own) is computed alongside the spectrum, on the
    // thread the spectrum's transforms leave idle.
    let window_sidelobes = || {
        if plan.window_sidelobes > 0 {
            // on a grid of two points per resolution element, not the search grid
            // (periodogram::window): the alias notes need a few sidelobe frequencies to 0.5/T
            strongest_window_sidelobes(series, &grid, plan.window_sidelobes, plan.algorithm)
        } else {
            Ok(Vec::new())
        }
    };
    let (spectrum, sidelobes) = rayon::join(
        || -> Result<Spectrum, SearchError> {
            Ok(match &plan.method {
                SearchMethod::Sinusoid if multiband => {
                    MultiBandLombScargle { algorithm: plan.algorithm }.evaluate(series, &grid)?
                }
                SearchMethod::Sinusoid => {
                    GeneralisedLombScargle { algorithm: plan.algorithm }.evaluate(series, &grid)?
                }
                SearchMethod::ClassicalSinusoid => {
                    ClassicalLombScargle { algorithm: plan.algorithm }.evaluate(series, &grid)?
                }
                SearchMethod::Harmonics(k) => {
                    if *k == 0 || *k > 20 {
                        return Err(SearchError::InvalidParameter {
                            name: "harmonics",
                            value: *k as f64,
                            expected: "1 to 20",
                        });
                    }
                    MultiHarmonic { harmonics: *k }.evaluate(series, &grid)?
                }
                SearchMethod::PhaseDispersion(b) => {
                    if *b < 2 || *b > 1000 {
                        return Err(SearchError::InvalidParameter {
                            name: "phase bins",
                            value: *b as f64,
                            expected: "2 to 1000",
                        });
                    }
                    PhaseDispersion { n_bins: *b }.evaluate(series, &grid)?
                }
                SearchMethod::ConditionalEntropy { phase_bins, value_bins } => {
                    if *phase_bins < 2 || *value_bins < 2 || *phase_bins > 1000 || *value_bins > 1000 {
                        return Err(SearchError::InvalidParameter {
                            name: "entropy bins",
                            value: (*phase_bins).min(*value_bins) as f64,
                            expected: "2 to 1000 phase and value bins",
                        });
                    }
                    ConditionalEntropy { n_phase: *phase_bins, n_value: *value_bins }.evaluate(series, &grid)?
                }
                SearchMethod::Box { durations, values_are_magnitudes } => {
                    let options = BoxOptions {
                        durations: durations.clone(),
                        bins_per_duration: DEFAULT_BINS_PER_DURATION,
                        values_are_magnitudes: *values_are_magnitudes,
                    };
                    BoxFitPeriodogram { options: options.clone() }.check_series(series)?;
                    let bs = box_search(series, &grid, &options)?;
                    let spectrum =
                        Spectrum { grid: bs.grid, power: bs.power.clone(), amplitude: None, algorithm: None };
                    box_run = Some((bs, options));
                    spectrum
                }
                SearchMethod::Cascade(options) => {
                    let mut c = classify_series(series, &grid, plan.algorithm, plan.grid.memory_limit_bytes, options)?;
                    let spectrum = std::mem::replace(
                        &mut c.spectrum,
                        Spectrum { grid, power: Vec::new(), amplitude: None, algorithm: None },
                    );
                    classification = Some(c);
                    spectrum
                }
            })
        },
        window_sidelobes,
    );
    let spectrum = spectrum?;
    let sidelobes = sidelobes?;
    let refine_harmonics = match &plan.method {
        SearchMethod::Harmonics(k) => (*k).clamp(1, 10),
        _ => DEFAULT_REFINE_HARMONICS,
    };
    let options = PeakOptions {
        count: plan.peaks,
        min_separation_per_day: None,
        alias_tolerance_per_day: None,
        window_sidelobes_per_day: sidelobes.clone(),
        refine: plan.refine_peaks && !matches!(plan.method, SearchMethod::Box { .. } | SearchMethod::Cascade(_)),
        refine_harmonics,
    };
    let mut described = describe_peaks_with_fits(series, &spectrum, &options)?;
    let mut top_box = None;
    let mut period_note = None;
    if let Some((bs, box_options)) = &box_run {
        // every box peak gets its refined period and σ from the Δχ² profile; the top one is
        // settled between P and 2P (odd and even minima)
        for (j, (peak, _)) in described.iter_mut().enumerate() {
            let Ok(det) = box_detection(series, bs, peak.grid_index, box_options) else { continue };
            let det = if j == 0 {
                match settle_eclipse_period(series, &det, grid.step_per_day, box_options) {
                    Ok(decision) => {
                        period_note = Some(decision.note);
                        decision.detection
                    }
                    Err(_) => det,
                }
            } else {
                det
            };
            peak.freq_per_day = det.freq_per_day;
            peak.freq_err_per_day = det.freq_err_per_day;
            peak.period_d = det.period_d;
            peak.period_err_d = det.period_err_d;
            peak.amplitude = det.depth;
            peak.amplitude_err = det.depth_err;
            peak.refined = true;
            if j == 0 {
                top_box = Some(det);
            }
        }
    }
    if let Some(c) = &classification {
        // the cascade's period is the first peak
        let k =
            (((c.freq_per_day - grid.start_per_day) / grid.step_per_day).round().max(0.0) as usize).min(grid.len - 1);
        let peak = Peak {
            grid_index: k,
            power: spectrum.power.get(k).copied().unwrap_or(f64::NAN),
            freq_per_day: c.freq_per_day,
            freq_err_per_day: c.freq_err_per_day,
            period_d: c.period_d,
            period_err_d: c.period_err_d,
            amplitude: c.amplitude,
            amplitude_err: f64::NAN,
            phase_cycles: f64::NAN,
            phase_err_cycles: f64::NAN,
            refined: c.period_err_d.is_finite(),
            aliases: Vec::new(),
        };
        described.insert(0, (peak, None));
        described.truncate(plan.peaks.max(1));
        top_box = c.box_detection;
        period_note = Some(c.note.clone());
    }
    let fmax = grid.max_freq_per_day();
    let analytic = plan.method.has_analytic_fap() && series.len() >= 5;
    let cascade_fap = classification.as_ref().map(|c| c.false_alarm);
    let peaks = described
        .into_iter()
        .enumerate()
        .map(|(j, (peak, refinement))| {
            let log10_fap = if j == 0 && cascade_fap.is_some() {
                cascade_fap.unwrap_or(f64::NAN).log10()
            } else if analytic && (0.0..=1.0).contains(&peak.power) {
                baluev_log10_fap(peak.power, series, fmax).unwrap_or(f64::NAN)
            } else {
                f64::NAN
            };
            let fap = if j == 0 && cascade_fap.is_some() {
                cascade_fap.unwrap_or(f64::NAN)
            } else {
                10f64.powf(log10_fap).clamp(0.0, 1.0)
            };
            RatedPeak { peak, fap, log10_fap, refinement }
        })
        .collect::<Vec<_>>();
    let bootstrap = match (&plan.bootstrap, peaks.first()) {
        (Some(b), Some(top)) => {
            let method: Box<dyn Periodogram> = match &plan.method {
                SearchMethod::Sinusoid if multiband => Box::new(MultiBandLombScargle { algorithm: plan.algorithm }),
                SearchMethod::Sinusoid => Box::new(GeneralisedLombScargle { algorithm: plan.algorithm }),
                SearchMethod::ClassicalSinusoid => Box::new(ClassicalLombScargle { algorithm: plan.algorithm }),
                SearchMethod::Harmonics(k) => Box::new(MultiHarmonic { harmonics: *k }),
                SearchMethod::PhaseDispersion(n) => Box::new(PhaseDispersion { n_bins: *n }),
                SearchMethod::ConditionalEntropy { phase_bins, value_bins } => {
                    Box::new(ConditionalEntropy { n_phase: *phase_bins, n_value: *value_bins })
                }
                SearchMethod::Box { durations, values_are_magnitudes } => Box::new(BoxFitPeriodogram {
                    options: BoxOptions {
                        durations: durations.clone(),
                        bins_per_duration: DEFAULT_BINS_PER_DURATION,
                        values_are_magnitudes: *values_are_magnitudes,
                    },
                }),
                SearchMethod::Cascade(_) => Box::new(GeneralisedLombScargle { algorithm: plan.algorithm }),
            };
            Some(bootstrap_fap(series, &grid, method.as_ref(), top.peak.power, b)?.fap)
        }
        _ => None,
    };
    Ok(SearchOutcome {
        spectrum,
        peaks,
        window_sidelobes_per_day: sidelobes,
        bootstrap_fap: bootstrap,
        box_detection: top_box,
        period_note,
        classification,
        n_points: series.len(),
        n_dropped: series.n_dropped(),
        baseline_d,
    })
}

/// Short text for an alias note, e.g. "+1 c/sidereal-day alias of peak 1".
pub fn describe_alias(note: &crate::periodogram::peaks::AliasNote) -> String {
    use crate::periodogram::peaks::AliasKind;
    let what = match note.kind {
        AliasKind::SiderealDay { n } => format!("{n:+} cycle/sidereal day alias"),
        AliasKind::Year { n } => format!("{n:+} cycle/year alias"),
        AliasKind::Harmonic { n } => format!("harmonic x{n}"),
        AliasKind::Subharmonic { n } => format!("subharmonic /{n}"),
        AliasKind::WindowSidelobe { window_freq_per_day } => format!("window sidelobe at {window_freq_per_day:.5} c/d"),
    };
    format!("{what} of peak {}", note.stronger_peak + 1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::SeededRng;

    #[test]
    fn finds_an_invented_sinusoid_with_nightly_gaps() {
        // Invented: 300 points over 60 nights, 0.3 d period, amplitude 0.2, noise 0.05.
        let mut rng = SeededRng::new(7);
        let mut t = Vec::new();
        for night in 0..60 {
            for k in 0..5 {
                t.push(night as f64 + 0.1 * k as f64 + 0.02 * rng.uniform());
            }
        }
        let y: Vec<f64> =
            t.iter().map(|&x| 0.2 * (std::f64::consts::TAU * x / 0.3).sin() + 0.05 * rng.normal()).collect();
        let s = Series::from_arrays(&t, &y, None).unwrap();
        let out = search_series(&s, &SearchPlan::sinusoid_up_to(10.0)).unwrap();
        let top = &out.peaks[0];
        assert!((top.peak.period_d - 0.3).abs() < 1e-3, "{}", top.peak.period_d);
        assert!(top.fap < 1e-10);
        // the ±1 c/d aliases must be marked when they appear among the peaks
        assert!(out.peaks[1..].iter().any(|p| !p.peak.aliases.is_empty()));
    }
}
