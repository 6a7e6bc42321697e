//! Drawing the Fill sheet: the steps as planned and as done, the readings to stop at for the
//! cylinder now, and the fill record so far.

use ratatui::layout::Rect;
use ratatui::style::{Color, Modifier, Style};
use ratatui::text::Line;
use ratatui::widgets::{Block, Borders, Paragraph};
use ratatui::Frame;

use crate::checks::Severity;
use crate::ron_format::{clip, wrap_words};
use crate::tui::model::{Document, Model};
use crate::tui::theme::Theme;
use crate::tui::views::step_mark;
use crate::units::Shown;

pub fn sheet(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
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
    let width = usize::from(inner.width.max(20));
    let mut lines = stop_lines(doc, theme, width);
    lines.push(Line::raw(match b.measured_k {
        Some(t) => format!("planned for {}; cylinder now {}: stop at 'now'", d.tf(p.fill_temperature_k), d.tf(t)),
        None => format!("readings for {}; t: type the cylinder temperature now", d.tf(p.fill_temperature_k)),
    }));
    if let Some((severity, note)) = b.measured_k.and_then(|t| super::temperature_note(t, &model.limits, d)) {
        lines.extend(wrap_words(&note, width).into_iter().map(|l| Line::styled(l, theme.severity(severity))));
    }
    lines.extend(table(doc, p, d, theme, width));
    lines.extend(first_plan_note(b, d, width).into_iter().map(|l| Line::styled(l, theme.dim())));
    lines.extend(step_notes(doc, model, p, theme, width));
    lines.extend(plan_warnings(p, theme, width));
    let done = b.done.iter().filter(|d| **d).count();
    lines.push(Line::raw(format!("{done} of {} steps done", p.steps.len())));
    lines.extend(record_lines(doc, model, theme, width));
    frame.render_widget(Paragraph::new(lines), inner);
}

/// A plan at stop: the finding, and whether the steps are locked.
fn stop_lines(doc: &Document, theme: &Theme, width: usize) -> Vec<Line<'static>> {
    let mut lines = Vec::new();
    if let Some(stop) = super::first_stop(doc) {
        let style = theme.severity(Severity::Stop).add_modifier(Modifier::BOLD);
        for l in wrap_words(&format!("STOP - do not fill as planned: {stop}"), width) {
            lines.push(Line::styled(l, style));
        }
        lines.push(Line::styled(
            if doc.bench.stop_accepted.as_deref() == Some(stop.as_str()) {
                "steps unlocked on your own judgement".to_string()
            } else {
                "steps are locked; Space asks to unlock them".to_string()
            },
            theme.severity(Severity::Stop),
        ));
    }
    lines
}

/// The steps: the heading, the heel, and a row per step (finished ones as recorded).
fn table(doc: &Document, p: &crate::plan::Plan, d: &Shown, theme: &Theme, width: usize) -> Vec<Line<'static>> {
    let b = &doc.bench;
    let src_w = source_width(p, width);
    let ambient = doc.computed.order.as_ref().map_or(1.01325e5, |o| o.ambient_pa);
    let mut lines = Vec::new();
    lines.push(Line::styled(
        format!(
            " {:<4}{:<3}{:<src_w$}{:>9}{:>10}{:>10}{:>9}{:>9}{:>9}",
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
                " {:<4}{:<3}{:<src_w$}{:>9.2}{:>10.1}{:>10}{:>9}",
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
        let text = sheet_row(b, d, i, s, ambient, src_w);
        let style = match (selected, b.live.get(i).is_some_and(|l| l.finished)) {
            (true, _) => theme.selected(),
            (false, true) => theme.dim(),
            (false, false) => Style::default(),
        };
        lines.push(Line::styled(text, style));
    }
    lines
}

/// For the chosen step: its source whole (a premix name cut in the table, or the source
/// recorded for the addition in progress) and the judgement of the readings typed.
fn step_notes(doc: &Document, model: &Model, p: &crate::plan::Plan, theme: &Theme, width: usize) -> Vec<Line<'static>> {
    let (b, d) = (&doc.bench, &model.shown);
    let mut lines = Vec::new();
    let in_progress = b.record.as_ref().map(|r| r.record.weighings.len().saturating_sub(1));
    if doc.computed.phases_estimated {
        let text = "liquid flags: Peng-Robinson's quick estimate; the reference equations' answer follows";
        lines.extend(wrap_words(text, width).into_iter().map(|l| Line::styled(l, theme.dim())));
    }
    match (&b.chosen_source, p.steps.get(b.selected)) {
        (Some(c), Some(s)) if in_progress == Some(b.selected) => {
            let text = format!("step {} source {}: {c} (recorded)", b.selected + 1, s.source);
            lines.extend(wrap_words(&text, width).into_iter().map(Line::raw));
        }
        (_, Some(s)) if s.source.chars().count() > source_width(p, width) - 1 => {
            lines.push(Line::raw(format!("step {} source: {}", b.selected + 1, s.source)));
        }
        _ => {}
    }
    if let Some(state) = b.premix_states.get(b.selected).and_then(Option::as_ref) {
        lines.extend(wrap_words(state, width).into_iter().map(|l| Line::styled(l, theme.dim())));
    }
    // The reading to stop at now, also as the gauge shows it (the table's `now` is absolute).
    if let (Some(now), Some(_)) = (b.live.get(b.selected).and_then(|l| l.pressure_now_pa), b.measured_k) {
        let ambient = doc.computed.order.as_ref().map_or(1.01325e5, |o| o.ambient_pa);
        let text = format!(
            "step {} now: stop at {} {u} abs, {} {u} on a gauge (ambient {} {u})",
            b.selected + 1,
            d.pf(now),
            d.pf(now - ambient),
            d.pf(ambient),
            u = d.pu()
        );
        lines.extend(wrap_words(&text, width).into_iter().map(Line::raw));
    }
    for (severity, note) in super::reading_notes(doc, &model.limits, d, b.selected) {
        let style = match severity {
            Severity::Ok => Style::default(),
            s => theme.severity(s),
        };
        lines.extend(wrap_words(&note, width).into_iter().map(|l| Line::styled(l, style)));
    }
    lines
}

