//! The language server proper: tower-lsp handlers over the document store, the analysis loop and
//! the data cache.
//!
//! Concurrency (tower-lsp 0.20 runs up to 4 handlers at once, each first polled in arrival order):
//! - document changes are applied under a `std::sync::Mutex` with no `.await` inside, so they land
//!   in the order sent;
//! - analysis runs on immutable snapshots (shared text + line index) in `spawn_blocking`, at most
//!   one loop per document: the loop re-reads the latest text after every run, so bursts of
//!   edits coalesce, stale results are dropped (matched by a per-text generation, not the
//!   client's version, which clients may reuse), and publishes for one document stay in order;
//!   no debounce: a typical spec is analysed in well under a millisecond;
//! - data: the analysis uses a sampled profile of files without a cached full one; full profiles
//!   are computed in the background (`spawn_blocking`, `$/progress` with percentages after
//!   0.5 s when the client supports it), then the specs reading the file are analysed again;
//!   watched-file events invalidate the cache and re-analyse the specs that read the file;
//! - every handler body runs inside `catch_unwind`: a panic becomes a logged error response (or a
//!   logged dropped notification), never a dead server;
//! - requests to the client (configuration, registration, progress tokens) time out after 5 s.

use std::collections::{HashMap, HashSet};
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::Duration;

use serde_json::Value;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types as lsp;
use tower_lsp::{Client, LanguageServer};

use crate::analysis::config::{parse_project_config, ProjectConfig, CONFIG_FILE_NAME};
use crate::analysis::refactor::refactors_at;
use crate::analysis::{analyze, parse_document, AnalysisConfig};
use crate::data::{DataContext, ProfileCache, ReadOptions, ResolveOptions};
use crate::lsp::completion;
use crate::lsp::convert::{self, from_lsp_position, to_lsp_range};
use crate::lsp::documents::{next_generation, AnalysisOutcome, OpenDocument, TextChange};
use crate::lsp::features;
use crate::lsp::log;
use crate::lsp::settings::{merge_settings, parse_editor_settings, EditorSettings};
use crate::positions::{LineIndex, PositionEncoding};
use crate::spec::model::ChartSpec;
use crate::text_range::TextRange;

/// Data loads slower than this get a `$/progress` report (when the client supports it).
const PROGRESS_AFTER: Duration = Duration::from_millis(500);

/// How long to wait for the client to answer a request of the server.
const CLIENT_ANSWER_TIMEOUT: Duration = Duration::from_secs(5);

/// Glob of the data files watched for changes.
const DATA_FILE_GLOB: &str = "**/*.{csv,tsv,json,ndjson,jsonl}";
/// Glob of the project configuration.
const CONFIG_FILE_GLOB: &str = "**/markwell.toml";

/// Read `markwell.toml` at the workspace root; a missing file is the default configuration,
/// problems are logged (the server keeps going with what could be read).
fn load_project_config(root: Option<&Path>) -> ProjectConfig {
    let Some(root) = root else {
        return ProjectConfig::default();
    };
    let path = root.join(CONFIG_FILE_NAME);
    // only a regular file inside the root, at most 1 MiB, opened without blocking (a FIFO named
    // markwell.toml must not stop `initialize`); see `fsguard`
    let text = match crate::fsguard::read_root_config(root) {
        Ok(Some(text)) => text,
        Ok(None) => return ProjectConfig::default(),
        Err(message) => {
            log::error(&format!("{message}: the default configuration is used"));
            return ProjectConfig::default();
        }
    };
    match parse_project_config(&text) {
        Ok((config, warnings)) => {
            for warning in warnings {
                log::info(&format!("{}: {warning}", path.display()));
            }
            config
        }
        Err(error) => {
            log::error(&format!("{}: {error}", path.display()));
            ProjectConfig::default()
        }
    }
}

/// What was negotiated with the client at `initialize`.
#[derive(Clone, Debug, Default)]
struct Session {
    encoding: PositionEncoding,
    workspace_root: Option<PathBuf>,
    supports_work_done_progress: bool,
    supports_configuration_request: bool,
    supports_watched_files_registration: bool,
    supports_inlay_hint_refresh: bool,
    /// The configuration from files (`markwell.toml`), before editor settings.
    file_config: AnalysisConfig,
    /// `[data] allow-outside-workspace` of `markwell.toml`.
    allow_outside_workspace: bool,
    /// `[data] profile-memory-mib` and `profile-seconds` of `markwell.toml`.
    profile_limits: crate::data::ProfileLimits,
    editor_settings: EditorSettings,
    config: Arc<AnalysisConfig>,
}

#[derive(Debug)]
struct DocumentRecord {
    document: OpenDocument,
    /// Id of the analysis loop of this document, when one runs.
    analysis_loop: Option<u64>,
    /// Set when an analysis is asked for while the loop runs for a reason other than new text
    /// (settings, data files): the loop then runs once more before it ends.
    rerun_requested: bool,
    /// The diagnostics last published, to avoid republishing an unchanged set.
    published: Option<Vec<lsp::Diagnostic>>,
    /// Data files read by the latest analysis.
    data_paths: Vec<PathBuf>,
}

/// Everything the handlers and the analysis tasks share.
pub struct ServerState {
    client: Client,
    documents: Mutex<HashMap<lsp::Url, DocumentRecord>>,
    session: Mutex<Session>,
    cache: Arc<ProfileCache>,
    shutdown_requested: Arc<AtomicBool>,
    next_progress_token: AtomicU64,
    /// Files whose full profile is being computed in the background.
    full_scans_running: Mutex<HashSet<PathBuf>>,
}

