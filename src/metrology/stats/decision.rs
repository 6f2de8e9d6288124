//! Conformity decisions with a measurement uncertainty (ILAC-G8:09/2019).
//!
//! **Boundary convention.** Every zone is closed on the side of the more favourable outcome:
//! a measured value exactly on an acceptance limit is a pass, exactly on a tolerance limit (with
//! w > 0, non-binary) a conditional pass, exactly on a rejection limit a conditional fail. With
//! simple acceptance a value exactly on a tolerance limit is a pass. This choice is common
//! practice; ILAC-G8 does not settle it.
//!
//! **Guard band.** w = r · U with U the expanded uncertainty; acceptance limits are the
//! tolerance limits moved inwards by w, rejection limits (non-binary) moved outwards by w.
//! When 2w exceeds a two-sided tolerance interval the acceptance zone is empty and no result
//! can pass.

use std::fmt;

use super::error::{StatsError, check_finite};

/// Specification limits of the measured quantity (unit of the measured value).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Tolerance {
    /// nominal ± half_width (e.g. an error of indication within ±MPE: nominal 0).
    Symmetric {
        /// Centre of the tolerance interval.
        nominal: f64,
        /// T > 0.
        half_width: f64,
    },
    /// [lower, upper], lower < upper.
    Interval {
        /// Lower tolerance limit.
        lower: f64,
        /// Upper tolerance limit.
        upper: f64,
    },
    /// Only an upper limit (value ≤ upper conforms).
    UpperOnly {
        /// Upper tolerance limit.
        upper: f64,
    },
    /// Only a lower limit (value ≥ lower conforms).
    LowerOnly {
        /// Lower tolerance limit.
        lower: f64,
    },
}

/// Decision rule.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DecisionRule {
    /// Simple acceptance, w = 0 (ILAC-G8 4.2.1).
    SimpleAcceptance,
    /// Binary statement with guard band w = r·U (ILAC-G8 4.2.2).
    GuardedBinary {
        /// Guard band factor r ≥ 0.
        r: f64,
    },
    /// Non-binary statement with guard band w = r·U (ILAC-G8 4.2.3).
    GuardedNonBinary {
        /// Guard band factor r ≥ 0.
        r: f64,
    },
}

/// Outcome of a conformity decision.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    /// Conforms.
    Pass,
    /// Within tolerance but inside the guard band (non-binary only).
    ConditionalPass,
    /// Outside tolerance but within the guard band beyond it (non-binary only).
    ConditionalFail,
    /// Does not conform.
    Fail,
}

impl Outcome {
    /// Lower-case label, e.g. "conditional pass".
    ///
    /// # Reference
    /// ILAC-G8:09/2019 4.2.3 (the four outcomes of a non-binary statement).
    pub fn label(self) -> &'static str {
        match self {
            Outcome::Pass => "pass",
            Outcome::ConditionalPass => "conditional pass",
            Outcome::ConditionalFail => "conditional fail",
            Outcome::Fail => "fail",
        }
    }
}

impl fmt::Display for Outcome {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.label())
    }
}

/// A pair of optional limits (None = no limit on that side).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// Lower limit.
    pub lower: Option<f64>,
    /// Upper limit.
    pub upper: Option<f64>,
}

impl Limits {
    fn shifted(self, inward: f64) -> Limits {
        Limits {
            lower: self.lower.map(|l| l + inward),
            upper: self.upper.map(|u| u - inward),
        }
    }

    fn contains(self, v: f64) -> bool {
        self.lower.is_none_or(|l| v >= l) && self.upper.is_none_or(|u| v <= u)
    }
}

/// A conformity decision ready for a certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct Decision {
    /// Outcome.
    pub outcome: Outcome,
    /// Rule applied.
    pub rule: DecisionRule,
    /// Guard band w (unit of the measured value).
    pub guard_band: f64,
    /// Tolerance limits.
    pub tolerance_limits: Limits,
    /// Acceptance limits (tolerance limits moved inwards by w).
    pub acceptance_limits: Limits,
    /// Rejection limits (tolerance limits moved outwards by w), non-binary rule only.
    pub rejection_limits: Option<Limits>,
    /// Plain-language description of the rule, for printing.
    pub statement: String,
}

