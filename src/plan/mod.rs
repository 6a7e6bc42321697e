//! The fill plan: from an order to the readings at which to stop.
//!
//! The cylinder is filled one source at a time. For each step the plan gives the amount
//! and mass to add, the cumulative scale reading, and the pressure reading after the step
//! at the fill temperature, all under a real-gas model; the sum of the pressures each gas
//! would exert alone is not the total (Dalton's rule of additive pressures fails at
//! cylinder pressures), which is why a plan made with ideal partial pressures misses.

pub mod accuracy;
pub mod premix;
pub mod replan;
pub mod sources;

use nalgebra::{DMatrix, DVector};
use rayon::prelude::*;

use crate::gas::Catalogue;
use crate::recipe::{Before, Fill, Order};
use crate::thermo::{gerg, Fluid, Model, ThermoError};
use crate::units::{bar, R, STANDARD_AMBIENT_PA};

/// What the bench's instruments can resolve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resolutions {
    /// Smallest pressure step the fill gauge shows, Pa.
    pub gauge_pa: f64,
    /// Smallest mass step the scale shows, g.
    pub scale_g: f64,
}

impl Default for Resolutions {
    /// 0.1 bar (a digital 0–250 bar transducer) and 0.1 g (a cylinder balance): common
    /// practice, no source.
    fn default() -> Self {
        Resolutions { gauge_pa: 0.1e5, scale_g: 0.1 }
    }
}

/// Choices that override the recipe.
#[derive(Debug, Clone, Default)]
pub struct PlanOptions {
    /// The model that judges each step's liquid; None: the blend's reference equations (a
    /// cubic here is a quick estimate, marked as one where shown).
    pub phase_judge: Option<Model>,
    /// The model asked for; wins over the recipe's.
    pub model: Option<Model>,
    /// The model used when neither the options nor the recipe name one (a setting).
    pub default_model: Option<Model>,
    pub fill_temperature_k: Option<f64>,
    /// Source names in fill order; every source exactly once.
    pub order: Option<Vec<String>>,
    pub resolutions: Resolutions,
    /// Lowest storage temperature, K, down to which each step is judged for liquid
    /// (default 0 °C, the settings' default).
    pub min_temperature_k: Option<f64>,
    /// Leave out the "stopping at each model's readings" comparison (the screen shows it
    /// only on the printed sheet, and makes it then).
    pub skip_following: bool,
    /// Plan only what the screening reads ([`crate::checks::screen`]: the steps with their
    /// judgements, the components, the fluid): no other model's plan (`models` holds the
    /// plan's own model alone), no premix proposal and no comparison of following readings.
    /// For `check`, the library's screening column and the certificate's cautions, which
    /// show nothing else of the plan.
    pub screening_only: bool,
    /// Plan each premix stage for its steps and their flags alone, as for the screening (no
    /// other model's plan): the screen shows no more of a stage, where `plan`'s JSON gives
    /// a stage's whole plan.
    pub stage_steps_only: bool,
}

/// The lowest storage temperature when none is given: 0 °C (common practice for cylinders
/// stored indoors; the settings carry the lab's own).
pub const DEFAULT_MIN_TEMPERATURE_K: f64 = 273.15;

/// Why there is no plan.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    #[error("{0}")]
    Thermo(#[from] ThermoError),
    #[error("the target cannot be made from these sources:\n{}", format_unreachable(.0))]
    Unreachable(Vec<Unreachable>),
    #[error("fill order: {0}")]
    Order(String),
    #[error(
        "the fill comes to {final_bar:.2} bar at the reference temperature, above the cylinder's test pressure of \
         {test_bar:.2} bar; this fill must not be made"
    )]
    AboveTestPressure { final_bar: f64, test_bar: f64 },
    #[error(
        "the heel already holds {heel_mol:.6} mol of {id}, more than the {needed_mol:.6} mol the finished blend \
         may hold; vent the cylinder lower (or evacuate it) before the fill"
    )]
    HeelTooRich { id: String, heel_mol: f64, needed_mol: f64 },
}

/// One component that the sources cannot deliver.
#[derive(Debug, Clone, PartialEq)]
pub struct Unreachable {
    pub id: String,
    pub target_fraction: f64,
    /// The closest composition the sources can give.
    pub closest_fraction: f64,
}

fn format_unreachable(rows: &[Unreachable]) -> String {
    rows.iter()
        .map(|r| {
            format!(
                "  {}: target {} mol/mol, closest possible {} mol/mol ({} % relative)",
                r.id,
                r.target_fraction,
                r.closest_fraction,
                crate::units::signed(
                    if r.target_fraction > 0.0 {
                        (r.closest_fraction / r.target_fraction - 1.0) * 100.0
                    } else {
                        f64::INFINITY
                    },
                    4
                )
            )
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Why a step deserves a second look.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StepFlag {
    /// The pressure increment is below the gauge resolution.
    BelowGaugeResolution,
    /// The mass added is below the scale resolution.
    BelowScaleResolution,
    /// Liquid forms from what is in the cylinder after this step at the fill temperature
    /// (or, after the last step, on cooling to the lowest storage temperature): the stop
    /// reading lies above the dew pressure.
    AboveDewPoint,
    /// What is in the cylinder after this (not the last) step is gas at the fill
    /// temperature but condenses if the cylinder cools to the lowest storage temperature
    /// before the fill is finished.
    CondensesIfCooled,
}

impl StepFlag {
    /// Whether the flag is about dosing too little (a premix helps).
    pub fn too_small(self) -> bool {
        matches!(self, StepFlag::BelowGaugeResolution | StepFlag::BelowScaleResolution)
    }

    pub fn key(self) -> &'static str {
        match self {
            StepFlag::BelowGaugeResolution => "below-gauge-resolution",
            StepFlag::BelowScaleResolution => "below-scale-resolution",
            StepFlag::AboveDewPoint => "above-dew-point",
            StepFlag::CondensesIfCooled => "condenses-if-cooled",
        }
    }
}

/// One addition.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    /// Source name: canonical id of a pure gas, or the premix name.
    pub source: String,
    pub add_amount_mol: f64,
    pub add_mass_g: f64,
    /// Scale reading after the step, g: from the tare when the recipe gives one, else net.
    pub scale_reading_g: f64,
    /// Absolute pressure after the step at `temperature_k`, Pa.
    pub pressure_after_pa: f64,
    /// Pressure increment of this step, Pa.
    pub increment_pa: f64,
    /// Cylinder temperature the reading is for, K.
    pub temperature_k: f64,
    /// Amount of each plan gas in the cylinder after the step, mol.
    pub amounts_after_mol: Vec<f64>,
    pub flags: Vec<StepFlag>,
    /// The contents after this step are liquid or two-phase at the fill temperature (the
    /// reading is then their equilibrium pressure).
    pub liquid_at_fill: bool,
}

/// One component of the blend.
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentRow {
    pub gas: usize,
    pub mole_fraction: f64,
    pub amount_mol: f64,
    pub mass_g: f64,
    /// x_i P at the reference temperature, Pa.
    pub partial_pressure_pa: f64,
    /// The pressure the component alone would exert in the cylinder at the reference
    /// temperature, Pa (None where the model has no gas state for it).
    pub alone_pressure_pa: Option<f64>,
    /// Allowed deviation of the mole fraction, if the recipe gives one.
    pub tolerance: Option<f64>,
}

/// What was in the cylinder before the first addition (a heel).
#[derive(Debug, Clone, PartialEq)]
pub struct Heel {
    /// Amount of each plan gas, mol.
    pub amounts_mol: Vec<f64>,
    pub mass_g: f64,
    /// The scale reading before the first addition, g: the tare (when given) and the heel.
    pub scale_reading_g: f64,
    /// Its pressure at the fill temperature: the gauge's reading before the first addition, Pa.
    pub pressure_at_fill_pa: f64,
}

/// Blend totals at the reference temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct Totals {
    pub pressure_pa: f64,
    pub temperature_k: f64,
    pub amount_mol: f64,
    pub mass_g: f64,
    pub z: f64,
    pub density_g_per_l: f64,
    /// The gas content as a volume at 15 °C and 101.325 kPa (ISO 13443), m³.
    pub volume_at_reference_m3: f64,
}

