//! Reader (and a minimal writer) for JPL SPK kernels: the DAF container, segment types 2
//! (Chebyshev position) and 3 (Chebyshev position and velocity), in either byte order.
//!
//! Format references: NAIF, "DAF Required Reading" (file record, summary and name records,
//! word addresses) and "SPK Required Reading" (segment types 2 and 3: records of
//! `MID, RADIUS` followed by Chebyshev coefficients for X, Y, Z [and VX, VY, VZ], and a
//! directory `INIT, INTLEN, RSIZE, N` in the last four words of the segment).
//!
//! The file is never read whole: at open only the file record and the summary/name
//! records are read; a state then reads one Chebyshev record (a few hundred bytes) per
//! segment in the chain with a positioned read. The last record used of each segment is
//! kept in a per-thread cache, so that many threads (rayon) can evaluate one kernel at
//! once without locks, and consecutive instants usually read nothing. This works for the
//! 3 GB DE441 as for the 114 MB DE440 or the 17 MB DE421.
//!
//! A body's barycentric state is built by chaining segments to the solar-system
//! barycentre (code 0): e.g. the Earth (399) is "Earth wrt Earth–Moon barycentre (3)"
//! plus "EMB wrt SSB". Where several segments cover an instant for one target, the one
//! later in the file wins, as in SPICE.

use std::cell::RefCell;
use std::fs::File;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use super::chebyshev;
use super::{Body, BodyState, Ephemeris, EphemerisError, describe_instant, require_tdb};
use crate::time::{Instant, TimeScale};

/// Bytes in one DAF record.
pub const DAF_RECORD_BYTES: usize = 1024;
/// The FTP validation string NAIF writes into every DAF file record (bytes 699..727).
const FTP_STRING: &[u8; 28] = b"FTPSTR:\r:\n:\r\n:\r\x00:\x81:\x10\xce:ENDFTP";

/// The descriptor of one SPK segment, as stored in its DAF summary and name.
#[derive(Debug, Clone, PartialEq)]
pub struct SegmentSummary {
    /// Segment name (DAF name record), trimmed.
    pub name: String,
    /// First TDB second past J2000 covered.
    pub start_seconds_tdb: f64,
    /// Last TDB second past J2000 covered.
    pub end_seconds_tdb: f64,
    /// NAIF code of the body whose state the segment gives.
    pub target: i32,
    /// NAIF code of the centre it is relative to.
    pub center: i32,
    /// NAIF frame code (1 = J2000/ICRF).
    pub frame: i32,
    /// SPK data type (2, 3, …).
    pub data_type: i32,
    /// First double-precision word of the segment's data (1-based DAF address).
    pub start_address: u64,
    /// Last word of the segment's data (1-based, inclusive).
    pub end_address: u64,
}

/// The directory of a Chebyshev (type 2 or 3) segment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChebyshevDirectory {
    /// Start of the first record's interval, TDB seconds past J2000.
    pub init_seconds: f64,
    /// Length of each record's interval, s.
    pub interval_seconds: f64,
    /// Words per record (2 + components × coefficients).
    pub record_words: usize,
    /// Number of records.
    pub records: usize,
    /// Components per record: 3 (type 2) or 6 (type 3).
    pub components: usize,
    /// Coefficients per component.
    pub coefficients: usize,
}

#[derive(Debug)]
struct Segment {
    summary: SegmentSummary,
    /// `None` for segment types this reader does not evaluate.
    directory: Option<ChebyshevDirectory>,
}

/// A JPL SPK kernel opened for reading. Implements [`Ephemeris`].
#[derive(Debug)]
pub struct SpkKernel {
    path: PathBuf,
    file: File,
    /// Length of the file in bytes when it was opened (bounds every read).
    file_len: u64,
    big_endian: bool,
    kernel_id: u64,
    internal_name: String,
    label: String,
    segments: Vec<Segment>,
    span: (Instant, Instant),
}

static NEXT_KERNEL_ID: AtomicU64 = AtomicU64::new(1);

struct CachedRecord {
    kernel_id: u64,
    segment: usize,
    record: usize,
    words: Vec<f64>,
}

/// Per-thread cache entries (most recent record of each segment used by this thread).
const CACHE_ENTRIES: usize = 32;

thread_local! {
    static RECORD_CACHE: RefCell<(Vec<CachedRecord>, usize)> = const { RefCell::new((Vec::new(), 0)) };
}

