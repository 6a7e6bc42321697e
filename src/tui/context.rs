//! What the screen's handlers share: the keys as the screen knows them, the [`Context`]
//! (library, catalogue, settings, drafts) and the small helpers for typed lines. Every view
//! and overlay takes these from here, never from the dispatcher in `update`.

use std::path::PathBuf;

use tui_input::{Input, InputRequest};

use crate::gas::Catalogue;
use crate::library::Library;
use crate::recipe::Recipe;
use crate::settings::Resolved;

/// A key, independent of the terminal library.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Key {
    Char(char),
    Ctrl(char),
    Enter,
    Esc,
    Tab,
    BackTab,
    Up,
    Down,
    Left,
    Right,
    Home,
    End,
    PageUp,
    PageDown,
    Backspace,
    Delete,
    F(u8),
}

/// Everything that can happen to the screen.
#[derive(Debug, Clone, PartialEq)]
pub enum Msg {
    Key(Key),
}

/// What `update` may use besides the model.
pub struct Context {
    pub library: Library,
    pub catalogue: Catalogue,
    pub settings: Resolved,
    /// Where drafts of unsaved edits are kept.
    pub drafts: Option<PathBuf>,
    /// The source library (analyses of the source cylinders).
    pub sources: Option<PathBuf>,
    /// The time stamp for saves.
    pub now: fn() -> String,
    /// This session, to keep its drafts apart from another's (the process id).
    pub session: String,
    /// The settings file the settings editor writes (None: no config folder).
    pub settings_file: Option<PathBuf>,
    /// Where the reference equations' answers come back when they are computed beside the
    /// screen (the event loop's): the screen shows Peng–Robinson's quick estimate of the
    /// phases meanwhile. None: computed at once (tests, scripted scenes).
    pub beside: Option<Beside>,
}

/// A library recipe's screening made on another thread: its name, the fingerprint of the
/// file screened, the settings it was screened with (as in the cache) and its worst check.
pub type Screened = (String, crate::library::Fingerprint, String, Option<crate::checks::Severity>);

/// The results computed on other threads: the reference equations' answers for the open
/// recipe (the results' key, them), and the library's screening, recipe by recipe.
pub struct Beside {
    pub tx: std::sync::mpsc::Sender<(String, super::model::Computed)>,
    /// Behind a lock: the context is shared with the library's screening threads.
    pub rx: std::sync::Mutex<std::sync::mpsc::Receiver<(String, super::model::Computed)>>,
    pub screened_tx: std::sync::mpsc::Sender<Screened>,
    pub screened_rx: std::sync::Mutex<std::sync::mpsc::Receiver<Screened>>,
}

impl Beside {
    pub fn new() -> Beside {
        let (tx, rx) = std::sync::mpsc::channel();
        let (screened_tx, screened_rx) = std::sync::mpsc::channel();
        Beside { tx, rx: std::sync::Mutex::new(rx), screened_tx, screened_rx: std::sync::Mutex::new(screened_rx) }
    }
}

impl Default for Beside {
    fn default() -> Beside {
        Beside::new()
    }
}

impl Context {
    /// The file a recipe of this library is: what its drafts belong to.
    pub(crate) fn identity(&self, name: &str) -> PathBuf {
        super::drafts::identity(self.library.dir(), name)
    }

    /// Where this session keeps the draft of recipe `name`.
    pub(crate) fn draft_path(&self, name: &str) -> Option<PathBuf> {
        let dir = self.drafts.as_ref()?;
        Some(super::drafts::path_for(dir, &self.identity(name), name, &self.session))
    }

    /// This session's draft of `recipe` (named `name`): where it goes and its text.
    pub(crate) fn draft_of(&self, name: &str, recipe: &Recipe) -> Option<(PathBuf, String)> {
        let path = self.draft_path(name)?;
        Some((path, super::drafts::text_for(&self.identity(name), name, recipe, &(self.now)())))
    }

    /// Write this session's draft of a recipe with unsaved edits.
    pub fn write_draft(&self, name: &str, recipe: &Recipe) -> Result<(), String> {
        let Some((path, text)) = self.draft_of(name, recipe) else { return Ok(()) };
        super::drafts::write(&path, &text)
    }

    /// Remove this session's draft of `name`, and the draft its edits were recovered from.
    pub(crate) fn remove_draft(&self, name: &str, recovered: Option<&std::path::Path>) {
        for p in self.draft_path(name).iter().map(PathBuf::as_path).chain(recovered) {
            let _ = std::fs::remove_file(p);
        }
    }

    /// The drafts of this library's recipes waiting to be recovered.
    pub fn drafts(&self) -> Vec<super::drafts::DraftEntry> {
        self.drafts.as_ref().map(|d| super::drafts::list(d, self.library.dir())).unwrap_or_default()
    }

    /// Names of the drafts waiting to be recovered.
    pub fn draft_names(&self) -> Vec<String> {
        self.drafts().into_iter().map(|d| d.name).collect()
    }
}

pub fn input(text: &str) -> Input {
    Input::new(text.to_string())
}

pub fn input_request(key: Key) -> Option<InputRequest> {
    Some(match key {
        Key::Char(c) => InputRequest::InsertChar(c),
        Key::Backspace => InputRequest::DeletePrevChar,
        Key::Delete => InputRequest::DeleteNextChar,
        Key::Left => InputRequest::GoToPrevChar,
        Key::Right => InputRequest::GoToNextChar,
        Key::Home | Key::Ctrl('a') => InputRequest::GoToStart,
        Key::End | Key::Ctrl('e') => InputRequest::GoToEnd,
        Key::Ctrl('u') => InputRequest::DeleteLine,
        Key::Ctrl('w') => InputRequest::DeletePrevWord,
        _ => return None,
    })
}