/// What the plan warns of: a liquefied-gas fill, the step marks' legends, steps too small
/// to dose.
fn plan_warnings(p: &crate::plan::Plan, theme: &Theme, width: usize) -> Vec<Line<'static>> {
    let mut lines = Vec::new();
    if p.by_mass {
        lines.extend(
            wrap_words(
                "LIQUEFIED-GAS FILL: the blend is liquid or two-phase at the reference temperature. Stop each \
                 addition at its scale reading; the gauge shows the vapour pressure. Leave vapour space (the fill \
                 ratio on the cylinder's markings).",
                width,
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
            lines.extend(wrap_words(text, width).into_iter().map(|l| Line::styled(l, theme.severity(Severity::Stop))));
        }
    }
    if p.steps.iter().any(|s| s.flags.iter().any(|f| f.too_small())) {
        lines.push(Line::styled(
            "! below the gauge or scale resolution: m shows the premix proposed",
            theme.fg(Color::Yellow),
        ));
    }
    lines
}

/// The source column: as wide as the longest source, within what the window leaves
/// beside the other columns (a premix's name whole in a wide window), at least 11.
fn source_width(p: &crate::plan::Plan, width: usize) -> usize {
    let longest = p.steps.iter().map(|s| s.source.chars().count()).max().unwrap_or(0) + 1;
    longest.min(width.saturating_sub(67)).clamp(11, 40)
}

