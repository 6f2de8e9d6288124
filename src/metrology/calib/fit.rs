//! Deviation function across set points: a weighted polynomial of the mean deviation against
//! the mean reference temperature, valid only on the calibrated range.
//!
//! # Choices
//! * Weights w_i = 1/u_c,i², u_c,i the combined standard uncertainty of the point (°C, or mV
//!   for the emf deviation, u_c(dE) = S(t_uut)·u_c(dt)).
//! * Covariance unscaled, (AᵀWA)⁻¹: the point uncertainties are known from the budgets, so the
//!   scatter of the residuals is not used to rescale them; the χ² check (Birge ratio, p-value)
//!   tells whether the residuals agree with those uncertainties.
//! * Residuals are flagged when |r_i| exceeds the point's expanded uncertainty U_i.
//! * Default degree min(2, n − 1) for n set points; a chosen degree needs n ≥ degree + 1.

use nalgebra::DMatrix;

use crate::metrology::stats::{
    ChiSquareCheck, CovarianceConvention, PolyFit, PolyOptions, fit_polynomial,
    weights_from_uncertainties,
};

use super::error::{CalibError, Location};
use super::model::FitDegree;
use crate::metrology::thermo::{ThermoError, ThermocoupleType};

/// Highest degree accepted (the limit of the least-squares routine).
pub const MAX_FIT_DEGREE: usize = crate::metrology::stats::lsq::MAX_DEGREE;
/// Degree used by [`FitDegree::Auto`] when enough set points exist.
pub const DEFAULT_FIT_DEGREE: usize = 2;

/// What the deviation function describes.
///
/// # Reference
/// NIST ITS-90 thermocouple database introduction (emf deviation from the reference function); JCGM
/// 100:2008 H.3.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FitQuantity {
    /// dt (°C) against t_ref (°C).
    TemperatureDeviation,
    /// dE (mV) against t_ref (°C), thermocouples only.
    EmfDeviation,
}

impl FitQuantity {
    /// Unit of the fitted quantity: "°C" or "mV".
    pub fn unit(self) -> &'static str {
        match self {
            FitQuantity::TemperatureDeviation => "°C",
            FitQuantity::EmfDeviation => "mV",
        }
    }
}

/// A set point whose residual exceeds its expanded uncertainty.
///
/// # Reference
/// Residual compared with the point's U: common practice.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlaggedResidual {
    /// Index of the set point (0-based).
    pub set_point: usize,
    /// Residual y − ŷ (unit of the fitted quantity).
    pub residual: f64,
    /// Expanded uncertainty of the point (same unit).
    pub limit: f64,
}

/// A fitted deviation function y(t) = Σ c_i t^i with t in °C.
///
/// # Reference
/// JCGM 100:2008 H.3 (calibration function, covariance of its coefficients).
#[derive(Debug, Clone, PartialEq)]
pub struct DeviationFunction {
    /// Quantity fitted.
    pub quantity: FitQuantity,
    /// Degree.
    pub degree: usize,
    /// Set when a degree below [`DEFAULT_FIT_DEGREE`] was forced by too few set points.
    pub degree_note: Option<String>,
    /// c_0..c_degree (unit of y per °C^i).
    pub coefficients: Vec<f64>,
    /// Standard uncertainties of the coefficients (same units).
    pub standard_uncertainties: Vec<f64>,
    /// Covariance matrix of the coefficients, row by row.
    pub covariance: Vec<Vec<f64>>,
    /// Mean reference temperatures of the set points, °C.
    pub t_ref_c: Vec<f64>,
    /// Fitted points: mean deviations (unit of y).
    pub values: Vec<f64>,
    /// Combined standard uncertainties of the points (unit of y), the weights' source.
    pub point_uncertainties: Vec<f64>,
    /// Residuals y − ŷ (unit of y).
    pub residuals: Vec<f64>,
    /// Residuals larger than the point's expanded uncertainty.
    pub flagged: Vec<FlaggedResidual>,
    /// χ² check of the residuals against the point uncertainties.
    pub chi_square: Option<ChiSquareCheck>,
    /// Validity range [min t_ref, max t_ref], °C.
    pub validity_c: (f64, f64),
    fit: PolyFit,
}

impl DeviationFunction {
    /// Value of the deviation function at `t_c` (°C) and its standard uncertainty from the
    /// coefficient covariance, √(gᵀVg) (unit of y). Refuses any `t_c` outside the validity
    /// range (no extrapolation) and non-finite `t_c`.
    ///
    /// # Reference
    /// JCGM 100:2008 5.2.2 and H.3.4 (uncertainty of a value predicted by a fitted function);
    /// DKD-R 5-1 (results valid only within the calibrated range; from memory).
    pub fn evaluate(&self, t_c: f64) -> Result<(f64, f64), CalibError> {
        let (lo, hi) = self.validity_c;
        if !(t_c >= lo && t_c <= hi) {
            if !t_c.is_finite() {
                return Err(CalibError::NotFinite {
                    at: Location::run().field("temperature for the deviation function"),
                    value: t_c,
                });
            }
            return Err(CalibError::OutsideValidityRange {
                t_c,
                lo_c: lo,
                hi_c: hi,
            });
        }
        Ok(self.fit.evaluate(t_c))
    }

