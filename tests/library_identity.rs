//! A deleted recipe keeps its identity: its trash entry is its own (never reused, even
//! within one second), it holds its whole history, and no new recipe of the same name
//! (imported, copied, renamed onto it, restored) ever adopts a history that is not its
//! own. Look-alike names are decided under the lock the write holds. Real processes.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use fillwright::library::{Library, LibraryError, OnConflict};

const T1: &str = "2026-12-01T10:00:00Z";

fn config(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-identity-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    assert!(common::run_in(&dir, &["list"]).status.success());
    dir
}

/// Save `notes` as the next revision of `name` (created when missing).
fn save_notes(lib: &Library, name: &str, notes: &str) {
    match lib.open(name) {
        Ok(opened) => {
            let mut r = opened.recipe.clone();
            r.notes = notes.to_string();
            lib.save(name, &r, Some(&opened), None, T1, OnConflict::Refuse).unwrap();
        }
        Err(_) => {
            let mut r = lib.open("flue-gas-span").unwrap().recipe;
            r.notes = notes.to_string();
            lib.save_as(name, &r, T1).unwrap();
        }
    }
}

fn notes_of_history(lib: &Library, name: &str) -> Vec<(u64, String)> {
    lib.history(name).unwrap().iter().map(|r| (r.revision, lib.revision(name, r.revision).unwrap().notes)).collect()
}

#[test]
fn two_deletes_of_one_name_in_one_second_keep_both_with_their_histories() {
    let config = config("twice");
    let lib = Library::at(&config.join("library")).unwrap();
    save_notes(&lib, "mix", "first 1");
    save_notes(&lib, "mix", "first 2");
    lib.delete("mix", T1).unwrap();
    save_notes(&lib, "mix", "second 1");
    // The new recipe of that name has a history of its own: one revision.
    assert_eq!(notes_of_history(&lib, "mix"), vec![(1, "second 1".to_string())]);
    lib.delete("mix", T1).unwrap();
    let trash: Vec<(String, String, PathBuf)> = lib.trash().into_iter().filter(|t| t.0 == "mix").collect();
    assert_eq!(trash.len(), 2, "{trash:?}");
    assert_ne!(trash[0].1, trash[1].1);
    // Each comes back by its id, with its own history.
    lib.undelete("mix", Some("mix-a"), Some(&trash[1].1)).unwrap();
    lib.undelete("mix", Some("mix-b"), Some(&trash[0].1)).unwrap();
    assert_eq!(notes_of_history(&lib, "mix-a"), vec![(1, "first 1".into()), (2, "first 2".into())]);
    assert_eq!(notes_of_history(&lib, "mix-b"), vec![(1, "second 1".into())]);
}

#[test]
fn import_copy_and_rename_onto_a_deleted_name_start_a_history_of_their_own() {
    let config = config("onto");
    let lib = Library::at(&config.join("library")).unwrap();
    for op in ["import", "copy", "rename"] {
        let name = format!("old-{op}");
        save_notes(&lib, &name, "old 1");
        save_notes(&lib, &name, "old 2");
        save_notes(&lib, &name, "old 3");
        lib.delete(&name, T1).unwrap();
        let args: Vec<String> = match op {
            "import" => {
                let file = config.join("new.ron");
                lib.export("lpg-in-methane", &file, false).unwrap();
                vec!["import".into(), file.display().to_string(), "--name".into(), name.clone()]
            }
            "copy" => vec!["copy".into(), "lpg-in-methane".into(), name.clone()],
            _ => {
                save_notes(&lib, "to-rename", "renamed 1");
                vec!["rename".into(), "to-rename".into(), name.clone()]
            }
        };
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = common::run_in(&config, &args);
        assert!(o.status.success(), "{op}: {}", String::from_utf8_lossy(&o.stderr));
        let history = notes_of_history(&lib, &name);
        assert!(history.iter().all(|(_, n)| !n.starts_with("old")), "{op} adopted: {history:?}");
        // The deleted one is not overwritten by anything: undelete refuses while the
        // name is taken, naming the way out, and brings it back whole under another.
        let o = common::run_in(&config, &["undelete", &name]);
        assert_eq!(o.status.code(), Some(1));
        assert!(String::from_utf8_lossy(&o.stderr).contains(&format!("--as {name}-restored")));
        let back = format!("{name}-back");
        assert!(common::run_in(&config, &["undelete", &name, "--as", &back]).status.success());
        let want: Vec<(u64, String)> = (1..=3).map(|k| (k, format!("old {k}"))).collect();
        assert_eq!(notes_of_history(&lib, &back), want, "{op}");
    }
}

#[test]
fn a_history_left_without_its_recipe_is_set_aside_not_adopted() {
    let config = config("orphan");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    save_notes(&lib, "gone", "gone 1");
    save_notes(&lib, "gone", "gone 2");
    // Removed by hand (or by an earlier version's delete): the history stays behind.
    std::fs::remove_file(dir.join("gone.ron")).unwrap();
    save_notes(&lib, "gone", "new 1");
    assert_eq!(notes_of_history(&lib, "gone"), vec![(1, "new 1".to_string())]);
    let set_aside = std::fs::read_dir(dir.join(".trash")).unwrap().flatten().any(|e| e.path().join("history").is_dir());
    assert!(set_aside, "the orphan history was kept in the trash");
}

