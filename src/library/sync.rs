//! Sharing a library between benches: the library is a git work tree with a remote (a
//! bare repository on a lab server, each bench a clone), and [`Library::sync`] brings in
//! the other benches' saves and sends this bench's.
//!
//! The engine is the system `git` (the lab's credentials and SSH set-up come with it, and
//! no git library is compiled in). The merge never leaves conflict markers:
//!
//! - the merge is computed without touching the work tree (`git merge-tree --write-tree`);
//! - a recipe saved on both benches since their common revision keeps both benches' work:
//!   the revisions of the bench whose last save is earlier keep their numbers, the other
//!   bench's follow them renumbered, and the newest becomes the recipe with a note naming
//!   both saves; the history stays gap-free with one text per number;
//! - any other file changed on both sides keeps the later commit's text, the other kept
//!   beside it as `FILE.other-bench` (records and verification files are named per cylinder
//!   and are never edited on two benches, so this is a guard, not the rule);
//! - a file deleted on one bench and edited on the other is kept, edited.
//!
//! The work tree moves to the merged commit in one `git reset --hard` after a marker naming
//! that commit is written to `.git/`; a sync killed after the marker is completed by the
//! next sync, one killed before it left the library as it was. Saves wait while a sync
//! runs (the library lock, [`Library::lock`]).

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::process::{Command, Stdio};

use super::{Library, LibraryError};
use crate::recipe::{canonical, Recipe};

/// What a sync did.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Synced {
    /// Commits brought in from the remote.
    pub received: usize,
    /// Commits sent to the remote.
    pub sent: usize,
    /// Recipes saved on both sides and merged as consecutive revisions.
    pub merged_recipes: Vec<String>,
    /// Other files changed on both sides (the other text kept beside as `.other-bench`).
    pub kept_both: Vec<String>,
}

/// What a sync did, in one line for the command line and the screen.
pub fn summary(s: &Synced) -> String {
    let mut line = match (s.received, s.sent) {
        (0, 0) => "in step with the other benches; nothing to bring in or send".to_string(),
        (r, 0) => format!("brought in {r} commit(s) from the other benches"),
        (0, n) => format!("sent {n} commit(s) to the other benches"),
        (r, n) => format!("brought in {r} commit(s) and sent {n}"),
    };
    if !s.merged_recipes.is_empty() {
        line.push_str(&format!(
            "; saved on two benches, kept as consecutive revisions: {}",
            s.merged_recipes.join(", ")
        ));
    }
    if !s.kept_both.is_empty() {
        line.push_str(&format!("; changed on both, the other text kept as .other-bench: {}", s.kept_both.join(", ")));
    }
    line
}

/// Why a sync could not bring the library in step.
#[derive(Debug, thiserror::Error)]
pub enum SyncError {
    #[error("{0} is not a git work tree; make the library a clone of the lab's shared repository (see docs/library.md, sharing between benches)")]
    NotWorkTree(String),
    #[error("the library has no git remote to sync with; add one: git -C {0} remote add origin URL")]
    NoRemote(String),
    #[error("git {command}: {message}")]
    Git { command: String, message: String },
    #[error("{0}")]
    Library(#[from] LibraryError),
    #[error("the remote moved on three times during the sync; run sync again")]
    Busy,
}

/// How long a fetch or a push may wait on the remote.
const NETWORK_TIMEOUT: std::time::Duration = std::time::Duration::from_secs(60);

/// The marker a sync writes before moving the work tree: the commit it moves to.
const MARKER: &str = "fillwright-sync-target";

struct Git<'a> {
    dir: &'a Path,
    /// Author and committer for commits made here, where git has none configured.
    identity: Option<(String, String)>,
}

