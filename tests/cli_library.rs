//! The library commands as a user runs them.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn fresh(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-cli-lib-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

fn run(config: &PathBuf, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", config)
        .env_remove("FILLWRIGHT_LIBRARY")
        .output()
        .unwrap()
}

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn first_list_shows_the_demo_library_with_fill_pressures() {
    let config = fresh("first");
    let o = run(&config, &["list"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(err(&o).contains("copied 7 demo recipes"), "{}", err(&o));
    let text = out(&o);
    assert!(text.contains(&config.join("library").display().to_string()));
    let flue = text.lines().find(|l| l.starts_with("flue-gas-span")).unwrap();
    assert!(flue.contains("150bar") && flue.contains("10L, 200bar") && flue.contains("   1  "), "{flue}");
    // The second time nothing is copied.
    let o = run(&config, &["list", "--format", "json"]);
    assert!(!err(&o).contains("copied"));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["recipes"].as_array().unwrap().len(), 7);
    // A library name plans.
    let o = run(&config, &["plan", "pipeline-ng-9", "--format", "csv"]);
    assert!(o.status.success());
}

#[test]
fn history_diff_and_restore() {
    let config = fresh("history");
    run(&config, &["list"]);
    let lib = config.join("library");
    // Edit the file as a second program would, then import the change as a new revision.
    let path = lib.join("flue-gas-span.ron");
    let edited =
        std::fs::read_to_string(&path).unwrap().replace("\"15%\"", "\"14%\"").replace("\"150bar\"", "\"200bar\"");
    let new_file = config.join("edited.ron");
    std::fs::write(&new_file, edited).unwrap();
    let o = run(&config, &["import", new_file.to_str().unwrap(), "--name", "flue-v2"]);
    assert!(o.status.success(), "{}", err(&o));
    let o = run(&config, &["history", "flue-gas-span"]);
    assert!(out(&o).contains("   1  "), "{}", out(&o));
    let o = run(&config, &["copy", "flue-gas-span", "flue-b"]);
    assert!(o.status.success(), "{}", err(&o));
    let o = run(&config, &["history", "nope"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("no recipe \"nope\""));
    let o = run(&config, &["history", "flue-gas-span", "--diff", "1", "7"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("no revision 7"), "{}", err(&o));
    let o = run(&config, &["delete", "flue-b"]);
    assert!(out(&o).contains("recoverable"));
    let o = run(&config, &["rename", "flue-v2", "../x"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("path separator"), "{}", err(&o));
}

#[test]
fn tidy_check_names_untidy_files_and_tidy_fixes_them() {
    let config = fresh("tidy");
    std::fs::create_dir_all(&config).unwrap();
    let messy = config.join("messy.ron");
    std::fs::write(&messy, "Recipe(format:1,name:\"m\",components:[(gas:\"N2\",amount:\"balance\")],cylinder:(water_capacity:\"10L\",working_pressure:\"200bar\",test_pressure:\"300bar\"),fill:Pressure(\"150bar\"))").unwrap();
    let shipped = concat!(env!("CARGO_MANIFEST_DIR"), "/mixtures/flue-gas-span.ron");
    let o = run(&config, &["tidy", "--check", shipped]);
    assert_eq!(o.status.code(), Some(0), "the shipped demo recipes are canonical: {}", err(&o));
    let o = run(&config, &["tidy", "--check", shipped, messy.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("messy.ron") && !err(&o).contains("flue-gas-span"), "{}", err(&o));
    let o = run(&config, &["tidy", messy.to_str().unwrap()]);
    assert!(o.status.success());
    let o = run(&config, &["tidy", "--check", messy.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0));
    let text = std::fs::read_to_string(&messy).unwrap();
    assert!(text.starts_with("Recipe(\n    format: 1,\n    revision: 0,\n"), "{text}");
}

#[test]
fn a_deleted_recipe_comes_back_from_the_trash() {
    let config = fresh("undelete");
    run(&config, &["list"]);
    let o = run(&config, &["delete", "flue-gas-span"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(out(&run(&config, &["undelete"])).contains("flue-gas-span"));
    // Taken again meanwhile: refused, or brought back under another name.
    run(&config, &["copy", "lpg-in-methane", "flue-gas-span"]);
    let o = run(&config, &["undelete", "flue-gas-span"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("exists again") && err(&o).contains("--as flue-gas-span-restored"), "{}", err(&o));
    let o = run(&config, &["undelete", "flue-gas-span", "--as", "flue-gas-span-old"]);
    assert!(o.status.success(), "{}", err(&o));
    let text = std::fs::read_to_string(config.join("library/flue-gas-span-old.ron")).unwrap();
    assert!(text.contains("CO2"), "the deleted recipe came back");
    let o = run(&config, &["undelete", "nothing-like-it"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("trash"), "{}", err(&o));
}

#[test]
fn completions_and_the_manual_come_from_the_command_definitions() {
    let config = fresh("completions");
    let o = run(&config, &["completions", "bash"]);
    assert!(o.status.success());
    let script = out(&o);
    // Every subcommand is completed, including the ones added last.
    for sub in ["plan", "check", "state", "undelete", "certify", "manual"] {
        assert!(script.contains(sub), "{sub} missing from the bash completions");
    }
    assert!(out(&run(&config, &["completions", "zsh"])).contains("#compdef fillwright"));
    let o = run(&config, &["manual"]);
    let page = out(&o);
    assert!(page.contains(".TH fillwright 1") && page.contains("undelete"), "{page}");
    let o = run(&config, &["completions", "tcsh"]);
    assert_eq!(o.status.code(), Some(2), "an unknown shell is wrong usage");
}

#[test]
fn list_history_and_records_give_csv_tables() {
    let config = fresh("csv");
    assert!(run(&config, &["list"]).status.success());
    let o = run(&config, &["list", "--format", "csv"]);
    assert!(o.status.success(), "{}", err(&o));
    let text = out(&o);
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("name,title,fill,cylinder,revision,error"));
    let rows: Vec<&str> = lines.collect();
    let json: serde_json::Value = serde_json::from_slice(&run(&config, &["list", "--format", "json"]).stdout).unwrap();
    assert_eq!(rows.len(), json["recipes"].as_array().unwrap().len(), "{text}");
    // A title with a comma is quoted.
    assert!(rows.iter().any(|r| r.starts_with("flue-gas-span,\"Flue-gas span, four components\",")), "{text}");
    let o = run(&config, &["history", "flue-gas-span", "--format", "csv"]);
    assert!(o.status.success(), "{}", err(&o));
    let text = out(&o);
    assert!(text.starts_with("revision,saved,saved_by,note,records\n1,"), "{text}");
    let o = run(&config, &["history", "flue-gas-span", "--diff", "1", "1", "--format", "csv"]);
    assert_eq!(o.status.code(), Some(2), "{}", out(&o));
    assert!(err(&o).contains("csv is for the list of revisions"), "{}", err(&o));
    let o = run(&config, &["records", "--format", "csv"]);
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(out(&o), "id,recipe,revision,cylinder,started,finished,state,error,certified\n");
    let _ = std::fs::remove_dir_all(&config);
}

#[test]
fn the_records_list_shows_the_start_date_whole_and_counts_in_words() {
    let config = fresh("records-words");
    assert!(run(&config, &["list"]).status.success());
    let fixture = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/records/flue-gas-made.ron");
    let text = std::fs::read_to_string(fixture).unwrap();
    // A fill started and one weighing in: the empty cylinder.
    let started = text.replacen("    format: 1,", "    format: 1,\n    started: Some(\"2026-12-04T09:12:30Z\"),", 1);
    let one = started.replace(
        "weighings: [\"13412.000g\", \"13504.850g\", \"13942.450g\", \"15473.450g\"]",
        "weighings: [\"13412.000g\"]",
    );
    assert_ne!(one, started, "the fixture's weighings were found");
    let records = config.join("library/records");
    std::fs::create_dir_all(&records).unwrap();
    std::fs::write(records.join("2026-12-04-flue-gas-span.ron"), &one).unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["records"])
        .env("FILLWRIGHT_CONFIG", &config)
        .env_remove("FILLWRIGHT_LIBRARY")
        .env("COLUMNS", "200")
        .output()
        .unwrap();
    let listed = out(&o);
    assert!(o.status.success(), "{}", err(&o));
    assert!(listed.contains(" 2026-12-04 "), "the start date whole:\n{listed}");
    assert!(listed.contains("\n2026-12-04-flue-gas-span "), "the record id whole (certify takes it):\n{listed}");
    assert!(listed.contains("in progress, 1 weighing\n"), "one weighing, singular:\n{listed}");
    assert!(listed.lines().all(|l| l.chars().count() <= 80), "{listed}");
}

#[test]
fn slips_in_names_are_named_with_the_nearest_and_exit_1() {
    let config = fresh("slips");
    assert!(run(&config, &["list"]).status.success());
    let o = run(&config, &["plan", "flue-gas-spam"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("did you mean \"flue-gas-span\"?"), "{}", err(&o));
    let o = run(&config, &["plan", "missing.ron"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("missing.ron: no such file; a recipe is a file, a library name"), "{}", err(&o));
    // A recipe the library does not hold is not "a recipe without fill records".
    let o = run(&config, &["records", "flue-gas-spam"]);
    assert_eq!(o.status.code(), Some(1), "{}", out(&o));
    assert!(
        err(&o).contains("no recipe \"flue-gas-spam\" in the library (did you mean \"flue-gas-span\"?)"),
        "{}",
        err(&o)
    );
    let o = run(&config, &["records", "flue-gas-span"]);
    assert!(o.status.success() && out(&o).contains("(no fill records)"), "{}", err(&o));
    let o = run(&config, &["state", "--mix", "NN", "--temp", "15C", "--volume", "10L", "--amount", "1mol"]);
    assert!(err(&o).contains("did you mean N2"), "{}", err(&o));
    let _ = std::fs::remove_dir_all(&config);
}

/// The entry `list --format json` gives for `name`.
fn listed(config: &PathBuf, name: &str) -> serde_json::Value {
    let o = run(config, &["list", "--format", "json"]);
    assert!(o.status.success(), "{}", err(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    v["recipes"].as_array().unwrap().iter().find(|e| e["name"] == name).cloned().unwrap()
}

/// The title `list` shows for `name`.
fn listed_title(config: &PathBuf, name: &str) -> String {
    let entry = listed(config, name);
    entry["title"].as_str().unwrap_or_else(|| panic!("{entry}")).to_string()
}

#[test]
fn list_takes_unchanged_recipes_from_its_index_and_reads_every_change() {
    let config = fresh("index");
    assert!(run(&config, &["list"]).status.success());
    let library = config.join("library");
    let index = library.join(".index/briefs.json");
    // Just written: not settled, so not indexed yet (a second change in the same tick of
    // the file system's clock could keep the stamp).
    assert_eq!(listed_title(&config, "laser-co2-he-n2"), "CO2 laser gas");
    assert!(!index.exists(), "indexed files changed within the last seconds");
    std::thread::sleep(std::time::Duration::from_millis(3200));
    assert_eq!(listed_title(&config, "laser-co2-he-n2"), "CO2 laser gas");
    let text = std::fs::read_to_string(&index).expect("the index is written once the files have settled");
    assert!(text.contains("\"flue-gas-span\"") && text.contains("\"10L, 200bar\""), "{text}");
    // The index is what is shown for an unchanged file: a title changed in the index alone
    // comes out (proof that the file was not read again).
    std::fs::write(&index, text.replace("\"title\":\"CO2 laser gas\"", "\"title\":\"as indexed\"")).unwrap();
    assert_eq!(listed_title(&config, "laser-co2-he-n2"), "as indexed");
    // A change to the file, in place and of the same length, is read at once.
    let recipe = library.join("laser-co2-he-n2.ron");
    let body = std::fs::read_to_string(&recipe).unwrap();
    std::fs::write(&recipe, body.replacen("name: \"CO2 laser gas\"", "name: \"CO2 laser gaz\"", 1)).unwrap();
    assert_eq!(listed_title(&config, "laser-co2-he-n2"), "CO2 laser gaz");
    // A file that no longer parses is listed with its error, not its old brief.
    std::fs::write(&recipe, "Recipe(").unwrap();
    let entry = listed(&config, "laser-co2-he-n2");
    assert!(entry["error"].is_string() && entry["title"].is_null(), "{entry}");
    // A damaged index is ignored and made again.
    std::fs::write(&index, "{ not json").unwrap();
    assert!(!listed_title(&config, "flue-gas-span").is_empty());
    let again: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&index).unwrap()).unwrap();
    assert!(again["briefs"]["flue-gas-span"].is_array(), "{again}");
}

#[test]
fn a_link_planted_as_the_index_is_neither_read_nor_written_through() {
    let config = fresh("index-link");
    assert!(run(&config, &["list"]).status.success());
    let library = config.join("library");
    let elsewhere = config.join("elsewhere");
    std::fs::create_dir_all(&elsewhere).unwrap();
    // An index elsewhere that would put a false title on the list: it carries the file's
    // true stamp, so it would be believed if it were read.
    use std::os::unix::fs::MetadataExt;
    let m = std::fs::metadata(library.join("flue-gas-span.ron")).unwrap();
    let planted = serde_json::json!({"format": 1, "briefs": {"flue-gas-span": [
        {"dev": m.dev(), "ino": m.ino(), "size": m.size(), "mtime": m.mtime(), "mtime_ns": m.mtime_nsec(),
         "ctime": m.ctime(), "ctime_ns": m.ctime_nsec()},
        {"title": "planted", "fill": "1bar", "cylinder": "1L, 1bar", "revision": 9}]}});
    std::fs::write(elsewhere.join("briefs.json"), planted.to_string()).unwrap();
    std::os::unix::fs::symlink(&elsewhere, library.join(".index")).unwrap();
    std::thread::sleep(std::time::Duration::from_millis(3200));
    let before = std::fs::read_to_string(elsewhere.join("briefs.json")).unwrap();
    assert_eq!(listed_title(&config, "flue-gas-span"), "Flue-gas span, four components");
    assert_eq!(std::fs::read_to_string(elsewhere.join("briefs.json")).unwrap(), before);
    assert_eq!(std::fs::read_dir(&elsewhere).unwrap().count(), 1, "nothing written through the link");
    // The same file as the library's own index is believed: the link alone kept it out.
    std::fs::remove_file(library.join(".index")).unwrap();
    std::fs::create_dir(library.join(".index")).unwrap();
    std::fs::copy(elsewhere.join("briefs.json"), library.join(".index/briefs.json")).unwrap();
    assert_eq!(listed_title(&config, "flue-gas-span"), "planted");
}
