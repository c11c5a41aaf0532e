//! The density grid a layer of one mark per row becomes past the cap on kept marks: counts of
//! rows per cell over the x and y domains, one grid of counts per panel. The domains are not
//! known before the end of the rows, so the grid starts on the points seen so far and doubles its
//! span towards a point that falls outside (neighbouring cells merge), like the doubling
//! histogram of the profile. Every panel's counts share the one geometry (origin, cell size and
//! doublings), so a point of one panel that grows the grid grows it for all panels, and the
//! panels' cells stay the same size and line up.
//!
//! Memory: `width * height` counters per panel, whatever the number of rows. Panels are at most
//! `layer::MAX_GROUPS` per chart, far too many for a grid each, so a grid holds at most
//! [`MAX_DENSITY_PANELS`] panels: at most 64 * 320 * 200 * 4 bytes = 16.4 MB, plus one panel's
//! counts while growing (finishing turns the counts over in place). Rows of further panels are
//! refused by [`DoublingGrid::add`], and the layer says how many.

use std::collections::HashMap;

use super::model::{DensityGrid, PanelCounts};
use crate::spec::model::Spacing;

/// The units a grid axis with this spacing counts in: the value itself, its base-10
/// logarithm, or its signed square root (the spacings of the axes the layout draws, so that
/// the cells are even on screen). `None` for a value the spacing cannot place: not finite, or
/// zero or below on a logarithmic axis. Other spacings count in the values.
pub fn to_grid_units(spacing: Spacing, value: f64) -> Option<f64> {
    let units = match spacing {
        Spacing::Logarithmic if value > 0.0 => value.log10(),
        Spacing::Logarithmic => return None,
        Spacing::SquareRoot => value.signum() * value.abs().sqrt(),
        _ => value,
    };
    units.is_finite().then_some(units)
}

/// The value at a place in grid units (the inverse of [`to_grid_units`]).
pub fn from_grid_units(spacing: Spacing, units: f64) -> f64 {
    match spacing {
        Spacing::Logarithmic => 10f64.powf(units),
        Spacing::SquareRoot => units.signum() * units * units,
        _ => units,
    }
}

/// The spacing a grid axis counts in for an axis drawn with `spacing`: only the logarithmic
/// and square-root spacings change the cells; the others are even in the values.
pub fn grid_spacing(spacing: Option<Spacing>) -> Spacing {
    match spacing {
        Some(Spacing::Logarithmic) => Spacing::Logarithmic,
        Some(Spacing::SquareRoot) => Spacing::SquareRoot,
        _ => Spacing::Even,
    }
}

/// Cells across and down: one per 2 CSS pixels of the default 640 x 400 frame.
pub const DENSITY_WIDTH: u32 = 320;
pub const DENSITY_HEIGHT: u32 = 200;
/// Doublings allowed per axis (2^1100 covers the whole range of `f64`).
const MAX_DOUBLINGS: u32 = 1100;
/// Panels with a density grid of their own per layer; rows of further panels are not drawn.
/// Common practice, no source: past a few dozen panels each one is too small to read a grid in.
pub const MAX_DENSITY_PANELS: usize = 64;

#[derive(Clone, Copy, Debug)]
struct Axis {
    origin: f64,
    cell: f64,
    cells: usize,
    doublings: u32,
}

impl Axis {
    fn covering(min: f64, max: f64, cells: usize) -> Axis {
        let span = max - min;
        let cell = if span > 0.0 && span.is_finite() {
            span / cells as f64 * (1.0 + 1e-9)
        } else {
            (min.abs() / cells as f64).max(1e-9)
        };
        Axis {
            origin: min,
            cell,
            cells,
            doublings: 0,
        }
    }

    fn end(&self) -> f64 {
        self.origin + self.cell * self.cells as f64
    }

    fn index_of(&self, value: f64) -> usize {
        (((value - self.origin) / self.cell).floor().max(0.0) as usize).min(self.cells - 1)
    }
}

/// Which way an axis grew, so the counts can be moved.
#[derive(Clone, Copy)]
enum Growth {
    /// The old cells become the left (lower) half.
    Upward,
    /// The old cells become the right (upper) half.
    Downward,
}

#[derive(Clone, Debug)]
pub struct DoublingGrid {
    x: Axis,
    y: Axis,
    /// Per panel with rows, in order of the first row: `x` fastest, `y` index 0 at the bottom
    /// (smallest y).
    panels: Vec<(u32, Vec<u32>)>,
    /// Panel index to its place in `panels`.
    slots: HashMap<u32, usize>,
    /// The last panel counted and its place: rows of one panel often come together, and a
    /// chart without panels has only panel 0, so most rows skip the map.
    last: Option<(u32, usize)>,
    /// The units of each axis (see [`to_grid_units`]).
    spacing: (Spacing, Spacing),
    /// Rows whose value an axis's spacing cannot place.
    unplaced: u64,
}

