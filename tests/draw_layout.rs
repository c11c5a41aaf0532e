//! The layout and the writers on hand-built evaluated charts: geometry on the scene (bar
//! lengths, stacking, panels, legends, ticks inside their axis, labels that do not overlap),
//! every SVG accepted by two strict parsers, and the lie factor read back from the SVG.

#[path = "support/charts.rs"]
mod charts;
#[path = "support/svg_checks.rs"]
mod svg_checks;

use markwell::draw::layout::{layout, AxisSide, BoxRect, Node, Role, Scene, Shape};
use markwell::draw::png::{parse_svg, svg_to_png};
use markwell::draw::svg::write_svg;
use markwell::spec::model::{Arrange, Channel, Mark};

fn rects_of_layer(scene: &Scene) -> Vec<markwell::draw::layout::BoxRect> {
    scene
        .groups
        .iter()
        .filter(|group| matches!(group.role, Role::Layer(_)))
        .flat_map(|group| group.children.iter())
        .filter_map(|node| match node {
            markwell::draw::layout::Node::Primitive(primitive) => match &primitive.shape {
                Shape::Rect(rect) => Some(*rect),
                _ => None,
            },
            _ => None,
        })
        .collect()
}

#[test]
fn bar_lengths_are_proportional_to_values_from_a_zero_baseline() {
    let chart = charts::bakery_bars();
    let scene = layout(&chart);
    let bars = rects_of_layer(&scene);
    assert_eq!(bars.len(), 5);
    let values = [412.0, 268.0, 530.5, 97.0, 341.0];
    let per_unit = bars[0].height / values[0];
    for (bar, value) in bars.iter().zip(values) {
        assert!(
            (bar.height - value * per_unit).abs() < 1e-6,
            "bar of {value} is {} px",
            bar.height
        );
    }
    // every bar ends on the same baseline: the bottom of the plot, where 0 sits
    let plot = scene.panels[0].plot;
    for bar in &bars {
        assert!((bar.bottom() - plot.bottom()).abs() < 1e-6);
    }
    let y_axis = scene
        .axes
        .iter()
        .find(|axis| axis.side == AxisSide::Left)
        .unwrap();
    assert_eq!(y_axis.ticks.first().and_then(|tick| tick.value), Some(0.0));
}

#[test]
fn stacked_segments_touch_and_side_by_side_bars_share_the_band() {
    let scene = layout(&charts::orchard_stack(Arrange::Stack));
    let bars = rects_of_layer(&scene);
    assert_eq!(bars.len(), 9);
    for orchard in bars.chunks(3) {
        // each segment starts where the one below ends (y grows downward)
        assert!((orchard[0].y - orchard[1].bottom()).abs() < 1e-6);
        assert!((orchard[1].y - orchard[2].bottom()).abs() < 1e-6);
        assert!((orchard[0].x - orchard[2].x).abs() < 1e-9);
    }
    let scene = layout(&charts::orchard_stack(Arrange::SideBySide));
    let bars = rects_of_layer(&scene);
    for orchard in bars.chunks(3) {
        assert!((orchard[0].right() - orchard[1].x).abs() < 1e-6);
        assert!((orchard[1].right() - orchard[2].x).abs() < 1e-6);
        assert!((orchard[0].width - orchard[1].width).abs() < 1e-9);
    }
}

#[test]
fn every_tick_and_tick_label_lies_within_its_axis_and_labels_do_not_overlap() {
    for (name, chart) in charts::all_charts() {
        assert_axis_labels_fit(name, &layout(&chart));
    }
}

/// Every tick lies on its axis, every drawn label is centred on its tick inside the frame, and
/// no two labels of an axis overlap.
fn assert_axis_labels_fit(name: &str, scene: &Scene) {
    for axis in &scene.axes {
        let (low, high) = (
            axis.extent.0.min(axis.extent.1),
            axis.extent.0.max(axis.extent.1),
        );
        let mut boxes = Vec::new();
        for tick in &axis.ticks {
            assert!(
                tick.pixel >= low - 0.5 && tick.pixel <= high + 0.5,
                "{name}: tick {} at {} outside the axis {low}..{high}",
                tick.label,
                tick.pixel
            );
            if let Some(bounds) = tick.label_bounds() {
                // the label's centre along the axis sits at its tick, inside the frame
                let centre = match axis.side {
                    AxisSide::Bottom => bounds.x + bounds.width / 2.0,
                    AxisSide::Left => bounds.y + bounds.height / 2.0,
                };
                assert!(
                    centre >= low - 0.5 && centre <= high + 0.5,
                    "{name}: label {} centred at {centre} outside {low}..{high}",
                    tick.label
                );
                assert!(
                    bounds.x >= 0.0 && bounds.right() <= scene.width + 0.5,
                    "{name}"
                );
                assert!(
                    bounds.y >= 0.0 && bounds.bottom() <= scene.height + 0.5,
                    "{name}"
                );
                boxes.push((tick.label.clone(), bounds));
            }
        }
        for (index, (first, first_box)) in boxes.iter().enumerate() {
            for (second, second_box) in &boxes[index + 1..] {
                assert!(
                    !first_box.overlaps(second_box),
                    "{name}: labels {first} and {second} overlap"
                );
            }
        }
        assert!(
            !boxes.is_empty() || axis.panel % 2 == 1 || axis.side == AxisSide::Left,
            "{name}: an axis without any label"
        );
    }
}

#[test]
fn long_and_many_category_labels_are_turned_or_thinned_not_overlapped() {
    // forty invented sheep farms on a band x axis: far more labels than the axis can lay flat
    let names: Vec<String> = (0..40)
        .map(|i| format!("Fold {i} of the upper valley"))
        .collect();
    let refs: Vec<&str> = names.iter().map(String::as_str).collect();
    let mut chart = charts::bakery_bars();
    let layer = &mut chart.layers[0];
    layer.channels[0].domain = charts::categories(&refs);
    layer.marks = refs
        .iter()
        .enumerate()
        .map(|(i, name)| {
            charts::mark(vec![
                charts::text(name),
                markwell::eval::model::Datum::Number(10.0 + i as f64),
            ])
        })
        .collect();
    let scene = layout(&chart);
    let x_axis = scene
        .axes
        .iter()
        .find(|axis| axis.side == AxisSide::Bottom)
        .unwrap();
    let boxes: Vec<_> = x_axis
        .ticks
        .iter()
        .filter_map(|tick| tick.label_bounds())
        .collect();
    assert!(!boxes.is_empty());
    for (index, first) in boxes.iter().enumerate() {
        for second in &boxes[index + 1..] {
            assert!(!first.overlaps(second));
        }
    }
    // the labels are turned upright (taller than wide)
    assert!(boxes.iter().all(|bounds| bounds.height > bounds.width));
}

