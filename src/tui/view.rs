//! Drawing only: every figure shown here was computed in `update` (see `Computed`).
//! Meaning is never carried by colour alone: selection has a marker, severities and flags
//! have words and signs, and with `NO_COLOR` no colour is used at all.

use crate::ron_format::{clip, clip_middle, wrap_words};
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Axis, Block, Borders, Chart, Clear, Dataset, GraphType, Paragraph, Wrap};
use ratatui::Frame;

use super::model::{fields, Document, Field, Model, Overlay, PickFor, Prompt, View};
use super::update::field_text;
use crate::checks::{Severity, CAUTIONS};
use crate::gas::Catalogue;
use crate::plan::StepFlag;
use crate::recipe::FillTarget;
use crate::units::Shown;

/// Smallest terminal the screen draws in.
pub const MIN_WIDTH: u16 = 60;
pub const MIN_HEIGHT: u16 = 16;

struct Theme {
    color: bool,
}

impl Theme {
    fn fg(&self, c: Color) -> Style {
        if self.color {
            Style::default().fg(c)
        } else {
            Style::default()
        }
    }
    fn selected(&self) -> Style {
        Style::default().add_modifier(Modifier::REVERSED)
    }
    fn bold(&self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }
    fn dim(&self) -> Style {
        if self.color {
            Style::default().fg(Color::DarkGray)
        } else {
            Style::default()
        }
    }
    fn severity(&self, s: Severity) -> Style {
        self.fg(match s {
            Severity::Ok => Color::Green,
            Severity::Caution => Color::Yellow,
            Severity::Stop => Color::Red,
        })
    }
}

/// Draw the whole screen.
pub fn view(model: &Model, catalogue: &Catalogue, frame: &mut Frame) {
    let area = frame.area();
    let theme = Theme { color: model.color };
    if area.width < MIN_WIDTH || area.height < MIN_HEIGHT {
        let text = format!(
            "The terminal is {}×{}; fillwright needs at least {MIN_WIDTH}×{MIN_HEIGHT}. Enlarge the window (q quits).",
            area.width, area.height
        );
        frame.render_widget(Paragraph::new(text).wrap(Wrap { trim: true }), area);
        return;
    }
    let [top, body, status] =
        Layout::vertical([Constraint::Length(1), Constraint::Min(1), Constraint::Length(1)]).areas(area);
    header(model, &theme, frame, top);
    match model.view {
        View::Library => library(model, &theme, frame, body),
        View::Editor => editor(model, &theme, frame, body),
        View::Sheet => sheet(model, &theme, frame, body),
        View::Models => models(model, &theme, frame, body),
        View::Checks => screening(model, &theme, frame, body),
    }
    status_line(model, &theme, frame, status);
    overlay(model, catalogue, &theme, frame, body);
    if let Some(pane) = &model.verification {
        // The pane has its own foot line with its keys, over the status line.
        super::verification::draw(pane, model.color, frame, body.union(status));
    }
}

fn header(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let mut spans = vec![Span::styled("fillwright ", theme.bold())];
    for (i, v) in View::ALL.iter().enumerate() {
        let label = format!("{} {}", i + 1, v.title());
        if *v == model.view {
            spans.push(Span::styled(format!("[{label}]"), theme.selected()));
        } else {
            spans.push(Span::raw(format!(" {label} ")));
        }
    }
    if let Some(doc) = &model.doc {
        // The recipe's name and state; the body's block titles repeat it where there is room.
        let dirty = if doc.dirty() { "*" } else { "" };
        spans.push(Span::raw(format!(" {}{dirty}", doc.name)));
    }
    frame.render_widget(Paragraph::new(Line::from(spans)), area);
}

/// The keys that matter in the current context.
/// The keys that matter now, most important first; `? help` always leads.
fn keys_hint(model: &Model) -> &'static str {
    match (&model.overlay, model.view) {
        (Overlay::None, View::Library) if model.library.filter.is_some() => "? help · Enter open · Esc clear · type to search",
        (Overlay::None, View::Library) => {
            "? help · Enter open · q quit · / search · n new · h history · c copy · r rename · d delete · t trash · o settings · v verify · y sync"
        }
        (Overlay::None, View::Editor) if model.doc.as_ref().is_some_and(|d| d.editing.is_some()) => {
            "Enter keep · Esc cancel · type"
        }
        (Overlay::None, View::Editor) => {
            "? help · Enter edit · s save · q quit · a add gas · b balance · g change gas · x remove · u undo · Tab view"
        }
        (Overlay::None, View::Sheet) => {
            "? help · Space done · r reading · t temp · w weigh · m premix · l source · p print · ↑↓ step"
        }
        (Overlay::None, View::Checks) => "? help · ↑↓ choose a check · Tab next view · Esc library",
        (Overlay::None, _) => "? help · Tab next view · s save · Esc library · q quit",
        _ => "Esc closes",
    }
}

