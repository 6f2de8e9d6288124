//! Property tests of the numerical core: relations that hold for every input of a stated kind,
//! checked on random inputs. Each property names the source of the fact it checks.
//!
//! Properties that already sit beside their code are not repeated here: the thermocouple and
//! PRT round trips (`thermocouple.rs`, `prt.rs`), the ITS-90 inverse round trips (`its90.rs`),
//! the invariance of a fit under an affine change of x (`lsq.rs`) and the no-panic checks on
//! arbitrary floats.

use proptest::prelude::*;

use super::stats::{
    BudgetOptions, Component, DecisionRule, Distribution, Dof, Outcome, PolyOptions, Tolerance,
    coverage_factor, decide, evaluate_budget, fit_polynomial,
};
use super::thermo::its90::{
    E_H2_TRIPLE_POINT_K, SILVER_FREEZING_POINT_K, WATER_TRIPLE_POINT_K, t90_from_wr, wr, wr_high,
    wr_low,
};
use super::thermo::thermocouple::TYPE_B_EMF_MINIMUM_C;
use super::thermo::{CvdCoefficients, ElementKind, PrtClass, ThermocoupleType};

/// Cases per property: enough to explore, few enough that the suite stays quick.
const CASES: u32 = 128;

// ---------------------------------------------------------------- thermocouples

/// Smallest temperature step of the monotonicity checks, °C. Adjacent published sub-range
/// functions meet with steps of up to 7.49e-8 mV (`BOUNDARY_STEP_MV`); over 1 mK every type
/// rises by far more than that (type R and S at 0 °C, the slowest: 5e-6 mV). Type B is
/// checked from 0.1 °C above its minimum, where 1 mK still gives 1.2e-9 mV, far above the
/// rounding of E there (about 1e-18 mV), and no sub-range boundary lies near.
const TC_MIN_STEP_C: f64 = 1e-3;

/// A temperature inside the range of `ty` from a fraction `u` in [0, 1]; for type B only the
/// part above its emf minimum, where the function increases.
fn tc_temperature(ty: ThermocoupleType, u: f64) -> f64 {
    let (mut lo, hi) = ty.temperature_range();
    if ty == ThermocoupleType::B {
        lo = TYPE_B_EMF_MINIMUM_C + 0.1;
    }
    lo + u * (hi - lo)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// E(t) strictly increases with t over each type's range, except type B below its minimum
    /// at 21.02 °C. Source: IEC 60584-1:2013 / NIST Monograph 175 reference functions (emf
    /// rises with temperature); the type B exception is documented in thermocouple.rs.
    #[test]
    fn thermocouple_emf_strictly_increases(
        i in 0usize..8,
        u in 0.0f64..1.0,
        step in TC_MIN_STEP_C..200.0,
    ) {
        let ty = ThermocoupleType::ALL[i];
        let t1 = tc_temperature(ty, u);
        let t2 = (t1 + step).min(ty.temperature_range().1);
        prop_assume!(t2 - t1 >= TC_MIN_STEP_C);
        let (e1, e2) = (ty.emf(t1).unwrap(), ty.emf(t2).unwrap());
        prop_assert!(e2 > e1, "type {}: E({}) = {} mV, E({}) = {} mV", ty, t1, e1, t2, e2);
    }

    /// The Seebeck coefficient dE/dt is positive wherever E increases, and it is the slope
    /// of E: the secant over a short interval lies within the range of dE/dt at its ends
    /// (mean value theorem; E is a polynomial, plus an exponential term for type K, on each
    /// sub-range). Source: derivative of the IEC 60584-1:2013 reference functions.
    #[test]
    fn thermocouple_seebeck_positive_and_is_the_slope(i in 0usize..8, u in 0.0f64..1.0) {
        let ty = ThermocoupleType::ALL[i];
        let t = tc_temperature(ty, u);
        let s = ty.seebeck_uv_per_k(t).unwrap();
        prop_assert!(s > 0.0, "type {} at {} °C: {} µV/K", ty, t, s);
        // 0.01 K secant against the derivative, in µV/K. The derivative changes by at most
        // about 0.1 µV/K over 0.01 K for every type (largest curvature: type E and K at the
        // low end, a few µV/K per K); 0.5 µV/K also covers the type N slope step at 0 °C
        // (0.23 µV/K) and the boundary steps.
        let h = 0.01;
        let hi = ty.temperature_range().1;
        prop_assume!(t + h <= hi);
        let secant = (ty.emf(t + h).unwrap() - ty.emf(t).unwrap()) / h * 1000.0;
        prop_assert!((secant - s).abs() < 0.5, "type {} at {} °C: secant {} vs {}", ty, t, secant, s);
    }
}

