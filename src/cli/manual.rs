//! The manual pages: one for the program and one per subcommand (`fillwright-plan(1)` and
//! so on), generated from the command definitions so that they never drift from them, each
//! with EXIT STATUS, ENVIRONMENT, FILES and SEE ALSO.

use std::path::PathBuf;

use clap::{Args, Command};

use super::{Failure, Refused};

#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
                        fillwright manual | man -l -\n  \
                        fillwright manual plan | man -l -\n  \
                        fillwright manual --dir ~/.local/share/man/man1")]
pub struct ManualArgs {
    /// The subcommand whose page to print (plan, check, certify, ...); without it, the
    /// program's page.
    #[arg(value_name = "COMMAND")]
    pub page: Option<String>,
    /// Write every page (fillwright.1 and fillwright-COMMAND.1) into this folder instead.
    #[arg(long, value_name = "DIR", conflicts_with = "page")]
    pub dir: Option<PathBuf>,
}

/// The exit statuses a command can end with: the shared ones and, for some, 3 and 4.
fn exit_status(command: &str) -> String {
    let mut s = String::from(
        ".TP\n0\nSuccess.\n.TP\n1\nThe input was refused: a message on standard error says what, where and \
         what is accepted. Also when standard output could not be written.\n.TP\n2\nWrong usage: an unknown \
         option, a missing argument, or a format the command does not offer.\n",
    );
    let three = match command {
        "fillwright" | "fillwright-plan" | "fillwright-check" => {
            Some("A screening finding is at stop (the report is printed in full).")
        }
        "fillwright-certify" => Some("The analysis attached to the record does not confirm the prepared content."),
        "fillwright-verify" => Some("The analysed content is not consistent with the prepared one."),
        _ => None,
    };
    if let Some(t) = three {
        s.push_str(&format!(".TP\n3\n{t}\n"));
    }
    let saves = ["fillwright-import", "fillwright-copy", "fillwright-history"];
    if saves.contains(&command) {
        s.push_str(".TP\n4\nThe save is done and kept in the library, but its git commit failed.\n");
    }
    s
}

const ENVIRONMENT: &str = ".TP\nFILLWRIGHT_LIBRARY\nThe recipe library folder when --library is not given.\n\
.TP\nFILLWRIGHT_CONFIG\nThe configuration folder (settings, user gases, drafts, the default library).\n\
.TP\nXDG_CONFIG_HOME\nWhere the configuration folder is when FILLWRIGHT_CONFIG is not set.\n\
.TP\nNO_COLOR\nWhen set, the screen uses no colour.\n\
.TP\nUSER, LOGNAME\nThe name written with each save and fill record.\n\
.TP\nGIT_SSH_COMMAND\nPassed to git by sync.\n";

const FILES: &str = ".TP\n$XDG_CONFIG_HOME/fillwright/\nThe configuration folder (~/.config/fillwright/ when \
XDG_CONFIG_HOME is not set).\n\
.TP\nsettings.ron\nSettings in the configuration folder: units, default model, resolutions, storage \
temperatures, margins.\n\
.TP\ngases.ron\nA user catalogue of gases in the configuration folder, added to the built-in one.\n\
.TP\nlibrary/\nThe default recipe library: NAME.ron recipes, .history/NAME/ revisions, .trash/ deleted \
recipes, records/ fill records, sources/ source analyses, sheets/ printed fill sheets, verifications/.\n\
.TP\ndrafts/\nUnsaved edits of the screen, offered again after a dropped session.\n";

/// Roff text: a hyphen written as `\-` (a minus, never a break point) outside the macro
/// lines, so that options and command names print as typed.
fn roff(text: &str) -> String {
    text.lines()
        .map(|l| if l.starts_with('.') { l.to_string() } else { format!("\\%{}", l.replace('-', "\\-")) })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

/// The page of `cmd` (already built), with the sections clap does not know of.
fn page(cmd: Command, siblings: &[String]) -> Result<Vec<u8>, std::io::Error> {
    let name = cmd.get_display_name().unwrap_or(cmd.get_name()).to_string();
    let mut out = Vec::new();
    clap_mangen::Man::new(cmd).render(&mut out)?;
    out.extend_from_slice(roff(&format!(".SH \"EXIT STATUS\"\n{}", exit_status(&name))).as_bytes());
    out.extend_from_slice(roff(&format!(".SH ENVIRONMENT\n{ENVIRONMENT}")).as_bytes());
    out.extend_from_slice(roff(&format!(".SH FILES\n{FILES}")).as_bytes());
    let also: Vec<String> = siblings.iter().filter(|s| **s != name).map(|s| format!("\\%{s}(1)")).collect();
    out.extend_from_slice(roff(&format!(".SH \"SEE ALSO\"\n{}", also.join(", "))).as_bytes());
    Ok(out)
}

/// Print one page, or write them all to `--dir`.
pub fn run(args: &ManualArgs, top: Command) -> Result<(), Failure> {
    let mut top = top.disable_help_subcommand(true);
    top.build();
    let subcommands: Vec<Command> = top.get_subcommands().filter(|s| !s.is_hide_set()).cloned().collect();
    let mut names = vec!["fillwright".to_string()];
    names.extend(subcommands.iter().map(|s| s.get_display_name().unwrap_or(s.get_name()).to_string()));
    let written = |e: std::io::Error| Refused(format!("the manual page could not be written: {e}"));
    if let Some(dir) = &args.dir {
        std::fs::create_dir_all(dir).map_err(|e| Refused(format!("{}: {e}", dir.display())))?;
        for cmd in std::iter::once(top.clone()).chain(subcommands) {
            let file = dir.join(format!("{}.1", cmd.get_display_name().unwrap_or(cmd.get_name())));
            let bytes = page(cmd, &names).map_err(written)?;
            crate::library::atomic::write_output(&file, &bytes, false)
                .map_err(|e| Refused(format!("{}: {e}", file.display())))?;
        }
        outln!("{} manual pages written to {}", names.len(), dir.display());
        return Ok(());
    }
    let cmd = match &args.page {
        None => top,
        Some(p) => subcommands.into_iter().find(|s| s.get_name() == p).ok_or_else(|| {
            let known: Vec<String> =
                names.iter().skip(1).map(|n| n.trim_start_matches("fillwright-").to_string()).collect();
            Failure::Usage(format!(
                "no command {p:?}{}; the pages are: {}",
                crate::config::did_you_mean(p, &known),
                known.join(", ")
            ))
        })?,
    };
    let bytes = page(cmd, &names).map_err(written)?;
    out!("{}", String::from_utf8_lossy(&bytes));
    Ok(())
}
