//! Could anything condense in the cylinder between the lowest storage temperature and the
//! reference temperature?
//!
//! Two levels: the conservative rule (each component's partial pressure against its
//! vapour pressure at the lowest storage temperature) and the equation of state (phase
//! stability of the cylinder content along its isochore, the cricondentherm, and the
//! pressure range at the lowest storage temperature in which liquid forms).

use std::fmt::Write as _;

use serde_json::{json, Map, Value};

use super::phase::PhaseFluid;
use super::{phase_model, Check, Conditions, Severity, CUBIC_FORM_MARGIN_K};
use crate::gas::vapour_pressure::ice_sublimation_pa;
use crate::gas::Catalogue;
use crate::plan::{Plan, StepFlag};
use crate::recipe::Order;
use crate::thermo::{Fluid, Model, MAX_PRESSURE_PA};
use crate::units::{bar, celsius};

/// The vapour pressure of gas `g` at `t_k` and where it comes from: the catalogue's
/// correlation in its range; below it, for water, the sublimation pressure of ice (IAPWS
/// R14-08); for any other gas, the Peng–Robinson saturation pressure. None above the
/// critical temperature.
pub fn vapour_pressure(catalogue: &Catalogue, g: usize, t_k: f64) -> Option<(f64, &'static str)> {
    let gas = catalogue.gas(g);
    if t_k >= gas.tc_k() {
        return None;
    }
    if let Some(p) = gas.vapour_pressure_pa(t_k) {
        return Some((p, "catalogue correlation"));
    }
    if gas.id() == "H2O" {
        if let Some(p) = ice_sublimation_pa(t_k) {
            return Some((p, "over ice, IAPWS R14-08 sublimation pressure"));
        }
    }
    let pr = Fluid::new(catalogue, &[g], Model::Pr).ok()?;
    let s = pr.saturation(t_k, &[1.0]).ok()??;
    Some((s.pressure_pa, "below the correlation's range: Peng–Robinson saturation pressure"))
}

/// The condensation check, judged by `judge` (None: the blend's reference equations). A
/// judge other than the reference gives an estimate: the message says so.
pub fn check(plan: &Plan, order: &Order, catalogue: &Catalogue, c: &Conditions, judge: Option<Model>) -> Check {
    match run(plan, order, catalogue, c, judge) {
        Ok(check) => check,
        Err(e) => Check {
            id: "condensation",
            severity: Severity::Caution,
            message: format!(
                "the condensation check could not be completed: {e}; treat the mixture as able to condense"
            ),
            details: Vec::new(),
            data: Map::from_iter([("cricondentherm_k".to_string(), Value::Null)]),
        },
    }
}

fn run(
    plan: &Plan,
    order: &Order,
    catalogue: &Catalogue,
    c: &Conditions,
    judge: Option<Model>,
) -> Result<Check, String> {
    let t_min = c.min_temperature_k;
    let present: Vec<usize> = (0..plan.gases.len()).filter(|&i| plan.components[i].mole_fraction > 0.0).collect();
    let gases: Vec<usize> = present.iter().map(|&i| plan.gases[i]).collect();
    let z: Vec<f64> = present.iter().map(|&i| plan.components[i].mole_fraction).collect();
    let amounts: Vec<f64> = present.iter().map(|&i| plan.components[i].amount_mol).collect();
    let reference = phase_model(&gases, catalogue);
    let model = judge.unwrap_or(reference);
    let fluid = Fluid::new(catalogue, &gases, model).map_err(|e| e.to_string())?;
    let p_at_min = fluid.pressure(t_min, order.volume_m3, &amounts).map_err(|e| e.to_string())?;

    let rule = conservative_rule(catalogue, &gases, &z, p_at_min, c);
    let mut details = rule.details;
    let mut data = Map::new();
    data.insert("model".into(), json!(model.key()));
    data.insert("rule".into(), Value::Array(rule.rows));
    if !rule.any_condensable {
        data.insert("cricondentherm_k".into(), Value::Null);
        return Ok(Check {
            id: "condensation",
            severity: Severity::Ok,
            message: format!("no component can condense: every critical temperature is below {:.1} °C", celsius(t_min)),
            details,
            data,
        });
    }

    // A gas on Peng–Robinson's form brings that equation's error: the larger margin.
    let cubic_form: Vec<String> = fluid.multifluid().map_or(Vec::new(), |m| m.estimated().0.to_vec());
    let widened = Conditions { margin_k: c.margin_k.max(CUBIC_FORM_MARGIN_K), ..*c };
    let c = if cubic_form.is_empty() { c } else { &widened };
    if !cubic_form.is_empty() {
        details.push(format!(
            "{} has no reference equation here (its share is Peng-Robinson's): margin {:.1} K",
            cubic_form.join(", "),
            c.margin_k
        ));
    }
    let found = envelope(&fluid, catalogue, &gases, order, (&z, &amounts), c, (&mut details, &mut data))?;
    insert_found(&mut data, &found, c);
    details.extend(found_details(&found, model, c, order.reference_temperature_k));
    // Every step of the plan: liquid from what is in the cylinder after it.
    let (flagged, cooled) = steps_flagged(plan);
    for f in &flagged {
        details.push(format!(
            "{f}: liquid forms from what is in the cylinder after it, at the fill temperature or on cooling: its reading \
             lies above the dew pressure"
        ));
    }
    data.insert("steps_above_dew_point".into(), json!(flagged));
    data.insert("steps_condensing_if_cooled".into(), json!(cooled));
    let (severity, mut message) = verdict(&found, rule.exceeded, &flagged, &cooled, c);
    if model != reference {
        let _ = write!(message, " ({} estimate: the reference equations' verdict follows)", model.title());
        data.insert("phases_estimated".into(), json!(true));
    }
    Ok(Check { id: "condensation", severity, message, details, data })
}

