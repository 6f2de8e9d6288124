//! `GET /convert`: the reference conversions as a page for technicians.
//! Plain GET forms (they work without JavaScript and can be bookmarked);
//! the numbers come from the same code as the API.

use std::collections::HashMap;

use askama::Template;
use axum::extract::Query;
use axum::response::Html;

use super::PageError;
use crate::web::AppError;
use crate::web::api::reference::{
    self, Its90Query, PrtQuery, SUB_RANGE_NAMES, ThermocoupleQuery, ToleranceQuery,
};

/// One labelled line of a result.
#[derive(Debug)]
pub struct Line {
    label: &'static str,
    value: String,
}

fn line(label: &'static str, value: String) -> Line {
    Line { label, value }
}

#[derive(Template)]
#[template(path = "convert.html")]
struct ConvertPage {
    nav: super::Nav,
    /// Which form was submitted.
    form: String,
    /// Submitted values, to fill the inputs again.
    values: HashMap<String, String>,
    /// Errors by field (the field name of the form).
    errors: HashMap<String, String>,
    /// A problem not tied to one field.
    general_error: Option<String>,
    /// The answer's lines.
    result: Vec<Line>,
    sub_ranges: Vec<&'static str>,
}

impl ConvertPage {
    /// The submitted value of `name`, if `form` was the form submitted.
    fn v(&self, form: &str, name: &str) -> &str {
        if self.form == form {
            self.values.get(name).map_or("", String::as_str)
        } else {
            ""
        }
    }
    /// The error on `name`, if `form` was the form submitted.
    fn e(&self, form: &str, name: &str) -> &str {
        if self.form == form {
            self.errors.get(name).map_or("", String::as_str)
        } else {
            ""
        }
    }
    fn shows(&self, form: &str) -> bool {
        self.form == form
    }
    fn selected(&self, form: &str, name: &str, option: &str) -> bool {
        self.v(form, name).eq_ignore_ascii_case(option)
    }
}

/// Reads an optional number, accepting a decimal comma.
fn number(
    values: &HashMap<String, String>,
    name: &str,
    errors: &mut HashMap<String, String>,
) -> Option<f64> {
    let raw = values.get(name)?.trim();
    if raw.is_empty() {
        return None;
    }
    match raw.replace(',', ".").parse::<f64>() {
        Ok(v) => Some(v),
        Err(_) => {
            errors.insert(
                name.to_owned(),
                format!("{raw:?} is not a number; write e.g. 1000 or 41.276"),
            );
            None
        }
    }
}

fn text(values: &HashMap<String, String>, name: &str) -> Option<String> {
    values
        .get(name)
        .map(|s| s.trim().to_owned())
        .filter(|s| !s.is_empty())
}

fn fmt(v: f64, decimals: usize, unit: &str) -> String {
    format!("{v:.decimals$} {unit}")
}

