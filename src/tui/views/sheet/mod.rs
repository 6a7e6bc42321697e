//! The Fill sheet at the bench: ticking steps, the cylinder temperature now, and the fill
//! record. Every scale reading, pressure reading and temperature typed for the step in
//! progress is written to the record at once (a new revision of its file), so nothing is
//! lost when the session ends; opening the recipe again continues the fill. After each
//! weighing the composition so far is compared with the plan and the rest re-planned.

pub mod certify;
pub mod draw;
pub mod premixes;

use ratatui::layout::Rect;
use ratatui::Frame;

use super::Screen;
use crate::checks::Severity;
use crate::library::records::Lookup;
use crate::recipe::canonical;
use crate::record::Record;
use crate::tui::context::{input, Context, Key};
use crate::tui::model::{BenchLimits, Document, Model, Overlay, Progress, Prompt};
use crate::tui::theme::Theme;
use crate::units;
use crate::units::{Shown, REFERENCE_TEMPERATURE_K};

/// The Fill sheet.
pub struct Sheet;

impl Screen for Sheet {
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
        draw::sheet(model, theme, frame, area)
    }
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context) {
        match key {
            Key::Char('p') => export(model, ctx),
            Key::Char('C') => certify::certify(model, ctx),
            // Esc stays: keys typed next would act on the Library's commands.
            Key::Esc => model.status = "Esc stays on the Fill sheet: 1 or Tab go to another view".into(),
            Key::Char('m') => crate::tui::overlays::premixes::open(model),
            Key::Char('g') => premixes::go_to_premix(model, ctx),
            Key::Char('f') => {
                let name = model.doc.as_ref().map(|d| d.name.clone());
                crate::tui::overlays::records::open(model, ctx, name)
            }
            _ => on_key(model, key),
        }
    }
    fn hints(&self, _model: &Model) -> &'static str {
        "? help · Space done · r reading · t temp · w weigh · m premix · l source · p print · C certify · ↑↓ step"
    }
    fn leaves_on_esc(&self) -> bool {
        false
    }
    fn help(&self) -> &'static [&'static str] {
        &[
            "↑↓ j k  choose a step        Space  mark it done",
            "t  cylinder temperature now  c  back to the planned one",
            "r  reading reached (bar, barg, psig …)",
            "w  scale reading: the empty cylinder, then after each step",
            "l  source of the addition: analysis, @NAME or record:ID",
            "x  correct a recorded entry, with its reason",
            "o  operator   b  balance (u=0.02g: its uncertainty)   a  air",
            "m  premixes for steps too small to dose (a accepts one)",
            "g  open the premix recipe of the chosen step, to fill it",
            "p  write the sheet to sheets/ in the library (text, PDF)",
            "C  certify the finished fill: certificates/ID (text, PDF)",
            "f  this recipe's fill records: open, correct, certify, report",
            "every entry is written to records/ at once; reopening the",
            "recipe continues the fill; fillwright certify ID certifies",
            "Esc stays on the sheet (1-5 or Tab change the view)",
        ]
    }
}

/// Keys of the Fill sheet.
pub fn on_key(model: &mut Model, key: Key) {
    let Some(doc) = model.doc.as_mut() else { return };
    let steps = doc.bench.done.len();
    match key {
        Key::Up | Key::Char('k') => doc.bench.selected = doc.bench.selected.saturating_sub(1),
        Key::Down | Key::Char('j') => doc.bench.selected = (doc.bench.selected + 1).min(steps.saturating_sub(1)),
        Key::Char(' ') | Key::Enter | Key::Char('w') if locked(doc) => {
            model.overlay = Overlay::ConfirmStop(first_stop(doc).unwrap_or_default());
        }
        Key::Char(' ') | Key::Enter => {
            if let Some(d) = doc.bench.done.get_mut(doc.bench.selected) {
                *d = !*d;
                model.status = format!("step {} {}", doc.bench.selected + 1, if *d { "done" } else { "not done" });
                if *d {
                    doc.bench.selected = (doc.bench.selected + 1).min(steps.saturating_sub(1));
                }
            }
        }
        Key::Char('t') => {
            // Offered selected-as-empty: typing replaces it.
            model.overlay = Overlay::Prompt { purpose: Prompt::MeasuredTemperature, input: input("") };
            if let Some(t) = doc.bench.measured_k {
                model.status =
                    format!("cylinder was {:.1} °C; type the temperature now (e.g. 21.5C)", units::celsius(t));
            }
        }
        Key::Char('r') if steps > 0 => {
            model.overlay = Overlay::Prompt { purpose: Prompt::ActualReading(doc.bench.selected), input: input("") };
        }
        Key::Char('w') if steps > 0 && doc.bench.record.is_none() && no_serial(doc) => {
            model.overlay = Overlay::Prompt { purpose: Prompt::CylinderSerial, input: input("") };
            model.status = "the recipe names no cylinder serial: type this cylinder's (the fill record and the \
                            certificate name the cylinder by it), then its empty scale reading"
                .into();
        }
        Key::Char('w') if steps > 0 => {
            model.overlay = Overlay::Prompt { purpose: Prompt::Weighing, input: input("") };
            model.status = match weighed(doc) {
                None => "type the scale reading of the cylinder before the first addition (e.g. 13412.00g)".into(),
                Some(k) if k < steps => {
                    format!("type the scale reading after step {} ({})", k + 1, step_source(doc, k))
                }
                Some(_) => "every step is weighed; a correction is made in the record file (a new revision)".into(),
            };
        }
        Key::Char('l') if steps > 0 => {
            let now = chosen_source_hint(doc);
            model.overlay = Overlay::Prompt { purpose: Prompt::StepSource, input: input("") };
            model.status = format!(
                "source of the next addition{now}: its analysis, e.g. CO=0.5%±0.002%,N2=balance,O2=<2ppm (± or +-, \
                 %rel for relative), @NAME from the source library, or record:ID of its own fill"
            );
        }
        Key::Char('x') if doc.bench.record.is_some() => {
            model.overlay = Overlay::Prompt { purpose: Prompt::Correction, input: input("") };
            model.status = format!("correct a recorded entry: {}", crate::record::correct::SYNTAX);
        }
        Key::Char('o') => {
            let now = doc.bench.record.as_ref().map_or(String::new(), |r| r.record.operator.clone());
            model.overlay = Overlay::Prompt { purpose: Prompt::Operator, input: input(&now) };
            model.status = "who fills this cylinder (written to the fill record and the certificate)".into();
        }
        Key::Char('b') => {
            let now = doc.bench.record.as_ref().map_or(String::new(), |r| r.record.balance.clone());
            model.overlay = Overlay::Prompt { purpose: Prompt::Balance, input: input(&now) };
            model.status = "the balance: its identity and calibration, as your quality system names them".into();
        }
        Key::Char('a') if doc.bench.record.is_some() => {
            let k = doc.bench.record.as_ref().map_or(0, |r| r.record.weighings.len().saturating_sub(1));
            model.overlay = Overlay::Prompt { purpose: Prompt::Air(k), input: input("") };
            model.status = AIR_HINT.into();
        }
        Key::Char('c') => {
            doc.bench.measured_k = None;
            doc.bench.correct(doc.computed.plan.as_ref().ok());
            model.status = "targets for the planned fill temperature again".into();
        }
        _ => {}
    }
}