/// Another model's plan for the same order.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelPlan {
    pub model: Model,
    pub result: Result<ModelFigures, String>,
}

/// The figures of one model's plan.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelFigures {
    pub amount_mol: f64,
    pub z: f64,
    /// Stop readings of each step at the fill temperature, Pa.
    pub step_pressures_pa: Vec<f64>,
}

/// The composition made by stopping at one model's pressure readings, when the gas
/// behaves as the `truth` model says.
#[derive(Debug, Clone, PartialEq)]
pub struct Followed {
    /// Whose stop readings were followed.
    pub targets_of: Model,
    /// Mole fraction made, per plan gas.
    pub fractions: Vec<f64>,
    /// (made / target − 1) in %, per plan gas (0 for gases with no target).
    pub relative_error_percent: Vec<f64>,
    /// Per plan gas: outside the recipe tolerance.
    pub out_of_tolerance: Vec<bool>,
}

/// Stopping at each model's readings, judged by one model.
#[derive(Debug, Clone, PartialEq)]
pub struct Following {
    pub truth: Model,
    pub rows: Vec<Followed>,
}

/// A complete fill plan.
#[derive(Debug, Clone)]
pub struct Plan {
    pub model: Model,
    /// The fluid the plan was computed with (for temperature corrections).
    pub fluid: Fluid,
    /// Catalogue indices of the plan gases: the targets, then gases the sources bring.
    pub gases: Vec<usize>,
    pub volume_m3: f64,
    pub totals: Totals,
    pub components: Vec<ComponentRow>,
    pub steps: Vec<Step>,
    pub ambient_pa: f64,
    pub fill_temperature_k: f64,
    pub models: Vec<ModelPlan>,
    pub following: Vec<Following>,
    pub premixes: Vec<premix::Proposal>,
    /// The heel the fill starts from, if the cylinder is not evacuated.
    pub heel: Option<Heel>,
    /// A liquefied-gas fill: the finished blend is liquid or two-phase at the reference
    /// temperature, so the additions are stopped by the scale, not the gauge.
    pub by_mass: bool,
    /// Things the blender should know (sources not used, pressure above working pressure).
    pub notes: Vec<String>,
}

impl Plan {
    /// The reading to stop at for step `index` when the cylinder is at `t_measured_k`
    /// now, Pa absolute.
    pub fn corrected_target_pa(&self, index: usize, t_measured_k: f64) -> Result<f64, ThermoError> {
        corrected_target_pa(&self.fluid, self.volume_m3, &self.steps[index].amounts_after_mol, t_measured_k)
    }

    /// What a reading `reading_pa` taken at cylinder temperature `t_k` after step `index`
    /// comes to at 15 °C: the amount in the cylinder from the reading (with the step's
    /// composition), then its pressure at the reference temperature of the rating.
    pub fn settled_from_reading_pa(&self, index: usize, reading_pa: f64, t_k: f64) -> Result<f64, ThermoError> {
        let after = &self.steps[index].amounts_after_mol;
        let total: f64 = after.iter().sum();
        let x: Vec<f64> = after.iter().map(|n| n / total).collect();
        let n = self.fluid.amount(t_k, reading_pa, self.volume_m3, &x)?;
        let amounts: Vec<f64> = x.iter().map(|xi| xi * n).collect();
        self.fluid.pressure(crate::units::REFERENCE_TEMPERATURE_K, self.volume_m3, &amounts)
    }
}

/// The target reading after a step for the cylinder temperature measured now: the
/// pressure of the gas that will be in the cylinder after the step, at that temperature.
pub fn corrected_target_pa(
    fluid: &Fluid,
    volume_m3: f64,
    amounts_after_mol: &[f64],
    t_measured_k: f64,
) -> Result<f64, ThermoError> {
    fluid.pressure_in_cylinder(t_measured_k, volume_m3, amounts_after_mol)
}

/// The plan's gases, target vector and source matrix.
struct Setup {
    gases: Vec<usize>,
    x_target: Vec<f64>,
    /// Components × sources.
    a: DMatrix<f64>,
    /// The source amounts for one mole of the blend from an empty cylinder (the same under
    /// every model: they scale with the total), solved once.
    per_mole: std::sync::OnceLock<DVector<f64>>,
}

fn setup(order: &Order) -> Setup {
    let mut gases: Vec<usize> = order.composition.gases.clone();
    let heel = match &order.before {
        Before::Heel { composition, .. } => Some(composition),
        Before::Evacuated { .. } => None,
    };
    for c in order.sources.iter().map(|s| &s.composition).chain(heel) {
        for &g in &c.gases {
            if !gases.contains(&g) {
                gases.push(g);
            }
        }
    }
    let mut x_target = vec![0.0; gases.len()];
    for (g, x) in order.composition.gases.iter().zip(&order.composition.fractions) {
        x_target[gases.iter().position(|h| h == g).unwrap_or(0)] = *x;
    }
    let mut a = DMatrix::zeros(gases.len(), order.sources.len());
    for (k, s) in order.sources.iter().enumerate() {
        for (g, x) in s.composition.gases.iter().zip(&s.composition.fractions) {
            if let Some(i) = gases.iter().position(|h| h == g) {
                a[(i, k)] = *x;
            }
        }
    }
    Setup { gases, x_target, a, per_mole: std::sync::OnceLock::new() }
}

/// The plan's gases (the target's, then any other a source or the heel brings) and the
/// blend's mole fractions over them, as [`Plan::gases`] and [`Plan::components`] will have
/// them.
pub fn blend(order: &Order) -> (Vec<usize>, Vec<f64>) {
    let s = setup(order);
    (s.gases, s.x_target)
}

