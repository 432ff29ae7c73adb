//! Box least squares for eclipses and transits (Kovács, Zucker & Mazeh 2002, A&A 391,
//! 369): at each trial frequency the folded light curve is binned in phase (bins of the
//! shortest trial duration / `bins_per_duration`) and a box of each trial duration slides
//! over the bins in steps of a `bins_per_duration`-th of that duration; the statistic is the χ² improvement of a two-level (in/out of box) model,
//! Δχ² = W·s²/(r(1−r)) with r, s the weight fraction and weighted centred sum inside the
//! box (KZM02 eqs. 4–5). Depth d = |s|/(r(1−r)). Signal detection efficiency
//! SDE = (peak − mean)/std of the spectrum (KZM02 §2).
//!
//! Trial durations are either fixed in days or proportional to the trial period (duty
//! cycles, [`BoxDurations`]); the frequency grid ([`plan_box_grid_for`]) keeps the drift of a
//! box edge over the baseline under the shortest duration / oversampling at every trial
//! period, so an event the data show cannot fall between two trial frequencies. A peak is
//! then measured on the unbinned points ([`box_detection`]): the period refined on a fine
//! local grid with its 1σ from the Δχ² profile, depth ± σ, S/N, odd and even event depths,
//! the depth at phase 0.5 and the deepest secondary dip elsewhere in phase.
//!
//! Folding (`box_fold`): each trial frequency by the cheaper of two exact kernels. A dense
//! light curve (binning leaves < 70 % of its points) is first summed in time bins of the
//! narrowest phase bin of the grid ([`TIME_BINS_PER_PHASE_BIN`]), each bin folded at its
//! weighted mean time: a point then lands at most one phase bin from its own. Measured on a
//! 27-day, 2-minute-cadence transit curve: the peak's Δχ² within 1e-4 of the unbinned,
//! every trial frequency's within 1.2 % of the peak's (the test allows 2 % and 5 %); the
//! peaks are measured on the unbinned points ([`box_detection`]) in any case.

use super::box_fold::{FOLD_GROUP, FoldKernel, PhaseFolder, Scratch, bin_in_time};
use super::{FrequencyGrid, Periodogram, SearchError, Series, Spectrum};
use rayon::prelude::*;

/// Phase bins per shortest trial duration: the resolution of the box edges, one tenth of
/// the shortest duration. The one default of the library, `find-periods`, `survey-batch`,
/// the benchmarks and docs/search-stage.md (a resolution common in practice for box
/// searches: ten phase steps per duration).
pub const DEFAULT_BINS_PER_DURATION: usize = 10;

/// Default duty cycles (duration / trial period) of a box search whose durations scale with
/// the trial period: 0.5 % to 15 % in 10 geometric steps (ratio 1.46, so every event
/// duration in the range lies within a factor 1.21 of a trial box: S/N loss ≤ 1 − 1/√1.21 ≈
/// 9 %). Covers central transits of planets around Sun-like and denser stars out to periods
/// of a few tens of days (duty ≈ 0.5–10 %; duration ≈ 13 h (P/1 yr)^{1/3} for the Sun, common
/// practice) and detached eclipses (≈ 5–15 %); chosen here.
pub const DEFAULT_DUTY_CYCLES: (f64, f64, usize) = (0.005, 0.15, 10);

/// Odd–even depth difference (in σ) above which a box peak at P is taken as half the
/// period of an eclipsing binary with unequal minima (common practice: 3σ).
pub const ODD_EVEN_DOUBLING_SIGMA: f64 = 3.0;

/// The trial box durations.
#[derive(Debug, Clone, PartialEq)]
pub enum BoxDurations {
    /// The same durations at every trial period, days (each > 0 and under half the
    /// shortest trial period).
    Fixed(Vec<f64>),
    /// Durations proportional to the trial period P: `count` duty cycles q = duration / P
    /// spaced geometrically from `shortest` to `longest` (0 < shortest ≤ longest < 0.5).
    DutyCycles {
        /// Shortest duty cycle, duration / trial period.
        shortest: f64,
        /// Longest duty cycle, duration / trial period.
        longest: f64,
        /// Number of duty cycles.
        count: usize,
    },
}

impl BoxDurations {
    /// [`DEFAULT_DUTY_CYCLES`].
    pub fn default_duty_cycles() -> Self {
        let (shortest, longest, count) = DEFAULT_DUTY_CYCLES;
        BoxDurations::DutyCycles { shortest, longest, count }
    }

    /// Number of trial durations at each period.
    pub fn count(&self) -> usize {
        match self {
            BoxDurations::Fixed(d) => d.len(),
            BoxDurations::DutyCycles { count, .. } => *count,
        }
    }

    /// The trial durations at trial period `period_d`, days, written into `out`.
    pub fn at_period(&self, period_d: f64, out: &mut Vec<f64>) {
        out.clear();
        match self {
            BoxDurations::Fixed(d) => out.extend_from_slice(d),
            BoxDurations::DutyCycles { shortest, longest, count } => {
                let n = (*count).max(1);
                let ratio = if n > 1 { (longest / shortest).powf(1.0 / (n - 1) as f64) } else { 1.0 };
                let mut q = *shortest;
                for _ in 0..n {
                    out.push(q * period_d);
                    q *= ratio;
                }
            }
        }
    }

    /// The shortest trial duration at trial period `period_d`, days.
    pub fn shortest_d(&self, period_d: f64) -> f64 {
        match self {
            BoxDurations::Fixed(d) => d.iter().cloned().fold(f64::INFINITY, f64::min),
            BoxDurations::DutyCycles { shortest, .. } => shortest * period_d,
        }
    }

    /// Short description, e.g. "durations 1–15 % of the trial period (8)".
    pub fn label(&self) -> String {
        match self {
            BoxDurations::Fixed(d) => format!("{} durations", d.len()),
            BoxDurations::DutyCycles { shortest, longest, count } => {
                format!("{count} durations from {:.3} to {:.3} of the trial period", shortest, longest)
            }
        }
    }

    /// Checks the durations against the shortest trial period (days).
    pub fn check(&self, min_period_d: f64) -> Result<(), SearchError> {
        match self {
            BoxDurations::Fixed(durations) => {
                if durations.is_empty() {
                    return Err(SearchError::InvalidParameter {
                        name: "box durations",
                        value: 0.0,
                        expected: "at least one duration in days",
                    });
                }
                for &d in durations {
                    if !(d.is_finite() && d > 0.0) {
                        return Err(SearchError::InvalidParameter {
                            name: "box duration (d)",
                            value: d,
                            expected: "a finite duration > 0",
                        });
                    }
                    if d >= 0.5 * min_period_d {
                        return Err(SearchError::InvalidParameter {
                            name: "box duration (d)",
                            value: d,
                            expected: "a duration shorter than half the shortest trial period",
                        });
                    }
                }
            }
            BoxDurations::DutyCycles { shortest, longest, count } => {
                if !(shortest.is_finite() && *shortest > 0.0 && *shortest <= 0.25) {
                    return Err(SearchError::InvalidParameter {
                        name: "shortest duty cycle",
                        value: *shortest,
                        expected: "a fraction of the period > 0 and ≤ 0.25",
                    });
                }
                if !(longest.is_finite() && *longest >= *shortest && *longest < 0.5) {
                    return Err(SearchError::InvalidParameter {
                        name: "longest duty cycle",
                        value: *longest,
                        expected: "a fraction of the period ≥ the shortest and < 0.5",
                    });
                }
                if !(1..=64).contains(count) {
                    return Err(SearchError::InvalidParameter {
                        name: "number of box durations",
                        value: *count as f64,
                        expected: "1 to 64",
                    });
                }
            }
        }
        Ok(())
    }
}