/// The status line: what just happened, then as many key hints as fit, most important
/// first; the first hint (`? help`) is always shown, the message is cut to make room.
fn status_line(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let width = usize::from(area.width);
    let hints: Vec<&str> = keys_hint(model).split(" · ").collect();
    let first = hints.first().copied().unwrap_or("");
    let status = if model.status.is_empty() {
        String::new()
    } else {
        // Room for the first hint and the separator.
        clip(&model.status, width.saturating_sub(first.chars().count() + 3).max(1))
    };
    let used = if status.is_empty() { 0 } else { status.chars().count() + 3 };
    let mut shown = String::from(first);
    for h in hints.iter().skip(1) {
        if used + shown.chars().count() + 3 + h.chars().count() > width {
            break;
        }
        shown.push_str(" · ");
        shown.push_str(h);
    }
    let line = if status.is_empty() {
        Line::from(Span::styled(shown, theme.dim()))
    } else {
        Line::from(vec![Span::styled(status, theme.bold()), Span::raw(" │ "), Span::styled(shown, theme.dim())])
    };
    frame.render_widget(Paragraph::new(line), area);
}

fn library(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(format!(" Recipes in {} ", model.library.label));
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let w = inner.width as usize;
    let title_w = w.saturating_sub(22 + 9 + 14 + 4 + 9 + 5);
    let mut lines = vec![Line::styled(
        format!("  {:<22}{:>9}{:>14}{:>4} {:<8} {}", "name", "fill", "cylinder", "rev", "checks", "recipe"),
        theme.bold(),
    )];
    let visible = model.library.visible();
    let rows = inner.height.saturating_sub(2) as usize;
    let first = model.library.selected.saturating_sub(rows.saturating_sub(1));
    for (k, &i) in visible.iter().enumerate().skip(first).take(rows) {
        let e = &model.library.entries[i];
        let selected = k == model.library.selected;
        let marker = if selected { "▶ " } else { "  " };
        let text = match &e.summary {
            Ok(s) => format!(
                "{marker}{:<22}{:>9}{:>14}{:>4} {:<8} {}",
                clip_middle(&e.name, 21),
                clip(&s.fill, 8),
                clip(&s.cylinder, 13),
                s.revision,
                match model.library.screening.get(i).copied().flatten() {
                    Some(Severity::Stop) => "STOP",
                    Some(Severity::Caution) => "caution",
                    Some(Severity::Ok) => "ok",
                    None => "no plan",
                },
                clip(&s.title, title_w)
            ),
            Err(err) => {
                format!("{marker}{:<22} cannot be read: {}", clip_middle(&e.name, 21), clip(err, w.saturating_sub(40)))
            }
        };
        let style = if selected {
            theme.selected()
        } else if e.summary.is_err() {
            theme.fg(Color::Red)
        } else {
            Style::default()
        };
        lines.push(Line::styled(text, style));
    }
    if visible.is_empty() {
        lines.push(Line::raw("  (no recipe matches)"));
    }
    if let Some(f) = &model.library.filter {
        let at = inner.height.saturating_sub(1);
        let text = format!("search: {}", f.value());
        frame.render_widget(
            Paragraph::new(Line::styled(text, theme.bold())),
            Rect { x: inner.x, y: inner.y + at, width: inner.width, height: 1 },
        );
        frame.set_cursor_position((inner.x + 8 + f.visual_cursor() as u16, inner.y + at));
    }
    frame.render_widget(Paragraph::new(lines), Rect { height: inner.height.saturating_sub(1), ..inner });
}

