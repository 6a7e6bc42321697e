//! `fillwright plan`: the fill sheet for a recipe or for an order given on the command line.

use clap::Args;
use serde_json::{json, Value};

use super::{print_json, Common, Failure, Format, Refused};
use crate::checks::{self, Severity};
use crate::config;
use crate::gas::Catalogue;
use crate::mixture::{self, Composition};
use crate::plan::{self, Plan, PlanOptions, Resolutions};
pub use crate::print::{fill_sheet, stop_banner, stop_banner_for};
use crate::recipe::{Fill, Order, Recipe, Source, Target};
use crate::thermo::MAX_PRESSURE_PA;
use crate::units::{self, bar};

#[derive(Debug, Args)]
#[command(after_help = "Give a recipe (a library name, a demo recipe name or a .ron file), or the order with \
                        --mix, --volume, --pressure and --temp.\n\n\
                        Examples:\n  fillwright plan flue-gas-span\n  \
                        fillwright plan pipeline-ng-9 --fill-temp 28C --model pr\n  \
                        fillwright plan --mix \"CO2=15%,N2=balance\" --volume 10L \\\n      \
                        --pressure 150bar --temp 15C --format csv\n  \
                        fillwright plan flue-gas-span --record 2026-12-04-flue-gas-span\n  \
                        fillwright plan - < my-recipe.ron")]
pub struct PlanArgs {
    /// Recipe: a name in the library, a demo recipe name, a path to a .ron file, or `-`
    /// (standard input).
    #[arg(value_name = "RECIPE", conflicts_with = "mix")]
    pub recipe: Option<String>,
    #[command(flatten)]
    pub given: OrderArgs,
    /// Cylinder temperature during the fill: the stop readings are computed for it.
    /// Default: the recipe's fill temperature, or --temp.
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub fill_temp: Option<String>,
    /// Fill order: every source exactly once, comma-separated (pure gases by id, premixes by name).
    #[arg(long, value_name = "ID,ID,…", value_delimiter = ',')]
    pub order: Option<Vec<String>>,
    /// Smallest pressure step the fill gauge resolves; smaller steps are flagged.
    /// Default: the settings file's, else 0.1bar.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub gauge_resolution: Option<String>,
    /// Smallest mass step the scale resolves; smaller additions are flagged.
    /// Default: the settings file's, else 0.1g.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub scale_resolution: Option<String>,
    /// Recipe library folder (default: $FILLWRIGHT_LIBRARY, else the config folder's library/).
    #[arg(long, value_name = "DIR")]
    pub library: Option<std::path::PathBuf>,
    /// Also write the fill sheet as a printable PDF (A4) to FILE (a pipe is written into;
    /// a symbolic link is refused unless --replace-link).
    #[arg(long, value_name = "FILE")]
    pub pdf: Option<std::path::PathBuf>,
    /// Replace a symbolic link at the --pdf path with the file.
    #[arg(long, requires = "pdf")]
    pub replace_link: bool,
    /// The fill record of a fill in progress (its id in the library's records/): the rest
    /// of the fill is re-planned from what it holds and printed after the sheet.
    #[arg(long, value_name = "ID")]
    pub record: Option<String>,
    #[command(flatten)]
    pub common: Common,
}

/// The rest of a fill in progress, re-planned from its record: text and JSON.
fn rest_of_fill(
    args: &PlanArgs,
    plan: &plan::Plan,
    order: &Order,
    catalogue: &Catalogue,
    d: &crate::units::Shown,
) -> Result<Option<(String, Value)>, Refused> {
    let Some(id) = &args.record else { return Ok(None) };
    let dir = config::library_to_open(args.library.as_deref(), false).map_err(Refused)?;
    let library = crate::library::Library::at(&dir)?;
    let opened = library.open_record(id)?;
    let given = args.recipe.as_deref().unwrap_or_default();
    let stem = std::path::Path::new(given).file_stem().and_then(|s| s.to_str()).unwrap_or(given);
    if ![given, stem, order.name.as_str()].contains(&opened.record.recipe.as_str()) {
        return Err(Refused(format!("record {id} is a fill of recipe {:?}, not of {given:?}", opened.record.recipe)));
    }
    let sources = config::config_dir().map(|c| c.join("sources"));
    let s = crate::bench::standing(&opened, plan, order, &library, sources.as_deref(), catalogue).map_err(Refused)?;
    let r = s
        .replan
        .clone()
        .map_err(|e| Refused(format!("record {id}: the rest of the fill cannot be re-planned: {e}")))?;
    let live = crate::bench::live_sheet(plan, Some(&s), None, None);
    let (o, steps) = crate::bench::rest_text(id, &s, &r, &live, plan, catalogue, d);
    let fractions: serde_json::Map<String, Value> = plan
        .gases
        .iter()
        .zip(&r.final_fractions)
        .map(|(&g, x)| (catalogue.gas(g).id().to_string(), json!(x)))
        .collect();
    let v = json!({
        "record": id,
        "weighed": s.weighed,
        "steps": steps,
        "final_fractions": fractions,
        "final_pressure_bar": r.final_pressure_pa / 1e5,
        "on_target": r.on_target,
    });
    Ok(Some((o, v)))
}

