//! Stateless reference conversions: `GET /api/v1/reference/...`.
//!
//! The request and answer types here are also used by `juncture convert`
//! and the browser converter page, so all three give the same numbers.
//! Numbers are returned unrounded (full f64).

use axum::Json;
use serde::{Deserialize, Serialize};

use crate::metrology::thermo::{
    CvdCoefficients, ElementKind, PrtClass, Sprt, SprtSubRange, ThermoError, ThermocoupleClass,
    ThermocoupleType, its90, thermocouple_tolerance,
};
use crate::web::AppError;
use crate::web::extract::ApiQuery;

/// Turns a thermometry error into a validation error on `field`, or on the
/// field the error itself names (reference junction, coefficients).
pub fn thermo_error(error: ThermoError, field: &str) -> AppError {
    let field = match &error {
        ThermoError::OutOfRange { quantity, .. } | ThermoError::NotFinite { quantity, .. }
            if quantity.contains("reference-junction") =>
        {
            "rj_t_c"
        }
        ThermoError::NotFinite { quantity, .. }
        | ThermoError::InvalidParameter { name: quantity, .. } => match *quantity {
            "R0" => "r0_ohm",
            "A" => "a",
            "B" => "b",
            "C" => "c",
            "resistance at the triple point of water" => "r_tpw_ohm",
            _ => field,
        },
        ThermoError::UnknownType(_) => "type",
        ThermoError::UnknownName { what, .. } => match *what {
            "element kind" => "element",
            _ => "class",
        },
        _ => field,
    };
    AppError::invalid(field, error.to_string())
}

fn exactly_one(
    a: (&str, Option<f64>),
    b: (&str, Option<f64>),
) -> Result<Result<f64, f64>, AppError> {
    match (a.1, b.1) {
        (Some(x), None) => Ok(Ok(x)),
        (None, Some(y)) => Ok(Err(y)),
        (Some(_), Some(_)) => Err(AppError::BadRequest(format!(
            "give either {} or {}, not both",
            a.0, b.0
        ))),
        (None, None) => Err(AppError::BadRequest(format!(
            "give {} (to compute the signal) or {} (to solve for the temperature)",
            a.0, b.0
        ))),
    }
}

// ---------------------------------------------------------------- thermocouples

/// Query of `GET /api/v1/reference/thermocouple`.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThermocoupleQuery {
    /// Letter type: B, E, J, K, N, R, S or T.
    #[serde(rename = "type")]
    pub kind: String,
    /// Temperature of the measuring junction, °C (ITS-90).
    pub t_c: Option<f64>,
    /// Emf at the terminals, mV, with the reference junction at `rj_t_c`.
    pub emf_mv: Option<f64>,
    /// Reference-junction temperature, °C (default 0 °C, the ice point).
    pub rj_t_c: Option<f64>,
}

/// A thermocouple conversion.
#[derive(Debug, Clone, Serialize)]
pub struct ThermocoupleAnswer {
    /// Letter type.
    #[serde(rename = "type")]
    pub kind: String,
    /// Measuring-junction temperature, °C.
    pub t_c: f64,
    /// Emf with the reference junction at `rj_t_c`, mV.
    pub emf_mv: f64,
    /// Seebeck coefficient dE/dt at `t_c`, µV/K.
    pub seebeck_uv_per_k: f64,
    /// Reference-junction temperature, °C.
    pub rj_t_c: f64,
    /// Emf of the reference function at `rj_t_c`, mV (added to `emf_mv`).
    pub emf_rj_mv: f64,
    /// Emf referred to a reference junction at 0 °C, mV.
    pub emf_at_0c_rj_mv: f64,
    /// When solving for t: the published approximate inverse polynomial's
    /// own value, °C (the answer `t_c` is refined to 1e-9 mV beyond it).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub published_inverse_t_c: Option<f64>,
    /// Printed error band of that polynomial, °C (lower, upper).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub published_inverse_error_band_c: Option<[f64; 2]>,
}