    /// The underlying least-squares result (condition number, r², refinement steps, ...).
    pub fn poly_fit(&self) -> &PolyFit {
        &self.fit
    }
}

/// Temperature of a calibrated thermocouple from its measured emf (reference junction at 0 °C)
/// and its certificate's emf deviation function ΔE(t) = Σ c_i t^i (mV, t in °C): the t that
/// solves E_ref(t) + ΔE(t) = `emf_mv`, by Newton's method started from the reference-function
/// inverse, to |residual| < 1e-9 mV.
///
/// Returns (t, t_ind): the corrected temperature and the temperature the reference function
/// alone would indicate for `emf_mv`. The caller checks t against the validity range.
///
/// # Reference
/// NIST Monograph 175 (1993), section on deviation functions: a thermocouple is described by
/// the reference function plus a low-order emf deviation function of temperature; the equation
/// is solved for t (from memory). Newton iteration: common practice.
pub fn temperature_from_emf(
    tc: ThermocoupleType,
    emf_mv: f64,
    emf_coefficients: &[f64],
) -> Result<(f64, f64), CalibError> {
    let at = || Location::run().field("emf");
    let thermo = |e: ThermoError| CalibError::Thermo {
        at: at(),
        source: Box::new(e),
    };
    if !emf_mv.is_finite() {
        return Err(CalibError::NotFinite {
            at: at(),
            value: emf_mv,
        });
    }
    let indicated = tc.temperature(emf_mv).map_err(thermo)?;
    let mut t = indicated;
    for _ in 0..50 {
        let (dev, slope_dev) = horner_with_derivative(emf_coefficients, t);
        let f = tc.emf(t).map_err(thermo)? + dev - emf_mv;
        if f.abs() < 1e-9 {
            return Ok((t, indicated));
        }
        let slope = tc.seebeck_uv_per_k(t).map_err(thermo)? / 1000.0 + slope_dev;
        if !(slope.is_finite() && slope > 0.0) {
            break;
        }
        t -= f / slope;
    }
    Err(CalibError::NoConvergence {
        at: at(),
        what: "temperature from emf with the emf deviation function",
    })
}

/// Σ c_i t^i and its derivative by Horner's scheme.
fn horner_with_derivative(c: &[f64], t: f64) -> (f64, f64) {
    let mut p = 0.0;
    let mut dp = 0.0;
    for &ci in c.iter().rev() {
        dp = dp * t + p;
        p = p * t + ci;
    }
    (p, dp)
}

/// Degree to fit to `points` set points: `None` for [`FitDegree::None`], else the degree and a
/// note when a lower degree than the default was forced.
pub(crate) fn resolve_degree(
    choice: FitDegree,
    points: usize,
) -> Result<Option<(usize, Option<String>)>, CalibError> {
    match choice {
        FitDegree::None => Ok(None),
        FitDegree::Auto => {
            if points == 0 {
                return Ok(None);
            }
            let d = DEFAULT_FIT_DEGREE.min(points - 1);
            let note = (d < DEFAULT_FIT_DEGREE).then(|| {
                format!(
                    "Degree {d} was used instead of {DEFAULT_FIT_DEGREE} because the run has only \
                     {points} set point(s)."
                )
            });
            Ok(Some((d, note)))
        }
        FitDegree::Fixed(d) => {
            if d > MAX_FIT_DEGREE {
                return Err(CalibError::UnsupportedDegree {
                    degree: d,
                    points,
                    reason: format!("the highest supported degree is {MAX_FIT_DEGREE}"),
                });
            }
            if points < d + 1 {
                return Err(CalibError::UnsupportedDegree {
                    degree: d,
                    points,
                    reason: format!(
                        "it has {} coefficients but the run has only {points} set point(s)",
                        d + 1
                    ),
                });
            }
            Ok(Some((d, None)))
        }
    }
}

