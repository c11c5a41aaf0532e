//! One policy for every file markwell reads on its own (data, `markwell.toml`, spec files found
//! in folders), shared by the CLI and the server:
//!
//! - **containment**: a path is resolved (symlinks and `..`) before it is checked against the
//!   workspace root; the root is the workspace folder, else the spec's folder (never `/` unless
//!   the user says so); leaving it needs an explicit opt-in;
//! - **regular files only**: a file is opened with `O_NONBLOCK` (a FIFO without a writer does
//!   not block the open) and checked with `fstat` on the open handle; FIFOs, sockets, devices
//!   and the kernel's pseudo-files (`/proc`, `/sys`, `/dev`) are refused;
//! - **bounded reads**: whole-file reads state their byte limit before they start and never
//!   read past it, even when the size the file reports is wrong (pseudo-files report 0).
//!
//! Messages about a refused path name the path as written and the workspace, never what lies
//! outside it (whether it exists, where a symlink points) and never any of its content.

use std::fs::{File, Metadata};
use std::io::Read;
use std::path::{Component, Path, PathBuf};

/// Folders of kernel pseudo-files: their entries claim to be regular files of size 0 (or are
/// devices) and may be endless or secret; never read.
const PSEUDO_FILE_ROOTS: [&str; 3] = ["/proc", "/sys", "/dev"];

/// Why a file was not opened or read.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Refusal {
    NotFound,
    PermissionDenied,
    IsDirectory,
    /// A FIFO, socket, device or kernel pseudo-file (the word says which).
    NotRegular(&'static str),
    /// Larger than the limit (the size seen, or `None` when the limit was hit while reading).
    TooLarge {
        limit: u64,
        size: Option<u64>,
    },
    /// Resolves outside the workspace root.
    Outside,
    Io(String),
}

impl Refusal {
    /// A short phrase for messages ("is a FIFO (named pipe), not a regular file", ...), without
    /// the path.
    pub fn describe(&self) -> String {
        match self {
            Refusal::NotFound => "does not exist".to_string(),
            Refusal::PermissionDenied => "cannot be read (permission denied)".to_string(),
            Refusal::IsDirectory => "is a folder, not a file".to_string(),
            Refusal::NotRegular(what) => format!("is {what}, not a regular file; it is not read"),
            Refusal::TooLarge { limit, size } => match size {
                Some(size) => format!(
                    "is {} bytes; files larger than {} are not read",
                    size,
                    format_bytes(*limit)
                ),
                None => format!("is larger than {}; it is not read", format_bytes(*limit)),
            },
            Refusal::Outside => "is outside the workspace".to_string(),
            Refusal::Io(message) => format!("could not be read: {message}"),
        }
    }
}

/// `16 MiB`, `1 MiB`, `512 KiB`, `100 bytes`.
pub fn format_bytes(bytes: u64) -> String {
    if bytes >= 1 << 20 && bytes % (1 << 20) == 0 {
        format!("{} MiB", bytes >> 20)
    } else if bytes >= 1 << 10 && bytes % (1 << 10) == 0 {
        format!("{} KiB", bytes >> 10)
    } else {
        format!("{bytes} bytes")
    }
}

fn refusal_for_io(error: &std::io::Error) -> Refusal {
    match error.kind() {
        std::io::ErrorKind::NotFound => Refusal::NotFound,
        std::io::ErrorKind::PermissionDenied => Refusal::PermissionDenied,
        std::io::ErrorKind::IsADirectory => Refusal::IsDirectory,
        _ => {
            // ELOOP (a symlink loop) has no stable ErrorKind: name it in words
            if error.raw_os_error() == Some(40) {
                Refusal::Io("a loop of symbolic links".to_string())
            } else {
                Refusal::Io(error.to_string())
            }
        }
    }
}

/// What kind of non-regular file `metadata` describes, if it is not a regular file.
pub fn non_regular_kind(metadata: &Metadata) -> Option<&'static str> {
    let file_type = metadata.file_type();
    if file_type.is_file() {
        return None;
    }
    if file_type.is_dir() {
        return Some("a folder");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if file_type.is_fifo() {
            return Some("a FIFO (named pipe)");
        }
        if file_type.is_socket() {
            return Some("a socket");
        }
        if file_type.is_char_device() || file_type.is_block_device() {
            return Some("a device");
        }
    }
    Some("not a regular file")
}

