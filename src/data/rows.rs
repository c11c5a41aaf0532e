//! Rows for the evaluation: [`RowSource`] hands the cells of the wanted columns, one row at a
//! time, to a callback, and [`open_rows`] opens one for a spec's `source` with the same rules as
//! profiling (containment, regular files only, the same sampled head, the same readers).
//!
//! Memory: a delimited file is read through the profile's record reader (a reused 1 MiB buffer,
//! cells are slices of it, nothing is allocated per cell or per row); a JSON file is streamed
//! element by element with one reused text buffer per row (its keys, the columns, are learnt by
//! one pass when it is opened); inline rows are the spec's own. A delimited file of 8 MiB or
//! more is split into records on a second thread, which hands over batches of the wanted cells
//! (at most a few batches of 8,192 rows in flight).
//! Cells are handed over as text, exactly as the profile reads them (a JSON number becomes its
//! shortest round-trip text, which parses back to the same number).

use std::fmt::Write as _;
use std::fs::File;
use std::io::{BufRead, BufReader, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde::de::value::{MapAccessDeserializer, SeqAccessDeserializer};
use serde::de::{DeserializeSeed, IgnoredAny, MapAccess, SeqAccess, Visitor};
use serde::Deserialize;
use std::collections::HashMap;

use super::cache::{cut_at_last_line, open_data_file};
use super::csv_reader::{read_header_within, record_read_error, RecordReader};
use super::resolve::resolve_source_path;
use super::{io_error, DataError, DataErrorKind, ProfileLimits, ReadOptions, ResolveOptions};
use crate::spec::model::{DataFormat, InlineRow, InlineValue, Source, SourceLocation};

/// The rows of one source, delivered by the data layer (which does the IO).
pub trait RowSource {
    /// Column names in the source's order.
    fn column_names(&self) -> Vec<String>;
    /// Calls `row` once per row with the cells of the `wanted` columns (indexes into
    /// `column_names`), `None` where the row lacks the cell; stops early when `row` returns false.
    /// May be called more than once; every call starts again from the first row.
    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError>;
    /// True when the rows are only a sampled head of the source.
    fn is_sample(&self) -> bool {
        false
    }
}

/// A vector of cell references emptied and re-typed for the next row, keeping its allocation
/// (the in-place collect reuses the buffer of a vector of the same element size).
fn recycle<'b>(mut cells: Vec<Option<&str>>) -> Vec<Option<&'b str>> {
    cells.clear();
    cells.into_iter().map(|_| None).collect()
}

/// Open the rows `source` names: a file (resolved and checked like a profiled one) or the
/// inline rows. With `sampled`, a file is read only as far as the sampled profile reads it
/// (its first [`SAMPLE_BYTES`], cut at the last line break) and the rows say `is_sample` when
/// the file is longer.
pub fn open_rows(
    source: &Source,
    options: &ResolveOptions,
    sampled: bool,
) -> Result<Box<dyn RowSource + Send>, DataError> {
    match &source.location {
        SourceLocation::Path(written) => {
            let path = resolve_source_path(&written.value, options)?;
            open_file_rows_within(
                &path,
                &ReadOptions::for_source(source),
                sampled,
                &options.limits,
            )
        }
        SourceLocation::Rows { rows, .. } => Ok(Box::new(InlineRows::new(rows.clone()))),
        SourceLocation::Missing => Err(DataError {
            kind: DataErrorKind::BadPath,
            message: "the source has neither `path` nor `rows`".to_string(),
            path: None,
            line: None,
            byte_offset: None,
        }),
    }
}

/// Open the rows of a file already resolved to a canonical path.
pub fn open_file_rows(
    path: &Path,
    read: &ReadOptions,
    sampled: bool,
) -> Result<Box<dyn RowSource + Send>, DataError> {
    open_file_rows_within(path, read, sampled, &ProfileLimits::default())
}

/// [`open_file_rows`] within the profile's `limits` (the longest record, the most columns).
pub fn open_file_rows_within(
    path: &Path,
    read: &ReadOptions,
    sampled: bool,
    limits: &ProfileLimits,
) -> Result<Box<dyn RowSource + Send>, DataError> {
    let super::cache::OpenedData {
        size,
        head,
        complete,
        mark_length,
        format,
        delimiter,
        ..
    } = super::cache::open_data_head(path, read)?;
    let after_mark = &head[mark_length..];
    let mark_length = mark_length as u64;
    let in_memory = complete || sampled;
    let is_sample = !complete && sampled;
    match format {
        DataFormat::Csv | DataFormat::Tsv => {
            let (body, data_source) = if in_memory {
                let bytes = if is_sample {
                    cut_at_last_line(&head)
                } else {
                    &head[..]
                };
                let bytes: Arc<[u8]> = Arc::from(bytes);
                (bytes.clone(), DelimitedData::Memory(bytes))
            } else {
                (
                    Arc::from(&head[..]),
                    DelimitedData::File(path.to_path_buf()),
                )
            };
            let header = read_header_within(
                body.get(mark_length as usize..).unwrap_or(&[]),
                mark_length,
                delimiter,
                Some(path),
                limits,
            )?;
            Ok(Box::new(DelimitedRows {
                path: path.to_path_buf(),
                data: data_source,
                delimiter,
                names: header.names,
                data_start: header.data_start,
                is_sample,
                size,
                limits: *limits,
            }))
        }
        DataFormat::Json | DataFormat::Ndjson => {
            let data = if in_memory {
                let bytes = if is_sample && format == DataFormat::Ndjson {
                    cut_at_last_line(after_mark)
                } else {
                    after_mark
                };
                JsonData::Memory(Arc::from(bytes))
            } else {
                JsonData::File {
                    path: path.to_path_buf(),
                    start: mark_length,
                }
            };
            let mut rows = JsonRows {
                path: path.to_path_buf(),
                format,
                data,
                truncated: is_sample,
                names: Vec::new(),
                index: HashMap::new(),
            };
            rows.collect_names()?;
            Ok(Box::new(rows))
        }
    }
}

enum DelimitedData {
    /// The whole file (or the sampled head) in memory.
    Memory(Arc<[u8]>),
    /// Streamed from the file on every scan.
    File(PathBuf),
}

/// CSV/TSV rows, read with the profile's RFC 4180 record reader.
struct DelimitedRows {
    path: PathBuf,
    data: DelimitedData,
    delimiter: u8,
    names: Vec<String>,
    data_start: u64,
    is_sample: bool,
    /// File size in bytes.
    size: u64,
    limits: ProfileLimits,
}

/// Files at least this big are read by two threads: one splits the records and copies the
/// wanted cells into batches, the caller's thread hands them on.
const PIPELINE_MINIMUM_BYTES: u64 = 8 << 20;
/// Rows per batch, and batches in flight (bounded: memory stays a few batches of cells).
const BATCH_ROWS: usize = 8192;
const BATCHES_IN_FLIGHT: usize = 4;
/// A cell the row lacks, in a batch.
const ABSENT: u32 = u32::MAX;

/// Wanted cells of up to [`BATCH_ROWS`] rows, copied one after the other.
#[derive(Default)]
struct Batch {
    bytes: Vec<u8>,
    /// Per row, per wanted column: start and end in `bytes` (`ABSENT` for a lacking cell).
    spans: Vec<(u32, u32)>,
    /// Line of each row's record, for messages.
    lines: Vec<u64>,
    error: Option<DataError>,
}

impl DelimitedRows {
    /// Split records on another thread; validate and deliver them on this one.
    fn scan_pipelined(
        &self,
        mut reader: RecordReader<File>,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        use std::sync::mpsc::{sync_channel, Receiver, SyncSender};
        let (full_sender, full_receiver): (SyncSender<Batch>, Receiver<Batch>) =
            sync_channel(BATCHES_IN_FLIGHT);
        let (empty_sender, empty_receiver): (SyncSender<Batch>, Receiver<Batch>) =
            sync_channel(BATCHES_IN_FLIGHT + 2);
        let width = self.names.len();
        let path = &self.path;
        let limits = self.limits;
        std::thread::scope(|scope| {
            // owned by this closure: dropped when it returns (also early), which stops the
            // reading thread before the scope waits for it
            let full_receiver = full_receiver;
            scope.spawn(move || {
                let mut batch = Batch::default();
                loop {
                    let record = match reader.next_record(u64::MAX) {
                        Ok(record) => record,
                        Err(error) => {
                            batch.error = Some(record_read_error(Some(path), &limits, &error));
                            let _ = full_sender.send(batch);
                            return;
                        }
                    };
                    let Some(record) = record else { break };
                    let count = reader.field_count();
                    for &column in wanted {
                        if column >= count || column >= width {
                            batch.spans.push((ABSENT, ABSENT));
                        } else {
                            let start = batch.bytes.len() as u32;
                            batch.bytes.extend_from_slice(reader.field(column));
                            batch.spans.push((start, batch.bytes.len() as u32));
                        }
                    }
                    batch.lines.push(record.line);
                    // a batch's cells stay far below 4 GiB: records are at most 64 MiB
                    if batch.lines.len() >= BATCH_ROWS || batch.bytes.len() >= 1 << 30 {
                        if full_sender.send(batch).is_err() {
                            return;
                        }
                        batch = empty_receiver.try_recv().unwrap_or_default();
                        batch.bytes.clear();
                        batch.spans.clear();
                        batch.lines.clear();
                    }
                }
                if !batch.lines.is_empty() {
                    let _ = full_sender.send(batch);
                }
            });
            let mut storage: Vec<Option<&str>> = Vec::with_capacity(wanted.len());
            for batch in full_receiver.iter() {
                if let Some(error) = batch.error {
                    return Err(error);
                }
                // one check for the whole batch; a cell cut inside a character fails `get`
                let text = std::str::from_utf8(&batch.bytes).ok();
                let mut keep_going = true;
                for (index, spans) in batch.spans.chunks(wanted.len().max(1)).enumerate() {
                    let mut cells = recycle(storage);
                    for (slot, &(start, end)) in spans.iter().enumerate() {
                        if start == ABSENT {
                            cells.push(None);
                            continue;
                        }
                        match text.and_then(|text| text.get(start as usize..end as usize)) {
                            Some(cell) => cells.push(Some(cell)),
                            None => {
                                let line = batch.lines.get(index).copied().unwrap_or(0);
                                let column = wanted.get(slot).copied().unwrap_or(0);
                                return Err(DataError {
                                    kind: DataErrorKind::InvalidUtf8,
                                    message: format!(
                                        "row at line {} is not valid UTF-8 text (in column `{}`)",
                                        line + 1,
                                        self.names.get(column).map_or("?", String::as_str)
                                    ),
                                    path: Some(self.path.clone()),
                                    line: None,
                                    byte_offset: None,
                                });
                            }
                        }
                    }
                    keep_going = row(&cells);
                    storage = recycle(cells);
                    if !keep_going {
                        break;
                    }
                }
                if wanted.is_empty() {
                    // no cells asked: one empty row per record
                    for _ in 0..batch.lines.len() {
                        if !row(&[]) {
                            keep_going = false;
                            break;
                        }
                    }
                }
                if !keep_going {
                    // dropping the receiver stops the reading thread
                    break;
                }
                let _ = empty_sender.try_send(batch);
            }
            Ok(())
        })
    }

    fn scan_reader<R: Read>(
        &self,
        reader: &mut RecordReader<R>,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let mut storage: Vec<Option<&str>> = Vec::with_capacity(wanted.len());
        loop {
            let record = reader
                .next_record(u64::MAX)
                .map_err(|error| record_read_error(Some(&self.path), &self.limits, &error))?;
            let Some(record) = record else { break };
            if record.unterminated_quote && self.is_sample {
                // the head was cut inside a quoted cell: that row is not whole
                break;
            }
            let count = reader.field_count();
            let mut cells = recycle(storage);
            for &column in wanted {
                if column >= count || column >= self.names.len() {
                    cells.push(None);
                    continue;
                }
                match std::str::from_utf8(reader.field(column)) {
                    Ok(text) => cells.push(Some(text)),
                    Err(_) => {
                        return Err(DataError {
                            kind: DataErrorKind::InvalidUtf8,
                            message: format!(
                                "row at line {} is not valid UTF-8 text (in column `{}`)",
                                record.line + 1,
                                self.names.get(column).map_or("?", String::as_str)
                            ),
                            path: Some(self.path.clone()),
                            line: None,
                            byte_offset: Some(record.byte_offset),
                        })
                    }
                }
            }
            let keep_going = row(&cells);
            storage = recycle(cells);
            if !keep_going {
                break;
            }
        }
        Ok(())
    }
}

impl RowSource for DelimitedRows {
    fn column_names(&self) -> Vec<String> {
        self.names.clone()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        match &self.data {
            DelimitedData::Memory(bytes) => {
                let body = bytes.get(self.data_start as usize..).unwrap_or(&[]);
                let mut reader = RecordReader::with_buffer_bytes(
                    body,
                    self.data_start,
                    self.delimiter,
                    body.len() + 1,
                )
                .with_max_record_bytes(self.limits.record_bytes())
                .with_max_fields(self.limits.max_columns().saturating_add(1));
                self.scan_reader(&mut reader, wanted, row)
            }
            DelimitedData::File(path) => {
                let mut file = open_data_file(path)?;
                file.seek(SeekFrom::Start(self.data_start))
                    .map_err(|error| io_error(Some(path), &error))?;
                let mut reader = RecordReader::new(file, self.data_start, self.delimiter)
                    .with_max_record_bytes(self.limits.record_bytes())
                    .with_max_fields(self.limits.max_columns().saturating_add(1));
                let parallel = std::thread::available_parallelism().map_or(1, |count| count.get());
                if parallel >= 2 && self.size >= PIPELINE_MINIMUM_BYTES {
                    self.scan_pipelined(reader, wanted, row)
                } else {
                    self.scan_reader(&mut reader, wanted, row)
                }
            }
        }
    }

    fn is_sample(&self) -> bool {
        self.is_sample
    }
}

enum JsonData {
    Memory(Arc<[u8]>),
    File { path: PathBuf, start: u64 },
}

/// A JSON array of objects or NDJSON: keys become columns in the order they first appear.
struct JsonRows {
    path: PathBuf,
    format: DataFormat,
    data: JsonData,
    /// A sampled head: an early end is the cut's doing.
    truncated: bool,
    names: Vec<String>,
    index: HashMap<String, usize>,
}

/// What one JSON row pass does with each member.
enum RowPass<'p> {
    /// Learn the keys.
    Names {
        names: &'p mut Vec<String>,
        index: &'p mut HashMap<String, usize>,
    },
    /// Copy the wanted cells as text.
    Cells {
        index: &'p HashMap<String, usize>,
        /// Column index → slot in the row.
        slot_of_column: &'p [Option<usize>],
        text: &'p mut String,
        spans: &'p mut [Option<(usize, usize)>],
    },
}

