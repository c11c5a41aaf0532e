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

use std::sync::Arc;

use crate::budget::TimeBudget;
use crate::data::{DataError, DataErrorKind};
use crate::spec::model::{ChartSpec, Source};

/// Limits of one evaluation.
#[derive(Clone, Debug)]
pub struct EvalOptions {
    /// Values a group's exact `median` may hold, in bytes, before it moves to the quantile sketch.
    pub exact_quantile_budget_bytes: usize,
    /// Marks kept for layers that draw one mark per row (points, text); past it the layer is
    /// drawn as a `DensityGrid`.
    pub max_kept_marks: usize,
    /// How long the whole chart's evaluation may take (`evaluate-seconds` under `[data]`).
    /// Past it, the layer being read and every later one are left out and named in
    /// [`EvaluatedChart::timed_out`].
    pub time: TimeBudget,
}

impl Default for EvalOptions {
    fn default() -> EvalOptions {
        EvalOptions {
            exact_quantile_budget_bytes: 64 << 20,
            max_kept_marks: 100_000,
            time: TimeBudget::DEFAULT_EVALUATION,
        }
    }
}

impl EvalOptions {
    /// The defaults with the time budget the `[data]` settings give.
    pub fn with_time(time: TimeBudget) -> EvalOptions {
        EvalOptions {
            time,
            ..EvalOptions::default()
        }
    }
}

/// Rows read between two looks at the clock: a look is one clock read, so this costs nothing
/// measurable, and at the scan's speed (hundreds of MB/s) it is well under a millisecond of
/// reading. markwell's choice, no source.
pub const ROWS_BETWEEN_CLOCK_CHECKS: u64 = 4_096;

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
    let deadline = options.time.start();
    // every source is read within the chart's one deadline
    let mut timed_open = |source: &Source| -> Result<Box<dyn RowSource + Send + '_>, DataError> {
        let inner = open_rows(source)?;
        let stop: StopReason<'_> = Arc::new(move || {
            deadline
                .passed()
                .then(|| timed_out_error(deadline.budget()))
        });
        Ok(Box::new(StoppableRows::new(
            inner,
            ROWS_BETWEEN_CLOCK_CHECKS,
            stop,
        )))
    };
    let mut layers = Vec::new();
    for spec_layer in &spec.layers {
        if let Some(evaluated) = layer::evaluate_layer(&mut state, spec_layer, &mut timed_open) {
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
                if let Some(grid) = &mut evaluated.density {
                    for counts in &mut grid.panels {
                        counts.panel = new_id.get(counts.panel as usize).copied().unwrap_or(0);
                    }
                    grid.panels.sort_by_key(|counts| counts.panel);
                }
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
        timed_out: state.timed_out,
        time_budget: options.time,
    }
}

/// The error a scan gives when the evaluation's time budget ran out.
pub fn timed_out_error(budget: TimeBudget) -> DataError {
    DataError {
        kind: DataErrorKind::TimedOut,
        message: format!(
            "evaluating the chart took longer than its time budget of {}",
            budget.describe()
        ),
        path: None,
        line: None,
        byte_offset: None,
    }
}

/// Why a scan must stop now, asked between rows (`None`: go on).
pub type StopReason<'a> = Arc<dyn Fn() -> Option<DataError> + Send + Sync + 'a>;

/// Rows that stop being delivered once `stop` gives a reason, which the scan then returns as
/// its error. `stop` is asked before the first row and then every `every` rows, so a stopped
/// scan reads at most `every` rows more and a look costs nothing per row. The evaluation's time
/// budget and the editor's superseded texts both stop scans through it.
pub struct StoppableRows<'a> {
    inner: Box<dyn RowSource + Send + 'a>,
    every: u64,
    stop: StopReason<'a>,
}

impl<'a> StoppableRows<'a> {
    pub fn new(
        inner: Box<dyn RowSource + Send + 'a>,
        every: u64,
        stop: StopReason<'a>,
    ) -> StoppableRows<'a> {
        StoppableRows {
            inner,
            every: every.max(1),
            stop,
        }
    }
}

impl RowSource for StoppableRows<'_> {
    fn column_names(&self) -> Vec<String> {
        self.inner.column_names()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let (stop, every) = (self.stop.clone(), self.every);
        let mut read: u64 = 0;
        let mut reason: Option<DataError> = None;
        let outcome = self.inner.scan(wanted, &mut |cells| {
            if read % every == 0 {
                if let Some(why) = stop() {
                    reason = Some(why);
                    return false;
                }
            }
            read += 1;
            row(cells)
        });
        match reason {
            Some(why) => Err(why),
            None => outcome,
        }
    }

    fn is_sample(&self) -> bool {
        self.inner.is_sample()
    }
}

#[cfg(test)]
mod tests;
