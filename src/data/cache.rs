//! [`ProfileCache`]: loads profiles of data files and inline rows, and keeps them keyed by the
//! canonical path (plus the read options), checked against the file's size and modification
//! time. Two flavours per file: a sampled profile from a bounded head (fast, for the editor's
//! first pass) and a full streaming profile (constant memory, both cores, cancellable).
//!
//! Shared across threads: the map sits behind a `Mutex` that is never held while a file is read.

use std::collections::{HashMap, HashSet};
use std::fs::File;
use std::io::{BufReader, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::sync::atomic::Ordering;
use std::sync::{Arc, Condvar, Mutex, MutexGuard};
use std::time::{Duration, SystemTime};

use super::csv_reader::{read_header_within, scan_bytes_within, scan_file, ScanControl};
use super::json_reader::{add_inline_rows, find_key_ranges, scan_json_array, scan_ndjson};
use super::profile::TableAccumulator;
use super::resolve::resolve_source_path;
use super::{
    io_error, too_many_columns_error, DataContext, DataError, DataErrorKind, DataProfile,
    ProfileLimits, ReadOptions, ResolveOptions, SourceData, SourceKey,
};
use crate::spec::model::{ChartSpec, DataFormat, InlineRow, Source, SourceLocation};

/// Bytes read for a sampled profile (and the most read at once for a small file).
pub const SAMPLE_BYTES: usize = 4 << 20;
/// A NUL byte within this many leading bytes marks the file as binary.
const BINARY_PROBE_BYTES: usize = 64 * 1024;
pub(super) const BYTE_ORDER_MARK: [u8; 3] = [0xEF, 0xBB, 0xBF];

#[derive(Clone, Debug, PartialEq, Eq, Hash)]
struct CacheKey {
    path: PathBuf,
    read: ReadOptions,
}

#[derive(Clone, Debug)]
struct CacheEntry {
    size: u64,
    modified: Option<SystemTime>,
    full: Option<Arc<DataProfile>>,
    sample: Option<Arc<DataProfile>>,
}

/// Loads profiles, caching them by path plus size and modification time. A file is scanned
/// in full by one caller at a time: others asking for the same file meanwhile wait for that
/// scan instead of starting their own.
#[derive(Debug, Default)]
pub struct ProfileCache {
    entries: Mutex<HashMap<CacheKey, CacheEntry>>,
    scans_in_flight: Mutex<HashSet<CacheKey>>,
    scan_finished: Condvar,
}

/// Releases a claimed full scan when dropped (also when the scan fails).
struct ScanClaim<'c> {
    cache: &'c ProfileCache,
    key: CacheKey,
}

impl Drop for ScanClaim<'_> {
    fn drop(&mut self) {
        let mut in_flight = self
            .cache
            .scans_in_flight
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        in_flight.remove(&self.key);
        drop(in_flight);
        self.cache.scan_finished.notify_all();
    }
}

pub(super) fn simple_error(kind: DataErrorKind, message: String, path: &Path) -> DataError {
    DataError {
        kind,
        message,
        path: Some(path.to_path_buf()),
        line: None,
        byte_offset: None,
    }
}

/// Size and modification time, refusing folders, FIFOs, sockets and devices.
pub(super) fn file_stamp(path: &Path) -> Result<(u64, Option<SystemTime>), DataError> {
    let metadata = std::fs::metadata(path).map_err(|error| io_error(Some(path), &error))?;
    if metadata.is_dir() {
        return Err(simple_error(
            DataErrorKind::IsDirectory,
            format!("`{}` is a folder, not a data file", path.display()),
            path,
        ));
    }
    if let Some(kind) = crate::fsguard::non_regular_kind(&metadata) {
        return Err(not_regular_error(path, kind));
    }
    Ok((metadata.len(), metadata.modified().ok()))
}