struct KeySeed<'p> {
    index: &'p HashMap<String, usize>,
}

impl<'de> DeserializeSeed<'de> for KeySeed<'_> {
    type Value = Option<usize>;

    fn deserialize<D: serde::Deserializer<'de>>(
        self,
        deserializer: D,
    ) -> Result<Self::Value, D::Error> {
        deserializer.deserialize_str(self)
    }
}

impl<'de> Visitor<'de> for KeySeed<'_> {
    type Value = Option<usize>;

    fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
        formatter.write_str("a key")
    }

    fn visit_str<E: serde::de::Error>(self, key: &str) -> Result<Self::Value, E> {
        Ok(self.index.get(key).copied())
    }
}

/// One cell written as text into a shared buffer; `false` for `null`.
struct CellSeed<'p> {
    text: &'p mut String,
}

impl<'de> DeserializeSeed<'de> for CellSeed<'_> {
    type Value = bool;

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<bool, D::Error> {
        deserializer.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for CellSeed<'_> {
    type Value = bool;

    fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
        formatter.write_str("a value")
    }

    fn visit_str<E: serde::de::Error>(self, value: &str) -> Result<bool, E> {
        self.text.push_str(value);
        Ok(true)
    }

    fn visit_i64<E: serde::de::Error>(self, value: i64) -> Result<bool, E> {
        let _ = write!(self.text, "{}", value as f64);
        Ok(true)
    }

    fn visit_u64<E: serde::de::Error>(self, value: u64) -> Result<bool, E> {
        let _ = write!(self.text, "{}", value as f64);
        Ok(true)
    }

    fn visit_f64<E: serde::de::Error>(self, value: f64) -> Result<bool, E> {
        let _ = write!(self.text, "{value}");
        Ok(true)
    }

    fn visit_bool<E: serde::de::Error>(self, value: bool) -> Result<bool, E> {
        self.text.push_str(if value { "true" } else { "false" });
        Ok(true)
    }

    fn visit_unit<E: serde::de::Error>(self) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_map<A: MapAccess<'de>>(self, members: A) -> Result<bool, A::Error> {
        let value = serde_json::Value::deserialize(MapAccessDeserializer::new(members))?;
        let _ = write!(self.text, "{value}");
        Ok(true)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, items: A) -> Result<bool, A::Error> {
        let value = serde_json::Value::deserialize(SeqAccessDeserializer::new(items))?;
        let _ = write!(self.text, "{value}");
        Ok(true)
    }
}

