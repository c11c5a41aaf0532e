//! `unknown-column`: a value that names a column the data does not have. Documentation:
//! `unknown-column.md`.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::data::DataProfile;
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::Spanned;
use crate::spec::schema::json_string;
use crate::spec::suggest::closest_name;

pub const ID: &str = "unknown-column";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "data",
    summary: "a name no column of the data has",
    has_fix: true,
    docs: include_str!("unknown-column.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let mut diagnostics = Vec::new();
    // bindings resolve against their layer's data
    for layer in &context.layers {
        let Some(profile) = layer.data else {
            continue;
        };
        for facts in &layer.bindings {
            if let Some(column) = &facts.binding.column {
                check_name(column, &[profile], &mut diagnostics);
            }
        }
    }
    // names outside layers resolve against any of the chart's data
    let profiles: Vec<&DataProfile> = {
        let mut profiles: Vec<&DataProfile> = Vec::new();
        for layer in &context.layers {
            if let Some(profile) = layer.data {
                if !profiles.iter().any(|known| std::ptr::eq(*known, profile)) {
                    profiles.push(profile);
                }
            }
        }
        if let Some(Ok(profile)) = spec
            .source
            .as_ref()
            .and_then(|s| context.data.for_source(s))
        {
            if !profiles
                .iter()
                .any(|known| std::ptr::eq(*known, profile.as_ref()))
            {
                profiles.push(profile.as_ref());
            }
        }
        profiles
    };
    if profiles.is_empty() {
        return diagnostics;
    }
    for name in &spec.emphasis {
        check_name(name, &profiles, &mut diagnostics);
    }
    if let Some(by) = spec.panels.as_ref().and_then(|panels| panels.by.as_ref()) {
        check_name(by, &profiles, &mut diagnostics);
    }
    for declaration in &spec.columns {
        check_name(&declaration.name, &profiles, &mut diagnostics);
    }
    diagnostics
}

fn check_name(name: &Spanned<String>, profiles: &[&DataProfile], out: &mut Vec<Diagnostic>) {
    if profiles
        .iter()
        .any(|profile| profile.column(&name.value).is_some())
    {
        return;
    }
    let candidates: Vec<&str> = profiles
        .iter()
        .flat_map(|profile| profile.columns.iter().map(|column| column.name.as_str()))
        .collect();
    let mut diagnostic = Diagnostic::new(
        ID,
        Severity::Error,
        name.range,
        format!("the data has no column `{}`", name.value),
    );
    match closest_name(&name.value, candidates.iter().copied()) {
        Some(suggestion) => {
            diagnostic.message = format!("{}; did you mean `{suggestion}`?", diagnostic.message);
            let fix = Fix::quick(
                format!(
                    "use column `{suggestion}`: `{}`->`{suggestion}`",
                    name.value
                ),
                vec![TextEdit {
                    range: name.range,
                    new_text: json_string(suggestion),
                }],
            );
            // safe only when no other column is as close (see DEVELOPERS.md, "Safe fixes")
            let unique = is_unique_closest(&name.value, suggestion, &candidates);
            diagnostic
                .fixes
                .push(if unique { fix.marked_safe() } else { fix });
        }
        None => {
            let listed: Vec<String> = candidates
                .iter()
                .take(12)
                .map(|candidate| format!("`{candidate}`"))
                .collect();
            diagnostic.message = format!(
                "{}; its columns are {}{}",
                diagnostic.message,
                listed.join(", "),
                if candidates.len() > 12 { ", ..." } else { "" }
            );
        }
    }
    out.push(diagnostic);
}

/// Whether `suggestion` is strictly closer to `typed` (case-insensitive edit distance) than every
/// other candidate.
fn is_unique_closest(typed: &str, suggestion: &str, candidates: &[&str]) -> bool {
    let distance =
        |candidate: &str| strsim::osa_distance(&typed.to_lowercase(), &candidate.to_lowercase());
    let best = distance(suggestion);
    candidates
        .iter()
        .filter(|candidate| **candidate != suggestion && **candidate != typed)
        .all(|candidate| distance(candidate) > best)
}
