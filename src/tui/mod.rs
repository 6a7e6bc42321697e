//! The terminal screen: one [`model::Model`], messages from keys, a testable
//! [`update::update`], and views that only draw ([`view::view`]).
//!
//! The runtime here owns the terminal. It restores it on quit, on panic, on SIGTERM and on
//! SIGHUP, and on a panic or a signal it first writes any unsaved edits as a draft in the
//! config folder's `drafts/`, which the next start offers to recover.

pub mod context;
pub mod document;
pub mod drafts;
pub mod model;
pub mod overlays;
pub mod scenes;
pub mod svg;
pub mod theme;
pub mod update;
pub mod view;
pub mod views;

use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::time::Duration;

use ratatui::crossterm::event::{self, Event, KeyCode, KeyEventKind, KeyModifiers};

use crate::config;
use crate::library::{clock, Library};
use model::Model;
use update::{Context, Key, Msg};

/// The draft to write if the session ends suddenly: (path, canonical recipe text).
static PENDING_DRAFT: Mutex<Option<(PathBuf, String)>> = Mutex::new(None);

/// Held while a frame is drawn, and by a signal's way out: the screen is never drawn
/// again once the terminal has been given back.
static SCREEN: Mutex<()> = Mutex::new(());

fn write_pending_draft() {
    if let Ok(guard) = PENDING_DRAFT.lock() {
        write_draft(&guard);
    }
}

/// [`write_pending_draft`] from the panic hook: a panic on the thread that holds the draft's
/// lock (while writing it) must not wait for itself.
fn write_pending_draft_unless_held() {
    if let Ok(guard) = PENDING_DRAFT.try_lock() {
        write_draft(&guard);
    }
}

fn write_draft(pending: &Option<(PathBuf, String)>) {
    if let Some((path, text)) = pending {
        let _ = drafts::write(path, text);
    }
}

/// Keep the draft in step with the model after every update: the recipe with unsaved
/// edits, and the value being typed, is written at once (and again on a signal or a lost
/// terminal); a draft that cannot be written is said on the status line at once. The
/// draft goes when the edits are saved or undone. `written` is the draft on disk.
fn remember_draft(model: &mut Model, ctx: &Context, written: &mut Option<(PathBuf, String)>) {
    let pending = model
        .doc
        .as_ref()
        .map(|doc| (doc, update::recipe_as_typed(doc)))
        .filter(|(doc, typed)| !crate::recipe::changes::same_content(typed, &doc.saved))
        .and_then(|(doc, typed)| ctx.draft_of(&doc.name, &typed));
    let same = |a: &Option<(PathBuf, String)>, b: &Option<(PathBuf, String)>| {
        // The stamp inside changes every second; the recipe is what matters.
        a.as_ref().map(|(p, t)| (p, t.lines().filter(|l| !l.contains("written")).collect::<String>()))
            == b.as_ref().map(|(p, t)| (p, t.lines().filter(|l| !l.contains("written")).collect::<String>()))
    };
    // The draft a signal would write is the newest before the file is written, and the
    // lock is held while writing: a signal between the two wrote the draft of the key
    // before over the one just written (a kill right after "12.5%" left "12.5").
    let mut signal_draft = PENDING_DRAFT.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    *signal_draft = pending.clone();
    if !same(&pending, written) {
        if let Some((old, _)) = written.as_ref().filter(|(old, _)| pending.as_ref().is_none_or(|(p, _)| p != old)) {
            let _ = std::fs::remove_file(old);
        }
        match &pending {
            Some((path, text)) => match drafts::write(path, text) {
                Ok(()) => *written = pending.clone(),
                // Tried again after every key, and said again, until it can be written.
                Err(e) => {
                    model.status = format!("DRAFT NOT WRITTEN: {e}. Save (s) to keep the edits");
                    *written = None;
                }
            },
            None => *written = None,
        }
    }
}