/// Computes a thermocouple conversion.
///
/// # Errors
/// Validation errors naming the field (unknown type, out of range, NaN).
pub fn thermocouple(q: &ThermocoupleQuery) -> Result<ThermocoupleAnswer, AppError> {
    let kind: ThermocoupleType = q.kind.parse().map_err(|e| thermo_error(e, "type"))?;
    let rj_t_c = q.rj_t_c.unwrap_or(0.0);
    match exactly_one(("t_c", q.t_c), ("emf_mv", q.emf_mv))? {
        Ok(t_c) => {
            let emf_mv = kind
                .emf_with_reference_junction(t_c, rj_t_c)
                .map_err(|e| thermo_error(e, "t_c"))?;
            let seebeck = kind
                .seebeck_uv_per_k(t_c)
                .map_err(|e| thermo_error(e, "t_c"))?;
            let emf_rj_mv = kind.emf(rj_t_c).map_err(|e| thermo_error(e, "rj_t_c"))?;
            Ok(ThermocoupleAnswer {
                kind: kind.to_string(),
                t_c,
                emf_mv,
                seebeck_uv_per_k: seebeck,
                rj_t_c,
                emf_rj_mv,
                emf_at_0c_rj_mv: emf_mv + emf_rj_mv,
                published_inverse_t_c: None,
                published_inverse_error_band_c: None,
            })
        }
        Err(emf_mv) => {
            let t_c = kind
                .temperature_with_reference_junction(emf_mv, rj_t_c)
                .map_err(|e| thermo_error(e, "emf_mv"))?;
            let seebeck = kind
                .seebeck_uv_per_k(t_c)
                .map_err(|e| thermo_error(e, "emf_mv"))?;
            let emf_rj_mv = kind.emf(rj_t_c).map_err(|e| thermo_error(e, "rj_t_c"))?;
            let published = kind.published_inverse(emf_mv + emf_rj_mv).ok();
            Ok(ThermocoupleAnswer {
                kind: kind.to_string(),
                t_c,
                emf_mv,
                seebeck_uv_per_k: seebeck,
                rj_t_c,
                emf_rj_mv,
                emf_at_0c_rj_mv: emf_mv + emf_rj_mv,
                published_inverse_t_c: published.map(|p| p.t90_c),
                published_inverse_error_band_c: published
                    .map(|p| [p.error_band_c.0, p.error_band_c.1]),
            })
        }
    }
}

/// `GET /api/v1/reference/thermocouple`.
pub async fn get_thermocouple(
    ApiQuery(q): ApiQuery<ThermocoupleQuery>,
) -> Result<Json<ThermocoupleAnswer>, AppError> {
    thermocouple(&q).map(Json)
}

// ---------------------------------------------------------------- PRT

/// Query of `GET /api/v1/reference/prt`.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PrtQuery {
    /// Temperature, °C.
    pub t_c: Option<f64>,
    /// Resistance, Ω.
    pub r_ohm: Option<f64>,
    /// R0, Ω (default 100 Ω).
    pub r0_ohm: Option<f64>,
    /// Callendar-Van Dusen A, 1/°C (default IEC 60751).
    pub a: Option<f64>,
    /// Callendar-Van Dusen B, 1/°C² (default IEC 60751).
    pub b: Option<f64>,
    /// Callendar-Van Dusen C, 1/°C⁴ (default IEC 60751; used below 0 °C).
    pub c: Option<f64>,
}

/// A PRT conversion.
#[derive(Debug, Clone, Serialize)]
pub struct PrtAnswer {
    /// Temperature, °C.
    pub t_c: f64,
    /// Resistance, Ω.
    pub r_ohm: f64,
    /// Sensitivity dR/dt at `t_c`, Ω/K.
    pub dr_dt_ohm_per_k: f64,
    /// R0 used, Ω.
    pub r0_ohm: f64,
    /// A used, 1/°C.
    pub a: f64,
    /// B used, 1/°C².
    pub b: f64,
    /// C used, 1/°C⁴.
    pub c: f64,
    /// `"iec_60751"` for the nominal curve, `"custom"` otherwise.
    pub coefficients: &'static str,
}

