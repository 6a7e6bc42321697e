//! Source analyses: what a source cylinder holds, with the uncertainty of each amount.
//!
//! Written as a mix spec in which an amount may carry `±U` (a standard uncertainty, k = 1,
//! in the amount's unit or in `%rel`) or be `<L` (below the detection limit L). Following
//! ISO 19229 practice a value below the detection limit is taken as L/2 with a rectangular
//! distribution over [0, L], u = L/(2√3); the balance (main) component is 1 − Σ others and
//! so carries their uncertainties, negatively correlated with them.

use crate::gas::Catalogue;
use crate::mixture::{self, MixError, Share};

/// How the amount of one component of a source is known.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Assay {
    /// A measured mole fraction with its standard uncertainty (k = 1).
    Measured { value: f64, u: f64 },
    /// Below the detection limit, mole fraction.
    BelowLimit { limit: f64 },
    /// 1 − Σ others.
    Balance,
}

impl Assay {
    /// The estimate of the mole fraction (not for the balance).
    pub fn value(&self) -> f64 {
        match *self {
            Assay::Measured { value, .. } => value,
            Assay::BelowLimit { limit } => limit / 2.0,
            Assay::Balance => f64::NAN,
        }
    }

    /// Its standard uncertainty (not for the balance).
    pub fn u(&self) -> f64 {
        match *self {
            Assay::Measured { u, .. } => u,
            Assay::BelowLimit { limit } => limit / (2.0 * 3f64.sqrt()),
            Assay::Balance => f64::NAN,
        }
    }
}

/// One component of an analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    /// Catalogue index.
    pub gas: usize,
    pub assay: Assay,
}

/// A source's composition with uncertainties.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    pub lines: Vec<Line>,
}

impl Analysis {
    /// Parse `CO=1%±0.002%,N2=balance,O2=<2ppm`; a single gas alone (`N2`) is that pure gas
    /// with no impurity known.
    pub fn parse(spec: &str, catalogue: &Catalogue) -> Result<Analysis, MixError> {
        let items = mixture::components(spec)?;
        if items.len() == 1 && !items[0].contains('=') {
            let gas = catalogue.find(items[0])?;
            return Ok(Analysis { lines: vec![Line { gas, assay: Assay::Balance }] });
        }
        let mut lines: Vec<Line> = Vec::new();
        for item in items {
            let (name, amount) = item.split_once('=').ok_or_else(|| MixError::MissingAmount(item.to_string()))?;
            let gas = catalogue.find(name)?;
            let id = catalogue.gas(gas).id().to_string();
            if lines.iter().any(|l| l.gas == gas) {
                return Err(MixError::Duplicate(id));
            }
            let assay = parse_assay(amount).map_err(|problem| MixError::BadAmount {
                gas: id,
                text: amount.trim().to_string(),
                problem,
            })?;
            lines.push(Line { gas, assay });
        }
        let balances: Vec<&Line> = lines.iter().filter(|l| l.assay == Assay::Balance).collect();
        if balances.len() > 1 {
            return Err(MixError::TwoBalances(
                catalogue.gas(balances[0].gas).id().into(),
                catalogue.gas(balances[1].gas).id().into(),
            ));
        }
        let sum: f64 = lines.iter().filter(|l| l.assay != Assay::Balance).map(|l| l.assay.value()).sum();
        match balances.first() {
            None if (sum - 1.0).abs() > 1e-9 => {
                return Err(MixError::DoesNotSumToOne { sum_percent: (sum * 1e8).round() / 1e6 })
            }
            Some(b) if sum >= 1.0 => {
                return Err(MixError::NoRoomForBalance {
                    balance: catalogue.gas(b.gas).id().into(),
                    sum_percent: (sum * 1e8).round() / 1e6,
                })
            }
            _ => {}
        }
        Ok(Analysis { lines })
    }

    /// The estimated mole fractions, in the order of `lines`.
    pub fn fractions(&self) -> Vec<f64> {
        let others: f64 = self.lines.iter().filter(|l| l.assay != Assay::Balance).map(|l| l.assay.value()).sum();
        self.lines.iter().map(|l| if l.assay == Assay::Balance { 1.0 - others } else { l.assay.value() }).collect()
    }

    /// The main component: the balance, else the largest.
    pub fn main_gas(&self) -> usize {
        let x = self.fractions();
        let i = (0..x.len()).max_by(|&a, &b| x[a].total_cmp(&x[b])).unwrap_or(0);
        self.lines.iter().find(|l| l.assay == Assay::Balance).map_or(self.lines[i].gas, |l| l.gas)
    }
}

