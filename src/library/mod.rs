//! The recipe library: a folder of RON files, one recipe each, named by file stem.
//!
//! Beside the recipes, `.history/NAME/NNNN.ron` keeps every earlier revision and `.trash/`
//! keeps deleted recipes. Every write goes to a temporary file in the same folder, is
//! flushed and then renamed over the old file, so a crash leaves the old file or the new
//! one, never half of either. A file that changed on disk since it was opened is never
//! overwritten without the caller saying so.

pub mod atomic;
pub mod clock;
pub mod git;
mod index;
pub mod records;
pub mod sync;
pub mod verifications;

use std::path::{Path, PathBuf};

pub use index::Brief;

use crate::recipe::{canonical, changes, demo, FillTarget, Recipe, MAX_RECIPE_BYTES};

/// What went wrong with a library operation.
#[derive(Debug, thiserror::Error)]
pub enum LibraryError {
    #[error("recipe name {name:?} is not allowed: {why}")]
    BadName { name: String, why: &'static str },
    #[error("no recipe {0:?} in the library")]
    NotFound(String),
    /// Something other than a recipe that is not there: "no fill record \"X\" in records/".
    #[error("{0}")]
    Missing(String),
    #[error("a recipe {0:?} already exists; choose another name")]
    Exists(String),
    #[error(
        "a recipe {name:?} exists again since it was deleted; bring the deleted one back under another name: {hint}"
    )]
    NameTaken { name: String, hint: String },
    #[error(
        "{0} changed on disk since it was opened; nothing was written. Reload it, save under \
         another name, or overwrite it explicitly"
    )]
    ChangedOnDisk(PathBuf),
    #[error("{path}: {size} bytes is larger than a recipe can be ({MAX_RECIPE_BYTES} bytes); not read")]
    TooLarge { path: PathBuf, size: u64 },
    #[error("{0}")]
    Recipe(#[from] crate::recipe::RecipeError),
    #[error("no revision {revision} of {name:?}; it has revisions {have}")]
    NoRevision { name: String, revision: u64, have: String },
    #[error("{path}: {source}")]
    Io { path: PathBuf, source: std::io::Error },
    #[error("{path}: {why}")]
    Unsafe { path: PathBuf, why: String },
    #[error("recipe name {name:?} looks the same as the existing recipe {existing:?} (it differs only by {how}); choose another name")]
    LookAlike { name: String, existing: String, how: &'static str },
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> LibraryError + '_ {
    move |source| LibraryError::Io { path: path.to_path_buf(), source }
}

/// Names a recipe may not have on common file systems.
const RESERVED: &[&str] = &[
    "con", "prn", "aux", "nul", "com1", "com2", "com3", "com4", "com5", "com6", "com7", "com8", "com9", "lpt1", "lpt2",
    "lpt3", "lpt4", "lpt5", "lpt6", "lpt7", "lpt8", "lpt9",
];

/// Check a library name: a plain file stem.
pub fn check_name(name: &str) -> Result<(), LibraryError> {
    let bad = |why| Err(LibraryError::BadName { name: name.to_string(), why });
    if name.trim().is_empty() {
        return bad("it is empty");
    }
    if name.len() > 120 {
        return bad("it is longer than 120 bytes");
    }
    if name.contains(['/', '\\']) {
        return bad("it contains a path separator");
    }
    if name == "." || name == ".." || name.starts_with('.') {
        return bad("it starts with a dot");
    }
    if name.chars().any(|c| c.is_control()) {
        return bad("it contains a control character");
    }
    if name.chars().any(is_invisible) {
        return bad(
            "it contains an invisible or text-direction character (such as a zero-width space or a right-to-left mark)",
        );
    }
    if name.contains([':', '*', '?', '"', '<', '>', '|']) {
        return bad("it contains one of : * ? \" < > |");
    }
    if name.ends_with([' ', '.']) || name.starts_with(' ') {
        return bad("it starts or ends with a space, or ends with a dot");
    }
    let stem = name.split('.').next().unwrap_or(name).to_ascii_lowercase();
    if RESERVED.contains(&stem.as_str()) {
        return bad("it is a reserved device name");
    }
    Ok(())
}

/// Characters that show nothing or change the direction of the text around them: a name
/// holding one reads the same as, or differently from, what it is (Unicode's
/// Default_Ignorable_Code_Point set, the bidirectional controls, and the blank fillers).
pub fn is_invisible(c: char) -> bool {
    matches!(c as u32,
        0x00AD | 0x034F | 0x061C | 0x115F | 0x1160 | 0x17B4 | 0x17B5 | 0x180B..=0x180F
        | 0x200B..=0x200F | 0x202A..=0x202E | 0x2060..=0x206F | 0x3164 | 0xFE00..=0xFE0F
        | 0xFEFF | 0xFFA0 | 0xFFF0..=0xFFF8 | 0x1BCA0..=0x1BCA3 | 0x1D173..=0x1D17A
        | 0xE0000..=0xE0FFF)
}

/// What two names that read the same have in common: lower case, invisible characters
/// dropped.
fn folded(name: &str) -> String {
    name.chars().filter(|c| !is_invisible(*c)).flat_map(char::to_lowercase).collect()
}

/// A fingerprint of a file's bytes (FNV-1a, 64 bit) with its length, to notice a change
/// made by someone else between opening and saving.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Fingerprint {
    len: usize,
    hash: u64,
}