/// What the equation of state finds, under each usual estimate for the pairs without
/// published parameters; the more condensing (the higher cricondentherm) judges, and the
/// details say so.
fn envelope(
    fluid: &Fluid,
    catalogue: &Catalogue,
    gases: &[usize],
    order: &Order,
    (z, amounts): (&[f64], &[f64]),
    c: &Conditions,
    (details, data): (&mut Vec<String>, &mut Map<String, Value>),
) -> Result<Found, String> {
    let mut judged = Vec::new();
    for judge in fluid.phase_judges(catalogue, gases) {
        judged.push(by_the_equation_of_state(&judge, order, z, amounts, c)?);
    }
    let ct_of = |f: &Found| f.ct.map_or(f64::NEG_INFINITY, |(t, _)| t);
    if let [linear, lorentz] = &judged[..] {
        let pairs: Vec<String> = fluid
            .multifluid()
            .map_or(Vec::new(), |m| m.estimated().1.iter().map(|(a, b)| format!("{a}-{b}")).collect());
        let shown = |f: &Found| f.ct.map_or("none".to_string(), |(t, _)| format!("{t:.2} K"));
        details.push(format!(
            "no published parameters for {}: judged with the more condensing of the two usual estimates \
             (cricondentherm {} linear, {} Lorentz-Berthelot)",
            pairs.join(", "),
            shown(linear),
            shown(lorentz)
        ));
        data.insert(
            "estimate".into(),
            json!(if ct_of(lorentz) > ct_of(linear) { "lorentz-berthelot" } else { "linear" }),
        );
    }
    judged.into_iter().max_by(|a, b| ct_of(a).total_cmp(&ct_of(b))).ok_or_else(|| "no envelope".to_string())
}

/// The conservative rule: each condensable component's partial pressure at the lowest
/// storage temperature against its vapour pressure there.
struct Rule {
    details: Vec<String>,
    rows: Vec<Value>,
    exceeded: bool,
    /// Some component's critical temperature lies above the judged temperature.
    any_condensable: bool,
}

fn conservative_rule(catalogue: &Catalogue, gases: &[usize], z: &[f64], p_at_min: f64, c: &Conditions) -> Rule {
    let t_min = c.min_temperature_k;
    let mut rule = Rule { details: Vec::new(), rows: Vec::new(), exceeded: false, any_condensable: false };
    for (k, &g) in gases.iter().enumerate() {
        let gas = catalogue.gas(g);
        if gas.tc_k() <= c.judged_down_to_k() {
            continue;
        }
        rule.any_condensable = true;
        let p_i = z[k] * p_at_min;
        match vapour_pressure(catalogue, g, t_min) {
            Some((p_sat, how)) => {
                let ratio = p_i / p_sat;
                rule.exceeded |= ratio > 1.0;
                rule.details.push(format!(
                    "{}: partial pressure {:.3} bar at {:.1} °C against vapour pressure {:.4} bar ({:.0} % of it; {how})",
                    gas.id(),
                    bar(p_i),
                    celsius(t_min),
                    bar(p_sat),
                    ratio * 100.0
                ));
                rule.rows.push(json!({"id": gas.id(), "partial_pressure_bar": bar(p_i), "vapour_pressure_bar": bar(p_sat), "ratio": ratio, "vapour_pressure_from": how}));
            }
            None => {
                rule.details.push(format!(
                    "{}: no vapour pressure at {:.1} °C (neither the correlation nor the equation of state gives \
                     one); judged by the equation of state alone",
                    gas.id(),
                    celsius(t_min)
                ));
                rule.rows.push(json!({"id": gas.id(), "partial_pressure_bar": bar(p_i), "vapour_pressure_bar": null}));
            }
        }
    }
    rule
}

