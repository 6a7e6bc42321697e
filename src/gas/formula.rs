//! Molar masses from chemical formulas and IUPAC standard atomic weights.

/// Standard atomic weights, g/mol: IUPAC/CIAAW 2021 conventional values for the elements
/// that have an interval (H, C, N, O, S, Cl), the single values for the others. Argon is
/// given for atmospheric argon, 39.948, the value every gas-property reference uses
/// (IUPAC's interval for Ar is [39.792, 39.963]).
const ATOMIC_WEIGHTS: &[(&str, f64)] = &[
    ("H", 1.008),
    ("He", 4.002_602),
    ("C", 12.011),
    ("N", 14.007),
    ("O", 15.999),
    ("F", 18.998_403_162),
    ("Ne", 20.1797),
    ("S", 32.06),
    ("Cl", 35.45),
    ("Ar", 39.948),
    ("Kr", 83.798),
    ("Xe", 131.293),
];

/// The uncertainty of the standard atomic weights as used for certificates. CIAAW gives
/// an interval [a, b] for elements whose isotopic composition varies in nature, and a
/// value with an uncertainty ±U for the others. Following the IUPAC Technical Report
/// "Interpretation and use of standard atomic weights" (van der Veen, Meija, Possolo and
/// Hibbert, Pure Appl. Chem. 93 (2021) 629), both are read as rectangular distributions:
/// u = (b − a)/(2√3) for an interval (centred, by our documented choice, on the
/// conventional value used above so that plan and record use the same molar masses), and
/// u = U/√3 for a value ±U. Intervals and ±U from the CIAAW 2021 table (from memory, not
/// checked against the table); argon is atmospheric argon, 39.948(1).
const ATOMIC_WEIGHT_SPANS: &[(&str, AtomicSpan)] = &[
    ("H", AtomicSpan::Interval(1.007_84, 1.008_11)),
    ("He", AtomicSpan::PlusMinus(0.000_002)),
    ("C", AtomicSpan::Interval(12.0096, 12.0116)),
    ("N", AtomicSpan::Interval(14.006_43, 14.007_28)),
    ("O", AtomicSpan::Interval(15.999_03, 15.999_77)),
    ("F", AtomicSpan::PlusMinus(0.000_000_005)),
    ("Ne", AtomicSpan::PlusMinus(0.0006)),
    ("S", AtomicSpan::Interval(32.059, 32.076)),
    ("Cl", AtomicSpan::Interval(35.446, 35.457)),
    ("Ar", AtomicSpan::PlusMinus(0.001)),
    ("Kr", AtomicSpan::PlusMinus(0.002)),
    ("Xe", AtomicSpan::PlusMinus(0.006)),
];

/// How CIAAW states the spread of one standard atomic weight.
#[derive(Debug, Clone, Copy, PartialEq)]
enum AtomicSpan {
    /// The interval [a, b].
    Interval(f64, f64),
    /// ±U about the value.
    PlusMinus(f64),
}

/// Standard uncertainty of an element's atomic weight, g/mol (rectangular, see
/// [`ATOMIC_WEIGHT_SPANS`]); None for an element not in the table.
pub fn atomic_weight_uncertainty(symbol: &str) -> Option<f64> {
    ATOMIC_WEIGHT_SPANS.iter().find(|(s, _)| *s == symbol).map(|&(_, span)| match span {
        AtomicSpan::Interval(a, b) => (b - a) / (2.0 * 3f64.sqrt()),
        AtomicSpan::PlusMinus(u) => u / 3f64.sqrt(),
    })
}

/// Atomic weight of one element symbol, g/mol.
pub fn atomic_weight(symbol: &str) -> Option<f64> {
    ATOMIC_WEIGHTS.iter().find(|(s, _)| *s == symbol).map(|&(_, w)| w)
}

/// Element counts of a plain formula such as `C2H6O` or `SF6` (no brackets, no charges).
pub fn element_counts(formula: &str) -> Result<Vec<(String, u32)>, String> {
    let chars: Vec<char> = formula.chars().collect();
    if chars.is_empty() {
        return Err("the formula is empty".into());
    }
    let mut counts: Vec<(String, u32)> = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if !c.is_ascii_uppercase() {
            return Err(format!("unexpected {c:?} at position {} in formula {formula:?}", i + 1));
        }
        let mut symbol = c.to_string();
        i += 1;
        while i < chars.len() && chars[i].is_ascii_lowercase() {
            symbol.push(chars[i]);
            i += 1;
        }
        let start = i;
        while i < chars.len() && chars[i].is_ascii_digit() {
            i += 1;
        }
        let n: u32 = if start == i {
            1
        } else {
            chars[start..i]
                .iter()
                .collect::<String>()
                .parse()
                .map_err(|_| format!("count too large in formula {formula:?}"))?
        };
        if atomic_weight(&symbol).is_none() {
            return Err(format!("element {symbol:?} in formula {formula:?} has no atomic weight here"));
        }
        match counts.iter_mut().find(|(s, _)| *s == symbol) {
            Some((_, k)) => *k += n,
            None => counts.push((symbol, n)),
        }
    }
    Ok(counts)
}

/// Molar mass of a formula, g/mol.
pub fn molar_mass(formula: &str) -> Result<f64, String> {
    Ok(element_counts(formula)?.iter().map(|(s, n)| atomic_weight(s).unwrap_or(0.0) * f64::from(*n)).sum())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn molar_masses_against_published_values() {
        // NIST Chemistry WebBook molar masses (from the IUPAC weights of their time);
        // the conventional 2021 weights differ from them by at most 0.005 g/mol (S: 32.06
        // against 32.065).
        let cases = [
            ("N2", 28.0134),
            ("O2", 31.9988),
            ("CO2", 44.0095),
            ("CH4", 16.0425),
            ("Ar", 39.948),
            ("He", 4.002602),
            ("H2", 2.01588),
            ("SF6", 146.0554),
            ("C3H8", 44.0956),
            ("H2O", 18.0153),
        ];
        for (f, m) in cases {
            let got = molar_mass(f).unwrap();
            assert!((got - m).abs() < 6e-3, "{f}: {got} vs {m}");
        }
    }

    #[test]
    fn every_element_has_an_uncertainty() {
        for (symbol, _) in ATOMIC_WEIGHTS {
            assert!(atomic_weight_uncertainty(symbol).is_some_and(|u| u > 0.0), "{symbol}");
        }
        // Carbon: interval [12.0096, 12.0116] gives u = 0.0020/(2√3) = 5.77e-4 g/mol, the
        // value the IUPAC technical report (van der Veen et al. 2021) derives for carbon.
        assert!((atomic_weight_uncertainty("C").unwrap() - 5.7735e-4).abs() < 1e-8);
    }

    #[test]
    fn repeated_elements_are_summed() {
        assert_eq!(element_counts("C2H6O").unwrap(), element_counts("C2H5OH").unwrap());
    }

    #[test]
    fn bad_formulas() {
        assert!(molar_mass("").is_err());
        assert!(molar_mass("Qx2").is_err());
        assert!(molar_mass("h2").is_err());
        assert!(molar_mass("C99999999999").is_err());
    }
}
