//! The certificate of preparation: the composition made with its expanded uncertainty,
//! the method, the traceability the record gives, the budget and the Monte Carlo check.
//! A presenter above the record: it computes nothing itself. Text (80 columns), JSON and
//! PDF carry the same content; the PDF is the text set in a fixed-width font.

mod blocks;
pub mod metrics;
pub mod pdf;
pub mod typeset;

use serde_json::{json, Value};

use crate::gas::Catalogue;
use crate::record::{Checked, Evaluation, Method, Record};
use crate::verification;

/// The coverage factor of the expanded uncertainty.
pub const COVERAGE_FACTOR: f64 = 2.0;

/// How the record's recipe was checked against the library.
#[derive(Debug, Clone, PartialEq)]
pub enum RecipeCheck {
    /// The revision is on file and its canonical text has the recorded hash.
    Verified,
    /// Something does not match, or could not be checked: why.
    NotVerified(String),
}

/// A target of the recipe, for the comparison on the certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct Target {
    pub gas: usize,
    pub fraction: f64,
    /// Allowed deviation, absolute mole fraction.
    pub tolerance: Option<f64>,
}

/// Everything the certificate shows.
#[derive(Debug, Clone)]
pub struct Certificate<'a> {
    /// The record's id in the library, or its file.
    pub id: String,
    pub record: &'a Record,
    pub checked: &'a Checked,
    pub evaluation: &'a Evaluation,
    pub catalogue: &'a Catalogue,
    pub recipe_check: RecipeCheck,
    pub targets: Vec<Target>,
    /// Other things that could not be verified or deserve the reviewer's eye.
    pub remarks: Vec<String>,
    /// Verifications by analysis of this cylinder (ISO 6143), one per file.
    pub verifications: Vec<Verified>,
    /// Combine a consistent verification's uncertainty with the gravimetric one (a setting).
    pub combine_verification: bool,
    /// Why the fill is not finished, if it is not: then this is the composition so far,
    /// never a certificate, bannered on every page.
    pub unfinished: Option<String>,
    pub document: Document,
}

/// What makes the certificate a document a laboratory can issue.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Document {
    pub number: String,
    /// YYYY-MM-DD.
    pub issued: String,
    pub valid_until: String,
    pub order_reference: String,
    pub customer: String,
    /// The recipe's description, first line.
    pub recipe_title: String,
    pub water_capacity_l: Option<f64>,
    pub working_pressure_bar: Option<f64>,
    /// The pressure at 15 °C of the amounts made, bar absolute.
    pub final_pressure_bar: Option<f64>,
    /// The blend's own cautions from the screening, then the usual ones.
    pub cautions: Vec<String>,
}

/// The banner of every page of the composition of an unfinished fill.
pub const IN_PROGRESS_BANNER: &str = "FILL IN PROGRESS - COMPOSITION SO FAR - NOT A CERTIFICATE";

/// A verification file of the certified cylinder and what it gave.
#[derive(Debug, Clone, PartialEq)]
pub struct Verified {
    /// The file's name in the library.
    pub file: String,
    pub outcome: Result<verification::Report, String>,
}

/// A mole fraction and its expanded uncertainty in a unit that suits the magnitude,
/// with two significant digits of the uncertainty: ("500.12", "0.55", "ppm").
pub fn with_uncertainty(x: f64, expanded: f64) -> (String, String, &'static str) {
    with_uncertainty_beside(x, expanded, 0.0)
}

/// As [`with_uncertainty`], in a unit that also suits `beside` (the target shown on the same
/// row: a fill far short of its target is shown in the target's unit, not the target in the
/// short amount's).
fn with_uncertainty_beside(x: f64, expanded: f64, beside: f64) -> (String, String, &'static str) {
    let (scale, unit) = unit_for(x.abs().max(expanded).max(beside.abs()));
    let (xs, us) = (x * scale, expanded * scale);
    // No uncertainty (or one below a part in 10⁹ of the value): the value to six
    // significant digits and "none", never a run of zeros.
    if !(us > 1e-9 * xs.abs()) {
        let decimals = (5 - xs.abs().max(1e-300).log10().floor() as i32).clamp(0, 9) as usize;
        return (format!("{xs:.decimals$}"), "none".into(), unit);
    }
    let decimals = if us > 0.0 { (1 - us.log10().floor() as i32).clamp(0, 12) as usize } else { 6 };
    (format!("{xs:.decimals$}"), format!("{us:.decimals$}"), unit)
}

