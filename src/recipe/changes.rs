//! What changed between two revisions of a recipe, in the trade's words:
//! "CO2 15 % → 14 %", "fill pressure 150 → 200 bar".

use super::{FillTarget, Recipe, SourceLine};

/// "150bar" → ("150", "bar"); "15C" → ("15", "°C"); "500ppm" → ("500", "ppm").
fn split(q: &str) -> (String, String) {
    let t = q.trim();
    let end = t
        .char_indices()
        .find(|(i, c)| !(c.is_ascii_digit() || *c == '.' || ((*c == '-' || *c == '+') && *i == 0)))
        .map_or(t.len(), |(i, _)| i);
    let (number, unit) = t.split_at(end);
    let unit = unit.trim();
    let unit = match unit {
        "C" => "°C",
        "F" => "°F",
        u => u,
    };
    (number.to_string(), unit.to_string())
}

/// "15%" → "15 %".
fn spaced(q: &str) -> String {
    let (n, u) = split(q);
    if n.is_empty() || u.is_empty() {
        q.trim().to_string()
    } else {
        format!("{n} {u}")
    }
}

/// "150bar", "200bar" → "150 → 200 bar"; other units → "150 bar → 15 MPa".
fn arrow(old: &str, new: &str) -> String {
    let (a, ua) = split(old);
    let (b, ub) = split(new);
    if ua == ub && !a.is_empty() && !b.is_empty() {
        if ua.is_empty() {
            format!("{a} → {b}")
        } else {
            format!("{a} → {b} {ua}")
        }
    } else {
        format!("{} → {}", spaced(old), spaced(new))
    }
}

fn opt(o: &Option<String>) -> &str {
    o.as_deref().unwrap_or("")
}

fn text_change(label: &str, a: &str, b: &str) -> Option<String> {
    (a != b).then(|| {
        if a.is_empty() {
            format!("{label} set to {b:?}")
        } else if b.is_empty() {
            format!("{label} cleared")
        } else {
            format!("{label} {a:?} → {b:?}")
        }
    })
}

fn quantity_change(label: &str, x: &str, y: &str) -> Option<String> {
    (x != y).then(|| {
        if x.is_empty() {
            format!("{label} set to {}", spaced(y))
        } else if y.is_empty() {
            format!("{label} removed")
        } else {
            format!("{label} {}", arrow(x, y))
        }
    })
}

/// The changes from `old` to `new`, one phrase each, in the order of the recipe.
pub fn describe(old: &Recipe, new: &Recipe) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    out.extend(text_change("name", &old.name, &new.name));
    out.extend(text_change("description", &old.description, &new.description));
    out.extend(text_change("order", &old.order, &new.order));

    out.extend(component_changes(old, new));

    let (a, b) = (&old.cylinder, &new.cylinder);
    let fill_parts = |f: &FillTarget| match f {
        FillTarget::Pressure(p) => ("fill pressure", p.clone()),
        FillTarget::Mass(m) => ("fill mass", m.clone()),
        FillTarget::Amount(n) => ("fill amount", n.clone()),
    };
    let ((la, va), (lb, vb)) = (fill_parts(&old.fill), fill_parts(&new.fill));
    let fill = if la == lb {
        quantity_change(la, &va, &vb)
    } else {
        Some(format!("{la} {} → {lb} {}", spaced(&va), spaced(&vb)))
    };
    out.extend(
        [
            quantity_change("water capacity", &a.water_capacity, &b.water_capacity),
            quantity_change("working pressure", &a.working_pressure, &b.working_pressure),
            quantity_change("test pressure", &a.test_pressure, &b.test_pressure),
            quantity_change("tare", opt(&a.tare), opt(&b.tare)),
            fill,
            quantity_change("reference temperature", &old.reference_temperature, &new.reference_temperature),
            quantity_change("fill temperature", opt(&old.fill_temperature), opt(&new.fill_temperature)),
            quantity_change("ambient", &old.ambient, &new.ambient),
            (old.before_fill != new.before_fill).then(|| {
                format!(
                    "before the fill: {} → {}",
                    super::BeforeFill::text(&old.before_fill),
                    super::BeforeFill::text(&new.before_fill)
                )
            }),
        ]
        .into_iter()
        .flatten(),
    );
    if a.serial != b.serial {
        out.push(format!("cylinder serial {:?} → {:?}", opt(&a.serial), opt(&b.serial)));
    }
    if old.model != new.model {
        let name = |m: Option<crate::thermo::Model>| m.map_or("default".to_string(), |m| m.key().to_string());
        out.push(format!("model {} → {}", name(old.model), name(new.model)));
    }
    out.extend(source_changes(old, new));
    if old.fill_order != new.fill_order {
        let show = |v: &Vec<String>| {
            if v.is_empty() {
                "default".to_string()
            } else {
                v.join(", ")
            }
        };
        out.push(format!("fill order {} → {}", show(&old.fill_order), show(&new.fill_order)));
    }
    if old.notes != new.notes {
        out.push("notes changed".into());
    }
    out
}

