//! The open recipe and the library as the screen holds them: reading the library in,
//! opening, starting, editing (with undo), recomputing and saving a recipe. Views and
//! overlays call these; they know nothing of the keys.

use tui_input::Input;

use super::context::Context;
use super::model::{Bench, Computed, Document, Model, Overlay, Prompt, View};
use crate::library::{LibraryError, OnConflict, Saved};
use crate::recipe::Recipe;

/// The recipe as the screen holds it, with the line being typed taken as typed (for the
/// draft: a value not yet kept with Enter is not lost when the session drops).
pub fn recipe_as_typed(doc: &Document) -> Recipe {
    let mut r = doc.recipe.clone();
    if let Some(input) = &doc.editing {
        super::views::editor::set_field(&mut r, doc.current_field(), input.value());
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
            let library = &mut model.library;
            library.screening = screen_entries(&entries, ctx, &mut library.screened, &mut library.pending);
            model.library.entries = entries;
            refresh_filling(model, ctx);
        }
        Err(e) => model.status = format!("cannot list the library: {e}"),
    }
    let n = model.library.visible().len();
    model.library.selected = model.library.selected.min(n.saturating_sub(1));
}

/// The comparison of following each model's readings for the Models view, made once per
/// plan (the screen's recompute leaves it out).
pub fn ensure_following(model: &mut Model, ctx: &Context) {
    let Some(doc) = model.doc.as_mut() else { return };
    if doc.computed.following.is_some() {
        return;
    }
    let Ok(order) = &doc.computed.order else { return };
    let options = crate::plan::PlanOptions { skip_following: false, ..Computed::options(&ctx.settings) };
    let following = crate::plan::plan(order, &ctx.catalogue, &options).map(|p| p.following).unwrap_or_default();
    let ids = doc
        .computed
        .plan
        .as_ref()
        .map_or(Vec::new(), |p| p.gases.iter().map(|&g| ctx.catalogue.gas(g).id().to_string()).collect());
    doc.computed.following = Some((ids, following));
}

/// Which recipes have a fill in progress (a record not finished), for the Library's list.
pub fn refresh_filling(model: &mut Model, ctx: &Context) {
    model.library.filling = ctx
        .library
        .records()
        .unwrap_or_default()
        .into_iter()
        .filter_map(|(_, r)| r.ok().filter(|r| r.finished.is_none()).map(|r| r.recipe))
        .collect();
}

/// The worst screening result of each library entry, planned and screened in parallel
/// (the order of the list is kept); a recipe whose file and the settings are as at the
/// last refresh keeps its result from `cache`. Where the screen has another thread
/// (`ctx.beside`), the recipes not in the cache are screened there and marked `pending`
/// (the list comes at once; [`take_beside`] fills their results in as they come).
fn screen_entries(
    entries: &[crate::library::Entry],
    ctx: &Context,
    cache: &mut super::model::ScreeningCache,
    pending: &mut super::model::Pending,
) -> Vec<Option<crate::checks::Severity>> {
    use rayon::prelude::*;
    let settings = format!("{:?}", ctx.settings);
    let cached = |summary: &crate::library::Summary, name: &str| {
        cache.get(name).filter(|(fp, s, _)| *fp == summary.fingerprint && *s == settings).map(|(_, _, w)| *w)
    };
    let later: Vec<(String, crate::library::Fingerprint, Recipe)> = match &ctx.beside {
        Some(_) => entries
            .iter()
            .filter_map(|e| {
                let summary = e.summary.as_ref().ok()?;
                let on_the_way =
                    pending.get(&e.name).is_some_and(|(fp, s)| *fp == summary.fingerprint && *s == settings);
                let known = cached(summary, &e.name).is_some() || on_the_way;
                (!known).then(|| (e.name.clone(), summary.fingerprint, summary.recipe.clone()))
            })
            .collect(),
        None => Vec::new(),
    };
    type Found = Option<(crate::library::Fingerprint, Option<crate::checks::Severity>)>;
    let results: Vec<(String, Found)> = entries
        .par_iter()
        .map(|e| {
            // The listing has read every recipe already.
            let Ok(summary) = &e.summary else { return (e.name.clone(), None) };
            if let Some(worst) = cached(summary, &e.name) {
                return (e.name.clone(), Some((summary.fingerprint, worst)));
            }
            if ctx.beside.is_some() {
                return (e.name.clone(), None); // screened on the other thread
            }
            let c = Computed::screening_only(&summary.recipe, &ctx.catalogue, &ctx.settings);
            (e.name.clone(), Some((summary.fingerprint, c.map(|checks| crate::checks::worst(&checks)))))
        })
        .collect();
    cache.clear();
    let out = results
        .into_iter()
        .map(|(name, r)| {
            let (fp, worst) = r?;
            cache.insert(name, (fp, settings.clone(), worst));
            worst
        })
        .collect();
    if let (Some(beside), false) = (&ctx.beside, later.is_empty()) {
        pending.extend(later.iter().map(|(name, fp, _)| (name.clone(), (*fp, settings.clone()))));
        let (tx, catalogue, resolved) = (beside.screened_tx.clone(), ctx.catalogue.clone(), ctx.settings.clone());
        std::thread::spawn(move || {
            later.par_iter().for_each_with(tx, |tx, (name, fp, recipe)| {
                let worst = Computed::screening_only(recipe, &catalogue, &resolved).map(|c| crate::checks::worst(&c));
                // The screen may have gone: nothing to tell then.
                let _ = tx.send((name.clone(), *fp, settings.clone(), worst));
            });
        });
    }
    out
}