impl Fingerprint {
    pub fn of(bytes: &[u8]) -> Fingerprint {
        let mut hash: u64 = 0xcbf2_9ce4_8422_2325;
        for b in bytes {
            hash ^= u64::from(*b);
            hash = hash.wrapping_mul(0x0100_0000_01b3);
        }
        Fingerprint { len: bytes.len(), hash }
    }

    /// The hash as 16 hex digits, for file names.
    pub fn short_hex(&self) -> String {
        format!("{:016x}", self.hash)
    }
}

/// A recipe read from the library.
#[derive(Debug, Clone)]
pub struct Opened {
    pub name: String,
    pub path: PathBuf,
    pub text: String,
    pub recipe: Recipe,
    /// What the file held when opened.
    pub fingerprint: Fingerprint,
}

/// One line of the library listing.
#[derive(Debug, Clone)]
pub struct Entry {
    pub name: String,
    pub path: PathBuf,
    /// The recipe's summary, or why the file could not be read.
    pub summary: Result<Summary, String>,
}

/// What the screen's library list has of a recipe: `list`'s brief and more.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    pub brief: Brief,
    /// What a search looks in besides the name and title: the order reference, the
    /// cylinder serial, the description, the notes and the gases, lower case.
    pub search_text: String,
    /// The recipe as read, and the fingerprint of its file (for what is computed from it,
    /// such as the screening column, without reading the file again).
    pub recipe: Recipe,
    pub fingerprint: Fingerprint,
}

impl Summary {
    fn of(o: &Opened) -> Summary {
        let r = &o.recipe;
        Summary {
            recipe: r.clone(),
            fingerprint: o.fingerprint,
            brief: Brief::of(r),
            search_text: [
                r.order.as_str(),
                r.cylinder.serial.as_deref().unwrap_or(""),
                r.description.as_str(),
                r.notes.as_str(),
            ]
            .into_iter()
            .chain(r.components.iter().map(|c| c.gas.as_str()))
            .collect::<Vec<_>>()
            .join(" ")
            .to_lowercase(),
        }
    }
}

impl Brief {
    /// What `list` shows of `r`.
    fn of(r: &Recipe) -> Brief {
        Brief {
            title: r.name.clone(),
            fill: match &r.fill {
                FillTarget::Pressure(p) => p.clone(),
                FillTarget::Mass(m) => format!("{m} (mass)"),
                FillTarget::Amount(n) => format!("{n} (amount)"),
            },
            cylinder: format!("{}, {}", r.cylinder.water_capacity, r.cylinder.working_pressure),
            revision: r.revision,
        }
    }
}

/// One line of `list`: a recipe's brief, or why the entry could not be read.
#[derive(Debug, Clone)]
pub struct Listed {
    pub name: String,
    pub brief: Result<Brief, String>,
}

/// One stored revision.
#[derive(Debug, Clone, PartialEq)]
pub struct Revision {
    pub revision: u64,
    pub saved: Option<String>,
    /// Who saved it, where recorded.
    pub saved_by: Option<String>,
    pub note: Option<String>,
    pub path: PathBuf,
}

/// What a save did.
#[derive(Debug, Clone, PartialEq)]
pub enum Saved {
    /// Nothing changed; the file was left alone.
    Unchanged { revision: u64 },
    /// A new revision was written.
    Written { revision: u64, changes: Vec<String>, git: Option<Result<(), String>> },
}

/// How a save treats a file that changed on disk since it was opened.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OnConflict {
    /// Refuse (the default).
    Refuse,
    /// Overwrite: the user chose to.
    Overwrite,
}

/// An entry of the library folder that is not read as a recipe: its name and why.
type Skipped = (String, String);

/// One `.ron` entry of the library folder: a recipe's name, or a name and why it is skipped.
enum Candidate {
    Recipe(String),
    Skipped(Skipped),
}

/// A library folder.
#[derive(Debug, Clone)]
pub struct Library {
    dir: PathBuf,
    /// Commit each save when the folder is a git work tree.
    pub git_commit: bool,
    /// Who saves (recorded with each revision); None: the git identity's name in the
    /// library folder, else the login name.
    pub user: Option<String>,
}

/// The name to record with a save: `git config user.name` in the library folder where
/// git answers, else `$USER` / `$LOGNAME`, else "unknown".
pub fn who_saves(dir: &Path) -> String {
    let git = std::process::Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(["config", "user.name"])
        .output()
        .ok()
        .filter(|o| o.status.success())
        .map(|o| String::from_utf8_lossy(&o.stdout).trim().to_string())
        .filter(|n| !n.is_empty());
    git.or_else(|| std::env::var("USER").ok())
        .or_else(|| std::env::var("LOGNAME").ok())
        .filter(|n| !n.trim().is_empty())
        .unwrap_or_else(|| "unknown".into())
}

impl Library {
    /// The library at `dir` (created when missing).
    pub fn at(dir: &Path) -> Result<Library, LibraryError> {
        std::fs::create_dir_all(dir).map_err(io(dir))?;
        Ok(Library { dir: dir.to_path_buf(), git_commit: false, user: None })
    }

