//! The block-wise table path (`barycentre` on CSV/TSV, streamed `block_rows` rows at a time)
//! against the whole-table path, byte for byte, and against the exact per-row correction.
//!
//! References: the whole-table path (`read_table` → `barycentre_table_along` →
//! `write_table`, itself checked row by row in tests/arrival_table_nodes.rs), and the exact
//! per-row correction (`CorrectionPath::ExactEveryRow`, checked against astropy 8.0.2 in
//! tests/arrival_references.rs). The claim under test (docs/arrival.md): the streamed
//! output holds exactly the bytes of the whole-table output whatever the block size, for
//! mixed clocks and sites, legacy HJD rows, rows already barycentric, UTC rows across a
//! leap second (IERS Bulletin C table built in) and rows across the edge of an
//! Earth-orientation table (the IERS finals2000A excerpt in tests/reference/), with other
//! columns (numbers, quoted text with commas, comment lines) passed through; every row is
//! within 1 ns of the exact path; and a bad cell in a later block is refused with the same
//! file, row and column as the whole table, leaving no output behind. Invented sites,
//! source and values.

use std::collections::BTreeMap;
use std::io::Write;
use std::path::{Path, PathBuf};

use skyclock::arrival::table::{ClockSpec, ObserverSpec, TableRequest};
use skyclock::arrival::{
    CorrectionPath, DelayOptions, ReferenceData, Source, barycentre_table_along, barycentre_text_table_in_blocks,
};
use skyclock::ephemeris::embedded;
use skyclock::fit::random::SeededRng;
use skyclock::observer::{EarthOrientation, EarthOrientationTable, Site};
use skyclock::table::{Provenance, float_column, read_table, write_table};
use skyclock::time::{Instant, LeapSecondTable, ScaleConverter, TimeScale, format_time};

const CLOCKS: [&str; 9] =
    ["jd_utc", "mjd_tt", "iso_utc", "hjd_utc", "bjd_tdb", "jd_tai", "rjd_utc", "jd_tdb", "hmjd_tt"];
const SITES: [&str; 3] = ["Invented Ridge", "Invented Atoll", "geocentre"];

fn converter() -> ScaleConverter {
    ScaleConverter::new(LeapSecondTable::builtin())
}

fn reference() -> ReferenceData {
    let orientation = EarthOrientationTable::from_file(Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/finals2000A_excerpt.all"
    )))
    .unwrap();
    ReferenceData {
        ephemeris: embedded().into(),
        converter: converter(),
        orientation: EarthOrientation::Table(orientation),
    }
}

fn source() -> Source {
    let mut source = Source::fixed_degrees("invented binary", 281.25, -29.75).unwrap();
    source.proper_motion_ra_mas_per_yr = 120.0;
    source.proper_motion_dec_mas_per_yr = -340.0;
    source.parallax_mas = 25.0;
    source
}

fn request() -> TableRequest {
    let sites: BTreeMap<String, Site> = [
        Site::from_degrees("Invented Ridge", -105.123, 39.456, 2150.0).unwrap(),
        Site::from_degrees("Invented Atoll", 170.2, -14.3, 5.0).unwrap(),
    ]
    .into_iter()
    .map(|s| (s.name.clone(), s))
    .collect();
    TableRequest {
        time_column: "time".into(),
        clock: None,
        clock_column: Some("clock".into()),
        observer: ObserverSpec::SiteColumn { column: "observatory".into(), sites },
    }
}

/// The reading of TAI instant `tai` on the clock `label`, as text.
fn reading(tai: &Instant, label: &str) -> String {
    let clock = ClockSpec::parse_label(label).unwrap();
    let t = converter().convert(tai, clock.scale).unwrap();
    format_time(&t, clock.format)
}

/// Dense nights (across the leap second at the end of 2016, across the end of the
/// Earth-orientation excerpt at MJD 59173, an ordinary night) and sparse rows.
fn instants() -> Vec<Instant> {
    let mut out = Vec::new();
    for (day, start, length) in
        [(57_753, 75_600.0, 21_600.0), (59_172, 70_000.0, 21_600.0), (60_100, 3_600.0, 21_600.0)]
    {
        let first = Instant::from_mjd_parts(TimeScale::Tai, day, start);
        out.extend((0..600).map(|k| first.add_seconds(k as f64 * length / 600.0)));
    }
    let mut rng = SeededRng::new(23);
    out.extend((0..60).map(|_| {
        Instant::from_mjd_parts(TimeScale::Tai, 47_900 + (rng.uniform() * 17_000.0) as i64, rng.uniform() * 86_400.0)
    }));
    out
}

/// Writes the mixed table; `spoil` may replace a row's text (row index, line).
fn write_mixed_table(path: &Path, spoil: Option<(usize, &str)>) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(out, "time,clock,observatory,flux,frame,note").unwrap();
    let mut rng = SeededRng::new(5);
    for (i, t) in instants().iter().enumerate() {
        if i == 700 {
            writeln!(out, "# a comment line among the rows").unwrap();
        }
        if let Some((row, line)) = spoil
            && row == i
        {
            writeln!(out, "{line}").unwrap();
            continue;
        }
        let clock = CLOCKS[i % CLOCKS.len()];
        let site = SITES[(i / CLOCKS.len()) % SITES.len()];
        // Quoted text with a comma; one cell spanning two lines (that block is written by
        // polars' writer alone, the others with the added columns formatted here).
        let note = match i {
            1234 => "\"high cloud\non the horizon\"",
            _ if i % 7 == 0 => "\"cloudy, then clear\"",
            _ => "clear",
        };
        writeln!(out, "{},{clock},{site},{:.5},{},{note}", reading(t, clock), 1.0 + 0.01 * rng.uniform(), i % 13)
            .unwrap();
    }
}