/// Take in the library screenings that came back from the other thread: each one whose
/// recipe file is still the one screened, under the same settings, goes into the cache
/// and the list. True where the list changed.
fn take_screened(model: &mut super::model::Model, ctx: &Context) -> bool {
    let Some(beside) = &ctx.beside else { return false };
    let came: Vec<super::context::Screened> = match beside.screened_rx.lock() {
        Ok(rx) => rx.try_iter().collect(),
        Err(_) => return false,
    };
    if came.is_empty() {
        return false;
    }
    let settings = format!("{:?}", ctx.settings);
    let library = &mut model.library;
    let mut changed = false;
    for (name, fp, screened_with, worst) in came {
        if library.pending.get(&name).is_some_and(|(p, s)| *p == fp && *s == screened_with) {
            library.pending.remove(&name);
            changed = true;
        }
        // The entries are in name order (`Library::list` sorts them): found by bisection,
        // with a scan where a list in another order misses (each result was a scan).
        let found = library.entries.binary_search_by(|e| e.name.as_str().cmp(name.as_str())).ok();
        let Some(i) = found.or_else(|| library.entries.iter().position(|e| e.name == name)) else { continue };
        let current = library.entries[i].summary.as_ref().is_ok_and(|s| s.fingerprint == fp);
        if current && screened_with == settings {
            library.cache_and_show(i, name, fp, settings.clone(), worst);
            changed = true;
        }
    }
    changed
}

/// Recompute an open recipe after the settings changed.
pub(crate) fn recompute_doc(doc: &mut Document, ctx: &Context) {
    recompute(doc, ctx);
}

pub(crate) fn recompute(doc: &mut Document, ctx: &Context) {
    doc.computed = computed_for(Some(&doc.computed), &doc.recipe, ctx);
    fit_bench(doc);
    super::views::sheet::sync_from_record(doc, ctx);
}

/// The results for the recipe: reused where the edit leaves their inputs alone; else
/// computed at once or, where the screen computes the reference equations' answer beside
/// it (`ctx.beside`), Peng–Robinson's quick estimate of the phases now, marked, and the
/// reference's answer on another thread, taken in by [`take_beside`] without blocking
/// typing.
fn computed_for(previous: Option<&Computed>, recipe: &Recipe, ctx: &Context) -> Computed {
    let fresh = previous.is_none_or(|p| p.key != Computed::key_of(recipe, &ctx.settings));
    match (&ctx.beside, previous) {
        (Some(beside), _) if fresh => {
            let estimate = Computed::estimate(recipe, &ctx.catalogue, &ctx.settings);
            let tx = beside.tx.clone();
            let (recipe, catalogue, settings) = (recipe.clone(), ctx.catalogue.clone(), ctx.settings.clone());
            std::thread::spawn(move || {
                let full = Computed::of(&recipe, &catalogue, &settings);
                // The screen may have gone: nothing to tell then.
                let _ = tx.send((full.key.clone(), full));
            });
            estimate
        }
        (_, Some(previous)) => Computed::update(previous, recipe, &ctx.catalogue, &ctx.settings),
        (_, None) => Computed::of(recipe, &ctx.catalogue, &ctx.settings),
    }
}

