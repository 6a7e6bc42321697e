//! The fill in progress as the library holds it: the composition so far from the fill
//! record's weighings, against the plan, and the rest of the fill re-planned from it. Used
//! by the Fill sheet and by `fillwright plan NAME --record ID` alike.

use std::path::Path;

use serde_json::{json, Value};

use crate::gas::Catalogue;
use crate::library::records::{Lookup, OpenedRecord};
use crate::library::Library;
use crate::plan::replan::{self, Replan};
use crate::plan::Plan;
use crate::recipe::Order;
use crate::record::composition::Measurand;

/// Where a fill stands.
#[derive(Debug, Clone)]
pub struct Standing {
    /// Additions weighed (complete).
    pub weighed: usize,
    /// Per plan gas: the amount in the cylinder now, mol.
    pub now_mol: Vec<f64>,
    /// The last scale reading, g.
    pub last_reading_g: Option<f64>,
    /// Every scale reading, g: the empty cylinder, then after each addition.
    pub weighings_g: Vec<f64>,
    /// The reference cylinder's reading beside each (substitution weighing), g.
    pub reference_g: Vec<f64>,
    /// Per addition recorded: the source as written and the pressure reading (Pa
    /// absolute) with the cylinder temperature (K), where both were recorded.
    pub recorded: Vec<(String, Option<(f64, f64)>)>,
    /// The pressure readings against the weighings, per addition with both.
    pub cross_checks: Vec<CrossCheck>,
    /// The rest re-planned, or why not.
    pub replan: Result<Replan, String>,
    /// Every addition weighed so far is its planned mass within what two scale readings
    /// resolve (2·√2·u of one reading, k = 2): the live sheet then keeps the first plan
    /// rather than chase the readings' own scatter.
    pub within_noise: bool,
}

/// Read the record into numbers and re-plan the rest of `plan` from it.
pub fn standing(
    opened: &OpenedRecord,
    plan: &Plan,
    order: &Order,
    library: &Library,
    sources: Option<&Path>,
    catalogue: &Catalogue,
) -> Result<Standing, String> {
    if plan.heel.is_some() {
        return Err("the plan starts from a heel, which a fill record does not weigh: the composition so far and \
                    the rest of the fill cannot be taken from it"
            .into());
    }
    let origin = opened.path.display().to_string();
    let lookup = Lookup { library: Some(library), sources, catalogue, depth: 0 };
    let checked =
        opened.record.check(catalogue, &|r| lookup.resolve(r), &opened.text, &origin).map_err(|e| e.to_string())?;
    let m = Measurand::of(&checked, catalogue, plan.model, Some(plan.volume_m3), &[])?;
    let amounts = m.amounts_mol();
    let weighed = checked.complete.min(plan.steps.len());
    let now_mol: Vec<f64> =
        plan.gases.iter().map(|g| m.gases.iter().position(|h| h == g).map_or(0.0, |i| amounts[i])).collect();
    let replan = replan::replan(plan, order, weighed, &now_mol);
    let recorded = checked.additions.iter().map(|a| (a.written.clone(), a.reading)).collect();
    let cross_checks = cross_check(&checked, plan, catalogue);
    let noise_g = 2.0 * std::f64::consts::SQRT_2 * checked.scale_u_g;
    let within_noise = weighed > 0
        && (0..weighed).all(|k| match (checked.net_g(k), checked.net_g(k + 1)) {
            (Some(a), Some(b)) => (b - a - plan.steps[k].add_mass_g).abs() <= noise_g,
            _ => false,
        });
    Ok(Standing {
        weighed,
        now_mol,
        last_reading_g: checked.weighings_g.last().copied(),
        weighings_g: checked.weighings_g.clone(),
        reference_g: checked.reference_weighings_g.clone(),
        recorded,
        cross_checks,
        replan,
        within_noise,
    })
}

