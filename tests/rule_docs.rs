//! Every registered rule has documentation with the fixed sections, a kebab-case id, and a
//! stated source (a publication, a standard, or "common practice, no source").

use markwell::analysis::rules::{registry, DOC_SECTIONS};

/// The rule page layout that the pages are moving to; a page may use either set while the move
/// is under way.
const CHART_PAGE_SECTIONS: [&str; 5] = [
    "## What readers get wrong",
    "## What sets it off",
    "## A spec that has it",
    "## A spec that does not",
    "## Evidence",
];

#[test]
fn every_rule_documents_every_section_in_order() {
    let mut problems = Vec::new();
    for rule in registry() {
        let mut last = 0;
        let sections = if rule.docs.contains(CHART_PAGE_SECTIONS[0]) {
            CHART_PAGE_SECTIONS
        } else {
            DOC_SECTIONS
        };
        let source_heading = sections[4];
        for section in sections {
            match rule.docs.find(section) {
                Some(position) if position >= last => last = position,
                Some(_) => problems.push(format!("{}: `{section}` out of order", rule.id)),
                None => problems.push(format!("{}: missing `{section}`", rule.id)),
            }
        }
        if !rule.docs.starts_with(&format!("# {}\n", rule.id)) {
            problems.push(format!("{}: docs must start with `# {}`", rule.id, rule.id));
        }
        let source = rule.docs.split(source_heading).nth(1).unwrap_or("").trim();
        if source.is_empty() {
            problems.push(format!("{}: empty source section", rule.id));
        }
    }
    assert!(problems.is_empty(), "{problems:#?}");
}

#[test]
fn rule_ids_are_unique_kebab_case() {
    let mut seen = std::collections::HashSet::new();
    for rule in registry() {
        assert!(seen.insert(rule.id), "duplicate id {}", rule.id);
        assert!(
            rule.id
                .chars()
                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-')
                && !rule.id.starts_with('-')
                && !rule.id.ends_with('-'),
            "{} is not kebab-case",
            rule.id
        );
    }
}
