//! Vapour-pressure correlations carried by the catalogue, for condensation screening.

use serde::{Deserialize, Serialize};

/// How a gas's saturation pressure is computed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum VapourPressure {
    /// DIPPR equation 101: ln(P/Pa) = c1 + c2/T + c3 ln T + c4 T^c5, T in K, valid from
    /// `t_min_k` to `t_max_k` (Perry's Handbook, 8th ed., Table 2-8).
    Dippr101 { c1: f64, c2: f64, c3: f64, c4: f64, c5: f64, t_min_k: f64, t_max_k: f64, source: String },
    /// Lee–Kesler corresponding-states estimate from Tc, Pc and ω
    /// (Lee & Kesler, AIChE J. 21 (1975) 510), for gases with no fitted correlation.
    LeeKesler { source: String },
    /// Wagner's form: ln(P/p_r) = f Σ n_i θ^t_i with θ = 1 − T/T_r and f = T_r/T (or 1
    /// where `tau_factor` is false): the ancillary equations of the reference equations
    /// of state, and the PPDS equation (t = 1, 1.5, 2.5, 5).
    Wagner {
        t_r_k: f64,
        p_r_pa: f64,
        n: Vec<f64>,
        t: Vec<f64>,
        tau_factor: bool,
        t_min_k: f64,
        t_max_k: f64,
        source: String,
    },
}

impl VapourPressure {
    /// Source key of the correlation.
    pub fn source(&self) -> &str {
        match self {
            VapourPressure::Dippr101 { source, .. }
            | VapourPressure::LeeKesler { source }
            | VapourPressure::Wagner { source, .. } => source,
        }
    }

    /// Saturation pressure in Pa at `t_k`, or `None` above the critical temperature (no
    /// liquid can form) or below the correlation's range.
    pub fn pressure_pa(&self, t_k: f64, tc_k: f64, pc_pa: f64, omega: f64) -> Option<f64> {
        if !(t_k > 0.0) || t_k > tc_k {
            return None;
        }
        match self {
            VapourPressure::Wagner { t_r_k, p_r_pa, n, t, tau_factor, t_min_k, t_max_k, .. } => {
                if t_k < *t_min_k || t_k > *t_max_k {
                    return None;
                }
                let theta = (1.0 - t_k / t_r_k).max(0.0);
                let sum: f64 = n.iter().zip(t).map(|(ni, ti)| ni * theta.powf(*ti)).sum();
                let factor = if *tau_factor { t_r_k / t_k } else { 1.0 };
                Some(p_r_pa * (factor * sum).exp())
            }
            &VapourPressure::Dippr101 { c1, c2, c3, c4, c5, t_min_k, t_max_k, .. } => {
                if t_k < t_min_k || t_k > t_max_k {
                    return None;
                }
                Some((c1 + c2 / t_k + c3 * t_k.ln() + c4 * t_k.powf(c5)).exp())
            }
            VapourPressure::LeeKesler { .. } => {
                let tr = t_k / tc_k;
                let f0 = 5.92714 - 6.09648 / tr - 1.28862 * tr.ln() + 0.169347 * tr.powi(6);
                let f1 = 15.2518 - 15.6875 / tr - 13.4721 * tr.ln() + 0.43577 * tr.powi(6);
                Some(pc_pa * (f0 + omega * f1).exp())
            }
        }
    }
}

/// The sublimation pressure of ice Ih, Pa, from 50 K to the triple point (273.16 K):
/// IAPWS R14-08(2011), ln(p/p_t) = θ⁻¹ Σ a_i θ^b_i, θ = T/T_t, with T_t = 273.16 K and
/// p_t = 611.657 Pa. None outside that range.
pub fn ice_sublimation_pa(t_k: f64) -> Option<f64> {
    const A: [f64; 3] = [-0.212144006e2, 0.273203819e2, -0.610598130e1];
    const B: [f64; 3] = [0.333333333e-2, 0.120666667e1, 0.170333333e1];
    if !(50.0..=273.16).contains(&t_k) {
        return None;
    }
    let theta = t_k / 273.16;
    let sum: f64 = A.iter().zip(&B).map(|(a, b)| a * theta.powf(*b)).sum();
    Some(611.657 * (sum / theta).exp())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ice_sublimation_at_published_points() {
        // The triple point: p_t by definition (IAPWS R14-08(2011)).
        assert!((ice_sublimation_pa(273.16).unwrap() / 611.657 - 1.0).abs() < 1e-9);
        // 230 K: 8.947 352 740 Pa, the release's check value (from memory; the same figure,
        // 8.947353 Pa, is the check value of an independent implementation in the code
        // corpus searched for this work).
        assert!((ice_sublimation_pa(230.0).unwrap() / 8.947_352_740 - 1.0).abs() < 1e-7);
        assert_eq!(ice_sublimation_pa(280.0), None);
        assert_eq!(ice_sublimation_pa(20.0), None);
    }
}
