//! The library commands: list, history, tidy, import, export, copy, rename, delete.

use crate::ron_format::clip;
use std::path::PathBuf;

use clap::Args;
use serde_json::json;

use super::{print_json, Failure, Format, Refused};
use crate::config;
use crate::library::{clock, Library, Saved};
use crate::recipe::{canonical, changes, Recipe};

/// Where the library is.
#[derive(Debug, Clone, Args)]
pub struct Place {
    /// Recipe library folder (default: $FILLWRIGHT_LIBRARY, else library/ in the config
    /// folder). A folder named here must exist, unless --create-library.
    #[arg(long, value_name = "DIR")]
    pub library: Option<PathBuf>,
    /// Start a new library in the --library folder when it does not exist yet.
    #[arg(long)]
    pub create_library: bool,
}

impl Place {
    pub fn open(&self) -> Result<Library, Refused> {
        let dir = config::library_to_open(self.library.as_deref(), self.create_library).map_err(Refused)?;
        let mut lib = Library::at(&dir)?;
        lib.git_commit = config::settings_or_defaults().git_commit_on_save;
        Ok(lib)
    }
}

#[derive(Debug, Args)]
pub struct ListArgs {
    #[command(flatten)]
    pub place: Place,
    /// Output format: text or json.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
}

pub fn list(args: &ListArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    let seeded = lib.seed_demos_if_empty()?;
    if seeded > 0 {
        eprintln!("fillwright: the library was empty; copied {seeded} demo recipes into {}", lib.dir().display());
    }
    let entries = lib.briefs()?;
    if args.format == Format::Json {
        print_json(&json!({
            "library": lib.dir().display().to_string(),
            "recipes": entries.iter().map(|e| match &e.brief {
                Ok(s) => json!({"name": e.name, "title": s.title, "fill": s.fill, "cylinder": s.cylinder, "revision": s.revision}),
                Err(err) => json!({"name": e.name, "error": err}),
            }).collect::<Vec<_>>(),
        }));
        return Ok(());
    }
    if args.format == Format::Csv {
        super::print_csv_row(&["name", "title", "fill", "cylinder", "revision", "error"]);
        for e in &entries {
            match &e.brief {
                Ok(s) => super::print_csv_row(&[&e.name, &s.title, &s.fill, &s.cylinder, &s.revision.to_string(), ""]),
                Err(err) => super::print_csv_row(&[e.name.as_str(), "", "", "", "", err]),
            }
        }
        return Ok(());
    }
    outln!("library {}", lib.dir().display());
    // 80 columns: long names and titles are cut with an ellipsis.
    outln!("{:<22} {:>8} {:>13} {:>3}  recipe", "name", "fill", "cylinder", "rev");
    for e in &entries {
        match &e.brief {
            Ok(s) => outln!(
                "{:<22} {:>8} {:>13} {:>3}  {}",
                crate::ron_format::clip_middle(&e.name, 22),
                clip(&s.fill, 8),
                clip(&s.cylinder, 13),
                s.revision,
                clip(&s.title, 29)
            ),
            Err(err) if err.starts_with("skipped:") => {
                outln!("{:<22} {err}", crate::ron_format::clip_middle(&e.name, 22))
            }
            Err(err) => outln!("{:<22} cannot be read: {err}", crate::ron_format::clip_middle(&e.name, 22)),
        }
    }
    if entries.is_empty() {
        outln!("(no recipes)");
    }
    Ok(())
}

#[derive(Debug, Args)]
pub struct HistoryArgs {
    /// Recipe name in the library.
    pub name: String,
    /// Show what changed from revision A to revision B.
    #[arg(long, num_args = 2, value_names = ["A", "B"])]
    pub diff: Option<Vec<u64>>,
    /// Make revision REV the newest revision again.
    #[arg(long, value_name = "REV", conflicts_with = "diff")]
    pub restore: Option<u64>,
    #[command(flatten)]
    pub place: Place,
    /// Output format: text or json.
    #[arg(long, value_enum, default_value = "text")]
    pub format: Format,
}

/// The ids of the records filled to `revision`.
fn filled_at<'a>(records: &[&'a (String, Result<crate::record::Record, String>)], revision: u64) -> Vec<&'a str> {
    records
        .iter()
        .filter(|(_, rec)| rec.as_ref().is_ok_and(|rec| rec.recipe_revision == revision))
        .map(|(id, _)| id.as_str())
        .collect()
}