fn dir() -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_barycentre_blocks_{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn provenance() -> Provenance {
    Provenance::new("barycentre_blocks test").with("stage", "barycentre")
}

fn whole(input: &Path, output: &Path, path: CorrectionPath) -> Result<(), String> {
    let request = request();
    let df = read_table(input, &request.text_columns()).map_err(|e| e.to_string())?;
    let file = input.display().to_string();
    let (mut out, _) = barycentre_table_along(&df, &file, &request, &reference(), &source(), delays(), path)
        .map_err(|e| e.to_string())?;
    write_table(&mut out, output, &provenance(), &[input]).map_err(|e| e.to_string())
}

fn delays() -> DelayOptions {
    DelayOptions { shapiro_sun: true, shapiro_planets: true }
}

fn blocks(input: &Path, output: &Path, block_rows: usize) -> Result<skyclock::arrival::BarycentreRun, String> {
    barycentre_text_table_in_blocks(
        input,
        output,
        &request(),
        &reference(),
        &source(),
        delays(),
        CorrectionPath::Automatic,
        block_rows,
        &provenance(),
    )
    .map_err(|e| e.to_string())
}

#[test]
fn streamed_blocks_give_the_bytes_of_the_whole_table_and_stay_within_1_ns_of_the_exact_path() {
    let d = dir().join("good");
    std::fs::create_dir_all(&d).unwrap();
    let input = d.join("mixed.csv");
    write_mixed_table(&input, None);
    let reference_out = d.join("whole.csv");
    whole(&input, &reference_out, CorrectionPath::Automatic).unwrap();
    let expected = std::fs::read(&reference_out).unwrap();
    for block_rows in [1, 97, 1000, 1 << 16] {
        let out = d.join(format!("blocks_{block_rows}.csv"));
        let run = blocks(&input, &out, block_rows).unwrap();
        assert_eq!(run.correction.rows, instants().len());
        assert!(run.correction.rows_interpolated > 1000, "{}", run.correction.rows_interpolated);
        eprintln!("{block_rows}: {:?}", run.correction);
        assert!(run.correction.rows_with_earth_orientation_table > 100, "the table edge must be exercised");
        assert_eq!(run.clocks_seen.len(), CLOCKS.len());
        let got = std::fs::read(&out).unwrap();
        assert!(got == expected, "block size {block_rows}: the streamed output differs from the whole table's");
        assert!(skyclock::table::write::sidecar_path(&out).exists());
    }
    // Every row within 1 ns of the exact path.
    let exact_out = d.join("exact.csv");
    whole(&input, &exact_out, CorrectionPath::ExactEveryRow).unwrap();
    let two_part = |p: &Path| {
        let df = read_table(p, &[]).unwrap();
        let a = float_column(&df, "t", "bjd_tdb_jd1").unwrap();
        let b = float_column(&df, "t", "bjd_tdb_jd2").unwrap();
        a.into_iter().zip(b).collect::<Vec<_>>()
    };
    let (fast, exact) = (two_part(&d.join("blocks_97.csv")), two_part(&exact_out));
    assert_eq!(fast.len(), exact.len());
    let worst =
        fast.iter().zip(&exact).map(|(p, q)| (((p.0 - q.0) + (p.1 - q.1)) * 86_400.0).abs()).fold(0.0, f64::max);
    eprintln!("largest |blocks − exact| in BJD_TDB: {worst:.2e} s");
    assert!(worst <= 1e-9, "{worst}");
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn a_bad_cell_in_a_later_block_is_refused_as_the_whole_table_refuses_it() {
    let d = dir().join("bad");
    std::fs::create_dir_all(&d).unwrap();
    for (row, line, column) in [
        (1500, ",jd_utc,geocentre,1.0,1,clear", "time"),
        (1500, "2460100.5,jd_xyz,geocentre,1.0,1,clear", "clock"),
        (1700, "2460100.5,jd_utc,Invented Nowhere,1.0,1,clear", "observatory"),
        (1600, "not a time,jd_utc,geocentre,1.0,1,clear", "time"),
    ] {
        let input = d.join("spoiled.csv");
        write_mixed_table(&input, Some((row, line)));
        let whole_error = whole(&input, &d.join("whole.csv"), CorrectionPath::Automatic).unwrap_err();
        let out = d.join("blocks.csv");
        let block_error = blocks(&input, &out, 256).unwrap_err();
        assert_eq!(block_error, whole_error);
        assert!(
            block_error.contains("spoiled.csv")
                && block_error.contains(&format!("row {}", row + 1))
                && block_error.contains(column),
            "{block_error}"
        );
        assert!(!out.exists(), "no output may be left after an error");
        let leftovers: Vec<_> = std::fs::read_dir(&d)
            .unwrap()
            .flatten()
            .filter(|e| e.file_name().to_string_lossy().contains("partial"))
            .collect();
        assert!(leftovers.is_empty(), "temporary files left: {leftovers:?}");
    }
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn the_output_may_not_be_the_input() {
    let d = dir().join("same");
    std::fs::create_dir_all(&d).unwrap();
    let input = d.join("mixed.csv");
    write_mixed_table(&input, None);
    let before = std::fs::read(&input).unwrap();
    assert!(blocks(&input, &input, 100).is_err());
    assert_eq!(std::fs::read(&input).unwrap(), before);
    let _ = std::fs::remove_dir_all(&d);
}