/// One row (an object); `Ok(false)` when the element is not an object (skipped, as the profile
/// skips it).
struct RowSeed<'r, 'p> {
    pass: &'r mut RowPass<'p>,
}

impl<'de> DeserializeSeed<'de> for RowSeed<'_, '_> {
    type Value = bool;

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<bool, D::Error> {
        deserializer.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for RowSeed<'_, '_> {
    type Value = bool;

    fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
        formatter.write_str("an object (one row)")
    }

    fn visit_map<A: MapAccess<'de>>(self, mut members: A) -> Result<bool, A::Error> {
        match self.pass {
            RowPass::Names { names, index } => {
                while let Some(key) = members.next_key::<std::borrow::Cow<'de, str>>()? {
                    if !index.contains_key(key.as_ref()) {
                        index.insert(key.to_string(), names.len());
                        names.push(key.into_owned());
                    }
                    members.next_value::<IgnoredAny>()?;
                }
            }
            RowPass::Cells {
                index,
                slot_of_column,
                text,
                spans,
            } => {
                text.clear();
                spans.iter_mut().for_each(|span| *span = None);
                while let Some(column) = members.next_key_seed(KeySeed { index })? {
                    let slot =
                        column.and_then(|column| slot_of_column.get(column).copied().flatten());
                    match slot {
                        Some(slot) => {
                            let start = text.len();
                            let present = members.next_value_seed(CellSeed { text })?;
                            if let Some(span) = spans.get_mut(slot) {
                                *span = present.then_some((start, text.len()));
                            }
                        }
                        None => {
                            members.next_value::<IgnoredAny>()?;
                        }
                    }
                }
            }
        }
        Ok(true)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut items: A) -> Result<bool, A::Error> {
        while items.next_element::<IgnoredAny>()?.is_some() {}
        Ok(false)
    }

    fn visit_str<E: serde::de::Error>(self, _: &str) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_i64<E: serde::de::Error>(self, _: i64) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_u64<E: serde::de::Error>(self, _: u64) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_f64<E: serde::de::Error>(self, _: f64) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_bool<E: serde::de::Error>(self, _: bool) -> Result<bool, E> {
        Ok(false)
    }

    fn visit_unit<E: serde::de::Error>(self) -> Result<bool, E> {
        Ok(false)
    }
}

