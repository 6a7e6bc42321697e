//! Screening before the fill, against outside references and on either side of each limit.

use fillwright::checks::hazards::{iso_10156_index, le_chatelier};
use fillwright::checks::{self, Conditions, Severity};
use fillwright::gas::Catalogue;
use fillwright::plan::{self, PlanOptions};
use fillwright::recipe::{demo, Recipe};
use fillwright::thermo::Model;
use serde::Deserialize;

/// 0 °C storage, 65 °C service, no condensation margin: the model's own verdict.
const CONDITIONS: Conditions = Conditions { min_temperature_k: 273.15, max_temperature_k: 338.15, margin_k: 0.0 };

#[derive(Deserialize)]
struct Fixture {
    library: String,
    vapour_pressures: Vec<Vapour>,
}

#[derive(Deserialize)]
struct Vapour {
    id: String,
    temperature_k: f64,
    pressure_pa: f64,
}

fn fixture() -> Fixture {
    // tests/fixtures/phase_reference.json, made by tests/reference/make_phase_fixture.py.
    serde_json::from_str(include_str!("fixtures/phase_reference.json")).unwrap()
}

#[test]
fn vapour_pressures_agree_with_coolprop() {
    let f = fixture();
    assert!(f.library.contains("CoolProp"));
    let c = Catalogue::built_in();
    let gases: std::collections::BTreeSet<&str> = f.vapour_pressures.iter().map(|v| v.id.as_str()).collect();
    assert!(gases.len() >= 10);
    let mut compared = std::collections::BTreeSet::new();
    for v in &f.vapour_pressures {
        let gas = c.gas(c.index_of(&v.id).unwrap());
        // CO2 and SF6 at 0.6 Tc lie below their triple points, outside the correlation.
        let Some(p) = gas.vapour_pressure_pa(v.temperature_k) else { continue };
        // Perry's DIPPR-101 fits against CoolProp's reference equations: within 2 %, but for
        // three gases whose fits are older and measured here at up to 3.2 % (SO2, SF6) and
        // 5.0 % (N2O, at 0.6 Tc); pinned so that a change of data shows.
        let allowed = match v.id.as_str() {
            "N2O" => 0.055,
            "SO2" | "SF6" => 0.035,
            _ => 0.02,
        };
        let dev = p / v.pressure_pa - 1.0;
        assert!(
            dev.abs() < allowed,
            "{} at {:.2} K: {p} vs {} ({:+.2} %)",
            v.id,
            v.temperature_k,
            v.pressure_pa,
            dev * 100.0
        );
        compared.insert(v.id.clone());
    }
    assert!(compared.len() >= 10);
}

fn screen(name: &str) -> Vec<checks::Check> {
    let c = Catalogue::built_in();
    let order = Recipe::load(demo::find(name).unwrap(), name, &c).unwrap();
    let p = plan::plan(&order, &c, &PlanOptions::default()).unwrap();
    checks::screen(&p, &order, &c, &CONDITIONS)
}

#[test]
fn every_demo_recipe_screens() {
    for (name, _) in demo::RECIPES {
        let list = screen(name);
        let ids: Vec<&str> = list.iter().map(|c| c.id).collect();
        assert_eq!(
            ids,
            ["condensation", "pressure-rating", "flammability", "oxidising", "toxicity", "incompatibility"]
        );
        assert!(
            checks::worst(&list) < Severity::Stop,
            "{name}: {:?}",
            list.iter().map(|c| &c.message).collect::<Vec<_>>()
        );
    }
}

#[test]
fn the_near_condensation_demo_shows_its_cricondentherm_and_safe_fill() {
    let list = screen("lpg-in-methane");
    let cond = &list[0];
    assert_eq!(cond.severity, Severity::Caution);
    let ct = cond.data["cricondentherm_k"].as_f64().unwrap();
    // By the reference equations (GERG-2008's own fugacities): 278.88 K. CoolProp 8.0.0's
    // multi-fluid model puts the same mixture's cricondentherm at 279.17 K (a dew-point
    // solver on its fugacities, tests/fixtures/envelope_reference.json, lpg-in-methane); the
    // 0.3 K between them is GERG-2008's own pure-fluid equations. Peng-Robinson (thermo's
    // flash) had it at 276.38 K.
    assert!((ct - 279.166).abs() < 0.4 && ct < 279.166, "{ct}");
    assert_eq!(cond.data["model"], "gerg");
    let max_fill = cond.data["max_single_phase_fill_bar"].as_f64().unwrap();
    // Without a margin the limit lies near 40 bar: the reference's dew pressure at 0 °C
    // (measured here: 41 bar) on its isochore to 15 °C. The demo's own 30 bar fill keeps the
    // default 2 K margin (its limit there is 33.5 bar).
    assert!(max_fill > 36.0 && max_fill < 45.0, "{max_fill}");
    // Filled above that, liquid forms at 0 °C: stop.
    let c = Catalogue::built_in();
    let text = demo::find("lpg-in-methane").unwrap().replace("Pressure(\"30bar\")", "Pressure(\"50bar\")");
    let order = Recipe::load(&text, "lpg-50", &c).unwrap();
    let p = plan::plan(&order, &c, &PlanOptions::default()).unwrap();
    let list = checks::screen(&p, &order, &c, &CONDITIONS);
    assert_eq!(list[0].severity, Severity::Stop, "{}", list[0].message);
    // A gas of permanent gases only has no cricondentherm to speak of.
    let detector = screen("detector-test-ch4-air");
    assert!(detector[0].data["cricondentherm_k"].is_null());
}

