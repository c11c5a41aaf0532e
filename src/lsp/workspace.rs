//! The workspace beyond the open documents: an index of every spec file under the workspace root
//! (found like `markwell check` finds them, bounded), which data files each reads, and the
//! column references across specs that references and rename need. Reading is bounded and
//! contained (regular files inside the root only); everything else is pure.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::data::ResolveOptions;
use crate::spec::model::{ChartSpec, SourceLocation};
use crate::text_range::TextRange;

/// At most this many spec files are indexed (the rest are left out, and the log says so).
pub const MAX_INDEXED_SPECS: usize = 20_000;
/// Spec files larger than this are not indexed (the CLI's limit for specs).
pub const MAX_INDEXED_SPEC_BYTES: u64 = 16 << 20;

/// One spec file on disk.
#[derive(Clone, Debug)]
pub struct IndexedSpec {
    /// Canonical path.
    pub path: PathBuf,
    pub text: Arc<str>,
    /// Canonical paths of the data files its sources resolve to (inside the containment policy).
    pub data_files: Vec<PathBuf>,
}

/// Every spec under the root, by canonical path.
#[derive(Clone, Debug, Default)]
pub struct WorkspaceIndex {
    pub root: Option<PathBuf>,
    pub allow_outside_workspace: bool,
    pub specs: HashMap<PathBuf, IndexedSpec>,
    /// Spec files found but not indexed (over the count cap).
    pub left_out: usize,
}

/// The resolve options for a spec file at `path` (default profile limits: set `limits` to the
/// session's before reading data with them).
pub fn resolve_options(path: &Path, root: Option<&Path>, allow_outside: bool) -> ResolveOptions {
    ResolveOptions {
        limits: crate::data::ProfileLimits::default(),
        spec_dir: path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from("/")),
        workspace_root: root.map(Path::to_path_buf),
        allow_outside_workspace: allow_outside,
    }
}

/// The data files `spec` reads, resolved (paths the policy refuses are left out).
pub fn data_files_of(spec: &ChartSpec, resolve: &ResolveOptions) -> Vec<PathBuf> {
    let mut files: Vec<PathBuf> = spec
        .source
        .iter()
        .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()))
        .filter_map(|source| match &source.location {
            SourceLocation::Path(path) => {
                crate::data::resolve::resolve_source_path(&path.value, resolve).ok()
            }
            _ => None,
        })
        .collect();
    files.sort();
    files.dedup();
    files
}

impl WorkspaceIndex {
    /// Scan `root` for spec files (hidden folders, `target` and `node_modules` skipped, as
    /// `markwell check` does), reading each within the containment policy and the size cap.
    pub fn scan(root: &Path, allow_outside: bool) -> WorkspaceIndex {
        let mut index = WorkspaceIndex {
            root: Some(root.to_path_buf()),
            allow_outside_workspace: allow_outside,
            ..WorkspaceIndex::default()
        };
        let mut files = Vec::new();
        if crate::fsguard::collect_spec_files(root, &mut files).is_err() {
            return index;
        }
        if files.len() > MAX_INDEXED_SPECS {
            index.left_out = files.len() - MAX_INDEXED_SPECS;
            files.truncate(MAX_INDEXED_SPECS);
        }
        for file in files {
            index.refresh(&file);
        }
        index
    }

    /// Read (again) the spec at `path`, or drop it when it is gone or may not be read.
    pub fn refresh(&mut self, path: &Path) {
        let Some(root) = self.root.clone() else {
            return;
        };
        let containment = crate::fsguard::Containment::new(&root, false);
        let Ok(canonical) = containment.resolve(path) else {
            // gone, or a link out of the workspace: forget any entry under the path as given
            self.specs.remove(path);
            return;
        };
        let Ok(bytes) = crate::fsguard::read_bounded(&canonical, MAX_INDEXED_SPEC_BYTES) else {
            self.specs.remove(&canonical);
            return;
        };
        let text: Arc<str> = String::from_utf8_lossy(&bytes).into();
        let parsed = crate::analysis::parse_document(&text);
        let resolve = resolve_options(&canonical, Some(&root), self.allow_outside_workspace);
        let data_files = data_files_of(&parsed.spec, &resolve);
        self.specs.insert(
            canonical.clone(),
            IndexedSpec {
                path: canonical,
                text,
                data_files,
            },
        );
    }

    pub fn remove(&mut self, path: &Path) {
        self.specs.remove(path);
        if let Ok(canonical) = path.canonicalize() {
            self.specs.remove(&canonical);
        }
    }

    /// Specs that read `data_file` (canonical), sorted by path.
    pub fn specs_reading(&self, data_file: &Path) -> Vec<&IndexedSpec> {
        let mut found: Vec<&IndexedSpec> = self
            .specs
            .values()
            .filter(|spec| spec.data_files.iter().any(|file| file == data_file))
            .collect();
        found.sort_by(|a, b| a.path.cmp(&b.path));
        found
    }
}

