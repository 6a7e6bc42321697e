//! Phase stability and dew points from a cubic equation of state.
//!
//! The stability test is Michelsen's tangent-plane test (Fluid Phase Equilib. 9 (1982) 1),
//! solved by successive substitution from Wilson's K-values (Wilson, 1968) with a
//! vapour-like and a liquid-like trial phase. Dew points are the edges of the region
//! where the feed is unstable: at fixed pressure the dew temperature is the highest
//! temperature with an unstable feed (found by bracketing and bisection); the
//! cricondentherm is the largest dew temperature over pressure (golden-section search).

use crate::thermo::{Fluid, ThermoError};

/// Smallest mole fraction treated as present.
const TRACE: f64 = 1e-12;

/// Wilson's K-value estimate, K_i = (Pc_i/P) exp(5.373 (1 + ω_i)(1 − Tc_i/T)).
fn wilson(tc: &[f64], pc: &[f64], omega: &[f64], t_k: f64, p_pa: f64) -> Vec<f64> {
    (0..tc.len()).map(|i| pc[i] / p_pa * (5.373 * (1.0 + omega[i]) * (1.0 - tc[i] / t_k)).exp()).collect()
}

/// A fluid prepared for phase calculations: its critical constants for Wilson's estimate.
pub struct PhaseFluid<'a> {
    pub fluid: &'a Fluid,
    pub tc: Vec<f64>,
    pub pc: Vec<f64>,
    pub omega: Vec<f64>,
}

impl<'a> PhaseFluid<'a> {
    /// Whether the feed `z` splits into two phases at (T, P).
    pub fn unstable(&self, t_k: f64, p_pa: f64, z: &[f64]) -> Result<bool, ThermoError> {
        let ln_phi_z = self.fluid.ln_phi(t_k, p_pa, z)?;
        let d: Vec<f64> = z
            .iter()
            .zip(&ln_phi_z)
            .map(|(zi, lp)| if *zi > TRACE { zi.ln() + lp } else { f64::NEG_INFINITY })
            .collect();
        let k = wilson(&self.tc, &self.pc, &self.omega, t_k, p_pa);
        for vapour_like in [true, false] {
            let mut w: Vec<f64> =
                z.iter().zip(&k).map(|(zi, ki)| if vapour_like { zi * ki } else { zi / ki }).collect();
            for _ in 0..400 {
                let sum: f64 = w.iter().sum();
                if !(sum.is_finite() && sum > 0.0) {
                    break;
                }
                let x: Vec<f64> = w.iter().map(|wi| wi / sum).collect();
                let ln_phi_x = self.fluid.ln_phi(t_k, p_pa, &x)?;
                let mut change: f64 = 0.0;
                let mut distance: f64 = 0.0;
                for i in 0..w.len() {
                    if z[i] <= TRACE {
                        w[i] = 0.0;
                        continue;
                    }
                    let ln_w = d[i] - ln_phi_x[i];
                    change = change.max((ln_w - w[i].ln()).abs());
                    distance += (ln_w - z[i].ln()).powi(2);
                    w[i] = ln_w.exp();
                }
                if distance < 1e-8 {
                    break; // converged to the feed itself: no new phase this way
                }
                if change < 1e-10 {
                    if w.iter().sum::<f64>() > 1.0 + 1e-8 {
                        return Ok(true);
                    }
                    break;
                }
            }
        }
        Ok(false)
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
            if hi - lo < 1e-5 {
                break;
            }
        }
        Ok(Some(0.5 * (lo + hi)))
    }

    /// The cricondentherm and the pressure at which it lies, searched from 0.5 to
    /// `p_max_pa`. None when no dew point exists above `t_floor_k`.
    pub fn cricondentherm(&self, z: &[f64], t_floor_k: f64, p_max_pa: f64) -> Result<Option<(f64, f64)>, ThermoError> {
        let (lo_ln, hi_ln) = (0.5e5f64.ln(), p_max_pa.ln());
        let n = 24;
        let mut best: Option<(f64, f64, usize)> = None;
        let grid: Vec<f64> = (0..n).map(|i| lo_ln + (hi_ln - lo_ln) * i as f64 / (n - 1) as f64).collect();
        for (i, &lp) in grid.iter().enumerate() {
            if let Some(t) = self.dew_temperature(lp.exp(), z, t_floor_k)? {
                if best.is_none_or(|b| t > b.0) {
                    best = Some((t, lp, i));
                }
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
        let (lo_ln, hi_ln) = (0.01e5f64.ln(), p_max_pa.ln());
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