/// Options of the box search.
#[derive(Debug, Clone, PartialEq)]
pub struct BoxOptions {
    /// Trial box durations.
    pub durations: BoxDurations,
    /// Phase bins per shortest duration (resolution of the box edges); default
    /// [`DEFAULT_BINS_PER_DURATION`].
    pub bins_per_duration: usize,
    /// Values are magnitudes (a dip is an increase) rather than fluxes (a dip is a decrease).
    pub values_are_magnitudes: bool,
}

impl BoxOptions {
    /// Flux data, fixed durations (days), the default edge resolution.
    pub fn flux(durations_d: Vec<f64>) -> Self {
        BoxOptions {
            durations: BoxDurations::Fixed(durations_d),
            bins_per_duration: DEFAULT_BINS_PER_DURATION,
            values_are_magnitudes: false,
        }
    }

    /// Durations scaling with the trial period ([`DEFAULT_DUTY_CYCLES`]), the default edge
    /// resolution; `values_are_magnitudes` as in [`BoxOptions`].
    pub fn scaled(values_are_magnitudes: bool) -> Self {
        BoxOptions {
            durations: BoxDurations::default_duty_cycles(),
            bins_per_duration: DEFAULT_BINS_PER_DURATION,
            values_are_magnitudes,
        }
    }

    /// +1 when a dip raises the values (magnitudes), −1 when it lowers them (fluxes).
    fn dip_sign(&self) -> f64 {
        if self.values_are_magnitudes { 1.0 } else { -1.0 }
    }

    /// Phase bins at trial period `period_d`.
    fn bins_at(&self, period_d: f64) -> usize {
        ((period_d * self.bins_per_duration as f64 / self.durations.shortest_d(period_d)).ceil() as usize)
            .clamp(2, 1 << 20)
    }
}

/// The box-search spectrum: best box per trial frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct BoxSpectrum {
    /// The trial frequencies, cycles per day; the vectors below hold one value each.
    pub grid: FrequencyGrid,
    /// Δχ² of the best box (χ² units with uncertainties; value² × N without).
    pub power: Vec<f64>,
    /// Depth of the best box (units of the values, positive for a dip).
    pub depth: Vec<f64>,
    /// Duration of the best box, days.
    pub duration_d: Vec<f64>,
    /// Mid-box time of the first box after the first point, days (caller's reference).
    pub epoch_d: Vec<f64>,
}

/// A box (transit or eclipse) measured on the unbinned points at a given period, mid-event
/// time and duration ([`measure_box`]). Depths are positive for dips, in units of the
/// values; their σ come from the weights (or the residual scatter without uncertainties),
/// multiplied by [`BoxMeasurement::err_scale`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoxMeasurement {
    /// Level outside the events: weighted mean outside the primary and the phase-0.5 windows.
    pub level_out: f64,
    /// Depth of the primary box below the level outside, in the units of the values.
    pub depth: f64,
    /// 1σ of the depth, in the units of the values.
    pub depth_err: f64,
    /// Points inside the primary box.
    pub n_in_box: usize,
    /// Distinct events (cycles) with points inside the primary box.
    pub n_events: usize,
    /// Depth of the odd-numbered events (event 0 at the mid-event time), in the units of
    /// the values (NaN without points in them).
    pub odd_depth: f64,
    /// 1σ of the odd-event depth, in the units of the values.
    pub odd_depth_err: f64,
    /// Depth of the even-numbered events (event 0 at the mid-event time), in the units of
    /// the values (NaN without points in them).
    pub even_depth: f64,
    /// 1σ of the even-event depth, in the units of the values.
    pub even_depth_err: f64,
    /// |odd − even| / σ of the depth difference, odd and even events compared at the same
    /// place within the event (NaN when no part of the box has both;
    /// see `odd_even_difference_sigma`).
    pub odd_even_sigma: f64,
    /// Depth in a box of the same duration at phase 0.5 (secondary eclipse of a circular
    /// orbit; NaN without points there).
    pub secondary_depth: f64,
    /// 1σ of the depth at phase 0.5, in the units of the values.
    pub secondary_depth_err: f64,
    /// Phase of the deepest dip (highest S/N) of the same duration elsewhere in phase,
    /// outside the primary, cycles after the primary (NaN when none).
    pub secondary_search_phase: f64,
    /// Depth of that dip below the rest of the points outside the primary, in the units of
    /// the values (NaN when none).
    pub secondary_search_depth: f64,
    /// 1σ of that depth, in the units of the values (NaN when none).
    pub secondary_search_depth_err: f64,
    /// Weighted sum of squared residuals of the two-level (in/out of the primary) model (χ²
    /// with uncertainties, value² without).
    pub chi2_box: f64,
    /// The same sum for the three-level model with the searched secondary (equal to
    /// `chi2_box` when no secondary was found).
    pub chi2_with_secondary: f64,
    /// χ² / (N − 5) of the two-level model (value² without uncertainties).
    pub reduced_chi2: f64,
    /// Factor applied to the weight-based uncertainties: √χ²_red when the data carry
    /// uncertainties and χ²_red > 1 (the model or the errors do not describe the data), 1
    /// otherwise; the residual rms without uncertainties.
    pub err_scale: f64,
}

impl BoxMeasurement {
    /// Depth over its σ.
    pub fn snr(&self) -> f64 {
        if self.depth_err > 0.0 { self.depth / self.depth_err } else { f64::NAN }
    }
    /// S/N of the searched secondary.
    pub fn secondary_search_snr(&self) -> f64 {
        if self.secondary_search_depth_err > 0.0 {
            self.secondary_search_depth / self.secondary_search_depth_err
        } else {
            f64::NAN
        }
    }
}

/// Best box at one peak, measured on the unbinned points, with a refined period.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoxDetection {
    /// Refined frequency, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day: σ_P / P², from the period σ.
    pub freq_err_per_day: f64,
    /// Refined period 1/f, days.
    pub period_d: f64,
    /// 1σ of the period, days: the larger of the Δχ² profile's
    /// ([`refine_box_frequency`]) and the event-timing one ([`box_detection_at`]).
    pub period_err_d: f64,
    /// Δχ² of the best box at the refined frequency (units as [`BoxSpectrum::power`]).
    pub power: f64,
    /// Depth of the box on the unbinned points, in the units of the values (positive for
    /// a dip).
    pub depth: f64,
    /// 1σ of the depth (see [`BoxMeasurement`]).
    pub depth_err: f64,
    /// Tuned box duration, days.
    pub duration_d: f64,
    /// Half the edge step of the duration tuning (a hundredth of the shortest tuned
    /// duration): the duration and epoch resolution, days.
    pub duration_resolution_d: f64,
    /// Mid-event time of the first event after the first point, days (caller's reference).
    pub epoch_d: f64,
    /// Depth over its σ.
    pub snr: f64,
    /// Signal detection efficiency of the peak in the spectrum.
    pub sde: f64,
    /// Points inside the box.
    pub n_in_box: usize,
    /// Everything measured at the refined period (odd/even, secondary, χ²).
    pub measurement: BoxMeasurement,
}

