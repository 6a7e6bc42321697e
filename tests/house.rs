//! The house rules a newcomer can rely on, checked over the source: the screen never
//! reaches into the command line (both call the presenters in `src/print`), views and
//! overlays never reach into the dispatcher, no function grows past 80 lines, tests keep
//! their temporary files where they are removed, and the declared minimum Rust version is
//! the true one.

use std::path::{Path, PathBuf};

fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            sources(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

fn all_sources() -> Vec<PathBuf> {
    let mut out = Vec::new();
    sources(&Path::new(env!("CARGO_MANIFEST_DIR")).join("src"), &mut out);
    out.sort();
    out
}

#[test]
fn the_screen_does_not_import_the_command_line() {
    for p in all_sources().iter().filter(|p| p.components().any(|c| c.as_os_str() == "tui")) {
        let text = std::fs::read_to_string(p).unwrap();
        assert!(!text.contains("crate::cli"), "{} imports the command line; use crate::print", p.display());
    }
}

#[test]
fn views_and_overlays_do_not_import_the_dispatcher() {
    // Each view and overlay owns its keys and drawing; the dispatcher (`tui/update.rs`)
    // only hands keys on, and nothing it dispatches to reaches back into it.
    let tui = Path::new(env!("CARGO_MANIFEST_DIR")).join("src/tui");
    let mut checked = 0;
    for p in all_sources().iter().filter(|p| p.starts_with(tui.join("views")) || p.starts_with(tui.join("overlays"))) {
        let text = std::fs::read_to_string(p).unwrap();
        for bad in ["tui::update", "super::update", "tui::view::", "super::view::"] {
            assert!(
                !text.contains(bad),
                "{} imports the dispatcher ({bad}); use tui::context or tui::document",
                p.display()
            );
        }
        checked += 1;
    }
    assert!(checked >= 10, "the views and overlays were not found ({checked} files)");
    // The dispatcher stays a dispatcher: short, with no drawing and no view's keys.
    let update = std::fs::read_to_string(tui.join("update.rs")).unwrap();
    assert!(update.lines().count() < 120, "tui/update.rs grew past a dispatcher");
    assert!(!update.contains("ratatui"), "tui/update.rs draws");
}

#[test]
fn tests_make_their_temporary_files_in_the_scratch_folder_removed_at_exit() {
    // `common::temp_dir()` is one folder per test process, removed when it ends; a test
    // that used the system's temporary folder directly would leave its files behind.
    let tests = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests");
    let mut files = Vec::new();
    sources(&tests, &mut files);
    assert!(files.len() > 20);
    for p in files.iter().filter(|p| !p.ends_with("common/mod.rs") && !p.ends_with("house.rs")) {
        let text = std::fs::read_to_string(p).unwrap();
        assert!(!text.contains("std::env::temp_dir()"), "{}: use common::temp_dir()", p.display());
    }
}

/// A `major.minor[.patch]` version as numbers, for comparing.
fn version(v: &str) -> (u64, u64) {
    let mut parts = v.split('.').map(|p| p.parse::<u64>().unwrap_or(0));
    (parts.next().unwrap_or(0), parts.next().unwrap_or(0))
}

#[test]
fn the_declared_minimum_rust_version_is_what_the_locked_dependencies_need() {
    // No other toolchain can be fetched on the build machines, so the declared minimum is
    // checked against what every locked dependency built for this platform declares: it
    // must be the highest of them (lower would not build; higher would turn users away).
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let target = if cfg!(target_arch = "aarch64") { "aarch64-unknown-linux-gnu" } else { "x86_64-unknown-linux-gnu" };
    let out = std::process::Command::new(cargo)
        .args(["metadata", "--format-version", "1", "--locked", "--offline", "--filter-platform", target])
        .current_dir(root)
        .output()
        .unwrap();
    assert!(out.status.success(), "cargo metadata: {}", String::from_utf8_lossy(&out.stderr));
    let m: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let built: std::collections::HashSet<&str> =
        m["resolve"]["nodes"].as_array().unwrap().iter().filter_map(|n| n["id"].as_str()).collect();
    let mut declared = None;
    let mut needed = ((0, 0), String::new());
    for p in m["packages"].as_array().unwrap() {
        let (Some(id), Some(rv)) = (p["id"].as_str(), p["rust_version"].as_str()) else { continue };
        if p["name"] == "fillwright" {
            declared = Some(version(rv));
        } else if built.contains(id) && version(rv) > needed.0 {
            needed = (version(rv), format!("{} {}", p["name"].as_str().unwrap(), p["version"].as_str().unwrap()));
        }
    }
    let declared = declared.expect("Cargo.toml declares rust-version");
    assert_eq!(
        declared, needed.0,
        "Cargo.toml's rust-version is {declared:?}, but the locked dependencies need {:?} ({}): make them agree",
        needed.0, needed.1
    );
    // The README and the contributor guide say the same.
    let minimum = format!("{}.{}", declared.0, declared.1);
    for doc in ["README.md", "DEVELOPERS.md"] {
        let text = std::fs::read_to_string(root.join(doc)).unwrap();
        assert!(text.contains(&format!("Rust {minimum}")), "{doc} does not give Rust {minimum} as the minimum");
    }
}

/// Each function's name and length in lines, by counting braces from its signature (the
/// code's strings and comments hold no unbalanced braces: rustfmt and the reviewers keep
/// it so; a miscount shows here as a function that cannot be found or is absurdly long).
fn function_lengths(text: &str) -> Vec<(String, usize)> {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        let l = lines[i].trim_start();
        let sig = ["fn ", "pub fn ", "pub(crate) fn ", "pub(super) fn "].iter().find(|p| l.starts_with(*p));
        let Some(prefix) = sig else {
            i += 1;
            continue;
        };
        let name: String = l[prefix.len()..].chars().take_while(|c| c.is_alphanumeric() || *c == '_').collect();
        let (mut depth, mut opened, mut j) = (0i64, false, i);
        while j < lines.len() {
            for c in lines[j].chars() {
                match c {
                    '{' => {
                        depth += 1;
                        opened = true;
                    }
                    '}' => depth -= 1,
                    _ => {}
                }
            }
            if opened && depth <= 0 {
                break;
            }
            if !opened && lines[j].trim_end().ends_with(';') {
                break; // a declaration without a body
            }
            j += 1;
        }
        out.push((name, j - i + 1));
        i = j + 1;
    }
    out
}

#[test]
fn no_function_grows_past_80_lines() {
    // A longer function's steps become named functions, in the order a blender would tell
    // them.
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut long = Vec::new();
    let mut counted = 0;
    for p in all_sources() {
        let rel = p.strip_prefix(&src).unwrap().to_string_lossy().replace('\\', "/");
        for (name, n) in function_lengths(&std::fs::read_to_string(&p).unwrap()) {
            counted += 1;
            if n > 80 {
                long.push(format!("{rel}: {name} is {n} lines"));
            }
        }
    }
    assert!(counted > 500, "only {counted} functions found: the counting is broken");
    assert!(long.is_empty(), "split these into named steps: {long:#?}");
}
