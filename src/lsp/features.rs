//! The LSP-free parts of the editor features: what the outline shows, which colours a spec names,
//! what a hover says, which inlay hints go where, where a column is defined. Pure functions of the
//! model, the data profiles and the diagnostics, in byte offsets; `convert` turns them into
//! lsp-types at the edge.

use std::path::PathBuf;

use crate::analysis::facts::layer_facts;
use crate::analysis::rules::rule_by_id;
use crate::analysis::ParsedDocument;
use crate::data::{ColumnProfile, DataContext, SourceData};
use crate::diagnostic::Diagnostic;
use crate::knowledge::{perceived_channel, ChannelContext, ALL_RANKINGS, DEFAULT_RANKING_ID};
use crate::lsp::completion::json_path_of;
use crate::spec::model::{Channel, ChartSpec, Source, SourceLocation, Spanned};
use crate::spec::schema::{description_at_path, PathSegment};
use crate::syntax::NodeKind;
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

/// Palette entries, layer `style.colour` and `frame.background` that parse as hex colours.
pub fn document_colours(spec: &ChartSpec) -> Vec<ColourOccurrence> {
    let mut strings: Vec<&Spanned<String>> = Vec::new();
    for layer in &spec.layers {
        for binding in &layer.bindings {
            if let Some(palette) = &binding.palette {
                strings.extend(palette.value.iter());
            }
        }
        strings.extend(layer.style.colour.iter());
    }
    strings.extend(spec.frame.background.iter());
    let mut out: Vec<ColourOccurrence> = strings
        .into_iter()
        .filter_map(|string| {
            let colour = parse_hex_colour(&string.value)?;
            // a hex colour has no escapes: its text follows the opening quote byte for byte
            // (this also holds for an unterminated string, which lacks the closing quote)
            let start = string.range.start + 1;
            let end = start + string.value.len();
            if end > string.range.end {
                return None;
            }
            Some(ColourOccurrence {
                range: TextRange::new(start, end),
                colour,
            })
        })
        .collect();
    out.sort_by_key(|occurrence| occurrence.range.start);
    out.dedup_by_key(|occurrence| occurrence.range);
    out
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

/// A markdown description of a column profile, for hovers. The kind is the effective one (the
/// declaration in `columns` wins), worded as in the channel hover.
pub fn column_markdown(
    profile: &ColumnProfile,
    path: Option<&PathBuf>,
    declared: Option<crate::spec::model::AttributeKind>,
) -> String {
    let kind = crate::analysis::facts::kind_phrase(declared, Some(profile.kind))
        .unwrap_or_else(|| profile.kind.as_str().to_string());
    let mut text = format!("**column `{}`**: {kind}", profile.name);
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

/// What readers get wrong, from a rule's documentation (its first section, without heading).
fn rule_explanation(docs: &str) -> Option<&str> {
    crate::analysis::rules::doc_section(docs, crate::analysis::rules::DOC_SECTIONS[0])
}

/// The mark a misspelt or borrowed mark name most likely means (`bars` -> `bar`, `pie` ->
/// `wedge`).
fn closest_mark(written: &str) -> Option<&'static str> {
    crate::spec::synonyms::value_synonym("mark", written).or_else(|| {
        crate::spec::suggest::closest_name(
            written,
            crate::spec::model::Mark::ALL
                .iter()
                .map(|mark| mark.as_str()),
        )
    })
}

/// What the eye reads for a binding, and how each published ranking places that channel for
/// the column's kind, the active ranking first.
pub fn channel_markdown(
    spec: &ChartSpec,
    data: &DataContext,
    layer_index: usize,
    channel: Channel,
    active_ranking: Option<&str>,
) -> Option<String> {
    let facts = layer_facts(spec, data);
    let layer = facts.get(layer_index)?;
    let mut text = format!("**channel `{}`**", channel.as_str());
    if let (Some(mark), Some(unshown)) = (
        layer.mark(),
        layer
            .unshown
            .iter()
            .find(|facts| facts.binding.channel == channel),
    ) {
        // not drawn, so not read as anything and not ranked
        text.push_str(&format!(
            ": a `{}` mark cannot show it, so `{}` is not drawn",
            mark.as_str(),
            unshown.display_name()
        ));
        return Some(text);
    }
    let binding = layer.binding(channel)?;
    let Some(mark) = layer.mark() else {
        match &layer.layer.unknown_mark {
            Some(written) => {
                text.push_str(&format!(
                    ": the mark `{}` is not one markwell knows",
                    written.value
                ));
                if let Some(closest) = closest_mark(&written.value) {
                    text.push_str(&format!(" (the closest is `{closest}`)"));
                }
                text.push_str(", so what the eye reads is not known yet");
            }
            None => {
                text.push_str(": the layer has no mark, so what the eye reads is not known yet")
            }
        }
        return Some(text);
    };
    let context = ChannelContext {
        mark,
        channel,
        arrange: layer.layer.arrange.as_ref().map(|arrange| arrange.value),
        in_panels: spec.panels.is_some(),
        value_axis: layer.value_axis(),
        binding_is_summarised: binding.binding.summary.is_some(),
    };
    let perceived = perceived_channel(&context);
    text.push_str(&format!(
        " on a `{}` mark is read as **{}**",
        mark.as_str(),
        perceived.description()
    ));
    let (Some(kind), Some(phrase)) = (binding.kind, binding.kind_phrase()) else {
        text.push_str("\n\nthe column's kind is not known (no data profile or declaration)");
        return Some(text);
    };
    text.push_str(&format!(
        "; `{}` is {phrase}\n\n| ranking | this channel | best channel for {} |\n|---|---|---|\n",
        binding.display_name(),
        kind.as_str()
    ));
    let active = active_ranking.unwrap_or(DEFAULT_RANKING_ID);
    let mut rankings = ALL_RANKINGS.to_vec();
    rankings.sort_by_key(|ranking| ranking.id != active);
    for ranking in rankings {
        let place = match ranking.rank(kind, perceived) {
            Some(rank) => format!(
                "{} of {}{}",
                rank.level,
                rank.level_count,
                if rank.shares_level { " (tied)" } else { "" }
            ),
            None => "not ranked".to_string(),
        };
        let best = ranking
            .ordered_channels(kind)
            .first()
            .map_or_else(|| "-".to_string(), |best| best.description().to_string());
        let marker = if ranking.id == active {
            " (active)"
        } else {
            ""
        };
        text.push_str(&format!(
            "| {}{marker} | {place} | {best} |\n",
            ranking.citation.short
        ));
    }
    if let Some(exponent) = crate::knowledge::stevens::exponent_for(perceived) {
        text.push_str(&format!(
            "\nStevens' power law: perceived {} grows as (value)^{} ({}, {}).",
            exponent.continuum, exponent.exponent, exponent.stimulus, exponent.source.short
        ));
        // with the bound data: how the largest value looks against the smallest
        let numbers = binding
            .profile
            .and_then(|profile| profile.numeric.as_ref())
            .filter(|numbers| numbers.min > 0.0 && binding.binding.summary.is_none());
        if let Some(numbers) = numbers {
            let ratio = numbers.max / numbers.min;
            text.push_str(&format!(
                " Here `{}` runs from {} to {}, a ratio of {:.1}, which looks like {:.1}.",
                binding.display_name(),
                short_number(numbers.min),
                short_number(numbers.max),
                ratio,
                crate::knowledge::stevens::apparent_ratio(exponent.exponent, ratio)
            ));
        }
    }
    Some(text)
}

/// What the eye reads on each channel of a layer's mark, the bound ones marked.
pub fn mark_markdown(spec: &ChartSpec, data: &DataContext, layer_index: usize) -> Option<String> {
    let facts = layer_facts(spec, data);
    let layer = facts.get(layer_index)?;
    let mark = layer.mark()?;
    let mut text = format!(
        "**mark `{}`**: what the eye reads on each of its channels\n\n| channel | read as | bound to |\n|---|---|---|\n",
        mark.as_str()
    );
    for channel in crate::analysis::channels::channels_for_mark(mark) {
        let bound = layer.binding(*channel);
        let context = ChannelContext {
            mark,
            channel: *channel,
            arrange: layer.layer.arrange.as_ref().map(|arrange| arrange.value),
            in_panels: spec.panels.is_some(),
            value_axis: layer.value_axis(),
            binding_is_summarised: bound.is_some_and(|facts| facts.binding.summary.is_some()),
        };
        text.push_str(&format!(
            "| `{}` | {} | {} |\n",
            channel.as_str(),
            perceived_channel(&context).description(),
            bound.map_or_else(
                || "-".to_string(),
                |facts| format!("`{}`", facts.display_name())
            )
        ));
    }
    Some(text)
}

/// The hover at `offset`: the profile of a column named there, the reading of a channel key,
/// the schema's description of another key, and the diagnostics covering the offset.
pub fn hover_at(
    document: &ParsedDocument,
    data: &DataContext,
    diagnostics: &[Diagnostic],
    offset: usize,
    active_ranking: Option<&str>,
) -> Option<HoverContent> {
    let spec = &document.spec;
    let mut sections = Vec::new();
    let mut range = None;
    let references = column_references(spec);
    if let Some(reference) = references
        .iter()
        .find(|reference| reference.range.contains_inclusive(offset))
    {
        range = Some(reference.range);
        match profile_of(data, reference) {
            Some((profile, path)) => {
                let declared = spec
                    .column_declaration(reference.name)
                    .and_then(|declaration| declaration.kind.as_ref())
                    .map(|kind| kind.value);
                sections.push(column_markdown(profile, path, declared));
            }
            None => sections.push(format!(
                "**column `{}`**: no profile (the data could not be read, or has no such column)",
                reference.name
            )),
        }
    }
    let binding_key = spec.layers.iter().find_map(|layer| {
        layer
            .bindings
            .iter()
            .find(|binding| binding.key_range.contains_inclusive(offset))
            .map(|binding| (layer.index, binding.channel, binding.key_range))
    });
    let mark_value = spec.layers.iter().find_map(|layer| {
        let mark = layer.mark.as_ref()?;
        mark.range
            .contains_inclusive(offset)
            .then_some((layer.index, mark.range))
    });
    if let Some((layer_index, mark_range)) = mark_value.filter(|_| range.is_none()) {
        if let Some(text) = mark_markdown(spec, data, layer_index) {
            range = Some(mark_range);
            sections.push(text);
        }
    } else if let Some((layer_index, channel, key_range)) = binding_key {
        if let Some(text) = channel_markdown(spec, data, layer_index, channel, active_ranking) {
            range.get_or_insert(key_range);
            sections.push(text);
        }
    } else if range.is_none() {
        // another key: what the schema says about it
        let node = document.tree.node_at_offset(offset);
        let is_key = node.kind() == NodeKind::String
            && node.parent().is_some_and(|parent| {
                parent.kind() == NodeKind::Member && parent.children().next() == Some(node)
            });
        if is_key {
            let mut path = json_path_of(node);
            if let Some(key) = node.as_str() {
                path.push(PathSegment::Key(key.into_owned()));
            }
            if let Some(description) = description_at_path(&path) {
                range = Some(node.range());
                sections.push(description.to_string());
            }
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
        if let Some(rule) = rule_by_id(diagnostic.rule) {
            if let Some(explanation) = rule_explanation(rule.docs) {
                section.push_str(&format!("\n\n{explanation}"));
            }
        }
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

#[cfg(test)]
mod tests {
    use std::sync::Arc;

    use super::*;
    use crate::analysis::parse_document;
    use crate::data::{DataProfile, DistinctCount, NumericSummary, SourceKey};
    use crate::spec::model::{AttributeKind, DataFormat};

    /// An invented orchard spec; the data it reads is built by hand below.
    const ORCHARD: &str = r##"{
  "title": "Crates of apples per orchard row",
  "source": { "path": "harvest.csv" },
  "columns": { "grade": { "kind": "ordered", "levels": ["C", "B", "A"] } },
  "frame": { "background": "#fff" },
  "mark": "bar",
  "bind": {
    "x": "orchard",
    "y": { "column": "crates", "summary": "sum" },
    "hue": { "column": "grade", "palette": ["#d9e6f2", "#7fa7cf", "#1f4e79"] }
  }
}"##;

    fn column(name: &str, index: usize, kind: AttributeKind) -> ColumnProfile {
        ColumnProfile {
            name: name.to_string(),
            index,
            kind,
            kind_evidence: format!("test profile of `{name}`"),
            zero: None,
            rows: 6,
            missing: 0,
            distinct: DistinctCount {
                value: 3,
                exact: true,
                relative_error: 0.0,
            },
            numeric: None,
            numeric_share: 0.0,
            non_numeric_examples: Vec::new(),
            top_values: vec![("North".to_string(), 2)],
            all_values: None,
            samples: Vec::new(),
            time_range: None,
            header_range: None,
        }
    }

    fn harvest_data() -> DataContext {
        let mut crates = column("crates", 1, AttributeKind::Quantitative);
        crates.numeric = Some(NumericSummary {
            count: 6,
            min: 12.0,
            max: 48.5,
            mean: 30.0,
            histogram: vec![1, 2, 3],
        });
        // "orchard,crates,grade": `crates` is bytes 8..14 of the header line
        crates.header_range = Some((8, 14));
        let profile = DataProfile {
            path: Some(PathBuf::from("/orchards/harvest.csv")),
            format: DataFormat::Csv,
            rows: 6,
            columns: vec![
                column("orchard", 0, AttributeKind::Categorical),
                crates,
                column("grade", 2, AttributeKind::Ordered),
            ],
            is_sample: false,
            problems: Vec::new(),
        };
        DataContext {
            entries: vec![(
                SourceKey::Path("harvest.csv".to_string()),
                Ok(Arc::new(profile)),
            )],
        }
    }

    fn offset_of(needle: &str) -> usize {
        ORCHARD
            .find(needle)
            .unwrap_or_else(|| panic!("`{needle}` in the fixture"))
    }

    #[test]
    fn outline_lists_title_source_columns_and_the_layer_with_its_bindings() {
        let document = parse_document(ORCHARD);
        let outline = document_outline(&document.spec);
        let names: Vec<&str> = outline.iter().map(|entry| entry.name.as_str()).collect();
        assert_eq!(names, ["title", "source", "grade", "frame", "chart"]);
        let chart = &outline[4];
        assert_eq!(chart.detail.as_deref(), Some("bar"));
        let bindings: Vec<(&str, Option<&str>)> = chart
            .children
            .iter()
            .map(|child| (child.name.as_str(), child.detail.as_deref()))
            .collect();
        assert_eq!(
            bindings,
            [
                ("x", Some("orchard")),
                ("y", Some("sum(crates)")),
                ("hue", Some("grade"))
            ]
        );
        // LSP 3.17 DocumentSymbol: selectionRange must be contained in range
        for entry in outline.iter().chain(chart.children.iter()) {
            assert!(
                entry.range.contains_range(entry.selection_range),
                "{entry:?}"
            );
        }
    }

    #[test]
    fn hex_colours_parse_in_all_four_css_forms() {
        // CSS Color Module Level 4, section 5.2 "The RGB hexadecimal notations"
        let short = parse_hex_colour("#fff").expect("#rgb");
        assert_eq!(
            (short.red, short.green, short.blue, short.alpha),
            (1.0, 1.0, 1.0, 1.0)
        );
        let with_alpha = parse_hex_colour("#0000ff80").expect("#rrggbbaa");
        assert_eq!(with_alpha.blue, 1.0);
        assert!((with_alpha.alpha - 128.0 / 255.0).abs() < 1e-6);
        assert!(parse_hex_colour("#f0f8").is_some());
        assert_eq!(
            parse_hex_colour("#1f4e79").map(Rgba::to_hex).as_deref(),
            Some("#1f4e79")
        );
        for bad in ["fff", "#ff", "#ggg", "#12345", "#1f4e79 "] {
            assert_eq!(parse_hex_colour(bad), None, "{bad}");
        }
    }

    #[test]
    fn document_colours_cover_palettes_and_the_frame_background() {
        let document = parse_document(ORCHARD);
        let colours = document_colours(&document.spec);
        let texts: Vec<&str> = colours
            .iter()
            .map(|occurrence| &ORCHARD[occurrence.range.start..occurrence.range.end])
            .collect();
        assert_eq!(texts, ["#fff", "#d9e6f2", "#7fa7cf", "#1f4e79"]);
    }

    #[test]
    fn hover_on_a_column_shows_its_profile() {
        let document = parse_document(ORCHARD);
        let data = harvest_data();
        let offset = offset_of("\"crates\"") + 2;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        assert!(
            hover.markdown.contains("**column `crates`**: quantitative"),
            "{}",
            hover.markdown
        );
        assert!(
            hover.markdown.contains("from 12 to 48.5"),
            "{}",
            hover.markdown
        );
        assert!(
            hover.markdown.contains("`harvest.csv`"),
            "{}",
            hover.markdown
        );
        assert_eq!(&ORCHARD[hover.range.start..hover.range.end], "\"crates\"");
    }

    #[test]
    fn hover_on_a_channel_key_ranks_the_perceived_channel_in_every_ranking() {
        let document = parse_document(ORCHARD);
        let data = harvest_data();
        let offset = offset_of("\"y\"") + 1;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        // a bar on its value axis is read by length (Cleveland & McGill 1984)
        assert!(hover.markdown.contains("length"), "{}", hover.markdown);
        for ranking in ALL_RANKINGS {
            assert!(
                hover.markdown.contains(ranking.citation.short),
                "{}",
                hover.markdown
            );
        }
        // the default ranking comes first and is marked active
        let first_row = hover
            .markdown
            .lines()
            .find(|line| line.starts_with("| ") && !line.starts_with("| ranking"))
            .unwrap_or_default();
        assert!(first_row.contains("(active)"), "{first_row}");
    }

    #[test]
    fn column_and_channel_hovers_say_the_same_effective_kind() {
        // `orchard` is declared ordered; its data looks categorical
        let spec = ORCHARD.replace(
            r#""columns": {"#,
            r#""columns": { "orchard": { "kind": "ordered" },"#,
        );
        let document = parse_document(&spec);
        let data = harvest_data();
        let phrase = "ordered (declared; the data looks categorical)";
        let value = spec.find("\"x\": \"orchard\"").expect("binding") + 7;
        let column = hover_at(&document, &data, &[], value, None).expect("column hover");
        assert!(
            column
                .markdown
                .starts_with(&format!("**column `orchard`**: {phrase}")),
            "{}",
            column.markdown
        );
        let key = spec.find("\"x\"").expect("channel key") + 1;
        let channel = hover_at(&document, &data, &[], key, None).expect("channel hover");
        assert!(
            channel.markdown.contains(&format!("`orchard` is {phrase}")),
            "{}",
            channel.markdown
        );
        // a column whose declaration agrees with the data
        let grade = spec.find("\"column\": \"grade\"").expect("grade") + 11;
        let hover = hover_at(&document, &data, &[], grade, None).expect("grade hover");
        assert!(
            hover
                .markdown
                .starts_with("**column `grade`**: ordered (declared)"),
            "{}",
            hover.markdown
        );
    }

    #[test]
    fn after_a_misspelt_mark_the_channel_hover_names_it_and_the_closest_mark() {
        let data = harvest_data();
        for (written, closest) in [("bars", "bar"), ("pie", "wedge")] {
            let spec = ORCHARD.replace(r#""mark": "bar""#, &format!(r#""mark": "{written}""#));
            let document = parse_document(&spec);
            let key = spec.find("\"y\"").expect("channel key") + 1;
            let hover = hover_at(&document, &data, &[], key, None).expect("channel hover");
            assert!(
                hover.markdown.contains(&format!(
                    "the mark `{written}` is not one markwell knows (the closest is `{closest}`)"
                )),
                "{}",
                hover.markdown
            );
            assert!(
                !hover.markdown.contains("has no mark"),
                "{}",
                hover.markdown
            );
        }
    }

    #[test]
    fn hover_on_a_channel_the_mark_cannot_show_says_so_and_ranks_nothing() {
        let spec = ORCHARD.replace(r#""x": "orchard","#, r#""x": "orchard", "angle": "grade","#);
        let document = parse_document(&spec);
        let data = harvest_data();
        let offset = spec.find("\"angle\"").expect("angle key") + 1;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        assert!(
            hover.markdown.starts_with(
                "**channel `angle`**: a `bar` mark cannot show it, so `grade` is not drawn"
            ),
            "{}",
            hover.markdown
        );
        assert!(!hover.markdown.contains("| ranking"), "{}", hover.markdown);
        // the mark hover lists only the channels a bar shows
        let offset = spec.find("\"bar\"").expect("mark") + 1;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        assert!(!hover.markdown.contains("`angle`"), "{}", hover.markdown);
    }

    #[test]
    fn hover_on_a_channel_key_gives_stevens_exponent_with_the_data() {
        let spec = ORCHARD.replace(
            r#""y": { "column": "crates", "summary": "sum" }"#,
            r#""y": "orchard", "x": "grade", "area": "crates""#,
        );
        let spec = spec
            .replace(r#""x": "orchard","#, "")
            .replace(r#""mark": "bar""#, r#""mark": "point""#);
        let document = parse_document(&spec);
        let data = harvest_data();
        let offset = spec.find("\"area\"").unwrap_or_default() + 1;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        // Stevens (1975): visual area about 0.7 (from memory, see knowledge::stevens);
        // crates runs from 12 to 48.5 in the test profile: ratio 4.0, looks like 4.04^0.7 = 2.7
        assert!(hover.markdown.contains("Stevens"), "{}", hover.markdown);
        assert!(
            hover
                .markdown
                .contains("a ratio of 4.0, which looks like 2.7"),
            "{}",
            hover.markdown
        );
    }

    #[test]
    fn hover_on_the_mark_lists_what_each_channel_is_read_as() {
        let document = parse_document(ORCHARD);
        let data = harvest_data();
        let offset = ORCHARD.find("\"bar\"").unwrap_or_default() + 1;
        let hover = hover_at(&document, &data, &[], offset, None).expect("a hover");
        assert!(
            hover.markdown.contains("**mark `bar`**"),
            "{}",
            hover.markdown
        );
        // the value axis of a bar is read as length, the category axis as a position
        assert!(
            hover.markdown.contains("| `y` | length | `sum(crates)` |"),
            "{}",
            hover.markdown
        );
        assert!(
            hover
                .markdown
                .contains("| `x` | position on a common scale | `orchard` |"),
            "{}",
            hover.markdown
        );
        assert!(
            hover.markdown.contains("| `luminance` |"),
            "{}",
            hover.markdown
        );
    }

    #[test]
    fn hover_on_another_key_shows_the_schema_description() {
        let document = parse_document(ORCHARD);
        let hover = hover_at(
            &document,
            &DataContext::default(),
            &[],
            offset_of("\"mark\"") + 1,
            None,
        )
        .expect("a hover");
        assert_eq!(
            Some(hover.markdown.as_str()),
            description_at_path(&[PathSegment::Key("mark".to_string())])
        );
    }

    #[test]
    fn hover_on_a_diagnostic_explains_the_rule() {
        let text = "{ \"mark\": \"bar\", \"colour\": 1 }";
        let document = parse_document(text);
        let offset = text.find("colour").unwrap_or(0);
        let hover = hover_at(
            &document,
            &DataContext::default(),
            &document.diagnostics,
            offset,
            None,
        )
        .expect("a hover");
        assert!(
            hover.markdown.contains("**unknown-key** (error)"),
            "{}",
            hover.markdown
        );
        let docs = rule_by_id("unknown-key")
            .map(|rule| rule.docs)
            .unwrap_or_default();
        let explanation = rule_explanation(docs).expect("a first section");
        assert!(hover.markdown.contains(explanation), "{}", hover.markdown);
    }

    #[test]
    fn inlay_hints_follow_column_references_with_kind_and_range() {
        let document = parse_document(ORCHARD);
        let data = harvest_data();
        let hints = inlay_hints(&document.spec, &data, TextRange::new(0, ORCHARD.len()));
        let rendered: Vec<(String, &str)> = hints
            .iter()
            .map(|hint| {
                (
                    ORCHARD[..hint.offset].chars().rev().take(8).collect(),
                    hint.label.as_str(),
                )
            })
            .collect();
        assert_eq!(hints.len(), 3, "{rendered:?}");
        assert_eq!(hints[0].label, "categorical, 3 distinct");
        assert_eq!(hints[1].label, "quantitative 12..48.5");
        assert_eq!(
            hints[1].offset,
            offset_of("\"crates\"") + "\"crates\"".len()
        );
        // the declaration key `grade` gets no hint, its use in `hue` does
        assert_eq!(
            hints[2].offset,
            ORCHARD.rfind("\"grade\"").unwrap_or(0) + "\"grade\"".len()
        );
    }

    #[test]
    fn definition_of_a_column_is_its_header_cell() {
        let document = parse_document(ORCHARD);
        let data = harvest_data();
        let target =
            definition_at(&document.spec, &data, offset_of("\"crates\"") + 1).expect("a target");
        assert_eq!(target.path, PathBuf::from("/orchards/harvest.csv"));
        assert_eq!(target.byte_range, (8, 14));
        // no header range known → no definition
        assert_eq!(
            definition_at(&document.spec, &data, offset_of("\"orchard\"") + 1),
            None
        );
    }
}