fn check(options: &BoxOptions, grid: &FrequencyGrid) -> Result<(), SearchError> {
    if grid.start_per_day <= 0.0 {
        return Err(SearchError::InvalidParameter {
            name: "grid start (c/d)",
            value: grid.start_per_day,
            expected: "a frequency > 0 for a box search",
        });
    }
    options.durations.check(1.0 / grid.max_freq_per_day())?;
    if !(1..=100).contains(&options.bins_per_duration) {
        return Err(SearchError::InvalidParameter {
            name: "bins per duration",
            value: options.bins_per_duration as f64,
            expected: "1 to 100",
        });
    }
    Ok(())
}

/// Box search over a frequency grid (see module doc). Parallel over frequencies; each
/// trial frequency folded by the cheaper of two exact kernels (`box_fold`: each point into
/// its phase bin, or running sums read at the bin edges, which costs bins × cycles rather
/// than points on dense light curves).
pub fn box_search(series: &Series, grid: &FrequencyGrid, options: &BoxOptions) -> Result<BoxSpectrum, SearchError> {
    box_search_with(series, grid, options, FoldKernel::Cheaper, true)
}

/// Time bins per narrowest phase bin of a grid in the box search's time binning of dense
/// light curves ([`box_search`]).
pub const TIME_BINS_PER_PHASE_BIN: f64 = 1.0;

/// The box search bins a light curve in time only when that leaves fewer than this share
/// of its points.
const TIME_BINNING_GAIN: f64 = 0.7;

/// [`box_search`] with the folding kernel given and time binning on or off (tests compare
/// them).
pub(crate) fn box_search_with(
    series: &Series,
    grid: &FrequencyGrid,
    options: &BoxOptions,
    kernel: FoldKernel,
    time_binning: bool,
) -> Result<BoxSpectrum, SearchError> {
    check(options, grid)?;
    if series.len() < 5 {
        return Err(SearchError::TooFewPoints {
            needed: 5,
            got: series.len(),
            dropped: series.n_dropped,
            reason: "a box search",
        });
    }
    let w_raw: f64 = series.weight.iter().sum();
    let w: Vec<f64> = series.weight.iter().map(|v| v / w_raw).collect();
    let y = series.band_centred_values();
    let wy: Vec<f64> = w.iter().zip(&y).map(|(a, b)| a * b).collect();
    let sign = options.dip_sign();
    let t0 = series.time_d[0];
    let dt: Vec<f64> = series.time_d.iter().map(|t| t - t0).collect();
    let wpair: Vec<[f64; 2]> = w.iter().zip(&wy).map(|(&a, &b)| [a, b]).collect();
    // A dense light curve is first summed in time bins of a fraction of the narrowest phase
    // bin of the grid, when that leaves markedly fewer points to fold.
    let narrowest_phase_bin_d = [grid.start_per_day, grid.max_freq_per_day()]
        .iter()
        .map(|&f| 1.0 / (f * options.bins_at(1.0 / f) as f64))
        .fold(f64::INFINITY, f64::min);
    let binned = if time_binning {
        Some(bin_in_time(&dt, &wpair, narrowest_phase_bin_d / TIME_BINS_PER_PHASE_BIN))
            .filter(|b| (b.0.len() as f64) < TIME_BINNING_GAIN * dt.len() as f64)
    } else {
        None
    };
    let folder = match &binned {
        Some((times, sums)) => PhaseFolder::new(times, sums),
        None => PhaseFolder::new(&dt, &wpair),
    };
    let groups = grid.len.div_ceil(FOLD_GROUP);
    let grouped: Vec<[(f64, f64, f64, f64); FOLD_GROUP]> = (0..groups)
        .into_par_iter()
        .map_init(
            || {
                (
                    Vec::<[f64; 2]>::new(),
                    vec![Vec::<[f64; 2]>::new(); FOLD_GROUP],
                    Scratch::default(),
                    Vec::<f64>::new(),
                )
            },
            |(cumbuf, bins, scratch, durs), g| {
                // FOLD_GROUP neighbouring trial frequencies folded in one pass over the points
                let k0 = g * FOLD_GROUP;
                let count = FOLD_GROUP.min(grid.len - k0);
                let (mut fs, mut nbs) = ([0.0; FOLD_GROUP], [0usize; FOLD_GROUP]);
                for j in 0..count {
                    fs[j] = grid.freq_per_day(k0 + j);
                    nbs[j] = options.bins_at(1.0 / fs[j]);
                }
                folder.fold_group(&fs[..count], &nbs[..count], kernel, bins, scratch);
                let mut out = [(0.0, 0.0, 0.0, 0.0); FOLD_GROUP];
                for j in 0..count {
                    let p = 1.0 / fs[j];
                    options.durations.at_period(p, durs);
                    let best = best_box(&bins[j], p, durs, options.bins_per_duration, sign, cumbuf);
                    out[j] = match best {
                        Some((power, depth, duration, phase_time)) => (power * w_raw, depth, duration, t0 + phase_time),
                        None => (0.0, 0.0, 0.0, 0.0),
                    };
                }
                out
            },
        )
        .collect();
    let rows: Vec<(f64, f64, f64, f64)> = grouped.into_iter().flatten().take(grid.len).collect();
    Ok(BoxSpectrum {
        grid: *grid,
        power: rows.iter().map(|r| r.0).collect(),
        depth: rows.iter().map(|r| r.1).collect(),
        duration_d: rows.iter().map(|r| r.2).collect(),
        epoch_d: rows.iter().map(|r| r.3).collect(),
    })
}

/// The best box of one folded trial period `p` (days) over the durations `durs` (days),
/// from the phase-bin sums `bins` (weights normalised to a total of 1): (Δχ² per unit total
/// weight, depth, duration in days, mid-box phase time in days from the first point), or
/// `None` when no box has the sign of `sign`. Box edges at 1/`bins_per_duration` of each
/// duration; `cumbuf` is working space.
fn best_box(
    bins: &[[f64; 2]],
    p: f64,
    durs: &[f64],
    bins_per_duration: usize,
    sign: f64,
    cumbuf: &mut Vec<[f64; 2]>,
) -> Option<(f64, f64, f64, f64)> {
    let nb = bins.len();
    let q_max = durs.iter().map(|&d| ((d / p * nb as f64).round() as usize).clamp(1, nb - 1)).max().unwrap_or(1);
    // prefix sums over the wrapped bins with a leading zero, as far as the longest box
    // reaches: cw[b] = Σ_{j<b} w_bin[j mod nb], so a window [s, s+q) sums to cw[s+q] − cw[s]
    let len = nb + q_max;
    cumbuf.clear();
    cumbuf.push([0.0; 2]);
    // the running sum in registers (not re-read from the buffer each step)
    let mut acc = [0.0f64; 2];
    cumbuf.extend((0..len).map(|b| {
        let bin = bins[if b < nb { b } else { b - nb }];
        acc = [acc[0] + bin[0], acc[1] + bin[1]];
        acc
    }));
    let cum: &[[f64; 2]] = cumbuf;
    // Best box by cross-multiplication (no division in the loop): keep the numerator sy²
    // and denominator r(1−r) of the best statistic.
    let (mut best_num, mut best_den) = (0.0f64, 1.0f64);
    let (mut best_s, mut best_q, mut best_sy, mut best_r) = (0usize, 0usize, 0.0, 0.0);
    for &d in durs {
        let q = ((d / p * nb as f64).round() as usize).clamp(1, nb - 1);
        // each duration's edges at a tenth (1/bins_per_duration) of itself: longer boxes
        // slide in longer strides over the fine bins
        let stride = (q / bins_per_duration).max(1);
        let (starts, ends) = (&cum[..nb], &cum[q..q + nb]);
        for s in (0..nb).step_by(stride) {
            let (lo, hi) = (starts[s], ends[s]);
            let r = hi[0] - lo[0];
            let sy = hi[1] - lo[1];
            let den = r * (1.0 - r);
            let num = sy * sy;
            // one branch, rarely taken: the sign test alone is a coin flip per window, so
            // the tests are combined without short-circuiting
            if (sign * sy > 0.0) & (r > 1e-12) & (r < 1.0 - 1e-12) & (num * best_den > best_num * den) {
                best_num = num;
                best_den = den;
                best_s = s;
                best_q = q;
                best_sy = sy;
                best_r = r;
            }
        }
    }
    if best_num > 0.0 {
        let mid = (best_s as f64 + 0.5 * best_q as f64) / nb as f64;
        let den = best_r * (1.0 - best_r);
        Some((best_num / den, best_sy.abs() / den, best_q as f64 * p / nb as f64, (mid - mid.floor()) * p))
    } else {
        None
    }
}