/// Whether neither the recipe as saved nor this fill names the cylinder's serial.
fn no_serial(doc: &Document) -> bool {
    let saved = doc.opened.as_ref().and_then(|o| o.recipe.cylinder.serial.clone());
    saved.or_else(|| doc.bench.serial.clone()).is_none_or(|s| s.trim().is_empty())
}

/// The serial typed for a fill whose recipe names none: kept for the record, then the
/// empty cylinder's scale reading is asked.
pub fn on_serial(model: &mut Model, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let serial = text.trim();
    if serial.is_empty() || serial.chars().any(|c| c.is_control()) {
        return keep_prompt(model, Prompt::CylinderSerial, text, "type the serial stamped on the cylinder");
    }
    doc.bench.serial = Some(serial.to_string());
    model.overlay = Overlay::Prompt { purpose: Prompt::Weighing, input: input("") };
    model.status =
        format!("cylinder {serial}: type the scale reading of the cylinder before the first addition (e.g. 13412.00g)");
}

/// Write the fill sheet as text (what `fillwright plan` prints, with the stop banner when
/// the plan is at stop) to `sheets/NAME-revN.txt` in the library, for the bench folder.
pub fn export(model: &mut Model, ctx: &Context) {
    let Some(doc) = model.doc.as_ref() else { return };
    let (Ok(plan), Ok(order)) = (&doc.computed.plan, &doc.computed.order) else {
        model.status = "no fill sheet to write: the recipe does not plan yet".into();
        return;
    };
    let res = crate::plan::Resolutions {
        gauge_pa: ctx.settings.gauge_resolution_pa,
        scale_g: ctx.settings.scale_resolution_g,
    };
    let mut text = String::new();
    if let Some(stop) = first_stop(doc) {
        text.push_str(&crate::print::stop_banner(&stop));
    }
    if doc.dirty() {
        text.push_str("UNSAVED EDITS: this sheet is of the recipe as edited, not of a saved revision.\n\n");
    }
    // The printed sheet has the comparison of following each model's readings, which the
    // screen leaves out of its recompute: the plan is made again with it.
    let options =
        crate::plan::PlanOptions { skip_following: false, ..crate::tui::model::Computed::options(&ctx.settings) };
    let full = crate::plan::plan(order, &ctx.catalogue, &options);
    let plan = full.as_ref().unwrap_or(plan);
    text.push_str(&crate::print::fill_sheet(plan, order, &ctx.catalogue, &res, order.ambient_pa, &model.shown));
    // A fill in progress: the sheet as it stands, what `plan NAME --record ID` prints.
    if let (Some(rec), Some(prog)) = (&doc.bench.record, &doc.bench.progress) {
        if let Ok(r) = &prog.replan {
            let (rest, _) = crate::bench::rest_text(
                &rec.id,
                &prog.standing,
                r,
                &doc.bench.live,
                plan,
                &ctx.catalogue,
                &model.shown,
            );
            text.push_str(&rest);
        }
    }
    text.push_str(&crate::print::bench_form(plan, &model.shown));
    let checks = doc.computed.checks.as_deref().unwrap_or_default();
    text.push_str(&crate::print::cautions(&crate::checks::cautions_for(checks)));
    // The text for the bench folder's screen, the PDF for its printer (the certificate's
    // machinery: Courier on A4, nothing embedded).
    let title = format!("Fill sheet {} rev {}", doc.name, doc.recipe.revision);
    let pdf = crate::print::certificate::pdf::render(&text, &title);
    let written = ctx.library.own_dir(&["sheets"]).map_err(|e| e.to_string()).and_then(|dir| {
        let path = dir.join(format!("{}-rev{}.txt", doc.name, doc.recipe.revision));
        crate::library::atomic::write(&path, text.as_bytes()).map_err(|e| e.to_string())?;
        crate::library::atomic::write(&path.with_extension("pdf"), &pdf).map_err(|e| e.to_string())?;
        Ok(path)
    });
    model.status = match written {
        Ok(path) => format!("fill sheet written to {} and .pdf", path.display()),
        Err(e) => format!("the fill sheet was not written: {e}"),
    };
}

/// The first finding at stop of the recipe's screening (the rating first), if any.
pub fn first_stop(doc: &Document) -> Option<String> {
    let checks = doc.computed.checks.as_ref()?;
    let mut stops: Vec<&crate::checks::Check> = checks.iter().filter(|c| c.severity == Severity::Stop).collect();
    stops.sort_by_key(|c| c.id != "pressure-rating");
    stops.first().map(|c| format!("{} ({})", c.message, c.id))
}

