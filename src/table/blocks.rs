//! Delimited text tables in blocks of rows: [`CsvBlockReader`] reads a CSV/TSV file a block
//! at a time into polars frames, [`CsvBlockWriter`] writes frames one after the other into
//! one CSV/TSV output, atomically, with its provenance sidecar. Memory is bounded by the
//! block, not by the file.
//!
//! The blocks are what [`super::read_table`] and [`super::write_table`] make of the whole
//! file: the same layout check ([`super::layout::check_delimited_file`], same messages),
//! the column types inferred from the same first 10 000 records with the same text
//! columns, every block parsed by polars with that schema and the same options (blank and
//! `#` comment lines, quoted fields spanning lines), and the output written by polars'
//! CSV writer with the header once. Concatenating the blocks' output gives the bytes the
//! whole-table writer gives for the concatenated frame (`tests/barycentre_blocks.rs`).

use std::fs::File;
use std::io::{BufRead, BufReader, Cursor, Seek, Write};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{SyncSender, sync_channel};
use std::thread::JoinHandle;

use polars::prelude::*;

use super::error::TableError;
use super::provenance::Provenance;
use super::read::TableFormat;
use super::write::{refuse_overwriting_inputs, sidecar_path, write_atomically};

/// Records read to infer the column types, as [`super::read_table`] infers them.
const SCHEMA_INFERENCE_ROWS: usize = 10_000;

/// Reads a CSV/TSV table block by block.
pub struct CsvBlockReader {
    path: PathBuf,
    separator: u8,
    reader: BufReader<File>,
    header: Vec<u8>,
    data_start: u64,
    schema: SchemaRef,
    block_rows: usize,
    rows_read: usize,
    done: bool,
    line: Vec<u8>,
}

impl CsvBlockReader {
    /// Opens `path` (`.csv`, `.txt`, `.tsv`, `.tab`), checks its layout and infers its
    /// column types; `text_columns` are read as strings (as [`super::read_table`] does).
    /// Blocks hold `block_rows` records (at least 1). Errors: as [`super::read_table`].
    pub fn open(path: &Path, text_columns: &[&str], block_rows: usize) -> Result<CsvBlockReader, TableError> {
        let file_name = path.display().to_string();
        let fail = |message: String| TableError::File { file: file_name.clone(), message };
        let separator = match TableFormat::from_path(path)? {
            TableFormat::Csv => b',',
            TableFormat::Tsv => b'\t',
            TableFormat::Parquet => return Err(fail("a Parquet table is not read in text blocks".into())),
        };
        let meta = std::fs::metadata(path).map_err(|e| fail(format!("cannot open: {e}")))?;
        if meta.len() == 0 {
            return Err(TableError::Empty { file: file_name.clone() });
        }
        super::layout::check_delimited_file(path, separator as char)?;
        let file = File::open(path).map_err(|e| fail(format!("cannot open: {e}")))?;
        let mut reader = CsvBlockReader {
            path: path.to_path_buf(),
            separator,
            reader: BufReader::with_capacity(1 << 20, file),
            header: Vec::new(),
            data_start: 0,
            schema: Arc::new(Schema::default()),
            block_rows: block_rows.max(1),
            rows_read: 0,
            done: false,
            line: Vec::new(),
        };
        reader.read_header()?;
        // Column types from the first records, with the text columns forced to strings.
        let mut sample = reader.header.clone();
        let inferred = reader.next_records(&mut sample, SCHEMA_INFERENCE_ROWS)?;
        let mut overwrite = Schema::default();
        for c in text_columns {
            overwrite.with_column((*c).into(), DataType::String);
        }
        let options = reader
            .options()
            .with_infer_schema_length(Some(SCHEMA_INFERENCE_ROWS))
            .with_schema_overwrite(Some(Arc::new(overwrite)));
        let first = reader.parse(options, sample)?;
        if inferred == 0 || first.height() == 0 {
            return Err(TableError::Empty { file: file_name });
        }
        reader.schema = first.schema().clone();
        reader.rewind()?;
        Ok(reader)
    }

