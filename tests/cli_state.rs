//! `fillwright state` as a user runs it: output, JSON keys, exit statuses and messages.

mod common;

use std::process::{Command, Output};

fn run(args: &[&str]) -> Output {
    common::run_fillwright("state", args)
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn json(o: &Output) -> serde_json::Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&o.stdout)))
}

const MIX: &str = "CO=500ppm,CH4=2.5%,CO2=15%,N2=balance";

#[test]
fn json_has_the_keys_scripts_rely_on() {
    let o = run(&[
        "state",
        "--mix",
        MIX,
        "--temp",
        "15C",
        "--volume",
        "10L",
        "--pressure",
        "150bar",
        "--model",
        "pr",
        "--format",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v = json(&o);
    for key in ["model", "temperature_k", "pressure_bar", "volume_l", "amount_mol", "z", "mass_g"] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["model"], "pr");
    assert_eq!(v["pressure_bar"], 150.0);
    assert_eq!(v["volume_l"], 10.0);
    let (p, vol, n, t, z) = (150e5, 0.01, v["amount_mol"].as_f64().unwrap(), 288.15, v["z"].as_f64().unwrap());
    assert!((z - p * vol / (n * fillwright::units::R * t)).abs() < 1e-12);
    assert_eq!(v["comparison"].as_array().unwrap().len(), fillwright::thermo::Model::ALL.len() - 1);
}

#[test]
fn the_three_unknowns_are_consistent() {
    let base = ["state", "--mix", MIX, "--temp", "20C", "--model", "srk", "--format", "json"];
    let with = |extra: &[&str]| {
        let mut a: Vec<&str> = base.to_vec();
        a.extend_from_slice(extra);
        json(&run(&a))
    };
    let n = with(&["--volume", "10L", "--pressure", "150bar"])["amount_mol"].as_f64().unwrap();
    let n_text = format!("{n}mol");
    let p = with(&["--volume", "10L", "--amount", &n_text])["pressure_bar"].as_f64().unwrap();
    let v = with(&["--pressure", "150bar", "--amount", &n_text])["volume_l"].as_f64().unwrap();
    assert!((p - 150.0).abs() < 1e-9, "{p}");
    assert!((v - 10.0).abs() < 1e-10, "{v}");
}

#[test]
fn mass_input_uses_the_mixture_molar_mass() {
    // 28.014 g of N2 (M = 28.014 g/mol from IUPAC 2021 conventional weights) is 1 mol.
    let v = json(&run(&[
        "state", "--mix", "N2", "--temp", "0C", "--volume", "22.4L", "--amount", "28.014g", "--model", "ideal",
        "--format", "json",
    ]));
    assert!((v["amount_mol"].as_f64().unwrap() - 1.0).abs() < 1e-12);
    // 1 mol of ideal gas in 22.4 L at 273.15 K: P = RT/V = 1.01387 bar.
    assert!((v["pressure_bar"].as_f64().unwrap() - 8.314_462_618_153_24 * 273.15 / 0.0224 / 1e5).abs() < 1e-12);
}

#[test]
fn text_shows_the_other_models_and_their_difference() {
    let o = run(&["state", "--mix", MIX, "--temp", "15C", "--volume", "10L", "--pressure", "150bar"]);
    assert!(o.status.success());
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(out.contains("model: GERG-2008 (gerg)"), "the default is gerg where it covers: {out}");
    for title in ["ideal gas", "van der Waals", "Redlich-Kwong", "Soave-Redlich-Kwong", "Peng-Robinson"] {
        assert!(out.contains(title), "{title} missing from {out}");
    }
    assert!(out.contains("vs gerg"));
    let o =
        run(&["state", "--mix", "SO2=100ppm,N2=balance", "--temp", "15C", "--volume", "10L", "--pressure", "150bar"]);
    let out = String::from_utf8_lossy(&o.stdout);
    // GERG-2008 does not cover SO2: the multi-fluid model is the default.
    assert!(out.contains("model: multi-fluid (multi)"), "{out}");
    assert!(out.contains("does not cover SO2"), "{out}");
}

#[test]
fn refused_input_exits_1_and_names_the_offending_text() {
    let cases: &[(&[&str], &str)] = &[
        (&["--temp", "-300C", "--volume", "10L", "--pressure", "150bar"], "\"-300C\""),
        (&["--temp", "0K", "--volume", "10L", "--pressure", "150bar"], "absolute zero"),
        (&["--temp", "15", "--volume", "10L", "--pressure", "150bar"], "15C, 288.15K"),
        (&["--temp", "15C", "--volume", "0L", "--pressure", "150bar"], "\"0L\""),
        (&["--temp", "15C", "--volume", "10 gallons", "--pressure", "150bar"], "unknown unit"),
        (&["--temp", "15C", "--volume", "10L", "--amount", "0mol"], "\"0mol\""),
        (&["--temp", "15C", "--volume", "10L", "--amount", "-3mol"], "above zero"),
        (&["--temp", "15C", "--volume", "10L", "--pressure", "1500bar"], "above 1000 bar"),
        (&["--temp", "15C", "--volume", "10L", "--pressure", "150"], "has no unit"),
        (&["--temp", "15C", "--volume", "10L", "--pressure", "abc"], "\"abc\""),
        (&["--temp", "15C", "--volume", "1L", "--amount", "1000mol", "--model", "vdw"], "co-volume"),
        (&["--temp", "15C", "--volume", "1L", "--amount", "30mol", "--model", "pr"], "above 1000 bar"),
        (&["--temp", "15C", "--volume", "10L", "--pressure", "150bar", "--ambient", "x"], "--ambient"),
    ];
    for (args, needle) in cases {
        let mut a = vec!["state", "--mix", "N2"];
        a.extend_from_slice(args);
        let o = run(&a);
        assert_eq!(o.status.code(), Some(1), "{args:?}: {}", stderr(&o));
        assert!(stderr(&o).contains(needle), "{args:?}: {}", stderr(&o));
        assert!(!stderr(&o).contains("panicked"));
    }
}

#[test]
fn refused_mixtures_exit_1() {
    let cases = [
        ("CO2=15%,N2=80%", "add up to 95 %"),
        ("CO2=15%,Nitrogn=balance", "did you mean N2"),
        ("CO2=15%,N2=balance,Ar=balance", "two balance gases"),
        ("CO2=15percent,N2=balance", "\"15percent\""),
        ("CO2=15%,SO2=1%,N2=balance", "does not cover SO2"),
    ];
    for (mix, needle) in cases {
        let model = if needle.contains("cover") { "gerg" } else { "pr" };
        let o =
            run(&["state", "--mix", mix, "--temp", "15C", "--volume", "10L", "--pressure", "150bar", "--model", model]);
        assert_eq!(o.status.code(), Some(1), "{mix}");
        assert!(stderr(&o).contains(needle), "{mix}: {}", stderr(&o));
    }
}

#[test]
fn wrong_usage_exits_2() {
    let o = run(&["state", "--mix", "N2", "--temp", "15C", "--volume", "10L"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("exactly two of"));
    let o =
        run(&["state", "--mix", "N2", "--temp", "15C", "--volume", "10L", "--pressure", "1bar", "--amount", "1mol"]);
    assert_eq!(o.status.code(), Some(2));
    let o =
        run(&["state", "--mix", "N2", "--temp", "15C", "--volume", "10L", "--pressure", "1bar", "--model", "bogus"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn help_documents_every_option() {
    let o = run(&["state", "--help"]);
    assert!(o.status.success());
    let help = String::from_utf8_lossy(&o.stdout);
    for opt in ["--mix", "--temp", "--volume", "--pressure", "--amount", "--model", "--format", "--ambient"] {
        assert!(help.contains(opt), "{opt} not in help");
    }
    assert!(help.contains("ppm") && help.contains("barg") && help.contains("gerg"));
}

#[test]
fn broken_user_catalogue_is_reported_with_file_line_and_column() {
    let dir = common::temp_dir().join(format!("fillwright-test-cat-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("gases.ron"), "Catalogue(\n  gases: [\n    Gas(id: \"X\", name: 5),\n  ],\n)\n").unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["state", "--mix", "N2", "--temp", "15C", "--volume", "10L", "--pressure", "150bar"])
        .env("FILLWRIGHT_CONFIG", &dir)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let e = stderr(&o);
    assert!(e.contains("gases.ron:3:"), "{e}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn settings_choose_the_default_model_and_are_checked() {
    let dir = common::temp_dir().join(format!("fillwright-test-settings-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let state = |dir: &std::path::Path, extra: &[&str]| {
        Command::new(env!("CARGO_BIN_EXE_fillwright"))
            .args(["state", "--mix", "N2", "--temp", "15C", "--volume", "10L", "--pressure", "150bar"])
            .args(extra)
            .env("FILLWRIGHT_CONFIG", dir)
            .output()
            .unwrap()
    };
    std::fs::write(dir.join("settings.ron"), "(default_model: srk)\n").unwrap();
    let o = state(&dir, &[]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("model: Soave-Redlich-Kwong (srk)"));
    // The command line wins over the setting.
    let o = state(&dir, &["--model", "vdw"]);
    assert!(String::from_utf8_lossy(&o.stdout).contains("model: van der Waals (vdw)"));
    std::fs::write(dir.join("settings.ron"), "(\n  default_model: srk,\n  ambient: \"one bar\",\n)\n").unwrap();
    let o = state(&dir, &[]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("settings.ron:3:3: ambient"), "{}", stderr(&o));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn settings_written_by_the_program_read_back() {
    let dir = common::temp_dir().join(format!("fillwright-test-settings-save-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    // This process-wide variable is read only by config::config_dir, and no other test in
    // this binary reads it in-process (the others pass it to child processes).
    std::env::set_var("FILLWRIGHT_CONFIG", &dir);
    let s = fillwright::settings::Settings { default_model: Some(fillwright::thermo::Model::Rk), ..Default::default() };
    let path = fillwright::config::save_settings(&s).unwrap();
    let loaded = fillwright::config::load_settings().unwrap();
    assert_eq!(loaded.default_model, Some(fillwright::thermo::Model::Rk));
    assert!(path.ends_with("settings.ron"));
    std::env::remove_var("FILLWRIGHT_CONFIG");
    std::fs::remove_dir_all(&dir).ok();
}
