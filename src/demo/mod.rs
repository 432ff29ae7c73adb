//! The demonstration scenario, all invented: the eclipsing binary "KX Inventa" with an unseen
//! third body, timed for thirty years from three observatories in mixed clocks, plus a
//! season of its photometry; a survey field of 220 light curves; the binary pulsar
//! "Veyra X-2" with radio arrival times and X-ray events. The demo runs the whole chain
//! ([`chain`]) and compares what it recovers with the truth. The data files in `datasets/`
//! are made by [`scenario::write_datasets`] with a fixed seed (`cargo run --release
//! --example make_demo_datasets`); the survey is written into the output folder.

pub mod chain;
pub mod pulsar_scenario;
pub mod random;
pub mod run;
pub mod scenario;
pub mod survey_scenario;

pub use run::run_demo;
