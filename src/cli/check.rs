//! `markwell check`: find spec files, load their data, analyse, print, choose the exit code.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use crate::analysis::config::{
    parse_project_config, parse_severity_setting, ProjectConfig, CONFIG_FILE_NAME,
};
use crate::analysis::{analyze_with_evaluation, parse_document};
use crate::data::{ProfileCache, ResolveOptions};
use crate::diagnostic::{Diagnostic, Severity};

use super::fix::FixPlan;
use super::render::{render_json, CheckedFile, RunError};
use super::report::{outline, write_report, Palette, SpecOutline};
use super::{FailOn, OutputFormat, EXIT_CLEAN, EXIT_FINDINGS, EXIT_TROUBLE};

/// Spec files larger than this are refused with a clear error rather than read: real specs are
/// kilobytes, and analysis holds several copies of the text (tree, model, schema instance).
pub const MAX_SPEC_BYTES: u64 = 16 * 1024 * 1024;

/// Suffix of chart-spec files when searching folders.
pub use crate::fsguard::SPEC_SUFFIX;

#[derive(clap::Args, Debug)]
pub struct CheckArgs {
    /// Spec files, or folders searched (recursively) for `*.chart.json`. Default: `.`.
    pub paths: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = OutputFormat::Report)]
    pub format: OutputFormat,
    /// The lowest severity that fails the run (exit 1).
    #[arg(long, value_enum, value_name = "SEVERITY", default_value_t = FailOn::Error)]
    pub fail_on: FailOn,
    /// Apply the safe fixes (those marked `--fix:` in the report), show what changed, check again.
    #[arg(long)]
    pub fix: bool,
    /// With `--fix`: show what would change, write nothing.
    #[arg(long, requires = "fix")]
    pub preview: bool,
    /// Override a rule's severity: `RULE=error|warning|info|hint|off` (repeatable).
    #[arg(long = "severity", value_name = "RULE=LEVEL")]
    pub severities: Vec<String>,
    /// Active channel ranking (see `markwell rules`).
    #[arg(long)]
    pub ranking: Option<String>,
    /// Workspace root: data paths may not leave it. Default: the nearest folder above the spec
    /// with `markwell.toml` or `.git`, else the current folder.
    #[arg(long)]
    pub workspace: Option<PathBuf>,
    /// Allow `source.path` to point outside the workspace.
    #[arg(long)]
    pub allow_outside_workspace: bool,
    /// Configuration file (default: `markwell.toml` at the workspace root).
    #[arg(long)]
    pub config: Option<PathBuf>,
    #[command(flatten)]
    pub budgets: super::profile::ProfileBudgetArgs,
    #[command(flatten)]
    pub evaluation_budget: EvaluateBudgetArgs,
}

/// The time budget of evaluating one chart on the command line (over `[data]` of
/// `markwell.toml`), for `check` and `draw`.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct EvaluateBudgetArgs {
    /// Time budget of evaluating one chart over all of its rows, in seconds (default 60).
    #[arg(long, value_name = "SECONDS")]
    pub evaluate_seconds: Option<f64>,
}

impl EvaluateBudgetArgs {
    /// `limits` with the command line's evaluation budget laid over it.
    pub fn apply(&self, mut limits: crate::data::ProfileLimits) -> crate::data::ProfileLimits {
        if let Some(seconds) = self.evaluate_seconds {
            limits.evaluation = crate::budget::TimeBudget::seconds(seconds);
        }
        limits
    }

    /// A message when the setting is out of range.
    pub fn problem(&self) -> Option<String> {
        match self.evaluate_seconds {
            Some(seconds) if !(seconds.is_finite() && seconds > 0.0) => Some(format!(
                "`--evaluate-seconds {seconds}`: expected a number of seconds above 0"
            )),
            _ => None,
        }
    }
}

/// Extensions of data files (given to `check` by mistake).
const DATA_EXTENSIONS: &[&str] = &["csv", "tsv", "tab", "ndjson", "jsonl"];

