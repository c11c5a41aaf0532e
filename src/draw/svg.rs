//! The SVG writer: a laid-out scene becomes SVG 1.1 text. It only translates the scene (every
//! position and colour was decided by the layout), adds `<title>` and `<desc>` for the chart and
//! `role` / `aria-label` for screen readers, and writes real `<text>` for every label.

use std::collections::HashMap;
use std::fmt::Write as _;

use crate::draw::layout::texture::Hatch;
use crate::draw::layout::{
    Anchor, Group, Node, Paint, Point, Primitive, Role, Scene, Shape, Symbol, TextItem,
};
use crate::draw::text::FONT_FAMILY;

/// The scene as an SVG document.
pub fn write_svg(scene: &Scene) -> String {
    let mut out = String::with_capacity(16 * 1024);
    let width = number(scene.width);
    let height = number(scene.height);
    out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" xmlns:xlink=\"http://www.w3.org/1999/xlink\" \
         version=\"1.1\" width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" \
         role=\"img\" aria-labelledby=\"chart-title chart-desc\">"
    );
    let title = scene
        .title
        .clone()
        .filter(|title| !title.is_empty())
        .unwrap_or_else(|| "Chart".to_string());
    let _ = writeln!(out, "<title id=\"chart-title\">{}</title>", escape(&title));
    let mut desc = String::new();
    if let Some(description) = scene.description.as_deref().filter(|d| !d.is_empty()) {
        desc.push_str(description);
        desc.push(' ');
    }
    desc.push_str(&scene.summary);
    let _ = writeln!(out, "<desc id=\"chart-desc\">{}</desc>", escape(&desc));
    let _ = writeln!(
        out,
        "<rect x=\"0\" y=\"0\" width=\"{width}\" height=\"{height}\" fill=\"{}\"/>",
        escape(&scene.background)
    );
    let _ = writeln!(
        out,
        "<g font-family=\"{FONT_FAMILY}, sans-serif\" stroke-linecap=\"butt\" stroke-linejoin=\"round\">"
    );
    let patterns = Patterns::of(scene);
    patterns.write_defs(&mut out);
    for group in &scene.groups {
        write_group(&mut out, group, 1, &patterns);
    }
    out.push_str("</g>\n</svg>\n");
    out
}

/// Side of the square tile a hatch pattern repeats, in CSS pixels.
const HATCH_TILE: f64 = 8.0;
/// Opacity of the wash of the mark's colour under its hatching, so that a hatched mark keeps
/// its colour and its outline against the background (markwell's own choice, no source).
const HATCH_WASH_OPACITY: f64 = 0.35;

/// The fill patterns a scene uses: one `<pattern>` per distinct (hatch, colour), ids in the
/// order they first appear so that the same scene always gives the same text.
struct Patterns {
    ids: HashMap<(Hatch, String), String>,
    order: Vec<(Hatch, String)>,
}

impl Patterns {
    fn of(scene: &Scene) -> Patterns {
        let mut patterns = Patterns {
            ids: HashMap::new(),
            order: Vec::new(),
        };
        let mut stack: Vec<&Group> = scene.groups.iter().rev().collect();
        while let Some(group) = stack.pop() {
            for child in group.children.iter().rev() {
                match child {
                    Node::Group(inner) => stack.push(inner),
                    Node::Primitive(primitive) => patterns.add(&primitive.paint),
                }
            }
        }
        patterns
    }

    fn add(&mut self, paint: &Paint) {
        let (Some(hatch), Some(fill)) = (paint.hatch, &paint.fill) else {
            return;
        };
        if hatch == Hatch::Solid {
            return;
        }
        let key = (hatch, fill.clone());
        if self.ids.contains_key(&key) {
            return;
        }
        // ids are made of the pattern's name, its colour's letters and digits, and its place
        // (two colours that differ only in other characters still get distinct ids)
        let colour: String = fill
            .chars()
            .filter(char::is_ascii_alphanumeric)
            .take(16)
            .collect();
        let id = format!("mw-{}-{}-{}", hatch.name(), colour, self.order.len() + 1);
        self.ids.insert(key.clone(), id);
        self.order.push(key);
    }

    /// The id of the pattern for this paint, when it has one.
    fn id(&self, paint: &Paint) -> Option<&str> {
        let hatch = paint.hatch?;
        let fill = paint.fill.as_ref()?;
        self.ids.get(&(hatch, fill.clone())).map(String::as_str)
    }

