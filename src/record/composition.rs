//! The composition made, as a measurand of the record's inputs.
//!
//! Gravimetric (ISO 6142-1): with m_A = w_A − w_{A−1} the mass of addition A (consecutive
//! scale readings, so adjacent masses share a reading and are negatively correlated),
//! x_{i,A} the source's mole fractions and M_i = Σ_e ν_ie A_e the molar masses from the
//! atomic weights A_e,
//!
//! n_A = m_A / Σ_i x_{i,A} M_i,   x_i = Σ_A x_{i,A} n_A / Σ_A n_A.
//!
//! Manometric: with no weighings, the amount of each addition follows from the pressure
//! reading and cylinder temperature at its end under the equation of state,
//! P(T_A, V, N_{A−1} + n_A x_A) = P_A. Its derivatives come from the implicit-function
//! theorem with the partial derivatives of the explicit P(T, V, N); the spread between the
//! models enters the budget as one more input.

use super::analysis::Assay;
use super::uncertainty::{Block, Dual, Inputs, Real, Shape};
use super::{Checked, SourceInput};
use crate::gas::{formula, Catalogue};
use crate::mixture::Composition;
use crate::thermo::{Fluid, Model, ThermoError};

/// How one mole fraction of a source is computed from the inputs.
#[derive(Debug, Clone, PartialEq)]
enum Term {
    /// Input j.
    Input(usize),
    /// 1 − Σ inputs.
    Balance(Vec<usize>),
}

/// A source's mole fractions: (blend gas, term).
type SourceTerms = Vec<(usize, Term)>;

/// The inputs and the shape of the composition function of a record.
#[derive(Debug, Clone)]
pub struct Measurand {
    /// Catalogue indices of the gases of the blend, in order of first appearance.
    pub gases: Vec<usize>,
    pub inputs: Inputs,
    method: Kind,
    sources: Vec<SourceTerms>,
}

/// A weighing's input index, and the reference cylinder's reading beside it (substitution).
type Weighing = (usize, Option<usize>);

#[derive(Debug, Clone)]
enum Kind {
    Gravimetric {
        /// Input indices of the weighings used, each with the reference cylinder's reading
        /// beside it in a substitution weighing.
        weighings: Vec<Weighing>,
        /// Input indices of the air density at each weighing used and of the cylinder's
        /// outer volume (L), where the weighings are corrected for air buoyancy.
        buoyancy: Option<(Vec<usize>, usize)>,
        /// Per blend gas: (input index of an atomic weight, count).
        formulas: Vec<Vec<(usize, f64)>>,
    },
    Manometric(Box<Manometric>),
}

#[derive(Debug, Clone)]
struct Manometric {
    fluid: Fluid,
    volume_m3: f64,
    /// Input indices of the pressure and temperature of each addition.
    pressures: Vec<usize>,
    temperatures: Vec<usize>,
    /// The model-spread input and the shift of the composition it stands for.
    model_input: Option<usize>,
    model_shift: Vec<f64>,
    /// The model furthest from the selected one.
    furthest: Option<(Model, f64)>,
}

