//! Generalized least squares for an analyser's calibration function, with the
//! uncertainties of both the contents and the responses (ISO 6143:2001, clause 7).
//!
//! The calibration function is a polynomial `y = b₀ + b₁x (+ b₂x² + b₃x³)` from content x
//! (mole fraction) to response y. The fit minimises
//!
//! ```text
//! S = Σᵢ (xᵢ − x̂ᵢ)²/u²(xᵢ) + (yᵢ − F(x̂ᵢ; b))²/u²(yᵢ)
//! ```
//!
//! over the coefficients b and the adjusted contents x̂ᵢ together (Levenberg–Marquardt on
//! the whole vector, the same objective as orthogonal distance regression). The
//! covariance of b is the unscaled one: the b-block of (JᵀJ)⁻¹ at the minimum, so it
//! expresses the stated uncertainties, not the scatter (ISO 6143 does not scale by S).
//! Internally x and y are scaled to order one so that ppm contents and cubic terms stay
//! well conditioned; the coefficients and covariance are returned in the file's units.

use nalgebra::{DMatrix, DVector};

/// One reference mixture: content and response, each with its standard uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Content, mole fraction.
    pub x: f64,
    /// Standard uncertainty of the content, mole fraction.
    pub ux: f64,
    /// The analyser's response, in its own unit.
    pub y: f64,
    /// Standard uncertainty of the response.
    pub uy: f64,
}

/// The calibration functions ISO 6143 allows that this program fits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Function {
    Linear,
    Quadratic,
    Cubic,
}

impl Function {
    pub const ALL: [Function; 3] = [Function::Linear, Function::Quadratic, Function::Cubic];

    /// The number of coefficients.
    pub fn parameters(self) -> usize {
        match self {
            Function::Linear => 2,
            Function::Quadratic => 3,
            Function::Cubic => 4,
        }
    }

    /// The name used in files and output.
    pub fn key(self) -> &'static str {
        match self {
            Function::Linear => "linear",
            Function::Quadratic => "quadratic",
            Function::Cubic => "cubic",
        }
    }

    /// Read a name as written in a file.
    pub fn parse(text: &str) -> Option<Function> {
        Function::ALL.into_iter().find(|f| f.key().eq_ignore_ascii_case(text.trim()))
    }
}

/// Why no calibration function came out.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    #[error("a {function} function has {parameters} coefficients and needs at least {parameters} reference mixtures; {given} given")]
    TooFewStandards { function: &'static str, parameters: usize, given: usize },
    #[error("{0}")]
    NotMonotonic(String),
    #[error("the fit did not converge in {0} iterations; check the responses for a slip")]
    NoConvergence(usize),
    #[error("the reference mixtures do not determine the function (two at the same content?)")]
    Singular,
}

/// A fitted calibration function.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    pub function: Function,
    /// b₀, b₁, … in the file's units: response per mole fraction to the power k.
    pub coefficients: Vec<f64>,
    /// Unscaled covariance of the coefficients.
    pub covariance: DMatrix<f64>,
    /// The adjusted contents x̂ᵢ, one per reference mixture.
    pub adjusted: Vec<f64>,
    /// Weighted residuals ((xᵢ − x̂ᵢ)/u(xᵢ), (yᵢ − F(x̂ᵢ))/u(yᵢ)).
    pub weighted_residuals: Vec<(f64, f64)>,
    /// The minimised sum S.
    pub sum_of_squares: f64,
    /// Reference mixtures less coefficients.
    pub degrees_of_freedom: usize,
    /// The range of the reference mixtures' contents.
    pub range: (f64, f64),
}

impl Fit {
    /// F(x): the response the function gives for content x.
    pub fn response(&self, x: f64) -> f64 {
        polynomial(&self.coefficients, x)
    }

    /// dF/dx at x.
    pub fn slope(&self, x: f64) -> f64 {
        polynomial_slope(&self.coefficients, x)
    }

    /// ISO 6143's goodness of fit: the largest absolute weighted residual, in x or y.
    /// The function is adequate where it does not exceed 2.
    pub fn goodness(&self) -> f64 {
        self.weighted_residuals.iter().map(|(dx, dy)| dx.abs().max(dy.abs())).fold(0.0, f64::max)
    }

