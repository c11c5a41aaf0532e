//! `markwell format`: lay out spec files the one way (`syntax::format`), in place or, with
//! `--check`, only say which would change (for CI). Files are found and read as `check` finds
//! and reads them (inside the workspace, regular files, bounded); a file is replaced atomically,
//! and a file with syntax errors, comments or invalid UTF-8 is never written.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use clap::Args;

use super::{EXIT_CLEAN, EXIT_FINDINGS, EXIT_TROUBLE};
use crate::syntax::format::{format_text, FormatOptions};

#[derive(Args, Debug)]
pub struct FormatArgs {
    /// Spec files, or folders searched for `*.chart.json` (default: the current folder).
    pub paths: Vec<PathBuf>,
    /// Write nothing; list the specs whose layout would change and exit with 1 if any would.
    #[arg(long)]
    pub check: bool,
    /// Order each object's keys alphabetically (by default the order is kept).
    #[arg(long)]
    pub sort_keys: bool,
}

pub fn run(args: &FormatArgs, out: &mut dyn Write, err: &mut dyn Write) -> io::Result<u8> {
    let options = FormatOptions {
        sort_keys: args.sort_keys,
        ..FormatOptions::default()
    };
    let mut trouble = false;
    let mut files: Vec<(PathBuf, PathBuf)> = Vec::new();
    for path in super::paths_or_current(&args.paths) {
        let before = files.len();
        let mut found = Vec::new();
        if let Err(message) = super::check::collect_spec_files(&path, &mut found) {
            writeln!(err, "markwell: {message}")?;
            trouble = true;
            continue;
        }
        let given = if path.is_dir() {
            path.clone()
        } else {
            path.parent().map(Path::to_path_buf).unwrap_or_default()
        };
        files.extend(found.into_iter().map(|file| (file, given.clone())));
        if files.len() == before && path.is_dir() {
            writeln!(
                err,
                "markwell: {}: no chart specs (`*{}`) in this folder or below it",
                path.display(),
                super::check::SPEC_SUFFIX
            )?;
            trouble = true;
        }
    }
    let (mut changed, mut unchanged) = (0usize, 0usize);
    for (path, given) in &files {
        let shown =
            super::report::printable(&super::render::shown_path(path).display().to_string());
        let root = super::check::find_workspace_root(path, given);
        let spec = match super::check::read_spec_text_within(path, &root) {
            Ok(spec) => spec,
            Err(message) => {
                writeln!(err, "markwell: {shown}: {message}")?;
                trouble = true;
                continue;
            }
        };
        if !spec.encoding_diagnostics.is_empty() {
            writeln!(
                err,
                "markwell: {shown}: not formatted: the file is not valid UTF-8"
            )?;
            trouble = true;
            continue;
        }
        let formatted = match format_text(&spec.text, &options) {
            Ok(formatted) => formatted,
            Err(refusal) => {
                writeln!(err, "markwell: {shown}: {}", refusal.message())?;
                trouble = true;
                continue;
            }
        };
        if formatted == spec.text {
            unchanged += 1;
            continue;
        }
        changed += 1;
        if args.check {
            writeln!(out, "would reformat {shown}")?;
            continue;
        }
        match crate::fsguard::write_atomically(path, formatted.as_bytes()) {
            Ok(()) => writeln!(out, "reformatted {shown}")?,
            Err(error) => {
                writeln!(err, "markwell: {shown}: could not write it: {error}")?;
                trouble = true;
            }
        }
    }
    let verb = if args.check {
        "would be reformatted"
    } else {
        "reformatted"
    };
    writeln!(
        out,
        "markwell: {} specs, {changed} {verb}, {unchanged} already formatted",
        changed + unchanged
    )?;
    Ok(if trouble || files.is_empty() {
        EXIT_TROUBLE
    } else if args.check && changed > 0 {
        EXIT_FINDINGS
    } else {
        EXIT_CLEAN
    })
}