/// Add the source's inputs and return its terms over the blend gases.
fn source_terms(
    k: usize,
    label: &str,
    source: &SourceInput,
    gases: &mut Vec<usize>,
    inputs: &mut Inputs,
    catalogue: &Catalogue,
) -> SourceTerms {
    let slot = |g: usize, gases: &mut Vec<usize>| match gases.iter().position(|h| *h == g) {
        Some(i) => i,
        None => {
            gases.push(g);
            gases.len() - 1
        }
    };
    match source {
        SourceInput::Analysis(a) => {
            let mut terms = Vec::new();
            let mut others = Vec::new();
            let mut balance = None;
            for line in &a.lines {
                let id = catalogue.gas(line.gas).id();
                let i = slot(line.gas, gases);
                match line.assay {
                    Assay::Balance => balance = Some(i),
                    assay => {
                        let shape = match assay {
                            Assay::BelowLimit { .. } => Shape::Rectangular,
                            _ => Shape::Normal,
                        };
                        let j = inputs.push(format!("{id} in {label} {}", k + 1), assay.value(), assay.u(), shape);
                        others.push(j);
                        terms.push((i, Term::Input(j)));
                    }
                }
            }
            if let Some(i) = balance {
                terms.push((i, Term::Balance(others)));
            }
            terms
        }
        SourceInput::Certified { gases: gs, fractions, covariance } => {
            let group = format!("composition of {label} {}", k + 1);
            let first = inputs.list.len();
            let mut terms = Vec::new();
            for (a, (&g, &x)) in gs.iter().zip(fractions).enumerate() {
                let i = slot(g, gases);
                let id = catalogue.gas(g).id();
                let j = inputs.push(
                    format!("{id} in {label} {}", k + 1),
                    x,
                    covariance[(a, a)].max(0.0).sqrt(),
                    Shape::Normal,
                );
                inputs.list[j].group = group.clone();
                terms.push((i, Term::Input(j)));
            }
            inputs.blocks.push(Block { inputs: (first..first + gs.len()).collect(), covariance: covariance.clone() });
            terms
        }
    }
}

fn fraction<T: Real>(term: &Term, x: &[T]) -> T {
    match term {
        Term::Input(j) => x[*j].clone(),
        Term::Balance(others) => others.iter().fold(x[0].lift(1.0), |acc, &j| acc - x[j].clone()),
    }
}

/// Each gas's formula as (atomic-weight input, count) pairs; an element's atomic weight is
/// one input shared by every gas that holds it (CIAAW interval, rectangular).
fn formula_inputs(
    gases: &[usize],
    catalogue: &Catalogue,
    inputs: &mut Inputs,
) -> Result<Vec<Vec<(usize, f64)>>, String> {
    let mut elements: Vec<(String, usize)> = Vec::new();
    let mut formulas = Vec::new();
    for &g in gases {
        let gas = catalogue.gas(g);
        let counts = formula::element_counts(&gas.record.formula).map_err(|e| format!("{}: {e}", gas.id()))?;
        let mut f = Vec::new();
        for (symbol, n) in counts {
            let j = match elements.iter().find(|(s, _)| *s == symbol) {
                Some(&(_, j)) => j,
                None => {
                    let value = formula::atomic_weight(&symbol).unwrap_or(f64::NAN);
                    let u = formula::atomic_weight_uncertainty(&symbol).unwrap_or(0.0);
                    let j = inputs.push(format!("atomic weight of {symbol}"), value, u, Shape::Rectangular);
                    elements.push((symbol, j));
                    j
                }
            };
            f.push((j, f64::from(n)));
        }
        formulas.push(f);
    }
    Ok(formulas)
}

impl Measurand {
    /// The composition made from the complete additions of a checked record. `model` and
    /// `volume_m3` serve a record of pressure readings; `others` are the models whose
    /// spread enters its budget.
    pub fn of(
        checked: &Checked,
        catalogue: &Catalogue,
        model: Model,
        volume_m3: Option<f64>,
        others: &[Model],
    ) -> Result<Measurand, String> {
        match checked.method {
            super::Method::Gravimetric => Self::gravimetric_of(checked, catalogue),
            super::Method::Manometric => {
                let volume_m3 = volume_m3.ok_or_else(|| {
                    "a record of pressure readings needs the cylinder's water capacity (water_capacity: \"10L\", or \
                     the recipe in the library)"
                        .to_string()
                })?;
                Self::manometric_of(checked, catalogue, model, volume_m3, others)
            }
        }
    }

