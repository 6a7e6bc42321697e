//! Equations of state and the state solvers built on them.
//!
//! [`Fluid`] binds a model to a list of gases; its methods take a temperature, a pressure
//! or molar volume and mole fractions, so that one fluid serves every step of a fill as the
//! composition in the cylinder changes.

pub mod cubic;
pub mod dual;
pub mod gerg;
pub mod kernel;
pub mod kij;
pub mod multifluid;
pub mod phases;
pub mod survey;

use std::fmt;

use serde::{Deserialize, Serialize};

use crate::gas::Catalogue;
use crate::units::{bar, R};
use cubic::{CubicComponent, CubicKind, Root};

/// Highest pressure accepted anywhere, Pa: no gas cylinder is filled above 1000 bar.
pub const MAX_PRESSURE_PA: f64 = 1000.0e5;

/// The equation of state used for a computation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, clap::ValueEnum)]
#[serde(rename_all = "lowercase")]
pub enum Model {
    /// Ideal gas, PV = nRT.
    Ideal,
    /// Van der Waals (1873), tabulated handbook a, b where known.
    Vdw,
    /// Redlich–Kwong (1949).
    Rk,
    /// Soave–Redlich–Kwong (1972).
    Srk,
    /// Peng–Robinson (1976).
    Pr,
    /// GERG-2008 (ISO 20765-2), for the 21 gases it covers.
    Gerg,
    /// Multi-fluid Helmholtz: each gas on its published reference equation of state,
    /// combined as GERG-2008 combines its own (see [`multifluid`]); for every gas.
    Multi,
}

impl Model {
    /// Every model, simplest first.
    pub const ALL: [Model; 7] = [Model::Ideal, Model::Vdw, Model::Rk, Model::Srk, Model::Pr, Model::Gerg, Model::Multi];

    /// The name used on the command line and in JSON.
    pub fn key(self) -> &'static str {
        match self {
            Model::Ideal => "ideal",
            Model::Vdw => "vdw",
            Model::Rk => "rk",
            Model::Srk => "srk",
            Model::Pr => "pr",
            Model::Gerg => "gerg",
            Model::Multi => "multi",
        }
    }

    /// The name for people.
    pub fn title(self) -> &'static str {
        match self {
            Model::Ideal => "ideal gas",
            Model::Vdw => "van der Waals",
            Model::Rk => "Redlich-Kwong",
            Model::Srk => "Soave-Redlich-Kwong",
            Model::Pr => "Peng-Robinson",
            Model::Gerg => "GERG-2008",
            Model::Multi => "multi-fluid",
        }
    }

    /// Whether the model is one of the cubic equations of state.
    pub fn is_cubic(self) -> bool {
        self.cubic_kind().is_some()
    }

    fn cubic_kind(self) -> Option<CubicKind> {
        match self {
            Model::Vdw => Some(CubicKind::VanDerWaals),
            Model::Rk => Some(CubicKind::RedlichKwong),
            Model::Srk => Some(CubicKind::SoaveRedlichKwong),
            Model::Pr => Some(CubicKind::PengRobinson),
            Model::Ideal | Model::Gerg | Model::Multi => None,
        }
    }
}

impl fmt::Display for Model {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

/// Why a state could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ThermoError {
    #[error("temperature {0} K is not above absolute zero")]
    Temperature(f64),
    #[error("pressure {0} bar must be above zero")]
    PressureNotPositive(f64),
    #[error("pressure {0:.1} bar is above 1000 bar, which no gas cylinder reaches")]
    PressureTooHigh(f64),
    #[error("volume {0} L must be above zero")]
    Volume(f64),
    #[error("amount {0} mol must be above zero")]
    Amount(f64),
    #[error("composition: {0}")]
    Composition(String),
    #[error(
        "molar volume {v_l_per_mol:.6} L/mol is not above the {model} co-volume b = {b_l_per_mol:.6} L/mol: \
         more gas than the model can fit in that volume"
    )]
    BelowCovolume { model: Model, v_l_per_mol: f64, b_l_per_mol: f64 },
    #[error("the {model} model gives no gas state here ({why})")]
    NoState { model: Model, why: String },
    #[error("GERG-2008 does not cover {}; choose another model (multi, pr, srk, rk, vdw, ideal)", .0.join(", "))]
    NotCovered(Vec<String>),
    #[error("fugacity coefficients are not available from the {0} model here")]
    NoFugacity(Model),
}

/// The state at a given temperature and pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TpState {
    /// Compressibility factor Z = Pv/RT.
    pub z: f64,
    /// Molar volume, m³/mol.
    pub molar_volume_m3: f64,
    /// True where the cubic has three real roots: the state lies near a phase boundary,
    /// and liquid may be present or close.
    pub near_condensation: bool,
    /// True where the stable root is the liquid-like one.
    pub liquid_like: bool,
}

