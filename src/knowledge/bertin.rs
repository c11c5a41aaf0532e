//! Bertin's (1967) visual variables and their levels of organisation, as data.
//!
//! FROM MEMORY: the table was transcribed from memory of *Semiology of Graphics* (the table of
//! the retinal variables and the levels of organisation each one allows); the book could not
//! be consulted while writing this.

use crate::knowledge::citations;
use crate::knowledge::perceived::PerceivedChannel;
use crate::knowledge::Citation;

/// The source of this table.
pub const SOURCE: Citation = citations::BERTIN_1967;

/// Bertin's visual variables: the two planar dimensions and the six retinal variables.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum BertinVariable {
    /// The two dimensions of the plane (x, y position).
    PlanarDimensions,
    Size,
    /// Lightness (value), from white to black.
    Value,
    /// Texture (grain: the fineness of a pattern at constant value).
    Texture,
    /// Colour (hue at constant value).
    Colour,
    Orientation,
    Shape,
}

impl BertinVariable {
    pub const ALL: [BertinVariable; 7] = [
        BertinVariable::PlanarDimensions,
        BertinVariable::Size,
        BertinVariable::Value,
        BertinVariable::Texture,
        BertinVariable::Colour,
        BertinVariable::Orientation,
        BertinVariable::Shape,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            BertinVariable::PlanarDimensions => "planar dimensions",
            BertinVariable::Size => "size",
            BertinVariable::Value => "value",
            BertinVariable::Texture => "texture",
            BertinVariable::Colour => "colour",
            BertinVariable::Orientation => "orientation",
            BertinVariable::Shape => "shape",
        }
    }

    /// The row of [`BERTIN_TABLE`] for this variable.
    pub fn row(self) -> &'static BertinRow {
        // every variable has exactly one row (checked by a test); the fallback is never taken
        BERTIN_TABLE
            .iter()
            .find(|row| row.variable == self)
            .unwrap_or(&BERTIN_TABLE[0])
    }

    /// How well this variable supports a level of organisation.
    pub fn supports(self, level: LevelOfOrganisation) -> Support {
        self.row().support(level)
    }
}

/// Bertin's levels of organisation (what a variable lets the eye do).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum LevelOfOrganisation {
    /// Marks differing in this variable alone can still be grouped as one whole (the variation
    /// does not stand out).
    Associative,
    /// Marks sharing a value of the variable are seen at once as a group.
    Selective,
    /// The values are seen in an order.
    Ordered,
    /// Ratios between values can be read.
    Quantitative,
}

impl LevelOfOrganisation {
    pub const ALL: [LevelOfOrganisation; 4] = [
        LevelOfOrganisation::Associative,
        LevelOfOrganisation::Selective,
        LevelOfOrganisation::Ordered,
        LevelOfOrganisation::Quantitative,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            LevelOfOrganisation::Associative => "associative",
            LevelOfOrganisation::Selective => "selective",
            LevelOfOrganisation::Ordered => "ordered",
            LevelOfOrganisation::Quantitative => "quantitative",
        }
    }
}

/// Whether a variable allows a level.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Support {
    Yes,
    /// Allowed with a restriction, stated.
    Restricted(&'static str),
    No,
}

impl Support {
    /// `Yes` or `Restricted`.
    pub fn is_supported(self) -> bool {
        !matches!(self, Support::No)
    }
}

/// One variable with its levels.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct BertinRow {
    pub variable: BertinVariable,
    pub associative: Support,
    pub selective: Support,
    pub ordered: Support,
    pub quantitative: Support,
}

impl BertinRow {
    pub fn support(&self, level: LevelOfOrganisation) -> Support {
        match level {
            LevelOfOrganisation::Associative => self.associative,
            LevelOfOrganisation::Selective => self.selective,
            LevelOfOrganisation::Ordered => self.ordered,
            LevelOfOrganisation::Quantitative => self.quantitative,
        }
    }
}

/// Bertin (1967): the levels of organisation of each visual variable (from memory).
/// Size and value are "dissociative" (not associative): a large or dark mark stands out from
/// small or light ones, so marks varying in size or value are not seen as one group.
pub static BERTIN_TABLE: [BertinRow; 7] = [
    BertinRow {
        variable: BertinVariable::PlanarDimensions,
        associative: Support::Yes,
        selective: Support::Yes,
        ordered: Support::Yes,
        quantitative: Support::Yes,
    },
    BertinRow {
        variable: BertinVariable::Size,
        associative: Support::No,
        selective: Support::Yes,
        ordered: Support::Yes,
        quantitative: Support::Yes,
    },
    BertinRow {
        variable: BertinVariable::Value,
        associative: Support::No,
        selective: Support::Yes,
        ordered: Support::Yes,
        quantitative: Support::No,
    },
    BertinRow {
        variable: BertinVariable::Texture,
        associative: Support::Yes,
        selective: Support::Yes,
        ordered: Support::Yes,
        quantitative: Support::No,
    },
    BertinRow {
        variable: BertinVariable::Colour,
        associative: Support::Yes,
        selective: Support::Yes,
        ordered: Support::No,
        quantitative: Support::No,
    },
    BertinRow {
        variable: BertinVariable::Orientation,
        associative: Support::Yes,
        selective: Support::Restricted("selective for point and line marks only, not for areas"),
        ordered: Support::No,
        quantitative: Support::No,
    },
    BertinRow {
        variable: BertinVariable::Shape,
        associative: Support::Yes,
        selective: Support::No,
        ordered: Support::No,
        quantitative: Support::No,
    },
];

/// Bertin's variable behind a perceived channel, where there is one. Length, area and volume
/// are all "size"; luminance is "value"; hue is "colour"; tilt is "orientation"; positions and
/// spatial regions are the planar dimensions. Saturation, angle and the channels Bertin did
/// not treat as variables (curvature, connection, containment, depth, motion, text) have none.
pub fn bertin_variable_for(channel: PerceivedChannel) -> Option<BertinVariable> {
    match channel {
        PerceivedChannel::PositionCommonScale
        | PerceivedChannel::PositionUnalignedScale
        | PerceivedChannel::SpatialRegion => Some(BertinVariable::PlanarDimensions),
        PerceivedChannel::Length | PerceivedChannel::Area | PerceivedChannel::Volume => {
            Some(BertinVariable::Size)
        }
        PerceivedChannel::Luminance => Some(BertinVariable::Value),
        PerceivedChannel::Texture => Some(BertinVariable::Texture),
        PerceivedChannel::Hue => Some(BertinVariable::Colour),
        PerceivedChannel::Tilt => Some(BertinVariable::Orientation),
        PerceivedChannel::Shape => Some(BertinVariable::Shape),
        PerceivedChannel::Angle
        | PerceivedChannel::Saturation
        | PerceivedChannel::Curvature
        | PerceivedChannel::Connection
        | PerceivedChannel::Containment
        | PerceivedChannel::Depth
        | PerceivedChannel::Motion
        | PerceivedChannel::Text => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_variable_has_exactly_one_row() {
        for variable in BertinVariable::ALL {
            let rows = BERTIN_TABLE
                .iter()
                .filter(|row| row.variable == variable)
                .count();
            assert_eq!(rows, 1, "{}", variable.as_str());
            assert_eq!(variable.row().variable, variable);
        }
    }
}
