//! Building a certificate snapshot from a run's records and results, and
//! numbering certificates by the lab's pattern.

use sqlx::SqliteConnection;

use super::results::{self, ResultsError};
use crate::metrology::calib::{self, RunResult};
use crate::report::snapshot::{
    CertificateSnapshot, ConditionsBlock, ConformityBlock, CustomerBlock, DatesBlock,
    FunctionBlock, ItemBlock, LabBlock, PlotBlock, PrintedRow, Replaced, ResultRow,
    SNAPSHOT_FORMAT, SwitchBlock, TraceRow,
};
use crate::store::runs::Run;
use crate::store::{accounts, equipment, lab, records};

/// Expands the lab's number pattern: `{year}` and `{seq:N}` (zero-padded
/// to N digits; `{seq}` unpadded).
#[must_use]
pub fn expand_pattern(pattern: &str, year: i64, seq: i64) -> String {
    let mut out = pattern.replace("{year}", &year.to_string());
    if let Some(start) = out.find("{seq") {
        if let Some(end) = out[start..].find('}') {
            let spec = &out[start + 4..start + end];
            let width: usize = spec.trim_start_matches(':').parse().unwrap_or(0);
            let number = format!("{seq:0width$}");
            out.replace_range(start..=start + end, &number);
        }
    } else {
        out.push_str(&format!("-{seq}"));
    }
    out
}

fn kind_words(kind: &str, tc_type: Option<&str>, r0: Option<f64>) -> String {
    match (kind, tc_type, r0) {
        ("thermocouple", Some(t), _) => format!("type {t} thermocouple"),
        ("prt", _, Some(r0)) => format!("platinum resistance thermometer, R0 = {r0} Ω"),
        ("indicating", _, _) => "indicating (digital) thermometer".to_owned(),
        (other, _, _) => other.to_owned(),
    }
}

/// Statements every certificate carries.
#[must_use]
pub fn fixed_statements(coverage_probability: f64) -> Vec<String> {
    vec![
        "The results relate only to the item calibrated, at the time of calibration and under the conditions stated.".to_owned(),
        format!(
            "The expanded uncertainty U is the combined standard uncertainty multiplied by the coverage factor k, evaluated following JCGM 100:2008 (GUM); k is chosen from the effective degrees of freedom for a coverage probability of {:.2} %. U is stated to at most two significant digits and is not smaller than the laboratory's calibration and measurement capability.",
            100.0 * coverage_probability
        ),
        "Temperatures are on the International Temperature Scale of 1990 (ITS-90). The deviation is the indication of the item minus the reference temperature; the correction is its negative.".to_owned(),
        "This certificate may be reproduced only in full, unless the issuing laboratory approves otherwise in writing.".to_owned(),
    ]
}

/// What a run's certificate reports.
#[derive(Debug)]
pub enum Computed {
    /// A sensor calibration: results per set point.
    Sensor(Box<RunResult>),
    /// A temperature-switch test.
    Switch {
        /// The switch results as printed.
        block: Box<SwitchBlock>,
        /// The conformity statement, if a tolerance was agreed.
        conformity: Option<ConformityBlock>,
        /// Coverage probability of the U's.
        coverage_probability: f64,
    },
}

/// Everything needed to issue a certificate for a run.
#[derive(Debug)]
pub struct Issue<'a> {
    /// The run.
    pub run: &'a Run,
    /// Its computed results.
    pub results: &'a Computed,
    /// Certificate number.
    pub number: &'a str,
    /// Revision.
    pub revision: u32,
    /// The replaced revision, for amendments.
    pub replaces: Option<Replaced>,
    /// Issue date.
    pub issued_on: &'a str,
    /// Approver's display name.
    pub approved_by: &'a str,
}

