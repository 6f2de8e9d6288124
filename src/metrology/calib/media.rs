//! Characterisation of comparison media (stirred liquid baths, tube furnaces, dry-block
//! calibrators including Peltier-driven blocks used below about 150 °C): uniformity,
//! stability and loading half-widths at each characterised temperature, their interpolation
//! between characterised temperatures, and the due date of the next characterisation.
//!
//! # Approach
//! The approach follows EURAMET Calibration Guide No. 13, "Guidelines on the Calibration of
//! Temperature Block Calibrators", version 4.0 (2017) (EURAMET cg-13). The guide was not at
//! hand while this module was written; the points below marked "from memory" describe its
//! content as remembered, without clause numbers:
//! * from memory: the measurement zone is the bottom part of the bore (about 40 mm long); the
//!   axial homogeneity is found by reading a thermometer with a short sensing element at the
//!   bottom of the bore and at positions about 20 mm and 40 mm above it, and the largest
//!   difference from the bottom reading is the effect;
//! * from memory: the radial homogeneity is the temperature difference between bores (read with
//!   two thermometers, or one thermometer moved between bores);
//! * from memory: the loading effect is the change of the temperature at the reference position
//!   when the other bores are filled with thermometers;
//! * from memory: the stability is evaluated from readings over 30 min at a settled set point;
//! * from memory: each effect enters the uncertainty budget of a calibration in the medium as a
//!   rectangular distribution.
//!
//! The same evaluation is used for baths and furnaces (positions in the bath or along the tube
//! instead of bores); the heating technology does not change it.
//!
//! # Conventions (own choices, common practice unless said otherwise)
//! * **Axial**: a_ax = max |t(h) − t(h₀)|, h₀ the lowest position given (normally 0 mm, the
//!   bottom of the measurement zone, where the reference sits): the sensing element of the
//!   unit under test may be anywhere in the zone while the reference reads at the bottom.
//! * **Radial** from readings of the bores: a_rad = max − min (reference and unit under test
//!   may sit in any two bores); from differences to a reference bore: a_rad = max |Δ_i| (the
//!   reference always sits in the reference bore).
//! * **Uniformity**: a_u = √(a_ax² + a_rad²); with rectangular distributions u_u = a_u/√3
//!   equals √(u_ax² + u_rad²), the same as listing axial and radial as two rectangular rows.
//!   With only one of them measured, a_u is that one.
//! * **Stability**: a_s = (max − min)/2 of the readings over the record (half the spread: the
//!   temperature at any instant lies within ±a_s of the middle of the band). The experimental
//!   standard deviation of the readings is given for information. A record shorter than
//!   [`STABILITY_RECORD_S`] gives a warning.
//! * **Loading**: a_l = |t_loaded − t_unloaded|.
//! * Every standard uncertainty is a/√3 (JCGM 100:2008 4.3.7); the medium's combined standard
//!   uncertainty is √(u_u² + u_s² + u_l²).
//! * **Between characterised temperatures** the half-widths are interpolated linearly (exact at
//!   a characterised temperature); outside the characterised range they are refused, never
//!   extrapolated.
//! * **Due date**: characterisation date plus the interval in calendar months, the day clamped
//!   to the last day of a shorter month (31 Jan + 1 month = 28 or 29 Feb); the characterisation
//!   is overdue from the day after the due date.
//!
//! Errors at one characterised temperature are located like a set point of a run: its number in
//! the input (counted from 1) and its temperature, then the field, e.g. "set point 2 (60 °C),
//! axial uniformity: at least 2 depths are needed; got 1".
//!
//! # Reference
//! EURAMET cg-13 v4.0 (2017) (content from memory, see above); JCGM 100:2008 4.3.7
//! (rectangular distribution), 5.1.2 (combination); Gregorian calendar leap-year rule
//! (ISO 8601-1:2019 calendar dates).

use std::fmt;

use super::budget::{BudgetItem, ItemKind, Spread};
use super::error::{CalibError, Location, finite, non_negative};
use super::switch::fmt_c;

/// Shortest stability record that gives no warning, s (30 min; EURAMET cg-13, from memory).
pub const STABILITY_RECORD_S: f64 = 1800.0;

/// A reading at one position in a bore (or along a tube, or at a depth in a bath).
///
/// # Reference
/// EURAMET cg-13 v4.0 (axial homogeneity; from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DepthReading {
    /// Height above the bottom of the measurement zone, mm (≥ 0).
    pub height_mm: f64,
    /// Temperature read there, °C.
    pub t_c: f64,
}

/// Radial (bore-to-bore) data at one temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (radial homogeneity; from memory).
#[derive(Debug, Clone, PartialEq)]
pub enum RadialData {
    /// One temperature per bore, °C (at least 2 bores).
    BoreReadings(Vec<f64>),
    /// Each other bore minus the reference bore, °C (at least 1 difference, i.e. 2 bores).
    DifferencesToReferenceBore(Vec<f64>),
}

/// One reading of the stability record.
///
/// # Reference
/// EURAMET cg-13 v4.0 (stability over 30 min; from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StabilityReading {
    /// Time since the start of the record, s (strictly increasing).
    pub time_s: f64,
    /// Temperature, °C.
    pub t_c: f64,
}

/// Uncertainty of the thermometer used for the characterisation, noted on the record.
///
/// # Reference
/// JCGM 100:2008 4.3.3 (U and k of a certificate).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReferenceUncertainty {
    /// Expanded uncertainty, °C.
    pub expanded_c: f64,
    /// Coverage factor (> 0).
    pub k: f64,
}

/// Measurements at one characterised temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory, see the module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct CharacterisationInput {
    /// Characterised (set) temperature, °C.
    pub temperature_c: f64,
    /// Axial profile (at least 2 positions), if measured.
    pub axial: Option<Vec<DepthReading>>,
    /// Radial data (at least 2 bores), if measured. At least one of axial and radial is needed.
    pub radial: Option<RadialData>,
    /// Stability record (at least 2 readings, times increasing).
    pub stability: Vec<StabilityReading>,
    /// Loaded minus unloaded temperature at the reference position, °C, if measured.
    pub loading_difference_c: Option<f64>,
    /// Uncertainty of the characterising thermometer, noted on the record.
    pub reference_uncertainty: Option<ReferenceUncertainty>,
}

/// A half-width with its standard uncertainty and how it was derived.
///
/// # Reference
/// JCGM 100:2008 4.3.7 (u = a/√3).
#[derive(Debug, Clone, PartialEq)]
pub struct HalfWidth {
    /// Half-width a of the rectangular distribution, °C.
    pub half_width_c: f64,
    /// u = a/√3, °C.
    pub standard_uncertainty_c: f64,
    /// One sentence saying how a was derived (for records and certificates).
    pub derivation: String,
}

impl HalfWidth {
    fn rectangular(half_width_c: f64, derivation: String) -> Self {
        HalfWidth {
            half_width_c,
            standard_uncertainty_c: half_width_c / 3f64.sqrt(),
            derivation,
        }
    }
}