/// Components added, removed, or with a new amount or tolerance.
fn component_changes(old: &Recipe, new: &Recipe) -> Vec<String> {
    let mut out = Vec::new();
    let key = |g: &str| g.to_ascii_lowercase();
    for c in &new.components {
        match old.components.iter().find(|o| key(&o.gas) == key(&c.gas)) {
            None => out.push(format!("{} added at {}", c.gas, spaced(&c.amount))),
            Some(o) => {
                if o.amount != c.amount {
                    out.push(format!("{} {}", c.gas, arrow(&o.amount, &c.amount)));
                }
                if o.tolerance != c.tolerance {
                    out.push(match (&o.tolerance, &c.tolerance) {
                        (None, Some(t)) => format!("{} tolerance set to {}", c.gas, spaced(t)),
                        (Some(_), None) => format!("{} tolerance removed", c.gas),
                        (Some(a), Some(b)) => format!("{} tolerance {}", c.gas, arrow(a, b)),
                        (None, None) => unreachable!("tolerances differ"),
                    });
                }
            }
        }
    }
    for o in &old.components {
        if !new.components.iter().any(|c| key(&c.gas) == key(&o.gas)) {
            out.push(format!("{} removed", o.gas));
        }
    }
    out
}

/// Sources added or removed.
fn source_changes(old: &Recipe, new: &Recipe) -> Vec<String> {
    let mut out = Vec::new();
    let source_name = |s: &SourceLine| match s {
        SourceLine::Pure(id) => id.clone(),
        SourceLine::Premix { name, mix, .. } => format!("{name} ({mix})"),
    };
    for s in &new.sources {
        if !old.sources.contains(s) {
            out.push(format!("source {} added", source_name(s)));
        }
    }
    for s in &old.sources {
        if !new.sources.contains(s) {
            out.push(format!("source {} removed", source_name(s)));
        }
    }
    out
}

/// The two recipes are the same order (revision stamps aside).
pub fn same_content(a: &Recipe, b: &Recipe) -> bool {
    let strip = |r: &Recipe| Recipe { revision: 0, saved: None, saved_by: None, change_note: None, ..r.clone() };
    strip(a) == strip(b)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::demo;

    fn flue() -> Recipe {
        Recipe::parse(demo::find("flue-gas-span").unwrap(), "flue").unwrap()
    }

    #[test]
    fn names_exactly_what_changed() {
        let old = flue();
        let mut new = old.clone();
        new.components[2].amount = "14%".into();
        new.fill = FillTarget::Pressure("200bar".into());
        assert_eq!(describe(&old, &new), vec!["CO2 15 → 14 %", "fill pressure 150 → 200 bar"]);
    }

    #[test]
    fn additions_removals_and_other_fields() {
        let old = flue();
        let mut new = old.clone();
        new.components.remove(1);
        new.components
            .insert(0, crate::recipe::ComponentLine { gas: "Ar".into(), amount: "1%".into(), tolerance: None });
        new.fill_temperature = Some("30C".into());
        new.model = Some(crate::thermo::Model::Pr);
        new.notes.push_str(" More.");
        let d = describe(&old, &new);
        assert_eq!(
            d,
            vec![
                "Ar added at 1 %",
                "CH4 removed",
                "fill temperature 22 → 30 °C",
                "model default → pr",
                "notes changed"
            ]
        );
        assert!(describe(&old, &old).is_empty());
    }

    #[test]
    fn unit_changes_show_both_units() {
        let old = flue();
        let mut new = old.clone();
        new.fill = FillTarget::Pressure("15MPa".into());
        assert_eq!(describe(&old, &new), vec!["fill pressure 150 bar → 15 MPa"]);
        new.fill = FillTarget::Mass("2kg".into());
        assert_eq!(describe(&old, &new), vec!["fill pressure 150 bar → fill mass 2 kg"]);
    }

    #[test]
    fn stamps_do_not_count_as_content() {
        let a = flue();
        let mut b = a.clone();
        b.revision = 9;
        b.saved = Some("2026-12-01T10:00:00Z".into());
        assert!(same_content(&a, &b));
        b.notes.push('x');
        assert!(!same_content(&a, &b));
    }
}
