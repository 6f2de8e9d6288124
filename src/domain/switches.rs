//! Temperature-switch tests from the records: the run's settings and ramps
//! become a [`SwitchTest`] (reference calibration, medium and lab-entered
//! budget rows as for any run), and its results become the certificate's
//! switch block.

use serde::Serialize;
use sqlx::SqliteConnection;

use super::certificates::Computed;
use super::results::{ExtraBudgetRow, ResultsError, medium_characterisation};
use crate::metrology::calib::switch::{
    Actuation, ContactAction, Direction, Ramp, StateReading, SwitchConformitySpec, SwitchState,
    SwitchTolerance, ThermalLag,
};
use crate::metrology::calib::{
    BudgetItem, CmcRange, CmcTable, ItemKind, SwitchResult, SwitchTest, evaluate_switch_test,
};
use crate::metrology::stats::rounding::{ReportOptions, round_for_report};
use crate::metrology::stats::{DecisionRule, P_K2};
use crate::report::snapshot::{
    ConformityBlock, SwitchBlock, SwitchChange, SwitchPointBlock, SwitchValue,
};
use crate::store::runs::Run;
use crate::store::switches::{self, StoredRamp, SwitchSettings};
use crate::store::{equipment, lab};

fn records_error(field: &str, message: impl Into<String>) -> ResultsError {
    ResultsError::Records {
        field: field.to_owned(),
        message: message.into(),
    }
}

/// A ramp's readings as stored: `[[t_ref_c, "open" | "closed"], ...]`.
pub type StoredReadings = Vec<(f64, String)>;

/// Parses a direction word.
#[must_use]
pub fn direction_of(word: &str) -> Option<Direction> {
    match word {
        "rising" => Some(Direction::Rising),
        "falling" => Some(Direction::Falling),
        _ => None,
    }
}

/// Parses a contact state word.
#[must_use]
pub fn state_of(word: &str) -> Option<SwitchState> {
    match word {
        "open" => Some(SwitchState::Open),
        "closed" => Some(SwitchState::Closed),
        _ => None,
    }
}

fn ramp_of(r: &StoredRamp) -> Result<Ramp, ResultsError> {
    let direction = direction_of(&r.direction)
        .ok_or_else(|| records_error("ramps", format!("ramp {} has no direction", r.position)))?;
    match (&r.readings, r.observed_t_c) {
        (Some(text), _) => {
            let rows: StoredReadings = serde_json::from_str(text).map_err(|e| {
                records_error("ramps", format!("ramp {} is unreadable: {e}", r.position))
            })?;
            let mut readings = Vec::new();
            for (t, s) in rows {
                let state = state_of(&s).ok_or_else(|| {
                    records_error("ramps", format!("ramp {}: unknown state {s:?}", r.position))
                })?;
                readings.push(StateReading::new(t, state));
            }
            Ok(Ramp::readings(direction, readings))
        }
        (None, Some(t)) => Ok(Ramp::observed(direction, t)),
        (None, None) => Err(records_error(
            "ramps",
            format!("ramp {} holds no data", r.position),
        )),
    }
}