/// The order to plan: a recipe (name or file), or the --mix order; and where it came from.
fn read_order(
    args: &PlanArgs,
    catalogue: &Catalogue,
    settings: &crate::settings::Resolved,
) -> Result<(Order, Option<String>), Failure> {
    let (order, origin) = match (&args.recipe, &args.given.mix) {
        (Some(name), _) => {
            let (text, origin) = config::recipe_text(name, args.library.as_deref()).map_err(Refused)?;
            let mut order = Recipe::load(&text, &origin, catalogue)?;
            args.given.apply_before_fill(&mut order, catalogue)?;
            (order, Some(origin))
        }
        (None, Some(_)) => (args.given.order(args.common.ambient_pa(settings)?, catalogue)?, None),
        (None, None) => return Err(Failure::Usage(
            "plan needs a recipe (name or file) or --mix with --volume and --pressure; see `fillwright plan --help`"
                .into(),
        )),
    };
    Ok((order, origin))
}

/// The plan options from the command line, the settings filling in.
fn plan_options(args: &PlanArgs, settings: &crate::settings::Resolved) -> Result<PlanOptions, Failure> {
    let fill_temperature_k = args
        .fill_temp
        .as_deref()
        .map(units::parse_temperature)
        .transpose()
        .map_err(|e| Refused(format!("--fill-temp: {e}")))?;
    let gauge_pa = match &args.gauge_resolution {
        Some(text) => units::parse_pressure(text, 0.0).map_err(|e| Refused(format!("--gauge-resolution: {e}")))?,
        None => settings.gauge_resolution_pa,
    };
    let scale_g = match args.scale_resolution.as_deref().map(units::parse_mass) {
        None => settings.scale_resolution_g,
        Some(Ok(g)) => g,
        Some(Err(e)) => return Err(Refused(format!("--scale-resolution: {e}")).into()),
    };
    let options = PlanOptions {
        default_model: settings.default_model,
        model: args.common.model,
        min_temperature_k: Some(settings.conditions().judged_down_to_k()),
        fill_temperature_k,
        order: args.order.clone(),
        resolutions: Resolutions { gauge_pa, scale_g },
        skip_following: false,
        screening_only: false,
        stage_steps_only: false,
        phase_judge: None,
    };
    Ok(options)
}

pub fn run(args: &PlanArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let settings = config::load_settings().map_err(Refused)?;
    let (order, origin) = read_order(args, &catalogue, &settings)?;
    let ambient = order.ambient_pa;
    let options = plan_options(args, &settings)?;
    let plan = plan::plan(&order, &catalogue, &options).map_err(|e| match &origin {
        Some(o) => Refused(format!("{o}: {e}")),
        None => Refused(e.to_string()),
    })?;
    // The plan is screened as `check` screens it (every check, the same conditions): any
    // finding at stop puts a banner at the top of the sheet and ends in exit status 3.
    let conditions = settings.conditions();
    let findings = checks::screen(&plan, &order, &catalogue, &conditions);
    let rest = rest_of_fill(args, &plan, &order, &catalogue, &settings.shown)?;
    let stops: Vec<&checks::Check> = findings.iter().filter(|c| c.severity == Severity::Stop).collect();
    match args.common.format {
        Format::Json => {
            let mut v = plan_json(&plan, &order, &catalogue);
            if let Some((_, rest)) = &rest {
                v["rest_of_fill"] = rest.clone();
            }
            if let Some(rating) = findings.iter().find(|c| c.id == "pressure-rating") {
                v["rating"] = check_json(rating);
            }
            v["stops"] = Value::Array(stops.iter().map(|c| check_json(c)).collect());
            print_json(&v)
        }
        Format::Csv => out!("{}", steps_csv(&plan)),
        Format::Text => {}
    }
    if args.common.format == Format::Text || args.pdf.is_some() {
        let mut text = String::new();
        if !stops.is_empty() {
            text.push_str(&stop_banner_for(&stops));
        }
        text.push_str(&fill_sheet(&plan, &order, &catalogue, &options.resolutions, ambient, &settings.shown));
        if let Some((rest_text, _)) = &rest {
            text.push_str(rest_text);
        }
        if let Some(path) = &args.pdf {
            let bytes = crate::print::certificate::pdf::render(&text, &format!("Fill sheet {}", order.name));
            crate::library::atomic::write_output(path, &bytes, args.replace_link)
                .map_err(|e| Refused(format!("{}: {e}", path.display())))?;
        }
        // A PDF sent to standard output is the output: the text does not follow it.
        let pdf_is_output = args.pdf.as_deref().is_some_and(crate::library::atomic::is_standard_output);
        if args.common.format == Format::Text && !pdf_is_output {
            out!("{text}");
        }
    }
    if !stops.is_empty() {
        if args.common.format != Format::Text {
            for stop in &stops {
                eprintln!("fillwright: STOP - {}", stop.message);
            }
        }
        return Err(Failure::Findings);
    }
    Ok(())
}

