//! Industrial platinum resistance thermometers: the Callendar-Van Dusen relation of
//! IEC 60751:2008, its inverse, and the tolerance classes AA, A, B and C.
//!
//! R(t) = R0 [1 + A t + B t^2 + C (t - 100 °C) t^3] for t < 0 °C and
//! R(t) = R0 (1 + A t + B t^2) for t >= 0 °C, t = t90 in °C.

use std::fmt;
use std::str::FromStr;

use super::error::{ThermoError, ThermoResult, number_text, require_finite};
use super::numeric::{MAX_ITERATIONS, solve_increasing};

/// IEC 60751:2008 nominal A, °C^-1.
pub const IEC_A: f64 = 3.9083E-3;
/// IEC 60751:2008 nominal B, °C^-2.
pub const IEC_B: f64 = -5.775E-7;
/// IEC 60751:2008 nominal C, °C^-4 (used below 0 °C only).
pub const IEC_C: f64 = -4.183E-12;
/// Lower limit of the IEC 60751:2008 relation, °C.
pub const IEC_T_MIN_C: f64 = -200.0;
/// Upper limit of the IEC 60751:2008 relation, °C.
pub const IEC_T_MAX_C: f64 = 850.0;

/// Convergence criterion of the inverse below 0 °C, on W = R/R0 (about 3e-11 °C).
const RATIO_TOLERANCE: f64 = 1e-13;

/// Callendar-Van Dusen coefficients of one platinum resistance thermometer, with the
/// temperature range on which they apply. Construct with [`CvdCoefficients::iec_60751`],
/// [`CvdCoefficients::pt100`] (and siblings) or [`CvdCoefficients::from_certificate`]; every
/// constructed value is validated (finite, R0 > 0, A > 0, R(t) increasing on the range).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CvdCoefficients {
    r0: f64,
    a: f64,
    b: f64,
    c: f64,
    t_min: f64,
    t_max: f64,
    nominal: bool,
}

impl CvdCoefficients {
    /// The IEC 60751:2008 nominal curve for a resistance `r0_ohm` (Ω) at 0 °C (100 for Pt100,
    /// 500 for Pt500, 1000 for Pt1000), valid from -200 °C to 850 °C.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (Callendar-Van Dusen equation and
    /// its A, B, C values).
    pub fn iec_60751(r0_ohm: f64) -> ThermoResult<Self> {
        let r0 = require_finite("R0", r0_ohm)?;
        if r0 <= 0.0 {
            return Err(ThermoError::InvalidParameter {
                name: "R0",
                reason: format!("must be positive; got {} Ω", number_text(r0)),
            });
        }
        Self::nominal(r0).representable()
    }

    const fn nominal(r0: f64) -> Self {
        CvdCoefficients {
            r0,
            a: IEC_A,
            b: IEC_B,
            c: IEC_C,
            t_min: IEC_T_MIN_C,
            t_max: IEC_T_MAX_C,
            nominal: true,
        }
    }

    /// IEC 60751:2008 nominal Pt100 (R0 = 100 Ω).
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (nominal A, B, C).
    pub const fn pt100() -> Self {
        Self::nominal(100.0)
    }

    /// IEC 60751:2008 nominal Pt500 (R0 = 500 Ω).
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (nominal A, B, C).
    pub const fn pt500() -> Self {
        Self::nominal(500.0)
    }

    /// IEC 60751:2008 nominal Pt1000 (R0 = 1000 Ω).
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (nominal A, B, C).
    pub const fn pt1000() -> Self {
        Self::nominal(1000.0)
    }

    /// Coefficients from a calibration certificate: `r0_ohm` (Ω), `a` (°C^-1), `b` (°C^-2),
    /// `c` (°C^-4, applied below 0 °C only), valid from `t_min_c` to `t_max_c` (°C).
    ///
    /// Refused unless all values are finite, R0 > 0, A > 0,
    /// -200 °C <= `t_min_c` < `t_max_c` <= 850 °C, and R(t) increases over the whole range
    /// (dR/dt is checked at the range ends, at 0 °C and at the stationary points of dR/dt,
    /// which is exact for these polynomials).
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (form of the equation); the
    /// coefficients are the certificate's.
    pub fn from_certificate(
        r0_ohm: f64,
        a: f64,
        b: f64,
        c: f64,
        t_min_c: f64,
        t_max_c: f64,
    ) -> ThermoResult<Self> {
        let r0 = require_finite("R0", r0_ohm)?;
        let a = require_finite("A", a)?;
        let b = require_finite("B", b)?;
        let c = require_finite("C", c)?;
        let t_min = require_finite("lower range limit", t_min_c)?;
        let t_max = require_finite("upper range limit", t_max_c)?;
        if r0 <= 0.0 {
            return Err(ThermoError::InvalidParameter {
                name: "R0",
                reason: format!("must be positive; got {} Ω", number_text(r0)),
            });
        }
        if a <= 0.0 {
            return Err(ThermoError::InvalidParameter {
                name: "A",
                reason: format!("must be positive; got {} °C^-1", number_text(a)),
            });
        }
        if !(IEC_T_MIN_C <= t_min && t_min < t_max && t_max <= IEC_T_MAX_C) {
            return Err(ThermoError::InvalidParameter {
                name: "range",
                reason: format!(
                    "must lie within -200 °C to 850 °C with lower < upper; got {} °C to {} °C",
                    number_text(t_min),
                    number_text(t_max)
                ),
            });
        }
        let curve = CvdCoefficients {
            r0,
            a,
            b,
            c,
            t_min,
            t_max,
            nominal: false,
        };
        let (t_worst, slope) = curve.smallest_slope();
        if slope.is_nan() || slope <= 0.0 {
            return Err(ThermoError::InvalidParameter {
                name: "coefficients",
                reason: format!(
                    "R(t) must increase from {} °C to {} °C, but dR/dt is {} Ω/K at {} °C",
                    number_text(t_min),
                    number_text(t_max),
                    number_text(slope * r0),
                    number_text(t_worst)
                ),
            });
        }
        curve.representable()
    }

