//! Verification by analysis (ISO 6143): the calibration fit against scipy.odr (ODRPACK)
//! and York et al. 2004, the `verify` command's outputs and exit status, and the
//! verification on the certificate.
//!
//! The reference figures come from tests/reference/make_verification_fixture.py; the data
//! sets are ours (invented analyser readings). No published worked example of ISO 6143
//! could be checked here, so none is claimed.

mod common;

use std::path::{Path, PathBuf};
use std::process::Output;

use fillwright::gas::Catalogue;
use fillwright::verification::{self, Measured, Verification};
use serde_json::Value;

fn fixture() -> Value {
    serde_json::from_str(&std::fs::read_to_string("tests/fixtures/verification_reference.json").unwrap()).unwrap()
}

fn no_records(_: &str, _: usize) -> Result<Measured, String> {
    Err("no records in this test".into())
}

fn report_of(file: &str) -> verification::Report {
    let text = std::fs::read_to_string(file).unwrap();
    let v = Verification::parse(&text, file).unwrap();
    let checked = v.check(&Catalogue::built_in(), &no_records, &text, file).unwrap();
    verification::verify(&checked).unwrap()
}

fn close(a: f64, b: f64, rel: f64, what: &str) {
    assert!((a - b).abs() <= rel * b.abs(), "{what}: {a} against {b} (relative {:.2e})", ((a - b) / b).abs());
}

