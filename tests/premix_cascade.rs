//! Premix cascades: every stage planned from the one before and dosable at the bench's
//! resolutions, and a proposal accepted as library recipes.

mod common;

use fillwright::gas::Catalogue;
use fillwright::plan::{self, premix, PlanOptions, Resolutions};
use fillwright::recipe::{Recipe, SourceLine};
use fillwright::thermo::Model;

fn blend(components: &str) -> String {
    format!(
        r#"Recipe(format: 1, name: "trace-blend", order: "LAB-7781", components: [{components}],
        cylinder: (water_capacity: "10L", working_pressure: "200bar", test_pressure: "300bar", serial: "QX-1"),
        fill: Pressure("150bar"))"#
    )
}

fn options(gauge_bar: f64, scale_g: f64) -> PlanOptions {
    PlanOptions {
        model: Some(Model::Gerg),
        resolutions: Resolutions { gauge_pa: gauge_bar * 1e5, scale_g },
        ..PlanOptions::default()
    }
}

fn too_small(s: &plan::Step) -> bool {
    s.flags.iter().any(|f| f.too_small())
}

#[test]
fn one_ppm_needs_three_stages_each_dosable_and_each_feeding_the_next() {
    let c = Catalogue::built_in();
    let order =
        Recipe::load(&blend(r#"(gas: "H2S", amount: "1ppm"), (gas: "N2", amount: "balance")"#), "t", &c).unwrap();
    let p = plan::plan(&order, &c, &options(0.1, 0.1)).unwrap();
    assert_eq!(p.premixes.len(), 1);
    let pm = &p.premixes[0];
    // 1 ppm at 5 % of the fill: 20 ppm; 20 ppm from pure H2S is 1.2 mmol (0.003 bar, 0.04 g
    // by pV = nRT), below both resolutions, so 200 ppm; that is still 0.03 bar, so 0.2 %
    // (0.3 bar, 4 g), dosable.
    let strengths: Vec<f64> = pm.stages.iter().map(|s| s.fraction).collect();
    assert_eq!(strengths.len(), 3, "{strengths:?}");
    for (got, want) in strengths.iter().zip([2e-3, 2e-4, 2e-5]) {
        assert!((got / want - 1.0).abs() < 1e-12, "{strengths:?}");
    }
    assert!(pm.complete());
    for (k, st) in pm.stages.iter().enumerate() {
        let inner = st.plan.as_ref().unwrap();
        assert!(!inner.steps.iter().any(too_small), "stage {k} has a step below the resolutions");
        // Each stage is made from the one before (the first from the pure gas).
        let first = &inner.steps[0].source;
        match k {
            0 => assert_eq!(first, "H2S"),
            _ => assert_eq!(first, &pm.stages[k - 1].name),
        }
        // It makes its own strength.
        assert!((inner.components[0].mole_fraction / st.fraction - 1.0).abs() < 1e-12);
        // What it gives the next stage is what that stage's plan takes of it.
        if let Some(next) = pm.stages.get(k + 1) {
            let taken = next.plan.as_ref().unwrap().steps.iter().find(|s| s.source == st.name).unwrap();
            assert!((st.needed_mol / taken.add_amount_mol - 1.0).abs() < 1e-12);
        }
        assert!(st.enough());
    }
    // The last stage brings exactly the H2S of the blend's step.
    let step = &p.steps[pm.step];
    assert_eq!(step.source, "H2S");
    assert!((pm.last().needed_mol * pm.last().fraction / step.add_amount_mol - 1.0).abs() < 1e-12);
}

#[test]
fn the_bench_resolutions_decide_the_length_of_the_cascade() {
    let c = Catalogue::built_in();
    let order =
        Recipe::load(&blend(r#"(gas: "H2S", amount: "1ppm"), (gas: "N2", amount: "balance")"#), "t", &c).unwrap();
    // A gauge and a scale fine enough to dose 1.2 mmol (0.003 bar, 0.04 g): one stage.
    let fine = plan::plan(&order, &c, &options(0.001, 0.01)).unwrap();
    assert_eq!(fine.premixes[0].stages.len(), 1);
    // 2 % CO is 1.2 mol, 3 bar: no premix at all.
    let order10 =
        Recipe::load(&blend(r#"(gas: "CO", amount: "2%"), (gas: "N2", amount: "balance")"#), "t", &c).unwrap();
    assert!(plan::plan(&order10, &c, &options(0.1, 0.1)).unwrap().premixes.is_empty());
    // Very coarse instruments: four stages are not enough for 1 ppb, and the proposal says so.
    let ppb = Recipe::load(&blend(r#"(gas: "H2S", amount: "1ppb"), (gas: "N2", amount: "balance")"#), "t", &c).unwrap();
    let coarse = plan::plan(&ppb, &c, &options(5.0, 50.0)).unwrap();
    let pm = &coarse.premixes[0];
    assert_eq!(pm.stages.len(), premix::MAX_STAGES);
    assert!(!pm.complete());
    let text = premix::describe(pm, "H2S", 0.01, &fillwright::units::Shown::default()).join("\n");
    assert!(text.contains("still below the resolutions"), "{text}");
    assert!(text.lines().all(|l| l.chars().count() <= 80), "{text}");
}

#[test]
fn an_accepted_cascade_becomes_recipes_that_plan_as_proposed() {
    let c = Catalogue::built_in();
    let text = blend(r#"(gas: "H2S", amount: "1ppm"), (gas: "CH4", amount: "2.5%"), (gas: "N2", amount: "balance")"#);
    let recipe = Recipe::parse(&text, "t").unwrap();
    let order = recipe.resolve(&c, &text, "t").unwrap();
    let opts = options(0.1, 0.1);
    let p = plan::plan(&order, &c, &opts).unwrap();
    let pm = &p.premixes[0];
    let accepted = premix::accept(pm, &recipe, &c);
    assert_eq!(accepted.stages.len(), pm.stages.len());
    for (k, (r, st)) in accepted.stages.iter().zip(&pm.stages).enumerate() {
        assert_eq!(r.name, st.recipe_name);
        assert_eq!(r.order, "LAB-7781");
        assert_eq!(r.cylinder.serial, None, "a premix goes into a cylinder of its own");
        if k > 0 {
            let from = &pm.stages[k - 1];
            assert!(r.sources.iter().any(|s| matches!(s,
                SourceLine::Premix { recipe: Some(link), .. } if *link == from.recipe_name)));
        }
        // Planned from its recipe, the stage is what was proposed.
        let planned = plan::plan(&r.resolve(&c, "", &r.name).unwrap(), &c, &opts).unwrap();
        let proposed = st.plan.as_ref().unwrap();
        assert!((planned.totals.amount_mol / proposed.totals.amount_mol - 1.0).abs() < 1e-12);
        assert_eq!(planned.steps.len(), proposed.steps.len());
    }
    // The blend now doses the last stage instead of pure H2S; the other sources stay pure.
    let b = &accepted.blend;
    assert!(!b.sources.contains(&SourceLine::Pure("H2S".into())));
    assert!(b.sources.contains(&SourceLine::Pure("CH4".into())) && b.sources.contains(&SourceLine::Pure("N2".into())));
    let replanned = plan::plan(&b.resolve(&c, "", &b.name).unwrap(), &c, &opts).unwrap();
    let step = replanned.steps.iter().find(|s| s.source == pm.last().name).expect("the premix step");
    assert!(!too_small(step), "the premix addition is dosable");
    assert!(replanned.premixes.is_empty(), "nothing else needs a premix");
    // The same blend is made: H2S at 1 ppm.
    let h2s = replanned.components.iter().find(|r| c.gas(r.gas).id() == "H2S").unwrap();
    assert!((h2s.mole_fraction - 1e-6).abs() < 1e-18);
}

#[test]
fn the_plan_json_carries_every_stage() {
    let out = common::run_fillwright(
        "cascade",
        &["plan", "--mix", "NO=50ppb,N2=balance", "--volume", "10L", "--pressure", "150bar", "--format", "json"],
    );
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let stages = v["premixes"][0]["stages"].as_array().unwrap();
    assert!(stages.len() >= 3, "{}", stages.len());
    assert_eq!(v["premixes"][0]["complete"], true);
    assert_eq!(v["premixes"][0]["mix"], stages.last().unwrap()["mix"]);
    // Strengths rise from the blend inwards.
    let f: Vec<f64> = stages.iter().map(|s| s["mole_fraction"].as_f64().unwrap()).collect();
    assert!(f.windows(2).all(|w| w[0] > w[1]), "{f:?}");
    let text = common::run_fillwright(
        "cascade-text",
        &["plan", "--mix", "NO=50ppb,N2=balance", "--volume", "10L", "--pressure", "150bar"],
    );
    let sheet = String::from_utf8_lossy(&text.stdout);
    assert!(sheet.contains("made in") && sheet.contains("go into the blend (step 1)"), "{sheet}");
    assert!(sheet.lines().all(|l| l.chars().count() <= 80), "{sheet}");
}

#[test]
fn the_fill_sheet_is_written_as_a_pdf_with_its_premix_stages() {
    let dir = common::temp_dir().join(format!("fillwright-sheet-pdf-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let pdf = dir.join("sheet.pdf");
    let out = common::run_fillwright(
        "sheet-pdf",
        &[
            "plan",
            "--mix",
            "H2S=1ppm,N2=balance",
            "--volume",
            "10L",
            "--pressure",
            "150bar",
            "--pdf",
            pdf.to_str().unwrap(),
        ],
    );
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8_lossy(&out.stdout);
    let back = common::pdf_text(&pdf);
    for line in text.lines().filter(|l| l.contains("go into") || l.starts_with("PREMIX")) {
        assert!(back.contains(line.trim()), "{line:?} missing from the PDF:\n{back}");
    }
    // JSON output with --pdf still writes the sheet.
    std::fs::remove_file(&pdf).unwrap();
    let out = common::run_fillwright(
        "sheet-pdf-json",
        &[
            "plan",
            "--mix",
            "N2",
            "--volume",
            "10L",
            "--pressure",
            "150bar",
            "--format",
            "json",
            "--pdf",
            pdf.to_str().unwrap(),
        ],
    );
    assert!(out.status.success());
    assert!(std::fs::read(&pdf).unwrap().starts_with(b"%PDF-"));
}

#[test]
fn two_traces_share_one_premix_cylinder_in_their_blend_ratio() {
    let c = Catalogue::built_in();
    let text = blend(
        r#"(gas: "CO", amount: "400ppm", tolerance: "10ppm"), (gas: "SO2", amount: "100ppm", tolerance: "2%rel"),
           (gas: "CO2", amount: "15%"), (gas: "N2", amount: "balance")"#,
    );
    let recipe = Recipe::parse(&text, "t").unwrap();
    let order = recipe.resolve(&c, &text, "t").unwrap();
    let opts = PlanOptions { model: None, ..options(0.1, 0.1) };
    let p = plan::plan(&order, &c, &opts).unwrap();
    // One premix of both first (it saves a cylinder), then each gas's own.
    assert_eq!(p.premixes.len(), 3, "{:?}", p.premixes.iter().map(|x| &x.last().name).collect::<Vec<_>>());
    let both = &p.premixes[0];
    let id = |g: usize| c.gas(g).id().to_string();
    assert_eq!(both.gases().iter().map(|&g| id(g)).collect::<Vec<_>>(), ["CO", "SO2"]);
    assert_eq!(both.steps().len(), 2);
    // CO at 5 % of the fill would be 0.8 %, rounded down to 0.5 % (so the premix is 8 % of
    // the fill); SO2 keeps the blend's 4:1 ratio.
    let st = both.last();
    assert_eq!(st.spec, "CO=0.5%,SO2=0.125%,N2=balance");
    assert!(both.why.as_deref().unwrap().starts_with("one cylinder instead of 2"), "{:?}", both.why);
    assert!(both.complete(), "one stage from the pure gases doses both");
    let said = premix::describe(both, "CO", order.volume_m3, &fillwright::units::Shown::default()).join("\n");
    assert!(said.contains("PREMIX PROPOSED for steps") && said.contains("one cylinder instead of 2"), "{said}");
    // Accepted: one premix recipe of three components with the blend's relative tolerances
    // (10 ppm on 400 ppm is 2.5 %rel), and the blend takes it for both gases.
    let accepted = premix::accept(both, &recipe, &c);
    assert_eq!(accepted.stages.len(), 1);
    let r = &accepted.stages[0];
    let tol: Vec<(&str, Option<&str>)> =
        r.components.iter().map(|x| (x.gas.as_str(), x.tolerance.as_deref())).collect();
    assert_eq!(tol, [("CO", Some("2.5%rel")), ("SO2", Some("2%rel")), ("N2", None)]);
    assert!(r.notes.contains("serial and tare"), "{}", r.notes);
    let b = &accepted.blend;
    for gone in ["CO", "SO2"] {
        assert!(!b.sources.contains(&SourceLine::Pure(gone.into())), "{:?}", b.sources);
    }
    let premixes = b.sources.iter().filter(|s| matches!(s, SourceLine::Premix { .. })).count();
    assert_eq!(premixes, 1, "{:?}", b.sources);
    // Planned again, the blend doses the premix once and makes both traces exactly.
    let replanned = plan::plan(&b.resolve(&c, "", &b.name).unwrap(), &c, &opts).unwrap();
    assert!(replanned.premixes.is_empty(), "{:?}", replanned.premixes.len());
    let step = replanned.steps.iter().find(|s| s.source == st.name).expect("the premix step");
    assert!(!too_small(step));
    // The premix amount is 8 % of the blend's (the share the strength was chosen for).
    assert!((step.add_amount_mol / replanned.totals.amount_mol - 0.08).abs() < 1e-9);
    for (gas, want) in [("CO", 400e-6), ("SO2", 100e-6)] {
        let x = replanned.components.iter().find(|r| id(r.gas) == gas).unwrap().mole_fraction;
        assert!((x / want - 1.0).abs() < 1e-9, "{gas} {x}");
    }
}

#[test]
fn gases_that_burn_or_react_together_are_never_put_in_one_premix() {
    let c = Catalogue::built_in();
    // In the premix cylinder the pure gases meet before the balance gas is added.
    for (a, b) in [("CH4", "O2"), ("NO", "O2"), ("H2S", "SO2"), ("CO", "NO")] {
        let text = blend(&format!(
            r#"(gas: "{a}", amount: "300ppm"), (gas: "{b}", amount: "300ppm"), (gas: "N2", amount: "balance")"#
        ));
        let order = Recipe::load(&text, "t", &c).unwrap();
        let p = plan::plan(&order, &c, &PlanOptions { model: None, ..options(0.1, 0.1) }).unwrap();
        assert_eq!(p.premixes.len(), 2, "{a} and {b}: a premix of its own each");
        assert!(p.premixes.iter().all(|x| x.also.is_empty() && x.why.is_none()), "{a} with {b}");
    }
}

#[test]
fn no_premix_of_several_gases_where_another_source_brings_one_of_them() {
    // CO also comes in the nitrogen's analysis: the premix's ratio would not be what is added.
    let c = Catalogue::built_in();
    let text = r#"Recipe(format: 1, name: "trace-blend", order: "LAB-7781", components: [
        (gas: "CO", amount: "400ppm"), (gas: "SO2", amount: "100ppm"), (gas: "N2", amount: "balance")],
        cylinder: (water_capacity: "10L", working_pressure: "200bar", test_pressure: "300bar", serial: "QX-1"),
        fill: Pressure("150bar"),
        sources: [Pure("CO"), Pure("SO2"), Premix(name: "N2 with CO", mix: "CO=5ppm,N2=balance")])"#;
    // Without the CO in the nitrogen, the premix of both is proposed (the guard is what stops it).
    let plain = Recipe::load(
        &text.replace(r#"Premix(name: "N2 with CO", mix: "CO=5ppm,N2=balance")"#, r#"Pure("N2")"#),
        "t",
        &c,
    )
    .unwrap();
    let p = plan::plan(&plain, &c, &PlanOptions { model: None, ..options(0.1, 0.1) }).unwrap();
    assert!(p.premixes.iter().any(|x| !x.also.is_empty()));
    let order = Recipe::load(text, "t", &c).unwrap();
    let p = plan::plan(&order, &c, &PlanOptions { model: None, ..options(0.1, 0.1) }).unwrap();
    assert!(p.premixes.iter().all(|x| x.also.is_empty()), "no premix of both");
}

#[test]
fn kept_stage_plans_are_the_stages_own_and_follow_what_they_are_made_of() {
    // The process keeps each stage's plan by what it is made of: planning the blend again
    // gives the same stages (the kept ones), another amount of another gas leaves them
    // alone, and another fill pressure or bench resolution makes new ones.
    let c = Catalogue::built_in();
    let stages = |text: &str, o: &PlanOptions| {
        let order = Recipe::load(text, "t", &c).unwrap();
        let p = plan::plan(&order, &c, o).unwrap();
        p.premixes[0].stages.iter().map(|s| format!("{:?}", s.plan.as_ref().unwrap().steps)).collect::<Vec<_>>()
    };
    let first = blend(r#"(gas: "H2S", amount: "1ppm"), (gas: "CO", amount: "1%"), (gas: "N2", amount: "balance")"#);
    let a = stages(&first, &options(0.1, 0.1));
    assert_eq!(a, stages(&first, &options(0.1, 0.1)));
    let other_co = first.replace("\"1%\"", "\"2%\"");
    assert_eq!(a, stages(&other_co, &options(0.1, 0.1)), "the H2S stages do not depend on CO");
    let lower = first.replace("Pressure(\"150bar\")", "Pressure(\"100bar\")");
    assert_ne!(a, stages(&lower, &options(0.1, 0.1)), "another fill pressure, other stages");
    assert_ne!(a, stages(&first, &options(0.01, 0.01)), "finer resolutions, other stages");
}
