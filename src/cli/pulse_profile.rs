//! `skyclock pulse-profile`: fold photon events with a timing model; binned profile with
//! errors, a smooth template (Fourier or Gaussian components) and a figure.
//! Also holds the event-table reading shared with `event-arrival-times`.

use skyclock::constants::SECONDS_PER_DAY;
use std::path::{Path, PathBuf};

use anyhow::{Context, Result, anyhow, bail};
use clap::Args as ClapArgs;

use super::common::{ObserverArgs, ReferenceDataArgs, SourceArgs};
use skyclock::arrival::DelayOptions;
use skyclock::arrival::table::{ClockSpec, TableRequest, correct_table};
use skyclock::pulsar::model::TimingModel;
use skyclock::pulsar::profile::{ProfileRequest, PulseTemplate, check_weights, pulse_profile};
use skyclock::table::summary::Summary;
use skyclock::table::write::{refuse_overwriting_inputs, sidecar_path, write_atomically};
use skyclock::table::{Provenance, float_column, read_table};
use skyclock::time::{Instant, TimeScale};

const EXAMPLE: &str = "Example (invented pulsar 'Corvina Lantern', events from an invented X-ray satellite):
  skyclock pulse-profile --input corvina_events.csv --time-column time --clock mjd_tt \\
      --spacecraft-columns sc_x_km,sc_y_km,sc_z_km --ra 201.3 --dec 12.8 \\
      --model corvina.toml --bins 40 --harmonics 6 \\
      --output profile.csv --template-output template.json --figure profile.svg

  The events are barycentred on the way in (use --clock bjd_tdb for barycentric times) and
  folded with the timing model (the TOML that fit-timing reads; binary orbits included).
  profile.csv: phase_center_cycles, counts, count_error (√Σw²), relative_intensity,
  relative_intensity_error (counts·bins/Σw: 1 = the mean level), template_density (the
  template as the binned profile should show it: with weights, diluted by 1 + (Σw²/Σw)(f − 1)).
  template.json: the template (Fourier coefficients a_k, b_k with errors) that
  event-arrival-times matches. The figure shows two cycles.";

/// The source for barycentring. Times already at the barycentre (`bjd_*`, `bmjd_*` for
/// every row) need none: without one, a placeholder direction stands in that the
/// correction of barycentric rows never uses.
pub fn source_unless_barycentric(
    clock: Option<&ClockSpec>,
    args: &SourceArgs,
    description: Option<&skyclock::config::Description>,
) -> Result<skyclock::arrival::Source> {
    let barycentric = clock.is_some_and(|c| c.reference == skyclock::arrival::ReferencePoint::Barycentric);
    let given = args.source_file.is_some()
        || args.ra.is_some()
        || args.dec.is_some()
        || description.is_some_and(|d| d.source.is_some());
    if barycentric && !given {
        return skyclock::arrival::Source::fixed_degrees("none needed: times already barycentric", 0.0, 0.0)
            .map_err(anyhow::Error::msg);
    }
    args.load(description)
}

/// Says once on stderr (unless `quiet`) that times not at the barycentre are taken as
/// recorded at the geocentre because no site or spacecraft positions were given.
pub fn note_geocentre(observer: &skyclock::arrival::table::ObserverSpec, clock: Option<&ClockSpec>, quiet: bool) {
    let barycentric = clock.is_some_and(|c| c.reference == skyclock::arrival::ReferencePoint::Barycentric);
    if !quiet && !barycentric && matches!(observer, skyclock::arrival::table::ObserverSpec::Geocentre) {
        eprintln!(
            "note: no site given (--site, --site-coordinates, --site-column or --spacecraft-columns): the times are taken as recorded at the geocentre"
        );
    }
}

