//! Layering check (STYLE.md 1): only `src/lsp/` may use tower-lsp or lsp-types; every other
//! module speaks in byte offsets and the crate's own types.

use std::path::Path;

fn rust_files(directory: &Path, out: &mut Vec<std::path::PathBuf>) {
    let Ok(entries) = std::fs::read_dir(directory) else {
        return;
    };
    for entry in entries.flatten() {
        let path = entry.path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|extension| extension == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn only_the_lsp_module_uses_lsp_crates() {
    let source = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let lsp = source.join("lsp");
    let mut files = Vec::new();
    rust_files(&source, &mut files);
    assert!(files.len() > 10, "found the sources: {files:?}");
    let mut offenders = Vec::new();
    for file in files.iter().filter(|file| !file.starts_with(&lsp)) {
        let text = std::fs::read_to_string(file).unwrap_or_default();
        for (number, line) in text.lines().enumerate() {
            if line.contains("tower_lsp") || line.contains("lsp_types") {
                offenders.push(format!("{}:{}: {line}", file.display(), number + 1));
            }
        }
    }
    assert!(
        offenders.is_empty(),
        "LSP types outside src/lsp:\n{}",
        offenders.join("\n")
    );
}
