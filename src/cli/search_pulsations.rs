//! `skyclock search-pulsations`: Z²ₙ search of a photon-event table over ν (and ν̇).

use std::path::PathBuf;

use anyhow::{Result, anyhow, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::DelayOptions;
use skyclock::arrival::table::{ClockSpec, ObserverSpec, TableRequest, correct_table};
use skyclock::pulsar::search::{PulsationSearchRequest, search_pulsations};
use skyclock::table::summary::Summary;
use skyclock::table::write::{refuse_overwriting_inputs, write_atomically};
use skyclock::table::{Provenance, float_column, read_table};
use skyclock::time::{Instant, TimeScale};

const EXAMPLE: &str = "Example:
  skyclock search-pulsations --input photons.csv --time-column time --clock mjd_tt \\
      --ra 127.418 --dec -14.277 --min-freq-hz 17.3 --max-freq-hz 17.6 --harmonics 2 \\
      --output z2_spectrum.csv --figure z2_spectrum.svg --json

  Times are barycentred on the way in (use --clock bmjd_tdb for barycentric times). The
  output lists freq_hz, freq_deriv_hz_per_s and z2 for every trial (figure data: statistic
  against frequency); the summary gives the best trial, the number of trials and the
  trials-corrected false-alarm probability.";

/// Arguments of `skyclock search-pulsations`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Photon-event table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column of event times.
    #[arg(long, default_value = "time")]
    pub time_column: String,
    /// Clock of the times, e.g. mjd_tt or bmjd_tdb.
    #[arg(long)]
    pub clock: String,
    /// Optional column of photon weights (0..1).
    #[arg(long)]
    pub weight_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Lowest trial frequency, Hz.
    #[arg(long)]
    pub min_freq_hz: f64,
    /// Highest trial frequency, Hz.
    #[arg(long)]
    pub max_freq_hz: f64,
    /// Lowest trial frequency derivative, Hz/s.
    #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
    pub min_freq_deriv_hz_per_s: f64,
    /// Highest trial frequency derivative, Hz/s.
    #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
    pub max_freq_deriv_hz_per_s: f64,
    /// Oversampling of the 1/T frequency step.
    #[arg(long, default_value_t = 4.0)]
    pub oversampling: f64,
    /// Harmonics n of Z²ₙ (20 or more also reports the H-test).
    #[arg(long, default_value_t = 2)]
    pub harmonics: usize,
    /// Statistic against frequency (.csv).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Figure of the statistic against frequency at the best frequency derivative (.svg or
    /// .png), with the best trial marked and the mean level of pure noise (2n).
    #[arg(long, value_name = "FILE")]
    pub figure: Option<PathBuf>,
    /// JSON summary to write (the text --json prints).
    #[arg(long, value_name = "FILE")]
    pub summary: Option<PathBuf>,
    /// Print the JSON summary on stdout instead of the result line.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but warnings and errors (no progress display, no result lines).
    #[arg(long)]
    pub quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    let inputs = [a.input.as_path()];
    for out in [Some(&a.output), a.figure.as_ref(), a.summary.as_ref()].into_iter().flatten() {
        refuse_overwriting_inputs(out, &inputs)?;
    }
    let clock = ClockSpec::parse_label(&a.clock).map_err(anyhow::Error::msg)?;
    let description = a.observer.description()?;
    let source = super::pulse_profile::source_unless_barycentric(Some(&clock), &a.source, description.as_ref())?;
    let observer = match a.observer.single_site(description.as_ref())? {
        Some(s) => ObserverSpec::Site(s),
        None => ObserverSpec::Geocentre,
    };
    super::pulse_profile::note_geocentre(&observer, Some(&clock), a.quiet);
    let reference = a.reference_data.load()?;
    let corrector = reference.corrector(source, DelayOptions::default());
    let file = a.input.display().to_string();
    let df = read_table(&a.input, &[a.time_column.as_str()])?;
    let request = TableRequest { time_column: a.time_column.clone(), clock: Some(clock), clock_column: None, observer };
    let (corrected, correction) = correct_table(&df, &file, &request, &corrector)?;
    super::common::print_time_warnings(&correction.warnings);
    let jd1 = float_column(&corrected, &file, "bjd_tdb_jd1")?;
    let jd2 = float_column(&corrected, &file, "bjd_tdb_jd2")?;
    let instants: Vec<Instant> =
        jd1.iter().zip(&jd2).map(|(a, b)| Instant::from_jd_two_part(TimeScale::Tdb, *a, *b)).collect();
    if instants.is_empty() {
        bail!("{file}: the event table has no rows");
    }
    if let Some(k) = (1..instants.len()).find(|&k| instants[k].seconds_since(&instants[k - 1]) < 0.0) {
        bail!(
            "{file}, row {}, column '{}': the event is earlier than the one before it; sort the events by time (the frequency grid is set by the first and last rows)",
            k + 1,
            a.time_column
        );
    }
    let weights = match &a.weight_column {
        Some(c) => {
            let w = float_column(&corrected, &file, c)?;
            if let Some((i, v)) = w.iter().enumerate().find(|(_, v)| !(v.is_finite() && (0.0..=1.0).contains(*v))) {
                bail!("{file}, row {}, column '{c}': weight {v} is not a probability in [0, 1]", i + 1);
            }
            Some(w)
        }
        None => None,
    };
    let search = PulsationSearchRequest {
        min_freq_hz: a.min_freq_hz,
        max_freq_hz: a.max_freq_hz,
        min_freq_deriv_hz_per_s: a.min_freq_deriv_hz_per_s,
        max_freq_deriv_hz_per_s: a.max_freq_deriv_hz_per_s,
        oversampling: a.oversampling,
        harmonics: a.harmonics,
    };
    let spin =
        super::common::spinner(&format!("Z²_{} search of {} events", a.harmonics, instants.len()), a.quiet || a.json);
    let result = search_pulsations(&instants, weights.as_deref(), &search);
    spin.finish_and_clear();
    let (result, spectrum) = result.map_err(|e| match &a.weight_column {
        Some(c) if e.to_string().contains("weight") => anyhow!("{file}, column '{c}': {e}"),
        _ => anyhow!("{file}: {e}"),
    })?;
    let grid = &result.grid;
    let peak = &result.best;
    let mut csv = String::from("freq_hz,freq_deriv_hz_per_s,z2\n");
    for (d, fd) in grid.freq_derivs_hz_per_s.iter().enumerate() {
        for k in 0..grid.freq_count {
            csv.push_str(&format!("{:.12},{:e},{:.6}\n", grid.freq_hz(k), fd, spectrum.z2(d, k)));
        }
    }
    write_atomically(&a.output, |f| std::io::Write::write_all(f, csv.as_bytes()))?;
    if let Some(path) = &a.figure {
        let d_best = grid.freq_derivs_hz_per_s.iter().position(|fd| *fd == peak.freq_deriv_hz_per_s).unwrap_or(0);
        let x: Vec<f64> = (0..grid.freq_count).map(|k| (grid.freq_hz(k) - peak.freq_hz) * 1e3).collect();
        let y: Vec<f64> = (0..grid.freq_count).map(|k| spectrum.z2(d_best, k)).collect();
        let noise = 2.0 * a.harmonics as f64;
        let (x0, x1) = (x.first().copied().unwrap_or(0.0), x.last().copied().unwrap_or(0.0));
        let fig = skyclock::plot::Figure {
            title: format!(
                "Z²_{} of {} events against frequency (ν̇ = {:e} Hz/s)",
                a.harmonics, result.events, peak.freq_deriv_hz_per_s
            ),
            panels: vec![skyclock::plot::Panel {
                x_label: format!("frequency − {:.9} Hz (mHz)", peak.freq_hz),
                y_label: format!("Z²_{}", a.harmonics),
                layers: vec![
                    skyclock::plot::Layer::Line { label: format!("Z²_{}", a.harmonics), x, y, colour: (30, 60, 140) },
                    skyclock::plot::Layer::Line {
                        label: format!("mean of pure noise (2n = {noise})"),
                        x: vec![x0, x1],
                        y: vec![noise, noise],
                        colour: (120, 120, 120),
                    },
                    skyclock::plot::Layer::Markers {
                        label: format!("best trial (false alarm after trials {:.1e})", peak.false_alarm),
                        x: vec![0.0],
                        text: vec!["best".into()],
                        colour: (200, 30, 30),
                    },
                ],
                invert_y: false,
                height_weight: 1,
            }],
            width: 1000,
            height: 600,
        };
        skyclock::plot::write_figure(&fig, path)?;
    }
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "search-pulsations")
        .with("input", file.clone())
        .with("ephemeris", reference.ephemeris.name())
        .with("leap_seconds", reference.converter.leap_seconds().source());
    let outputs: Vec<String> = [Some(&a.output), a.figure.as_ref(), a.summary.as_ref()]
        .into_iter()
        .flatten()
        .map(|p| p.display().to_string())
        .collect();
    let text = Summary::new(result.clone(), provenance, vec![file], outputs).to_json()?;
    if let Some(p) = &a.summary {
        write_atomically(p, |f| std::io::Write::write_all(f, text.as_bytes()))?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "best trial {:.12} Hz ({:e} Hz/s): Z²_{} = {:.2}; {} trials; false alarm after trials {:.3e} ({:.1} σ)",
            peak.freq_hz,
            peak.freq_deriv_hz_per_s,
            peak.harmonics,
            peak.z2,
            peak.trials,
            peak.false_alarm,
            peak.significance_sigma
        );
    }
    Ok(())
}