impl Git<'_> {
    fn command(&self, args: &[&str]) -> Command {
        let mut c = Command::new("git");
        c.arg("-C").arg(self.dir).args(args).stdin(Stdio::null());
        // Never wait for a password or a host that does not answer: a sync fails, saying so.
        c.env("GIT_TERMINAL_PROMPT", "0");
        if std::env::var_os("GIT_SSH_COMMAND").is_none() {
            c.env("GIT_SSH_COMMAND", "ssh -o BatchMode=yes -o ConnectTimeout=20");
        }
        c.env("GIT_HTTP_LOW_SPEED_LIMIT", "1000").env("GIT_HTTP_LOW_SPEED_TIME", "30");
        // A git of a sync that is killed dies with it, so that it never goes on working
        // beside the next sync.
        #[cfg(target_os = "linux")]
        {
            use std::os::unix::process::CommandExt;
            // SAFETY: prctl in the forked child before exec changes only that child.
            unsafe {
                c.pre_exec(|| {
                    libc::prctl(libc::PR_SET_PDEATHSIG, libc::SIGKILL);
                    Ok(())
                });
            }
        }
        if let Some((name, email)) = &self.identity {
            for (k, v) in [("GIT_AUTHOR_NAME", name), ("GIT_COMMITTER_NAME", name)] {
                c.env(k, v);
            }
            for (k, v) in [("GIT_AUTHOR_EMAIL", email), ("GIT_COMMITTER_EMAIL", email)] {
                c.env(k, v);
            }
        }
        c
    }

    /// Run git; its standard output, or the error with its own words.
    fn run(&self, args: &[&str]) -> Result<String, SyncError> {
        self.run_with(args, None, &[]).map(|(_, out)| out)
    }

    /// Run git with an optional standard input and extra environment; (exit code, output).
    /// A non-zero exit is an error unless its code is in `allowed`.
    fn run_with(&self, args: &[&str], input: Option<&[u8]>, allowed: &[i32]) -> Result<(i32, String), SyncError> {
        self.run_env(args, input, allowed, &[])
    }

    fn run_env(
        &self,
        args: &[&str],
        input: Option<&[u8]>,
        allowed: &[i32],
        env: &[(&str, &str)],
    ) -> Result<(i32, String), SyncError> {
        let mut c = self.command(args);
        for (k, v) in env {
            c.env(k, v);
        }
        let failed = |message: String| SyncError::Git { command: args.join(" "), message };
        let output = if let Some(bytes) = input {
            c.stdin(Stdio::piped()).stdout(Stdio::piped()).stderr(Stdio::piped());
            let mut child = c.spawn().map_err(|e| failed(e.to_string()))?;
            if let Some(mut stdin) = child.stdin.take() {
                std::io::Write::write_all(&mut stdin, bytes).map_err(|e| failed(e.to_string()))?;
            }
            child.wait_with_output().map_err(|e| failed(e.to_string()))?
        } else if matches!(args.first(), Some(&"fetch") | Some(&"push")) {
            // A remote that never answers (a git:// host behind a firewall) is given up
            // after a minute.
            c.stdout(Stdio::piped()).stderr(Stdio::piped());
            let mut child = c.spawn().map_err(|e| failed(format!("{e} (is git installed?)")))?;
            let start = std::time::Instant::now();
            while child.try_wait().map_err(|e| failed(e.to_string()))?.is_none() {
                if start.elapsed() > NETWORK_TIMEOUT {
                    let _ = child.kill();
                    let _ = child.wait();
                    return Err(failed(format!(
                        "the remote did not answer within {} s; check the network and the remote's address",
                        NETWORK_TIMEOUT.as_secs()
                    )));
                }
                std::thread::sleep(std::time::Duration::from_millis(20));
            }
            child.wait_with_output().map_err(|e| failed(e.to_string()))?
        } else {
            c.output().map_err(|e| failed(format!("{e} (is git installed?)")))?
        };
        let code = output.status.code().unwrap_or(-1);
        if code != 0 && !allowed.contains(&code) {
            return Err(failed(String::from_utf8_lossy(&output.stderr).trim().to_string()));
        }
        Ok((code, String::from_utf8_lossy(&output.stdout).into_owned()))
    }

    fn show(&self, rev: &str, path: &str) -> Option<String> {
        self.run(&["show", &format!("{rev}:{path}")]).ok()
    }

    fn blob(&self, text: &str) -> Result<String, SyncError> {
        self.run_with(&["hash-object", "-w", "--stdin"], Some(text.as_bytes()), &[]).map(|(_, o)| o.trim().to_string())
    }
}

