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
pub mod records;

use std::path::{Path, PathBuf};

use crate::recipe::{canonical, changes, demo, FillTarget, Recipe, MAX_RECIPE_BYTES};

/// What went wrong with a library operation.
#[derive(Debug, thiserror::Error)]
pub enum LibraryError {
    #[error("recipe name {name:?} is not allowed: {why}")]
    BadName { name: String, why: &'static str },
    #[error("no recipe {0:?} in the library")]
    NotFound(String),
    #[error("a recipe {0:?} already exists; choose another name")]
    Exists(String),
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
    NoRevision { name: String, revision: u32, have: String },
    #[error("{path}: {source}")]
    Io { path: PathBuf, source: std::io::Error },
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

/// What the listing shows of a recipe.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    pub title: String,
    /// The fill target as written, e.g. `150bar` or `1.2kg (mass)`.
    pub fill: String,
    /// Water capacity and working pressure, e.g. `10L, 200bar`.
    pub cylinder: String,
    pub revision: u32,
}

impl Summary {
    fn of(r: &Recipe) -> Summary {
        Summary {
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

/// One stored revision.
#[derive(Debug, Clone, PartialEq)]
pub struct Revision {
    pub revision: u32,
    pub saved: Option<String>,
    pub note: Option<String>,
    pub path: PathBuf,
}

/// What a save did.
#[derive(Debug, Clone, PartialEq)]
pub enum Saved {
    /// Nothing changed; the file was left alone.
    Unchanged { revision: u32 },
    /// A new revision was written.
    Written { revision: u32, changes: Vec<String>, git: Option<Result<(), String>> },
}

/// How a save treats a file that changed on disk since it was opened.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OnConflict {
    /// Refuse (the default).
    Refuse,
    /// Overwrite: the user chose to.
    Overwrite,
}

/// A library folder.
#[derive(Debug, Clone)]
pub struct Library {
    dir: PathBuf,
    /// Commit each save when the folder is a git work tree.
    pub git_commit: bool,
}

impl Library {
    /// The library at `dir` (created when missing).
    pub fn at(dir: &Path) -> Result<Library, LibraryError> {
        std::fs::create_dir_all(dir).map_err(io(dir))?;
        Ok(Library { dir: dir.to_path_buf(), git_commit: false })
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn path_of(&self, name: &str) -> Result<PathBuf, LibraryError> {
        check_name(name)?;
        Ok(self.dir.join(format!("{name}.ron")))
    }

    fn history_dir(&self, name: &str) -> PathBuf {
        self.dir.join(".history").join(name)
    }

    /// Copy the demo recipes in when the library has no recipe at all; returns how many.
    pub fn seed_demos_if_empty(&self) -> Result<usize, LibraryError> {
        if !self.names()?.is_empty() {
            return Ok(0);
        }
        for (name, text) in demo::RECIPES {
            atomic::write(&self.dir.join(format!("{name}.ron")), text.as_bytes()).map_err(io(&self.dir))?;
        }
        Ok(demo::RECIPES.len())
    }

    /// The recipe names, sorted.
    pub fn names(&self) -> Result<Vec<String>, LibraryError> {
        let mut names = Vec::new();
        for entry in std::fs::read_dir(&self.dir).map_err(io(&self.dir))? {
            let entry = entry.map_err(io(&self.dir))?;
            let path = entry.path();
            if path.extension().and_then(|e| e.to_str()) != Some("ron") || !path.is_file() {
                continue;
            }
            if let Some(stem) = path.file_stem().and_then(|s| s.to_str()) {
                if check_name(stem).is_ok() {
                    names.push(stem.to_string());
                }
            }
        }
        names.sort();
        Ok(names)
    }

    /// Every recipe with its summary; a file that does not parse is listed with its error.
    pub fn list(&self) -> Result<Vec<Entry>, LibraryError> {
        Ok(self
            .names()?
            .into_iter()
            .map(|name| {
                let path = self.dir.join(format!("{name}.ron"));
                let summary = self.open(&name).map(|o| Summary::of(&o.recipe)).map_err(|e| e.to_string());
                Entry { name, path, summary }
            })
            .collect())
    }

    /// Read a recipe (parsed, not yet resolved against the catalogue).
    pub fn open(&self, name: &str) -> Result<Opened, LibraryError> {
        let path = self.path_of(name)?;
        let text = read_limited(&path).map_err(|e| match e {
            LibraryError::Io { source, .. } if source.kind() == std::io::ErrorKind::NotFound => {
                LibraryError::NotFound(name.to_string())
            }
            other => other,
        })?;
        let recipe = Recipe::parse(&text, &path.display().to_string())?;
        Ok(Opened { name: name.to_string(), fingerprint: Fingerprint::of(text.as_bytes()), path, text, recipe })
    }

    /// Save `recipe` as `name`. `opened` is what the editor started from (None for a new
    /// recipe: an existing file of that name is then refused). Unchanged content writes
    /// nothing; changed content becomes the next revision, stamped with `now` and `note`,
    /// and the previous file goes to the history folder.
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
        let current = match std::fs::metadata(&path) {
            Ok(_) => Some(read_limited(&path)?),
            Err(_) => None,
        };
        let previous_recipe = match (&current, opened) {
            (None, _) => None,
            (Some(text), Some(o)) => {
                if Fingerprint::of(text.as_bytes()) != o.fingerprint && on_conflict == OnConflict::Refuse {
                    return Err(LibraryError::ChangedOnDisk(path));
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
            let dir = self.history_dir(name);
            std::fs::create_dir_all(&dir).map_err(io(&dir))?;
            let kept = dir.join(format!("{:04}.ron", previous_recipe.as_ref().map_or(0, |p| p.revision)));
            atomic::write(&kept, text.as_bytes()).map_err(io(&kept))?;
        }
        let note = note.map(str::trim).filter(|n| !n.is_empty());
        let new = Recipe {
            revision: base_revision + 1,
            saved: Some(now.to_string()),
            change_note: note.map(str::to_string).or_else(|| Some(change_list.join("; "))),
            ..recipe.clone()
        };
        let text = canonical::to_text(&new);
        atomic::write(&path, text.as_bytes()).map_err(io(&path))?;
        let git = self.git_commit.then(|| {
            let message = format!("{name} rev {}: {}", new.revision, new.change_note.clone().unwrap_or_default());
            git::commit(&self.dir, &path, &message)
        });
        Ok(Saved::Written { revision: new.revision, changes: change_list, git })
    }

    /// Save under a new name that must not exist yet.
    pub fn save_as(&self, name: &str, recipe: &Recipe, now: &str) -> Result<Saved, LibraryError> {
        let fresh = Recipe { revision: 0, saved: None, change_note: None, ..recipe.clone() };
        self.save(name, &fresh, None, None, now, OnConflict::Refuse)
    }

    /// Copy a recipe under a new name, as revision 1 of its own.
    pub fn duplicate(&self, from: &str, to: &str, now: &str) -> Result<Saved, LibraryError> {
        let opened = self.open(from)?;
        self.save_as(to, &opened.recipe, now)
    }

    /// Rename a recipe and its history.
    pub fn rename(&self, from: &str, to: &str) -> Result<(), LibraryError> {
        let (src, dst) = (self.path_of(from)?, self.path_of(to)?);
        if !src.is_file() {
            return Err(LibraryError::NotFound(from.to_string()));
        }
        if dst.exists() {
            return Err(LibraryError::Exists(to.to_string()));
        }
        std::fs::rename(&src, &dst).map_err(io(&src))?;
        let (h_src, h_dst) = (self.history_dir(from), self.history_dir(to));
        if h_src.is_dir() && !h_dst.exists() {
            std::fs::rename(&h_src, &h_dst).map_err(io(&h_src))?;
        }
        Ok(())
    }

    /// Move a recipe to `.trash/` (recoverable); returns where it went.
    pub fn delete(&self, name: &str, now: &str) -> Result<PathBuf, LibraryError> {
        let src = self.path_of(name)?;
        if !src.is_file() {
            return Err(LibraryError::NotFound(name.to_string()));
        }
        let trash = self.dir.join(".trash");
        std::fs::create_dir_all(&trash).map_err(io(&trash))?;
        let stamp: String = now.chars().filter(|c| c.is_ascii_alphanumeric()).collect();
        let dst = trash.join(format!("{name}.{stamp}.ron"));
        std::fs::rename(&src, &dst).map_err(io(&src))?;
        Ok(dst)
    }

    /// Bring a recipe file into the library under `name`.
    pub fn import(&self, file: &Path, name: &str, now: &str) -> Result<Saved, LibraryError> {
        let text = read_limited(file)?;
        let recipe = Recipe::parse(&text, &file.display().to_string())?;
        self.save_as(name, &recipe, now)
    }

    /// Write a recipe to a file outside the library (canonical form).
    pub fn export(&self, name: &str, file: &Path) -> Result<(), LibraryError> {
        let opened = self.open(name)?;
        atomic::write(file, canonical::to_text(&opened.recipe).as_bytes()).map_err(io(file))
    }

    /// Every revision, oldest first, the current file last.
    pub fn history(&self, name: &str) -> Result<Vec<Revision>, LibraryError> {
        let current = self.open(name)?;
        let mut out = Vec::new();
        let dir = self.history_dir(name);
        if let Ok(entries) = std::fs::read_dir(&dir) {
            for e in entries.flatten() {
                let path = e.path();
                let Ok(text) = read_limited(&path) else {
                    continue;
                };
                if let Ok(r) = Recipe::parse(&text, &path.display().to_string()) {
                    out.push(Revision { revision: r.revision, saved: r.saved, note: r.change_note, path });
                }
            }
        }
        out.sort_by_key(|r| r.revision);
        out.dedup_by_key(|r| r.revision);
        out.retain(|r| r.revision != current.recipe.revision);
        out.push(Revision {
            revision: current.recipe.revision,
            saved: current.recipe.saved.clone(),
            note: current.recipe.change_note.clone(),
            path: current.path.clone(),
        });
        Ok(out)
    }

    /// One revision's recipe.
    pub fn revision(&self, name: &str, revision: u32) -> Result<Recipe, LibraryError> {
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

    /// Make an old revision the newest one.
    pub fn restore(&self, name: &str, revision: u32, now: &str) -> Result<Saved, LibraryError> {
        let old = self.revision(name, revision)?;
        let opened = self.open(name)?;
        let note = format!("restored revision {revision}");
        self.save(name, &old, Some(&opened), Some(&note), now, OnConflict::Refuse)
    }
}

/// Read a file, refusing anything larger than a recipe can be before reading it.
pub fn read_limited(path: &Path) -> Result<String, LibraryError> {
    let meta = std::fs::metadata(path).map_err(io(path))?;
    if meta.len() > MAX_RECIPE_BYTES as u64 {
        return Err(LibraryError::TooLarge { path: path.to_path_buf(), size: meta.len() });
    }
    std::fs::read_to_string(path).map_err(io(path))
}
