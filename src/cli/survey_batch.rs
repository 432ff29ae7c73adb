//! `skyclock survey-batch`: period search of every light curve in a survey table keyed by
//! a source-id column; one summary row per source; bad sources reported and skipped.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args as ClapArgs;
use polars::prelude::*;

use super::find_periods::SearchOptionArgs;
use skyclock::arrival::table::ClockSpec;
use skyclock::survey::batch::{
    BatchColumns, BatchOptions, ObserverArrival, SourceArrival, SourceReport, alias_text, open_rows,
    run_batch_with_arrival,
};
use skyclock::survey::cascade::CascadeOptions;
use skyclock::survey::cascade_table::CascadeTable;
use skyclock::survey::search::SearchMethod;
use skyclock::table::{Provenance, Summary, write_table};
use skyclock::time::LeapSecondTable;

const EXAMPLE: &str = "Example (invented survey field):
  skyclock survey-batch --input field_invented.parquet --source-column star \\
      --time-column bjd --value-column mag --error-column mag_err \\
      --max-freq-per-day 20 --peaks 3 --output field_periods.csv
  By default every source goes through a cascade: a sinusoid, a harmonic series (at the
  sinusoid peaks and half their frequency) and a box search (durations scaling with the
  period); the best by BIC gives the period and a class (constant, sinusoidal,
  non-sinusoidal-pulsator, eclipsing-binary, transit-like), with the evidence in columns:
  class, variable, field_false_alarm_probability, model, period_d, period_err_d, the BIC of
  each model, the box depth, S/N, odd-even and secondary measurements, and a note on what
  was decided. --method forces one method instead.
  One row per source: status (searched/skipped) and message, points, rows dropped, baseline,
  then for each peak k: period_d_k, period_err_d_k, power_k, false_alarm_probability_k,
  log10_false_alarm_probability_k (computed in log space: digits kept below 1e-308),
  amplitude_k, alias_note_k. The rows of a source must be contiguous (sort by source id
  first); the table is streamed, so it may be larger than memory.
  Times in BJD_TDB (--clock bjd_tdb or bmjd_tdb) are used as is. Times in an observer clock
  are carried to BJD_TDB per source, at the position in the source's first row:
  skyclock survey-batch --input field_utc_invented.csv --source-column star \
      --time-column jd --clock jd_utc --ra-column ra_deg --dec-column dec_deg \
      --site-coordinates=-41.2345,-31.5432,1480 --value-column mag \
      --max-freq-per-day 20 --output field_periods.csv
  (invented site; without a site the times are taken as geocentric).";

/// Arguments of `skyclock survey-batch`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    /// Survey table (.csv, .tsv or .parquet), rows of each source contiguous.
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column holding the source id.
    #[arg(long, value_name = "COLUMN", default_value = "source")]
    pub source_column: String,
    /// Column holding the times (BJD_TDB).
    #[arg(long, value_name = "COLUMN", default_value = "time")]
    pub time_column: String,
    /// Column holding the values.
    #[arg(long, value_name = "COLUMN", default_value = "value")]
    pub value_column: String,
    /// Column holding 1-σ uncertainties.
    #[arg(long, value_name = "COLUMN")]
    pub error_column: Option<String>,
    /// Column holding band labels.
    #[arg(long, value_name = "COLUMN")]
    pub band_column: Option<String>,
    /// Clock of the times: bjd_tdb or bmjd_tdb (used as is), or an observer clock (jd_utc,
    /// mjd_tt, iso_utc, …) carried to the barycentre per source (needs --ra-column and
    /// --dec-column, and a site unless the times are geocentric).
    #[arg(long, value_name = "LABEL", default_value = "bjd_tdb")]
    pub clock: String,
    /// Column holding each source's right ascension, ICRS degrees (observer clocks only).
    #[arg(long, value_name = "COLUMN")]
    pub ra_column: Option<String>,
    /// Column holding each source's declination, ICRS degrees (observer clocks only).
    #[arg(long, value_name = "COLUMN")]
    pub dec_column: Option<String>,
    #[command(flatten)]
    pub observer: super::common::ObserverArgs,
    #[command(flatten)]
    pub reference_data: super::common::ReferenceDataArgs,
    #[command(flatten)]
    pub search: SearchOptionArgs,
    /// Refine each peak by a least-squares fit (period errors; ~70 ms per curve, slow for big
    /// surveys). With --method only; the cascade always refines its period.
    #[arg(long)]
    pub refine_peaks: bool,
    /// False-alarm level of the variability flag for the whole field: a source is variable
    /// when the chance that any source of a field of pure noise this size shows as strong a
    /// detection is below it (cascade only).
    #[arg(long, value_name = "PROBABILITY", default_value_t = 0.01)]
    pub false_alarm_level: f64,
    /// Points gathered before a batch of sources is searched (memory holds at most three
    /// batches: one searched, one queued, one filling).
    #[arg(long, default_value_t = 2_000_000)]
    pub batch_points: usize,
    /// Output table (.csv, .tsv or .parquet), one row per source.
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Print a machine-readable summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Print nothing but errors.
    #[arg(long)]
    pub quiet: bool,
}