    /// The library at `dir` as it is, creating nothing (for reading).
    pub fn existing(dir: &Path) -> Library {
        Library { dir: dir.to_path_buf(), git_commit: false, user: None }
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn path_of(&self, name: &str) -> Result<PathBuf, LibraryError> {
        check_name(name)?;
        Ok(self.dir.join(format!("{name}.ron")))
    }

    /// Copy the demo recipes in when the library has no recipe at all; returns how many.
    pub fn seed_demos_if_empty(&self) -> Result<usize, LibraryError> {
        if self.candidates()?.any(|c| matches!(c, Candidate::Recipe(_))) {
            return Ok(0);
        }
        for (name, text) in demo::RECIPES {
            atomic::write(&self.dir.join(format!("{name}.ron")), text.as_bytes()).map_err(io(&self.dir))?;
        }
        Ok(demo::RECIPES.len())
    }

    /// The recipe names, sorted.
    pub fn names(&self) -> Result<Vec<String>, LibraryError> {
        Ok(self.scan()?.0)
    }

    /// The recipe names, and the `.ron` entries that are not recipes with why they were
    /// skipped (a folder, a FIFO, a link out of the library, a name not allowed), sorted.
    fn scan(&self) -> Result<(Vec<String>, Vec<Skipped>), LibraryError> {
        let mut names = Vec::new();
        let mut skipped = Vec::new();
        for candidate in self.candidates()? {
            match candidate {
                Candidate::Recipe(name) => names.push(name),
                Candidate::Skipped(entry) => skipped.push(entry),
            }
        }
        names.sort();
        skipped.sort();
        Ok((names, skipped))
    }

    /// The folder's `.ron` entries, one at a time, each a recipe name or skipped with why
    /// (a folder, a FIFO, a link out of the library, a name not allowed). A regular file is
    /// known by its directory entry, without another look at the disk.
    fn candidates(&self) -> Result<impl Iterator<Item = Candidate> + '_, LibraryError> {
        let entries = std::fs::read_dir(&self.dir).map_err(io(&self.dir))?;
        Ok(entries.filter_map(move |entry| {
            let entry = match entry {
                Ok(e) => e,
                Err(e) => return Some(Candidate::Skipped((self.dir.display().to_string(), format!("skipped: {e}")))),
            };
            let path = entry.path();
            if path.extension().and_then(|e| e.to_str()) != Some("ron") {
                return None;
            }
            let Some(stem) = path.file_stem().and_then(|s| s.to_str()) else {
                return Some(Candidate::Skipped((
                    path.display().to_string(),
                    "the name is not valid UTF-8".to_string(),
                )));
            };
            if stem.starts_with('.') {
                return None;
            }
            if let Err(e) = check_name(stem) {
                let why = match e {
                    LibraryError::BadName { why, .. } => why.to_string(),
                    other => other.to_string(),
                };
                return Some(Candidate::Skipped((
                    stem.to_string(),
                    format!("skipped: the name is not allowed ({why})"),
                )));
            }
            let regular = entry.file_type().is_ok_and(|t| t.is_file());
            Some(match if regular { Ok(()) } else { self.readable(&path) } {
                Ok(()) => Candidate::Recipe(stem.to_string()),
                Err(why) => Candidate::Skipped((stem.to_string(), format!("skipped: {why}"))),
            })
        }))
    }

    /// Whether `path` (in the library folder) may be read as a recipe: a regular file, or a
    /// symbolic link to a regular file inside the library. Says why not.
    fn readable(&self, path: &Path) -> Result<(), String> {
        let meta = std::fs::symlink_metadata(path).map_err(|e| e.to_string())?;
        if meta.file_type().is_symlink() {
            let target = std::fs::canonicalize(path).map_err(|_| "a symbolic link to nothing".to_string())?;
            let home = std::fs::canonicalize(&self.dir).unwrap_or_else(|_| self.dir.clone());
            if !target.starts_with(&home) {
                return Err("a symbolic link to a file outside the library; only files inside it are read".into());
            }
            let meta = std::fs::metadata(&target).map_err(|e| e.to_string())?;
            return kind_allowed(&meta);
        }
        kind_allowed(&meta)
    }

    /// Every recipe with its summary; a file that does not parse is listed with its error,
    /// and an entry that is not a recipe file with why it was skipped.
    pub fn list(&self) -> Result<Vec<Entry>, LibraryError> {
        use rayon::prelude::*;
        let (names, skipped) = self.scan()?;
        // Read and parsed on every core (the order is kept, and sorted below anyway).
        let mut entries: Vec<Entry> = names
            .into_par_iter()
            .map(|name| {
                let path = self.dir.join(format!("{name}.ron"));
                let summary = self.open(&name).map(|o| Summary::of(&o)).map_err(|e| e.to_string());
                Entry { name, path, summary }
            })
            .collect();
        entries.extend(skipped.into_iter().map(|(name, why)| Entry {
            path: self.dir.join(format!("{name}.ron")),
            name,
            summary: Err(why),
        }));
        entries.sort_by(|a, b| a.name.cmp(&b.name));
        Ok(entries)
    }

