//! The gas picker's search: fuzzy over id, name, aliases and CAS number.

use fuzzy_matcher::skim::SkimMatcherV2;
use fuzzy_matcher::FuzzyMatcher;

use crate::gas::Catalogue;

/// Catalogue indices matching `text`, best first (all gases for an empty text).
pub fn matches(catalogue: &Catalogue, text: &str) -> Vec<usize> {
    let text = text.trim();
    if text.is_empty() {
        return (0..catalogue.gases().len()).collect();
    }
    let matcher = SkimMatcherV2::default().ignore_case();
    let mut scored: Vec<(i64, usize)> = catalogue
        .gases()
        .iter()
        .enumerate()
        .filter_map(|(i, g)| {
            let r = &g.record;
            let exact = if r.id.eq_ignore_ascii_case(text) || r.cas == text { 1000 } else { 0 };
            let best = std::iter::once(r.id.as_str())
                .chain(std::iter::once(r.name.as_str()))
                .chain(std::iter::once(r.cas.as_str()))
                .chain(r.aliases.iter().map(String::as_str))
                .filter_map(|s| matcher.fuzzy_match(s, text))
                .max()?;
            Some((best + exact, i))
        })
        .collect();
    scored.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)));
    scored.into_iter().map(|(_, i)| i).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_by_id_name_and_cas() {
        let c = Catalogue::built_in();
        let first = |t: &str| c.gas(matches(&c, t)[0]).id().to_string();
        assert_eq!(first("CO2"), "CO2");
        assert_eq!(first("isobut"), "i-C4H10");
        assert_eq!(first("7783-06-4"), "H2S");
        assert_eq!(first("sulph hexa"), "SF6");
        assert!(matches(&c, "zzzzqq").is_empty());
    }
}
