//! Reference standard: reference temperature t_ref from the reference signal, and the
//! sensitivities ∂t_ref/∂x and ∂t_ref/∂t_rj used by the budget.

use crate::metrology::thermo::its90::{wr, wr_high, wr_low};
use crate::metrology::thermo::{
    Sprt, SprtSubRange, ThermoError, ThermoResult, ThermocoupleType, ZERO_CELSIUS_K,
};

use super::error::{CalibError, Location, finite};
use super::model::{JunctionMethod, ReferenceProbe};

/// Largest number of Newton steps for the reference thermocouple with emf deviation.
const MAX_NEWTON_STEPS: usize = 50;
/// Newton iteration stops when the step is below this, °C.
const NEWTON_STEP_C: f64 = 1e-11;
/// Step of the numerical derivative of the ITS-90 reference function W_r(T90), K. W_r is a
/// polynomial (eq. 10a) or the exponential of one (eq. 9a), smooth over 0.02 K: the central
/// difference is good to about 1e-11 relative.
const WR_DIFF_STEP_K: f64 = 0.01;

/// Value and derivative of Σ c_i x^i (Horner).
pub(crate) fn poly_with_derivative(c: &[f64], x: f64) -> (f64, f64) {
    let mut v = 0.0;
    let mut d = 0.0;
    for &ci in c.iter().rev() {
        d = d * x + v;
        v = v * x + ci;
    }
    (v, d)
}

/// E(t) in mV and S(t) = dE/dt in mV/°C of a thermocouple type.
pub(crate) fn emf_and_slope(kind: ThermocoupleType, t_c: f64) -> Result<(f64, f64), ThermoError> {
    Ok((kind.emf(t_c)?, kind.seebeck_uv_per_k(t_c)? / 1000.0))
}

/// Temperature (°C) at which `kind` gives `emf_mv` (reference junction at 0 °C), from the
/// thermo inverse polished by one Newton step on the reference function (the inverse stops at
/// 1e-9 mV, about 1e-7 °C; the step brings it to rounding level).
pub(crate) fn tc_temperature(kind: ThermocoupleType, emf_mv: f64) -> Result<f64, ThermoError> {
    let t0 = kind.temperature(emf_mv)?;
    let (e0, s0) = emf_and_slope(kind, t0)?;
    let t1 = t0 + (emf_mv - e0) / s0;
    match kind.emf(t1) {
        Ok(e1) if t1.is_finite() && (e1 - emf_mv).abs() <= (e0 - emf_mv).abs() => Ok(t1),
        _ => Ok(t0),
    }
}

impl ReferenceProbe {
    /// Checks the probe's coefficients once, before any reading is converted.
    pub(crate) fn validate(&self, at: &Location) -> Result<(), CalibError> {
        match self {
            ReferenceProbe::Sprt {
                r_tpw_ohm,
                sub_range,
            } => {
                Sprt::new(*r_tpw_ohm, *sub_range).map_err(|e| CalibError::thermo(at, e))?;
            }
            ReferenceProbe::Prt { .. } => {}
            ReferenceProbe::Thermocouple {
                junction,
                emf_deviation_mv,
                ..
            } => {
                if *junction == JunctionMethod::Compensated {
                    return Err(CalibError::invalid(
                        at,
                        "a reference thermocouple must be read as emf (ice-point or measured \
                         reference junction), not through a compensated readout",
                    ));
                }
                for (i, &e) in emf_deviation_mv.iter().enumerate() {
                    finite(&at.clone().field(format!("emf deviation e_{i}")), e)?;
                }
            }
            ReferenceProbe::Digital {
                correction_c,
                range_c,
            } => {
                for (i, &c) in correction_c.iter().enumerate() {
                    finite(&at.clone().field(format!("correction c_{i}")), c)?;
                }
                let lo = finite(&at.clone().field("range low"), range_c.0)?;
                let hi = finite(&at.clone().field("range high"), range_c.1)?;
                if lo >= hi {
                    return Err(CalibError::invalid(
                        at,
                        format!("the correction range must have low < high; got {lo} to {hi} °C"),
                    ));
                }
            }
        }
        Ok(())
    }

