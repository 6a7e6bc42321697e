//! The fill record: what actually went into one cylinder, and the composition it made.
//!
//! A record is a RON file per filled cylinder. Its weighings are the readings of the scale
//! before the first addition and after each; its additions name the source of each
//! addition as an analysis with uncertainties (see [`analysis`]) and may carry the pressure
//! reading and cylinder temperature at the end of the addition. The composition made and
//! its uncertainty follow in [`composition`] with the engine of [`uncertainty`]. This room
//! is pure: source look-ups (the source library, other records) come in as a closure.

pub mod analysis;
pub mod buoyancy;
pub mod composition;
pub mod correct;
pub mod uncertainty;

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use crate::gas::Catalogue;
use crate::mixture::Composition;
use crate::thermo::Model;
use crate::units::{self, AmountInput, STANDARD_AMBIENT_PA};
use analysis::Analysis;
pub use composition::composition_from_masses;

/// The record file format this program reads and writes.
pub const FORMAT: u32 = 1;

/// One addition as recorded.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Addition {
    /// The source: an analysis as a mix spec with uncertainties (`N2=balance,O2=<2ppm`),
    /// `@NAME` for an entry of the source library, or `record:ID` for a premix whose own
    /// fill record gives its certified composition.
    pub source: String,
    /// The source cylinder or lot, as the bench names it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source_name: Option<String>,
    /// Pressure reading at the end of the addition (`155.5bar`, `154.5barg`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure: Option<String>,
    /// Cylinder temperature at that moment (`21.5C`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature: Option<String>,
    /// When the addition ended (UTC, RFC 3339).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// A fill record file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Record {
    pub format: u32,
    /// Revision of this record: 0 never saved, then +1 per save (a correction is a revision).
    #[serde(default)]
    pub revision: u64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub saved: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub change_note: Option<String>,
    /// The recipe filled: its library name.
    pub recipe: String,
    /// Its revision when the fill started.
    #[serde(default)]
    pub recipe_revision: u64,
    /// SHA-256 of that revision's canonical text, hex.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recipe_sha256: Option<String>,
    /// Serial of the filled cylinder.
    pub cylinder: String,
    /// Its water capacity (needed for a record of pressure readings).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub water_capacity: Option<String>,
    /// The customer (free text); the order reference is the recipe's.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub customer: String,
    /// Who filled it.
    #[serde(default)]
    pub operator: String,
    /// The balance: identity and calibration, as the lab's quality system names it.
    #[serde(default)]
    pub balance: String,
    /// When the fill started and ended (UTC).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub started: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub finished: Option<String>,
    /// Standard uncertainty of one scale reading (`0.010g`).
    pub scale_uncertainty: String,
    /// Standard uncertainty of one pressure reading (record of pressure readings only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure_uncertainty: Option<String>,
    /// Standard uncertainty of one cylinder-temperature reading (`0.5K`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_uncertainty: Option<String>,
    /// Model for a record of pressure readings; default as for plans.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<Model>,
    /// Ambient pressure for gauge readings; default 1.01325 bar.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<String>,
    /// Scale readings: before the first addition, then after each.
    #[serde(default)]
    pub weighings: Vec<String>,
    #[serde(default)]
    pub additions: Vec<Addition>,
    /// The air at each weighing (or one entry for all), for the buoyancy correction.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub air: Vec<AirLine>,
    /// The cylinder's outer (displaced) volume, `13.6L` or `13.6L±0.1L`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cylinder_outer_volume: Option<String>,
    /// Substitution weighing: the reference cylinder's scale reading beside each weighing.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub reference_weighings: Vec<String>,
    /// The reference cylinder's outer volume (`13.5L±0.05L`), for the buoyancy on the
    /// difference; without it the two cylinders are taken as alike.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reference_outer_volume: Option<String>,
    /// Standard uncertainties of the air readings (defaults in [`buoyancy`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub air_uncertainty: Option<AirLine>,
    /// Corrections made to entries after they were recorded, oldest first (the entries as
    /// they were are also in the record's revisions).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub corrections: Vec<Correction>,
    #[serde(default)]
    pub notes: String,
}

