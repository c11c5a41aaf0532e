//! From `source.path` as written to a canonical file path: relative to the spec's folder,
//! symlinks resolved, kept inside the workspace unless allowed, never a network address.
//! Hostile input (NUL bytes, absurd lengths) is an error, never a panic.

use std::path::PathBuf;

use super::{DataError, DataErrorKind, ResolveOptions};
use crate::fsguard::{is_pseudo_file, lexically_normal, non_regular_kind, Containment, Refusal};

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
    // one policy for every front end (see `fsguard`): the root is the workspace folder, else
    // the spec's folder; symlinks and `..` are resolved before the check
    let root = options
        .workspace_root
        .clone()
        .unwrap_or_else(|| options.spec_dir.clone());
    let containment = Containment::new(&root, options.allow_outside_workspace);
    if containment.root.parent().is_none() && !options.allow_outside_workspace {
        // no workspace folder and no folder of the spec: `/` is never a workspace by default
        return Err(path_error(
            DataErrorKind::OutsideWorkspace,
            format!(
                "`{written}` is not read: there is no workspace folder (open the spec's folder as the workspace, or allow it with `allow-outside-workspace`)"
            ),
            None,
        ));
    }
    let canonical = match containment.resolve(&joined) {
        Ok(canonical) => canonical,
        Err(Refusal::Outside) => {
            // the message names the path as written and the root, never what is outside
            return Err(path_error(
                DataErrorKind::OutsideWorkspace,
                format!(
                    "`{written}` is outside the workspace {}; data is read only inside it. Allow it with `allow-outside-workspace = true` under `[data]` in markwell.toml (or `--allow-outside-workspace`)",
                    containment.root.display()
                ),
                None,
            ));
        }
        Err(Refusal::NotFound) => {
            return Err(path_error(
                DataErrorKind::NotFound,
                format!(
                    "no file `{written}` (looked for {})",
                    lexically_normal(&joined).display()
                ),
                // inside the workspace: kept so that creating the file re-analyses the spec
                Some(lexically_normal(&joined)),
            ));
        }
        Err(refusal) => return Err(refusal_error(written, refusal, None)),
    };
    if let Ok(metadata) = std::fs::metadata(&canonical) {
        if metadata.is_dir() {
            return Err(path_error(
                DataErrorKind::IsDirectory,
                format!("`{written}` is a folder, not a data file"),
                Some(canonical),
            ));
        }
        if let Some(kind) = non_regular_kind(&metadata) {
            return Err(refusal_error(
                written,
                Refusal::NotRegular(kind),
                Some(canonical),
            ));
        }
    }
    if is_pseudo_file(&canonical) {
        return Err(refusal_error(
            written,
            Refusal::NotRegular("a system pseudo-file (/proc, /sys, /dev)"),
            Some(canonical),
        ));
    }
    Ok(canonical)
}

/// A `DataError` for a file the policy refused (by the kind of refusal).
pub fn refusal_error(written: &str, refusal: Refusal, path: Option<PathBuf>) -> DataError {
    let kind = match &refusal {
        Refusal::NotFound => DataErrorKind::NotFound,
        Refusal::PermissionDenied => DataErrorKind::PermissionDenied,
        Refusal::IsDirectory => DataErrorKind::IsDirectory,
        Refusal::NotRegular(_) => DataErrorKind::NotRegular,
        Refusal::TooLarge { .. } => DataErrorKind::TooLarge,
        Refusal::Outside => DataErrorKind::OutsideWorkspace,
        Refusal::Io(_) => DataErrorKind::Io,
    };
    path_error(kind, format!("`{written}` {}", refusal.describe()), path)
}
