//! Could anything condense in the cylinder between the lowest storage temperature and the
//! reference temperature?
//!
//! Two levels: the conservative rule (each component's partial pressure against its
//! vapour pressure at the lowest storage temperature) and the equation of state (phase
//! stability of the cylinder content along its isochore, the cricondentherm, and the
//! pressure range at the lowest storage temperature in which liquid forms).

use serde_json::{json, Map, Value};

use super::phase::PhaseFluid;
use super::{phase_model, Check, Conditions, Severity};
use crate::gas::Catalogue;
use crate::plan::Plan;
use crate::recipe::Order;
use crate::thermo::{Fluid, MAX_PRESSURE_PA};
use crate::units::{bar, celsius};

pub fn check(plan: &Plan, order: &Order, catalogue: &Catalogue, c: &Conditions) -> Check {
    match run(plan, order, catalogue, c) {
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

fn run(plan: &Plan, order: &Order, catalogue: &Catalogue, c: &Conditions) -> Result<Check, String> {
    let t_min = c.min_temperature_k;
    let t_ref = order.reference_temperature_k;
    let present: Vec<usize> = (0..plan.gases.len()).filter(|&i| plan.components[i].mole_fraction > 0.0).collect();
    let gases: Vec<usize> = present.iter().map(|&i| plan.gases[i]).collect();
    let z: Vec<f64> = present.iter().map(|&i| plan.components[i].mole_fraction).collect();
    let amounts: Vec<f64> = present.iter().map(|&i| plan.components[i].amount_mol).collect();
    let model = phase_model(plan.model);
    let fluid = Fluid::new(catalogue, &gases, model).map_err(|e| e.to_string())?;
    let p_at_min = fluid.pressure(t_min, order.volume_m3, &amounts).map_err(|e| e.to_string())?;

    // The conservative rule.
    let mut details = Vec::new();
    let mut rule = Vec::new();
    let mut rule_exceeded = false;
    let mut any_condensable = false;
    for (k, &g) in gases.iter().enumerate() {
        let gas = catalogue.gas(g);
        if gas.tc_k() <= t_min {
            continue;
        }
        any_condensable = true;
        let p_i = z[k] * p_at_min;
        match gas.vapour_pressure_pa(t_min) {
            Some(p_sat) => {
                let ratio = p_i / p_sat;
                rule_exceeded |= ratio > 1.0;
                details.push(format!(
                    "{}: partial pressure {:.3} bar at {:.1} °C against vapour pressure {:.3} bar ({:.0} % of it)",
                    gas.id(),
                    bar(p_i),
                    celsius(t_min),
                    bar(p_sat),
                    ratio * 100.0
                ));
                rule.push(json!({"id": gas.id(), "partial_pressure_bar": bar(p_i), "vapour_pressure_bar": bar(p_sat), "ratio": ratio}));
            }
            None => {
                details.push(format!("{}: no vapour pressure at {:.1} °C in the catalogue", gas.id(), celsius(t_min)));
                rule.push(json!({"id": gas.id(), "partial_pressure_bar": bar(p_i), "vapour_pressure_bar": null}));
            }
        }
    }
    let mut data = Map::new();
    data.insert("model".into(), json!(model.key()));
    data.insert("rule".into(), Value::Array(rule));
    if !any_condensable {
        data.insert("cricondentherm_k".into(), Value::Null);
        return Ok(Check {
            id: "condensation",
            severity: Severity::Ok,
            message: format!("no component can condense: every critical temperature is below {:.1} °C", celsius(t_min)),
            details,
            data,
        });
    }

    // The equation of state.
    let phase = PhaseFluid {
        fluid: &fluid,
        tc: gases.iter().map(|&g| catalogue.gas(g).tc_k()).collect(),
        pc: gases.iter().map(|&g| catalogue.gas(g).pc_pa()).collect(),
        omega: gases.iter().map(|&g| catalogue.gas(g).omega()).collect(),
    };
    let t_floor = 0.5 * t_min.min(phase.tc.iter().copied().fold(f64::INFINITY, f64::min));
    let p_search = (3.0 * plan.totals.pressure_pa).clamp(100e5, MAX_PRESSURE_PA);
    let ct = phase.cricondentherm(&z, t_floor, p_search).map_err(|e| e.to_string())?;
    data.insert("cricondentherm_k".into(), ct.map_or(Value::Null, |(t, _)| json!(t)));
    data.insert("cricondentherm_pressure_bar".into(), ct.map_or(Value::Null, |(_, p)| json!(bar(p))));

    // Along the isochore from the lowest storage temperature up to the reference.
    let mut splits_at = None;
    for k in 0..=6 {
        let t = t_min + (t_ref.max(t_min) - t_min) * k as f64 / 6.0;
        let p = fluid.pressure(t, order.volume_m3, &amounts).map_err(|e| e.to_string())?;
        if phase.unstable(t, p, &z).map_err(|e| e.to_string())? {
            splits_at = Some((t, p));
            break;
        }
    }
    let range = if ct.is_some_and(|(t, _)| t > t_min) {
        phase.unstable_pressures(t_min, &z, ct.map(|(_, p)| p), p_search).map_err(|e| e.to_string())?
    } else {
        None
    };
    data.insert("liquid_pressure_range_bar".into(), range.map_or(Value::Null, |(a, b)| json!([bar(a), bar(b)])));
    // Highest settled fill at the reference temperature whose isochore stays below the lower
    // dew pressure at the lowest storage temperature.
    let max_fill = match range {
        Some((p_lo, _)) => {
            let v = fluid.state_tp(t_min, p_lo, &z).map_err(|e| e.to_string())?.molar_volume_m3;
            Some(fluid.pressure_tv(t_ref, v, &z).map_err(|e| e.to_string())?)
        }
        None => None,
    };
    data.insert("max_single_phase_fill_bar".into(), max_fill.map_or(Value::Null, |p| json!(bar(p))));

    if let Some((t, _)) = ct {
        details.push(format!("cricondentherm {:.1} °C ({:.2} K), {model}", celsius(t), t));
    }
    if let Some((lo, hi)) = range {
        details.push(format!("at {:.1} °C liquid forms between {:.2} and {:.2} bar", celsius(t_min), bar(lo), bar(hi)));
    }
    if let Some(p) = max_fill {
        details.push(format!(
            "highest fill that stays single-phase down to {:.1} °C: {:.1} bar at {:.1} °C",
            celsius(t_min),
            bar(p),
            celsius(t_ref)
        ));
    }
    let (severity, message) = match (splits_at, rule_exceeded, ct) {
        (Some((t, p)), _, _) => (
            Severity::Stop,
            format!(
                "liquid is predicted in the cylinder at {:.1} °C and {:.2} bar, within the storage range: lower the fill pressure{}",
                celsius(t),
                bar(p),
                max_fill.map_or(String::new(), |m| format!(" to at most {:.1} bar", bar(m)))
            ),
        ),
        (None, true, _) => (
            Severity::Caution,
            "the conservative rule is exceeded (a partial pressure above a vapour pressure), but the equation of state keeps the blend single-phase".into(),
        ),
        (None, false, Some((t, _))) if t > t_min => (
            Severity::Caution,
            format!(
                "single-phase down to {:.1} °C at this fill, but the cricondentherm ({:.1} °C) is above it: a higher fill could condense",
                celsius(t_min),
                celsius(t)
            ),
        ),
        _ => (Severity::Ok, format!("single-phase down to {:.1} °C", celsius(t_min))),
    };
    Ok(Check { id: "condensation", severity, message, details, data })
}