fn field_label(doc: &Document, f: Field) -> String {
    let r = &doc.recipe;
    match f {
        Field::Name => "name".into(),
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
    let right_w = if area.width >= 110 { 52 } else { 36 };
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
        let value = if selected {
            match &doc.editing {
                Some(inp) => inp.value().to_string(),
                None => field_text(&doc.recipe, *f),
            }
        } else {
            field_text(&doc.recipe, *f)
        };
        let value = match f {
            Field::FillKind | Field::Model => format!("{value}  (Enter changes)"),
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
                let x = inner.x + 1 + label_w as u16 + 1 + inp.visual_cursor().min(value_w) as u16;
                frame.set_cursor_position((x, inner.y + row));
            }
        }
    }
    frame.render_widget(Paragraph::new(lines), inner);
    result_pane(doc, &model.shown, theme, frame, right);
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
            let head = format!("{:<12}{:>10}", "add", format!("stop {}", d.pu()));
            lines.push(Line::styled(if with_scale { format!("{head}{:>11}", "scale g") } else { head }, theme.bold()));
            for s in &p.steps {
                let flag = step_mark(s).unwrap_or(" ");
                let row = format!("{:<12}{:>10}", clip(&s.source, 11), d.pf(s.pressure_after_pa));
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

fn sheet(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    let block = Block::default().borders(Borders::ALL).title(" Fill sheet ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let Ok(p) = &doc.computed.plan else {
        frame.render_widget(Paragraph::new("The recipe does not plan yet; see the Recipe view."), inner);
        return;
    };
    let b = &doc.bench;
    let d = &model.shown;
    let ambient = doc.computed.order.as_ref().map_or(1.01325e5, |o| o.ambient_pa);
    let mut lines = Vec::new();
    if let Some(stop) = super::sheet::first_stop(doc) {
        let style = theme.severity(Severity::Stop).add_modifier(Modifier::BOLD);
        for l in wrap_words(&format!("STOP - do not fill as planned: {stop}"), usize::from(inner.width.max(20))) {
            lines.push(Line::styled(l, style));
        }
        lines.push(Line::styled(
            if b.stop_accepted.as_deref() == Some(stop.as_str()) {
                "steps unlocked on your own judgement".to_string()
            } else {
                "steps are locked; Space asks to unlock them".to_string()
            },
            theme.severity(Severity::Stop),
        ));
    }
    lines.push(Line::raw(match b.measured_k {
        Some(t) => format!("planned for {}; cylinder now {}: stop at 'now'", d.tf(p.fill_temperature_k), d.tf(t)),
        None => format!("readings for {}; t: type the cylinder temperature now", d.tf(p.fill_temperature_k)),
    }));
    let width = usize::from(inner.width.max(20));
    if let Some((severity, note)) = b.measured_k.and_then(|t| super::sheet::temperature_note(t, &model.limits, d)) {
        lines.extend(wrap_words(&note, width).into_iter().map(|l| Line::styled(l, theme.severity(severity))));
    }
    lines.push(Line::styled(
        format!(
            " {:<4}{:<3}{:<11}{:>9}{:>10}{:>10}{:>9}{:>9}{:>9}",
            "",
            "#",
            "source",
            "add g",
            "scale g",
            format!("stop {}", d.pu()),
            "gauge",
            "now",
            "reached"
        ),
        theme.bold(),
    ));
    if let Some(h) = &p.heel {
        // What the cylinder holds before the first addition: the readings to see first.
        lines.push(Line::styled(
            format!(
                " {:<4}{:<3}{:<11}{:>9.2}{:>10.1}{:>10}{:>9}",
                "",
                0,
                "heel",
                h.mass_g,
                h.scale_reading_g,
                d.pf(h.pressure_at_fill_pa),
                d.pf(h.pressure_at_fill_pa - ambient),
            ),
            theme.dim(),
        ));
    }
    for (i, s) in p.steps.iter().enumerate() {
        let selected = i == b.selected;
        let text = sheet_row(b, d, i, s, ambient);
        let style = match (selected, b.live.get(i).is_some_and(|l| l.finished)) {
            (true, _) => theme.selected(),
            (false, true) => theme.dim(),
            (false, false) => Style::default(),
        };
        lines.push(Line::styled(text, style));
    }
    lines.extend(first_plan_note(b, d, width).into_iter().map(|l| Line::styled(l, theme.dim())));
    // A source name cut in the table (a premix) is given whole for the chosen step, and
    // the source recorded for the addition in progress (an analysis, @NAME, record:ID).
    let in_progress = b.record.as_ref().map(|r| r.record.weighings.len().saturating_sub(1));
    match (&b.chosen_source, p.steps.get(b.selected)) {
        (Some(c), Some(s)) if in_progress == Some(b.selected) => {
            let text = format!("step {} source {}: {c} (recorded)", b.selected + 1, s.source);
            lines.extend(wrap_words(&text, width).into_iter().map(Line::raw));
        }
        (_, Some(s)) if s.source.chars().count() > 10 => {
            lines.push(Line::raw(format!("step {} source: {}", b.selected + 1, s.source)));
        }
        _ => {}
    }
    for (severity, note) in super::sheet::reading_notes(doc, &model.limits, d, b.selected) {
        let style = match severity {
            Severity::Ok => Style::default(),
            s => theme.severity(s),
        };
        lines.extend(wrap_words(&note, width).into_iter().map(|l| Line::styled(l, style)));
    }
    if p.by_mass {
        lines.extend(
            wrap_words(
                "LIQUEFIED-GAS FILL: the blend is liquid or two-phase at the reference temperature. Stop each \
                 addition at its scale reading; the gauge shows the vapour pressure. Leave vapour space (the fill \
                 ratio on the cylinder's markings).",
                usize::from(inner.width.max(20)),
            )
            .into_iter()
            .map(|l| Line::styled(l, theme.severity(Severity::Stop))),
        );
    }
    let legends = [
        (
            "L",
            "L liquid forms after this step at the fill temperature: the gauge shows the vapour pressure, not a \
             stop. Use a smaller share, a warmer fill, another fill order, or fill by mass.",
        ),
        (
            "c",
            "c liquid forms if the cylinder cools to the lowest storage temperature (less the margin): after the \
             last step lower the fill; after an earlier one fill in one session, warm.",
        ),
    ];
    for (mark, text) in legends {
        if p.steps.iter().any(|s| step_mark(s) == Some(mark)) {
            lines.extend(
                wrap_words(text, usize::from(inner.width.max(20)))
                    .into_iter()
                    .map(|l| Line::styled(l, theme.severity(Severity::Stop))),
            );
        }
    }
    if p.steps.iter().any(|s| s.flags.iter().any(|f| f.too_small())) {
        lines.push(Line::styled(
            "! below the gauge or scale resolution: m shows the premix proposed",
            theme.fg(Color::Yellow),
        ));
    }
    let done = b.done.iter().filter(|d| **d).count();
    lines.push(Line::raw(format!("{done} of {} steps done", p.steps.len())));
    lines.extend(record_lines(doc, model, theme));
    frame.render_widget(Paragraph::new(lines), inner);
}

/// One step of the Fill sheet: a finished step as recorded (what was added, the scale
/// and pressure readings taken), a step to do as the live plan has it.
fn sheet_row(b: &crate::tui::model::Bench, d: &Shown, i: usize, s: &crate::plan::Step, ambient: f64) -> String {
    let cursor = if i == b.selected { "▶" } else { " " };
    let done = if b.done.get(i).copied().unwrap_or(false) { "[x]" } else { "[ ]" };
    let flag = step_mark(s).map_or(String::new(), |m| format!(" {m}"));
    let Some(live) = b.live.get(i) else {
        return format!("{cursor}{done:<4}{:<3}{:<11}", i + 1, clip(&s.source, 10));
    };
    if live.finished {
        let reached = live.recorded_reading.map_or("–".to_string(), |(p, _)| d.pf(p));
        return format!(
            "{cursor}{done:<4}{:<3}{:<11}{:>9.2}{:>10.2}{:>10}{:>9}{:>9}{:>9}",
            i + 1,
            clip(&live.source, 10),
            live.add_mass_g,
            live.scale_reading_g,
            "recorded",
            "",
            "",
            reached
        );
    }
    let stop = live.pressure_after_pa.unwrap_or(s.pressure_after_pa);
    let now = live.pressure_now_pa.map_or("–".to_string(), |v| d.pf(v));
    let reached = b.actual_pa.get(i).copied().flatten().map_or("–".to_string(), |v| d.pf(v));
    let moved = if live.moved() { "*" } else { "" };
    format!(
        "{cursor}{done:<4}{:<3}{:<11}{:>9.2}{:>10.2}{:>10}{:>9}{:>9}{:>9}{moved}{flag}",
        i + 1,
        clip(&s.source, 10),
        live.add_mass_g,
        live.scale_reading_g,
        d.pf(stop),
        d.pf(stop - ambient),
        now,
        reached
    )
}

/// Under the table: that starred steps are re-planned, and the first plan of the chosen
/// step for comparison.
fn first_plan_note(b: &crate::tui::model::Bench, d: &Shown, width: usize) -> Vec<String> {
    if !b.live.iter().any(|l| !l.finished && l.moved()) {
        return Vec::new();
    }
    let mut note = "* re-planned from the fill record: stop at these readings".to_string();
    if let Some(l) = b.live.get(b.selected).filter(|l| l.moved()) {
        let (add, scale, stop) = l.planned;
        note.push_str(&format!(
            "; step {} as first planned: add {add:.2} g, scale {scale:.2} g, stop {} {}",
            b.selected + 1,
            d.pf(stop),
            d.pu()
        ));
    }
    wrap_words(&note, width)
}

/// The fill record under the steps: where it is, the composition so far against the plan,
/// and the rest of the fill re-planned from the weighings.
fn record_lines(doc: &Document, model: &Model, theme: &Theme) -> Vec<Line<'static>> {
    let d = &model.shown;
    let Some(rec) = &doc.bench.record else {
        return vec![Line::styled("no fill record yet: w types the empty cylinder's scale reading", theme.dim())];
    };
    let r = &rec.record;
    let mut lines = vec![Line::raw(format!(
        "record {} rev {}: {} weighings{}",
        rec.id,
        r.revision,
        r.weighings.len(),
        if r.finished.is_some() { ", finished" } else { "" }
    ))];
    let Some(prog) = &doc.bench.progress else { return lines };
    let Ok(plan) = &doc.computed.plan else { return lines };
    for c in prog.standing.cross_checks.iter().filter(|c| c.disagrees()) {
        let text = format!(
            "step {}: reading {} {u} but the weighing gives {} {u} (±{}): check gauge, scale, source; x corrects",
            c.step + 1,
            d.pf(c.reading_pa),
            d.pf(c.from_masses_pa),
            d.pf(c.allowed_pa),
            u = d.pu()
        );
        lines.extend(wrap_words(&text, 78).into_iter().map(|l| Line::styled(l, theme.fg(Color::Red))));
    }
    if let Some(c) = r.corrections.last() {
        let text = format!("{} correction(s); last: {} ({})", r.corrections.len(), c.entry, c.reason);
        lines.push(Line::styled(clip(&text, 78), theme.dim()));
    }
    let mut so_far = String::from("so far vs plan:");
    for (id, now, planned) in &prog.rows {
        if *planned > 0.0 {
            so_far.push_str(&format!(" {id} {}%", crate::units::signed((now / planned - 1.0) * 100.0, 2)));
        }
    }
    lines.push(Line::raw(clip(&so_far, 78)));
    match &prog.replan {
        Ok(rp) if prog.weighed < plan.steps.len() => {
            let verdict = if rp.on_target {
                format!("on target; final {} {} settled", d.pf(rp.final_pressure_pa), d.pu())
            } else {
                let worst = rp
                    .deviations
                    .iter()
                    .filter(|x| !x.2)
                    .map(|x| format!("{} {}%", prog.rows[x.0].0, crate::units::signed(x.1 * 100.0, 2)));
                format!("target can no longer be met: {}", worst.collect::<Vec<_>>().join(", "))
            };
            let style = if rp.on_target { Style::default() } else { theme.fg(Color::Red) };
            lines.push(Line::styled(clip(&verdict, 78), style));
        }
        Ok(_) => lines.push(Line::raw(format!("fill complete: fillwright certify {}", rec.id))),
        Err(e) => lines.push(Line::styled(clip(&format!("cannot re-plan: {e}"), 78), theme.fg(Color::Red))),
    }
    lines
}

