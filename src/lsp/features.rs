//! The LSP-free parts of the editor features: what the outline shows, which colours a spec names,
//! what a hover says, which inlay hints go where, where a column is defined. Pure functions of the
//! model, the data profiles and the diagnostics, in byte offsets; `convert` turns them into
//! lsp-types at the edge.

use std::path::PathBuf;

use crate::data::{ColumnProfile, DataContext, SourceData};
use crate::diagnostic::Diagnostic;
use crate::spec::model::{ChartSpec, Source, SourceLocation, Spanned};
use crate::text_range::TextRange;

/// What kind of thing an outline entry is (mapped to an LSP `SymbolKind` at the edge).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OutlineKind {
    Title,
    Source,
    Column,
    Layer,
    Binding,
    Frame,
    Panels,
}

/// One entry of the document outline.
#[derive(Clone, Debug, PartialEq)]
pub struct OutlineEntry {
    pub name: String,
    pub detail: Option<String>,
    pub kind: OutlineKind,
    /// The whole construct.
    pub range: TextRange,
    /// The part to select (a key or a name); inside `range`.
    pub selection_range: TextRange,
    pub children: Vec<OutlineEntry>,
}

/// The outline of a spec: title, source, declared columns, then layers with their bindings.
pub fn document_outline(spec: &ChartSpec) -> Vec<OutlineEntry> {
    let mut entries = Vec::new();
    if let Some(title) = &spec.title {
        entries.push(leaf(
            "title",
            Some(title.value.clone()),
            OutlineKind::Title,
            title.range,
        ));
    }
    if let Some(source) = &spec.source {
        entries.push(source_entry(source));
    }
    for declaration in &spec.columns {
        let detail = declaration
            .kind
            .as_ref()
            .map(|kind| kind.value.as_str().to_string());
        entries.push(OutlineEntry {
            name: declaration.name.value.clone(),
            detail,
            kind: OutlineKind::Column,
            range: declaration.range.cover(declaration.name.range),
            selection_range: declaration.name.range,
            children: Vec::new(),
        });
    }
    if let Some(range) = spec.frame.range {
        entries.push(leaf("frame", None, OutlineKind::Frame, range));
    }
    for layer in &spec.layers {
        let mark = layer
            .mark
            .as_ref()
            .map_or("(no mark)", |mark| mark.value.as_str());
        let bindings: Vec<OutlineEntry> = layer
            .bindings
            .iter()
            .map(|binding| {
                let detail = match (&binding.column, &binding.summary) {
                    (Some(column), Some(summary)) => {
                        Some(format!("{}({})", summary.value.as_str(), column.value))
                    }
                    (Some(column), None) => Some(column.value.clone()),
                    (None, Some(summary)) => Some(summary.value.as_str().to_string()),
                    (None, None) => None,
                };
                OutlineEntry {
                    name: binding.channel.as_str().to_string(),
                    detail,
                    kind: OutlineKind::Binding,
                    range: binding.member_range.cover(binding.key_range),
                    selection_range: binding.key_range,
                    children: Vec::new(),
                }
            })
            .collect();
        let selection_range = layer.mark.as_ref().map_or(layer.range, |mark| mark.range);
        let range = bindings
            .iter()
            .fold(layer.range.cover(selection_range), |range, binding| {
                range.cover(binding.range)
            });
        let name = if spec.uses_layers_key {
            format!("layer {}", layer.index)
        } else {
            "chart".to_string()
        };
        entries.push(OutlineEntry {
            name,
            detail: Some(mark.to_string()),
            kind: OutlineKind::Layer,
            range,
            selection_range,
            children: bindings,
        });
    }
    if let Some(panels) = &spec.panels {
        let detail = panels.by.as_ref().map(|by| format!("by {}", by.value));
        entries.push(leaf("panels", detail, OutlineKind::Panels, panels.range));
    }
    entries
}