/// Why the every-model comparison leaves the multi-fluid model out of a blend GERG-2008
/// covers.
pub const NOT_NEEDED: &str = "not needed: GERG-2008 covers these gases";

/// The model to use: asked, else the recipe's, else the reference for the gases.
pub fn default_model(gases: &[usize], catalogue: &Catalogue) -> Model {
    reference_model(gases, catalogue)
}

/// The best available model for a set of gases: GERG-2008 where it covers every one, else
/// the multi-fluid model (which carries every catalogue gas; see [`Fluid`]'s models).
pub fn reference_model(gases: &[usize], catalogue: &Catalogue) -> Model {
    if gases.iter().all(|&g| gerg::covers(catalogue.gas(g).id())) {
        Model::Gerg
    } else {
        Model::Multi
    }
}

/// What the multi-fluid model estimates for this blend, where it matters: a gas without a
/// reference equation at 1 % or more (its share is Peng–Robinson's), and pairs without
/// published parameters when the two usual estimates (linear, Lorentz–Berthelot) give
/// amounts more than 0.05 % apart (their difference is the model's uncertainty there).
fn multi_estimates(
    mixture: &crate::thermo::multifluid::Mixture,
    order: &Order,
    setup: &Setup,
    catalogue: &Catalogue,
    total_mol: f64,
) -> Vec<String> {
    use crate::thermo::multifluid::{Estimate, Mixture};
    let (gases, pairs) = mixture.estimated();
    let fraction =
        |id: &str| setup.gases.iter().position(|&g| catalogue.gas(g).id() == id).map_or(0.0, |i| setup.x_target[i]);
    let mut notes = Vec::new();
    let major: Vec<String> = gases
        .iter()
        .filter(|id| fraction(id) >= 0.01)
        .map(|id| format!("{id} ({})", crate::units::fraction_text(fraction(id))))
        .collect();
    if !major.is_empty() {
        notes.push(format!(
            "the multi-fluid model has no reference equation of state for {}: its share of the blend's \
             behaviour is Peng-Robinson's, good to a few % of that share",
            major.join(", ")
        ));
    }
    let live: Vec<String> =
        pairs.iter().filter(|(a, b)| fraction(a) > 0.0 && fraction(b) > 0.0).map(|(a, b)| format!("{a}-{b}")).collect();
    if !live.is_empty() {
        let other = Mixture::shared_with_estimate(catalogue, &setup.gases, Estimate::LorentzBerthelot);
        let (t, v) = (order.reference_temperature_k, order.volume_m3);
        let p = mixture.pressure(t, total_mol / v, &setup.x_target).0;
        if let Some(rho) = other.density(t, p, &setup.x_target, Some(total_mol / v)) {
            let spread = (rho * v / total_mol - 1.0) * 100.0;
            if spread.abs() > 0.05 {
                notes.push(format!(
                    "no published parameters for {}: the multi-fluid model estimates them, and the two usual \
                     estimates give amounts {:.2} % apart; count that as the model's uncertainty here",
                    live.join(", "),
                    spread.abs()
                ));
            }
        }
        notes.push(format!(
            "liquid is judged with the more condensing of the two usual estimates for {} (linear, Lorentz-Berthelot)",
            live.join(", ")
        ));
    }
    notes
}

/// Source amounts and step order, independent of the model but for the total amount.
struct Dosing {
    total_mol: f64,
    /// Amount of each plan gas in the heel, mol (zeros for an evacuated cylinder).
    heel_mol: Vec<f64>,
    /// Amount of each source, mol.
    source_mol: Vec<f64>,
    /// Source indices in fill order, zero-amount sources left out.
    sequence: Vec<usize>,
}

fn total_amount(fluid: &Fluid, order: &Order, x: &[f64]) -> Result<f64, ThermoError> {
    match order.fill {
        Fill::PressurePa(p) => fluid.amount(order.reference_temperature_k, p, order.volume_m3, x),
        Fill::MassG(m) => Ok(m / fluid.molar_mass(x)),
        Fill::AmountMol(n) => Ok(n),
    }
}

/// The heel's amount of each plan gas under `fluid`: from its pressure at its temperature.
fn heel_amounts(fluid: &Fluid, order: &Order, setup: &Setup) -> Result<Vec<f64>, ThermoError> {
    let mut n = vec![0.0; setup.gases.len()];
    if let Before::Heel { composition, pressure_pa, temperature_k } = &order.before {
        let x: Vec<f64> = setup
            .gases
            .iter()
            .map(|g| composition.gases.iter().position(|h| h == g).map_or(0.0, |k| composition.fractions[k]))
            .collect();
        let total = fluid.amount(*temperature_k, *pressure_pa, order.volume_m3, &x)?;
        for (ni, xi) in n.iter_mut().zip(&x) {
            *ni = xi * total;
        }
    }
    Ok(n)
}

fn dosing(
    fluid: &Fluid,
    order: &Order,
    setup: &Setup,
    sequence_names: &Option<Vec<String>>,
    catalogue: &Catalogue,
) -> Result<Dosing, PlanError> {
    let total_mol = total_amount(fluid, order, &setup.x_target)?;
    let heel_mol = heel_amounts(fluid, order, setup)?;
    for (i, (&h, &x)) in heel_mol.iter().zip(&setup.x_target).enumerate() {
        let needed_mol = x * total_mol;
        if h > needed_mol * (1.0 + 1e-9) + 1e-12 * total_mol {
            return Err(PlanError::HeelTooRich {
                id: catalogue.gas(setup.gases[i]).id().to_string(),
                heel_mol: h,
                needed_mol,
            });
        }
    }
    // What the sources must bring: the blend less the heel.
    let b = DVector::from_iterator(
        setup.x_target.len(),
        setup.x_target.iter().zip(&heel_mol).map(|(x, h)| (x * total_mol - h).max(0.0)),
    );
    let s = if heel_mol.iter().all(|h| *h == 0.0) {
        setup.per_mole.get_or_init(|| sources::nnls(&setup.a, &DVector::from_column_slice(&setup.x_target))) * total_mol
    } else {
        sources::nnls(&setup.a, &b)
    };
    let made = &setup.a * &s;
    let made_total: f64 = made.iter().sum::<f64>() + heel_mol.iter().sum::<f64>();
    let unreachable: Vec<Unreachable> = (0..setup.gases.len())
        .filter(|&i| (made[i] - b[i]).abs() > 1e-9 * total_mol)
        .map(|i| Unreachable {
            id: catalogue.gas(setup.gases[i]).id().to_string(),
            target_fraction: setup.x_target[i],
            closest_fraction: if made_total > 0.0 { (made[i] + heel_mol[i]) / made_total } else { 0.0 },
        })
        .collect();
    if !unreachable.is_empty() {
        return Err(PlanError::Unreachable(unreachable));
    }
    let source_mol: Vec<f64> = s.iter().copied().collect();
    let sequence = fill_sequence(order, sequence_names, &source_mol)?;
    let sequence = sequence.into_iter().filter(|&k| source_mol[k] > 1e-12 * total_mol).collect();
    Ok(Dosing { total_mol, heel_mol, source_mol, sequence })
}

