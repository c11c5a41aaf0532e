//! JSON data: a top-level array of objects (streamed element by element, so memory stays
//! bounded by one row), NDJSON / JSON Lines (one object per line), and the spec's inline rows.
//! Keys become columns in the order they first appear; a row without a key counts as missing
//! there. `null` is missing; numbers are numbers; strings are read like CSV cells (so `"42"` is a
//! number and `"2024-03-05"` a date); `true`/`false` and nested values are text.

use std::cell::Cell;
use std::fmt;
use std::io::{BufRead, Read};
use std::path::Path;
use std::sync::atomic::Ordering;

use serde::de::{DeserializeSeed, IgnoredAny, MapAccess, SeqAccess, Visitor};

use super::csv_reader::ScanControl;
use super::profile::{ColumnAccumulator, TableAccumulator};
use super::{io_error, record_too_long_error, DataError, DataErrorKind, DataProblem};
use crate::spec::model::{InlineRow, InlineValue};

/// One cell of a JSON row, added to its column as it is read: scalars directly, nested arrays
/// and objects as their compact JSON text (keys in document order). No value tree is built, so
/// a cell costs no more than its text.
struct CellSeed<'c> {
    column: &'c mut ColumnAccumulator,
}

impl<'de> DeserializeSeed<'de> for CellSeed<'_> {
    type Value = ();

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<(), D::Error> {
        deserializer.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for CellSeed<'_> {
    type Value = ();

    fn expecting(&self, formatter: &mut fmt::Formatter) -> fmt::Result {
        formatter.write_str("a JSON value")
    }

    fn visit_unit<E: serde::de::Error>(self) -> Result<(), E> {
        self.column.add_missing();
        Ok(())
    }

    fn visit_bool<E: serde::de::Error>(self, value: bool) -> Result<(), E> {
        self.column.add_text(if value { "true" } else { "false" });
        Ok(())
    }

    fn visit_i64<E: serde::de::Error>(self, value: i64) -> Result<(), E> {
        self.column.add_number(value as f64);
        Ok(())
    }

    fn visit_u64<E: serde::de::Error>(self, value: u64) -> Result<(), E> {
        self.column.add_number(value as f64);
        Ok(())
    }

    fn visit_f64<E: serde::de::Error>(self, value: f64) -> Result<(), E> {
        self.column.add_number(value);
        Ok(())
    }

    fn visit_str<E: serde::de::Error>(self, value: &str) -> Result<(), E> {
        self.column.add_text(value);
        Ok(())
    }

    fn visit_map<A: MapAccess<'de>>(self, members: A) -> Result<(), A::Error> {
        let mut text = String::new();
        NestedText { out: &mut text }.visit_map(members)?;
        self.column.add_text(&text);
        Ok(())
    }

    fn visit_seq<A: SeqAccess<'de>>(self, items: A) -> Result<(), A::Error> {
        let mut text = String::new();
        NestedText { out: &mut text }.visit_seq(items)?;
        self.column.add_text(&text);
        Ok(())
    }
}

/// Writes a nested JSON value as compact text while it is read.
struct NestedText<'t> {
    out: &'t mut String,
}

impl NestedText<'_> {
    fn push_json<T: serde::Serialize + ?Sized>(&mut self, value: &T) {
        if let Ok(text) = serde_json::to_string(value) {
            self.out.push_str(&text);
        }
    }
}