/// Take in the reference equations' answers that came back: one for the open recipe as it
/// stands (the same inputs) replaces the estimate on the screen, with any light edit made
/// since (a tare moves the scale readings). True where the screen changed.
pub fn take_beside(model: &mut super::model::Model, ctx: &Context) -> bool {
    let Some(beside) = &ctx.beside else { return false };
    let mut changed = take_screened(model, ctx);
    let came: Vec<(String, Computed)> = match beside.rx.lock() {
        Ok(rx) => rx.try_iter().collect(),
        Err(_) => return false,
    };
    for (key, full) in came {
        let Some(doc) = model.doc.as_mut() else { continue };
        if doc.computed.phases_estimated && doc.computed.key == key {
            doc.computed = Computed::update(&full, &doc.recipe, &ctx.catalogue, &ctx.settings);
            fit_bench(doc);
            super::views::sheet::sync_from_record(doc, ctx);
            changed = true;
        }
    }
    changed
}

/// Size the bench's per-step state to the plan and redo the corrected targets.
fn fit_bench(doc: &mut Document) {
    let steps = doc.computed.plan.as_ref().map_or(0, |p| p.steps.len());
    doc.bench.done.resize(steps, false);
    doc.bench.actual_pa.resize(steps, None);
    doc.bench.selected = doc.bench.selected.min(steps.saturating_sub(1));
    doc.bench.correct(doc.computed.plan.as_ref().ok());
}

pub(crate) fn open_document(
    name: &str,
    recipe: Recipe,
    opened: Option<crate::library::Opened>,
    ctx: &Context,
) -> Document {
    let saved = opened.as_ref().map_or_else(|| recipe.clone(), |o| o.recipe.clone());
    let computed = computed_for(None, &recipe, ctx);
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
        last_model: None,
    };
    doc.last_model = doc.computed.plan.as_ref().ok().map(|p| p.model);
    fit_bench(&mut doc);
    super::views::sheet::attach_record(&mut doc, ctx);
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
    model.check_selected = None;
    model.view = View::Editor;
    model.status = format!("new recipe {name}: edit it, s saves");
}

/// Open a library recipe in the editor.
pub fn open(model: &mut Model, ctx: &Context, name: &str) {
    match ctx.library.open(name) {
        Ok(o) => {
            let recipe = o.recipe.clone();
            model.doc = Some(open_document(name, recipe, Some(o), ctx));
            model.check_selected = None;
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

/// Save the open recipe, asking first when it does not validate (it would not plan).
pub(crate) fn save_checked(model: &mut Model, ctx: &mut Context, note: Option<String>) {
    let problem = model.doc.as_ref().and_then(|d| d.computed.order.as_ref().err().cloned());
    match problem {
        Some(why) => model.overlay = Overlay::ConfirmSaveInvalid { why, note },
        None => save(model, ctx, note, false),
    }
}

/// Save the open recipe to the library.
pub(crate) fn save(model: &mut Model, ctx: &mut Context, note: Option<String>, overwrite: bool) {
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
            let written = match &saved {
                Saved::Written { revision, .. } => Some(*revision),
                Saved::Unchanged { .. } => None,
            };
            model.status = match saved {
                Saved::Unchanged { revision } => format!("nothing changed; still rev {revision}"),
                Saved::Written { revision, git: Some(Err(e)), .. } => {
                    format!("saved rev {revision}; not committed: {e}")
                }
                Saved::Written { revision, .. } => format!("saved rev {revision}"),
            };
            // A fill started on an earlier revision goes on against that revision's plan.
            if let (Some(revision), Some(rec)) = (written, &doc.bench.record) {
                if rec.record.recipe_revision != revision {
                    model.status.push_str(&format!(
                        "; WARNING: the fill in progress (record {}) was started on rev {}: it is certified \
                         against that revision, not this one",
                        rec.id, rec.record.recipe_revision
                    ));
                }
            }
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

pub(crate) fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or(s)
}
