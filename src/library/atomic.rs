//! Crash-safe file replacement: write a temporary file in the same folder, flush it to
//! disk, then rename it over the target (atomic on POSIX file systems).
//!
//! The temporary file is `.NAME.PID.tmp`, created exclusively and never through a symbolic
//! link. A writer killed mid-write leaves its temporary file behind; the next write in the
//! same folder removes every temporary file of this pattern whose writer is no longer
//! running.

use std::io::Write;
use std::os::unix::fs::OpenOptionsExt;
use std::path::Path;

/// Replace `path` with `bytes`.
pub fn write(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    write_with(path, bytes, || Ok(()))
}

/// Write an output the user named (an export, a PDF): a regular file or a new one is
/// replaced atomically; a FIFO, a character device or a socket (`/dev/stdout`, a pipe) is
/// written into, never renamed over; a symbolic link to anything else is refused unless
/// `replace_link` (then the link itself is replaced by a regular file); a directory or a
/// block device is refused.
pub fn write_output(path: &Path, bytes: &[u8], replace_link: bool) -> std::io::Result<()> {
    use std::os::unix::fs::FileTypeExt;
    let refuse = |why: &str| Err(std::io::Error::new(std::io::ErrorKind::InvalidInput, why.to_string()));
    // `/dev/stdout` (or any name of this process's standard output, a file it was
    // redirected to included): written where standard output stands.
    if is_standard_output(path) {
        let mut out = std::io::stdout().lock();
        out.write_all(bytes)?;
        return out.flush();
    }
    if replace_link && (path.starts_with("/dev") || path.starts_with("/proc")) {
        return refuse("is a system link; it is never replaced");
    }
    let own = match std::fs::symlink_metadata(path) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return write(path, bytes),
        Err(e) => return Err(e),
    };
    // What the name leads to, following links.
    let target = std::fs::metadata(path).ok().map(|m| m.file_type());
    let stream = target.is_some_and(|t| t.is_fifo() || t.is_char_device() || t.is_socket());
    if stream {
        let mut f = std::fs::OpenOptions::new().write(true).open(path)?;
        f.write_all(bytes)?;
        return f.flush();
    }
    let t = own.file_type();
    if t.is_symlink() {
        if !replace_link {
            let to = std::fs::read_link(path).map(|p| p.display().to_string()).unwrap_or_default();
            return refuse(&format!(
                "is a symbolic link (to {to}); not replaced. Give the target's own path, or --replace-link to \
                 replace the link with a file"
            ));
        }
        return write(path, bytes);
    }
    if t.is_dir() {
        return refuse("is a folder; give a file name");
    }
    if t.is_block_device() {
        return refuse("is a block device; not written");
    }
    write(path, bytes)
}

/// Whether `path` leads to this process's standard output (the same file, pipe or
/// terminal).
pub fn is_standard_output(path: &Path) -> bool {
    use std::os::unix::fs::MetadataExt;
    let Ok(target) = std::fs::metadata(path) else { return false };
    // SAFETY: fstat on descriptor 1 fills a stat structure we own.
    let mut st: libc::stat = unsafe { std::mem::zeroed() };
    if unsafe { libc::fstat(1, &mut st) } != 0 {
        return false;
    }
    target.dev() == st.st_dev && target.ino() == st.st_ino
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
    remove_stale(dir);
    let tmp = dir.join(format!(".{file_name}.{}.tmp", std::process::id()));
    let create = || {
        std::fs::OpenOptions::new().write(true).create_new(true).mode(0o644).custom_flags(libc::O_NOFOLLOW).open(&tmp)
    };
    // A file of our own name can only be left by an earlier process with our PID.
    let mut f = match create() {
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            std::fs::remove_file(&tmp)?;
            create()?
        }
        other => other?,
    };
    let result = (|| {
        f.write_all(bytes)?;
        f.sync_all()?;
        before_rename()?;
        std::fs::rename(&tmp, path)?;
        // Make the rename itself durable where the platform allows syncing a folder.
        if let Ok(d) = std::fs::File::open(dir) {
            let _ = d.sync_all();
        }
        Ok(())
    })();
    drop(f);
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// The writer's process id when `name` is one of our temporary files (`.NAME.PID.tmp`).
pub fn temporary_owner(name: &str) -> Option<u32> {
    let rest = name.strip_prefix('.')?.strip_suffix(".tmp")?;
    let (stem, pid) = rest.rsplit_once('.')?;
    if stem.is_empty() || pid.is_empty() || !pid.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    pid.parse().ok()
}

/// Whether a process with this id is running (or exists but is not ours to signal).
fn is_running(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return false;
    };
    if pid <= 0 {
        return false;
    }
    // SAFETY: signal 0 only asks whether the process exists; nothing is sent.
    let r = unsafe { libc::kill(pid, 0) };
    r == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
}

/// Remove the temporary files in `dir` left by writers that are no longer running. Only
/// regular files of our own pattern are touched; our own process's are left to it.
pub fn remove_stale(dir: &Path) -> usize {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return 0;
    };
    let me = std::process::id();
    let mut removed = 0;
    for e in entries.flatten() {
        let name = e.file_name();
        let Some(pid) = name.to_str().and_then(temporary_owner) else {
            continue;
        };
        let is_file = e.file_type().is_ok_and(|t| t.is_file());
        if pid != me && is_file && !is_running(pid) && std::fs::remove_file(e.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn temporary_names_are_recognised_and_nothing_else() {
        assert_eq!(temporary_owner(".x.ron.123.tmp"), Some(123));
        assert_eq!(temporary_owner(".0003.ron.9.tmp"), Some(9));
        assert_eq!(temporary_owner("x.ron.123.tmp"), None);
        assert_eq!(temporary_owner(".x.ron.12a.tmp"), None);
        assert_eq!(temporary_owner(".x.ron.tmp"), None);
        assert_eq!(temporary_owner("..123.tmp"), None);
        assert_eq!(temporary_owner(".x.ron"), None);
    }

    #[test]
    fn stale_files_of_dead_writers_go_live_ones_stay() {
        let dir = std::env::temp_dir().join(format!("fw-stale-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        // A finished child: its PID is not running any more (reuse within the test is
        // vanishingly unlikely).
        let mut child = std::process::Command::new("true").spawn().unwrap();
        let dead = child.id();
        child.wait().unwrap();
        let live = std::process::id();
        let parent = std::os::unix::process::parent_id();
        for n in [format!(".a.ron.{dead}.tmp"), format!(".a.ron.{parent}.tmp"), format!(".a.ron.{live}.tmp")] {
            std::fs::write(dir.join(n), b"x").unwrap();
        }
        std::fs::write(dir.join("keep.ron"), b"x").unwrap();
        assert_eq!(remove_stale(&dir), 1);
        assert!(!dir.join(format!(".a.ron.{dead}.tmp")).exists());
        assert!(dir.join(format!(".a.ron.{parent}.tmp")).exists());
        assert!(dir.join(format!(".a.ron.{live}.tmp")).exists());
        assert!(dir.join("keep.ron").exists());
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_planted_link_at_the_temporary_name_is_not_written_through() {
        let dir = std::env::temp_dir().join(format!("fw-tmplink-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let outside = dir.join("outside.txt");
        std::fs::write(&outside, b"untouched").unwrap();
        let target = dir.join("x.ron");
        std::os::unix::fs::symlink(&outside, dir.join(format!(".x.ron.{}.tmp", std::process::id()))).unwrap();
        write(&target, b"new").unwrap();
        assert_eq!(std::fs::read(&outside).unwrap(), b"untouched");
        assert_eq!(std::fs::read(&target).unwrap(), b"new");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
