//! The reviewer's pages: the review queue, approving or returning a run,
//! and the certificate as a page.

use std::collections::HashMap;
use std::sync::Arc;

use askama::Template;
use axum::Form;
use axum::extract::{Path, State};
use axum::http::header;
use axum::response::{Html, IntoResponse, Redirect, Response};

use super::{Nav, PageError};
use crate::report::pdf::{SwitchChangeText, SwitchRowText};
use crate::report::snapshot::{CertificateSnapshot, SwitchBlock};
use crate::store::{certificates, records, runs};
use crate::web::api::records::ApiError;
use crate::web::api::review::{
    approve_run, cached_pdf, cached_snapshot, header_by_number, return_run,
};
use crate::web::auth::AuthError;
use crate::web::session::PageUser;
use crate::web::{AppError, AppState};

/// A run waiting for review.
#[derive(Debug)]
pub struct Waiting {
    id: i64,
    serial: String,
    performed_on: String,
    submitted_at: String,
}

#[derive(Template)]
#[template(path = "review.html")]
struct ReviewPage {
    nav: Nav,
    waiting: Vec<Waiting>,
}

/// `GET /review`.
pub async fn queue(
    State(state): State<AppState>,
    user: PageUser,
) -> Result<Html<String>, PageError> {
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    let mut waiting = Vec::new();
    for run in runs::all(&mut conn).await.map_err(AppError::from)? {
        if run.status != "submitted" {
            continue;
        }
        let serial = records::instrument_by_id(&mut conn, run.instrument_id)
            .await
            .map_err(AppError::from)?
            .map_or_else(String::new, |i| i.serial);
        waiting.push(Waiting {
            id: run.id,
            serial,
            performed_on: run.performed_on,
            submitted_at: run.submitted_at.unwrap_or_default(),
        });
    }
    waiting.reverse();
    let page = ReviewPage {
        nav: Nav::of(Some(&user)),
        waiting,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

fn page_error(e: ApiError) -> PageError {
    match e {
        ApiError::App(a) => PageError(a),
        ApiError::Auth(AuthError::Forbidden(m) | AuthError::Unauthenticated(m)) => {
            PageError(AppError::Forbidden(m))
        }
        ApiError::Auth(AuthError::Store(a)) => PageError(a),
    }
}

fn version_of(values: &HashMap<String, String>) -> i64 {
    values
        .get("version")
        .and_then(|v| v.parse().ok())
        .unwrap_or(0)
}

/// `POST /runs/{id}/approve`.
pub async fn approve(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let issued = approve_run(&state.db, &user.caller(), id, version_of(&values))
        .await
        .map_err(page_error)?;
    Ok(Redirect::to(&format!("/certificates/{}", issued.number)).into_response())
}

/// `POST /runs/{id}/return`.
pub async fn return_to_technician(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let reason = values.get("reason").map_or("", String::as_str);
    return_run(&state.db, &user.caller(), id, version_of(&values), reason)
        .await
        .map_err(page_error)?;
    Ok(Redirect::to("/review").into_response())
}

#[derive(Template)]
#[template(path = "certificate.html")]
struct CertificatePage<'a> {
    nav: Nav,
    csrf: String,
    may_amend: bool,
    c: &'a CertificateSnapshot,
    sha256: String,
    replaced: bool,
    plot_svg: &'a str,
}

fn opt(v: Option<f64>, unit: &str) -> String {
    v.map_or_else(|| "not recorded".to_owned(), |v| format!("{v} {unit}"))
}

impl CertificatePage<'_> {
    fn ambient(&self) -> String {
        format!(
            "{}, relative humidity {}",
            opt(self.c.conditions.ambient_t_c, "°C"),
            opt(self.c.conditions.ambient_rh_percent, "%")
        )
    }
    fn immersion(&self) -> String {
        opt(self.c.conditions.immersion_mm, "mm")
    }
    fn has_emf(&self) -> bool {
        self.c.results.iter().any(|r| r.deviation_emf_mv.is_some())
    }
    fn emf(&self, v: &Option<f64>) -> String {
        v.map_or_else(|| "—".to_owned(), |v| format!("{v:.4}"))
    }
    fn nominal(&self, v: &f64) -> String {
        format!("{v}")
    }
    fn emf_coefficient(&self, i: &usize, value: &f64) -> String {
        match i {
            0 => format!("b0 = {value:.7e} mV"),
            1 => format!("b1 = {value:.7e} mV/°C"),
            i => format!("b{i} = {value:.7e} mV/°C^{i}"),
        }
    }
    fn coefficient(&self, i: &usize, value: &f64) -> String {
        match i {
            0 => format!("c0 = {value:.7e} °C"),
            1 => format!("c1 = {value:.7e} °C/°C"),
            i => format!("c{i} = {value:.7e} °C/°C^{i}"),
        }
    }
    /// The nominal switch point as the PDF prints it.
    fn switch_nominal(&self, sw: &SwitchBlock) -> String {
        crate::report::pdf::switch_nominal(sw)
    }
    /// Switch point, reset point and differential as the PDF prints them.
    fn switch_rows(&self, sw: &SwitchBlock) -> Vec<SwitchRowText> {
        crate::report::pdf::switch_rows(sw)
    }
    /// What n and s mean, as the PDF prints it.
    fn switch_legend(&self) -> &'static str {
        crate::report::pdf::SWITCH_LEGEND
    }
    /// The observed state changes as the PDF prints them.
    fn switch_changes(&self, sw: &SwitchBlock) -> Vec<SwitchChangeText> {
        crate::report::pdf::switch_changes(sw)
    }
}