/// A crossterm key as our own [`Key`].
fn key_of(ev: &event::KeyEvent) -> Option<Key> {
    if ev.kind != KeyEventKind::Press {
        return None;
    }
    let ctrl = ev.modifiers.contains(KeyModifiers::CONTROL);
    Some(match ev.code {
        KeyCode::Char(c) if ctrl => Key::Ctrl(c.to_ascii_lowercase()),
        KeyCode::Char(c) => Key::Char(c),
        KeyCode::Enter => Key::Enter,
        KeyCode::Esc => Key::Esc,
        KeyCode::Tab => Key::Tab,
        KeyCode::BackTab => Key::BackTab,
        KeyCode::Up => Key::Up,
        KeyCode::Down => Key::Down,
        KeyCode::Left => Key::Left,
        KeyCode::Right => Key::Right,
        KeyCode::Home => Key::Home,
        KeyCode::End => Key::End,
        KeyCode::PageUp => Key::PageUp,
        KeyCode::PageDown => Key::PageDown,
        KeyCode::Backspace => Key::Backspace,
        KeyCode::Delete => Key::Delete,
        KeyCode::F(n) => Key::F(n),
        _ => return None,
    })
}

/// Where to find the recipe `edit` names: a file path is a one-recipe library in its folder
/// (returned with `false`: not the library, so no demo recipes are copied there).
pub fn place_of(target: &str, library: Option<&Path>) -> Result<(PathBuf, String, bool), String> {
    let path = Path::new(target);
    if target.ends_with(".ron") || path.is_file() {
        let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new(".")).to_path_buf();
        let name =
            path.file_stem().and_then(|s| s.to_str()).ok_or_else(|| format!("{target}: not a recipe file name"))?;
        return Ok((dir, name.to_string(), false));
    }
    let dir = config::library_to_open(library, false)?;
    Ok((dir, target.to_string(), true))
}

/// Run the screen on the library at `dir`, opening `open` when given. `seed` copies the
/// demo recipes into an empty library (not into the folder of a recipe file).
/// Why the screen cannot be drawn here, if it cannot: standard input and output must be a
/// terminal, and `TERM` one that can be addressed (not unset, empty or `dumb`). Checked
/// before anything is read or written, so a refused start leaves no trace.
pub fn unusable_terminal() -> Option<String> {
    use std::io::IsTerminal;
    let term = std::env::var("TERM").unwrap_or_default();
    let why = if !std::io::stdin().is_terminal() {
        "standard input is not a terminal"
    } else if !std::io::stdout().is_terminal() {
        "standard output is not a terminal"
    } else if term.is_empty() {
        "TERM is not set"
    } else if term == "dumb" {
        "TERM is dumb (a terminal that cannot move the cursor)"
    } else {
        return None;
    };
    Some(format!(
        "the screen needs an interactive terminal, and {why}. Every job also runs from the command line: \
         `fillwright plan NAME`, `fillwright check NAME`, `fillwright records`, `fillwright certify ID` \
         (`fillwright --help` lists them all)"
    ))
}

pub fn run(dir: &Path, open: Option<&str>, seed: bool) -> Result<(), String> {
    if let Some(why) = unusable_terminal() {
        return Err(why);
    }
    let catalogue = config::load_catalogue()?;
    // A settings file that cannot be used is said on the status line; the screen opens
    // with the defaults so the library is never out of reach.
    let (settings, settings_problem) = match config::load_settings() {
        Ok(s) => (s, None),
        Err(e) => (config::default_settings(), Some(format!("{e}; the default settings are used"))),
    };
    let mut library = Library::at(dir).map_err(|e| e.to_string())?;
    library.git_commit = settings.git_commit_on_save;
    let drafts = config::config_dir().map(|d| d.join("drafts"));
    let color = std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
    let sources = config::config_dir().map(|d| d.join("sources"));
    let session = std::process::id().to_string();
    let settings_file = config::config_dir().map(|d| d.join("settings.ron"));
    let mut ctx = Context {
        library,
        catalogue,
        settings,
        drafts,
        sources,
        now: clock::now_utc,
        session,
        settings_file,
        beside: Some(context::Beside::new()),
    };
    let mut model = Model::new(dir.display().to_string(), color);
    model.shown = ctx.settings.shown;
    update::start_with(&mut model, &mut ctx, seed);
    if let Some(problem) = settings_problem {
        model.status = problem;
    }
    if let Some(name) = open {
        if matches!(model.overlay, model::Overlay::None) {
            // `edit NAME` of a recipe that does not exist yet starts it.
            match ctx.library.open(name) {
                Err(crate::library::LibraryError::NotFound(_)) => update::new_recipe(&mut model, &ctx, name),
                _ => update::open(&mut model, &ctx, name),
            }
        }
    }

    handle_signals()?;

    let mut terminal = ratatui::try_init().map_err(|e| format!("cannot open the terminal: {e}"))?;
    keep_drafts_on_panic();
    let result = event_loop(&mut terminal, &mut model, &mut ctx);
    // A lost terminal (the SSH session dropped) ends the loop with an error: keep the edits.
    if result.is_err() {
        write_pending_draft();
    }
    drop(terminal);
    restore_terminal();
    result
}

