//! Drafts of unsaved edits, written when a session ends suddenly (a signal, a lost
//! terminal, a panic) and offered by the next start.
//!
//! A draft belongs to a file, not to a name: it records the absolute path of the recipe
//! file it was made from (`d1/x.ron` and `d2/x.ron` have drafts of their own), and the
//! session that wrote it (two sessions of one recipe keep two drafts). A start offers the
//! drafts of the files in its own library only, each for the file it belongs to.
//!
//! `drafts/NAME.HASH.SESSION.ron`, HASH a fingerprint of the file's path:
//!
//! ```ron
//! Draft(format: 1, file: "/home/lab/.config/fillwright/library/x.ron", name: "x",
//!       written: "2026-12-01T10:00:00Z", recipe: "Recipe(…)")
//! ```

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::library::Fingerprint;
use crate::recipe::{canonical, Recipe};

const FORMAT: u32 = 1;

#[derive(Debug, Clone, Serialize, Deserialize)]
struct DraftFile {
    format: u32,
    /// The recipe file the draft belongs to, absolute.
    file: String,
    name: String,
    #[serde(default)]
    written: String,
    /// The edited recipe, in canonical text.
    recipe: String,
}

/// A draft waiting to be recovered.
#[derive(Debug, Clone, PartialEq)]
pub struct DraftEntry {
    /// The library name of the recipe it belongs to.
    pub name: String,
    /// The recipe file it belongs to.
    pub file: PathBuf,
    /// The draft file itself.
    pub path: PathBuf,
    /// When it was written (UTC), as recorded.
    pub written: String,
}

/// The identity of recipe `name` in the library at `dir`: its file's absolute path (the
/// folder resolved through links, so that two ways to one folder agree).
pub fn identity(dir: &Path, name: &str) -> PathBuf {
    let dir = std::fs::canonicalize(dir).or_else(|_| std::path::absolute(dir)).unwrap_or_else(|_| dir.to_path_buf());
    dir.join(format!("{name}.ron"))
}

/// Where `session` keeps its draft of the file `file` (named `name`).
pub fn path_for(drafts: &Path, file: &Path, name: &str, session: &str) -> PathBuf {
    let hash = Fingerprint::of(file.as_os_str().as_encoded_bytes()).short_hex();
    drafts.join(format!("{name}.{hash}.{session}.ron"))
}

/// Write a draft: its folder must be a real folder (created when missing), never a
/// symbolic link, the same rule as the library's own folders; the file is replaced
/// atomically. The error says what was refused or failed, for the screen to show at once.
pub fn write(path: &Path, text: &str) -> Result<(), String> {
    let dir = path.parent().ok_or("a draft needs a folder")?;
    match std::fs::symlink_metadata(dir) {
        Ok(m) if m.file_type().is_symlink() => {
            return Err(format!(
                "symbolic link at {}; drafts are not written through links (replace it with a folder)",
                dir.display()
            ))
        }
        Ok(m) if !m.is_dir() => return Err(format!("{} is in the way: it should be a folder", dir.display())),
        Ok(_) => {}
        Err(_) => std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?,
    }
    crate::library::atomic::write(path, text.as_bytes()).map_err(|e| format!("{}: {e}", path.display()))
}

/// The text of a draft of `recipe` for the file `file`.
pub fn text_for(file: &Path, name: &str, recipe: &Recipe, written: &str) -> String {
    let draft = DraftFile {
        format: FORMAT,
        file: file.display().to_string(),
        name: name.to_string(),
        written: written.to_string(),
        recipe: canonical::to_text(recipe),
    };
    ron::ser::to_string_pretty(&draft, ron::ser::PrettyConfig::default()).unwrap_or_default()
}

/// The drafts in `drafts` that belong to files in the library folder `dir`, oldest first.
pub fn list(drafts: &Path, dir: &Path) -> Vec<DraftEntry> {
    let home = identity(dir, "x").parent().map(Path::to_path_buf).unwrap_or_default();
    let Ok(entries) = std::fs::read_dir(drafts) else { return Vec::new() };
    let mut out: Vec<DraftEntry> = entries
        .flatten()
        .filter(|e| e.file_type().is_ok_and(|t| t.is_file()))
        .map(|e| e.path())
        .filter(|p| p.extension().and_then(|x| x.to_str()) == Some("ron"))
        .filter_map(|path| {
            let d = parse(&crate::library::read_limited(&path).ok()?).ok()?;
            let file = PathBuf::from(&d.file);
            (file.parent() == Some(home.as_path())).then_some(DraftEntry {
                name: d.name,
                file,
                path,
                written: d.written,
            })
        })
        .collect();
    out.sort_by(|a, b| (&a.written, &a.name).cmp(&(&b.written, &b.name)));
    out
}

fn parse(text: &str) -> Result<DraftFile, String> {
    let d: DraftFile = crate::ron_format::options().from_str(text).map_err(|e| e.to_string())?;
    if d.format != FORMAT {
        return Err(format!("draft format {} is not known", d.format));
    }
    Ok(d)
}

/// The recipe of a draft file.
pub fn read(path: &Path) -> Result<Recipe, String> {
    let text = crate::library::read_limited(path).map_err(|e| e.to_string())?;
    let d = parse(&text).map_err(|e| format!("{}: {e}", path.display()))?;
    Recipe::parse(&d.recipe, &format!("draft of {}", d.file)).map_err(|e| e.to_string())
}
