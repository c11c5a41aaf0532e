//! The terminal report of `markwell check` (`--format report`, the default).
//!
//! Per spec: the path, what the chart draws (mark, data, and each channel with its column and the
//! kind of its values), then the findings grouped by what they concern (the data, a column
//! declaration, a channel, the colours, the chart as a whole). A finding starts with
//! `path:line:col` at the start of its line (terminals and editors jump to it), then the severity
//! word of the configuration (`error`, `warning`, `info`, `hint`) and the rule id; below it the
//! message, the source line with the range between `⟦` and `⟧`, other places it involves, and the
//! fix: `--fix:` for fixes that `markwell check --fix` applies, `in an editor:` for the others.
//! One summary line ends the report. Colours: `NO_COLOR` and a non-terminal stdout turn them off.

use std::io::{self, Write};

use crate::analysis::facts::{layer_facts, KindOrigin};
use crate::analysis::rules::SYNTAX_ERROR;
use crate::data::render::terminal_width;
use crate::data::DataContext;
use crate::diagnostic::{Diagnostic, Fix, FixKind, RelatedTarget, Severity};
use crate::spec::model::{ChartSpec, Source, SourceLocation};
use crate::text_range::TextRange;

use super::render::{count, shown_path, CheckedFile, LineColumns};

/// Opening and closing marks around the range of a finding in the source line.
pub const OPEN_MARK: &str = "⟦";
pub const CLOSE_MARK: &str = "⟧";

/// Rules whose findings are about colour, whatever part of the spec they point at.
const COLOUR_RULES: &[&str] = &[
    "palette-too-short",
    "palette-too-similar",
    "palette-cvd-collision",
    "too-many-hues",
    "low-contrast-mark",
    "ramp-not-monotonic",
];

/// What a group of findings concerns; the order is the order of the groups in the report.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Concern {
    /// The JSON text itself (syntax errors).
    Text,
    Data,
    Column(String),
    /// A binding: layer index, position in `bind`, and the heading (`hue ← branch`).
    Channel(usize, usize, String),
    Colours,
    Chart,
}

impl Concern {
    fn heading(&self) -> String {
        match self {
            Concern::Text => "the JSON text".to_string(),
            Concern::Data => "the data".to_string(),
            Concern::Column(name) => format!("the column declaration of `{name}`"),
            Concern::Channel(_, _, heading) => heading.clone(),
            Concern::Colours => "the colours".to_string(),
            Concern::Chart => "the chart as a whole".to_string(),
        }
    }
}

/// One channel of a layer as the header shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct ChannelOutline {
    pub channel: &'static str,
    /// The column, with its summary if any (`sum(loaves)`).
    pub column: String,
    /// The kind of the values drawn and where it comes from (`quantitative, from the data`).
    pub kind: String,
}

#[derive(Clone, Debug, PartialEq)]
pub struct LayerOutline {
    pub mark: Option<&'static str>,
    pub data: String,
    pub channels: Vec<ChannelOutline>,
}

/// What a spec draws, and which parts of its text concern what.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SpecOutline {
    pub layers: Vec<LayerOutline>,
    pub regions: Vec<(TextRange, Concern)>,
}

fn describe_source(source: Option<&Source>, data: &DataContext) -> String {
    let Some(source) = source else {
        return "no data source".to_string();
    };
    let rows = data
        .for_source(source)
        .and_then(|result| result.as_ref().ok())
        .map(|profile| profile.rows);
    let rows_text = |rows: Option<u64>| match rows {
        Some(1) => ", 1 row".to_string(),
        Some(rows) => format!(", {rows} rows"),
        None => String::new(),
    };
    match &source.location {
        SourceLocation::Path(path) => {
            let read = data.for_source(source).is_some_and(|result| result.is_ok());
            if read {
                format!("`{}`{}", path.value, rows_text(rows))
            } else {
                format!("`{}` (not read)", path.value)
            }
        }
        SourceLocation::Rows { .. } => format!("inline rows{}", rows_text(rows)),
        SourceLocation::Missing => "a source without `path` or `rows`".to_string(),
    }
}

fn origin_phrase(origin: Option<KindOrigin>) -> &'static str {
    match origin {
        Some(KindOrigin::Declared) => "declared",
        Some(KindOrigin::Summary) => "from the summary",
        Some(KindOrigin::Bins) => "from the bins",
        Some(KindOrigin::Data) => "from the data",
        None => "",
    }
}

