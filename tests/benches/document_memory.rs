//! Benchmark: the bytes the language server keeps per open document, by stage, for the 35 KB
//! specs of `tests/lsp_hostile.rs` (400 point layers with a title and two bindings) and a
//! smaller and a larger one. Counted with a counting global allocator over mimalloc (the
//! binary's allocator): live bytes after each stage is built and kept, as the server keeps it
//! (`OpenDocument` with its rope and line index, the latest `AnalysisOutcome` with the parsed
//! document sharing the index's text, the data context, the sampled evaluation and the
//! findings; the published LSP diagnostics are shown but not kept: the server keeps a digest).
//! Run with `cargo bench --bench document_memory`. Prints figures; asserts nothing.

use std::alloc::{GlobalAlloc, Layout};
use std::path::PathBuf;
use std::sync::atomic::{AtomicIsize, Ordering};
use std::sync::Arc;

use markwell::analysis::{
    analyze_with_evaluation, parse_document, parse_shared_document, AnalysisConfig,
};
use markwell::data::{ProfileCache, ResolveOptions};
use markwell::lsp::documents::OpenDocument;
use markwell::positions::{LineIndex, PositionEncoding};

/// Counts the bytes live through mimalloc.
struct Counting;

static LIVE: AtomicIsize = AtomicIsize::new(0);
/// The highest `LIVE` seen since the last [`reset_peak`].
static PEAK: AtomicIsize = AtomicIsize::new(0);

fn note_peak() {
    let now = LIVE.load(Ordering::Relaxed);
    PEAK.fetch_max(now, Ordering::Relaxed);
}

fn reset_peak() {
    PEAK.store(LIVE.load(Ordering::Relaxed), Ordering::Relaxed);
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        LIVE.fetch_add(layout.size() as isize, Ordering::Relaxed);
        note_peak();
        // SAFETY: forwarded unchanged to mimalloc
        unsafe { mimalloc::MiMalloc.alloc(layout) }
    }
    unsafe fn dealloc(&self, pointer: *mut u8, layout: Layout) {
        LIVE.fetch_sub(layout.size() as isize, Ordering::Relaxed);
        // SAFETY: forwarded unchanged to mimalloc
        unsafe { mimalloc::MiMalloc.dealloc(pointer, layout) }
    }
    unsafe fn realloc(&self, pointer: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        LIVE.fetch_add(
            new_size as isize - layout.size() as isize,
            Ordering::Relaxed,
        );
        // SAFETY: forwarded unchanged to mimalloc
        unsafe { mimalloc::MiMalloc.realloc(pointer, layout, new_size) }
    }
}

#[global_allocator]
static ALLOCATOR: Counting = Counting;

fn live() -> isize {
    LIVE.load(Ordering::Relaxed)
}

/// The document of `tests/lsp_hostile.rs` with `layers` point layers.
fn quay_spec(layers: usize) -> String {
    let mut text = String::from("{ \"mark\": \"bar\", \"layers\": [");
    for layer in 0..layers {
        if layer > 0 {
            text.push_str(", ");
        }
        text.push_str(&format!(
            "{{ \"mark\": \"point\", \"title\": \"quay 0-{layer}\", \"bind\": {{ \"x\": \"pier\", \"y\": \"crossings\" }} }}"
        ));
    }
    text.push_str("] }");
    text
}

/// Live bytes `build` leaves behind, with what it built (kept alive by the caller); the
/// transient peak above the start is printed when it is more than twice what is kept.
fn kept<T>(build: impl FnOnce() -> T) -> (T, isize) {
    let before = live();
    reset_peak();
    let value = build();
    let kept = live() - before;
    let peak = PEAK.load(Ordering::Relaxed) - before;
    if peak > 2 * kept.max(1) && peak > 100_000 {
        println!("  (while building the next: a transient peak of {peak} bytes)");
    }
    (value, kept)
}

