//! Budgets for the passes over data that could run long: how much time a pass may take
//! ([`TimeBudget`], checked through a [`Deadline`]) and how much memory one profile may hold
//! ([`MemoryBudget`]). Plain values with no IO, so that profiling (`data`) and evaluation
//! (`eval`) share them and the front ends fill them from `markwell.toml` or the command line.

use std::time::{Duration, Instant};

/// How long a pass may run; `None` is no limit.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TimeBudget {
    pub limit: Option<Duration>,
}

impl TimeBudget {
    /// The default for one profile: long enough for a file of several GiB on a slow disk (the
    /// full scan reads about 290 MB/s on two cores, see DEVELOPERS.md), short enough that a
    /// pathological file does not hold a run for ever. Our own choice, no source.
    pub const DEFAULT_PROFILE: TimeBudget = TimeBudget {
        limit: Some(Duration::from_secs(60)),
    };
    /// The default for evaluating one chart over all of its rows: the same minute as a profile,
    /// since the evaluation reads the same files at a similar speed (DEVELOPERS.md gives both).
    /// Our own choice, no source.
    pub const DEFAULT_EVALUATION: TimeBudget = TimeBudget {
        limit: Some(Duration::from_secs(60)),
    };
    pub const UNLIMITED: TimeBudget = TimeBudget { limit: None };

    pub fn seconds(seconds: f64) -> TimeBudget {
        TimeBudget {
            limit: Some(Duration::from_secs_f64(seconds.max(0.0))),
        }
    }

    /// Start counting now.
    pub fn start(self) -> Deadline {
        Deadline {
            started: Instant::now(),
            limit: self.limit,
        }
    }

    /// `60 s`, `0.5 s`: the limit as people read it in messages.
    pub fn describe(self) -> String {
        match self.limit {
            None => "no limit".to_string(),
            Some(limit) => {
                let seconds = limit.as_secs_f64();
                if seconds.fract() == 0.0 {
                    format!("{seconds:.0} s")
                } else {
                    format!("{seconds} s")
                }
            }
        }
    }
}

impl Default for TimeBudget {
    fn default() -> TimeBudget {
        TimeBudget::DEFAULT_PROFILE
    }
}

/// A started [`TimeBudget`]: cheap to ask (one clock read), so a loop asks every few thousand
/// steps.
#[derive(Clone, Copy, Debug)]
pub struct Deadline {
    started: Instant,
    limit: Option<Duration>,
}

impl Deadline {
    /// A deadline that never passes.
    pub fn never() -> Deadline {
        TimeBudget::UNLIMITED.start()
    }

    pub fn passed(&self) -> bool {
        self.limit
            .is_some_and(|limit| self.started.elapsed() >= limit)
    }

    pub fn elapsed(&self) -> Duration {
        self.started.elapsed()
    }

    pub fn budget(&self) -> TimeBudget {
        TimeBudget { limit: self.limit }
    }
}

impl Default for Deadline {
    fn default() -> Deadline {
        Deadline::never()
    }
}

/// Bytes one pass may hold at once.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct MemoryBudget {
    pub bytes: u64,
}

impl MemoryBudget {
    /// The default for one profile: 256 MiB. Our own choice, no source: a tenth of a small
    /// laptop's memory, and room for two profiles at once beside an editor.
    pub const DEFAULT_PROFILE: MemoryBudget = MemoryBudget { bytes: 256 << 20 };
    /// The smallest budget accepted (smaller settings are raised to it): below this, ordinary
    /// files would be refused for their record length.
    pub const MINIMUM: MemoryBudget = MemoryBudget { bytes: 16 << 20 };

    pub fn mebibytes(mebibytes: u64) -> MemoryBudget {
        MemoryBudget {
            bytes: mebibytes
                .saturating_mul(1 << 20)
                .max(MemoryBudget::MINIMUM.bytes),
        }
    }

    pub fn mebibytes_shown(self) -> u64 {
        self.bytes >> 20
    }
}

impl Default for MemoryBudget {
    fn default() -> MemoryBudget {
        MemoryBudget::DEFAULT_PROFILE
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_zero_budget_has_passed_at_once_and_none_never_passes() {
        assert!(TimeBudget::seconds(0.0).start().passed());
        assert!(!Deadline::never().passed());
        assert_eq!(TimeBudget::seconds(60.0).describe(), "60 s");
        assert_eq!(TimeBudget::seconds(0.5).describe(), "0.5 s");
    }

    #[test]
    fn memory_budgets_are_never_below_the_minimum() {
        assert_eq!(MemoryBudget::mebibytes(1), MemoryBudget::MINIMUM);
        assert_eq!(MemoryBudget::mebibytes(512).bytes, 512 << 20);
    }
}
