//! Layer 3a: resolving and profiling the data a spec reads (CSV, TSV, JSON, NDJSON, inline rows).
//! The contract types below are used by the analysis and the front ends; the readers and the
//! profiler fill them.
//!
//! - [`resolve`]: `source.path` → canonical file path (workspace check, no network);
//! - [`csv_reader`], [`json_reader`]: streaming readers;
//! - [`infer`]: cell-level decisions (missing tokens, numbers, ISO 8601, kinds, zero);
//! - [`profile`]: per-column accumulators that merge across threads;
//! - [`sketch`]: HyperLogLog, compensated sums, streaming histograms;
//! - [`cache`]: [`ProfileCache`], sampled and full profiles keyed by path, size and mtime;
//! - [`render`]: the text table and JSON of `markwell profile`;
//! - [`rows`]: [`rows::RowSource`] and [`rows::open_rows`], the rows the evaluation reads.

pub mod cache;
pub mod csv_reader;
pub mod infer;
pub mod json_reader;
pub mod profile;
pub mod render;
pub mod resolve;
pub mod rows;
pub mod sketch;

use std::fmt;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::spec::model::{AttributeKind, DataFormat, Source, SourceLocation, ZeroMeaning};
use crate::text_range::TextRange;

pub use cache::ProfileCache;

