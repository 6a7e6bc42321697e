//! Phase stability and dew points from a cubic equation of state.
//!
//! The stability test is Michelsen's tangent-plane test (Fluid Phase Equilib. 9 (1982) 1),
//! solved by successive substitution from Wilson's K-values (Wilson, 1968) with a
//! vapour-like and a liquid-like trial phase ([`Fluid::stability`]). Dew points are the edges of the region
//! where the feed is unstable: at fixed pressure the dew temperature is the highest
//! temperature with an unstable feed (found by bracketing and bisection); the
//! cricondentherm is the largest dew temperature over pressure (golden-section search).

use crate::thermo::{Fluid, ThermoError};

/// Smallest mole fraction treated as present.
const TRACE: f64 = crate::thermo::phases::TRACE;

/// A fluid prepared for phase calculations: its critical constants bound the searches.
pub struct PhaseFluid<'a> {
    pub fluid: &'a Fluid,
    pub tc: Vec<f64>,
    pub pc: Vec<f64>,
    pub omega: Vec<f64>,
}

use crate::thermo::Model;

/// Feeds on which the envelope search is checked (label, ids, mole fractions, models):
/// the demo blends, the phase fixture's mixtures, and the hard cases (near-critical, nine
/// components, traces of heavy components, CO2-rich).
#[allow(clippy::type_complexity)]
pub const ENVELOPE_CASES: &[(&str, &[&str], &[f64], &[Model])] = &[
    ("propane-5-in-N2", &["C3H8", "N2"], &[0.05, 0.95], &[Model::Pr, Model::Srk]),
    ("butane-2-in-N2", &["n-C4H10", "N2"], &[0.02, 0.98], &[Model::Pr]),
    ("co2-30-in-N2", &["CO2", "N2"], &[0.3, 0.7], &[Model::Pr, Model::Srk]),
    (
        "natural-gas-9",
        &["CH4", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "N2", "CO2"],
        &[0.897, 0.05, 0.015, 0.003, 0.003, 0.001, 0.001, 0.02, 0.01],
        &[Model::Pr, Model::Srk],
    ),
    ("lpg-in-methane", &["C3H8", "n-C4H10", "CH4"], &[0.08, 0.03, 0.89], &[Model::Pr]),
    ("pentane-1-in-methane", &["n-C5H12", "CH4"], &[0.01, 0.99], &[Model::Pr]),
    ("co2-10-in-methane", &["CO2", "CH4"], &[0.1, 0.9], &[Model::Pr]),
    ("hexane-0.5-in-N2", &["n-C6H14", "N2"], &[0.005, 0.995], &[Model::Pr]),
    ("octane-0.1-in-N2", &["n-C8H18", "N2"], &[0.001, 0.999], &[Model::Pr]),
    ("decane-100ppm-in-methane", &["n-C10H22", "CH4"], &[1e-4, 0.9999], &[Model::Pr]),
    ("ethane-propane-methane", &["C2H6", "C3H8", "CH4"], &[0.1, 0.05, 0.85], &[Model::Pr]),
    ("near-critical-methane-ethane", &["CH4", "C2H6"], &[0.5, 0.5], &[Model::Pr]),
    ("co2-rich-with-N2", &["CO2", "N2"], &[0.8, 0.2], &[Model::Pr]),
    ("flue-gas", &["CO", "CH4", "CO2", "N2"], &[5e-4, 0.025, 0.15, 0.8245], &[Model::Pr]),
    ("laser-gas", &["CO2", "N2", "He"], &[0.045, 0.135, 0.82], &[Model::Pr]),
    ("h2s-co2-methane", &["H2S", "CO2", "CH4"], &[0.05, 0.05, 0.9], &[Model::Pr]),
    ("propane-20-in-N2", &["C3H8", "N2"], &[0.2, 0.8], &[Model::Pr, Model::Vdw, Model::Rk]),
];