/// The model of a switch run, from its records.
///
/// # Errors
/// A records error naming what is missing, or a database error.
pub async fn prepare(
    conn: &mut SqliteConnection,
    run: &Run,
) -> Result<(SwitchTest, SwitchSettings, Vec<StoredRamp>), ResultsError> {
    let settings = switches::settings(conn, run.id).await?.ok_or_else(|| {
        records_error(
            "switch",
            format!(
                "run {} has no switch-test settings yet: give the nominal switch point and what the switch does",
                run.id
            ),
        )
    })?;
    let stored = switches::ramps(conn, run.id).await?;
    let ramps = stored.iter().map(ramp_of).collect::<Result<Vec<_>, _>>()?;
    let actuation = Actuation {
        direction: direction_of(&settings.actuation_direction)
            .ok_or_else(|| records_error("switch", "unknown actuation direction"))?,
        action: if settings.contact_action == "opens" {
            ContactAction::Opens
        } else {
            ContactAction::Closes
        },
    };
    let mut test = SwitchTest::new(settings.nominal_t_c, actuation, ramps);
    test.lag = match (
        settings.ramp_rate_c_per_min,
        settings.time_constant_s,
        settings.lag_half_width_c,
    ) {
        (Some(rate), Some(tau), _) => ThermalLag::TimeConstant {
            ramp_rate_c_per_min: rate,
            time_constant_s: tau,
        },
        (_, _, Some(a)) => ThermalLag::HalfWidth { half_width_c: a },
        _ => ThermalLag::HalfWidth { half_width_c: 0.0 },
    };
    test.observed_resolution_c = settings.observed_resolution_c;

    // The reference standard's calibration at the nominal switch point.
    let t = settings.nominal_t_c;
    let reference = equipment::by_id(conn, run.reference_id)
        .await?
        .ok_or_else(|| records_error("reference", "the run's reference is missing"))?;
    let certificate = equipment::certificate_on(conn, reference.id, &run.performed_on)
        .await?
        .ok_or_else(|| {
            records_error(
                "reference",
                format!(
                    "{} has no calibration certificate dated on or before {}",
                    reference.asset_id, run.performed_on
                ),
            )
        })?;
    let u = equipment::certificate_uncertainties(conn, certificate.id)
        .await?
        .into_iter()
        .find(|u| (u.t_lo_c..=u.t_hi_c).contains(&t))
        .ok_or_else(|| {
            records_error(
                "reference",
                format!(
                    "certificate {} of {} states no uncertainty at the switch point {t} °C",
                    certificate.number, reference.asset_id
                ),
            )
        })?;
    let mut items = vec![BudgetItem::new(
        format!("reference calibration ({})", certificate.number),
        ItemKind::ReferenceCalibration {
            expanded_c: u.expanded_c,
            k: u.k,
        },
    )];
    if let Some(medium_id) = run.medium_id {
        let medium = equipment::by_id(conn, medium_id)
            .await?
            .ok_or_else(|| records_error("medium", "the run's medium is missing"))?;
        if let Some(r) =
            switches::characterisation_run_on(conn, medium_id, &run.performed_on).await?
        {
            let mc = medium_characterisation(&medium.asset_id, &r)
                .map_err(|e| records_error("medium", e))?;
            let at = mc
                .at(t)
                .map_err(|e| records_error("medium", e.to_string()))?;
            items.extend(at.budget_items());
        } else if let Some(c) = equipment::characterisation_on(conn, medium_id, &run.performed_on)
            .await?
            .into_iter()
            .find(|c| (c.t_lo_c..=c.t_hi_c).contains(&t))
        {
            items.push(BudgetItem::new(
                format!("{} uniformity", medium.asset_id),
                ItemKind::MediumUniformity {
                    half_width_c: c.uniformity_half_width_c,
                },
            ));
            items.push(BudgetItem::new(
                format!("{} stability", medium.asset_id),
                ItemKind::MediumStability {
                    half_width_c: c.stability_half_width_c,
                },
            ));
        }
    }
    let extra: Vec<ExtraBudgetRow> = serde_json::from_str(&run.extra_budget)
        .map_err(|e| records_error("extra_budget", format!("unreadable: {e}")))?;
    for (i, row) in extra.iter().enumerate() {
        items.push(
            row.item()
                .map_err(|e| records_error(&format!("extra_budget[{i}]"), e))?,
        );
    }
    test.budget_items = items;
    test.coverage_probability = lab::get(conn)
        .await?
        .map_or(P_K2, |l| l.coverage_probability);
    let rule = match run.decision_rule.as_str() {
        "simple" => Some(DecisionRule::SimpleAcceptance),
        "guarded" => Some(DecisionRule::GuardedBinary {
            r: run.guard_band_factor,
        }),
        "guarded_non_binary" => Some(DecisionRule::GuardedNonBinary {
            r: run.guard_band_factor,
        }),
        _ => None,
    };
    test.conformity = match (run.tolerance_limit_c, rule) {
        (Some(limit), Some(rule)) => Some(SwitchConformitySpec {
            tolerance: SwitchTolerance::Symmetric {
                half_width_c: limit,
            },
            rule,
        }),
        _ => None,
    };
    Ok((test, settings, stored))
}

