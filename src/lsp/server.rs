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
//! - evaluation (what the chart draws, for the rules that judge it): inside the analysis task
//!   over the sampled head of the data, then exactly in the background (`spawn_blocking`, after
//!   the text has rested for [`EXACT_EVALUATION_AFTER`]); the exact scan stops once its text is
//!   superseded, and its result is used only for the generation it was computed for;
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
use crate::analysis::{analyze_with_evaluation, parse_document, AnalysisConfig};
use crate::data::{DataContext, ProfileCache, ReadOptions, ResolveOptions};
use crate::eval::EvaluatedChart;
use crate::lsp::completion;
use crate::lsp::convert::{self, from_lsp_position, to_lsp_range};
use crate::lsp::documents::{next_generation, AnalysisOutcome, OpenDocument, TextChange};
use crate::lsp::evaluation_cache::{sampled_evaluation, CachedEvaluation};
use crate::lsp::features;
use crate::lsp::log;
use crate::lsp::pages;
use crate::lsp::settings::{merge_settings, parse_editor_settings, EditorSettings};
use crate::lsp::structure;
use crate::lsp::workspace::{self, WorkspaceIndex};
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
    /// The client pulls diagnostics (`textDocument/diagnostic`) instead of being sent them.
    pull_diagnostics: bool,
    supports_diagnostic_refresh: bool,
    /// The configuration from files (`markwell.toml`), before editor settings.
    file_config: AnalysisConfig,
    /// `[data] allow-outside-workspace` of `markwell.toml`.
    allow_outside_workspace: bool,
    /// `[data] profile-memory-mib`, `profile-seconds` and `evaluate-seconds` of `markwell.toml`.
    profile_limits: crate::data::ProfileLimits,
    editor_settings: EditorSettings,
    config: Arc<AnalysisConfig>,
}

#[derive(Debug)]
struct DocumentRecord {
    document: OpenDocument,
    /// A data file (CSV, TSV, JSON, NDJSON) open as a document: checked as data, not as a spec.
    data_document: bool,
    /// Id of the analysis loop of this document, when one runs.
    analysis_loop: Option<u64>,
    /// Set when an analysis is asked for while the loop runs for a reason other than new text
    /// (settings, data files): the loop then runs once more before it ends.
    rerun_requested: bool,
    /// What was last published, to avoid republishing an unchanged set.
    published: Option<PublishedSet>,
    /// Data files read by the latest analysis.
    data_paths: Vec<PathBuf>,
    /// The latest evaluation of one generation of the text: over the sampled head, until the
    /// exact one (over all the rows) replaces it. Reused while the text and the data stay the
    /// same (a full profile arriving does not evaluate the head again).
    evaluation: Option<(u64, Arc<EvaluatedChart>)>,
    /// The generation whose exact evaluation is being computed, when one is.
    exact_evaluation_running: Option<u64>,
    /// The cache entry of the latest exact evaluation and its generation: the next text reuses
    /// it when only its title, description or frame changed (see `evaluation_cache`).
    kept_exact: Option<(u64, Arc<CachedEvaluation>)>,
}

/// A published set of diagnostics, as a count and a 64-bit digest of its JSON (kept instead
/// of the set itself, which took 3.7 times the text of a 35 KB spec with 400 findings; two
/// different sets with the same digest, which would leave the older one shown, have a chance of
/// one in 2^64).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct PublishedSet {
    count: usize,
    digest: u64,
}

impl PublishedSet {
    fn of(diagnostics: &[lsp::Diagnostic]) -> PublishedSet {
        use std::hash::{Hash, Hasher};
        let mut hasher = std::collections::hash_map::DefaultHasher::new();
        serde_json::to_string(diagnostics)
            .unwrap_or_default()
            .hash(&mut hasher);
        PublishedSet {
            count: diagnostics.len(),
            digest: hasher.finish(),
        }
    }
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
    /// Every spec file under the workspace root, open or not.
    workspace: Mutex<WorkspaceIndex>,
    /// Set once the first scan of the workspace ended (with or without a root).
    workspace_scanned: AtomicBool,
    /// Closed specs that were sent diagnostics (to clear them when they are fixed or opened).
    closed_published: Mutex<HashSet<lsp::Url>>,
    /// One permit per analysis on the blocking pool ([`ANALYSES_AT_ONCE`]).
    analysis_permits: Arc<tokio::sync::Semaphore>,
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
    /// The evaluation of this text, when it was computed already (sampled or exact).
    known_evaluation: Option<Arc<EvaluatedChart>>,
    /// The latest sampled evaluation and what it was computed from (reused when only the
    /// title, description or frame changed).
    kept_evaluation: Option<Arc<CachedEvaluation>>,
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

/// Parse, load the data (a sampled first profile for files without a cached full one), evaluate
/// the chart (exactly when that was done for this text, else over the sampled head) and run the
/// rules. With `reuse_data`, no data is loaded and nothing is evaluated (the request path).
fn analyse_snapshot(
    snapshot: &Snapshot,
    cache: &ProfileCache,
    reuse_data: Option<Arc<DataContext>>,
) -> AnalysisOutcome {
    // the tree shares the line index's text
    let parsed = crate::analysis::parse_shared_document(snapshot.index.shared_text());
    let (data, evaluation, kept_evaluation) = match reuse_data {
        Some(data) => (
            data,
            snapshot.known_evaluation.clone(),
            snapshot.kept_evaluation.clone(),
        ),
        None => {
            let data = Arc::new(cache.load_for_spec_sampled(&parsed.spec, &snapshot.resolve));
            let (evaluation, kept) = match snapshot.known_evaluation.clone() {
                Some(known) => (Some(known), snapshot.kept_evaluation.clone()),
                None => sampled_evaluation(
                    snapshot.kept_evaluation.as_deref(),
                    &parsed,
                    &snapshot.resolve,
                    || crate::lsp::evaluate::evaluate_sampled(&parsed.spec, &snapshot.resolve),
                ),
            };
            (data, evaluation, kept)
        }
    };
    let diagnostics =
        analyze_with_evaluation(&parsed, &data, &snapshot.config, evaluation.as_deref());
    let pending_full_scans = sampled_sources(&parsed.spec, &data);
    AnalysisOutcome {
        version: snapshot.version,
        generation: snapshot.generation,
        index: snapshot.index.clone(),
        parsed: Arc::new(parsed),
        data,
        diagnostics,
        pending_full_scans,
        evaluation,
        kept_evaluation,
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
                workspace: Mutex::new(WorkspaceIndex::default()),
                workspace_scanned: AtomicBool::new(false),
                closed_published: Mutex::new(HashSet::new()),
                shutdown_requested,
                next_progress_token: AtomicU64::new(1),
                full_scans_running: Mutex::new(HashSet::new()),
                analysis_permits: Arc::new(tokio::sync::Semaphore::new(ANALYSES_AT_ONCE)),
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
            known_evaluation: record
                .evaluation
                .as_ref()
                .filter(|(generation, _)| *generation == record.document.generation)
                .map(|(_, evaluation)| evaluation.clone()),
            // the exact entry while the latest analysis is of its text (or older); an analysis
            // of a newer text kept its own entry
            kept_evaluation: match (&record.kept_exact, record.document.latest.as_ref()) {
                (Some((exact, entry)), latest)
                    if latest.is_none_or(|latest| latest.generation <= *exact) =>
                {
                    Some(entry.clone())
                }
                (_, latest) => latest.and_then(|latest| latest.kept_evaluation.clone()),
            },
        }
    }

