//! GERG-2008 through our integration, against published check values and against teqp.

mod common;

use fillwright::gas::Catalogue;
use fillwright::plan::{self, PlanOptions};
use fillwright::recipe::Recipe;
use fillwright::thermo::{Fluid, Model};
use serde::Deserialize;

fn gerg(ids: &[&str]) -> Fluid {
    let c = Catalogue::built_in();
    let idx: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
    Fluid::new(&c, &idx, Model::Gerg).unwrap()
}

/// The 21-component gas of the GERG-2008 example in NIST's AGA8 code, as used by the
/// `aga8` crate's test `gerg_demo_example` (tests/gerg-tests.rs, aga8 0.6.1).
const FULL: [(&str, f64); 21] = [
    ("CH4", 0.778_24),
    ("N2", 0.02),
    ("CO2", 0.06),
    ("C2H6", 0.08),
    ("C3H8", 0.03),
    ("i-C4H10", 0.001_5),
    ("n-C4H10", 0.003),
    ("i-C5H12", 0.000_5),
    ("n-C5H12", 0.001_65),
    ("n-C6H14", 0.002_15),
    ("n-C7H16", 0.000_88),
    ("n-C8H18", 0.000_24),
    ("n-C9H20", 0.000_15),
    ("n-C10H22", 0.000_09),
    ("H2", 0.004),
    ("O2", 0.005),
    ("CO", 0.002),
    ("H2O", 0.000_1),
    ("H2S", 0.002_5),
    ("He", 0.007),
    ("Ar", 0.001),
];

#[test]
fn published_gerg_2008_check_value() {
    // At 400 K and 50 000 kPa the example gas has a molar density of
    // 12.798 286 260 820 62 mol/L (NIST AGA8 example output, asserted by the aga8 crate).
    let ids: Vec<&str> = FULL.iter().map(|p| p.0).collect();
    let x: Vec<f64> = FULL.iter().map(|p| p.1).collect();
    let f = gerg(&ids);
    let s = f.state_tp(400.0, 50_000.0e3, &x).unwrap();
    let rho_mol_per_l = 1e-3 / s.molar_volume_m3;
    assert!((rho_mol_per_l / 12.798_286_260_820_62 - 1.0).abs() < 1e-9, "{rho_mol_per_l}");
    // And back: the pressure at that density is 50 000 kPa.
    let p = f.pressure_tv(400.0, 1e-3 / 12.798_286_260_820_62, &x).unwrap();
    assert!((p / 50_000.0e3 - 1.0).abs() < 1e-8, "{p}");
}

#[derive(Deserialize)]
struct Fixture {
    library: String,
    states: Vec<State>,
    plans: Vec<PlanCase>,
}

#[derive(Deserialize)]
struct State {
    ids: Vec<String>,
    x: Vec<f64>,
    temperature_k: f64,
    density_mol_m3: f64,
    pressure_pa: f64,
}

#[derive(Deserialize)]
struct PlanCase {
    label: String,
    ids: Vec<String>,
    x: Vec<f64>,
    volume_l: f64,
    pressure_bar: f64,
    reference_temperature_k: f64,
    fill_temperature_k: f64,
    sequence: Vec<String>,
    amount_mol: f64,
    step_pressures_pa: Vec<f64>,
}

fn fixture() -> Fixture {
    // tests/fixtures/teqp_gerg.json, made by tests/reference/make_gerg_fixture.py.
    serde_json::from_str(include_str!("fixtures/teqp_gerg.json")).unwrap()
}

#[test]
fn pressure_from_density_agrees_with_teqp_to_1e_9() {
    let f = fixture();
    assert!(f.library.starts_with("teqp "));
    assert!(f.states.len() >= 30);
    for s in &f.states {
        let ids: Vec<&str> = s.ids.iter().map(String::as_str).collect();
        let p = gerg(&ids).pressure_tv(s.temperature_k, 1.0 / s.density_mol_m3, &s.x).unwrap();
        assert!((p / s.pressure_pa - 1.0).abs() < 1e-9, "{ids:?} T={}: {p} vs {}", s.temperature_k, s.pressure_pa);
    }
}

#[test]
fn gerg_plan_step_targets_agree_with_teqp_to_1e_8() {
    let c = Catalogue::built_in();
    for case in fixture().plans {
        let text = common::recipe_text(
            &case.label,
            &case.ids,
            &case.x,
            case.volume_l,
            case.pressure_bar,
            case.reference_temperature_k,
            case.fill_temperature_k,
        );
        let order = Recipe::load(&text, &case.label, &c).unwrap();
        let options = PlanOptions { model: Some(Model::Gerg), ..PlanOptions::default() };
        let p = plan::plan(&order, &c, &options).unwrap();
        let sequence: Vec<&str> = p.steps.iter().map(|s| s.source.as_str()).collect();
        assert_eq!(sequence, case.sequence);
        assert!((p.totals.amount_mol / case.amount_mol - 1.0).abs() < 1e-8, "{}", case.label);
        for (s, want) in p.steps.iter().zip(&case.step_pressures_pa) {
            assert!(
                (s.pressure_after_pa / want - 1.0).abs() < 1e-8,
                "{} {}: {} vs {want}",
                case.label,
                s.source,
                s.pressure_after_pa
            );
        }
    }
}