/// Builds the snapshot of a run's certificate.
///
/// # Errors
/// A records or database error.
pub async fn build_snapshot(
    conn: &mut SqliteConnection,
    issue: Issue<'_>,
) -> Result<CertificateSnapshot, ResultsError> {
    let run = issue.run;
    let missing = |what: &str| ResultsError::Records {
        field: what.to_owned(),
        message: format!("the run's {what} is missing"),
    };
    let lab = lab::get(conn).await?.ok_or_else(|| ResultsError::Records {
        field: "laboratory".to_owned(),
        message: "no laboratory is set up: a certificate needs the lab's name and address (set them with `juncture lab set`)".to_owned(),
    })?;
    let instrument = records::instrument_by_id(conn, run.instrument_id)
        .await?
        .ok_or_else(|| missing("instrument"))?;
    let customer = records::customer(conn, instrument.customer_id)
        .await?
        .ok_or_else(|| missing("customer"))?;
    let technician = accounts::user_by_id(conn, run.technician_id)
        .await?
        .map_or_else(String::new, |u| u.display_name);

    let mut traceability = Vec::new();
    let mut medium_text = None;
    for (role, id) in [
        ("reference standard", Some(run.reference_id)),
        ("readout of the reference", run.reference_readout_id),
        ("readout of the item", run.uut_readout_id),
        ("comparison medium", run.medium_id),
    ] {
        let Some(id) = id else { continue };
        let Some(item) = equipment::by_id(conn, id).await? else {
            continue;
        };
        if role == "comparison medium" {
            medium_text = Some(
                format!("{} {}", item.asset_id, item.description)
                    .trim()
                    .to_owned(),
            );
            continue;
        }
        let cert = equipment::certificate_on(conn, id, &run.performed_on).await?;
        traceability.push(TraceRow {
            role: role.to_owned(),
            asset_id: item.asset_id.clone(),
            description: item.description.clone(),
            certificate_number: cert.as_ref().map_or_else(String::new, |c| c.number.clone()),
            issuer: cert.as_ref().map_or_else(String::new, |c| c.issuer.clone()),
            calibrated_on: cert
                .as_ref()
                .map_or_else(String::new, |c| c.calibrated_on.clone()),
            due_on: cert.as_ref().map_or_else(String::new, |c| c.due_on.clone()),
        });
    }

    let (rows, deviation_function, conformity, plot, coverage_probability, switch) =
        match issue.results {
            Computed::Sensor(r) => {
                let (rows, f, c, plot, p) = sensor_blocks(r, run, &instrument.kind);
                (rows, f, c, plot, p, None)
            }
            Computed::Switch {
                block,
                conformity,
                coverage_probability,
            } => (
                Vec::new(),
                None,
                conformity.clone(),
                PlotBlock::default(),
                *coverage_probability,
                Some((**block).clone()),
            ),
        };

    Ok(CertificateSnapshot {
        format: SNAPSHOT_FORMAT.to_owned(),
        title: "Calibration Certificate".to_owned(),
        number: issue.number.to_owned(),
        revision: issue.revision,
        replaces: issue.replaces,
        lab: LabBlock {
            name: lab.name,
            address: lab.address,
            accreditation: lab.accreditation,
            contact: [lab.contact_email, lab.contact_phone]
                .into_iter()
                .filter(|s| !s.is_empty())
                .collect::<Vec<_>>()
                .join(", "),
        },
        customer: CustomerBlock {
            name: customer.name,
            address: customer.address,
        },
        item: ItemBlock {
            serial: instrument.serial.clone(),
            kind: kind_words(
                &instrument.kind,
                instrument.tc_type.as_deref(),
                instrument.r0_ohm,
            ),
            description: instrument.description,
            manufacturer: instrument.manufacturer,
            model: instrument.model,
        },
        method: run.procedure_ref.clone(),
        location: run.location.clone(),
        dates: DatesBlock {
            received_on: None,
            calibrated_on: run.performed_on.clone(),
            issued_on: issue.issued_on.to_owned(),
        },
        conditions: ConditionsBlock {
            medium: medium_text,
            immersion_mm: run.immersion_mm,
            reference_junction: match run.rj_method.as_str() {
                "ice_point" => Some("reference junction in an ice point (0 °C)".to_owned()),
                "measured" => {
                    Some("reference junction at a measured temperature, corrected".to_owned())
                }
                "compensated" => Some("reference junction compensated by the readout".to_owned()),
                _ => None,
            },
            ambient_t_c: run.ambient_t_c,
            ambient_rh_percent: run.ambient_rh_percent,
            condition: run.condition.replace('_', " "),
        },
        results: rows,
        deviation_function,
        conformity,
        traceability,
        statements: {
            let mut st = fixed_statements(coverage_probability);
            if switch.is_some() {
                st[2] = "Temperatures are on the International Temperature Scale of 1990 (ITS-90). The switch and reset points are the reference temperatures at which the contact changed state, each the mean over the ramps in its direction.".to_owned();
            }
            st
        },
        performed_by: technician,
        approved_by: issue.approved_by.to_owned(),
        plot,
        switch,
    })
}

