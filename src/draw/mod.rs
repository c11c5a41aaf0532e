//! Drawing foundations: pure building blocks for evaluating, laying out and rendering a chart.
//! No IO, no LSP: tick positions and labels (`ticks`), position scales (`scale`), default
//! palettes computed by the colour science of `knowledge::colour` (`palette`), and text
//! measurement with the bundled font (`text`).

pub mod palette;
pub mod scale;
pub mod text;
pub mod ticks;
