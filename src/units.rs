//! Physical quantities as a blender types them: `150bar`, `10 L`, `15C`, `2200psig`.
//!
//! Everything inside the program is SI (Pa, K, m³, mol, kg is not used: masses are in g
//! because that is what the scale shows). Parsing and printing happen here, at the edge.
//! Gauge units (`barg`, `psig`, `kPag`, `MPag`) are relative to an ambient pressure that
//! the caller supplies (default [`STANDARD_AMBIENT_PA`]).

use std::fmt;

/// Molar gas constant, J mol⁻¹ K⁻¹: N_A·k with the exact SI 2019 / CODATA 2018 values
/// (8.314462618 to the ten digits usually quoted).
pub const R: f64 = 8.314_462_618_153_24;

/// Standard atmosphere, Pa (exact by definition).
pub const STANDARD_AMBIENT_PA: f64 = 101_325.0;

/// Reference temperature for working pressures and gas volumes, K (15 °C, ISO 13443).
pub const REFERENCE_TEMPERATURE_K: f64 = 288.15;

/// Pascal per bar.
pub const PA_PER_BAR: f64 = 1.0e5;

/// Pascal per psi (1 lbf/in², exact from the international pound and inch).
pub const PA_PER_PSI: f64 = 6_894.757_293_168_361;

/// A quantity that could not be read, with the text and what would have been accepted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{what} {text:?}: {problem}; accepted: {accepted}")]
pub struct QuantityError {
    /// Which quantity was being read ("pressure", "volume", …).
    pub what: &'static str,
    /// The text as typed.
    pub text: String,
    /// What is wrong with it.
    pub problem: String,
    /// The forms that would have been accepted.
    pub accepted: &'static str,
}

/// Units accepted for each kind of quantity, for messages and `--help`.
pub const PRESSURE_UNITS: &str =
    "a number with bar, mbar, hPa, kPa, MPa, Pa, psi, atm (absolute) or barg, mbarg, kPag, \
     MPag, psig (gauge), SI prefixes in SI case, e.g. 150bar";
pub const TEMPERATURE_UNITS: &str = "a number with C, K or F, e.g. 15C, 288.15K, 59F";
pub const VOLUME_UNITS: &str = "a number with L, mL, m3 or dm3, e.g. 10L, 0.05m3";
pub const AMOUNT_UNITS: &str = "a number with mol, mmol or kmol (amount) or g, kg (mass), e.g. 12mol, 500g";
/// Units accepted where only a mass makes sense (a tare, a scale reading or resolution).
pub const MASS_UNITS: &str = "a number with g, kg or mg, e.g. 13412.5g or 13.4kg";

/// Parse a mass; returns g. An amount in mol is refused: a scale reads mass.
pub fn parse_mass(text: &str) -> Result<f64, QuantityError> {
    match parse_amount(text) {
        Ok(AmountInput::Grams(g)) => Ok(g),
        Ok(AmountInput::Moles(_)) => Err(error("mass", text, "is an amount, not a mass", MASS_UNITS)),
        Err(e) => Err(QuantityError { what: "mass", accepted: MASS_UNITS, ..e }),
    }
}

/// Split "150 bar" / "150bar" / "-5.5e1C" into the number and the unit text.
fn split_number(text: &str) -> Option<(f64, &str)> {
    let t = text.trim();
    let bytes = t.as_bytes();
    let mut end = 0;
    let mut seen_digit = false;
    let mut seen_e = false;
    while end < bytes.len() {
        let c = bytes[end] as char;
        let ok = match c {
            '0'..='9' => {
                seen_digit = true;
                true
            }
            '+' | '-' => end == 0 || matches!(bytes[end - 1] as char, 'e' | 'E'),
            '.' => !seen_e,
            'e' | 'E' if seen_digit && !seen_e => {
                // Only an exponent when a digit (or sign and digit) follows.
                let rest = &t[end + 1..];
                let rest = rest.strip_prefix(['+', '-']).unwrap_or(rest);
                if rest.starts_with(|c: char| c.is_ascii_digit()) {
                    seen_e = true;
                    true
                } else {
                    false
                }
            }
            _ => false,
        };
        if !ok {
            break;
        }
        end += 1;
    }
    if !seen_digit {
        return None;
    }
    let value: f64 = t[..end].parse().ok()?;
    Some((value, t[end..].trim()))
}

fn error(what: &'static str, text: &str, problem: impl Into<String>, accepted: &'static str) -> QuantityError {
    QuantityError { what, text: text.to_string(), problem: problem.into(), accepted }
}