fn models(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    let Ok(p) = &doc.computed.plan else {
        frame.render_widget(Paragraph::new("The recipe does not plan yet; see the Recipe view."), area);
        return;
    };
    // One table: a column per model; the stop reading of each step, then the amount, its
    // difference from the reference, and Z.
    let ok: Vec<_> = p.models.iter().filter_map(|m| m.result.as_ref().ok().map(|f| (m.model, f))).collect();
    // The reference: GERG-2008 where it covers the blend, else the multi-fluid model.
    use crate::thermo::Model as Eos;
    let reference = [Eos::Gerg, Eos::Multi]
        .iter()
        .find_map(|r| ok.iter().find(|(m, _)| m == r).map(|(m, _)| *m))
        .unwrap_or(p.model);
    let ref_amount = ok.iter().find(|(m, _)| *m == reference).map(|(_, f)| f.amount_mol);
    let max_steps = (area.height as usize).saturating_sub(14).clamp(2, 12);
    let shown = p.steps.len().min(max_steps);
    let table_h = (shown + 6) as u16;
    let [top, bottom] = Layout::vertical([Constraint::Length(table_h), Constraint::Min(4)]).areas(area);
    let block = Block::default().borders(Borders::ALL).title(format!(
        " Every model: stop readings at {} in {}; reference {} ",
        model.shown.tf(p.fill_temperature_k),
        model.shown.pu(),
        reference.key()
    ));
    let inner = block.inner(top);
    frame.render_widget(block, top);
    let mut head = format!("{:<14}", "");
    for (m, _) in &ok {
        let mark = if *m == p.model { "*" } else { "" };
        head.push_str(&format!("{:>9}", format!("{}{mark}", m.key())));
    }
    let mut lines = vec![Line::styled(head, theme.bold())];
    for (i, s) in p.steps.iter().enumerate().take(shown) {
        let mut row = format!("{:<14}", clip(&format!("{} {}", i + 1, s.source), 13));
        for (_, f) in &ok {
            row.push_str(&crate::units::cell(f.step_pressures_pa.get(i).map_or(f64::NAN, |v| model.shown.p(*v)), 5, 9));
        }
        lines.push(Line::raw(row));
    }
    if p.steps.len() > shown {
        lines.push(Line::styled(format!("… {} more steps on the fill sheet", p.steps.len() - shown), theme.dim()));
    }
    let mut amount = format!("{:<14}", "amount mol");
    let mut diff = format!("{:<14}", "vs reference");
    let mut z = format!("{:<14}", "Z");
    for (_, f) in &ok {
        amount.push_str(&crate::units::cell(f.amount_mol, 5, 9));
        diff.push_str(&format!(
            "{:>9}",
            format!("{}%", crate::units::signed(ref_amount.map_or(0.0, |r| (f.amount_mol / r - 1.0) * 100.0), 2))
        ));
        z.push_str(&format!("{:>9.4}", f.z));
    }
    lines.extend([Line::styled(amount, theme.bold()), Line::raw(diff), Line::raw(z)]);
    for m in p.models.iter().filter(|m| m.result.is_err()) {
        let e = m.result.as_ref().err().map_or("", |e| e.split(';').next().unwrap_or(e));
        lines.push(Line::styled(clip(&format!("{}: {e}", m.model.key()), inner.width as usize), theme.dim()));
    }
    frame.render_widget(Paragraph::new(lines), inner);

    let [zc, fc] = Layout::horizontal([Constraint::Percentage(50), Constraint::Percentage(50)]).areas(bottom);
    // One marker per model, so that the curves are told apart without colour.
    let markers = [
        Marker::Dot,
        Marker::Braille,
        Marker::Block,
        Marker::Bar,
        Marker::HalfBlock,
        Marker::Quadrant,
        Marker::Custom('+'),
    ];
    let marks = ["•", "⣿", "█", "▄", "▀", "▖", "+"];
    let colors = [Color::White, Color::Cyan, Color::Magenta, Color::Yellow, Color::Green, Color::Red, Color::Blue];
    let (mut zmin, mut zmax, mut pmax) = (f64::INFINITY, f64::NEG_INFINITY, 1.0f64);
    // The curves are computed in bar; shown in the settings' unit.
    let curves: Vec<Vec<(f64, f64)>> = doc
        .computed
        .z_curves
        .iter()
        .map(|(_, pts)| pts.iter().map(|(p_bar, z)| (model.shown.p(p_bar * 1e5), *z)).collect())
        .collect();
    for pts in &curves {
        for (pp, z) in pts {
            zmin = zmin.min(*z);
            zmax = zmax.max(*z);
            pmax = pmax.max(*pp);
        }
    }
    let datasets: Vec<Dataset> = doc
        .computed
        .z_curves
        .iter()
        .zip(&curves)
        .enumerate()
        .map(|(i, ((m, _), pts))| {
            Dataset::default()
                .name(m.key())
                .marker(markers[i % markers.len()])
                .graph_type(GraphType::Line)
                .style(theme.fg(colors[i % colors.len()]))
                .data(pts)
        })
        .collect();
    let pad = ((zmax - zmin) * 0.05).max(0.005);
    let legend: String = doc
        .computed
        .z_curves
        .iter()
        .enumerate()
        .map(|(i, (m, _))| format!("{}{}", marks[i % marks.len()], m.key()))
        .collect::<Vec<_>>()
        .join(" ");
    let chart = Chart::new(datasets)
        .legend_position(None)
        .block(Block::default().borders(Borders::ALL).title(" Z against pressure ").title_bottom(format!(" {legend} ")))
        .x_axis(
            Axis::default().title(model.shown.pu()).bounds([0.0, pmax]).labels(["0".to_string(), format!("{pmax:.0}")]),
        )
        .y_axis(
            Axis::default()
                .title("Z")
                .bounds([zmin - pad, zmax + pad])
                .labels([format!("{:.2}", zmin - pad), format!("{:.2}", zmax + pad)]),
        );
    frame.render_widget(chart, zc);
    // The fill: pressure reading against the amount added so far.
    let mut pts = vec![(0.0, 0.0)];
    let mut n = 0.0;
    for s in &p.steps {
        n += s.add_amount_mol;
        pts.push((n, model.shown.p(s.pressure_after_pa)));
    }
    let (nmax, ptop) = pts.iter().fold((0.0f64, 0.0f64), |a, b| (a.0.max(b.0), a.1.max(b.1)));
    let chart = Chart::new(vec![Dataset::default()
        .name(p.model.key())
        .marker(Marker::Braille)
        .graph_type(GraphType::Line)
        .style(theme.fg(Color::Cyan))
        .data(&pts)])
    .block(Block::default().borders(Borders::ALL).title(" The fill: reading against amount "))
    .x_axis(Axis::default().title("mol").bounds([0.0, nmax.max(1e-9)]).labels(["0".to_string(), format!("{nmax:.1}")]))
    .y_axis(
        Axis::default()
            .title(model.shown.pu())
            .bounds([0.0, ptop.max(1e-9)])
            .labels(["0".to_string(), format!("{ptop:.0}")]),
    );
    frame.render_widget(chart, fc);
}