impl Library {
    /// Bring in the other benches' saves and send this bench's. See the module text.
    pub fn sync(&self) -> Result<Synced, SyncError> {
        let dir_text = self.dir.display().to_string();
        if !super::git::is_work_tree(&self.dir) {
            return Err(SyncError::NotWorkTree(dir_text));
        }
        let mut git = Git { dir: &self.dir, identity: None };
        let remote = git.run(&["remote"])?.lines().next().map(str::to_string);
        let Some(remote) = remote else { return Err(SyncError::NoRemote(dir_text)) };
        if git.run(&["config", "user.name"]).map_or(true, |n| n.trim().is_empty()) {
            git.identity = Some((super::who_saves(&self.dir), "bench@fillwright.invalid".into()));
        }
        // No save while the work tree moves.
        let _all = self.lock_library_exclusive()?;
        let git_dir = git.run(&["rev-parse", "--absolute-git-dir"])?.trim().to_string();
        let marker = Path::new(&git_dir).join(MARKER);
        finish_interrupted(&git, &marker, &git_dir, &self.dir)?;
        let branch = git.run(&["symbolic-ref", "--short", "HEAD"])?.trim().to_string();
        fetch(&git, &remote, &git_dir)?;
        let adopted = adopt_remote_if_new(&git, &format!("refs/remotes/{remote}/{branch}"))?;
        self.ignore_local_files()?;
        commit_local_saves(&git)?;
        let mut synced = Synced { received: adopted, ..Synced::default() };
        for _ in 0..3 {
            fetch(&git, &remote, &git_dir)?;
            let theirs = format!("refs/remotes/{remote}/{branch}");
            let have_theirs = git.run(&["rev-parse", "--verify", "--quiet", &theirs]).is_ok();
            if have_theirs {
                let (received, merged, kept) = merge_in(&git, &theirs, &marker, &self.dir)?;
                synced.received += received;
                synced.merged_recipes.extend(merged);
                synced.kept_both.extend(kept);
            }
            let ahead = if have_theirs {
                git.run(&["rev-list", "--count", &format!("{theirs}..HEAD")])?.trim().parse().unwrap_or(0)
            } else {
                git.run(&["rev-list", "--count", "HEAD"])?.trim().parse().unwrap_or(0)
            };
            if ahead == 0 {
                return Ok(synced);
            }
            let (code, _) =
                git.run_with(&["push", "--quiet", &remote, &format!("HEAD:refs/heads/{branch}")], None, &[1])?;
            if code == 0 {
                synced.sent += ahead;
                return Ok(synced);
            }
            // Someone pushed in between: bring that in too, and try again.
        }
        Err(SyncError::Busy)
    }

    /// Keep the lock files, the listing's index and temporary files out of what is shared.
    fn ignore_local_files(&self) -> Result<(), LibraryError> {
        let path = self.dir.join(".gitignore");
        let wanted = [".locks/", ".index/", ".*.tmp"];
        let current = std::fs::read_to_string(&path).unwrap_or_default();
        let missing: Vec<&str> = wanted.iter().copied().filter(|w| !current.lines().any(|l| l.trim() == *w)).collect();
        if missing.is_empty() {
            return Ok(());
        }
        let mut text = current;
        if !text.is_empty() && !text.ends_with('\n') {
            text.push('\n');
        }
        for m in missing {
            text.push_str(m);
            text.push('\n');
        }
        super::atomic::write(&path, text.as_bytes()).map_err(super::io(&path))
    }
}

/// Fetch from the remote. A fetch of a killed sync can leave its ref locks behind; they
/// are cleared once (the library lock is held, and a sync's git dies with it) and the
/// fetch tried again.
fn fetch(git: &Git, remote: &str, git_dir: &str) -> Result<(), SyncError> {
    match git.run(&["fetch", "--quiet", remote]) {
        Ok(_) => Ok(()),
        Err(SyncError::Git { message, .. }) if message.contains(".lock") => {
            remove_lock_files(&Path::new(git_dir).join("refs").join("remotes"));
            let _ = std::fs::remove_file(Path::new(git_dir).join("packed-refs.lock"));
            git.run(&["fetch", "--quiet", remote]).map(|_| ())
        }
        Err(e) => Err(e),
    }
}

