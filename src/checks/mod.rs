//! Screening before the fill: condensation, pressure rating, flammability, oxidising
//! ability, toxicity and incompatible pairs.
//!
//! Every result is a screening aid, not a classification: the values behind the ISO 10156
//! and ISO 10298 methods are marked "from memory" in `gas/hazards.ron` until checked, and
//! local codes, the cylinder's markings and licensed practice decide.

pub mod condensation;
pub mod hazards;
pub mod phase;
pub mod rating;

use serde_json::{Map, Value};

use crate::gas::Catalogue;
use crate::plan::Plan;
use crate::recipe::Order;
use crate::thermo::Model;

/// How much a finding matters.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Severity {
    Ok,
    Caution,
    Stop,
}

impl Severity {
    pub fn key(self) -> &'static str {
        match self {
            Severity::Ok => "ok",
            Severity::Caution => "caution",
            Severity::Stop => "stop",
        }
    }
}

/// One screening result.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// `condensation`, `pressure-rating`, `flammability`, `oxidising`, `toxicity` or
    /// `incompatibility`.
    pub id: &'static str,
    pub severity: Severity,
    /// The verdict in one sentence.
    pub message: String,
    /// The figures behind it, one line each, for the text output.
    pub details: Vec<String>,
    /// The same figures for JSON.
    pub data: Map<String, Value>,
}

/// Conditions the cylinder will see.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conditions {
    /// Lowest storage and transport temperature, K.
    pub min_temperature_k: f64,
    /// Highest service temperature, K.
    pub max_temperature_k: f64,
    /// Margin on the condensation judgement, K: liquid is assumed where the reference's dew
    /// point comes within this of the temperature (the reference's own uncertainty).
    pub margin_k: f64,
}

/// The least margin for a blend with a gas on Peng–Robinson's form in the multi-fluid model
/// (no reference equation: NO, NO2, NF3, C2H2, C4H6, CH3OH), K: Peng–Robinson's
/// cricondentherms lie up to 5.4 K below CoolProp's multi-fluid ones for the mixtures of
/// tests/fixtures/phase_reference.json, rounded up.
pub const CUBIC_FORM_MARGIN_K: f64 = 6.0;

impl Conditions {
    /// The temperature down to which the equation of state is asked: the lowest storage
    /// temperature less the margin.
    pub fn judged_down_to_k(&self) -> f64 {
        self.min_temperature_k - self.margin_k
    }
}

/// The usual cautions, shown after every screening.
pub const CAUTIONS: &[&str] = &[
    "These checks are screening aids, not a classification; hazard values marked \"from memory\" in the catalogue must be checked against the current standards.",
    "Follow local codes, the cylinder's markings (working and test pressure, test date, valve outlet) and licensed practice.",
    "High-pressure gas can kill: use rated equipment, fill slowly (the cylinder warms as it fills) and never exceed the working pressure.",
    "Flammable, toxic and oxidising gases need their own valves, labels, ventilation and leak checks; keep oxidisers and flammables apart until the procedure says otherwise.",
    OXYGEN_CLEAN,
];

/// The caution for blends with an oxidiser (the last of [`CAUTIONS`]).
const OXYGEN_CLEAN: &str = "Mixtures above about 23.5 % O2 need oxygen-clean equipment; rapid filling with oxygen heats the gas adiabatically (common practice).";

/// The cautions that apply to blends with these checks: all of [`CAUTIONS`], the
/// oxygen-clean one only where some blend holds an oxidiser (Σ x·C above zero, from the
/// oxidising check).
pub fn cautions_for<'a>(checks: impl IntoIterator<Item = &'a Check>) -> Vec<&'static str> {
    cautions_with(holds_oxidiser(checks))
}

/// Whether a blend with these checks holds an oxidiser (Σ x·C above zero).
pub fn holds_oxidiser<'a>(checks: impl IntoIterator<Item = &'a Check>) -> bool {
    checks.into_iter().any(|c| {
        c.id == "oxidising" && c.data.get("oxygen_equivalent").and_then(|v| v.as_f64()).is_some_and(|x| x > 0.0)
    })
}

/// The cautions, the oxygen-clean one where some blend holds an oxidiser.
pub fn cautions_with(oxidiser: bool) -> Vec<&'static str> {
    CAUTIONS.iter().copied().filter(|c| oxidiser || *c != OXYGEN_CLEAN).collect()
}

/// The model that judges phases in the screening: the reference equations of the blend
/// (GERG-2008 where it covers every gas, else the multi-fluid model), whatever model plans.
pub fn phase_model(gases: &[usize], catalogue: &Catalogue) -> Model {
    crate::plan::reference_model(gases, catalogue)
}

/// Run every check on a planned order.
pub fn screen(plan: &Plan, order: &Order, catalogue: &Catalogue, conditions: &Conditions) -> Vec<Check> {
    screen_judged(plan, order, catalogue, conditions, None)
}

/// [`screen`] with the condensation check's phases judged by `judge` (None: the blend's
/// reference equations; a cubic gives a quick estimate, which the check says it is).
pub fn screen_judged(
    plan: &Plan,
    order: &Order,
    catalogue: &Catalogue,
    conditions: &Conditions,
    judge: Option<Model>,
) -> Vec<Check> {
    // The condensation check (the phase envelope) on one core, the rest on the other.
    let (condensation, mut rest) = rayon::join(
        || condensation::check(plan, order, catalogue, conditions, judge),
        || {
            vec![
                rating::check(plan, order, conditions),
                hazards::flammability(plan, catalogue),
                hazards::oxidising(plan, catalogue),
                hazards::toxicity(plan, catalogue),
                hazards::incompatibility(plan, catalogue),
            ]
        },
    );
    rest.insert(0, condensation);
    rest
}

/// The highest severity of a set of checks.
pub fn worst(checks: &[Check]) -> Severity {
    checks.iter().map(|c| c.severity).max().unwrap_or(Severity::Ok)
}
