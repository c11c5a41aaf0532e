//! Every registered rule has a page with exactly the fixed sections in order, a kebab-case id,
//! and stated evidence (full citations, or "Common practice; no published source"). Pages speak
//! to users: they cite publications, never the project's source files, and leave the state of
//! the transcribed tables to the one `markwell sources` page.

use markwell::analysis::rules::{doc_section, registry, DOC_SECTIONS};

#[test]
fn every_rule_page_has_exactly_the_sections_in_order() {
    let mut problems = Vec::new();
    for rule in registry() {
        if !rule.docs.starts_with(&format!("# {}\n", rule.id)) {
            problems.push(format!("{}: docs must start with `# {}`", rule.id, rule.id));
        }
        let headings: Vec<&str> = rule
            .docs
            .lines()
            .filter(|line| line.starts_with("## "))
            .collect();
        if headings != DOC_SECTIONS {
            problems.push(format!("{}: sections {headings:?}", rule.id));
        }
        for section in DOC_SECTIONS {
            if doc_section(rule.docs, section).is_none_or(str::is_empty) {
                problems.push(format!("{}: empty `{section}`", rule.id));
            }
        }
    }
    assert!(problems.is_empty(), "{problems:#?}");
}

#[test]
fn evidence_cites_a_publication_with_a_year_or_says_there_is_none() {
    for rule in registry() {
        let evidence = doc_section(rule.docs, "## Evidence").unwrap_or("");
        let has_year = evidence
            .as_bytes()
            .windows(6)
            .any(|w| w[0] == b'(' && w[1..5].iter().all(u8::is_ascii_digit) && w[5] == b')');
        let says_none = evidence.contains("no published source");
        let standard = evidence.contains("RFC ") || evidence.contains("definition");
        assert!(
            has_year || says_none || standard,
            "{}: evidence without a dated citation: {evidence}",
            rule.id
        );
    }
}

#[test]
fn pages_cite_publications_not_source_files() {
    for rule in registry() {
        for needle in ["src/", ".rs", "from memory", "see knowledge", "schema/"] {
            assert!(
                !rule.docs.contains(needle),
                "{}: user-facing page mentions `{needle}`",
                rule.id
            );
        }
    }
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