    /// The column names and types every block has.
    pub fn schema(&self) -> &SchemaRef {
        &self.schema
    }

    /// Back to the first data row (for a second pass over the file).
    pub fn rewind(&mut self) -> Result<(), TableError> {
        self.reader
            .seek(std::io::SeekFrom::Start(self.data_start))
            .map_err(|e| TableError::File { file: self.file_name(), message: format!("cannot read: {e}") })?;
        self.rows_read = 0;
        self.done = false;
        Ok(())
    }

    /// The next block: the 0-based index of its first data row in the file, and its rows.
    /// `None` after the last block.
    pub fn next_block(&mut self) -> Result<Option<(usize, DataFrame)>, TableError> {
        if self.done {
            return Ok(None);
        }
        let mut bytes = self.header.clone();
        let records = self.next_records(&mut bytes, self.block_rows)?;
        if records < self.block_rows {
            self.done = true;
        }
        if records == 0 {
            return Ok(None);
        }
        let options = self.options().with_schema(Some(self.schema.clone()));
        let df = self.parse(options, bytes)?;
        let first = self.rows_read;
        self.rows_read += df.height();
        if df.height() == 0 {
            return self.next_block();
        }
        Ok(Some((first, df)))
    }

    fn file_name(&self) -> String {
        self.path.display().to_string()
    }

    fn options(&self) -> CsvReadOptions {
        let separator = self.separator;
        CsvReadOptions::default()
            .with_has_header(true)
            .map_parse_options(|p| p.with_separator(separator).with_comment_prefix(Some("#")))
    }

    /// Parses `bytes`: the header record followed by data records.
    fn parse(&self, options: CsvReadOptions, bytes: Vec<u8>) -> Result<DataFrame, TableError> {
        options.into_reader_with_file_handle(Cursor::new(bytes)).finish().map_err(|e| TableError::File {
            file: self.file_name(),
            message: format!("cannot read as {}: {e}", if self.separator == b'\t' { "TSV" } else { "CSV" }),
        })
    }

    /// Reads one raw line into `self.line`; false at the end of the file.
    fn read_line(&mut self) -> Result<bool, TableError> {
        self.line.clear();
        let n = self
            .reader
            .read_until(b'\n', &mut self.line)
            .map_err(|e| TableError::File { file: self.file_name(), message: format!("cannot read: {e}") })?;
        Ok(n > 0)
    }

    /// The header record (with the blank and comment lines before it), kept raw.
    fn read_header(&mut self) -> Result<(), TableError> {
        let mut header = Vec::new();
        let mut quotes = 0usize;
        let mut offset = 0u64;
        while self.read_line()? {
            offset += self.line.len() as u64;
            header.extend_from_slice(&self.line);
            let blank = quotes == 0 && is_blank_or_comment(&self.line);
            quotes += self.line.iter().filter(|&&b| b == b'"').count();
            if !blank && quotes.is_multiple_of(2) {
                break;
            }
        }
        if !header.ends_with(b"\n") {
            header.push(b'\n');
        }
        self.header = header;
        self.data_start = offset;
        Ok(())
    }

    /// Appends up to `limit` data records (raw lines, with the blank and comment lines
    /// among them) to `out`; returns how many records.
    fn next_records(&mut self, out: &mut Vec<u8>, limit: usize) -> Result<usize, TableError> {
        let mut records = 0;
        let mut quotes = 0usize;
        while records < limit {
            // Read straight into `out` (no copy through a line buffer).
            let start = out.len();
            let n = self
                .reader
                .read_until(b'\n', out)
                .map_err(|e| TableError::File { file: self.file_name(), message: format!("cannot read: {e}") })?;
            if n == 0 {
                break;
            }
            let line = &out[start..];
            let continuing = !quotes.is_multiple_of(2);
            if !continuing && is_blank_or_comment(line) {
                continue;
            }
            quotes += line.iter().filter(|&&b| b == b'"').count();
            if quotes.is_multiple_of(2) {
                records += 1;
                quotes = 0;
            }
        }
        if !out.is_empty() && !out.ends_with(b"\n") {
            out.push(b'\n');
        }
        Ok(records)
    }
}

