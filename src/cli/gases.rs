//! `fillwright gases`: the catalogue with its constants and sources.

use clap::Args;
use serde_json::json;

use super::{csv_field, print_json, Failure, Format, Refused};
use crate::config;
use crate::gas::Catalogue;
use crate::thermo::{gerg, multifluid};
use crate::units::bar;

/// Which model carries a gas at reference quality: ("gerg" | "multi", the reference
/// equation of state in the multi-fluid model if it has one, the short mark of the text
/// table).
fn reference_of(id: &str) -> (&'static str, Option<(&'static str, &'static str)>, &'static str) {
    let equation = multifluid::reference_equation(id);
    match (gerg::covers(id), equation) {
        (true, _) => ("gerg", equation, "gerg"),
        (false, Some(_)) => ("multi", equation, "eos"),
        (false, None) => ("multi", None, "cub"),
    }
}

#[derive(Debug, Args)]
pub struct GasesArgs {
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
}

pub fn run(args: &GasesArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    match args.format {
        Format::Json => print_json_list(&catalogue),
        Format::Csv => print_csv(&catalogue),
        Format::Text => print_text(&catalogue),
    }
    Ok(())
}

/// Every gas with its constants and their sources, as JSON.
fn print_json_list(catalogue: &Catalogue) {
    let gases: Vec<serde_json::Value> = catalogue
        .gases()
        .iter()
        .map(|g| {
            let r = &g.record;
            json!({
                "id": r.id, "name": r.name, "cas": r.cas, "formula": r.formula,
                "molar_mass_g_per_mol": g.molar_mass_g_per_mol,
                "critical_temperature_k": r.critical_temperature_k,
                "critical_pressure_bar": bar(r.critical_pressure_pa),
                "acentric_factor": r.acentric_factor,
                "normal_boiling_point_k": r.normal_boiling_point_k,
                "gerg": gerg::covers(&r.id),
                "reference": {
                    "model": reference_of(&r.id).0,
                    "equation": reference_of(&r.id).1.map(|(file, source)| json!({"fluid": file, "source": source})),
                    "quality": if reference_of(&r.id).1.is_some() || gerg::covers(&r.id) { "reference" } else { "estimate" },
                },
                "van_der_waals_a_bar_l2_per_mol2": r.van_der_waals.as_ref().map(|v| v.a_bar_l2_per_mol2),
                "van_der_waals_b_l_per_mol": r.van_der_waals.as_ref().map(|v| v.b_l_per_mol),
                "sources": {
                    "critical": catalogue.reference(&r.critical_source),
                    "acentric": catalogue.reference(&r.acentric_source),
                    "boiling": catalogue.reference(&r.boiling_source),
                    "vapour_pressure": catalogue.reference(r.vapour_pressure.source()),
                    "van_der_waals": r.van_der_waals.as_ref().and_then(|v| catalogue.reference(&v.source)),
                },
            })
        })
        .collect();
    print_json(&json!({ "gases": gases }));
}

/// One row per gas.
fn print_csv(catalogue: &Catalogue) {
    outln!("id,name,cas,molar_mass_g_per_mol,critical_temperature_k,critical_pressure_bar,acentric_factor,normal_boiling_point_k,gerg,reference_model,reference_equation");
    for g in catalogue.gases() {
        let r = &g.record;
        let (model, equation, _) = reference_of(&r.id);
        outln!(
            "{},{},{},{},{},{},{},{},{},{},{}",
            csv_field(&r.id),
            csv_field(&r.name),
            csv_field(&r.cas),
            g.molar_mass_g_per_mol,
            r.critical_temperature_k,
            bar(r.critical_pressure_pa),
            r.acentric_factor,
            r.normal_boiling_point_k,
            gerg::covers(&r.id),
            model,
            csv_field(equation.map_or("", |e| e.1))
        );
    }
}

/// The table within 80 columns, and what its marks mean.
fn print_text(catalogue: &Catalogue) {
    // 80 columns: long names are cut (the JSON and CSV have them whole).
    outln!(
        "{:<9} {:<12} {:<11} {:>7} {:>7} {:>6} {:>6} {:>6} ref",
        "id",
        "name",
        "CAS",
        "M g/mol",
        "Tc K",
        "Pc bar",
        "ω",
        "Tb K"
    );
    for g in catalogue.gases() {
        let r = &g.record;
        let mark = format!("{}{}", reference_of(&r.id).2, if r.van_der_waals.is_some() { " v" } else { "" });
        outln!(
            "{:<9} {:<12} {:<11} {:>7.3} {:>7.2} {:>6.2} {:>6.3} {:>6.1} {}",
            r.id,
            crate::ron_format::clip(&r.name, 12),
            r.cas,
            g.molar_mass_g_per_mol,
            r.critical_temperature_k,
            bar(r.critical_pressure_pa),
            r.acentric_factor,
            r.normal_boiling_point_k,
            mark
        );
    }
    outln!();
    outln!("{} gases, every one under the cubic and multi-fluid models. ref: the model", catalogue.gases().len());
    outln!("that carries the gas at reference quality: gerg GERG-2008; eos its reference");
    outln!("equation of state in the multi-fluid model (--model multi); cub Peng-Robinson's");
    outln!("form inside the multi-fluid model, an estimate. v: tabulated van der Waals a");
    outln!("and b. The source of every value: `fillwright gases --format json`.");
}
