//! Writes `tests/fixtures/envelope_before.json`: dew temperatures, cricondentherms and the
//! pressure ranges of liquid at one temperature, as the envelope search of the first
//! release found them (walk down from 1.6 × the highest Tc in 1.5 % steps, bisect the
//! stability verdict, golden-section over ln P). The faster search must give the same
//! answers to 1e-3 K; `tests/envelope.rs` checks it. Kept to regenerate the cases if the
//! set of mixtures grows; run with the commit that holds the search to compare with.
//! Run: cargo run --release --example envelope_fixture

use fillwright::thermo::Model;

/// Feeds on which the envelope search is checked (label, ids, mole fractions, models):
/// the demo blends, the phase fixture's mixtures, and the hard cases (near-critical, nine
/// components, traces of heavy components, CO2-rich).
#[allow(clippy::type_complexity)]
const ENVELOPE_CASES: &[(&str, &[&str], &[f64], &[Model])] = &[
    ("propane-5-in-N2", &["C3H8", "N2"], &[0.05, 0.95], &[Model::Pr, Model::Srk]),
    ("butane-2-in-N2", &["n-C4H10", "N2"], &[0.02, 0.98], &[Model::Pr]),
    ("co2-30-in-N2", &["CO2", "N2"], &[0.3, 0.7], &[Model::Pr, Model::Srk]),
    (
        "natural-gas-9",
        &["CH4", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "N2", "CO2"],
        &[0.897, 0.05, 0.015, 0.003, 0.003, 0.001, 0.001, 0.02, 0.01],
        &[Model::Pr, Model::Srk],
    ),
    ("lpg-in-methane", &["C3H8", "n-C4H10", "CH4"], &[0.08, 0.03, 0.89], &[Model::Pr]),
    ("pentane-1-in-methane", &["n-C5H12", "CH4"], &[0.01, 0.99], &[Model::Pr]),
    ("co2-10-in-methane", &["CO2", "CH4"], &[0.1, 0.9], &[Model::Pr]),
    ("hexane-0.5-in-N2", &["n-C6H14", "N2"], &[0.005, 0.995], &[Model::Pr]),
    ("octane-0.1-in-N2", &["n-C8H18", "N2"], &[0.001, 0.999], &[Model::Pr]),
    ("decane-100ppm-in-methane", &["n-C10H22", "CH4"], &[1e-4, 0.9999], &[Model::Pr]),
    ("ethane-propane-methane", &["C2H6", "C3H8", "CH4"], &[0.1, 0.05, 0.85], &[Model::Pr]),
    ("near-critical-methane-ethane", &["CH4", "C2H6"], &[0.5, 0.5], &[Model::Pr]),
    ("co2-rich-with-N2", &["CO2", "N2"], &[0.8, 0.2], &[Model::Pr]),
    ("flue-gas", &["CO", "CH4", "CO2", "N2"], &[5e-4, 0.025, 0.15, 0.8245], &[Model::Pr]),
    ("laser-gas", &["CO2", "N2", "He"], &[0.045, 0.135, 0.82], &[Model::Pr]),
    ("h2s-co2-methane", &["H2S", "CO2", "CH4"], &[0.05, 0.05, 0.9], &[Model::Pr]),
    ("propane-20-in-N2", &["C3H8", "N2"], &[0.2, 0.8], &[Model::Pr, Model::Vdw, Model::Rk]),
];

fn main() {
    let c = fillwright::gas::Catalogue::built_in();
    let mut out = Vec::new();
    for (label, ids, x, models) in ENVELOPE_CASES {
        let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).expect("catalogue gas")).collect();
        for &model in *models {
            let fluid = fillwright::thermo::Fluid::new(&c, &gases, model).expect("fluid");
            let phase = fillwright::checks::phase::PhaseFluid::new(&fluid);
            let floor = 80.0;
            let dews: Vec<serde_json::Value> = [1e5, 10e5, 30e5, 60e5]
                .iter()
                .map(|&p| serde_json::json!([p, phase.dew_temperature(p, x, floor).expect("dew")]))
                .collect();
            let ct = phase.cricondentherm(x, floor, 1000e5).expect("cricondentherm");
            let range = ct.and_then(|(t, p)| {
                phase.unstable_pressures(t - 15.0, x, Some(p), 1000e5).expect("range").map(|r| (t - 15.0, r))
            });
            out.push(serde_json::json!({
                "label": label, "model": model.key(), "ids": ids, "x": x,
                "dew_points": dews, "cricondentherm": ct, "unstable_pressures": range,
            }));
            eprintln!("{label} {model}: {ct:?}");
        }
    }
    let v =
        serde_json::json!({"generator": "examples/envelope_fixture.rs, before the continuation search", "cases": out});
    std::fs::write("tests/fixtures/envelope_before.json", serde_json::to_string_pretty(&v).unwrap() + "\n").unwrap();
}
