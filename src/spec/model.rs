//! The typed chart-spec model, lowered from the syntax tree. Every node keeps its byte range so
//! that rules can point at the exact text. Shorthand is normalised (a binding written as a column
//! name becomes a `Binding` with only `column`); missing optional parts are `None`.

use crate::text_range::TextRange;

/// A value with the byte range of the JSON value it came from.
#[derive(Clone, Debug, PartialEq)]
pub struct Spanned<T> {
    pub value: T,
    pub range: TextRange,
}

impl<T> Spanned<T> {
    pub fn new(value: T, range: TextRange) -> Spanned<T> {
        Spanned { value, range }
    }
}

/// Attribute kinds (the trade's terms; Stevens 1946 levels of measurement underneath).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum AttributeKind {
    Categorical,
    Ordered,
    Quantitative,
    Time,
}

impl AttributeKind {
    pub const ALL: [AttributeKind; 4] = [
        AttributeKind::Categorical,
        AttributeKind::Ordered,
        AttributeKind::Quantitative,
        AttributeKind::Time,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            AttributeKind::Categorical => "categorical",
            AttributeKind::Ordered => "ordered",
            AttributeKind::Quantitative => "quantitative",
            AttributeKind::Time => "time",
        }
    }

    pub fn parse(text: &str) -> Option<AttributeKind> {
        AttributeKind::ALL
            .into_iter()
            .find(|kind| kind.as_str() == text)
    }

    /// Kinds whose values have an order (ordered, quantitative, time).
    pub fn is_ordered(self) -> bool {
        !matches!(self, AttributeKind::Categorical)
    }
}

/// Whether zero means "none of it" (ratio scale) or is an arbitrary point (interval scale).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ZeroMeaning {
    Meaningful,
    Arbitrary,
}

impl ZeroMeaning {
    pub fn as_str(self) -> &'static str {
        match self {
            ZeroMeaning::Meaningful => "meaningful",
            ZeroMeaning::Arbitrary => "arbitrary",
        }
    }

    pub fn parse(text: &str) -> Option<ZeroMeaning> {
        match text {
            "meaningful" => Some(ZeroMeaning::Meaningful),
            "arbitrary" => Some(ZeroMeaning::Arbitrary),
            _ => None,
        }
    }
}