/// The tower-lsp `LanguageServer`.
#[derive(Clone)]
pub struct Backend {
    state: Arc<ServerState>,
}

/// An immutable view of one document version, sent to the analysis.
struct Snapshot {
    version: i32,
    generation: u64,
    index: Arc<LineIndex>,
    resolve: ResolveOptions,
    config: Arc<AnalysisConfig>,
}

fn lock<T>(mutex: &Mutex<T>) -> MutexGuard<'_, T> {
    // a panic while a lock was held must not take the server down with poisoning
    mutex
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    if let Some(text) = payload.downcast_ref::<&str>() {
        (*text).to_string()
    } else if let Some(text) = payload.downcast_ref::<String>() {
        text.clone()
    } else {
        "unknown panic".to_string()
    }
}

/// Run a handler body; a panic becomes a logged `InternalError` response.
fn guarded<T>(what: &str, body: impl FnOnce() -> T) -> jsonrpc::Result<T> {
    let started = std::time::Instant::now();
    let outcome = catch_unwind(AssertUnwindSafe(body));
    log::debug(&format!("{what}: {:?}", started.elapsed()));
    outcome.map_err(|payload| {
        let message = panic_message(payload.as_ref());
        log::error(&format!("panic while handling {what}: {message}"));
        jsonrpc::Error {
            code: jsonrpc::ErrorCode::InternalError,
            message: format!("internal error while handling {what}: {message}").into(),
            data: None,
        }
    })
}

/// Parse, load the data (a sampled first profile for files without a cached full one) and run
/// the rules. With `reuse_data`, no data is loaded (the request path).
fn analyse_snapshot(
    snapshot: &Snapshot,
    cache: &ProfileCache,
    reuse_data: Option<Arc<DataContext>>,
) -> AnalysisOutcome {
    let parsed = parse_document(snapshot.index.text());
    let data = match reuse_data {
        Some(data) => data,
        None => Arc::new(cache.load_for_spec_sampled(&parsed.spec, &snapshot.resolve)),
    };
    let diagnostics = analyze(&parsed, &data, &snapshot.config);
    let pending_full_scans = sampled_sources(&parsed.spec, &data);
    AnalysisOutcome {
        version: snapshot.version,
        generation: snapshot.generation,
        index: snapshot.index.clone(),
        parsed: Arc::new(parsed),
        data,
        diagnostics,
        pending_full_scans,
    }
}

/// The files of `spec` whose profile in `data` is still a sample.
fn sampled_sources(spec: &ChartSpec, data: &DataContext) -> Vec<(PathBuf, ReadOptions)> {
    let sources = spec
        .source
        .iter()
        .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()));
    let mut out: Vec<(PathBuf, ReadOptions)> = Vec::new();
    for source in sources {
        let path = match data.for_source(source) {
            Some(Ok(profile)) => profile.path.clone().filter(|_| profile.is_sample),
            // a sample that held no whole row waits for the full profile too
            Some(Err(error)) if error.kind == crate::data::DataErrorKind::SampleIncomplete => {
                error.path.clone()
            }
            _ => None,
        };
        let Some(path) = path else {
            continue;
        };
        let read = ReadOptions::for_source(source);
        if !out
            .iter()
            .any(|(known, known_read)| *known == path && *known_read == read)
        {
            out.push((path, read));
        }
    }
    out
}

fn uri_to_path(uri: &lsp::Url) -> Option<PathBuf> {
    if uri.scheme() == "file" {
        uri.to_file_path().ok()
    } else {
        None
    }
}

