//! Property tests over random mixtures and states of the gas domain.

use fillwright::gas::Catalogue;
use fillwright::thermo::{gerg, Fluid, Model};
use proptest::prelude::*;

const POOL: &[&str] = &[
    "N2", "O2", "Ar", "He", "H2", "CO", "CO2", "CH4", "C2H6", "C3H8", "n-C4H10", "H2S", "SO2", "NO", "N2O", "SF6",
    "Ne", "Kr", "C2H4", "NH3", "HCl", "CF4",
];

fn mixture() -> impl Strategy<Value = (Vec<&'static str>, Vec<f64>)> {
    proptest::sample::subsequence(POOL, 1..=6).prop_flat_map(|ids| {
        let n = ids.len();
        (Just(ids), proptest::collection::vec(0.01f64..1.0, n)).prop_map(|(ids, w)| {
            let s: f64 = w.iter().sum();
            (ids, w.iter().map(|v| v / s).collect())
        })
    })
}

fn model() -> impl Strategy<Value = Model> {
    prop_oneof![
        Just(Model::Ideal),
        Just(Model::Vdw),
        Just(Model::Rk),
        Just(Model::Srk),
        Just(Model::Pr),
        Just(Model::Gerg)
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn pressure_of_the_solved_volume_returns_the_pressure(
        (ids, x) in mixture(),
        model in model(),
        t in 200.0f64..400.0,
        p_bar in 1.0f64..300.0,
        n in 0.1f64..500.0,
    ) {
        let c = Catalogue::built_in();
        let model = if model == Model::Gerg && !ids.iter().all(|id| gerg::covers(id)) { Model::Pr } else { model };
        let idx: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        let f = Fluid::new(&c, &idx, model).unwrap();
        let p = p_bar * 1e5;
        // Some GERG states are two-phase and have no single root; every cubic state has one.
        let Ok(v) = f.volume(t, p, n, &x) else {
            prop_assert_eq!(model, Model::Gerg);
            return Ok(());
        };
        let amounts: Vec<f64> = x.iter().map(|xi| xi * n).collect();
        let back = f.pressure(t, v, &amounts).unwrap();
        prop_assert!(((back - p) / p).abs() < 1e-10, "{model}: {back} vs {p}");
        if let Some(slope) = f.dp_dv(t, v / n, &x) {
            prop_assert!(slope < 0.0, "{model}: dP/dv = {slope} on the chosen root");
        }
    }

    #[test]
    fn every_state_is_finite_or_an_error(
        (ids, x) in mixture(),
        model in model(),
        t in -50.0f64..2000.0,
        p in -1.0e5f64..2.0e8,
    ) {
        let c = Catalogue::built_in();
        let idx: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        if let Ok(f) = Fluid::new(&c, &idx, model) {
            if let Ok(s) = f.state_tp(t, p, &x) {
                prop_assert!(s.z.is_finite() && s.z > 0.0 && s.molar_volume_m3.is_finite());
            }
        }
    }
}
