//! The certificate of a fill record as the library holds it: the record checked against
//! its recipe's revision and hash, its sources looked up (the source library, premix
//! records), the composition evaluated, and the verifications by analysis attached. Used by
//! `fillwright certify`, `fillwright verify` and the screen alike; what is printed is the
//! certificate's ([`crate::certificate`]).

use crate::certificate::{Certificate, RecipeCheck, Target};
use crate::config;
use crate::gas::Catalogue;
use crate::library::records::Lookup;
use crate::library::Library;
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
#[derive(Debug, Clone, Copy)]
pub struct Evaluate {
    pub model: Option<Model>,
    pub draws: usize,
    pub seed: u64,
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
    pub verifications: Vec<crate::certificate::Verified>,
    pub combine_verification: bool,
    /// Why the fill is not finished, if it is not (the certificate is then refused, or
    /// printed as the composition so far with `--in-progress`).
    pub unfinished: Option<String>,
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

/// Check, evaluate and verify a record.
pub fn certify_record(found: &Found, catalogue: &Catalogue, how: Evaluate) -> Result<Certified, String> {
    let Evaluate { model, draws, seed } = how;
    let (id, record, library) = (found.id.as_str(), &found.record, found.library.as_ref());
    let (text, origin) = (found.text.as_str(), found.origin.as_str());
    let sources = config::config_dir().map(|d| d.join("sources"));
    let lookup = Lookup { library, sources: sources.as_deref(), catalogue, depth: 0 };
    let checked = record.check(catalogue, &|r| lookup.resolve(r), text, origin).map_err(|e| e.to_string())?;
    let source_remarks = check_sources(&checked, catalogue).map_err(|e| format!("{origin}: {e}"))?;
    let (recipe_check, recipe, current_revision) = check_recipe(record, library);
    let order = recipe.as_ref().and_then(|r| r.resolve(catalogue, "", &r.name).ok());
    let options = crate::plan::PlanOptions { skip_following: true, ..Default::default() };
    let planned = order.as_ref().and_then(|o| crate::plan::plan(o, catalogue, &options).ok()).map(|p| p.steps.len());
    let unfinished = unfinished(record, &checked, planned);
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
    for (k, a) in record.additions.iter().enumerate() {
        if let (Some(name), Some(dir)) = (a.source.trim().strip_prefix('@'), sources.as_deref()) {
            if let Ok(entry) = crate::library::records::open_source(dir, name.trim()) {
                let when = a.time.as_deref().or(record.started.as_deref()).unwrap_or("");
                if let Some(expiry) =
                    entry.expiry.as_deref().filter(|e| !when.is_empty() && when.get(..10).is_some_and(|w| w > *e))
                {
                    remarks.push(format!("addition {}: the analysis of source {name} expired on {expiry}", k + 1));
                }
            }
        }
    }
    if draws < record::DEFAULT_DRAWS {
        remarks.push(format!(
            "Monte Carlo with {draws} draws only; a certificate wants at least {}",
            record::DEFAULT_DRAWS
        ));
    }
    if checked.method == record::Method::Manometric {
        remarks.push("composition from pressure readings: expect about 1 % relative, ten times a gravimetric preparation (common practice)".into());
    }
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
    })
}

impl Certified {
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
        }
    }

    /// Attach the library's verifications of this record (files whose sample is it).
    /// The sample's prepared content is this evaluation's; a reference mixture that is
    /// another record of ours is evaluated on its own.
    pub fn attach_verifications(&mut self, library: &Library, catalogue: &Catalogue) {
        let id = self.id.clone();
        for (name, file) in library.verifications() {
            let Ok(v) = file else { continue };
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
            self.verifications.push(crate::certificate::Verified { file: name, outcome });
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
    let how = Evaluate { model: None, draws: RECORD_DRAWS, seed: crate::record::DEFAULT_SEED };
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
