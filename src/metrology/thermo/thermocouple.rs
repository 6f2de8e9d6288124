//! Letter-designated thermocouples B, E, J, K, N, R, S and T: reference functions E(t90),
//! Seebeck coefficients, inverse functions and reference-junction compensation.
//!
//! The reference functions and approximate inverse functions are those of NIST Monograph 175
//! (1993), which IEC 60584-1:2013 adopts (the coefficients are in `thermocouple_tables.rs`).
//! All temperatures are t90 in °C; all emfs are in mV and, unless a function says otherwise,
//! refer to a reference junction at 0 °C.
//!
//! # Inverse
//! [`ThermocoupleType::temperature`] solves E(t) = E exactly (to [`EMF_TOLERANCE_MV`]) by a
//! safeguarded Newton iteration with bisection fallback. It starts from the published inverse
//! polynomial when one covers the emf, and from the bracketing sub-range otherwise (types E, K,
//! N and T below -200 °C, type B below 250 °C).
//!
//! # Type B below 42 °C
//! The type B reference function is not monotonic: E(t) falls from 0 mV at 0 °C to a minimum
//! of -0.002585 mV at 21.02 °C and is back at 0 mV at 42.13 °C. An emf from that minimum up to
//! 0 mV therefore belongs to two temperatures, one on each side of 21.02 °C, and the
//! thermocouple cannot tell them apart. [`ThermocoupleType::temperature`] does not guess: for
//! such an emf it returns [`ThermoError::Ambiguous`] naming both temperatures. Every emf above
//! 0 mV has a single temperature (above 42.13 °C) and is inverted normally.

use std::fmt;
use std::str::FromStr;

use super::error::{ThermoError, ThermoResult, require_finite};
use super::numeric::{MAX_ITERATIONS, horner, horner_with_derivative, solve_increasing};
use super::thermocouple_tables::{
    ForwardSegment, InverseSegment, TYPE_B, TYPE_E, TYPE_J, TYPE_K, TYPE_K_EXPONENTIAL, TYPE_N,
    TYPE_R, TYPE_S, TYPE_T, TypeTable,
};

/// Convergence criterion of the inverse: |E(t) - E| below this, mV.
pub const EMF_TOLERANCE_MV: f64 = 1e-9;

/// Bound on the step between two adjacent published sub-range functions at their shared
/// boundary, mV. The largest step is 7.49e-8 mV (type J at 760 °C, computed from the published
/// coefficients). An emf that falls inside such a step has no temperature meeting
/// [`EMF_TOLERANCE_MV`]; the boundary temperature is returned for it, with a residual below
/// this bound.
pub const BOUNDARY_STEP_MV: f64 = 1e-7;

/// Temperature of the minimum of the type B reference function (zero of dE/dt), °C.
/// Computed from the published coefficients with 40-digit arithmetic.
pub const TYPE_B_EMF_MINIMUM_C: f64 = 21.020261884768556;

/// Temperature above 0 °C at which the type B reference function returns to 0 mV, °C; above it
/// the type B inverse is unique. Computed from the published coefficients with 40-digit
/// arithmetic.
pub const TYPE_B_UNIQUE_ABOVE_C: f64 = 42.13209965734812;

/// The eight letter-designated thermocouple types.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum ThermocoupleType {
    /// Pt-30%Rh / Pt-6%Rh, 0 °C to 1820 °C.
    B,
    /// Ni-Cr / Cu-Ni, -270 °C to 1000 °C.
    E,
    /// Fe / Cu-Ni, -210 °C to 1200 °C.
    J,
    /// Ni-Cr / Ni-Al, -270 °C to 1372 °C.
    K,
    /// Ni-Cr-Si / Ni-Si, -270 °C to 1300 °C.
    N,
    /// Pt-13%Rh / Pt, -50 °C to 1768.1 °C.
    R,
    /// Pt-10%Rh / Pt, -50 °C to 1768.1 °C.
    S,
    /// Cu / Cu-Ni, -270 °C to 400 °C.
    T,
}

/// The value of a published approximate inverse function, with its printed error band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PublishedInverse {
    /// t90 given by the inverse polynomial, °C.
    pub t90_c: f64,
    /// Printed error band (lower, upper) of the polynomial against the reference function, °C.
    pub error_band_c: (f64, f64),
    /// Temperature sub-range of the polynomial used, °C.
    pub sub_range_c: (f64, f64),
    /// Emf limits of that sub-range as printed in the published header, mV.
    pub printed_emf_range_mv: (f64, f64),
}

const REFERENCE_JUNCTION: &str = "reference-junction temperature";

impl ThermocoupleType {
    /// All eight types in alphabetical order.
    pub const ALL: [ThermocoupleType; 8] = [
        ThermocoupleType::B,
        ThermocoupleType::E,
        ThermocoupleType::J,
        ThermocoupleType::K,
        ThermocoupleType::N,
        ThermocoupleType::R,
        ThermocoupleType::S,
        ThermocoupleType::T,
    ];

