//! Helpers shared by the integration tests.

// Each test crate uses a part of these.
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::{Command, Output};
use std::sync::OnceLock;

/// This test process's scratch folder, removed when the process ends (passed or failed).
static SCRATCH: OnceLock<PathBuf> = OnceLock::new();

extern "C" fn remove_scratch() {
    if let Some(root) = SCRATCH.get() {
        let _ = std::fs::remove_dir_all(root);
    }
}

/// The folder the tests make their temporary files in: one per test process under the
/// system's temporary folder, removed at exit, so that a run leaves nothing behind.
pub fn temp_dir() -> PathBuf {
    SCRATCH
        .get_or_init(|| {
            let root = std::env::temp_dir().join(format!("fillwright-tests-{}", std::process::id()));
            std::fs::create_dir_all(&root).expect("the scratch folder can be made");
            // SAFETY: registers a plain function without arguments to run at exit.
            unsafe {
                libc::atexit(remove_scratch);
            }
            root
        })
        .clone()
}

/// Run the program with `args` and an empty config folder of its own (named by `tag`), so
/// that no user library, settings or catalogue of the machine takes part.
pub fn run_fillwright(tag: &str, args: &[&str]) -> Output {
    run_in(&temp_dir().join(format!("fillwright-{tag}-empty-{}", std::process::id())), args)
}

/// Run the program with `args` and the config folder `config` (a library, settings and
/// sources of the test's own).
pub fn run_in(config: &std::path::Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", config)
        .env_remove("FILLWRIGHT_LIBRARY")
        .env_remove("RUST_BACKTRACE")
        .output()
        .unwrap()
}

/// Recipe text for an order given as gases and mole fractions (the last gas is the
/// balance), in a cylinder rated well above the fill.
pub fn recipe_text(
    label: &str,
    ids: &[String],
    x: &[f64],
    volume_l: f64,
    pressure_bar: f64,
    t_ref_k: f64,
    t_fill_k: f64,
) -> String {
    let n = ids.len();
    let components: Vec<String> = ids
        .iter()
        .zip(x)
        .enumerate()
        .map(|(i, (id, x))| {
            let amount = if i == n - 1 { "balance".to_string() } else { x.to_string() };
            format!("(gas: \"{id}\", amount: \"{amount}\")")
        })
        .collect();
    format!(
        "Recipe(format: 1, name: \"{label}\", components: [{}], cylinder: (water_capacity: \"{volume_l}L\", \
         working_pressure: \"300bar\", test_pressure: \"450bar\"), fill: Pressure(\"{pressure_bar}bar\"), \
         reference_temperature: \"{t_ref_k}K\", fill_temperature: \"{t_fill_k}K\")",
        components.join(", ")
    )
}

/// The text of a PDF as pdftotext reads it back (layout kept).
pub fn pdf_text(pdf: &std::path::Path) -> String {
    let out = Command::new("pdftotext")
        .args(["-layout", pdf.to_str().unwrap(), "-"])
        .output()
        .expect("pdftotext is needed to read a PDF back (poppler-utils; .ci/run installs it)");
    String::from_utf8_lossy(&out.stdout).into_owned()
}
