//! CSV and TSV reading per RFC 4180 (quoted fields, doubled quotes, embedded delimiters and
//! newlines, CRLF; plus a UTF-8 byte-order mark and any one-byte delimiter), streaming in
//! constant memory, and a two-thread scan of big files.
//!
//! The record reader works on byte slices of a reused buffer: a line without any quote is split
//! with `memchr` and never copied (the fast path); a line with quotes goes through a small state
//! machine that unescapes quoted fields into a reused scratch buffer. Blank lines are skipped.
//! Being lenient like most readers, text after a closing quote is kept, and a quote inside an
//! unquoted field is an ordinary character.
//!
//! Parallel scan: the file is cut into byte ranges at line starts; each thread profiles the
//! records that *start* in its range (finishing the last one past the range end). A cut can fall
//! inside a quoted field that holds a newline; then the previous range's last record ends past
//! the cut, the next range's result is thrown away and that range is scanned again from where
//! the record really ended. For files without quoted newlines every range is kept.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::path::Path;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

use memchr::{memchr, memchr2, memchr_iter};

use super::profile::TableAccumulator;
use super::{
    io_error, record_too_long_error, timed_out_error, too_many_columns_error, DataError,
    DataErrorKind, DataProblem, ProfileLimits,
};
use crate::budget::Deadline;

const BUFFER_BYTES: usize = 1 << 20;
/// A single record may not be longer than this by default (an unterminated quote in a big file
/// would otherwise pull the whole file into memory); profiles take theirs from the memory
/// budget ([`ProfileLimits::record_bytes`]).
pub const MAX_RECORD_BYTES: usize = 64 << 20;
/// Files with less data than this are scanned by one thread.
const PARALLEL_MINIMUM_BYTES: u64 = 8 << 20;

#[derive(Clone, Copy, Debug)]
struct FieldSpan {
    /// Raw bytes of the cell in the buffer (quotes included).
    raw_start: usize,
    raw_end: usize,
    /// Unescaped value in the scratch buffer, for quoted cells.
    scratch: Option<(usize, usize)>,
}

/// Where the current record starts.
#[derive(Clone, Copy, Debug)]
pub struct RecordStart {
    pub byte_offset: u64,
    /// 0-based line, relative to where the reader started.
    pub line: u64,
    /// The record ends in an unterminated quoted field (at the end of the input).
    pub unterminated_quote: bool,
}

enum ParseOutcome {
    Record {
        consumed: usize,
        newlines: u64,
        unterminated: bool,
    },
    BlankLine {
        consumed: usize,
    },
    NeedMore,
    End,
    /// More cells than `max_fields`.
    TooManyFields,
}

/// A buffered RFC 4180 record reader over any byte source.
pub struct RecordReader<R> {
    source: R,
    buffer: Vec<u8>,
    start: usize,
    end: usize,
    at_eof: bool,
    /// Byte offset (in the file) of `buffer[0]`.
    buffer_offset: u64,
    delimiter: u8,
    fields: Vec<FieldSpan>,
    scratch: Vec<u8>,
    lines_consumed: u64,
    bytes_read: u64,
    max_record_bytes: usize,
    max_fields: usize,
}

impl<R: Read> RecordReader<R> {
    /// A reader over `source`, whose first byte is at `start_offset` in the file.
    pub fn new(source: R, start_offset: u64, delimiter: u8) -> RecordReader<R> {
        RecordReader::with_buffer_bytes(source, start_offset, delimiter, BUFFER_BYTES)
    }

    /// Like [`RecordReader::new`] with a first buffer of `bytes` (at most 1 MiB; it grows for a
    /// longer record): a small input in memory needs no 1 MiB buffer.
    pub fn with_buffer_bytes(
        source: R,
        start_offset: u64,
        delimiter: u8,
        bytes: usize,
    ) -> RecordReader<R> {
        RecordReader {
            source,
            buffer: vec![0; bytes.clamp(4096, BUFFER_BYTES)],
            start: 0,
            end: 0,
            at_eof: false,
            buffer_offset: start_offset,
            delimiter,
            fields: Vec::with_capacity(64),
            scratch: Vec::new(),
            lines_consumed: 0,
            bytes_read: 0,
            max_record_bytes: MAX_RECORD_BYTES,
            max_fields: usize::MAX,
        }
    }

