//! The layout rules of DEVELOPERS.md, checked on the source text (common
//! practice for layering rules a compiler cannot express).
//!
//! 1. Nothing under model/physics/ uses the column state, the experiment,
//!    the configuration or the layers above them: process cores take cell
//!    values or slices and return named rate structs.
//! 2. No choice keeps a hand-written list of its names: every
//!    `&[&str]`-typed name list of a configuration choice is derived from its
//!    enum (`Enum::NAMES`), so `SCHEMES`/`CRITERIA`-style constants must not
//!    come back.
//! 3. No source or page points outside the repository.

use std::path::{Path, PathBuf};

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|e| e == "rs") {
            out.push(p);
        }
    }
}

/// The code of a file without its comment lines (doc comments may name the
/// layers above, to explain where a core is used).
fn code_lines(path: &Path) -> Vec<(usize, String)> {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim_start().starts_with("//"))
        .map(|(i, l)| (i + 1, l.to_string()))
        .collect()
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn physics_cores_do_not_use_state_experiment_or_configuration() {
    let forbidden = [
        "crate::column",
        "crate::setup",
        "crate::output",
        "crate::timeloop",
        "crate::sweep",
        "crate::cli",
        "crate::error",
        "ConfigIssue",
        "ConfigError",
        "RunError",
        "Experiment",
        "State::",
        ": &State",
        "&mut State",
    ];
    let mut files = Vec::new();
    rust_files(&root().join("model/physics"), &mut files);
    assert!(files.len() > 20, "the physics folder holds the cores");
    let mut found = Vec::new();
    for f in &files {
        for (n, line) in code_lines(f) {
            for word in forbidden {
                if line.contains(word) {
                    found.push(format!("{}:{n}: {word}", f.display()));
                }
            }
        }
    }
    assert!(
        found.is_empty(),
        "physics cores reach up:\n{}",
        found.join("\n")
    );
}

#[test]
fn no_hand_kept_name_lists_of_choices() {
    let mut files = Vec::new();
    rust_files(&root().join("model"), &mut files);
    let mut found = Vec::new();
    for f in &files {
        for (n, line) in code_lines(f) {
            let t = line.trim_start();
            let name_list = t.starts_with("pub const") && t.contains(": &[&str] = &[");
            if name_list || t.contains("const SCHEMES") || t.contains("const CRITERIA") {
                found.push(format!("{}:{n}: {t}", f.display()));
            }
            if t.contains("kind: Kind::Choice(") && !t.contains("NAMES") {
                found.push(format!("{}:{n}: {t}", f.display()));
            }
        }
    }
    assert!(
        found.is_empty(),
        "name lists kept by hand:\n{}",
        found.join("\n")
    );
}

#[test]
fn nothing_points_outside_the_repository() {
    let mut files = Vec::new();
    for dir in ["model", "tests", "docs", "tools", "configs"] {
        let mut all = Vec::new();
        collect_all(&root().join(dir), &mut all);
        files.extend(all);
    }
    files.push(root().join("README.md"));
    files.push(root().join("DEVELOPERS.md"));
    // Assembled so that this file does not match itself.
    let outside = [
        ["../", "shared"].concat(),
        ["(physics", ".md"].concat(),
        [" physics", ".md"].concat(),
        ["check-values", ".md"].concat(),
        ["/work", "/"].concat(),
    ];
    let mut found = Vec::new();
    for f in files {
        let Ok(text) = std::fs::read_to_string(&f) else {
            continue;
        };
        for (n, line) in text.lines().enumerate() {
            for o in &outside {
                if line.contains(o.as_str()) {
                    found.push(format!("{}:{}: {o}", f.display(), n + 1));
                }
            }
        }
    }
    assert!(
        found.is_empty(),
        "references outside the repository:\n{}",
        found.join("\n")
    );
}

fn collect_all(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in rd {
        let p = entry.unwrap().path();
        if p.is_dir() {
            collect_all(&p, out);
        } else {
            out.push(p);
        }
    }
}
