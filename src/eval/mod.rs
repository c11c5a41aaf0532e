//! Layer 3b: evaluation. A spec plus its rows become the marks that would be drawn, per layer and
//! per panel (`model`). Pure: the rows come from the data layer through a callback; no IO, no LSP.
//!
//! - [`layer`]: one layer: grouping by the discrete channels and the panels, the summaries, the
//!   order of categories, the arrangements (stack, side by side, overlap, share), the domains;
//! - [`summary`]: the running state of each summary in a group;
//! - [`quantile`]: the Greenwald–Khanna quantile sketch behind medians past the exact budget;
//! - [`bins`]: nice equal-width bins;
//! - [`density`]: the grid that layers of one mark per row become past the cap on kept marks.

pub mod bins;
pub mod density;
pub mod layer;
pub mod model;
pub mod quantile;
pub mod summary;

pub use model::*;

use crate::data::DataError;
use crate::spec::model::{ChartSpec, Source};

/// Limits of one evaluation.
#[derive(Clone, Debug)]
pub struct EvalOptions {
    /// Values a group's exact `median` may hold, in bytes, before it moves to the quantile sketch.
    pub exact_quantile_budget_bytes: usize,
    /// Marks kept for layers that draw one mark per row (points, text); past it the layer is
    /// drawn as a `DensityGrid`.
    pub max_kept_marks: usize,
}

impl Default for EvalOptions {
    fn default() -> EvalOptions {
        EvalOptions {
            exact_quantile_budget_bytes: 64 << 20,
            max_kept_marks: 100_000,
        }
    }
}

pub use crate::data::rows::RowSource;

/// Opens the rows a `source` names (the data layer implements it; tests use inline rows).
pub type OpenRows<'a> =
    dyn FnMut(&Source) -> Result<Box<dyn RowSource + Send + 'a>, DataError> + 'a;

/// Evaluate every layer of `spec` over its rows. Never fails: a layer that cannot be drawn is
/// left out and named in `notes`.
pub fn evaluate_chart(
    spec: &ChartSpec,
    open_rows: &mut OpenRows<'_>,
    options: &EvalOptions,
) -> EvaluatedChart {
    let mut state = layer::ChartState::new(spec, options);
    let mut layers = Vec::new();
    for spec_layer in &spec.layers {
        if let Some(evaluated) = layer::evaluate_layer(&mut state, spec_layer, open_rows) {
            layers.push(evaluated);
        }
    }
    let panels = match state.panel_column {
        None => vec![PanelInfo { label: None }],
        Some(column) => {
            // panels in the column's declared levels, else by number when every value is one,
            // else as first seen
            let levels = spec
                .column_declaration(column)
                .and_then(|declaration| declaration.levels.as_ref());
            let values = &state.panel_values;
            let mut order: Vec<usize> = (0..values.len()).collect();
            if let Some(levels) = levels {
                order.sort_by_key(|&id| {
                    levels
                        .value
                        .iter()
                        .position(|level| *level.value == *values[id])
                        .unwrap_or(usize::MAX)
                });
            } else {
                let numbers: Option<Vec<f64>> = values
                    .iter()
                    .map(|value| crate::data::infer::parse_number(value))
                    .collect();
                if let Some(numbers) = numbers {
                    order.sort_by(|&a, &b| numbers[a].total_cmp(&numbers[b]));
                }
            }
            let mut new_id = vec![0u32; values.len()];
            for (position, &id) in order.iter().enumerate() {
                new_id[id] = position as u32;
            }
            for evaluated in &mut layers {
                for mark in &mut evaluated.marks {
                    mark.panel = new_id.get(mark.panel as usize).copied().unwrap_or(0);
                }
                // stable: the order within a panel stays
                evaluated.marks.sort_by_key(|mark| mark.panel);
            }
            if order.is_empty() {
                vec![PanelInfo { label: None }]
            } else {
                order
                    .iter()
                    .map(|&id| PanelInfo {
                        label: Some(values[id].to_string()),
                    })
                    .collect()
            }
        }
    };
    EvaluatedChart {
        title: spec.title.as_ref().map(|title| title.value.clone()),
        description: spec.description.as_ref().map(|d| d.value.clone()),
        width: spec.frame.width_or_default(),
        height: spec.frame.height_or_default(),
        background: spec.frame.background_or_default().to_string(),
        panels,
        layers,
        is_sample: state.is_sample,
        notes: state.notes,
    }
}

#[cfg(test)]
mod tests;
