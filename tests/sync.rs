//! Sharing a library between benches: a bare repository (the lab server) and two clones
//! (two benches), with `fillwright sync` as real processes. A recipe saved on both
//! benches keeps both as consecutive revisions; records merge; no file is left with
//! conflict markers; a sync killed midway leaves the library as it was or completed.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::Duration;

use fillwright::library::{Library, OnConflict};

fn git(dir: &Path, args: &[&str]) -> Output {
    Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(args)
        .env("GIT_AUTHOR_NAME", "Lab")
        .env("GIT_AUTHOR_EMAIL", "lab@example.invalid")
        .env("GIT_COMMITTER_NAME", "Lab")
        .env("GIT_COMMITTER_EMAIL", "lab@example.invalid")
        .output()
        .unwrap()
}

struct Lab {
    root: PathBuf,
}

impl Lab {
    /// A bare repository and two benches cloned from it, the first seeded with the demos.
    fn new(tag: &str) -> Lab {
        let root = common::temp_dir().join(format!("fillwright-sync-{tag}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&root);
        std::fs::create_dir_all(&root).unwrap();
        assert!(git(&root, &["init", "--quiet", "--bare", "-b", "main", "lab.git"]).status.success());
        let lab = Lab { root };
        for bench in ["a", "b"] {
            let o = git(&lab.root, &["clone", "--quiet", "lab.git", &format!("{bench}-lib")]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            git(&lab.library(bench), &["checkout", "--quiet", "-b", "main"]);
        }
        assert!(lab.fillwright("a", &["list"]).status.success());
        lab.sync_ok("a");
        lab.sync_ok("b");
        lab
    }

    fn library(&self, bench: &str) -> PathBuf {
        self.root.join(format!("{bench}-lib"))
    }

    fn fillwright(&self, bench: &str, args: &[&str]) -> Output {
        let lib = self.library(bench);
        let mut all = vec!["--library", lib.to_str().unwrap()];
        all.extend(args);
        common::run_in(&self.root.join(format!("{bench}-config")), &all)
    }

    fn sync_ok(&self, bench: &str) -> String {
        let o = self.fillwright(bench, &["sync"]);
        assert!(o.status.success(), "sync on {bench}: {}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8_lossy(&o.stdout).into_owned()
    }

    /// Save new notes as the next revision of `name` on `bench`, as user `who` at `when`.
    fn save(&self, bench: &str, name: &str, notes: &str, who: &str, when: &str) {
        let mut lib = Library::at(&self.library(bench)).unwrap();
        lib.user = Some(who.to_string());
        let opened = lib.open(name).unwrap();
        let r = fillwright::recipe::Recipe { notes: notes.to_string(), ..opened.recipe.clone() };
        lib.save(name, &r, Some(&opened), None, when, OnConflict::Refuse).unwrap();
    }
}

impl Drop for Lab {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.root);
    }
}

/// No file under `dir` (the .git folder aside) holds a conflict marker.
fn no_conflict_markers(dir: &Path) {
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let p = e.path();
            if e.file_name() == ".git" {
                continue;
            }
            if e.file_type().unwrap().is_dir() {
                stack.push(p);
            } else if let Ok(text) = std::fs::read_to_string(&p) {
                assert!(!text.contains("<<<<<<<") && !text.contains(">>>>>>>"), "conflict markers in {}", p.display());
            }
        }
    }
}

fn history_notes(dir: &Path, name: &str) -> Vec<(u64, String)> {
    let lib = Library::at(dir).unwrap();
    lib.history(name).unwrap().iter().map(|r| (r.revision, lib.revision(name, r.revision).unwrap().notes)).collect()
}