impl DoublingGrid {
    /// A grid spanning the given starting extents (in values), with no panel yet, its cells
    /// even in the values.
    pub fn new(x_extent: (f64, f64), y_extent: (f64, f64)) -> DoublingGrid {
        DoublingGrid::spaced(x_extent, y_extent, (Spacing::Even, Spacing::Even))
    }

    /// A grid whose cells are even in the units of `spacing` (x, y; see [`to_grid_units`]),
    /// starting over the given extents in grid units, with no panel yet.
    pub fn spaced(
        x_extent: (f64, f64),
        y_extent: (f64, f64),
        spacing: (Spacing, Spacing),
    ) -> DoublingGrid {
        let width = DENSITY_WIDTH as usize;
        let height = DENSITY_HEIGHT as usize;
        DoublingGrid {
            x: Axis::covering(x_extent.0, x_extent.1, width),
            y: Axis::covering(y_extent.0, y_extent.1, height),
            panels: Vec::new(),
            slots: HashMap::new(),
            last: None,
            spacing,
            unplaced: 0,
        }
    }

    /// The grid units of a point, `None` when an axis cannot place it.
    pub fn units_of(&self, x: f64, y: f64) -> Option<(f64, f64)> {
        to_grid_units(self.spacing.0, x).zip(to_grid_units(self.spacing.1, y))
    }

    fn grow(&mut self, along_x: bool, growth: Growth) {
        let width = self.x.cells;
        let height = self.y.cells;
        let cells = if along_x { width } else { height };
        let moved = |index: usize| match growth {
            Growth::Upward => index / 2,
            Growth::Downward => (index + cells) / 2,
        };
        for (_, counts) in &mut self.panels {
            let mut grown = vec![0u32; counts.len()];
            for row in 0..height {
                for column in 0..width {
                    let count = counts[row * width + column];
                    if count == 0 {
                        continue;
                    }
                    let (new_row, new_column) = if along_x {
                        (row, moved(column))
                    } else {
                        (moved(row), column)
                    };
                    let cell = &mut grown[new_row * width + new_column];
                    *cell = cell.saturating_add(count);
                }
            }
            *counts = grown;
        }
        let axis = if along_x { &mut self.x } else { &mut self.y };
        if let Growth::Downward = growth {
            axis.origin -= axis.cell * axis.cells as f64;
        }
        axis.cell *= 2.0;
        axis.doublings += 1;
    }

    fn fit(&mut self, value: f64, along_x: bool) {
        loop {
            let axis = if along_x { self.x } else { self.y };
            if axis.doublings >= MAX_DOUBLINGS {
                return;
            }
            if value < axis.origin {
                self.grow(along_x, Growth::Downward);
            } else if value >= axis.end() {
                self.grow(along_x, Growth::Upward);
            } else {
                return;
            }
        }
    }

    /// The place of a panel's counts, made on its first row; `None` past [`MAX_DENSITY_PANELS`].
    fn slot_of(&mut self, panel: u32) -> Option<usize> {
        if let Some((last_panel, slot)) = self.last {
            if last_panel == panel {
                return Some(slot);
            }
        }
        if let Some(&slot) = self.slots.get(&panel) {
            self.last = Some((panel, slot));
            return Some(slot);
        }
        if self.panels.len() >= MAX_DENSITY_PANELS {
            return None;
        }
        let slot = self.panels.len();
        self.panels
            .push((panel, vec![0; self.x.cells * self.y.cells]));
        self.slots.insert(panel, slot);
        self.last = Some((panel, slot));
        Some(slot)
    }

    /// Count one point of a panel (non-finite coordinates are ignored). `false` when the point
    /// is not counted because its panel is past [`MAX_DENSITY_PANELS`].
    /// The coordinates are values; a point an axis's spacing cannot place (zero or below on
    /// a logarithmic axis) is counted as unplaced.
    pub fn add(&mut self, panel: u32, x: f64, y: f64) -> bool {
        let Some(slot) = self.slot_of(panel) else {
            return false;
        };
        if !(x.is_finite() && y.is_finite()) {
            return true;
        }
        let Some((x, y)) = self.units_of(x, y) else {
            self.unplaced += 1;
            return true;
        };
        self.fit(x, true);
        self.fit(y, false);
        let index = self.y.index_of(y) * self.x.cells + self.x.index_of(x);
        if let Some(cell) = self.panels[slot].1.get_mut(index) {
            *cell = cell.saturating_add(1);
        }
        true
    }

