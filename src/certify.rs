//! The certificate of a fill record as the library holds it: the record checked against
//! its recipe's revision and hash, its sources looked up (the source library, premix
//! records), the composition evaluated, and the verifications by analysis attached. Used by
//! `fillwright certify`, `fillwright verify` and the screen alike; what is printed is the
//! certificate's ([`crate::print::certificate`]).

use crate::config;
use crate::gas::Catalogue;
use crate::library::records::Lookup;
use crate::library::Library;
use crate::print::certificate::{Certificate, RecipeCheck, Target};
use crate::recipe::Recipe;
use crate::record::{self, Checked, Record};
use crate::thermo::Model;
use crate::verification::Measured;

/// A record found for certification.
pub struct Found {
    pub id: String,
    pub origin: String,
    pub text: String,
    pub record: Record,
    /// The library it belongs to (None for a file elsewhere).
    pub library: Option<Library>,
}

/// How to evaluate: the model for pressure readings, the Monte Carlo draws and seed.
#[derive(Debug, Clone)]
pub struct Evaluate {
    pub model: Option<Model>,
    pub draws: usize,
    pub seed: u64,
    /// The date of issue, YYYY-MM-DD (default today).
    pub issued: Option<String>,
}

/// Add `months` to a date `YYYY-MM-DD` (the day clamped to the month's last).
pub fn add_months(date: &str, months: u32) -> Option<String> {
    let mut parts = date.get(..10)?.split('-');
    let (y, m, d): (i32, u32, u32) =
        (parts.next()?.parse().ok()?, parts.next()?.parse().ok()?, parts.next()?.parse().ok()?);
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return None;
    }
    let total = (m - 1) + months;
    let (y, m) = (y + (total / 12) as i32, total % 12 + 1);
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let last = [31, if leap { 29 } else { 28 }, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][(m - 1) as usize];
    Some(format!("{y:04}-{m:02}-{:02}", d.min(last)))
}

/// How long a certificate of this blend is valid, months: the setting, else by its
/// components (common practice, no source): 6 with a reactive gas (NO, NO2, SO2, H2S,
/// NH3, HCl, Cl2 or any corrosive one), 12 with CO or a hydrocarbon below 0.1 %, else 24.
pub fn shelf_life_months(gases: &[usize], fractions: &[f64], catalogue: &Catalogue, setting: Option<u32>) -> u32 {
    if let Some(m) = setting {
        return m;
    }
    let reactive = ["NO", "NO2", "SO2", "H2S", "NH3", "HCl", "Cl2"];
    let ids: Vec<&str> = gases.iter().map(|&g| catalogue.gas(g).id()).collect();
    if ids.iter().zip(gases).any(|(id, &g)| reactive.contains(id) || catalogue.gas(g).hazard().corrosive) {
        return 6;
    }
    let trace_of = |id: &str, x: f64| x < 1e-3 && (id == "CO" || id.contains('C') && id.contains('H'));
    if ids.iter().zip(fractions).any(|(id, &x)| trace_of(id, x)) {
        12
    } else {
        24
    }
}

/// What makes the certificate a document: its number and dates, the order, the cylinder
/// and the final pressure, and the blend's own cautions.
/// Sources from the source library whose analysis had expired when they were added.
fn expired_sources(record: &Record, sources: Option<&std::path::Path>) -> Vec<String> {
    let mut remarks = Vec::new();
    for (k, a) in record.additions.iter().enumerate() {
        let (Some(name), Some(dir)) = (a.source.trim().strip_prefix('@'), sources) else { continue };
        let Ok(entry) = crate::library::records::open_source(dir, name.trim()) else { continue };
        let when = a.time.as_deref().or(record.started.as_deref()).unwrap_or("");
        if let Some(expiry) =
            entry.expiry.as_deref().filter(|e| !when.is_empty() && when.get(..10).is_some_and(|w| w > *e))
        {
            remarks.push(format!("addition {}: the analysis of source {name} expired on {expiry}", k + 1));
        }
    }
    remarks
}

/// What the fill made: the evaluation, the cylinder's volume and the model for its pressure.
struct Made<'a> {
    evaluation: &'a record::Evaluation,
    volume_m3: Option<f64>,
    model: Model,
}

