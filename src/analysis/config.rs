//! Analysis configuration: rule severities and the active channel ranking, and the reader of
//! `markwell.toml` (a pure function of its text; front ends find and read the file).
//!
//! ```toml
//! ranking = "mackinlay-1986"      # active channel ranking
//!
//! [rules]                         # rule id = "error" | "warning" | "info" | "hint" | "off"
//! truncated-baseline = "error"
//! too-many-hues = "off"
//!
//! [data]
//! allow-outside-workspace = false # may `source.path` leave the workspace folder?
//! profile-memory-mib = 256        # memory budget of one profile (at least 16)
//! profile-seconds = 60            # time budget of one profile
//! evaluate-seconds = 60           # time budget of evaluating one chart over all its rows
//! ```

use std::collections::HashMap;

use crate::diagnostic::Severity;

/// File name of the project configuration at the workspace root.
pub const CONFIG_FILE_NAME: &str = "markwell.toml";

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

    /// Overlay `other` on `self` (later settings win).
    pub fn merge(&mut self, other: &AnalysisConfig) {
        for (rule, severity) in &other.severity_overrides {
            self.severity_overrides.insert(rule.clone(), *severity);
        }
        if other.ranking.is_some() {
            self.ranking = other.ranking.clone();
        }
    }
}

/// Parse a severity setting: a severity name or `off`.
pub fn parse_severity_setting(text: &str) -> Result<Option<Severity>, String> {
    if text == "off" {
        return Ok(None);
    }
    Severity::parse(text).map(Some).ok_or_else(|| {
        let words = ["error", "warning", "info", "hint", "off"];
        // a shortened word (`warn`) or a near spelling (`eror`)
        let shortened = words
            .into_iter()
            .find(|word| text.len() >= 2 && word.starts_with(text));
        match shortened.or_else(|| crate::spec::suggest::closest_name(text, words)) {
            Some(suggestion) => format!(
                "`{text}` is not a severity; did you mean `{suggestion}`? (use `error`, `warning`, `info`, `hint` or `off`)"
            ),
            None => format!(
                "`{text}` is not a severity; use `error`, `warning`, `info`, `hint` or `off`"
            ),
        }
    })
}

/// Everything `markwell.toml` sets.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ProjectConfig {
    pub analysis: AnalysisConfig,
    pub allow_outside_workspace: bool,
    /// Memory and time budgets of one profile.
    pub profile_limits: crate::data::ProfileLimits,
}

/// The keys `[data]` accepts.
const DATA_KEYS: [&str; 4] = [
    "allow-outside-workspace",
    "profile-memory-mib",
    "profile-seconds",
    "evaluate-seconds",
];

/// A positive number from TOML (an integer or a float).
fn positive_number(value: &toml::Value) -> Option<f64> {
    let number = match value {
        toml::Value::Integer(integer) => *integer as f64,
        toml::Value::Float(float) => *float,
        _ => return None,
    };
    (number.is_finite() && number > 0.0).then_some(number)
}

