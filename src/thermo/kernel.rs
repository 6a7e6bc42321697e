//! The lean cubic kernel for the inner loops of the phase calculations.
//!
//! [`CubicAt`] is a cubic model prepared at one temperature: a_i(T), b_i and the cross
//! terms √(a_i a_j)(1 − k_ij) are computed once, so that mixing, the roots and ln φ at any
//! pressure and composition cost O(n²) multiplications and no heap allocation. The
//! composition is checked once where it enters (the [`super::Fluid`] methods), not here.
//!
//! [`Kernel`] is any model that gives fugacities, prepared at one temperature: a cubic, or
//! a Helmholtz mixture (GERG-2008 or the multi-fluid model, [`HelmholtzAt`]). The phase
//! calculations (stability, flash, dew points, the envelope) run on it unchanged.

// Indexed loops over the components read as the formulas do.
#![allow(clippy::needless_range_loop)]

use std::sync::Arc;

use super::cubic::{self, g_residual, integral_i, CubicKind};
use super::multifluid::Mixture;
use super::Fluid;
use crate::units::R;

/// Which root of the cubic ln φ is taken on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RootChoice {
    /// The smallest root above B (liquid-like).
    Liquid,
    /// The largest root (vapour-like).
    Vapour,
    /// The root of lowest Gibbs energy.
    Stable,
}

/// A cubic model at one temperature.
#[derive(Debug, Clone)]
pub struct CubicAt {
    kind: CubicKind,
    t_k: f64,
    n: usize,
    b_i: Vec<f64>,
    /// √(a_i a_j)(1 − k_ij), row-major n × n.
    a_ij: Vec<f64>,
    /// Scratch: Σ_j x_j a_ij of the last composition.
    a_row: Vec<f64>,
    /// √a_i at the temperature.
    root_a: Vec<f64>,
    /// 1 − k_ij, row-major.
    one_minus_k: Vec<f64>,
    components: Vec<super::cubic::CubicComponent>,
}

impl CubicAt {
    /// The fluid's cubic at `t_k`; None for a model that is not a cubic.
    pub fn new(fluid: &Fluid, t_k: f64) -> Option<CubicAt> {
        let kind = fluid.model.cubic_kind()?;
        let n = fluid.cubic.len();
        let one_minus_k = (0..n * n).map(|k| 1.0 - fluid.kij[k / n][k % n]).collect();
        let mut at = CubicAt {
            kind,
            t_k: f64::NAN,
            n,
            b_i: vec![0.0; n],
            a_ij: vec![0.0; n * n],
            a_row: vec![0.0; n],
            root_a: vec![0.0; n],
            one_minus_k,
            components: fluid.cubic.clone(),
        };
        at.set_temperature(t_k);
        Some(at)
    }

    /// Move the model to another temperature, in place.
    pub fn set_temperature(&mut self, t_k: f64) {
        if t_k == self.t_k {
            return;
        }
        self.t_k = t_k;
        let n = self.n;
        for (i, c) in self.components.iter().enumerate() {
            let (a, b) = c.a_b(self.kind, t_k);
            self.root_a[i] = a.sqrt();
            self.b_i[i] = b;
        }
        for i in 0..n {
            for j in 0..n {
                self.a_ij[i * n + j] = self.root_a[i] * self.root_a[j] * self.one_minus_k[i * n + j];
            }
        }
    }

    pub fn temperature_k(&self) -> f64 {
        self.t_k
    }

    /// Mix `x` into the scratch row; returns (a, b).
    fn mix(&mut self, x: &[f64]) -> (f64, f64) {
        let n = self.n;
        let mut a = 0.0;
        let mut b = 0.0;
        for i in 0..n {
            let row = &self.a_ij[i * n..(i + 1) * n];
            let mut s = 0.0;
            for j in 0..n {
                s += x[j] * row[j];
            }
            self.a_row[i] = s;
            a += x[i] * s;
            b += x[i] * self.b_i[i];
        }
        (a, b)
    }