/// The outline of a spec: computed from the model and the data profiles the analysis used.
pub fn outline(spec: &ChartSpec, data: &DataContext) -> SpecOutline {
    let mut outline = SpecOutline::default();
    let several = spec.layers.len() > 1;
    for facts in layer_facts(spec, data) {
        let layer = facts.layer;
        let mut channels = Vec::new();
        for (position, binding) in facts.bindings.iter().enumerate() {
            let column = binding.display_name();
            let kind = match binding.kind {
                Some(kind) => format!("{}, {}", kind.as_str(), origin_phrase(binding.kind_origin)),
                None => "kind unknown".to_string(),
            };
            let channel = binding.binding.channel.as_str();
            let heading = if several {
                format!("layer {}: {channel} ← {column}", layer.index + 1)
            } else {
                format!("{channel} ← {column}")
            };
            outline.regions.push((
                binding.binding.member_range,
                Concern::Channel(layer.index, position, heading),
            ));
            channels.push(ChannelOutline {
                channel,
                column,
                kind,
            });
        }
        if let Some(source) = &layer.source {
            outline.regions.push((source.range, Concern::Data));
        }
        if let Some(colour) = &layer.style.colour {
            outline.regions.push((colour.range, Concern::Colours));
        }
        outline.layers.push(LayerOutline {
            mark: facts.mark().map(|mark| mark.as_str()),
            data: describe_source(facts.source, data),
            channels,
        });
    }
    if let Some(source) = &spec.source {
        outline.regions.push((source.range, Concern::Data));
    }
    for declaration in &spec.columns {
        outline.regions.push((
            declaration.range.cover(declaration.name.range),
            Concern::Column(declaration.name.value.clone()),
        ));
    }
    if let Some(background) = &spec.frame.background {
        outline.regions.push((background.range, Concern::Colours));
    }
    outline
}

/// What `diagnostic` concerns: syntax errors the text, colour rules go to the colours, findings that point into a data
/// file to the data, else the smallest region of the outline that holds the range.
pub fn concern_of(outline: &SpecOutline, diagnostic: &Diagnostic) -> Concern {
    if diagnostic.rule == SYNTAX_ERROR {
        return Concern::Text;
    }
    if COLOUR_RULES.contains(&diagnostic.rule) {
        return Concern::Colours;
    }
    if diagnostic
        .related
        .iter()
        .any(|related| matches!(related.target, RelatedTarget::File { .. }))
    {
        return Concern::Data;
    }
    let range = diagnostic.range;
    outline
        .regions
        .iter()
        .filter(|(region, _)| region.start <= range.start && range.end <= region.end)
        .min_by_key(|(region, _)| region.end - region.start)
        .map_or(Concern::Chart, |(_, concern)| concern.clone())
}

/// Terminal styles; all empty when colour is off.
#[derive(Clone, Copy, Debug)]
pub struct Palette {
    pub colour: bool,
}

impl Palette {
    /// Colour on when `NO_COLOR` is unset (or empty) and stdout is a terminal.
    pub fn for_stdout() -> Palette {
        use std::io::IsTerminal;
        Palette {
            colour: std::env::var_os("NO_COLOR").is_none_or(|value| value.is_empty())
                && std::io::stdout().is_terminal(),
        }
    }

    fn paint(&self, code: &str, text: &str) -> String {
        if self.colour {
            format!("\x1b[{code}m{text}\x1b[0m")
        } else {
            text.to_string()
        }
    }

    /// Our own colours (256-colour codes): plum for errors, amber for warnings, teal for info,
    /// grey for hints.
    fn severity_code(severity: Severity) -> &'static str {
        match severity {
            Severity::Error => "1;38;5;162",
            Severity::Warning => "1;38;5;172",
            Severity::Info => "38;5;30",
            Severity::Hint => "38;5;245",
        }
    }

    fn severity(&self, severity: Severity) -> String {
        self.paint(Self::severity_code(severity), severity.as_str())
    }

    fn marked(&self, severity: Severity, text: &str) -> String {
        let code = format!("4;{}", Self::severity_code(severity));
        self.paint(&code, text)
    }

    fn path(&self, text: &str) -> String {
        self.paint("1", text)
    }

    fn quiet(&self, text: &str) -> String {
        self.paint("38;5;244", text)
    }

    fn heading(&self, text: &str) -> String {
        self.paint("3;38;5;67", text)
    }

    fn fix(&self, text: &str) -> String {
        self.paint("38;5;71", text)
    }
}