impl<'a> PhaseFluid<'a> {
    /// The fluid with its critical constants.
    pub fn new(fluid: &'a Fluid) -> PhaseFluid<'a> {
        let (tc, pc, omega) = fluid.critical_constants();
        PhaseFluid { fluid, tc, pc, omega }
    }

    /// Whether the feed `z` splits into two phases at (T, P): Michelsen's tangent-plane
    /// test ([`Fluid::stability`]).
    pub fn unstable(&self, t_k: f64, p_pa: f64, z: &[f64]) -> Result<bool, ThermoError> {
        Ok(self.fluid.stability(t_k, p_pa, z)?.is_some())
    }

    /// Bubble temperature at `p_pa`, K: where the feed as a liquid is in equilibrium with an
    /// incipient vapour, Σ z_i K_i = 1 with K_i = φ_i(liquid z) / φ_i(vapour y) and
    /// y = z K / Σ z K (successive substitution from Wilson's K at each temperature),
    /// bracketed by walking up from `t_floor_k` and bisected. None where there is no dew point.
    pub fn bubble_temperature(&self, p_pa: f64, z: &[f64], t_floor_k: f64) -> Result<Option<f64>, ThermoError> {
        let Some(dew) = self.dew_temperature(p_pa, z, t_floor_k)? else { return Ok(None) };
        // ln Σ z K at T after the inner iteration; None when it collapses to K = 1.
        let excess = |t: f64| -> Result<Option<f64>, ThermoError> {
            let (ln_phi_l, _) = self.fluid.ln_phi_on(t, p_pa, z, true)?;
            let mut k: Vec<f64> = crate::thermo::phases::wilson(self.fluid, t, p_pa);
            for _ in 0..500 {
                let sum: f64 = z.iter().zip(&k).map(|(zi, ki)| zi * ki).sum();
                let y: Vec<f64> = z.iter().zip(&k).map(|(zi, ki)| zi * ki / sum).collect();
                let (ln_phi_v, _) = self.fluid.ln_phi_on(t, p_pa, &y, false)?;
                let mut change: f64 = 0.0;
                for i in 0..k.len() {
                    let new = (ln_phi_l[i] - ln_phi_v[i]).exp();
                    change = change.max((new.ln() - k[i].ln()).abs());
                    k[i] = new;
                }
                if k.iter().all(|ki| (ki - 1.0).abs() < 1e-7) {
                    return Ok(None);
                }
                if change < 1e-12 {
                    break;
                }
            }
            Ok(Some(z.iter().zip(&k).map(|(zi, ki)| zi * ki).sum::<f64>().ln()))
        };
        // Bracket from below: far below the bubble point Σ z K < 1 (the vapour pressures are
        // tiny); walk up in 3 % steps to the first temperature where it is not.
        // Start below Wilson's estimate (Σ z K_Wilson = 1, monotonic in T), clear of the
        // liquid–liquid splits that cubics show far below the bubble point.
        let wilson_sum = |t: f64| -> f64 {
            crate::thermo::phases::wilson(self.fluid, t, p_pa).iter().zip(z).map(|(k, zi)| k * zi).sum()
        };
        let (mut a, mut b) = (t_floor_k, dew);
        for _ in 0..60 {
            let mid = 0.5 * (a + b);
            if wilson_sum(mid) < 1.0 {
                a = mid;
            } else {
                b = mid;
            }
        }
        let mut lo = (0.85 * a).max(t_floor_k);
        let mut hi = lo;
        loop {
            hi *= 1.03;
            if hi >= dew {
                hi = dew;
                break;
            }
            // No distinct vapour root (None) is as far from boiling as Σ z K < 1.
            match excess(hi)? {
                Some(e) if e >= 0.0 => break,
                _ => lo = hi,
            }
        }
        for _ in 0..80 {
            let mid = 0.5 * (lo + hi);
            match excess(mid)? {
                Some(e) if e >= 0.0 => hi = mid,
                _ => lo = mid,
            }
            if hi - lo < 1e-7 {
                break;
            }
        }
        Ok(Some(0.5 * (lo + hi)))
    }

    /// Dew temperature at `p_pa`: the highest temperature at which the feed is unstable,
    /// K. None where the feed is stable from `t_floor_k` up (above the cricondenbar, or a
    /// gas that does not condense in the range).
    pub fn dew_temperature(&self, p_pa: f64, z: &[f64], t_floor_k: f64) -> Result<Option<f64>, ThermoError> {
        let t_top = self.tc.iter().zip(z).filter(|(_, zi)| **zi > TRACE).map(|(t, _)| *t).fold(0.0, f64::max) * 1.6;
        let mut hi = t_top;
        if self.unstable(hi, p_pa, z)? {
            return Ok(Some(hi));
        }
        // Walk down in 1.5 % steps until the feed splits.
        let mut lo = hi;
        loop {
            lo *= 0.985;
            if lo < t_floor_k {
                return Ok(None);
            }
            if self.unstable(lo, p_pa, z)? {
                break;
            }
            hi = lo;
        }
        for _ in 0..40 {
            let mid = 0.5 * (lo + hi);
            if self.unstable(mid, p_pa, z)? {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo < 1e-6 {
                break;
            }
        }
        Ok(Some(0.5 * (lo + hi)))
    }

    /// The cricondentherm and the pressure at which it lies, searched from 0.5 to
    /// `p_max_pa`. None when no dew point exists above `t_floor_k`.
    pub fn cricondentherm(&self, z: &[f64], t_floor_k: f64, p_max_pa: f64) -> Result<Option<(f64, f64)>, ThermoError> {
        let (lo_ln, hi_ln) = (0.5e5f64.ln(), (p_max_pa * 0.999_999).ln());
        let n = 24;
        let mut best: Option<(f64, f64, usize)> = None;
        let grid: Vec<f64> = (0..n).map(|i| lo_ln + (hi_ln - lo_ln) * i as f64 / (n - 1) as f64).collect();
        for (i, &lp) in grid.iter().enumerate() {
            match self.dew_temperature(lp.exp(), z, t_floor_k)? {
                Some(t) if best.is_none_or(|b| t > b.0) => best = Some((t, lp, i)),
                Some(_) => {}
                // Above the cricondenbar: no dew point at any higher pressure either.
                None if best.is_some() => break,
                None => {}
            }
        }
        let Some((_, _, i)) = best else { return Ok(None) };
        // Golden-section refinement between the neighbours of the best grid point.
        let mut a = grid[i.saturating_sub(1)];
        let mut b = grid[(i + 1).min(n - 1)];
        let g = (5f64.sqrt() - 1.0) / 2.0;
        let dew =
            |lp: f64| -> Result<f64, ThermoError> { Ok(self.dew_temperature(lp.exp(), z, t_floor_k)?.unwrap_or(0.0)) };
        let mut c = b - g * (b - a);
        let mut d = a + g * (b - a);
        let (mut fc, mut fd) = (dew(c)?, dew(d)?);
        for _ in 0..40 {
            if fc > fd {
                b = d;
                d = c;
                fd = fc;
                c = b - g * (b - a);
                fc = dew(c)?;
            } else {
                a = c;
                c = d;
                fc = fd;
                d = a + g * (b - a);
                fd = dew(d)?;
            }
            if b - a < 1e-5 {
                break;
            }
        }
        let (t, lp) = if fc > fd { (fc, c) } else { (fd, d) };
        let t_grid = best.map_or(0.0, |b| b.0);
        Ok(Some(if t >= t_grid { (t, lp.exp()) } else { (t_grid, grid[i].exp()) }))
    }

    /// The pressure range at `t_k` in which the feed splits: (lower, upper) dew or bubble
    /// pressures, Pa. `seed_pa` is a pressure likely inside (the cricondentherm's).
    pub fn unstable_pressures(
        &self,
        t_k: f64,
        z: &[f64],
        seed_pa: Option<f64>,
        p_max_pa: f64,
    ) -> Result<Option<(f64, f64)>, ThermoError> {
        let (lo_ln, hi_ln) = (0.01e5f64.ln(), (p_max_pa * 0.999_999).ln());
        let n = 60;
        let mut points: Vec<f64> = (0..n).map(|i| lo_ln + (hi_ln - lo_ln) * i as f64 / (n - 1) as f64).collect();
        if let Some(s) = seed_pa {
            points.push(s.ln());
            points.sort_by(f64::total_cmp);
        }
        let mut flags = Vec::with_capacity(points.len());
        for &lp in &points {
            flags.push(self.unstable(t_k, lp.exp(), z)?);
        }
        let Some(first) = flags.iter().position(|f| *f) else { return Ok(None) };
        let last = flags.iter().rposition(|f| *f).unwrap_or(first);
        let refine = |mut stable: f64, mut split: f64| -> Result<f64, ThermoError> {
            for _ in 0..50 {
                let mid = 0.5 * (stable + split);
                if self.unstable(t_k, mid.exp(), z)? {
                    split = mid;
                } else {
                    stable = mid;
                }
                if (stable - split).abs() < 1e-7 {
                    break;
                }
            }
            Ok((0.5 * (stable + split)).exp())
        };
        let lower = if first == 0 { points[0].exp() } else { refine(points[first - 1], points[first])? };
        let upper = if last + 1 >= points.len() { points[last].exp() } else { refine(points[last + 1], points[last])? };
        Ok(Some((lower, upper)))
    }
}
