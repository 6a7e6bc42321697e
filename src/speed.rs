//! The cases that the speed benchmarks (`benches/speed.rs`), the table of
//! `examples/bench_table.rs` and the peers' script (`tools/bench_peers.py`) measure, in one
//! place so that each measures the same thing.

use std::path::Path;

/// A four-component natural-gas-like blend (ids, mole fractions).
pub const GAS4: (&[&str], &[f64]) = (&["CH4", "N2", "CO2", "C2H6"], &[0.85, 0.05, 0.05, 0.05]);

/// A nine-component pipeline gas (the fixture of the phase tests).
pub const GAS9: (&[&str], &[f64]) = (
    &["CH4", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "N2", "CO2"],
    &[0.897, 0.05, 0.015, 0.003, 0.003, 0.001, 0.001, 0.02, 0.01],
);

/// The state of the single-state cases: 15 °C and 150 bar.
pub const STATE_T_K: f64 = 288.15;
pub const STATE_P_PA: f64 = 150e5;

/// The pressure of the one-dew-point case.
pub const DEW_P_PA: f64 = 30e5;

/// Write `n` distinct recipes into `dir` (made from the demo recipes, each at its own fill
/// pressure between 40 and 199 bar and, for every second one, its own fill temperature),
/// for the `check DIR` case.
pub fn write_library(dir: &Path, n: usize) -> std::io::Result<()> {
    std::fs::create_dir_all(dir)?;
    let demos = crate::recipe::demo::RECIPES;
    for k in 0..n {
        let (name, text) = demos[k % demos.len()];
        let Ok(r) = crate::recipe::Recipe::parse(text, name) else { continue };
        let bar = 40 + (k / demos.len()) % 160;
        let r = crate::recipe::Recipe {
            name: format!("{name}-{k:04}"),
            fill: crate::recipe::FillTarget::Pressure(format!("{bar}bar")),
            fill_temperature: (k % 2 == 1).then(|| format!("{}C", 15 + k % 17)),
            ..r
        };
        std::fs::write(dir.join(format!("{name}-{k:04}.ron")), crate::recipe::canonical::to_text(&r))?;
    }
    Ok(())
}