pub fn history(args: &HistoryArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    if let Some(rev) = args.restore {
        return report_save(&args.name, lib.restore(&args.name, rev, &clock::now_utc())?);
    }
    if let Some(pair) = &args.diff {
        if args.format == Format::Csv {
            return Err(Failure::Usage("history --diff prints text or json; csv is for the list of revisions".into()));
        }
        let (a, b) = (lib.revision(&args.name, pair[0])?, lib.revision(&args.name, pair[1])?);
        let list = changes::describe(&a, &b);
        if args.format == Format::Json {
            print_json(&json!({"name": args.name, "from": pair[0], "to": pair[1], "changes": list}));
        } else if list.is_empty() {
            outln!("{} revisions {} and {} are the same order", args.name, pair[0], pair[1]);
        } else {
            outln!("{} revision {} → {}:", args.name, pair[0], pair[1]);
            for c in list {
                outln!("  {c}");
            }
        }
        return Ok(());
    }
    let revs = lib.history(&args.name)?;
    let all = lib.records()?;
    let records: Vec<&(String, Result<crate::record::Record, String>)> =
        all.iter().filter(|(_, r)| r.as_ref().is_ok_and(|r| r.recipe == args.name)).collect();
    if args.format == Format::Json {
        print_json(&json!({"name": args.name, "revisions": revs.iter().map(|r| json!({
            "revision": r.revision, "saved": r.saved, "saved_by": r.saved_by, "note": r.note,
        })).collect::<Vec<_>>(),
        "records": records.iter().filter_map(|(id, r)| r.as_ref().ok().map(|r| json!({
            "id": id, "recipe_revision": r.recipe_revision, "cylinder": r.cylinder,
            "started": r.started, "finished": r.finished,
        }))).collect::<Vec<_>>()}));
        return Ok(());
    }
    if args.format == Format::Csv {
        super::print_csv_row(&["revision", "saved", "saved_by", "note", "records"]);
        for r in &revs {
            let filled = filled_at(&records, r.revision);
            let (saved, by) = (r.saved.as_deref().unwrap_or(""), r.saved_by.as_deref().unwrap_or(""));
            let rev = r.revision.to_string();
            super::print_csv_row(&[rev.as_str(), saved, by, r.note.as_deref().unwrap_or(""), &filled.join(" ")]);
        }
        return Ok(());
    }
    outln!("{:>4}  {:<21} {:<12} note", "rev", "saved (UTC)", "by");
    for r in &revs {
        let filled = filled_at(&records, r.revision);
        let note = r.note.as_deref().unwrap_or("");
        outln!(
            "{:>4}  {:<21} {:<12} {}",
            r.revision,
            r.saved.as_deref().unwrap_or("-"),
            clip(r.saved_by.as_deref().unwrap_or("-"), 12),
            clip(note, 39)
        );
        for id in filled {
            outln!("{:>4}  {:<21} {:<12} filled: record {id}", "", "", "");
        }
    }
    if !records.is_empty() {
        outln!();
        outln!("fill records of {}:", args.name);
        let certified = |id: &str| lib.certified(id);
        out!("{}", crate::print::records::text(&records, &certified));
    }
    Ok(())
}

/// Say what a save did; a save whose git commit failed is kept and reported with its own
/// exit status (4).
fn report_save(name: &str, saved: Saved) -> Result<(), Failure> {
    match saved {
        Saved::Unchanged { revision } => outln!("{name}: unchanged, still revision {revision}"),
        Saved::Written { revision, changes, git } => {
            outln!("{name}: saved revision {revision} ({})", changes.join("; "));
            if let Some(Err(e)) = git {
                return Err(Failure::NotCommitted(format!(
                    "{name} revision {revision} is saved in the library, but not committed: {e}"
                )));
            }
        }
    }
    Ok(())
}

#[derive(Debug, Args)]
pub struct TidyArgs {
    /// Only check: exit 1 naming the files that are not in canonical form.
    #[arg(long)]
    pub check: bool,
    /// Recipe files.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
}

pub fn tidy(args: &TidyArgs) -> Result<(), Failure> {
    let mut untidy = Vec::new();
    for file in &args.files {
        let text = crate::library::read_limited(file)?;
        let recipe = Recipe::parse(&text, &file.display().to_string())?;
        let canon = canonical::to_text(&recipe);
        if canon != text {
            if args.check {
                untidy.push(file.display().to_string());
            } else {
                crate::library::atomic::write(file, canon.as_bytes())
                    .map_err(|e| Refused(format!("{}: {e}", file.display())))?;
                outln!("tidied {}", file.display());
            }
        }
    }
    if untidy.is_empty() {
        Ok(())
    } else {
        Err(Refused(format!("not in canonical form (run `fillwright tidy` on them): {}", untidy.join(", "))).into())
    }
}

#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
                        fillwright import kiln-span.ron\n  \
                        fillwright import - --name kiln-span < kiln-span.ron")]