fn leaf(name: &str, detail: Option<String>, kind: OutlineKind, range: TextRange) -> OutlineEntry {
    OutlineEntry {
        name: name.to_string(),
        detail,
        kind,
        range,
        selection_range: range,
        children: Vec::new(),
    }
}

fn source_entry(source: &Source) -> OutlineEntry {
    let detail = match &source.location {
        SourceLocation::Path(path) => Some(path.value.clone()),
        SourceLocation::Rows { rows, .. } => Some(format!("{} inline rows", rows.len())),
        SourceLocation::Missing => None,
    };
    leaf("source", detail, OutlineKind::Source, source.range)
}

/// An sRGB colour with alpha, components in 0..=1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rgba {
    pub red: f32,
    pub green: f32,
    pub blue: f32,
    pub alpha: f32,
}

impl Rgba {
    /// `#rrggbb` (or `#rrggbbaa` when not opaque), lowercase.
    pub fn to_hex(self) -> String {
        let byte = |component: f32| (component.clamp(0.0, 1.0) * 255.0).round() as u8;
        let mut hex = format!(
            "#{:02x}{:02x}{:02x}",
            byte(self.red),
            byte(self.green),
            byte(self.blue)
        );
        if byte(self.alpha) != 255 {
            hex.push_str(&format!("{:02x}", byte(self.alpha)));
        }
        hex
    }
}

/// Parse `#rgb`, `#rgba`, `#rrggbb` or `#rrggbbaa` (CSS Color 4 hex notation); `None` otherwise.
pub fn parse_hex_colour(text: &str) -> Option<Rgba> {
    let digits = text.strip_prefix('#')?;
    if !digits.bytes().all(|b| b.is_ascii_hexdigit()) {
        return None;
    }
    let nibble = |index: usize| -> Option<u8> {
        u8::from_str_radix(digits.get(index..index + 1)?, 16)
            .ok()
            .map(|v| v * 17)
    };
    let pair =
        |index: usize| -> Option<u8> { u8::from_str_radix(digits.get(index..index + 2)?, 16).ok() };
    let (red, green, blue, alpha) = match digits.len() {
        3 => (nibble(0)?, nibble(1)?, nibble(2)?, 255),
        4 => (nibble(0)?, nibble(1)?, nibble(2)?, nibble(3)?),
        6 => (pair(0)?, pair(2)?, pair(4)?, 255),
        8 => (pair(0)?, pair(2)?, pair(4)?, pair(6)?),
        _ => return None,
    };
    let unit = |value: u8| f32::from(value) / 255.0;
    Some(Rgba {
        red: unit(red),
        green: unit(green),
        blue: unit(blue),
        alpha: unit(alpha),
    })
}

/// A colour written in the spec: the range of the hex text inside the quotes, and its value.
#[derive(Clone, Debug, PartialEq)]
pub struct ColourOccurrence {
    pub range: TextRange,
    pub colour: Rgba,
}

/// Palette entries, layer `style.color` and `frame.background` that parse as hex colours.
pub fn document_colours(spec: &ChartSpec) -> Vec<ColourOccurrence> {
    let mut strings: Vec<&Spanned<String>> = Vec::new();
    for layer in &spec.layers {
        for binding in &layer.bindings {
            if let Some(palette) = &binding.palette {
                strings.extend(palette.value.iter());
            }
        }
        strings.extend(layer.style.color.iter());
    }
    strings.extend(spec.frame.background.iter());
    let mut out: Vec<ColourOccurrence> = strings
        .into_iter()
        .filter_map(|string| {
            let colour = parse_hex_colour(&string.value)?;
            Some(ColourOccurrence {
                range: inside_quotes(string.range),
                colour,
            })
        })
        .collect();
    out.sort_by_key(|occurrence| occurrence.range.start);
    out.dedup_by_key(|occurrence| occurrence.range);
    out
}

/// The range of a string literal without its quotes (ranges of spanned strings include them).
fn inside_quotes(range: TextRange) -> TextRange {
    if range.len() >= 2 {
        TextRange::new(range.start + 1, range.end - 1)
    } else {
        range
    }
}

