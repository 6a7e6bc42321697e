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
/// for the `check DIR` case. No two have the same contents (up to 112,000): the pressures
/// repeat every 1,120 recipes, each repetition 0.01 bar higher, so kept answers of one
/// recipe's states do not answer another's.
pub fn write_library(dir: &Path, n: usize) -> std::io::Result<()> {
    std::fs::create_dir_all(dir)?;
    let demos = crate::recipe::demo::RECIPES;
    let cycle = demos.len() * 160;
    for k in 0..n {
        let (name, text) = demos[k % demos.len()];
        let Ok(r) = crate::recipe::Recipe::parse(text, name) else { continue };
        let bar = 40 + (k / demos.len()) % 160;
        let hundredths = (k / cycle) % 100;
        let fill = if hundredths == 0 { format!("{bar}bar") } else { format!("{bar}.{hundredths:02}bar") };
        let r = crate::recipe::Recipe {
            name: format!("{name}-{k:04}"),
            fill: crate::recipe::FillTarget::Pressure(fill),
            fill_temperature: (k % 2 == 1).then(|| format!("{}C", 15 + k % 17)),
            ..r
        };
        std::fs::write(dir.join(format!("{name}-{k:04}.ron")), crate::recipe::canonical::to_text(&r))?;
    }
    Ok(())
}

/// Forget the answers the process keeps between computations (the envelope's answers by
/// fluid and composition, the premix stages' plans, the phase judgements of states) and
/// the mixtures it has made, so that a timed computation that is repeated costs what it
/// costs the first time, as after an edit of the composition that adds a gas.
pub fn forget_kept_answers() {
    crate::checks::phase::forget_kept();
    crate::plan::premix::forget_kept();
    crate::thermo::phases::forget_kept();
    crate::thermo::multifluid::forget_made();
}

/// The kinds of blend in the benchmark panel (see [`panel`]), in the order they cycle.
pub const PANEL_KINDS: [&str; 4] = ["calibration", "methane-rich", "natural gas", "wide"];

/// A seeded panel of `count` recipes for the benchmarks (`benches/panel.rs`), each kind of
/// [`PANEL_KINDS`] in turn: `calibration` (1–4 gases from 10 ppm to 5 % in nitrogen, 50–200
/// bar), `methane-rich` (1–3 of CO2, ethane, nitrogen, propane at percent levels in methane,
/// 80–180 bar: the cricondentherm search near methane's critical region), `natural gas`
/// (9 components, 60–150 bar) and `wide` (12–21 components with heavy traces at ppm
/// levels, 30–100 bar). The same seed gives the same recipes. Invented blends for timing,
/// not orders.
pub fn panel(seed: u64, count: usize) -> Vec<(&'static str, crate::recipe::Recipe)> {
    use rand::{Rng, SeedableRng};
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    (0..count)
        .filter_map(|k| {
            let kind = PANEL_KINDS[k % PANEL_KINDS.len()];
            let (balance, lines, bar) = match k % PANEL_KINDS.len() {
                0 => ("N2", calibration(&mut rng), rng.random_range(50..=200)),
                1 => ("CH4", methane_rich(&mut rng), rng.random_range(80..=180)),
                2 => ("CH4", natural_gas(&mut rng, 0), rng.random_range(60..=150)),
                _ => {
                    let extra = rng.random_range(3..=12);
                    ("CH4", natural_gas(&mut rng, extra), rng.random_range(30..=100))
                }
            };
            let fill_c = rng.random_range(5..=30);
            let text = panel_recipe(&format!("panel-{k:04}"), &lines, balance, bar, fill_c);
            crate::recipe::Recipe::parse(&text, "panel").ok().map(|r| (kind, r))
        })
        .collect()
}

/// A share between `lo` and `hi` (mole fractions), uniform in its logarithm.
fn log_uniform(rng: &mut impl rand::Rng, lo: f64, hi: f64) -> f64 {
    (lo.ln() + rng.random_range(0.0..1.0) * (hi / lo).ln()).exp()
}

/// `k` distinct picks from `from`, in its order.
fn pick<T: Copy>(rng: &mut impl rand::Rng, from: &[T], k: usize) -> Vec<T> {
    let mut chosen: Vec<usize> = Vec::new();
    while chosen.len() < k.min(from.len()) {
        let i = rng.random_range(0..from.len());
        if !chosen.contains(&i) {
            chosen.push(i);
        }
    }
    chosen.sort_unstable();
    chosen.into_iter().map(|i| from[i]).collect()
}

fn calibration(rng: &mut impl rand::Rng) -> Vec<(&'static str, f64)> {
    let gases = ["CO", "CO2", "CH4", "C3H8", "NO", "SO2", "H2", "Ar", "He"];
    let k = rng.random_range(1..=4);
    pick(rng, &gases, k).into_iter().map(|g| (g, log_uniform(rng, 1e-5, 0.05))).collect()
}