/// Whether the steps are locked: the plan is at stop and the user has not chosen to fill
/// past this finding.
fn locked(doc: &Document) -> bool {
    first_stop(doc).is_some_and(|stop| doc.bench.stop_accepted.as_deref() != Some(stop.as_str()))
}

/// What a typed temperature means: outside the service range, the cylinder must not be
/// filled on (too cold: brittle steel and condensation; too hot: above what the rating
/// assumes).
pub fn temperature_note(t_k: f64, limits: &BenchLimits, d: &Shown) -> Option<(Severity, String)> {
    if t_k > limits.max_k {
        Some((
            Severity::Stop,
            format!(
                "cylinder at {} is above the highest service temperature {}: stop filling and let it cool; \
                 check the thermometer",
                d.tf(t_k),
                d.tf(limits.max_k)
            ),
        ))
    } else if t_k < limits.min_k {
        Some((
            Severity::Caution,
            format!(
                "cylinder at {} is below the lowest storage temperature {}: check the thermometer; fill only in the \
                 cylinder's rated range",
                d.tf(t_k),
                d.tf(limits.min_k)
            ),
        ))
    } else {
        None
    }
}

/// What the sheet says about the reading typed for `step`, worst first: its settled
/// pressure (brought to 15 °C from the cylinder temperature measured) against the working
/// pressure, and how far it is from the plan.
pub fn reading_notes(doc: &Document, limits: &BenchLimits, d: &Shown, step: usize) -> Vec<(Severity, String)> {
    let mut notes = Vec::new();
    let b = &doc.bench;
    // A weighed step is judged by its weighing: a reading that disagrees with it is the
    // record's cross-check, not a reading to stop at.
    if b.live.get(step).is_some_and(|l| l.finished) {
        return notes;
    }
    let (Ok(plan), Some(Some(actual)), Some(s)) = (&doc.computed.plan, b.actual_pa.get(step), plan_step(doc, step))
    else {
        return notes;
    };
    let u = d.pu();
    let t = b.measured_k.unwrap_or(s.temperature_k);
    let target = b.target_pa(step).unwrap_or(s.pressure_after_pa);
    let off = actual - target;
    // Far from the plan: more than 5 % of the target or ten gauge divisions (common practice).
    let far = off.abs() > (0.05 * target).max(10.0 * limits.gauge_pa);
    let working =
        doc.computed.order.as_ref().ok().map(|o| o.working_pressure_pa).filter(|w| *w < crate::thermo::MAX_PRESSURE_PA);
    let settled = plan.settled_from_reading_pa(step, *actual, t).ok();
    if let (Some(w), Some(settled)) = (working, settled) {
        if settled > w {
            notes.push((
                Severity::Stop,
                format!(
                    "STOP: {} {u} at {} settles to {} {u} at 15 °C, above the working pressure {} {u}: add nothing \
                     more; bring it down to the plan by licensed practice",
                    d.pf(*actual),
                    d.tf(t),
                    d.pf(settled),
                    d.pf(w)
                ),
            ));
        } else if *actual > w && t > REFERENCE_TEMPERATURE_K {
            // Warm gas reads high; that is normal only where the reading is also the plan's.
            let (severity, verdict) = if t > limits.max_k {
                (Severity::Caution, "but the cylinder is hotter than its service range")
            } else if far {
                (Severity::Caution, "Within the rating, but far from the plan: see below")
            } else {
                (Severity::Ok, "Normal")
            };
            notes.push((
                severity,
                format!(
                    "{} {u} is above the working pressure only because the gas is warm ({}): it settles to {} {u} \
                     at 15 °C, within the rating. {verdict}.",
                    d.pf(*actual),
                    d.tf(t),
                    d.pf(settled)
                ),
            ));
        }
    }
    let line = format!(
        "step {}: reached {} {u}, target {} {u}, {} {u} off",
        step + 1,
        d.pf(*actual),
        d.pf(target),
        crate::units::signed(d.p(off), d.pd()),
    );
    if far {
        notes.push((
            Severity::Caution,
            format!("{line}: far from the plan; check the gauge, the source and the temperature before going on"),
        ));
    } else {
        notes.push((Severity::Ok, line));
    }
    notes.sort_by_key(|(s, _)| std::cmp::Reverse(*s));
    notes
}

fn plan_step(doc: &Document, step: usize) -> Option<&crate::plan::Step> {
    doc.computed.plan.as_ref().ok()?.steps.get(step)
}

fn chosen_source_hint(doc: &Document) -> String {
    doc.bench.chosen_source.as_ref().map(|s| format!(" (now {s})")).unwrap_or_default()
}

/// Steps weighed so far in the record (None: no weighing yet, not even the empty cylinder).
fn weighed(doc: &Document) -> Option<usize> {
    let r = &doc.bench.record.as_ref()?.record;
    r.weighings.len().checked_sub(1)
}

/// The step in progress: the first one not weighed.
fn step_in_progress(doc: &Document) -> usize {
    weighed(doc).unwrap_or(0)
}

/// How the source of step `k` is written in the record: the chosen analysis, else the
/// plan's source composition.
fn step_source(doc: &Document, k: usize) -> String {
    if let Some(s) = &doc.bench.chosen_source {
        return s.clone();
    }
    let (Ok(plan), Ok(order)) = (&doc.computed.plan, &doc.computed.order) else { return String::new() };
    let Some(step) = plan.steps.get(k) else { return String::new() };
    match order.sources.iter().find(|s| s.name == step.source) {
        Some(s) if s.pure => s.name.clone(),
        Some(s) => doc
            .recipe
            .sources
            .iter()
            .find_map(|l| match l {
                crate::recipe::SourceLine::Premix { name, mix, .. } if *name == s.name => Some(mix.clone()),
                _ => None,
            })
            .unwrap_or_else(|| s.name.clone()),
        None => step.source.clone(),
    }
}

