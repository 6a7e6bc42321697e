//! Recipes: an order as the blender writes it down, in a RON file.
//!
//! Quantities are kept as the text the user typed (`"500ppm"`, `"10L"`), so that a saved
//! recipe shows exactly what was entered; [`Recipe::resolve`] reads them into an [`Order`]
//! of SI numbers and reports every problem with the file, line and column.

use serde::{Deserialize, Serialize};

pub mod canonical;
pub mod changes;
pub mod demo;

use crate::gas::Catalogue;
use crate::mixture::{self, Composition, Part, Share};
use crate::thermo::Model;
use crate::units::{self, AmountInput, STANDARD_AMBIENT_PA};

/// The recipe file format this program reads and writes.
pub const FORMAT: u32 = 1;

/// Largest recipe file read, bytes; a recipe is a few kB.
pub const MAX_RECIPE_BYTES: usize = 1024 * 1024;

/// One target component as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComponentLine {
    /// Gas id, name or CAS number.
    pub gas: String,
    /// `500ppm`, `2.5%`, `0.025` or `balance`.
    pub amount: String,
    /// Allowed deviation: relative (`2%rel`) or absolute (`10ppm`, `0.1%`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<String>,
}

/// The cylinder as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CylinderLine {
    /// Water capacity (internal volume), e.g. `10L`.
    pub water_capacity: String,
    /// Working pressure at 15 °C, e.g. `200bar`.
    pub working_pressure: String,
    /// Hydraulic test pressure, e.g. `300bar`.
    pub test_pressure: String,
    /// Tare mass of the evacuated cylinder with valve, e.g. `13.25kg`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tare: Option<String>,
    /// Serial number stamped on the cylinder.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub serial: Option<String>,
}

/// What the fill aims at.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum FillTarget {
    /// Final settled pressure at the reference temperature, e.g. `Pressure("150bar")`.
    Pressure(String),
    /// Total mass of gas, e.g. `Mass("1.2kg")`.
    Mass(String),
    /// Total amount of gas, e.g. `Amount("60mol")`.
    Amount(String),
}

/// A source cylinder available at the bench.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum SourceLine {
    /// A pure gas, by id.
    Pure(String),
    /// A mixture of known composition (a premix, or a balance gas with its impurities).
    /// `recipe` names the library recipe the premix is made by, when it is one of ours.
    Premix {
        name: String,
        mix: String,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        recipe: Option<String>,
    },
}

/// What is in the cylinder before the first addition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum BeforeFill {
    /// Evacuated to this absolute pressure, e.g. `Evacuated("0.5mbar")`; the residual gas is
    /// taken as air and only reported, not dosed against.
    Evacuated(String),
    /// A heel: gas of a known composition left at a stated absolute (or gauge) pressure,
    /// read at `temperature` (default: the fill temperature). The plan doses on top of it.
    Heel {
        mix: String,
        pressure: String,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        temperature: Option<String>,
    },
}

impl BeforeFill {
    /// The one-line form the editor shows and reads back: `evacuated`, `evacuated to
    /// 0.5mbar`, `N2 at 5bar` or `CO=50ppm,N2=balance at 5barg, 20C`.
    pub fn text(before: &Option<BeforeFill>) -> String {
        match before {
            None => "evacuated".into(),
            Some(BeforeFill::Evacuated(p)) => format!("evacuated to {p}"),
            Some(BeforeFill::Heel { mix, pressure, temperature: None }) => format!("{mix} at {pressure}"),
            Some(BeforeFill::Heel { mix, pressure, temperature: Some(t) }) => format!("{mix} at {pressure}, {t}"),
        }
    }

    /// Read the one-line form back; the quantities are checked when the recipe resolves.
    pub fn parse_text(text: &str) -> Result<Option<BeforeFill>, String> {
        let t = text.trim();
        let lower = t.to_ascii_lowercase();
        if t.is_empty() || lower == "evacuated" || lower == "empty" {
            return Ok(None);
        }
        if let Some(rest) = lower.strip_prefix("evacuated") {
            let rest = rest.trim_start();
            let p = rest.strip_prefix("to").unwrap_or(rest).trim();
            let start = t.len() - p.len();
            return Ok(Some(BeforeFill::Evacuated(t[start..].trim().to_string())));
        }
        let Some(at) = lower.rfind(" at ") else {
            return Err(format!(
                "{t:?} is not understood; accepted: evacuated, evacuated to 0.5mbar, N2 at 5bar, or \
                 CO=50ppm,N2=balance at 5barg, 20C"
            ));
        };
        let mix = t[..at].trim().to_string();
        let rest = t[at + 4..].trim();
        let (pressure, temperature) = match rest.split_once(',') {
            Some((p, temp)) => (p.trim().to_string(), Some(temp.trim().to_string()).filter(|s| !s.is_empty())),
            None => (rest.to_string(), None),
        };
        if mix.is_empty() || pressure.is_empty() {
            return Err("a heel needs a gas and a pressure, e.g. N2 at 5bar".into());
        }
        Ok(Some(BeforeFill::Heel { mix, pressure, temperature }))
    }
}