#[derive(Default)]
struct Rows {
    id: Vec<String>,
    status: Vec<String>,
    message: Vec<String>,
    first_row: Vec<u64>,
    points: Vec<Option<u64>>,
    dropped: Vec<Option<u64>>,
    baseline: Vec<Option<f64>>,
    epoch: Vec<Option<f64>>,
    alias: Vec<Vec<String>>,
}

/// Runs the command.
pub fn run(a: Args) -> Result<()> {
    use std::io::IsTerminal;
    let clock = ClockSpec::parse_label(&a.clock).map_err(anyhow::Error::msg)?;
    let cascade = a.search.method.is_none();
    let mut plan = if cascade {
        if !(1..=5).contains(&a.search.harmonics) {
            anyhow::bail!("--harmonics: the survey cascade takes 1 to 5 harmonics, got {}", a.search.harmonics);
        }
        let magnitudes = a.search.brightness == super::common::BrightnessArg::Magnitude;
        let mut options = CascadeOptions::new(magnitudes);
        options.harmonics = a.search.harmonics;
        if a.search.durations_d.is_some() {
            options.box_options.durations = a.search.box_durations()?;
        }
        a.search.plan_with(SearchMethod::Cascade(options), 0)?
    } else {
        a.search.plan(0)?
    };
    plan.refine_peaks = a.refine_peaks;
    if !(a.false_alarm_level.is_finite() && a.false_alarm_level > 0.0 && a.false_alarm_level < 1.0) {
        anyhow::bail!("--false-alarm-level must lie between 0 and 1, got {}", a.false_alarm_level);
    }
    let k = plan.peaks;
    let columns = BatchColumns {
        source: a.source_column.clone(),
        time: a.time_column.clone(),
        value: a.value_column.clone(),
        error: a.error_column.clone(),
        band: a.band_column.clone(),
        ra_deg: a.ra_column.clone(),
        dec_deg: a.dec_column.clone(),
    };
    skyclock::table::refuse_overwriting_inputs(&a.output, &[a.input.as_path()])?;
    let file = a.input.display().to_string();
    let mut stream = open_rows(&a.input, &columns, 250_000)?;
    let pb = if a.quiet || !std::io::stderr().is_terminal() {
        indicatif::ProgressBar::hidden()
    } else {
        let pb = indicatif::ProgressBar::new(1000);
        pb.set_style(
            indicatif::ProgressStyle::with_template(
                "{bar:40} {percent}% of input  {msg}  elapsed {elapsed}, ETA {eta}",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        pb
    };
    let started = std::time::Instant::now();
    let mut rows = Rows { alias: vec![Vec::new(); k], ..Default::default() };
    let mut found: Vec<Option<skyclock::survey::cascade::Classification>> = Vec::new();
    let mut peak_cols: Vec<[Vec<Option<f64>>; 7]> = (0..k).map(|_| Default::default()).collect();
    let leap = LeapSecondTable::builtin();
    let mut first_problems: Vec<String> = Vec::new();
    // Sources skipped so far (the progress lines count searched and skipped apart).
    let skipped_so_far = std::cell::Cell::new(0usize);
    let mut sink = |reports: Vec<SourceReport>| -> Result<(), skyclock::table::TableError> {
        for r in reports {
            rows.id.push(r.id.clone());
            rows.first_row.push(r.first_row as u64);
            rows.epoch.push(r.epoch_jd.is_finite().then_some(r.epoch_jd));
            match &r.outcome {
                Ok(o) => {
                    rows.status.push("searched".into());
                    rows.message.push(String::new());
                    rows.points.push(Some(o.n_points as u64));
                    rows.dropped.push(Some(o.n_dropped as u64));
                    rows.baseline.push(Some(o.baseline_d));
                    for j in 0..k {
                        let p = o.peaks.get(j);
                        let fin = |v: f64| v.is_finite().then_some(v);
                        peak_cols[j][0].push(p.map(|p| p.peak.period_d));
                        peak_cols[j][1].push(p.and_then(|p| fin(p.peak.period_err_d)));
                        peak_cols[j][2].push(p.map(|p| p.peak.power));
                        peak_cols[j][3].push(p.and_then(|p| fin(p.fap)));
                        peak_cols[j][4].push(p.and_then(|p| fin(p.peak.amplitude)));
                        peak_cols[j][5].push(p.map(|p| p.peak.freq_per_day));
                        peak_cols[j][6].push(p.and_then(|p| fin(p.log10_fap)));
                        rows.alias[j].push(alias_text(o, j));
                    }
                    found.push(o.classification.clone());
                }
                Err(m) => {
                    skipped_so_far.set(skipped_so_far.get() + 1);
                    if first_problems.len() < 5 {
                        first_problems.push(m.clone());
                    }
                    rows.status.push("skipped".into());
                    rows.message.push(m.clone());
                    rows.points.push(None);
                    rows.dropped.push(None);
                    rows.baseline.push(None);
                    for j in 0..k {
                        for c in peak_cols[j].iter_mut() {
                            c.push(None);
                        }
                        rows.alias[j].push(String::new());
                    }
                    found.push(None);
                }
            }
        }
        Ok(())
    };
    // Without a terminal (a log, the demo) progress goes to stderr as a line per tenth of
    // the input read.
    let lines = !a.quiet && !std::io::stderr().is_terminal();
    let next_tenth = std::cell::Cell::new(1u32);
    let progress = |done: usize, fraction: f64| {
        if fraction.is_finite() {
            pb.set_position((fraction * 1000.0) as u64);
        }
        let rate = done as f64 / started.elapsed().as_secs_f64().max(1e-9);
        pb.set_message(format!("{done} sources, {rate:.0}/s"));
        if lines && fraction.is_finite() && fraction * 10.0 >= next_tenth.get() as f64 {
            next_tenth.set((fraction * 10.0).floor() as u32 + 1);
            let skipped = skipped_so_far.get().min(done);
            eprintln!(
                "survey-batch: {} ({} searched, {} skipped), {:.0} % of the input read, {:.1} s",
                super::common::counted(done, "source", "sources"),
                done - skipped,
                skipped,
                100.0 * fraction,
                started.elapsed().as_secs_f64()
            );
        }
    };
    let options = BatchOptions { clock, batch_points: a.batch_points };
    let carry = !skyclock::survey::input::is_barycentric_tdb(&clock);
    let reference = if carry { Some(a.reference_data.load()?) } else { None };
    let leap = reference.as_ref().map_or(leap, |r| r.converter.leap_seconds().clone());
    let times_note = match &reference {
        None => format!("times read as {} (already barycentric)", a.clock),
        Some(r) => format!(
            "times carried from {} to BJD_TDB per source (position from its first row) with {}",
            a.clock,
            r.ephemeris.name()
        ),
    };
    let arrival = match &reference {
        None => None,
        Some(r) => {
            if a.observer.site_column.is_some() || a.observer.spacecraft_columns.is_some() {
                anyhow::bail!(
                    "survey-batch carries times for one site (or the geocentre); a site column or spacecraft positions are not supported here: convert with `skyclock barycentre` first"
                );
            }
            let description = a.observer.description()?;
            let observer = match a.observer.single_site(description.as_ref())? {
                Some(site) => skyclock::observer::Observer::Site(site),
                None => skyclock::observer::Observer::Geocentre,
            };
            Some(ObserverArrival {
                ephemeris: r.ephemeris.clone(),
                converter: r.converter.clone(),
                orientation: r.orientation.clone(),
                observer,
            })
        }
    };
    let summary = run_batch_with_arrival(
        stream.as_mut(),
        &file,
        &columns,
        &options,
        &plan,
        &leap,
        arrival.as_ref().map(|x| x as &dyn SourceArrival),
        &mut sink,
        &progress,
    )?;
    pb.finish_and_clear();
    super::common::print_time_warnings(&summary.warnings);
    let mut cols = vec![
        Column::new("source_id".into(), std::mem::take(&mut rows.id)),
        Column::new("status".into(), std::mem::take(&mut rows.status)),
        Column::new("message".into(), std::mem::take(&mut rows.message)),
        Column::new("first_row".into(), std::mem::take(&mut rows.first_row)),
        Column::new("points".into(), std::mem::take(&mut rows.points)),
        Column::new("rows_dropped_nan".into(), std::mem::take(&mut rows.dropped)),
        Column::new("baseline_d".into(), std::mem::take(&mut rows.baseline)),
        Column::new("time_reference_bjd_tdb".into(), std::mem::take(&mut rows.epoch)),
    ];
    for (j, pc) in peak_cols.into_iter().enumerate() {
        let n = j + 1;
        let [period, period_err, power, fap, amp, freq, log10_fap] = pc;
        cols.push(Column::new(format!("period_d_{n}").into(), period));
        cols.push(Column::new(format!("period_err_d_{n}").into(), period_err));
        cols.push(Column::new(format!("freq_per_day_{n}").into(), freq));
        cols.push(Column::new(format!("power_{n}").into(), power));
        cols.push(Column::new(format!("false_alarm_probability_{n}").into(), fap));
        cols.push(Column::new(format!("log10_false_alarm_probability_{n}").into(), log10_fap));
        cols.push(Column::new(format!("amplitude_{n}").into(), amp));
        cols.push(Column::new(format!("alias_note_{n}").into(), std::mem::take(&mut rows.alias[j])));
    }
    let mut class_counts = std::collections::BTreeMap::new();
    if cascade {
        let table = CascadeTable::new(&found, summary.sources, a.false_alarm_level);
        cols.extend(table.columns());
        class_counts = table.class_counts();
    }
    let mut df = DataFrame::new_infer_height(cols)?;
    let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
        .with("stage", "survey-batch")
        .with("input", file.clone())
        .with("method", plan.method.label())
        .with("times", times_note.clone());
    write_table(&mut df, &a.output, &provenance, &[a.input.as_path()])?;
    let seconds = started.elapsed().as_secs_f64();
    if a.json {
        let result = skyclock::survey::batch::BatchResult {
            summary: summary.clone(),
            output: a.output.display().to_string(),
            times: times_note.clone(),
            seconds,
            first_skipped: first_problems.clone(),
        };
        let doc = Summary::new(result, provenance.clone(), vec![file.clone()], vec![a.output.display().to_string()]);
        println!("{}", doc.to_json()?);
    } else if !a.quiet {
        println!(
            "{} ({} searched, {} skipped) from {} in {:.1} s → {}",
            super::common::counted(summary.sources, "source", "sources"),
            summary.searched,
            summary.skipped,
            super::common::counted(summary.rows, "row", "rows"),
            seconds,
            a.output.display()
        );
        for m in &first_problems {
            println!("  skipped: {m}");
        }
        if cascade {
            let text: Vec<String> = class_counts.iter().map(|(c, n)| format!("{n} {c}")).collect();
            println!(
                "  classes (field false-alarm level {} over {} sources): {}",
                a.false_alarm_level,
                summary.sources,
                text.join(", ")
            );
            println!(
                "  caution: false-alarm probabilities assume white noise; red noise and systematics make them optimistic."
            );
        } else {
            println!(
                "  caution: false-alarm probabilities assume white noise and do not account for the number of sources searched."
            );
        }
    }
    Ok(())
}
