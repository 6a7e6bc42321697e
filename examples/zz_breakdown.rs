use fillwright::checks;
use std::time::Instant;
fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").unwrap();
    let conditions = settings.conditions();
    for (name, text) in fillwright::recipe::demo::RECIPES {
        let recipe = fillwright::recipe::Recipe::parse(text, name).unwrap();
        let order = recipe.resolve(&catalogue, text, name).unwrap();
        let options = fillwright::plan::PlanOptions {
            min_temperature_k: Some(conditions.judged_down_to_k()),
            ..Default::default()
        };
        let runs = 50;
        let t = Instant::now();
        for _ in 0..runs {
            let _ = fillwright::plan::plan(&order, &catalogue, &options).unwrap();
        }
        let plan_ms = t.elapsed().as_secs_f64() * 1e3 / runs as f64;
        let plan = fillwright::plan::plan(&order, &catalogue, &options).unwrap();
        let t = Instant::now();
        for _ in 0..runs {
            let _ = checks::condensation::check(&plan, &order, &catalogue, &conditions);
        }
        let cond_ms = t.elapsed().as_secs_f64() * 1e3 / runs as f64;
        let t = Instant::now();
        for _ in 0..runs {
            let _ = checks::screen(&plan, &order, &catalogue, &conditions);
        }
        let screen_ms = t.elapsed().as_secs_f64() * 1e3 / runs as f64;
        let t = Instant::now();
        for _ in 0..runs {
            let _ = fillwright::tui::model::Computed::of(&recipe, &catalogue, &settings);
        }
        let all_ms = t.elapsed().as_secs_f64() * 1e3 / runs as f64;
        println!(
            "{name:<24} plan {plan_ms:7.3}  condensation {cond_ms:7.3}  screen {screen_ms:7.3}  all {all_ms:7.3} ms"
        );
    }
}