fn spawn(config: &Path, args: &[String]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", config)
        .env_remove("FILLWRIGHT_LIBRARY")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

fn finish(mut child: Child) -> Output {
    let start = Instant::now();
    while child.try_wait().unwrap().is_none() {
        assert!(start.elapsed() < Duration::from_secs(60), "a process hung");
        std::thread::sleep(Duration::from_millis(5));
    }
    child.wait_with_output().unwrap()
}

/// Every recipe text anywhere in the library (current files, histories, trash).
fn every_text(dir: &Path) -> Vec<String> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let p = e.path();
            if e.file_type().unwrap().is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|x| x == "ron") {
                out.push(std::fs::read_to_string(&p).unwrap_or_default());
            }
        }
    }
    out
}

#[test]
fn a_storm_of_mixed_processes_on_one_name_loses_no_revision_and_repeats_no_number() {
    let config = config("storm");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    let base = lib.open("flue-gas-span").unwrap().text;
    let mut written = Vec::new();
    for round in 0..6 {
        let files: Vec<PathBuf> = (0..3)
            .map(|i| {
                let f = config.join(format!("in-{round}-{i}.ron"));
                std::fs::write(&f, base.replace("notes: \"", &format!("notes: \"marker r{round}i{i}. "))).unwrap();
                f
            })
            .collect();
        let mut commands: Vec<(Option<String>, Vec<String>)> = files
            .iter()
            .enumerate()
            .map(|(i, f)| {
                let marker = format!("marker r{round}i{i}.");
                (Some(marker), vec!["import".into(), f.display().to_string(), "--name".into(), "storm".into()])
            })
            .collect();
        for args in [
            vec!["delete", "storm"],
            vec!["undelete", "storm"],
            vec!["copy", "storm", "storm-copy"],
            vec!["rename", "storm-copy", "storm"],
            vec!["history", "storm", "--restore", "1"],
        ] {
            commands.push((None, args.iter().map(|s| s.to_string()).collect()));
        }
        let children: Vec<(Option<String>, Child)> =
            commands.into_iter().map(|(m, args)| (m, spawn(&config, &args))).collect();
        for (marker, child) in children {
            let o = finish(child);
            if let Some(m) = marker.filter(|_| o.status.success()) {
                written.push(m);
            }
            assert!(!String::from_utf8_lossy(&o.stderr).contains("panicked"));
        }
        // Tidy between rounds: the name free again, so the next round's imports can win.
        let _ = lib.delete("storm", T1);
        let _ = lib.delete("storm-copy", T1);
    }
    assert!(!written.is_empty());
    let texts = every_text(&dir);
    for m in &written {
        assert!(texts.iter().any(|t| t.contains(m.as_str())), "revision with {m} lost");
    }
    // No history folder holds two texts under one revision number: each file's revision
    // is the one its name says, and every history's revisions are distinct.
    let mut stack = vec![dir.clone()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let p = e.path();
            if e.file_type().unwrap().is_dir() {
                stack.push(p);
                continue;
            }
            let under_history = p.parent().and_then(|h| h.parent()).is_some_and(|g| {
                g.ends_with(".history") || g.file_name().is_some_and(|n| n.to_string_lossy().contains('.'))
            });
            let stem = p.file_stem().unwrap().to_string_lossy().to_string();
            if under_history && stem.chars().all(|c| c.is_ascii_digit()) {
                let text = std::fs::read_to_string(&p).unwrap();
                let rev: u32 = stem.parse().unwrap();
                assert!(text.contains(&format!("revision: {rev},")), "{}: not revision {rev}", p.display());
            }
        }
    }
    assert!(matches!(lib.open("storm"), Err(LibraryError::NotFound(_))));
}

#[test]
fn look_alike_names_imported_at_once_are_never_both_created() {
    let config = config("case");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    let file = config.join("x.ron");
    lib.export("flue-gas-span", &file, false).unwrap();
    let f = file.display().to_string();
    for round in 0..8 {
        let names = [format!("Span-{round}"), format!("span-{round}"), format!("SPAN-{round}")];
        let children: Vec<Child> =
            names.iter().map(|n| spawn(&config, &["import".into(), f.clone(), "--name".into(), n.clone()])).collect();
        let ok = children.into_iter().map(finish).filter(|o| o.status.success()).count();
        assert_eq!(ok, 1, "round {round}");
        let made = std::fs::read_dir(&dir)
            .unwrap()
            .flatten()
            .filter(|e| e.file_name().to_string_lossy().to_lowercase() == format!("span-{round}.ron"))
            .count();
        assert_eq!(made, 1, "round {round}");
    }
}