fn measure(text: String, layers: usize) {
    let size = text.len() as f64;
    let times = |bytes: isize| bytes as f64 / size;
    let mut total = 0isize;
    let line = |name: &str, bytes: isize, total: &mut isize| {
        *total += bytes;
        println!("  {name:<44} {bytes:>10} bytes  {:>6.1}x", times(bytes));
    };
    println!("spec of {layers} layers, {} bytes:", text.len());

    let (document, bytes) = kept(|| OpenDocument::new(&text, 1, "chartspec".into()));
    line(
        "open document (rope + line index + text)",
        bytes,
        &mut total,
    );
    let (tree, bytes) = kept(|| markwell::syntax::parse(&text));
    println!(
        "  (syntax tree alone, not kept:             {bytes:>10} bytes  {:>6.1}x)",
        times(bytes)
    );
    let (lowered, bytes) = kept(|| markwell::spec::lower_document(&tree));
    println!(
        "  (  model + its findings ({:>5}), not kept:   {bytes:>10} bytes  {:>6.1}x)",
        lowered.1.len(),
        times(bytes)
    );
    let (schema, bytes) = kept(|| markwell::spec::schema::check_schema(&tree));
    println!(
        "  (  schema findings ({:>5}), not kept:        {bytes:>10} bytes  {:>6.1}x)",
        schema.len(),
        times(bytes)
    );
    drop((schema, lowered, tree));
    // the tree shares the line index's text, as in the server
    let (parsed, bytes) = kept(|| Arc::new(parse_shared_document(document.index().shared_text())));
    line(
        "parsed document (tree + model + findings)",
        bytes,
        &mut total,
    );
    let cache = ProfileCache::new();
    let resolve = ResolveOptions {
        spec_dir: PathBuf::from("/"),
        workspace_root: None,
        allow_outside_workspace: false,
        limits: Default::default(),
    };
    let (data, bytes) = kept(|| Arc::new(cache.load_for_spec_sampled(&parsed.spec, &resolve)));
    line("data context", bytes, &mut total);
    let (evaluation, bytes) =
        kept(|| markwell::lsp::evaluate::evaluate_sampled(&parsed.spec, &resolve));
    line("sampled evaluation", bytes, &mut total);
    let config = AnalysisConfig::default();
    let (diagnostics, bytes) =
        kept(|| analyze_with_evaluation(&parsed, &data, &config, evaluation.as_ref()));
    line(
        &format!("findings ({})", diagnostics.len()),
        bytes,
        &mut total,
    );
    let uri = markwell::lsp::convert::file_uri(std::path::Path::new("/quay.chart.json"));
    let index: Arc<LineIndex> = document.index();
    let (published, bytes) = kept(|| {
        uri.as_ref().map(|uri| {
            diagnostics
                .iter()
                .take(1000)
                .map(|d| {
                    markwell::lsp::convert::to_lsp_diagnostic(
                        d,
                        uri,
                        &index,
                        PositionEncoding::Utf16,
                    )
                })
                .collect::<Vec<_>>()
        })
    });
    println!(
        "  (published diagnostics, lsp form: sent, not kept: {bytes:>10} bytes  {:>6.1}x)",
        times(bytes)
    );
    println!(
        "  {:<44} {total:>10} bytes  {:>6.1}x",
        "total",
        times(total)
    );
    drop((published, diagnostics, evaluation, data, parsed, document));
}

fn resident_kib() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .unwrap_or_default()
        .lines()
        .find_map(|line| line.strip_prefix("VmRSS:"))
        .and_then(|rest| rest.trim().trim_end_matches("kB").trim().parse().ok())
        .unwrap_or(0)
}

/// What the server keeps of one analysed document, built as the analysis builds it.
fn analysed(text: &str) -> impl Sized {
    let document = OpenDocument::new(text, 1, "chartspec".into());
    let parsed = parse_shared_document(document.index().shared_text());
    let cache = ProfileCache::new();
    let resolve = ResolveOptions {
        spec_dir: PathBuf::from("/"),
        workspace_root: None,
        allow_outside_workspace: false,
        limits: Default::default(),
    };
    let data = cache.load_for_spec_sampled(&parsed.spec, &resolve);
    let evaluation = markwell::lsp::evaluate::evaluate_sampled(&parsed.spec, &resolve);
    let diagnostics = analyze_with_evaluation(
        &parsed,
        &data,
        &AnalysisConfig::default(),
        evaluation.as_ref(),
    );
    let index = document.index();
    let published: Vec<_> = markwell::lsp::convert::file_uri(std::path::Path::new("/q.chart.json"))
        .map(|uri| {
            diagnostics
                .iter()
                .take(1000)
                .map(|d| {
                    markwell::lsp::convert::to_lsp_diagnostic(
                        d,
                        &uri,
                        &index,
                        PositionEncoding::Utf16,
                    )
                })
                .collect()
        })
        .unwrap_or_default();
    drop(published);
    (document, parsed, data, evaluation, diagnostics)
}

/// 100 documents analysed one after the other on one thread and kept: resident growth against
/// live bytes (the allocator's slack around what is kept).
fn hundred_kept(layers: usize) {
    let text = quay_spec(layers);
    let (rss_before, live_before) = (resident_kib(), live());
    let kept: Vec<_> = (0..100).map(|_| analysed(&text)).collect();
    let (rss_after, live_after) = (resident_kib(), live());
    let size = 100.0 * text.len() as f64;
    println!(
        "100 documents of {} bytes kept: live {:.1}x the text, resident {:.1}x",
        text.len(),
        (live_after - live_before) as f64 / size,
        (rss_after.saturating_sub(rss_before) * 1024) as f64 / size
    );
    drop(kept);
}

fn main() {
    sizes();
    // the schema is compiled once per process: not a cost of a document
    drop(parse_document(&quay_spec(1)));
    measure(
        "{ \"mark\": \"bar\", \"title\": \"ferry crossings 17\", \"source\": { \"rows\": [{ \"pier\": \"north\", \"crossings\": 17 }] }, \"bind\": { \"x\": \"pier\", \"y\": \"crossings\" } }".to_string(),
        1,
    );
    for layers in [40, 400, 4000] {
        measure(quay_spec(layers), layers);
    }
    hundred_kept(400);
}
#[allow(dead_code)]
fn sizes() {
    use markwell::spec::model::*;
    println!(
        "Layer {} Binding {} Diagnostic {} Style {} Source {} Mapping {}",
        std::mem::size_of::<Layer>(),
        std::mem::size_of::<Binding>(),
        std::mem::size_of::<markwell::Diagnostic>(),
        std::mem::size_of::<Style>(),
        std::mem::size_of::<Source>(),
        std::mem::size_of::<Mapping>()
    );
}
