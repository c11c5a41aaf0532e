//! Evaluating the open spec for the analysis, like its data profiles: a first evaluation over the
//! sampled head of each file (inside the analysis task, so a keystroke never waits for a whole
//! file), then the exact one in the background, which stops as soon as its text is superseded.
//! No LSP types here; `server` schedules these and stores the results.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::Arc;

use crate::data::{DataError, DataErrorKind, ResolveOptions};
use crate::eval::{evaluate_chart, EvalOptions, EvaluatedChart, RowSource, StoppableRows};
use crate::spec::model::{ChartSpec, Source};

/// Rows read between two looks at whether the text being evaluated is still the current one.
/// A few milliseconds of reading: a superseded exact evaluation stops quickly without taking a
/// lock per row. markwell's choice, no source.
pub const ROWS_BETWEEN_CHECKS: u64 = 16_384;

/// Whether the evaluation's text is still the document's current one.
pub type StillCurrent = Arc<dyn Fn() -> bool + Send + Sync>;

/// Evaluate `spec` over the sampled head of its data (the prefix the sampled profiles read).
/// `None` when the evaluation panicked (logged by the caller's hook; the rules then read the
/// profiles alone).
pub fn evaluate_sampled(spec: &ChartSpec, resolve: &ResolveOptions) -> Option<EvaluatedChart> {
    evaluate_with(spec, resolve, true, None)
}

/// Evaluate `spec` over all of its rows, stopping (the result is then of no use and dropped)
/// once `still_current` says the text was superseded.
pub fn evaluate_exactly(
    spec: &ChartSpec,
    resolve: &ResolveOptions,
    still_current: StillCurrent,
) -> Option<EvaluatedChart> {
    if !still_current() {
        return None;
    }
    let evaluation = evaluate_with(spec, resolve, false, Some(still_current.clone()))?;
    still_current().then_some(evaluation)
}

fn evaluate_with(
    spec: &ChartSpec,
    resolve: &ResolveOptions,
    sampled: bool,
    still_current: Option<StillCurrent>,
) -> Option<EvaluatedChart> {
    let mut open = |source: &Source| -> Result<Box<dyn RowSource + Send>, DataError> {
        let rows = crate::data::rows::open_rows(source, resolve, sampled)?;
        Ok(match &still_current {
            Some(still_current) => Box::new(stop_when_superseded(rows, still_current.clone())),
            None => rows,
        })
    };
    catch_unwind(AssertUnwindSafe(|| {
        evaluate_chart(
            spec,
            &mut open,
            &EvalOptions::with_time(resolve.limits.evaluation),
        )
    }))
    .ok()
}

/// Rows that stop being delivered once the text they are evaluated for is superseded (looked at
/// every [`ROWS_BETWEEN_CHECKS`] rows).
fn stop_when_superseded<'a>(
    rows: Box<dyn RowSource + Send + 'a>,
    still_current: StillCurrent,
) -> StoppableRows<'a> {
    StoppableRows::new(
        rows,
        ROWS_BETWEEN_CHECKS,
        Arc::new(move || {
            (!still_current()).then(|| DataError {
                kind: DataErrorKind::Cancelled,
                message: "the text changed while its rows were read".to_string(),
                path: None,
                line: None,
                byte_offset: None,
            })
        }),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

    /// Rows counted as they are read, endless unless the reader stops.
    struct CountedRows {
        read: Arc<AtomicU64>,
        limit: u64,
    }

    impl RowSource for CountedRows {
        fn column_names(&self) -> Vec<String> {
            vec!["loaves".to_string()]
        }

        fn scan(
            &mut self,
            _wanted: &[usize],
            row: &mut dyn FnMut(&[Option<&str>]) -> bool,
        ) -> Result<(), DataError> {
            for _ in 0..self.limit {
                self.read.fetch_add(1, Ordering::SeqCst);
                if !row(&[Some("12")]) {
                    break;
                }
            }
            Ok(())
        }
    }

    #[test]
    fn a_superseded_scan_stops_within_one_check_and_says_why() {
        let read = Arc::new(AtomicU64::new(0));
        let current = Arc::new(AtomicBool::new(true));
        let flag = current.clone();
        let mut rows = stop_when_superseded(
            Box::new(CountedRows {
                read: read.clone(),
                limit: 10 * ROWS_BETWEEN_CHECKS,
            }),
            Arc::new(move || flag.load(Ordering::SeqCst)),
        );
        let mut delivered = 0u64;
        let outcome = rows.scan(&[0], &mut |_| {
            delivered += 1;
            if delivered == 100 {
                current.store(false, Ordering::SeqCst);
            }
            true
        });
        assert_eq!(
            outcome.map_err(|error| error.kind),
            Err(DataErrorKind::Cancelled)
        );
        // the text changed at row 100; the next look, after row 16,384 (before the 16,385th is
        // delivered), stops the scan
        assert_eq!(read.load(Ordering::SeqCst), ROWS_BETWEEN_CHECKS + 1);
        assert_eq!(delivered, ROWS_BETWEEN_CHECKS);
    }

    #[test]
    fn a_current_scan_reads_everything() {
        let read = Arc::new(AtomicU64::new(0));
        let mut rows = stop_when_superseded(
            Box::new(CountedRows {
                read: read.clone(),
                limit: 3 * ROWS_BETWEEN_CHECKS + 5,
            }),
            Arc::new(|| true),
        );
        assert!(rows.scan(&[0], &mut |_| true).is_ok());
        assert_eq!(read.load(Ordering::SeqCst), 3 * ROWS_BETWEEN_CHECKS + 5);
    }
}
