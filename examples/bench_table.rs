//! The speed figures of the README in one quick run: each case timed over repeated batches
//! (the median batch), printed as JSON lines for `tools/bench_peers.py`, which measures
//! the peers in the same run. `cargo bench` has the same cases with criterion's statistics.
//! Run: cargo run --release --example bench_table   (after cargo build --release)

use std::hint::black_box;
use std::time::Instant;

use fillwright::checks::phase::PhaseFluid;
use fillwright::gas::Catalogue;
use fillwright::speed::{GAS4, GAS9};
use fillwright::thermo::{Fluid, Model};

/// Median seconds per call over 7 batches of calls lasting about 50 ms each.
fn time(mut f: impl FnMut()) -> f64 {
    let start = Instant::now();
    f();
    let once = start.elapsed().as_secs_f64().max(1e-9);
    let per_batch = ((0.05 / once) as usize).clamp(1, 1_000_000);
    let mut batches: Vec<f64> = (0..7)
        .map(|_| {
            let t = Instant::now();
            for _ in 0..per_batch {
                f();
            }
            t.elapsed().as_secs_f64() / per_batch as f64
        })
        .collect();
    batches.sort_by(f64::total_cmp);
    batches[3]
}

fn emit(case: &str, seconds: f64) {
    println!("{}", serde_json::json!({"case": case, "seconds": seconds}));
}

fn fluid(c: &Catalogue, ids: &[&str], model: Model) -> Fluid {
    let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).expect("catalogue gas")).collect();
    Fluid::new(c, &gases, model).expect("fluid")
}

fn main() {
    let c = Catalogue::built_in();
    let (t, p) = (fillwright::speed::STATE_T_K, fillwright::speed::STATE_P_PA);
    for (label, (ids, x)) in [("4", GAS4), ("9", GAS9)] {
        for model in [Model::Pr, Model::Gerg, Model::Multi] {
            let f = fluid(&c, ids, model);
            emit(&format!("{} density {label}", model.key()), time(|| drop(black_box(f.state_tp(t, p, x)))));
        }
        // The aga8 crate's GERG-2008 density itself (the peer in Rust; its composition set
        // once, as fillwright keeps it).
        let mut g = aga8::gerg2008::Gerg2008::new();
        let comp = fillwright::thermo::gerg::composition(ids, x).expect("gases GERG-2008 covers");
        g.set_composition(&comp).expect("a GERG-2008 composition");
        g.t = t;
        g.p = p * 1e-3;
        emit(&format!("aga8 density {label}"), time(|| drop(black_box(g.density(0)))));
    }
    let (ids, x) = GAS9;
    let f = fluid(&c, ids, Model::Pr);
    let phase = PhaseFluid::new(&f);
    emit("dew point 9", time(|| drop(black_box(phase.dew_temperature(fillwright::speed::DEW_P_PA, x, 80.0)))));
    // Each repeat computes afresh: the answers the process keeps are forgotten first.
    let forget = fillwright::speed::forget_kept_answers;
    emit("cricondentherm 9", time(|| drop(black_box((forget(), phase.cricondentherm(x, 80.0, 1000e5))))));
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").expect("defaults");
    for (name, text) in fillwright::recipe::demo::RECIPES {
        let recipe = fillwright::recipe::Recipe::parse(text, name).expect("demo recipe");
        emit(
            &format!("recompute {name}"),
            time(|| drop(black_box((forget(), fillwright::tui::model::Computed::of(&recipe, &c, &settings))))),
        );
        emit(
            &format!("estimate {name}"),
            time(|| drop(black_box((forget(), fillwright::tui::model::Computed::estimate(&recipe, &c, &settings))))),
        );
    }
    // check over 1,000 recipes: the release binary beside this example, a whole process.
    let exe = std::env::current_exe().ok().and_then(|p| Some(p.parent()?.parent()?.join("fillwright")));
    if let Some(exe) = exe.filter(|e| e.exists()) {
        let dir = std::env::temp_dir().join(format!("fillwright-bench-table-{}", std::process::id()));
        fillwright::speed::write_library(&dir, 1000).expect("library written");
        let mut runs: Vec<f64> = (0..3)
            .map(|_| {
                let t = Instant::now();
                let out = std::process::Command::new(&exe)
                    .args(["check", dir.to_str().expect("utf-8 path"), "--format", "json"])
                    .env("FILLWRIGHT_CONFIG", dir.join("config"))
                    .output()
                    .expect("fillwright runs");
                assert!(!out.stdout.is_empty());
                t.elapsed().as_secs_f64()
            })
            .collect();
        runs.sort_by(f64::total_cmp);
        emit("check 1000 recipes", runs[1]);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
