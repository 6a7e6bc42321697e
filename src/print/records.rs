//! The fill records of a library as a list: text (80 columns), JSON and CSV. Pure: the
//! command line prints what these return.

use serde_json::{json, Value};

use crate::record::Record;
use crate::ron_format::{clip, csv_row};
use crate::units::count;

/// A record as listed: its id, or why its file could not be read.
pub type Listed = (String, Result<Record, String>);

/// Whether a record id has its certificate in the library's `certificates/` (written by
/// `C` on the screen).
pub type Certified<'a> = &'a dyn Fn(&str) -> bool;

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
        (Some(_), _) => format!("finished, {}", count(r.additions.len(), "addition")),
        (None, None) if weighed_all => format!("complete (by hand), {}", count(r.additions.len(), "addition")),
        (None, _) => format!("in progress, {}", count(r.weighings.len(), "weighing")),
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
/// "finished", "certified", "additions", "weighings"} | {"id", "error"}]}`.
pub fn json(shown: &[&Listed], certified: Certified) -> Value {
    let records: Vec<Value> = shown
        .iter()
        .map(|(id, r)| match r {
            Ok(r) => {
                let s = summary(id, r);
                json!({"id": s.id, "recipe": s.recipe, "revision": s.revision, "cylinder": s.cylinder,
                       "started": s.started, "finished": r.finished, "certified": certified(id),
                       "additions": r.additions.len(),
                       "weighings": r.weighings.len()})
            }
            Err(e) => json!({"id": id, "error": e}),
        })
        .collect();
    json!({ "records": records })
}

/// The list as CSV (RFC 4180), one row per record, a damaged one with its error.
pub fn csv(shown: &[&Listed], certified: Certified) -> String {
    let row = |cells: &[&str]| csv_row(cells);
    let mut out = row(&["id", "recipe", "revision", "cylinder", "started", "finished", "state", "error", "certified"]);
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
                    if certified(id) { "yes" } else { "no" },
                ]);
            }
            Err(e) => out += &row(&[id.as_str(), "", "", "", "", "", "", e, ""]),
        }
    }
    out
}

/// The list as text lines of at most 80 columns: each record id whole (it is what
/// `certify` is given), the start shown as its date, the recipe and state cut to fit.
pub fn text(shown: &[&Listed], certified: Certified) -> String {
    let mut out = String::new();
    if shown.is_empty() {
        put!(out, "(no fill records)");
        return out;
    }
    let id_w = shown.iter().map(|(id, _)| id.chars().count()).max().unwrap_or(0).max(6);
    let recipe_w = 14;
    // What is left of 80 columns for the state, never less than 20.
    let state_w = 80usize.saturating_sub(id_w + 1 + recipe_w + 1 + 3 + 1 + 10 + 2).max(20);
    put!(out, "{:<id_w$} {:<recipe_w$} {:>3} {:<10}  state", "record", "recipe", "rev", "started");
    for (id, r) in shown {
        match r {
            Ok(r) => {
                let mut s = summary(id, r);
                if certified(id) {
                    s.state = format!("certified, {}", s.state);
                }
                let date = s.started.get(..10).unwrap_or(&s.started);
                put!(
                    out,
                    "{:<id_w$} {:<recipe_w$} {:>3} {:<10}  {}",
                    s.id,
                    clip(&s.recipe, recipe_w),
                    s.revision,
                    clip(date, 10),
                    clip(&s.state, state_w)
                );
            }
            Err(e) => put!(out, "{:<id_w$} cannot be read: {}", id, clip(e, state_w.max(30))),
        }
    }
    out
}

/// One record as a report of at most 80 columns, for the bench folder and a review: who,
/// what, every reading as recorded, every correction with its reason, and the revisions
/// (`history`: revision and its note, oldest first, the current one last).
pub fn report(id: &str, r: &Record, history: &[(u64, Option<String>)]) -> String {
    let mut out = String::new();
    let state = summary(id, r).state;
    put!(out, "FILL RECORD {id}  (revision {}, {state})", r.revision);
    put!(out, "recipe      {} at revision {}", r.recipe, r.recipe_revision);
    if let Some(sha) = &r.recipe_sha256 {
        put!(out, "sha256      {}", clip(sha, 68));
    }
    let capacity = r.water_capacity.as_deref().map_or(String::new(), |w| format!(", water capacity {w}"));
    put!(out, "cylinder    {}{capacity}", none_if_empty(&r.cylinder));
    if !r.customer.is_empty() {
        put!(out, "customer    {}", clip(&r.customer, 68));
    }
    put!(out, "operator    {}", clip(none_if_empty(&r.operator), 68));
    put!(out, "balance     {}  (u of one reading {})", clip(none_if_empty(&r.balance), 40), r.scale_uncertainty);
    put!(out, "started     {}", r.started.as_deref().unwrap_or("(not recorded)"));
    put!(out, "finished    {}", r.finished.as_deref().unwrap_or("(not finished)"));
    put!(out);
    readings(&mut out, r);
    if !r.corrections.is_empty() {
        put!(out);
        put!(out, "CORRECTIONS (each also kept as a revision)");
        for c in &r.corrections {
            let now = if c.now.is_empty() { "(withdrawn)" } else { &c.now };
            put!(out, "  {}  {}: {} -> {}", clip(&c.time, 20), c.entry, clip(&c.was, 20), clip(now, 20));
            for line in crate::ron_format::wrap_words(&format!("because {}", c.reason), 74) {
                put!(out, "      {line}");
            }
        }
    }
    if !history.is_empty() {
        put!(out);
        put!(out, "REVISIONS");
        for (rev, note) in history {
            put!(out, "  {rev:>4}  {}", clip(note.as_deref().unwrap_or(""), 72));
        }
    }
    if !r.notes.trim().is_empty() {
        put!(out);
        put!(out, "NOTES");
        for line in crate::ron_format::wrap_words(&r.notes, 76) {
            put!(out, "  {line}");
        }
    }
    out
}

fn none_if_empty(s: &str) -> &str {
    if s.trim().is_empty() {
        "(not recorded)"
    } else {
        s
    }
}

/// The readings table: the empty weighing, then each addition with its source, pressure,
/// temperature and the scale after it.
fn readings(out: &mut String, r: &Record) {
    put!(out, "  #  {:<30} {:>11} {:>8} {:>13}  time", "source", "pressure", "temp", "scale after");
    let scale = |k: usize| r.weighings.get(k).map_or("-", String::as_str);
    put!(out, "  0  {:<30} {:>11} {:>8} {:>13}", "(the cylinder before filling)", "", "", scale(0));
    for (k, a) in r.additions.iter().enumerate() {
        let time = a.time.as_deref().map_or("", |t| t.get(11..16).unwrap_or(t));
        put!(
            out,
            "{:>3}  {:<30} {:>11} {:>8} {:>13}  {time}",
            k + 1,
            clip(&a.source, 30),
            clip(a.pressure.as_deref().unwrap_or("-"), 11),
            clip(a.temperature.as_deref().unwrap_or("-"), 8),
            clip(scale(k + 1), 13),
        );
        if let Some(name) = a.source_name.as_deref().filter(|n| !n.is_empty()) {
            put!(out, "     from {}", clip(name, 70));
        }
        if let Some(note) = a.note.as_deref().filter(|n| !n.is_empty()) {
            put!(out, "     note {}", clip(note, 70));
        }
    }
}