#[test]
fn legends_for_colour_size_and_shape() {
    let scene = layout(&charts::apiary_scatter());
    let channels: Vec<Channel> = scene.legends.iter().map(|legend| legend.channel).collect();
    assert!(channels.contains(&Channel::Area), "{channels:?}");
    assert!(channels.contains(&Channel::Shape), "{channels:?}");
    let scene = layout(&charts::orchard_stack(Arrange::Stack));
    let hue = scene
        .legends
        .iter()
        .find(|legend| legend.channel == Channel::Hue)
        .unwrap();
    assert_eq!(hue.entries.len(), 3);
    let colours: Vec<_> = hue
        .entries
        .iter()
        .map(|entry| entry.colour.clone())
        .collect();
    assert!(colours[0] != colours[1] && colours[1] != colours[2]);
    // the legend sits right of every plot
    for panel in &scene.panels {
        assert!(hue.bounds.x >= panel.plot.right());
    }
    // a quantitative colour gets a ramp legend whose entries get darker (more is darker)
    let scene = layout(&charts::queue_cells());
    let ramp = scene
        .legends
        .iter()
        .find(|legend| legend.channel == Channel::Luminance)
        .unwrap();
    let lightness: Vec<f64> = ramp
        .entries
        .iter()
        .map(|entry| {
            markwell::knowledge::colour::parse_hex_colour(entry.colour.as_deref().unwrap())
                .unwrap()
                .to_lab()
                .lightness
        })
        .collect();
    assert!(
        lightness.windows(2).all(|pair| pair[1] < pair[0]),
        "{lightness:?}"
    );
}

#[test]
fn panels_wrap_into_a_grid_and_never_overlap() {
    let scene = layout(&charts::harbour_panels());
    assert_eq!(scene.panels.len(), 5);
    let rows: std::collections::BTreeSet<i64> = scene
        .panels
        .iter()
        .map(|panel| panel.plot.y.round() as i64)
        .collect();
    assert!(rows.len() >= 2, "five panels on 640 x 400 wrap");
    for (index, first) in scene.panels.iter().enumerate() {
        assert!(first.plot.x >= 0.0 && first.plot.right() <= scene.width);
        assert!(first.plot.y >= 0.0 && first.plot.bottom() <= scene.height);
        for second in &scene.panels[index + 1..] {
            assert!(!first.plot.overlaps(&second.plot));
        }
    }
    // every panel's bars stay inside its plot
    for primitive in scene.primitives() {
        if let (Some(mark), Shape::Rect(rect)) = (primitive.mark, &primitive.shape) {
            let panel_index = charts::harbour_panels().layers[0].marks[mark.mark].panel as usize;
            let plot = scene.panels[panel_index].plot;
            assert!(rect.x >= plot.x - 1e-6 && rect.right() <= plot.right() + 1e-6);
            assert!(rect.y >= plot.y - 1e-6 && rect.bottom() <= plot.bottom() + 1e-6);
        }
    }
}

#[test]
fn wedges_sweep_in_proportion_to_their_values() {
    let scene = layout(&charts::bread_pie());
    let sweeps: Vec<f64> = scene
        .primitives()
        .iter()
        .filter_map(|primitive| match primitive.shape {
            Shape::Wedge {
                start_angle,
                end_angle,
                ..
            } => Some(end_angle - start_angle),
            _ => None,
        })
        .collect();
    let values = [30.0, 45.0, 10.0, 15.0];
    assert_eq!(sweeps.len(), 4);
    for (sweep, value) in sweeps.iter().zip(values) {
        assert!((sweep - value / 100.0 * std::f64::consts::TAU).abs() < 1e-9);
    }
    assert!(scene.axes.is_empty());
}

#[test]
fn logarithmic_axis_places_powers_of_ten_evenly() {
    let scene = layout(&charts::river_log());
    let axis = scene
        .axes
        .iter()
        .find(|axis| axis.side == AxisSide::Left)
        .unwrap();
    let powers: Vec<(f64, f64)> = axis
        .ticks
        .iter()
        .filter_map(|tick| Some((tick.value?, tick.pixel)))
        .filter(|(value, _)| (value.log10() - value.log10().round()).abs() < 1e-9)
        .collect();
    assert!(powers.len() >= 3, "{powers:?}");
    let gaps: Vec<f64> = powers
        .windows(2)
        .map(|pair| pair[1].1 - pair[0].1)
        .collect();
    for gap in &gaps {
        assert!((gap - gaps[0]).abs() < 1e-6, "{gaps:?}");
    }
}

#[test]
fn lines_join_each_series_in_x_order() {
    let scene = layout(&charts::ferry_lines(Mark::Line));
    let lines: Vec<&Vec<markwell::draw::layout::Point>> = scene
        .primitives()
        .into_iter()
        .filter_map(|primitive| match &primitive.shape {
            Shape::Polyline {
                points,
                closed: false,
            } => Some(points),
            _ => None,
        })
        .collect();
    assert_eq!(lines.len(), 2);
    for line in lines {
        assert_eq!(line.len(), 31);
        assert!(line.windows(2).all(|pair| pair[1].x > pair[0].x));
    }
    // a calendar x axis: labels are dates, not seconds
    let x_axis = scene
        .axes
        .iter()
        .find(|axis| axis.side == AxisSide::Bottom)
        .unwrap();
    assert!(x_axis
        .ticks
        .iter()
        .all(|tick| !tick.label.starts_with("17")));
}

#[test]
fn every_svg_is_accepted_by_two_strict_parsers_and_has_title_and_desc() {
    for (name, chart) in charts::all_charts() {
        let svg = write_svg(&layout(&chart));
        // MARKWELL_DRAW_DUMP=DIR keeps the pictures for a person to look at
        if let Some(dir) = std::env::var_os("MARKWELL_DRAW_DUMP") {
            let dir = std::path::PathBuf::from(dir);
            std::fs::create_dir_all(&dir).unwrap();
            std::fs::write(dir.join(format!("{name}.svg")), &svg).unwrap();
            std::fs::write(
                dir.join(format!("{name}.png")),
                svg_to_png(&svg, 1.0).unwrap(),
            )
            .unwrap();
        }
        // roxmltree: strict XML 1.0 (well-formedness, one root, entities)
        let document = roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{name}: {e}"));
        let root = document.root_element();
        assert!(
            root.has_tag_name(("http://www.w3.org/2000/svg", "svg")),
            "{name}"
        );
        assert_eq!(root.attribute("version"), Some("1.1"));
        let title = root
            .children()
            .find(|node| node.has_tag_name("title"))
            .unwrap();
        assert_eq!(title.text(), chart.title.as_deref(), "{name}");
        let desc = root
            .children()
            .find(|node| node.has_tag_name("desc"))
            .unwrap();
        assert!(!desc.text().unwrap_or("").is_empty(), "{name}");
        // usvg: the SVG structure as the rasteriser reads it
        let tree = parse_svg(&svg).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(tree.size().width(), 640.0);
        // the labels are real text
        assert!(
            document.descendants().any(|node| node.has_tag_name("text")),
            "{name}"
        );
    }
}