/// Measures a box at period `period_d`, mid-event time `epoch_d` (days, the series'
/// reference) and duration `duration_d` on the unbinned points: depth, odd and even event
/// depths, the depth at phase 0.5 and a search for the deepest secondary dip of the same
/// duration elsewhere in phase (see [`BoxMeasurement`]). Errors: a period, epoch or
/// duration that is not finite and positive (duration under half the period), no points
/// inside or outside the box. Source: weighted means and their σ (common practice);
/// the odd/even and secondary tests as in transit vetting (e.g. Batalha et al. 2010, ApJ
/// 713, L103, from memory).
pub fn measure_box(
    series: &Series,
    period_d: f64,
    epoch_d: f64,
    duration_d: f64,
    options: &BoxOptions,
) -> Result<BoxMeasurement, SearchError> {
    if !(period_d.is_finite() && period_d > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "box period (d)",
            value: period_d,
            expected: "a finite period > 0",
        });
    }
    if !(duration_d.is_finite() && duration_d > 0.0 && duration_d < 0.5 * period_d) {
        return Err(SearchError::InvalidParameter {
            name: "box duration (d)",
            value: duration_d,
            expected: "a finite duration > 0 and under half the period",
        });
    }
    if !epoch_d.is_finite() {
        return Err(SearchError::InvalidParameter {
            name: "mid-event time (d)",
            value: epoch_d,
            expected: "a finite time",
        });
    }
    let n = series.len();
    let y = series.band_centred_values();
    let w = &series.weight;
    let sign = options.dip_sign();
    let half = 0.5 * duration_d;
    // 0: outside, 1: primary, 2: the phase-0.5 window; event number of primary points
    let mut class = vec![0u8; n];
    let mut event = vec![0i64; n];
    let mut phase = vec![0.0; n];
    for i in 0..n {
        let x = (series.time_d[i] - epoch_d) / period_d;
        let k = (x + 0.5).floor();
        let dx = (x - k) * period_d;
        phase[i] = x - x.floor();
        if dx.abs() <= half {
            class[i] = 1;
            event[i] = k as i64;
        } else if 0.5 * period_d - dx.abs() <= half {
            class[i] = 2;
        }
    }
    let (mut sw, mut swy) = ([0.0f64; 3], [0.0f64; 3]);
    let (mut so, mut soy, mut se, mut sey) = (0.0, 0.0, 0.0, 0.0);
    let mut events: Vec<i64> = Vec::new();
    for i in 0..n {
        let c = class[i] as usize;
        sw[c] += w[i];
        swy[c] += w[i] * y[i];
        if c == 1 {
            events.push(event[i]);
            if event[i].rem_euclid(2) == 1 {
                so += w[i];
                soy += w[i] * y[i];
            } else {
                se += w[i];
                sey += w[i] * y[i];
            }
        }
    }
    let n_in = class.iter().filter(|&&c| c == 1).count();
    if n_in == 0 || sw[1] <= 0.0 || sw[0] + sw[2] <= 0.0 {
        return Err(SearchError::TooFewPoints {
            needed: 1,
            got: 0,
            dropped: series.n_dropped,
            reason: "measuring a box (no points inside or outside it)",
        });
    }
    events.sort_unstable();
    events.dedup();
    let lin = swy[1] / sw[1];
    let rest_w = sw[0] + sw[2];
    let lrest = (swy[0] + swy[2]) / rest_w;
    // out-of-event level: outside both windows when there are points there
    let (w_out, lout) = if sw[0] > 0.0 { (sw[0], swy[0] / sw[0]) } else { (rest_w, lrest) };
    let chi2_box: f64 = (0..n)
        .map(|i| {
            let m = if class[i] == 1 { lin } else { lrest };
            w[i] * (y[i] - m) * (y[i] - m)
        })
        .sum();
    let red = chi2_box / (n as f64 - 5.0).max(1.0);
    let err_scale = if series.has_errors { red.max(1.0).sqrt() } else { red.sqrt() };
    let depth_of = |wa: f64, wya: f64| -> (f64, f64) {
        if wa > 0.0 {
            (sign * (wya / wa - lout), (1.0 / wa + 1.0 / w_out).sqrt() * err_scale)
        } else {
            (f64::NAN, f64::NAN)
        }
    };
    let (depth, depth_err) = depth_of(sw[1], swy[1]);
    let (odd_depth, odd_depth_err) = depth_of(so, soy);
    let (even_depth, even_depth_err) = depth_of(se, sey);
    let odd_even_sigma = odd_even_difference_sigma(series, &class, &event, &phase, period_d, duration_d, &y);
    let (secondary_depth, secondary_depth_err) = depth_of(sw[2], swy[2]);
    // Secondary search: points outside the primary, binned in phase; windows of the box
    // duration that lie wholly outside the primary.
    let q_phase = duration_d / period_d;
    let nb = ((10.0 / q_phase).ceil() as usize).clamp(20, 1 << 16);
    let mut hw = vec![0.0; nb];
    let mut hwy = vec![0.0; nb];
    for i in 0..n {
        if class[i] != 1 {
            let b = ((phase[i] * nb as f64) as usize).min(nb - 1);
            hw[b] += w[i];
            hwy[b] += w[i] * y[i];
        }
    }
    let qb = ((q_phase * nb as f64).round() as usize).max(1);
    let first = ((0.5 * q_phase * nb as f64).ceil() as usize).max(1);
    let mut best = (f64::NAN, f64::NAN, f64::NAN, f64::NEG_INFINITY);
    let (mut cw, mut cwy) = (0.0, 0.0);
    let mut start = first;
    if first + qb < nb {
        for b in first..first + qb {
            cw += hw[b];
            cwy += hwy[b];
        }
        loop {
            let end = start + qb;
            if (end as f64) > nb as f64 * (1.0 - 0.5 * q_phase) {
                break;
            }
            let other = rest_w - cw;
            if cw > 0.0 && other > 0.0 {
                let d = sign * (cwy / cw - (swy[0] + swy[2] - cwy) / other);
                let e = (1.0 / cw + 1.0 / other).sqrt() * err_scale;
                if d / e > best.3 {
                    best = ((start as f64 + 0.5 * qb as f64) / nb as f64, d, e, d / e);
                }
            }
            if end >= nb {
                break;
            }
            cw += hw[end] - hw[start];
            cwy += hwy[end] - hwy[start];
            start += 1;
        }
    }
    let (secondary_search_phase, secondary_search_depth, secondary_search_depth_err) = (best.0, best.1, best.2);
    let chi2_with_secondary = if secondary_search_phase.is_finite() {
        let in_window = |ph: f64| {
            let d = (ph - secondary_search_phase).abs();
            d.min(1.0 - d) <= 0.5 * q_phase
        };
        let (mut a, mut ay, mut b, mut by) = (0.0, 0.0, 0.0, 0.0);
        for i in 0..n {
            if class[i] != 1 {
                if in_window(phase[i]) {
                    a += w[i];
                    ay += w[i] * y[i];
                } else {
                    b += w[i];
                    by += w[i] * y[i];
                }
            }
        }
        let (la, lb) = (if a > 0.0 { ay / a } else { 0.0 }, if b > 0.0 { by / b } else { 0.0 });
        (0..n)
            .map(|i| {
                let m = if class[i] == 1 {
                    lin
                } else if in_window(phase[i]) {
                    la
                } else {
                    lb
                };
                w[i] * (y[i] - m) * (y[i] - m)
            })
            .sum()
    } else {
        chi2_box
    };
    Ok(BoxMeasurement {
        level_out: lout,
        depth,
        depth_err,
        n_in_box: n_in,
        n_events: events.len(),
        odd_depth,
        odd_depth_err,
        even_depth,
        even_depth_err,
        odd_even_sigma,
        secondary_depth,
        secondary_depth_err,
        secondary_search_phase,
        secondary_search_depth,
        secondary_search_depth_err,
        chi2_box,
        chi2_with_secondary,
        reduced_chi2: red,
        err_scale,
    })
}