fn remove_lock_files(dir: &Path) {
    let Ok(entries) = std::fs::read_dir(dir) else { return };
    for e in entries.flatten() {
        let p = e.path();
        if e.file_type().is_ok_and(|t| t.is_dir()) {
            remove_lock_files(&p);
        } else if p.extension().is_some_and(|x| x == "lock") {
            let _ = std::fs::remove_file(p);
        }
    }
}

/// A sync killed after it wrote its marker: move to the commit it named.
fn finish_interrupted(git: &Git, marker: &Path, git_dir: &str, library: &Path) -> Result<(), SyncError> {
    // A git of a killed sync leaves its lock files; no other git of ours runs now (the
    // library lock is held, and a sync's git dies with it).
    for lock in ["index.lock", "HEAD.lock", "fillwright-sync-index", "fillwright-sync-index.lock"] {
        let _ = std::fs::remove_file(Path::new(git_dir).join(lock));
    }
    let Ok(target) = std::fs::read_to_string(marker) else { return Ok(()) };
    move_to(git, target.trim(), library)?;
    let _ = std::fs::remove_file(marker);
    Ok(())
}

/// Move the library from HEAD to `target` file by file, each written atomically: a file
/// already at the target is left, one still at HEAD's text is replaced, and one that is
/// neither (saved since an interrupted sync) is kept as it is, to be committed as a local
/// save. Then HEAD and the index follow. Run again after a kill, it completes the move.
fn move_to(git: &Git, target: &str, library: &Path) -> Result<(), SyncError> {
    let head = git.run(&["rev-parse", "HEAD"])?.trim().to_string();
    // Paths from git are relative to the top of the work tree (the library may be below it).
    let top = git.run(&["rev-parse", "--show-toplevel"]).map(|t| std::path::PathBuf::from(t.trim()));
    let root = top.unwrap_or_else(|_| library.to_path_buf());
    let changed = git.run(&["diff", "--no-renames", "--name-only", "-z", &head, target])?;
    let blob = |rev: &str, path: &str| git.run(&["rev-parse", "--verify", "--quiet", &format!("{rev}:{path}")]).ok();
    for path in changed.split('\0').filter(|p| !p.is_empty()) {
        let file = root.join(path);
        let absolute = file.display().to_string();
        let current = file.is_file().then(|| git.run(&["hash-object", "--", &absolute]).ok()).flatten();
        let (wanted, before) = (blob(target, path), blob(&head, path));
        let trim = |o: &Option<String>| o.as_ref().map(|s| s.trim().to_string());
        let (current, wanted, before) = (trim(&current), trim(&wanted), trim(&before));
        if current == wanted || current != before {
            continue;
        }
        match wanted {
            Some(oid) => {
                let bytes = git
                    .command(&["cat-file", "blob", &oid])
                    .output()
                    .map_err(|e| SyncError::Git { command: "cat-file".into(), message: e.to_string() })?
                    .stdout;
                if let Some(dir) = file.parent() {
                    std::fs::create_dir_all(dir)
                        .map_err(|e| SyncError::Git { command: "mkdir".into(), message: e.to_string() })?;
                }
                super::atomic::write(&file, &bytes)
                    .map_err(|e| SyncError::Git { command: format!("write {path}"), message: e.to_string() })?;
            }
            None => {
                let _ = std::fs::remove_file(&file);
            }
        }
    }
    git.run(&["update-ref", "HEAD", target])?;
    git.run(&["read-tree", target])?;
    Ok(())
}

