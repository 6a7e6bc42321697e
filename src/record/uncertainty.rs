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

/// Draws per chunk: each chunk has its own ChaCha20 stream of the seed, so the draws are
/// the same however many threads share the chunks.
const CHUNK: usize = 4096;

/// Bins of the histogram the coverage interval is read from (see [`monte_carlo`]).
const BINS: usize = 1 << 16;

/// Draw the inputs `draws` times from their distributions (seeded ChaCha20, so the result
/// is the same on every machine and with any number of threads) and evaluate `f` on each
/// (JCGM 101:2008, 7).
///
/// Memory does not grow with the number of draws: the draws are made in chunks, on every
/// core, twice. The first pass gives each output's mean and standard uncertainty (merged in
/// chunk order, Chan et al.'s pairwise update) and its range; the second, the same draws
/// again, counts them in 65 536 bins over that range, and the 2.5 % and 97.5 % quantiles
/// are read from the counts, interpolated within their bin (a resolution of the range over
/// 65 536, about 1.6e-4 u at 10⁷ normal draws, far inside the 5 % of u of the comparison).
pub fn monte_carlo(
    inputs: &Inputs,
    draws: usize,
    seed: u64,
    f: impl Fn(&[f64]) -> Option<Vec<f64>> + Sync,
) -> MonteCarlo {
    use rayon::prelude::*;
    let sampler = Sampler::new(inputs);
    let chunks: Vec<usize> = (0..draws.div_ceil(CHUNK)).collect();
    let size = |c: usize| CHUNK.min(draws - c * CHUNK);
    // First pass: count, mean, M2, min, max per output, per chunk, merged in order.
    let stats: Vec<Moments> = chunks
        .par_iter()
        .map(|&c| {
            let mut m = Moments::default();
            sampler.each(seed, c, size(c), &f, |y| m.add(y));
            m
        })
        .collect();
    let total = stats.into_iter().fold(Moments::default(), Moments::merge);
    let m = total.mean.len();
    let count = total.count.max(1) as f64;
    let u: Vec<f64> = total.m2.iter().map(|m2| (m2 / (count - 1.0).max(1.0)).sqrt()).collect();
    let failed = draws - total.count;
    // Second pass: the same draws counted in bins over each output's range.
    let (lo, hi) = (total.min.clone(), total.max.clone());
    let bin_of = |i: usize, v: f64| -> usize {
        let width = hi[i] - lo[i];
        if !(width > 0.0) {
            return 0;
        }
        (((v - lo[i]) / width * BINS as f64) as usize).min(BINS - 1)
    };
    let counts: Vec<Vec<u64>> = chunks
        .par_iter()
        .map(|&c| {
            let mut h = vec![vec![0u64; BINS]; m];
            sampler.each(seed, c, size(c), &f, |y| {
                for (i, v) in y.iter().enumerate() {
                    h[i][bin_of(i, *v)] += 1;
                }
            });
            h
        })
        .reduce(
            || vec![vec![0u64; BINS]; m],
            |mut a, b| {
                for (x, y) in a.iter_mut().zip(&b) {
                    for (p, q) in x.iter_mut().zip(y) {
                        *p += q;
                    }
                }
                a
            },
        );
    let tail = (1.0 - COVERAGE_PROBABILITY) / 2.0;
    let quantile_of = |i: usize, p: f64| histogram_quantile(&counts[i], lo[i], hi[i], total.count, p);
    let low: Vec<f64> = (0..m).map(|i| quantile_of(i, tail)).collect();
    let high: Vec<f64> = (0..m).map(|i| quantile_of(i, 1.0 - tail)).collect();
    MonteCarlo { draws, seed, failed, mean: total.mean, u, low, high }
}

/// The p-quantile of `n` values counted in equal bins over [lo, hi]: the value of rank
/// p·(n − 1) (as for sorted values), placed within its bin by linear interpolation.
fn histogram_quantile(counts: &[u64], lo: f64, hi: f64, n: usize, p: f64) -> f64 {
    if n == 0 {
        return f64::NAN;
    }
    if !(hi > lo) {
        return lo;
    }
    let rank = p * (n - 1) as f64;
    let width = (hi - lo) / counts.len() as f64;
    let mut below = 0u64;
    for (k, &c) in counts.iter().enumerate() {
        if c > 0 && (below + c) as f64 > rank {
            let within = (rank - below as f64 + 0.5) / c as f64;
            return lo + width * (k as f64 + within.clamp(0.0, 1.0));
        }
        below += c;
    }
    hi
}

/// Running moments of every output: count, mean, sum of squared deviations, range.
#[derive(Debug, Clone, Default)]
struct Moments {
    count: usize,
    mean: Vec<f64>,
    m2: Vec<f64>,
    min: Vec<f64>,
    max: Vec<f64>,
}

impl Moments {
    /// Welford's update with one draw's outputs.
    fn add(&mut self, y: &[f64]) {
        if self.mean.is_empty() {
            let n = y.len();
            (self.mean, self.m2) = (vec![0.0; n], vec![0.0; n]);
            (self.min, self.max) = (vec![f64::INFINITY; n], vec![f64::NEG_INFINITY; n]);
        }
        self.count += 1;
        let n = self.count as f64;
        for (i, v) in y.iter().enumerate() {
            let d = v - self.mean[i];
            self.mean[i] += d / n;
            self.m2[i] += d * (v - self.mean[i]);
            self.min[i] = self.min[i].min(*v);
            self.max[i] = self.max[i].max(*v);
        }
    }

