//! The technician's pages: "My work", starting a run, and the run page
//! with set points, readings (typed, pasted or uploaded), live results and
//! submission. They call the same operations as the JSON API, so the rules
//! (equipment status, versions, read-only after submission) are the same.

use std::collections::HashMap;

use askama::Template;
use axum::Form;
use axum::extract::{Multipart, Path, Query, State};
use axum::response::{Html, IntoResponse, Redirect, Response};

use super::{Nav, PageError};
use crate::domain::readings as text_readings;
use crate::domain::results;
use crate::metrology::calib;
use crate::store::accounts::Role;
use crate::store::runs::Reading;
use crate::store::{equipment, lab, records, runs};
use crate::web::api::records::ApiError;
use crate::web::api::runs::{
    self as run_ops, FileReader, RunBody, SetPointBody, add_readings_to, add_set_point_to,
    create_run, file_target, remove_set_point, store_file_readings, submit_run, unusable_reason,
};
use crate::web::auth::AuthError;
use crate::web::session::PageUser;
use crate::web::{AppError, AppState, FieldError};

/// Rows of the typed-readings grid.
pub const GRID_ROWS: usize = 8;

fn today() -> String {
    let now = time::OffsetDateTime::now_utc();
    now.date()
        .format(&time::macros::format_description!("[year]-[month]-[day]"))
        .unwrap_or_default()
}

/// Splits an operation's error into field errors (shown next to fields)
/// or a page error.
fn field_errors(e: ApiError) -> Result<Vec<FieldError>, PageError> {
    match e {
        ApiError::App(AppError::Invalid { errors, .. }) => Ok(errors),
        ApiError::App(AppError::Conflict(m)) => Ok(vec![FieldError::new("", m)]),
        ApiError::App(other) => Err(PageError(other)),
        ApiError::Auth(AuthError::Forbidden(m) | AuthError::Unauthenticated(m)) => {
            Err(PageError(AppError::Forbidden(m)))
        }
        ApiError::Auth(AuthError::Store(e)) => Err(PageError(e)),
    }
}

fn error_map(errors: &[FieldError]) -> HashMap<String, String> {
    let mut map: HashMap<String, String> = HashMap::new();
    for e in errors {
        map.entry(e.field.clone())
            .and_modify(|m| {
                m.push_str("; ");
                m.push_str(&e.message);
            })
            .or_insert_with(|| e.message.clone());
    }
    map
}