/// The array's elements, each through `on_row` (which returns false to stop).
struct ArraySeed<'r, 'p> {
    pass: &'r mut RowPass<'p>,
    on_row: &'r mut dyn FnMut(&RowPass<'p>, bool) -> bool,
}

impl<'de> DeserializeSeed<'de> for ArraySeed<'_, '_> {
    type Value = ();

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<(), D::Error> {
        deserializer.deserialize_seq(self)
    }
}

impl<'de> Visitor<'de> for ArraySeed<'_, '_> {
    type Value = ();

    fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
        formatter.write_str("an array of objects, one per row")
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut items: A) -> Result<(), A::Error> {
        while let Some(is_row) = items.next_element_seed(RowSeed {
            pass: &mut *self.pass,
        })? {
            if !(self.on_row)(self.pass, is_row) {
                // the rest is skipped without being read into rows
                while items.next_element::<IgnoredAny>()?.is_some() {}
                break;
            }
        }
        Ok(())
    }
}

fn json_error(path: &Path, error: &serde_json::Error) -> DataError {
    DataError {
        kind: if error.is_io() {
            DataErrorKind::Io
        } else {
            DataErrorKind::Malformed
        },
        message: if error.is_io() {
            format!("could not read the file: {error}")
        } else {
            format!("the JSON is not valid: {error}")
        },
        path: Some(path.to_path_buf()),
        line: error.line().checked_sub(1),
        byte_offset: None,
    }
}