// -------------------------------------------------------------------------- PRT

/// Certificate-like CVD coefficients: A, B, C within a few per cent of the IEC 60751 values
/// (common practice: calibrated industrial PRTs stay that close to the nominal curve).
fn cvd_certificate() -> impl Strategy<Value = CvdCoefficients> {
    (
        prop::sample::select(vec![25.0, 100.0, 500.0, 1000.0]),
        0.97f64..1.03,
        0.9f64..1.1,
        0.5f64..1.5,
        -200.0f64..700.0,
        50.0f64..1050.0,
    )
        .prop_filter_map(
            "range inside -200..850 °C",
            |(r0, fa, fb, fc, lo, span)| {
                let hi = lo + span;
                if hi > 850.0 {
                    return None;
                }
                CvdCoefficients::from_certificate(
                    r0,
                    3.9083e-3 * fa,
                    -5.775e-7 * fb,
                    -4.183e-12 * fc,
                    lo,
                    hi,
                )
                .ok()
            },
        )
}

/// Round trip t -> R -> t on a certificate curve, °C: the inverse reaches |W(t) - W| < 1e-13
/// below 0 °C (about 3e-11 °C) and is a closed form above; the nominal curves meet 1e-9 °C
/// (prt.rs, ROUND_TRIP_TOL_C), which is kept here.
const PRT_ROUND_TRIP_TOL_C: f64 = 1e-9;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// R(t) strictly increases over the curve's range, for the nominal curve and for every
    /// certificate curve that `from_certificate` accepts. Source: IEC 60751:2008, the
    /// temperature/resistance relationship is monotonic over -200 °C to 850 °C; the
    /// constructor promises the same for certificate coefficients.
    #[test]
    fn prt_resistance_strictly_increases(
        curve in prop_oneof![Just(CvdCoefficients::pt100()), cvd_certificate()],
        u in 0.0f64..1.0,
        v in 0.0f64..1.0,
    ) {
        let (lo, hi) = curve.range_c();
        let (t1, t2) = (lo + u.min(v) * (hi - lo), lo + u.max(v) * (hi - lo));
        prop_assume!(t2 - t1 >= 1e-6);
        let (r1, r2) = (curve.resistance(t1).unwrap(), curve.resistance(t2).unwrap());
        prop_assert!(r2 > r1, "{:?}: R({}) = {}, R({}) = {}", curve, t1, r1, t2, r2);
        prop_assert!(curve.sensitivity_ohm_per_k(t1).unwrap() > 0.0);
    }

    /// t(R(t)) = t on certificate curves. Source: IEC 60751:2008 relationship and its inverse
    /// (the nominal curves are checked in prt.rs).
    #[test]
    fn prt_certificate_round_trip(curve in cvd_certificate(), u in 0.0f64..=1.0) {
        let (lo, hi) = curve.range_c();
        let t = lo + u * (hi - lo);
        let back = curve.temperature(curve.resistance(t).unwrap()).unwrap();
        prop_assert!((back - t).abs() < PRT_ROUND_TRIP_TOL_C, "{:?}: {} -> {}", curve, t, back);
    }

    /// Class tolerances widen with |t| and are ordered AA <= A <= B <= C wherever the classes
    /// are defined. Source: IEC 60751:2008 tolerance classes, ±(a + b|t|) with a and b growing
    /// from AA to C.
    #[test]
    fn prt_class_tolerance_widens_with_abs_t(
        c in 0usize..4,
        film in any::<bool>(),
        t1 in -200.0f64..850.0,
        t2 in -200.0f64..850.0,
    ) {
        let kind = if film { ElementKind::Film } else { ElementKind::WireWound };
        let class = PrtClass::ALL[c];
        if let (Ok(a), Ok(b)) = (class.tolerance(kind, t1), class.tolerance(kind, t2)) {
            if t1.abs() <= t2.abs() {
                prop_assert!(a <= b, "{} {} at {} and {}: {} > {}", class, kind, t1, t2, a, b);
            }
            if t1.abs() < t2.abs() {
                prop_assert!(a < b);
            }
        }
        let defined: Vec<f64> =
            PrtClass::ALL.iter().filter_map(|k| k.tolerance(kind, t1).ok()).collect();
        prop_assert!(defined.windows(2).all(|w| w[0] < w[1]), "{} at {}: {:?}", kind, t1, defined);
    }
}

