//! Flammability and oxidising ability (ISO 10156 calculation methods), toxicity
//! (additivity rule with ISO 10298 LC50 values) and pairs that react in a cylinder.

use serde_json::{json, Map};

use super::{Check, Severity};
use crate::gas::{Catalogue, Hazard};
use crate::plan::Plan;

/// ISO 10156: a mixture is more oxidising than air when Σ x_i C_i exceeds 0.235 (from memory).
pub const OXIDISING_LIMIT: f64 = 0.235;
/// Above this O2 content equipment must be oxygen-clean (common practice).
pub const OXYGEN_SERVICE_FRACTION: f64 = 0.235;
/// Toxic by inhalation when the mixture LC50 is at most this, ppm (ISO 10298 / GHS, from memory).
pub const TOXIC_LC50_PPM: f64 = 5000.0;
/// Below this oxygen equivalence, flammables cannot burn in the cylinder (the limiting oxygen
/// concentration of common fuels is 10 % O2 or more; common practice, no source).
const LIMITING_OXIDISER: f64 = 0.10;

/// The blend's components with their hazard data: (id, mole fraction, hazard).
fn parts(plan: &Plan, catalogue: &Catalogue) -> Vec<(String, f64, Hazard)> {
    plan.components
        .iter()
        .filter(|c| c.mole_fraction > 0.0)
        .map(|c| {
            let gas = catalogue.gas(c.gas);
            (gas.id().to_string(), c.mole_fraction, gas.hazard())
        })
        .collect()
}

/// Le Chatelier's rule: the lower flammability limit of a mixture of flammables, %, from
/// their fractions (any scale) and limits (%).
pub fn le_chatelier(parts: &[(f64, f64)]) -> Option<f64> {
    let total: f64 = parts.iter().map(|p| p.0).sum();
    if !(total > 0.0) {
        return None;
    }
    Some(1.0 / parts.iter().map(|(y, lfl)| (y / total) / lfl).sum::<f64>())
}

/// The ISO 10156 flammability index of a mixture of flammables A_i (with T_ci, %) and inerts
/// B_k (with K_k) in mole fractions: Σ_i A_i / (Σ A + Σ K_k B_k) · 100 / T_ci. Flammable
/// in air when above 1.
pub fn iso_10156_index(flammables: &[(f64, f64)], inerts: &[(f64, f64)]) -> f64 {
    let a: f64 = flammables.iter().map(|f| f.0).sum();
    let kb: f64 = inerts.iter().map(|(b, k)| k * b).sum();
    if !(a > 0.0) {
        return 0.0;
    }
    flammables.iter().map(|(ai, tci)| ai / (a + kb) * 100.0 / tci).sum()
}

pub fn flammability(plan: &Plan, catalogue: &Catalogue) -> Check {
    let parts = parts(plan, catalogue);
    let mut details = Vec::new();
    let mut fallback = Vec::new();
    let flammables: Vec<(f64, f64)> = parts
        .iter()
        .filter_map(|(id, x, h)| {
            let lfl = h.lfl_percent?;
            let tci = h.tci_percent.unwrap_or_else(|| {
                fallback.push(id.clone());
                lfl
            });
            details.push(format!("{id}: {:.4} % flammable, T_ci {tci} %, LFL {lfl} %", x * 100.0));
            Some((*x, tci))
        })
        .collect();
    let inerts: Vec<(f64, f64)> = parts
        .iter()
        .filter_map(|(id, x, h)| {
            let k = h.inert_k?;
            details.push(format!("{id}: {:.4} % inert, K {k}", x * 100.0));
            Some((*x, k))
        })
        .collect();
    let lfl_parts: Vec<(f64, f64)> = parts.iter().filter_map(|(_, x, h)| Some((*x, h.lfl_percent?))).collect();
    let lfl = le_chatelier(&lfl_parts);
    let index = iso_10156_index(&flammables, &inerts);
    let flammable = index > 1.0;
    let mut data = Map::new();
    data.insert("flammable".into(), json!(flammable));
    data.insert("index".into(), json!(index));
    data.insert("lower_flammability_limit_percent".into(), json!(lfl));
    if !fallback.is_empty() {
        details.push(format!(
            "no T_ci in the catalogue for {}: its LFL is used, which errs on the safe side",
            fallback.join(", ")
        ));
    }
    if let Some(l) = lfl {
        details.push(format!("lower flammability limit of the flammable part (Le Chatelier): {l:.2} %"));
    }
    let (severity, message) = if flammables.is_empty() {
        (Severity::Ok, "no flammable component".to_string())
    } else if flammable {
        (
            Severity::Caution,
            format!("flammable in air (ISO 10156 index {index:.2} > 1): flammable-gas valve, label and handling"),
        )
    } else {
        (Severity::Ok, format!("not flammable in air (ISO 10156 index {index:.2} ≤ 1)"))
    };
    Check { id: "flammability", severity, message, details, data }
}