/// Refuse a value outside the range the program computes in (a mistyped exponent, most
/// likely), naming the range.
fn within(
    what: &'static str,
    text: &str,
    value: f64,
    (low, high): (f64, f64),
    range: &str,
    accepted: &'static str,
) -> Result<(), QuantityError> {
    if (low..=high).contains(&value) {
        Ok(())
    } else {
        Err(error(what, text, format!("is outside the range this program works in ({range})"), accepted))
    }
}

fn number_and_unit<'a>(
    what: &'static str,
    text: &'a str,
    accepted: &'static str,
) -> Result<(f64, &'a str), QuantityError> {
    let (value, unit) =
        split_number(text).ok_or_else(|| error(what, text, "does not start with a number", accepted))?;
    if !value.is_finite() {
        return Err(error(what, text, "the number is not finite", accepted));
    }
    if unit.is_empty() {
        return Err(error(what, text, "has no unit", accepted));
    }
    // `14681,05g`: a decimal comma, not a unit.
    if unit.starts_with(',') && unit[1..].starts_with(|c: char| c.is_ascii_digit()) {
        return Err(error(what, text, "has a decimal comma: write the decimal point (14681.05)", accepted));
    }
    Ok((value, unit))
}

/// Parse an absolute or gauge pressure; returns absolute pressure in Pa.
pub fn parse_pressure(text: &str, ambient_pa: f64) -> Result<f64, QuantityError> {
    let what = "pressure";
    let (value, unit) = number_and_unit(what, text, PRESSURE_UNITS)?;
    let (factor, gauge) = pressure_unit(unit).map_err(|problem| error(what, text, problem, PRESSURE_UNITS))?;
    let pa = value * factor + if gauge { ambient_pa } else { 0.0 };
    if pa <= 0.0 {
        return Err(error(what, text, "the absolute pressure must be above zero", PRESSURE_UNITS));
    }
    within(what, text, pa, (1.0, 1.0e9), "1 Pa to 10000 bar", PRESSURE_UNITS)?;
    Ok(pa)
}

/// Pa per unit and whether the unit is gauge. The base symbol (bar, Pa, psi, atm) may be
/// typed in any case, but an SI prefix is read as SI writes it (m milli, M mega, k kilo,
/// h hecto): `15mPa` is 15 millipascal, never 15 MPa, and a prefix whose case is unclear
/// (`Kpa`) is refused rather than guessed.
fn pressure_unit(unit: &str) -> Result<(f64, bool), String> {
    let base = |symbol: &str| -> Option<(f64, bool)> {
        Some(match symbol.to_ascii_lowercase().as_str() {
            "bar" | "bara" => (PA_PER_BAR, false),
            "barg" => (PA_PER_BAR, true),
            "pa" | "paa" => (1.0, false),
            "pag" => (1.0, true),
            "psi" | "psia" => (PA_PER_PSI, false),
            "psig" => (PA_PER_PSI, true),
            "atm" => (STANDARD_AMBIENT_PA, false),
            _ => return None,
        })
    };
    if let Some(found) = base(unit) {
        return Ok(found);
    }
    let mut chars = unit.chars();
    let prefix = chars.next().unwrap_or(' ');
    let rest = chars.as_str();
    let Some((factor, gauge)) = base(rest) else {
        return Err(format!("unknown unit {unit:?}"));
    };
    let scale = match prefix {
        'k' => 1.0e3,
        'M' => 1.0e6,
        'h' => 1.0e2,
        'm' => 1.0e-3,
        'G' => 1.0e9,
        'K' | 'H' => {
            return Err(format!("{unit:?}: the prefix {prefix:?} is not an SI prefix (kilo is k, hecto is h)"));
        }
        _ => return Err(format!("unknown unit {unit:?}")),
    };
    let bar_or_pa = rest.to_ascii_lowercase().starts_with("bar") || rest.to_ascii_lowercase().starts_with("pa");
    if !bar_or_pa {
        return Err(format!("unknown unit {unit:?} (prefixes go with bar and Pa only)"));
    }
    // Prefixes a blender never means and that sit outside the working range are refused
    // with what was probably meant: megabar for millibar, millipascal for megapascal.
    let pa = scale * factor;
    if pa == 1.0e11 {
        return Err(format!(
            "{unit:?} is megabar (SI prefixes are case-sensitive: M mega, m milli); for millibar write mbar"
        ));
    }
    if pa == 1.0e-3 {
        return Err(format!(
            "{unit:?} is millipascal (SI prefixes are case-sensitive: m milli, M mega); for megapascal write MPa"
        ));
    }
    Ok((pa, gauge))
}

