//! Drawing foundations: pure building blocks for evaluating, laying out and rendering a chart.
//! No IO, no LSP: tick positions and labels (`ticks`), position scales (`scale`), default
//! palettes computed by the colour science of `knowledge::colour` (`palette`), and text
//! measurement with the bundled font (`text`); the layout of an evaluated chart into a scene of
//! positioned primitives (`layout`), and the writers that translate a scene: SVG text (`svg`) and
//! PNG by rasterising that SVG with resvg and the bundled font (`png`).

pub mod layout;
pub mod palette;
pub mod png;
pub mod scale;
pub mod svg;
pub mod text;
pub mod ticks;