#[test]
fn lie_factor_read_back_from_each_svg_is_one() {
    let mut checked = 0;
    for (name, chart) in charts::all_charts() {
        let svg = write_svg(&layout(&chart));
        let read = svg_checks::read_chart(&svg).unwrap();
        let factors = svg_checks::chart_lie_factors(&read);
        for factor in &factors {
            // Tufte 1983, p. 57: a lie factor within 1.00 ± 0.05 is "substantially" faithful;
            // we hold our own charts to 1 %
            assert!((factor - 1.0).abs() < 0.01, "{name}: lie factor {factor}");
        }
        checked += factors.len();
    }
    assert!(checked > 20, "{checked} lie factors checked");
}

#[test]
fn a_truncated_axis_shows_in_the_lie_factor_read_back() {
    // the check itself is not blind: bars drawn from 90 instead of 0 give a factor above 1
    let mut chart = charts::bakery_bars();
    chart.layers[0].channels[1].from_zero = false;
    chart.layers[0].channels[1].extent = Some((90.0, 540.0));
    let svg = write_svg(&layout(&chart));
    let factors = svg_checks::chart_lie_factors(&svg_checks::read_chart(&svg).unwrap());
    assert!(factors.iter().any(|factor| *factor > 1.05), "{factors:?}");
}

#[test]
fn density_grid_is_one_embedded_image_and_rasterises() {
    let chart = charts::density_scatter(64, 40, 20_000);
    let scene = layout(&chart);
    let images: Vec<_> = scene
        .primitives()
        .into_iter()
        .filter(|primitive| matches!(primitive.shape, Shape::Image(_)))
        .collect();
    assert_eq!(images.len(), 1);
    if let Shape::Image(image) = &images[0].shape {
        // the grid spans its domains: x 0..30 and y 0..9, the whole nice domain here
        let plot = scene.panels[0].plot;
        assert!((image.bounds.x - plot.x).abs() < 1e-6);
        assert!((image.bounds.bottom() - plot.bottom()).abs() < 1e-6);
        assert_eq!((image.pixel_width, image.pixel_height), (64, 40));
    }
    let svg = write_svg(&scene);
    assert!(svg.contains("data:image/png;base64,"));
    let png = svg_to_png(&svg, 1.0).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
}

#[test]
fn a_density_grid_in_two_panels_is_two_images_each_inside_its_own_plot_area() {
    let chart = charts::density_two_panels();
    let scene = layout(&chart);
    assert_eq!(scene.panels.len(), 2);
    let images: Vec<_> = scene
        .primitives()
        .into_iter()
        .filter_map(|primitive| match &primitive.shape {
            Shape::Image(image) => Some(image),
            _ => None,
        })
        .collect();
    assert_eq!(images.len(), 2);
    for (image, panel) in images.iter().zip(&scene.panels) {
        let plot = panel.plot;
        assert!(
            image.bounds.x >= plot.x - 1e-6
                && image.bounds.right() <= plot.right() + 1e-6
                && image.bounds.y >= plot.y - 1e-6
                && image.bounds.bottom() <= plot.bottom() + 1e-6,
            "image {:?} outside panel {}'s plot {plot:?}",
            image.bounds,
            panel.index
        );
        // the same cells in both panels
        assert_eq!((image.pixel_width, image.pixel_height), (40, 20));
    }
    assert_ne!(images[0].png, images[1].png);

    // the same read back from the SVG: every <image> lies in a different panel's plot area
    let svg = write_svg(&scene);
    let document = roxmltree::Document::parse(&svg).unwrap();
    let number = |node: &roxmltree::Node, name: &str| -> f64 {
        node.attribute(name)
            .and_then(|text| text.parse().ok())
            .unwrap_or(f64::NAN)
    };
    let mut panels_hit = Vec::new();
    for node in document
        .descendants()
        .filter(|node| node.has_tag_name("image"))
    {
        let (x, y) = (number(&node, "x"), number(&node, "y"));
        let (width, height) = (number(&node, "width"), number(&node, "height"));
        let inside = scene.panels.iter().position(|panel| {
            let plot = panel.plot;
            x >= plot.x - 0.01
                && x + width <= plot.right() + 0.01
                && y >= plot.y - 0.01
                && y + height <= plot.bottom() + 0.01
        });
        let Some(panel) = inside else {
            panic!("<image> at {x},{y} {width}x{height} is in no plot area");
        };
        panels_hit.push(panel);
    }
    assert_eq!(panels_hit, [0, 1]);

    // one colour scale: the same count is the same colour in both panels, read from the
    // rasterised images (the calm panel's cells hold 3, the exposed one's 6)
    let calm = density_png_rgba(images[0]);
    let exposed = density_png_rgba(images[1]);
    let pixel = |rgba: &[u8], column: usize, row: usize| -> [u8; 4] {
        let at = (row * 40 + column) * 4;
        [rgba[at], rgba[at + 1], rgba[at + 2], rgba[at + 3]]
    };
    // calm: lower left filled, upper right empty; exposed: the other way round
    assert_eq!(pixel(&calm, 0, 19)[3], 255);
    assert_eq!(pixel(&calm, 39, 0)[3], 0);
    assert_eq!(pixel(&exposed, 39, 0)[3], 255);
    assert_eq!(pixel(&exposed, 0, 19)[3], 0);
    // 6 is the top of the shared scale: the exposed cells are darker than the calm ones
    assert_ne!(pixel(&calm, 0, 19), pixel(&exposed, 39, 0));
    let mut alone = charts::density_two_panels();
    if let Some(grid) = &mut alone.layers[0].density {
        grid.panels.truncate(1);
    }
    let alone_scene = layout(&alone);
    let alone_images: Vec<_> = alone_scene
        .primitives()
        .into_iter()
        .filter_map(|primitive| match &primitive.shape {
            Shape::Image(image) => Some(image.clone()),
            _ => None,
        })
        .collect();
    // with the exposed panel gone, 3 is the top of the scale and the calm cells change colour
    assert_eq!(alone_images.len(), 1);
    assert_ne!(density_png_rgba(&alone_images[0]), calm);
}