/// The order of the additions: as the user listed the sources (each exactly once), else
/// ascending amount with the balance gas last (minor components first).
fn fill_sequence(
    order: &Order,
    sequence_names: &Option<Vec<String>>,
    source_mol: &[f64],
) -> Result<Vec<usize>, PlanError> {
    let names: Vec<&str> = order.sources.iter().map(|s| s.name.as_str()).collect();
    let sequence: Vec<usize> = match sequence_names {
        Some(list) => {
            for n in list {
                if !names.contains(&n.as_str()) {
                    return Err(PlanError::Order(format!(
                        "{n:?} is not a source of this recipe; the sources are {}",
                        names.join(", ")
                    )));
                }
                if list.iter().filter(|m| *m == n).count() > 1 {
                    return Err(PlanError::Order(format!("{n:?} is listed more than once")));
                }
            }
            let missing: Vec<&str> = names.iter().copied().filter(|n| !list.iter().any(|m| m == n)).collect();
            if !missing.is_empty() {
                return Err(PlanError::Order(format!(
                    "every source must be listed exactly once; missing: {}",
                    missing.join(", ")
                )));
            }
            list.iter().filter_map(|n| names.iter().position(|m| m == n)).collect()
        }
        None => {
            // Ascending amount, the balance gas last (DOMAIN.md: minor components first).
            let balance_gas = order.balance.map(|b| order.targets[b].gas);
            let is_balance = |k: usize| {
                let s = &order.sources[k];
                s.pure && Some(s.composition.gases[0]) == balance_gas
            };
            let mut seq: Vec<usize> = (0..order.sources.len()).collect();
            seq.sort_by(|&i, &j| is_balance(i).cmp(&is_balance(j)).then(source_mol[i].total_cmp(&source_mol[j])));
            seq
        }
    };
    Ok(sequence)
}

/// Source composition as a vector over the plan gases.
fn source_vector(setup: &Setup, k: usize) -> Vec<f64> {
    (0..setup.gases.len()).map(|i| setup.a[(i, k)]).collect()
}

/// Stop readings of each step at `t_k` for a dosing.
fn step_pressures(
    fluid: &Fluid,
    order: &Order,
    setup: &Setup,
    d: &Dosing,
    t_k: f64,
) -> Result<Vec<(f64, Vec<f64>)>, ThermoError> {
    let mut n = d.heel_mol.clone();
    let mut after = Vec::with_capacity(d.sequence.len());
    for &k in &d.sequence {
        let x_src = source_vector(setup, k);
        for (ni, xi) in n.iter_mut().zip(&x_src) {
            *ni += d.source_mol[k] * xi;
        }
        after.push(n.clone());
    }
    // Where the contents are partly liquid, the reading is their equilibrium pressure. The
    // steps are independent once their amounts are known: both cores.
    after.into_par_iter().map(|n| Ok((fluid.pressure_in_cylinder(t_k, order.volume_m3, &n)?, n))).collect()
}

/// What a step's contents do between the fill temperature and the lowest storage
/// temperature, the more condensing later.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Judged {
    Gas,
    /// Liquid forms on cooling to the lowest storage temperature.
    OnCooling,
    /// Liquid already at the fill temperature (the step's reading, from
    /// [`Fluid::pressure_in_cylinder`], is then the equilibrium pressure).
    AtFill,
}

/// Judge a step's contents at the fill temperature and at three more temperatures down to
/// `t_min_k` (the isochore of the cylinder). The lowest first: contents that condense on
/// cooling condense there in practice, and the verdict is the same whichever of the three
/// finds liquid (all three are tested where none does). Only what can raise the verdict
/// past `so_far` (another judge's) is tested.
fn judge_step(
    fluid: &Fluid,
    so_far: Judged,
    (t_fill, t_min_k): (f64, f64),
    volume_m3: f64,
    n: &[f64],
) -> Result<Judged, ThermoError> {
    if so_far == Judged::AtFill || fluid.condensed_tv(t_fill, volume_m3, n)? {
        return Ok(Judged::AtFill);
    }
    if so_far == Judged::OnCooling {
        return Ok(so_far);
    }
    for k in [3, 1, 2] {
        let t = t_fill - (t_fill - t_min_k) * k as f64 / 3.0;
        if t < t_fill && fluid.condensed_tv(t, volume_m3, n)? {
            return Ok(Judged::OnCooling);
        }
    }
    Ok(Judged::Gas)
}

/// Judge every step's contents (both cores) with the `judges`: the reference equations of
/// the blend whatever model plans (the ideal gas has no liquid of its own; a cubic's dew
/// points can lie several kelvin low), with each usual estimate for unpublished pairs; the
/// most condensing verdict stands. The other estimate's judges judge only contents that
/// have both gases of a pair without published parameters: elsewhere they answer as the
/// first (the heavy gases added first stand alone for the first steps).
fn judge_steps(
    judges: &[Fluid],
    pressures: &[(f64, Vec<f64>)],
    t_fill: f64,
    t_min: f64,
    volume_m3: f64,
) -> Result<Vec<Judged>, ThermoError> {
    pressures
        .par_iter()
        .map(|(_, n_after)| {
            let mut worst = Judged::Gas;
            for (k, judge) in judges.iter().enumerate() {
                if k == 0 || judge.estimate_applies(n_after) {
                    worst = judge_step(judge, worst, (t_fill, t_min), volume_m3, n_after)?;
                }
            }
            Ok(worst)
        })
        .collect()
}

/// Make the plan for an order.
pub fn plan(order: &Order, catalogue: &Catalogue, options: &PlanOptions) -> Result<Plan, PlanError> {
    plan_at_depth(order, catalogue, options, 0)
}