    /// u(F(x)) from the coefficients' covariance alone.
    fn u_response(&self, x: f64) -> f64 {
        let g = DVector::from_iterator(self.coefficients.len(), (0..self.coefficients.len()).map(|k| x.powi(k as i32)));
        (g.transpose() * &self.covariance * &g)[(0, 0)].max(0.0).sqrt()
    }

    /// The content whose response is y, searched over the calibrated range; `Err` holds
    /// the content the function gives outside that range, if any.
    pub fn content_of(&self, y: f64) -> Result<f64, Option<f64>> {
        let (low, high) = self.range;
        let (f_low, f_high) = (self.response(low) - y, self.response(high) - y);
        if f_low == 0.0 {
            return Ok(low);
        }
        if f_high == 0.0 {
            return Ok(high);
        }
        if f_low.signum() == f_high.signum() {
            // Outside: follow the function by Newton from the nearer end, if it gets there.
            let mut x = if f_low.abs() < f_high.abs() { low } else { high };
            for _ in 0..100 {
                let slope = self.slope(x);
                if slope == 0.0 || !slope.is_finite() {
                    return Err(None);
                }
                let step = (self.response(x) - y) / slope;
                x -= step;
                if step.abs() <= 1e-15 * x.abs().max(f64::MIN_POSITIVE) {
                    return Err(Some(x).filter(|x| x.is_finite()));
                }
            }
            return Err(None);
        }
        // Inside: the function is monotonic over the range (checked by `fit`), so bisection
        // to the last bit is safe; Newton speeds it where it behaves.
        let (mut a, mut b, mut fa) = (low, high, f_low);
        for _ in 0..200 {
            let mid = 0.5 * (a + b);
            let fm = self.response(mid) - y;
            if fm == 0.0 || (b - a) <= 4.0 * f64::EPSILON * mid.abs() {
                return Ok(mid);
            }
            if fm.signum() == fa.signum() {
                a = mid;
                fa = fm;
            } else {
                b = mid;
            }
        }
        Ok(0.5 * (a + b))
    }

    /// The standard uncertainty of the content `x` read from a response with standard
    /// uncertainty uy.
    pub fn u_content(&self, x: f64, uy: f64) -> f64 {
        (uy * uy + self.u_response(x).powi(2)).sqrt() / self.slope(x).abs()
    }

    /// The sample's content and its standard uncertainty from its response y with
    /// standard uncertainty uy: u²(x) = (u²(y) + gᵀ·cov(b)·g) / F′(x)², g = (1, x, x², …).
    pub fn analyse(&self, y: f64, uy: f64) -> Result<(f64, f64), Option<f64>> {
        let x = self.content_of(y)?;
        Ok((x, self.u_content(x, uy)))
    }
}

fn polynomial(b: &[f64], x: f64) -> f64 {
    b.iter().rev().fold(0.0, |acc, bk| acc * x + bk)
}

fn polynomial_slope(b: &[f64], x: f64) -> f64 {
    b.iter().enumerate().skip(1).map(|(k, bk)| k as f64 * bk * x.powi(k as i32 - 1)).sum()
}

/// The residual vector and its Jacobian at θ = (c, x̂) in scaled units.
fn residuals(points: &[Point], p: usize, theta: &DVector<f64>) -> (DVector<f64>, DMatrix<f64>) {
    let n = points.len();
    let c = theta.rows(0, p).iter().copied().collect::<Vec<_>>();
    let mut r = DVector::zeros(2 * n);
    let mut j = DMatrix::zeros(2 * n, p + n);
    for (i, pt) in points.iter().enumerate() {
        let xh = theta[p + i];
        r[i] = (pt.x - xh) / pt.ux;
        j[(i, p + i)] = -1.0 / pt.ux;
        r[n + i] = (pt.y - polynomial(&c, xh)) / pt.uy;
        for k in 0..p {
            j[(n + i, k)] = -xh.powi(k as i32) / pt.uy;
        }
        j[(n + i, p + i)] = -polynomial_slope(&c, xh) / pt.uy;
    }
    (r, j)
}