    /// The type letter.
    ///
    /// # Reference
    /// IEC 60584-1:2013, letter designations of the thermocouple types.
    pub fn letter(self) -> char {
        match self {
            ThermocoupleType::B => 'B',
            ThermocoupleType::E => 'E',
            ThermocoupleType::J => 'J',
            ThermocoupleType::K => 'K',
            ThermocoupleType::N => 'N',
            ThermocoupleType::R => 'R',
            ThermocoupleType::S => 'S',
            ThermocoupleType::T => 'T',
        }
    }

    fn table(self) -> &'static TypeTable {
        match self {
            ThermocoupleType::B => &TYPE_B,
            ThermocoupleType::E => &TYPE_E,
            ThermocoupleType::J => &TYPE_J,
            ThermocoupleType::K => &TYPE_K,
            ThermocoupleType::N => &TYPE_N,
            ThermocoupleType::R => &TYPE_R,
            ThermocoupleType::S => &TYPE_S,
            ThermocoupleType::T => &TYPE_T,
        }
    }

    /// The thermoelements, positive / negative (e.g. "Ni-Cr / Ni-Al" for type K).
    ///
    /// # Reference
    /// NIST Monograph 175 (1993), type descriptions.
    pub fn elements(self) -> &'static str {
        self.table().elements
    }

    /// Range of t90 (°C) on which the reference function is defined, as (lower, upper).
    ///
    /// # Reference
    /// NIST Monograph 175 (1993) / IEC 60584-1:2013, range of the reference function.
    pub fn temperature_range(self) -> (f64, f64) {
        let t = self.table();
        (t.t_min, t.t_max)
    }

    /// Range of emf (mV, reference junction at 0 °C) that the reference function takes on its
    /// temperature range, as (lowest, highest). For type B the lowest value is the minimum
    /// -0.002585 mV at 21.02 °C, not E(0 °C) = 0 mV (see the module documentation).
    ///
    /// # Reference
    /// Derived from the NIST Monograph 175 / IEC 60584-1:2013 reference function.
    pub fn emf_range(self) -> (f64, f64) {
        let t = self.table();
        let lo_t = if self == ThermocoupleType::B {
            TYPE_B_EMF_MINIMUM_C
        } else {
            t.t_min
        };
        (self.eval(lo_t).0, self.eval(t.t_max).0)
    }

    /// Reference function E(t90): thermoelectric emf in mV of a thermocouple whose measuring
    /// junction is at `t90_c` (°C) and whose reference junction is at 0 °C.
    ///
    /// Evaluates the published polynomial of the sub-range holding `t90_c` by Horner's scheme
    /// (at a shared boundary the lower sub-range's function is used; the two agree to better
    /// than 1e-7 mV), plus the exponential term for type K from 0 °C to 1372 °C.
    ///
    /// # Reference
    /// NIST Monograph 175 (1993), reference functions; IEC 60584-1:2013, reference functions
    /// (same coefficients).
    pub fn emf(self, t90_c: f64) -> ThermoResult<f64> {
        let t = self.check_temperature("temperature", t90_c)?;
        Ok(self.eval(t).0)
    }

    /// Seebeck coefficient dE/dt at `t90_c` (°C), in µV/K: the analytic derivative of the
    /// reference function, including the derivative of the type K exponential term.
    ///
    /// At a shared sub-range boundary the lower sub-range's derivative is returned (type N has
    /// a slope step at 0 °C: 26.159 µV/K below, 25.929 µV/K above, as published).
    ///
    /// # Reference
    /// Derivative of the NIST Monograph 175 / IEC 60584-1:2013 reference function.
    pub fn seebeck_uv_per_k(self, t90_c: f64) -> ThermoResult<f64> {
        let t = self.check_temperature("temperature", t90_c)?;
        Ok(self.eval(t).1 * 1000.0)
    }

    /// Temperature t90 (°C) at which the reference function gives `emf_mv` (mV, reference
    /// junction at 0 °C), solved to |E(t) - E| < [`EMF_TOLERANCE_MV`].
    ///
    /// Starts from the published inverse polynomial where one covers the emf, otherwise from
    /// the middle of the uncovered part of the range; then safeguarded Newton iteration with
    /// bisection fallback. For type B, an emf from the minimum of the reference function up to
    /// 0 mV belongs to two temperatures and is refused with [`ThermoError::Ambiguous`].
    ///
    /// # Reference
    /// Inverse of the NIST Monograph 175 / IEC 60584-1:2013 reference function; starting values
    /// from the NIST Monograph 175 inverse functions.
    pub fn temperature(self, emf_mv: f64) -> ThermoResult<f64> {
        let e = require_finite("emf", emf_mv)?;
        let (lo_e, hi_e) = self.emf_range();
        if e < lo_e - EMF_TOLERANCE_MV || e > hi_e + EMF_TOLERANCE_MV {
            return Err(ThermoError::OutOfRange {
                sensor: format!("type {self}"),
                quantity: "emf",
                value: e,
                lo: lo_e,
                hi: hi_e,
                unit: "mV",
            });
        }
        // An emf within the tolerance beyond a range end is taken as that end.
        let e = e.max(lo_e).min(hi_e);
        if self == ThermocoupleType::B && e <= 0.0 {
            return Err(self.type_b_ambiguity(e));
        }
        let lower = self.invertible_from();
        let t_max = self.table().t_max;
        let (lo_t, hi_t, start) = match self.select_inverse(e) {
            Some(seg) => (seg.t_min, seg.t_max, horner(seg.d, e)),
            None => {
                // Not covered by a published inverse: bracket the emf between the end of the
                // range and the nearest published sub-range, start in the middle.
                let inv = self.table().inverse;
                let first = inv.first().map_or(t_max, |s| s.t_min);
                let last = inv.last().map_or(lower, |s| s.t_max);
                if e < self.eval(first).0 {
                    (lower, first, f64::NAN)
                } else if e > self.eval(last).0 {
                    (last, t_max, f64::NAN)
                } else {
                    (lower, t_max, f64::NAN)
                }
            }
        };
        self.solve(e, lo_t.max(lower), hi_t, start)
    }

    /// Value of the published approximate inverse polynomial t90(E) for `emf_mv` (mV,
    /// reference junction at 0 °C), with its printed error band.
    ///
    /// The sub-range is chosen by emf, using the emf of its temperature limits. Where two
    /// sub-ranges overlap (types R and S, 1064 °C to 1200 °C) the one with the narrower printed
    /// band is used. Emfs outside all published sub-ranges (types E, K, N, T below -200 °C,
    /// type B below 250 °C) are refused with [`ThermoError::OutOfRange`].
    ///
    /// # Reference
    /// NIST Monograph 175 (1993), inverse functions and their stated error ranges.
    pub fn published_inverse(self, emf_mv: f64) -> ThermoResult<PublishedInverse> {
        let e = require_finite("emf", emf_mv)?;
        match self.select_inverse(e) {
            Some(seg) => Ok(PublishedInverse {
                t90_c: horner(seg.d, e),
                error_band_c: seg.band,
                sub_range_c: (seg.t_min, seg.t_max),
                printed_emf_range_mv: (seg.e_min_printed, seg.e_max_printed),
            }),
            None => {
                let inv = self.table().inverse;
                let lo = inv.first().map_or(f64::NAN, |s| self.eval(s.t_min).0);
                let hi = inv.last().map_or(f64::NAN, |s| self.eval(s.t_max).0);
                Err(ThermoError::OutOfRange {
                    sensor: format!("the published inverse for type {self}"),
                    quantity: "emf",
                    value: e,
                    lo,
                    hi,
                    unit: "mV",
                })
            }
        }
    }

    /// Temperature t90 (°C) of the measuring junction, from the emf `emf_measured_mv` (mV)
    /// measured with the reference junction at `t_rj_c` (°C).
    ///
    /// The emf referred to 0 °C is E = E_measured + E(t_rj); the result is the inverse of the
    /// reference function at E. With `t_rj_c` = 0 (ice point) this equals
    /// [`ThermocoupleType::temperature`].
    ///
    /// # Reference
    /// NIST Monograph 175 (1993), reference functions (reference junction at 0 °C);
    /// compensation by addition of E(t_rj) follows from the law of intermediate temperatures.
    pub fn temperature_with_reference_junction(
        self,
        emf_measured_mv: f64,
        t_rj_c: f64,
    ) -> ThermoResult<f64> {
        let em = require_finite("emf", emf_measured_mv)?;
        let t_rj = self.check_temperature(REFERENCE_JUNCTION, t_rj_c)?;
        let e = em + self.eval(t_rj).0;
        self.temperature(e).map_err(|err| match err {
            ThermoError::OutOfRange {
                quantity,
                value,
                lo,
                hi,
                unit,
                ..
            } => ThermoError::OutOfRange {
                sensor: format!("type {self} (emf referred to 0 °C)"),
                quantity,
                value,
                lo,
                hi,
                unit,
            },
            other => other,
        })
    }

    /// Emf (mV) that a thermocouple shows with its measuring junction at `t90_c` (°C) and its
    /// reference junction at `t_rj_c` (°C): E(t) - E(t_rj).
    ///
    /// # Reference
    /// NIST Monograph 175 (1993), reference functions; law of intermediate temperatures.
    pub fn emf_with_reference_junction(self, t90_c: f64, t_rj_c: f64) -> ThermoResult<f64> {
        let t = self.check_temperature("temperature", t90_c)?;
        let t_rj = self.check_temperature(REFERENCE_JUNCTION, t_rj_c)?;
        Ok(self.eval(t).0 - self.eval(t_rj).0)
    }

    /// Checks that `t` is finite and inside the defined range.
    fn check_temperature(self, quantity: &'static str, t: f64) -> ThermoResult<f64> {
        let t = require_finite(quantity, t)?;
        let (lo, hi) = self.temperature_range();
        if t < lo || t > hi {
            let sensor = if quantity == REFERENCE_JUNCTION {
                format!("type {self} (reference junction)")
            } else {
                format!("type {self}")
            };
            return Err(ThermoError::OutOfRange {
                sensor,
                quantity,
                value: t,
                lo,
                hi,
                unit: "°C",
            });
        }
        Ok(t)
    }

    /// Lowest temperature of the range on which the inverse is unique, °C.
    fn invertible_from(self) -> f64 {
        if self == ThermocoupleType::B {
            TYPE_B_EMF_MINIMUM_C
        } else {
            self.table().t_min
        }
    }

    /// Reference-function sub-range used at `t` (the lower one at a shared boundary).
    fn segment(self, t: f64) -> Option<&'static ForwardSegment> {
        let f = self.table().forward;
        f.iter().find(|s| t <= s.t_max).or(f.last())
    }

    /// E(t) in mV and dE/dt in mV/°C, without range checks (callers check).
    fn eval(self, t: f64) -> (f64, f64) {
        match self.segment(t) {
            Some(seg) => self.eval_segment(seg, t),
            None => (f64::NAN, f64::NAN),
        }
    }

    /// E and dE/dt of one given sub-range function at `t`.
    fn eval_segment(self, seg: &ForwardSegment, t: f64) -> (f64, f64) {
        let (mut e, mut de) = horner_with_derivative(seg.c, t);
        if self == ThermocoupleType::K && seg.t_min >= 0.0 {
            let [a0, a1, a2] = TYPE_K_EXPONENTIAL;
            let u = t - a2;
            let g = a0 * (a1 * u * u).exp();
            e += g;
            de += g * 2.0 * a1 * u;
        }
        (e, de)
    }

    /// Published inverse sub-range covering emf `e` (narrowest printed band if several).
    fn select_inverse(self, e: f64) -> Option<&'static InverseSegment> {
        self.table()
            .inverse
            .iter()
            .filter(|s| self.eval(s.t_min).0 <= e && e <= self.eval(s.t_max).0)
            .min_by(|a, b| {
                let wa = a.band.1 - a.band.0;
                let wb = b.band.1 - b.band.0;
                wa.total_cmp(&wb)
            })
    }

    /// Solves E(t) = e on [lo, hi], where E increases.
    fn solve(self, e: f64, lo: f64, hi: f64, start: f64) -> ThermoResult<f64> {
        solve_increasing(
            |t| {
                let (v, d) = self.eval(t);
                (v - e, d)
            },
            lo,
            hi,
            start,
            EMF_TOLERANCE_MV,
            BOUNDARY_STEP_MV,
        )
        .map(|s| s.x)
        .map_err(|_| ThermoError::NoConvergence {
            what: "thermocouple inverse",
            iterations: MAX_ITERATIONS,
        })
    }

    /// The error for a type B emf between the minimum and 0 mV, naming both temperatures.
    fn type_b_ambiguity(self, e: f64) -> ThermoError {
        let vertex = TYPE_B_EMF_MINIMUM_C;
        let falling = solve_increasing(
            |t| {
                let (v, d) = self.eval(t);
                (e - v, -d)
            },
            0.0,
            vertex,
            f64::NAN,
            EMF_TOLERANCE_MV,
            0.0,
        );
        // 250 °C (not 42.13 °C) keeps a sign change for e = 0 whatever the rounding of E there.
        let rising = self.solve(e, vertex, 250.0, f64::NAN);
        match (falling, rising) {
            (Ok(a), Ok(b)) => ThermoError::Ambiguous {
                sensor: format!("type {self}"),
                value: e,
                unit: "mV",
                candidates: [a.x, b],
                unique_above: TYPE_B_UNIQUE_ABOVE_C,
            },
            _ => ThermoError::NoConvergence {
                what: "type B inverse below 42 °C",
                iterations: MAX_ITERATIONS,
            },
        }
    }
}

