//! Fill records in the library (`records/`, one file per filled cylinder, named by serial
//! and date) and the source library (`sources/` in the config folder).
//!
//! A record is never overwritten: every save keeps the file it replaces in
//! `records/.history/ID/NNNN.ron` and becomes the next revision, with a note saying what
//! changed (a reading typed at the bench, a correction).

use std::path::{Path, PathBuf};

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use super::{atomic, check_name, io, read_limited, Fingerprint, Library, LibraryError};
use crate::gas::Catalogue;
use crate::recipe::canonical;
use crate::record::{self, Record, SourceInput};

/// Record ids with the record, or why it cannot be read.
pub type RecordList = Vec<(String, Result<Record, String>)>;

/// A record read from the library.
#[derive(Debug, Clone)]
pub struct OpenedRecord {
    pub id: String,
    pub path: PathBuf,
    pub text: String,
    pub record: Record,
    pub fingerprint: Fingerprint,
}

/// One entry of the source library: a source cylinder or lot with its analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, rename = "Source")]
pub struct SourceEntry {
    /// The analysis: a mix spec with uncertainties.
    pub analysis: String,
    /// Cylinder serial or lot number.
    #[serde(default)]
    pub cylinder: String,
    /// Who supplied it and the certificate it came with.
    #[serde(default)]
    pub supplier: String,
    /// The analysis is valid until this date (YYYY-MM-DD).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub expiry: Option<String>,
    #[serde(default)]
    pub notes: String,
}

/// How deep `record:` references may nest (a premix of a premix of a premix …).
const MAX_PREMIX_DEPTH: usize = 4;

impl Library {
    fn records_dir(&self) -> PathBuf {
        self.dir.join("records")
    }

    fn record_path(&self, id: &str) -> Result<PathBuf, LibraryError> {
        check_name(id)?;
        Ok(self.records_dir().join(format!("{id}.ron")))
    }

    /// A new record: written as revision 1 under `SERIAL-YYYYMMDD` (with `-2`, `-3` … for a
    /// second fill of the cylinder that day). Returns its id.
    pub fn create_record(&self, record: &Record, now: &str) -> Result<String, LibraryError> {
        let dir = self.own_dir(&["records"])?;
        let serial: String = record
            .cylinder
            .trim()
            .chars()
            .map(|c| if c.is_alphanumeric() || c == '-' || c == '_' { c } else { '-' })
            .collect();
        let serial = if serial.trim_matches('-').is_empty() { "cylinder".to_string() } else { serial };
        let date: String = now.chars().take(10).filter(char::is_ascii_digit).collect();
        let base = format!("{serial}-{date}");
        let id = (1..1000)
            .map(|k| if k == 1 { base.clone() } else { format!("{base}-{k}") })
            .find(|id| !dir.join(format!("{id}.ron")).exists())
            .ok_or_else(|| LibraryError::Exists(base.clone()))?;
        check_name(&id)?;
        let new =
            Record { revision: 1, saved: Some(now.to_string()), change_note: Some("started".into()), ..record.clone() };
        let path = dir.join(format!("{id}.ron"));
        // create_new: two benches starting a record at once never share a file.
        let mut f = std::fs::OpenOptions::new().write(true).create_new(true).open(&path).map_err(io(&path))?;
        std::io::Write::write_all(&mut f, new.to_text().as_bytes()).map_err(io(&path))?;
        f.sync_all().map_err(io(&path))?;
        Ok(id)
    }

    /// Read a record.
    pub fn open_record(&self, id: &str) -> Result<OpenedRecord, LibraryError> {
        let path = self.record_path(id)?;
        let text = read_limited(&path).map_err(|e| match e {
            LibraryError::Io { source, .. } if source.kind() == std::io::ErrorKind::NotFound => {
                let ids: Vec<String> = self.records().unwrap_or_default().into_iter().map(|(id, _)| id).collect();
                let guess = crate::config::did_you_mean(id, &ids);
                LibraryError::Missing(format!(
                    "no fill record {id:?}{guess} in the library's records/ (`fillwright records` lists them)"
                ))
            }
            other => other,
        })?;
        let record = Record::parse(&text, &path.display().to_string()).map_err(|e| LibraryError::Io {
            path: path.clone(),
            source: std::io::Error::new(std::io::ErrorKind::InvalidData, e.to_string()),
        })?;
        Ok(OpenedRecord { id: id.to_string(), fingerprint: Fingerprint::of(text.as_bytes()), path, text, record })
    }

