//! `markwell profile FILE...`: profile data files and print the profile as a text table with
//! histograms, or as JSON. A thin shell over `data::cache` and `data::render`.

use std::cell::Cell;
use std::io::{BufWriter, IsTerminal, Write};
use std::path::PathBuf;

use clap::{Args, ValueEnum};

use super::{EXIT_CLEAN, EXIT_TROUBLE};
use crate::data::render::{write_profile_json, write_profile_text};
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

/// Bytes gathered before a write to standard output (the profile's JSON comes in small pieces).
const OUTPUT_BUFFER_BYTES: usize = 64 * 1024;

/// Profile every file in turn and write each profile as soon as it is made, through a buffer:
/// nothing holds the whole output, so memory stays that of one profile however large its text
/// or JSON (a profile of 100,000 columns prints about 116 MB of JSON). One file's JSON is a
/// value (`null` when it could not be profiled); several files' are an array of those profiled.
pub fn run(args: &ProfileArgs, out: &mut dyn Write, err: &mut dyn Write) -> std::io::Result<u8> {
    let mut out = BufWriter::with_capacity(OUTPUT_BUFFER_BYTES, out);
    let code = run_buffered(args, &mut out, err)?;
    out.flush()?;
    Ok(code)
}

fn run_buffered(
    args: &ProfileArgs,
    out: &mut dyn Write,
    err: &mut dyn Write,
) -> std::io::Result<u8> {
    if let Some(problem) = args.budgets.problem() {
        writeln!(err, "markwell: {problem}")?;
        return Ok(2);
    }
    let limits = args.budgets.apply(crate::data::ProfileLimits::default());
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
    let one_json_value = args.files.len() == 1;
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
        // a cache of its own for each file: a profile is dropped once printed, so several wide
        // files never sit in memory together
        let cache = ProfileCache::new();
        let result = if args.sample {
            cache.sample_profile_within(&path, &read, &limits)
        } else {
            cache.full_profile_within(&path, &read, &limits, &progress)
        };
        if show_progress {
            eprintln!();
        }
        match result {
            Ok(profile) => {
                match args.format {
                    ProfileOutput::Text => {
                        if printed_any {
                            writeln!(out)?;
                        }
                        write_profile_text(&profile, out)?;
                    }
                    ProfileOutput::Json if one_json_value => {
                        write_profile_json(&profile, 0, out)?;
                        writeln!(out)?;
                    }
                    ProfileOutput::Json => {
                        // the array's pretty layout, one element at a time
                        write!(out, "{}", if printed_any { ",\n  " } else { "[\n  " })?;
                        write_profile_json(&profile, 1, out)?;
                    }
                }
                printed_any = true;
                // what is printed so far reaches the reader before any message about the next file
                out.flush()?;
            }
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
        match (one_json_value, printed_any) {
            (true, true) => {}
            (true, false) => writeln!(out, "null")?,
            (false, true) => writeln!(out, "\n]")?,
            (false, false) => writeln!(out, "[]")?,
        }
    }
    Ok(if trouble { EXIT_TROUBLE } else { EXIT_CLEAN })
}