/// Fits `y` (unit of `quantity`) against `t_c` (°C) with point standard uncertainties `u` and
/// expanded uncertainties `big_u` (unit of y).
///
/// # Reference
/// JCGM 100:2008 H.3 (least-squares calibration function); common practice for the weights
/// 1/u², the unscaled covariance and the χ² check.
pub(crate) fn fit_deviation(
    quantity: FitQuantity,
    degree: usize,
    degree_note: Option<String>,
    t_c: &[f64],
    y: &[f64],
    u: &[f64],
    big_u: &[f64],
) -> Result<DeviationFunction, CalibError> {
    let at = Location::run().field(match quantity {
        FitQuantity::TemperatureDeviation => "deviation function (°C)",
        FitQuantity::EmfDeviation => "deviation function (mV)",
    });
    let weights = weights_from_uncertainties(u).map_err(|e| {
        CalibError::stats(&at, "weights (a point has zero combined uncertainty)", e)
    })?;
    let options = PolyOptions {
        degree,
        intercept: true,
        covariance: CovarianceConvention::Unscaled,
    };
    let fit = fit_polynomial(t_c, y, Some(&weights), &options).map_err(|e| match e {
        crate::metrology::stats::StatsError::TooFewPoints { .. }
        | crate::metrology::stats::StatsError::RankDeficient { .. } => {
            CalibError::UnsupportedDegree {
                degree,
                points: t_c.len(),
                reason: e.to_string(),
            }
        }
        other => CalibError::stats(&at, "least-squares fit", other),
    })?;
    let flagged = fit
        .residuals
        .iter()
        .zip(big_u)
        .enumerate()
        .filter(|(_, (r, lim))| r.abs() > **lim)
        .map(|(i, (&r, &lim))| FlaggedResidual {
            set_point: i,
            residual: r,
            limit: lim,
        })
        .collect();
    let lo = t_c.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = t_c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Ok(DeviationFunction {
        quantity,
        degree,
        degree_note,
        coefficients: fit.coefficients.clone(),
        standard_uncertainties: fit.standard_uncertainties.clone(),
        covariance: matrix_rows(&fit.covariance),
        t_ref_c: t_c.to_vec(),
        values: y.to_vec(),
        point_uncertainties: u.to_vec(),
        residuals: fit.residuals.clone(),
        flagged,
        chi_square: fit.chi_square,
        validity_c: (lo, hi),
        fit,
    })
}

fn matrix_rows(m: &DMatrix<f64>) -> Vec<Vec<f64>> {
    (0..m.nrows())
        .map(|i| (0..m.ncols()).map(|j| m[(i, j)]).collect())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn temperature_from_emf_with_a_deviation_function() {
        let k = ThermocoupleType::K;
        // NIST SRD 60 type K table: 4.096 mV at 100 °C (rounded to 1 µV, hence 0.03 °C).
        let (t, ind) = temperature_from_emf(k, 4.096, &[]).unwrap();
        assert!((t - 100.0).abs() < 0.03, "{t}");
        assert_eq!(t, ind);
        // A constant emf deviation of +0.0411 mV is about +1 °C near 100 °C: the type K table
        // gives 4.096 mV at 100 °C and 5.206 mV at 127 °C, a mean slope of 41.1 µV/K (NIST SRD
        // 60, the same table as tests/data). The corrected temperature is 1 °C lower than the
        // one the reference function alone indicates (to 0.02 °C, the slope varying by < 1 %).
        let (t, ind) = temperature_from_emf(k, 4.096, &[0.0411]).unwrap();
        assert!((ind - t - 1.0).abs() < 0.02, "{ind} {t}");
        // Sloped deviation ΔE = 0.01 mV + 1e-4 mV/°C · t, solved exactly: E_ref(t) + ΔE(t)
        // reproduces the emf given (round trip through the published reference function).
        let c = [0.01, 1e-4];
        let e = k.emf(250.0).unwrap() + 0.01 + 1e-4 * 250.0;
        let (t, _) = temperature_from_emf(k, e, &c).unwrap();
        assert!((t - 250.0).abs() < 1e-7, "{t}");
        // Outside the type K range: a clear thermometry error naming the emf.
        let err = temperature_from_emf(k, 80.0, &c).unwrap_err().to_string();
        assert!(err.contains("emf"), "{err}");
        assert!(temperature_from_emf(k, f64::NAN, &c).is_err());
    }

    #[test]
    fn degree_choice() {
        assert_eq!(resolve_degree(FitDegree::Auto, 4).unwrap(), Some((2, None)));
        let (d, note) = resolve_degree(FitDegree::Auto, 2).unwrap().unwrap();
        assert_eq!(d, 1);
        assert!(note.unwrap().contains("only 2 set point"));
        assert_eq!(resolve_degree(FitDegree::None, 4).unwrap(), None);
        assert!(matches!(
            resolve_degree(FitDegree::Fixed(3), 3),
            Err(CalibError::UnsupportedDegree {
                degree: 3,
                points: 3,
                ..
            })
        ));
        assert!(resolve_degree(FitDegree::Fixed(11), 20).is_err());
    }

    #[test]
    fn straight_line_through_exact_points_and_no_extrapolation() {
        // y = 0.1 + 0.002 t exactly (by construction); u = 0.01 everywhere.
        let t = [0.0, 100.0, 200.0];
        let y: Vec<f64> = t.iter().map(|x| 0.1 + 0.002 * x).collect();
        let f = fit_deviation(
            FitQuantity::TemperatureDeviation,
            1,
            None,
            &t,
            &y,
            &[0.01; 3],
            &[0.02; 3],
        )
        .unwrap();
        assert!((f.coefficients[0] - 0.1).abs() < 1e-14);
        assert!((f.coefficients[1] - 0.002).abs() < 1e-16);
        assert!(f.flagged.is_empty());
        assert!((f.evaluate(150.0).unwrap().0 - 0.4).abs() < 1e-14);
        assert!(matches!(
            f.evaluate(200.1),
            Err(CalibError::OutsideValidityRange { .. })
        ));
        assert!(matches!(
            f.evaluate(f64::NAN),
            Err(CalibError::NotFinite { .. })
        ));
    }
}