fn unit_for(x: f64) -> (f64, &'static str) {
    let unit = if x >= 0.01 {
        "%"
    } else if x >= 1e-6 {
        "ppm"
    } else {
        "ppb"
    };
    (scale_of(unit), unit)
}

/// Mole fraction → the unit's number.
fn scale_of(unit: &str) -> f64 {
    match unit {
        "%" => 100.0,
        "ppm" => 1e6,
        _ => 1e9,
    }
}

/// A fraction shown alone in a chosen unit.
fn in_unit(x: f64, unit: &str) -> String {
    let v = x * scale_of(unit);
    let decimals = if v.abs() >= 100.0 {
        2
    } else if v.abs() >= 1.0 {
        3
    } else {
        4
    };
    format!("{v:.decimals$}")
}

impl Certificate<'_> {
    fn id_of(&self, i: usize) -> &str {
        self.catalogue.gas(self.evaluation.measurand.gases[i]).id()
    }

    fn method_text(&self) -> &'static str {
        match self.checked.method {
            Method::Gravimetric => "gravimetric preparation (ISO 6142-1)",
            Method::Manometric => "manometric preparation from pressure readings (equation of state)",
        }
    }

    /// Every verification of component i that gave a verdict (file name, report): all are
    /// judged, none is chosen over another.
    fn verifications_of(&self, i: usize) -> Vec<(&str, &verification::Report)> {
        let gas = self.evaluation.measurand.gases[i];
        self.verifications
            .iter()
            .filter_map(|v| v.outcome.as_ref().ok().map(|r| (v.file.as_str(), r)))
            .filter(|(_, r)| r.checked.gas == gas)
            .collect()
    }

    /// The report of component i that enters its stated uncertainty: where every analysis
    /// of it is consistent, the one with the largest u (the cautious choice).
    fn verification_of(&self, i: usize) -> Option<&verification::Report> {
        let all = self.verifications_of(i);
        if all.iter().any(|(_, r)| !r.consistent) {
            return None;
        }
        all.into_iter().map(|(_, r)| r).max_by(|a, b| a.analysed.u.total_cmp(&b.analysed.u))
    }

    /// The standard uncertainty stated for component i: the gravimetric one, combined with
    /// a consistent verification's where the setting asks for it.
    fn u_of(&self, i: usize) -> f64 {
        let u = self.evaluation.gum.u[i];
        match self.verification_of(i) {
            Some(r) if self.combine_verification => (u * u + r.analysed.u.powi(2)).sqrt(),
            _ => u,
        }
    }

    /// Components of which any analysis does not confirm the prepared content.
    fn inconsistent(&self) -> Vec<&str> {
        (0..self.evaluation.gum.values.len())
            .filter(|&i| self.verifications_of(i).iter().any(|(_, r)| !r.consistent))
            .map(|i| self.id_of(i))
            .collect()
    }

    /// The verification section: each component verified, not verified, or refused.
    fn verification_lines(&self) -> Vec<String> {
        let e = self.evaluation;
        let mut o = vec![
            "VERIFICATION BY ANALYSIS (ISO 6143)  U = k u, k = 2".into(),
            "  consistent where |prepared - analysed| <= 2 sqrt(u_prep^2 + u_ver^2)".into(),
            format!("{:<10} {:>14} {:>12} {:<5} {:>12}  {}", "gas", "analysed", "U", "unit", "difference", "verdict"),
        ];
        for i in 0..e.gum.values.len() {
            let all = self.verifications_of(i);
            if all.is_empty() {
                o.push(format!("{:<10} not verified", self.id_of(i)));
                continue;
            }
            for (file, r) in &all {
                let (xs, us, unit) = with_uncertainty(r.analysed.value, COVERAGE_FACTOR * r.analysed.u);
                let verdict = if r.consistent { "consistent" } else { "NOT CONSISTENT" };
                o.push(format!(
                    "{:<10} {:>14} {:>12} {:<5} {:>12}  {verdict}",
                    self.id_of(i),
                    xs,
                    us,
                    unit,
                    in_unit(r.difference, unit)
                ));
                if all.len() > 1 {
                    o.push(format!("{:<10} ({})", "", crate::ron_format::clip(file, 66)));
                }
            }
        }
        for v in &self.verifications {
            if let Err(why) = &v.outcome {
                o.extend(wrap(&format!("  {}: no verdict: {why}", v.file), 78, "    "));
            }
        }
        if self.combine_verification {
            o.push("  U of a verified component combines the gravimetric u and the analysis's".into());
            o.push("  u (laboratory setting); elsewhere U is the gravimetric one.".into());
        } else if self.inconsistent().is_empty() {
            o.push("  U in COMPOSITION is the gravimetric one (ISO 6142-1); the analysis".into());
            o.push("  confirms it and is not combined with it.".into());
        } else {
            o.push("  U in COMPOSITION is the gravimetric one; an analysis above does NOT".into());
            o.push("  confirm the prepared content: the certificate cannot be issued.".into());
        }
        o
    }

    /// The fill is not finished (see [`crate::certify::unfinished`]).
    fn in_progress(&self) -> bool {
        self.unfinished.is_some()
    }

    /// The certificate as lines of at most 80 columns.
    pub fn text(&self) -> String {
        let sections = [
            self.title_lines(),
            self.document_lines(),
            self.composition_lines(),
            self.additions_lines(),
            self.budget_lines(),
            self.monte_carlo_lines(),
            self.closing_lines(),
        ];
        let mut text = sections.concat().join("\n");
        text.push('\n');
        text
    }

    /// The title, and a stop where an analysis contradicts the prepared content.
    fn title_lines(&self) -> Vec<String> {
        let mut o: Vec<String> = Vec::new();
        if let Some(why) = &self.unfinished {
            o.push(IN_PROGRESS_BANNER.into());
            o.extend(wrap(&format!("  {why}"), 78, "  "));
        } else {
            o.push("CERTIFICATE OF PREPARATION  draft for review by the laboratory".into());
        }
        let inconsistent = self.inconsistent();
        if !inconsistent.is_empty() {
            o.push("!".repeat(78));
            o.push(format!("!! STOP - NOT CONSISTENT WITH ANALYSIS: {}", inconsistent.join(", ")));
            o.push("!! The analysis does not confirm the prepared content: do not issue.".into());
            o.push("!".repeat(78));
        }
        o
    }

    /// Number, dates, order, cylinder, recipe, fill, method.
    fn document_lines(&self) -> Vec<String> {
        let e = self.evaluation;
        let r = self.record;
        let mut o: Vec<String> = Vec::new();
        let d = &self.document;
        let or_not = |s: &str| if s.trim().is_empty() { "(not recorded)".to_string() } else { s.to_string() };
        o.push(crate::ron_format::clip(&format!("certificate {}", d.number), 80));
        o.push(format!("  issued {} | valid until {}", d.issued, d.valid_until));
        o.push(crate::ron_format::clip(
            &format!("order {} | customer {}", or_not(&d.order_reference), or_not(&d.customer)),
            80,
        ));
        o.push(format!("record {} rev {} | cylinder {}", self.id, r.revision, r.cylinder));
        let cylinder = [
            d.water_capacity_l.map(|v| format!("{v} L water capacity")),
            d.working_pressure_bar.map(|p| format!("working pressure {p:.0} bar")),
        ];
        let cylinder: Vec<String> = cylinder.into_iter().flatten().collect();
        if !cylinder.is_empty() {
            o.push(format!("  {}", cylinder.join(" | ")));
        }
        if let Some(p) = d.final_pressure_bar {
            o.push(format!("  final pressure {p:.1} bar (absolute) at 15 °C, from the composition made"));
        }
        o.push(format!("recipe {} revision {}", r.recipe, r.recipe_revision));
        if !d.recipe_title.is_empty() {
            o.push(crate::ron_format::clip(&format!("  {}", d.recipe_title), 80));
        }
        if let Some(h) = &r.recipe_sha256 {
            o.push(format!("  sha256 {h}"));
        }
        o.extend(match &self.recipe_check {
            RecipeCheck::Verified => vec!["  verified: that revision is on file with this hash".into()],
            RecipeCheck::NotVerified(why) => indented(&format!("NOT VERIFIED: {why}")),
        });
        o.push(format!(
            "filled {} to {}",
            r.started.as_deref().unwrap_or("(start not recorded)"),
            r.finished.as_deref().unwrap_or("(not finished)")
        ));
        o.push(format!(
            "operator {} | balance {}",
            if r.operator.is_empty() { "(not recorded)" } else { &r.operator },
            if r.balance.is_empty() { "(not recorded)" } else { &r.balance }
        ));
        o.push(format!("method {}", self.method_text()));
        if let Some((model, other)) = e.measurand.models() {
            o.push(format!(
                "  model {}{}",
                model.key(),
                other.map(|m| format!("; spread against {} in the budget", m.key())).unwrap_or_default()
            ));
        }
        o.push("uncertainty JCGM 100 (GUM), checked by Monte Carlo (JCGM 101)".into());
        if self.in_progress() {
            o.push(format!(
                "FILL IN PROGRESS: {} complete ({} recorded); figures so far, not judged",
                crate::units::count(self.checked.complete, "addition"),
                self.checked.additions.len()
            ));
        }
        o
    }

    /// The composition made against the targets, and the verification.
    fn composition_lines(&self) -> Vec<String> {
        let mut o: Vec<String> = Vec::new();
        o.push(String::new());
        o.push(format!("COMPOSITION  U = k u with k = {COVERAGE_FACTOR} (about 95 %)"));
        o.push(format!("{:<10} {:>14} {:>12} {:<5} {:>12}  {}", "gas", "amount", "U", "unit", "target", "judged"));
        for [id, xs, us, unit, ts, judged] in self.composition_rows() {
            o.push(format!("{id:<10} {xs:>14} {us:>12} {unit:<5} {ts:>12}  {judged}"));
        }
        if !self.verifications.is_empty() {
            o.push(String::new());
            o.extend(self.verification_lines());
        }
        o
    }

    /// Per gas: id, amount, U, unit, target, judgement (as the text and the PDF show them).
    fn composition_rows(&self) -> Vec<[String; 6]> {
        let e = self.evaluation;
        (0..e.gum.values.len())
            .map(|i| {
                let (x, u) = (e.gum.values[i], self.u_of(i));
                let target = self.targets.iter().find(|t| t.gas == e.measurand.gases[i]);
                let (xs, us, unit) =
                    with_uncertainty_beside(x, COVERAGE_FACTOR * u, target.map_or(0.0, |t| t.fraction));
                let (ts, judged) = match target {
                    Some(t) if self.in_progress() => (in_unit(t.fraction, unit), "fill in progress".to_string()),
                    Some(t) => (
                        in_unit(t.fraction, unit),
                        match t.tolerance {
                            Some(tol) if (x - t.fraction).abs() <= tol => "within tolerance".to_string(),
                            Some(_) => "OUTSIDE tolerance".to_string(),
                            None => format!("{} % rel", crate::units::signed((x / t.fraction - 1.0) * 100.0, 3)),
                        },
                    ),
                    None if self.targets.is_empty() => ("–".into(), "–".into()),
                    None => ("–".into(), "impurity".into()),
                };
                [self.id_of(i).to_string(), xs, us, unit.to_string(), ts, judged]
            })
            .collect()
    }

    /// Per gas: id, unit, u GUM, u MC, the MC interval, whether they agree.
    fn monte_carlo_rows(&self) -> Vec<[String; 6]> {
        let e = self.evaluation;
        let mc = &e.monte_carlo;
        (0..e.gum.values.len())
            .filter_map(|i| {
                let a = e.agreement.get(i)?;
                let (_, _, unit) = with_uncertainty(e.gum.values[i], e.gum.u[i]);
                Some([
                    self.id_of(i).to_string(),
                    unit.to_string(),
                    in_unit(e.gum.u[i], unit),
                    in_unit(mc.u[i], unit),
                    format!("{} to {}", in_unit(mc.low[i], unit), in_unit(mc.high[i], unit)),
                    if a.agrees { "agrees" } else { "differs" }.to_string(),
                ])
            })
            .collect()
    }

    /// Per addition: its number, the mass (or reading) and the source as written.
    fn addition_rows(&self) -> Vec<[String; 3]> {
        let c = self.checked;
        c.additions
            .iter()
            .enumerate()
            .map(|(k, a)| {
                let mass = match c.method {
                    Method::Gravimetric => {
                        c.net_g(k + 1).zip(c.net_g(k)).map_or("not weighed".into(), |(b, a)| format!("{:.3} g", b - a))
                    }
                    Method::Manometric => a
                        .reading
                        .map_or("no reading".into(), |(p, t)| format!("{:.3} bar at {:.2} °C", p / 1e5, t - 273.15)),
                };
                let source = match &a.source_name {
                    Some(n) => format!("{} (source {n})", a.written),
                    None => a.written.clone(),
                };
                [format!("{}", k + 1), mass, source]
            })
            .collect()
    }

    /// The additions and what the weighings or readings rest on.
    fn additions_lines(&self) -> Vec<String> {
        let mut o: Vec<String> = Vec::new();
        o.push(String::new());
        o.push("ADDITIONS".into());
        for (a, [k, mass, _]) in self.checked.additions.iter().zip(self.addition_rows()) {
            o.push(format!("{k:>2} {mass}  {}", a.written));
            if let Some(n) = &a.source_name {
                o.push(format!("   source {n}"));
            }
        }
        if self.checked.method == Method::Gravimetric {
            o.push(format!("  scale: u = {} g per reading", self.checked.scale_u_g));
            if !self.checked.reference_weighings_g.is_empty() {
                o.push("  substitution weighing: each reading less the reference cylinder's".into());
            }
            match &self.checked.buoyancy {
                Some(b) => o.extend(indented(&format!(
                    "air buoyancy corrected: air density by CIPM-2007 at {}, {} {:.2} L",
                    if b.densities.len() == 1 { "one reading for all weighings" } else { "each weighing" },
                    if b.substitution { "outer volume less the reference's" } else { "outer volume" },
                    b.volume_l.0
                ))),
                None => o.push("  air buoyancy not corrected (no air conditions recorded)".into()),
            }
        } else {
            o.push(format!(
                "  gauge: u = {} bar; thermometer: u = {} K",
                self.checked.pressure_u_pa / 1e5,
                self.checked.temperature_u_k
            ));
        }
        o.push("  atomic weights: CIAAW standard atomic weights, rectangular over the".into());
        o.push("  interval (IUPAC technical report 2021)".into());
        o
    }

    /// The largest contributions to each u.
    fn budget_lines(&self) -> Vec<String> {
        let e = self.evaluation;
        let mut o: Vec<String> = Vec::new();
        o.push(String::new());
        o.push("UNCERTAINTY BUDGET  the largest contributions to u, share of u²".into());
        for i in 0..e.gum.values.len() {
            let (_, us, unit) = with_uncertainty(e.gum.values[i], e.gum.u[i]);
            if us == "none" {
                o.push(format!("{} u = 0: no uncertainty stated, so no budget", self.id_of(i)));
                continue;
            }
            o.push(format!("{} u = {us} {unit}", self.id_of(i)));
            for c in e.gum.budget[i].iter().filter(|c| c.share_percent >= 0.01).take(4) {
                o.push(format!("   {:<44} {:>7.2} %", crate::ron_format::clip(&c.group, 44), c.share_percent));
            }
        }
        o
    }

    /// The Monte Carlo check against the GUM intervals.
    fn monte_carlo_lines(&self) -> Vec<String> {
        let e = self.evaluation;
        let mut o: Vec<String> = Vec::new();
        o.push(String::new());
        let mc = &e.monte_carlo;
        o.push(format!("MONTE CARLO CHECK  {} draws, seed {}, 95 % intervals", mc.draws, mc.seed));
        o.push(format!(
            "{:<10} {:<5} {:>10} {:>10} {:>22}  {}",
            "gas", "unit", "u GUM", "u MC", "interval MC", "agrees"
        ));
        for [id, unit, u_gum, u_mc, interval, agrees] in self.monte_carlo_rows() {
            o.push(format!("{id:<10} {unit:<5} {u_gum:>10} {u_mc:>10} {interval:>22}  {agrees}"));
        }
        if e.agreement.iter().any(|a| !a.agrees) {
            o.push("  differs: GUM and Monte Carlo differ by more than 5 % of u (JCGM 101,".into());
            o.push("  8.2); the Monte Carlo interval is the better statement there.".into());
        }
        if mc.failed > 0 {
            o.push(format!("  {} draws had no value and were left out", mc.failed));
        }
        o
    }

    /// Remarks, cautions, signatures and the caution of a draft.
    fn closing_lines(&self) -> Vec<String> {
        let d = &self.document;
        let mut o: Vec<String> = Vec::new();
        if !self.remarks.is_empty() {
            o.push(String::new());
            o.push("FOR THE REVIEWER".into());
            for rmk in &self.remarks {
                o.extend(wrap(&format!("- {rmk}"), 78, "  "));
            }
        }
        if !d.cautions.is_empty() {
            o.push(String::new());
            o.push("CAUTIONS OF THIS BLEND".into());
            for c in &d.cautions {
                o.extend(wrap(&format!("- {c}"), 78, "  "));
            }
        }
        if self.unfinished.is_none() {
            o.push(String::new());
            o.push("prepared by ______________________________  date ______________".into());
            o.push("approved by ______________________________  date ______________".into());
        }
        o.push(String::new());
        o.extend(wrap(&format!("CAUTION  {}", self.draft_caution()), 78, "  "));
        o
    }

    /// The caution that ends every certificate: a draft until the laboratory signs it.
    fn draft_caution(&self) -> String {
        let verified = if self.verifications.is_empty() { "verified (ISO 6143) " } else { "" };
        format!(
            "A draft produced by a computation aid, to be reviewed, {verified}and signed under the laboratory's \
             quality system before it is issued. The cylinder holds gas under high pressure: follow local codes, \
             the cylinder's markings and licensed practice."
        )
    }

    /// The certificate as JSON (mol/mol throughout).
    pub fn json(&self) -> Value {
        let e = self.evaluation;
        let r = self.record;
        json!({
            "record": self.id,
            "record_revision": r.revision,
            "draft": true,
            "certificate": {
                "number": self.document.number,
                "issued": self.document.issued,
                "valid_until": self.document.valid_until,
            },
            "order": {"reference": self.document.order_reference, "customer": self.document.customer},
            "cylinder": {
                "serial": r.cylinder,
                "water_capacity_l": self.document.water_capacity_l,
                "working_pressure_bar": self.document.working_pressure_bar,
                "final_pressure_bar": self.document.final_pressure_bar,
            },
            "cautions": self.document.cautions,
            "recipe": {
                "name": r.recipe,
                "revision": r.recipe_revision,
                "sha256": r.recipe_sha256,
                "verified": self.recipe_check == RecipeCheck::Verified,
                "not_verified_because": match &self.recipe_check { RecipeCheck::NotVerified(w) => json!(w), RecipeCheck::Verified => Value::Null },
            },
            "operator": r.operator,
            "balance": r.balance,
            "started": r.started,
            "finished": self.unfinished.is_none(),
            "finished_at": r.finished,
            "unfinished_because": self.unfinished,
            "complete_additions": self.checked.complete,
            "additions": self.checked.additions.len(),
            "method": match self.checked.method { Method::Gravimetric => "gravimetric", Method::Manometric => "manometric" },
            "model": e.measurand.models().map(|(m, _)| m.key()),
            "components": self.components_json(),
            "budget": self.budget_json(),
            "inputs": e.measurand.inputs.list.iter().map(|i| json!({
                "input": i.label, "value": i.value, "standard_uncertainty": i.u, "distribution": i.shape.key(),
            })).collect::<Vec<_>>(),
            "monte_carlo": self.monte_carlo_json(),
            "remarks": self.remarks,
            "corrections": r.corrections.iter().map(|c| json!({
                "time": c.time, "entry": c.entry, "was": c.was, "now": c.now, "reason": c.reason,
            })).collect::<Vec<_>>(),
            "verification": self.verification_json(),
            "consistent_with_analysis": if self.verifications.iter().any(|v| v.outcome.is_ok()) {
                json!(self.inconsistent().is_empty())
            } else {
                Value::Null
            },
            "text": self.text(),
        })
    }
}