/// Evaluates a switch run from its records.
///
/// # Errors
/// As [`prepare`], or the calculation's refusal (no state change, bouncing
/// contacts, a ramp that never reaches the nominal point, ...).
pub async fn evaluate(
    conn: &mut SqliteConnection,
    run: &Run,
) -> Result<(SwitchResult, SwitchSettings, Vec<StoredRamp>), ResultsError> {
    let (test, settings, ramps) = prepare(conn, run).await?;
    Ok((evaluate_switch_test(&test)?, settings, ramps))
}

/// A value with U rounded for the certificate (ILAC-P14: U to two
/// significant digits, the value to the same decimal place, U not below
/// the CMC).
fn printed(value: f64, u: f64, k: f64, cmc: Option<f64>) -> Result<SwitchValue, ResultsError> {
    let r = round_for_report(
        value,
        u,
        &ReportOptions {
            cmc,
            ..ReportOptions::default()
        },
    )
    .map_err(|e| records_error("results", e.to_string()))?;
    Ok(SwitchValue {
        value_c: value,
        expanded_uncertainty_c: r.expanded_uncertainty.to_f64(),
        coverage_factor: k,
        printed_value_c: r.value_text,
        printed_uncertainty_c: r.uncertainty_text,
    })
}

/// The certificate blocks of a switch run.
///
/// # Errors
/// As [`evaluate`].
pub async fn certificate_blocks(
    conn: &mut SqliteConnection,
    run: &Run,
) -> Result<Computed, ResultsError> {
    let (result, settings, ramps) = evaluate(conn, run).await?;
    blocks_from(conn, run, &result, &settings, &ramps).await
}

