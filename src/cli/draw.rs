//! `markwell draw`: find spec files (as `check` does), evaluate each over its data, lay it out and
//! write one picture per spec (SVG, or PNG through resvg) into the output folder.
//!
//! Exit codes: 0 when every spec was drawn in full; 1 when a spec had errors, left something
//! out, or could not be drawn while others were (stderr says what and why); 2 on trouble:
//! bad arguments, unreadable paths, a picture that could not be written, or nothing drawn.
//! Pictures are only ever written inside the output folder.

use std::collections::HashSet;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::analysis::parse_document;
use crate::data::ResolveOptions;
use crate::diagnostic::Severity;
use crate::draw::layout::layout;
use crate::draw::png::{svg_to_png, MAX_SCALE};
use crate::draw::svg::write_svg;
use crate::eval::{evaluate_chart, EvalOptions};

use super::check::{collect_spec_files, find_workspace_root, read_spec_text_within, SPEC_SUFFIX};
use super::report::printable;
use super::{EXIT_CLEAN, EXIT_FINDINGS, EXIT_TROUBLE};

/// Picture formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum PictureFormat {
    /// SVG 1.1 text, with a title and description for screen readers.
    Svg,
    /// PNG, rasterised from the SVG with the bundled font.
    Png,
}

impl PictureFormat {
    fn extension(self) -> &'static str {
        match self {
            PictureFormat::Svg => "svg",
            PictureFormat::Png => "png",
        }
    }
}

#[derive(clap::Args, Debug)]
pub struct DrawArgs {
    /// Spec files, or folders searched (recursively) for `*.chart.json`. Default: `.`.
    pub paths: Vec<PathBuf>,
    /// Folder the pictures are written to (created when missing). Default: the current folder.
    /// A spec found in a folder keeps its place below that folder.
    #[arg(short = 'o', long = "out", value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Picture format.
    #[arg(long, value_enum, default_value_t = PictureFormat::Svg)]
    pub format: PictureFormat,
    /// Pixels per CSS pixel for PNG (1 = the frame size).
    #[arg(long, default_value_t = 1.0)]
    pub scale: f32,
    /// Workspace root: data paths may not leave it (as for `check`).
    #[arg(long)]
    pub workspace: Option<PathBuf>,
    /// Allow `source.path` to point outside the workspace.
    #[arg(long)]
    pub allow_outside_workspace: bool,
    #[command(flatten)]
    pub evaluation_budget: super::check::EvaluateBudgetArgs,
}

/// Scans of at least this many specs report progress on stderr, at most once per interval.
const PROGRESS_FROM_SPECS: usize = 20;
const PROGRESS_INTERVAL: Duration = Duration::from_secs(1);

/// The picture's file name: the spec's name without `.chart.json` (or its last extension).
pub fn picture_name(spec: &Path, format: PictureFormat) -> String {
    let name = spec
        .file_name()
        .map(|name| name.to_string_lossy().into_owned())
        .unwrap_or_else(|| "chart".to_string());
    let stem = match name.strip_suffix(SPEC_SUFFIX) {
        Some(stem) if !stem.is_empty() => stem.to_string(),
        _ => Path::new(&name)
            .file_stem()
            .map(|stem| stem.to_string_lossy().into_owned())
            .unwrap_or(name.clone()),
    };
    format!("{stem}.{}", format.extension())
}

/// What happened to one spec.
enum Outcome {
    /// Drawn; `complete` is false when the spec had errors or something was left out.
    Drawn { complete: bool },
    /// Nothing could be drawn.
    NotDrawn,
    /// The picture could not be written (or the spec not read).
    Trouble,
}