/// Pick up the fill in progress of the opened recipe, if there is one.
pub fn attach_record(doc: &mut Document, ctx: &Context) {
    doc.bench.record = ctx.library.record_in_progress(&doc.name);
    doc.bench.last_finished =
        if doc.bench.record.is_none() { ctx.library.finished_records_of(&doc.name).into_iter().next() } else { None };
    sync_from_record(doc, ctx);
}

/// Make the bench show what the record holds, and recompute the progress.
pub fn sync_from_record(doc: &mut Document, ctx: &Context) {
    let steps = doc.computed.plan.as_ref().map_or(0, |p| p.steps.len());
    doc.bench.premix_states = (0..steps).map(|k| premixes::premix_state(doc, ctx, k)).collect();
    let id = doc.bench.record.as_ref().map(|r| r.id.clone()).or_else(|| doc.bench.last_finished.clone());
    doc.bench.certified = id.is_some_and(|id| ctx.library.certified(&id));
    let Some(opened) = &doc.bench.record else {
        doc.bench.progress = None;
        doc.bench.correct(doc.computed.plan.as_ref().ok());
        return;
    };
    let r = &opened.record;
    // A `record:` or `@` source is an analysis by its reference; a source written out is
    // checked for its uncertainties (cheap: no look-up).
    doc.bench.unanalysed = (0..r.weighings.len().saturating_sub(1).min(r.additions.len()))
        .filter(|&k| {
            let s = r.additions[k].source.trim();
            !s.starts_with("record:") && !s.starts_with('@') && lacks_uncertainty(s, ctx)
        })
        .collect();
    let ambient = doc.computed.order.as_ref().map_or(units::STANDARD_AMBIENT_PA, |o| o.ambient_pa);
    let weighed = r.weighings.len().saturating_sub(1);
    for (k, d) in doc.bench.done.iter_mut().enumerate() {
        *d = *d || k < weighed;
    }
    for (k, a) in r.additions.iter().enumerate() {
        if let (Some(p), Some(slot)) = (&a.pressure, doc.bench.actual_pa.get_mut(k)) {
            *slot = units::parse_pressure(p, ambient).ok();
        }
        if let Some(t) = a.temperature.as_deref().and_then(|t| units::parse_temperature(t).ok()) {
            doc.bench.measured_k = Some(t);
        }
    }
    doc.bench.selected = weighed.min(doc.bench.done.len().saturating_sub(1));
    // The source recorded for the addition in progress (typed before a restart) stands.
    doc.bench.chosen_source = r.additions.get(weighed).map(|a| a.source.clone()).filter(|s| !s.is_empty());
    doc.bench.progress = progress(doc, ctx);
    doc.bench.correct(doc.computed.plan.as_ref().ok());
}

/// The composition so far from the record's masses, against the plan, and the rest re-planned.
fn progress(doc: &Document, ctx: &Context) -> Option<Progress> {
    let opened = doc.bench.record.as_ref()?;
    let (Ok(plan), Ok(order)) = (&doc.computed.plan, &doc.computed.order) else { return None };
    let s = crate::bench::standing(opened, plan, order, &ctx.library, ctx.sources.as_deref(), &ctx.catalogue).ok()?;
    let planned = &plan.steps[s.weighed.checked_sub(1)?].amounts_after_mol;
    let rows = plan
        .gases
        .iter()
        .enumerate()
        .map(|(i, &g)| (ctx.catalogue.gas(g).id().to_string(), s.now_mol[i], planned[i]))
        .collect();
    Some(Progress { weighed: s.weighed, rows, replan: s.replan.clone(), standing: s })
}

/// The standard uncertainty of a scale reading a new record starts with: the reading's
/// rounding to the settings' resolution d, rectangular over ±d/2, so u = d/√12 (GUM 4.3.7 and
/// F.2.2.1), rounded up to a thousandth of a gram. A balance calibration's own figure is
/// typed with the balance (`b`: `u=0.02g`).
pub fn scale_uncertainty_text(resolution_g: f64) -> String {
    let u = resolution_g / 12f64.sqrt();
    format!("{:.3}g", (u * 1000.0).ceil() / 1000.0)
}

/// Write a change to the fill record as its next revision (creating the record on the
/// first weighing). Returns the message for the status line.
fn write_record(doc: &mut Document, ctx: &Context, note: &str, change: impl FnOnce(&mut Record)) -> Result<(), String> {
    let now = (ctx.now)();
    match &doc.bench.record {
        None => {
            let Some(opened) = &doc.opened else {
                return Err("save the recipe first (s): the fill record names its revision".into());
            };
            if doc.dirty() {
                return Err("save the recipe first (s): the fill record names the revision it fills".into());
            }
            let saved = &opened.recipe;
            let serial = saved
                .cylinder
                .serial
                .clone()
                .filter(|s| !s.trim().is_empty())
                .or_else(|| doc.bench.serial.clone())
                .unwrap_or_else(|| "cylinder".into());
            let mut record = Record::start(&doc.name, saved.revision, &canonical::to_text(saved), &serial, &now);
            record.water_capacity = Some(saved.cylinder.water_capacity.clone());
            record.scale_uncertainty = scale_uncertainty_text(ctx.settings.scale_resolution_g);
            record.operator = std::env::var("USER").or_else(|_| std::env::var("LOGNAME")).unwrap_or_default();
            change(&mut record);
            let id = ctx.library.create_record(&record, &now).map_err(|e| e.to_string())?;
            doc.bench.record = Some(ctx.library.open_record(&id).map_err(|e| e.to_string())?);
        }
        Some(opened) => {
            let mut record = opened.record.clone();
            change(&mut record);
            let saved = ctx.library.save_record(opened, &record, note, &now).map_err(|e| e.to_string())?;
            doc.bench.record = Some(saved);
        }
    }
    sync_from_record(doc, ctx);
    Ok(())
}

/// Make sure the record has an addition entry for step `k` (the step in progress).
fn addition_for(record: &mut Record, k: usize, source: &str) -> Option<usize> {
    if k < record.additions.len() {
        return Some(k);
    }
    if k == record.additions.len() {
        record.additions.push(crate::record::Addition { source: source.to_string(), ..Default::default() });
        return Some(k);
    }
    None
}