    /// Refuses a curve whose resistances a double cannot carry over its range: R(t) must be
    /// positive, finite and a normal number (not subnormal) from one end to the other, and
    /// dR/dt finite with its smallest value normal. Without this an R0 of 1e-320 Ω gave
    /// R(t) with a few significant bits and dR/dt = 0, and an R0 of 1e308 Ω or a huge B gave
    /// infinite resistances. Call after the slope check: R(t) then increases, so its ends
    /// bound it and dR/dt takes its extremes at the points `slope_candidates` lists.
    fn representable(self) -> ThermoResult<Self> {
        let r_lo = self.r0 * self.ratio(self.t_min).0;
        let r_hi = self.r0 * self.ratio(self.t_max).0;
        let slopes = self
            .slope_candidates()
            .into_iter()
            .map(|t| self.r0 * self.ratio(t).1);
        let (slope_lo, slope_hi) = slopes.fold((f64::INFINITY, 0.0f64), |(lo, hi), s| {
            (lo.min(s), hi.max(s))
        });
        let normal = |v: f64| v.is_finite() && v >= f64::MIN_POSITIVE;
        if !(normal(r_lo) && normal(r_hi) && normal(slope_lo) && slope_hi.is_finite()) {
            return Err(ThermoError::InvalidParameter {
                name: "coefficients",
                reason: format!(
                    "R(t) must be a positive resistance that a computer can represent from {} °C \
                     to {} °C, but R runs from {} Ω to {} Ω and dR/dt from {} Ω/K to {} Ω/K",
                    number_text(self.t_min),
                    number_text(self.t_max),
                    number_text(r_lo),
                    number_text(r_hi),
                    number_text(slope_lo),
                    number_text(slope_hi)
                ),
            });
        }
        Ok(self)
    }

    /// Resistance at 0 °C, Ω.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (symbol R0).
    pub fn r0(&self) -> f64 {
        self.r0
    }

    /// Coefficient A, °C^-1.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (symbol A).
    pub fn a(&self) -> f64 {
        self.a
    }

    /// Coefficient B, °C^-2.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (symbol B).
    pub fn b(&self) -> f64 {
        self.b
    }

    /// Coefficient C, °C^-4 (below 0 °C only).
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (symbol C).
    pub fn c(&self) -> f64 {
        self.c
    }

    /// Temperature range (°C) on which these coefficients apply, as (lower, upper).
    ///
    /// # Reference
    /// IEC 60751:2008: -200 °C to 850 °C for the nominal curve; a certificate's own range
    /// otherwise.
    pub fn range_c(&self) -> (f64, f64) {
        (self.t_min, self.t_max)
    }

    /// True for the IEC 60751:2008 nominal curve.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship (nominal A, B, C).
    pub fn is_iec_nominal(&self) -> bool {
        self.nominal
    }

    /// Resistance R(t) in Ω at t90 = `t90_c` (°C). The C term applies below 0 °C only.
    ///
    /// # Reference
    /// IEC 60751:2008, temperature/resistance relationship, equations for -200 °C <= t < 0 °C
    /// and 0 °C <= t <= 850 °C.
    pub fn resistance(&self, t90_c: f64) -> ThermoResult<f64> {
        let t = self.check_temperature(t90_c)?;
        Ok(self.r0 * self.ratio(t).0)
    }

    /// Sensitivity dR/dt in Ω/K at t90 = `t90_c` (°C) (at 0 °C both branches give R0·A).
    ///
    /// # Reference
    /// Derivative of the IEC 60751:2008 temperature/resistance relationship.
    pub fn sensitivity_ohm_per_k(&self, t90_c: f64) -> ThermoResult<f64> {
        let t = self.check_temperature(t90_c)?;
        Ok(self.r0 * self.ratio(t).1)
    }

