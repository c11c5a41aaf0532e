//! `ramp-not-monotonic`: a palette for ordered values whose CIELAB L* (CIE 15) does not rise or
//! fall steadily, so lightness does not follow the order of the values. Two-armed (diverging)
//! palettes are accepted. Documentation: `ramp-not-monotonic.md`.

use crate::analysis::facts::BindingFacts;
use crate::analysis::rules::palette_too_similar::{
    palette_bindings, palette_name, parsed_palette, ColourMemo,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::colour::Lab;
use crate::spec::model::{AttributeKind, Channel};

pub const ID: &str = "ramp-not-monotonic";

/// L* steps smaller than this count as flat. Our choice, no source: one L* unit is about the
/// smallest lightness difference seen between large patches side by side (from memory).
pub const FLAT_STEP_LIGHTNESS: f64 = 1.0;

/// Below this CIELAB chroma C*ab a colour counts as neutral and its hue angle is ignored. Our
/// choice, no source.
pub const NEUTRAL_CHROMA: f64 = 10.0;

/// Largest hue-angle difference (degrees, CIELAB h_ab) between a colour of a diverging arm and
/// that arm's end. Our choice, no source.
pub const ARM_HUE_TOLERANCE_DEGREES: f64 = 45.0;

/// Smallest hue-angle difference between the two ends of a diverging palette. Our choice, no
/// source.
pub const DIVERGING_END_HUE_SEPARATION_DEGREES: f64 = 60.0;

/// Messages call a ramp's direction clear when its first and last colours differ by at least
/// this many L* units; below, they say that both ends are about as light. Our choice, no
/// source (it matches the ramp threshold of `palette-too-similar`, ΔE00 5, for neutrals at
/// mid lightness).
pub const CLEAR_DIRECTION_LIGHTNESS: f64 = 5.0;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "colour",
    summary: "a palette for ordered values whose lightness (CIELAB L*) goes up and down",
    has_fix: false,
    docs: include_str!("ramp-not-monotonic.md"),
    check: RuleCheck::Semantic(check),
};

/// Whether the palette of a binding is meant to show order: every `luminance` and `saturation`
/// palette (unless the values are known to be categorical: that is another rule's finding), and
/// `hue` palettes for ordered, quantitative or time values.
fn shows_order(facts: &BindingFacts<'_>) -> bool {
    match facts.binding.channel {
        Channel::Luminance | Channel::Saturation => facts.kind != Some(AttributeKind::Categorical),
        Channel::Hue => matches!(
            facts.kind,
            Some(AttributeKind::Ordered | AttributeKind::Quantitative | AttributeKind::Time)
        ),
        _ => false,
    }
}

/// Why a ramp is not monotonic.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RampBreak {
    /// The colour at this index turns back against the ramp's direction (`rising`: the ramp
    /// gets lighter from its first colour to its last, or from its first real step).
    Reverses { index: usize, rising: bool },
    /// The colour at this index is as light as the one before (only for `luminance`).
    Flat { index: usize },
}

/// Check a ramp's L* values. `flat_steps_break` is true for `luminance`, where every step must
/// change lightness; `saturation` and `hue` ramps may keep it.
pub fn find_break(labs: &[Lab], flat_steps_break: bool) -> Option<RampBreak> {
    if labs.len() < 2 {
        return None;
    }
    let steps: Vec<f64> = labs
        .windows(2)
        .map(|pair| pair[1].lightness - pair[0].lightness)
        .collect();
    let overall = labs[labs.len() - 1].lightness - labs[0].lightness;
    let direction = if overall.abs() >= FLAT_STEP_LIGHTNESS {
        overall.signum()
    } else {
        match steps.iter().find(|step| step.abs() >= FLAT_STEP_LIGHTNESS) {
            Some(step) => step.signum(),
            None if flat_steps_break => return Some(RampBreak::Flat { index: 1 }),
            None => return None,
        }
    };
    for (step_index, step) in steps.iter().enumerate() {
        if step.abs() < FLAT_STEP_LIGHTNESS {
            if flat_steps_break {
                return Some(RampBreak::Flat {
                    index: step_index + 1,
                });
            }
        } else if step.signum() != direction {
            if is_diverging(labs, &steps) {
                return None;
            }
            return Some(RampBreak::Reverses {
                index: step_index + 1,
                rising: direction > 0.0,
            });
        }
    }
    None
}

