//! The composition actually made, from the fill record.

use crate::gas::Catalogue;
use crate::mixture::Composition;

/// Composition from the masses of the parent gases (ISO 6142-1, eq. for x_i):
///
/// x_i = Σ_A (x_{i,A} m_A / M_A) / Σ_A (m_A / M_A),  M_A = Σ_i x_{i,A} M_i,
///
/// with `parents` the parent compositions and the mass of each added, g. The result lists
/// the gases in order of first appearance.
pub fn composition_from_masses(parents: &[(&Composition, f64)], catalogue: &Catalogue) -> Composition {
    let mut gases: Vec<usize> = Vec::new();
    for (c, _) in parents {
        for &g in &c.gases {
            if !gases.contains(&g) {
                gases.push(g);
            }
        }
    }
    let mut moles = vec![0.0; gases.len()];
    for (c, mass_g) in parents {
        let n_parent = mass_g / c.molar_mass(catalogue);
        for (g, x) in c.gases.iter().zip(&c.fractions) {
            if let Some(i) = gases.iter().position(|h| h == g) {
                moles[i] += x * n_parent;
            }
        }
    }
    let total: f64 = moles.iter().sum();
    Composition { gases, fractions: moles.iter().map(|n| n / total).collect() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_pure_parents() {
        // 44.009 g of CO2 (1 mol) and 28.014 g of N2 (1 mol) make a 50/50 mixture.
        let c = Catalogue::built_in();
        let co2 = Composition { gases: vec![c.index_of("CO2").unwrap()], fractions: vec![1.0] };
        let n2 = Composition { gases: vec![c.index_of("N2").unwrap()], fractions: vec![1.0] };
        let made = composition_from_masses(&[(&co2, 44.009), (&n2, 28.014)], &c);
        assert!((made.fractions[0] - 0.5).abs() < 1e-15);
    }
}