pub fn run(args: &DrawArgs, out: &mut dyn Write, err: &mut dyn Write) -> io::Result<u8> {
    if args.format == PictureFormat::Png
        && !(args.scale.is_finite() && args.scale > 0.0 && args.scale <= MAX_SCALE)
    {
        writeln!(
            err,
            "markwell: `--scale {}`: give a number above 0 and at most {MAX_SCALE}",
            args.scale
        )?;
        return Ok(EXIT_TROUBLE);
    }
    if let Some(problem) = args.evaluation_budget.problem() {
        writeln!(err, "markwell: {problem}")?;
        return Ok(EXIT_TROUBLE);
    }
    let out_dir = args.out.clone().unwrap_or_else(|| PathBuf::from("."));
    if let Err(error) = std::fs::create_dir_all(&out_dir) {
        writeln!(
            err,
            "markwell: {}: cannot create the output folder: {error}",
            printable(&out_dir.display().to_string())
        )?;
        return Ok(EXIT_TROUBLE);
    }
    let out_root = match std::fs::canonicalize(&out_dir) {
        Ok(root) if root.is_dir() => root,
        _ => {
            writeln!(
                err,
                "markwell: {}: the output is not a folder",
                printable(&out_dir.display().to_string())
            )?;
            return Ok(EXIT_TROUBLE);
        }
    };

    // the specs, each with the folder it was found in (for its place below the output folder)
    let mut trouble = false;
    let mut specs: Vec<(PathBuf, PathBuf, Option<PathBuf>)> = Vec::new();
    for path in super::paths_or_current(&args.paths) {
        let mut found = Vec::new();
        if let Err(message) = collect_spec_files(&path, &mut found) {
            writeln!(err, "markwell: {}", printable(&message))?;
            trouble = true;
            continue;
        }
        if found.is_empty() && path.is_dir() {
            writeln!(
                err,
                "markwell: {}: no chart specs (`*{SPEC_SUFFIX}`) in this folder or below it",
                printable(&path.display().to_string())
            )?;
            trouble = true;
        }
        let (given, folder) = if path.is_dir() {
            (path.clone(), Some(path.clone()))
        } else {
            (
                path.parent().map(Path::to_path_buf).unwrap_or_default(),
                None,
            )
        };
        specs.extend(
            found
                .into_iter()
                .map(|spec| (spec, given.clone(), folder.clone())),
        );
    }

    let total = specs.len();
    let started = Instant::now();
    let mut last_progress = started;
    let mut written: HashSet<PathBuf> = HashSet::new();
    let (mut drawn, mut incomplete, mut not_drawn) = (0usize, 0usize, 0usize);
    for (index, (spec, given, folder)) in specs.iter().enumerate() {
        if total >= PROGRESS_FROM_SPECS && last_progress.elapsed() >= PROGRESS_INTERVAL {
            writeln!(err, "markwell: drawing {} of {total}", index + 1)?;
            last_progress = Instant::now();
        }
        // below the output folder: the spec's path relative to the folder it was found in
        let relative_dir = folder
            .as_ref()
            .and_then(|folder| spec.parent()?.strip_prefix(folder).ok())
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let target = out_root
            .join(&relative_dir)
            .join(picture_name(spec, args.format));
        let outcome = draw_one(args, spec, given, &out_root, &target, &mut written, err)?;
        match outcome {
            Outcome::Drawn { complete } => {
                drawn += 1;
                if !complete {
                    incomplete += 1;
                }
                writeln!(
                    out,
                    "{} -> {}",
                    printable(&spec.display().to_string()),
                    printable(&target.display().to_string())
                )?;
            }
            Outcome::NotDrawn => not_drawn += 1,
            Outcome::Trouble => trouble = true,
        }
    }
    if total >= PROGRESS_FROM_SPECS {
        writeln!(
            err,
            "markwell: drew {drawn} of {total} specs in {:.1} s",
            started.elapsed().as_secs_f64()
        )?;
    }
    Ok(if trouble || drawn == 0 {
        EXIT_TROUBLE
    } else if incomplete > 0 || not_drawn > 0 {
        EXIT_FINDINGS
    } else {
        EXIT_CLEAN
    })
}