    /// Temperature t90 (°C) at which the thermometer has resistance `resistance_ohm` (Ω).
    ///
    /// At or above 0 °C (R >= R0) the quadratic is solved in closed form with the
    /// cancellation-free root t = 2(W - 1) / (A + sqrt(A^2 + 4B(W - 1))), W = R/R0; below 0 °C
    /// a safeguarded Newton iteration on the quartic runs to |W(t) - W| < 1e-13 (about
    /// 3e-11 °C).
    ///
    /// # Reference
    /// Inverse of the IEC 60751:2008 temperature/resistance relationship.
    pub fn temperature(&self, resistance_ohm: f64) -> ThermoResult<f64> {
        let r = require_finite("resistance", resistance_ohm)?;
        if r <= 0.0 {
            return Err(ThermoError::InvalidParameter {
                name: "resistance",
                reason: format!("must be positive; got {} Ω", number_text(r)),
            });
        }
        let r_lo = self.r0 * self.ratio(self.t_min).0;
        let r_hi = self.r0 * self.ratio(self.t_max).0;
        let slack = RATIO_TOLERANCE * self.r0;
        if r < r_lo - slack || r > r_hi + slack {
            return Err(ThermoError::OutOfRange {
                sensor: self.label(),
                quantity: "resistance",
                value: r,
                lo: r_lo,
                hi: r_hi,
                unit: "Ω",
            });
        }
        // A resistance within the tolerance beyond a range end is taken as that end.
        let w = r.max(r_lo).min(r_hi) / self.r0;
        let quadratic = self.quadratic_root(w);
        if w >= 1.0 && quadratic.is_finite() {
            // Rounding may put the root a few ulps outside the range; the range holds it.
            return Ok(quadratic.max(self.t_min).min(self.t_max));
        }
        // Below 0 °C Newton iteration on the negative part of the range; should the closed
        // form find no root (overflow in B/A with a range of a few subnormal temperatures,
        // found by fuzzing), Newton iteration on the whole range, where R increases.
        let (lo, hi) = if w >= 1.0 {
            (self.t_min, self.t_max)
        } else {
            (self.t_min, self.t_max.min(0.0))
        };
        solve_increasing(
            |t| {
                let (v, d) = self.ratio(t);
                (v - w, d)
            },
            lo,
            hi,
            quadratic,
            RATIO_TOLERANCE,
            0.0,
        )
        .map(|s| s.x)
        .map_err(|_| ThermoError::NoConvergence {
            what: "platinum resistance inverse",
            iterations: MAX_ITERATIONS,
        })
    }

    /// Root of 1 + A t + B t^2 = w nearest 0 °C, in the cancellation-free form
    /// t = 2x / (A + sqrt(A^2 + 4Bx)), x = w - 1, with the square root taken of a scaled
    /// discriminant so that no intermediate overflows: with m = max(A, sqrt(4|B||x|)),
    /// sqrt(A^2 + 4Bx) = m sqrt((A/m)^2 ± (sqrt(4|B||x|)/m)^2). The plain form squared A and
    /// multiplied B by x; for A = 2e183 or B = 4e204 (found by fuzzing, on curves whose
    /// resistances are finite) that overflowed and the root came out as 0. NaN when there is
    /// no real root.
    fn quadratic_root(&self, w: f64) -> f64 {
        let x = w - 1.0;
        if x == 0.0 {
            return 0.0;
        }
        let p = 2.0 * self.b.abs().sqrt() * x.abs().sqrt();
        let m = self.a.max(p);
        let sign = if (self.b < 0.0) == (x < 0.0) {
            1.0
        } else {
            -1.0
        };
        let disc = (self.a / m).powi(2) + sign * (p / m).powi(2);
        if disc.is_nan() || disc < 0.0 {
            return f64::NAN;
        }
        2.0 * (x / (self.a + m * disc.sqrt()))
    }

    /// W(t) = R(t)/R0 and dW/dt.
    fn ratio(&self, t: f64) -> (f64, f64) {
        let (a, b, c) = (self.a, self.b, self.c);
        let mut w = 1.0 + t * (a + t * b);
        let mut dw = a + 2.0 * b * t;
        if t < 0.0 {
            let t2 = t * t;
            w += c * (t - 100.0) * t2 * t;
            dw += c * (4.0 * t - 300.0) * t2;
        }
        (w, dw)
    }

    /// Smallest dW/dt over the range and where it occurs.
    fn smallest_slope(&self) -> (f64, f64) {
        self.slope_candidates()
            .into_iter()
            .map(|t| (t, self.ratio(t).1))
            .fold((f64::NAN, f64::INFINITY), |best, cur| {
                if cur.1 < best.1 || cur.1.is_nan() {
                    cur
                } else {
                    best
                }
            })
    }

    /// The temperatures where dW/dt can take its extremes over the range: the ends, 0 °C
    /// (where the C term starts) and the stationary points of dW/dt below 0 °C.
    fn slope_candidates(&self) -> Vec<f64> {
        let mut candidates = vec![self.t_min, self.t_max];
        if self.t_min < 0.0 && self.t_max > 0.0 {
            candidates.push(0.0);
        }
        // Below 0 °C, d2W/dt2 = 2B + C(12 t^2 - 600 t) vanishes at the stationary points of
        // dW/dt; above 0 °C dW/dt is linear and the ends suffice.
        if self.c != 0.0 {
            let (qa, qb, qc) = (12.0 * self.c, -600.0 * self.c, 2.0 * self.b);
            let disc = qb * qb - 4.0 * qa * qc;
            if disc >= 0.0 {
                for root in [
                    (-qb + disc.sqrt()) / (2.0 * qa),
                    (-qb - disc.sqrt()) / (2.0 * qa),
                ] {
                    if root > self.t_min && root < self.t_max.min(0.0) {
                        candidates.push(root);
                    }
                }
            }
        }
        candidates
    }