/// Whether `path` names a data file rather than a spec: by its extension, or for `.json` files
/// that are not `*.chart.json`, by text that is a JSON array.
fn is_data_file(path: &Path, text: Option<&str>) -> bool {
    let name = path.to_string_lossy().to_lowercase();
    if name.ends_with(SPEC_SUFFIX) {
        return false;
    }
    let extension = path
        .extension()
        .map(|extension| extension.to_string_lossy().to_lowercase())
        .unwrap_or_default();
    if DATA_EXTENSIONS.contains(&extension.as_str()) {
        return true;
    }
    extension == "json"
        && text.is_some_and(|text| {
            text.trim_start_matches('\u{feff}')
                .trim_start()
                .starts_with('[')
        })
}

fn data_file_message(path: &Path) -> String {
    format!(
        "is a data file, not a chart spec; `markwell profile {}` describes it",
        path.display()
    )
}

struct Checker<'a> {
    args: &'a CheckArgs,
    command_line_config: crate::analysis::AnalysisConfig,
    cache: ProfileCache,
}

impl Checker<'_> {
    /// Analyse one spec text: (diagnostics, outline).
    fn analyse(
        &self,
        path: &Path,
        workspace_root: &Path,
        text: &str,
        encoding_diagnostics: Vec<Diagnostic>,
    ) -> Result<(Vec<Diagnostic>, SpecOutline), Vec<RunError>> {
        let project = load_project_config(self.args.config.as_deref(), workspace_root)?;
        let mut config = project.analysis.clone();
        config.merge(&self.command_line_config);
        let document = parse_document(text);
        let spec_dir = path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from("."));
        let options = ResolveOptions {
            spec_dir,
            workspace_root: Some(workspace_root.to_path_buf()),
            allow_outside_workspace: self.args.allow_outside_workspace
                || project.allow_outside_workspace,
            limits: self
                .args
                .evaluation_budget
                .apply(self.args.budgets.apply(project.profile_limits)),
        };
        let data = self.cache.load_for_spec(&document.spec, &options);
        let evaluation = evaluate_exactly(&document.spec, &options);
        let mut diagnostics = encoding_diagnostics;
        diagnostics.extend(analyze_with_evaluation(
            &document,
            &data,
            &config,
            evaluation.as_ref(),
        ));
        // messages quote data text: no control characters reach the terminal or the log
        for diagnostic in &mut diagnostics {
            if let std::borrow::Cow::Owned(escaped) =
                crate::data::render::escape_control_characters(&diagnostic.message)
            {
                diagnostic.message = escaped;
            }
        }
        Ok((diagnostics, outline(&document.spec, &data)))
    }
}

/// What the chart draws, evaluated over all of its rows (`check` has the time for the exact
/// evaluation), for the rules that judge the drawn values. A layer that cannot be evaluated is
/// named in the evaluation's notes; a panic inside it is caught and leaves the rules to the
/// profiles.
pub fn evaluate_exactly(
    spec: &crate::spec::model::ChartSpec,
    options: &ResolveOptions,
) -> Option<crate::eval::EvaluatedChart> {
    let mut open =
        |source: &crate::spec::model::Source| crate::data::rows::open_rows(source, options, false);
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        crate::eval::evaluate_chart(
            spec,
            &mut open,
            &crate::eval::EvalOptions::with_time(options.limits.evaluation),
        )
    }))
    .ok()
}