impl fmt::Display for ThermocoupleType {
    /// Writes the type letter, e.g. "K".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.letter())
    }
}

impl FromStr for ThermocoupleType {
    type Err = ThermoError;

    /// Parses a type letter, case-insensitive, surrounding blanks ignored; a leading word
    /// "type" is accepted ("k", "K", "Type K").
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let trimmed = s.trim();
        let letter = match trimmed.get(..4) {
            Some(head) if head.eq_ignore_ascii_case("type") => trimmed[4..].trim_start(),
            _ => trimmed,
        };
        let mut chars = letter.chars();
        let ty = match (chars.next(), chars.next()) {
            (Some(c), None) => match c.to_ascii_uppercase() {
                'B' => Some(ThermocoupleType::B),
                'E' => Some(ThermocoupleType::E),
                'J' => Some(ThermocoupleType::J),
                'K' => Some(ThermocoupleType::K),
                'N' => Some(ThermocoupleType::N),
                'R' => Some(ThermocoupleType::R),
                'S' => Some(ThermocoupleType::S),
                'T' => Some(ThermocoupleType::T),
                _ => None,
            },
            _ => None,
        };
        ty.ok_or_else(|| ThermoError::UnknownType(s.to_string()))
    }
}

#[cfg(test)]
mod tests {
    use super::super::test_json::{Json, printed_decimals};
    use super::*;
    use proptest::prelude::*;