/// A model bound to a list of gases.
#[derive(Debug, Clone)]
pub struct Fluid {
    model: Model,
    ids: Vec<String>,
    molar_masses: Vec<f64>,
    cubic: Vec<CubicComponent>,
    kij: Vec<Vec<f64>>,
    gerg: Option<gerg::Gerg>,
    multi: Option<std::sync::Arc<multifluid::Mixture>>,
    /// GERG-2008 in the multi-fluid form, for its own fugacities (phase equilibria).
    gerg_mix: Option<std::sync::Arc<multifluid::Mixture>>,
    /// The Peng–Robinson fluid on the same gases that gives first estimates (saturation
    /// starts) for a model that is not a cubic, made once.
    screen: Option<std::sync::Arc<Fluid>>,
    /// Whether the phases of a Helmholtz model are judged by the Peng–Robinson screen
    /// instead of its own fugacities: the quick estimate the screen shows at once (see
    /// [`Fluid::with_phases_estimated`]).
    phases_estimated: bool,
    /// [`Fluid::identity`] and its hash, made on first use (reset by every change of the
    /// equations).
    identity: std::sync::OnceLock<(std::sync::Arc<str>, u64)>,
}

impl Fluid {
    /// Bind `model` to the catalogue gases at `gases` (indices), with the model's
    /// published k_ij where the project has them (see [`kij`]).
    pub fn new(catalogue: &Catalogue, gases: &[usize], model: Model) -> Result<Fluid, ThermoError> {
        if gases.is_empty() {
            return Err(ThermoError::Composition("no components".into()));
        }
        let ids: Vec<String> = gases.iter().map(|&g| catalogue.gas(g).id().to_string()).collect();
        let id_refs: Vec<&str> = ids.iter().map(String::as_str).collect();
        let gerg = match model {
            Model::Gerg => Some(gerg::Gerg::new(&id_refs).map_err(ThermoError::NotCovered)?),
            _ => None,
        };
        let cubic = gases
            .iter()
            .map(|&g| {
                let gas = catalogue.gas(g);
                CubicComponent {
                    tc_k: gas.tc_k(),
                    pc_pa: gas.pc_pa(),
                    omega: gas.omega(),
                    tabulated_ab: gas
                        .record
                        .van_der_waals
                        .as_ref()
                        .map(|v| (v.a_bar_l2_per_mol2 * 0.1, v.b_l_per_mol * 1e-3)),
                }
            })
            .collect();
        let screen_kij = model.cubic_kind().is_none().then(|| kij::matrix(Model::Pr, &id_refs));
        let mut fluid = Fluid {
            model,
            molar_masses: gases.iter().map(|&g| catalogue.gas(g).molar_mass_g_per_mol).collect(),
            kij: kij::matrix(model, &id_refs),
            ids,
            cubic,
            gerg,
            multi: (model == Model::Multi).then(|| multifluid::Mixture::shared(catalogue, gases)),
            gerg_mix: match model {
                Model::Gerg => multifluid::Mixture::shared_gerg2008(catalogue, gases),
                _ => None,
            },
            screen: None,
            phases_estimated: false,
            identity: std::sync::OnceLock::new(),
        };
        if let Some(kij) = screen_kij {
            let screen = Fluid {
                model: Model::Pr,
                kij,
                gerg: None,
                multi: None,
                gerg_mix: None,
                identity: std::sync::OnceLock::new(),
                ..fluid.clone()
            };
            fluid.screen = Some(std::sync::Arc::new(screen));
        }
        Ok(fluid)
    }

    pub fn model(&self) -> Model {
        self.model
    }

    /// The multi-fluid fluid with its unpublished pairs combined by `estimate` instead (the
    /// same fluid for any other model).
    pub fn with_estimate(mut self, catalogue: &Catalogue, gases: &[usize], estimate: multifluid::Estimate) -> Fluid {
        if self.multi.is_some() {
            self.multi = Some(multifluid::Mixture::shared_with_estimate(catalogue, gases, estimate));
            self.identity = std::sync::OnceLock::new();
        }
        self
    }

    /// What this fluid's equations are, as a key: two fluids with one identity give the
    /// same answers (the model, the gases with their constants and k_ij, the Helmholtz
    /// mixture's set and estimate, whether the phases are the quick estimate). Made once.
    pub fn identity(&self) -> std::sync::Arc<str> {
        self.identity_and_hash().0.clone()
    }

