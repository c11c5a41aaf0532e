//! `palette-too-similar`: two colours of a palette closer than a CIEDE2000 threshold. Also the
//! palette helpers the other colour rules share (parsed palettes, categorical or ramp role, the
//! thresholds, number formatting for values below a threshold). Documentation:
//! `palette-too-similar.md`.

use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, RelatedLocation, RelatedTarget, Severity};
use crate::knowledge::colour::{ciede2000, parse_hex_colour, Lab, Srgb8};
use crate::spec::model::{AttributeKind, Binding, Channel, Spanned};

use std::collections::HashMap;

pub const ID: &str = "palette-too-similar";

/// Smallest CIEDE2000 difference between two colours that stand for categories (a `hue`
/// palette for categorical or unknown values). Common practice, no source: ΔE00 of about 1 is a
/// just noticeable difference for large patches side by side (from memory), and chart marks are small, apart
/// and matched to a legend, so palettes are usually kept 10 or more apart.
pub const CATEGORICAL_MINIMUM_DIFFERENCE: f64 = 10.0;

/// Smallest CIEDE2000 difference between two colours of a ramp (a `luminance` or `saturation`
/// palette, or a `hue` palette for ordered, quantitative or time values). Common practice, no
/// source: the steps of a ramp are read in order and next to each other, so they may be closer
/// than categories, but steps below about 5 cannot be matched to a legend.
pub const RAMP_MINIMUM_DIFFERENCE: f64 = 5.0;

/// Palettes are compared pair by pair, so only their first this many colours are checked by
/// the colour rules (a bound on the work a pathological document can cause; no real palette
/// comes close).
pub const MAX_PALETTE_COLOURS_COMPARED: usize = 256;

/// Pairs of colours one rule compares in one run, over all palettes: a bound on the work (and
/// the memo's memory) a pathological document can cause. Palettes past the budget are not
/// checked. A real spec stays far below: 250 000 pairs are about a thousand 23-colour palettes.
pub const MAX_PAIRS_COMPARED_PER_RUN: usize = 250_000;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "colour",
    summary: "two palette colours closer than readers can tell apart (CIEDE2000)",
    has_fix: false,
    docs: include_str!("palette-too-similar.md"),
    check: RuleCheck::Semantic(check),
};

/// A palette entry that parsed as a colour, with where it is written.
#[derive(Clone, Copy, Debug)]
pub struct PaletteColour<'a> {
    pub written: &'a Spanned<String>,
    pub colour: Srgb8,
    /// 0-based position in the palette array (invalid entries keep their place).
    pub position: usize,
}

impl PaletteColour<'_> {
    /// "`#c0392b` (2nd)" for messages.
    pub fn describe(&self) -> String {
        format!(
            "`{}` ({})",
            self.written.value,
            ordinal_number(self.position + 1)
        )
    }
}

impl PaletteColour<'_> {
    /// A related location pointing at this colour, for the diagnostic of another one.
    pub fn related(&self, message: impl Into<String>) -> RelatedLocation {
        RelatedLocation {
            target: RelatedTarget::SameDocument(self.written.range),
            message: message.into(),
        }
    }
}

/// Colour computations remembered during one rule run, since specs with many layers repeat
/// their palettes.
#[derive(Debug, Default)]
pub struct ColourMemo {
    labs: HashMap<Srgb8, Lab>,
    differences: HashMap<(Srgb8, Srgb8), f64>,
}

impl ColourMemo {
    /// CIELAB (D65) of a colour.
    pub fn lab(&mut self, colour: Srgb8) -> Lab {
        *self.labs.entry(colour).or_insert_with(|| colour.to_lab())
    }

    /// CIEDE2000 from `first` to `second`.
    pub fn difference(&mut self, first: Srgb8, second: Srgb8) -> f64 {
        if let Some(difference) = self.differences.get(&(first, second)) {
            return *difference;
        }
        let difference = ciede2000(self.lab(first), self.lab(second));
        self.differences.insert((first, second), difference);
        difference
    }
}

/// Counts the pairs a rule run compares against [`MAX_PAIRS_COMPARED_PER_RUN`].
#[derive(Debug)]
pub struct PairBudget {
    left: usize,
}