fn check_json(c: &checks::Check) -> Value {
    json!({"id": c.id, "severity": c.severity.key(), "message": c.message, "details": c.details})
}

/// An order given on the command line instead of a recipe.
#[derive(Debug, Clone, Args)]
pub struct OrderArgs {
    /// Target mixture, as for `state`: "CO=500ppm,CO2=15%,N2=balance".
    #[arg(long, value_name = "SPEC", requires_all = ["volume", "pressure"])]
    pub mix: Option<String>,
    /// Cylinder water capacity (with --mix): 10L, 0.05m3.
    #[arg(long, value_name = "V", allow_hyphen_values = true)]
    pub volume: Option<String>,
    /// Final pressure at --temp (with --mix): 150bar, 2200psig.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub pressure: Option<String>,
    /// Temperature at which the final pressure is meant (with --mix); default 15C.
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub temp: Option<String>,
    /// Cylinder working pressure at 15 °C (with --mix), for the rating check.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub working_pressure: Option<String>,
    /// Cylinder test pressure (with --mix): a fill above it is refused.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub test_pressure: Option<String>,
    /// What is in the cylinder before the fill (for a recipe, in place of its own; with
    /// --mix): "evacuated to 0.5mbar", or a heel "N2 at 5bar" / "CO=50ppm,N2=balance at
    /// 3barg, 20C". Default: the recipe's, else evacuated.
    #[arg(long, value_name = "WHAT", allow_hyphen_values = true)]
    pub before_fill: Option<String>,
}

impl OrderArgs {
    /// `--working-pressure` and `--test-pressure`, Pa, where given.
    pub fn ratings(&self, ambient: f64) -> Result<(Option<f64>, Option<f64>), Refused> {
        let rating = |text: &Option<String>, what: &str| -> Result<Option<f64>, Refused> {
            text.as_deref()
                .map(|t| units::parse_pressure(t, ambient))
                .transpose()
                .map_err(|e| Refused(format!("--{what}: {e}")))
        };
        let (working, test) =
            (rating(&self.working_pressure, "working-pressure")?, rating(&self.test_pressure, "test-pressure")?);
        if let (Some(w), Some(t)) = (working, test) {
            if t < w {
                return Err(Refused(format!(
                    "--test-pressure {:.2} bar is below --working-pressure {:.2} bar; a cylinder is tested above its \
                     working pressure (read both from its markings)",
                    bar(t),
                    bar(w)
                )));
            }
        }
        Ok((working, test))
    }