#[test]
fn the_fit_matches_scipy_odr_in_estimates_and_unscaled_covariance() {
    for case in fixture()["cases"].as_array().unwrap() {
        let file = case["file"].as_str().unwrap();
        let r = report_of(file);
        let fit = &r.fit;
        assert_eq!(fit.function.key(), case["function"].as_str().unwrap());
        let want: Vec<f64> = case["coefficients"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
        for (k, w) in want.iter().enumerate() {
            // scipy.odr: beta, to 1e-7 relative or a millionth of its own uncertainty (an
            // intercept near zero is known to that, not to its relative digits).
            let u = fit.covariance[(k, k)].sqrt();
            let d = (fit.coefficients[k] - w).abs();
            assert!(d <= (1e-7 * w.abs()).max(1e-6 * u), "{file} b{k}: {} against {w} (u {u})", fit.coefficients[k]);
        }
        for (a, row) in case["covariance"].as_array().unwrap().iter().enumerate() {
            for (b, w) in row.as_array().unwrap().iter().enumerate() {
                // scipy.odr: cov_beta, ODRPACK's unscaled covariance.
                close(fit.covariance[(a, b)], w.as_f64().unwrap(), 1e-5, &format!("{file} cov[{a}][{b}]"));
            }
        }
        for (k, w) in case["adjusted"].as_array().unwrap().iter().enumerate() {
            close(fit.adjusted[k], w.as_f64().unwrap(), 1e-9, &format!("{file} adjusted x{k}"));
        }
        close(fit.sum_of_squares, case["sum_of_squares"].as_f64().unwrap(), 1e-6, &format!("{file} S"));
        // The sample from the scipy fit's coefficients and covariance.
        close(r.analysed.value, case["analysed"].as_f64().unwrap(), 1e-8, &format!("{file} analysed"));
        close(r.analysed.u, case["analysed_u"].as_f64().unwrap(), 1e-5, &format!("{file} analysed u"));
    }
}

#[test]
fn straight_lines_match_york_2004_closed_form() {
    let mut seen = 0;
    for case in fixture()["cases"].as_array().unwrap() {
        let Some(york) = case.get("york") else { continue };
        let r = report_of(case["file"].as_str().unwrap());
        let fit = &r.fit;
        // York, Evensen, Martínez López and Delgado, Am. J. Phys. 72, 367 (2004): a, b, σa, σb.
        let u0 = york["u_intercept"].as_f64().unwrap();
        assert!((fit.coefficients[0] - york["intercept"].as_f64().unwrap()).abs() <= 1e-6 * u0, "intercept");
        close(fit.coefficients[1], york["slope"].as_f64().unwrap(), 1e-9, "slope");
        close(fit.covariance[(0, 0)].sqrt(), york["u_intercept"].as_f64().unwrap(), 1e-6, "u intercept");
        close(fit.covariance[(1, 1)].sqrt(), york["u_slope"].as_f64().unwrap(), 1e-6, "u slope");
        seen += 1;
    }
    assert_eq!(seen, 2);
}

#[test]
fn consistency_is_judged_at_twice_the_combined_uncertainty() {
    let r = report_of("tests/verifications/co2-ndir-linear.ron");
    let bound = 2.0 * (r.checked.prepared.u.powi(2) + r.analysed.u.powi(2)).sqrt();
    assert!((r.bound - bound).abs() < 1e-18);
    assert_eq!(r.consistent, (r.checked.prepared.value - r.analysed.value).abs() <= bound);
    // 12.0036 % prepared against 12.0284 % analysed: 0.025 % apart, far beyond 2·0.004 %.
    assert!(!r.consistent, "{r:?}");
    let r = report_of("tests/verifications/co-ppm-quadratic.ron");
    assert!(r.consistent && r.adequate(), "{r:?}");
}

// --- the command line ---

fn fresh(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-verification-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn verify_exits_0_when_consistent_3_when_not_1_when_refused() {
    let dir = fresh("exit");
    let o = common::run_in(&dir, &["verify", "tests/verifications/co-ppm-quadratic.ron"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.contains("CONSISTENT: the analysis confirms"), "{text}");
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
    let o = common::run_in(&dir, &["verify", "tests/verifications/co2-ndir-linear.ron"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    assert!(stdout(&o).contains("NOT CONSISTENT"), "{}", stdout(&o));
    // JSON carries the contract's keys, with consistent false.
    let o = common::run_in(&dir, &["verify", "tests/verifications/co2-ndir-linear.ron", "--format", "json"]);
    assert_eq!(o.status.code(), Some(3));
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    for key in ["gas", "function", "coefficients", "analysed", "prepared", "difference", "consistent"] {
        assert!(v.get(key).is_some(), "{key} missing: {v}");
    }
    assert_eq!(v["consistent"], false);
    assert_eq!(v["gas"], "CO2");
    assert!(v["analysed"]["standard_uncertainty"].as_f64().unwrap() > 0.0);
    // CSV: a header and one row per reference mixture.
    let o = common::run_in(&dir, &["verify", "tests/verifications/co-ppm-quadratic.ron", "--format", "csv"]);
    let csv = stdout(&o);
    assert!(csv.starts_with("mixture,content,content_u,response"), "{csv}");
    assert_eq!(csv.lines().count(), 7, "{csv}");
    // A file that cannot be judged: exit 1 with its place.
    let bad = dir.join("bad.ron");
    let text = std::fs::read_to_string("tests/verifications/co-ppm-quadratic.ron").unwrap();
    std::fs::write(&bad, text.replace("±0.4\"", "±0\"")).unwrap();
    let o = common::run_in(&dir, &["verify", bad.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("bad.ron:") && stderr(&o).contains("above zero"), "{}", stderr(&o));
}

#[test]
fn verify_reads_standard_input_and_refuses_what_cannot_be_fitted() {
    let dir = fresh("stdin");
    let text = std::fs::read_to_string("tests/verifications/co-ppm-quadratic.ron").unwrap();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(["verify", "-", "--format", "json"])
        .env("FILLWRIGHT_CONFIG", &dir)
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::io::Write::write_all(child.stdin.as_mut().unwrap(), text.as_bytes()).unwrap();
    let o = child.wait_with_output().unwrap();
    assert!(o.status.success());
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["function"], "quadratic");
    // Too few mixtures for a cubic; a sample beyond the mixtures; a mixture listed twice.
    let cases = [
        (
            text.replace("\"quadratic\"", "\"cubic\"")
                .replace("(name: \"RM-1\"", "//")
                .replace("(name: \"RM-2\"", "//")
                .replace("(name: \"RM-3\"", "//"),
            "needs at least 4",
        ),
        (text.replace("response: \"2487.1±1.8\"", "response: \"6000.0±1.8\""), "above the highest reference mixture"),
        (text.replace("name: \"RM-2\"", "name: \"RM-1\""), "listed twice"),
    ];
    for (k, (t, needle)) in cases.iter().enumerate() {
        let file = dir.join(format!("case{k}.ron"));
        std::fs::write(&file, t).unwrap();
        let o = common::run_in(&dir, &["verify", file.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(1), "{k}: {}", stdout(&o));
        assert!(stderr(&o).contains(needle), "{k}: {}", stderr(&o));
    }
}

// --- on the certificate ---

/// A library with the demo recipes, the flue-gas record and a CO2 verification of it.
fn library_with_verified_record(tag: &str, analysed_response: &str) -> (PathBuf, PathBuf) {
    let config = fresh(tag);
    assert!(common::run_in(&config, &["list"]).status.success());
    let lib = config.join("library");
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron").unwrap();
    let text = text.replace("recipe_revision: 1,", "recipe_revision: 1,\n    finished: \"2026-12-02T10:00:00Z\",");
    std::fs::create_dir_all(lib.join("records")).unwrap();
    std::fs::write(lib.join("records/FC-10-2291-20261202.ron"), text).unwrap();
    // An NDIR read linear in CO2 (response = 10 × mole fraction), mixtures of ours.
    let verification = format!(
        r#"Verification(
    format: 1,
    gas: "CO2",
    analyser: "NDIR, bench 2",
    function: "linear",
    standards: [
        (name: "RM-A", content: "12.002%±0.004%", response: "1.20020±0.00030"),
        (name: "RM-B", content: "14.010%±0.004%", response: "1.40095±0.00030"),
        (name: "RM-C", content: "16.005%±0.005%", response: "1.60054±0.00030"),
    ],
    sample: (record: "FC-10-2291-20261202", response: "{analysed_response}"),
)
"#
    );
    std::fs::create_dir_all(lib.join("verifications")).unwrap();
    std::fs::write(lib.join("verifications/FC-10-2291-CO2.ron"), verification).unwrap();
    (config, lib)
}

/// The record's CO2 content as certified, to place the analyser's reading near it.
fn certified_co2(config: &Path) -> f64 {
    let o = common::run_in(config, &["certify", "FC-10-2291-20261202", "--format", "json", "--draws", "1000"]);
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    v["components"].as_array().unwrap().iter().find(|c| c["id"] == "CO2").unwrap()["mole_fraction"].as_f64().unwrap()
}

#[test]
fn the_certificate_shows_each_component_verified_or_not_and_stops_when_inconsistent() {
    let (config, lib) = library_with_verified_record("cert", "1.46000±0.00030");
    let x = certified_co2(&config);
    // A reading that matches the record: consistent.
    let file = lib.join("verifications/FC-10-2291-CO2.ron");
    let good = std::fs::read_to_string(&file).unwrap().replace("1.46000", &format!("{:.5}", 10.0 * x));
    std::fs::write(&file, &good).unwrap();
    let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.contains("VERIFICATION BY ANALYSIS (ISO 6143)"), "{text}");
    let co2 = text.lines().filter(|l| l.starts_with("CO2 ")).nth(1).unwrap();
    assert!(co2.ends_with("consistent"), "{co2}");
    assert!(text.lines().any(|l| l.starts_with("CO ") && l.contains("not verified")), "{text}");
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
    // `verify` by name in the library agrees, the prepared value taken from the record.
    let o = common::run_in(&config, &["verify", "FC-10-2291-CO2", "--format", "json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!((v["prepared"]["mole_fraction"].as_f64().unwrap() - x).abs() < 1e-12);
    // JSON of the certificate.
    let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--format", "json", "--draws", "1000"]);
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["consistent_with_analysis"], true);
    let comps = v["verification"]["components"].as_array().unwrap();
    assert!(comps.iter().any(|c| c["id"] == "CO2" && c["verified"] == true && c["consistent"] == true));
    assert!(comps.iter().any(|c| c["id"] == "CO" && c["verified"] == false));

    // A reading 0.2 % relative off: not consistent; the certificate stops, exit 3.
    let bad =
        std::fs::read_to_string(&file).unwrap().replace(&format!("{:.5}", 10.0 * x), &format!("{:.5}", 10.02 * x));
    std::fs::write(&file, bad).unwrap();
    let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(text.lines().take(4).any(|l| l.contains("STOP - NOT CONSISTENT WITH ANALYSIS: CO2")), "{text}");
    let o = common::run_in(&config, &["verify", "FC-10-2291-CO2"]);
    assert_eq!(o.status.code(), Some(3));
}

#[test]
fn the_laboratory_may_combine_the_verification_uncertainty() {
    let (config, lib) = library_with_verified_record("combine", "1.46000±0.00030");
    let x = certified_co2(&config);
    let file = lib.join("verifications/FC-10-2291-CO2.ron");
    let good = std::fs::read_to_string(&file).unwrap().replace("1.46000", &format!("{:.5}", 10.0 * x));
    std::fs::write(&file, &good).unwrap();
    let json = |config: &Path| -> Value {
        let o = common::run_in(config, &["certify", "FC-10-2291-20261202", "--format", "json", "--draws", "1000"]);
        serde_json::from_slice(&o.stdout).unwrap()
    };
    let co2 = |v: &Value, key: &str| {
        v["components"].as_array().unwrap().iter().find(|c| c["id"] == "CO2").unwrap()[key].as_f64().unwrap()
    };
    let alone = json(&config);
    std::fs::write(config.join("settings.ron"), "(combine_verification_uncertainty: true)").unwrap();
    let combined = json(&config);
    let u_ver = combined["verification"]["components"].as_array().unwrap().iter().find(|c| c["id"] == "CO2").unwrap()
        ["standard_uncertainty"]
        .as_f64()
        .unwrap();
    let u_grav = co2(&alone, "standard_uncertainty");
    assert_eq!(u_grav, co2(&combined, "gravimetric_standard_uncertainty"));
    let want = (u_grav * u_grav + u_ver * u_ver).sqrt();
    assert!((co2(&combined, "standard_uncertainty") - want).abs() <= 1e-15 * want, "{combined}");
}

#[test]
fn a_sample_record_without_the_gas_is_refused_naming_what_it_holds() {
    let (config, lib) = library_with_verified_record("nogas", "1.46000±0.00030");
    let file = lib.join("verifications/FC-10-2291-CO2.ron");
    let text = std::fs::read_to_string(&file).unwrap().replace("gas: \"CO2\"", "gas: \"SO2\"");
    std::fs::write(&file, text).unwrap();
    let o = common::run_in(&config, &["verify", "FC-10-2291-CO2"]);
    assert_eq!(o.status.code(), Some(1), "{}", stdout(&o));
    let e = stderr(&o);
    assert!(e.contains("does not contain SO2") && e.contains("CO2"), "{e}");
    // The certificate names the file that gave no verdict, and still certifies.
    let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains("FC-10-2291-CO2: no verdict"), "{}", stdout(&o));
}

#[test]
fn every_verification_of_a_gas_is_judged_whatever_the_file_names() {
    let (config, lib) = library_with_verified_record("two", "1.46000±0.00030");
    let x = certified_co2(&config);
    let dir = lib.join("verifications");
    let good = std::fs::read_to_string(dir.join("FC-10-2291-CO2.ron"))
        .unwrap()
        .replace("1.46000", &format!("{:.5}", 10.0 * x));
    let bad = good.replace(&format!("{:.5}", 10.0 * x), &format!("{:.5}", 10.02 * x));
    // The failing rerun sorts after the passing file, and before it: a stop either way.
    for (first, second) in [("A-pass.ron", "Z-rerun.ron"), ("Z-pass.ron", "A-rerun.ron")] {
        std::fs::remove_dir_all(&dir).unwrap();
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join(first), &good).unwrap();
        std::fs::write(dir.join(second), &bad).unwrap();
        let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
        assert_eq!(o.status.code(), Some(3), "{first} {second}: {}", stdout(&o));
        let text = stdout(&o);
        assert!(text.contains("NOT CONSISTENT") && text.contains("consistent"), "{text}");
        assert!(!text.contains("the analysis\n  confirms it"), "{text}");
    }
}

#[test]
fn a_damaged_verification_file_of_the_record_is_named_on_the_certificate() {
    let (config, lib) = library_with_verified_record("damaged", "1.46000±0.00030");
    let file = lib.join("verifications/FC-10-2291-CO2.ron");
    let text = std::fs::read_to_string(&file).unwrap();
    std::fs::write(&file, &text[..text.len() - 3]).unwrap();
    let o = common::run_in(&config, &["certify", "FC-10-2291-20261202", "--draws", "1000"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("FC-10-2291-CO2: no verdict"), "{}", stdout(&o));
}
