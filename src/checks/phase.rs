//! Phase stability and the phase envelope from a cubic equation of state.
//!
//! The stability test is Michelsen's tangent-plane test (Fluid Phase Equilib. 9 (1982) 1):
//! successive substitution towards the stationary points of the tangent-plane distance
//! from a vapour-like and a liquid-like trial phase (Wilson's K-values, Wilson 1968). At a
//! stationary point W the distance is tm = 1 − Σ W, so ln Σ W is a continuous measure of
//! how far the feed is from splitting: positive inside the envelope, zero on it, negative
//! just outside (where the stationary point still exists). The envelope is traced with it:
//! each dew point is a root of ln Σ W in T at fixed P, found by Newton's method from the
//! neighbouring dew point and its incipient liquid (continuation); where Newton fails it
//! is bracketed and found by regula falsi (Illinois), with bisection where the trial falls
//! onto the feed itself. The cricondentherm is the largest dew temperature over ln P, from
//! a grid refined by Brent's method. The same judgement as a
//! yes/no verdict is [`Fluid::stability`].

// Indexed loops over the components read as the formulas do.
#![allow(clippy::needless_range_loop)]

use crate::thermo::kernel::{Kernel, RootChoice};
use crate::thermo::phases::{wilson, Stationary, TangentPlane, UNSTABLE_SUM};
use crate::thermo::{Fluid, ThermoError};

/// Smallest mole fraction treated as present.
const TRACE: f64 = crate::thermo::phases::TRACE;

/// A fluid prepared for phase calculations: its critical temperatures bound the searches.
pub struct PhaseFluid<'a> {
    pub fluid: &'a Fluid,
    pub tc: Vec<f64>,
}

