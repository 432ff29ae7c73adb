//! `skyclock find-periods`: periodogram of one light curve, its top peaks with
//! uncertainties, false-alarm probabilities and alias notes.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;
use polars::prelude::*;

use super::common::{BrightnessArg, spinner, write_text};
use super::light_curve_input::LightCurveArgs;
use skyclock::periodogram::bls::BoxDurations;
use skyclock::periodogram::significance::BootstrapOptions;
use skyclock::periodogram::{Algorithm, GridRequest};
use skyclock::survey::report::{format_false_alarm, period_search_report};
use skyclock::survey::search::{SearchMethod, SearchPlan, describe_alias, search_series};
use skyclock::table::{Provenance, Summary, write_table};

const EXAMPLE: &str = "Example (invented star, times already BJD_TDB):
  skyclock find-periods --input vx_invented.csv --time-column bjd --value-column mag \\
      --error-column mag_err --max-freq-per-day 20 --peaks 5 \\
      --output vx_spectrum.csv --summary vx_peaks.json
  Writes the spectrum (freq_per_day, period_d, power[, amplitude]) and the peaks as JSON:
  frequency, period, amplitude and phase with least-squares errors, false-alarm
  probability (Baluev 2008, for the sinusoid methods) and notes when a peak is a likely
  alias of a stronger one (±n c/sidereal day, ±n c/yr, harmonics, window sidelobes).
  Times in another clock: add --clock jd_utc --site-coordinates LON,LAT,H --ra .. --dec ..";

/// Statistic to search.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum MethodArg {
    /// Generalised Lomb-Scargle (floating mean; per-band zero points with --band-column).
    Sinusoid,
    /// Classical Lomb-Scargle on mean-subtracted values.
    ClassicalSinusoid,
    /// Fourier series with --harmonics terms (non-sinusoidal pulsators, eclipses).
    Harmonics,
    /// Phase dispersion minimisation (power = 1 - theta).
    PhaseDispersion,
    /// Conditional entropy (power = ln(value bins) - H_c).
    ConditionalEntropy,
    /// Box least squares for transits and eclipses over --durations-d.
    Box,
}

/// Kernel for the Lomb-Scargle family.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum KernelArg {
    /// Fast when points x frequencies is large, exact otherwise.
    Auto,
    /// Exact sums (slow on large grids).
    Exact,
    /// Gaussian gridding + FFT, a non-uniform FFT (power within 1e-4 of exact).
    Fast,
}

impl KernelArg {
    pub fn algorithm(self) -> Algorithm {
        match self {
            KernelArg::Auto => Algorithm::Auto,
            KernelArg::Exact => Algorithm::Exact,
            KernelArg::Fast => Algorithm::Fast,
        }
    }
}

/// Method and grid options shared with `survey-batch`.
#[derive(Debug, Clone, ClapArgs)]
pub struct SearchOptionArgs {
    /// Statistic searched [default: sinusoid for find-periods; for survey-batch a cascade of
    /// sinusoid, harmonic series and box search per source, best by BIC, with a class].
    #[arg(long, value_enum)]
    pub method: Option<MethodArg>,
    /// Harmonics for --method harmonics (also its period refinement) and for the harmonic
    /// stage of the survey cascade (1 to 5 there).
    #[arg(long, default_value_t = 3)]
    pub harmonics: usize,
    /// Phase bins for phase-dispersion and conditional-entropy.
    #[arg(long, default_value_t = 10)]
    pub phase_bins: usize,
    /// Box durations in days for --method box, comma-separated [default: 8 durations from
    /// 1 % to 15 % of each trial period, so that the durations scale with the period].
    #[arg(long, value_name = "D1,D2,..")]
    pub durations_d: Option<String>,
    /// What the values are (for --method box: with magnitudes a dip is an increase).
    #[arg(long, value_enum, default_value_t = BrightnessArg::Magnitude)]
    pub brightness: BrightnessArg,
    /// Highest frequency searched, cycles per day.
    #[arg(long, default_value_t = 10.0)]
    pub max_freq_per_day: f64,
    /// Lowest frequency searched, cycles per day (default 1/baseline).
    #[arg(long)]
    pub min_freq_per_day: Option<f64>,
    /// Frequencies per resolution element 1/baseline.
    #[arg(long, default_value_t = 5.0)]
    pub oversampling: f64,
    /// Kernel for the Lomb-Scargle family.
    #[arg(long, value_enum, default_value_t = KernelArg::Auto)]
    pub kernel: KernelArg,
    /// Number of peaks reported.
    #[arg(long, default_value_t = 5)]
    pub peaks: usize,
    /// Refuse grids needing more memory than this, GiB.
    #[arg(long, default_value_t = 2.0)]
    pub memory_limit_gib: f64,
    /// Bootstrap false-alarm probability of the top peak with this many trials.
    #[arg(long)]
    pub bootstrap_trials: Option<usize>,
    /// Seed of the bootstrap.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
}