/// Sub-intervals of the box in which odd and even events are compared
/// ([`odd_even_difference_sigma`]).
const ODD_EVEN_SUB_BINS: usize = 4;

/// |odd − even| / σ of the depth difference between odd- and even-numbered events, compared
/// at the same place in the event: the box is cut into [`ODD_EVEN_SUB_BINS`] equal parts of
/// its duration, the weighted odd and even means differenced in each part that has both,
/// and the differences combined by their weights. Comparing like with like keeps an
/// eclipse that is not flat-bottomed, sampled near its centre in one parity and near its
/// edges in the other, from passing for unequal minima. σ from the weights, scaled by
/// √χ²_red of the in-box points about their part's mean when that exceeds 1 on data with
/// uncertainties (or by that rms without uncertainties); the out-of-event level is common to
/// both parities and drops out. NaN when no part has both parities. Source: the odd/even
/// depth test of transit vetting (common practice), refined here to matched sub-intervals.
fn odd_even_difference_sigma(
    series: &Series,
    class: &[u8],
    event: &[i64],
    phase: &[f64],
    period_d: f64,
    duration_d: f64,
    y: &[f64],
) -> f64 {
    const M: usize = ODD_EVEN_SUB_BINS;
    let w = &series.weight;
    // [parity][part] sums of weight and weighted value
    let (mut sw, mut swy) = ([[0.0f64; M]; 2], [[0.0f64; M]; 2]);
    let mut part = vec![0usize; y.len()];
    for i in 0..y.len() {
        if class[i] != 1 {
            continue;
        }
        // offset from mid-event in units of the duration, −0.5 … 0.5
        let ph = phase[i];
        let u = (if ph > 0.5 { ph - 1.0 } else { ph }) * period_d / duration_d;
        let b = (((u + 0.5) * M as f64) as usize).min(M - 1);
        part[i] = b;
        let p = event[i].rem_euclid(2) as usize;
        sw[p][b] += w[i];
        swy[p][b] += w[i] * y[i];
    }
    // scatter of the in-box points about their part's mean (both parities together)
    let (mut chi2, mut n_in, mut used) = (0.0, 0usize, 0usize);
    for i in 0..y.len() {
        if class[i] != 1 {
            continue;
        }
        let b = part[i];
        let m = (swy[0][b] + swy[1][b]) / (sw[0][b] + sw[1][b]);
        chi2 += w[i] * (y[i] - m) * (y[i] - m);
        n_in += 1;
    }
    let (mut sd, mut sww) = (0.0, 0.0);
    for b in 0..M {
        if sw[0][b] > 0.0 && sw[1][b] > 0.0 {
            let d = swy[1][b] / sw[1][b] - swy[0][b] / sw[0][b];
            let var = 1.0 / sw[0][b] + 1.0 / sw[1][b];
            sd += d / var;
            sww += 1.0 / var;
            used += 1;
        }
    }
    if used == 0 {
        return f64::NAN;
    }
    let dof = n_in.saturating_sub(2 * used).max(1) as f64;
    let red = chi2 / dof;
    let scale = if series.has_errors { red.max(1.0).sqrt() } else { red.sqrt() };
    let sigma = (1.0 / sww).sqrt() * scale;
    if sigma > 0.0 { (sd / sww).abs() / sigma } else { f64::NAN }
}

/// A box peak's frequency refined on a fine local grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoxFrequencyRefinement {
    /// Frequency of the highest Δχ² on the fine grid, cycles per day.
    pub freq_per_day: f64,
    /// 1σ of the frequency from the Δχ² profile, cycles per day (at least half a fine step).
    pub freq_err_per_day: f64,
    /// Mid-event time of the best box there, days (caller's reference).
    pub epoch_d: f64,
    /// Duration of the best box there, days.
    pub duration_d: f64,
    /// Δχ² of the best box there (units as [`BoxSpectrum::power`]).
    pub power: f64,
    /// Half the phase-bin width there, days: the edge resolution of epoch and duration.
    pub resolution_d: f64,
}

/// Refines the box peak near `freq_per_day` (found on a grid of step `grid_step_per_day`)
/// on fine local grids (box edges at a hundredth of the shortest duration) and gives its 1σ from the profile of the best-box
/// Δχ²: half the width of the frequency interval where Δχ² stays within `chi2_drop` of its
/// maximum. `chi2_drop` is 1 for one parameter with correct uncertainties (Press et al.,
/// Numerical Recipes 3rd ed., §15.6.5); pass χ²_red when it exceeds 1, or the residual
/// variance for data without uncertainties. The interval is the envelope of all local-grid
/// frequencies within `chi2_drop` of the maximum (the statistic jumps as single points
/// cross a box edge). The local grid widens or narrows until the interval spans at least
/// ten fine steps (at most six rounds). Pass the durations of `options` close to the
/// event's (see [`box_detection_at`]): a box much shorter than the event slides inside it
/// and flattens the profile.
pub fn refine_box_frequency(
    series: &Series,
    freq_per_day: f64,
    grid_step_per_day: f64,
    options: &BoxOptions,
    chi2_drop: f64,
) -> Result<BoxFrequencyRefinement, SearchError> {
    if !(freq_per_day.is_finite() && freq_per_day > 0.0 && grid_step_per_day.is_finite() && grid_step_per_day > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "box peak frequency (c/d)",
            value: freq_per_day,
            expected: "a finite frequency > 0 and a grid step > 0",
        });
    }
    if !(chi2_drop.is_finite() && chi2_drop > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "Δχ² of one σ",
            value: chi2_drop,
            expected: "a finite value > 0",
        });
    }
    // edges at a hundredth of the shortest duration: the profile must resolve shifts well
    // below the search's edge resolution
    let fine = BoxOptions { bins_per_duration: 100, ..options.clone() };
    const N: usize = 121;
    let mut centre = freq_per_day;
    let mut half_span = 2.0 * grid_step_per_day;
    let mut out = None;
    for round in 0..6 {
        let lo = (centre - half_span).max(0.5 * centre);
        let step = (centre + half_span - lo) / (N - 1) as f64;
        let grid = FrequencyGrid::new(lo, step, N)?;
        let b = box_search(series, &grid, &fine)?;
        let k = (0..N).max_by(|&i, &j| b.power[i].total_cmp(&b.power[j])).unwrap_or(0);
        let top = b.power[k];
        let thr = top - chi2_drop;
        // the envelope of the frequencies within `chi2_drop` of the maximum: the statistic
        // jumps as single points cross a box edge, so the interval is not cut at the first dip
        let a = (0..N).find(|&i| b.power[i] >= thr).unwrap_or(k);
        let z = (0..N).rev().find(|&i| b.power[i] >= thr).unwrap_or(k);
        let at_edge = a == 0 || z == N - 1;
        let last = round == 5;
        if at_edge && !last {
            half_span *= 3.0;
            centre = grid.freq_per_day(k);
            continue;
        }
        if !at_edge && z - a < 10 && !last {
            half_span = 2.0 * (z - a + 2) as f64 * step;
            centre = grid.freq_per_day(k);
            continue;
        }
        // linear interpolation of the threshold crossings
        let cross = |i: usize, j: usize| {
            let (pi, pj) = (b.power[i], b.power[j]);
            let (fi, fj) = (grid.freq_per_day(i), grid.freq_per_day(j));
            if (pi - pj).abs() > 0.0 { fi + (thr - pi) / (pj - pi) * (fj - fi) } else { fi }
        };
        let f_lo = if a > 0 { cross(a, a - 1) } else { grid.freq_per_day(0) };
        let f_hi = if z + 1 < N { cross(z, z + 1) } else { grid.freq_per_day(N - 1) };
        let f = grid.freq_per_day(k);
        out = Some(BoxFrequencyRefinement {
            freq_per_day: f,
            freq_err_per_day: (0.5 * (f_hi - f_lo)).max(0.5 * step),
            epoch_d: b.epoch_d[k],
            duration_d: b.duration_d[k],
            power: top,
            resolution_d: 0.5 / (f * fine.bins_at(1.0 / f) as f64),
        });
        break;
    }
    out.ok_or(SearchError::InvalidParameter {
        name: "box peak frequency (c/d)",
        value: freq_per_day,
        expected: "a peak the refinement can bracket",
    })
}