/// A file written by a thread of its own, so that the kernel's copying of one block into
/// the file overlaps the work on the next; at most [`BackgroundFile::IN_FLIGHT`] buffers
/// wait at a time. Written buffers come back emptied for [`BackgroundFile::buffer`] to hand
/// out again (fresh memory costs a page fault per 4 KiB on first touch). [`BackgroundFile::finish`]
/// waits for the thread, which flushes the file to disk, and hands back the first write error.
struct BackgroundFile {
    sender: Option<SyncSender<Vec<u8>>>,
    thread: Option<JoinHandle<std::io::Result<()>>>,
    spare: Arc<std::sync::Mutex<Vec<Vec<u8>>>>,
}

impl BackgroundFile {
    const IN_FLIGHT: usize = 16;

    /// Bytes written between requests to start writing them to disk: the final flush of
    /// [`BackgroundFile::finish`] then waits for the last few MB only, not the whole file.
    const WRITEBACK_BYTES: u64 = 4 << 20;

    fn new(file: File) -> BackgroundFile {
        let (sender, receiver) = sync_channel::<Vec<u8>>(Self::IN_FLIGHT);
        let spare = Arc::new(std::sync::Mutex::new(Vec::<Vec<u8>>::new()));
        let returned = Arc::clone(&spare);
        let thread = std::thread::spawn(move || {
            let mut file = file;
            let mut result = Ok(());
            let (mut written, mut handed_to_disk) = (0u64, 0u64);
            for mut buffer in receiver {
                if result.is_ok() {
                    result = file.write_all(&buffer);
                    written += buffer.len() as u64;
                    if written - handed_to_disk >= Self::WRITEBACK_BYTES {
                        start_writeback(&file, handed_to_disk, written - handed_to_disk);
                        handed_to_disk = written;
                    }
                }
                buffer.clear();
                if let Ok(mut spare) = returned.lock()
                    && spare.len() < 2 * Self::IN_FLIGHT
                {
                    spare.push(buffer);
                }
            }
            result?;
            file.sync_all()
        });
        BackgroundFile { sender: Some(sender), thread: Some(thread), spare }
    }

    /// An empty buffer with room for `capacity` bytes, a written one where one is spare.
    fn buffer(&self, capacity: usize) -> Vec<u8> {
        let mut buffer = self.spare.lock().ok().and_then(|mut spare| spare.pop()).unwrap_or_default();
        buffer.reserve(capacity);
        buffer
    }

    /// Queues `buffer` to be written after the ones before it.
    fn write(&mut self, buffer: Vec<u8>) -> std::io::Result<()> {
        let stopped = || std::io::Error::other("the thread writing the file stopped");
        self.sender.as_ref().ok_or_else(stopped)?.send(buffer).map_err(|_| stopped())
    }

    /// Waits until everything is written and flushed to disk.
    fn finish(&mut self) -> std::io::Result<()> {
        drop(self.sender.take());
        match self.thread.take() {
            Some(thread) => thread.join().map_err(|_| std::io::Error::other("the thread writing the file stopped"))?,
            None => Ok(()),
        }
    }
}