    /// Refuse records of more than `fields` cells (an `InvalidInput` error): the cells' spans
    /// take memory too (a record of commas only would otherwise cost 24 bytes a byte).
    pub fn with_max_fields(mut self, fields: usize) -> RecordReader<R> {
        self.max_fields = fields.max(1);
        self
    }

    /// Refuse records longer than `bytes` (an `InvalidData` error) instead of the default.
    pub fn with_max_record_bytes(mut self, bytes: usize) -> RecordReader<R> {
        self.max_record_bytes = bytes.max(1024);
        if self.buffer.len() > self.max_record_bytes {
            self.buffer.truncate(self.max_record_bytes);
        }
        self
    }

    /// File offset where the next record (or blank line) starts.
    pub fn next_offset(&self) -> u64 {
        self.buffer_offset + self.start as u64
    }

    /// Newlines consumed so far.
    pub fn lines_consumed(&self) -> u64 {
        self.lines_consumed
    }

    /// Bytes read from the source so far.
    pub fn bytes_read(&self) -> u64 {
        self.bytes_read
    }

    pub fn field_count(&self) -> usize {
        self.fields.len()
    }

    /// The unescaped value of cell `index` of the current record.
    pub fn field(&self, index: usize) -> &[u8] {
        match self.fields.get(index) {
            Some(FieldSpan {
                scratch: Some((start, end)),
                ..
            }) => self.scratch.get(*start..*end).unwrap_or(&[]),
            Some(span) => self.buffer.get(span.raw_start..span.raw_end).unwrap_or(&[]),
            None => &[],
        }
    }

    /// File byte range of cell `index` as written (quotes included).
    pub fn field_byte_range(&self, index: usize) -> Option<(u64, u64)> {
        let span = self.fields.get(index)?;
        Some((
            self.buffer_offset + span.raw_start as u64,
            self.buffer_offset + span.raw_end as u64,
        ))
    }

    fn fill(&mut self) -> std::io::Result<()> {
        if self.start > 0 {
            self.buffer.copy_within(self.start..self.end, 0);
            self.end -= self.start;
            self.buffer_offset += self.start as u64;
            self.start = 0;
        }
        if self.end == self.buffer.len() {
            if self.buffer.len() >= self.max_record_bytes {
                return Err(std::io::Error::new(
                    std::io::ErrorKind::InvalidData,
                    "record too long",
                ));
            }
            let grown = (self.buffer.len() * 2).min(self.max_record_bytes);
            self.buffer.resize(grown, 0);
        }
        loop {
            match self.source.read(&mut self.buffer[self.end..]) {
                Ok(0) => {
                    self.at_eof = true;
                    return Ok(());
                }
                Ok(read) => {
                    self.end += read;
                    self.bytes_read += read as u64;
                    return Ok(());
                }
                Err(error) if error.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(error) => return Err(error),
            }
        }
    }

    /// Read the next record that starts before `limit` (a file offset). `Ok(None)` at the end
    /// of the input or at the limit.
    pub fn next_record(&mut self, limit: u64) -> std::io::Result<Option<RecordStart>> {
        loop {
            if self.next_offset() >= limit {
                return Ok(None);
            }
            match self.parse_at_start() {
                ParseOutcome::Record {
                    consumed,
                    newlines,
                    unterminated,
                } => {
                    let record = RecordStart {
                        byte_offset: self.next_offset(),
                        line: self.lines_consumed,
                        unterminated_quote: unterminated,
                    };
                    // the field spans point into the buffer and stay valid: only `start` moves
                    self.start += consumed;
                    self.lines_consumed += newlines;
                    return Ok(Some(record));
                }
                ParseOutcome::BlankLine { consumed } => {
                    self.start += consumed;
                    self.lines_consumed += 1;
                }
                ParseOutcome::NeedMore => self.fill()?,
                ParseOutcome::End => return Ok(None),
                ParseOutcome::TooManyFields => {
                    return Err(std::io::Error::new(
                        std::io::ErrorKind::InvalidInput,
                        "too many cells",
                    ))
                }
            }
        }
    }