impl JsonRows {
    fn reader(&self) -> Result<Box<dyn BufRead + '_>, DataError> {
        match &self.data {
            JsonData::Memory(bytes) => Ok(Box::new(&bytes[..])),
            JsonData::File { path, start } => {
                let mut file: File = open_data_file(path)?;
                file.seek(SeekFrom::Start(*start))
                    .map_err(|error| io_error(Some(path), &error))?;
                Ok(Box::new(BufReader::with_capacity(1 << 20, file)))
            }
        }
    }

    /// Run `pass` over every row; `on_row` sees the pass after each element.
    fn run(
        &self,
        pass: &mut RowPass<'_>,
        on_row: &mut dyn FnMut(&RowPass<'_>, bool) -> bool,
    ) -> Result<(), DataError> {
        let mut source = self.reader()?;
        if self.format == DataFormat::Json {
            let mut deserializer = serde_json::Deserializer::from_reader(source);
            let outcome = ArraySeed { pass, on_row }.deserialize(&mut deserializer);
            return match outcome {
                Ok(()) => Ok(()),
                Err(error) if self.truncated && error.is_eof() => Ok(()),
                Err(error) => Err(json_error(&self.path, &error)),
            };
        }
        let mut line = Vec::new();
        loop {
            line.clear();
            let read = source
                .read_until(b'\n', &mut line)
                .map_err(|error| io_error(Some(&self.path), &error))?;
            if read == 0 {
                break;
            }
            let trimmed = line.trim_ascii();
            if trimmed.is_empty() {
                continue;
            }
            // a line that is not valid JSON is skipped, as the profile skips it
            if serde_json::from_slice::<IgnoredAny>(trimmed).is_err() {
                continue;
            }
            let mut deserializer = serde_json::Deserializer::from_slice(trimmed);
            let is_row = RowSeed { pass: &mut *pass }
                .deserialize(&mut deserializer)
                .unwrap_or(false);
            if !on_row(pass, is_row) {
                break;
            }
        }
        Ok(())
    }

    fn collect_names(&mut self) -> Result<(), DataError> {
        let mut names = Vec::new();
        let mut index = HashMap::new();
        let mut pass = RowPass::Names {
            names: &mut names,
            index: &mut index,
        };
        self.run(&mut pass, &mut |_, _| true)?;
        self.names = names;
        self.index = index;
        Ok(())
    }
}

