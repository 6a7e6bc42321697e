//! The Library view: the recipes of the library with their fill, cylinder, revision and
//! worst screening result; search, open, new, copy, rename, delete, history, trash,
//! settings, verification and sync start here.

use ratatui::layout::Rect;
use ratatui::style::{Color, Style};
use ratatui::text::Line;
use ratatui::widgets::{Block, Borders, Paragraph};
use ratatui::Frame;

use super::Screen;
use crate::checks::Severity;
use crate::ron_format::{clip, clip_middle};
use crate::tui::context::{input, input_request, Context, Key};
use crate::tui::document::{open, refresh};
use crate::tui::model::{Model, Overlay, Prompt};
use crate::tui::theme::Theme;

/// The recipes of the library.
pub struct Library;

impl Screen for Library {
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
        library(model, theme, frame, area)
    }
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context) {
        if model.library.filter.is_some() && !matches!(key, Key::Up | Key::Down) {
            on_search_key(model, key, ctx);
        } else {
            on_library_key(model, key, ctx);
        }
    }
    fn typing(&self, model: &Model) -> bool {
        model.library.filter.is_some()
    }
    fn hints(&self, model: &Model) -> &'static str {
        if model.library.filter.is_some() {
            "? help · Enter open · Esc clear · type to search"
        } else {
            "? help · Enter open · q quit · / search · n new · f records · h history · c copy · r rename · d delete · t trash · o settings · v verify · y sync"
        }
    }
    fn help(&self) -> &'static [&'static str] {
        &[
            "↑↓ or j k   choose a recipe     Enter  open it in the editor",
            "/           search names, orders, serials, gases, descriptions",
            "            and notes (Esc clears)",
            "n new · c copy · r rename · d or Del delete (kept in .trash)",
            "h           history: revisions and what changed; r restores",
            "f           fill records: open one on the Fill sheet (continue,",
            "            correct), certify it, print its report",
            "g           read the library folder again",
            "t           the trash: bring a deleted recipe back",
            "o           settings: units, default model, resolutions,",
            "            storage temperatures, margin (settings.ron)",
            "v           verification by analysis (ISO 6143): type the",
            "            analyser's responses, see the fit and the verdict",
            "y           sync: bring in the other benches' saves, send ours",
        ]
    }
}

/// Typing a search: Esc clears it, Enter opens the recipe chosen (or clears an empty one).
fn on_search_key(model: &mut Model, key: Key, ctx: &mut Context) {
    let Some(filter) = model.library.filter.as_mut() else { return };
    match key {
        Key::Esc => model.library.filter = None,
        Key::Enter => {
            if filter.value().is_empty() {
                model.library.filter = None;
            } else {
                open_selected(model, ctx);
            }
        }
        k => {
            if let Some(r) = input_request(k) {
                filter.handle(r);
                model.library.selected = 0;
            }
        }
    }
}

fn selected_name(model: &Model) -> Option<String> {
    let vis = model.library.visible();
    vis.get(model.library.selected).map(|&i| model.library.entries[i].name.clone())
}

fn open_selected(model: &mut Model, ctx: &Context) {
    let Some(name) = selected_name(model) else { return };
    if model.doc.as_ref().is_some_and(|d| d.dirty() && d.name != name) {
        model.status =
            format!("save or undo the changes to {} first (s saves)", model.doc.as_ref().map_or("", |d| &d.name));
        return;
    }
    model.library.filter = None;
    open(model, ctx, &name);
}

