//! The recipe library: canonical form, revisions, durability, names, sharing.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use fillwright::library::{atomic, check_name, Library, LibraryError, OnConflict, Saved};
use fillwright::recipe::{canonical, demo, BeforeFill, ComponentLine, CylinderLine, FillTarget, Recipe, SourceLine};
use proptest::prelude::*;

fn temp_dir(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-lib-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn seeded(tag: &str) -> (Library, PathBuf) {
    let dir = temp_dir(tag);
    let lib = Library::at(&dir).unwrap();
    assert_eq!(lib.seed_demos_if_empty().unwrap(), demo::RECIPES.len());
    (lib, dir)
}

const T1: &str = "2026-12-01T10:00:00Z";
const T2: &str = "2026-12-01T11:00:00Z";

#[test]
fn saving_an_unchanged_recipe_writes_nothing() {
    let (lib, dir) = seeded("unchanged");
    for (name, text) in demo::RECIPES {
        let opened = lib.open(name).unwrap();
        let saved = lib.save(name, &opened.recipe, Some(&opened), None, T1, OnConflict::Refuse).unwrap();
        assert_eq!(saved, Saved::Unchanged { revision: 1 });
        assert_eq!(std::fs::read_to_string(dir.join(format!("{name}.ron"))).unwrap(), *text);
    }
    // Seeding again does nothing: the library is not empty.
    assert_eq!(lib.seed_demos_if_empty().unwrap(), 0);
}

#[test]
fn a_change_makes_a_new_revision_and_keeps_the_old() {
    let (lib, _dir) = seeded("revisions");
    let opened = lib.open("flue-gas-span").unwrap();
    let mut r = opened.recipe.clone();
    r.components[2].amount = "14%".into();
    r.fill = FillTarget::Pressure("200bar".into());
    let saved =
        lib.save("flue-gas-span", &r, Some(&opened), Some("customer asked for 200 bar"), T1, OnConflict::Refuse);
    let Saved::Written { revision, changes, .. } = saved.unwrap() else { panic!() };
    assert_eq!(revision, 2);
    assert_eq!(changes, vec!["CO2 15 → 14 %", "fill pressure 150 → 200 bar"]);
    let now = lib.open("flue-gas-span").unwrap();
    assert_eq!(now.recipe.revision, 2);
    assert_eq!(now.recipe.saved.as_deref(), Some(T1));
    assert_eq!(now.recipe.change_note.as_deref(), Some("customer asked for 200 bar"));
    // Saving the same content again keeps revision 2.
    let again = lib.save("flue-gas-span", &now.recipe, Some(&now), None, T2, OnConflict::Refuse).unwrap();
    assert_eq!(again, Saved::Unchanged { revision: 2 });
    let revs: Vec<u64> = lib.history("flue-gas-span").unwrap().iter().map(|r| r.revision).collect();
    assert_eq!(revs, vec![1, 2]);
    assert_eq!(lib.revision("flue-gas-span", 1).unwrap().components[2].amount, "15%");
    // Restoring revision 1 makes revision 3 with revision 1's content.
    let Saved::Written { revision, changes, .. } = lib.restore("flue-gas-span", 1, T2).unwrap() else { panic!() };
    assert_eq!(revision, 3);
    assert_eq!(changes, vec!["CO2 14 → 15 %", "fill pressure 200 → 150 bar"]);
    let r3 = lib.open("flue-gas-span").unwrap().recipe;
    assert_eq!(r3.components[2].amount, "15%");
    assert_eq!(r3.change_note.as_deref(), Some("restored revision 1"));
    assert_eq!(lib.history("flue-gas-span").unwrap().len(), 3);
    assert!(matches!(lib.revision("flue-gas-span", 9), Err(LibraryError::NoRevision { .. })));
}

#[test]
fn an_interrupted_write_leaves_the_old_file_intact() {
    let (lib, dir) = seeded("crash");
    let path = dir.join("pipeline-ng-9.ron");
    let before = std::fs::read_to_string(&path).unwrap();
    let result =
        atomic::write_with(&path, b"Recipe(half a fi", || Err(std::io::Error::other("power cut before the rename")));
    assert!(result.is_err());
    assert_eq!(std::fs::read_to_string(&path).unwrap(), before);
    assert!(lib.open("pipeline-ng-9").is_ok());
    let leftovers: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "temporary file left behind");
}

