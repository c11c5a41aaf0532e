//! Editor settings (section `markwell` of `workspace/configuration`, or the `settings` of
//! `workspace/didChangeConfiguration`) merged over the configuration from files.
//!
//! Shape (our own):
//! ```json
//! { "rules": { "<rule-id>": "error" | "warning" | "info" | "hint" | "off" },
//!   "ranking": "<ranking id>" }
//! ```
//! Unknown keys and malformed values are ignored and reported back as notes, never fatal.

use serde_json::Value;

use crate::analysis::AnalysisConfig;
use crate::diagnostic::Severity;

/// Overrides read from the editor.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct EditorSettings {
    pub rule_severities: Vec<(String, Option<Severity>)>,
    pub ranking: Option<String>,
}

/// Read the `markwell` section. Returns the settings and notes on what was ignored.
pub fn parse_editor_settings(section: &Value) -> (EditorSettings, Vec<String>) {
    let mut settings = EditorSettings::default();
    let mut notes = Vec::new();
    let Some(object) = section.as_object() else {
        if !section.is_null() {
            notes.push("the `markwell` settings are not an object: ignored".to_string());
        }
        return (settings, notes);
    };
    for (key, value) in object {
        match key.as_str() {
            "rules" => match value.as_object() {
                Some(rules) => {
                    for (rule, level) in rules {
                        match level.as_str() {
                            Some("off") => settings.rule_severities.push((rule.clone(), None)),
                            Some(text) => match Severity::parse(text) {
                                Some(severity) => settings
                                    .rule_severities
                                    .push((rule.clone(), Some(severity))),
                                None => notes.push(format!(
                                    "`markwell.rules.{rule}`: `{text}` is not one of error, warning, info, hint, off"
                                )),
                            },
                            None => notes.push(format!(
                                "`markwell.rules.{rule}` should be a string: ignored"
                            )),
                        }
                    }
                }
                None => notes.push("`markwell.rules` should be an object: ignored".to_string()),
            },
            "ranking" => match value.as_str() {
                Some(ranking) => settings.ranking = Some(ranking.to_string()),
                None if value.is_null() => {}
                None => notes.push("`markwell.ranking` should be a string: ignored".to_string()),
            },
            other => notes.push(format!("unknown setting `markwell.{other}`: ignored")),
        }
    }
    (settings, notes)
}

/// The editor's settings over `base` (the configuration from `markwell.toml`).
pub fn merge_settings(base: &AnalysisConfig, editor: &EditorSettings) -> AnalysisConfig {
    let mut merged = base.clone();
    for (rule, severity) in &editor.rule_severities {
        merged.severity_overrides.insert(rule.clone(), *severity);
    }
    if let Some(ranking) = &editor.ranking {
        merged.ranking = Some(ranking.clone());
    }
    merged
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn rules_and_ranking_are_read_and_merged_over_the_file_configuration() {
        let (settings, notes) = parse_editor_settings(&json!({
            "rules": { "unknown-key": "off", "syntax-error": "warning", "x": "loud" },
            "ranking": "effectiveness",
            "colour": true
        }));
        assert_eq!(notes.len(), 2, "{notes:?}");
        let mut base = AnalysisConfig::default();
        base.severity_overrides
            .insert("syntax-error".to_string(), Some(Severity::Hint));
        base.severity_overrides
            .insert("other-rule".to_string(), None);
        let merged = merge_settings(&base, &settings);
        assert_eq!(merged.severity_for("unknown-key", Severity::Error), None);
        assert_eq!(
            merged.severity_for("syntax-error", Severity::Error),
            Some(Severity::Warning)
        );
        assert_eq!(merged.severity_for("other-rule", Severity::Error), None);
        assert_eq!(merged.ranking.as_deref(), Some("effectiveness"));
    }

    #[test]
    fn non_object_settings_are_ignored() {
        let (settings, notes) = parse_editor_settings(&json!([1, 2]));
        assert_eq!(settings, EditorSettings::default());
        assert_eq!(notes.len(), 1);
        let (settings, notes) = parse_editor_settings(&Value::Null);
        assert_eq!(settings, EditorSettings::default());
        assert!(notes.is_empty());
    }
}
