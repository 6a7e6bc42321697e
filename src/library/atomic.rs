//! Crash-safe file replacement: write a temporary file in the same folder, flush it to
//! disk, then rename it over the target (atomic on POSIX file systems).

use std::io::Write;
use std::path::Path;

/// Replace `path` with `bytes`.
pub fn write(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    write_with(path, bytes, || Ok(()))
}

/// As [`write`], calling `before_rename` after the temporary file is complete and before
/// it replaces the target; an error from it abandons the write (used by the tests to
/// simulate a crash at the worst moment).
pub fn write_with(
    path: &Path,
    bytes: &[u8],
    before_rename: impl FnOnce() -> std::io::Result<()>,
) -> std::io::Result<()> {
    let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let file_name = path.file_name().and_then(|n| n.to_str()).unwrap_or("file");
    let tmp = dir.join(format!(".{file_name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        drop(f);
        before_rename()?;
        std::fs::rename(&tmp, path)?;
        // Make the rename itself durable where the platform allows syncing a folder.
        if let Ok(d) = std::fs::File::open(dir) {
            let _ = d.sync_all();
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}