fn draw_one(
    args: &DrawArgs,
    spec_path: &Path,
    given: &Path,
    out_root: &Path,
    target: &Path,
    written: &mut HashSet<PathBuf>,
    err: &mut dyn Write,
) -> io::Result<Outcome> {
    let shown = printable(&spec_path.display().to_string());
    let workspace_root = args
        .workspace
        .clone()
        .unwrap_or_else(|| find_workspace_root(spec_path, given));
    let text = match read_spec_text_within(spec_path, &workspace_root) {
        Ok(text) => text,
        Err(message) => {
            writeln!(err, "markwell: {shown}: {}", printable(&message))?;
            return Ok(Outcome::Trouble);
        }
    };
    let document = parse_document(&text.text);
    let errors: Vec<&crate::diagnostic::Diagnostic> = text
        .encoding_diagnostics
        .iter()
        .chain(&document.diagnostics)
        .filter(|diagnostic| diagnostic.severity == Severity::Error)
        .collect();
    // the project's configuration (containment opt-in, profile budgets), as `check` reads it
    let project = match super::check::load_project_config(None, &workspace_root) {
        Ok(project) => project,
        Err(errors) => {
            for error in errors {
                writeln!(
                    err,
                    "markwell: {}: {}",
                    printable(&error.path),
                    printable(&error.message)
                )?;
            }
            return Ok(Outcome::Trouble);
        }
    };
    let options = ResolveOptions {
        spec_dir: spec_path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from(".")),
        workspace_root: Some(workspace_root),
        allow_outside_workspace: args.allow_outside_workspace || project.allow_outside_workspace,
        limits: args.evaluation_budget.apply(project.profile_limits),
    };
    let mut open = |source: &crate::spec::model::Source| rows_for(source, &options);
    let chart = evaluate_chart(
        &document.spec,
        &mut open,
        &EvalOptions::with_time(options.limits.evaluation),
    );
    if !errors.is_empty() {
        let first = printable(&errors[0].message);
        writeln!(
            err,
            "markwell: {shown}: {} error{} in the spec (first: {first}); drawing what it can, \
             `markwell check` shows them all",
            errors.len(),
            if errors.len() == 1 { "" } else { "s" }
        )?;
    }
    for note in &chart.notes {
        let message = printable(&note.message);
        match note.layer {
            Some(layer) => writeln!(err, "markwell: {shown}: layer {}: {message}", layer + 1)?,
            None => writeln!(err, "markwell: {shown}: {message}")?,
        }
    }
    if chart.layers.is_empty() {
        writeln!(
            err,
            "markwell: {shown}: nothing to draw; no picture written"
        )?;
        return Ok(Outcome::NotDrawn);
    }
    let scene = layout(&chart);
    for note in &scene.notes {
        writeln!(err, "markwell: {shown}: {}", printable(note))?;
    }
    let svg = write_svg(&scene);
    let bytes = match args.format {
        PictureFormat::Svg => svg.into_bytes(),
        PictureFormat::Png => match svg_to_png(&svg, args.scale) {
            Ok(bytes) => bytes,
            Err(error) => {
                writeln!(err, "markwell: {shown}: {error}")?;
                return Ok(Outcome::Trouble);
            }
        },
    };
    if !written.insert(target.to_path_buf()) {
        writeln!(
            err,
            "markwell: {shown}: another spec of the same name was drawn to {} already; not overwritten",
            printable(&target.display().to_string())
        )?;
        return Ok(Outcome::Trouble);
    }
    if let Err(message) = write_inside(out_root, target, &bytes) {
        writeln!(err, "markwell: {shown}: {message}")?;
        return Ok(Outcome::Trouble);
    }
    let complete = errors.is_empty() && chart.notes.is_empty() && scene.notes.is_empty();
    Ok(Outcome::Drawn { complete })
}

/// Write `bytes` to `target`, which must stay inside `root` once its folder's links are
/// resolved; through a temporary file and a rename, so a reader never sees half a picture.
fn write_inside(root: &Path, target: &Path, bytes: &[u8]) -> Result<(), String> {
    let folder = target
        .parent()
        .ok_or_else(|| "the picture has no folder".to_string())?;
    std::fs::create_dir_all(folder)
        .map_err(|error| format!("cannot create {}: {error}", folder.display()))?;
    let resolved = std::fs::canonicalize(folder)
        .map_err(|error| format!("cannot resolve {}: {error}", folder.display()))?;
    if !resolved.starts_with(root) {
        return Err(format!(
            "{} leads outside the output folder; nothing written",
            folder.display()
        ));
    }
    let name = target
        .file_name()
        .ok_or_else(|| "the picture has no file name".to_string())?;
    let final_path = resolved.join(name);
    if std::fs::symlink_metadata(&final_path).is_ok_and(|metadata| !metadata.is_file()) {
        return Err(format!(
            "{} exists and is not a regular file; nothing written",
            final_path.display()
        ));
    }
    let temporary = resolved.join(format!(".{}.markwell-tmp", name.to_string_lossy()));
    std::fs::write(&temporary, bytes)
        .and_then(|()| std::fs::rename(&temporary, &final_path))
        .map_err(|error| {
            let _ = std::fs::remove_file(&temporary);
            format!("cannot write {}: {error}", final_path.display())
        })
}

/// The rows of a source, for the evaluation: every row (not the sampled head), read with the
/// containment of `check`.
fn rows_for(
    source: &crate::spec::model::Source,
    options: &ResolveOptions,
) -> Result<Box<dyn crate::eval::RowSource + Send>, crate::data::DataError> {
    crate::data::rows::open_rows(source, options, false)
}