/// Two arms meeting at one turning point, each arm keeping the hue of its end, the two ends of
/// clearly different hues: a diverging palette, whose lightness shows the distance from a
/// midpoint and whose hue shows the side.
fn is_diverging(labs: &[Lab], steps: &[f64]) -> bool {
    let signs: Vec<f64> = steps
        .iter()
        .filter(|step| step.abs() >= FLAT_STEP_LIGHTNESS)
        .map(|step| step.signum())
        .collect();
    let turns = signs.windows(2).filter(|pair| pair[0] != pair[1]).count();
    if turns != 1 {
        return false;
    }
    // the turning colour: the lightest or darkest one
    let rising_first = signs.first().copied().unwrap_or(0.0) > 0.0;
    let turn = (0..labs.len())
        .max_by(|&a, &b| {
            let (first, second) = (labs[a].lightness, labs[b].lightness);
            if rising_first {
                first.total_cmp(&second)
            } else {
                second.total_cmp(&first)
            }
        })
        .unwrap_or(0);
    if turn == 0 || turn == labs.len() - 1 {
        return false;
    }
    let (Some(start_hue), Some(end_hue)) = (hue_angle(labs[0]), hue_angle(labs[labs.len() - 1]))
    else {
        return false;
    };
    let arm_keeps_hue = |arm: &[Lab], end: f64| {
        arm.iter()
            .filter_map(|lab| hue_angle(*lab))
            .all(|hue| hue_difference(hue, end) <= ARM_HUE_TOLERANCE_DEGREES)
    };
    hue_difference(start_hue, end_hue) >= DIVERGING_END_HUE_SEPARATION_DEGREES
        && arm_keeps_hue(&labs[..=turn], start_hue)
        && arm_keeps_hue(&labs[turn..], end_hue)
}

/// CIELAB hue angle h_ab in degrees, `None` for near-neutral colours.
fn hue_angle(lab: Lab) -> Option<f64> {
    let chroma = lab.a.hypot(lab.b);
    (chroma >= NEUTRAL_CHROMA).then(|| lab.b.atan2(lab.a).to_degrees().rem_euclid(360.0))
}

