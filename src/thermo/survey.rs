//! How far each model's density is from GERG-2008 for the gases blenders fill most, at
//! 15 °C from 1 to 200 bar. Used by the test suite (which pins the bands) and by
//! `cargo run --example density_table`, which prints the README table.

use super::{Fluid, Model};
use crate::gas::Catalogue;
use crate::units::REFERENCE_TEMPERATURE_K;

/// A named test gas: (label, [(id, mole fraction)], pressures in bar).
pub type SurveyGas = (&'static str, &'static [(&'static str, f64)], &'static [f64]);

const FULL_RANGE: &[f64] = &[1.0, 10.0, 50.0, 100.0, 150.0, 200.0];
/// CO2 at 15 °C condenses at 50.9 bar (Span & Wagner 1996), so it is surveyed below that.
const CO2_RANGE: &[f64] = &[1.0, 10.0, 20.0, 30.0, 40.0];

/// The gases of the survey. Air-like: N2 78.12 %, O2 20.96 %, Ar 0.92 % (dry air, CO2
/// left out). Natural-gas-like: an invented lean gas of the kind found in pipelines.
pub const GASES: &[SurveyGas] = &[
    ("N2", &[("N2", 1.0)], FULL_RANGE),
    ("CH4", &[("CH4", 1.0)], FULL_RANGE),
    ("CO2", &[("CO2", 1.0)], CO2_RANGE),
    ("Ar", &[("Ar", 1.0)], FULL_RANGE),
    ("He", &[("He", 1.0)], FULL_RANGE),
    ("H2", &[("H2", 1.0)], FULL_RANGE),
    ("air-like", &[("N2", 0.7812), ("O2", 0.2096), ("Ar", 0.0092)], FULL_RANGE),
    (
        "natural-gas-like",
        &[("CH4", 0.90), ("C2H6", 0.05), ("C3H8", 0.02), ("N2", 0.015), ("CO2", 0.01), ("n-C4H10", 0.005)],
        FULL_RANGE,
    ),
];

/// The cubic and ideal models compared with GERG-2008.
pub const MODELS: [Model; 5] = [Model::Ideal, Model::Vdw, Model::Rk, Model::Srk, Model::Pr];

/// Density deviation of one model at one pressure: (ρ_model / ρ_GERG − 1) in %.
#[derive(Debug, Clone, PartialEq)]
pub struct Deviation {
    pub gas: &'static str,
    pub model: Model,
    pub pressure_bar: f64,
    pub percent: f64,
}

/// Every deviation of the survey.
pub fn density_deviations(catalogue: &Catalogue) -> Vec<Deviation> {
    let mut out = Vec::new();
    for &(label, parts, pressures) in GASES {
        let gases: Vec<usize> = parts.iter().filter_map(|(id, _)| catalogue.index_of(id)).collect();
        let x: Vec<f64> = parts.iter().map(|p| p.1).collect();
        let Ok(reference) = Fluid::new(catalogue, &gases, Model::Gerg) else {
            continue;
        };
        for &p_bar in pressures {
            let p = p_bar * 1e5;
            let Ok(truth) = reference.state_tp(REFERENCE_TEMPERATURE_K, p, &x) else {
                continue;
            };
            for model in MODELS {
                let Ok(fluid) = Fluid::new(catalogue, &gases, model) else {
                    continue;
                };
                if let Ok(s) = fluid.state_tp(REFERENCE_TEMPERATURE_K, p, &x) {
                    out.push(Deviation {
                        gas: label,
                        model,
                        pressure_bar: p_bar,
                        percent: (truth.molar_volume_m3 / s.molar_volume_m3 - 1.0) * 100.0,
                    });
                }
            }
        }
    }
    out
}

/// The survey as a Markdown table: one row per gas and pressure, one column per model.
pub fn markdown_table(catalogue: &Catalogue) -> String {
    let devs = density_deviations(catalogue);
    let mut s = String::from("| gas | p / bar |");
    for m in MODELS {
        s.push_str(&format!(" {} |", m.key()));
    }
    s.push_str("\n|---|---:|");
    for _ in MODELS {
        s.push_str("---:|");
    }
    s.push('\n');
    for &(label, _, pressures) in GASES {
        for &p in pressures {
            s.push_str(&format!("| {label} | {p} |"));
            for m in MODELS {
                match devs.iter().find(|d| d.gas == label && d.model == m && d.pressure_bar == p) {
                    Some(d) => s.push_str(&format!(" {:+.2} % |", d.percent)),
                    None => s.push_str(" – |"),
                }
            }
            s.push('\n');
        }
    }
    s
}