fn not_regular_error(path: &Path, kind: &str) -> DataError {
    simple_error(
        DataErrorKind::NotRegular,
        format!(
            "`{}` is {kind}, not a regular file; data is read from regular files only",
            path.display()
        ),
        path,
    )
}

/// Open a data file only when it is a regular file (never blocks on a FIFO; see `fsguard`).
pub fn open_data_file(path: &Path) -> Result<File, DataError> {
    match crate::fsguard::open_regular(path) {
        Ok((file, _)) => Ok(file),
        Err(crate::fsguard::Refusal::NotRegular(kind)) => Err(not_regular_error(path, kind)),
        Err(crate::fsguard::Refusal::IsDirectory) => Err(simple_error(
            DataErrorKind::IsDirectory,
            format!("`{}` is a folder, not a data file", path.display()),
            path,
        )),
        Err(refusal) => Err(simple_error(
            match refusal {
                crate::fsguard::Refusal::NotFound => DataErrorKind::NotFound,
                crate::fsguard::Refusal::PermissionDenied => DataErrorKind::PermissionDenied,
                _ => DataErrorKind::Io,
            },
            format!("`{}` {}", path.display(), refusal.describe()),
            path,
        )),
    }
}

/// Threads of a full scan: at most two, the number of readers the memory budget allows for
/// (see [`ProfileLimits`]).
fn worker_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |count| count.get().min(2))
}

/// The delimiter as one byte.
fn delimiter_byte(delimiter: char, path: &Path) -> Result<u8, DataError> {
    if delimiter.is_ascii() && delimiter != '"' && delimiter != '\n' && delimiter != '\r' {
        Ok(delimiter as u8)
    } else {
        Err(simple_error(
            DataErrorKind::Malformed,
            format!("the delimiter `{delimiter}` cannot be used: it must be one ASCII character other than a quote or a line break"),
            path,
        ))
    }
}

fn sniff_delimiter(head: &[u8]) -> u8 {
    let first_line = head.split(|&byte| byte == b'\n').next().unwrap_or(&[]);
    let mut best = (0usize, b',');
    for candidate in [b',', b'\t', b';', b'|'] {
        let count = first_line.iter().filter(|&&byte| byte == candidate).count();
        if count > best.0 {
            best = (count, candidate);
        }
    }
    best.1
}

fn first_non_space(head: &[u8]) -> Option<u8> {
    head.iter()
        .copied()
        .find(|byte| !byte.is_ascii_whitespace())
}

/// The format and delimiter of a file: as declared, else from the extension, else from the
/// first bytes (`[` → JSON, `{` → NDJSON, else delimited text with the most frequent of
/// `,` `TAB` `;` `|` in the first line).
pub fn detect_format(
    path: &Path,
    head: &[u8],
    read: &ReadOptions,
) -> Result<(DataFormat, u8), DataError> {
    let head = head.strip_prefix(&BYTE_ORDER_MARK).unwrap_or(head);
    let declared_delimiter = match read.delimiter {
        Some(delimiter) => Some(delimiter_byte(delimiter, path)?),
        None => None,
    };
    let extension = path
        .extension()
        .and_then(|extension| extension.to_str())
        .map(str::to_ascii_lowercase);
    let format = match (read.format, declared_delimiter) {
        (Some(format), _) => format,
        (None, Some(b'\t')) => DataFormat::Tsv,
        (None, Some(_)) => DataFormat::Csv,
        (None, None) => match extension.as_deref() {
            Some("csv") => DataFormat::Csv,
            Some("tsv") | Some("tab") => DataFormat::Tsv,
            Some("ndjson") | Some("jsonl") => DataFormat::Ndjson,
            Some("json") => match first_non_space(head) {
                Some(b'{') => DataFormat::Ndjson,
                _ => DataFormat::Json,
            },
            _ => match first_non_space(head) {
                Some(b'[') => DataFormat::Json,
                Some(b'{') => DataFormat::Ndjson,
                _ => {
                    if sniff_delimiter(head) == b'\t' {
                        DataFormat::Tsv
                    } else {
                        DataFormat::Csv
                    }
                }
            },
        },
    };
    let delimiter = match (declared_delimiter, format) {
        (Some(delimiter), _) => delimiter,
        (None, DataFormat::Tsv) => b'\t',
        (None, DataFormat::Csv) => {
            let sniffed = sniff_delimiter(head);
            if sniffed == b'\t' && extension.as_deref() == Some("csv") {
                b','
            } else {
                sniffed
            }
        }
        (None, _) => b',',
    };
    Ok((format, delimiter))
}