    /// Every recipe's brief, in [`Library::list`]'s order and with its errors, taken from
    /// the listing's index where a file is unchanged since it was indexed (`index.rs`); the
    /// others are read and parsed on every core, and the index is brought up to date.
    pub fn briefs(&self) -> Result<Vec<Listed>, LibraryError> {
        use rayon::prelude::*;
        let (names, skipped) = self.scan()?;
        let before = index::read(&self.dir);
        let now = std::time::SystemTime::now();
        let read: Vec<(String, Option<index::Stamp>, Result<Brief, String>)> = names
            .into_par_iter()
            .map(|name| {
                // The stamp is taken before the file is read: a change after it makes the
                // next listing's stamp differ.
                let stamp = std::fs::metadata(self.dir.join(format!("{name}.ron"))).ok().map(|m| index::Stamp::of(&m));
                if let (Some(now), Some((was, brief))) = (stamp, before.get(&name)) {
                    if now == *was {
                        return (name, stamp, Ok(brief.clone()));
                    }
                }
                let brief = self.open(&name).map(|o| Brief::of(&o.recipe)).map_err(|e| e.to_string());
                (name, stamp, brief)
            })
            .collect();
        let after: index::Briefs = read
            .iter()
            .filter_map(|(name, stamp, brief)| Some((name.clone(), ((*stamp)?, brief.clone().ok()?))))
            .collect();
        index::write(self, &before, after, now);
        let mut listed: Vec<Listed> = read.into_iter().map(|(name, _, brief)| Listed { name, brief }).collect();
        listed.extend(skipped.into_iter().map(|(name, why)| Listed { name, brief: Err(why) }));
        listed.sort_by(|a, b| a.name.cmp(&b.name));
        Ok(listed)
    }