impl SearchOptionArgs {
    /// The search plan these options describe.
    pub fn plan(&self, window_sidelobes: usize) -> Result<SearchPlan> {
        let method = match self.method.unwrap_or(MethodArg::Sinusoid) {
            MethodArg::Sinusoid => SearchMethod::Sinusoid,
            MethodArg::ClassicalSinusoid => SearchMethod::ClassicalSinusoid,
            MethodArg::Harmonics => SearchMethod::Harmonics(self.harmonics),
            MethodArg::PhaseDispersion => SearchMethod::PhaseDispersion(self.phase_bins),
            MethodArg::ConditionalEntropy => {
                SearchMethod::ConditionalEntropy { phase_bins: self.phase_bins, value_bins: 10 }
            }
            MethodArg::Box => SearchMethod::Box {
                durations: self.box_durations()?,
                values_are_magnitudes: self.brightness == BrightnessArg::Magnitude,
            },
        };
        self.plan_with(method, window_sidelobes)
    }

    /// The box durations these options describe: --durations-d, or durations that scale
    /// with the trial period.
    pub fn box_durations(&self) -> Result<BoxDurations> {
        let Some(text) = &self.durations_d else { return Ok(BoxDurations::default_duty_cycles()) };
        let mut d = Vec::new();
        for part in text.split(',') {
            let v: f64 =
                part.trim().parse().map_err(|_| anyhow::anyhow!("--durations-d: '{part}' is not a number of days"))?;
            if !(v.is_finite() && v > 0.0) {
                anyhow::bail!("--durations-d: every duration must be > 0 days, got {v}");
            }
            d.push(v);
        }
        Ok(BoxDurations::Fixed(d))
    }

    /// A plan for `method` with the grid, kernel, peak and bootstrap options given.
    pub fn plan_with(&self, method: SearchMethod, window_sidelobes: usize) -> Result<SearchPlan> {
        if !(self.memory_limit_gib.is_finite() && self.memory_limit_gib > 0.0) {
            anyhow::bail!("--memory-limit-gib must be > 0, got {}", self.memory_limit_gib);
        }
        Ok(SearchPlan {
            method,
            algorithm: self.kernel.algorithm(),
            grid: GridRequest {
                oversampling: self.oversampling,
                min_freq_per_day: self.min_freq_per_day,
                max_freq_per_day: self.max_freq_per_day,
                memory_limit_bytes: (self.memory_limit_gib * (1u64 << 30) as f64) as u128,
            },
            peaks: self.peaks,
            refine_peaks: true,
            window_sidelobes,
            bootstrap: self.bootstrap_trials.map(|trials| BootstrapOptions { trials, seed: self.seed }),
        })
    }
}

