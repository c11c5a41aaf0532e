//! Evaluated charts built by hand (invented scenarios and numbers), for the layout and writer
//! tests: what the evaluation hands the layout, without a spec or data file.
#![allow(dead_code)]

use std::sync::Arc;

use markwell::eval::model::{
    ChannelInfo, Datum, DensityGrid, Domain, DrawnMark, EvaluatedChart, EvaluatedLayer,
    PanelCounts, PanelInfo,
};
use markwell::spec::model::{Arrange, AttributeKind, Channel, Mark, Spacing};

pub fn channel(channel: Channel, title: &str, kind: AttributeKind, domain: Domain) -> ChannelInfo {
    ChannelInfo {
        channel,
        column: Some(title.to_string()),
        summary: None,
        bins: None,
        kind,
        title: title.to_string(),
        domain,
        spacing: None,
        extent: None,
        from_zero: false,
        flip: false,
        palette: None,
    }
}

pub fn categories(names: &[&str]) -> Domain {
    Domain::Categories(names.iter().map(|name| name.to_string()).collect())
}

pub fn text(value: &str) -> Datum {
    Datum::Text(Arc::from(value))
}

pub fn mark(values: Vec<Datum>) -> DrawnMark {
    DrawnMark {
        panel: 0,
        values,
        stack_start: None,
        series: 0,
        rows: 1,
    }
}

pub fn layer(mark: Mark, channels: Vec<ChannelInfo>, marks: Vec<DrawnMark>) -> EvaluatedLayer {
    EvaluatedLayer {
        index: 0,
        mark,
        arrange: None,
        channels,
        rows_read: marks.len() as u64,
        marks,
        density: None,
        rows_left_out: 0,
        approximations: Vec::new(),
    }
}

pub fn chart(title: &str, layers: Vec<EvaluatedLayer>) -> EvaluatedChart {
    EvaluatedChart {
        title: Some(title.to_string()),
        description: None,
        width: 640.0,
        height: 400.0,
        background: "#fbfaf7".to_string(),
        panels: vec![PanelInfo { label: None }],
        layers,
        is_sample: false,
        notes: Vec::new(),
        timed_out: Vec::new(),
        time_budget: markwell::budget::TimeBudget::DEFAULT_EVALUATION,
    }
}

fn numeric(values: &[f64]) -> Domain {
    Domain::Numeric {
        min: values
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min)
            .min(0.0),
        max: values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    }
}

/// Loaves sold per bakery (sums).
pub fn bakery_bars() -> EvaluatedChart {
    let names = ["Oak Street", "Harbour", "Mill Lane", "Station", "Old Town"];
    let values = [412.0, 268.0, 530.5, 97.0, 341.0];
    let mut y = channel(
        Channel::Y,
        "sum of loaves",
        AttributeKind::Quantitative,
        numeric(&values),
    );
    y.from_zero = true;
    let marks = names
        .iter()
        .zip(values)
        .map(|(name, value)| mark(vec![text(name), Datum::Number(value)]))
        .collect();
    chart(
        "Loaves sold per bakery",
        vec![layer(
            Mark::Bar,
            vec![
                channel(
                    Channel::X,
                    "bakery",
                    AttributeKind::Categorical,
                    categories(&names),
                ),
                y,
            ],
            marks,
        )],
    )
}

/// Horizontal bars with long category names.
pub fn ferry_routes_horizontal() -> EvaluatedChart {
    let names = [
        "North Quay to Lighthouse Point",
        "Harbour Steps to the Island",
        "Eastern Pier",
        "Seal Rock via the Narrows and the Old Boathouse landing stage",
    ];
    let values = [1520.0, 980.0, 2210.0, 440.0];
    let mut x = channel(
        Channel::X,
        "passengers",
        AttributeKind::Quantitative,
        numeric(&values),
    );
    x.from_zero = true;
    let marks = names
        .iter()
        .zip(values)
        .map(|(name, value)| mark(vec![Datum::Number(value), text(name)]))
        .collect();
    chart(
        "Passengers per ferry route",
        vec![layer(
            Mark::Bar,
            vec![
                x,
                channel(
                    Channel::Y,
                    "route",
                    AttributeKind::Categorical,
                    categories(&names),
                ),
            ],
            marks,
        )],
    )
}