// ------------------------------------------------------------------------ ITS-90

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// W_r strictly increases with T90 over 13.8033 K to 1234.93 K, across the change from
    /// eq. (9a) to eq. (10a) at 273.16 K included. Source: ITS-90 (Metrologia 27 (1990)
    /// 3-10), 3.3: the resistance of platinum rises with temperature.
    #[test]
    fn its90_wr_strictly_increases(u in 0.0f64..1.0, step in 1e-4f64..100.0) {
        let t1 = E_H2_TRIPLE_POINT_K + u * (SILVER_FREEZING_POINT_K - E_H2_TRIPLE_POINT_K);
        let t2 = (t1 + step).min(SILVER_FREEZING_POINT_K);
        prop_assume!(t2 - t1 >= 1e-4);
        let (w1, w2) = (wr(t1).unwrap(), wr(t2).unwrap());
        prop_assert!(w2 > w1, "W_r({}) = {}, W_r({}) = {}", t1, w1, t2, w2);
    }

    /// Each reference function increases on its own side of 273.16 K, at any step a double
    /// can resolve, and so does the general inverse in W_r. Source: ITS-90 3.3.1, 3.3.2.
    #[test]
    fn its90_functions_and_inverse_increase(u in 0.0f64..1.0, v in 0.0f64..1.0) {
        let (a, b) = (u.min(v), u.max(v));
        prop_assume!(b > a);
        let low = |f: f64| E_H2_TRIPLE_POINT_K + f * (WATER_TRIPLE_POINT_K - E_H2_TRIPLE_POINT_K);
        let high = |f: f64| 273.15 + f * (SILVER_FREEZING_POINT_K - 273.15);
        if low(b) > low(a) {
            prop_assert!(wr_low(low(b)).unwrap() > wr_low(low(a)).unwrap());
        }
        if high(b) > high(a) {
            prop_assert!(wr_high(high(b)).unwrap() > wr_high(high(a)).unwrap());
        }
        let (w_lo, w_hi) = (wr(E_H2_TRIPLE_POINT_K).unwrap(), wr(SILVER_FREEZING_POINT_K).unwrap());
        let (w1, w2) = (w_lo + a * (w_hi - w_lo), w_lo + b * (w_hi - w_lo));
        prop_assume!(w2 - w1 > 1e-9);
        prop_assert!(t90_from_wr(w2).unwrap() > t90_from_wr(w1).unwrap());
    }
}

// ------------------------------------------------------------------ least squares

/// Points x for a fit: `n` distinct values spread over [-10, 10] with a random jitter.
fn fit_xs(n: usize, jitter: &[f64]) -> Vec<f64> {
    (0..n)
        .map(|i| -10.0 + 20.0 * (i as f64 + 0.4 * jitter[i]) / n as f64)
        .collect()
}

fn poly(coef: &[f64], x: f64) -> f64 {
    coef.iter().rev().fold(0.0, |acc, c| acc * x + c)
}

/// Tolerance of the least-squares properties, relative to the size of the data. The solver
/// refines the QR solution in double-double arithmetic; lsq.rs asks 1e-9 of exactly
/// representable polynomial data (EXACT_REL_TOL), kept here.
const FIT_REL_TOL: f64 = 1e-9;