    /// By weighing: the weighings (and the air at each), the sources, and the atomic weights
    /// of every element of the blend's gases.
    fn gravimetric_of(checked: &Checked, catalogue: &Catalogue) -> Result<Measurand, String> {
        let mut inputs = Inputs::default();
        let mut gases = Vec::new();
        let additions = &checked.additions[..checked.complete];
        let weighings = weighing_inputs(checked, &mut inputs);
        let buoyancy = checked.buoyancy.as_ref().map(|b| buoyancy_inputs(b, weighings.len(), &mut inputs));
        let sources: Vec<SourceTerms> = additions
            .iter()
            .enumerate()
            .map(|(k, a)| source_terms(k, "source", &a.source, &mut gases, &mut inputs, catalogue))
            .collect();
        let formulas = formula_inputs(&gases, catalogue, &mut inputs)?;
        Ok(Measurand { gases, inputs, method: Kind::Gravimetric { weighings, buoyancy, formulas }, sources })
    }

    /// By pressure readings: each reading and temperature, the sources, and the spread of
    /// the other models as a rectangular input bounded by the one furthest away.
    fn manometric_of(
        checked: &Checked,
        catalogue: &Catalogue,
        model: Model,
        volume_m3: f64,
        others: &[Model],
    ) -> Result<Measurand, String> {
        let mut inputs = Inputs::default();
        let mut gases = Vec::new();
        let additions = &checked.additions[..checked.complete];
        let mut pressures = Vec::new();
        let mut temperatures = Vec::new();
        for (k, a) in additions.iter().enumerate() {
            let (p, t) = a.reading.expect("complete additions have readings");
            pressures.push(inputs.push(format!("pressure reading {}", k + 1), p, checked.pressure_u_pa, Shape::Normal));
            temperatures.push(inputs.push(
                format!("cylinder temperature {}", k + 1),
                t,
                checked.temperature_u_k,
                Shape::Normal,
            ));
        }
        let sources: Vec<SourceTerms> = additions
            .iter()
            .enumerate()
            .map(|(k, a)| source_terms(k, "source", &a.source, &mut gases, &mut inputs, catalogue))
            .collect();
        let fluid = Fluid::new(catalogue, &gases, model).map_err(|e| e.to_string())?;
        let mut m = Manometric {
            fluid,
            volume_m3,
            pressures,
            temperatures,
            model_input: None,
            model_shift: vec![0.0; gases.len()],
            furthest: None,
        };
        let mut me = Measurand { gases: gases.clone(), inputs, method: Kind::Manometric(Box::new(m.clone())), sources };
        let base = me.values()?;
        // The model spread: the composition under each other model; the one furthest
        // away (largest relative change of any component) bounds a rectangular input.
        for &other in others.iter().filter(|&&o| o != model) {
            let Ok(fluid) = Fluid::new(catalogue, &gases, other) else { continue };
            let probe = Manometric { fluid, ..m.clone() };
            let Ok(x) = me.manometric_values(&probe, &me.inputs.values()) else { continue };
            let spread =
                x.iter().zip(&base).map(|(a, b)| if *b > 0.0 { ((a - b) / b).abs() } else { 0.0 }).fold(0.0, f64::max);
            if m.furthest.is_none_or(|(_, s)| spread > s) {
                m.furthest = Some((other, spread));
                m.model_shift = x.iter().zip(&base).map(|(a, b)| a - b).collect();
            }
        }
        if let Some((other, _)) = m.furthest {
            m.model_input = Some(me.inputs.push(
                format!("model ({} against {})", model.key(), other.key()),
                0.0,
                1.0 / 3f64.sqrt(),
                Shape::Rectangular,
            ));
        }
        me.method = Kind::Manometric(Box::new(m));
        Ok(me)
    }

    /// The model behind a manometric composition and the one furthest from it.
    pub fn models(&self) -> Option<(Model, Option<Model>)> {
        match &self.method {
            Kind::Manometric(m) => Some((m.fluid.model(), m.furthest.map(|(o, _)| o))),
            Kind::Gravimetric { .. } => None,
        }
    }

    /// Mole fractions of the blend gases at the inputs' values.
    pub fn values(&self) -> Result<Vec<f64>, String> {
        self.evaluate(&self.inputs.values()).ok_or_else(|| "the composition cannot be computed".to_string())
    }