pub(super) fn read_head(file: &mut File, limit: usize, path: &Path) -> Result<Vec<u8>, DataError> {
    let mut head = Vec::new();
    file.by_ref()
        .take(limit as u64)
        .read_to_end(&mut head)
        .map_err(|error| io_error(Some(path), &error))?;
    Ok(head)
}

pub(super) fn check_is_text(head: &[u8], path: &Path) -> Result<(), DataError> {
    let probe = &head[..head.len().min(BINARY_PROBE_BYTES)];
    if let Some(position) = memchr::memchr(0, probe) {
        let line = probe[..position]
            .iter()
            .filter(|&&byte| byte == b'\n')
            .count();
        return Err(DataError {
            kind: DataErrorKind::Binary,
            message: format!(
                "`{}` holds a NUL byte at offset {position}, so it is not text (a binary file, or text in UTF-16)",
                path.display()
            ),
            path: Some(path.to_path_buf()),
            line: Some(line),
            byte_offset: Some(position as u64),
        });
    }
    Ok(())
}

/// Cut a sampled head after its last line break (so no row is cut in half).
pub(super) fn cut_at_last_line(head: &[u8]) -> &[u8] {
    match memchr::memrchr(b'\n', head) {
        Some(position) => &head[..=position],
        None => head,
    }
}

/// A counting reader: reports the bytes it has read for progress.
struct ProgressRead<'c, R> {
    inner: R,
    control: &'c ScanControl,
}

impl<R: Read> Read for ProgressRead<'_, R> {
    fn read(&mut self, buffer: &mut [u8]) -> std::io::Result<usize> {
        let read = self.inner.read(buffer)?;
        self.control
            .bytes_done
            .fetch_add(read as u64, Ordering::Relaxed);
        Ok(read)
    }
}

/// Why no claim on a full scan was needed or made.
enum ClaimOutcome {
    ScannedByAnother(Arc<DataProfile>),
    Cancelled,
}

/// How much of the file to profile.
#[derive(Clone, Copy)]
enum ScanDepth<'p> {
    Sample,
    Full(&'p dyn Fn(f64) -> bool),
}

/// Profile one file. `is_sample` is set when only a head was read.
fn profile_file(
    path: &Path,
    read: &ReadOptions,
    depth: ScanDepth<'_>,
    limits: &ProfileLimits,
) -> Result<DataProfile, DataError> {
    let mut control = ScanControl::within(*limits);
    let result = profile_file_under(path, read, depth, &mut control);
    match result {
        Err(error) if error.kind == DataErrorKind::Cancelled => Err(control.stop_error(Some(path))),
        other => other,
    }
}

/// A data file checked for reading, with its head read and its format known: where profiling
/// and the row readers of `rows` both start.
pub(super) struct OpenedData {
    pub size: u64,
    pub modified: Option<SystemTime>,
    /// The first `SAMPLE_BYTES` of the file (all of it when `complete`).
    pub head: Vec<u8>,
    pub complete: bool,
    /// Length of a UTF-8 byte-order mark at the start (0 or 3).
    pub mark_length: usize,
    pub format: DataFormat,
    pub delimiter: u8,
}

