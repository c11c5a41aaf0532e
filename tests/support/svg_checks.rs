//! Checks on a rendered SVG, read back from its text with a strict XML parser (roxmltree): the
//! tick labels of each axis, the drawn bars and areas, and Tufte's lie factor computed from the
//! geometry. Used on the hand-built charts and on the rendered demo.
#![allow(dead_code)]

/// An axis read back from the SVG: the tick positions and labels along it.
#[derive(Debug)]
pub struct ReadAxis {
    pub vertical: bool,
    /// (pixel along the axis, label text)
    pub ticks: Vec<(f64, String)>,
    /// The anchor points of the labels: (x, y, text).
    pub labels_at: Vec<(f64, f64, String)>,
    /// The pixel extent of the axis line along the axis.
    pub extent: Option<(f64, f64)>,
}

impl ReadAxis {
    /// The least-squares line `pixel = a + b · value` through the numeric ticks.
    pub fn numeric_fit(&self) -> Option<(f64, f64)> {
        let points: Vec<(f64, f64)> = self
            .ticks
            .iter()
            .filter_map(|(pixel, label)| Some((label.parse::<f64>().ok()?, *pixel)))
            .collect();
        if points.len() < 2 {
            return None;
        }
        let n = points.len() as f64;
        let mean_x = points.iter().map(|p| p.0).sum::<f64>() / n;
        let mean_y = points.iter().map(|p| p.1).sum::<f64>() / n;
        let sxx: f64 = points.iter().map(|p| (p.0 - mean_x).powi(2)).sum();
        let sxy: f64 = points.iter().map(|p| (p.0 - mean_x) * (p.1 - mean_y)).sum();
        if sxx == 0.0 {
            return None;
        }
        let b = sxy / sxx;
        Some((mean_y - b * mean_x, b))
    }
}

#[derive(Debug)]
pub struct ReadBar {
    pub x: f64,
    pub y: f64,
    pub width: f64,
    pub height: f64,
    /// The value in the mark's accessible label (after the last `: `).
    pub value: Option<f64>,
}

#[derive(Debug, Default)]
pub struct ReadChart {
    pub axes: Vec<ReadAxis>,
    pub bars: Vec<ReadBar>,
    /// Closed polygons of area layers.
    pub areas: Vec<Vec<(f64, f64)>>,
    pub width: f64,
    pub height: f64,
}

fn attribute(node: roxmltree::Node, name: &str) -> Option<f64> {
    node.attribute(name)?.parse().ok()
}

/// Parse the SVG strictly and read its axes, bars and areas.
pub fn read_chart(svg: &str) -> Result<ReadChart, String> {
    let document = roxmltree::Document::parse(svg).map_err(|error| error.to_string())?;
    let root = document.root_element();
    let mut chart = ReadChart {
        width: attribute(root, "width").unwrap_or(0.0),
        height: attribute(root, "height").unwrap_or(0.0),
        ..ReadChart::default()
    };
    for group in root.descendants().filter(|node| node.has_tag_name("g")) {
        let class = group.attribute("class").unwrap_or("");
        let label = group.attribute("aria-label").unwrap_or("");
        if class == "axis" {
            let vertical = label.starts_with("y axis");
            let extent = group
                .children()
                .filter(|node| node.has_tag_name("line"))
                .find_map(|line| {
                    let (x1, y1) = (attribute(line, "x1")?, attribute(line, "y1")?);
                    let (x2, y2) = (attribute(line, "x2")?, attribute(line, "y2")?);
                    let (from, to) = if vertical { (y1, y2) } else { (x1, x2) };
                    ((to - from).abs() > 10.0).then_some((from.min(to), from.max(to)))
                });
            let lines: Vec<f64> = group
                .children()
                .filter(|node| node.has_tag_name("line"))
                .filter_map(|line| {
                    let (x1, y1) = (attribute(line, "x1")?, attribute(line, "y1")?);
                    let (x2, y2) = (attribute(line, "x2")?, attribute(line, "y2")?);
                    // tick marks are short, the axis line is long
                    if (x2 - x1).abs() + (y2 - y1).abs() > 10.0 {
                        return None;
                    }
                    Some(if vertical { y1 } else { x1 })
                })
                .collect();
            let labels_at: Vec<(f64, f64, String)> = group
                .children()
                .filter(|node| node.has_tag_name("text"))
                .filter_map(|text| {
                    Some((
                        attribute(text, "x")?,
                        attribute(text, "y")?,
                        text.text().unwrap_or("").to_string(),
                    ))
                })
                .collect();
            // pair each label with the nearest tick along the axis
            let ticks = labels_at
                .iter()
                .filter_map(|(x, y, text)| {
                    let along = if vertical { *y } else { *x };
                    let nearest = lines
                        .iter()
                        .copied()
                        .min_by(|a, b| (a - along).abs().total_cmp(&(b - along).abs()))?;
                    Some((nearest, text.clone()))
                })
                .collect();
            chart.axes.push(ReadAxis {
                vertical,
                ticks,
                labels_at,
                extent,
            });
        } else if class.starts_with("layer") {
            let bars = class == "layer bar";
            for rect in group
                .children()
                .filter(|node| bars && node.has_tag_name("rect"))
            {
                let value = rect
                    .attribute("aria-label")
                    .and_then(|label| label.rsplit(": ").next())
                    .and_then(|text| text.parse::<f64>().ok());
                if let (Some(x), Some(y), Some(width), Some(height)) = (
                    attribute(rect, "x"),
                    attribute(rect, "y"),
                    attribute(rect, "width"),
                    attribute(rect, "height"),
                ) {
                    chart.bars.push(ReadBar {
                        x,
                        y,
                        width,
                        height,
                        value,
                    });
                }
            }
            for polygon in group.children().filter(|node| node.has_tag_name("polygon")) {
                let points: Vec<(f64, f64)> = polygon
                    .attribute("points")
                    .unwrap_or("")
                    .split_whitespace()
                    .filter_map(|pair| {
                        let (x, y) = pair.split_once(',')?;
                        Some((x.parse().ok()?, y.parse().ok()?))
                    })
                    .collect();
                chart.areas.push(points);
            }
        }
    }
    Ok(chart)
}

