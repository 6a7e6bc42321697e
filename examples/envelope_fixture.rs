//! Writes `tests/fixtures/envelope_before.json`: dew temperatures, cricondentherms and the
//! pressure ranges of liquid at one temperature, as the envelope search of the first
//! release found them (walk down from 1.6 × the highest Tc in 1.5 % steps, bisect the
//! stability verdict, golden-section over ln P). The faster search must give the same
//! answers to 1e-3 K; `tests/envelope.rs` checks it. Kept to regenerate the cases if the
//! set of mixtures grows; run with the commit that holds the search to compare with.
//! Run: cargo run --release --example envelope_fixture

fn main() {
    let c = fillwright::gas::Catalogue::built_in();
    let mut out = Vec::new();
    for (label, ids, x, models) in fillwright::checks::phase::ENVELOPE_CASES {
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
