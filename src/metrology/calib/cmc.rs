//! The laboratory's calibration and measurement capability (CMC) as a table of temperature
//! ranges, used as the floor of the reported expanded uncertainty.

use super::error::{CalibError, Location, finite};

/// One line of a CMC table: expanded uncertainty `expanded_c` (°C, same coverage probability
/// as the run) on the closed range `t_lo_c` ≤ t ≤ `t_hi_c` (°C).
///
/// # Reference
/// ILAC-P14:09/2020 (CMC as the smallest uncertainty; clause numbers from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CmcRange {
    /// Lower end of the range, °C.
    pub t_lo_c: f64,
    /// Upper end of the range, °C.
    pub t_hi_c: f64,
    /// CMC as an expanded uncertainty, °C (> 0).
    pub expanded_c: f64,
}

/// A CMC table. The CMC at a temperature is the largest `expanded_c` of the ranges that
/// contain it (so a shared boundary takes the more conservative value); an empty table means
/// the laboratory states no CMC for this run.
///
/// # Reference
/// ILAC-P14:09/2020 (clause numbers from memory); table by temperature range: common practice.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CmcTable {
    /// The ranges, in any order.
    pub ranges: Vec<CmcRange>,
}

impl CmcTable {
    /// A table from its ranges.
    pub fn new(ranges: Vec<CmcRange>) -> Self {
        CmcTable { ranges }
    }

    /// Checks every range: finite values, t_lo ≤ t_hi, CMC > 0.
    pub(crate) fn validate(&self) -> Result<(), CalibError> {
        for (i, r) in self.ranges.iter().enumerate() {
            let at = Location::run().field(format!("CMC range {}", i + 1));
            let lo = finite(&at, r.t_lo_c)?;
            let hi = finite(&at, r.t_hi_c)?;
            let u = finite(&at, r.expanded_c)?;
            if lo > hi || u <= 0.0 {
                return Err(CalibError::invalid(
                    &at,
                    format!(
                        "needs low <= high and a positive CMC; got {lo} °C to {hi} °C, \
                         CMC {u} °C"
                    ),
                ));
            }
        }
        Ok(())
    }

    /// CMC (°C) at `t_c` (°C), or `None` when no range contains it.
    ///
    /// # Reference
    /// ILAC-P14:09/2020 (the reported uncertainty is not smaller than the CMC; clause number
    /// from memory); table form: common practice.
    pub fn at(&self, t_c: f64) -> Option<f64> {
        self.ranges
            .iter()
            .filter(|r| r.t_lo_c <= t_c && t_c <= r.t_hi_c)
            .map(|r| r.expanded_c)
            .reduce(f64::max)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundary_takes_the_larger_cmc() {
        let t = CmcTable::new(vec![
            CmcRange {
                t_lo_c: 0.0,
                t_hi_c: 500.0,
                expanded_c: 0.5,
            },
            CmcRange {
                t_lo_c: 500.0,
                t_hi_c: 1000.0,
                expanded_c: 1.0,
            },
        ]);
        assert_eq!(t.at(250.0), Some(0.5));
        assert_eq!(t.at(500.0), Some(1.0));
        assert_eq!(t.at(1200.0), None);
        assert!(t.validate().is_ok());
        let bad = CmcTable::new(vec![CmcRange {
            t_lo_c: 10.0,
            t_hi_c: 0.0,
            expanded_c: 1.0,
        }]);
        assert!(bad.validate().is_err());
    }
}