impl<'de> DeserializeSeed<'de> for NestedText<'_> {
    type Value = ();

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<(), D::Error> {
        deserializer.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for NestedText<'_> {
    type Value = ();

    fn expecting(&self, formatter: &mut fmt::Formatter) -> fmt::Result {
        formatter.write_str("a JSON value")
    }

    fn visit_unit<E: serde::de::Error>(self) -> Result<(), E> {
        self.out.push_str("null");
        Ok(())
    }

    fn visit_bool<E: serde::de::Error>(mut self, value: bool) -> Result<(), E> {
        self.push_json(&value);
        Ok(())
    }

    fn visit_i64<E: serde::de::Error>(mut self, value: i64) -> Result<(), E> {
        self.push_json(&value);
        Ok(())
    }

    fn visit_u64<E: serde::de::Error>(mut self, value: u64) -> Result<(), E> {
        self.push_json(&value);
        Ok(())
    }

    fn visit_f64<E: serde::de::Error>(mut self, value: f64) -> Result<(), E> {
        self.push_json(&value);
        Ok(())
    }

    fn visit_str<E: serde::de::Error>(mut self, value: &str) -> Result<(), E> {
        self.push_json(value);
        Ok(())
    }

    fn visit_map<A: MapAccess<'de>>(mut self, mut members: A) -> Result<(), A::Error> {
        self.out.push('{');
        let mut first = true;
        while let Some(key) = members.next_key::<String>()? {
            if !first {
                self.out.push(',');
            }
            first = false;
            self.push_json(&key);
            self.out.push(':');
            members.next_value_seed(NestedText { out: self.out })?;
        }
        self.out.push('}');
        Ok(())
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut items: A) -> Result<(), A::Error> {
        self.out.push('[');
        let mut first = true;
        loop {
            // the comma goes before every element but the first, and is taken back when no
            // element follows
            let mark = self.out.len();
            if !first {
                self.out.push(',');
            }
            if items
                .next_element_seed(NestedText { out: self.out })?
                .is_none()
            {
                self.out.truncate(mark);
                break;
            }
            first = false;
        }
        self.out.push(']');
        Ok(())
    }
}

/// One JSON row, read straight into the table with its keys in document order (a `Value`
/// map would sort them). Yields `Err` with a description when the value is not an object.
struct RowSeed<'t> {
    table: &'t mut TableAccumulator,
}

type RowOutcome = Result<(), &'static str>;

impl<'de> DeserializeSeed<'de> for RowSeed<'_> {
    type Value = RowOutcome;

    fn deserialize<D: serde::Deserializer<'de>>(
        self,
        deserializer: D,
    ) -> Result<RowOutcome, D::Error> {
        deserializer.deserialize_any(self)
    }
}

impl<'de> Visitor<'de> for RowSeed<'_> {
    type Value = RowOutcome;

    fn expecting(&self, formatter: &mut fmt::Formatter) -> fmt::Result {
        formatter.write_str("an object (one row)")
    }

    fn visit_map<A: MapAccess<'de>>(self, mut members: A) -> Result<RowOutcome, A::Error> {
        self.table.rows += 1;
        while let Some(key) = members.next_key::<String>()? {
            match self.table.try_column_index(&key) {
                Some(index) if self.table.first_cell_in_row(index, &key) => members
                    .next_value_seed(CellSeed {
                        column: &mut self.table.columns[index],
                    })?,
                // a repeated key, or one past the column limit (then the profile is refused
                // as too wide)
                _ => {
                    members.next_value::<IgnoredAny>()?;
                }
            }
        }
        Ok(Ok(()))
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut items: A) -> Result<RowOutcome, A::Error> {
        while items.next_element::<IgnoredAny>()?.is_some() {}
        Ok(Err("an array"))
    }

    fn visit_str<E: serde::de::Error>(self, _: &str) -> Result<RowOutcome, E> {
        Ok(Err("a string"))
    }

    fn visit_i64<E: serde::de::Error>(self, _: i64) -> Result<RowOutcome, E> {
        Ok(Err("a number"))
    }

    fn visit_u64<E: serde::de::Error>(self, _: u64) -> Result<RowOutcome, E> {
        Ok(Err("a number"))
    }

    fn visit_f64<E: serde::de::Error>(self, _: f64) -> Result<RowOutcome, E> {
        Ok(Err("a number"))
    }

    fn visit_bool<E: serde::de::Error>(self, _: bool) -> Result<RowOutcome, E> {
        Ok(Err("a boolean"))
    }

    fn visit_unit<E: serde::de::Error>(self) -> Result<RowOutcome, E> {
        Ok(Err("null"))
    }
}