impl Standing {
    /// Scale reading `k` less the reference cylinder's beside it (the reading alone in a
    /// direct weighing), g: differences of these are the masses added.
    pub fn net_g(&self, k: usize) -> Option<f64> {
        let w = self.weighings_g.get(k)?;
        Some(w - self.reference_g.get(k).copied().unwrap_or(0.0))
    }
}

/// One line of the Fill sheet as the fill stands: a finished addition as it was recorded,
/// or one still to do as re-planned from the record (the plan itself before any weighing).
#[derive(Debug, Clone, PartialEq)]
pub struct LiveStep {
    pub source: String,
    /// Mass to add (re-planned), or added (recorded), g.
    pub add_mass_g: f64,
    /// The scale reading to stop at (from the empty weight typed), or the one recorded, g.
    pub scale_reading_g: f64,
    /// The stop reading at the plan's fill temperature, Pa absolute (None for a finished
    /// addition: its own reading, if any, is in `recorded_reading`).
    pub pressure_after_pa: Option<f64>,
    /// The stop reading for the cylinder temperature measured now, Pa absolute.
    pub pressure_now_pa: Option<f64>,
    /// Amounts of each plan gas after the addition, mol (what the stop reading is of).
    pub amounts_after_mol: Vec<f64>,
    /// A finished addition: the pressure reading and cylinder temperature recorded with it.
    pub recorded_reading: Option<(f64, f64)>,
    pub finished: bool,
    /// As first planned: mass to add, scale reading and stop reading at the fill temperature.
    pub planned: (f64, f64, f64),
}

impl LiveStep {
    /// Whether the live step differs from the first plan by more than the sheet shows.
    /// (The scale reading is left out: it also moves with the empty weight typed.)
    pub fn moved(&self) -> bool {
        (self.add_mass_g - self.planned.0).abs() >= 0.005
            || self.pressure_after_pa.is_some_and(|p| (p - self.planned.2).abs() >= 500.0)
    }
}

/// The Fill sheet's lines as the fill stands: finished additions as recorded, the rest
/// re-planned from the record, every scale reading counted from the empty weight typed and
/// every stop reading also given for the cylinder temperature measured now (`measured_k`).
pub fn live_sheet(
    plan: &Plan,
    standing: Option<&Standing>,
    empty_g: Option<f64>,
    measured_k: Option<f64>,
) -> Vec<LiveStep> {
    let now_at = |amounts: &[f64]| {
        measured_k.and_then(|t| crate::plan::corrected_target_pa(&plan.fluid, plan.volume_m3, amounts, t).ok())
    };
    // The first plan's scale readings counted from the empty weight typed, as the live
    // ones are (the plan's own start from the recipe's tare, or zero without one).
    let empty = standing.and_then(|s| s.weighings_g.first().copied()).or(empty_g);
    let shift = match (empty, plan.steps.first()) {
        (Some(e), Some(s0)) => e - (s0.scale_reading_g - s0.add_mass_g),
        _ => 0.0,
    };
    let planned = |k: usize| {
        let s = &plan.steps[k];
        (s.add_mass_g, s.scale_reading_g + shift, s.pressure_after_pa)
    };
    let replanned = standing
        .filter(|s| !s.within_noise)
        .and_then(|s| s.replan.as_ref().ok().filter(|_| s.weighed > 0).map(|r| (s, r)));
    let mut lines = Vec::with_capacity(plan.steps.len());
    for (k, step) in plan.steps.iter().enumerate() {
        if let Some(s) = standing.filter(|s| k < s.weighed) {
            // A record of pressure readings has no weighings: no mass to show.
            let (add_mass_g, scale_reading_g) = match (s.net_g(k), s.net_g(k + 1)) {
                (Some(a), Some(b)) => (b - a, s.weighings_g[k + 1]),
                _ => (f64::NAN, f64::NAN),
            };
            lines.push(LiveStep {
                source: s.recorded.get(k).map_or_else(|| step.source.clone(), |r| r.0.clone()),
                add_mass_g,
                scale_reading_g,
                pressure_after_pa: None,
                pressure_now_pa: None,
                amounts_after_mol: Vec::new(),
                recorded_reading: s.recorded.get(k).and_then(|r| r.1),
                finished: true,
                planned: planned(k),
            });
            continue;
        }
        let (add_mass_g, pressure, amounts) = match replanned {
            Some((s, r)) => match k.checked_sub(s.weighed).and_then(|j| r.steps.get(j)) {
                Some(rs) => (rs.add_mass_g, rs.pressure_after_pa, rs.amounts_after_mol.clone()),
                None => (step.add_mass_g, step.pressure_after_pa, step.amounts_after_mol.clone()),
            },
            None => (step.add_mass_g, step.pressure_after_pa, step.amounts_after_mol.clone()),
        };
        // The scale: from the last reading recorded (the empty weight typed, at first),
        // else from the plan's own tare.
        let scale_reading_g = match (lines.last().filter(|l| l.scale_reading_g.is_finite()), empty) {
            (Some(prev), _) => prev.scale_reading_g + add_mass_g,
            (None, Some(empty)) => empty + add_mass_g,
            (None, None) => step.scale_reading_g,
        };
        lines.push(LiveStep {
            source: step.source.clone(),
            add_mass_g,
            scale_reading_g,
            pressure_after_pa: Some(pressure),
            pressure_now_pa: now_at(&amounts),
            amounts_after_mol: amounts,
            recorded_reading: None,
            finished: false,
            planned: planned(k),
        });
    }
    lines
}

