//! The check report: every recipe's screening as text (80 columns, worst first, with the
//! cautions), JSON and CSV. Pure: the command line prints what these return.

use serde_json::{json, Value};

use crate::checks::{self, Check, Conditions, Severity};
use crate::ron_format::{csv_field, wrap_words};
use crate::thermo::Model;
use crate::units::Shown;

/// One recipe's screening: its origin, and the model and checks, or why it was not screened.
pub type Screened = (String, Result<(Model, Vec<Check>), String>);

/// The report written as the recipes are screened, so that nothing but the tallies is held:
/// `begin`, then `item` for each recipe in order, then `end` (each returns the text to
/// write).
pub struct Stream<'a> {
    format: Format,
    conditions: &'a Conditions,
    shown: &'a Shown,
    /// Checks written so far (JSON: a comma before the next).
    written: usize,
    /// Recipes that could not be read (JSON lists them after the checks).
    unreadable: Vec<Value>,
    /// Whether some blend holds an oxidiser (the oxygen-clean caution).
    oxidiser: bool,
}

/// The report's format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Text,
    Json,
    Csv,
}

impl<'a> Stream<'a> {
    pub fn new(format: Format, conditions: &'a Conditions, shown: &'a Shown) -> Stream<'a> {
        Stream { format, conditions, shown, written: 0, unreadable: Vec::new(), oxidiser: false }
    }

    /// What comes before the first recipe.
    pub fn begin(&mut self) -> String {
        match self.format {
            Format::Json => "{\n  \"checks\": [".into(),
            Format::Csv => "recipe,model,id,severity,message\n".into(),
            Format::Text => String::new(),
        }
    }

    /// One recipe's part of the report.
    pub fn item(&mut self, (origin, result): &Screened) -> String {
        if let Ok((_, list)) = result {
            self.oxidiser = self.oxidiser || checks::holds_oxidiser(list);
        }
        match self.format {
            Format::Json => self.json_item(origin, result),
            Format::Csv => csv_item(origin, result),
            Format::Text => text_item(origin, result, self.conditions, self.shown),
        }
    }

    fn json_item(&mut self, origin: &str, result: &Result<(Model, Vec<Check>), String>) -> String {
        let mut out = String::new();
        match result {
            Ok((model, list)) => {
                for c in list {
                    let element = serde_json::to_string_pretty(&check_json(origin, *model, c)).unwrap_or_default();
                    out.push_str(if self.written == 0 { "\n" } else { ",\n" });
                    out.push_str(&indent(&element, 4));
                    self.written += 1;
                }
            }
            Err(e) => self.unreadable.push(json!({"recipe": origin, "error": e})),
        }
        out
    }

    /// What comes after the last recipe: the unreadable ones (JSON) and the cautions.
    pub fn end(&mut self) -> String {
        let cautions = checks::cautions_with(self.oxidiser);
        match self.format {
            Format::Json => {
                let close = if self.written == 0 { "]" } else { "\n  ]" };
                let rest = |v: &Value| indent(&serde_json::to_string_pretty(v).unwrap_or_default(), 2);
                format!(
                    "{close},\n  \"unreadable\": {},\n  \"cautions\": {}\n}}\n",
                    rest(&Value::Array(std::mem::take(&mut self.unreadable))).trim_start(),
                    rest(&json!(cautions)).trim_start()
                )
            }
            Format::Csv => String::new(),
            Format::Text => {
                let mut out = String::new();
                put!(out, "Cautions:");
                for c in cautions {
                    for (k, l) in wrap_words(c, 80 - 4).iter().enumerate() {
                        put!(out, "{}{l}", if k == 0 { "  - " } else { "    " });
                    }
                }
                out
            }
        }
    }
}

/// A JSON text indented by `by` spaces on every line.
fn indent(text: &str, by: usize) -> String {
    let pad = " ".repeat(by);
    text.lines().map(|l| format!("{pad}{l}")).collect::<Vec<_>>().join("\n")
}

/// One recipe's CSV rows.
fn csv_item(origin: &str, r: &Result<(Model, Vec<Check>), String>) -> String {
    let mut out = String::new();
    match r {
        Ok((model, list)) => {
            for c in list {
                put!(
                    out,
                    "{},{},{},{},{}",
                    csv_field(origin),
                    model.key(),
                    c.id,
                    c.severity.key(),
                    csv_field(&c.message)
                );
            }
        }
        Err(e) => put!(out, "{},,,unreadable,{}", csv_field(origin), csv_field(e)),
    }
    out
}

fn check_json(origin: &str, model: Model, c: &Check) -> Value {
    let mut v = json!({
        "recipe": origin,
        "model": model.key(),
        "id": c.id,
        "severity": c.severity.key(),
        "message": c.message,
        "details": c.details,
    });
    if let Value::Object(map) = &mut v {
        for (k, val) in &c.data {
            map.insert(k.clone(), val.clone());
        }
    }
    v
}

/// One recipe's part of the text report.
fn text_item(origin: &str, result: &Result<(Model, Vec<Check>), String>, conditions: &Conditions, d: &Shown) -> String {
    let mut out = String::new();
    let (model, list) = match result {
        Ok((model, list)) => (model, list),
        Err(e) => {
            put!(out, "{origin}: NOT SCREENED - refused");
            put!(out, "  {}", crate::ron_format::shorten(e));
            put!(out);
            return out;
        }
    };
    let worst = checks::worst(list);
    put!(
        out,
        "{}: {}",
        origin,
        match worst {
            Severity::Stop => "STOP - do not fill as planned",
            Severity::Caution => "CAUTION",
            Severity::Ok => "OK",
        }
    );
    put!(
        out,
        "  plan {}; storage down to {}, service up to {}",
        model.key(),
        d.tf(conditions.min_temperature_k),
        d.tf(conditions.max_temperature_k)
    );
    // What matters first: stop, then caution, then ok.
    let mut sorted: Vec<&Check> = list.iter().collect();
    sorted.sort_by_key(|c| std::cmp::Reverse(c.severity));
    // 80 columns: messages and details wrapped with a hanging indent (JSON has them whole).
    for c in sorted {
        let lines = wrap_words(&c.message, 80 - 29);
        for (k, l) in lines.iter().enumerate() {
            if k == 0 {
                put!(out, "  [{:<7}] {:<16} {l}", c.severity.key(), c.id);
            } else {
                put!(out, "{:29}{l}", "");
            }
        }
        for d in &c.details {
            for (k, l) in wrap_words(d, 80 - 16).iter().enumerate() {
                put!(out, "{}{l}", if k == 0 { "              " } else { "                " });
            }
        }
    }
    put!(out);
    out
}