pub fn run(args: &CheckArgs, out: &mut dyn Write, err: &mut dyn Write) -> io::Result<u8> {
    if let Some(problem) = args
        .budgets
        .problem()
        .or_else(|| args.evaluation_budget.problem())
    {
        writeln!(err, "markwell: {problem}")?;
        return Ok(EXIT_TROUBLE);
    }
    let mut command_line_config = crate::analysis::AnalysisConfig::default();
    for setting in &args.severities {
        let Some((rule, level)) = setting.split_once('=') else {
            writeln!(err, "markwell: `--severity {setting}`: expected RULE=LEVEL")?;
            return Ok(EXIT_TROUBLE);
        };
        if crate::analysis::rules::rule_by_id(rule).is_none() {
            let ids = crate::analysis::rules::registry().iter().map(|r| r.id);
            match crate::spec::suggest::closest_name(rule, ids) {
                Some(suggestion) => writeln!(
                    err,
                    "markwell: `--severity {setting}`: there is no rule `{rule}`; did you mean `{suggestion}`?"
                )?,
                None => writeln!(
                    err,
                    "markwell: `--severity {setting}`: there is no rule `{rule}`; `markwell rules` lists them"
                )?,
            }
            return Ok(EXIT_TROUBLE);
        }
        match parse_severity_setting(level) {
            Ok(severity) => {
                command_line_config
                    .severity_overrides
                    .insert(rule.to_string(), severity);
            }
            Err(message) => {
                writeln!(err, "markwell: `--severity {setting}`: {message}")?;
                return Ok(EXIT_TROUBLE);
            }
        }
    }
    if let Some(ranking) = &args.ranking {
        if crate::knowledge::rankings::ranking_by_id(ranking).is_none() {
            writeln!(
                err,
                "markwell: `--ranking {ranking}`: no such ranking; choose one of {}",
                crate::knowledge::rankings::ranking_ids().join(", ")
            )?;
            return Ok(EXIT_TROUBLE);
        }
    }
    command_line_config.ranking = args.ranking.clone();

    let mut errors: Vec<RunError> = Vec::new();
    let mut files = Vec::new();
    let mut ceilings = Vec::new();
    let paths = super::paths_or_current(&args.paths);
    for path in &paths {
        let before = files.len();
        let outcome = collect_spec_files(path, &mut files);
        // the workspace root is looked for no higher than this (see `fsguard::discover_root`)
        let given = if path.is_dir() {
            path.clone()
        } else {
            path.parent().map(Path::to_path_buf).unwrap_or_default()
        };
        ceilings.extend(std::iter::repeat_n(given, files.len() - before));
        match outcome {
            Ok(()) => {
                if files.len() == before && path.is_dir() {
                    errors.push(RunError {
                        path: path.display().to_string(),
                        message: format!(
                            "no chart specs (`*{SPEC_SUFFIX}`) in this folder or below it"
                        ),
                    });
                }
            }
            Err(message) => {
                let shown = path.display().to_string();
                // the message may start with the path already
                let message = message
                    .strip_prefix(&format!("{shown}: "))
                    .map_or(message.clone(), str::to_string);
                errors.push(RunError {
                    path: shown,
                    message,
                })
            }
        }
    }

    let checker = Checker {
        args,
        command_line_config,
        cache: ProfileCache::new(),
    };
    let palette = Palette::for_stdout();
    let mut checked = Vec::new();
    let mut previews: Vec<u8> = Vec::new();
    // an invalid `markwell.toml` stops the run: no report on defaults
    let mut config_problems: Vec<RunError> = Vec::new();
    for (path, given) in files.into_iter().zip(ceilings) {
        let workspace_root = args
            .workspace
            .clone()
            .unwrap_or_else(|| find_workspace_root(&path, &given));
        if is_data_file(&path, None) {
            errors.push(RunError {
                path: path.display().to_string(),
                message: data_file_message(&path),
            });
            continue;
        }
        let text = match read_spec_text_within(&path, &workspace_root) {
            Ok(text) => text,
            Err(message) => {
                errors.push(RunError {
                    path: path.display().to_string(),
                    message,
                });
                continue;
            }
        };
        if is_data_file(&path, Some(&text.text)) {
            errors.push(RunError {
                path: path.display().to_string(),
                message: data_file_message(&path),
            });
            continue;
        }
        let (mut diagnostics, mut spec_outline) = match checker.analyse(
            &path,
            &workspace_root,
            &text.text,
            text.encoding_diagnostics,
        ) {
            Ok(result) => result,
            Err(problems) => {
                config_problems = problems;
                break;
            }
        };
        let mut spec_text = text.text;
        if args.fix {
            let shown = path.display().to_string();
            match super::fix::plan(&spec_text, &diagnostics) {
                FixPlan::Nothing => {}
                FixPlan::SyntaxErrors => writeln!(
                    previews,
                    "{} has syntax errors: --fix leaves it as it is\n",
                    super::report::printable(&shown)
                )?,
                FixPlan::Change {
                    new_text,
                    edits,
                    titles,
                } => {
                    let written = if args.preview {
                        false
                    } else {
                        match crate::fsguard::write_atomically(&path, new_text.as_bytes()) {
                            Ok(()) => true,
                            Err(error) => {
                                errors.push(RunError {
                                    path: shown.clone(),
                                    message: format!("--fix could not write it: {error}"),
                                });
                                false
                            }
                        }
                    };
                    super::fix::write_preview(
                        &mut previews,
                        &shown,
                        &spec_text,
                        &edits,
                        &titles,
                        written,
                    )?;
                    if written {
                        // check again what was written
                        (diagnostics, spec_outline) =
                            match checker.analyse(&path, &workspace_root, &new_text, Vec::new()) {
                                Ok(result) => result,
                                Err(problems) => {
                                    config_problems = problems;
                                    break;
                                }
                            };
                        spec_text = new_text;
                    }
                }
            }
        }
        checked.push(CheckedFile {
            path,
            lines: super::render::LineColumns::new(&spec_text),
            text: spec_text,
            diagnostics,
            outline: spec_outline,
        });
    }

    if !config_problems.is_empty() {
        if args.format == OutputFormat::Report {
            for problem in &config_problems {
                writeln!(
                    err,
                    "markwell: {}: {}",
                    super::report::printable(&problem.path),
                    super::report::printable(&problem.message)
                )?;
            }
            return Ok(EXIT_TROUBLE);
        }
        checked.clear();
        errors.extend(config_problems);
    }

    let fail_on = args.fail_on.severity();
    for error in &errors {
        writeln!(
            err,
            "markwell: {}: {}",
            super::report::printable(&error.path),
            super::report::printable(&error.message)
        )?;
    }
    match args.format {
        OutputFormat::Report => {
            out.write_all(&previews)?;
            if !checked.is_empty() {
                write_report(out, &checked, fail_on, &palette)?;
            }
        }
        OutputFormat::Json | OutputFormat::Sarif => {
            err.write_all(&previews)?;
            if args.format == OutputFormat::Json {
                writeln!(out, "{}", render_json(&checked, &errors))?;
            } else {
                writeln!(out, "{}", super::sarif::render_sarif(&checked))?;
            }
        }
    }

    let fails = |diagnostic: &Diagnostic| diagnostic.severity <= fail_on;
    if !errors.is_empty() || checked.is_empty() {
        Ok(EXIT_TROUBLE)
    } else if checked
        .iter()
        .any(|file| file.diagnostics.iter().any(fails))
    {
        Ok(EXIT_FINDINGS)
    } else {
        Ok(EXIT_CLEAN)
    }
}

