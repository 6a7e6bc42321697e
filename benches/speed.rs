//! `cargo bench`: the single states, one dew point, the cricondentherm, the whole
//! recompute of each demo recipe after an edit, and `check` over a library of 1,000
//! distinct recipes (a whole process on both cores). The goal figures and the peers'
//! figures are in the README; `tools/bench_peers.py` measures both side by side.

use std::hint::black_box;
use std::time::Duration;

use criterion::{criterion_group, criterion_main, Criterion};
use fillwright::checks::phase::PhaseFluid;
use fillwright::gas::Catalogue;
use fillwright::speed::{GAS4, GAS9};
use fillwright::thermo::{Fluid, Model};

fn fluid(c: &Catalogue, ids: &[&str], model: Model) -> Fluid {
    let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).expect("catalogue gas")).collect();
    Fluid::new(c, &gases, model).expect("fluid")
}

fn single_states(cr: &mut Criterion) {
    let c = Catalogue::built_in();
    let mut g = cr.benchmark_group("state");
    for (label, (ids, x)) in [("4", GAS4), ("9", GAS9)] {
        for model in [Model::Pr, Model::Gerg] {
            let f = fluid(&c, ids, model);
            g.bench_function(format!("{} density, {label} components", model.key()), |b| {
                b.iter(|| f.state_tp(black_box(fillwright::speed::STATE_T_K), fillwright::speed::STATE_P_PA, x))
            });
        }
    }
    g.finish();
}

fn envelope(cr: &mut Criterion) {
    let c = Catalogue::built_in();
    let (ids, x) = GAS9;
    let f = fluid(&c, ids, Model::Pr);
    let phase = PhaseFluid::new(&f);
    let mut g = cr.benchmark_group("envelope");
    g.bench_function("dew point, 9 components, pr", |b| {
        b.iter(|| phase.dew_temperature(black_box(fillwright::speed::DEW_P_PA), x, 80.0))
    });
    g.bench_function("cricondentherm, 9 components, pr", |b| {
        b.iter(|| (fillwright::speed::forget_kept_answers(), phase.cricondentherm(black_box(x), 80.0, 1000e5)))
    });
    g.finish();
}

fn recompute(cr: &mut Criterion) {
    let c = Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").expect("defaults");
    let mut g = cr.benchmark_group("recompute");
    for (name, text) in fillwright::recipe::demo::RECIPES {
        let recipe = fillwright::recipe::Recipe::parse(text, name).expect("demo recipe");
        g.bench_function(*name, |b| {
            b.iter(|| {
                (
                    fillwright::speed::forget_kept_answers(),
                    fillwright::tui::model::Computed::of(black_box(&recipe), &c, &settings),
                )
            })
        });
        // What the screen waits for on an edit: the phases by Peng–Robinson's estimate (the
        // reference's answer comes on another thread).
        g.bench_function(format!("{name}, screen's estimate"), |b| {
            b.iter(|| {
                (
                    fillwright::speed::forget_kept_answers(),
                    fillwright::tui::model::Computed::estimate(black_box(&recipe), &c, &settings),
                )
            })
        });
    }
    g.finish();
}

fn check_library(cr: &mut Criterion) {
    let dir = std::env::temp_dir().join(format!("fillwright-bench-library-{}", std::process::id()));
    fillwright::speed::write_library(&dir, 1000).expect("library written");
    let mut g = cr.benchmark_group("check");
    g.sample_size(10).measurement_time(Duration::from_secs(20));
    g.bench_function("1000 recipes, whole process", |b| {
        b.iter(|| {
            let out = std::process::Command::new(env!("CARGO_BIN_EXE_fillwright"))
                .args(["check", dir.to_str().expect("utf-8 path"), "--format", "json"])
                .env("FILLWRIGHT_CONFIG", dir.join("config"))
                .output()
                .expect("fillwright runs");
            assert!(!out.stdout.is_empty());
        })
    });
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group! {
    name = speed;
    config = Criterion::default().measurement_time(Duration::from_secs(2)).warm_up_time(Duration::from_millis(500));
    targets = single_states, envelope, recompute, check_library
}
criterion_main!(speed);