    /// Whether the probe reads a reference-junction temperature from each reading.
    pub(crate) fn uses_measured_junction(&self) -> bool {
        matches!(
            self,
            ReferenceProbe::Thermocouple {
                junction: JunctionMethod::Measured,
                ..
            }
        )
    }

    /// Reference temperature t_ref (°C, ITS-90) from the reference signal `signal` (Ω, mV or
    /// °C according to the probe) and, for a thermocouple with a measured reference junction,
    /// the junction temperature `t_rj_c` (°C). `at` locates errors.
    ///
    /// * SPRT: W = R/R(0.01 °C), W_r = W − ΔW(W), T90 from the reference function.
    /// * PRT: inverse of the certificate's Callendar-Van Dusen equation.
    /// * Thermocouple: solves E(t) + ΔE(t) = E_m + E(t_rj) by Newton iteration, started from
    ///   the inverse of the reference function at E_m + E(t_rj).
    /// * Digital: t_ref = t_ind + c(t_ind) inside the certificate's range.
    ///
    /// # Reference
    /// ITS-90 (Metrologia 27 (1990) 3-10) 3.3; IEC 60751:2008; NIST Monograph 175 / IEC
    /// 60584-1:2013 reference functions with the law of intermediate temperatures; EA-4/02
    /// M:2013 S5 (reference thermocouple corrected by its certificate).
    pub fn temperature(
        &self,
        signal: f64,
        t_rj_c: Option<f64>,
        at: &Location,
    ) -> Result<f64, CalibError> {
        let sig_at = at.clone().field("reference signal");
        let x = finite(&sig_at, signal)?;
        match self {
            ReferenceProbe::Sprt {
                r_tpw_ohm,
                sub_range,
            } => Sprt::new(*r_tpw_ohm, *sub_range)
                .and_then(|s| s.temperature(x))
                .map(|t| t.t90_c)
                .map_err(|e| CalibError::thermo(&sig_at, e)),
            ReferenceProbe::Prt { curve } => curve
                .temperature(x)
                .map_err(|e| CalibError::thermo(&sig_at, e)),
            ReferenceProbe::Thermocouple {
                kind,
                junction,
                emf_deviation_mv,
            } => {
                let t_rj = match junction {
                    JunctionMethod::Measured => {
                        let rj_at = at.clone().field("t_rj_c");
                        let v = t_rj_c.ok_or_else(|| {
                            CalibError::invalid(
                                &rj_at,
                                "the reference junction is declared as measured but the reading \
                                 has no reference-junction temperature",
                            )
                        })?;
                        finite(&rj_at, v)?
                    }
                    _ => 0.0,
                };
                let e_rj = kind
                    .emf(t_rj)
                    .map_err(|e| CalibError::thermo(&at.clone().field("t_rj_c"), e))?;
                let target = x + e_rj;
                tc_with_deviation(*kind, emf_deviation_mv, target, &sig_at)
            }
            ReferenceProbe::Digital {
                correction_c,
                range_c,
            } => {
                if x < range_c.0 || x > range_c.1 {
                    return Err(CalibError::thermo(
                        &sig_at,
                        ThermoError::OutOfRange {
                            sensor: "the correction of the digital reference thermometer".into(),
                            quantity: "indication",
                            value: x,
                            lo: range_c.0,
                            hi: range_c.1,
                            unit: "°C",
                        },
                    ));
                }
                Ok(x + poly_with_derivative(correction_c, x).0)
            }
        }
    }