    /// Σ_j n_j a_ij for each i, and b_i, for amounts `n` (not fractions): the rows of the
    /// extensive mixing rule.
    pub fn extensive_rows(&mut self, n: &[f64]) -> (Vec<f64>, Vec<f64>) {
        self.mix(n);
        (self.a_row.clone(), self.b_i.clone())
    }

    /// Pressure, Pa, of composition `x` at molar volume `v_m3` (m³/mol); None at or below
    /// the co-volume.
    pub fn pressure(&mut self, v_m3: f64, x: &[f64]) -> Option<f64> {
        let (a, b) = self.mix(x);
        if !(v_m3 > b) {
            return None;
        }
        let (eps, sig) = self.kind.epsilon_sigma();
        Some(R * self.t_k / (v_m3 - b) - a / ((v_m3 + eps * b) * (v_m3 + sig * b)))
    }

    /// Z of composition `x` at `p_pa` on the root of lowest Gibbs energy; None where the
    /// cubic has no root above B.
    pub fn stable_z(&mut self, p_pa: f64, x: &[f64]) -> Option<f64> {
        self.z_on(p_pa, x, RootChoice::Stable)
    }

    /// Z of composition `x` at `p_pa` on the chosen root; None where the cubic has no root
    /// above B.
    pub fn z_on(&mut self, p_pa: f64, x: &[f64], root: RootChoice) -> Option<f64> {
        let (roots, count, big_a, big_b) = self.roots(p_pa, x);
        pick(self.kind, root, &roots[..count], big_a, big_b)
    }

    /// Z of composition `x` at `p_pa` on the liquid and on the vapour root (the same where
    /// the cubic has one root), from one mixing and one cubic.
    pub fn z_liquid_vapour(&mut self, p_pa: f64, x: &[f64]) -> (Option<f64>, Option<f64>) {
        let (roots, count, big_a, big_b) = self.roots(p_pa, x);
        let on = |root| pick(self.kind, root, &roots[..count], big_a, big_b);
        (on(RootChoice::Liquid), on(RootChoice::Vapour))
    }

    /// The cubic's roots in Z of composition `x` at `p_pa` (ascending, `count` of them), with
    /// its A and B.
    fn roots(&mut self, p_pa: f64, x: &[f64]) -> ([f64; 3], usize, f64, f64) {
        let (a, b) = self.mix(x);
        let rt = R * self.t_k;
        let (big_a, big_b) = (a * p_pa / (rt * rt), b * p_pa / rt);
        let (roots, count) = z_roots(self.kind, big_a, big_b);
        (roots, count, big_a, big_b)
    }

    /// ln φ_i of composition `x` (mole fractions summing to 1) at `p_pa` on the chosen root,
    /// written into `out`; returns Z, or None where the cubic has no root above B.
    pub fn ln_phi_into(&mut self, p_pa: f64, x: &[f64], root: RootChoice, out: &mut [f64]) -> Option<f64> {
        let (a, b) = self.mix(x);
        let rt = R * self.t_k;
        let big_a = a * p_pa / (rt * rt);
        let big_b = b * p_pa / rt;
        let (roots, count) = z_roots(self.kind, big_a, big_b);
        let z = pick(self.kind, root, &roots[..count], big_a, big_b)?;
        let i_term = integral_i(self.kind, z, big_b);
        let ln_z_b = (z - big_b).ln();
        let a_over = big_a / big_b * i_term;
        for i in 0..self.n {
            let bi_b = self.b_i[i] / b;
            out[i] = bi_b * (z - 1.0) - ln_z_b - a_over * (2.0 * self.a_row[i] / a - bi_b);
        }
        Some(z)
    }
}

/// A model that gives fugacities, at one temperature.
#[derive(Debug, Clone)]
pub enum Kernel {
    Cubic(CubicAt),
    Helmholtz(HelmholtzAt),
}

impl Kernel {
    /// The fluid's own fugacity model at `t_k`: its cubic, or its GERG-2008 or multi-fluid
    /// mixture; None for the ideal gas (it has no phases).
    pub fn new(fluid: &Fluid, t_k: f64) -> Option<Kernel> {
        match fluid.helmholtz_mixture() {
            Some(mix) => {
                let estimate = CubicAt::new(fluid.cubic_estimate(), t_k)?;
                Some(Kernel::Helmholtz(HelmholtzAt { mix, t_k, estimate }))
            }
            None => CubicAt::new(fluid, t_k).map(Kernel::Cubic),
        }
    }