#[cfg(unix)]
fn read_exact_at(file: &File, buf: &mut [u8], offset: u64) -> std::io::Result<()> {
    use std::os::unix::fs::FileExt;
    file.read_exact_at(buf, offset)
}

#[cfg(windows)]
fn read_exact_at(file: &File, mut buf: &mut [u8], mut offset: u64) -> std::io::Result<()> {
    use std::os::windows::fs::FileExt;
    while !buf.is_empty() {
        match file.seek_read(buf, offset) {
            Ok(0) => {
                return Err(std::io::Error::new(std::io::ErrorKind::UnexpectedEof, "failed to fill whole buffer"));
            }
            Ok(n) => {
                buf = &mut buf[n..];
                offset += n as u64;
            }
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(e),
        }
    }
    Ok(())
}

fn f64_from(bytes: &[u8], big_endian: bool) -> f64 {
    let a: [u8; 8] = bytes[..8].try_into().expect("8 bytes");
    if big_endian { f64::from_be_bytes(a) } else { f64::from_le_bytes(a) }
}

fn i32_from(bytes: &[u8], big_endian: bool) -> i32 {
    let a: [u8; 4] = bytes[..4].try_into().expect("4 bytes");
    if big_endian { i32::from_be_bytes(a) } else { i32::from_le_bytes(a) }
}