    fn parse_at_start(&mut self) -> ParseOutcome {
        let data_start = self.start;
        let data = &self.buffer[self.start..self.end];
        if data.is_empty() {
            return if self.at_eof {
                ParseOutcome::End
            } else {
                ParseOutcome::NeedMore
            };
        }
        let (line_end, consumed, newlines) = match memchr(b'\n', data) {
            Some(newline) => (newline, newline + 1, 1),
            None if self.at_eof => (data.len(), data.len(), 0),
            None => return ParseOutcome::NeedMore,
        };
        let mut line = &data[..line_end];
        if line.last() == Some(&b'\r') {
            line = &line[..line.len() - 1];
        }
        if memchr(b'"', line).is_some() {
            return self.parse_quoted();
        }
        if line.is_empty() {
            return ParseOutcome::BlankLine { consumed };
        }
        self.fields.clear();
        let mut field_start = 0;
        for position in memchr_iter(self.delimiter, line) {
            if self.fields.len() >= self.max_fields {
                return ParseOutcome::TooManyFields;
            }
            self.fields.push(FieldSpan {
                raw_start: data_start + field_start,
                raw_end: data_start + position,
                scratch: None,
            });
            field_start = position + 1;
        }
        self.fields.push(FieldSpan {
            raw_start: data_start + field_start,
            raw_end: data_start + line.len(),
            scratch: None,
        });
        ParseOutcome::Record {
            consumed,
            newlines,
            unterminated: false,
        }
    }

    /// The slow path: a record with quotes, which may span lines.
    fn parse_quoted(&mut self) -> ParseOutcome {
        let base = self.start;
        let data = &self.buffer[self.start..self.end];
        let at_eof = self.at_eof;
        let delimiter = self.delimiter;
        self.fields.clear();
        self.scratch.clear();
        let mut position = 0usize;
        let mut newlines = 0u64;
        let mut unterminated = false;
        loop {
            if self.fields.len() >= self.max_fields {
                return ParseOutcome::TooManyFields;
            }
            let raw_start = position;
            if data.get(position) == Some(&b'"') {
                let scratch_start = self.scratch.len();
                position += 1;
                loop {
                    match memchr(b'"', &data[position..]) {
                        None => {
                            if !at_eof {
                                return ParseOutcome::NeedMore;
                            }
                            let rest = &data[position..];
                            newlines += memchr_iter(b'\n', rest).count() as u64;
                            self.scratch.extend_from_slice(rest);
                            position = data.len();
                            unterminated = true;
                            break;
                        }
                        Some(found) => {
                            let quote = position + found;
                            let piece = &data[position..quote];
                            newlines += memchr_iter(b'\n', piece).count() as u64;
                            self.scratch.extend_from_slice(piece);
                            match data.get(quote + 1) {
                                Some(b'"') => {
                                    self.scratch.push(b'"');
                                    position = quote + 2;
                                }
                                Some(_) => {
                                    position = quote + 1;
                                    break;
                                }
                                None if !at_eof => return ParseOutcome::NeedMore,
                                None => {
                                    position = quote + 1;
                                    break;
                                }
                            }
                        }
                    }
                }
                // lenient: anything between the closing quote and the delimiter is kept
                // (a CR right before the line break belongs to the line break)
                match memchr2(delimiter, b'\n', &data[position..]) {
                    Some(found) => {
                        let mut extra = &data[position..position + found];
                        if data[position + found] == b'\n' {
                            extra = extra.strip_suffix(b"\r").unwrap_or(extra);
                        }
                        self.scratch.extend_from_slice(extra);
                        position += found;
                    }
                    None if !at_eof => return ParseOutcome::NeedMore,
                    None => {
                        let extra = &data[position..];
                        self.scratch
                            .extend_from_slice(extra.strip_suffix(b"\r").unwrap_or(extra));
                        position = data.len();
                    }
                }
                self.fields.push(FieldSpan {
                    raw_start: base + raw_start,
                    raw_end: base + position,
                    scratch: Some((scratch_start, self.scratch.len())),
                });
            } else {
                match memchr2(delimiter, b'\n', &data[position..]) {
                    Some(found) => position += found,
                    None if !at_eof => return ParseOutcome::NeedMore,
                    None => position = data.len(),
                }
                self.fields.push(FieldSpan {
                    raw_start: base + raw_start,
                    raw_end: base + position,
                    scratch: None,
                });
            }
            match data.get(position) {
                None => break,
                Some(&byte) if byte == delimiter => {
                    position += 1;
                    if position == data.len() {
                        if !at_eof {
                            return ParseOutcome::NeedMore;
                        }
                        self.fields.push(FieldSpan {
                            raw_start: base + position,
                            raw_end: base + position,
                            scratch: None,
                        });
                        break;
                    }
                }
                Some(_) => {
                    // the newline ends the record
                    position += 1;
                    newlines += 1;
                    break;
                }
            }
        }
        // a CR before the record's LF belongs to the line break, not to an unquoted last cell
        if let Some(last) = self.fields.last_mut() {
            if last.scratch.is_none()
                && last.raw_end > last.raw_start
                && self.buffer.get(last.raw_end - 1) == Some(&b'\r')
            {
                last.raw_end -= 1;
            }
        }
        ParseOutcome::Record {
            consumed: position,
            newlines,
            unterminated,
        }
    }
}