/// Tufte's lie factor (Tufte 1983, *The Visual Display of Quantitative Information*, p. 57:
/// size of effect shown in graphic / size of effect in data) of every pair of drawn lengths
/// against the first, where an effect is the relative change from one mark to another.
/// Returns the factors (empty when fewer than two distinct values).
pub fn lie_factors(pairs: &[(f64, f64)]) -> Vec<f64> {
    // (drawn length, data value), both positive
    let usable: Vec<(f64, f64)> = pairs
        .iter()
        .copied()
        .filter(|(length, value)| *length > 0.0 && *value > 0.0)
        .collect();
    let Some(&(base_length, base_value)) = usable.iter().min_by(|a, b| a.1.total_cmp(&b.1)) else {
        return Vec::new();
    };
    usable
        .iter()
        .filter(|(_, value)| (value - base_value).abs() > 1e-9 * base_value.abs().max(1.0))
        .map(|(length, value)| {
            let shown = (length - base_length) / base_length;
            let data = (value - base_value) / base_value;
            shown / data
        })
        .collect()
}

/// The lie factors of a chart's bars (values from their labels, lengths along the numeric
/// axis) and areas (values read off the numeric y axis at the top and bottom edge).
pub fn chart_lie_factors(chart: &ReadChart) -> Vec<f64> {
    let mut factors = Vec::new();
    let numeric_axis = |vertical: bool| {
        chart
            .axes
            .iter()
            .filter(|axis| axis.vertical == vertical)
            .find_map(|axis| axis.numeric_fit())
    };
    if !chart.bars.is_empty() {
        let vertical_values = numeric_axis(true).is_some();
        let pairs: Vec<(f64, f64)> = chart
            .bars
            .iter()
            .filter_map(|bar| {
                let length = if vertical_values {
                    bar.height
                } else {
                    bar.width
                };
                Some((length, bar.value?.abs()))
            })
            .collect();
        factors.extend(lie_factors(&pairs));
    }
    if let Some((a, b)) = numeric_axis(true) {
        let read = |pixel: f64| (pixel - a) / b;
        let tops: Vec<&[(f64, f64)]> = chart
            .areas
            .iter()
            .map(|area| &area[..area.len() / 2])
            .collect();
        for (index, area) in chart.areas.iter().enumerate() {
            let half = area.len() / 2;
            if half == 0 {
                continue;
            }
            let top = &area[..half];
            let bottom: Vec<(f64, f64)> = area[half..].iter().rev().copied().collect();
            let pairs: Vec<(f64, f64)> = top
                .iter()
                .zip(&bottom)
                .map(|(upper, lower)| {
                    // a band stacked on another area starts at that area's value; any other
                    // bottom edge stands for zero, whatever pixel it is drawn at
                    let stacked = tops.iter().enumerate().any(|(other, edge)| {
                        other != index
                            && edge.iter().any(|point| {
                                (point.0 - lower.0).abs() < 0.02 && (point.1 - lower.1).abs() < 0.02
                            })
                    });
                    let start = if stacked { read(lower.1) } else { 0.0 };
                    (lower.1 - upper.1, read(upper.1) - start)
                })
                .collect();
            factors.extend(lie_factors(&pairs));
        }
    }
    factors
}