    /// NIST SRD 60 all.tab values (copied from the project's reference data).
    const CHECKS_CSV: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/thermocouple_checks.csv"
    ));
    /// NIST Monograph 175 coefficients and values computed from them with 40-digit arithmetic.
    const TC_JSON: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/thermocouples.json"
    ));

    /// Half a unit of the 0.001 mV printed in the NIST tables.
    const TABLE_HALF_DIGIT_MV: f64 = 0.0005;
    /// Check points of thermocouples.json are printed to 13 significant digits (at most
    /// 1e-11 mV at 76 mV) and float64 Horner evaluation is within 3e-11 mV of 40-digit
    /// arithmetic (README of the reference data): 1e-10 mV covers both.
    const CHECK_POINT_TOL_MV: f64 = 1e-10;
    /// Bound on the step between adjacent sub-range functions required by the brief.
    const CONTINUITY_TOL_MV: f64 = 1e-7;
    /// Step of the central difference, °C.
    const CD_STEP_C: f64 = 1e-2;
    /// Seebeck vs central difference (h = 0.01 °C): truncation h^2/6 |E'''| is at most
    /// 1e-4/6 * 3.4e-5 mV/K^3 = 5.7e-7 µV/K (largest |E'''|: type T below 0 °C, computed
    /// from the coefficients), and float64 rounding of E, up to 3e-11 mV in the type T lower
    /// range (README of the reference data), adds up to 2 * 3e-11 / 0.02 mV/K = 3e-6 µV/K.
    /// 2e-5 µV/K covers both; a wrong or missing derivative term (e.g. the type K exponential,
    /// up to 1.1 µV/K) is far larger.
    const SEEBECK_CD_TOL_UV: f64 = 2e-5;

    fn types_json() -> Json {
        Json::parse(TC_JSON).get("types").clone()
    }

    fn ty(letter: &str) -> ThermocoupleType {
        letter.parse().unwrap()
    }

    #[test]
    fn coefficients_match_published_file_digit_for_digit() {
        let types = types_json();
        for (letter, j) in types.obj() {
            let tt = ty(letter).table();
            assert_eq!(j.get("elements").str(), tt.elements);
            assert_eq!(j.get("t_range_C").nums(), vec![tt.t_min, tt.t_max]);
            let fwd = j.get("reference_function").arr();
            assert_eq!(fwd.len(), tt.forward.len(), "type {letter}");
            for (fj, seg) in fwd.iter().zip(tt.forward) {
                assert_eq!(fj.get("t_min_C").num(), seg.t_min);
                assert_eq!(fj.get("t_max_C").num(), seg.t_max);
                assert_eq!(fj.get("c").nums(), seg.c, "type {letter}");
            }
            let inv = j.get("inverse").arr();
            assert_eq!(inv.len(), tt.inverse.len(), "type {letter}");
            for (ij, seg) in inv.iter().zip(tt.inverse) {
                assert_eq!(ij.get("t_min_C").num(), seg.t_min);
                assert_eq!(ij.get("t_max_C").num(), seg.t_max);
                assert_eq!(ij.get("E_min_mV").num(), seg.e_min_printed);
                assert_eq!(ij.get("E_max_mV").num(), seg.e_max_printed);
                assert_eq!(ij.get("d").nums(), seg.d, "type {letter}");
                assert_eq!(
                    ij.get("stated_error_C").nums(),
                    vec![seg.band.0, seg.band.1]
                );
            }
        }
        let x = types.get("K").get("exponential_term");
        assert_eq!(
            [x.get("a0").num(), x.get("a1").num(), x.get("a2").num()],
            TYPE_K_EXPONENTIAL
        );
    }

    #[test]
    fn reproduces_every_published_table_value() {
        // NIST SRD 60 all.tab (NIST Monograph 175 tables), 0.001 mV, rounded half-up.
        let mut rows = 0;
        for line in CHECKS_CSV.lines().skip(1) {
            let mut f = line.split(',');
            let (letter, t, e) = (f.next().unwrap(), f.next().unwrap(), f.next().unwrap());
            let t: f64 = t.parse().unwrap();
            let table: f64 = e.parse().unwrap();
            let got = ty(letter).emf(t).unwrap();
            assert!(
                (got - table).abs() <= TABLE_HALF_DIGIT_MV + 1e-12,
                "type {letter} at {t} °C: {got} mV, table {table} mV"
            );
            rows += 1;
        }
        assert_eq!(rows, 100);
    }

    #[test]
    fn matches_high_precision_check_points() {
        // thermocouples.json computed_E_at_check_points_mV: NIST Monograph 175 coefficients
        // evaluated with 40-digit arithmetic, printed to 13 significant digits.
        let mut n = 0;
        for (letter, j) in types_json().obj() {
            for p in j.get("computed_E_at_check_points_mV").arr() {
                let (t, e) = (p.arr()[0].num(), p.arr()[1].num());
                let got = ty(letter).emf(t).unwrap();
                assert!(
                    (got - e).abs() <= CHECK_POINT_TOL_MV,
                    "type {letter} at {t} °C: {got} vs {e}"
                );
                n += 1;
            }
        }
        assert!(n >= 100);
    }

    #[test]
    fn sub_range_boundaries_are_continuous() {
        // thermocouples.json forward_boundary_continuity_computed (40-digit values, 3
        // significant digits printed for the difference).
        for (letter, j) in types_json().obj() {
            let t = ty(letter);
            let segs = t.table().forward;
            let checks = j.get("forward_boundary_continuity_computed").arr();
            assert_eq!(checks.len(), segs.len() - 1);
            for (pair, c) in segs.windows(2).zip(checks) {
                let b = pair[0].t_max;
                assert_eq!(b, c.get("t_C").num());
                let lower = t.eval_segment(&pair[0], b);
                let upper = t.eval_segment(&pair[1], b);
                let diff = upper.0 - lower.0;
                assert!(diff.abs() < CONTINUITY_TOL_MV, "type {letter} at {b} °C");
                let published = c.get("difference_mV").num();
                assert!(
                    (diff - published).abs() <= 0.006 * published.abs() + 5e-11,
                    "type {letter} at {b} °C: {diff} vs {published}"
                );
                let slope = (upper.1 - lower.1) * 1000.0;
                let published = c.get("slope_difference_uV_per_K").num();
                assert!(
                    (slope - published).abs() <= 0.006 * published.abs() + 1e-6,
                    "type {letter} slope at {b} °C: {slope} vs {published}"
                );
            }
        }
    }

    #[test]
    fn type_n_slope_step_at_zero() {
        // NIST Monograph 175 type N: c1 = 0.261591059620E-01 below 0 °C and
        // 0.259293946010E-01 above, i.e. 26.159 and 25.929 µV/K.
        let n = ThermocoupleType::N;
        assert!((n.seebeck_uv_per_k(0.0).unwrap() - 26.159105962).abs() < 1e-9);
        assert!((n.seebeck_uv_per_k(1e-9).unwrap() - 25.929394601).abs() < 1e-5);
    }

    #[test]
    fn seebeck_matches_central_difference() {
        let mut n = 0;
        for t in ThermocoupleType::ALL {
            for seg in t.table().forward {
                let (a, b) = (seg.t_min + 2.0 * CD_STEP_C, seg.t_max - 2.0 * CD_STEP_C);
                for k in 0..=40 {
                    let x = a + (b - a) * f64::from(k) / 40.0;
                    let cd = (t.eval_segment(seg, x + CD_STEP_C).0
                        - t.eval_segment(seg, x - CD_STEP_C).0)
                        / (2.0 * CD_STEP_C)
                        * 1000.0;
                    let s = t.seebeck_uv_per_k(x).unwrap();
                    assert!(
                        (s - cd).abs() < SEEBECK_CD_TOL_UV,
                        "type {t} at {x} °C: {s} vs {cd}"
                    );
                    n += 1;
                }
            }
        }
        assert_eq!(n, 18 * 41);
        // The type K exponential term has its steepest slope near 127 °C +- 65 °C.
        let k = ThermocoupleType::K;
        for x in [62.0, 127.0, 192.0] {
            let cd = (k.emf(x + CD_STEP_C).unwrap() - k.emf(x - CD_STEP_C).unwrap())
                / (2.0 * CD_STEP_C)
                * 1000.0;
            assert!((k.seebeck_uv_per_k(x).unwrap() - cd).abs() < SEEBECK_CD_TOL_UV);
        }
    }

    #[test]
    fn reference_functions_increase_except_type_b_below_its_minimum() {
        for t in ThermocoupleType::ALL {
            let (lo, hi) = t.temperature_range();
            let steps = (hi - lo) as i32;
            for k in 0..=steps {
                let x = lo + f64::from(k);
                let s = t.seebeck_uv_per_k(x).unwrap();
                if t == ThermocoupleType::B && x < TYPE_B_EMF_MINIMUM_C {
                    assert!(s < 0.0, "type B at {x} °C");
                } else {
                    assert!(s > 0.0, "type {t} at {x} °C: {s} µV/K");
                }
            }
        }
        let b = ThermocoupleType::B;
        assert!(b.seebeck_uv_per_k(TYPE_B_EMF_MINIMUM_C).unwrap().abs() < 1e-9);
        assert!(b.emf(TYPE_B_UNIQUE_ABOVE_C).unwrap().abs() < 1e-15);
        // -0.002585 mV minimum (40-digit value -0.00258497198848841363 mV).
        assert!((b.emf_range().0 + 0.002584971988488414).abs() < 1e-15);
    }

    #[test]
    fn published_inverse_stays_within_printed_band() {
        // NIST Monograph 175 inverse functions: band printed per sub-range; the band is
        // widened by half a unit of its last printed digit (README of the reference data).
        for t in ThermocoupleType::ALL {
            for seg in t.table().inverse {
                let half = 0.5
                    * 10f64.powi(-printed_decimals(seg.band.0).max(printed_decimals(seg.band.1)));
                for k in 0..=2000 {
                    let x = seg.t_min + (seg.t_max - seg.t_min) * f64::from(k) / 2000.0;
                    let err = horner(seg.d, t.eval(x).0) - x;
                    assert!(
                        err >= seg.band.0 - half && err <= seg.band.1 + half,
                        "type {t} {}..{} °C at {x}: {err}",
                        seg.t_min,
                        seg.t_max
                    );
                }
            }
        }
    }

    #[test]
    fn inverse_lands_on_boundary_inside_a_step() {
        // Type J at 760 °C: the lower function gives 42.9186413334165 mV, the upper one
        // 42.9186414083459 mV (thermocouples.json, 40-digit values).
        let j = ThermocoupleType::J;
        let e = 42.91864137;
        let t = j.temperature(e).unwrap();
        assert_eq!(t, 760.0);
        assert!((j.emf(t).unwrap() - e).abs() < BOUNDARY_STEP_MV);
    }

    #[test]
    fn inverse_below_published_coverage() {
        // Published inverses start at -200 °C (K) and 250 °C (B); the exact inverse still
        // reproduces the temperature.
        for (t, x) in [
            (ThermocoupleType::K, -260.0),
            (ThermocoupleType::K, -270.0),
            (ThermocoupleType::T, -265.5),
            (ThermocoupleType::B, 100.0),
            (ThermocoupleType::B, 43.0),
        ] {
            let e = t.emf(x).unwrap();
            let back = t.temperature(e).unwrap();
            assert!((back - x).abs() < 1e-5, "type {t} at {x}: {back}");
            assert!((t.emf(back).unwrap() - e).abs() < EMF_TOLERANCE_MV);
        }
        let err = ThermocoupleType::K.published_inverse(-6.4).unwrap_err();
        assert_eq!(
            err.to_string(),
            "the published inverse for type K is defined from -5.891404 mV to 54.88636 mV; got -6.4 mV"
        );
    }

    #[test]
    fn published_inverse_picks_narrow_band_in_overlap() {
        // Type S: 250..1200 °C band +-0.01 °C, 1064..1664.5 °C band +-0.0002 °C (NIST).
        let s = ThermocoupleType::S;
        let p = s.published_inverse(s.emf(1100.0).unwrap()).unwrap();
        assert_eq!(p.sub_range_c, (1064.0, 1664.5));
        assert_eq!(p.error_band_c, (-0.0002, 0.0002));
        assert_eq!(p.printed_emf_range_mv, (10.332, 17.536));
        assert!((p.t90_c - 1100.0).abs() <= 0.0002);
    }

    #[test]
    fn type_b_low_emf_is_ambiguous() {
        let b = ThermocoupleType::B;
        let err = b.temperature(-0.002).unwrap_err();
        match &err {
            ThermoError::Ambiguous { candidates, .. } => {
                assert!(candidates[0] < TYPE_B_EMF_MINIMUM_C);
                assert!(candidates[1] > TYPE_B_EMF_MINIMUM_C);
                for c in candidates {
                    assert!((b.emf(*c).unwrap() + 0.002).abs() < EMF_TOLERANCE_MV);
                }
            }
            other => panic!("expected Ambiguous, got {other:?}"),
        }
        let text = err.to_string();
        assert!(
            text.starts_with("type B gives -0.002 mV at both "),
            "{text}"
        );
        assert!(
            text.ends_with("; its emf identifies a single temperature only above 42.1321 °C"),
            "{text}"
        );
        assert!(matches!(
            b.temperature(0.0),
            Err(ThermoError::Ambiguous { .. })
        ));
        let t = b.temperature(1e-6).unwrap();
        assert!(t > TYPE_B_UNIQUE_ABOVE_C && t < 43.0);
        assert_eq!(
            b.temperature(-0.003).unwrap_err().to_string(),
            "type B is defined from -0.002584972 mV to 13.82028 mV; got -0.003 mV"
        );
    }

    #[test]
    fn reference_junction_compensation() {
        // thermocouples.json check points (40-digit): type K E(100 °C) = 4.096230218723 mV,
        // E(25 °C) = 1.000242354568 mV.
        let k = ThermocoupleType::K;
        let shown = k.emf_with_reference_junction(100.0, 25.0).unwrap();
        assert!((shown - (4.096230218723 - 1.000242354568)).abs() < CHECK_POINT_TOL_MV);
        let t = k.temperature_with_reference_junction(shown, 25.0).unwrap();
        assert!((t - 100.0).abs() < 1e-6);
        // Ice point: t_rj = 0 °C is the plain inverse.
        let e = 4.096230218723;
        assert_eq!(
            k.temperature_with_reference_junction(e, 0.0).unwrap(),
            k.temperature(e).unwrap()
        );
        // NIST SRD 60 all.tab type T: 0.992 mV at 25 °C; -0.992 mV shown with the reference
        // junction at 25 °C means the measuring junction is at 0 °C.
        let t = ThermocoupleType::T
            .temperature_with_reference_junction(-0.99197726782, 25.0)
            .unwrap();
        assert!(t.abs() < 1e-6);
    }

    #[test]
    fn bad_input_gives_readable_errors() {
        let k = ThermocoupleType::K;
        assert_eq!(
            k.emf(1500.0).unwrap_err().to_string(),
            "type K is defined from -270 °C to 1372 °C; got 1500 °C"
        );
        assert!(matches!(
            k.emf(1500.0),
            Err(ThermoError::OutOfRange {
                quantity: "temperature",
                ..
            })
        ));
        assert_eq!(
            k.temperature(60.0).unwrap_err().to_string(),
            "type K is defined from -6.457738 mV to 54.88636 mV; got 60 mV"
        );
        assert_eq!(
            k.emf(f64::NAN).unwrap_err().to_string(),
            "temperature must be a finite number; got NaN"
        );
        assert_eq!(
            k.temperature(f64::INFINITY).unwrap_err(),
            ThermoError::NotFinite {
                quantity: "emf",
                value: f64::INFINITY
            }
        );
        assert_eq!(
            k.seebeck_uv_per_k(-300.0).unwrap_err().to_string(),
            "type K is defined from -270 °C to 1372 °C; got -300 °C"
        );
        assert_eq!(
            k.temperature_with_reference_junction(1.0, 2000.0)
                .unwrap_err()
                .to_string(),
            "type K (reference junction) is defined from -270 °C to 1372 °C; got 2000 °C"
        );
        assert_eq!(
            k.temperature_with_reference_junction(54.0, 100.0)
                .unwrap_err()
                .to_string(),
            "type K (emf referred to 0 °C) is defined from -6.457738 mV to 54.88636 mV; got 58.09623 mV"
        );
        assert_eq!(
            "Q".parse::<ThermocoupleType>().unwrap_err().to_string(),
            "unknown thermocouple type 'Q'; expected one of B, E, J, K, N, R, S, T"
        );
        assert_eq!(
            "KK".parse::<ThermocoupleType>(),
            Err(ThermoError::UnknownType("KK".to_string()))
        );
        assert!("".parse::<ThermocoupleType>().is_err());
        assert!("type".parse::<ThermocoupleType>().is_err());
    }

    #[test]
    fn names_parse_and_display() {
        for t in ThermocoupleType::ALL {
            assert_eq!(t.to_string().parse::<ThermocoupleType>().unwrap(), t);
            assert_eq!(
                t.to_string()
                    .to_lowercase()
                    .parse::<ThermocoupleType>()
                    .unwrap(),
                t
            );
        }
        assert_eq!(" k ".parse(), Ok(ThermocoupleType::K));
        assert_eq!("Type n".parse(), Ok(ThermocoupleType::N));
        assert_eq!(ThermocoupleType::K.to_string(), "K");
        assert_eq!(ThermocoupleType::K.elements(), "Ni-Cr / Ni-Al");
    }

    /// Emf range on which the inverse is unique (type B: above 0 mV).
    fn invertible_emf(t: ThermocoupleType) -> (f64, f64) {
        let (lo, hi) = t.emf_range();
        if t == ThermocoupleType::B {
            (0.0, hi)
        } else {
            (lo, hi)
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(1000))]

        #[test]
        fn inverse_reproduces_emf(i in 0usize..8, u in 0.0f64..=1.0) {
            let t = ThermocoupleType::ALL[i];
            let (lo, hi) = invertible_emf(t);
            let e = lo + u * (hi - lo);
            prop_assume!(!(t == ThermocoupleType::B && e <= 0.0));
            let x = t.temperature(e).unwrap();
            prop_assert!((t.emf(x).unwrap() - e).abs() < EMF_TOLERANCE_MV, "type {} emf {}", t, e);
        }

        #[test]
        fn temperature_round_trip(i in 0usize..8, u in 0.0f64..=1.0) {
            let t = ThermocoupleType::ALL[i];
            let (mut lo, hi) = t.temperature_range();
            if t == ThermocoupleType::B {
                lo = TYPE_B_UNIQUE_ABOVE_C + 1e-6;
            }
            let x = lo + u * (hi - lo);
            let back = t.temperature(t.emf(x).unwrap()).unwrap();
            let slope = t.seebeck_uv_per_k(x).unwrap() / 1000.0;
            prop_assert!((back - x).abs() <= 2.0 * EMF_TOLERANCE_MV / slope + 1e-12,
                "type {} at {} °C: {}", t, x, back);
        }

        #[test]
        fn published_inverse_within_band(i in 0usize..8, u in 0.0f64..=1.0) {
            let t = ThermocoupleType::ALL[i];
            let inv = t.table().inverse;
            let (lo, hi) = (inv[0].t_min, inv[inv.len() - 1].t_max);
            let x = lo + u * (hi - lo);
            let p = t.published_inverse(t.emf(x).unwrap()).unwrap();
            let (b0, b1) = p.error_band_c;
            let half = 0.5 * 10f64.powi(-printed_decimals(b0).max(printed_decimals(b1)));
            let err = p.t90_c - x;
            prop_assert!(err >= b0 - half && err <= b1 + half, "type {} at {} °C: {}", t, x, err);
        }

        #[test]
        fn never_panics_and_never_returns_non_finite(
            i in 0usize..8,
            a in proptest::num::f64::ANY,
            b in proptest::num::f64::ANY,
        ) {
            let t = ThermocoupleType::ALL[i];
            for v in [
                t.emf(a),
                t.seebeck_uv_per_k(a),
                t.temperature(a),
                t.published_inverse(a).map(|p| p.t90_c),
                t.temperature_with_reference_junction(a, b),
                t.emf_with_reference_junction(a, b),
            ]
            .into_iter()
            .flatten()
            {
                prop_assert!(v.is_finite());
            }
        }
    }
}
