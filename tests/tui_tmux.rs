//! End to end: the real binary in a real terminal (tmux), as a blender would use it.
//! Needs tmux (`.ci/run` installs it).

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

struct Tmux {
    socket: String,
}

impl Tmux {
    fn new(tag: &str) -> Tmux {
        assert!(
            Command::new("tmux").arg("-V").output().is_ok_and(|o| o.status.success()),
            "this test drives the program in tmux: install tmux (apt-get install tmux)"
        );
        Tmux { socket: format!("fillwright-test-{tag}-{}", std::process::id()) }
    }

    fn run(&self, args: &[&str]) -> String {
        let o = Command::new("tmux").arg("-L").arg(&self.socket).args(args).output().unwrap();
        String::from_utf8_lossy(&o.stdout).into_owned()
    }

    /// Starts a session, trying again while a server whose last session was just killed
    /// is still shutting down (the new session would otherwise be lost with it).
    fn new_session(&self, name: &str, size: (&str, &str), cmd: &str) {
        let start = Instant::now();
        loop {
            let o = Command::new("tmux")
                .arg("-L")
                .arg(&self.socket)
                .args(["new-session", "-d", "-s", name, "-x", size.0, "-y", size.1, cmd])
                .output()
                .unwrap();
            if o.status.success() {
                return;
            }
            let why = String::from_utf8_lossy(&o.stderr);
            assert!(start.elapsed() < Duration::from_secs(10), "tmux new-session failed: {why}");
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    fn start(&self, config: &Path, args: &str) {
        let bin = env!("CARGO_BIN_EXE_fillwright");
        let cmd = format!("env -u NO_COLOR FILLWRIGHT_CONFIG={} {bin} {args}", config.display());
        self.new_session("bench", ("80", "24"), &cmd);
        self.run(&["set-option", "-t", "bench", "remain-on-exit", "on"]);
    }

    fn screen(&self) -> String {
        self.run(&["capture-pane", "-p", "-t", "bench"])
    }

    fn keys(&self, keys: &[&str]) {
        for k in keys {
            self.run(&["send-keys", "-t", "bench", k]);
            std::thread::sleep(Duration::from_millis(60));
        }
    }

    fn type_text(&self, text: &str) {
        self.run(&["send-keys", "-t", "bench", "-l", text]);
        std::thread::sleep(Duration::from_millis(100));
    }

    fn wait_for(&self, needle: &str) -> String {
        let start = Instant::now();
        loop {
            let s = self.screen();
            if s.contains(needle) {
                return s;
            }
            assert!(start.elapsed() < Duration::from_secs(20), "waited for {needle:?}; the screen shows:\n{s}");
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    fn wait_exit(&self) {
        let start = Instant::now();
        while self.run(&["display-message", "-p", "-t", "bench", "#{pane_dead}"]).trim() != "1" {
            assert!(start.elapsed() < Duration::from_secs(20), "the program did not exit:\n{}", self.screen());
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    fn kill_session(&self) {
        self.run(&["kill-session", "-t", "bench"]);
    }
}

impl Drop for Tmux {
    fn drop(&mut self) {
        self.run(&["kill-server"]);
    }
}

fn fresh_config(tag: &str) -> PathBuf {
    let dir = common::temp_dir().join(format!("fillwright-e2e-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

#[test]
fn open_change_save_quit_then_recover_after_a_dropped_session() {
    let config = fresh_config("bench");
    let t = Tmux::new("bench");

    // A new user: the demo library is there, with fill pressures.
    t.start(&config, "");
    let s = t.wait_for("Recipes in");
    assert!(s.contains("flue-gas-span") && s.contains("150bar"), "{s}");
    t.keys(&["/"]);
    t.type_text("flue-gas");
    t.keys(&["Enter"]);
    t.wait_for("flue-gas-span rev 1");
    // Down to the CO2 amount, change it, save, quit.
    t.keys(&["Down", "Down", "Down", "Down", "Down", "Down", "Down", "Enter", "C-u"]);
    t.type_text("14%");
    t.keys(&["Enter"]);
    t.wait_for("unsaved changes");
    t.keys(&["s"]);
    t.wait_for("saved rev 2");
    t.keys(&["q"]);
    t.wait_exit();
    let file = std::fs::read_to_string(config.join("library/flue-gas-span.ron")).unwrap();
    assert!(file.contains("(gas: \"CO2\", amount: \"14%\""), "{file}");
    assert!(file.contains("revision: 2,"), "{file}");
    t.kill_session();

    // The SSH session drops in the middle of an edit: the edit survives as a draft.
    t.start(&config, "edit flue-gas-span");
    t.wait_for("flue-gas-span rev 2");
    t.keys(&["Down", "Down", "Down", "Down", "Down", "Down", "Down", "Enter", "C-u"]);
    t.type_text("13%");
    t.keys(&["Enter"]);
    t.wait_for("unsaved changes");
    t.kill_session();
    // The draft is this session's, of this file: drafts/flue-gas-span.HASH.PID.ron.
    let start = Instant::now();
    let draft = loop {
        let found =
            std::fs::read_dir(config.join("drafts")).into_iter().flatten().flatten().map(|e| e.path()).find(|p| {
                p.file_name()
                    .and_then(|n| n.to_str())
                    .is_some_and(|n| n.starts_with("flue-gas-span.") && n.ends_with(".ron"))
            });
        if let Some(p) = found {
            break p;
        }
        assert!(start.elapsed() < Duration::from_secs(10), "no draft was written on SIGHUP");
        std::thread::sleep(Duration::from_millis(100));
    };
    let text = std::fs::read_to_string(&draft).unwrap();
    assert!(text.contains("13%") && text.contains("library/flue-gas-span.ron"), "{text}");
    // The next start offers it.
    t.start(&config, "");
    t.wait_for("Recover unsaved edits?");
    t.keys(&["Enter"]);
    let s = t.wait_for("recovered the unsaved edits");
    assert!(s.contains("13%"), "{s}");
    t.keys(&["q", "y"]);
    t.wait_exit();
}

/// The flags tmux keeps for the pane: cursor shown, alternate screen on.
fn terminal_state(t: &Tmux) -> String {
    t.run(&["display-message", "-p", "-t", "bench", "#{cursor_flag} #{alternate_on}"]).trim().to_string()
}

#[test]
fn the_terminal_is_given_back_whole_after_a_signal() {
    let config = fresh_config("restore");
    let bin = env!("CARGO_BIN_EXE_fillwright");
    // The program runs under a shell that stays, so the pane (and what the program last
    // wrote to it) outlives the program.
    let cmd = format!("sh -c 'FILLWRIGHT_CONFIG={} {bin}; echo exited $?; sleep 60'", config.display());
    for (signal, status) in [("TERM", 143), ("INT", 130), ("HUP", 129), ("quit", 0)] {
        // A tmux server of its own for each round: killing a server's last session shuts
        // the server down, and a session started while it does so would be lost.
        let t = Tmux::new(&format!("restore-{signal}"));
        t.new_session("bench", ("80", "24"), &cmd);
        t.wait_for("Recipes in");
        assert_eq!(terminal_state(&t), "0 1", "the screen hides the cursor and uses the alternate screen");
        if signal == "quit" {
            t.keys(&["q"]);
        } else {
            let shell = t.run(&["display-message", "-p", "-t", "bench", "#{pane_pid}"]);
            let child = Command::new("pgrep").args(["-P", shell.trim()]).output().unwrap();
            let pid = String::from_utf8_lossy(&child.stdout).trim().to_string();
            assert!(!pid.is_empty(), "no program under the shell");
            assert!(Command::new("kill").arg(format!("-{signal}")).arg(&pid).status().unwrap().success());
        }
        t.wait_for(&format!("exited {status}"));
        assert_eq!(terminal_state(&t), "1 0", "after {signal}: cursor shown, alternate screen left");
    }
}

#[test]
fn two_screens_saving_one_recipe_at_once_never_lose_an_edit() {
    let config = fresh_config("two-screens");
    let t = Tmux::new("two-screens");
    let bin = env!("CARGO_BIN_EXE_fillwright");
    let start = |session: &str| {
        let cmd = format!("env FILLWRIGHT_CONFIG={} {bin} edit flue-gas-span", config.display());
        t.new_session(session, ("100", "30"), &cmd);
    };
    let screen = |session: &str| t.run(&["capture-pane", "-p", "-t", session]);
    let wait = |session: &str, needles: &[&str]| -> String {
        let begun = Instant::now();
        loop {
            let s = screen(session);
            if needles.iter().any(|n| s.contains(n)) {
                return s;
            }
            assert!(begun.elapsed() < Duration::from_secs(20), "{session} waited for {needles:?}:\n{s}");
            std::thread::sleep(Duration::from_millis(50));
        }
    };
    // The first start copies the demo library in; then two screens open the same recipe.
    start("a");
    wait("a", &["flue-gas-span rev 1"]);
    start("b");
    wait("b", &["flue-gas-span rev 1"]);
    let edit = |session: &str, value: &str| {
        for k in ["Home", "Down", "Down", "Down", "Down", "Down", "Down", "Down", "Enter", "C-u"] {
            t.run(&["send-keys", "-t", session, k]);
        }
        t.run(&["send-keys", "-t", session, "-l", value]);
        t.run(&["send-keys", "-t", session, "Enter"]);
        wait(session, &["unsaved changes"]);
    };
    let mut kept = Vec::new();
    for round in 0..3 {
        let (va, vb) = (format!("1{round}%"), format!("2{round}%"));
        edit("a", &va);
        edit("b", &vb);
        // Both save at the same moment (one tmux command sends both keys).
        t.run(&["send-keys", "-t", "a", "s", ";", "send-keys", "-t", "b", "s"]);
        let landed = format!("saved rev {}", round + 2);
        let sa = wait("a", &[&landed, "Changed on disk"]);
        let sb = wait("b", &[&landed, "Changed on disk"]);
        let (a_saved, b_saved) = (sa.contains(&landed), sb.contains(&landed));
        assert!(a_saved != b_saved, "round {round}: exactly one save may land\nA:\n{sa}\nB:\n{sb}");
        let (loser, value) = if a_saved { ("b", va) } else { ("a", vb) };
        kept.push(value.clone());
        let file = std::fs::read_to_string(config.join("library/flue-gas-span.ron")).unwrap();
        assert!(file.contains(&format!("amount: \"{value}\"")), "round {round}: the landed save is in the file");
        // The refused screen still holds its edit; it reloads, and both go on from the file.
        t.run(&["send-keys", "-t", loser, "r"]);
        wait(loser, &["reloaded"]);
    }
    // Every landed save is a revision in the history.
    let o = Command::new(bin)
        .args(["history", "flue-gas-span", "--format", "json"])
        .env("FILLWRIGHT_CONFIG", &config)
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["revisions"].as_array().unwrap().len(), 1 + kept.len());
    t.run(&["kill-server"]);
}

#[test]
fn a_value_being_typed_is_in_the_draft_when_the_session_drops() {
    let config = fresh_config("typing");
    let t = Tmux::new("typing");
    t.start(&config, "edit flue-gas-span");
    t.wait_for("flue-gas-span rev 1");
    // The CO2 amount, typed but not kept with Enter.
    t.keys(&["Down", "Down", "Down", "Down", "Down", "Down", "Down", "Enter", "C-u"]);
    t.type_text("12.5%");
    // Written at once, before any signal.
    let start = Instant::now();
    let text = loop {
        let found = std::fs::read_dir(config.join("drafts"))
            .into_iter()
            .flatten()
            .flatten()
            .map(|e| e.path())
            .find(|p| p.file_name().and_then(|n| n.to_str()).is_some_and(|n| n.starts_with("flue-gas-span.")));
        if let Some(text) = found.and_then(|p| std::fs::read_to_string(p).ok()).filter(|t| t.contains("12.5%")) {
            break text;
        }
        assert!(start.elapsed() < Duration::from_secs(10), "the value being typed is in no draft:\n{}", t.screen());
        std::thread::sleep(Duration::from_millis(100));
    };
    assert!(text.contains("amount: \\\"12.5%\\\""), "{text}");
    t.kill_session();
    // The next start offers it.
    t.start(&config, "");
    t.wait_for("Recover unsaved edits?");
    t.keys(&["Enter"]);
    let s = t.wait_for("recovered the unsaved edits");
    assert!(s.contains("12.5%"), "{s}");
    t.keys(&["q", "y"]);
    t.wait_exit();
    // Quitting on purpose leaves no draft behind.
    let left: Vec<_> = std::fs::read_dir(config.join("drafts")).unwrap().flatten().collect();
    assert!(left.iter().all(|e| !e.file_name().to_string_lossy().contains(".ron.")), "{left:?}");
}

#[test]
fn a_draft_folder_that_is_a_link_is_refused_and_said_at_once() {
    let config = fresh_config("draft-link");
    std::fs::create_dir_all(&config).unwrap();
    let outside = config.with_extension("outside");
    let _ = std::fs::remove_dir_all(&outside);
    std::fs::create_dir_all(&outside).unwrap();
    std::os::unix::fs::symlink(&outside, config.join("drafts")).unwrap();
    let t = Tmux::new("draft-link");
    t.start(&config, "edit flue-gas-span");
    t.wait_for("flue-gas-span rev 1");
    t.keys(&["Down", "Down", "Down", "Down", "Down", "Down", "Down", "Enter", "C-u"]);
    t.type_text("13%");
    t.keys(&["Enter"]);
    let s = t.wait_for("DRAFT NOT WRITTEN");
    assert!(s.contains("DRAFT NOT WRITTEN: symbolic link"), "{s}");
    t.kill_session();
    std::thread::sleep(Duration::from_millis(300));
    assert_eq!(std::fs::read_dir(&outside).unwrap().count(), 0, "a draft went through the link");
    let _ = std::fs::remove_dir_all(&outside);
}

#[test]
fn a_fill_survives_a_dropped_session_and_a_slip_is_corrected_on_the_sheet() {
    let config = fresh_config("fill");
    let t = Tmux::new("fill");
    t.start(&config, "edit flue-gas-span");
    t.wait_for("flue-gas-span rev 1");
    t.keys(&["3"]);
    t.wait_for("Fill sheet");
    // The empty cylinder, the CO addition, and the analysis of the CH4 source typed.
    t.keys(&["w"]);
    t.type_text("13412.000g");
    t.keys(&["Enter"]);
    t.wait_for("started");
    t.keys(&["w"]);
    t.type_text("13412.93g");
    t.keys(&["Enter"]);
    t.wait_for("step 1 weighed");
    t.keys(&["l"]);
    t.type_text("CH4=balance,C2H6=50ppm±5ppm");
    t.keys(&["Enter"]);
    t.wait_for("(recorded)");
    // The SSH session drops before the weighing.
    t.kill_session();
    t.start(&config, "edit flue-gas-span");
    t.wait_for("flue-gas-span rev 1");
    t.keys(&["3"]);
    let s = t.wait_for("C2H6=50ppm±5ppm");
    assert!(s.contains("(recorded)"), "the analysis typed before the drop is there:\n{s}");
    // CH4 goes 3 % over and is typed in kg: held back, then entered again, then corrected.
    t.keys(&["w"]);
    t.type_text("13440.31kg");
    t.keys(&["Enter"]);
    t.wait_for("Enter again");
    t.keys(&["Enter"]);
    t.wait_for("step 2 weighed");
    t.keys(&["x"]);
    t.type_text("w 2 13440.31g");
    t.keys(&["Enter"]);
    t.wait_for("why?");
    t.type_text("typed kg for g");
    t.keys(&["Enter"]);
    t.wait_for("corrected");
    // The sheet now follows the fill: the rest re-planned from the record.
    let s = t.wait_for("re-planned from the fill record");
    assert!(s.contains("recorded"), "{s}");
    let records = config.join("library/records");
    let file = std::fs::read_dir(&records).unwrap().flatten().find(|e| e.path().is_file()).unwrap().path();
    let saved = std::fs::read_to_string(file).unwrap();
    assert!(saved.contains("reason: \"typed kg for g\"") && saved.contains("\"13440.31g\""), "{saved}");
    t.keys(&["q"]);
    t.wait_exit();
}

#[test]
fn a_dumb_terminal_is_refused_with_the_command_line_offered_and_nothing_written() {
    let config = fresh_config("dumb");
    let t = Tmux::new("dumb");
    // A real terminal, but one that cannot move the cursor.
    let bin = env!("CARGO_BIN_EXE_fillwright");
    let cmd = format!("env TERM=dumb FILLWRIGHT_CONFIG={} {bin}; echo exit=$?; sleep 30", config.display());
    t.new_session("bench", ("80", "24"), &cmd);
    let s = t.wait_for("exit=").replace('\n', "");
    assert!(s.contains("exit=1"), "{s}");
    assert!(s.contains("fillwright: the screen needs an interactive terminal, and TERM is dumb"), "{s}");
    assert!(s.contains("fillwright plan NAME"), "{s}");
    assert!(!config.exists(), "a refused start wrote {}", config.display());
    // The same terminal with a usable TERM opens the screen.
    t.kill_session();
    t.start(&config, "");
    t.wait_for("Recipes in");
    t.keys(&["q"]);
    t.wait_exit();
}