/// Open `path`, read its head, and refuse what cannot be read as data: an empty file, binary
/// bytes, an unknown format, delimited text with lone-CR line ends.
pub(super) fn open_data_head(path: &Path, read: &ReadOptions) -> Result<OpenedData, DataError> {
    let (size, modified) = file_stamp(path)?;
    let mut file = open_data_file(path)?;
    let head = read_head(&mut file, SAMPLE_BYTES, path)?;
    let complete = head.len() as u64 >= size;
    let after_mark = head.strip_prefix(&BYTE_ORDER_MARK).unwrap_or(&head);
    if complete && after_mark.iter().all(|byte| byte.is_ascii_whitespace()) {
        return Err(simple_error(
            DataErrorKind::Empty,
            format!("`{}` is empty", path.display()),
            path,
        ));
    }
    check_is_text(&head, path)?;
    let (format, delimiter) = detect_format(path, &head, read)?;
    if matches!(format, DataFormat::Csv | DataFormat::Tsv)
        && memchr::memchr(b'\n', &head).is_none()
        && memchr::memchr(b'\r', &head).is_some()
    {
        return Err(simple_error(
            DataErrorKind::Malformed,
            format!(
                "`{}` ends its lines with a lone CR (an old Mac convention); save it with LF or CRLF line breaks",
                path.display()
            ),
            path,
        ));
    }
    let mark_length = head.len() - after_mark.len();
    Ok(OpenedData {
        size,
        modified,
        head,
        complete,
        mark_length,
        format,
        delimiter,
    })
}