/// Measures the best box at grid index `k` of `spectrum` on the unbinned points: the
/// period refined with its σ ([`refine_box_frequency`], Δχ² drop of max(1, χ²_red), or the
/// residual variance without uncertainties), then [`measure_box`] there, and the SDE.
pub fn box_detection(
    series: &Series,
    spectrum: &BoxSpectrum,
    k: usize,
    options: &BoxOptions,
) -> Result<BoxDetection, SearchError> {
    let m = spectrum.power.len();
    if k >= m {
        return Err(SearchError::InvalidParameter {
            name: "grid index",
            value: k as f64,
            expected: "an index inside the spectrum",
        });
    }
    check(options, &spectrum.grid)?;
    let mean = spectrum.power.iter().sum::<f64>() / m as f64;
    let sd = (spectrum.power.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / m.max(2) as f64).sqrt();
    let sde = if sd > 0.0 { (spectrum.power[k] - mean) / sd } else { 0.0 };
    let f = spectrum.grid.freq_per_day(k);
    box_detection_at(series, f, spectrum.epoch_d[k], spectrum.duration_d[k], spectrum.grid.step_per_day, sde, options)
}

/// The best mid-event time and duration at one frequency: durations from half to twice
/// `duration_d` in 41 geometric steps (3.5 % apart, below half the period), box edges at a
/// hundredth of the shortest. Returns (mid-event time, duration, Δχ²).
fn tune_duration(
    series: &Series,
    freq_per_day: f64,
    duration_d: f64,
    options: &BoxOptions,
) -> Result<(f64, f64, f64), SearchError> {
    let p = 1.0 / freq_per_day;
    let top = 0.45 * p;
    let lo = (0.5 * duration_d).min(0.5 * top);
    let ratio = (((2.0 * duration_d).min(top)) / lo).max(1.0 + 1e-9).powf(1.0 / 40.0);
    let durations: Vec<f64> = (0..41).map(|j| lo * ratio.powi(j)).filter(|&d| d < 0.5 * p).collect();
    let tuned = BoxOptions { durations: BoxDurations::Fixed(durations), bins_per_duration: 100, ..options.clone() };
    let grid = FrequencyGrid::new(freq_per_day, freq_per_day * 1e-9, 1)?;
    let b = box_search(series, &grid, &tuned)?;
    Ok((b.epoch_d[0], b.duration_d[0], b.power[0]))
}

/// [`box_detection`] from a given frequency (c/d), mid-event time and duration (days),
/// searched on a grid of step `grid_step_per_day`; `sde` is passed through. Steps: the
/// duration and mid-event time tuned at the peak (41 durations from half to twice the
/// search's), the frequency refined with boxes within ±5 % of that duration
/// ([`refine_box_frequency`], Δχ² drop max(1, χ²_red) or the residual variance without
/// uncertainties), the duration tuned again there, then [`measure_box`]. The period σ is
/// the larger of the profile's and the one from the event times (each event timed alone,
/// a straight line through them; see `period_sigma_from_event_times`).
pub fn box_detection_at(
    series: &Series,
    freq_per_day: f64,
    epoch_d: f64,
    duration_d: f64,
    grid_step_per_day: f64,
    sde: f64,
    options: &BoxOptions,
) -> Result<BoxDetection, SearchError> {
    let coarse = measure_box(series, 1.0 / freq_per_day, epoch_d, duration_d, options)?;
    let drop = if series.has_errors { coarse.reduced_chi2.max(1.0) } else { coarse.reduced_chi2 };
    let (_, d1, _) = tune_duration(series, freq_per_day, duration_d, options)?;
    let near = BoxOptions {
        durations: BoxDurations::Fixed(
            [0.95, 1.0, 1.05].iter().map(|r| r * d1).filter(|&d| d < 0.45 / freq_per_day).collect(),
        ),
        bins_per_duration: 10,
        ..options.clone()
    };
    let r = refine_box_frequency(series, freq_per_day, grid_step_per_day, &near, drop.max(1e-300))?;
    let (epoch0, duration, power) = tune_duration(series, r.freq_per_day, d1, options)?;
    let p = 1.0 / r.freq_per_day;
    // the first event after the first point
    let t_first = series.time_d[0];
    let epoch = epoch0 + ((t_first - epoch0) / p).ceil() * p;
    let mm = measure_box(series, p, epoch, duration, options)?;
    // the larger of the Δχ² profile's σ and the event-timing σ
    let timing = period_sigma_from_event_times(series, p, epoch, duration, &mm, options.dip_sign());
    let profile = r.freq_err_per_day * p * p;
    let period_err_d = if timing.is_finite() { profile.max(timing) } else { profile };
    Ok(BoxDetection {
        freq_per_day: r.freq_per_day,
        freq_err_per_day: period_err_d / (p * p),
        period_d: p,
        period_err_d,
        power,
        depth: mm.depth,
        depth_err: mm.depth_err,
        duration_d: duration,
        duration_resolution_d: 0.5 * 0.5 * d1 / 100.0,
        epoch_d: epoch,
        snr: mm.snr(),
        sde,
        n_in_box: mm.n_in_box,
        measurement: mm,
    })
}

