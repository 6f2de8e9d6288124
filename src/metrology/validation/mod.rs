//! Software validation of the numerical core (ISO/IEC 17025:2017 clause 7.11.2): known-answer
//! checks that run inside the installed program and compare the core's results with published
//! values.
//!
//! [`run`] evaluates every check and returns a [`ValidationReport`]. Each [`Check`] names the
//! published source of its expected value, its tolerance and its unit. A check whose
//! computation fails is recorded as failed with the error text; nothing here panics.
//!
//! The expected values are the project's reference data in `tests/data/`, embedded in the
//! program at compile time (`include_str!`), so the installed program carries them and needs
//! no file at run time. Each data file records where its values were read; values that are
//! marked FROM MEMORY there are marked so in the [`Check::source`] text as well.
//!
//! | area | what is checked | expected values |
//! |---|---|---|
//! | thermocouples | E(t) at 100 table points; t(E) round trips | NIST Monograph 175 (SRD 60 all.tab) |
//! | ITS-90 | W_r at 12 fixed points; both inverses there | ITS-90 Table 1 |
//! | IEC 60751 | Pt100 R(t), table values after rounding, inverse | IEC 60751:2008 |
//! | tolerance classes | IEC 60584-1, ASTM E230 and IEC 60751 classes | tolerances.json, prt.json |
//! | GUM H.3 | straight-line calibration fit, 8 published results | JCGM 100:2008 H.3 |
//! | coverage factors | k_p(ν), 168 table entries | NIST TN 1297 Table B.1 |
//! | Monte Carlo | additive model, normal and rectangular inputs | JCGM 101:2008 9.2 |
//! | least squares | exact quintic; four ill-conditioned problems | construction; 100-digit reference |
//!
//! Run time is dominated by the Monte Carlo area ([`MC_TRIALS`] trials for each of two cases,
//! fixed seeds, so the report is deterministic for given crate versions).

mod json;

use std::fmt::{self, Display};

use json::Json;

use super::stats::coverage::{P_K1, P_K2, P_K3, coverage_factor};
use super::stats::gum::{BudgetOptions, Component, Distribution, evaluate_budget};
use super::stats::lsq::{PolyOptions, fit_polynomial};
use super::stats::montecarlo::{McInput, McModel, McOptions, McResult, run_fixed};
use super::thermo::its90;
use super::thermo::prt::{CvdCoefficients, ElementKind, PrtClass};
use super::thermo::thermocouple::{EMF_TOLERANCE_MV, TYPE_B_UNIQUE_ABOVE_C, ThermocoupleType};
use super::thermo::tolerance::ThermocoupleClass;

// Reference data, embedded at compile time. Each file names the sources of its values.
/// NIST SRD 60 all.tab table values (NIST Monograph 175), 100 rows.
const THERMOCOUPLE_CHECKS_CSV: &str = include_str!("../../../tests/data/thermocouple_checks.csv");
/// ITS-90 coefficients and Table 1 fixed points.
const ITS90_JSON: &str = include_str!("../../../tests/data/its90.json");
/// IEC 60751:2008 Pt100 values and tolerance classes.
const PRT_JSON: &str = include_str!("../../../tests/data/prt.json");
/// IEC 60584-1:2013 classes and ASTM E230 limits of error.
const TOLERANCES_JSON: &str = include_str!("../../../tests/data/tolerances.json");
/// JCGM 100:2008 H.3 data and published results.
const GUM_H3_JSON: &str = include_str!("../../../tests/data/gum_h3.json");
/// NIST TN 1297 Table B.1 coverage factors.
const COVERAGE_CSV: &str = include_str!("../../../tests/data/coverage_factors.csv");
/// JCGM 101:2008 9.2 additive model, exact values.
const JCGM101_JSON: &str = include_str!("../../../tests/data/jcgm101_additive.json");
/// 100-digit reference solutions of the ill-conditioned least-squares problems.
const REFERENCE_VALUES_TXT: &str = include_str!("../../../tests/data/reference_values.txt");
const FILIP_LIKE_CSV: &str = include_str!("../../../tests/data/filip_like.csv");
const CLUSTERED_CSV: &str = include_str!("../../../tests/data/clustered.csv");
const WAMPLER_LIKE_CSV: &str = include_str!("../../../tests/data/wampler_like.csv");
const OFFSET_NO_INTERCEPT_CSV: &str = include_str!("../../../tests/data/offset_no_intercept.csv");

/// Area of the thermocouple reference-function checks.
pub const AREA_THERMOCOUPLES: &str = "thermocouples";
/// Area of the ITS-90 SPRT reference-function checks.
pub const AREA_ITS90: &str = "ITS-90";
/// Area of the IEC 60751 industrial PRT checks.
pub const AREA_IEC_60751: &str = "IEC 60751";
/// Area of the tolerance-class checks.
pub const AREA_TOLERANCE_CLASSES: &str = "tolerance classes";
/// Area of the JCGM 100 H.3 calibration-line checks.
pub const AREA_GUM_H3: &str = "GUM H.3";
/// Area of the coverage-factor checks.
pub const AREA_COVERAGE_FACTORS: &str = "coverage factors";
/// Area of the Monte Carlo (JCGM 101) checks.
pub const AREA_MONTE_CARLO: &str = "Monte Carlo";
/// Area of the least-squares checks.
pub const AREA_LEAST_SQUARES: &str = "least squares";
/// All areas, in the order in which [`run`] reports them.
pub const AREAS: [&str; 8] = [
    AREA_THERMOCOUPLES,
    AREA_ITS90,
    AREA_IEC_60751,
    AREA_TOLERANCE_CLASSES,
    AREA_GUM_H3,
    AREA_COVERAGE_FACTORS,
    AREA_MONTE_CARLO,
    AREA_LEAST_SQUARES,
];

/// Monte Carlo trials for each of the two JCGM 101 9.2 cases (JCGM 101:2008 7.2 suggests
/// 10^6 for a 95 % coverage interval without the adaptive procedure; clause from memory).
pub const MC_TRIALS: usize = 1_000_000;
/// Seeds of the two Monte Carlo cases (normal inputs, rectangular inputs).
const MC_SEEDS: [u64; 2] = [20_170_711, 20_170_712];
/// Width of the Monte Carlo acceptance bands in standard deviations of the estimator. With
/// an arbitrary seed a correct engine falls outside such a band with probability about 6e-7
/// per check (normal approximation).
const MC_SIGMAS: f64 = 5.0;

/// One known-answer check: a value computed by the numerical core compared with a published
/// value.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// Area of the numerical core, one of [`AREAS`] (e.g. "thermocouples").
    pub area: &'static str,
    /// What was computed, e.g. "type K: E(100 °C)".
    pub name: String,
    /// Published source of the expected value, e.g. "NIST Monograph 175 (SRD 60 all.tab),
    /// type K"; values from memory say so.
    pub source: &'static str,
    /// Expected value (in `unit`). NaN only when the embedded reference data could not be
    /// read; the check has then failed and `note` says why.
    pub expected: f64,
    /// Value obtained from the numerical core (in `unit`); `None` if the computation failed.
    pub obtained: Option<f64>,
    /// Largest accepted |obtained − expected| (in `unit`).
    pub tolerance: f64,
    /// Unit of `expected`, `obtained` and `tolerance` ("" for a dimensionless number).
    pub unit: &'static str,
    /// Whether `obtained` exists, is finite and lies within `tolerance` of `expected` (which
    /// must both be finite).
    pub passed: bool,
    /// Why nothing was obtained (error text of the computation), if so.
    pub note: Option<String>,
}

impl Check {
    /// |obtained − expected| (in `unit`); `None` when nothing was obtained.
    pub fn deviation(&self) -> Option<f64> {
        self.obtained.map(|v| (v - self.expected).abs())
    }
}