fn same_file(a: &Path, b: &Path) -> bool {
    if a == b {
        return true;
    }
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

impl Backend {
    pub fn new(client: Client, shutdown_requested: Arc<AtomicBool>) -> Backend {
        Backend {
            state: Arc::new(ServerState {
                client,
                documents: Mutex::new(HashMap::new()),
                session: Mutex::new(Session::default()),
                cache: Arc::new(ProfileCache::new()),
                shutdown_requested,
                next_progress_token: AtomicU64::new(1),
                full_scans_running: Mutex::new(HashSet::new()),
            }),
        }
    }

    fn encoding(&self) -> PositionEncoding {
        lock(&self.state.session).encoding
    }

    /// Only for the stdio tests (registered when `MARKWELL_LSP_TEST_HOOKS=1`): panics inside a
    /// request handler, to check that the server answers with an error and lives on.
    pub async fn test_panic(&self, _params: Value) -> jsonrpc::Result<Value> {
        guarded("markwell/testPanic", || -> Value {
            panic!("deliberate panic requested by a test");
        })
    }

    fn snapshot_of(state: &ServerState, uri: &lsp::Url, record: &DocumentRecord) -> Snapshot {
        let session = lock(&state.session);
        let path = uri_to_path(uri);
        let spec_dir = path
            .as_deref()
            .and_then(Path::parent)
            .map(Path::to_path_buf)
            .or_else(|| session.workspace_root.clone())
            // an untitled document without a workspace has no folder: `/` reads nothing
            .unwrap_or_else(|| PathBuf::from("/"));
        Snapshot {
            version: record.document.version,
            generation: record.document.generation,
            index: record.document.index(),
            resolve: ResolveOptions {
                spec_dir,
                workspace_root: session.workspace_root.clone(),
                allow_outside_workspace: session.allow_outside_workspace,
                limits: session.profile_limits,
            },
            config: session.config.clone(),
        }
    }

    /// Start the analysis loop of `uri` unless one is running (it will pick up the new text).
    fn schedule_analysis(&self, uri: lsp::Url) {
        let loop_id = {
            let mut documents = lock(&self.state.documents);
            let Some(record) = documents.get_mut(&uri) else {
                return;
            };
            if record.analysis_loop.is_some() {
                // the running loop analyses again with what changed (text, settings or data)
                record.rerun_requested = true;
                return;
            }
            let loop_id = next_generation();
            record.analysis_loop = Some(loop_id);
            loop_id
        };
        let state = self.state.clone();
        tokio::spawn(async move {
            analysis_loop(state, uri, loop_id).await;
        });
    }

    /// The analysis of the document's current version: the stored one, or a fresh one that
    /// reuses the latest data profiles (no data loading on the request path).
    async fn current_outcome(&self, uri: &lsp::Url) -> Option<Arc<AnalysisOutcome>> {
        let (snapshot, reuse) = {
            let documents = lock(&self.state.documents);
            let record = documents.get(uri)?;
            if let Some(current) = record.document.current_analysis() {
                return Some(current);
            }
            let reuse = record
                .document
                .latest
                .as_ref()
                .map(|latest| latest.data.clone())
                .unwrap_or_default();
            (Self::snapshot_of(&self.state, uri, record), reuse)
        };
        let cache = self.state.cache.clone();
        let result = tokio::task::spawn_blocking(move || {
            catch_unwind(AssertUnwindSafe(|| {
                analyse_snapshot(&snapshot, &cache, Some(reuse))
            }))
        })
        .await;
        match result {
            Ok(Ok(outcome)) => Some(Arc::new(outcome)),
            Ok(Err(payload)) => {
                log::error(&format!(
                    "panic in analysis: {}",
                    panic_message(payload.as_ref())
                ));
                None
            }
            Err(join_error) => {
                log::error(&format!("analysis task failed: {join_error}"));
                None
            }
        }
    }

    async fn refresh_configuration(&self) {
        let supports = lock(&self.state.session).supports_configuration_request;
        if !supports {
            return;
        }
        let items = vec![lsp::ConfigurationItem {
            scope_uri: None,
            section: Some("markwell".to_string()),
        }];
        match tokio::time::timeout(
            CLIENT_ANSWER_TIMEOUT,
            self.state.client.configuration(items),
        )
        .await
        {
            Ok(Ok(values)) => {
                let section = values.into_iter().next().unwrap_or(Value::Null);
                self.apply_settings(&section);
            }
            Ok(Err(error)) => log::info(&format!("workspace/configuration failed: {error}")),
            Err(_) => log::info("workspace/configuration: no answer from the client"),
        }
    }

    fn apply_settings(&self, section: &Value) {
        let (settings, notes) = parse_editor_settings(section);
        for note in notes {
            log::info(&note);
        }
        {
            let mut session = lock(&self.state.session);
            session.editor_settings = settings;
            session.config = Arc::new(merge_settings(
                &session.file_config,
                &session.editor_settings,
            ));
        }
        self.reanalyse_all_with(|_| true);
    }

    fn reanalyse_all_with(&self, mut wanted: impl FnMut(&DocumentRecord) -> bool) {
        let uris: Vec<lsp::Url> = lock(&self.state.documents)
            .iter()
            .filter(|(_, record)| wanted(record))
            .map(|(uri, _)| uri.clone())
            .collect();
        for uri in uris {
            self.schedule_analysis(uri);
        }
    }

    async fn register_watched_files(&self) {
        let supports = lock(&self.state.session).supports_watched_files_registration;
        if !supports {
            return;
        }
        let options = lsp::DidChangeWatchedFilesRegistrationOptions {
            watchers: [DATA_FILE_GLOB, CONFIG_FILE_GLOB]
                .into_iter()
                .map(|glob| lsp::FileSystemWatcher {
                    glob_pattern: lsp::GlobPattern::String(glob.to_string()),
                    kind: None,
                })
                .collect(),
        };
        let registration = lsp::Registration {
            id: "markwell-data-files".to_string(),
            method: "workspace/didChangeWatchedFiles".to_string(),
            register_options: serde_json::to_value(options).ok(),
        };
        let registered = tokio::time::timeout(
            CLIENT_ANSWER_TIMEOUT,
            self.state.client.register_capability(vec![registration]),
        )
        .await;
        match registered {
            Ok(Ok(())) => {}
            Ok(Err(error)) => log::info(&format!("could not register file watchers: {error}")),
            Err(_) => log::info("client/registerCapability: no answer from the client"),
        }
    }
}

/// The record of `uri` if loop `loop_id` still owns its analysis (a close, or a close and
/// reopen, ends the loop).
fn owned_record<'m>(
    documents: &'m mut HashMap<lsp::Url, DocumentRecord>,
    uri: &lsp::Url,
    loop_id: u64,
) -> Option<&'m mut DocumentRecord> {
    documents
        .get_mut(uri)
        .filter(|record| record.analysis_loop == Some(loop_id))
}