/// The header row of a delimited file.
#[derive(Clone, Debug)]
pub struct Header {
    pub names: Vec<String>,
    /// File byte range of each header cell.
    pub ranges: Vec<Option<(u64, u64)>>,
    /// File offset of the first data record.
    pub data_start: u64,
    /// Newlines before the first data record.
    pub lines_before_data: u64,
}

fn bad_header(path: Option<&Path>, message: String, byte_offset: u64) -> DataError {
    DataError {
        kind: DataErrorKind::BadHeader,
        message,
        path: path.map(Path::to_path_buf),
        line: Some(0),
        byte_offset: Some(byte_offset),
    }
}

/// Read and check the header row from `source`, which starts at file offset `start_offset`
/// (3 after a byte-order mark).
pub fn read_header<R: Read>(
    source: R,
    start_offset: u64,
    delimiter: u8,
    path: Option<&Path>,
) -> Result<Header, DataError> {
    read_header_within(
        source,
        start_offset,
        delimiter,
        path,
        &ProfileLimits::UNTIMED,
    )
}

/// The error for a failed read of records: too long a record, or the IO error.
fn record_read_error(
    path: Option<&Path>,
    limits: &ProfileLimits,
    error: &std::io::Error,
) -> DataError {
    if error.kind() == std::io::ErrorKind::InvalidData {
        record_too_long_error(path, limits)
    } else if error.kind() == std::io::ErrorKind::InvalidInput {
        too_many_columns_error(path, None, limits)
    } else {
        io_error(path, error)
    }
}

/// [`read_header`] within `limits` (record length and column count).
pub fn read_header_within<R: Read>(
    source: R,
    start_offset: u64,
    delimiter: u8,
    path: Option<&Path>,
    limits: &ProfileLimits,
) -> Result<Header, DataError> {
    let mut reader = RecordReader::new(source, start_offset, delimiter)
        .with_max_record_bytes(limits.record_bytes())
        .with_max_fields(limits.max_columns().saturating_add(1));
    let record = reader
        .next_record(u64::MAX)
        .map_err(|error| record_read_error(path, limits, &error))?;
    let Some(record) = record else {
        return Err(DataError {
            kind: DataErrorKind::Empty,
            message: "the file holds no rows, not even a header".to_string(),
            path: path.map(Path::to_path_buf),
            line: None,
            byte_offset: None,
        });
    };
    if reader.field_count() > limits.max_columns() {
        return Err(too_many_columns_error(
            path,
            Some(reader.field_count()),
            limits,
        ));
    }
    let mut names: Vec<String> = Vec::with_capacity(reader.field_count());
    let mut ranges = Vec::with_capacity(reader.field_count());
    let mut seen: std::collections::HashMap<String, usize> =
        std::collections::HashMap::with_capacity(reader.field_count());
    for index in 0..reader.field_count() {
        let range = reader.field_byte_range(index);
        let offset = range.map_or(record.byte_offset, |(start, _)| start);
        let name = match std::str::from_utf8(reader.field(index)) {
            Ok(text) => super::infer::trim_cell(text).to_string(),
            Err(_) => {
                return Err(DataError {
                    kind: DataErrorKind::InvalidUtf8,
                    message: format!("header cell {} is not valid UTF-8 text", index + 1),
                    path: path.map(Path::to_path_buf),
                    line: Some(0),
                    byte_offset: Some(offset),
                })
            }
        };
        if name.is_empty() {
            return Err(bad_header(
                path,
                format!(
                    "header cell {} is empty; every column needs a name",
                    index + 1
                ),
                offset,
            ));
        }
        if let Some(&first) = seen.get(&name) {
            return Err(bad_header(
                path,
                format!(
                    "the header names `{name}` twice (cells {} and {}); column names must be unique",
                    first + 1,
                    index + 1
                ),
                offset,
            ));
        }
        seen.insert(name.clone(), index);
        names.push(name);
        ranges.push(range);
    }
    Ok(Header {
        names,
        ranges,
        data_start: reader.next_offset(),
        lines_before_data: reader.lines_consumed(),
    })
}

