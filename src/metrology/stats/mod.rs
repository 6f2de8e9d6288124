//! Statistics core of Juncture: least-squares calibration fits, GUM uncertainty budgets,
//! coverage factors, Monte Carlo propagation, reporting rules and conformity decisions.
//!
//! Pure computation: no I/O, no global state, no panics on any input (every public routine
//! validates its arguments and returns [`StatsError`]).
//!
//! | module | content | main reference |
//! |---|---|---|
//! | [`lsq`] | weighted polynomial least squares (QR + double-double refinement) | JCGM 100:2008 H.3 |
//! | [`cvd_fit`] | Callendar-Van Dusen fit of a PRT | IEC 60751:2008 |
//! | [`gum`] | uncertainty budget, Welch-Satterthwaite | JCGM 100:2008 5, G.4 |
//! | [`coverage`] | coverage factors k_p(ν) | JCGM 100:2008 G.3, Table G.2 |
//! | [`montecarlo`] | Monte Carlo propagation, adaptive procedure, validation | JCGM 101:2008 7, 8 |
//! | [`rounding`] | rounding of U and of the result, CMC floor | ILAC-P14, JCGM 100 7.2.6 |
//! | [`decision`] | conformity decision rules | ILAC-G8:09/2019 4.2 |
//! | [`comparison`] | normalized error E_n of two results | ISO/IEC 17043:2010 B.3.1.3 |

pub mod comparison;
pub mod coverage;
pub mod cvd_fit;
mod dd;
pub mod decision;
pub mod error;
pub mod gum;
pub mod lsq;
pub mod montecarlo;
pub mod rounding;

pub use comparison::normalized_error;
pub use coverage::{P_K1, P_K2, P_K3, coverage_factor, normal_coverage_probability};
pub use cvd_fit::{CTerm, CvdFit, CvdOptions, fit_cvd};
pub use decision::{Decision, DecisionRule, Limits, Outcome, Tolerance, decide};
pub use error::StatsError;
pub use gum::{
    BudgetOptions, BudgetResult, Component, ComponentContribution, Correlation, Distribution, Dof,
    NuEffRounding, evaluate_budget,
};
pub use lsq::{
    ChiSquareCheck, CovarianceConvention, PolyFit, PolyOptions, ResidualFlag, fit_polynomial,
    weights_from_uncertainties,
};
pub use montecarlo::{
    AdaptiveOptions, AdaptiveSummary, CoverageInterval, GumValidation, McInput, McModel, McOptions,
    McResult, numerical_tolerance, run_adaptive, run_fixed, validate_gum,
};
pub use rounding::{
    ReportOptions, ReportedResult, RoundedDecimal, RoundingMode, round_for_report,
    round_significant, round_to_exponent,
};
