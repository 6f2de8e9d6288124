//! Double-double ("dd") arithmetic: an unevaluated sum `hi + lo` of two `f64` carrying about
//! 106 significant bits. Used for residuals, iterative refinement, sums of squares and basis
//! conversions in the least-squares code.
//!
//! The error-free transformations are the classic ones: TwoSum (Knuth), FastTwoSum (Dekker)
//! and TwoProd via a fused multiply-add (`f64::mul_add`, which is correctly rounded on every
//! platform, in hardware or in software).
//!
//! # Reference
//! T. J. Dekker, "A floating-point technique for extending the available precision",
//! Numer. Math. 18 (1971); D. E. Knuth, TAOCP vol. 2, 4.2.2 (TwoSum).

use std::ops::{Add, Mul, Neg, Sub};

/// A double-double number `hi + lo` with `|lo| <= ulp(hi)/2`.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub(crate) struct Dd {
    pub hi: f64,
    pub lo: f64,
}

/// Error-free sum: returns `(s, e)` with `s = fl(a + b)` and `a + b = s + e` exactly.
#[inline]
pub(crate) fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    let e = (a - (s - bb)) + (b - bb);
    (s, e)
}

/// Error-free sum for `|a| >= |b|` (or `a == 0`).
#[inline]
fn fast_two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let e = b - (s - a);
    (s, e)
}

/// Error-free product: returns `(p, e)` with `p = fl(a b)` and `a b = p + e` exactly
/// (barring underflow).
#[inline]
pub(crate) fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    let e = a.mul_add(b, -p);
    (p, e)
}

impl Dd {
    pub const ZERO: Dd = Dd { hi: 0.0, lo: 0.0 };
    pub const ONE: Dd = Dd { hi: 1.0, lo: 0.0 };

    #[inline]
    pub fn from_f64(v: f64) -> Dd {
        Dd { hi: v, lo: 0.0 }
    }

    /// Exact sum of two doubles.
    #[inline]
    pub fn sum_of(a: f64, b: f64) -> Dd {
        let (hi, lo) = two_sum(a, b);
        Dd { hi, lo }
    }

    /// Exact product of two doubles.
    #[inline]
    pub fn prod_of(a: f64, b: f64) -> Dd {
        let (hi, lo) = two_prod(a, b);
        Dd { hi, lo }
    }

    /// Nearest double.
    #[inline]
    pub fn to_f64(self) -> f64 {
        self.hi + self.lo
    }

    #[inline]
    pub fn add_f64(self, b: f64) -> Dd {
        let (s, e) = two_sum(self.hi, b);
        let e = e + self.lo;
        let (hi, lo) = fast_two_sum(s, e);
        Dd { hi, lo }
    }

    #[inline]
    pub fn mul_f64(self, b: f64) -> Dd {
        let (p, e) = two_prod(self.hi, b);
        let e = self.lo.mul_add(b, e);
        let (hi, lo) = fast_two_sum(p, e);
        Dd { hi, lo }
    }

    /// `self / b` to double-double accuracy (one Newton-type correction).
    pub fn div(self, b: Dd) -> Dd {
        let q1 = self.hi / b.hi;
        let r = self - b.mul_f64(q1);
        let q2 = r.hi / b.hi;
        let r = r - b.mul_f64(q2);
        let q3 = r.hi / b.hi;
        let (hi, lo) = fast_two_sum(q1, q2);
        Dd { hi, lo }.add_f64(q3)
    }

    /// Square root to double-double accuracy; negative input returns NaN.
    pub fn sqrt(self) -> Dd {
        if self.hi <= 0.0 {
            return Dd::from_f64(if self.hi == 0.0 { 0.0 } else { f64::NAN });
        }
        let s = self.hi.sqrt();
        // self - s^2, computed exactly for the leading part.
        let r = self - Dd::prod_of(s, s);
        let corr = r.hi / (2.0 * s);
        let (hi, lo) = fast_two_sum(s, corr);
        Dd { hi, lo }
    }

    /// Integer power by repeated squaring.
    pub fn powi(self, mut n: u32) -> Dd {
        let mut base = self;
        let mut acc = Dd::ONE;
        while n > 0 {
            if n & 1 == 1 {
                acc = acc * base;
            }
            base = base * base;
            n >>= 1;
        }
        acc
    }
}

impl Add for Dd {
    type Output = Dd;
    /// Accurate ("IEEE-style") double-double addition.
    #[inline]
    fn add(self, o: Dd) -> Dd {
        let (s, e) = two_sum(self.hi, o.hi);
        let (t, f) = two_sum(self.lo, o.lo);
        let e = e + t;
        let (s, e) = fast_two_sum(s, e);
        let e = e + f;
        let (hi, lo) = fast_two_sum(s, e);
        Dd { hi, lo }
    }
}

impl Sub for Dd {
    type Output = Dd;
    #[inline]
    fn sub(self, o: Dd) -> Dd {
        self + (-o)
    }
}

impl Neg for Dd {
    type Output = Dd;
    #[inline]
    fn neg(self) -> Dd {
        Dd {
            hi: -self.hi,
            lo: -self.lo,
        }
    }
}

impl Mul for Dd {
    type Output = Dd;
    #[inline]
    fn mul(self, o: Dd) -> Dd {
        let (p, e) = two_prod(self.hi, o.hi);
        let e = e + (self.hi * o.lo + self.lo * o.hi);
        let (hi, lo) = fast_two_sum(p, e);
        Dd { hi, lo }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recovers_bits_lost_in_plain_double() {
        // 1 + 2^-60 - 1 is 2^-60 exactly in dd arithmetic and 0 in plain f64.
        let tiny = 2f64.powi(-60);
        let v = Dd::from_f64(1.0).add_f64(tiny).add_f64(-1.0);
        assert_eq!(v.to_f64(), tiny);
        // (1 + 2^-30)^2 = 1 + 2^-29 + 2^-60 exactly.
        let a = Dd::from_f64(1.0 + 2f64.powi(-30));
        let sq = a * a - Dd::from_f64(1.0 + 2f64.powi(-29));
        assert_eq!(sq.to_f64(), tiny);
    }

    #[test]
    fn division_and_sqrt_are_accurate_to_dd_level() {
        let three = Dd::from_f64(3.0);
        let third = Dd::ONE.div(three);
        let back = third * three - Dd::ONE;
        assert!(back.to_f64().abs() < 1e-31);
        let r = Dd::from_f64(2.0).sqrt();
        let err = r * r - Dd::from_f64(2.0);
        assert!(err.to_f64().abs() < 1e-31);
        assert_eq!(Dd::from_f64(-4.0).powi(3).to_f64(), -64.0);
    }
}