/// A bench's first sync, before it has a commit of its own: it starts from the lab's
/// history, its own files laid over it as changes (nothing of the lab's is deleted).
fn adopt_remote_if_new(git: &Git, theirs: &str) -> Result<usize, SyncError> {
    let unborn = git.run(&["rev-parse", "--verify", "--quiet", "HEAD"]).is_err();
    if !unborn || git.run(&["rev-parse", "--verify", "--quiet", theirs]).is_err() {
        return Ok(0);
    }
    git.run(&["update-ref", "HEAD", theirs])?;
    git.run(&["reset", "--quiet", "--mixed", "HEAD"])?;
    let missing = git.run(&["ls-files", "--deleted"])?;
    let missing: Vec<&str> = missing.lines().filter(|l| !l.is_empty()).collect();
    if !missing.is_empty() {
        let mut args = vec!["checkout", "--"];
        args.extend(missing);
        git.run(&args)?;
    }
    Ok(git.run(&["rev-list", "--count", "HEAD"])?.trim().parse().unwrap_or(0))
}

/// Commit whatever the library holds that is not committed yet (saves made without
/// committing, and the histories beside them).
fn commit_local_saves(git: &Git) -> Result<(), SyncError> {
    git.run(&["add", "--all", "."])?;
    let (code, _) = git.run_with(&["diff", "--cached", "--quiet"], None, &[1])?;
    if code == 1 {
        git.run(&["commit", "--quiet", "-m", "saves on this bench, committed by sync"])?;
    }
    Ok(())
}

/// Merge `theirs` into HEAD without conflict markers; returns (commits received, recipes
/// merged as consecutive revisions, other files kept twice).
fn merge_in(
    git: &Git,
    theirs: &str,
    marker: &Path,
    library: &Path,
) -> Result<(usize, Vec<String>, Vec<String>), SyncError> {
    let received: usize = git.run(&["rev-list", "--count", &format!("HEAD..{theirs}")])?.trim().parse().unwrap_or(0);
    if received == 0 {
        return Ok((0, Vec::new(), Vec::new()));
    }
    let (code, out) = git.run_with(
        &["merge-tree", "--write-tree", "--name-only", "--allow-unrelated-histories", "HEAD", theirs],
        None,
        &[1],
    )?;
    let mut lines = out.lines();
    let tree = lines.next().unwrap_or_default().trim().to_string();
    let conflicted: BTreeSet<String> =
        if code == 1 { lines.take_while(|l| !l.is_empty()).map(str::to_string).collect() } else { BTreeSet::new() };
    // git's merge may take a delete (the recipe moved into the trash) for a rename and carry
    // the other bench's edit into the trash: every recipe changed on both sides is merged
    // here as revisions, and every trash entry keeps the text of the side that made it.
    let sides = Changes::of(git, theirs)?;
    let (tree, merged, kept) = if conflicted.is_empty() && sides.both_recipes.is_empty() && sides.trash.is_empty() {
        (tree, Vec::new(), Vec::new())
    } else {
        resolve(git, &tree, theirs, &conflicted, &sides)?
    };
    let fast_forward = git.run(&["merge-base", "--is-ancestor", "HEAD", theirs]).is_ok();
    let commit = if fast_forward {
        git.run(&["rev-parse", theirs])?.trim().to_string()
    } else {
        let message = format!("sync: brought in {received} commit(s) from the other benches");
        git.run(&["commit-tree", &tree, "-p", "HEAD", "-p", theirs, "-m", &message])?.trim().to_string()
    };
    // The marker first: a kill from here on is completed by the next sync.
    std::fs::write(marker, &commit).map_err(|e| SyncError::Git { command: "marker".into(), message: e.to_string() })?;
    move_to(git, &commit, library)?;
    let _ = std::fs::remove_file(marker);
    Ok((received, merged, kept))
}

/// What each side changed since the merge base, without rename detection.
struct Changes {
    /// Recipes changed on both sides (edited, saved or deleted).
    both_recipes: BTreeSet<String>,
    /// Trash paths changed on one side only, with that side (`HEAD` or theirs).
    trash: Vec<(String, String)>,
}