#[test]
fn iso_10156_limits_on_either_side() {
    // T_ci of CH4 in N2 is 14.3 % (ISO 10156:2010 table 2, from memory): 14.2 % in N2 is
    // not flammable in air, 14.4 % is.
    assert!(iso_10156_index(&[(0.142, 14.3)], &[(0.858, 1.0)]) < 1.0);
    assert!(iso_10156_index(&[(0.144, 14.3)], &[(0.856, 1.0)]) > 1.0);
    // CO2 inerts 1.5 times as well as N2 (K = 1.5, from memory): the limit moves to
    // 1.5 T / (1 + 0.5 T) = 20.02 % CH4 in CO2.
    assert!(iso_10156_index(&[(0.199, 14.3)], &[(0.801, 1.5)]) < 1.0);
    assert!(iso_10156_index(&[(0.201, 14.3)], &[(0.799, 1.5)]) > 1.0);
    // Worked by hand with the formula of ISO 10156 (values from memory): 2 % H2 + 3 % CH4
    // + 10 % CO2 + 85 % N2 gives 2/105·100/5.5 + 3/105·100/14.3 = 0.5461: not flammable.
    let index = iso_10156_index(&[(0.02, 5.5), (0.03, 14.3)], &[(0.10, 1.5), (0.85, 1.0)]);
    assert!((index - 0.5461).abs() < 1e-4, "{index}");
}

#[test]
fn le_chatelier_against_a_textbook_example() {
    // Crowl & Louvar, Chemical Process Safety, example of a mixture of 0.8 % hexane,
    // 2.0 % methane and 0.5 % ethylene in air with LFLs 1.2, 5.3 and 3.1 %: the
    // flammable part has an LFL of 2.74 % (from memory).
    let lfl = le_chatelier(&[(0.8, 1.2), (2.0, 5.3), (0.5, 3.1)]).unwrap();
    assert!((lfl - 2.74).abs() < 0.01, "{lfl}");
}

fn screen_mix(spec: &str, p_bar: f64) -> Vec<checks::Check> {
    let c = Catalogue::built_in();
    let parts = fillwright::mixture::parse_spec(spec, &c).unwrap();
    let mut lines = Vec::new();
    for p in &parts {
        lines.push(format!("(gas: \"{}\", amount: \"{}\")", c.gas(p.gas).id(), p.share));
    }
    let text = format!(
        "Recipe(format: 1, name: \"t\", components: [{}], cylinder: (water_capacity: \"10L\", working_pressure: \"200bar\", \
         test_pressure: \"300bar\"), fill: Pressure(\"{p_bar}bar\"))",
        lines.join(", ")
    );
    let order = Recipe::load(&text, "t", &c).unwrap();
    let opts = PlanOptions { model: Some(Model::Pr), ..PlanOptions::default() };
    let p = plan::plan(&order, &c, &opts).unwrap();
    checks::screen(&p, &order, &c, &CONDITIONS)
}

fn find<'a>(list: &'a [checks::Check], id: &str) -> &'a checks::Check {
    list.iter().find(|c| c.id == id).unwrap()
}

#[test]
fn oxidising_ability_on_either_side_of_0_235() {
    assert_eq!(find(&screen_mix("O2=23.4%,N2=balance", 100.0), "oxidising").data["oxidising"], false);
    assert_eq!(find(&screen_mix("O2=23.6%,N2=balance", 100.0), "oxidising").data["oxidising"], true);
    // N2O counts 0.6 (from memory): 39 % gives 0.234, 40 % gives 0.240.
    assert_eq!(find(&screen_mix("N2O=39%,N2=balance", 30.0), "oxidising").data["oxidising"], false);
    assert_eq!(find(&screen_mix("N2O=40%,N2=balance", 30.0), "oxidising").data["oxidising"], true);
}

