//! Committing a save with the system `git`, when the library folder is a work tree.

use std::path::Path;
use std::process::Command;

/// Whether `dir` is inside a git work tree.
pub fn is_work_tree(dir: &Path) -> bool {
    Command::new("git")
        .arg("-C")
        .arg(dir)
        .args(["rev-parse", "--is-inside-work-tree"])
        .output()
        .is_ok_and(|o| o.status.success() && o.stdout.starts_with(b"true"))
}

/// Add and commit one file with `message`. Errors are returned as text for the status
/// line; the save itself has already happened.
pub fn commit(dir: &Path, file: &Path, message: &str) -> Result<(), String> {
    if !is_work_tree(dir) {
        return Err(format!("{} is not a git work tree; nothing committed", dir.display()));
    }
    let run = |args: &[&std::ffi::OsStr]| -> Result<(), String> {
        let out = Command::new("git").arg("-C").arg(dir).args(args).output().map_err(|e| format!("git: {e}"))?;
        if out.status.success() {
            Ok(())
        } else {
            Err(format!("git: {}", String::from_utf8_lossy(&out.stderr).trim()))
        }
    };
    run(&["add".as_ref(), "--".as_ref(), file.as_os_str()])?;
    run(&["commit".as_ref(), "-q".as_ref(), "-m".as_ref(), message.as_ref(), "--".as_ref(), file.as_os_str()])
}
