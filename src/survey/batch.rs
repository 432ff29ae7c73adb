//! Survey batches: a table of many light curves keyed by a source-id column, streamed in
//! bounded memory (CSV/TSV line by line, Parquet in row slices), grouped into one light
//! curve per source, searched in parallel (rayon), one summary per source.
//!
//! Requirement: the rows of one source must be contiguous (any order of sources; sort the
//! table by source id first otherwise). A source id met again after other sources is
//! reported as a bad source ("not contiguous"), never merged silently. Memory holds one
//! batch of sources (see [`BatchOptions::batch_points`]) plus the set of finished ids.
//! A bad source (unreadable cell, too few points, constant values …) is reported with its
//! message and skipped; the batch goes on.

use std::collections::HashSet;
use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::Path;

use polars::prelude::*;
use rayon::prelude::*;

use super::input::{days_since, numeric_cell, uncertainty_cell};
use super::search::{SearchOutcome, SearchPlan, describe_alias, search_series};
use crate::arrival::table::ClockSpec;
use crate::periodogram::{LightCurve, Series};
use crate::table::{TableError, TableFormat};
use crate::time::{Instant, LeapSecondTable, TimeScale, parse_time};

/// Columns of a survey table.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BatchColumns {
    /// Name of the source id column (rows of one source must be contiguous).
    pub source: String,
    /// Name of the time column, read in the batch's clock.
    pub time: String,
    /// Name of the value column (magnitudes or fluxes).
    pub value: String,
    /// Name of the 1-σ uncertainty column, in the units of the values (None: equal weights).
    pub error: Option<String>,
    /// Name of the band label column (None: one band).
    pub band: Option<String>,
    /// Name of the right-ascension column of the source (ICRS, degrees) — needed only when
    /// the clock is not barycentric, to carry the times to the barycentre.
    pub ra_deg: Option<String>,
    /// Name of the declination column of the source (ICRS, degrees), needed as `ra_deg`.
    pub dec_deg: Option<String>,
}

/// One data row as text cells (borrowed from the reader).
#[derive(Debug, Clone, Copy)]
pub struct RowCells<'a> {
    /// 1-based data row in the file.
    pub row: usize,
    /// Text of the source id cell.
    pub source: Option<&'a str>,
    /// Text of the time cell.
    pub time: Option<&'a str>,
    /// Text of the value cell.
    pub value: Option<&'a str>,
    /// Text of the uncertainty cell.
    pub error: Option<&'a str>,
    /// Text of the band label cell.
    pub band: Option<&'a str>,
    /// Text of the right-ascension cell, degrees.
    pub ra_deg: Option<&'a str>,
    /// Text of the declination cell, degrees.
    pub dec_deg: Option<&'a str>,
}

/// A table read row by row in bounded memory.
pub trait RowStream {
    /// Calls `visit` for every data row in file order; stops at the first error either side.
    fn for_each_row(&mut self, visit: &mut dyn FnMut(RowCells<'_>) -> Result<(), TableError>)
    -> Result<(), TableError>;
    /// A shared counter of the input consumed so far (for progress).
    fn progress(&self) -> ReadProgress;
    /// The most data rows this reader has held in memory at once so far (1 for a reader
    /// that goes line by line; the largest slice for a Parquet reader).
    fn peak_rows_buffered(&self) -> usize;
    /// Warnings about how the time column is stored, found while reading
    /// ([`crate::table::plausibility::float_time_resolution`]; none for text tables).
    fn storage_warnings(&self) -> Vec<crate::table::plausibility::TimeWarning> {
        Vec::new()
    }
}

/// How much of an input has been read: `done` of `total` units (bytes or rows).
#[derive(Debug, Clone)]
pub struct ReadProgress {
    /// Units read so far (bytes or rows, as `total`), shared with the reader that advances it.
    pub done: std::sync::Arc<std::sync::atomic::AtomicU64>,
    /// Units in the whole input: bytes of a delimited text file, rows of a Parquet file.
    pub total: u64,
}

impl ReadProgress {
    /// Fraction read, 0..1.
    pub fn fraction(&self) -> f64 {
        if self.total == 0 {
            0.0
        } else {
            (self.done.load(std::sync::atomic::Ordering::Relaxed) as f64 / self.total as f64).min(1.0)
        }
    }
}

/// CSV/TSV streamed line by line. Fields may be quoted with `"` (a doubled `""` inside a
/// quoted field is a quote); a field may not span lines. Lines starting with `#` are skipped.
pub struct DelimitedRows {
    file: String,
    names: Vec<String>,
    reader: BufReader<File>,
    separator: char,
    total_bytes: u64,
    read_bytes: std::sync::Arc<std::sync::atomic::AtomicU64>,
    index: [Option<usize>; 7],
}

fn split_fields<'a>(line: &'a str, sep: char, out: &mut Vec<std::borrow::Cow<'a, str>>) {
    out.clear();
    if !line.contains('"') {
        out.extend(line.split(sep).map(std::borrow::Cow::Borrowed));
        return;
    }
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            '"' => quoted = !quoted,
            c if c == sep && !quoted => out.push(std::borrow::Cow::Owned(std::mem::take(&mut field))),
            c => field.push(c),
        }
    }
    out.push(std::borrow::Cow::Owned(field));
}

