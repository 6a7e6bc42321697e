//! How far each model's density is from the reference for the gases blenders fill most,
//! at 15 °C from 1 to 200 bar: GERG-2008 where it covers the gas, else the multi-fluid
//! model (the gas's reference equation of state). Used by the test suite (which pins the
//! bands) and by `cargo run --example density_table`, which prints the README table.

use super::{Fluid, Model};
use crate::gas::Catalogue;
use crate::units::REFERENCE_TEMPERATURE_K;

/// A named test gas: (label, [(id, mole fraction)], pressures in bar).
pub type SurveyGas = (&'static str, &'static [(&'static str, f64)], &'static [f64]);

const FULL_RANGE: &[f64] = &[1.0, 10.0, 50.0, 100.0, 150.0, 200.0];
/// CO2 at 15 °C condenses at 50.9 bar (Span & Wagner 1996), so it is surveyed below that.
const CO2_RANGE: &[f64] = &[1.0, 10.0, 20.0, 30.0, 40.0];
/// Xenon at 15 °C condenses at 56.6 bar (Lemmon & Span 2006), SF6 at 18.6 bar (Guder &
/// Wagner 2009): surveyed below that.
const XE_RANGE: &[f64] = &[1.0, 10.0, 20.0, 30.0, 40.0];
const SF6_RANGE: &[f64] = &[1.0, 5.0, 10.0, 15.0];

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
    ("Ne", &[("Ne", 1.0)], FULL_RANGE),
    ("Kr", &[("Kr", 1.0)], FULL_RANGE),
    ("Xe", &[("Xe", 1.0)], XE_RANGE),
    ("SF6", &[("SF6", 1.0)], SF6_RANGE),
    ("SF6 1 % in N2", &[("SF6", 0.01), ("N2", 0.99)], FULL_RANGE),
    ("Xe 2 % in He", &[("Xe", 0.02), ("He", 0.98)], FULL_RANGE),
    ("SO2 500 ppm in N2", &[("SO2", 0.0005), ("N2", 0.9995)], FULL_RANGE),
    ("NO 50 ppm in N2", &[("NO", 0.00005), ("N2", 0.99995)], FULL_RANGE),
];

/// The cubic and ideal models compared with GERG-2008.
pub const MODELS: [Model; 5] = [Model::Ideal, Model::Vdw, Model::Rk, Model::Srk, Model::Pr];

/// Density deviation of one model at one pressure: (ρ_model / ρ_reference − 1) in %.
#[derive(Debug, Clone, PartialEq)]
pub struct Deviation {
    pub gas: &'static str,
    pub model: Model,
    /// GERG-2008, or the multi-fluid model where GERG-2008 does not cover the gas.
    pub reference: Model,
    pub pressure_bar: f64,
    pub percent: f64,
}

/// The models compared with a gas's reference: the cubics and the ideal gas, and the
/// multi-fluid model where the reference is GERG-2008.
pub fn compared(reference: Model) -> Vec<Model> {
    let mut models = MODELS.to_vec();
    if reference == Model::Gerg {
        models.push(Model::Multi);
    }
    models
}

/// Every deviation of the survey.
pub fn density_deviations(catalogue: &Catalogue) -> Vec<Deviation> {
    let mut out = Vec::new();
    for &(label, parts, pressures) in GASES {
        let gases: Vec<usize> = parts.iter().filter_map(|(id, _)| catalogue.index_of(id)).collect();
        let x: Vec<f64> = parts.iter().map(|p| p.1).collect();
        let reference_model = crate::plan::reference_model(&gases, catalogue);
        let Ok(reference) = Fluid::new(catalogue, &gases, reference_model) else {
            continue;
        };
        for &p_bar in pressures {
            let p = p_bar * 1e5;
            let Ok(truth) = reference.state_tp(REFERENCE_TEMPERATURE_K, p, &x) else {
                continue;
            };
            for model in compared(reference_model) {
                let Ok(fluid) = Fluid::new(catalogue, &gases, model) else {
                    continue;
                };
                if let Ok(s) = fluid.state_tp(REFERENCE_TEMPERATURE_K, p, &x) {
                    out.push(Deviation {
                        gas: label,
                        model,
                        reference: reference_model,
                        pressure_bar: p_bar,
                        percent: (truth.molar_volume_m3 / s.molar_volume_m3 - 1.0) * 100.0,
                    });
                }
            }
        }
    }
    out
}

/// The survey as a Markdown table: one row per gas and pressure, one column per model
/// ("ref" under the multi-fluid model where it is the reference).
pub fn markdown_table(catalogue: &Catalogue) -> String {
    let devs = density_deviations(catalogue);
    let columns: Vec<Model> = compared(Model::Gerg);
    let mut s = String::from("| gas | reference | p / bar |");
    for m in &columns {
        s.push_str(&format!(" {} |", m.key()));
    }
    s.push_str("\n|---|---|---:|");
    for _ in &columns {
        s.push_str("---:|");
    }
    s.push('\n');
    for &(label, _, pressures) in GASES {
        for &p in pressures {
            let reference = devs.iter().find(|d| d.gas == label).map_or(Model::Gerg, |d| d.reference);
            s.push_str(&format!("| {label} | {} | {p} |", reference.key()));
            for m in &columns {
                match devs.iter().find(|d| d.gas == label && d.model == *m && d.pressure_bar == p) {
                    Some(d) => s.push_str(&format!(" {} % |", crate::units::signed(d.percent, 2))),
                    None if *m == reference => s.push_str(" ref |"),
                    None => s.push_str(" – |"),
                }
            }
            s.push('\n');
        }
    }
    s
}