type SensorBlocks = (
    Vec<ResultRow>,
    Option<FunctionBlock>,
    Option<ConformityBlock>,
    PlotBlock,
    f64,
);

/// The per-set-point blocks of a sensor calibration.
fn sensor_blocks(r: &RunResult, run: &Run, instrument_kind: &str) -> SensorBlocks {
    let coverage_probability = r
        .set_points
        .first()
        .map_or(0.9545, |s| s.budget.coverage_probability);
    let rows: Vec<ResultRow> = r
        .set_points
        .iter()
        .map(|sp| {
            let decimals = decimals_of(&sp.reported.uncertainty_text);
            ResultRow {
                nominal_t_c: sp.nominal_c,
                t_ref_c: sp.mean_t_ref_c,
                t_uut_c: sp.mean_t_uut_c,
                deviation_c: sp.mean_deviation_c,
                correction_c: -sp.mean_deviation_c,
                expanded_uncertainty_c: sp.reported.expanded_uncertainty.to_f64(),
                coverage_factor: sp.budget.coverage_factor,
                coverage_probability: sp.budget.coverage_probability,
                deviation_emf_mv: sp.mean_deviation_emf_mv,
                printed: PrintedRow {
                    t_ref_c: format!("{:.decimals$}", sp.mean_t_ref_c),
                    t_uut_c: format!("{:.decimals$}", sp.mean_t_uut_c),
                    deviation_c: sp.reported.value_text.clone(),
                    correction_c: negate_text(&sp.reported.value_text),
                    expanded_uncertainty_c: sp.reported.uncertainty_text.clone(),
                    coverage_factor: format!("{:.2}", sp.budget.coverage_factor),
                },
                outcome: sp
                    .conformity
                    .as_ref()
                    .map(|c| c.decision.outcome.label().to_owned()),
            }
        })
        .collect();

    let max_u = rows
        .iter()
        .map(|r| r.expanded_uncertainty_c)
        .fold(0.0, f64::max);
    let max_k = rows.iter().map(|r| r.coverage_factor).fold(0.0, f64::max);
    let deviation_function = r.deviation_function.as_ref().map(|f| FunctionBlock {
        form: "polynomial".to_owned(),
        variable: "t_c".to_owned(),
        coefficients: f.coefficients.clone(),
        covariance: f.covariance.clone(),
        emf_coefficients: r.emf_deviation_function.as_ref().map(|e| e.coefficients.clone()),
        valid_from_t_c: f.validity_c.0,
        valid_to_t_c: f.validity_c.1,
        expanded_uncertainty_c: max_u,
        coverage_factor: max_k,
        usage: format!(
            "Deviation D(t) = sum of c_i t^i with t the temperature in °C; correct a reading by subtracting D(t). Valid from {:.2} °C to {:.2} °C only; the expanded uncertainty of a corrected reading is {} °C.",
            f.validity_c.0, f.validity_c.1, rows.iter().map(|r| r.printed.expanded_uncertainty_c.clone()).max_by(|a, b| a.parse::<f64>().unwrap_or(0.0).total_cmp(&b.parse::<f64>().unwrap_or(0.0))).unwrap_or_default()
        ),
    });

    let conformity = match (
        &run.tolerance_class,
        run.tolerance_limit_c,
        r.set_points.iter().find_map(|s| s.conformity.as_ref()),
    ) {
        (class, limit, Some(first)) => {
            let specification = match (class, limit, instrument_kind) {
                (Some(c), _, "thermocouple") if ["standard", "special"].contains(&c.as_str()) => {
                    format!("ASTM E230 {c} limits")
                }
                (Some(c), _, "thermocouple") => format!("IEC 60584-1:2013 class {c}"),
                (Some(c), _, _) => format!("IEC 60751:2008 class {c}"),
                (None, Some(l), _) => format!("customer limit ± {l} °C on the deviation"),
                (None, None, _) => String::new(),
            };
            let outcomes: Vec<String> = r
                .set_points
                .iter()
                .map(|s| match &s.conformity {
                    Some(c) => format!("{:.2} °C: {}", s.nominal_c, c.decision.outcome.label()),
                    None => format!("{:.2} °C: no statement (the specification does not cover this temperature)", s.nominal_c),
                })
                .collect();
            Some(ConformityBlock {
                specification,
                decision_rule: first.decision.statement.clone(),
                statement: outcomes.join("; "),
            })
        }
        _ => None,
    };

    let mut plot = PlotBlock::default();
    for sp in &r.set_points {
        plot.points.push([
            sp.mean_t_ref_c,
            sp.mean_deviation_c,
            sp.budget.expanded_uncertainty,
        ]);
        if let Some(c) = &sp.conformity {
            if let Some(u) = c.decision.tolerance_limits.upper {
                plot.tolerance_upper.push([sp.mean_t_ref_c, u]);
            }
            if let Some(l) = c.decision.tolerance_limits.lower {
                plot.tolerance_lower.push([sp.mean_t_ref_c, l]);
            }
        }
    }
    if let Some(f) = &r.deviation_function {
        let (lo, hi) = f.validity_c;
        for i in 0..=40 {
            let t = lo + (hi - lo) * f64::from(i) / 40.0;
            if let Ok((v, u)) = f.evaluate(t) {
                plot.curve.push([t, v, 2.0 * u]);
            }
        }
    }

    (
        rows,
        deviation_function,
        conformity,
        plot,
        coverage_probability,
    )
}

