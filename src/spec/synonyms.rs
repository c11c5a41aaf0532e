//! Words people bring from elsewhere, mapped to this format's names. Spelling suggestions
//! (`suggest.rs`) only find near misspellings; a newcomer who writes `data`, `encoding`, `color`
//! or `nominal` means a name that looks nothing like it. The table is context-aware: a key word
//! maps per kind of object (`color` is `colour` in `style` but `hue` in `bind`), a value word per
//! key that holds it (`ordinal` is `ordered` for a column's `kind` but `ranked` for `spacing`).
//!
//! The entries are our own choice of common words (common practice, no source), plus the names
//! this format used before it chose its own (`scale`, `arc`, `fill`, ...).

use crate::spec::schema::PathSegment;

/// The kinds of object whose keys the table knows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Place {
    /// The top level of a chart, or one of its `layers`.
    Chart,
    /// `bind`: keys are channels.
    Bind,
    /// One channel binding (`bind.x`).
    Binding,
    /// A binding's `mapping`.
    Mapping,
    Style,
    /// One column declaration (`columns.<name>`).
    Column,
    Source,
    Frame,
    Panels,
}

/// (place, word people write, the format's key).
const KEY_SYNONYMS: &[(Place, &str, &str)] = &[
    (Place::Chart, "data", "source"),
    (Place::Chart, "dataset", "source"),
    (Place::Chart, "encoding", "bind"),
    (Place::Chart, "encode", "bind"),
    (Place::Chart, "channels", "bind"),
    (Place::Chart, "type", "mark"),
    (Place::Chart, "facet", "panels"),
    (Place::Chart, "stacking", "arrange"),
    (Place::Chart, "layer", "layers"),
    (Place::Bind, "color", "hue"),
    (Place::Bind, "colour", "hue"),
    (Place::Bind, "size", "area"),
    (Place::Bind, "text", "label"),
    (Place::Bind, "lightness", "luminance"),
    (Place::Bind, "rotation", "tilt"),
    (Place::Bind, "orientation", "tilt"),
    (Place::Bind, "theta", "angle"),
    (Place::Bind, "pattern", "texture"),
    (Place::Binding, "field", "column"),
    (Place::Binding, "aggregate", "summary"),
    (Place::Binding, "aggregation", "summary"),
    (Place::Binding, "scale", "mapping"),
    (Place::Binding, "bin", "bins"),
    (Place::Binding, "sort", "order"),
    (Place::Binding, "colors", "palette"),
    (Place::Binding, "colours", "palette"),
    (Place::Binding, "scheme", "palette"),
    (Place::Mapping, "type", "spacing"),
    (Place::Mapping, "domain", "extent"),
    (Place::Mapping, "zero", "from"),
    (Place::Mapping, "reverse", "flip"),
    (Place::Mapping, "reversed", "flip"),
    (Place::Style, "color", "colour"),
    (Place::Style, "fill", "colour"),
    (Place::Style, "alpha", "opacity"),
    (Place::Style, "size", "radius"),
    (Place::Style, "stroke", "stroke-width"),
    (Place::Style, "line-width", "stroke-width"),
    (Place::Column, "type", "kind"),
    (Place::Column, "order", "levels"),
    (Place::Column, "units", "unit"),
    (Place::Column, "title", "label"),
    (Place::Source, "url", "path"),
    (Place::Source, "file", "path"),
    (Place::Source, "values", "rows"),
    (Place::Source, "data", "rows"),
    (Place::Source, "separator", "delimiter"),
    (Place::Source, "sep", "delimiter"),
    (Place::Frame, "color", "background"),
    (Place::Frame, "colour", "background"),
    (Place::Panels, "column", "by"),
];

