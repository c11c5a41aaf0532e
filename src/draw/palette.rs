//! Default palettes computed from the colour science of [`crate::knowledge::colour`], not taken
//! from any tool.
//!
//! **Categorical**: `N` colours chosen from a fixed grid of sRGB colours so that the smallest
//! CIEDE2000 difference between any two of them, taken as the worst of normal vision and the
//! three simulated dichromacies (Machado, Oliveira & Fernandes 2009, severity 1), is as large as
//! the search finds; every colour has at least 3:1 contrast against the background (WCAG 2.1
//! SC 1.4.11, non-text contrast). The search is deterministic: greedy farthest-point selection
//! from a fixed seed, then a local improvement pass that moves each colour to the candidate
//! farthest from the others while that raises its nearest distance.
//!
//! **Ordered and quantitative**: ramps built in CIE LCh(ab) with lightness L* strictly
//! monotonic (sequential), or monotonic on each side of a light middle (diverging), gamut-mapped
//! to sRGB by lowering chroma at fixed L* and hue.

use std::sync::OnceLock;

use crate::knowledge::colour::{
    ciede2000, simulate_deficiency_linear, srgb_encode, wcag_contrast_ratio,
    ColourVisionDeficiency, Lab, LinearRgb, Srgb8, LINEAR_SRGB_TO_XYZ, SRGB_D65_WHITE,
    WCAG_NON_TEXT_MINIMUM_CONTRAST,
};

/// The default background the palettes are computed for (our own off-white).
pub const DEFAULT_BACKGROUND: Srgb8 = Srgb8::new(0xfb, 0xfa, 0xf7);

/// The most categorical colours the search makes; past that, categories need another channel.
pub const MAX_CATEGORICAL: usize = 20;

/// Grid levels per sRGB channel for the candidates (12 levels: 0, 23, 46, ..., 253).
const GRID_LEVELS: u32 = 12;
/// Candidates must not read as grey (CIELAB chroma at least this) nor as black (L* at least
/// this). Design choices of this project, no source.
const MIN_CANDIDATE_CHROMA: f64 = 20.0;
const MIN_CANDIDATE_LIGHTNESS: f64 = 28.0;
/// Rounds of the local improvement pass.
const IMPROVEMENT_ROUNDS: usize = 3;

/// Why no palette could be made.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PaletteError {
    /// More colours than [`MAX_CATEGORICAL`].
    TooMany { requested: usize },
    /// Fewer candidates pass the contrast floor against this background than were asked for.
    BackgroundLeavesTooFew { available: usize },
}

impl std::fmt::Display for PaletteError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PaletteError::TooMany { requested } => write!(
                formatter,
                "{requested} categorical colours asked for, at most {MAX_CATEGORICAL} can be told apart"
            ),
            PaletteError::BackgroundLeavesTooFew { available } => write!(
                formatter,
                "only {available} candidate colours have 3:1 contrast against this background"
            ),
        }
    }
}

impl std::error::Error for PaletteError {}

/// A categorical palette and how far apart its colours are.
#[derive(Clone, Debug, PartialEq)]
pub struct CategoricalPalette {
    pub colours: Vec<Srgb8>,
    /// The smallest CIEDE2000 difference between two colours of the palette under normal
    /// vision, protanopia, deuteranopia and tritanopia (in that order).
    pub min_difference_by_vision: [f64; 4],
}

impl CategoricalPalette {
    /// The smallest difference under any of the four visions.
    pub fn min_difference(&self) -> f64 {
        self.min_difference_by_vision
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min)
    }
}

/// A candidate colour with its CIELAB coordinates under the four visions.
struct Candidate {
    colour: Srgb8,
    visions: [Lab; 4],
}

fn visions_of(colour: Srgb8) -> [Lab; 4] {
    let linear = colour.to_linear();
    let simulated = |deficiency| {
        // Simulated colours are clipped to the gamut, as a display would show them.
        simulate_deficiency_linear(linear, deficiency)
            .to_srgb8_clipped()
            .to_lab()
    };
    [
        linear.to_lab(),
        simulated(ColourVisionDeficiency::Protanopia),
        simulated(ColourVisionDeficiency::Deuteranopia),
        simulated(ColourVisionDeficiency::Tritanopia),
    ]
}