/// Parse a temperature; returns K.
pub fn parse_temperature(text: &str) -> Result<f64, QuantityError> {
    let what = "temperature";
    let (value, unit) = number_and_unit(what, text, TEMPERATURE_UNITS)?;
    let kelvin = match unit {
        "C" | "c" | "°C" | "degC" => value + 273.15,
        "K" | "k" => value,
        "F" | "f" | "°F" | "degF" => (value - 32.0) * 5.0 / 9.0 + 273.15,
        _ => return Err(error(what, text, format!("unknown unit {unit:?}"), TEMPERATURE_UNITS)),
    };
    if kelvin <= 0.0 {
        return Err(error(what, text, "is at or below absolute zero", TEMPERATURE_UNITS));
    }
    within(what, text, kelvin, (1.0, 2000.0), "1 K to 2000 K", TEMPERATURE_UNITS)?;
    Ok(kelvin)
}

/// Parse a volume; returns m³.
pub fn parse_volume(text: &str) -> Result<f64, QuantityError> {
    let what = "volume";
    let (value, unit) = number_and_unit(what, text, VOLUME_UNITS)?;
    let factor = match unit {
        "L" | "l" | "dm3" => 1.0e-3,
        "mL" | "ml" => 1.0e-6,
        "m3" => 1.0,
        _ => return Err(error(what, text, format!("unknown unit {unit:?}"), VOLUME_UNITS)),
    };
    if value <= 0.0 {
        return Err(error(what, text, "must be above zero", VOLUME_UNITS));
    }
    within(what, text, value * factor, (1.0e-9, 1.0e3), "0.001 mL to 1000 m3", VOLUME_UNITS)?;
    Ok(value * factor)
}

/// An amount of gas as typed: either moles or a mass that the caller converts with the
/// mixture's molar mass.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AmountInput {
    /// Amount of substance, mol.
    Moles(f64),
    /// Mass, g.
    Grams(f64),
}

/// A count with its noun, singular or plural: `count(1, "weighing")` is "1 weighing",
/// `count(3, "addition")` "3 additions".
pub fn count(n: usize, noun: &str) -> String {
    if n == 1 {
        format!("1 {noun}")
    } else {
        format!("{n} {noun}s")
    }
}

/// A mass as written (`13412.00g`, `13.4kg`), in grams; None for anything else.
pub fn grams(text: &str) -> Option<f64> {
    match parse_amount(text) {
        Ok(AmountInput::Grams(g)) => Some(g),
        _ => None,
    }
}

/// Parse an amount (`12mol`) or a mass (`500g`, `0.5kg`).
pub fn parse_amount(text: &str) -> Result<AmountInput, QuantityError> {
    let what = "amount";
    let (value, unit) = number_and_unit(what, text, AMOUNT_UNITS)?;
    let amount = match unit {
        "mol" => AmountInput::Moles(value),
        "mmol" => AmountInput::Moles(value * 1.0e-3),
        "kmol" => AmountInput::Moles(value * 1.0e3),
        "g" => AmountInput::Grams(value),
        "kg" => AmountInput::Grams(value * 1.0e3),
        "mg" => AmountInput::Grams(value * 1.0e-3),
        _ => return Err(error(what, text, format!("unknown unit {unit:?}"), AMOUNT_UNITS)),
    };
    if value <= 0.0 {
        return Err(error(what, text, "must be above zero", AMOUNT_UNITS));
    }
    match amount {
        AmountInput::Moles(n) => within(what, text, n, (1.0e-12, 1.0e9), "1e-12 mol to 1e9 mol", AMOUNT_UNITS)?,
        AmountInput::Grams(g) => within(what, text, g, (1.0e-9, 1.0e12), "1e-9 g to 1e12 g", AMOUNT_UNITS)?,
    }
    Ok(amount)
}

/// A signed number with `decimals` decimals, never "-0.00": a value that rounds to zero
/// is shown as +0.00.
pub fn signed(v: f64, decimals: usize) -> String {
    let shown = format!("{v:+.decimals$}");
    if shown.starts_with('-') && shown[1..].chars().all(|c| c == '0' || c == '.') {
        format!("{:+.decimals$}", 0.0)
    } else {
        shown
    }
}

/// Pressure in bar from Pa.
pub fn bar(pa: f64) -> f64 {
    pa / PA_PER_BAR
}