impl DelimitedRows {
    /// Opens `path` and finds the columns in its header.
    pub fn open(path: &Path, columns: &BatchColumns) -> Result<DelimitedRows, TableError> {
        let file = path.display().to_string();
        let format = TableFormat::from_path(path)?;
        let separator = if format == TableFormat::Tsv { '\t' } else { ',' };
        let f = File::open(path)
            .map_err(|e| TableError::File { file: file.clone(), message: format!("cannot open: {e}") })?;
        let total_bytes = f.metadata().map(|m| m.len()).unwrap_or(0);
        let mut reader = BufReader::with_capacity(1 << 20, f);
        let mut header = String::new();
        let mut consumed = 0u64;
        loop {
            header.clear();
            let n = reader
                .read_line(&mut header)
                .map_err(|e| TableError::File { file: file.clone(), message: format!("cannot read: {e}") })?;
            if n == 0 {
                return Err(TableError::Empty { file });
            }
            consumed += n as u64;
            if !header.trim().is_empty() && !header.starts_with('#') {
                break;
            }
        }
        crate::table::layout::check_header(&header, separator, &file)?;
        let mut names = Vec::new();
        split_fields(crate::table::layout::clean_line(&header), separator, &mut names);
        let names: Vec<String> = names.iter().map(|s| s.trim().to_string()).collect();
        let find = |c: &str| -> Result<usize, TableError> {
            names.iter().position(|n| n == c).ok_or_else(|| TableError::MissingColumn {
                file: file.clone(),
                column: c.to_string(),
                available: names.join(", "),
            })
        };
        let index = [
            Some(find(&columns.source)?),
            Some(find(&columns.time)?),
            Some(find(&columns.value)?),
            columns.error.as_deref().map(find).transpose()?,
            columns.band.as_deref().map(find).transpose()?,
            columns.ra_deg.as_deref().map(find).transpose()?,
            columns.dec_deg.as_deref().map(find).transpose()?,
        ];
        Ok(DelimitedRows {
            file,
            names,
            reader,
            separator,
            total_bytes,
            read_bytes: std::sync::Arc::new(consumed.into()),
            index,
        })
    }
}

