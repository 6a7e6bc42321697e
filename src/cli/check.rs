//! `fillwright check`: screening before the fill. Exit status 3 when a finding is at `stop`.

use std::path::Path;

use clap::Args;
use serde_json::{json, Value};

use super::plan::OrderArgs;
use super::{print_json, Common, Failure, Format, Refused};
use crate::checks::{self, Check, Conditions, Severity, CAUTIONS};
use crate::config;
use crate::plan::{self, PlanOptions};
use crate::recipe::{Order, Recipe};
use crate::thermo::Model;
use crate::units::{self, Shown};

#[derive(Debug, Args)]
#[command(after_help = "Give recipes (library names, demo names, .ron files or folders of them), or the order \
                        with --mix, --volume, --pressure and --temp.\n\n\
                        Exit status: 0 when nothing is at stop, 3 when something is, 1 for refused input.")]
pub struct CheckArgs {
    /// Recipes: library names, demo recipe names, .ron files, or folders of .ron files.
    #[arg(value_name = "RECIPE", conflicts_with = "mix")]
    pub recipes: Vec<String>,
    #[command(flatten)]
    pub given: OrderArgs,
    /// Lowest storage and transport temperature (default: the setting, else 0C).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub min_temp: Option<String>,
    /// Highest service temperature (default: the setting, else 65C).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub max_temp: Option<String>,
    /// Recipe library folder.
    #[arg(long, value_name = "DIR")]
    pub library: Option<std::path::PathBuf>,
    #[command(flatten)]
    pub common: Common,
}

pub fn run(args: &CheckArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let settings = config::load_settings().map_err(Refused)?;
    let temp = |t: &Option<String>, what: &str, default: f64| -> Result<f64, Refused> {
        t.as_deref().map_or(Ok(default), |t| units::parse_temperature(t).map_err(|e| Refused(format!("--{what}: {e}"))))
    };
    let conditions = Conditions {
        min_temperature_k: temp(&args.min_temp, "min-temp", settings.min_storage_temperature_k)?,
        max_temperature_k: temp(&args.max_temp, "max-temp", settings.max_service_temperature_k)?,
    };
    let mut orders: Vec<(String, Order)> = Vec::new();
    if args.given.mix.is_some() {
        let order = args.given.order(args.common.ambient_pa(&settings)?, &catalogue)?;
        orders.push((order.name.clone(), order));
    } else if args.recipes.is_empty() {
        return Err(Failure::Usage("check needs recipes or --mix with --volume and --pressure".into()));
    }
    for name in &args.recipes {
        let path = Path::new(name);
        let names: Vec<String> = if path.is_dir() {
            let mut files: Vec<String> = std::fs::read_dir(path)
                .map_err(|e| Refused(format!("{name}: {e}")))?
                .flatten()
                .map(|e| e.path())
                .filter(|p| p.extension().and_then(|x| x.to_str()) == Some("ron"))
                .map(|p| p.display().to_string())
                .collect();
            files.sort();
            files
        } else {
            vec![name.clone()]
        };
        for n in names {
            let (text, origin) = config::recipe_text(&n, args.library.as_deref()).map_err(Refused)?;
            orders.push((origin.clone(), Recipe::load(&text, &origin, &catalogue)?));
        }
    }
    // --working-pressure and --test-pressure check a recipe against another cylinder rating.
    for (origin, order) in orders.iter_mut().filter(|_| args.given.mix.is_none()) {
        let (working, test) = args.given.ratings(order.ambient_pa)?;
        if let Some(p) = working {
            order.working_pressure_pa = p;
        }
        if let Some(p) = test {
            order.test_pressure_pa = p;
        }
        if order.test_pressure_pa < order.working_pressure_pa {
            return Err(Refused(format!("{origin}: the test pressure is below the working pressure")).into());
        }
    }
    let options = PlanOptions {
        model: args.common.model,
        default_model: settings.default_model,
        resolutions: plan::Resolutions { gauge_pa: settings.gauge_resolution_pa, scale_g: settings.scale_resolution_g },
        ..PlanOptions::default()
    };
    let mut results: Vec<(String, Model, Vec<Check>)> = Vec::new();
    for (origin, order) in &orders {
        let p = plan::plan(order, &catalogue, &options).map_err(|e| Refused(format!("{origin}: {e}")))?;
        results.push((origin.clone(), p.model, checks::screen(&p, order, &catalogue, &conditions)));
    }
    match args.common.format {
        Format::Json => print_json(&json!({
            "checks": results
                .iter()
                .flat_map(|(origin, model, checks)| checks.iter().map(move |c| check_json(origin, *model, c)))
                .collect::<Vec<_>>(),
            "cautions": CAUTIONS,
        })),
        Format::Text | Format::Csv => print_text(&results, &conditions, &settings.shown),
    }
    let worst = results.iter().map(|(_, _, c)| checks::worst(c)).max().unwrap_or(Severity::Ok);
    if worst == Severity::Stop {
        return Err(Failure::Findings);
    }
    Ok(())
}

fn check_json(origin: &str, model: Model, c: &Check) -> Value {
    let mut v = json!({
        "recipe": origin,
        "model": model.key(),
        "id": c.id,
        "severity": c.severity.key(),
        "message": c.message,
        "details": c.details,
    });
    if let Value::Object(map) = &mut v {
        for (k, val) in &c.data {
            map.insert(k.clone(), val.clone());
        }
    }
    v
}

fn print_text(results: &[(String, Model, Vec<Check>)], conditions: &Conditions, d: &Shown) {
    for (origin, model, list) in results {
        let worst = checks::worst(list);
        println!(
            "{}: {}  (plan {}; storage down to {}, service up to {})",
            origin,
            match worst {
                Severity::Stop => "STOP - do not fill as planned",
                Severity::Caution => "CAUTION",
                Severity::Ok => "OK",
            },
            model.key(),
            d.tf(conditions.min_temperature_k),
            d.tf(conditions.max_temperature_k)
        );
        // What matters first: stop, then caution, then ok.
        let mut sorted: Vec<&Check> = list.iter().collect();
        sorted.sort_by_key(|c| std::cmp::Reverse(c.severity));
        for c in sorted {
            println!("  [{:<7}] {:<16} {}", c.severity.key(), c.id, c.message);
            for d in &c.details {
                println!("              {d}");
            }
        }
        println!();
    }
    println!("Cautions:");
    for c in CAUTIONS {
        println!("  - {c}");
    }
}
