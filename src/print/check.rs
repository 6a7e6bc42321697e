//! The check report: every recipe's screening as text (80 columns, worst first, with the
//! cautions), JSON and CSV. Pure: the command line prints what these return.

use serde_json::{json, Value};

use crate::checks::{self, Check, Conditions, Severity};
use crate::ron_format::{csv_field, wrap_words};
use crate::thermo::Model;
use crate::units::Shown;

/// One recipe's screening: its origin, and the model and checks, or why it was not screened.
pub type Screened = (String, Result<(Model, Vec<Check>), String>);

/// The report as JSON: every check of every recipe, the recipes that could not be read,
/// and the cautions.
pub fn json(results: &[Screened]) -> Value {
    json!({
        "checks": results
            .iter()
            .filter_map(|(origin, r)| r.as_ref().ok().map(|(model, checks)| (origin, model, checks)))
            .flat_map(|(origin, model, checks)| checks.iter().map(move |c| check_json(origin, *model, c)))
            .collect::<Vec<_>>(),
        "unreadable": results
            .iter()
            .filter_map(|(origin, r)| r.as_ref().err().map(|e| json!({"recipe": origin, "error": e})))
            .collect::<Vec<_>>(),
        "cautions": cautions(results),
    })
}

/// The cautions for the blends screened (the oxygen-clean one where one holds an oxidiser).
fn cautions(results: &[Screened]) -> Vec<&'static str> {
    checks::cautions_for(results.iter().filter_map(|(_, r)| r.as_ref().ok()).flat_map(|(_, list)| list))
}

/// The report as CSV: one row per check, one per recipe that could not be read.
pub fn csv(results: &[Screened]) -> String {
    let mut out = String::new();
    put!(out, "recipe,model,id,severity,message");
    for (origin, r) in results {
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

pub fn text(results: &[Screened], conditions: &Conditions, d: &Shown) -> String {
    let mut out = String::new();
    for (origin, result) in results {
        let (model, list) = match result {
            Ok((model, list)) => (model, list),
            Err(e) => {
                put!(out, "{origin}: NOT SCREENED - refused");
                put!(out, "  {}", crate::ron_format::shorten(e));
                put!(out);
                continue;
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
    }
    put!(out, "Cautions:");
    for c in cautions(results) {
        for (k, l) in wrap_words(c, 80 - 4).iter().enumerate() {
            put!(out, "{}{l}", if k == 0 { "  - " } else { "    " });
        }
    }
    out
}