    /// [`Fluid::identity`] with its hash (to key many answers by, cheaply).
    pub(crate) fn identity_and_hash(&self) -> &(std::sync::Arc<str>, u64) {
        self.identity.get_or_init(|| {
            use std::hash::{Hash, Hasher};
            let kij: Vec<u64> = self.kij.iter().flatten().map(|v| v.to_bits()).collect();
            let mix = self.helmholtz_mixture().map(|m| m.identity().to_string()).unwrap_or_default();
            let text =
                format!("{:?}|{:?}|{:?}|{kij:?}|{mix}|{}", self.model, self.ids, self.cubic, self.phases_estimated);
            let mut hasher = std::collections::hash_map::DefaultHasher::new();
            text.hash(&mut hasher);
            (text.into(), hasher.finish())
        })
    }

    /// The same fluid with its phases judged by the Peng–Robinson screen where `estimated`
    /// (a quick estimate, for the screen while the model's own judgement is made
    /// elsewhere): its single-phase pressures and densities stay its own, the stability
    /// test and any split are the cubic's. No change for a cubic or the ideal gas.
    pub fn with_phases_estimated(mut self, estimated: bool) -> Fluid {
        self.phases_estimated = estimated && self.screen.is_some() && !self.model.is_cubic();
        self.identity = std::sync::OnceLock::new();
        self
    }

    /// The model whose fugacities judge this fluid's phases.
    pub fn phase_model(&self) -> Model {
        if self.phases_estimated {
            Model::Pr
        } else {
            self.model
        }
    }

    /// The fluids that judge phases for this blend: this one and, for the multi-fluid model
    /// with pairs that have no published parameters, the same with the other usual estimate
    /// (Lorentz–Berthelot), so that the more condensing of the two can be taken.
    pub fn phase_judges(&self, catalogue: &Catalogue, gases: &[usize]) -> Vec<Fluid> {
        let mut judges = vec![self.clone()];
        if self.multi.as_ref().is_some_and(|m| !m.estimated().1.is_empty()) {
            judges.push(self.clone().with_estimate(catalogue, gases, multifluid::Estimate::LorentzBerthelot));
        }
        judges
    }

    /// Whether contents `x` have both gases of a pair whose parameters the multi-fluid model
    /// estimates: elsewhere its two usual estimates answer alike (see
    /// [`multifluid::Mixture::estimate_applies`]). False for every other model.
    pub fn estimate_applies(&self, x: &[f64]) -> bool {
        self.multi.as_ref().is_some_and(|m| m.estimate_applies(x))
    }

    /// The multi-fluid model behind this fluid, where it is that model.
    pub fn multifluid(&self) -> Option<&multifluid::Mixture> {
        self.multi.as_deref()
    }

    /// The Helmholtz mixture that gives this fluid's fugacities: the multi-fluid model, or
    /// GERG-2008 in that form. None for the cubics and the ideal gas.
    pub fn helmholtz_mixture(&self) -> Option<std::sync::Arc<multifluid::Mixture>> {
        self.multi.clone().or_else(|| self.gerg_mix.clone())
    }

    /// Critical temperatures of the gases, K.
    pub fn critical_temperatures(&self) -> Vec<f64> {
        self.cubic.iter().map(|c| c.tc_k).collect()
    }

    /// Mean molar mass, g/mol.
    pub fn molar_mass(&self, x: &[f64]) -> f64 {
        x.iter().zip(&self.molar_masses).map(|(a, b)| a * b).sum()
    }

    fn check_x(&self, x: &[f64]) -> Result<(), ThermoError> {
        if x.len() != self.ids.len() {
            return Err(ThermoError::Composition(format!("{} mole fractions for {} gases", x.len(), self.ids.len())));
        }
        if x.iter().any(|v| !v.is_finite() || *v < 0.0) {
            return Err(ThermoError::Composition("mole fractions must be finite and not negative".into()));
        }
        let sum: f64 = x.iter().sum();
        if (sum - 1.0).abs() > 1e-9 {
            return Err(ThermoError::Composition(format!("mole fractions add up to {sum}, not 1")));
        }
        Ok(())
    }

    fn check_t(t_k: f64) -> Result<(), ThermoError> {
        if t_k.is_finite() && t_k > 0.0 {
            Ok(())
        } else {
            Err(ThermoError::Temperature(t_k))
        }
    }

    fn check_p(p_pa: f64) -> Result<(), ThermoError> {
        if !(p_pa.is_finite() && p_pa > 0.0) {
            Err(ThermoError::PressureNotPositive(bar(p_pa)))
        } else if p_pa > MAX_PRESSURE_PA {
            Err(ThermoError::PressureTooHigh(bar(p_pa)))
        } else {
            Ok(())
        }
    }