/// The sheet as the fill stands, as text (finished additions as recorded, the rest
/// re-planned with its stop and scale readings) and the steps still to do as JSON: what
/// `plan NAME --record ID` prints after the sheet and the screen writes for the bench.
pub fn rest_text(
    id: &str,
    s: &Standing,
    r: &Replan,
    live: &[LiveStep],
    plan: &Plan,
    catalogue: &Catalogue,
    d: &crate::units::Shown,
) -> (String, Vec<Value>) {
    let mut o = format!(
        "\nTHE FILL AS IT STANDS  record {id}\n{} of {} additions weighed; the rest re-planned from them\n",
        s.weighed,
        plan.steps.len()
    );
    o.push_str(&format!(
        "{:>4} {:<16} {:>11} {:>12} {:>11}  {}\n",
        "step",
        "source",
        "add g",
        "scale g",
        format!("stop {}", d.pu()),
        "first plan"
    ));
    let mut steps = Vec::new();
    for (k, l) in live.iter().enumerate() {
        let stop = match (l.pressure_after_pa, l.recorded_reading) {
            (Some(p), _) => d.pf(p),
            (None, Some((p, _))) => d.pf(p),
            (None, None) => "-".into(),
        };
        let state = if l.finished {
            "recorded".to_string()
        } else if l.moved() {
            format!("{:.3}, {}", l.planned.0, d.pf(l.planned.2))
        } else {
            "as planned".to_string()
        };
        let grams = |g: f64| if g.is_finite() { format!("{g:.3}") } else { "-".into() };
        o.push_str(&format!(
            "{:>4} {:<16} {:>11} {:>12} {:>11}  {state}\n",
            k + 1,
            crate::ron_format::clip(&l.source, 16),
            grams(l.add_mass_g),
            grams(l.scale_reading_g),
            stop
        ));
        if let (false, Some(rs)) = (l.finished, r.steps.get(k.wrapping_sub(s.weighed))) {
            steps.push(json!({
                "source": rs.source,
                "add_amount_mol": rs.add_amount_mol,
                "add_mass_g": rs.add_mass_g,
                "pressure_after_bar": rs.pressure_after_pa / 1e5,
                "scale_reading_g": l.scale_reading_g,
                "first_planned": {"add_mass_g": l.planned.0, "scale_reading_g": l.planned.1,
                                  "pressure_after_bar": l.planned.2 / 1e5},
            }));
        }
    }
    o.push_str(&format!("stop readings for the cylinder at {}\n", d.tf(plan.fill_temperature_k)));
    let made: Vec<String> = r
        .deviations
        .iter()
        .map(|(i, dev, ok)| {
            let id = catalogue.gas(plan.gases[*i]).id();
            format!("{id} {}%{}", crate::units::signed(dev * 100.0, 3), if *ok { "" } else { " OUTSIDE" })
        })
        .collect();
    for line in crate::ron_format::wrap_words(&format!("made at the end, against the targets: {}", made.join(", ")), 78)
    {
        o.push_str(&format!("{line}\n"));
    }
    o.push_str(if r.on_target {
        "every target within its tolerance\n"
    } else {
        "NOT every target can be met from here: see OUTSIDE above\n"
    });
    (o, steps)
}

