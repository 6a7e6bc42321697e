//! The Recipe view: the recipe's lines (order, components and tolerances, cylinder, fill,
//! temperatures, model, sources, fill order, notes) edited one at a time, with undo, and
//! the plan's result beside them.

use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier, Style};
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph, Wrap};
use ratatui::Frame;

use super::{step_mark, Screen};
use crate::recipe::{FillTarget, Recipe, SourceLine};
use crate::ron_format::clip;
use crate::thermo::Model as Eos;
use crate::tui::context::{input, input_request, Context, Key};
use crate::tui::document::{edit, first_line, recompute};
use crate::tui::model::{fields, Document, Field, Model, Overlay, PickFor, Prompt};
use crate::tui::theme::Theme;
use crate::units::Shown;

/// The recipe being edited.
pub struct Editor;

impl Screen for Editor {
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
        editor(model, theme, frame, area)
    }
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context) {
        let Some(doc) = model.doc.as_mut() else { return };
        if doc.editing.is_some() {
            on_field_typing(doc, key, ctx, &mut model.status);
        } else {
            on_editor_key(model, key, ctx);
        }
    }
    fn typing(&self, model: &Model) -> bool {
        model.doc.as_ref().is_some_and(|d| d.editing.is_some())
    }
    fn hints(&self, model: &Model) -> &'static str {
        if model.doc.as_ref().is_some_and(|d| d.editing.is_some()) {
            "Enter keep · Esc cancel · type"
        } else {
            "? help · Enter edit · s save · q quit · a add gas · b balance · g change gas · x remove · u undo · Tab view"
        }
    }
    fn help(&self) -> &'static [&'static str] {
        &[
            "↑↓ or j k   move between lines",
            "Enter or e  edit the line (Enter keeps, Esc cancels)",
            "a           add a gas (search by formula, name or CAS)",
            "g           change the gas of a component",
            "b           make the component the balance gas",
            "x or Del    remove the component or source",
            "u, Ctrl-z   undo      Ctrl-r, Ctrl-y  redo",
            "Home End    first, last line   PgUp PgDn  ten lines",
            "typing:     Ctrl-u clears the line, Ctrl-w a word;",
            "            Home End (Ctrl-a Ctrl-e) its start, end",
        ]
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
        Key::Char('u') | Key::Ctrl('z') => model.status = undo(doc, ctx).into(),
        Key::Ctrl('r') | Key::Ctrl('y') => model.status = redo(doc, ctx).into(),
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
                model.status = make_balance(doc, ctx, i);
            }
        }
        Key::Char('x') | Key::Delete => {
            if let Some(said) = remove_line(doc, ctx, field) {
                model.status = said;
            }
        }
        Key::Enter | Key::Char('e') => on_enter(model, ctx, field),
        _ => {}
    }
}

/// Take back the last edit.
fn undo(doc: &mut Document, ctx: &Context) -> &'static str {
    let Some(prev) = doc.undo.pop() else { return "nothing to undo" };
    doc.redo.push(std::mem::replace(&mut doc.recipe, prev));
    recompute(doc, ctx);
    "undone"
}

/// Do again the last edit taken back.
fn redo(doc: &mut Document, ctx: &Context) -> &'static str {
    let Some(next) = doc.redo.pop() else { return "nothing to redo" };
    doc.undo.push(std::mem::replace(&mut doc.recipe, next));
    recompute(doc, ctx);
    "redone"
}

/// Make component `i` the balance gas; the one that was the balance keeps the amount it
/// had, written as a percentage.
fn make_balance(doc: &mut Document, ctx: &Context, i: usize) -> String {
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
    format!("{} is the balance gas", doc.recipe.components[i].gas)
}