/// Distinct values: exact up to a cap, then an estimate with its stated relative error.
#[derive(Clone, Debug, PartialEq)]
pub struct DistinctCount {
    pub value: u64,
    pub exact: bool,
    /// Standard error of the estimate relative to the value (0 when exact).
    pub relative_error: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct NumericSummary {
    /// Values that parsed as numbers.
    pub count: u64,
    pub min: f64,
    pub max: f64,
    pub mean: f64,
    /// Equal-width bins from `min` to `max`: ten, or one per integer when all values are
    /// integers spanning fewer than ten (see `profile::histogram_bin_count`).
    pub histogram: Vec<u64>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct ColumnProfile {
    pub name: String,
    /// 0-based position in the header.
    pub index: usize,
    pub kind: AttributeKind,
    /// Why that kind, in words ("all 150 values are numbers", ...).
    pub kind_evidence: String,
    /// Whether zero is meaningful, when that can be told (units, year-like values).
    pub zero: Option<ZeroMeaning>,
    pub rows: u64,
    /// Empty, `NA`, `null`, ... cells (the list is in `infer`), and cells a row lacks.
    pub missing: u64,
    pub distinct: DistinctCount,
    /// Summary of the values that are numbers (also for non-numeric columns with some numbers).
    pub numeric: Option<NumericSummary>,
    /// Share of non-missing values that parse as numbers (0..=1).
    pub numeric_share: f64,
    /// A few non-missing values that are not numbers.
    pub non_numeric_examples: Vec<String>,
    /// Most frequent values with counts, most frequent first (at most 10).
    pub top_values: Vec<(String, u64)>,
    /// Every distinct value with its count, when there are few enough (at most 256).
    pub all_values: Option<Vec<(String, u64)>>,
    /// A few sample values as written.
    pub samples: Vec<String>,
    /// Earliest and latest ISO 8601 value for time columns.
    pub time_range: Option<(String, String)>,
    /// Byte range of the header cell (or first key) in the data file, for go-to-definition.
    pub header_range: Option<(u64, u64)>,
}

/// A non-fatal problem in a data file (ragged row, ...).
#[derive(Clone, Debug, PartialEq)]
pub struct DataProblem {
    pub message: String,
    /// 0-based line in the data file.
    pub line: Option<usize>,
    pub byte_offset: Option<u64>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct DataProfile {
    /// Canonical path of the file; `None` for inline rows.
    pub path: Option<PathBuf>,
    pub format: DataFormat,
    pub rows: u64,
    pub columns: Vec<ColumnProfile>,
    /// True while this is a first profile from a bounded head of the file.
    pub is_sample: bool,
    pub problems: Vec<DataProblem>,
}

impl DataProfile {
    pub fn column(&self, name: &str) -> Option<&ColumnProfile> {
        self.columns.iter().find(|column| column.name == name)
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DataErrorKind {
    NotFound,
    PermissionDenied,
    IsDirectory,
    OutsideWorkspace,
    Binary,
    InvalidUtf8,
    Empty,
    HeaderOnly,
    BadHeader,
    Malformed,
    ChangedDuringScan,
    Io,
    /// A path that cannot name a file (NUL byte, empty, absurdly long).
    BadPath,
    /// A web address: data is never fetched over the network.
    Remote,
    /// The caller cancelled a full scan.
    Cancelled,
    /// A FIFO, socket, device or system pseudo-file: never opened for reading.
    NotRegular,
    /// Over a stated size or memory limit.
    TooLarge,
    /// The profile's time budget ran out.
    TimedOut,
    /// A sampled head held no whole row (a line longer than the sample): the full profile
    /// decides; until then nothing is said about the rows.
    SampleIncomplete,
}

impl DataErrorKind {
    /// A stable word for JSON output and tests.
    pub fn as_str(self) -> &'static str {
        match self {
            DataErrorKind::NotFound => "not-found",
            DataErrorKind::PermissionDenied => "permission-denied",
            DataErrorKind::IsDirectory => "is-directory",
            DataErrorKind::OutsideWorkspace => "outside-workspace",
            DataErrorKind::Binary => "binary",
            DataErrorKind::InvalidUtf8 => "invalid-utf8",
            DataErrorKind::Empty => "empty",
            DataErrorKind::HeaderOnly => "header-only",
            DataErrorKind::BadHeader => "bad-header",
            DataErrorKind::Malformed => "malformed",
            DataErrorKind::ChangedDuringScan => "changed-during-scan",
            DataErrorKind::Io => "io",
            DataErrorKind::BadPath => "bad-path",
            DataErrorKind::Remote => "remote",
            DataErrorKind::Cancelled => "cancelled",
            DataErrorKind::NotRegular => "not-regular",
            DataErrorKind::TooLarge => "too-large",
            DataErrorKind::TimedOut => "timed-out",
            DataErrorKind::SampleIncomplete => "sample-incomplete",
        }
    }
}

/// Why a source could not be profiled.
#[derive(Clone, Debug, PartialEq)]
pub struct DataError {
    pub kind: DataErrorKind,
    pub message: String,
    pub path: Option<PathBuf>,
    /// 0-based line in the data file, when the error has one.
    pub line: Option<usize>,
    pub byte_offset: Option<u64>,
}

impl fmt::Display for DataError {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        formatter.write_str(&self.message)?;
        if let Some(line) = self.line {
            write!(formatter, " (line {})", line + 1)?;
        }
        Ok(())
    }
}

impl std::error::Error for DataError {}

/// A `DataError` for an IO failure on `path`, by the kind of failure.
pub fn io_error(path: Option<&Path>, error: &std::io::Error) -> DataError {
    let shown = path.map_or_else(
        || "the data".to_string(),
        |path| format!("`{}`", path.display()),
    );
    let (kind, message) = match error.kind() {
        std::io::ErrorKind::NotFound => (DataErrorKind::NotFound, format!("no file {shown}")),
        std::io::ErrorKind::PermissionDenied => (
            DataErrorKind::PermissionDenied,
            format!("no permission to read {shown}"),
        ),
        std::io::ErrorKind::IsADirectory => (
            DataErrorKind::IsDirectory,
            format!("{shown} is a folder, not a data file"),
        ),
        std::io::ErrorKind::InvalidData => (
            DataErrorKind::Malformed,
            format!(
                "a record in {shown} is longer than {} MiB (an unclosed quote?)",
                csv_reader::MAX_RECORD_BYTES >> 20
            ),
        ),
        _ => (
            DataErrorKind::Io,
            format!("could not read {shown}: {error}"),
        ),
    };
    DataError {
        kind,
        message,
        path: path.map(Path::to_path_buf),
        line: None,
        byte_offset: None,
    }
}

/// How to read a file, as the spec's `source` says (`None`: inferred).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct ReadOptions {
    pub format: Option<DataFormat>,
    pub delimiter: Option<char>,
}

impl ReadOptions {
    pub fn for_source(source: &Source) -> ReadOptions {
        ReadOptions {
            format: source.format.as_ref().map(|format| format.value),
            delimiter: source.delimiter.as_ref().map(|delimiter| delimiter.value),
        }
    }
}

/// How much one profile may take: memory and time (`[data]` in `markwell.toml`:
/// `profile-memory-mib`, `profile-seconds`; `--profile-memory-mib` and `--profile-seconds` on
/// the command line).
///
/// The memory budget `B` is shared out so that no shape of data exceeds it:
/// - **records**: one record (a CSV row, an NDJSON line, an element of a JSON array) may be
///   at most `B / 16` bytes (16 MiB by default); a scan has at most two readers, each holding
///   one record and its unescaped copy: at most `B / 4`;
/// - **distinct values**: all columns together `B / 4`, an equal share each; a column whose
///   exact values outgrow its share switches to the HyperLogLog estimate (with fewer registers,
///   and so a larger stated error, when the share is small);
/// - **columns**: at most `B / 2 / COLUMN_FIXED_BYTES` columns (104,857 by default); a wider
///   file is refused with a message saying how to raise the budget.
///
/// `evaluation` is the time budget of evaluating one chart over all of its rows
/// (`evaluate-seconds`, `--evaluate-seconds`): it travels with the profile's budgets because
/// both are the `[data]` settings every front end passes down with the [`ResolveOptions`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ProfileLimits {
    pub memory: crate::budget::MemoryBudget,
    pub time: crate::budget::TimeBudget,
    pub evaluation: crate::budget::TimeBudget,
}

impl Default for ProfileLimits {
    fn default() -> ProfileLimits {
        ProfileLimits {
            memory: crate::budget::MemoryBudget::DEFAULT_PROFILE,
            time: crate::budget::TimeBudget::DEFAULT_PROFILE,
            evaluation: crate::budget::TimeBudget::DEFAULT_EVALUATION,
        }
    }
}

impl ProfileLimits {
    /// No time limits, the default memory budget (for tests and tools).
    pub const UNTIMED: ProfileLimits = ProfileLimits {
        memory: crate::budget::MemoryBudget::DEFAULT_PROFILE,
        time: crate::budget::TimeBudget::UNLIMITED,
        evaluation: crate::budget::TimeBudget::UNLIMITED,
    };