/// Read `markwell.toml` text. Problems that still leave a usable configuration (a misspelt rule,
/// severity or key) come back as a list, each with a suggestion where one is close; the CLI
/// refuses to run with any of them, the language server logs them. A file that is not TOML at all
/// is an error.
pub fn parse_project_config(text: &str) -> Result<(ProjectConfig, Vec<String>), String> {
    let table: toml::Table = text
        .parse()
        .map_err(|error: toml::de::Error| format!("not valid TOML: {}", error.message()))?;
    let mut config = ProjectConfig::default();
    let mut warnings = Vec::new();
    for (key, value) in &table {
        match (key.as_str(), value) {
            ("ranking", toml::Value::String(id)) => {
                if crate::knowledge::rankings::ranking_by_id(id).is_some() {
                    config.analysis.ranking = Some(id.clone());
                } else {
                    warnings.push(format!(
                        "ranking `{id}` does not exist; choose one of {}",
                        crate::knowledge::rankings::ranking_ids().join(", ")
                    ));
                }
            }
            ("rules", toml::Value::Table(rules)) => {
                for (rule, setting) in rules {
                    if crate::analysis::rules::rule_by_id(rule).is_none() {
                        let ids = crate::analysis::rules::registry().iter().map(|r| r.id);
                        warnings.push(match crate::spec::suggest::closest_name(rule, ids) {
                            Some(suggestion) => {
                                format!("rules.{rule}: no such rule; did you mean `{suggestion}`?")
                            }
                            None => format!("rules.{rule}: no such rule (see `markwell rules`)"),
                        });
                        continue;
                    }
                    match setting.as_str().map(parse_severity_setting) {
                        Some(Ok(severity)) => {
                            config
                                .analysis
                                .severity_overrides
                                .insert(rule.clone(), severity);
                        }
                        Some(Err(message)) => warnings.push(format!("rules.{rule}: {message}")),
                        None => warnings.push(format!("rules.{rule}: expected a string")),
                    }
                }
            }
            ("data", toml::Value::Table(data)) => {
                for (data_key, data_value) in data {
                    match (data_key.as_str(), data_value) {
                        ("allow-outside-workspace", toml::Value::Boolean(allow)) => {
                            config.allow_outside_workspace = *allow
                        }
                        ("allow-outside-workspace", _) => warnings.push(
                            "data.allow-outside-workspace: expected `true` or `false`".to_string(),
                        ),
                        ("profile-memory-mib", value) => match value.as_integer() {
                            Some(mebibytes) if mebibytes >= 16 => {
                                config.profile_limits.memory =
                                    crate::budget::MemoryBudget::mebibytes(mebibytes as u64)
                            }
                            _ => warnings.push(
                                "data.profile-memory-mib: expected a whole number of MiB, at least 16"
                                    .to_string(),
                            ),
                        },
                        ("profile-seconds", value) => match positive_number(value) {
                            Some(seconds) => {
                                config.profile_limits.time =
                                    crate::budget::TimeBudget::seconds(seconds)
                            }
                            None => warnings.push(
                                "data.profile-seconds: expected a number of seconds above 0"
                                    .to_string(),
                            ),
                        },
                        ("evaluate-seconds", value) => match positive_number(value) {
                            Some(seconds) => {
                                config.profile_limits.evaluation =
                                    crate::budget::TimeBudget::seconds(seconds)
                            }
                            None => warnings.push(
                                "data.evaluate-seconds: expected a number of seconds above 0"
                                    .to_string(),
                            ),
                        },
                        _ => warnings.push(
                            match crate::spec::suggest::closest_name(data_key, DATA_KEYS) {
                                Some(suggestion) => format!(
                                    "data.{data_key}: no such setting; did you mean `{suggestion}`?"
                                ),
                                None => format!(
                                    "data.{data_key}: no such setting; `[data]` has `{}`",
                                    DATA_KEYS.join("`, `")
                                ),
                            },
                        ),
                    }
                }
            }
            ("ranking", _) => {
                warnings.push("`ranking`: expected a ranking id in quotes".to_string())
            }
            ("rules", _) | ("data", _) => {
                warnings.push(format!("`{key}`: expected a table `[{key}]`"))
            }
            _ => warnings.push(
                match crate::spec::suggest::closest_name(key, ["ranking", "rules", "data"]) {
                    Some(suggestion) => {
                        format!("`{key}`: no such setting; did you mean `{suggestion}`?")
                    }
                    None => format!(
                        "`{key}`: no such setting; the file has `ranking`, `[rules]` and `[data]`"
                    ),
                },
            ),
        }
    }
    Ok((config, warnings))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_ranking_rules_and_data_settings() {
        let text = "ranking = \"munzner-2014\"\n[rules]\ntoo-many-hues = \"off\"\ntruncated-baseline = \"error\"\n[data]\nallow-outside-workspace = true\n";
        let (config, warnings) = parse_project_config(text).unwrap_or_default();
        assert!(warnings.is_empty(), "{warnings:?}");
        assert_eq!(config.analysis.ranking.as_deref(), Some("munzner-2014"));
        assert_eq!(
            config
                .analysis
                .severity_for("too-many-hues", Severity::Warning),
            None
        );
        assert_eq!(
            config
                .analysis
                .severity_for("truncated-baseline", Severity::Warning),
            Some(Severity::Error)
        );
        assert!(config.allow_outside_workspace);
        let (budgets, warnings) = parse_project_config(
            "[data]\nprofile-memory-mib = 64\nprofile-seconds = 0.5\nevaluate-seconds = 2\n",
        )
        .unwrap_or_else(|error| panic!("{error}"));
        assert!(warnings.is_empty(), "{warnings:?}");
        assert_eq!(budgets.profile_limits.memory.bytes, 64 << 20);
        assert_eq!(
            budgets.profile_limits.time,
            crate::budget::TimeBudget::seconds(0.5)
        );
        assert_eq!(
            budgets.profile_limits.evaluation,
            crate::budget::TimeBudget::seconds(2.0)
        );
        let (_, warnings) = parse_project_config(
            "[data]\nprofile-memory-mib = 2\nprofile-seconds = -1\nevaluate-seconds = \"soon\"\n",
        )
        .unwrap_or_else(|error| panic!("{error}"));
        assert_eq!(warnings.len(), 3, "{warnings:?}");
        assert!(warnings
            .iter()
            .any(|w| w.starts_with("data.evaluate-seconds")));
    }

    #[test]
    fn bad_settings_are_warnings_and_bad_toml_an_error() {
        let (_, warnings) = parse_project_config(
            "[rules]\nsparse-column = \"loud\"\nunknown-key = 1\nsparse-colum = \"off\"\n",
        )
        .unwrap_or_default();
        assert_eq!(warnings.len(), 3, "{warnings:?}");
        assert!(warnings
            .iter()
            .any(|w| w.contains("did you mean `sparse-column`")));
        assert!(parse_project_config("[rules").is_err());
    }
}