fn screening(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    let block = Block::default().borders(Borders::ALL).title(" Screening before the fill ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let Some(checks) = &doc.computed.checks else {
        frame.render_widget(Paragraph::new("The recipe does not plan yet; see the Recipe view."), inner);
        return;
    };
    let mut lines = Vec::new();
    let order = super::model::checks_worst_first(checks);
    let sorted: Vec<_> = order.iter().map(|&i| &checks[i]).collect();
    let w = inner.width as usize;
    let chosen = order.iter().position(|&i| i == model.check_selected).unwrap_or(0);
    for (k, c) in sorted.iter().enumerate() {
        let marker = if k == chosen { "▶" } else { " " };
        lines.push(Line::from(vec![
            Span::raw(marker),
            Span::styled(
                format!("[{:<7}] ", c.severity.key()),
                theme.severity(c.severity).add_modifier(Modifier::BOLD),
            ),
            Span::styled(format!("{:<16}", c.id), theme.bold()),
            Span::raw(clip(&c.message, w.saturating_sub(27))),
        ]));
    }
    if let Some(c) = sorted.get(chosen) {
        lines.push(Line::raw(String::new()));
        lines.push(Line::styled(format!("{}: {}", c.id, c.message), theme.bold()));
        for d in &c.details {
            lines.push(Line::raw(format!("  {d}")));
        }
    }
    lines.push(Line::raw(String::new()));
    for c in CAUTIONS {
        lines.push(Line::styled(format!("- {c}"), theme.dim()));
    }
    frame.render_widget(Paragraph::new(lines).wrap(Wrap { trim: false }), inner);
}