/// What a medium warning is about.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8 (information needed to interpret results).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MediumWarningKind {
    /// The stability record is shorter than [`STABILITY_RECORD_S`].
    ShortStabilityRecord,
}

/// A warning about one characterised temperature.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8.
#[derive(Debug, Clone, PartialEq)]
pub struct MediumWarning {
    /// What kind.
    pub kind: MediumWarningKind,
    /// The sentence.
    pub message: String,
}

/// Results at one characterised temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory); JCGM 100:2008 4.3.7, 5.1.2.
#[derive(Debug, Clone, PartialEq)]
pub struct CharacterisedTemperature {
    /// Characterised temperature, °C.
    pub temperature_c: f64,
    /// Axial uniformity, if measured.
    pub axial: Option<HalfWidth>,
    /// Radial uniformity, if measured.
    pub radial: Option<HalfWidth>,
    /// Medium uniformity (axial and radial combined), the value used in budgets.
    pub uniformity: HalfWidth,
    /// Stability.
    pub stability: HalfWidth,
    /// Experimental standard deviation of the stability readings, °C (for information).
    pub stability_std_dev_c: f64,
    /// Length of the stability record, s.
    pub stability_duration_s: f64,
    /// Loading effect, if measured.
    pub loading: Option<HalfWidth>,
    /// √(u_uniformity² + u_stability² + u_loading²), °C.
    pub combined_standard_uncertainty_c: f64,
    /// Sentence about the characterising thermometer, if its uncertainty was given.
    pub reference_note: Option<String>,
    /// Warnings.
    pub warnings: Vec<MediumWarning>,
}

impl CharacterisedTemperature {
    /// The half-widths kept in a [`MediumCharacterisation`].
    pub fn half_widths(&self) -> MediumPoint {
        MediumPoint {
            temperature_c: self.temperature_c,
            uniformity_half_width_c: self.uniformity.half_width_c,
            stability_half_width_c: self.stability.half_width_c,
            loading_half_width_c: self.loading.as_ref().map(|l| l.half_width_c),
        }
    }
}

fn axial_half_width(at: &Location, readings: &[DepthReading]) -> Result<HalfWidth, CalibError> {
    let at = at.clone().field("axial uniformity");
    if readings.len() < 2 {
        return Err(CalibError::invalid(
            &at,
            format!("at least 2 depths are needed; got {}", readings.len()),
        ));
    }
    for (i, r) in readings.iter().enumerate() {
        let h = finite(
            &at.clone()
                .field(format!("axial uniformity, reading {}, height", i + 1)),
            r.height_mm,
        )?;
        finite(
            &at.clone()
                .field(format!("axial uniformity, reading {}, temperature", i + 1)),
            r.t_c,
        )?;
        if h < 0.0 {
            return Err(CalibError::invalid(
                &at,
                format!(
                    "reading {} at {} mm lies below the bottom of the measurement zone; heights \
                     are measured upwards from it (0 mm or more)",
                    i + 1,
                    fmt_c(h)
                ),
            ));
        }
        if let Some(j) = readings[..i].iter().position(|o| o.height_mm == h) {
            return Err(CalibError::invalid(
                &at,
                format!(
                    "readings {} and {} are both at {} mm; each height may appear once",
                    j + 1,
                    i + 1,
                    fmt_c(h)
                ),
            ));
        }
    }
    let mut base = readings[0];
    for r in readings {
        if r.height_mm < base.height_mm {
            base = *r;
        }
    }
    let mut worst = readings[0];
    let mut a = 0.0f64;
    for r in readings {
        let d = (r.t_c - base.t_c).abs();
        if d > a {
            a = d;
            worst = *r;
        }
    }
    let top = readings
        .iter()
        .map(|r| r.height_mm)
        .fold(f64::NEG_INFINITY, f64::max);
    let text = format!(
        "Axial: largest difference from the reading at the lowest position ({} mm) among {} \
         positions up to {} mm: {} °C (at {} mm); half-width a = {} °C, rectangular, \
         u = a/√3 = {} °C.",
        fmt_c(base.height_mm),
        readings.len(),
        fmt_c(top),
        fmt_c(a),
        fmt_c(worst.height_mm),
        fmt_c(a),
        fmt_c(a / 3f64.sqrt())
    );
    Ok(HalfWidth::rectangular(a, text))
}

fn radial_half_width(at: &Location, data: &RadialData) -> Result<HalfWidth, CalibError> {
    let at = at.clone().field("radial uniformity");
    match data {
        RadialData::BoreReadings(t) => {
            if t.len() < 2 {
                return Err(CalibError::invalid(
                    &at,
                    format!("at least 2 bores are needed; got {}", t.len()),
                ));
            }
            for (i, v) in t.iter().enumerate() {
                finite(
                    &at.clone()
                        .field(format!("radial uniformity, bore {}", i + 1)),
                    *v,
                )?;
            }
            let lo = t.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            let a = hi - lo;
            let text = format!(
                "Radial: largest difference between {} bores (readings {} °C to {} °C): {} °C; \
                 half-width a = {} °C (reference and unit under test may sit in any two \
                 bores), rectangular, u = a/√3 = {} °C.",
                t.len(),
                fmt_c(lo),
                fmt_c(hi),
                fmt_c(a),
                fmt_c(a),
                fmt_c(a / 3f64.sqrt())
            );
            Ok(HalfWidth::rectangular(a, text))
        }
        RadialData::DifferencesToReferenceBore(d) => {
            if d.is_empty() {
                return Err(CalibError::invalid(
                    &at,
                    "at least 2 bores are needed; got only the reference bore (no difference)",
                ));
            }
            for (i, v) in d.iter().enumerate() {
                finite(
                    &at.clone()
                        .field(format!("radial uniformity, difference {}", i + 1)),
                    *v,
                )?;
            }
            let a = d.iter().map(|v| v.abs()).fold(0.0, f64::max);
            let text = format!(
                "Radial: largest difference of {} bore(s) from the reference bore: {} °C; \
                 half-width a = {} °C (the reference sits in the reference bore), rectangular, \
                 u = a/√3 = {} °C.",
                d.len(),
                fmt_c(a),
                fmt_c(a),
                fmt_c(a / 3f64.sqrt())
            );
            Ok(HalfWidth::rectangular(a, text))
        }
    }
}