    /// A folder of the library's own (`.history/NAME`, `.trash`, `.locks`, `records` …),
    /// created where missing. Refused when it, or a folder on the way to it, is a symbolic
    /// link or not a folder: nothing is ever written outside the library through one.
    pub(crate) fn own_dir(&self, parts: &[&str]) -> Result<PathBuf, LibraryError> {
        let mut dir = self.dir.clone();
        for part in parts {
            dir.push(part);
            match std::fs::symlink_metadata(&dir) {
                Ok(m) if m.file_type().is_symlink() => {
                    return Err(LibraryError::Unsafe {
                        path: dir,
                        why: "is a symbolic link; the library writes only into its own folders. Replace the link \
                              with a folder"
                            .into(),
                    })
                }
                Ok(m) if !m.is_dir() => {
                    return Err(LibraryError::Unsafe { path: dir, why: "is in the way: it should be a folder".into() })
                }
                Ok(_) => {}
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
                    std::fs::create_dir(&dir)
                        .or_else(|e| if dir.is_dir() { Ok(()) } else { Err(e) })
                        .map_err(io(&dir))?;
                }
                Err(e) => return Err(LibraryError::Io { path: dir, source: e }),
            }
        }
        Ok(dir)
    }

    /// Hold the lock of `key` (a recipe name, or `record.ID`) until the guard is dropped:
    /// every change to that recipe (save, restore, import, rename, delete), from any
    /// screen or command, happens one at a time.
    pub(crate) fn lock(&self, key: &str) -> Result<Lock, LibraryError> {
        let dir = self.own_dir(&[".locks"])?;
        // Shared with every other writer, exclusive against a sync moving the work tree.
        let library = Lock::take(&dir.join("library.lock"), libc::LOCK_SH)?;
        let mut lock = Lock::take(&dir.join(format!("{key}.lock")), libc::LOCK_EX)?;
        lock.also.push(library);
        Ok(lock)
    }

    /// The whole library, for a sync: every writer waits until it is released.
    pub(crate) fn lock_library_exclusive(&self) -> Result<Lock, LibraryError> {
        let dir = self.own_dir(&[".locks"])?;
        Lock::take(&dir.join("library.lock"), libc::LOCK_EX)
    }

    /// The lock of a recipe name, shared by every name that reads the same (case and
    /// invisible characters folded): the look-alike rule is decided under the lock that
    /// the write holds, so two look-alike imports at once cannot both be created.
    fn name_lock(&self, name: &str) -> Result<Lock, LibraryError> {
        self.lock(&format!("name.{}", folded(name)))
    }

    /// A history folder left without its recipe (deleted before histories moved with
    /// their recipes, or by hand) is never adopted by a new recipe of the same name: it
    /// goes to the trash as a history of its own. Called under the name's lock.
    fn set_aside_orphan_history(&self, name: &str, now: &str) -> Result<(), LibraryError> {
        let history = self.dir.join(".history").join(name);
        if !std::fs::symlink_metadata(&history).is_ok_and(|m| m.is_dir()) {
            return Ok(());
        }
        let entry = self.new_trash_entry(name, now)?;
        std::fs::rename(&history, entry.join("history")).map_err(io(&history))
    }

    /// A trash folder of its own for a deleted recipe: `.trash/NAME.STAMP`, with `-2`,
    /// `-3` … where that exists already. Made with create_dir, so two deletes of one name
    /// within a second (or at once) never share an entry.
    fn new_trash_entry(&self, name: &str, now: &str) -> Result<PathBuf, LibraryError> {
        let trash = self.own_dir(&[".trash"])?;
        let stamp: String = now.chars().filter(|c| c.is_ascii_alphanumeric()).collect();
        for k in 1..10_000 {
            let id = if k == 1 { stamp.clone() } else { format!("{stamp}-{k}") };
            let dir = trash.join(format!("{name}.{id}"));
            match std::fs::create_dir(&dir) {
                Ok(()) => return Ok(dir),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
                Err(e) => return Err(LibraryError::Io { path: dir, source: e }),
            }
        }
        Err(LibraryError::Unsafe { path: trash, why: format!("holds 10000 entries of {name} at {now}") })
    }

    /// Refuse a new name that reads the same as an existing recipe: it differs only by
    /// case (two such files cannot live side by side on a case-insensitive volume, nor in
    /// a git repository checked out on one) or by invisible characters.
    fn check_new_name(&self, name: &str) -> Result<(), LibraryError> {
        let wanted = folded(name);
        for entry in std::fs::read_dir(&self.dir).map_err(io(&self.dir))?.flatten() {
            let file = entry.file_name();
            let Some(stem) = file.to_str().and_then(|f| f.strip_suffix(".ron")) else {
                continue;
            };
            if stem != name && folded(stem) == wanted {
                let how = if stem.chars().any(is_invisible) { "invisible characters" } else { "upper and lower case" };
                return Err(LibraryError::LookAlike { name: name.to_string(), existing: stem.to_string(), how });
            }
        }
        Ok(())
    }

    /// Read a recipe (parsed, not yet resolved against the catalogue).
    pub fn open(&self, name: &str) -> Result<Opened, LibraryError> {
        let (text, path) = self.read_text(name)?;
        let recipe = Recipe::parse(&text, &path.display().to_string())?;
        Ok(Opened { name: name.to_string(), fingerprint: Fingerprint::of(text.as_bytes()), path, text, recipe })
    }

    /// A recipe file's text and path, read only where it is a regular file in the library
    /// (or a link to one inside it).
    pub fn read_text(&self, name: &str) -> Result<(String, PathBuf), LibraryError> {
        let path = self.path_of(name)?;
        let Ok(meta) = std::fs::symlink_metadata(&path) else {
            return Err(LibraryError::NotFound(name.to_string()));
        };
        // A regular file is read at once (its kind is checked again on the open file); a
        // link only where it leads to a file inside the library.
        if !meta.is_file() {
            self.readable(&path)
                .map_err(|why| LibraryError::Unsafe { path: path.clone(), why: format!("{why}; not read") })?;
        }
        let text = read_limited(&path)?;
        Ok((text, path))
    }

    /// Save `recipe` as `name`. `opened` is what the editor started from (None for a new
    /// recipe: an existing file of that name is then refused). Unchanged content writes
    /// nothing; changed content becomes the next revision, stamped with `now` and `note`,
    /// and the previous file goes to the history folder. The recipe's lock is held from
    /// the look at the file on disk to the rename, so of two saves at once the second sees
    /// the first.
    pub fn save(
        &self,
        name: &str,
        recipe: &Recipe,
        opened: Option<&Opened>,
        note: Option<&str>,
        now: &str,
        on_conflict: OnConflict,
    ) -> Result<Saved, LibraryError> {
        let path = self.path_of(name)?;
        let _lock = self.name_lock(name)?;
        self.save_locked(name, &path, recipe, opened, note, now, on_conflict)
    }

    #[allow(clippy::too_many_arguments)]
    fn save_locked(
        &self,
        name: &str,
        path: &Path,
        recipe: &Recipe,
        opened: Option<&Opened>,
        note: Option<&str>,
        now: &str,
        on_conflict: OnConflict,
    ) -> Result<Saved, LibraryError> {
        let current = match std::fs::symlink_metadata(path) {
            Ok(m) if m.file_type().is_symlink() => {
                return Err(LibraryError::Unsafe {
                    path: path.to_path_buf(),
                    why: "is a symbolic link; the library does not write through or over links. Save under \
                          another name"
                        .into(),
                })
            }
            Ok(_) => Some(read_limited(path)?),
            Err(_) => None,
        };
        if current.is_none() {
            self.check_new_name(name)?;
            // A new recipe starts a history of its own.
            self.set_aside_orphan_history(name, now)?;
        }
        let previous_recipe = match (&current, opened) {
            (None, _) => None,
            (Some(text), Some(o)) => {
                if Fingerprint::of(text.as_bytes()) != o.fingerprint && on_conflict == OnConflict::Refuse {
                    return Err(LibraryError::ChangedOnDisk(path.to_path_buf()));
                }
                Recipe::parse(text, &path.display().to_string()).ok()
            }
            (Some(_), None) if on_conflict == OnConflict::Refuse => {
                return Err(LibraryError::Exists(name.to_string()));
            }
            (Some(text), None) => Recipe::parse(text, &path.display().to_string()).ok(),
        };
        if let Some(prev) = &previous_recipe {
            if changes::same_content(prev, recipe) {
                return Ok(Saved::Unchanged { revision: prev.revision });
            }
        }
        let base_revision = previous_recipe.as_ref().map_or(recipe.revision, |p| p.revision.max(recipe.revision));
        let change_list = match &previous_recipe {
            Some(prev) => changes::describe(prev, recipe),
            None => vec!["created".to_string()],
        };
        // Keep the file being replaced, whatever it holds.
        if let Some(text) = &current {
            let dir = self.own_dir(&[".history", name])?;
            let kept = dir.join(format!("{:04}.ron", previous_recipe.as_ref().map_or(0, |p| p.revision)));
            atomic::write(&kept, text.as_bytes()).map_err(io(&kept))?;
        }
        let note = note.map(str::trim).filter(|n| !n.is_empty());
        let next = base_revision.checked_add(1).ok_or_else(|| LibraryError::Unsafe {
            path: path.to_path_buf(),
            why: format!("is at revision {base_revision}, the last one that can be numbered; copy it under a new name"),
        })?;
        let new = Recipe {
            revision: next,
            saved: Some(now.to_string()),
            saved_by: Some(self.user.clone().unwrap_or_else(|| who_saves(&self.dir))),
            change_note: note.map(str::to_string).or_else(|| Some(change_list.join("; "))),
            ..recipe.clone()
        };
        let text = canonical::to_text(&new);
        atomic::write(path, text.as_bytes()).map_err(io(path))?;
        let git = self.git_commit.then(|| {
            let message = format!("{name} rev {}: {}", new.revision, new.change_note.clone().unwrap_or_default());
            let history = self.dir.join(".history").join(name);
            git::commit(&self.dir, &[path, &history], &message)
        });
        Ok(Saved::Written { revision: new.revision, changes: change_list, git })
    }

    /// Save under a new name that must not exist yet.
    pub fn save_as(&self, name: &str, recipe: &Recipe, now: &str) -> Result<Saved, LibraryError> {
        let fresh = Recipe { revision: 0, saved: None, saved_by: None, change_note: None, ..recipe.clone() };
        self.save(name, &fresh, None, None, now, OnConflict::Refuse)
    }

    /// Copy a recipe under a new name, as revision 1 of its own.
    pub fn duplicate(&self, from: &str, to: &str, now: &str) -> Result<Saved, LibraryError> {
        let opened = self.open(from)?;
        self.save_as(to, &opened.recipe, now)
    }

    /// Rename a recipe and its history. A history left under the new name by a deleted
    /// recipe is set aside in the trash, never adopted.
    pub fn rename(&self, from: &str, to: &str) -> Result<(), LibraryError> {
        let (src, dst) = (self.path_of(from)?, self.path_of(to)?);
        // Both locks, always in the same order, so two renames cannot wait on each other.
        let (a, b) = (folded(from), folded(to));
        let (first, second) = if a <= b { (from, to) } else { (to, from) };
        let _a = self.name_lock(first)?;
        let _b = (folded(first) != folded(second)).then(|| self.name_lock(second)).transpose()?;
        if std::fs::symlink_metadata(&src).map_or(true, |m| !m.is_file()) {
            return Err(LibraryError::NotFound(from.to_string()));
        }
        if std::fs::symlink_metadata(&dst).is_ok() {
            return Err(LibraryError::Exists(to.to_string()));
        }
        self.check_new_name(to)?;
        let now = clock::now_utc();
        self.set_aside_orphan_history(to, &now)?;
        std::fs::rename(&src, &dst).map_err(io(&src))?;
        let history = self.own_dir(&[".history"])?;
        let h_src = history.join(from);
        if std::fs::symlink_metadata(&h_src).is_ok_and(|m| m.is_dir()) {
            std::fs::rename(&h_src, history.join(to)).map_err(io(&h_src))?;
        }
        Ok(())
    }

    /// Move a recipe to the trash with its whole history (recoverable); returns its trash
    /// entry, a folder of its own that no later delete reuses.
    pub fn delete(&self, name: &str, now: &str) -> Result<PathBuf, LibraryError> {
        let src = self.path_of(name)?;
        let _lock = self.name_lock(name)?;
        if std::fs::symlink_metadata(&src).map_or(true, |m| !m.is_file()) {
            return Err(LibraryError::NotFound(name.to_string()));
        }
        let entry = self.new_trash_entry(name, now)?;
        std::fs::rename(&src, entry.join(TRASHED_RECIPE)).map_err(io(&src))?;
        let history = self.dir.join(".history").join(name);
        if std::fs::symlink_metadata(&history).is_ok_and(|m| m.is_dir()) {
            std::fs::rename(&history, entry.join("history")).map_err(io(&history))?;
        }
        Ok(entry)
    }

    /// The deleted recipes in the trash: (name, its trash id: when it was deleted as
    /// stamped, with `-2` … for more deletes in that second, path), newest first. Entries
    /// from before histories moved with their recipes (`NAME.STAMP.ron` files) are listed
    /// too; history folders set aside without a recipe are not.
    pub fn trash(&self) -> Vec<(String, String, PathBuf)> {
        let dir = self.dir.join(".trash");
        if !std::fs::symlink_metadata(&dir).is_ok_and(|m| m.is_dir()) {
            return Vec::new();
        }
        let mut out: Vec<(String, String, PathBuf)> = std::fs::read_dir(&dir)
            .map(|rd| {
                rd.flatten()
                    .filter_map(|e| {
                        let t = e.file_type().ok()?;
                        let file = e.file_name().to_str()?.to_string();
                        let entry = if t.is_dir() && e.path().join(TRASHED_RECIPE).is_file() {
                            file.as_str()
                        } else if t.is_file() {
                            file.strip_suffix(".ron")?
                        } else {
                            return None;
                        };
                        let (name, stamp) = entry.rsplit_once('.')?;
                        Some((name.to_string(), stamp.to_string(), e.path()))
                    })
                    .collect()
            })
            .unwrap_or_default();
        // Newest first: by stamp, then by the number after it.
        let key = |stamp: &str| {
            let (time, k) = stamp.split_once('-').unwrap_or((stamp, "1"));
            (time.to_string(), k.parse::<u32>().unwrap_or(1))
        };
        out.sort_by(|a, b| key(&b.1).cmp(&key(&a.1)).then(a.0.cmp(&b.0)));
        out
    }

    /// Bring a deleted recipe `name` back from the trash, as `to` (its own name when
    /// None), with its history: the entry `which` (its trash id), else the most recently
    /// deleted. Refused, naming the way out, where the name is taken again.
    pub fn undelete(&self, name: &str, to: Option<&str>, which: Option<&str>) -> Result<String, LibraryError> {
        let to = to.unwrap_or(name);
        let dst = self.path_of(to)?;
        let _lock = self.name_lock(to)?;
        let trash = self.trash();
        let of_name: Vec<&(String, String, PathBuf)> = trash.iter().filter(|(n, _, _)| n == name).collect();
        let chosen = match which {
            Some(id) => of_name.iter().find(|(_, s, _)| s == id),
            None => of_name.first(),
        };
        let Some((_, _, src)) = chosen else {
            let mut names: Vec<String> = match which {
                Some(_) => of_name.iter().map(|(_, s, _)| format!("{name} deleted {s}")).collect(),
                None => trash.iter().map(|(n, _, _)| n.clone()).collect(),
            };
            names.dedup();
            return Err(LibraryError::Missing(if names.is_empty() {
                format!("no deleted recipe {name:?} in the trash")
            } else {
                format!("no such deleted recipe {name:?} in the trash; it holds {}", names.join(", "))
            }));
        };
        if std::fs::symlink_metadata(&dst).is_ok() {
            let mut hint = format!("fillwright undelete {name} --as {to}-restored");
            if of_name.len() > 1 {
                hint.push_str(&format!(
                    " ({} deleted recipes of that name: choose one with --deleted ID, as `fillwright undelete` lists them)",
                    of_name.len()
                ));
            }
            return Err(LibraryError::NameTaken { name: to.to_string(), hint });
        }
        if to != name {
            self.check_new_name(to)?;
        }
        if src.is_file() {
            // An entry from before histories moved with their recipes.
            std::fs::rename(src, &dst).map_err(io(src))?;
            return Ok(to.to_string());
        }
        let now = clock::now_utc();
        self.set_aside_orphan_history(to, &now)?;
        let history = src.join("history");
        if std::fs::symlink_metadata(&history).is_ok_and(|m| m.is_dir()) {
            let into = self.own_dir(&[".history"])?.join(to);
            std::fs::rename(&history, &into).map_err(io(&history))?;
        }
        let recipe = src.join(TRASHED_RECIPE);
        std::fs::rename(&recipe, &dst).map_err(io(&recipe))?;
        let _ = std::fs::remove_dir(src);
        Ok(to.to_string())
    }

    /// Bring a recipe file into the library under `name`.
    pub fn import(&self, file: &Path, name: &str, now: &str) -> Result<Saved, LibraryError> {
        let text = read_limited(file)?;
        self.import_text(&text, &file.display().to_string(), name, now)
    }

    /// Save recipe text read from elsewhere (standard input) under `name`; `origin` names it
    /// in messages.
    pub fn import_text(&self, text: &str, origin: &str, name: &str, now: &str) -> Result<Saved, LibraryError> {
        let recipe = Recipe::parse(text, origin)?;
        self.save_as(name, &recipe, now)
    }

    /// Write a recipe to a file outside the library (canonical form).
    pub fn export(&self, name: &str, file: &Path, replace_link: bool) -> Result<(), LibraryError> {
        let opened = self.open(name)?;
        atomic::write_output(file, canonical::to_text(&opened.recipe).as_bytes(), replace_link).map_err(io(file))
    }

    /// Every revision, oldest first, the current file last.
    pub fn history(&self, name: &str) -> Result<Vec<Revision>, LibraryError> {
        let current = self.open(name)?;
        let mut out = Vec::new();
        let dir = self.dir.join(".history").join(name);
        let real_dirs = [self.dir.join(".history"), dir.clone()]
            .iter()
            .all(|d| std::fs::symlink_metadata(d).is_ok_and(|m| m.is_dir()));
        if let Ok(entries) =
            std::fs::read_dir(&dir).map_err(|_| ()).and_then(|r| if real_dirs { Ok(r) } else { Err(()) })
        {
            for e in entries.flatten() {
                let path = e.path();
                if !e.file_type().is_ok_and(|t| t.is_file()) {
                    continue;
                }
                let Ok(text) = read_limited(&path) else {
                    continue;
                };
                if let Ok(r) = Recipe::parse(&text, &path.display().to_string()) {
                    out.push(Revision {
                        revision: r.revision,
                        saved: r.saved,
                        saved_by: r.saved_by,
                        note: r.change_note,
                        path,
                    });
                }
            }
        }
        out.sort_by_key(|r| r.revision);
        out.dedup_by_key(|r| r.revision);
        out.retain(|r| r.revision != current.recipe.revision);
        out.push(Revision {
            revision: current.recipe.revision,
            saved: current.recipe.saved.clone(),
            saved_by: current.recipe.saved_by.clone(),
            note: current.recipe.change_note.clone(),
            path: current.path.clone(),
        });
        Ok(out)
    }

    /// One revision's recipe.
    pub fn revision(&self, name: &str, revision: u64) -> Result<Recipe, LibraryError> {
        let all = self.history(name)?;
        let Some(r) = all.iter().find(|r| r.revision == revision) else {
            return Err(LibraryError::NoRevision {
                name: name.to_string(),
                revision,
                have: all.iter().map(|r| r.revision.to_string()).collect::<Vec<_>>().join(", "),
            });
        };
        let text = read_limited(&r.path)?;
        Ok(Recipe::parse(&text, &r.path.display().to_string())?)
    }

    /// Make an old revision the newest one. The lock is held from reading the current
    /// file to the rename: two restores at once become two revisions, one after the other.
    pub fn restore(&self, name: &str, revision: u64, now: &str) -> Result<Saved, LibraryError> {
        let path = self.path_of(name)?;
        let _lock = self.name_lock(name)?;
        let old = self.revision(name, revision)?;
        let opened = self.open(name)?;
        let note = format!("restored revision {revision}");
        self.save_locked(name, &path, &old, Some(&opened), Some(&note), now, OnConflict::Refuse)
    }
}