    /// Mole fractions for the input values `x` (a Monte Carlo draw); None where the
    /// measurand has no value there.
    pub fn evaluate(&self, x: &[f64]) -> Option<Vec<f64>> {
        match &self.method {
            Kind::Gravimetric { weighings, buoyancy, formulas } => {
                Some(self.gravimetric(x, weighings, buoyancy.as_ref(), formulas))
            }
            Kind::Manometric(m) => {
                let mut y = self.manometric_values(m, x).ok()?;
                if let Some(j) = m.model_input {
                    for (yi, s) in y.iter_mut().zip(&m.model_shift) {
                        *yi += x[j] * s;
                    }
                }
                Some(y)
            }
        }
    }

    /// Amounts of every blend gas, mol (gravimetric: from the masses).
    pub fn amounts_mol(&self) -> Vec<f64> {
        let x = self.inputs.values();
        match &self.method {
            Kind::Gravimetric { weighings, buoyancy, formulas } => {
                self.gravimetric_amounts(&x, weighings, buoyancy.as_ref(), formulas)
            }
            Kind::Manometric(m) => self.manometric_amounts(m, &x).unwrap_or_else(|_| vec![f64::NAN; self.gases.len()]),
        }
    }

    /// Mole fractions as dual numbers: values and exact first derivatives.
    pub fn duals(&self) -> Vec<Dual> {
        let x = self.inputs.duals();
        match &self.method {
            Kind::Gravimetric { weighings, buoyancy, formulas } => {
                self.gravimetric(&x, weighings, buoyancy.as_ref(), formulas)
            }
            Kind::Manometric(m) => self.manometric_duals(m, &x).unwrap_or_else(|_| {
                let nan = x[0].lift(f64::NAN);
                vec![nan; self.gases.len()]
            }),
        }
    }

    fn gravimetric_amounts<T: Real>(
        &self,
        x: &[T],
        weighings: &[Weighing],
        buoyancy: Option<&(Vec<usize>, usize)>,
        formulas: &[Vec<(usize, f64)>],
    ) -> Vec<T> {
        let zero = x[0].lift(0.0);
        let molar: Vec<T> = formulas
            .iter()
            .map(|f| f.iter().fold(zero.clone(), |acc, &(j, n)| acc + x[j].clone() * zero.lift(n)))
            .collect();
        let mut amounts = vec![zero.clone(); self.gases.len()];
        for (k, terms) in self.sources.iter().enumerate() {
            let mass = weighed_mass(x, weighings, buoyancy, k + 1) - weighed_mass(x, weighings, buoyancy, k);
            let fr: Vec<T> = terms.iter().map(|(_, t)| fraction(t, x)).collect();
            let m_source =
                terms.iter().zip(&fr).fold(zero.clone(), |acc, ((i, _), f)| acc + f.clone() * molar[*i].clone());
            let n_source = mass / m_source;
            for ((i, _), f) in terms.iter().zip(fr) {
                amounts[*i] = amounts[*i].clone() + f * n_source.clone();
            }
        }
        amounts
    }

    fn gravimetric<T: Real>(
        &self,
        x: &[T],
        weighings: &[Weighing],
        buoyancy: Option<&(Vec<usize>, usize)>,
        formulas: &[Vec<(usize, f64)>],
    ) -> Vec<T> {
        normalise(self.gravimetric_amounts(x, weighings, buoyancy, formulas))
    }

    fn source_fractions<T: Real>(&self, k: usize, x: &[T]) -> Vec<T> {
        let mut f = vec![x[0].lift(0.0); self.gases.len()];
        for (i, t) in &self.sources[k] {
            f[*i] = fraction(t, x);
        }
        f
    }

    fn manometric_amounts(&self, m: &Manometric, x: &[f64]) -> Result<Vec<f64>, ThermoError> {
        let mut n = vec![0.0; self.gases.len()];
        for k in 0..self.sources.len() {
            let xa = self.source_fractions(k, x);
            let add = solve_addition(&m.fluid, m.volume_m3, x[m.temperatures[k]], x[m.pressures[k]], &n, &xa)?;
            for (ni, xi) in n.iter_mut().zip(&xa) {
                *ni += add * xi;
            }
        }
        Ok(n)
    }