impl RowSource for JsonRows {
    fn column_names(&self) -> Vec<String> {
        self.names.clone()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let mut slot_of_column = vec![None; self.names.len()];
        for (slot, &column) in wanted.iter().enumerate() {
            if let Some(entry) = slot_of_column.get_mut(column) {
                *entry = Some(slot);
            }
        }
        let mut text = String::new();
        let mut spans = vec![None; wanted.len()];
        let mut pass = RowPass::Cells {
            index: &self.index,
            slot_of_column: &slot_of_column,
            text: &mut text,
            spans: &mut spans,
        };
        let mut storage: Vec<Option<&str>> = Vec::with_capacity(wanted.len());
        let mut deliver = |pass: &RowPass<'_>, is_row: bool| -> bool {
            if !is_row {
                return true;
            }
            let RowPass::Cells {
                text,
                spans,
                slot_of_column,
                ..
            } = pass
            else {
                return false;
            };
            let mut cells = recycle(std::mem::take(&mut storage));
            for (slot, &column) in wanted.iter().enumerate() {
                // a wanted column named twice fills only its first slot: copy it to the others
                let source_slot = slot_of_column
                    .get(column)
                    .copied()
                    .flatten()
                    .unwrap_or(slot);
                cells.push(
                    spans
                        .get(source_slot)
                        .copied()
                        .flatten()
                        .and_then(|(start, end)| text.get(start..end)),
                );
            }
            let keep_going = row(&cells);
            storage = recycle(cells);
            keep_going
        };
        self.run(&mut pass, &mut deliver)
    }

    fn is_sample(&self) -> bool {
        self.truncated
    }
}

/// The spec's inline `rows`.
pub struct InlineRows {
    rows: Vec<InlineRow>,
    names: Vec<String>,
}

impl InlineRows {
    pub fn new(rows: Vec<InlineRow>) -> InlineRows {
        let mut names: Vec<String> = Vec::new();
        for row in &rows {
            for (key, _) in row {
                if !names.contains(key) {
                    names.push(key.clone());
                }
            }
        }
        InlineRows { rows, names }
    }
}