/// The deviation plot of a certificate as SVG, from its snapshot.
#[must_use]
pub fn certificate_plot_svg(c: &CertificateSnapshot) -> String {
    let plot = crate::report::plot::DeviationPlot {
        title: format!("Deviation of {}", c.item.serial),
        points: c
            .plot
            .points
            .iter()
            .map(|p| crate::report::plot::PlotPoint {
                t_c: p[0],
                deviation_c: p[1],
                expanded_uncertainty_c: p[2],
                flagged: false,
            })
            .collect(),
        curve: c
            .plot
            .curve
            .iter()
            .map(|p| crate::report::plot::CurveSample {
                t_c: p[0],
                value_c: p[1],
                expanded_uncertainty_c: p[2],
            })
            .collect(),
        tolerances: [
            ("upper tolerance", &c.plot.tolerance_upper),
            ("lower tolerance", &c.plot.tolerance_lower),
        ]
        .into_iter()
        .filter(|(_, pts)| !pts.is_empty())
        .map(|(label, pts)| crate::report::plot::ToleranceLine {
            label: label.to_owned(),
            points: pts.iter().map(|p| (p[0], p[1])).collect(),
        })
        .collect(),
        width_px: 720,
        height_px: 380,
    };
    crate::report::plot::render_svg(&plot)
}

/// The certificate page for a stored snapshot: `nav` and `csrf` of the
/// viewer, whether the amendment form is shown, the fingerprint, whether a
/// later revision replaced it, and its plot (from [`certificate_plot_svg`]).
///
/// # Errors
/// A template error.
pub fn certificate_page_html(
    nav: Nav,
    csrf: String,
    may_amend: bool,
    c: &CertificateSnapshot,
    sha256: String,
    replaced: bool,
    plot_svg: &str,
) -> Result<String, AppError> {
    let page = CertificatePage {
        nav,
        csrf,
        may_amend,
        c,
        sha256,
        replaced,
        plot_svg,
    };
    Ok(page.render()?)
}

