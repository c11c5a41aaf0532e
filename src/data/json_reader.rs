//! JSON data: a top-level array of objects (streamed element by element, so memory stays
//! bounded by one row), NDJSON / JSON Lines (one object per line), and the spec's inline rows.
//! Keys become columns in the order they first appear; a row without a key counts as missing
//! there. `null` is missing; numbers are numbers; strings are read like CSV cells (so `"42"` is a
//! number and `"2024-03-05"` a date); `true`/`false` and nested values are text.

use std::fmt;
use std::io::{BufRead, Read};
use std::path::Path;
use std::sync::atomic::Ordering;

use serde::de::{DeserializeSeed, IgnoredAny, MapAccess, SeqAccess, Visitor};
use serde_json::Value;

use super::csv_reader::{cancelled_error, ScanControl};
use super::profile::{ColumnAccumulator, TableAccumulator};
use super::{io_error, DataError, DataErrorKind, DataProblem};
use crate::spec::model::{InlineRow, InlineValue};

fn add_json_value(column: &mut ColumnAccumulator, value: &Value) {
    match value {
        Value::Null => column.add_missing(),
        Value::Bool(true) => column.add_text("true"),
        Value::Bool(false) => column.add_text("false"),
        Value::Number(number) => match number.as_f64() {
            Some(float) => column.add_number(float),
            None => column.add_text(&number.to_string()),
        },
        Value::String(text) => column.add_text(text),
        nested => column.add_text(&nested.to_string()),
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
            let value: Value = members.next_value()?;
            let index = self.table.column_index(&key);
            add_json_value(&mut self.table.columns[index], &value);
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
        while let Some(outcome) = sequence.next_element_seed(RowSeed {
            table: &mut *self.table,
        })? {
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
            if element % 4096 == 0 && self.control.cancelled.load(Ordering::Relaxed) {
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
    let mut table = TableAccumulator::default();
    let mut deserializer = serde_json::Deserializer::from_reader(source);
    let seed = ArrayRows {
        table: &mut table,
        control,
    };
    match seed.deserialize(&mut deserializer) {
        Ok(true) => {}
        Ok(false) => return Err(cancelled_error(path)),
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
    let mut table = TableAccumulator::default();
    let mut line_bytes = Vec::new();
    let mut line_number = 0usize;
    let mut byte_offset = 0u64;
    loop {
        line_bytes.clear();
        let read = source
            .read_until(b'\n', &mut line_bytes)
            .map_err(|error| io_error(path, &error))?;
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
            if control.cancelled.load(Ordering::Relaxed) {
                return Err(cancelled_error(path));
            }
        }
    }
    control.bytes_done.store(byte_offset, Ordering::Relaxed);
    Ok(table)
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