fn profile_file_under(
    path: &Path,
    read: &ReadOptions,
    depth: ScanDepth<'_>,
    control: &mut ScanControl,
) -> Result<DataProfile, DataError> {
    let OpenedData {
        size,
        modified,
        head,
        complete,
        mark_length,
        format,
        delimiter,
    } = open_data_head(path, read)?;
    let after_mark = &head[mark_length..];
    let in_memory = complete || matches!(depth, ScanDepth::Sample);
    let truncated = !complete;
    control.readers = if in_memory { 1 } else { worker_threads() };
    control.truncated_input = truncated && in_memory;
    let control: &ScanControl = control;

    let mut header_ranges: Vec<Option<(u64, u64)>> = Vec::new();
    let table: TableAccumulator = match (format, in_memory) {
        (DataFormat::Csv | DataFormat::Tsv, true) => {
            let bytes = if truncated {
                cut_at_last_line(&head)
            } else {
                &head
            };
            let (header, table) = scan_bytes_within(bytes, delimiter, Some(path), control)?;
            header_ranges = header.ranges;
            table
        }
        (DataFormat::Csv | DataFormat::Tsv, false) => {
            let mut header_source = open_data_file(path)?;
            header_source
                .seek(SeekFrom::Start(mark_length as u64))
                .map_err(|error| io_error(Some(path), &error))?;
            let header = read_header_within(
                header_source,
                mark_length as u64,
                delimiter,
                Some(path),
                &control.limits,
            )?;
            header_ranges = header.ranges.clone();
            let progress = match depth {
                ScanDepth::Full(progress) => progress,
                ScanDepth::Sample => &|_| true,
            };
            let wait =
                |finished: &dyn Fn() -> bool| wait_with_progress(finished, control, size, progress);
            scan_file(
                path,
                size,
                delimiter,
                &header,
                worker_threads(),
                control,
                &wait,
            )?
        }
        (DataFormat::Json, true) => scan_json_array(after_mark, truncated, control, Some(path))?,
        (DataFormat::Ndjson, true) => {
            let bytes = if truncated {
                cut_at_last_line(after_mark)
            } else {
                after_mark
            };
            scan_ndjson(bytes, truncated, control, Some(path))?
        }
        (DataFormat::Json | DataFormat::Ndjson, false) => {
            let progress = match depth {
                ScanDepth::Full(progress) => progress,
                ScanDepth::Sample => &|_| true,
            };
            scan_json_file(path, format, mark_length as u64, size, control, progress)?
        }
    };
    if control.cancelled.load(Ordering::Relaxed) {
        // the caller asked to stop (or time ran out), even if the threads finished before
        // they noticed
        return Err(control.stop_error(Some(path)));
    }
    if table.is_too_wide() {
        return Err(too_many_columns_error(Some(path), None, &control.limits));
    }
    if matches!(format, DataFormat::Json | DataFormat::Ndjson) {
        header_ranges = find_key_ranges(&head, &table.names);
    }

    let (size_after, modified_after) = file_stamp(path)?;
    if size_after != size || modified_after != modified {
        return Err(simple_error(
            DataErrorKind::ChangedDuringScan,
            format!(
                "`{}` changed while it was being read ({size} bytes before, {size_after} after); read it again",
                path.display()
            ),
            path,
        ));
    }
    if table.rows == 0 && truncated && in_memory {
        // the head ended inside the first row: that is no evidence of an empty file
        return Err(simple_error(
            DataErrorKind::SampleIncomplete,
            format!(
                "the first {} MiB of `{}` hold no whole row (a line longer than that); waiting for the full profile",
                SAMPLE_BYTES >> 20,
                path.display()
            ),
            path,
        ));
    }
    if table.rows == 0 {
        return Err(if table.names.is_empty() {
            simple_error(
                DataErrorKind::Empty,
                format!("`{}` holds no rows", path.display()),
                path,
            )
        } else {
            DataError {
                kind: DataErrorKind::HeaderOnly,
                message: format!(
                    "`{}` has a header ({}) but no rows",
                    path.display(),
                    table
                        .names
                        .iter()
                        .map(|name| format!("`{name}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                path: Some(path.to_path_buf()),
                line: Some(0),
                byte_offset: None,
            }
        });
    }
    if let (ScanDepth::Full(progress), true) = (depth, in_memory) {
        // a file read at once reports being done, like a streamed one
        progress(1.0);
    }
    Ok(table.finish(
        Some(path.to_path_buf()),
        format,
        truncated && in_memory,
        &header_ranges,
    ))
}

/// Poll until `finished`, reporting progress; a `false` from `progress` cancels the scan.
fn wait_with_progress(
    finished: &dyn Fn() -> bool,
    control: &ScanControl,
    size: u64,
    progress: &dyn Fn(f64) -> bool,
) {
    let mut pause = Duration::from_millis(1);
    while !finished() {
        let done = control.bytes_done.load(Ordering::Relaxed) as f64 / size.max(1) as f64;
        if !progress(done.min(1.0)) {
            control.cancelled.store(true, Ordering::Relaxed);
        }
        // the deadline is also watched here, for a reader stuck inside one long record
        control.should_stop();
        std::thread::sleep(pause);
        pause = (pause * 2).min(Duration::from_millis(25));
    }
    progress(1.0);
}

fn scan_json_file(
    path: &Path,
    format: DataFormat,
    start: u64,
    size: u64,
    control: &ScanControl,
    progress: &dyn Fn(f64) -> bool,
) -> Result<TableAccumulator, DataError> {
    let mut file = open_data_file(path)?;
    file.seek(SeekFrom::Start(start))
        .map_err(|error| io_error(Some(path), &error))?;
    std::thread::scope(|scope| {
        let worker = scope.spawn(move || {
            let source = BufReader::with_capacity(
                1 << 20,
                ProgressRead {
                    inner: file,
                    control,
                },
            );
            if format == DataFormat::Json {
                scan_json_array(source, false, control, Some(path))
            } else {
                scan_ndjson(source, false, control, Some(path))
            }
        });
        wait_with_progress(&|| worker.is_finished(), control, size, progress);
        worker.join().unwrap_or_else(|_| {
            Err(simple_error(
                DataErrorKind::Io,
                "the scanning thread failed".to_string(),
                path,
            ))
        })
    })
}

/// Profile inline `rows` (no IO).
pub fn profile_inline_rows(rows: &[InlineRow]) -> Result<DataProfile, DataError> {
    let mut table = TableAccumulator::default();
    add_inline_rows(&mut table, rows);
    if table.rows == 0 {
        return Err(DataError {
            kind: DataErrorKind::Empty,
            message: "the inline `rows` array is empty".to_string(),
            path: None,
            line: None,
            byte_offset: None,
        });
    }
    Ok(table.finish(None, DataFormat::Json, false, &[]))
}

impl ProfileCache {
    pub fn new() -> ProfileCache {
        ProfileCache::default()
    }

    fn lock(&self) -> MutexGuard<'_, HashMap<CacheKey, CacheEntry>> {
        // a panic elsewhere while holding the lock leaves a usable map: recover it
        self.entries
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
    }

    fn key_for(path: &Path, read: &ReadOptions) -> CacheKey {
        CacheKey {
            path: std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf()),
            read: *read,
        }
    }

    /// The cached profile of `path` if the file still has the size and mtime it had.
    fn cached(&self, key: &CacheKey, want_full: bool) -> Option<Arc<DataProfile>> {
        let (size, modified) = file_stamp(&key.path).ok()?;
        let entries = self.lock();
        let entry = entries.get(key)?;
        if entry.size != size || entry.modified != modified {
            return None;
        }
        if want_full {
            entry.full.clone()
        } else {
            entry.full.clone().or_else(|| entry.sample.clone())
        }
    }

    fn store(&self, key: CacheKey, profile: &Arc<DataProfile>) {
        let Ok((size, modified)) = file_stamp(&key.path) else {
            return;
        };
        let mut entries = self.lock();
        let entry = entries.entry(key).or_insert_with(|| CacheEntry {
            size,
            modified,
            full: None,
            sample: None,
        });
        if entry.size != size || entry.modified != modified {
            *entry = CacheEntry {
                size,
                modified,
                full: None,
                sample: None,
            };
        }
        if profile.is_sample {
            entry.sample = Some(profile.clone());
        } else {
            entry.full = Some(profile.clone());
        }
    }

    /// A first profile from a bounded head of the file (`is_sample` when the file is longer);
    /// a cached full profile when there is one.
    pub fn sample_profile(&self, path: &Path, read: &ReadOptions) -> SourceData {
        self.sample_profile_within(path, read, &ProfileLimits::default())
    }

    /// [`ProfileCache::sample_profile`] within `limits`.
    pub fn sample_profile_within(
        &self,
        path: &Path,
        read: &ReadOptions,
        limits: &ProfileLimits,
    ) -> SourceData {
        let key = ProfileCache::key_for(path, read);
        if let Some(profile) = self.cached(&key, false) {
            return Ok(profile);
        }
        let profile = Arc::new(profile_file(&key.path, read, ScanDepth::Sample, limits)?);
        self.store(key, &profile);
        Ok(profile)
    }

    /// The full profile (streaming, constant memory, all cores). `progress` receives the share
    /// done (0..=1) from the calling thread and returns `false` to cancel.
    pub fn full_profile(
        &self,
        path: &Path,
        read: &ReadOptions,
        progress: &dyn Fn(f64) -> bool,
    ) -> SourceData {
        self.full_profile_within(path, read, &ProfileLimits::default(), progress)
    }

    /// [`ProfileCache::full_profile`] within `limits` (memory and time). A profile cached
    /// under other limits is reused as it is.
    pub fn full_profile_within(
        &self,
        path: &Path,
        read: &ReadOptions,
        limits: &ProfileLimits,
        progress: &dyn Fn(f64) -> bool,
    ) -> SourceData {
        let key = ProfileCache::key_for(path, read);
        if let Some(profile) = self.cached(&key, true) {
            return Ok(profile);
        }
        let _claim = match self.claim_full_scan(&key, progress) {
            Ok(claim) => claim,
            Err(ClaimOutcome::ScannedByAnother(profile)) => return Ok(profile),
            Err(ClaimOutcome::Cancelled) => {
                return Err(super::csv_reader::cancelled_error(Some(&key.path)))
            }
        };
        let profile = Arc::new(profile_file(
            &key.path,
            read,
            ScanDepth::Full(progress),
            limits,
        )?);
        self.store(key, &profile);
        Ok(profile)
    }

    /// Claim the full scan of `key`, or wait while another caller scans it (reporting no
    /// progress, and giving up when `progress` says cancel).
    fn claim_full_scan(
        &self,
        key: &CacheKey,
        progress: &dyn Fn(f64) -> bool,
    ) -> Result<ScanClaim<'_>, ClaimOutcome> {
        loop {
            {
                let mut in_flight = self
                    .scans_in_flight
                    .lock()
                    .unwrap_or_else(|poisoned| poisoned.into_inner());
                if !in_flight.contains(key) {
                    in_flight.insert(key.clone());
                    return Ok(ScanClaim {
                        cache: self,
                        key: key.clone(),
                    });
                }
                // another caller scans this file: wait a little (the lock is released while
                // waiting and dropped before `progress` runs)
                let _ = self
                    .scan_finished
                    .wait_timeout(in_flight, Duration::from_millis(50));
            }
            if let Some(profile) = self.cached(key, true) {
                return Err(ClaimOutcome::ScannedByAnother(profile));
            }
            if !progress(0.0) {
                return Err(ClaimOutcome::Cancelled);
            }
        }
    }

    /// The full profile if it is cached and current (for the editor, after a background scan).
    pub fn cached_full_profile(&self, path: &Path, read: &ReadOptions) -> Option<Arc<DataProfile>> {
        self.cached(&ProfileCache::key_for(path, read), true)
    }

    fn load(&self, spec: &ChartSpec, options: &ResolveOptions, sampled: bool) -> DataContext {
        let mut context = DataContext::default();
        let sources = spec
            .source
            .iter()
            .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()));
        for source in sources {
            let Some(key) = SourceKey::for_source(source) else {
                continue;
            };
            if context.entries.iter().any(|(existing, _)| *existing == key) {
                continue;
            }
            let data = self.load_source(source, options, sampled);
            context.entries.push((key, data));
        }
        context
    }

    /// Resolve and profile one source.
    pub fn load_source(
        &self,
        source: &Source,
        options: &ResolveOptions,
        sampled: bool,
    ) -> SourceData {
        match &source.location {
            SourceLocation::Path(written) => {
                let path = resolve_source_path(&written.value, options)?;
                let read = ReadOptions::for_source(source);
                if sampled {
                    self.sample_profile_within(&path, &read, &options.limits)
                } else {
                    self.full_profile_within(&path, &read, &options.limits, &|_| true)
                }
            }
            SourceLocation::Rows { rows, .. } => profile_inline_rows(rows).map(Arc::new),
            SourceLocation::Missing => Err(DataError {
                kind: DataErrorKind::BadPath,
                message: "the source has neither `path` nor `rows`".to_string(),
                path: None,
                line: None,
                byte_offset: None,
            }),
        }
    }

    /// Resolve and profile every source of `spec` with full profiles (for the CLI).
    pub fn load_for_spec(&self, spec: &ChartSpec, options: &ResolveOptions) -> DataContext {
        self.load(spec, options, false)
    }

    /// Like [`ProfileCache::load_for_spec`], but a file without a cached full profile gets a
    /// sampled one (for the editor, which then runs full profiles in the background).
    pub fn load_for_spec_sampled(&self, spec: &ChartSpec, options: &ResolveOptions) -> DataContext {
        self.load(spec, options, true)
    }

    /// Forget the cached profiles of `path` (the file changed on disk).
    pub fn invalidate(&self, path: &Path) {
        let canonical = std::fs::canonicalize(path).ok();
        self.lock().retain(|key, _| {
            key.path != path
                && canonical
                    .as_ref()
                    .is_none_or(|canonical| key.path != *canonical)
        });
    }

    /// How many files have cached profiles.
    pub fn len(&self) -> usize {
        self.lock().len()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}