/// Draw, read a key, update, keep the draft: until the user quits (Ok) or the terminal is
/// lost (Err).
fn event_loop(terminal: &mut ratatui::DefaultTerminal, model: &mut Model, ctx: &mut Context) -> Result<(), String> {
    let mut draft_on_disk: Option<(PathBuf, String)> = None;
    // Drawn when something happened (a key, a resize), not while the screen is idle.
    let mut changed = true;
    loop {
        if std::mem::take(&mut changed) {
            let _screen = SCREEN.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
            terminal.draw(|f| view::view(model, &ctx.catalogue, f)).map_err(|e| e.to_string())?;
        }
        // While the screen shows an estimate or the library's screening is on its way, look
        // for the answers often.
        let estimate =
            model.doc.as_ref().is_some_and(|d| d.computed.phases_estimated) || !model.library.pending.is_empty();
        if event::poll(Duration::from_millis(if estimate { 40 } else { 200 })).map_err(|e| e.to_string())? {
            changed = true;
            let msg = match event::read().map_err(|e| e.to_string())? {
                Event::Key(k) => key_of(&k).map(Msg::Key),
                // A resize needs no message: the next draw uses the new size.
                _ => None,
            };
            if let Some(msg) = msg {
                update::update(model, msg, ctx);
                remember_draft(model, ctx, &mut draft_on_disk);
            }
            if model.quit {
                // Quitting was asked for (with unsaved edits confirmed away): no draft.
                if let Some((path, _)) = draft_on_disk.take() {
                    let _ = std::fs::remove_file(path);
                }
                if let Ok(mut guard) = PENDING_DRAFT.lock() {
                    *guard = None;
                }
                return Ok(());
            }
        }
        changed |= document::take_beside(model, ctx);
    }
}

/// Signals are handled on their own thread: when the SSH session drops, the terminal
/// library can be stuck reading a closed terminal, so the main loop may never see them.
fn handle_signals() -> Result<(), String> {
    #[cfg(unix)]
    {
        use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
        let mut signals = signal_hook::iterator::Signals::new([SIGHUP, SIGTERM, SIGINT]).map_err(|e| e.to_string())?;
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let _screen = SCREEN.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
                write_pending_draft();
                restore_terminal();
                std::process::exit(128 + signal);
            }
        });
    }
    Ok(())
}

/// ratatui's panic hook restores the terminal; ours first keeps the unsaved edits.
fn keep_drafts_on_panic() {
    let restore_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        write_pending_draft_unless_held();
        restore_terminal();
        restore_hook(info);
    }));
}

/// Give the terminal back as it was, on every way out (quit, signal, panic, lost
/// terminal): the alternate screen left, raw mode off and the cursor shown again.
fn restore_terminal() {
    use ratatui::crossterm::{cursor::Show, execute, terminal::LeaveAlternateScreen};
    let mut out = std::io::stdout();
    let _ = execute!(out, LeaveAlternateScreen, Show);
    let _ = ratatui::crossterm::terminal::disable_raw_mode();
    // Wait until the terminal has taken every byte: a process that exits right after
    // (on a signal) must not leave the last sequences unread.
    #[cfg(unix)]
    // SAFETY: tcdrain only waits on our own standard output descriptor.
    unsafe {
        libc::tcdrain(libc::STDOUT_FILENO);
    }
}