/// Apples picked per orchard and variety, stacked (or side by side).
pub fn orchard_stack(arrange: Arrange) -> EvaluatedChart {
    let orchards = ["Hill", "River", "Copse"];
    let varieties = ["Russet", "Pippin", "Bramley"];
    let picked = [
        [120.0, 80.0, 45.0],
        [60.0, 150.0, 30.0],
        [90.0, 40.0, 110.0],
    ];
    let mut marks = Vec::new();
    let mut max: f64 = 0.0;
    for (orchard, row) in orchards.iter().zip(picked) {
        let mut start = 0.0;
        for (series, (variety, value)) in varieties.iter().zip(row).enumerate() {
            let (end, stack_start) = if arrange == Arrange::Stack {
                (start + value, Some(start))
            } else {
                (value, None)
            };
            marks.push(DrawnMark {
                panel: 0,
                values: vec![text(orchard), Datum::Number(end), text(variety)],
                stack_start,
                series: series as u32,
                rows: 4,
            });
            max = max.max(end);
            start += value;
        }
    }
    let mut y = channel(
        Channel::Y,
        "sum of crates",
        AttributeKind::Quantitative,
        Domain::Numeric { min: 0.0, max },
    );
    y.from_zero = true;
    let mut layer = layer(
        Mark::Bar,
        vec![
            channel(
                Channel::X,
                "orchard",
                AttributeKind::Categorical,
                categories(&orchards),
            ),
            y,
            channel(
                Channel::Hue,
                "variety",
                AttributeKind::Categorical,
                categories(&varieties),
            ),
        ],
        marks,
    );
    layer.arrange = Some(arrange);
    chart("Crates picked per orchard", vec![layer])
}

/// Daily ferry crossings over a month, two boats (time on x).
pub fn ferry_lines(mark_kind: Mark) -> EvaluatedChart {
    let start = 1_709_251_200.0; // 2024-03-01T00:00:00Z
    let boats = ["Puffin", "Tern"];
    let mut marks = Vec::new();
    let mut max: f64 = 0.0;
    for (series, boat) in boats.iter().enumerate() {
        for day in 0..31 {
            let value =
                20.0 + 8.0 * ((day as f64) / 4.0 + series as f64).sin() + series as f64 * 5.0;
            max = max.max(value);
            marks.push(DrawnMark {
                panel: 0,
                values: vec![
                    Datum::Time(start + 86_400.0 * day as f64),
                    Datum::Number(value),
                    text(boat),
                ],
                stack_start: None,
                series: series as u32,
                rows: 1,
            });
        }
    }
    let mut y = channel(
        Channel::Y,
        "crossings",
        AttributeKind::Quantitative,
        Domain::Numeric { min: 0.0, max },
    );
    y.from_zero = mark_kind == Mark::Area;
    chart(
        "Crossings per day",
        vec![layer(
            mark_kind,
            vec![
                channel(
                    Channel::X,
                    "day",
                    AttributeKind::Time,
                    Domain::Time {
                        min: start,
                        max: start + 86_400.0 * 30.0,
                    },
                ),
                y,
                channel(
                    Channel::Hue,
                    "boat",
                    AttributeKind::Categorical,
                    categories(&boats),
                ),
            ],
            marks,
        )],
    )
}

/// Hive weight against flowering days, size by colonies, shape by apiary (a scatter).
pub fn apiary_scatter() -> EvaluatedChart {
    let apiaries = ["Meadow", "Heath", "Orchard"];
    let mut marks = Vec::new();
    for index in 0..60 {
        let t = index as f64;
        let days = 10.0 + (t * 7.3) % 50.0;
        let weight = 12.0 + days * 0.6 + (t * 3.1).sin() * 6.0;
        let colonies = 1.0 + (t * 1.7) % 9.0;
        marks.push(mark(vec![
            Datum::Number(days),
            Datum::Number(weight),
            Datum::Number(colonies),
            text(apiaries[index % 3]),
        ]));
    }
    chart(
        "Hive weight and flowering days",
        vec![layer(
            Mark::Point,
            vec![
                channel(
                    Channel::X,
                    "flowering days",
                    AttributeKind::Quantitative,
                    Domain::Numeric {
                        min: 10.0,
                        max: 60.0,
                    },
                ),
                channel(
                    Channel::Y,
                    "hive weight (kg)",
                    AttributeKind::Quantitative,
                    Domain::Numeric {
                        min: 10.0,
                        max: 55.0,
                    },
                ),
                channel(
                    Channel::Area,
                    "colonies",
                    AttributeKind::Quantitative,
                    Domain::Numeric { min: 1.0, max: 9.9 },
                ),
                channel(
                    Channel::Shape,
                    "apiary",
                    AttributeKind::Categorical,
                    categories(&apiaries),
                ),
            ],
            marks,
        )],
    )
}

