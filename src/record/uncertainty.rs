//! The uncertainty engine: the law of propagation of uncertainty (JCGM 100:2008, the GUM)
//! with the Jacobian from forward-mode dual numbers, and its Monte Carlo check (JCGM
//! 101:2008, with the validation of its section 8).
//!
//! A measurand is a function of the inputs written once over [`Real`], so the same code
//! gives the value (with `f64`), the exact first derivatives (with [`Dual`]) and the Monte
//! Carlo draws.

use std::ops::{Add, Div, Mul, Neg, Sub};

use nalgebra::{DMatrix, SymmetricEigen};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha20Rng;
use rand_distr::{Distribution as _, StandardNormal};

/// A number the measurand can be computed in.
pub trait Real:
    Clone + Add<Output = Self> + Sub<Output = Self> + Mul<Output = Self> + Div<Output = Self> + Neg<Output = Self>
{
    /// A constant of the same kind as `self` (for a dual: with the same number of slots).
    fn lift(&self, v: f64) -> Self;
    fn value(&self) -> f64;
}

impl Real for f64 {
    fn lift(&self, v: f64) -> f64 {
        v
    }
    fn value(&self) -> f64 {
        *self
    }
}

/// A dual number: a value and its derivatives with respect to every input.
#[derive(Debug, Clone, PartialEq)]
pub struct Dual {
    pub v: f64,
    pub d: Vec<f64>,
}

impl Dual {
    /// Input `index` of `n`, at value `v`.
    pub fn variable(v: f64, index: usize, n: usize) -> Dual {
        let mut d = vec![0.0; n];
        d[index] = 1.0;
        Dual { v, d }
    }

    fn zip(self, other: Dual, f: impl Fn(f64, f64) -> f64) -> Vec<f64> {
        self.d.iter().zip(&other.d).map(|(a, b)| f(*a, *b)).collect()
    }
}

impl Add for Dual {
    type Output = Dual;
    fn add(self, o: Dual) -> Dual {
        let v = self.v + o.v;
        Dual { v, d: self.zip(o, |a, b| a + b) }
    }
}

impl Sub for Dual {
    type Output = Dual;
    fn sub(self, o: Dual) -> Dual {
        let v = self.v - o.v;
        Dual { v, d: self.zip(o, |a, b| a - b) }
    }
}

// The product and quotient rules mix the operators on purpose.
#[allow(clippy::suspicious_arithmetic_impl)]
impl Mul for Dual {
    type Output = Dual;
    fn mul(self, o: Dual) -> Dual {
        let (x, y) = (self.v, o.v);
        Dual { v: x * y, d: self.zip(o, |a, b| a * y + x * b) }
    }
}

#[allow(clippy::suspicious_arithmetic_impl)]
impl Div for Dual {
    type Output = Dual;
    fn div(self, o: Dual) -> Dual {
        let (x, y) = (self.v, o.v);
        Dual { v: x / y, d: self.zip(o, |a, b| (a * y - x * b) / (y * y)) }
    }
}

impl Neg for Dual {
    type Output = Dual;
    fn neg(self) -> Dual {
        Dual { v: -self.v, d: self.d.iter().map(|a| -a).collect() }
    }
}

impl Real for Dual {
    fn lift(&self, v: f64) -> Dual {
        Dual { v, d: vec![0.0; self.d.len()] }
    }
    fn value(&self) -> f64 {
        self.v
    }
}

/// The probability distribution of an input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Shape {
    Normal,
    /// Uniform over value ± √3 u.
    Rectangular,
}

impl Shape {
    pub fn key(self) -> &'static str {
        match self {
            Shape::Normal => "normal",
            Shape::Rectangular => "rectangular",
        }
    }
}

/// One input quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct Input {
    /// What it is, for the budget: `weighing 2`, `CO in source 1`, `atomic weight of C`.
    pub label: String,
    /// Inputs of one group are reported together in the budget (a correlated block).
    pub group: String,
    pub value: f64,
    /// Standard uncertainty (k = 1).
    pub u: f64,
    pub shape: Shape,
}

/// Inputs that are correlated with each other (jointly normal): indices into the input
/// list and their covariance matrix. Inputs outside every block are independent.
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    pub inputs: Vec<usize>,
    pub covariance: DMatrix<f64>,
}

