//! `fillwright state`: one gas state, solved under the chosen model and compared with the others.

use clap::Args;

use super::{choose_model, print_json, Common, Failure, Format, Refused};
use crate::config;
use crate::mixture::Composition;
use crate::print::state as report;
use crate::state::{solve, Given, Solved, Unknown};
use crate::thermo::{Fluid, Model, ThermoError};
use crate::units;

#[derive(Debug, Args)]
#[command(after_help = "Give two of --volume, --pressure and --amount; the third is solved.\n\n\
                  Examples:\n  \
                  fillwright state --mix \"CO2=15%,N2=balance\" --temp 15C \\\n      \
                  --volume 10L --pressure 150bar\n  \
                  fillwright state --mix CH4 --temp 288.15K --volume 50L --amount 8kg \\\n      \
                  --model pr --format json")]
pub struct StateArgs {
    /// Mixture: GAS=AMOUNT pairs separated by commas, amounts in ppb, ppm, % or a bare mole
    /// fraction, at most one GAS=balance; or a single pure gas. E.g. "CO=500ppm,CO2=15%,N2=balance".
    #[arg(long, value_name = "SPEC")]
    pub mix: String,
    /// Temperature of the gas: 15C, 288.15K or 59F.
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub temp: String,
    /// Volume of the gas (the cylinder's water capacity): 10L, 0.05m3, 500mL.
    #[arg(long, value_name = "V", allow_hyphen_values = true)]
    pub volume: Option<String>,
    /// Pressure: absolute (150bar, 15MPa, 2200psi, 1atm) or gauge (barg, psig, kPag, relative to --ambient).
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub pressure: Option<String>,
    /// Amount of gas: in mol (12mol, 5mmol, 0.1kmol) or as a mass (500g, 0.5kg).
    #[arg(long, value_name = "N", allow_hyphen_values = true)]
    pub amount: Option<String>,
    #[command(flatten)]
    pub common: Common,
}

pub fn run(args: &StateArgs) -> Result<(), Failure> {
    let given_count =
        [args.volume.is_some(), args.pressure.is_some(), args.amount.is_some()].iter().filter(|b| **b).count();
    if given_count != 2 {
        return Err(Failure::Usage(format!(
            "state needs exactly two of --volume, --pressure and --amount (got {given_count}); the third is solved"
        )));
    }
    let unknown = if args.pressure.is_none() {
        Unknown::Pressure
    } else if args.volume.is_none() {
        Unknown::Volume
    } else {
        Unknown::Amount
    };
    if args.common.format == Format::Csv {
        return Err(Failure::Usage("state prints one state: use --format text or json".into()));
    }
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let settings = config::load_settings().map_err(Refused)?;
    let ambient = args.common.ambient_pa(&settings)?;
    let composition = Composition::from_spec(&args.mix, &catalogue).map_err(|e| Refused(format!("--mix: {e}")))?;
    let given = read_given(args, ambient)?;
    let model = choose_model(args.common.model, &composition, &catalogue, &settings);
    let x = &composition.fractions;
    let fluid_of = |m: Model| Fluid::new(&catalogue, &composition.gases, m);
    let chosen = solve(&fluid_of(model)?, x, &given, unknown).map_err(|e| {
        // Name what was given: the state the model could not reach.
        let mut at = vec![format!("--temp {}", args.temp.trim())];
        for (option, value) in [("--pressure", &args.pressure), ("--volume", &args.volume), ("--amount", &args.amount)]
        {
            if let Some(v) = value {
                at.push(format!("{option} {}", v.trim()));
            }
        }
        Refused(format!("no {} from {}: {e}", unknown.name(), at.join(", ")))
    })?;
    let others: Vec<(Model, Result<Solved, ThermoError>)> = Model::ALL
        .iter()
        .filter(|&&m| m != model)
        .map(|&m| (m, fluid_of(m).and_then(|f| solve(&f, x, &given, unknown))))
        .collect();

    let ids: Vec<&str> = composition.gases.iter().map(|&g| catalogue.gas(g).id()).collect();
    let reference = crate::plan::reference_model(&composition.gases, &catalogue);
    let answers = report::Answers { unknown, chosen: &chosen, others: &others, reference };
    match args.common.format {
        Format::Json => print_json(&report::json(&given, &answers, &ids, x)),
        Format::Text | Format::Csv => {
            out!("{}", report::text(&composition.describe(&catalogue), &given, ambient, &answers, &settings.shown))
        }
    }
    Ok(())
}

/// The state's options read into numbers.
fn read_given(args: &StateArgs, ambient: f64) -> Result<Given, Refused> {
    Ok(Given {
        t_k: units::parse_temperature(&args.temp).map_err(|e| Refused(format!("--temp: {e}")))?,
        p_pa: args
            .pressure
            .as_deref()
            .map(|p| units::parse_pressure(p, ambient))
            .transpose()
            .map_err(|e| Refused(format!("--pressure: {e}")))?,
        volume_m3: args
            .volume
            .as_deref()
            .map(units::parse_volume)
            .transpose()
            .map_err(|e| Refused(format!("--volume: {e}")))?,
        amount: args
            .amount
            .as_deref()
            .map(units::parse_amount)
            .transpose()
            .map_err(|e| Refused(format!("--amount: {e}")))?,
    })
}