fn plan_at_depth(order: &Order, catalogue: &Catalogue, options: &PlanOptions, depth: usize) -> Result<Plan, PlanError> {
    let setup = setup(order);
    let model = options.model.or(order.model).unwrap_or_else(|| default_model(&setup.gases, catalogue));
    // A cubic asked to judge the phases is the quick estimate: it judges every model's own
    // states too (their pressures and densities stay their own).
    let estimating = options.phase_judge.is_some_and(Model::is_cubic);
    let fluid = Fluid::new(catalogue, &setup.gases, model)?.with_phases_estimated(estimating);
    let t_fill = options.fill_temperature_k.unwrap_or(order.fill_temperature_k);
    let t_ref = order.reference_temperature_k;
    let sequence_names =
        options.order.clone().or_else(|| (!order.fill_order.is_empty()).then(|| order.fill_order.clone()));
    let d = dosing(&fluid, order, &setup, &sequence_names, catalogue)?;

    // Steps.
    let pressures = step_pressures(&fluid, order, &setup, &d, t_fill)?;
    let heel = heel_of(&fluid, order, &setup, &d, t_fill, catalogue)?;
    // Liquid from each step's contents, at the fill temperature or on cooling (both cores).
    let t_min = options.min_temperature_k.unwrap_or(DEFAULT_MIN_TEMPERATURE_K).min(t_fill);
    // Every other model's own plan, beside the judgements (each on a core where one is
    // free; rayon keeps the order).
    let reference = reference_model(&setup.gases, catalogue);
    let other =
        OtherModels { order, setup: &setup, sequence_names: &sequence_names, catalogue, t_fill, reference, estimating };
    let judge_model = options.phase_judge.unwrap_or(reference);
    let judge = if model == judge_model { fluid.clone() } else { Fluid::new(catalogue, &setup.gases, judge_model)? };
    let judges = judge.phase_judges(catalogue, &setup.gases);
    let (judgements, others) = rayon::join(
        || judge_steps(&judges, &pressures, t_fill, t_min, order.volume_m3),
        || if options.screening_only { Vec::new() } else { other.every_one_but(model) },
    );
    let steps = build_steps(order, &d, pressures, judgements?, heel.as_ref(), t_fill, options, catalogue);

    // Totals at the reference temperature.
    let n_final: Vec<f64> = setup.x_target.iter().map(|x| x * d.total_mol).collect();
    let p_final = match order.fill {
        Fill::PressurePa(p) => p,
        _ => fluid.pressure_in_cylinder(t_ref, order.volume_m3, &n_final)?,
    };
    if p_final > order.test_pressure_pa {
        return Err(PlanError::AboveTestPressure { final_bar: bar(p_final), test_bar: bar(order.test_pressure_pa) });
    }
    let totals = totals_of(&fluid, order, &setup, &d, p_final)?;
    let components = component_rows(order, &setup, &n_final, p_final, model, catalogue);

    // Every model's own plan; the selected model's is the one just made.
    let models = every_model(model, &totals, &steps, others);
    // Stopping at each model's readings, judged by the selected model and by the reference
    // (GERG-2008 or the multi-fluid model).
    let truths = match (options.skip_following || options.screening_only, model == reference) {
        (true, _) => vec![],
        (false, true) => vec![model],
        (false, false) => vec![model, reference],
    };
    let following = following_of(truths, &models, &components, order, &setup, &d, t_fill, catalogue);
    let by_mass = fluid.condensed_tv(t_ref, order.volume_m3, &n_final)?;
    let notes = plan_notes(&fluid, order, &setup, &d, heel.as_ref(), p_final, t_fill, by_mass, catalogue);
    let mut plan = Plan {
        by_mass,
        model,
        fluid,
        gases: setup.gases.clone(),
        volume_m3: order.volume_m3,
        totals,
        components,
        steps,
        ambient_pa: order.ambient_pa,
        fill_temperature_k: t_fill,
        models,
        following,
        premixes: Vec::new(),
        heel,
        notes,
    };
    // A premix stage is planned at a depth above 0 and proposes nothing itself: the cascade
    // of the blend's own proposal holds every stage.
    if depth == 0 && !options.screening_only {
        plan.premixes = premix::propose(&plan, order, catalogue, options, plan_at_depth);
    }
    Ok(plan)
}

/// Every model's plan in the order of [`Model::ALL`]: `own` for the selected model, the
/// others as planned beside it (none for [`PlanOptions::screening_only`]).
fn every_model(model: Model, totals: &Totals, steps: &[Step], others: Vec<ModelPlan>) -> Vec<ModelPlan> {
    let own = ModelFigures {
        amount_mol: totals.amount_mol,
        z: totals.z,
        step_pressures_pa: steps.iter().map(|s| s.pressure_after_pa).collect(),
    };
    let mut others = others.into_iter();
    Model::ALL
        .iter()
        .filter_map(|&m| if m == model { Some(ModelPlan { model: m, result: Ok(own.clone()) }) } else { others.next() })
        .collect()
}

/// What the cylinder holds before the first addition, if anything.
fn heel_of(
    fluid: &Fluid,
    order: &Order,
    setup: &Setup,
    d: &Dosing,
    t_fill: f64,
    catalogue: &Catalogue,
) -> Result<Option<Heel>, PlanError> {
    Ok(if d.heel_mol.iter().any(|n| *n > 0.0) {
        let mass_g: f64 =
            d.heel_mol.iter().zip(&setup.gases).map(|(n, &g)| n * catalogue.gas(g).molar_mass_g_per_mol).sum();
        Some(Heel {
            mass_g,
            scale_reading_g: order.tare_g.unwrap_or(0.0) + mass_g,
            pressure_at_fill_pa: fluid.pressure_in_cylinder(t_fill, order.volume_m3, &d.heel_mol)?,
            amounts_mol: d.heel_mol.clone(),
        })
    } else {
        None
    })
}

/// What every other model's own plan needs: the order, its setup and fill order.
struct OtherModels<'a> {
    order: &'a Order,
    setup: &'a Setup,
    sequence_names: &'a Option<Vec<String>>,
    catalogue: &'a Catalogue,
    t_fill: f64,
    reference: Model,
    /// Whether the phases are the quick estimate (see [`PlanOptions::phase_judge`]).
    estimating: bool,
}

impl OtherModels<'_> {
    /// The plan of every model but `model`, in the order of [`Model::ALL`] (on both cores).
    fn every_one_but(&self, model: Model) -> Vec<ModelPlan> {
        Model::ALL.par_iter().filter(|m| **m != model).map(|&m| self.plan(m)).collect()
    }

    /// Model `m`'s own plan: its total amount, Z and stop readings.
    fn plan(&self, m: Model) -> ModelPlan {
        let OtherModels { order, setup, sequence_names, catalogue, t_fill, reference, estimating } = *self;
        let t_ref = order.reference_temperature_k;
        if m == Model::Multi && reference == Model::Gerg {
            // GERG-2008 is the reference here; the multi-fluid model (asked for with
            // --model multi) would repeat it within a few 0.01 %.
            return ModelPlan { model: m, result: Err(NOT_NEEDED.to_string()) };
        }
        let result = Fluid::new(catalogue, &setup.gases, m)
            .map_err(PlanError::from)
            .map(|f| f.with_phases_estimated(estimating))
            .and_then(|f| {
                let dm = dosing(&f, order, setup, sequence_names, catalogue)?;
                let ps = step_pressures(&f, order, setup, &dm, t_fill)?;
                let n_m: Vec<f64> = setup.x_target.iter().map(|x| x * dm.total_mol).collect();
                let p_ref = f.pressure(t_ref, order.volume_m3, &n_m)?;
                Ok(ModelFigures {
                    amount_mol: dm.total_mol,
                    z: p_ref * order.volume_m3 / (dm.total_mol * R * t_ref),
                    step_pressures_pa: ps.into_iter().map(|(p, _)| p).collect(),
                })
            })
            .map_err(|e| e.to_string());
        ModelPlan { model: m, result }
    }
}

