//! The listing's index: each recipe's brief (title, fill, cylinder, revision) by the stamp
//! of its file on disk (device, inode, size, modification and change times), so that
//! `list` reads and parses only the files that changed since the last listing.
//!
//! Kept in `.index/briefs.json` inside the library: local to this machine (a sync leaves it
//! out) and never trusted beyond the stamps. A missing, unreadable or foreign index is
//! rebuilt; a folder or file planted as a symbolic link is neither read nor written
//! through. A file changed in the last two seconds is not indexed: the file system's clock
//! is coarse, so a second change within the same tick, of the same size, would keep the
//! stamp (the same caution as git's "racily clean" entries).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

use serde::{Deserialize, Serialize};

/// What the listing shows of a recipe.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Brief {
    pub title: String,
    /// The fill target as written, e.g. `150bar` or `1.2kg (mass)`.
    pub fill: String,
    /// Water capacity and working pressure, e.g. `10L, 200bar`.
    pub cylinder: String,
    pub revision: u64,
}

/// A file's identity and times as the file system reports them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub(super) struct Stamp {
    dev: u64,
    ino: u64,
    size: u64,
    mtime: i64,
    mtime_ns: i64,
    ctime: i64,
    ctime_ns: i64,
}

/// How recent a change may be and still be indexed (see the module's note).
const SETTLE: Duration = Duration::from_secs(2);

/// The largest index read (about 150 bytes per recipe: far beyond any library).
const MAX_INDEX_BYTES: usize = 64 << 20;

const FORMAT: u32 = 1;

impl Stamp {
    pub(super) fn of(meta: &std::fs::Metadata) -> Stamp {
        use std::os::unix::fs::MetadataExt;
        Stamp {
            dev: meta.dev(),
            ino: meta.ino(),
            size: meta.size(),
            mtime: meta.mtime(),
            mtime_ns: meta.mtime_nsec(),
            ctime: meta.ctime(),
            ctime_ns: meta.ctime_nsec(),
        }
    }

    /// Whether the file's last change is older than [`SETTLE`] at `now`.
    fn settled(&self, now: SystemTime) -> bool {
        let Ok(now) = now.duration_since(SystemTime::UNIX_EPOCH) else { return false };
        let latest = self.mtime.max(self.ctime);
        latest >= 0 && Duration::from_secs(latest as u64) + Duration::from_secs(1) + SETTLE <= now
    }
}

#[derive(Debug, Default, Serialize, Deserialize)]
struct IndexFile {
    format: u32,
    briefs: BTreeMap<String, (Stamp, Brief)>,
}

/// The briefs by recipe name.
pub(super) type Briefs = BTreeMap<String, (Stamp, Brief)>;

fn folder(library: &Path) -> PathBuf {
    library.join(".index")
}

fn file(library: &Path) -> PathBuf {
    folder(library).join("briefs.json")
}

/// The index as last written, or nothing (no index yet, a link planted in its place, an
/// unreadable or foreign file).
pub(super) fn read(library: &Path) -> Briefs {
    let regular = |p: &Path| std::fs::symlink_metadata(p).is_ok_and(|m| m.file_type().is_file());
    let is_dir = std::fs::symlink_metadata(folder(library)).is_ok_and(|m| m.file_type().is_dir());
    if !is_dir || !regular(&file(library)) {
        return Briefs::new();
    }
    super::read_regular(&file(library), MAX_INDEX_BYTES)
        .ok()
        .and_then(|text| serde_json::from_str::<IndexFile>(&text).ok())
        .filter(|f| f.format == FORMAT)
        .map(|f| f.briefs)
        .unwrap_or_default()
}

/// Write `briefs` (those settled at `now`) as the index when they differ from `before`.
/// Best effort: a library that cannot be written to (read-only, a link in the way) is
/// listed all the same, only not faster next time.
pub(super) fn write(library: &super::Library, before: &Briefs, mut briefs: Briefs, now: SystemTime) {
    briefs.retain(|_, (stamp, _)| stamp.settled(now));
    if &briefs == before {
        return;
    }
    let Ok(dir) = library.own_dir(&[".index"]) else { return };
    let Ok(text) = serde_json::to_vec(&IndexFile { format: FORMAT, briefs }) else { return };
    let _ = super::atomic::write(&dir.join("briefs.json"), &text);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_change_is_indexed_only_once_it_has_settled() {
        let at = |secs: i64| Stamp { dev: 1, ino: 2, size: 3, mtime: secs, mtime_ns: 0, ctime: secs, ctime_ns: 5 };
        let now = SystemTime::UNIX_EPOCH + Duration::from_secs(1_000_000);
        assert!(at(1_000_000 - 10).settled(now));
        assert!(!at(1_000_000 - 1).settled(now));
        assert!(!at(1_000_000).settled(now));
        // A change time later than the modification time (a rename, a chmod) counts.
        let renamed = Stamp { ctime: 1_000_000, ..at(1_000_000 - 10) };
        assert!(!renamed.settled(now));
        // A clock before 1970 or a stamp from the future is never trusted.
        assert!(!at(2_000_000).settled(now));
        assert!(!at(-5).settled(now));
    }
}