impl Changes {
    fn of(git: &Git, theirs: &str) -> Result<Changes, SyncError> {
        let Ok(base) = git.run(&["merge-base", "HEAD", theirs]).map(|b| b.trim().to_string()) else {
            return Ok(Changes { both_recipes: BTreeSet::new(), trash: Vec::new() });
        };
        let changed = |to: &str| -> Result<BTreeSet<String>, SyncError> {
            Ok(git.run(&["diff", "--no-renames", "--name-only", &base, to])?.lines().map(str::to_string).collect())
        };
        let (ours, other) = (changed("HEAD")?, changed(theirs)?);
        let recipes =
            |set: &BTreeSet<String>| -> BTreeSet<String> { set.iter().filter_map(|p| recipe_of(p)).collect() };
        let both_recipes = recipes(&ours).intersection(&recipes(&other)).cloned().collect();
        let in_trash = |p: &&String| p.starts_with(".trash/");
        let mut trash: Vec<(String, String)> =
            ours.iter().filter(in_trash).filter(|p| !other.contains(*p)).map(|p| (p.clone(), "HEAD".into())).collect();
        trash.extend(other.iter().filter(in_trash).filter(|p| !ours.contains(*p)).map(|p| (p.clone(), theirs.into())));
        Ok(Changes { both_recipes, trash })
    }
}

/// The recipe a library path belongs to: `NAME.ron` or `.history/NAME/NNNN.ron`.
fn recipe_of(path: &str) -> Option<String> {
    if let Some(rest) = path.strip_prefix(".history/") {
        let (name, file) = rest.split_once('/')?;
        return (file.ends_with(".ron") && file.trim_end_matches(".ron").chars().all(|c| c.is_ascii_digit()))
            .then(|| name.to_string());
    }
    let name = path.strip_suffix(".ron")?;
    (!name.contains('/') && !name.starts_with('.')).then(|| name.to_string())
}

/// Replace the conflicted paths of `tree` with their resolution; returns the new tree.
fn resolve(
    git: &Git,
    tree: &str,
    theirs: &str,
    conflicted: &BTreeSet<String>,
    sides: &Changes,
) -> Result<(String, Vec<String>, Vec<String>), SyncError> {
    let git_dir = git.run(&["rev-parse", "--absolute-git-dir"])?.trim().to_string();
    let index = format!("{git_dir}/fillwright-sync-index");
    let _ = std::fs::remove_file(&index);
    let env = [("GIT_INDEX_FILE", index.as_str())];
    git.run_env(&["read-tree", tree], None, &[], &env)?;
    let mut recipes: BTreeSet<String> = conflicted.iter().filter_map(|p| recipe_of(p)).collect();
    recipes.extend(sides.both_recipes.iter().cloned());
    // Trash entries as the side that made them wrote them.
    for (path, side) in &sides.trash {
        match git.run(&["rev-parse", &format!("{side}:{path}")]) {
            Ok(blob) => {
                let info = format!("100644,{},{path}", blob.trim());
                git.run_env(&["update-index", "--add", "--cacheinfo", &info], None, &[], &env)?;
            }
            Err(_) => {
                git.run_env(&["update-index", "--force-remove", "--", path], None, &[], &env)?;
            }
        }
    }
    let mut merged = Vec::new();
    let mut kept = Vec::new();
    for name in &recipes {
        let entries = merge_recipe(git, name, theirs)?;
        for (path, text) in entries {
            let blob = git.blob(&text)?;
            git.run_env(&["update-index", "--add", "--cacheinfo", &format!("100644,{blob},{path}")], None, &[], &env)?;
        }
        merged.push(name.clone());
    }
    for path in
        conflicted.iter().filter(|p| recipe_of(p).is_none_or(|n| !recipes.contains(&n)) && !p.starts_with(".trash/"))
    {
        let ours = git.show("HEAD", path);
        let other = git.show(theirs, path);
        let later_is_theirs = commit_time(git, theirs) >= commit_time(git, "HEAD");
        let (keep, beside) = match (ours, other) {
            (Some(o), Some(t)) if later_is_theirs => (Some(t), Some(o)),
            (Some(o), Some(t)) => (Some(o), Some(t)),
            // Deleted on one side, changed on the other: kept, changed.
            (one, other) => (one.or(other), None),
        };
        if let Some(text) = keep {
            let blob = git.blob(&text)?;
            git.run_env(&["update-index", "--add", "--cacheinfo", &format!("100644,{blob},{path}")], None, &[], &env)?;
        }
        if let Some(text) = beside {
            let blob = git.blob(&text)?;
            let other_path = format!("{path}.other-bench");
            git.run_env(
                &["update-index", "--add", "--cacheinfo", &format!("100644,{blob},{other_path}")],
                None,
                &[],
                &env,
            )?;
        }
        kept.push(path.clone());
    }
    let tree = git.run_env(&["write-tree"], None, &[], &env)?.1.trim().to_string();
    let _ = std::fs::remove_file(&index);
    Ok((tree, merged, kept))
}