/// The ranges in `spec` (its text) where `column` of `data_file` is named: bindings,
/// `emphasis`, `panels.by` and declared columns whose source resolves to `data_file`. The
/// ranges are those of the JSON strings, quotes included.
pub fn column_ranges(
    spec: &ChartSpec,
    resolve: &ResolveOptions,
    data_file: &Path,
    column: &str,
) -> Vec<TextRange> {
    let mut resolved: HashMap<String, Option<PathBuf>> = HashMap::new();
    let mut ranges = Vec::new();
    for reference in super::features::column_references(spec) {
        if reference.name != column {
            continue;
        }
        let Some(source) = reference.source else {
            continue;
        };
        let SourceLocation::Path(path) = &source.location else {
            continue;
        };
        let target = resolved.entry(path.value.clone()).or_insert_with(|| {
            crate::data::resolve::resolve_source_path(&path.value, resolve).ok()
        });
        if target.as_deref() == Some(data_file) {
            ranges.push(reference.range);
        }
    }
    ranges.sort_by_key(|range| range.start);
    ranges.dedup();
    ranges
}

/// A header cell of a delimited data file's first record: its name and byte range (quotes
/// included).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct HeaderCell {
    pub name: String,
    pub range: TextRange,
}

/// The cells of the first line of a CSV/TSV text (RFC 4180 quoting; a quoted cell may not span
/// lines here, which a header never does in practice).
pub fn header_cells(text: &str, delimiter: u8) -> Vec<HeaderCell> {
    let bytes = text.as_bytes();
    let line_end = memchr::memchr2(b'\n', b'\r', bytes).unwrap_or(bytes.len());
    let mut cells = Vec::new();
    let mut start = 0usize;
    // a byte-order mark is not part of the first name
    if text.starts_with('\u{feff}') {
        start = 3;
    }
    while start <= line_end {
        let (end, name) = if bytes.get(start) == Some(&b'"') {
            let mut position = start + 1;
            let mut name = Vec::new();
            loop {
                match bytes.get(position) {
                    Some(b'"') if bytes.get(position + 1) == Some(&b'"') => {
                        name.push(b'"');
                        position += 2;
                    }
                    Some(b'"') => {
                        position += 1;
                        break;
                    }
                    Some(&byte) if position < line_end => {
                        name.push(byte);
                        position += 1;
                    }
                    _ => break,
                }
            }
            let end = memchr::memchr(delimiter, &bytes[position.min(line_end)..line_end])
                .map_or(line_end, |at| position.min(line_end) + at);
            (end, String::from_utf8_lossy(&name).into_owned())
        } else {
            let end = memchr::memchr(delimiter, &bytes[start..line_end])
                .map_or(line_end, |at| start + at);
            (
                end,
                String::from_utf8_lossy(&bytes[start..end]).into_owned(),
            )
        };
        cells.push(HeaderCell {
            name,
            range: TextRange::new(start, end),
        });
        if end >= line_end {
            break;
        }
        start = end + 1;
    }
    cells
}

/// The delimiter of a delimited data file by its name (`.tsv` tab, else comma), or `None` for
/// files that are not delimited text.
pub fn delimiter_of(path: &Path) -> Option<u8> {
    let name = path.file_name()?.to_string_lossy().to_ascii_lowercase();
    if name.ends_with(".tsv") {
        Some(b'\t')
    } else if name.ends_with(".csv") {
        Some(b',')
    } else {
        None
    }
}

/// A header cell's text after renaming it to `name` (quoted when it must be, RFC 4180).
pub fn header_cell_text(name: &str, delimiter: u8) -> String {
    let needs_quotes = name
        .bytes()
        .any(|byte| byte == delimiter || byte == b'"' || byte == b'\n' || byte == b'\r');
    if needs_quotes {
        format!("\"{}\"", name.replace('"', "\"\""))
    } else {
        name.to_string()
    }
}

/// A JSON string literal for `name` (for renaming a column in a spec).
pub fn json_string(name: &str) -> String {
    serde_json::to_string(name).unwrap_or_else(|_| format!("\"{name}\""))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_cells_with_quotes_delimiters_and_a_byte_order_mark() {
        let text = "\u{feff}variety,\"crates, packed\",\"the \"\"best\"\"\"\r\nGala,3,x\n";
        let cells = header_cells(text, b',');
        let names: Vec<&str> = cells.iter().map(|cell| cell.name.as_str()).collect();
        assert_eq!(names, ["variety", "crates, packed", "the \"best\""]);
        assert_eq!(&text[cells[0].range.start..cells[0].range.end], "variety");
        assert_eq!(
            &text[cells[1].range.start..cells[1].range.end],
            "\"crates, packed\""
        );
        assert_eq!(header_cells("a\tb", b'\t').len(), 2);
        assert_eq!(
            header_cell_text("crates, packed", b','),
            "\"crates, packed\""
        );
        assert_eq!(header_cell_text("crates", b','), "crates");
    }
}