impl RowStream for DelimitedRows {
    fn for_each_row(
        &mut self,
        visit: &mut dyn FnMut(RowCells<'_>) -> Result<(), TableError>,
    ) -> Result<(), TableError> {
        let mut line = String::new();
        let mut row = 0usize;
        loop {
            line.clear();
            let n = self.reader.read_line(&mut line).map_err(|e| TableError::File {
                file: self.file.clone(),
                message: format!("cannot read after data row {row}: {e}"),
            })?;
            if n == 0 {
                return Ok(());
            }
            self.read_bytes.fetch_add(n as u64, std::sync::atomic::Ordering::Relaxed);
            let text = line.trim_end_matches(['\n', '\r']);
            if text.trim().is_empty() || text.starts_with('#') {
                continue;
            }
            row += 1;
            let mut fields = Vec::with_capacity(8);
            split_fields(text, self.separator, &mut fields);
            let cell = |k: usize| -> Option<&str> {
                self.index[k].and_then(|i| fields.get(i)).map(|c| c.as_ref().trim()).filter(|s| !s.is_empty())
            };
            if fields.len() != self.names.len() {
                return Err(crate::table::layout::field_count_error(&self.file, row, fields.len(), &self.names));
            }
            visit(RowCells {
                row,
                source: cell(0),
                time: cell(1),
                value: cell(2),
                error: cell(3),
                band: cell(4),
                ra_deg: cell(5),
                dec_deg: cell(6),
            })?;
        }
    }
    fn progress(&self) -> ReadProgress {
        ReadProgress { done: self.read_bytes.clone(), total: self.total_bytes }
    }
    fn peak_rows_buffered(&self) -> usize {
        1
    }
}

/// Parquet read in slices of `slice_rows` rows, only the needed columns.
pub struct ParquetRows {
    file: String,
    path: std::path::PathBuf,
    columns: Vec<String>,
    /// Position in `columns` of error, band, RA and Dec, when read.
    slots: [Option<usize>; 4],
    total_rows: usize,
    done_rows: usize,
    done_counter: std::sync::Arc<std::sync::atomic::AtomicU64>,
    slice_rows: usize,
    peak_rows: usize,
    /// The coarsest float resolution of the time column met in the slices read so far.
    coarse_time: Option<crate::table::plausibility::TimeWarning>,
}

impl ParquetRows {
    /// Opens `path`; `slice_rows` bounds the rows held at once (e.g. 200 000).
    pub fn open(path: &Path, columns: &BatchColumns, slice_rows: usize) -> Result<ParquetRows, TableError> {
        let file = path.display().to_string();
        let fail = |m: String| TableError::File { file: file.clone(), message: m };
        let f = File::open(path).map_err(|e| fail(format!("cannot open: {e}")))?;
        let mut reader = ParquetReader::new(f);
        let schema = reader.schema().map_err(|e| fail(format!("cannot read as Parquet: {e}")))?;
        let total_rows = reader.num_rows().map_err(|e| fail(format!("cannot read as Parquet: {e}")))?;
        let mut wanted = vec![columns.source.clone(), columns.time.clone(), columns.value.clone()];
        let mut slots = [None; 4];
        for (k, c) in [&columns.error, &columns.band, &columns.ra_deg, &columns.dec_deg].into_iter().enumerate() {
            if let Some(c) = c {
                slots[k] = Some(wanted.len());
                wanted.push(c.clone());
            }
        }
        let available: Vec<String> = schema.iter_names().map(|n| n.to_string()).collect();
        for w in &wanted {
            if !available.contains(w) {
                return Err(TableError::MissingColumn {
                    file: file.clone(),
                    column: w.clone(),
                    available: available.join(", "),
                });
            }
        }
        if total_rows == 0 {
            return Err(TableError::Empty { file });
        }
        Ok(ParquetRows {
            file,
            path: path.to_path_buf(),
            columns: wanted,
            slots,
            total_rows,
            done_rows: 0,
            done_counter: Default::default(),
            slice_rows: slice_rows.max(1),
            peak_rows: 0,
            coarse_time: None,
        })
    }
}

impl RowStream for ParquetRows {
    fn for_each_row(
        &mut self,
        visit: &mut dyn FnMut(RowCells<'_>) -> Result<(), TableError>,
    ) -> Result<(), TableError> {
        let fail = |m: String| TableError::File { file: self.file.clone(), message: m };
        while self.done_rows < self.total_rows {
            let f = File::open(&self.path).map_err(|e| fail(format!("cannot open: {e}")))?;
            let df = ParquetReader::new(f)
                .with_columns(Some(self.columns.clone()))
                .with_slice(Some((self.done_rows, self.slice_rows)))
                .finish()
                .map_err(|e| fail(format!("cannot read rows from {}: {e}", self.done_rows + 1)))?;
            let n = df.height();
            if n == 0 {
                break;
            }
            self.peak_rows = self.peak_rows.max(n);
            use crate::table::plausibility::{TimeWarning, float_time_resolution};
            let resolution = |w: &Option<TimeWarning>| match w {
                Some(TimeWarning::CoarseFloatColumn { resolution_us, .. }) => *resolution_us,
                _ => 0.0,
            };
            let here = float_time_resolution(&df, &self.file, &self.columns[1]);
            if resolution(&here) > resolution(&self.coarse_time) {
                self.coarse_time = here;
            }
            let mut text = Vec::new();
            for c in &self.columns {
                let col = df.column(c).map_err(|e| fail(e.to_string()))?;
                let s = col
                    .cast(&DataType::String)
                    .map_err(|e| fail(format!("column '{c}' cannot be read as text: {e}")))?;
                text.push(s.str().map_err(|e| fail(e.to_string()))?.clone());
            }
            let slot = |k: usize, i: usize| self.slots[k].and_then(|j| text[j].get(i));
            for i in 0..n {
                visit(RowCells {
                    row: self.done_rows + i + 1,
                    source: text[0].get(i),
                    time: text[1].get(i),
                    value: text[2].get(i),
                    error: slot(0, i),
                    band: slot(1, i),
                    ra_deg: slot(2, i),
                    dec_deg: slot(3, i),
                })?;
            }
            self.done_rows += n;
            self.done_counter.store(self.done_rows as u64, std::sync::atomic::Ordering::Relaxed);
        }
        Ok(())
    }
    fn progress(&self) -> ReadProgress {
        ReadProgress { done: self.done_counter.clone(), total: self.total_rows as u64 }
    }
    fn peak_rows_buffered(&self) -> usize {
        self.peak_rows
    }
    fn storage_warnings(&self) -> Vec<crate::table::plausibility::TimeWarning> {
        self.coarse_time.iter().cloned().collect()
    }
}

/// Opens a CSV/TSV or Parquet table as a row stream.
pub fn open_rows(path: &Path, columns: &BatchColumns, slice_rows: usize) -> Result<Box<dyn RowStream>, TableError> {
    Ok(match TableFormat::from_path(path)? {
        TableFormat::Parquet => Box::new(ParquetRows::open(path, columns, slice_rows)?),
        _ => Box::new(DelimitedRows::open(path, columns)?),
    })
}

/// The rows of one source, parsed.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceRows {
    /// The source id.
    pub id: String,
    /// 1-based data row of the source's first row.
    pub first_row: usize,
    /// 1-based data row of the source's last row.
    pub last_row: usize,
    /// Days since `epoch` (NaN where missing; all NaN for a non-barycentric clock, whose
    /// times are in `clock_time`).
    pub time_d: Vec<f64>,
    /// Reference epoch of `time_d`: the Julian date (TDB) of the first time read, rounded
    /// down to a whole number (None before a time is read).
    pub epoch: Option<Instant>,
    /// Values, one per row (NaN where empty or not finite).
    pub value: Vec<f64>,
    /// 1-σ uncertainties, in the units of the values (None without an uncertainty column;
    /// NaN where empty).
    pub error: Option<Vec<f64>>,
    /// Band index per row, numbering the labels in order of first appearance (None without
    /// a band column).
    pub band: Option<Vec<u32>>,
    band_labels: Vec<String>,
    file_row: Vec<usize>,
    /// Times as read in a non-barycentric clock (carried to BJD_TDB before the search);
    /// empty for barycentric clocks.
    pub clock_time: Vec<Option<Instant>>,
    /// Source position (RA, Dec in degrees) from its first row, for non-barycentric clocks.
    pub position_deg: Option<(f64, f64)>,
    /// The first problem found while reading (the source is then skipped).
    pub problem: Option<String>,
}

/// Carries the arrival times of one source, read in the table's clock, to BJD_TDB — for
/// batches whose clock is not barycentric. Errors go into the source's report.
pub trait SourceArrival: Sync {
    /// BJD_TDB of each time, for a source at `ra_deg`, `dec_deg` (ICRS, degrees).
    fn to_barycentre(&self, ra_deg: f64, dec_deg: f64, times: &[Instant]) -> Result<Vec<Instant>, BarycentringError>;
}

/// Why a survey source's times could not be carried to the barycentre.
#[derive(Debug, thiserror::Error)]
pub enum BarycentringError {
    /// The source position from the table is unusable.
    #[error(transparent)]
    Position(#[from] crate::arrival::CoordinateError),
    /// The correction itself failed (time outside the ephemeris, UTC before 1960, …).
    #[error(transparent)]
    Correction(#[from] crate::arrival::ArrivalError),
}

/// [`SourceArrival`] for one observer (a site or the geocentre) with the arrival stage's
/// full correction (Rømer, Einstein, Shapiro; accuracy as
/// [`crate::arrival::BarycentricCorrector`]), a fixed source direction (no proper motion or
/// parallax: survey tables rarely carry them).
pub struct ObserverArrival {
    /// Solar System ephemeris for the positions of the Earth, Sun and planets.
    pub ephemeris: crate::ephemeris::SharedEphemeris,
    /// Time-scale converter (leap seconds; TDB − TT at the site).
    pub converter: crate::time::ScaleConverter,
    /// UT1 − UTC and polar motion, or none.
    pub orientation: crate::observer::EarthOrientation,
    /// Where the times were recorded: a site or the geocentre.
    pub observer: crate::observer::Observer,
}

impl SourceArrival for ObserverArrival {
    fn to_barycentre(&self, ra_deg: f64, dec_deg: f64, times: &[Instant]) -> Result<Vec<Instant>, BarycentringError> {
        use crate::arrival::{BarycentricCorrector, DelayOptions, ReferencePoint, Source};
        let source = Source::fixed_degrees("source", ra_deg, dec_deg)?;
        let corrector = BarycentricCorrector::new(
            self.ephemeris.clone(),
            self.converter.clone(),
            self.orientation.clone(),
            source,
            DelayOptions::default(),
        );
        times
            .iter()
            .map(|t| {
                corrector
                    .correct(t, &self.observer, ReferencePoint::Observer)
                    .map(|c| c.bjd_tdb)
                    .map_err(BarycentringError::from)
            })
            .collect()
    }
}

/// Options of a batch.
#[derive(Debug, Clone, PartialEq)]
pub struct BatchOptions {
    /// Clock of the times: barycentric TDB (bjd_tdb, bmjd_tdb), or an observer clock whose
    /// times are carried to BJD_TDB with a [`SourceArrival`].
    pub clock: ClockSpec,
    /// Points gathered before a batch of sources is searched (memory holds at most three
    /// such batches; default 2 000 000).
    pub batch_points: usize,
}

/// What a batch reports for one source.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceReport {
    /// The source id.
    pub id: String,
    /// 1-based data row of the source's first row.
    pub first_row: usize,
    /// 1-based data row of the source's last row.
    pub last_row: usize,
    /// JD (TDB) of the epoch the source's times were referred to (NaN when none).
    pub epoch_jd: f64,
    /// The search result without the spectrum, or why the source was skipped.
    pub outcome: Result<SearchOutcome, String>,
}

/// Counts at the end of a batch, with the memory high-water marks (in rows) that show the
/// batch stayed bounded: at most `peak_reader_rows + peak_points_held` data rows were held
/// at once, whatever the size of the table.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BatchSummary {
    /// Sources found in the table.
    pub sources: usize,
    /// Sources searched.
    pub searched: usize,
    /// Sources skipped (their first problem is in their report).
    pub skipped: usize,
    /// Data rows read.
    pub rows: usize,
    /// Most rows the table reader held at once (its slice; 1 for CSV/TSV).
    pub peak_reader_rows: usize,
    /// Most grouped points held at once: the batch being searched, the batch queued for
    /// search, the sources gathering into the next batch and the source being read.
    /// Bounded by 3 × (`batch_points` + the longest source).
    pub peak_points_held: usize,
    /// Warnings about the times of the whole field ([`crate::table::plausibility`]: times
    /// far from the modern era for their clock label, a coarse floating-point time column).
    #[serde(default)]
    pub warnings: Vec<crate::table::plausibility::TimeWarning>,
}

/// Result of `survey-batch`: the counts of a batch, the first problems met and the
/// per-source table written.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BatchResult {
    /// Counts and memory high-water marks.
    pub summary: BatchSummary,
    /// Per-source table written (path as given).
    pub output: String,
    /// How the times were taken (clock, site, conversion), as text.
    pub times: String,
    /// Wall-clock seconds the batch took (informative only; varies run to run).
    pub seconds: f64,
    /// The first few skipped sources' problems, in words.
    pub first_skipped: Vec<String>,
}