/// The event table, its clock, the observer, the source and the timing model.
#[derive(Debug, ClapArgs)]
pub struct EventTableArgs {
    /// Photon-event table (.csv, .tsv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub input: PathBuf,
    /// Column of event times.
    #[arg(long, default_value = "time")]
    pub time_column: String,
    /// Clock of the times, e.g. mjd_tt, or bjd_tdb for barycentred times.
    #[arg(long)]
    pub clock: String,
    /// Optional column of photon weights (probabilities in [0, 1] that a photon is from the pulsar).
    #[arg(long)]
    pub weight_column: Option<String>,
    #[command(flatten)]
    pub observer: ObserverArgs,
    #[command(flatten)]
    pub source: SourceArgs,
    #[command(flatten)]
    pub reference_data: ReferenceDataArgs,
    /// Timing model (TOML, as fit-timing reads it).
    #[arg(long, value_name = "FILE")]
    pub model: PathBuf,
    /// Half-width, days, of the interval around the model epoch where the model is trusted.
    #[arg(long, default_value_t = 1100.0)]
    pub model_validity_days: f64,
    /// Instrument name (for the model's instrument delays).
    #[arg(long, default_value = "default")]
    pub instrument: String,
}

/// Events read, barycentred and placed on the model's time axis.
pub struct LoadedEvents {
    pub model: TimingModel,
    /// Seconds after the model epoch (TDB, barycentric).
    pub times_s: Vec<f64>,
    pub weights: Option<Vec<f64>>,
    pub file: String,
    pub provenance: Provenance,
}

impl EventTableArgs {
    /// The inputs (for refusing to overwrite them).
    pub fn inputs(&self) -> Vec<&Path> {
        vec![self.input.as_path(), self.model.as_path()]
    }

    /// The model's validity half-width in seconds.
    pub fn validity_s(&self) -> Result<f64> {
        if !(self.model_validity_days > 0.0 && self.model_validity_days.is_finite()) {
            bail!("--model-validity-days {}: must be > 0", self.model_validity_days);
        }
        Ok(self.model_validity_days * SECONDS_PER_DAY)
    }

    /// Reads the model and the events, barycentres the times, reads the weights.
    pub fn load(&self, stage: &str, quiet: bool) -> Result<LoadedEvents> {
        let model_text =
            std::fs::read_to_string(&self.model).with_context(|| format!("reading {}", self.model.display()))?;
        let model = TimingModel::from_toml(&model_text, &self.model.display().to_string())?;
        let clock = ClockSpec::parse_label(&self.clock).map_err(anyhow::Error::msg)?;
        let description = self.observer.description()?;
        let source = source_unless_barycentric(Some(&clock), &self.source, description.as_ref())?;
        let observer = self.observer.observer_spec(description.as_ref())?;
        note_geocentre(&observer, Some(&clock), quiet);
        let reference = self.reference_data.load()?;
        let corrector = reference.corrector(source, DelayOptions::default());
        let file = self.input.display().to_string();
        let request =
            TableRequest { time_column: self.time_column.clone(), clock: Some(clock), clock_column: None, observer };
        let df = read_table(&self.input, &request.text_columns())?;
        let (corrected, correction) = correct_table(&df, &file, &request, &corrector)?;
        super::common::print_time_warnings(&correction.warnings);
        let jd1 = float_column(&corrected, &file, "bjd_tdb_jd1")?;
        let jd2 = float_column(&corrected, &file, "bjd_tdb_jd2")?;
        let epoch = model.epoch();
        let times_s: Vec<f64> = jd1
            .iter()
            .zip(&jd2)
            .map(|(a, b)| Instant::from_jd_two_part(TimeScale::Tdb, *a, *b).seconds_since(&epoch))
            .collect();
        let weights = match &self.weight_column {
            Some(c) => Some(float_column(&corrected, &file, c)?),
            None => None,
        };
        if times_s.is_empty() {
            bail!("{file}: the event table has no rows");
        }
        let provenance = Provenance::new(&std::env::args().collect::<Vec<_>>().join(" "))
            .with("stage", stage)
            .with("input", file.clone())
            .with("model", self.model.display().to_string())
            .with("ephemeris", reference.ephemeris.name())
            .with("leap_seconds", reference.converter.leap_seconds().source());
        Ok(LoadedEvents { model, times_s, weights, file, provenance })
    }
}