impl<'a> PhaseFluid<'a> {
    /// The fluid with its critical constants.
    pub fn new(fluid: &'a Fluid) -> PhaseFluid<'a> {
        PhaseFluid { fluid, tc: fluid.critical_temperatures() }
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
        // The model's own fugacities (a cubic's, or a Helmholtz model's), liquid and vapour
        // branches.
        let no_root = || self.fluid.no_root();
        let kernel = std::cell::RefCell::new(
            Kernel::new(self.fluid, t_floor_k).ok_or(ThermoError::NoFugacity(self.fluid.model()))?,
        );
        let ln_phi = |t: f64, x: &[f64], root: RootChoice| -> Result<Vec<f64>, ThermoError> {
            let mut k = kernel.borrow_mut();
            k.set_temperature(t);
            let mut out = vec![0.0; x.len()];
            k.ln_phi_into(p_pa, x, root, &mut out).ok_or_else(no_root)?;
            Ok(out)
        };
        let excess = |t: f64| -> Result<Option<f64>, ThermoError> {
            let ln_phi_l = ln_phi(t, z, RootChoice::Liquid)?;
            let mut k: Vec<f64> = crate::thermo::phases::wilson(self.fluid, t, p_pa);
            for _ in 0..500 {
                let sum: f64 = z.iter().zip(&k).map(|(zi, ki)| zi * ki).sum();
                let y: Vec<f64> = z.iter().zip(&k).map(|(zi, ki)| zi * ki / sum).collect();
                let ln_phi_v = ln_phi(t, &y, RootChoice::Vapour)?;
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
        // One pressure, no neighbour to start from: the full walk from the top, which finds
        // the highest window even where the envelope has two.
        let mut tracer = Tracer::new(self, z)?;
        Ok(tracer.dew_from_top(p_pa, t_floor_k)?.map(|(t, _)| t))
    }

    /// The cricondentherm and the pressure at which it lies, searched from 0.5 bar to
    /// `p_max_pa`. None when no dew point exists above `t_floor_k`.
    ///
    /// The last [`KEPT_ANSWERS`] answers are kept for the process (by the fluid's identity,
    /// the composition and the range, bit for bit): an edit that leaves the composition
    /// alone (a fill pressure, a cylinder, a temperature) and a library of recipes sharing
    /// compositions do not trace the envelope again.
    pub fn cricondentherm(&self, z: &[f64], t_floor_k: f64, p_max_pa: f64) -> Result<Option<(f64, f64)>, ThermoError> {
        kept_or(Kind::Cricondentherm, self.fluid, z, &[t_floor_k, p_max_pa], || {
            Tracer::new(self, z)?.settled_at(DEW_SETTLED).cricondentherm(t_floor_k, p_max_pa)
        })
    }

    /// The pressure range at `t_k` in which the feed splits: (lower, upper) dew or bubble
    /// pressures, Pa. `seed_pa` is a pressure likely inside (the cricondentherm's). Kept
    /// for the process as [`PhaseFluid::cricondentherm`]'s answers are.
    pub fn unstable_pressures(
        &self,
        t_k: f64,
        z: &[f64],
        seed_pa: Option<f64>,
        p_max_pa: f64,
    ) -> Result<Option<(f64, f64)>, ThermoError> {
        kept_or(Kind::UnstablePressures, self.fluid, z, &[t_k, seed_pa.unwrap_or(f64::NAN), p_max_pa], || {
            Tracer::new(self, z)?.unstable_pressures(t_k, seed_pa, p_max_pa)
        })
    }
}

/// Where the cricondentherm's stability evaluations count a stationary point as reached:
/// 1e-7 in ln W away from the split margin (1e-10 near it), which puts the measure within
/// ~1e-12 where the substitution converges at a rate of 0.9 (over the benchmark panel the
/// cricondentherms within 6e-12 K of a 1e-10 criterion). The unstable pressures keep
/// 1e-10: their upper end lies near the critical point, where the trial phases carried from
/// point to point decide which stationary point is found.
const DEW_SETTLED: f64 = 1e-7;

/// How many envelope answers the process keeps (see [`PhaseFluid::cricondentherm`]).
pub const KEPT_ANSWERS: usize = 512;

/// Which envelope answer is kept.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Kind {
    Cricondentherm,
    UnstablePressures,
}

/// What a kept envelope answer is of: what, the fluid's identity, the composition and the
/// arguments' bits.
type KeptKey = (Kind, std::sync::Arc<str>, Vec<u64>);

/// The kept envelope answers.
static KEPT: crate::kept::Kept<KeptKey, Option<(f64, f64)>> = crate::kept::Kept::new(KEPT_ANSWERS);

/// Forget the kept envelope answers (see [`crate::speed::forget_kept_answers`]).
pub fn forget_kept() {
    KEPT.clear();
}

/// The kept answer for these arguments, else `compute`'s (kept when it is one).
fn kept_or(
    kind: Kind,
    fluid: &Fluid,
    z: &[f64],
    args: &[f64],
    compute: impl FnOnce() -> Result<Option<(f64, f64)>, ThermoError>,
) -> Result<Option<(f64, f64)>, ThermoError> {
    let key = (kind, fluid.identity(), z.iter().chain(args).map(|v| v.to_bits()).collect::<Vec<u64>>());
    KEPT.get_or_try(key, compute)
}

/// ln Σ W above which the feed counts as splitting: the stability test's margin (its
/// Σ W > 1 + 1e-8, whose ln is 1e-8 to 5e-17).
const SPLIT: f64 = UNSTABLE_SUM;

/// Where the search stands at one temperature: the measure and the trial phases found.
#[derive(Debug, Clone)]
struct Point {
    t_k: f64,
    /// max ln Σ W over the non-trivial stationary points; None when both trials fall onto
    /// the feed (or do not settle): stable, with no measure of how far.
    measure: Option<f64>,
    /// The trial phases to start the next evaluation from (liquid-like, vapour-like).
    trials: [Vec<f64>; 2],
}

impl Point {
    fn splits(&self) -> bool {
        self.measure.is_some_and(|m| m > SPLIT)
    }
}

/// The envelope search for one feed: the fluid, the feed and scratch space.
struct Tracer<'a> {
    phase: &'a PhaseFluid<'a>,
    /// The cubic, moved to each temperature asked.
    cubic: Kernel,
    /// Where each stability evaluation's stationary points count as reached (see
    /// [`TangentPlane::settled_at`]).
    settled: f64,
    z: &'a [f64],
    ln_z: Vec<f64>,
    ln_phi: Vec<f64>,
    x: Vec<f64>,
}

/// Where a walk up in temperature from a point inside the envelope ends.
enum Walk {
    /// The last point inside and the first outside.
    Bracket(Point, Point),
    /// The feed still splits at the top of the search.
    SplitsAtTop(Point),
}

impl<'a> Tracer<'a> {
    fn new(phase: &'a PhaseFluid<'a>, z: &'a [f64]) -> Result<Tracer<'a>, ThermoError> {
        let n = z.len();
        let cubic = Kernel::new(phase.fluid, 300.0).ok_or(ThermoError::NoFugacity(phase.fluid.model()))?;
        Ok(Tracer {
            phase,
            cubic,
            settled: 1e-10,
            z,
            ln_z: z.iter().map(|v| if *v > TRACE { v.ln() } else { f64::NEG_INFINITY }).collect(),
            ln_phi: vec![0.0; n],
            x: vec![0.0; n],
        })
    }

    /// The same with stationary points settled at `settled` away from the split margin.
    fn settled_at(self, settled: f64) -> Tracer<'a> {
        Tracer { settled, ..self }
    }

