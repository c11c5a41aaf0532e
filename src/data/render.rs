//! Rendering a [`DataProfile`] for `markwell profile`: a text table (one row per column, then a
//! small bar histogram per numeric column) and a JSON value with stable keys in our own words.

use std::io::{self, Write};

use serde::ser::{SerializeMap, Serializer};
use serde::Serialize;
use serde_json::{json, Map, Value};

use super::{ColumnProfile, DataProfile, DistinctCount};
use crate::spec::model::AttributeKind;

const BAR_WIDTH: usize = 30;
const EIGHTHS: [char; 8] = ['▏', '▎', '▍', '▌', '▋', '▊', '▉', '█'];

/// A number in at most 6 significant digits, without trailing zeros.
pub fn format_short_number(value: f64) -> String {
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs();
    if !(1e-4..1e12).contains(&magnitude) {
        return format!("{value:.3e}");
    }
    let decimals = (5 - magnitude.log10().floor() as i32).clamp(0, 10) as usize;
    let text = format!("{value:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

fn format_distinct(distinct: &DistinctCount) -> String {
    if distinct.exact {
        distinct.value.to_string()
    } else {
        format!(
            "~{} ±{:.1}%",
            distinct.value,
            distinct.relative_error * 100.0
        )
    }
}

/// The columns `text` takes in a terminal: East Asian wide characters and emoji take two,
/// combining marks none (Unicode Standard Annex #11, as the `unicode-width` crate implements
/// it). Tables are aligned by this width, not by the count of characters.
pub fn terminal_width(text: &str) -> usize {
    unicode_width::UnicodeWidthStr::width(text)
}

/// `text` cut to at most `limit` terminal columns, with `…` (one column) at the cut.
fn shorten(text: &str, limit: usize) -> String {
    if terminal_width(text) <= limit {
        return text.to_string();
    }
    let room = limit.saturating_sub(1);
    let mut kept = String::new();
    let mut width = 0;
    for character in text.chars() {
        let next = unicode_width::UnicodeWidthChar::width(character).unwrap_or(0);
        if width + next > room {
            break;
        }
        width += next;
        kept.push(character);
    }
    format!("{kept}…")
}

fn summary_cell(column: &ColumnProfile) -> String {
    match column.kind {
        AttributeKind::Quantitative => column.numeric.as_ref().map_or(String::new(), |numeric| {
            format!("mean {}", format_short_number(numeric.mean))
        }),
        _ => column
            .top_values
            .iter()
            .take(3)
            .map(|(value, count)| format!("{} ({count})", shorten(value, 16)))
            .collect::<Vec<_>>()
            .join(", "),
    }
}

fn min_max_cells(column: &ColumnProfile) -> (String, String) {
    if column.kind == AttributeKind::Time {
        if let Some((earliest, latest)) = &column.time_range {
            return (earliest.clone(), latest.clone());
        }
    }
    match &column.numeric {
        Some(numeric) if column.kind == AttributeKind::Quantitative => (
            format_short_number(numeric.min),
            format_short_number(numeric.max),
        ),
        _ => (String::new(), String::new()),
    }
}

fn bar(count: u64, largest: u64) -> String {
    if largest == 0 || count == 0 {
        return String::new();
    }
    let eighths = (count as f64 / largest as f64 * (BAR_WIDTH * 8) as f64).round() as usize;
    let eighths = eighths.max(1);
    let mut out = "█".repeat(eighths / 8);
    if eighths % 8 > 0 {
        out.push(EIGHTHS[eighths % 8 - 1]);
    }
    out
}

/// The profile as a readable table followed by histograms, in one string (see
/// [`write_profile_text`], which writes the same text piece by piece).
///
/// Text from the data (names, values) has its control characters escaped (see
/// [`escape_control_characters`]): a data file must not drive the terminal.
pub fn render_profile_text(profile: &DataProfile) -> String {
    let mut bytes = Vec::new();
    // writing into a `Vec` cannot fail
    let _ = write_profile_text(profile, &mut bytes);
    String::from_utf8_lossy(&bytes).into_owned()
}

/// Control characters other than line break and tab written visibly (`\x1b`, `\u{9b}`), so
/// that text from a data file shown in a terminal cannot move the cursor, set the title or the
/// clipboard (OSC 52), or hide what follows.
pub fn escape_control_characters(text: &str) -> std::borrow::Cow<'_, str> {
    let is_unsafe = |character: char| {
        (character.is_control() && character != '\n' && character != '\t')
            // bidirectional overrides and isolates reorder what the reader sees
            || matches!(character, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
    };
    if !text.chars().any(is_unsafe) {
        return std::borrow::Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    for character in text.chars() {
        if is_unsafe(character) {
            let code = character as u32;
            if code < 0x80 {
                out.push_str(&format!("\\x{code:02x}"));
            } else {
                out.push_str(&format!("\\u{{{code:x}}}"));
            }
        } else {
            out.push(character);
        }
    }
    std::borrow::Cow::Owned(out)
}

/// `text` written with its control characters escaped. Escaping goes character by character,
/// so escaping each piece gives the same bytes as escaping the whole text at once.
fn write_escaped(out: &mut dyn Write, text: &str) -> io::Result<()> {
    out.write_all(escape_control_characters(text).as_bytes())
}

const TABLE_HEADINGS: [&str; 8] = [
    "column",
    "kind",
    "rows",
    "missing",
    "distinct",
    "min",
    "max",
    "mean / top values",
];

/// `text` as one table cell: control characters escaped as everywhere, and line breaks and
/// tabs too (they would break the row), so that the width measured is the width shown.
fn cell_text(text: &str) -> String {
    let escaped = escape_control_characters(text);
    if !escaped.contains(['\n', '\t']) {
        return escaped.into_owned();
    }
    escaped.replace('\n', "\\x0a").replace('\t', "\\x09")
}

/// The cells of one column's row of the table, escaped (see [`cell_text`]).
fn table_cells(column: &ColumnProfile) -> [String; 8] {
    table_cells_raw(column).map(|cell| cell_text(&cell))
}

fn table_cells_raw(column: &ColumnProfile) -> [String; 8] {
    let (min, max) = min_max_cells(column);
    [
        shorten(&column.name, 28),
        column.kind.as_str().to_string(),
        column.rows.to_string(),
        column.missing.to_string(),
        format_distinct(&column.distinct),
        min,
        max,
        summary_cell(column),
    ]
}

/// One line of the table: cells padded to `widths` (counts, missing and distinct right-aligned),
/// two spaces apart, trailing spaces dropped, before escaping.
fn table_line(cells: &[&str], widths: &[usize]) -> String {
    let mut text = String::new();
    for (index, (cell, width)) in cells.iter().zip(widths.iter()).enumerate() {
        let padding = width.saturating_sub(terminal_width(cell));
        let right_aligned = (2..=4).contains(&index);
        if right_aligned {
            text.push_str(&" ".repeat(padding));
            text.push_str(cell);
        } else {
            text.push_str(cell);
            if index + 1 < cells.len() {
                text.push_str(&" ".repeat(padding));
            }
        }
        if index + 1 < cells.len() {
            text.push_str("  ");
        }
    }
    text.trim_end().to_string() + "\n"
}

/// The profile as a readable table followed by histograms, written to `out` line by line (the
/// same text as [`render_profile_text`], with control characters escaped).
///
/// Memory: one line at a time, never the whole text. The column widths need every row, so the
/// cells are computed twice: once to measure them, once to write them. `out` should be
/// buffered: this makes many small writes.
pub fn write_profile_text(profile: &DataProfile, out: &mut dyn Write) -> io::Result<()> {
    let mut widths: Vec<usize> = TABLE_HEADINGS
        .iter()
        .map(|heading| terminal_width(heading))
        .collect();
    for column in &profile.columns {
        for (width, cell) in widths.iter_mut().zip(table_cells(column).iter()) {
            *width = (*width).max(terminal_width(cell));
        }
    }
    let source = profile.path.as_ref().map_or_else(
        || "inline rows".to_string(),
        |path| path.display().to_string(),
    );
    write_escaped(
        out,
        &format!(
            "{source}: {} rows, {} columns ({}){}\n\n",
            profile.rows,
            profile.columns.len(),
            profile.format.as_str(),
            if profile.is_sample {
                ", from a sample of the first rows"
            } else {
                ""
            }
        ),
    )?;
    write_escaped(out, &table_line(&TABLE_HEADINGS, &widths))?;
    let dashes: Vec<String> = widths.iter().map(|width| "-".repeat(*width)).collect();
    let dashes: Vec<&str> = dashes.iter().map(String::as_str).collect();
    write_escaped(out, &table_line(&dashes, &widths))?;
    for column in &profile.columns {
        let cells = table_cells(column);
        let cells: Vec<&str> = cells.iter().map(String::as_str).collect();
        write_escaped(out, &table_line(&cells, &widths))?;
    }
    for column in &profile.columns {
        let Some(numeric) = &column.numeric else {
            continue;
        };
        if column.kind != AttributeKind::Quantitative || numeric.histogram.is_empty() {
            continue;
        }
        write_escaped(out, &format!("\n{}\n", cell_text(&column.name)))?;
        let bins = numeric.histogram.len();
        let width = (numeric.max - numeric.min) / bins as f64;
        let largest = numeric.histogram.iter().copied().max().unwrap_or(0);
        // one bin per integer (see `profile::histogram_bin_count`): label each by its value
        let one_per_integer =
            numeric.min.fract() == 0.0 && (numeric.max - numeric.min + 1.0) == bins as f64;
        let labels: Vec<String> = (0..bins)
            .map(|bin| {
                if one_per_integer {
                    format_short_number(numeric.min + bin as f64)
                } else {
                    format_short_number(numeric.min + width * bin as f64)
                }
            })
            .collect();
        let label_width = labels
            .iter()
            .map(|label| label.chars().count())
            .max()
            .unwrap_or(0);
        for (label, &count) in labels.iter().zip(numeric.histogram.iter()) {
            write_escaped(
                out,
                &format!(
                    "  {label:>label_width$} │{:<bar_width$} {count}\n",
                    bar(count, largest),
                    bar_width = BAR_WIDTH
                ),
            )?;
        }
    }
    if !profile.problems.is_empty() {
        write_escaped(out, "\nproblems\n")?;
        for problem in &profile.problems {
            match problem.line {
                Some(line) => {
                    write_escaped(out, &format!("  line {}: {}\n", line + 1, problem.message))?
                }
                None => write_escaped(out, &format!("  {}\n", problem.message))?,
            }
        }
    }
    Ok(())
}

fn value_counts(values: &[(String, u64)]) -> Value {
    Value::Array(
        values
            .iter()
            .map(|(value, count)| json!({ "value": value, "count": count }))
            .collect(),
    )
}

fn column_json(column: &ColumnProfile) -> Value {
    json!({
        "name": column.name,
        "position": column.index,
        "kind": column.kind.as_str(),
        "why": column.kind_evidence,
        "zero": column.zero.map(|zero| zero.as_str()),
        "rows": column.rows,
        "missing": column.missing,
        "distinct": {
            "count": column.distinct.value,
            "exact": column.distinct.exact,
            "relative_error": column.distinct.relative_error,
        },
        "numbers": column.numeric.as_ref().map(|numeric| json!({
            "count": numeric.count,
            "min": numeric.min,
            "max": numeric.max,
            "mean": numeric.mean,
            "histogram": numeric.histogram,
        })),
        "number_share": column.numeric_share,
        "non_number_examples": column.non_numeric_examples,
        "most_common": value_counts(&column.top_values),
        "every_value": column.all_values.as_deref().map(value_counts),
        "examples": column.samples,
        "time_span": column.time_range.as_ref().map(|(earliest, latest)| json!({
            "earliest": earliest,
            "latest": latest,
        })),
        "header_bytes": column.header_range.map(|(start, end)| json!([start, end])),
    })
}

/// The keys of the profile's JSON with `columns` left as a placeholder (`null`) in its place, so
/// that the whole value ([`render_profile_json`]) and the streamed form ([`write_profile_json`])
/// share every key, value and the order of the keys.
fn profile_json_without_columns(profile: &DataProfile) -> Map<String, Value> {
    let value = json!({
        "file": profile.path.as_ref().map(|path| path.display().to_string()),
        "format": profile.format.as_str(),
        "rows": profile.rows,
        "sampled": profile.is_sample,
        "columns": Value::Null,
        "problems": profile.problems.iter().map(|problem| json!({
            "message": problem.message,
            "line": problem.line,
            "byte_offset": problem.byte_offset,
        })).collect::<Vec<_>>(),
    });
    match value {
        Value::Object(map) => map,
        _ => Map::new(),
    }
}

/// The profile as one JSON value (keys are ours and stable). It holds the whole output (about
/// 10 KB a column): to print a profile use [`write_profile_json`], which writes the same JSON
/// one column at a time.
pub fn render_profile_json(profile: &DataProfile) -> Value {
    let mut map = profile_json_without_columns(profile);
    if let Some(columns) = map.get_mut("columns") {
        *columns = Value::Array(profile.columns.iter().map(column_json).collect());
    }
    Value::Object(map)
}

/// The profile's JSON as serde sees it, with the columns made one at a time while they are
/// written.
struct StreamedProfileJson<'a> {
    keys: Map<String, Value>,
    columns: &'a [ColumnProfile],
}

struct StreamedColumnsJson<'a>(&'a [ColumnProfile]);

impl Serialize for StreamedColumnsJson<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(self.0.iter().map(column_json))
    }
}