    /// Save a changed record as its next revision; the file it replaces goes to the
    /// history. Refused when the file changed on disk since `opened` was read.
    pub fn save_record(
        &self,
        opened: &OpenedRecord,
        record: &Record,
        note: &str,
        now: &str,
    ) -> Result<OpenedRecord, LibraryError> {
        let path = self.record_path(&opened.id)?;
        let _lock = self.lock(&format!("record.{}", opened.id))?;
        self.own_dir(&["records"])?;
        let current = read_limited(&path)?;
        if Fingerprint::of(current.as_bytes()) != opened.fingerprint {
            return Err(LibraryError::ChangedOnDisk(path));
        }
        let history = self.own_dir(&["records", ".history", &opened.id])?;
        let kept = history.join(format!("{:04}.ron", opened.record.revision));
        atomic::write(&kept, current.as_bytes()).map_err(io(&kept))?;
        let next = opened.record.revision.checked_add(1).ok_or_else(|| LibraryError::Unsafe {
            path: path.clone(),
            why: "is at the last revision that can be numbered".into(),
        })?;
        let new = Record {
            revision: next,
            saved: Some(now.to_string()),
            change_note: Some(note.to_string()),
            ..record.clone()
        };
        let text = new.to_text();
        atomic::write(&path, text.as_bytes()).map_err(io(&path))?;
        Ok(OpenedRecord {
            id: opened.id.clone(),
            path,
            fingerprint: Fingerprint::of(text.as_bytes()),
            text,
            record: new,
        })
    }

    /// The ids of every record, sorted, with the record or why it cannot be read.
    pub fn records(&self) -> Result<RecordList, LibraryError> {
        let dir = self.records_dir();
        let Ok(entries) = std::fs::read_dir(&dir) else { return Ok(Vec::new()) };
        let mut out: RecordList = entries
            .flatten()
            .filter_map(|e| {
                let p = e.path();
                let id = p.file_stem()?.to_str()?.to_string();
                (p.extension()? == "ron" && p.is_file() && check_name(&id).is_ok()).then_some(id)
            })
            .map(|id| {
                let r = self.open_record(&id).map(|o| o.record).map_err(|e| e.to_string());
                (id, r)
            })
            .collect();
        out.sort_by(|a, b| a.0.cmp(&b.0));
        Ok(out)
    }

    /// The newest unfinished record of a recipe, if a fill is in progress.
    pub fn record_in_progress(&self, recipe: &str) -> Option<OpenedRecord> {
        let mut open: Vec<(String, Record)> = self
            .records()
            .ok()?
            .into_iter()
            .filter_map(|(id, r)| r.ok().map(|r| (id, r)))
            .filter(|(_, r)| r.recipe == recipe && r.finished.is_none())
            .collect();
        open.sort_by(|a, b| a.1.started.cmp(&b.1.started).then(a.0.cmp(&b.0)));
        let (id, _) = open.pop()?;
        self.open_record(&id).ok()
    }

    /// The finished records of a recipe (a premix made here), newest first.
    pub fn finished_records_of(&self, recipe: &str) -> Vec<String> {
        let mut done: Vec<(String, Record)> = self
            .records()
            .unwrap_or_default()
            .into_iter()
            .filter_map(|(id, r)| r.ok().map(|r| (id, r)))
            .filter(|(_, r)| r.recipe == recipe && r.finished.is_some())
            .collect();
        done.sort_by(|a, b| b.1.finished.cmp(&a.1.finished).then(b.0.cmp(&a.0)));
        done.into_iter().map(|(id, _)| id).collect()
    }

    /// The revisions of a record kept in its history, oldest first: (revision, note, path).
    pub fn record_history(&self, id: &str) -> Vec<(u64, Option<String>, PathBuf)> {
        let dir = self.records_dir().join(".history").join(id);
        let mut out: Vec<(u64, Option<String>, PathBuf)> = std::fs::read_dir(dir)
            .map(|rd| {
                rd.flatten()
                    .filter_map(|e| {
                        let p = e.path();
                        let text = read_limited(&p).ok()?;
                        let r = Record::parse(&text, "").ok()?;
                        Some((r.revision, r.change_note, p))
                    })
                    .collect()
            })
            .unwrap_or_default();
        out.sort_by_key(|r| r.0);
        out
    }

