//! The fill record: composition made and uncertainty against the `uncertainties` package,
//! the Monte Carlo check, the plan fed back through the record, and `certify` as a user
//! runs it (text, JSON, PDF read back, bad records, the recipe's hash).

mod common;

use std::path::{Path, PathBuf};
use std::process::Output;

use fillwright::gas::Catalogue;
use fillwright::plan::{self, PlanOptions};
use fillwright::recipe::{demo, Recipe};
use fillwright::record::{self, no_lookup, Record};
use fillwright::thermo::Model;

fn check(text: &str) -> record::Checked {
    let c = Catalogue::built_in();
    Record::parse(text, "t").unwrap().check(&c, &no_lookup, text, "t").unwrap()
}

fn evaluate(text: &str, draws: usize) -> record::Evaluation {
    let c = Catalogue::built_in();
    record::evaluate(&check(text), &c, Model::Pr, None, &[], draws, 11).unwrap()
}

#[test]
fn composition_and_uncertainty_agree_with_the_uncertainties_package() {
    // tests/fixtures/uncertainties_records.json: the same records computed with the
    // `uncertainties` package (PyPI 3.2.3) by tests/reference/make_record_fixture.py.
    let fixture: serde_json::Value = serde_json::from_str(include_str!("fixtures/uncertainties_records.json")).unwrap();
    let c = Catalogue::built_in();
    let records = fixture["records"].as_object().unwrap();
    assert_eq!(records.len(), 5);
    for (name, expected) in records {
        let text = std::fs::read_to_string(format!("tests/records/{name}.ron")).unwrap();
        let e = evaluate(&text, 0);
        let expected = expected.as_object().unwrap();
        assert_eq!(e.gum.values.len(), expected.len(), "{name}");
        for (i, &g) in e.measurand.gases.iter().enumerate() {
            let id = c.gas(g).id();
            let x = expected[id]["mole_fraction"].as_f64().unwrap();
            let u = expected[id]["standard_uncertainty"].as_f64().unwrap();
            assert!((e.gum.values[i] / x - 1.0).abs() < 1e-9, "{name} {id}: {} vs {x}", e.gum.values[i]);
            assert!((e.gum.u[i] / u - 1.0).abs() < 1e-6, "{name} {id}: u {} vs {u}", e.gum.u[i]);
        }
    }
}

#[test]
fn monte_carlo_agrees_where_linear_and_differs_for_a_trace_at_its_detection_limit() {
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    let e = evaluate(&text, 100_000);
    let c = Catalogue::built_in();
    for (i, &g) in e.measurand.gases.iter().enumerate() {
        let id = c.gas(g).id();
        let a = e.agreement[i];
        match id {
            // CO, CO2 and N2 follow from normal inputs through a nearly linear function.
            "CO" | "CO2" | "N2" => assert!(a.agrees, "{id}: {a:?}"),
            // O2 comes only from "<2ppm" in the balance N2: rectangular, so its 95 %
            // interval is narrower than ±1.96 u although u is the same.
            "O2" => {
                assert!(!a.agrees, "{id}: {a:?}");
                assert!(a.u_ratio_gap.abs() < 0.02, "{id}: {a:?}");
                assert!(e.monte_carlo.low[i] > 0.0, "a rectangular input never draws a negative amount");
                assert!(e.gum.values[i] - 1.96 * e.gum.u[i] < e.monte_carlo.low[i]);
            }
            _ => {}
        }
    }
}

