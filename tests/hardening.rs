//! Faults and hostile input, tried with real processes: concurrent writers, planted
//! symbolic links and FIFOs, stale temporary files, look-alike names, long values.

mod common;

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use common::run_in;
use fillwright::library::{check_name, Library, LibraryError, OnConflict};

/// A config folder of the test's own with the demo library copied in.
fn config(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-hard-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let o = run_in(&dir, &["list"]);
    assert!(o.status.success(), "{}", err(&o));
    dir
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn spawn(config: &Path, args: &[&str]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", config)
        .env_remove("FILLWRIGHT_LIBRARY")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

/// Wait for a child, killing it when it runs longer than `limit` (a hang is a failure,
/// not a stuck test run).
fn finish(mut child: Child, limit: Duration) -> Output {
    let start = Instant::now();
    loop {
        if child.try_wait().unwrap().is_some() {
            return child.wait_with_output().unwrap();
        }
        if start.elapsed() > limit {
            let _ = child.kill();
            let o = child.wait_with_output().unwrap();
            panic!("still running after {limit:?}: {}", err(&o));
        }
        std::thread::sleep(Duration::from_millis(10));
    }
}

const T1: &str = "2026-12-01T10:00:00Z";

#[test]
fn concurrent_restores_become_consecutive_revisions_and_none_is_lost() {
    let config = config("restores");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    for name in ["flue-gas-span", "lpg-in-methane", "nox-span-premix"] {
        // Revisions 1 to 7, each different; then six processes at once each restore
        // another of 1 to 6, so that every restore changes the recipe.
        for n in 2..=7 {
            let opened = lib.open(name).unwrap();
            let mut r = opened.recipe.clone();
            r.notes = format!("version {n}");
            lib.save(name, &r, Some(&opened), None, T1, OnConflict::Refuse).unwrap();
        }
        let children: Vec<Child> =
            (1..=6).map(|r| spawn(&config, &["history", name, "--restore", &r.to_string()])).collect();
        let mut said = BTreeSet::new();
        for child in children {
            let o = finish(child, Duration::from_secs(60));
            assert!(o.status.success(), "{name}: {}", err(&o));
            let text = out(&o);
            let rev: u64 = text
                .split("saved revision ")
                .nth(1)
                .and_then(|t| t.split(' ').next())
                .and_then(|t| t.parse().ok())
                .unwrap_or_else(|| panic!("{name}: {text}"));
            assert!(said.insert(rev), "{name}: two restores both said revision {rev}");
        }
        assert_eq!(said, (8..=13).collect::<BTreeSet<u64>>(), "{name}");
        // Every revision is kept, in the file or in the history, and the six restores are
        // six different ones.
        let history = lib.history(name).unwrap();
        assert_eq!(history.iter().map(|r| r.revision).collect::<Vec<_>>(), (1..=13).collect::<Vec<_>>());
        let notes: BTreeSet<String> = history.iter().skip(7).map(|r| r.note.clone().unwrap_or_default()).collect();
        let expected: BTreeSet<String> = (1..=6).map(|r| format!("restored revision {r}")).collect();
        assert_eq!(notes, expected, "{name}");
    }
    assert!(!dir.read_dir().unwrap().flatten().any(|e| e.file_name().to_string_lossy().ends_with(".tmp")));
}

#[test]
fn concurrent_imports_under_one_name_keep_exactly_one_and_refuse_the_rest() {
    let config = config("imports");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    let base = lib.open("flue-gas-span").unwrap().text;
    let files: Vec<PathBuf> = (0..6)
        .map(|i| {
            let f = config.join(format!("candidate-{i}.ron"));
            std::fs::write(&f, base.replace("notes: \"", &format!("notes: \"candidate {i}. "))).unwrap();
            f
        })
        .collect();
    for round in 0..4 {
        let name = format!("same-{round}");
        let children: Vec<Child> =
            files.iter().map(|f| spawn(&config, &["import", f.to_str().unwrap(), "--name", &name])).collect();
        let outputs: Vec<Output> = children.into_iter().map(|c| finish(c, Duration::from_secs(60))).collect();
        let winners: Vec<usize> = (0..outputs.len()).filter(|&i| outputs[i].status.success()).collect();
        assert_eq!(winners.len(), 1, "round {round}: {:?}", outputs.iter().map(err).collect::<Vec<_>>());
        for (i, o) in outputs.iter().enumerate().filter(|(i, _)| *i != winners[0]) {
            assert_eq!(o.status.code(), Some(1), "candidate {i}");
            assert!(err(o).contains("already exists"), "{}", err(o));
        }
        let kept = lib.open(&name).unwrap().recipe;
        assert!(kept.notes.starts_with(&format!("candidate {}.", winners[0])), "{}", kept.notes);
        assert_eq!(kept.revision, 1);
    }
}

#[test]
fn the_library_never_writes_through_a_planted_link() {
    let config = config("links");
    let dir = config.join("library");
    let out_dir = config.join("out");
    std::fs::create_dir_all(&out_dir).unwrap();
    let lib = Library::at(&dir).unwrap();
    let first = lib.open("flue-gas-span").unwrap();
    let mut second = first.recipe.clone();
    second.notes = "second".into();
    lib.save("flue-gas-span", &second, Some(&first), None, T1, OnConflict::Refuse).unwrap();
    std::fs::rename(dir.join(".history"), config.join("real-history")).unwrap();
    let opened = lib.open("flue-gas-span").unwrap();
    let mut changed = opened.recipe.clone();
    changed.notes = "changed".into();

    // `.history` pointing out of the library: the save is refused and writes nothing.
    std::os::unix::fs::symlink("../out", dir.join(".history")).unwrap();
    let e = lib.save("flue-gas-span", &changed, Some(&opened), None, T1, OnConflict::Refuse).unwrap_err();
    assert!(matches!(e, LibraryError::Unsafe { .. }), "{e}");
    assert!(e.to_string().contains("symbolic link"), "{e}");
    let o = run_in(&config, &["history", "flue-gas-span", "--restore", "1"]);
    assert_eq!(o.status.code(), Some(1), "{}", out(&o));
    assert_eq!(std::fs::read_dir(&out_dir).unwrap().count(), 0);
    assert_eq!(lib.open("flue-gas-span").unwrap().text, opened.text, "the recipe itself was replaced");

    // `.history/NAME` pointing elsewhere: the same.
    std::fs::remove_file(dir.join(".history")).unwrap();
    std::fs::create_dir_all(dir.join(".history")).unwrap();
    std::os::unix::fs::symlink(&out_dir, dir.join(".history").join("flue-gas-span")).unwrap();
    assert!(matches!(
        lib.save("flue-gas-span", &changed, Some(&opened), None, T1, OnConflict::Refuse),
        Err(LibraryError::Unsafe { .. })
    ));
    assert_eq!(std::fs::read_dir(&out_dir).unwrap().count(), 0);

    // `.trash` pointing out: delete is refused and the recipe stays.
    std::os::unix::fs::symlink("../out", dir.join(".trash")).unwrap();
    let o = run_in(&config, &["delete", "lpg-in-methane"]);
    assert_eq!(o.status.code(), Some(1), "{}", out(&o));
    assert!(err(&o).contains(".trash") && err(&o).contains("symbolic link"), "{}", err(&o));
    assert!(dir.join("lpg-in-methane.ron").is_file());
    assert_eq!(std::fs::read_dir(&out_dir).unwrap().count(), 0);

    // A recipe that is a link to a file outside: not read, and nothing of it quoted.
    let secret = config.join("secret.txt");
    std::fs::write(&secret, "hunter2 is the password\n").unwrap();
    std::os::unix::fs::symlink(&secret, dir.join("stolen.ron")).unwrap();
    for args in [&["plan", "stolen"][..], &["check", "stolen"], &["history", "stolen"]] {
        let o = run_in(&config, args);
        assert_eq!(o.status.code(), Some(1), "{args:?}");
        assert!(err(&o).contains("outside the library"), "{args:?}: {}", err(&o));
        assert!(!err(&o).contains("hunter2"), "{}", err(&o));
    }
    let o = run_in(&config, &["list"]);
    assert!(out(&o).contains("stolen") && out(&o).contains("outside the library"), "{}", out(&o));
    // Saving over the link is refused; the target is untouched.
    let e = lib.save("stolen", &changed, None, None, T1, OnConflict::Overwrite).unwrap_err();
    assert!(e.to_string().contains("symbolic link"), "{e}");
    assert_eq!(std::fs::read_to_string(&secret).unwrap(), "hunter2 is the password\n");

    // A link to a recipe inside the library is read like the recipe.
    std::os::unix::fs::symlink("nox-span-premix.ron", dir.join("nox-alias.ron")).unwrap();
    assert_eq!(lib.open("nox-alias").unwrap().recipe, lib.open("nox-span-premix").unwrap().recipe);

    // A file that is not a recipe at all: the message does not quote it.
    std::fs::write(config.join("passwd.ron"), "root:x:0:0:root:/root:/bin/bash\n").unwrap();
    let o = run_in(&config, &["plan", config.join("passwd.ron").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("not a recipe") && !err(&o).contains("root"), "{}", err(&o));
}

#[test]
fn a_fifo_is_refused_at_once_by_every_reader_and_named_by_list() {
    let config = config("fifo");
    let dir = config.join("library");
    let fifo = dir.join("pipe.ron");
    let made = Command::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(made.success());
    let f = fifo.to_str().unwrap();
    let d = dir.to_str().unwrap();
    for args in [
        &["plan", f][..],
        &["plan", "pipe"],
        &["check", f],
        &["tidy", "--check", f],
        &["import", f, "--name", "from-pipe"],
        &["check", d],
    ] {
        let o = finish(spawn(&config, args), Duration::from_secs(30));
        assert_ne!(o.status.code(), Some(0), "{args:?}");
        assert!(err(&o).contains("FIFO") || out(&o).contains("FIFO"), "{args:?}: {}", err(&o));
    }
    let o = run_in(&config, &["list"]);
    let line = out(&o).lines().find(|l| l.starts_with("pipe")).map(str::to_string).unwrap_or_default();
    assert!(line.contains("skipped") && line.contains("FIFO"), "{}", out(&o));
    // A settings file that is a FIFO does not hang the program either.
    let settings = config.join("settings.ron");
    assert!(Command::new("mkfifo").arg(&settings).status().unwrap().success());
    let o = finish(spawn(&config, &["plan", "flue-gas-span"]), Duration::from_secs(30));
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("settings.ron") && err(&o).contains("FIFO"), "{}", err(&o));
    std::fs::remove_file(&settings).unwrap();
    // A folder named like a recipe is named too.
    std::fs::create_dir(dir.join("folder.ron")).unwrap();
    let o = run_in(&config, &["list"]);
    assert!(out(&o).lines().any(|l| l.starts_with("folder") && l.contains("a folder")), "{}", out(&o));
}

#[test]
fn temporary_files_of_killed_writers_are_cleared_by_the_next_write() {
    let config = config("stale");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    // Kill real writers while they work: whatever they leave, the next write clears.
    for _ in 0..12 {
        let mut c = spawn(&config, &["history", "flue-gas-span", "--restore", "1"]);
        std::thread::sleep(Duration::from_millis(3));
        let _ = c.kill();
        let _ = c.wait();
    }
    // And plant what a writer killed mid-write leaves, in the library and its history.
    let mut child = Command::new("true").spawn().unwrap();
    let dead = child.id();
    child.wait().unwrap();
    std::fs::create_dir_all(dir.join(".history/flue-gas-span")).unwrap();
    let planted = [
        dir.join(format!(".flue-gas-span.ron.{dead}.tmp")),
        dir.join(format!(".history/flue-gas-span/.0001.ron.{dead}.tmp")),
    ];
    for p in &planted {
        std::fs::write(p, "half a recipe").unwrap();
    }
    let other = dir.join("notes.tmp");
    std::fs::write(&other, "not ours").unwrap();
    let opened = lib.open("flue-gas-span").unwrap();
    let mut r = opened.recipe.clone();
    r.notes = "after the kills".into();
    lib.save("flue-gas-span", &r, Some(&opened), None, T1, OnConflict::Refuse).unwrap();
    for folder in [dir.clone(), dir.join(".history/flue-gas-span")] {
        let left: Vec<String> = std::fs::read_dir(&folder)
            .unwrap()
            .flatten()
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".tmp") && n.starts_with('.'))
            .collect();
        assert!(left.is_empty(), "{}: {left:?}", folder.display());
    }
    assert!(other.is_file(), "a file not of our pattern was removed");
}

