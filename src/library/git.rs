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

/// Add and commit the files of one save (the recipe and its history folder) with
/// `message`. Errors are returned as text for the status line; the save itself has
/// already happened.
pub fn commit(dir: &Path, files: &[&Path], message: &str) -> Result<(), String> {
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
    let files: Vec<&std::ffi::OsStr> = files.iter().filter(|f| f.exists()).map(|f| f.as_os_str()).collect();
    let mut add: Vec<&std::ffi::OsStr> = vec!["add".as_ref(), "--all".as_ref(), "--".as_ref()];
    add.extend(&files);
    run(&add)?;
    let mut commit: Vec<&std::ffi::OsStr> =
        vec!["commit".as_ref(), "-q".as_ref(), "-m".as_ref(), message.as_ref(), "--".as_ref()];
    commit.extend(&files);
    run(&commit)
}