/// The worst CIEDE2000 difference over the four visions, stopping early once it falls below
/// `floor` (the caller only needs to know it is below).
fn difference(first: &Candidate, second: &Candidate, floor: f64) -> f64 {
    let mut worst = f64::INFINITY;
    for vision in 0..4 {
        worst = worst.min(ciede2000(first.visions[vision], second.visions[vision]));
        if worst < floor {
            break;
        }
    }
    worst
}

/// The per-vision CIEDE2000 differences from every candidate to the candidates that were ever
/// chosen, each computed on first use. The search asks for the same pairs again and again (the
/// improvement pass compares every candidate with every other chosen colour, for every slot
/// and round); the cache answers them with exactly the values, and in exactly the order of
/// visions, that [`difference`] computes, so the palette is the same, only found sooner.
struct DifferenceCache<'c> {
    candidates: &'c [&'c Candidate],
    /// Per chosen candidate: its differences to every candidate (`NaN`: not yet computed).
    columns: Vec<Option<Vec<[f64; 4]>>>,
}

impl<'c> DifferenceCache<'c> {
    fn new(candidates: &'c [&'c Candidate]) -> DifferenceCache<'c> {
        DifferenceCache {
            candidates,
            columns: (0..candidates.len()).map(|_| None).collect(),
        }
    }

    /// `difference(candidates[candidate], candidates[chosen], floor)`, from the cache.
    fn difference(&mut self, candidate: usize, chosen: usize, floor: f64) -> f64 {
        let candidates = self.candidates;
        let column =
            self.columns[chosen].get_or_insert_with(|| vec![[f64::NAN; 4]; candidates.len()]);
        let mut worst = f64::INFINITY;
        for (vision, value) in column[candidate].iter_mut().enumerate() {
            if value.is_nan() {
                *value = ciede2000(
                    candidates[candidate].visions[vision],
                    candidates[chosen].visions[vision],
                );
            }
            worst = worst.min(*value);
            if worst < floor {
                break;
            }
        }
        worst
    }
}

/// The candidate grid (before the background filter), computed once.
fn grid() -> &'static [Candidate] {
    static GRID: OnceLock<Vec<Candidate>> = OnceLock::new();
    GRID.get_or_init(|| {
        let level = |index: u32| (index * 253 / (GRID_LEVELS - 1)) as u8;
        let mut candidates = Vec::new();
        for red in 0..GRID_LEVELS {
            for green in 0..GRID_LEVELS {
                for blue in 0..GRID_LEVELS {
                    let colour = Srgb8::new(level(red), level(green), level(blue));
                    let lab = colour.to_lab();
                    let chroma = lab.a.hypot(lab.b);
                    if chroma < MIN_CANDIDATE_CHROMA || lab.lightness < MIN_CANDIDATE_LIGHTNESS {
                        continue;
                    }
                    candidates.push(Candidate {
                        colour,
                        visions: visions_of(colour),
                    });
                }
            }
        }
        candidates
    })
}