impl SpkKernel {
    /// Opens an SPK kernel: reads the file record and the segment summaries (not the data).
    ///
    /// Errors: the file cannot be read; it is not a DAF/SPK file; it is truncated (a segment
    /// reaches past its end); a Chebyshev segment's directory is inconsistent.
    pub fn open(path: impl AsRef<Path>) -> Result<SpkKernel, EphemerisError> {
        let path = path.as_ref().to_path_buf();
        let io = |message: &str, source: std::io::Error| EphemerisError::Io {
            path: path.clone(),
            message: message.to_string(),
            reason: source.to_string(),
        };
        let bad = |message: String| EphemerisError::BadFile { path: path.clone(), message };
        let file = File::open(&path).map_err(|e| io("cannot open", e))?;
        let file_len = file.metadata().map_err(|e| io("cannot read metadata", e))?.len();
        if file_len < DAF_RECORD_BYTES as u64 {
            return Err(bad(format!(
                "the file has {file_len} bytes, fewer than one {DAF_RECORD_BYTES}-byte DAF record"
            )));
        }
        let mut record = [0u8; DAF_RECORD_BYTES];
        read_exact_at(&file, &mut record, 0).map_err(|e| io("cannot read the file record", e))?;
        let idword = String::from_utf8_lossy(&record[0..8]).to_string();
        if !(idword.starts_with("DAF/SPK") || idword.starts_with("NAIF/DAF")) {
            return Err(bad(format!(
                "the first 8 bytes are {idword:?}, expected \"DAF/SPK \" (a JPL SPK kernel such as de440.bsp)"
            )));
        }
        let locfmt = &record[88..96];
        let big_endian = match locfmt {
            b"LTL-IEEE" => false,
            b"BIG-IEEE" => true,
            _ => {
                // Pre-1995 files carry no format word: guess from ND, which is 2 for SPK.
                if i32_from(&record[8..12], false) == 2 {
                    false
                } else if i32_from(&record[8..12], true) == 2 {
                    true
                } else {
                    return Err(bad(format!(
                        "unknown binary format {:?}; expected LTL-IEEE or BIG-IEEE",
                        String::from_utf8_lossy(locfmt)
                    )));
                }
            }
        };
        let nd = i32_from(&record[8..12], big_endian);
        let ni = i32_from(&record[12..16], big_endian);
        if nd != 2 || ni != 6 {
            return Err(bad(format!("summary format ND={nd}, NI={ni}; an SPK file has ND=2, NI=6")));
        }
        let internal_name = String::from_utf8_lossy(&record[16..76]).trim().to_string();
        let fward = i32_from(&record[76..80], big_endian);
        let total_records = file_len.div_ceil(DAF_RECORD_BYTES as u64);
        // Summary size in doubles: ND + (NI + 1) / 2 = 5; name size 8 × 5 = 40 characters.
        let summary_words = (nd + (ni + 1) / 2) as usize;
        let name_bytes = 8 * summary_words;
        let per_record = (DAF_RECORD_BYTES / 8 - 3) / summary_words;

        let mut segments = Vec::new();
        let mut next = fward as i64;
        let mut visited = 0u64;
        while next > 0 {
            visited += 1;
            if visited > total_records {
                return Err(bad("the chain of summary records loops".to_string()));
            }
            let rec = next as u64;
            if rec + 1 > total_records {
                return Err(bad(format!(
                    "summary record {rec} lies past the end of the file ({total_records} records): the file is truncated"
                )));
            }
            let mut summary_rec = [0u8; DAF_RECORD_BYTES];
            let mut name_rec = [0u8; DAF_RECORD_BYTES];
            read_exact_at(&file, &mut summary_rec, (rec - 1) * DAF_RECORD_BYTES as u64)
                .map_err(|e| io("cannot read a summary record (truncated file?)", e))?;
            read_exact_at(&file, &mut name_rec, rec * DAF_RECORD_BYTES as u64)
                .map_err(|e| io("cannot read a name record (truncated file?)", e))?;
            let next_f = f64_from(&summary_rec[0..8], big_endian);
            let nsum_f = f64_from(&summary_rec[16..24], big_endian);
            if !(nsum_f >= 0.0 && nsum_f <= per_record as f64 && nsum_f.fract() == 0.0) {
                return Err(bad(format!("summary record {rec} claims {nsum_f} summaries")));
            }
            if !(next_f >= 0.0 && next_f.fract() == 0.0 && next_f <= total_records as f64) {
                return Err(bad(format!(
                    "summary record {rec} points to record {next_f}, past the end of the file ({total_records} records): the file is truncated"
                )));
            }
            for i in 0..nsum_f as usize {
                let off = 24 + i * summary_words * 8;
                let s = &summary_rec[off..off + summary_words * 8];
                let start = f64_from(&s[0..8], big_endian);
                let end = f64_from(&s[8..16], big_endian);
                let ints: Vec<i32> = (0..6).map(|k| i32_from(&s[16 + 4 * k..], big_endian)).collect();
                let name = String::from_utf8_lossy(&name_rec[i * name_bytes..(i + 1) * name_bytes])
                    .trim_end_matches(['\0', ' '])
                    .to_string();
                if ints[4] < 1 || ints[5] < ints[4] {
                    return Err(bad(format!("segment {name:?} has data addresses {}..{}", ints[4], ints[5])));
                }
                let summary = SegmentSummary {
                    name,
                    start_seconds_tdb: start,
                    end_seconds_tdb: end,
                    target: ints[0],
                    center: ints[1],
                    frame: ints[2],
                    data_type: ints[3],
                    start_address: ints[4] as u64,
                    end_address: ints[5] as u64,
                };
                if summary.end_address * 8 > file_len {
                    return Err(bad(format!(
                        "segment {:?} (target {}) ends at byte {}, but the file has only {file_len} bytes: the file is truncated",
                        summary.name,
                        summary.target,
                        summary.end_address * 8
                    )));
                }
                let directory = match summary.data_type {
                    2 | 3 => Some(read_directory(&file, &summary, big_endian, &path)?),
                    _ => None,
                };
                segments.push(Segment { summary, directory });
            }
            next = next_f as i64;
        }
        if segments.is_empty() {
            return Err(bad("the file holds no segments".to_string()));
        }
        let file_name = path.file_name().map(|n| n.to_string_lossy().to_string()).unwrap_or_default();
        let label = ephemeris_label(&file_name);
        let mut kernel = SpkKernel {
            path,
            file,
            file_len,
            big_endian,
            kernel_id: NEXT_KERNEL_ID.fetch_add(1, Ordering::Relaxed),
            internal_name,
            label,
            segments,
            span: (
                Instant::from_seconds_since_j2000(TimeScale::Tdb, 0.0),
                Instant::from_seconds_since_j2000(TimeScale::Tdb, 0.0),
            ),
        };
        kernel.span = kernel.common_span();
        Ok(kernel)
    }

    /// The path this kernel was opened from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Whether the file stores big-endian numbers ("BIG-IEEE").
    pub fn is_big_endian(&self) -> bool {
        self.big_endian
    }

    /// The internal file name from the DAF file record (e.g. "NIO2SPK").
    pub fn internal_name(&self) -> &str {
        &self.internal_name
    }

    /// All segment summaries, in file order.
    pub fn segments(&self) -> Vec<SegmentSummary> {
        self.segments.iter().map(|s| s.summary.clone()).collect()
    }

    /// The Chebyshev directory of segment `index` (file order), `None` for other types.
    pub fn directory(&self, index: usize) -> Option<ChebyshevDirectory> {
        self.segments.get(index).and_then(|s| s.directory)
    }