/// Computes a PRT conversion.
///
/// # Errors
/// Validation errors naming the field.
pub fn prt(q: &PrtQuery) -> Result<PrtAnswer, AppError> {
    use crate::metrology::thermo::prt::{IEC_A, IEC_B, IEC_C, IEC_T_MAX_C, IEC_T_MIN_C};
    let r0 = q.r0_ohm.unwrap_or(100.0);
    let cvd = if q.a.is_none() && q.b.is_none() && q.c.is_none() {
        CvdCoefficients::iec_60751(r0)
    } else {
        CvdCoefficients::from_certificate(
            r0,
            q.a.unwrap_or(IEC_A),
            q.b.unwrap_or(IEC_B),
            q.c.unwrap_or(IEC_C),
            IEC_T_MIN_C,
            IEC_T_MAX_C,
        )
    }
    .map_err(|e| thermo_error(e, "r0_ohm"))?;
    let (t_c, r_ohm, field) = match exactly_one(("t_c", q.t_c), ("r_ohm", q.r_ohm))? {
        Ok(t) => (
            t,
            cvd.resistance(t).map_err(|e| thermo_error(e, "t_c"))?,
            "t_c",
        ),
        Err(r) => (
            cvd.temperature(r).map_err(|e| thermo_error(e, "r_ohm"))?,
            r,
            "r_ohm",
        ),
    };
    let slope = cvd
        .sensitivity_ohm_per_k(t_c)
        .map_err(|e| thermo_error(e, field))?;
    Ok(PrtAnswer {
        t_c,
        r_ohm,
        dr_dt_ohm_per_k: slope,
        r0_ohm: cvd.r0(),
        a: cvd.a(),
        b: cvd.b(),
        c: cvd.c(),
        coefficients: if cvd.is_iec_nominal() {
            "iec_60751"
        } else {
            "custom"
        },
    })
}

/// `GET /api/v1/reference/prt`.
pub async fn get_prt(ApiQuery(q): ApiQuery<PrtQuery>) -> Result<Json<PrtAnswer>, AppError> {
    prt(&q).map(Json)
}

// ---------------------------------------------------------------- ITS-90

/// Query of `GET /api/v1/reference/its90`.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Its90Query {
    /// Temperature, °C.
    pub t_c: Option<f64>,
    /// Temperature, K.
    pub t_k: Option<f64>,
    /// Reference-function ratio W_r.
    pub w_r: Option<f64>,
    /// SPRT resistance, Ω (with `r_tpw_ohm` and `sub_range`).
    pub r_ohm: Option<f64>,
    /// SPRT resistance at the triple point of water, Ω.
    pub r_tpw_ohm: Option<f64>,
    /// Deviation-function sub-range, e.g. `water-to-zinc`.
    pub sub_range: Option<String>,
    /// Deviation coefficient a.
    pub a: Option<f64>,
    /// Deviation coefficient b.
    pub b: Option<f64>,
    /// Deviation coefficient c.
    pub c: Option<f64>,
}

/// An ITS-90 conversion.
#[derive(Debug, Clone, Serialize)]
pub struct Its90Answer {
    /// t90, °C.
    pub t_c: f64,
    /// T90, K.
    pub t90_k: f64,
    /// Reference-function value W_r(T90).
    pub w_r: f64,
    /// For an SPRT: the measured ratio W = R/R(273.16 K).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub w: Option<f64>,
    /// For an SPRT: the deviation W - W_r.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub delta_w: Option<f64>,
    /// For an SPRT: the resistance, Ω.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub r_ohm: Option<f64>,
    /// For an SPRT: the sub-range used.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sub_range: Option<&'static str>,
}

/// The deviation-function sub-ranges by their plain names.
pub const SUB_RANGE_NAMES: &str = "argon-to-water, mercury-to-gallium, water-to-gallium, \
     water-to-indium, water-to-tin, water-to-zinc, water-to-aluminium";

