//! Text measurement against the bundled font's own tables: the `head`, `hhea` and `hmtx`
//! tables are read here by hand from the TrueType file (layout per the OpenType specification),
//! independently of the measuring code, and the glyph of each character is looked up with
//! ttf-parser's `cmap`.

use markwell::draw::text::{ascent, descent, text_width, FONT_BYTES};

fn u16_at(bytes: &[u8], offset: usize) -> u16 {
    u16::from_be_bytes([bytes[offset], bytes[offset + 1]])
}

fn i16_at(bytes: &[u8], offset: usize) -> i16 {
    i16::from_be_bytes([bytes[offset], bytes[offset + 1]])
}

fn table(bytes: &[u8], tag: &[u8; 4]) -> usize {
    let count = usize::from(u16_at(bytes, 4));
    (0..count)
        .map(|index| 12 + 16 * index)
        .find(|record| &bytes[*record..*record + 4] == tag)
        .map(|record| {
            u32::from_be_bytes([
                bytes[record + 8],
                bytes[record + 9],
                bytes[record + 10],
                bytes[record + 11],
            ]) as usize
        })
        .unwrap_or_else(|| panic!("no {} table", String::from_utf8_lossy(tag)))
}

struct HandMetrics {
    units_per_em: f64,
    ascender: f64,
    descender: f64,
    advances: Vec<u16>,
}

fn hand_metrics() -> HandMetrics {
    let head = table(FONT_BYTES, b"head");
    let hhea = table(FONT_BYTES, b"hhea");
    let hmtx = table(FONT_BYTES, b"hmtx");
    let metric_count = usize::from(u16_at(FONT_BYTES, hhea + 34));
    HandMetrics {
        units_per_em: f64::from(u16_at(FONT_BYTES, head + 18)),
        ascender: f64::from(i16_at(FONT_BYTES, hhea + 4)),
        descender: f64::from(i16_at(FONT_BYTES, hhea + 6)),
        advances: (0..metric_count)
            .map(|index| u16_at(FONT_BYTES, hmtx + 4 * index))
            .collect(),
    }
}

fn hand_width(metrics: &HandMetrics, face: &ttf_parser::Face, text: &str, size: f64) -> f64 {
    let units: u64 = text
        .chars()
        .map(|character| {
            let glyph = face
                .glyph_index(character)
                .map_or(0, |glyph| usize::from(glyph.0));
            // Glyphs past numberOfHMetrics share the last advance (OpenType `hmtx`).
            u64::from(metrics.advances[glyph.min(metrics.advances.len() - 1)])
        })
        .sum();
    units as f64 * size / metrics.units_per_em
}

#[test]
fn widths_match_the_fonts_advance_table() {
    let metrics = hand_metrics();
    let face = ttf_parser::Face::parse(FONT_BYTES, 0).unwrap();
    assert_eq!(
        metrics.units_per_em, 2048.0,
        "DejaVu Sans uses 2048 units per em"
    );
    for text in [
        "Ferry crossings per week",
        "0.25",
        "Bakery · croissants (€)",
        "Зимний сад",
        "12 000 000",
        "\u{e000}unknown",
    ] {
        for size in [9.0, 11.5, 16.0] {
            let expected = hand_width(&metrics, &face, text, size);
            let measured = text_width(text, size);
            assert!(
                (expected - measured).abs() < 1e-9,
                "{text} at {size}: {measured} vs {expected}"
            );
        }
    }
}

#[test]
fn ascent_and_descent_match_hhea() {
    let metrics = hand_metrics();
    assert!((ascent(12.0) - metrics.ascender * 12.0 / metrics.units_per_em).abs() < 1e-12);
    assert!((descent(12.0) + metrics.descender * 12.0 / metrics.units_per_em).abs() < 1e-12);
}

#[test]
fn digits_share_one_advance() {
    // Tabular figures: DejaVu Sans gives every digit the same advance, so numeric labels of
    // equal length have equal widths (a property of the font, checked through our measure).
    let widths: Vec<f64> = ('0'..='9')
        .map(|digit| text_width(&digit.to_string(), 10.0))
        .collect();
    assert!(
        widths
            .windows(2)
            .all(|pair| (pair[0] - pair[1]).abs() < 1e-12),
        "{widths:?}"
    );
}
