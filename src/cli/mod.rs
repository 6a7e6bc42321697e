//! The command line: parse, call the core, present. Exit status 0 success, 1 input refused,
//! 2 wrong usage (INTERFACE.md).

/// Write to standard output; a write error (a closed pipe, a full disk, `/dev/full`) is
/// kept and reported once the command ends ([`stdout_failure`]), never a panic.
macro_rules! out {
    ($($arg:tt)*) => { $crate::cli::write_out(format_args!($($arg)*)) };
}

/// [`out!`] with a newline.
macro_rules! outln {
    () => { $crate::cli::write_out(format_args!("\n")) };
    ($($arg:tt)*) => {{
        $crate::cli::write_out(format_args!($($arg)*));
        $crate::cli::write_out(format_args!("\n"));
    }};
}

mod check;
mod gases;
mod library;
mod manual;
pub mod plan;
pub mod record;
mod state;
mod verify;

use std::process::ExitCode;

use clap::{Args, CommandFactory, Parser, Subcommand, ValueEnum};

use crate::config;
use crate::gas::Catalogue;
use crate::mixture::Composition;
use crate::settings::Resolved;
use crate::thermo::Model;
use crate::units::{self, STANDARD_AMBIENT_PA};

#[derive(Debug, Parser)]
#[command(
    name = "fillwright",
    version,
    about = "Real-gas fill planning for calibration gas mixtures in high-pressure cylinders",
    long_about = "Real-gas fill planning for calibration gas mixtures in high-pressure cylinders.\n\n\
                  Every figure is a computation aid. Filling high-pressure cylinders with flammable, \
                  toxic or oxidising gases is hazardous: follow local codes, the cylinder's markings \
                  and licensed practice."
)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    /// Recipe library folder, for the screen and for the command that follows (default:
    /// $FILLWRIGHT_LIBRARY, else library/ in the config folder). It must exist, unless
    /// --create-library.
    #[arg(long, value_name = "DIR")]
    library: Option<std::path::PathBuf>,
    /// Start a new library in the --library folder when it does not exist yet.
    #[arg(long)]
    create_library: bool,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Open the screen on one recipe: a library name or a .ron file.
    Edit(EditArgs),
    /// Solve a gas state: give the mixture, the temperature and two of volume, pressure
    /// and amount; the third is computed, under every model for comparison.
    State(state::StateArgs),
    /// The fill plan: what to add, and the pressure and scale readings at which to stop.
    Plan(plan::PlanArgs),
    /// Screen a blend before the fill: condensation, pressure rating, flammability,
    /// oxidising ability, toxicity, incompatible pairs. Exit status 3 when something is at stop.
    Check(check::CheckArgs),
    /// List the recipe library (copies the demo recipes in when it is empty).
    List(library::ListArgs),
    /// The revisions of a recipe; --diff A B shows what changed, --restore REV brings one back.
    History(library::HistoryArgs),
    /// Rewrite recipe files in canonical form, or --check that they are.
    Tidy(library::TidyArgs),
    /// Bring a recipe file into the library.
    Import(library::ImportArgs),
    /// Write a library recipe to a file.
    Export(library::ExportArgs),
    /// Copy a library recipe under a new name.
    Copy(library::CopyArgs),
    /// Rename a library recipe (with its history).
    Rename(library::RenameArgs),
    /// Move a library recipe to the trash folder (recoverable).
    Delete(library::DeleteArgs),
    /// Bring a deleted recipe back from the trash (the most recently deleted of that name).
    Undelete(library::UndeleteArgs),
    /// List the gas catalogue with its constants and their sources.
    Gases(gases::GasesArgs),
    /// The certificate of a fill record: the composition made with its expanded
    /// uncertainty (ISO 6142-1, GUM, checked by Monte Carlo). A draft for review.
    Certify(record::CertifyArgs),
    /// List the fill records of the library, or of one recipe.
    Records(record::RecordsArgs),
    /// Verification by analysis (ISO 6143): fit the analyser's calibration to reference
    /// mixtures, give the sample's analysed content and whether it is consistent with the
    /// prepared one. Exit status 3 when it is not.
    Verify(verify::VerifyArgs),
    /// Share the library between benches: bring in the other benches' saves from the git
    /// remote and send this bench's. A recipe saved on two benches keeps both as
    /// consecutive revisions; no file is left with conflict markers.
    Sync(library::SyncArgs),
    /// Print the shell completion script (bash, zsh, fish, elvish or powershell).
    Completions(CompletionsArgs),
    /// Print a manual page (roff, for man): the program's, or one command's; --dir writes
    /// them all.
    Manual(manual::ManualArgs),
}