fn document(
    record: &Record,
    id: &str,
    order: Option<&crate::recipe::Order>,
    made: Made,
    catalogue: &Catalogue,
    settings: &crate::settings::Resolved,
    issued: Option<&str>,
) -> crate::print::certificate::Document {
    let Made { evaluation, volume_m3, model } = made;
    let issued = issued.map(str::to_string).unwrap_or_else(|| crate::library::clock::now_utc()[..10].to_string());
    let year = issued.get(..4).unwrap_or("");
    let number = settings.certificate_number.replace("{record}", id).replace("{year}", year);
    let gases = &evaluation.measurand.gases;
    let months = shelf_life_months(gases, &evaluation.gum.values, catalogue, settings.shelf_life_months);
    let amounts = evaluation.measurand.amounts_mol();
    let final_pressure_bar = volume_m3.and_then(|v| {
        let fluid = crate::thermo::Fluid::new(catalogue, gases, model).ok()?;
        fluid.pressure(crate::units::REFERENCE_TEMPERATURE_K, v, &amounts).ok().map(|p| p / 1e5)
    });
    let mut cautions: Vec<String> = Vec::new();
    if let Some(o) = order {
        let options = crate::plan::PlanOptions { screening_only: true, ..Default::default() };
        if let Ok(plan) = crate::plan::plan(o, catalogue, &options) {
            let findings = crate::checks::screen(&plan, o, catalogue, &settings.conditions());
            cautions.extend(
                findings
                    .iter()
                    .filter(|c| c.severity != crate::checks::Severity::Ok)
                    .map(|c| format!("{}: {}", c.id, c.message)),
            );
        }
    }
    if months <= 6 {
        cautions.push(
            "reactive components: keep in a passivated cylinder with a suitable valve; the content may drift \
             (shelf life 6 months)"
                .into(),
        );
    }
    cautions.push(format!("valid for {months} months from issue if kept between 0 and 40 °C (common practice)"));
    cautions.push(crate::checks::CAUTIONS[1].to_string());
    crate::print::certificate::Document {
        number,
        valid_until: add_months(&issued, months).unwrap_or_default(),
        issued,
        order_reference: order.map(|o| o.order.clone()).unwrap_or_default(),
        customer: record.customer.clone(),
        recipe_title: order.map(|o| o.description.lines().next().unwrap_or("").to_string()).unwrap_or_default(),
        water_capacity_l: volume_m3.map(|v| v * 1e3),
        working_pressure_bar: order.map(|o| o.working_pressure_pa / 1e5),
        final_pressure_bar,
        cautions,
    }
}

/// A name that can only be a file.
pub fn looks_like_path(s: &str) -> bool {
    s.ends_with(".ron") || s.contains('/') || s.contains(std::path::MAIN_SEPARATOR)
}

/// What the library says of the record's recipe: the check of revision and hash, the
/// recipe at that revision if it is on file, and the recipe's current revision.
fn check_recipe(record: &Record, library: Option<&Library>) -> (RecipeCheck, Option<Recipe>, Option<u64>) {
    let Some(lib) = library else {
        let why = "the record is not in a library, so its recipe could not be looked up";
        return (RecipeCheck::NotVerified(why.into()), None, None);
    };
    let recipe = match lib.revision(&record.recipe, record.recipe_revision) {
        Ok(r) => r,
        Err(e) => {
            let why = format!("recipe {} revision {}: {e}", record.recipe, record.recipe_revision);
            return (RecipeCheck::NotVerified(why), None, None);
        }
    };
    let hash = record::sha256_hex(crate::recipe::canonical::to_text(&recipe).as_bytes());
    let current = lib.open(&record.recipe).ok().map(|o| o.recipe.revision);
    let check = match &record.recipe_sha256 {
        None => RecipeCheck::NotVerified("the record carries no hash of the recipe".into()),
        Some(h) if *h != hash => RecipeCheck::NotVerified(format!(
            "revision {} on file hashes to {}…, not to the recorded {}…; the recipe filled is not the one on file",
            record.recipe_revision,
            &hash[..12],
            h.get(..12).unwrap_or(h)
        )),
        Some(_) => RecipeCheck::Verified,
    };
    (check, Some(recipe), current)
}

