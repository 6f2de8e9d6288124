//! Numerical helpers: polynomial evaluation and the safeguarded Newton iteration used by
//! every inverse function of this module.
//!
//! The function must be increasing on the bracket `[lo, hi]` with `f(lo) <= 0 <= f(hi)`.
//! Each step is a Newton step when it stays strictly inside the current bracket and at
//! least halves the step before last, otherwise a bisection step; the bracket shrinks at
//! every iteration, so the iteration cannot run away or cycle.

/// Evaluates sum c_i x^i by Horner's scheme.
pub(super) fn horner(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

/// Evaluates p(x) = sum c_i x^i and p'(x) together by Horner's scheme.
pub(super) fn horner_with_derivative(c: &[f64], x: f64) -> (f64, f64) {
    let mut p = 0.0;
    let mut dp = 0.0;
    for &ci in c.iter().rev() {
        dp = dp * x + p;
        p = p * x + ci;
    }
    (p, dp)
}

/// Why a solution could not be found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum SolveFailure {
    /// `f(lo) > 0` or `f(hi) < 0`: the bracket holds no sign change.
    NotBracketed,
    /// The tolerance was not reached within the iteration limit (or f was not finite).
    NoConvergence,
}

/// Iteration limit: bisection alone needs about 60 halvings to exhaust an f64 interval.
pub(super) const MAX_ITERATIONS: u32 = 200;

/// Result of a successful solution.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Solution {
    /// The argument found.
    pub x: f64,
    /// The residual f(x) there.
    pub residual: f64,
}