struct Grouper<'a> {
    file: String,
    columns: &'a BatchColumns,
    options: &'a BatchOptions,
    leap: &'a LeapSecondTable,
    current: Option<SourceRows>,
    seen: HashSet<String>,
    pending: Vec<SourceRows>,
    pending_points: usize,
    rows: usize,
    peak_points: usize,
    /// Times are in a non-barycentric clock and are carried per source.
    carry: bool,
    /// The span of the times read (for the field's plausibility warnings).
    span: crate::table::plausibility::TimeSpanCheck,
    /// The clock label of the times (`options.clock`), written once.
    clock_label: String,
}

impl Grouper<'_> {
    fn new_source(&self, id: &str, row: usize) -> SourceRows {
        let mut s = SourceRows {
            id: id.to_string(),
            first_row: row,
            last_row: row,
            time_d: Vec::new(),
            epoch: None,
            value: Vec::new(),
            error: self.columns.error.as_ref().map(|_| Vec::new()),
            band: self.columns.band.as_ref().map(|_| Vec::new()),
            band_labels: Vec::new(),
            file_row: Vec::new(),
            clock_time: Vec::new(),
            position_deg: None,
            problem: None,
        };
        if self.seen.contains(id) {
            s.problem = Some(format!(
                "{}, row {row}, column '{}': rows of source '{id}' are not contiguous (the source appeared earlier); sort the table by source id first",
                self.file, self.columns.source
            ));
        }
        s
    }

    fn push(&mut self, c: RowCells<'_>) -> Option<SourceRows> {
        self.rows += 1;
        let id = c.source.unwrap_or("");
        let mut finished = None;
        if self.current.as_ref().is_none_or(|s| s.id != id) {
            let fresh = self.new_source(id, c.row);
            if let Some(done) = self.current.replace(fresh) {
                self.seen.insert(done.id.clone());
                finished = Some(done);
            }
        }
        let (file, leap, clock) = (self.file.clone(), self.leap, self.options.clock);
        let columns = self.columns;
        let Some(s) = self.current.as_mut() else { return finished };
        s.last_row = c.row;
        if s.problem.is_some() {
            return finished;
        }
        if id.is_empty() {
            s.problem = Some(format!("{file}, row {}, column '{}': empty source id", c.row, columns.source));
            return finished;
        }
        if self.carry {
            if s.position_deg.is_none() {
                let ra = numeric_cell(c.ra_deg, &file, c.row, columns.ra_deg.as_deref().unwrap_or("ra"));
                let dec = numeric_cell(c.dec_deg, &file, c.row, columns.dec_deg.as_deref().unwrap_or("dec"));
                match (ra, dec) {
                    (Ok(ra), Ok(dec)) if ra.is_finite() && dec.is_finite() => s.position_deg = Some((ra, dec)),
                    (Err(e), _) | (_, Err(e)) => {
                        s.problem = Some(e.to_string());
                        return finished;
                    }
                    _ => {
                        s.problem = Some(format!(
                            "{file}, row {}, columns '{}'/'{}': the source position is empty; it is needed to carry {} times to the barycentre",
                            c.row,
                            columns.ra_deg.as_deref().unwrap_or("?"),
                            columns.dec_deg.as_deref().unwrap_or("?"),
                            clock.scale.name()
                        ));
                        return finished;
                    }
                }
            }
            let raw = match c.time.filter(|t| !t.eq_ignore_ascii_case("nan")) {
                None => None,
                Some(text) => match parse_time(text, clock.format, clock.scale, leap) {
                    Ok(inst) => {
                        if let Some(m) =
                            crate::table::plausibility::other_convention(&inst, clock.format, || clock.label())
                        {
                            s.problem = Some(format!("{file}, row {}, column '{}': {m}", c.row, columns.time));
                            return finished;
                        }
                        self.span.record(c.row, &self.clock_label, clock.format, &inst);
                        Some(inst)
                    }
                    Err(e) => {
                        s.problem = Some(format!("{file}, row {}, column '{}': {e}", c.row, columns.time));
                        return finished;
                    }
                },
            };
            s.clock_time.push(raw);
        }
        let t = match c.time.filter(|t| !self.carry && !t.eq_ignore_ascii_case("nan")) {
            None => f64::NAN,
            Some(text) => match parse_time(text, clock.format, clock.scale, leap) {
                Ok(inst) => {
                    if let Some(m) = crate::table::plausibility::other_convention(&inst, clock.format, || clock.label())
                    {
                        s.problem = Some(format!("{file}, row {}, column '{}': {m}", c.row, columns.time));
                        return finished;
                    }
                    self.span.record(c.row, &self.clock_label, clock.format, &inst);
                    let epoch = *s.epoch.get_or_insert_with(|| {
                        let (a, b) = inst.jd_two_part();
                        Instant::from_jd_two_part(TimeScale::Tdb, (a + b).floor(), 0.0)
                    });
                    days_since(&inst, &epoch)
                }
                Err(e) => {
                    s.problem = Some(format!("{file}, row {}, column '{}': {e}", c.row, columns.time));
                    return finished;
                }
            },
        };
        let v = match numeric_cell(c.value, &file, c.row, &columns.value) {
            Ok(v) => v,
            Err(e) => {
                s.problem = Some(e.to_string());
                return finished;
            }
        };
        if let (Some(errs), Some(name)) = (s.error.as_mut(), columns.error.as_deref()) {
            match uncertainty_cell(c.error, &file, c.row, name) {
                Ok(e) => errs.push(e),
                Err(e) => {
                    s.problem = Some(e.to_string());
                    return finished;
                }
            }
        }
        if let Some(bands) = s.band.as_mut() {
            let label = c.band.unwrap_or("");
            let k = match s.band_labels.iter().position(|l| l == label) {
                Some(k) => k,
                None => {
                    s.band_labels.push(label.to_string());
                    s.band_labels.len() - 1
                }
            };
            bands.push(k as u32);
        }
        s.time_d.push(t);
        s.value.push(v);
        s.file_row.push(c.row);
        finished
    }
}