    fn highest_tc(&self) -> f64 {
        self.phase.tc.iter().zip(self.z).filter(|(_, zi)| **zi > TRACE).map(|(t, _)| *t).fold(0.0, f64::max)
    }

    /// A start for the first dew point at `p_pa`: the temperature where Σ z/K_Wilson = 1
    /// (bisected; it falls with T), and the trial phases from Wilson's K there.
    fn wilson_start(&self, p_pa: f64, t_floor_k: f64) -> Point {
        let top = self.highest_tc() * 1.6;
        let sum = |t: f64| -> f64 { self.z.iter().zip(wilson(self.phase.fluid, t, p_pa)).map(|(zi, k)| zi / k).sum() };
        let (mut lo, mut hi) = (t_floor_k.max(1.0), top);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if sum(mid) > 1.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let t = 0.5 * (lo + hi);
        Point { t_k: t, measure: None, trials: self.wilson_trials(t, p_pa) }
    }

    fn wilson_trials(&self, t_k: f64, p_pa: f64) -> [Vec<f64>; 2] {
        let k = wilson(self.phase.fluid, t_k, p_pa);
        [
            self.z.iter().zip(&k).map(|(zi, ki)| zi / ki).collect(),
            self.z.iter().zip(&k).map(|(zi, ki)| zi * ki).collect(),
        ]
    }

    /// Evaluate the measure at (T, P), each trial started from `from`'s.
    fn evaluate(&mut self, t_k: f64, p_pa: f64, from: &[Vec<f64>; 2]) -> Result<Point, ThermoError> {
        self.cubic.set_temperature(t_k);
        let no_root = || self.phase.fluid.no_root();
        let mut tpd = TangentPlane::new(&mut self.cubic, p_pa, self.z).ok_or_else(no_root)?.settled_at(self.settled);
        let wilson = self.wilson_trials(t_k, p_pa);
        let mut measure: Option<f64> = None;
        let mut trials = from.clone();
        for (k, w) in trials.iter_mut().enumerate() {
            match tpd.stationary(&mut self.cubic, w, None) {
                Some(Stationary::Point(m)) => measure = Some(measure.map_or(m, |v| v.max(m))),
                // A trial that fell onto the feed restarts from Wilson's next time.
                Some(Stationary::Feed) => *w = wilson[k].clone(),
                Some(Stationary::Unsettled | Stationary::Below) | None => {}
            }
        }
        Ok(Point { t_k, measure, trials })
    }

    /// From a point inside, up in doubling steps (the first `step`) to the first point
    /// outside, or to the top of the search.
    fn walk_up(&mut self, p_pa: f64, mut inside: Point, mut step: f64, top: f64) -> Result<Walk, ThermoError> {
        loop {
            let t = (inside.t_k + step).min(top);
            let next = self.evaluate(t, p_pa, &inside.trials)?;
            if !next.splits() {
                return Ok(Walk::Bracket(inside, next));
            }
            if t >= top {
                return Ok(Walk::SplitsAtTop(next));
            }
            inside = next;
            step *= 2.0;
        }
    }