/// Asks the kernel to start writing bytes `offset..offset + length` of `file` to disk now,
/// without waiting for them (Linux `sync_file_range` with `SYNC_FILE_RANGE_WRITE`; a hint
/// only: its failure changes nothing, the final `fsync` still makes the file durable).
/// Elsewhere it does nothing.
fn start_writeback(file: &File, offset: u64, length: u64) {
    #[cfg(target_os = "linux")]
    {
        use std::os::fd::AsRawFd;
        unsafe extern "C" {
            fn sync_file_range(fd: i32, offset: i64, nbytes: i64, flags: u32) -> i32;
        }
        const SYNC_FILE_RANGE_WRITE: u32 = 2;
        let (Ok(offset), Ok(length)) = (i64::try_from(offset), i64::try_from(length)) else { return };
        // SAFETY: a plain system call on a file descriptor this thread owns for its whole
        // duration; it reads and writes no memory of the process.
        let _ = unsafe { sync_file_range(file.as_raw_fd(), offset, length, SYNC_FILE_RANGE_WRITE) };
    }
    #[cfg(not(target_os = "linux"))]
    let _ = (file, offset, length);
}

/// Whether polars writes `df` as one text line per row: no text cell and no column name
/// holds a line break (a quoted cell with one spans lines).
pub fn one_line_per_row(df: &DataFrame) -> bool {
    df.columns().iter().all(|c| {
        let breaks = |t: &str| t.contains(['\n', '\r']);
        !breaks(c.name().as_str())
            && match c.dtype() {
                DataType::String => c.str().map(|s| !s.iter().flatten().any(breaks)).unwrap_or(false),
                DataType::Boolean
                | DataType::Int8
                | DataType::Int16
                | DataType::Int32
                | DataType::Int64
                | DataType::UInt8
                | DataType::UInt16
                | DataType::UInt32
                | DataType::UInt64
                | DataType::Float32
                | DataType::Float64
                | DataType::Null => true,
                _ => false,
            }
    })
}

fn is_blank_or_comment(line: &[u8]) -> bool {
    let text = line.strip_prefix("\u{feff}".as_bytes()).unwrap_or(line);
    text.iter().all(u8::is_ascii_whitespace) || text.first() == Some(&b'#')
}

/// Writes frames one after another into one CSV/TSV table, atomically: into a temporary
/// file beside the target, renamed into place by [`CsvBlockWriter::finish`] (with the
/// `.provenance.json` sidecar); a writer dropped unfinished removes its temporary file.
pub struct CsvBlockWriter {
    path: PathBuf,
    tmp: PathBuf,
    out: BackgroundFile,
    separator: u8,
    header_written: bool,
    finished: bool,
}

impl CsvBlockWriter {
    /// A writer for `path` (`.csv`, `.txt`, `.tsv`, `.tab`), refused when it names one of
    /// `inputs`.
    pub fn create(path: &Path, inputs: &[&Path]) -> Result<CsvBlockWriter, TableError> {
        refuse_overwriting_inputs(path, inputs)?;
        let separator = match TableFormat::from_path(path)? {
            TableFormat::Csv => b',',
            TableFormat::Tsv => b'\t',
            TableFormat::Parquet => {
                return Err(TableError::File {
                    file: path.display().to_string(),
                    message: "a Parquet table is not written in text blocks".into(),
                });
            }
        };
        let (tmp, file) = super::guard::create_temporary(path, "").map_err(|e| TableError::File {
            file: path.display().to_string(),
            message: format!("cannot create {}: {e}", super::guard::temporary_path(path, "").display()),
        })?;
        Ok(CsvBlockWriter {
            path: path.to_path_buf(),
            tmp,
            out: BackgroundFile::new(file),
            separator,
            header_written: false,
            finished: false,
        })
    }

    fn fail(&self, message: String) -> TableError {
        TableError::File {
            file: self.path.display().to_string(),
            message: format!("cannot write {}: {message}", self.tmp.display()),
        }
    }

