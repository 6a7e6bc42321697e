//! The canonical text of a recipe: one fixed field order and layout, quantities exactly
//! as typed, optional fields left out when empty. Writing the parse of a canonical file
//! gives the same bytes back, so saving an unchanged recipe changes nothing on disk.

use super::{BeforeFill, FillTarget, Recipe, SourceLine};

/// A RON string literal.
fn q(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if c.is_control() => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// The canonical text of `recipe`.
pub fn to_text(r: &Recipe) -> String {
    let mut o = String::from("Recipe(\n");
    let mut field = |name: &str, value: String| {
        o.push_str(&format!("    {name}: {value},\n"));
    };
    field("format", r.format.to_string());
    field("revision", r.revision.to_string());
    if let Some(saved) = &r.saved {
        field("saved", q(saved));
    }
    if let Some(who) = &r.saved_by {
        field("saved_by", q(who));
    }
    if let Some(note) = &r.change_note {
        field("change_note", q(note));
    }
    field("name", q(&r.name));
    field("description", q(&r.description));
    field("order", q(&r.order));
    let components: String = r
        .components
        .iter()
        .map(|c| {
            let tolerance = c.tolerance.as_ref().map(|t| format!(", tolerance: {}", q(t))).unwrap_or_default();
            format!("        (gas: {}, amount: {}{tolerance}),\n", q(&c.gas), q(&c.amount))
        })
        .collect();
    field("components", format!("[\n{components}    ]"));
    field("cylinder", cylinder_text(&r.cylinder));
    field(
        "fill",
        match &r.fill {
            FillTarget::Pressure(p) => format!("Pressure({})", q(p)),
            FillTarget::Mass(m) => format!("Mass({})", q(m)),
            FillTarget::Amount(n) => format!("Amount({})", q(n)),
        },
    );
    field("reference_temperature", q(&r.reference_temperature));
    if let Some(t) = &r.fill_temperature {
        field("fill_temperature", q(t));
    }
    field("ambient", q(&r.ambient));
    match &r.before_fill {
        None => {}
        Some(BeforeFill::Evacuated(p)) => field("before_fill", format!("Evacuated({})", q(p))),
        Some(BeforeFill::Heel { mix, pressure, temperature }) => {
            let t = temperature.as_ref().map(|t| format!(", temperature: {}", q(t))).unwrap_or_default();
            field("before_fill", format!("Heel(mix: {}, pressure: {}{t})", q(mix), q(pressure)))
        }
    }
    if let Some(m) = r.model {
        field("model", m.key().to_string());
    }
    if !r.sources.is_empty() {
        field("sources", sources_text(&r.sources));
    }
    if !r.fill_order.is_empty() {
        field("fill_order", format!("[{}]", r.fill_order.iter().map(|s| q(s)).collect::<Vec<_>>().join(", ")));
    }
    field("notes", q(&r.notes));
    o.push_str(")\n");
    o
}

/// The cylinder's block.
fn cylinder_text(c: &super::CylinderLine) -> String {
    let mut cyl = format!(
        "(\n        water_capacity: {},\n        working_pressure: {},\n        test_pressure: {},\n",
        q(&c.water_capacity),
        q(&c.working_pressure),
        q(&c.test_pressure)
    );
    if let Some(t) = &c.tare {
        cyl.push_str(&format!("        tare: {},\n", q(t)));
    }
    if let Some(s) = &c.serial {
        cyl.push_str(&format!("        serial: {},\n", q(s)));
    }
    cyl.push_str("    )");
    cyl
}

/// The sources' list.
fn sources_text(sources: &[SourceLine]) -> String {
    let list: String = sources
        .iter()
        .map(|s| match s {
            SourceLine::Pure(id) => format!("        Pure({}),\n", q(id)),
            SourceLine::Premix { name, mix, recipe } => {
                let link = recipe.as_ref().map(|r| format!(", recipe: {}", q(r))).unwrap_or_default();
                format!("        Premix(name: {}, mix: {}{link}),\n", q(name), q(mix))
            }
        })
        .collect();
    format!("[\n{list}    ]")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::demo;

    #[test]
    fn demo_recipes_are_canonical() {
        for (name, text) in demo::RECIPES {
            let r = Recipe::parse(text, name).unwrap();
            assert_eq!(to_text(&r), *text, "{name} is not canonical: run `fillwright tidy mixtures/{name}.ron`");
        }
    }

    #[test]
    fn awkward_strings_survive() {
        let mut r = Recipe::parse(demo::RECIPES[0].1, "demo").unwrap();
        r.notes = "line one\nline \"two\" \\ tab\there\u{7}".into();
        r.name = "Ünïcode ✓".into();
        let text = to_text(&r);
        let back = Recipe::parse(&text, "x").unwrap();
        assert_eq!(back, r);
        assert_eq!(to_text(&back), text);
    }
}