    /// Move the model to another temperature, in place.
    pub fn set_temperature(&mut self, t_k: f64) {
        match self {
            Kernel::Cubic(c) => c.set_temperature(t_k),
            Kernel::Helmholtz(h) => {
                h.t_k = t_k;
                h.estimate.set_temperature(t_k);
            }
        }
    }

    pub fn temperature_k(&self) -> f64 {
        match self {
            Kernel::Cubic(c) => c.temperature_k(),
            Kernel::Helmholtz(h) => h.t_k,
        }
    }

    /// Pressure, Pa, of composition `x` at molar volume `v_m3`; None where the model gives
    /// none (at or below a cubic's co-volume, or not finite and positive).
    pub fn pressure(&mut self, v_m3: f64, x: &[f64]) -> Option<f64> {
        match self {
            Kernel::Cubic(c) => c.pressure(v_m3, x),
            Kernel::Helmholtz(h) => {
                let (p, _) = h.mix.pressure(h.t_k, 1.0 / v_m3, x);
                (p.is_finite() && p > 0.0).then_some(p)
            }
        }
    }

    /// Z of composition `x` at `p_pa` on its stable root (lowest Gibbs energy).
    pub fn stable_z(&mut self, p_pa: f64, x: &[f64]) -> Option<f64> {
        match self {
            Kernel::Cubic(c) => c.stable_z(p_pa, x),
            Kernel::Helmholtz(h) => {
                let rho = h.density(p_pa, x, RootChoice::Stable)?;
                h.z_of(p_pa, rho)
            }
        }
    }

    /// ln φ_i of composition `x` at `p_pa` on the chosen root, into `out`; returns Z.
    pub fn ln_phi_into(&mut self, p_pa: f64, x: &[f64], root: RootChoice, out: &mut [f64]) -> Option<f64> {
        match self {
            Kernel::Cubic(c) => c.ln_phi_into(p_pa, x, root, out),
            Kernel::Helmholtz(h) => {
                let rho = h.density(p_pa, x, root)?;
                let ln_phi = h.mix.ln_phi(h.t_k, rho, x);
                if ln_phi.iter().any(|v| v.is_nan()) {
                    return None;
                }
                out.copy_from_slice(&ln_phi);
                h.z_of(p_pa, rho)
            }
        }
    }
}

/// A Helmholtz mixture (GERG-2008 or the multi-fluid model) at one temperature, with
/// Peng–Robinson on the same gases for the starts of its density searches.
#[derive(Debug, Clone)]
pub struct HelmholtzAt {
    mix: Arc<Mixture>,
    t_k: f64,
    estimate: CubicAt,
}

impl HelmholtzAt {
    /// The density on the chosen branch. Newton's method on the Helmholtz equation starts
    /// from Peng–Robinson's root of that branch (its largest for the gas, its smallest for
    /// the liquid; where it has one root, that one): a multi-parameter equation has
    /// unphysical roots between the gas and the liquid (a propane-rich liquid at 250 K and
    /// 86 bar has one near Z = 1.07 under the reference equations, with ln φ of N2 near 25),
    /// which a start from the ideal gas can reach. For `Stable`, the root of lower Gibbs
    /// energy of the two. Where Newton's method finds neither, the ideal-gas start and the
    /// mixture's own search.
    fn density(&mut self, p_pa: f64, x: &[f64], root: RootChoice) -> Option<f64> {
        let t = self.t_k;
        let density = |z: Option<f64>| z.map(|z| p_pa / (z * R * t));
        let (liquid, vapour) = self.estimate.z_liquid_vapour(p_pa, x);
        let (pr_liquid, pr_vapour) = (density(liquid), density(vapour));
        let starts: Vec<f64> = match root {
            RootChoice::Vapour => pr_vapour.into_iter().collect(),
            RootChoice::Liquid => pr_liquid.into_iter().collect(),
            // One start where Peng–Robinson has one root.
            RootChoice::Stable => pr_vapour.into_iter().chain(pr_liquid.filter(|l| Some(*l) != pr_vapour)).collect(),
        };
        self.mix.lowest_gibbs_density(t, p_pa, x, &starts).or_else(|| {
            let all: Vec<f64> = [pr_vapour, pr_liquid, Some(p_pa / (R * t))].into_iter().flatten().collect();
            self.mix.lowest_gibbs_density(t, p_pa, x, &all).or_else(|| self.mix.stable_density(t, p_pa, x))
        })
    }

