//! Binary interaction parameters k_ij, one table per model.
//!
//! Peng–Robinson: the ChemSep table (Kooijman & Taylor), generated into `kij_pr.ron` by
//! `tools/make_catalogue.py`, with outliers replaced by a documented choice (N2/n-octane:
//! ChemSep's −0.4 becomes 0.1335, interpolated between N2/n-heptane and N2/n-decane; the
//! reason is beside the value in the file). No comparable published set covering these gases was found
//! for van der Waals, RK or SRK, so they use k_ij = 0, the classical default.

use std::collections::HashMap;
use std::sync::OnceLock;

use super::Model;

const PR_TABLE: &str = include_str!("kij_pr.ron");

fn pr_table() -> &'static [(String, String, f64)] {
    static TABLE: OnceLock<Vec<(String, String, f64)>> = OnceLock::new();
    // Checked by the test suite; a parse failure is a build defect.
    TABLE.get_or_init(|| ron::from_str(PR_TABLE).expect("kij_pr.ron is valid"))
}

/// The PR table keyed by the pair, the ids in sorted order (a look-up per pair, not a scan).
fn pr_index() -> &'static HashMap<(String, String), f64> {
    static INDEX: OnceLock<HashMap<(String, String), f64>> = OnceLock::new();
    INDEX.get_or_init(|| pr_table().iter().map(|(a, b, k)| (ordered(a, b), *k)).collect())
}

fn ordered(a: &str, b: &str) -> (String, String) {
    if a <= b {
        (a.to_string(), b.to_string())
    } else {
        (b.to_string(), a.to_string())
    }
}

/// The published k_ij of `model` for a pair of gas ids, 0 where none is listed.
pub fn value(model: Model, a: &str, b: &str) -> f64 {
    match model {
        Model::Pr => pr_index().get(&ordered(a, b)).copied().unwrap_or(0.0),
        _ => 0.0,
    }
}

/// The symmetric k_ij matrix of `model` for `ids`.
pub fn matrix(model: Model, ids: &[&str]) -> Vec<Vec<f64>> {
    ids.iter().map(|a| ids.iter().map(|b| if a == b { 0.0 } else { value(model, a, b) }).collect()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pr_table_is_symmetric_in_lookup_and_names_known_gases() {
        let c = crate::gas::Catalogue::built_in();
        for (a, b, k) in pr_table() {
            assert!(c.index_of(a).is_some() && c.index_of(b).is_some(), "{a}-{b}");
            assert!(k.is_finite() && k.abs() < 1.0);
        }
        // Each pair once, so the keyed look-up gives what a scan of the file gives.
        assert_eq!(pr_index().len(), pr_table().len());
        // ChemSep PR k_ij for N2-CH4 is 0.0289 (thermo IPDB 'ChemSep PR').
        assert_eq!(value(Model::Pr, "CH4", "N2"), 0.0289);
        assert_eq!(value(Model::Pr, "N2", "CH4"), 0.0289);
        assert_eq!(value(Model::Srk, "N2", "CH4"), 0.0);
        // The outlier replaced: between ChemSep N2/n-C7H16 (0.1441) and N2/n-C10H22 (0.1122).
        let k8 = value(Model::Pr, "N2", "n-C8H18");
        assert!(k8 < value(Model::Pr, "N2", "n-C7H16") && k8 > value(Model::Pr, "N2", "n-C10H22"), "{k8}");
    }
}