/// The recipe's file inside its trash entry.
const TRASHED_RECIPE: &str = "recipe.ron";

/// Only regular files are read: a FIFO would block the reader, a device never ends.
fn kind_allowed(meta: &std::fs::Metadata) -> Result<(), String> {
    use std::os::unix::fs::FileTypeExt;
    let t = meta.file_type();
    let what = if t.is_file() {
        return Ok(());
    } else if t.is_dir() {
        "a folder"
    } else if t.is_fifo() {
        "a FIFO (named pipe)"
    } else if t.is_socket() {
        "a socket"
    } else if t.is_char_device() || t.is_block_device() {
        "a device"
    } else {
        "not a regular file"
    };
    Err(format!("{what}, not a regular file; only regular files are read"))
}

/// Read a file, refusing anything larger than a recipe can be before reading it, and
/// anything that is not a regular file (without blocking on a FIFO: it is opened
/// non-blocking and looked at before a byte is read).
pub fn read_limited(path: &Path) -> Result<String, LibraryError> {
    read_regular(path, MAX_RECIPE_BYTES)
}

/// What `-` stands for in messages: a recipe or record read from standard input.
pub const STANDARD_INPUT: &str = "standard input";

/// A recipe or record given as `-`: standard input read whole, refused when it is a
/// terminal (nothing was piped in), larger than a recipe can be, or not UTF-8 text.
pub fn read_standard_input() -> Result<String, String> {
    use std::io::{IsTerminal, Read};
    let stdin = std::io::stdin();
    if stdin.is_terminal() {
        return Err("`-` reads the file from standard input, which is a terminal here: pipe or redirect \
                    the file in, e.g. `fillwright plan - < recipe.ron`"
            .into());
    }
    let mut bytes = Vec::new();
    stdin
        .lock()
        .take(MAX_RECIPE_BYTES as u64 + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| format!("{STANDARD_INPUT} could not be read: {e}"))?;
    if bytes.len() > MAX_RECIPE_BYTES {
        return Err(format!(
            "{STANDARD_INPUT} holds more than {} KiB; a recipe or record is far smaller",
            MAX_RECIPE_BYTES / 1024
        ));
    }
    String::from_utf8(bytes).map_err(|_| format!("{STANDARD_INPUT} is not UTF-8 text; it must be a RON text file"))
}