/// `?revision=N` of the certificate pages (latest when absent).
fn revision_of(params: &HashMap<String, String>) -> Result<Option<i64>, AppError> {
    match params.get("revision").map(|r| r.trim()) {
        None | Some("") => Ok(None),
        Some(r) => r
            .parse::<i64>()
            .ok()
            .filter(|r| *r >= 0)
            .map(Some)
            .ok_or_else(|| {
                AppError::invalid(
                    "revision",
                    format!("{r:?} is not a revision number (0, 1, 2, ...)"),
                )
            }),
    }
}

/// `GET /certificates/{number}[?revision=N]`: a revision (the latest by
/// default) as a page.
pub async fn certificate(
    State(state): State<AppState>,
    user: PageUser,
    Path(number): Path<String>,
    axum::extract::Query(params): axum::extract::Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    let revision = revision_of(&params)?;
    let row = header_by_number(&state, &number, revision).await?;
    let c = cached_snapshot(&state, &row).await?;
    let plot = if let Some(svg) = state.artefacts.plot_svg.get(&row.sha256) {
        svg
    } else {
        let svg: Arc<str> = certificate_plot_svg(&c).into();
        state
            .artefacts
            .plot_svg
            .insert(row.sha256.clone(), svg.clone(), svg.len());
        svg
    };
    let may_amend = row.replaced_by_id.is_none()
        && matches!(
            user.user.role,
            crate::store::accounts::Role::Reviewer | crate::store::accounts::Role::Administrator
        );
    let html = certificate_page_html(
        Nav::of(Some(&user)),
        user.csrf.clone(),
        may_amend,
        &c,
        row.sha256,
        row.replaced_by_id.is_some(),
        &plot,
    )?;
    Ok(Html(html))
}

/// `GET /certificates/{number}/pdf`.
pub async fn certificate_pdf(
    State(state): State<AppState>,
    _user: PageUser,
    Path(number): Path<String>,
    axum::extract::Query(params): axum::extract::Query<HashMap<String, String>>,
) -> Result<Response, PageError> {
    let revision = revision_of(&params)?;
    let row = header_by_number(&state, &number, revision).await?;
    let pdf = cached_pdf(&state, &row).await?;
    Ok(([(header::CONTENT_TYPE, "application/pdf")], pdf).into_response())
}

/// The answer of a verification.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Verdict {
    /// `current`, `replaced` or `unknown`.
    pub status: &'static str,
    /// A sentence for people.
    pub message: String,
}

/// Checks a certificate number against a fingerprint.
///
/// # Errors
/// A database error.
pub async fn verdict(state: &AppState, number: &str, sha256: &str) -> Result<Verdict, AppError> {
    let mut conn = state.db.acquire().await?;
    let found = certificates::verify(
        &mut conn,
        number.trim(),
        &sha256.trim().to_ascii_lowercase(),
    )
    .await?;
    Ok(match found {
        Some((revision, None)) => Verdict {
            status: "current",
            message: format!("Certificate {} revision {revision} was issued by this laboratory with this fingerprint and is current.", number.trim()),
        },
        Some((revision, Some(newer))) => Verdict {
            status: "replaced",
            message: format!(
                "Certificate {} revision {revision} was issued by this laboratory with this fingerprint, but it has been replaced by revision {newer}.",
                number.trim()
            ),
        },
        None => Verdict {
            status: "unknown",
            message: "No certificate of this laboratory has this number with this fingerprint. Check both for typing errors; if they are right, the document is not authentic.".to_owned(),
        },
    })
}

#[derive(Template)]
#[template(path = "verify.html")]
struct VerifyPage {
    nav: Nav,
    number: String,
    fingerprint: String,
    verdict: Option<Verdict>,
}