/// Shared between the scanning threads and the thread reporting progress.
#[derive(Debug, Default)]
pub struct ScanControl {
    pub cancelled: AtomicBool,
    pub bytes_done: AtomicU64,
    /// The input is a head cut from a longer file: a last record left inside an open quote
    /// is the cut's doing, not the file's, and is dropped.
    pub truncated_input: bool,
    /// Memory and time the scan may take (the time as the `deadline` below).
    pub limits: ProfileLimits,
    pub deadline: Deadline,
    /// Set when a scan stopped because the deadline passed.
    pub timed_out: AtomicBool,
    /// Threads scanning at once (each gets its share of the memory budget); 0 counts as 1.
    pub readers: usize,
}

/// Cells between two looks at the clock and the cancel flag (besides every 4096 records), so
/// that very wide rows are checked as often as narrow ones.
const CELLS_BETWEEN_CHECKS: u64 = 1 << 20;

impl ScanControl {
    /// A control for a scan within `limits`, its deadline starting now.
    pub fn within(limits: ProfileLimits) -> ScanControl {
        ScanControl {
            limits,
            deadline: limits.time.start(),
            ..ScanControl::default()
        }
    }

    /// Whether the scan should stop: cancelled, or out of time (which is remembered).
    pub fn should_stop(&self) -> bool {
        if self.cancelled.load(Ordering::Relaxed) {
            return true;
        }
        if self.deadline.passed() {
            self.timed_out.store(true, Ordering::Relaxed);
            self.cancelled.store(true, Ordering::Relaxed);
            return true;
        }
        false
    }

    /// The error for a scan that stopped early: timed out, or cancelled.
    pub fn stop_error(&self, path: Option<&Path>) -> DataError {
        if self.timed_out.load(Ordering::Relaxed) {
            timed_out_error(path, &self.limits)
        } else {
            cancelled_error(path)
        }
    }

    pub fn table_budget(&self) -> super::profile::TableBudget {
        self.limits.table_budget(self.readers)
    }
}

/// What one scan of a byte range produced.
#[derive(Debug)]
pub struct RangeScan {
    pub table: TableAccumulator,
    /// File offset just after the last record taken.
    pub end_offset: u64,
    /// Newlines consumed, blank lines included.
    pub lines: u64,
}

pub fn cancelled_error(path: Option<&Path>) -> DataError {
    DataError {
        kind: DataErrorKind::Cancelled,
        message: "profiling was cancelled".to_string(),
        path: path.map(Path::to_path_buf),
        line: None,
        byte_offset: None,
    }
}