pub fn oxidising(plan: &Plan, catalogue: &Catalogue) -> Check {
    let parts = parts(plan, catalogue);
    // Start from +0.0: an empty float sum is -0.0, which would print as "-0.000".
    let sum: f64 = parts.iter().filter_map(|(_, x, h)| Some(x * h.oxidising_c?)).fold(0.0, |a, b| a + b);
    let o2 = parts.iter().find(|p| p.0 == "O2").map_or(0.0, |p| p.1);
    let oxidising = sum > OXIDISING_LIMIT;
    let mut details: Vec<String> = parts
        .iter()
        .filter_map(|(id, x, h)| Some(format!("{id}: {:.4} % with C {}", x * 100.0, h.oxidising_c?)))
        .collect();
    details.push(format!("Σ x·C = {sum:.4} against {OXIDISING_LIMIT} (air: 0.21)"));
    let mut data = Map::new();
    data.insert("oxidising".into(), json!(oxidising));
    data.insert("oxygen_equivalent".into(), json!(sum));
    let (severity, message) = if o2 > OXYGEN_SERVICE_FRACTION {
        (
            Severity::Caution,
            format!("oxidising, {:.1} % O2: oxygen service, oxygen-clean equipment and slow filling", o2 * 100.0),
        )
    } else if oxidising {
        (Severity::Caution, format!("more oxidising than air (Σ x·C = {sum:.4} > {OXIDISING_LIMIT})"))
    } else {
        (Severity::Ok, format!("not more oxidising than air (Σ x·C = {sum:.4})"))
    };
    Check { id: "oxidising", severity, message, details, data }
}