/// All the inputs of a measurand.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Inputs {
    pub list: Vec<Input>,
    pub blocks: Vec<Block>,
}

impl Inputs {
    /// Add an independent input; returns its index.
    pub fn push(&mut self, label: String, value: f64, u: f64, shape: Shape) -> usize {
        self.list.push(Input { group: label.clone(), label, value, u, shape });
        self.list.len() - 1
    }

    /// The covariance matrix of the inputs.
    pub fn covariance(&self) -> DMatrix<f64> {
        let n = self.list.len();
        let mut c = DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(n, self.list.iter().map(|i| i.u * i.u)));
        for b in &self.blocks {
            for (a, &i) in b.inputs.iter().enumerate() {
                for (bb, &j) in b.inputs.iter().enumerate() {
                    c[(i, j)] = b.covariance[(a, bb)];
                }
            }
        }
        c
    }

    /// The inputs as dual numbers, one slot each.
    pub fn duals(&self) -> Vec<Dual> {
        let n = self.list.len();
        self.list.iter().enumerate().map(|(k, i)| Dual::variable(i.value, k, n)).collect()
    }

    pub fn values(&self) -> Vec<f64> {
        self.list.iter().map(|i| i.value).collect()
    }
}

/// One group's part of an output's uncertainty.
#[derive(Debug, Clone, PartialEq)]
pub struct Contribution {
    pub group: String,
    /// Standard uncertainty of the group's inputs (for a single input: its u).
    pub u: f64,
    /// Sensitivity coefficient ∂y/∂x (single inputs only; NaN for a correlated group).
    pub sensitivity: f64,
    /// The part of u(y) from this group, √(c Σ cᵀ).
    pub contribution: f64,
    /// Its share of u(y)², %.
    pub share_percent: f64,
}

/// The GUM result for every output.
#[derive(Debug, Clone, PartialEq)]
pub struct Gum {
    pub values: Vec<f64>,
    pub u: Vec<f64>,
    /// Covariance of the outputs.
    pub covariance: DMatrix<f64>,
    /// Per output, the contributions, largest first.
    pub budget: Vec<Vec<Contribution>>,
}

/// Propagate the inputs' uncertainties through `f` (JCGM 100:2008, 5.1 and 5.2):
/// U_y = J U_x Jᵀ with J the exact Jacobian from dual numbers.
pub fn gum(inputs: &Inputs, f: impl Fn(&[Dual]) -> Vec<Dual>) -> Gum {
    let out = f(&inputs.duals());
    let n = inputs.list.len();
    let m = out.len();
    let jac = DMatrix::from_fn(m, n, |i, j| out[i].d.get(j).copied().unwrap_or(0.0));
    let cx = inputs.covariance();
    let cy = &jac * &cx * jac.transpose();
    let u: Vec<f64> = (0..m).map(|i| cy[(i, i)].max(0.0).sqrt()).collect();
    let mut groups: Vec<String> = Vec::new();
    for i in &inputs.list {
        if !groups.contains(&i.group) {
            groups.push(i.group.clone());
        }
    }
    let budget = (0..m)
        .map(|i| {
            let mut rows: Vec<Contribution> = groups
                .iter()
                .map(|g| {
                    let members: Vec<usize> = (0..n).filter(|&j| &inputs.list[j].group == g).collect();
                    let mut var = 0.0;
                    for &a in &members {
                        for &b in &members {
                            var += jac[(i, a)] * cx[(a, b)] * jac[(i, b)];
                        }
                    }
                    let single = members.len() == 1;
                    Contribution {
                        group: g.clone(),
                        u: if single {
                            inputs.list[members[0]].u
                        } else {
                            members.iter().map(|&a| cx[(a, a)]).sum::<f64>().sqrt()
                        },
                        sensitivity: if single { jac[(i, members[0])] } else { f64::NAN },
                        contribution: var.max(0.0).sqrt(),
                        share_percent: if cy[(i, i)] > 0.0 { 100.0 * var / cy[(i, i)] } else { 0.0 },
                    }
                })
                .filter(|c| c.contribution > 0.0)
                .collect();
            rows.sort_by(|a, b| b.contribution.total_cmp(&a.contribution));
            rows
        })
        .collect();
    Gum { values: out.iter().map(|d| d.v).collect(), u, covariance: cy, budget }
}

