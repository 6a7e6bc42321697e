//! The fill records of the library (`f` on the Library; on the Fill sheet, the open
//! recipe's own): every record with its recipe, start and state; Enter opens one on the
//! Fill sheet (a fill in progress continues, a finished one is reviewed and corrected with
//! `x`), `C` certifies it, `p` prints its report to `reports/` in the library.

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;

use crate::print::records::{report, summary, Listed};
use crate::ron_format::{clip, clip_middle};
use crate::tui::context::{input, Context, Key};
use crate::tui::model::{Model, Overlay, Prompt, View};
use crate::tui::theme::{boxed, centered, Theme};

/// The list shown: the records (all, or one recipe's), and the chosen one.
#[derive(Debug, Clone)]
pub struct Records {
    pub rows: Vec<Listed>,
    /// Per row: whether its certificate is in the library's `certificates/`.
    pub certified: Vec<bool>,
    pub selected: usize,
    /// Only the records of this recipe.
    pub of: Option<String>,
}

/// Open the list (of every record, or of `of`'s), newest start first.
pub fn open(model: &mut Model, ctx: &Context, of: Option<String>) {
    let mut rows: Vec<Listed> = match ctx.library.records() {
        Ok(rows) => rows,
        Err(e) => {
            model.status = format!("the records cannot be read: {e}");
            return;
        }
    };
    rows.retain(|(_, r)| of.as_ref().is_none_or(|name| r.as_ref().is_ok_and(|r| &r.recipe == name)));
    if rows.is_empty() {
        model.status = match &of {
            Some(name) => format!("no fill record of {name} yet: w on the Fill sheet weighs the empty cylinder"),
            None => "no fill records in the library yet".into(),
        };
        return;
    }
    // Newest first: a damaged record (no start known) last.
    let started = |r: &Listed| r.1.as_ref().ok().and_then(|r| r.started.clone()).unwrap_or_default();
    rows.sort_by(|a, b| started(b).cmp(&started(a)).then(b.0.cmp(&a.0)));
    let certified = rows.iter().map(|(id, _)| ctx.library.certified(id)).collect();
    model.overlay = Overlay::Records(Box::new(Records { rows, certified, selected: 0, of }));
}

/// Keys of the list.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, mut list: Box<Records>) {
    let n = list.rows.len();
    let id = list.rows.get(list.selected).map(|(id, _)| id.clone());
    match key {
        Key::Up | Key::Char('k') => list.selected = list.selected.saturating_sub(1),
        Key::Down | Key::Char('j') => list.selected = (list.selected + 1).min(n.saturating_sub(1)),
        Key::Home => list.selected = 0,
        Key::End => list.selected = n.saturating_sub(1),
        Key::PageUp => list.selected = list.selected.saturating_sub(10),
        Key::PageDown => list.selected = (list.selected + 10).min(n.saturating_sub(1)),
        Key::Enter | Key::Char('x') => {
            let Some(id) = id else { return };
            if let Err(why) = open_on_sheet(model, ctx, &id) {
                model.status = why;
                model.overlay = Overlay::Records(list);
            } else if key == Key::Char('x') {
                model.overlay = Overlay::Prompt { purpose: Prompt::Correction, input: input("") };
                model.status = format!("correct a recorded entry of {id}: {}", crate::record::correct::SYNTAX);
            }
            return;
        }
        Key::Char('C') => {
            if let Some(id) = id {
                model.status = match crate::tui::views::sheet::certify::certify_id(ctx, &id) {
                    Ok(said) => {
                        if let Some(c) = list.certified.get_mut(list.selected) {
                            *c = true;
                        }
                        said
                    }
                    Err(why) => format!("{id} not certified: {why}"),
                };
            }
        }
        Key::Char('p') => {
            if let Some(id) = id {
                model.status = match print_report(ctx, &id) {
                    Ok(path) => format!("report of {id} written to {}", path.display()),
                    Err(why) => format!("report of {id} not written: {why}"),
                };
            }
        }
        Key::Esc | Key::Char('q') => return,
        _ => {}
    }
    model.overlay = Overlay::Records(list);
}

/// Open record `id` on the Fill sheet with its recipe: a fill in progress continues there,
/// a finished one is shown for review (`x` corrects, `C` certifies).
pub fn open_on_sheet(model: &mut Model, ctx: &Context, id: &str) -> Result<(), String> {
    let opened = ctx.library.open_record(id).map_err(|e| e.to_string())?;
    let name = opened.record.recipe.clone();
    let same = model.doc.as_ref().is_some_and(|d| d.name == name);
    if let Some(d) = model.doc.as_ref().filter(|d| d.dirty() && !same) {
        return Err(format!("save or undo the changes to {} first (s saves)", d.name));
    }
    if !same {
        crate::tui::document::open(model, ctx, &name);
    }
    let Some(doc) = model.doc.as_mut().filter(|d| d.name == name) else {
        return Err(format!(
            "record {id} is of {name}, which the library no longer holds (t on the Library shows the trash); \
             C certifies the record all the same"
        ));
    };
    let finished = opened.record.finished.clone();
    let filled_at = opened.record.recipe_revision;
    doc.bench.record = Some(opened);
    doc.bench.last_finished = None;
    doc.bench.done.iter_mut().for_each(|d| *d = false);
    crate::tui::views::sheet::sync_from_record(doc, ctx);
    let now = doc.saved.revision;
    model.view = View::Sheet;
    let revision = if filled_at != 0 && filled_at != now {
        format!("; it was filled to revision {filled_at}, the sheet plans revision {now}")
    } else {
        String::new()
    };
    model.status = match finished {
        Some(when) => format!(
            "record {id}, finished {}: x corrects an entry, C certifies it{revision}",
            when.get(..16).unwrap_or(&when)
        ),
        None => format!("record {id}: the fill continues here{revision}"),
    };
    Ok(())
}

