//! The hazard data against what `chemicals` carries: flammability limits (IEC
//! 60079-20-1, NFPA 497 where IEC lists none), ISO 10156:2017 K_k and the exposure limits
//! of Ontario Regulation 833. Fixture: tests/fixtures/hazard_reference.json, made by
//! tests/reference/make_hazard_reference.py. T_ci, C_i, LC50 and the corrosive flags are
//! in no library: they stay marked "from memory" (README, "Hazard data to review").

use fillwright::gas::Catalogue;
use serde_json::Value;

fn fixture() -> Value {
    serde_json::from_str(include_str!("fixtures/hazard_reference.json")).expect("fixture")
}

#[test]
fn flammability_inerting_and_exposure_limits_are_the_published_ones() {
    let c = Catalogue::built_in();
    let mut failures = Vec::new();
    for g in fixture()["gases"].as_array().unwrap() {
        let id = g["id"].as_str().unwrap();
        let h = c.gas(c.index_of(id).unwrap()).hazard();
        let first = |a: &str, b: &str| g[a].as_f64().or_else(|| g[b].as_f64());
        let pairs = [
            ("lfl", h.lfl_percent, first("lfl_iec", "lfl_nfpa")),
            ("ufl", h.ufl_percent, first("ufl_iec", "ufl_nfpa")),
            // O2 is in the ISO 10156 table too, but the catalogue carries it as the oxidant.
            ("inert_k", h.inert_k, if id == "O2" { None } else { g["inert_k_iso_10156_2017"].as_f64() }),
            ("twa", h.twa_ppm, g["twa_ppm"].as_f64()),
            ("stel", h.stel_ppm, g["stel_ppm"].as_f64()),
            ("ceiling", h.ceiling_ppm, g["ceiling_ppm"].as_f64()),
        ];
        for (what, ours, theirs) in pairs {
            if ours != theirs {
                failures.push(format!("{id} {what}: {ours:?} against {theirs:?}"));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The cases the first table had wrong.
    let h = |id: &str| c.gas(c.index_of(id).unwrap()).hazard();
    assert_eq!(h("H2S").lfl_percent, Some(4.0));
    assert_eq!(h("NH3").lfl_percent, Some(15.0));
    assert_eq!(h("H2O").inert_k, None, "water is not in the ISO 10156 table");
    assert!(h("NO").corrosive);
}