/// Whether `canonical` lies under `/proc`, `/sys` or `/dev`.
pub fn is_pseudo_file(canonical: &Path) -> bool {
    PSEUDO_FILE_ROOTS
        .iter()
        .any(|root| canonical.starts_with(root))
}

/// Open `path` for reading only when it is a regular file: opened without blocking (a FIFO
/// with no writer would block a plain open for ever), then checked on the open handle, so a
/// file swapped after a metadata check is caught too.
pub fn open_regular(path: &Path) -> Result<(File, Metadata), Refusal> {
    let canonical = std::fs::canonicalize(path).map_err(|error| refusal_for_io(&error))?;
    if is_pseudo_file(&canonical) {
        return Err(Refusal::NotRegular(
            "a system pseudo-file (/proc, /sys, /dev)",
        ));
    }
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NONBLOCK);
    }
    let file = options.open(path).map_err(|error| refusal_for_io(&error))?;
    let metadata = file.metadata().map_err(|error| refusal_for_io(&error))?;
    if metadata.is_dir() {
        return Err(Refusal::IsDirectory);
    }
    if let Some(kind) = non_regular_kind(&metadata) {
        return Err(Refusal::NotRegular(kind));
    }
    Ok((file, metadata))
}

/// Read all of a regular file of at most `limit` bytes. The limit holds before and during the
/// read: at most `limit + 1` bytes are ever taken in.
pub fn read_bounded(path: &Path, limit: u64) -> Result<Vec<u8>, Refusal> {
    let (file, metadata) = open_regular(path)?;
    if metadata.len() > limit {
        return Err(Refusal::TooLarge {
            limit,
            size: Some(metadata.len()),
        });
    }
    let mut bytes = Vec::with_capacity(metadata.len() as usize);
    file.take(limit.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|error| refusal_for_io(&error))?;
    if bytes.len() as u64 > limit {
        return Err(Refusal::TooLarge { limit, size: None });
    }
    Ok(bytes)
}