fn fit_input() -> impl Strategy<Value = (usize, Vec<f64>, Vec<f64>)> {
    (0usize..=4).prop_flat_map(|degree| {
        (
            Just(degree),
            prop::collection::vec(-5.0f64..5.0, degree + 1),
            prop::collection::vec(-1.0f64..1.0, degree + 3..degree + 15),
        )
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// Data lying exactly on a polynomial of the fitted degree give back its coefficients and
    /// zero residuals. Source: least squares reproduces any model that fits the data exactly
    /// (JCGM 100:2008 H.3; the normal equations have the exact solution).
    #[test]
    fn fit_recovers_exact_polynomial((degree, coef, jitter) in fit_input()) {
        let x = fit_xs(jitter.len(), &jitter);
        let y: Vec<f64> = x.iter().map(|&v| poly(&coef, v)).collect();
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(degree)).unwrap();
        // Coefficient k multiplies x^k with |x| <= 10: compare c_k 10^k with the data scale.
        let scale = coef.iter().enumerate().map(|(k, c)| c.abs() * 10f64.powi(k as i32)).sum::<f64>().max(1.0);
        for (k, (got, want)) in fit.coefficients.iter().zip(&coef).enumerate() {
            prop_assert!(
                (got - want).abs() * 10f64.powi(k as i32) <= FIT_REL_TOL * scale,
                "c{}: {} vs {}", k, got, want
            );
        }
        for r in &fit.residuals {
            prop_assert!(r.abs() <= FIT_REL_TOL * scale);
        }
    }

    /// Multiplying every weight by the same constant changes neither the coefficients nor the
    /// fitted values nor (when the covariance is scaled by the residual) the covariance.
    /// Source: the weighted sum of squares is only multiplied by the constant, so its
    /// minimum is at the same place (JCGM 100:2008 H.3; common practice of weighted fits).
    #[test]
    fn fit_invariant_under_scaling_of_weights(
        (degree, coef, jitter) in fit_input(),
        noise in prop::collection::vec(-0.1f64..0.1, 20),
        weights in prop::collection::vec(0.1f64..10.0, 20),
        log_lambda in -6.0f64..6.0,
    ) {
        let n = jitter.len();
        let x = fit_xs(n, &jitter);
        let y: Vec<f64> = x.iter().zip(&noise).map(|(&v, e)| poly(&coef, v) + e).collect();
        let w = &weights[..n];
        let lambda = 10f64.powf(log_lambda);
        let w2: Vec<f64> = w.iter().map(|v| v * lambda).collect();
        let options = PolyOptions::new(degree);
        let a = fit_polynomial(&x, &y, Some(w), &options).unwrap();
        let b = fit_polynomial(&x, &y, Some(&w2), &options).unwrap();
        let ymax = y.iter().fold(1.0f64, |m, v| m.max(v.abs()));
        for i in 0..n {
            prop_assert!((a.fitted[i] - b.fitted[i]).abs() <= FIT_REL_TOL * ymax);
        }
        for (k, (ca, cb)) in a.coefficients.iter().zip(&b.coefficients).enumerate() {
            prop_assert!((ca - cb).abs() * 10f64.powi(k as i32) <= FIT_REL_TOL * ymax, "c{}", k);
        }
        for (ua, ub) in a.standard_uncertainties.iter().zip(&b.standard_uncertainties) {
            prop_assert!((ua - ub).abs() <= 1e-7 * ua.abs().max(1e-300), "{} vs {}", ua, ub);
        }
    }

    /// Adding a constant c to every y adds c to the constant coefficient and leaves the other
    /// coefficients and the residuals as they were. Source: the model with intercept contains
    /// the constants, so the least-squares solution shifts by exactly that constant
    /// (linearity of the least-squares estimator, JCGM 100:2008 H.3).
    #[test]
    fn fit_shift_of_y_moves_only_the_constant(
        (degree, coef, jitter) in fit_input(),
        noise in prop::collection::vec(-0.1f64..0.1, 20),
        c in -100.0f64..100.0,
    ) {
        let n = jitter.len();
        let x = fit_xs(n, &jitter);
        let y: Vec<f64> = x.iter().zip(&noise).map(|(&v, e)| poly(&coef, v) + e).collect();
        let y2: Vec<f64> = y.iter().map(|v| v + c).collect();
        let options = PolyOptions::new(degree);
        let a = fit_polynomial(&x, &y, None, &options).unwrap();
        let b = fit_polynomial(&x, &y2, None, &options).unwrap();
        let ymax = y2.iter().chain(&y).fold(1.0f64, |m, v| m.max(v.abs()));
        prop_assert!((b.coefficients[0] - a.coefficients[0] - c).abs() <= FIT_REL_TOL * ymax);
        for k in 1..a.coefficients.len() {
            prop_assert!(
                (b.coefficients[k] - a.coefficients[k]).abs() * 10f64.powi(k as i32) <= FIT_REL_TOL * ymax,
                "c{}: {} vs {}", k, a.coefficients[k], b.coefficients[k]
            );
        }
        for (ra, rb) in a.residuals.iter().zip(&b.residuals) {
            prop_assert!((ra - rb).abs() <= FIT_REL_TOL * ymax);
        }
    }
}

// --------------------------------------------------------------------- GUM budget

/// A budget component from a standard uncertainty, a sensitivity and a dof (None: infinite).
fn component(i: usize, u: f64, c: f64, nu: Option<f64>) -> Component {
    let d = Component::new(
        format!("x{i}"),
        0.1 * i as f64,
        Distribution::Standard { u },
    )
    .with_sensitivity(c);
    match nu {
        Some(nu) => d.with_dof(Dof::Value(nu)),
        None => d.with_dof(Dof::Infinite),
    }
}

fn budget_lines() -> impl Strategy<Value = Vec<(f64, f64, Option<f64>)>> {
    prop::collection::vec(
        (
            1e-4f64..10.0,
            prop_oneof![-3.0f64..-0.1, 0.1f64..3.0],
            prop::option::weighted(0.8, 1.0f64..200.0),
        ),
        1..12,
    )
}

fn build(lines: &[(f64, f64, Option<f64>)], scale_u: f64) -> Vec<Component> {
    lines
        .iter()
        .enumerate()
        .map(|(i, &(u, c, nu))| component(i, u * scale_u, c, nu))
        .collect()
}

/// Relative tolerance of the budget properties: u_c is summed in double-double arithmetic and
/// rounded once; ν_eff adds a plain f64 sum of at most 12 terms (a few ulp).
const BUDGET_REL_TOL: f64 = 1e-12;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// Scaling every input standard uncertainty by λ scales u_c and U by λ and leaves ν_eff
    /// and k unchanged. Source: JCGM 100:2008 5.1.2 (u_c² = Σ c_i² u_i² is homogeneous of
    /// degree 2 in the u_i) and G.4.1 (ν_eff is homogeneous of degree 0).
    #[test]
    fn budget_scales_linearly_with_the_inputs(lines in budget_lines(), log_lambda in -3.0f64..3.0) {
        let lambda = 10f64.powf(log_lambda);
        let opts = BudgetOptions::default();
        let a = evaluate_budget(&build(&lines, 1.0), &[], &opts).unwrap();
        let b = evaluate_budget(&build(&lines, lambda), &[], &opts).unwrap();
        let rel = |x: f64, y: f64| ((x - y) / y).abs();
        prop_assert!(rel(b.combined_standard_uncertainty, lambda * a.combined_standard_uncertainty) < BUDGET_REL_TOL);
        prop_assert!(rel(b.expanded_uncertainty, lambda * a.expanded_uncertainty) < 1e-10);
        if a.effective_dof.is_finite() {
            prop_assert!(rel(b.effective_dof, a.effective_dof) < 1e-10);
        } else {
            prop_assert!(b.effective_dof.is_infinite());
        }
    }

    /// u_c, ν_eff, U and the estimate do not depend on the order of the components. Source:
    /// JCGM 100:2008 5.1.2 and G.4.1 are sums over the components.
    #[test]
    fn budget_invariant_under_permutation(
        (lines, order) in budget_lines().prop_flat_map(|l| {
            let n = l.len();
            (Just(l), Just((0..n).collect::<Vec<_>>()).prop_shuffle())
        })
    ) {
        let opts = BudgetOptions::default();
        let a = evaluate_budget(&build(&lines, 1.0), &[], &opts).unwrap();
        let shuffled: Vec<_> = order.iter().map(|&i| lines[i]).collect();
        let mut comps = build(&shuffled, 1.0);
        // Keep each line's own estimate (build numbers them by position).
        for (c, &i) in comps.iter_mut().zip(&order) {
            c.estimate = 0.1 * i as f64;
        }
        let b = evaluate_budget(&comps, &[], &opts).unwrap();
        let rel = |x: f64, y: f64| if x == y { 0.0 } else { ((x - y) / y).abs() };
        prop_assert!(rel(a.combined_standard_uncertainty, b.combined_standard_uncertainty) < BUDGET_REL_TOL);
        prop_assert!(rel(a.effective_dof, b.effective_dof) < 1e-10);
        prop_assert!(rel(a.expanded_uncertainty, b.expanded_uncertainty) < 1e-10);
        prop_assert!((a.estimate - b.estimate).abs() < 1e-14 * lines.len() as f64);
    }

    /// Welch-Satterthwaite, independent inputs, positive ν_i: min ν_i <= ν_eff <= Σ ν_i, with
    /// infinite ν_i making the upper bound infinite. With a_i = (c_i u_i)² the formula is
    /// ν_eff = (Σ a_i)² / Σ a_i²/ν_i (JCGM 100:2008 G.4.1, eq. G.2b). Lower bound: Σ a_i²/ν_i
    /// <= Σ a_i² / min ν <= (Σ a_i)² / min ν. Upper bound, when every ν_i is finite:
    /// (Σ a_i)² = (Σ (a_i/√ν_i) √ν_i)² <= (Σ a_i²/ν_i)(Σ ν_i) by Cauchy-Schwarz. When some
    /// ν_i are infinite their a_i stay in the numerator only and ν_eff has no finite bound
    /// (it tends to infinity as the finite-ν part vanishes), so Σ ν_i = ∞ is the true bound.
    #[test]
    fn welch_satterthwaite_lies_between_min_and_sum_of_dofs(lines in budget_lines()) {
        let b = evaluate_budget(&build(&lines, 1.0), &[], &BudgetOptions::default()).unwrap();
        let nus: Vec<f64> = lines.iter().map(|l| l.2.unwrap_or(f64::INFINITY)).collect();
        let min = nus.iter().fold(f64::INFINITY, |m, &v| m.min(v));
        let sum: f64 = nus.iter().sum();
        prop_assert!(b.effective_dof >= min * (1.0 - 1e-12), "{} < min {}", b.effective_dof, min);
        prop_assert!(b.effective_dof <= sum * (1.0 + 1e-12), "{} > sum {}", b.effective_dof, sum);
        if nus.iter().all(|v| v.is_infinite()) {
            prop_assert!(b.effective_dof.is_infinite());
        }
    }
}