/// Weighted least squares of y on x alone: the first guess of the coefficients.
fn first_guess(points: &[Point], p: usize) -> Option<Vec<f64>> {
    let n = points.len();
    let a = DMatrix::from_fn(n, p, |i, k| points[i].x.powi(k as i32) / points[i].uy);
    let b = DVector::from_fn(n, |i, _| points[i].y / points[i].uy);
    let normal = a.transpose() * &a;
    normal.lu().solve(&(a.transpose() * b)).map(|c| c.iter().copied().collect())
}

/// Fit `function` to the reference mixtures.
pub fn fit(points: &[Point], function: Function) -> Result<Fit, FitError> {
    let p = function.parameters();
    if points.len() < p {
        return Err(FitError::TooFewStandards { function: function.key(), parameters: p, given: points.len() });
    }
    check_data_monotonic(points)?;
    // Scale to order one: x by its largest value, y by its largest magnitude.
    let sx = points.iter().map(|q| q.x.abs()).fold(0.0, f64::max);
    let sy = points.iter().map(|q| q.y.abs()).fold(0.0, f64::max);
    if !(sx > 0.0) || !(sy > 0.0) {
        return Err(FitError::Singular);
    }
    let scaled: Vec<Point> =
        points.iter().map(|q| Point { x: q.x / sx, ux: q.ux / sx, y: q.y / sy, uy: q.uy / sy }).collect();
    let (theta, j) = minimise(&scaled, p)?;
    let n = points.len();
    let normal = j.transpose() * &j;
    let inverse = normal.try_inverse().ok_or(FitError::Singular)?;
    // Back to the file's units: b_k = c_k·sy/sx^k, cov(b) = D·cov(c)·D.
    let d: Vec<f64> = (0..p).map(|k| sy / sx.powi(k as i32)).collect();
    let coefficients: Vec<f64> = (0..p).map(|k| theta[k] * d[k]).collect();
    let covariance = DMatrix::from_fn(p, p, |a, b| inverse[(a, b)] * d[a] * d[b]);
    let adjusted: Vec<f64> = (0..n).map(|i| theta[p + i] * sx).collect();
    let weighted_residuals: Vec<(f64, f64)> = points
        .iter()
        .zip(&adjusted)
        .map(|(q, xh)| ((q.x - xh) / q.ux, (q.y - polynomial(&coefficients, *xh)) / q.uy))
        .collect();
    let sum_of_squares = weighted_residuals.iter().map(|(a, b)| a * a + b * b).sum();
    let low = points.iter().map(|q| q.x).fold(f64::INFINITY, f64::min);
    let high = points.iter().map(|q| q.x).fold(f64::NEG_INFINITY, f64::max);
    let fit = Fit {
        function,
        coefficients,
        covariance,
        adjusted,
        weighted_residuals,
        sum_of_squares,
        degrees_of_freedom: n - p,
        range: (low, high),
    };
    check_function_monotonic(&fit)?;
    Ok(fit)
}

/// Levenberg–Marquardt over θ = (c, x̂) from the weighted least-squares guess; returns θ
/// and the Jacobian at the minimum.
fn minimise(points: &[Point], p: usize) -> Result<(DVector<f64>, DMatrix<f64>), FitError> {
    const MAX_ITERATIONS: usize = 500;
    let n = points.len();
    let guess = first_guess(points, p).ok_or(FitError::Singular)?;
    let mut theta = DVector::from_fn(p + n, |k, _| if k < p { guess[k] } else { points[k - p].x });
    let (mut r, mut j) = residuals(points, p, &theta);
    let mut s = r.norm_squared();
    let mut lambda = 1e-3;
    for _ in 0..MAX_ITERATIONS {
        let jt = j.transpose();
        let normal = &jt * &j;
        let gradient = &jt * &r;
        let mut damped = normal.clone();
        for k in 0..p + n {
            damped[(k, k)] += lambda * normal[(k, k)].max(1e-300);
        }
        let Some(step) = damped.cholesky().map(|c| c.solve(&(-&gradient))) else {
            lambda *= 10.0;
            continue;
        };
        let trial = &theta + &step;
        let (r_trial, j_trial) = residuals(points, p, &trial);
        let s_trial = r_trial.norm_squared();
        if s_trial.is_finite() && s_trial <= s {
            let small = step.iter().zip(trial.iter()).all(|(d, t)| d.abs() <= 1e-13 * (1.0 + t.abs()));
            let flat = s - s_trial <= 1e-15 * s.max(1e-300);
            theta = trial;
            r = r_trial;
            j = j_trial;
            s = s_trial;
            lambda = (lambda / 10.0).max(1e-12);
            if small || (flat && lambda <= 1e-9) {
                return Ok((theta, j));
            }
        } else {
            lambda *= 10.0;
            if lambda > 1e12 {
                // No step lowers S any more: at the minimum to machine precision.
                return Ok((theta, j));
            }
        }
    }
    Err(FitError::NoConvergence(MAX_ITERATIONS))
}