/// Analyse `uri` until the analysed text is the current one, publishing each result that is
/// still current. Only one loop per document runs at a time (the one whose id the record holds).
async fn analysis_loop(state: Arc<ServerState>, uri: lsp::Url, loop_id: u64) {
    loop {
        let snapshot = {
            let mut documents = lock(&state.documents);
            let Some(record) = owned_record(&mut documents, &uri, loop_id) else {
                return;
            };
            record.rerun_requested = false;
            Backend::snapshot_of(&state, &uri, record)
        };
        let version = snapshot.version;
        let generation = snapshot.generation;
        let cache = state.cache.clone();
        ANALYSES_RUNNING.fetch_add(1, Ordering::SeqCst);
        let mut task = tokio::task::spawn_blocking(move || {
            let _running = RunningAnalysis;
            catch_unwind(AssertUnwindSafe(|| {
                analyse_snapshot(&snapshot, &cache, None)
            }))
        });
        // wait for the analysis, but let a newer text supersede it: a slow read (a network
        // file system, a huge head) must not hold the document; the abandoned run finishes on
        // its own and its result is dropped. Bounded: with many abandoned runs still going,
        // the loop waits instead, so the blocking pool is never exhausted.
        let started = tokio::time::Instant::now();
        let mut token: Option<lsp::NumberOrString> = None;
        let joined = loop {
            tokio::select! {
                joined = &mut task => break Some(joined),
                _ = tokio::time::sleep(SUPERSEDE_POLL) => {
                    let superseded = {
                        let documents = lock(&state.documents);
                        documents.get(&uri).is_none_or(|record| {
                            record.analysis_loop != Some(loop_id)
                                || record.document.generation != generation
                        })
                    };
                    if superseded
                        && ANALYSES_RUNNING.load(Ordering::SeqCst) <= MAX_ANALYSES_RUNNING
                    {
                        break None;
                    }
                    if token.is_none() && started.elapsed() >= PROGRESS_AFTER {
                        let file = uri
                            .path_segments()
                            .and_then(|mut segments| segments.next_back().map(str::to_string))
                            .unwrap_or_default();
                        token = begin_progress(&state, &format!("the data of {file}")).await;
                    }
                }
            }
        };
        if let Some(token) = token {
            end_progress(&state, token).await;
        }
        let Some(joined) = joined else {
            log::debug(&format!(
                "the analysis of {uri} (version {version}) was superseded while it ran"
            ));
            continue;
        };
        let outcome = match joined {
            Ok(Ok(outcome)) => Arc::new(outcome),
            failed => {
                let reason = match failed {
                    Ok(Err(payload)) => format!("panic: {}", panic_message(payload.as_ref())),
                    Err(join_error) => join_error.to_string(),
                    Ok(Ok(_)) => String::new(),
                };
                log::error(&format!(
                    "the analysis of {uri} (version {version}) failed: {reason}"
                ));
                if let Some(record) = owned_record(&mut lock(&state.documents), &uri, loop_id) {
                    record.analysis_loop = None;
                }
                return;
            }
        };
        let encoding = lock(&state.session).encoding;
        let pending_full_scans = outcome.pending_full_scans.clone();
        let (to_publish, full_profiles_arrived) = {
            let mut documents = lock(&state.documents);
            let Some(record) = owned_record(&mut documents, &uri, loop_id) else {
                return;
            };
            if record.document.generation != generation {
                continue; // stale: analyse the newer text
            }
            record.data_paths = features::data_paths(&outcome.data);
            // a full profile replaced a sample: the inlay hints (value ranges) are out of date
            let full_profiles_arrived = record.document.latest.as_ref().is_some_and(|previous| {
                previous.pending_full_scans.len() > outcome.pending_full_scans.len()
            });
            let diagnostics = published_diagnostics(&outcome, &uri, encoding);
            record.document.latest = Some(outcome);
            let to_publish = if record.published.as_ref() == Some(&diagnostics) {
                None
            } else {
                record.published = Some(diagnostics.clone());
                Some(diagnostics)
            };
            (to_publish, full_profiles_arrived)
        };
        // still the loop's turn: no other loop publishes for this document meanwhile
        if let Some(diagnostics) = to_publish {
            state
                .client
                .publish_diagnostics(uri.clone(), diagnostics, Some(version))
                .await;
        }
        for (path, read) in pending_full_scans {
            start_full_scan(state.clone(), path, read);
        }
        if full_profiles_arrived && lock(&state.session).supports_inlay_hint_refresh {
            let refreshed =
                tokio::time::timeout(CLIENT_ANSWER_TIMEOUT, state.client.inlay_hint_refresh())
                    .await;
            if !matches!(refreshed, Ok(Ok(()))) {
                log::info("workspace/inlayHint/refresh: no answer or an error from the client");
            }
        }
        let mut documents = lock(&state.documents);
        let Some(record) = owned_record(&mut documents, &uri, loop_id) else {
            return;
        };
        if record.document.generation == generation && !record.rerun_requested {
            record.analysis_loop = None;
            return;
        }
    }
}

/// How often a waiting analysis loop looks for a newer text of its document.
const SUPERSEDE_POLL: Duration = Duration::from_millis(25);

/// Analyses running on the blocking pool (current and superseded ones).
static ANALYSES_RUNNING: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

/// A loop stops abandoning superseded analyses while this many run (tokio's blocking pool has
/// 512 threads by default, from memory; this keeps most of it free).
const MAX_ANALYSES_RUNNING: usize = 64;

/// Counts one running analysis; dropped when it ends (also on a panic).
struct RunningAnalysis;

impl Drop for RunningAnalysis {
    fn drop(&mut self) {
        ANALYSES_RUNNING.fetch_sub(1, Ordering::SeqCst);
    }
}