/// One correction of a recorded entry: what it was, what it is now (empty when withdrawn),
/// and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Correction {
    /// When it was made (UTC, RFC 3339).
    pub time: String,
    /// The entry: `weighing 2`, `addition 3 pressure`, `addition 3 temperature`,
    /// `addition 3 source`.
    pub entry: String,
    pub was: String,
    #[serde(default)]
    pub now: String,
    pub reason: String,
}

/// Air conditions as written: `(temperature: "20.4C", pressure: "1012.3hPa", humidity: "41%")`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AirLine {
    pub temperature: String,
    pub pressure: String,
    pub humidity: String,
}

/// The buoyancy correction read into numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct BuoyancyInputs {
    /// Air density (kg/m³) and its standard uncertainty: one per weighing, or one for all.
    pub densities: Vec<(f64, f64)>,
    /// The cylinder's outer volume and its standard uncertainty, L (in a substitution
    /// weighing, the cylinder's less the reference cylinder's).
    pub volume_l: (f64, f64),
    pub substitution: bool,
}

/// A record problem, placed in its file.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{origin}:{line}:{column}: {message}")]
pub struct RecordError {
    pub origin: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

/// A source resolved into numbers.
#[derive(Debug, Clone, PartialEq)]
pub enum SourceInput {
    /// An analysis: each non-balance amount is an independent input.
    Analysis(Analysis),
    /// A certified composition (a premix with its own record): fractions of every gas
    /// with their covariance.
    Certified { gases: Vec<usize>, fractions: Vec<f64>, covariance: DMatrix<f64> },
}

impl SourceInput {
    /// Gases and estimated mole fractions.
    pub fn composition(&self) -> Composition {
        match self {
            SourceInput::Analysis(a) => {
                Composition { gases: a.lines.iter().map(|l| l.gas).collect(), fractions: a.fractions() }
            }
            SourceInput::Certified { gases, fractions, .. } => {
                Composition { gases: gases.clone(), fractions: fractions.clone() }
            }
        }
    }
}

/// One addition read into numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckedAddition {
    /// How the source was written (its spec or reference).
    pub written: String,
    /// Cylinder or lot of the source, if recorded.
    pub source_name: Option<String>,
    pub source: SourceInput,
    /// Pressure reading, Pa absolute, and cylinder temperature, K, if both were recorded.
    pub reading: Option<(f64, f64)>,
}

/// How the composition follows from the record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// From the masses (ISO 6142-1).
    Gravimetric,
    /// From the pressure readings under an equation of state (no weighings).
    Manometric,
}

/// A record read into numbers and checked.
#[derive(Debug, Clone, PartialEq)]
pub struct Checked {
    pub method: Method,
    pub scale_u_g: f64,
    pub weighings_g: Vec<f64>,
    /// Substitution weighing: the reference cylinder's reading beside each weighing, g.
    pub reference_weighings_g: Vec<f64>,
    pub additions: Vec<CheckedAddition>,
    /// Additions complete enough to enter the composition (weighed, or with a reading).
    pub complete: usize,
    pub pressure_u_pa: f64,
    pub temperature_u_k: f64,
    pub volume_m3: Option<f64>,
    /// The air-buoyancy correction of the weighings, where the record gives the air.
    pub buoyancy: Option<BuoyancyInputs>,
}

impl Checked {
    /// Scale reading `k` less the reference cylinder's beside it (the reading alone in a
    /// direct weighing), g: differences of these are the masses added.
    pub fn net_g(&self, k: usize) -> Option<f64> {
        let w = self.weighings_g.get(k)?;
        Some(w - self.reference_weighings_g.get(k).copied().unwrap_or(0.0))
    }
}

/// Default standard uncertainty of a pressure reading: 0.05 bar, half the 0.1 bar
/// resolution of the gauge the plan assumes (common practice, no source).
pub const DEFAULT_PRESSURE_U_PA: f64 = 0.05e5;
/// Default standard uncertainty of a cylinder-temperature reading: 0.5 K (common
/// practice, no source: a contact thermometer on a cylinder wall).
pub const DEFAULT_TEMPERATURE_U_K: f64 = 0.5;