    /// Sensitivity ∂t_ref/∂x (°C per signal unit) at the signal `signal` whose reference
    /// temperature is `t_ref_c` (°C).
    ///
    /// * SPRT: dT90/dR = (1 − ΔW′(W)) / (R(0.01 °C)·dW_r/dT90), ΔW′ analytic, dW_r/dT90 by a
    ///   central difference (±0.01 K) of the reference function that applies to the
    ///   sub-range: eq. (10a) for the sub-ranges from 0 °C up, eq. (9a) for argon-to-water,
    ///   both for mercury-to-gallium (second-order one-sided difference at a domain end).
    /// * PRT: 1/(dR/dt) of the certificate curve.
    /// * Thermocouple: 1/(S(t) + ΔE′(t)), S = dE/dt of the reference function (mV/°C).
    /// * Digital: 1 + c′(t_ind).
    ///
    /// # Reference
    /// JCGM 100:2008 5.1.3; EA-4/02 M:2013 S5 (C_S = 1/S for thermocouples); IEC 60751:2008.
    pub fn sensitivity_c_per_signal(
        &self,
        signal: f64,
        t_ref_c: f64,
        at: &Location,
    ) -> Result<f64, CalibError> {
        let here = at.clone().field("reference sensitivity");
        let c = match self {
            ReferenceProbe::Sprt {
                r_tpw_ohm,
                sub_range,
            } => sprt_sensitivity(*r_tpw_ohm, sub_range, signal, t_ref_c, &here)?,
            ReferenceProbe::Prt { curve } => {
                1.0 / curve
                    .sensitivity_ohm_per_k(t_ref_c)
                    .map_err(|e| CalibError::thermo(&here, e))?
            }
            ReferenceProbe::Thermocouple {
                kind,
                emf_deviation_mv,
                ..
            } => {
                let (_, s) =
                    emf_and_slope(*kind, t_ref_c).map_err(|e| CalibError::thermo(&here, e))?;
                1.0 / (s + poly_with_derivative(emf_deviation_mv, t_ref_c).1)
            }
            ReferenceProbe::Digital { correction_c, .. } => {
                1.0 + poly_with_derivative(correction_c, signal).1
            }
        };
        finite(&here, c)
    }

    /// ∂t_ref/∂t_rj = S(t_rj)/(S(t_ref) + ΔE′(t_ref)) for a thermocouple read as emf, at the
    /// junction temperature `t_rj_c` (0 for an ice point); `None` for other probes.
    ///
    /// # Reference
    /// EA-4/02 M:2013 S5 (reference-junction term weighted by C_S/C_S0).
    pub fn junction_sensitivity(
        &self,
        t_ref_c: f64,
        t_rj_c: f64,
        at: &Location,
    ) -> Result<Option<f64>, CalibError> {
        match self {
            ReferenceProbe::Thermocouple {
                kind,
                emf_deviation_mv,
                junction,
            } if *junction != JunctionMethod::Compensated => {
                let here = at.clone().field("reference junction sensitivity");
                let (_, s) =
                    emf_and_slope(*kind, t_ref_c).map_err(|e| CalibError::thermo(&here, e))?;
                let (_, s_rj) =
                    emf_and_slope(*kind, t_rj_c).map_err(|e| CalibError::thermo(&here, e))?;
                let d = poly_with_derivative(emf_deviation_mv, t_ref_c).1;
                Ok(Some(finite(&here, s_rj / (s + d))?))
            }
            _ => Ok(None),
        }
    }
}

/// Derivative dΔW/dW of an SPRT deviation function at W = `w`.
fn deviation_slope(sub_range: &SprtSubRange, w: f64) -> f64 {
    let x = w - 1.0;
    match *sub_range {
        SprtSubRange::ArgonToWater { a, b } => a + b * (w.ln() + x / w),
        SprtSubRange::MercuryToGallium { a, b }
        | SprtSubRange::WaterToTin { a, b }
        | SprtSubRange::WaterToZinc { a, b } => a + 2.0 * b * x,
        SprtSubRange::WaterToGallium { a } | SprtSubRange::WaterToIndium { a } => a,
        SprtSubRange::WaterToAluminium { a, b, c } => a + x * (2.0 * b + 3.0 * c * x),
    }
}