/// The smaller angle between two hue angles, 0..=180.
fn hue_difference(first: f64, second: f64) -> f64 {
    let difference = (first - second).rem_euclid(360.0);
    difference.min(360.0 - difference)
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    let mut memo = ColourMemo::default();
    for facts in palette_bindings(&context.layers) {
        if !shows_order(facts) {
            continue;
        }
        let colours = parsed_palette(facts.binding);
        let labs: Vec<Lab> = colours.iter().map(|entry| memo.lab(entry.colour)).collect();
        let flat_steps_break = facts.binding.channel == Channel::Luminance;
        let Some(found) = find_break(&labs, flat_steps_break) else {
            continue;
        };
        let lightness = labs
            .iter()
            .map(|lab| format!("{:.1}", lab.lightness))
            .collect::<Vec<_>>()
            .join(", ");
        let index = match found {
            RampBreak::Reverses { index, .. } | RampBreak::Flat { index } => index,
        };
        let (Some(offender), Some(previous)) = (colours.get(index), colours.get(index - 1)) else {
            continue;
        };
        let ends_differ =
            (labs[labs.len() - 1].lightness - labs[0].lightness).abs() >= CLEAR_DIRECTION_LIGHTNESS;
        let what = match found {
            RampBreak::Reverses { .. } if !ends_differ => format!(
                "its first and last colours are about as light, and {} is {} than {}",
                offender.describe(),
                if labs[index].lightness > labs[index - 1].lightness {
                    "lighter"
                } else {
                    "darker"
                },
                previous.describe()
            ),
            RampBreak::Reverses { rising: true, .. } => format!(
                "it runs from dark to light, but {} is darker than {}",
                offender.describe(),
                previous.describe()
            ),
            RampBreak::Reverses { rising: false, .. } => format!(
                "it runs from light to dark, but {} is lighter than {}",
                offender.describe(),
                previous.describe()
            ),
            RampBreak::Flat { .. } => format!(
                "{} is as light as {}",
                offender.describe(),
                previous.describe()
            ),
        };
        diagnostics.push(
            Diagnostic::new(
            ID,
            Severity::Warning,
            offender.written.range,
            format!(
                "the lightness (CIELAB L*) of {} goes {lightness}: {what}, so lightness does not follow the order of the values",
                palette_name(facts),
            ),
            )
            .with_related(previous.related("the colour before it")),
        );
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
    fn message_lists_the_lightness_values() {
        let found = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "luminance": { "column": "crust", "palette": ["#2e6fb0", "#e0a31a", "#c0392b"] } } }"##,
        );
        assert_eq!(
            found,
            vec![
                "the lightness (CIELAB L*) of the `luminance` palette of `crust` goes 45.7, 71.0, 44.7: its first and last colours are about as light, and `#e0a31a` (2nd) is lighter than `#2e6fb0` (1st), so lightness does not follow the order of the values"
            ]
        );
        let clear = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "luminance": { "column": "crust", "palette": ["#eeeeee", "#555555", "#888888", "#222222"] } } }"##,
        );
        assert_eq!(
            clear,
            vec![
                "the lightness (CIELAB L*) of the `luminance` palette of `crust` goes 94.1, 36.1, 56.7, 13.2: it runs from light to dark, but `#888888` (3rd) is lighter than `#555555` (2nd), so lightness does not follow the order of the values"
            ]
        );
        // on `hue` the rule needs to know the values are ordered
        let categories = messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "hue": { "column": "crust", "palette": ["#2e6fb0", "#e0a31a", "#c0392b"] } } }"##,
        );
        assert!(categories.is_empty(), "{categories:?}");
        let declared = messages(
            r##"{ "columns": { "crust": { "kind": "ordered" } }, "mark": "bar", "bind": { "x": "branch", "hue": { "column": "crust", "palette": ["#2e6fb0", "#e0a31a", "#c0392b"] } } }"##,
        );
        assert_eq!(declared.len(), 1, "{declared:?}");
    }
    use crate::knowledge::colour::{parse_hex_colour, Srgb8};

    fn labs(colours: &[&str]) -> Vec<Lab> {
        colours
            .iter()
            .map(|text| {
                parse_hex_colour(text)
                    .unwrap_or(Srgb8::new(0, 0, 0))
                    .to_lab()
            })
            .collect()
    }

    #[test]
    fn steady_ramps_pass_in_either_direction() {
        // greys: L* rises steadily (CIE 15 L* of a neutral grows with its luminance)
        let rising = labs(&["#222222", "#555555", "#888888", "#bbbbbb", "#eeeeee"]);
        assert_eq!(find_break(&rising, true), None);
        let falling: Vec<Lab> = rising.iter().rev().copied().collect();
        assert_eq!(find_break(&falling, true), None);
    }

    #[test]
    fn a_rainbow_for_ordered_values_turns_back() {
        // red L* 53.24, yellow 97.14, green 87.73, blue 32.30: the CIELAB (D65) lightness of the
        // sRGB primaries and secondaries as commonly tabulated (from memory); overall falling,
        // so yellow (index 1) is the first break
        let rainbow = labs(&["#ff0000", "#ffff00", "#00ff00", "#0000ff"]);
        assert!((rainbow[0].lightness - 53.24).abs() < 0.01);
        assert!((rainbow[3].lightness - 32.30).abs() < 0.01);
        assert_eq!(
            find_break(&rainbow, false),
            Some(RampBreak::Reverses {
                index: 1,
                rising: false
            })
        );
    }

    #[test]
    fn flat_steps_break_only_luminance_ramps() {
        // #777777 and #787878 differ by 0.4 L* (50.03 and 50.43), below one unit
        let ramp = labs(&["#333333", "#777777", "#787878", "#bbbbbb"]);
        assert_eq!(find_break(&ramp, true), Some(RampBreak::Flat { index: 2 }));
        assert_eq!(find_break(&ramp, false), None);
        // a step of a bit more than one unit is not flat (#777777 to #7a7a7a: 1.2 L*)
        let ramp = labs(&["#333333", "#777777", "#7a7a7a", "#bbbbbb"]);
        assert_eq!(find_break(&ramp, true), None);
    }

    #[test]
    fn diverging_palettes_with_two_hued_arms_pass() {
        // brown arm (h_ab 68° and 80°), near-white middle (C*ab 2.2), teal arm (h_ab 179° and
        // 178°), L* 36.1, 69.5, 94.9, 66.4, 34.8: one turn, each arm keeps its hue
        let diverging = labs(&["#7a4a12", "#c9a46a", "#f2f0ec", "#6aaea0", "#145c50"]);
        assert_eq!(find_break(&diverging, false), None);
        // the same shape in one hue (dark, light, dark blue) is not diverging
        let one_hue = labs(&["#1f4e79", "#9cc3e6", "#1f4e79"]);
        assert_eq!(
            find_break(&one_hue, false),
            Some(RampBreak::Reverses {
                index: 2,
                rising: true
            })
        );
    }
}