fn on_library_key(model: &mut Model, key: Key, ctx: &mut Context) {
    let n = model.library.visible().len();
    match key {
        Key::Up | Key::Char('k') => model.library.selected = model.library.selected.saturating_sub(1),
        Key::Down | Key::Char('j') => model.library.selected = (model.library.selected + 1).min(n.saturating_sub(1)),
        Key::Home => model.library.selected = 0,
        Key::End => model.library.selected = n.saturating_sub(1),
        Key::Enter => open_selected(model, ctx),
        Key::Char('/') => model.library.filter = Some(input("")),
        Key::Char('f') => crate::tui::overlays::records::open(model, ctx, None),
        Key::Char('t') => {
            let entries: Vec<(String, String)> = ctx.library.trash().into_iter().map(|(n, s, _)| (n, s)).collect();
            if entries.is_empty() {
                model.status = "the trash is empty".into();
            } else {
                model.overlay = Overlay::Trash { entries, selected: 0 };
            }
        }
        Key::Char('o') => {
            model.overlay =
                Overlay::Settings { selected: 0, values: Box::new(crate::tui::overlays::settings::current(ctx)) };
            model.status = "settings: Enter changes the chosen one; they are written to settings.ron at once".into();
        }
        Key::Char('n') => model.overlay = Overlay::Prompt { purpose: Prompt::NewRecipe, input: input("") },
        Key::Char('v') => model.verification = Some(Box::new(crate::tui::overlays::verification::open(ctx))),
        Key::Char('y') => {
            let said = match ctx.library.sync() {
                Ok(done) => crate::library::sync::summary(&done),
                Err(e) => format!("not synced: {e}"),
            };
            refresh(model, ctx);
            model.status = said;
        }
        Key::Char('c') => {
            if let Some(name) = selected_name(model) {
                let proposal = format!("{name}-copy");
                model.overlay = Overlay::Prompt { purpose: Prompt::Duplicate(name), input: input(&proposal) };
            }
        }
        Key::Char('r') => {
            if let Some(name) = selected_name(model) {
                model.overlay = Overlay::Prompt { purpose: Prompt::Rename(name.clone()), input: input(&name) };
            }
        }
        Key::Char('d') | Key::Delete => {
            if let Some(name) = selected_name(model) {
                model.overlay = Overlay::ConfirmDelete(name);
            }
        }
        Key::Char('h') => {
            if let Some(name) = selected_name(model) {
                crate::tui::overlays::history::show_history(model, ctx, &name);
            }
        }
        Key::Char('g') => {
            refresh(model, ctx);
            model.status = "library read again".into();
        }
        _ => {}
    }
}
fn library(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(format!(" Recipes in {} ", model.library.label));
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let w = inner.width as usize;
    // A wide window gives long names (a premix's) room, up to half of what is left.
    let longest = model.library.entries.iter().map(|e| e.name.chars().count() + 1).max().unwrap_or(0);
    let name_w = longest.clamp(22, 22.max(22 + w.saturating_sub(80) / 2));
    let title_w = w.saturating_sub(name_w + 9 + 14 + 4 + 9 + 5);
    let mut lines = vec![Line::styled(
        format!("  {:<name_w$}{:>9}{:>14}{:>4} {:<8} {}", "name", "fill", "cylinder", "rev", "checks", "title"),
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
                "{marker}{:<name_w$}{:>9}{:>14}{:>4} {:<8} {}",
                clip_middle(&e.name, name_w - 1),
                clip(&s.brief.fill.replace(' ', ""), 8),
                clip(&s.brief.cylinder, 13),
                s.brief.revision,
                match model.library.screening.get(i).copied().flatten() {
                    _ if model.library.pending.contains_key(&e.name) => "…",
                    Some(Severity::Stop) => "STOP",
                    Some(Severity::Caution) => "caution",
                    Some(Severity::Ok) => "ok",
                    None => "no plan",
                },
                if model.library.filling.contains(&e.name) {
                    clip(&format!("FILLING · {}", s.brief.title), title_w)
                } else {
                    clip(&s.brief.title, title_w)
                }
            ),
            Err(err) => {
                format!(
                    "{marker}{:<name_w$} cannot be read: {}",
                    clip_middle(&e.name, name_w - 1),
                    clip(err, w.saturating_sub(name_w + 18))
                )
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