/// A categorical palette of `count` colours for `background` (see the module notes).
pub fn categorical(count: usize, background: Srgb8) -> Result<CategoricalPalette, PaletteError> {
    if count > MAX_CATEGORICAL {
        return Err(PaletteError::TooMany { requested: count });
    }
    let candidates: Vec<&Candidate> = grid()
        .iter()
        .filter(|candidate| {
            wcag_contrast_ratio(candidate.colour, background) >= WCAG_NON_TEXT_MINIMUM_CONTRAST
        })
        .collect();
    if candidates.len() < count {
        return Err(PaletteError::BackgroundLeavesTooFew {
            available: candidates.len(),
        });
    }
    if count == 0 {
        return Ok(CategoricalPalette {
            colours: Vec::new(),
            min_difference_by_vision: [f64::INFINITY; 4],
        });
    }
    // Seed: the candidate farthest from the background under the worst vision (ties: first).
    let background_candidate = Candidate {
        colour: background,
        visions: visions_of(background),
    };
    let mut chosen: Vec<usize> = Vec::with_capacity(count);
    let seed = argmax(
        candidates
            .iter()
            .map(|candidate| difference(candidate, &background_candidate, 0.0)),
    );
    chosen.push(seed);
    let mut cache = DifferenceCache::new(&candidates);
    // Greedy farthest point: each candidate's nearest chosen colour, updated per addition.
    let mut nearest: Vec<f64> = (0..candidates.len())
        .map(|index| cache.difference(index, seed, 0.0))
        .collect();
    while chosen.len() < count {
        let next = argmax(nearest.iter().copied());
        chosen.push(next);
        for (index, nearest_so_far) in nearest.iter_mut().enumerate() {
            if *nearest_so_far > 0.0 {
                let to_next = cache.difference(index, next, *nearest_so_far);
                *nearest_so_far = nearest_so_far.min(to_next);
            }
        }
    }
    // Local improvement: move each colour to the candidate whose nearest other colour is
    // farthest, when that beats its current nearest distance.
    for _ in 0..IMPROVEMENT_ROUNDS {
        let mut moved = false;
        for slot in 0..chosen.len() {
            let nearest_other = |cache: &mut DifferenceCache<'_>, candidate: usize, floor: f64| {
                let mut worst = f64::INFINITY;
                for (other_slot, &other) in chosen.iter().enumerate() {
                    if other_slot != slot {
                        worst = worst.min(cache.difference(candidate, other, floor));
                        if worst <= floor {
                            break;
                        }
                    }
                }
                worst
            };
            let mut best = nearest_other(&mut cache, chosen[slot], 0.0);
            let mut best_index = chosen[slot];
            for index in 0..candidates.len() {
                if chosen.contains(&index) {
                    continue;
                }
                let value = nearest_other(&mut cache, index, best);
                if value > best + 1e-9 {
                    best = value;
                    best_index = index;
                }
            }
            if best_index != chosen[slot] {
                chosen[slot] = best_index;
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    // The order is the greedy order (a moved colour keeps its slot).
    let colours: Vec<Srgb8> = chosen
        .iter()
        .map(|index| candidates[*index].colour)
        .collect();
    let mut min_difference_by_vision = [f64::INFINITY; 4];
    for (first_index, first) in chosen.iter().enumerate() {
        for second in &chosen[first_index + 1..] {
            for (vision, minimum) in min_difference_by_vision.iter_mut().enumerate() {
                let value = ciede2000(
                    candidates[*first].visions[vision],
                    candidates[*second].visions[vision],
                );
                *minimum = minimum.min(value);
            }
        }
    }
    Ok(CategoricalPalette {
        colours,
        min_difference_by_vision,
    })
}

fn argmax(values: impl Iterator<Item = f64>) -> usize {
    let mut best = f64::NEG_INFINITY;
    let mut best_index = 0;
    for (index, value) in values.enumerate() {
        if value > best {
            best = value;
            best_index = index;
        }
    }
    best_index
}

// ---------------------------------------------------------------------------------------------
// Ramps
// ---------------------------------------------------------------------------------------------

/// A point of a ramp in CIE LCh(ab): lightness, chroma, hue angle in degrees.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Lch {
    pub lightness: f64,
    pub chroma: f64,
    pub hue: f64,
}

/// The sequential ramp's ends: a deep plum-brown to a pale straw, turning through brick and
/// amber, chroma highest in the middle. Our own choice of path.
pub const SEQUENTIAL_DARK: Lch = Lch {
    lightness: 24.0,
    chroma: 38.0,
    hue: 330.0,
};
pub const SEQUENTIAL_LIGHT: Lch = Lch {
    lightness: 95.0,
    chroma: 22.0,
    hue: 95.0,
};
/// Chroma added at the middle of the sequential ramp.
const SEQUENTIAL_CHROMA_BULGE: f64 = 30.0;

/// The diverging ramp: a deep sea-green arm and a deep rust arm meeting at a light neutral.
pub const DIVERGING_LOW: Lch = Lch {
    lightness: 30.0,
    chroma: 40.0,
    hue: 200.0,
};
pub const DIVERGING_HIGH: Lch = Lch {
    lightness: 30.0,
    chroma: 55.0,
    hue: 40.0,
};
pub const DIVERGING_MIDDLE_LIGHTNESS: f64 = 96.0;

fn lch_to_lab(point: Lch) -> Lab {
    let radians = point.hue.to_radians();
    Lab {
        lightness: point.lightness,
        a: point.chroma * radians.cos(),
        b: point.chroma * radians.sin(),
    }
}

/// CIELAB → linear sRGB under D65: the inverse of CIE 15's formulas and of the sRGB matrix
/// (computed from [`LINEAR_SRGB_TO_XYZ`], not copied).
fn lab_to_linear(lab: Lab) -> LinearRgb {
    const DELTA: f64 = 6.0 / 29.0;
    let inverse_f = |t: f64| {
        if t > DELTA {
            t * t * t
        } else {
            3.0 * DELTA * DELTA * (t - 4.0 / 29.0)
        }
    };
    let fy = (lab.lightness + 16.0) / 116.0;
    let fx = fy + lab.a / 500.0;
    let fz = fy - lab.b / 200.0;
    let xyz = [
        SRGB_D65_WHITE.x * inverse_f(fx),
        SRGB_D65_WHITE.y * inverse_f(fy),
        SRGB_D65_WHITE.z * inverse_f(fz),
    ];
    let inverse = invert_3x3(&LINEAR_SRGB_TO_XYZ);
    let row = |index: usize| {
        inverse[index][0] * xyz[0] + inverse[index][1] * xyz[1] + inverse[index][2] * xyz[2]
    };
    LinearRgb {
        red: row(0),
        green: row(1),
        blue: row(2),
    }
}

fn invert_3x3(m: &[[f64; 3]; 3]) -> [[f64; 3]; 3] {
    let cofactor =
        |r0: usize, r1: usize, c0: usize, c1: usize| m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0];
    let det = m[0][0] * cofactor(1, 2, 1, 2) - m[0][1] * cofactor(1, 2, 0, 2)
        + m[0][2] * cofactor(1, 2, 0, 1);
    [
        [
            cofactor(1, 2, 1, 2) / det,
            -cofactor(0, 2, 1, 2) / det,
            cofactor(0, 1, 1, 2) / det,
        ],
        [
            -cofactor(1, 2, 0, 2) / det,
            cofactor(0, 2, 0, 2) / det,
            -cofactor(0, 1, 0, 2) / det,
        ],
        [
            cofactor(1, 2, 0, 1) / det,
            -cofactor(0, 2, 0, 1) / det,
            cofactor(0, 1, 0, 1) / det,
        ],
    ]
}