/// A weighing as typed: the cylinder's reading, and in a substitution weighing the
/// reference cylinder's beside it (`15473.49g / 13950.15g`).
struct TypedWeighing {
    reading: String,
    reference: Option<String>,
    /// The reading less the reference's, g (the reading alone in a direct weighing), now
    /// and at the weighing before.
    net_g: f64,
    previous_net_g: Option<f64>,
}

/// Read a typed weighing against the record: masses, the reference reading where the
/// record weighs by substitution (every weighing or none), and more than the one before.
fn read_weighing(doc: &Document, text: &str) -> Result<TypedWeighing, String> {
    let (w, r) = match text.split_once('/') {
        Some((w, r)) => (w.trim(), Some(r.trim())),
        None => (text.trim(), None),
    };
    let w_g = units::parse_mass(w).map_err(|e| e.to_string())?;
    let r_g = r.map(|r| units::parse_mass(r).map_err(|e| format!("reference cylinder: {e}"))).transpose()?;
    let record = doc.bench.record.as_ref().map(|o| &o.record);
    let substitution = record.is_some_and(|r| !r.reference_weighings.is_empty());
    match (record.is_some_and(|r| !r.weighings.is_empty()), substitution, r_g.is_some()) {
        (true, true, false) => {
            return Err("this fill is weighed by substitution: type the cylinder's reading / the reference \
                        cylinder's (e.g. 13504.86g / 13950.13g)"
                .into())
        }
        (true, false, true) => return Err("this fill is weighed directly: type the cylinder's reading alone".into()),
        _ => {}
    }
    let previous = record.and_then(|r| r.weighings.last().and_then(|w| units::grams(w)));
    if let (Some(p), Some(prev)) = (previous, record.and_then(|r| r.weighings.last())) {
        if w_g <= p {
            return Err(format!("{w} is not above the previous reading {prev}; every addition adds mass"));
        }
    }
    let previous_ref = record.and_then(|r| r.reference_weighings.last().and_then(|w| units::grams(w)));
    let net_g = w_g - r_g.unwrap_or(0.0);
    let previous_net_g = previous.map(|p| p - previous_ref.unwrap_or(0.0));
    if previous_net_g.is_some_and(|p| net_g <= p) {
        return Err(format!(
            "{w} less the reference's {} is not above the difference at the weighing before: check both readings",
            r.unwrap_or_default()
        ));
    }
    Ok(TypedWeighing { reading: w.to_string(), reference: r.map(str::to_string), net_g, previous_net_g })
}

/// A scale reading typed at the bench.
pub fn on_weighing(model: &mut Model, ctx: &Context, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let steps = doc.bench.done.len();
    let typed = match read_weighing(doc, text) {
        Ok(t) => t,
        Err(e) => return keep_prompt(model, Prompt::Weighing, text, &e),
    };
    let k = weighed(doc);
    if k.is_none() && doc.computed.plan.as_ref().is_ok_and(|p| p.heel.is_some()) {
        // The record's composition counts what its weighings add; a heel weighed in with the
        // cylinder would be left out of the certificate.
        model.status = "no fill record for a cylinder with a heel: the certificate would leave the heel out. \
                        Evacuate the cylinder and weigh it empty, or fill from the sheet without a record"
            .into();
        return;
    }
    if k.is_some_and(|k| k >= steps) {
        model.status = "every step is weighed already".into();
        return;
    }
    if let Some(why) = far_from_plan(doc, ctx, k, &typed, text) {
        return keep_prompt(model, Prompt::Weighing, text, &why);
    }
    doc.bench.unconfirmed_weighing = None;
    let result = record_weighing(doc, ctx, k, &typed);
    match result {
        Ok(note) => {
            let id = doc.bench.record.as_ref().map_or(String::new(), |o| o.id.clone());
            let last = k.is_some_and(|k| k + 1 == steps);
            model.status = match (k, last) {
                (None, _) => format!("record {id} started: {} before the fill", typed.reading),
                (Some(_), true) => format!("{note}; the fill is finished: fillwright certify {id}"),
                (Some(_), false) => format!("{note} (record {id})"),
            };
            if !ask_for_air(model, ctx, k) {
                ask_for_analysis(model, ctx);
            }
        }
        Err(e) => keep_prompt(model, Prompt::Weighing, text, &format!("not recorded: {e}")),
    }
}

/// Write a weighing (after step `k`, or of the empty cylinder) to the record, as typed:
/// the record shows what the scale showed. Returns the note of the revision.
fn record_weighing(
    doc: &mut Document,
    ctx: &Context,
    k: Option<usize>,
    typed: &TypedWeighing,
) -> Result<String, String> {
    let steps = doc.bench.done.len();
    let source = k.map(|k| step_source(doc, k)).unwrap_or_default();
    let now = (ctx.now)();
    let beside = typed.reference.as_ref().map_or(String::new(), |r| format!(" / reference {r}"));
    let note = match k {
        None => format!("empty cylinder weighed: {}{beside}", typed.reading),
        Some(k) => format!("step {} weighed: {}{beside}", k + 1, typed.reading),
    };
    let last = k.is_some_and(|k| k + 1 == steps);
    let each_weighing = ctx.settings.air_conditions == crate::settings::AirConditions::EachWeighing;
    write_record(doc, ctx, &note, |r| {
        if let Some(a) = k.and_then(|k| addition_for(r, k, &source)) {
            r.additions[a].time = Some(now.clone());
        }
        r.weighings.push(typed.reading.clone());
        if let Some(reference) = &typed.reference {
            r.reference_weighings.push(reference.clone());
        }
        // Air recorded per weighing: the last conditions stand for this one (and any
        // before it without its own) until typed.
        if r.air.len() > 1 || (r.air.len() == 1 && each_weighing) {
            while let Some(last_air) = r.air.last().cloned().filter(|_| r.air.len() < r.weighings.len()) {
                r.air.push(last_air);
            }
        }
        if last {
            r.finished = Some(now.clone());
        }
    })?;
    Ok(note)
}

