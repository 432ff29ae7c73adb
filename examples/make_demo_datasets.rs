//! Writes the invented demonstration scenario into `datasets/` (fixed seed; see
//! `skyclock::demo::scenario` and `skyclock::demo::pulsar_scenario`).
//! Run: `cargo run --release --example make_demo_datasets`.

fn main() -> anyhow::Result<()> {
    let folder = std::path::Path::new("datasets");
    skyclock::demo::scenario::write_datasets(folder)?;
    let mut names: Vec<String> = std::fs::read_dir(folder)?.filter_map(|e| e.ok()).map(|e| e.file_name().to_string_lossy().into_owned()).collect();
    names.sort();
    println!("wrote into datasets/: {}", names.join(", "));
    Ok(())
}
