//! `skyclock event-arrival-times`: pulse arrival times (TOAs) from segments of a photon-event
//! table by template matching; the output feeds `fit-timing` directly.

use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args as ClapArgs;

use super::pulse_profile::{EventTableArgs, read_template};
use skyclock::pulsar::event_toas::{Segmentation, event_arrival_times};
use skyclock::table::summary::Summary;
use skyclock::table::write::{refuse_overwriting_inputs, sidecar_path, write_atomically};
use skyclock::time::format::{TimeFormat, format_time};

const EXAMPLE: &str = "Example (invented pulsar 'Corvina Lantern'):
  skyclock event-arrival-times --input corvina_events.csv --clock mjd_tt \\
      --spacecraft-columns sc_x_km,sc_y_km,sc_z_km --ra 201.3 --dec 12.8 \\
      --model corvina.toml --template template.json \\
      --segment-duration-s 86400 --min-photons 200 --output arrival_times.csv
  skyclock fit-timing --input arrival_times.csv --time-column arrival_bjd_tdb \\
      --clock bjd_tdb --model corvina.toml \\
      --output residuals.csv --model-output fitted.toml

  The template comes from pulse-profile --template-output. Segments are cut by duration
  (--segment-duration-s) or by photon count (--segment-photons); segments with fewer than
  --min-photons photons are skipped and listed. arrival_times.csv: arrival_bjd_tdb (TDB
  at the barycentre, 14 decimals), error_us, instrument — the columns fit-timing reads —
  and segment, photons, segment_start_bjd_tdb, segment_end_bjd_tdb, phase_shift_cycles,
  phase_shift_error_cycles, z2.";

/// Arguments of `skyclock event-arrival-times`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub input: EventTableArgs,
    /// Template (.json) from pulse-profile --template-output.
    #[arg(long, value_name = "FILE")]
    pub template: PathBuf,
    /// Cut the events into segments of this length, s.
    #[arg(long)]
    pub segment_duration_s: Option<f64>,
    /// Cut the events into segments of this many photons.
    #[arg(long)]
    pub segment_photons: Option<usize>,
    /// Fewest photons a segment needs; shorter segments are skipped and listed.
    #[arg(long, default_value_t = 100)]
    pub min_photons: usize,
    /// Arrival-time table to write (.csv).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
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
    let mut inputs = a.input.inputs();
    inputs.push(a.template.as_path());
    for out in [Some(&a.output), a.summary.as_ref()].into_iter().flatten() {
        refuse_overwriting_inputs(out, &inputs)?;
    }
    let segmentation = match (a.segment_duration_s, a.segment_photons) {
        (Some(seconds), None) => Segmentation::Duration { seconds },
        (None, Some(count)) => Segmentation::Photons { count },
        _ => bail!(
            "say how to cut the events: give exactly one of --segment-duration-s SECONDS or --segment-photons COUNT"
        ),
    };
    let template = read_template(&a.template)?;
    let valid_s = a.input.validity_s()?;
    let ev = a.input.load("event-arrival-times", a.quiet)?;
    if let Some(w) = &ev.weights
        && let Some((i, v)) = w.iter().enumerate().find(|(_, v)| !(0.0..=1.0).contains(*v))
    {
        bail!(
            "{}, row {}, column '{}': weight {v}; weights are probabilities in [0, 1]",
            ev.file,
            i + 1,
            a.input.weight_column.as_deref().unwrap_or("")
        );
    }
    ev.warn_repeated_times(&a.input.time_column);
    let spin = super::common::spinner(&format!("arrival times from {} events", ev.times_s.len()), a.quiet || a.json);
    let result = event_arrival_times(
        &ev.model,
        &ev.times_s,
        ev.weights.as_deref(),
        &template,
        segmentation,
        a.min_photons,
        valid_s,
        &a.input.instrument,
    )
    .map_err(|e| ev.locate(&a.input.time_column, e));
    spin.finish_and_clear();
    let result = result?;
    let epoch = ev.model.epoch();
    let jd = |s: f64| format_time(&epoch.add_seconds(s), TimeFormat::Jd);
    let mut csv = String::from(
        "arrival_bjd_tdb,error_us,instrument,segment,photons,segment_start_bjd_tdb,segment_end_bjd_tdb,phase_shift_cycles,phase_shift_error_cycles,z2\n",
    );
    for t in &result.arrival_times {
        csv.push_str(&format!(
            "{},{:.6},{},{},{},{},{},{:.8},{:.8},{:.3}\n",
            jd(t.arrival_s),
            t.error_s * 1e6,
            a.input.instrument,
            t.segment,
            t.photons,
            jd(t.start_s),
            jd(t.end_s),
            t.shift.shift_cycles,
            t.shift.error_cycles,
            t.shift.z2
        ));
    }
    write_atomically(&a.output, |f| std::io::Write::write_all(f, csv.as_bytes()))?;
    let provenance = ev.provenance.clone().with("template", a.template.display().to_string());
    write_atomically(&sidecar_path(&a.output), |f| std::io::Write::write_all(f, provenance.to_json().as_bytes()))?;
    let outputs = vec![a.output.display().to_string()]
        .into_iter()
        .chain(a.summary.as_ref().map(|p| p.display().to_string()))
        .collect();
    let input_names = inputs.iter().map(|p| p.display().to_string()).collect();
    for s in &result.skipped {
        eprintln!(
            "warning: {}: segment {} (BJD_TDB {} to {}, {} photons) skipped: {}",
            ev.file,
            s.segment,
            jd(s.start_s),
            jd(s.end_s),
            s.photons,
            s.reason
        );
    }
    let text = Summary::new(result.clone(), provenance, input_names, outputs).to_json()?;
    if let Some(p) = &a.summary {
        write_atomically(p, |f| std::io::Write::write_all(f, text.as_bytes()))?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} arrival times from {} events ({} segments skipped); median uncertainty {:.3} µs; written to {}",
            result.arrival_times.len(),
            result.events,
            result.skipped.len(),
            result.median_error_us.unwrap_or(f64::NAN),
            a.output.display()
        );
    }
    Ok(())
}