    /// Appends the rows of `df` (the header comes with the first block).
    pub fn write_block(&mut self, df: &mut DataFrame) -> Result<(), TableError> {
        let mut text = Vec::with_capacity(df.height() * 64);
        let result = CsvWriter::new(&mut text)
            .include_header(!self.header_written)
            .with_separator(self.separator)
            .finish(df)
            .map_err(|e| e.to_string())
            .and_then(|_| self.out.write(text).map_err(|e| e.to_string()));
        self.header_written = true;
        result.map_err(|m| self.fail(m))
    }

    /// The separator of the output (`,` or a tab).
    pub fn separator(&self) -> u8 {
        self.separator
    }

    /// Appends the rows of `df` as [`CsvBlockWriter::write_block`] does, each line followed
    /// by the further columns `names` (header) and the fields `append(first, rows, out)`
    /// writes for rows `first..first + rows` of `df` (each field preceded by the separator,
    /// no line ends; called on runs of rows in parallel, results joined in order). Needs
    /// [`one_line_per_row`] for `df`. The names and fields must be ones polars writes
    /// unquoted (no separator, quote or line break, not empty).
    pub fn write_block_appending(
        &mut self,
        df: &mut DataFrame,
        names: &[&str],
        append: impl Fn(usize, usize, &mut Vec<u8>) + Sync,
    ) -> Result<(), TableError> {
        use rayon::prelude::*;
        let mut text = Vec::with_capacity(df.height() * 32);
        CsvWriter::new(&mut text)
            .include_header(!self.header_written)
            .with_separator(self.separator)
            .finish(df)
            .map_err(|e| self.fail(e.to_string()))?;
        let mut lines: Vec<&[u8]> = text.split(|&b| b == b'\n').collect();
        if lines.last().is_some_and(|l| l.is_empty()) {
            lines.pop();
        }
        let mut body = &lines[..];
        if !self.header_written {
            let Some((header, rest)) = lines.split_first() else {
                return Err(self.fail("no header was written".into()));
            };
            let mut line = header.to_vec();
            for name in names {
                line.push(self.separator);
                line.extend_from_slice(name.as_bytes());
            }
            line.push(b'\n');
            self.out.write(line).map_err(|e| self.fail(e.to_string()))?;
            self.header_written = true;
            body = rest;
        }
        if body.len() != df.height() {
            return Err(self.fail(format!("{} lines written for {} rows", body.len(), df.height())));
        }
        const RUN: usize = 4096;
        // Room for the appended fields of a row (13 delay and time columns: ~250 bytes).
        const FIELD_BYTES_PER_ROW: usize = 320;
        let spare = &self.out;
        let runs: Vec<Vec<u8>> = body
            .par_chunks(RUN)
            .enumerate()
            .map(|(k, chunk)| {
                let length: usize = chunk.iter().map(|l| l.len()).sum();
                let mut out = spare.buffer(length + chunk.len() * (FIELD_BYTES_PER_ROW + 1));
                for (r, line) in chunk.iter().enumerate() {
                    out.extend_from_slice(line);
                    append(k * RUN + r, 1, &mut out);
                    out.push(b'\n');
                }
                out
            })
            .collect();
        for run in runs {
            self.out.write(run).map_err(|e| self.fail(e.to_string()))?;
        }
        Ok(())
    }

    /// Flushes the table to disk, moves it into place and writes its provenance sidecar.
    pub fn finish(mut self, provenance: &Provenance) -> Result<(), TableError> {
        self.out.finish().map_err(|e| self.fail(e.to_string()))?;
        super::guard::put_in_place(&self.tmp, &self.path)
            .map_err(|e| self.fail(format!("cannot move the finished file into place: {e}")))?;
        self.finished = true;
        let json = provenance.to_json();
        write_atomically(&sidecar_path(&self.path), |f| f.write_all(json.as_bytes()))
    }
}

impl Drop for CsvBlockWriter {
    fn drop(&mut self) {
        if !self.finished {
            let _ = self.out.finish();
            let _ = std::fs::remove_file(&self.tmp);
            super::guard::release_temporary(&self.tmp);
        }
    }
}