/// Litres from m³.
pub fn litres(m3: f64) -> f64 {
    m3 * 1.0e3
}

/// Degrees Celsius from K.
pub fn celsius(k: f64) -> f64 {
    k - 273.15
}

/// A number printed with a fixed count of significant digits and no exponent for the
/// magnitudes a blender meets (1e-4 … 1e6), for text output.
pub struct Sig(pub f64, pub usize);

impl fmt::Display for Sig {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let Sig(x, digits) = *self;
        let text = if x == 0.0 || !x.is_finite() {
            format!("{x}")
        } else {
            let magnitude = x.abs().log10().floor() as i32;
            let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
            format!("{x:.decimals$}")
        };
        // `pad` so that width and alignment in the caller's format string apply.
        f.pad(&text)
    }
}

/// A table cell of at most `width` characters with a space before it: `digits` significant
/// digits where they fit, else scientific notation, so that columns never run together.
pub fn cell(x: f64, digits: usize, width: usize) -> String {
    let plain = Sig(x, digits).to_string();
    let text = if plain.chars().count() < width || !x.is_finite() || x == 0.0 {
        plain
    } else {
        format!("{:.*e}", digits.saturating_sub(3).max(1), x)
    };
    format!(" {text:>w$}", w = width - 1)
}

/// A mole fraction as a person writes it: ppm below 0.1 %, % above, six significant digits
/// at most, no floating-point noise (1e-5 is `10ppm`, not `0.000009999999999999999`).
pub fn fraction_text(x: f64) -> String {
    let trimmed = |v: f64| {
        let s = format!("{}", Sig(v, 6));
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    };
    if x == 1.0 {
        "100%".into()
    } else if x < 1e-3 {
        format!("{}ppm", trimmed(x * 1e6))
    } else {
        format!("{}%", trimmed(x * 100.0))
    }
}

/// The pressure unit of the text outputs and the screen (JSON stays in bar, INTERFACE.md).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum PressureUnit {
    #[serde(rename = "bar")]
    Bar,
    #[serde(rename = "psi")]
    Psi,
    #[serde(rename = "MPa")]
    MPa,
    #[serde(rename = "kPa")]
    KPa,
}

/// The temperature unit of the text outputs and the screen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum TemperatureUnit {
    C,
    K,
    F,
}

/// How figures are shown to people: the units of the settings file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shown {
    pub pressure: PressureUnit,
    pub temperature: TemperatureUnit,
}

impl Default for Shown {
    fn default() -> Self {
        Shown { pressure: PressureUnit::Bar, temperature: TemperatureUnit::C }
    }
}

impl Shown {
    /// A pressure in the shown unit, from Pa.
    pub fn p(&self, pa: f64) -> f64 {
        match self.pressure {
            PressureUnit::Bar => pa / PA_PER_BAR,
            PressureUnit::Psi => pa / PA_PER_PSI,
            PressureUnit::MPa => pa / 1.0e6,
            PressureUnit::KPa => pa / 1.0e3,
        }
    }