/// Parse one amount with its uncertainty: `1%±0.002%`, `5ppm+-1ppm`, `2%±0.5%rel`, `<10ppm`,
/// `balance`, or a plain amount (taken as exact: u = 0).
pub fn parse_assay(text: &str) -> Result<Assay, String> {
    let t = text.trim();
    if let Some(limit) = t.strip_prefix('<') {
        let share = mixture::parse_share(limit).map_err(|p| format!("detection limit {p}"))?;
        let Some(limit) = share.fraction() else {
            return Err("a detection limit must be an amount such as <10ppm".into());
        };
        return Ok(Assay::BelowLimit { limit });
    }
    let (value_text, u_text) = match t.split_once('±').or_else(|| t.split_once("+-")) {
        Some((v, u)) => (v.trim(), Some(u.trim())),
        None => (t, None),
    };
    let share = mixture::parse_share(value_text)?;
    let (value, unit) = match share {
        Share::Balance if u_text.is_some() => {
            return Err("the balance gas is 1 − Σ others; its uncertainty follows from theirs".into())
        }
        Share::Balance => return Ok(Assay::Balance),
        Share::Of { value, unit } => (value, unit),
    };
    let x = value * unit.scale();
    let u = match u_text {
        None => 0.0,
        Some(u) => parse_uncertainty(u, x, unit)?,
    };
    Ok(Assay::Measured { value: x, u })
}

/// A standard uncertainty as written after `±`: in `%rel`, in a unit (`0.002%`, `1ppm`), or
/// a bare number in the unit of the amount.
fn parse_uncertainty(text: &str, x: f64, unit: mixture::FractionUnit) -> Result<f64, String> {
    let lower = text.to_ascii_lowercase();
    let u = if let Some(rel) = lower.strip_suffix("%rel").or_else(|| lower.strip_suffix("% rel")) {
        let r: f64 = rel.trim().parse().map_err(|_| format!("uncertainty {text:?} is not a number"))?;
        r / 100.0 * x
    } else if let Ok(bare) = text.parse::<f64>() {
        bare * unit.scale()
    } else {
        let (number, scale) = if let Some(n) = text.strip_suffix('%') {
            (n, 1e-2)
        } else if let Some(n) = lower.strip_suffix("ppm") {
            (n, 1e-6)
        } else if let Some(n) = lower.strip_suffix("ppb") {
            (n, 1e-9)
        } else {
            return Err(format!(
                "uncertainty {text:?} has no unit we know; write it like ±0.002%, ±1ppm, ±5ppb, ±0.5%rel or a bare \
                 number in the amount's unit"
            ));
        };
        let v: f64 = number.trim().parse().map_err(|_| format!("uncertainty {text:?} is not a number"))?;
        v * scale
    };
    if !u.is_finite() {
        return Err(format!("uncertainty {text:?} is not a finite number"));
    }
    if u < 0.0 {
        return Err(format!("uncertainty {text:?} is negative; a standard uncertainty is zero or more"));
    }
    Ok(u)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_issue_examples_read() {
        let c = Catalogue::built_in();
        let a = Analysis::parse("CO=1%±0.002%,N2=balance", &c).unwrap();
        assert_eq!(a.lines[0].assay, Assay::Measured { value: 0.01, u: 2e-5 });
        assert_eq!(a.lines[1].assay, Assay::Balance);
        let a = Analysis::parse("N2=balance,O2=<2ppm,Ar=5ppm±1ppm", &c).unwrap();
        // ISO 19229: below the detection limit L, L/2 with u = L/(2√3).
        assert!((a.lines[1].assay.value() - 1e-6).abs() < 1e-20);
        assert!((a.lines[1].assay.u() - 2e-6 / (2.0 * 3f64.sqrt())).abs() < 1e-20);
        assert!((a.fractions()[0] - (1.0 - 1e-6 - 5e-6)).abs() < 1e-15);
        let a = Analysis::parse("CO2=2%±0.5%rel,N2=balance", &c).unwrap();
        assert!((a.lines[0].assay.u() - 1e-4).abs() < 1e-18);
        let a = Analysis::parse("nitrogen", &c).unwrap();
        assert_eq!(a.fractions(), vec![1.0]);
    }

    #[test]
    fn refusals_say_what_is_wrong() {
        let c = Catalogue::built_in();
        for (spec, needle) in [
            ("CO=1%±-0.1%,N2=balance", "negative"),
            ("CO=1%±abc,N2=balance", "no unit"),
            ("CO=<abc,N2=balance", "detection limit"),
            ("N2=balance±1%", "follows from theirs"),
            ("XX=1%,N2=balance", "unknown gas"),
            ("CO=1%,CO=2%,N2=balance", "twice"),
            ("CO=60%,CO2=50%,N2=balance", "nothing is left"),
        ] {
            let e = Analysis::parse(spec, &c).unwrap_err().to_string();
            assert!(e.contains(needle), "{spec}: {e}");
        }
    }
}
