//! `markwell profile FILE...`: profile data files and print the profile as a text table with
//! histograms, or as JSON. A thin shell over `data::cache` and `data::render`.

use std::cell::Cell;
use std::io::{IsTerminal, Write};
use std::path::PathBuf;

use clap::{Args, ValueEnum};

use super::{EXIT_CLEAN, EXIT_TROUBLE};
use crate::data::render::{render_profile_json, render_profile_text};
use crate::data::resolve::resolve_source_path;
use crate::data::{ProfileCache, ReadOptions, ResolveOptions};
use crate::spec::model::DataFormat;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ProfileOutput {
    /// A readable table and histograms.
    Text,
    /// Machine-readable JSON.
    Json,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum DataFormatArgument {
    Csv,
    Tsv,
    Json,
    Ndjson,
}

impl DataFormatArgument {
    fn format(self) -> DataFormat {
        match self {
            DataFormatArgument::Csv => DataFormat::Csv,
            DataFormatArgument::Tsv => DataFormat::Tsv,
            DataFormatArgument::Json => DataFormat::Json,
            DataFormatArgument::Ndjson => DataFormat::Ndjson,
        }
    }
}

#[derive(Args, Debug)]
pub struct ProfileArgs {
    /// Data files (CSV, TSV, JSON array of objects, NDJSON).
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    pub format: ProfileOutput,
    /// Read only the first few MiB (fast, marked as a sample).
    #[arg(long)]
    pub sample: bool,
    /// How to read the files (default: from the extension and the first bytes).
    #[arg(long = "data-format", value_enum)]
    pub data_format: Option<DataFormatArgument>,
    /// Cell delimiter for delimited text (default: inferred).
    #[arg(long)]
    pub delimiter: Option<char>,
    #[command(flatten)]
    pub budgets: ProfileBudgetArgs,
}

/// The budgets of one profile on the command line (over `[data]` of `markwell.toml`).
#[derive(Args, Debug, Clone, Default)]
pub struct ProfileBudgetArgs {
    /// Memory budget of one profile in MiB (default 256, at least 16).
    #[arg(long, value_name = "MIB", value_parser = clap::value_parser!(u64).range(16..))]
    pub profile_memory_mib: Option<u64>,
    /// Time budget of one profile in seconds (default 60).
    #[arg(long, value_name = "SECONDS")]
    pub profile_seconds: Option<f64>,
}

impl ProfileBudgetArgs {
    /// `limits` with what the command line sets laid over it.
    pub fn apply(&self, mut limits: crate::data::ProfileLimits) -> crate::data::ProfileLimits {
        if let Some(mebibytes) = self.profile_memory_mib {
            limits.memory = crate::budget::MemoryBudget::mebibytes(mebibytes);
        }
        if let Some(seconds) = self.profile_seconds {
            limits.time = crate::budget::TimeBudget::seconds(seconds);
        }
        limits
    }

    /// A message when a setting is out of range.
    pub fn problem(&self) -> Option<String> {
        match self.profile_seconds {
            Some(seconds) if !(seconds.is_finite() && seconds > 0.0) => Some(format!(
                "`--profile-seconds {seconds}`: expected a number of seconds above 0"
            )),
            _ => None,
        }
    }
}

/// Files at least this big show progress on a terminal.
const PROGRESS_MINIMUM_BYTES: u64 = 64 << 20;

/// Whether `path` holds a chart spec rather than data: named `*.chart.json`, or a JSON object
/// (data in JSON is an array of objects) with a key only specs have.
fn is_chart_spec(path: &std::path::Path) -> bool {
    let name = path.to_string_lossy().to_lowercase();
    if name.ends_with(super::check::SPEC_SUFFIX) {
        return true;
    }
    if !name.ends_with(".json") {
        return false;
    }
    let mut head = Vec::new();
    let read = std::fs::File::open(path).and_then(|file| {
        std::io::Read::read_to_end(&mut std::io::Read::take(file, 64 * 1024), &mut head)
    });
    if read.is_err() {
        return false;
    }
    let text = String::from_utf8_lossy(&head);
    text.trim_start_matches('\u{feff}')
        .trim_start()
        .starts_with('{')
        && ["\"mark\"", "\"layers\"", "\"bind\""]
            .iter()
            .any(|key| text.contains(key))
}

pub fn run(args: &ProfileArgs, out: &mut dyn Write, err: &mut dyn Write) -> std::io::Result<u8> {
    if let Some(problem) = args.budgets.problem() {
        writeln!(err, "markwell: {problem}")?;
        return Ok(2);
    }
    let limits = args.budgets.apply(crate::data::ProfileLimits::default());
    let cache = ProfileCache::new();
    let read = ReadOptions {
        format: args.data_format.map(DataFormatArgument::format),
        delimiter: args.delimiter,
    };
    let options = ResolveOptions {
        spec_dir: std::env::current_dir().unwrap_or_default(),
        workspace_root: None,
        allow_outside_workspace: true,
        limits,
    };
    let mut trouble = false;
    let mut json_profiles = Vec::new();
    let mut printed_any = false;
    for file in &args.files {
        let shown = file.display().to_string();
        if is_chart_spec(file) {
            writeln!(
                err,
                "markwell: {shown}: is a chart spec, not a data file; `markwell check {shown}` checks it"
            )?;
            trouble = true;
            continue;
        }
        let path = match resolve_source_path(&file.to_string_lossy(), &options) {
            Ok(path) => path,
            Err(error) => {
                writeln!(
                    err,
                    "markwell: {shown}: {}",
                    crate::data::render::escape_control_characters(&error.to_string())
                )?;
                trouble = true;
                continue;
            }
        };
        let size = std::fs::metadata(&path).map_or(0, |metadata| metadata.len());
        let show_progress = std::io::stderr().is_terminal() && size >= PROGRESS_MINIMUM_BYTES;
        let last_percent = Cell::new(u32::MAX);
        let progress = |share: f64| {
            if show_progress {
                let percent = (share * 100.0).floor() as u32;
                if percent != last_percent.get() {
                    last_percent.set(percent);
                    eprint!("\rprofiling {shown}: {percent:>3}%");
                }
            }
            true
        };
        let result = if args.sample {
            cache.sample_profile_within(&path, &read, &limits)
        } else {
            cache.full_profile_within(&path, &read, &limits, &progress)
        };
        if show_progress {
            eprintln!();
        }
        match result {
            Ok(profile) => match args.format {
                ProfileOutput::Text => {
                    let separator = if printed_any { "\n" } else { "" };
                    printed_any = true;
                    write!(out, "{separator}{}", render_profile_text(&profile))?;
                }
                ProfileOutput::Json => json_profiles.push(render_profile_json(&profile)),
            },
            Err(error) => {
                writeln!(
                    err,
                    "markwell: {shown}: {}",
                    crate::data::render::escape_control_characters(&error.to_string())
                )?;
                trouble = true;
            }
        }
    }
    if args.format == ProfileOutput::Json {
        let value = if args.files.len() == 1 {
            json_profiles.pop().unwrap_or(serde_json::Value::Null)
        } else {
            serde_json::Value::Array(json_profiles)
        };
        match serde_json::to_string_pretty(&value) {
            Ok(text) => {
                writeln!(out, "{text}")?;
            }
            Err(error) => {
                writeln!(err, "markwell: could not write JSON: {error}")?;
                trouble = true;
            }
        }
    }
    Ok(if trouble { EXIT_TROUBLE } else { EXIT_CLEAN })
}