    fn label(&self) -> String {
        if self.nominal {
            format!("the IEC 60751 curve for R0 = {} Ω", number_text(self.r0))
        } else {
            format!("the certificate curve (R0 = {} Ω)", number_text(self.r0))
        }
    }

    fn check_temperature(&self, t: f64) -> ThermoResult<f64> {
        let t = require_finite("temperature", t)?;
        if t < self.t_min || t > self.t_max {
            return Err(ThermoError::OutOfRange {
                sensor: self.label(),
                quantity: "temperature",
                value: t,
                lo: self.t_min,
                hi: self.t_max,
                unit: "°C",
            });
        }
        Ok(t)
    }
}

/// Construction of the sensing element, which sets the validity range of a tolerance class.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ElementKind {
    /// Wire-wound element.
    WireWound,
    /// Film element.
    Film,
}

/// IEC 60751:2008 tolerance classes of platinum resistance thermometers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum PrtClass {
    /// Class AA: ±(0.1 + 0.0017 |t|) °C.
    AA,
    /// Class A: ±(0.15 + 0.002 |t|) °C.
    A,
    /// Class B: ±(0.3 + 0.005 |t|) °C.
    B,
    /// Class C: ±(0.6 + 0.01 |t|) °C.
    C,
}

/// One class: tolerance ±(fixed + per_degree·|t|) °C, validity ranges in °C.
struct PrtClassData {
    fixed: f64,
    per_degree: f64,
    wire_wound: (f64, f64),
    film: (f64, f64),
}

// IEC 60751:2008 tolerance classes. The AA, A and B formulas and the wire-wound AA and A ranges
// are confirmed in published sources (see the project's reference data, prt.json). FROM MEMORY:
// the whole of class C (formula and ranges), the wire-wound B range, and all film ranges
// (IEC 60751:2008 Table 3 as remembered). IEC 60751:2022 changed classes and ranges; its values
// are deliberately not mixed in here.
const CLASS_AA: PrtClassData = PrtClassData {
    fixed: 0.1,
    per_degree: 0.0017,
    wire_wound: (-50.0, 250.0),
    film: (0.0, 150.0),
};
const CLASS_A: PrtClassData = PrtClassData {
    fixed: 0.15,
    per_degree: 0.002,
    wire_wound: (-100.0, 450.0),
    film: (-30.0, 300.0),
};
const CLASS_B: PrtClassData = PrtClassData {
    fixed: 0.3,
    per_degree: 0.005,
    wire_wound: (-196.0, 600.0),
    film: (-50.0, 500.0),
};
const CLASS_C: PrtClassData = PrtClassData {
    fixed: 0.6,
    per_degree: 0.01,
    wire_wound: (-196.0, 600.0),
    film: (-50.0, 600.0),
};

impl PrtClass {
    /// All four classes, tightest first.
    pub const ALL: [PrtClass; 4] = [PrtClass::AA, PrtClass::A, PrtClass::B, PrtClass::C];

    fn data(self) -> &'static PrtClassData {
        match self {
            PrtClass::AA => &CLASS_AA,
            PrtClass::A => &CLASS_A,
            PrtClass::B => &CLASS_B,
            PrtClass::C => &CLASS_C,
        }
    }

    /// Temperature range (°C) on which the class is defined for the element kind.
    ///
    /// # Reference
    /// IEC 60751:2008, tolerance classes and their validity ranges (Table 3 as remembered;
    /// most ranges FROM MEMORY: see the comment on the class data).
    pub fn validity_range(self, kind: ElementKind) -> (f64, f64) {
        let d = self.data();
        match kind {
            ElementKind::WireWound => d.wire_wound,
            ElementKind::Film => d.film,
        }
    }

    /// Permitted deviation ± (°C) from the nominal IEC 60751 curve at t90 = `t90_c` (°C),
    /// i.e. a + b·|t|, for an element of the given kind. Outside the class's validity range
    /// the class is not defined and [`ThermoError::ClassNotDefined`] is returned.
    ///
    /// # Reference
    /// IEC 60751:2008, tolerance classes (AA, A, B formulas confirmed; class C and most
    /// validity ranges FROM MEMORY).
    pub fn tolerance(self, kind: ElementKind, t90_c: f64) -> ThermoResult<f64> {
        let t = require_finite("temperature", t90_c)?;
        let (lo, hi) = self.validity_range(kind);
        if t < lo || t > hi {
            return Err(ThermoError::ClassNotDefined {
                class: format!("class {self}"),
                sensor: format!("{kind} elements"),
                t,
                ranges: vec![(lo, hi)],
            });
        }
        let d = self.data();
        Ok(d.fixed + d.per_degree * t.abs())
    }
}

impl fmt::Display for PrtClass {
    /// Writes the class name: "AA", "A", "B" or "C".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            PrtClass::AA => "AA",
            PrtClass::A => "A",
            PrtClass::B => "B",
            PrtClass::C => "C",
        })
    }
}

impl FromStr for PrtClass {
    type Err = ThermoError;

