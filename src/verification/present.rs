//! What a verification prints: the report as text (80 columns), JSON and the fit as CSV.
//! Pure functions of the [`Report`], used by the command line, the screen and the
//! certificate alike.

use serde_json::{json, Value};

use super::{Report, CONSISTENCY_FACTOR, GOODNESS_BOUND};
use crate::gas::Catalogue;
use crate::units::fraction_text;

/// A mole fraction and an uncertainty in one unit that suits the value: ("12.0028", "0.0039", "%").
pub fn pair(x: f64, u: f64) -> (String, String, &'static str) {
    crate::print::certificate::with_uncertainty(x, u)
}

/// The report as lines of at most 80 columns.
pub fn text(report: &Report, catalogue: &Catalogue, origin: &str) -> String {
    let c = &report.checked;
    let fit = &report.fit;
    let id = catalogue.gas(c.gas).id();
    let mut o = Vec::new();
    o.push(format!("VERIFICATION BY ANALYSIS (ISO 6143)  {id}"));
    o.push(crate::ron_format::clip(&format!("file {origin}"), 80));
    o.push(format!(
        "function {}; {} reference mixtures, {} to {}",
        fit.function.key(),
        c.points.len(),
        fraction_text(fit.range.0),
        fraction_text(fit.range.1)
    ));
    o.push(String::new());
    o.push("REFERENCE MIXTURES  content (u, k = 1), response (u), weighted residuals".into());
    o.push(format!(
        "{:<14} {:>12} {:>9} {:>12} {:>9} {:>6} {:>6}",
        "mixture", "content", "u", "response", "u", "x", "y"
    ));
    for (k, p) in c.points.iter().enumerate() {
        let (xs, us, unit) = pair(p.x, p.ux);
        let (dx, dy) = fit.weighted_residuals[k];
        let name = crate::ron_format::clip(&c.names[k], 14);
        o.push(format!(
            "{name:<14} {:>12} {:>9} {:>12} {:>9} {dx:>6.2} {dy:>6.2}",
            format!("{xs} {unit}"),
            us,
            sig(p.y),
            sig(p.uy)
        ));
    }
    o.push(String::new());
    o.push("FIT  generalized least squares, uncertainties of contents and responses".into());
    for (k, b) in fit.coefficients.iter().enumerate() {
        let u = fit.covariance[(k, k)].sqrt();
        o.push(format!("  b{k} = {b:>16.9e}   u = {u:.3e}"));
    }
    o.push(format!("  sum of squares {:.3} with {} degrees of freedom", fit.sum_of_squares, fit.degrees_of_freedom));
    let goodness = fit.goodness();
    o.push(format!(
        "  largest weighted residual {goodness:.2}: {}",
        if goodness <= GOODNESS_BOUND {
            format!("adequate (at most {GOODNESS_BOUND})")
        } else {
            format!("NOT ADEQUATE (above {GOODNESS_BOUND}); another function or a check of the data")
        }
    ));
    o.push(String::new());
    let (ps, pu, unit) = pair(c.prepared.value, c.prepared.u);
    let scale = scale_of(unit);
    let shown = |x: f64| format!("{:.*}", decimals(&ps), x / scale);
    o.push(format!("SAMPLE  response {} ± {}", sig(c.response.value), sig(c.response.u)));
    let from = c.sample_record.as_deref().map(|r| format!("  (record {r})")).unwrap_or_default();
    o.push(format!("  prepared   {ps} {unit}  u = {pu} {unit}{from}"));
    o.push(format!("  analysed   {} {unit}  u = {} {unit}", shown(report.analysed.value), shown(report.analysed.u)));
    o.push(format!(
        "  difference {} {unit}  allowed {} {unit} = {CONSISTENCY_FACTOR}·√(u_prep² + u_ver²)",
        shown(report.difference),
        shown(report.bound)
    ));
    o.push(if report.consistent {
        "  CONSISTENT: the analysis confirms the prepared content".into()
    } else {
        "  NOT CONSISTENT: the prepared content is not confirmed; do not certify".into()
    });
    let mut text = o.join("\n");
    text.push('\n');
    text
}

/// The report as JSON (mole fractions; the keys scripts rely on are in docs/).
pub fn json(report: &Report, catalogue: &Catalogue) -> Value {
    let c = &report.checked;
    let fit = &report.fit;
    let p = fit.coefficients.len();
    json!({
        "gas": catalogue.gas(c.gas).id(),
        "function": fit.function.key(),
        "coefficients": fit.coefficients,
        "covariance": (0..p).map(|a| (0..p).map(|b| fit.covariance[(a, b)]).collect::<Vec<_>>()).collect::<Vec<_>>(),
        "standards": c.points.iter().enumerate().map(|(k, pt)| json!({
            "name": c.names[k],
            "content": pt.x,
            "content_u": pt.ux,
            "response": pt.y,
            "response_u": pt.uy,
            "repeats": c.repeats[k],
            "adjusted_content": fit.adjusted[k],
            "weighted_residual_content": fit.weighted_residuals[k].0,
            "weighted_residual_response": fit.weighted_residuals[k].1,
        })).collect::<Vec<_>>(),
        "sum_of_squares": fit.sum_of_squares,
        "degrees_of_freedom": fit.degrees_of_freedom,
        "goodness_of_fit": fit.goodness(),
        "adequate": report.adequate(),
        "analysed": {"mole_fraction": report.analysed.value, "standard_uncertainty": report.analysed.u},
        "prepared": {"mole_fraction": c.prepared.value, "standard_uncertainty": c.prepared.u, "record": c.sample_record},
        "difference": report.difference,
        "allowed_difference": report.bound,
        "consistent": report.consistent,
    })
}

/// The fit as CSV: one row per reference mixture.
pub fn csv(report: &Report) -> String {
    let c = &report.checked;
    let fit = &report.fit;
    let mut o = String::from(
        "mixture,content,content_u,response,response_u,adjusted_content,fitted_response,residual_content_weighted,\
         residual_response_weighted\n",
    );
    for (k, p) in c.points.iter().enumerate() {
        let (dx, dy) = fit.weighted_residuals[k];
        o.push_str(&format!(
            "{},{},{},{},{},{},{},{},{}\n",
            crate::ron_format::csv_field(&c.names[k]),
            p.x,
            p.ux,
            p.y,
            p.uy,
            fit.adjusted[k],
            fit.response(fit.adjusted[k]),
            dx,
            dy
        ));
    }
    o
}

/// Up to six significant digits, without trailing zeros (0.4, 251.3, 1.46408).
fn sig(v: f64) -> String {
    let s = format!("{}", crate::units::Sig(v, 6));
    if s.contains('.') && !s.contains('e') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn scale_of(unit: &str) -> f64 {
    match unit {
        "ppb" => 1e-9,
        "ppm" => 1e-6,
        _ => 1e-2,
    }
}

fn decimals(shown: &str) -> usize {
    shown.split_once('.').map_or(0, |(_, d)| d.len())
}
