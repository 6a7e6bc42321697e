//! The command line's conventions, as a new user meets them: a manual page per command
//! with its exit statuses, environment and files; help for every argument; examples that
//! can be copied from an 80-column terminal; one prefix on every error; `-` for standard
//! input; and no screen without a usable terminal.

mod common;

use std::io::Write;
use std::path::Path;
use std::process::{Command, Output, Stdio};

fn fillwright(config: &Path) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_fillwright"));
    c.env("FILLWRIGHT_CONFIG", config).env_remove("FILLWRIGHT_LIBRARY").env("COLUMNS", "80");
    c
}

fn run(config: &Path, args: &[&str]) -> Output {
    fillwright(config).args(args).stdin(Stdio::null()).output().unwrap()
}

fn run_with_input(config: &Path, args: &[&str], input: &str) -> Output {
    let mut child = fillwright(config)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // A command may refuse before it reads its input (the pipe is then closed): not an error here.
    let _ = child.stdin.take().unwrap().write_all(input.as_bytes());
    child.wait_with_output().unwrap()
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn config(tag: &str) -> std::path::PathBuf {
    let dir = common::temp_dir().join(format!("conventions-{tag}"));
    let _ = std::fs::remove_dir_all(&dir);
    dir
}

/// The subcommands as the top-level help lists them.
fn subcommands(config: &Path) -> Vec<String> {
    let help = text(&run(config, &["--help"]).stdout);
    let after = help.split("Commands:").nth(1).expect("the help lists the commands");
    let list = after.split("Options:").next().unwrap();
    list.lines()
        .filter(|l| l.starts_with("  ") && !l.starts_with("   "))
        .filter_map(|l| l.split_whitespace().next())
        .filter(|c| *c != "help")
        .map(str::to_string)
        .collect()
}

#[test]
fn every_command_has_a_manual_page_with_exit_status_environment_and_files() {
    let c = config("man");
    let commands = subcommands(&c);
    assert!(commands.len() >= 15 && commands.iter().any(|c| c == "certify"), "{commands:?}");
    for cmd in &commands {
        let o = run(&c, &["manual", cmd]);
        assert!(o.status.success(), "manual {cmd}: {}", text(&o.stderr));
        let page = text(&o.stdout);
        assert!(page.contains(&format!("\n.TH fillwright-{cmd} 1")), "manual {cmd}: {}", &page[..page.len().min(200)]);
        for section in [".SH \"EXIT STATUS\"", ".SH ENVIRONMENT", ".SH FILES", ".SH \"SEE ALSO\""] {
            assert!(page.contains(section), "manual {cmd} lacks {section}");
        }
        assert!(page.contains("FILLWRIGHT_LIBRARY"), "manual {cmd}");
    }
    // Exit status 3 is on the pages of the commands that end with it, and only there.
    let page = |cmd: &str| text(&run(&c, &["manual", cmd]).stdout);
    for cmd in ["plan", "check", "certify", "verify"] {
        assert!(page(cmd).contains(".TP\n\\%3\n"), "{cmd} ends with 3 at stop");
    }
    assert!(!page("list").contains(".TP\n\\%3\n"));
    // The program's own page, and every page at once into a folder.
    let top = text(&run(&c, &["manual"]).stdout);
    assert!(top.contains(".TH fillwright 1") && top.contains("fillwright\\-plan(1)"), "{}", &top[..200]);
    let dir = c.join("man1");
    let o = run(&c, &["manual", "--dir", dir.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(dir.join("fillwright.1").is_file() && dir.join("fillwright-certify.1").is_file());
    assert_eq!(std::fs::read_dir(&dir).unwrap().count(), commands.len() + 1);
    // A page that does not exist is wrong usage, with the pages there are.
    let o = run(&c, &["manual", "plna"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("did you mean \"plan\"?"), "{}", text(&o.stderr));
}

#[test]
fn every_argument_has_help_and_the_examples_can_be_copied_at_80_columns() {
    let c = config("help");
    let (mut arguments, mut examples) = (0, 0);
    for cmd in subcommands(&c) {
        let help = text(&run(&c, &[&cmd, "-h"]).stdout);
        if let Some(args) = help.split("Arguments:").nth(1) {
            for line in
                args.split("Options:").next().unwrap().lines().filter(|l| l.trim_start().starts_with(['<', '[']))
            {
                let words: Vec<&str> = line.split_whitespace().collect();
                assert!(words.len() > 1, "{cmd}: the argument {} has no help", words[0]);
                arguments += 1;
            }
        }
        // Each example line is a whole command or goes on from a line ending in `\`.
        let long = text(&run(&c, &[&cmd, "--help"]).stdout);
        if let Some(block) = long.split("Examples:").nth(1) {
            examples += 1;
            let mut continued = false;
            for line in block.lines().take_while(|l| !l.trim().is_empty()) {
                assert!(line.chars().count() <= 80, "{cmd}: {line:?} is wider than 80 columns");
                assert!(
                    continued || line.starts_with("  fillwright "),
                    "{cmd}: {line:?} is a command broken by the terminal's width"
                );
                continued = line.ends_with(" \\");
            }
        }
    }
    assert!(arguments >= 15 && examples >= 5, "{arguments} arguments and {examples} example blocks seen");
}

#[test]
fn every_error_has_one_prefix() {
    let c = config("prefix");
    for args in [&["nope"][..], &["plan", "--nope"], &["plan", "no-such-recipe"], &["certify", "nope"], &["copy", "a"]]
    {
        let o = run(&c, args);
        let e = text(&o.stderr);
        assert!(!o.status.success(), "{args:?}");
        assert!(e.starts_with("fillwright: "), "{args:?}: {e}");
        assert!(!e.contains("error:"), "{args:?}: {e}");
    }
}

#[test]
fn a_dash_reads_the_recipe_or_record_from_standard_input() {
    let c = config("stdin");
    assert!(run(&c, &["list"]).status.success(), "the demo recipes are copied in");
    let recipe = text(&run(&c, &["export", "flue-gas-span", "/dev/stdout"]).stdout);
    assert!(recipe.contains("components"), "{recipe}");
    // plan and check read it as they read a file.
    let piped = run_with_input(&c, &["plan", "-", "--format", "json"], &recipe);
    let named = run(&c, &["plan", "flue-gas-span", "--format", "json"]);
    assert!(piped.status.success(), "{}", text(&piped.stderr));
    let a: serde_json::Value = serde_json::from_slice(&piped.stdout).unwrap();
    let b: serde_json::Value = serde_json::from_slice(&named.stdout).unwrap();
    assert_eq!(a["steps"], b["steps"]);
    let o = run_with_input(&c, &["check", "-"], &recipe);
    assert!(text(&o.stdout).contains("standard input"), "{}", text(&o.stdout));
    // import needs a name for it.
    let o = run_with_input(&c, &["import", "-"], &recipe);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("--name"));
    let o = run_with_input(&c, &["import", "-", "--name", "piped-span"], &recipe);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&run(&c, &["list"]).stdout).contains("piped-span"));
    // A record piped into certify is certified as the file would be.
    let file = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/records/flue-gas-buoyancy.ron");
    let record = std::fs::read_to_string(&file).unwrap();
    let certify = ["--format", "json", "--draws", "1000"];
    let piped = run_with_input(&c, &[&["certify", "-"][..], &certify].concat(), &record);
    let named = run(&c, &[&["certify", file.to_str().unwrap()][..], &certify].concat());
    assert!(piped.status.success(), "{}", text(&piped.stderr));
    let a: serde_json::Value = serde_json::from_slice(&piped.stdout).unwrap();
    let b: serde_json::Value = serde_json::from_slice(&named.stdout).unwrap();
    assert!(a["components"].as_array().is_some_and(|c| c.len() >= 3));
    assert_eq!(a["components"], b["components"]);
    assert_eq!(a["record"], "stdin");
    // What is piped in is refused with where it came from.
    let o = run_with_input(&c, &["plan", "-"], "(name: \"x\",");
    assert_eq!(o.status.code(), Some(1));
    assert!(text(&o.stderr).contains("standard input"), "{}", text(&o.stderr));
}

#[test]
fn no_screen_without_a_usable_terminal_and_nothing_copied_first() {
    let c = config("no-terminal");
    for args in [&[][..], &["edit", "flue-gas-span"]] {
        let o = run(&c, args);
        assert_eq!(o.status.code(), Some(1), "{args:?}");
        let e = text(&o.stderr);
        assert!(e.starts_with("fillwright: the screen needs an interactive terminal"), "{e}");
        assert!(e.contains("fillwright plan NAME"), "points to the command line: {e}");
        assert!(!c.exists(), "the refused start wrote {}", c.display());
    }
}