    fn write_defs(&self, out: &mut String) {
        if self.order.is_empty() {
            return;
        }
        out.push_str("<defs>\n");
        for key in &self.order {
            let Some(id) = self.ids.get(key) else {
                continue;
            };
            let (hatch, fill) = key;
            let colour = escape(fill);
            let tile = number(HATCH_TILE);
            let _ = writeln!(
                out,
                " <pattern id=\"{id}\" patternUnits=\"userSpaceOnUse\" width=\"{tile}\" height=\"{tile}\">"
            );
            let _ = writeln!(
                out,
                "  <rect x=\"0\" y=\"0\" width=\"{tile}\" height=\"{tile}\" fill=\"{colour}\" fill-opacity=\"{}\"/>",
                number(HATCH_WASH_OPACITY)
            );
            for element in hatch_elements(*hatch) {
                let _ = writeln!(out, "  {element} fill=\"{colour}\" stroke=\"{colour}\"/>");
            }
            out.push_str(" </pattern>\n");
        }
        out.push_str("</defs>\n");
    }
}

/// The lines and dots of one tile of a hatch (without their closing `/>` and paint). Diagonal
/// lines run past the tile's corners so that neighbouring tiles join without gaps.
fn hatch_elements(hatch: Hatch) -> Vec<String> {
    let t = HATCH_TILE;
    let h = t / 2.0;
    let line = |x1: f64, y1: f64, x2: f64, y2: f64, width: f64| {
        format!(
            "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke-width=\"{}\"",
            number(x1),
            number(y1),
            number(x2),
            number(y2),
            number(width)
        )
    };
    let rising = || {
        vec![
            line(-1.0, t + 1.0, t + 1.0, -1.0, 1.4),
            line(-1.0, 1.0, 1.0, -1.0, 1.4),
            line(t - 1.0, t + 1.0, t + 1.0, t - 1.0, 1.4),
        ]
    };
    let falling = || {
        vec![
            line(-1.0, -1.0, t + 1.0, t + 1.0, 1.4),
            line(-1.0, t - 1.0, 1.0, t + 1.0, 1.4),
            line(t - 1.0, -1.0, t + 1.0, 1.0, 1.4),
        ]
    };
    match hatch {
        Hatch::Solid => Vec::new(),
        Hatch::Rising => rising(),
        Hatch::Falling => falling(),
        Hatch::Crossed => {
            let mut both = rising();
            both.extend(falling());
            both
        }
        Hatch::Horizontal => vec![line(0.0, h, t, h, 2.0)],
        Hatch::Vertical => vec![line(h, 0.0, h, t, 2.0)],
        Hatch::Dotted => [(t / 4.0, t / 4.0), (3.0 * t / 4.0, 3.0 * t / 4.0)]
            .iter()
            .map(|(x, y)| {
                format!(
                    "<circle cx=\"{}\" cy=\"{}\" r=\"1.4\" stroke-width=\"0\"",
                    number(*x),
                    number(*y)
                )
            })
            .collect(),
        Hatch::Grid => vec![line(0.0, h, t, h, 1.0), line(h, 0.0, h, t, 1.0)],
    }
}

fn role_class(role: Role) -> String {
    let class = match role {
        Role::Title => "title",
        Role::Panel => "panel",
        Role::PanelLabel => "panel-label",
        Role::Grid => "grid",
        Role::Axis => "axis",
        Role::AxisTitle => "axis-title",
        Role::Legend => "legend",
        Role::Layer(mark) => return format!("layer {}", mark.as_str()),
        Role::Density => "density",
    };
    class.to_string()
}

fn write_group(out: &mut String, group: &Group, depth: usize, patterns: &Patterns) {
    if group.children.is_empty() {
        return;
    }
    indent(out, depth);
    let _ = write!(out, "<g class=\"{}\"", role_class(group.role));
    match (&group.label, group.role) {
        (Some(label), _) => {
            let _ = write!(out, " role=\"group\" aria-label=\"{}\"", escape(label));
        }
        (None, Role::Grid | Role::PanelLabel) => out.push_str(" aria-hidden=\"true\""),
        _ => {}
    }
    out.push_str(">\n");
    for child in &group.children {
        match child {
            Node::Group(inner) => write_group(out, inner, depth + 1, patterns),
            Node::Primitive(primitive) => write_primitive(out, primitive, depth + 1, patterns),
        }
    }
    indent(out, depth);
    out.push_str("</g>\n");
}

fn indent(out: &mut String, depth: usize) {
    for _ in 0..depth.min(8) {
        out.push(' ');
    }
}