pub struct ImportArgs {
    /// Recipe file to bring into the library; `-` reads it from standard input (then
    /// --name is needed).
    pub file: PathBuf,
    /// Library name (default: the file name without .ron).
    #[arg(long)]
    pub name: Option<String>,
    #[command(flatten)]
    pub place: Place,
}

pub fn import(args: &ImportArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    if args.file.as_os_str() == "-" {
        let Some(name) = &args.name else {
            return Err(Failure::Usage("a recipe read from standard input (`-`) needs --name NAME".into()));
        };
        let text = crate::library::read_standard_input().map_err(Refused)?;
        return report_save(name, lib.import_text(&text, crate::library::STANDARD_INPUT, name, &clock::now_utc())?);
    }
    let name = match &args.name {
        Some(n) => n.clone(),
        None => args.file.file_stem().and_then(|s| s.to_str()).unwrap_or_default().to_string(),
    };
    report_save(&name, lib.import(&args.file, &name, &clock::now_utc())?)
}

#[derive(Debug, Args)]
pub struct ExportArgs {
    /// Recipe name in the library.
    pub name: String,
    /// File to write: a new or regular file is replaced whole; a pipe or a terminal
    /// (/dev/stdout) is written into; a symbolic link is refused unless --replace-link.
    pub file: PathBuf,
    /// Replace a symbolic link at FILE with the file (the link's target is left alone).
    #[arg(long)]
    pub replace_link: bool,
    #[command(flatten)]
    pub place: Place,
}

pub fn export(args: &ExportArgs) -> Result<(), Failure> {
    args.place.open()?.export(&args.name, &args.file, args.replace_link)?;
    // The confirmation goes beside the output, never into it (export x /dev/stdout).
    eprintln!("fillwright: wrote {}", args.file.display());
    Ok(())
}

#[derive(Debug, Args)]
pub struct CopyArgs {
    /// The library recipe to copy (its current revision).
    pub from: String,
    /// The name of the copy: a new recipe, with its own history from revision 1.
    pub to: String,
    #[command(flatten)]
    pub place: Place,
}

#[derive(Debug, Args)]
pub struct RenameArgs {
    /// The library recipe to rename.
    pub from: String,
    /// Its new name (not taken by another recipe); its history follows it.
    pub to: String,
    #[command(flatten)]
    pub place: Place,
}

pub fn copy(args: &CopyArgs) -> Result<(), Failure> {
    report_save(&args.to, args.place.open()?.duplicate(&args.from, &args.to, &clock::now_utc())?)
}

pub fn rename(args: &RenameArgs) -> Result<(), Failure> {
    args.place.open()?.rename(&args.from, &args.to)?;
    outln!("renamed {} to {}", args.from, args.to);
    Ok(())
}

#[derive(Debug, Args)]
pub struct DeleteArgs {
    /// The library recipe to move to the trash (`undelete` brings it back).
    pub name: String,
    #[command(flatten)]
    pub place: Place,
}

pub fn delete(args: &DeleteArgs) -> Result<(), Failure> {
    let to = args.place.open()?.delete(&args.name, &clock::now_utc())?;
    outln!("moved {} to {} (recoverable)", args.name, to.display());
    Ok(())
}

#[derive(Debug, Args)]
pub struct UndeleteArgs {
    /// The name the recipe had; without it, the trash is listed.
    pub name: Option<String>,
    /// Bring it back under another name (when the old one is taken again).
    #[arg(long = "as", value_name = "NAME")]
    pub to: Option<String>,
    /// Which deleted recipe of that name: its trash id as `undelete` lists it (default: the
    /// most recently deleted).
    #[arg(long, value_name = "ID")]
    pub deleted: Option<String>,
    #[command(flatten)]
    pub place: Place,
}

pub fn undelete(args: &UndeleteArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    let Some(name) = &args.name else {
        if args.deleted.is_some() {
            return Err(Failure::Usage("--deleted ID needs the NAME of the deleted recipe".into()));
        }
        let trash = lib.trash();
        if trash.is_empty() {
            outln!("the trash is empty");
        }
        for (name, stamp, _) in trash {
            outln!("{:<40} deleted {stamp}", clip(&name, 40));
        }
        return Ok(());
    };
    let back = lib.undelete(name, args.to.as_deref(), args.deleted.as_deref())?;
    outln!("{name} is back in the library as {back}");
    Ok(())
}

#[derive(Debug, Args)]
pub struct SyncArgs {
    #[command(flatten)]
    pub place: Place,
}

/// Bring in the other benches' saves and send this bench's (the library is a git clone of
/// the lab's shared repository).
pub fn sync(args: &SyncArgs) -> Result<(), Failure> {
    let lib = args.place.open()?;
    let done = lib.sync().map_err(|e| Refused(e.to_string()))?;
    outln!("{}", crate::library::sync::summary(&done));
    Ok(())
}
