//! Layer 3b: knowledge tables from graphical-perception research, as data with citations.
//!
//! Nothing here reads files or knows about documents beyond the model's keyword enums; every
//! table carries the publication it comes from, and every value transcribed from memory of a
//! paper (we cannot open the papers while building this) says so in its doc comment.
//!
//! - [`perceived`]: what the eye actually reads for a mark + channel key ([`PerceivedChannel`]).
//! - [`rankings`]: published effectiveness rankings of perceived channels, selectable by id.
//! - [`expressiveness`]: whether a perceived channel can say what a kind of attribute is.
//! - [`bertin`]: Bertin's (1967) visual variables and their levels of organisation.
//! - [`stevens`]: Stevens' power-law exponents, Flannery's compensation, Tufte's lie factor.
//! - [`colour`]: sRGB, CIELAB, CIEDE2000, colour-vision-deficiency simulation, WCAG contrast.

pub mod bertin;
pub mod colour;
pub mod expressiveness;
pub mod perceived;
pub mod rankings;
pub mod stevens;

/// The page `markwell sources` prints: where the numbers come from and which tables have not
/// been checked against their publication.
pub const SOURCES_PAGE: &str = include_str!("SOURCES.md");

pub use expressiveness::{expresses, Expressiveness};
pub use perceived::{perceived_channel, ChannelContext, PerceivedChannel};
pub use rankings::{ranking_by_id, Rank, Ranking, ALL_RANKINGS, DEFAULT_RANKING_ID};

/// A publication a table or value comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Citation {
    /// Author-year form for messages and hovers, e.g. `Cleveland & McGill (1984)`.
    pub short: &'static str,
    /// Full reference.
    pub full: &'static str,
}

/// The publications the tables of this layer cite, in one place so that the wording of a
/// reference is the same everywhere.
pub mod citations {
    use super::Citation;

    pub const BERTIN_1967: Citation = Citation {
        short: "Bertin (1967)",
        full:
            "Bertin, J. (1967). Sémiologie graphique. Paris: Gauthier-Villars. English translation \
               (1983, 2010): Semiology of Graphics. Redlands: Esri Press.",
    };
    pub const CLEVELAND_MCGILL_1984: Citation = Citation {
        short: "Cleveland & McGill (1984)",
        full:
            "Cleveland, W. S. & McGill, R. (1984). Graphical perception: theory, experimentation, \
               and application to the development of graphical methods. Journal of the American \
               Statistical Association 79(387), 531-554.",
    };
    pub const MACKINLAY_1986: Citation = Citation {
        short: "Mackinlay (1986)",
        full:
            "Mackinlay, J. (1986). Automating the design of graphical presentations of relational \
               information. ACM Transactions on Graphics 5(2), 110-141.",
    };
    pub const MUNZNER_2014: Citation = Citation {
        short: "Munzner (2014)",
        full: "Munzner, T. (2014). Visualization Analysis and Design. Boca Raton: CRC Press \
               (A K Peters Visualization Series), chapter 5.",
    };
    pub const STEVENS_1957: Citation = Citation {
        short: "Stevens (1957)",
        full:
            "Stevens, S. S. (1957). On the psychophysical law. Psychological Review 64(3), 153-181.",
    };
    pub const STEVENS_1975: Citation = Citation {
        short: "Stevens (1975)",
        full: "Stevens, S. S. (1975). Psychophysics: Introduction to its Perceptual, Neural, and \
               Social Prospects. New York: Wiley.",
    };
    pub const FLANNERY_1971: Citation = Citation {
        short: "Flannery (1971)",
        full: "Flannery, J. J. (1971). The relative effectiveness of some common graduated point \
               symbols in the presentation of quantitative data. The Canadian Cartographer 8(2), \
               96-109.",
    };
    pub const TUFTE_1983: Citation = Citation {
        short: "Tufte (1983)",
        full: "Tufte, E. R. (1983). The Visual Display of Quantitative Information. Cheshire, CT: \
               Graphics Press, chapter 2.",
    };
    pub const IEC_61966_2_1: Citation = Citation {
        short: "IEC 61966-2-1 (1999)",
        full: "IEC 61966-2-1:1999. Multimedia systems and equipment - Colour measurement and \
               management - Part 2-1: Default RGB colour space - sRGB.",
    };
    pub const CIE_15: Citation = Citation {
        short: "CIE 15 (2004)",
        full: "CIE 15:2004. Colorimetry, 3rd edition. Vienna: Commission Internationale de \
               l'Eclairage (CIE 1976 L*a*b* colour space).",
    };
    pub const SHARMA_WU_DALAL_2005: Citation = Citation {
        short: "Sharma, Wu & Dalal (2005)",
        full: "Sharma, G., Wu, W. & Dalal, E. N. (2005). The CIEDE2000 color-difference formula: \
               implementation notes, supplementary test data, and mathematical observations. \
               Color Research & Application 30(1), 21-30. doi:10.1002/col.20070",
    };
    pub const MACHADO_OLIVEIRA_FERNANDES_2009: Citation = Citation {
        short: "Machado, Oliveira & Fernandes (2009)",
        full:
            "Machado, G. M., Oliveira, M. M. & Fernandes, L. A. F. (2009). A physiologically-based \
               model for simulation of color vision deficiency. IEEE Transactions on Visualization \
               and Computer Graphics 15(6), 1291-1298. doi:10.1109/TVCG.2009.113",
    };
    pub const WCAG_2_1: Citation = Citation {
        short: "WCAG 2.1 (2018)",
        full: "W3C (2018). Web Content Accessibility Guidelines (WCAG) 2.1, definitions of \
               'relative luminance' and 'contrast ratio'; success criterion 1.4.11 non-text \
               contrast.",
    };
}