    /// Start the analysis loop of `uri` unless one is running (it will pick up the new text).
    fn schedule_analysis(&self, uri: lsp::Url) {
        let loop_id = {
            let mut documents = lock(&self.state.documents);
            let Some(record) = documents.get_mut(&uri) else {
                return;
            };
            if record.data_document {
                drop(documents);
                let state = self.state.clone();
                tokio::spawn(async move {
                    check_data_document(state, uri).await;
                });
                return;
            }
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
        let result = pages::spawn_blocking(move || {
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
        // wait for a turn first, so the snapshot is the newest text when the run starts
        let Ok(permit) = state.analysis_permits.clone().acquire_owned().await else {
            return;
        };
        let mut permit = Some(permit);
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
        let mut task = pages::spawn_blocking(move || {
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
                    if started.elapsed() >= PROGRESS_AFTER {
                        // a run this slow waits on a read: it gives its turn to the others
                        permit = None;
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
        drop(permit);
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
        let wants_exact_evaluation = outcome
            .evaluation
            .as_ref()
            .is_some_and(|evaluation| evaluation.is_sample);
        let analysed_spec = outcome.parsed.clone();
        let (to_publish, full_profiles_arrived) = {
            let mut documents = lock(&state.documents);
            let Some(record) = owned_record(&mut documents, &uri, loop_id) else {
                return;
            };
            if record.document.generation != generation {
                continue; // stale: analyse the newer text
            }
            record.data_paths = features::data_paths(&outcome.data);
            let known_exactly = record
                .evaluation
                .as_ref()
                .is_some_and(|(known, evaluation)| *known == generation && !evaluation.is_sample);
            if let (Some(evaluation), false) = (&outcome.evaluation, known_exactly) {
                record.evaluation = Some((generation, evaluation.clone()));
            }
            // a full profile replaced a sample: the inlay hints (value ranges) are out of date
            let full_profiles_arrived = record.document.latest.as_ref().is_some_and(|previous| {
                previous.pending_full_scans.len() > outcome.pending_full_scans.len()
            });
            let diagnostics = published_diagnostics(&outcome, &uri, encoding);
            record.document.latest = Some(outcome);
            let published = PublishedSet::of(&diagnostics);
            let to_publish = if record.published.as_ref() == Some(&published) {
                None
            } else {
                record.published = Some(published);
                Some(diagnostics)
            };
            (to_publish, full_profiles_arrived)
        };
        // still the loop's turn: no other loop publishes for this document meanwhile
        if let Some(diagnostics) = to_publish {
            let (pull, refresh) = {
                let session = lock(&state.session);
                (
                    session.pull_diagnostics,
                    session.supports_diagnostic_refresh,
                )
            };
            if !pull {
                state
                    .client
                    .publish_diagnostics(uri.clone(), diagnostics, Some(version))
                    .await;
            } else if refresh {
                // the client pulls; tell it the answer changed (data or settings, not only text)
                let refreshed = tokio::time::timeout(
                    CLIENT_ANSWER_TIMEOUT,
                    state.client.workspace_diagnostic_refresh(),
                )
                .await;
                if !matches!(refreshed, Ok(Ok(()))) {
                    log::info(
                        "workspace/diagnostic/refresh: no answer or an error from the client",
                    );
                }
            }
        }
        for (path, read) in pending_full_scans {
            start_full_scan(state.clone(), path, read);
        }
        if wants_exact_evaluation {
            start_exact_evaluation(state.clone(), uri.clone(), generation, analysed_spec);
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

/// At most this many analyses start and run at once: opening thousands of documents at once
/// queues their analyses instead of starting a blocking thread for each (up to tokio's 512),
/// whose stacks and allocator heaps made most of the server's memory (10,000 small documents:
/// 515 threads, 636 MiB; with 4 at once 180 MiB; `tests/lsp_hostile.rs`). A run still going after
/// [`PROGRESS_AFTER`] (one waiting on a slow read) or abandoned for a newer text gives its turn
/// back, so slow reads never hold the others. markwell's choice, no source: two per core of the
/// 2-core machine it was measured on (each analysing thread keeps some of its peak in its
/// allocator heap: 8 at once cost 1.6 times the memory of 4 for 100 documents of 35 KB).
const ANALYSES_AT_ONCE: usize = 4;

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

/// How long a pull for diagnostics waits for the running analysis of the current text.
const PULL_WAIT: Duration = Duration::from_secs(10);

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

/// The text must rest this long before its exact evaluation starts, so that typing does not
/// start (and stop) a whole-file scan per keystroke. markwell's choice, no source.
const EXACT_EVALUATION_AFTER: Duration = Duration::from_millis(300);

/// Evaluate generation `generation` of `uri` exactly (over all rows) in the background, once the
/// text has rested; then analyse it again with that evaluation. Stops (and drops its result)
/// when the text is superseded or the document closed; one run per document at a time.
fn start_exact_evaluation(
    state: Arc<ServerState>,
    uri: lsp::Url,
    generation: u64,
    parsed: Arc<crate::analysis::ParsedDocument>,
) {
    let resolve = {
        let mut documents = lock(&state.documents);
        let Some(record) = documents.get_mut(&uri) else {
            return;
        };
        let done = record
            .evaluation
            .as_ref()
            .is_some_and(|(done, evaluation)| *done == generation && !evaluation.is_sample);
        if done
            || record.exact_evaluation_running.is_some()
            || record.document.generation != generation
        {
            return;
        }
        record.exact_evaluation_running = Some(generation);
        Backend::snapshot_of(&state, &uri, record).resolve
    };
    tokio::spawn(async move {
        tokio::time::sleep(EXACT_EVALUATION_AFTER).await;
        let still_current: crate::lsp::evaluate::StillCurrent = {
            let state = state.clone();
            let uri = uri.clone();
            Arc::new(move || {
                lock(&state.documents)
                    .get(&uri)
                    .is_some_and(|record| record.document.generation == generation)
            })
        };
        let evaluation = if still_current() {
            let task = pages::spawn_blocking(move || {
                // keyed before the rows are read: data changed meanwhile misses next time
                let pending = crate::lsp::evaluation_cache::pending_entry(&parsed, &resolve);
                let evaluation = Arc::new(crate::lsp::evaluate::evaluate_exactly(
                    &parsed.spec,
                    &resolve,
                    still_current,
                )?);
                let entry = pending.keep(&evaluation);
                Some((evaluation, entry))
            });
            match task.await {
                Ok(evaluation) => evaluation,
                Err(join_error) => {
                    log::error(&format!("the evaluation of {uri} failed: {join_error}"));
                    None
                }
            }
        } else {
            None
        };
        // `Some(None)`: stored, analyse again with it; `Some(Some(current))`: superseded, and the
        // current text was analysed already (and found this run busy), so its exact evaluation
        // starts from here; `None`: nothing to do
        let next = {
            let mut documents = lock(&state.documents);
            let Some(record) = documents.get_mut(&uri) else {
                return;
            };
            if record.exact_evaluation_running == Some(generation) {
                record.exact_evaluation_running = None;
            }
            match evaluation {
                Some((evaluation, entry)) if record.document.generation == generation => {
                    record.evaluation = Some((generation, evaluation));
                    // the next text reuses the exact evaluation when only its title,
                    // description or frame changed (see `evaluation_cache`)
                    record.kept_exact = entry.map(|entry| (generation, entry));
                    Some(None)
                }
                _ => record
                    .document
                    .current_analysis()
                    .filter(|current| {
                        current
                            .evaluation
                            .as_ref()
                            .is_some_and(|evaluation| evaluation.is_sample)
                    })
                    .map(Some),
            }
        };
        match next {
            Some(None) => Backend {
                state: state.clone(),
            }
            .schedule_analysis(uri),
            Some(Some(current)) => {
                start_exact_evaluation(state, uri, current.generation, current.parsed.clone())
            }
            None => {}
        }
    });
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
        let mut task = pages::spawn_blocking(move || {
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

fn server_capabilities(
    encoding: PositionEncoding,
    pull_diagnostics: bool,
) -> lsp::ServerCapabilities {
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
        document_formatting_provider: Some(lsp::OneOf::Left(true)),
        references_provider: Some(lsp::OneOf::Left(true)),
        rename_provider: Some(lsp::OneOf::Right(lsp::RenameOptions {
            prepare_provider: Some(true),
            work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
        })),
        workspace_symbol_provider: Some(lsp::OneOf::Left(true)),
        execute_command_provider: Some(lsp::ExecuteCommandOptions {
            commands: vec![CHECK_WORKSPACE_COMMAND.to_string()],
            work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
        }),
        document_range_formatting_provider: Some(lsp::OneOf::Left(true)),
        folding_range_provider: Some(lsp::FoldingRangeProviderCapability::Simple(true)),
        selection_range_provider: Some(lsp::SelectionRangeProviderCapability::Simple(true)),
        document_link_provider: Some(lsp::DocumentLinkOptions {
            resolve_provider: Some(false),
            work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
        }),
        semantic_tokens_provider: Some(
            lsp::SemanticTokensServerCapabilities::SemanticTokensOptions(
                lsp::SemanticTokensOptions {
                    work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
                    legend: convert::semantic_tokens_legend(),
                    range: None,
                    full: Some(lsp::SemanticTokensFullOptions::Bool(true)),
                },
            ),
        ),
        // pull diagnostics only for clients that ask for them; the others get them pushed
        diagnostic_provider: pull_diagnostics.then(|| {
            lsp::DiagnosticServerCapabilities::Options(lsp::DiagnosticOptions {
                identifier: Some("markwell".to_string()),
                inter_file_dependencies: true,
                workspace_diagnostics: true,
                work_done_progress_options: lsp::WorkDoneProgressOptions::default(),
            })
        }),
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
            session.pull_diagnostics = capabilities
                .text_document
                .as_ref()
                .and_then(|text_document| text_document.diagnostic.as_ref())
                .is_some();
            session.supports_diagnostic_refresh = workspace
                .and_then(|workspace| workspace.diagnostic.as_ref())
                .and_then(|diagnostic| diagnostic.refresh_support)
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
                capabilities: server_capabilities(encoding, session.pull_diagnostics),
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
        self.scan_workspace().await;
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
                data_document: is_data_document(&item.uri),
                analysis_loop: None,
                rerun_requested: false,
                published: None,
                data_paths: Vec::new(),
                evaluation: None,
                exact_evaluation_running: None,
                kept_exact: None,
            };
            lock(&self.state.documents).insert(item.uri.clone(), record);
        });
        if opened.is_ok() {
            // the open document's own analysis publishes for it from now on
            lock(&self.state.closed_published).remove(&item.uri);
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
        if removed.is_some_and(|record| record.published.is_some_and(|set| set.count > 0)) {
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
        // what was drawn from the changed files is drawn again
        for record in lock(&self.state.documents).values_mut() {
            if record
                .data_paths
                .iter()
                .any(|read| changed.iter().any(|path| same_file(read, path)))
            {
                record.evaluation = None;
            }
        }
        // spec files that changed on disk: the index reads them again (or forgets them)
        let specs_changed: Vec<(PathBuf, bool)> = params
            .changes
            .iter()
            .filter_map(|event| {
                let path = uri_to_path(&event.uri)?;
                let is_spec = path.file_name().is_some_and(|name| {
                    name.to_string_lossy()
                        .ends_with(crate::fsguard::SPEC_SUFFIX)
                });
                is_spec.then_some((path, event.typ == lsp::FileChangeType::DELETED))
            })
            .collect();
        if !specs_changed.is_empty() {
            workspace_ready(&self.state).await;
            let state = self.state.clone();
            let _ = tokio::task::spawn_blocking(move || {
                let mut index = lock(&state.workspace);
                for (path, deleted) in specs_changed {
                    if deleted {
                        index.remove(&path);
                    } else {
                        index.refresh(&path);
                    }
                }
            })
            .await;
        }
        // closed specs that depend on what changed are checked and published too
        {
            let canonical: Vec<PathBuf> = changed
                .iter()
                .map(|path| path.canonicalize().unwrap_or_else(|_| path.clone()))
                .collect();
            let config_changed = changed.iter().any(|path| {
                path.file_name()
                    .is_some_and(|name| name == CONFIG_FILE_NAME)
            });
            let state = self.state.clone();
            tokio::spawn(async move {
                check_closed_specs(state, move |spec| {
                    config_changed
                        || spec
                            .data_files
                            .iter()
                            .any(|file| canonical.iter().any(|changed| changed == file))
                })
                .await;
            });
        }
        let config_changed = changed.iter().any(|path| {
            path.file_name()
                .is_some_and(|name| name == CONFIG_FILE_NAME)
        });
        if config_changed {
            let _ = guarded("workspace/didChangeWatchedFiles", || {
                // the workspace rules may have changed which files can be read
                for record in lock(&self.state.documents).values_mut() {
                    record.evaluation = None;
                }
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
        if self.is_open_data_document(&uri) {
            return Ok(self.data_header_hover(&uri, position).await);
        }
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

    async fn formatting(
        &self,
        params: lsp::DocumentFormattingParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::TextEdit>>> {
        self.format_edits(&params.text_document.uri, None).await
    }

    async fn range_formatting(
        &self,
        params: lsp::DocumentRangeFormattingParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::TextEdit>>> {
        self.format_edits(&params.text_document.uri, Some(params.range))
            .await
    }

    async fn folding_range(
        &self,
        params: lsp::FoldingRangeParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::FoldingRange>>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/foldingRange", || {
            let ranges = structure::folding_ranges(&outcome.parsed.tree);
            Some(convert::to_folding_ranges(
                &outcome.index,
                &ranges,
                encoding,
            ))
        })
    }

    async fn selection_range(
        &self,
        params: lsp::SelectionRangeParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::SelectionRange>>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/selectionRange", || {
            let offsets: Vec<usize> = params
                .positions
                .iter()
                .map(|position| {
                    outcome
                        .index
                        .offset_of_position(from_lsp_position(*position), encoding)
                })
                .collect();
            let chains = structure::selection_ranges(&outcome.parsed.tree, &offsets);
            chains
                .iter()
                .map(|chain| convert::to_selection_range(&outcome.index, chain, encoding))
                .collect::<Option<Vec<_>>>()
        })
    }

    async fn document_link(
        &self,
        params: lsp::DocumentLinkParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::DocumentLink>>> {
        let uri = params.text_document.uri;
        let Some(outcome) = self.current_outcome(&uri).await else {
            return Ok(None);
        };
        let resolve = {
            let documents = lock(&self.state.documents);
            let Some(record) = documents.get(&uri) else {
                return Ok(None);
            };
            Self::snapshot_of(&self.state, &uri, record).resolve
        };
        let encoding = self.encoding();
        // resolving paths touches the file system: off the async workers
        let links = tokio::task::spawn_blocking(move || {
            catch_unwind(AssertUnwindSafe(|| {
                let links =
                    structure::document_links(&outcome.parsed.tree, &outcome.parsed.spec, &resolve);
                convert::to_document_links(&outcome.index, &links, encoding)
            }))
            .ok()
        })
        .await
        .ok()
        .flatten();
        Ok(links)
    }

    async fn semantic_tokens_full(
        &self,
        params: lsp::SemanticTokensParams,
    ) -> jsonrpc::Result<Option<lsp::SemanticTokensResult>> {
        let Some(outcome) = self.current_outcome(&params.text_document.uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/semanticTokens/full", || {
            let tokens = structure::semantic_tokens(&outcome.parsed.spec);
            Some(lsp::SemanticTokensResult::Tokens(lsp::SemanticTokens {
                result_id: None,
                data: convert::to_semantic_tokens(&outcome.index, &tokens, encoding),
            }))
        })
    }

    async fn diagnostic(
        &self,
        params: lsp::DocumentDiagnosticParams,
    ) -> jsonrpc::Result<lsp::DocumentDiagnosticReportResult> {
        let uri = params.text_document.uri;
        let encoding = self.encoding();
        // the analysis loop reads the data; answer with its result for the current text once it
        // is there (a fresh analysis without the data would report what the data would refute)
        let deadline = tokio::time::Instant::now() + PULL_WAIT;
        loop {
            let ready = {
                let documents = lock(&self.state.documents);
                documents
                    .get(&uri)
                    .is_none_or(|record| record.document.current_analysis().is_some())
            };
            if ready || tokio::time::Instant::now() >= deadline {
                break;
            }
            tokio::time::sleep(Duration::from_millis(5)).await;
        }
        let report = match self.current_outcome(&uri).await {
            Some(outcome) => {
                let items = guarded("textDocument/diagnostic", || {
                    published_diagnostics(&outcome, &uri, encoding)
                })?;
                // the id names the answer itself: data or settings can change it without a new text
                let result_id = result_id_of(&items);
                if params.previous_result_id.as_deref() == Some(result_id.as_str()) {
                    lsp::DocumentDiagnosticReport::Unchanged(
                        lsp::RelatedUnchangedDocumentDiagnosticReport {
                            related_documents: None,
                            unchanged_document_diagnostic_report:
                                lsp::UnchangedDocumentDiagnosticReport { result_id },
                        },
                    )
                } else {
                    lsp::DocumentDiagnosticReport::Full(lsp::RelatedFullDocumentDiagnosticReport {
                        related_documents: None,
                        full_document_diagnostic_report: lsp::FullDocumentDiagnosticReport {
                            result_id: Some(result_id),
                            items,
                        },
                    })
                }
            }
            // not open (or not a spec): nothing to report
            None => lsp::DocumentDiagnosticReport::Full(lsp::RelatedFullDocumentDiagnosticReport {
                related_documents: None,
                full_document_diagnostic_report: lsp::FullDocumentDiagnosticReport {
                    result_id: None,
                    items: Vec::new(),
                },
            }),
        };
        Ok(lsp::DocumentDiagnosticReportResult::Report(report))
    }

    async fn workspace_diagnostic(
        &self,
        params: lsp::WorkspaceDiagnosticParams,
    ) -> jsonrpc::Result<lsp::WorkspaceDiagnosticReportResult> {
        let previous: HashMap<lsp::Url, String> = params
            .previous_result_ids
            .into_iter()
            .map(|previous| (previous.uri, previous.value))
            .collect();
        let reports = closed_spec_reports(self.state.clone(), |_| true).await;
        let items = reports
            .into_iter()
            .map(|(uri, diagnostics)| {
                let result_id = result_id_of(&diagnostics);
                if previous.get(&uri) == Some(&result_id) {
                    lsp::WorkspaceDocumentDiagnosticReport::Unchanged(
                        lsp::WorkspaceUnchangedDocumentDiagnosticReport {
                            uri,
                            version: None,
                            unchanged_document_diagnostic_report:
                                lsp::UnchangedDocumentDiagnosticReport { result_id },
                        },
                    )
                } else {
                    lsp::WorkspaceDocumentDiagnosticReport::Full(
                        lsp::WorkspaceFullDocumentDiagnosticReport {
                            uri,
                            version: None,
                            full_document_diagnostic_report: lsp::FullDocumentDiagnosticReport {
                                result_id: Some(result_id),
                                items: diagnostics,
                            },
                        },
                    )
                }
            })
            .collect();
        Ok(lsp::WorkspaceDiagnosticReportResult::Report(
            lsp::WorkspaceDiagnosticReport { items },
        ))
    }

    async fn references(
        &self,
        params: lsp::ReferenceParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::Location>>> {
        let uri = params.text_document_position.text_document.uri;
        let position = params.text_document_position.position;
        let Some(target) = self.column_at(&uri, position).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let places = self.column_places(&target).await;
        let mut locations = Vec::new();
        if params.context.include_declaration {
            if let Some((header_uri, index, range)) = &places.header {
                locations.push(lsp::Location::new(
                    header_uri.clone(),
                    to_lsp_range(index, *range, encoding),
                ));
            }
        }
        for (spec_uri, index, ranges) in &places.specs {
            for range in ranges {
                locations.push(lsp::Location::new(
                    spec_uri.clone(),
                    to_lsp_range(index, *range, encoding),
                ));
            }
        }
        Ok(Some(locations))
    }

    async fn prepare_rename(
        &self,
        params: lsp::TextDocumentPositionParams,
    ) -> jsonrpc::Result<Option<lsp::PrepareRenameResponse>> {
        let Some(target) = self
            .column_at(&params.text_document.uri, params.position)
            .await
        else {
            return Ok(None);
        };
        let encoding = self.encoding();
        Ok(Some(lsp::PrepareRenameResponse::RangeWithPlaceholder {
            range: to_lsp_range(&target.origin_index, target.origin_range, encoding),
            placeholder: target.column.clone(),
        }))
    }

    async fn rename(
        &self,
        params: lsp::RenameParams,
    ) -> jsonrpc::Result<Option<lsp::WorkspaceEdit>> {
        let uri = params.text_document_position.text_document.uri;
        let position = params.text_document_position.position;
        let new_name = params.new_name;
        if new_name.is_empty() || new_name.contains(['\n', '\r']) {
            return Err(jsonrpc::Error::invalid_params(
                "a column name must not be empty or hold a line break",
            ));
        }
        let Some(target) = self.column_at(&uri, position).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        let places = self.column_places(&target).await;
        let mut changes: HashMap<lsp::Url, Vec<lsp::TextEdit>> = HashMap::new();
        let new_text = workspace::json_string(&new_name);
        for (spec_uri, index, ranges) in &places.specs {
            let edits = ranges
                .iter()
                .map(|range| lsp::TextEdit {
                    range: to_lsp_range(index, *range, encoding),
                    new_text: new_text.clone(),
                })
                .collect();
            changes.insert(spec_uri.clone(), edits);
        }
        // the data file is the user's: its header changes only when the rename starts there
        if target.from_header {
            if let Some((header_uri, index, range)) = &places.header {
                let delimiter = uri_to_path(header_uri)
                    .as_deref()
                    .and_then(workspace::delimiter_of)
                    .unwrap_or(b',');
                changes
                    .entry(header_uri.clone())
                    .or_default()
                    .push(lsp::TextEdit {
                        range: to_lsp_range(index, *range, encoding),
                        new_text: workspace::header_cell_text(&new_name, delimiter),
                    });
            }
        }
        Ok(Some(lsp::WorkspaceEdit {
            changes: Some(changes),
            ..lsp::WorkspaceEdit::default()
        }))
    }

    async fn symbol(
        &self,
        params: lsp::WorkspaceSymbolParams,
    ) -> jsonrpc::Result<Option<Vec<lsp::SymbolInformation>>> {
        let query = params.query.to_lowercase();
        workspace_ready(&self.state).await;
        let specs: Vec<workspace::IndexedSpec> = lock(&self.state.workspace)
            .specs
            .values()
            .cloned()
            .collect();
        let encoding = self.encoding();
        let symbols = tokio::task::spawn_blocking(move || {
            let mut symbols = Vec::new();
            for spec in specs {
                let Some(uri) = convert::file_uri(&spec.path) else {
                    continue;
                };
                let parsed = parse_document(&spec.text);
                let index = LineIndex::new(&spec.text);
                let file_name = spec
                    .path
                    .file_name()
                    .map(|name| name.to_string_lossy().into_owned())
                    .unwrap_or_default();
                let mut named: Vec<(String, lsp::SymbolKind, TextRange)> = Vec::new();
                let whole = TextRange::new(0, spec.text.len());
                let title = parsed
                    .spec
                    .title
                    .as_ref()
                    .map(|title| (title.value.clone(), title.range))
                    .unwrap_or_else(|| (file_name.clone(), whole));
                named.push((title.0, lsp::SymbolKind::FILE, title.1));
                for reference in features::column_references(&parsed.spec) {
                    named.push((
                        reference.name.to_string(),
                        lsp::SymbolKind::FIELD,
                        reference.range,
                    ));
                }
                for (name, kind, range) in named {
                    if !query.is_empty() && !name.to_lowercase().contains(&query) {
                        continue;
                    }
                    #[allow(deprecated)] // `deprecated` is a required field of SymbolInformation
                    symbols.push(lsp::SymbolInformation {
                        name,
                        kind,
                        tags: None,
                        deprecated: None,
                        location: lsp::Location::new(
                            uri.clone(),
                            to_lsp_range(&index, range, encoding),
                        ),
                        container_name: Some(file_name.clone()),
                    });
                    if symbols.len() >= MAX_WORKSPACE_SYMBOLS {
                        return symbols;
                    }
                }
            }
            symbols
        })
        .await
        .unwrap_or_default();
        Ok(Some(symbols))
    }

    async fn execute_command(
        &self,
        params: lsp::ExecuteCommandParams,
    ) -> jsonrpc::Result<Option<Value>> {
        if params.command != CHECK_WORKSPACE_COMMAND {
            return Err(jsonrpc::Error::invalid_params(format!(
                "no command `{}`; markwell has `{CHECK_WORKSPACE_COMMAND}`",
                params.command
            )));
        }
        self.scan_workspace().await;
        let (checked, findings) = check_closed_specs(self.state.clone(), |_| true).await;
        Ok(Some(
            serde_json::json!({ "checked": checked, "findings": findings }),
        ))
    }
}

impl Backend {
    /// Index every spec under the workspace root (off the async workers).
    async fn scan_workspace(&self) {
        let (root, allow_outside) = {
            let session = lock(&self.state.session);
            (
                session.workspace_root.clone(),
                session.allow_outside_workspace,
            )
        };
        let Some(root) = root else {
            self.state.workspace_scanned.store(true, Ordering::SeqCst);
            return;
        };
        let scanned = pages::spawn_blocking(move || {
            catch_unwind(AssertUnwindSafe(|| {
                WorkspaceIndex::scan(&root, allow_outside)
            }))
            .ok()
        })
        .await
        .ok()
        .flatten();
        if let Some(index) = scanned {
            log::info(&format!(
                "workspace: {} specs indexed{}",
                index.specs.len(),
                if index.left_out > 0 {
                    format!(
                        ", {} left out (at most {})",
                        index.left_out,
                        workspace::MAX_INDEXED_SPECS
                    )
                } else {
                    String::new()
                }
            ));
            *lock(&self.state.workspace) = index;
        }
        self.state.workspace_scanned.store(true, Ordering::SeqCst);
    }

    fn is_open_data_document(&self, uri: &lsp::Url) -> bool {
        lock(&self.state.documents)
            .get(uri)
            .is_some_and(|record| record.data_document)
    }

    /// The column under the cursor: a column reference in a spec, or a header cell of a data file.
    async fn column_at(&self, uri: &lsp::Url, position: lsp::Position) -> Option<ColumnTarget> {
        let encoding = self.encoding();
        if self.is_open_data_document(uri) {
            let index = lock(&self.state.documents).get(uri)?.document.index();
            let path = uri_to_path(uri)?;
            let delimiter = workspace::delimiter_of(&path)?;
            let offset = index.offset_of_position(from_lsp_position(position), encoding);
            let cell = workspace::header_cells(index.text(), delimiter)
                .into_iter()
                .find(|cell| cell.range.contains_inclusive(offset))?;
            return Some(ColumnTarget {
                data_file: path.canonicalize().ok()?,
                column: cell.name,
                from_header: true,
                origin_index: index,
                origin_range: cell.range,
            });
        }
        let outcome = self.current_outcome(uri).await?;
        let offset = outcome
            .index
            .offset_of_position(from_lsp_position(position), encoding);
        let references = features::column_references(&outcome.parsed.spec);
        let reference = references
            .iter()
            .find(|reference| reference.range.contains_inclusive(offset))?;
        let source = reference.source?;
        let data_file = match outcome.data.for_source(source)? {
            Ok(profile) => profile.path.clone()?,
            Err(error) => error.path.clone()?,
        };
        Some(ColumnTarget {
            data_file,
            column: reference.name.to_string(),
            from_header: false,
            origin_index: outcome.index.clone(),
            origin_range: reference.range,
        })
    }

    /// Where `target`'s column is named: in every spec of the workspace that reads its data file
    /// (open documents with their current text, the others from disk) and in the file's header.
    async fn column_places(&self, target: &ColumnTarget) -> ColumnPlaces {
        workspace_ready(&self.state).await;
        let (root, allow_outside) = {
            let session = lock(&self.state.session);
            (
                session.workspace_root.clone(),
                session.allow_outside_workspace,
            )
        };
        let mut texts: HashMap<PathBuf, (lsp::Url, Arc<LineIndex>)> = HashMap::new();
        let mut data_text: Option<(lsp::Url, Arc<LineIndex>)> = None;
        for (uri, record) in lock(&self.state.documents).iter() {
            let Some(path) = uri_to_path(uri).and_then(|path| path.canonicalize().ok()) else {
                continue;
            };
            if record.data_document {
                if path == target.data_file {
                    data_text = Some((uri.clone(), record.document.index()));
                }
            } else {
                texts.insert(path, (uri.clone(), record.document.index()));
            }
        }
        for spec in lock(&self.state.workspace).specs.values() {
            if texts.contains_key(&spec.path) {
                continue;
            }
            if let Some(uri) = convert::file_uri(&spec.path) {
                texts.insert(
                    spec.path.clone(),
                    (uri, Arc::new(LineIndex::from_shared(spec.text.clone()))),
                );
            }
        }
        let target = target.clone();
        tokio::task::spawn_blocking(move || {
            let mut specs = Vec::new();
            let mut paths: Vec<&PathBuf> = texts.keys().collect();
            paths.sort();
            for path in paths {
                let Some((uri, index)) = texts.get(path) else {
                    continue;
                };
                let parsed = parse_document(index.text());
                let resolve = workspace::resolve_options(path, root.as_deref(), allow_outside);
                let ranges = workspace::column_ranges(
                    &parsed.spec,
                    &resolve,
                    &target.data_file,
                    &target.column,
                );
                if !ranges.is_empty() {
                    specs.push((uri.clone(), index.clone(), ranges));
                }
            }
            let header = header_place(&target, data_text);
            ColumnPlaces { specs, header }
        })
        .await
        .unwrap_or_default()
    }

    /// Hover on a header cell of an open data file: the column's profile and the specs that use it.
    async fn data_header_hover(
        &self,
        uri: &lsp::Url,
        position: lsp::Position,
    ) -> Option<lsp::Hover> {
        let target = self.column_at(uri, position).await?;
        let encoding = self.encoding();
        let places = self.column_places(&target).await;
        let cache = self.state.cache.clone();
        let data_file = target.data_file.clone();
        let profile = pages::spawn_blocking(move || {
            cache
                .full_profile(&data_file, &ReadOptions::default(), &|_| true)
                .ok()
        })
        .await
        .ok()
        .flatten();
        let mut markdown = match profile
            .as_ref()
            .and_then(|profile| profile.column(&target.column))
        {
            Some(column) => features::column_markdown(column, Some(&target.data_file), None),
            None => format!(
                "**column `{}`**: no profile (the file could not be read)",
                target.column
            ),
        };
        markdown.push_str("\n\n");
        if places.specs.is_empty() {
            markdown.push_str("no spec in the workspace uses it");
        } else {
            markdown.push_str("used by:\n");
            for (spec_uri, _, ranges) in &places.specs {
                let name = uri_to_path(spec_uri)
                    .and_then(|path| {
                        path.file_name()
                            .map(|name| name.to_string_lossy().into_owned())
                    })
                    .unwrap_or_else(|| spec_uri.to_string());
                markdown.push_str(&format!("- `{name}` ({} places)\n", ranges.len()));
            }
        }
        Some(lsp::Hover {
            contents: lsp::HoverContents::Markup(lsp::MarkupContent {
                kind: lsp::MarkupKind::Markdown,
                value: markdown,
            }),
            range: Some(to_lsp_range(
                &target.origin_index,
                target.origin_range,
                encoding,
            )),
        })
    }

    /// Formatting edits for the current text of `uri` (whitespace only; nothing when the text
    /// has syntax errors, so a half-typed document is never touched).
    async fn format_edits(
        &self,
        uri: &lsp::Url,
        range: Option<lsp::Range>,
    ) -> jsonrpc::Result<Option<Vec<lsp::TextEdit>>> {
        let Some(outcome) = self.current_outcome(uri).await else {
            return Ok(None);
        };
        let encoding = self.encoding();
        guarded("textDocument/formatting", || {
            let byte_range =
                range.map(|range| convert::from_lsp_range(&outcome.index, range, encoding));
            match crate::syntax::format::format_edits(
                &outcome.parsed.tree,
                &crate::syntax::format::FormatOptions::default(),
                byte_range,
            ) {
                Ok(edits) => Some(convert::to_text_edits(&outcome.index, &edits, encoding)),
                Err(refusal) => {
                    log::info(&format!("formatting {uri}: {}", refusal.message()));
                    None
                }
            }
        })
    }
}

/// A column picked in a spec or in a data file's header.
#[derive(Clone, Debug)]
struct ColumnTarget {
    /// Canonical path of the data file.
    data_file: PathBuf,
    column: String,
    /// Picked on the header cell of the data file (rename then edits the header too).
    from_header: bool,
    /// Where it was picked, for `prepareRename`.
    origin_index: Arc<LineIndex>,
    origin_range: TextRange,
}

/// The places that name a column: per spec (uri, its text's index, the string ranges), and
/// the header cell of the data file.
#[derive(Default)]
struct ColumnPlaces {
    specs: Vec<(lsp::Url, Arc<LineIndex>, Vec<TextRange>)>,
    header: Option<(lsp::Url, Arc<LineIndex>, TextRange)>,
}

/// At most this many workspace symbols are answered.
const MAX_WORKSPACE_SYMBOLS: usize = 1000;

/// The header cell that names `target`'s column: in the open data document, or in the head of
/// the file on disk (read bounded, inside the workspace already: the path came from a resolve).
fn header_place(
    target: &ColumnTarget,
    open: Option<(lsp::Url, Arc<LineIndex>)>,
) -> Option<(lsp::Url, Arc<LineIndex>, TextRange)> {
    let delimiter = workspace::delimiter_of(&target.data_file)?;
    let (uri, index) = match open {
        Some(open) => open,
        None => {
            use std::io::Read;
            let (file, _) = crate::fsguard::open_regular(&target.data_file).ok()?;
            let mut head = Vec::new();
            file.take(1 << 20).read_to_end(&mut head).ok()?;
            let text = String::from_utf8_lossy(&head).into_owned();
            (
                convert::file_uri(&target.data_file)?,
                Arc::new(LineIndex::new(&text)),
            )
        }
    };
    let cell = workspace::header_cells(index.text(), delimiter)
        .into_iter()
        .find(|cell| cell.name == target.column)?;
    Some((uri, index, cell.range))
}

/// Data files open as documents get data diagnostics, not spec analysis (by the file name: a
/// `*.chart.json` is a spec; other `.json` files and delimited text are data).
fn is_data_document(uri: &lsp::Url) -> bool {
    let path = uri.path().to_ascii_lowercase();
    if path.ends_with(".chart.json") {
        return false;
    }
    [".csv", ".tsv", ".ndjson", ".jsonl", ".json"]
        .iter()
        .any(|extension| path.ends_with(extension))
}

/// The problems of an open data file (ragged rows, bad lines), from its profile on disk, as
/// diagnostics on the lines of the open text.
async fn check_data_document(state: Arc<ServerState>, uri: lsp::Url) {
    let Some(path) = uri_to_path(&uri) else {
        return;
    };
    let (index, version, root) = {
        let documents = lock(&state.documents);
        let Some(record) = documents.get(&uri) else {
            return;
        };
        (
            record.document.index(),
            record.document.version,
            lock(&state.session).workspace_root.clone(),
        )
    };
    let cache = state.cache.clone();
    let encoding = lock(&state.session).encoding;
    let diagnostics = tokio::task::spawn_blocking(move || {
        catch_unwind(AssertUnwindSafe(|| {
            // inside the workspace only, like every other read
            if let Some(root) = root {
                crate::fsguard::Containment::new(&root, false)
                    .resolve(&path)
                    .ok()?;
            }
            let profile = cache
                .full_profile(&path, &ReadOptions::default(), &|_| true)
                .ok()?;
            let mut out = Vec::new();
            for problem in profile.problems.iter().take(MAX_PUBLISHED_DIAGNOSTICS) {
                let line = problem.line.unwrap_or(0);
                let range = index
                    .line_content_range(line)
                    .unwrap_or_else(|| TextRange::new(0, 0));
                out.push(lsp::Diagnostic {
                    range: to_lsp_range(&index, range, encoding),
                    severity: Some(lsp::DiagnosticSeverity::WARNING),
                    code: Some(lsp::NumberOrString::String(
                        crate::analysis::rules::malformed_data::ID.to_string(),
                    )),
                    source: Some(convert::DIAGNOSTIC_SOURCE.to_string()),
                    message: problem.message.clone(),
                    ..lsp::Diagnostic::default()
                });
            }
            Some(out)
        }))
        .ok()
        .flatten()
    })
    .await
    .ok()
    .flatten()
    .unwrap_or_default();
    state
        .client
        .publish_diagnostics(uri, diagnostics, Some(version))
        .await;
}

/// Check a spec that is not open (from the workspace index) with the current configuration and
/// the cached profiles, and convert its findings for publishing.
fn check_closed_spec(
    spec: &workspace::IndexedSpec,
    root: Option<&Path>,
    allow_outside: bool,
    config: &AnalysisConfig,
    limits: crate::data::ProfileLimits,
    cache: &ProfileCache,
    encoding: PositionEncoding,
) -> Option<(lsp::Url, Vec<lsp::Diagnostic>)> {
    let uri = convert::file_uri(&spec.path)?;
    let parsed = parse_document(&spec.text);
    let mut resolve = workspace::resolve_options(&spec.path, root, allow_outside);
    resolve.limits = limits;
    let data = cache.load_for_spec(&parsed.spec, &resolve);
    // the sampled head, as the open documents' first pass: a workspace check reads each data file's
    // head once per spec, not every row
    let evaluation = crate::lsp::evaluate::evaluate_sampled(&parsed.spec, &resolve);
    let findings = analyze_with_evaluation(&parsed, &data, config, evaluation.as_ref());
    let index = LineIndex::new(&spec.text);
    let diagnostics = findings
        .iter()
        .take(MAX_PUBLISHED_DIAGNOSTICS)
        .map(|diagnostic| convert::to_lsp_diagnostic(diagnostic, &uri, &index, encoding))
        .collect();
    Some((uri, diagnostics))
}

/// Check the closed specs of the workspace that `wanted` selects and publish their findings
/// (an empty set clears what was shown before). Returns (specs checked, findings).
async fn check_closed_specs(
    state: Arc<ServerState>,
    wanted: impl Fn(&workspace::IndexedSpec) -> bool + Send + 'static,
) -> (usize, usize) {
    let results = closed_spec_reports(state.clone(), wanted).await;
    let checked = results.len();
    let findings = results
        .iter()
        .map(|(_, diagnostics)| diagnostics.len())
        .sum();
    let (pull, refresh) = {
        let session = lock(&state.session);
        (
            session.pull_diagnostics,
            session.supports_diagnostic_refresh,
        )
    };
    if pull {
        // the client pulls `workspace/diagnostic`: tell it the answers may have changed
        if refresh && checked > 0 {
            let refreshed = tokio::time::timeout(
                CLIENT_ANSWER_TIMEOUT,
                state.client.workspace_diagnostic_refresh(),
            )
            .await;
            if !matches!(refreshed, Ok(Ok(()))) {
                log::info("workspace/diagnostic/refresh: no answer or an error from the client");
            }
        }
        return (checked, findings);
    }
    for (uri, diagnostics) in results {
        let shown_before = lock(&state.closed_published).contains(&uri);
        if diagnostics.is_empty() && !shown_before {
            continue;
        }
        if diagnostics.is_empty() {
            lock(&state.closed_published).remove(&uri);
        } else {
            lock(&state.closed_published).insert(uri.clone());
        }
        state
            .client
            .publish_diagnostics(uri, diagnostics, None)
            .await;
    }
    (checked, findings)
}

/// The findings of the closed specs of the workspace that `wanted` selects, converted.
async fn closed_spec_reports(
    state: Arc<ServerState>,
    wanted: impl Fn(&workspace::IndexedSpec) -> bool + Send + 'static,
) -> Vec<(lsp::Url, Vec<lsp::Diagnostic>)> {
    workspace_ready(&state).await;
    let open: HashSet<PathBuf> = lock(&state.documents)
        .keys()
        .filter_map(uri_to_path)
        .filter_map(|path| path.canonicalize().ok())
        .collect();
    let specs: Vec<workspace::IndexedSpec> = lock(&state.workspace)
        .specs
        .values()
        .filter(|spec| !open.contains(&spec.path) && wanted(spec))
        .cloned()
        .collect();
    let (root, allow_outside, config, encoding, limits) = {
        let session = lock(&state.session);
        (
            session.workspace_root.clone(),
            session.allow_outside_workspace,
            session.config.clone(),
            session.encoding,
            session.profile_limits,
        )
    };
    let cache = state.cache.clone();
    let results = pages::spawn_blocking(move || {
        specs
            .iter()
            .filter_map(|spec| {
                catch_unwind(AssertUnwindSafe(|| {
                    check_closed_spec(
                        spec,
                        root.as_deref(),
                        allow_outside,
                        &config,
                        limits,
                        &cache,
                        encoding,
                    )
                }))
                .ok()
                .flatten()
            })
            .collect::<Vec<_>>()
    })
    .await
    .unwrap_or_default();
    results
}

/// A result id that names a set of diagnostics (pulled answers are "unchanged" when it is).
fn result_id_of(items: &[lsp::Diagnostic]) -> String {
    use std::hash::{Hash, Hasher};
    let mut hasher = std::collections::hash_map::DefaultHasher::new();
    serde_json::to_string(items)
        .unwrap_or_default()
        .hash(&mut hasher);
    format!("{:016x}", hasher.finish())
}

/// Wait (bounded) until the first scan of the workspace has ended: requests that need the
/// index can arrive while `initialized` is still scanning.
async fn workspace_ready(state: &ServerState) {
    let deadline = tokio::time::Instant::now() + PULL_WAIT;
    while !state.workspace_scanned.load(Ordering::SeqCst) && tokio::time::Instant::now() < deadline
    {
        tokio::time::sleep(Duration::from_millis(5)).await;
    }
}

/// The command that checks every spec of the workspace that is not open.
pub const CHECK_WORKSPACE_COMMAND: &str = "markwell.checkWorkspace";

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