impl Record {
    /// A new record for `recipe` at `revision`, its canonical text hashed.
    pub fn start(recipe: &str, revision: u64, canonical_text: &str, cylinder: &str, now: &str) -> Record {
        Record {
            format: FORMAT,
            revision: 0,
            saved: None,
            change_note: None,
            recipe: recipe.to_string(),
            recipe_revision: revision,
            recipe_sha256: Some(sha256_hex(canonical_text.as_bytes())),
            cylinder: cylinder.to_string(),
            water_capacity: None,
            customer: String::new(),
            operator: String::new(),
            balance: String::new(),
            started: Some(now.to_string()),
            finished: None,
            scale_uncertainty: "0.010g".into(),
            pressure_uncertainty: None,
            temperature_uncertainty: None,
            model: None,
            ambient: None,
            weighings: Vec::new(),
            additions: Vec::new(),
            air: Vec::new(),
            cylinder_outer_volume: None,
            reference_weighings: Vec::new(),
            reference_outer_volume: None,
            air_uncertainty: None,
            corrections: Vec::new(),
            notes: String::new(),
        }
    }

    /// Parse a record file's text; `origin` names it in messages.
    pub fn parse(text: &str, origin: &str) -> Result<Record, RecordError> {
        let text = crate::ron_format::without_bom(text);
        let record: Record = crate::ron_format::options().from_str(text).map_err(|e| {
            let (line, column, message) = crate::ron_format::parse_problem(text, &e, "record", "Record(");
            RecordError { origin: origin.into(), line, column, message }
        })?;
        if record.format != FORMAT {
            let (line, column) = crate::ron_format::locate(text, "format");
            return Err(RecordError {
                origin: origin.into(),
                line,
                column,
                message: format!("record format {} is not known; this program reads format {FORMAT}", record.format),
            });
        }
        Ok(record)
    }

    /// The canonical text of the record (fixed field order, quantities as typed).
    pub fn to_text(&self) -> String {
        crate::ron_format::to_text(self)
    }

    /// Read every field into numbers. `lookup` resolves `@NAME` and `record:ID` sources;
    /// `text` and `origin` place the errors.
    pub fn check(
        &self,
        catalogue: &Catalogue,
        lookup: &dyn Fn(&str) -> Result<SourceInput, String>,
        text: &str,
        origin: &str,
    ) -> Result<Checked, RecordError> {
        let err = |needle: &str, message: String| {
            let (line, column) = crate::ron_format::locate(text, needle);
            RecordError { origin: origin.into(), line, column, message }
        };
        let quoted = |s: &str| format!("\"{s}\"");
        let ambient_pa = match &self.ambient {
            None => STANDARD_AMBIENT_PA,
            Some(a) => {
                units::parse_pressure(a, STANDARD_AMBIENT_PA).map_err(|e| err(&quoted(a), format!("ambient: {e}")))?
            }
        };
        let scale_u_g = parse_mass_u(&self.scale_uncertainty)
            .map_err(|e| err(&quoted(&self.scale_uncertainty), format!("scale_uncertainty: {e}")))?;
        let weighings_g = self.weighings_g(&err)?;
        if self.additions.is_empty() {
            return Err(err("additions", "the record has no additions yet".into()));
        }
        let gravimetric = !weighings_g.is_empty();
        if gravimetric && weighings_g.len() > self.additions.len() + 1 {
            return Err(err(
                "weighings",
                format!(
                    "{} weighings for {} additions: a record has one weighing before the first addition and one \
                     after each; add the missing addition or remove the extra weighing",
                    weighings_g.len(),
                    self.additions.len()
                ),
            ));
        }
        let additions = self.checked_additions(catalogue, lookup, ambient_pa, gravimetric, &err)?;
        let complete = if gravimetric {
            weighings_g.len() - 1
        } else {
            additions.iter().take_while(|a| a.reading.is_some()).count()
        };
        if complete == 0 {
            return Err(err(
                if gravimetric { "weighings" } else { "additions" },
                "no addition is complete yet: the first needs its weighing (or, without weighings, its pressure \
                 reading and temperature)"
                    .into(),
            ));
        }
        let pressure_u_pa = match &self.pressure_uncertainty {
            None => DEFAULT_PRESSURE_U_PA,
            Some(p) => parse_delta_pressure(p).map_err(|e| err(&quoted(p), format!("pressure_uncertainty: {e}")))?,
        };
        let temperature_u_k = match &self.temperature_uncertainty {
            None => DEFAULT_TEMPERATURE_U_K,
            Some(t) => {
                parse_delta_temperature(t).map_err(|e| err(&quoted(t), format!("temperature_uncertainty: {e}")))?
            }
        };
        let volume_m3 = match &self.water_capacity {
            None => None,
            Some(v) => Some(units::parse_volume(v).map_err(|e| err(&quoted(v), format!("water_capacity: {e}")))?),
        };
        let buoyancy = self.buoyancy_inputs(gravimetric, weighings_g.len(), &err)?;
        let reference_weighings_g = self.reference_weighings(weighings_g.len(), &err)?;
        Ok(Checked {
            method: if gravimetric { Method::Gravimetric } else { Method::Manometric },
            scale_u_g,
            weighings_g,
            reference_weighings_g,
            additions,
            complete,
            pressure_u_pa,
            temperature_u_k,
            volume_m3,
            buoyancy,
        })
    }