    /// Reads `count` double-precision words starting at 1-based DAF word `address`.
    /// A range that reaches past the end of the file (or past `u64`) is refused before
    /// anything is allocated, so the allocation is bounded by the file, not by the numbers.
    pub fn read_words(&self, address: u64, count: usize) -> Result<Vec<f64>, EphemerisError> {
        let offset = (address.max(1) - 1).checked_mul(8);
        let length = (count as u64).checked_mul(8);
        let end = offset.zip(length).and_then(|(o, l)| o.checked_add(l));
        let (Some(offset), Some(end)) = (offset, end) else {
            return Err(self.past_the_end(address, count));
        };
        if end > self.file_len {
            return Err(self.past_the_end(address, count));
        }
        let mut bytes = vec![0u8; (end - offset) as usize];
        read_exact_at(&self.file, &mut bytes, offset).map_err(|e| EphemerisError::Io {
            path: self.path.clone(),
            message: format!("cannot read {count} words at address {address} (truncated file?)"),
            reason: e.to_string(),
        })?;
        Ok(bytes.chunks_exact(8).map(|b| f64_from(b, self.big_endian)).collect())
    }

    fn past_the_end(&self, address: u64, count: usize) -> EphemerisError {
        EphemerisError::BadFile {
            path: self.path.clone(),
            message: format!(
                "{count} words at word address {address} reach past the end of the file ({} bytes, {} words)",
                self.file_len,
                self.file_len / 8
            ),
        }
    }

    /// Covered span `[first, last]` TDB seconds past J2000 for `target` relative to the SSB
    /// through the segment chain, or `None` if there is no chain.
    fn chain_span_seconds(&self, target: i32) -> Option<(f64, f64)> {
        let mut id = target;
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        for _ in 0..16 {
            if id == 0 {
                return Some((lo, hi));
            }
            let segs: Vec<&Segment> = self.segments.iter().filter(|s| s.summary.target == id).collect();
            let last = segs.last()?;
            let s_lo = segs.iter().map(|s| s.summary.start_seconds_tdb).fold(f64::INFINITY, f64::min);
            let s_hi = segs.iter().map(|s| s.summary.end_seconds_tdb).fold(f64::NEG_INFINITY, f64::max);
            lo = lo.max(s_lo);
            hi = hi.min(s_hi);
            id = last.summary.center;
        }
        None
    }

    /// The span common to every one of our [`Body`] values this kernel can reach.
    fn common_span(&self) -> (Instant, Instant) {
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        let mut any = false;
        for b in Body::ALL {
            if let Some((a, z)) = self.chain_span_seconds(b.naif_id()) {
                lo = lo.max(a);
                hi = hi.min(z);
                any = true;
            }
        }
        if !any || lo > hi {
            lo = 0.0;
            hi = 0.0;
        }
        (Instant::from_seconds_since_j2000(TimeScale::Tdb, lo), Instant::from_seconds_since_j2000(TimeScale::Tdb, hi))
    }

    /// Bodies (of ours) that can be reached from the barycentre.
    pub fn available_bodies(&self) -> Vec<Body> {
        Body::ALL.into_iter().filter(|b| self.chain_span_seconds(b.naif_id()).is_some()).collect()
    }