#[test]
fn an_evaluated_grid_that_grew_past_the_data_is_cropped_to_each_panels_plot_area() {
    use markwell::data::rows::InlineRows;
    use markwell::eval::{evaluate_chart, EvalOptions, RowSource};
    use markwell::spec::model::{Source, SourceLocation};
    // the first 60 rows span 0..9, the later ones reach 22: the grid doubles its span to 36,
    // well past the axes' domain, and was drawn past the frame and over the other panel
    let rows: Vec<String> = (0..300)
        .map(|index| {
            let value = if index < 60 { index % 10 } else { index % 23 };
            let ferry = if index % 2 == 0 { "morning" } else { "evening" };
            format!(r#"{{"ferry": "{ferry}", "x": {value}, "y": {value}}}"#)
        })
        .collect();
    let text = format!(
        r#"{{"source": {{"rows": [{}]}}, "mark": "point", "panels": {{"by": "ferry"}},
            "bind": {{"x": "x", "y": "y"}}}}"#,
        rows.join(",")
    );
    let document = markwell::analysis::parse_document(&text);
    let mut open =
        |source: &Source| -> Result<Box<dyn RowSource + Send>, markwell::data::DataError> {
            match &source.location {
                SourceLocation::Rows { rows, .. } => Ok(Box::new(InlineRows::new(rows.clone()))),
                _ => panic!("the rows are inline"),
            }
        };
    let chart = evaluate_chart(
        &document.spec,
        &mut open,
        &EvalOptions {
            max_kept_marks: 50,
            ..EvalOptions::default()
        },
    );
    let Some(grid) = &chart.layers[0].density else {
        panic!("a density grid past the cap");
    };
    assert!(grid.x_domain.1 > 30.0, "{:?}", grid.x_domain);
    let scene = layout(&chart);
    assert_eq!(scene.panels.len(), 2);
    let images: Vec<_> = scene
        .primitives()
        .into_iter()
        .filter_map(|primitive| match &primitive.shape {
            Shape::Image(image) => Some(image),
            _ => None,
        })
        .collect();
    assert_eq!(images.len(), 2);
    for (image, panel) in images.iter().zip(&scene.panels) {
        // a cell cut by the plot's edge is kept whole: at most one cell past it
        let plot = panel.plot;
        let cell_width = image.bounds.width / f64::from(image.pixel_width);
        let cell_height = image.bounds.height / f64::from(image.pixel_height);
        assert!(
            image.bounds.x >= plot.x - cell_width
                && image.bounds.right() <= plot.right() + cell_width
                && image.bounds.y >= plot.y - cell_height
                && image.bounds.bottom() <= plot.bottom() + cell_height,
            "image {:?} outside panel {}'s plot {plot:?}",
            image.bounds,
            panel.index
        );
        assert!(image.pixel_width < grid.width && image.pixel_height < grid.height);
    }
}

/// A 10 by 10 density grid with one cell filled (5 rows): `filled` is (column, row from the
/// top). The x axis is logarithmic over 1..1001, the y axis even over 0..10.
fn one_cell_density_chart(
    filled: (u32, u32),
    x_domain: (f64, f64),
    x_spacing: markwell::spec::model::Spacing,
    flip_y: bool,
) -> markwell::eval::model::EvaluatedChart {
    use markwell::eval::model::{DensityGrid, Domain, PanelCounts};
    use markwell::spec::model::Spacing;
    let (across, down) = (10u32, 10u32);
    let mut counts = vec![0u32; (across * down) as usize];
    counts[(filled.1 * across + filled.0) as usize] = 5;
    let mut chart = charts::density_scatter(across, down, 0);
    let layer = &mut chart.layers[0];
    layer.channels[0].domain = Domain::Numeric {
        min: 1.0,
        max: 1001.0,
    };
    layer.channels[0].spacing = Some(Spacing::Logarithmic);
    layer.channels[1].domain = Domain::Numeric {
        min: 0.0,
        max: 10.0,
    };
    layer.channels[1].flip = flip_y;
    layer.density = Some(DensityGrid {
        width: across,
        height: down,
        panels: vec![PanelCounts { panel: 0, counts }],
        x_domain,
        y_domain: (0.0, 10.0),
        x_spacing,
        y_spacing: Spacing::Even,
        unplaced: 0,
    });
    chart
}

/// The one density image of a scene, checked to lie inside the plot, and whether it is filled
/// at a value: the value's place read off the first and last ticks of the drawn axes, as a
/// reader finds it (x logarithmic, y even).
fn density_image_reader(
    scene: &Scene,
) -> (
    markwell::draw::layout::ImageItem,
    impl Fn(f64, f64) -> bool + '_,
) {
    let images: Vec<_> = scene
        .primitives()
        .into_iter()
        .filter_map(|primitive| match &primitive.shape {
            Shape::Image(image) => Some(image.clone()),
            _ => None,
        })
        .collect();
    assert_eq!(images.len(), 1);
    let image = images[0].clone();
    let plot = scene.panels[0].plot;
    assert!(
        image.bounds.x >= plot.x - 1e-6
            && image.bounds.right() <= plot.right() + 1e-6
            && image.bounds.y >= plot.y - 1e-6
            && image.bounds.bottom() <= plot.bottom() + 1e-6,
        "{:?} outside {plot:?}",
        image.bounds
    );
    let rgba = density_png_rgba(&image);
    let axis_map = |channel: Channel, log: bool| {
        let axis = scene
            .axes
            .iter()
            .find(|axis| axis.channel == channel)
            .unwrap();
        let first = &axis.ticks[0];
        let last = axis.ticks.last().unwrap();
        let (a, b) = (first.value.unwrap(), last.value.unwrap());
        let (pa, pb) = (first.pixel, last.pixel);
        move |value: f64| {
            let t = if log {
                (value.log10() - a.log10()) / (b.log10() - a.log10())
            } else {
                (value - a) / (b - a)
            };
            pa + t * (pb - pa)
        }
    };
    let x_pixel = axis_map(Channel::X, true);
    let y_pixel = axis_map(Channel::Y, false);
    let bounds = image.bounds;
    let (width, height) = (image.pixel_width, image.pixel_height);
    let filled_at = move |value_x: f64, value_y: f64| -> bool {
        let column = ((x_pixel(value_x) - bounds.x) / bounds.width * f64::from(width)) as usize;
        let row = ((y_pixel(value_y) - bounds.y) / bounds.height * f64::from(height)) as usize;
        rgba[(row * width as usize + column) * 4 + 3] == 255
    };
    (image, filled_at)
}

/// A grid counted even in the values (as a chart past the cap is not, but a grid of an axis
/// whose spacing the evaluation does not know would be) on a logarithmic x axis and a flipped
/// y axis: each row must still be drawn where its value lies on the axis, not where an even
/// stretch of the grid would put it.
#[test]
fn a_density_grid_on_a_logarithmic_and_a_flipped_axis_puts_each_cell_where_its_values_lie() {
    use markwell::spec::model::Spacing;
    // 10 cells across 1..1001 (100 wide each) and 10 down 0..10; 5 rows in the cell
    // x 101..201, y 7..8 (row 2 from the top), nothing else
    let chart = one_cell_density_chart((1, 2), (1.0, 1001.0), Spacing::Even, true);
    let scene = layout(&chart);
    let (image, filled_at) = density_image_reader(&scene);
    // resampled: more pixels than cells along both axes
    assert!(image.pixel_width > 10 && image.pixel_height > 10);
    // inside the cell, near both its ends on the log axis
    assert!(filled_at(110.0, 7.5));
    assert!(filled_at(190.0, 7.2));
    assert!(filled_at(150.0, 7.9));
    // outside it: where an even stretch of the grid would have drawn the cell (x 10% to 20%
    // of the grid's width is about 2..4 on this log axis), and the unflipped place of its row
    // (y 2..3)
    assert!(!filled_at(3.0, 7.5));
    assert!(!filled_at(50.0, 7.5));
    assert!(!filled_at(300.0, 7.5));
    assert!(!filled_at(150.0, 2.5));
    assert!(!filled_at(150.0, 6.5));
}