    /// The grid as the model has it: panels in the order of their index, row 0 at the top
    /// (largest y). The counts are turned upside down in place, so finishing needs no more
    /// memory.
    pub fn finish(self) -> DensityGrid {
        let width = self.x.cells;
        let height = self.y.cells;
        let mut panels: Vec<PanelCounts> = self
            .panels
            .into_iter()
            .map(|(panel, mut counts)| {
                for row in 0..height / 2 {
                    let (lower, upper) = counts.split_at_mut((height - 1 - row) * width);
                    lower[row * width..(row + 1) * width].swap_with_slice(&mut upper[..width]);
                }
                PanelCounts { panel, counts }
            })
            .collect();
        panels.sort_by_key(|counts| counts.panel);
        DensityGrid {
            width: width as u32,
            height: height as u32,
            panels,
            x_domain: (self.x.origin, self.x.end()),
            y_domain: (self.y.origin, self.y.end()),
            x_spacing: self.spacing.0,
            y_spacing: self.spacing.1,
            unplaced: self.unplaced,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn total(counts: &[u32]) -> u64 {
        counts.iter().map(|&count| u64::from(count)).sum()
    }

    #[test]
    fn points_outside_the_first_extent_grow_the_grid_and_every_point_is_counted() {
        let mut grid = DoublingGrid::new((0.0, 10.0), (0.0, 10.0));
        for step in 0..1000 {
            let value = f64::from(step) * 0.01;
            assert!(grid.add(0, value, value));
        }
        grid.add(0, -50.0, 5.0);
        grid.add(0, 5.0, 400.0);
        let finished = grid.finish();
        assert_eq!(finished.panels.len(), 1);
        assert_eq!(total(&finished.panels[0].counts), 1002);
        assert!(finished.x_domain.0 <= -50.0 && finished.x_domain.1 > 10.0);
        assert!(finished.y_domain.1 > 400.0);
        assert_eq!(
            finished.panels[0].counts.len(),
            (DENSITY_WIDTH * DENSITY_HEIGHT) as usize
        );
    }

    #[test]
    fn the_top_row_holds_the_largest_y() {
        let mut grid = DoublingGrid::new((0.0, 1.0), (0.0, 1.0));
        grid.add(0, 0.0, 0.999);
        let finished = grid.finish();
        assert_eq!(finished.panels[0].counts[0], 1);
    }

    #[test]
    fn a_point_that_grows_the_grid_moves_every_panels_counts_alike() {
        let mut grid = DoublingGrid::new((0.0, 10.0), (0.0, 10.0));
        grid.add(3, 9.99, 0.0);
        grid.add(1, 0.0, 0.0);
        // panel 1 grows the x axis to twice its span: panel 3's point moves with it
        grid.add(1, 15.1, 0.0);
        let finished = grid.finish();
        let panels: Vec<u32> = finished.panels.iter().map(|counts| counts.panel).collect();
        assert_eq!(panels, [1, 3]);
        let bottom_row = (DENSITY_HEIGHT as usize - 1) * DENSITY_WIDTH as usize;
        let Some(three) = finished.counts_of(3) else {
            panic!("panel 3 has a grid");
        };
        // 9.99 of a span of 20 over 320 cells is cell 159
        assert_eq!(three[bottom_row + 159], 1);
        assert_eq!(total(three), 1);
        let Some(one) = finished.counts_of(1) else {
            panic!("panel 1 has a grid");
        };
        assert_eq!(one[bottom_row], 1);
        assert_eq!(one[bottom_row + 241], 1);
        assert_eq!(total(one), 2);
        assert_eq!(finished.max_count(), 1);
    }

    #[test]
    fn panels_past_the_cap_are_refused() {
        let mut grid = DoublingGrid::new((0.0, 1.0), (0.0, 1.0));
        for panel in 0..MAX_DENSITY_PANELS as u32 {
            assert!(grid.add(panel, 0.5, 0.5));
        }
        assert!(!grid.add(MAX_DENSITY_PANELS as u32, 0.5, 0.5));
        // a panel already there still counts
        assert!(grid.add(0, 0.5, 0.5));
        let finished = grid.finish();
        assert_eq!(finished.panels.len(), MAX_DENSITY_PANELS);
        assert_eq!(finished.max_count(), 2);
    }
}