/// A spec's text, with invalid UTF-8 replaced by U+FFFD and reported.
pub struct SpecText {
    pub text: String,
    pub encoding_diagnostics: Vec<Diagnostic>,
}

pub fn read_spec_text(path: &Path) -> Result<SpecText, String> {
    let bytes = crate::fsguard::read_bounded(path, MAX_SPEC_BYTES)
        .map_err(|refusal| describe_spec_refusal(&refusal))?;
    Ok(spec_text_from_bytes(bytes))
}

/// Like [`read_spec_text`], but only for a regular file inside `root` (a spec found in a folder
/// that is a symlink out of the workspace is refused and never read).
pub fn read_spec_text_within(path: &Path, root: &Path) -> Result<SpecText, String> {
    let containment = crate::fsguard::Containment::new(root, false);
    let canonical = containment
        .resolve(path)
        .map_err(|refusal| describe_spec_refusal(&refusal))?;
    read_spec_text(&canonical)
}

fn describe_spec_refusal(refusal: &crate::fsguard::Refusal) -> String {
    use crate::fsguard::Refusal;
    match refusal {
        Refusal::NotFound => "no such file or folder".to_string(),
        Refusal::Outside => {
            "leads outside the workspace (a symbolic link?); spec files are read only inside it"
                .to_string()
        }
        Refusal::TooLarge { size, .. } => match size {
            Some(size) => format!(
                "is {} MiB; specs larger than {} MiB are not read",
                size / (1024 * 1024),
                MAX_SPEC_BYTES / (1024 * 1024)
            ),
            None => format!(
                "is larger than {} MiB; specs larger than that are not read",
                MAX_SPEC_BYTES / (1024 * 1024)
            ),
        },
        Refusal::IsDirectory => "is a folder, not a spec file".to_string(),
        other => other.describe(),
    }
}

