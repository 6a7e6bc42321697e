//! The fill records of a library as a list: text (80 columns), JSON and CSV. Pure: the
//! command line prints what these return.

use serde_json::{json, Value};

use crate::record::Record;
use crate::ron_format::{clip, csv_field};

/// A record as listed: its id, or why its file could not be read.
pub type Listed = (String, Result<Record, String>);

/// One line of the records list.
pub struct Summary {
    pub id: String,
    pub recipe: String,
    pub revision: u64,
    pub cylinder: String,
    /// When the fill started, as recorded (empty for a record written by hand).
    pub started: String,
    /// Finished, complete (by hand) or in progress, with the count of additions or weighings.
    pub state: String,
}

/// The summary of record `id`.
pub fn summary(id: &str, r: &Record) -> Summary {
    // As certify judges it: a record written by hand (no start time) with every addition
    // weighed is complete.
    let weighed_all = r.weighings.len() > r.additions.len() && !r.additions.is_empty();
    let state = match (&r.finished, &r.started) {
        (Some(_), _) => format!("finished, {} additions", r.additions.len()),
        (None, None) if weighed_all => format!("complete (by hand), {} additions", r.additions.len()),
        (None, _) => format!("in progress, {} weighings", r.weighings.len()),
    };
    Summary {
        id: id.to_string(),
        recipe: r.recipe.clone(),
        revision: r.revision,
        cylinder: r.cylinder.clone(),
        started: r.started.clone().unwrap_or_default(),
        state,
    }
}

/// The list as JSON: `{"records": [{"id", "recipe", "revision", "cylinder", "started",
/// "finished", "additions", "weighings"} | {"id", "error"}]}`.
pub fn json(shown: &[&Listed]) -> Value {
    let records: Vec<Value> = shown
        .iter()
        .map(|(id, r)| match r {
            Ok(r) => {
                let s = summary(id, r);
                json!({"id": s.id, "recipe": s.recipe, "revision": s.revision, "cylinder": s.cylinder,
                       "started": s.started, "finished": r.finished, "additions": r.additions.len(),
                       "weighings": r.weighings.len()})
            }
            Err(e) => json!({"id": id, "error": e}),
        })
        .collect();
    json!({ "records": records })
}

/// The list as CSV (RFC 4180), one row per record, a damaged one with its error.
pub fn csv(shown: &[&Listed]) -> String {
    let row = |cells: &[&str]| cells.iter().map(|c| csv_field(c)).collect::<Vec<_>>().join(",") + "\n";
    let mut out = row(&["id", "recipe", "revision", "cylinder", "started", "finished", "state", "error"]);
    for (id, r) in shown {
        match r {
            Ok(r) => {
                let s = summary(id, r);
                let finished = r.finished.clone().unwrap_or_default();
                out += &row(&[
                    &s.id,
                    &s.recipe,
                    &s.revision.to_string(),
                    &s.cylinder,
                    &s.started,
                    &finished,
                    &s.state,
                    "",
                ]);
            }
            Err(e) => out += &row(&[id.as_str(), "", "", "", "", "", "", e]),
        }
    }
    out
}

/// The list as text lines of at most 80 columns; the start shown as its date, whole.
pub fn text(shown: &[&Listed]) -> String {
    let mut out = String::new();
    if shown.is_empty() {
        put!(out, "(no fill records)");
        return out;
    }
    put!(out, "{:<22} {:<18} {:>3} {:<10}  state", "record", "recipe", "rev", "started");
    for (id, r) in shown {
        match r {
            Ok(r) => {
                let s = summary(id, r);
                let date = s.started.get(..10).unwrap_or(&s.started);
                put!(
                    out,
                    "{:<22} {:<18} {:>3} {:<10}  {}",
                    clip(&s.id, 22),
                    clip(&s.recipe, 18),
                    s.revision,
                    clip(date, 10),
                    clip(&s.state, 23)
                );
            }
            Err(e) => put!(out, "{:<22} cannot be read: {}", clip(id, 22), clip(e, 40)),
        }
    }
    out
}