    /// The scale readings in grams, each above the one before.
    fn weighings_g(&self, err: &dyn Fn(&str, String) -> RecordError) -> Result<Vec<f64>, RecordError> {
        let quoted = |s: &str| format!("\"{s}\"");
        let mut weighings_g = Vec::with_capacity(self.weighings.len());
        for (k, w) in self.weighings.iter().enumerate() {
            let g = match units::parse_amount(w) {
                Ok(AmountInput::Grams(g)) => g,
                Ok(AmountInput::Moles(_)) => {
                    return Err(err(&quoted(w), format!("weighing {} {w:?} must be a mass (g or kg)", k + 1)))
                }
                Err(e) => return Err(err(&quoted(w), format!("weighing {}: {e}", k + 1))),
            };
            if let Some(&before) = weighings_g.last() {
                if g <= before {
                    return Err(err(
                        &quoted(w),
                        format!(
                            "weighing {} ({w}) is not above the one before ({}); every addition adds mass. \
                             Correct the reading (a new revision keeps the old one)",
                            k + 1,
                            self.weighings[k - 1]
                        ),
                    ));
                }
            }
            weighings_g.push(g);
        }
        Ok(weighings_g)
    }

    /// Each addition's source resolved, with its pressure reading and temperature.
    fn checked_additions(
        &self,
        catalogue: &Catalogue,
        lookup: &dyn Fn(&str) -> Result<SourceInput, String>,
        ambient_pa: f64,
        gravimetric: bool,
        err: &dyn Fn(&str, String) -> RecordError,
    ) -> Result<Vec<CheckedAddition>, RecordError> {
        let quoted = |s: &str| format!("\"{s}\"");
        let mut additions = Vec::with_capacity(self.additions.len());
        for (k, a) in self.additions.iter().enumerate() {
            let source = resolve_source(&a.source, catalogue, lookup)
                .map_err(|e| err(&quoted(&a.source), format!("addition {}: source {:?}: {e}", k + 1, a.source)))?;
            let pressure = match &a.pressure {
                None => None,
                Some(p) => Some(
                    units::parse_pressure(p, ambient_pa)
                        .map_err(|e| err(&quoted(p), format!("addition {} pressure: {e}", k + 1)))?,
                ),
            };
            let temperature = match &a.temperature {
                None => None,
                Some(t) => Some(
                    units::parse_temperature(t)
                        .map_err(|e| err(&quoted(t), format!("addition {} temperature: {e}", k + 1)))?,
                ),
            };
            if !gravimetric && k + 1 < self.additions.len() && (pressure.is_none() || temperature.is_none()) {
                return Err(err(
                    &quoted(&a.source),
                    format!(
                        "addition {}: a record without weighings needs the pressure reading and the cylinder \
                         temperature of every addition (pressure: \"…bar\", temperature: \"…C\")",
                        k + 1
                    ),
                ));
            }
            additions.push(CheckedAddition {
                written: a.source.clone(),
                source_name: a.source_name.clone(),
                source,
                reading: pressure.zip(temperature),
            });
        }
        Ok(additions)
    }