/// The evaluation counts a logarithmic axis's grid in log10 units: its cells are even on
/// screen, the image keeps one pixel per cell, and a cell lies between its decades.
#[test]
fn a_density_grid_counted_in_log_units_keeps_one_pixel_per_cell_on_a_log_axis() {
    use markwell::spec::model::Spacing;
    // log10 x over 0..3 in 10 cells of 0.3 decades: cell 4 is 10^1.2..10^1.5 (15.8..31.6)
    let chart = one_cell_density_chart((4, 2), (0.0, 3.0), Spacing::Logarithmic, false);
    let scene = layout(&chart);
    let (image, filled_at) = density_image_reader(&scene);
    assert!(
        image.pixel_width <= 10 && image.pixel_height <= 10,
        "{image:?}"
    );
    assert!(filled_at(16.5, 7.5));
    assert!(filled_at(30.0, 7.5));
    assert!(!filled_at(14.0, 7.5));
    assert!(!filled_at(34.0, 7.5));
    // not flipped: row 2 from the top is y 7..8
    assert!(!filled_at(20.0, 2.5));
}

/// Points whose x and y ask for `ranked` spacing (crossing minutes and fares of invented ferry
/// runs): `count` runs, minutes far apart.
fn ranked_scatter(count: usize) -> markwell::eval::model::EvaluatedChart {
    use markwell::eval::model::{Datum, Domain};
    use markwell::spec::model::{AttributeKind, Spacing};
    let minutes: Vec<f64> = (0..count)
        .map(|index| (index as f64).powi(3) * 0.5 + 11.0)
        .collect();
    let fares: Vec<f64> = (0..count)
        .map(|index| ((index * 7) % count) as f64 * 0.5 + 2.0)
        .collect();
    let marks = minutes
        .iter()
        .zip(&fares)
        .map(|(minute, fare)| charts::mark(vec![Datum::Number(*minute), Datum::Number(*fare)]))
        .collect();
    let numeric = |values: &[f64]| Domain::Numeric {
        min: values.iter().copied().fold(f64::INFINITY, f64::min),
        max: values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    };
    let mut x = charts::channel(
        Channel::X,
        "crossing (min)",
        AttributeKind::Quantitative,
        numeric(&minutes),
    );
    x.spacing = Some(Spacing::Ranked);
    let mut y = charts::channel(
        Channel::Y,
        "fare",
        AttributeKind::Quantitative,
        numeric(&fares),
    );
    y.spacing = Some(Spacing::Ranked);
    charts::chart(
        "Fare by crossing time",
        vec![charts::layer(Mark::Point, vec![x, y], marks)],
    )
}

/// `ranked`: the values in order, one step apart whatever their difference; the smallest at
/// the left and at the bottom.
#[test]
fn ranked_spacing_puts_the_values_in_order_one_step_apart() {
    let chart = ranked_scatter(12);
    let scene = layout(&chart);
    assert!(
        !scene.notes.iter().any(|note| note.contains("ranked")),
        "{:?}",
        scene.notes
    );
    let points: Vec<(f64, f64)> = scene
        .primitives()
        .into_iter()
        .filter(|primitive| primitive.mark.is_some())
        .filter_map(|primitive| match &primitive.shape {
            Shape::Circle { centre, .. } | Shape::Symbol { centre, .. } => {
                Some((centre.x, centre.y))
            }
            _ => None,
        })
        .collect();
    assert_eq!(points.len(), 12, "{:?}", scene.primitives());
    // the minutes grow with the row: x steps are equal however far apart the minutes are
    let steps: Vec<f64> = points
        .windows(2)
        .map(|pair| pair[1].0 - pair[0].0)
        .collect();
    for step in &steps {
        assert!(step > &0.0 && (step - steps[0]).abs() < 1e-6, "{steps:?}");
    }
    // the fares are 0.5 apart, ranked upward: pixel y falls by one step per rank
    let fares: Vec<f64> = (0..12)
        .map(|index| ((index * 7) % 12) as f64 * 0.5 + 2.0)
        .collect();
    let y_step = {
        let lowest = points[fares.iter().position(|fare| *fare == 2.0).unwrap()].1;
        let next = points[fares.iter().position(|fare| *fare == 2.5).unwrap()].1;
        lowest - next
    };
    assert!(y_step > 0.0);
    for (point, fare) in points.iter().zip(&fares) {
        let lowest = points[fares.iter().position(|fare| *fare == 2.0).unwrap()].1;
        let rank = (fare - 2.0) / 0.5;
        assert!(
            (lowest - point.1 - rank * y_step).abs() < 1e-6,
            "fare {fare}"
        );
    }
    // the axis labels read the values in order
    let x_axis = scene
        .axes
        .iter()
        .find(|axis| axis.channel == Channel::X)
        .unwrap();
    let labels: Vec<f64> = x_axis
        .ticks
        .iter()
        .map(|tick| tick.label.parse().unwrap())
        .collect();
    assert!(
        labels.windows(2).all(|pair| pair[0] < pair[1]),
        "{labels:?}"
    );
}

#[test]
fn ranked_spacing_falls_back_to_even_with_a_note_where_steps_cannot_be_drawn() {
    use markwell::draw::layout::MAX_RANKED_STEPS;
    use markwell::spec::model::Spacing;
    // too many values
    let scene = layout(&ranked_scatter(MAX_RANKED_STEPS + 1));
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.contains("`ranked` spacing on `x`")
                && note.contains(&format!("{} values", MAX_RANKED_STEPS + 1))),
        "{:?}",
        scene.notes
    );
    // a bar's value axis grows from zero
    let mut bars = charts::bakery_bars();
    let value_axis = bars.layers[0]
        .channels
        .iter_mut()
        .find(|info| info.channel == Channel::Y)
        .unwrap();
    value_axis.spacing = Some(Spacing::Ranked);
    let scene = layout(&bars);
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.contains("`ranked` spacing on `y`") && note.contains("from zero")),
        "{:?}",
        scene.notes
    );
    // the bars are still proportional to their values
    let rects = rects_of_layer(&scene);
    let per_unit = rects[0].height / 412.0;
    assert!((rects[2].height / 530.5 - per_unit).abs() < 1e-6);
    // rows drawn as a density grid keep no values to rank
    let mut density = charts::density_scatter(8, 8, 100);
    density.layers[0].channels[0].spacing = Some(Spacing::Ranked);
    let scene = layout(&density);
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.contains("`ranked` spacing on `x`") && note.contains("density")),
        "{:?}",
        scene.notes
    );
}