#[test]
fn toxicity_on_either_side_of_5000_ppm() {
    // CO has LC50 3760 ppm (ISO 10298, from memory): the mixture LC50 is 3760/x, so
    // 75.0 % CO gives 5013 ppm (not toxic) and 75.5 % gives 4980 ppm (toxic).
    let below = screen_mix("CO=75%,N2=balance", 50.0);
    let above = screen_mix("CO=75.5%,N2=balance", 50.0);
    assert_eq!(find(&below, "toxicity").data["toxic"], false);
    assert_eq!(find(&above, "toxicity").data["toxic"], true);
    // H2S 712 ppm: 14.2 % is 5014 ppm, 14.3 % is 4979 ppm.
    assert_eq!(find(&screen_mix("H2S=14.2%,N2=balance", 10.0), "toxicity").data["toxic"], false);
    assert_eq!(find(&screen_mix("H2S=14.3%,N2=balance", 10.0), "toxicity").data["toxic"], true);
}

#[test]
fn incompatible_pairs_and_flammables_with_oxidisers_stop() {
    let list = screen_mix("NH3=1%,HCl=1%,N2=balance", 50.0);
    let inc = find(&list, "incompatibility");
    assert_eq!(inc.severity, Severity::Stop);
    assert!(inc.details[0].contains("ammonium chloride"));
    let list = screen_mix("CH4=5%,O2=21%,N2=balance", 100.0);
    assert_eq!(find(&list, "incompatibility").severity, Severity::Stop, "5 % CH4 in air is above its 4.4 % LFL");
    let list = screen_mix("CH4=2%,O2=21%,N2=balance", 100.0);
    assert_eq!(find(&list, "incompatibility").severity, Severity::Caution);
    let list = screen_mix("CH4=2%,O2=5%,N2=balance", 100.0);
    assert_eq!(find(&list, "incompatibility").severity, Severity::Ok, "too little oxidiser to burn");
}

#[test]
fn pressure_rating_limits() {
    // 200 bar settled in a 200 bar cylinder is fine; 210 bar is above the working pressure.
    assert_eq!(find(&screen_mix("N2", 200.0), "pressure-rating").severity, Severity::Ok);
    assert_eq!(find(&screen_mix("N2", 210.0), "pressure-rating").severity, Severity::Stop);
    // He: 200 bar at 15 °C rises to about 230 bar at 65 °C, within the 300 bar test pressure.
    // Helium is nearly ideal: the ideal isochore gives 200 × 338.15/288.15 = 234.7 bar, and
    // its Z rises with T and P only by a few per cent (GERG-2008 table above).
    let he_checks = screen_mix("He", 200.0);
    let he = find(&he_checks, "pressure-rating");
    let hot = he.data["hot_pressure_bar"].as_f64().unwrap();
    assert!(hot > 225.0 && hot < 240.0, "{hot}");
}

#[test]
fn the_toxicity_check_gives_exposure_limits_and_says_when_the_blend_exceeds_them() {
    // H2S: TWA 10 ppm, STEL 15 ppm (Ontario Regulation 833, via chemicals). 50 ppm in N2
    // is 5 times the TWA; 5 ppm is below both.
    let list = screen_mix("H2S=50ppm,N2=balance", 150.0);
    let tox = list.iter().find(|c| c.id == "toxicity").unwrap();
    assert!(tox.message.contains("above the exposure limit as it is: H2S"), "{}", tox.message);
    assert!(
        tox.details.iter().any(|d| d.contains("TWA 10 ppm, STEL 15 ppm") && d.contains("5.0× the lowest")),
        "{:?}",
        tox.details
    );
    let e = &tox.data["exposure"][0];
    assert_eq!(
        (e["id"].as_str(), e["twa_ppm"].as_f64(), e["stel_ppm"].as_f64()),
        (Some("H2S"), Some(10.0), Some(15.0))
    );
    assert!((e["content_ppm"].as_f64().unwrap() - 50.0).abs() < 1e-6);
    let list = screen_mix("H2S=5ppm,N2=balance", 150.0);
    let tox = list.iter().find(|c| c.id == "toxicity").unwrap();
    assert!(!tox.message.contains("exposure limit"), "{}", tox.message);
    assert!(tox.details.iter().any(|d| d.contains("TWA 10 ppm") && !d.contains("× the lowest")), "{:?}", tox.details);
    // Nitrogen has no exposure limit: nothing said.
    let list = screen_mix("Ar=5%,N2=balance", 150.0);
    let tox = list.iter().find(|c| c.id == "toxicity").unwrap();
    assert!(tox.data["exposure"].as_array().unwrap().is_empty());
}