/// Remove the component or source on the cursor's line (undone with `u`).
fn remove_line(doc: &mut Document, ctx: &Context, field: Field) -> Option<String> {
    let said = match field {
        Field::Component(i) | Field::Tolerance(i) => {
            let gas = doc.recipe.components[i].gas.clone();
            edit(doc, ctx, |r| {
                r.components.remove(i);
            });
            Some(format!("{gas} removed (u undoes)"))
        }
        Field::Source(i) => {
            edit(doc, ctx, |r| {
                r.sources.remove(i);
            });
            None
        }
        _ => return None,
    };
    doc.field = doc.field.min(fields(&doc.recipe).len() - 1);
    said
}

/// Enter on a line: add a gas or a source, switch the fill's kind or the model, or start
/// typing the line's value.
fn on_enter(model: &mut Model, ctx: &Context, field: Field) {
    let Some(doc) = model.doc.as_mut() else { return };
    match field {
        Field::AddComponent => {
            model.overlay = Overlay::Picker { input: input(""), selected: 0, purpose: PickFor::AddComponent }
        }
        Field::AddSource => model.overlay = Overlay::Prompt { purpose: Prompt::AddSource, input: input("") },
        Field::FillKind => model.overlay = Overlay::ConfirmFillKind(next_fill_kind_said(doc)),
        Field::Model => edit(doc, ctx, |r| {
            r.model = match r.model {
                None => Some(Eos::ALL[0]),
                Some(m) => {
                    let i = Eos::ALL.iter().position(|x| *x == m).unwrap_or(0);
                    Eos::ALL.get(i + 1).copied()
                }
            }
        }),
        f => doc.editing = Some(input(&field_text(&doc.recipe, f))),
    }
}

/// The fill target the next kind would be, in words, for the question before switching.
fn next_fill_kind_said(doc: &Document) -> String {
    let (from, next) = next_fill_target(doc);
    let (kind, value) = match &next {
        FillTarget::Pressure(v) => ("pressure", v),
        FillTarget::Mass(v) => ("mass", v),
        FillTarget::Amount(v) => ("amount", v),
    };
    if value.is_empty() {
        format!("Fill by {kind} instead of {from}? The recipe does not plan yet: the value is typed next.")
    } else {
        format!("Fill by {kind} instead of {from}: {value}, the same fill as the plan makes it?")
    }
}

/// The kind of fill target now, and the same fill in the next kind, converted with the plan
/// (the mass, the amount or the pressure it comes to); without a plan the value is empty
/// for the user to type.
fn next_fill_target(doc: &Document) -> (&'static str, FillTarget) {
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
    let from = match doc.recipe.fill {
        FillTarget::Pressure(_) => "pressure",
        FillTarget::Mass(_) => "mass",
        FillTarget::Amount(_) => "amount",
    };
    (from, next)
}