    /// The reference cylinder's readings of a substitution weighing, one beside each
    /// weighing (none: direct weighing).
    fn reference_weighings(
        &self,
        weighings: usize,
        err: &dyn Fn(&str, String) -> RecordError,
    ) -> Result<Vec<f64>, RecordError> {
        if self.reference_weighings.is_empty() {
            return Ok(Vec::new());
        }
        if self.reference_weighings.len() != weighings {
            return Err(err(
                "reference_weighings",
                format!(
                    "{} reference readings for {weighings} weighings: a substitution weighing has the reference \
                     cylinder's reading beside each weighing",
                    self.reference_weighings.len()
                ),
            ));
        }
        self.reference_weighings
            .iter()
            .map(|r| match units::parse_amount(r) {
                Ok(AmountInput::Grams(g)) if g > 0.0 => Ok(g),
                _ => Err(err(&format!("\"{r}\""), format!("reference reading {r:?} is not a mass, e.g. 12950.31g"))),
            })
            .collect()
    }

    /// The air densities and the outer volume, where the record gives the air.
    fn buoyancy_inputs(
        &self,
        gravimetric: bool,
        weighings: usize,
        err: &dyn Fn(&str, String) -> RecordError,
    ) -> Result<Option<BuoyancyInputs>, RecordError> {
        if self.air.is_empty() {
            return Ok(None);
        }
        if !gravimetric {
            return Err(err("air", "air conditions correct weighings; this record has none".into()));
        }
        if self.air.len() != 1 && self.air.len() != weighings {
            return Err(err(
                "air",
                format!(
                    "{} air entries for {weighings} weighings: give one entry per weighing, or one for all",
                    self.air.len()
                ),
            ));
        }
        let quoted = |s: &str| format!("\"{s}\"");
        let Some(volume_text) = &self.cylinder_outer_volume else {
            return Err(err(
                "air",
                "air conditions need the cylinder's outer volume (cylinder_outer_volume: \"13.6L\")".into(),
            ));
        };
        let (v, u_v) = match volume_text.split_once('±') {
            Some((v, u)) => (v, Some(u)),
            None => (volume_text.as_str(), None),
        };
        let place = |e: String| err(&quoted(volume_text), format!("cylinder_outer_volume: {e}"));
        let volume_l = units::parse_volume(v.trim()).map_err(|e| place(e.to_string()))? * 1e3;
        let u_volume_l = match u_v {
            Some(u) => units::parse_volume(u.trim()).map_err(|e| place(e.to_string()))? * 1e3,
            None => buoyancy::DEFAULT_U_VOLUME_REL * volume_l,
        };
        let read_u = |line: &AirLine| -> Result<(f64, f64, f64), RecordError> {
            let t = line.temperature.trim();
            let u_t = t
                .strip_suffix('K')
                .and_then(|k| k.trim().parse::<f64>().ok())
                .filter(|k| *k >= 0.0)
                .ok_or_else(|| err(&quoted(t), "air_uncertainty: temperature as kelvin, e.g. 0.5K".into()))?;
            let u_p =
                units::parse_pressure(&line.pressure, 0.0).map_err(|e| err(&quoted(&line.pressure), e.to_string()))?;
            let u_h = humidity(&line.humidity).map_err(|e| err(&quoted(&line.humidity), e))?;
            Ok((u_t, u_p, u_h))
        };
        let u = match &self.air_uncertainty {
            Some(line) => read_u(line)?,
            None => (buoyancy::DEFAULT_U_TEMPERATURE_K, buoyancy::DEFAULT_U_PRESSURE_PA, buoyancy::DEFAULT_U_HUMIDITY),
        };
        let mut densities = Vec::new();
        for line in &self.air {
            let air = read_air(line).map_err(|(text, e)| err(&quoted(&text), e))?;
            densities.push(buoyancy::density_with_u(&air, u));
        }
        let substitution = !self.reference_weighings.is_empty();
        let volume_l = match (&self.reference_outer_volume, substitution) {
            (_, false) => (volume_l, u_volume_l),
            (None, true) => (0.0, std::f64::consts::SQRT_2 * u_volume_l),
            (Some(text), true) => {
                let place = |e: String| err(&quoted(text), format!("reference_outer_volume: {e}"));
                let (v, u) = match text.split_once('±') {
                    Some((v, u)) => (v, Some(u)),
                    None => (text.as_str(), None),
                };
                let v_r = units::parse_volume(v.trim()).map_err(|e| place(e.to_string()))? * 1e3;
                let u_r = match u {
                    Some(u) => units::parse_volume(u.trim()).map_err(|e| place(e.to_string()))? * 1e3,
                    None => buoyancy::DEFAULT_U_VOLUME_REL * v_r,
                };
                (volume_l - v_r, u_volume_l.hypot(u_r))
            }
        };
        Ok(Some(BuoyancyInputs { densities, volume_l, substitution }))
    }
}

