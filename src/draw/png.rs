//! The PNG writer: the SVG of a scene rasterised by resvg, with only the bundled font in its
//! font database (no system fonts), so a PNG is the same on every machine. Images are taken
//! from `data:` URIs only; the rasteriser never opens a file.

use std::sync::{Arc, OnceLock};

use resvg::tiny_skia;
use resvg::usvg;

use crate::draw::text::{FONT_BYTES, FONT_FAMILY};

/// The largest `--scale` accepted.
pub const MAX_SCALE: f32 = 16.0;
/// The most pixels a PNG may have (about 400 MiB of RGBA at the limit).
pub const MAX_PIXELS: u64 = 100_000_000;

#[derive(Debug)]
pub enum PngError {
    /// The scale is not a number in (0, `MAX_SCALE`].
    BadScale(f32),
    /// The SVG could not be parsed.
    Parse(String),
    /// The picture at this scale would be empty or larger than `MAX_PIXELS`.
    Size {
        width: u32,
        height: u32,
    },
    Encode(String),
}

impl std::fmt::Display for PngError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PngError::BadScale(scale) => write!(
                formatter,
                "the scale must be a number above 0 and at most {MAX_SCALE}, not {scale}"
            ),
            PngError::Parse(message) => write!(formatter, "the SVG could not be read: {message}"),
            PngError::Size { width, height } => write!(
                formatter,
                "a picture of {width} x {height} pixels is empty or too large (at most {MAX_PIXELS} pixels)"
            ),
            PngError::Encode(message) => write!(formatter, "the PNG could not be encoded: {message}"),
        }
    }
}

impl std::error::Error for PngError {}

/// The font database: the bundled font only.
fn font_database() -> Arc<usvg::fontdb::Database> {
    static DATABASE: OnceLock<Arc<usvg::fontdb::Database>> = OnceLock::new();
    DATABASE
        .get_or_init(|| {
            let mut database = usvg::fontdb::Database::new();
            database.load_font_data(FONT_BYTES.to_vec());
            database.set_sans_serif_family(FONT_FAMILY);
            database.set_serif_family(FONT_FAMILY);
            database.set_monospace_family(FONT_FAMILY);
            Arc::new(database)
        })
        .clone()
}

/// Parsing options shared by the PNG writer and the tests' strict parse.
pub fn svg_options() -> usvg::Options<'static> {
    let mut options = usvg::Options {
        font_family: FONT_FAMILY.to_string(),
        fontdb: font_database(),
        ..usvg::Options::default()
    };
    // only `data:` images; a path in `xlink:href` is never opened
    options.image_href_resolver.resolve_string = Box::new(|_, _| None);
    options
}

/// Parse SVG text as the rasteriser does (strict XML, SVG structure).
pub fn parse_svg(svg: &str) -> Result<usvg::Tree, PngError> {
    usvg::Tree::from_str(svg, &svg_options()).map_err(|error| PngError::Parse(error.to_string()))
}

/// Rasterise SVG text at `scale` (1 = one pixel per CSS pixel) into RGBA pixels.
pub fn rasterise(svg: &str, scale: f32) -> Result<tiny_skia::Pixmap, PngError> {
    if !(scale.is_finite() && scale > 0.0 && scale <= MAX_SCALE) {
        return Err(PngError::BadScale(scale));
    }
    let tree = parse_svg(svg)?;
    let size = tree.size();
    let width = (size.width() * scale).ceil().max(0.0) as u32;
    let height = (size.height() * scale).ceil().max(0.0) as u32;
    if width == 0 || height == 0 || u64::from(width) * u64::from(height) > MAX_PIXELS {
        return Err(PngError::Size { width, height });
    }
    let mut pixmap =
        tiny_skia::Pixmap::new(width, height).ok_or(PngError::Size { width, height })?;
    resvg::render(
        &tree,
        tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    Ok(pixmap)
}

/// SVG text as PNG bytes.
pub fn svg_to_png(svg: &str, scale: f32) -> Result<Vec<u8>, PngError> {
    rasterise(svg, scale)?
        .encode_png()
        .map_err(|error| PngError::Encode(error.to_string()))
}