    /// The dew temperature at `p_pa` from a start (a nearby dew point, or Wilson's): the
    /// highest temperature at which the feed splits. Returns it with the point just inside.
    fn dew_temperature(
        &mut self,
        p_pa: f64,
        start: Point,
        t_floor_k: f64,
    ) -> Result<Option<(f64, Point)>, ThermoError> {
        let top = self.highest_tc() * 1.6;
        let t0 = start.t_k.clamp(t_floor_k, top);
        // Newton from a nearby dew point first; the bracketing search where it fails.
        if let Some((t, w)) = self.dew_newton(p_pa, t0, &start.trials[0]) {
            if t > t_floor_k && t < top && t >= 0.9 * t0 {
                let vapour = self.wilson_trials(t, p_pa)[1].clone();
                return Ok(Some((t, Point { t_k: t, measure: Some(0.0), trials: [w, vapour] })));
            }
        }
        let first = self.evaluate(t0, p_pa, &start.trials)?;
        let step0 = 0.002 * t0;
        let (mut inside, mut outside) = if first.splits() {
            // Walk up until the feed no longer splits.
            match self.walk_up(p_pa, first, step0, top)? {
                Walk::Bracket(inside, outside) => (inside, outside),
                Walk::SplitsAtTop(point) => return Ok(Some((top, point))),
            }
        } else {
            // Outside. Where the measure says the envelope lies above (it rises with T),
            // walk up into it first; else walk down until the feed splits. Where the walk
            // reaches the floor, fall back to the full walk from the top.
            let mut outside = first;
            let mut step = step0;
            let mut entered = None;
            if let Some(m0) = outside.measure {
                let mut last = m0;
                let mut probe_step = step0;
                let mut from = outside.clone();
                for _ in 0..12 {
                    let t = (from.t_k + probe_step).min(top);
                    let next = self.evaluate(t, p_pa, &from.trials)?;
                    if next.splits() {
                        entered = Some(next);
                        break;
                    }
                    match next.measure {
                        Some(m) if m > last && t < top => {
                            last = m;
                            from = next;
                            probe_step *= 1.5;
                        }
                        _ => break,
                    }
                }
            }
            if let Some(inside) = entered {
                // Inside from below: on up to where the feed stops splitting.
                return match self.walk_up(p_pa, inside, step0, top)? {
                    Walk::Bracket(mut inside, mut outside) => Ok(Some(self.refine(p_pa, &mut inside, &mut outside)?)),
                    Walk::SplitsAtTop(point) => Ok(Some((top, point))),
                };
            }
            loop {
                let t = outside.t_k - step;
                if t < t_floor_k {
                    return self.dew_from_top(p_pa, t_floor_k);
                }
                let next = self.evaluate(t, p_pa, &outside.trials)?;
                if next.splits() {
                    break (next, outside);
                }
                outside = next;
                step = (step * 2.0).min(0.05 * t);
            }
        };
        let (t, point) = self.refine(p_pa, &mut inside, &mut outside)?;
        // A dew point far below the start may lie under a window the walk stepped over
        // (near the cricondenbar the window narrows): the full walk decides.
        if t < 0.9 * t0 {
            return self.dew_from_top(p_pa, t_floor_k);
        }
        Ok(Some((t, point)))
    }

