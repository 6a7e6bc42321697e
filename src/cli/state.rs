//! `fillwright state`: one gas state, solved under the chosen model and compared with the others.

use clap::Args;
use serde_json::json;

use super::{choose_model, print_json, Common, Failure, Format, Refused};
use crate::config;
use crate::mixture::Composition;
use crate::thermo::phases::Phase;
use crate::thermo::{Fluid, Model, ThermoError};
use crate::units::{self, bar, litres, AmountInput, Shown, Sig, R};

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

/// Which quantity the user left out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Unknown {
    Pressure,
    Volume,
    Amount,
}

impl Unknown {
    fn name(self) -> &'static str {
        match self {
            Unknown::Pressure => "pressure",
            Unknown::Volume => "volume",
            Unknown::Amount => "amount",
        }
    }
}

/// What the user gave, in SI.
struct Given {
    t_k: f64,
    p_pa: Option<f64>,
    volume_m3: Option<f64>,
    amount: Option<AmountInput>,
}

/// A solved state.
#[derive(Debug, Clone)]
struct Solved {
    model: Model,
    p_pa: f64,
    volume_m3: f64,
    amount_mol: f64,
    z: f64,
    mass_g: f64,
    phase: Phase,
    /// Fraction of the amount that is liquid.
    liquid_fraction: f64,
    /// The model that judged the phase (the fluid's own, or the Peng–Robinson screen).
    judged_by: Model,
}

impl Solved {
    fn value(&self, unknown: Unknown) -> f64 {
        match unknown {
            Unknown::Pressure => self.p_pa,
            Unknown::Volume => self.volume_m3,
            Unknown::Amount => self.amount_mol,
        }
    }
}

