//! The multi-fluid Helmholtz model against CoolProp's HEOS backend (the same kind of model,
//! an independent implementation): fixture tests/fixtures/coolprop_multifluid.json, made
//! by tests/reference/make_multifluid_fixture.py.

mod common;

use fillwright::gas::Catalogue;
use fillwright::thermo::multifluid::Mixture;
use serde_json::Value;

fn fixture() -> Value {
    serde_json::from_str(include_str!("fixtures/coolprop_multifluid.json")).expect("fixture")
}

fn mixture(c: &Catalogue, ids: &[&str]) -> Mixture {
    let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).expect("catalogue gas")).collect();
    Mixture::new(c, &gases)
}

fn ids_of(v: &Value) -> Vec<String> {
    v.as_array().unwrap().iter().map(|s| s.as_str().unwrap().to_string()).collect()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(|s| s.as_f64().unwrap()).collect()
}

#[test]
fn pure_gases_follow_their_reference_equations() {
    let c = Catalogue::built_in();
    let f = fixture();
    let mut worst: f64 = 0.0;
    for s in f["pure"].as_array().unwrap() {
        let id = s["id"].as_str().unwrap();
        let m = mixture(&c, &[id]);
        let (t, p, rho, z) = (
            s["t_k"].as_f64().unwrap(),
            s["p_pa"].as_f64().unwrap(),
            s["rho_mol_m3"].as_f64().unwrap(),
            s["z"].as_f64().unwrap(),
        );
        // Z at CoolProp's density: the same equation, so to rounding.
        let (p_here, _) = m.pressure(t, rho, &[1.0]);
        let z_here = p_here / (rho * fillwright::units::R * t);
        assert!((z_here / z - 1.0).abs() < 1e-9, "{id} at {p} Pa: Z {z_here} vs CoolProp {z}");
        // The density solved at (T, P): the gas root. CoolProp takes each pure fluid's own
        // gas constant (8.314472 or 8.3144598 J/(mol K) in the older equations), fillwright
        // the CODATA 2018 value throughout; at the pressure scaled by their ratio the two
        // solve the same equation.
        let r_theirs = s["gas_constant"].as_f64().unwrap();
        let rho_here = m.density(t, p * fillwright::units::R / r_theirs, &[1.0], None).expect("gas root");
        worst = worst.max((rho_here / rho - 1.0).abs());
        assert!((rho_here / rho - 1.0).abs() < 1e-9, "{id} at {p} Pa: {rho_here} vs CoolProp {rho}");
        assert_eq!(fillwright::thermo::multifluid::reference_equation(id).unwrap().1, s["source"].as_str().unwrap());
    }
    assert!(worst < 1e-9);
}

#[test]
fn blends_follow_coolprops_multi_fluid_model() {
    let c = Catalogue::built_in();
    let f = fixture();
    for s in f["mixtures"].as_array().unwrap() {
        let ids = ids_of(&s["ids"]);
        let refs: Vec<&str> = ids.iter().map(String::as_str).collect();
        let m = mixture(&c, &refs);
        let x = floats(&s["x"]);
        let (t, p, rho, z) = (
            s["t_k"].as_f64().unwrap(),
            s["p_pa"].as_f64().unwrap(),
            s["rho_mol_m3"].as_f64().unwrap(),
            s["z"].as_f64().unwrap(),
        );
        let estimated: Vec<Vec<String>> = s["estimated_pairs"].as_array().unwrap().iter().map(ids_of).collect();
        // Published pairs: the same equations, to rounding. Estimated pairs: CoolProp's
        // linear rule takes the critical densities where fillwright takes each equation's
        // reducing density (helium's differ by 1e-3), a few parts in 1e8 in Z.
        let tolerance = if estimated.is_empty() { 1e-9 } else { 1e-7 };
        let (p_here, _) = m.pressure(t, rho, &x);
        let z_here = p_here / (rho * fillwright::units::R * t);
        assert!((z_here / z - 1.0).abs() < tolerance, "{ids:?} at {p} Pa: Z {z_here} vs CoolProp {z}");
        let r_theirs = s["gas_constant"].as_f64().unwrap();
        let rho_here = m.density(t, p * fillwright::units::R / r_theirs, &x, None).expect("gas root");
        assert!((rho_here / rho - 1.0).abs() < tolerance, "{ids:?} at {p} Pa: {rho_here} vs CoolProp {rho}");
        for (k, (a, b)) in m.ln_phi(t, rho, &x).iter().zip(floats(&s["ln_phi"])).enumerate() {
            assert!((a - b).abs() < 1e3 * tolerance, "{ids:?} ln phi of {}: {a} vs CoolProp {b}", ids[k]);
        }
        // The same pairs are estimated here as there.
        let here: Vec<Vec<String>> = m.estimated().1.iter().map(|(a, b)| vec![a.clone(), b.clone()]).collect();
        assert_eq!(here, estimated, "{ids:?}");
    }
}

