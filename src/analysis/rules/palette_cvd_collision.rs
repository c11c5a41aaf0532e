//! `palette-cvd-collision`: two palette colours that are told apart with normal colour vision
//! but fall below the CIEDE2000 threshold under simulated protanopia, deuteranopia or
//! tritanopia (Machado et al. 2009, severity 1.0). Documentation: `palette-cvd-collision.md`.

use crate::analysis::rules::palette_too_similar::{
    format_below, format_threshold, minimum_difference, palette_bindings, palette_name,
    palette_role, parsed_palette, PairBudget, PaletteColour,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::colour::{
    ciede2000, simulate_deficiency, ColourVisionDeficiency, Lab, Srgb8,
};
use std::collections::HashMap;

pub const ID: &str = "palette-cvd-collision";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "colour",
    summary: "two palette colours that look alike with a colour-vision deficiency",
    has_fix: false,
    docs: include_str!("palette-cvd-collision.md"),
    check: RuleCheck::Semantic(check),
};

/// A pair that collides under at least one simulated deficiency.
#[derive(Debug, PartialEq)]
pub struct Collision {
    pub normal_difference: f64,
    /// Each deficiency under which the pair falls below the threshold, with the difference.
    pub under: Vec<(ColourVisionDeficiency, f64)>,
}

/// A colour in CIELAB as seen normally and under each simulated deficiency (in the order of
/// [`ColourVisionDeficiency::ALL`]).
#[derive(Clone, Copy, Debug)]
pub struct SimulatedColour {
    pub normal: Lab,
    pub under: [Lab; 3],
}

impl SimulatedColour {
    pub fn new(colour: Srgb8) -> SimulatedColour {
        SimulatedColour {
            normal: colour.to_lab(),
            under: ColourVisionDeficiency::ALL
                .map(|deficiency| simulate_deficiency(colour, deficiency).to_lab()),
        }
    }
}

/// CIEDE2000 between two colours normally and under each deficiency.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PairDifferences {
    pub normal: f64,
    pub under: [f64; 3],
}

impl PairDifferences {
    pub fn between(first: &SimulatedColour, second: &SimulatedColour) -> PairDifferences {
        PairDifferences {
            normal: ciede2000(first.normal, second.normal),
            under: [0, 1, 2].map(|index| ciede2000(first.under[index], second.under[index])),
        }
    }

    /// The collision against `threshold`: `None` when the colours are already closer than the
    /// threshold normally (that is `palette-too-similar`'s finding) or stay apart under every
    /// deficiency.
    pub fn collision(&self, threshold: f64) -> Option<Collision> {
        if self.normal < threshold {
            return None;
        }
        let under: Vec<(ColourVisionDeficiency, f64)> = ColourVisionDeficiency::ALL
            .into_iter()
            .zip(self.under)
            .filter(|(_, difference)| *difference < threshold)
            .collect();
        (!under.is_empty()).then_some(Collision {
            normal_difference: self.normal,
            under,
        })
    }
}