impl Display for Check {
    /// One line: verdict, area, name, expected, obtained (or the error), tolerance, source.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let verdict = if self.passed { "pass" } else { "FAIL" };
        let unit = if self.unit.is_empty() {
            String::new()
        } else {
            format!(" {}", self.unit)
        };
        write!(
            f,
            "{verdict} [{}] {}: expected {}{unit}, ",
            self.area, self.name, self.expected
        )?;
        match (&self.obtained, &self.note) {
            (Some(v), _) => write!(f, "obtained {v}{unit}")?,
            (None, Some(n)) => write!(f, "not computed ({n})")?,
            (None, None) => write!(f, "not computed")?,
        }
        write!(f, ", tolerance {}{unit} ({})", self.tolerance, self.source)
    }
}

/// Result of [`run`]: every check, in a fixed order (grouped by area as in [`AREAS`]).
#[derive(Debug, Clone, PartialEq)]
pub struct ValidationReport {
    /// The checks in the order they were run.
    pub checks: Vec<Check>,
}

impl ValidationReport {
    /// `true` when there is at least one check and every check passed.
    pub fn passed(&self) -> bool {
        !self.checks.is_empty() && self.checks.iter().all(|c| c.passed)
    }

    /// Number of checks that failed.
    pub fn failed_count(&self) -> usize {
        self.checks.iter().filter(|c| !c.passed).count()
    }

    /// Number of checks in `area` and how many of them passed, as (total, passed).
    pub fn area_counts(&self, area: &str) -> (usize, usize) {
        self.checks
            .iter()
            .filter(|c| c.area == area)
            .fold((0, 0), |(n, p), c| (n + 1, p + usize::from(c.passed)))
    }
}

/// Runs every known-answer check of the numerical core and returns the report.
///
/// Deterministic (fixed Monte Carlo seeds). Never panics: a check whose computation fails, or
/// whose embedded reference data cannot be read, is reported as failed with the reason.
///
/// # Reference
/// ISO/IEC 17025:2017 clause 7.11.2 (validation of laboratory software); the sources of the
/// expected values are named in each check.
pub fn run() -> ValidationReport {
    let mut checks = Vec::new();
    thermocouple_checks(&mut checks);
    its90_checks(&mut checks);
    prt_checks(&mut checks);
    tolerance_class_checks(&mut checks);
    gum_h3_checks(&mut checks);
    coverage_factor_checks(&mut checks);
    monte_carlo_checks(&mut checks);
    least_squares_checks(&mut checks);
    ValidationReport { checks }
}

/// Area, source and unit shared by a group of checks; builds the checks.
#[derive(Debug, Clone, Copy)]
struct Group {
    area: &'static str,
    source: &'static str,
    unit: &'static str,
}

impl Group {
    const fn new(area: &'static str, source: &'static str, unit: &'static str) -> Self {
        Group { area, source, unit }
    }

    /// The check of `obtained` against `expected`: passed when the computation succeeded with
    /// a finite value within `tolerance` of `expected`.
    fn check<E: Display>(
        self,
        name: impl Into<String>,
        expected: f64,
        tolerance: f64,
        obtained: Result<f64, E>,
    ) -> Check {
        let (obtained, note) = match obtained {
            Ok(v) if v.is_finite() => (Some(v), None),
            Ok(v) => (None, Some(format!("the computation returned {v}"))),
            Err(e) => (None, Some(e.to_string())),
        };
        let passed = obtained.is_some_and(|v| {
            expected.is_finite()
                && tolerance.is_finite()
                && tolerance >= 0.0
                && (v - expected).abs() <= tolerance
        });
        Check {
            area: self.area,
            name: name.into(),
            source: self.source,
            expected,
            obtained,
            tolerance,
            unit: self.unit,
            passed,
            note,
        }
    }

    /// Integrity check of embedded reference data: the number of records read from `what`.
    fn records(self, what: &str, expected: usize, read: Result<usize, String>) -> Check {
        Group {
            unit: "records",
            ..self
        }
        .check(
            format!("records read from {what}"),
            expected as f64,
            0.0,
            read.map(|n| n as f64),
        )
    }
}

// ---------------------------------------------------------------------------------------------
// Thermocouples

/// Rows of thermocouple_checks.csv.
const THERMOCOUPLE_ROWS: usize = 100;
/// Half a unit of the 0.001 mV printed in the NIST tables (the reference functions
/// reproduce all 12 026 integer-degree entries of all.tab rounded half-up; refdata README).
const TABLE_HALF_DIGIT_MV: f64 = 0.0005;

macro_rules! per_type {
    ($ty:expr, $prefix:literal, $suffix:literal) => {
        match $ty {
            ThermocoupleType::B => concat!($prefix, "B", $suffix),
            ThermocoupleType::E => concat!($prefix, "E", $suffix),
            ThermocoupleType::J => concat!($prefix, "J", $suffix),
            ThermocoupleType::K => concat!($prefix, "K", $suffix),
            ThermocoupleType::N => concat!($prefix, "N", $suffix),
            ThermocoupleType::R => concat!($prefix, "R", $suffix),
            ThermocoupleType::S => concat!($prefix, "S", $suffix),
            ThermocoupleType::T => concat!($prefix, "T", $suffix),
        }
    };
}

struct ThermocoupleRow {
    ty: ThermocoupleType,
    t_c: f64,
    emf_mv: f64,
}

fn parse_thermocouple_rows(text: &str) -> Result<Vec<ThermocoupleRow>, String> {
    let mut rows = Vec::new();
    for (i, line) in text.lines().enumerate().skip(1) {
        if line.trim().is_empty() {
            continue;
        }
        let at = |e: String| format!("line {}: {e}", i + 1);
        let mut f = line.split(',');
        let (Some(ty), Some(t), Some(e)) = (f.next(), f.next(), f.next()) else {
            return Err(at("fewer than three fields".into()));
        };
        rows.push(ThermocoupleRow {
            ty: ty
                .parse()
                .map_err(|e: super::thermo::ThermoError| at(e.to_string()))?,
            t_c: number(t).map_err(at)?,
            emf_mv: number(e).map_err(at)?,
        });
    }
    Ok(rows)
}

