//! The repository is self-contained: no source, test, example, benchmark or
//! document refers to a design or check-value file that lives outside it.
//! The design is `docs/design.md`, the check values `docs/checks.md`.

use std::path::{Path, PathBuf};

/// Names of files that are not in the repository. Written in pieces so that
/// this test does not find itself.
fn outside_names() -> Vec<String> {
    vec![
        format!("{}{}", "DESIGN", ".md"),
        format!("{}{}", "CHECKS", ".md"),
        format!("{}{}", "../", "shared/"),
    ]
}

fn text_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            // Generated instrument files are data, not prose.
            if p.file_name().is_some_and(|n| n == "data") {
                continue;
            }
            text_files(&p, out);
        } else if p
            .extension()
            .and_then(|x| x.to_str())
            .is_some_and(|x| matches!(x, "rs" | "md" | "toml" | "html" | "css" | "js"))
        {
            out.push(p);
        }
    }
}

#[test]
fn no_reference_to_a_file_outside_the_repository() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    for dir in ["src", "tests", "docs", "examples", "benches", "demo-data"] {
        text_files(&root.join(dir), &mut files);
    }
    for f in ["README.md", "DEVELOPERS.md", "Cargo.toml"] {
        files.push(root.join(f));
    }
    assert!(files.len() > 50, "the walk found the sources");
    let names = outside_names();
    let mut found = Vec::new();
    for f in &files {
        let text = std::fs::read_to_string(f).unwrap_or_default();
        for (i, line) in text.lines().enumerate() {
            for n in &names {
                if line.contains(n.as_str()) {
                    found.push(format!("{}:{}: {}", f.display(), i + 1, line.trim()));
                }
            }
        }
    }
    assert!(
        found.is_empty(),
        "references to files outside the repository (use docs/design.md or docs/checks.md):\n{}",
        found.join("\n")
    );
}

/// The files the references point to exist.
#[test]
fn the_design_and_check_values_are_in_the_repository() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for f in ["docs/design.md", "docs/checks.md", "demo-data/README.md"] {
        assert!(root.join(f).is_file(), "{f} is missing");
    }
}