fn smallest_difference(collision: &Collision) -> f64 {
    collision
        .under
        .iter()
        .map(|(_, difference)| *difference)
        .fold(f64::INFINITY, f64::min)
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    let mut simulated: HashMap<Srgb8, SimulatedColour> = HashMap::new();
    let mut pairs: HashMap<(Srgb8, Srgb8), PairDifferences> = HashMap::new();
    let mut budget = PairBudget::default();
    for facts in palette_bindings(&context.layers) {
        let colours = parsed_palette(facts.binding);
        if !budget.take_palette(colours.len()) {
            break;
        }
        let threshold = minimum_difference(palette_role(facts));
        // one finding per colour, against the earlier colour it collides with worst, so that
        // each range is reported once
        for (later_index, later) in colours.iter().enumerate() {
            let mut worst: Option<(&PaletteColour<'_>, Collision)> = None;
            for earlier in &colours[..later_index] {
                // simulated once per colour and compared once per pair
                let key = (earlier.colour, later.colour);
                let differences = match pairs.get(&key) {
                    Some(differences) => *differences,
                    None => {
                        let first = *simulated
                            .entry(earlier.colour)
                            .or_insert_with(|| SimulatedColour::new(earlier.colour));
                        let second = *simulated
                            .entry(later.colour)
                            .or_insert_with(|| SimulatedColour::new(later.colour));
                        let differences = PairDifferences::between(&first, &second);
                        pairs.insert(key, differences);
                        differences
                    }
                };
                let Some(found) = differences.collision(threshold) else {
                    continue;
                };
                let worse = worst.as_ref().is_none_or(|(_, current)| {
                    smallest_difference(&found) < smallest_difference(current)
                });
                if worse {
                    worst = Some((earlier, found));
                }
            }
            let Some((earlier, found)) = worst else {
                continue;
            };
            let under = found
                .under
                .iter()
                .map(|(deficiency, difference)| {
                    format!(
                        "{} (ΔE00 {})",
                        deficiency.as_str(),
                        format_below(*difference, threshold, 1)
                    )
                })
                .collect::<Vec<_>>()
                .join(" and ");
            diagnostics.push(
                Diagnostic::new(
                    ID,
                    Severity::Warning,
                    later.written.range,
                    format!(
                    "{} and {} in {} differ by ΔE00 {:.1}, but below {} under simulated {under}",
                    earlier.describe(),
                    later.describe(),
                    palette_name(facts),
                    found.normal_difference,
                    format_threshold(threshold)
                ),
                )
                .with_related(earlier.related("the colour it collides with")),
            );
        }
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The messages this rule gives for a spec without data.
    fn messages(spec: &str) -> Vec<String> {
        crate::analysis::rules::messages_without_data(check, spec)
    }

    #[test]
    fn message_names_the_deficiency_and_both_differences() {
        let found = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "hue": { "column": "oven", "palette": ["#c0392b", "#5a9a2f"] } } }"##,
        );
        assert_eq!(
            found,
            vec![
                "`#c0392b` (1st) and `#5a9a2f` (2nd) in the `hue` palette of `oven` differ by ΔE00 60.7, but below 10 under simulated deuteranopia (ΔE00 7.4)"
            ]
        );
    }
    use crate::analysis::rules::palette_too_similar::{
        CATEGORICAL_MINIMUM_DIFFERENCE, RAMP_MINIMUM_DIFFERENCE,
    };
    use crate::knowledge::colour::parse_hex_colour;

    fn collision(
        first: &SimulatedColour,
        second: &SimulatedColour,
        threshold: f64,
    ) -> Option<Collision> {
        PairDifferences::between(first, second).collision(threshold)
    }

    fn colour(text: &str) -> SimulatedColour {
        SimulatedColour::new(parse_hex_colour(text).unwrap_or(Srgb8::new(0, 0, 0)))
    }

    #[test]
    fn red_and_green_collide_for_deuteranopes_only() {
        // computed with the Machado et al. (2009) severity-1.0 matrices and CIEDE2000:
        // #c0392b / #5a9a2f are ΔE00 60.7 apart normally, 7.4 under deuteranopia, 23.7 under
        // protanopia and 57.4 under tritanopia
        let found = collision(
            &colour("#c0392b"),
            &colour("#5a9a2f"),
            CATEGORICAL_MINIMUM_DIFFERENCE,
        );
        let Some(found) = found else {
            panic!("expected a collision");
        };
        assert!((60.0..61.5).contains(&found.normal_difference));
        assert_eq!(found.under.len(), 1);
        assert_eq!(found.under[0].0, ColourVisionDeficiency::Deuteranopia);
        assert!((7.0..8.0).contains(&found.under[0].1));
        // the same pair is a near miss on a ramp's lower threshold
        assert_eq!(
            collision(
                &colour("#c0392b"),
                &colour("#5a9a2f"),
                RAMP_MINIMUM_DIFFERENCE
            ),
            None
        );
    }

    #[test]
    fn blue_and_purple_collide_for_both_red_green_deficiencies() {
        // #2e6fb0 / #8e5bb0: ΔE00 24.3 normally, 2.1 under protanopia, 4.8 under deuteranopia,
        // 43.5 under tritanopia (computed as above)
        let found = collision(
            &colour("#2e6fb0"),
            &colour("#8e5bb0"),
            CATEGORICAL_MINIMUM_DIFFERENCE,
        );
        let deficiencies: Vec<ColourVisionDeficiency> = found
            .map(|found| found.under.iter().map(|(d, _)| *d).collect())
            .unwrap_or_default();
        assert_eq!(
            deficiencies,
            vec![
                ColourVisionDeficiency::Protanopia,
                ColourVisionDeficiency::Deuteranopia
            ]
        );
    }

    #[test]
    fn pairs_already_too_similar_are_left_to_the_other_rule() {
        // #3b7dd8 / #3f83d0 are ΔE00 2.4 apart with normal vision
        assert_eq!(
            collision(
                &colour("#3b7dd8"),
                &colour("#3f83d0"),
                CATEGORICAL_MINIMUM_DIFFERENCE
            ),
            None
        );
    }

    #[test]
    fn greys_never_collide_more_than_they_differ() {
        // the three matrices keep neutral greys neutral (their rows sum to 1, within rounding),
        // so a grey pair that is far enough apart normally stays apart
        assert_eq!(
            collision(
                &colour("#777777"),
                &colour("#939393"),
                CATEGORICAL_MINIMUM_DIFFERENCE
            ),
            None
        );
    }
}