/// Share of a bakery's sales by bread (a pie).
pub fn bread_pie() -> EvaluatedChart {
    let breads = ["Rye", "Sourdough", "Spelt", "White"];
    let values = [30.0, 45.0, 10.0, 15.0];
    let marks = breads
        .iter()
        .zip(values)
        .map(|(bread, value)| mark(vec![Datum::Number(value), text(bread)]))
        .collect();
    chart(
        "Bread sold by kind",
        vec![layer(
            Mark::Wedge,
            vec![
                channel(
                    Channel::Angle,
                    "sum of loaves",
                    AttributeKind::Quantitative,
                    numeric(&values),
                ),
                channel(
                    Channel::Hue,
                    "bread",
                    AttributeKind::Categorical,
                    categories(&breads),
                ),
            ],
            marks,
        )],
    )
}

/// Mean queue minutes by weekday and hour (a heat map of cells).
pub fn queue_cells() -> EvaluatedChart {
    let days = ["Mon", "Tue", "Wed", "Thu", "Fri"];
    let hours = ["8", "9", "10", "11", "12", "13"];
    let mut marks = Vec::new();
    for (d, day) in days.iter().enumerate() {
        for (h, hour) in hours.iter().enumerate() {
            let minutes = 2.0 + ((d * 3 + h * 5) % 11) as f64;
            marks.push(mark(vec![text(hour), text(day), Datum::Number(minutes)]));
        }
    }
    chart(
        "Queue minutes by hour",
        vec![layer(
            Mark::Cell,
            vec![
                channel(
                    Channel::X,
                    "hour",
                    AttributeKind::Ordered,
                    categories(&hours),
                ),
                channel(
                    Channel::Y,
                    "weekday",
                    AttributeKind::Ordered,
                    categories(&days),
                ),
                channel(
                    Channel::Luminance,
                    "mean minutes",
                    AttributeKind::Quantitative,
                    Domain::Numeric {
                        min: 2.0,
                        max: 12.0,
                    },
                ),
            ],
            marks,
        )],
    )
}

/// Bars of one measure in five panels (harbours), to check the panel grid.
pub fn harbour_panels() -> EvaluatedChart {
    let months = ["Jan", "Feb", "Mar", "Apr"];
    let harbours = ["Brill", "Crail", "Dunmore", "Elie", "Fenwick"];
    let mut marks = Vec::new();
    for (panel, _) in harbours.iter().enumerate() {
        for (m, month) in months.iter().enumerate() {
            let value = 10.0 + ((panel * 7 + m * 3) % 13) as f64;
            let mut drawn = mark(vec![text(month), Datum::Number(value)]);
            drawn.panel = panel as u32;
            marks.push(drawn);
        }
    }
    let mut y = channel(
        Channel::Y,
        "sum of landings (t)",
        AttributeKind::Quantitative,
        Domain::Numeric {
            min: 0.0,
            max: 22.0,
        },
    );
    y.from_zero = true;
    let mut chart = chart(
        "Landings per harbour",
        vec![layer(
            Mark::Bar,
            vec![
                channel(
                    Channel::X,
                    "month",
                    AttributeKind::Ordered,
                    categories(&months),
                ),
                y,
            ],
            marks,
        )],
    );
    chart.panels = harbours
        .iter()
        .map(|name| PanelInfo {
            label: Some(name.to_string()),
        })
        .collect();
    chart
}

/// A logarithmic y axis over river flows.
pub fn river_log() -> EvaluatedChart {
    let gauges = ["Spring", "Weir", "Bridge", "Estuary"];
    let flows = [0.8, 14.0, 230.0, 4100.0];
    let marks = gauges
        .iter()
        .zip(flows)
        .map(|(gauge, flow)| mark(vec![text(gauge), Datum::Number(flow)]))
        .collect();
    let mut y = channel(
        Channel::Y,
        "flow (m³/s)",
        AttributeKind::Quantitative,
        Domain::Numeric {
            min: 0.8,
            max: 4100.0,
        },
    );
    y.spacing = Some(Spacing::Logarithmic);
    chart(
        "Flow along the river",
        vec![layer(
            Mark::Point,
            vec![
                channel(
                    Channel::X,
                    "gauge",
                    AttributeKind::Ordered,
                    categories(&gauges),
                ),
                y,
            ],
            marks,
        )],
    )
}