/// A weighing whose addition is more than the settings' factor off the live plan (a unit
/// slip) is held back the first time with why; the same text entered again is recorded.
fn far_from_plan(
    doc: &mut Document,
    ctx: &Context,
    k: Option<usize>,
    typed: &TypedWeighing,
    text: &str,
) -> Option<String> {
    let k = k?;
    let before = typed.previous_net_g?;
    let grams = typed.net_g;
    let planned = doc.bench.live.get(k).map(|l| l.add_mass_g).filter(|m| *m > 0.0)?;
    let added = grams - before;
    let factor = ctx.settings.weighing_check_factor;
    let typed = text.trim().to_string();
    if (added <= factor * planned && added >= planned / factor)
        || doc.bench.unconfirmed_weighing.as_ref() == Some(&typed)
    {
        return None;
    }
    doc.bench.unconfirmed_weighing = Some(typed);
    Some(format!(
        "Enter again records it: {added:.2} g added, ×{} the plan's {planned:.2} g (a unit slip? check the scale)",
        crate::units::Sig(added / planned, 3)
    ))
}

/// A pressure reading typed for step `step`: shown on the sheet, and recorded when it is
/// the step in progress.
pub fn on_pressure(model: &mut Model, ctx: &Context, step: usize, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let ambient = doc.computed.order.as_ref().map_or(units::STANDARD_AMBIENT_PA, |o| o.ambient_pa);
    let p = match units::parse_pressure(text, ambient) {
        Ok(p) => p,
        Err(e) => return keep_prompt(model, Prompt::ActualReading(step), text, &e.to_string()),
    };
    if let Some(slot) = doc.bench.actual_pa.get_mut(step) {
        *slot = Some(p);
    }
    doc.bench.selected = step;
    model.status = match reading_notes(doc, &model.limits, &model.shown, step).into_iter().next() {
        Some((severity, note)) if severity != Severity::Ok => note,
        _ => format!("step {} reached {} {}", step + 1, model.shown.pf(p), model.shown.pu()),
    };
    if doc.bench.record.is_some() && step == step_in_progress(doc) {
        let source = step_source(doc, step);
        let typed = text.trim().to_string();
        let note = format!("step {} pressure reading {typed}", step + 1);
        if let Err(e) = write_record(doc, ctx, &note, |r| {
            if let Some(a) = addition_for(r, step, &source) {
                r.additions[a].pressure = Some(typed.clone());
            }
        }) {
            model.status = format!("shown, not recorded: {e}");
        } else {
            model.status.push_str(" (recorded)");
        }
    }
}

/// The cylinder temperature measured now: corrects the targets, and is recorded with the
/// step in progress.
pub fn on_temperature(model: &mut Model, ctx: &Context, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let t = match units::parse_temperature(text) {
        Ok(t) => t,
        Err(e) => return keep_prompt(model, Prompt::MeasuredTemperature, text, &e.to_string()),
    };
    doc.bench.measured_k = Some(t);
    doc.bench.correct(doc.computed.plan.as_ref().ok());
    model.status = match temperature_note(t, &model.limits, &model.shown) {
        Some((_, note)) => note,
        None => format!("targets corrected for {}", model.shown.tf(t)),
    };
    if doc.bench.record.is_some() && step_in_progress(doc) < doc.bench.done.len() {
        let step = step_in_progress(doc);
        let source = step_source(doc, step);
        let typed = text.trim().to_string();
        let note = format!("step {} cylinder temperature {typed}", step + 1);
        match write_record(doc, ctx, &note, |r| {
            if let Some(a) = addition_for(r, step, &source) {
                r.additions[a].temperature = Some(typed.clone());
            }
        }) {
            Ok(()) => model.status.push_str(" (recorded)"),
            Err(e) => model.status = format!("targets corrected; not recorded: {e}"),
        }
    }
}

/// The source of the step in progress: `@NAME`, `record:ID` or an analysis with
/// uncertainties. Written to the record at once (the addition's entry is made for it), so
/// an analysis typed is never lost with the session.
pub fn on_source(model: &mut Model, ctx: &Context, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let lookup =
        Lookup { library: Some(&ctx.library), sources: ctx.sources.as_deref(), catalogue: &ctx.catalogue, depth: 0 };
    if let Err(e) = crate::record::resolve_source(text, &ctx.catalogue, &|r| lookup.resolve(r)) {
        return keep_prompt(model, Prompt::StepSource, text, &e);
    }
    if doc.bench.record.is_none() {
        let why = "weigh the empty cylinder first (w): the fill record starts with it, and the source is written to it";
        return keep_prompt(model, Prompt::StepSource, text, why);
    }
    let step = step_in_progress(doc);
    if step >= doc.bench.done.len() {
        model.status = "every step is weighed: there is no addition in progress".into();
        return;
    }
    let typed = text.trim().to_string();
    let note = format!("step {} source {typed}", step + 1);
    let result = write_record(doc, ctx, &note, |r| {
        if let Some(a) = addition_for(r, step, &typed) {
            r.additions[a].source = typed.clone();
        }
    });
    match result {
        Ok(()) => {
            doc.bench.chosen_source = Some(typed.clone());
            model.status = format!("step {} comes from {typed} (recorded)", step + 1);
        }
        Err(e) => keep_prompt(model, Prompt::StepSource, text, &format!("not recorded: {e}")),
    }
}

/// Whether a source as written gives some amount without an uncertainty (a nominal
/// composition, not an analysis): the certificate would refuse it.
fn lacks_uncertainty(written: &str, ctx: &Context) -> bool {
    use crate::record::analysis::Assay;
    let lookup =
        Lookup { library: Some(&ctx.library), sources: ctx.sources.as_deref(), catalogue: &ctx.catalogue, depth: 0 };
    match crate::record::resolve_source(written, &ctx.catalogue, &|r| lookup.resolve(r)) {
        Ok(crate::record::SourceInput::Analysis(a)) => {
            a.lines.iter().any(|l| matches!(l.assay, Assay::Measured { u, .. } if !(u > 0.0)))
        }
        Ok(_) => false,
        Err(_) => true,
    }
}