/// Stability half-width, experimental standard deviation and duration.
fn stability(
    at: &Location,
    readings: &[StabilityReading],
) -> Result<(HalfWidth, f64, f64), CalibError> {
    let at = at.clone().field("stability");
    if readings.len() < 2 {
        return Err(CalibError::invalid(
            &at,
            format!("at least 2 readings are needed; got {}", readings.len()),
        ));
    }
    for (i, r) in readings.iter().enumerate() {
        finite(
            &at.clone()
                .field(format!("stability, reading {}, time", i + 1)),
            r.time_s,
        )?;
        finite(
            &at.clone()
                .field(format!("stability, reading {}, temperature", i + 1)),
            r.t_c,
        )?;
        if i > 0 && r.time_s <= readings[i - 1].time_s {
            return Err(CalibError::invalid(
                &at,
                format!(
                    "reading {} at {} s does not come after reading {} at {} s; times must \
                     increase",
                    i + 1,
                    fmt_c(r.time_s),
                    i,
                    fmt_c(readings[i - 1].time_s)
                ),
            ));
        }
    }
    let t: Vec<f64> = readings.iter().map(|r| r.t_c).collect();
    let n = t.len() as f64;
    let mean = t.iter().sum::<f64>() / n;
    let s = (t.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1.0)).sqrt();
    let lo = t.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let a = 0.5 * (hi - lo);
    let duration = readings[readings.len() - 1].time_s - readings[0].time_s;
    let text = format!(
        "Stability: {} readings over {} min, spread max − min = {} °C; half-width a = half the \
         spread = {} °C, rectangular, u = a/√3 = {} °C (experimental standard deviation of the \
         readings {} °C, for information).",
        readings.len(),
        fmt_c(duration / 60.0),
        fmt_c(hi - lo),
        fmt_c(a),
        fmt_c(a / 3f64.sqrt()),
        fmt_c(s)
    );
    Ok((HalfWidth::rectangular(a, text), s, duration))
}

/// Evaluates the measurements at one characterised temperature; `index` (0-based) is its
/// position in the input, used in error locations.
///
/// Errors name the temperature and the field: non-finite values, neither axial nor radial data,
/// fewer than 2 depths (or a repeated or negative height), fewer than 2 bores, a stability
/// record with fewer than 2 readings or times not increasing, a negative or zero coverage
/// factor of the reference note.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory, see the module docs); JCGM 100:2008 4.3.7, 5.1.2.
pub fn characterise_temperature(
    index: usize,
    input: &CharacterisationInput,
) -> Result<CharacterisedTemperature, CalibError> {
    let t = finite(
        &Location::run().field(format!("characterised temperature {}", index + 1)),
        input.temperature_c,
    )?;
    let at = Location::set_point(index, t);
    let axial = match &input.axial {
        Some(r) => Some(axial_half_width(&at, r)?),
        None => None,
    };
    let radial = match &input.radial {
        Some(d) => Some(radial_half_width(&at, d)?),
        None => None,
    };
    let uniformity = match (&axial, &radial) {
        (Some(ax), Some(rad)) => {
            let a = ax.half_width_c.hypot(rad.half_width_c);
            HalfWidth::rectangular(
                a,
                format!(
                    "Uniformity: axial and radial half-widths combined in quadrature, \
                     a = √({}² + {}²) = {} °C, rectangular, u = a/√3 = {} °C.",
                    fmt_c(ax.half_width_c),
                    fmt_c(rad.half_width_c),
                    fmt_c(a),
                    fmt_c(a / 3f64.sqrt())
                ),
            )
        }
        (Some(only), None) | (None, Some(only)) => {
            let which = if axial.is_some() { "axial" } else { "radial" };
            let other = if axial.is_some() { "radial" } else { "axial" };
            HalfWidth::rectangular(
                only.half_width_c,
                format!(
                    "Uniformity: {which} only ({other} not measured), a = {} °C, rectangular, \
                     u = a/√3 = {} °C.",
                    fmt_c(only.half_width_c),
                    fmt_c(only.standard_uncertainty_c)
                ),
            )
        }
        (None, None) => {
            return Err(CalibError::invalid(
                &at.clone().field("uniformity"),
                "neither axial nor radial uniformity was measured; at least one is needed",
            ));
        }
    };
    let (stab, s, duration) = stability(&at, &input.stability)?;
    let loading = match input.loading_difference_c {
        Some(d) => {
            let d = finite(&at.clone().field("loading effect"), d)?;
            let a = d.abs();
            Some(HalfWidth::rectangular(
                a,
                format!(
                    "Loading: loaded minus unloaded reading {} °C; half-width a = |difference| = \
                     {} °C, rectangular, u = a/√3 = {} °C.",
                    fmt_c(d),
                    fmt_c(a),
                    fmt_c(a / 3f64.sqrt())
                ),
            ))
        }
        None => None,
    };
    let reference_note = match &input.reference_uncertainty {
        Some(r) => {
            let here = at.clone().field("reference uncertainty");
            let u = non_negative(&here, r.expanded_c)?;
            let k = finite(&here.clone().field("coverage factor"), r.k)?;
            if k <= 0.0 {
                return Err(CalibError::invalid(
                    &here,
                    format!("coverage factor must be positive; got {k}"),
                ));
            }
            Some(format!(
                "Characterising thermometer: U = {} °C (k = {}). The half-widths are \
                 differences read with it and do not include its calibration uncertainty.",
                fmt_c(u),
                fmt_c(k)
            ))
        }
        None => None,
    };
    let u_load = loading.as_ref().map_or(0.0, |l| l.standard_uncertainty_c);
    let combined = (uniformity.standard_uncertainty_c.powi(2)
        + stab.standard_uncertainty_c.powi(2)
        + u_load * u_load)
        .sqrt();
    let mut warnings = Vec::new();
    if duration < STABILITY_RECORD_S {
        warnings.push(MediumWarning {
            kind: MediumWarningKind::ShortStabilityRecord,
            message: format!(
                "The stability record at {} °C lasts {} min; 30 min or more are recommended \
                 (EURAMET cg-13).",
                fmt_c(t),
                fmt_c(duration / 60.0)
            ),
        });
    }
    Ok(CharacterisedTemperature {
        temperature_c: t,
        axial,
        radial,
        uniformity,
        stability: stab,
        stability_std_dev_c: s,
        stability_duration_s: duration,
        loading,
        combined_standard_uncertainty_c: combined,
        reference_note,
        warnings,
    })
}

/// The half-widths kept for one characterised temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MediumPoint {
    /// Characterised temperature, °C.
    pub temperature_c: f64,
    /// Medium uniformity half-width, °C.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
    /// Loading half-width, °C, if measured.
    pub loading_half_width_c: Option<f64>,
}

/// A calendar date (proleptic Gregorian), years 1 to 9999.
///
/// # Reference
/// ISO 8601-1:2019 (calendar date YYYY-MM-DD); Gregorian leap-year rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct CalendarDate {
    /// Year, 1..=9999.
    pub year: u32,
    /// Month, 1..=12.
    pub month: u32,
    /// Day of the month, 1..=28/29/30/31.
    pub day: u32,
}

/// Whether `year` is a leap year of the Gregorian calendar.
///
/// # Reference
/// Gregorian calendar: divisible by 4, except centuries not divisible by 400.
pub fn is_leap_year(year: u32) -> bool {
    (year.is_multiple_of(4) && !year.is_multiple_of(100)) || year.is_multiple_of(400)
}

/// Number of days in `month` (1..=12) of `year`; 0 for a month outside 1..=12.
///
/// # Reference
/// Gregorian calendar.
pub fn days_in_month(year: u32, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if is_leap_year(year) => 29,
        2 => 28,
        _ => 0,
    }
}