/// Finds x in `[lo, hi]` with `|f(x)| < tol`, starting at `x0`.
///
/// `f` returns (f(x), f'(x)). If the bracket collapses to adjacent floating-point numbers
/// before the tolerance is met (a step of a piecewise function), the end point with the
/// smaller residual is returned when that residual is at most `step_tol`.
pub(super) fn solve_increasing<F>(
    f: F,
    lo: f64,
    hi: f64,
    x0: f64,
    tol: f64,
    step_tol: f64,
) -> Result<Solution, SolveFailure>
where
    F: Fn(f64) -> (f64, f64),
{
    if !(lo.is_finite() && hi.is_finite() && lo <= hi) {
        return Err(SolveFailure::NotBracketed);
    }
    let (mut lo, mut hi) = (lo, hi);
    let (f_lo, _) = f(lo);
    let (f_hi, _) = f(hi);
    if !(f_lo.is_finite() && f_hi.is_finite()) {
        return Err(SolveFailure::NoConvergence);
    }
    // An end that meets the tolerance is the answer even when rounding put the target a
    // hair outside the bracket (f(hi) slightly below 0, or f(lo) slightly above).
    if f_lo.abs() < tol {
        return Ok(Solution {
            x: lo,
            residual: f_lo,
        });
    }
    if f_hi.abs() < tol {
        return Ok(Solution {
            x: hi,
            residual: f_hi,
        });
    }
    if f_lo > 0.0 || f_hi < 0.0 {
        return Err(SolveFailure::NotBracketed);
    }
    let (mut r_lo, mut r_hi) = (f_lo, f_hi);
    let mut x = if x0.is_finite() && x0 > lo && x0 < hi {
        x0
    } else {
        0.5 * (lo + hi)
    };
    let mut step_before_last = hi - lo;
    let mut last_step = step_before_last;
    for _ in 0..MAX_ITERATIONS {
        let (fx, dfx) = f(x);
        if !fx.is_finite() {
            return Err(SolveFailure::NoConvergence);
        }
        if fx.abs() < tol {
            return Ok(Solution { x, residual: fx });
        }
        if fx < 0.0 {
            lo = x;
            r_lo = fx;
        } else {
            hi = x;
            r_hi = fx;
        }
        let width = hi - lo;
        if width <= 4.0 * f64::EPSILON * lo.abs().max(hi.abs()).max(f64::MIN_POSITIVE) {
            // The bracket cannot shrink further: a step of a piecewise function lies here.
            let (xb, rb) = if r_lo.abs() <= r_hi.abs() {
                (lo, r_lo)
            } else {
                (hi, r_hi)
            };
            return if rb.abs() <= step_tol {
                Ok(Solution {
                    x: xb,
                    residual: rb,
                })
            } else {
                Err(SolveFailure::NoConvergence)
            };
        }
        let newton = if dfx.is_finite() && dfx > 0.0 {
            x - fx / dfx
        } else {
            f64::NAN
        };
        let step = (newton - x).abs();
        let next = if newton > lo && newton < hi && step <= 0.5 * step_before_last {
            newton
        } else {
            0.5 * (lo + hi)
        };
        step_before_last = last_step;
        last_step = (next - x).abs();
        x = next;
    }
    Err(SolveFailure::NoConvergence)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn horner_evaluates_value_and_derivative() {
        // p(x) = 1 - 2x + 3x^2: p(2) = 9, p'(2) = -2 + 6*2 = 10 (by hand).
        let c = [1.0, -2.0, 3.0];
        assert_eq!(horner(&c, 2.0), 9.0);
        assert_eq!(horner_with_derivative(&c, 2.0), (9.0, 10.0));
        assert_eq!(horner_with_derivative(&[], 2.0), (0.0, 0.0));
    }

    #[test]
    fn finds_cube_root_of_two() {
        // x^3 - 2 = 0 has the root 2^(1/3) = 1.259921049894873 (exact to f64).
        let s = solve_increasing(
            |x| (x * x * x - 2.0, 3.0 * x * x),
            0.0,
            2.0,
            1.0,
            1e-14,
            0.0,
        )
        .unwrap();
        assert!((s.x - 2f64.cbrt()).abs() < 1e-14);
    }

    #[test]
    fn refuses_missing_sign_change() {
        let r = solve_increasing(|x| (x + 10.0, 1.0), 0.0, 1.0, 0.5, 1e-12, 0.0);
        assert_eq!(r, Err(SolveFailure::NotBracketed));
    }

    /// Found by fuzzing (fuzz target `thermo`, through the PRT inverse): a target rounded
    /// just past the end of the bracket was refused as "not bracketed" although the end
    /// met the tolerance.
    #[test]
    fn end_within_tolerance_is_accepted_outside_the_bracket() {
        // f(hi) = 1 - (1 + 1e-15) < 0, but |f(hi)| < 1e-13.
        let s = solve_increasing(|x| (x - (1.0 + 1e-15), 1.0), 0.0, 1.0, 0.5, 1e-13, 0.0).unwrap();
        assert_eq!(s.x, 1.0);
        let s = solve_increasing(|x| (x + 1e-15, 1.0), 0.0, 1.0, 0.5, 1e-13, 0.0).unwrap();
        assert_eq!(s.x, 0.0);
        // Farther out than the tolerance it is still refused.
        let r = solve_increasing(|x| (x - 1.001, 1.0), 0.0, 1.0, 0.5, 1e-13, 0.0);
        assert_eq!(r, Err(SolveFailure::NotBracketed));
    }

    #[test]
    fn accepts_step_only_within_step_tolerance() {
        // f jumps from -1e-8 to +1e-8 at x = 1: no x meets 1e-12.
        let f = |x: f64| {
            (
                if x <= 1.0 {
                    x - 1.0 - 1e-8
                } else {
                    x - 1.0 + 1e-8
                },
                1.0,
            )
        };
        let s = solve_increasing(f, 0.0, 2.0, 0.3, 1e-12, 2e-8).unwrap();
        assert!((s.x - 1.0).abs() < 1e-15);
        assert!(s.residual.abs() <= 1.0000001e-8);
        assert_eq!(
            solve_increasing(f, 0.0, 2.0, 0.3, 1e-12, 1e-9),
            Err(SolveFailure::NoConvergence)
        );
    }

    #[test]
    fn zero_derivative_falls_back_to_bisection() {
        // f(x) = x^3 has f'(0) = 0 at the root; the step tolerance is never needed.
        let s = solve_increasing(|x| (x * x * x, 3.0 * x * x), -1.0, 2.0, 1.5, 1e-30, 0.0).unwrap();
        assert!(s.x.abs() < 1e-9);
    }
}