    /// Z as the callers read it, v = ZRT/P with the crate's R (GERG-2008's own R differs
    /// by 1.1e-6, which would move every volume by as much).
    fn z_of(&self, p_pa: f64, rho: f64) -> Option<f64> {
        let z = p_pa / (rho * R * self.t_k);
        (z.is_finite() && z > 0.0).then_some(z)
    }
}

/// The chosen root among `roots` (ascending); None where there is none.
fn pick(kind: CubicKind, root: RootChoice, roots: &[f64], big_a: f64, big_b: f64) -> Option<f64> {
    let (&lo, &hi) = (roots.first()?, roots.last()?);
    Some(match root {
        RootChoice::Liquid => lo,
        RootChoice::Vapour => hi,
        RootChoice::Stable if roots.len() == 1 => lo,
        RootChoice::Stable => {
            if g_residual(kind, lo, big_a, big_b) < g_residual(kind, hi, big_a, big_b) {
                lo
            } else {
                hi
            }
        }
    })
}

/// The roots of the cubic in Z above B, smallest first, without allocation.
fn z_roots(kind: CubicKind, big_a: f64, big_b: f64) -> ([f64; 3], usize) {
    let (c2, c1, c0) = cubic::z_coefficients(kind, big_a, big_b);
    let (all, m) = cubic::real_cubic_roots_fixed(c2, c1, c0);
    let mut out = [0.0; 3];
    let mut count = 0;
    for &z in &all[..m] {
        if z > big_b && !out[..count].iter().any(|o: &f64| (o - z).abs() <= 1e-12 * z.abs()) {
            out[count] = z;
            count += 1;
        }
    }
    out[..count].sort_by(f64::total_cmp);
    (out, count)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gas::Catalogue;
    use crate::thermo::Model;

    #[test]
    fn the_kernel_gives_the_fluids_fugacities() {
        let c = Catalogue::built_in();
        let ids = ["CH4", "C2H6", "C3H8", "n-C4H10", "N2", "CO2"];
        let gases: Vec<usize> = ids.iter().map(|id| c.index_of(id).unwrap()).collect();
        let x = [0.8, 0.08, 0.04, 0.02, 0.03, 0.03];
        for model in [Model::Pr, Model::Srk, Model::Rk, Model::Vdw] {
            let f = Fluid::new(&c, &gases, model).unwrap();
            for (t, p) in [(250.0, 20e5), (300.0, 150e5), (200.0, 5e5)] {
                let reference = f.ln_phi(t, p, &x).unwrap();
                let mut k = CubicAt::new(&f, t).unwrap();
                let mut out = [0.0; 6];
                k.ln_phi_into(p, &x, RootChoice::Stable, &mut out).unwrap();
                for (a, b) in out.iter().zip(&reference) {
                    assert!((a - b).abs() <= 1e-12 * b.abs().max(1.0), "{model:?} {t} {p}: {a} vs {b}");
                }
                // The liquid and vapour roots are those of the fluid's own solver.
                for liquid in [true, false] {
                    let (reference, _) = f.ln_phi_on(t, p, &x, liquid).unwrap();
                    let choice = if liquid { RootChoice::Liquid } else { RootChoice::Vapour };
                    k.ln_phi_into(p, &x, choice, &mut out).unwrap();
                    for (a, b) in out.iter().zip(&reference) {
                        assert!((a - b).abs() <= 1e-12 * b.abs().max(1.0));
                    }
                }
            }
        }
        assert!(CubicAt::new(&Fluid::new(&c, &gases, Model::Ideal).unwrap(), 300.0).is_none());
    }
}