/// Switch the fill target to the next kind (after the question): the same fill.
pub(crate) fn next_fill_kind(doc: &mut Document, ctx: &Context) -> String {
    let converted = doc.computed.plan.is_ok();
    let (_, next) = next_fill_target(doc);
    edit(doc, ctx, |r| r.fill = next);
    if converted {
        "fill target converted with the plan: the same fill".into()
    } else {
        "the recipe does not plan yet: type the fill value on the next line".into()
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
pub(crate) fn parse_source(t: &str) -> SourceLine {
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
            let model_before = doc.computed.plan.as_ref().ok().map(|p| p.model).or(doc.last_model);
            edit(doc, ctx, |r| set_field(r, field, &text));
            if let Ok(p) = &doc.computed.plan {
                doc.last_model = Some(p.model);
            }
            let doubt = match (&doc.computed.order, field) {
                (Ok(o), Field::Tolerance(_)) => crate::recipe::tolerance_doubts(o, &ctx.catalogue).into_iter().next(),
                _ => None,
            };
            *status = match (&doc.computed.plan, doubt) {
                (Ok(_), Some(doubt)) => doubt,
                // A gas the model did not cover moves the plan to another model: said.
                (Ok(p), None) if model_before.is_some_and(|m| m != p.model) => format!(
                    "recomputed under {} now, not {} (the default for these gases; the model line sets one)",
                    p.model.title(),
                    model_before.map_or("", |m| m.title())
                ),
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
fn field_label(doc: &Document, f: Field) -> String {
    let r = &doc.recipe;
    match f {
        Field::Name => "title".into(),
        Field::Description => "description".into(),
        Field::Order => "order ref".into(),
        Field::Component(i) => format!("  {}", r.components[i].gas),
        Field::Tolerance(_) => "    tolerance".into(),
        Field::AddComponent => "+ add a gas (a)".into(),
        Field::WaterCapacity => "water capacity".into(),
        Field::WorkingPressure => "working pressure".into(),
        Field::TestPressure => "test pressure".into(),
        Field::Tare => "tare".into(),
        Field::Serial => "cylinder serial".into(),
        Field::FillKind => "fill by".into(),
        Field::FillValue => match r.fill {
            FillTarget::Pressure(_) => "fill pressure".into(),
            FillTarget::Mass(_) => "fill mass".into(),
            FillTarget::Amount(_) => "fill amount".into(),
        },
        Field::ReferenceTemperature => "reference temp".into(),
        Field::FillTemperature => "fill temp".into(),
        Field::Ambient => "ambient".into(),
        Field::BeforeFill => "before the fill".into(),
        Field::Model => "model".into(),
        Field::Source(_) => "  source".into(),
        Field::AddSource => "+ add a source".into(),
        Field::FillOrder => "fill order".into(),
        Field::Notes => "notes".into(),
    }
}

fn editor(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    // A wide window gives both panes room: the result's sources and the fields' values.
    let right_w = match area.width {
        w if w >= 150 => w * 2 / 5,
        w if w >= 110 => 52,
        _ => 36,
    };
    let [left, right] = Layout::horizontal([Constraint::Min(30), Constraint::Length(right_w)]).areas(area);
    let state = if doc.dirty() { ", unsaved changes" } else { "" };
    let block =
        // The revision on disk: undoing edits past a save does not take the file back.
        Block::default().borders(Borders::ALL).title(format!(
            " {} rev {}{state} ",
            doc.name,
            doc.opened.as_ref().map_or(doc.recipe.revision, |o| o.recipe.revision)
        ));
    let inner = block.inner(left);
    frame.render_widget(block, left);
    let list = fields(&doc.recipe);
    let rows = inner.height as usize;
    let first = doc.field.saturating_sub(rows.saturating_sub(2));
    let label_w = 17usize;
    let value_w = (inner.width as usize).saturating_sub(label_w + 3);
    let mut lines = Vec::new();
    for (k, f) in list.iter().enumerate().skip(first).take(rows) {
        let selected = k == doc.field;
        // A line being typed shows the part around the cursor, so a long one is seen as
        // it is typed, not its start only.
        let typing = doc.editing.as_ref().filter(|_| selected);
        let scroll = typing.map_or(0, |inp| inp.visual_scroll(value_w.saturating_sub(1)));
        let value = match typing {
            Some(inp) => inp.value().chars().skip(scroll).collect(),
            None => field_text(&doc.recipe, *f),
        };
        let value = match f {
            Field::FillKind | Field::Model => format!("{value}  (Enter changes)"),
            Field::Tolerance(i) if typing.is_none() => match tolerance_reading(&doc.recipe, *i) {
                Some(reading) => format!("{value}  ({reading})"),
                None => value,
            },
            _ => value,
        };
        let marker = if selected { "▶" } else { " " };
        let text = format!("{marker}{:<label_w$} {}", clip(&field_label(doc, *f), label_w), clip(&value, value_w));
        let style = if selected && doc.editing.is_some() {
            theme.bold().add_modifier(Modifier::UNDERLINED)
        } else if selected {
            theme.selected()
        } else {
            Style::default()
        };
        lines.push(Line::styled(text, style));
        if selected {
            if let Some(inp) = &doc.editing {
                let row = (k - first) as u16;
                let x = inner.x + 1 + label_w as u16 + 1 + (inp.visual_cursor() - scroll).min(value_w) as u16;
                frame.set_cursor_position((x, inner.y + row));
            }
        }
    }
    frame.render_widget(Paragraph::new(lines), inner);
    result_pane(doc, &model.shown, theme, frame, right);
}

/// How a tolerance as written is read, beside it: a relative one as the absolute share it
/// allows, an absolute one as the relative share of the amount (so `1%` on 15 % shows that
/// it is ±6.7 %rel, not ±1 %rel).
pub fn tolerance_reading(r: &crate::recipe::Recipe, i: usize) -> Option<String> {
    let c = r.components.get(i)?;
    let written = c.tolerance.as_deref()?;
    let x = crate::mixture::parse_share(&c.amount).ok()?.fraction();
    let abs = crate::recipe::parse_tolerance(written, x).ok()?;
    let relative = written.to_ascii_lowercase().replace(' ', "").ends_with("%rel");
    Some(match (relative, x) {
        (true, _) => format!("= ±{}", crate::units::fraction_text(abs)),
        (false, Some(x)) if x > 0.0 => format!("absolute = ±{}%rel", crate::units::Sig(abs / x * 100.0, 2)),
        (false, _) => "absolute".to_string(),
    })
}

fn result_pane(doc: &Document, d: &Shown, theme: &Theme, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(" Result ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let w = inner.width as usize;
    let mut lines: Vec<Line> = Vec::new();
    match &doc.computed.plan {
        Err(e) => {
            lines.push(Line::styled("cannot plan yet:", theme.fg(Color::Red).add_modifier(Modifier::BOLD)));
            for l in e.lines() {
                lines.push(Line::raw(l.to_string()));
            }
        }
        Ok(p) => {
            let t = &p.totals;
            lines.push(Line::styled(format!("{} ({})", p.model.title(), p.model.key()), theme.bold()));
            lines.push(Line::raw(format!("{} {} at {}", d.pf(t.pressure_pa), d.pu(), d.tf(t.temperature_k))));
            lines.push(Line::raw(format!("{:.4} mol  {:.1} g  Z {:.4}", t.amount_mol, t.mass_g, t.z)));
            lines.push(Line::raw(String::new()));
            // The scale column only where the pane is wide enough; a narrow pane keeps its
            // columns whole rather than wrapping them (the Fill sheet has everything).
            let with_scale = w >= 34;
            // Sources as long as the pane allows (a premix's name whole where it fits).
            let longest = p.steps.iter().map(|s| s.source.chars().count()).max().unwrap_or(0);
            let src_w = longest.min(w.saturating_sub(if with_scale { 23 } else { 12 })).clamp(11, 40);
            let head = format!("{:<src_w$} {:>10}", "add", format!("stop {}", d.pu()));
            lines.push(Line::styled(if with_scale { format!("{head}{:>11}", "scale g") } else { head }, theme.bold()));
            for s in &p.steps {
                let flag = step_mark(s).unwrap_or(" ");
                let row = format!("{:<src_w$} {:>10}", clip(&s.source, src_w), d.pf(s.pressure_after_pa));
                lines.push(Line::raw(if with_scale {
                    format!("{row}{:>11.1}{flag}", s.scale_reading_g)
                } else {
                    format!("{row}{flag}")
                }));
            }
            lines.push(Line::styled(format!("readings for {}", d.tf(p.fill_temperature_k)), theme.dim()));
            if let Some(checks) = &doc.computed.checks {
                lines.push(Line::raw(String::new()));
                // Worst first, as on the Screening view.
                let mut sorted: Vec<&crate::checks::Check> = checks.iter().collect();
                sorted.sort_by_key(|c| std::cmp::Reverse(c.severity));
                for c in sorted {
                    lines.push(Line::from(vec![
                        Span::styled(format!("{:<8}", c.severity.key()), theme.severity(c.severity)),
                        Span::raw(clip(c.id, w.saturating_sub(8))),
                    ]));
                }
            }
        }
    }
    frame.render_widget(Paragraph::new(lines).wrap(Wrap { trim: false }), inner);
}