/// `path` with `.` and `..` applied without touching the file system (`..` above the root of
/// an absolute path stays at the root).
pub fn lexically_normal(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for component in path.components() {
        match component {
            Component::CurDir => {}
            Component::ParentDir => {
                if !out.pop() {
                    out.push("..");
                }
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// Where a file may be read from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Containment {
    /// Canonical root (symlinks resolved).
    pub root: PathBuf,
    pub allow_outside: bool,
}

impl Containment {
    /// Containment at `root` (canonicalised when it exists).
    pub fn new(root: &Path, allow_outside: bool) -> Containment {
        let absolute = if root.is_absolute() {
            root.to_path_buf()
        } else {
            std::env::current_dir().unwrap_or_default().join(root)
        };
        let root = std::fs::canonicalize(&absolute).unwrap_or_else(|_| lexically_normal(&absolute));
        Containment {
            root,
            allow_outside,
        }
    }

    /// Resolve `path` (absolute, or already joined to its base folder) to a canonical path
    /// inside the root. A path that does not exist is `NotFound` only when it would lie inside
    /// the root (as written and through every symlink that exists on its way); otherwise it is
    /// `Outside`, so the answer tells nothing about the world outside.
    pub fn resolve(&self, path: &Path) -> Result<PathBuf, Refusal> {
        let absolute = if path.is_absolute() {
            path.to_path_buf()
        } else {
            std::env::current_dir().unwrap_or_default().join(path)
        };
        let inside = |candidate: &Path| self.allow_outside || candidate.starts_with(&self.root);
        let lexical = lexically_normal(&absolute);
        // the root itself may sit behind a symlink (`/tmp` → `/private/tmp`): compare the
        // canonical form of the longest existing prefix
        match std::fs::canonicalize(&absolute) {
            Ok(canonical) => {
                if inside(&canonical) {
                    Ok(canonical)
                } else {
                    Err(Refusal::Outside)
                }
            }
            Err(error) => {
                let refusal = refusal_for_io(&error);
                if self.allow_outside {
                    return Err(refusal);
                }
                // the nearest ancestor that exists decides, so a missing file outside reads
                // the same as an existing one
                let existing = lexical
                    .ancestors()
                    .find_map(|ancestor| std::fs::canonicalize(ancestor).ok());
                match existing {
                    Some(ancestor) if ancestor.starts_with(&self.root) => {
                        // a dangling symlink inside: do not say where it points
                        if std::fs::symlink_metadata(&absolute)
                            .is_ok_and(|metadata| metadata.file_type().is_symlink())
                        {
                            Err(Refusal::Outside)
                        } else {
                            Err(refusal)
                        }
                    }
                    _ => Err(Refusal::Outside),
                }
            }
        }
    }
}

/// The workspace root for a file at `file` when no workspace folder was given. The walk goes
/// up from the file's folder and stops at the first folder holding `.git` or `markwell.toml`,
/// but never goes above the repository (a `.git`) or above `ceiling` (the folder given on the
/// command line, or the current folder when the file is inside it); with no marker on the
/// way, the root is the ceiling, or the file's own folder. So a `markwell.toml` above the
/// repository or above the folder given is never picked up, and the root is never `/` unless
/// the file lives there.
pub fn discover_root(file: &Path, ceiling: Option<&Path>) -> PathBuf {
    // the file itself is not resolved: a spec that is a symlink out of the repository still
    // belongs to the folder it was found in (and is then refused as outside it)
    let absolute = lexically_normal(&std::env::current_dir().unwrap_or_default().join(file));
    let folder = if absolute.is_dir() {
        absolute.clone()
    } else {
        absolute
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| absolute.clone())
    };
    let folder = std::fs::canonicalize(&folder).unwrap_or(folder);
    let ceiling = ceiling
        .and_then(|ceiling| std::fs::canonicalize(ceiling).ok())
        .filter(|ceiling| folder.starts_with(ceiling));
    for ancestor in folder.ancestors() {
        if ancestor.join(".git").exists() || ancestor.join(CONFIG_FILE_NAME).is_file() {
            return ancestor.to_path_buf();
        }
        if ceiling.as_deref() == Some(ancestor) {
            return ancestor.to_path_buf();
        }
        if ceiling.is_none() {
            // no ceiling: only the file's own folder is looked at
            break;
        }
    }
    folder
}

/// Largest `markwell.toml` read (real ones are a few hundred bytes).
pub const MAX_CONFIG_BYTES: u64 = 1 << 20;

/// The name of the project configuration file (the same as `analysis::config`).
const CONFIG_FILE_NAME: &str = "markwell.toml";

/// The text of `markwell.toml` at `root`, when there is one: only a regular file inside the
/// root (a symlink out of it is refused), at most [`MAX_CONFIG_BYTES`], never blocking.
/// `Ok(None)` when there is no such file.
pub fn read_root_config(root: &Path) -> Result<Option<String>, String> {
    let path = root.join(CONFIG_FILE_NAME);
    if std::fs::symlink_metadata(&path).is_err() {
        return Ok(None);
    }
    let containment = Containment::new(root, false);
    let canonical = containment
        .resolve(&path)
        .map_err(|refusal| format!("{}: {}", path.display(), describe_config_refusal(&refusal)))?;
    read_config_file(&canonical)
        .map(Some)
        .map_err(|message| format!("{}: {message}", path.display()))
}

/// The text of a configuration file named explicitly (`--config`): a regular file of at most
/// [`MAX_CONFIG_BYTES`]; invalid UTF-8 is an error.
pub fn read_config_file(path: &Path) -> Result<String, String> {
    let bytes = read_bounded(path, MAX_CONFIG_BYTES)
        .map_err(|refusal| describe_config_refusal(&refusal))?;
    String::from_utf8(bytes).map_err(|error| {
        format!(
            "not valid UTF-8 (first bad byte at offset {})",
            error.utf8_error().valid_up_to()
        )
    })
}

fn describe_config_refusal(refusal: &Refusal) -> String {
    match refusal {
        Refusal::Outside => {
            "leads outside the workspace (a symbolic link?); it is not read".to_string()
        }
        other => other.describe(),
    }
}

/// Replace the file at `path` with `contents` so that a reader (or a crash) sees either the old
/// or the new file, never half of one: the bytes go to a temporary file beside it, which is
/// flushed to disk and renamed over the original; the original's permissions are kept.
pub fn write_atomically(path: &Path, contents: &[u8]) -> std::io::Result<()> {
    use std::io::Write as _;
    let folder = match path.parent() {
        Some(folder) if !folder.as_os_str().is_empty() => folder.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|name| name.to_string_lossy().into_owned())
        .unwrap_or_else(|| "spec".to_string());
    let permissions = std::fs::metadata(path).ok().map(|m| m.permissions());
    let mut attempt = 0u32;
    let (temporary, mut file) = loop {
        let candidate = folder.join(format!(".{name}.markwell-{}-{attempt}", std::process::id()));
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&candidate)
        {
            Ok(file) => break (candidate, file),
            Err(error) if error.kind() == std::io::ErrorKind::AlreadyExists && attempt < 100 => {
                attempt += 1;
            }
            Err(error) => return Err(error),
        }
    };
    let written = file
        .write_all(contents)
        .and_then(|()| file.sync_all())
        .and_then(|()| match permissions {
            Some(permissions) => std::fs::set_permissions(&temporary, permissions),
            None => Ok(()),
        })
        .and_then(|()| std::fs::rename(&temporary, path));
    if written.is_err() {
        let _ = std::fs::remove_file(&temporary);
    }
    written
}

/// File names of chart specs.
pub const SPEC_SUFFIX: &str = ".chart.json";

fn describe_io_error(error: &std::io::Error) -> String {
    match error.kind() {
        std::io::ErrorKind::NotFound => "no such file or folder".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        _ => error.to_string(),
    }
}

/// Add `path` (a file) or the `*.chart.json` files below it (a folder) to `files`, sorted.
/// Hidden folders and symbolic links to folders are not entered.
pub fn collect_spec_files(path: &Path, files: &mut Vec<PathBuf>) -> Result<(), String> {
    let metadata = std::fs::metadata(path)
        .map_err(|error| format!("{}: {}", path.display(), describe_io_error(&error)))?;
    if metadata.is_file() {
        files.push(path.to_path_buf());
        return Ok(());
    }
    let mut found = Vec::new();
    let mut pending = vec![path.to_path_buf()];
    while let Some(folder) = pending.pop() {
        let entries = std::fs::read_dir(&folder)
            .map_err(|error| format!("{}: {}", folder.display(), describe_io_error(&error)))?;
        for entry in entries.flatten() {
            let name = entry.file_name();
            let name = name.to_string_lossy();
            let Ok(file_type) = entry.file_type() else {
                continue;
            };
            if file_type.is_dir() {
                if !name.starts_with('.') && name != "target" && name != "node_modules" {
                    pending.push(entry.path());
                }
            } else if name.ends_with(SPEC_SUFFIX) && !file_type.is_dir() {
                // FIFOs, sockets and symlinks are kept: reading refuses them with a message
                let entry_path = entry.path();
                if !entry_path.is_dir() {
                    found.push(entry_path);
                }
            }
        }
    }
    found.sort();
    files.extend(found);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lexical_normalisation() {
        assert_eq!(
            lexically_normal(Path::new("/a/b/../../../../etc/passwd")),
            PathBuf::from("/etc/passwd")
        );
        assert_eq!(
            lexically_normal(Path::new("/a/./b/../c")),
            PathBuf::from("/a/c")
        );
    }

    #[test]
    fn byte_sizes_in_words() {
        assert_eq!(format_bytes(16 << 20), "16 MiB");
        assert_eq!(format_bytes(512 << 10), "512 KiB");
        assert_eq!(format_bytes(100), "100 bytes");
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn devices_and_proc_are_refused_without_reading() {
        // /dev/zero is endless; /proc/self/environ holds secrets: neither is opened
        assert!(matches!(
            read_bounded(Path::new("/dev/zero"), 1 << 20),
            Err(Refusal::NotRegular(_))
        ));
        assert!(matches!(
            read_bounded(Path::new("/proc/self/environ"), 1 << 20),
            Err(Refusal::NotRegular(_))
        ));
    }
}