/// When an addition starts from a source with no analysis (a premix at its nominal
/// composition), ask for the analysis now, offering the premix's own finished fill records
/// and the source library.
fn ask_for_analysis(model: &mut Model, ctx: &Context) {
    let Some(doc) = model.doc.as_ref() else { return };
    let step = step_in_progress(doc);
    if doc.bench.record.is_none() || step >= doc.bench.done.len() {
        return;
    }
    let written = step_source(doc, step);
    if !lacks_uncertainty(&written, ctx) {
        return;
    }
    let name = plan_step(doc, step).map_or(String::new(), |s| s.source.clone());
    // A premix made here by a library recipe: its newest finished fill is offered, typed in
    // the prompt already (Enter takes it).
    let made = premixes::premix_recipe_of(doc, step).map(|r| (ctx.library.finished_records_of(&r), r));
    if let Some((id, recipe)) = made.as_ref().and_then(|(own, r)| own.first().map(|id| (id.clone(), r.clone()))) {
        model.overlay = Overlay::Prompt { purpose: Prompt::StepSource, input: input(&format!("record:{id}")) };
        model.status = format!(
            "step {} takes premix {name}: its own fill record:{id} ({recipe}) gives its composition with its \
             uncertainty; check that the cylinder connected is that record's, then Enter takes it, or type its analysis",
            step + 1
        );
        return;
    }
    let unmade = match &made {
        Some((_, recipe)) => format!(" ({recipe} has no finished fill yet: g opens it to fill)"),
        None => String::new(),
    };
    model.overlay = Overlay::Prompt { purpose: Prompt::StepSource, input: input("") };
    model.status = format!(
        "type the analysis of {name} for step {} ({written} has no uncertainty){unmade}: e.g. \
         CO=0.5%±0.002%,N2=balance, or @NAME from the source library",
        step + 1
    );
}

/// A refused entry keeps its prompt open with the text typed and says why.
fn keep_prompt(model: &mut Model, purpose: Prompt, text: &str, why: &str) {
    model.overlay = Overlay::Prompt { purpose, input: input(text) };
    model.status = format!("{why} (Esc cancels)");
}

/// A correction typed (`w 2 13450.12g`): checked, then its reason is asked.
pub fn on_correction(model: &mut Model, ctx: &Context, text: &str) {
    let Some(doc) = model.doc.as_ref() else { return };
    let Some(opened) = &doc.bench.record else { return };
    let (entry, value) = match crate::record::correct::parse(text) {
        Ok(p) => p,
        Err(e) => return keep_prompt(model, Prompt::Correction, text, &e),
    };
    if let (crate::record::correct::Entry::Source(_), Some(v)) = (entry, &value) {
        let lookup = Lookup {
            library: Some(&ctx.library),
            sources: ctx.sources.as_deref(),
            catalogue: &ctx.catalogue,
            depth: 0,
        };
        if let Err(e) = crate::record::resolve_source(v, &ctx.catalogue, &|r| lookup.resolve(r)) {
            return keep_prompt(model, Prompt::Correction, text, &e);
        }
    }
    // Tried on a copy first: a refusal keeps the prompt and changes nothing.
    let mut trial = opened.record.clone();
    if let Err(e) = crate::record::correct::apply(&mut trial, entry, value.as_deref(), "trial", "") {
        return keep_prompt(model, Prompt::Correction, text, &e);
    }
    let typed = text.trim().to_string();
    model.overlay = Overlay::Prompt { purpose: Prompt::CorrectionReason(typed), input: input("") };
    model.status = format!("{}: why? (e.g. typed kg for g); the entry as it was stays in the record", entry.name());
}

/// The reason of a correction: the correction is written to the record with it.
pub fn on_correction_reason(model: &mut Model, ctx: &Context, pending: &str, reason: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let Ok((entry, value)) = crate::record::correct::parse(pending) else { return };
    if reason.trim().is_empty() {
        let why = "a correction needs its reason: it goes on the record and the certificate";
        return keep_prompt(model, Prompt::CorrectionReason(pending.to_string()), reason, why);
    }
    let now = (ctx.now)();
    let note = format!("correction: {} ({})", entry.name(), reason.trim());
    // Applied to a copy first: a refusal writes nothing and keeps what was typed.
    let Some(mut corrected) = doc.bench.record.as_ref().map(|o| o.record.clone()) else { return };
    let purpose = Prompt::CorrectionReason(pending.to_string());
    if let Err(e) = crate::record::correct::apply(&mut corrected, entry, value.as_deref(), reason, &now) {
        return keep_prompt(model, purpose, reason, &format!("not corrected: {e}"));
    }
    if let Err(e) = write_record(doc, ctx, &note, |r| *r = corrected.clone()) {
        return keep_prompt(model, purpose, reason, &format!("not corrected: {e}"));
    }
    // A withdrawn or replaced entry shown on the sheet follows.
    match entry {
        crate::record::correct::Entry::Pressure(k) => {
            if let Some(slot) = doc.bench.actual_pa.get_mut(k - 1) {
                let ambient = doc.computed.order.as_ref().map_or(units::STANDARD_AMBIENT_PA, |o| o.ambient_pa);
                *slot = value.as_deref().and_then(|v| units::parse_pressure(v, ambient).ok());
            }
        }
        crate::record::correct::Entry::Weighing(k) if value.is_none() => {
            if let Some(d) = k.checked_sub(1).and_then(|i| doc.bench.done.get_mut(i)) {
                *d = false;
            }
            sync_from_record(doc, ctx);
        }
        _ => {}
    }
    model.status = format!("{} corrected ({}); the certificate will say so", entry.name(), reason.trim());
}