fn in_gamut(linear: LinearRgb) -> bool {
    [linear.red, linear.green, linear.blue]
        .iter()
        .all(|channel| (-1e-9..=1.0 + 1e-9).contains(channel))
}

/// The sRGB colour of an LCh point, with chroma lowered (by bisection, L* and hue kept) until
/// it is inside the sRGB gamut.
pub fn lch_to_srgb(point: Lch) -> Srgb8 {
    let mut low = 0.0;
    let mut high = point.chroma.max(0.0);
    if !in_gamut(lab_to_linear(lch_to_lab(Lch {
        chroma: high,
        ..point
    }))) {
        for _ in 0..30 {
            let middle = (low + high) / 2.0;
            if in_gamut(lab_to_linear(lch_to_lab(Lch {
                chroma: middle,
                ..point
            }))) {
                low = middle;
            } else {
                high = middle;
            }
        }
        high = low;
    }
    let linear = lab_to_linear(lch_to_lab(Lch {
        chroma: high,
        ..point
    }));
    let encoded = |channel: f64| (srgb_encode(channel.clamp(0.0, 1.0)) * 255.0).round() as u8;
    Srgb8::new(
        encoded(linear.red),
        encoded(linear.green),
        encoded(linear.blue),
    )
}

fn mix(first: f64, second: f64, t: f64) -> f64 {
    first + (second - first) * t
}