/// (key holding the value, word people write, the format's value).
const VALUE_SYNONYMS: &[(&str, &str, &str)] = &[
    ("kind", "ordinal", "ordered"),
    ("kind", "nominal", "categorical"),
    ("kind", "temporal", "time"),
    ("kind", "date", "time"),
    ("kind", "datetime", "time"),
    ("kind", "numeric", "quantitative"),
    ("kind", "number", "quantitative"),
    ("kind", "quantity", "quantitative"),
    ("kind", "category", "categorical"),
    ("summary", "total", "sum"),
    ("summary", "average", "mean"),
    ("summary", "avg", "mean"),
    ("summary", "minimum", "min"),
    ("summary", "maximum", "max"),
    ("summary", "unique", "distinct"),
    ("mark", "arc", "wedge"),
    ("mark", "pie", "wedge"),
    ("mark", "donut", "wedge"),
    ("mark", "slice", "wedge"),
    ("mark", "tile", "cell"),
    ("mark", "rect", "cell"),
    ("mark", "heatmap", "cell"),
    ("mark", "rule", "segment"),
    ("mark", "tick", "segment"),
    ("mark", "circle", "point"),
    ("mark", "dot", "point"),
    ("mark", "scatter", "point"),
    ("mark", "column", "bar"),
    ("arrange", "fill", "share"),
    ("arrange", "normalize", "share"),
    ("arrange", "percent", "share"),
    ("arrange", "stacked", "stack"),
    ("arrange", "group", "side-by-side"),
    ("arrange", "grouped", "side-by-side"),
    ("arrange", "dodge", "side-by-side"),
    ("spacing", "linear", "even"),
    ("spacing", "log", "logarithmic"),
    ("spacing", "sqrt", "square-root"),
    ("spacing", "time", "calendar"),
    ("spacing", "temporal", "calendar"),
    ("spacing", "ordinal", "ranked"),
    ("spacing", "rank", "ranked"),
    ("purpose", "comparison", "compare"),
    ("purpose", "composition", "part-to-whole"),
    ("purpose", "correlation", "relationship"),
    ("order", "asc", "ascending"),
    ("order", "desc", "descending"),
];

/// The kind of object at `path` (an instance path), when the table knows it.
pub fn place_of(path: &[PathSegment]) -> Option<Place> {
    let key = |segment: Option<&PathSegment>, name: &str| matches!(segment, Some(PathSegment::Key(key)) if key == name);
    let last = path.len().checked_sub(1).map(|index| &path[index]);
    let before = |from_end: usize| path.len().checked_sub(from_end).map(|index| &path[index]);
    let in_layer = |prefix: usize| match prefix {
        0 => true,
        2 => key(path.first(), "layers") && matches!(path.get(1), Some(PathSegment::Index(_))),
        _ => false,
    };
    if in_layer(path.len()) {
        return Some(Place::Chart);
    }
    if key(last, "bind") && in_layer(path.len() - 1) {
        return Some(Place::Bind);
    }
    if path.len() >= 2 && key(before(2), "bind") && in_layer(path.len() - 2) {
        return Some(Place::Binding);
    }
    if path.len() >= 3 && key(last, "mapping") && key(before(3), "bind") {
        return Some(Place::Mapping);
    }
    if key(last, "style") && in_layer(path.len() - 1) {
        return Some(Place::Style);
    }
    if key(last, "source") && in_layer(path.len() - 1) {
        return Some(Place::Source);
    }
    if path.len() == 2 && key(path.first(), "columns") {
        return Some(Place::Column);
    }
    if path.len() == 1 && key(last, "frame") {
        return Some(Place::Frame);
    }
    if path.len() == 1 && key(last, "panels") {
        return Some(Place::Panels);
    }
    None
}

/// The format's key for a word written as a key at `path`, if the table knows one.
pub fn key_synonym(path: &[PathSegment], written: &str) -> Option<&'static str> {
    let place = place_of(path)?;
    let written = written.to_lowercase();
    KEY_SYNONYMS
        .iter()
        .find(|(at, word, _)| *at == place && *word == written)
        .map(|(_, _, name)| *name)
}