/// Searches one source's rows (no spectrum is kept). Times read in a non-barycentric clock
/// are first carried to BJD_TDB with `arrival` (a source reports an error without it).
pub fn search_source(
    rows: &SourceRows,
    plan: &SearchPlan,
    file: &str,
    columns: &BatchColumns,
    arrival: Option<&dyn SourceArrival>,
) -> SourceReport {
    let carried;
    let (epoch, time_d) = if rows.clock_time.is_empty() || rows.problem.is_some() {
        (rows.epoch, &rows.time_d)
    } else {
        let fail = |m: String| SourceReport {
            id: rows.id.clone(),
            first_row: rows.first_row,
            last_row: rows.last_row,
            epoch_jd: f64::NAN,
            outcome: Err(m),
        };
        let (Some(arrival), Some((ra, dec))) = (arrival, rows.position_deg) else {
            return fail(format!(
                "{file}: source '{}' (rows {}–{}): times are not barycentric and no way to carry them was given",
                rows.id, rows.first_row, rows.last_row
            ));
        };
        let known: Vec<Instant> = rows.clock_time.iter().flatten().copied().collect();
        let bjd = match arrival.to_barycentre(ra, dec, &known) {
            Ok(b) => b,
            Err(e) => {
                return fail(format!(
                    "{file}: source '{}' (rows {}–{}): carrying the times to the barycentre failed: {e}",
                    rows.id, rows.first_row, rows.last_row
                ));
            }
        };
        let epoch = bjd.first().map(|i| {
            let (a, b) = i.jd_two_part();
            Instant::from_jd_two_part(TimeScale::Tdb, (a + b).floor(), 0.0)
        });
        let mut it = bjd.iter();
        carried = rows
            .clock_time
            .iter()
            .map(|t| match (t, epoch) {
                (Some(_), Some(e)) => it.next().map_or(f64::NAN, |b| days_since(b, &e)),
                _ => f64::NAN,
            })
            .collect::<Vec<f64>>();
        (epoch, &carried)
    };
    let epoch_jd = epoch.map_or(f64::NAN, |e| {
        let (a, b) = e.jd_two_part();
        a + b
    });
    let report = |outcome| SourceReport {
        id: rows.id.clone(),
        first_row: rows.first_row,
        last_row: rows.last_row,
        epoch_jd,
        outcome,
    };
    if let Some(p) = &rows.problem {
        return report(Err(p.clone()));
    }
    let mut lc = LightCurve::new(time_d, &rows.value);
    if let Some(e) = &rows.error {
        lc = lc.with_error(e);
    }
    if let Some(b) = &rows.band {
        lc = lc.with_band(b);
    }
    let located = super::input::TableLightCurve {
        file: file.to_string(),
        columns: super::input::LightCurveColumns {
            time: columns.time.clone(),
            value: columns.value.clone(),
            error: columns.error.clone(),
            band: columns.band.clone(),
        },
        epoch: epoch.unwrap_or_else(|| Instant::from_jd_two_part(TimeScale::Tdb, 2451545.0, 0.0)),
        time_d: Vec::new(),
        value: Vec::new(),
        error: None,
        band: rows.band.clone(),
        band_labels: rows.band_labels.clone(),
        file_row: rows.file_row.clone(),
        warnings: Vec::new(),
    };
    let series = match Series::from_light_curve(&lc) {
        Ok(s) => s,
        Err(e) => return report(Err(format!("source '{}': {}", rows.id, located.locate(e)))),
    };
    match search_series(&series, plan) {
        Ok(mut out) => {
            out.spectrum.power = Vec::new();
            out.spectrum.amplitude = None;
            report(Ok(out))
        }
        Err(e) => report(Err(format!("{file}: source '{}' (rows {}–{}): {e}", rows.id, rows.first_row, rows.last_row))),
    }
}