fn write_primitive(out: &mut String, primitive: &Primitive, depth: usize, patterns: &Patterns) {
    indent(out, depth);
    let aria = primitive
        .label
        .as_deref()
        .map(|label| format!(" role=\"img\" aria-label=\"{}\"", escape(label)))
        .unwrap_or_default();
    match &primitive.shape {
        Shape::Rect(rect) => {
            let _ = write!(
                out,
                "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"",
                number(rect.x),
                number(rect.y),
                number(rect.width.max(0.0)),
                number(rect.height.max(0.0))
            );
        }
        Shape::Line { from, to } => {
            let _ = write!(
                out,
                "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\"",
                number(from.x),
                number(from.y),
                number(to.x),
                number(to.y)
            );
        }
        Shape::Polyline { points, closed } => {
            let element = if *closed { "polygon" } else { "polyline" };
            let _ = write!(out, "<{element} points=\"");
            for (index, point) in points.iter().enumerate() {
                if index > 0 {
                    out.push(' ');
                }
                let _ = write!(out, "{},{}", number(point.x), number(point.y));
            }
            out.push('"');
        }
        Shape::Circle { centre, radius } => {
            let _ = write!(
                out,
                "<circle cx=\"{}\" cy=\"{}\" r=\"{}\"",
                number(centre.x),
                number(centre.y),
                number(*radius)
            );
        }
        Shape::Symbol {
            symbol,
            centre,
            radius,
        } => {
            let _ = write!(
                out,
                "<path d=\"{}\"",
                symbol_path(*symbol, *centre, *radius)
            );
        }
        Shape::Wedge {
            centre,
            radius,
            start_angle,
            end_angle,
        } => {
            let _ = write!(
                out,
                "<path d=\"{}\"",
                wedge_path(*centre, *radius, *start_angle, *end_angle)
            );
        }
        Shape::Text(item) => {
            write_text(out, item);
            return;
        }
        Shape::Image(image) => {
            let _ = writeln!(
                out,
                "<image x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" preserveAspectRatio=\"none\" \
                 image-rendering=\"optimizeSpeed\" xlink:href=\"data:image/png;base64,{}\"/>",
                number(image.bounds.x),
                number(image.bounds.y),
                number(image.bounds.width),
                number(image.bounds.height),
                base64(&image.png)
            );
            return;
        }
    }
    write_paint(out, &primitive.paint, patterns.id(&primitive.paint));
    out.push_str(&aria);
    out.push_str("/>\n");
}

fn write_paint(out: &mut String, paint: &Paint, pattern: Option<&str>) {
    match &paint.fill {
        Some(fill) => {
            match pattern {
                Some(id) => {
                    let _ = write!(out, " fill=\"url(#{id})\"");
                }
                None => {
                    let _ = write!(out, " fill=\"{}\"", escape(fill));
                }
            }
            if paint.fill_opacity < 1.0 {
                let _ = write!(out, " fill-opacity=\"{}\"", number(paint.fill_opacity));
            }
        }
        None => out.push_str(" fill=\"none\""),
    }
    if let Some(stroke) = &paint.stroke {
        let _ = write!(
            out,
            " stroke=\"{}\" stroke-width=\"{}\"",
            escape(stroke),
            number(paint.stroke_width)
        );
        if !paint.dash.is_empty() {
            let dash: Vec<String> = paint.dash.iter().map(|d| number(*d)).collect();
            let _ = write!(out, " stroke-dasharray=\"{}\"", dash.join(" "));
        }
    }
}

fn write_text(out: &mut String, item: &TextItem) {
    let anchor = match item.anchor {
        Anchor::Start => "start",
        Anchor::Middle => "middle",
        Anchor::End => "end",
    };
    let _ = write!(
        out,
        "<text x=\"{}\" y=\"{}\" font-size=\"{}\" fill=\"{}\"",
        number(item.at.x),
        number(item.at.y),
        number(item.size),
        escape(&item.colour)
    );
    if anchor != "start" {
        let _ = write!(out, " text-anchor=\"{anchor}\"");
    }
    if item.rotation.abs() > 1e-9 {
        let _ = write!(
            out,
            " transform=\"rotate({} {} {})\"",
            number(item.rotation),
            number(item.at.x),
            number(item.at.y)
        );
    }
    let _ = writeln!(out, ">{}</text>", escape(&item.content));
}