/// The balance's line without its `u=MASS` word, and that mass as typed.
fn split_scale_u(typed: &str) -> (String, Option<String>) {
    let mut u = None;
    let rest: Vec<&str> = typed
        .split_whitespace()
        .filter(|w| match w.trim_end_matches(',').strip_prefix("u=") {
            Some(m) => {
                u = Some(m.to_string());
                false
            }
            None => true,
        })
        .collect();
    (rest.join(" ").trim_end_matches([',', ';']).trim().to_string(), u)
}

/// A scale uncertainty as typed, checked as the record reads it, and at most 10 g.
fn checked_scale_u(typed: &str) -> Result<String, String> {
    match crate::record::parse_mass_u(typed) {
        Ok(g) if g <= 10.0 => Ok(typed.trim().to_string()),
        _ => Err(format!(
            "u={typed}: the scale's standard uncertainty is a mass of at most 10 g, e.g. u=0.02g (Esc cancels)"
        )),
    }
}

/// The operator or the balance, written to the record (which starts with the empty
/// cylinder's weighing).
pub fn on_person(model: &mut Model, ctx: &Context, balance: bool, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let typed = text.trim().to_string();
    let what = if balance { "balance" } else { "operator" };
    if doc.bench.record.is_none() {
        let why = format!("weigh the empty cylinder first (w): the fill record starts with it, then the {what}");
        return keep_prompt(model, if balance { Prompt::Balance } else { Prompt::Operator }, text, &why);
    }
    // `u=0.02g` in the balance's line sets this fill's scale uncertainty (a calibration's
    // own figure); the rest of the line is the balance's identity.
    let (typed, scale_u) = if balance { split_scale_u(&typed) } else { (typed, None) };
    let scale_u = match scale_u.map(|u| checked_scale_u(&u)).transpose() {
        Ok(u) => u,
        Err(why) => return keep_prompt(model, Prompt::Balance, text, &why),
    };
    let note = format!("{what}: {typed}");
    let result = write_record(doc, ctx, &note, |r| {
        if balance {
            r.balance = typed.clone();
            if let Some(u) = &scale_u {
                r.scale_uncertainty = u.clone();
            }
        } else {
            r.operator = typed.clone();
        }
    });
    let with_u = scale_u.map(|u| format!(", scale u = {u}")).unwrap_or_default();
    match result {
        Ok(()) => model.status = format!("{what} {typed}{with_u} (recorded)"),
        Err(e) => {
            let purpose = if balance { Prompt::Balance } else { Prompt::Operator };
            keep_prompt(model, purpose, text, &format!("not recorded: {e}"));
        }
    }
}

/// What the air prompt accepts.
const AIR_HINT: &str = "the air at the scale: temperature, pressure, relative humidity, e.g. 20.4C 1012.3hPa 41%";

/// The air conditions at weighing `k`, written to the record's `air` list (one entry per
/// weighing; a single entry stands for all).
pub fn on_air(model: &mut Model, ctx: &Context, k: usize, text: &str) {
    let Some(doc) = model.doc.as_mut() else { return };
    let words: Vec<&str> = text.split_whitespace().collect();
    let (t, p, h, volume) = match words.as_slice() {
        [t, p, h] => (t, p, h, None),
        [t, p, h, v] => (t, p, h, Some(v.to_string())),
        _ => return keep_prompt(model, Prompt::Air(k), text, &format!("three values, please: {AIR_HINT}")),
    };
    let line = crate::record::AirLine { temperature: t.to_string(), pressure: p.to_string(), humidity: h.to_string() };
    if let Err((at, e)) = crate::record::read_air(&line) {
        return keep_prompt(model, Prompt::Air(k), text, &format!("{at}: {e}"));
    }
    let has_volume = doc.bench.record.as_ref().is_some_and(|r| r.record.cylinder_outer_volume.is_some());
    match &volume {
        Some(v) if units::parse_volume(v.split('±').next().unwrap_or(v)).is_err() => {
            let why = format!("{v}: the cylinder's outer volume is a volume, e.g. 13.6L");
            return keep_prompt(model, Prompt::Air(k), text, &why);
        }
        None if !has_volume => {
            let why = "the first time, also the cylinder's outer (displaced) volume: 20.4C 1012.3hPa 41% 13.6L";
            return keep_prompt(model, Prompt::Air(k), text, why);
        }
        _ => {}
    }
    let note = format!("air at weighing {k}: {t} {p} {h}");
    let result = write_record(doc, ctx, &note, |r| {
        if let Some(v) = &volume {
            r.cylinder_outer_volume = Some(v.clone());
        }
        // Entries for the weighings before this one that have none repeat the last given.
        while r.air.len() < k {
            let last = r.air.last().cloned().unwrap_or_else(|| line.clone());
            r.air.push(last);
        }
        if k < r.air.len() {
            r.air[k] = line.clone();
        } else {
            r.air.push(line.clone());
        }
    });
    match result {
        Ok(()) => {
            model.status = format!("air at weighing {k} recorded: {t} {p} {h}");
            ask_for_analysis(model, ctx);
        }
        Err(e) => keep_prompt(model, Prompt::Air(k), text, &format!("not recorded: {e}")),
    }
}

/// After a weighing: the air, where the settings say the bench records it (once, with the
/// empty cylinder, or at every weighing).
fn ask_for_air(model: &mut Model, ctx: &Context, k: Option<usize>) -> bool {
    use crate::settings::AirConditions;
    let asked = match ctx.settings.air_conditions {
        AirConditions::None => false,
        AirConditions::Once => k.is_none(),
        AirConditions::EachWeighing => true,
    };
    if asked {
        let index = k.map_or(0, |k| k + 1);
        model.overlay = Overlay::Prompt { purpose: Prompt::Air(index), input: input("") };
        let stands = if index > 0 { " (until then the last air recorded stands for it)" } else { "" };
        model.status = format!("{}; {AIR_HINT}{stands}", model.status);
    }
    asked
}
