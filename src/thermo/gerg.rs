//! GERG-2008 (Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032; ISO 20765-2) through the
//! `aga8` crate, a port of NIST's AGA8 code.
//!
//! The crate's density iteration stops at a relative 1e-7 in ln v; we polish the root with
//! Newton steps on the explicit pressure so that plans built on it close to 1e-12.

use aga8::composition::Composition as GergComposition;
use aga8::gerg2008::Gerg2008;

/// The 21 GERG-2008 components, by our canonical id.
pub const COVERED: [&str; 21] = [
    "CH4", "N2", "CO2", "C2H6", "C3H8", "i-C4H10", "n-C4H10", "i-C5H12", "n-C5H12", "n-C6H14", "n-C7H16", "n-C8H18",
    "n-C9H20", "n-C10H22", "H2", "O2", "CO", "H2O", "H2S", "He", "Ar",
];

/// Whether GERG-2008 covers a gas id.
pub fn covers(id: &str) -> bool {
    COVERED.contains(&id)
}

/// The aga8 crate's composition of the gases `ids` (catalogue ids) in mole fractions `x`;
/// None where GERG-2008 does not cover one of them.
pub fn composition(ids: &[impl AsRef<str>], x: &[f64]) -> Option<GergComposition> {
    let mut comp = GergComposition::default();
    for (id, &xi) in ids.iter().zip(x) {
        *slot(&mut comp, id.as_ref())? += xi;
    }
    Some(comp)
}

fn slot<'a>(c: &'a mut GergComposition, id: &str) -> Option<&'a mut f64> {
    Some(match id {
        "CH4" => &mut c.methane,
        "N2" => &mut c.nitrogen,
        "CO2" => &mut c.carbon_dioxide,
        "C2H6" => &mut c.ethane,
        "C3H8" => &mut c.propane,
        "i-C4H10" => &mut c.isobutane,
        "n-C4H10" => &mut c.n_butane,
        "i-C5H12" => &mut c.isopentane,
        "n-C5H12" => &mut c.n_pentane,
        "n-C6H14" => &mut c.hexane,
        "n-C7H16" => &mut c.heptane,
        "n-C8H18" => &mut c.octane,
        "n-C9H20" => &mut c.nonane,
        "n-C10H22" => &mut c.decane,
        "H2" => &mut c.hydrogen,
        "O2" => &mut c.oxygen,
        "CO" => &mut c.carbon_monoxide,
        "H2O" => &mut c.water,
        "H2S" => &mut c.hydrogen_sulfide,
        "He" => &mut c.helium,
        "Ar" => &mut c.argon,
        _ => return None,
    })
}

/// The composition as the 21 mole fractions, to compare states.
fn key_of(c: &GergComposition) -> [f64; 21] {
    [
        c.methane,
        c.nitrogen,
        c.carbon_dioxide,
        c.ethane,
        c.propane,
        c.isobutane,
        c.n_butane,
        c.isopentane,
        c.n_pentane,
        c.hexane,
        c.heptane,
        c.octane,
        c.nonane,
        c.decane,
        c.hydrogen,
        c.oxygen,
        c.carbon_monoxide,
        c.water,
        c.hydrogen_sulfide,
        c.helium,
        c.argon,
    ]
}

/// How many compositions each thread keeps a GERG-2008 state for: a plan's steps, its
/// blend and a premix stage or two.
const KEPT: usize = 16;