/// One air entry read into numbers; a refusal names the text at fault and why.
pub fn read_air(line: &AirLine) -> Result<buoyancy::Air, (String, String)> {
    let t = units::parse_temperature(&line.temperature)
        .map_err(|e| (line.temperature.clone(), format!("air temperature: {e}")))?;
    let p = units::parse_pressure(&line.pressure, STANDARD_AMBIENT_PA)
        .map_err(|e| (line.pressure.clone(), format!("air pressure: {e}")))?;
    let h = humidity(&line.humidity).map_err(|e| (line.humidity.clone(), format!("air humidity: {e}")))?;
    if !(263.15..=318.15).contains(&t) || !(60_000.0..=110_000.0).contains(&p) {
        return Err((
            line.temperature.clone(),
            "air conditions: outside the range of the air-density equation (600 to 1100 hPa; CIPM-2007 is made \
             for 15 to 27 °C, accepted here from -10 to 45 °C)"
                .into(),
        ));
    }
    Ok(buoyancy::Air { temperature_k: t, pressure_pa: p, humidity: h })
}

/// A relative humidity as written: `41%` or a fraction `0.41`; returns the fraction.
fn humidity(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let value = match t.strip_suffix('%') {
        Some(p) => p.trim().parse::<f64>().map(|v| v / 100.0),
        None => t.parse::<f64>(),
    }
    .map_err(|_| format!("humidity {t:?} is not a number; write it as 41% or 0.41"))?;
    if !(0.0..=1.0).contains(&value) {
        return Err(format!("humidity {t:?} is outside 0 to 100 %"));
    }
    Ok(value)
}

/// The composition made and its uncertainty, by both methods of evaluation.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub measurand: composition::Measurand,
    pub gum: uncertainty::Gum,
    pub monte_carlo: uncertainty::MonteCarlo,
    pub agreement: Vec<uncertainty::Agreement>,
}

/// Monte Carlo draws by default: 10⁵, enough for a 95 % interval to about 1 % of u
/// (JCGM 101:2008, 7.2.1, recommends 10⁶ for two significant digits; we check, not certify, with it).
pub const DEFAULT_DRAWS: usize = 100_000;
/// The default seed, so that a certificate printed twice is the same.
pub const DEFAULT_SEED: u64 = 20_081_001;

/// Evaluate a checked record: the measurand, the GUM propagation and the Monte Carlo check.
pub fn evaluate(
    checked: &Checked,
    catalogue: &Catalogue,
    model: Model,
    volume_m3: Option<f64>,
    others: &[Model],
    draws: usize,
    seed: u64,
) -> Result<Evaluation, String> {
    let measurand = composition::Measurand::of(checked, catalogue, model, volume_m3, others)?;
    let gum = uncertainty::gum(&measurand.inputs, |_| measurand.duals());
    if gum.values.iter().chain(&gum.u).any(|v| !v.is_finite()) {
        return Err("the composition has no finite value or uncertainty at these readings".into());
    }
    let monte_carlo = uncertainty::monte_carlo(&measurand.inputs, draws, seed, |x| measurand.evaluate(x));
    let agreement = uncertainty::compare(&gum, &monte_carlo);
    Ok(Evaluation { measurand, gum, monte_carlo, agreement })
}

/// Resolve a source as written: an analysis spec, or a reference for `lookup`.
pub fn resolve_source(
    written: &str,
    catalogue: &Catalogue,
    lookup: &dyn Fn(&str) -> Result<SourceInput, String>,
) -> Result<SourceInput, String> {
    let w = written.trim();
    if w.starts_with('@') || w.starts_with("record:") {
        return lookup(w);
    }
    Analysis::parse(w, catalogue).map(SourceInput::Analysis).map_err(|e| e.to_string())
}

/// A lookup that knows no source library and no records (for a record outside a library).
pub fn no_lookup(reference: &str) -> Result<SourceInput, String> {
    Err(format!("{reference} cannot be looked up here: no source library or record folder is at hand"))
}

