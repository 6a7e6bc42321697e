//! `fillwright plan` as a user runs it.

mod common;

use std::process::{Command, Output};

fn run(args: &[&str]) -> Output {
    common::run_fillwright("plan", args)
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const DEMOS: &[&str] = &[
    "flue-gas-span",
    "nox-span-premix",
    "pipeline-ng-9",
    "fuel-cell-h2-he",
    "lpg-in-methane",
    "detector-test-ch4-air",
    "laser-co2-he-n2",
];

#[test]
fn every_demo_fill_sheet_fits_80_columns() {
    for name in DEMOS {
        let o = run(&["plan", name]);
        assert!(o.status.success(), "{name}: {}", stderr(&o));
        let text = stdout(&o);
        for line in text.lines() {
            assert!(line.chars().count() <= 80, "{name}: {} columns: {line}", line.chars().count());
        }
        assert!(text.contains("FILL SHEET") && text.contains("STEPS") && text.contains("CAUTION"), "{name}");
    }
}

#[test]
fn json_has_the_keys_scripts_rely_on() {
    let o = run(&["plan", "flue-gas-span", "--model", "pr", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["model"], "pr");
    for key in ["pressure_bar", "temperature_k", "amount_mol", "mass_g", "z"] {
        assert!(v["final"][key].is_number(), "final.{key}");
    }
    for c in v["components"].as_array().unwrap() {
        for key in ["id", "mole_fraction", "amount_mol", "mass_g", "partial_pressure_bar"] {
            assert!(!c[key].is_null(), "components[].{key}");
        }
    }
    let steps = v["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 4);
    for s in steps {
        for key in ["source", "add_amount_mol", "add_mass_g", "pressure_after_bar", "temperature_k"] {
            assert!(!s[key].is_null(), "steps[].{key}");
        }
        assert_eq!(s["temperature_k"], 295.15);
    }
    assert_eq!(v["final"]["pressure_bar"], 150.0);
    assert_eq!(steps[3]["source"], "N2");
    let ids: Vec<&str> = v["components"].as_array().unwrap().iter().map(|c| c["id"].as_str().unwrap()).collect();
    assert_eq!(ids, ["CO", "CH4", "CO2", "N2"]);
}

#[test]
fn csv_lists_the_steps() {
    let o = run(&["plan", "pipeline-ng-9", "--format", "csv"]);
    assert!(o.status.success());
    let text = stdout(&o);
    let lines: Vec<&str> = text.lines().collect();
    assert!(lines[0].starts_with("step,source,add_amount_mol,add_mass_g,scale_reading_g,pressure_after_bar"));
    assert_eq!(lines.len(), 1 + 9);
    assert!(lines[9].starts_with("9,CH4,"), "{}", lines[9]);
}

#[test]
fn mix_arguments_and_fill_temperature() {
    let base = [
        "plan",
        "--mix",
        "CO2=15%,N2=balance",
        "--volume",
        "10L",
        "--pressure",
        "150bar",
        "--temp",
        "15C",
        "--model",
        "pr",
        "--format",
        "json",
    ];
    let cold: serde_json::Value =
        serde_json::from_slice(&run(&[&base[..], &["--fill-temp", "-5C"]].concat()).stdout).unwrap();
    let warm: serde_json::Value =
        serde_json::from_slice(&run(&[&base[..], &["--fill-temp", "35C"]].concat()).stdout).unwrap();
    let last = |v: &serde_json::Value| v["steps"][1]["pressure_after_bar"].as_f64().unwrap();
    assert!(last(&cold) < 150.0 && last(&warm) > 150.0, "{} {}", last(&cold), last(&warm));
    assert_eq!(cold["steps"][0]["temperature_k"], 268.15);
    // The amount does not depend on the fill temperature, only the readings do.
    assert_eq!(cold["final"]["amount_mol"], warm["final"]["amount_mol"]);
}

#[test]
fn order_option_is_checked() {
    let o = run(&["plan", "flue-gas-span", "--order", "N2,CO2,CH4,CO", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = run(&["plan", "flue-gas-span", "--order", "N2,CO2"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("missing: CO, CH4"), "{}", stderr(&o));
    let o = run(&["plan", "flue-gas-span", "--order", "N2,CO2,CH4,CO,Ar"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("\"Ar\" is not a source"), "{}", stderr(&o));
}

#[test]
fn bad_recipes_are_refused_with_file_line_and_column() {
    let cases = [
        ("sum-not-100", ":4:5:", "add up to 95 %"),
        ("two-balances", ":4:5:", "two balance gases (N2 and Ar)"),
        ("unknown-gas", ":6:15:", "did you mean N2"),
        ("negative-amount", ":5:30:", "must be above zero"),
        ("not-finite", ":5:30:", "not a finite number"),
        ("above-100", ":5:30:", "is above 100 %"),
        ("above-test-pressure", ":9:20:", "above the cylinder's test pressure"),
        ("negative-volume", ":8:32:", "water_capacity"),
        ("syntax", ":5:30:", "Expected string"),
        ("mass-above-test", "mass-above-test.ron:", "above the cylinder's test pressure"),
    ];
    for (file, place, needle) in cases {
        let path = format!("tests/recipes/bad/{file}.ron");
        let o = run(&["plan", &path]);
        assert_eq!(o.status.code(), Some(1), "{file}");
        let e = stderr(&o);
        assert!(e.contains(&format!("{path}{place}")) || e.contains(place), "{file}: {e}");
        assert!(e.contains(needle), "{file}: {e}");
    }
}

#[test]
fn unknown_recipe_names_list_the_demos() {
    let o = run(&["plan", "no-such-recipe"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("flue-gas-span"), "{}", stderr(&o));
    let o = run(&["plan"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn gerg_on_uncovered_gases_is_refused_by_name() {
    let o = run(&["plan", "nox-span-premix", "--model", "gerg"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("does not cover NO"), "{}", stderr(&o));
}

#[test]
fn the_fill_sheet_uses_the_units_of_the_settings() {
    let config = common::temp_dir().join(format!("fillwright-plan-units-{}", std::process::id()));
    std::fs::create_dir_all(&config).unwrap();
    std::fs::write(config.join("settings.ron"), "(pressure_unit: MPa, temperature_unit: K)\n").unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["plan", "flue-gas-span"])
        .env("FILLWRIGHT_CONFIG", &config)
        .output()
        .unwrap();
    let text = stdout(&o);
    assert!(text.contains("fill to 15.0000 MPa at 288.1 K"), "{text}");
    assert!(text.contains("stop MPa"), "{text}");
    // JSON stays in bar whatever the settings say (INTERFACE.md).
    let o = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["plan", "flue-gas-span", "--format", "json"])
        .env("FILLWRIGHT_CONFIG", &config)
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["final"]["pressure_bar"], 150.0);
}

#[test]
fn a_reader_that_stops_early_is_not_a_crash() {
    use std::io::{BufRead, BufReader};
    let mut child = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["gases"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = String::new();
    BufReader::new(child.stdout.take().unwrap()).read_line(&mut first).unwrap();
    assert!(first.starts_with("id"));
    // The pipe is closed now (the reader was dropped); the program must end without a panic.
    let out = child.wait_with_output().unwrap();
    assert!(!String::from_utf8_lossy(&out.stderr).contains("panicked"));
}

#[test]
fn ppm_levels_keep_their_columns_apart_and_read_as_typed() {
    let o =
        run(&["plan", "--mix", "H2S=10ppm,CO=50ppm,CH4=2.5%,N2=balance", "--volume", "10L", "--pressure", "150bar"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8_lossy(&o.stdout).into_owned();
    assert!(text.starts_with("FILL SHEET  H2S=10ppm,CO=50ppm,CH4=2.5%,N2=97.494%"), "{text}");
    // Every cell of the every-model table is separated by at least one space.
    let table: Vec<&str> = text.lines().skip_while(|l| !l.starts_with("EVERY MODEL")).skip(2).take(4).collect();
    for row in table {
        let cells: Vec<&str> = row[17..].split_whitespace().collect();
        // Every model but the multi-fluid one, which GERG-2008 makes unneeded here.
        assert_eq!(cells.len(), fillwright::thermo::Model::ALL.len() - 1, "{row}");
        assert!(cells.iter().all(|c| c.parse::<f64>().is_ok()), "{row}");
    }
    assert!(text.contains(&format!("  multi: {}", fillwright::plan::NOT_NEEDED)), "{text}");
}

#[test]
fn file_errors_speak_of_fields_not_of_program_types() {
    let dir = common::temp_dir().join(format!("fillwright-types-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("missing.ron");
    std::fs::write(
        &file,
        "Recipe(format: 1, name: \"x\", components: [(gas: \"N2\", amount: \"balance\")], \
         cylinder: (water_capacity: \"10L\", working_pressure: \"200bar\"), fill: Pressure(\"150bar\"))",
    )
    .unwrap();
    let o = run(&["plan", file.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    let e = stderr(&o);
    assert!(e.contains("test_pressure") && e.contains("missing.ron:1:"), "{e}");
    assert!(!e.contains("CylinderLine"), "{e}");
}

#[test]
fn two_balance_gases_are_named_before_a_tolerance_on_one_of_them() {
    let dir = common::temp_dir().join(format!("fillwright-twobal-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("twobal.ron");
    std::fs::write(
        &file,
        "Recipe(format: 1, name: \"x\", components: [(gas: \"CO2\", amount: \"15%\"), (gas: \"Ar\", amount: \
         \"balance\", tolerance: \"2%rel\"), (gas: \"N2\", amount: \"balance\")], cylinder: (water_capacity: \
         \"10L\", working_pressure: \"200bar\", test_pressure: \"300bar\"), fill: Pressure(\"150bar\"))",
    )
    .unwrap();
    let o = run(&["plan", file.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("two balance gases (Ar and N2)"), "{}", stderr(&o));
}

#[test]
fn plan_with_a_record_replans_the_rest_of_a_fill_that_went_over() {
    let config = common::temp_dir().join(format!("fillwright-rest-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&config);
    assert!(common::run_in(&config, &["list"]).status.success());
    let records = config.join("library/records");
    std::fs::create_dir_all(&records).unwrap();
    // The CO addition went 18 % over its planned 0.928 g.
    std::fs::write(
        records.join("FC-10-2291-20261204.ron"),
        "Record(format: 1, recipe: \"flue-gas-span\", recipe_revision: 1, cylinder: \"FC-10-2291\", \
         started: \"2026-12-04T09:00:00Z\", scale_uncertainty: \"0.010g\", \
         weighings: [\"13412.000g\", \"13413.100g\"], additions: [(source: \"CO\")])",
    )
    .unwrap();
    let o = common::run_in(&config, &["plan", "flue-gas-span", "--record", "FC-10-2291-20261204", "--format", "json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let rest = &v["rest_of_fill"];
    assert_eq!(rest["weighed"], 1);
    assert_eq!(rest["on_target"], true);
    let steps = rest["steps"].as_array().unwrap();
    assert_eq!(steps.iter().map(|s| s["source"].as_str().unwrap()).collect::<Vec<_>>(), ["CH4", "CO2", "N2"]);
    // Following the re-planned readings gives the target composition (within 1e-6).
    for c in v["components"].as_array().unwrap() {
        let target = c["mole_fraction"].as_f64().unwrap();
        let made = rest["final_fractions"][c["id"].as_str().unwrap()].as_f64().unwrap();
        assert!((made / target - 1.0).abs() < 1e-6, "{}: {made} vs {target}", c["id"]);
    }
    // More of everything after it: each later addition larger than planned.
    let planned: Vec<f64> = v["steps"].as_array().unwrap().iter().map(|s| s["add_mass_g"].as_f64().unwrap()).collect();
    for (k, s) in steps.iter().enumerate() {
        assert!(s["add_mass_g"].as_f64().unwrap() > planned[k + 1] * 1.1, "{s}");
    }
    // Fill on: weigh each remaining addition at the re-planned scale reading, then certify
    // the finished record. The composition made is the target (within 1e-6).
    let mut weighings = vec!["\"13412.000g\"".to_string(), "\"13413.100g\"".to_string()];
    weighings.extend(steps.iter().map(|s| format!("\"{:.9}g\"", s["scale_reading_g"].as_f64().unwrap())));
    std::fs::write(
        records.join("FC-10-2291-20261205.ron"),
        format!(
            "Record(format: 1, recipe: \"flue-gas-span\", recipe_revision: 1, cylinder: \"FC-10-2291\", \
             started: \"2026-12-05T09:00:00Z\", finished: \"2026-12-05T11:00:00Z\", scale_uncertainty: \"0.010g\", \
             weighings: [{}], additions: [(source: \"CO\"), (source: \"CH4\"), (source: \"CO2\"), (source: \"N2\")])",
            weighings.join(", ")
        ),
    )
    .unwrap();
    let c = common::run_in(&config, &["certify", "FC-10-2291-20261205", "--format", "json"]);
    assert!(c.status.success(), "{}", String::from_utf8_lossy(&c.stderr));
    let cert: serde_json::Value = serde_json::from_slice(&c.stdout).unwrap();
    for c in v["components"].as_array().unwrap() {
        let target = c["mole_fraction"].as_f64().unwrap();
        let made = cert["components"].as_array().unwrap().iter().find(|m| m["id"] == c["id"]).unwrap();
        let made = made["mole_fraction"].as_f64().unwrap();
        assert!((made / target - 1.0).abs() < 1e-6, "{}: made {made} vs target {target}", c["id"]);
    }
    // The text shows it after the sheet: the finished addition as recorded, the rest
    // re-planned beside the first plan; a record of another recipe is refused.
    let o = common::run_in(&config, &["plan", "flue-gas-span", "--record", "FC-10-2291-20261204"]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("THE FILL AS IT STANDS"), "{text}");
    let rest = &text[text.find("THE FILL AS IT STANDS").unwrap()..];
    assert!(rest.lines().any(|l| l.contains("CO ") && l.contains("1.100") && l.contains("recorded")), "{rest}");
    let n2 = rest.lines().find(|l| l.trim_start().starts_with("4 N2")).unwrap();
    assert!(n2.contains(&format!("{:.3}", steps[2]["scale_reading_g"].as_f64().unwrap())), "{n2}");
    assert!(n2.contains(&format!("{:.3}", planned[3])), "the first plan beside it: {n2}");
    let long: Vec<&str> = text.lines().filter(|l| l.chars().count() > 80).collect();
    assert!(long.is_empty(), "{long:?}");
    let o = common::run_in(&config, &["plan", "lpg-in-methane", "--record", "FC-10-2291-20261204"]);
    assert_eq!(o.status.code(), Some(1));
    let _ = std::fs::remove_dir_all(&config);
}

#[test]
fn plan_with_a_record_of_pressure_readings_shows_its_finished_steps_without_masses() {
    let config = common::temp_dir().join(format!("fillwright-rest-manometric-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&config);
    assert!(common::run_in(&config, &["list"]).status.success());
    let records = config.join("library/records");
    std::fs::create_dir_all(&records).unwrap();
    std::fs::write(
        records.join("FC-10-2291-M.ron"),
        "Record(format: 1, recipe: \"flue-gas-span\", recipe_revision: 1, cylinder: \"FC-10-2291\", \
         water_capacity: \"10L\", scale_uncertainty: \"0.010g\", additions: [\
         (source: \"CO\", pressure: \"0.081bar\", temperature: \"22C\"), \
         (source: \"CH4\", pressure: \"4.118bar\", temperature: \"22C\")])",
    )
    .unwrap();
    let o = common::run_in(&config, &["plan", "flue-gas-span", "--record", "FC-10-2291-M"]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rest = &text[text.find("THE FILL AS IT STANDS").expect("the table")..];
    assert!(!rest.contains("NaN"), "{rest}");
    let rows: Vec<&str> = rest.lines().filter(|l| l.contains("recorded")).collect();
    assert_eq!(rows.len(), 2, "{rest}");
    assert!(rows[1].contains("CH4") && rows[1].contains("4.118"), "{rest}");
    // The steps still to do are the re-planned third and fourth, not the first twice.
    assert!(rest.lines().any(|l| l.trim_start().starts_with("3 CO2")), "{rest}");
    let _ = std::fs::remove_dir_all(&config);
}