impl CalendarDate {
    /// Parses "YYYY-MM-DD" (exactly 10 characters, zero-padded); `what` names the date in
    /// errors, e.g. "characterisation date".
    ///
    /// # Reference
    /// ISO 8601-1:2019 calendar date, extended format.
    pub fn parse(text: &str, what: &str) -> Result<CalendarDate, CalibError> {
        let at = Location::run().field(what.to_string());
        let bad = |why: String| CalibError::invalid(&at, format!("\"{text}\": {why}"));
        let b = text.as_bytes();
        let shape_ok = b.len() == 10
            && b[4] == b'-'
            && b[7] == b'-'
            && b.iter()
                .enumerate()
                .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit());
        if !shape_ok {
            return Err(bad("a date is written YYYY-MM-DD, e.g. 2024-03-14".into()));
        }
        let num = |r: std::ops::Range<usize>| {
            b[r].iter()
                .fold(0u32, |acc, c| acc * 10 + u32::from(c - b'0'))
        };
        let (year, month, day) = (num(0..4), num(5..7), num(8..10));
        if year == 0 {
            return Err(bad("year 0000 is not a calendar year (1 to 9999)".into()));
        }
        if !(1..=12).contains(&month) {
            return Err(bad(format!("month {month} is not between 1 and 12")));
        }
        let dim = days_in_month(year, month);
        if !(1..=dim).contains(&day) {
            return Err(bad(format!(
                "day {day} does not exist in {year}-{month:02} (it has {dim} days)"
            )));
        }
        Ok(CalendarDate { year, month, day })
    }

    /// The date `months` calendar months later, the day clamped to the last day of a shorter
    /// month (2024-01-31 + 1 month = 2024-02-29).
    ///
    /// # Reference
    /// Month-end clamping: common practice for calibration intervals in months.
    pub fn add_months(self, months: u32) -> Result<CalendarDate, CalibError> {
        let total = u64::from(self.year) * 12 + u64::from(self.month - 1) + u64::from(months);
        let year = total / 12;
        if year > 9999 {
            return Err(CalibError::invalid(
                &Location::run().field("interval"),
                format!("{self} plus {months} months lies beyond the year 9999"),
            ));
        }
        let year = year as u32;
        let month = (total % 12) as u32 + 1;
        let day = self.day.min(days_in_month(year, month));
        Ok(CalendarDate { year, month, day })
    }
}

impl fmt::Display for CalendarDate {
    /// "YYYY-MM-DD".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:04}-{:02}-{:02}", self.year, self.month, self.day)
    }
}

/// Due date of the next characterisation: `characterised_on` ("YYYY-MM-DD") plus
/// `interval_months` (≥ 1) calendar months, with month-end clamping.
///
/// # Reference
/// Month-end clamping: common practice; ISO/IEC 17025:2017 6.4.7 (calibration programme;
/// clause from memory).
pub fn due_date(characterised_on: &str, interval_months: u32) -> Result<CalendarDate, CalibError> {
    let from = CalendarDate::parse(characterised_on, "characterisation date")?;
    if interval_months == 0 {
        return Err(CalibError::invalid(
            &Location::run().field("interval"),
            "the interval must be at least 1 month",
        ));
    }
    from.add_months(interval_months)
}

/// Whether a characterisation dated `characterised_on` is overdue on `today` (both
/// "YYYY-MM-DD") with an interval of `interval_months`: true from the day after the due date
/// (the due date itself is still valid).
///
/// # Reference
/// Month-end clamping and validity through the due date: common practice.
pub fn is_overdue(
    characterised_on: &str,
    interval_months: u32,
    today: &str,
) -> Result<bool, CalibError> {
    let due = due_date(characterised_on, interval_months)?;
    let today = CalendarDate::parse(today, "today's date")?;
    Ok(today > due)
}

/// Half-widths of a medium at one temperature, from a [`MediumCharacterisation`].
///
/// # Reference
/// Linear interpolation between characterised temperatures: common practice.
#[derive(Debug, Clone, PartialEq)]
pub struct MediumAt {
    /// Medium (asset id or name).
    pub medium_id: String,
    /// Temperature asked for, °C.
    pub t_c: f64,
    /// Uniformity half-width, °C.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
    /// Loading half-width, °C, when the neighbouring characterised temperatures both have one.
    pub loading_half_width_c: Option<f64>,
    /// How the values were obtained, e.g. "LTM-DRY-09 (characterised 2024-03-14): interpolated
    /// linearly between 20 °C and 60 °C".
    pub derivation: String,
}

impl MediumAt {
    /// Budget items for a calibration in this medium: [`ItemKind::MediumUniformity`],
    /// [`ItemKind::MediumStability`] and, when known, the loading effect as a rectangular
    /// [`ItemKind::Custom`] item, named after the medium.
    ///
    /// # Reference
    /// EURAMET cg-13 v4.0 (each effect a rectangular row; from memory).
    pub fn budget_items(&self) -> Vec<BudgetItem> {
        let mut items = vec![
            BudgetItem::new(
                format!("medium uniformity ({})", self.medium_id),
                ItemKind::MediumUniformity {
                    half_width_c: self.uniformity_half_width_c,
                },
            ),
            BudgetItem::new(
                format!("medium stability ({})", self.medium_id),
                ItemKind::MediumStability {
                    half_width_c: self.stability_half_width_c,
                },
            ),
        ];
        if let Some(a) = self.loading_half_width_c {
            items.push(BudgetItem::new(
                format!("medium loading effect ({})", self.medium_id),
                ItemKind::Custom {
                    spread: Spread::Rectangular,
                    value_c: a,
                },
            ));
        }
        items
    }
}

/// A characterised medium: its characterised temperatures with their half-widths, identified
/// by an asset id (or name) and the characterisation date. The points are kept sorted by
/// temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory); linear interpolation: common practice.
#[derive(Debug, Clone, PartialEq)]
pub struct MediumCharacterisation {
    medium_id: String,
    date: CalendarDate,
    points: Vec<MediumPoint>,
}

/// A characterisation together with the detailed results of each temperature.
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory).
#[derive(Debug, Clone, PartialEq)]
pub struct CharacterisedMedium {
    /// Half-widths by temperature, for interpolation.
    pub characterisation: MediumCharacterisation,
    /// Detailed results (texts, axial and radial parts, warnings), in input order.
    pub temperatures: Vec<CharacterisedTemperature>,
}

/// Evaluates every characterised temperature of a medium and builds its
/// [`MediumCharacterisation`]. `date` is "YYYY-MM-DD".
///
/// Errors: those of [`characterise_temperature`] and [`MediumCharacterisation::new`].
///
/// # Reference
/// EURAMET cg-13 v4.0 (from memory); JCGM 100:2008 4.3.7.
pub fn characterise_medium(
    medium_id: &str,
    date: &str,
    inputs: &[CharacterisationInput],
) -> Result<CharacterisedMedium, CalibError> {
    check_duplicates(
        medium_id,
        &inputs.iter().map(|i| i.temperature_c).collect::<Vec<_>>(),
    )?;
    let mut temperatures = Vec::with_capacity(inputs.len());
    for (i, input) in inputs.iter().enumerate() {
        temperatures.push(characterise_temperature(i, input)?);
    }
    let points = temperatures.iter().map(|t| t.half_widths()).collect();
    let characterisation = MediumCharacterisation::new(medium_id, date, points)?;
    Ok(CharacterisedMedium {
        characterisation,
        temperatures,
    })
}