#[test]
fn the_plans_masses_fed_back_through_a_record_give_the_target() {
    let c = Catalogue::built_in();
    for name in ["flue-gas-span", "pipeline-ng-9", "laser-co2-he-n2"] {
        let order = Recipe::load(demo::find(name).unwrap(), name, &c).unwrap();
        let p = plan::plan(&order, &c, &PlanOptions::default()).unwrap();
        let tare = 10_000.0;
        let mut weighings = vec![format!("{tare}g")];
        let mut additions = Vec::new();
        let mut scale = tare;
        for s in &p.steps {
            scale += s.add_mass_g;
            weighings.push(format!("{scale}g"));
            let source = order.sources.iter().find(|o| o.name == s.source).unwrap();
            additions.push(format!("(source: \"{}\")", source.composition.describe(&c)));
        }
        let text = format!(
            "Record(format: 1, recipe: \"{name}\", cylinder: \"X\", scale_uncertainty: \"0.01g\", weighings: [{}], additions: [{}])",
            weighings.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", "),
            additions.join(", ")
        );
        let e = evaluate(&text, 0);
        for (i, &g) in e.measurand.gases.iter().enumerate() {
            let target = p.components.iter().find(|r| r.gas == g).unwrap().mole_fraction;
            // The masses pass through text at about 1e-13 g of 10 kg: 1e-9 relative is plenty.
            assert!(
                (e.gum.values[i] / target - 1.0).abs() < 1e-9,
                "{name} {}: {} vs {target}",
                c.gas(g).id(),
                e.gum.values[i]
            );
        }
    }
}

#[test]
fn adjacent_masses_share_a_reading() {
    // A middle weighing raises one mass and lowers the next: its sensitivity for the first
    // source's component has the opposite sign of the next weighing's.
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    let e = evaluate(&text, 0);
    let co = 0;
    let w = |k: usize| e.gum.budget[co].iter().find(|c| c.group == format!("weighing {k}")).map(|c| c.sensitivity);
    let before = e.gum.budget[co].iter().find(|c| c.group == "weighing before the fill").unwrap().sensitivity;
    assert!(w(1).unwrap() > 0.0 && before < 0.0, "{:?} {before}", w(1));
}

// --- the command line ---