fn methane_rich(rng: &mut impl rand::Rng) -> Vec<(&'static str, f64)> {
    let gases = [("CO2", 0.02, 0.15), ("C2H6", 0.02, 0.15), ("N2", 0.01, 0.10), ("C3H8", 0.005, 0.03)];
    let k = rng.random_range(1..=3);
    pick(rng, &gases, k).into_iter().map(|(g, lo, hi)| (g, rng.random_range(lo..hi))).collect()
}

/// A nine-component natural gas and `extra` more: light gases at 0.01–1 %, heavy ones
/// (C6 and above, aromatics, H2S) at 5–200 ppm.
fn natural_gas(rng: &mut impl rand::Rng, extra: usize) -> Vec<(&'static str, f64)> {
    let base = [
        ("C2H6", 0.02, 0.10),
        ("C3H8", 0.005, 0.04),
        ("i-C4H10", 5e-4, 8e-3),
        ("n-C4H10", 5e-4, 8e-3),
        ("i-C5H12", 1e-4, 3e-3),
        ("n-C5H12", 1e-4, 3e-3),
        ("N2", 0.005, 0.05),
        ("CO2", 0.005, 0.03),
    ];
    let mut lines: Vec<(&str, f64)> = base.iter().map(|&(g, lo, hi)| (g, log_uniform(rng, lo, hi))).collect();
    let more = [
        ("n-C6H14", 5e-6, 2e-4),
        ("n-C7H16", 5e-6, 1e-4),
        ("n-C8H18", 5e-6, 5e-5),
        ("C6H6", 5e-6, 1e-4),
        ("C7H8", 5e-6, 5e-5),
        ("H2S", 5e-6, 2e-4),
        ("He", 1e-4, 1e-2),
        ("H2", 1e-4, 1e-2),
        ("Ar", 1e-4, 1e-2),
        ("CO", 1e-4, 1e-2),
        ("C2H4", 1e-4, 1e-2),
        ("C3H6", 1e-4, 5e-3),
    ];
    lines.extend(pick(rng, &more, extra).into_iter().map(|(g, lo, hi)| (g, log_uniform(rng, lo, hi))));
    lines
}

/// The text of a panel recipe.
fn panel_recipe(name: &str, lines: &[(&str, f64)], balance: &str, bar: u32, fill_c: u32) -> String {
    let components: String = lines
        .iter()
        .map(|(g, x)| format!("        (gas: \"{g}\", amount: \"{:.6}%\", tolerance: \"2%rel\"),\n", x * 100.0))
        .collect();
    format!(
        "Recipe(\n    format: 1,\n    name: \"{name}\",\n    components: [\n{components}        (gas: \"{balance}\", \
         amount: \"balance\"),\n    ],\n    cylinder: (water_capacity: \"10L\", working_pressure: \"200bar\", \
         test_pressure: \"300bar\", tare: \"13.5kg\"),\n    fill: Pressure(\"{bar}bar\"),\n    \
         reference_temperature: \"15C\",\n    fill_temperature: \"{fill_c}C\",\n)\n"
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_generated_library_has_no_two_recipes_alike() {
        // Past one cycle of the pressures (1,120) as well: a repeated recipe would be
        // answered from the kept judgements and flatter `check DIR`'s timing.
        let dir = std::env::temp_dir().join(format!("fillwright-library-{}", std::process::id()));
        write_library(&dir, 2300).unwrap();
        let mut contents: Vec<String> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| {
                let text = std::fs::read_to_string(e.unwrap().path()).unwrap();
                // The contents without the name (which differs by construction).
                text.lines().filter(|l| !l.trim_start().starts_with("name:")).collect::<Vec<_>>().join("\n")
            })
            .collect();
        std::fs::remove_dir_all(&dir).unwrap();
        assert_eq!(contents.len(), 2300);
        contents.sort();
        contents.dedup();
        assert_eq!(contents.len(), 2300, "every recipe's contents differ");
    }

    #[test]
    fn the_panel_is_seeded_and_has_each_kind_in_its_range() {
        let c = crate::gas::Catalogue::built_in();
        let a = panel(7, 40);
        assert_eq!(a.len(), 40, "every generated recipe parses");
        assert_eq!(a, panel(7, 40), "the same seed gives the same recipes");
        assert_ne!(a, panel(8, 40), "another seed gives others");
        for (k, (kind, r)) in a.iter().enumerate() {
            assert_eq!(*kind, PANEL_KINDS[k % 4]);
            let order = r.resolve(&c, "", &r.name).unwrap_or_else(|e| panic!("{}: {}", r.name, e.message));
            let n = order.targets.len();
            let range = match *kind {
                "calibration" => 2..=5,
                "methane-rich" => 2..=4,
                "natural gas" => 9..=9,
                _ => 12..=21,
            };
            assert!(range.contains(&n), "{kind}: {n} components");
        }
    }
}