/// Everything `certify` computes, for the command and the screen.
pub struct Certified {
    pub id: String,
    pub record: Record,
    pub checked: Checked,
    pub evaluation: record::Evaluation,
    pub recipe_check: RecipeCheck,
    pub targets: Vec<Target>,
    pub remarks: Vec<String>,
    pub verifications: Vec<crate::print::certificate::Verified>,
    pub combine_verification: bool,
    /// Why the fill is not finished, if it is not (the certificate is then refused, or
    /// printed as the composition so far with `--in-progress`).
    pub unfinished: Option<String>,
    pub document: crate::print::certificate::Document,
}

/// Why a record is not a finished fill: an addition recorded but not weighed; or, for a
/// fill started at the bench (`started` set), no finish time or fewer additions than the
/// recipe's plan (`planned`). A record written by hand (no start time) with every addition
/// weighed is taken as complete.
pub fn unfinished(record: &Record, checked: &Checked, planned: Option<usize>) -> Option<String> {
    let recorded = checked.additions.len();
    if checked.complete < recorded {
        return Some(format!("{} of {recorded} additions are weighed or read", checked.complete));
    }
    let started = record.started.as_deref()?;
    if record.finished.is_none() {
        return Some(format!("the fill started at {started} has no finish time"));
    }
    planned
        .filter(|&n| recorded < n)
        .map(|n| format!("{recorded} of the {n} additions of the recipe's plan are recorded"))
}

/// A source whose amounts are nominal is refused: a composition without uncertainty
/// would be certified as exact (a premix's nominal 0.5 % gave an uncertainty 40 times too
/// small). Returns the remarks for pure gases with no impurity stated.
pub fn check_sources(checked: &Checked, catalogue: &Catalogue) -> Result<Vec<String>, String> {
    use crate::record::analysis::Assay;
    let mut remarks = Vec::new();
    for (k, a) in checked.additions.iter().enumerate() {
        let record::SourceInput::Analysis(analysis) = &a.source else { continue };
        if let [only] = analysis.lines.as_slice() {
            if only.assay == Assay::Balance {
                let id = catalogue.gas(only.gas).id();
                remarks.push(format!(
                    "addition {}: source {} ({id}) has no impurity stated; certified as pure {id}",
                    k + 1,
                    a.source_name.as_deref().unwrap_or(&a.written)
                ));
                continue;
            }
        }
        for line in &analysis.lines {
            if let Assay::Measured { u, .. } = line.assay {
                if !(u > 0.0) {
                    return Err(format!(
                        "addition {}: source {:?} gives {} with no uncertainty; a nominal composition is not an \
                         analysis. Write each amount with its standard uncertainty (CO=0.5%±0.002%), or name the \
                         premix's own record (record:ID)",
                        k + 1,
                        a.written,
                        catalogue.gas(line.gas).id()
                    ));
                }
            }
        }
    }
    Ok(remarks)
}

/// What a reviewer must know about the entries: every correction made after an entry was
/// recorded (what it was, what it became, why), and every addition whose pressure reading
/// disagrees with its weighing beyond their uncertainties.
pub fn entry_remarks(
    record: &record::Record,
    checked: &Checked,
    plan: Option<&crate::plan::Plan>,
    catalogue: &Catalogue,
) -> Vec<String> {
    let mut remarks: Vec<String> = record
        .corrections
        .iter()
        .map(|c| {
            let now = if c.now.is_empty() { "withdrawn".to_string() } else { c.now.clone() };
            format!(
                "corrected {}: {} was {}, now {now} ({}); the entry as it was is in the record's revisions",
                c.time, c.entry, c.was, c.reason
            )
        })
        .collect();
    if let Some(plan) = plan {
        for c in crate::bench::cross_check(checked, plan, catalogue).iter().filter(|c| c.disagrees()) {
            remarks.push(format!(
                "addition {}: the pressure reading {:.3} bar disagrees with the weighing, whose contents give {:.3} \
                 bar at the recorded temperature ({} model; allowed ±{:.3} bar, k = 2): check the gauge, the scale \
                 and the source",
                c.step + 1,
                c.reading_pa / 1e5,
                c.from_masses_pa / 1e5,
                plan.model.key(),
                c.allowed_pa / 1e5
            ));
        }
    }
    remarks
}