    /// The dew temperature at `p_pa` by Newton's method on ln Σ W in T, the incipient
    /// liquid W updated by one substitution per step (at a stationary point the derivative
    /// at fixed W is the total one), from `t0` and the trial `w0`. None when it falls onto
    /// the feed, does not settle within 60 steps, or settles where the feed splits above
    /// (∂ ln Σ W/∂T > 0: a lower branch of the envelope, not the dew temperature).
    fn dew_newton(&mut self, p_pa: f64, t0: f64, w0: &[f64]) -> Option<(f64, Vec<f64>)> {
        let n = self.z.len();
        let mut t = t0;
        let mut w = w0.to_vec();
        let mut ln_w = vec![0.0; n];
        let mut ln_w_h = vec![0.0; n];
        let mut phi_z = vec![0.0; n];
        let mut slope = f64::NAN;
        for step in 0..60 {
            let sum: f64 = w.iter().sum();
            if !(sum.is_finite() && sum > 0.0) {
                return None;
            }
            for i in 0..n {
                self.x[i] = w[i] / sum;
            }
            let h = 1e-5 * t;
            let mut measure = [0.0; 2];
            // The slope is renewed on the first steps and every third after (a chord
            // method): it changes little once T is close.
            let renew = step < 2 || step % 3 == 0;
            for (k, tk) in [t, t + h].into_iter().enumerate().take(if renew { 2 } else { 1 }) {
                self.cubic.set_temperature(tk);
                self.cubic.ln_phi_into(p_pa, self.z, RootChoice::Stable, &mut phi_z)?;
                self.cubic.ln_phi_into(p_pa, &self.x, RootChoice::Stable, &mut self.ln_phi)?;
                let out = if k == 0 { &mut ln_w } else { &mut ln_w_h };
                let mut total = 0.0;
                for i in 0..n {
                    out[i] =
                        if self.z[i] > TRACE { self.ln_z[i] + phi_z[i] - self.ln_phi[i] } else { f64::NEG_INFINITY };
                    total += out[i].exp();
                }
                measure[k] = total.ln();
            }
            let distance: f64 = (0..n).filter(|&i| self.z[i] > TRACE).map(|i| (ln_w[i] - self.ln_z[i]).powi(2)).sum();
            if distance < 1e-8 {
                return None;
            }
            if renew {
                slope = (measure[1] - measure[0]) / h;
            }
            if !(slope < 0.0) {
                return None;
            }
            let mut change: f64 = 0.0;
            for i in 0..n {
                let new = ln_w[i].exp();
                if self.z[i] > TRACE {
                    change = change.max((ln_w[i] - w[i].ln()).abs());
                }
                w[i] = if self.z[i] > TRACE { new } else { 0.0 };
            }
            let dt = (-measure[0] / slope).clamp(-0.05 * t, 0.05 * t);
            t += dt;
            // The measure is stationary in W: an error ε in ln W moves it by ~ε². The last
            // substitution's change of 1e-6 leaves ε ≤ 1e-6 r/(1 − r) at a convergence rate r,
            // so the temperature within ~1e-8 K even at r = 0.99 near a critical point (over
            // the benchmark panel within 6e-7 K of a 1e-8 criterion, in 15–20 % less time).
            if dt.abs() < 1e-10 * t && change < 1e-6 {
                let sum: f64 = w.iter().sum();
                return Some((t, w.iter().map(|v| v / sum).collect()));
            }
        }
        None
    }

    /// The first release's walk: down from 1.6 × the highest Tc in 1.5 % steps.
    fn dew_from_top(&mut self, p_pa: f64, t_floor_k: f64) -> Result<Option<(f64, Point)>, ThermoError> {
        let top = self.highest_tc() * 1.6;
        let mut outside = self.evaluate(top, p_pa, &self.wilson_trials(top, p_pa))?;
        if outside.splits() {
            return Ok(Some((top, outside)));
        }
        let mut t = top;
        loop {
            t *= 0.985;
            if t < t_floor_k {
                return Ok(None);
            }
            let next = self.evaluate(t, p_pa, &self.wilson_trials(t, p_pa))?;
            if next.splits() {
                let mut inside = next;
                return Ok(Some(self.refine(p_pa, &mut inside, &mut outside)?));
            }
            outside = next;
        }
    }

    /// Between a point inside (splits) and one outside, the temperature where the measure
    /// crosses the split threshold: regula falsi (Illinois) where both ends have a
    /// measure, bisection where the outer one has none; to 1e-7 K.
    fn refine(&mut self, p_pa: f64, inside: &mut Point, outside: &mut Point) -> Result<(f64, Point), ThermoError> {
        let mut weight_in = 1.0;
        let mut weight_out = 1.0;
        let mut last_side = 0i8;
        for _ in 0..100 {
            if (outside.t_k - inside.t_k).abs() < 1e-7 {
                break;
            }
            let t = match (inside.measure, outside.measure) {
                (Some(fi), Some(fo)) => {
                    let (fi, fo) = ((fi - SPLIT) * weight_in, (fo - SPLIT) * weight_out);
                    let t = inside.t_k + (outside.t_k - inside.t_k) * fi / (fi - fo);
                    let (lo, hi) = (inside.t_k.min(outside.t_k), inside.t_k.max(outside.t_k));
                    if t > lo && t < hi {
                        t
                    } else {
                        0.5 * (inside.t_k + outside.t_k)
                    }
                }
                _ => 0.5 * (inside.t_k + outside.t_k),
            };
            let next = self.evaluate(t, p_pa, &inside.trials)?;
            if next.splits() {
                *inside = next;
                if last_side == 1 {
                    weight_out *= 0.5;
                }
                weight_in = 1.0;
                last_side = 1;
            } else {
                *outside = next;
                if last_side == -1 {
                    weight_in *= 0.5;
                }
                weight_out = 1.0;
                last_side = -1;
            }
            if inside.measure.is_some_and(|m| (m - SPLIT).abs() < 1e-13) {
                return Ok((inside.t_k, inside.clone()));
            }
        }
        Ok((0.5 * (inside.t_k + outside.t_k), inside.clone()))
    }

