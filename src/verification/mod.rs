//! Verification by analysis (ISO 6143:2001): the analysed content of a new cylinder from an
//! analyser calibrated with reference mixtures, and its consistency with the prepared
//! (gravimetric) value, as ISO 6142-1:2015 asks before a composition is certified.
//!
//! A verification file names the gas, the calibration function, the reference mixtures
//! (content with its standard uncertainty, response with its own) and the sample (its
//! fill record, or a prepared value typed in) with its response. [`check`] reads it into
//! numbers, [`verify`] fits and judges. Pure: the record of the sample is resolved by the
//! caller's lookup.

pub mod fit;
pub mod present;

use serde::{Deserialize, Serialize};

use crate::gas::Catalogue;
use crate::record::analysis::{parse_assay, Assay};
pub use fit::{Fit, FitError, Function, Point};

/// The file format this program reads and writes.
pub const FORMAT: u32 = 1;

/// The factor of the consistency test: |x_prep − x_ver| ≤ 2·√(u_prep² + u_ver²)
/// (ISO 6142-1:2015, 9.2, with k = 2).
pub const CONSISTENCY_FACTOR: f64 = 2.0;

/// ISO 6143's bound on the largest weighted residual of an adequate fit.
pub const GOODNESS_BOUND: f64 = 2.0;

/// A verification file as written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Verification {
    pub format: u32,
    /// The gas verified: a catalogue id, name or CAS number.
    pub gas: String,
    /// The analyser (free text: make, serial, detector).
    #[serde(default)]
    pub analyser: String,
    /// The analytical method (free text).
    #[serde(default)]
    pub method: String,
    /// `linear`, `quadratic` or `cubic`.
    pub function: String,
    /// The reference mixtures.
    #[serde(default)]
    pub standards: Vec<Standard>,
    pub sample: Sample,
    #[serde(default)]
    pub notes: String,
}

/// A reference mixture as written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Standard {
    /// Its cylinder or name, so that it is listed once.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub name: String,
    /// Content with standard uncertainty (k = 1): `9.987%±0.004%`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub content: Option<String>,
    /// Or: the fill record of a mixture made here (its certified content is used).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub record: Option<String>,
    /// Its certificate (free text), where it is not ours.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub certificate: String,
    /// One response with its standard uncertainty: `0.99810±0.00030`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub response: Option<String>,
    /// Or: repeated responses, averaged; u = s/√n.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub responses: Vec<String>,
}

/// The sample as written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Sample {
    /// The prepared content with its standard uncertainty, typed in.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub prepared: Option<String>,
    /// Or: the sample's fill record in the library.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub record: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub response: Option<String>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub responses: Vec<String>,
}

/// A problem with a verification file, placed at its line and column where it has one.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{origin}:{line}:{column}: {message}")]
pub struct VerificationError {
    pub origin: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

/// A value and its standard uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measured {
    pub value: f64,
    pub u: f64,
}

/// A verification read into numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct Checked {
    /// Catalogue index of the gas.
    pub gas: usize,
    pub function: Function,
    /// Names of the reference mixtures (as written, or numbered).
    pub names: Vec<String>,
    pub points: Vec<Point>,
    /// How many responses each mean stands for (1 for a single stated response).
    pub repeats: Vec<usize>,
    pub prepared: Measured,
    pub response: Measured,
    /// The sample's record, where it came from one.
    pub sample_record: Option<String>,
}

/// The outcome: the fit, the analysed content and the verdict.
#[derive(Debug, Clone, PartialEq)]
pub struct Report {
    pub checked: Checked,
    pub fit: Fit,
    pub analysed: Measured,
    /// prepared − analysed.
    pub difference: f64,
    /// 2·√(u_prep² + u_ver²).
    pub bound: f64,
    pub consistent: bool,
}

impl Verification {
    /// Parse a verification file's text.
    pub fn parse(text: &str, origin: &str) -> Result<Verification, VerificationError> {
        let text = crate::ron_format::without_bom(text);
        let v: Verification = crate::ron_format::options().from_str(text).map_err(|e| {
            let (line, column, message) = crate::ron_format::parse_problem(text, &e, "verification", "Verification(");
            VerificationError { origin: origin.into(), line, column, message }
        })?;
        if v.format != FORMAT {
            let (line, column) = crate::ron_format::locate(text, "format");
            let message = format!("verification format {} is not known; this program reads format {FORMAT}", v.format);
            return Err(VerificationError { origin: origin.into(), line, column, message });
        }
        Ok(v)
    }

    /// The canonical text (fixed field order, values as typed).
    pub fn to_text(&self) -> String {
        crate::ron_format::to_text(self)
    }