/// Check, evaluate and verify a record.
pub fn certify_record(found: &Found, catalogue: &Catalogue, how: Evaluate) -> Result<Certified, String> {
    let Evaluate { model, draws, seed, issued } = how.clone();
    let (id, record, library) = (found.id.as_str(), &found.record, found.library.as_ref());
    let (text, origin) = (found.text.as_str(), found.origin.as_str());
    let sources = config::config_dir().map(|d| d.join("sources"));
    let lookup = Lookup { library, sources: sources.as_deref(), catalogue, depth: 0 };
    let checked = record.check(catalogue, &|r| lookup.resolve(r), text, origin).map_err(|e| e.to_string())?;
    let source_remarks = check_sources(&checked, catalogue).map_err(|e| format!("{origin}: {e}"))?;
    let (recipe_check, recipe, current_revision) = check_recipe(record, library);
    let order = recipe.as_ref().and_then(|r| r.resolve(catalogue, "", &r.name).ok());
    // Only its steps are read (how many the fill has).
    let options = crate::plan::PlanOptions { screening_only: true, ..Default::default() };
    let plan = order.as_ref().and_then(|o| crate::plan::plan(o, catalogue, &options).ok());
    let unfinished = unfinished(record, &checked, plan.as_ref().map(|p| p.steps.len()));
    let volume = checked.volume_m3.or(order.as_ref().map(|o| o.volume_m3));
    let settings = config::load_settings().unwrap_or_else(|_| config::default_settings());
    let gases: Vec<usize> = checked.additions.iter().flat_map(|a| a.source.composition().gases).collect();
    let model = model
        .or(record.model)
        .or(order.as_ref().and_then(|o| o.model))
        .or(settings.default_model)
        .unwrap_or_else(|| crate::plan::default_model(&gases, catalogue));
    let others: Vec<Model> = Model::ALL.iter().copied().filter(|m| *m != Model::Ideal).collect();
    let evaluation = record::evaluate(&checked, catalogue, model, volume, &others, draws, seed)?;
    let targets: Vec<Target> = order
        .as_ref()
        .map(|o| {
            o.targets
                .iter()
                .zip(&o.composition.fractions)
                .map(|(t, x)| Target { gas: t.gas, fraction: *x, tolerance: t.tolerance })
                .collect()
        })
        .unwrap_or_default();
    let mut remarks = source_remarks;
    if let Some(now) = current_revision.filter(|&r| r != record.recipe_revision) {
        let filled = record.recipe_revision;
        remarks.push(format!("the recipe is now at revision {now}; the record was filled to revision {filled}"));
    }
    if library.is_none() {
        remarks.push(
            "record file outside a library: the recipe, its hash and any record: premix sources could not be verified"
                .into(),
        );
    }
    remarks.extend(expired_sources(record, sources.as_deref()));
    remarks.extend(entry_remarks(record, &checked, plan.as_ref(), catalogue));
    if draws < record::DEFAULT_DRAWS {
        remarks.push(format!(
            "Monte Carlo with {draws} draws only; a certificate wants at least {}",
            record::DEFAULT_DRAWS
        ));
    }
    if checked.method == record::Method::Manometric {
        remarks.push("composition from pressure readings: expect about 1 % relative, ten times a gravimetric preparation (common practice)".into());
    }
    let made = Made { evaluation: &evaluation, volume_m3: volume, model };
    let document = document(record, id, order.as_ref(), made, catalogue, &settings, issued.as_deref());
    Ok(Certified {
        id: id.to_string(),
        record: record.clone(),
        checked,
        evaluation,
        recipe_check,
        targets,
        remarks,
        verifications: Vec::new(),
        combine_verification: settings.combine_verification_uncertainty,
        unfinished,
        document,
    })
}

impl Certified {
    /// The certificate's typeset PDF, titled with record `id`; an unfinished fill carries
    /// its banner on every page.
    pub fn pdf(&self, cert: &Certificate, id: &str) -> Vec<u8> {
        let banner = self.unfinished.is_some().then_some(crate::print::certificate::IN_PROGRESS_BANNER);
        let title = format!("Certificate of preparation {id}");
        let running = format!("certificate {} | record {id} | cylinder {}", cert.document.number, self.record.cylinder);
        crate::print::certificate::typeset::render(&cert.blocks(), &title, &running, banner)
    }

