//! The `texture` and `tilt` channels as drawn: fill patterns (hatching) for bars, areas, cells
//! and wedges, dash patterns for lines and segments, and the orientation of point marks (a
//! short stroke) and text.
//!
//! The patterns, dashes and angles are markwell's own choices, no source: texture and tilt rank
//! low for every kind of attribute in the published rankings the rules use (see
//! `knowledge::rankings`), so the drawing only has to keep a handful of values apart, and the
//! rules say when a column belongs on a better channel.

use super::marks::datum_text;
use super::{category_key, format_number, Point};
use crate::eval::model::{ChannelInfo, Datum, Domain};
use crate::spec::model::AttributeKind;

/// A fill pattern: hatching in the mark's colour over a pale wash of it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Hatch {
    /// No pattern: the plain fill.
    Solid,
    Rising,
    Falling,
    Crossed,
    Horizontal,
    Vertical,
    Dotted,
    Grid,
}

impl Hatch {
    /// For SVG pattern ids.
    pub fn name(self) -> &'static str {
        match self {
            Hatch::Solid => "solid",
            Hatch::Rising => "rising",
            Hatch::Falling => "falling",
            Hatch::Crossed => "crossed",
            Hatch::Horizontal => "horizontal",
            Hatch::Vertical => "vertical",
            Hatch::Dotted => "dotted",
            Hatch::Grid => "grid",
        }
    }
}

/// The fill patterns in the order values take them; past the last they repeat (the
/// `too-many-*` style rules warn well before that for categories).
pub const HATCHES: [Hatch; 8] = [
    Hatch::Solid,
    Hatch::Rising,
    Hatch::Falling,
    Hatch::Crossed,
    Hatch::Horizontal,
    Hatch::Vertical,
    Hatch::Dotted,
    Hatch::Grid,
];

/// Dash and gap lengths per texture value for strokes (in multiples of the stroke width), in
/// the order values take them; the first is solid.
pub const DASHES: [&[f64]; 8] = [
    &[],
    &[4.0, 2.0],
    &[1.0, 1.5],
    &[5.0, 1.5, 1.0, 1.5],
    &[0.5, 2.0],
    &[8.0, 2.5],
    &[3.0, 1.5, 1.0, 1.5, 1.0, 1.5],
    &[2.0, 3.0],
];

/// Steps a number on `texture` is drawn in: the domain cut into equal parts, one pattern each.
pub const TEXTURE_NUMBER_STEPS: usize = 5;

/// The texture value (an index into [`HATCHES`] and [`DASHES`]) of a drawn value: a
/// category's place in the domain, or a number's step of the domain. `None` when the value has
/// none (missing, or outside a category domain).
pub fn texture_index(info: &ChannelInfo, datum: &Datum) -> Option<usize> {
    match place_of(info, datum)? {
        Place::Category { place, .. } => Some(place % HATCHES.len()),
        Place::Along(t) => {
            let step = (t * TEXTURE_NUMBER_STEPS as f64).floor();
            Some(step.clamp(0.0, (TEXTURE_NUMBER_STEPS - 1) as f64) as usize)
        }
    }
}

/// Where a drawn value lies in its channel's domain.
enum Place {
    /// The `place`-th of `count` categories.
    Category { place: usize, count: usize },
    /// A number or time this far along its domain, 0 at the smallest and 1 at the largest
    /// (0 when the domain is one value).
    Along(f64),
}

/// `None` when the value has no place: missing, not finite, or not a category of the domain.
fn place_of(info: &ChannelInfo, datum: &Datum) -> Option<Place> {
    match &info.domain {
        Domain::Categories(categories) => {
            let key = category_key(datum)?;
            let place = categories.iter().position(|category| *category == key)?;
            Some(Place::Category {
                place,
                count: categories.len(),
            })
        }
        Domain::Numeric { min, max } | Domain::Time { min, max } => {
            let value = datum.as_f64()?;
            if !value.is_finite() {
                return None;
            }
            let span = max - min;
            let t = if span > 0.0 {
                ((value - min) / span).clamp(0.0, 1.0)
            } else {
                0.0
            };
            Some(Place::Along(t))
        }
        Domain::Empty => None,
    }
}

/// The values a texture legend lists: each category, or the lower end of each step of a
/// number domain, with its texture index.
pub fn texture_legend(info: &ChannelInfo) -> Vec<(String, usize)> {
    match &info.domain {
        Domain::Categories(categories) => categories
            .iter()
            .enumerate()
            .map(|(index, category)| (category.clone(), index % HATCHES.len()))
            .collect(),
        Domain::Numeric { min, max } | Domain::Time { min, max } if max >= min => {
            let steps = if max > min { TEXTURE_NUMBER_STEPS } else { 1 };
            (0..steps)
                .map(|step| {
                    let low = min + (max - min) * step as f64 / steps as f64;
                    let label = if matches!(info.domain, Domain::Time { .. }) {
                        datum_text(&Datum::Time(low)).unwrap_or_default()
                    } else {
                        format_number(low)
                    };
                    (format!("from {label}"), step)
                })
                .collect()
        }
        _ => Vec::new(),
    }
}

/// Largest tilt, in degrees counter-clockwise from horizontal: numbers and ordered values turn
/// from flat (the smallest) to upright (the largest).
pub const MAX_TILT: f64 = 90.0;