/// Decode spec bytes: invalid UTF-8 becomes U+FFFD, with a syntax error at the first bad byte.
pub fn spec_text_from_bytes(bytes: Vec<u8>) -> SpecText {
    match String::from_utf8(bytes) {
        Ok(text) => SpecText {
            text,
            encoding_diagnostics: Vec::new(),
        },
        Err(error) => {
            let valid_up_to = error.utf8_error().valid_up_to();
            let text = String::from_utf8_lossy(error.as_bytes()).into_owned();
            // the replacement character sits at `valid_up_to` in the decoded text too
            let end = text[valid_up_to..]
                .chars()
                .next()
                .map_or(valid_up_to, |c| valid_up_to + c.len_utf8());
            let diagnostic = Diagnostic::new(
                crate::analysis::rules::SYNTAX_ERROR,
                Severity::Error,
                crate::TextRange::new(valid_up_to, end),
                format!("the file is not valid UTF-8 (first bad byte at offset {valid_up_to})"),
            );
            SpecText {
                text,
                encoding_diagnostics: vec![diagnostic],
            }
        }
    }
}

pub use crate::fsguard::collect_spec_files;

/// The workspace root of a spec found through the command-line path `given`: see
/// [`crate::fsguard::discover_root`]; the walk stops at a `.git`, and goes no higher than the
/// current folder (when the spec is inside it) or else the path given.
pub fn find_workspace_root(spec_path: &Path, given: &Path) -> PathBuf {
    let current = std::env::current_dir().and_then(std::fs::canonicalize).ok();
    let spec_folder = spec_path.parent().and_then(|folder| {
        std::fs::canonicalize(if folder.as_os_str().is_empty() {
            Path::new(".")
        } else {
            folder
        })
        .ok()
    });
    let ceiling = match (&current, &spec_folder) {
        (Some(current), Some(folder)) if folder.starts_with(current) => current.clone(),
        _ => std::fs::canonicalize(if given.as_os_str().is_empty() {
            Path::new(".")
        } else {
            given
        })
        .unwrap_or_else(|_| given.to_path_buf()),
    };
    crate::fsguard::discover_root(spec_path, Some(&ceiling))
}

pub(super) fn load_project_config(
    explicit: Option<&Path>,
    workspace_root: &Path,
) -> Result<ProjectConfig, Vec<RunError>> {
    let (path, required) = match explicit {
        Some(path) => (path.to_path_buf(), true),
        None => (workspace_root.join(CONFIG_FILE_NAME), false),
    };
    let problem = |message: String| RunError {
        path: path.display().to_string(),
        message,
    };
    let text = if required {
        crate::fsguard::read_config_file(&path).map_err(|message| vec![problem(message)])?
    } else {
        // only a regular file inside the workspace, bounded, never blocking
        let shown = format!("{}: ", path.display());
        match crate::fsguard::read_root_config(workspace_root) {
            Ok(Some(text)) => text,
            Ok(None) => return Ok(ProjectConfig::default()),
            Err(message) => {
                let message = message.strip_prefix(&shown).unwrap_or(&message).to_string();
                return Err(vec![problem(message)]);
            }
        }
    };
    let (config, warnings) =
        parse_project_config(&text).map_err(|message| vec![problem(message)])?;
    if !warnings.is_empty() {
        // a misspelt rule, severity or key is not silently replaced by the defaults
        let mut problems: Vec<RunError> = warnings.into_iter().map(problem).collect();
        problems.push(problem("fix the configuration and run again".to_string()));
        return Err(problems);
    }
    Ok(config)
}