    /// The pressure unit's symbol.
    pub fn pu(&self) -> &'static str {
        match self.pressure {
            PressureUnit::Bar => "bar",
            PressureUnit::Psi => "psi",
            PressureUnit::MPa => "MPa",
            PressureUnit::KPa => "kPa",
        }
    }

    /// Decimals that show a pressure to about 1 mbar.
    pub fn pd(&self) -> usize {
        match self.pressure {
            PressureUnit::Bar => 3,
            PressureUnit::Psi => 2,
            PressureUnit::MPa => 4,
            PressureUnit::KPa => 1,
        }
    }

    /// A pressure with its decimals, without the unit.
    pub fn pf(&self, pa: f64) -> String {
        format!("{:.*}", self.pd(), self.p(pa))
    }

    /// A temperature in the shown unit, from K.
    pub fn t(&self, k: f64) -> f64 {
        match self.temperature {
            TemperatureUnit::C => k - 273.15,
            TemperatureUnit::K => k,
            TemperatureUnit::F => (k - 273.15) * 9.0 / 5.0 + 32.0,
        }
    }

    /// The temperature unit's symbol.
    pub fn tu(&self) -> &'static str {
        match self.temperature {
            TemperatureUnit::C => "°C",
            TemperatureUnit::K => "K",
            TemperatureUnit::F => "°F",
        }
    }

    /// A temperature to 0.1 with its unit, e.g. `22.0 °C`.
    pub fn tf(&self, k: f64) -> String {
        format!("{:.1} {}", self.t(k), self.tu())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_decimal_comma_is_named_as_such() {
        for e in
            [parse_mass("14681,05g").unwrap_err().to_string(), parse_pressure("150,5bar", 1e5).unwrap_err().to_string()]
        {
            assert!(e.contains("decimal comma") && e.contains("decimal point"), "{e}");
        }
    }

    #[test]
    fn pressures_in_every_accepted_unit() {
        let amb = STANDARD_AMBIENT_PA;
        assert_eq!(parse_pressure("150bar", amb).unwrap(), 150.0e5);
        assert_eq!(parse_pressure("150 bar", amb).unwrap(), 150.0e5);
        assert_eq!(parse_pressure("15MPa", amb).unwrap(), 15.0e6);
        assert_eq!(parse_pressure("101.325kPa", amb).unwrap(), 101_325.0);
        assert_eq!(parse_pressure("1atm", amb).unwrap(), 101_325.0);
        // 1 psi = 6894.757293168 Pa (NIST SP 811, appendix B.8).
        assert!((parse_pressure("2200psi", amb).unwrap() - 2200.0 * 6_894.757_293_168).abs() < 1e-3);
        assert_eq!(parse_pressure("0barg", amb).unwrap(), amb);
        assert_eq!(parse_pressure("10barg", 0.95e5).unwrap(), 10.95e5);
        assert!((parse_pressure("100kPag", amb).unwrap() - 201_325.0).abs() < 1e-9);
        assert_eq!(parse_pressure("1013.25hPa", amb).unwrap(), 101_325.0);
        assert_eq!(parse_pressure("500mbar", amb).unwrap(), 50_000.0);
        assert_eq!(parse_pressure("150BAR", amb).unwrap(), 150.0e5);
        assert_eq!(parse_pressure("2200PSIG", amb).unwrap(), 2200.0 * PA_PER_PSI + amb);
    }

    #[test]
    fn prefixes_are_read_in_si_case_and_the_unclear_ones_refused() {
        let amb = STANDARD_AMBIENT_PA;
        // 15 mPa is 15 millipascal, never 15 MPa (150 bar); it is refused with the hint.
        let e = parse_pressure("15mPa", amb).unwrap_err();
        assert!(e.problem.contains("millipascal") && e.problem.contains("MPa"), "{e}");
        // 1500 Mbar is megabar, never 1.5 bar.
        let e = parse_pressure("1500Mbar", amb).unwrap_err();
        assert!(e.problem.contains("megabar") && e.problem.contains("mbar"), "{e}");
        // A prefix in the wrong case is not guessed.
        for typed in ["100KPa", "10Kpa", "5MBAR", "1mpag", "3Hpa", "1kpsi", "2matm"] {
            let e = parse_pressure(typed, amb).unwrap_err();
            assert!(e.to_string().contains("accepted"), "{typed}: {e}");
            assert_ne!(parse_pressure(typed, amb).ok(), Some(0.0));
        }
        assert_eq!(parse_pressure("0.1GPa", amb).unwrap(), 1.0e8);
    }

    #[test]
    fn signed_numbers_have_no_negative_zero() {
        assert_eq!(signed(-0.0001, 3), "+0.000");
        assert_eq!(signed(-0.0, 2), "+0.00");
        assert_eq!(signed(-0.006, 2), "-0.01");
        assert_eq!(signed(0.004, 2), "+0.00");
        assert_eq!(signed(1.5, 1), "+1.5");
    }

    #[test]
    fn temperatures() {
        assert!((parse_temperature("15C").unwrap() - 288.15).abs() < 1e-12);
        assert_eq!(parse_temperature("288.15K").unwrap(), 288.15);
        assert!((parse_temperature("59F").unwrap() - 288.15).abs() < 1e-12);
        assert!((parse_temperature("-40C").unwrap() - 233.15).abs() < 1e-12);
        assert!((parse_temperature("-40F").unwrap() - 233.15).abs() < 1e-12);
    }

    #[test]
    fn volumes_and_amounts() {
        assert_eq!(parse_volume("10L").unwrap(), 0.01);
        assert_eq!(parse_volume("0.05m3").unwrap(), 0.05);
        assert_eq!(parse_amount("1mol").unwrap(), AmountInput::Moles(1.0));
        assert_eq!(parse_amount("32g").unwrap(), AmountInput::Grams(32.0));
        assert_eq!(parse_amount("0.5kg").unwrap(), AmountInput::Grams(500.0));
    }

    #[test]
    fn masses_offer_mass_units_only() {
        assert_eq!(parse_mass("13.4kg").unwrap(), 13400.0);
        let e = parse_mass("12mol").unwrap_err();
        assert!(e.to_string().contains("not a mass") && !e.accepted.contains("mol"), "{e}");
        let e = parse_mass("12 stone").unwrap_err();
        assert_eq!(e.accepted, MASS_UNITS);
        assert!(!e.to_string().contains("mol"), "{e}");
    }

    #[test]
    fn cells_keep_a_space_and_fractions_read_as_typed() {
        for x in [0.0015, 0.0014809, 150.0, 3.6845, 12345.678, 1e-7] {
            let c = cell(x, 5, 9);
            assert_eq!(c.chars().count(), 9, "{c:?}");
            assert!(c.starts_with(' '), "{c:?}");
        }
        assert_eq!(fraction_text(0.000009999999999999999), "10ppm");
        assert_eq!(fraction_text(0.000049999999999999996), "50ppm");
        assert_eq!(fraction_text(0.025), "2.5%");
        assert_eq!(fraction_text(0.97494), "97.494%");
        assert_eq!(fraction_text(1.0), "100%");
    }

    #[test]
    fn values_outside_the_working_range_are_refused_naming_it() {
        for (text, e) in [
            ("1e-300bar", parse_pressure("1e-300bar", 1e5).unwrap_err()),
            ("1e300bar", parse_pressure("1e300bar", 1e5).unwrap_err()),
            ("1e300K", parse_temperature("1e300K").unwrap_err()),
            ("1e308L", parse_volume("1e308L").unwrap_err()),
            ("1e-320L", parse_volume("1e-320L").unwrap_err()),
            ("1e300g", parse_amount("1e300g").map(|_| ()).unwrap_err()),
        ] {
            assert!(e.problem.contains("outside the range"), "{text}: {}", e.problem);
            assert_eq!(e.text, text);
        }
        // The ends of the range are inside it.
        assert_eq!(parse_pressure("10000bar", 1e5).unwrap(), 1.0e9);
        assert!(parse_volume("0.44L").is_ok() && parse_temperature("-40C").is_ok());
    }

    #[test]
    fn numbers_without_units_are_refused_with_the_accepted_units() {
        let e = parse_pressure("150", STANDARD_AMBIENT_PA).unwrap_err();
        assert!(e.to_string().contains("has no unit"), "{e}");
        assert!(e.to_string().contains("barg"), "{e}");
        let e = parse_volume("10").unwrap_err();
        assert!(e.to_string().contains("10L"), "{e}");
    }

    #[test]
    fn malformed_quantities_are_refused() {
        for bad in ["", "bar", "1e", "nanbar", "infbar", "1.2.3bar", "--5bar", "5 furlongs", "-1bar", "0bar"] {
            assert!(parse_pressure(bad, STANDARD_AMBIENT_PA).is_err(), "{bad:?} accepted");
        }
        assert!(parse_temperature("-300C").is_err());
        assert!(parse_temperature("0K").is_err());
        assert!(parse_volume("-1L").is_err());
        assert!(parse_amount("0mol").is_err());
        assert!(parse_pressure("1e400bar", STANDARD_AMBIENT_PA).is_err());
    }

    #[test]
    fn exponent_forms() {
        assert_eq!(parse_pressure("1.5e2bar", STANDARD_AMBIENT_PA).unwrap(), 150.0e5);
        assert_eq!(parse_volume("1e1L").unwrap(), 0.01);
    }

    #[test]
    fn shown_units_convert_from_si() {
        let psi = Shown { pressure: PressureUnit::Psi, temperature: TemperatureUnit::F };
        // 150 bar = 2175.57 psi; 288.15 K = 59 °F (NIST SP 811 factors).
        assert!((psi.p(150.0e5) - 2175.566).abs() < 1e-3);
        assert!((psi.t(288.15) - 59.0).abs() < 1e-12);
        assert_eq!(Shown::default().pf(150.0e5), "150.000");
        assert_eq!(Shown::default().tf(295.15), "22.0 °C");
    }

    #[test]
    fn significant_digits() {
        assert_eq!(Sig(1.04812, 4).to_string(), "1.048");
        assert_eq!(Sig(150.123, 4).to_string(), "150.1");
        assert_eq!(Sig(0.0012345, 3).to_string(), "0.00123");
        assert_eq!(format!("{:>8}", Sig(1.5, 2)), "     1.5");
    }
}