/// `GET /verify?number=..&fingerprint=..`: anyone can check a certificate.
pub async fn verify_page(
    State(state): State<AppState>,
    crate::web::session::MaybeUser(user): crate::web::session::MaybeUser,
    axum::extract::Query(q): axum::extract::Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    let number = q.get("number").cloned().unwrap_or_default();
    let fingerprint = q.get("fingerprint").cloned().unwrap_or_default();
    let verdict = if number.trim().is_empty() || fingerprint.trim().is_empty() {
        None
    } else {
        Some(verdict(&state, &number, &fingerprint).await?)
    };
    let page = VerifyPage {
        nav: Nav::of(user.as_ref()),
        number,
        fingerprint,
        verdict,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// `POST /certificates/{number}/amend`.
pub async fn amend(
    State(state): State<AppState>,
    user: PageUser,
    Path(number): Path<String>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let reason = values.get("reason").map_or("", String::as_str);
    let issued =
        crate::web::api::review::amend_certificate(&state.db, &user.caller(), &number, reason)
            .await
            .map_err(page_error)?;
    Ok(Redirect::to(&format!("/certificates/{}", issued.number)).into_response())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::pdf::tests::switch_snapshot;

    fn page(c: CertificateSnapshot) -> String {
        CertificatePage {
            nav: Nav::default(),
            csrf: "csrf-token".to_owned(),
            may_amend: false,
            c: &c,
            sha256: "ab".repeat(32),
            replaced: false,
            plot_svg: "",
        }
        .render()
        .unwrap()
    }

    /// The page without whitespace between tags, so rows can be matched
    /// whole.
    fn squeezed(html: &str) -> String {
        html.lines().map(str::trim).collect::<Vec<_>>().join("")
    }

    #[test]
    fn switch_certificate_page_shows_the_switch_results() {
        let html = squeezed(&page(switch_snapshot()));
        for row in [
            r#"<tr><th scope="row">Switch point</th><td>rising</td><td class="num">3</td><td class="num">85.42</td><td class="num">0.35</td><td class="num">2.00</td><td class="num">0.046</td></tr>"#,
            r#"<tr><th scope="row">Reset point</th><td>falling</td><td class="num">3</td><td class="num">78.10</td><td class="num">0.36</td><td class="num">2.00</td><td class="num">0.056</td></tr>"#,
            r#"<tr><th scope="row">Differential</th><td>—</td><td class="num">—</td><td class="num">7.32</td><td class="num">0.30</td><td class="num">2.00</td><td class="num">—</td></tr>"#,
            r#"<tr><th scope="row" class="num">1</th><td>rising</td><td class="num">85.38</td><td>open</td></tr>"#,
            r#"<tr><th scope="row" class="num">4</th><td>falling</td><td class="num">78.16</td><td>closed</td></tr>"#,
            r#"<tr><th scope="row" class="num">6</th><td>falling</td><td class="num">78.09</td><td>closed</td></tr>"#,
            "<dt>Nominal switch point</dt><dd>85 °C</dd>",
            "<dt>Actuation</dt><dd>opens on rising temperature</dd>",
            r#"<dt>Switch point against tolerance</dt><dd class="outcome">pass</dd>"#,
            // Markup in text is escaped.
            "<li>Contact resistance &#60; 50 mΩ when closed",
            "<p>Result: The switch point conforms to the specification.</p>",
        ] {
            assert!(html.contains(row), "the page lacks {row}");
        }
        assert_eq!(html.matches("<h2>Switch test results</h2>").count(), 1);
        // No set-point results, plot or function on a switch certificate.
        for absent in [
            "<h2>Results</h2>",
            "Reference temperature",
            "<h2>Deviation function</h2>",
            "No set points were measured",
            "style=",
            "<script",
        ] {
            assert!(!html.contains(absent), "the page has {absent:?}");
        }
    }

    #[test]
    fn sensor_certificate_page_keeps_its_results_and_has_no_switch_section() {
        let mut c = switch_snapshot();
        c.switch = None;
        let html = squeezed(&page(c.clone()));
        assert!(html.contains("<h2>Results</h2><p>No set points were measured.</p>"));
        assert!(!html.contains("Switch test results"));
        assert!(html.contains("<p>Result by set point: "));
    }
}
