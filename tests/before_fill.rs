//! The cylinder before the fill: evacuated, or holding a heel that the plan doses on top of.

mod common;

use fillwright::gas::Catalogue;
use fillwright::plan::{self, PlanError, PlanOptions};
use fillwright::recipe::{canonical, BeforeFill, Recipe};
use fillwright::thermo::Model;

fn recipe(before: &str) -> String {
    format!(
        r#"Recipe(format: 1, name: "heel-test", components: [(gas: "CO", amount: "500ppm"),
        (gas: "CH4", amount: "2.5%"), (gas: "N2", amount: "balance")],
        cylinder: (water_capacity: "10L", working_pressure: "200bar", test_pressure: "300bar", tare: "13500g"),
        fill: Pressure("150bar"), {before})"#
    )
}

fn gerg() -> PlanOptions {
    PlanOptions { model: Some(Model::Gerg), ..PlanOptions::default() }
}

#[test]
fn a_nitrogen_heel_is_counted_and_the_additions_make_up_the_rest() {
    let c = Catalogue::built_in();
    let order = Recipe::load(&recipe(r#"before_fill: Heel(mix: "N2", pressure: "20bar")"#), "t", &c).unwrap();
    let empty = Recipe::load(&recipe(""), "t", &c).unwrap();
    let p = plan::plan(&order, &c, &gerg()).unwrap();
    let p0 = plan::plan(&empty, &c, &gerg()).unwrap();
    let heel = p.heel.as_ref().expect("a heel");
    let heel_mol: f64 = heel.amounts_mol.iter().sum();
    // N2 at 20 bar and 15 °C in 10 L: 8.388118 mol by CoolProp 8.0.0's reference equation
    // of Span et al. (2000) (Dmolar at 288.15 K, 2 MPa, times 10 L); GERG-2008 agrees to
    // within its own uncertainty for nitrogen (0.01 %).
    assert!((heel_mol / 8.388118 - 1.0).abs() < 1e-4, "{heel_mol}");
    // The heel reads its own pressure before the first addition (fill at 15 °C).
    assert!((heel.pressure_at_fill_pa / 20e5 - 1.0).abs() < 1e-9);
    // The same blend is made: the totals do not depend on the heel.
    assert!((p.totals.amount_mol / p0.totals.amount_mol - 1.0).abs() < 1e-12);
    // The N2 source brings the blend's N2 less the heel; CO and CH4 are as without a heel.
    let step = |pl: &plan::Plan, s: &str| pl.steps.iter().find(|x| x.source == s).unwrap().add_amount_mol;
    assert!((step(&p, "N2") - (step(&p0, "N2") - heel_mol)).abs() < 1e-9 * p.totals.amount_mol);
    assert!((step(&p, "CO") / step(&p0, "CO") - 1.0).abs() < 1e-12);
    // The gauge and scale start from the heel: the first increment is measured from 20 bar,
    // the scale from the tare plus the heel.
    let first = &p.steps[0];
    assert!((first.pressure_after_pa - first.increment_pa - 20e5).abs() < 1e-6);
    assert!((first.scale_reading_g - (13500.0 + heel.mass_g + first.add_mass_g)).abs() < 1e-9);
    assert!((heel.scale_reading_g - (13500.0 + heel.mass_g)).abs() < 1e-9);
    // The last stop is still the fill pressure, and the amounts after it are the blend.
    assert!((p.steps.last().unwrap().pressure_after_pa / 150e5 - 1.0).abs() < 1e-9);
}

#[test]
fn a_heel_of_the_blend_itself_scales_every_addition_down_alike() {
    let c = Catalogue::built_in();
    let text = recipe(r#"before_fill: Heel(mix: "CO=500ppm,CH4=2.5%,N2=balance", pressure: "30bar")"#);
    let p = plan::plan(&Recipe::load(&text, "t", &c).unwrap(), &c, &gerg()).unwrap();
    let p0 = plan::plan(&Recipe::load(&recipe(""), "t", &c).unwrap(), &c, &gerg()).unwrap();
    let heel_mol: f64 = p.heel.as_ref().unwrap().amounts_mol.iter().sum();
    let left = 1.0 - heel_mol / p0.totals.amount_mol;
    for (a, b) in p.steps.iter().zip(&p0.steps) {
        assert!((a.add_amount_mol / b.add_amount_mol - left).abs() < 1e-9, "{}", a.source);
    }
    // Stopping at GERG-2008's own readings, judged by GERG-2008, makes the target.
    let own = p.following[0].rows.iter().find(|r| r.targets_of == Model::Gerg).unwrap();
    assert!(own.relative_error_percent.iter().all(|e| e.abs() < 1e-6), "{:?}", own.relative_error_percent);
}

#[test]
fn a_heel_read_warm_holds_less_than_the_same_reading_cold() {
    let c = Catalogue::built_in();
    let warm = recipe(r#"before_fill: Heel(mix: "N2", pressure: "20bar", temperature: "35C")"#);
    let p = plan::plan(&Recipe::load(&warm, "t", &c).unwrap(), &c, &gerg()).unwrap();
    let h = p.heel.unwrap();
    // Read at 35 °C, it reads lower at the 15 °C fill temperature (about by T ratio).
    let ratio = h.pressure_at_fill_pa / 20e5;
    assert!(ratio < 0.95 && ratio > 288.15 / 308.15 * 0.99, "{ratio}");
}

#[test]
fn a_heel_richer_than_the_blend_is_refused_with_the_gas_named() {
    let c = Catalogue::built_in();
    let text = recipe(r#"before_fill: Heel(mix: "CO=1000ppm,N2=balance", pressure: "100bar")"#);
    let e = plan::plan(&Recipe::load(&text, "t", &c).unwrap(), &c, &gerg()).unwrap_err();
    assert!(matches!(&e, PlanError::HeelTooRich { id, .. } if id == "CO"), "{e}");
    assert!(e.to_string().contains("vent the cylinder"));
    // A gas the blend does not have at all is too rich at any amount.
    let argon = recipe(r#"before_fill: Heel(mix: "Ar", pressure: "2bar")"#);
    let e = plan::plan(&Recipe::load(&argon, "t", &c).unwrap(), &c, &gerg()).unwrap_err();
    assert!(matches!(&e, PlanError::HeelTooRich { id, .. } if id == "Ar"), "{e}");
}

#[test]
fn bad_before_fill_entries_are_placed_and_explained() {
    let c = Catalogue::built_in();
    for (text, says) in [
        (r#"before_fill: Heel(mix: "N2", pressure: "20")"#, "heel pressure"),
        (r#"before_fill: Heel(mix: "unobtainium", pressure: "2bar")"#, "heel"),
        (r#"before_fill: Heel(mix: "N2", pressure: "400bar")"#, "test pressure"),
        (r#"before_fill: Evacuated("2bar")"#, "not a vacuum"),
    ] {
        let e = Recipe::load(&recipe(text), "t.ron", &c).unwrap_err();
        assert!(e.message.contains(says), "{text}: {}", e.message);
        assert_eq!(e.line, 4, "{text}: placed on the before_fill line");
    }
}

#[test]
fn a_deep_vacuum_says_nothing_and_a_poor_one_is_reported() {
    let c = Catalogue::built_in();
    let deep =
        plan::plan(&Recipe::load(&recipe(r#"before_fill: Evacuated("0.01mbar")"#), "t", &c).unwrap(), &c, &gerg())
            .unwrap();
    assert!(deep.heel.is_none());
    assert!(!deep.notes.iter().any(|n| n.contains("residual")), "{:?}", deep.notes);
    // 5 mbar of air in 10 L at 15 °C is 2.09 mmol (ideal gas), 34 ppm of a 62 mol fill:
    // more than a hundredth of the 500 ppm CO.
    let poor = plan::plan(&Recipe::load(&recipe(r#"before_fill: Evacuated("5mbar")"#), "t", &c).unwrap(), &c, &gerg())
        .unwrap();
    let note = poor.notes.iter().find(|n| n.contains("residual")).expect("a residual-gas note");
    let expected = 500.0 * 0.01 / (8.314462618 * 288.15) / poor.totals.amount_mol * 1e6;
    assert!(note.contains(&format!("{:.0}", expected.floor())), "{note} vs {expected}");
}

#[test]
fn the_before_fill_line_reads_back_as_written() {
    for text in ["evacuated", "evacuated to 0.5mbar", "N2 at 5bar", "CO=50ppm,N2=balance at 3barg, 20C"] {
        let parsed = BeforeFill::parse_text(text).unwrap();
        assert_eq!(BeforeFill::text(&parsed), text);
    }
    assert_eq!(BeforeFill::parse_text("").unwrap(), None);
    assert!(BeforeFill::parse_text("some nitrogen").unwrap_err().contains("accepted"));
    assert!(BeforeFill::parse_text(" at 5bar").is_err());
    // The canonical file form keeps it, and reads back the same.
    let c = Catalogue::built_in();
    let text = recipe(r#"before_fill: Heel(mix: "N2", pressure: "20bar", temperature: "25C")"#);
    let r = Recipe::parse(&text, "t").unwrap();
    let tidy = canonical::to_text(&r);
    assert!(tidy.contains(r#"before_fill: Heel(mix: "N2", pressure: "20bar", temperature: "25C")"#), "{tidy}");
    assert_eq!(Recipe::parse(&tidy, "t").unwrap(), r);
    assert!(Recipe::load(&tidy, "t", &c).is_ok());
}

#[test]
fn the_command_line_takes_a_heel_and_shows_it_as_step_0() {
    let plan = [
        "plan",
        "--mix",
        "CO=500ppm,N2=balance",
        "--volume",
        "10L",
        "--pressure",
        "150bar",
        "--before-fill",
        "N2 at 20bar",
    ];
    let out = common::run_fillwright("heel", &[&plan[..], &["--format", "json"]].concat());
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!((v["heel"]["pressure_at_fill_bar"].as_f64().unwrap() - 20.0).abs() < 1e-9);
    assert_eq!(v["heel"]["components"][0]["id"], "N2");
    let text = common::run_fillwright("heel", &plan);
    let sheet = String::from_utf8_lossy(&text.stdout);
    assert!(sheet.lines().any(|l| l.trim_start().starts_with("0  heel (start)") && l.contains("20.000")), "{sheet}");
    let bad = common::run_fillwright(
        "heel",
        &["plan", "--mix", "N2", "--volume", "10L", "--pressure", "150bar", "--before-fill", "x"],
    );
    assert_eq!(bad.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("--before-fill"));
}

#[test]
fn a_recipe_planned_for_a_cylinder_with_a_heel_starts_from_it() {
    // --before-fill with a recipe replaces the recipe's own (evacuated) start.
    let out = common::run_fillwright("heel-recipe", &["plan", "flue-gas-span", "--before-fill", "N2 at 10bar"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let sheet = String::from_utf8_lossy(&out.stdout);
    assert!(sheet.lines().any(|l| l.trim_start().starts_with("0  heel (start)")), "{sheet}");
    // check applies it too: a CO heel richer than the blend makes the recipe unplannable.
    let out = common::run_fillwright(
        "heel-check",
        &["check", "flue-gas-span", "--before-fill", "CO=1%,N2=balance at 100bar", "--format", "json"],
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let unreadable = v["unreadable"].as_array().unwrap();
    assert_eq!(unreadable.len(), 1, "{v}");
    assert!(unreadable[0]["error"].as_str().unwrap().contains("heel"), "{v}");
}