impl LoadedEvents {
    /// Warns on stderr about events that repeat the previous event's time.
    pub fn warn_repeated_times(&self, column: &str) {
        if let (n, Some(first)) = skyclock::pulsar::profile::repeated_times(&self.times_s) {
            eprintln!(
                "warning: {}, column '{column}': {n} event(s) have the same barycentric time as the event before them (first at row {first}); kept as separate photons — if the table has duplicated rows, remove them",
                self.file
            );
        }
    }

    /// Turns a library message about event N / photon N into one naming file, row and column.
    pub fn locate(&self, column: &str, e: skyclock::pulsar::PulsarError) -> anyhow::Error {
        anyhow!("{}, column '{column}': {e}", self.file)
    }
}

/// The template file `--template-output` writes and `event-arrival-times --template` reads.
#[derive(Debug, Clone, serde::Serialize, serde::Deserialize)]
pub struct TemplateFile {
    /// The template to match.
    pub template: PulseTemplate,
    /// The empirical Fourier coefficients it came from.
    pub empirical_fourier: PulseTemplate,
    /// Where it came from.
    pub provenance: Provenance,
}

/// Reads a template written by `pulse-profile --template-output`.
pub fn read_template(path: &Path) -> Result<PulseTemplate> {
    let text = std::fs::read_to_string(path).with_context(|| format!("reading {}", path.display()))?;
    let value: serde_json::Value =
        serde_json::from_str(&text).with_context(|| format!("{}: not JSON", path.display()))?;
    let inner = value.get("template").cloned().ok_or_else(|| {
        anyhow!("{}: no 'template' key; write templates with skyclock pulse-profile --template-output", path.display())
    })?;
    let t: PulseTemplate = serde_json::from_value(inner).with_context(|| format!("{}: 'template'", path.display()))?;
    t.validate().with_context(|| format!("{}", path.display()))?;
    Ok(t)
}

/// Arguments of `skyclock pulse-profile`.
#[derive(Debug, ClapArgs)]
#[command(after_help = EXAMPLE)]
pub struct Args {
    #[command(flatten)]
    pub input: EventTableArgs,
    /// Number of phase bins of the profile.
    #[arg(long, default_value_t = 32)]
    pub bins: usize,
    /// Harmonics n of the Fourier template.
    #[arg(long, default_value_t = 5)]
    pub harmonics: usize,
    /// Make the template from this many wrapped Gaussian components (fitted to the Fourier coefficients).
    #[arg(long)]
    pub gaussian_components: Option<usize>,
    /// Binned profile to write (.csv).
    #[arg(long, value_name = "FILE")]
    pub output: PathBuf,
    /// Template to write (.json), the input of event-arrival-times.
    #[arg(long, value_name = "FILE")]
    pub template_output: Option<PathBuf>,
    /// Figure of the profile with errors and the template, two cycles (.svg or .png).
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
    let inputs = a.input.inputs();
    let outputs: Vec<&PathBuf> = [Some(&a.output), a.template_output.as_ref(), a.figure.as_ref(), a.summary.as_ref()]
        .into_iter()
        .flatten()
        .collect();
    for out in &outputs {
        refuse_overwriting_inputs(out, &inputs)?;
    }
    let request = ProfileRequest {
        bins: a.bins,
        harmonics: a.harmonics,
        gaussian_components: a.gaussian_components,
        valid_for_s: a.input.validity_s()?,
        instrument: a.input.instrument.clone(),
    };
    let ev = a.input.load("pulse-profile", a.quiet)?;
    ev.warn_repeated_times(&a.input.time_column);
    if let (Some(w), Some(c)) = (&ev.weights, &a.input.weight_column) {
        check_weights(ev.times_s.len(), Some(w)).map_err(|e| ev.locate(c, e))?;
    }
    let spin = super::common::spinner(&format!("folding {} events", ev.times_s.len()), a.quiet || a.json);
    let result = pulse_profile(&ev.model, &ev.times_s, ev.weights.as_deref(), &request)
        .map_err(|e| ev.locate(&a.input.time_column, e));
    spin.finish_and_clear();
    let result = result?;
    let binned = &result.profile;
    let template = &result.template;