/// Add the spec's inline rows.
pub fn add_inline_rows(table: &mut TableAccumulator, rows: &[InlineRow]) {
    for row in rows {
        table.rows += 1;
        for (key, value) in row {
            let index = table.column_index(key);
            if !table.first_cell_in_row(index, key) {
                continue;
            }
            let column = &mut table.columns[index];
            match value {
                InlineValue::Null => column.add_missing(),
                InlineValue::Bool(true) => column.add_text("true"),
                InlineValue::Bool(false) => column.add_text("false"),
                InlineValue::Number(number) => column.add_number(*number),
                InlineValue::Text(text) => column.add_text(text),
            }
        }
    }
}

struct ArrayRows<'t> {
    table: &'t mut TableAccumulator,
    control: &'t ScanControl,
    /// Where the current element starts, for [`RowLimitedRead`].
    row_start: &'t Cell<u64>,
    consumed: &'t Cell<u64>,
}

/// A reader that fails (`InvalidData`) once one element of the array is longer than `limit`
/// bytes, so that one row never takes more memory than the budget allows.
struct RowLimitedRead<'t, R> {
    inner: R,
    consumed: &'t Cell<u64>,
    row_start: &'t Cell<u64>,
    limit: u64,
    over_limit: &'t Cell<bool>,
}

impl<R: Read> Read for RowLimitedRead<'_, R> {
    fn read(&mut self, buffer: &mut [u8]) -> std::io::Result<usize> {
        if self.consumed.get().saturating_sub(self.row_start.get()) > self.limit {
            self.over_limit.set(true);
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                "record too long",
            ));
        }
        let read = self.inner.read(buffer)?;
        self.consumed.set(self.consumed.get() + read as u64);
        Ok(read)
    }
}

impl<'de> DeserializeSeed<'de> for ArrayRows<'_> {
    type Value = bool;

    fn deserialize<D: serde::Deserializer<'de>>(self, deserializer: D) -> Result<bool, D::Error> {
        deserializer.deserialize_seq(self)
    }
}

impl<'de> Visitor<'de> for ArrayRows<'_> {
    /// False when cancelled.
    type Value = bool;

    fn expecting(&self, formatter: &mut fmt::Formatter) -> fmt::Result {
        formatter.write_str("an array of objects, one per row")
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut sequence: A) -> Result<bool, A::Error> {
        let mut element = 0u64;
        self.row_start.set(self.consumed.get());
        while let Some(outcome) = sequence.next_element_seed(RowSeed {
            table: &mut *self.table,
        })? {
            self.row_start.set(self.consumed.get());
            if let Err(found) = outcome {
                self.table.add_problem(DataProblem {
                    message: format!(
                        "element {element} of the array is {found}, not an object; it is skipped"
                    ),
                    line: None,
                    byte_offset: None,
                });
            }
            element += 1;
            if element % 4096 == 0 && self.control.should_stop() {
                return Ok(false);
            }
        }
        Ok(true)
    }
}

fn json_error(path: Option<&Path>, error: &serde_json::Error) -> DataError {
    let line = error.line().checked_sub(1);
    let message = if error.is_io() {
        format!("could not read the file: {error}")
    } else if error.to_string().contains("expected an array of objects") {
        "a JSON data file must hold an array of objects (one per row); for one object per line use NDJSON".to_string()
    } else {
        format!("the JSON is not valid: {error}")
    };
    DataError {
        kind: if error.is_io() {
            DataErrorKind::Io
        } else {
            DataErrorKind::Malformed
        },
        message,
        path: path.map(Path::to_path_buf),
        line,
        byte_offset: None,
    }
}

