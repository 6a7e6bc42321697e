//! Binary interaction parameters k_ij, one table per model.
//!
//! Peng–Robinson: the ChemSep table (Kooijman & Taylor), generated into `kij_pr.ron` by
//! `tools/make_catalogue.py`, with its outliers replaced by a documented choice, the reason
//! beside each value in the file: N2/n-octane (ChemSep −0.4) and H2/n-butane (−0.397)
//! interpolated in carbon number between listed neighbours; H2/toluene (−0.51), He/CO
//! (+0.546) and propylene/acetylene (−0.43) set to the classical default 0.
//! `tests/multifluid.rs` compares the H2/n-butane dew point with the multi-fluid
//! reference. N2/methanol (−0.214) is kept: no better published value was found. No
//! comparable published set covering these gases was found for van der Waals, RK or SRK,
//! so they use k_ij = 0, the classical default.

use std::collections::HashMap;
use std::sync::OnceLock;

use super::Model;

// The PR table as compiled in (`kij_data.rs`, made from `kij_pr.ron` by a test that fails
// when the two differ), so no process parses it at start.
include!("kij_data.rs");

fn pr_table() -> &'static [(&'static str, &'static str, f64)] {
    PR_TABLE
}

/// The PR table as a dense matrix over the ids it names: each id's row, and the rows.
struct Dense {
    row_of: HashMap<&'static str, usize>,
    k: Vec<Vec<f64>>,
}

fn pr_dense() -> &'static Dense {
    static DENSE: OnceLock<Dense> = OnceLock::new();
    DENSE.get_or_init(|| {
        let mut row_of: HashMap<&'static str, usize> = HashMap::new();
        for (a, b, _) in pr_table() {
            for id in [*a, *b] {
                let next = row_of.len();
                row_of.entry(id).or_insert(next);
            }
        }
        let mut k = vec![vec![0.0; row_of.len()]; row_of.len()];
        for (a, b, v) in pr_table() {
            let (i, j) = (row_of[a], row_of[b]);
            k[i][j] = *v;
            k[j][i] = *v;
        }
        Dense { row_of, k }
    })
}

/// The published k_ij of `model` for a pair of gas ids, 0 where none is listed.
pub fn value(model: Model, a: &str, b: &str) -> f64 {
    matrix(model, &[a, b])[0][1]
}

/// The symmetric k_ij matrix of `model` for `ids` (one look-up per id, not per pair).
pub fn matrix(model: Model, ids: &[&str]) -> Vec<Vec<f64>> {
    let n = ids.len();
    match model {
        Model::Pr => {
            let dense = pr_dense();
            let rows: Vec<Option<usize>> = ids.iter().map(|id| dense.row_of.get(id).copied()).collect();
            (0..n)
                .map(|i| {
                    (0..n)
                        .map(|j| match (rows[i], rows[j]) {
                            (Some(a), Some(b)) if ids[i] != ids[j] => dense.k[a][b],
                            _ => 0.0,
                        })
                        .collect()
                })
                .collect()
        }
        _ => vec![vec![0.0; n]; n],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_compiled_data_is_the_kij_file() {
        let file: Vec<(String, String, f64)> = ron::from_str(include_str!("kij_pr.ron")).expect("kij_pr.ron is valid");
        let mut made = String::from(
            "// Made from kij_pr.ron by `FILLWRIGHT_REGENERATE=1 cargo test --lib the_compiled_data`;\n\
             // do not edit (the test fails when this file and the data file differ).\n\
             static PR_TABLE: &[(&str, &str, f64)] = &[\n",
        );
        for (a, b, k) in &file {
            made.push_str(&format!("    ({a:?}, {b:?}, {k:?}),\n"));
        }
        made.push_str("];\n");
        crate::compiled_data::is_current("src/thermo/kij_data.rs", &made, "kij_pr.ron");
        assert_eq!(file.len(), PR_TABLE.len());
        for ((a, b, k), (c, d, l)) in file.iter().zip(PR_TABLE) {
            assert!(a == c && b == d && k == l, "{a}-{b}");
        }
    }

    #[test]
    fn pr_table_is_symmetric_in_lookup_and_names_known_gases() {
        let c = crate::gas::Catalogue::built_in();
        for (a, b, k) in pr_table() {
            assert!(c.index_of(a).is_some() && c.index_of(b).is_some(), "{a}-{b}");
            assert!(k.is_finite() && k.abs() < 1.0);
        }
        // Each pair once, so the matrix gives what a scan of the file gives.
        for (i, (a, b, k)) in pr_table().iter().enumerate() {
            assert_eq!(value(Model::Pr, a, b), *k);
            assert!(!pr_table()[..i].iter().any(|(c, d, _)| (c, d) == (a, b) || (c, d) == (b, a)), "{a}-{b} twice");
        }
        // ChemSep PR k_ij for N2-CH4 is 0.0289 (thermo IPDB 'ChemSep PR').
        assert_eq!(value(Model::Pr, "CH4", "N2"), 0.0289);
        assert_eq!(value(Model::Pr, "N2", "CH4"), 0.0289);
        assert_eq!(value(Model::Srk, "N2", "CH4"), 0.0);
        // The outlier replaced: between ChemSep N2/n-C7H16 (0.1441) and N2/n-C10H22 (0.1122).
        let k8 = value(Model::Pr, "N2", "n-C8H18");
        assert!(k8 < value(Model::Pr, "N2", "n-C7H16") && k8 > value(Model::Pr, "N2", "n-C10H22"), "{k8}");
    }
}
