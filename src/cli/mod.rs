//! The command-line front end: `markwell check`, `profile`, `rules`, `explain`, `sources`,
//! `serve`.
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
    /// Where the numbers come from, and which tables are not yet checked against their source.
    Sources,
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
    let code = match cli.command {
        Command::Check(args) => check::run(&args),
        Command::Profile(args) => profile::run(&args),
        Command::Rules => list_rules(),
        Command::Explain { id } => explain(&id),
        Command::Sources => {
            print!("{}", crate::knowledge::SOURCES_PAGE);
            EXIT_CLEAN
        }
        Command::Serve => return crate::lsp::run_stdio(),
    };
    ExitCode::from(code)
}

fn list_rules() -> u8 {
    let rules = crate::analysis::rules::registry();
    let width = rules.iter().map(|rule| rule.id.len()).max().unwrap_or(0);
    let mut group = "";
    for rule in rules {
        if rule.group != group {
            group = rule.group;
            println!("{group}:");
        }
        let fix = if rule.has_fix { " (fix)" } else { "" };
        println!(
            "  {:width$}  {:7}  {}{fix}",
            rule.id,
            rule.default_severity.as_str(),
            rule.summary
        );
    }
    EXIT_CLEAN
}

fn explain(id: &str) -> u8 {
    match crate::analysis::rules::rule_by_id(id) {
        Some(rule) => {
            print!("{}", rule.docs);
            println!(
                "\nDefault severity: {}. Quick fix: {}.",
                rule.default_severity.as_str(),
                if rule.has_fix { "yes" } else { "no" }
            );
            EXIT_CLEAN
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