/// Where a spec names a data column, and which source the name resolves against.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnReference<'s> {
    pub name: &'s str,
    /// Range of the string (quotes included).
    pub range: TextRange,
    pub source: Option<&'s Source>,
}

/// Every column reference of the spec: bindings, `emphasis`, `panels.by`, declared columns.
pub fn column_references(spec: &ChartSpec) -> Vec<ColumnReference<'_>> {
    let mut out = Vec::new();
    for layer in &spec.layers {
        let source = spec.source_for_layer(layer);
        for binding in &layer.bindings {
            if let Some(column) = &binding.column {
                out.push(ColumnReference {
                    name: &column.value,
                    range: column.range,
                    source,
                });
            }
        }
    }
    let chart_source = spec.source.as_ref();
    for name in &spec.emphasis {
        out.push(ColumnReference {
            name: &name.value,
            range: name.range,
            source: chart_source,
        });
    }
    if let Some(by) = spec.panels.as_ref().and_then(|panels| panels.by.as_ref()) {
        out.push(ColumnReference {
            name: &by.value,
            range: by.range,
            source: chart_source,
        });
    }
    for declaration in &spec.columns {
        out.push(ColumnReference {
            name: &declaration.name.value,
            range: declaration.name.range,
            source: chart_source,
        });
    }
    out.sort_by_key(|reference| reference.range.start);
    out
}

/// The profile of a referenced column, when its source was profiled and has it.
pub fn profile_of<'d>(
    data: &'d DataContext,
    reference: &ColumnReference<'_>,
) -> Option<(&'d ColumnProfile, Option<&'d PathBuf>)> {
    let source = reference.source?;
    match data.for_source(source)? {
        Ok(profile) => profile
            .column(reference.name)
            .map(|column| (column, profile.path.as_ref())),
        Err(_) => None,
    }
}