/// A scatter drawn as a density grid (what the evaluation hands over past its mark cap).
pub fn density_scatter(cells_across: u32, cells_down: u32, points: u64) -> EvaluatedChart {
    let mut counts = vec![0u32; (cells_across * cells_down) as usize];
    // a deterministic cloud: a diagonal band with noise from a linear congruential generator
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    for _ in 0..points {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1);
        let u = (state >> 11) as f64 / (1u64 << 53) as f64;
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1);
        let v = (state >> 11) as f64 / (1u64 << 53) as f64;
        let x = u;
        let y = (u * 0.7 + 0.15 + (v - 0.5) * 0.3).clamp(0.0, 0.999_999);
        let column = ((x * cells_across as f64) as u32).min(cells_across - 1);
        let row = (((1.0 - y) * cells_down as f64) as u32).min(cells_down - 1);
        counts[(row * cells_across + column) as usize] += 1;
    }
    let mut layer = layer(
        Mark::Point,
        vec![
            channel(
                Channel::X,
                "wind speed (m/s)",
                AttributeKind::Quantitative,
                Domain::Numeric {
                    min: 0.0,
                    max: 30.0,
                },
            ),
            channel(
                Channel::Y,
                "wave height (m)",
                AttributeKind::Quantitative,
                Domain::Numeric { min: 0.0, max: 9.0 },
            ),
        ],
        Vec::new(),
    );
    layer.rows_read = points;
    layer.density = Some(DensityGrid {
        width: cells_across,
        height: cells_down,
        panels: vec![PanelCounts { panel: 0, counts }],
        x_domain: (0.0, 30.0),
        y_domain: (0.0, 9.0),
        x_spacing: Spacing::Even,
        y_spacing: Spacing::Even,
        unplaced: 0,
    });
    chart("Wave height against wind speed", vec![layer])
}

/// A density scatter in two panels whose rows lie in different places: the calm harbour's
/// points all in the lower left quarter, the exposed one's in the upper right, and the exposed
/// one with twice as many rows per cell.
pub fn density_two_panels() -> EvaluatedChart {
    let (across, down) = (40u32, 20u32);
    let mut calm = vec![0u32; (across * down) as usize];
    let mut exposed = vec![0u32; (across * down) as usize];
    for row in 0..down / 2 {
        for column in 0..across / 2 {
            // row 0 is the top (largest y): the calm panel fills the bottom half's left
            calm[((down / 2 + row) * across + column) as usize] = 3;
            exposed[(row * across + across / 2 + column) as usize] = 6;
        }
    }
    let mut chart = density_scatter(across, down, 0);
    chart.title = Some("Wave height against wind speed, two harbours".to_string());
    let layer = &mut chart.layers[0];
    layer.rows_read = u64::from(across / 2 * (down / 2)) * 9;
    if let Some(grid) = &mut layer.density {
        grid.panels = vec![
            PanelCounts {
                panel: 0,
                counts: calm,
            },
            PanelCounts {
                panel: 1,
                counts: exposed,
            },
        ];
    }
    chart.panels = ["calm harbour", "exposed harbour"]
        .iter()
        .map(|name| PanelInfo {
            label: Some(name.to_string()),
        })
        .collect();
    chart
}

/// Pears picked per orchard, each bar hatched by the orchard's soil (texture).
pub fn orchard_soils() -> EvaluatedChart {
    let orchards = [
        "Hollow Lane",
        "Bramley Hill",
        "Weir Field",
        "Long Acre",
        "Kiln Close",
    ];
    let soils = ["loam", "clay", "sand", "chalk"];
    let picked = [820.0, 640.0, 455.5, 910.0, 300.0];
    let soil_of = [0, 1, 2, 3, 1];
    let mut y = channel(
        Channel::Y,
        "pears picked (crates)",
        AttributeKind::Quantitative,
        numeric(&picked),
    );
    y.from_zero = true;
    let marks = orchards
        .iter()
        .zip(picked)
        .zip(soil_of)
        .map(|((orchard, value), soil)| {
            mark(vec![text(orchard), Datum::Number(value), text(soils[soil])])
        })
        .collect();
    chart(
        "Pears picked per orchard, by soil",
        vec![layer(
            Mark::Bar,
            vec![
                channel(
                    Channel::X,
                    "orchard",
                    AttributeKind::Categorical,
                    categories(&orchards),
                ),
                y,
                channel(
                    Channel::Texture,
                    "soil",
                    AttributeKind::Categorical,
                    categories(&soils),
                ),
            ],
            marks,
        )],
    )
}