/// Profile the records of `source` (which starts at file offset `start_offset`) that start
/// before `limit`. Lines in problems and errors are relative to `start_offset`.
pub fn scan_records<R: Read>(
    source: R,
    start_offset: u64,
    limit: u64,
    delimiter: u8,
    names: &[String],
    control: &ScanControl,
    path: Option<&Path>,
) -> Result<RangeScan, DataError> {
    let mut reader = RecordReader::new(source, start_offset, delimiter)
        .with_max_record_bytes(control.limits.record_bytes())
        .with_max_fields(control.limits.max_columns().saturating_add(1));
    let mut table = TableAccumulator::with_budget(names, control.table_budget());
    let width = names.len();
    let mut reported_bytes = 0u64;
    let mut records_since_check = 0u32;
    let mut cells_since_check = 0u64;
    loop {
        let record = reader
            .next_record(limit)
            .map_err(|error| record_read_error(path, &control.limits, &error))?;
        let Some(record) = record else { break };
        if record.unterminated_quote && control.truncated_input {
            break;
        }
        table.rows += 1;
        let cell_count = reader.field_count();
        if record.unterminated_quote {
            table.add_problem(DataProblem {
                message:
                    "a quoted cell is never closed; the rest of the file was read as that cell"
                        .to_string(),
                line: Some(record.line as usize),
                byte_offset: Some(record.byte_offset),
            });
        } else if cell_count != width {
            table.add_problem(DataProblem {
                message: format!(
                    "a row of {} but the header names {}; {}",
                    plural(cell_count, "cell", "cells"),
                    plural(width, "column", "columns"),
                    if cell_count < width {
                        "the missing cells count as missing values"
                    } else {
                        "the extra cells are ignored"
                    }
                ),
                line: Some(record.line as usize),
                byte_offset: Some(record.byte_offset),
            });
        }
        for index in 0..cell_count.min(width) {
            match std::str::from_utf8(reader.field(index)) {
                Ok(text) => table.columns[index].add_text(text),
                Err(error) => {
                    let cell_offset = reader
                        .field_byte_range(index)
                        .map_or(record.byte_offset, |(start, _)| start);
                    return Err(DataError {
                        kind: DataErrorKind::InvalidUtf8,
                        message: format!(
                            "row at line {} is not valid UTF-8 text (in column `{}`)",
                            record.line + 1,
                            names.get(index).map_or("?", String::as_str)
                        ),
                        path: path.map(Path::to_path_buf),
                        line: Some(record.line as usize),
                        byte_offset: Some(cell_offset + error.valid_up_to() as u64),
                    });
                }
            }
        }
        records_since_check += 1;
        cells_since_check += cell_count as u64;
        if records_since_check >= 4096 || cells_since_check >= CELLS_BETWEEN_CHECKS {
            records_since_check = 0;
            cells_since_check = 0;
            let read = reader.bytes_read();
            control
                .bytes_done
                .fetch_add(read - reported_bytes, Ordering::Relaxed);
            reported_bytes = read;
            if control.should_stop() {
                return Err(control.stop_error(path));
            }
        }
    }
    let read = reader.bytes_read();
    control
        .bytes_done
        .fetch_add(read.saturating_sub(reported_bytes), Ordering::Relaxed);
    Ok(RangeScan {
        table,
        end_offset: reader.next_offset(),
        lines: reader.lines_consumed(),
    })
}

fn open_at(path: &Path, offset: u64) -> Result<File, DataError> {
    let mut file = super::cache::open_data_file(path)?;
    file.seek(SeekFrom::Start(offset))
        .map_err(|error| io_error(Some(path), &error))?;
    Ok(file)
}

/// The offset just after the first `\n` at or after `from` (or `size`).
fn next_line_start(path: &Path, from: u64, size: u64) -> Result<u64, DataError> {
    let mut file = open_at(path, from)?;
    let mut window = vec![0u8; 64 * 1024];
    let mut offset = from;
    while offset < size {
        let read = file
            .read(&mut window)
            .map_err(|error| io_error(Some(path), &error))?;
        if read == 0 {
            break;
        }
        if let Some(found) = memchr(b'\n', &window[..read]) {
            return Ok(offset + found as u64 + 1);
        }
        offset += read as u64;
    }
    Ok(size)
}

