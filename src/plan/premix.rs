//! Premix proposals for additions too small to dose from a pure gas.
//!
//! A step whose pressure increment or mass is below what the gauge or scale resolves is
//! dosed instead from a premix of that gas in the balance gas. The premix strength is
//! chosen so that the premix addition is at least 5 % of the final fill (a step the gauge
//! and scale read well), rounded down to 1, 2 or 5 × 10^k: common practice, no source.

use super::{Plan, PlanError, PlanOptions};
use crate::gas::Catalogue;
use crate::mixture::{Composition, FractionUnit, Share};
use crate::recipe::{Fill, Order, Source, Target};

/// Premix of a premix at most: two dilution stages.
pub const MAX_STAGES: usize = 2;

/// Smallest share of the final fill that the premix addition should make up.
const MIN_PREMIX_SHARE: f64 = 0.05;

/// A premix the tool proposes.
#[derive(Debug, Clone)]
pub struct Proposal {
    /// Index of the step it replaces.
    pub step: usize,
    /// Catalogue index of the gas it carries.
    pub gas: usize,
    /// Mole fraction of that gas in the premix.
    pub fraction: f64,
    /// The premix as written, e.g. `CO=1%,N2=balance`.
    pub spec: String,
    /// A name for it, e.g. `CO 1 % in N2`.
    pub name: String,
    /// Premix needed for this blend, mol and g.
    pub needed_mol: f64,
    pub needed_g: f64,
    /// Fill pressure of the premix cylinder (same cylinder type), Pa at the reference temperature.
    pub fill_pressure_pa: f64,
    /// The plan to make the premix.
    pub plan: Result<Box<Plan>, String>,
}

/// Largest of 1, 2, 5 × 10^k not above `x`.
pub fn round_down_125(x: f64) -> f64 {
    let k = x.log10().floor();
    let base = 10f64.powf(k);
    let m = x / base;
    let step = if m >= 5.0 {
        5.0
    } else if m >= 2.0 {
        2.0
    } else {
        1.0
    };
    step * base
}

/// A share written the way a blender would: % down to 0.1 %, then ppm, then ppb.
pub fn share_of(fraction: f64) -> Share {
    let (value, unit) = if fraction >= 1e-3 {
        (fraction * 100.0, FractionUnit::Percent)
    } else if fraction >= 1e-6 {
        (fraction * 1e6, FractionUnit::Ppm)
    } else {
        (fraction * 1e9, FractionUnit::Ppb)
    };
    // Values come from round_down_125, so a short decimal is exact enough to print.
    Share::Of { value: (value * 1e9).round() / 1e9, unit }
}

type Planner = fn(&Order, &Catalogue, &PlanOptions, usize) -> Result<Plan, PlanError>;

/// Proposals for every flagged step that doses a pure, non-balance gas.
pub fn propose(
    plan: &Plan,
    order: &Order,
    catalogue: &Catalogue,
    options: &PlanOptions,
    depth: usize,
    planner: Planner,
) -> Vec<Proposal> {
    let balance_gas = match order.balance {
        Some(b) => order.targets[b].gas,
        None => {
            let i = (0..order.composition.gases.len())
                .max_by(|&a, &b| order.composition.fractions[a].total_cmp(&order.composition.fractions[b]))
                .unwrap_or(0);
            order.composition.gases[i]
        }
    };
    let balance_id = catalogue.gas(balance_gas).id().to_string();
    let mut out = Vec::new();
    for (index, step) in plan.steps.iter().enumerate() {
        if !step.flags.iter().any(|f| f.too_small()) {
            continue;
        }
        let Some(source) = order.sources.iter().find(|s| s.name == step.source) else {
            continue;
        };
        if !source.pure || source.composition.gases[0] == balance_gas {
            continue;
        }
        let gas = source.composition.gases[0];
        let x = plan.components.iter().find(|c| c.gas == gas).map_or(0.0, |c| c.mole_fraction);
        if !(x > 0.0) {
            continue;
        }
        let fraction = round_down_125(x / MIN_PREMIX_SHARE);
        if fraction >= 0.5 {
            continue;
        }
        let id = catalogue.gas(gas).id().to_string();
        let share = share_of(fraction);
        let spec = format!("{id}={share},{balance_id}=balance");
        let name = format!("{id} {} in {balance_id}", share_text(&share));
        let needed_mol = step.add_amount_mol / fraction;
        let premix = Composition { gases: vec![gas, balance_gas], fractions: vec![fraction, 1.0 - fraction] };
        let needed_g = needed_mol * premix.molar_mass(catalogue);
        let fill_pressure_pa = plan.totals.pressure_pa.min(order.working_pressure_pa);
        let premix_order = Order {
            name: name.clone(),
            description: format!("premix for {}", order.name),
            order: order.order.clone(),
            targets: vec![
                Target { gas, share, tolerance: None },
                Target { gas: balance_gas, share: Share::Balance, tolerance: None },
            ],
            balance: Some(1),
            composition: premix.clone(),
            fill: Fill::PressurePa(fill_pressure_pa),
            tare_g: None,
            serial: None,
            sources: vec![pure(gas, catalogue), pure(balance_gas, catalogue)],
            fill_order: Vec::new(),
            notes: String::new(),
            before: crate::recipe::Before::Evacuated { residual_pa: 0.0 },
            ..order.clone()
        };
        let premix_options = PlanOptions { order: None, ..options.clone() };
        let plan =
            planner(&premix_order, catalogue, &premix_options, depth + 1).map(Box::new).map_err(|e| e.to_string());
        out.push(Proposal { step: index, gas, fraction, spec, name, needed_mol, needed_g, fill_pressure_pa, plan });
    }
    out
}

fn pure(gas: usize, catalogue: &Catalogue) -> Source {
    Source {
        name: catalogue.gas(gas).id().to_string(),
        composition: Composition { gases: vec![gas], fractions: vec![1.0] },
        pure: true,
    }
}

fn share_text(share: &Share) -> String {
    match share {
        Share::Of { value, unit: FractionUnit::Percent } => format!("{value} %"),
        Share::Of { value, unit } => format!("{value} {}", unit.suffix()),
        Share::Balance => "balance".into(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounding_to_1_2_5() {
        assert_eq!(round_down_125(0.01), 0.01);
        assert!((round_down_125(0.0137) - 0.01).abs() < 1e-18);
        assert!((round_down_125(0.037) - 0.02).abs() < 1e-18);
        assert!((round_down_125(0.09) - 0.05).abs() < 1e-18);
        assert!((round_down_125(3.2e-4) - 2e-4).abs() < 1e-19);
    }

    #[test]
    fn shares_read_like_a_blender_writes_them() {
        assert_eq!(share_of(0.01).to_string(), "1%");
        assert_eq!(share_of(2e-4).to_string(), "200ppm");
        assert_eq!(share_of(5e-8).to_string(), "50ppb");
    }
}