/// Wave height by hour at a lighthouse, each point a stroke tilted by the wind speed; the
/// last reading has no wind speed.
pub fn lighthouse_wind() -> EvaluatedChart {
    let mut marks = Vec::new();
    for hour in 0..24 {
        let t = hour as f64;
        let wave = 0.6 + 0.08 * t + (t / 3.0).sin() * 0.4;
        let wind = if hour == 23 {
            Datum::Missing
        } else {
            Datum::Number(4.0 + (t * 1.7) % 32.0)
        };
        marks.push(mark(vec![Datum::Number(t), Datum::Number(wave), wind]));
    }
    chart(
        "Waves and wind at the point",
        vec![layer(
            Mark::Point,
            vec![
                channel(
                    Channel::X,
                    "hour",
                    AttributeKind::Quantitative,
                    Domain::Numeric {
                        min: 0.0,
                        max: 23.0,
                    },
                ),
                channel(
                    Channel::Y,
                    "wave height (m)",
                    AttributeKind::Quantitative,
                    Domain::Numeric { min: 0.0, max: 3.0 },
                ),
                channel(
                    Channel::Tilt,
                    "wind (knots)",
                    AttributeKind::Quantitative,
                    Domain::Numeric {
                        min: 4.0,
                        max: 36.0,
                    },
                ),
            ],
            marks,
        )],
    )
}

/// Every hand-built chart, named.
pub fn all_charts() -> Vec<(&'static str, EvaluatedChart)> {
    vec![
        ("bakery-bars", bakery_bars()),
        ("ferry-routes-horizontal", ferry_routes_horizontal()),
        ("orchard-stack", orchard_stack(Arrange::Stack)),
        ("orchard-side-by-side", orchard_stack(Arrange::SideBySide)),
        ("ferry-lines", ferry_lines(Mark::Line)),
        ("ferry-areas", ferry_lines(Mark::Area)),
        ("apiary-scatter", apiary_scatter()),
        ("bread-pie", bread_pie()),
        ("queue-cells", queue_cells()),
        ("harbour-panels", harbour_panels()),
        ("river-log", river_log()),
        ("density-scatter", density_scatter(120, 80, 50_000)),
        ("density-two-panels", density_two_panels()),
        ("orchard-soils", orchard_soils()),
        ("lighthouse-wind", lighthouse_wind()),
    ]
}

/// A market-stall scatter with up to three legends: colour by stall (`stalls` categories),
/// shape by produce (`produce` categories), and size by crates (a continuous scale), each
/// legend present when its count is above zero, at a `width` x `height` frame.
pub fn market_legends(
    width: f64,
    height: f64,
    stalls: usize,
    produce: usize,
    with_size: bool,
) -> EvaluatedChart {
    let stall_names: Vec<String> = (0..stalls)
        .map(|i| {
            if i % 3 == 0 {
                format!("Quayside stall {}", i + 1)
            } else {
                format!("Stall {}", i + 1)
            }
        })
        .collect();
    let produce_names: Vec<String> = (0..produce)
        .map(|i| ["pears", "leeks", "damsons", "kale"][i % 4].to_string() + &format!(" {i}"))
        .collect();
    let mut channels = vec![
        channel(
            Channel::X,
            "morning footfall",
            AttributeKind::Quantitative,
            Domain::Numeric {
                min: 0.0,
                max: 400.0,
            },
        ),
        channel(
            Channel::Y,
            "takings",
            AttributeKind::Quantitative,
            Domain::Numeric {
                min: 0.0,
                max: 90.0,
            },
        ),
    ];
    if stalls > 0 {
        let refs: Vec<&str> = stall_names.iter().map(String::as_str).collect();
        channels.push(channel(
            Channel::Hue,
            "stall",
            AttributeKind::Categorical,
            categories(&refs),
        ));
    }
    if produce > 0 {
        let refs: Vec<&str> = produce_names.iter().map(String::as_str).collect();
        channels.push(channel(
            Channel::Shape,
            "produce",
            AttributeKind::Categorical,
            categories(&refs),
        ));
    }
    if with_size {
        channels.push(channel(
            Channel::Area,
            "crates brought",
            AttributeKind::Quantitative,
            Domain::Numeric {
                min: 1.0,
                max: 48.0,
            },
        ));
    }
    let count = stalls.max(produce).max(4);
    let marks = (0..count)
        .map(|i| {
            let t = i as f64;
            let mut values = vec![
                Datum::Number((t * 37.0) % 400.0),
                Datum::Number(10.0 + (t * 11.0) % 80.0),
            ];
            if stalls > 0 {
                values.push(text(&stall_names[i % stalls]));
            }
            if produce > 0 {
                values.push(text(&produce_names[i % produce]));
            }
            if with_size {
                values.push(Datum::Number(1.0 + (t * 5.0) % 47.0));
            }
            mark(values)
        })
        .collect();
    let mut chart = chart(
        "Takings by footfall at the Saturday market",
        vec![layer(Mark::Point, channels, marks)],
    );
    chart.width = width;
    chart.height = height;
    chart
}
