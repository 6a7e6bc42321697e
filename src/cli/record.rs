//! `certify` (the certificate of a fill record) and `records` (the list of fill records).

use std::path::{Path, PathBuf};

use clap::Args;
use serde_json::json;

use super::library::Place;
use super::{print_json, Failure, Format, Refused};
use crate::certificate::{self, Certificate, RecipeCheck, Target};
use crate::config;
use crate::gas::Catalogue;
use crate::library::records::Lookup;
use crate::library::Library;
use crate::recipe::Recipe;
use crate::record::{self, Checked, Record};
use crate::thermo::Model;

#[derive(Debug, Args)]
pub struct CertifyArgs {
    /// A record id in the library's records/ folder, or a record file.
    pub record: String,
    #[command(flatten)]
    pub place: Place,
    /// Output format: text or json.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
    /// Also write the certificate as a PDF to this file.
    #[arg(long, value_name = "FILE")]
    pub pdf: Option<PathBuf>,
    /// Monte Carlo draws (JCGM 101); at least 10⁵ for a certificate.
    #[arg(long, default_value_t = record::DEFAULT_DRAWS)]
    pub draws: usize,
    /// Seed of the Monte Carlo draws (the same seed gives the same figures).
    #[arg(long, default_value_t = record::DEFAULT_SEED)]
    pub seed: u64,
    /// Model for a record of pressure readings (default: the record's, else as for plans).
    #[arg(long, value_enum)]
    pub model: Option<Model>,
}

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

fn looks_like_path(s: &str) -> bool {
    s.ends_with(".ron") || s.contains('/') || s.contains(std::path::MAIN_SEPARATOR)
}

fn find(args: &CertifyArgs) -> Result<Found, Refused> {
    if looks_like_path(&args.record) || Path::new(&args.record).is_file() {
        let path = Path::new(&args.record);
        let text = crate::library::read_limited(path)?;
        let origin = path.display().to_string();
        let record = Record::parse(&text, &origin)?;
        // A file in the records/ folder of a library that holds its recipe belongs to it.
        let library = path
            .canonicalize()
            .ok()
            .and_then(|p| p.parent().filter(|d| d.ends_with("records")).and_then(Path::parent).map(Path::to_path_buf))
            .filter(|dir| dir.join(format!("{}.ron", record.recipe)).is_file())
            .and_then(|dir| Library::at(&dir).ok());
        let id = path.file_stem().and_then(|s| s.to_str()).unwrap_or("record").to_string();
        return Ok(Found { id, origin, text, record, library });
    }
    let lib = args.place.open()?;
    let opened = lib.open_record(&args.record)?;
    Ok(Found {
        id: opened.id,
        origin: opened.path.display().to_string(),
        text: opened.text,
        record: opened.record,
        library: Some(lib),
    })
}

/// What the library says of the record's recipe: the check of revision and hash, the
/// recipe at that revision if it is on file, and the recipe's current revision.
fn check_recipe(record: &Record, library: Option<&Library>) -> (RecipeCheck, Option<Recipe>, Option<u32>) {
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
}

/// Check, evaluate and verify a record.
pub fn certify_record(found: &Found, catalogue: &Catalogue, how: Evaluate) -> Result<Certified, String> {
    let Evaluate { model, draws, seed } = how;
    let (id, record, library) = (found.id.as_str(), &found.record, found.library.as_ref());
    let (text, origin) = (found.text.as_str(), found.origin.as_str());
    let sources = config::config_dir().map(|d| d.join("sources"));
    let lookup = Lookup { library, sources: sources.as_deref(), catalogue, depth: 0 };
    let checked = record.check(catalogue, &|r| lookup.resolve(r), text, origin).map_err(|e| e.to_string())?;
    let (recipe_check, recipe, current_revision) = check_recipe(record, library);
    let order = recipe.as_ref().and_then(|r| r.resolve(catalogue, "", &r.name).ok());
    let volume = checked.volume_m3.or(order.as_ref().map(|o| o.volume_m3));
    let settings = config::load_settings()
        .unwrap_or_else(|_| crate::settings::Settings::default().resolve("", "").expect("defaults resolve"));
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
    let mut remarks = Vec::new();
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
    Ok(Certified { id: id.to_string(), record: record.clone(), checked, evaluation, recipe_check, targets, remarks })
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
        }
    }
}