pub fn toxicity(plan: &Plan, catalogue: &Catalogue) -> Check {
    let parts = parts(plan, catalogue);
    let inverse: f64 = parts.iter().filter_map(|(_, x, h)| Some(x / h.lc50_ppm?)).sum();
    let lc50 = (inverse > 0.0).then(|| 1.0 / inverse);
    let toxic = lc50.is_some_and(|l| l <= TOXIC_LC50_PPM);
    let corrosive: Vec<&str> = parts.iter().filter(|p| p.2.corrosive).map(|p| p.0.as_str()).collect();
    let mut details: Vec<String> = parts
        .iter()
        .filter_map(|(id, x, h)| Some(format!("{id}: {}, LC50 {} ppm", crate::units::fraction_text(*x), h.lc50_ppm?)))
        .collect();
    match lc50 {
        // Above a million ppm the additivity rule says the mixture cannot reach a lethal
        // concentration at all, whatever the figure.
        Some(l) if l > 1e6 => details.push(format!(
            "mixture LC50 by additivity above 1,000,000 ppm ({l:.3e} ppm): not toxic by this rule (toxic at \
             {TOXIC_LC50_PPM} ppm or below)"
        )),
        Some(l) => {
            details.push(format!("mixture LC50 by additivity: {l:.0} ppm (toxic at {TOXIC_LC50_PPM} ppm or below)"))
        }
        None => {}
    }
    // Reactive components at trace levels drift in the cylinder (common practice, no source).
    for (id, x, _) in &parts {
        if REACTIVE_TRACES.contains(&id.as_str()) && *x < 0.01 {
            details.push(format!(
                "{id} at {}: reactive at this level; use a passivated (treated) cylinder and valve, fill and analyse \
                 soon after, and give the blend a limited shelf life (common practice)",
                crate::units::fraction_text(*x)
            ));
        }
    }
    let (exposure, above) = exposure_limits(&parts, &mut details);
    let mut data = Map::new();
    data.insert("toxic".into(), json!(toxic));
    data.insert("lc50_ppm".into(), json!(lc50));
    data.insert("corrosive".into(), json!(!corrosive.is_empty()));
    data.insert("exposure".into(), json!(exposure));
    let corr = if corrosive.is_empty() { String::new() } else { format!("; corrosive: {}", corrosive.join(", ")) };
    let (severity, message) = match lc50 {
        None if corrosive.is_empty() => (Severity::Ok, "no toxic component".to_string()),
        None => (Severity::Caution, format!("no toxic component{corr}")),
        Some(l) if toxic => (Severity::Caution, format!("toxic by inhalation: mixture LC50 {l:.0} ppm{corr}")),
        Some(l) if l > 1e6 && !corrosive.is_empty() => {
            (Severity::Caution, format!("not toxic by the additivity rule (mixture LC50 above 10⁶ ppm){corr}"))
        }
        Some(l) if l > 1e6 => (
            Severity::Ok,
            "not toxic by inhalation (mixture LC50 above 10⁶ ppm: the rule finds no lethal level)".into(),
        ),
        Some(l) if !corrosive.is_empty() => (Severity::Caution, format!("not toxic (mixture LC50 {l:.0} ppm){corr}")),
        Some(l) => (Severity::Ok, format!("not toxic by inhalation (mixture LC50 {l:.0} ppm)")),
    };
    let message = if above.is_empty() {
        message
    } else {
        format!("{message}; above the exposure limit as it is: {}", above.join(", "))
    };
    Check { id: "toxicity", severity, message, details, data }
}

/// Exposure limits: the blend as it is, against each component's limits (a leak, a purge
/// vented into the room). Returns the JSON entries and the components above a limit.
fn exposure_limits(
    parts: &[(String, f64, Hazard)],
    details: &mut Vec<String>,
) -> (Vec<serde_json::Value>, Vec<String>) {
    let mut exposure = Vec::new();
    let mut above = Vec::new();
    for (id, x, h) in parts {
        let limits: Vec<String> = [("TWA", h.twa_ppm), ("STEL", h.stel_ppm), ("ceiling", h.ceiling_ppm)]
            .iter()
            .filter_map(|(name, v)| v.map(|v| format!("{name} {v} ppm")))
            .collect();
        let Some(lowest) = [h.twa_ppm, h.stel_ppm, h.ceiling_ppm].into_iter().flatten().reduce(f64::min) else {
            continue;
        };
        let ppm = x * 1e6;
        if ppm > lowest {
            above.push(id.clone());
        }
        details.push(format!(
            "{id} at {}: exposure limits {} (Ontario Regulation 833; use the local list){}",
            crate::units::fraction_text(*x),
            limits.join(", "),
            if ppm > lowest {
                format!(
                    ": the blend is {}× the lowest; vent it outdoors or to an extract",
                    crate::units::Sig(ppm / lowest, 2)
                )
            } else {
                String::new()
            }
        ));
        exposure.push(json!({"id": id, "content_ppm": ppm, "twa_ppm": h.twa_ppm, "stel_ppm": h.stel_ppm,
            "ceiling_ppm": h.ceiling_ppm}));
    }
    (exposure, above)
}

/// Gases that react with cylinder walls and valves at ppm levels, so that their content
/// drifts (common practice, no source).
pub const REACTIVE_TRACES: &[&str] = &["H2S", "NO", "NO2", "SO2", "HCl", "NH3", "Cl2", "COS"];

