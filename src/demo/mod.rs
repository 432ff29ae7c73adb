//! The demonstration scenario: an invented eclipsing binary, "KX Inventa", timed from three
//! invented observatories in mixed clocks; the demo carries every timing to BJD_TDB and
//! shows what the correction recovers. The data files in `datasets/` are made by
//! [`scenario::write_datasets`] with a fixed seed (`cargo run --release --example
//! make_demo_datasets`).

pub mod pulsar_scenario;
pub mod random;
pub mod run;
pub mod scenario;
pub mod survey_scenario;

pub use run::run_demo;