/// dT90/dR (K/Ω = °C/Ω) of an SPRT at resistance `r_ohm` and temperature `t_c` (°C).
///
/// # Reference
/// ITS-90 (Metrologia 27 (1990) 3-10) 3.3: W − ΔW(W) = W_r(T90), differentiated.
fn sprt_sensitivity(
    r_tpw_ohm: f64,
    sub_range: &SprtSubRange,
    r_ohm: f64,
    t_c: f64,
    at: &Location,
) -> Result<f64, CalibError> {
    let reference_function: fn(f64) -> ThermoResult<f64> = match sub_range {
        SprtSubRange::ArgonToWater { .. } => wr_low,
        SprtSubRange::MercuryToGallium { .. } => wr,
        _ => wr_high,
    };
    let f = |t: f64| reference_function(t).map_err(|e| CalibError::thermo(at, e));
    let t_k = t_c + ZERO_CELSIUS_K;
    let h = WR_DIFF_STEP_K;
    let slope = match (reference_function(t_k - h), reference_function(t_k + h)) {
        (Ok(lo), Ok(hi)) => (hi - lo) / (2.0 * h),
        (Err(_), Ok(_)) => (-3.0 * f(t_k)? + 4.0 * f(t_k + h)? - f(t_k + 2.0 * h)?) / (2.0 * h),
        (Ok(_), Err(_)) => (3.0 * f(t_k)? - 4.0 * f(t_k - h)? + f(t_k - 2.0 * h)?) / (2.0 * h),
        (Err(e), Err(_)) => return Err(CalibError::thermo(at, e)),
    };
    let w = r_ohm / r_tpw_ohm;
    Ok((1.0 - deviation_slope(sub_range, w)) / (r_tpw_ohm * slope))
}

/// Solves E(t) + ΔE(t) = `target` (mV) for a reference thermocouple.
fn tc_with_deviation(
    kind: ThermocoupleType,
    deviation: &[f64],
    target: f64,
    at: &Location,
) -> Result<f64, CalibError> {
    let mut t = tc_temperature(kind, target).map_err(|e| CalibError::thermo(at, e))?;
    if deviation.is_empty() {
        return Ok(t);
    }
    for _ in 0..MAX_NEWTON_STEPS {
        let (e, s) = emf_and_slope(kind, t).map_err(|e| CalibError::thermo(at, e))?;
        let (de, dde) = poly_with_derivative(deviation, t);
        let slope = s + dde;
        if slope.is_nan() || slope <= 0.0 {
            return Err(CalibError::invalid(
                at,
                format!(
                    "E(t) + ΔE(t) of the reference thermocouple does not increase at {t} °C \
                     (slope {slope} mV/°C); check the emf deviation coefficients"
                ),
            ));
        }
        let step = (e + de - target) / slope;
        t -= step;
        if !t.is_finite() {
            break;
        }
        if step.abs() <= NEWTON_STEP_C {
            // The last step was below the tolerance: t is converged; check it is in range.
            kind.emf(t).map_err(|e| CalibError::thermo(at, e))?;
            return Ok(t);
        }
    }
    Err(CalibError::NoConvergence {
        at: at.clone(),
        what: "reference thermocouple temperature with emf deviation",
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polynomial_and_derivative() {
        // 1 + 2x + 3x² at x = 2: 17, derivative 2 + 6x = 14 (by hand).
        assert_eq!(poly_with_derivative(&[1.0, 2.0, 3.0], 2.0), (17.0, 14.0));
        assert_eq!(poly_with_derivative(&[], 2.0), (0.0, 0.0));
    }

    #[test]
    fn digital_reference_outside_its_range_is_named() {
        let probe = ReferenceProbe::Digital {
            correction_c: vec![0.01],
            range_c: (-50.0, 650.0),
        };
        let at = Location::set_point(0, 700.0).reading(2);
        let e = probe.temperature(700.5, None, &at).unwrap_err();
        assert_eq!(
            e.to_string(),
            "set point 1 (700 °C), reading 3, reference signal: the correction of the digital \
             reference thermometer is defined from -50 °C to 650 °C; got 700.5 °C"
        );
    }

    #[test]
    fn compensated_reference_thermocouple_is_refused() {
        let probe = ReferenceProbe::Thermocouple {
            kind: ThermocoupleType::S,
            junction: JunctionMethod::Compensated,
            emf_deviation_mv: vec![],
        };
        assert!(probe.validate(&Location::run()).is_err());
    }
}