/// The RGBA pixels of a density image's PNG.
fn density_png_rgba(image: &markwell::draw::layout::ImageItem) -> Vec<u8> {
    let pixmap = resvg::tiny_skia::Pixmap::decode_png(&image.png).unwrap();
    pixmap.data().to_vec()
}

#[test]
fn png_scale_multiplies_the_pixel_size() {
    let svg = write_svg(&layout(&charts::bakery_bars()));
    let pixmap = markwell::draw::png::rasterise(&svg, 2.0).unwrap();
    assert_eq!((pixmap.width(), pixmap.height()), (1280, 800));
    assert!(markwell::draw::png::rasterise(&svg, 0.0).is_err());
    assert!(markwell::draw::png::rasterise(&svg, f32::NAN).is_err());
}

#[test]
fn hostile_charts_lay_out_without_panics_and_stay_parseable() {
    use markwell::eval::model::{Datum, Domain};
    // five thousand colours, missing and non-finite values, an empty domain, a NaN frame
    let names: Vec<String> = (0..5000).map(|i| format!("stall {i}")).collect();
    let refs: Vec<&str> = names.iter().map(String::as_str).collect();
    let mut chart = charts::orchard_stack(Arrange::Stack);
    chart.width = f64::NAN;
    chart.height = -3.0;
    chart.title = Some("<script>&\u{1}".to_string());
    let layer = &mut chart.layers[0];
    layer.channels[2].domain = charts::categories(&refs);
    for (index, mark) in layer.marks.iter_mut().enumerate() {
        mark.values[2] = charts::text(refs[index * 500]);
    }
    layer.marks[0].values[1] = Datum::Missing;
    layer.marks[1].values[1] = Datum::Number(f64::NAN);
    layer.marks[2].values[0] = Datum::Number(f64::INFINITY);
    let mut empty = charts::bakery_bars();
    empty.layers[0].channels[1].domain = Domain::Empty;
    let mut inverted = charts::bakery_bars();
    inverted.layers[0].channels[1].domain = Domain::Numeric {
        min: f64::NAN,
        max: 1e308,
    };
    inverted.layers[0].channels[1].extent = Some((5.0, 5.0));
    for chart in [chart, empty, inverted] {
        let scene = layout(&chart);
        assert_eq!((scene.width, scene.height), (640.0, 400.0));
        for legend in &scene.legends {
            assert!(legend.entries.len() <= markwell::draw::layout::MAX_LEGEND_ENTRIES);
        }
        let svg = write_svg(&scene);
        roxmltree::Document::parse(&svg).unwrap();
        parse_svg(&svg).unwrap();
    }
}

/// Every text of the scene with the role of the innermost group it is drawn in.
fn texts_by_role(scene: &Scene) -> Vec<(Role, BoxRect, String)> {
    fn walk(node: &Node, role: Role, out: &mut Vec<(Role, BoxRect, String)>) {
        match node {
            Node::Primitive(primitive) => {
                if let Shape::Text(item) = &primitive.shape {
                    out.push((role, item.bounds, item.content.clone()));
                }
            }
            Node::Group(group) => group
                .children
                .iter()
                .for_each(|child| walk(child, group.role, out)),
        }
    }
    let mut out = Vec::new();
    for group in &scene.groups {
        group
            .children
            .iter()
            .for_each(|child| walk(child, group.role, &mut out));
    }
    out
}

fn inside(inner: &BoxRect, outer: &BoxRect) -> bool {
    let slack = 0.5;
    inner.x >= outer.x - slack
        && inner.y >= outer.y - slack
        && inner.right() <= outer.right() + slack
        && inner.bottom() <= outer.bottom() + slack
}

/// Every legend and its texts lie inside the frame; legends overlap neither each other, nor a
/// plot, nor any other text; the axes' labels still fit (`assert_axis_labels_fit`).
fn assert_legends_fit(name: &str, scene: &Scene) {
    let frame = BoxRect {
        x: 0.0,
        y: 0.0,
        width: scene.width,
        height: scene.height,
    };
    assert_axis_labels_fit(name, scene);
    for panel in &scene.panels {
        assert!(
            panel.plot.width > 0.0 && panel.plot.height > 0.0 && inside(&panel.plot, &frame),
            "{name}: plot {:?}",
            panel.plot
        );
    }
    for (index, legend) in scene.legends.iter().enumerate() {
        assert!(
            inside(&legend.bounds, &frame),
            "{name}: legend `{}` at {:?} leaves the frame",
            legend.title,
            legend.bounds
        );
        for other in &scene.legends[index + 1..] {
            assert!(
                !legend.bounds.overlaps(&other.bounds),
                "{name}: legends `{}` and `{}` overlap",
                legend.title,
                other.title
            );
        }
        for panel in &scene.panels {
            assert!(
                !legend.bounds.overlaps(&panel.plot),
                "{name}: legend `{}` covers a plot",
                legend.title
            );
        }
    }
    let texts = texts_by_role(scene);
    for (index, (role, bounds, content)) in texts.iter().enumerate() {
        assert!(
            inside(bounds, &frame),
            "{name}: text `{content}` at {bounds:?} leaves the frame"
        );
        if *role != Role::Legend {
            for legend in &scene.legends {
                assert!(
                    !legend.bounds.overlaps(bounds),
                    "{name}: legend `{}` covers the text `{content}`",
                    legend.title
                );
            }
            continue;
        }
        assert!(
            scene
                .legends
                .iter()
                .any(|legend| inside(bounds, &legend.bounds)),
            "{name}: legend text `{content}` outside its legend"
        );
        for (_, other_bounds, other) in &texts[index + 1..] {
            assert!(
                !bounds.overlaps(other_bounds),
                "{name}: legend text `{content}` overlaps `{other}`"
            );
        }
    }
}