/// Write the report of record `id` to `reports/ID.txt` in the library.
fn print_report(ctx: &Context, id: &str) -> Result<std::path::PathBuf, String> {
    let opened = ctx.library.open_record(id).map_err(|e| e.to_string())?;
    let mut history: Vec<(u64, Option<String>)> =
        ctx.library.record_history(id).into_iter().map(|(rev, note, _)| (rev, note)).collect();
    history.push((opened.record.revision, opened.record.change_note.clone()));
    let text = report(id, &opened.record, &history);
    let dir = ctx.library.own_dir(&["reports"]).map_err(|e| e.to_string())?;
    let path = dir.join(format!("{id}.txt"));
    crate::library::atomic::write(&path, text.as_bytes()).map_err(|e| e.to_string())?;
    Ok(path)
}

/// The list, keys first, then the chosen record's details at the foot.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, list: &Records) {
    let w = area.width.saturating_sub(2).min(120);
    let h = area.height.saturating_sub(2).max(3);
    let inner_w = w.saturating_sub(2) as usize;
    let id_w = list.rows.iter().map(|(id, _)| id.chars().count()).max().unwrap_or(6).clamp(6, 28);
    // Narrow: the start as its date, the recipe shorter, so the state has room.
    let narrow = inner_w < 100;
    let longest = list.rows.iter().filter_map(|(_, r)| r.as_ref().ok()).map(|r| r.recipe.chars().count()).max();
    let (recipe_w, started_w) = if narrow { (13, 10) } else { (longest.unwrap_or(0).clamp(13, inner_w / 3), 16) };
    let state_w = inner_w.saturating_sub(2 + id_w + 1 + recipe_w + 1 + 3 + 1 + started_w + 1);
    let mut lines = vec![
        Line::styled("↑↓ · Enter open on the Fill sheet · x correct · C certify · p report · Esc", theme.dim()),
        Line::styled(
            format!("  {:<id_w$} {:<recipe_w$} {:>3} {:<started_w$} state", "record", "recipe", "rev", "started"),
            theme.bold(),
        ),
    ];
    // Rows left for the list: the box, the two lines above, the details (3) below.
    let rows = (h as usize).saturating_sub(2 + 2 + 4).max(1);
    let first = list.selected.saturating_sub(rows - 1);
    for (k, (id, r)) in list.rows.iter().enumerate().skip(first).take(rows) {
        let chosen = k == list.selected;
        let marker = if chosen { "▶ " } else { "  " };
        let text = match r {
            Ok(r) => {
                let mut s = summary(id, r);
                if list.certified.get(k).copied().unwrap_or(false) {
                    s.state = format!("certified, {}", s.state);
                }
                let started = s.started.get(..started_w).unwrap_or(&s.started).replace('T', " ");
                format!(
                    "{marker}{:<id_w$} {:<recipe_w$} {:>3} {:<started_w$} {}",
                    clip_middle(id, id_w),
                    clip_middle(&s.recipe, recipe_w),
                    s.revision,
                    started,
                    clip(&s.state, state_w)
                )
            }
            Err(e) => format!("{marker}{:<id_w$} cannot be read: {}", clip_middle(id, id_w), clip(e, inner_w / 2)),
        };
        let style = if chosen { theme.selected() } else { Style::default() };
        lines.push(Line::styled(text, style));
    }
    if list.rows.len() > rows {
        lines.push(Line::styled(format!("  ({} of {} records)", list.selected + 1, list.rows.len()), theme.dim()));
    }
    lines.push(Line::raw(""));
    lines.extend(details(list).into_iter().map(|l| Line::raw(clip(&l, inner_w))));
    let title = match &list.of {
        Some(name) => format!("Fill records of {}", clip_middle(name, 40)),
        None => "Fill records".to_string(),
    };
    let box_h = (lines.len() as u16 + 2).min(h);
    boxed(frame, centered(area, w, box_h), &title, lines);
}

/// What the list's columns leave out of the chosen record.
fn details(list: &Records) -> Vec<String> {
    let Some((_, r)) = list.rows.get(list.selected) else { return Vec::new() };
    match r {
        Ok(r) => {
            let or_none = |s: &str| if s.trim().is_empty() { "(not recorded)".to_string() } else { s.to_string() };
            let last = r.change_note.as_deref().map_or(String::new(), |n| format!(" · last change: {n}"));
            vec![
                format!(
                    "cylinder {} · operator {} · balance {}",
                    or_none(&r.cylinder),
                    or_none(&r.operator),
                    or_none(&r.balance)
                ),
                format!(
                    "recipe revision {} · {}{last}",
                    r.recipe_revision,
                    r.finished.as_deref().map_or("not finished".to_string(), |f| format!("finished {f}"))
                ),
            ]
        }
        Err(e) => vec!["this record cannot be read: fix its file (fillwright records lists it)".into(), e.clone()],
    }
}
