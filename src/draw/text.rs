//! Text measurement with the bundled font (DejaVu Sans 2.37, `src/draw/fonts/`, Bitstream Vera
//! licence), so that layout is the same on every machine.
//!
//! A string's width is the sum of its characters' horizontal advances (from the font's `hmtx`
//! table through its `cmap`), scaled to the font size; characters the font lacks take the
//! advance of its missing-glyph box (glyph 0). No kerning, ligatures or shaping: label text in
//! charts is short, and the difference is at most a fraction of a pixel per pair at label sizes.
//! Ascent and descent are the font's `hhea` values.

use std::sync::OnceLock;

/// The bundled font's file.
pub const FONT_BYTES: &[u8] = include_bytes!("fonts/DejaVuSans.ttf");
/// The family name to write in SVG so that renderers pick the bundled font.
pub const FONT_FAMILY: &str = "DejaVu Sans";

/// The metrics of the bundled font, read once.
pub struct FontMetrics {
    units_per_em: f64,
    ascender: f64,
    descender: f64,
    line_gap: f64,
    /// Advances of the characters U+0000..U+0100, in font units (the common case, no lookup).
    latin_advances: Vec<u16>,
    missing_advance: u16,
    face: Option<ttf_parser::Face<'static>>,
}

impl FontMetrics {
    fn load() -> FontMetrics {
        // The font is part of the build; a parse failure would be a broken checkout. Measure
        // with a fixed fallback (0.6 em per character) rather than panic.
        match ttf_parser::Face::parse(FONT_BYTES, 0) {
            Ok(face) => {
                let missing_advance = face.glyph_hor_advance(ttf_parser::GlyphId(0)).unwrap_or(0);
                let advance = |character: char| {
                    face.glyph_index(character)
                        .and_then(|glyph| face.glyph_hor_advance(glyph))
                        .unwrap_or(missing_advance)
                };
                let latin_advances = (0u32..0x100)
                    .map(|code| char::from_u32(code).map_or(missing_advance, advance))
                    .collect();
                FontMetrics {
                    units_per_em: f64::from(face.units_per_em()),
                    ascender: f64::from(face.ascender()),
                    descender: f64::from(face.descender()),
                    line_gap: f64::from(face.line_gap()),
                    latin_advances,
                    missing_advance,
                    face: Some(face),
                }
            }
            Err(_) => FontMetrics {
                units_per_em: 1000.0,
                ascender: 800.0,
                descender: -200.0,
                line_gap: 0.0,
                latin_advances: vec![600; 0x100],
                missing_advance: 600,
                face: None,
            },
        }
    }

    /// The advance of one character in font units.
    pub fn advance_units(&self, character: char) -> u16 {
        let code = character as usize;
        if code < self.latin_advances.len() {
            return self.latin_advances[code];
        }
        self.face
            .as_ref()
            .and_then(|face| {
                face.glyph_index(character)
                    .and_then(|glyph| face.glyph_hor_advance(glyph))
            })
            .unwrap_or(self.missing_advance)
    }

    pub fn units_per_em(&self) -> f64 {
        self.units_per_em
    }

    /// Whether the font has a glyph for the character.
    pub fn covers(&self, character: char) -> bool {
        self.face
            .as_ref()
            .is_some_and(|face| face.glyph_index(character).is_some())
    }
}

/// The bundled font's metrics.
pub fn font() -> &'static FontMetrics {
    static FONT: OnceLock<FontMetrics> = OnceLock::new();
    FONT.get_or_init(FontMetrics::load)
}

/// The width of `text` on one line at `size` pixels per em.
pub fn text_width(text: &str, size: f64) -> f64 {
    let metrics = font();
    let units: u64 = text
        .chars()
        .map(|character| u64::from(metrics.advance_units(character)))
        .sum();
    units as f64 * size / metrics.units_per_em
}

/// The font's ascent above the baseline at `size`, in pixels (positive).
pub fn ascent(size: f64) -> f64 {
    let metrics = font();
    metrics.ascender * size / metrics.units_per_em
}

/// The font's descent below the baseline at `size`, in pixels (positive).
pub fn descent(size: f64) -> f64 {
    let metrics = font();
    -metrics.descender * size / metrics.units_per_em
}

/// The distance between two baselines at `size`: ascent + descent + line gap.
pub fn line_height(size: f64) -> f64 {
    let metrics = font();
    (metrics.ascender - metrics.descender + metrics.line_gap) * size / metrics.units_per_em
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn widths_add_up_and_scale() {
        let orchard = text_width("orchard", 12.0);
        assert!(orchard > 0.0);
        assert!((text_width("orchard", 24.0) - 2.0 * orchard).abs() < 1e-9);
        assert!((text_width("orch", 12.0) + text_width("ard", 12.0) - orchard).abs() < 1e-9);
        assert_eq!(text_width("", 12.0), 0.0);
        // Proportional, not monospaced.
        assert!(text_width("iiii", 12.0) < text_width("MMMM", 12.0));
    }

    #[test]
    fn characters_outside_the_font_take_the_missing_glyph() {
        // U+E000 is a private-use code point, not in DejaVu Sans.
        assert!(!font().covers('\u{e000}'));
        assert_eq!(font().advance_units('\u{e000}'), font().missing_advance);
        assert!(font().covers('é') && font().covers('Ж'));
    }

    #[test]
    fn ascent_and_descent_are_positive() {
        assert!(ascent(10.0) > descent(10.0));
        assert!(descent(10.0) > 0.0);
        assert!(line_height(10.0) >= ascent(10.0) + descent(10.0));
    }
}
