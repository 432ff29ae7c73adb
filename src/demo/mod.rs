//! The demonstration scenario, all invented: the eclipsing binary "KX Inventa" with an unseen
//! third body, timed for thirty years from three observatories in mixed clocks, plus a
//! season of its photometry; a survey field of 160 light curves; the binary pulsar
//! "Veyra Beacon" with radio arrival times and X-ray events. The demo runs the whole chain
//! ([`chain`]) and compares what it recovers with the truth. The data files in `datasets/`
//! hold the truth written by [`truth::write_datasets`] with a fixed seed (`cargo run --release
//! --example make_demo_datasets`) and the observed times `datasets/generator/observe.py`
//! computes from it with astropy and DE440; the survey is written into the output folder.

// Compiled into tests and an example with `#[path]` as well as into the binary, so the
// crate-wide lint choices of src/main.rs are repeated here (see there for the reasons).
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    clippy::needless_range_loop,
    clippy::nonminimal_bool,
    clippy::result_large_err
)]

pub mod apsidal_scenario;
pub mod chain;
pub mod planet_scenario;
pub mod pulsar_scenario;
pub mod random;
pub mod run;
pub mod scenario;
pub mod survey_scenario;
// Used by examples/make_demo_datasets.rs only: the binary reads the committed data.
#[allow(dead_code)]
pub mod truth;

pub use run::run_demo;