    /// Position (km) and velocity (km/s) of NAIF body `target` relative to its segment's
    /// centre at `tdb`, from the last segment for `target` covering the instant; returns
    /// the state and the centre code.
    fn segment_state(
        &self,
        body: Body,
        target: i32,
        whole: f64,
        rest: f64,
        tdb: &Instant,
    ) -> Result<(BodyState, i32), EphemerisError> {
        let et = whole + rest;
        let mut found = None;
        let mut any = false;
        for (index, seg) in self.segments.iter().enumerate().rev() {
            if seg.summary.target != target {
                continue;
            }
            any = true;
            if seg.summary.start_seconds_tdb <= et && et <= seg.summary.end_seconds_tdb {
                found = Some(index);
                break;
            }
        }
        let Some(index) = found else {
            if !any {
                return Err(self.not_available(body));
            }
            let (lo, hi) = self.chain_span_seconds(body.naif_id()).unwrap_or((0.0, 0.0));
            return Err(EphemerisError::OutOfRange {
                source_name: self.name(),
                body,
                instant: describe_instant(tdb),
                span_start: describe_instant(&Instant::from_seconds_since_j2000(TimeScale::Tdb, lo)),
                span_end: describe_instant(&Instant::from_seconds_since_j2000(TimeScale::Tdb, hi)),
            });
        };
        let seg = &self.segments[index];
        let Some(dir) = seg.directory else {
            return Err(EphemerisError::UnsupportedSegmentType {
                path: self.path.clone(),
                segment_name: seg.summary.name.clone(),
                target: seg.summary.target,
                center: seg.summary.center,
                data_type: seg.summary.data_type,
            });
        };
        if seg.summary.frame != 1 {
            return Err(EphemerisError::UnsupportedFrame {
                path: self.path.clone(),
                segment_name: seg.summary.name.clone(),
                target: seg.summary.target,
                frame: seg.summary.frame,
            });
        }
        let raw = ((whole - dir.init_seconds) + rest) / dir.interval_seconds;
        let record = (raw.floor().max(0.0) as usize).min(dir.records - 1);
        let state = self.with_record(index, &dir, record, |words| {
            let mid = words[0];
            let radius = words[1];
            let x = ((whole - mid) + rest) / radius;
            let n = dir.coefficients;
            let coefs = &words[2..];
            if dir.components == 6 {
                let position = chebyshev::evaluate3_values(&coefs[..3 * n], n, x);
                let velocity = chebyshev::evaluate3_values(&coefs[3 * n..6 * n], n, x);
                BodyState { position_km: position, velocity_km_per_s: velocity }
            } else {
                let (position, slope) = chebyshev::evaluate3(coefs, n, x);
                BodyState {
                    position_km: position,
                    velocity_km_per_s: [slope[0] / radius, slope[1] / radius, slope[2] / radius],
                }
            }
        })?;
        Ok((state, seg.summary.center))
    }

    /// Runs `f` on the words of `record` of segment `index`, from this thread's cache or
    /// read from the file.
    fn with_record<R>(
        &self,
        index: usize,
        dir: &ChebyshevDirectory,
        record: usize,
        f: impl FnOnce(&[f64]) -> R,
    ) -> Result<R, EphemerisError> {
        RECORD_CACHE.with(|cell| {
            let mut guard = cell.borrow_mut();
            let (entries, next_victim) = &mut *guard;
            let slot = entries.iter().position(|e| e.kernel_id == self.kernel_id && e.segment == index);
            if let Some(i) = slot
                && entries[i].record == record
            {
                return Ok(f(&entries[i].words));
            }
            let address = self.segments[index].summary.start_address + (record * dir.record_words) as u64;
            let words = self.read_words(address, dir.record_words)?;
            if words.len() < 2 || words[1].is_nan() || words[1] <= 0.0 || !words[0].is_finite() {
                return Err(EphemerisError::BadFile {
                    path: self.path.clone(),
                    message: format!(
                        "record {record} of segment {:?} has midpoint {} and radius {}",
                        self.segments[index].summary.name,
                        words.first().copied().unwrap_or(f64::NAN),
                        words.get(1).copied().unwrap_or(f64::NAN)
                    ),
                });
            }
            let entry = CachedRecord { kernel_id: self.kernel_id, segment: index, record, words };
            let i = match slot {
                Some(i) => {
                    entries[i] = entry;
                    i
                }
                None if entries.len() < CACHE_ENTRIES => {
                    entries.push(entry);
                    entries.len() - 1
                }
                None => {
                    let i = *next_victim % CACHE_ENTRIES;
                    *next_victim = (i + 1) % CACHE_ENTRIES;
                    entries[i] = entry;
                    i
                }
            };
            Ok(f(&entries[i].words))
        })
    }

    fn not_available(&self, body: Body) -> EphemerisError {
        let available: Vec<String> = self.available_bodies().iter().map(|b| b.to_string()).collect();
        EphemerisError::BodyNotAvailable {
            source_name: self.name(),
            body,
            available: if available.is_empty() { "none".to_string() } else { available.join(", ") },
        }
    }
}

impl Ephemeris for SpkKernel {
    fn name(&self) -> String {
        let file = self.path.file_name().map(|n| n.to_string_lossy().to_string()).unwrap_or_default();
        if self.label.is_empty() { format!("SPK kernel {file}") } else { format!("SPK kernel {file} ({})", self.label) }
    }

    fn span(&self) -> (Instant, Instant) {
        self.span
    }

    fn state(&self, body: Body, tdb: &Instant) -> Result<BodyState, EphemerisError> {
        require_tdb(tdb)?;
        let (whole, rest) = super::j2000_seconds_two_part(tdb);
        let mut total = BodyState::default();
        let mut id = body.naif_id();
        for _ in 0..16 {
            if id == 0 {
                return Ok(total);
            }
            let (s, center) = self.segment_state(body, id, whole, rest, tdb)?;
            for k in 0..3 {
                total.position_km[k] += s.position_km[k];
                total.velocity_km_per_s[k] += s.velocity_km_per_s[k];
            }
            id = center;
        }
        Err(self.not_available(body))
    }
}

