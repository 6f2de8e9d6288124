//! The quality manager's pages: the certificate register with filters, the
//! reference-standard impact list (with CSV download) and an instrument's
//! calibration history with its drift chart.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::{Html, IntoResponse, Response};

use super::{Nav, PageError};
use crate::domain::history::History;
use crate::store::certificates::{ImpactLine, RegisterLine};
use crate::store::equipment;
use crate::web::api::register::{
    KINDS, OUTCOMES, RegisterQuery, csv_response, history_of, impact_of, search,
};
use crate::web::session::{PageUser, percent_encode};
use crate::web::{AppError, AppState};

/// Certificates per register page.
pub const REGISTER_PAGE: i64 = 50;

/// An option of a select box.
#[derive(Debug)]
pub struct Choice {
    value: String,
    label: String,
}

fn outcome_label(o: &str) -> String {
    match o {
        "no_statement" => "no statement".to_owned(),
        other => other.replace('_', " "),
    }
}

async fn equipment_choices(state: &AppState) -> Result<Vec<Choice>, AppError> {
    let mut conn = state.db.acquire().await?;
    Ok(equipment::all(&mut conn)
        .await?
        .into_iter()
        .map(|e| Choice {
            label: if e.description.is_empty() {
                format!("{} ({})", e.asset_id, e.kind.replace('_', " "))
            } else {
                format!("{}: {}", e.asset_id, e.description)
            },
            value: e.asset_id,
        })
        .collect())
}

#[derive(Template)]
#[template(path = "register.html")]
struct RegisterPage {
    nav: Nav,
    q: String,
    from: String,
    to: String,
    kind: String,
    outcome: String,
    equipment: String,
    kinds: Vec<Choice>,
    outcomes: Vec<Choice>,
    items: Vec<Choice>,
    error: Option<String>,
    lines: Vec<RegisterLine>,
    next: Option<String>,
}

impl RegisterPage {
    fn outcome_text(&self, o: &str) -> String {
        outcome_label(o)
    }
}

fn param(params: &HashMap<String, String>, name: &str) -> String {
    params.get(name).map_or("", |s| s.trim()).to_owned()
}

/// `GET /certificates?q=&from=&to=&kind=&outcome=&equipment=&before=`.
pub async fn register(
    State(state): State<AppState>,
    user: PageUser,
    Query(params): Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    let query = RegisterQuery {
        q: param(&params, "q"),
        from: param(&params, "from"),
        to: param(&params, "to"),
        kind: param(&params, "kind"),
        outcome: param(&params, "outcome"),
        equipment: param(&params, "equipment"),
        before: params.get("before").and_then(|b| b.parse().ok()),
        limit: Some(REGISTER_PAGE),
    };
    let (lines, next, error) = match search(&state, &query).await {
        Ok(page) => {
            let next = page.next_before.map(|last| {
                format!(
                    "/certificates?q={}&from={}&to={}&kind={}&outcome={}&equipment={}&before={last}",
                    percent_encode(&query.q),
                    percent_encode(&query.from),
                    percent_encode(&query.to),
                    percent_encode(&query.kind),
                    percent_encode(&query.outcome),
                    percent_encode(&query.equipment),
                )
            });
            (page.certificates, next, None)
        }
        Err(AppError::Invalid { detail, .. }) => (Vec::new(), None, Some(detail)),
        Err(AppError::NotFound(m)) => (Vec::new(), None, Some(m)),
        Err(e) => return Err(e.into()),
    };
    let page = RegisterPage {
        nav: Nav::of(Some(&user)),
        kinds: KINDS
            .iter()
            .map(|k| Choice {
                value: (*k).to_owned(),
                label: (*k).to_owned(),
            })
            .collect(),
        outcomes: OUTCOMES
            .iter()
            .map(|o| Choice {
                value: (*o).to_owned(),
                label: outcome_label(o),
            })
            .collect(),
        items: equipment_choices(&state).await?,
        q: query.q,
        from: query.from,
        to: query.to,
        kind: query.kind,
        outcome: query.outcome,
        equipment: query.equipment,
        error,
        lines,
        next,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

#[derive(Template)]
#[template(path = "impact.html")]
struct ImpactPage {
    nav: Nav,
    items: Vec<Choice>,
    equipment: String,
    from: String,
    to: String,
    error: Option<String>,
    searched: bool,
    lines: Vec<ImpactLine>,
    csv: String,
}

impl ImpactPage {
    fn outcome_text(&self, o: &str) -> String {
        outcome_label(o)
    }
}

/// `GET /impact?equipment=&from=&to=`: certificates whose runs used an item.
pub async fn impact(
    State(state): State<AppState>,
    user: PageUser,
    Query(params): Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    let equipment = param(&params, "equipment");
    let from = param(&params, "from");
    let to = param(&params, "to");
    let searched = !equipment.is_empty();
    let (lines, error) = if searched {
        match impact_of(&state, &equipment, &from, &to).await {
            Ok(i) => (i.certificates, None),
            Err(AppError::Invalid { detail, .. }) => (Vec::new(), Some(detail)),
            Err(AppError::NotFound(m)) => (Vec::new(), Some(m)),
            Err(e) => return Err(e.into()),
        }
    } else {
        (Vec::new(), None)
    };
    let csv = format!(
        "/impact.csv?equipment={}&from={}&to={}",
        percent_encode(&equipment),
        percent_encode(&from),
        percent_encode(&to)
    );
    let page = ImpactPage {
        nav: Nav::of(Some(&user)),
        items: equipment_choices(&state).await?,
        equipment,
        from,
        to,
        error,
        searched,
        lines,
        csv,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// `GET /impact.csv?equipment=&from=&to=`: the same list as CSV.
pub async fn impact_csv(
    State(state): State<AppState>,
    _user: PageUser,
    Query(params): Query<HashMap<String, String>>,
) -> Result<Response, PageError> {
    let impact = impact_of(
        &state,
        &param(&params, "equipment"),
        &param(&params, "from"),
        &param(&params, "to"),
    )
    .await?;
    Ok(csv_response(&impact).into_response())
}

#[derive(Template)]
#[template(path = "history.html")]
struct HistoryPage {
    nav: Nav,
    history: History,
    chart: String,
}

impl HistoryPage {
    fn outcome_text(&self, o: &str) -> String {
        outcome_label(o)
    }
}

/// `GET /instruments/{serial}`: the instrument's certificates, drift chart
/// and E_n between consecutive calibrations.
pub async fn history(
    State(state): State<AppState>,
    user: PageUser,
    Path(serial): Path<String>,
) -> Result<Html<String>, PageError> {
    let history = history_of(&state, &serial).await?;
    let chart = crate::report::drift::render_drift_svg(
        &history.drift,
        &format!("Deviation of {serial} by calibration date"),
    );
    let page = HistoryPage {
        nav: Nav::of(Some(&user)),
        history,
        chart,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}
