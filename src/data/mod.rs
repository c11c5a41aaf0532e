//! Layer 3a: resolving and profiling the data a spec reads (CSV, TSV, JSON, NDJSON, inline rows).
//! The contract types below are used by the analysis and the front ends; the readers and the
//! profiler fill them. PLACEHOLDER implementation: the data issue replaces the bodies.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::spec::model::{AttributeKind, ChartSpec, Source, SourceLocation, ZeroMeaning};
use crate::text_range::TextRange;

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
    /// Equal-width bins from `min` to `max`.
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
    /// Empty, `NA`, `null`, ... cells.
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
    pub format: crate::spec::model::DataFormat,
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

/// Where the spec lives and what it may read.
#[derive(Clone, Debug, Default)]
pub struct ResolveOptions {
    /// Folder of the spec file (relative paths resolve against it).
    pub spec_dir: PathBuf,
    /// Paths that leave this root (after resolving symlinks) are refused.
    pub workspace_root: Option<PathBuf>,
    pub allow_outside_workspace: bool,
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

/// Loads profiles, caching them by path plus size and modification time.
#[derive(Debug, Default)]
pub struct ProfileCache {}

impl ProfileCache {
    pub fn new() -> ProfileCache {
        ProfileCache {}
    }

    /// Resolve and profile every source of `spec`. PLACEHOLDER: only checks that files exist.
    pub fn load_for_spec(&self, spec: &ChartSpec, options: &ResolveOptions) -> DataContext {
        let mut context = DataContext::default();
        let sources = spec
            .source
            .iter()
            .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()));
        for source in sources {
            if let SourceLocation::Path(path) = &source.location {
                let full = options.spec_dir.join(&path.value);
                let data = if full.is_file() {
                    Err(placeholder_error(&full))
                } else {
                    Err(DataError {
                        kind: DataErrorKind::NotFound,
                        message: format!("no file `{}`", path.value),
                        path: Some(full.clone()),
                        line: None,
                        byte_offset: None,
                    })
                };
                context
                    .entries
                    .push((SourceKey::Path(path.value.clone()), data));
            }
        }
        context
    }

    /// Forget the cached profile of `path` (the file changed on disk).
    pub fn invalidate(&self, path: &Path) {
        let _ = path;
    }
}

fn placeholder_error(path: &Path) -> DataError {
    DataError {
        kind: DataErrorKind::Io,
        message: "profiling is not available yet".to_string(),
        path: Some(path.to_path_buf()),
        line: None,
        byte_offset: None,
    }
}