#[test]
fn a_recipe_saved_on_both_benches_keeps_both_as_consecutive_revisions() {
    let lab = Lab::new("both");
    lab.save("a", "flue-gas-span", "bench A's change", "bench A", "2026-12-04T09:00:00Z");
    lab.save("b", "flue-gas-span", "bench B's change", "bench B", "2026-12-04T09:30:00Z");
    // Records are per cylinder: each bench's merges without conflict.
    for (bench, id) in [("a", "FC-1-20261204"), ("b", "FC-2-20261204")] {
        let dir = lab.library(bench).join("records");
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::copy("tests/records/flue-gas-made.ron", dir.join(format!("{id}.ron"))).unwrap();
    }
    assert!(lab.sync_ok("a").contains("sent"));
    let said = lab.sync_ok("b");
    assert!(said.contains("brought in") && said.contains("flue-gas-span"), "{said}");
    lab.sync_ok("a");
    for bench in ["a", "b"] {
        let dir = lab.library(bench);
        no_conflict_markers(&dir);
        // Revision 1 the demo, 2 bench A's (the earlier), 3 bench B's with the note.
        let notes = history_notes(&dir, "flue-gas-span");
        let revisions: Vec<u64> = notes.iter().map(|n| n.0).collect();
        assert_eq!(revisions, vec![1, 2, 3], "{bench}: {notes:?}");
        assert_eq!(notes[1].1, "bench A's change");
        assert_eq!(notes[2].1, "bench B's change");
        let current = Library::at(&dir).unwrap().open("flue-gas-span").unwrap().recipe;
        let note = current.change_note.unwrap_or_default();
        assert!(note.contains("bench A") && note.contains("bench B"), "{note}");
        assert!(dir.join("records/FC-1-20261204.ron").is_file() && dir.join("records/FC-2-20261204.ron").is_file());
    }
    // Both benches hold the same commit, and it is on the lab server.
    let head =
        |bench: &str| String::from_utf8_lossy(&git(&lab.library(bench), &["rev-parse", "HEAD"]).stdout).to_string();
    assert_eq!(head("a"), head("b"));
    assert!(lab.sync_ok("b").contains("in step"));
}

#[test]
fn several_saves_on_each_bench_make_one_gap_free_history() {
    let lab = Lab::new("several");
    lab.save("a", "lpg-in-methane", "A1", "bench A", "2026-12-04T09:00:00Z");
    lab.save("a", "lpg-in-methane", "A2", "bench A", "2026-12-04T09:10:00Z");
    lab.save("b", "lpg-in-methane", "B1", "bench B", "2026-12-04T09:05:00Z");
    lab.save("b", "lpg-in-methane", "B2", "bench B", "2026-12-04T09:20:00Z");
    lab.sync_ok("a");
    lab.sync_ok("b");
    lab.sync_ok("a");
    for bench in ["a", "b"] {
        let notes = history_notes(&lab.library(bench), "lpg-in-methane");
        let texts: Vec<&str> = notes.iter().map(|n| n.1.as_str()).collect();
        assert_eq!(notes.iter().map(|n| n.0).collect::<Vec<_>>(), vec![1, 2, 3, 4, 5], "{notes:?}");
        assert_eq!(&texts[1..], ["A1", "A2", "B1", "B2"], "{bench}");
        no_conflict_markers(&lab.library(bench));
    }
}