    /// The file name a verification is kept under in the library: cylinder and gas.
    pub fn file_stem(cylinder: &str, gas_id: &str) -> String {
        let clean = |s: &str| {
            s.chars().map(|c| if c.is_ascii_alphanumeric() || c == '-' { c } else { '_' }).collect::<String>()
        };
        format!("{}-{}", clean(cylinder), clean(gas_id))
    }

    /// Read every field into numbers. `record_content` gives the certified content of a
    /// gas (catalogue index) in a fill record, with its standard uncertainty.
    pub fn check(
        &self,
        catalogue: &Catalogue,
        record_content: &dyn Fn(&str, usize) -> Result<Measured, String>,
        text: &str,
        origin: &str,
    ) -> Result<Checked, VerificationError> {
        let err = |needle: &str, message: String| {
            let (line, column) = crate::ron_format::locate(text, needle);
            VerificationError { origin: origin.into(), line, column, message }
        };
        let gas = catalogue.find(&self.gas).map_err(|e| err("gas", format!("gas: {e}")))?;
        let function = Function::parse(&self.function).ok_or_else(|| {
            err("function", format!("function {:?} is not known; accepted: linear, quadratic, cubic", self.function))
        })?;
        let mut names = Vec::new();
        let mut points = Vec::new();
        let mut repeats = Vec::new();
        for (k, s) in self.standards.iter().enumerate() {
            let name = if !s.name.is_empty() {
                s.name.clone()
            } else if let Some(r) = &s.record {
                format!("record {r}")
            } else {
                format!("reference mixture {}", k + 1)
            };
            // Placed at the mixture's content (or record) as written, quoted.
            let needle =
                s.content.as_deref().or(s.record.as_deref()).map_or("standards".into(), |t| format!("\"{t}\""));
            let here = |m: String| err(&needle, format!("{name}: {m}"));
            let content = match (&s.content, &s.record) {
                (Some(c), None) => content(c).map_err(&here)?,
                (None, Some(r)) => record_content(r, gas).map_err(&here)?,
                (Some(_), Some(_)) => return Err(here("give its content or its record, not both".into())),
                (None, None) => {
                    return Err(here("no content: give content: \"9.987%±0.004%\" or record: \"ID\"".into()))
                }
            };
            let (response, n) = responses(s.response.as_deref(), &s.responses).map_err(&here)?;
            let same = |a: &str, b: &str| a.trim().eq_ignore_ascii_case(b.trim());
            if let Some(first) = names.iter().position(|n: &String| same(n, &name)) {
                return Err(here(format!("listed twice (also as reference mixture {})", first + 1)));
            }
            if let Some(first) =
                points.iter().position(|p: &Point| p.x == content.value && p.ux == content.u && s.name.is_empty())
            {
                return Err(here(format!(
                    "the same content as reference mixture {}; a reference mixture is listed once, with all its \
                     responses (give each its name if they are different cylinders)",
                    first + 1
                )));
            }
            names.push(name);
            points.push(Point { x: content.value, ux: content.u, y: response.value, uy: response.u });
            repeats.push(n);
        }
        let sample = &self.sample;
        let needle =
            sample.prepared.as_deref().or(sample.record.as_deref()).map_or("sample".into(), |t| format!("\"{t}\""));
        let here = |m: String| err(&needle, format!("sample: {m}"));
        let prepared = match (&sample.prepared, &sample.record) {
            (Some(c), None) => content(c).map_err(&here)?,
            (None, Some(r)) => record_content(r, gas).map_err(&here)?,
            (Some(_), Some(_)) => return Err(here("give its prepared content or its record, not both".into())),
            (None, None) => return Err(here("give prepared: \"12.0036%±0.0006%\" or record: \"ID\"".into())),
        };
        let (response, _) = responses(sample.response.as_deref(), &sample.responses).map_err(&here)?;
        Ok(Checked { gas, function, names, points, repeats, prepared, response, sample_record: sample.record.clone() })
    }
}

/// A content as written: a mole fraction with a standard uncertainty above zero.
fn content(text: &str) -> Result<Measured, String> {
    match parse_assay(text).map_err(|e| format!("content {text:?}: {e}"))? {
        Assay::Measured { value, u } if u > 0.0 && value > 0.0 => Ok(Measured { value, u }),
        Assay::Measured { value, .. } if value > 0.0 => Err(format!(
            "content {text:?} has no uncertainty; write it with its standard uncertainty, e.g. 9.987%±0.004% or \
             500ppm±0.5%rel"
        )),
        Assay::Measured { .. } => Err(format!("content {text:?} is not above zero")),
        Assay::BelowLimit { .. } => Err(format!("content {text:?} is a detection limit, not a content")),
        Assay::Balance => Err("a reference content cannot be the balance".into()),
    }
}

