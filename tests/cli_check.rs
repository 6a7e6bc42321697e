//! `fillwright check` as a user runs it.

mod common;

use std::process::Output;

fn run(args: &[&str]) -> Output {
    common::run_fillwright("check", args)
}

fn json(o: &Output) -> serde_json::Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&o.stdout)))
}

#[test]
fn json_carries_every_check_with_its_figures() {
    let o = run(&["check", "lpg-in-methane", "--format", "json"]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let v = json(&o);
    let checks = v["checks"].as_array().unwrap();
    let ids: Vec<&str> = checks.iter().map(|c| c["id"].as_str().unwrap()).collect();
    assert_eq!(ids, ["condensation", "pressure-rating", "flammability", "oxidising", "toxicity", "incompatibility"]);
    for c in checks {
        assert!(["ok", "caution", "stop"].contains(&c["severity"].as_str().unwrap()));
        assert!(c["message"].is_string());
    }
    assert!(checks[0]["cricondentherm_k"].is_number());
    assert_eq!(checks[2]["flammable"], true);
    assert_eq!(checks[3]["oxidising"], false);
    assert_eq!(checks[4]["toxic"], false);
    assert!(!v["cautions"].as_array().unwrap().is_empty());
}

#[test]
fn a_stop_finding_exits_3() {
    let o = run(&[
        "check",
        "--mix",
        "NH3=1%,HCl=1%,N2=balance",
        "--volume",
        "10L",
        "--pressure",
        "100bar",
        "--working-pressure",
        "200bar",
        "--test-pressure",
        "300bar",
    ]);
    assert_eq!(o.status.code(), Some(3));
    let text = String::from_utf8_lossy(&o.stdout);
    let first = text.lines().next().unwrap();
    assert!(first.contains("STOP"), "leads with what matters: {first}");
    // Then the conditions, then the worst finding.
    let third = text.lines().nth(2).unwrap();
    assert!(third.contains("[stop") && third.contains("incompatibility"), "{third}");
    assert!(text.contains("Cautions:"), "ends with the cautions");
    // Too cold for the propane-butane blend: liquid at -20 °C.
    let o = run(&["check", "lpg-in-methane", "--min-temp", "-20C"]);
    assert_eq!(o.status.code(), Some(3), "{}", String::from_utf8_lossy(&o.stdout));
}

#[test]
fn folders_of_recipes_and_refused_input() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/mixtures");
    let o = run(&["check", dir, "--format", "json"]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let v = json(&o);
    assert_eq!(v["checks"].as_array().unwrap().len(), 7 * 6);
    let o =
        run(&["check", "--mix", "CO2=15%,N2=balance", "--volume", "10L", "--pressure", "150bar", "--min-temp", "cold"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--min-temp"));
    let o = run(&["check"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn a_recipe_can_be_checked_against_another_cylinder_rating() {
    // The flue-gas span is 150 bar settled; in a cylinder rated 140 bar it must stop.
    let o = run(&[
        "check",
        "flue-gas-span",
        "--working-pressure",
        "140bar",
        "--test-pressure",
        "210bar",
        "--format",
        "json",
    ]);
    assert_eq!(o.status.code(), Some(3));
    let v = json(&o);
    let rating = v["checks"].as_array().unwrap().iter().find(|c| c["id"] == "pressure-rating").unwrap();
    assert_eq!(rating["severity"], "stop");
    assert_eq!(rating["working_pressure_bar"], 140.0);
}

#[test]
fn csv_is_a_table_for_check_and_gases() {
    let o = run(&["check", "flue-gas-span", "--format", "csv"]);
    assert!(o.status.success());
    let text = String::from_utf8_lossy(&o.stdout).into_owned();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("recipe,model,id,severity,message"));
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 6, "{text}");
    assert!(rows.iter().any(|r| r.contains(",pressure-rating,ok,\"")), "a message with a comma is quoted: {text}");
    let o = run(&["gases", "--format", "csv"]);
    let text = String::from_utf8_lossy(&o.stdout).into_owned();
    assert!(text.starts_with("id,name,cas,molar_mass_g_per_mol,"), "{text}");
    assert!(text.lines().any(|l| l.starts_with("CO2,carbon dioxide,124-38-9,44.0")), "{text}");
    assert!(text.lines().next().unwrap().ends_with(",gerg,reference_model,reference_equation"), "{text}");
    assert!(text.lines().any(|l| l.starts_with("SF6,") && l.ends_with(",false,multi,Guder-JPCRD-2009")), "{text}");
}

#[test]
fn gases_names_the_model_that_carries_each_at_reference_quality() {
    let o = run(&["gases", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let gas = |id: &str| v["gases"].as_array().unwrap().iter().find(|g| g["id"] == id).unwrap().clone();
    // GERG-2008's own; a reference equation in the multi-fluid model; an estimate.
    assert_eq!(gas("N2")["reference"]["model"], "gerg");
    assert_eq!(gas("N2")["reference"]["quality"], "reference");
    let sf6 = gas("SF6");
    assert_eq!(
        (sf6["reference"]["model"].as_str(), sf6["reference"]["quality"].as_str()),
        (Some("multi"), Some("reference"))
    );
    assert_eq!(sf6["reference"]["equation"]["source"], "Guder-JPCRD-2009");
    let no = gas("NO");
    assert_eq!(
        (no["reference"]["model"].as_str(), no["reference"]["quality"].as_str()),
        (Some("multi"), Some("estimate"))
    );
    assert!(no["reference"]["equation"].is_null());
    // The text table: its last column, within 80 columns.
    let text = String::from_utf8_lossy(&run(&["gases"]).stdout).into_owned();
    for (id, mark) in [("N2 ", "gerg v"), ("SF6 ", "eos v"), ("NO ", "cub v"), ("CF4 ", "eos")] {
        let line = text.lines().find(|l| l.starts_with(id)).unwrap();
        assert!(line.ends_with(mark), "{line}");
    }
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
}

#[test]
fn trace_toxics_read_as_not_toxic_and_reactive_traces_get_their_caution() {
    let o = run(&[
        "check",
        "--mix",
        "H2S=10ppm,CO=50ppm,CH4=2.5%,N2=balance",
        "--volume",
        "10L",
        "--pressure",
        "150bar",
        "--format",
        "json",
    ]);
    let v = json(&o);
    let tox = v["checks"].as_array().unwrap().iter().find(|c| c["id"] == "toxicity").unwrap().clone();
    assert_eq!(tox["severity"], "ok");
    assert!(tox["message"].as_str().unwrap().contains("above 10⁶ ppm"), "{tox}");
    let details = tox["details"].to_string();
    assert!(details.contains("H2S: 10ppm") && details.contains("passivated"), "{details}");
    assert!(!details.contains("0.00000999"), "{details}");
    // A blend without reactive traces carries no such caution.
    let o = run(&["check", "flue-gas-span", "--format", "json"]);
    assert!(!json(&o).to_string().contains("passivated"));
}

#[test]
fn text_outputs_fit_80_columns() {
    let mut outputs = vec![run(&["gases"])];
    for (name, _) in fillwright::recipe::demo::RECIPES {
        outputs.push(run(&["check", name]));
    }
    outputs.push(run(&["plan", "--mix", "H2S=1ppm,N2=balance", "--volume", "10L", "--pressure", "150bar"]));
    for o in outputs {
        let text = String::from_utf8_lossy(&o.stdout).into_owned();
        for line in text.lines() {
            assert!(line.chars().count() <= 80, "{} columns: {line}", line.chars().count());
        }
    }
}

#[test]
fn a_folder_checked_on_every_core_gives_what_one_core_gives_in_the_same_order() {
    // Many distinct recipes: the demo blends at several fill pressures.
    let dir = common::temp_dir().join(format!("fillwright-check-parallel-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let mut count = 0;
    for (name, text) in fillwright::recipe::demo::RECIPES {
        // More than one chunk of the streamed report (64 recipes).
        for bar in [40, 50, 60, 70, 80, 90, 100, 110, 120, 130] {
            let r = fillwright::recipe::Recipe::parse(text, name).unwrap();
            let r = fillwright::recipe::Recipe {
                name: format!("{name}-{bar}"),
                fill: fillwright::recipe::FillTarget::Pressure(format!("{bar}bar")),
                ..r
            };
            std::fs::write(dir.join(format!("{name}-{bar}.ron")), fillwright::recipe::canonical::to_text(&r)).unwrap();
            count += 1;
        }
    }
    assert!(count > 64);
    // One that cannot be read, among them.
    std::fs::write(dir.join("m-broken.ron"), "Recipe(format: 1, name: ").unwrap();
    let with = |threads: &str| {
        std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
            .args(["check", dir.to_str().unwrap(), "--format", "json"])
            .env("FILLWRIGHT_CONFIG", dir.join("config"))
            .env("RAYON_NUM_THREADS", threads)
            .output()
            .unwrap()
    };
    let (one, all) = (with("1"), with("4"));
    assert_eq!(one.status.code(), all.status.code());
    assert_eq!(String::from_utf8_lossy(&one.stdout), String::from_utf8_lossy(&all.stdout));
    let v: serde_json::Value = serde_json::from_slice(&all.stdout).unwrap();
    let recipes: Vec<&str> = v["checks"].as_array().unwrap().iter().map(|c| c["recipe"].as_str().unwrap()).collect();
    let mut sorted = recipes.clone();
    sorted.sort();
    assert_eq!(recipes, sorted, "the folder's order, as listed");
    let mut distinct = recipes.clone();
    distinct.dedup();
    assert_eq!(distinct.len(), count, "every readable recipe once");
    // The broken one is listed with its error, after the checks; the cautions close it.
    let unreadable = v["unreadable"].as_array().unwrap();
    assert_eq!(unreadable.len(), 1);
    assert!(unreadable[0]["recipe"].as_str().unwrap().ends_with("m-broken.ron"), "{unreadable:?}");
    assert!(!v["cautions"].as_array().unwrap().is_empty());
    assert_ne!(all.status.code(), Some(0));
    // The text report: every recipe in order, then the cautions once.
    let text = std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["check", dir.to_str().unwrap()])
        .env("FILLWRIGHT_CONFIG", dir.join("config"))
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&text.stdout);
    assert_eq!(text.matches("Cautions:").count(), 1);
    assert!(text.trim_end().rfind("Cautions:").unwrap() > text.find("NOT SCREENED").unwrap(), "{text}");
}

#[test]
fn refused_arguments_leave_no_half_written_report() {
    let o = run(&["check", "flue-gas-span", "--working-pressure", "12xyz", "--format", "json"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(o.stdout.is_empty(), "{}", String::from_utf8_lossy(&o.stdout));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--working-pressure"));
}