/// A recipe file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Recipe {
    pub format: u32,
    /// Revision in the library: 0 for a recipe never saved there, then +1 per changed save.
    #[serde(default)]
    pub revision: u64,
    /// When this revision was saved (UTC, RFC 3339).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub saved: Option<String>,
    /// Who saved this revision (the git identity's name, else the login name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub saved_by: Option<String>,
    /// The note given with this revision.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub change_note: Option<String>,
    pub name: String,
    #[serde(default)]
    pub description: String,
    /// The customer's order reference.
    #[serde(default)]
    pub order: String,
    pub components: Vec<ComponentLine>,
    pub cylinder: CylinderLine,
    pub fill: FillTarget,
    /// Temperature at which the final pressure is specified; default `15C`.
    #[serde(default = "default_reference_temperature")]
    pub reference_temperature: String,
    /// Expected cylinder temperature during the fill; default the reference temperature.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fill_temperature: Option<String>,
    /// Ambient pressure for gauge readings; default `1.01325bar`.
    #[serde(default = "default_ambient")]
    pub ambient: String,
    /// The cylinder before the fill; default: evacuated, nothing left in it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub before_fill: Option<BeforeFill>,
    /// Model; default: gerg where it covers the gases, else multi.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<Model>,
    /// Source cylinders; default: one pure source for each component.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub sources: Vec<SourceLine>,
    /// Fill order by source name; default: ascending amount, the balance gas last.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub fill_order: Vec<String>,
    #[serde(default)]
    pub notes: String,
}

fn default_reference_temperature() -> String {
    "15C".into()
}

fn default_ambient() -> String {
    "1.01325bar".into()
}

/// A recipe problem, placed in its file.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{origin}:{line}:{column}: {message}")]
pub struct RecipeError {
    pub origin: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

/// A resolved target component.
#[derive(Debug, Clone, PartialEq)]
pub struct Target {
    /// Catalogue index.
    pub gas: usize,
    /// The share as written.
    pub share: Share,
    /// Allowed deviation of the mole fraction, absolute.
    pub tolerance: Option<f64>,
}

/// Tolerances as wide as the amount they bound: `2%` on a 400 ppm component reads as
/// ±2 % mol/mol absolute, 50 times the amount, where `2%rel` was almost surely meant. Said,
/// not refused (a wide absolute tolerance can be meant).
pub fn tolerance_doubts(order: &Order, catalogue: &crate::gas::Catalogue) -> Vec<String> {
    order
        .targets
        .iter()
        .filter_map(|t| {
            let (x, tol) = (t.share.fraction()?, t.tolerance?);
            (x > 0.0 && tol >= x).then(|| {
                format!(
                    "{}: the tolerance ±{} (absolute) is as wide as the amount {} itself; a relative tolerance \
                     is written with %rel (2%rel)",
                    catalogue.gas(t.gas).id(),
                    crate::units::fraction_text(tol),
                    crate::units::fraction_text(x)
                )
            })
        })
        .collect()
}

/// A resolved source.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    /// Canonical id of a pure gas, or the premix name.
    pub name: String,
    /// Composition of what is in the source cylinder.
    pub composition: Composition,
    /// True for a pure gas.
    pub pure: bool,
}

/// How the fill is specified, resolved.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Fill {
    /// Settled pressure at the reference temperature, Pa.
    PressurePa(f64),
    /// Total mass, g.
    MassG(f64),
    /// Total amount, mol.
    AmountMol(f64),
}