/// At most this many diagnostics are published per document; past it one more says how many
/// were left out. Editors slow down with tens of thousands of markers and nobody reads them;
/// the number is common practice, no source.
pub const MAX_PUBLISHED_DIAGNOSTICS: usize = 1000;

/// The outcome's diagnostics converted for publishing, capped at
/// [`MAX_PUBLISHED_DIAGNOSTICS`] (only the published ones are converted: linear in the cap).
fn published_diagnostics(
    outcome: &AnalysisOutcome,
    uri: &lsp::Url,
    encoding: PositionEncoding,
) -> Vec<lsp::Diagnostic> {
    let all = &outcome.diagnostics;
    let mut published: Vec<lsp::Diagnostic> = all
        .iter()
        .take(MAX_PUBLISHED_DIAGNOSTICS)
        .map(|diagnostic| convert::to_lsp_diagnostic(diagnostic, uri, &outcome.index, encoding))
        .collect();
    if let Some(first_hidden) = all.get(MAX_PUBLISHED_DIAGNOSTICS) {
        let left_out = all.len() - MAX_PUBLISHED_DIAGNOSTICS;
        let note = crate::diagnostic::Diagnostic::new(
            first_hidden.rule,
            crate::diagnostic::Severity::Info,
            first_hidden.range,
            format!(
                "{left_out} more findings from here on are not shown (at most {MAX_PUBLISHED_DIAGNOSTICS} are published; `markwell check` lists them all)"
            ),
        );
        published.push(convert::to_lsp_diagnostic(
            &note,
            uri,
            &outcome.index,
            encoding,
        ));
    }
    published
}

/// Compute the full profile of `path` in the background (off the async workers), with
/// `$/progress` reports for scans longer than [`PROGRESS_AFTER`]; then analyse again every open
/// spec that reads the file. One scan per file at a time.
fn start_full_scan(state: Arc<ServerState>, path: PathBuf, read: ReadOptions) {
    if !lock(&state.full_scans_running).insert(path.clone()) {
        return;
    }
    let limits = lock(&state.session).profile_limits;
    tokio::spawn(async move {
        let share_done = Arc::new(AtomicU64::new(0));
        let cache = state.cache.clone();
        let scan_path = path.clone();
        let scan_share = share_done.clone();
        let mut task = tokio::task::spawn_blocking(move || {
            catch_unwind(AssertUnwindSafe(|| {
                cache.full_profile_within(&scan_path, &read, &limits, &|share| {
                    scan_share.store((share.clamp(0.0, 1.0) * 100.0) as u64, Ordering::Relaxed);
                    true
                })
            }))
        });
        let started = tokio::time::Instant::now();
        let mut token: Option<lsp::NumberOrString> = None;
        let mut reported = 0;
        let joined = loop {
            tokio::select! {
                joined = &mut task => break joined,
                _ = tokio::time::sleep(Duration::from_millis(100)) => {
                    if started.elapsed() < PROGRESS_AFTER {
                        continue;
                    }
                    let percentage = share_done.load(Ordering::Relaxed);
                    match &token {
                        None => {
                            token = begin_progress(&state, &path.display().to_string()).await;
                        }
                        Some(token) if percentage != reported => {
                            report_progress(&state, token.clone(), percentage as u32).await;
                        }
                        Some(_) => {}
                    }
                    reported = percentage;
                }
            }
        };
        if let Some(token) = token {
            end_progress(&state, token).await;
        }
        match joined {
            Ok(Ok(Ok(_))) => {}
            Ok(Ok(Err(error))) => log::info(&format!(
                "full profile of {} failed: {}",
                path.display(),
                error.message
            )),
            Ok(Err(payload)) => log::error(&format!(
                "panic while profiling {}: {}",
                path.display(),
                panic_message(payload.as_ref())
            )),
            Err(join_error) => log::error(&format!("profiling task failed: {join_error}")),
        }
        lock(&state.full_scans_running).remove(&path);
        // the specs reading this file get the full profile now
        let backend = Backend {
            state: state.clone(),
        };
        backend.reanalyse_all_with(|record| {
            record
                .data_paths
                .iter()
                .any(|read_path| same_file(read_path, &path))
        });
    });
}

async fn report_progress(state: &ServerState, token: lsp::NumberOrString, percentage: u32) {
    state
        .client
        .send_notification::<lsp::notification::Progress>(lsp::ProgressParams {
            token,
            value: lsp::ProgressParamsValue::WorkDone(lsp::WorkDoneProgress::Report(
                lsp::WorkDoneProgressReport {
                    cancellable: Some(false),
                    message: None,
                    percentage: Some(percentage.min(100)),
                },
            )),
        })
        .await;
}

async fn begin_progress(state: &ServerState, what: &str) -> Option<lsp::NumberOrString> {
    if !lock(&state.session).supports_work_done_progress {
        return None;
    }
    let number = state.next_progress_token.fetch_add(1, Ordering::Relaxed);
    let token = lsp::NumberOrString::String(format!("markwell-data-{number}"));
    let created = tokio::time::timeout(
        CLIENT_ANSWER_TIMEOUT,
        state
            .client
            .send_request::<lsp::request::WorkDoneProgressCreate>(
                lsp::WorkDoneProgressCreateParams {
                    token: token.clone(),
                },
            ),
    )
    .await;
    if !matches!(created, Ok(Ok(()))) {
        return None;
    }
    state
        .client
        .send_notification::<lsp::notification::Progress>(lsp::ProgressParams {
            token: token.clone(),
            value: lsp::ProgressParamsValue::WorkDone(lsp::WorkDoneProgress::Begin(
                lsp::WorkDoneProgressBegin {
                    title: "markwell: reading data".to_string(),
                    cancellable: Some(false),
                    message: Some(format!("profiling {what}")),
                    percentage: Some(0),
                },
            )),
        })
        .await;
    Some(token)
}

