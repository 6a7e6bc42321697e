//! Re-planning the rest of a fill after an addition went over or under.
//!
//! With the amounts already in the cylinder N (from the record), the remaining sources
//! (columns a_j of their compositions) and the target fractions x, find amounts s_j ≥ 0 of
//! the remaining sources and a new total n ≥ 0 with N + Σ_j a_j s_j ≈ x n: a non-negative
//! least-squares problem in (s, n), each component's row weighted by 1/(x_i n_plan) so that
//! a ppm component counts as much as the balance. When the best answer still misses a
//! tolerance, the target can no longer be met and the result says by how much.

use nalgebra::{DMatrix, DVector};

use super::{sources, Plan};
use crate::recipe::Order;

/// One remaining addition, re-planned.
#[derive(Debug, Clone, PartialEq)]
pub struct Replanned {
    pub source: String,
    pub add_amount_mol: f64,
    pub add_mass_g: f64,
    /// Absolute pressure after the addition at the fill temperature, Pa.
    pub pressure_after_pa: f64,
    /// Amount of each plan gas in the cylinder after the addition, mol.
    pub amounts_after_mol: Vec<f64>,
}

/// The rest of the fill from here.
#[derive(Debug, Clone, PartialEq)]
pub struct Replan {
    /// The steps still to do, in the plan's order.
    pub steps: Vec<Replanned>,
    /// Mole fraction made at the end, per plan gas.
    pub final_fractions: Vec<f64>,
    /// Settled pressure at the reference temperature at the end, Pa.
    pub final_pressure_pa: f64,
    /// Per plan gas with a target: (made − target) relative, and whether within tolerance.
    pub deviations: Vec<(usize, f64, bool)>,
    /// Every target within its tolerance (or within 0.1 % relative where none is given).
    pub on_target: bool,
}

/// Re-plan the steps after `done` of `plan`, given the amounts of each plan gas in the
/// cylinder now, mol.
pub fn replan(plan: &Plan, order: &Order, done: usize, amounts_mol: &[f64]) -> Result<Replan, String> {
    let n_gas = plan.gases.len();
    let rest = &plan.steps[done.min(plan.steps.len())..];
    let columns: Vec<Vec<f64>> = rest
        .iter()
        .map(|s| {
            let src = order.sources.iter().find(|o| o.name == s.source).ok_or("unknown source")?;
            Ok((0..n_gas)
                .map(|i| {
                    src.composition
                        .gases
                        .iter()
                        .position(|g| *g == plan.gases[i])
                        .map_or(0.0, |k| src.composition.fractions[k])
                })
                .collect())
        })
        .collect::<Result<_, &str>>()?;
    let target: Vec<f64> = plan.components.iter().map(|c| c.mole_fraction).collect();
    let n_plan = plan.totals.amount_mol;
    let weight: Vec<f64> = target.iter().map(|x| 1.0 / (x.max(1e-6) * n_plan)).collect();
    let m = DMatrix::from_fn(n_gas, rest.len() + 1, |i, j| {
        weight[i] * if j < rest.len() { columns[j][i] } else { -target[i] }
    });
    let b = DVector::from_fn(n_gas, |i, _| -weight[i] * amounts_mol[i]);
    let solution = sources::nnls(&m, &b);
    let add: Vec<f64> = (0..rest.len()).map(|j| solution[j]).collect();
    let mut cumulative = amounts_mol.to_vec();
    let mut steps = Vec::new();
    for (j, s) in rest.iter().enumerate() {
        for i in 0..n_gas {
            cumulative[i] += add[j] * columns[j][i];
        }
        let pressure_after_pa =
            plan.fluid.pressure(plan.fill_temperature_k, plan.volume_m3, &cumulative).map_err(|e| e.to_string())?;
        let molar = plan.fluid.molar_mass(&columns[j]);
        steps.push(Replanned {
            source: s.source.clone(),
            add_amount_mol: add[j],
            add_mass_g: add[j] * molar,
            pressure_after_pa,
            amounts_after_mol: cumulative.clone(),
        });
    }
    let total: f64 = cumulative.iter().sum();
    let final_fractions: Vec<f64> = cumulative.iter().map(|n| n / total).collect();
    let final_pressure_pa =
        plan.fluid.pressure(plan.totals.temperature_k, plan.volume_m3, &cumulative).map_err(|e| e.to_string())?;
    let deviations: Vec<(usize, f64, bool)> = plan
        .components
        .iter()
        .enumerate()
        .filter(|(_, c)| c.mole_fraction > 0.0)
        .map(|(i, c)| {
            let dev = final_fractions[i] - c.mole_fraction;
            let ok = match c.tolerance {
                Some(t) => dev.abs() <= t,
                None => dev.abs() <= 1e-3 * c.mole_fraction,
            };
            (i, dev / c.mole_fraction, ok)
        })
        .collect();
    let on_target = deviations.iter().all(|d| d.2);
    Ok(Replan { steps, final_fractions, final_pressure_pa, deviations, on_target })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gas::Catalogue;
    use crate::plan::{plan, PlanOptions};
    use crate::recipe::{demo, Recipe};

    fn flue() -> (Plan, Order) {
        let c = Catalogue::built_in();
        let order = Recipe::load(demo::find("flue-gas-span").unwrap(), "d", &c).unwrap();
        let p = plan(&order, &c, &PlanOptions::default()).unwrap();
        (p, order)
    }

    #[test]
    fn following_the_plan_leaves_the_plan_unchanged() {
        let (p, order) = flue();
        let r = replan(&p, &order, 2, &p.steps[1].amounts_after_mol).unwrap();
        assert!(r.on_target);
        for (a, b) in r.steps.iter().zip(&p.steps[2..]) {
            assert!((a.add_amount_mol / b.add_amount_mol - 1.0).abs() < 1e-9, "{a:?} {b:?}");
            assert!((a.pressure_after_pa / b.pressure_after_pa - 1.0).abs() < 1e-9);
        }
    }

    #[test]
    fn an_overshoot_of_a_minor_is_made_good_with_more_of_the_rest() {
        let (p, order) = flue();
        // CH4 (step 2) went 1.5 % over: everything after it grows by 1.5 %.
        let mut now = p.steps[1].amounts_after_mol.clone();
        let ch4 = p.steps[1].amounts_after_mol[1] - p.steps[0].amounts_after_mol[1];
        now[1] += 0.015 * ch4;
        let r = replan(&p, &order, 2, &now).unwrap();
        // CO (already in) cannot grow, so the best is a compromise between CO and CH4.
        let co = r.deviations.iter().find(|d| d.0 == 0).unwrap().1;
        let ch4_dev = r.deviations.iter().find(|d| d.0 == 1).unwrap().1;
        assert!(co < 0.0 && ch4_dev > 0.0 && (co.abs() - ch4_dev.abs()).abs() < 1e-3, "{co} {ch4_dev}");
        assert!(r.final_pressure_pa > p.totals.pressure_pa);
        assert!(r.on_target, "0.75 % each way is inside the recipe's 2 %rel tolerance: {:?}", r.deviations);
        // Far over: the target cannot be met.
        now[1] += 0.2 * ch4;
        assert!(!replan(&p, &order, 2, &now).unwrap().on_target);
    }
}
