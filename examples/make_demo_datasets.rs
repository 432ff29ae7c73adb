//! Writes the invented demonstration scenario into `datasets/` (fixed seed; see
//! `src/demo/scenario.rs` and `src/demo/pulsar_scenario.rs`, which belong to the binary and
//! are compiled into this example from the same sources).
//! Run: `cargo run --release --example make_demo_datasets`.

#[allow(dead_code, unused_imports)]
#[path = "../src/cli/mod.rs"]
mod cli;
#[allow(dead_code, unused_imports)]
#[path = "../src/demo/mod.rs"]
mod demo;

fn main() -> anyhow::Result<()> {
    let folder = std::path::Path::new("datasets");
    demo::scenario::write_datasets(folder)?;
    let mut names: Vec<String> = std::fs::read_dir(folder)?
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    println!("wrote into datasets/: {}", names.join(", "));
    Ok(())
}
