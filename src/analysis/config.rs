//! Analysis configuration: rule severities and the active channel ranking.

use std::collections::HashMap;

use crate::diagnostic::Severity;

/// What the user configured (from `markwell.toml`, the command line or the editor).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct AnalysisConfig {
    /// Rule id → severity; `None` turns the rule off.
    pub severity_overrides: HashMap<String, Option<Severity>>,
    /// Id of the active channel ranking (`None`: the default).
    pub ranking: Option<String>,
}

impl AnalysisConfig {
    /// The severity for `rule`: the override if any (`None` = off), else `default`.
    pub fn severity_for(&self, rule: &str, default: Severity) -> Option<Severity> {
        match self.severity_overrides.get(rule) {
            Some(setting) => *setting,
            None => Some(default),
        }
    }
}