fn amount(c: &Catalogue, ids: &[&str], x: &[f64], model: fillwright::thermo::Model, p_pa: f64) -> f64 {
    let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
    fillwright::thermo::Fluid::new(c, &gases, model).unwrap().amount(288.15, p_pa, 0.01, x).unwrap()
}

#[test]
fn a_trace_outside_gerg_no_longer_costs_the_blend_its_accuracy() {
    // Emission-monitoring spans: a ppm trace in nitrogen behaves like nitrogen. The
    // reference for the amount is GERG-2008 of nitrogen alone (the trace moves it by less
    // than 1e-4); the multi-fluid model, now the default for these, stays within 0.1 %
    // where Peng-Robinson for the whole blend was 1.5-3 % off.
    use fillwright::thermo::Model;
    let c = Catalogue::built_in();
    for (trace, x) in [("NO", 50e-6), ("SO2", 500e-6), ("NO2", 20e-6), ("NH3", 100e-6), ("HCl", 50e-6), ("Cl2", 10e-6)]
    {
        let ids = [trace, "N2"];
        let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        assert_eq!(fillwright::plan::default_model(&gases, &c), Model::Multi, "{trace}");
        for p in [100e5, 150e5, 200e5] {
            let reference = amount(&c, &["N2"], &[1.0], Model::Gerg, p);
            let multi = amount(&c, &ids, &[x, 1.0 - x], Model::Multi, p);
            let pr = amount(&c, &ids, &[x, 1.0 - x], Model::Pr, p);
            let off = (multi / reference - 1.0) * 100.0;
            assert!(off.abs() < 0.1, "{trace} at {p} Pa: multi {off:+.3} % from GERG-2008 of N2");
            assert!((pr / reference - 1.0).abs() > 0.01, "{trace} at {p} Pa: PR was not the problem?");
        }
    }
}

#[test]
fn the_fill_sheet_says_where_the_model_estimates() {
    let run = |mix: &str| {
        let o = std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
            .args(["plan", "--mix", mix, "--volume", "10L", "--pressure", "150bar"])
            .env("FILLWRIGHT_CONFIG", common::temp_dir().join(format!("fillwright-mf-{}", std::process::id())))
            .env_remove("FILLWRIGHT_LIBRARY")
            .output()
            .unwrap();
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8_lossy(&o.stdout).replace('\n', " ")
    };
    // 1 % SF6 in N2: no published N2-SF6 parameters; the two estimates differ by 0.1 %.
    let sf6 = run("SF6=1%,N2=balance");
    assert!(sf6.contains("model multi-fluid (multi)"), "{sf6}");
    assert!(sf6.contains("no published parameters for SF6-N2"), "{sf6}");
    // 5 % NO: no reference equation for NO, said; a 50 ppm trace says nothing.
    let no = run("NO=5%,N2=balance");
    assert!(no.contains("no reference equation of state for NO (5%)"), "{no}");
    let trace = run("NO=50ppm,N2=balance");
    assert!(!trace.contains("no reference equation") && !trace.contains("no published parameters"), "{trace}");
}