/// The tilt of a drawn value in degrees counter-clockwise from horizontal: a number's place
/// in its domain from 0° to 90°; an ordered category's place likewise, one equal turn per
/// level; an unordered category one of equal turns around the half circle (a stroke at 180°
/// is the stroke at 0°). `None` when the value has none.
pub fn tilt_degrees(info: &ChannelInfo, datum: &Datum) -> Option<f64> {
    Some(match place_of(info, datum)? {
        Place::Category { place, count } => category_tilt(info.kind, place, count),
        Place::Along(t) => t * MAX_TILT,
    })
}

fn category_tilt(kind: AttributeKind, place: usize, count: usize) -> f64 {
    match kind {
        AttributeKind::Categorical => place as f64 * 180.0 / count.max(1) as f64,
        _ if count > 1 => place as f64 * MAX_TILT / (count - 1) as f64,
        _ => 0.0,
    }
}

/// The values a tilt legend lists with their tilt: each category, or values sampled along a
/// number domain (`samples`, from the legend's own tick search).
pub fn tilt_legend(info: &ChannelInfo, samples: Vec<(f64, String)>) -> Vec<(String, f64)> {
    match &info.domain {
        Domain::Categories(categories) => categories
            .iter()
            .enumerate()
            .map(|(place, category)| {
                (
                    category.clone(),
                    category_tilt(info.kind, place, categories.len()),
                )
            })
            .collect(),
        Domain::Numeric { .. } | Domain::Time { .. } => samples
            .into_iter()
            .filter_map(|(value, label)| {
                let datum = if matches!(info.domain, Domain::Time { .. }) {
                    Datum::Time(value)
                } else {
                    Datum::Number(value)
                };
                Some((label, tilt_degrees(info, &datum)?))
            })
            .collect(),
        Domain::Empty => Vec::new(),
    }
}

/// The ends of a stroke of half-length `half` centred on `centre`, at `degrees`
/// counter-clockwise from horizontal (screen y grows downward).
pub fn tilted_stroke(centre: Point, half: f64, degrees: f64) -> (Point, Point) {
    let (sin, cos) = degrees.to_radians().sin_cos();
    (
        Point {
            x: centre.x - half * cos,
            y: centre.y + half * sin,
        },
        Point {
            x: centre.x + half * cos,
            y: centre.y - half * sin,
        },
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spec::model::Channel;

    fn info(kind: AttributeKind, domain: Domain) -> ChannelInfo {
        ChannelInfo {
            channel: Channel::Texture,
            column: Some("crop".into()),
            summary: None,
            bins: None,
            kind,
            title: "crop".into(),
            domain,
            spacing: None,
            extent: None,
            from_zero: false,
            flip: false,
            palette: None,
        }
    }

    fn categories(names: &[&str]) -> Domain {
        Domain::Categories(names.iter().map(|name| name.to_string()).collect())
    }

    #[test]
    fn categories_take_the_patterns_in_order_and_numbers_take_equal_steps() {
        let crops = info(
            AttributeKind::Categorical,
            categories(&["apple", "pear", "plum"]),
        );
        assert_eq!(texture_index(&crops, &Datum::Text("pear".into())), Some(1));
        assert_eq!(texture_index(&crops, &Datum::Text("quince".into())), None);
        assert_eq!(texture_index(&crops, &Datum::Missing), None);
        let yields = info(
            AttributeKind::Quantitative,
            Domain::Numeric {
                min: 0.0,
                max: 100.0,
            },
        );
        // five steps of 20: 0..20 is 0, 40..60 is 2, the top end is in the last
        assert_eq!(texture_index(&yields, &Datum::Number(0.0)), Some(0));
        assert_eq!(texture_index(&yields, &Datum::Number(19.9)), Some(0));
        assert_eq!(texture_index(&yields, &Datum::Number(45.0)), Some(2));
        assert_eq!(texture_index(&yields, &Datum::Number(100.0)), Some(4));
        let legend = texture_legend(&yields);
        assert_eq!(legend.len(), 5);
        assert_eq!(legend[2], ("from 40".to_string(), 2));
        // nine categories: the ninth repeats the first pattern
        let many = info(
            AttributeKind::Categorical,
            categories(&["a", "b", "c", "d", "e", "f", "g", "h", "i"]),
        );
        assert_eq!(texture_index(&many, &Datum::Text("i".into())), Some(0));
    }

    #[test]
    fn tilt_turns_numbers_and_levels_from_flat_to_upright_and_spreads_categories() {
        let heights = info(
            AttributeKind::Quantitative,
            Domain::Numeric { min: 2.0, max: 6.0 },
        );
        assert_eq!(tilt_degrees(&heights, &Datum::Number(2.0)), Some(0.0));
        assert_eq!(tilt_degrees(&heights, &Datum::Number(4.0)), Some(45.0));
        assert_eq!(tilt_degrees(&heights, &Datum::Number(6.0)), Some(90.0));
        let grades = info(
            AttributeKind::Ordered,
            categories(&["small", "medium", "large"]),
        );
        assert_eq!(
            tilt_degrees(&grades, &Datum::Text("medium".into())),
            Some(45.0)
        );
        assert_eq!(
            tilt_degrees(&grades, &Datum::Text("large".into())),
            Some(90.0)
        );
        let crops = info(
            AttributeKind::Categorical,
            categories(&["apple", "pear", "plum", "fig"]),
        );
        let turns: Vec<f64> = ["apple", "pear", "plum", "fig"]
            .iter()
            .filter_map(|crop| tilt_degrees(&crops, &Datum::Text((*crop).into())))
            .collect();
        assert_eq!(turns, [0.0, 45.0, 90.0, 135.0]);
        let legend = tilt_legend(&grades, Vec::new());
        assert_eq!(legend[0], ("small".to_string(), 0.0));
    }
}