pub use crate::gas::INCOMPATIBLE;

pub fn incompatibility(plan: &Plan, catalogue: &Catalogue) -> Check {
    let parts = parts(plan, catalogue);
    let has = |id: &str| parts.iter().any(|p| p.0 == id);
    let mut findings: Vec<String> = INCOMPATIBLE
        .iter()
        .filter(|(a, b, _)| has(a) && has(b))
        .map(|(a, b, why)| format!("{a} with {b}: {why}"))
        .collect();
    let pairs = findings.len();
    // Flammables together with oxidisers: how close to the lower flammability limit.
    let oxidiser: f64 = parts.iter().filter_map(|(_, x, h)| Some(x * h.oxidising_c?)).sum();
    let lfl_parts: Vec<(f64, f64)> = parts.iter().filter_map(|(_, x, h)| Some((*x, h.lfl_percent?))).collect();
    let flammable_total: f64 = lfl_parts.iter().map(|p| p.0).sum();
    let mut share_of_lfl = None;
    if flammable_total > 0.0 && oxidiser >= LIMITING_OXIDISER {
        if let Some(lfl) = le_chatelier(&lfl_parts) {
            let share = flammable_total * 100.0 / lfl;
            share_of_lfl = Some(share);
            findings.push(format!(
                "flammables {:.3} % with an oxidiser (Σ x·C = {oxidiser:.3}): {:.0} % of their lower flammability limit {lfl:.2} %",
                flammable_total * 100.0,
                share * 100.0
            ));
        }
    }
    let mut data = Map::new();
    data.insert(
        "pairs".into(),
        json!(INCOMPATIBLE
            .iter()
            .filter(|(a, b, _)| has(a) && has(b))
            .map(|(a, b, why)| json!({"a": a, "b": b, "reason": why}))
            .collect::<Vec<_>>()),
    );
    data.insert("fraction_of_lfl".into(), json!(share_of_lfl));
    let (severity, message) = if pairs > 0 {
        (Severity::Stop, format!("{pairs} pair(s) of components react in the cylinder"))
    } else if share_of_lfl.is_some_and(|s| s >= 1.0) {
        (
            Severity::Stop,
            "flammables and oxidiser together at or above the lower flammability limit: an explosive mixture".into(),
        )
    } else if share_of_lfl.is_some_and(|s| s >= 0.5) {
        (Severity::Caution, "flammables with an oxidiser at half their lower flammability limit or more: fill in a safe order and mix well".into())
    } else if share_of_lfl.is_some() {
        (Severity::Caution, "flammables with an oxidiser, below half their lower flammability limit".into())
    } else {
        (Severity::Ok, "no pair of components known to react".into())
    };
    Check { id: "incompatibility", severity, message, details: findings, data }
}

/// The hazard values no registry library carries, which the table marks "from memory"
/// (ISO 10156 T_ci and C_i, ISO 10298 LC50, the corrosive flag of the transport listing),
/// as a Markdown table for review (`cargo run --example hazard_review`, in the README).
pub fn from_memory_table(catalogue: &Catalogue) -> String {
    let mut s = String::from("| gas | T_ci % (ISO 10156) | C_i (ISO 10156) | LC50 ppm (ISO 10298) | corrosive |\n");
    s.push_str("|---|---:|---:|---:|---|\n");
    let cell = |v: Option<f64>| v.map_or("–".to_string(), |v| format!("{v}"));
    for g in catalogue.gases() {
        let h = g.hazard();
        if h.tci_percent.is_none() && h.oxidising_c.is_none() && h.lc50_ppm.is_none() && !h.corrosive {
            continue;
        }
        s.push_str(&format!(
            "| {} | {} | {} | {} | {} |\n",
            g.id(),
            cell(h.tci_percent),
            cell(h.oxidising_c),
            cell(h.lc50_ppm),
            if h.corrosive { "yes" } else { "–" }
        ));
    }
    s
}