    /// Two sets of moments as one (Chan, Golub and LeVeque's pairwise update).
    fn merge(a: Moments, b: Moments) -> Moments {
        if a.count == 0 {
            return b;
        }
        if b.count == 0 {
            return a;
        }
        let (na, nb) = (a.count as f64, b.count as f64);
        let n = na + nb;
        let mut out = a.clone();
        out.count = a.count + b.count;
        for i in 0..a.mean.len() {
            let d = b.mean[i] - a.mean[i];
            out.mean[i] = a.mean[i] + d * nb / n;
            out.m2[i] = a.m2[i] + b.m2[i] + d * d * na * nb / n;
            out.min[i] = a.min[i].min(b.min[i]);
            out.max[i] = a.max[i].max(b.max[i]);
        }
        out
    }
}

/// Draws the inputs: independent ones from their own distribution, correlated blocks as
/// value + Q √Λ z from the eigen decomposition of their covariance (which may be singular:
/// a composition sums to one).
struct Sampler<'a> {
    inputs: &'a Inputs,
    in_block: Vec<bool>,
    factors: Vec<DMatrix<f64>>,
}

impl<'a> Sampler<'a> {
    fn new(inputs: &'a Inputs) -> Sampler<'a> {
        let n = inputs.list.len();
        let in_block: Vec<bool> = (0..n).map(|j| inputs.blocks.iter().any(|b| b.inputs.contains(&j))).collect();
        let factors: Vec<DMatrix<f64>> = inputs
            .blocks
            .iter()
            .map(|b| {
                let e = SymmetricEigen::new(b.covariance.clone());
                let root = DMatrix::from_diagonal(&e.eigenvalues.map(|l| l.max(0.0).sqrt()));
                e.eigenvectors * root
            })
            .collect();
        Sampler { inputs, in_block, factors }
    }

    /// Chunk `chunk`'s `count` draws from stream `chunk` of the seed, each evaluated by
    /// `f` and handed to `take` when every output is finite.
    fn each(
        &self,
        seed: u64,
        chunk: usize,
        count: usize,
        f: &(impl Fn(&[f64]) -> Option<Vec<f64>> + Sync),
        mut take: impl FnMut(&[f64]),
    ) {
        let mut rng = ChaCha20Rng::seed_from_u64(seed);
        rng.set_stream(chunk as u64);
        let mut x = self.inputs.values();
        for _ in 0..count {
            for (j, input) in self.inputs.list.iter().enumerate() {
                if self.in_block[j] {
                    continue;
                }
                x[j] = input.value
                    + match input.shape {
                        Shape::Normal => input.u * rng.sample::<f64, _>(StandardNormal),
                        Shape::Rectangular => input.u * 3f64.sqrt() * rng.random_range(-1.0..1.0),
                    };
            }
            for (b, l) in self.inputs.blocks.iter().zip(&self.factors) {
                let z = nalgebra::DVector::from_fn(b.inputs.len(), |_, _| StandardNormal.sample(&mut rng));
                let dx = l * z;
                for (a, &j) in b.inputs.iter().enumerate() {
                    x[j] = self.inputs.list[j].value + dx[a];
                }
            }
            if let Some(y) = f(&x).filter(|y| y.iter().all(|v| v.is_finite())) {
                take(&y);
            }
        }
    }
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

    #[test]
    fn one_thread_and_two_give_the_same_figures_for_a_seed() {
        let mut inputs = Inputs::default();
        inputs.push("x".into(), 1.0, 0.1, Shape::Normal);
        inputs.push("y".into(), 2.0, 0.3, Shape::Rectangular);
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            pool.install(|| monte_carlo(&inputs, 50_000, 9, |x| Some(vec![x[0] * x[1], x[0] - x[1]])))
        };
        let (one, two) = (run(1), run(2));
        assert_eq!(one, two);
        // And the figures are those of the distribution: x·y has mean 2 and u ≈ √(0.2² + 0.3²).
        assert!((one.mean[0] - 2.0).abs() < 0.01, "{one:?}");
        assert!((one.u[0] - (0.04f64 + 0.09 + 0.0009).sqrt()).abs() < 0.01, "{one:?}");
    }

    /// The p-quantile of sorted values at rank p·(n − 1), interpolated.
    fn quantile(sorted: &[f64], p: f64) -> f64 {
        let pos = p * (sorted.len() - 1) as f64;
        let (i, frac) = (pos.floor() as usize, pos - pos.floor());
        let next = sorted[(i + 1).min(sorted.len() - 1)];
        sorted[i] + frac * (next - sorted[i])
    }

    #[test]
    fn the_interval_from_the_bins_matches_the_sorted_draws() {
        // 20 001 draws of a normal: the binned 2.5 % and 97.5 % quantiles against those of
        // the same draws sorted (the rank p·(n − 1) rule), to the bin width.
        let mut inputs = Inputs::default();
        inputs.push("x".into(), 5.0, 0.5, Shape::Normal);
        let mc = monte_carlo(&inputs, 20_001, 3, |x| Some(vec![x[0]]));
        let sampler = Sampler::new(&inputs);
        let mut all = Vec::new();
        for c in 0..20_001usize.div_ceil(CHUNK) {
            sampler.each(3, c, CHUNK.min(20_001 - c * CHUNK), &|x: &[f64]| Some(vec![x[0]]), |y| all.push(y[0]));
        }
        all.sort_by(f64::total_cmp);
        let width = (all[all.len() - 1] - all[0]) / BINS as f64;
        assert!((mc.low[0] - quantile(&all, 0.025)).abs() <= width, "{} {}", mc.low[0], quantile(&all, 0.025));
        assert!((mc.high[0] - quantile(&all, 0.975)).abs() <= width);
    }
}