async fn end_progress(state: &ServerState, token: lsp::NumberOrString) {
    state
        .client
        .send_notification::<lsp::notification::Progress>(lsp::ProgressParams {
            token,
            value: lsp::ProgressParamsValue::WorkDone(lsp::WorkDoneProgress::End(
                lsp::WorkDoneProgressEnd {
                    message: Some("data profiled".to_string()),
                },
            )),
        })
        .await;
}

fn server_capabilities(encoding: PositionEncoding) -> lsp::ServerCapabilities {
    lsp::ServerCapabilities {
        position_encoding: Some(lsp::PositionEncodingKind::new(encoding.as_lsp_str())),
        text_document_sync: Some(lsp::TextDocumentSyncCapability::Options(
            lsp::TextDocumentSyncOptions {
                open_close: Some(true),
                change: Some(lsp::TextDocumentSyncKind::INCREMENTAL),
                will_save: None,
                will_save_wait_until: None,
                save: None,
            },
        )),
        hover_provider: Some(lsp::HoverProviderCapability::Simple(true)),
        completion_provider: Some(lsp::CompletionOptions {
            trigger_characters: Some(vec!["\"".to_string(), ":".to_string()]),
            ..lsp::CompletionOptions::default()
        }),
        code_action_provider: Some(lsp::CodeActionProviderCapability::Options(
            lsp::CodeActionOptions {
                code_action_kinds: Some(vec![
                    lsp::CodeActionKind::QUICKFIX,
                    lsp::CodeActionKind::REFACTOR,
                ]),
                work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
                resolve_provider: None,
            },
        )),
        document_symbol_provider: Some(lsp::OneOf::Left(true)),
        color_provider: Some(lsp::ColorProviderCapability::Simple(true)),
        inlay_hint_provider: Some(lsp::OneOf::Left(true)),
        definition_provider: Some(lsp::OneOf::Left(true)),
        ..lsp::ServerCapabilities::default()
    }
}

fn text_changes(changes: Vec<lsp::TextDocumentContentChangeEvent>) -> Vec<TextChange> {
    changes
        .into_iter()
        .map(|change| TextChange {
            range: change
                .range
                .map(|range| (from_lsp_position(range.start), from_lsp_position(range.end))),
            text: change.text,
        })
        .collect()
}

#[tower_lsp::async_trait]
impl LanguageServer for Backend {
    async fn initialize(
        &self,
        params: lsp::InitializeParams,
    ) -> jsonrpc::Result<lsp::InitializeResult> {
        guarded("initialize", || {
            let capabilities = &params.capabilities;
            let offered: Vec<String> = capabilities
                .general
                .as_ref()
                .and_then(|general| general.position_encodings.as_ref())
                .map(|kinds| kinds.iter().map(|kind| kind.as_str().to_string()).collect())
                .unwrap_or_default();
            let encoding = PositionEncoding::negotiate(offered.iter().map(String::as_str));
            #[allow(deprecated)] // root_uri is deprecated in favour of workspace_folders
            let root = params
                .workspace_folders
                .as_ref()
                .and_then(|folders| folders.first())
                .and_then(|folder| uri_to_path(&folder.uri))
                .or_else(|| params.root_uri.as_ref().and_then(uri_to_path));
            let workspace = capabilities.workspace.as_ref();
            let mut session = lock(&self.state.session);
            session.encoding = encoding;
            session.workspace_root = root;
            session.supports_work_done_progress = capabilities
                .window
                .as_ref()
                .and_then(|window| window.work_done_progress)
                .unwrap_or(false);
            session.supports_configuration_request = workspace
                .and_then(|workspace| workspace.configuration)
                .unwrap_or(false);
            session.supports_inlay_hint_refresh = workspace
                .and_then(|workspace| workspace.inlay_hint.as_ref())
                .and_then(|inlay| inlay.refresh_support)
                .unwrap_or(false);
            session.supports_watched_files_registration = workspace
                .and_then(|workspace| workspace.did_change_watched_files.as_ref())
                .and_then(|watched| watched.dynamic_registration)
                .unwrap_or(false);
            let project = load_project_config(session.workspace_root.as_deref());
            session.file_config = project.analysis;
            session.allow_outside_workspace = project.allow_outside_workspace;
            session.profile_limits = project.profile_limits;
            session.config = Arc::new(merge_settings(
                &session.file_config,
                &session.editor_settings,
            ));
            log::info(&format!(
                "initialize: position encoding {}, workspace root {:?}",
                encoding.as_lsp_str(),
                session.workspace_root
            ));
            lsp::InitializeResult {
                capabilities: server_capabilities(encoding),
                server_info: Some(lsp::ServerInfo {
                    name: "markwell".to_string(),
                    version: Some(env!("CARGO_PKG_VERSION").to_string()),
                }),
            }
        })
    }

    async fn initialized(&self, _: lsp::InitializedParams) {
        self.register_watched_files().await;
        self.refresh_configuration().await;
    }

    async fn shutdown(&self) -> jsonrpc::Result<()> {
        self.state.shutdown_requested.store(true, Ordering::SeqCst);
        log::info("shutdown requested");
        Ok(())
    }