/// A symbol's outline, centred on `centre`, `radius` half its width.
fn symbol_path(symbol: Symbol, centre: Point, radius: f64) -> String {
    let (x, y, r) = (centre.x, centre.y, radius);
    let point = |dx: f64, dy: f64| format!("{},{}", number(x + dx), number(y + dy));
    match symbol {
        Symbol::Circle => format!(
            "M{} A{} {} 0 1 1 {} A{} {} 0 1 1 {} Z",
            point(-r, 0.0),
            number(r),
            number(r),
            point(r, 0.0),
            number(r),
            number(r),
            point(-r, 0.0)
        ),
        Symbol::Square => {
            let s = r * 0.886; // same area as the circle of radius r
            format!(
                "M{} L{} L{} L{} Z",
                point(-s, -s),
                point(s, -s),
                point(s, s),
                point(-s, s)
            )
        }
        Symbol::TriangleUp => format!(
            "M{} L{} L{} Z",
            point(0.0, -r * 1.15),
            point(r * 1.15, r * 0.85),
            point(-r * 1.15, r * 0.85)
        ),
        Symbol::TriangleDown => format!(
            "M{} L{} L{} Z",
            point(0.0, r * 1.15),
            point(r * 1.15, -r * 0.85),
            point(-r * 1.15, -r * 0.85)
        ),
        Symbol::Diamond => format!(
            "M{} L{} L{} L{} Z",
            point(0.0, -r * 1.25),
            point(r * 1.25, 0.0),
            point(0.0, r * 1.25),
            point(-r * 1.25, 0.0)
        ),
        Symbol::Plus => format!(
            "M{} L{} M{} L{}",
            point(-r, 0.0),
            point(r, 0.0),
            point(0.0, -r),
            point(0.0, r)
        ),
        Symbol::Cross => {
            let d = r * 0.8;
            format!(
                "M{} L{} M{} L{}",
                point(-d, -d),
                point(d, d),
                point(-d, d),
                point(d, -d)
            )
        }
    }
}

/// A pie slice: angles clockwise from twelve o'clock, in radians.
fn wedge_path(centre: Point, radius: f64, start: f64, end: f64) -> String {
    let at = |angle: f64| Point {
        x: centre.x + radius * angle.sin(),
        y: centre.y - radius * angle.cos(),
    };
    let sweep = end - start;
    if sweep >= std::f64::consts::TAU - 1e-9 {
        // a whole circle: two half arcs
        let top = at(0.0);
        let bottom = at(std::f64::consts::PI);
        return format!(
            "M{},{} A{r},{r} 0 1 1 {},{} A{r},{r} 0 1 1 {},{} Z",
            number(top.x),
            number(top.y),
            number(bottom.x),
            number(bottom.y),
            number(top.x),
            number(top.y),
            r = number(radius)
        );
    }
    let from = at(start);
    let to = at(end);
    let large = if sweep > std::f64::consts::PI { 1 } else { 0 };
    format!(
        "M{},{} L{},{} A{r},{r} 0 {large} 1 {},{} Z",
        number(centre.x),
        number(centre.y),
        number(from.x),
        number(from.y),
        number(to.x),
        number(to.y),
        r = number(radius)
    )
}

/// A coordinate with at most two decimals, no trailing zeros.
pub fn number(value: f64) -> String {
    if !value.is_finite() {
        return "0".to_string();
    }
    let rounded = (value * 100.0).round() / 100.0;
    let text = format!("{rounded:.2}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".to_string()
    } else {
        text.to_string()
    }
}

/// XML text and attribute escaping; characters XML 1.0 forbids are left out.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for character in text.chars() {
        match character {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(' '),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => {}
            c => out.push(c),
        }
    }
    out
}

/// Standard base64 (RFC 4648, section 4) with padding.
pub fn base64(bytes: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            chunk.get(1).copied().unwrap_or(0),
            chunk.get(2).copied().unwrap_or(0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        out.push(ALPHABET[(n >> 18) as usize & 63] as char);
        out.push(ALPHABET[(n >> 12) as usize & 63] as char);
        out.push(if chunk.len() > 1 {
            ALPHABET[(n >> 6) as usize & 63] as char
        } else {
            '='
        });
        out.push(if chunk.len() > 2 {
            ALPHABET[n as usize & 63] as char
        } else {
            '='
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_the_rfc_4648_test_vectors() {
        // RFC 4648, section 10 (test vectors)
        assert_eq!(base64(b""), "");
        assert_eq!(base64(b"f"), "Zg==");
        assert_eq!(base64(b"fo"), "Zm8=");
        assert_eq!(base64(b"foo"), "Zm9v");
        assert_eq!(base64(b"foob"), "Zm9vYg==");
        assert_eq!(base64(b"fooba"), "Zm9vYmE=");
        assert_eq!(base64(b"foobar"), "Zm9vYmFy");
    }

    #[test]
    fn escaping_keeps_markup_out_and_drops_forbidden_characters() {
        assert_eq!(escape("a<b & \"c\"\u{1}"), "a&lt;b &amp; &quot;c&quot;");
    }

    #[test]
    fn numbers_have_two_decimals_at_most() {
        assert_eq!(number(1.0), "1");
        assert_eq!(number(1.256), "1.26");
        assert_eq!(number(-0.001), "0");
    }
}