impl Certificate<'_> {
    /// Every component made, with its target and tolerance.
    fn components_json(&self) -> Vec<Value> {
        let e = self.evaluation;
        (0..e.gum.values.len())
            .map(|i| {
                let target = self.targets.iter().find(|t| t.gas == e.measurand.gases[i]);
                json!({
                    "id": self.id_of(i),
                    "mole_fraction": e.gum.values[i],
                    "standard_uncertainty": self.u_of(i),
                    "expanded_uncertainty": COVERAGE_FACTOR * self.u_of(i),
                    "gravimetric_standard_uncertainty": e.gum.u[i],
                    "coverage_factor": COVERAGE_FACTOR,
                    "target": target.map(|t| t.fraction),
                    "tolerance": target.and_then(|t| t.tolerance),
                    "within_tolerance": target.and_then(|t| t.tolerance.map(|tol| (e.gum.values[i] - t.fraction).abs() <= tol)),
                })
            })
            .collect()
    }

    /// Each component's uncertainty budget.
    fn budget_json(&self) -> Vec<Value> {
        let e = self.evaluation;
        (0..e.gum.values.len())
            .map(|i| {
                json!({
                    "id": self.id_of(i),
                    "contributions": e.gum.budget[i].iter().map(|c| json!({
                        "input": c.group,
                        "standard_uncertainty": c.u,
                        "sensitivity": if c.sensitivity.is_finite() { json!(c.sensitivity) } else { Value::Null },
                        "contribution": c.contribution,
                        "share_percent": c.share_percent,
                    })).collect::<Vec<_>>(),
                })
            })
            .collect()
    }

    /// The Monte Carlo check, per component.
    fn monte_carlo_json(&self) -> Value {
        let e = self.evaluation;
        let mc = &e.monte_carlo;
        json!({
            "draws": mc.draws,
            "seed": mc.seed,
            "failed": mc.failed,
            "agrees": e.agreement.iter().all(|a| a.agrees),
            "tolerance_of_u": crate::record::uncertainty::AGREEMENT_TOLERANCE,
            "components": (0..mc.mean.len()).map(|i| json!({
                "id": self.id_of(i),
                "mean": mc.mean[i],
                "standard_uncertainty": mc.u[i],
                "low": mc.low[i],
                "high": mc.high[i],
                "agrees": e.agreement.get(i).map(|a| a.agrees),
                "low_gap_of_u": e.agreement.get(i).map(|a| a.low_gap),
                "high_gap_of_u": e.agreement.get(i).map(|a| a.high_gap),
            })).collect::<Vec<_>>(),
        })
    }

    /// Every component: its verification by analysis, or `verified: false`.
    fn verification_json(&self) -> Value {
        let e = self.evaluation;
        let components: Vec<Value> = (0..e.gum.values.len())
            .flat_map(|i| {
                let all = self.verifications_of(i);
                if all.is_empty() {
                    return vec![json!({"id": self.id_of(i), "verified": false})];
                }
                all.into_iter()
                    .map(|(file, r)| {
                        json!({
                            "id": self.id_of(i),
                            "file": file,
                            "verified": true,
                            "analysed": r.analysed.value,
                            "standard_uncertainty": r.analysed.u,
                            "difference": r.difference,
                            "allowed_difference": r.bound,
                            "consistent": r.consistent,
                            "goodness_of_fit": r.fit.goodness(),
                        })
                    })
                    .collect()
            })
            .collect();
        json!({
            "components": components,
            "files": self.verifications.iter().map(|v| json!({
                "file": v.file,
                "error": v.outcome.as_ref().err(),
            })).collect::<Vec<_>>(),
            "combined": self.combine_verification,
        })
    }

    /// Does any verification contradict the prepared content?
    pub fn stopped_by_analysis(&self) -> bool {
        !self.inconsistent().is_empty()
    }
}