    /// The order, with pure sources for every component.
    pub fn order(&self, ambient: f64, catalogue: &Catalogue) -> Result<Order, Refused> {
        let spec = self.mix.as_deref().unwrap_or_default();
        let parts = mixture::parse_spec(spec, catalogue).map_err(|e| Refused(format!("--mix: {e}")))?;
        let volume = units::parse_volume(self.volume.as_deref().unwrap_or_default())
            .map_err(|e| Refused(format!("--volume: {e}")))?;
        let pressure = units::parse_pressure(self.pressure.as_deref().unwrap_or_default(), ambient)
            .map_err(|e| Refused(format!("--pressure: {e}")))?;
        let t_ref = units::parse_temperature(self.temp.as_deref().unwrap_or("15C"))
            .map_err(|e| Refused(format!("--temp: {e}")))?;
        let (working, test) = self.ratings(ambient)?;
        // A fill above the rating is not refused here: the rating check stops it, with the
        // numbers, in `plan` and `check` alike.
        let (working, test) = (working.unwrap_or(MAX_PRESSURE_PA), test.unwrap_or(MAX_PRESSURE_PA));
        let mut order = build_order(parts, volume, pressure, t_ref, working, test, ambient, catalogue);
        self.apply_before_fill(&mut order, catalogue)?;
        Ok(order)
    }

    /// `--before-fill`, where given, in place of what the order says.
    pub fn apply_before_fill(&self, order: &mut Order, catalogue: &Catalogue) -> Result<(), Refused> {
        let Some(text) = &self.before_fill else { return Ok(()) };
        let before = crate::recipe::BeforeFill::parse_text(text).map_err(|e| Refused(format!("--before-fill: {e}")))?;
        order.before = crate::recipe::resolve_before(
            &before,
            catalogue,
            order.ambient_pa,
            order.test_pressure_pa,
            order.fill_temperature_k,
        )
        .map_err(|(_, e)| Refused(format!("--before-fill: {}", e.trim_start_matches("before_fill: "))))?;
        Ok(())
    }
}

#[allow(clippy::too_many_arguments)]
fn build_order(
    parts: Vec<mixture::Part>,
    volume: f64,
    pressure: f64,
    t_ref: f64,
    working: f64,
    test: f64,
    ambient: f64,
    catalogue: &Catalogue,
) -> Order {
    let composition = Composition::from_parts(&parts);
    let targets: Vec<Target> = parts.iter().map(|p| Target { gas: p.gas, share: p.share, tolerance: None }).collect();
    let balance = targets.iter().position(|t| t.share == mixture::Share::Balance);
    let sources = parts
        .iter()
        .map(|p| Source {
            name: catalogue.gas(p.gas).id().to_string(),
            composition: Composition { gases: vec![p.gas], fractions: vec![1.0] },
            pure: true,
        })
        .collect();
    // A single pure gas: it is its own balance.
    let balance = balance.or((targets.len() == 1).then_some(0));
    Order {
        name: composition.describe(catalogue),
        description: String::new(),
        order: String::new(),
        targets,
        balance,
        composition,
        volume_m3: volume,
        working_pressure_pa: working,
        test_pressure_pa: test,
        tare_g: None,
        serial: None,
        fill: Fill::PressurePa(pressure),
        reference_temperature_k: t_ref,
        fill_temperature_k: t_ref,
        ambient_pa: ambient,
        before: crate::recipe::Before::Evacuated { residual_pa: 0.0 },
        model: None,
        sources,
        fill_order: Vec::new(),
        notes: String::new(),
    }
}

fn id(catalogue: &Catalogue, g: usize) -> &str {
    catalogue.gas(g).id()
}