    /// Parses "AA", "A", "B" or "C", case-insensitive, optionally preceded by "class".
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let trimmed = s.trim();
        let name = match trimmed.get(..5) {
            Some(head) if head.eq_ignore_ascii_case("class") => trimmed[5..].trim_start(),
            _ => trimmed,
        };
        PrtClass::ALL
            .into_iter()
            .find(|c| c.to_string().eq_ignore_ascii_case(name))
            .ok_or_else(|| ThermoError::UnknownName {
                what: "PRT tolerance class",
                given: s.to_string(),
                expected: "AA, A, B, C",
            })
    }
}

impl fmt::Display for ElementKind {
    /// Writes "wire-wound" or "film".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ElementKind::WireWound => "wire-wound",
            ElementKind::Film => "film",
        })
    }
}

impl FromStr for ElementKind {
    type Err = ThermoError;

    /// Parses "wire-wound" (also "wire wound", "wirewound") or "film" (also "thin-film",
    /// "thin film"), case-insensitive.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let key: String = s
            .trim()
            .chars()
            .filter(|c| !matches!(c, ' ' | '-' | '_'))
            .collect::<String>()
            .to_ascii_lowercase();
        match key.as_str() {
            "wirewound" => Ok(ElementKind::WireWound),
            "film" | "thinfilm" => Ok(ElementKind::Film),
            _ => Err(ThermoError::UnknownName {
                what: "element kind",
                given: s.to_string(),
                expected: "wire-wound, film",
            }),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::test_json::Json;
    use super::*;
    use proptest::prelude::*;

    /// IEC 60751:2008 constants, Pt100 check values and tolerance classes (project reference
    /// data; sources named per value inside the file).
    const PRT_JSON: &str =
        include_str!(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/prt.json"));

    /// prt.json R_ohm_computed values are exact decimal results of the formula; float64 gives
    /// them to about 1e-13 Ω. 1e-9 Ω is far tighter than the 0.001 Ω asked for.
    const COMPUTED_TOL_OHM: f64 = 1e-9;
    /// Round trip t -> R -> t over -200..850 °C.
    const ROUND_TRIP_TOL_C: f64 = 1e-9;
    /// Central-difference step, °C, and tolerance on dR/dt (truncation h^2/6 |R'''| is below
    /// 1e-12 Ω/K for Pt100; rounding eps·R/h below 1e-10 Ω/K).
    const CD_STEP_C: f64 = 1e-3;
    const CD_TOL_OHM_PER_K: f64 = 1e-8;
    /// Tolerance-class values are sums of short decimals.
    const CLASS_TOL_C: f64 = 1e-12;

    fn prt_json() -> Json {
        Json::parse(PRT_JSON)
    }

    #[test]
    fn constants_match_reference_data() {
        // IEC 60751:2008 A, B, C (t-d-i.co.uk technical page, tinkererway.dev).
        let k = prt_json().get("constants").clone();
        assert_eq!(k.get("A_per_C").num(), IEC_A);
        assert_eq!(k.get("B_per_C2").num(), IEC_B);
        assert_eq!(k.get("C_per_C4").num(), IEC_C);
        let pt = CvdCoefficients::pt100();
        assert_eq!(pt.r0(), k.get("R0_ohm").num());
        assert_eq!((pt.a(), pt.b(), pt.c()), (IEC_A, IEC_B, IEC_C));
        assert_eq!(pt.range_c(), (-200.0, 850.0));
        assert!(pt.is_iec_nominal());
    }

    #[test]
    fn pt100_matches_published_values() {
        // prt.json check_values: computed R and published 0.01 Ω table values
        // (sensorsci.com, sensingtemp.com, scribd Pt100 table; 800 °C from a weak source).
        let pt = CvdCoefficients::pt100();
        let mut published = 0;
        for v in prt_json().get("check_values").arr() {
            let t = v.get("t_C").num();
            let r = pt.resistance(t).unwrap();
            let computed = v.get("R_ohm_computed").num();
            assert!((r - computed).abs() < COMPUTED_TOL_OHM, "{t} °C: {r}");
            let p = v.get("R_ohm_published_2dp");
            if !p.is_null() {
                assert_eq!((r * 100.0).round() / 100.0, p.num(), "{t} °C");
                published += 1;
            }
        }
        assert_eq!(published, 12);
    }

    #[test]
    fn pt500_and_pt1000_scale_with_r0() {
        // prt.json: Pt100 R(100 °C) = 138.5055 Ω, R(-100 °C) = 60.25584 Ω.
        assert!((CvdCoefficients::pt1000().resistance(100.0).unwrap() - 1385.055).abs() < 1e-9);
        assert!((CvdCoefficients::pt500().resistance(-100.0).unwrap() - 301.2792).abs() < 1e-9);
        let custom = CvdCoefficients::iec_60751(200.0).unwrap();
        assert!((custom.resistance(100.0).unwrap() - 277.011).abs() < 1e-9);
    }

    #[test]
    fn inverse_of_published_values() {
        // prt.json computed values at -200, 0, 100 and 850 °C.
        let pt = CvdCoefficients::pt100();
        for (r, t) in [
            (18.52008, -200.0),
            (100.0, 0.0),
            (138.5055, 100.0),
            (390.481125, 850.0),
        ] {
            assert!((pt.temperature(r).unwrap() - t).abs() < 1e-9, "{r} Ω");
        }
    }

    #[test]
    fn closed_form_keeps_digits_near_zero() {
        // Just above 0 °C the naive root (-A + sqrt(A^2 - 4B(1-W)))/(2B) cancels; the stable
        // form must give t to full relative precision.
        let pt = CvdCoefficients::pt100();
        let t = 1e-7;
        let back = pt.temperature(pt.resistance(t).unwrap()).unwrap();
        assert!((back - t).abs() < 1e-14, "{back}");
    }

    #[test]
    fn sensitivity_matches_central_difference() {
        let pt = CvdCoefficients::pt100();
        for k in 0..=104 {
            let t = -199.0 + 10.0 * f64::from(k);
            if t.abs() < 2.0 * CD_STEP_C {
                continue;
            }
            let cd = (pt.resistance(t + CD_STEP_C).unwrap()
                - pt.resistance(t - CD_STEP_C).unwrap())
                / (2.0 * CD_STEP_C);
            assert!(
                (pt.sensitivity_ohm_per_k(t).unwrap() - cd).abs() < CD_TOL_OHM_PER_K,
                "{t}"
            );
        }
        // At 0 °C both branches give R0·A = 0.39083 Ω/K (IEC 60751:2008 A).
        assert!((pt.sensitivity_ohm_per_k(0.0).unwrap() - 0.39083).abs() < 1e-15);
    }

    #[test]
    fn certificate_coefficients_are_validated() {
        let ok =
            CvdCoefficients::from_certificate(100.012, 3.9090e-3, -5.80e-7, -4.0e-12, -80.0, 420.0)
                .unwrap();
        assert!(!ok.is_iec_nominal());
        let r = ok.resistance(200.0).unwrap();
        // 100.012 (1 + 0.78180 - 0.0232) by hand: 175.87209 ... computed exactly below.
        let expected = 100.012 * (1.0 + 3.9090e-3 * 200.0 - 5.80e-7 * 40000.0);
        assert!((r - expected).abs() < 1e-12);
        assert!((ok.temperature(r).unwrap() - 200.0).abs() < 1e-10);
        assert_eq!(
            ok.resistance(500.0).unwrap_err().to_string(),
            "the certificate curve (R0 = 100.012 Ω) is defined from -80 °C to 420 °C; got 500 °C"
        );
        assert_eq!(
            CvdCoefficients::from_certificate(0.0, IEC_A, IEC_B, IEC_C, -200.0, 850.0)
                .unwrap_err()
                .to_string(),
            "invalid R0: must be positive; got 0 Ω"
        );
        assert_eq!(
            CvdCoefficients::from_certificate(100.0, f64::NAN, IEC_B, IEC_C, -200.0, 850.0)
                .unwrap_err()
                .to_string(),
            "A must be a finite number; got NaN"
        );
        assert_eq!(
            CvdCoefficients::from_certificate(100.0, IEC_A, IEC_B, IEC_C, 0.0, 900.0)
                .unwrap_err()
                .to_string(),
            "invalid range: must lie within -200 °C to 850 °C with lower < upper; got 0 °C to 900 °C"
        );
        // B so negative that R(t) turns over below 850 °C: dW/dt = A + 2 B t < 0 at 850 °C.
        let err = CvdCoefficients::from_certificate(100.0, IEC_A, -5e-6, IEC_C, -200.0, 850.0)
            .unwrap_err();
        assert!(matches!(
            err,
            ThermoError::InvalidParameter {
                name: "coefficients",
                ..
            }
        ));
        assert!(err.to_string().contains("at 850 °C"), "{err}");
        // B = 5e-5, C = -1e-9: dW/dt is positive at -200 °C and 0 °C but negative at its
        // stationary point t = (50 - sqrt(2500 + 4e5/12))/2 = -69.648 °C (by hand), which only
        // the interior check finds.
        let err =
            CvdCoefficients::from_certificate(100.0, IEC_A, 5e-5, -1e-9, -200.0, 0.0).unwrap_err();
        assert!(matches!(
            err,
            ThermoError::InvalidParameter {
                name: "coefficients",
                ..
            }
        ));
        assert!(err.to_string().contains(" at -69.64"), "{err}");
        assert!(CvdCoefficients::iec_60751(-100.0).is_err());
        assert!(CvdCoefficients::iec_60751(f64::INFINITY).is_err());
    }

    /// Found by fuzzing (fuzz target `thermo`): on a certificate curve whose range ends
    /// below 0 °C, the resistance at the upper end did not invert ("did not converge"):
    /// W = R/R0 rounded one ulp above W(t_max), the solver saw no sign change in its bracket
    /// and gave up although the end itself met the tolerance.
    #[test]
    fn resistance_at_the_end_of_a_range_below_zero_inverts() {
        let mut failures = Vec::new();
        for k in 0..2000 {
            let t_max = -199.9 + 0.0997 * f64::from(k);
            for r0 in [25.0, 24.99999999999999, 100.0, 1000.0] {
                let c = CvdCoefficients::from_certificate(r0, IEC_A, IEC_B, IEC_C, -200.0, t_max)
                    .unwrap();
                match c.temperature(c.resistance(t_max).unwrap()) {
                    Ok(t) if (t - t_max).abs() < 1e-9 => {}
                    other => failures.push((r0, t_max, other)),
                }
            }
        }
        assert!(
            failures.is_empty(),
            "{} failures, first {:?}",
            failures.len(),
            failures[0]
        );
    }

    /// Found by fuzzing (fuzz target `thermo`): B = C = 4.14e204 on 0 °C to 110.8 °C; the
    /// product 4Bx in the discriminant overflowed and every resistance inverted to 0 °C.
    #[test]
    fn closed_form_inverse_survives_a_huge_b() {
        let c = CvdCoefficients::from_certificate(
            1612.193416645371,
            0.0038828,
            4.1410356681522016e204,
            4.1410356681522016e204,
            -2.25813638367e-312,
            110.79999999999995,
        )
        .unwrap();
        for t in [1e-3, 55.400000007503536, 110.0] {
            let r = c.resistance(t).unwrap();
            let back = c.temperature(r).unwrap();
            assert!((back - t).abs() <= 1e-12 * t, "{t} -> {r} -> {back}");
        }
    }

    /// Found by fuzzing (fuzz target `thermo`): with A = 2.12e183 (a curve the constructor
    /// accepts: R stays finite on 0 °C to 327 °C) the closed-form inverse squared A,
    /// overflowed and returned the lower range end for every resistance.
    #[test]
    fn closed_form_inverse_survives_a_huge_a() {
        let c = CvdCoefficients::from_certificate(
            999.9999999999997,
            2.1245519752398347e183,
            -7.029252929686108e-7,
            -5.349944828189919e-12,
            0.0,
            327.09179687597396,
        )
        .unwrap();
        for t in [1e-3, 63.45580859393893, 300.0] {
            let r = c.resistance(t).unwrap();
            let back = c.temperature(r).unwrap();
            assert!((back - t).abs() <= 1e-12 * t, "{t} -> {r} -> {back}");
        }
        // B/A overflows (B = -6.9e307) on a range of subnormal temperatures, where W is 1
        // at both ends: the resistance R0 inverts to the range.
        let c = CvdCoefficients::from_certificate(
            1231.4782031899053,
            0.0039236,
            -6.937964130654512e307,
            1.5e-323,
            -2e-323,
            -1.5e-323,
        )
        .unwrap();
        let back = c.temperature(1231.4782031899053).unwrap();
        assert!((-2e-323..=-1.5e-323).contains(&back), "{back}");
        // The nominal curve still inverts as before: R(100 °C) = 138.5055 Ω (prt.json,
        // the project's reference data; exact: 100 (1 + 0.39083 - 0.005775)).
        let pt = CvdCoefficients::pt100();
        assert!((pt.temperature(138.5055).unwrap() - 100.0).abs() < 1e-4);
    }

    /// Found by fuzzing (fuzz target `thermo`): R0 = 6.23e-322 Ω was accepted and gave
    /// dR/dt = 0 at 646.3 °C; R0 = 1e308 Ω gave R(850 °C) = inf; B = -1e305 with the range
    /// -200 °C to -100 °C passed the slope check and gave R(-200 °C) = -inf.
    #[test]
    fn curves_a_double_cannot_carry_are_refused() {
        for r0 in [6.23e-322, 1e-310, 1e308] {
            let err = CvdCoefficients::iec_60751(r0).unwrap_err();
            assert!(
                err.to_string().contains("a computer can represent"),
                "{r0}: {err}"
            );
        }
        let err = CvdCoefficients::from_certificate(100.0, IEC_A, -1e305, IEC_C, -200.0, -100.0)
            .unwrap_err();
        assert!(matches!(
            err,
            ThermoError::InvalidParameter {
                name: "coefficients",
                ..
            }
        ));
        // A so large that R(-200 °C) = R0 (1 - 200 A + ...) is negative while R increases.
        assert!(CvdCoefficients::from_certificate(100.0, 1.0, 0.0, 0.0, -200.0, 0.0).is_err());
        // The ordinary extremes still pass: a 0.25 Ω high-temperature thermometer and a
        // 10 kΩ one (common practice: such R0 exist).
        for r0 in [0.25, 1e4] {
            let c = CvdCoefficients::iec_60751(r0).unwrap();
            assert!(c.sensitivity_ohm_per_k(850.0).unwrap() > 0.0);
        }
    }

    #[test]
    fn bad_resistance_and_temperature_give_readable_errors() {
        let pt = CvdCoefficients::pt100();
        assert_eq!(
            pt.temperature(-5.0).unwrap_err().to_string(),
            "invalid resistance: must be positive; got -5 Ω"
        );
        assert_eq!(
            pt.temperature(400.0).unwrap_err().to_string(),
            "the IEC 60751 curve for R0 = 100 Ω is defined from 18.52008 Ω to 390.4811 Ω; got 400 Ω"
        );
        assert_eq!(
            pt.resistance(900.0).unwrap_err().to_string(),
            "the IEC 60751 curve for R0 = 100 Ω is defined from -200 °C to 850 °C; got 900 °C"
        );
        assert_eq!(
            pt.temperature(f64::NAN).unwrap_err().to_string(),
            "resistance must be a finite number; got NaN"
        );
    }

    #[test]
    fn tolerance_classes_match_reference_data() {
        // prt.json tolerance_classes_2008: formulas, values at 0 °C and 100 °C, wire-wound
        // range ends, and both validity ranges (class C and most ranges FROM MEMORY).
        for c in prt_json()
            .get("tolerance_classes_2008")
            .get("classes")
            .arr()
        {
            let class: PrtClass = c.get("class").str().parse().unwrap();
            let ww = c.get("wire_wound_range_C").nums();
            let film = c.get("film_range_C").nums();
            assert_eq!(class.validity_range(ElementKind::WireWound), (ww[0], ww[1]));
            assert_eq!(class.validity_range(ElementKind::Film), (film[0], film[1]));
            let at = |t: f64| class.tolerance(ElementKind::WireWound, t).unwrap();
            assert!((at(0.0) - c.get("tolerance_at_0_C").num()).abs() < CLASS_TOL_C);
            assert!((at(100.0) - c.get("tolerance_at_100_C").num()).abs() < CLASS_TOL_C);
            let ends = c.get("tolerance_at_range_ends_wire_wound_C").nums();
            assert!((at(ww[0]) - ends[0]).abs() < CLASS_TOL_C);
            assert!((at(ww[1]) - ends[1]).abs() < CLASS_TOL_C);
            let expected = c.get("a_C").num() + c.get("b").num() * 25.0;
            assert!((at(-25.0) - expected).abs() < CLASS_TOL_C);
            assert!(class.tolerance(ElementKind::Film, film[1] + 0.5).is_err());
            assert!(
                class
                    .tolerance(ElementKind::WireWound, ww[0] - 0.5)
                    .is_err()
            );
        }
    }

    #[test]
    fn class_outside_range_is_not_defined() {
        let err = PrtClass::AA
            .tolerance(ElementKind::WireWound, 300.0)
            .unwrap_err();
        assert_eq!(
            err.to_string(),
            "class AA is not defined for wire-wound elements at 300 °C; it covers -50 °C to 250 °C"
        );
        let err = PrtClass::A.tolerance(ElementKind::Film, -40.0).unwrap_err();
        assert_eq!(
            err.to_string(),
            "class A is not defined for film elements at -40 °C; it covers -30 °C to 300 °C"
        );
        assert!(matches!(
            PrtClass::B.tolerance(ElementKind::Film, f64::NAN),
            Err(ThermoError::NotFinite { .. })
        ));
    }

    #[test]
    fn class_and_kind_names_parse() {
        assert_eq!("aa".parse(), Ok(PrtClass::AA));
        assert_eq!("Class B".parse(), Ok(PrtClass::B));
        assert_eq!("thin film".parse(), Ok(ElementKind::Film));
        assert_eq!("Wire-wound".parse(), Ok(ElementKind::WireWound));
        assert_eq!(
            "D".parse::<PrtClass>().unwrap_err().to_string(),
            "unknown PRT tolerance class 'D'; expected one of AA, A, B, C"
        );
        assert_eq!(
            "foil".parse::<ElementKind>().unwrap_err().to_string(),
            "unknown element kind 'foil'; expected one of wire-wound, film"
        );
        for c in PrtClass::ALL {
            assert_eq!(c.to_string().parse(), Ok(c));
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(1000))]

        #[test]
        fn inverse_round_trip(t in -200.0f64..=850.0, big in any::<bool>()) {
            let pt = if big { CvdCoefficients::pt1000() } else { CvdCoefficients::pt100() };
            let back = pt.temperature(pt.resistance(t).unwrap()).unwrap();
            prop_assert!((back - t).abs() < ROUND_TRIP_TOL_C, "{} -> {}", t, back);
        }

        #[test]
        fn resistance_round_trip(u in 0.0f64..=1.0) {
            let pt = CvdCoefficients::pt100();
            let r = 18.52008 + u * (390.481125 - 18.52008);
            let r = r.clamp(pt.resistance(-200.0).unwrap(), pt.resistance(850.0).unwrap());
            let back = pt.resistance(pt.temperature(r).unwrap()).unwrap();
            prop_assert!((back - r).abs() < 1e-10, "{} -> {}", r, back);
        }

        #[test]
        fn never_panics(
            vals in proptest::collection::vec(proptest::num::f64::ANY, 6),
        ) {
            let pt = CvdCoefficients::pt100();
            for v in [pt.resistance(vals[0]), pt.sensitivity_ohm_per_k(vals[0]), pt.temperature(vals[1])]
                .into_iter()
                .flatten()
            {
                prop_assert!(v.is_finite());
            }
            if let Ok(c) = CvdCoefficients::from_certificate(vals[0], vals[1], vals[2], vals[3], vals[4], vals[5]) {
                for t in [c.range_c().0, c.range_c().1, 0.5 * (c.range_c().0 + c.range_c().1)] {
                    let r = c.resistance(t).unwrap();
                    if let Ok(back) = c.temperature(r) {
                        prop_assert!(back.is_finite());
                    }
                }
            }
            for class in PrtClass::ALL {
                if let Ok(v) = class.tolerance(ElementKind::Film, vals[2]) {
                    prop_assert!(v.is_finite());
                }
            }
        }
    }
}