#[test]
fn a_second_writer_is_detected_and_nothing_is_lost() {
    let (lib, _dir) = seeded("concurrent");
    let bench_a = lib.open("lpg-in-methane").unwrap();
    let bench_b = lib.open("lpg-in-methane").unwrap();
    let mut b = bench_b.recipe.clone();
    b.notes = "bench B was here".into();
    lib.save("lpg-in-methane", &b, Some(&bench_b), None, T1, OnConflict::Refuse).unwrap();
    let mut a = bench_a.recipe.clone();
    a.components[0].amount = "7%".into();
    let e = lib.save("lpg-in-methane", &a, Some(&bench_a), None, T2, OnConflict::Refuse).unwrap_err();
    assert!(matches!(e, LibraryError::ChangedOnDisk(_)), "{e}");
    assert!(e.to_string().contains("Reload"));
    assert_eq!(lib.open("lpg-in-methane").unwrap().recipe.notes, "bench B was here");
    // A's work can still go elsewhere, or over B's when A says so; B's stays in the history.
    lib.save_as("lpg-in-methane-a", &a, T2).unwrap();
    let Saved::Written { revision, .. } =
        lib.save("lpg-in-methane", &a, Some(&bench_a), None, T2, OnConflict::Overwrite).unwrap()
    else {
        panic!()
    };
    assert_eq!(revision, 3);
    assert_eq!(lib.revision("lpg-in-methane", 2).unwrap().notes, "bench B was here");
}

#[test]
fn hostile_names_are_refused() {
    for bad in ["", "../escape", "a/b", "a\\b", "..", ".hidden", "con", "NUL.txt", "tab\there", "x:y", "end.", " lead"]
    {
        assert!(check_name(bad).is_err(), "{bad:?} accepted");
    }
    for good in ["flue-gas-span", "NO span 80 ppm", "Gemisch-Nr.7", "ü-mix"] {
        assert!(check_name(good).is_ok(), "{good:?} refused");
    }
    let (lib, _dir) = seeded("names");
    let r = lib.open("flue-gas-span").unwrap().recipe;
    assert!(matches!(lib.save_as("../../etc/passwd", &r, T1), Err(LibraryError::BadName { .. })));
}

#[test]
fn oversized_and_broken_files_do_not_stop_the_library() {
    let (lib, dir) = seeded("broken");
    std::fs::write(dir.join("huge.ron"), vec![b' '; 2 * 1024 * 1024]).unwrap();
    std::fs::write(dir.join("broken.ron"), "Recipe(format: 1, name: ").unwrap();
    let entries = lib.list().unwrap();
    assert_eq!(entries.len(), demo::RECIPES.len() + 2);
    let huge = entries.iter().find(|e| e.name == "huge").unwrap();
    assert!(huge.summary.as_ref().unwrap_err().contains("larger than a recipe can be"));
    let broken = entries.iter().find(|e| e.name == "broken").unwrap();
    assert!(broken.summary.as_ref().unwrap_err().contains("broken.ron:1:"), "{:?}", broken.summary);
    assert!(entries.iter().filter(|e| e.summary.is_ok()).count() == demo::RECIPES.len());
    let flue = entries.iter().find(|e| e.name == "flue-gas-span").unwrap().summary.as_ref().unwrap();
    assert_eq!(
        (flue.brief.fill.as_str(), flue.brief.cylinder.as_str(), flue.brief.revision),
        ("150bar", "10L, 200bar", 1)
    );
    // The broken file was left untouched.
    assert_eq!(std::fs::read_to_string(dir.join("broken.ron")).unwrap(), "Recipe(format: 1, name: ");
}

#[test]
fn copy_rename_delete_import_export() {
    let (lib, dir) = seeded("ops");
    lib.duplicate("flue-gas-span", "flue-copy", T1).unwrap();
    assert_eq!(lib.open("flue-copy").unwrap().recipe.revision, 1);
    assert!(matches!(lib.duplicate("flue-gas-span", "flue-copy", T1), Err(LibraryError::Exists(_))));
    lib.rename("flue-copy", "flue-renamed").unwrap();
    assert!(matches!(lib.open("flue-copy"), Err(LibraryError::NotFound(_))));
    let trashed = lib.delete("flue-renamed", T2).unwrap();
    assert!(trashed.starts_with(dir.join(".trash")) && trashed.join("recipe.ron").is_file());
    let out = dir.join("exported.txt");
    lib.export("nox-span-premix", &out, false).unwrap();
    assert_eq!(std::fs::read_to_string(&out).unwrap(), demo::find("nox-span-premix").unwrap());
    lib.import(&out, "nox-again", T1).unwrap();
    assert_eq!(
        lib.open("nox-again").unwrap().recipe.components,
        lib.open("nox-span-premix").unwrap().recipe.components
    );
}