/// The period σ from the event times: each observed event's mid-time is fitted alone (the
/// box of the measured depth and duration slid over ±half a duration in 200 steps; its σ
/// the half-width where χ² stays within max(1, χ²_red) of its minimum, at least a step),
/// then a weighted straight line t_k = T₀ + k·P gives σ_P, scaled by √(χ²/dof) of that line
/// when it exceeds 1 (three or more events). This catches the scatter of a box whose
/// sharp edges make the Δχ² profile of the whole light curve too narrow. Returns NaN with
/// fewer than two timed events. Source: a linear ephemeris by weighted least squares
/// (common practice, as for O–C analysis).
fn period_sigma_from_event_times(
    series: &Series,
    period_d: f64,
    epoch_d: f64,
    duration_d: f64,
    m: &BoxMeasurement,
    sign: f64,
) -> f64 {
    let y = series.band_centred_values();
    let w = &series.weight;
    let t = &series.time_d;
    let inside_level = m.level_out + sign * m.depth;
    let drop = if series.has_errors { m.reduced_chi2.max(1.0) } else { m.reduced_chi2.max(1e-300) };
    let (first, last) = (t[0], t[t.len() - 1]);
    let k0 = ((first - epoch_d) / period_d).floor() as i64 - 1;
    let k1 = ((last - epoch_d) / period_d).ceil() as i64 + 1;
    const STEPS: usize = 200;
    let step = duration_d / STEPS as f64;
    let mut events: Vec<(f64, f64, f64)> = Vec::new(); // (k, time, σ)
    for k in k0..=k1 {
        let c = epoch_d + k as f64 * period_d;
        let lo = t.partition_point(|&x| x < c - 1.5 * duration_d);
        let hi = t.partition_point(|&x| x <= c + 1.5 * duration_d);
        let pts: Vec<usize> = (lo..hi).collect();
        // an event needs points inside and outside the box
        let n_in = pts.iter().filter(|&&i| (t[i] - c).abs() <= 0.5 * duration_d).count();
        if n_in < 2 || pts.len() < n_in + 2 {
            continue;
        }
        let chi: Vec<f64> = (0..=STEPS)
            .map(|j| {
                let cc = c - 0.5 * duration_d + j as f64 * step;
                pts.iter()
                    .map(|&i| {
                        let mdl = if (t[i] - cc).abs() <= 0.5 * duration_d { inside_level } else { m.level_out };
                        w[i] * (y[i] - mdl) * (y[i] - mdl)
                    })
                    .sum()
            })
            .collect();
        let (jbest, cmin) =
            chi.iter().cloned().enumerate().fold((0, f64::INFINITY), |a, (j, v)| if v < a.1 { (j, v) } else { a });
        if jbest == 0 || jbest == STEPS {
            continue; // not bracketed: the event is not timed
        }
        let a = (0..=STEPS).find(|&j| chi[j] <= cmin + drop).unwrap_or(jbest);
        let z = (0..=STEPS).rev().find(|&j| chi[j] <= cmin + drop).unwrap_or(jbest);
        let sigma = (0.5 * (z - a) as f64 * step).max(step);
        events.push((k as f64, c - 0.5 * duration_d + jbest as f64 * step, sigma));
    }
    if events.len() < 2 {
        return f64::NAN;
    }
    // weighted line t = T0 + k P
    let (mut s0, mut s1, mut s2, mut sy, mut sky) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for &(k, tt, sg) in &events {
        let wk = 1.0 / (sg * sg);
        s0 += wk;
        s1 += wk * k;
        s2 += wk * k * k;
        sy += wk * tt;
        sky += wk * k * tt;
    }
    let det = s0 * s2 - s1 * s1;
    if det <= 0.0 {
        return f64::NAN;
    }
    let slope = (s0 * sky - s1 * sy) / det;
    let icpt = (s2 * sy - s1 * sky) / det;
    let mut sig_p = (s0 / det).sqrt();
    if events.len() >= 3 {
        let chi2: f64 = events.iter().map(|&(k, tt, sg)| ((tt - icpt - slope * k) / sg).powi(2)).sum();
        let red = chi2 / (events.len() - 2) as f64;
        if red > 1.0 {
            sig_p *= red.sqrt();
        }
    }
    sig_p
}

/// How a box peak's period was settled between P and 2P.
#[derive(Debug, Clone, PartialEq)]
pub struct EclipsePeriodDecision {
    /// The detection at the period taken.
    pub detection: BoxDetection,
    /// Whether the period was doubled from the box peak's.
    pub doubled: bool,
    /// What was decided and why, in words.
    pub note: String,
}

/// Settles whether a box peak at P is the period or half the period of an eclipsing binary
/// with unequal minima: when the odd and even events differ in depth by more than
/// [`ODD_EVEN_DOUBLING_SIGMA`], the period is doubled (the deeper events become the
/// primary, the others the secondary at phase 0.5) and measured again; when only one parity
/// of events has points (and the baseline spans at least four cycles), the period is also
/// doubled, the data fitting 2P as well; otherwise P stays, with the secondary and odd/even
/// evidence stated. Source: common practice in eclipse
/// and transit vetting (odd/even depth test).
pub fn settle_eclipse_period(
    series: &Series,
    detection: &BoxDetection,
    grid_step_per_day: f64,
    options: &BoxOptions,
) -> Result<EclipsePeriodDecision, SearchError> {
    let m = &detection.measurement;
    let p = detection.period_d;
    let one_parity = m.odd_depth.is_nan() != m.even_depth.is_nan();
    if one_parity && detection.freq_per_day * series.baseline_d() >= 4.0 {
        // every other event falls in the gaps: twice the period fits the data as well and
        // predicts no unobserved events; the longer period is taken
        let epoch = if m.even_depth.is_nan() { detection.epoch_d + p } else { detection.epoch_d };
        let doubled = box_detection_at(
            series,
            0.5 * detection.freq_per_day,
            epoch,
            detection.duration_d,
            0.5 * grid_step_per_day,
            detection.sde,
            options,
        )?;
        let note = format!(
            "period doubled to {:.7} d: only alternate events at {:.7} d have points, so twice that period fits as well (half the period stays possible)",
            doubled.period_d, p
        );
        return Ok(EclipsePeriodDecision { detection: doubled, doubled: true, note });
    }
    if m.odd_even_sigma.is_finite() && m.odd_even_sigma > ODD_EVEN_DOUBLING_SIGMA {
        let epoch = if m.odd_depth > m.even_depth { detection.epoch_d + p } else { detection.epoch_d };
        let doubled = box_detection_at(
            series,
            0.5 * detection.freq_per_day,
            epoch,
            detection.duration_d,
            0.5 * grid_step_per_day,
            detection.sde,
            options,
        )?;
        let note = format!(
            "period doubled to {:.7} d: alternate minima differ by {:.1} sigma (depths {:.4} ± {:.4} and {:.4} ± {:.4}), so the box peak at {:.7} d folds a primary and a secondary eclipse together",
            doubled.period_d,
            m.odd_even_sigma,
            m.odd_depth.max(m.even_depth),
            if m.odd_depth > m.even_depth { m.odd_depth_err } else { m.even_depth_err },
            m.odd_depth.min(m.even_depth),
            if m.odd_depth > m.even_depth { m.even_depth_err } else { m.odd_depth_err },
            p
        );
        return Ok(EclipsePeriodDecision { detection: doubled, doubled: true, note });
    }
    let sec = if m.secondary_depth.is_finite() && m.secondary_depth_err > 0.0 {
        format!(
            "; depth at phase 0.5 {:.4} ± {:.4} ({:.1} sigma)",
            m.secondary_depth,
            m.secondary_depth_err,
            m.secondary_depth / m.secondary_depth_err
        )
    } else {
        "; no points at phase 0.5".to_string()
    };
    let oe = if m.odd_even_sigma.is_finite() {
        format!("odd and even events agree within {:.1} sigma", m.odd_even_sigma)
    } else {
        "odd and even events not both observed".to_string()
    };
    Ok(EclipsePeriodDecision {
        detection: *detection,
        doubled: false,
        note: format!("period kept at the box peak: {oe}{sec}"),
    })
}