/// One step of the Fill sheet: a finished step as recorded (what was added, the scale
/// and pressure readings taken), a step to do as the live plan has it.
fn sheet_row(
    b: &crate::tui::model::Bench,
    d: &Shown,
    i: usize,
    s: &crate::plan::Step,
    ambient: f64,
    src_w: usize,
) -> String {
    let clip_src = |text: &str| clip(text, src_w - 1);
    let cursor = if i == b.selected { "▶" } else { " " };
    let done = if b.done.get(i).copied().unwrap_or(false) { "[x]" } else { "[ ]" };
    let flag = step_mark(s).map_or(String::new(), |m| format!(" {m}"));
    let Some(live) = b.live.get(i) else {
        return format!("{cursor}{done:<4}{:<3}{:<src_w$}", i + 1, clip_src(&s.source));
    };
    if live.finished {
        let reached = live.recorded_reading.map_or("–".to_string(), |(p, _)| d.pf(p));
        return format!(
            "{cursor}{done:<4}{:<3}{:<src_w$}{:>9.2}{:>10.2}{:>10}{:>9}{:>9}{:>9}",
            i + 1,
            clip_src(&live.source),
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
        "{cursor}{done:<4}{:<3}{:<src_w$}{:>9.2}{:>10.2}{:>10}{:>9}{:>9}{:>9}{moved}{flag}",
        i + 1,
        clip_src(&s.source),
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

/// The composition made so far as mole fractions, against the plan after as many steps
/// (the composition, not the amounts: a step that overfills one gas moves every fraction
/// less than its amount); once every step is weighed, against the target and its
/// tolerance. Each line with whether it is outside the tolerance.
pub fn composition_made(
    prog: &crate::tui::model::Progress,
    plan: &crate::plan::Plan,
    width: usize,
) -> Vec<(String, bool)> {
    let total_now: f64 = prog.rows.iter().map(|r| r.1).sum();
    let total_planned: f64 = prog.rows.iter().map(|r| r.2).sum();
    if !(total_now > 0.0 && total_planned > 0.0) {
        return Vec::new();
    }
    let complete = prog.weighed >= plan.steps.len();
    let mut parts = Vec::new();
    let mut out = false;
    for (i, (id, now, planned)) in prog.rows.iter().enumerate() {
        if *planned <= 0.0 && *now <= 0.0 {
            continue;
        }
        let x = now / total_now;
        let c = &plan.components[i];
        let against = if complete { c.mole_fraction } else { planned / total_planned };
        let dev = if against > 0.0 {
            format!("{}%", crate::units::signed((x / against - 1.0) * 100.0, 2))
        } else {
            "new".into()
        };
        let judged = match (complete, c.tolerance) {
            (true, Some(tol)) if (x - c.mole_fraction).abs() > tol => {
                out = true;
                format!(", OUT of ±{}", crate::units::fraction_text(tol))
            }
            (true, Some(tol)) => format!(", within ±{}", crate::units::fraction_text(tol)),
            _ => String::new(),
        };
        parts.push(format!("{id} {} ({dev}{judged})", crate::units::fraction_text(x)));
    }
    let head = if complete {
        "made, against the target:".to_string()
    } else {
        format!("made so far, against the plan after step {}:", prog.weighed)
    };
    wrap_words(&format!("{head} {}", parts.join("; ")), width).into_iter().map(|l| (l, out)).collect()
}

/// The fill record under the steps: where it is, the composition so far against the plan,
/// and the rest of the fill re-planned from the weighings.
fn record_lines(doc: &Document, model: &Model, theme: &Theme, width: usize) -> Vec<Line<'static>> {
    let d = &model.shown;
    let Some(rec) = &doc.bench.record else {
        let text = match &doc.bench.last_finished {
            Some(id) => format!(
                "no fill in progress; the last fill, record {id}, is finished{} (f lists the records); w starts \
                 a new fill with the empty cylinder's scale reading",
                if doc.bench.certified { " and certified" } else { ": C certifies it" }
            ),
            None => "no fill record yet: w types the empty cylinder's scale reading".into(),
        };
        return wrap_words(&text, width).into_iter().map(|l| Line::styled(l, theme.dim())).collect();
    };
    let r = &rec.record;
    let mut lines = vec![Line::raw(format!(
        "record {} rev {}: {}{}",
        rec.id,
        r.revision,
        crate::units::count(r.weighings.len(), "weighing"),
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
        lines.extend(wrap_words(&text, width).into_iter().map(|l| Line::styled(l, theme.fg(Color::Red))));
    }
    for &k in &doc.bench.unanalysed {
        let source = r.additions.get(k).map_or("", |a| a.source.as_str());
        let text = format!(
            "step {}'s source {source} has no uncertainty: a certificate needs its analysis or its own fill \
             record. x then s {} record:ID (or its analysis)",
            k + 1,
            k + 1
        );
        lines.extend(wrap_words(&text, width).into_iter().map(|l| Line::styled(l, theme.fg(Color::Red))));
    }
    if let Some(c) = r.corrections.last() {
        let text = format!("{} correction(s); last: {} ({})", r.corrections.len(), c.entry, c.reason);
        lines.push(Line::styled(clip(&text, width), theme.dim()));
    }
    for (l, out) in composition_made(prog, plan, width) {
        lines.push(if out { Line::styled(l, theme.fg(Color::Red)) } else { Line::raw(l) });
    }
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
            lines.extend(wrap_words(&verdict, width).into_iter().map(|l| Line::styled(l, style)));
        }
        Ok(_) if doc.bench.certified => lines.push(Line::raw(format!(
            "fill complete and certified: certificates/{}.txt in the library (C writes it again)",
            rec.id
        ))),
        Ok(_) => lines.push(Line::raw(format!("fill complete: C certifies it (fillwright certify {})", rec.id))),
        Err(e) => lines.extend(
            wrap_words(&format!("cannot re-plan: {e}"), width)
                .into_iter()
                .map(|l| Line::styled(l, theme.fg(Color::Red))),
        ),
    }
    lines
}
