//! Every key press becomes a [`Msg`]; [`update`] changes the [`Model`]. It touches the
//! disk only through the library in [`Context`], so it runs in tests without a terminal.

use std::path::PathBuf;

use tui_input::{Input, InputRequest};

use super::model::{fields, Bench, Computed, Document, Field, Model, Overlay, PickFor, Prompt, View};
use crate::gas::Catalogue;
use crate::library::{Library, LibraryError, OnConflict, Saved};
use crate::recipe::{ComponentLine, FillTarget, Recipe, SourceLine};
use crate::settings::Resolved;
use crate::thermo::Model as Eos;

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
}

impl Context {
    /// The file a recipe of this library is: what its drafts belong to.
    fn identity(&self, name: &str) -> PathBuf {
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
    fn remove_draft(&self, name: &str, recovered: Option<&std::path::Path>) {
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

/// The recipe as the screen holds it, with the line being typed taken as typed (for the
/// draft: a value not yet kept with Enter is not lost when the session drops).
pub fn recipe_as_typed(doc: &Document) -> Recipe {
    let mut r = doc.recipe.clone();
    if let Some(input) = &doc.editing {
        set_field(&mut r, doc.current_field(), input.value());
    }
    r
}

/// Read the library into the model and offer any drafts. An empty library gets the demo
/// recipes first.
pub fn start(model: &mut Model, ctx: &mut Context) {
    start_with(model, ctx, true);
}

/// As [`start`]; `seed` false leaves an empty folder empty (a recipe file opened in a folder
/// that is not the library).
pub fn start_with(model: &mut Model, ctx: &mut Context, seed: bool) {
    model.limits = super::model::BenchLimits::of(&ctx.settings);
    if seed {
        match ctx.library.seed_demos_if_empty() {
            Ok(n) if n > 0 => model.status = format!("new library: copied {n} demo recipes in"),
            Ok(_) => {}
            Err(e) => model.status = format!("library: {e}"),
        }
    }
    refresh(model, ctx);
    let drafts = ctx.drafts();
    if !drafts.is_empty() {
        model.overlay = Overlay::Drafts { drafts, selected: 0 };
    }
}

pub fn refresh(model: &mut Model, ctx: &Context) {
    match ctx.library.list() {
        Ok(entries) => {
            model.library.screening = screen_entries(&entries, ctx, &mut model.library.screened);
            model.library.entries = entries;
        }
        Err(e) => model.status = format!("cannot list the library: {e}"),
    }
    let n = model.library.visible().len();
    model.library.selected = model.library.selected.min(n.saturating_sub(1));
}

/// The worst screening result of each library entry, planned and screened in parallel
/// (the order of the list is kept); a recipe whose file and the settings are as at the
/// last refresh keeps its result from `cache`.
fn screen_entries(
    entries: &[crate::library::Entry],
    ctx: &Context,
    cache: &mut super::model::ScreeningCache,
) -> Vec<Option<crate::checks::Severity>> {
    use rayon::prelude::*;
    let settings = format!("{:?}", ctx.settings);
    type Found = Option<(crate::library::Fingerprint, Option<crate::checks::Severity>)>;
    let results: Vec<(String, Found)> = entries
        .par_iter()
        .map(|e| {
            // The listing has read every recipe already.
            let Ok(summary) = &e.summary else { return (e.name.clone(), None) };
            if let Some((fp, s, worst)) = cache.get(&e.name) {
                if *fp == summary.fingerprint && *s == settings {
                    return (e.name.clone(), Some((*fp, *worst)));
                }
            }
            let c = Computed::screening_only(&summary.recipe, &ctx.catalogue, &ctx.settings);
            (e.name.clone(), Some((summary.fingerprint, c.map(|checks| crate::checks::worst(&checks)))))
        })
        .collect();
    cache.clear();
    results
        .into_iter()
        .map(|(name, r)| {
            let (fp, worst) = r?;
            cache.insert(name, (fp, settings.clone(), worst));
            worst
        })
        .collect()
}

pub(super) fn input(text: &str) -> Input {
    Input::new(text.to_string())
}

/// Recompute an open recipe after the settings changed.
pub(crate) fn recompute_doc(doc: &mut Document, ctx: &Context) {
    recompute(doc, ctx);
}

fn recompute(doc: &mut Document, ctx: &Context) {
    doc.computed = Computed::update(&doc.computed, &doc.recipe, &ctx.catalogue, &ctx.settings);
    fit_bench(doc);
    super::sheet::sync_from_record(doc, ctx);
}

/// Size the bench's per-step state to the plan and redo the corrected targets.
fn fit_bench(doc: &mut Document) {
    let steps = doc.computed.plan.as_ref().map_or(0, |p| p.steps.len());
    doc.bench.done.resize(steps, false);
    doc.bench.actual_pa.resize(steps, None);
    doc.bench.selected = doc.bench.selected.min(steps.saturating_sub(1));
    doc.bench.correct(doc.computed.plan.as_ref().ok());
}

fn open_document(name: &str, recipe: Recipe, opened: Option<crate::library::Opened>, ctx: &Context) -> Document {
    let saved = opened.as_ref().map_or_else(|| recipe.clone(), |o| o.recipe.clone());
    let computed = Computed::of(&recipe, &ctx.catalogue, &ctx.settings);
    let mut doc = Document {
        name: name.to_string(),
        opened,
        recipe,
        saved,
        undo: Vec::new(),
        redo: Vec::new(),
        field: 0,
        editing: None,
        computed,
        bench: Bench::default(),
        recovered_draft: None,
    };
    fit_bench(&mut doc);
    super::sheet::attach_record(&mut doc, ctx);
    doc
}

/// Start a new recipe called `name` in the editor (saved on the first `s`).
pub fn new_recipe(model: &mut Model, ctx: &Context, name: &str) {
    if let Err(e) = crate::library::check_name(name) {
        model.status = e.to_string();
        return;
    }
    let mut recipe = Recipe::blank();
    recipe.name = name.to_string();
    let mut doc = open_document(name, recipe, None, ctx);
    doc.saved = Recipe::blank();
    model.doc = Some(doc);
    model.view = View::Editor;
    model.status = format!("new recipe {name}: edit it, s saves");
}

/// Open a library recipe in the editor.
pub fn open(model: &mut Model, ctx: &Context, name: &str) {
    match ctx.library.open(name) {
        Ok(o) => {
            let recipe = o.recipe.clone();
            model.doc = Some(open_document(name, recipe, Some(o), ctx));
            model.view = View::Editor;
            model.status = format!("opened {name}");
        }
        Err(e) => model.status = e.to_string(),
    }
}

/// Change the recipe, keeping the previous state for undo, and recompute.
pub(crate) fn edit(doc: &mut Document, ctx: &Context, change: impl FnOnce(&mut Recipe)) {
    let before = doc.recipe.clone();
    change(&mut doc.recipe);
    if doc.recipe != before {
        doc.undo.push(before);
        doc.redo.clear();
        recompute(doc, ctx);
    }
}

pub(super) fn input_request(key: Key) -> Option<InputRequest> {
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

/// The top-level update.
pub fn update(model: &mut Model, msg: Msg, ctx: &mut Context) {
    match msg {
        Msg::Key(key) => on_key(model, key, ctx),
    }
}

fn on_key(model: &mut Model, key: Key, ctx: &mut Context) {
    // The verification pane, while open, takes every key.
    if let Some(pane) = model.verification.as_mut() {
        if super::verification::on_key(pane, key, ctx) == super::verification::After::Close {
            model.verification = None;
        }
        return;
    }
    // Overlays take the keys first.
    if !matches!(model.overlay, Overlay::None) {
        on_overlay_key(model, key, ctx);
        return;
    }
    // Typing into an editor field.
    if let Some(doc) = model.doc.as_mut() {
        if doc.editing.is_some() && model.view == View::Editor {
            on_field_typing(doc, key, ctx, &mut model.status);
            return;
        }
    }
    // Typing a library search.
    if model.view == View::Library && model.library.filter.is_some() && !matches!(key, Key::Up | Key::Down) {
        let filter = model.library.filter.as_mut().expect("checked");
        match key {
            Key::Esc => model.library.filter = None,
            Key::Enter => {
                if filter.value().is_empty() {
                    model.library.filter = None;
                } else {
                    open_selected(model, ctx);
                }
            }
            k => {
                if let Some(r) = input_request(k) {
                    filter.handle(r);
                    model.library.selected = 0;
                }
            }
        }
        return;
    }
    match key {
        Key::Char('?') | Key::F(1) => model.overlay = Overlay::Help,
        Key::Char('q') | Key::Ctrl('q') => {
            if model.doc.as_ref().is_some_and(Document::dirty) {
                model.overlay = Overlay::ConfirmQuit;
            } else {
                model.quit = true;
            }
        }
        Key::Tab => switch_view(model, 1),
        Key::BackTab => switch_view(model, -1),
        Key::Char(c @ '1'..='5') => {
            let v = View::ALL[(c as u8 - b'1') as usize];
            go_to(model, v);
        }
        Key::Char('s') | Key::F(2) if model.doc.is_some() && model.view != View::Library => {
            save_checked(model, ctx, None)
        }
        Key::Char('S') if model.doc.is_some() && model.view != View::Library => {
            model.overlay = Overlay::Prompt { purpose: Prompt::SaveNote, input: input("") }
        }
        Key::Esc if model.view != View::Library => model.view = View::Library,
        _ => match model.view {
            View::Library => on_library_key(model, key, ctx),
            View::Editor => on_editor_key(model, key, ctx),
            View::Sheet if key == Key::Char('p') => super::sheet::export(model, ctx),
            View::Sheet if key == Key::Char('m') => super::premixes::open(model),
            View::Sheet => super::sheet::on_key(model, key),
            View::Checks => on_checks_key(model, key),
            View::Models => {}
        },
    }
}

/// Keys of the Screening view: move in the order shown (worst first), remember the check
/// itself.
fn on_checks_key(model: &mut Model, key: Key) {
    // Move in the order shown (worst first), remember the check itself.
    let order = model
        .doc
        .as_ref()
        .and_then(|d| d.computed.checks.as_deref())
        .map(super::model::checks_worst_first)
        .unwrap_or_default();
    let at = order.iter().position(|&i| i == model.check_selected).unwrap_or(0);
    let to = match key {
        Key::Up | Key::Char('k') => at.saturating_sub(1),
        Key::Down | Key::Char('j') => (at + 1).min(order.len().saturating_sub(1)),
        _ => at,
    };
    if let Some(&i) = order.get(to) {
        model.check_selected = i;
    }
}

fn go_to(model: &mut Model, v: View) {
    if v != View::Library && model.doc.is_none() {
        model.status = "open a recipe first (Enter on a library line)".into();
    } else {
        model.view = v;
    }
}

fn switch_view(model: &mut Model, step: i32) {
    let n = View::ALL.len() as i32;
    let i = View::ALL.iter().position(|v| *v == model.view).unwrap_or(0) as i32;
    let next = View::ALL[((i + step).rem_euclid(n)) as usize];
    go_to(model, next);
}

fn selected_name(model: &Model) -> Option<String> {
    let vis = model.library.visible();
    vis.get(model.library.selected).map(|&i| model.library.entries[i].name.clone())
}

fn open_selected(model: &mut Model, ctx: &Context) {
    let Some(name) = selected_name(model) else { return };
    if model.doc.as_ref().is_some_and(|d| d.dirty() && d.name != name) {
        model.status =
            format!("save or undo the changes to {} first (s saves)", model.doc.as_ref().map_or("", |d| &d.name));
        return;
    }
    model.library.filter = None;
    open(model, ctx, &name);
}

fn on_library_key(model: &mut Model, key: Key, ctx: &mut Context) {
    let n = model.library.visible().len();
    match key {
        Key::Up | Key::Char('k') => model.library.selected = model.library.selected.saturating_sub(1),
        Key::Down | Key::Char('j') => model.library.selected = (model.library.selected + 1).min(n.saturating_sub(1)),
        Key::Home => model.library.selected = 0,
        Key::End => model.library.selected = n.saturating_sub(1),
        Key::Enter => open_selected(model, ctx),
        Key::Char('/') => model.library.filter = Some(input("")),
        Key::Char('t') => {
            let entries: Vec<(String, String)> = ctx.library.trash().into_iter().map(|(n, s, _)| (n, s)).collect();
            if entries.is_empty() {
                model.status = "the trash is empty".into();
            } else {
                model.overlay = Overlay::Trash { entries, selected: 0 };
            }
        }
        Key::Char('o') => {
            model.overlay = Overlay::Settings { selected: 0, values: Box::new(super::settings_editor::current(ctx)) };
            model.status = "settings: Enter changes the chosen one; they are written to settings.ron at once".into();
        }
        Key::Char('n') => model.overlay = Overlay::Prompt { purpose: Prompt::NewRecipe, input: input("") },
        Key::Char('v') => model.verification = Some(Box::new(super::verification::open(ctx))),
        Key::Char('y') => {
            let said = match ctx.library.sync() {
                Ok(done) => crate::library::sync::summary(&done),
                Err(e) => format!("not synced: {e}"),
            };
            refresh(model, ctx);
            model.status = said;
        }
        Key::Char('c') => {
            if let Some(name) = selected_name(model) {
                let proposal = format!("{name}-copy");
                model.overlay = Overlay::Prompt { purpose: Prompt::Duplicate(name), input: input(&proposal) };
            }
        }
        Key::Char('r') => {
            if let Some(name) = selected_name(model) {
                model.overlay = Overlay::Prompt { purpose: Prompt::Rename(name.clone()), input: input(&name) };
            }
        }
        Key::Char('d') | Key::Delete => {
            if let Some(name) = selected_name(model) {
                model.overlay = Overlay::ConfirmDelete(name);
            }
        }
        Key::Char('h') => {
            if let Some(name) = selected_name(model) {
                show_history(model, ctx, &name);
            }
        }
        Key::Char('g') => {
            refresh(model, ctx);
            model.status = "library read again".into();
        }
        _ => {}
    }
}

fn show_history(model: &mut Model, ctx: &Context, name: &str) {
    match ctx.library.history(name) {
        Ok(revisions) => {
            let selected = revisions.len().saturating_sub(1);
            let mut overlay =
                Overlay::History { name: name.to_string(), revisions, selected, changes: Vec::new(), base: None };
            history_changes(&mut overlay, ctx);
            model.overlay = overlay;
        }
        Err(e) => model.status = e.to_string(),
    }
}

/// The changes between two revisions, in the trade's words: from the marked one (or the
/// selected one) to the selected one (or the newest).
fn history_changes(overlay: &mut Overlay, ctx: &Context) {
    if let Overlay::History { name, revisions, selected, changes, base } = overlay {
        let newest = revisions.last().map(|r| r.revision);
        let chosen = revisions.get(*selected).map(|r| r.revision);
        let (from, to) = match base {
            Some(b) => (Some(*b), chosen),
            None => (chosen, newest),
        };
        *changes = match (from, to) {
            (Some(a), Some(b)) if a != b => match (ctx.library.revision(name, a), ctx.library.revision(name, b)) {
                (Ok(ra), Ok(rb)) => {
                    let list = crate::recipe::changes::describe(&ra, &rb);
                    if list.is_empty() {
                        vec![format!("revisions {a} and {b} are the same order")]
                    } else {
                        list
                    }
                }
                (Err(e), _) | (_, Err(e)) => vec![e.to_string()],
            },
            _ => vec!["the same revision: choose another, or Space to compare from this one".into()],
        };
    }
}

fn on_editor_key(model: &mut Model, key: Key, ctx: &mut Context) {
    let Some(doc) = model.doc.as_mut() else { return };
    let count = fields(&doc.recipe).len();
    let field = doc.current_field();
    match key {
        Key::Up | Key::Char('k') => doc.field = doc.field.saturating_sub(1),
        Key::Down | Key::Char('j') => doc.field = (doc.field + 1).min(count - 1),
        Key::PageUp => doc.field = doc.field.saturating_sub(10),
        Key::PageDown => doc.field = (doc.field + 10).min(count - 1),
        Key::Home => doc.field = 0,
        Key::End => doc.field = count - 1,
        Key::Char('u') | Key::Ctrl('z') => {
            if let Some(prev) = doc.undo.pop() {
                doc.redo.push(std::mem::replace(&mut doc.recipe, prev));
                recompute(doc, ctx);
                model.status = "undone".into();
            } else {
                model.status = "nothing to undo".into();
            }
        }
        Key::Ctrl('r') | Key::Ctrl('y') => {
            if let Some(next) = doc.redo.pop() {
                doc.undo.push(std::mem::replace(&mut doc.recipe, next));
                recompute(doc, ctx);
                model.status = "redone".into();
            } else {
                model.status = "nothing to redo".into();
            }
        }
        Key::Char('a') => {
            model.overlay = Overlay::Picker { input: input(""), selected: 0, purpose: PickFor::AddComponent };
        }
        Key::Char('g') => {
            if let Field::Component(i) = field {
                model.overlay =
                    Overlay::Picker { input: input(""), selected: 0, purpose: PickFor::ReplaceComponent(i) };
            }
        }
        Key::Char('b') => {
            if let Field::Component(i) = field {
                let fractions = doc.computed.order.as_ref().ok().map(|o| o.composition.fractions.clone());
                edit(doc, ctx, |r| {
                    for (k, c) in r.components.iter_mut().enumerate() {
                        if k != i && c.amount.trim().eq_ignore_ascii_case("balance") {
                            let x = fractions.as_ref().and_then(|f| f.get(k)).copied().unwrap_or(0.0);
                            c.amount = format!("{}%", (x * 1e6).round() / 1e4);
                        }
                    }
                    r.components[i].amount = "balance".into();
                });
                model.status = format!("{} is the balance gas", doc.recipe.components[i].gas);
            }
        }
        Key::Char('x') | Key::Delete => match field {
            Field::Component(i) | Field::Tolerance(i) => {
                let gas = doc.recipe.components[i].gas.clone();
                edit(doc, ctx, |r| {
                    r.components.remove(i);
                });
                doc.field = doc.field.min(fields(&doc.recipe).len() - 1);
                model.status = format!("{gas} removed (u undoes)");
            }
            Field::Source(i) => {
                edit(doc, ctx, |r| {
                    r.sources.remove(i);
                });
                doc.field = doc.field.min(fields(&doc.recipe).len() - 1);
            }
            _ => {}
        },
        Key::Enter | Key::Char('e') => match field {
            Field::AddComponent => {
                model.overlay = Overlay::Picker { input: input(""), selected: 0, purpose: PickFor::AddComponent }
            }
            Field::AddSource => {
                model.overlay = Overlay::Prompt { purpose: Prompt::AddSource, input: input("") };
            }
            Field::FillKind => {
                // The same fill in the next kind of target, converted with the plan (the
                // mass, the amount or the pressure it comes to); without a plan the value is
                // left empty for the user to type.
                let totals = doc.computed.plan.as_ref().ok().map(|p| p.totals.clone());
                let trimmed = |v: f64, unit: &str| {
                    let s = crate::units::Sig(v, 6).to_string();
                    let s = if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s };
                    format!("{s}{unit}")
                };
                let next = match (&doc.recipe.fill, &totals) {
                    (FillTarget::Pressure(_), Some(t)) => FillTarget::Mass(trimmed(t.mass_g, "g")),
                    (FillTarget::Mass(_), Some(t)) => FillTarget::Amount(trimmed(t.amount_mol, "mol")),
                    (FillTarget::Amount(_), Some(t)) => FillTarget::Pressure(trimmed(t.pressure_pa / 1e5, "bar")),
                    (FillTarget::Pressure(_), None) => FillTarget::Mass(String::new()),
                    (FillTarget::Mass(_), None) => FillTarget::Amount(String::new()),
                    (FillTarget::Amount(_), None) => FillTarget::Pressure(String::new()),
                };
                let converted = totals.is_some();
                edit(doc, ctx, |r| r.fill = next);
                model.status = if converted {
                    "fill target converted with the plan: the same fill".into()
                } else {
                    "the recipe does not plan yet: type the fill value on the next line".into()
                };
            }
            Field::Model => {
                edit(doc, ctx, |r| {
                    r.model = match r.model {
                        None => Some(Eos::ALL[0]),
                        Some(m) => {
                            let i = Eos::ALL.iter().position(|x| *x == m).unwrap_or(0);
                            Eos::ALL.get(i + 1).copied()
                        }
                    }
                });
            }
            f => doc.editing = Some(input(&field_text(&doc.recipe, f))),
        },
        _ => {}
    }
}

/// The text of a field, as edited.
pub fn field_text(r: &Recipe, f: Field) -> String {
    let opt = |o: &Option<String>| o.clone().unwrap_or_default();
    match f {
        Field::Name => r.name.clone(),
        Field::Description => r.description.clone(),
        Field::Order => r.order.clone(),
        Field::Component(i) => r.components[i].amount.clone(),
        Field::Tolerance(i) => opt(&r.components[i].tolerance),
        Field::WaterCapacity => r.cylinder.water_capacity.clone(),
        Field::WorkingPressure => r.cylinder.working_pressure.clone(),
        Field::TestPressure => r.cylinder.test_pressure.clone(),
        Field::Tare => opt(&r.cylinder.tare),
        Field::Serial => opt(&r.cylinder.serial),
        Field::FillKind => match r.fill {
            FillTarget::Pressure(_) => "pressure".into(),
            FillTarget::Mass(_) => "mass".into(),
            FillTarget::Amount(_) => "amount".into(),
        },
        Field::FillValue => match &r.fill {
            FillTarget::Pressure(v) | FillTarget::Mass(v) | FillTarget::Amount(v) => v.clone(),
        },
        Field::ReferenceTemperature => r.reference_temperature.clone(),
        Field::FillTemperature => opt(&r.fill_temperature),
        Field::Ambient => r.ambient.clone(),
        Field::BeforeFill => crate::recipe::BeforeFill::text(&r.before_fill),
        Field::Model => r.model.map_or("default".to_string(), |m| m.key().to_string()),
        Field::Source(i) => match &r.sources[i] {
            SourceLine::Pure(id) => id.clone(),
            SourceLine::Premix { name, mix, recipe: None } => format!("{name} = {mix}"),
            SourceLine::Premix { name, mix, recipe: Some(r) } => format!("{name} = {mix} @{r}"),
        },
        Field::FillOrder => r.fill_order.join(", "),
        Field::Notes => r.notes.clone(),
        Field::AddComponent | Field::AddSource => String::new(),
    }
}

pub(crate) fn set_field(r: &mut Recipe, f: Field, text: &str) {
    let t = text.trim().to_string();
    let opt = |t: &str| (!t.is_empty()).then(|| t.to_string());
    match f {
        Field::Name => r.name = t,
        Field::Description => r.description = t,
        Field::Order => r.order = t,
        Field::Component(i) => r.components[i].amount = t,
        Field::Tolerance(i) => r.components[i].tolerance = opt(&t),
        Field::WaterCapacity => r.cylinder.water_capacity = t,
        Field::WorkingPressure => r.cylinder.working_pressure = t,
        Field::TestPressure => r.cylinder.test_pressure = t,
        Field::Tare => r.cylinder.tare = opt(&t),
        Field::Serial => r.cylinder.serial = opt(&t),
        Field::FillValue => {
            r.fill = match &r.fill {
                FillTarget::Pressure(_) => FillTarget::Pressure(t),
                FillTarget::Mass(_) => FillTarget::Mass(t),
                FillTarget::Amount(_) => FillTarget::Amount(t),
            }
        }
        Field::ReferenceTemperature => r.reference_temperature = t,
        Field::FillTemperature => r.fill_temperature = opt(&t),
        Field::Ambient => r.ambient = t,
        // Text that does not read is refused before it gets here (see on_field_typing).
        Field::BeforeFill => {
            if let Ok(b) = crate::recipe::BeforeFill::parse_text(&t) {
                r.before_fill = b
            }
        }
        Field::Source(i) => r.sources[i] = parse_source(&t),
        Field::FillOrder => {
            r.fill_order = t.split(',').map(|s| s.trim().to_string()).filter(|s| !s.is_empty()).collect()
        }
        Field::Notes => r.notes = t,
        Field::FillKind | Field::Model | Field::AddComponent | Field::AddSource => {}
    }
}

/// `NAME = SPEC` is a premix, a bare id a pure gas.
fn parse_source(t: &str) -> SourceLine {
    match t.split_once('=') {
        Some((name, mix))
            if mix.contains('=') || mix.contains(',') || !name.trim().is_empty() && !mix.trim().is_empty() =>
        {
            // A trailing `@RECIPE` keeps the link to the library recipe that makes the premix.
            let (mix, recipe) = match mix.rsplit_once('@') {
                Some((m, r)) if !r.trim().is_empty() => (m, Some(r.trim().to_string())),
                _ => (mix, None),
            };
            SourceLine::Premix { name: name.trim().to_string(), mix: mix.trim().to_string(), recipe }
        }
        _ => SourceLine::Pure(t.trim().to_string()),
    }
}

fn on_field_typing(doc: &mut Document, key: Key, ctx: &Context, status: &mut String) {
    let field = doc.current_field();
    match key {
        Key::Esc => {
            doc.editing = None;
            *status = "edit cancelled".into();
        }
        Key::Enter => {
            let text = doc.editing.as_ref().map(|i| i.value().to_string()).unwrap_or_default();
            if field == Field::BeforeFill {
                if let Err(why) = crate::recipe::BeforeFill::parse_text(&text) {
                    // The entry stays open with what was typed, and the message says what reads.
                    *status = why;
                    return;
                }
            }
            doc.editing = None;
            edit(doc, ctx, |r| set_field(r, field, &text));
            let doubt = match (&doc.computed.order, field) {
                (Ok(o), Field::Tolerance(_)) => crate::recipe::tolerance_doubts(o, &ctx.catalogue).into_iter().next(),
                _ => None,
            };
            *status = match (&doc.computed.plan, doubt) {
                (Ok(_), Some(doubt)) => doubt,
                (Ok(_), None) => "recomputed".into(),
                (Err(e), _) => format!("not plannable yet: {}", first_line(e)),
            };
        }
        k => {
            if let (Some(req), Some(inp)) = (input_request(k), doc.editing.as_mut()) {
                inp.handle(req);
            }
        }
    }
}

fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or(s)
}

fn on_overlay_key(model: &mut Model, key: Key, ctx: &mut Context) {
    let overlay = std::mem::replace(&mut model.overlay, Overlay::None);
    match overlay {
        Overlay::None => {}
        Overlay::Help => {}
        Overlay::ConfirmQuit => match key {
            Key::Char('y') => {
                // The user chose to drop the edits: no draft of them should linger.
                if let Some(doc) = &model.doc {
                    ctx.remove_draft(&doc.name, doc.recovered_draft.as_deref());
                }
                model.quit = true;
            }
            Key::Char('s') => {
                save_checked(model, ctx, None);
                if !model.doc.as_ref().is_some_and(Document::dirty) {
                    model.quit = true;
                }
            }
            _ => model.status = "not quitting".into(),
        },
        Overlay::ConfirmDelete(name) => {
            if key == Key::Char('y') {
                match ctx.library.delete(&name, &(ctx.now)()) {
                    Ok(to) => model.status = format!("{name} moved to {}", to.display()),
                    Err(e) => model.status = e.to_string(),
                }
                if model.doc.as_ref().is_some_and(|d| d.name == name) {
                    model.doc = None;
                }
                refresh(model, ctx);
            } else {
                model.status = "nothing deleted".into();
            }
        }
        Overlay::Premixes { selected } => super::premixes::on_key(model, ctx, key, selected),
        Overlay::Trash { entries, mut selected } => match key {
            Key::Up | Key::Char('k') => {
                selected = selected.saturating_sub(1);
                model.overlay = Overlay::Trash { entries, selected };
            }
            Key::Down | Key::Char('j') => {
                selected = (selected + 1).min(entries.len().saturating_sub(1));
                model.overlay = Overlay::Trash { entries, selected };
            }
            Key::Enter | Key::Char('y') => {
                let Some((name, deleted)) = entries.get(selected).cloned() else { return };
                match ctx.library.undelete(&name, None, Some(&deleted)) {
                    Ok(back) => {
                        model.status = format!("{back} is back in the library");
                        refresh(model, ctx);
                    }
                    Err(e) => model.status = e.to_string(),
                }
            }
            _ => {}
        },
        Overlay::Settings { mut selected, values } => match key {
            Key::Up | Key::Char('k') => {
                selected = selected.saturating_sub(1);
                model.overlay = Overlay::Settings { selected, values };
            }
            Key::Down | Key::Char('j') => {
                selected = (selected + 1).min(super::settings_editor::FIELDS.len() - 1);
                model.overlay = Overlay::Settings { selected, values };
            }
            Key::Enter | Key::Char(' ') => super::settings_editor::on_enter(model, ctx, selected),
            _ => model.status = "settings closed".into(),
        },
        Overlay::ConfirmSaveInvalid { note, .. } => {
            if key == Key::Char('y') {
                save(model, ctx, note, false);
            } else {
                model.status = "not saved: mend the recipe first (the Recipe view shows what is wrong)".into();
            }
        }
        Overlay::ConfirmStop(finding) => {
            if key == Key::Char('y') {
                if let Some(doc) = model.doc.as_mut() {
                    doc.bench.stop_accepted = Some(finding);
                }
                model.status = "steps unlocked on your own judgement: Space ticks, w weighs".into();
            } else {
                model.status = "steps stay locked: change the recipe so that nothing is at stop".into();
            }
        }
        Overlay::Conflict => match key {
            Key::Char('r') => {
                if let Some(name) = model.doc.as_ref().map(|d| d.name.clone()) {
                    open(model, ctx, &name);
                    model.status = format!("reloaded {name} from disk; your edits were dropped");
                }
            }
            Key::Char('a') => model.overlay = Overlay::Prompt { purpose: Prompt::SaveAs, input: input("") },
            Key::Char('o') => save(model, ctx, None, true),
            _ => model.status = "not saved: the file on disk is unchanged".into(),
        },
        Overlay::Prompt { purpose, mut input } => match key {
            Key::Esc => model.status = "cancelled".into(),
            Key::Enter => on_prompt(model, ctx, purpose, input.value().trim().to_string()),
            k => {
                if let Some(r) = input_request(k) {
                    input.handle(r);
                }
                model.overlay = Overlay::Prompt { purpose, input };
            }
        },
        Overlay::Picker { mut input, mut selected, purpose } => {
            let hits = super::picker::matches(&ctx.catalogue, input.value());
            match key {
                Key::Esc => {}
                Key::Up => {
                    selected = selected.saturating_sub(1);
                    model.overlay = Overlay::Picker { input, selected, purpose };
                }
                Key::Down => {
                    selected = (selected + 1).min(hits.len().saturating_sub(1));
                    model.overlay = Overlay::Picker { input, selected, purpose };
                }
                Key::Enter if hits.is_empty() => {
                    // Nothing matches: say so and keep the picker open.
                    model.status = format!(
                        "no gas matches {:?}: type a formula (CO2), a name (propane) or a CAS number (Esc cancels)",
                        input.value()
                    );
                    model.overlay = Overlay::Picker { input, selected, purpose };
                }
                Key::Enter => {
                    if let (Some(&g), Some(doc)) = (hits.get(selected), model.doc.as_mut()) {
                        let id = ctx.catalogue.gas(g).id().to_string();
                        // A gas already in the recipe (however it was written there) is not
                        // added twice: the cursor goes to its row instead.
                        let existing = doc
                            .recipe
                            .components
                            .iter()
                            .position(|c| ctx.catalogue.index_of(&c.gas) == Some(g))
                            .filter(|&i| purpose != PickFor::ReplaceComponent(i));
                        match (purpose, existing) {
                            (_, Some(i)) => {
                                doc.field =
                                    fields(&doc.recipe).iter().position(|f| *f == Field::Component(i)).unwrap_or(0);
                                model.status = format!("{id} is already in the recipe: the cursor is on its row");
                            }
                            (PickFor::AddComponent, None) => {
                                edit(doc, ctx, |r| {
                                    let at = r.components.len().saturating_sub(1);
                                    let line = ComponentLine { gas: id.clone(), amount: "1%".into(), tolerance: None };
                                    // New gases go before the balance gas, which usually closes the list.
                                    if r.components.last().is_some_and(|c| c.amount == "balance") {
                                        r.components.insert(at, line);
                                    } else {
                                        r.components.push(line);
                                    }
                                });
                                let i = doc.recipe.components.iter().position(|c| c.gas == id).unwrap_or(0);
                                doc.field =
                                    fields(&doc.recipe).iter().position(|f| *f == Field::Component(i)).unwrap_or(0);
                                doc.editing = Some(Input::new("1%".into()));
                                model.status = format!("{id} added: type its amount");
                            }
                            (PickFor::ReplaceComponent(i), None) => {
                                edit(doc, ctx, |r| r.components[i].gas = id.clone());
                                model.status = format!("component is now {id}");
                            }
                        }
                    }
                }
                k => {
                    if let Some(r) = input_request(k) {
                        input.handle(r);
                        selected = 0;
                    }
                    model.overlay = Overlay::Picker { input, selected, purpose };
                }
            }
        }
        Overlay::History { name, revisions, mut selected, changes, mut base } => match key {
            Key::Up | Key::Char('k') | Key::Down | Key::Char('j') | Key::Char(' ') => {
                match key {
                    Key::Up | Key::Char('k') => selected = selected.saturating_sub(1),
                    Key::Down | Key::Char('j') => selected = (selected + 1).min(revisions.len().saturating_sub(1)),
                    _ => {
                        let here = revisions.get(selected).map(|r| r.revision);
                        base = if base == here { None } else { here };
                    }
                }
                let mut o = Overlay::History { name, revisions, selected, changes, base };
                history_changes(&mut o, ctx);
                model.overlay = o;
            }
            Key::Char('r') => {
                let rev = revisions.get(selected).map_or(0, |r| r.revision);
                let open_here = model.doc.as_ref().filter(|d| d.name == name);
                if open_here.is_some_and(Document::dirty) {
                    model.status = format!("{name} has unsaved edits: save them (s) or undo them before restoring");
                    model.overlay = Overlay::History { name, revisions, selected, changes, base };
                    return;
                }
                let reload = open_here.is_some();
                match ctx.library.restore(&name, rev, &(ctx.now)()) {
                    Ok(Saved::Written { revision, .. }) => {
                        // The open editor shows what is now on disk, so that the next save
                        // builds on the restored revision.
                        if reload {
                            let view = model.view;
                            open(model, ctx, &name);
                            model.view = view;
                        }
                        model.status = format!("restored revision {rev} of {name} as revision {revision}")
                    }
                    Ok(Saved::Unchanged { .. }) => model.status = "that revision is the current content".into(),
                    Err(e) => model.status = e.to_string(),
                }
                refresh(model, ctx);
            }
            Key::Esc | Key::Char('q') => {}
            _ => model.overlay = Overlay::History { name, revisions, selected, changes, base },
        },
        Overlay::Drafts { drafts, mut selected } => match key {
            Key::Up => {
                selected = selected.saturating_sub(1);
                model.overlay = Overlay::Drafts { drafts, selected };
            }
            Key::Down => {
                selected = (selected + 1).min(drafts.len().saturating_sub(1));
                model.overlay = Overlay::Drafts { drafts, selected };
            }
            Key::Enter | Key::Char('y') => {
                if let Some(d) = drafts.get(selected) {
                    recover_draft(model, ctx, d);
                }
            }
            Key::Char('d') => {
                let Some(gone) = drafts.get(selected).cloned() else { return };
                let _ = std::fs::remove_file(&gone.path);
                model.status = format!("draft of {} discarded", gone.name);
                let rest: Vec<_> = drafts.into_iter().filter(|d| d.path != gone.path).collect();
                if !rest.is_empty() {
                    model.overlay = Overlay::Drafts { drafts: rest, selected: 0 };
                }
            }
            _ => model.status = "drafts kept for later".into(),
        },
    }
}

fn recover_draft(model: &mut Model, ctx: &Context, draft: &super::drafts::DraftEntry) {
    match super::drafts::read(&draft.path) {
        Ok(recipe) => {
            let name = draft.name.as_str();
            let opened = ctx.library.open(name).ok();
            let mut doc = open_document(name, recipe, opened, ctx);
            if doc.opened.is_none() {
                doc.saved = Recipe::blank();
            }
            doc.recovered_draft = Some(draft.path.clone());
            model.doc = Some(doc);
            model.view = View::Editor;
            model.status = format!("recovered the unsaved edits of {}: s saves them", draft.file.display());
        }
        Err(e) => model.status = format!("the draft cannot be read: {e}"),
    }
}

fn on_prompt(model: &mut Model, ctx: &mut Context, purpose: Prompt, text: String) {
    let now = (ctx.now)();
    match purpose {
        Prompt::Duplicate(from) => match ctx.library.duplicate(&from, &text, &now) {
            Ok(_) => {
                model.status = format!("{from} copied to {text}");
                refresh(model, ctx);
            }
            Err(e) => reopen_prompt(model, Prompt::Duplicate(from), &text, &e.to_string()),
        },
        Prompt::Rename(from) => match ctx.library.rename(&from, &text) {
            Ok(()) => {
                if let Some(doc) = model.doc.as_mut().filter(|d| d.name == from) {
                    doc.name = text.clone();
                    doc.opened = ctx.library.open(&text).ok();
                }
                model.status = format!("{from} renamed to {text}");
                refresh(model, ctx);
            }
            Err(e) => reopen_prompt(model, Prompt::Rename(from), &text, &e.to_string()),
        },
        Prompt::NewRecipe => match crate::library::check_name(&text) {
            Ok(()) if ctx.library.open(&text).is_ok() => reopen_prompt(
                model,
                Prompt::NewRecipe,
                &text,
                &format!("a recipe {text:?} already exists; choose another name"),
            ),
            Ok(()) => new_recipe(model, ctx, &text),
            Err(e) => reopen_prompt(model, Prompt::NewRecipe, &text, &e.to_string()),
        },
        Prompt::SaveAs => {
            if let Some(doc) = model.doc.as_mut() {
                match ctx.library.save_as(&text, &doc.recipe, &now) {
                    Ok(Saved::Written { revision, .. }) | Ok(Saved::Unchanged { revision }) => {
                        ctx.remove_draft(&doc.name, doc.recovered_draft.take().as_deref());
                        doc.name = text.clone();
                        doc.opened = ctx.library.open(&text).ok();
                        if let Some(o) = &doc.opened {
                            doc.recipe = o.recipe.clone();
                            doc.saved = o.recipe.clone();
                        }
                        model.status = format!("saved as {text}, rev {revision}");
                        refresh(model, ctx);
                    }
                    Err(e) => reopen_prompt(model, Prompt::SaveAs, &text, &e.to_string()),
                }
            }
        }
        Prompt::SaveNote => save_checked(model, ctx, Some(text)),
        Prompt::Setting(field) => super::settings_editor::on_value(model, ctx, field, &text),
        Prompt::MeasuredTemperature => super::sheet::on_temperature(model, ctx, &text),
        Prompt::ActualReading(step) => super::sheet::on_pressure(model, ctx, step, &text),
        Prompt::Weighing => super::sheet::on_weighing(model, ctx, &text),
        Prompt::StepSource => super::sheet::on_source(model, ctx, &text),
        Prompt::Correction => super::sheet::on_correction(model, ctx, &text),
        Prompt::CorrectionReason(pending) => super::sheet::on_correction_reason(model, ctx, &pending, &text),
        Prompt::Operator => super::sheet::on_person(model, ctx, false, &text),
        Prompt::Balance => super::sheet::on_person(model, ctx, true, &text),
        Prompt::Air(k) => super::sheet::on_air(model, ctx, k, &text),
        Prompt::AddSource => {
            if let Some(doc) = model.doc.as_mut() {
                if !text.is_empty() {
                    edit(doc, ctx, |r| r.sources.push(parse_source(&text)));
                }
            }
        }
    }
}

/// A refused name keeps its dialog open with the text typed and says why, so that the
/// next keystrokes go to the dialog, not to the library's commands.
fn reopen_prompt(model: &mut Model, purpose: Prompt, text: &str, why: &str) {
    model.overlay = Overlay::Prompt { purpose, input: input(text) };
    model.status = format!("{why} (Esc cancels)");
}

/// Save the open recipe, asking first when it does not validate (it would not plan).
fn save_checked(model: &mut Model, ctx: &mut Context, note: Option<String>) {
    let problem = model.doc.as_ref().and_then(|d| d.computed.order.as_ref().err().cloned());
    match problem {
        Some(why) => model.overlay = Overlay::ConfirmSaveInvalid { why, note },
        None => save(model, ctx, note, false),
    }
}

/// Save the open recipe to the library.
fn save(model: &mut Model, ctx: &mut Context, note: Option<String>, overwrite: bool) {
    let Some(doc) = model.doc.as_mut() else { return };
    let now = (ctx.now)();
    let on_conflict = if overwrite { OnConflict::Overwrite } else { OnConflict::Refuse };
    match ctx.library.save(&doc.name, &doc.recipe, doc.opened.as_ref(), note.as_deref(), &now, on_conflict) {
        Ok(saved) => {
            ctx.remove_draft(&doc.name, doc.recovered_draft.take().as_deref());
            doc.opened = ctx.library.open(&doc.name).ok();
            if let Some(o) = &doc.opened {
                doc.recipe = o.recipe.clone();
                doc.saved = o.recipe.clone();
            }
            model.status = match saved {
                Saved::Unchanged { revision } => format!("nothing changed; still rev {revision}"),
                Saved::Written { revision, git: Some(Err(e)), .. } => {
                    format!("saved rev {revision}; not committed: {e}")
                }
                Saved::Written { revision, .. } => format!("saved rev {revision}"),
            };
            refresh(model, ctx);
        }
        Err(LibraryError::ChangedOnDisk(_)) => model.overlay = Overlay::Conflict,
        Err(LibraryError::Exists(name)) => {
            model.status = format!("a recipe {name} already exists: choose another name");
            model.overlay = Overlay::Prompt { purpose: Prompt::SaveAs, input: Input::new(String::new()) };
        }
        Err(e) => model.status = format!("not saved: {e}"),
    }
}