/// What is in the cylinder before the first addition, resolved.
#[derive(Debug, Clone, PartialEq)]
pub enum Before {
    /// Evacuated to `residual_pa` (0 when not stated).
    Evacuated { residual_pa: f64 },
    /// A heel of `composition` at `pressure_pa` and `temperature_k`.
    Heel { composition: Composition, pressure_pa: f64, temperature_k: f64 },
}

/// A recipe read into numbers: everything the plan needs.
#[derive(Debug, Clone, PartialEq)]
pub struct Order {
    pub name: String,
    pub description: String,
    pub order: String,
    pub targets: Vec<Target>,
    /// Index in `targets` of the balance gas, if one was written.
    pub balance: Option<usize>,
    /// Target composition, in the order of `targets`.
    pub composition: Composition,
    pub volume_m3: f64,
    pub working_pressure_pa: f64,
    pub test_pressure_pa: f64,
    pub tare_g: Option<f64>,
    pub serial: Option<String>,
    pub fill: Fill,
    pub reference_temperature_k: f64,
    pub fill_temperature_k: f64,
    pub ambient_pa: f64,
    pub before: Before,
    pub model: Option<Model>,
    pub sources: Vec<Source>,
    /// Source names in the fill order given, empty for the default order.
    pub fill_order: Vec<String>,
    pub notes: String,
}

impl Recipe {
    /// Parse a recipe file's text; `origin` names it in messages.
    pub fn parse(text: &str, origin: &str) -> Result<Recipe, RecipeError> {
        if text.len() > MAX_RECIPE_BYTES {
            return Err(RecipeError {
                origin: origin.into(),
                line: 1,
                column: 1,
                message: format!(
                    "{} bytes is larger than a recipe can be ({MAX_RECIPE_BYTES} bytes); not read",
                    text.len()
                ),
            });
        }
        let text = crate::ron_format::without_bom(text);
        let recipe: Recipe = crate::ron_format::options().from_str(text).map_err(|e| {
            let (line, column, message) = crate::ron_format::parse_problem(text, &e, "recipe", "Recipe(");
            RecipeError { origin: origin.into(), line, column, message }
        })?;
        if recipe.format != FORMAT {
            return Err(place(
                origin,
                text,
                "format",
                format!("recipe format {} is not known; this program reads format {FORMAT}", recipe.format),
            ));
        }
        Ok(recipe)
    }

    /// Parse and resolve in one go.
    pub fn load(text: &str, origin: &str, catalogue: &Catalogue) -> Result<Order, RecipeError> {
        Recipe::parse(text, origin)?.resolve(catalogue, text, origin)
    }

    /// Read every field into numbers, checking it. `text` is the file the recipe came
    /// from (to place errors); pass "" for a recipe built in memory.
    pub fn resolve(&self, catalogue: &Catalogue, text: &str, origin: &str) -> Result<Order, RecipeError> {
        let placed = |(needle, message): Placed| place(origin, text, &needle, message);
        let ambient_pa = units::parse_pressure(&self.ambient, STANDARD_AMBIENT_PA)
            .map_err(|e| (quoted(&self.ambient), format!("ambient: {e}")))
            .map_err(placed)?;
        let (targets, composition) = self.targets(catalogue).map_err(placed)?;
        let balance = targets.iter().position(|t| t.share == Share::Balance);
        let cylinder = cylinder_of(&self.cylinder, ambient_pa).map_err(placed)?;
        let fill =
            fill_of(&self.fill, ambient_pa, cylinder.test_pressure_pa, &self.cylinder.test_pressure).map_err(placed)?;
        let reference_temperature_k = units::parse_temperature(&self.reference_temperature)
            .map_err(|e| (quoted(&self.reference_temperature), format!("reference_temperature: {e}")))
            .map_err(placed)?;
        let fill_temperature_k = match &self.fill_temperature {
            None => reference_temperature_k,
            Some(t) => units::parse_temperature(t)
                .map_err(|e| (quoted(t), format!("fill_temperature: {e}")))
                .map_err(placed)?,
        };
        let sources = self.sources_of(&targets, catalogue).map_err(placed)?;
        let before =
            resolve_before(&self.before_fill, catalogue, ambient_pa, cylinder.test_pressure_pa, fill_temperature_k)
                .map_err(|(needle, message)| placed((quoted(&needle), message)))?;
        check_fill_order(&self.fill_order, &sources).map_err(placed)?;
        Ok(Order {
            name: self.name.clone(),
            description: self.description.clone(),
            order: self.order.clone(),
            targets,
            balance,
            composition,
            volume_m3: cylinder.volume_m3,
            working_pressure_pa: cylinder.working_pressure_pa,
            test_pressure_pa: cylinder.test_pressure_pa,
            tare_g: cylinder.tare_g,
            serial: self.cylinder.serial.clone(),
            fill,
            reference_temperature_k,
            fill_temperature_k,
            ambient_pa,
            before,
            model: self.model,
            sources,
            fill_order: self.fill_order.clone(),
            notes: self.notes.clone(),
        })
    }