/// Wrap `text` at `width` columns, continuation lines indented by `indent`.
/// `text` wrapped within 80 columns, every line indented by two.
fn indented(text: &str) -> Vec<String> {
    wrap(text, 76, "").into_iter().map(|l| format!("  {l}")).collect()
}

pub fn wrap(text: &str, width: usize, indent: &str) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let len = line.chars().count();
        if len > 0 && len + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
            line.push_str(indent);
        } else if len > 0 && !line.ends_with(' ') {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.trim().is_empty() {
        lines.push(line);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uncertainties_set_the_digits() {
        assert_eq!(with_uncertainty(500.123e-6, 0.55e-6), ("500.12".into(), "0.55".into(), "ppm"));
        assert_eq!(with_uncertainty(0.15012, 0.00031), ("15.012".into(), "0.031".into(), "%"));
        assert_eq!(with_uncertainty(2.5e-9, 1.2e-9), ("2.5".into(), "1.2".into(), "ppb"));
    }

    #[test]
    fn wrapping_keeps_within_the_width() {
        let lines = wrap(&"word ".repeat(60), 30, "  ");
        assert!(lines.iter().all(|l| l.chars().count() <= 30));
        assert_eq!(lines.iter().map(|l| l.split_whitespace().count()).sum::<usize>(), 60);
    }
}