/// What the equation of state finds for the blend.
struct Found {
    /// The cricondentherm and its pressure.
    ct: Option<(f64, f64)>,
    /// The first temperature (and pressure) on the isochore where the contents split.
    splits_at: Option<(f64, f64)>,
    /// The pressures at the judged temperature in which liquid forms.
    range: Option<(f64, f64)>,
    /// The range reaches the highest pressure searched.
    capped: bool,
    /// The fills (settled at the reference temperature) whose isochores cross that range.
    fill_range: Option<(f64, Option<f64>)>,
    t_low: f64,
}

fn by_the_equation_of_state(
    fluid: &Fluid,
    order: &Order,
    z: &[f64],
    amounts: &[f64],
    c: &Conditions,
) -> Result<Found, String> {
    let t_ref = order.reference_temperature_k;
    let phase = PhaseFluid::new(fluid);
    // The equation of state is asked down to the lowest storage temperature less the
    // margin: liquid is assumed wherever the model's dew point plus the margin reaches it.
    let t_low = c.judged_down_to_k();
    // A gas whose critical temperature is below half the judged one (He, H2, Ne) does not
    // pull the floor down to half of it: the walk down to a few kelvin under the reference
    // equations cost a second for a helium blend and finds nothing the verdict uses.
    let lowest_tc = phase.tc.iter().copied().filter(|tc| *tc > 0.5 * t_low).fold(f64::INFINITY, f64::min);
    let t_floor = 0.5 * t_low.min(lowest_tc);
    // The whole envelope, up to its cricondenbar or 1000 bar: nothing here depends on the
    // fill pressure.
    let p_search = MAX_PRESSURE_PA;
    let ct = phase.cricondentherm(z, t_floor, p_search).map_err(|e| e.to_string())?;
    // Along the isochore from the judged temperature up to the reference: the first
    // temperature where the contents split. Above the cricondentherm they are one phase at
    // any pressure, so only the temperatures up to it (and 1 K more, for the envelope's own
    // tolerance) are tested; none where the blend has no dew point at all.
    let top = ct.map_or(f64::NEG_INFINITY, |(t, _)| t + 1.0);
    let mut splits_at = None;
    for k in 0..=6 {
        let t = t_low + (t_ref.max(t_low) - t_low) * k as f64 / 6.0;
        if t > top {
            break;
        }
        if fluid.condensed_tv(t, order.volume_m3, amounts).map_err(|e| e.to_string())? {
            let p = fluid.equilibrium_tv(t, order.volume_m3, amounts).map_or(f64::NAN, |e| e.pressure_pa);
            splits_at = Some((t, p));
            break;
        }
    }
    let range = if ct.is_some_and(|(t, _)| t > t_low) {
        phase.unstable_pressures(t_low, z, ct.map(|(_, p)| p), p_search).map_err(|e| e.to_string())?
    } else {
        None
    };
    let capped = range.is_some_and(|(_, hi)| hi >= 0.999 * p_search);
    // Below the first fill the blend stays gas; above the second it is dense enough to stay
    // one phase (retrograde), which is no safe fill to aim for.
    let fill_of = |p: f64| -> Result<f64, String> {
        let v = fluid.state_tp(t_low, p, z).map_err(|e| e.to_string())?.molar_volume_m3;
        fluid.pressure_tv(t_ref, v, z).map_err(|e| e.to_string())
    };
    let fill_range = match range {
        Some((lo, hi)) => Some((fill_of(lo)?, if capped { None } else { fill_of(hi).ok() })),
        None => None,
    };
    Ok(Found { ct, splits_at, range, capped, fill_range, t_low })
}

/// The findings in the check's data (JSON keys).
fn insert_found(data: &mut Map<String, Value>, f: &Found, c: &Conditions) {
    data.insert("cricondentherm_k".into(), f.ct.map_or(Value::Null, |(t, _)| json!(t)));
    data.insert("cricondentherm_pressure_bar".into(), f.ct.map_or(Value::Null, |(_, p)| json!(bar(p))));
    data.insert("margin_k".into(), json!(c.margin_k));
    data.insert("liquid_pressure_range_bar".into(), f.range.map_or(Value::Null, |(a, b)| json!([bar(a), bar(b)])));
    data.insert("max_single_phase_fill_bar".into(), f.fill_range.map_or(Value::Null, |(lo, _)| json!(bar(lo))));
    data.insert(
        "condensing_fill_range_bar".into(),
        f.fill_range.map_or(Value::Null, |(lo, hi)| json!([bar(lo), hi.map(bar)])),
    );
}