    let mut csv = String::from(
        "phase_center_cycles,counts,count_error,relative_intensity,relative_intensity_error,template_density\n",
    );
    for i in 0..result.bins {
        csv.push_str(&format!(
            "{:.6},{:.6},{:.6},{:.6},{:.6},{:.6}\n",
            binned.phase_center_cycles[i],
            binned.counts[i],
            binned.count_errors[i],
            binned.relative_intensity[i],
            binned.relative_intensity_errors[i],
            result.template_density[i]
        ));
    }
    write_atomically(&a.output, |f| std::io::Write::write_all(f, csv.as_bytes()))?;
    write_atomically(&sidecar_path(&a.output), |f| std::io::Write::write_all(f, ev.provenance.to_json().as_bytes()))?;
    if let Some(p) = &a.template_output {
        let file = TemplateFile {
            template: template.clone(),
            empirical_fourier: result.empirical_fourier.clone(),
            provenance: ev.provenance.clone(),
        };
        let text = serde_json::to_string_pretty(&file)?;
        write_atomically(p, |f| std::io::Write::write_all(f, text.as_bytes()))?;
    }
    if let Some(path) = &a.figure {
        use skyclock::plot::{Figure, Layer, Panel, write_figure};
        let two = |v: &[f64], shift: bool| -> Vec<f64> {
            v.iter().copied().chain(v.iter().map(|x| if shift { x + 1.0 } else { *x })).collect()
        };
        let grid: Vec<f64> = (0..=400).map(|i| 2.0 * i as f64 / 400.0).collect();
        let fig = Figure {
            title: format!("{}: {} photons folded, {} bins", ev.file, result.events, result.bins),
            panels: vec![Panel {
                x_label: "pulse phase (cycles)".into(),
                y_label: "relative intensity (1 = mean)".into(),
                invert_y: false,
                height_weight: 1,
                layers: vec![
                    Layer::Points {
                        label: "binned profile (1σ)".into(),
                        x: two(&binned.phase_center_cycles, true),
                        y: two(&binned.relative_intensity, false),
                        y_err: Some(two(&binned.relative_intensity_errors, false)),
                        colour: (40, 70, 150),
                        size: 3,
                        details: None,
                    },
                    Layer::Line {
                        label: template.kind.clone(),
                        x: grid.clone(),
                        y: grid.iter().map(|x| binned.expected_relative_intensity(template, *x)).collect(),
                        colour: (200, 80, 30),
                    },
                ],
            }],
            width: 1000,
            height: 600,
        };
        write_figure(&fig, path)?;
    }
    let outputs: Vec<String> = outputs.iter().map(|p| p.display().to_string()).collect();
    let inputs: Vec<String> = inputs.iter().map(|p| p.display().to_string()).collect();
    let text = Summary::new(result.clone(), ev.provenance.clone(), inputs, outputs).to_json()?;
    if let Some(p) = &a.summary {
        write_atomically(p, |f| std::io::Write::write_all(f, text.as_bytes()))?;
    }
    if a.json {
        println!("{text}");
    } else if !a.quiet {
        println!(
            "{} events folded into {} bins; H = {:.1} (false alarm {:.2e}); template: {}; peak at phase {:.4}",
            result.events,
            result.bins,
            result.h_test.h,
            result.h_test.false_alarm,
            result.template_kind,
            result.template_peak_phase_cycles
        );
    }
    Ok(())
}