/// Hue interpolation the short way round the circle.
fn mix_hue(first: f64, second: f64, t: f64) -> f64 {
    let mut delta = (second - first) % 360.0;
    if delta > 180.0 {
        delta -= 360.0;
    } else if delta < -180.0 {
        delta += 360.0;
    }
    (first + delta * t).rem_euclid(360.0)
}

/// The sequential ramp at `t` in 0..=1 (0 dark, 1 light).
pub fn sequential_at(t: f64) -> Srgb8 {
    let t = t.clamp(0.0, 1.0);
    lch_to_srgb(Lch {
        lightness: mix(SEQUENTIAL_DARK.lightness, SEQUENTIAL_LIGHT.lightness, t),
        chroma: mix(SEQUENTIAL_DARK.chroma, SEQUENTIAL_LIGHT.chroma, t)
            + SEQUENTIAL_CHROMA_BULGE * (std::f64::consts::PI * t).sin(),
        hue: mix_hue(SEQUENTIAL_DARK.hue, SEQUENTIAL_LIGHT.hue, t),
    })
}

/// The diverging ramp at `t` in 0..=1 (0 and 1 the dark ends, 0.5 the light middle).
pub fn diverging_at(t: f64) -> Srgb8 {
    let t = t.clamp(0.0, 1.0);
    let (end, along) = if t < 0.5 {
        (DIVERGING_LOW, 1.0 - 2.0 * t)
    } else {
        (DIVERGING_HIGH, 2.0 * t - 1.0)
    };
    lch_to_srgb(Lch {
        lightness: mix(DIVERGING_MIDDLE_LIGHTNESS, end.lightness, along),
        chroma: end.chroma * along.sqrt(),
        hue: end.hue,
    })
}

/// `count` evenly spaced colours of a ramp function.
pub fn ramp(count: usize, at: fn(f64) -> Srgb8) -> Vec<Srgb8> {
    match count {
        0 => Vec::new(),
        1 => vec![at(0.5)],
        _ => (0..count)
            .map(|index| at(index as f64 / (count - 1) as f64))
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::knowledge::colour::ciede2000_between;

    #[test]
    fn lab_round_trips_through_the_inverse() {
        for colour in [
            Srgb8::new(12, 200, 99),
            Srgb8::new(250, 3, 180),
            Srgb8::new(128, 128, 128),
        ] {
            let back = lab_to_linear(colour.to_lab()).to_srgb8_clipped();
            assert_eq!(back, colour);
        }
    }

    #[test]
    fn gamut_mapping_keeps_lightness() {
        let colour = lch_to_srgb(Lch {
            lightness: 60.0,
            chroma: 150.0,
            hue: 140.0,
        });
        assert!((colour.to_lab().lightness - 60.0).abs() < 1.0, "{colour}");
    }

    #[test]
    fn small_palettes_are_deterministic_and_report_their_spread() {
        let four = categorical(4, DEFAULT_BACKGROUND).unwrap();
        let again = categorical(4, DEFAULT_BACKGROUND).unwrap();
        assert_eq!(four, again);
        assert_eq!(four.colours.len(), 4);
        for (index, first) in four.colours.iter().enumerate() {
            for second in &four.colours[index + 1..] {
                assert!(ciede2000_between(*first, *second) >= four.min_difference() - 1e-9);
            }
        }
    }

    #[test]
    fn too_many_is_an_error_and_other_backgrounds_work() {
        assert_eq!(
            categorical(21, DEFAULT_BACKGROUND),
            Err(PaletteError::TooMany { requested: 21 })
        );
        let night = Srgb8::new(0x16, 0x18, 0x20);
        let palette = categorical(8, night).unwrap();
        assert!(palette
            .colours
            .iter()
            .all(|colour| wcag_contrast_ratio(*colour, night) >= 3.0));
        // On black, only the lighter candidates have 3:1, and there are enough of them.
        assert!(matches!(
            categorical(3, Srgb8::new(0, 0, 0)).map(|palette| palette.colours.len()),
            Ok(3)
        ));
        assert_eq!(
            categorical(0, DEFAULT_BACKGROUND).map(|palette| palette.colours.len()),
            Ok(0)
        );
    }
}