    fn manometric_values(&self, m: &Manometric, x: &[f64]) -> Result<Vec<f64>, ThermoError> {
        Ok(normalise(self.manometric_amounts(m, x)?))
    }

    fn manometric_duals(&self, m: &Manometric, x: &[Dual]) -> Result<Vec<Dual>, ThermoError> {
        let values: Vec<f64> = x.iter().map(|d| d.v).collect();
        let zero = x[0].lift(0.0);
        let mut n_f = vec![0.0; self.gases.len()];
        let mut n_d = vec![zero.clone(); self.gases.len()];
        for k in 0..self.sources.len() {
            let (t, p) = (values[m.temperatures[k]], values[m.pressures[k]]);
            let xa_f = self.source_fractions(k, &values);
            let xa_d = self.source_fractions(k, x);
            let add = solve_addition(&m.fluid, m.volume_m3, t, p, &n_f, &xa_f)?;
            let after: Vec<f64> = n_f.iter().zip(&xa_f).map(|(n, xi)| n + add * xi).collect();
            let (dp_dt, dp_dn) = pressure_partials(&m.fluid, m.volume_m3, t, &after)?;
            // Implicit function theorem on P(T, V, N + n x_A) = P_read:
            // dn = (dP − P_T dT − Σ_i P_Ni (dN_i + n dx_iA)) / Σ_i P_Ni x_iA.
            let slope: f64 = dp_dn.iter().zip(&xa_f).map(|(a, b)| a * b).sum();
            let mut num = (x[m.pressures[k]].clone() - zero.lift(p))
                - (x[m.temperatures[k]].clone() - zero.lift(t)) * zero.lift(dp_dt);
            for i in 0..self.gases.len() {
                let d_n = n_d[i].clone() - zero.lift(n_f[i]);
                let d_x = xa_d[i].clone() - zero.lift(xa_f[i]);
                num = num - (d_n + d_x * zero.lift(add)) * zero.lift(dp_dn[i]);
            }
            let add_d = zero.lift(add) + num / zero.lift(slope);
            for i in 0..self.gases.len() {
                n_d[i] = n_d[i].clone() + add_d.clone() * xa_d[i].clone();
            }
            n_f = after;
        }
        let mut y = normalise(n_d);
        if let Some(j) = m.model_input {
            for (yi, s) in y.iter_mut().zip(&m.model_shift) {
                *yi = yi.clone() + x[j].clone() * zero.lift(*s);
            }
        }
        Ok(y)
    }
}

/// The weighings as inputs (and the reference cylinder's readings beside them in a
/// substitution weighing), each with the scale's standard uncertainty.
fn weighing_inputs(checked: &super::Checked, inputs: &mut Inputs) -> Vec<Weighing> {
    (0..=checked.complete)
        .map(|k| {
            let label = if k == 0 { "weighing before the fill".to_string() } else { format!("weighing {k}") };
            let w = inputs.push(label.clone(), checked.weighings_g[k], checked.scale_u_g, Shape::Normal);
            let r = checked
                .reference_weighings_g
                .get(k)
                .map(|&r| inputs.push(format!("reference cylinder at {label}"), r, checked.scale_u_g, Shape::Normal));
            (w, r)
        })
        .collect()
}