/// Runs a batch: streams `rows`, searches every source with `plan` in parallel batches,
/// hands each batch's reports (in file order) to `sink`, and calls `progress` with
/// (sources done, fraction of the input read) after each batch.
/// Errors: only a table that cannot be read at all (missing file or column, bad
/// separator); bad sources are reported through `sink`.
#[allow(clippy::too_many_arguments)]
pub fn run_batch(
    rows: &mut dyn RowStream,
    file: &str,
    columns: &BatchColumns,
    options: &BatchOptions,
    plan: &SearchPlan,
    leap: &LeapSecondTable,
    sink: &mut dyn FnMut(Vec<SourceReport>) -> Result<(), TableError>,
    progress: &dyn Fn(usize, f64),
) -> Result<BatchSummary, TableError> {
    run_batch_with_arrival(rows, file, columns, options, plan, leap, None, sink, progress)
}

/// [`run_batch`] for tables in any observer clock (jd_utc, mjd_tt, iso_utc, …): each
/// source's times are carried to BJD_TDB by `arrival` at the position in its first row
/// (columns `ra_deg`/`dec_deg` of [`BatchColumns`]) before the search. With `arrival`
/// `None` the clock must be barycentric TDB (bjd_tdb or bmjd_tdb).
#[allow(clippy::too_many_arguments)]
pub fn run_batch_with_arrival(
    rows: &mut dyn RowStream,
    file: &str,
    columns: &BatchColumns,
    options: &BatchOptions,
    plan: &SearchPlan,
    leap: &LeapSecondTable,
    arrival: Option<&dyn SourceArrival>,
    sink: &mut dyn FnMut(Vec<SourceReport>) -> Result<(), TableError>,
    progress: &dyn Fn(usize, f64),
) -> Result<BatchSummary, TableError> {
    let barycentric = super::input::is_barycentric_tdb(&options.clock);
    if !barycentric && arrival.is_none() {
        return Err(TableError::File {
            file: file.to_string(),
            message: "this survey batch reads barycentric times only (bjd_tdb or bmjd_tdb); give an observer and source-position columns to carry other clocks".into(),
        });
    }
    if !barycentric && options.clock.reference != crate::arrival::ReferencePoint::Observer {
        return Err(TableError::File {
            file: file.to_string(),
            message: "a survey batch carries observer clocks (jd_utc, mjd_tt, iso_utc, …) or reads barycentric TDB; convert heliocentric or other barycentric clocks with the barycentre command first".into(),
        });
    }
    if !barycentric && (columns.ra_deg.is_none() || columns.dec_deg.is_none()) {
        return Err(TableError::File {
            file: file.to_string(),
            message: "carrying times to the barycentre needs the right-ascension and declination columns (degrees)"
                .into(),
        });
    }
    let mut summary = BatchSummary::default();
    let mut g = Grouper {
        file: file.to_string(),
        columns,
        options,
        leap,
        current: None,
        seen: HashSet::new(),
        pending: Vec::new(),
        pending_points: 0,
        rows: 0,
        peak_points: 0,
        carry: !barycentric,
        span: crate::table::plausibility::TimeSpanCheck::new(file, &columns.time),
        clock_label: options.clock.label(),
    };
    let batch_points = options.batch_points.max(1);
    let read = rows.progress();
    // Reading and searching overlap: a search thread takes whole batches of sources from a
    // queue of one (so at most one batch searched, one queued and one filling), searches
    // each in parallel (rayon) and hands the reports back in file order; this thread reads,
    // groups, and delivers finished reports to `sink` between rows.
    std::thread::scope(|scope| -> Result<(), TableError> {
        let (to_search, searching) = std::sync::mpsc::sync_channel::<(Vec<SourceRows>, f64)>(1);
        let (to_sink, finished) = std::sync::mpsc::channel::<(Vec<SourceReport>, usize, f64)>();
        scope.spawn(move || {
            for (batch, fraction) in searching {
                let points: usize = batch.iter().map(|s| s.value.len()).sum();
                let reports: Vec<SourceReport> =
                    batch.par_iter().with_min_len(1).map(|s| search_source(s, plan, file, columns, arrival)).collect();
                drop(batch);
                if to_sink.send((reports, points, fraction)).is_err() {
                    break;
                }
            }
        });
        let mut in_flight_points = 0usize;
        let mut deliver = |(reports, points, fraction): (Vec<SourceReport>, usize, f64),
                           summary: &mut BatchSummary,
                           in_flight: &mut usize|
         -> Result<(), TableError> {
            *in_flight -= points;
            summary.sources += reports.len();
            summary.searched += reports.iter().filter(|r| r.outcome.is_ok()).count();
            summary.skipped += reports.iter().filter(|r| r.outcome.is_err()).count();
            sink(reports)?;
            progress(summary.sources, fraction);
            Ok(())
        };
        let send = |batch: Vec<SourceRows>, fraction: f64, in_flight: &mut usize| {
            *in_flight += batch.iter().map(|s| s.value.len()).sum::<usize>();
            // The search thread only stops early when this thread has stopped listening.
            let _ = to_search.send((batch, fraction));
        };
        rows.for_each_row(&mut |c| {
            if let Some(done) = g.push(c) {
                g.pending_points += done.value.len();
                g.pending.push(done);
            }
            let held = g.pending_points + g.current.as_ref().map_or(0, |s| s.value.len()) + in_flight_points;
            g.peak_points = g.peak_points.max(held);
            if g.pending_points >= batch_points || g.pending.len() >= 65_536 {
                send(std::mem::take(&mut g.pending), read.fraction(), &mut in_flight_points);
                g.pending_points = 0;
            }
            while let Ok(done) = finished.try_recv() {
                deliver(done, &mut summary, &mut in_flight_points)?;
            }
            Ok(())
        })?;
        if let Some(last) = g.current.take() {
            g.pending.push(last);
        }
        if !g.pending.is_empty() {
            send(std::mem::take(&mut g.pending), 1.0, &mut in_flight_points);
        }
        drop(to_search);
        for done in finished.iter() {
            deliver(done, &mut summary, &mut in_flight_points)?;
        }
        Ok(())
    })?;
    summary.rows = g.rows;
    summary.peak_points_held = g.peak_points;
    summary.peak_reader_rows = rows.peak_rows_buffered();
    if summary.rows == 0 {
        return Err(TableError::Empty { file: file.to_string() });
    }
    // Rows in the other day-number convention were refused source by source above, so the
    // check only has warnings left to give.
    summary.warnings = g.span.finish()?;
    summary.warnings.extend(rows.storage_warnings());
    Ok(summary)
}

/// Describes the alias notes of a peak as one text ("" when none).
pub fn alias_text(outcome: &SearchOutcome, k: usize) -> String {
    outcome
        .peaks
        .get(k)
        .map_or(String::new(), |p| p.peak.aliases.iter().map(describe_alias).collect::<Vec<_>>().join("; "))
}