/// Builds a sub-range from its name and coefficients (missing ones are 0).
///
/// # Errors
/// Unknown name, or a coefficient the form does not have.
pub fn sub_range(
    name: &str,
    a: Option<f64>,
    b: Option<f64>,
    c: Option<f64>,
) -> Result<SprtSubRange, AppError> {
    let (a0, b0, c0) = (a.unwrap_or(0.0), b.unwrap_or(0.0), c.unwrap_or(0.0));
    let refuse = |coef: &str| {
        AppError::invalid(
            coef,
            format!("the {name} deviation function has no coefficient {coef}"),
        )
    };
    let sr = match name.trim().to_ascii_lowercase().as_str() {
        "argon-to-water" => SprtSubRange::ArgonToWater { a: a0, b: b0 },
        "mercury-to-gallium" => SprtSubRange::MercuryToGallium { a: a0, b: b0 },
        "water-to-gallium" => SprtSubRange::WaterToGallium { a: a0 },
        "water-to-indium" => SprtSubRange::WaterToIndium { a: a0 },
        "water-to-tin" => SprtSubRange::WaterToTin { a: a0, b: b0 },
        "water-to-zinc" => SprtSubRange::WaterToZinc { a: a0, b: b0 },
        "water-to-aluminium" => SprtSubRange::WaterToAluminium {
            a: a0,
            b: b0,
            c: c0,
        },
        other => {
            return Err(AppError::invalid(
                "sub_range",
                format!("unknown sub-range {other:?}; expected one of {SUB_RANGE_NAMES}"),
            ));
        }
    };
    let takes_b = !matches!(
        sr,
        SprtSubRange::WaterToGallium { .. } | SprtSubRange::WaterToIndium { .. }
    );
    let takes_c = matches!(sr, SprtSubRange::WaterToAluminium { .. });
    if b.is_some() && !takes_b {
        return Err(refuse("b"));
    }
    if c.is_some() && !takes_c {
        return Err(refuse("c"));
    }
    Ok(sr)
}

/// Computes an ITS-90 conversion.
///
/// # Errors
/// Validation errors naming the field.
pub fn its90_convert(q: &Its90Query) -> Result<Its90Answer, AppError> {
    if let Some(r) = q.r_ohm {
        let r_tpw = q.r_tpw_ohm.ok_or_else(|| {
            AppError::invalid(
                "r_tpw_ohm",
                "an SPRT conversion needs the resistance at the triple point of water, r_tpw_ohm (Ω)",
            )
        })?;
        let name = q.sub_range.as_deref().ok_or_else(|| {
            AppError::invalid(
                "sub_range",
                format!("an SPRT conversion needs the deviation-function sub-range: one of {SUB_RANGE_NAMES}"),
            )
        })?;
        let sr = sub_range(name, q.a, q.b, q.c)?;
        let sprt = Sprt::new(r_tpw, sr).map_err(|e| thermo_error(e, "r_tpw_ohm"))?;
        let t = sprt.temperature(r).map_err(|e| thermo_error(e, "r_ohm"))?;
        let w = r / r_tpw;
        let delta_w = sr.deviation(w);
        return Ok(Its90Answer {
            t_c: t.t90_c,
            t90_k: t.t90_k,
            w_r: w - delta_w,
            w: Some(w),
            delta_w: Some(delta_w),
            r_ohm: Some(r),
            sub_range: Some(sr.name()),
        });
    }
    let given = [q.t_c.is_some(), q.t_k.is_some(), q.w_r.is_some()]
        .iter()
        .filter(|g| **g)
        .count();
    if given != 1 {
        return Err(AppError::BadRequest(
            "give exactly one of t_c, t_k or w_r (or r_ohm with r_tpw_ohm and sub_range for an SPRT)"
                .to_owned(),
        ));
    }
    let (t90_k, w_r) = if let Some(t_c) = q.t_c {
        let t_k = t_c + crate::metrology::thermo::ZERO_CELSIUS_K;
        (t_k, its90::wr(t_k).map_err(|e| thermo_error(e, "t_c"))?)
    } else if let Some(t_k) = q.t_k {
        (t_k, its90::wr(t_k).map_err(|e| thermo_error(e, "t_k"))?)
    } else {
        let w_r = q.w_r.unwrap_or(f64::NAN);
        (
            its90::t90_from_wr(w_r).map_err(|e| thermo_error(e, "w_r"))?,
            w_r,
        )
    };
    Ok(Its90Answer {
        t_c: t90_k - crate::metrology::thermo::ZERO_CELSIUS_K,
        t90_k,
        w_r,
        w: None,
        delta_w: None,
        r_ohm: None,
        sub_range: None,
    })
}

