//! The premix cascade on the screen: `m` on the Fill sheet shows what the plan proposes for
//! additions too small to dose, and `a` accepts it: each stage becomes a recipe of its own
//! in the library (or links to the one already there), and the open blend takes the last
//! stage as the source of that gas. The blend's change is an edit like any other: undone
//! with `u`, written with `s`.

use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::Frame;

use crate::library::LibraryError;
use crate::plan::premix;
use crate::tui::context::{Context, Key};
use crate::tui::document::{edit, refresh};
use crate::tui::model::{Model, Overlay};
use crate::tui::theme::{boxed, centered, Theme};

/// Open the overlay, or say that nothing needs a premix.
pub fn open(model: &mut Model) {
    let Some(doc) = model.doc.as_ref() else { return };
    match &doc.computed.plan {
        Ok(p) if !p.premixes.is_empty() => model.overlay = Overlay::Premixes { selected: 0, scroll: 0 },
        Ok(_) => model.status = "no step needs a premix: every addition can be dosed at the bench's resolutions".into(),
        Err(_) => model.status = "no plan yet, so no premix to propose".into(),
    }
}

/// The text of the selected proposal, lines of at most 80 columns.
pub fn lines(model: &Model, selected: usize) -> Vec<String> {
    let Some(doc) = model.doc.as_ref() else { return Vec::new() };
    let Ok(plan) = &doc.computed.plan else { return Vec::new() };
    let Some(p) = plan.premixes.get(selected) else { return Vec::new() };
    let mut out = premix::describe(p, &plan.steps[p.step].source, plan.volume_m3, &model.shown);
    if plan.premixes.len() > 1 {
        out.insert(0, format!("proposal {} of {} (← → for the others)", selected + 1, plan.premixes.len()));
    }
    out
}

pub fn on_key(model: &mut Model, ctx: &Context, key: Key, selected: usize, scroll: usize) {
    let count = model.doc.as_ref().and_then(|d| d.computed.plan.as_ref().ok()).map_or(0, |p| p.premixes.len());
    let length = lines(model, selected).len();
    let down = |by: usize| (scroll + by).min(length.saturating_sub(1));
    let (selected, scroll) = match key {
        Key::Left | Key::Char('h') => (selected.saturating_sub(1), 0),
        Key::Right | Key::Char('l') => ((selected + 1).min(count.saturating_sub(1)), 0),
        Key::Up | Key::Char('k') => (selected, scroll.saturating_sub(1)),
        Key::Down | Key::Char('j') => (selected, down(1)),
        Key::PageUp => (selected, scroll.saturating_sub(10)),
        Key::PageDown | Key::Char(' ') => (selected, down(10)),
        Key::Home => (selected, 0),
        Key::Char('a') => return accept(model, ctx, selected),
        Key::Esc | Key::Char('q') => return,
        _ => (selected, scroll),
    };
    model.overlay = Overlay::Premixes { selected, scroll };
}

/// Save every stage as a library recipe (or link the one there, if it makes the same
/// premix) and make the open blend take the last stage as its source.
fn accept(model: &mut Model, ctx: &Context, selected: usize) {
    let Some(doc) = model.doc.as_mut() else { return };
    let Some(proposal) = doc.computed.plan.as_ref().ok().and_then(|p| p.premixes.get(selected)).cloned() else {
        return;
    };
    if !proposal.complete() {
        model.status = "this premix cascade cannot be dosed as it stands (see the marks); nothing was accepted".into();
        model.overlay = Overlay::Premixes { selected, scroll: 0 };
        return;
    }
    let accepted = premix::accept(&proposal, &doc.recipe, &ctx.catalogue);
    let now = (ctx.now)();
    let mut made = Vec::new();
    let mut linked = Vec::new();
    for r in &accepted.stages {
        match ctx.library.open(&r.name) {
            Ok(there) if there.recipe.components == r.components && there.recipe.sources == r.sources => {
                linked.push(r.name.clone())
            }
            Ok(_) => {
                model.status = format!(
                    "the library has a recipe {} that makes something else; rename it to accept this premix",
                    r.name
                );
                return;
            }
            Err(LibraryError::NotFound(_)) => match ctx.library.save_as(&r.name, r, &now) {
                Ok(_) => made.push(r.name.clone()),
                Err(e) => {
                    model.status = format!("premix not accepted: {e}");
                    return;
                }
            },
            Err(e) => {
                model.status = format!("premix not accepted: {e}");
                return;
            }
        }
    }
    let blend = accepted.blend;
    edit(doc, ctx, |r| *r = blend);
    let last = proposal.last().name.clone();
    let mut what = Vec::new();
    if !made.is_empty() {
        what.push(format!("saved {}", made.join(", ")));
    }
    if !linked.is_empty() {
        what.push(format!("linked {} already in the library", linked.join(", ")));
    }
    let first = accepted.stages.first().map_or(String::new(), |r| r.name.clone());
    model.status = format!(
        "premix {last} accepted ({}); the blend takes it as a source: s saves, then fill the premix first \
         (g on its step opens {first})",
        what.join("; ")
    );
    refresh(model, ctx);
}

/// The cascade proposed, keys first, its text from line `scroll` on.
pub fn draw(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect, selected: usize, scroll: usize) {
    // The keys first, so that a long cascade cut at the foot of a small window
    // still shows how to accept it.
    let mut lines: Vec<Line> =
        ["a  accept: each stage becomes a library recipe,", "   the blend takes the last as its source · Esc close"]
            .into_iter()
            .map(|hint| Line::styled(hint, theme.dim()))
            .collect();
    let text = self::lines(model, selected);
    // Rows for the text: the box's two borders and the two key lines aside.
    let rows = usize::from(area.height.saturating_sub(4)).max(1);
    let scroll = scroll.min(text.len().saturating_sub(rows));
    if text.len() > rows {
        let last = (scroll + rows).min(text.len());
        lines[1] = Line::styled(
            format!("   ↑↓ PgUp PgDn scroll: lines {}-{last} of {} · Esc close", scroll + 1, text.len()),
            theme.dim(),
        );
    }
    lines.extend(text.into_iter().skip(scroll).take(rows).map(Line::raw));
    let h = (lines.len() as u16 + 2).min(area.height);
    let w = area.width.min(84);
    boxed(frame, centered(area, w, h), "Premixes", lines);
}