/// Control characters of the spec or the data (a terminal would obey them) shown as `�`.
pub fn printable(text: &str) -> String {
    text.chars()
        .map(|c| {
            if (c.is_control() && c != '\t') || ('\u{80}'..='\u{9f}').contains(&c) {
                '\u{fffd}'
            } else {
                c
            }
        })
        .collect()
}

fn floor_boundary(text: &str, mut offset: usize) -> usize {
    offset = offset.min(text.len());
    while offset > 0 && !text.is_char_boundary(offset) {
        offset -= 1;
    }
    offset
}

/// At most `limit` characters of the end of `text`, with `…` in front when cut; cut before
/// anything else is done to it, so a minified spec's megabyte line costs little.
fn tail(text: &str, limit: usize) -> String {
    match text.char_indices().rev().nth(limit) {
        Some((index, c)) => format!("…{}", printable(&text[index + c.len_utf8()..])),
        None => printable(text),
    }
}

/// At most `limit` characters of the start of `text`, with `…` behind when cut.
fn head(text: &str, limit: usize) -> String {
    match text.char_indices().nth(limit) {
        Some((index, _)) => format!("{}…", printable(&text[..index])),
        None => printable(text),
    }
}

/// The middle of a long range shortened to `…`.
fn middle(text: &str, limit: usize) -> String {
    if text.char_indices().nth(limit).is_none() {
        return printable(text);
    }
    let keep = limit / 2;
    let start_end = text
        .char_indices()
        .nth(keep)
        .map_or(text.len(), |(index, _)| index);
    let end_start = text
        .char_indices()
        .rev()
        .nth(keep.saturating_sub(1))
        .map_or(0, |(index, _)| index)
        .max(start_end);
    format!(
        "{}…{}",
        printable(&text[..start_end]),
        printable(&text[end_start..])
    )
}

const CONTEXT_CHARS: usize = 48;
const MARKED_CHARS: usize = 72;

/// The source lines of `range` with the range between the marks: (line number or none for an
/// elision, text).
pub fn excerpt(
    text: &str,
    lines: &LineColumns,
    range: TextRange,
    palette: &Palette,
    severity: Severity,
) -> Vec<(Option<usize>, String)> {
    let start = floor_boundary(text, range.start);
    let end = floor_boundary(text, range.end).max(start);
    let (first_start, first_end) = lines.line_bounds(text, start);
    let (line, _) = lines.line_and_column(text, start);
    let before = tail(text[first_start..start].trim_start(), CONTEXT_CHARS);
    let marked = |piece: &str| palette.marked(severity, &middle(piece, MARKED_CHARS));
    if end <= first_end {
        let after = head(&text[end..first_end], CONTEXT_CHARS);
        return vec![(
            Some(line),
            format!(
                "{before}{OPEN_MARK}{}{CLOSE_MARK}{after}",
                marked(&text[start..end])
            ),
        )];
    }
    let (last_start, last_end) = lines.line_bounds(text, end);
    let (last_line, _) = lines.line_and_column(text, end);
    let mut lines = vec![(
        Some(line),
        format!("{before}{OPEN_MARK}{}", marked(&text[start..first_end])),
    )];
    if last_line > line + 1 {
        lines.push((None, "⋮".to_string()));
    }
    let last_piece = &text[last_start..end];
    let after = head(&text[end..last_end], CONTEXT_CHARS);
    lines.push((
        Some(last_line),
        format!(
            "{}{CLOSE_MARK}{after}",
            palette.marked(severity, &middle(last_piece.trim_start(), MARKED_CHARS))
        ),
    ));
    lines
}

/// Whether `markwell check --fix` would apply `fix` in `file`.
pub fn applies_with_fix(file: &CheckedFile, fix: &Fix) -> bool {
    fix.safe && fix.kind == FixKind::QuickFix && !has_syntax_errors(&file.diagnostics)
}

pub fn has_syntax_errors(diagnostics: &[Diagnostic]) -> bool {
    diagnostics
        .iter()
        .any(|diagnostic| diagnostic.rule == SYNTAX_ERROR)
}