impl Default for PairBudget {
    fn default() -> PairBudget {
        PairBudget {
            left: MAX_PAIRS_COMPARED_PER_RUN,
        }
    }
}

impl PairBudget {
    /// Take the pairs of a palette of `colours` colours; false when they do not fit.
    pub fn take_palette(&mut self, colours: usize) -> bool {
        let pairs = colours.saturating_mul(colours.saturating_sub(1)) / 2;
        match self.left.checked_sub(pairs) {
            Some(left) => {
                self.left = left;
                true
            }
            None => false,
        }
    }
}

/// "1st", "2nd", "11th", "23rd", ... for any position.
pub fn ordinal_number(number: usize) -> String {
    let suffix = match (number % 10, number % 100) {
        (_, 11..=13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{number}{suffix}")
}

/// The entries of a binding's palette that are valid hex colours (the schema reports the
/// others), at most [`MAX_PALETTE_COLOURS_COMPARED`] of them. Empty when the binding has no
/// palette.
pub fn parsed_palette(binding: &Binding) -> Vec<PaletteColour<'_>> {
    let Some(palette) = &binding.palette else {
        return Vec::new();
    };
    palette
        .value
        .iter()
        .take(MAX_PALETTE_COLOURS_COMPARED)
        .enumerate()
        .filter_map(|(position, written)| {
            parse_hex_colour(&written.value)
                .ok()
                .map(|colour| PaletteColour {
                    written,
                    colour,
                    position,
                })
        })
        .collect()
}

/// What a palette's colours stand for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PaletteRole {
    /// Each colour names a category and must be told apart from every other.
    Categories,
    /// The colours are steps of an ordered scale.
    Ramp,
}

/// `Ramp` for `luminance` and `saturation`, and for `hue` on ordered, quantitative or time
/// values; `Categories` for `hue` on categorical values or values of unknown kind.
pub fn palette_role(facts: &BindingFacts<'_>) -> PaletteRole {
    match (facts.binding.channel, facts.kind) {
        (Channel::Luminance | Channel::Saturation, _) => PaletteRole::Ramp,
        (_, Some(AttributeKind::Ordered | AttributeKind::Quantitative | AttributeKind::Time)) => {
            PaletteRole::Ramp
        }
        _ => PaletteRole::Categories,
    }
}

/// The threshold for a palette of this role.
pub fn minimum_difference(role: PaletteRole) -> f64 {
    match role {
        PaletteRole::Categories => CATEGORICAL_MINIMUM_DIFFERENCE,
        PaletteRole::Ramp => RAMP_MINIMUM_DIFFERENCE,
    }
}

/// Every colour binding (`hue`, `luminance`, `saturation`) of the layers that has a palette.
pub fn palette_bindings<'l, 'a>(
    layers: &'l [LayerFacts<'a>],
) -> impl Iterator<Item = &'l BindingFacts<'a>> {
    layers.iter().flat_map(|layer| {
        layer
            .bindings
            .iter()
            .filter(|facts| facts.binding.channel.is_colour() && facts.binding.palette.is_some())
    })
}

/// A value known to be below `threshold`, rounded to `decimals` places, except that it never
/// prints as the threshold itself: then it is rounded down (9.96 below 10 prints as 9.9, not
/// 10.0; 2.995 below 3 as 2.99).
pub fn format_below(value: f64, threshold: f64, decimals: i32) -> String {
    let scale = 10f64.powi(decimals);
    let mut shown = (value * scale).round() / scale;
    if shown >= threshold {
        shown = ((value * scale).floor() / scale).min(threshold - 1.0 / scale);
    }
    format!("{shown:.*}", decimals.max(0) as usize)
}

/// "the `hue` palette of `branch`" for messages.
pub fn palette_name(facts: &BindingFacts<'_>) -> String {
    match facts.column_name() {
        Some(_) => format!(
            "the `{}` palette of `{}`",
            facts.binding.channel.as_str(),
            facts.display_name()
        ),
        None => format!("the `{}` palette", facts.binding.channel.as_str()),
    }
}