    fn mix(&self, kind: CubicKind, t_k: f64, x: &[f64]) -> cubic::Mix {
        cubic::mix(kind, &self.cubic, &self.kij, x, t_k)
    }

    /// Z, molar volume and root information at (T, P, x).
    pub fn state_tp(&self, t_k: f64, p_pa: f64, x: &[f64]) -> Result<TpState, ThermoError> {
        Self::check_t(t_k)?;
        Self::check_p(p_pa)?;
        self.check_x(x)?;
        let rt = R * t_k;
        let (z, near, liquid) = match (self.model, self.model.cubic_kind()) {
            (Model::Ideal, _) => (1.0, false, false),
            (_, Some(kind)) => {
                let m = self.mix(kind, t_k, x);
                let s = cubic::solve_z(kind, &m, t_k, p_pa).ok_or_else(|| ThermoError::NoState {
                    model: self.model,
                    why: "no root of the cubic above the co-volume".into(),
                })?;
                (s.z, s.root != Root::Single, s.root == Root::LiquidOfThree)
            }
            // Z with our R: GERG-2008 carries its own R (8.314472), and mixing the two would
            // shift every amount by 1.1e-6.
            (_, None) => (p_pa / (self.helmholtz_density(t_k, p_pa, x, None)? * rt), false, false),
        };
        Ok(TpState { z, molar_volume_m3: z * rt / p_pa, near_condensation: near, liquid_like: liquid })
    }

    /// Molar density, mol/m³, at (T, P) under GERG-2008 or the multi-fluid model: from
    /// `rho0` on the branch Newton's method reaches, else by the model's own search (the
    /// stable root under the multi-fluid model).
    fn helmholtz_density(&self, t_k: f64, p_pa: f64, x: &[f64], rho0: Option<f64>) -> Result<f64, ThermoError> {
        let rho = match (&self.multi, &self.gerg, rho0) {
            (Some(m), _, Some(_)) => m.density(t_k, p_pa, x, rho0),
            (Some(m), _, None) => m.stable_density(t_k, p_pa, x),
            (None, Some(g), Some(start)) => g.density_from(x, t_k, p_pa, start),
            (None, Some(g), None) => g.density(x, t_k, p_pa),
            (None, None, _) => return Err(ThermoError::NotCovered(self.ids.clone())),
        };
        // Where the model's own search finds no root (close to the phase boundary), the
        // stable root from Peng–Robinson's starts (see `kernel::HelmholtzAt`).
        let rho = rho.or_else(|| {
            let mut k = kernel::Kernel::new(self, t_k)?;
            k.stable_z(p_pa, x).map(|z| p_pa / (z * R * t_k))
        });
        rho.ok_or_else(|| ThermoError::NoState {
            model: self.model,
            why: format!("the {} density iteration found no root; the state may be two-phase", self.model.title()),
        })
    }

    /// Pressure, Pa, at (T, molar volume v in m³/mol, x).
    pub fn pressure_tv(&self, t_k: f64, v_m3_per_mol: f64, x: &[f64]) -> Result<f64, ThermoError> {
        Self::check_t(t_k)?;
        self.check_x(x)?;
        if !(v_m3_per_mol.is_finite() && v_m3_per_mol > 0.0) {
            return Err(ThermoError::Volume(v_m3_per_mol * 1e3));
        }
        let p = match (self.model, self.model.cubic_kind()) {
            (Model::Ideal, _) => R * t_k / v_m3_per_mol,
            (_, Some(kind)) => {
                let m = self.mix(kind, t_k, x);
                if v_m3_per_mol <= m.b {
                    return Err(ThermoError::BelowCovolume {
                        model: self.model,
                        v_l_per_mol: v_m3_per_mol * 1e3,
                        b_l_per_mol: m.b * 1e3,
                    });
                }
                cubic::pressure(kind, &m, t_k, v_m3_per_mol)
            }
            (_, None) => match (&self.multi, &self.gerg) {
                (Some(m), _) => m.pressure(t_k, 1.0 / v_m3_per_mol, x).0,
                // Not finite: refused below.
                (None, Some(g)) => g.pressure(x, t_k, 1.0 / v_m3_per_mol).unwrap_or(f64::NAN),
                (None, None) => return Err(ThermoError::NotCovered(self.ids.clone())),
            },
        };
        if !(p.is_finite() && p > 0.0) {
            return Err(ThermoError::NoState {
                model: self.model,
                why: format!("the equation gives {:.3} bar at this density", bar(p)),
            });
        }
        Self::check_p(p)?;
        Ok(p)
    }

