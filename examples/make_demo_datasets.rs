//! Writes the invented demonstration scenario's truth into `datasets/generator/` and its
//! descriptions into `datasets/` (fixed seed; see `src/demo/truth.rs`, compiled into this
//! example from the binary's sources). The observed times are then computed from the truth
//! by `datasets/generator/observe.py` (astropy + DE440; `datasets/generator/README.md`).
//! Run: `cargo run --release --example make_demo_datasets`.

#[allow(dead_code, unused_imports)]
#[path = "../src/cli/mod.rs"]
mod cli;
#[allow(dead_code, unused_imports)]
#[path = "../src/demo/mod.rs"]
mod demo;

fn main() -> anyhow::Result<()> {
    let folder = std::path::Path::new("datasets");
    demo::truth::write_datasets(folder)?;
    let mut names: Vec<String> = std::fs::read_dir(folder)?
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    println!("wrote into datasets/: {}", names.join(", "));
    Ok(())
}
