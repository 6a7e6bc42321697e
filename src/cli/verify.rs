//! `fillwright verify`: the analysed content of a new cylinder (ISO 6143) and its
//! consistency with the prepared value. Exit 0 consistent, 3 not, 1 refused.

use std::path::{Path, PathBuf};

use clap::Args;

use super::library::Place;
use super::{print_json, Failure, Format, Refused};
use crate::certify::{looks_like_path, record_content};
use crate::config;
use crate::gas::Catalogue;
use crate::library::Library;
use crate::verification::{self, present, Verification};

#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// A verification file (.ron), or its name in the library's verifications/ folder;
    /// - reads it from standard input.
    pub file: String,
    #[command(flatten)]
    pub place: Place,
    /// Output format: text (the report), json, or csv (the fit, one row per reference mixture).
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
}

/// Read, check and judge a verification file's text.
pub fn run_text(
    text: &str,
    origin: &str,
    library: Option<&Library>,
    catalogue: &Catalogue,
) -> Result<verification::Report, String> {
    let v = Verification::parse(text, origin).map_err(|e| e.to_string())?;
    let lookup = |id: &str, gas: usize| record_content(library, catalogue, id, gas);
    let checked = v.check(catalogue, &lookup, text, origin).map_err(|e| e.to_string())?;
    verification::verify(&checked).map_err(|e| format!("{origin}: {e}"))
}

pub fn verify(args: &VerifyArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let (text, origin, library) = if args.file == "-" {
        let mut text = String::new();
        std::io::Read::read_to_string(&mut std::io::stdin().lock(), &mut text)
            .map_err(|e| Refused(format!("standard input: {e}")))?;
        (text, "<stdin>".to_string(), args.place.open().ok())
    } else if looks_like_path(&args.file) || Path::new(&args.file).is_file() {
        let path = PathBuf::from(&args.file);
        let text = crate::library::read_limited(&path)?;
        // A file in the verifications/ folder of a library looks its records up there.
        let library = path
            .canonicalize()
            .ok()
            .and_then(|p| {
                p.parent().filter(|d| d.ends_with("verifications")).and_then(Path::parent).map(Path::to_path_buf)
            })
            .and_then(|dir| Library::at(&dir).ok())
            .or_else(|| args.place.open().ok());
        (text, path.display().to_string(), library)
    } else {
        let lib = args.place.open()?;
        let (path, text, _) = lib.open_verification(&args.file)?;
        (text, path.display().to_string(), Some(lib))
    };
    let report = run_text(&text, &origin, library.as_ref(), &catalogue).map_err(Refused)?;
    match args.format {
        Format::Json => print_json(&present::json(&report, &catalogue)),
        Format::Csv => out!("{}", present::csv(&report)),
        Format::Text => out!("{}", present::text(&report, &catalogue, &origin)),
    }
    if !report.consistent {
        if args.format != Format::Text {
            eprintln!("fillwright: NOT CONSISTENT - the analysis does not confirm the prepared content");
        }
        return Err(Failure::Findings);
    }
    Ok(())
}
