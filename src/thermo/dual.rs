//! Numbers that carry their first and second derivative with respect to one variable
//! (forward-mode automatic differentiation), so that the multi-fluid model's residual
//! Helmholtz energy is written once, as a value, and its derivatives in density and in
//! each amount come out exact to rounding.

use std::ops::{Add, Div, Mul, Neg, Sub};

/// A value v with its first (d) and second (dd) derivative.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct D2 {
    pub v: f64,
    pub d: f64,
    pub dd: f64,
}

impl D2 {
    /// A constant.
    pub const fn c(v: f64) -> D2 {
        D2 { v, d: 0.0, dd: 0.0 }
    }

    /// The variable itself at `v`.
    pub const fn var(v: f64) -> D2 {
        D2 { v, d: 1.0, dd: 0.0 }
    }

    /// f(self) given f, f′ and f″ at self's value (the chain rule).
    fn chain(self, f: f64, f1: f64, f2: f64) -> D2 {
        D2 { v: f, d: f1 * self.d, dd: f1 * self.dd + f2 * self.d * self.d }
    }

    pub fn exp(self) -> D2 {
        let e = self.v.exp();
        self.chain(e, e, e)
    }

    pub fn ln(self) -> D2 {
        self.chain(self.v.ln(), 1.0 / self.v, -1.0 / (self.v * self.v))
    }

    /// self^k for a real k (self > 0).
    pub fn powf(self, k: f64) -> D2 {
        let p = self.v.powf(k - 2.0);
        self.chain(p * self.v * self.v, k * p * self.v, k * (k - 1.0) * p)
    }

    /// self^k for an integer k.
    pub fn powi(self, k: i32) -> D2 {
        match k {
            0 => D2::c(1.0),
            1 => self,
            _ => {
                let p = self.v.powi(k - 2);
                let kf = k as f64;
                self.chain(p * self.v * self.v, kf * p * self.v, kf * (kf - 1.0) * p)
            }
        }
    }

    pub fn sqrt(self) -> D2 {
        let s = self.v.sqrt();
        self.chain(s, 0.5 / s, -0.25 / (s * self.v))
    }

    pub fn recip(self) -> D2 {
        let r = 1.0 / self.v;
        self.chain(r, -r * r, 2.0 * r * r * r)
    }
}

impl Add for D2 {
    type Output = D2;
    fn add(self, o: D2) -> D2 {
        D2 { v: self.v + o.v, d: self.d + o.d, dd: self.dd + o.dd }
    }
}

impl Sub for D2 {
    type Output = D2;
    fn sub(self, o: D2) -> D2 {
        D2 { v: self.v - o.v, d: self.d - o.d, dd: self.dd - o.dd }
    }
}

impl Mul for D2 {
    type Output = D2;
    fn mul(self, o: D2) -> D2 {
        D2 { v: self.v * o.v, d: self.d * o.v + self.v * o.d, dd: self.dd * o.v + 2.0 * self.d * o.d + self.v * o.dd }
    }
}

impl Div for D2 {
    type Output = D2;
    #[allow(clippy::suspicious_arithmetic_impl)] // a / b = a · (1/b)
    fn div(self, o: D2) -> D2 {
        self * o.recip()
    }
}

impl Neg for D2 {
    type Output = D2;
    fn neg(self) -> D2 {
        D2 { v: -self.v, d: -self.d, dd: -self.dd }
    }
}

impl Add<f64> for D2 {
    type Output = D2;
    fn add(self, o: f64) -> D2 {
        D2 { v: self.v + o, ..self }
    }
}

impl Sub<f64> for D2 {
    type Output = D2;
    fn sub(self, o: f64) -> D2 {
        D2 { v: self.v - o, ..self }
    }
}

impl Mul<f64> for D2 {
    type Output = D2;
    fn mul(self, o: f64) -> D2 {
        D2 { v: self.v * o, d: self.d * o, dd: self.dd * o }
    }
}

impl Div<f64> for D2 {
    type Output = D2;
    fn div(self, o: f64) -> D2 {
        self * (1.0 / o)
    }
}

impl Mul<D2> for f64 {
    type Output = D2;
    fn mul(self, o: D2) -> D2 {
        o * self
    }
}

impl Add<D2> for f64 {
    type Output = D2;
    fn add(self, o: D2) -> D2 {
        o + self
    }
}

impl Sub<D2> for f64 {
    type Output = D2;
    fn sub(self, o: D2) -> D2 {
        -o + self
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// f(x) = x² ln(x) · exp(−x^1.5) / (1 + √x) and its derivatives by central differences.
    fn f(x: D2) -> D2 {
        x.powi(2) * x.ln() * (-x.powf(1.5)).exp() / (1.0 + x.sqrt())
    }

    #[test]
    fn derivatives_agree_with_central_differences() {
        for x0 in [0.3, 1.0, 2.7] {
            let got = f(D2::var(x0));
            let h = 1e-4;
            let at = |x: f64| f(D2::c(x)).v;
            let d1 = (at(x0 + h) - at(x0 - h)) / (2.0 * h);
            let d2 = (at(x0 + h) - 2.0 * at(x0) + at(x0 - h)) / (h * h);
            assert!((got.d - d1).abs() < 1e-7 * d1.abs().max(1.0), "{x0}: {} vs {d1}", got.d);
            assert!((got.dd - d2).abs() < 1e-5 * d2.abs().max(1.0), "{x0}: {} vs {d2}", got.dd);
        }
        // Constants carry no derivative; 1/x and x^-1 agree.
        assert_eq!(D2::c(2.0).exp().d, 0.0);
        let x = D2::var(1.7);
        let (a, b) = (x.recip(), x.powi(-1));
        assert!((a.d - b.d).abs() < 1e-14 && (a.dd - b.dd).abs() < 1e-14);
    }
}