fn number(
    values: &HashMap<String, String>,
    name: &str,
    errors: &mut Vec<FieldError>,
) -> Option<f64> {
    let raw = values.get(name)?.trim();
    if raw.is_empty() {
        return None;
    }
    match raw.replace(',', ".").parse::<f64>() {
        Ok(v) if v.is_finite() => Some(v),
        _ => {
            errors.push(FieldError::new(name, format!("{raw:?} is not a number")));
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

// ----------------------------------------------------------------- my work

/// A run in a list.
#[derive(Debug)]
pub struct RunLine {
    id: i64,
    serial: String,
    performed_on: String,
    status: &'static str,
    note: String,
}

/// An item due soon or overdue.
#[derive(Debug)]
pub struct DueLine {
    asset_id: String,
    description: String,
    due_on: String,
    overdue: bool,
}

#[derive(Template)]
#[template(path = "work.html")]
struct WorkPage {
    nav: Nav,
    name: String,
    open: Vec<RunLine>,
    returned: Vec<RunLine>,
    submitted: Vec<RunLine>,
    due: Vec<DueLine>,
    warning_days: i64,
}

/// Plain words for a run's state.
#[must_use]
pub fn status_words(status: &str) -> &'static str {
    match status {
        "open" => "in progress",
        "submitted" => "waiting for review",
        "returned" => "returned for changes",
        "approved" => "approved",
        _ => "unknown",
    }
}

/// `GET /work`: the signed-in person's runs and the equipment due soon.
pub async fn work(
    State(state): State<AppState>,
    user: PageUser,
) -> Result<Html<String>, PageError> {
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    let mut open = Vec::new();
    let mut returned = Vec::new();
    let mut submitted = Vec::new();
    for run in runs::all(&mut conn).await.map_err(AppError::from)? {
        if run.technician_id != user.user.id && user.user.role != Role::Administrator {
            continue;
        }
        let serial = records::instrument_by_id(&mut conn, run.instrument_id)
            .await
            .map_err(AppError::from)?
            .map_or_else(String::new, |i| i.serial);
        let line = RunLine {
            id: run.id,
            serial,
            performed_on: run.performed_on.clone(),
            status: status_words(&run.status),
            note: run.returned_reason.clone().unwrap_or_default(),
        };
        match run.status.as_str() {
            "open" => open.push(line),
            "returned" => returned.push(line),
            "submitted" => submitted.push(line),
            _ => {}
        }
    }
    let warning_days = lab::get(&mut conn)
        .await
        .map_err(AppError::from)?
        .map_or(30, |l| l.due_warning_days);
    let today = today();
    let horizon = (time::OffsetDateTime::now_utc() + time::Duration::days(warning_days))
        .date()
        .format(&time::macros::format_description!("[year]-[month]-[day]"))
        .unwrap_or_default();
    let mut due = Vec::new();
    for item in equipment::all(&mut conn).await.map_err(AppError::from)? {
        if item.status != "in_service" {
            continue;
        }
        if let Some(c) = equipment::certificate_on(&mut conn, item.id, &today)
            .await
            .map_err(AppError::from)?
            && c.due_on <= horizon
        {
            due.push(DueLine {
                overdue: c.due_on < today,
                asset_id: item.asset_id,
                description: item.description,
                due_on: c.due_on,
            });
        }
    }
    let page = WorkPage {
        nav: Nav::of(Some(&user)),
        name: user.user.display_name.clone(),
        open,
        returned,
        submitted,
        due,
        warning_days,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

// ----------------------------------------------------------------- new run

/// A choice in a select list.
#[derive(Debug)]
pub struct Choice {
    value: String,
    label: String,
    /// Why it cannot be chosen, if it cannot.
    blocked: Option<String>,
}

#[derive(Template)]
#[template(path = "run_new.html")]
struct NewRunPage {
    nav: Nav,
    values: HashMap<String, String>,
    errors: HashMap<String, String>,
    instruments: Vec<Choice>,
    references: Vec<Choice>,
    readouts: Vec<Choice>,
    media: Vec<Choice>,
    customers: Vec<Choice>,
}

impl NewRunPage {
    fn v(&self, name: &str) -> &str {
        self.values.get(name).map_or("", String::as_str)
    }
    fn e(&self, name: &str) -> &str {
        self.errors.get(name).map_or("", String::as_str)
    }
    fn is(&self, name: &str, value: &str) -> bool {
        self.v(name) == value
    }
}

async fn new_run_render(
    state: &AppState,
    user: &PageUser,
    mut values: HashMap<String, String>,
    errors: &[FieldError],
) -> Result<Html<String>, PageError> {
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    values
        .entry("performed_on".to_owned())
        .or_insert_with(today);
    values
        .entry("decision_rule".to_owned())
        .or_insert_with(|| "simple".to_owned());
    values
        .entry("guard_band_factor".to_owned())
        .or_insert_with(|| "1".to_owned());
    values
        .entry("condition".to_owned())
        .or_insert_with(|| "as_found".to_owned());
    let date = values.get("performed_on").cloned().unwrap_or_else(today);
    let mut instruments = Vec::new();
    for i in records::instruments(&mut conn)
        .await
        .map_err(AppError::from)?
    {
        let kind = match (&i.tc_type, i.r0_ohm) {
            (Some(t), _) => format!("type {t} thermocouple"),
            (None, Some(r0)) => format!("PRT, R0 = {r0} Ω"),
            _ => i.kind.clone(),
        };
        instruments.push(Choice {
            label: format!("{} ({kind}) {}", i.serial, i.description),
            value: i.serial,
            blocked: None,
        });
    }
    let (mut references, mut readouts, mut media) = (Vec::new(), Vec::new(), Vec::new());
    for item in equipment::all(&mut conn).await.map_err(AppError::from)? {
        let blocked = unusable_reason(&mut conn, &item, &date)
            .await
            .map_err(PageError)?;
        let choice = Choice {
            label: format!(
                "{} ({})",
                item.asset_id,
                if item.description.is_empty() {
                    item.kind.replace('_', " ")
                } else {
                    item.description.clone()
                }
            ),
            value: item.asset_id.clone(),
            blocked,
        };
        match item.kind.as_str() {
            k if k.starts_with("reference_") => references.push(choice),
            "readout" => readouts.push(choice),
            _ => media.push(choice),
        }
    }
    let customers = records::customers(&mut conn)
        .await
        .map_err(AppError::from)?
        .into_iter()
        .map(|c| Choice {
            value: c.id.to_string(),
            label: c.name,
            blocked: None,
        })
        .collect();
    let page = NewRunPage {
        nav: Nav::of(Some(user)),
        values,
        errors: error_map(errors),
        instruments,
        references,
        readouts,
        media,
        customers,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// `GET /runs/new`.
pub async fn new_run_page(
    State(state): State<AppState>,
    user: PageUser,
    Query(values): Query<HashMap<String, String>>,
) -> Result<Html<String>, PageError> {
    new_run_render(&state, &user, values, &[]).await
}

/// `POST /runs/new`: starts a run, or registers an instrument on the spot
/// (`action=register`) and comes back to the form with it chosen.
pub async fn new_run(
    State(state): State<AppState>,
    user: PageUser,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let caller = user.caller();
    let mut errors = Vec::new();
    if values.get("action").map(String::as_str) == Some("register") {
        let body = crate::web::api::records::InstrumentBody {
            serial: text(&values, "new_serial").unwrap_or_default(),
            kind: text(&values, "new_kind").unwrap_or_default(),
            tc_type: text(&values, "new_tc_type"),
            r0_ohm: number(&values, "new_r0_ohm", &mut errors),
            description: text(&values, "new_description").unwrap_or_default(),
            manufacturer: String::new(),
            model: String::new(),
            customer_id: text(&values, "new_customer_id")
                .and_then(|c| c.parse().ok())
                .unwrap_or(0),
        };
        if errors.is_empty() {
            match register_instrument(&state, &caller, body).await {
                Ok(serial) => {
                    let mut values = values.clone();
                    values.insert("instrument_serial".to_owned(), serial);
                    for k in [
                        "new_serial",
                        "new_kind",
                        "new_tc_type",
                        "new_r0_ohm",
                        "new_description",
                    ] {
                        values.remove(k);
                    }
                    return Ok(new_run_render(&state, &user, values, &[])
                        .await?
                        .into_response());
                }
                Err(e) => {
                    errors = field_errors(e)?
                        .into_iter()
                        .map(|f| FieldError::new(format!("new_{}", f.field), f.message))
                        .collect()
                }
            }
        }
        return Ok(new_run_render(&state, &user, values, &errors)
            .await?
            .into_response());
    }
    let body = RunBody {
        instrument_serial: text(&values, "instrument_serial").unwrap_or_default(),
        reference: text(&values, "reference").unwrap_or_default(),
        reference_readout: text(&values, "reference_readout"),
        uut_readout: text(&values, "uut_readout"),
        medium: text(&values, "medium"),
        performed_on: text(&values, "performed_on").unwrap_or_default(),
        procedure_ref: text(&values, "procedure_ref").unwrap_or_default(),
        location: text(&values, "location").unwrap_or_default(),
        ambient_t_c: number(&values, "ambient_t_c", &mut errors),
        ambient_rh_percent: number(&values, "ambient_rh_percent", &mut errors),
        rj_method: text(&values, "rj_method"),
        immersion_mm: number(&values, "immersion_mm", &mut errors),
        condition: text(&values, "condition").unwrap_or_else(|| "as_found".to_owned()),
        decision_rule: text(&values, "decision_rule").unwrap_or_else(|| "simple".to_owned()),
        guard_band_factor: number(&values, "guard_band_factor", &mut errors).unwrap_or(1.0),
        tolerance_class: text(&values, "tolerance_class"),
        tolerance_limit_c: number(&values, "tolerance_limit_c", &mut errors),
        fit_degree: text(&values, "fit_degree").and_then(|d| d.parse().ok()),
        extra_budget: None,
    };
    if body.reference.is_empty() {
        errors.push(FieldError::new(
            "reference",
            "choose the reference standard",
        ));
    }
    if body.instrument_serial.is_empty() {
        errors.push(FieldError::new(
            "instrument_serial",
            "choose the instrument under test, or register it below",
        ));
    }
    if !errors.is_empty() {
        return Ok(new_run_render(&state, &user, values, &errors)
            .await?
            .into_response());
    }
    match create_run(&state.db, &caller, body).await {
        Ok(run) => Ok(Redirect::to(&format!("/runs/{}", run.id)).into_response()),
        Err(e) => {
            let errors = field_errors(e)?;
            Ok(new_run_render(&state, &user, values, &errors)
                .await?
                .into_response())
        }
    }
}

async fn register_instrument(
    state: &AppState,
    caller: &crate::web::auth::Caller,
    body: crate::web::api::records::InstrumentBody,
) -> Result<String, ApiError> {
    caller.may_change(
        crate::web::api::records::RECEIVING_ROLES,
        "registering instruments",
    )?;
    let fields = body.validate()?;
    let mut tx = crate::store::begin_write(&state.db).await?;
    if records::customer(&mut tx, fields.customer_id)
        .await?
        .is_none()
    {
        return Err(AppError::invalid(
            "customer_id",
            "choose the customer who owns the instrument",
        )
        .into());
    }
    let instrument = records::create_instrument(&mut tx, &fields).await.map_err(
        crate::web::api::records::unique(format!(
            "an instrument with serial number {:?} is already registered",
            fields.serial
        )),
    )?;
    let after = serde_json::to_value(&instrument).unwrap_or_default();
    crate::web::api::records::record(
        &mut tx,
        caller,
        "create",
        "instrument",
        &instrument.serial,
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(instrument.serial)
}

// ----------------------------------------------------------------- run page

/// A reading as shown.
#[derive(Debug)]
pub struct ReadingLine {
    position: i64,
    taken_at: String,
    reference: String,
    uut: String,
    rj: String,
}

/// A budget row as shown.
#[derive(Debug)]
pub struct BudgetLine {
    name: String,
    u: String,
    sensitivity: String,
    contribution: String,
    share: f64,
    share_text: String,
}

/// A set point's results as shown.
#[derive(Debug)]
pub struct SetPointView {
    n: usize,
    mean_t_ref: String,
    mean_deviation: String,
    deviation_emf: Option<String>,
    type_a: String,
    budget: Vec<BudgetLine>,
    u_c: String,
    k: String,
    nu_eff: String,
    expanded: String,
    reported: String,
    cmc_note: Option<String>,
    outcome: Option<String>,
    rule: Option<String>,
    warnings: Vec<String>,
}

/// Readings listed at each end of a set point on the run page; the ones
/// between are counted, not listed.
const PAGE_READINGS_EACH_END: i64 = 100;

/// A set point with its readings, results and form state.
#[derive(Debug)]
pub struct SetPointBlock {
    id: i64,
    nominal: String,
    readings: Vec<ReadingLine>,
    /// All readings of the set point.
    count: i64,
    /// Readings not listed on the page (between the first and the last).
    hidden: i64,
    /// Position after which the hidden ones start.
    hidden_after: i64,
    results: Option<SetPointView>,
    /// Grid values on a failed save: (reference, uut, rj) per row.
    grid: Vec<(String, String, String)>,
    paste: String,
    errors: HashMap<String, String>,
}

impl SetPointBlock {
    fn e(&self, name: &str) -> &str {
        self.errors.get(name).map_or("", String::as_str)
    }
    fn row_error(&self, row: &usize) -> &str {
        self.errors
            .get(&format!("row_{row}"))
            .map_or("", String::as_str)
    }
}

/// The fitted function as shown.
#[derive(Debug)]
pub struct FitView {
    quantity: &'static str,
    terms: Vec<(String, String, String)>,
    residuals: Vec<(String, String, bool)>,
    valid: String,
    note: Option<String>,
}

#[derive(Template)]
#[template(path = "run.html")]
struct RunPage {
    nav: Nav,
    csrf: String,
    run_id: i64,
    version: i64,
    editable: bool,
    status: &'static str,
    facts: Vec<(&'static str, String)>,
    measured_rj: bool,
    reference_unit: &'static str,
    uut_unit: &'static str,
    set_points: Vec<SetPointBlock>,
    results_error: Option<String>,
    fit: Option<FitView>,
    emf_fit: Option<FitView>,
    plot_svg: String,
    run_warnings: Vec<String>,
    page_errors: HashMap<String, String>,
    new_set_point: String,
    /// The viewer may approve or return this run.
    reviewable: bool,
    /// The run's certificate, once issued.
    certificate: Option<String>,
    /// Equipment used and its state on the run date.
    equipment_rows: Vec<EquipmentRow>,
    /// The switch test, for runs of a temperature switch.
    switch: Option<SwitchView>,
}

/// A switch run's settings, ramps and results as the run page shows them.
#[derive(Debug)]
struct SwitchView {
    nominal: String,
    rising: bool,
    opens: bool,
    rate: String,
    tau: String,
    lag: String,
    resolution: String,
    ramps: Vec<RampLine>,
    results: Option<crate::report::snapshot::SwitchBlock>,
    error: Option<String>,
}

/// One ramp in the list.
#[derive(Debug)]
struct RampLine {
    id: i64,
    position: i64,
    direction: String,
    summary: String,
}

fn opt_text(v: Option<f64>) -> String {
    v.map_or_else(String::new, |v| v.to_string())
}

async fn switch_view(
    conn: &mut sqlx::SqliteConnection,
    run: &crate::store::runs::Run,
) -> Result<SwitchView, AppError> {
    let settings = crate::store::switches::settings(conn, run.id).await?;
    let ramps = crate::store::switches::ramps(conn, run.id)
        .await?
        .into_iter()
        .map(|r| {
            let summary = match (&r.readings, r.observed_t_c) {
                (Some(text), _) => {
                    let rows: Vec<(f64, String)> = serde_json::from_str(text).unwrap_or_default();
                    match (rows.first(), rows.last()) {
                        (Some(a), Some(b)) => format!(
                            "{} readings, {} °C ({}) to {} °C ({})",
                            rows.len(),
                            a.0,
                            a.1,
                            b.0,
                            b.1
                        ),
                        _ => "no readings".to_owned(),
                    }
                }
                (None, Some(t)) => format!("change observed at {t} °C"),
                (None, None) => String::new(),
            };
            RampLine {
                id: r.id,
                position: r.position,
                direction: r.direction,
                summary,
            }
        })
        .collect();
    let (results, error) = if settings.is_some() {
        match crate::domain::switches::results(conn, run).await {
            Ok(out) => (Some(out.switch), None),
            Err(e) => (None, Some(e.to_string())),
        }
    } else {
        (
            None,
            Some(
                "Give the nominal switch point and what the switch does, then record the ramps."
                    .to_owned(),
            ),
        )
    };
    Ok(SwitchView {
        nominal: settings
            .as_ref()
            .map_or_else(String::new, |s| s.nominal_t_c.to_string()),
        rising: settings
            .as_ref()
            .is_none_or(|s| s.actuation_direction == "rising"),
        opens: settings
            .as_ref()
            .is_none_or(|s| s.contact_action == "opens"),
        rate: opt_text(settings.as_ref().and_then(|s| s.ramp_rate_c_per_min)),
        tau: opt_text(settings.as_ref().and_then(|s| s.time_constant_s)),
        lag: opt_text(settings.as_ref().and_then(|s| s.lag_half_width_c)),
        resolution: settings
            .as_ref()
            .map_or_else(String::new, |s| s.observed_resolution_c.to_string()),
        ramps,
        results,
        error,
    })
}

/// One equipment item of a run as it stood on the run date.
#[derive(Debug)]
struct EquipmentRow {
    role: &'static str,
    asset: String,
    record: String,
    state: String,
    usable: bool,
}

impl RunPage {
    fn pe(&self, name: &str) -> &str {
        self.page_errors.get(name).map_or("", String::as_str)
    }
}

fn fmt(v: f64, decimals: usize) -> String {
    format!("{v:.decimals$}")
}

fn optional(v: Option<f64>, decimals: usize) -> String {
    v.map_or_else(String::new, |v| fmt(v, decimals))
}

fn fit_view(f: &calib::DeviationFunction) -> FitView {
    let unit = f.quantity.unit();
    let terms = f
        .coefficients
        .iter()
        .zip(&f.standard_uncertainties)
        .enumerate()
        .map(|(i, (c, u))| {
            let term = match i {
                0 => format!("c0 ({unit})"),
                1 => format!("c1 ({unit}/°C)"),
                i => format!("c{i} ({unit}/°C^{i})"),
            };
            (term, format!("{c:.6e}"), format!("{u:.2e}"))
        })
        .collect();
    let residuals = f
        .t_ref_c
        .iter()
        .zip(&f.residuals)
        .enumerate()
        .map(|(i, (t, r))| {
            (
                fmt(*t, 3),
                format!("{r:+.4}"),
                f.flagged.iter().any(|x| x.set_point == i),
            )
        })
        .collect();
    FitView {
        quantity: if unit == "mV" {
            "emf deviation (mV)"
        } else {
            "deviation (°C)"
        },
        terms,
        residuals,
        valid: format!(
            "{} °C to {} °C",
            fmt(f.validity_c.0, 2),
            fmt(f.validity_c.1, 2)
        ),
        note: f.degree_note.clone(),
    }
}

fn set_point_view(sp: &calib::SetPointResult) -> SetPointView {
    let b = &sp.budget;
    SetPointView {
        n: sp.n,
        mean_t_ref: fmt(sp.mean_t_ref_c, 4),
        mean_deviation: format!("{:+.4}", sp.mean_deviation_c),
        deviation_emf: sp.mean_deviation_emf_mv.map(|v| format!("{v:+.5} mV")),
        type_a: format!("{:.4}", sp.std_dev_of_mean_c),
        budget: b
            .components
            .iter()
            .map(|c| BudgetLine {
                name: c.name.clone(),
                u: format!("{:.3e}", c.standard_uncertainty),
                sensitivity: format!("{:.4}", c.sensitivity),
                contribution: format!("{:.4}", c.contribution.abs()),
                share: c.variance_share.clamp(0.0, 1.0),
                share_text: format!("{:.1} %", 100.0 * c.variance_share),
            })
            .collect(),
        u_c: format!("{:.4}", b.combined_standard_uncertainty),
        k: format!("{:.2}", b.coverage_factor),
        nu_eff: if b.effective_dof.is_finite() {
            format!("{:.1}", b.effective_dof)
        } else {
            "∞".to_owned()
        },
        expanded: format!("{:.4}", b.expanded_uncertainty),
        reported: format!(
            "{} °C ± {} °C",
            sp.reported.value_text, sp.reported.uncertainty_text
        ),
        cmc_note: sp
            .reported
            .cmc_floor_applied
            .then(|| format!("U raised to the lab's CMC of {} °C", optional(sp.cmc_c, 3))),
        outcome: sp
            .conformity
            .as_ref()
            .map(|c| c.decision.outcome.label().to_owned()),
        rule: sp.conformity.as_ref().map(|c| c.decision.statement.clone()),
        warnings: sp.warnings.iter().map(|w| w.message.clone()).collect(),
    }
}

/// What a failed readings save leaves on the page.
#[derive(Debug, Default)]
struct FormState {
    set_point_id: i64,
    grid: Vec<(String, String, String)>,
    paste: String,
    errors: HashMap<String, String>,
}

async fn run_render(
    state: &AppState,
    user: &PageUser,
    id: i64,
    form: Option<FormState>,
    page_errors: HashMap<String, String>,
    new_set_point: String,
) -> Result<Html<String>, PageError> {
    let mut conn = state.db.acquire().await.map_err(AppError::from)?;
    let run = run_ops::run_or_404(&mut conn, id)
        .await
        .map_err(PageError)?;
    let instrument = records::instrument_by_id(&mut conn, run.instrument_id)
        .await
        .map_err(AppError::from)?
        .ok_or_else(|| AppError::NotFound("the run's instrument is missing".to_owned()))?;
    let reference = equipment::by_id(&mut conn, run.reference_id)
        .await
        .map_err(AppError::from)?
        .ok_or_else(|| AppError::NotFound("the run's reference is missing".to_owned()))?;
    let medium = match run.medium_id {
        Some(m) => equipment::by_id(&mut conn, m)
            .await
            .map_err(AppError::from)?
            .map(|e| e.asset_id),
        None => None,
    };
    let editable = matches!(run.status.as_str(), "open" | "returned")
        && (run.technician_id == user.user.id || user.user.role == Role::Administrator);
    let reference_unit = match reference.kind.as_str() {
        "reference_thermocouple" => "mV",
        "reference_indicating" => "°C",
        _ => "Ω",
    };
    let uut_unit = match (instrument.kind.as_str(), run.rj_method.as_str()) {
        ("thermocouple", "compensated") | ("indicating", _) => "°C",
        ("thermocouple", _) => "mV",
        _ => "Ω",
    };
    let mut facts = vec![
        (
            "Unit under test",
            format!("{} {}", instrument.serial, instrument.description),
        ),
        ("Reference standard", reference.asset_id.clone()),
        (
            "Medium",
            medium.unwrap_or_else(|| "not recorded".to_owned()),
        ),
        ("Date", run.performed_on.clone()),
        ("Procedure", run.procedure_ref.clone()),
        ("Condition", run.condition.replace('_', " ")),
        (
            "Decision rule",
            match run.decision_rule.as_str() {
                "simple" => "simple acceptance".to_owned(),
                "guarded" => format!("guarded acceptance, w = {} U", run.guard_band_factor),
                "guarded_non_binary" => format!(
                    "guarded, with conditional outcomes, w = {} U",
                    run.guard_band_factor
                ),
                _ => "no conformity statement".to_owned(),
            },
        ),
    ];
    if let Some(c) = &run.tolerance_class {
        facts.push(("Tolerance", format!("class {c}")));
    }
    if let Some(l) = run.tolerance_limit_c {
        facts.push(("Tolerance", format!("± {l} °C (customer limit)")));
    }
    if instrument.kind == "thermocouple" {
        facts.push(("Reference junction", run.rj_method.replace('_', " ")));
    }
    if let Some(reason) = &run.returned_reason {
        facts.push(("Returned because", reason.clone()));
    }

    // The equipment as it stood on the run date (what the reviewer checks).
    let mut equipment_rows = Vec::new();
    for (role, item_id) in [
        ("reference standard", Some(run.reference_id)),
        ("reference readout", run.reference_readout_id),
        ("readout of the item", run.uut_readout_id),
        ("medium", run.medium_id),
    ] {
        let Some(item_id) = item_id else { continue };
        let Some(item) = equipment::by_id(&mut conn, item_id)
            .await
            .map_err(AppError::from)?
        else {
            continue;
        };
        let record = if role == "medium" {
            run_ops::characterised_on(&mut conn, item.id, &run.performed_on)
                .await
                .map_err(PageError)?
                .map_or_else(
                    || "no characterisation".to_owned(),
                    |on| format!("characterised on {on}"),
                )
        } else {
            equipment::certificate_on(&mut conn, item.id, &run.performed_on)
                .await
                .map_err(AppError::from)?
                .map_or_else(
                    || "no certificate".to_owned(),
                    |c| {
                        format!(
                            "certificate {} of {}, due {}",
                            c.number, c.calibrated_on, c.due_on
                        )
                    },
                )
        };
        let problem = run_ops::unusable_reason(&mut conn, &item, &run.performed_on)
            .await
            .map_err(PageError)?;
        equipment_rows.push(EquipmentRow {
            role,
            asset: if item.description.is_empty() {
                item.asset_id.clone()
            } else {
                format!("{} ({})", item.asset_id, item.description)
            },
            record,
            state: problem
                .clone()
                .unwrap_or_else(|| format!("usable on {}", run.performed_on)),
            usable: problem.is_none(),
        });
    }

    let switch = if instrument.kind == "switch" {
        Some(switch_view(&mut conn, &run).await.map_err(PageError)?)
    } else {
        None
    };

    // Results (a failure is shown, not fatal).
    let (computed, results_error) = if switch.is_some() {
        (None, None)
    } else {
        match results::prepare(&mut conn, &run).await {
            Ok(prepared) => {
                let model = prepared.model;
                match tokio::task::spawn_blocking(move || calib::evaluate_run(&model)).await {
                    Ok(Ok(r)) => (Some(r), None),
                    Ok(Err(e)) => (None, Some(e.to_string())),
                    Err(e) => (None, Some(format!("the calculation failed: {e}"))),
                }
            }
            Err(e) => (None, Some(e.to_string())),
        }
    };
    let set_point_rows = runs::set_points(&mut conn, id)
        .await
        .map_err(AppError::from)?;
    let mut set_points = Vec::new();
    let mut form = form;
    for (i, sp) in set_point_rows.iter().enumerate() {
        // A logger file may bring a million readings: the page lists the
        // first and the last ones and says how many it leaves out.
        let count = runs::reading_count(&mut conn, sp.id)
            .await
            .map_err(AppError::from)?;
        let mut shown = runs::readings_in(&mut conn, sp.id, 1, PAGE_READINGS_EACH_END)
            .await
            .map_err(AppError::from)?;
        let last = runs::last_position(&mut conn, sp.id)
            .await
            .map_err(AppError::from)?;
        let tail_from = (last - PAGE_READINGS_EACH_END + 1).max(PAGE_READINGS_EACH_END + 1);
        if tail_from <= last {
            shown.extend(
                runs::readings_in(&mut conn, sp.id, tail_from, last)
                    .await
                    .map_err(AppError::from)?,
            );
        }
        let hidden = count - shown.len() as i64;
        let readings = shown
            .into_iter()
            .map(|r| ReadingLine {
                position: r.position,
                taken_at: r.taken_at.unwrap_or_default(),
                reference: r.reference_signal.to_string(),
                uut: r.uut_signal.to_string(),
                rj: r.rj_t_c.map(|v| v.to_string()).unwrap_or_default(),
            })
            .collect();
        let results = computed
            .as_ref()
            .and_then(|c| c.set_points.get(i))
            .map(set_point_view);
        let mine = form.as_ref().is_some_and(|f| f.set_point_id == sp.id);
        let state = if mine {
            form.take().unwrap_or_default()
        } else {
            FormState::default()
        };
        let mut grid = state.grid;
        grid.resize(GRID_ROWS, (String::new(), String::new(), String::new()));
        set_points.push(SetPointBlock {
            id: sp.id,
            nominal: fmt(sp.nominal_t_c, 2),
            readings,
            count,
            hidden,
            hidden_after: PAGE_READINGS_EACH_END,
            results,
            grid,
            paste: state.paste,
            errors: state.errors,
        });
    }
    let fit = computed
        .as_ref()
        .and_then(|c| c.deviation_function.as_ref())
        .map(fit_view);
    let emf_fit = computed
        .as_ref()
        .and_then(|c| c.emf_deviation_function.as_ref())
        .map(fit_view);
    let plot_svg = computed
        .as_ref()
        .map(|c| crate::report::deviation_plot(c, &format!("Run {id}: {}", instrument.serial)))
        .unwrap_or_default();
    let run_warnings = computed
        .as_ref()
        .map(|c| c.warnings.iter().map(|w| w.message.clone()).collect())
        .unwrap_or_default();
    let reviewable = run.status == "submitted"
        && matches!(user.user.role, Role::Reviewer | Role::Administrator)
        && run.technician_id != user.user.id;
    let certificate = crate::store::certificates::latest_for_run(&mut conn, id)
        .await
        .map_err(AppError::from)?
        .map(|(number, _)| number);
    let page = RunPage {
        reviewable,
        certificate,
        equipment_rows,
        switch,
        nav: Nav::of(Some(user)),
        csrf: user.csrf.clone(),
        run_id: id,
        version: run.version,
        editable,
        status: status_words(&run.status),
        facts,
        measured_rj: run.rj_method == "measured",
        reference_unit,
        uut_unit,
        set_points,
        results_error,
        fit,
        emf_fit,
        plot_svg,
        run_warnings,
        page_errors,
        new_set_point,
    };
    Ok(Html(page.render().map_err(AppError::from)?))
}

/// `GET /runs/{id}`.
pub async fn run_page(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
) -> Result<Html<String>, PageError> {
    run_render(&state, &user, id, None, HashMap::new(), String::new()).await
}

fn version_of(values: &HashMap<String, String>) -> i64 {
    values
        .get("version")
        .and_then(|v| v.parse().ok())
        .unwrap_or(0)
}

/// `POST /runs/{id}/set-points`.
pub async fn add_set_point(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let raw = values.get("nominal_t_c").cloned().unwrap_or_default();
    let mut errors = Vec::new();
    let nominal = number(&values, "nominal_t_c", &mut errors);
    if nominal.is_none() && errors.is_empty() {
        errors.push(FieldError::new(
            "nominal_t_c",
            "give the set point temperature in °C",
        ));
    }
    if let Some(nominal_t_c) = nominal {
        match add_set_point_to(
            &state.db,
            &user.caller(),
            id,
            SetPointBody {
                nominal_t_c,
                version: version_of(&values),
            },
        )
        .await
        {
            Ok(_) => return Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
            Err(e) => errors = field_errors(e)?,
        }
    }
    let mut map = error_map(&errors);
    if let Some(general) = map.remove("") {
        map.insert("nominal_t_c".to_owned(), general);
    }
    Ok(run_render(&state, &user, id, None, map, raw)
        .await?
        .into_response())
}

/// What the readings form brought: its text fields (grid cells, pasted
/// text, CSRF token, version) and, when a file was chosen, the file read
/// and checked as it arrived.
struct ReadingsForm {
    values: HashMap<String, String>,
    file: Option<Result<FileRead, AppError>>,
}

/// A logger file as read: its readings, size in bytes and SHA-256.
type FileRead = (crate::store::runs::ReadingColumns, u64, String);

fn form_error(e: &axum::extract::multipart::MultipartError, limit: u64) -> PageError {
    if e.status() == axum::http::StatusCode::PAYLOAD_TOO_LARGE {
        PageError(AppError::PayloadTooLarge {
            limit_bytes: usize::try_from(limit).unwrap_or(usize::MAX),
        })
    } else {
        PageError(AppError::BadRequest(format!(
            "the form could not be read: {e}"
        )))
    }
}

/// Reads the readings form (multipart). A file streams through the same
/// reader as the API's logger upload, up to the upload limit; every other
/// field is held to the general body limit.
async fn read_readings_form(
    state: &AppState,
    id: i64,
    set_point_id: i64,
    mut multipart: Multipart,
) -> Result<ReadingsForm, PageError> {
    let (run, instrument) = file_target(&state.db, id, set_point_id).await?;
    let text_limit = state.http.body_limit_bytes;
    let upload_limit = state.http.upload_limit_bytes;
    let mut values = HashMap::new();
    let mut file = None;
    while let Some(mut field) = multipart
        .next_field()
        .await
        .map_err(|e| form_error(&e, upload_limit))?
    {
        let name = field.name().unwrap_or("").to_owned();
        if name == "file" {
            let mut reader = FileReader::new(&instrument, &run.rj_method);
            let mut failed = None;
            while let Some(chunk) = field
                .chunk()
                .await
                .map_err(|e| form_error(&e, upload_limit))?
            {
                if let Err(e) = reader.chunk(&chunk) {
                    failed = Some(e);
                    break;
                }
            }
            if failed.is_some() || reader.bytes > 0 {
                file = Some(match failed {
                    Some(e) => Err(e),
                    None => reader.finish(),
                });
            }
            continue;
        }
        let mut bytes = Vec::new();
        while let Some(chunk) = field
            .chunk()
            .await
            .map_err(|e| form_error(&e, upload_limit))?
        {
            if bytes.len() + chunk.len() > text_limit {
                return Err(PageError(AppError::PayloadTooLarge {
                    limit_bytes: text_limit,
                }));
            }
            bytes.extend_from_slice(&chunk);
        }
        let text = String::from_utf8(bytes)
            .map_err(|_| AppError::invalid(name.clone(), "is not text (UTF-8)"))?;
        values.insert(name, text);
    }
    Ok(ReadingsForm { values, file })
}

/// The field errors of a logger file, all shown at the file field; other
/// errors end the request.
fn file_errors(e: AppError) -> Result<Vec<FieldError>, PageError> {
    match e {
        AppError::Invalid { errors, .. } => Ok(errors
            .into_iter()
            .map(|f| {
                let message = if f.message.starts_with(&f.field) {
                    f.message
                } else {
                    format!("{}: {}", f.field, f.message)
                };
                FieldError::new("file", message)
            })
            .collect()),
        other => Err(PageError(other)),
    }
}

/// `POST /runs/{id}/set-points/{set_point_id}/readings`.
pub async fn add_readings(
    State(state): State<AppState>,
    user: PageUser,
    Path((id, set_point_id)): Path<(i64, i64)>,
    multipart: Multipart,
) -> Result<Response, PageError> {
    let ReadingsForm { values, file } =
        read_readings_form(&state, id, set_point_id, multipart).await?;
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    if let Some(read) = file {
        let errors = match read {
            Ok((columns, bytes, sha256)) => match store_file_readings(
                &state.db,
                &user.caller(),
                id,
                set_point_id,
                version_of(&values),
                &columns,
                bytes,
                sha256,
            )
            .await
            {
                Ok(_) => {
                    return Ok(
                        Redirect::to(&format!("/runs/{id}#set-point-{set_point_id}"))
                            .into_response(),
                    );
                }
                Err(e) => field_errors(e)?
                    .into_iter()
                    .map(|f| FieldError::new("file", f.message))
                    .collect(),
            },
            Err(e) => file_errors(e)?,
        };
        let state_back = FormState {
            set_point_id,
            grid: vec![(String::new(), String::new(), String::new()); GRID_ROWS],
            paste: values.get("paste").cloned().unwrap_or_default(),
            errors: error_map(&errors),
        };
        return Ok(run_render(
            &state,
            &user,
            id,
            Some(state_back),
            HashMap::new(),
            String::new(),
        )
        .await?
        .into_response());
    }
    let paste = values.get("paste").map_or("", |s| s.trim());
    let grid: Vec<(String, String, String)> = (0..GRID_ROWS)
        .map(|i| {
            let cell = |c: &str| {
                values
                    .get(&format!("{c}_{i}"))
                    .map_or(String::new(), |s| s.trim().to_owned())
            };
            (cell("ref"), cell("uut"), cell("rj"))
        })
        .collect();
    let mut errors: Vec<FieldError> = Vec::new();
    let readings: Vec<Reading> = if !paste.is_empty() {
        match text_readings::parse(paste) {
            Ok(r) => r,
            Err(e) => {
                errors.push(FieldError::new("paste", e.to_string()));
                Vec::new()
            }
        }
    } else {
        let mut out = Vec::new();
        for (i, (r, u, rj)) in grid.iter().enumerate() {
            if r.is_empty() && u.is_empty() && rj.is_empty() {
                continue;
            }
            let parse = |text: &str, what: &str, errors: &mut Vec<FieldError>| -> Option<f64> {
                match text.replace(',', ".").parse::<f64>() {
                    Ok(v) if v.is_finite() => Some(v),
                    _ => {
                        errors.push(FieldError::new(
                            format!("row_{i}"),
                            format!("row {}: {what} {text:?} is not a number", i + 1),
                        ));
                        None
                    }
                }
            };
            let reference = parse(r, "the reference reading", &mut errors);
            let uut = parse(u, "the UUT reading", &mut errors);
            let rj_t_c = if rj.is_empty() {
                None
            } else {
                parse(rj, "the junction temperature", &mut errors)
            };
            if let (Some(reference_signal), Some(uut_signal)) = (reference, uut) {
                out.push(Reading {
                    position: 0,
                    taken_at: None,
                    reference_signal,
                    uut_signal,
                    rj_t_c,
                });
            }
        }
        if out.is_empty() && errors.is_empty() {
            errors.push(FieldError::new(
                "row_0",
                "type at least one pair of readings, paste a block, or choose a file",
            ));
        }
        out
    };
    if errors.is_empty() {
        match add_readings_to(
            &state.db,
            &user.caller(),
            id,
            set_point_id,
            version_of(&values),
            readings,
        )
        .await
        {
            Ok(_) => {
                return Ok(
                    Redirect::to(&format!("/runs/{id}#set-point-{set_point_id}")).into_response(),
                );
            }
            Err(e) => {
                // Errors about `readings[i].field` point at grid row i when typed.
                for f in field_errors(e)? {
                    let row = f
                        .field
                        .strip_prefix("readings[")
                        .and_then(|rest| rest.split(']').next())
                        .and_then(|n| n.parse::<usize>().ok());
                    let target = match (row, paste.is_empty()) {
                        (_, false) => "paste".to_owned(),
                        (Some(n), true) => format!("row_{n}"),
                        (None, true) => "row_0".to_owned(),
                    };
                    let message = match row {
                        Some(n) => format!("reading {}: {}", n + 1, f.message),
                        None => f.message,
                    };
                    errors.push(FieldError::new(target, message));
                }
            }
        }
    }
    let state_back = FormState {
        set_point_id,
        grid,
        paste: values.get("paste").cloned().unwrap_or_default(),
        errors: error_map(&errors),
    };
    Ok(run_render(
        &state,
        &user,
        id,
        Some(state_back),
        HashMap::new(),
        String::new(),
    )
    .await?
    .into_response())
}

/// `POST /runs/{id}/set-points/{set_point_id}/delete`.
pub async fn delete_set_point(
    State(state): State<AppState>,
    user: PageUser,
    Path((id, set_point_id)): Path<(i64, i64)>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    match remove_set_point(
        &state.db,
        &user.caller(),
        id,
        set_point_id,
        version_of(&values),
    )
    .await
    {
        Ok(()) => Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
        Err(e) => {
            let map = error_map(&field_errors(e)?);
            Ok(run_render(&state, &user, id, None, map, String::new())
                .await?
                .into_response())
        }
    }
}

/// `POST /runs/{id}/submit`.
pub async fn submit(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    match submit_run(&state.db, &user.caller(), id, version_of(&values)).await {
        Ok(_) => Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
        Err(e) => {
            let mut map = error_map(&field_errors(e)?);
            if let Some(m) = map.remove("set_points").or_else(|| map.remove("")) {
                map.insert("submit".to_owned(), m);
            }
            Ok(run_render(&state, &user, id, None, map, String::new())
                .await?
                .into_response())
        }
    }
}

fn optional_number(
    values: &HashMap<String, String>,
    name: &str,
    errors: &mut Vec<FieldError>,
) -> Option<f64> {
    match values.get(name).map(|v| v.trim()).filter(|v| !v.is_empty()) {
        None => None,
        Some(v) => match v.replace(',', ".").parse::<f64>() {
            Ok(x) => Some(x),
            Err(_) => {
                errors.push(FieldError::new(name, format!("{v:?} is not a number")));
                None
            }
        },
    }
}

async fn switch_error(
    state: &AppState,
    user: &PageUser,
    id: i64,
    key: &str,
    errors: &[FieldError],
) -> Result<Response, PageError> {
    let text = errors
        .iter()
        .map(|e| format!("{}: {}", e.field, e.message))
        .collect::<Vec<_>>()
        .join("; ");
    let mut map = HashMap::new();
    map.insert(key.to_owned(), text);
    Ok(run_render(state, user, id, None, map, String::new())
        .await?
        .into_response())
}

/// `POST /runs/{id}/switch`: the switch-test settings.
pub async fn switch_settings(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    use crate::web::api::switches::{SettingsBody, put_settings_of};
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let mut errors = Vec::new();
    let nominal = optional_number(&values, "nominal_t_c", &mut errors);
    let body = SettingsBody {
        version: version_of(&values),
        nominal_t_c: nominal.unwrap_or(f64::NAN),
        actuation_direction: values
            .get("actuation_direction")
            .cloned()
            .unwrap_or_default(),
        contact_action: values.get("contact_action").cloned().unwrap_or_default(),
        ramp_rate_c_per_min: optional_number(&values, "ramp_rate_c_per_min", &mut errors),
        time_constant_s: optional_number(&values, "time_constant_s", &mut errors),
        lag_half_width_c: optional_number(&values, "lag_half_width_c", &mut errors),
        observed_resolution_c: optional_number(&values, "observed_resolution_c", &mut errors),
    };
    if !errors.is_empty() {
        return switch_error(&state, &user, id, "switch", &errors).await;
    }
    match put_settings_of(&state.db, &user.caller(), id, &body).await {
        Ok(_) => Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
        Err(e) => {
            let errors = field_errors(e)?;
            switch_error(&state, &user, id, "switch", &errors).await
        }
    }
}

/// `POST /runs/{id}/ramps`: a ramp typed or pasted as lines, or one
/// observed change.
pub async fn add_ramp(
    State(state): State<AppState>,
    user: PageUser,
    Path(id): Path<i64>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    use crate::web::api::switches::{RampBody, add_ramp_to, parse_ramp_lines};
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    let mut errors = Vec::new();
    let observed = optional_number(&values, "observed_t_c", &mut errors);
    let lines = values.get("lines").map_or("", String::as_str);
    let readings = if lines.trim().is_empty() {
        None
    } else {
        match parse_ramp_lines(lines) {
            Ok(r) => Some(r),
            Err(AppError::Invalid { errors: e, .. }) => {
                errors.extend(e);
                None
            }
            Err(e) => return Err(e.into()),
        }
    };
    if !errors.is_empty() {
        return switch_error(&state, &user, id, "ramp", &errors).await;
    }
    let body = RampBody {
        version: version_of(&values),
        direction: values.get("direction").cloned().unwrap_or_default(),
        readings,
        observed_t_c: observed,
    };
    match add_ramp_to(&state.db, &user.caller(), id, &body).await {
        Ok(_) => Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
        Err(e) => {
            let errors = field_errors(e)?;
            switch_error(&state, &user, id, "ramp", &errors).await
        }
    }
}

/// `POST /runs/{id}/ramps/{ramp_id}/delete`.
pub async fn delete_ramp(
    State(state): State<AppState>,
    user: PageUser,
    Path((id, ramp_id)): Path<(i64, i64)>,
    Form(values): Form<HashMap<String, String>>,
) -> Result<Response, PageError> {
    user.check_csrf(values.get("csrf").map_or("", String::as_str))?;
    match crate::web::api::switches::delete_ramp_of(
        &state.db,
        &user.caller(),
        id,
        ramp_id,
        version_of(&values),
    )
    .await
    {
        Ok(()) => Ok(Redirect::to(&format!("/runs/{id}")).into_response()),
        Err(e) => {
            let errors = field_errors(e)?;
            switch_error(&state, &user, id, "ramp", &errors).await
        }
    }
}
