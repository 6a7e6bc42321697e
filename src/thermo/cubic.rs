//! The generic two-parameter cubic equation of state with van der Waals one-fluid mixing.
//!
//! P = RT/(v − b) − a(T) / ((v + ε b)(v + σ b))
//!
//! van der Waals (1873), Redlich–Kwong (1949), Soave (1972) and Peng–Robinson (1976) differ
//! only in the data of [`CubicKind`]: ε, σ, Ω_a, Ω_b and α(T). The form and the
//! fugacity-coefficient expression follow Smith, Van Ness & Abbott, *Introduction to
//! Chemical Engineering Thermodynamics*, 7th ed., §3.6 and §14.
//!
//! Ω_a and Ω_b are the exact values that make the critical isotherm inflect at (Tc, Pc);
//! the rounded figures in the literature (0.45724, 0.07780 for PR) are their roundings.

use crate::units::R;

/// Which cubic equation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CubicKind {
    VanDerWaals,
    RedlichKwong,
    SoaveRedlichKwong,
    PengRobinson,
}

/// Ω_a of RK and SRK: 1 / (9 (2^(1/3) − 1)).
const OMEGA_A_RK: f64 = 0.427_480_233_540_341_4;
/// Ω_b of RK and SRK: (2^(1/3) − 1) / 3.
const OMEGA_B_RK: f64 = 0.086_640_349_964_957_72;
/// Ω_a of PR, from the root of the PR critical condition.
const OMEGA_A_PR: f64 = 0.457_235_528_921_382_2;
/// Ω_b of PR.
const OMEGA_B_PR: f64 = 0.077_796_073_903_888_46;

impl CubicKind {
    /// (ε, σ) of the generic form.
    pub fn epsilon_sigma(self) -> (f64, f64) {
        match self {
            CubicKind::VanDerWaals => (0.0, 0.0),
            CubicKind::RedlichKwong | CubicKind::SoaveRedlichKwong => (0.0, 1.0),
            CubicKind::PengRobinson => (1.0 - std::f64::consts::SQRT_2, 1.0 + std::f64::consts::SQRT_2),
        }
    }

    /// (Ω_a, Ω_b): a_c = Ω_a R²Tc²/Pc, b = Ω_b R Tc/Pc.
    pub fn omegas(self) -> (f64, f64) {
        match self {
            CubicKind::VanDerWaals => (27.0 / 64.0, 1.0 / 8.0),
            CubicKind::RedlichKwong | CubicKind::SoaveRedlichKwong => (OMEGA_A_RK, OMEGA_B_RK),
            CubicKind::PengRobinson => (OMEGA_A_PR, OMEGA_B_PR),
        }
    }

    /// α(T) at reduced temperature `tr` for acentric factor `omega`.
    pub fn alpha(self, tr: f64, omega: f64) -> f64 {
        match self {
            CubicKind::VanDerWaals => 1.0,
            CubicKind::RedlichKwong => 1.0 / tr.sqrt(),
            CubicKind::SoaveRedlichKwong => {
                let m = 0.480 + 1.574 * omega - 0.176 * omega * omega;
                let s = 1.0 + m * (1.0 - tr.sqrt());
                s * s
            }
            CubicKind::PengRobinson => {
                let k = 0.37464 + 1.54226 * omega - 0.26992 * omega * omega;
                let s = 1.0 + k * (1.0 - tr.sqrt());
                s * s
            }
        }
    }
}

/// Pure-component input to a cubic model.
#[derive(Debug, Clone, PartialEq)]
pub struct CubicComponent {
    /// Critical temperature, K.
    pub tc_k: f64,
    /// Critical pressure, Pa.
    pub pc_pa: f64,
    /// Acentric factor.
    pub omega: f64,
    /// Tabulated van der Waals (a in Pa m⁶ mol⁻², b in m³ mol⁻¹), used by the van der
    /// Waals model in place of the critical-constant values when present.
    pub tabulated_ab: Option<(f64, f64)>,
}