/// The Monte Carlo result for every output.
#[derive(Debug, Clone, PartialEq)]
pub struct MonteCarlo {
    pub draws: usize,
    pub seed: u64,
    /// Draws for which the measurand could not be computed (left out).
    pub failed: usize,
    pub mean: Vec<f64>,
    pub u: Vec<f64>,
    /// The probabilistically symmetric 95 % coverage interval.
    pub low: Vec<f64>,
    pub high: Vec<f64>,
}

/// Coverage probability of the Monte Carlo interval and the GUM interval it is compared with.
pub const COVERAGE_PROBABILITY: f64 = 0.95;
/// The Gaussian coverage factor for 95 %.
pub const K_95: f64 = 1.959_963_984_540_054;

/// Draw the inputs `draws` times from their distributions (seeded ChaCha20, so the result
/// is the same on every machine) and evaluate `f` on each (JCGM 101:2008, 7).
pub fn monte_carlo(
    inputs: &Inputs,
    draws: usize,
    seed: u64,
    mut f: impl FnMut(&[f64]) -> Option<Vec<f64>>,
) -> MonteCarlo {
    let mut rng = ChaCha20Rng::seed_from_u64(seed);
    let n = inputs.list.len();
    let in_block: Vec<bool> = (0..n).map(|j| inputs.blocks.iter().any(|b| b.inputs.contains(&j))).collect();
    // Each block is drawn as value + Q √Λ z, from the eigen decomposition of its covariance
    // (which may be singular: a composition sums to one).
    let factors: Vec<DMatrix<f64>> = inputs
        .blocks
        .iter()
        .map(|b| {
            let e = SymmetricEigen::new(b.covariance.clone());
            let root = DMatrix::from_diagonal(&e.eigenvalues.map(|l| l.max(0.0).sqrt()));
            e.eigenvectors * root
        })
        .collect();
    let mut outputs: Vec<Vec<f64>> = Vec::new();
    let mut failed = 0;
    let mut x = inputs.values();
    for _ in 0..draws {
        for (j, input) in inputs.list.iter().enumerate() {
            if in_block[j] {
                continue;
            }
            x[j] = input.value
                + match input.shape {
                    Shape::Normal => input.u * rng.sample::<f64, _>(StandardNormal),
                    Shape::Rectangular => input.u * 3f64.sqrt() * rng.random_range(-1.0..1.0),
                };
        }
        for (b, l) in inputs.blocks.iter().zip(&factors) {
            let z = nalgebra::DVector::from_fn(b.inputs.len(), |_, _| StandardNormal.sample(&mut rng));
            let dx = l * z;
            for (a, &j) in b.inputs.iter().enumerate() {
                x[j] = inputs.list[j].value + dx[a];
            }
        }
        match f(&x) {
            Some(y) if y.iter().all(|v| v.is_finite()) => outputs.push(y),
            _ => failed += 1,
        }
    }
    let m = outputs.first().map_or(0, Vec::len);
    let count = outputs.len().max(1) as f64;
    let mut mean = vec![0.0; m];
    let mut u = vec![0.0; m];
    let mut low = vec![f64::NAN; m];
    let mut high = vec![f64::NAN; m];
    for i in 0..m {
        let mut column: Vec<f64> = outputs.iter().map(|y| y[i]).collect();
        mean[i] = column.iter().sum::<f64>() / count;
        u[i] = (column.iter().map(|v| (v - mean[i]).powi(2)).sum::<f64>() / (count - 1.0).max(1.0)).sqrt();
        column.sort_by(f64::total_cmp);
        let tail = (1.0 - COVERAGE_PROBABILITY) / 2.0;
        low[i] = quantile(&column, tail);
        high[i] = quantile(&column, 1.0 - tail);
    }
    MonteCarlo { draws, seed, failed, mean, u, low, high }
}

fn quantile(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let pos = p * (sorted.len() - 1) as f64;
    let (i, frac) = (pos.floor() as usize, pos - pos.floor());
    let next = sorted[(i + 1).min(sorted.len() - 1)];
    sorted[i] + frac * (next - sorted[i])
}