/// "DE440" from "de440.bsp", "DE441" from "de441_part-2.bsp"; empty if no DE number.
fn ephemeris_label(file_name: &str) -> String {
    let lower = file_name.to_ascii_lowercase();
    if let Some(rest) = lower.strip_prefix("de") {
        let digits: String = rest.chars().take_while(|c| c.is_ascii_digit()).collect();
        if !digits.is_empty() {
            return format!("DE{digits}");
        }
    }
    String::new()
}

fn read_directory(
    file: &File,
    s: &SegmentSummary,
    big_endian: bool,
    path: &Path,
) -> Result<ChebyshevDirectory, EphemerisError> {
    let bad = |message: String| EphemerisError::BadFile { path: path.to_path_buf(), message };
    if s.end_address < s.start_address + 3 {
        return Err(bad(format!("segment {:?} is too short to hold a directory", s.name)));
    }
    let mut bytes = [0u8; 32];
    read_exact_at(file, &mut bytes, (s.end_address - 4) * 8).map_err(|e| EphemerisError::Io {
        path: path.to_path_buf(),
        message: format!("cannot read the directory of segment {:?} (truncated file?)", s.name),
        reason: e.to_string(),
    })?;
    let init = f64_from(&bytes[0..8], big_endian);
    let intlen = f64_from(&bytes[8..16], big_endian);
    let rsize = f64_from(&bytes[16..24], big_endian);
    let n = f64_from(&bytes[24..32], big_endian);
    let components = if s.data_type == 3 { 6 } else { 3 };
    let ok_count = |v: f64| v.is_finite() && v >= 1.0 && v.fract() == 0.0 && v < 1e12;
    if !(init.is_finite() && intlen.is_finite() && intlen > 0.0 && ok_count(rsize) && ok_count(n)) {
        return Err(bad(format!(
            "segment {:?} has a damaged directory (INIT {init}, INTLEN {intlen}, RSIZE {rsize}, N {n})",
            s.name
        )));
    }
    let rsize = rsize as usize;
    let n = n as usize;
    if rsize < 2 + components || !(rsize - 2).is_multiple_of(components) {
        return Err(bad(format!(
            "segment {:?} (type {}) has record size {rsize}, not 2 + {components} × coefficients",
            s.name, s.data_type
        )));
    }
    let coefficients = (rsize - 2) / components;
    if coefficients > chebyshev::MAX_COEFFICIENTS {
        return Err(bad(format!(
            "segment {:?} has {coefficients} coefficients per component; at most {} are supported",
            s.name,
            chebyshev::MAX_COEFFICIENTS
        )));
    }
    let expected_end = s.start_address + (rsize * n) as u64 + 4 - 1;
    if expected_end != s.end_address {
        return Err(bad(format!(
            "segment {:?}: {n} records of {rsize} words plus the directory end at word {expected_end}, but the summary says {}",
            s.name, s.end_address
        )));
    }
    Ok(ChebyshevDirectory {
        init_seconds: init,
        interval_seconds: intlen,
        record_words: rsize,
        records: n,
        components,
        coefficients,
    })
}

/// One segment to write with [`write_spk`].
#[derive(Debug, Clone)]
pub struct SegmentData {
    /// Name (at most 40 characters are kept).
    pub name: String,
    /// First TDB second past J2000 covered.
    pub start_seconds_tdb: f64,
    /// Last TDB second past J2000 covered.
    pub end_seconds_tdb: f64,
    /// NAIF code of the body whose state the segment gives.
    pub target: i32,
    /// NAIF code of the centre it is relative to.
    pub center: i32,
    /// NAIF frame code (1 = J2000/ICRF).
    pub frame: i32,
    /// SPK data type (2 or 3 are the types skyclock reads).
    pub data_type: i32,
    /// The segment's words: records followed by the type's directory.
    pub words: Vec<f64>,
}