fn thermocouple_checks(out: &mut Vec<Check>) {
    let data = Group::new(
        AREA_THERMOCOUPLES,
        "NIST Monograph 175 (SRD 60 all.tab), thermocouple_checks.csv",
        "",
    );
    let rows = parse_thermocouple_rows(THERMOCOUPLE_CHECKS_CSV);
    out.push(data.records(
        "thermocouple_checks.csv",
        THERMOCOUPLE_ROWS,
        rows.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(rows) = rows else { return };
    for r in &rows {
        let g = Group::new(
            AREA_THERMOCOUPLES,
            per_type!(r.ty, "NIST Monograph 175 (SRD 60 all.tab), type ", ""),
            "mV",
        );
        out.push(g.check(
            format!("type {}: E({} °C)", r.ty, r.t_c),
            r.emf_mv,
            TABLE_HALF_DIGIT_MV,
            r.ty.emf(r.t_c),
        ));
    }
    // Round trips E -> t -> E. Type B below 42.13 °C is excluded: its emf there belongs to two
    // temperatures and the inverse refuses it by design (thermocouple module documentation).
    for r in &rows {
        if r.ty == ThermocoupleType::B && r.t_c <= TYPE_B_UNIQUE_ABOVE_C {
            continue;
        }
        let g = Group::new(
            AREA_THERMOCOUPLES,
            per_type!(
                r.ty,
                "NIST Monograph 175 reference function, type ",
                ", at an SRD 60 all.tab point: t(E) must reproduce E within 1e-9 mV"
            ),
            "mV",
        );
        let forward = r.ty.emf(r.t_c);
        let expected = forward.as_ref().copied().unwrap_or(r.emf_mv);
        let obtained = forward
            .and_then(|e| r.ty.temperature(e))
            .and_then(|t| r.ty.emf(t));
        out.push(g.check(
            format!("type {}: E(t(E({} °C))) round trip", r.ty, r.t_c),
            expected,
            EMF_TOLERANCE_MV,
            obtained,
        ));
    }
}

// ---------------------------------------------------------------------------------------------
// ITS-90

/// Fixed points of ITS-90 Table 1 with a W_r value (e-H2 TP to Ag FP).
const ITS90_FIXED_POINTS: usize = 12;
/// Published W_r are given to 1e-8; the A-function gives 1 − 1.0e-8 at the triple point of
/// water (ΣA_i = −1.0e-8), exactly at that limit, so 1e-12 is allowed for binary64 rounding
/// (as in the ITS-90 module tests).
const WR_FIXED_POINT_TOL: f64 = 1e-8 + 1e-12;
/// Exact inverse of eq. (9a) (Newton to |ΔW_r| < 1e-13): recovers T90 within 1e-7 K.
const INVERSE_LOW_TOL_K: f64 = 1e-7;
/// Exact inverse of eq. (10a): recovers T90 within 1e-9 K.
const INVERSE_HIGH_TOL_K: f64 = 1e-9;
/// Stated equivalence of eq. (9b) with eq. (9a), ±0.1 mK (ITS-90 3.3.1, from memory).
const PUBLISHED_INVERSE_LOW_TOL_K: f64 = 0.1e-3;
/// Stated equivalence of eq. (10b) with eq. (10a), ±0.13 mK (ITS-90 3.3.2, from memory),
/// widened by half a unit of its last digit: the computed maximum is 0.134 mK.
const PUBLISHED_INVERSE_HIGH_TOL_K: f64 = 0.135e-3;

fn its90_checks(out: &mut Vec<Check>) {
    let wr_group = Group::new(
        AREA_ITS90,
        "ITS-90 (Metrologia 27 (1990) 3-10) Table 1, W_r of the fixed point",
        "",
    );
    let parsed = Json::parse(ITS90_JSON).and_then(|j| {
        j.get("fixed_points")?
            .arr()?
            .iter()
            .map(|p| {
                Ok((
                    p.get("T90_K")?.num()?,
                    p.get("Wr_published")?.num()?,
                    fixed_point_label(p.get("substance")?.str()?, p.get("state")?.str()?),
                ))
            })
            .collect::<Result<Vec<_>, String>>()
    });
    out.push(wr_group.records(
        "its90.json fixed_points",
        ITS90_FIXED_POINTS,
        parsed.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(points) = parsed else { return };
    for (t, w, label) in &points {
        out.push(wr_group.check(
            format!("W_r at the {label} ({t} K)"),
            *w,
            WR_FIXED_POINT_TOL,
            its90::wr(*t),
        ));
    }
    for (t, _, label) in &points {
        let low = *t <= its90::WATER_TRIPLE_POINT_K;
        let (source, tol) = if low {
            (
                "ITS-90 Table 1 T90; inverse of the reference function eq. (9a)",
                INVERSE_LOW_TOL_K,
            )
        } else {
            (
                "ITS-90 Table 1 T90; inverse of the reference function eq. (10a)",
                INVERSE_HIGH_TOL_K,
            )
        };
        let g = Group::new(AREA_ITS90, source, "K");
        out.push(g.check(
            format!("T90 from W_r(T90) at the {label}"),
            *t,
            tol,
            its90::wr(*t).and_then(its90::t90_from_wr),
        ));
    }
    for (t, _, label) in &points {
        let low = *t <= its90::WATER_TRIPLE_POINT_K;
        let (source, tol, obtained, eq) = if low {
            (
                "ITS-90 Table 1 T90; eq. (9b) agrees with eq. (9a) within ±0.1 mK \
                 (ITS-90 3.3.1, figure FROM MEMORY)",
                PUBLISHED_INVERSE_LOW_TOL_K,
                its90::wr_low(*t).and_then(its90::published_inverse_low),
                "9b",
            )
        } else {
            (
                "ITS-90 Table 1 T90; eq. (10b) agrees with eq. (10a) within ±0.13 mK \
                 (ITS-90 3.3.2, figure FROM MEMORY; 0.135 mK allowed, computed maximum 0.134 mK)",
                PUBLISHED_INVERSE_HIGH_TOL_K,
                its90::wr_high(*t).and_then(its90::published_inverse_high),
                "10b",
            )
        };
        let g = Group::new(AREA_ITS90, source, "K");
        out.push(g.check(
            format!("T90 from the published inverse eq. ({eq}) at the {label}"),
            *t,
            tol,
            obtained,
        ));
    }
}

/// "triple point of e-H2" etc. from ITS-90 Table 1 substance and state (T, M, F).
fn fixed_point_label(substance: &str, state: &str) -> String {
    let kind = match state {
        "T" => "triple point",
        "M" => "melting point",
        "F" => "freezing point",
        _ => "fixed point",
    };
    format!("{kind} of {substance}")
}

// ---------------------------------------------------------------------------------------------
// IEC 60751

/// Pt100 check values in prt.json.
const PRT_CHECK_VALUES: usize = 14;
/// Computed values in prt.json are exact decimals of at most 9 places; binary64 evaluation is
/// within 1e-13 Ω (tolerance of the PRT module tests).
const PRT_COMPUTED_TOL_OHM: f64 = 1e-9;
/// The inverse must recover t within 1e-9 °C (PRT module tests).
const PRT_INVERSE_TOL_C: f64 = 1e-9;
/// Temperatures of prt.json at which the inverse is checked (both branches, range ends).
const PRT_INVERSE_AT_C: [f64; 4] = [-200.0, 0.0, 100.0, 850.0];

fn prt_checks(out: &mut Vec<Check>) {
    let computed = Group::new(
        AREA_IEC_60751,
        "IEC 60751:2008 Callendar-Van Dusen relation, Pt100: exact value from the published \
         A, B, C (prt.json)",
        "Ω",
    );
    let parsed = Json::parse(PRT_JSON).and_then(|j| {
        j.get("check_values")?
            .arr()?
            .iter()
            .map(|v| {
                let published = v.get("R_ohm_published_2dp")?;
                let published = if published.is_null() {
                    None
                } else {
                    Some(published.num()?)
                };
                Ok((
                    v.get("t_C")?.num()?,
                    v.get("R_ohm_computed")?.num()?,
                    published,
                ))
            })
            .collect::<Result<Vec<_>, String>>()
    });
    out.push(computed.records(
        "prt.json check_values",
        PRT_CHECK_VALUES,
        parsed.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(values) = parsed else { return };
    let pt = CvdCoefficients::pt100();
    for (t, r, _) in &values {
        out.push(computed.check(
            format!("Pt100 R({t} °C)"),
            *r,
            PRT_COMPUTED_TOL_OHM,
            pt.resistance(*t),
        ));
    }
    for (t, _, published) in &values {
        let Some(p) = published else { continue };
        let source = if *t == 800.0 {
            "Pt100 table value to IEC 60751:2008, 375.70 Ω at 800 °C from a single weak web \
             source (prt.json)"
        } else {
            "Pt100 tables to IEC 60751:2008 published by sensor makers (prt.json: \
             sensorsci.com, sensingtemp.com, a Pt100 table)"
        };
        let g = Group::new(AREA_IEC_60751, source, "Ω");
        out.push(g.check(
            format!("Pt100 R({t} °C) rounded to 0.01 Ω"),
            *p,
            0.0,
            pt.resistance(*t).map(|r| (r * 100.0).round() / 100.0),
        ));
    }
    let inverse = Group::new(
        AREA_IEC_60751,
        "IEC 60751:2008 Pt100 (prt.json computed value): the inverse must return t",
        "°C",
    );
    for t in PRT_INVERSE_AT_C {
        let r = values
            .iter()
            .find(|(tv, _, _)| *tv == t)
            .map(|(_, r, _)| *r)
            .ok_or_else(|| format!("prt.json has no check value at {t} °C"));
        out.push(inverse.check(
            format!("Pt100 t(R({t} °C))"),
            t,
            PRT_INVERSE_TOL_C,
            r.and_then(|r| pt.temperature(r).map_err(|e| e.to_string())),
        ));
    }
}

// ---------------------------------------------------------------------------------------------
// Tolerance classes

/// Tolerances are products of short decimals (tolerance module tests).
const CLASS_TOL_C: f64 = 1e-12;

/// Thermocouple class values checked: (type, class, t90 in °C).
const THERMOCOUPLE_CLASS_POINTS: [(ThermocoupleType, ThermocoupleClass, f64); 12] = [
    (ThermocoupleType::K, ThermocoupleClass::Class1, 500.0),
    (ThermocoupleType::K, ThermocoupleClass::Class2, 1000.0),
    (ThermocoupleType::K, ThermocoupleClass::Class3, -200.0),
    (ThermocoupleType::T, ThermocoupleClass::Class2, 133.0),
    (ThermocoupleType::T, ThermocoupleClass::Class2, 200.0),
    (ThermocoupleType::E, ThermocoupleClass::Class1, 800.0),
    (ThermocoupleType::N, ThermocoupleClass::Class1, 0.0),
    (ThermocoupleType::R, ThermocoupleClass::Class1, 1500.0),
    (ThermocoupleType::S, ThermocoupleClass::Class2, 1200.0),
    (ThermocoupleType::B, ThermocoupleClass::Class3, 1000.0),
    (ThermocoupleType::K, ThermocoupleClass::AstmStandard, 1000.0),
    (ThermocoupleType::B, ThermocoupleClass::AstmSpecial, 1000.0),
];

/// IEC 60751 class values checked at this temperature (°C), wire-wound elements.
const PRT_CLASS_AT_C: f64 = 100.0;

fn tolerance_class_checks(out: &mut Vec<Check>) {
    let json = Json::parse(TOLERANCES_JSON);
    for (ty, class, t) in THERMOCOUPLE_CLASS_POINTS {
        let (source, path) = match class {
            ThermocoupleClass::Class1 | ThermocoupleClass::Class2 | ThermocoupleClass::Class3 => (
                "IEC 60584-1:2013 tolerance classes (tolerances.json: IEC 60584-2 values read in \
                 a published table; unchanged in the 2013 edition FROM MEMORY)",
                [
                    "iec_60584_1_2013",
                    "classes",
                    type_key(ty),
                    match class {
                        ThermocoupleClass::Class1 => "class1",
                        ThermocoupleClass::Class2 => "class2",
                        _ => "class3",
                    },
                ],
            ),
            ThermocoupleClass::AstmStandard | ThermocoupleClass::AstmSpecial => (
                "ASTM E230 limits of error (tolerances.json: E230/E230M-12 as reproduced in \
                 published summaries)",
                [
                    "astm_e230",
                    "limits",
                    if class == ThermocoupleClass::AstmStandard {
                        "standard"
                    } else {
                        "special"
                    },
                    type_key(ty),
                ],
            ),
        };
        let g = Group::new(AREA_TOLERANCE_CLASSES, source, "°C");
        let expected = json
            .as_ref()
            .map_err(Clone::clone)
            .and_then(|j| class_value(j.path(&path)?, t));
        let name = format!("type {ty}, {class}, at {t} °C");
        out.push(match expected {
            Ok(e) => g.check(name, e, CLASS_TOL_C, class.tolerance(ty, t)),
            Err(e) => g.check(name, f64::NAN, CLASS_TOL_C, Err::<f64, _>(e)),
        });
    }
    let prt = Json::parse(PRT_JSON).and_then(|j| {
        j.path(&["tolerance_classes_2008", "classes"])?
            .arr()?
            .iter()
            .map(|c| {
                Ok((
                    c.get("class")?.str()?.to_string(),
                    c.get("tolerance_at_100_C")?.num()?,
                ))
            })
            .collect::<Result<Vec<_>, String>>()
    });
    for class in PrtClass::ALL {
        let source = if class == PrtClass::C {
            "IEC 60751:2008 class C, ±(0.6 + 0.01|t|) °C FROM MEMORY (prt.json)"
        } else {
            "IEC 60751:2008 tolerance class formula, confirmed in a published summary (prt.json)"
        };
        let g = Group::new(AREA_TOLERANCE_CLASSES, source, "°C");
        let expected = prt.as_ref().map_err(Clone::clone).and_then(|v| {
            v.iter()
                .find(|(name, _)| *name == class.to_string())
                .map(|(_, value)| *value)
                .ok_or_else(|| format!("prt.json has no class {class}"))
        });
        let name = format!("IEC 60751 class {class}, wire-wound, at {PRT_CLASS_AT_C} °C");
        out.push(match expected {
            Ok(e) => g.check(
                name,
                e,
                CLASS_TOL_C,
                class.tolerance(ElementKind::WireWound, PRT_CLASS_AT_C),
            ),
            Err(e) => g.check(name, f64::NAN, CLASS_TOL_C, Err::<f64, _>(e)),
        });
    }
}

fn type_key(ty: ThermocoupleType) -> &'static str {
    per_type!(ty, "", "")
}

/// Tolerance (°C) at `t` from a list of published segments (tolerances.json): the greatest
/// value of the segments covering `t`.
fn class_value(segments: &Json, t: f64) -> Result<f64, String> {
    let mut best: Option<f64> = None;
    for seg in segments.arr()? {
        if t < seg.get("t_min_C")?.num()? || t > seg.get("t_max_C")?.num()? {
            continue;
        }
        let v = if let Ok(v) = seg.get("tolerance_C") {
            v.num()?
        } else if let Ok(k) = seg.get("tolerance_C_per_abs_t") {
            k.num()? * t.abs()
        } else if let Ok(f) = seg.get("tolerance_formula") {
            match f.str()? {
                "1 + 0.003*(t - 1100)" => 1.0 + 0.003 * (t - 1100.0),
                other => return Err(format!("unknown tolerance formula '{other}'")),
            }
        } else {
            let pct = seg.get("tolerance_percent_of_t_C")?.num()? / 100.0 * t.abs();
            let fixed = seg.get("tolerance_C_fixed")?;
            if fixed.is_null() {
                pct
            } else {
                fixed.num()?.max(pct)
            }
        };
        best = Some(best.map_or(v, |b: f64| b.max(v)));
    }
    best.ok_or_else(|| format!("no published segment covers {t} °C"))
}

// ---------------------------------------------------------------------------------------------
// GUM H.3

/// Pairs (t_k, b_k) of JCGM 100:2008 H.3.
const GUM_H3_PAIRS: usize = 11;

fn gum_h3_checks(out: &mut Vec<Check>) {
    let data = Group::new(
        AREA_GUM_H3,
        "JCGM 100:2008 H.3 data (gum_h3.json, read in the GTC documentation)",
        "",
    );
    let json = Json::parse(GUM_H3_JSON);
    let pairs = json.as_ref().map_err(Clone::clone).and_then(|j| {
        j.get("data")?
            .arr()?
            .iter()
            .map(|p| Ok((p.get("t_k_C")?.num()?, p.get("b_k_C")?.num()?)))
            .collect::<Result<Vec<_>, String>>()
    });
    out.push(data.records(
        "gum_h3.json data",
        GUM_H3_PAIRS,
        pairs.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let (Ok(j), Ok(pairs)) = (&json, &pairs) else {
        return;
    };
    let fit = j.get("t0_C").and_then(Json::num).and_then(|t0| {
        let x: Vec<f64> = pairs.iter().map(|(t, _)| t - t0).collect();
        let b: Vec<f64> = pairs.iter().map(|(_, b)| *b).collect();
        fit_polynomial(&x, &b, None, &PolyOptions::new(1))
            .map(|f| (f, t0))
            .map_err(|e| e.to_string())
    });
    type Extract = fn(&super::stats::lsq::PolyFit, f64) -> Option<f64>;
    let results: [(&str, &str, &'static str, &'static str, Extract); 8] = [
        ("y1_C", "intercept y1", "°C", SRC_H3, |f, _| {
            f.coefficients.first().copied()
        }),
        ("s_y1_C", "s(y1)", "°C", SRC_H3, |f, _| {
            f.standard_uncertainties.first().copied()
        }),
        ("y2", "slope y2", "", SRC_H3, |f, _| {
            f.coefficients.get(1).copied()
        }),
        ("s_y2", "s(y2)", "", SRC_H3, |f, _| {
            f.standard_uncertainties.get(1).copied()
        }),
        ("r_y1_y2", "r(y1, y2)", "", SRC_H3_R, |f, _| {
            f.correlation(0, 1)
        }),
        (
            "s_residual_C",
            "residual standard deviation s",
            "°C",
            SRC_H3_S,
            |f, _| f.residual_std_dev,
        ),
        ("b_30C_C", "correction b(30 °C)", "°C", SRC_H3, |f, t0| {
            Some(f.evaluate(30.0 - t0).0)
        }),
        ("u_b_30C_C", "u(b(30 °C))", "°C", SRC_H3, |f, t0| {
            Some(f.evaluate(30.0 - t0).1)
        }),
    ];
    for (key, name, unit, source, extract) in results {
        let g = Group::new(AREA_GUM_H3, source, unit);
        let published = j.path(&["results", key]).and_then(|r| {
            let value = r.get("published")?.num()?;
            let half_unit = 0.5 * 10f64.powi(-decimals(r.get("published_text")?.str()?)?);
            Ok((value, half_unit))
        });
        let name = format!("H.3 {name}");
        out.push(match published {
            Ok((value, half_unit)) => g.check(
                name,
                value,
                half_unit,
                fit.as_ref()
                    .map_err(Clone::clone)
                    .and_then(|(f, t0)| extract(f, *t0).ok_or_else(|| "not available".into())),
            ),
            Err(e) => g.check(name, f64::NAN, 0.0, Err::<f64, _>(e)),
        });
    }
}

const SRC_H3: &str = "JCGM 100:2008 H.3, as published in the GTC documentation (gum_h3.json); \
                      tolerance half a unit of the last published digit";
const SRC_H3_R: &str = "JCGM 100:2008 H.3: r = -0.930 FROM MEMORY (the GTC documentation prints \
                        -0.93; gum_h3.json)";
const SRC_H3_S: &str = "JCGM 100:2008 H.3.3: s = 0.0035 °C FROM MEMORY (the GTC documentation \
                        gives the residual sum of squares, implying 0.003498; gum_h3.json)";

// ---------------------------------------------------------------------------------------------
// Coverage factors

/// Rows of coverage_factors.csv (ν = 1..20, 25, 30, 35, 40, 45, 50, 100, ∞; six p).
const COVERAGE_ROWS: usize = 168;

fn coverage_factor_checks(out: &mut Vec<Check>) {
    let table = Group::new(
        AREA_COVERAGE_FACTORS,
        "NIST TN 1297 Table B.1 (identical to JCGM 100:2008 Table G.2, FROM MEMORY); \
         68.27/95.45/99.73 % taken as erf(k/√2)",
        "",
    );
    let misprint = Group::new(
        AREA_COVERAGE_FACTORS,
        "NIST TN 1297 Table B.1 prints 1.70, a rounding misprint: t = 1.689572 (scipy 1.17.1, \
         coverage_factors.csv) rounds to 1.69, the value expected here",
        "",
    );
    let rows = parse_coverage_rows(COVERAGE_CSV);
    out.push(table.records(
        "coverage_factors.csv",
        COVERAGE_ROWS,
        rows.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(rows) = rows else { return };
    for r in &rows {
        let (g, expected) = if r.nu_text == "35" && r.p_text == "90" {
            (misprint, r.scipy_rounded)
        } else {
            (table, r.published)
        };
        let nu = if r.nu.is_infinite() {
            "∞".to_string()
        } else {
            r.nu_text.clone()
        };
        out.push(g.check(
            format!("k for ν = {nu}, p = {} %", r.p_text),
            expected,
            0.5 * 10f64.powi(-r.decimals),
            coverage_factor(r.p, r.nu),
        ));
    }
}

struct CoverageRow {
    nu_text: String,
    nu: f64,
    p_text: String,
    p: f64,
    published: f64,
    decimals: i32,
    scipy_rounded: f64,
}

fn parse_coverage_rows(text: &str) -> Result<Vec<CoverageRow>, String> {
    let mut rows = Vec::new();
    for (i, line) in text.lines().enumerate().skip(1) {
        if line.trim().is_empty() {
            continue;
        }
        let at = |e: String| format!("coverage_factors.csv line {}: {e}", i + 1);
        let f: Vec<&str> = line.split(',').map(str::trim).collect();
        let (Some(nu_text), Some(p_text), Some(printed), Some(rounded)) =
            (f.first(), f.get(1), f.get(2), f.get(4))
        else {
            return Err(at("fewer than five fields".into()));
        };
        let nu = if *nu_text == "inf" {
            f64::INFINITY
        } else {
            number(nu_text).map_err(at)?
        };
        let p = match *p_text {
            "68.27" => P_K1,
            "95.45" => P_K2,
            "99.73" => P_K3,
            other => number(other).map_err(at)? / 100.0,
        };
        rows.push(CoverageRow {
            nu_text: nu_text.to_string(),
            nu,
            p_text: p_text.to_string(),
            p,
            published: number(printed).map_err(at)?,
            decimals: decimals(printed).map_err(at)?,
            scipy_rounded: number(rounded).map_err(at)?,
        });
    }
    Ok(rows)
}

// ---------------------------------------------------------------------------------------------
// Monte Carlo

/// Coverage probability of the JCGM 101 9.2 intervals.
const MC_P: f64 = 0.95;
/// Standard deviation of this engine's shortest-interval end points at 10^6 trials: the
/// r.m.s. deviation from the exact end points over 60 seeds (1000..=1059, seeds not used
/// here) was 0.019 (rectangular inputs) and 0.023 (normal inputs), rounded up. The position
/// of the shortest window is an argmin estimator converging like M^(-1/3), hence the scaling
/// with (10^6/M)^(1/3) if [`MC_TRIALS`] is changed.
const SHORTEST_END_SD_AT_1E6: f64 = 0.025;
/// GUM framework results u_c and U = k u_c are closed-form sums and a normal quantile, exact
/// to a few units of 1e-16 relative; 1e-12 leaves room for any rounding order.
const GUF_TOL: f64 = 1e-12;
/// Standard deviation of the shortest-interval width at 10^6 trials, measured the same way:
/// 0.0072 (rectangular) and 0.0079 (normal), rounded up; scaled with (10^6/M)^(1/2).
const SHORTEST_WIDTH_SD_AT_1E6: f64 = 0.009;

fn monte_carlo_checks(out: &mut Vec<Check>) {
    let json = Json::parse(JCGM101_JSON);
    let cases = [
        (
            "normal_inputs",
            "normal inputs",
            "JCGM 101:2008 9.2, four normal inputs: exact value (closed form, 40 digits; \
             jcgm101_additive.json)",
        ),
        (
            "rectangular_inputs_same_width",
            "rectangular inputs",
            "JCGM 101:2008 9.2, four rectangular inputs: exact value (closed form, 40 digits; \
             jcgm101_additive.json)",
        ),
    ];
    let records = Group::new(
        AREA_MONTE_CARLO,
        "JCGM 101:2008 9.2 (jcgm101_additive.json)",
        "",
    );
    let parsed: Result<Vec<McCase>, String> = json.and_then(|j| {
        cases
            .iter()
            .map(|(key, _, _)| McCase::from_json(j.path(&["cases", key])?))
            .collect()
    });
    out.push(records.records(
        "jcgm101_additive.json cases",
        cases.len(),
        parsed.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(parsed) = parsed else { return };
    for (((_, label, source), case), seed) in cases.iter().zip(&parsed).zip(MC_SEEDS) {
        let g = Group::new(AREA_MONTE_CARLO, source, "");
        let m = MC_TRIALS as f64;
        let u = case.u;
        let e = case.end;
        let sd_quantile =
            ((1.0 - MC_P) / 2.0 * (1.0 + MC_P) / 2.0 / m).sqrt() / case.density_at_end;
        let sd_shortest = SHORTEST_END_SD_AT_1E6 * (1e6 / m).cbrt();
        let sd_width = SHORTEST_WIDTH_SD_AT_1E6 * (1e6 / m).sqrt();
        let result = run_fixed(
            &case.inputs,
            McModel::Additive(&case.sensitivities),
            MC_TRIALS,
            &McOptions {
                coverage_probability: MC_P,
                seed,
            },
        )
        .map_err(|e| e.to_string());
        let get = |f: fn(&McResult) -> f64| result.as_ref().map(f).map_err(Clone::clone);
        let n = MC_TRIALS;
        // Standard deviations of the estimators (confirmed by the 60-seed measurement above):
        // y: u/√M. u(y): u √((κ − 1)/(4M)) with kurtosis κ ≤ 3 here (3 for normal inputs, 2.7
        // for the sum of four rectangular ones). Symmetric interval ends (sample quantiles):
        // √(p'(1 − p')/M) / f(y_p'), p' = 0.025, f the exact output density at the end.
        out.push(g.check(
            format!("{label}: estimate y ({n} trials)"),
            case.y,
            MC_SIGMAS * u / m.sqrt(),
            get(|r| r.estimate),
        ));
        out.push(g.check(
            format!("{label}: u(y) ({n} trials)"),
            u,
            MC_SIGMAS * u * (2.0 / (4.0 * m)).sqrt(),
            get(|r| r.standard_uncertainty),
        ));
        out.push(g.check(
            format!("{label}: probabilistically symmetric 95 % interval, low end"),
            -e,
            MC_SIGMAS * sd_quantile,
            get(|r| r.symmetric.low),
        ));
        out.push(g.check(
            format!("{label}: probabilistically symmetric 95 % interval, high end"),
            e,
            MC_SIGMAS * sd_quantile,
            get(|r| r.symmetric.high),
        ));
        out.push(g.check(
            format!("{label}: shortest 95 % interval, low end"),
            -e,
            MC_SIGMAS * sd_shortest,
            get(|r| r.shortest.low),
        ));
        out.push(g.check(
            format!("{label}: shortest 95 % interval, high end"),
            e,
            MC_SIGMAS * sd_shortest,
            get(|r| r.shortest.high),
        ));
        out.push(g.check(
            format!("{label}: shortest 95 % interval, width"),
            2.0 * e,
            MC_SIGMAS * sd_width,
            get(|r| r.shortest.high - r.shortest.low),
        ));
        // The GUM framework on the same model: u_c = 2 and U = k u_c with the normal k for
        // 95 %, i.e. the exact interval end of the normal case.
        let guf = Group::new(
            AREA_MONTE_CARLO,
            "JCGM 101:2008 9.2, GUM framework: u_c(y) = 2 and U = 1.959964 u_c, the exact 95 % \
             end point of the normal case (jcgm101_additive.json)",
            "",
        );
        let budget = evaluate_budget(
            &case.components,
            &[],
            &BudgetOptions {
                coverage_probability: MC_P,
                ..BudgetOptions::default()
            },
        )
        .map_err(|e| e.to_string());
        let normal_end = parsed.first().map_or(f64::NAN, |c| c.end);
        out.push(
            guf.check(
                format!("{label}: GUM framework u_c(y)"),
                u,
                GUF_TOL,
                budget
                    .as_ref()
                    .map(|b| b.combined_standard_uncertainty)
                    .map_err(Clone::clone),
            ),
        );
        out.push(
            guf.check(
                format!("{label}: GUM framework expanded uncertainty U (95 %)"),
                normal_end,
                GUF_TOL,
                budget
                    .as_ref()
                    .map(|b| b.expanded_uncertainty)
                    .map_err(Clone::clone),
            ),
        );
    }
}

/// One case of jcgm101_additive.json.
struct McCase {
    inputs: Vec<McInput>,
    components: Vec<Component>,
    sensitivities: Vec<f64>,
    y: f64,
    u: f64,
    /// Upper end of the exact shortest (= symmetric) 95 % interval; the lower end is −end.
    end: f64,
    /// Exact density of Y at `end`.
    density_at_end: f64,
}

impl McCase {
    fn from_json(case: &Json) -> Result<McCase, String> {
        let mut inputs = Vec::new();
        let mut components = Vec::new();
        let mut pdfs = Vec::new();
        for (i, x) in case.get("inputs")?.arr()?.iter().enumerate() {
            let mean = x.get("expectation")?.num()?;
            let pdf = x.get("pdf")?.str()?;
            let (input, dist, width) = match pdf {
                "normal" => {
                    let sd = x.get("std_dev")?.num()?;
                    (
                        McInput::Normal { mean, std_dev: sd },
                        Distribution::Standard { u: sd },
                        sd,
                    )
                }
                "rectangular" => {
                    let a = x.get("half_width")?.num()?;
                    (
                        McInput::Rectangular {
                            mean,
                            half_width: a,
                        },
                        Distribution::Rectangular { half_width: a },
                        a,
                    )
                }
                other => return Err(format!("unsupported input distribution '{other}'")),
            };
            inputs.push(input);
            components.push(Component::new(format!("X{}", i + 1), mean, dist));
            pdfs.push((pdf, mean, width));
        }
        let exact = case.get("exact")?;
        let interval = exact.get("shortest_95")?.arr()?;
        let end = match interval {
            [lo, hi] if (lo.num()? + hi.num()?).abs() < 1e-12 => hi.num()?,
            _ => return Err("the exact interval is not symmetric about 0".into()),
        };
        let density_at_end = sum_density(&pdfs, end)?;
        Ok(McCase {
            sensitivities: vec![1.0; inputs.len()],
            inputs,
            components,
            y: exact.get("y")?.num()?,
            u: exact.get("u_y")?.num()?,
            end,
            density_at_end,
        })
    }
}

/// Density at `y` of the sum of independent zero-mean inputs (pdf, mean, σ or half-width):
/// all normal (normal sum) or all rectangular of one half-width a (scaled Irwin-Hall:
/// Y = a(2S − n), S the sum of n standard uniforms).
fn sum_density(inputs: &[(&str, f64, f64)], y: f64) -> Result<f64, String> {
    if inputs.iter().any(|(_, mean, _)| *mean != 0.0) {
        return Err("density implemented for zero-mean inputs only".into());
    }
    if inputs.iter().all(|(pdf, _, _)| *pdf == "normal") {
        let sd = inputs.iter().map(|(_, _, s)| s * s).sum::<f64>().sqrt();
        let z = y / sd;
        return Ok((-0.5 * z * z).exp() / (sd * (2.0 * std::f64::consts::PI).sqrt()));
    }
    let a = inputs.first().map_or(0.0, |(_, _, a)| *a);
    if a > 0.0
        && inputs
            .iter()
            .all(|(pdf, _, w)| *pdf == "rectangular" && *w == a)
    {
        let n = inputs.len() as i32;
        let s = 0.5 * (y / a + f64::from(n));
        if s <= 0.0 || s >= f64::from(n) {
            return Ok(0.0);
        }
        let mut sum = 0.0;
        let mut binom = 1.0;
        let mut k = 0;
        while f64::from(k) <= s && k <= n {
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            sum += sign * binom * (s - f64::from(k)).powi(n - 1);
            binom = binom * f64::from(n - k) / f64::from(k + 1);
            k += 1;
        }
        let factorial: f64 = (1..n).map(f64::from).product();
        return Ok(sum / factorial / (2.0 * a));
    }
    Err("no closed-form density for this set of inputs".into())
}

// ---------------------------------------------------------------------------------------------
// Least squares

/// Exactly representable data: every coefficient must be 1 within 1e-9 (lsq module tests).
const EXACT_TOL: f64 = 1e-9;
/// Ill-conditioned problems: at least 9 correct significant digits (lsq module tests).
const ILL_CONDITIONED_REL_TOL: f64 = 1e-9;
/// Sections of reference_values.txt.
const REFERENCE_SECTIONS: usize = 4;

/// The ill-conditioned problems: name in reference_values.txt, data, source.
const PROBLEMS: [(&str, &str, &str); 4] = [
    (
        "filip_like",
        FILIP_LIKE_CSV,
        "exact least-squares solution of tests/data/filip_like.csv, degree 10 (mpmath at 100 \
         digits, cross-checked with exact rationals; reference_values.txt)",
    ),
    (
        "clustered",
        CLUSTERED_CSV,
        "exact least-squares solution of tests/data/clustered.csv, degree 8 (mpmath at 100 \
         digits, cross-checked with exact rationals; reference_values.txt)",
    ),
    (
        "wampler_like",
        WAMPLER_LIKE_CSV,
        "exact least-squares solution of tests/data/wampler_like.csv, degree 5 (mpmath at 100 \
         digits, cross-checked with exact rationals; reference_values.txt)",
    ),
    (
        "offset_no_intercept",
        OFFSET_NO_INTERCEPT_CSV,
        "exact least-squares solution of tests/data/offset_no_intercept.csv, degree 4 without \
         constant term (mpmath at 100 digits, cross-checked with exact rationals; \
         reference_values.txt)",
    ),
];

fn least_squares_checks(out: &mut Vec<Check>) {
    // y = 1 + x + ... + x^5 at x = 0..20: integers below 2^53, exact in binary64.
    let exact = Group::new(
        AREA_LEAST_SQUARES,
        "construction: y = 1 + x + x^2 + x^3 + x^4 + x^5 at x = 0..20 is exact in binary64, so \
         every coefficient is 1 (no external source)",
        "",
    );
    let x: Vec<f64> = (0..=20).map(f64::from).collect();
    let y: Vec<f64> = x.iter().map(|&v| (0..6).map(|k| v.powi(k)).sum()).collect();
    let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(5)).map_err(|e| e.to_string());
    for k in 0..6 {
        out.push(exact.check(
            format!("exact quintic: c{k}"),
            1.0,
            EXACT_TOL,
            coefficient(&fit, k),
        ));
    }

    let records = Group::new(
        AREA_LEAST_SQUARES,
        "reference solutions of the ill-conditioned problems (reference_values.txt)",
        "",
    );
    let refs = parse_references(REFERENCE_VALUES_TXT);
    out.push(records.records(
        "reference_values.txt sections",
        REFERENCE_SECTIONS,
        refs.as_ref().map(Vec::len).map_err(Clone::clone),
    ));
    let Ok(refs) = refs else { return };
    for (name, csv, source) in PROBLEMS {
        let Some(r) = refs.iter().find(|r| r.name == name) else {
            continue;
        };
        let g = Group::new(AREA_LEAST_SQUARES, source, "");
        let data = parse_xy(csv);
        out.push(g.records(
            &format!("{name}.csv"),
            r.n,
            data.as_ref().map(|(x, _)| x.len()).map_err(Clone::clone),
        ));
        let Ok((x, y)) = data else { continue };
        let intercept = r.rows.first().is_some_and(|(p, _, _)| *p == 0);
        let options = PolyOptions {
            intercept,
            ..PolyOptions::new(r.degree)
        };
        let fit = fit_polynomial(&x, &y, None, &options).map_err(|e| e.to_string());
        let label = format!("{name} degree {}", r.degree);
        let rel = |v: f64| ILL_CONDITIONED_REL_TOL * v.abs();
        for (power, c, _) in &r.rows {
            out.push(g.check(
                format!("{label}: c{power}"),
                *c,
                rel(*c),
                by_power(&fit, *power, |f, i| f.coefficients.get(i).copied()),
            ));
        }
        for (power, _, sd) in &r.rows {
            out.push(g.check(
                format!("{label}: u(c{power})"),
                *sd,
                rel(*sd),
                by_power(&fit, *power, |f, i| {
                    f.standard_uncertainties.get(i).copied()
                }),
            ));
        }
        out.push(g.check(
            format!("{label}: residual standard deviation s"),
            r.s,
            rel(r.s),
            fit.as_ref().map_err(Clone::clone).and_then(|f| {
                f.residual_std_dev
                    .ok_or_else(|| "no degrees of freedom".into())
            }),
        ));
    }
}

type FitResult = Result<super::stats::lsq::PolyFit, String>;

fn coefficient(fit: &FitResult, k: usize) -> Result<f64, String> {
    fit.as_ref().map_err(Clone::clone).and_then(|f| {
        f.coefficients
            .get(k)
            .copied()
            .ok_or_else(|| format!("no c{k}"))
    })
}

/// A per-coefficient value of the fit for the coefficient of x^`power`.
fn by_power(
    fit: &FitResult,
    power: u32,
    value: fn(&super::stats::lsq::PolyFit, usize) -> Option<f64>,
) -> Result<f64, String> {
    let f = fit.as_ref().map_err(Clone::clone)?;
    f.powers
        .iter()
        .position(|&p| p == power)
        .and_then(|i| value(f, i))
        .ok_or_else(|| format!("the fit has no coefficient of x^{power}"))
}

/// One section of reference_values.txt.
struct Reference {
    name: String,
    degree: usize,
    n: usize,
    /// (power, coefficient, standard uncertainty).
    rows: Vec<(u32, f64, f64)>,
    s: f64,
}

/// Parses sections "== name (degree d, n = N)", lines "cJ = v   sd = v" and "s = v   ssr = v".
fn parse_references(text: &str) -> Result<Vec<Reference>, String> {
    let mut refs: Vec<Reference> = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let at = |e: String| format!("reference_values.txt line {}: {e}", i + 1);
        let line = line.trim();
        if line.is_empty() {
            continue;
        }
        if let Some(head) = line.strip_prefix("== ") {
            let (name, rest) = head
                .split_once(" (degree ")
                .ok_or_else(|| at("malformed section header".into()))?;
            let (degree, rest) = rest
                .split_once(", n = ")
                .ok_or_else(|| at("malformed section header".into()))?;
            let n = rest.trim_end_matches(')');
            refs.push(Reference {
                name: name.to_string(),
                degree: degree.parse().map_err(|_| at("bad degree".into()))?,
                n: n.parse().map_err(|_| at("bad n".into()))?,
                rows: Vec::new(),
                s: f64::NAN,
            });
            continue;
        }
        let cur = refs
            .last_mut()
            .ok_or_else(|| at("value before the first section".into()))?;
        let f: Vec<&str> = line.split_whitespace().collect();
        match f.as_slice() {
            ["s", "=", s, "ssr", "=", _] => cur.s = number(s).map_err(at)?,
            [c, "=", v, "sd", "=", sd] => {
                let power = c
                    .strip_prefix('c')
                    .and_then(|p| p.parse().ok())
                    .ok_or_else(|| at(format!("bad coefficient name '{c}'")))?;
                cur.rows
                    .push((power, number(v).map_err(at)?, number(sd).map_err(at)?));
            }
            _ => return Err(at("unrecognised line".into())),
        }
    }
    if let Some(r) = refs.iter().find(|r| r.rows.is_empty() || !r.s.is_finite()) {
        return Err(format!(
            "reference_values.txt: section {} is incomplete",
            r.name
        ));
    }
    Ok(refs)
}

/// Two-column CSV with a header line.
fn parse_xy(text: &str) -> Result<(Vec<f64>, Vec<f64>), String> {
    let mut x = Vec::new();
    let mut y = Vec::new();
    for (i, line) in text.lines().enumerate().skip(1) {
        if line.trim().is_empty() {
            continue;
        }
        let at = |e: String| format!("line {}: {e}", i + 1);
        let (a, b) = line
            .split_once(',')
            .ok_or_else(|| at("expected two columns".into()))?;
        x.push(number(a).map_err(at)?);
        y.push(number(b).map_err(at)?);
    }
    Ok((x, y))
}

// ---------------------------------------------------------------------------------------------
// Small readers for the embedded data

/// A decimal number field.
fn number(s: &str) -> Result<f64, String> {
    let s = s.trim();
    s.parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| format!("'{s}' is not a number"))
}

/// Number of printed decimals of a plain decimal text ("-0.1712" -> 4).
fn decimals(s: &str) -> Result<i32, String> {
    let s = s.trim();
    if s.contains(['e', 'E']) {
        return Err(format!("'{s}' is not a plain decimal"));
    }
    Ok(s.split_once('.').map_or(0, |(_, d)| d.len() as i32))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Checks per area: thermocouples 1 + 100 + 98 (type B at 0 and 20 °C has no unique
    /// inverse); ITS-90 1 + 3 × 12; IEC 60751 1 + 14 + 12 + 4; tolerance classes 12 + 4;
    /// GUM H.3 1 + 8; coverage factors 1 + 168; Monte Carlo 1 + 2 × 9; least squares 6 + 1 +
    /// (1 + 11 + 11 + 1) + (1 + 9 + 9 + 1) + (1 + 6 + 6 + 1) + (1 + 4 + 4 + 1).
    const EXPECTED_PER_AREA: [(&str, usize); 8] = [
        (AREA_THERMOCOUPLES, 199),
        (AREA_ITS90, 37),
        (AREA_IEC_60751, 31),
        (AREA_TOLERANCE_CLASSES, 16),
        (AREA_GUM_H3, 9),
        (AREA_COVERAGE_FACTORS, 169),
        (AREA_MONTE_CARLO, 19),
        (AREA_LEAST_SQUARES, 75),
    ];
    const EXPECTED_TOTAL: usize = 555;

    #[test]
    fn every_check_passes_and_the_report_is_well_formed() {
        let report = run();
        let failures: Vec<String> = report
            .checks
            .iter()
            .filter(|c| !c.passed)
            .map(ToString::to_string)
            .collect();
        assert!(
            failures.is_empty(),
            "failed checks:\n{}",
            failures.join("\n")
        );
        assert!(report.passed());
        assert_eq!(report.failed_count(), 0);
        assert_eq!(report.checks.len(), EXPECTED_TOTAL);
        for (area, n) in EXPECTED_PER_AREA {
            assert_eq!(report.area_counts(area), (n, n), "{area}");
        }
        assert_eq!(
            EXPECTED_PER_AREA.iter().map(|(_, n)| n).sum::<usize>(),
            EXPECTED_TOTAL
        );
        let mut names: Vec<&str> = report.checks.iter().map(|c| c.name.as_str()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), EXPECTED_TOTAL, "check names must be unique");
        for c in &report.checks {
            assert!(AREAS.contains(&c.area), "{c}");
            assert!(!c.source.is_empty() && !c.name.is_empty(), "{c}");
            assert!(c.expected.is_finite(), "{c}");
            assert!(c.tolerance.is_finite() && c.tolerance >= 0.0, "{c}");
            assert!(c.obtained.is_some() && c.note.is_none(), "{c}");
            assert!(c.deviation().is_some_and(|d| d <= c.tolerance), "{c}");
        }
        // Areas appear in the documented order.
        let mut order: Vec<&str> = report.checks.iter().map(|c| c.area).collect();
        order.dedup();
        assert_eq!(order, AREAS);
        // The Monte Carlo checks discriminate: the GUM-framework end point 3.92 lies outside
        // the band of the rectangular case's symmetric interval (exact 3.879).
        let sym = report
            .checks
            .iter()
            .find(|c| {
                c.name == "rectangular inputs: probabilistically symmetric 95 % interval, high end"
            })
            .map(|c| (c.expected, c.tolerance));
        assert!(
            sym.is_some_and(|(e, tol)| (3.919928 - e).abs() > tol),
            "{sym:?}"
        );
    }

    #[test]
    fn the_report_can_fail() {
        // A corrupted expectation through the same helper as the real checks: the published
        // type K value at 100 °C is 4.096 mV (NIST Monograph 175); 4.106 mV must fail.
        let g = Group::new(AREA_THERMOCOUPLES, "deliberately wrong expectation", "mV");
        let k = ThermocoupleType::K;
        let good = g.check(
            "type K: E(100 °C)",
            4.096,
            TABLE_HALF_DIGIT_MV,
            k.emf(100.0),
        );
        assert!(good.passed, "{good}");
        let bad = g.check(
            "type K: E(100 °C)",
            4.106,
            TABLE_HALF_DIGIT_MV,
            k.emf(100.0),
        );
        assert!(!bad.passed, "{bad}");
        assert!(bad.obtained.is_some() && bad.note.is_none());
        assert!(
            bad.to_string()
                .starts_with("FAIL [thermocouples] type K: E(100 °C)")
        );
        // A computation error is a failure with the error text.
        let err = g.check("type K: E(1500 °C)", 60.0, 1.0, k.emf(1500.0));
        assert!(!err.passed && err.obtained.is_none());
        assert_eq!(
            err.note.as_deref(),
            Some("type K is defined from -270 °C to 1372 °C; got 1500 °C")
        );
        // Non-finite results and expectations never pass.
        assert!(!g.check("nan", 1.0, 1.0, Ok::<f64, String>(f64::NAN)).passed);
        assert!(
            !g.check("nan expected", f64::NAN, 1.0, Ok::<f64, String>(1.0))
                .passed
        );
        assert!(
            !g.check("negative tolerance", 1.0, -1.0, Ok::<f64, String>(1.0))
                .passed
        );
        let inf = g.check(
            "infinite tolerance",
            1.0,
            f64::INFINITY,
            Ok::<f64, String>(9.0),
        );
        assert!(!inf.passed);
        // A report holding one failure does not pass.
        let report = ValidationReport {
            checks: vec![good, bad],
        };
        assert!(!report.passed());
        assert_eq!(report.failed_count(), 1);
        assert_eq!(report.area_counts(AREA_THERMOCOUPLES), (2, 1));
        assert!(!ValidationReport { checks: Vec::new() }.passed());
    }

    #[test]
    fn corrupted_reference_data_fails_instead_of_panicking() {
        let g = Group::new(AREA_THERMOCOUPLES, "test", "");
        let rows = parse_thermocouple_rows("type,t_C,emf_mV\nK,100,not-a-number\n");
        let c = g.records("x.csv", 1, rows.map(|r| r.len()));
        assert!(!c.passed);
        assert_eq!(
            c.note.as_deref(),
            Some("line 2: 'not-a-number' is not a number")
        );
        assert!(parse_thermocouple_rows("h\nQ,1,2\n").is_err());
        assert!(parse_coverage_rows("h\n1,95\n").is_err());
        assert!(parse_references("c0 = 1 sd = 2\n").is_err());
        assert!(parse_references("== a (degree 1, n = 3)\n").is_err());
        assert!(parse_xy("x,y\n1;2\n").is_err());
        assert!(class_value(&Json::Arr(Vec::new()), 0.0).is_err());
    }

    #[test]
    fn every_embedded_json_file_is_read() {
        for text in [
            ITS90_JSON,
            PRT_JSON,
            TOLERANCES_JSON,
            GUM_H3_JSON,
            JCGM101_JSON,
        ] {
            assert!(Json::parse(text).is_ok());
        }
    }

    #[test]
    fn density_of_the_sum_of_inputs() {
        // Four normal inputs of σ = 1: N(0, 4) at 0 has density 1/(2√(2π)) = 0.19947.
        let normal = [("normal", 0.0, 1.0); 4];
        let f = sum_density(&normal, 0.0).unwrap();
        assert!((f - 0.199_471_140_200_716_3).abs() < 1e-15);
        // Four rectangular inputs of half-width √3 (JCGM 101 9.2): Irwin-Hall n = 4 at
        // s = 2 has density 2/3, so Y at 0 has 2/3 / (2√3) = 0.19245; at ±4√3 it is 0.
        let a = 3f64.sqrt();
        let rect = [("rectangular", 0.0, a); 4];
        let f = sum_density(&rect, 0.0).unwrap();
        assert!((f - 2.0 / 3.0 / (2.0 * a)).abs() < 1e-15);
        assert_eq!(sum_density(&rect, 4.0 * a).unwrap(), 0.0);
        // Density integrates to 1 (midpoint rule).
        let h = 1e-3;
        let total: f64 = (0..(8000.0 * a) as usize)
            .map(|i| sum_density(&rect, -4.0 * a + (i as f64 + 0.5) * h).unwrap() * h)
            .sum();
        assert!((total - 1.0).abs() < 1e-5, "{total}");
        assert!(sum_density(&[("normal", 0.0, 1.0), ("rectangular", 0.0, 1.0)], 0.0).is_err());
    }

    #[test]
    fn printed_decimals() {
        assert_eq!(decimals("-0.1712"), Ok(4));
        assert_eq!(decimals("2"), Ok(0));
        assert_eq!(decimals("235.80"), Ok(2));
        assert!(decimals("1e-3").is_err());
    }
}