    fn cricondentherm(&mut self, t_floor_k: f64, p_max_pa: f64) -> Result<Option<(f64, f64)>, ThermoError> {
        let (lo_ln, hi_ln) = (0.5e5f64.ln(), (p_max_pa * 0.999_999).ln());
        let n = 24;
        let grid: Vec<f64> = (0..n).map(|i| lo_ln + (hi_ln - lo_ln) * i as f64 / (n - 1) as f64).collect();
        let mut best: Option<(f64, usize, Point)> = None;
        let mut previous: Option<Point> = None;
        // The last two dew points (ln P, T), to start each next one on their line.
        let mut line: Vec<(f64, f64)> = Vec::new();
        let mut falling = 0;
        for (i, &lp) in grid.iter().enumerate() {
            let start = match previous.take() {
                Some(mut p) => {
                    if let [(l0, t0), (l1, t1)] = line[line.len().saturating_sub(2)..] {
                        let predicted = t1 + (t1 - t0) / (l1 - l0) * (lp - l1);
                        // Along the line, but not past the previous point by more than 5 %.
                        p.t_k = predicted.clamp(0.95 * t1, 1.05 * t1);
                    }
                    p
                }
                None => self.wilson_start(lp.exp(), t_floor_k),
            };
            match self.dew_temperature(lp.exp(), start, t_floor_k)? {
                Some((t, point)) => {
                    if best.as_ref().is_none_or(|b| t > b.0) {
                        best = Some((t, i, point.clone()));
                        falling = 0;
                    } else {
                        falling += 1;
                    }
                    previous = Some(Point { t_k: t, ..point });
                    line.push((lp, t));
                    // A point below the highest: past the maximum of
                    // the dew curve (it has one; the bracket is the best point's neighbours).
                    if falling >= 1 {
                        break;
                    }
                }
                // Above the cricondenbar: no dew point at any higher pressure either.
                None if best.is_some() => break,
                None => {}
            }
        }
        let Some((t_grid, i, point)) = best else { return Ok(None) };
        // Brent's method for the maximum between the neighbours of the best grid point,
        // each dew point started from the best one found so far.
        let (a, b) = (grid[i.saturating_sub(1)], grid[(i + 1).min(n - 1)]);
        let mut seed = point;
        let mut dew = |lp: f64| -> Result<f64, ThermoError> {
            let start = seed.clone();
            // Started from the highest dew point so far: a lower one may lie on another
            // window of the envelope.
            Ok(match self.dew_temperature(lp.exp(), start, t_floor_k)? {
                Some((t, p)) => {
                    if t > seed.t_k {
                        seed = Point { t_k: t, ..p };
                    }
                    t
                }
                None => 0.0,
            })
        };
        // 1e-3 in ln P puts the temperature of the flat maximum within 1e-5 K.
        let (lp, t) = brent_max(&mut dew, a, grid[i], b, t_grid, 1e-3)?;
        Ok(Some(if t >= t_grid { (t, lp.exp()) } else { (t_grid, grid[i].exp()) }))
    }