/// Writes a DAF/SPK file holding `segments` (at most 25, one summary record), with the
/// given byte order. Used to make small test kernels sliced from DE440; jplephem and
/// SPICE read the result.
pub fn write_spk(path: &Path, big_endian: bool, internal_name: &str, segments: &[SegmentData]) -> std::io::Result<()> {
    assert!(segments.len() <= 25, "write_spk writes one summary record (25 segments)");
    let put_i32 =
        |buf: &mut Vec<u8>, v: i32| buf.extend_from_slice(&if big_endian { v.to_be_bytes() } else { v.to_le_bytes() });
    let put_f64 =
        |buf: &mut Vec<u8>, v: f64| buf.extend_from_slice(&if big_endian { v.to_be_bytes() } else { v.to_le_bytes() });
    // Records: 1 file record, 2 summary, 3 names, data from record 4 (word 385).
    let mut data = Vec::new();
    let mut addresses = Vec::new();
    let mut address = 3 * 128 + 1u64;
    for s in segments {
        let start = address;
        for &w in &s.words {
            put_f64(&mut data, w);
        }
        address += s.words.len() as u64;
        addresses.push((start, address - 1));
    }
    let free = address;

    let mut file_record = Vec::with_capacity(DAF_RECORD_BYTES);
    file_record.extend_from_slice(b"DAF/SPK ");
    put_i32(&mut file_record, 2);
    put_i32(&mut file_record, 6);
    let mut ifn = internal_name.as_bytes().to_vec();
    ifn.resize(60, b' ');
    file_record.extend_from_slice(&ifn);
    put_i32(&mut file_record, 2); // FWARD
    put_i32(&mut file_record, 2); // BWARD
    put_i32(&mut file_record, free as i32); // FREE
    file_record.extend_from_slice(if big_endian { b"BIG-IEEE" } else { b"LTL-IEEE" });
    file_record.resize(699, 0);
    file_record.extend_from_slice(FTP_STRING);
    file_record.resize(DAF_RECORD_BYTES, 0);

    let mut summary = Vec::with_capacity(DAF_RECORD_BYTES);
    put_f64(&mut summary, 0.0); // NEXT
    put_f64(&mut summary, 0.0); // PREV
    put_f64(&mut summary, segments.len() as f64); // NSUM
    let mut names = Vec::with_capacity(DAF_RECORD_BYTES);
    for (s, (a, z)) in segments.iter().zip(&addresses) {
        put_f64(&mut summary, s.start_seconds_tdb);
        put_f64(&mut summary, s.end_seconds_tdb);
        for v in [s.target, s.center, s.frame, s.data_type, *a as i32, *z as i32] {
            put_i32(&mut summary, v);
        }
        let mut n = s.name.as_bytes().to_vec();
        n.resize(40, b' ');
        names.extend_from_slice(&n);
    }
    summary.resize(DAF_RECORD_BYTES, 0);
    names.resize(DAF_RECORD_BYTES, b' ');

    let mut out = file_record;
    out.extend_from_slice(&summary);
    out.extend_from_slice(&names);
    out.extend_from_slice(&data);
    let padded = out.len().div_ceil(DAF_RECORD_BYTES) * DAF_RECORD_BYTES;
    out.resize(padded, 0);
    std::fs::write(path, out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_from_file_names() {
        assert_eq!(ephemeris_label("de440.bsp"), "DE440");
        assert_eq!(ephemeris_label("DE421.BSP"), "DE421");
        assert_eq!(ephemeris_label("mykernel.bsp"), "");
    }

    fn tmp(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("skyclock-spk-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        dir.join(name)
    }

    /// Segment types other than 2 and 3, and frames other than J2000, are named when used.
    #[test]
    fn unsupported_type_and_frame_are_reported() {
        let day = crate::constants::SECONDS_PER_DAY;
        let words = vec![day / 2.0, day / 2.0, 1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, day, 5.0, 1.0];
        let seg = |target, frame, data_type, words: Vec<f64>| SegmentData {
            name: format!("seg {target}"),
            start_seconds_tdb: 0.0,
            end_seconds_tdb: day,
            target,
            center: 0,
            frame,
            data_type,
            words,
        };
        let mut type2 = vec![day / 2.0, day / 2.0];
        type2.extend_from_slice(&[1.0, 2.0, 3.0]);
        type2.extend_from_slice(&[0.0, day, 5.0, 1.0]);
        let p = tmp("unsupported.bsp");
        write_spk(&p, false, "TEST", &[seg(10, 1, 13, words), seg(5, 17, 2, type2)]).unwrap();
        let k = SpkKernel::open(&p).unwrap();
        let t = Instant::from_seconds_since_j2000(TimeScale::Tdb, 0.5 * day);
        let e = k.state(Body::Sun, &t).unwrap_err();
        assert!(matches!(e, EphemerisError::UnsupportedSegmentType { data_type: 13, .. }), "{e}");
        assert!(e.to_string().contains("unsupported.bsp") && e.to_string().contains("type 13"));
        let e = k.state(Body::Jupiter, &t).unwrap_err();
        assert!(matches!(e, EphemerisError::UnsupportedFrame { frame: 17, .. }), "{e}");
    }

    /// Fuzz finding (spk_kernel): `read_words` at a huge address overflowed `(address − 1) · 8`;
    /// a huge count allocated `count · 8` bytes before the read failed. Both are refused.
    #[test]
    fn read_words_past_the_end_is_refused_before_allocating() {
        let day = crate::constants::SECONDS_PER_DAY;
        let mut words = vec![day / 2.0, day / 2.0, 1.0, 2.0, 3.0];
        words.extend_from_slice(&[0.0, day, 5.0, 1.0]);
        let seg = SegmentData {
            name: "short".into(),
            start_seconds_tdb: 0.0,
            end_seconds_tdb: day,
            target: 10,
            center: 0,
            frame: 1,
            data_type: 2,
            words,
        };
        let p = tmp("read_words.bsp");
        write_spk(&p, false, "TEST", &[seg]).unwrap();
        let k = SpkKernel::open(&p).unwrap();
        let first = k.segments()[0].start_address;
        assert_eq!(k.read_words(first, 2).unwrap(), vec![day / 2.0, day / 2.0]);
        for (address, count) in
            [(u64::MAX / 2, 16), (u64::MAX, 1), (1, usize::MAX / 2), (1, usize::MAX), (first, 1 << 40)]
        {
            let e = k.read_words(address, count).unwrap_err();
            assert!(matches!(e, EphemerisError::BadFile { .. }), "{address} {count}: {e}");
            assert!(e.to_string().contains("past the end of the file"), "{e}");
        }
    }

    /// A kernel written by `write_spk` with a known polynomial reads back in both byte orders.
    #[test]
    fn written_kernel_reads_back_in_both_byte_orders() {
        // One type-2 segment, target 10 wrt 0, 2 records of 1 day, x = 1000 + 10 t/86400 ...
        let day = crate::constants::SECONDS_PER_DAY;
        let mut words = Vec::new();
        for r in 0..2 {
            let mid = (r as f64 + 0.5) * day;
            words.extend_from_slice(&[mid, day / 2.0]);
            // x: linear in time, y constant, z quadratic in x (T_2 coefficient)
            let x0 = 1000.0 + 10.0 * (r as f64 + 0.5);
            words.extend_from_slice(&[x0, 5.0, 0.0]);
            words.extend_from_slice(&[-7.0, 0.0, 0.0]);
            words.extend_from_slice(&[0.0, 0.0, 3.0]);
        }
        words.extend_from_slice(&[0.0, day, 11.0, 2.0]);
        for big in [false, true] {
            let p = tmp(if big { "be.bsp" } else { "le.bsp" });
            let seg = SegmentData {
                name: "test".into(),
                start_seconds_tdb: 0.0,
                end_seconds_tdb: 2.0 * day,
                target: 10,
                center: 0,
                frame: 1,
                data_type: 2,
                words: words.clone(),
            };
            write_spk(&p, big, "TEST", &[seg]).unwrap();
            let k = SpkKernel::open(&p).unwrap();
            assert_eq!(k.is_big_endian(), big);
            let t = Instant::from_seconds_since_j2000(TimeScale::Tdb, 1.25 * day);
            let s = k.state(Body::Sun, &t).unwrap();
            // record 1: x = 1015 + 5 u, u = −0.5 → 1012.5; dx/dt = 5 / (day/2)
            assert!((s.position_km[0] - 1012.5).abs() < 1e-9);
            assert!((s.velocity_km_per_s[0] - 5.0 / (day / 2.0)).abs() < 1e-15);
            assert!((s.position_km[1] + 7.0).abs() < 1e-12);
            // T_2(0.5) = -0.5
            assert!((s.position_km[2] + 1.5).abs() < 1e-12);
            let e = k.state(Body::Earth, &t).unwrap_err();
            assert!(matches!(e, EphemerisError::BodyNotAvailable { .. }), "{e}");
            let late = Instant::from_seconds_since_j2000(TimeScale::Tdb, 3.0 * day);
            let e = k.state(Body::Sun, &late).unwrap_err().to_string();
            assert!(e.contains("2000-01-01 12:00:00.000 TDB") && e.contains("2000-01-03 12:00:00.000"), "{e}");
        }
    }
}
