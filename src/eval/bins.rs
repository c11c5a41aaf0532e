//! Equal-width bins with nice edges for `bins` on a quantitative column: the width is the
//! span divided by the asked count, rounded to 1, 2 or 5 times a power of ten (the "nice
//! number" rounding of P. S. Heckbert (1990), "Nice numbers for graph labels", Graphics Gems,
//! pp. 61–63), and the edges are multiples of the width, so `bins: 10` over 3.1..48.7 gives
//! 0–5, 5–10, ..., 45–50.

/// At most this many bins are made, whatever is asked (common practice, no source: more bins
/// than pixels of an axis cannot be drawn apart).
pub const MAX_BINS: u32 = 1000;

#[derive(Clone, Debug, PartialEq)]
pub struct Bins {
    /// Lower edge of the first bin.
    pub start: f64,
    pub width: f64,
    pub count: usize,
    /// Decimals that show the edges exactly.
    decimals: usize,
}

/// Heckbert's rounding of `value` (> 0) to 1, 2, 5 or 10 times a power of ten.
pub fn nice_step(value: f64) -> f64 {
    if !(value.is_finite() && value > 0.0) {
        return 1.0;
    }
    let exponent = value.log10().floor();
    let power = 10f64.powf(exponent);
    let fraction = value / power;
    let nice = if fraction < 1.5 {
        1.0
    } else if fraction < 3.0 {
        2.0
    } else if fraction < 7.0 {
        5.0
    } else {
        10.0
    };
    nice * power
}

impl Bins {
    /// About `asked` bins covering `min..=max` (finite, `min <= max`).
    pub fn covering(min: f64, max: f64, asked: u32) -> Bins {
        let asked = asked.clamp(1, MAX_BINS);
        let span = max - min;
        let mut width = if span > 0.0 && span.is_finite() {
            nice_step(span / f64::from(asked))
        } else {
            // one value: a bin of width one around it (or a tenth of its size)
            nice_step(min.abs().max(1.0) / 10.0)
        };
        loop {
            let start = (min / width).floor() * width;
            let mut count = ((max - start) / width).floor() as usize + 1;
            // the maximum on an edge belongs to the bin below it (the last bin is closed)
            if count > 1 && start + (count - 1) as f64 * width >= max && max > min {
                count -= 1;
            }
            if count <= MAX_BINS as usize {
                let exponent = width.log10().floor();
                let decimals = if exponent < 0.0 {
                    (-exponent) as usize
                } else {
                    0
                };
                return Bins {
                    start,
                    width,
                    count: count.max(1),
                    decimals,
                };
            }
            width = nice_step(width * 2.0);
        }
    }

    /// The bin `value` falls in (values outside are clamped to the first or last bin).
    pub fn index_of(&self, value: f64) -> usize {
        let position = ((value - self.start) / self.width).floor();
        if position <= 0.0 || position.is_nan() {
            0
        } else {
            (position as usize).min(self.count - 1)
        }
    }

    /// Lower and upper edge of bin `index`.
    pub fn edges(&self, index: usize) -> (f64, f64) {
        let low = self.start + index as f64 * self.width;
        (low, low + self.width)
    }

    /// `10–20` (an en dash between the edges).
    pub fn label(&self, index: usize) -> String {
        let (low, high) = self.edges(index);
        format!(
            "{}\u{2013}{}",
            format_edge(low, self.decimals),
            format_edge(high, self.decimals)
        )
    }
}

fn format_edge(value: f64, decimals: usize) -> String {
    let text = format!("{value:.decimals$}");
    // `-0` reads as a mistake
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text.trim_start_matches('-').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heckbert_rounding_picks_one_two_or_five() {
        // Heckbert 1990: fractions below 1.5, 3 and 7 round to 1, 2 and 5, else 10
        assert_eq!(nice_step(1.2), 1.0);
        assert_eq!(nice_step(2.9), 2.0);
        assert_eq!(nice_step(4.56), 5.0);
        assert_eq!(nice_step(7.5), 10.0);
        assert!((nice_step(0.034) - 0.05).abs() < 1e-12);
    }

    #[test]
    fn bins_have_nice_edges_and_cover_the_range() {
        let bins = Bins::covering(3.1, 48.7, 10);
        assert_eq!((bins.start, bins.width, bins.count), (0.0, 5.0, 10));
        assert_eq!(bins.label(0), "0\u{2013}5");
        assert_eq!(bins.index_of(3.1), 0);
        assert_eq!(bins.index_of(48.7), 9);
        // the maximum on an edge goes to the last bin, not to a new one
        let edge = Bins::covering(0.0, 100.0, 10);
        assert_eq!(edge.count, 10);
        assert_eq!(edge.index_of(100.0), 9);
        let fine = Bins::covering(0.1, 0.9, 4);
        assert_eq!(fine.label(1), "0.2\u{2013}0.4");
        let single = Bins::covering(7.0, 7.0, 5);
        assert_eq!(single.count, 1);
        assert_eq!(single.index_of(7.0), 0);
        let negative = Bins::covering(-9.0, 9.0, 2);
        assert_eq!(negative.label(0), "-10\u{2013}0");
    }
}
