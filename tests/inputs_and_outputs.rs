//! What the program reads and where it writes, under unlucky or hostile conditions: outputs
//! that are pipes, devices or links; files with a byte-order mark, a NUL byte or cut
//! short; error positions; empty environment variables; a mistyped --library; an
//! unusable settings file; empty mix components; the last revision number.

mod common;

use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

use fillwright::library::{Library, LibraryError, OnConflict};

fn fresh(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-io-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn an_export_into_a_pipe_or_device_writes_into_it_and_a_link_is_refused_unless_asked() {
    let config = fresh("outputs");
    assert!(common::run_in(&config, &["list"]).status.success());
    // A FIFO: written into (a reader takes it), never renamed over.
    let fifo = config.join("pipe");
    assert!(Command::new("mkfifo").arg(&fifo).status().unwrap().success());
    let reader = std::thread::spawn({
        let fifo = fifo.clone();
        move || std::fs::read_to_string(fifo).unwrap()
    });
    let o = common::run_in(&config, &["export", "flue-gas-span", fifo.to_str().unwrap()]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(reader.join().unwrap().starts_with("Recipe("));
    use std::os::unix::fs::FileTypeExt;
    assert!(std::fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo(), "the FIFO was replaced");
    // /dev/stdout: the recipe on standard output, the confirmation beside it.
    let o = common::run_in(&config, &["export", "flue-gas-span", "/dev/stdout"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(out(&o).starts_with("Recipe(") && !out(&o).contains("wrote"), "{}", out(&o));
    // /dev/stdout redirected to a file: the recipe lands in that file.
    let redirected = config.join("redirected.ron");
    let o = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["export", "flue-gas-span", "/dev/stdout"])
        .env("FILLWRIGHT_CONFIG", &config)
        .stdout(Stdio::from(std::fs::File::create(&redirected).unwrap()))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", err(&o));
    assert!(std::fs::read_to_string(&redirected).unwrap().starts_with("Recipe("));
    // A PDF sent to standard output is the whole output: no text follows it.
    let o = common::run_in(
        &config,
        &["certify", "tests/records/flue-gas-made.ron", "--draws", "1000", "--pdf", "/dev/stdout"],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(o.stdout.starts_with(b"%PDF") && o.stdout.trim_ascii_end().ends_with(b"%%EOF"));
    // --replace-link never replaces a system link.
    let o = common::run_in(&config, &["export", "flue-gas-span", "/dev/stdout", "--replace-link"]);
    assert!(o.status.success() || err(&o).contains("never replaced"), "{}", err(&o));
    // A character device (/dev/null) stays a device.
    let o = common::run_in(&config, &["plan", "flue-gas-span", "--pdf", "/dev/null"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(std::fs::metadata("/dev/null").unwrap().file_type().is_char_device());
    // A link: refused, naming the way; --replace-link replaces the link, not its target.
    let target = config.join("target.ron");
    std::fs::write(&target, "keep me").unwrap();
    let link = config.join("link.ron");
    std::os::unix::fs::symlink(&target, &link).unwrap();
    let o = common::run_in(&config, &["export", "flue-gas-span", link.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("symbolic link") && err(&o).contains("--replace-link"), "{}", err(&o));
    assert_eq!(std::fs::read_to_string(&target).unwrap(), "keep me");
    let o = common::run_in(&config, &["export", "flue-gas-span", link.to_str().unwrap(), "--replace-link"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(!std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
    assert_eq!(std::fs::read_to_string(&target).unwrap(), "keep me");
    let o = common::run_in(
        &config,
        &["certify", "tests/records/flue-gas-made.ron", "--draws", "1000", "--pdf", config.to_str().unwrap()],
    );
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("is a folder"), "{}", err(&o));
}

#[test]
fn damaged_files_are_described_as_they_are() {
    let dir = fresh("damaged");
    let good = std::fs::read_to_string("mixtures/flue-gas-span.ron").unwrap();
    // A byte-order mark (as some editors write) is read past.
    let bom = dir.join("bom.ron");
    std::fs::write(&bom, format!("\u{feff}{good}")).unwrap();
    let o = common::run_fillwright("damaged", &["plan", bom.to_str().unwrap()]);
    assert!(o.status.success(), "{}", err(&o));
    // A NUL byte: named as such, at its place.
    let nul = dir.join("nul.ron");
    std::fs::write(&nul, good.replacen("name:", "na\0me:", 1)).unwrap();
    let o = common::run_fillwright("damaged", &["plan", nul.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("NUL byte") && !err(&o).contains("begins with"), "{}", err(&o));
    // Cut short: said so, not "not a recipe".
    let cut = dir.join("cut.ron");
    std::fs::write(&cut, &good[..good.len() / 2]).unwrap();
    let o = common::run_fillwright("damaged", &["plan", cut.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("cut short") && !err(&o).contains("begins with"), "{}", err(&o));
    // Something else entirely is not a recipe.
    let other = dir.join("other.ron");
    std::fs::write(&other, "Settings(format: 1)").unwrap();
    let o = common::run_fillwright("damaged", &["plan", other.to_str().unwrap()]);
    assert!(err(&o).contains("begins with `Recipe(`"), "{}", err(&o));
}

#[test]
fn a_problem_is_placed_at_the_field_not_at_the_word_inside_a_string() {
    let dir = fresh("place");
    let text = "Recipe(\n    format: 1,\n    name: \"x\",\n    description: \"a blend with no components yet\",\n    \
                cylinder: (water_capacity: \"10L\", working_pressure: \"200bar\", test_pressure: \"300bar\"),\n    \
                fill: Pressure(\"150bar\"),\n    components: [],\n)\n";
    let file = dir.join("empty.ron");
    std::fs::write(&file, text).unwrap();
    let o = common::run_fillwright("place", &["plan", file.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("empty.ron:7:5"), "{}", err(&o));
}

#[test]
fn empty_environment_variables_are_unset_and_a_mistyped_library_is_refused() {
    let cwd = fresh("cwd");
    let run = |envs: &[(&str, &str)], args: &[&str]| {
        let mut c = Command::new(env!("CARGO_BIN_EXE_fillwright"));
        c.args(args).current_dir(&cwd).env("HOME", &cwd).env("XDG_CONFIG_HOME", cwd.join("xdg"));
        for (k, v) in envs {
            c.env(k, v);
        }
        c.output().unwrap()
    };
    // FILLWRIGHT_CONFIG= (set, empty) is unset: the library goes to the XDG folder.
    let o = run(&[("FILLWRIGHT_CONFIG", ""), ("FILLWRIGHT_LIBRARY", "")], &["list"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(!cwd.join("library").exists(), "a library was made in the current folder");
    assert!(cwd.join("xdg/fillwright/library/flue-gas-span.ron").is_file());
    // --library with a typo: refused, nothing created.
    let typo = cwd.join("labrary");
    let o = run(&[], &["list", "--library", typo.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("does not exist") && err(&o).contains("--create-library"), "{}", err(&o));
    assert!(!typo.exists());
    // Asked for: made and seeded.
    let o = run(&[], &["list", "--library", typo.to_str().unwrap(), "--create-library"]);
    assert!(o.status.success() && typo.join("flue-gas-span.ron").is_file(), "{}", err(&o));
    // --library before the command is honoured by it.
    std::fs::remove_file(typo.join("lpg-in-methane.ron")).unwrap();
    let o = run(&[], &["--library", typo.to_str().unwrap(), "list"]);
    assert!(o.status.success() && !out(&o).contains("lpg-in-methane"), "{}", out(&o));
}

#[test]
fn an_unusable_settings_file_is_reported_and_the_library_still_opens() {
    let config = fresh("settings");
    assert!(common::run_in(&config, &["list"]).status.success());
    // A folder where settings.ron should be: it cannot be read.
    std::fs::create_dir(config.join("settings.ron")).unwrap();
    let o = common::run_in(&config, &["list"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(out(&o).contains("flue-gas-span"));
    assert!(err(&o).contains("settings.ron") && err(&o).contains("default settings"), "{}", err(&o));
    // A computing command still refuses: its figures depend on the settings.
    let o = common::run_in(&config, &["plan", "flue-gas-span"]);
    assert_eq!(o.status.code(), Some(1));
}

#[test]
fn an_empty_mix_component_is_refused() {
    for mix in ["N2=balance,", "CO2=10%,,N2=balance", ",N2"] {
        let o = common::run_fillwright(
            "mix",
            &["state", "--mix", mix, "--temp", "15C", "--volume", "10L", "--pressure", "100bar"],
        );
        assert_eq!(o.status.code(), Some(1), "{mix}");
        assert!(err(&o).contains("is empty"), "{mix}: {}", err(&o));
    }
}

#[test]
fn the_last_revision_number_is_refused_never_wrapped() {
    let config = fresh("revision");
    assert!(common::run_in(&config, &["list"]).status.success());
    let dir = config.join("library");
    let text = std::fs::read_to_string(dir.join("flue-gas-span.ron")).unwrap();
    std::fs::write(dir.join("flue-gas-span.ron"), text.replace("revision: 1,", "revision: 18446744073709551615,"))
        .unwrap();
    let lib = Library::at(&dir).unwrap();
    let opened = lib.open("flue-gas-span").unwrap();
    assert_eq!(opened.recipe.revision, u64::MAX);
    let mut r = opened.recipe.clone();
    r.notes = "one more".into();
    let e = lib.save("flue-gas-span", &r, Some(&opened), None, "2026-12-04T00:00:00Z", OnConflict::Refuse);
    assert!(matches!(&e, Err(LibraryError::Unsafe { why, .. }) if why.contains("last one")), "{e:?}");
    // 2^32 and beyond are ordinary revisions.
    std::fs::write(dir.join("flue-gas-span.ron"), text.replace("revision: 1,", "revision: 4294967295,")).unwrap();
    let opened = lib.open("flue-gas-span").unwrap();
    let r = fillwright::recipe::Recipe { notes: "one more".into(), ..opened.recipe.clone() };
    let saved = lib.save("flue-gas-span", &r, Some(&opened), None, "2026-12-04T00:00:00Z", OnConflict::Refuse);
    assert!(matches!(saved, Ok(fillwright::library::Saved::Written { revision: 4294967296, .. })), "{saved:?}");
    let _ = Stdio::null();
}

#[test]
fn a_mistyped_library_is_refused_by_every_command_that_reads_recipes() {
    let dir = fresh("typo-all");
    let typo = dir.join("no-such-library");
    for args in [
        vec!["plan", "flue-gas-span", "--library", typo.to_str().unwrap()],
        vec!["check", "flue-gas-span", "--library", typo.to_str().unwrap()],
        vec!["--library", typo.to_str().unwrap(), "plan", "flue-gas-span"],
        vec!["records", "--library", typo.to_str().unwrap()],
    ] {
        let o = common::run_fillwright("typo-all", &args);
        assert_ne!(o.status.code(), Some(0), "{args:?}: {}", out(&o));
        assert!(err(&o).contains("does not exist"), "{args:?}: {}", err(&o));
        assert!(!typo.exists(), "{args:?} created the folder");
    }
}