macro_rules! keyword_enum {
    ($(#[$meta:meta])* $name:ident { $($variant:ident = $text:literal),+ $(,)? }) => {
        $(#[$meta])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum $name { $($variant),+ }

        impl $name {
            pub const ALL: &'static [$name] = &[$($name::$variant),+];

            pub fn as_str(self) -> &'static str {
                match self { $($name::$variant => $text),+ }
            }

            pub fn parse(text: &str) -> Option<$name> {
                match text { $($text => Some($name::$variant),)+ _ => None }
            }
        }
    };
}

keyword_enum!(
    /// Graphical marks.
    Mark {
        Point = "point",
        Line = "line",
        Area = "area",
        Bar = "bar",
        Wedge = "wedge",
        Cell = "cell",
        Text = "text",
        Segment = "segment",
    }
);

keyword_enum!(
    /// Keys of `bind`: the visual channels a column can drive.
    Channel {
        X = "x",
        Y = "y",
        Hue = "hue",
        Luminance = "luminance",
        Saturation = "saturation",
        Area = "area",
        Shape = "shape",
        Tilt = "tilt",
        Texture = "texture",
        Angle = "angle",
        Label = "label",
    }
);

impl Channel {
    pub fn is_position(self) -> bool {
        matches!(self, Channel::X | Channel::Y)
    }

    /// Channels that take a palette.
    pub fn is_colour(self) -> bool {
        matches!(
            self,
            Channel::Hue | Channel::Luminance | Channel::Saturation
        )
    }
}

keyword_enum!(
    /// Aggregations a binding may apply.
    Summary {
        Count = "count",
        Sum = "sum",
        Mean = "mean",
        Median = "median",
        Min = "min",
        Max = "max",
        Distinct = "distinct",
    }
);

impl Summary {
    /// Summaries whose result is a count, meaningful for any kind of column.
    pub fn is_counting(self) -> bool {
        matches!(self, Summary::Count | Summary::Distinct)
    }

    /// Summaries whose values add up to a whole (so parts of a stack or of a pie are valid).
    pub fn is_additive(self) -> bool {
        matches!(self, Summary::Count | Summary::Sum | Summary::Distinct)
    }
}

keyword_enum!(
    /// How a mapping spaces values along its channel.
    Spacing {
        Even = "even",
        Logarithmic = "logarithmic",
        SquareRoot = "square-root",
        Calendar = "calendar",
        Ranked = "ranked",
    }
);

keyword_enum!(
    /// Where a mapping starts: at zero, or where the data starts.
    MappingFrom {
        Zero = "zero",
        Data = "data",
    }
);

keyword_enum!(
    /// How bar and area layers with a colour channel place their series.
    Arrange {
        Stack = "stack",
        SideBySide = "side-by-side",
        Overlap = "overlap",
        Share = "share",
    }
);

impl Arrange {
    pub fn is_stacked(self) -> bool {
        matches!(self, Arrange::Stack | Arrange::Share)
    }
}

keyword_enum!(
    /// The task the chart serves.
    Purpose {
        Compare = "compare",
        Trend = "trend",
        PartToWhole = "part-to-whole",
        Distribution = "distribution",
        Relationship = "relationship",
        Lookup = "lookup",
    }
);

keyword_enum!(
    /// Declared or inferred format of a data file.
    DataFormat {
        Csv = "csv",
        Tsv = "tsv",
        Json = "json",
        Ndjson = "ndjson",
    }
);

#[derive(Clone, Debug, PartialEq)]
pub enum SortOrder {
    Ascending,
    Descending,
    Data,
    Explicit(Vec<Spanned<String>>),
}

/// A scalar of inline `rows`.
#[derive(Clone, Debug, PartialEq)]
pub enum InlineValue {
    Null,
    Bool(bool),
    Number(f64),
    Text(String),
}

/// One inline row: (column name, value) pairs in the order written.
pub type InlineRow = Vec<(String, InlineValue)>;

#[derive(Clone, Debug, PartialEq)]
pub enum SourceLocation {
    /// `path`, relative to the spec file's folder.
    Path(Spanned<String>),
    /// Inline `rows`; `range` is the array's range.
    Rows {
        rows: Vec<InlineRow>,
        range: TextRange,
    },
    /// A `source` object with neither `path` nor `rows`.
    Missing,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Source {
    /// Range of the whole `source` value.
    pub range: TextRange,
    pub location: SourceLocation,
    pub format: Option<Spanned<DataFormat>>,
    pub delimiter: Option<Spanned<char>>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct ColumnDeclaration {
    /// The key naming the column (range without... with quotes, as the key token).
    pub name: Spanned<String>,
    /// Range of the declaration object.
    pub range: TextRange,
    pub kind: Option<Spanned<AttributeKind>>,
    pub levels: Option<Spanned<Vec<Spanned<String>>>>,
    pub zero: Option<Spanned<ZeroMeaning>>,
    pub unit: Option<Spanned<String>>,
    pub label: Option<Spanned<String>>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Mapping {
    pub range: TextRange,
    pub spacing: Option<Spanned<Spacing>>,
    /// `[low, high]`; `None` when absent or not two numbers.
    pub extent: Option<Spanned<(f64, f64)>>,
    pub from: Option<Spanned<MappingFrom>>,
    pub flip: Option<Spanned<bool>>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Binding {
    pub channel: Channel,
    /// Range of the channel key (quotes included).
    pub key_range: TextRange,
    /// Range of the whole `"key": value` member.
    pub member_range: TextRange,
    /// Range of the value (a string in shorthand, else an object).
    pub value_range: TextRange,
    /// Written as a bare column name.
    pub shorthand: bool,
    pub column: Option<Spanned<String>>,
    pub summary: Option<Spanned<Summary>>,
    pub bins: Option<Spanned<u32>>,
    pub mapping: Option<Mapping>,
    pub palette: Option<Spanned<Vec<Spanned<String>>>>,
    pub order: Option<Spanned<SortOrder>>,
}

#[derive(Clone, Debug, PartialEq, Default)]
pub struct Style {
    pub range: Option<TextRange>,
    pub colour: Option<Spanned<String>>,
    pub opacity: Option<Spanned<f64>>,
    pub radius: Option<Spanned<f64>>,
    pub stroke_width: Option<Spanned<f64>>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Layer {
    /// 0-based position in `layers` (0 for a single-layer chart).
    pub index: usize,
    /// Range of the layer object (the whole document for a single-layer chart).
    pub range: TextRange,
    pub mark: Option<Spanned<Mark>>,
    /// A `mark` written as text that names no mark (`"bars"`), so hovers can say so.
    pub unknown_mark: Option<Spanned<String>>,
    /// Range of the `bind` object.
    pub bind_range: Option<TextRange>,
    pub bindings: Vec<Binding>,
    pub arrange: Option<Spanned<Arrange>>,
    pub style: Style,
    /// A layer's own source, overriding the chart's.
    pub source: Option<Source>,
}

impl Layer {
    pub fn binding(&self, channel: Channel) -> Option<&Binding> {
        self.bindings
            .iter()
            .find(|binding| binding.channel == channel)
    }
}

#[derive(Clone, Debug, PartialEq, Default)]
pub struct Frame {
    pub range: Option<TextRange>,
    pub width: Option<Spanned<f64>>,
    pub height: Option<Spanned<f64>>,
    pub background: Option<Spanned<String>>,
}

impl Frame {
    pub const DEFAULT_WIDTH: f64 = 640.0;
    pub const DEFAULT_HEIGHT: f64 = 400.0;
    pub const DEFAULT_BACKGROUND: &'static str = "#ffffff";

    pub fn width_or_default(&self) -> f64 {
        self.width
            .as_ref()
            .map_or(Frame::DEFAULT_WIDTH, |width| width.value)
    }

    pub fn height_or_default(&self) -> f64 {
        self.height
            .as_ref()
            .map_or(Frame::DEFAULT_HEIGHT, |height| height.value)
    }

    pub fn background_or_default(&self) -> &str {
        self.background
            .as_ref()
            .map_or(Frame::DEFAULT_BACKGROUND, |background| {
                background.value.as_str()
            })
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Panels {
    pub range: TextRange,
    pub by: Option<Spanned<String>>,
    pub wrap: Option<Spanned<u32>>,
}

/// A whole chart spec.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct ChartSpec {
    /// Range of the root object.
    pub range: TextRange,
    pub title: Option<Spanned<String>>,
    pub description: Option<Spanned<String>>,
    pub source: Option<Source>,
    pub columns: Vec<ColumnDeclaration>,
    pub purpose: Option<Spanned<Purpose>>,
    /// Column names, most important first; `emphasis_range` is the array's range.
    pub emphasis: Vec<Spanned<String>>,
    pub emphasis_range: Option<TextRange>,
    pub frame: Frame,
    /// One layer for a single-layer chart (top-level `mark`/`bind`), or the `layers`.
    pub layers: Vec<Layer>,
    /// True when written with `layers`, false for top-level `mark`/`bind`.
    pub uses_layers_key: bool,
    pub panels: Option<Panels>,
}

impl ChartSpec {
    pub fn column_declaration(&self, name: &str) -> Option<&ColumnDeclaration> {
        self.columns
            .iter()
            .find(|declaration| declaration.name.value == name)
    }

    /// The source a layer reads: its own, or the chart's.
    pub fn source_for_layer<'s>(&'s self, layer: &'s Layer) -> Option<&'s Source> {
        layer.source.as_ref().or(self.source.as_ref())
    }

    /// Position of a column in `emphasis` (0 = most important).
    pub fn emphasis_rank(&self, column: &str) -> Option<usize> {
        self.emphasis.iter().position(|name| name.value == column)
    }
}
