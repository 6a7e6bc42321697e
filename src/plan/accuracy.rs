//! What each model's plan would cost, in composition error, for the demo recipes: the
//! README table (`cargo run --example accuracy_table`).

use super::{plan, PlanOptions};
use crate::gas::Catalogue;
use crate::recipe::{demo, Recipe};
use crate::thermo::Model;

/// One recipe's row: the judging model and, per model, the worst component and its
/// relative error in %.
#[derive(Debug, Clone)]
pub struct Row {
    pub recipe: &'static str,
    pub truth: Model,
    pub worst: Vec<(Model, String, f64)>,
}

/// Stop at each model's readings, judge by GERG-2008 where it covers the recipe, else by
/// Peng–Robinson; report the largest relative composition error of each model.
pub fn demo_rows(catalogue: &Catalogue) -> Vec<Row> {
    let mut rows = Vec::new();
    for (name, text) in demo::RECIPES {
        let Ok(order) = Recipe::load(text, name, catalogue) else {
            continue;
        };
        let Ok(p) = plan(&order, catalogue, &PlanOptions::default()) else {
            continue;
        };
        let Some(following) =
            p.following.iter().find(|f| matches!(f.truth, Model::Gerg | Model::Multi)).or_else(|| p.following.first())
        else {
            continue;
        };
        let worst = following
            .rows
            .iter()
            .map(|r| {
                let (i, e) = r
                    .relative_error_percent
                    .iter()
                    .enumerate()
                    .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))
                    .map(|(i, e)| (i, *e))
                    .unwrap_or((0, 0.0));
                (r.targets_of, catalogue.gas(p.gases[i]).id().to_string(), e)
            })
            .collect();
        rows.push(Row { recipe: name, truth: following.truth, worst });
    }
    rows
}

/// The table in Markdown.
pub fn markdown_table(catalogue: &Catalogue) -> String {
    let rows = demo_rows(catalogue);
    let mut s = String::from("| recipe | judged by |");
    for m in Model::ALL {
        s.push_str(&format!(" {} |", m.key()));
    }
    s.push_str("\n|---|---|");
    for _ in Model::ALL {
        s.push_str("---:|");
    }
    s.push('\n');
    for r in rows {
        s.push_str(&format!("| {} | {} |", r.recipe, r.truth.key()));
        for m in Model::ALL {
            match r.worst.iter().find(|w| w.0 == m) {
                Some((_, id, e)) if e.abs() >= 0.005 => {
                    s.push_str(&format!(" {} % {id} |", crate::units::signed(*e, 2)))
                }
                Some(_) => s.push_str(" 0 |"),
                None => s.push_str(" – |"),
            }
        }
        s.push('\n');
    }
    s
}