fn check_duplicates(medium_id: &str, temps: &[f64]) -> Result<(), CalibError> {
    for (i, &t) in temps.iter().enumerate() {
        if let Some(j) = temps[..i].iter().position(|&o| o == t) {
            return Err(CalibError::invalid(
                &Location::run().field(format!("medium {medium_id}")),
                format!(
                    "characterised temperatures {} and {} are both {} °C; each temperature may \
                     be characterised once",
                    j + 1,
                    i + 1,
                    fmt_c(t)
                ),
            ));
        }
    }
    Ok(())
}

impl MediumCharacterisation {
    /// A characterisation from stored half-widths (e.g. read back from records). `date` is
    /// "YYYY-MM-DD". Refuses an empty id, no points, non-finite or negative values and
    /// repeated temperatures; sorts the points by temperature.
    ///
    /// # Reference
    /// EURAMET cg-13 v4.0 (from memory).
    pub fn new(
        medium_id: &str,
        date: &str,
        points: Vec<MediumPoint>,
    ) -> Result<MediumCharacterisation, CalibError> {
        if medium_id.trim().is_empty() {
            return Err(CalibError::invalid(
                &Location::run().field("medium"),
                "the medium needs an asset id or name",
            ));
        }
        let at = Location::run().field(format!("medium {medium_id}"));
        let date = CalendarDate::parse(date, &format!("characterisation date of {medium_id}"))?;
        if points.is_empty() {
            return Err(CalibError::invalid(
                &at,
                "no characterised temperatures; at least one is needed",
            ));
        }
        for (i, p) in points.iter().enumerate() {
            let t = finite(
                &Location::run().field(format!("characterised temperature {}", i + 1)),
                p.temperature_c,
            )?;
            let here = Location::set_point(i, t);
            non_negative(
                &here.clone().field("uniformity half-width"),
                p.uniformity_half_width_c,
            )?;
            non_negative(
                &here.clone().field("stability half-width"),
                p.stability_half_width_c,
            )?;
            if let Some(l) = p.loading_half_width_c {
                non_negative(&here.clone().field("loading half-width"), l)?;
            }
        }
        check_duplicates(
            medium_id,
            &points.iter().map(|p| p.temperature_c).collect::<Vec<_>>(),
        )?;
        let mut points = points;
        points.sort_by(|a, b| a.temperature_c.total_cmp(&b.temperature_c));
        Ok(MediumCharacterisation {
            medium_id: medium_id.to_string(),
            date,
            points,
        })
    }

    /// Asset id or name of the medium.
    pub fn medium_id(&self) -> &str {
        &self.medium_id
    }

    /// Date of the characterisation.
    pub fn date(&self) -> CalendarDate {
        self.date
    }

    /// Characterised temperatures with their half-widths, sorted by temperature.
    pub fn points(&self) -> &[MediumPoint] {
        &self.points
    }

    /// Lowest and highest characterised temperature, °C.
    pub fn range_c(&self) -> (f64, f64) {
        let lo = self.points.first().map_or(f64::NAN, |p| p.temperature_c);
        let hi = self.points.last().map_or(f64::NAN, |p| p.temperature_c);
        (lo, hi)
    }

    /// Half-widths at `t_c` (°C): the stored values at a characterised temperature, linear
    /// interpolation between the two neighbouring ones otherwise. Refuses a temperature outside
    /// the characterised range (no extrapolation).
    ///
    /// # Reference
    /// Linear interpolation between characterised points: common practice.
    pub fn at(&self, t_c: f64) -> Result<MediumAt, CalibError> {
        let at = Location::run().field("medium half-widths");
        let t = finite(&at.clone().field("temperature asked for"), t_c)?;
        let (lo, hi) = self.range_c();
        if !(lo..=hi).contains(&t) {
            return Err(CalibError::invalid(
                &at,
                format!(
                    "{} is characterised from {} °C to {} °C; {} °C lies outside and is not \
                     extrapolated",
                    self.medium_id,
                    fmt_c(lo),
                    fmt_c(hi),
                    fmt_c(t)
                ),
            ));
        }
        let head = format!("{} (characterised {})", self.medium_id, self.date);
        if let Some(p) = self.points.iter().find(|p| p.temperature_c == t) {
            return Ok(MediumAt {
                medium_id: self.medium_id.clone(),
                t_c: t,
                uniformity_half_width_c: p.uniformity_half_width_c,
                stability_half_width_c: p.stability_half_width_c,
                loading_half_width_c: p.loading_half_width_c,
                derivation: format!("{head}: characterised at {} °C", fmt_c(t)),
            });
        }
        // t lies strictly between two characterised temperatures (range checked, no exact hit).
        let Some((p0, p1)) = self
            .points
            .windows(2)
            .find(|w| w[0].temperature_c < t && t < w[1].temperature_c)
            .map(|w| (w[0], w[1]))
        else {
            return Err(CalibError::invalid(
                &at,
                format!("no characterised temperatures enclose {} °C", fmt_c(t)),
            ));
        };
        let f = (t - p0.temperature_c) / (p1.temperature_c - p0.temperature_c);
        let lerp = |a: f64, b: f64| a + (b - a) * f;
        Ok(MediumAt {
            medium_id: self.medium_id.clone(),
            t_c: t,
            uniformity_half_width_c: lerp(p0.uniformity_half_width_c, p1.uniformity_half_width_c),
            stability_half_width_c: lerp(p0.stability_half_width_c, p1.stability_half_width_c),
            loading_half_width_c: match (p0.loading_half_width_c, p1.loading_half_width_c) {
                (Some(a), Some(b)) => Some(lerp(a, b)),
                _ => None,
            },
            derivation: format!(
                "{head}: interpolated linearly between {} °C and {} °C",
                fmt_c(p0.temperature_c),
                fmt_c(p1.temperature_c)
            ),
        })
    }

    /// Due date of the next characterisation after `interval_months` (≥ 1) months.
    ///
    /// # Reference
    /// Month-end clamping: common practice.
    pub fn due_date(&self, interval_months: u32) -> Result<CalendarDate, CalibError> {
        due_date(&self.date.to_string(), interval_months)
    }

    /// Whether this characterisation is overdue on `today` ("YYYY-MM-DD") with an interval of
    /// `interval_months` (see [`is_overdue`]).
    ///
    /// # Reference
    /// Common practice.
    pub fn is_overdue(&self, interval_months: u32, today: &str) -> Result<bool, CalibError> {
        is_overdue(&self.date.to_string(), interval_months, today)
    }
}

#[cfg(test)]
mod tests {
    //! Invented data of the invented laboratory "Larchmere Thermal Metrology": the Peltier
    //! dry-block LTM-DRY-09 characterised at -20 °C, 60 °C and 140 °C, the stirred oil bath
    //! LTM-BATH-07 and the tube furnace LTM-FURN-08. Expected values: hand calculations beside
    //! the checks and the output of `python3 tests/data/switch_media_expected.py` (numpy 2.4.6,
    //! scipy 1.17.1), pasted unchanged.

