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
//! 4. No two files of model/ import each other (a circle of `crate::`
//!    paths), a parent module and its declared children apart.

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

/// The file that defines the module path `parts` (model/a/b.rs or
/// model/a/b/mod.rs), trying the longest prefix first.
fn file_of(parts: &[&str]) -> Option<PathBuf> {
    for k in (1..=parts.len()).rev() {
        let base = root().join("model").join(parts[..k].join("/"));
        for candidate in [base.with_extension("rs"), base.join("mod.rs")] {
            if candidate.is_file() {
                return Some(candidate);
            }
        }
    }
    None
}

#[test]
fn no_two_files_import_each_other() {
    // 4. The files of model/ form no circle of `crate::` imports (a module
    // that needs another's names and lends it its own belongs with it, or
    // the shared names belong below both; DEVELOPERS.md). A parent module
    // and the children it declares are not counted against each other.
    let mut files = Vec::new();
    rust_files(&root().join("model"), &mut files);
    let mut edges: Vec<(PathBuf, PathBuf)> = Vec::new();
    for f in &files {
        for (_, line) in code_lines(f) {
            let mut rest = line.as_str();
            while let Some(i) = rest.find("crate::") {
                rest = &rest[i + "crate::".len()..];
                let path: Vec<&str> = rest
                    .split(|c: char| !(c.is_alphanumeric() || c == '_' || c == ':'))
                    .next()
                    .unwrap_or("")
                    .split("::")
                    .filter(|p| !p.is_empty())
                    .collect();
                if let Some(target) = file_of(&path) {
                    let parent_child = target.ends_with("mod.rs")
                        && f.starts_with(target.parent().unwrap())
                        || f.ends_with("mod.rs") && target.starts_with(f.parent().unwrap());
                    if &target != f && !parent_child {
                        edges.push((f.clone(), target));
                    }
                }
            }
        }
    }
    edges.sort();
    edges.dedup();
    // A circle exists if some file reaches itself; depth-first from each.
    let mut circles = Vec::new();
    for start in &files {
        let mut stack = vec![(start.clone(), vec![start.clone()])];
        let mut seen = std::collections::BTreeSet::new();
        while let Some((node, trail)) = stack.pop() {
            for (_, next) in edges.iter().filter(|(a, _)| *a == node) {
                if next == start {
                    let names: Vec<String> = trail
                        .iter()
                        .map(|p| p.strip_prefix(root()).unwrap().display().to_string())
                        .collect();
                    circles.push(names.join(" -> "));
                } else if seen.insert(next.clone()) {
                    let mut t = trail.clone();
                    t.push(next.clone());
                    stack.push((next.clone(), t));
                }
            }
        }
    }
    assert!(
        circles.is_empty(),
        "files that import each other:\n{}",
        circles.join("\n")
    );
}
