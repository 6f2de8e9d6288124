//! Unit under test: its indicated temperature and deviation from the reference temperature for
//! one reading, and its sensitivities ∂t_uut/∂x and ∂t_uut/∂t_rj.

use crate::metrology::thermo::CvdCoefficients;

use super::error::{CalibError, Location, finite};
use super::model::{JunctionMethod, UnitUnderTest};
use super::reference::{emf_and_slope, tc_temperature};

/// Deviation of the unit under test for one reading.
///
/// # Reference
/// NIST Monograph 175 / IEC 60584-1:2013; IEC 60751:2008; EA-4/02 M:2013 S5.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UutDeviation {
    /// Temperature indicated by the UUT, °C: t(E_m + E(t_rj)) for a thermocouple, t_nominal(R)
    /// for a PRT, the indication otherwise.
    pub t_uut_c: f64,
    /// dt = t_uut − t_ref, °C.
    pub deviation_c: f64,
    /// Thermocouples: dE = (E_m + E(t_rj)) − E(t_ref), mV (for a compensated readout
    /// E(t_uut) − E(t_ref)).
    pub deviation_emf_mv: Option<f64>,
    /// PRTs: dR = R − R_nominal(t_ref), Ω.
    pub deviation_ohm: Option<f64>,
}

impl UnitUnderTest {
    /// Checks the UUT's own parameters once.
    pub(crate) fn validate(&self, at: &Location) -> Result<(), CalibError> {
        if let UnitUnderTest::Prt { r0_ohm } = self {
            CvdCoefficients::iec_60751(*r0_ohm).map_err(|e| CalibError::thermo(at, e))?;
        }
        Ok(())
    }

    /// Whether the UUT reads a reference-junction temperature from each reading.
    pub(crate) fn uses_measured_junction(&self) -> bool {
        matches!(
            self,
            UnitUnderTest::Thermocouple {
                junction: JunctionMethod::Measured,
                ..
            }
        )
    }

    /// Deviation of the UUT for one reading: UUT signal `signal` (mV, °C or Ω according to the
    /// UUT), reference temperature `t_ref_c` (°C) and, for a measured reference junction,
    /// `t_rj_c` (°C). `at` locates errors.
    ///
    /// # Reference
    /// NIST Monograph 175 / IEC 60584-1:2013 reference functions, law of intermediate
    /// temperatures (E = E_m + E(t_rj)); IEC 60751:2008 nominal curve.
    pub fn deviation(
        &self,
        signal: f64,
        t_ref_c: f64,
        t_rj_c: Option<f64>,
        at: &Location,
    ) -> Result<UutDeviation, CalibError> {
        let sig_at = at.clone().field("UUT signal");
        let x = finite(&sig_at, signal)?;
        let ref_at = at.clone().field("reference temperature for the UUT");
        match *self {
            UnitUnderTest::Thermocouple { kind, junction } => {
                let (e_uut, t_uut) = match junction {
                    JunctionMethod::Compensated => {
                        let e = kind.emf(x).map_err(|e| CalibError::thermo(&sig_at, e))?;
                        (e, x)
                    }
                    JunctionMethod::IcePoint | JunctionMethod::Measured => {
                        let t_rj = if junction == JunctionMethod::Measured {
                            let rj_at = at.clone().field("t_rj_c");
                            let v = t_rj_c.ok_or_else(|| {
                                CalibError::invalid(
                                    &rj_at,
                                    "the reference junction is declared as measured but the \
                                     reading has no reference-junction temperature",
                                )
                            })?;
                            finite(&rj_at, v)?
                        } else {
                            0.0
                        };
                        let e_rj = kind
                            .emf(t_rj)
                            .map_err(|e| CalibError::thermo(&at.clone().field("t_rj_c"), e))?;
                        let e = x + e_rj;
                        let t =
                            tc_temperature(kind, e).map_err(|e| CalibError::thermo(&sig_at, e))?;
                        (e, t)
                    }
                };
                let e_ref = kind
                    .emf(t_ref_c)
                    .map_err(|e| CalibError::thermo(&ref_at, e))?;
                Ok(UutDeviation {
                    t_uut_c: t_uut,
                    deviation_c: t_uut - t_ref_c,
                    deviation_emf_mv: Some(e_uut - e_ref),
                    deviation_ohm: None,
                })
            }
            UnitUnderTest::Prt { r0_ohm } => {
                let curve =
                    CvdCoefficients::iec_60751(r0_ohm).map_err(|e| CalibError::thermo(at, e))?;
                let t = curve
                    .temperature(x)
                    .map_err(|e| CalibError::thermo(&sig_at, e))?;
                let r_nom = curve
                    .resistance(t_ref_c)
                    .map_err(|e| CalibError::thermo(&ref_at, e))?;
                Ok(UutDeviation {
                    t_uut_c: t,
                    deviation_c: t - t_ref_c,
                    deviation_emf_mv: None,
                    deviation_ohm: Some(x - r_nom),
                })
            }
            UnitUnderTest::Indicating => Ok(UutDeviation {
                t_uut_c: x,
                deviation_c: x - t_ref_c,
                deviation_emf_mv: None,
                deviation_ohm: None,
            }),
        }
    }

