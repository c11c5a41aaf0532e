//! `low-contrast-mark`: a mark colour (`style.colour`, or a colour of a colour channel's palette)
//! whose WCAG 2.1 contrast ratio against the frame background is below 3:1 (SC 1.4.11, non-text
//! contrast). Documentation: `low-contrast-mark.md`.

use crate::analysis::rules::palette_too_similar::{format_below, palette_name, parsed_palette};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::colour::{
    parse_hex_colour, wcag_contrast_ratio, Srgb8, WCAG_NON_TEXT_MINIMUM_CONTRAST,
};
use crate::spec::model::{Frame, Spanned};

pub const ID: &str = "low-contrast-mark";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "colour",
    summary: "a mark colour with less than 3:1 contrast against the background (WCAG 2.1)",
    has_fix: false,
    docs: include_str!("low-contrast-mark.md"),
    check: RuleCheck::Semantic(check),
};

/// The colour drawn when `colour` is laid over `background` at `opacity` (0..=1): source-over
/// compositing on the sRGB-encoded values, the way web pages blend (from memory), rounded to 8
/// bits. Opacity outside 0..=1 is clamped; NaN counts as opaque.
pub fn composite_over(colour: Srgb8, background: Srgb8, opacity: f64) -> Srgb8 {
    let alpha = if opacity.is_nan() {
        1.0
    } else {
        opacity.clamp(0.0, 1.0)
    };
    let blend = |front: u8, back: u8| -> u8 {
        let value = alpha * f64::from(front) + (1.0 - alpha) * f64::from(back);
        value.round().clamp(0.0, 255.0) as u8
    };
    Srgb8::new(
        blend(colour.red, background.red),
        blend(colour.green, background.green),
        blend(colour.blue, background.blue),
    )
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let frame = &context.spec().frame;
    // an invalid background is the schema's finding
    let Ok(background) = parse_hex_colour(frame.background_or_default()) else {
        return Vec::new();
    };
    let background_phrase = match &frame.background {
        Some(written) => format!("the background `{}`", written.value),
        None => format!(
            "the default background `{}` (`frame.background` is not set)",
            Frame::DEFAULT_BACKGROUND
        ),
    };
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let opacity = layer
            .layer
            .style
            .opacity
            .as_ref()
            .map(|opacity| opacity.value)
            .filter(|opacity| *opacity < 1.0);
        let mut check_colour = |written: &Spanned<String>, colour: Srgb8, whose: String| {
            let drawn = opacity.map_or(colour, |opacity| {
                composite_over(colour, background, opacity)
            });
            let ratio = wcag_contrast_ratio(drawn, background);
            if ratio >= WCAG_NON_TEXT_MINIMUM_CONTRAST {
                return;
            }
            let at_opacity = opacity
                .map(|opacity| {
                    format!(
                        " at opacity {opacity} (drawn as `{}`)",
                        drawn.to_hex().to_lowercase()
                    )
                })
                .unwrap_or_default();
            diagnostics.push(Diagnostic::new(
                ID,
                Severity::Warning,
                written.range,
                format!(
                    "{whose}{at_opacity} has a contrast of {}:1 against {background_phrase}, below the 3:1 WCAG 2.1 sets for graphical objects (SC 1.4.11)",
                    format_below(ratio, WCAG_NON_TEXT_MINIMUM_CONTRAST, 2)
                ),
            ));
        };
        let colour_bindings: Vec<_> = layer
            .bindings
            .iter()
            .filter(|facts| facts.binding.channel.is_colour())
            .collect();
        // a colour channel decides the colour of the marks, so `style.colour` counts only when
        // no colour channel is bound
        if colour_bindings.is_empty() {
            if let Some(written) = &layer.layer.style.colour {
                if let Ok(colour) = parse_hex_colour(&written.value) {
                    check_colour(
                        written,
                        colour,
                        format!("the mark colour `{}`", written.value),
                    );
                }
            }
        }
        for facts in colour_bindings {
            for entry in parsed_palette(facts.binding) {
                check_colour(
                    entry.written,
                    entry.colour,
                    format!("{} in {}", entry.describe(), palette_name(facts)),
                );
            }
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
    fn message_says_when_the_default_background_was_used() {
        let default = messages(
            r##"{ "mark": "point", "bind": { "x": "a", "y": "b" }, "style": { "colour": "#959595" } }"##,
        );
        assert_eq!(
            default,
            vec![
                "the mark colour `#959595` has a contrast of 2.99:1 against the default background `#ffffff` (`frame.background` is not set), below the 3:1 WCAG 2.1 sets for graphical objects (SC 1.4.11)"
            ]
        );
        let explicit = messages(
            r##"{ "frame": { "background": "#ffffff" }, "mark": "point", "bind": { "x": "a", "y": "b" }, "style": { "colour": "#959595" } }"##,
        );
        assert_eq!(
            explicit,
            vec![
                "the mark colour `#959595` has a contrast of 2.99:1 against the background `#ffffff`, below the 3:1 WCAG 2.1 sets for graphical objects (SC 1.4.11)"
            ]
        );
        // #949494 is 3.03:1: no finding; an invalid background is left to the schema
        assert!(messages(
            r##"{ "mark": "point", "bind": { "x": "a", "y": "b" }, "style": { "colour": "#949494" } }"##
        )
        .is_empty());
        assert!(messages(
            r##"{ "frame": { "background": "ivory" }, "mark": "point", "bind": { "x": "a", "y": "b" }, "style": { "colour": "#fefefe" } }"##
        )
        .is_empty());
    }

    const WHITE: Srgb8 = Srgb8::new(255, 255, 255);

    #[test]
    fn greys_on_white_either_side_of_three_to_one() {
        // WCAG 2.1 relative luminance and contrast ratio (the formulas `tests/knowledge_colour.rs`
        // checks against W3C examples): #949494 on white is 3.03:1, #959595 2.995:1
        let passing = wcag_contrast_ratio(Srgb8::new(0x94, 0x94, 0x94), WHITE);
        let failing = wcag_contrast_ratio(Srgb8::new(0x95, 0x95, 0x95), WHITE);
        assert!((3.03..3.04).contains(&passing), "{passing}");
        assert!((2.99..3.0).contains(&failing), "{failing}");
        assert_eq!(
            format_below(failing, WCAG_NON_TEXT_MINIMUM_CONTRAST, 2),
            "2.99"
        );
    }

    #[test]
    fn opacity_blends_towards_the_background() {
        // half-transparent black on white: 0.5 * 0 + 0.5 * 255 = 127.5, rounded to 128
        assert_eq!(
            composite_over(Srgb8::new(0, 0, 0), WHITE, 0.5),
            Srgb8::new(128, 128, 128)
        );
        assert_eq!(
            composite_over(Srgb8::new(10, 20, 30), WHITE, 1.0),
            Srgb8::new(10, 20, 30)
        );
        assert_eq!(composite_over(Srgb8::new(10, 20, 30), WHITE, -3.0), WHITE);
        assert_eq!(
            composite_over(Srgb8::new(10, 20, 30), WHITE, f64::NAN),
            Srgb8::new(10, 20, 30)
        );
        // black at opacity 0.5 on white is #808080, 3.95:1 (the W3C example of #808080 on
        // black is 5.32:1; on white it is 1.05 / 0.2659 = 3.95): above the threshold, while at
        // opacity 0.3 (#b3b3b3) it drops to about 2.1:1
        let half = wcag_contrast_ratio(composite_over(Srgb8::new(0, 0, 0), WHITE, 0.5), WHITE);
        assert!((3.9..4.0).contains(&half), "{half}");
        let faint = wcag_contrast_ratio(composite_over(Srgb8::new(0, 0, 0), WHITE, 0.3), WHITE);
        assert!(faint < WCAG_NON_TEXT_MINIMUM_CONTRAST, "{faint}");
    }
}
