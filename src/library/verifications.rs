//! Verification files in the library (`verifications/`, one per cylinder and gas, named
//! `SERIAL-GAS.ron`). Every save keeps the text it replaces in
//! `verifications/.history/NAME/NNNN.ron`, like a record, so a correction never loses the
//! reading it corrected.

use std::path::PathBuf;

use super::{atomic, check_name, io, read_limited, Library, LibraryError};
use crate::verification::Verification;

/// Verification names with the file, or why it cannot be read.
pub type VerificationList = Vec<(String, Result<Verification, String>)>;

impl Library {
    fn verifications_dir(&self) -> PathBuf {
        self.dir.join("verifications")
    }

    /// The path of a verification file by name.
    pub fn verification_path(&self, name: &str) -> Result<PathBuf, LibraryError> {
        check_name(name)?;
        Ok(self.verifications_dir().join(format!("{name}.ron")))
    }

    /// Read a verification file: its path, text and contents.
    pub fn open_verification(&self, name: &str) -> Result<(PathBuf, String, Verification), LibraryError> {
        let path = self.verification_path(name)?;
        let text = read_limited(&path).map_err(|e| match e {
            LibraryError::Io { source, .. } if source.kind() == std::io::ErrorKind::NotFound => LibraryError::Missing(
                format!("no verification file {name:?} in the library's verifications/, and no file of that name"),
            ),
            other => other,
        })?;
        let v = Verification::parse(&text, &path.display().to_string()).map_err(|e| LibraryError::Io {
            path: path.clone(),
            source: std::io::Error::new(std::io::ErrorKind::InvalidData, e.to_string()),
        })?;
        Ok((path, text, v))
    }

    /// Save a verification file, keeping the text it replaces in its history.
    pub fn save_verification(&self, name: &str, verification: &Verification) -> Result<PathBuf, LibraryError> {
        let path = self.verification_path(name)?;
        let _lock = self.lock(&format!("verification.{name}"))?;
        self.own_dir(&["verifications"])?;
        if let Ok(current) = read_limited(&path) {
            let history = self.own_dir(&["verifications", ".history", name])?;
            let next = std::fs::read_dir(&history).map(|d| d.count()).unwrap_or(0) + 1;
            let kept = history.join(format!("{next:04}.ron"));
            atomic::write(&kept, current.as_bytes()).map_err(io(&kept))?;
        }
        atomic::write(&path, verification.to_text().as_bytes()).map_err(io(&path))?;
        Ok(path)
    }

    /// Every verification file, sorted by name, with its contents or why it cannot be read.
    pub fn verifications(&self) -> VerificationList {
        let Ok(entries) = std::fs::read_dir(self.verifications_dir()) else { return Vec::new() };
        let mut out: VerificationList = entries
            .flatten()
            .filter_map(|e| {
                let p = e.path();
                let name = p.file_stem()?.to_str()?.to_string();
                (p.extension()? == "ron" && p.is_file() && check_name(&name).is_ok()).then_some(name)
            })
            .map(|name| {
                let v = self.open_verification(&name).map(|(_, _, v)| v).map_err(|e| e.to_string());
                (name, v)
            })
            .collect();
        out.sort_by(|a, b| a.0.cmp(&b.0));
        out
    }
}