#[test]
fn look_alike_names_are_refused() {
    for bad in ["flue\u{200B}gas", "\u{202E}nap-sag", "span\u{2066}", "soft\u{00AD}hyphen", "bom\u{FEFF}"] {
        let e = check_name(bad).unwrap_err();
        assert!(e.to_string().contains("invisible"), "{bad:?}: {e}");
    }
    let config = config("lookalike");
    let dir = config.join("library");
    let lib = Library::at(&dir).unwrap();
    let r = lib.open("flue-gas-span").unwrap().recipe;
    let e = lib.save_as("Flue-Gas-Span", &r, T1).unwrap_err();
    assert!(matches!(e, LibraryError::LookAlike { .. }), "{e}");
    assert!(e.to_string().contains("case"), "{e}");
    // A file planted with an invisible character: the plain name is refused beside it,
    // and the planted one is listed as skipped.
    std::fs::write(dir.join("span\u{200B}x.ron"), lib.open("flue-gas-span").unwrap().text).unwrap();
    let e = lib.save_as("spanx", &r, T1).unwrap_err();
    assert!(e.to_string().contains("invisible"), "{e}");
    let o = run_in(&config, &["import", dir.join("flue-gas-span.ron").to_str().unwrap(), "--name", "nox\u{202E}x"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("invisible"), "{}", err(&o));
    let o = run_in(&config, &["list"]);
    assert!(out(&o).lines().any(|l| l.contains("skipped") && l.contains("not allowed")), "{}", out(&o));
    // Renaming onto a look-alike is refused as well.
    let e = lib.rename("lpg-in-methane", "LPG-in-methane");
    assert!(matches!(e, Err(LibraryError::LookAlike { .. })), "{e:?}");
}

#[test]
fn a_failed_commit_keeps_the_save_and_exits_4() {
    let config = config("git-fails");
    std::fs::write(config.join("settings.ron"), "(git_commit_on_save: true)").unwrap();
    let file = config.join("new.ron");
    std::fs::copy(config.join("library/flue-gas-span.ron"), &file).unwrap();
    let o = run_in(&config, &["import", file.to_str().unwrap(), "--name", "committed-or-not"]);
    assert_eq!(o.status.code(), Some(4), "{}", err(&o));
    assert!(out(&o).contains("saved revision 1"), "{}", out(&o));
    assert!(err(&o).contains("not committed") && err(&o).contains("not a git work tree"), "{}", err(&o));
    assert!(config.join("library/committed-or-not.ron").is_file());
}

#[test]
fn huge_values_are_shortened_in_messages() {
    let big = format!("{}L", "9".repeat(100_000));
    let o = common::run_fillwright(
        "huge",
        &["state", "--mix", "N2", "--temp", "15C", "--volume", &big, "--amount", "1mol"],
    );
    assert_eq!(o.status.code(), Some(1));
    let e = err(&o);
    assert!(e.len() < 600, "{} bytes of message", e.len());
    assert!(e.contains("--volume") && e.contains("characters left out"), "{e}");
}

#[test]
fn check_over_many_files_screens_every_readable_one_and_exits_with_the_worst() {
    let config = config("many");
    let dir = config.join("library");
    std::fs::write(dir.join("broken.ron"), "Recipe(format: 1, name: ").unwrap();
    let o = run_in(&config, &["check", dir.to_str().unwrap(), "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let screened: BTreeSet<String> =
        v["checks"].as_array().unwrap().iter().map(|c| c["recipe"].as_str().unwrap().to_string()).collect();
    let readable = std::fs::read_dir(&dir)
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().ends_with(".ron") && e.file_name() != "broken.ron")
        .count();
    assert_eq!(screened.len(), readable, "{screened:?}");
    let unreadable = v["unreadable"].as_array().unwrap();
    assert_eq!(unreadable.len(), 1);
    assert!(unreadable[0]["recipe"].as_str().unwrap().ends_with("broken.ron"));
    assert!(unreadable[0]["error"].as_str().unwrap().contains("broken.ron:1:"), "{}", unreadable[0]);
    // No demo recipe is at stop: the broken file decides the status.
    assert_eq!(o.status.code(), Some(1), "{}", err(&o));
    // A stop among them wins over the unreadable one.
    std::fs::write(
        dir.join("over.ron"),
        std::fs::read_to_string(dir.join("flue-gas-span.ron"))
            .unwrap()
            .replace("fill: Pressure(\"150bar\")", "fill: Pressure(\"260bar\")"),
    )
    .unwrap();
    let o = run_in(&config, &["check", dir.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "{}", err(&o));
    let text = out(&o);
    assert!(text.contains("broken.ron: NOT SCREENED"), "{text}");
    assert!(text.contains("over.ron: STOP"), "{text}");
}

#[test]
fn an_inverted_temperature_range_is_refused() {
    let o = common::run_fillwright(
        "inverted",
        &["check", "--mix", "N2", "--volume", "10L", "--pressure", "150bar", "--min-temp", "80C", "--max-temp", "0C"],
    );
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("--min-temp") && err(&o).contains("--max-temp"), "{}", err(&o));
}

fn rating_of(o: &Output) -> serde_json::Value {
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap_or_else(|_| panic!("{}", out(o)));
    v
}

#[test]
fn a_working_or_test_pressure_given_alone_is_rated_against() {
    let order = ["--mix", "N2", "--volume", "10L", "--pressure", "200bar", "--temp", "15C"];
    let run = |extra: &[&str]| {
        let args: Vec<&str> =
            ["check"].iter().chain(&order).chain(extra).chain(&["--format", "json"]).copied().collect();
        common::run_fillwright("alone", &args)
    };
    let rating = |o: &Output| {
        let v = rating_of(o);
        v["checks"].as_array().unwrap().iter().find(|c| c["id"] == "pressure-rating").unwrap().clone()
    };
    // Working pressure alone, below the settled pressure: stop.
    let o = run(&["--working-pressure", "150bar"]);
    assert_eq!(o.status.code(), Some(3));
    assert_eq!(rating(&o)["severity"], "stop");
    // Working pressure alone, above it: a caution that says the test pressure is unknown.
    let o = run(&["--working-pressure", "230bar"]);
    assert_eq!(o.status.code(), Some(0));
    let r = rating(&o);
    assert_eq!(r["severity"], "caution");
    assert!(r["message"].as_str().unwrap().contains("test pressure is unknown"), "{r}");
    // Test pressure alone: the hot pressure (N2 at 200 bar, 15 °C, comes to about 249 bar at
    // 65 °C) is judged against it (a fill above the test pressure itself is refused).
    let o = run(&["--test-pressure", "240bar"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(rating(&o)["message"].as_str().unwrap().contains("above its test pressure"));
    let o = run(&["--test-pressure", "300bar"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(rating(&o)["message"].as_str().unwrap().contains("working pressure is unknown"), "{}", rating(&o));
    // A test pressure below the working pressure is refused, naming both.
    let o = run(&["--working-pressure", "300bar", "--test-pressure", "200bar"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("--test-pressure") && err(&o).contains("--working-pressure"), "{}", err(&o));
}

#[test]
fn plan_and_check_agree_a_fill_above_the_working_pressure_is_a_stop() {
    let order = [
        "--mix",
        "N2",
        "--volume",
        "10L",
        "--pressure",
        "200bar",
        "--temp",
        "15C",
        "--working-pressure",
        "150bar",
        "--test-pressure",
        "300bar",
    ];
    let plan: Vec<&str> = ["plan"].iter().chain(&order).copied().collect();
    let o = common::run_fillwright("over-wp", &plan);
    assert_eq!(o.status.code(), Some(3), "{}", err(&o));
    let text = out(&o);
    assert!(text.starts_with("!!!"), "{text}");
    assert!(text.lines().nth(1).unwrap().contains("STOP"), "{text}");
    assert!(text[..400].contains("above the working pressure"), "{text}");
    assert!(text.contains("FILL SHEET"), "the sheet still follows the banner");
    let json: Vec<&str> = plan.iter().chain(&["--format", "json"]).copied().collect();
    let o = common::run_fillwright("over-wp", &json);
    assert_eq!(o.status.code(), Some(3));
    assert_eq!(rating_of(&o)["rating"]["severity"], "stop");
    let check: Vec<&str> = ["check"].iter().chain(&order).copied().collect();
    let o = common::run_fillwright("over-wp", &check);
    assert_eq!(o.status.code(), Some(3));
    // Within the rating, plan has no banner and exits 0.
    let ok = [
        "plan",
        "--mix",
        "N2",
        "--volume",
        "10L",
        "--pressure",
        "140bar",
        "--working-pressure",
        "150bar",
        "--test-pressure",
        "225bar",
    ];
    let o = common::run_fillwright("over-wp", &ok);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(!out(&o).contains("DO NOT FILL"));
    // Above the test pressure there is no plan at all: refused by both, saying why.
    let over_test = ["--mix", "N2", "--volume", "10L", "--pressure", "200bar", "--test-pressure", "150bar"];
    for cmd in ["plan", "check"] {
        let args: Vec<&str> = [cmd].iter().chain(&over_test).copied().collect();
        let o = common::run_fillwright("over-test", &args);
        assert_eq!(o.status.code(), Some(1), "{cmd}: {}", out(&o));
        assert!(err(&o).contains("above the cylinder's test pressure"), "{cmd}: {}", err(&o));
    }
}

#[test]
fn a_warm_fill_reading_above_the_working_pressure_that_settles_within_it_is_explained() {
    let config = config("warm");
    // N2 to 195 bar at 15 °C, filled at 35 °C: the last reading is above 200 bar while the
    // settled pressure stays below the working pressure.
    let text = std::fs::read_to_string(config.join("library/flue-gas-span.ron"))
        .unwrap()
        .replace("fill: Pressure(\"150bar\")", "fill: Pressure(\"195bar\")");
    let text = text.replace("fill_temperature: \"22C\"", "fill_temperature: \"35C\"");
    assert!(text.contains("fill_temperature: \"35C\""), "the demo recipe changed: {text}");
    let file = config.join("warm.ron");
    std::fs::write(&file, text).unwrap();
    let o = run_in(&config, &["check", file.to_str().unwrap(), "--format", "json"]);
    let v = rating_of(&o);
    let r = v["checks"].as_array().unwrap().iter().find(|c| c["id"] == "pressure-rating").unwrap();
    assert_ne!(r["severity"], "stop", "{r}");
    let details = r["details"].to_string();
    assert!(details.contains("normal while the gas is warm"), "{details}");
}

#[test]
fn negative_and_extreme_values_are_refused_naming_the_option_or_the_place() {
    let base = ["plan", "--mix", "N2", "--volume", "10L"];
    for (option, value) in [
        ("--ambient", "-5bar"),
        ("--working-pressure", "-5bar"),
        ("--test-pressure", "-1MPa"),
        ("--gauge-resolution", "-0.1bar"),
        ("--scale-resolution", "-1g"),
        ("--fill-temp", "-300C"),
        ("--temp", "1e300K"),
        ("--pressure", "1e-300bar"),
    ] {
        let mut args: Vec<&str> = base.to_vec();
        if option != "--pressure" {
            args.extend(["--pressure", "150bar"]);
        }
        args.extend([option, value]);
        let o = common::run_fillwright("negative", &args);
        assert_eq!(o.status.code(), Some(1), "{option} {value}: {}", err(&o));
        assert!(err(&o).contains(option) && err(&o).contains(value), "{option} {value}: {}", err(&o));
    }
    // A state the model cannot reach names the inputs.
    let o = common::run_fillwright(
        "negative",
        &["state", "--mix", "N2", "--temp", "2K", "--volume", "10L", "--pressure", "100bar"],
    );
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("--temp 2K") && err(&o).contains("--pressure 100bar"), "{}", err(&o));
    // Recipe values out of range are placed in the file.
    let config = config("extreme");
    let text = std::fs::read_to_string(config.join("library/flue-gas-span.ron")).unwrap();
    let (line, _) = text.lines().enumerate().find(|(_, l)| l.contains("\"10L\"")).unwrap();
    for value in ["1e308L", "1e-320L"] {
        let file = config.join("extreme.ron");
        std::fs::write(&file, text.replace("\"10L\"", &format!("\"{value}\""))).unwrap();
        let o = run_in(&config, &["plan", file.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(1));
        assert!(err(&o).contains(&format!("extreme.ron:{}:", line + 1)), "{value}: {}", err(&o));
        assert!(err(&o).contains("outside the range"), "{}", err(&o));
    }
}