impl CubicComponent {
    /// a_i(T) in Pa m⁶ mol⁻² and b_i in m³ mol⁻¹.
    pub fn a_b(&self, kind: CubicKind, t_k: f64) -> (f64, f64) {
        if let (CubicKind::VanDerWaals, Some(ab)) = (kind, self.tabulated_ab) {
            return ab;
        }
        let (omega_a, omega_b) = kind.omegas();
        let ac = omega_a * R * R * self.tc_k * self.tc_k / self.pc_pa;
        let b = omega_b * R * self.tc_k / self.pc_pa;
        (ac * kind.alpha(t_k / self.tc_k, self.omega), b)
    }
}

/// The mixture parameters at one temperature and composition.
#[derive(Debug, Clone)]
pub struct Mix {
    /// a_mix, Pa m⁶ mol⁻².
    pub a: f64,
    /// b_mix, m³ mol⁻¹.
    pub b: f64,
    /// Σ_j x_j a_ij for each i, Pa m⁶ mol⁻² (for fugacity coefficients).
    pub a_row: Vec<f64>,
    /// b_i, m³ mol⁻¹.
    pub b_i: Vec<f64>,
}

/// Van der Waals one-fluid mixing:
/// a = Σ_i Σ_j x_i x_j √(a_i a_j)(1 − k_ij), b = Σ_i x_i b_i.
pub fn mix(kind: CubicKind, components: &[CubicComponent], kij: &[Vec<f64>], x: &[f64], t_k: f64) -> Mix {
    let n = components.len();
    let mut b_i = Vec::with_capacity(n);
    // √a_i once per component: √(a_i a_j) = √a_i √a_j, n square roots instead of n².
    let mut root_a = Vec::with_capacity(n);
    for c in components {
        let (a, b) = c.a_b(kind, t_k);
        root_a.push(a.sqrt());
        b_i.push(b);
    }
    let mut a_row = vec![0.0; n];
    for i in 0..n {
        let mut s = 0.0;
        for j in 0..n {
            s += x[j] * root_a[j] * (1.0 - kij[i][j]);
        }
        a_row[i] = root_a[i] * s;
    }
    let a = (0..n).map(|i| x[i] * a_row[i]).sum();
    let b = (0..n).map(|i| x[i] * b_i[i]).sum();
    Mix { a, b, a_row, b_i }
}

/// Pressure, Pa, at temperature `t_k` and molar volume `v` (m³/mol). The caller ensures v > b.
pub fn pressure(kind: CubicKind, m: &Mix, t_k: f64, v: f64) -> f64 {
    let (eps, sig) = kind.epsilon_sigma();
    R * t_k / (v - m.b) - m.a / ((v + eps * m.b) * (v + sig * m.b))
}

/// ∂P/∂v at constant T and composition, Pa mol m⁻³.
pub fn dp_dv(kind: CubicKind, m: &Mix, t_k: f64, v: f64) -> f64 {
    let (eps, sig) = kind.epsilon_sigma();
    let d = (v + eps * m.b) * (v + sig * m.b);
    -R * t_k / ((v - m.b) * (v - m.b)) + m.a * (2.0 * v + (eps + sig) * m.b) / (d * d)
}

/// Which root of the cubic was taken.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Root {
    /// The cubic has one root above B.
    Single,
    /// Three roots; the vapour-like (largest) has the lower Gibbs energy.
    VapourOfThree,
    /// Three roots; the liquid-like (smallest) has the lower Gibbs energy.
    LiquidOfThree,
}

/// The compressibility factor at (T, P) with the root that was chosen.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ZSolution {
    pub z: f64,
    pub root: Root,
    /// A = a P / (RT)².
    pub big_a: f64,
    /// B = b P / (RT).
    pub big_b: f64,
}

/// Residual Gibbs energy G^R/RT of the fluid at Z (= Σ x_i ln φ_i).
pub(crate) fn g_residual(kind: CubicKind, z: f64, big_a: f64, big_b: f64) -> f64 {
    z - 1.0 - (z - big_b).ln() - big_a / big_b * integral_i(kind, z, big_b)
}