/// A response `1.2017±0.0003` (or `±0.03%rel`): a number and its standard uncertainty.
fn response(text: &str) -> Result<Measured, String> {
    let accepted = "write a response as a number with its standard uncertainty, e.g. 0.99810±0.00030 or \
                    1520.4±0.05%rel";
    let t = text.trim();
    let Some((v, u)) = t.split_once('±').or_else(|| t.split_once("+-")) else {
        return Err(format!("response {text:?} has no uncertainty; {accepted}"));
    };
    let value: f64 =
        v.trim().parse().map_err(|_| format!("response {text:?}: {:?} is not a number; {accepted}", v.trim()))?;
    let u_text = u.trim();
    let u = match u_text.strip_suffix("%rel") {
        Some(rel) => rel.trim().parse::<f64>().map(|r| r / 100.0 * value.abs()),
        None => u_text.parse::<f64>(),
    }
    .map_err(|_| format!("response {text:?}: uncertainty {u_text:?} is not a number; {accepted}"))?;
    if !value.is_finite() || !u.is_finite() {
        return Err(format!("response {text:?} is not a finite number"));
    }
    if !(u > 0.0) {
        return Err(format!("response {text:?}: its uncertainty must be above zero (a response is never exact)"));
    }
    Ok(Measured { value, u })
}

/// One stated response, or the mean of repeated ones with u = s/√n (n ≥ 2).
fn responses(one: Option<&str>, many: &[String]) -> Result<(Measured, usize), String> {
    match (one, many.len()) {
        (Some(r), 0) => Ok((response(r)?, 1)),
        (Some(_), _) => Err("give response (one, with its uncertainty) or responses (repeats), not both".into()),
        (None, 0) => {
            Err("no response: give response: \"1.2017±0.0003\" or responses: [\"1.2016\", \"1.2019\", …]".into())
        }
        (None, 1) => Err("one repeat gives no spread; give response: \"X±U\" with its uncertainty".into()),
        (None, n) => {
            let values: Vec<f64> = many
                .iter()
                .map(|r| {
                    r.trim()
                        .parse::<f64>()
                        .ok()
                        .filter(|v| v.is_finite())
                        .ok_or_else(|| format!("response {r:?} is not a number"))
                })
                .collect::<Result<_, _>>()?;
            let mean = values.iter().sum::<f64>() / n as f64;
            let s = (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64).sqrt();
            if !(s > 0.0) {
                return Err("the repeated responses are all equal, so their spread gives no uncertainty; give \
                            response: \"X±U\" instead"
                    .into());
            }
            Ok((Measured { value: mean, u: s / (n as f64).sqrt() }, n))
        }
    }
}

/// Why a verification gave no verdict.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum VerifyError {
    #[error("no calibration function: {0}")]
    Fit(#[from] FitError),
    #[error("{0}")]
    OutsideRange(String),
}

/// Fit the calibration function and judge the sample.
pub fn verify(checked: &Checked) -> Result<Report, VerifyError> {
    let fit = fit::fit(&checked.points, checked.function)?;
    let (low, high) = fit.range;
    // A sample just beyond an end, within twice that end mixture's content uncertainty (a
    // response equal to the top mixture's, read through the fitted line), is inside.
    let ends = |x: f64| {
        let nearest = checked.points.iter().min_by(|a, b| (a.x - x).abs().total_cmp(&(b.x - x).abs()));
        nearest.is_some_and(|p| (x - p.x).abs() <= 2.0 * p.ux && (x < low || x > high))
    };
    let analysed = match fit.analyse(checked.response.value, checked.response.u) {
        Ok((value, u)) => Measured { value, u },
        Err(Some(x)) if ends(x) => Measured { value: x, u: fit.u_content(x, checked.response.u) },
        Err(outside) => {
            let text = crate::units::fraction_text;
            let place = match outside {
                Some(x) if x > high => format!(
                    "its content would be about {}, above the highest reference mixture ({}) by {}",
                    text(x),
                    text(high),
                    text(x - high)
                ),
                Some(x) => format!(
                    "its content would be about {}, below the lowest reference mixture ({}) by {}",
                    text(x.max(0.0)),
                    text(low),
                    text(low - x)
                ),
                None => "the function does not reach it".into(),
            };
            return Err(VerifyError::OutsideRange(format!(
                "the sample's response {} lies outside the calibrated range ({} to {}): {place}; add a reference \
                 mixture beyond it",
                checked.response.value,
                text(low),
                text(high)
            )));
        }
    };
    let difference = checked.prepared.value - analysed.value;
    let bound = CONSISTENCY_FACTOR * (checked.prepared.u.powi(2) + analysed.u.powi(2)).sqrt();
    Ok(Report { checked: checked.clone(), fit, analysed, difference, bound, consistent: difference.abs() <= bound })
}

