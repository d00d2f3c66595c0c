//! The core's folders import only from the stages before them:
//! model <- engine <- analysis, and the device side from the model alone
//! (DEVELOPERS.md, "Layout"). Every `crate::` path in the code (comments
//! aside) must start with a folder its file may use.

use std::fs;
use std::path::{Path, PathBuf};

/// What each folder (or top-level file) may name after `crate::`.
/// `fixtures` (test data) builds on the model alone, so every folder's
/// tests may use it; code outside tests cannot, since the module exists
/// only in test builds and with the `fixtures` feature.
const ALLOWED: [(&str, &[&str]); 5] = [
    ("model", &["model", "fixtures"]),
    ("engine", &["model", "engine", "fixtures"]),
    ("analysis", &["model", "engine", "analysis", "fixtures"]),
    ("device", &["model", "device", "fixtures"]),
    ("fixtures.rs", &["model"]),
];

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in fs::read_dir(dir).expect("readable source folder") {
        let path = entry.expect("folder entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The first segment of every `crate::` path on the code lines of `text`.
fn crate_paths(text: &str) -> Vec<(usize, String)> {
    let mut found = Vec::new();
    for (number, line) in text.lines().enumerate() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(at) = rest.find("crate::") {
            rest = &rest[at + "crate::".len()..];
            let mut segment: String = rest
                .chars()
                .take_while(|c| c.is_alphanumeric() || *c == '_')
                .collect();
            if segment.is_empty() {
                // `crate::{...}`: a group of root re-exports.
                segment = rest.chars().take(1).collect();
            }
            found.push((number + 1, segment));
        }
    }
    found
}

#[test]
fn no_folder_imports_from_a_later_stage() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut checked = 0;
    let mut wrong = Vec::new();
    for (place, allowed) in ALLOWED {
        let mut files = Vec::new();
        let root = src.join(place);
        if root.is_dir() {
            rust_files(&root, &mut files);
        } else {
            files.push(root);
        }
        assert!(!files.is_empty(), "no sources under {place}");
        for file in files {
            let text = fs::read_to_string(&file).expect("readable source");
            for (line, segment) in crate_paths(&text) {
                checked += 1;
                if !allowed.contains(&segment.as_str()) {
                    wrong.push(format!(
                        "{}:{line}: crate::{segment} (allowed: {})",
                        file.strip_prefix(&src).unwrap_or(&file).display(),
                        allowed.join(", ")
                    ));
                }
            }
        }
    }
    assert!(
        checked > 100,
        "only {checked} crate paths found: is the scan broken?"
    );
    assert!(
        wrong.is_empty(),
        "imports against the layer rule:\n{}",
        wrong.join("\n")
    );
}

#[test]
fn the_scan_sees_root_imports() {
    // A root re-export (`crate::{Rule, Error}`) or a later stage is caught.
    let found = crate_paths("use crate::{Rule, Error};\nuse crate::analysis::power; // crate::x\n");
    assert_eq!(found, [(1, "{".to_string()), (2, "analysis".to_string())]);
}