/// The steps in fill order: the amount and mass added, the scale and stop readings, and
/// the flags (too small to dose, liquid at the fill or on cooling).
#[allow(clippy::too_many_arguments)]
fn build_steps(
    order: &Order,
    d: &Dosing,
    pressures: Vec<(f64, Vec<f64>)>,
    judgements: Vec<Judged>,
    heel: Option<&Heel>,
    t_fill: f64,
    options: &PlanOptions,
    catalogue: &Catalogue,
) -> Vec<Step> {
    let mut steps = Vec::with_capacity(d.sequence.len());
    // The scale and the gauge start from the heel.
    let mut scale = heel.map_or(order.tare_g.unwrap_or(0.0), |h| h.scale_reading_g);
    let mut previous_pa = heel.map_or(0.0, |h| h.pressure_at_fill_pa);
    for ((&k, (p_after, n_after)), judged) in d.sequence.iter().zip(pressures).zip(judgements) {
        let source = &order.sources[k];
        let add_mass_g = d.source_mol[k] * source.composition.molar_mass(catalogue);
        scale += add_mass_g;
        let mut flags = Vec::new();
        if add_mass_g < options.resolutions.scale_g {
            flags.push(StepFlag::BelowScaleResolution);
        }
        let last = steps.len() + 1 == d.sequence.len();
        let liquid_at_fill = matches!(judged, Judged::AtFill);
        match judged {
            Judged::Gas => {}
            Judged::OnCooling if !last => flags.push(StepFlag::CondensesIfCooled),
            Judged::OnCooling | Judged::AtFill => flags.push(StepFlag::AboveDewPoint),
        }
        let increment_pa = p_after - previous_pa;
        if increment_pa < options.resolutions.gauge_pa {
            flags.insert(0, StepFlag::BelowGaugeResolution);
        }
        steps.push(Step {
            source: source.name.clone(),
            add_amount_mol: d.source_mol[k],
            add_mass_g,
            scale_reading_g: scale,
            pressure_after_pa: p_after,
            increment_pa,
            temperature_k: t_fill,
            amounts_after_mol: n_after,
            flags,
            liquid_at_fill,
        });
        previous_pa = p_after;
    }

    steps
}

/// The totals at the reference temperature.
fn totals_of(fluid: &Fluid, order: &Order, setup: &Setup, d: &Dosing, p_final: f64) -> Result<Totals, PlanError> {
    let t_ref = order.reference_temperature_k;
    let mass_g = d.total_mol * fluid.molar_mass(&setup.x_target);
    let reference_volume =
        fluid.volume(crate::units::REFERENCE_TEMPERATURE_K, STANDARD_AMBIENT_PA, d.total_mol, &setup.x_target)?;
    Ok(Totals {
        pressure_pa: p_final,
        temperature_k: t_ref,
        amount_mol: d.total_mol,
        mass_g,
        z: p_final * order.volume_m3 / (d.total_mol * R * t_ref),
        density_g_per_l: mass_g / (order.volume_m3 * 1e3),
        volume_at_reference_m3: reference_volume,
    })
}

/// Each gas of the blend: its share, amount, mass, partial pressure and the pressure it
/// would give alone.
fn component_rows(
    order: &Order,
    setup: &Setup,
    n_final: &[f64],
    p_final: f64,
    model: Model,
    catalogue: &Catalogue,
) -> Vec<ComponentRow> {
    let t_ref = order.reference_temperature_k;
    setup
        .gases
        .iter()
        .enumerate()
        .map(|(i, &g)| {
            let n_i = n_final[i];
            let alone = if n_i > 0.0 {
                Fluid::new(catalogue, &[g], model).and_then(|f| f.pressure(t_ref, order.volume_m3, &[n_i])).ok()
            } else {
                None
            };
            ComponentRow {
                gas: g,
                mole_fraction: setup.x_target[i],
                amount_mol: n_i,
                mass_g: n_i * catalogue.gas(g).molar_mass_g_per_mol,
                partial_pressure_pa: setup.x_target[i] * p_final,
                alone_pressure_pa: alone,
                tolerance: order.targets.iter().find(|t| t.gas == g).and_then(|t| t.tolerance),
            }
        })
        .collect()
}

/// The composition made when the blender stops at each model's readings, judged by each
/// model in `truths`.
#[allow(clippy::too_many_arguments)]
fn following_of(
    truths: Vec<Model>,
    models: &[ModelPlan],
    components: &[ComponentRow],
    order: &Order,
    setup: &Setup,
    d: &Dosing,
    t_fill: f64,
    catalogue: &Catalogue,
) -> Vec<Following> {
    truths
        .into_iter()
        .filter_map(|truth| {
            let truth_fluid = Fluid::new(catalogue, &setup.gases, truth).ok()?;
            let rows = models
                .iter()
                .filter_map(|mp| {
                    let figures = mp.result.as_ref().ok()?;
                    // A model's own readings, judged by itself, make its target exactly (they
                    // are the pressures of its own plan): no solve needed.
                    let fractions: Vec<f64> = if mp.model == truth {
                        setup.x_target.clone()
                    } else {
                        let made = follow(&truth_fluid, order, setup, d, &figures.step_pressures_pa, t_fill).ok()?;
                        let total: f64 = made.iter().sum();
                        made.iter().map(|n| n / total).collect()
                    };
                    let relative_error_percent = fractions
                        .iter()
                        .zip(&setup.x_target)
                        .map(|(x, t)| if *t > 0.0 { (x / t - 1.0) * 100.0 } else { 0.0 })
                        .collect();
                    let out_of_tolerance = fractions
                        .iter()
                        .zip(components)
                        .map(|(x, c)| c.tolerance.is_some_and(|tol| (x - c.mole_fraction).abs() > tol))
                        .collect();
                    Some(Followed { targets_of: mp.model, fractions, relative_error_percent, out_of_tolerance })
                })
                .collect();
            Some(Following { truth, rows })
        })
        .collect()
}