    pub fn record_bytes(&self) -> usize {
        (self.memory.bytes / 16).min(usize::MAX as u64) as usize
    }

    pub fn max_columns(&self) -> usize {
        ((self.memory.bytes / 2) as usize / profile::COLUMN_FIXED_BYTES).max(1)
    }

    /// The table budget of one of `readers` scanning threads.
    pub fn table_budget(&self, readers: usize) -> profile::TableBudget {
        profile::TableBudget {
            distinct_bytes: (self.memory.bytes / 4) as usize / readers.max(1),
            max_columns: self.max_columns(),
        }
    }

    /// How to lift the limits, for messages.
    pub fn how_to_raise(setting: &str) -> String {
        format!("`{setting}` under `[data]` in markwell.toml raises it")
    }
}

/// A record longer than the limits allow.
pub fn record_too_long_error(path: Option<&Path>, limits: &ProfileLimits) -> DataError {
    let shown = path.map_or_else(
        || "the data".to_string(),
        |path| format!("`{}`", path.display()),
    );
    DataError {
        kind: DataErrorKind::TooLarge,
        message: format!(
            "a record (a row or a line) in {shown} is longer than {} MiB, the most one profile reads at once within its memory budget of {} MiB (an unclosed quote?); {}",
            limits.record_bytes() >> 20,
            limits.memory.mebibytes_shown(),
            ProfileLimits::how_to_raise("profile-memory-mib")
        ),
        path: path.map(Path::to_path_buf),
        line: None,
        byte_offset: None,
    }
}

/// A file with more columns than the limits allow.
pub fn too_many_columns_error(
    path: Option<&Path>,
    columns: Option<usize>,
    limits: &ProfileLimits,
) -> DataError {
    let shown = path.map_or_else(
        || "the data".to_string(),
        |path| format!("`{}`", path.display()),
    );
    let count = match columns {
        Some(count) => format!("{count} columns"),
        None => format!("more than {} columns", limits.max_columns()),
    };
    DataError {
        kind: DataErrorKind::TooLarge,
        message: format!(
            "{shown} has {count}; a profile within its memory budget of {} MiB holds at most {} columns; {}",
            limits.memory.mebibytes_shown(),
            limits.max_columns(),
            ProfileLimits::how_to_raise("profile-memory-mib")
        ),
        path: path.map(Path::to_path_buf),
        line: Some(0),
        byte_offset: None,
    }
}

/// The time budget ran out.
pub fn timed_out_error(path: Option<&Path>, limits: &ProfileLimits) -> DataError {
    let shown = path.map_or_else(
        || "the data".to_string(),
        |path| format!("`{}`", path.display()),
    );
    DataError {
        kind: DataErrorKind::TimedOut,
        message: format!(
            "profiling {shown} took longer than its time budget of {} and was stopped; {}",
            limits.time.describe(),
            ProfileLimits::how_to_raise("profile-seconds")
        ),
        path: path.map(Path::to_path_buf),
        line: None,
        byte_offset: None,
    }
}

/// Where the spec lives and what it may read.
#[derive(Clone, Debug, Default)]
pub struct ResolveOptions {
    /// Folder of the spec file (relative paths resolve against it).
    pub spec_dir: PathBuf,
    /// Paths that leave this root (after resolving symlinks) are refused.
    pub workspace_root: Option<PathBuf>,
    pub allow_outside_workspace: bool,
    /// How much one profile may take.
    pub limits: ProfileLimits,
}

#[derive(Clone, Debug, PartialEq)]
pub enum SourceKey {
    /// `source.path` exactly as written.
    Path(String),
    /// Inline rows, by the range of the `rows` array.
    Inline(TextRange),
}

impl SourceKey {
    pub fn for_source(source: &Source) -> Option<SourceKey> {
        match &source.location {
            SourceLocation::Path(path) => Some(SourceKey::Path(path.value.clone())),
            SourceLocation::Rows { range, .. } => Some(SourceKey::Inline(*range)),
            SourceLocation::Missing => None,
        }
    }
}

pub type SourceData = Result<Arc<DataProfile>, DataError>;

/// The profiles of every source a spec reads, as the analysis sees them.
#[derive(Clone, Debug, Default)]
pub struct DataContext {
    pub entries: Vec<(SourceKey, SourceData)>,
}

impl DataContext {
    pub fn for_source(&self, source: &Source) -> Option<&SourceData> {
        let key = SourceKey::for_source(source)?;
        self.entries
            .iter()
            .find(|(entry_key, _)| *entry_key == key)
            .map(|(_, data)| data)
    }
}