/// Box least squares as a [`Periodogram`] (power = Δχ² of the best box).
#[derive(Debug, Clone, PartialEq)]
pub struct BoxFitPeriodogram {
    /// Trial durations, edge resolution and whether the values are magnitudes.
    pub options: BoxOptions,
}

impl Periodogram for BoxFitPeriodogram {
    fn name(&self) -> &'static str {
        "box least squares"
    }
    fn min_points(&self) -> usize {
        5
    }
    fn evaluate_unchecked(&self, series: &Series, grid: &FrequencyGrid) -> Result<Spectrum, SearchError> {
        let b = box_search(series, grid, &self.options)?;
        Ok(Spectrum { grid: *grid, power: b.power, amplitude: Some(b.depth), algorithm: None })
    }
}

/// Reference twin for tests and benchmarks: for every trial frequency, duration and epoch
/// on the same bin grid, sums over all points directly (O(N · bins) per frequency and
/// duration), single-threaded. Returns the Δχ² per frequency.
pub fn box_search_direct(series: &Series, grid: &FrequencyGrid, options: &BoxOptions) -> Result<Vec<f64>, SearchError> {
    check(options, grid)?;
    let w_raw: f64 = series.weight.iter().sum();
    let w: Vec<f64> = series.weight.iter().map(|v| v / w_raw).collect();
    let y = series.band_centred_values();
    let sign = options.dip_sign();
    let t0 = series.time_d[0];
    let mut out = vec![0.0; grid.len];
    let mut durs = Vec::new();
    for (k, o) in out.iter_mut().enumerate() {
        let f = grid.freq_per_day(k);
        let p = 1.0 / f;
        let nb = options.bins_at(p);
        options.durations.at_period(p, &mut durs);
        let bins: Vec<usize> = series
            .time_d
            .iter()
            .map(|&t| {
                let x = (t - t0) * f;
                (((x - x.floor()) * nb as f64) as usize).min(nb - 1)
            })
            .collect();
        for &d in &durs {
            let q = ((d / p * nb as f64).round() as usize).clamp(1, nb - 1);
            let stride = (q / options.bins_per_duration).max(1);
            for s in (0..nb).step_by(stride) {
                let (mut r, mut sy) = (0.0, 0.0);
                for i in 0..series.len() {
                    let rel = (bins[i] + nb - s) % nb;
                    if rel < q {
                        r += w[i];
                        sy += w[i] * y[i];
                    }
                }
                if r <= 1e-12 || r >= 1.0 - 1e-12 || sign * sy <= 0.0 {
                    continue;
                }
                *o = f64::max(*o, sy * sy / (r * (1.0 - r)) * w_raw);
            }
        }
    }
    Ok(out)
}

/// A frequency grid for a box search between `min_period_d` and `max_period_d` with fixed
/// durations: the step keeps the drift of a box edge across the baseline T under
/// min_duration/oversampling, Δf = min_duration / (oversampling · T · max_period) (common
/// practice; cf. Ofir 2014, A&A 561, A138, for the underlying phase-drift argument).
pub fn plan_box_grid(
    baseline_d: f64,
    min_period_d: f64,
    max_period_d: f64,
    min_duration_d: f64,
    oversampling: f64,
    memory_limit_bytes: u128,
) -> Result<super::GridPlan, SearchError> {
    if !(min_period_d.is_finite() && min_period_d > 0.0 && max_period_d.is_finite() && max_period_d > min_period_d) {
        return Err(SearchError::InvalidParameter {
            name: "period range (d)",
            value: max_period_d,
            expected: "0 < minimum period < maximum period",
        });
    }
    if max_period_d > baseline_d {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: 1.0 / max_period_d,
            max_freq_per_day: 1.0 / min_period_d,
            baseline_d,
            reason: "the longest period asked for exceeds the baseline",
        });
    }
    if !(min_duration_d.is_finite() && min_duration_d > 0.0 && min_duration_d < 0.5 * min_period_d) {
        return Err(SearchError::InvalidParameter {
            name: "shortest box duration (d)",
            value: min_duration_d,
            expected: "a duration > 0 and under half the shortest period",
        });
    }
    plan_box_grid_for(
        baseline_d,
        1.0 / max_period_d,
        1.0 / min_period_d,
        &BoxDurations::Fixed(vec![min_duration_d]),
        oversampling,
        memory_limit_bytes,
    )
}

/// A frequency grid for a box search from `min_freq_per_day` to `max_freq_per_day` with
/// these durations, uniform in frequency with the step that keeps the drift of a box edge
/// over the baseline T under the shortest duration / oversampling at every trial period P:
/// the phase drift over T of a step Δf is Δf·T·P days, so Δf = min over P of
/// d_min(P) / (oversampling · T · P) — d_min / (oversampling · T · P_max) for fixed
/// durations, q_min / (oversampling · T) for duty cycles. Source: the phase-drift argument
/// of Ofir (2014), A&A 561, A138, §2 (common practice). Errors: a baseline ≤ 0, a range
/// not 1/T ≤ min < max, oversampling outside 1–1000, bad durations, a grid over the
/// memory limit (with the estimate).
pub fn plan_box_grid_for(
    baseline_d: f64,
    min_freq_per_day: f64,
    max_freq_per_day: f64,
    durations: &BoxDurations,
    oversampling: f64,
    memory_limit_bytes: u128,
) -> Result<super::GridPlan, SearchError> {
    if !(baseline_d.is_finite() && baseline_d > 0.0) {
        return Err(SearchError::InvalidParameter {
            name: "baseline (d)",
            value: baseline_d,
            expected: "times spanning more than zero days",
        });
    }
    let (f0, f1) = (min_freq_per_day, max_freq_per_day);
    if !(f0.is_finite() && f1.is_finite() && f0 > 0.0 && f1 > f0) {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: f0,
            max_freq_per_day: f1,
            baseline_d,
            reason: "a box search needs 0 < minimum frequency < maximum frequency",
        });
    }
    if f0 < (1.0 - 1e-9) / baseline_d {
        return Err(SearchError::UnresolvableRange {
            min_freq_per_day: f0,
            max_freq_per_day: f1,
            baseline_d,
            reason: "the longest period asked for exceeds the baseline (lowest frequency must be ≥ 1/baseline)",
        });
    }
    if !(oversampling.is_finite() && (1.0..=1000.0).contains(&oversampling)) {
        return Err(SearchError::InvalidParameter {
            name: "oversampling",
            value: oversampling,
            expected: "a number from 1 to 1000",
        });
    }
    durations.check(1.0 / f1)?;
    let step = match durations {
        BoxDurations::Fixed(_) => durations.shortest_d(1.0) * f0,
        BoxDurations::DutyCycles { shortest, .. } => *shortest,
    } / (oversampling * baseline_d);
    let n = ((f1 - f0) / step).floor() + 1.0;
    let bytes = (n * super::grid::BYTES_PER_FREQUENCY as f64) as u128;
    if n > 4.0e9 || bytes > memory_limit_bytes {
        return Err(SearchError::GridTooLarge {
            n_freq: n.min(usize::MAX as f64) as usize,
            bytes_needed: bytes,
            bytes_limit: memory_limit_bytes,
        });
    }
    Ok(super::GridPlan { grid: FrequencyGrid::new(f0, step, n as usize)?, bytes_estimate: bytes })
}