/// Profile the data rows of a delimited file, with up to `threads` threads.
/// Returns the table; lines in its problems are 0-based lines of the file.
pub fn scan_file(
    path: &Path,
    size: u64,
    delimiter: u8,
    header: &Header,
    threads: usize,
    control: &ScanControl,
    wait_with_progress: &dyn Fn(&dyn Fn() -> bool),
) -> Result<TableAccumulator, DataError> {
    let data_bytes = size.saturating_sub(header.data_start);
    let threads = if data_bytes < PARALLEL_MINIMUM_BYTES {
        1
    } else {
        threads.max(1)
    };
    let mut cuts = vec![header.data_start];
    for part in 1..threads {
        let nominal = header.data_start + data_bytes * part as u64 / threads as u64;
        let cut = next_line_start(path, nominal, size)?;
        if cut > *cuts.last().unwrap_or(&0) && cut < size {
            cuts.push(cut);
        }
    }
    cuts.push(u64::MAX);
    let ranges: Vec<(u64, u64)> = cuts.windows(2).map(|pair| (pair[0], pair[1])).collect();

    let scan_range = |start: u64, limit: u64| -> Result<RangeScan, DataError> {
        let file = open_at(path, start)?;
        scan_records(
            file,
            start,
            limit,
            delimiter,
            &header.names,
            control,
            Some(path),
        )
    };

    let results: Vec<Result<RangeScan, DataError>> = std::thread::scope(|scope| {
        let handles: Vec<_> = ranges
            .iter()
            .map(|&(start, limit)| scope.spawn(move || scan_range(start, limit)))
            .collect();
        let all_finished = || handles.iter().all(|handle| handle.is_finished());
        wait_with_progress(&all_finished);
        handles
            .into_iter()
            .map(|handle| {
                handle.join().unwrap_or_else(|_| {
                    Err(DataError {
                        kind: DataErrorKind::Io,
                        message: "a scanning thread failed".to_string(),
                        path: Some(path.to_path_buf()),
                        line: None,
                        byte_offset: None,
                    })
                })
            })
            .collect()
    });

    let mut table: Option<TableAccumulator> = None;
    let mut expected_start = header.data_start;
    let mut line_base = header.lines_before_data;
    for (&(start, limit), result) in ranges.iter().zip(results) {
        let scan = if start == expected_start {
            result
        } else if expected_start >= limit {
            // the previous range's last record swallowed this whole range
            continue;
        } else {
            // the cut fell inside a quoted cell: scan again from where that record ended
            scan_range(expected_start, limit)
        };
        let mut scan = scan.map_err(|mut error| {
            if let Some(line) = &mut error.line {
                *line += line_base as usize;
            }
            error
        })?;
        scan.table.shift_problem_lines(line_base as usize);
        line_base += scan.lines;
        expected_start = scan.end_offset;
        match &mut table {
            None => table = Some(scan.table),
            Some(existing) => existing.merge(&scan.table),
        }
    }
    Ok(table
        .unwrap_or_else(|| TableAccumulator::with_budget(&header.names, control.table_budget())))
}

/// Profile delimited text held in memory (a sampled head, or a small file read at once).
pub fn scan_bytes(
    bytes: &[u8],
    delimiter: u8,
    path: Option<&Path>,
    truncated: bool,
) -> Result<(Header, TableAccumulator), DataError> {
    let control = ScanControl {
        truncated_input: truncated,
        ..ScanControl::within(ProfileLimits::UNTIMED)
    };
    scan_bytes_within(bytes, delimiter, path, &control)
}

/// [`scan_bytes`] under `control` (its limits, deadline and whether the input is a cut head).
pub fn scan_bytes_within(
    bytes: &[u8],
    delimiter: u8,
    path: Option<&Path>,
    control: &ScanControl,
) -> Result<(Header, TableAccumulator), DataError> {
    let bom = if bytes.starts_with(&[0xEF, 0xBB, 0xBF]) {
        3
    } else {
        0
    };
    let header = read_header_within(&bytes[bom..], bom as u64, delimiter, path, &control.limits)?;
    let data_start = header.data_start as usize;
    let mut scan = scan_records(
        bytes.get(data_start..).unwrap_or(&[]),
        header.data_start,
        u64::MAX,
        delimiter,
        &header.names,
        control,
        path,
    )
    .map_err(|mut error| {
        if let Some(line) = &mut error.line {
            *line += header.lines_before_data as usize;
        }
        error
    })?;
    scan.table
        .shift_problem_lines(header.lines_before_data as usize);
    Ok((header, scan.table))
}

/// `1 cell`, `3 cells`.
fn plural(count: usize, one: &str, many: &str) -> String {
    if count == 1 {
        format!("1 {one}")
    } else {
        format!("{count} {many}")
    }
}