    fn unstable_pressures(
        &mut self,
        t_k: f64,
        seed_pa: Option<f64>,
        p_max_pa: f64,
    ) -> Result<Option<(f64, f64)>, ThermoError> {
        let (lo_ln, hi_ln) = (0.01e5f64.ln(), (p_max_pa * 0.999_999).ln());
        // 30 points (a factor of 1.5 in pressure apart), and the seed: each boundary is
        // then refined to 1e-7 in ln P.
        let n = 30;
        let mut points: Vec<f64> = (0..n).map(|i| lo_ln + (hi_ln - lo_ln) * i as f64 / (n - 1) as f64).collect();
        if let Some(s) = seed_pa {
            points.push(s.ln());
            points.sort_by(f64::total_cmp);
        }
        // The grid's verdicts, each point started from the one before.
        let mut trials = self.wilson_trials(t_k, points[0].exp());
        let mut at: Vec<Point> = Vec::with_capacity(points.len());
        for &lp in &points {
            let p = self.evaluate(t_k, lp.exp(), &trials)?;
            trials = p.trials.clone();
            at.push(p);
        }
        let Some(first) = at.iter().position(Point::splits) else { return Ok(None) };
        let last = at.iter().rposition(Point::splits).unwrap_or(first);
        let mut refine = |stable: usize, split: usize| -> Result<f64, ThermoError> {
            let (mut out_ln, mut in_ln) = (points[stable], points[split]);
            let (mut out_m, mut in_m) = (at[stable].measure, at[split].measure);
            let mut trials = at[split].trials.clone();
            // Regula falsi (Illinois) where both ends have a measure, bisection where not.
            let (mut w_in, mut w_out) = (1.0, 1.0);
            let mut side = 0i8;
            for _ in 0..100 {
                if (out_ln - in_ln).abs() < 1e-7 {
                    break;
                }
                let mid = match (in_m, out_m) {
                    (Some(fi), Some(fo)) => {
                        let (a, b) = ((fi - SPLIT) * w_in, (fo - SPLIT) * w_out);
                        let lp = in_ln + (out_ln - in_ln) * a / (a - b);
                        let (lo, hi) = (in_ln.min(out_ln), in_ln.max(out_ln));
                        if lp > lo && lp < hi {
                            lp
                        } else {
                            0.5 * (lo + hi)
                        }
                    }
                    _ => 0.5 * (in_ln + out_ln),
                };
                let p = self.evaluate(t_k, mid.exp(), &trials)?;
                if p.splits() {
                    in_ln = mid;
                    in_m = p.measure;
                    trials = p.trials;
                    w_in = 1.0;
                    if side == 1 {
                        w_out *= 0.5;
                    }
                    side = 1;
                } else {
                    out_ln = mid;
                    out_m = p.measure;
                    w_out = 1.0;
                    if side == -1 {
                        w_in *= 0.5;
                    }
                    side = -1;
                }
                if in_m.is_some_and(|m| (m - SPLIT).abs() < 1e-13) {
                    return Ok(in_ln.exp());
                }
            }
            Ok((0.5 * (out_ln + in_ln)).exp())
        };
        let lower = if first == 0 { points[0].exp() } else { refine(first - 1, first)? };
        let upper = if last + 1 >= points.len() { points[last].exp() } else { refine(last + 1, last)? };
        Ok(Some((lower, upper)))
    }
}

/// The maximum of `f` on [a, c] bracketed by b (f(b) = fb at least as large as at a and c),
/// by Brent's method (parabolic steps, golden sections where they fail), to `tol` in x.
fn brent_max(
    f: &mut impl FnMut(f64) -> Result<f64, ThermoError>,
    a: f64,
    b: f64,
    c: f64,
    fb: f64,
    tol: f64,
) -> Result<(f64, f64), ThermoError> {
    const GOLD: f64 = 0.381_966_011_250_105_1;
    let (mut lo, mut hi) = (a.min(c), a.max(c));
    let (mut x, mut fx) = (b, fb);
    let (mut w, mut v) = (x, x);
    let (mut fw, mut fv) = (fx, fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for _ in 0..100 {
        let m = 0.5 * (lo + hi);
        let tol1 = tol * 0.5;
        if (x - m).abs() <= 2.0 * tol1 - 0.5 * (hi - lo) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            // Parabola through x, w, v (maximising: work with −f).
            let r = (x - w) * (fv - fx);
            let q0 = (x - v) * (fw - fx);
            let mut p = (x - v) * q0 - (x - w) * r;
            let mut q = 2.0 * (q0 - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            if p.abs() < (0.5 * q * e).abs() && p > q * (lo - x) && p < q * (hi - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - lo < 2.0 * tol1 || hi - u < 2.0 * tol1 {
                    d = if x < m { tol1 } else { -tol1 };
                }
                golden = false;
            }
        }
        if golden {
            e = if x < m { hi - x } else { lo - x };
            d = GOLD * e;
        }
        let u = if d.abs() >= tol1 { x + d } else { x + tol1.copysign(d) };
        let fu = f(u)?;
        if fu >= fx {
            if u < x {
                hi = x;
            } else {
                lo = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                lo = u;
            } else {
                hi = u;
            }
            if fu >= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu >= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    Ok((x, fx))
}