/// Frames from 200 x 150 to 1200 x 800 and one to three legends of up to 16 entries: every
/// legend box and label lies inside the frame and overlaps nothing; a legend shows all its
/// entries (as it does on the largest frame) or the scene's notes name it.
#[test]
fn legends_fit_every_frame_from_small_to_large() {
    let widths = [200.0, 260.0, 320.0, 480.0, 640.0, 900.0, 1200.0];
    let heights = [150.0, 200.0, 240.0, 320.0, 400.0, 600.0, 800.0];
    let mut arrangements = std::collections::BTreeMap::new();
    let mut checked = 0;
    for stalls in [0, 1, 7, 16] {
        for produce in [0, 1, 7, 16] {
            for with_size in [false, true] {
                if stalls == 0 && produce == 0 && !with_size {
                    continue;
                }
                let reference = layout(&charts::market_legends(
                    1200.0, 800.0, stalls, produce, with_size,
                ));
                assert!(reference.notes.is_empty(), "{:?}", reference.notes);
                let expected =
                    usize::from(stalls > 0) + usize::from(produce > 0) + usize::from(with_size);
                assert_eq!(reference.legends.len(), expected);
                for width in widths {
                    for height in heights {
                        let name = format!(
                            "{width} x {height}, {stalls} stalls, {produce} produce, size {with_size}"
                        );
                        let scene = layout(&charts::market_legends(
                            width, height, stalls, produce, with_size,
                        ));
                        assert_legends_fit(&name, &scene);
                        for wanted in &reference.legends {
                            let drawn = scene
                                .legends
                                .iter()
                                .find(|legend| legend.title == wanted.title);
                            let complete =
                                drawn.is_some_and(|legend| legend.entries == wanted.entries);
                            let noted = scene
                                .notes
                                .iter()
                                .any(|note| note.contains(&format!("`{}`", wanted.title)));
                            assert!(
                                complete || noted,
                                "{name}: legend `{}` is cut short without a note",
                                wanted.title
                            );
                            assert!(!(complete && noted), "{name}: a note for a whole legend");
                        }
                        let plot = scene.panels[0].plot;
                        let side = match scene.legends.first() {
                            None => "none",
                            Some(legend) if legend.bounds.x >= plot.right() => "right",
                            Some(_) => "below",
                        };
                        let key = (side, !scene.notes.is_empty());
                        *arrangements.entry(key).or_insert(0) += 1;
                        checked += 1;
                    }
                }
            }
        }
    }
    assert_eq!(checked, 31 * 49);
    eprintln!("arrangements (side, entries left out): {arrangements:?}");
    // the table reaches every arrangement
    for key in [("right", false), ("below", false), ("right", true)] {
        assert!(arrangements.contains_key(&key), "{key:?}: {arrangements:?}");
    }
}

/// Every hand-built chart (bars, stacks, lines, pies, cells, panels, a density grid) at small
/// and large frames: its legends fit as the market scatter's do.
#[test]
fn every_hand_built_chart_keeps_its_legends_inside_small_frames() {
    let mut with_legends = 0;
    for (name, chart) in charts::all_charts() {
        for (width, height) in [
            (320.0, 200.0),
            (480.0, 240.0),
            (640.0, 400.0),
            (1200.0, 800.0),
        ] {
            let mut chart = chart.clone();
            chart.width = width;
            chart.height = height;
            let scene = layout(&chart);
            assert_legends_fit(&format!("{name} at {width} x {height}"), &scene);
            with_legends += usize::from(!scene.legends.is_empty());
        }
    }
    assert!(with_legends >= 16, "{with_legends} scenes with legends");
}

/// Long orchard names turn the x labels upright; with sixteen varieties the legend moves or
/// shrinks, and still clears the turned labels.
#[test]
fn legends_clear_upright_category_labels() {
    let orchards: Vec<String> = (0..12)
        .map(|i| format!("Orchard on the far hill {i}"))
        .collect();
    let varieties: Vec<String> = (0..16).map(|i| format!("Variety {i}")).collect();
    let orchard_refs: Vec<&str> = orchards.iter().map(String::as_str).collect();
    let variety_refs: Vec<&str> = varieties.iter().map(String::as_str).collect();
    let mut turned = 0;
    for (width, height) in [
        (320.0, 200.0),
        (480.0, 320.0),
        (640.0, 400.0),
        (900.0, 300.0),
    ] {
        let mut chart = charts::orchard_stack(Arrange::SideBySide);
        chart.width = width;
        chart.height = height;
        chart.title = Some("Crates".to_string());
        let layer = &mut chart.layers[0];
        layer.channels[0].domain = charts::categories(&orchard_refs);
        layer.channels[2].domain = charts::categories(&variety_refs);
        layer.marks = (0..orchards.len() * 2)
            .map(|i| {
                charts::mark(vec![
                    charts::text(orchard_refs[i % orchards.len()]),
                    markwell::eval::model::Datum::Number(20.0 + (i * 13 % 90) as f64),
                    charts::text(variety_refs[i % varieties.len()]),
                ])
            })
            .collect();
        let scene = layout(&chart);
        assert_legends_fit(&format!("{width} x {height}"), &scene);
        turned += scene
            .axes
            .iter()
            .filter(|axis| axis.side == AxisSide::Bottom)
            .flat_map(|axis| axis.ticks.iter().filter_map(|tick| tick.label_bounds()))
            .filter(|bounds| bounds.height > bounds.width)
            .count();
    }
    assert!(turned > 0, "the labels are turned somewhere");
}

/// Sixty layers, each with its own three legends: a dozen are drawn, inside the frame, and a
/// note says how many are left out.
#[test]
fn a_chart_with_many_legends_draws_a_dozen_and_says_so() {
    use markwell::draw::layout::MAX_LEGENDS;
    use markwell::spec::model::Channel;
    for (width, height) in [(320.0, 200.0), (1200.0, 800.0)] {
        let mut chart = charts::market_legends(width, height, 16, 16, true);
        let first = chart.layers[0].clone();
        for index in 1..60 {
            let mut layer = first.clone();
            layer.index = index;
            for info in &mut layer.channels {
                if !matches!(info.channel, Channel::X | Channel::Y) {
                    info.title = format!("{} {index}", info.title);
                }
            }
            chart.layers.push(layer);
        }
        let scene = layout(&chart);
        assert!(scene.legends.len() <= MAX_LEGENDS);
        assert!(
            scene.notes.iter().any(
                |note| note.starts_with(&format!("{} legends are left out", 180 - MAX_LEGENDS))
            ),
            "{:?}",
            scene.notes
        );
        assert_legends_fit(&format!("sixty layers at {width} x {height}"), &scene);
    }
}

/// The marks of a scene with their shapes and paints.
fn drawn_marks(scene: &Scene) -> Vec<&markwell::draw::layout::Primitive> {
    scene
        .primitives()
        .into_iter()
        .filter(|primitive| primitive.mark.is_some())
        .collect()
}