impl RowSource for InlineRows {
    fn column_names(&self) -> Vec<String> {
        self.names.clone()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let mut texts: Vec<String> = vec![String::new(); wanted.len()];
        let mut present = vec![false; wanted.len()];
        for inline_row in &self.rows {
            for (slot, &column) in wanted.iter().enumerate() {
                texts[slot].clear();
                present[slot] = false;
                let Some(name) = self.names.get(column) else {
                    continue;
                };
                let Some((_, value)) = inline_row.iter().find(|(key, _)| key == name) else {
                    continue;
                };
                present[slot] = match value {
                    InlineValue::Null => false,
                    InlineValue::Bool(flag) => {
                        texts[slot].push_str(if *flag { "true" } else { "false" });
                        true
                    }
                    InlineValue::Number(number) => {
                        let _ = write!(texts[slot], "{number}");
                        number.is_finite()
                    }
                    InlineValue::Text(text) => {
                        texts[slot].push_str(text);
                        true
                    }
                };
            }
            let cells: Vec<Option<&str>> = texts
                .iter()
                .zip(&present)
                .map(|(text, &present)| present.then_some(text.as_str()))
                .collect();
            if !row(&cells) {
                break;
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn collect(source: &mut dyn RowSource, wanted: &[usize]) -> Vec<Vec<Option<String>>> {
        let mut rows = Vec::new();
        let result = source.scan(wanted, &mut |cells| {
            rows.push(cells.iter().map(|cell| cell.map(str::to_string)).collect());
            true
        });
        assert!(result.is_ok(), "{result:?}");
        rows
    }

    fn temporary_file(name: &str, contents: &[u8]) -> PathBuf {
        let folder = std::env::temp_dir().join(format!("markwell-rows-{}", std::process::id()));
        let _ = std::fs::create_dir_all(&folder);
        let path = folder.join(name);
        let written = std::fs::write(&path, contents);
        assert!(written.is_ok());
        path
    }

    fn open(path: &Path, sampled: bool) -> Box<dyn RowSource + Send> {
        match open_file_rows(path, &ReadOptions::default(), sampled) {
            Ok(rows) => rows,
            Err(error) => panic!("opens: {error}"),
        }
    }

    #[test]
    fn csv_rows_hand_over_only_the_wanted_cells_with_quotes_and_ragged_rows() {
        let path = temporary_file(
            "bakery.csv",
            b"\xEF\xBB\xBFshop,loaves,note\nNorth,12,\"fresh, warm\"\nSouth,7\n\nEast,NA,\"said \"\"hi\"\"\"\n",
        );
        let mut rows = open(&path, false);
        assert_eq!(rows.column_names(), vec!["shop", "loaves", "note"]);
        let read = collect(rows.as_mut(), &[2, 0]);
        let text = |value: &str| Some(value.to_string());
        assert_eq!(
            read,
            vec![
                vec![text("fresh, warm"), text("North")],
                vec![None, text("South")],
                vec![text("said \"hi\""), text("East")],
            ]
        );
        assert!(!rows.is_sample());
        // a second scan starts again from the first row, and stops when asked
        let mut first = Vec::new();
        let result = rows.scan(&[1], &mut |cells| {
            first.push(cells[0].map(str::to_string));
            false
        });
        assert!(result.is_ok());
        assert_eq!(first, vec![text("12")]);
    }

    #[test]
    fn json_and_ndjson_rows_read_keys_in_first_seen_order_and_numbers_as_text() {
        let array = temporary_file(
            "ferries.json",
            br#"[{"port":"Brae","trips":3},{"trips":4.5,"port":null,"late":true},7,{"port":"Orrin","extra":[1,2]}]"#,
        );
        let mut rows = open(&array, false);
        assert_eq!(rows.column_names(), vec!["port", "trips", "late", "extra"]);
        let read = collect(rows.as_mut(), &[1, 0, 3]);
        let text = |value: &str| Some(value.to_string());
        assert_eq!(
            read,
            vec![
                vec![text("3"), text("Brae"), None],
                vec![text("4.5"), None, None],
                vec![None, text("Orrin"), text("[1,2]")],
            ]
        );
        let lines = temporary_file(
            "ferries.ndjson",
            b"{\"port\":\"Brae\",\"trips\":3}\nnot json\n\n{\"port\":\"Tollan\"}\n",
        );
        let mut rows = open(&lines, false);
        assert_eq!(rows.column_names(), vec!["port", "trips"]);
        assert_eq!(
            collect(rows.as_mut(), &[0, 1]),
            vec![vec![text("Brae"), text("3")], vec![text("Tollan"), None]]
        );
    }

    #[test]
    fn a_sampled_head_of_a_long_file_is_marked_and_ends_at_a_whole_line() {
        let mut contents = String::from("id,value\n");
        let mut id = 0u64;
        while contents.len() < crate::data::cache::SAMPLE_BYTES + 1000 {
            id += 1;
            contents.push_str(&format!("{id},{}\n", id % 17));
        }
        let path = temporary_file("long.csv", contents.as_bytes());
        let mut sampled = open(&path, true);
        assert!(sampled.is_sample());
        let sampled_rows = collect(sampled.as_mut(), &[0]);
        assert!(sampled_rows.len() < id as usize);
        // every sampled row is whole: the last id read is followed by its value
        let mut full = open(&path, false);
        assert!(!full.is_sample());
        let full_rows = collect(full.as_mut(), &[0, 1]);
        assert_eq!(full_rows.len(), id as usize);
        assert!(full_rows[..sampled_rows.len()]
            .iter()
            .zip(&sampled_rows)
            .all(|(full, sampled)| full[0] == sampled[0]));
    }

    #[test]
    fn a_big_file_read_by_two_threads_gives_the_same_rows_and_stops_when_asked() {
        let mut contents = String::from("id,port,note\n");
        let mut id = 0u64;
        while contents.len() < (PIPELINE_MINIMUM_BYTES as usize) + 100_000 {
            id += 1;
            if id % 1000 == 0 {
                contents.push_str(&format!("{id},\"Brae, north\"\n"));
            } else {
                contents.push_str(&format!("{id},Orrin,calm sea\n"));
            }
        }
        let path = temporary_file("big.csv", contents.as_bytes());
        let mut rows = open(&path, false);
        let mut count = 0u64;
        let mut last_id = None;
        let mut short_rows = 0;
        let result = rows.scan(&[0, 2, 1], &mut |cells| {
            count += 1;
            last_id = cells[0].map(str::to_string);
            if cells[1].is_none() {
                short_rows += 1;
                assert_eq!(cells[2], Some("Brae, north"));
            }
            true
        });
        assert!(result.is_ok(), "{result:?}");
        assert_eq!(count, id);
        assert_eq!(last_id, Some(id.to_string()));
        assert_eq!(short_rows, id / 1000);
        // stopping early ends the reading thread too (the test would hang otherwise)
        let mut seen = 0;
        let result = rows.scan(&[1], &mut |_| {
            seen += 1;
            seen < 10
        });
        assert!(result.is_ok());
        assert_eq!(seen, 10);
    }

    #[test]
    fn a_record_longer_than_the_budget_allows_is_an_error() {
        let mut contents = String::from("id,note\n1,short\n2,");
        contents.push_str(&"x".repeat(5000));
        contents.push('\n');
        let path = temporary_file("long-record.csv", contents.as_bytes());
        let limits = ProfileLimits {
            memory: crate::budget::MemoryBudget { bytes: 16 * 1024 },
            ..ProfileLimits::default()
        };
        let opened = open_file_rows_within(&path, &ReadOptions::default(), false, &limits);
        let Ok(mut rows) = opened else {
            panic!("the header fits the budget");
        };
        let mut seen = 0;
        let result = rows.scan(&[1], &mut |_| {
            seen += 1;
            true
        });
        assert_eq!(seen, 1);
        assert!(matches!(result, Err(error) if error.kind == DataErrorKind::TooLarge));
    }

    #[test]
    fn inline_rows_keep_nulls_missing_and_write_numbers_back_as_text() {
        let rows = vec![
            vec![
                ("orchard".to_string(), InlineValue::Text("Hill".to_string())),
                ("apples".to_string(), InlineValue::Number(12.5)),
            ],
            vec![
                ("apples".to_string(), InlineValue::Null),
                ("ripe".to_string(), InlineValue::Bool(true)),
            ],
        ];
        let mut source = InlineRows::new(rows);
        assert_eq!(source.column_names(), vec!["orchard", "apples", "ripe"]);
        let text = |value: &str| Some(value.to_string());
        assert_eq!(
            collect(&mut source, &[1, 2, 0]),
            vec![
                vec![text("12.5"), None, text("Hill")],
                vec![None, text("true"), None]
            ]
        );
    }

    #[test]
    fn a_missing_or_outside_file_is_an_error_not_a_panic() {
        let folder = std::env::temp_dir().join(format!("markwell-rows-{}", std::process::id()));
        let _ = std::fs::create_dir_all(&folder);
        let options = ResolveOptions {
            spec_dir: folder.clone(),
            workspace_root: Some(folder),
            allow_outside_workspace: false,
            limits: crate::data::ProfileLimits::default(),
        };
        let source = |path: &str| Source {
            range: Default::default(),
            location: SourceLocation::Path(crate::spec::model::Spanned::new(
                path.to_string(),
                Default::default(),
            )),
            format: None,
            delimiter: None,
        };
        let missing = open_rows(&source("nowhere.csv"), &options, false);
        assert!(matches!(missing, Err(error) if error.kind == DataErrorKind::NotFound));
        let outside = open_rows(&source("../../etc/passwd"), &options, false);
        assert!(matches!(outside, Err(error) if error.kind == DataErrorKind::OutsideWorkspace));
    }
}