impl Serialize for StreamedProfileJson<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.keys.len()))?;
        for (key, value) in &self.keys {
            if key == "columns" {
                map.serialize_entry(key, &StreamedColumnsJson(self.columns))?;
            } else {
                map.serialize_entry(key, value)?;
            }
        }
        map.end()
    }
}

/// A writer that puts `indent` after every line break, so that pretty JSON written at the top
/// level reads as if nested that deep. Sound because pretty JSON breaks lines only between
/// tokens: a line break inside a string is always escaped.
struct IndentAfterLineBreaks<'a> {
    inner: &'a mut dyn Write,
    indent: String,
}

impl Write for IndentAfterLineBreaks<'_> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        let mut rest = buf;
        while let Some(position) = rest.iter().position(|&byte| byte == b'\n') {
            self.inner.write_all(&rest[..=position])?;
            self.inner.write_all(self.indent.as_bytes())?;
            rest = &rest[position + 1..];
        }
        self.inner.write_all(rest)?;
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush()
    }
}

/// The profile as pretty JSON (two-space indent), written to `out` one column at a time: the
/// same bytes as `serde_json::to_string_pretty(&render_profile_json(profile))`, as they read
/// nested `depth` levels deep in pretty JSON (every line after the first indented by two spaces
/// per level), without a final line break.
///
/// Memory: one column's JSON value at a time (about 10 KB), besides the profile. `out` should
/// be buffered: serde writes many small pieces. Write errors are returned as they are.
pub fn write_profile_json(
    profile: &DataProfile,
    depth: usize,
    out: &mut dyn Write,
) -> io::Result<()> {
    let streamed = StreamedProfileJson {
        keys: profile_json_without_columns(profile),
        columns: &profile.columns,
    };
    let written = if depth == 0 {
        serde_json::to_writer_pretty(out, &streamed)
    } else {
        let mut indented = IndentAfterLineBreaks {
            inner: out,
            indent: "  ".repeat(depth),
        };
        serde_json::to_writer_pretty(&mut indented, &streamed)
    };
    written.map_err(io::Error::from)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_numbers_drop_trailing_zeros() {
        assert_eq!(format_short_number(5.843333333), "5.84333");
        assert_eq!(format_short_number(2007.0), "2007");
        assert_eq!(format_short_number(0.1), "0.1");
        assert_eq!(format_short_number(-3.5), "-3.5");
    }
}