    /// ∂P/∂v at (T, v, x) for the cubic models and the ideal gas, Pa mol m⁻³.
    pub fn dp_dv(&self, t_k: f64, v_m3_per_mol: f64, x: &[f64]) -> Option<f64> {
        match (self.model, self.model.cubic_kind()) {
            (Model::Ideal, _) => Some(-R * t_k / (v_m3_per_mol * v_m3_per_mol)),
            (_, Some(kind)) => Some(cubic::dp_dv(kind, &self.mix(kind, t_k, x), t_k, v_m3_per_mol)),
            _ => None,
        }
    }

    /// ln φ_i at (T, P, x) on the stable root.
    pub fn ln_phi(&self, t_k: f64, p_pa: f64, x: &[f64]) -> Result<Vec<f64>, ThermoError> {
        Self::check_t(t_k)?;
        Self::check_p(p_pa)?;
        self.check_x(x)?;
        match (self.model, self.model.cubic_kind()) {
            (Model::Ideal, _) => Ok(vec![0.0; x.len()]),
            (_, Some(kind)) => {
                let m = self.mix(kind, t_k, x);
                let s = cubic::solve_z(kind, &m, t_k, p_pa)
                    .ok_or_else(|| ThermoError::NoState { model: self.model, why: "no root".into() })?;
                Ok(cubic::ln_phi(kind, &m, &s))
            }
            _ => Err(ThermoError::NoFugacity(self.model)),
        }
    }

    /// Amount of gas, mol, in `volume_m3` at (T, P, x).
    /// Z along the isotherm `t_k` at the pressures given (ascending), None where the model
    /// has no state. Under GERG-2008 and the multi-fluid model each density is found by
    /// Newton's method from the extrapolation of the ones before (the crate's own search
    /// starts from the ideal gas each time).
    pub fn isotherm_z(&self, t_k: f64, pressures_pa: &[f64], x: &[f64]) -> Vec<Option<f64>> {
        let composition_ok = self.check_x(x).is_ok();
        // The densities found so far on this branch, (P, ρ), the last three kept: the start
        // of each Newton search is their quadratic extrapolation.
        let mut known: Vec<(f64, f64)> = Vec::with_capacity(3);
        pressures_pa
            .iter()
            .map(|&p| {
                let helmholtz = self.gerg.is_some() || self.multi.is_some();
                let warm = (helmholtz && !known.is_empty() && composition_ok && Self::check_p(p).is_ok())
                    .then(|| self.helmholtz_density(t_k, p, x, Some(extrapolate(&known, p))).ok())
                    .flatten();
                let rho = match warm {
                    Some(rho) => Some(rho),
                    None => self.state_tp(t_k, p, x).ok().map(|s| 1.0 / s.molar_volume_m3),
                };
                match rho {
                    Some(rho) => {
                        if known.len() == 3 {
                            known.remove(0);
                        }
                        known.push((p, rho));
                    }
                    None => known.clear(),
                }
                rho.map(|rho| p / (rho * R * t_k))
            })
            .collect()
    }

    /// ∂P/∂n_k at (T, V, n), Pa/mol, analytic, for the ideal gas and the cubics (None for
    /// GERG-2008, whose crate has no composition derivatives). With the extensive
    /// B = Σ n_i b_i, A = Σ n_i n_j a_ij, N = Σ n_i and D = (V + εB)(V + σB):
    /// ∂P/∂n_k = RT/(V − B) + NRT b_k/(V − B)² − 2 Σ_j n_j a_kj / D
    ///           + A b_k ((ε + σ)V + 2εσB) / D².
    pub fn dpressure_damounts(&self, t_k: f64, volume_m3: f64, amounts_mol: &[f64]) -> Option<Vec<f64>> {
        let rt = R * t_k;
        match (self.model, self.model.cubic_kind()) {
            (Model::Ideal, _) => Some(vec![rt / volume_m3; amounts_mol.len()]),
            (_, Some(kind)) => {
                let mut k = kernel::CubicAt::new(self, t_k)?;
                let (a_row, b_i) = k.extensive_rows(amounts_mol);
                let v = volume_m3;
                let n: f64 = amounts_mol.iter().sum();
                let big_b: f64 = amounts_mol.iter().zip(&b_i).map(|(ni, bi)| ni * bi).sum();
                let big_a: f64 = amounts_mol.iter().zip(&a_row).map(|(ni, ai)| ni * ai).sum();
                if !(v > big_b) {
                    return None;
                }
                let (eps, sig) = kind.epsilon_sigma();
                let d = (v + eps * big_b) * (v + sig * big_b);
                let dd = (eps + sig) * v + 2.0 * eps * sig * big_b;
                Some(
                    (0..amounts_mol.len())
                        .map(|i| {
                            rt / (v - big_b) + n * rt * b_i[i] / ((v - big_b) * (v - big_b)) - 2.0 * a_row[i] / d
                                + big_a * b_i[i] * dd / (d * d)
                        })
                        .collect(),
                )
            }
            _ => None,
        }
    }

