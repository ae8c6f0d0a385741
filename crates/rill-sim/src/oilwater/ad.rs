//! Forward-mode derivatives for the oil-water Jacobian: a value with its
//! derivatives in `N` unknowns (a cell's pressure and saturation, or the
//! two cells of a face).
//!
//! Written here rather than taken from a crate: the engine needs only
//! sums, products, quotients and the lift of a function whose value and
//! slope are known (`chain`), on fixed-size arrays that stay on the stack
//! and inline into the assembly loops; the dual-number crates bring a
//! linear-algebra dependency for far more than that.

use std::ops::{Add, Mul, Neg, Sub};

/// A value and its derivatives in `N` unknowns.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Ad<const N: usize> {
    pub v: f64,
    pub d: [f64; N],
}

impl<const N: usize> Ad<N> {
    /// A constant.
    #[inline]
    pub fn c(v: f64) -> Self {
        Ad { v, d: [0.0; N] }
    }

    /// Unknown number `k` at value `v`.
    #[inline]
    pub fn var(v: f64, k: usize) -> Self {
        let mut d = [0.0; N];
        d[k] = 1.0;
        Ad { v, d }
    }

    /// `f(self)` for a function whose value `f` and slope `df` at
    /// `self.v` are given.
    #[inline]
    pub fn chain(self, f: f64, df: f64) -> Self {
        let mut d = self.d;
        for x in &mut d {
            *x *= df;
        }
        Ad { v: f, d }
    }

    /// `self * k` for a plain number.
    #[inline]
    pub fn scale(self, k: f64) -> Self {
        self.chain(self.v * k, k)
    }

    /// `self / other`.
    #[inline]
    pub fn div(self, o: Self) -> Self {
        let v = self.v / o.v;
        let mut d = [0.0; N];
        for (k, x) in d.iter_mut().enumerate() {
            *x = (self.d[k] - v * o.d[k]) / o.v;
        }
        Ad { v, d }
    }

    /// The same value with derivatives in `M` unknowns, this one's at
    /// positions `at` (the others zero): a cell's pair placed into a face's
    /// four.
    #[inline]
    pub fn widen<const M: usize>(self, at: [usize; N]) -> Ad<M> {
        let mut d = [0.0; M];
        for (k, &p) in at.iter().enumerate() {
            d[p] = self.d[k];
        }
        Ad { v: self.v, d }
    }
}

impl<const N: usize> Add for Ad<N> {
    type Output = Self;
    #[inline]
    fn add(self, o: Self) -> Self {
        let mut d = self.d;
        for (x, y) in d.iter_mut().zip(o.d) {
            *x += y;
        }
        Ad { v: self.v + o.v, d }
    }
}

impl<const N: usize> Sub for Ad<N> {
    type Output = Self;
    #[inline]
    fn sub(self, o: Self) -> Self {
        let mut d = self.d;
        for (x, y) in d.iter_mut().zip(o.d) {
            *x -= y;
        }
        Ad { v: self.v - o.v, d }
    }
}

impl<const N: usize> Mul for Ad<N> {
    type Output = Self;
    #[inline]
    fn mul(self, o: Self) -> Self {
        let mut d = [0.0; N];
        for (k, x) in d.iter_mut().enumerate() {
            *x = self.d[k] * o.v + self.v * o.d[k];
        }
        Ad { v: self.v * o.v, d }
    }
}

impl<const N: usize> Neg for Ad<N> {
    type Output = Self;
    #[inline]
    fn neg(self) -> Self {
        self.scale(-1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derivatives_of_a_compound_expression_match_differences() {
        // f(x, y) = exp(x y) / (x + y) - x y
        let exp = |a: Ad<2>| a.chain(a.v.exp(), a.v.exp());
        let f = |x: Ad<2>, y: Ad<2>| exp(x * y).div(x + y) - x * y;
        let (x0, y0) = (0.7, 1.3);
        let r = f(Ad::var(x0, 0), Ad::var(y0, 1));
        let g = |x: f64, y: f64| (x * y).exp() / (x + y) - x * y;
        let h = 1e-6;
        let dx = (g(x0 + h, y0) - g(x0 - h, y0)) / (2.0 * h);
        let dy = (g(x0, y0 + h) - g(x0, y0 - h)) / (2.0 * h);
        assert!((r.v - g(x0, y0)).abs() < 1e-15);
        assert!((r.d[0] - dx).abs() < 1e-8, "{} {dx}", r.d[0]);
        assert!((r.d[1] - dy).abs() < 1e-8, "{} {dy}", r.d[1]);
        let w: Ad<4> = r.widen([2, 3]);
        assert_eq!(w.d, [0.0, 0.0, r.d[0], r.d[1]]);
    }
}
