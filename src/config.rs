//! Where the program keeps its files, and the user's own gas catalogue.

use std::path::PathBuf;

use crate::gas::Catalogue;

/// Largest user catalogue read, bytes: a gas file is a few kB; anything near this is not one.
const MAX_CATALOGUE_BYTES: u64 = 4 * 1024 * 1024;

/// The configuration folder: `$FILLWRIGHT_CONFIG`, else the platform's config directory
/// for the program (on Linux `$XDG_CONFIG_HOME/fillwright`, else `~/.config/fillwright`).
pub fn config_dir() -> Option<PathBuf> {
    if let Some(dir) = std::env::var_os("FILLWRIGHT_CONFIG") {
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
    let text = std::fs::read_to_string(&path).map_err(|e| format!("{}: {e}", path.display()))?;
    let user = Catalogue::parse(&text, &path.display().to_string()).map_err(|e| e.to_string())?;
    Ok(built_in.with_overrides(user))
}
