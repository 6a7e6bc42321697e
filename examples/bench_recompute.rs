//! Benchmark: how long the screen takes to recompute after an edit (plan under every
//! model, the comparison tables, screening with the dew-point search, Z curves), for each
//! demo recipe. The goal is well under 100 ms per edit in a release build, so that every
//! key press recomputes at once.
//! Run: cargo run --release --example bench_recompute

use std::time::Instant;

fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").expect("defaults");
    for (name, text) in fillwright::recipe::demo::RECIPES {
        let recipe = fillwright::recipe::Recipe::parse(text, name).expect("demo recipe");
        let runs = 20;
        let start = Instant::now();
        for _ in 0..runs {
            let c = fillwright::tui::model::Computed::of(&recipe, &catalogue, &settings);
            assert!(c.plan.is_ok());
        }
        let ms = start.elapsed().as_secs_f64() * 1e3 / f64::from(runs);
        println!("{name:<24} {ms:8.2} ms per recompute");
    }
}