fn fresh(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-record-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn run(config: &Path, args: &[&str]) -> Output {
    common::run_in(config, args)
}

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// A library with the demo recipes and the flue-gas record in records/.
fn library_with_record(tag: &str) -> (PathBuf, PathBuf) {
    let config = fresh(tag);
    assert!(run(&config, &["list"]).status.success());
    let lib = config.join("library");
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    let canonical =
        fillwright::recipe::canonical::to_text(&Recipe::parse(demo::find("flue-gas-span").unwrap(), "d").unwrap());
    let hash = record::sha256_hex(canonical.as_bytes());
    let text = text.replace(
        "recipe_revision: 1,",
        &format!("recipe_revision: 1,\n    recipe_sha256: \"{hash}\",\n    finished: \"2026-12-02T10:00:00Z\","),
    );
    std::fs::create_dir_all(lib.join("records")).unwrap();
    std::fs::write(lib.join("records/FC-10-2291-20261202.ron"), text).unwrap();
    (config, lib)
}

#[test]
fn certify_in_the_library_verifies_the_recipe_and_judges_the_targets() {
    let (config, _) = library_with_record("verify");
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "2000"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = out(&o);
    assert!(text.contains("verified: that revision is on file with this hash"), "{text}");
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
    // CO is 488 ppm against 500 ppm ± 2 %rel (10 ppm): outside; CO2 14.64 % against 15 %.
    let co = text.lines().find(|l| l.starts_with("CO ")).unwrap();
    assert!(co.contains("OUTSIDE tolerance"), "{co}");
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--format", "json", "--draws", "2000"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["recipe"]["verified"], true);
    let comps = v["components"].as_array().unwrap();
    let co = comps.iter().find(|c| c["id"] == "CO").unwrap();
    assert_eq!(co["coverage_factor"], 2.0);
    let (u, big_u) = (co["standard_uncertainty"].as_f64().unwrap(), co["expanded_uncertainty"].as_f64().unwrap());
    assert!((big_u - 2.0 * u).abs() < 1e-18 && u > 0.0);
    assert!(v["monte_carlo"]["draws"] == 2000 && v["budget"].as_array().unwrap().len() == comps.len());

    // `records` and `history` list it beside the recipe's revisions.
    let o = run(&config, &["records", "flue-gas-span"]);
    assert!(out(&o).contains("FC-10-2291-20261202") && out(&o).contains("finished"), "{}", out(&o));
    assert!(!out(&o).contains("certified"), "{}", out(&o));
    // With its certificate in the library's certificates/ (as C on the screen writes it), it
    // is listed as certified.
    let lib = config.join("library");
    std::fs::create_dir_all(lib.join("certificates")).unwrap();
    std::fs::write(lib.join("certificates/FC-10-2291-20261202.txt"), text.as_bytes()).unwrap();
    let o = run(&config, &["records", "flue-gas-span"]);
    assert!(out(&o).contains("certified, finished"), "{}", out(&o));
    let o = run(&config, &["records", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["records"][0]["certified"], true);
    let o = run(&config, &["history", "flue-gas-span"]);
    assert!(out(&o).contains("filled: record FC-10-2291-20261202"), "{}", out(&o));
}

#[test]
fn a_changed_recipe_is_named_and_certify_still_works() {
    let (config, lib) = library_with_record("changed");
    // Someone edits revision 1 in place (no new revision): the hash no longer matches.
    let path = lib.join("flue-gas-span.ron");
    let text = std::fs::read_to_string(&path).unwrap().replace("150bar", "140bar");
    std::fs::write(&path, text).unwrap();
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert!(o.status.success());
    assert!(out(&o).contains("NOT VERIFIED: revision 1 on file hashes to"), "{}", out(&o));
    // Outside the library the record certifies and says what it could not verify.
    let outside = fresh("outside").join("r.ron");
    std::fs::copy(lib.join("records/FC-10-2291-20261202.ron"), &outside).unwrap();
    let o = run(&config, &["certify", outside.to_str().unwrap(), "--draws", "1000"]);
    assert!(o.status.success());
    assert!(out(&o).contains("NOT VERIFIED: the record is not in a library"), "{}", out(&o));
}

#[test]
fn bad_records_are_refused_with_exit_1_and_their_place() {
    let dir = fresh("bad");
    let good = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    let cases = [
        (good.replace("\"13942.450g\"", "\"13400.000g\""), "weighing 3 (13400.000g) is not above"),
        (good.replace("\"15473.450g\"]", "]").replace(", ]", "]"), ""),
        (good.replace("±0.002%", "±-0.002%"), "negative"),
        (good.replace("\"0.010g\"", "\"-0.010g\""), "negative"),
        (good.replace("O2=<2ppm", "Oxy=<2ppm"), "unknown gas \"Oxy\""),
        (good.replace("CO2=balance,N2=<10ppm", "@co2-lot-4"), "no source \"co2-lot-4\""),
        (good.replace("weighings", "weighing"), "weighing"),
    ];
    for (k, (text, needle)) in cases.iter().enumerate() {
        let file = dir.join(format!("bad{k}.ron"));
        std::fs::write(&file, text).unwrap();
        let o = run(&dir, &["certify", file.to_str().unwrap(), "--draws", "1000"]);
        let err = String::from_utf8_lossy(&o.stderr);
        if needle.is_empty() {
            // A record whose last addition is not weighed yet is not certified as finished
            // (exit 1, saying so); --in-progress prints the composition so far, bannered.
            assert_eq!(o.status.code(), Some(1), "{err}");
            assert!(err.contains("not finished (2 of 3 additions") && err.contains("--in-progress"), "{err}");
            let o = run(&dir, &["certify", file.to_str().unwrap(), "--draws", "1000", "--in-progress"]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            let text = out(&o);
            assert!(text.starts_with("FILL IN PROGRESS - COMPOSITION SO FAR - NOT A CERTIFICATE"), "{text}");
            assert!(text.contains("FILL IN PROGRESS: 2 additions complete (3 recorded)"), "{text}");
            assert!(!text.contains("CERTIFICATE OF PREPARATION"), "{text}");
            let o =
                run(&dir, &["certify", file.to_str().unwrap(), "--draws", "1000", "--in-progress", "--format", "json"]);
            let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
            assert_eq!(v["finished"], false);
            // The PDF carries the banner on every page.
            let pdf = dir.join("progress.pdf");
            let o = run(
                &dir,
                &[
                    "certify",
                    file.to_str().unwrap(),
                    "--draws",
                    "1000",
                    "--in-progress",
                    "--pdf",
                    pdf.to_str().unwrap(),
                ],
            );
            assert!(o.status.success());
            let pages = common::pdf_text(&pdf);
            let sheets: Vec<&str> = pages.split('\u{c}').filter(|p| !p.trim().is_empty()).collect();
            assert!(!sheets.is_empty(), "{pages}");
            assert!(sheets.iter().all(|p| p.contains("FILL IN PROGRESS - COMPOSITION SO FAR")), "{pages}");
            continue;
        }
        assert_eq!(o.status.code(), Some(1), "{k}: {err}");
        assert!(err.contains(needle), "{k}: {err}");
        assert!(err.contains(&format!("bad{k}.ron:")), "{k}: the place is named: {err}");
    }
}

#[test]
fn the_source_library_supplies_analyses_by_name() {
    let (config, lib) = library_with_record("sources");
    std::fs::create_dir_all(config.join("sources")).unwrap();
    std::fs::write(
        config.join("sources/co2-lot-4.ron"),
        "Source(analysis: \"CO2=balance,N2=<10ppm\", cylinder: \"L4-2201\", expiry: \"2026-01-31\")",
    )
    .unwrap();
    let path = lib.join("records/FC-10-2291-20261202.ron");
    let text = std::fs::read_to_string(&path).unwrap().replace("CO2=balance,N2=<10ppm", "@co2-lot-4");
    std::fs::write(&path, text.replace("finished:", "started: \"2026-12-01T08:00:00Z\",\n    finished:")).unwrap();
    // Started at the bench with 3 of the recipe's 4 additions: refused as unfinished, the
    // composition so far printed on request.
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("3 of the 4 additions"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000", "--in-progress"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(out(&o).contains("the analysis of source co2-lot-4 expired on 2026-01-31"), "{}", out(&o));
}

#[test]
fn a_record_of_pressure_readings_carries_gauge_temperature_and_model_in_its_budget() {
    let dir = fresh("mano");
    let file = dir.join("m.ron");
    std::fs::write(
        &file,
        r#"Record(format: 1, recipe: "x", cylinder: "M-1", scale_uncertainty: "0g", water_capacity: "10L",
        pressure_uncertainty: "0.05bar", temperature_uncertainty: "0.5K",
        additions: [
            (source: "CO2", pressure: "20.1bar", temperature: "21C"),
            (source: "N2", pressure: "150.4bar", temperature: "23C"),
        ])"#,
    )
    .unwrap();
    let o = run(&dir, &["certify", file.to_str().unwrap(), "--format", "json", "--draws", "2000", "--model", "pr"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["method"], "manometric");
    let inputs: Vec<&str> =
        v["budget"][0]["contributions"].as_array().unwrap().iter().map(|c| c["input"].as_str().unwrap()).collect();
    assert!(inputs.iter().any(|i| i.starts_with("model (pr against")), "{inputs:?}");
    assert!(inputs.contains(&"pressure reading 1") && inputs.contains(&"cylinder temperature 2"), "{inputs:?}");
    // About 13 % CO2 by pressure; the relative u is of the order of a percent, not 0.01 %.
    let x = v["components"][0]["mole_fraction"].as_f64().unwrap();
    let u = v["components"][0]["standard_uncertainty"].as_f64().unwrap();
    assert!(x > 0.10 && x < 0.16 && u / x > 1e-3, "{x} {u}");
}

#[test]
fn the_pdf_holds_every_number_of_the_text_certificate() {
    let (config, _) = library_with_record("pdf");
    let pdf = config.join("cert.pdf");
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "2000", "--pdf", pdf.to_str().unwrap()]);
    assert!(o.status.success());
    let text = out(&o);
    let back = common::pdf_text(&pdf);
    let numbers = |s: &str| -> Vec<String> {
        s.split(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
            .filter(|w| w.chars().any(|c| c.is_ascii_digit()))
            .map(str::to_string)
            .collect()
    };
    let in_pdf = numbers(&back);
    for n in numbers(&text) {
        assert!(in_pdf.contains(&n), "{n} is missing from the PDF:\n{back}");
    }
    assert!(back.contains("Certificate of preparation") && back.contains("±") == text.contains('±'));
    // Typeset: page numbers, the running head on the next pages, and the Monte Carlo
    // verdict in words no gas formula can be taken for.
    assert!(back.contains("page 1 of"), "{back}");
    assert!(!back.contains(" NO\n") && (back.contains("agrees") || back.contains("differs")), "{back}");
    // A page rendered to an image is not blank: it carries text and rules.
    let image = config.join("page");
    let o = std::process::Command::new("pdftoppm")
        .args(["-gray", "-r", "40", "-f", "1", "-l", "1"])
        .arg(&pdf)
        .arg(&image)
        .output()
        .expect("pdftoppm (poppler-utils) renders the page");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let pgm = std::fs::read_dir(&config)
        .unwrap()
        .flatten()
        .map(|e| e.path())
        .find(|p| p.extension().is_some_and(|x| x == "pgm"))
        .expect("a rendered page");
    let bytes = std::fs::read(pgm).unwrap();
    // P5 WIDTH HEIGHT MAXVAL, then one byte a pixel.
    let header_end = bytes.iter().enumerate().filter(|(_, b)| **b == b'\n').nth(2).unwrap().0 + 1;
    let pixels = &bytes[header_end..];
    let dark = pixels.iter().filter(|&&p| p < 128).count() as f64 / pixels.len() as f64;
    assert!(dark > 0.005 && dark < 0.3, "dark share of the page {dark}");
}

#[test]
fn a_premix_made_here_brings_its_certified_composition_and_covariance() {
    let (config, lib) = library_with_record("premix");
    // The premix: 1 % CO in N2 made by mass in this library.
    std::fs::write(
        lib.join("records/PX-118-20261120.ron"),
        r#"Record(format: 1, recipe: "co-premix", cylinder: "PX-118", scale_uncertainty: "0.005g",
        finished: "2026-11-20T15:00:00Z",
        weighings: ["8000.000g", "8028.010g", "10774.000g"],
        additions: [(source: "CO=balance,CO2=<20ppm"), (source: "N2=balance,O2=<2ppm")])"#,
    )
    .unwrap();
    let path = lib.join("records/FC-10-2291-20261202.ron");
    let text = std::fs::read_to_string(&path).unwrap().replace("CO=1%±0.002%,N2=balance", "record:PX-118-20261120");
    std::fs::write(&path, text).unwrap();
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--format", "json", "--draws", "2000"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let co = v["budget"].as_array().unwrap().iter().find(|b| b["id"] == "CO").unwrap();
    let first = &co["contributions"][0];
    // The premix's whole composition is one correlated input group.
    assert_eq!(first["input"], "composition of source 1", "{co}");
    assert!(first["sensitivity"].is_null());
    // Its CO2 impurity reaches the blend; the premix's CO is 1.0 % by its masses.
    let ids: Vec<&str> = v["components"].as_array().unwrap().iter().map(|c| c["id"].as_str().unwrap()).collect();
    assert!(ids.contains(&"CO2") && ids.contains(&"O2"), "{ids:?}");
    // A premix referring to itself is refused, not looped.
    let own = lib.join("records/PX-118-20261120.ron");
    let t = std::fs::read_to_string(&own).unwrap().replace("CO=balance,CO2=<20ppm", "record:PX-118-20261120");
    std::fs::write(&own, t).unwrap();
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("nest deeper"), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn a_source_without_uncertainty_is_refused_and_a_pure_gas_without_impurities_is_remarked() {
    let dir = fresh("nominal");
    let good = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    // The nominal premix composition: CO 1 % with no uncertainty.
    let nominal = dir.join("nominal.ron");
    std::fs::write(&nominal, good.replace("CO=1%±0.002%,N2=balance", "CO=1%,N2=balance")).unwrap();
    let o = run(&dir, &["certify", nominal.to_str().unwrap(), "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("addition 1") && err.contains("CO with no uncertainty") && err.contains("record:ID"), "{err}");
    // A pure nitrogen with no impurity stated: certified, with a remark.
    let pure = dir.join("pure.ron");
    std::fs::write(&pure, good.replace("N2=balance,O2=<2ppm,Ar=5ppm±1ppm", "N2")).unwrap();
    let o = run(&dir, &["certify", pure.to_str().unwrap(), "--draws", "1000", "--format", "json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let remarks: Vec<&str> = v["remarks"].as_array().unwrap().iter().map(|r| r.as_str().unwrap()).collect();
    assert!(remarks.iter().any(|r| r.contains("addition 3") && r.contains("no impurity stated")), "{remarks:?}");
}

#[test]
fn air_buoyancy_moves_the_composition_and_enters_the_budget() {
    let dir = fresh("buoyancy");
    let plain = run(&dir, &["certify", "tests/records/flue-gas-made.ron", "--draws", "1000", "--format", "json"]);
    let air = run(&dir, &["certify", "tests/records/flue-gas-buoyancy.ron", "--draws", "1000", "--format", "json"]);
    assert!(air.status.success(), "{}", String::from_utf8_lossy(&air.stderr));
    let (p, a): (serde_json::Value, serde_json::Value) =
        (serde_json::from_slice(&plain.stdout).unwrap(), serde_json::from_slice(&air.stdout).unwrap());
    let co = |v: &serde_json::Value, key: &str| {
        v["components"].as_array().unwrap().iter().find(|c| c["id"] == "CO").unwrap()[key].as_f64().unwrap()
    };
    // The small first addition (92.85 g) moves most: the air thinned between weighings.
    assert!((co(&a, "mole_fraction") / co(&p, "mole_fraction") - 1.0).abs() > 1e-5);
    assert!(co(&a, "standard_uncertainty") > co(&p, "standard_uncertainty"));
    let inputs: Vec<String> = a["budget"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|b| b["contributions"].as_array().unwrap().iter().map(|c| c["input"].as_str().unwrap().to_string()))
        .collect();
    for name in ["air density at weighing 2", "air density before the fill", "cylinder outer volume"] {
        assert!(inputs.iter().any(|i| i == name), "{name} not in {inputs:?}");
    }
    // The air without the volume, or one entry too few: refused, placed.
    let text = std::fs::read_to_string("tests/records/flue-gas-buoyancy.ron").unwrap();
    for (bad, needle) in [
        (text.replace("    cylinder_outer_volume: \"13.6L\",\n", ""), "outer volume"),
        (
            text.replacen("        (temperature: \"20.4C\", pressure: \"1012.3hPa\", humidity: \"41.0%\"),\n", "", 1),
            "3 air entries for 4 weighings",
        ),
        (text.replace("\"41.0%\"", "\"141%\""), "outside 0 to 100 %"),
    ] {
        let file = dir.join("bad-air.ron");
        std::fs::write(&file, bad).unwrap();
        let o = run(&dir, &["certify", file.to_str().unwrap(), "--draws", "1000"]);
        assert_eq!(o.status.code(), Some(1));
        assert!(String::from_utf8_lossy(&o.stderr).contains(needle), "{}", String::from_utf8_lossy(&o.stderr));
    }
}

#[test]
fn the_certificate_is_a_document_with_number_dates_order_cylinder_and_signatures() {
    let (config, lib) = library_with_record("document");
    let path = lib.join("records/FC-10-2291-20261202.ron");
    let text =
        std::fs::read_to_string(&path).unwrap().replace("cylinder:", "customer: \"Brewery stack lab\",\n    cylinder:");
    std::fs::write(&path, text).unwrap();
    std::fs::write(config.join("settings.ron"), "(certificate_number: \"FW-{year}-{record}\")").unwrap();
    let o = run(
        &config,
        &["certify", "FC-10-2291-20261202", "--draws", "1000", "--issued", "2026-02-28", "--format", "json"],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["certificate"]["number"], "FW-2026-FC-10-2291-20261202");
    assert_eq!(v["certificate"]["issued"], "2026-02-28");
    // CO at ppm level: 12 months (common practice), to the same day.
    assert_eq!(v["certificate"]["valid_until"], "2027-02-28");
    assert_eq!(v["order"]["reference"], "BRW-2026-0117");
    assert_eq!(v["order"]["customer"], "Brewery stack lab");
    assert_eq!(v["cylinder"]["serial"], "FC-10-2291");
    assert_eq!(v["cylinder"]["water_capacity_l"], 10.0);
    assert_eq!(v["cylinder"]["working_pressure_bar"], 200.0);
    // About 65 mol in 10 L at 15 °C: near the fill pressure, never zero.
    let p = v["cylinder"]["final_pressure_bar"].as_f64().unwrap();
    assert!(p > 140.0 && p < 170.0, "{p}");
    assert!(!v["cautions"].as_array().unwrap().is_empty());
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000", "--issued", "2026-02-28"]);
    let text = out(&o);
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
    assert!(text.contains("prepared by ____") && text.contains("approved by ____"), "{text}");
    assert!(text.contains("final pressure") && text.contains("at 15 °C"), "{text}");
    // The Monte Carlo table speaks in words no gas formula reads as.
    assert!(!text.contains(" NO\n") && !text.lines().any(|l| l.ends_with("  yes")), "{text}");
    // A date that is not one is wrong usage.
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--issued", "2026-13-01"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn a_component_without_uncertainty_is_shown_as_such_without_a_budget() {
    let dir = fresh("exact");
    let file = dir.join("pure.ron");
    std::fs::write(
        &file,
        "Record(format: 1, recipe: \"x\", cylinder: \"Z-1\", scale_uncertainty: \"0.010g\", \
         weighings: [\"1000.000g\", \"1100.000g\"], additions: [(source: \"N2\")])",
    )
    .unwrap();
    let o = run(&dir, &["certify", file.to_str().unwrap(), "--draws", "1000"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = out(&o);
    let n2 = text.lines().find(|l| l.starts_with("N2 ")).unwrap();
    assert!(n2.contains("none") && !n2.contains("0.000000"), "{n2}");
    assert!(text.contains("N2 u = 0: no uncertainty stated, so no budget"), "{text}");
}

#[test]
fn corrections_and_readings_that_disagree_with_the_weighings_are_on_the_certificate() {
    let (config, lib) = library_with_record("corrections");
    let path = lib.join("records/FC-10-2291-20261202.ron");
    let text = std::fs::read_to_string(&path).unwrap();
    // The N2 addition's gauge read 100 bar at 22 °C: its weighing (1531 g of N2 on top)
    // gives about 150 bar, far beyond what the gauge, thermometer and volume allow.
    let text = text
        .replace(
            "(source: \"N2=balance,O2=<2ppm,Ar=5ppm±1ppm\")",
            "(source: \"N2=balance,O2=<2ppm,Ar=5ppm±1ppm\", pressure: \"100bar\", temperature: \"22C\")",
        )
        .replace(
            "    additions:",
            "    corrections: [(time: \"2026-12-02T09:30:00Z\", entry: \"weighing 2\", was: \"13942.450kg\", \
             now: \"13942.450g\", reason: \"typed kg for g\")],\n    additions:",
        );
    std::fs::write(&path, text).unwrap();
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "2000"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let t = out(&o);
    assert!(t.contains("corrected 2026-12-02T09:30:00Z: weighing 2 was 13942.450kg"), "{t}");
    assert!(t.contains("typed kg for g"), "{t}");
    assert!(t.contains("addition 3: the pressure reading 100.000 bar disagrees with the weighing"), "{t}");
    assert!(t.lines().all(|l| l.chars().count() <= 80), "{t}");
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "2000", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["corrections"][0]["reason"], "typed kg for g");
    assert_eq!(v["corrections"][0]["now"], "13942.450g");
}

#[test]
fn a_substitution_weighing_needs_a_reference_reading_beside_every_weighing() {
    let dir = fresh("substitution");
    let text = std::fs::read_to_string("tests/records/flue-gas-substitution.ron").unwrap();
    let broken = dir.join("short.ron");
    std::fs::write(&broken, text.replace("\"13950.150g\"]", "]")).unwrap();
    let o = run(&dir, &["certify", broken.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(e.contains("3 reference readings for 4 weighings"), "{e}");
    // Buoyancy on the difference of the volumes: the budget names it.
    let o = run(&dir, &["certify", "tests/records/flue-gas-substitution.ron", "--draws", "1000", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let inputs: Vec<&str> = v["inputs"].as_array().unwrap().iter().map(|i| i["input"].as_str().unwrap()).collect();
    assert!(inputs.contains(&"outer volume, cylinder less reference"), "{inputs:?}");
    assert!(inputs.contains(&"reference cylinder at weighing 3"), "{inputs:?}");
}

#[test]
fn every_certificate_text_stays_within_80_columns() {
    let dir = fresh("columns");
    for entry in std::fs::read_dir("tests/records").unwrap().flatten() {
        let path = entry.path();
        let o = run(&dir, &["certify", path.to_str().unwrap(), "--draws", "1000", "--in-progress"]);
        assert!(o.status.success(), "{}: {}", path.display(), String::from_utf8_lossy(&o.stderr));
        let text = out(&o);
        let long: Vec<&str> = text.lines().filter(|l| l.chars().count() > 80).collect();
        assert!(long.is_empty(), "{}: {long:?}", path.display());
        assert!(!text.contains("99999") && !text.contains("00000000"), "unrounded figures: {text}");
    }
}

#[test]
fn a_fill_far_short_of_its_target_shows_the_target_in_its_own_unit() {
    // A damaged fill: the CO premix addition was 1 mg (the valve shut at once), so CO is a
    // few ppb where 500 ppm was ordered.
    let (config, lib) = library_with_record("short");
    let path = lib.join("records/FC-10-2291-20261202.ron");
    let text = std::fs::read_to_string(&path).unwrap().replace("\"13504.850g\"", "\"13412.001g\"");
    std::fs::write(&path, text).unwrap();
    let o = run(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    let text = out(&o);
    let co = text.lines().find(|l| l.starts_with("CO ")).unwrap_or_else(|| panic!("{text}"));
    // Amount and target in ppm, the target as ordered (500 ppm), not 500000 ppb.
    let cells: Vec<&str> = co.split_whitespace().collect();
    assert_eq!(cells[3], "ppm", "{co}");
    assert_eq!(cells[4], "500.00", "{co}");
    assert!(co.contains("OUTSIDE tolerance"), "{co}");
    let (x, big_u): (f64, f64) = (cells[1].parse().unwrap(), cells[2].parse().unwrap());
    // 1 mg of 1 % CO in N2 (28.0 g/mol) in about 66 mol: 1e-3/28.0·0.01/66 ≈ 5.4e-9 (0.005
    // ppm, rounded to the uncertainty's digits), far inside the uncertainty of the 10 µg
    // readings.
    assert!(x <= 0.01 && big_u > 10.0 * x, "{co}");
}