/// Profile a JSON array of objects. With `truncated` (a sampled head of the file), an early end
/// of input is not an error: the rows read so far are kept.
pub fn scan_json_array<R: Read>(
    source: R,
    truncated: bool,
    control: &ScanControl,
    path: Option<&Path>,
) -> Result<TableAccumulator, DataError> {
    let mut table = TableAccumulator::with_budget(&[], control.table_budget());
    let consumed = Cell::new(0u64);
    let row_start = Cell::new(0u64);
    let over_limit = Cell::new(false);
    let limited = RowLimitedRead {
        inner: source,
        consumed: &consumed,
        row_start: &row_start,
        limit: control.limits.record_bytes() as u64,
        over_limit: &over_limit,
    };
    let mut deserializer = serde_json::Deserializer::from_reader(limited);
    let seed = ArrayRows {
        table: &mut table,
        control,
        row_start: &row_start,
        consumed: &consumed,
    };
    let outcome = seed.deserialize(&mut deserializer);
    if over_limit.get() {
        return Err(record_too_long_error(path, &control.limits));
    }
    match outcome {
        Ok(true) => {}
        Ok(false) => return Err(control.stop_error(path)),
        Err(error) if truncated && error.is_eof() => return Ok(table),
        Err(error) => return Err(json_error(path, &error)),
    }
    if let Err(error) = deserializer.end() {
        return Err(json_error(path, &error));
    }
    Ok(table)
}

/// Profile NDJSON: one JSON object per line; blank lines are skipped, a bad line is a problem.
/// With `truncated`, a last line that does not parse is dropped silently.
pub fn scan_ndjson<R: BufRead>(
    mut source: R,
    truncated: bool,
    control: &ScanControl,
    path: Option<&Path>,
) -> Result<TableAccumulator, DataError> {
    let mut table = TableAccumulator::with_budget(&[], control.table_budget());
    let mut line_bytes = Vec::new();
    let mut line_number = 0usize;
    let mut byte_offset = 0u64;
    let line_limit = control.limits.record_bytes();
    loop {
        line_bytes.clear();
        let read = match read_line_within(&mut source, &mut line_bytes, line_limit) {
            Ok(read) => read,
            Err(error) if error.kind() == std::io::ErrorKind::InvalidData => {
                let mut error = record_too_long_error(path, &control.limits);
                error.line = Some(line_number);
                error.byte_offset = Some(byte_offset);
                return Err(error);
            }
            Err(error) => return Err(io_error(path, &error)),
        };
        if read == 0 {
            break;
        }
        let is_last = line_bytes.last() != Some(&b'\n');
        let text = match std::str::from_utf8(&line_bytes) {
            Ok(text) => text,
            Err(error) => {
                if truncated && is_last {
                    break;
                }
                return Err(DataError {
                    kind: DataErrorKind::InvalidUtf8,
                    message: format!("line {} is not valid UTF-8 text", line_number + 1),
                    path: path.map(Path::to_path_buf),
                    line: Some(line_number),
                    byte_offset: Some(byte_offset + error.valid_up_to() as u64),
                });
            }
        };
        let trimmed = text.trim();
        if !trimmed.is_empty() {
            // validate first, so that a bad line adds nothing at all
            let valid = serde_json::from_str::<IgnoredAny>(trimmed);
            let mut line_deserializer = serde_json::Deserializer::from_str(trimmed);
            let outcome = valid.and_then(|_| {
                RowSeed { table: &mut table }
                    .deserialize(&mut line_deserializer)
                    .and_then(|outcome| line_deserializer.end().map(|()| outcome))
            });
            match outcome {
                Ok(outcome) => {
                    if let Err(found) = outcome {
                        table.add_problem(DataProblem {
                            message: format!(
                                "this line holds {found}, not an object; it is skipped"
                            ),
                            line: Some(line_number),
                            byte_offset: Some(byte_offset),
                        });
                    }
                }
                Err(_) if truncated && is_last => break,
                Err(error) => table.add_problem(DataProblem {
                    message: format!("this line is not valid JSON ({error}); it is skipped"),
                    line: Some(line_number),
                    byte_offset: Some(byte_offset),
                }),
            }
        }
        line_number += 1;
        byte_offset += read as u64;
        if line_number % 4096 == 0 {
            control.bytes_done.store(byte_offset, Ordering::Relaxed);
            if control.should_stop() {
                return Err(control.stop_error(path));
            }
        }
    }
    control.bytes_done.store(byte_offset, Ordering::Relaxed);
    Ok(table)
}

