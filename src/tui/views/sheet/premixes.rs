//! The premixes a blend takes from its own library recipes, on the blend's Fill sheet: for
//! the chosen step, whether its premix is made yet (no fill, a fill in progress, a finished
//! fill whose record gives its certified composition), and `g` to open the premix's recipe
//! and fill it. A finished premix fill is then offered as the step's source.

use crate::recipe::SourceLine;
use crate::tui::context::Context;
use crate::tui::model::{Document, Model, View};

/// The library recipe of the premix that step `k` doses, where the blend names one.
pub fn premix_recipe_of(doc: &Document, k: usize) -> Option<String> {
    let step = doc.computed.plan.as_ref().ok()?.steps.get(k)?;
    doc.recipe.sources.iter().find_map(|l| match l {
        SourceLine::Premix { name, recipe: Some(r), .. } if *name == step.source => Some(r.clone()),
        _ => None,
    })
}

/// Where the premix of step `k` stands, in a line for the sheet; None for a step that doses
/// no premix recipe of ours.
pub fn premix_state(doc: &Document, ctx: &Context, k: usize) -> Option<String> {
    let recipe = premix_recipe_of(doc, k)?;
    let step = k + 1;
    if ctx.library.open(&recipe).is_err() {
        return Some(format!("step {step} takes premix {recipe}, which is not in the library: type its analysis (l)"));
    }
    if let Some(id) = ctx.library.finished_records_of(&recipe).first() {
        return Some(format!(
            "step {step} takes premix {recipe}: made, record {id}; its certified composition is the source \
             (offered when the step starts; l record:{id})"
        ));
    }
    Some(match ctx.library.record_in_progress(&recipe) {
        Some(r) => format!("step {step} takes premix {recipe}: its fill is in progress (record {}); g opens it", r.id),
        None => format!("step {step} takes premix {recipe}: not filled yet; fill it first, g opens it"),
    })
}

/// Open the premix recipe of the chosen step on its own Fill sheet.
pub fn go_to_premix(model: &mut Model, ctx: &Context) {
    let Some(doc) = model.doc.as_ref() else { return };
    let Some(recipe) = premix_recipe_of(doc, doc.bench.selected) else {
        model.status = format!(
            "step {} doses no premix recipe of the library (m proposes premixes for steps too small to dose)",
            doc.bench.selected + 1
        );
        return;
    };
    if doc.dirty() {
        model.status = format!("save the blend first (s): it names {recipe} as its source");
        return;
    }
    let blend = doc.name.clone();
    crate::tui::document::open(model, ctx, &recipe);
    if model.doc.as_ref().is_some_and(|d| d.name == recipe) {
        model.view = View::Sheet;
        model.status = format!(
            "premix {recipe} for {blend}: fill it here (w weighs), C certifies it; then open {blend} again, its step \
             takes this fill's record"
        );
    }
}

/// The blends of the library (as the Library's list read them) that take `premix` (a
/// recipe name) as a source.
pub fn blends_taking(entries: &[crate::library::Entry], premix: &str) -> Vec<String> {
    entries
        .iter()
        .filter(|e| e.name != premix)
        .filter(|e| {
            e.summary.as_ref().is_ok_and(|s| {
                s.recipe.sources.iter().any(|l| matches!(l, SourceLine::Premix { recipe: Some(r), .. } if r == premix))
            })
        })
        .map(|e| e.name.clone())
        .collect()
}
