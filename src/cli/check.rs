//! `fillwright check`: screening before the fill. Exit status 3 when a finding is at `stop`.

use std::path::Path;

use clap::Args;
use rayon::prelude::*;
use serde_json::{json, Value};

use super::plan::OrderArgs;
use super::{print_json, Common, Failure, Format, Refused};
use crate::checks::{self, Check, Conditions, Severity, CAUTIONS};
use crate::config;
use crate::plan::{self, PlanOptions};
use crate::recipe::{Order, Recipe};
use crate::ron_format::wrap_words;
use crate::thermo::Model;
use crate::units::{self, Shown};

#[derive(Debug, Args)]
#[command(after_help = "Give recipes (library names, demo names, .ron files or folders of them), or the order \
                        with --mix, --volume, --pressure and --temp.\n\n\
                        Exit status: 0 when nothing is at stop, 3 when something is, 1 for refused input.\n\n\
                        Examples:\n  \
                        fillwright check flue-gas-span lpg-in-methane\n  \
                        fillwright check ~/.config/fillwright/library --format csv\n  \
                        fillwright check --mix \"CH4=2.2%,O2=20.9%,N2=balance\" --volume 10L \\\n      \
                        --pressure 150bar --temp 15C")]
pub struct CheckArgs {
    /// Recipes: library names, demo recipe names, .ron files, folders of .ron files, or `-`
    /// (standard input).
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

/// One recipe's screening: its origin, and the model and checks, or why it was not screened.
type Screened = (String, Result<(Model, Vec<Check>), String>);

pub fn run(args: &CheckArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let settings = config::load_settings().map_err(Refused)?;
    let temp = |t: &Option<String>, what: &str, default: f64| -> Result<f64, Refused> {
        t.as_deref().map_or(Ok(default), |t| units::parse_temperature(t).map_err(|e| Refused(format!("--{what}: {e}"))))
    };
    let conditions = Conditions {
        min_temperature_k: temp(&args.min_temp, "min-temp", settings.min_storage_temperature_k)?,
        max_temperature_k: temp(&args.max_temp, "max-temp", settings.max_service_temperature_k)?,
        margin_k: settings.condensation_margin_k,
    };
    if conditions.min_temperature_k >= conditions.max_temperature_k {
        return Err(Refused(format!(
            "--min-temp {} is not below --max-temp {}: the lowest storage temperature must be below the highest \
             service temperature",
            settings.shown.tf(conditions.min_temperature_k),
            settings.shown.tf(conditions.max_temperature_k)
        ))
        .into());
    }
    // Every recipe named is screened; one that cannot be read or planned is reported with
    // its error and the others still run.
    let mut orders: Vec<(String, Result<Order, String>)> = Vec::new();
    if args.given.mix.is_some() {
        let order = args.given.order(args.common.ambient_pa(&settings)?, &catalogue)?;
        orders.push((order.name.clone(), Ok(order)));
    } else if args.recipes.is_empty() {
        return Err(Failure::Usage("check needs recipes or --mix with --volume and --pressure".into()));
    }
    for name in &args.recipes {
        let path = Path::new(name);
        let names: Vec<String> = if std::fs::symlink_metadata(path).is_ok_and(|m| m.is_dir()) {
            let mut files: Vec<String> = std::fs::read_dir(path)
                .map_err(|e| Refused(format!("{name}: {e}")))?
                .flatten()
                .map(|e| e.path())
                .filter(|p| p.extension().and_then(|x| x.to_str()) == Some("ron"))
                .filter(|p| !p.file_name().and_then(|f| f.to_str()).is_some_and(|f| f.starts_with('.')))
                .map(|p| p.display().to_string())
                .collect();
            files.sort();
            files
        } else {
            vec![name.clone()]
        };
        for n in names {
            let loaded = config::recipe_text(&n, args.library.as_deref()).and_then(|(text, origin)| {
                Recipe::load(&text, &origin, &catalogue).map(|o| (origin, o)).map_err(|e| e.to_string())
            });
            match loaded {
                Ok((origin, order)) => orders.push((origin, Ok(order))),
                Err(e) => orders.push((n, Err(e))),
            }
        }
    }
    // --working-pressure and --test-pressure check a recipe against another cylinder rating.
    if args.given.mix.is_none() {
        for (origin, order) in &mut orders {
            let Ok(o) = order else { continue };
            let (working, test) = args.given.ratings(o.ambient_pa)?;
            if let Some(p) = working {
                o.working_pressure_pa = p;
            }
            if let Some(p) = test {
                o.test_pressure_pa = p;
            }
            args.given.apply_before_fill(o, &catalogue)?;
            if o.test_pressure_pa < o.working_pressure_pa {
                *order = Err(format!("{origin}: the test pressure is below the working pressure"));
            }
        }
    }
    let options = PlanOptions {
        model: args.common.model,
        default_model: settings.default_model,
        resolutions: plan::Resolutions { gauge_pa: settings.gauge_resolution_pa, scale_g: settings.scale_resolution_g },
        min_temperature_k: Some(conditions.judged_down_to_k()),
        // The screening does not use the comparison of following each model's readings.
        skip_following: true,
        ..PlanOptions::default()
    };
    // Both cores (every core) for many recipes; collect keeps the order of the list.
    let results: Vec<Screened> = orders
        .par_iter()
        .map(|(origin, order)| {
            let screened = order.as_ref().map_err(Clone::clone).and_then(|order| {
                // A fill above the test pressure has no plan: it is refused, in `plan` alike.
                let p = plan::plan(order, &catalogue, &options).map_err(|e| format!("{origin}: {e}"))?;
                Ok((p.model, checks::screen(&p, order, &catalogue, &conditions)))
            });
            (origin.clone(), screened)
        })
        .collect();
    match args.common.format {
        Format::Json => print_json(&json!({
            "checks": results
                .iter()
                .filter_map(|(origin, r)| r.as_ref().ok().map(|(model, checks)| (origin, model, checks)))
                .flat_map(|(origin, model, checks)| checks.iter().map(move |c| check_json(origin, *model, c)))
                .collect::<Vec<_>>(),
            "unreadable": results
                .iter()
                .filter_map(|(origin, r)| r.as_ref().err().map(|e| json!({"recipe": origin, "error": e})))
                .collect::<Vec<_>>(),
            "cautions": CAUTIONS,
        })),
        Format::Csv => {
            outln!("recipe,model,id,severity,message");
            for (origin, r) in &results {
                match r {
                    Ok((model, list)) => {
                        for c in list {
                            outln!(
                                "{},{},{},{},{}",
                                super::csv_field(origin),
                                model.key(),
                                c.id,
                                c.severity.key(),
                                super::csv_field(&c.message)
                            );
                        }
                    }
                    Err(e) => {
                        outln!("{},,,unreadable,{}", super::csv_field(origin), super::csv_field(e))
                    }
                }
            }
        }
        Format::Text => print_text(&results, &conditions, &settings.shown),
    }
    let worst = results
        .iter()
        .filter_map(|(_, r)| r.as_ref().ok())
        .map(|(_, c)| checks::worst(c))
        .max()
        .unwrap_or(Severity::Ok);
    let unreadable = results.iter().filter(|(_, r)| r.is_err()).count();
    // The worst status wins: a finding at stop (3), else a recipe that could not be
    // screened (1), else 0.
    if worst == Severity::Stop {
        return Err(Failure::Findings);
    }
    if let [(_, Err(e))] = &results[..] {
        return Err(Refused(e.clone()).into());
    }
    if unreadable > 0 {
        return Err(Refused(format!(
            "{unreadable} of {} recipes could not be screened (each is named above with its error)",
            results.len()
        ))
        .into());
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

fn print_text(results: &[Screened], conditions: &Conditions, d: &Shown) {
    for (origin, result) in results {
        let (model, list) = match result {
            Ok((model, list)) => (model, list),
            Err(e) => {
                outln!("{origin}: NOT SCREENED - refused");
                outln!("  {}", crate::ron_format::shorten(e));
                outln!();
                continue;
            }
        };
        let worst = checks::worst(list);
        outln!(
            "{}: {}",
            origin,
            match worst {
                Severity::Stop => "STOP - do not fill as planned",
                Severity::Caution => "CAUTION",
                Severity::Ok => "OK",
            }
        );
        outln!(
            "  plan {}; storage down to {}, service up to {}",
            model.key(),
            d.tf(conditions.min_temperature_k),
            d.tf(conditions.max_temperature_k)
        );
        // What matters first: stop, then caution, then ok.
        let mut sorted: Vec<&Check> = list.iter().collect();
        sorted.sort_by_key(|c| std::cmp::Reverse(c.severity));
        // 80 columns: messages and details wrapped with a hanging indent (JSON has them whole).
        for c in sorted {
            let lines = wrap_words(&c.message, 80 - 29);
            for (k, l) in lines.iter().enumerate() {
                if k == 0 {
                    outln!("  [{:<7}] {:<16} {l}", c.severity.key(), c.id);
                } else {
                    outln!("{:29}{l}", "");
                }
            }
            for d in &c.details {
                for (k, l) in wrap_words(d, 80 - 16).iter().enumerate() {
                    outln!("{}{l}", if k == 0 { "              " } else { "                " });
                }
            }
        }
        outln!();
    }
    outln!("Cautions:");
    for c in CAUTIONS {
        for (k, l) in wrap_words(c, 80 - 4).iter().enumerate() {
            outln!("{}{l}", if k == 0 { "  - " } else { "    " });
        }
    }
}
