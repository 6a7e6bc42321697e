//! One line typed for a purpose (a name, a reading, a source, a setting): Enter hands it to
//! the purpose's handler, Esc cancels; a refused line stays open with why.

use ratatui::layout::Rect;
use ratatui::text::Line;
use ratatui::Frame;

use tui_input::Input;

use crate::library::Saved;
use crate::tui::context::{input, input_request, Context, Key};
use crate::tui::document::{edit, new_recipe, refresh, save_checked};
use crate::tui::model::{Model, Overlay, Prompt};
use crate::tui::theme::{boxed, centered, Theme};
use crate::tui::views::{editor::parse_source, sheet};

/// Keys of the line being typed.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, purpose: Prompt, mut input: Input) {
    match key {
        Key::Esc if purpose == Prompt::StepSource => {
            model.status = "no source typed: the step is recorded from its planned composition, which a certificate \
                            refuses without an uncertainty; l types it before the weighing, x corrects it after"
                .into()
        }
        Key::Esc => model.status = "cancelled".into(),
        Key::Enter => on_prompt(model, ctx, purpose, input.value().trim().to_string()),
        k => {
            if let Some(r) = input_request(k) {
                input.handle(r);
            }
            model.overlay = Overlay::Prompt { purpose, input };
        }
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
        Prompt::Setting(field) => super::settings::on_value(model, ctx, field, &text),
        Prompt::MeasuredTemperature => sheet::on_temperature(model, ctx, &text),
        Prompt::ActualReading(step) => sheet::on_pressure(model, ctx, step, &text),
        Prompt::Weighing => sheet::on_weighing(model, ctx, &text),
        Prompt::CylinderSerial => sheet::on_serial(model, &text),
        Prompt::StepSource => sheet::on_source(model, ctx, &text),
        Prompt::Correction => sheet::on_correction(model, ctx, &text),
        Prompt::CorrectionReason(pending) => sheet::on_correction_reason(model, ctx, &pending, &text),
        Prompt::Operator => sheet::on_person(model, ctx, false, &text),
        Prompt::Balance => sheet::on_person(model, ctx, true, &text),
        Prompt::Air(k) => sheet::on_air(model, ctx, k, &text),
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
/// The line being typed, titled with what it is for.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, purpose: &Prompt, input: &Input) {
    let title = match purpose {
        Prompt::Duplicate(n) => format!("Copy {n} as"),
        Prompt::Rename(n) => format!("Rename {n} to"),
        Prompt::SaveAs => "Save as".into(),
        Prompt::SaveNote => "Note for this revision".into(),
        Prompt::NewRecipe => "Name of the new recipe".into(),
        Prompt::MeasuredTemperature => "Cylinder temperature now (e.g. 28C)".into(),
        Prompt::ActualReading(i) => format!("Reading reached at step {} (e.g. 48.2bar)", i + 1),
        Prompt::AddSource => "Source: a gas id, or NAME = SPEC for a premix".into(),
        Prompt::Weighing => "Scale reading (e.g. 13504.85g) for the fill record".into(),
        Prompt::CylinderSerial => "Serial of the cylinder filled (as stamped on it)".into(),
        Prompt::StepSource => "Source: its analysis, @NAME or record:ID".into(),
        Prompt::Correction => "Correct: w|p|t|s STEP VALUE (- withdraws)".into(),
        Prompt::CorrectionReason(c) => format!("Why correct {c}?"),
        Prompt::Operator => "Operator (who fills)".into(),
        Prompt::Balance => "Balance: identity, calibration; u=0.02g its uncertainty".into(),
        Prompt::Air(k) => format!("Air at weighing {k}: temperature pressure humidity"),
        Prompt::Setting(k) => {
            let field = super::settings::FIELDS[(*k).min(super::settings::FIELDS.len() - 1)];
            format!("Setting: {}", super::settings::label(field))
        }
    };
    let r = centered(area, 60, 4);
    let inner = boxed(
        frame,
        r,
        &title,
        vec![Line::raw(input.value().to_string()), Line::styled("Enter keeps · Esc cancels", theme.dim())],
    );
    frame.set_cursor_position((inner.x + input.visual_cursor() as u16, inner.y));
}