/// The plan as JSON (INTERFACE.md keys, plus the comparison and proposals).
pub fn plan_json(plan: &Plan, order: &Order, catalogue: &Catalogue) -> Value {
    let t = &plan.totals;
    json!({
        "model": plan.model.key(),
        "recipe": order.name,
        "final": {
            "pressure_bar": bar(t.pressure_pa),
            "temperature_k": t.temperature_k,
            "amount_mol": t.amount_mol,
            "mass_g": t.mass_g,
            "z": t.z,
            "density_g_per_l": t.density_g_per_l,
            "volume_at_reference_m3": t.volume_at_reference_m3,
        },
        "components": plan.components.iter().map(|c| json!({
            "id": id(catalogue, c.gas),
            "mole_fraction": c.mole_fraction,
            "amount_mol": c.amount_mol,
            "mass_g": c.mass_g,
            "partial_pressure_bar": bar(c.partial_pressure_pa),
            "alone_pressure_bar": c.alone_pressure_pa.map(bar),
            "tolerance": c.tolerance,
        })).collect::<Vec<_>>(),
        "steps": plan.steps.iter().map(|s| json!({
            "source": s.source,
            "add_amount_mol": s.add_amount_mol,
            "add_mass_g": s.add_mass_g,
            "scale_reading_g": s.scale_reading_g,
            "pressure_after_bar": bar(s.pressure_after_pa),
            "gauge_after_bar": bar(s.pressure_after_pa - plan.ambient_pa),
            "increment_bar": bar(s.increment_pa),
            "temperature_k": s.temperature_k,
            "flags": s.flags.iter().map(|f| f.key()).collect::<Vec<_>>(),
        })).collect::<Vec<_>>(),
        "fill_by": if plan.by_mass { "mass" } else { "pressure" },
        "models": plan.models.iter().map(|m| match &m.result {
            Ok(f) => json!({
                "model": m.model.key(),
                "amount_mol": f.amount_mol,
                "z": f.z,
                "step_pressures_bar": f.step_pressures_pa.iter().map(|p| bar(*p)).collect::<Vec<_>>(),
            }),
            Err(e) => json!({"model": m.model.key(), "error": e}),
        }).collect::<Vec<_>>(),
        "following": following_json(plan, catalogue),
        "premixes": premixes_json(plan, catalogue),
        "heel": plan.heel.as_ref().map(|h| json!({
            "amount_mol": h.amounts_mol.iter().sum::<f64>(),
            "mass_g": h.mass_g,
            "pressure_at_fill_bar": bar(h.pressure_at_fill_pa),
            "components": plan.gases.iter().zip(&h.amounts_mol).filter(|(_, n)| **n > 0.0).map(|(&g, n)| json!({
                "id": id(catalogue, g),
                "amount_mol": n,
            })).collect::<Vec<_>>(),
        })),
        "notes": plan.notes,
    })
}

/// The composition error of stopping at each model's readings, as JSON.
fn following_json(plan: &Plan, catalogue: &Catalogue) -> Vec<Value> {
    plan.following
        .iter()
        .map(|f| {
            json!({
                "truth": f.truth.key(),
                "rows": f.rows.iter().map(|r| json!({
                    "targets_of": r.targets_of.key(),
                    "composition": plan.gases.iter().enumerate().map(|(i, &g)| json!({
                        "id": id(catalogue, g),
                        "mole_fraction": r.fractions[i],
                        "relative_error_percent": r.relative_error_percent[i],
                        "out_of_tolerance": r.out_of_tolerance[i],
                    })).collect::<Vec<_>>(),
                })).collect::<Vec<_>>(),
            })
        })
        .collect()
}

/// The premix cascades proposed, each stage with its own plan, as JSON.
fn premixes_json(plan: &Plan, catalogue: &Catalogue) -> Vec<Value> {
    plan.premixes
        .iter()
        .map(|p| {
            json!({
                "step": p.step + 1,
                "gas": id(catalogue, p.gas),
                "steps": p.steps().iter().map(|s| s + 1).collect::<Vec<_>>(),
                "gases": p.gases().iter().map(|&g| id(catalogue, g)).collect::<Vec<_>>(),
                "why": p.why,
                "mix": p.last().spec,
                "name": p.last().name,
                "complete": p.complete(),
                "stages": p.stages.iter().map(|st| json!({
                    "name": st.name,
                    "recipe_name": st.recipe_name,
                    "mix": st.spec,
                    "mole_fraction": st.fraction,
                    "needed_mol": st.needed_mol,
                    "needed_g": st.needed_g,
                    "fill_pressure_bar": bar(st.fill_pressure_pa),
                    "plan": match &st.plan {
                        Ok(inner) => plan_json(inner, &st.order, catalogue),
                        Err(e) => json!({"error": e}),
                    },
                })).collect::<Vec<_>>(),
            })
        })
        .collect::<Vec<_>>()
}

/// The steps as CSV.
pub fn steps_csv(plan: &Plan) -> String {
    let mut s = String::from(
        "step,source,add_amount_mol,add_mass_g,scale_reading_g,pressure_after_bar,gauge_after_bar,increment_bar,temperature_k,flags\n",
    );
    for (i, st) in plan.steps.iter().enumerate() {
        let source = super::csv_field(&st.source);
        s.push_str(&format!(
            "{},{},{},{},{},{},{},{},{},{}\n",
            i + 1,
            source,
            st.add_amount_mol,
            st.add_mass_g,
            st.scale_reading_g,
            bar(st.pressure_after_pa),
            bar(st.pressure_after_pa - plan.ambient_pa),
            bar(st.increment_pa),
            st.temperature_k,
            st.flags.iter().map(|f| f.key()).collect::<Vec<_>>().join(" "),
        ));
    }
    s
}
