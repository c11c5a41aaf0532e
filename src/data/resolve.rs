//! From `source.path` as written to a canonical file path: relative to the spec's folder,
//! symlinks resolved, kept inside the workspace unless allowed, never a network address.
//! Hostile input (NUL bytes, absurd lengths) is an error, never a panic.

use std::path::PathBuf;

use super::{io_error, DataError, DataErrorKind, ResolveOptions};

/// Longer paths are refused before touching the file system (Linux's PATH_MAX is 4096, from
/// memory).
pub const MAX_PATH_BYTES: usize = 4096;

fn path_error(kind: DataErrorKind, message: String, path: Option<PathBuf>) -> DataError {
    DataError {
        kind,
        message,
        path,
        line: None,
        byte_offset: None,
    }
}

/// Whether `written` looks like a URL (`scheme://...`, or `data:`), which markwell never fetches.
pub fn looks_like_url(written: &str) -> bool {
    if let Some((scheme, _)) = written.split_once("://") {
        return !scheme.is_empty()
            && scheme
                .chars()
                .all(|character| character.is_ascii_alphanumeric() || "+-.".contains(character));
    }
    written.starts_with("data:")
}

/// Resolve `written` (a `source.path`) to the canonical path of an existing file.
pub fn resolve_source_path(written: &str, options: &ResolveOptions) -> Result<PathBuf, DataError> {
    if written.trim().is_empty() {
        return Err(path_error(
            DataErrorKind::BadPath,
            "the data path is empty".to_string(),
            None,
        ));
    }
    if written.contains('\0') {
        return Err(path_error(
            DataErrorKind::BadPath,
            "the data path contains a NUL character".to_string(),
            None,
        ));
    }
    if written.len() > MAX_PATH_BYTES {
        return Err(path_error(
            DataErrorKind::BadPath,
            format!(
                "the data path is {} bytes long; paths longer than {MAX_PATH_BYTES} bytes are refused",
                written.len()
            ),
            None,
        ));
    }
    if looks_like_url(written) {
        return Err(path_error(
            DataErrorKind::Remote,
            format!(
                "`{written}` is a web address; markwell reads local files only and never fetches data over the network (download it and point `path` at the copy)"
            ),
            None,
        ));
    }
    let joined = options.spec_dir.join(written);
    let canonical = match std::fs::canonicalize(&joined) {
        Ok(canonical) => canonical,
        Err(error) => {
            let mut data_error = io_error(Some(&joined), &error);
            if data_error.kind == DataErrorKind::NotFound {
                data_error.message =
                    format!("no file `{written}` (looked for {})", joined.display());
            }
            return Err(data_error);
        }
    };
    if let Some(root) = &options.workspace_root {
        if !options.allow_outside_workspace {
            let canonical_root = std::fs::canonicalize(root).unwrap_or_else(|_| root.clone());
            if !canonical.starts_with(&canonical_root) {
                return Err(path_error(
                    DataErrorKind::OutsideWorkspace,
                    format!(
                        "`{written}` resolves to {}, outside the workspace {}; allow it with `allow-outside-workspace = true` under `[data]` in markwell.toml (or `--allow-outside-workspace`)",
                        canonical.display(),
                        canonical_root.display()
                    ),
                    Some(canonical),
                ));
            }
        }
    }
    if canonical.is_dir() {
        return Err(path_error(
            DataErrorKind::IsDirectory,
            format!("`{written}` is a folder, not a data file"),
            Some(canonical),
        ));
    }
    Ok(canonical)
}