    /// The components read: each gas once, the amounts as a whole first (one balance gas, a
    /// sum of 100 %), then the tolerances (only judged against a valid composition, so that
    /// their error cannot hide the amounts').
    fn targets(&self, catalogue: &Catalogue) -> Result<(Vec<Target>, Composition), Placed> {
        if self.components.is_empty() {
            return Err(("components".into(), "the recipe has no components".into()));
        }
        let mut parts: Vec<Part> = Vec::new();
        for line in &self.components {
            let gas = catalogue.find(&line.gas).map_err(|e| (quoted(&line.gas), e.to_string()))?;
            let id = catalogue.gas(gas).id().to_string();
            if parts.iter().any(|p| p.gas == gas) {
                return Err((quoted(&line.gas), format!("{id} is listed twice")));
            }
            let share = mixture::parse_share(&line.amount)
                .map_err(|problem| (quoted(&line.amount), format!("{id:?} amount {:?} {problem}", line.amount)))?;
            parts.push(Part { gas, share });
        }
        mixture::check_parts(&parts, catalogue).map_err(|e| ("components".to_string(), e.to_string()))?;
        let mut targets = Vec::new();
        for (line, part) in self.components.iter().zip(&parts) {
            let id = catalogue.gas(part.gas).id();
            let tolerance = match &line.tolerance {
                None => None,
                Some(t) => Some(
                    parse_tolerance(t, part.share.fraction())
                        .map_err(|p| (quoted(t), format!("{id:?} tolerance {t:?}: {p}")))?,
                ),
            };
            targets.push(Target { gas: part.gas, share: part.share, tolerance });
        }
        Ok((targets, Composition::from_parts(&parts)))
    }

    /// The sources: as listed (pure gases by id, premixes by name and composition), each
    /// name once; none listed, each target gas pure.
    fn sources_of(&self, targets: &[Target], catalogue: &Catalogue) -> Result<Vec<Source>, Placed> {
        let pure = |gas: usize| Source {
            name: catalogue.gas(gas).id().to_string(),
            composition: Composition { gases: vec![gas], fractions: vec![1.0] },
            pure: true,
        };
        if self.sources.is_empty() {
            return Ok(targets.iter().map(|t| pure(t.gas)).collect());
        }
        let mut out: Vec<Source> = Vec::new();
        for s in &self.sources {
            let source = match s {
                SourceLine::Pure(id) => pure(catalogue.find(id).map_err(|e| (quoted(id), format!("source: {e}")))?),
                SourceLine::Premix { name, mix, .. } => {
                    if name.trim().is_empty() {
                        return Err((quoted(mix), "a premix source needs a name".into()));
                    }
                    let composition = Composition::from_spec(mix, catalogue)
                        .map_err(|e| (quoted(mix), format!("source {name:?}: {e}")))?;
                    Source { name: name.clone(), composition, pure: false }
                }
            };
            if out.iter().any(|o| o.name == source.name) {
                return Err((quoted(&source.name), format!("source {:?} is listed twice", source.name)));
            }
            out.push(source);
        }
        Ok(out)
    }
}

/// A field's problem: the text to place it at in the file, and the message.
type Placed = (String, String);

/// A value as it is written in the file (quoted), to find it there.
fn quoted(s: &str) -> String {
    format!("\"{s}\"")
}

/// The cylinder's figures read.
struct CylinderFigures {
    volume_m3: f64,
    working_pressure_pa: f64,
    test_pressure_pa: f64,
    tare_g: Option<f64>,
}

