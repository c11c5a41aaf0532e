//! The command-line front end: `markwell check`, `draw`, `profile`, `format`, `rules`, `explain`,
//! `sources`, `serve`.
//! A thin shell: it finds files, reads them, calls the analysis and prints.

mod check;
mod draw;
mod fix;
mod format;
mod profile;
mod render;
mod report;
mod sarif;

use std::io::{self, Write};
use std::path::PathBuf;
use std::process::ExitCode;

use clap::error::{ContextKind, ContextValue, ErrorKind};
use clap::{Parser, Subcommand, ValueEnum};

use crate::diagnostic::Severity;

/// Exit code: no findings that fail the run.
pub const EXIT_CLEAN: u8 = 0;
/// Exit code: findings at or above the `--fail-on` severity (default `error`).
pub const EXIT_FINDINGS: u8 = 1;
/// Exit code: usage, configuration or I/O problems, or nothing to check.
pub const EXIT_TROUBLE: u8 = 2;

#[derive(Parser, Debug)]
#[command(
    name = "markwell",
    version,
    about = "Checks chart specs against their data and graphical-perception research"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum OutputFormat {
    /// Per spec what it draws, then its findings grouped by what they concern.
    Report,
    /// Machine-readable JSON.
    Json,
    /// SARIF 2.1.0 (OASIS), for code-scanning services.
    Sarif,
}

/// The lowest severity that fails the run (the words of `markwell.toml`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum FailOn {
    Error,
    Warning,
    Info,
    Hint,
}

impl FailOn {
    pub fn severity(self) -> Severity {
        match self {
            FailOn::Error => Severity::Error,
            FailOn::Warning => Severity::Warning,
            FailOn::Info => Severity::Info,
            FailOn::Hint => Severity::Hint,
        }
    }
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Check chart specs (files, or folders searched for `*.chart.json`).
    Check(check::CheckArgs),
    /// Draw chart specs as pictures (SVG or PNG), one per spec, into an output folder.
    Draw(draw::DrawArgs),
    /// Profile data files: kinds, missing values, distinct counts, ranges, histograms.
    Profile(profile::ProfileArgs),
    /// List the rules.
    Rules,
    /// Print the documentation of a rule.
    Explain {
        /// Rule id, as printed after the severity by `check`.
        id: String,
    },
    /// Where the numbers come from, and which tables are not yet checked against their source.
    Sources,
    /// Lay out spec files the one way (two-space indent, key order kept unless asked).
    Format(format::FormatArgs),
    /// Run the language server over stdin/stdout (LSP).
    Serve,
}

pub fn main() -> ExitCode {
    // not locked: `serve` writes to stdout from the server's own threads
    let mut out = ClosedPipeIsQuiet::new(io::stdout());
    let mut err = io::stderr();
    let outcome = run(std::env::args_os(), &mut out, &mut err);
    let flushed = out.flush();
    match (outcome, flushed) {
        (Ok(code), Ok(())) => code,
        (Err(error), _) | (_, Err(error)) => {
            // a full disk or another write error is never a silent success
            let _ = writeln!(err, "markwell: could not write the output: {error}");
            ExitCode::from(EXIT_TROUBLE)
        }
    }
}

/// Standard output that goes quiet when its reader closed the pipe (`markwell check | head -1`):
/// the rest is discarded and the command ends with its usual exit code, as Unix tools do. Any
/// other write error (a full disk) is passed on.
pub struct ClosedPipeIsQuiet<W: Write> {
    inner: W,
    closed: bool,
}

impl<W: Write> ClosedPipeIsQuiet<W> {
    pub fn new(inner: W) -> Self {
        ClosedPipeIsQuiet {
            inner,
            closed: false,
        }
    }
}