    /// Sensitivity ∂t_uut/∂x (°C per UUT-signal unit) at the indicated temperature
    /// `t_uut_c` (°C): 1/S(t) for a thermocouple read as emf (S in mV/°C), 1/(dR/dt) of the
    /// nominal curve for a PRT, 1 for a temperature indication.
    ///
    /// # Reference
    /// JCGM 100:2008 5.1.3; EA-4/02 M:2013 S5 (C_X = 1/S_X).
    pub fn sensitivity_c_per_signal(&self, t_uut_c: f64, at: &Location) -> Result<f64, CalibError> {
        let here = at.clone().field("UUT sensitivity");
        let c = match *self {
            UnitUnderTest::Thermocouple {
                kind,
                junction: JunctionMethod::IcePoint | JunctionMethod::Measured,
            } => {
                1.0 / emf_and_slope(kind, t_uut_c)
                    .map_err(|e| CalibError::thermo(&here, e))?
                    .1
            }
            UnitUnderTest::Prt { r0_ohm } => {
                let curve =
                    CvdCoefficients::iec_60751(r0_ohm).map_err(|e| CalibError::thermo(&here, e))?;
                1.0 / curve
                    .sensitivity_ohm_per_k(t_uut_c)
                    .map_err(|e| CalibError::thermo(&here, e))?
            }
            UnitUnderTest::Thermocouple { .. } | UnitUnderTest::Indicating => 1.0,
        };
        finite(&here, c)
    }

    /// ∂t_uut/∂t_rj = S(t_rj)/S(t_uut) for a thermocouple read as emf (junction at `t_rj_c`,
    /// 0 for an ice point); `None` otherwise.
    ///
    /// # Reference
    /// EA-4/02 M:2013 S5 (reference-junction term weighted by C_X/C_X0).
    pub fn junction_sensitivity(
        &self,
        t_uut_c: f64,
        t_rj_c: f64,
        at: &Location,
    ) -> Result<Option<f64>, CalibError> {
        match *self {
            UnitUnderTest::Thermocouple {
                kind,
                junction: JunctionMethod::IcePoint | JunctionMethod::Measured,
            } => {
                let here = at.clone().field("UUT junction sensitivity");
                let (_, s) =
                    emf_and_slope(kind, t_uut_c).map_err(|e| CalibError::thermo(&here, e))?;
                let (_, s_rj) =
                    emf_and_slope(kind, t_rj_c).map_err(|e| CalibError::thermo(&here, e))?;
                Ok(Some(finite(&here, s_rj / s)?))
            }
            _ => Ok(None),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrology::thermo::ThermocoupleType;

    /// Round-trip tolerance, °C (the inverse is polished to rounding level).
    const ROUND_TRIP_C: f64 = 1e-9;

    #[test]
    fn thermocouple_at_its_own_emf_has_no_deviation() {
        let uut = UnitUnderTest::Thermocouple {
            kind: ThermocoupleType::K,
            junction: JunctionMethod::Measured,
        };
        let t = 300.0;
        let t_rj = 23.0;
        let em = ThermocoupleType::K
            .emf_with_reference_junction(t, t_rj)
            .unwrap();
        let d = uut.deviation(em, t, Some(t_rj), &Location::run()).unwrap();
        assert!(d.deviation_c.abs() < ROUND_TRIP_C, "{}", d.deviation_c);
        assert!(d.deviation_emf_mv.unwrap().abs() < 1e-12);
    }

    #[test]
    fn missing_junction_temperature_is_named() {
        let uut = UnitUnderTest::Thermocouple {
            kind: ThermocoupleType::K,
            junction: JunctionMethod::Measured,
        };
        let at = Location::set_point(1, 200.0).reading(3);
        let e = uut.deviation(8.0, 200.0, None, &at).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("set point 2 (200 °C), reading 4, t_rj_c:")
        );
    }

    #[test]
    fn thermocouple_out_of_range_names_set_point_and_reading() {
        let uut = UnitUnderTest::Thermocouple {
            kind: ThermocoupleType::N,
            junction: JunctionMethod::Compensated,
        };
        let at = Location::set_point(2, 500.0).reading(6);
        let e = uut.deviation(1400.0, 500.0, None, &at).unwrap_err();
        assert_eq!(
            e.to_string(),
            "set point 3 (500 °C), reading 7, UUT signal: type N is defined from -270 °C to \
             1300 °C; got 1400 °C"
        );
    }
}