/// Arguments of `skyclock find-periods`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub light_curve: LightCurveArgs,
    #[command(flatten)]
    pub search: SearchOptionArgs,
    /// Spectrum table output (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// JSON summary: peaks with errors, false-alarm probabilities and alias notes, grid,
    /// box detection (the same text `--json` prints).
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Figure of the periodogram with the peaks and alias notes marked (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub figure: Option<PathBuf>,
    /// Print a machine-readable summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no progress display, no result lines).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let pb = spinner("searching", a.quiet);
    let (lc, note) = a.light_curve.load()?;
    let series = lc.series()?;
    let plan = a.search.plan(3)?;
    let out = search_series(&series, &plan).map_err(|e| lc.locate(e))?;
    pb.finish_and_clear();
    let input = a.light_curve.input.as_path();
    let epoch = lc.epoch_jd_text();
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "find-periods")
        .with("input", input.display().to_string())
        .with("method", plan.method.label())
        .with("times", note.clone())
        .with("time_reference_bjd_tdb", epoch.clone());
    if let Some(path) = &a.output {
        let f = out.spectrum.grid.frequencies();
        let period: Vec<f64> = f.iter().map(|x| 1.0 / x).collect();
        let mut cols = vec![
            Column::new("freq_per_day".into(), f),
            Column::new("period_d".into(), period),
            Column::new("power".into(), out.spectrum.power.clone()),
        ];
        if let Some(amp) = &out.spectrum.amplitude {
            cols.push(Column::new("amplitude".into(), amp.clone()));
        }
        let mut df = DataFrame::new_infer_height(cols)?;
        write_table(&mut df, path, &provenance, &[input])?;
    }
    if let Some(path) = &a.figure {
        use skyclock::plot::{search::periodogram_figure, write_figure};
        skyclock::table::refuse_overwriting_inputs(path, &[input])?;
        let fig = periodogram_figure(&out, &format!("{} — {}", plan.method.label(), input.display()));
        write_figure(&fig, path)?;
    }
    let report = period_search_report(&out, &plan.method.label(), &note, &epoch);
    let outputs: Vec<String> =
        [&a.output, &a.summary, &a.figure].into_iter().flatten().map(|p| p.display().to_string()).collect();
    let text = Summary::new(report, provenance, vec![input.display().to_string()], outputs).to_json()?;
    if let Some(path) = &a.summary {
        write_text(path, &text, &[input])?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} on {} points ({} rows with NaN dropped), baseline {:.3} d, {} frequencies",
            plan.method.label(),
            out.n_points,
            out.n_dropped,
            out.baseline_d,
            out.spectrum.grid.len
        );
        for (k, p) in out.peaks.iter().enumerate() {
            let notes = p.peak.aliases.iter().map(describe_alias).collect::<Vec<_>>().join("; ");
            println!(
                "  {}. period {:.8} ± {:.2e} d  power {:.4}  FAP {}{}",
                k + 1,
                p.peak.period_d,
                p.peak.period_err_d,
                p.peak.power,
                format_false_alarm(p.fap, p.log10_fap),
                if notes.is_empty() { String::new() } else { format!("  [{notes}]") }
            );
        }
        if let Some(b) = &out.box_detection {
            let m = &b.measurement;
            println!(
                "  best box: period {:.8} ± {:.2e} d, depth {:.5} ± {:.5} (S/N {:.1}, SDE {:.1}), duration {:.4} d, mid-event {:.5} d after the reference, {} events",
                b.period_d, b.period_err_d, b.depth, b.depth_err, b.snr, b.sde, b.duration_d, b.epoch_d, m.n_events
            );
            println!(
                "    odd/even depths {:.5} / {:.5} ({:.1} sigma apart); depth at phase 0.5 {:.5} ± {:.5}; deepest other dip at phase {:.3}: {:.5} ± {:.5}",
                m.odd_depth,
                m.even_depth,
                m.odd_even_sigma,
                m.secondary_depth,
                m.secondary_depth_err,
                m.secondary_search_phase,
                m.secondary_search_depth,
                m.secondary_search_depth_err
            );
        }
        if let Some(note) = &out.period_note {
            println!("  period: {note}");
        }
        for (k, p) in out.peaks.iter().enumerate().take(1) {
            if let Some(r) = &p.refinement {
                println!("  uncertainties of peak {}: {}", k + 1, r.describe());
            }
        }
        println!("  caution: a false-alarm probability assumes white noise; check aliases before trusting a period.");
    }
    Ok(())
}