/// As [`read_limited`], for files of at most `limit` bytes (settings, catalogues).
pub fn read_regular(path: &Path, limit: usize) -> Result<String, LibraryError> {
    use std::io::Read;
    use std::os::unix::fs::OpenOptionsExt;
    let mut file =
        std::fs::OpenOptions::new().read(true).custom_flags(libc::O_NONBLOCK).open(path).map_err(io(path))?;
    let meta = file.metadata().map_err(io(path))?;
    kind_allowed(&meta).map_err(|why| LibraryError::Unsafe { path: path.to_path_buf(), why })?;
    if meta.len() > limit as u64 {
        return Err(LibraryError::TooLarge { path: path.to_path_buf(), size: meta.len() });
    }
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.by_ref().take(limit as u64 + 1).read_to_end(&mut bytes).map_err(io(path))?;
    if bytes.len() > limit {
        return Err(LibraryError::TooLarge { path: path.to_path_buf(), size: bytes.len() as u64 });
    }
    String::from_utf8(bytes).map_err(|_| LibraryError::Unsafe {
        path: path.to_path_buf(),
        why: "is not UTF-8 text; it must be a RON text file".into(),
    })
}

/// An advisory lock (`flock`) on a lock file, released when dropped or when the process
/// ends, however it ends.
#[derive(Debug)]
pub struct Lock {
    _file: std::fs::File,
    /// Locks held with this one (the library's shared lock), released with it.
    also: Vec<Lock>,
}

impl Lock {
    fn take(path: &Path, mode: libc::c_int) -> Result<Lock, LibraryError> {
        use std::os::fd::AsRawFd;
        use std::os::unix::fs::OpenOptionsExt;
        let file = std::fs::OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .mode(0o644)
            .custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK)
            .open(path)
            .map_err(io(path))?;
        loop {
            // SAFETY: flock on a descriptor we own; it only takes or waits for the lock.
            if unsafe { libc::flock(file.as_raw_fd(), mode) } == 0 {
                return Ok(Lock { _file: file, also: Vec::new() });
            }
            let e = std::io::Error::last_os_error();
            if e.kind() != std::io::ErrorKind::Interrupted {
                return Err(LibraryError::Io { path: path.to_path_buf(), source: e });
            }
        }
    }
}
