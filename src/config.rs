//! Where the program keeps its files, and the user's own gas catalogue.

use std::path::{Path, PathBuf};

use crate::gas::Catalogue;

/// Largest user catalogue read, bytes: a gas file is a few kB; anything near this is not one.
const MAX_CATALOGUE_BYTES: u64 = 4 * 1024 * 1024;

/// The configuration folder: `$FILLWRIGHT_CONFIG`, else the platform's config directory
/// for the program (on Linux `$XDG_CONFIG_HOME/fillwright`, else `~/.config/fillwright`).
pub fn config_dir() -> Option<PathBuf> {
    // Set but empty is taken as unset, never as the current folder.
    if let Some(dir) = std::env::var_os("FILLWRIGHT_CONFIG").filter(|d| !d.is_empty()) {
        return Some(PathBuf::from(dir));
    }
    directories::ProjectDirs::from("", "", "fillwright").map(|d| d.config_dir().to_path_buf())
}

/// The built-in catalogue with `gases.ron` from the config folder laid over it, if present.
pub fn load_catalogue() -> Result<Catalogue, String> {
    let built_in = Catalogue::built_in();
    let Some(path) = config_dir().map(|d| d.join("gases.ron")) else {
        return Ok(built_in);
    };
    let meta = match std::fs::metadata(&path) {
        Ok(m) => m,
        Err(_) => return Ok(built_in),
    };
    if meta.len() > MAX_CATALOGUE_BYTES {
        return Err(format!(
            "{}: {} bytes is larger than a gas catalogue can be ({MAX_CATALOGUE_BYTES} bytes); not read",
            path.display(),
            meta.len()
        ));
    }
    let text = crate::library::read_regular(&path, MAX_CATALOGUE_BYTES as usize).map_err(|e| e.to_string())?;
    let user = Catalogue::parse(&text, &path.display().to_string()).map_err(|e| e.to_string())?;
    Ok(built_in.with_overrides(user))
}

/// The recipe library folder: `--library`, else `$FILLWRIGHT_LIBRARY`, else `library/` in
/// the config folder.
pub fn library_dir(flag: Option<&Path>) -> Option<PathBuf> {
    explicit_library(flag).or_else(|| config_dir().map(|d| d.join("library")))
}

/// The library folder named by `--library` or `$FILLWRIGHT_LIBRARY` (set and not empty).
fn explicit_library(flag: Option<&Path>) -> Option<PathBuf> {
    if let Some(dir) = flag.filter(|d| !d.as_os_str().is_empty()) {
        return Some(dir.to_path_buf());
    }
    std::env::var_os("FILLWRIGHT_LIBRARY").filter(|d| !d.is_empty()).map(PathBuf::from)
}

/// The library folder to open: as [`library_dir`], but a folder named explicitly must
/// exist (a typo must not create a library and fill it with the demos) unless `create`;
/// the default one in the config folder is made on first use.
pub fn library_to_open(flag: Option<&Path>, create: bool) -> Result<PathBuf, String> {
    if let Some(dir) = explicit_library(flag) {
        if !create && !dir.is_dir() {
            return Err(format!(
                "the library folder {} does not exist; check the name, or add --create-library to start a new \
                 library there",
                dir.display()
            ));
        }
        return Ok(dir);
    }
    config_dir()
        .map(|d| d.join("library"))
        .ok_or_else(|| "no config folder could be found; give --library DIR".to_string())
}

