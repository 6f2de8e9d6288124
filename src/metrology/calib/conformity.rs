//! Conformity of the deviation dt at one set point with a tolerance class or customer limit.

use crate::metrology::stats::{Decision, Tolerance, decide};
use crate::metrology::thermo::ThermoError;

use super::error::{CalibError, Location, finite};
use super::model::{ConformitySpec, ToleranceSpec, UnitUnderTest};

/// Conformity result of one set point.
///
/// # Reference
/// ILAC-G8:09/2019 4.2; JCGM 106:2012.
#[derive(Debug, Clone, PartialEq)]
pub struct ConformityResult {
    /// Tolerance on dt at this set point, °C (class value at t_ref, or the customer limit).
    pub tolerance: Tolerance,
    /// Decision on the mean dt with the reported U.
    pub decision: Decision,
}

/// Checks that the tolerance fits the unit under test and that customer limits are sound.
pub(crate) fn validate(spec: &ConformitySpec, uut: &UnitUnderTest) -> Result<(), CalibError> {
    let at = Location::run().field("conformity");
    match spec.tolerance {
        ToleranceSpec::ThermocoupleClass(_) => {
            if !matches!(uut, UnitUnderTest::Thermocouple { .. }) {
                return Err(CalibError::invalid(
                    &at,
                    "a thermocouple tolerance class needs a thermocouple under test",
                ));
            }
        }
        ToleranceSpec::PrtClass { .. } => {
            if !matches!(uut, UnitUnderTest::Prt { .. }) {
                return Err(CalibError::invalid(
                    &at,
                    "an IEC 60751 tolerance class needs a PRT under test",
                ));
            }
        }
        ToleranceSpec::Symmetric { half_width_c } => {
            let t = finite(&at.clone().field("half-width"), half_width_c)?;
            if t <= 0.0 {
                return Err(CalibError::invalid(
                    &at,
                    format!("the half-width must be positive; got {t} °C"),
                ));
            }
        }
        ToleranceSpec::Asymmetric { lower_c, upper_c } => {
            let lo = finite(&at.clone().field("lower limit"), lower_c)?;
            let hi = finite(&at.clone().field("upper limit"), upper_c)?;
            if lo >= hi {
                return Err(CalibError::invalid(
                    &at,
                    format!("the lower limit must be below the upper; got {lo} °C and {hi} °C"),
                ));
            }
        }
    }
    Ok(())
}

/// Outcome of [`assess`]: a decision, or the sentence saying why none is possible.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Assessment {
    Decided(ConformityResult),
    NotPossible(String),
}

/// Decides conformity of the mean deviation `deviation_c` (°C) with expanded uncertainty
/// `expanded_c` (°C) at the reference temperature `t_ref_c` (°C). A tolerance class that is not
/// defined at `t_ref_c` gives [`Assessment::NotPossible`], not an error.
///
/// # Reference
/// IEC 60584-1:2013 and IEC 60751:2008 tolerance classes; ILAC-G8:09/2019 4.2.
pub(crate) fn assess(
    spec: &ConformitySpec,
    uut: &UnitUnderTest,
    t_ref_c: f64,
    deviation_c: f64,
    expanded_c: f64,
    at: &Location,
) -> Result<Assessment, CalibError> {
    let class_value = match (spec.tolerance, uut) {
        (ToleranceSpec::ThermocoupleClass(class), UnitUnderTest::Thermocouple { kind, .. }) => {
            Some(class.tolerance(*kind, t_ref_c))
        }
        (ToleranceSpec::PrtClass { class, element }, UnitUnderTest::Prt { .. }) => {
            Some(class.tolerance(element, t_ref_c))
        }
        _ => None,
    };
    let tolerance = match (spec.tolerance, class_value) {
        (_, Some(Ok(t))) => Tolerance::Symmetric {
            nominal: 0.0,
            half_width: t,
        },
        (_, Some(Err(e @ ThermoError::ClassNotDefined { .. }))) => {
            return Ok(Assessment::NotPossible(format!(
                "No conformity decision: {e}."
            )));
        }
        (_, Some(Err(e))) => return Err(CalibError::thermo(at, e)),
        (ToleranceSpec::Symmetric { half_width_c }, None) => Tolerance::Symmetric {
            nominal: 0.0,
            half_width: half_width_c,
        },
        (ToleranceSpec::Asymmetric { lower_c, upper_c }, None) => Tolerance::Interval {
            lower: lower_c,
            upper: upper_c,
        },
        (_, None) => {
            return Err(CalibError::invalid(
                at,
                "the tolerance class does not fit the unit under test",
            ));
        }
    };
    let decision = decide(deviation_c, expanded_c, &tolerance, spec.rule)
        .map_err(|e| CalibError::stats(at, "conformity decision", e))?;
    Ok(Assessment::Decided(ConformityResult {
        tolerance,
        decision,
    }))
}