impl<W: Write> Write for ClosedPipeIsQuiet<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if self.closed {
            return Ok(buf.len());
        }
        match self.inner.write(buf) {
            Err(error) if error.kind() == io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(buf.len())
            }
            other => other,
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        if self.closed {
            return Ok(());
        }
        match self.inner.flush() {
            Err(error) if error.kind() == io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(())
            }
            other => other,
        }
    }
}

/// Parse `args` and run the command, writing through `out` and `err`. The language server
/// (`serve`) speaks over the process's own stdin and stdout and keeps its own exit codes.
pub fn run<I, T>(args: I, out: &mut dyn Write, err: &mut dyn Write) -> io::Result<ExitCode>
where
    I: IntoIterator<Item = T>,
    T: Into<std::ffi::OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(error) => {
            if error.use_stderr() {
                writeln!(err, "markwell: {}", argument_error_message(&error))?;
                return Ok(ExitCode::from(EXIT_TROUBLE));
            }
            // help and version
            write!(out, "{}", error.render())?;
            return Ok(ExitCode::from(EXIT_CLEAN));
        }
    };
    let code = match cli.command {
        Command::Check(args) => check::run(&args, out, err)?,
        Command::Draw(args) => draw::run(&args, out, err)?,
        Command::Profile(args) => profile::run(&args, out, err)?,
        Command::Format(args) => format::run(&args, out, err)?,
        Command::Rules => list_rules(out)?,
        Command::Explain { id } => explain(&id, out, err)?,
        Command::Sources => {
            out.write_all(crate::knowledge::SOURCES_PAGE.as_bytes())?;
            EXIT_CLEAN
        }
        Command::Serve => {
            out.flush()?;
            return Ok(crate::lsp::run_stdio());
        }
    };
    Ok(ExitCode::from(code))
}

fn context_text(value: Option<&ContextValue>) -> Option<String> {
    match value? {
        ContextValue::String(text) => Some(text.clone()),
        ContextValue::Strings(texts) => Some(texts.join(", ")),
        ContextValue::StyledStr(text) => Some(text.to_string()),
        ContextValue::StyledStrs(texts) => Some(
            texts
                .iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join(", "),
        ),
        ContextValue::Number(number) => Some(number.to_string()),
        _ => None,
    }
}

fn backticked_list(value: Option<&ContextValue>) -> Option<String> {
    let items: Vec<String> = match value? {
        ContextValue::String(text) => vec![text.clone()],
        ContextValue::Strings(texts) => texts.clone(),
        _ => return None,
    };
    let items: Vec<String> = items.iter().map(|item| format!("`{item}`")).collect();
    Some(match items.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("{} or {last}", rest.join(", ")),
        _ => items.join(""),
    })
}