impl Report {
    /// Is the fit adequate by ISO 6143's criterion?
    pub fn adequate(&self) -> bool {
        self.fit.goodness() <= GOODNESS_BOUND
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const FILE: &str = r#"Verification(
    format: 1,
    gas: "CO2",
    function: "linear",
    standards: [
        (content: "8%±0.004%", response: "0.8000±0.0003"),
        (content: "10%±0.004%", response: "1.0002±0.0003"),
        (content: "14%±0.004%", responses: ["1.3996", "1.4001", "1.3998"]),
    ],
    sample: (prepared: "12%±0.001%", response: "1.2000±0.0003"),
)"#;

    fn no_records(_: &str, _: usize) -> Result<Measured, String> {
        Err("no records here".into())
    }

    #[test]
    fn a_file_reads_into_numbers_and_repeats_are_averaged() {
        let c = Catalogue::built_in();
        let v = Verification::parse(FILE, "t.ron").unwrap();
        let checked = v.check(&c, &no_records, FILE, "t.ron").unwrap();
        assert_eq!(checked.points.len(), 3);
        assert_eq!(checked.repeats, vec![1, 1, 3]);
        let mean = (1.3996 + 1.4001 + 1.3998) / 3.0;
        assert!((checked.points[2].y - mean).abs() < 1e-15);
        let s = ((1.3996f64 - mean).powi(2) + (1.4001f64 - mean).powi(2) + (1.3998f64 - mean).powi(2)) / 2.0;
        assert!((checked.points[2].uy - (s / 3.0).sqrt()).abs() < 1e-15);
        let report = verify(&checked).unwrap();
        assert!(report.consistent, "{report:?}");
        assert!((report.analysed.value - 0.12).abs() < 2e-4);
    }

    #[test]
    fn bad_input_is_refused_saying_what_and_where() {
        let c = Catalogue::built_in();
        for (from, to, needle) in [
            ("8%±0.004%", "8%", "no uncertainty"),
            ("0.8000±0.0003", "0.8000±0", "above zero"),
            ("0.8000±0.0003", "0.8000±-0.1", "above zero"),
            ("10%±0.004%", "8%±0.004%", "same content"),
            ("\"linear\"", "\"spline\"", "not known"),
            ("\"CO2\"", "\"CX2\"", "gas"),
            ("(prepared: \"12%±0.001%\", ", "(record: \"F-1\", ", "no records here"),
        ] {
            let text = FILE.replace(from, to);
            let v = Verification::parse(&text, "t.ron").unwrap();
            let e = v.check(&c, &no_records, &text, "t.ron").unwrap_err();
            assert!(e.message.contains(needle), "{to}: {e}");
            assert!(e.line > 1, "{to}: placed at {}:{}", e.line, e.column);
        }
    }

    #[test]
    fn three_mixtures_out_of_order_are_refused_not_a_panic() {
        let c = Catalogue::built_in();
        for responses in [("1.0", "2.5", "2.0"), ("1.0", "2.0", "1.99"), ("2.0", "1.0", "2.5")] {
            let text = format!(
                "Verification(format: 1, gas: \"CO2\", function: \"linear\", standards: [\
                 (content: \"1%±0.001%\", response: \"{}±0.01\"), (content: \"2%±0.001%\", response: \"{}±0.01\"), \
                 (content: \"3%±0.001%\", response: \"{}±0.01\")], sample: (prepared: \"2%±0.001%\", response: \"2.0±0.01\"))",
                responses.0, responses.1, responses.2
            );
            let checked = Verification::parse(&text, "t").unwrap().check(&c, &no_records, &text, "t").unwrap();
            let e = verify(&checked).unwrap_err().to_string();
            assert!(e.contains("not monotonic"), "{responses:?}: {e}");
        }
    }

    #[test]
    fn a_sample_at_the_top_mixtures_response_is_inside() {
        let c = Catalogue::built_in();
        let text = FILE.replace("response: \"1.2000±0.0003\"", "response: \"1.3998±0.0003\"");
        let checked = Verification::parse(&text, "t").unwrap().check(&c, &no_records, &text, "t").unwrap();
        assert!(verify(&checked).is_ok());
    }

    #[test]
    fn a_sample_beyond_the_standards_is_refused_by_how_much() {
        let c = Catalogue::built_in();
        let text = FILE.replace("response: \"1.2000±0.0003\"", "response: \"1.5000±0.0003\"");
        let checked = Verification::parse(&text, "t").unwrap().check(&c, &no_records, &text, "t").unwrap();
        let e = verify(&checked).unwrap_err().to_string();
        assert!(e.contains("above the highest reference mixture (14%)"), "{e}");
        assert!(e.contains("by 1.00166%"), "{e}");
    }
}