    /// Where the certificate of record `id` is kept: `certificates/ID.txt` (its PDF beside it),
    /// written by `C` on the screen.
    pub fn certificate_path(&self, id: &str) -> PathBuf {
        self.dir.join("certificates").join(format!("{id}.txt"))
    }

    /// Whether record `id` has its certificate in the library.
    pub fn certified(&self, id: &str) -> bool {
        self.certificate_path(id).is_file()
    }

    /// The canonical text of a recipe at one revision, for the record's hash.
    pub fn recipe_text_at(&self, name: &str, revision: u64) -> Result<String, LibraryError> {
        let r = self.revision(name, revision)?;
        Ok(canonical::to_text(&r))
    }
}

/// Read a source-library entry.
pub fn open_source(dir: &Path, name: &str) -> Result<SourceEntry, String> {
    check_name(name).map_err(|e| e.to_string())?;
    let path = dir.join(format!("{name}.ron"));
    let text = read_limited(&path).map_err(|_| {
        let known = source_names(dir);
        format!(
            "no source {name:?} in {}{}",
            dir.display(),
            if known.is_empty() { String::new() } else { format!("; it has {}", known.join(", ")) }
        )
    })?;
    crate::ron_format::options()
        .from_str::<SourceEntry>(&text)
        .map_err(|e| format!("{}:{}:{}: {}", path.display(), e.position.line, e.position.col, e.code))
}

/// The names in the source library, sorted.
pub fn source_names(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .map(|rd| {
            rd.flatten()
                .filter_map(|e| {
                    let p = e.path();
                    (p.extension()? == "ron").then(|| p.file_stem()?.to_str().map(str::to_string)).flatten()
                })
                .collect()
        })
        .unwrap_or_default();
    names.sort();
    names
}

/// Resolves `@NAME` from the source library at `sources` and `record:ID` from the records
/// of `library`, certifying the premix's record for its composition and covariance.
pub struct Lookup<'a> {
    pub library: Option<&'a Library>,
    pub sources: Option<&'a Path>,
    pub catalogue: &'a Catalogue,
    pub depth: usize,
}

impl Lookup<'_> {
    pub fn resolve(&self, reference: &str) -> Result<SourceInput, String> {
        if let Some(name) = reference.strip_prefix('@') {
            let dir = self.sources.ok_or("no source library folder is known")?;
            let entry = open_source(dir, name.trim())?;
            return record::analysis::Analysis::parse(&entry.analysis, self.catalogue)
                .map(SourceInput::Analysis)
                .map_err(|e| format!("source {name}: analysis {:?}: {e}", entry.analysis));
        }
        if let Some(id) = reference.strip_prefix("record:") {
            if self.depth >= MAX_PREMIX_DEPTH {
                return Err(format!("premix records nest deeper than {MAX_PREMIX_DEPTH}; is one its own source?"));
            }
            let lib = self.library.ok_or("no library folder is known for premix records")?;
            let opened = lib.open_record(id.trim()).map_err(|e| e.to_string())?;
            let inner = Lookup { depth: self.depth + 1, ..*self };
            let origin = opened.path.display().to_string();
            let checked = opened
                .record
                .check(self.catalogue, &|r| inner.resolve(r), &opened.text, &origin)
                .map_err(|e| e.to_string())?;
            if checked.complete < checked.additions.len() {
                return Err(format!("premix record {id} is not complete yet"));
            }
            let model = opened.record.model.unwrap_or(crate::thermo::Model::Pr);
            let eval = record::evaluate(&checked, self.catalogue, model, checked.volume_m3, &[], 0, 0)?;
            let n = eval.gum.values.len();
            return Ok(SourceInput::Certified {
                gases: eval.measurand.gases.clone(),
                fractions: eval.gum.values.clone(),
                covariance: DMatrix::from_fn(n, n, |i, j| eval.gum.covariance[(i, j)]),
            });
        }
        Err(format!("{reference:?} is neither @NAME (source library) nor record:ID (a premix record)"))
    }
}