thread_local! {
    /// The GERG-2008 states of the compositions last used on this thread, the most recent
    /// last.
    static KEPT_STATES: std::cell::RefCell<Vec<([f64; 21], Box<Gerg2008>)>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// A GERG-2008 evaluator for a fixed list of gases.
#[derive(Debug, Clone)]
pub struct Gerg {
    ids: Vec<String>,
}

impl Gerg {
    /// `None` lists the uncovered ids.
    pub fn new(ids: &[&str]) -> Result<Gerg, Vec<String>> {
        let missing: Vec<String> = ids.iter().filter(|id| !covers(id)).map(|s| s.to_string()).collect();
        if missing.is_empty() {
            Ok(Gerg { ids: ids.iter().map(|s| s.to_string()).collect() })
        } else {
            Err(missing)
        }
    }

    /// Run `f` on the GERG-2008 state of composition `x` at `t_k`. The states of the last
    /// few compositions are kept per thread: the crate's reducing parameters (per
    /// composition) and temperature terms (per temperature) are then computed once, not
    /// per call, even where a plan's steps take turns.
    fn with_model<R>(&self, x: &[f64], t_k: f64, f: impl FnOnce(&mut Gerg2008) -> R) -> Option<R> {
        let comp = composition(&self.ids, x)?;
        let key = key_of(&comp);
        KEPT_STATES.with(|cell| {
            let mut kept = cell.borrow_mut();
            match kept.iter().rposition(|(k, _)| *k == key) {
                Some(i) => {
                    let hit = kept.remove(i);
                    kept.push(hit);
                }
                None => {
                    let mut g = Gerg2008::new();
                    g.set_composition(&comp).ok()?;
                    if kept.len() >= KEPT {
                        kept.remove(0);
                    }
                    kept.push((key, Box::new(g)));
                }
            }
            let (_, g) = kept.last_mut()?;
            g.t = t_k;
            Some(f(g))
        })
    }

    /// Pressure, Pa, at molar density `rho` (mol/m³).
    pub fn pressure(&self, x: &[f64], t_k: f64, rho_mol_m3: f64) -> Option<f64> {
        let p_kpa = self.with_model(x, t_k, |g| {
            g.d = rho_mol_m3 * 1e-3;
            g.pressure()
        })?;
        p_kpa.is_finite().then_some(p_kpa * 1e3)
    }

    /// Molar density, mol/m³, at (T, P) on the branch that Newton's method reaches from
    /// `rho0` (mol/m³): a liquid start finds the liquid root. None where the iteration
    /// leaves the branch (∂P/∂ρ ≤ 0) or does not converge.
    pub fn density_from(&self, x: &[f64], t_k: f64, p_pa: f64, rho0: f64) -> Option<f64> {
        self.with_model(x, t_k, |g| {
            let target = p_pa * 1e-3;
            let mut d = rho0 * 1e-3;
            for _ in 0..100 {
                g.d = d;
                let p = g.properties();
                let f = p - target;
                if !(g.dp_dd > 0.0 && p.is_finite()) {
                    return None;
                }
                let next = d - f / g.dp_dd;
                let next = next.clamp(0.5 * d, 2.0 * d);
                // Newton's error after a step of δ is of order δ²: a step below 1e-8 of
                // the density leaves it within about 1e-16.
                if (next - d).abs() <= 1e-8 * d {
                    return Some(next * 1e3);
                }
                d = next;
            }
            None
        })?
    }

    /// Molar Gibbs energy, J/mol, at (T, ρ in mol/m³).
    fn gibbs(&self, x: &[f64], t_k: f64, rho_mol_m3: f64) -> Option<f64> {
        self.with_model(x, t_k, |g| {
            g.d = rho_mol_m3 * 1e-3;
            g.properties();
            g.g.is_finite().then_some(g.g)
        })?
    }

    /// The saturation state of a pure fluid from GERG-2008's own equation: the pressure
    /// where liquid and vapour have equal Gibbs energy, by Newton's method on P
    /// (d(g_V − g_L)/dP = v_V − v_L), started from `p0` and a liquid density `rho_l0`.
    /// Returns (P in Pa, ρ_liquid, ρ_vapour in mol/m³).
    pub fn saturation(&self, x: &[f64], t_k: f64, p0: f64, rho_l0: f64) -> Option<(f64, f64, f64)> {
        let mut p = p0;
        // Newton on P(ρ) converges from above on the liquid branch and from below on the
        // vapour branch (P is convex in ρ on the first, concave on the second).
        let mut rho_l = 1.3 * rho_l0;
        let mut rho_v = 0.5 * p0 / (crate::thermo::R * t_k);
        for _ in 0..100 {
            rho_v = self
                .density_from(x, t_k, p, 0.5 * p / (crate::thermo::R * t_k))
                .or_else(|| self.density_from(x, t_k, p, rho_v))?;
            rho_l = self.density_from(x, t_k, p, 1.3 * rho_l).or_else(|| self.density_from(x, t_k, p, rho_l))?;
            if (rho_l - rho_v).abs() <= 1e-6 * rho_l {
                return None; // both searches found one root: too close to the critical point
            }
            let dg = self.gibbs(x, t_k, rho_v)? - self.gibbs(x, t_k, rho_l)?;
            let next = p - dg / (1.0 / rho_v - 1.0 / rho_l);
            let next = next.clamp(0.8 * p, 1.25 * p);
            if (next - p).abs() <= 1e-12 * p {
                return Some((next, rho_l, rho_v));
            }
            p = next;
        }
        None
    }

    /// Molar density, mol/m³, at (T, P).
    pub fn density(&self, x: &[f64], t_k: f64, p_pa: f64) -> Option<f64> {
        self.with_model(x, t_k, |g| Self::density_on(g, p_pa))?
    }

    fn density_on(g: &mut Gerg2008, p_pa: f64) -> Option<f64> {
        g.p = p_pa * 1e-3;
        g.density(0).ok()?;
        let target = g.p;
        // Newton polish on P(d) with a central-difference slope.
        for _ in 0..4 {
            let d = g.d;
            let f = g.pressure() - target;
            if f.abs() <= 1e-14 * target {
                break;
            }
            let h = d * 1e-6;
            g.d = d + h;
            let up = g.pressure();
            g.d = d - h;
            let down = g.pressure();
            let slope = (up - down) / (2.0 * h);
            if !(slope > 0.0) {
                g.d = d;
                break;
            }
            g.d = d - f / slope;
        }
        let d = g.d;
        (d.is_finite() && d > 0.0).then_some(d * 1e3)
    }
}
