//! Mixture compositions as a blender writes them: `CO=500ppm,CH4=2.5%,N2=balance`.

use std::fmt;

use serde::{Deserialize, Serialize};

use crate::gas::{Catalogue, UnknownGas};

/// The unit an amount-of-substance fraction was written in. Kept so that a recipe shows
/// `500 ppm` again, not `0.0005`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum FractionUnit {
    /// Bare mole fraction.
    Fraction,
    /// mol %.
    Percent,
    /// µmol/mol.
    Ppm,
    /// nmol/mol.
    Ppb,
}

impl FractionUnit {
    /// Mole fraction per unit.
    pub fn scale(self) -> f64 {
        match self {
            FractionUnit::Fraction => 1.0,
            FractionUnit::Percent => 1.0e-2,
            FractionUnit::Ppm => 1.0e-6,
            FractionUnit::Ppb => 1.0e-9,
        }
    }

    /// Suffix as typed.
    pub fn suffix(self) -> &'static str {
        match self {
            FractionUnit::Fraction => "",
            FractionUnit::Percent => "%",
            FractionUnit::Ppm => "ppm",
            FractionUnit::Ppb => "ppb",
        }
    }
}

/// The amount of one component as written.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Share {
    /// A value in a unit (`2.5 %`).
    Of { value: f64, unit: FractionUnit },
    /// Whatever remains.
    Balance,
}

impl Share {
    /// The mole fraction, for a non-balance share.
    pub fn fraction(&self) -> Option<f64> {
        match *self {
            Share::Of { value, unit } => Some(value * unit.scale()),
            Share::Balance => None,
        }
    }
}

impl fmt::Display for Share {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Share::Of { value, unit } => write!(f, "{value}{}", unit.suffix()),
            Share::Balance => write!(f, "balance"),
        }
    }
}

/// A mixture that could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MixError {
    #[error("mixture is empty; give components like \"CO2=15%,N2=balance\" or one pure gas like \"N2\"")]
    Empty,
    #[error("component {0:?} has no amount; write it as GAS=AMOUNT (ppb, ppm, %, a fraction, or balance)")]
    MissingAmount(String),
    #[error("component {0} of {1:?} is empty (two commas, or a comma at an end); write GAS=AMOUNT between commas")]
    EmptyComponent(usize, String),
    #[error("{0}")]
    UnknownGas(#[from] UnknownGas),
    #[error("amount {text:?} of {gas}: {problem}; accepted: a number with ppb, ppm or %, a bare mole fraction like 0.025, or balance")]
    BadAmount { gas: String, text: String, problem: String },
    #[error("{0} is listed twice")]
    Duplicate(String),
    #[error("two balance gases ({0} and {1}); exactly one component may be balance")]
    TwoBalances(String, String),
    #[error(
        "the amounts add up to {sum_percent} %, not 100 %; add a balance gas (e.g. N2=balance) or correct the amounts"
    )]
    DoesNotSumToOne { sum_percent: f64 },
    #[error(
        "the amounts other than the balance gas {balance} already add up to {sum_percent} %; nothing is left for it"
    )]
    NoRoomForBalance { balance: String, sum_percent: f64 },
}

/// One component of a written mixture.
#[derive(Debug, Clone, PartialEq)]
pub struct Part {
    /// Index into the catalogue.
    pub gas: usize,
    /// The amount as written.
    pub share: Share,
}

/// The comma-separated components of a spec, trimmed; an empty one (`N2=balance,`) is
/// refused, never skipped.
pub fn components(spec: &str) -> Result<Vec<&str>, MixError> {
    if spec.trim().is_empty() {
        return Err(MixError::Empty);
    }
    let items: Vec<&str> = spec.split(',').map(str::trim).collect();
    if let Some(k) = items.iter().position(|s| s.is_empty()) {
        return Err(MixError::EmptyComponent(k + 1, spec.to_string()));
    }
    Ok(items)
}