/// Decides conformity of `measured` (with expanded uncertainty `expanded_uncertainty` ≥ 0,
/// same unit) with `tolerance` under `rule`.
///
/// # Reference
/// ILAC-G8:09/2019 4.2.1 (simple acceptance), 4.2.2 (binary statement with guard band),
/// 4.2.3 (non-binary statement with guard band); JCGM 106:2012 (acceptance and rejection
/// zones).
pub fn decide(
    measured: f64,
    expanded_uncertainty: f64,
    tolerance: &Tolerance,
    rule: DecisionRule,
) -> Result<Decision, StatsError> {
    check_finite("measured", None, measured)?;
    check_finite("expanded_uncertainty", None, expanded_uncertainty)?;
    if expanded_uncertainty < 0.0 {
        return Err(StatsError::invalid(
            "expanded_uncertainty",
            "must not be negative",
        ));
    }
    let tol = match *tolerance {
        Tolerance::Symmetric {
            nominal,
            half_width,
        } => {
            check_finite("nominal", None, nominal)?;
            check_finite("half_width", None, half_width)?;
            if half_width <= 0.0 {
                return Err(StatsError::invalid("half_width", "must be positive"));
            }
            Limits {
                lower: Some(nominal - half_width),
                upper: Some(nominal + half_width),
            }
        }
        Tolerance::Interval { lower, upper } => {
            check_finite("lower", None, lower)?;
            check_finite("upper", None, upper)?;
            if lower >= upper {
                return Err(StatsError::invalid(
                    "tolerance",
                    "lower must be below upper",
                ));
            }
            Limits {
                lower: Some(lower),
                upper: Some(upper),
            }
        }
        Tolerance::UpperOnly { upper } => {
            check_finite("upper", None, upper)?;
            Limits {
                lower: None,
                upper: Some(upper),
            }
        }
        Tolerance::LowerOnly { lower } => {
            check_finite("lower", None, lower)?;
            Limits {
                lower: Some(lower),
                upper: None,
            }
        }
    };
    let r = match rule {
        DecisionRule::SimpleAcceptance => 0.0,
        DecisionRule::GuardedBinary { r } | DecisionRule::GuardedNonBinary { r } => {
            check_finite("r", None, r)?;
            if r < 0.0 {
                return Err(StatsError::invalid(
                    "r",
                    "guard band factor must not be negative",
                ));
            }
            r
        }
    };
    let w = r * expanded_uncertainty;
    let acceptance = tol.shifted(w);
    // Every limit that the decision reports must be a number: a huge r, U or limit could
    // otherwise move a limit to ±inf (and the guard band itself overflow).
    let non_binary = matches!(rule, DecisionRule::GuardedNonBinary { .. });
    let reported = [tol, acceptance]
        .into_iter()
        .chain(non_binary.then(|| tol.shifted(-w)));
    if !w.is_finite()
        || reported
            .flat_map(|l| [l.lower, l.upper])
            .flatten()
            .any(|v| !v.is_finite())
    {
        return Err(StatsError::invalid(
            "r",
            format!(
                "the tolerance limits, or the guard band w = {r} × {expanded_uncertainty} \
                 applied to them, overflow the floating-point range"
            ),
        ));
    }
    let (outcome, rejection, statement) = match rule {
        DecisionRule::SimpleAcceptance => (
            if tol.contains(measured) {
                Outcome::Pass
            } else {
                Outcome::Fail
            },
            None,
            "Decision rule: simple acceptance, no guard band (w = 0): a measured value within \
             the tolerance limits is a pass, otherwise a fail (ILAC-G8:09/2019, 4.2.1). \
             A value on a limit counts as within."
                .to_string(),
        ),
        DecisionRule::GuardedBinary { .. } => (
            if acceptance.contains(measured) {
                Outcome::Pass
            } else {
                Outcome::Fail
            },
            None,
            format!(
                "Decision rule: binary statement with guard band w = {r} × U = {w}: the \
                 acceptance limits are the tolerance limits moved inwards by w; a measured \
                 value within them is a pass, otherwise a fail (ILAC-G8:09/2019, 4.2.2). \
                 A value on a limit counts as within."
            ),
        ),
        DecisionRule::GuardedNonBinary { .. } => {
            let rejection = tol.shifted(-w);
            let outcome = if acceptance.contains(measured) {
                Outcome::Pass
            } else if tol.contains(measured) {
                Outcome::ConditionalPass
            } else if rejection.contains(measured) {
                Outcome::ConditionalFail
            } else {
                Outcome::Fail
            };
            (
                outcome,
                Some(rejection),
                format!(
                    "Decision rule: non-binary statement with guard band w = {r} × U = {w}: \
                     pass within the acceptance limits (tolerance limits moved inwards by w), \
                     conditional pass between an acceptance limit and its tolerance limit, \
                     conditional fail from a tolerance limit to w beyond it, fail further out \
                     (ILAC-G8:09/2019, 4.2.3). A value on a limit counts as in the more \
                     favourable zone."
                ),
            )
        }
    };
    Ok(Decision {
        outcome,
        rule,
        guard_band: w,
        tolerance_limits: tol,
        acceptance_limits: acceptance,
        rejection_limits: rejection,
        statement,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // Expected outcomes are worked by hand from the zone definitions of ILAC-G8:09/2019
    // 4.2.1-4.2.3 (tolerance ±1.0, U = 0.2 unless stated).
    const TOL: Tolerance = Tolerance::Symmetric {
        nominal: 0.0,
        half_width: 1.0,
    };
    const U: f64 = 0.2;

    fn out(v: f64, rule: DecisionRule) -> Outcome {
        decide(v, U, &TOL, rule).unwrap().outcome
    }

    #[test]
    fn simple_acceptance() {
        let r = DecisionRule::SimpleAcceptance;
        assert_eq!(out(0.95, r), Outcome::Pass);
        assert_eq!(out(1.0, r), Outcome::Pass, "on the limit: within");
        assert_eq!(out(-1.05, r), Outcome::Fail);
        let d = decide(0.5, U, &TOL, r).unwrap();
        assert_eq!(d.guard_band, 0.0);
        assert_eq!(d.acceptance_limits, d.tolerance_limits);
        assert!(d.statement.contains("4.2.1"));
    }

    #[test]
    fn guarded_binary() {
        let r = DecisionRule::GuardedBinary { r: 1.0 };
        assert_eq!(out(0.75, r), Outcome::Pass);
        assert_eq!(
            out(0.8, r),
            Outcome::Pass,
            "on the acceptance limit 1.0 − 0.2"
        );
        assert_eq!(out(0.85, r), Outcome::Fail);
        assert_eq!(out(-0.9, r), Outcome::Fail);
        let d = decide(0.0, U, &TOL, r).unwrap();
        assert_eq!(d.acceptance_limits.upper, Some(0.8));
        assert_eq!(d.acceptance_limits.lower, Some(-0.8));
        assert!(d.statement.contains("w = 1 × U = 0.2"), "{}", d.statement);
        // U larger than the tolerance half-width: empty acceptance zone, nothing passes.
        let d = decide(0.0, 1.5, &TOL, r).unwrap();
        assert_eq!(d.outcome, Outcome::Fail);
    }

    #[test]
    fn guarded_non_binary_zones() {
        let r = DecisionRule::GuardedNonBinary { r: 1.0 };
        assert_eq!(out(0.5, r), Outcome::Pass);
        assert_eq!(out(0.8, r), Outcome::Pass);
        assert_eq!(out(0.9, r), Outcome::ConditionalPass);
        assert_eq!(out(1.0, r), Outcome::ConditionalPass);
        assert_eq!(out(1.1, r), Outcome::ConditionalFail);
        assert_eq!(out(1.2, r), Outcome::ConditionalFail);
        assert_eq!(out(1.25, r), Outcome::Fail);
        assert_eq!(out(-1.15, r), Outcome::ConditionalFail);
        let d = decide(0.0, U, &TOL, r).unwrap();
        assert_eq!(
            d.rejection_limits,
            Some(Limits {
                lower: Some(-1.2),
                upper: Some(1.2)
            })
        );
        assert!(d.statement.contains("4.2.3") && d.statement.contains("w = 1 × U"));
        assert_eq!(Outcome::ConditionalFail.to_string(), "conditional fail");
    }

    #[test]
    fn asymmetric_and_one_sided_tolerances() {
        let asym = Tolerance::Interval {
            lower: -0.5,
            upper: 2.0,
        };
        let g = DecisionRule::GuardedBinary { r: 0.5 };
        // w = 0.1: acceptance [−0.4, 1.9].
        assert_eq!(decide(-0.45, U, &asym, g).unwrap().outcome, Outcome::Fail);
        assert_eq!(decide(1.9, U, &asym, g).unwrap().outcome, Outcome::Pass);
        let up = Tolerance::UpperOnly { upper: 10.0 };
        let nb = DecisionRule::GuardedNonBinary { r: 1.0 };
        assert_eq!(decide(-1e6, U, &up, nb).unwrap().outcome, Outcome::Pass);
        assert_eq!(
            decide(9.9, U, &up, nb).unwrap().outcome,
            Outcome::ConditionalPass
        );
        assert_eq!(
            decide(10.1, U, &up, nb).unwrap().outcome,
            Outcome::ConditionalFail
        );
        let lo = Tolerance::LowerOnly { lower: 10.0 };
        assert_eq!(decide(10.25, U, &lo, nb).unwrap().outcome, Outcome::Pass);
        assert_eq!(decide(9.7, U, &lo, nb).unwrap().outcome, Outcome::Fail);
        let d = decide(10.25, U, &lo, nb).unwrap();
        assert_eq!(d.acceptance_limits.upper, None);
    }

    #[test]
    fn refuses_bad_input() {
        let r = DecisionRule::SimpleAcceptance;
        assert!(decide(f64::NAN, U, &TOL, r).is_err());
        assert!(decide(0.0, -1.0, &TOL, r).is_err());
        let bad = Tolerance::Interval {
            lower: 1.0,
            upper: 1.0,
        };
        assert!(decide(0.0, U, &bad, r).is_err());
        assert!(decide(0.0, U, &TOL, DecisionRule::GuardedBinary { r: -1.0 }).is_err());
    }

    /// Found by fuzzing (fuzz target `compute_uncertainty`): a guard band factor of 1e308
    /// with U = 2 gave w = inf and acceptance limits of ±inf, which the API wrote as null.
    #[test]
    fn limits_beyond_the_floating_point_range_are_refused() {
        let tol = Tolerance::Interval {
            lower: -1.0,
            upper: 1.0,
        };
        for rule in [
            DecisionRule::GuardedBinary { r: 1e308 },
            DecisionRule::GuardedNonBinary { r: 1e308 },
        ] {
            let e = decide(0.0, 2.0, &tol, rule).unwrap_err();
            assert!(e.to_string().contains("overflow"), "{e}");
        }
        // Finite w, but a rejection limit beyond the range (non-binary reports it).
        let wide = Tolerance::UpperOnly { upper: 1e308 };
        let rule = DecisionRule::GuardedNonBinary { r: 1.0 };
        assert!(decide(0.0, 1e308, &wide, rule).is_err());
        // The binary rule reports no rejection limits: the same case decides (w = 1e308,
        // acceptance limit 0, measured 0 is on it: a pass).
        let d = decide(0.0, 1e308, &wide, DecisionRule::GuardedBinary { r: 1.0 }).unwrap();
        assert_eq!(d.outcome, Outcome::Pass);
        // A symmetric tolerance whose limits overflow.
        let huge = Tolerance::Symmetric {
            nominal: 1e308,
            half_width: 1e308,
        };
        assert!(decide(0.0, 0.0, &huge, DecisionRule::SimpleAcceptance).is_err());
    }
}