fn write_finding(
    out: &mut dyn Write,
    file: &CheckedFile,
    path: &str,
    diagnostic: &Diagnostic,
    palette: &Palette,
) -> io::Result<()> {
    let (line, column) = file
        .lines
        .line_and_column(&file.text, diagnostic.range.start);
    writeln!(
        out,
        "{}  {}  {}",
        palette.path(&format!("{path}:{line}:{column}")),
        palette.severity(diagnostic.severity),
        palette.quiet(diagnostic.rule),
    )?;
    writeln!(out, "      {}", printable(&diagnostic.message))?;
    let lines = excerpt(
        &file.text,
        &file.lines,
        diagnostic.range,
        palette,
        diagnostic.severity,
    );
    let width = lines
        .iter()
        .filter_map(|(number, _)| number.map(|n| n.to_string().len()))
        .max()
        .unwrap_or(1);
    for (number, text) in lines {
        let number = number.map_or(String::new(), |n| n.to_string());
        writeln!(
            out,
            "      {}  {text}",
            palette.quiet(&format!("{number:>width$}"))
        )?;
    }
    for related in &diagnostic.related {
        let place = match &related.target {
            RelatedTarget::SameDocument(range) => {
                let (line, column) = file.lines.line_and_column(&file.text, range.start);
                format!("{path}:{line}:{column}")
            }
            RelatedTarget::File {
                path: data_path,
                line,
                ..
            } => format!("{}:{}", shown_path(data_path).display(), line + 1),
        };
        writeln!(
            out,
            "      also {}  {}",
            printable(&place),
            printable(&related.message)
        )?;
    }
    for fix in &diagnostic.fixes {
        let label = if applies_with_fix(file, fix) {
            "--fix:"
        } else {
            match fix.kind {
                FixKind::QuickFix => "in an editor:",
                FixKind::Refactor => "in an editor, a refactor:",
            }
        };
        writeln!(
            out,
            "      {} {}",
            palette.fix(label),
            printable(&fix.title)
        )?;
    }
    Ok(())
}

fn write_header(
    out: &mut dyn Write,
    file: &CheckedFile,
    path: &str,
    palette: &Palette,
) -> io::Result<()> {
    writeln!(out, "{} {}", palette.quiet("▪"), palette.path(path))?;
    let several = file.outline.layers.len() > 1;
    if file.outline.layers.is_empty() {
        writeln!(out, "  draws nothing yet: no mark and no channels")?;
    }
    for (index, layer) in file.outline.layers.iter().enumerate() {
        let lead = if several {
            format!("layer {}: ", index + 1)
        } else {
            String::new()
        };
        let data = printable(&layer.data);
        match layer.mark {
            Some(mark) => writeln!(out, "  {lead}draws {mark} marks from {data}")?,
            None => writeln!(out, "  {lead}has no mark yet; its data: {data}")?,
        }
        let channel_width = layer
            .channels
            .iter()
            .map(|channel| channel.channel.len())
            .max()
            .unwrap_or(0);
        let column_width = layer
            .channels
            .iter()
            .map(|channel| terminal_width(&printable(&channel.column)))
            .max()
            .unwrap_or(0);
        for channel in &layer.channels {
            let column = printable(&channel.column);
            let pad = column_width.saturating_sub(terminal_width(&column));
            writeln!(
                out,
                "    {:channel_width$} ← {column}{}  {}",
                channel.channel,
                " ".repeat(pad),
                palette.quiet(&channel.kind)
            )?;
        }
        if layer.channels.is_empty() {
            writeln!(out, "    no channels bound")?;
        }
    }
    Ok(())
}

/// Write the report of `files`, then the summary line.
pub fn write_report(
    out: &mut dyn Write,
    files: &[CheckedFile],
    fail_on: Severity,
    palette: &Palette,
) -> io::Result<()> {
    for file in files {
        let path = printable(&file.path.display().to_string());
        write_header(out, file, &path, palette)?;
        if file.diagnostics.is_empty() {
            writeln!(out, "  {}", palette.quiet("nothing to report"))?;
        }
        let mut groups: Vec<(Concern, Vec<&Diagnostic>)> = Vec::new();
        for diagnostic in &file.diagnostics {
            let concern = concern_of(&file.outline, diagnostic);
            match groups.iter_mut().find(|(existing, _)| *existing == concern) {
                Some((_, members)) => members.push(diagnostic),
                None => groups.push((concern, vec![diagnostic])),
            }
        }
        groups.sort_by(|a, b| a.0.cmp(&b.0));
        for (concern, members) in groups {
            writeln!(out)?;
            writeln!(
                out,
                "  {}",
                palette.heading(&format!("on {}", printable(&concern.heading())))
            )?;
            for (index, diagnostic) in members.into_iter().enumerate() {
                if index > 0 {
                    writeln!(out)?;
                }
                write_finding(out, file, &path, diagnostic, palette)?;
            }
        }
        writeln!(out)?;
    }
    writeln!(out, "{}", summary_line(files, fail_on))
}

