//! Stops are stops, units are read as SI writes them, and output errors end in a message:
//! `plan` exits 3 whenever `check` would, SI prefixes are case-sensitive, a full disk on
//! standard output is exit 1 (never a panic), and `certify --draws` is validated.

mod common;

use std::process::{Command, Output, Stdio};

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const EXPLOSIVE: [&str; 8] = ["--mix", "H2=50%,O2=balance", "--volume", "10L", "--pressure", "150bar", "--temp", "15C"];

#[test]
fn a_plan_of_a_stopped_blend_exits_3_and_starts_with_the_stop() {
    let plan: Vec<&str> = ["plan"].iter().chain(&EXPLOSIVE).copied().collect();
    let check: Vec<&str> = ["check"].iter().chain(&EXPLOSIVE).copied().collect();
    let o = common::run_fillwright("stop-plan", &check);
    assert_eq!(o.status.code(), Some(3), "check: {}", out(&o));
    let o = common::run_fillwright("stop-plan", &plan);
    assert_eq!(o.status.code(), Some(3), "{}", out(&o));
    let text = out(&o);
    assert!(text.starts_with("!!!") && text.lines().nth(1).unwrap().contains("STOP"), "{text}");
    // The reason (hydrogen with oxygen: explosive) is named before the sheet, with its check.
    let banner: String = text.lines().take_while(|l| l.starts_with("!!")).collect::<Vec<_>>().join("\n");
    assert!(banner.contains("explosive") && banner.contains("(incompatibility)"), "{banner}");
    assert!(text.contains("FILL SHEET"), "the sheet still follows the banner");
    let json: Vec<&str> = plan.iter().chain(&["--format", "json"]).copied().collect();
    let o = common::run_fillwright("stop-plan", &json);
    assert_eq!(o.status.code(), Some(3));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let stops = v["stops"].as_array().unwrap();
    assert!(!stops.is_empty() && stops.iter().all(|s| s["severity"] == "stop"), "{v}");
    // A harmless blend plans with exit 0 and no stops.
    let o = common::run_fillwright(
        "stop-plan",
        &["plan", "--mix", "CO2=10%,N2=balance", "--volume", "10L", "--pressure", "150bar", "--temp", "15C"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(!out(&o).starts_with("!!!"));
}

#[test]
fn si_prefixes_are_case_sensitive_and_the_unclear_ones_refused() {
    let base = ["plan", "--mix", "CO2=10%,N2=balance", "--volume", "10L", "--temp", "15C", "--pressure"];
    let run = |p: &str| {
        let args: Vec<&str> = base.iter().copied().chain([p]).collect();
        common::run_fillwright("prefix", &args)
    };
    // 15 MPa is 150 bar and plans.
    assert_eq!(run("15MPa").status.code(), Some(0));
    // 15 mPa is millipascal: refused with what was probably meant, never read as 150 bar.
    let o = run("15mPa");
    assert_eq!(o.status.code(), Some(1), "{}", out(&o));
    assert!(err(&o).contains("millipascal") && err(&o).contains("MPa"), "{}", err(&o));
    let o = run("1500Mbar");
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("megabar") && err(&o).contains("mbar"), "{}", err(&o));
    let o = run("150Kpa");
    assert_eq!(o.status.code(), Some(1));
    assert!(err(&o).contains("accepted"), "{}", err(&o));
    // In a recipe file too.
    let dir = common::temp_dir().join(format!("fillwright-prefix-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let recipe = dir.join("r.ron");
    let text = common::recipe_text("r", &["CO2".into(), "N2".into()], &[0.1, 0.9], 10.0, 150.0, 288.15, 293.15)
        .replace("\"300bar\"", "\"30mPa\"");
    std::fs::write(&recipe, text).unwrap();
    let o = common::run_fillwright("prefix", &["plan", recipe.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1), "{}", out(&o));
    assert!(err(&o).contains("millipascal"), "{}", err(&o));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Run with standard output on /dev/full.
fn to_dev_full(args: &[&str]) -> Output {
    let full = std::fs::OpenOptions::new().write(true).open("/dev/full").unwrap();
    let dir = common::temp_dir().join(format!("fillwright-full-{}", std::process::id()));
    Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", &dir)
        .stdout(Stdio::from(full))
        .stderr(Stdio::piped())
        .output()
        .unwrap()
}

#[test]
fn a_full_disk_on_standard_output_is_a_message_and_exit_1() {
    for args in [
        vec!["gases"],
        vec!["plan", "flue-gas-span"],
        vec!["state", "--mix", "N2", "--temp", "15C", "--volume", "10L", "--pressure", "150bar"],
        vec!["gases", "--format", "json"],
        vec!["--help"],
        vec!["plan", "--help"],
    ] {
        let o = to_dev_full(&args);
        assert_eq!(o.status.code(), Some(1), "{args:?}: {}", err(&o));
        assert!(!err(&o).contains("panicked"), "{args:?}: {}", err(&o));
        assert!(err(&o).contains("standard output could not be written"), "{args:?}: {}", err(&o));
    }
}

#[test]
fn monte_carlo_draws_outside_1000_to_ten_million_are_wrong_usage() {
    for draws in ["0", "1", "999", "10000001"] {
        let o = common::run_fillwright("draws", &["certify", "tests/records/flue-gas-made.ron", "--draws", draws]);
        assert_eq!(o.status.code(), Some(2), "{draws}: {}", err(&o));
        assert!(err(&o).contains("1000..=10000000"), "{draws}: {}", err(&o));
        assert!(!err(&o).contains("panicked"));
    }
}