/// The text of a recipe given as a file path, a library name, a demo recipe name or `-`
/// (standard input),
/// with the name to use for it in messages.
pub fn recipe_text(name: &str, library: Option<&Path>) -> Result<(String, String), String> {
    if name == "-" {
        let text = crate::library::read_standard_input()?;
        return Ok((text, crate::library::STANDARD_INPUT.to_string()));
    }
    let as_path = Path::new(name);
    let looks_like_path = name.ends_with(".ron") || name.contains(std::path::MAIN_SEPARATOR) || name.contains('/');
    if looks_like_path || as_path.is_file() {
        return read_limited(as_path).map(|t| (t, name.to_string())).map_err(|e| {
            if as_path.exists() {
                format!("{name}: {e}")
            } else {
                format!(
                    "{name}: no such file; a recipe is a file, a library name (`fillwright list`), a demo recipe \
                     name, or `-` for standard input"
                )
            }
        });
    }
    // A library named on purpose must exist: a mistyped one never falls back to the demos.
    if let Some(explicit) = explicit_library(library) {
        if !explicit.is_dir() {
            return Err(format!(
                "the library folder {} does not exist; check the name (--library or $FILLWRIGHT_LIBRARY)",
                explicit.display()
            ));
        }
    }
    let dir = library_dir(library);
    if let Some(dir) = &dir {
        let file = dir.join(format!("{name}.ron"));
        if std::fs::symlink_metadata(&file).is_ok() {
            return crate::library::Library::existing(dir)
                .read_text(name)
                .map(|(t, path)| (t, path.display().to_string()))
                .map_err(|e| e.to_string());
        }
    }
    if let Some(text) = crate::recipe::demo::find(name) {
        return Ok((text.to_string(), format!("demo recipe {name}")));
    }
    let demos: Vec<&str> = crate::recipe::demo::RECIPES.iter().map(|(n, _)| *n).collect();
    let mut known: Vec<String> = demos.iter().map(|d| d.to_string()).collect();
    if let Some(lib) = dir.as_ref().filter(|d| d.is_dir()).map(|d| crate::library::Library::existing(d)) {
        known.extend(lib.list().unwrap_or_default().into_iter().map(|e| e.name));
    }
    let guess = did_you_mean(name, &known);
    Err(format!(
        "no recipe {name:?}{guess}: not a file, not in the library{}, and not a demo recipe ({})",
        dir.map(|d| format!(" at {}", d.display())).unwrap_or_default(),
        demos.join(", ")
    ))
}

/// "; did you mean X?" for the name most like `name` among `known`, if one is close.
pub fn did_you_mean(name: &str, known: &[String]) -> String {
    known
        .iter()
        .map(|k| (strsim::jaro_winkler(&name.to_lowercase(), &k.to_lowercase()), k))
        .filter(|(s, _)| *s > 0.85)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map_or(String::new(), |(_, k)| format!(" (did you mean {k:?}?)"))
}

fn read_limited(path: &Path) -> Result<String, String> {
    crate::library::read_limited(path).map_err(|e| e.to_string())
}

/// Largest settings file read, bytes.
const MAX_SETTINGS_BYTES: u64 = 256 * 1024;

/// The settings for a command that only reads or writes the library: a settings file
/// that cannot be used is reported (on standard error) and the defaults are used, so the
/// library still opens.
pub fn settings_or_defaults() -> crate::settings::Resolved {
    load_settings().unwrap_or_else(|e| {
        eprintln!("fillwright: {e}; the default settings are used");
        default_settings()
    })
}

/// The shipped default settings.
pub fn default_settings() -> crate::settings::Resolved {
    crate::settings::Settings::default().resolve("", "defaults").expect("the shipped defaults resolve")
}

/// The settings from `settings.ron` in the config folder, or the defaults when there is none.
pub fn load_settings() -> Result<crate::settings::Resolved, String> {
    use crate::settings::Settings;
    let Some(path) = config_dir().map(|d| d.join("settings.ron")) else {
        return Settings::default().resolve("", "defaults").map_err(|e| e.to_string());
    };
    let Ok(meta) = std::fs::metadata(&path) else {
        return Settings::default().resolve("", "defaults").map_err(|e| e.to_string());
    };
    if meta.len() > MAX_SETTINGS_BYTES {
        return Err(format!("{}: {} bytes is too large for a settings file; not read", path.display(), meta.len()));
    }
    let origin = path.display().to_string();
    let text = crate::library::read_regular(&path, MAX_SETTINGS_BYTES as usize).map_err(|e| e.to_string())?;
    let settings = Settings::parse(&text, &origin).map_err(|e| e.to_string())?;
    settings.resolve(&text, &origin).map_err(|e| e.to_string())
}

/// Write `settings.ron` into the config folder, crash-safely (temporary file, flush, rename).
pub fn save_settings(settings: &crate::settings::Settings) -> Result<PathBuf, String> {
    let dir = config_dir().ok_or("no config folder could be found")?;
    std::fs::create_dir_all(&dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    let path = dir.join("settings.ron");
    let text = ron::ser::to_string_pretty(settings, ron::ser::PrettyConfig::default())
        .map_err(|e| format!("settings: {e}"))?;
    crate::library::atomic::write(&path, format!("{text}\n").as_bytes())
        .map_err(|e| format!("{}: {e}", path.display()))?;
    Ok(path)
}
