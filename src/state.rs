//! One gas state: given the temperature and two of pressure, volume and amount, the third
//! solved under a model, with the phase the model finds there (`fillwright state`).

use crate::thermo::phases::Phase;
use crate::thermo::{Fluid, Model, ThermoError};
use crate::units::{AmountInput, R};

/// Which quantity the user left out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unknown {
    Pressure,
    Volume,
    Amount,
}

impl Unknown {
    pub fn name(self) -> &'static str {
        match self {
            Unknown::Pressure => "pressure",
            Unknown::Volume => "volume",
            Unknown::Amount => "amount",
        }
    }
}

/// What the user gave, in SI.
pub struct Given {
    pub t_k: f64,
    pub p_pa: Option<f64>,
    pub volume_m3: Option<f64>,
    pub amount: Option<AmountInput>,
}

/// A solved state.
#[derive(Debug, Clone)]
pub struct Solved {
    pub model: Model,
    pub p_pa: f64,
    pub volume_m3: f64,
    pub amount_mol: f64,
    pub z: f64,
    pub mass_g: f64,
    pub phase: Phase,
    /// Fraction of the amount that is liquid.
    pub liquid_fraction: f64,
    /// The model that judged the phase (the model itself).
    pub judged_by: Model,
    /// Where the model's stable state is two-phase: its equation evaluated as if the
    /// contents stayed one phase (the textbook number), in SI (Pa, m³ or mol, whichever was
    /// solved). Not a stable state.
    pub single_phase: Option<f64>,
}

impl Solved {
    pub fn value(&self, unknown: Unknown) -> f64 {
        match unknown {
            Unknown::Pressure => self.p_pa,
            Unknown::Volume => self.volume_m3,
            Unknown::Amount => self.amount_mol,
        }
    }
}

pub fn solve(fluid: &Fluid, x: &[f64], given: &Given, unknown: Unknown) -> Result<Solved, ThermoError> {
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
    let single_phase = if e.phase == Phase::TwoPhase { one_phase_value(fluid, x, t, v, n, p, unknown) } else { None };
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
        single_phase,
    })
}

/// The solved quantity from the model's equation as if the contents stayed one phase:
/// the pressure of n in V, or the volume (amount) of the one-phase root at P. None where
/// the equation gives no such state (below a cubic's co-volume, say).
fn one_phase_value(fluid: &Fluid, x: &[f64], t: f64, v: f64, n: f64, p: f64, unknown: Unknown) -> Option<f64> {
    match unknown {
        Unknown::Pressure => fluid.pressure_tv(t, v / n, x).ok(),
        Unknown::Volume => fluid.state_tp(t, p, x).ok().map(|s| n * s.molar_volume_m3),
        Unknown::Amount => fluid.state_tp(t, p, x).ok().map(|s| v / s.molar_volume_m3),
    }
}