/// The plan's notes: doubtful tolerances, estimated pairs, the residual gas, the heel,
/// sources not needed, a fill above the working pressure, a liquefied-gas fill.
#[allow(clippy::too_many_arguments)]
fn plan_notes(
    fluid: &Fluid,
    order: &Order,
    setup: &Setup,
    d: &Dosing,
    heel: Option<&Heel>,
    p_final: f64,
    t_fill: f64,
    by_mass: bool,
    catalogue: &Catalogue,
) -> Vec<String> {
    let mut notes = crate::recipe::tolerance_doubts(order, catalogue);
    if let Some(mixture) = fluid.multifluid() {
        notes.extend(multi_estimates(mixture, order, setup, catalogue, d.total_mol));
    }
    if let Before::Evacuated { residual_pa } = order.before {
        // The residual gas, taken as air (ideal gas at the fill temperature): reported when
        // it is more than a hundredth of the smallest target share.
        let residual_share = residual_pa * order.volume_m3 / (R * t_fill) / d.total_mol;
        let smallest = setup.x_target.iter().copied().filter(|x| *x > 0.0).fold(1.0, f64::min);
        if residual_share > 0.01 * smallest {
            notes.push(format!(
                "the residual gas of the evacuated cylinder ({} mbar, as air) is {} of the fill, more than a \
                 hundredth of the smallest component: evacuate deeper or count it in the analysis",
                crate::units::Sig(residual_pa / 100.0, 3),
                crate::units::fraction_text(residual_share)
            ));
        }
    }
    if let Some(h) = heel {
        notes.push(format!(
            "the fill starts from a heel of {} mol ({} g) that reads {:.2} bar at the fill temperature: check the \
             gauge shows it before the first addition",
            crate::units::Sig(h.amounts_mol.iter().sum(), 4),
            crate::units::Sig(h.mass_g, 4),
            bar(h.pressure_at_fill_pa)
        ));
    }
    for (k, s) in order.sources.iter().enumerate() {
        if !d.sequence.contains(&k) {
            notes.push(format!("source {} is not needed for this blend", s.name));
        }
    }
    if p_final > order.working_pressure_pa {
        notes.push(format!(
            "the final pressure {:.2} bar is above the cylinder's working pressure {:.2} bar",
            bar(p_final),
            bar(order.working_pressure_pa)
        ));
    }

    if by_mass {
        notes.push(
            "liquefied-gas fill: the blend is liquid or two-phase at the reference temperature; fill by mass (the \
             gauge shows the vapour pressure)"
                .into(),
        );
    }
    notes
}

/// The amounts (mol per plan gas) in the cylinder after stopping each step at the given
/// readings, when the gas behaves as `truth` says.
fn follow(
    truth: &Fluid,
    order: &Order,
    setup: &Setup,
    d: &Dosing,
    readings_pa: &[f64],
    t_k: f64,
) -> Result<Vec<f64>, ThermoError> {
    // The heel is what the gauge read before the fill, as this model counts it.
    let mut n = heel_amounts(truth, order, setup)?;
    for (&k, &target) in d.sequence.iter().zip(readings_pa) {
        let x_src = source_vector(setup, k);
        let with = |s: f64| -> Vec<f64> { n.iter().zip(&x_src).map(|(a, x)| a + s * x).collect() };
        let p_of = |s: f64| truth.pressure(t_k, order.volume_m3, &with(s));
        let p_now = if n.iter().sum::<f64>() > 0.0 { p_of(0.0)? } else { 0.0 };
        if target <= p_now {
            continue;
        }
        let guess = d.source_mol[k].max(1e-12);
        // Newton's method with the analytic dP/ds = Σ_i a_i ∂P/∂n_i where the model has it
        // (the cubics, the ideal gas); the bracketing solve otherwise, or where Newton fails.
        let slope = |s: f64| -> Option<f64> {
            let dp = truth.dpressure_damounts(t_k, order.volume_m3, &with(s))?;
            Some(dp.iter().zip(&x_src).map(|(a, b)| a * b).sum())
        };
        let s = match newton_rising(&p_of, &slope, target, guess) {
            Some(s) => s,
            None => solve_rising(p_of, target, p_now, guess)?.ok_or_else(|| ThermoError::NoState {
                model: truth.model(),
                why: "no amount reaches the reading".into(),
            })?,
        };
        n = with(s);
    }
    Ok(n)
}

/// Newton's method for f(s) = target from `guess`, with the derivative `slope`, to 1e-15
/// relative in f. None where a derivative is missing, a step leaves s > 0 or does not
/// settle in 30 steps (the caller then brackets).
fn newton_rising(
    f: &impl Fn(f64) -> Result<f64, ThermoError>,
    slope: &impl Fn(f64) -> Option<f64>,
    target: f64,
    guess: f64,
) -> Option<f64> {
    let mut s = guess;
    for _ in 0..30 {
        let v = f(s).ok()?;
        if (v - target).abs() <= 1e-15 * target {
            return Some(s);
        }
        let d = slope(s)?;
        if !(d > 0.0) {
            return None;
        }
        let next = s - (v - target) / d;
        if !(next > 0.0 && next.is_finite()) {
            return None;
        }
        if (next - s).abs() <= 1e-16 * s {
            return Some(next);
        }
        s = next;
    }
    None
}