#[test]
fn curated_peng_robinson_pairs_give_the_multi_fluid_dew_point() {
    // The dew points of the PR screen (which judges phases under every model) against the
    // multi-fluid reference, for the pairs whose k_ij the catalogue replaced and a control
    // pair, each with the largest gap allowed. H2/n-C4H10: ChemSep's -0.397 put it at
    // 250.75 K (thermo 0.6.1's PR flash), 4.0 K low; the interpolated -0.0974 gives 3.1 K
    // low (the rest is PR's own error for n-butane). N2/n-C8H18: ChemSep's -0.4 put the
    // cricondentherm 14-20 K low; the interpolated 0.1335 gives 3.8 K low here.
    // CH4/C3H8 (ChemSep 0.014) is within 1 K.
    let allowed = |ids: &[String]| match ids[1].as_str() {
        "n-C4H10" => 3.5,
        "n-C8H18" => 4.5,
        _ => 1.0,
    };
    use fillwright::checks::phase::PhaseFluid;
    use fillwright::thermo::{Fluid, Model};
    let c = Catalogue::built_in();
    let f = fixture();
    for d in f["dew_points"].as_array().unwrap() {
        let ids = ids_of(&d["ids"]);
        let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        let x = floats(&d["x"]);
        let (p, reference) = (d["p_pa"].as_f64().unwrap(), d["t_k"].as_f64().unwrap());
        let fluid = Fluid::new(&c, &gases, Model::Pr).unwrap();
        let dew = PhaseFluid::new(&fluid).dew_temperature(p, &x, 80.0).unwrap().expect("a dew point");
        assert!((dew - reference).abs() < allowed(&ids), "{ids:?} at {p} Pa: PR {dew} K, multi-fluid {reference} K");
        if ids[0] == "H2" {
            assert!(dew > 250.75 + 0.5, "no better than the listed k_ij: {dew} K");
        }
    }
}

#[test]
fn any_blend_of_catalogue_gases_gives_a_state_or_a_clear_refusal() {
    // 300 seeded random blends of 1-5 catalogue gases at 200-400 K and 1-300 bar: a
    // finite, positive density that gives the pressure back, or an error, never a panic
    // or a NaN.
    use fillwright::thermo::{Fluid, Model};
    use rand::{Rng, SeedableRng};
    let c = Catalogue::built_in();
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(12);
    let n_gases = c.gases().len();
    let mut solved = 0;
    for _ in 0..300 {
        let k = rng.random_range(1..=5);
        let mut gases: Vec<usize> = (0..k).map(|_| rng.random_range(0..n_gases)).collect();
        gases.sort();
        gases.dedup();
        let mut x: Vec<f64> = gases.iter().map(|_| rng.random_range(0.01..1.0)).collect();
        let sum: f64 = x.iter().sum();
        x.iter_mut().for_each(|v| *v /= sum);
        let (t, p) = (rng.random_range(200.0..400.0), rng.random_range(1e5..300e5));
        let f = Fluid::new(&c, &gases, Model::Multi).unwrap();
        match f.state_tp(t, p, &x) {
            Ok(s) => {
                assert!(s.molar_volume_m3.is_finite() && s.molar_volume_m3 > 0.0 && s.z.is_finite());
                let back = f.pressure_tv(t, s.molar_volume_m3, &x).unwrap();
                assert!((back / p - 1.0).abs() < 1e-8, "{gases:?} {x:?} {t} K {p} Pa: {back}");
                solved += 1;
            }
            Err(e) => assert!(!e.to_string().is_empty()),
        }
    }
    assert!(solved > 200, "{solved} of 300 solved");
}

#[test]
fn a_compressed_liquid_takes_the_liquid_root() {
    // SF6 at 15 °C and 30 bar, above its 18.6 bar vapour pressure: CoolProp's reference
    // equation gives 10051.69 mol/m³ (PropsSI('Dmolar','T',288.15,'P',30e5,'SF6'), its own
    // R = 8.314472; at the pressure scaled to fillwright's R the density is the same to 1e-6).
    use fillwright::thermo::{Fluid, Model};
    let c = Catalogue::built_in();
    let f = Fluid::new(&c, &[c.index_of("SF6").unwrap()], Model::Multi).unwrap();
    let p = 30e5 * fillwright::units::R / 8.314472;
    let rho = 1.0 / f.state_tp(288.15, p, &[1.0]).unwrap().molar_volume_m3;
    assert!((rho / 10051.691858071925 - 1.0).abs() < 1e-6, "{rho}");
}