/// The format's value for a word written as the value of `key`, if the table knows one.
pub fn value_synonym(key: &str, written: &str) -> Option<&'static str> {
    let written = written.to_lowercase();
    VALUE_SYNONYMS
        .iter()
        .find(|(holder, word, _)| *holder == key && *word == written)
        .map(|(_, _, value)| *value)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spec::schema::{enum_values_at_path, keys_at_path};

    fn path(parts: &[&str]) -> Vec<PathSegment> {
        parts
            .iter()
            .map(|part| match part.parse::<usize>() {
                Ok(index) => PathSegment::Index(index),
                Err(_) => PathSegment::Key(part.to_string()),
            })
            .collect()
    }

    #[test]
    fn key_words_depend_on_the_object() {
        assert_eq!(key_synonym(&path(&["style"]), "color"), Some("colour"));
        assert_eq!(key_synonym(&path(&["bind"]), "color"), Some("hue"));
        assert_eq!(
            key_synonym(&path(&["layers", "1", "bind"]), "Color"),
            Some("hue")
        );
        assert_eq!(
            key_synonym(&path(&["columns", "month"]), "type"),
            Some("kind")
        );
        assert_eq!(
            key_synonym(&path(&["bind", "y", "mapping"]), "type"),
            Some("spacing")
        );
        assert_eq!(key_synonym(&path(&[]), "data"), Some("source"));
        assert_eq!(key_synonym(&path(&["bind", "x"]), "field"), Some("column"));
        // `color` means nothing in a mapping
        assert_eq!(key_synonym(&path(&["bind", "y", "mapping"]), "color"), None);
    }

    #[test]
    fn value_words_depend_on_the_key() {
        assert_eq!(value_synonym("kind", "ordinal"), Some("ordered"));
        assert_eq!(value_synonym("spacing", "ordinal"), Some("ranked"));
        assert_eq!(value_synonym("mark", "pie"), Some("wedge"));
        assert_eq!(value_synonym("summary", "total"), Some("sum"));
        assert_eq!(value_synonym("mark", "total"), None);
    }

    /// Every entry names a key or value the schema really has at that place, so a fix never
    /// renames into another error.
    #[test]
    fn every_target_exists_in_the_schema() {
        let sample: &[(Place, &[&str])] = &[
            (Place::Chart, &[]),
            (Place::Bind, &["bind"]),
            (Place::Binding, &["bind", "x"]),
            (Place::Mapping, &["bind", "x", "mapping"]),
            (Place::Style, &["style"]),
            (Place::Column, &["columns", "month"]),
            (Place::Source, &["source"]),
            (Place::Frame, &["frame"]),
            (Place::Panels, &["panels"]),
        ];
        for (place, word, name) in KEY_SYNONYMS {
            let (_, at) = sample
                .iter()
                .find(|(sample_place, _)| sample_place == place)
                .expect("a sample path for every place");
            let at = path(at);
            assert_eq!(place_of(&at), Some(*place));
            assert!(
                keys_at_path(&at).contains(name),
                "{word} -> {name} is not a key at {place:?}"
            );
            assert!(
                !keys_at_path(&at).contains(word),
                "{word} is already a key at {place:?}"
            );
        }
        let value_paths: &[(&str, &[&str])] = &[
            ("kind", &["columns", "month", "kind"]),
            ("summary", &["bind", "x", "summary"]),
            ("mark", &["mark"]),
            ("arrange", &["arrange"]),
            ("spacing", &["bind", "x", "mapping", "spacing"]),
            ("purpose", &["purpose"]),
            ("order", &["bind", "x", "order"]),
        ];
        for (holder, word, value) in VALUE_SYNONYMS {
            let (_, at) = value_paths
                .iter()
                .find(|(key, _)| key == holder)
                .expect("a sample path for every key");
            let allowed: Vec<&str> = enum_values_at_path(&path(at))
                .into_iter()
                .map(|(allowed, _)| allowed)
                .collect();
            assert!(allowed.contains(value), "{word} -> {value} for `{holder}`");
            assert!(
                !allowed.contains(word),
                "{word} is already allowed for `{holder}`"
            );
        }
    }
}