    async fn did_open(&self, params: lsp::DidOpenTextDocumentParams) {
        let item = params.text_document;
        let opened = guarded("textDocument/didOpen", || {
            let record = DocumentRecord {
                document: OpenDocument::new(&item.text, item.version, item.language_id.clone()),
                analysis_loop: None,
                rerun_requested: false,
                published: None,
                data_paths: Vec::new(),
            };
            lock(&self.state.documents).insert(item.uri.clone(), record);
        });
        if opened.is_ok() {
            self.schedule_analysis(item.uri);
        }
    }

    async fn did_change(&self, params: lsp::DidChangeTextDocumentParams) {
        let uri = params.text_document.uri;
        let version = params.text_document.version;
        let encoding = self.encoding();
        let applied = guarded("textDocument/didChange", || {
            let mut documents = lock(&self.state.documents);
            match documents.get_mut(&uri) {
                Some(record) => {
                    record.document.apply_changes(
                        version,
                        text_changes(params.content_changes),
                        encoding,
                    );
                    true
                }
                None => {
                    log::info(&format!("didChange for {uri}, which is not open: ignored"));
                    false
                }
            }
        });
        if applied == Ok(true) {
            self.schedule_analysis(uri);
        }
    }

    async fn did_close(&self, params: lsp::DidCloseTextDocumentParams) {
        let uri = params.text_document.uri;
        let removed = lock(&self.state.documents).remove(&uri);
        if removed.is_some_and(|record| record.published.is_some_and(|set| !set.is_empty())) {
            // clear what the editor shows for a closed file
            self.state
                .client
                .publish_diagnostics(uri, Vec::new(), None)
                .await;
        }
    }

    async fn did_change_configuration(&self, params: lsp::DidChangeConfigurationParams) {
        let supports_pull = lock(&self.state.session).supports_configuration_request;
        if supports_pull {
            self.refresh_configuration().await;
        } else {
            let section = params
                .settings
                .get("markwell")
                .cloned()
                .unwrap_or(Value::Null);
            let _ = guarded("workspace/didChangeConfiguration", || {
                self.apply_settings(&section)
            });
        }
    }

    async fn did_change_watched_files(&self, params: lsp::DidChangeWatchedFilesParams) {
        let changed: Vec<PathBuf> = params
            .changes
            .iter()
            .filter_map(|event| uri_to_path(&event.uri))
            .collect();
        for path in &changed {
            self.state.cache.invalidate(path);
        }
        let config_changed = changed.iter().any(|path| {
            path.file_name()
                .is_some_and(|name| name == CONFIG_FILE_NAME)
        });
        if config_changed {
            let _ = guarded("workspace/didChangeWatchedFiles", || {
                {
                    let mut session = lock(&self.state.session);
                    let project = load_project_config(session.workspace_root.as_deref());
                    session.file_config = project.analysis;
                    session.allow_outside_workspace = project.allow_outside_workspace;
                    session.profile_limits = project.profile_limits;
                    session.config = Arc::new(merge_settings(
                        &session.file_config,
                        &session.editor_settings,
                    ));
                }
                self.reanalyse_all_with(|_| true);
            });
            return;
        }
        let _ = guarded("workspace/didChangeWatchedFiles", || {
            self.reanalyse_all_with(|record| {
                record
                    .data_paths
                    .iter()
                    .any(|read| changed.iter().any(|path| same_file(read, path)))
            });
        });
    }

    async fn hover(&self, params: lsp::HoverParams) -> jsonrpc::Result<Option<lsp::Hover>> {
        let uri = params.text_document_position_params.text_document.uri;
        let position = params.text_document_position_params.position;
        let Some(outcome) = self.current_outcome(&uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let active_ranking = lock(&self.state.session).config.ranking.clone();
        guarded("textDocument/hover", || {
            let index = &outcome.index;
            let offset = index.offset_of_position(from_lsp_position(position), encoding);
            let content = features::hover_at(
                &outcome.parsed,
                &outcome.data,
                &outcome.diagnostics,
                offset,
                active_ranking.as_deref(),
            )?;
            Some(lsp::Hover {
                contents: lsp::HoverContents::Markup(lsp::MarkupContent {
                    kind: lsp::MarkupKind::Markdown,
                    value: content.markdown,
                }),
                range: Some(to_lsp_range(index, content.range, encoding)),
            })
        })
    }

    async fn completion(
        &self,
        params: lsp::CompletionParams,
    ) -> jsonrpc::Result<Option<lsp::CompletionResponse>> {
        let uri = params.text_document_position.text_document.uri;
        let position = params.text_document_position.position;
        let Some(outcome) = self.current_outcome(&uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let active_ranking = lock(&self.state.session).config.ranking.clone();
        guarded("textDocument/completion", || {
            let index = &outcome.index;
            let offset = index.offset_of_position(from_lsp_position(position), encoding);
            let candidates = completion::complete_at_with_ranking(
                &outcome.parsed,
                &outcome.data,
                offset,
                active_ranking.as_deref(),
            );
            let items: Vec<lsp::CompletionItem> = candidates
                .into_iter()
                .map(|candidate| convert::to_completion_item(candidate, index, encoding))
                .collect();
            Some(lsp::CompletionResponse::Array(items))
        })
    }

    async fn code_action(
        &self,
        params: lsp::CodeActionParams,
    ) -> jsonrpc::Result<Option<lsp::CodeActionResponse>> {
        let uri = params.text_document.uri;
        let Some(outcome) = self.current_outcome(&uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let config = lock(&self.state.session).config.clone();
        guarded("textDocument/codeAction", || {
            let index = &outcome.index;
            let requested = convert::from_lsp_range(index, params.range, encoding);
            // fixes computed with the diagnostics, then the refactors asked for at the range
            let mut actions =
                convert::code_actions(&outcome.diagnostics, requested, &uri, index, encoding);
            let refactors = refactors_at(&outcome.parsed, &outcome.data, &config, requested);
            actions.extend(convert::refactor_actions(&refactors, &uri, index, encoding));
            if let Some(only) = &params.context.only {
                actions.retain(|action| match action {
                    lsp::CodeActionOrCommand::CodeAction(action) => {
                        action.kind.as_ref().is_some_and(|kind| {
                            only.iter()
                                .any(|wanted| kind.as_str().starts_with(wanted.as_str()))
                        })
                    }
                    lsp::CodeActionOrCommand::Command(_) => false,
                });
            }
            Some(actions)
        })
    }

    async fn document_symbol(
        &self,
        params: lsp::DocumentSymbolParams,
    ) -> jsonrpc::Result<Option<lsp::DocumentSymbolResponse>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/documentSymbol", || {
            let symbols = features::document_outline(&outcome.parsed.spec)
                .iter()
                .map(|entry| convert::to_document_symbol(entry, &outcome.index, encoding))
                .collect();
            Some(lsp::DocumentSymbolResponse::Nested(symbols))
        })
    }

