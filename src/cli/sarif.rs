//! SARIF 2.1.0 output (`markwell check --format sarif`), the OASIS Static Analysis Results
//! Interchange Format, for code-scanning services. Columns are 1-based Unicode code points
//! (SARIF's default `columnKind`).

use serde_json::{json, Value};

use crate::analysis::rules::registry;
use crate::diagnostic::{Diagnostic, RelatedTarget, Severity};

use super::render::CheckedFile;

const SARIF_SCHEMA_URI: &str =
    "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json";

fn level(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Info | Severity::Hint => "note",
    }
}

/// A path as a URI reference: forward slashes, reserved characters percent-encoded; an absolute
/// path becomes a `file://` URI (RFC 8089), a relative one stays relative to the working folder.
pub fn path_to_uri_reference(path: &std::path::Path) -> String {
    let text = path.to_string_lossy().replace('\\', "/");
    let text = text.strip_prefix("./").unwrap_or(&text);
    let mut out = String::with_capacity(text.len() + 7);
    if path.is_absolute() {
        out.push_str("file://");
    }
    for byte in text.bytes() {
        match byte {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'.' | b'_' | b'~' | b'/' => {
                out.push(byte as char)
            }
            _ => out.push_str(&format!("%{byte:02X}")),
        }
    }
    out
}

fn region(file: &CheckedFile, start: usize, end: usize) -> Value {
    let (start_line, start_column) = file.lines.line_and_column(&file.text, start);
    let (end_line, end_column) = file.lines.line_and_column(&file.text, end);
    json!({
        "startLine": start_line,
        "startColumn": start_column,
        "endLine": end_line,
        "endColumn": end_column,
    })
}

fn result(file: &CheckedFile, uri: &str, diagnostic: &Diagnostic) -> Value {
    let rule_index = registry()
        .iter()
        .position(|rule| rule.id == diagnostic.rule);
    let related: Vec<Value> = diagnostic
        .related
        .iter()
        .enumerate()
        .map(|(index, related)| {
            let location = match &related.target {
                RelatedTarget::SameDocument(range) => json!({
                    "artifactLocation": { "uri": uri },
                    "region": region(file, range.start, range.end),
                }),
                RelatedTarget::File { path, line, .. } => json!({
                    "artifactLocation": { "uri": path_to_uri_reference(path) },
                    "region": { "startLine": line + 1 },
                }),
            };
            json!({
                "id": index,
                "physicalLocation": location,
                "message": { "text": related.message },
            })
        })
        .collect();
    let fixes: Vec<Value> = diagnostic
        .fixes
        .iter()
        .map(|fix| {
            let replacements: Vec<Value> = fix
                .edits
                .iter()
                .map(|edit| {
                    json!({
                        "deletedRegion": region(file, edit.range.start, edit.range.end),
                        "insertedContent": { "text": edit.new_text },
                    })
                })
                .collect();
            json!({
                "description": { "text": fix.title },
                "artifactChanges": [{
                    "artifactLocation": { "uri": uri },
                    "replacements": replacements,
                }],
            })
        })
        .collect();
    let mut result = json!({
        "ruleId": diagnostic.rule,
        "level": level(diagnostic.severity),
        "message": { "text": diagnostic.message },
        "locations": [{
            "physicalLocation": {
                "artifactLocation": { "uri": uri },
                "region": region(file, diagnostic.range.start, diagnostic.range.end),
            }
        }],
    });
    if let Some(index) = rule_index {
        result["ruleIndex"] = json!(index);
    }
    if !related.is_empty() {
        result["relatedLocations"] = json!(related);
    }
    if !fixes.is_empty() {
        result["fixes"] = json!(fixes);
    }
    result
}

fn first_paragraph_of_section(docs: &str, heading: &str) -> String {
    let Some(start) = docs.find(heading) else {
        return String::new();
    };
    let body = &docs[start + heading.len()..];
    let end = body.find("\n## ").unwrap_or(body.len());
    body[..end]
        .trim()
        .split("\n\n")
        .next()
        .unwrap_or("")
        .replace('\n', " ")
}

/// The SARIF log for all checked files.
pub fn render_sarif(files: &[CheckedFile]) -> String {
    let rules: Vec<Value> = registry()
        .iter()
        .map(|rule| {
            json!({
                "id": rule.id,
                "shortDescription": { "text": rule.summary },
                "fullDescription": { "text": first_paragraph_of_section(rule.docs, crate::analysis::rules::DOC_SECTIONS[1]) },
                "help": { "text": rule.docs, "markdown": rule.docs },
                "defaultConfiguration": { "level": level(rule.default_severity) },
                "properties": { "group": rule.group, "hasFix": rule.has_fix },
            })
        })
        .collect();
    let results: Vec<Value> = files
        .iter()
        .flat_map(|file| {
            let uri = path_to_uri_reference(&file.path);
            file.diagnostics
                .iter()
                .map(move |diagnostic| result(file, &uri, diagnostic))
                .collect::<Vec<_>>()
        })
        .collect();
    let artifacts: Vec<Value> = files
        .iter()
        .map(|file| json!({ "location": { "uri": path_to_uri_reference(&file.path) } }))
        .collect();
    let log = json!({
        "$schema": SARIF_SCHEMA_URI,
        "version": "2.1.0",
        "runs": [{
            "tool": {
                "driver": {
                    "name": "markwell",
                    "version": env!("CARGO_PKG_VERSION"),
                    "rules": rules,
                }
            },
            "columnKind": "unicodeCodePoints",
            "artifacts": artifacts,
            "results": results,
        }]
    });
    serde_json::to_string_pretty(&log).unwrap_or_else(|_| "{}".to_string())
}

#[cfg(test)]
mod tests {
    use super::path_to_uri_reference;
    use std::path::Path;

    #[test]
    fn paths_become_uri_references() {
        assert_eq!(
            path_to_uri_reference(Path::new("./demo-data/ferry routes.chart.json")),
            "demo-data/ferry%20routes.chart.json"
        );
        assert_eq!(
            path_to_uri_reference(Path::new("/srv/data/quay#1.csv")),
            "file:///srv/data/quay%231.csv"
        );
    }
}