// ------------------------------------------------------------------ coverage factor

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// k_p(ν) decreases as ν grows and lies above the normal quantile k_p(∞), and increases
    /// with p. Source: JCGM 100:2008 G.3 and Table G.2 (t-distribution coverage factors fall
    /// towards the normal values as ν grows). The check spans the change of method at
    /// ν = 1e4 (coverage.rs).
    #[test]
    fn coverage_factor_decreases_in_nu(
        p in 0.5f64..=0.9999,
        log_nu in 0.0f64..7.0,
        factor in 1.001f64..100.0,
    ) {
        let nu1 = 10f64.powf(log_nu);
        let nu2 = nu1 * factor;
        let (k1, k2) = (coverage_factor(p, nu1).unwrap(), coverage_factor(p, nu2).unwrap());
        let z = coverage_factor(p, f64::INFINITY).unwrap();
        prop_assert!(k1 > k2, "p {}: k({}) = {} <= k({}) = {}", p, nu1, k1, nu2, k2);
        prop_assert!(k2 > z, "p {}: k({}) = {} <= normal {}", p, nu2, k2, z);
        let p_higher = p + 0.5 * (0.9999 - p);
        if p_higher > p {
            prop_assert!(coverage_factor(p_higher, nu1).unwrap() > k1);
        }
    }

    /// k_p(ν) tends to the normal quantile z: for ν >= 10, 0 < k - z <= 2 g1(z)/ν with
    /// g1(z) = z(z² + 1)/4, the first term of the Cornish-Fisher expansion of the t quantile
    /// (Abramowitz & Stegun 26.7.5, from memory); the factor 2 bounds the higher terms, which
    /// are smaller than the first for ν >= 10 at every p from 0.5 to 0.9999 (at the worst
    /// corner, p = 0.9999 and ν = 10, k - z is 2.07 against 2 g1/ν = 3.1).
    #[test]
    fn coverage_factor_tends_to_normal_quantile(p in 0.5f64..=0.9999, log_nu in 1.0f64..9.0) {
        let nu = 10f64.powf(log_nu);
        let k = coverage_factor(p, nu).unwrap();
        let z = coverage_factor(p, f64::INFINITY).unwrap();
        let g1 = z * (z * z + 1.0) / 4.0;
        prop_assert!(k > z && k - z <= 2.0 * g1 / nu, "p {} ν {}: k {} z {}", p, nu, k, z);
    }
}