/// I = ∫ terms of the generic cubic: ln((Z + σB)/(Z + εB)) / (σ − ε), or B/Z when ε = σ.
pub(crate) fn integral_i(kind: CubicKind, z: f64, big_b: f64) -> f64 {
    let (eps, sig) = kind.epsilon_sigma();
    if sig == eps {
        big_b / z
    } else {
        ((z + sig * big_b) / (z + eps * big_b)).ln() / (sig - eps)
    }
}

/// Solve the cubic in Z at (T, P) and take the stable root (lowest Gibbs energy among
/// the roots above B).
pub fn solve_z(kind: CubicKind, m: &Mix, t_k: f64, p_pa: f64) -> Option<ZSolution> {
    let rt = R * t_k;
    let big_a = m.a * p_pa / (rt * rt);
    let big_b = m.b * p_pa / rt;
    let roots = z_roots(kind, m, t_k, p_pa);
    let (z, root) = match roots.as_slice() {
        [] => return None,
        [z] => (*z, Root::Single),
        [low, .., high] => {
            let g_low = g_residual(kind, *low, big_a, big_b);
            let g_high = g_residual(kind, *high, big_a, big_b);
            if g_low < g_high {
                (*low, Root::LiquidOfThree)
            } else {
                (*high, Root::VapourOfThree)
            }
        }
    };
    Some(ZSolution { z, root, big_a, big_b })
}

/// Every root of the cubic in Z above the co-volume B at (T, P), smallest first: one, or
/// the liquid-like, the unstable middle and the vapour-like ones.
pub fn z_roots(kind: CubicKind, m: &Mix, t_k: f64, p_pa: f64) -> Vec<f64> {
    let rt = R * t_k;
    let big_a = m.a * p_pa / (rt * rt);
    let big_b = m.b * p_pa / rt;
    let (c2, c1, c0) = z_coefficients(kind, big_a, big_b);
    let mut roots: Vec<f64> = real_cubic_roots(c2, c1, c0).into_iter().filter(|&z| z > big_b).collect();
    roots.sort_by(f64::total_cmp);
    roots.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * b.abs());
    roots
}

/// The coefficients (c2, c1, c0) of the cubic in Z, z³ + c2 z² + c1 z + c0 = 0, of the
/// generic form at A = aP/(RT)² and B = bP/(RT).
pub(crate) fn z_coefficients(kind: CubicKind, big_a: f64, big_b: f64) -> (f64, f64, f64) {
    let (eps, sig) = kind.epsilon_sigma();
    (
        -(1.0 + big_b - (eps + sig) * big_b),
        big_a + eps * sig * big_b * big_b - (eps + sig) * big_b * (1.0 + big_b),
        -(big_a * big_b + eps * sig * big_b * big_b * (1.0 + big_b)),
    )
}

/// ln φ_i of each component at a solved Z.
pub fn ln_phi(kind: CubicKind, m: &Mix, s: &ZSolution) -> Vec<f64> {
    let i_term = integral_i(kind, s.z, s.big_b);
    let ln_z_b = (s.z - s.big_b).ln();
    m.b_i
        .iter()
        .zip(&m.a_row)
        .map(|(&bi, &ai_row)| {
            let bi_b = bi / m.b;
            bi_b * (s.z - 1.0) - ln_z_b - s.big_a / s.big_b * (2.0 * ai_row / m.a - bi_b) * i_term
        })
        .collect()
}

/// Real roots of z³ + c2 z² + c1 z + c0, each polished by Newton's method.
pub fn real_cubic_roots(c2: f64, c1: f64, c0: f64) -> Vec<f64> {
    let (roots, n) = real_cubic_roots_fixed(c2, c1, c0);
    roots[..n].to_vec()
}