/// `GET /api/v1/reference/its90`.
pub async fn get_its90(ApiQuery(q): ApiQuery<Its90Query>) -> Result<Json<Its90Answer>, AppError> {
    its90_convert(&q).map(Json)
}

// ---------------------------------------------------------------- tolerances

/// Query of `GET /api/v1/reference/tolerance`.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ToleranceQuery {
    /// `thermocouple` or `prt`.
    pub sensor: String,
    /// Thermocouple letter type (thermocouples only).
    #[serde(rename = "type")]
    pub kind: Option<String>,
    /// Class: 1, 2, 3, standard, special (thermocouples); AA, A, B, C (PRTs).
    pub class: String,
    /// PRT element: wire-wound (default) or film.
    pub element: Option<String>,
    /// Temperature, °C.
    pub t_c: f64,
}

/// A tolerance look-up.
#[derive(Debug, Clone, Serialize)]
pub struct ToleranceAnswer {
    /// What the tolerance belongs to, e.g. "type K" or "wire-wound elements".
    pub sensor: String,
    /// The class as the standard names it.
    pub class: String,
    /// Temperature, °C.
    pub t_c: f64,
    /// Permitted deviation (±), °C.
    pub tolerance_c: f64,
    /// The standard the class comes from.
    pub standard: &'static str,
}

/// Looks up a tolerance.
///
/// # Errors
/// Validation errors naming the field; a class not defined at `t_c`.
pub fn tolerance(q: &ToleranceQuery) -> Result<ToleranceAnswer, AppError> {
    match q.sensor.trim().to_ascii_lowercase().as_str() {
        "thermocouple" | "tc" => {
            let kind_text = q.kind.as_deref().ok_or_else(|| {
                AppError::invalid(
                    "type",
                    "a thermocouple tolerance needs the letter type (B, E, J, K, N, R, S, T)",
                )
            })?;
            let kind: ThermocoupleType = kind_text.parse().map_err(|e| thermo_error(e, "type"))?;
            let class: ThermocoupleClass = q.class.parse().map_err(|e| thermo_error(e, "class"))?;
            let tolerance_c =
                thermocouple_tolerance(kind, class, q.t_c).map_err(|e| thermo_error(e, "t_c"))?;
            let standard = match class {
                ThermocoupleClass::AstmStandard | ThermocoupleClass::AstmSpecial => "ASTM E230",
                _ => "IEC 60584-1:2013",
            };
            Ok(ToleranceAnswer {
                sensor: format!("type {kind}"),
                class: class.to_string(),
                t_c: q.t_c,
                tolerance_c,
                standard,
            })
        }
        "prt" => {
            let class: PrtClass = q.class.parse().map_err(|e| thermo_error(e, "class"))?;
            let element: ElementKind = q
                .element
                .as_deref()
                .unwrap_or("wire-wound")
                .parse()
                .map_err(|e| thermo_error(e, "element"))?;
            let tolerance_c = class
                .tolerance(element, q.t_c)
                .map_err(|e| thermo_error(e, "t_c"))?;
            Ok(ToleranceAnswer {
                sensor: format!("{element} elements"),
                class: format!("class {class}"),
                t_c: q.t_c,
                tolerance_c,
                standard: "IEC 60751:2008",
            })
        }
        other => Err(AppError::invalid(
            "sensor",
            format!("unknown sensor {other:?}; expected thermocouple or prt"),
        )),
    }
}

/// `GET /api/v1/reference/tolerance`.
pub async fn get_tolerance(
    ApiQuery(q): ApiQuery<ToleranceQuery>,
) -> Result<Json<ToleranceAnswer>, AppError> {
    tolerance(&q).map(Json)
}
