//! The README and the guides under docs/: their generated tables and examples are current
//! (regenerate with `python3 tools/update_readme.py`), the README stays short, and every
//! link resolves.

mod common;

use std::path::{Path, PathBuf};

use fillwright::gas::Catalogue;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// The README and the guides, where the generated parts live.
fn documents() -> Vec<PathBuf> {
    let mut docs: Vec<PathBuf> = std::fs::read_dir(root().join("docs"))
        .unwrap()
        .flatten()
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|x| x == "md"))
        .collect();
    docs.sort();
    docs.insert(0, root().join("README.md"));
    docs
}

fn readme() -> String {
    documents().iter().map(|p| std::fs::read_to_string(p).unwrap()).collect::<Vec<_>>().join("\n")
}

#[test]
fn the_readme_reads_in_minutes_and_every_link_resolves() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    assert!(readme.len() <= 30 * 1024, "README.md is {} bytes; move detail to docs/", readme.len());
    for doc in documents().into_iter().chain([root().join("DEVELOPERS.md")]) {
        let text = std::fs::read_to_string(&doc).unwrap();
        let dir = doc.parent().unwrap();
        for (i, _) in text.match_indices("](") {
            let target: String = text[i + 2..].chars().take_while(|c| *c != ')').collect();
            if target.starts_with("http") || target.starts_with('#') {
                continue;
            }
            let file = target.split('#').next().unwrap();
            assert!(dir.join(file).exists(), "{}: the link {target} goes nowhere", doc.display());
        }
        // The project's docs stand on their own: no file outside the repository is cited.
        assert!(!text.contains("../shared") && !text.contains("INTERFACE.md"), "{}", doc.display());
    }
}

#[test]
fn density_table_is_current() {
    let table = fillwright::thermo::survey::markdown_table(&Catalogue::built_in());
    assert!(readme().contains(&table), "run `cargo run --example density_table` and paste into README.md");
}

#[test]
fn accuracy_table_is_current() {
    let table = fillwright::plan::accuracy::markdown_table(&Catalogue::built_in());
    assert!(readme().contains(&table), "run `cargo run --example accuracy_table` and paste into README.md");
}

#[test]
fn hazard_review_table_is_current() {
    let table = fillwright::checks::hazards::from_memory_table(&Catalogue::built_in());
    assert!(readme().contains(&table), "run `cargo run --example hazard_review` and paste into README.md");
}

#[test]
fn accuracy_rows_judge_by_gerg_where_it_covers() {
    let c = Catalogue::built_in();
    let rows = fillwright::plan::accuracy::demo_rows(&c);
    assert_eq!(rows.len(), fillwright::recipe::demo::RECIPES.len());
    for r in &rows {
        let gerg = r.worst.iter().find(|w| w.0 == fillwright::thermo::Model::Gerg);
        match r.truth {
            fillwright::thermo::Model::Gerg => {
                assert!(gerg.unwrap().2.abs() < 1e-8, "{}", r.recipe)
            }
            _ => assert!(gerg.is_none(), "{}: gerg cannot plan it", r.recipe),
        }
    }
    // DOMAIN.md: on a four-component 150 bar blend an ideal plan puts CO2 about 11 %
    // relative high and a van der Waals plan about 7 %, judged by GERG-2008.
    let flue = rows.iter().find(|r| r.recipe == "flue-gas-span").unwrap();
    let ideal = flue.worst.iter().find(|w| w.0 == fillwright::thermo::Model::Ideal).unwrap();
    assert_eq!(ideal.1, "CO2");
    assert!((ideal.2 - 11.0).abs() < 1.5, "{}", ideal.2);
    let vdw = flue.worst.iter().find(|w| w.0 == fillwright::thermo::Model::Vdw).unwrap();
    assert!((vdw.2 - 7.0).abs() < 1.0, "{}", vdw.2);
}

#[test]
fn fill_sheet_and_screening_examples_are_current() {
    let config = common::temp_dir().join(format!("fillwright-readme-{}", std::process::id()));
    let runs: [&[&str]; 6] = [
        &["plan", "flue-gas-span"],
        &["check", "lpg-in-methane"],
        &["certify", "tests/records/flue-gas-made.ron", "--issued", "2026-12-04"],
        &["plan", "--mix", "CO2=60%,N2=balance", "--volume", "10L", "--pressure", "150bar"],
        &["state", "--mix", "CO2", "--temp", "15C", "--volume", "10L", "--amount", "100mol"],
        &["verify", "tests/verifications/co-ppm-quadratic.ron"],
    ];
    for args in runs {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
            .args(args)
            .env("FILLWRIGHT_CONFIG", &config)
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .output()
            .unwrap();
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(
            readme().contains(text.as_ref()),
            "`fillwright {}` changed: run `python3 tools/update_readme.py`",
            args.join(" ")
        );
    }
}

#[test]
fn the_readme_gives_the_catalogue_size_that_gases_lists() {
    let n = fillwright::gas::Catalogue::built_in().gases().len();
    assert!(readme().contains(&format!("The catalogue: {n} gases")), "README.md should say {n} gases");
}
