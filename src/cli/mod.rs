//! The command-line front end: `markwell check`, `profile`, `rules`, `explain`, `serve`.
//! A thin shell: it finds files, reads them, calls the analysis and prints.

mod check;
mod profile;
mod render;
mod sarif;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};

/// Exit code: no findings that fail the run.
pub const EXIT_CLEAN: u8 = 0;
/// Exit code: errors (or warnings with `--deny warnings`).
pub const EXIT_FINDINGS: u8 = 1;
/// Exit code: usage or I/O problems.
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
    /// Readable text with source snippets.
    Human,
    /// Machine-readable JSON.
    Json,
    /// SARIF 2.1.0 (OASIS), for code-scanning services.
    Sarif,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum DenyLevel {
    /// Warnings fail the run too.
    Warnings,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Check chart specs (files, or folders searched for `*.chart.json`).
    Check(check::CheckArgs),
    /// Profile data files: kinds, missing values, distinct counts, ranges, histograms.
    Profile(profile::ProfileArgs),
    /// List the rules.
    Rules,
    /// Print the documentation of a rule.
    Explain {
        /// Rule id, as printed in brackets by `check`.
        id: String,
    },
    /// Run the language server over stdin/stdout (LSP).
    Serve,
}

pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(error) => {
            let code = if error.use_stderr() {
                EXIT_TROUBLE
            } else {
                EXIT_CLEAN
            };
            let _ = error.print();
            return ExitCode::from(code);
        }
    };
    if let Command::Serve = cli.command {
        return crate::lsp::run_stdio();
    }
    // a safety net under every write to stdout: `print!` panics when the reader went away
    // (`markwell check | head -1`) or the disk is full; that must never be exit code 101
    let previous_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        if output_panic(info.payload()).is_none() {
            previous_hook(info);
        }
    }));
    let outcome = std::panic::catch_unwind(|| match cli.command {
        Command::Check(args) => check::run(&args),
        Command::Profile(args) => profile::run(&args),
        Command::Rules => list_rules(),
        Command::Explain { id } => explain(&id),
        Command::Serve => EXIT_CLEAN,
    });
    let code = match outcome {
        Ok(code) => code,
        Err(payload) => match output_panic(payload.as_ref()) {
            Some(true) => EXIT_CLEAN,
            Some(false) => {
                eprintln!("markwell: could not write the output");
                EXIT_TROUBLE
            }
            None => std::panic::resume_unwind(payload),
        },
    };
    ExitCode::from(code)
}

/// For a panic of `print!`: `Some(true)` when stdout was closed by its reader, `Some(false)`
/// for another write error; `None` for any other panic.
fn output_panic(payload: &(dyn std::any::Any + Send)) -> Option<bool> {
    let message = payload
        .downcast_ref::<String>()
        .map(String::as_str)
        .or_else(|| payload.downcast_ref::<&str>().copied())?;
    if !message.starts_with("failed printing to stdout") {
        return None;
    }
    Some(message.contains("Broken pipe") || message.contains("os error 32"))
}

/// The exit code after writing the output: `code` when it was written or when the reader
/// closed the pipe early (`| head -1`: quiet, as Unix tools do); a message and
/// [`EXIT_TROUBLE`] for any other write error (a full disk), never a silent success.
pub fn after_output(written: std::io::Result<()>, code: u8) -> u8 {
    match written {
        Ok(()) => code,
        Err(error) if error.kind() == std::io::ErrorKind::BrokenPipe => code,
        Err(error) => {
            eprintln!("markwell: could not write the output: {error}");
            EXIT_TROUBLE
        }
    }
}

/// Write `text` to stdout and flush it.
pub fn write_stdout(text: &str) -> std::io::Result<()> {
    use std::io::Write;
    let mut stdout = std::io::stdout().lock();
    stdout.write_all(text.as_bytes())?;
    stdout.flush()
}

fn list_rules() -> u8 {
    use std::fmt::Write;
    let rules = crate::analysis::rules::registry();
    let width = rules.iter().map(|rule| rule.id.len()).max().unwrap_or(0);
    let mut group = "";
    let mut out = String::new();
    for rule in rules {
        if rule.group != group {
            group = rule.group;
            let _ = writeln!(out, "{group}:");
        }
        let fix = if rule.has_fix { " (fix)" } else { "" };
        let _ = writeln!(
            out,
            "  {:width$}  {:7}  {}{fix}",
            rule.id,
            rule.default_severity.as_str(),
            rule.summary
        );
    }
    after_output(write_stdout(&out), EXIT_CLEAN)
}

fn explain(id: &str) -> u8 {
    match crate::analysis::rules::rule_by_id(id) {
        Some(rule) => {
            let text = format!(
                "{}\nDefault severity: {}. Quick fix: {}.\n",
                rule.docs,
                rule.default_severity.as_str(),
                if rule.has_fix { "yes" } else { "no" }
            );
            after_output(write_stdout(&text), EXIT_CLEAN)
        }
        None => {
            let ids = crate::analysis::rules::registry()
                .iter()
                .map(|rule| rule.id);
            match crate::spec::suggest::closest_name(id, ids) {
                Some(suggestion) => {
                    eprintln!("markwell: no rule `{id}`; did you mean `{suggestion}`?")
                }
                None => eprintln!("markwell: no rule `{id}`; `markwell rules` lists them"),
            }
            EXIT_TROUBLE
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
