//! The command-line interface: argument parsing, help texts with worked examples and
//! validation; each command hands typed values to the library and prints its results.
//! No science lives here.

// Compiled into tests and an example with `#[path]` as well as into the binary, so the
// crate-wide lint choices of src/main.rs are repeated here (see there for the reasons).
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    clippy::needless_range_loop,
    clippy::nonminimal_bool,
    clippy::result_large_err
)]

pub mod apsidal_residuals;
pub mod barycentre;
pub mod barycentre_events;
pub mod common;
pub mod convert_time;
pub mod demo;
pub mod event_arrival_times;
pub mod extract_frequencies;
pub mod find_periods;
pub mod fit_timing;
pub mod fold_curve;
pub mod guard;
pub mod light_curve_input;
pub mod manual;
pub mod manual_page;
pub mod measure_light_time;
pub mod observer_time;
pub mod predict_events;
pub mod pulse_profile;
pub mod search_pulsations;
pub mod shell_completions;
pub mod survey_batch;
pub mod time_events;
pub mod time_transits;
pub mod timing_residuals;
pub mod timing_table;

use clap::{Parser, Subcommand};

/// skyclock: timing periodic astronomical sources.
#[derive(Debug, Parser)]
#[command(name = "skyclock", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Carry arrival times in any clock, from any site, to the solar-system barycentre (BJD_TDB).
    Barycentre(barycentre::Args),
    /// Stream a photon-event list of any length to the barycentre (interpolated, ≤1 ns).
    BarycentreEvents(barycentre_events::Args),
    /// From BJD_TDB instants back to the clock time at which the signal reaches an observer.
    ObserverTime(observer_time::Args),
    /// Convert single times between scales (UTC, TAI, TT, TDB, TCB, GPS) and formats.
    ConvertTime(convert_time::Args),
    /// Periodogram of one light curve: top peaks with errors, false-alarm probabilities, alias notes.
    FindPeriods(find_periods::Args),
    /// Phase-fold a light curve at a period and epoch; folded points and binned curve.
    FoldCurve(fold_curve::Args),
    /// Extract significant frequencies one by one (prewhitening) down to an S/N limit.
    ExtractFrequencies(extract_frequencies::Args),
    /// Period search of every source in a survey table, streamed, in parallel.
    SurveyBatch(survey_batch::Args),
    /// Fit a pulsar spin (+ binary) timing model to arrival times, phase-connected.
    FitTiming(fit_timing::Args),
    /// Search a photon-event table for pulsations (Z²ₙ over frequency and its derivative).
    SearchPulsations(search_pulsations::Args),
    /// Fold photon events with a timing model: binned pulse profile, smooth template, figure.
    PulseProfile(pulse_profile::Args),
    /// Pulse arrival times from segments of photon events by template matching (input of fit-timing).
    EventArrivalTimes(event_arrival_times::Args),
    /// Cycle numbers, O–C and fitted ephemeris models (period change, light-time companion) from event timings.
    TimingResiduals(timing_residuals::Args),
    /// Measure the light time per au (and c) from timings never corrected to the barycentre.
    MeasureLightTime(measure_light_time::Args),
    /// Upcoming events of an ephemeris at a site: UTC, uncertainty, altitudes, twilight, Moon, Sun caution.
    PredictEvents(predict_events::Args),
    /// Times of minimum (or maximum) of every event in a light curve around a linear ephemeris.
    TimeEvents(time_events::Args),
    /// Mid-transit times from a transit model shared by all transits (input of timing-residuals).
    TimeTransits(time_transits::Args),
    /// Run the whole chain on the invented demonstration scenario in datasets/.
    Demo(demo::Args),
    /// Print a completion script for bash, zsh or fish, generated from these commands.
    ShellCompletions(shell_completions::Args),
    /// Print the manual page (roff, section 1) generated from these commands.
    ManualPage(manual_page::Args),
}

/// Runs the parsed command; errors reach `main` which prints them and exits with 1.
pub fn run(cli: Cli) -> anyhow::Result<()> {
    match cli.command {
        Command::Barycentre(a) => barycentre::run(a),
        Command::BarycentreEvents(a) => barycentre_events::run(a),
        Command::ObserverTime(a) => observer_time::run(a),
        Command::ConvertTime(a) => convert_time::run(a),
        Command::TimingResiduals(a) => timing_residuals::run(a),
        Command::PredictEvents(a) => predict_events::run(a),
        Command::TimeEvents(a) => time_events::run(a),
        Command::TimeTransits(a) => time_transits::run(a),
        Command::Demo(a) => demo::run(a),
        Command::ShellCompletions(a) => shell_completions::run(a),
        Command::ManualPage(a) => manual_page::run(a),
        Command::MeasureLightTime(a) => measure_light_time::run(a),
        Command::FindPeriods(a) => find_periods::run(a),
        Command::FoldCurve(a) => fold_curve::run(a),
        Command::ExtractFrequencies(a) => extract_frequencies::run(a),
        Command::SurveyBatch(a) => survey_batch::run(a),
        Command::FitTiming(a) => fit_timing::run(a),
        Command::SearchPulsations(a) => search_pulsations::run(a),
        Command::PulseProfile(a) => pulse_profile::run(a),
        Command::EventArrivalTimes(a) => event_arrival_times::run(a),
    }
}