/// The buoyancy inputs: the air density at each of `weighings` (one input when the record
/// gives the air once) and the cylinder's outer volume, L.
fn buoyancy_inputs(b: &super::BuoyancyInputs, weighings: usize, inputs: &mut Inputs) -> (Vec<usize>, usize) {
    let densities: Vec<usize> = if let [(rho, u)] = b.densities.as_slice() {
        let j = inputs.push("air density (all weighings)".into(), *rho, *u, Shape::Normal);
        vec![j; weighings]
    } else {
        (0..weighings)
            .map(|k| {
                let (rho, u) = b.densities[k];
                let label = if k == 0 {
                    "air density before the fill".to_string()
                } else {
                    format!("air density at weighing {k}")
                };
                inputs.push(label, rho, u, Shape::Normal)
            })
            .collect()
    };
    let label = if b.substitution { "outer volume, cylinder less reference" } else { "cylinder outer volume" };
    let volume = inputs.push(label.into(), b.volume_l.0, b.volume_l.1, Shape::Normal);
    (densities, volume)
}

/// The mass of weighing `k`, g: the scale's conventional reading W, corrected for air
/// buoyancy where the record gives the air: m = W·(1 − ρa/8000 kg/m³) + ρa·V (ρa in
/// kg/m³ times V in L is in g).
fn weighed_mass<T: Real>(x: &[T], weighings: &[Weighing], buoyancy: Option<&(Vec<usize>, usize)>, k: usize) -> T {
    // In a substitution weighing the cylinder is weighed against a reference cylinder: the
    // difference of the two readings carries the mass added (the reference's own mass and
    // the scale's drift cancel), and buoyancy acts on the difference of their volumes.
    let w = match weighings[k] {
        (w, None) => x[w].clone(),
        (w, Some(r)) => x[w].clone() - x[r].clone(),
    };
    match buoyancy {
        None => w,
        Some((densities, volume)) => {
            let rho = x[densities[k]].clone();
            let one = w.lift(1.0);
            let reference = w.lift(super::buoyancy::REFERENCE_DENSITY);
            w * (one - rho.clone() / reference) + rho * x[*volume].clone()
        }
    }
}

fn normalise<T: Real>(amounts: Vec<T>) -> Vec<T> {
    let total = amounts.iter().skip(1).fold(amounts[0].clone(), |acc, a| acc + a.clone());
    amounts.into_iter().map(|a| a / total.clone()).collect()
}

/// The amount of source gas (fractions `xa`) that brings the cylinder holding `before` to
/// `p_pa` at `t_k`: Newton's method on the explicit pressure, from the ideal-gas estimate.
fn solve_addition(
    fluid: &Fluid,
    volume_m3: f64,
    t_k: f64,
    p_pa: f64,
    before: &[f64],
    xa: &[f64],
) -> Result<f64, ThermoError> {
    let r = crate::units::R;
    let held: f64 = before.iter().sum();
    let mut n = (p_pa * volume_m3 / (r * t_k) - held).max(1e-9 * (held + 1.0));
    let at = |n: f64| -> Result<f64, ThermoError> {
        let amounts: Vec<f64> = before.iter().zip(xa).map(|(b, x)| b + n * x).collect();
        fluid.pressure(t_k, volume_m3, &amounts)
    };
    for _ in 0..100 {
        let f = at(n)? - p_pa;
        let h = 1e-7 * (n + held).max(1e-12);
        let slope = (at(n + h)? - at((n - h).max(0.0))?) / (n + h - (n - h).max(0.0));
        if !(slope > 0.0) {
            return Err(ThermoError::NoState {
                model: fluid.model(),
                why: "the pressure does not rise with the addition".into(),
            });
        }
        let step = f / slope;
        let next = (n - step).max(n / 10.0);
        if (next - n).abs() <= 1e-13 * (next + held) {
            return Ok(next);
        }
        n = next;
    }
    Err(ThermoError::NoState { model: fluid.model(), why: "the amount added did not converge".into() })
}

