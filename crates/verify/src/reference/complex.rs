//! Minimal complex arithmetic (own implementation, to keep the verify crate free of extra
//! dependencies). Only what the dispersion solver needs.

use std::ops::{Add, Div, Mul, Neg, Sub};

/// A complex number `re + i im`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Complex {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

impl Complex {
    /// `re + i im`.
    pub const fn new(re: f64, im: f64) -> Self {
        Self { re, im }
    }
    /// Zero.
    pub const ZERO: Complex = Complex::new(0.0, 0.0);
    /// One.
    pub const ONE: Complex = Complex::new(1.0, 0.0);
    /// The imaginary unit.
    pub const I: Complex = Complex::new(0.0, 1.0);
    /// Modulus |z| (overflow-safe).
    pub fn abs(self) -> f64 {
        self.re.hypot(self.im)
    }
    /// Complex conjugate.
    pub fn conj(self) -> Self {
        Self::new(self.re, -self.im)
    }
    /// Multiplication by a real.
    pub fn scale(self, s: f64) -> Self {
        Self::new(self.re * s, self.im * s)
    }
    /// Principal square root.
    pub fn sqrt(self) -> Self {
        let r = self.abs();
        if r == 0.0 {
            return Self::ZERO;
        }
        let a = ((r + self.re.abs()) / 2.0).sqrt();
        if self.re >= 0.0 {
            Self::new(a, self.im / (2.0 * a))
        } else {
            Self::new(self.im.abs() / (2.0 * a), a.copysign(self.im))
        }
    }
    /// True when both parts are finite.
    pub fn is_finite(self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
}

impl From<f64> for Complex {
    fn from(re: f64) -> Self {
        Self::new(re, 0.0)
    }
}

impl Add for Complex {
    type Output = Complex;
    fn add(self, o: Complex) -> Complex {
        Complex::new(self.re + o.re, self.im + o.im)
    }
}
impl Sub for Complex {
    type Output = Complex;
    fn sub(self, o: Complex) -> Complex {
        Complex::new(self.re - o.re, self.im - o.im)
    }
}
impl Mul for Complex {
    type Output = Complex;
    fn mul(self, o: Complex) -> Complex {
        Complex::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
}
impl Div for Complex {
    type Output = Complex;
    fn div(self, o: Complex) -> Complex {
        // Smith's algorithm (Smith 1962, Commun. ACM 5, 435) against overflow.
        if o.re.abs() >= o.im.abs() {
            let r = o.im / o.re;
            let d = o.re + o.im * r;
            Complex::new((self.re + self.im * r) / d, (self.im - self.re * r) / d)
        } else {
            let r = o.re / o.im;
            let d = o.re * r + o.im;
            Complex::new((self.re * r + self.im) / d, (self.im * r - self.re) / d)
        }
    }
}
impl Neg for Complex {
    type Output = Complex;
    fn neg(self) -> Complex {
        Complex::new(-self.re, -self.im)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn field_identities() {
        let a = Complex::new(1.5, -2.0);
        let b = Complex::new(-0.25, 3.0);
        let q = (a * b) / b;
        assert!((q - a).abs() < 1e-15);
        let s = a.sqrt();
        assert!((s * s - a).abs() < 1e-15);
        let s = Complex::new(-4.0, -1e-30).sqrt();
        assert!((s - Complex::new(0.0, -2.0)).abs() < 1e-15);
        assert!((Complex::I * Complex::I + Complex::ONE).abs() == 0.0);
        assert_eq!((a * a.conj()).im, 0.0);
    }
}