fn solve(fluid: &Fluid, x: &[f64], given: &Given, unknown: Unknown) -> Result<Solved, ThermoError> {
    let molar_mass = fluid.molar_mass(x);
    let moles = |a: AmountInput| match a {
        AmountInput::Moles(n) => n,
        AmountInput::Grams(m) => m / molar_mass,
    };
    let t = given.t_k;
    // The equilibrium state: where gas and liquid coexist, the pressure is their common
    // one and the volume holds both.
    let (e, v, n) = match unknown {
        Unknown::Pressure => {
            let v = given.volume_m3.unwrap_or_default();
            let n = given.amount.map(moles).unwrap_or_default();
            let amounts: Vec<f64> = x.iter().map(|xi| xi * n).collect();
            (fluid.equilibrium_tv(t, v, &amounts)?, v, n)
        }
        Unknown::Volume => {
            let p = given.p_pa.unwrap_or_default();
            let n = given.amount.map(moles).unwrap_or_default();
            let e = fluid.equilibrium_tp(t, p, x)?;
            let v = n * e.molar_volume_m3;
            if !(v.is_finite() && v > 0.0) {
                return Err(ThermoError::Amount(n));
            }
            (e, v, n)
        }
        Unknown::Amount => {
            let p = given.p_pa.unwrap_or_default();
            let v = given.volume_m3.unwrap_or_default();
            if !(v.is_finite() && v > 0.0) {
                return Err(ThermoError::Volume(v * 1e3));
            }
            let e = fluid.equilibrium_tp(t, p, x)?;
            (e.clone(), v, v / e.molar_volume_m3)
        }
    };
    let p = e.pressure_pa;
    Ok(Solved {
        model: fluid.model(),
        p_pa: p,
        volume_m3: v,
        amount_mol: n,
        z: p * v / (n * R * t),
        mass_g: n * molar_mass,
        phase: e.phase,
        liquid_fraction: e.liquid_fraction,
        judged_by: e.judged_by,
    })
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
    match args.common.format {
        Format::Json => print_json(&state_json(&given, unknown, &chosen, &others, &ids, x)),
        Format::Text | Format::Csv => {
            print_text(&composition.describe(&catalogue), &given, ambient, unknown, &chosen, &others, &settings.shown)
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

/// The state as JSON, with every other model's answer for comparison.
fn state_json(
    given: &Given,
    unknown: Unknown,
    chosen: &Solved,
    others: &[(Model, Result<Solved, ThermoError>)],
    ids: &[&str],
    x: &[f64],
) -> serde_json::Value {
    let comparison: Vec<serde_json::Value> = others
        .iter()
        .map(|(m, r)| match r {
            Ok(s) => json!({
                "model": m.key(),
                "value": si_to_output(unknown, s.value(unknown)),
                "z": s.z,
                "difference_percent": percent(s.value(unknown), chosen.value(unknown)),
            }),
            Err(e) => json!({"model": m.key(), "error": e.to_string()}),
        })
        .collect();
    json!({
        "model": chosen.model.key(),
        "temperature_k": given.t_k,
        "pressure_bar": bar(chosen.p_pa),
        "volume_l": litres(chosen.volume_m3),
        "amount_mol": chosen.amount_mol,
        "z": chosen.z,
        "mass_g": chosen.mass_g,
        "solved": unknown.name(),
        "phase": chosen.phase.key(),
        "liquid_fraction": chosen.liquid_fraction,
        "liquid_amount_mol": chosen.liquid_fraction * chosen.amount_mol,
        "vapour_amount_mol": (1.0 - chosen.liquid_fraction) * chosen.amount_mol,
        "phase_judged_by": chosen.judged_by.key(),
        "near_condensation": chosen.phase != Phase::Supercritical && chosen.phase != Phase::Gas,
        "liquid_like": chosen.phase == Phase::Liquid,
        "components": ids.iter().zip(x).map(|(id, xi)| json!({"id": id, "mole_fraction": xi})).collect::<Vec<_>>(),
        "comparison": comparison,
    })
}

/// The solved quantity in the output units: bar, L or mol.
fn si_to_output(unknown: Unknown, v: f64) -> f64 {
    match unknown {
        Unknown::Pressure => bar(v),
        Unknown::Volume => litres(v),
        Unknown::Amount => v,
    }
}

fn percent(value: f64, reference: f64) -> f64 {
    (value / reference - 1.0) * 100.0
}

fn print_text(
    mix: &str,
    given: &Given,
    ambient_pa: f64,
    unknown: Unknown,
    s: &Solved,
    others: &[(Model, Result<Solved, ThermoError>)],
    d: &Shown,
) {
    let mark = |u: Unknown| if u == unknown { "  <- solved" } else { "" };
    outln!("State of {mix}");
    outln!("model: {} ({})", s.model.title(), s.model.key());
    outln!();
    outln!("  temperature  {:>12} {:<4} {:>10} K", Sig(d.t(given.t_k), 5), d.tu(), Sig(given.t_k, 6));
    outln!(
        "  pressure     {:>12} {u:<4} {:>10} {u} gauge{}",
        Sig(d.p(s.p_pa), 6),
        Sig(d.p(s.p_pa - ambient_pa), 6),
        mark(Unknown::Pressure),
        u = d.pu()
    );
    outln!("  volume       {:>12} L{}", Sig(litres(s.volume_m3), 6), mark(Unknown::Volume));
    outln!("  amount       {:>12} mol{}", Sig(s.amount_mol, 6), mark(Unknown::Amount));
    outln!("  mass         {:>12} g", Sig(s.mass_g, 6));
    outln!("  Z            {:>12.5}", s.z);
    outln!("  density      {:>12} g/L", Sig(s.mass_g / litres(s.volume_m3), 5));
    outln!(
        "  phase        {:>12}{}",
        s.phase.key(),
        if s.judged_by != s.model { format!("  (judged by {})", s.judged_by.key()) } else { String::new() }
    );
    match s.phase {
        Phase::TwoPhase => {
            outln!();
            outln!(
                "  ! Gas and liquid together: {} mol liquid and {} mol vapour ({:.1} % liquid).",
                Sig(s.liquid_fraction * s.amount_mol, 4),
                Sig((1.0 - s.liquid_fraction) * s.amount_mol, 4),
                s.liquid_fraction * 100.0
            );
            outln!("    The pressure is the vapour pressure of the contents: adding gas makes more");
            outln!("    liquid, not more pressure.");
        }
        Phase::Liquid => {
            outln!();
            outln!("  ! Liquid: the contents are a liquid at this state, not a gas.");
        }
        Phase::Gas | Phase::Supercritical => {}
    }
    outln!();
    let unit = match unknown {
        Unknown::Pressure => d.pu(),
        Unknown::Volume => "L",
        Unknown::Amount => "mol",
    };
    outln!(
        "  {:<22} {:>12} {:>9} {:>10}",
        "other models",
        format!("{} {unit}", unknown.name()),
        "Z",
        format!("vs {}", s.model.key())
    );
    for (m, r) in others {
        match r {
            Ok(o) => outln!(
                "  {:<22} {:>12} {:>9} {:>9}%",
                m.title(),
                Sig(
                    if unknown == Unknown::Pressure { d.p(o.p_pa) } else { si_to_output(unknown, o.value(unknown)) },
                    6
                )
                .to_string(),
                format!("{:.5}", o.z),
                crate::units::signed(percent(o.value(unknown), s.value(unknown)), 3)
            ),
            Err(e) => outln!("  {:<22} {}", m.title(), short_reason(e)),
        }
    }
}

fn short_reason(e: &ThermoError) -> String {
    match e {
        ThermoError::NotCovered(ids) => format!("does not cover {}", ids.join(", ")),
        other => other.to_string(),
    }
}