// ----------------------------------------------------------------- decision rules

/// Order of outcomes from best to worst.
fn rank(o: Outcome) -> u8 {
    match o {
        Outcome::Pass => 0,
        Outcome::ConditionalPass => 1,
        Outcome::ConditionalFail => 2,
        Outcome::Fail => 3,
    }
}

fn rule(k: usize, r: f64) -> DecisionRule {
    match k {
        0 => DecisionRule::SimpleAcceptance,
        1 => DecisionRule::GuardedBinary { r },
        _ => DecisionRule::GuardedNonBinary { r },
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(CASES))]

    /// Moving the measured value farther from the tolerance zone, on the same side of its
    /// centre, never gives a better outcome. Source: ILAC-G8:09/2019 4.2 (acceptance zone
    /// inside the tolerance zone, rejection outside; the zones are nested intervals).
    #[test]
    fn decision_never_improves_farther_out(
        k in 0usize..3,
        r in 0.0f64..2.0,
        u in 0.0f64..1.0,
        lower in -10.0f64..0.0,
        width in 0.1f64..10.0,
        d1 in 0.0f64..20.0,
        d2 in 0.0f64..20.0,
        upper_side in any::<bool>(),
        one_sided in any::<bool>(),
    ) {
        let upper = lower + width;
        let (near, far) = (d1.min(d2), d1.max(d2));
        let centre = 0.5 * (lower + upper);
        let (tol, m1, m2) = match (one_sided, upper_side) {
            (false, true) => (Tolerance::Interval { lower, upper }, centre + near, centre + far),
            (false, false) => (Tolerance::Interval { lower, upper }, centre - near, centre - far),
            // One-sided: "farther out" is any move towards the forbidden side.
            (true, true) => (Tolerance::UpperOnly { upper }, upper - 10.0 + near, upper - 10.0 + far),
            (true, false) => (Tolerance::LowerOnly { lower }, lower + 10.0 - near, lower + 10.0 - far),
        };
        let a = decide(m1, u, &tol, rule(k, r)).unwrap().outcome;
        let b = decide(m2, u, &tol, rule(k, r)).unwrap().outcome;
        prop_assert!(rank(b) >= rank(a), "{:?} at {} is {:?}, at {} is {:?}", tol, m1, a, m2, b);
    }

    /// A larger expanded uncertainty never turns a fail into a pass under guarded acceptance:
    /// the binary pass set shrinks as U grows; under the non-binary rule a pass at the larger
    /// U is a pass at the smaller one, and whether the value lies within tolerance does not
    /// depend on U at all. Source: ILAC-G8:09/2019 4.2.2 and 4.2.3 (acceptance limits are the
    /// tolerance limits moved inwards by w = r U).
    #[test]
    fn larger_uncertainty_never_turns_fail_into_pass(
        r in 0.0f64..2.0,
        u1 in 0.0f64..2.0,
        extra in 0.0f64..2.0,
        measured in -12.0f64..12.0,
        lower in -10.0f64..0.0,
        width in 0.1f64..10.0,
    ) {
        let tol = Tolerance::Interval { lower, upper: lower + width };
        let u2 = u1 + extra;
        let binary = |u| decide(measured, u, &tol, DecisionRule::GuardedBinary { r }).unwrap().outcome;
        if binary(u2) == Outcome::Pass {
            prop_assert_eq!(binary(u1), Outcome::Pass);
        }
        let non_binary = |u| decide(measured, u, &tol, DecisionRule::GuardedNonBinary { r }).unwrap().outcome;
        let (a, b) = (non_binary(u1), non_binary(u2));
        if b == Outcome::Pass {
            prop_assert_eq!(a, Outcome::Pass);
        }
        prop_assert_eq!(rank(a) <= 1, rank(b) <= 1, "within tolerance changed with U: {:?} -> {:?}", a, b);
    }
}