    pub fn certificate<'a>(&'a self, catalogue: &'a Catalogue) -> Certificate<'a> {
        Certificate {
            id: self.id.clone(),
            record: &self.record,
            checked: &self.checked,
            evaluation: &self.evaluation,
            catalogue,
            recipe_check: self.recipe_check.clone(),
            targets: self.targets.clone(),
            remarks: self.remarks.clone(),
            verifications: self.verifications.clone(),
            combine_verification: self.combine_verification,
            unfinished: self.unfinished.clone(),
            document: self.document.clone(),
        }
    }

    /// Attach the library's verifications of this record (files whose sample is it).
    /// The sample's prepared content is this evaluation's; a reference mixture that is
    /// another record of ours is evaluated on its own.
    pub fn attach_verifications(&mut self, library: &Library, catalogue: &Catalogue) {
        let id = self.id.clone();
        for (name, file) in library.verifications() {
            let v = match file {
                Ok(v) => v,
                // A file that cannot be read is named where it may concern this record.
                Err(why) => {
                    let text = library.verification_path(&name).ok().and_then(|p| std::fs::read_to_string(p).ok());
                    if text.is_some_and(|t| t.contains(id.as_str())) {
                        self.verifications.push(crate::print::certificate::Verified { file: name, outcome: Err(why) });
                    }
                    continue;
                }
            };
            if v.sample.record.as_deref() != Some(id.as_str()) {
                continue;
            }
            let origin = library.verification_path(&name).map(|p| p.display().to_string()).unwrap_or(name.clone());
            let text = v.to_text();
            let e = &self.evaluation;
            let lookup = |rid: &str, gas: usize| {
                if rid == id {
                    let i = e
                        .measurand
                        .gases
                        .iter()
                        .position(|&g| g == gas)
                        .ok_or_else(|| format!("record {id} does not contain {}", catalogue.gas(gas).id()))?;
                    Ok(Measured { value: e.gum.values[i], u: e.gum.u[i] })
                } else {
                    record_content(Some(library), catalogue, rid, gas)
                }
            };
            let outcome = v
                .check(catalogue, &lookup, &text, &origin)
                .map_err(|e| e.message)
                .and_then(|c| crate::verification::verify(&c).map_err(|e| e.to_string()));
            self.verifications.push(crate::print::certificate::Verified { file: name, outcome });
        }
    }
}

/// Draws of the Monte Carlo check when a record's content is needed: the GUM value and
/// uncertainty are what a verification uses, so the check is kept small.
const RECORD_DRAWS: usize = 1_000;

/// The certified content of `gas` in a library record, with its standard uncertainty.
pub fn record_content(
    library: Option<&Library>,
    catalogue: &Catalogue,
    id: &str,
    gas: usize,
) -> Result<Measured, String> {
    let lib = library.ok_or_else(|| format!("record {id}: no library is known to look it up in"))?;
    let opened = lib.open_record(id).map_err(|e| e.to_string())?;
    let found = Found {
        id: opened.id,
        origin: opened.path.display().to_string(),
        text: opened.text,
        record: opened.record,
        library: Some(lib.clone()),
    };
    let how = Evaluate { model: None, draws: RECORD_DRAWS, seed: crate::record::DEFAULT_SEED, issued: None };
    let certified = certify_record(&found, catalogue, how).map_err(|e| format!("record {id}: {e}"))?;
    let e = &certified.evaluation;
    let i = e.measurand.gases.iter().position(|&g| g == gas).ok_or_else(|| {
        format!(
            "record {id} does not contain {} (it holds {})",
            catalogue.gas(gas).id(),
            ids(catalogue, &e.measurand.gases)
        )
    })?;
    Ok(Measured { value: e.gum.values[i], u: e.gum.u[i] })
}

fn ids(catalogue: &Catalogue, gases: &[usize]) -> String {
    gases.iter().map(|&g| catalogue.gas(g).id()).collect::<Vec<_>>().join(", ")
}
