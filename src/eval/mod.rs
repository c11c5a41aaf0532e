//! Layer 3b: evaluation. A spec plus its rows become the marks that would be drawn, per layer and
//! per panel (`model`). Pure: the rows come from the data layer through a callback; no IO, no LSP.

pub mod model;

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

/// Evaluate every layer of `spec` over its rows.
pub fn evaluate_chart(
    spec: &ChartSpec,
    open_rows: &mut OpenRows<'_>,
    options: &EvalOptions,
) -> EvaluatedChart {
    // The grouping, summaries and arrangements are being built; until then nothing is drawn
    // and the output says so.
    let _ = (open_rows, options);
    EvaluatedChart {
        title: spec.title.as_ref().map(|title| title.value.clone()),
        description: spec.description.as_ref().map(|d| d.value.clone()),
        width: spec.frame.width_or_default(),
        height: spec.frame.height_or_default(),
        background: spec.frame.background_or_default().to_string(),
        panels: vec![PanelInfo { label: None }],
        layers: Vec::new(),
        is_sample: false,
        notes: vec![EvalNote {
            layer: None,
            message: "evaluation is not built yet".to_string(),
        }],
    }
}