/// Parse a mixture spec. Components keep the order written.
pub fn parse_spec(spec: &str, catalogue: &Catalogue) -> Result<Vec<Part>, MixError> {
    let items = components(spec)?;
    if items.len() == 1 && !items[0].contains('=') {
        let gas = catalogue.find(items[0])?;
        return Ok(vec![Part { gas, share: Share::Balance }]);
    }
    let mut parts: Vec<Part> = Vec::with_capacity(items.len());
    for item in items {
        let (name, amount) = item.split_once('=').ok_or_else(|| MixError::MissingAmount(item.to_string()))?;
        let gas = catalogue.find(name)?;
        let id = catalogue.gas(gas).id().to_string();
        if parts.iter().any(|p| p.gas == gas) {
            return Err(MixError::Duplicate(id));
        }
        let share = parse_share(amount).map_err(|problem| MixError::BadAmount {
            gas: id.clone(),
            text: amount.trim().to_string(),
            problem,
        })?;
        parts.push(Part { gas, share });
    }
    check_parts(&parts, catalogue)?;
    Ok(parts)
}

/// Parse one amount: `500ppm`, `2.5%`, `0.025`, `balance`.
pub fn parse_share(text: &str) -> Result<Share, String> {
    let t = text.trim();
    if t.eq_ignore_ascii_case("balance") || t.eq_ignore_ascii_case("bal") {
        return Ok(Share::Balance);
    }
    if t.is_empty() {
        return Err("is empty: type an amount, e.g. 400ppm, 2.5%, 0.025 or balance".into());
    }
    let (number, unit) = if let Some(n) = t.strip_suffix('%') {
        (n, FractionUnit::Percent)
    } else if let Some(n) = strip_suffix_ci(t, "ppm") {
        (n, FractionUnit::Ppm)
    } else if let Some(n) = strip_suffix_ci(t, "ppb") {
        (n, FractionUnit::Ppb)
    } else {
        (t, FractionUnit::Fraction)
    };
    let value: f64 = number.trim().parse().map_err(|_| {
        // A number followed by something else: the unit is the problem, not the number.
        let lead: String =
            t.chars().take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E')).collect();
        if !lead.is_empty() && lead.parse::<f64>().is_ok() {
            format!("has the unit {:?}, which is not one of ppb, ppm or %", t[lead.len()..].trim())
        } else {
            "is not a number".to_string()
        }
    })?;
    if !value.is_finite() {
        return Err("is not a finite number".into());
    }
    if value <= 0.0 {
        return Err("must be above zero".into());
    }
    if value * unit.scale() > 1.0 + 1e-12 {
        return Err("is above 100 %".into());
    }
    Ok(Share::Of { value, unit })
}

fn strip_suffix_ci<'a>(t: &'a str, suffix: &str) -> Option<&'a str> {
    let n = t.len().checked_sub(suffix.len())?;
    (t.is_char_boundary(n) && t[n..].eq_ignore_ascii_case(suffix)).then(|| &t[..n])
}

/// Check balance count and sum of a written mixture.
pub fn check_parts(parts: &[Part], catalogue: &Catalogue) -> Result<(), MixError> {
    let balances: Vec<&Part> = parts.iter().filter(|p| p.share == Share::Balance).collect();
    if balances.len() > 1 {
        return Err(MixError::TwoBalances(
            catalogue.gas(balances[0].gas).id().into(),
            catalogue.gas(balances[1].gas).id().into(),
        ));
    }
    let sum: f64 = parts.iter().filter_map(|p| p.share.fraction()).sum();
    match balances.first() {
        None if (sum - 1.0).abs() > 1e-9 => Err(MixError::DoesNotSumToOne { sum_percent: round_percent(sum) }),
        Some(b) if sum >= 1.0 => Err(MixError::NoRoomForBalance {
            balance: catalogue.gas(b.gas).id().into(),
            sum_percent: round_percent(sum),
        }),
        _ => Ok(()),
    }
}

fn round_percent(x: f64) -> f64 {
    (x * 1.0e8).round() / 1.0e6
}

/// Mole fractions of checked parts, in the parts' order; they sum to 1.
pub fn mole_fractions(parts: &[Part]) -> Vec<f64> {
    let sum: f64 = parts.iter().filter_map(|p| p.share.fraction()).sum();
    let has_balance = parts.iter().any(|p| p.share == Share::Balance);
    parts
        .iter()
        .map(|p| match p.share.fraction() {
            Some(x) if has_balance => x,
            Some(x) => x / sum,
            None => 1.0 - sum,
        })
        .collect()
}