/// A standard uncertainty of a mass: `0.010g`, `5mg`. Zero is accepted (an exact reading).
pub(crate) fn parse_mass_u(text: &str) -> Result<f64, String> {
    parse_non_negative(text, |t| match units::parse_amount(t) {
        Ok(AmountInput::Grams(g)) => Ok(g),
        Ok(AmountInput::Moles(_)) => Err("must be a mass (g, mg or kg), not an amount".to_string()),
        Err(e) => Err(e.to_string()),
    })
}

/// A pressure difference (`0.05bar`): parsed as an absolute pressure, which it scales like.
fn parse_delta_pressure(text: &str) -> Result<f64, String> {
    parse_non_negative(text, |t| units::parse_pressure(t, 0.0).map_err(|e| e.to_string()))
}

/// A temperature difference: `0.5K` or `0.5C` (a kelvin and a degree Celsius are the same step).
fn parse_delta_temperature(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let number = t.strip_suffix('K').or_else(|| t.strip_suffix('C')).or_else(|| t.strip_suffix("°C"));
    let Some(number) = number else {
        return Err(format!("{t:?} needs a unit: K (or C, the same step)"));
    };
    parse_non_negative(number, |n| n.trim().parse::<f64>().map_err(|_| format!("{t:?} is not a number")))
}

fn parse_non_negative(text: &str, parse: impl Fn(&str) -> Result<f64, String>) -> Result<f64, String> {
    let t = text.trim();
    if let Some(rest) = t.strip_prefix('-') {
        if parse(rest).is_ok() {
            return Err(format!("{t:?} is negative; a standard uncertainty is zero or more"));
        }
    }
    if t.trim_end_matches(|c: char| c.is_alphabetic() || c == '°').trim().parse::<f64>() == Ok(0.0) {
        return Ok(0.0);
    }
    parse(t)
}

/// SHA-256 of `bytes`, lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes).iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    const EXAMPLE: &str = r#"Record(
    format: 1,
    recipe: "flue-gas-span",
    recipe_revision: 1,
    cylinder: "FC-10-2291",
    scale_uncertainty: "0.010g",
    weighings: ["13412.000g", "13504.850g", "13942.450g", "15473.450g"],
    additions: [
        (source: "CO=1%±0.002%,N2=balance"),
        (source: "CO2=balance,N2=<10ppm"),
        (source: "N2=balance,O2=<2ppm,Ar=5ppm±1ppm"),
    ],
)"#;

    #[test]
    fn the_interface_example_reads_and_checks() {
        let c = Catalogue::built_in();
        let r = Record::parse(EXAMPLE, "example.ron").unwrap();
        let checked = r.check(&c, &no_lookup, EXAMPLE, "example.ron").unwrap();
        assert_eq!(checked.method, Method::Gravimetric);
        assert_eq!(checked.complete, 3);
        assert_eq!(checked.scale_u_g, 0.010);
        // Round trip through the canonical text.
        assert_eq!(Record::parse(&r.to_text(), "again").unwrap(), r);
    }

    #[test]
    fn bad_records_are_refused_with_their_place() {
        let c = Catalogue::built_in();
        let cases = [
            (EXAMPLE.replace("\"13942.450g\"", "\"13500.000g\""), "is not above", 7),
            (EXAMPLE.replace("0.010g", "-0.010g"), "negative", 6),
            (EXAMPLE.replace("O2=<2ppm", "Q9=<2ppm"), "unknown gas", 11),
            (EXAMPLE.replace("0.002%,", "-0.002%,"), "negative", 9),
            (EXAMPLE.replace(", \"15473.450g\"", ", \"15473.450g\", \"15500g\""), "5 weighings for 3", 7),
            (EXAMPLE.replace("CO2=balance,N2=<10ppm", "@co2-lot-4"), "cannot be looked up", 10),
        ];
        for (text, needle, line) in cases {
            let r = Record::parse(&text, "r.ron").unwrap();
            let e = r.check(&c, &no_lookup, &text, "r.ron").unwrap_err();
            assert!(e.message.contains(needle), "{needle}: {e}");
            assert_eq!(e.line, line, "{e}");
        }
        let e = Record::parse(&EXAMPLE.replace("cylinder:", "cylindre:"), "r.ron").unwrap_err();
        assert!(e.to_string().starts_with("r.ron:5:"), "{e}");
    }

    #[test]
    fn sha256_of_a_known_text() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(sha256_hex(b"abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    }
}
