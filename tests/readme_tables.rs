//! The README's generated tables are current: regenerate with the examples named in them.

use fillwright::gas::Catalogue;

fn readme() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap()
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
    let config = std::env::temp_dir().join(format!("fillwright-readme-{}", std::process::id()));
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