async fn blocks_from(
    conn: &mut SqliteConnection,
    run: &Run,
    result: &SwitchResult,
    settings: &SwitchSettings,
    ramps: &[StoredRamp],
) -> Result<Computed, ResultsError> {
    let cmc = CmcTable::new(
        equipment::cmc_table(conn)
            .await?
            .into_iter()
            .filter(|c| c.instrument_kind == "switch")
            .map(|c| CmcRange {
                t_lo_c: c.t_lo_c,
                t_hi_c: c.t_hi_c,
                expanded_c: c.expanded_c,
            })
            .collect(),
    )
    .at(settings.nominal_t_c);
    let point = |p: &crate::metrology::calib::switch::SwitchPointResult| -> Result<SwitchPointBlock, ResultsError> {
        Ok(SwitchPointBlock {
            direction: p.direction.label().to_owned(),
            n: u32::try_from(p.n).unwrap_or(u32::MAX),
            value: printed(p.mean_c, p.budget.expanded_uncertainty, p.budget.coverage_factor, cmc)?,
            std_dev_c: p.std_dev_c,
        })
    };
    let rising = ramps.iter().filter(|r| r.direction == "rising").count();
    let falling = ramps.len() - rising;
    let observed = ramps.iter().filter(|r| r.observed_t_c.is_some()).count();
    let lag = match (settings.ramp_rate_c_per_min, settings.time_constant_s) {
        (Some(rate), Some(tau)) => {
            format!(" at {rate} °C/min (thermal lag from a time constant of {tau} s)")
        }
        _ => String::new(),
    };
    let method = format!(
        "{rising} rising and {falling} falling ramp(s) through the switching region{lag}; {}",
        if observed == ramps.len() {
            "the reference temperature was read at each observed change of state".to_owned()
        } else if observed == 0 {
            "the contact state was recorded with every reading and each change located midway between the readings around it".to_owned()
        } else {
            "changes located from recorded readings or read directly when observed".to_owned()
        }
    );
    let block = SwitchBlock {
        nominal_t_c: settings.nominal_t_c,
        actuation: format!(
            "{} on {} temperature",
            settings.contact_action, settings.actuation_direction
        ),
        method,
        switch_point: point(&result.switch_point)?,
        reset_point: result.reset_point.as_ref().map(point).transpose()?,
        differential: result
            .differential
            .as_ref()
            .map(|d| {
                printed(
                    d.value_c,
                    d.budget.expanded_uncertainty,
                    d.budget.coverage_factor,
                    None,
                )
            })
            .transpose()?,
        changes: result
            .changes
            .iter()
            .map(|c| SwitchChange {
                ramp: u32::try_from(c.ramp + 1).unwrap_or(u32::MAX),
                direction: c.direction.label().to_owned(),
                t_c: c.t_c,
                new_state: c.new_state.map(|s| s.label().to_owned()),
            })
            .collect(),
        outcome: result
            .conformity
            .as_ref()
            .map(|c| c.decision.outcome.label().to_owned()),
        notes: result.warnings.iter().map(|w| w.message.clone()).collect(),
    };
    let conformity = result.conformity.as_ref().map(|c| ConformityBlock {
        specification: format!(
            "switch point {} °C ± {} °C",
            settings.nominal_t_c,
            run.tolerance_limit_c.unwrap_or(0.0)
        ),
        decision_rule: c.decision.statement.clone(),
        statement: format!("switch point: {}", c.decision.outcome.label()),
    });
    Ok(Computed::Switch {
        block: Box::new(block),
        conformity,
        coverage_probability: result.switch_point.budget.coverage_probability,
    })
}

/// A switch run's results as the API and pages show them.
#[derive(Debug, Serialize)]
pub struct SwitchResultsOut {
    /// The run.
    pub run_id: i64,
    /// The certificate block as it would print.
    pub switch: SwitchBlock,
    /// Budget of the switch point: (name, standard uncertainty °C, share).
    pub switch_point_budget: Vec<BudgetLine>,
    /// Budget of the reset point.
    pub reset_point_budget: Option<Vec<BudgetLine>>,
    /// Conformity statement, if any.
    pub conformity: Option<ConformityBlock>,
}

/// One budget row.
#[derive(Debug, Serialize)]
pub struct BudgetLine {
    /// Name.
    pub name: String,
    /// Contribution to u_c, °C.
    pub contribution_c: f64,
    /// Share of u_c².
    pub variance_share: f64,
}

/// The results of a switch run for the API and pages.
///
/// # Errors
/// As [`evaluate`].
pub async fn results(
    conn: &mut SqliteConnection,
    run: &Run,
) -> Result<SwitchResultsOut, ResultsError> {
    let (result, settings, ramps) = evaluate(conn, run).await?;
    let lines = |b: &crate::metrology::stats::BudgetResult| {
        b.components
            .iter()
            .map(|c| BudgetLine {
                name: c.name.clone(),
                contribution_c: c.contribution,
                variance_share: c.variance_share,
            })
            .collect::<Vec<_>>()
    };
    let switch_point_budget = lines(&result.switch_point.budget);
    let reset_point_budget = result.reset_point.as_ref().map(|p| lines(&p.budget));
    let Computed::Switch {
        block, conformity, ..
    } = blocks_from(conn, run, &result, &settings, &ramps).await?
    else {
        return Err(records_error("run", "not a switch run"));
    };
    Ok(SwitchResultsOut {
        run_id: run.id,
        switch: *block,
        switch_point_budget,
        reset_point_budget,
        conformity,
    })
}