    async fn document_color(
        &self,
        params: lsp::DocumentColorParams,
    ) -> jsonrpc::Result<Vec<lsp::ColorInformation>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(Vec::new());
        };
        let encoding = self.encoding();
        guarded("textDocument/documentColor", || {
            features::document_colours(&outcome.parsed.spec)
                .into_iter()
                .map(|occurrence| lsp::ColorInformation {
                    range: to_lsp_range(&outcome.index, occurrence.range, encoding),
                    color: lsp::Color {
                        red: occurrence.colour.red,
                        green: occurrence.colour.green,
                        blue: occurrence.colour.blue,
                        alpha: occurrence.colour.alpha,
                    },
                })
                .collect()
        })
    }

    async fn color_presentation(
        &self,
        params: lsp::ColorPresentationParams,
    ) -> jsonrpc::Result<Vec<lsp::ColorPresentation>> {
        guarded("textDocument/colorPresentation", || {
            let hex = features::Rgba {
                red: params.color.red,
                green: params.color.green,
                blue: params.color.blue,
                alpha: params.color.alpha,
            }
            .to_hex();
            vec![lsp::ColorPresentation {
                label: hex.clone(),
                text_edit: Some(lsp::TextEdit {
                    range: params.range,
                    new_text: hex,
                }),
                additional_text_edits: None,
            }]
        })
    }

    async fn inlay_hint(
        &self,
        params: lsp::InlayHintParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::InlayHint>>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/inlayHint", || {
            let index = &outcome.index;
            let range: TextRange = convert::from_lsp_range(index, params.range, encoding);
            let hints = features::inlay_hints(&outcome.parsed.spec, &outcome.data, range)
                .into_iter()
                .map(|hint| lsp::InlayHint {
                    position: convert::to_lsp_position(
                        index.position_of_offset(hint.offset, encoding),
                    ),
                    label: lsp::InlayHintLabel::String(hint.label),
                    kind: Some(lsp::InlayHintKind::TYPE),
                    text_edits: None,
                    tooltip: None,
                    padding_left: Some(true),
                    padding_right: None,
                    data: None,
                })
                .collect();
            Some(hints)
        })
    }

    async fn goto_definition(
        &self,
        params: lsp::GotoDefinitionParams,
    ) -> jsonrpc::Result<Option<lsp::GotoDefinitionResponse>> {
        let uri = params.text_document_position_params.text_document.uri;
        let position = params.text_document_position_params.position;
        let Some(outcome) = self.current_outcome(&uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let target = guarded("textDocument/definition", || {
            let offset = outcome
                .index
                .offset_of_position(from_lsp_position(position), encoding);
            features::definition_at(&outcome.parsed.spec, &outcome.data, offset)
        })?;
        let Some(target) = target else {
            return Ok(None);
        };
        // reading the head of the data file is IO: off the async workers
        let location = tokio::task::spawn_blocking(move || definition_location(&target, encoding))
            .await
            .ok()
            .flatten();
        Ok(location.map(lsp::GotoDefinitionResponse::Scalar))
    }
}

/// The LSP location of a header cell: reads the data file up to the cell to count lines.
fn definition_location(
    target: &features::DefinitionTarget,
    encoding: PositionEncoding,
) -> Option<lsp::Location> {
    use std::io::Read;
    let (start, end) = target.byte_range;
    let (file, _) = crate::fsguard::open_regular(&target.path).ok()?;
    let mut head = Vec::new();
    file.take(end.saturating_add(4))
        .read_to_end(&mut head)
        .ok()?;
    let text = String::from_utf8_lossy(&head);
    let index = LineIndex::new(&text);
    let range = TextRange::new(
        usize::try_from(start).ok()?.min(text.len()),
        usize::try_from(end).ok()?.min(text.len()),
    );
    Some(lsp::Location::new(
        convert::file_uri(&target.path)?,
        to_lsp_range(&index, range, encoding),
    ))
}