    use super::*;

    /// Absolute tolerance for arithmetic on °C values (differences, quadrature sums,
    /// interpolation).
    const TOL_C: f64 = 1e-12;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= TOL_C
    }

    fn depth(height_mm: f64, t_c: f64) -> DepthReading {
        DepthReading { height_mm, t_c }
    }

    /// Readings every 300 s from 0 s.
    fn record(t: &[f64]) -> Vec<StabilityReading> {
        t.iter()
            .enumerate()
            .map(|(i, &t_c)| StabilityReading {
                time_s: 300.0 * i as f64,
                t_c,
            })
            .collect()
    }

    fn at_60() -> CharacterisationInput {
        CharacterisationInput {
            temperature_c: 60.0,
            axial: Some(vec![
                depth(0.0, 60.000),
                depth(20.0, 59.985),
                depth(40.0, 59.962),
            ]),
            radial: Some(RadialData::BoreReadings(vec![
                60.004, 60.011, 59.995, 60.008,
            ])),
            stability: record(&[60.002, 60.006, 59.998, 60.004, 60.001, 59.997, 60.003]),
            loading_difference_c: Some(-0.012),
            reference_uncertainty: Some(ReferenceUncertainty {
                expanded_c: 0.02,
                k: 2.0,
            }),
        }
    }

    fn at_minus_20() -> CharacterisationInput {
        CharacterisationInput {
            temperature_c: -20.0,
            axial: Some(vec![
                depth(40.0, -19.951),
                depth(0.0, -20.000),
                depth(20.0, -19.978),
            ]),
            radial: Some(RadialData::DifferencesToReferenceBore(vec![
                0.012, -0.021, 0.007,
            ])),
            stability: record(&[
                -20.004, -19.997, -20.001, -20.006, -19.999, -20.002, -19.998,
            ]),
            loading_difference_c: Some(0.025),
            reference_uncertainty: None,
        }
    }

    fn at_140() -> CharacterisationInput {
        CharacterisationInput {
            temperature_c: 140.0,
            axial: Some(vec![
                depth(0.0, 140.000),
                depth(20.0, 139.93),
                depth(40.0, 139.86),
            ]),
            radial: None,
            stability: record(&[
                140.011, 139.992, 140.004, 139.987, 140.009, 139.996, 140.001,
            ]),
            loading_difference_c: None,
            reference_uncertainty: None,
        }
    }

    fn dry_block() -> CharacterisedMedium {
        characterise_medium(
            "LTM-DRY-09",
            "2024-03-14",
            &[at_60(), at_minus_20(), at_140()],
        )
        .unwrap()
    }

    fn err_of(input: CharacterisationInput) -> String {
        match characterise_temperature(1, &input) {
            Ok(_) => String::from("(no error)"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn half_widths_at_60_c() {
        let r = characterise_temperature(0, &at_60()).unwrap();
        // Hand: axial |59.962 − 60.000| = 0.038 (at 40 mm); radial 60.011 − 59.995 = 0.016;
        // uniformity √(0.038² + 0.016²) = √0.0017 = 0.041231; stability (60.006 − 59.997)/2 =
        // 0.0045; loading |−0.012| = 0.012. Script: M60_*.
        let ax = r.axial.as_ref().unwrap();
        assert!(close(ax.half_width_c, 0.0379999999999967));
        assert!(close(ax.standard_uncertainty_c, 0.038 / 3f64.sqrt()));
        assert!(close(
            r.radial.as_ref().unwrap().half_width_c,
            0.016000000000005343
        ));
        assert!(close(r.uniformity.half_width_c, 0.04123105625617564));
        assert!(close(
            r.uniformity.standard_uncertainty_c,
            0.04123105625617564 / 3f64.sqrt()
        ));
        assert!(close(r.stability.half_width_c, 0.0045000000000001705));
        assert!(close(r.stability_std_dev_c, 0.003207134902949478));
        assert!(close(r.stability_duration_s, 1800.0));
        assert!(close(r.loading.as_ref().unwrap().half_width_c, 0.012));
        // Script: M60_UCOMB = √((0.041231² + 0.0045² + 0.012²)/3).
        assert!(close(
            r.combined_standard_uncertainty_c,
            0.02492823031558078
        ));
        assert!(r.warnings.is_empty());
        assert_eq!(
            r.axial.as_ref().unwrap().derivation,
            "Axial: largest difference from the reading at the lowest position (0 mm) among 3 \
             positions up to 40 mm: 0.038 °C (at 40 mm); half-width a = 0.038 °C, rectangular, \
             u = a/√3 = 0.0219 °C."
        );
        assert_eq!(
            r.stability.derivation,
            "Stability: 7 readings over 30 min, spread max − min = 0.009 °C; half-width a = half \
             the spread = 0.0045 °C, rectangular, u = a/√3 = 0.0026 °C (experimental standard \
             deviation of the readings 0.0032 °C, for information)."
        );
        assert!(
            r.uniformity
                .derivation
                .starts_with("Uniformity: axial and radial half-widths combined in quadrature")
        );
        assert_eq!(
            r.reference_note.as_deref(),
            Some(
                "Characterising thermometer: U = 0.02 °C (k = 2). The half-widths are \
                 differences read with it and do not include its calibration uncertainty."
            )
        );
    }

    #[test]
    fn half_widths_from_differences_and_axial_only() {
        let r = characterise_temperature(0, &at_minus_20()).unwrap();
        // Hand: reference position is the lowest (0 mm, listed second): |−19.951 + 20| =
        // 0.049; radial max |Δ| = 0.021; uniformity √(0.049² + 0.021²) = 0.053310. Script:
        // MM20_*.
        assert!(close(
            r.axial.as_ref().unwrap().half_width_c,
            0.04899999999999949
        ));
        assert!(close(r.radial.as_ref().unwrap().half_width_c, 0.021));
        assert!(close(r.uniformity.half_width_c, 0.053310411741046886));
        assert!(close(r.stability.half_width_c, 0.0045000000000001705));
        let r = characterise_temperature(2, &at_140()).unwrap();
        // Hand: axial |139.86 − 140| = 0.14, radial not measured → uniformity = axial;
        // stability (140.011 − 139.987)/2 = 0.012; no loading: u = √((0.14² + 0.012²)/3).
        assert!(r.radial.is_none());
        assert!(close(r.uniformity.half_width_c, 0.13999999999998636));
        assert!(close(r.stability.half_width_c, 0.012000000000000455));
        assert!(r.loading.is_none());
        assert!(close(
            r.combined_standard_uncertainty_c,
            0.08112541730759888
        ));
        assert!(
            r.uniformity
                .derivation
                .starts_with("Uniformity: axial only (radial not measured)")
        );
    }

    #[test]
    fn interpolation_between_characterised_temperatures() {
        let m = dry_block().characterisation;
        assert_eq!(m.range_c(), (-20.0, 140.0));
        assert_eq!(m.points()[0].temperature_c, -20.0);
        // Exact at a characterised temperature: the stored value itself.
        let p60 = m.at(60.0).unwrap();
        assert_eq!(
            p60.uniformity_half_width_c,
            m.points()[1].uniformity_half_width_c
        );
        assert_eq!(p60.loading_half_width_c, Some(0.012));
        assert_eq!(
            p60.derivation,
            "LTM-DRY-09 (characterised 2024-03-14): characterised at 60 °C"
        );
        // 0 °C is 20/80 = 0.25 of the way from -20 to 60. Hand: uniformity 0.053310 + 0.25 ×
        // (0.041231 − 0.053310) = 0.050291; loading 0.025 + 0.25 × (0.012 − 0.025) = 0.02175.
        // Script (numpy.interp): I0_*.
        let p0 = m.at(0.0).unwrap();
        assert!(close(p0.uniformity_half_width_c, 0.050290572869829075));
        assert!(close(p0.stability_half_width_c, 0.0045000000000001705));
        assert!(close(
            p0.loading_half_width_c.unwrap(),
            0.021750000000000002
        ));
        assert_eq!(
            p0.derivation,
            "LTM-DRY-09 (characterised 2024-03-14): interpolated linearly between -20 °C and \
             60 °C"
        );
        // 100 °C halfway between 60 and 140 (hand: (0.041231 + 0.14)/2 = 0.090616); no loading
        // at 140 °C, so none at 100 °C. Script: I100_*.
        let p100 = m.at(100.0).unwrap();
        assert!(close(p100.uniformity_half_width_c, 0.09061552812808099));
        assert!(close(p100.stability_half_width_c, 0.008250000000000313));
        assert_eq!(p100.loading_half_width_c, None);
        // Ends of the range are exact.
        assert_eq!(
            m.at(140.0).unwrap().uniformity_half_width_c,
            0.13999999999998636
        );
        assert_eq!(m.at(-20.0).unwrap().loading_half_width_c, Some(0.025));
    }

    #[test]
    fn outside_the_characterised_range_is_refused() {
        let m = dry_block().characterisation;
        let e = m.at(150.0).unwrap_err().to_string();
        assert_eq!(
            e,
            "medium half-widths: LTM-DRY-09 is characterised from -20 °C to 140 °C; 150 °C lies \
             outside and is not extrapolated"
        );
        assert!(
            m.at(-20.5)
                .unwrap_err()
                .to_string()
                .contains("-20.5 °C lies outside")
        );
        assert_eq!(
            m.at(f64::NAN).unwrap_err().to_string(),
            "temperature asked for: must be a finite number; got NaN"
        );
    }

    #[test]
    fn budget_items_carry_the_interpolated_half_widths() {
        let m = MediumCharacterisation::new(
            "LTM-BATH-07",
            "2024-05-02",
            vec![
                MediumPoint {
                    temperature_c: 50.0,
                    uniformity_half_width_c: 0.010,
                    stability_half_width_c: 0.004,
                    loading_half_width_c: None,
                },
                MediumPoint {
                    temperature_c: 90.0,
                    uniformity_half_width_c: 0.030,
                    stability_half_width_c: 0.008,
                    loading_half_width_c: None,
                },
            ],
        )
        .unwrap();
        // Hand: 70 °C is halfway: uniformity (0.010 + 0.030)/2 = 0.020, stability 0.006.
        let items = m.at(70.0).unwrap().budget_items();
        assert_eq!(items.len(), 2);
        assert_eq!(items[0].name, "medium uniformity (LTM-BATH-07)");
        match items[0].kind {
            ItemKind::MediumUniformity { half_width_c } => assert!(close(half_width_c, 0.020)),
            other => panic!("unexpected item {other:?}"),
        }
        match items[1].kind {
            ItemKind::MediumStability { half_width_c } => assert!(close(half_width_c, 0.006)),
            other => panic!("unexpected item {other:?}"),
        }
        // With loading the third item is a rectangular custom item.
        let p = dry_block().characterisation.at(60.0).unwrap();
        let items = p.budget_items();
        assert_eq!(items[2].name, "medium loading effect (LTM-DRY-09)");
        assert_eq!(
            items[2].kind,
            ItemKind::Custom {
                spread: Spread::Rectangular,
                value_c: 0.012
            }
        );
    }

    #[test]
    fn short_stability_record_warns() {
        let mut input = at_140();
        input.stability = record(&[140.0, 140.01, 139.99]);
        let r = characterise_temperature(2, &input).unwrap();
        // Hand: 3 readings 300 s apart = 600 s = 10 min < 30 min.
        assert_eq!(r.warnings.len(), 1);
        assert_eq!(r.warnings[0].kind, MediumWarningKind::ShortStabilityRecord);
        assert_eq!(
            r.warnings[0].message,
            "The stability record at 140 °C lasts 10 min; 30 min or more are recommended \
             (EURAMET cg-13)."
        );
    }

    #[test]
    fn error_too_few_depths_or_bores() {
        let mut input = at_60();
        input.axial = Some(vec![depth(0.0, 60.0)]);
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), axial uniformity: at least 2 depths are needed; got 1"
        );
        let mut input = at_60();
        input.radial = Some(RadialData::BoreReadings(vec![60.004]));
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), radial uniformity: at least 2 bores are needed; got 1"
        );
        let mut input = at_60();
        input.radial = Some(RadialData::DifferencesToReferenceBore(vec![]));
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), radial uniformity: at least 2 bores are needed; got only the \
             reference bore (no difference)"
        );
        let mut input = at_60();
        input.axial = None;
        input.radial = None;
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), uniformity: neither axial nor radial uniformity was measured; \
             at least one is needed"
        );
        let mut input = at_60();
        input.axial = Some(vec![
            depth(0.0, 60.0),
            depth(20.0, 59.99),
            depth(20.0, 59.98),
        ]);
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), axial uniformity: readings 2 and 3 are both at 20 mm; each \
             height may appear once"
        );
        let mut input = at_60();
        input.axial = Some(vec![depth(-5.0, 60.0), depth(20.0, 59.99)]);
        assert!(err_of(input).contains("reading 1 at -5 mm lies below the bottom"));
    }

    #[test]
    fn error_bad_stability_record() {
        let mut input = at_60();
        input.stability = record(&[60.0]);
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), stability: at least 2 readings are needed; got 1"
        );
        let mut input = at_60();
        input.stability[2].time_s = 300.0;
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), stability: reading 3 at 300 s does not come after reading 2 \
             at 300 s; times must increase"
        );
        let mut input = at_60();
        input.stability[3].t_c = f64::NAN;
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), stability, reading 4, temperature: must be a finite number; \
             got NaN"
        );
    }

    #[test]
    fn error_non_finite_and_negative_values() {
        let mut input = at_60();
        input.temperature_c = f64::INFINITY;
        assert_eq!(
            err_of(input),
            "characterised temperature 2: must be a finite number; got inf"
        );
        let mut input = at_60();
        input.loading_difference_c = Some(f64::NAN);
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), loading effect: must be a finite number; got NaN"
        );
        let mut input = at_60();
        input.radial = Some(RadialData::BoreReadings(vec![60.0, f64::NAN]));
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), radial uniformity, bore 2: must be a finite number; got NaN"
        );
        let mut input = at_60();
        input.reference_uncertainty = Some(ReferenceUncertainty {
            expanded_c: -0.02,
            k: 2.0,
        });
        assert_eq!(
            err_of(input),
            "set point 2 (60 °C), reference uncertainty: must not be negative; got -0.02"
        );
        let e = MediumCharacterisation::new(
            "LTM-FURN-08",
            "2024-06-30",
            vec![MediumPoint {
                temperature_c: 600.0,
                uniformity_half_width_c: 0.4,
                stability_half_width_c: -0.1,
                loading_half_width_c: None,
            }],
        )
        .unwrap_err();
        assert_eq!(
            e.to_string(),
            "set point 1 (600 °C), stability half-width: must not be negative; got -0.1"
        );
    }

    #[test]
    fn error_duplicate_temperatures_and_bad_identity() {
        let e = characterise_medium("LTM-DRY-09", "2024-03-14", &[at_60(), at_140(), at_60()])
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "medium LTM-DRY-09: characterised temperatures 1 and 3 are both 60 °C; each \
             temperature may be characterised once"
        );
        let e = MediumCharacterisation::new("LTM-FURN-08", "2024-06-30", vec![]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "medium LTM-FURN-08: no characterised temperatures; at least one is needed"
        );
        let e = characterise_medium(" ", "2024-03-14", &[at_60()]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "medium: the medium needs an asset id or name"
        );
        let e = characterise_medium("LTM-DRY-09", "14.03.2024", &[at_60()]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "characterisation date of LTM-DRY-09: \"14.03.2024\": a date is written YYYY-MM-DD, \
             e.g. 2024-03-14"
        );
    }

    #[test]
    fn single_temperature_characterisation_is_valid_only_there() {
        let m = MediumCharacterisation::new(
            "LTM-FURN-08",
            "2024-06-30",
            vec![MediumPoint {
                temperature_c: 600.0,
                uniformity_half_width_c: 0.4,
                stability_half_width_c: 0.1,
                loading_half_width_c: None,
            }],
        )
        .unwrap();
        assert_eq!(m.at(600.0).unwrap().uniformity_half_width_c, 0.4);
        assert_eq!(
            m.at(600.5).unwrap_err().to_string(),
            "medium half-widths: LTM-FURN-08 is characterised from 600 °C to 600 °C; 600.5 °C \
             lies outside and is not extrapolated"
        );
    }

    #[test]
    fn calendar_dates_parse_and_refuse() {
        // Gregorian rule (hand): 2024 leap, 2023 not, 1900 not (century), 2000 leap (÷400).
        // Cross-check: python3 -c "import calendar; print([calendar.monthrange(y, 2)[1] for y
        // in (2024, 2023, 1900, 2000, 2100)])" prints [29, 28, 28, 29, 28].
        assert_eq!(days_in_month(2024, 2), 29);
        assert_eq!(days_in_month(2023, 2), 28);
        assert_eq!(days_in_month(1900, 2), 28);
        assert_eq!(days_in_month(2000, 2), 29);
        assert_eq!(days_in_month(2100, 2), 28);
        assert_eq!(days_in_month(2023, 4), 30);
        assert_eq!(
            CalendarDate::parse("2024-02-29", "d").unwrap(),
            CalendarDate {
                year: 2024,
                month: 2,
                day: 29
            }
        );
        let e = |s: &str| {
            CalendarDate::parse(s, "characterisation date")
                .unwrap_err()
                .to_string()
        };
        assert_eq!(
            e("2023-02-29"),
            "characterisation date: \"2023-02-29\": day 29 does not exist in 2023-02 (it has 28 \
             days)"
        );
        assert_eq!(
            e("2024-13-01"),
            "characterisation date: \"2024-13-01\": month 13 is not between 1 and 12"
        );
        assert!(e("2024-1-05").contains("a date is written YYYY-MM-DD"));
        assert!(e("2024-01-05 ").contains("a date is written YYYY-MM-DD"));
        assert!(e("2024-0a-05").contains("a date is written YYYY-MM-DD"));
        assert!(e("0000-01-01").contains("year 0000 is not a calendar year"));
        assert!(e("2024-04-31").contains("day 31 does not exist in 2024-04 (it has 30 days)"));
        assert!(e("2024-04-00").contains("day 0 does not exist"));
    }

    #[test]
    fn due_dates_clamp_to_the_end_of_the_month() {
        let due = |d: &str, m: u32| due_date(d, m).unwrap().to_string();
        // Hand, calendar months with the day clamped to the month's last day:
        assert_eq!(due("2024-01-31", 1), "2024-02-29"); // 2024 is a leap year
        assert_eq!(due("2023-01-31", 1), "2023-02-28");
        assert_eq!(due("2023-08-31", 6), "2024-02-29");
        assert_eq!(due("2024-02-29", 12), "2025-02-28");
        assert_eq!(due("2024-11-30", 3), "2025-02-28");
        assert_eq!(due("2024-03-31", 1), "2024-04-30");
        assert_eq!(due("2024-03-14", 12), "2025-03-14");
        assert_eq!(due("2024-12-15", 1), "2025-01-15");
        assert_eq!(due("2024-05-31", 27), "2026-08-31"); // 2 years and 3 months
        assert_eq!(due("2099-12-31", 2), "2100-02-28"); // 2100 is not a leap year
        assert_eq!(
            due_date("2024-03-14", 0).unwrap_err().to_string(),
            "interval: the interval must be at least 1 month"
        );
        assert_eq!(
            due_date("9999-12-01", 1).unwrap_err().to_string(),
            "interval: 9999-12-01 plus 1 months lies beyond the year 9999"
        );
    }

    #[test]
    fn overdue_from_the_day_after_the_due_date() {
        // Due 2025-03-14 (12 months after 2024-03-14): valid through that day.
        assert!(!is_overdue("2024-03-14", 12, "2025-03-13").unwrap());
        assert!(!is_overdue("2024-03-14", 12, "2025-03-14").unwrap());
        assert!(is_overdue("2024-03-14", 12, "2025-03-15").unwrap());
        assert!(is_overdue("2024-03-14", 12, "2026-01-01").unwrap());
        // Month-end: 2024-01-31 + 1 month = 2024-02-29; 2024-03-01 is overdue.
        assert!(!is_overdue("2024-01-31", 1, "2024-02-29").unwrap());
        assert!(is_overdue("2024-01-31", 1, "2024-03-01").unwrap());
        let m = dry_block().characterisation;
        assert_eq!(m.date().to_string(), "2024-03-14");
        assert_eq!(m.due_date(6).unwrap().to_string(), "2024-09-14");
        assert!(m.is_overdue(6, "2024-09-15").unwrap());
        assert!(!m.is_overdue(6, "2024-09-14").unwrap());
        assert_eq!(
            is_overdue("2024-03-14", 12, "2025-3-15")
                .unwrap_err()
                .to_string(),
            "today's date: \"2025-3-15\": a date is written YYYY-MM-DD, e.g. 2024-03-14"
        );
    }
}