fn commit_time(git: &Git, rev: &str) -> i64 {
    git.run(&["log", "-1", "--format=%ct", rev]).ok().and_then(|t| t.trim().parse().ok()).unwrap_or(0)
}

/// Every revision of recipe `name` on one side: revision → canonical text, from its
/// history folder and its current file.
fn revisions(git: &Git, rev: &str, name: &str) -> Result<BTreeMap<u64, (Recipe, String)>, SyncError> {
    let mut out = BTreeMap::new();
    let listing = git.run(&["ls-tree", "--name-only", &format!("{rev}:.history/{name}")]).unwrap_or_default();
    let paths = listing.lines().map(|f| format!(".history/{name}/{f}")).chain(std::iter::once(format!("{name}.ron")));
    for path in paths {
        if let Some(text) = git.show(rev, &path) {
            if let Ok(r) = Recipe::parse(&text, &path) {
                out.insert(r.revision, (r, text));
            }
        }
    }
    Ok(out)
}

/// Both benches' revisions of one recipe as one gap-free sequence; returns the paths and
/// texts to write (every history file from the first differing revision on, and the
/// recipe itself).
fn merge_recipe(git: &Git, name: &str, theirs: &str) -> Result<Vec<(String, String)>, SyncError> {
    let ours = revisions(git, "HEAD", name)?;
    let other = revisions(git, theirs, name)?;
    // The common revisions: the same number with the same text on both sides.
    let common_top = ours
        .iter()
        .take_while(|(rev, (_, text))| other.get(rev).is_some_and(|(_, t)| t == text))
        .map(|(rev, _)| *rev)
        .last()
        .unwrap_or(0);
    let after = |side: &BTreeMap<u64, (Recipe, String)>| -> Vec<Recipe> {
        side.range(common_top + 1..).map(|(_, (r, _))| r.clone()).collect()
    };
    let (mine, yours) = (after(&ours), after(&other));
    let last_saved = |list: &[Recipe]| list.last().and_then(|r| r.saved.clone()).unwrap_or_default();
    // The bench whose last save is earlier goes first and keeps its numbers.
    let (first, second) = if last_saved(&mine) <= last_saved(&yours) { (mine, yours) } else { (yours, mine) };
    let first_count = first.len();
    let mut sequence: Vec<Recipe> = first.into_iter().chain(second).collect();
    let count = sequence.len();
    let mut out = Vec::new();
    for (k, r) in sequence.iter_mut().enumerate() {
        r.revision = common_top + 1 + k as u64;
    }
    for (k, r) in sequence.iter().enumerate() {
        let last = k + 1 == count;
        let mut r = r.clone();
        if last && count > 1 && first_count > 0 && first_count < count {
            // The other bench's last save, now in the history.
            let before = &sequence[first_count - 1];
            let note = format!(
                "merged at sync: saved on two benches since revision {common_top}; revision {} ({}, {}) kept in \
                 the history, this one ({}, {}) follows it. {}",
                before.revision,
                before.saved_by.as_deref().unwrap_or("unknown"),
                before.saved.as_deref().unwrap_or("time unknown"),
                r.saved_by.as_deref().unwrap_or("unknown"),
                r.saved.as_deref().unwrap_or("time unknown"),
                r.change_note.clone().unwrap_or_default()
            );
            r.change_note = Some(note.trim().to_string());
        }
        let text = canonical::to_text(&r);
        let path = if last { format!("{name}.ron") } else { format!(".history/{name}/{:04}.ron", r.revision) };
        out.push((path, text));
    }
    Ok(out)
}