/// The findings in words: the cricondentherm, the judged temperature and its margin, the
/// pressures where liquid forms and the fills that condense on cooling.
fn found_details(f: &Found, model: Model, c: &Conditions, t_ref: f64) -> Vec<String> {
    let mut details = Vec::new();
    let t_low = f.t_low;
    if let Some((t, _)) = f.ct {
        details.push(format!("cricondentherm {:.1} °C ({:.2} K), {model}", celsius(t), t));
    }
    details.push(format!(
        "judged down to {:.1} °C: the lowest storage temperature less a margin of {:.1} K (the reference \
         equations' uncertainty in dew points; {} K where a gas is on Peng-Robinson's form; a setting)",
        celsius(t_low),
        c.margin_k,
        CUBIC_FORM_MARGIN_K
    ));
    if let Some((lo, hi)) = f.range {
        details.push(if f.capped {
            format!(
                "at {:.1} °C liquid forms from {:.2} bar up to at least {:.0} bar",
                celsius(t_low),
                bar(lo),
                bar(hi)
            )
        } else {
            format!("at {:.1} °C liquid forms between {:.2} and {:.2} bar", celsius(t_low), bar(lo), bar(hi))
        });
    }
    if let Some((lo, hi)) = f.fill_range {
        details.push(match hi {
            Some(hi) => format!(
                "fills from {:.1} to {:.1} bar at {:.1} °C condense on cooling; the highest fill that stays single-phase \
                 is {:.1} bar",
                bar(lo),
                bar(hi),
                celsius(t_ref),
                bar(lo)
            ),
            None => format!(
                "fills above {:.1} bar at {:.1} °C condense on cooling: the highest fill that stays single-phase",
                bar(lo),
                celsius(t_ref)
            ),
        });
    }
    details
}

/// The steps after which liquid forms at the fill temperature (named) and the steps after
/// which it forms on cooling (numbered).
fn steps_flagged(plan: &Plan) -> (Vec<String>, Vec<String>) {
    let flagged = plan
        .steps
        .iter()
        .enumerate()
        .filter(|(_, s)| s.flags.contains(&StepFlag::AboveDewPoint))
        .map(|(i, s)| format!("step {} ({})", i + 1, s.source))
        .collect();
    let cooled = plan
        .steps
        .iter()
        .enumerate()
        .filter(|(_, s)| s.flags.contains(&StepFlag::CondensesIfCooled))
        .map(|(i, _)| (i + 1).to_string())
        .collect();
    (flagged, cooled)
}

/// The severity and the message: liquid in the cylinder or during the fill is at stop.
fn verdict(
    f: &Found,
    rule_exceeded: bool,
    flagged: &[String],
    cooled: &[String],
    c: &Conditions,
) -> (Severity, String) {
    let (t_min, t_low) = (c.min_temperature_k, f.t_low);
    let max_fill = f.fill_range.map(|(lo, _)| lo);
    match (f.splits_at, rule_exceeded, f.ct) {
        (Some((t, p)), _, _) => (
            Severity::Stop,
            format!(
                "liquid is predicted in the cylinder at {:.1} °C{}, within the storage range and margin: lower the \
                 fill pressure{}",
                celsius(t),
                if p.is_finite() { format!(" ({:.2} bar)", bar(p)) } else { String::new() },
                max_fill.map_or(String::new(), |m| format!(" to at most {:.1} bar", bar(m)))
            ),
        ),
        _ if !flagged.is_empty() => (
            Severity::Stop,
            format!(
                "liquid forms during the fill at {}: use a smaller share, a warmer fill, another fill order, or fill by \
                 mass",
                flagged.join(", ")
            ),
        ),
        _ if !cooled.is_empty() => (
            Severity::Caution,
            format!(
                "gas at the fill temperature at every step, but after step{} {} liquid forms if the cylinder cools to \
                 {:.1} °C before the fill is finished: fill in one session",
                if cooled.len() > 1 { "s" } else { "" },
                cooled.join(", "),
                celsius(t_low)
            ),
        ),
        (None, true, _) => (
            Severity::Caution,
            "the conservative rule is exceeded (a partial pressure above a vapour pressure), but the equation of state keeps the blend single-phase".into(),
        ),
        (None, false, Some((t, _))) if t > t_low => (
            Severity::Caution,
            format!(
                "single-phase down to {:.1} °C at this fill, but the cricondentherm ({:.1} °C) is within the margin of \
                 it or above it: a higher fill could condense",
                celsius(t_min),
                celsius(t)
            ),
        ),
        _ => (Severity::Ok, format!("single-phase down to {:.1} °C", celsius(t_min))),
    }
}