/// Read one line (with its `\n`) into `line`, failing with `InvalidData` once it is longer
/// than `limit` bytes (then nothing more is kept). `Ok(0)` at the end.
fn read_line_within<R: BufRead>(
    source: &mut R,
    line: &mut Vec<u8>,
    limit: usize,
) -> std::io::Result<usize> {
    let mut total = 0usize;
    loop {
        let available = match source.fill_buf() {
            Ok(available) => available,
            Err(error) if error.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(error) => return Err(error),
        };
        if available.is_empty() {
            return Ok(total);
        }
        let (taken, done) = match memchr::memchr(b'\n', available) {
            Some(position) => (position + 1, true),
            None => (available.len(), false),
        };
        if total + taken > limit {
            line.clear();
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                "record too long",
            ));
        }
        line.extend_from_slice(&available[..taken]);
        source.consume(taken);
        total += taken;
        if done {
            return Ok(total);
        }
    }
}

/// Byte ranges of the first key named by each of `names` in `head`, in one pass over the
/// head (a wide file has many names: one search per name would be quadratic).
pub fn find_key_ranges(head: &[u8], names: &[String]) -> Vec<Option<(u64, u64)>> {
    let mut wanted: std::collections::HashMap<String, usize> = names
        .iter()
        .enumerate()
        .filter_map(|(index, name)| Some((serde_json::to_string(name).ok()?, index)))
        .collect();
    let mut ranges = vec![None; names.len()];
    let mut position = 0usize;
    while !wanted.is_empty() {
        let Some(found) = memchr::memchr(b'"', head.get(position..).unwrap_or(&[])) else {
            break;
        };
        let start = position + found;
        // the closing quote: the first one not escaped by a backslash
        let mut cursor = start + 1;
        let end = loop {
            match memchr::memchr2(b'"', b'\\', head.get(cursor..).unwrap_or(&[])) {
                None => break None,
                Some(offset) if head[cursor + offset] == b'\\' => cursor += offset + 2,
                Some(offset) => break Some(cursor + offset + 1),
            }
        };
        let Some(end) = end else { break };
        let after = head.get(end..).unwrap_or(&[]);
        let next = after.iter().find(|byte| !byte.is_ascii_whitespace());
        if next == Some(&b':') {
            if let Ok(text) = std::str::from_utf8(&head[start..end]) {
                if let Some(index) = wanted.remove(text) {
                    ranges[index] = Some((start as u64, end as u64));
                }
            }
        }
        position = end;
    }
    ranges
}

/// Byte range of the first `"name"` key in `head`, for go-to-definition.
pub fn find_key_range(head: &[u8], name: &str) -> Option<(u64, u64)> {
    let needle = serde_json::to_string(name).ok()?;
    let mut search_from = 0usize;
    while let Some(found) = memchr::memmem::find(head.get(search_from..)?, needle.as_bytes()) {
        let start = search_from + found;
        let end = start + needle.len();
        // a key is followed by a colon (after optional spaces)
        let after = head.get(end..).unwrap_or(&[]);
        let next = after.iter().find(|byte| !byte.is_ascii_whitespace());
        if next == Some(&b':') {
            return Some((start as u64, end as u64));
        }
        search_from = end;
    }
    None
}