pub fn certify(args: &CertifyArgs) -> Result<(), Failure> {
    if args.format == Format::Csv {
        return Err(Failure::Usage("certify prints text or json; --format csv is not offered".into()));
    }
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let found = find(args)?;
    let how = Evaluate { model: args.model, draws: args.draws, seed: args.seed };
    let c = certify_record(&found, &catalogue, how).map_err(Refused)?;
    let cert = c.certificate(&catalogue);
    let text = cert.text();
    if let Some(pdf) = &args.pdf {
        let bytes = certificate::pdf::render(&text, &format!("Certificate of preparation {}", found.id));
        crate::library::atomic::write(pdf, &bytes).map_err(|e| Refused(format!("{}: {e}", pdf.display())))?;
    }
    match args.format {
        Format::Json => print_json(&cert.json()),
        _ => print!("{text}"),
    }
    Ok(())
}

#[derive(Debug, Args)]
pub struct RecordsArgs {
    /// Only the records of this recipe.
    pub recipe: Option<String>,
    #[command(flatten)]
    pub place: Place,
    /// Output format: text or json.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
}

/// One line of the records list: (id, recipe, revision, cylinder, started, state).
fn summary(id: &str, r: &Record) -> (String, String, u32, String, String, String) {
    let state = match &r.finished {
        Some(_) => format!("finished, {} additions", r.additions.len()),
        None => format!("in progress, {} weighings", r.weighings.len()),
    };
    (id.to_string(), r.recipe.clone(), r.revision, r.cylinder.clone(), r.started.clone().unwrap_or_default(), state)
}

pub fn records(args: &RecordsArgs) -> Result<(), Failure> {
    if args.format == Format::Csv {
        return Err(Failure::Usage("records prints text or json; --format csv is not offered".into()));
    }
    let lib = args.place.open()?;
    let all = lib.records()?;
    let shown: Vec<&(String, Result<Record, String>)> = all
        .iter()
        .filter(|(_, r)| args.recipe.as_ref().is_none_or(|name| r.as_ref().is_ok_and(|r| &r.recipe == name)))
        .collect();
    if args.format == Format::Json {
        print_json(&json!({"records": shown.iter().map(|(id, r)| match r {
            Ok(r) => {
                let s = summary(id, r);
                json!({"id": s.0, "recipe": s.1, "revision": s.2, "cylinder": s.3, "started": s.4, "finished": r.finished, "additions": r.additions.len(), "weighings": r.weighings.len()})
            }
            Err(e) => json!({"id": id, "error": e}),
        }).collect::<Vec<_>>()}));
        return Ok(());
    }
    print_records(&shown);
    Ok(())
}

/// The records as text lines of at most 80 columns.
pub fn print_records(shown: &[&(String, Result<Record, String>)]) {
    use crate::ron_format::clip;
    if shown.is_empty() {
        println!("(no fill records)");
        return;
    }
    println!("{:<22} {:<18} {:>3} {:<10}  state", "record", "recipe", "rev", "started");
    for (id, r) in shown {
        match r {
            Ok(r) => {
                let s = summary(id, r);
                println!(
                    "{:<22} {:<18} {:>3} {:<10}  {}",
                    clip(&s.0, 22),
                    clip(&s.1, 18),
                    s.2,
                    clip(&s.4, 10),
                    clip(&s.5, 23)
                );
            }
            Err(e) => println!("{:<22} cannot be read: {}", clip(id, 22), clip(e, 40)),
        }
    }
}
