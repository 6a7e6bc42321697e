//! The questions the screen asks before it does something that cannot be taken back or
//! goes against the screening: quit with unsaved edits, delete, save an invalid recipe,
//! fill a plan at stop, and a file changed on disk.

use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::Frame;

use crate::checks::Severity;
use crate::ron_format::wrap_words;
use crate::tui::context::{input, Context, Key};
use crate::tui::document::{open, refresh, save, save_checked};
use crate::tui::model::{Document, Model, Overlay, Prompt};
use crate::tui::theme::{boxed, centered, Theme};

/// Quit with unsaved edits: save, drop them, or stay.
pub fn on_quit(model: &mut Model, ctx: &mut Context, key: Key) {
    match key {
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
    }
}

/// The question before quitting with unsaved edits.
pub fn draw_quit(frame: &mut Frame, area: Rect) {
    let lines = vec![
        Line::raw("The recipe has unsaved changes."),
        Line::raw("s  save and quit     y  quit without saving"),
        Line::raw("any other key: stay"),
    ];
    boxed(frame, centered(area, 50, 5), "Quit?", lines);
}

/// Delete the recipe `name` (to the trash) on `y`.
pub fn on_delete(model: &mut Model, ctx: &mut Context, key: Key, name: String) {
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

/// The question before deleting.
pub fn draw_delete(frame: &mut Frame, area: Rect, name: &str) {
    let lines = vec![
        Line::raw(format!("Move {name} to the trash folder?")),
        Line::raw("y  delete (recoverable)     any other key: keep"),
    ];
    boxed(frame, centered(area, 56, 4), "Delete", lines);
}

/// Save a recipe that does not validate on `y`.
pub fn on_save_invalid(model: &mut Model, ctx: &mut Context, key: Key, note: Option<String>) {
    if key == Key::Char('y') {
        save(model, ctx, note, false);
    } else {
        model.status = "not saved: mend the recipe first (the Recipe view shows what is wrong)".into();
    }
}

/// Why the recipe does not validate.
pub fn draw_save_invalid(theme: &Theme, frame: &mut Frame, area: Rect, why: &str) {
    let mut lines = vec![Line::styled("This recipe does not validate:", theme.severity(Severity::Stop))];
    lines.extend(wrap_words(why, 58).into_iter().take(4).map(Line::raw));
    lines.push(Line::raw("It will not plan until that is mended."));
    lines.push(Line::raw("y  save it anyway     any other key: do not save"));
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, 62, h), "Save an invalid recipe?", lines);
}

/// Unlock the steps of a plan at stop on `y`, on the blender's own judgement.
pub fn on_stop(model: &mut Model, key: Key, finding: String) {
    if key == Key::Char('y') {
        if let Some(doc) = model.doc.as_mut() {
            doc.bench.stop_accepted = Some(finding);
        }
        model.status = "steps unlocked on your own judgement: Space ticks, w weighs".into();
    } else {
        model.status = "steps stay locked: change the recipe so that nothing is at stop".into();
    }
}

/// The stop finding and the cautions.
pub fn draw_stop(theme: &Theme, frame: &mut Frame, area: Rect, finding: &str) {
    let mut lines = vec![Line::styled("This plan is at STOP:", theme.severity(Severity::Stop))];
    lines.extend(wrap_words(finding, 58).into_iter().map(Line::raw));
    lines.push(Line::raw("Filling it goes against the screening. Follow the"));
    lines.push(Line::raw("cylinder's markings, local codes and licensed practice."));
    lines.push(Line::raw("y  unlock the steps anyway     any other key: keep locked"));
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, 62, h), "Fill a plan at stop?", lines);
}

/// The file changed on disk: reload, save under another name, or overwrite.
pub fn on_conflict(model: &mut Model, ctx: &mut Context, key: Key) {
    match key {
        Key::Char('r') => {
            if let Some(name) = model.doc.as_ref().map(|d| d.name.clone()) {
                open(model, ctx, &name);
                model.status = format!("reloaded {name} from disk; your edits were dropped");
            }
        }
        Key::Char('a') => model.overlay = Overlay::Prompt { purpose: Prompt::SaveAs, input: input("") },
        Key::Char('o') => save(model, ctx, None, true),
        _ => model.status = "not saved: the file on disk is unchanged".into(),
    }
}

/// What changed on disk and the choices.
pub fn draw_conflict(frame: &mut Frame, area: Rect) {
    let lines = vec![
        Line::raw("The file changed on disk since it was opened"),
        Line::raw("(another bench or program saved it). Nothing was written."),
        Line::raw("r  reload from disk (drops your edits)"),
        Line::raw("a  save yours under another name"),
        Line::raw("o  overwrite the file on disk"),
    ];
    boxed(frame, centered(area, 62, 7), "Changed on disk", lines);
}

/// Switch the fill target's kind on `y` (the same fill, converted with the plan).
pub fn on_fill_kind(model: &mut Model, ctx: &mut Context, key: Key) {
    if key != Key::Char('y') {
        model.status = "the fill target is unchanged".into();
        return;
    }
    if let Some(doc) = model.doc.as_mut() {
        model.status = crate::tui::views::editor::next_fill_kind(doc, ctx);
    }
}

/// The question before switching the fill target's kind.
pub fn draw_fill_kind(frame: &mut Frame, area: Rect, said: &str) {
    let mut lines: Vec<Line> = wrap_words(said, 58).into_iter().map(Line::raw).collect();
    lines.push(Line::raw("y  switch     any other key: keep it as it is"));
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, 62, h), "Fill by", lines);
}