/// The mark of a step on the sheet: `L` liquid at the fill temperature, `c` liquid on
/// cooling, `!` too small to dose; None for a plain step.
fn step_mark(s: &crate::plan::Step) -> Option<&'static str> {
    if s.liquid_at_fill {
        Some("L")
    } else if s.flags.iter().any(|f| matches!(f, StepFlag::AboveDewPoint | StepFlag::CondensesIfCooled)) {
        Some("c")
    } else if s.flags.iter().any(|f| f.too_small()) {
        Some("!")
    } else {
        None
    }
}

fn centered(area: Rect, width: u16, height: u16) -> Rect {
    let w = width.min(area.width);
    let h = height.min(area.height);
    Rect { x: area.x + (area.width - w) / 2, y: area.y + (area.height - h) / 2, width: w, height: h }
}

fn boxed(frame: &mut Frame, area: Rect, title: &str, lines: Vec<Line>) -> Rect {
    frame.render_widget(Clear, area);
    let block = Block::default().borders(Borders::ALL).title(format!(" {title} "));
    let inner = block.inner(area);
    frame.render_widget(Paragraph::new(lines).block(block).wrap(Wrap { trim: false }), area);
    inner
}

fn help_lines(view: View) -> Vec<&'static str> {
    let mut v = match view {
        View::Library => vec![
            "↑↓ or j k   choose a recipe",
            "Enter       open it in the editor",
            "/           search names, orders, serials, gases (Esc clears)",
            "n           new recipe",
            "c           copy the recipe under a new name",
            "r           rename it",
            "d or Del    delete it (kept in the library's .trash)",
            "h           history: revisions and what changed; r restores",
            "g           read the library folder again",
            "t           the trash: bring a deleted recipe back",
            "o           settings: units, default model, resolutions,",
            "            storage temperatures, margin (settings.ron)",
            "v           verification by analysis (ISO 6143): type the",
            "            analyser's responses, see the fit and the verdict",
            "y           sync: bring in the other benches' saves, send ours",
        ],
        View::Editor => vec![
            "↑↓ or j k   move between lines",
            "Enter or e  edit the line (Enter keeps, Esc cancels)",
            "a           add a gas (search by formula, name or CAS)",
            "g           change the gas of a component",
            "b           make the component the balance gas",
            "x or Del    remove the component or source",
            "u, Ctrl-z   undo      Ctrl-r, Ctrl-y  redo",
        ],
        View::Sheet => vec![
            "↑↓ j k  choose a step        Space  mark it done",
            "t  cylinder temperature now  c  back to the planned temperature",
            "r  reading reached (bar, barg, psig …)",
            "w  scale reading: the empty cylinder, then after each step",
            "l  source of the addition: analysis, @NAME or record:ID",
            "x  correct a recorded entry, with its reason",
            "o  operator   b  balance   a  air at the scale (buoyancy)",
            "m  premixes for steps too small to dose (a accepts one)",
            "p  write the sheet to sheets/ in the library (text, PDF)",
            "every entry is written to records/ at once; reopening the",
            "recipe continues the fill; fillwright certify ID certifies",
        ],
        View::Models => vec!["every model's amount, Z and last stop reading;", "charts of Z and of the fill"],
        View::Checks => vec![
            "↑↓ or j k   choose a check; its figures show below",
            "checks: condensation, rating, flammability, oxidising,",
            "toxicity and incompatible pairs, worst first",
        ],
    };
    v.extend([
        "",
        "Tab, S-Tab  next, previous view   1-5 go to a view",
        "s or F2     save (S: save with a note)",
        "Esc         back out              ? help   q quit",
    ]);
    v
}