/// `markwell: 3 specs checked, 1 clean · error 2 · warning 1 · info 0 · hint 0 · ...`
pub fn summary_line(files: &[CheckedFile], fail_on: Severity) -> String {
    let clean = files
        .iter()
        .filter(|file| file.diagnostics.is_empty())
        .count();
    let specs = if files.len() == 1 { "spec" } else { "specs" };
    let counts: Vec<String> = [
        Severity::Error,
        Severity::Warning,
        Severity::Info,
        Severity::Hint,
    ]
    .into_iter()
    .map(|severity| format!("{} {}", severity.as_str(), count(files, severity)))
    .collect();
    let fixable = files
        .iter()
        .flat_map(|file| {
            file.diagnostics.iter().filter(move |diagnostic| {
                diagnostic
                    .fixes
                    .iter()
                    .any(|fix| applies_with_fix(file, fix))
            })
        })
        .count();
    let fails = files
        .iter()
        .flat_map(|file| &file.diagnostics)
        .any(|diagnostic| diagnostic.severity <= fail_on);
    let verdict = if fails {
        format!("fails (--fail-on {})", fail_on.as_str())
    } else {
        format!("passes (--fail-on {})", fail_on.as_str())
    };
    let mut line = format!(
        "markwell: {} {specs} checked, {clean} clean · {} · ",
        files.len(),
        counts.join(" · ")
    );
    if fixable > 0 {
        line.push_str(&format!("{fixable} fixable with --fix · "));
    }
    line.push_str(&verdict);
    line
}

#[cfg(test)]
mod tests {
    use super::*;

    const PLAIN: Palette = Palette { colour: false };

    fn lines(text: &str, start: usize, end: usize) -> Vec<(Option<usize>, String)> {
        excerpt(
            text,
            &LineColumns::new(text),
            TextRange::new(start, end),
            &PLAIN,
            Severity::Error,
        )
    }

    #[test]
    fn a_range_on_one_line_is_bracketed_and_the_indent_dropped() {
        let text = "{\n    \"mark\": \"arc\",\n}";
        let start = text.find("\"arc\"").unwrap_or(0);
        assert_eq!(
            lines(text, start, start + 5),
            vec![(Some(2), "\"mark\": ⟦\"arc\"⟧,".to_string())]
        );
        // an empty range is an empty pair of marks
        assert_eq!(
            lines(text, start, start),
            vec![(Some(2), "\"mark\": ⟦⟧\"arc\",".to_string())]
        );
    }

    #[test]
    fn a_range_over_many_lines_shows_its_first_and_last_line() {
        let text = "{\n  \"bind\": {\n    \"x\": \"a\",\n    \"y\": \"b\"\n  }\n}";
        let start = text.find("{\n    \"x\"").unwrap_or(0);
        let end = text.find("  }").unwrap_or(0) + 3;
        assert_eq!(
            lines(text, start, end),
            vec![
                (Some(2), "\"bind\": ⟦{".to_string()),
                (None, "⋮".to_string()),
                (Some(5), "}⟧".to_string()),
            ]
        );
    }

    #[test]
    fn long_lines_are_cut_around_the_range_and_control_characters_shown_harmlessly() {
        let text = format!(
            "{{\"title\": \"{}\", \"mark\": \"x\u{1b}[2J\"}}",
            "a".repeat(500)
        );
        let start = text.find("\"x").unwrap_or(0);
        let end = text.len() - 1;
        let shown = &lines(&text, start, end)[0].1;
        assert!(shown.chars().count() < 120, "{shown}");
        assert!(shown.starts_with('…'), "{shown}");
        assert!(!shown.contains('\u{1b}'), "{shown}");
        assert!(shown.contains("⟦\"x\u{fffd}[2J\"⟧"), "{shown}");
    }

    #[test]
    fn colour_is_off_by_request() {
        assert_eq!(PLAIN.severity(Severity::Warning), "warning");
        let on = Palette { colour: true };
        assert!(on.severity(Severity::Warning).starts_with("\u{1b}["));
    }
}