/// The responses, taken in order of content, must all rise or all fall.
fn check_data_monotonic(points: &[Point]) -> Result<(), FitError> {
    // Two mixtures of the same content (two cylinders of one certified content) are
    // allowed; the rise or fall is judged between distinct contents.
    let mut sorted: Vec<&Point> = points.iter().collect();
    sorted.sort_by(|a, b| a.x.total_cmp(&b.x));
    sorted.dedup_by(|b, a| a.x == b.x);
    if sorted.len() < 2 {
        return Err(FitError::Singular);
    }
    let rises: Vec<bool> = sorted.windows(2).map(|w| w[1].y > w[0].y).collect();
    if let Some(k) = rises.iter().position(|&r| r != rises[0]) {
        let (a, b) = (sorted[k], sorted[k + 1]);
        return Err(FitError::NotMonotonic(format!(
            "the responses are not monotonic in the content: {} at {} but {} at {} (each response should {} with \
             the content)",
            a.y,
            crate::units::fraction_text(a.x),
            b.y,
            crate::units::fraction_text(b.x),
            if rises[0] { "rise" } else { "fall" }
        )));
    }
    Ok(())
}

/// The fitted function must keep one slope sign over the calibrated range.
fn check_function_monotonic(fit: &Fit) -> Result<(), FitError> {
    const SAMPLES: usize = 400;
    let (low, high) = fit.range;
    let sign = fit.slope(low).signum();
    for k in 0..=SAMPLES {
        let x = low + (high - low) * k as f64 / SAMPLES as f64;
        let slope = fit.slope(x);
        if slope == 0.0 || slope.signum() != sign {
            return Err(FitError::NotMonotonic(format!(
                "the fitted {} function turns at about {}, inside the calibrated range {} to {}; choose a lower \
                 degree or more reference mixtures",
                fit.function.key(),
                crate::units::fraction_text(x),
                crate::units::fraction_text(low),
                crate::units::fraction_text(high)
            )));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn exact_line(b0: f64, b1: f64) -> Vec<Point> {
        [0.02, 0.05, 0.08, 0.11, 0.14].iter().map(|&x| Point { x, ux: 1e-5, y: b0 + b1 * x, uy: 1e-4 }).collect()
    }

    #[test]
    fn points_on_a_line_give_that_line_with_zero_residuals() {
        let fit = fit(&exact_line(0.003, 9.9), Function::Linear).unwrap();
        assert!((fit.coefficients[0] - 0.003).abs() < 1e-12, "{:?}", fit.coefficients);
        assert!((fit.coefficients[1] - 9.9).abs() < 1e-10);
        assert!(fit.goodness() < 1e-8);
        let (x, _) = fit.analyse(0.003 + 9.9 * 0.1, 1e-4).unwrap();
        assert!((x - 0.1).abs() < 1e-13);
    }

    #[test]
    fn too_few_standards_and_turning_functions_are_refused() {
        let two = &exact_line(0.0, 10.0)[..2];
        assert!(matches!(fit(two, Function::Quadratic), Err(FitError::TooFewStandards { given: 2, .. })));
        let mut bent = exact_line(0.0, 10.0);
        bent[2].y = 5.0; // falls then rises
        assert!(matches!(fit(&bent, Function::Linear), Err(FitError::NotMonotonic(_))));
    }

    #[test]
    fn a_sample_outside_the_range_is_placed_but_refused() {
        let fit = fit(&exact_line(0.0, 10.0), Function::Linear).unwrap();
        let outside = fit.analyse(1.6, 1e-4).unwrap_err().unwrap();
        assert!((outside - 0.16).abs() < 1e-12);
    }
}