/// The cylinder read: water capacity, working and test pressure (the test pressure not
/// below the working one), tare.
fn cylinder_of(c: &CylinderLine, ambient_pa: f64) -> Result<CylinderFigures, Placed> {
    let volume_m3 = units::parse_volume(&c.water_capacity)
        .map_err(|e| (quoted(&c.water_capacity), format!("water_capacity: {e}")))?;
    let working_pressure_pa = units::parse_pressure(&c.working_pressure, ambient_pa)
        .map_err(|e| (quoted(&c.working_pressure), format!("working_pressure: {e}")))?;
    let test_pressure_pa = units::parse_pressure(&c.test_pressure, ambient_pa)
        .map_err(|e| (quoted(&c.test_pressure), format!("test_pressure: {e}")))?;
    if test_pressure_pa < working_pressure_pa {
        return Err((
            quoted(&c.test_pressure),
            format!(
                "test_pressure {:?} is below the working pressure {:?}; check the cylinder's markings",
                c.test_pressure, c.working_pressure
            ),
        ));
    }
    let tare_g = match &c.tare {
        None => None,
        Some(t) => Some(units::parse_mass(t).map_err(|e| (quoted(t), format!("tare: {e}")))?),
    };
    Ok(CylinderFigures { volume_m3, working_pressure_pa, test_pressure_pa, tare_g })
}

/// The fill target read: a pressure (not above the test pressure, `test_text` as written),
/// a mass or an amount, each in its own kind of unit.
fn fill_of(fill: &FillTarget, ambient_pa: f64, test_pressure_pa: f64, test_text: &str) -> Result<Fill, Placed> {
    Ok(match fill {
        FillTarget::Pressure(p) => {
            let pa = units::parse_pressure(p, ambient_pa).map_err(|e| (quoted(p), format!("fill: {e}")))?;
            if pa > test_pressure_pa {
                return Err((
                    quoted(p),
                    format!(
                        "fill pressure {p:?} is above the cylinder's test pressure {test_text:?}; this fill must not be made"
                    ),
                ));
            }
            Fill::PressurePa(pa)
        }
        FillTarget::Mass(m) => match units::parse_amount(m) {
            Ok(AmountInput::Grams(g)) => Fill::MassG(g),
            Ok(AmountInput::Moles(_)) => {
                return Err((quoted(m), format!("fill Mass({m:?}) must be a mass; use Amount(..) for mol")))
            }
            Err(e) => return Err((quoted(m), format!("fill: {e}"))),
        },
        FillTarget::Amount(n) => match units::parse_amount(n) {
            Ok(AmountInput::Moles(mol)) => Fill::AmountMol(mol),
            Ok(AmountInput::Grams(_)) => {
                return Err((quoted(n), format!("fill Amount({n:?}) must be in mol; use Mass(..) for g or kg")))
            }
            Err(e) => return Err((quoted(n), format!("fill: {e}"))),
        },
    })
}

/// Every name in the fill order is a source.
fn check_fill_order(fill_order: &[String], sources: &[Source]) -> Result<(), Placed> {
    for name in fill_order {
        if !sources.iter().any(|s| &s.name == name) {
            let known: Vec<&str> = sources.iter().map(|s| s.name.as_str()).collect();
            return Err((
                quoted(name),
                format!("fill_order names {name:?}, which is not a source; the sources are {}", known.join(", ")),
            ));
        }
    }
    Ok(())
}

/// Read what is in the cylinder before the fill; an error gives the text to place it at
/// and the message.
pub fn resolve_before(
    before: &Option<BeforeFill>,
    catalogue: &Catalogue,
    ambient_pa: f64,
    test_pressure_pa: f64,
    fill_temperature_k: f64,
) -> Result<Before, (String, String)> {
    Ok(match before {
        None => Before::Evacuated { residual_pa: 0.0 },
        Some(BeforeFill::Evacuated(p)) => {
            let residual_pa = units::parse_pressure(p, ambient_pa)
                .map_err(|e| (p.clone(), format!("before_fill: evacuated to: {e}")))?;
            if residual_pa > 0.1 * ambient_pa {
                return Err((
                    p.clone(),
                    format!(
                        "before_fill: {p:?} is not a vacuum (above 0.1 atm); state what is left as a heel, e.g. \
                         N2 at 2bar"
                    ),
                ));
            }
            Before::Evacuated { residual_pa }
        }
        Some(BeforeFill::Heel { mix, pressure, temperature }) => {
            let composition =
                Composition::from_spec(mix, catalogue).map_err(|e| (mix.clone(), format!("before_fill: heel: {e}")))?;
            let pressure_pa = units::parse_pressure(pressure, ambient_pa)
                .map_err(|e| (pressure.clone(), format!("before_fill: heel pressure: {e}")))?;
            if pressure_pa >= test_pressure_pa {
                return Err((
                    pressure.clone(),
                    format!("before_fill: the heel pressure {pressure:?} is at or above the cylinder's test pressure"),
                ));
            }
            let temperature_k = match temperature {
                None => fill_temperature_k,
                Some(t) => units::parse_temperature(t)
                    .map_err(|e| (t.clone(), format!("before_fill: heel temperature: {e}")))?,
            };
            Before::Heel { composition, pressure_pa, temperature_k }
        }
    })
}

