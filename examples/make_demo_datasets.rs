//! Writes the invented demonstration scenario into `datasets/` (fixed seed; see
//! `skyclock::demo::scenario`). Run: `cargo run --release --example make_demo_datasets`.

fn main() -> anyhow::Result<()> {
    skyclock::demo::scenario::write_datasets(std::path::Path::new("datasets"))?;
    println!("wrote datasets/{} and datasets/{}", skyclock::demo::scenario::MINIMA_FILE, skyclock::demo::scenario::DESCRIPTION_FILE);
    Ok(())
}