/// ∂P/∂T and ∂P/∂N_i of the explicit P(T, V, N), by central differences of that explicit
/// function (smooth and free of solver noise; checked against the ideal gas in the tests).
fn pressure_partials(fluid: &Fluid, volume_m3: f64, t_k: f64, n: &[f64]) -> Result<(f64, Vec<f64>), ThermoError> {
    let ht = 1e-4 * t_k;
    let dp_dt = (fluid.pressure(t_k + ht, volume_m3, n)? - fluid.pressure(t_k - ht, volume_m3, n)?) / (2.0 * ht);
    let total: f64 = n.iter().sum();
    let h = 1e-6 * total;
    let mut dp_dn = Vec::with_capacity(n.len());
    for i in 0..n.len() {
        let mut up = n.to_vec();
        let mut down = n.to_vec();
        up[i] += h;
        let width = if n[i] >= h {
            down[i] -= h;
            2.0 * h
        } else {
            h
        };
        dp_dn.push((fluid.pressure(t_k, volume_m3, &up)? - fluid.pressure(t_k, volume_m3, &down)?) / width);
    }
    Ok((dp_dt, dp_dn))
}

/// The ISO 6142-1 composition from parent compositions and the mass of each, g (values
/// only, no uncertainty). Gases in order of first appearance.
pub fn composition_from_masses(parents: &[(&Composition, f64)], catalogue: &Catalogue) -> Composition {
    let mut gases: Vec<usize> = Vec::new();
    let mut moles: Vec<f64> = Vec::new();
    for (c, mass_g) in parents {
        let n_parent = mass_g / c.molar_mass(catalogue);
        for (&g, x) in c.gases.iter().zip(&c.fractions) {
            match gases.iter().position(|h| *h == g) {
                Some(i) => moles[i] += x * n_parent,
                None => {
                    gases.push(g);
                    moles.push(x * n_parent);
                }
            }
        }
    }
    Composition { gases, fractions: normalise(moles) }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::{no_lookup, Record};

    fn measurand(text: &str, model: Model) -> Measurand {
        let c = Catalogue::built_in();
        let r = Record::parse(text, "t").unwrap();
        let checked = r.check(&c, &no_lookup, text, "t").unwrap();
        Measurand::of(&checked, &c, model, checked.volume_m3, &[]).unwrap()
    }

    #[test]
    fn two_pure_parents_by_mass() {
        // 44.009 g of CO2 and 28.014 g of N2: 1 mol each at the IUPAC conventional weights.
        let text = r#"Record(format: 1, recipe: "x", cylinder: "A", scale_uncertainty: "0g",
            weighings: ["1000g", "1044.009g", "1072.023g"], additions: [(source: "CO2"), (source: "N2")])"#;
        let m = measurand(text, Model::Pr);
        let x = m.values().unwrap();
        assert!((x[0] - 0.5).abs() < 1e-12, "{x:?}");
        // The Jacobian from duals matches the value path.
        let d = m.duals();
        assert!((d[0].v - x[0]).abs() < 1e-15);
    }

    #[test]
    fn ideal_gas_pressure_readings_give_the_partial_pressures() {
        // Under the ideal gas, pressure ratios are amount ratios at one temperature:
        // 30 bar of CO2 then 100 bar in total gives x(CO2) = 0.3 exactly.
        let text = r#"Record(format: 1, recipe: "x", cylinder: "A", scale_uncertainty: "0g",
            water_capacity: "10L", additions: [
              (source: "CO2", pressure: "30bar", temperature: "20C"),
              (source: "N2", pressure: "100bar", temperature: "20C")])"#;
        let m = measurand(text, Model::Ideal);
        let x = m.values().unwrap();
        assert!((x[0] - 0.3).abs() < 1e-9, "{x:?}");
        // ∂x(CO2)/∂P1 = 1/P2 = 1e-7 per Pa and ∂x/∂P2 = −P1/P2² = −3e-8 per Pa.
        let d = m.duals();
        assert!((d[0].d[0] - 1e-7).abs() < 1e-13, "{:?}", d[0].d);
        assert!((d[0].d[2] + 3e-8).abs() < 1e-13, "{:?}", d[0].d);
        // A warmer first reading means less CO2 for the same pressure: ∂x/∂T1 = −x/T1.
        assert!((d[0].d[1] + 0.3 / 293.15).abs() < 1e-9, "{:?}", d[0].d);
    }
}
