//! A small complex number for impedances and Fourier coefficients (crate-private).

use std::ops::{Add, Div, Mul, Neg, Sub};

/// A complex number `re + j·im`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Complex {
    pub(crate) re: f64,
    pub(crate) im: f64,
}

impl Complex {
    pub(crate) const fn new(re: f64, im: f64) -> Self {
        Self { re, im }
    }
    pub(crate) const fn real(re: f64) -> Self {
        Self { re, im: 0.0 }
    }
    /// e^{jθ}
    pub(crate) fn expj(theta: f64) -> Self {
        Self::new(theta.cos(), theta.sin())
    }
    pub(crate) fn abs(self) -> f64 {
        self.re.hypot(self.im)
    }
    pub(crate) fn arg(self) -> f64 {
        self.im.atan2(self.re)
    }
    pub(crate) fn scale(self, k: f64) -> Self {
        Self::new(self.re * k, self.im * k)
    }
    pub(crate) fn recip(self) -> Self {
        let d = self.re * self.re + self.im * self.im;
        Self::new(self.re / d, -self.im / d)
    }
    /// Two impedances in parallel.
    pub(crate) fn parallel(self, other: Self) -> Self {
        (self * other) / (self + other)
    }
    /// Impedance of an inductance at angular frequency ω.
    pub(crate) fn inductor(l: f64, w: f64) -> Self {
        Self::new(0.0, w * l)
    }
    /// Impedance of a capacitance at angular frequency ω.
    pub(crate) fn capacitor(c: f64, w: f64) -> Self {
        Self::new(0.0, -1.0 / (w * c))
    }
}

impl Add for Complex {
    type Output = Self;
    fn add(self, o: Self) -> Self {
        Self::new(self.re + o.re, self.im + o.im)
    }
}
impl Sub for Complex {
    type Output = Self;
    fn sub(self, o: Self) -> Self {
        Self::new(self.re - o.re, self.im - o.im)
    }
}
impl Mul for Complex {
    type Output = Self;
    fn mul(self, o: Self) -> Self {
        Self::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
}
impl Div for Complex {
    type Output = Self;
    fn div(self, o: Self) -> Self {
        let d = o.re * o.re + o.im * o.im;
        Self::new(
            (self.re * o.re + self.im * o.im) / d,
            (self.im * o.re - self.re * o.im) / d,
        )
    }
}
impl Neg for Complex {
    type Output = Self;
    fn neg(self) -> Self {
        Self::new(-self.re, -self.im)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn algebra() {
        // (1 + 2j)(3 − j) = 5 + 5j, by hand
        let p = Complex::new(1.0, 2.0) * Complex::new(3.0, -1.0);
        assert_eq!(p, Complex::new(5.0, 5.0));
        let q = p / Complex::new(3.0, -1.0);
        assert!((q.re - 1.0).abs() < 1e-12 && (q.im - 2.0).abs() < 1e-12);
        // 2 Ω ∥ 2 Ω = 1 Ω
        assert!((Complex::real(2.0).parallel(Complex::real(2.0)).re - 1.0).abs() < 1e-12);
    }
}