#[derive(Debug, Args)]
struct CompletionsArgs {
    /// The shell to complete in.
    shell: clap_complete::Shell,
}

#[derive(Debug, Args)]
struct EditArgs {
    /// Library name, or a path to a .ron file (saved in place, with its history beside it).
    recipe: String,
    /// Recipe library folder.
    #[arg(long, value_name = "DIR")]
    library: Option<std::path::PathBuf>,
}

/// Output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Text,
    Json,
    /// Comma-separated values where the output is a table (plan's steps, check, gases, list,
    /// history, records, verify's fit); refused with exit 2 elsewhere.
    Csv,
}

/// Options shared by every computing command.
#[derive(Debug, Clone, Args)]
pub struct Common {
    /// Equation of state: ideal, vdw, rk, srk, pr, gerg or multi. Default: gerg where GERG-2008
    /// covers every gas of the mixture, else multi (the multi-fluid model).
    #[arg(long, value_enum)]
    pub model: Option<Model>,
    /// Output format: text, json, or csv where a table is the natural output.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
    /// Ambient pressure for gauge readings and gauge input (barg, psig, kPag).
    /// Default: the settings file's, else 1.01325bar.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub ambient: Option<String>,
}

impl Common {
    /// Ambient pressure, Pa: the option, else the setting.
    pub fn ambient_pa(&self, settings: &Resolved) -> Result<f64, Refused> {
        match &self.ambient {
            Some(text) => {
                units::parse_pressure(text, STANDARD_AMBIENT_PA).map_err(|e| Refused(format!("--ambient: {e}")))
            }
            None => Ok(settings.ambient_pa),
        }
    }
}

/// The model to use: the one asked for, else the settings' default model, else gerg where
/// it covers the gases, else multi. Asking for gerg on gases it does not cover is refused by
/// the fluid.
pub fn choose_model(
    asked: Option<Model>,
    composition: &Composition,
    catalogue: &Catalogue,
    settings: &Resolved,
) -> Model {
    asked.or(settings.default_model).unwrap_or_else(|| crate::plan::default_model(&composition.gases, catalogue))
}

/// Input that was refused: exit status 1 with this message.
#[derive(Debug)]
pub struct Refused(pub String);

impl<E: std::error::Error> From<E> for Refused {
    fn from(e: E) -> Refused {
        Refused(e.to_string())
    }
}

/// Wrong usage: exit status 2.
#[derive(Debug)]
pub enum Failure {
    Refused(Refused),
    Usage(String),
    /// A screening finding at the highest severity: exit status 3 (the report is printed).
    Findings,
    /// The save is done and kept, but its git commit failed: exit status 4.
    NotCommitted(String),
}

impl<T: Into<Refused>> From<T> for Failure {
    fn from(r: T) -> Failure {
        Failure::Refused(r.into())
    }
}

/// The command line read; wrong usage prints its message (exit 2), and help and version
/// are printed to standard output, whose write errors are reported (exit 1).
fn parse() -> Result<Cli, ExitCode> {
    match Cli::try_parse() {
        Ok(c) => Ok(c),
        Err(e) if e.use_stderr() => {
            // One prefix for every message of the program: clap's "error: " becomes ours.
            let text = e.render().to_string();
            eprint!("{}", text.strip_prefix("error: ").map_or(text.clone(), |rest| format!("fillwright: {rest}")));
            Err(ExitCode::from(2))
        }
        Err(e) => {
            // Styled only for a terminal that accepts colour; piped help is plain text.
            use std::io::IsTerminal;
            let styled = std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
            if styled {
                out!("{}", e.render().ansi());
            } else {
                out!("{}", e.render());
            }
            Err(match stdout_failure() {
                Some(why) => {
                    eprintln!("fillwright: standard output could not be written: {why}");
                    ExitCode::from(1)
                }
                None => ExitCode::SUCCESS,
            })
        }
    }
}