fn git(dir: &Path, args: &[&str]) -> String {
    let o = Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(args)
        .env("GIT_AUTHOR_NAME", "Bench One")
        .env("GIT_AUTHOR_EMAIL", "bench1@example.invalid")
        .env("GIT_COMMITTER_NAME", "Bench One")
        .env("GIT_COMMITTER_EMAIL", "bench1@example.invalid")
        .output()
        .unwrap();
    assert!(o.status.success(), "git {args:?}: {}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8_lossy(&o.stdout).into_owned()
}

#[test]
fn saves_are_committed_when_the_library_is_a_git_work_tree() {
    let (mut lib, dir) = seeded("git");
    git(&dir, &["init", "-q"]);
    git(&dir, &["config", "user.name", "Bench One"]);
    git(&dir, &["config", "user.email", "bench1@example.invalid"]);
    git(&dir, &["add", "."]);
    git(&dir, &["commit", "-q", "-m", "demo library"]);
    lib.git_commit = true;
    let opened = lib.open("detector-test-ch4-air").unwrap();
    let mut r = opened.recipe.clone();
    r.components[0].amount = "2.5%".into();
    let saved = lib.save("detector-test-ch4-air", &r, Some(&opened), Some("new LEL reference"), T1, OnConflict::Refuse);
    let Saved::Written { git: Some(result), .. } = saved.unwrap() else { panic!("no commit attempted") };
    assert_eq!(result, Ok(()));
    let log = git(&dir, &["log", "-1", "--format=%s"]);
    assert_eq!(log.trim(), "detector-test-ch4-air rev 2: new LEL reference");
    // The revision records who saved it: the git identity of the library.
    let history = lib.history("detector-test-ch4-air").unwrap();
    assert_eq!(history.last().unwrap().saved_by.as_deref(), Some("Bench One"));
    // A user set for the session wins (the screen and commands leave it to git or $USER).
    lib.user = Some("Bench Two".into());
    let opened = lib.open("detector-test-ch4-air").unwrap();
    let mut r = opened.recipe.clone();
    r.notes = "second bench".into();
    lib.save("detector-test-ch4-air", &r, Some(&opened), None, T2, OnConflict::Refuse).unwrap();
    assert_eq!(lib.open("detector-test-ch4-air").unwrap().recipe.saved_by.as_deref(), Some("Bench Two"));
    assert!(git(&dir, &["status", "--porcelain", "--", "detector-test-ch4-air.ron"]).is_empty());
}

fn text_strategy() -> impl Strategy<Value = String> {
    proptest::string::string_regex("[a-zA-Z0-9 ,.%\"\\\\é✓\n-]{0,20}").unwrap()
}

fn recipe_strategy() -> impl Strategy<Value = Recipe> {
    let component = (text_strategy(), text_strategy(), proptest::option::of(text_strategy()))
        .prop_map(|(gas, amount, tolerance)| ComponentLine { gas, amount, tolerance });
    let source = prop_oneof![
        text_strategy().prop_map(SourceLine::Pure),
        (text_strategy(), text_strategy(), proptest::option::of(text_strategy()))
            .prop_map(|(name, mix, recipe)| SourceLine::Premix { name, mix, recipe }),
    ];
    let before = proptest::option::of(prop_oneof![
        text_strategy().prop_map(BeforeFill::Evacuated),
        (text_strategy(), text_strategy(), proptest::option::of(text_strategy()))
            .prop_map(|(mix, pressure, temperature)| BeforeFill::Heel { mix, pressure, temperature }),
    ]);
    let fill = prop_oneof![
        text_strategy().prop_map(FillTarget::Pressure),
        text_strategy().prop_map(FillTarget::Mass),
        text_strategy().prop_map(FillTarget::Amount),
    ];
    (
        (0u32..50, proptest::option::of(text_strategy()), proptest::option::of(text_strategy())),
        (text_strategy(), text_strategy(), text_strategy()),
        proptest::collection::vec(component, 0..5),
        (
            text_strategy(),
            text_strategy(),
            text_strategy(),
            proptest::option::of(text_strategy()),
            proptest::option::of(text_strategy()),
        ),
        fill,
        (text_strategy(), proptest::option::of(text_strategy()), text_strategy()),
        proptest::option::of(prop_oneof![Just(fillwright::thermo::Model::Pr), Just(fillwright::thermo::Model::Gerg)]),
        proptest::collection::vec(source, 0..3),
        proptest::collection::vec(text_strategy(), 0..3),
        text_strategy(),
        before,
    )
        .prop_map(
            |(stamp, names, components, cyl, fill, temps, model, sources, fill_order, notes, before_fill)| Recipe {
                format: 1,
                revision: u64::from(stamp.0),
                saved: stamp.1,
                saved_by: None,
                change_note: stamp.2,
                name: names.0,
                description: names.1,
                order: names.2,
                components,
                cylinder: CylinderLine {
                    water_capacity: cyl.0,
                    working_pressure: cyl.1,
                    test_pressure: cyl.2,
                    tare: cyl.3,
                    serial: cyl.4,
                },
                fill,
                reference_temperature: temps.0,
                fill_temperature: temps.1,
                ambient: temps.2,
                before_fill,
                model,
                sources,
                fill_order,
                notes,
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn canonical_text_round_trips(r in recipe_strategy()) {
        let text = canonical::to_text(&r);
        let back = Recipe::parse(&text, "generated").unwrap();
        prop_assert_eq!(&back, &r);
        prop_assert_eq!(canonical::to_text(&back), text);
    }
}