/// Decimal places of a printed number ("0.012" -> 3).
fn decimals_of(text: &str) -> usize {
    text.split_once('.').map_or(0, |(_, d)| d.len())
}

/// The printed correction: the printed deviation with its sign flipped.
fn negate_text(text: &str) -> String {
    let t = text.trim();
    if let Some(rest) = t.strip_prefix('-') {
        rest.to_owned()
    } else if t.chars().all(|c| c == '0' || c == '.') {
        t.to_owned()
    } else {
        format!("-{}", t.trim_start_matches('+'))
    }
}

/// Computes a run's results (records -> model -> numbers).
///
/// # Errors
/// A records, calculation or database error.
pub async fn compute(conn: &mut SqliteConnection, run: &Run) -> Result<Computed, ResultsError> {
    let instrument = records::instrument_by_id(conn, run.instrument_id)
        .await?
        .ok_or_else(|| ResultsError::Records {
            field: "instrument".to_owned(),
            message: "the run's instrument is missing".to_owned(),
        })?;
    if instrument.kind == "switch" {
        return super::switches::certificate_blocks(conn, run).await;
    }
    let prepared = results::prepare(conn, run).await?;
    Ok(Computed::Sensor(Box::new(calib::evaluate_run(
        &prepared.model,
    )?)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn number_patterns_expand() {
        assert_eq!(
            expand_pattern("LTM-{year}-{seq:4}", 2026, 7),
            "LTM-2026-0007"
        );
        assert_eq!(expand_pattern("C{year}/{seq}", 2026, 12), "C2026/12");
        assert_eq!(expand_pattern("CAL", 2026, 3), "CAL-3");
    }

    #[test]
    fn printed_corrections_flip_the_sign() {
        assert_eq!(negate_text("0.043"), "-0.043");
        assert_eq!(negate_text("-1.02"), "1.02");
        assert_eq!(negate_text("0.000"), "0.000");
        assert_eq!(decimals_of("0.011"), 3);
    }
}