/// How the GUM and the Monte Carlo results compare for one output.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Agreement {
    /// |y − 1.96 u − y_low| and |y + 1.96 u − y_high| (JCGM 101:2008, 8.2), as fractions of u.
    pub low_gap: f64,
    pub high_gap: f64,
    /// (u_MC − u_GUM)/u_GUM.
    pub u_ratio_gap: f64,
    /// All three within the tolerance.
    pub agrees: bool,
}

/// The tolerance of the comparison: 5 % of u.
pub const AGREEMENT_TOLERANCE: f64 = 0.05;

/// Compare the GUM interval y ± 1.96 u with the Monte Carlo interval, and the two standard
/// uncertainties, for each output.
pub fn compare(g: &Gum, mc: &MonteCarlo) -> Vec<Agreement> {
    (0..g.values.len())
        .map(|i| {
            let (y, u) = (g.values[i], g.u[i]);
            if !(u > 0.0) || mc.u.len() <= i {
                return Agreement { low_gap: 0.0, high_gap: 0.0, u_ratio_gap: 0.0, agrees: true };
            }
            let low_gap = (y - K_95 * u - mc.low[i]).abs() / u;
            let high_gap = (y + K_95 * u - mc.high[i]).abs() / u;
            let u_ratio_gap = (mc.u[i] - u) / u;
            let agrees = low_gap <= AGREEMENT_TOLERANCE
                && high_gap <= AGREEMENT_TOLERANCE
                && u_ratio_gap.abs() <= AGREEMENT_TOLERANCE;
            Agreement { low_gap, high_gap, u_ratio_gap, agrees }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn duals_give_exact_derivatives() {
        // f(a, b) = a b / (a − b) at (3, 1): ∂f/∂a = −b²/(a−b)² = −0.25, ∂f/∂b = a²/(a−b)² = 2.25.
        let a = Dual::variable(3.0, 0, 2);
        let b = Dual::variable(1.0, 1, 2);
        let f = a.clone() * b.clone() / (a - b);
        assert_eq!(f.v, 1.5);
        assert!((f.d[0] + 0.25).abs() < 1e-15 && (f.d[1] - 2.25).abs() < 1e-15);
    }

    #[test]
    fn a_sum_propagates_in_quadrature() {
        // y = x1 + 2 x2 with u = 3 and 4: u(y) = √(9 + 64) (GUM 5.1.2).
        let mut inputs = Inputs::default();
        inputs.push("x1".into(), 1.0, 3.0, Shape::Normal);
        inputs.push("x2".into(), 1.0, 4.0, Shape::Normal);
        let g = gum(&inputs, |x| vec![x[0].clone() + x[1].clone() * x[1].lift(2.0)]);
        assert!((g.u[0] - 73f64.sqrt()).abs() < 1e-12);
        assert!((g.budget[0][0].share_percent - 6400.0 / 73.0).abs() < 1e-9);
        let mc = monte_carlo(&inputs, 100_000, 7, |x| Some(vec![x[0] + 2.0 * x[1]]));
        assert!(compare(&g, &mc)[0].agrees, "{:?}", compare(&g, &mc));
    }

    #[test]
    fn a_rectangular_input_is_caught_by_the_interval_check() {
        // y = x with x rectangular: the same u, but the 95 % interval is ±0.95·√3 u, not
        // ±1.96 u (JCGM 101:2008, 9.2 shows the same effect for a rectangular input).
        let mut inputs = Inputs::default();
        inputs.push("x".into(), 0.0, 1.0, Shape::Rectangular);
        let g = gum(&inputs, |x| vec![x[0].clone()]);
        let mc = monte_carlo(&inputs, 100_000, 1, |x| Some(vec![x[0]]));
        let a = compare(&g, &mc)[0];
        assert!(a.u_ratio_gap.abs() < 0.02, "{a:?}");
        assert!(!a.agrees && a.high_gap > 0.2, "{a:?}");
    }

    #[test]
    fn the_same_seed_gives_the_same_draws() {
        let mut inputs = Inputs::default();
        inputs.push("x".into(), 1.0, 0.1, Shape::Normal);
        let a = monte_carlo(&inputs, 1000, 42, |x| Some(vec![x[0]]));
        let b = monte_carlo(&inputs, 1000, 42, |x| Some(vec![x[0]]));
        assert_eq!(a, b);
    }
}