    pub fn amount(&self, t_k: f64, p_pa: f64, volume_m3: f64, x: &[f64]) -> Result<f64, ThermoError> {
        if !(volume_m3.is_finite() && volume_m3 > 0.0) {
            return Err(ThermoError::Volume(volume_m3 * 1e3));
        }
        Ok(volume_m3 / self.state_tp(t_k, p_pa, x)?.molar_volume_m3)
    }

    /// Volume, m³, that `amount_mol` occupies at (T, P, x).
    pub fn volume(&self, t_k: f64, p_pa: f64, amount_mol: f64, x: &[f64]) -> Result<f64, ThermoError> {
        if !(amount_mol.is_finite() && amount_mol > 0.0) {
            return Err(ThermoError::Amount(amount_mol));
        }
        Ok(amount_mol * self.state_tp(t_k, p_pa, x)?.molar_volume_m3)
    }

    /// Pressure, Pa, of the amounts `amounts_mol` (one per gas) in `volume_m3` at T.
    pub fn pressure(&self, t_k: f64, volume_m3: f64, amounts_mol: &[f64]) -> Result<f64, ThermoError> {
        if !(volume_m3.is_finite() && volume_m3 > 0.0) {
            return Err(ThermoError::Volume(volume_m3 * 1e3));
        }
        if amounts_mol.iter().any(|n| !n.is_finite() || *n < 0.0) {
            return Err(ThermoError::Amount(amounts_mol.iter().copied().fold(f64::NAN, f64::min)));
        }
        let total: f64 = amounts_mol.iter().sum();
        if !(total > 0.0) {
            return Err(ThermoError::Amount(total));
        }
        let x: Vec<f64> = amounts_mol.iter().map(|n| n / total).collect();
        self.pressure_tv(t_k, volume_m3 / total, &x)
    }
}