/// Tolerance as written: `2%rel` (relative to the amount) or an absolute share (`10ppm`).
/// Returns the absolute tolerance of the mole fraction.
pub fn parse_tolerance(text: &str, fraction: Option<f64>) -> Result<f64, String> {
    const ACCEPTED: &str = "accepted: 2%rel (relative to the amount) or an absolute amount such as 10ppm or 0.1%, \
                            with or without a leading ± or +-";
    // A tolerance is a ± by nature: a leading `±`, `+-` or `+/-` says the same.
    let t = text.trim();
    let t = ["±", "+/-", "+-"].iter().find_map(|p| t.strip_prefix(p)).unwrap_or(t).trim();
    let lower = t.to_ascii_lowercase();
    if let Some(number) = lower.strip_suffix("%rel").or_else(|| lower.strip_suffix("% rel")) {
        let rel: f64 = number.trim().parse().map_err(|_| format!("is not a number; {ACCEPTED}"))?;
        if !(rel.is_finite() && rel > 0.0 && rel < 100.0) {
            return Err("a relative tolerance must be between 0 and 100 %rel".into());
        }
        let Some(x) = fraction else {
            return Err("the balance gas takes an absolute tolerance (e.g. 0.5%), not a relative one".into());
        };
        return Ok(x * rel / 100.0);
    }
    match mixture::parse_share(t).map_err(|e| format!("{e}; {ACCEPTED}"))? {
        Share::Of { value, unit } => Ok(value * unit.scale()),
        Share::Balance => Err(ACCEPTED.into()),
    }
}

/// A [`RecipeError`] at the first occurrence of `needle` in `text`.
fn place(origin: &str, text: &str, needle: &str, message: String) -> RecipeError {
    let (line, column) = crate::ron_format::locate(text, needle);
    RecipeError { origin: origin.into(), line, column, message }
}

impl Recipe {
    /// A new recipe to start from: nitrogen in a 10 L, 200 bar cylinder, filled to 150 bar.
    pub fn blank() -> Recipe {
        Recipe {
            format: FORMAT,
            revision: 0,
            saved: None,
            saved_by: None,
            change_note: None,
            name: String::new(),
            description: String::new(),
            order: String::new(),
            components: vec![ComponentLine { gas: "N2".into(), amount: "balance".into(), tolerance: None }],
            cylinder: CylinderLine {
                water_capacity: "10L".into(),
                working_pressure: "200bar".into(),
                test_pressure: "300bar".into(),
                tare: None,
                serial: None,
            },
            fill: FillTarget::Pressure("150bar".into()),
            reference_temperature: "15C".into(),
            fill_temperature: None,
            ambient: "1.01325bar".into(),
            before_fill: None,
            model: None,
            sources: Vec::new(),
            fill_order: Vec::new(),
            notes: String::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tolerances() {
        assert!((parse_tolerance("2%rel", Some(0.15)).unwrap() - 0.003).abs() < 1e-15);
        assert!((parse_tolerance("10ppm", Some(5e-4)).unwrap() - 1e-5).abs() < 1e-18);
        assert!(parse_tolerance("2%rel", None).is_err());
        assert!(parse_tolerance("abc", Some(0.1)).is_err());
        // A leading ± says what a tolerance is anyway.
        for t in ["±2 %rel", "+-2%rel", "+/- 2%rel", "± 2%rel"] {
            assert!((parse_tolerance(t, Some(0.15)).unwrap() - 0.003).abs() < 1e-15, "{t}");
        }
        assert!((parse_tolerance("±10ppm", Some(5e-4)).unwrap() - 1e-5).abs() < 1e-18);
        // What is wrong says what is accepted.
        let e = parse_tolerance("2 percent", Some(0.1)).unwrap_err();
        assert!(e.contains("accepted: 2%rel"), "{e}");
    }
}