#[test]
fn a_library_without_a_remote_or_outside_git_is_refused_with_a_message() {
    let root = common::temp_dir().join(format!("fillwright-sync-none-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    std::fs::create_dir_all(root.join("lib")).unwrap();
    let lib = root.join("lib");
    let o = common::run_in(&root.join("config"), &["sync", "--library", lib.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("not a git work tree"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    git(&lib, &["init", "--quiet"]);
    let o = common::run_in(&root.join("config"), &["sync", "--library", lib.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no git remote"), "{}", String::from_utf8_lossy(&o.stderr));
    let _ = std::fs::remove_dir_all(&root);
}

#[test]
fn a_sync_killed_midway_leaves_the_library_whole_and_the_next_one_completes_it() {
    let lab = Lab::new("kill");
    for (k, delay_ms) in [2u64, 10, 25, 50, 100].into_iter().enumerate() {
        let name = "nox-span-premix";
        lab.save("a", name, &format!("A{k}"), "bench A", &format!("2026-12-04T1{k}:00:00Z"));
        lab.sync_ok("a");
        lab.save("b", name, &format!("B{k}"), "bench B", &format!("2026-12-04T1{k}:30:00Z"));
        let lib = lab.library("b");
        let mut child = Command::new(env!("CARGO_BIN_EXE_fillwright"))
            .args(["sync", "--library", lib.to_str().unwrap()])
            .env("FILLWRIGHT_CONFIG", lab.root.join("b-config"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(Duration::from_millis(delay_ms));
        let _ = child.kill();
        let _ = child.wait();
        // As it was, or completed: every recipe reads, no conflict markers.
        no_conflict_markers(&lib);
        let current = Library::at(&lib).unwrap().open(name).unwrap().recipe;
        assert!(current.notes == format!("B{k}"), "after a kill at {delay_ms} ms: {}", current.notes);
        // The next sync completes it: both changes kept.
        lab.sync_ok("b");
        let notes = history_notes(&lib, name);
        assert!(
            notes.iter().any(|n| n.1 == format!("A{k}")) && notes.iter().any(|n| n.1 == format!("B{k}")),
            "{notes:?}"
        );
        let revisions: Vec<u64> = notes.iter().map(|n| n.0).collect();
        assert_eq!(revisions, (1..=revisions.len() as u64).collect::<Vec<_>>(), "gap-free");
        lab.sync_ok("a");
    }
}

#[test]
fn a_recipe_deleted_on_one_bench_and_edited_on_the_other_is_kept_edited() {
    let lab = Lab::new("delete-edit");
    let lib_a = Library::at(&lab.library("a")).unwrap();
    lib_a.delete("laser-co2-he-n2", "2026-12-04T09:00:00Z").unwrap();
    lab.save("b", "laser-co2-he-n2", "edited on B", "bench B", "2026-12-04T09:30:00Z");
    lab.sync_ok("a");
    lab.sync_ok("b");
    lab.sync_ok("a");
    for bench in ["a", "b"] {
        let dir = lab.library(bench);
        no_conflict_markers(&dir);
        let notes = history_notes(&dir, "laser-co2-he-n2");
        assert_eq!(notes.iter().map(|n| n.0).collect::<Vec<_>>(), vec![1, 2], "{bench}: {notes:?}");
        assert_eq!(notes[1].1, "edited on B", "{bench}");
    }
}

#[test]
fn locks_left_by_a_killed_sync_are_cleared_and_a_save_made_since_is_kept() {
    let lab = Lab::new("stale");
    let lib = lab.library("b");
    let git_dir = lib.join(".git");
    // What a sync killed while moving the library leaves: git's locks and the marker.
    let head = String::from_utf8_lossy(&git(&lib, &["rev-parse", "HEAD"]).stdout).trim().to_string();
    std::fs::write(git_dir.join("HEAD.lock"), "").unwrap();
    std::fs::write(git_dir.join("index.lock"), "").unwrap();
    std::fs::write(git_dir.join("fillwright-sync-target"), &head).unwrap();
    // A save made after the kill.
    lab.save("b", "flue-gas-span", "saved after the kill", "bench B", "2026-12-04T12:00:00Z");
    let said = lab.sync_ok("b");
    assert!(said.contains("sent"), "{said}");
    let notes = history_notes(&lib, "flue-gas-span");
    assert_eq!(notes.last().unwrap().1, "saved after the kill", "{notes:?}");
    assert!(!git_dir.join("HEAD.lock").exists() && !git_dir.join("fillwright-sync-target").exists());
    lab.sync_ok("a");
    assert_eq!(history_notes(&lab.library("a"), "flue-gas-span").last().unwrap().1, "saved after the kill");
}

#[test]
fn a_remote_that_cannot_be_reached_is_a_message_and_exit_1() {
    let lab = Lab::new("unreachable");
    let lib = lab.library("a");
    git(&lib, &["remote", "set-url", "origin", &lab.root.join("no-such-server.git").display().to_string()]);
    let o = lab.fillwright("a", &["sync"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("git fetch"), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn the_first_sync_of_a_new_clone_says_what_it_brought_in() {
    let lab = Lab::new("first");
    let root = &lab.root;
    // A bench whose library was made before the lab's repository had anything in it.
    let lib = root.join("c-lib");
    assert!(git(root, &["init", "--quiet", "-b", "main", "c-lib"]).status.success());
    git(&lib, &["remote", "add", "origin", root.join("lab.git").to_str().unwrap()]);
    let o = common::run_in(&root.join("c-config"), &["sync", "--library", lib.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stdout).contains("brought in"), "{}", String::from_utf8_lossy(&o.stdout));
    assert!(lib.join("flue-gas-span.ron").is_file());
}