/// The Lagrange polynomial through `points` (P, ρ) evaluated at `p`; the last point's ρ
/// where that is not a positive number.
fn extrapolate(points: &[(f64, f64)], p: f64) -> f64 {
    let last = points.last().map_or(0.0, |q| q.1);
    let value: f64 = points
        .iter()
        .enumerate()
        .map(|(i, &(pi, rho_i))| {
            let weight: f64 =
                points.iter().enumerate().filter(|(j, _)| *j != i).map(|(_, &(pj, _))| (p - pj) / (pi - pj)).product();
            weight * rho_i
        })
        .sum();
    if value.is_finite() && value > 0.0 {
        value
    } else {
        last
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fluid(ids: &[&str], model: Model) -> Fluid {
        let c = Catalogue::built_in();
        let idx: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        Fluid::new(&c, &idx, model).unwrap()
    }

    #[test]
    fn the_analytic_pressure_derivative_matches_central_differences() {
        let n = [50.0, 4.0, 3.0, 2.5];
        for model in [Model::Ideal, Model::Vdw, Model::Rk, Model::Srk, Model::Pr] {
            let f = fluid(&["CH4", "N2", "CO2", "C2H6"], model);
            let d = f.dpressure_damounts(288.15, 0.01, &n).unwrap();
            for k in 0..4 {
                let h = 1e-6 * n[k];
                let (mut up, mut down) = (n, n);
                up[k] += h;
                down[k] -= h;
                let fd =
                    (f.pressure(288.15, 0.01, &up).unwrap() - f.pressure(288.15, 0.01, &down).unwrap()) / (2.0 * h);
                assert!((d[k] / fd - 1.0).abs() < 1e-6, "{model} component {k}: {} vs {fd}", d[k]);
            }
        }
        assert!(fluid(&["CH4", "N2"], Model::Gerg).dpressure_damounts(288.15, 0.01, &[1.0, 1.0]).is_none());
    }

    #[test]
    fn a_kept_saturation_is_the_one_of_the_gas_constants_and_model_asked() {
        // The same id with another critical temperature (a user's catalogue) must not be
        // answered from the saturations kept for the built-in one, nor one model for another.
        let built_in = Catalogue::built_in();
        let i = built_in.index_of("C3H8").unwrap();
        let mut record = built_in.gas(i).record.clone();
        record.critical_temperature_k += 5.0;
        let text = format!("Catalogue(gases: [{}])", ron::to_string(&record).unwrap());
        let changed = built_in.clone().with_overrides(Catalogue::parse(&text, "user").unwrap());
        let t = 280.0;
        let mut seen = Vec::new();
        for catalogue in [&built_in, &changed] {
            for model in [Model::Pr, Model::Srk, Model::Rk] {
                let f = Fluid::new(catalogue, &[catalogue.index_of("C3H8").unwrap()], model).unwrap();
                let first = f.saturation(t, &[1.0]).unwrap().unwrap();
                assert_eq!(f.saturation(t, &[1.0]).unwrap(), Some(first));
                assert!(first.pressure_pa > 1e5 && first.pressure_pa < 1e7);
                seen.push(first.pressure_pa);
            }
        }
        for (k, p) in seen.iter().enumerate() {
            assert!(!seen[..k].contains(p), "{seen:?}");
        }
    }

    #[test]
    fn the_isotherm_from_one_density_to_the_next_is_the_isotherm_point_by_point() {
        let x = [0.85, 0.05, 0.05, 0.05];
        for model in [Model::Gerg, Model::Multi, Model::Pr, Model::Ideal] {
            let f = fluid(&["CH4", "N2", "CO2", "C2H6"], model);
            let pressures: Vec<f64> = (0..=30).map(|k| 1e5 + 6e5 * k as f64).collect();
            for (p, z) in pressures.iter().zip(f.isotherm_z(288.15, &pressures, &x)) {
                let own = f.state_tp(288.15, *p, &x).unwrap().z;
                assert!((z.unwrap() / own - 1.0).abs() < 1e-12, "{model} at {p}: {z:?} vs {own}");
            }
        }
    }

    #[test]
    fn every_model_is_ideal_at_one_millibar() {
        // Permanent gases: |Z - 1| = |B| P/RT is below 1e-6 at 1 mbar for every model.
        for model in Model::ALL {
            let f = fluid(&["N2", "O2", "Ar", "CH4", "He"], model);
            let s = f.state_tp(288.15, 100.0, &[0.7, 0.1, 0.1, 0.05, 0.05]).unwrap();
            assert!((s.z - 1.0).abs() < 1e-6, "{model}: Z = {}", s.z);
        }
    }

    #[test]
    fn z_minus_one_vanishes_linearly_with_pressure_for_every_gas() {
        // Strongly attracting gases (CO2, SF6, the vapours) still have |Z - 1| of a few 1e-6
        // at 1 mbar, as real gases do (second virial coefficient); what every model must
        // show is Z - 1 proportional to P as P -> 0.
        let c = Catalogue::built_in();
        for model in [Model::Vdw, Model::Rk, Model::Srk, Model::Pr] {
            for g in 0..c.gases().len() {
                let f = Fluid::new(&c, &[g], model).unwrap();
                let z1 = f.state_tp(400.0, 100.0, &[1.0]).unwrap().z - 1.0;
                let z2 = f.state_tp(400.0, 10.0, &[1.0]).unwrap().z - 1.0;
                assert!(z1.abs() < 1e-4, "{model} {}: {z1}", c.gas(g).id());
                assert!((z1 / z2 - 10.0).abs() < 1e-3, "{model} {}: {z1} {z2}", c.gas(g).id());
            }
        }
    }

    #[test]
    fn out_of_domain_inputs_are_errors_not_nan() {
        let f = fluid(&["N2"], Model::Pr);
        assert!(matches!(f.state_tp(0.0, 1e5, &[1.0]), Err(ThermoError::Temperature(_))));
        assert!(matches!(f.state_tp(-5.0, 1e5, &[1.0]), Err(ThermoError::Temperature(_))));
        assert!(matches!(f.state_tp(f64::NAN, 1e5, &[1.0]), Err(ThermoError::Temperature(_))));
        assert!(matches!(f.state_tp(300.0, 0.0, &[1.0]), Err(ThermoError::PressureNotPositive(_))));
        assert!(matches!(f.state_tp(300.0, 1001e5, &[1.0]), Err(ThermoError::PressureTooHigh(_))));
        assert!(matches!(f.amount(300.0, 1e5, 0.0, &[1.0]), Err(ThermoError::Volume(_))));
        assert!(matches!(f.volume(300.0, 1e5, -1.0, &[1.0]), Err(ThermoError::Amount(_))));
        assert!(matches!(f.pressure(300.0, 1e-3, &[0.0]), Err(ThermoError::Amount(_))));
        assert!(matches!(f.pressure_tv(300.0, 1e-6, &[1.0]), Err(ThermoError::BelowCovolume { .. })));
        assert!(matches!(f.state_tp(300.0, 1e5, &[0.5]), Err(ThermoError::Composition(_))));
    }

    #[test]
    fn the_two_estimates_answer_alike_where_no_estimated_pair_is_present() {
        // Benzene and nitrogen have no published parameters in the multi-fluid model (an
        // estimated pair); every other pair here has them.
        let c = Catalogue::built_in();
        let gases: Vec<usize> = ["n-C4H10", "n-C5H12", "C6H6", "N2"].iter().map(|id| c.index_of(id).unwrap()).collect();
        let linear = Fluid::new(&c, &gases, Model::Multi).unwrap();
        let pairs = linear.multifluid().unwrap().estimated().1.to_vec();
        assert_eq!(pairs, [("C6H6".to_string(), "N2".to_string())]);
        let lb = linear.clone().with_estimate(&c, &gases, multifluid::Estimate::LorentzBerthelot);
        let v = 0.01;
        let present = |x: &[f64]| -> Vec<usize> { (0..x.len()).filter(|&i| x[i] != 0.0).collect() };
        let ln_phi = |f: &Fluid, t: f64, x: &[f64]| -> Vec<f64> {
            let mut out = vec![0.0; x.len()];
            let mut k = kernel::Kernel::new(f, t).unwrap();
            k.ln_phi_into(5e5, x, kernel::RootChoice::Stable, &mut out).unwrap();
            out
        };
        // Without both gases of an estimated pair: the same verdicts and the same
        // fugacities of the gases present, to the bit, gas or liquid, split or not (the
        // first contents stand partly liquid at 280 K).
        for amounts in [[0.3, 0.3, 0.0, 0.0], [0.2, 0.1, 0.0, 0.5], [0.0, 0.0, 0.2, 0.0], [0.0, 0.05, 0.05, 0.0]] {
            assert!(!linear.estimate_applies(&amounts) && !lb.estimate_applies(&amounts));
            for t in [250.0, 280.0, 310.0] {
                assert_eq!(linear.condensed_tv(t, v, &amounts).unwrap(), lb.condensed_tv(t, v, &amounts).unwrap());
                // A flash also stops on the K-values of the gases absent (their fugacities at
                // infinite dilution, which the estimate moves): the same split within that.
                let (a, b) =
                    (linear.equilibrium_tv(t, v, &amounts).unwrap(), lb.equilibrium_tv(t, v, &amounts).unwrap());
                assert_eq!(a.phase, b.phase);
                assert!((a.pressure_pa / b.pressure_pa - 1.0).abs() < 1e-9, "{amounts:?} at {t} K");
                let total: f64 = amounts.iter().sum();
                let x: Vec<f64> = amounts.iter().map(|n| n / total).collect();
                let (la, lbb) = (ln_phi(&linear, t, &x), ln_phi(&lb, t, &x));
                for i in present(&x) {
                    assert_eq!(la[i], lbb[i], "{amounts:?} at {t} K");
                }
            }
        }
        assert!(linear.condensed_tv(280.0, v, &[0.3, 0.3, 0.0, 0.0]).unwrap());
        // With both gases of an estimated pair, the estimates give other fugacities.
        let x = [0.3, 0.0, 0.2, 0.5];
        assert!(linear.estimate_applies(&x) && lb.estimate_applies(&x));
        assert_ne!(ln_phi(&linear, 300.0, &x)[2], ln_phi(&lb, 300.0, &x)[2]);
        // No other model has estimates to tell apart.
        assert!(!Fluid::new(&c, &gases, Model::Pr).unwrap().estimate_applies(&x));
    }

    #[test]
    fn gerg_refuses_gases_it_does_not_cover() {
        let c = Catalogue::built_in();
        let idx: Vec<usize> = ["N2", "SO2", "NO"].iter().map(|id| c.index_of(id).unwrap()).collect();
        let e = Fluid::new(&c, &idx, Model::Gerg).unwrap_err();
        assert_eq!(e, ThermoError::NotCovered(vec!["SO2".into(), "NO".into()]));
        assert!(e.to_string().contains("SO2, NO"));
    }

    #[test]
    fn three_roots_flag_near_condensation() {
        // Propane at 15 °C and 6 bar, below its vapour pressure of 7.3 bar (CoolProp):
        // the PR cubic has liquid and vapour roots, and the vapour is stable.
        let f = fluid(&["C3H8"], Model::Pr);
        let s = f.state_tp(288.15, 6e5, &[1.0]).unwrap();
        assert!(s.near_condensation && !s.liquid_like);
        let s = f.state_tp(288.15, 9e5, &[1.0]).unwrap();
        assert!(s.near_condensation && s.liquid_like);
        let s = fluid(&["N2"], Model::Pr).state_tp(288.15, 200e5, &[1.0]).unwrap();
        assert!(!s.near_condensation);
    }
}
