//! Every registered rule has documentation with the fixed sections, a kebab-case id, and a
//! stated source (a publication, a standard, or "common practice, no source").

use markwell::analysis::rules::{registry, DOC_SECTIONS};

#[test]
fn every_rule_documents_every_section_in_order() {
    let mut problems = Vec::new();
    for rule in registry() {
        let mut last = 0;
        for section in DOC_SECTIONS {
            match rule.docs.find(section) {
                Some(position) if position >= last => last = position,
                Some(_) => problems.push(format!("{}: `{section}` out of order", rule.id)),
                None => problems.push(format!("{}: missing `{section}`", rule.id)),
            }
        }
        if !rule.docs.starts_with(&format!("# {}\n", rule.id)) {
            problems.push(format!("{}: docs must start with `# {}`", rule.id, rule.id));
        }
        let source = rule.docs.split("## Source").nth(1).unwrap_or("").trim();
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