/// An argument error in markwell's words: one sentence, then where to look.
pub fn argument_error_message(error: &clap::Error) -> String {
    let arg = context_text(error.get(ContextKind::InvalidArg));
    // `--format <FORMAT>` is named by its flag
    let flag = arg
        .as_deref()
        .map(|arg| arg.split(' ').next().unwrap_or(arg).to_string());
    let value = context_text(error.get(ContextKind::InvalidValue));
    let hint = "see `markwell --help`";
    let sentence = match error.kind() {
        ErrorKind::UnknownArgument => {
            let arg = arg.unwrap_or_default();
            match backticked_list(error.get(ContextKind::SuggestedArg)) {
                Some(suggestion) => {
                    format!("there is no option `{arg}`; did you mean {suggestion}?")
                }
                None => format!("there is no option `{arg}`"),
            }
        }
        ErrorKind::InvalidSubcommand => {
            let command =
                context_text(error.get(ContextKind::InvalidSubcommand)).unwrap_or_default();
            match backticked_list(error.get(ContextKind::SuggestedSubcommand)) {
                Some(suggestion) => {
                    format!("there is no command `{command}`; did you mean {suggestion}?")
                }
                None => format!(
                    "there is no command `{command}`; use `check`, `profile`, `rules`, `explain` or `serve`"
                ),
            }
        }
        ErrorKind::InvalidValue => {
            let flag = flag.unwrap_or_default();
            let value = value.unwrap_or_default();
            match backticked_list(error.get(ContextKind::ValidValue)) {
                Some(valid) if value.is_empty() => format!("`{flag}` needs a value: {valid}"),
                Some(valid) => format!("`{flag} {value}` is not an option; use {valid}"),
                None if value.is_empty() => format!("`{flag}` needs a value"),
                None => format!("`{flag}` does not take `{value}`"),
            }
        }
        ErrorKind::MissingRequiredArgument => {
            let missing = arg.unwrap_or_default();
            let missing = missing
                .split(", ")
                .map(|name| {
                    format!(
                        "`{}`",
                        name.trim_end_matches("...").trim_matches(['<', '>'])
                    )
                })
                .collect::<Vec<_>>()
                .join(" and ");
            format!("{missing} is missing")
        }
        ErrorKind::MissingSubcommand | ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
            "say what to do: `check`, `profile`, `rules`, `explain` or `serve`".to_string()
        }
        ErrorKind::ValueValidation => format!(
            "`{} {}` is not a valid value",
            flag.unwrap_or_default(),
            value.unwrap_or_default()
        ),
        ErrorKind::ArgumentConflict => {
            let flag = flag.unwrap_or_default();
            let other = context_text(error.get(ContextKind::PriorArg)).unwrap_or_default();
            let other = other.split(' ').next().unwrap_or("").to_string();
            if other == flag {
                format!("`{flag}` is given twice")
            } else {
                format!("`{flag}` cannot be used with `{other}`")
            }
        }
        _ => {
            // the first line of clap's own text, with its label removed and our quotes
            let rendered = error.render().to_string();
            let first = rendered.lines().next().unwrap_or("").trim();
            first
                .strip_prefix("error: ")
                .unwrap_or(first)
                .replace('\'', "`")
        }
    };
    format!("{sentence} ({hint})")
}

fn list_rules(out: &mut dyn Write) -> io::Result<u8> {
    let rules = crate::analysis::rules::registry();
    let width = rules.iter().map(|rule| rule.id.len()).max().unwrap_or(0);
    let mut group = "";
    for rule in rules {
        if rule.group != group {
            group = rule.group;
            writeln!(out, "{group}:")?;
        }
        let fix = if rule.has_fix { " (fix)" } else { "" };
        writeln!(
            out,
            "  {:width$}  {:7}  {}{fix}",
            rule.id,
            rule.default_severity.as_str(),
            rule.summary
        )?;
    }
    Ok(EXIT_CLEAN)
}

fn explain(id: &str, out: &mut dyn Write, err: &mut dyn Write) -> io::Result<u8> {
    match crate::analysis::rules::rule_by_id(id) {
        Some(rule) => {
            write!(out, "{}", rule.docs)?;
            writeln!(
                out,
                "\nDefault severity: {}. Quick fix: {}.",
                rule.default_severity.as_str(),
                if rule.has_fix { "yes" } else { "no" }
            )?;
            Ok(EXIT_CLEAN)
        }
        None => {
            let ids = crate::analysis::rules::registry()
                .iter()
                .map(|rule| rule.id);
            match crate::spec::suggest::closest_name(id, ids) {
                Some(suggestion) => writeln!(
                    err,
                    "markwell: there is no rule `{id}`; did you mean `{suggestion}`?"
                )?,
                None => writeln!(
                    err,
                    "markwell: there is no rule `{id}`; `markwell rules` lists them"
                )?,
            }
            Ok(EXIT_TROUBLE)
        }
    }
}

/// Paths given on the command line, or the current folder.
fn paths_or_current(paths: &[PathBuf]) -> Vec<PathBuf> {
    if paths.is_empty() {
        vec![PathBuf::from(".")]
    } else {
        paths.to_vec()
    }
}