/// Run the program with the process arguments.
pub fn main() -> ExitCode {
    let cli = match parse() {
        Ok(cli) => cli,
        Err(code) => return code,
    };
    // The screen is refused before anything is read, created or copied.
    if matches!(cli.command, None | Some(Command::Edit(_))) {
        if let Some(why) = crate::tui::unusable_terminal() {
            eprintln!("fillwright: {why}");
            return ExitCode::from(1);
        }
    }
    // A --library before the command holds for the command too (as the environment would).
    if let Some(dir) = cli.library.as_ref().filter(|_| cli.command.is_some()) {
        if cli.create_library {
            let _ = std::fs::create_dir_all(dir);
        }
        std::env::set_var("FILLWRIGHT_LIBRARY", dir);
    }
    let result = match cli.command {
        None => config::library_to_open(cli.library.as_deref(), cli.create_library)
            .map_err(|e| Refused(e).into())
            .and_then(|dir| crate::tui::run(&dir, None, true).map_err(|e| Refused(e).into())),
        Some(Command::Edit(args)) => crate::tui::place_of(&args.recipe, args.library.as_deref())
            .map_err(|e| Refused(e).into())
            .and_then(|(dir, name, seed)| crate::tui::run(&dir, Some(&name), seed).map_err(|e| Refused(e).into())),
        Some(Command::State(args)) => state::run(&args),
        Some(Command::Plan(args)) => plan::run(&args),
        Some(Command::Gases(args)) => gases::run(&args),
        Some(Command::Check(args)) => check::run(&args),
        Some(Command::List(args)) => library::list(&args),
        Some(Command::History(args)) => library::history(&args),
        Some(Command::Tidy(args)) => library::tidy(&args),
        Some(Command::Import(args)) => library::import(&args),
        Some(Command::Export(args)) => library::export(&args),
        Some(Command::Copy(args)) => library::copy(&args),
        Some(Command::Rename(args)) => library::rename(&args),
        Some(Command::Delete(args)) => library::delete(&args),
        Some(Command::Undelete(args)) => library::undelete(&args),
        Some(Command::Certify(args)) => record::certify(&args),
        Some(Command::Records(args)) => record::records(&args),
        Some(Command::Verify(args)) => verify::verify(&args),
        Some(Command::Sync(args)) => library::sync(&args),
        // Generated from the command definitions, so they never drift from them.
        Some(Command::Completions(args)) => {
            let mut script = Vec::new();
            clap_complete::generate(args.shell, &mut Cli::command(), "fillwright", &mut script);
            out!("{}", String::from_utf8_lossy(&script));
            Ok(())
        }
        Some(Command::Manual(args)) => manual::run(&args, Cli::command()),
    };
    // Output that never reached its reader is a failure, whatever the command concluded.
    let result = match (result, stdout_failure()) {
        (Ok(()) | Err(Failure::Findings), Some(e)) => {
            Err(Failure::Refused(Refused(format!("standard output could not be written: {e}"))))
        }
        (result, _) => result,
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Refused(Refused(message))) => {
            eprintln!("fillwright: {}", crate::ron_format::shorten(&message));
            ExitCode::from(1)
        }
        Err(Failure::Usage(message)) => {
            eprintln!("fillwright: {message}");
            ExitCode::from(2)
        }
        Err(Failure::Findings) => ExitCode::from(3),
        Err(Failure::NotCommitted(message)) => {
            eprintln!("fillwright: {message}");
            ExitCode::from(4)
        }
    }
}

/// The first error met writing standard output, if any.
static STDOUT_ERROR: std::sync::Mutex<Option<String>> = std::sync::Mutex::new(None);

/// Write formatted text to standard output, keeping the first error for the end.
pub fn write_out(args: std::fmt::Arguments) {
    use std::io::Write;
    if let Err(e) = std::io::stdout().lock().write_fmt(args) {
        let mut first = STDOUT_ERROR.lock().unwrap_or_else(|p| p.into_inner());
        first.get_or_insert_with(|| e.to_string());
    }
}

/// Standard output could not be written (or flushed): the reason, for exit status 1.
fn stdout_failure() -> Option<String> {
    use std::io::Write;
    let flushed = std::io::stdout().lock().flush();
    let first = STDOUT_ERROR.lock().unwrap_or_else(|p| p.into_inner()).clone();
    first.or(flushed.err().map(|e| e.to_string()))
}

pub use crate::ron_format::csv_field;

/// Print a JSON value (numbers at full precision).
pub fn print_json(value: &serde_json::Value) {
    outln!("{}", serde_json::to_string_pretty(value).unwrap_or_default());
}

/// Print one CSV row (RFC 4180: a field with a comma, a quote or a line break is quoted,
/// its quotes doubled).
pub fn print_csv_row<S: AsRef<str>>(fields: &[S]) {
    out!("{}", crate::ron_format::csv_row(fields));
}