#[test]
fn texture_hatches_each_bar_by_its_category_and_the_svg_fills_it_with_a_pattern() {
    use markwell::draw::layout::texture::{Hatch, HATCHES};
    use markwell::draw::layout::LegendGlyph;
    let chart = charts::orchard_soils();
    let scene = layout(&chart);
    assert!(
        !scene.notes.iter().any(|note| note.contains("texture")),
        "{:?}",
        scene.notes
    );
    let bars = drawn_marks(&scene);
    assert_eq!(bars.len(), 5);
    // soils in the domain's order: loam, clay, sand, chalk, clay
    let hatches: Vec<Option<Hatch>> = bars.iter().map(|bar| bar.paint.hatch).collect();
    assert_eq!(
        hatches,
        [0, 1, 2, 3, 1].map(|soil| Some(HATCHES[soil])).to_vec()
    );
    // the legend lists the four soils with their patterns
    let legend = scene
        .legends
        .iter()
        .find(|legend| legend.channel == Channel::Texture)
        .expect("a texture legend");
    let keys: Vec<(String, Option<LegendGlyph>)> = legend
        .entries
        .iter()
        .map(|entry| (entry.label.clone(), entry.glyph.clone()))
        .collect();
    assert_eq!(
        keys,
        ["loam", "clay", "sand", "chalk"]
            .iter()
            .enumerate()
            .map(|(index, soil)| (soil.to_string(), Some(LegendGlyph::Hatch(HATCHES[index]))))
            .collect::<Vec<_>>()
    );

    // the SVG: one pattern per distinct (hatch, colour), each hatched bar filled with one
    let svg = write_svg(&scene);
    let document = roxmltree::Document::parse(&svg).unwrap();
    let patterns: Vec<&str> = document
        .descendants()
        .filter(|node| node.has_tag_name("pattern"))
        .filter_map(|node| node.attribute("id"))
        .collect();
    // the legend's keys are drawn in ink, the bars in their colour: 3 + 3 patterns
    assert_eq!(patterns.len(), 6, "{patterns:?}");
    let layer = document
        .descendants()
        .find(|node| {
            node.attribute("class")
                .is_some_and(|class| class.starts_with("layer"))
        })
        .unwrap();
    let fills: Vec<&str> = layer
        .descendants()
        .filter(|node| node.has_tag_name("rect"))
        .filter_map(|node| node.attribute("fill"))
        .collect();
    assert_eq!(fills.len(), 5);
    assert!(!fills[0].starts_with("url("), "{fills:?}"); // loam is the plain fill
    for fill in &fills[1..] {
        let id = fill
            .strip_prefix("url(#")
            .and_then(|rest| rest.strip_suffix(')'))
            .unwrap_or_else(|| panic!("{fill}"));
        assert!(patterns.contains(&id), "{id} not among {patterns:?}");
    }
    assert_eq!(fills[1], fills[4], "both clay orchards share a pattern");
    assert!(fills[1] != fills[2] && fills[2] != fills[3]);

    // drawn: a plain bar is one colour inside, a hatched bar has its lines and its wash
    let picture = markwell::draw::png::rasterise(&svg, 1.0).unwrap();
    let colours_inside = |bar: &markwell::draw::layout::Primitive| {
        let Shape::Rect(rect) = &bar.shape else {
            panic!("{bar:?}")
        };
        let mut seen = std::collections::BTreeSet::new();
        for y in (rect.y as u32 + 3)..(rect.bottom() as u32 - 3) {
            for x in (rect.x as u32 + 3)..(rect.right() as u32 - 3) {
                let pixel = picture.pixel(x, y).unwrap();
                seen.insert([pixel.red(), pixel.green(), pixel.blue(), pixel.alpha()]);
            }
        }
        seen.len()
    };
    assert_eq!(colours_inside(bars[0]), 1);
    for bar in &bars[1..] {
        assert!(colours_inside(bar) > 2, "{bar:?}");
    }
}

#[test]
fn texture_on_lines_is_a_dash_pattern_per_series_with_dashes_in_the_legend() {
    use markwell::draw::layout::LegendGlyph;
    let mut chart = charts::ferry_lines(Mark::Line);
    chart.layers[0].channels[2].channel = Channel::Texture;
    let scene = layout(&chart);
    let lines: Vec<Vec<f64>> = drawn_marks(&scene)
        .iter()
        .filter(|primitive| matches!(primitive.shape, Shape::Polyline { .. }))
        .map(|primitive| primitive.paint.dash.clone())
        .collect();
    assert_eq!(lines.len(), 2, "{lines:?}");
    // Puffin's line is solid, Tern's dashed, in multiples of the 2 px stroke
    assert!(lines[0].is_empty(), "{lines:?}");
    assert_eq!(lines[1], vec![8.0, 4.0]);
    let legend = scene
        .legends
        .iter()
        .find(|legend| legend.channel == Channel::Texture)
        .unwrap();
    let glyphs: Vec<_> = legend
        .entries
        .iter()
        .map(|entry| entry.glyph.clone())
        .collect();
    assert_eq!(
        glyphs,
        vec![Some(LegendGlyph::Dash(0)), Some(LegendGlyph::Dash(1))]
    );
    let svg = write_svg(&scene);
    assert!(svg.contains("stroke-dasharray=\"8 4\""));
    assert!(!svg.contains("<pattern"), "lines use no fill pattern");
}

#[test]
fn tilt_turns_each_point_into_a_stroke_at_its_angle_and_skips_a_missing_value() {
    use markwell::draw::layout::LegendGlyph;
    let chart = charts::lighthouse_wind();
    let scene = layout(&chart);
    let strokes: Vec<f64> = drawn_marks(&scene)
        .iter()
        .map(|primitive| match &primitive.shape {
            // degrees counter-clockwise from horizontal, screen y downward
            Shape::Line { from, to } => (from.y - to.y).atan2(to.x - from.x).to_degrees(),
            other => panic!("a tilted point is a stroke, not {other:?}"),
        })
        .collect();
    // the 24th reading has no wind speed: 23 strokes and a note
    assert_eq!(strokes.len(), 23);
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.starts_with("layer 1: 1 mark not drawn")),
        "{:?}",
        scene.notes
    );
    for (hour, angle) in strokes.iter().enumerate() {
        let wind = 4.0 + (hour as f64 * 1.7) % 32.0;
        let expected = (wind - 4.0) / 32.0 * 90.0;
        assert!(
            (angle - expected).abs() < 1e-6,
            "hour {hour}: {angle} vs {expected}"
        );
    }
    let legend = scene
        .legends
        .iter()
        .find(|legend| legend.channel == Channel::Tilt)
        .unwrap();
    assert!(legend.entries.len() >= 3);
    let mut previous = -1.0;
    for entry in &legend.entries {
        let Some(LegendGlyph::Tilt(degrees)) = entry.glyph else {
            panic!("{entry:?}")
        };
        let wind: f64 = entry.label.parse().unwrap();
        assert!((degrees - (wind - 4.0) / 32.0 * 90.0).abs() < 1e-9);
        assert!(degrees > previous);
        previous = degrees;
    }
}

#[test]
fn a_mark_that_cannot_show_texture_or_tilt_says_so_in_a_note() {
    // tilt on bars, texture on points
    let mut bars = charts::orchard_soils();
    bars.layers[0].channels[2].channel = Channel::Tilt;
    let scene = layout(&bars);
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.contains("bar marks do not show the `tilt` channel")),
        "{:?}",
        scene.notes
    );
    assert!(drawn_marks(&scene)
        .iter()
        .all(|primitive| primitive.paint.hatch.is_none()));
    assert!(!scene
        .legends
        .iter()
        .any(|legend| legend.channel == Channel::Tilt));
    let mut points = charts::lighthouse_wind();
    points.layers[0].channels[2].channel = Channel::Texture;
    let scene = layout(&points);
    assert!(
        scene
            .notes
            .iter()
            .any(|note| note.contains("point marks do not show the `texture` channel")),
        "{:?}",
        scene.notes
    );
    assert_eq!(drawn_marks(&scene).len(), 24);
}
