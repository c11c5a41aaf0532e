//! The density grid a layer of one mark per row becomes past the cap on kept marks: counts of
//! rows per cell over the x and y domains. The domains are not known before the end of the
//! rows, so the grid starts on the points seen so far and doubles its span towards a point that
//! falls outside (neighbouring cells merge), like the doubling histogram of the profile.
//! Memory: `width * height` counters, whatever the number of rows.

use super::model::DensityGrid;

/// Cells across and down: one per 2 CSS pixels of the default 640 x 400 frame.
pub const DENSITY_WIDTH: u32 = 320;
pub const DENSITY_HEIGHT: u32 = 200;
/// Doublings allowed per axis (2^1100 covers the whole range of `f64`).
const MAX_DOUBLINGS: u32 = 1100;

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
    /// `x` fastest, `y` index 0 at the bottom (smallest y).
    counts: Vec<u32>,
}

impl DoublingGrid {
    /// A grid spanning the given starting extents.
    pub fn new(x_extent: (f64, f64), y_extent: (f64, f64)) -> DoublingGrid {
        let width = DENSITY_WIDTH as usize;
        let height = DENSITY_HEIGHT as usize;
        DoublingGrid {
            x: Axis::covering(x_extent.0, x_extent.1, width),
            y: Axis::covering(y_extent.0, y_extent.1, height),
            counts: vec![0; width * height],
        }
    }

    fn grow(&mut self, along_x: bool, growth: Growth) {
        let width = self.x.cells;
        let height = self.y.cells;
        let mut grown = vec![0u32; self.counts.len()];
        let cells = if along_x { width } else { height };
        let moved = |index: usize| match growth {
            Growth::Upward => index / 2,
            Growth::Downward => (index + cells) / 2,
        };
        for row in 0..height {
            for column in 0..width {
                let count = self.counts[row * width + column];
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
        self.counts = grown;
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

    /// Count one point (non-finite coordinates are ignored).
    pub fn add(&mut self, x: f64, y: f64) {
        if !(x.is_finite() && y.is_finite()) {
            return;
        }
        self.fit(x, true);
        self.fit(y, false);
        let index = self.y.index_of(y) * self.x.cells + self.x.index_of(x);
        if let Some(cell) = self.counts.get_mut(index) {
            *cell = cell.saturating_add(1);
        }
    }

    /// The grid as the model has it: row 0 at the top (largest y).
    pub fn finish(&self) -> DensityGrid {
        let width = self.x.cells;
        let height = self.y.cells;
        let mut counts = Vec::with_capacity(self.counts.len());
        for row in (0..height).rev() {
            counts.extend_from_slice(&self.counts[row * width..(row + 1) * width]);
        }
        DensityGrid {
            width: width as u32,
            height: height as u32,
            counts,
            x_domain: (self.x.origin, self.x.end()),
            y_domain: (self.y.origin, self.y.end()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn points_outside_the_first_extent_grow_the_grid_and_every_point_is_counted() {
        let mut grid = DoublingGrid::new((0.0, 10.0), (0.0, 10.0));
        for step in 0..1000 {
            let value = f64::from(step) * 0.01;
            grid.add(value, value);
        }
        grid.add(-50.0, 5.0);
        grid.add(5.0, 400.0);
        let finished = grid.finish();
        let total: u64 = finished.counts.iter().map(|&count| u64::from(count)).sum();
        assert_eq!(total, 1002);
        assert!(finished.x_domain.0 <= -50.0 && finished.x_domain.1 > 10.0);
        assert!(finished.y_domain.1 > 400.0);
        assert_eq!(
            finished.counts.len(),
            (DENSITY_WIDTH * DENSITY_HEIGHT) as usize
        );
    }

    #[test]
    fn the_top_row_holds_the_largest_y() {
        let mut grid = DoublingGrid::new((0.0, 1.0), (0.0, 1.0));
        grid.add(0.0, 0.999);
        let finished = grid.finish();
        assert_eq!(finished.counts[0], 1);
    }
}