/// The s ≥ 0 at which the rising function `f` reaches `target`, with f(0) = `f0` < target
/// and `guess` a close estimate (the step's planned amount). Bracketed within 2 % of the
/// guess where it can be (widening as needed), then regula falsi with the Illinois
/// modification, to 1e-15 relative in f: a handful of evaluations, each a new composition.
/// `Ok(None)` when no bracket is found; an error of `f` is passed on.
fn solve_rising(
    f: impl Fn(f64) -> Result<f64, ThermoError>,
    target: f64,
    f0: f64,
    guess: f64,
) -> Result<Option<f64>, ThermoError> {
    let (mut lo, mut f_lo) = (0.0, f0);
    let mut hi = guess;
    let mut f_hi = f(hi)?;
    if f_hi < target {
        // Walk up from the guess: 2 %, then doubling the stride.
        let mut stride = 0.02 * guess;
        let mut steps = 0;
        while f_hi < target {
            lo = hi;
            f_lo = f_hi;
            hi += stride;
            stride *= 2.0;
            f_hi = f(hi)?;
            steps += 1;
            if steps > 80 {
                return Ok(None);
            }
        }
    } else {
        // The lower end: 2 % below the guess, then doubling the stride down, to the first
        // amount where the function is below the target (or 0, where it is f0).
        let mut stride = 0.02 * guess;
        let mut s = guess;
        while s - stride > 0.0 {
            let next = s - stride;
            let v = f(next)?;
            if v < target {
                lo = next;
                f_lo = v;
                break;
            }
            hi = next;
            f_hi = v;
            s = next;
            stride *= 2.0;
        }
    }
    let mut side = 0i8;
    let (mut w_lo, mut w_hi) = (1.0, 1.0);
    let mut last = 0.5 * (lo + hi);
    for _ in 0..200 {
        let (a, b) = ((f_lo - target) * w_lo, (f_hi - target) * w_hi);
        let secant = lo + (hi - lo) * a / (a - b);
        let mid = if secant > lo && secant < hi { secant } else { 0.5 * (lo + hi) };
        let f_mid = f(mid)?;
        last = mid;
        if (f_mid - target).abs() <= 1e-15 * target || hi - lo <= 1e-16 * hi {
            return Ok(Some(mid));
        }
        if f_mid < target {
            lo = mid;
            f_lo = f_mid;
            w_lo = 1.0;
            if side == -1 {
                w_hi *= 0.5;
            }
            side = -1;
        } else {
            hi = mid;
            f_hi = f_mid;
            w_hi = 1.0;
            if side == 1 {
                w_lo *= 0.5;
            }
            side = 1;
        }
    }
    Ok(Some(last))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::{demo, Recipe};

    #[test]
    fn following_a_models_own_readings_gives_back_its_own_amounts() {
        // The following table takes a model's own row as exact; the solver must agree.
        let c = Catalogue::built_in();
        for (name, model) in
            [("flue-gas-span", Model::Pr), ("pipeline-ng-9", Model::Gerg), ("laser-co2-he-n2", Model::Srk)]
        {
            let order = Recipe::load(demo::find(name).unwrap(), name, &c).unwrap();
            let setup = setup(&order);
            let fluid = Fluid::new(&c, &setup.gases, model).unwrap();
            let d = dosing(&fluid, &order, &setup, &None, &c).unwrap();
            let t = order.fill_temperature_k;
            let readings: Vec<f64> =
                step_pressures(&fluid, &order, &setup, &d, t).unwrap().into_iter().map(|(p, _)| p).collect();
            let made = follow(&fluid, &order, &setup, &d, &readings, t).unwrap();
            for (m, x) in made.iter().zip(&setup.x_target) {
                let want = x * d.total_mol;
                assert!((m - want).abs() <= 1e-10 * d.total_mol, "{name} {model}: {m} vs {want}");
            }
        }
    }

    #[test]
    fn a_plan_for_the_screening_alone_screens_as_the_whole_plan() {
        // `check`, the library's column and the certificate's cautions plan only what the
        // screening reads: the same steps and findings as the whole plan, without the other
        // models' plans and the premix proposals.
        let c = Catalogue::built_in();
        let settings = crate::settings::Settings::default().resolve("", "defaults").unwrap();
        let mut orders: Vec<Order> =
            demo::RECIPES.iter().map(|(name, text)| Recipe::load(text, name, &c).unwrap()).collect();
        orders.extend(crate::speed::panel(2026, 8).iter().filter_map(|(_, r)| r.resolve(&c, "", &r.name).ok()));
        let (mut with_premixes, mut with_models) = (0, 0);
        for order in &orders {
            let whole = PlanOptions { skip_following: true, ..PlanOptions::default() };
            let only = PlanOptions { screening_only: true, ..PlanOptions::default() };
            let (a, b) = (plan(order, &c, &whole), plan(order, &c, &only));
            assert_eq!(a.is_ok(), b.is_ok(), "{}: one plans and the other does not", order.name);
            let (Ok(a), Ok(b)) = (a, b) else { continue };
            assert_eq!(a.steps, b.steps, "{}", order.name);
            let conditions = settings.conditions();
            assert_eq!(
                crate::checks::screen(&a, order, &c, &conditions),
                crate::checks::screen(&b, order, &c, &conditions),
                "{}",
                order.name
            );
            assert!(b.premixes.is_empty() && b.following.is_empty(), "{}", order.name);
            assert_eq!(b.models.iter().map(|m| m.model).collect::<Vec<_>>(), vec![a.model], "{}", order.name);
            with_premixes += usize::from(!a.premixes.is_empty());
            with_models += usize::from(a.models.len() > 1);
        }
        assert!(with_premixes > 0 && with_models > 0, "the whole plans had premixes and other models to leave out");
    }

    #[test]
    fn the_screen_plans_a_premix_stage_for_its_steps_alone() {
        // The screen shows a stage's steps and flags, not its other models: it plans each
        // stage without them, and its steps are those of the stage planned whole under the
        // same phases (the quick estimate's and the reference equations').
        let c = Catalogue::built_in();
        let mut orders: Vec<Order> =
            demo::RECIPES.iter().map(|(name, text)| Recipe::load(text, name, &c).unwrap()).collect();
        orders.extend(crate::speed::panel(2026, 24).iter().filter_map(|(_, r)| r.resolve(&c, "", &r.name).ok()));
        let mut stages = 0;
        for judge in [Some(Model::Pr), None] {
            let screen = PlanOptions { phase_judge: judge, stage_steps_only: true, ..PlanOptions::default() };
            let whole = PlanOptions { order: None, stage_steps_only: false, ..screen.clone() };
            for order in &orders {
                let Ok(p) = plan(order, &c, &screen) else { continue };
                for st in p.premixes.iter().flat_map(|p| &p.stages) {
                    let Ok(inner) = &st.plan else { continue };
                    let full = plan_at_depth(&st.order, &c, &whole, 1).unwrap();
                    assert_eq!(inner.steps, full.steps, "{}: {}", order.name, st.name);
                    assert_eq!(inner.models.len(), 1, "{}: {}", order.name, st.name);
                    assert!(full.models.len() > 1 && inner.following.is_empty());
                    stages += 1;
                }
            }
        }
        assert!(stages > 1, "premixes were proposed");
    }

    #[test]
    fn a_second_judge_never_lowers_the_verdict_and_can_raise_it() {
        // Propane in methane, 10 L at 15 °C, judged down to -20 °C: 0.5 mol of propane with
        // 40 mol of methane is gas throughout; 40 mol of propane alone with 1 mol of methane
        // is liquid at the fill temperature.
        let c = Catalogue::built_in();
        let gases: Vec<usize> = ["CH4", "C3H8"].iter().map(|id| c.index_of(id).unwrap()).collect();
        let f = Fluid::new(&c, &gases, Model::Gerg).unwrap();
        let temps = (288.15, 253.15);
        let (gas, liquid) = ([40.0, 0.5], [1.0, 40.0]);
        assert_eq!(judge_step(&f, Judged::Gas, temps, 0.01, &gas).unwrap(), Judged::Gas);
        assert_eq!(judge_step(&f, Judged::OnCooling, temps, 0.01, &gas).unwrap(), Judged::OnCooling);
        assert_eq!(judge_step(&f, Judged::AtFill, temps, 0.01, &gas).unwrap(), Judged::AtFill);
        assert_eq!(judge_step(&f, Judged::Gas, temps, 0.01, &liquid).unwrap(), Judged::AtFill);
        assert_eq!(judge_step(&f, Judged::OnCooling, temps, 0.01, &liquid).unwrap(), Judged::AtFill);
    }

    #[test]
    fn the_rising_solve_finds_the_root_from_a_guess_off_either_way() {
        // f(s) = s + s³ (rising); the root of f = 10 is s = 2.
        for guess in [0.5, 1.9, 2.0, 2.1, 50.0] {
            let s = solve_rising(|s| Ok(s + s * s * s), 10.0, 0.0, guess).unwrap().unwrap();
            assert!((s - 2.0).abs() < 1e-14, "{guess}: {s}");
        }
        // Newton's method with the derivative 1 + 3s² gets there too, from either side.
        for guess in [1.5, 2.5, 4.0] {
            let s = newton_rising(&|s: f64| Ok(s + s * s * s), &|s: f64| Some(1.0 + 3.0 * s * s), 10.0, guess).unwrap();
            assert!((s - 2.0).abs() < 1e-14, "{guess}: {s}");
        }
        // Without a derivative it declines, and the caller brackets.
        assert!(newton_rising(&|s: f64| Ok(s), &|_| None, 10.0, 1.0).is_none());
    }
}