/// A resolved composition: gases (catalogue indices) and mole fractions summing to 1.
#[derive(Debug, Clone, PartialEq)]
pub struct Composition {
    pub gases: Vec<usize>,
    pub fractions: Vec<f64>,
}

impl Composition {
    /// Parse and resolve a spec.
    pub fn from_spec(spec: &str, catalogue: &Catalogue) -> Result<Composition, MixError> {
        let parts = parse_spec(spec, catalogue)?;
        Ok(Composition::from_parts(&parts))
    }

    /// Resolve checked parts.
    pub fn from_parts(parts: &[Part]) -> Composition {
        Composition { gases: parts.iter().map(|p| p.gas).collect(), fractions: mole_fractions(parts) }
    }

    /// Mean molar mass, g/mol.
    pub fn molar_mass(&self, catalogue: &Catalogue) -> f64 {
        self.gases.iter().zip(&self.fractions).map(|(&g, x)| x * catalogue.gas(g).molar_mass_g_per_mol).sum()
    }

    /// The spec in canonical ids, e.g. `CO2=0.15,N2=0.85`.
    pub fn describe(&self, catalogue: &Catalogue) -> String {
        if self.gases.len() == 1 {
            return catalogue.gas(self.gases[0]).id().to_string();
        }
        self.gases
            .iter()
            .zip(&self.fractions)
            .map(|(&g, x)| format!("{}={}", catalogue.gas(g).id(), crate::units::fraction_text(*x)))
            .collect::<Vec<_>>()
            .join(",")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_wrong_unit_is_named_as_the_problem() {
        let e = parse_share("2.5 % mol").unwrap_err();
        assert!(e.contains("unit \"% mol\""), "{e}");
        assert_eq!(parse_share("abc").unwrap_err(), "is not a number");
    }

    fn cat() -> Catalogue {
        Catalogue::built_in()
    }

    #[test]
    fn the_order_example_resolves() {
        let c = cat();
        let m = Composition::from_spec("CO=500ppm,CH4=2.5%,CO2=15%,N2=balance", &c).unwrap();
        assert_eq!(m.gases.len(), 4);
        assert!((m.fractions[0] - 5.0e-4).abs() < 1e-18);
        assert!((m.fractions[1] - 0.025).abs() < 1e-17);
        assert!((m.fractions[3] - (1.0 - 0.15 - 0.025 - 5.0e-4)).abs() < 1e-15);
        assert!((m.fractions.iter().sum::<f64>() - 1.0).abs() < 1e-15);
    }

    #[test]
    fn pure_gas_and_bare_fractions() {
        let c = cat();
        let m = Composition::from_spec("nitrogen", &c).unwrap();
        assert_eq!(m.fractions, vec![1.0]);
        let m = Composition::from_spec("CO2=0.2,N2=0.8", &c).unwrap();
        assert_eq!(m.fractions, vec![0.2, 0.8]);
        let m = Composition::from_spec("SO2=250ppb,N2=balance", &c).unwrap();
        assert!((m.fractions[0] - 2.5e-7).abs() < 1e-20);
    }

    #[test]
    fn refusals_name_the_offending_text() {
        let c = cat();
        let cases = [
            ("", "empty"),
            ("CO2=15%,N2", "no amount"),
            ("CO2=15%,Q9=balance", "unknown gas \"Q9\""),
            ("CO2=15,N2=balance", "above 100 %"),
            ("CO2=-1%,N2=balance", "above zero"),
            ("CO2=abc%,N2=balance", "\"abc%\""),
            ("CO2=15%,CO2=1%,N2=balance", "listed twice"),
            ("CO2=15%,N2=balance,Ar=balance", "two balance gases"),
            ("CO2=15%,N2=80%", "add up to 95 %"),
            ("CO2=60%,O2=40%,N2=balance", "nothing is left"),
            ("CO2=NaN%,N2=balance", "not"),
        ];
        for (spec, needle) in cases {
            let e = Composition::from_spec(spec, &c).unwrap_err().to_string();
            assert!(e.contains(needle), "{spec:?}: {e}");
        }
    }

    #[test]
    fn sum_without_balance_is_checked_to_1e_9() {
        let c = cat();
        assert!(Composition::from_spec("CO2=0.3333333333,N2=0.6666666667", &c).is_ok());
        assert!(Composition::from_spec("CO2=0.333333,N2=0.666666", &c).is_err());
    }
}