/// [`real_cubic_roots`] without allocation: the roots and how many there are (1 or 3).
pub fn real_cubic_roots_fixed(c2: f64, c1: f64, c0: f64) -> ([f64; 3], usize) {
    let q = (c2 * c2 - 3.0 * c1) / 9.0;
    let r = (2.0 * c2 * c2 * c2 - 9.0 * c2 * c1 + 27.0 * c0) / 54.0;
    let shift = c2 / 3.0;
    let (mut roots, n) = if r * r < q * q * q {
        let theta = (r / (q * q * q).sqrt()).clamp(-1.0, 1.0).acos();
        let s = -2.0 * q.sqrt();
        let tau = 2.0 * std::f64::consts::PI;
        (
            [
                s * (theta / 3.0).cos() - shift,
                s * ((theta + tau) / 3.0).cos() - shift,
                s * ((theta - tau) / 3.0).cos() - shift,
            ],
            3,
        )
    } else {
        let big = -r.signum() * (r.abs() + (r * r - q * q * q).sqrt()).cbrt();
        let small = if big == 0.0 { 0.0 } else { q / big };
        ([big + small - shift, 0.0, 0.0], 1)
    };
    for z in roots[..n].iter_mut() {
        for _ in 0..8 {
            let f = ((*z + c2) * *z + c1) * *z + c0;
            let df = (3.0 * *z + 2.0 * c2) * *z + c1;
            if df == 0.0 {
                break;
            }
            let step = f / df;
            *z -= step;
            if step.abs() <= 1e-16 * z.abs().max(1e-300) {
                break;
            }
        }
    }
    (roots, n)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_omegas_match_the_rounded_published_ones() {
        // Rounded values as printed in DOMAIN.md and every textbook.
        let (a, b) = CubicKind::PengRobinson.omegas();
        assert!((a - 0.45724).abs() < 5e-6 && (b - 0.07780).abs() < 5e-6);
        let (a, b) = CubicKind::SoaveRedlichKwong.omegas();
        assert!((a - 0.42748).abs() < 5e-6 && (b - 0.08664).abs() < 5e-6);
        // RK: Ω_a = 1/(9(2^(1/3)-1)), Ω_b = (2^(1/3)-1)/3.
        let c = 2f64.cbrt() - 1.0;
        assert!((OMEGA_A_RK - 1.0 / (9.0 * c)).abs() < 1e-15);
        assert!((OMEGA_B_RK - c / 3.0).abs() < 1e-16);
    }

    #[test]
    fn critical_isotherm_inflects_at_the_critical_point() {
        // At Tc, Pc the cubic has a triple root Z_c: 3/8 (vdW), 1/3 (RK), 0.30740 (PR).
        let comp = CubicComponent { tc_k: 190.564, pc_pa: 4.5992e6, omega: 0.0, tabulated_ab: None };
        for (kind, zc) in [
            (CubicKind::VanDerWaals, 0.375),
            (CubicKind::RedlichKwong, 1.0 / 3.0),
            (CubicKind::PengRobinson, 0.307_401_3),
        ] {
            let m = mix(kind, std::slice::from_ref(&comp), &[vec![0.0]], &[1.0], comp.tc_k);
            let s = solve_z(kind, &m, comp.tc_k, comp.pc_pa).unwrap();
            assert!((s.z - zc).abs() < 2e-4, "{kind:?}: {}", s.z);
        }
    }

    #[test]
    fn cubic_roots_of_a_known_polynomial() {
        // (z-1)(z-2)(z-3) = z³ - 6z² + 11z - 6
        let mut r = real_cubic_roots(-6.0, 11.0, -6.0);
        r.sort_by(f64::total_cmp);
        for (got, want) in r.iter().zip([1.0, 2.0, 3.0]) {
            assert!((got - want).abs() < 1e-13);
        }
        let r = real_cubic_roots(0.0, 1.0, -2.0); // z³ + z - 2 = (z-1)(z²+z+2)
        assert_eq!(r.len(), 1);
        assert!((r[0] - 1.0).abs() < 1e-14);
    }
}
