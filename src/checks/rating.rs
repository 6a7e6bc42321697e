//! The cylinder's pressure rating: settled pressure at 15 °C against the working pressure,
//! the pressure at the highest service temperature against the test pressure, for the
//! final fill and every step on the way.

use serde_json::{json, Map};

use super::{Check, Conditions, Severity};
use crate::plan::Plan;
use crate::recipe::Order;
use crate::thermo::MAX_PRESSURE_PA;
use crate::units::{bar, celsius, REFERENCE_TEMPERATURE_K};

/// Within this fraction of the test pressure at the highest service temperature, caution.
const TEST_MARGIN: f64 = 0.9;

pub fn check(plan: &Plan, order: &Order, c: &Conditions) -> Check {
    let mut data = Map::new();
    let last = plan.steps.last().map(|s| s.amounts_after_mol.clone()).unwrap_or_default();
    // Where liquid is present, the equilibrium pressure, not a single-phase number.
    let at = |t: f64, amounts: &[f64]| plan.fluid.pressure_in_cylinder(t, order.volume_m3, amounts);
    let settled = match at(REFERENCE_TEMPERATURE_K, &last) {
        Ok(p) => p,
        Err(e) => {
            return Check {
                id: "pressure-rating",
                severity: Severity::Stop,
                message: format!("the settled pressure cannot be computed: {e}"),
                details: Vec::new(),
                data,
            }
        }
    };
    let hot: Vec<Result<f64, String>> =
        plan.steps.iter().map(|s| at(c.max_temperature_k, &s.amounts_after_mol).map_err(|e| e.to_string())).collect();
    let hot_final = hot.last().cloned().unwrap_or(Ok(settled));
    data.insert("settled_pressure_bar".into(), json!(bar(settled)));
    data.insert("hot_pressure_bar".into(), json!(hot_final.as_ref().ok().map(|p| bar(*p))));
    data.insert("max_temperature_k".into(), json!(c.max_temperature_k));
    let mut details = step_details(plan, settled, &hot, &hot_final, c);
    let working = (order.working_pressure_pa < MAX_PRESSURE_PA).then_some(order.working_pressure_pa);
    let test = (order.test_pressure_pa < MAX_PRESSURE_PA).then_some(order.test_pressure_pa);
    if working.is_none() && test.is_none() {
        return Check {
            id: "pressure-rating",
            severity: Severity::Caution,
            message: "no cylinder rating given: set the working and test pressure (recipe cylinder, or --working-pressure and --test-pressure)".into(),
            details,
            data,
        };
    }
    if let Some(w) = working {
        data.insert("working_pressure_bar".into(), json!(bar(w)));
        details.extend(warm_readings(plan, w, settled));
    }
    if let Some(t) = test {
        data.insert("test_pressure_bar".into(), json!(bar(t)));
    }
    let (severity, message) = verdict(plan, settled, &hot_final, working, test, c);
    Check { id: "pressure-rating", severity, message, details, data }
}

/// The pressures settled and hot, and each step's reading at the fill and when hot.
fn step_details(
    plan: &Plan,
    settled: f64,
    hot: &[Result<f64, String>],
    hot_final: &Result<f64, String>,
    c: &Conditions,
) -> Vec<String> {
    let mut details = vec![format!("settled at 15 °C: {:.2} bar", bar(settled))];
    match hot_final {
        Ok(p) => details.push(format!("at {:.0} °C: {:.2} bar", celsius(c.max_temperature_k), bar(*p))),
        Err(e) => details.push(format!("at {:.0} °C: no gas state ({e})", celsius(c.max_temperature_k))),
    }
    for (i, (s, h)) in plan.steps.iter().zip(hot).enumerate() {
        details.push(format!(
            "step {} {}: {:.2} bar at {:.1} °C, {} at {:.0} °C",
            i + 1,
            s.source,
            bar(s.pressure_after_pa),
            celsius(s.temperature_k),
            h.as_ref().map_or("–".to_string(), |p| format!("{:.2} bar", bar(*p))),
            celsius(c.max_temperature_k)
        ));
    }
    details
}

/// A warm fill reads above the working pressure and settles within it: normal, said per
/// step.
fn warm_readings(plan: &Plan, w: f64, settled: f64) -> Vec<String> {
    let mut details = Vec::new();
    for (i, s) in plan.steps.iter().enumerate() {
        if s.pressure_after_pa > w && settled <= w && s.temperature_k > REFERENCE_TEMPERATURE_K {
            details.push(format!(
                "step {} reads {:.1} bar at {:.1} °C, above the working pressure: normal while the gas is warm from \
                 filling; the cylinder settles to {:.1} bar at 15 °C",
                i + 1,
                bar(s.pressure_after_pa),
                celsius(s.temperature_k),
                bar(settled)
            ));
        }
    }
    details
}

/// The severity and the message: settled above the working pressure, a reading above the
/// test pressure, or too near it when hot, is at stop.
fn verdict(
    plan: &Plan,
    settled: f64,
    hot_final: &Result<f64, String>,
    working: Option<f64>,
    test: Option<f64>,
    c: &Conditions,
) -> (Severity, String) {
    let step_over_test = test.and_then(|t| plan.steps.iter().position(|s| s.pressure_after_pa > t));
    let hot_text =
        |p: f64| format!("at {:.0} °C the cylinder would reach {:.1} bar", celsius(c.max_temperature_k), bar(p));
    match (hot_final, working, test) {
        (_, Some(w), _) if settled > w => (
            Severity::Stop,
            format!(
                "settled pressure {:.1} bar at 15 °C is above the working pressure {:.1} bar",
                bar(settled),
                bar(w)
            ),
        ),
        _ if step_over_test.is_some() => (
            Severity::Stop,
            format!("step {} reads above the test pressure during the fill", step_over_test.unwrap_or(0) + 1),
        ),
        (Err(e), _, _) => (Severity::Stop, format!("no gas state at the highest service temperature: {e}")),
        (Ok(p), _, Some(t)) if *p > t => {
            (Severity::Stop, format!("{}, above its test pressure {:.1} bar", hot_text(*p), bar(t)))
        }
        (Ok(p), _, Some(t)) if *p > TEST_MARGIN * t => {
            (Severity::Caution, format!("{}, within 10 % of its test pressure {:.0} bar", hot_text(*p), bar(t)))
        }
        (Ok(p), Some(w), None) => (
            Severity::Caution,
            format!(
                "{:.1} bar settled is within the working pressure {:.0} bar; the test pressure is unknown, so {:.1} bar \
                 at {:.0} °C is not judged: read it from the cylinder's markings",
                bar(settled),
                bar(w),
                bar(*p),
                celsius(c.max_temperature_k)
            ),
        ),
        (Ok(p), None, Some(t)) => (
            Severity::Caution,
            format!(
                "{} (test {:.0} bar); the working pressure is unknown, so the settled {:.1} bar is not judged: read it \
                 from the cylinder's markings",
                hot_text(*p),
                bar(t),
                bar(settled)
            ),
        ),
        (Ok(p), Some(w), Some(t)) => (
            Severity::Ok,
            format!(
                "{:.1} bar settled (working {:.0} bar), {:.1} bar at {:.0} °C (test {:.0} bar)",
                bar(settled),
                bar(w),
                bar(*p),
                celsius(c.max_temperature_k),
                bar(t)
            ),
        ),
        (Ok(_), None, None) => (Severity::Caution, "no cylinder rating given".into()),
    }
}