fn short_number(value: f64) -> String {
    if (value.fract() == 0.0 && value.abs() < 1e15) || value.abs() >= 1000.0 {
        format!("{value:.0}")
    } else {
        let text = format!("{value:.3}");
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

/// The short summary of a column used by inlay hints: kind and value range, or distinct count.
pub fn column_brief(profile: &ColumnProfile) -> String {
    let kind = profile.kind.as_str();
    if let Some((earliest, latest)) = &profile.time_range {
        return format!("{kind} {earliest}..{latest}");
    }
    match &profile.numeric {
        Some(numeric) if profile.kind.is_ordered() && numeric.count > 0 => format!(
            "{kind} {}..{}",
            short_number(numeric.min),
            short_number(numeric.max)
        ),
        _ => {
            let approximate = if profile.distinct.exact { "" } else { "~" };
            format!("{kind}, {approximate}{} distinct", profile.distinct.value)
        }
    }
}

/// A markdown description of a column profile, for hovers.
pub fn column_markdown(profile: &ColumnProfile, path: Option<&PathBuf>) -> String {
    let mut text = format!("**column `{}`**: {}", profile.name, profile.kind.as_str());
    if let Some(path) = path {
        let file = path.file_name().map_or_else(
            || path.display().to_string(),
            |name| name.to_string_lossy().into_owned(),
        );
        text.push_str(&format!(" (from `{file}`)"));
    }
    text.push_str(&format!("\n\n{}\n", profile.kind_evidence));
    text.push_str(&format!(
        "\n- rows: {}, missing: {}\n- distinct: {}{}\n",
        profile.rows,
        profile.missing,
        if profile.distinct.exact { "" } else { "~" },
        profile.distinct.value
    ));
    if let Some(numeric) = &profile.numeric {
        text.push_str(&format!(
            "- numbers: {} from {} to {}, mean {}\n",
            numeric.count,
            short_number(numeric.min),
            short_number(numeric.max),
            short_number(numeric.mean)
        ));
    }
    if let Some((earliest, latest)) = &profile.time_range {
        text.push_str(&format!("- time: {earliest} to {latest}\n"));
    }
    if let Some(zero) = profile.zero {
        text.push_str(&format!("- zero is {}\n", zero.as_str()));
    }
    if !profile.top_values.is_empty() {
        let top: Vec<String> = profile
            .top_values
            .iter()
            .take(5)
            .map(|(value, count)| format!("`{value}` ({count})"))
            .collect();
        text.push_str(&format!("- most frequent: {}\n", top.join(", ")));
    }
    text
}

/// What a hover shows: markdown over a range.
#[derive(Clone, Debug, PartialEq)]
pub struct HoverContent {
    pub range: TextRange,
    pub markdown: String,
}

/// The hover at `offset`: the profile of a column named there, else the diagnostics covering it.
pub fn hover_at(
    spec: &ChartSpec,
    data: &DataContext,
    diagnostics: &[Diagnostic],
    offset: usize,
) -> Option<HoverContent> {
    let references = column_references(spec);
    let reference = references
        .iter()
        .find(|reference| reference.range.contains_inclusive(offset));
    let mut sections = Vec::new();
    let mut range = None;
    if let Some(reference) = reference {
        range = Some(reference.range);
        match profile_of(data, reference) {
            Some((profile, path)) => sections.push(column_markdown(profile, path)),
            None => sections.push(format!(
                "**column `{}`**: no profile (the data could not be read, or has no such column)",
                reference.name
            )),
        }
    }
    for diagnostic in diagnostics
        .iter()
        .filter(|diagnostic| diagnostic.range.contains_inclusive(offset))
    {
        range.get_or_insert(diagnostic.range);
        let mut section = format!(
            "**{}** ({}): {}",
            diagnostic.rule,
            diagnostic.severity.as_str(),
            diagnostic.message
        );
        for fix in &diagnostic.fixes {
            section.push_str(&format!("\n- fix: {}", fix.title));
        }
        sections.push(section);
    }
    let range = range?;
    Some(HoverContent {
        range,
        markdown: sections.join("\n\n---\n\n"),
    })
}

/// An inlay hint: a label shown after `offset`.
#[derive(Clone, Debug, PartialEq)]
pub struct InlayLabel {
    pub offset: usize,
    pub label: String,
}

/// After each column reference in `range`: the column's kind, and its range or distinct count.
pub fn inlay_hints(spec: &ChartSpec, data: &DataContext, range: TextRange) -> Vec<InlayLabel> {
    column_references(spec)
        .into_iter()
        .filter(|reference| range.intersects(reference.range))
        // a declared column's key is followed by its declaration: no hint there
        .filter(|reference| {
            !spec
                .columns
                .iter()
                .any(|declaration| declaration.name.range == reference.range)
        })
        .filter_map(|reference| {
            let (profile, _) = profile_of(data, &reference)?;
            Some(InlayLabel {
                offset: reference.range.end,
                label: column_brief(profile),
            })
        })
        .collect()
}

/// Where a column named at `offset` is defined: the data file and the header cell's byte range.
#[derive(Clone, Debug, PartialEq)]
pub struct DefinitionTarget {
    pub path: PathBuf,
    pub byte_range: (u64, u64),
}

pub fn definition_at(
    spec: &ChartSpec,
    data: &DataContext,
    offset: usize,
) -> Option<DefinitionTarget> {
    let references = column_references(spec);
    let reference = references
        .iter()
        .find(|reference| reference.range.contains_inclusive(offset))?;
    let (profile, path) = profile_of(data, reference)?;
    Some(DefinitionTarget {
        path: path?.clone(),
        byte_range: profile.header_range?,
    })
}

/// Paths of the data files a data context read or tried to read (for watched-file events).
pub fn data_paths(data: &DataContext) -> Vec<PathBuf> {
    data.entries
        .iter()
        .filter_map(|(_, entry): &(_, SourceData)| match entry {
            Ok(profile) => profile.path.clone(),
            Err(error) => error.path.clone(),
        })
        .collect()
}