fn compute(
    form: &str,
    v: &HashMap<String, String>,
    errors: &mut HashMap<String, String>,
) -> Result<Vec<Line>, AppError> {
    match form {
        "thermocouple" => {
            let q = ThermocoupleQuery {
                kind: text(v, "type").unwrap_or_default(),
                t_c: number(v, "t_c", errors),
                emf_mv: number(v, "emf_mv", errors),
                rj_t_c: number(v, "rj_t_c", errors),
            };
            if !errors.is_empty() {
                return Ok(Vec::new());
            }
            let a = reference::thermocouple(&q)?;
            let mut lines = vec![
                line("Type", a.kind.clone()),
                line("Temperature", fmt(a.t_c, 4, "°C")),
                line("Emf", fmt(a.emf_mv, 6, "mV")),
                line("Reference junction", fmt(a.rj_t_c, 2, "°C")),
                line("Emf referred to 0 °C", fmt(a.emf_at_0c_rj_mv, 6, "mV")),
                line("Seebeck coefficient", fmt(a.seebeck_uv_per_k, 3, "µV/K")),
            ];
            if let (Some(t), Some(band)) =
                (a.published_inverse_t_c, a.published_inverse_error_band_c)
            {
                lines.push(line(
                    "Published inverse polynomial",
                    format!(
                        "{t:.4} °C (printed error band {} °C to {} °C)",
                        band[0], band[1]
                    ),
                ));
            }
            Ok(lines)
        }
        "prt" => {
            let q = PrtQuery {
                t_c: number(v, "t_c", errors),
                r_ohm: number(v, "r_ohm", errors),
                r0_ohm: number(v, "r0_ohm", errors),
                a: number(v, "a", errors),
                b: number(v, "b", errors),
                c: number(v, "c", errors),
            };
            if !errors.is_empty() {
                return Ok(Vec::new());
            }
            let p = reference::prt(&q)?;
            Ok(vec![
                line("Temperature", fmt(p.t_c, 4, "°C")),
                line("Resistance", fmt(p.r_ohm, 5, "Ω")),
                line("dR/dt", fmt(p.dr_dt_ohm_per_k, 6, "Ω/K")),
                line(
                    "Coefficients",
                    format!(
                        "{}: R0 = {} Ω, A = {:e} /°C, B = {:e} /°C², C = {:e} /°C⁴",
                        if p.coefficients == "iec_60751" {
                            "IEC 60751 nominal"
                        } else {
                            "custom"
                        },
                        p.r0_ohm,
                        p.a,
                        p.b,
                        p.c
                    ),
                ),
            ])
        }
        "its90" => {
            let q = Its90Query {
                t_c: number(v, "t_c", errors),
                t_k: number(v, "t_k", errors),
                w_r: number(v, "w_r", errors),
                r_ohm: number(v, "r_ohm", errors),
                r_tpw_ohm: number(v, "r_tpw_ohm", errors),
                sub_range: text(v, "sub_range"),
                a: number(v, "a", errors),
                b: number(v, "b", errors),
                c: number(v, "c", errors),
            };
            if !errors.is_empty() {
                return Ok(Vec::new());
            }
            let x = reference::its90_convert(&q)?;
            let mut lines = vec![
                line("t90", fmt(x.t_c, 5, "°C")),
                line("T90", fmt(x.t90_k, 5, "K")),
                line("W_r", format!("{:.9}", x.w_r)),
            ];
            if let (Some(w), Some(dw)) = (x.w, x.delta_w) {
                lines.push(line("W (measured)", format!("{w:.9}")));
                lines.push(line("W − W_r", format!("{dw:.4e}")));
            }
            Ok(lines)
        }
        "tolerance" => {
            let t_c = number(v, "t_c", errors);
            if !errors.is_empty() {
                return Ok(Vec::new());
            }
            let t_c = t_c.ok_or_else(|| AppError::invalid("t_c", "give the temperature in °C"))?;
            let q = ToleranceQuery {
                sensor: text(v, "sensor").unwrap_or_default(),
                kind: text(v, "type"),
                class: text(v, "class").unwrap_or_default(),
                element: text(v, "element"),
                t_c,
            };
            let t = reference::tolerance(&q)?;
            Ok(vec![
                line("Sensor", t.sensor),
                line("Class", format!("{} ({})", t.class, t.standard)),
                line(
                    "Permitted deviation",
                    format!("± {:.3} °C at {} °C", t.tolerance_c, t.t_c),
                ),
            ])
        }
        _ => Ok(Vec::new()),
    }
}

/// `GET /convert`.
pub async fn page(
    crate::web::session::MaybeUser(user): crate::web::session::MaybeUser,
    Query(values): Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    let form = values.get("form").cloned().unwrap_or_default();
    let mut errors = HashMap::new();
    let mut general_error = None;
    let result = match compute(&form, &values, &mut errors) {
        Ok(lines) => lines,
        Err(e) => {
            let fields = e.field_errors();
            if fields.is_empty() {
                general_error = Some(e.to_string());
            }
            for f in fields {
                errors.insert(f.field.clone(), f.message.clone());
            }
            Vec::new()
        }
    };
    let page = ConvertPage {
        nav: super::Nav::of(user.as_ref()),
        form,
        values,
        errors,
        general_error,
        result,
        sub_ranges: SUB_RANGE_NAMES.split(", ").collect(),
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}