/// "10" or "5" for messages.
pub fn format_threshold(threshold: f64) -> String {
    crate::analysis::rules::part_to_whole_invalid::format_number(threshold)
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    let mut memo = ColourMemo::default();
    let mut budget = PairBudget::default();
    for facts in palette_bindings(&context.layers) {
        let colours = parsed_palette(facts.binding);
        if !budget.take_palette(colours.len()) {
            break;
        }
        let threshold = minimum_difference(palette_role(facts));
        // one finding per colour, against the closest earlier colour, so that each range is
        // reported once
        for (later_index, later) in colours.iter().enumerate() {
            let closest = colours[..later_index]
                .iter()
                .map(|earlier| (earlier, memo.difference(earlier.colour, later.colour)))
                .filter(|(_, difference)| *difference < threshold)
                .min_by(|a, b| a.1.total_cmp(&b.1));
            let Some((earlier, difference)) = closest else {
                continue;
            };
            let message = if earlier.colour == later.colour {
                format!(
                    "{} and {} in {} are the same colour, so their values cannot be told apart",
                    earlier.describe(),
                    later.describe(),
                    palette_name(facts)
                )
            } else {
                format!(
                    "{} and {} in {} differ by ΔE00 {}, below {}: readers can hardly tell their values apart",
                    earlier.describe(),
                    later.describe(),
                    palette_name(facts),
                    format_below(difference, threshold, 1),
                    format_threshold(threshold)
                )
            };
            diagnostics.push(
                Diagnostic::new(ID, Severity::Warning, later.written.range, message)
                    .with_related(earlier.related("the colour it is close to")),
            );
        }
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::AnalysisConfig;
    use crate::data::DataContext;
    use crate::knowledge::colour::ciede2000_between;

    /// The messages this rule gives for a spec without data.
    fn messages(spec: &str) -> Vec<String> {
        crate::analysis::rules::messages_without_data(check, spec)
    }

    #[test]
    fn messages_give_both_colours_and_the_difference() {
        let found = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "hue": { "column": "oven", "palette": ["#3b7dd8", "#c0392b", "#3f83d0"] } } }"##,
        );
        assert_eq!(
            found,
            vec![
                "`#3b7dd8` (1st) and `#3f83d0` (3rd) in the `hue` palette of `oven` differ by ΔE00 2.4, below 10: readers can hardly tell their values apart"
            ]
        );
        // the same steps on `luminance` are a ramp, held to 5: #555555 to #666666 is 6.2
        let ramp = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "luminance": { "column": "crust", "palette": ["#555555", "#666666", "#777777"] } } }"##,
        );
        assert!(ramp.is_empty(), "{ramp:?}");
    }

    #[test]
    fn the_closer_earlier_colour_is_the_related_location() {
        let text = r##"{ "mark": "bar", "bind": { "hue": { "column": "oven", "palette": ["#3b7dd8", "#c0392b", "#3f83d0"] } } }"##;
        let document = crate::analysis::parse_document(text);
        let data = DataContext::default();
        let config = AnalysisConfig::default();
        let found = check(&RuleContext::new(&document, &data, &config));
        assert_eq!(found.len(), 1);
        let RelatedTarget::SameDocument(range) = found[0].related[0].target else {
            panic!("expected a location in the spec");
        };
        assert_eq!(text.get(range.start..range.end), Some("\"#3b7dd8\""));
        assert_eq!(
            text.get(found[0].range.start..found[0].range.end),
            Some("\"#3f83d0\"")
        );
    }

    #[test]
    fn below_threshold_formatting_never_reaches_the_threshold() {
        // every value in [0, 10) in steps of 0.0007, against 10 at one decimal and 3 at two
        let mut value = 0.0;
        while value < 10.0 {
            let shown: f64 = format_below(value, 10.0, 1).parse().unwrap_or(f64::NAN);
            assert!(
                shown < 10.0 && (shown - value).abs() <= 0.1,
                "{value} -> {shown}"
            );
            if value < 3.0 {
                let shown: f64 = format_below(value, 3.0, 2).parse().unwrap_or(f64::NAN);
                assert!(
                    shown < 3.0 && (shown - value).abs() <= 0.01,
                    "{value} -> {shown}"
                );
            }
            value += 0.0007;
        }
    }

    #[test]
    fn the_pair_budget_stops_at_the_bound() {
        let mut budget = PairBudget::default();
        // a 256-colour palette has 32 640 pairs: seven fit in 250 000, the eighth does not
        for _ in 0..7 {
            assert!(budget.take_palette(MAX_PALETTE_COLOURS_COMPARED));
        }
        assert!(!budget.take_palette(MAX_PALETTE_COLOURS_COMPARED));
        // smaller palettes still fit in what is left (250 000 - 7 * 32 640 = 21 520)
        assert!(budget.take_palette(100));
        assert!(!budget.take_palette(usize::MAX));
    }

    #[test]
    fn ordinals_beyond_a_byte() {
        assert_eq!(ordinal_number(1), "1st");
        assert_eq!(ordinal_number(12), "12th");
        assert_eq!(ordinal_number(23), "23rd");
        assert_eq!(ordinal_number(111), "111th");
        assert_eq!(ordinal_number(302), "302nd");
    }

    #[test]
    fn long_palettes_are_bounded() {
        let entries: Vec<String> = (0..1000).map(|_| "\"#123456\"".to_string()).collect();
        let spec = format!(
            r#"{{ "mark": "bar", "bind": {{ "hue": {{ "column": "oven", "palette": [{}] }} }} }}"#,
            entries.join(",")
        );
        // every colour after the first repeats it, but only the first 256 are compared
        assert_eq!(messages(&spec).len(), MAX_PALETTE_COLOURS_COMPARED - 1);
    }

    fn colour(text: &str) -> Srgb8 {
        parse_hex_colour(text).unwrap_or(Srgb8::new(0, 0, 0))
    }

    #[test]
    fn categorical_threshold_edges_computed_with_ciede2000() {
        // values computed with `ciede2000_between` (Sharma et al. 2005, whose published test
        // pairs `tests/knowledge_colour.rs` checks): the pair used by the hit fixture is far
        // below the threshold, the near-miss pair just above it
        let close = ciede2000_between(colour("#3b7dd8"), colour("#3f83d0"));
        assert!(close < 3.0, "{close}");
        // neighbouring greys on both sides of the threshold: #777777 to #929292 is ΔE00 9.92,
        // to #939393 10.25 (computed with `ciede2000_between`)
        let below = ciede2000_between(colour("#777777"), colour("#929292"));
        let above = ciede2000_between(colour("#777777"), colour("#939393"));
        assert!(
            (9.8..CATEGORICAL_MINIMUM_DIFFERENCE).contains(&below),
            "{below}"
        );
        assert!(
            (CATEGORICAL_MINIMUM_DIFFERENCE..10.4).contains(&above),
            "{above}"
        );
        assert!(below > RAMP_MINIMUM_DIFFERENCE, "{below}");
    }

    #[test]
    fn values_below_a_threshold_never_print_as_the_threshold() {
        assert_eq!(format_below(9.96, 10.0, 1), "9.9");
        assert_eq!(format_below(2.443, 10.0, 1), "2.4");
        assert_eq!(format_below(2.9951, 3.0, 2), "2.99");
        assert_eq!(format_below(1.2345, 3.0, 2), "1.23");
        // away from the threshold, ordinary rounding
        assert_eq!(format_below(6.169, 10.0, 1), "6.2");
        assert_eq!(format_below(7.39, 10.0, 1), "7.4");
    }

    #[test]
    fn invalid_entries_are_skipped_but_keep_their_position() {
        let document = crate::analysis::parse_document(
            r##"{ "mark": "bar", "bind": { "hue": { "column": "kind", "palette": ["#fff", "oops", "#000000"] } } }"##,
        );
        let layer = &document.spec.layers[0];
        let binding = &layer.bindings[0];
        let colours = parsed_palette(binding);
        assert_eq!(colours.len(), 2);
        assert_eq!(colours[1].position, 2);
        assert_eq!(colours[1].colour, Srgb8::new(0, 0, 0));
        assert_eq!(colours[1].describe(), "`#000000` (3rd)");
    }
}