/// A step whose pressure reading and weighing were compared: the reading recorded, the
/// pressure the weighed contents give under the plan's model at the recorded temperature,
/// and the disagreement allowed (k = 2).
#[derive(Debug, Clone, PartialEq)]
pub struct CrossCheck {
    /// The addition, 0-based.
    pub step: usize,
    pub reading_pa: f64,
    pub from_masses_pa: f64,
    pub allowed_pa: f64,
}

impl CrossCheck {
    pub fn disagrees(&self) -> bool {
        (self.reading_pa - self.from_masses_pa).abs() > self.allowed_pa
    }
}

/// Relative standard uncertainty of the cylinder's internal volume taken from its stamped
/// water capacity: ±1 % read as a rectangular distribution, 1 %/√3 (common practice, no
/// source: stamped capacities are rounded to 0.1 L on 10 L cylinders and vary by batch).
pub const WATER_CAPACITY_U_REL: f64 = 0.01 / 1.732_050_807_568_877_2;

/// Cross-check every weighed addition that also has a pressure reading: the amounts from
/// the masses (each source's molar mass from its composition) give a pressure in the
/// cylinder at the recorded temperature; a reading further from it than twice the combined
/// uncertainty of the gauge, the thermometer and the volume is flagged (a slip in either).
pub fn cross_check(checked: &crate::record::Checked, plan: &Plan, catalogue: &Catalogue) -> Vec<CrossCheck> {
    let mut amounts = vec![0.0; plan.gases.len()];
    let mut out = Vec::new();
    for (k, a) in checked.additions.iter().enumerate().take(checked.complete) {
        let (Some(before), Some(after)) = (checked.net_g(k), checked.net_g(k + 1)) else { break };
        let c = a.source.composition();
        let molar: f64 =
            c.gases.iter().zip(&c.fractions).map(|(&g, x)| x * catalogue.gas(g).molar_mass_g_per_mol).sum();
        let n = (after - before) / molar;
        for (&g, x) in c.gases.iter().zip(&c.fractions) {
            if let Some(i) = plan.gases.iter().position(|h| *h == g) {
                amounts[i] += n * x;
            }
        }
        let Some((reading_pa, t_k)) = a.reading else { continue };
        let p = |t: f64, v: f64| crate::plan::corrected_target_pa(&plan.fluid, v, &amounts, t).ok();
        let (Some(p0), Some(p_t), Some(p_v)) =
            (p(t_k, plan.volume_m3), p(t_k + 0.01, plan.volume_m3), p(t_k, plan.volume_m3 * 1.0001))
        else {
            continue;
        };
        let dp_dt = (p_t - p0) / 0.01;
        let dp_dlnv = (p_v - p0) / 1e-4;
        let u = (checked.pressure_u_pa.powi(2)
            + (dp_dt * checked.temperature_u_k).powi(2)
            + (dp_dlnv * WATER_CAPACITY_U_REL).powi(2))
        .sqrt();
        out.push(CrossCheck { step: k, reading_pa, from_masses_pa: p0, allowed_pa: 2.0 * u });
    }
    out
}
