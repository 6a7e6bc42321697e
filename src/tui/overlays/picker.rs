//! The gas picker's search: fuzzy over id, name, aliases and CAS number.

use fuzzy_matcher::skim::SkimMatcherV2;
use fuzzy_matcher::FuzzyMatcher;

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;
use tui_input::Input;

use crate::gas::Catalogue;
use crate::recipe::ComponentLine;
use crate::ron_format::clip;
use crate::tui::context::{input_request, Context, Key};
use crate::tui::document::edit;
use crate::tui::model::{fields, Field, Model, Overlay, PickFor};
use crate::tui::theme::{boxed, centered, Theme};

/// Catalogue indices matching `text`, best first (all gases for an empty text).
pub fn matches(catalogue: &Catalogue, text: &str) -> Vec<usize> {
    let text = text.trim();
    if text.is_empty() {
        return (0..catalogue.gases().len()).collect();
    }
    let matcher = SkimMatcherV2::default().ignore_case();
    let mut scored: Vec<(i64, usize)> = catalogue
        .gases()
        .iter()
        .enumerate()
        .filter_map(|(i, g)| {
            let r = &g.record;
            let exact = if r.id.eq_ignore_ascii_case(text) || r.cas == text { 1000 } else { 0 };
            let best = std::iter::once(r.id.as_str())
                .chain(std::iter::once(r.name.as_str()))
                .chain(std::iter::once(r.cas.as_str()))
                .chain(r.aliases.iter().map(String::as_str))
                .filter_map(|s| matcher.fuzzy_match(s, text))
                .max()?;
            Some((best + exact, i))
        })
        .collect();
    scored.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)));
    scored.into_iter().map(|(_, i)| i).collect()
}

/// Keys of the gas picker: type to search, Enter picks.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, mut input: Input, mut selected: usize, purpose: PickFor) {
    let hits = matches(&ctx.catalogue, input.value());
    match key {
        Key::Esc => {}
        Key::Up => {
            selected = selected.saturating_sub(1);
            model.overlay = Overlay::Picker { input, selected, purpose };
        }
        Key::Down => {
            selected = (selected + 1).min(hits.len().saturating_sub(1));
            model.overlay = Overlay::Picker { input, selected, purpose };
        }
        Key::Enter if hits.is_empty() => {
            // Nothing matches: say so and keep the picker open.
            model.status = format!(
                "no gas matches {:?}: type a formula (CO2), a name (propane) or a CAS number (Esc cancels)",
                input.value()
            );
            model.overlay = Overlay::Picker { input, selected, purpose };
        }
        Key::Enter => {
            if let (Some(&g), Some(doc)) = (hits.get(selected), model.doc.as_mut()) {
                let id = ctx.catalogue.gas(g).id().to_string();
                // A gas already in the recipe (however it was written there) is not
                // added twice: the cursor goes to its row instead.
                let existing = doc
                    .recipe
                    .components
                    .iter()
                    .position(|c| ctx.catalogue.index_of(&c.gas) == Some(g))
                    .filter(|&i| purpose != PickFor::ReplaceComponent(i));
                match (purpose, existing) {
                    (_, Some(i)) => {
                        doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::Component(i)).unwrap_or(0);
                        model.status = format!("{id} is already in the recipe: the cursor is on its row");
                    }
                    (PickFor::AddComponent, None) => {
                        edit(doc, ctx, |r| {
                            let at = r.components.len().saturating_sub(1);
                            // No amount until one is typed: the recipe does not plan on an
                            // amount nobody chose.
                            let line = ComponentLine { gas: id.clone(), amount: String::new(), tolerance: None };
                            // New gases go before the balance gas, which usually closes the list.
                            if r.components.last().is_some_and(|c| c.amount == "balance") {
                                r.components.insert(at, line);
                            } else {
                                r.components.push(line);
                            }
                        });
                        let i = doc.recipe.components.iter().position(|c| c.gas == id).unwrap_or(0);
                        doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::Component(i)).unwrap_or(0);
                        doc.editing = Some(Input::new(String::new()));
                        model.status = format!("{id} added: type its amount (400ppm, 2.5%, 0.1); Enter keeps it");
                    }
                    (PickFor::ReplaceComponent(i), None) => {
                        edit(doc, ctx, |r| r.components[i].gas = id.clone());
                        model.status = format!("component is now {id}");
                    }
                }
            }
        }
        k => {
            if let Some(r) = input_request(k) {
                input.handle(r);
                selected = 0;
            }
            model.overlay = Overlay::Picker { input, selected, purpose };
        }
    }
}

/// The gases matching what is typed.
pub fn draw(
    theme: &Theme,
    frame: &mut Frame,
    area: Rect,
    catalogue: &Catalogue,
    input: &Input,
    selected: &usize,
    purpose: &PickFor,
) {
    let hits = matches(catalogue, input.value());
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_by_id_name_and_cas() {
        let c = Catalogue::built_in();
        let first = |t: &str| c.gas(matches(&c, t)[0]).id().to_string();
        assert_eq!(first("CO2"), "CO2");
        assert_eq!(first("isobut"), "i-C4H10");
        assert_eq!(first("7783-06-4"), "H2S");
        assert_eq!(first("sulph hexa"), "SF6");
        assert!(matches(&c, "zzzzqq").is_empty());
    }
}