fn overlay(model: &Model, catalogue: &Catalogue, theme: &Theme, frame: &mut Frame, area: Rect) {
    match &model.overlay {
        Overlay::None => {}
        Overlay::Help => {
            let lines: Vec<Line> = help_lines(model.view).into_iter().map(Line::raw).collect();
            let h = lines.len() as u16 + 2;
            boxed(frame, centered(area, 64, h), &format!("Keys: {}", model.view.title()), lines);
        }
        Overlay::ConfirmQuit => {
            let lines = vec![
                Line::raw("The recipe has unsaved changes."),
                Line::raw("s  save and quit     y  quit without saving"),
                Line::raw("any other key: stay"),
            ];
            boxed(frame, centered(area, 50, 5), "Quit?", lines);
        }
        Overlay::ConfirmDelete(name) => {
            let lines = vec![
                Line::raw(format!("Move {name} to the trash folder?")),
                Line::raw("y  delete (recoverable)     any other key: keep"),
            ];
            boxed(frame, centered(area, 56, 4), "Delete", lines);
        }
        Overlay::Premixes { selected } => {
            // The keys first, so that a long cascade cut at the foot of a small window
            // still shows how to accept it.
            let mut lines: Vec<Line> = [
                "a  accept: each stage becomes a library recipe,",
                "   the blend takes the last as its source · Esc close",
            ]
            .into_iter()
            .map(|hint| Line::styled(hint, theme.dim()))
            .collect();
            lines.extend(super::premixes::lines(model, *selected).into_iter().map(Line::raw));
            let h = (lines.len() as u16 + 2).min(area.height);
            let w = area.width.min(84);
            boxed(frame, centered(area, w, h), "Premixes", lines);
        }
        Overlay::Trash { entries, selected } => {
            let mut lines: Vec<Line> = entries
                .iter()
                .enumerate()
                .map(|(k, (name, when))| {
                    Line::styled(
                        format!(
                            "{} {:<40} deleted {when}",
                            if k == *selected { "▶" } else { " " },
                            clip_middle(name, 40)
                        ),
                        if k == *selected { theme.selected() } else { Style::default() },
                    )
                })
                .collect();
            lines.push(Line::styled("↑↓ choose · Enter bring it back · Esc close", theme.dim()));
            let h = (lines.len() as u16 + 2).min(area.height);
            boxed(frame, centered(area, 70, h), "Trash", lines);
        }
        Overlay::Settings { selected, values } => {
            let s = values.as_ref();
            let mut lines: Vec<Line> = super::settings_editor::FIELDS
                .iter()
                .enumerate()
                .map(|(k, f)| {
                    let text = format!(
                        "{} {:<28} {}",
                        if k == *selected { "▶" } else { " " },
                        super::settings_editor::label(f),
                        super::settings_editor::value(s, f)
                    );
                    Line::styled(text, if k == *selected { theme.selected() } else { Style::default() })
                })
                .collect();
            lines.push(Line::styled("↑↓ choose · Enter change · Esc close", theme.dim()));
            let h = lines.len() as u16 + 2;
            boxed(frame, centered(area, 60, h), "Settings (settings.ron)", lines);
        }
        Overlay::ConfirmSaveInvalid { why, .. } => {
            let mut lines = vec![Line::styled("This recipe does not validate:", theme.severity(Severity::Stop))];
            lines.extend(wrap_words(why, 58).into_iter().take(4).map(Line::raw));
            lines.push(Line::raw("It will not plan until that is mended."));
            lines.push(Line::raw("y  save it anyway     any other key: do not save"));
            let h = lines.len() as u16 + 2;
            boxed(frame, centered(area, 62, h), "Save an invalid recipe?", lines);
        }
        Overlay::ConfirmStop(finding) => {
            let mut lines = vec![Line::styled("This plan is at STOP:", theme.severity(Severity::Stop))];
            lines.extend(wrap_words(finding, 58).into_iter().map(Line::raw));
            lines.push(Line::raw("Filling it goes against the screening. Follow the"));
            lines.push(Line::raw("cylinder's markings, local codes and licensed practice."));
            lines.push(Line::raw("y  unlock the steps anyway     any other key: keep locked"));
            let h = lines.len() as u16 + 2;
            boxed(frame, centered(area, 62, h), "Fill a plan at stop?", lines);
        }
        Overlay::Conflict => {
            let lines = vec![
                Line::raw("The file changed on disk since it was opened"),
                Line::raw("(another bench or program saved it). Nothing was written."),
                Line::raw("r  reload from disk (drops your edits)"),
                Line::raw("a  save yours under another name"),
                Line::raw("o  overwrite the file on disk"),
            ];
            boxed(frame, centered(area, 62, 7), "Changed on disk", lines);
        }
        Overlay::Prompt { purpose, input } => {
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
                Prompt::StepSource => "Source: its analysis, @NAME or record:ID".into(),
                Prompt::Correction => "Correct: w|p|t|s STEP VALUE (- withdraws)".into(),
                Prompt::CorrectionReason(c) => format!("Why correct {c}?"),
                Prompt::Operator => "Operator (who fills)".into(),
                Prompt::Balance => "Balance (identity, calibration)".into(),
                Prompt::Air(k) => format!("Air at weighing {k}: temperature pressure humidity"),
                Prompt::Setting(k) => {
                    let field = super::settings_editor::FIELDS[(*k).min(super::settings_editor::FIELDS.len() - 1)];
                    format!("Setting: {}", super::settings_editor::label(field))
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
        Overlay::Picker { input, selected, purpose } => {
            let hits = super::picker::matches(catalogue, input.value());
            let r = centered(area, 64, area.height.min(16));
            let rows = r.height.saturating_sub(4) as usize;
            let first = selected.saturating_sub(rows.saturating_sub(1));
            let mut lines = vec![Line::styled(format!("search: {}", input.value()), theme.bold())];
            for (k, &g) in hits.iter().enumerate().skip(first).take(rows) {
                let gas = catalogue.gas(g);
                let text = format!(
                    "{} {:<10} {:<24} {}",
                    if k == *selected { "▶" } else { " " },
                    gas.id(),
                    clip(gas.name(), 24),
                    gas.record.cas
                );
                lines.push(Line::styled(text, if k == *selected { theme.selected() } else { Style::default() }));
            }
            if hits.is_empty() {
                lines.push(Line::raw("  no gas matches"));
            }
            let title = match purpose {
                PickFor::AddComponent => "Add a gas",
                PickFor::ReplaceComponent(_) => "Change the gas",
            };
            let inner = boxed(frame, r, title, lines);
            frame.set_cursor_position((inner.x + 8 + input.visual_cursor() as u16, inner.y));
        }
        Overlay::History { name, revisions, selected, changes, base } => {
            // As wide as the screen allows; the note gets what the fixed columns leave.
            let width = area.width.saturating_sub(4).clamp(40, 120);
            let note_room = usize::from(width).saturating_sub(2 + 8 + 22 + 12 + 2);
            let mut lines: Vec<Line> = revisions
                .iter()
                .enumerate()
                .map(|(k, r)| {
                    let when = r.saved.as_deref().map_or("-".to_string(), |s| s.replace('T', " "));
                    let text = format!(
                        "{} rev {:>3}  {:<20}  {:<10}  {}",
                        if k == *selected { "▶" } else { " " },
                        r.revision,
                        clip(&when, 20),
                        clip(r.saved_by.as_deref().unwrap_or("-"), 10),
                        clip(r.note.as_deref().unwrap_or(""), note_room)
                    );
                    Line::styled(text, if k == *selected { theme.selected() } else { Style::default() })
                })
                .collect();
            lines.push(Line::styled(
                match base {
                    Some(b) => format!("from revision {b} to the chosen one:"),
                    None => "from the chosen revision to the newest:".to_string(),
                },
                theme.bold(),
            ));
            lines.extend(changes.iter().map(|c| Line::raw(format!("  {c}"))));
            lines.push(Line::styled("↑↓ choose · Space compare from here · r restore · Esc close", theme.dim()));
            let h = (lines.len() as u16 + 2).min(area.height);
            boxed(frame, centered(area, width, h), &format!("History of {name}"), lines);
        }
        Overlay::Drafts { drafts, selected } => {
            let mut lines = vec![Line::raw("A session ended with unsaved edits; they were kept:")];
            for (k, d) in drafts.iter().enumerate() {
                let when = d.written.get(..16).unwrap_or(&d.written).replace('T', " ");
                lines.push(Line::styled(
                    format!("{} {}  {when}", if k == *selected { "▶" } else { " " }, clip(&d.name, 38)),
                    if k == *selected { theme.selected() } else { Style::default() },
                ));
            }
            lines.push(Line::styled("Enter recover · d discard · Esc later", theme.dim()));
            let h = lines.len() as u16 + 2;
            boxed(frame, centered(area, 60, h), "Recover unsaved edits?", lines);
        }
    }
}
