//! `certify` (the certificate of a fill record) and `records` (the list of fill records).

use std::path::{Path, PathBuf};

use clap::Args;

use super::library::Place;
use super::{print_json, Failure, Format, Refused};
use crate::certify::{certify_record, looks_like_path, Evaluate, Found};
use crate::config;
use crate::library::Library;
use crate::print::records as listing;
use crate::record::{self, Record};
use crate::thermo::Model;

#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
                        fillwright records flue-gas-span\n  \
                        fillwright certify 2026-12-04-flue-gas-span --pdf certificate.pdf\n  \
                        fillwright certify my-fill.ron --format json\n  \
                        fillwright certify 2026-12-04-flue-gas-span --in-progress")]
pub struct CertifyArgs {
    /// A record id in the library's records/ folder, a record file, or `-` (standard input).
    pub record: String,
    #[command(flatten)]
    pub place: Place,
    /// Output format: text or json.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
    /// Also write the certificate as a PDF to this file (a pipe is written into; a
    /// symbolic link is refused unless --replace-link).
    #[arg(long, value_name = "FILE")]
    pub pdf: Option<PathBuf>,
    /// Replace a symbolic link at the --pdf path with the file.
    #[arg(long, requires = "pdf")]
    pub replace_link: bool,
    /// Monte Carlo draws (JCGM 101), 1000 to 10000000; at least 100000 for a certificate.
    #[arg(long, default_value_t = record::DEFAULT_DRAWS as u64,
          value_parser = clap::value_parser!(u64).range(1_000..=10_000_000))]
    pub draws: u64,
    /// Seed of the Monte Carlo draws (the same seed gives the same figures).
    #[arg(long, default_value_t = record::DEFAULT_SEED)]
    pub seed: u64,
    /// Model for a record of pressure readings (default: the record's, else as for plans).
    #[arg(long, value_enum)]
    pub model: Option<Model>,
    /// The date of issue, YYYY-MM-DD (default: today); the validity runs from it.
    #[arg(long, value_name = "DATE", value_parser = issue_date)]
    pub issued: Option<String>,
    /// Print the composition so far of a fill that is not finished (bannered on every
    /// page, never a certificate); without it an unfinished fill is refused.
    #[arg(long)]
    pub in_progress: bool,
}

fn find(args: &CertifyArgs) -> Result<Found, Refused> {
    if args.record == "-" {
        // A record piped in belongs to no library: its sources are looked up as written.
        let text = crate::library::read_standard_input().map_err(Refused)?;
        let origin = crate::library::STANDARD_INPUT.to_string();
        let record = Record::parse(&text, &origin)?;
        return Ok(Found { id: "stdin".into(), origin, text, record, library: None });
    }
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

/// A date of issue as YYYY-MM-DD.
fn issue_date(text: &str) -> Result<String, String> {
    crate::certify::add_months(text, 0)
        .filter(|d| d == text)
        .ok_or_else(|| format!("{text:?} is not a date; write it as YYYY-MM-DD, e.g. 2026-12-04"))
}

pub fn certify(args: &CertifyArgs) -> Result<(), Failure> {
    if args.format == Format::Csv {
        return Err(Failure::Usage("certify prints text or json; --format csv is not offered".into()));
    }
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let found = find(args)?;
    let how = Evaluate { model: args.model, draws: args.draws as usize, seed: args.seed, issued: args.issued.clone() };
    let mut c = certify_record(&found, &catalogue, how).map_err(Refused)?;
    if let (Some(why), false) = (&c.unfinished, args.in_progress) {
        return Err(Refused(format!(
            "{}: the fill is not finished ({why}); a certificate is for a finished fill. \
             `fillwright certify {} --in-progress` prints the composition so far",
            found.origin, args.record
        ))
        .into());
    }
    if let Some(lib) = &found.library {
        c.attach_verifications(lib, &catalogue);
    }
    let cert = c.certificate(&catalogue);
    let text = cert.text();
    if let Some(pdf) = &args.pdf {
        let bytes = c.pdf(&cert, &found.id);
        crate::library::atomic::write_output(pdf, &bytes, args.replace_link)
            .map_err(|e| Refused(format!("{}: {e}", pdf.display())))?;
    }
    // A PDF sent to standard output is the output: nothing else follows it.
    let pdf_is_output = args.pdf.as_deref().is_some_and(crate::library::atomic::is_standard_output);
    match args.format {
        _ if pdf_is_output => {}
        Format::Json => print_json(&cert.json()),
        _ => out!("{text}"),
    }
    if cert.stopped_by_analysis() {
        if args.format == Format::Json {
            eprintln!("fillwright: STOP - the analysis does not confirm the prepared content");
        }
        return Err(Failure::Findings);
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

pub fn records(args: &RecordsArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    let all = lib.records()?;
    let shown: Vec<&(String, Result<Record, String>)> = all
        .iter()
        .filter(|(_, r)| args.recipe.as_ref().is_none_or(|name| r.as_ref().is_ok_and(|r| &r.recipe == name)))
        .collect();
    // A recipe named that the library does not hold is a slip, not a recipe without fills.
    if let Some(name) = args.recipe.as_ref().filter(|_| shown.is_empty()) {
        let names: Vec<String> = lib.list().unwrap_or_default().into_iter().map(|e| e.name).collect();
        if !names.contains(name) {
            let guess = crate::config::did_you_mean(name, &names);
            return Err(
                Refused(format!("no recipe {name:?} in the library{guess}; `fillwright list` lists them")).into()
            );
        }
    }
    let certified = |id: &str| lib.certified(id);
    match args.format {
        Format::Json => print_json(&listing::json(&shown, &certified)),
        Format::Csv => out!("{}", listing::csv(&shown, &certified)),
        Format::Text => out!("{}", listing::text(&shown, &certified)),
    }
    Ok(())
}
