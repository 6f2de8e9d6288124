//! An instrument's calibration history: its certificates, the deviation at
//! each set point across calibrations (the drift chart) and the change
//! between consecutive calibrations judged by the normalized error E_n.

use serde::Serialize;

use crate::metrology::stats::normalized_error;
use crate::report::snapshot::CertificateSnapshot;
use crate::store::certificates::Certificate;

/// Nominal temperatures closer than this (°C) are the same set point.
pub const SAME_SET_POINT_C: f64 = 1e-6;

/// One certificate in the history.
#[derive(Debug, Clone, Serialize)]
pub struct HistoryEntry {
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// Calibration date.
    pub calibrated_on: String,
    /// Issue date.
    pub issued_on: String,
    /// Whether a later revision replaced it (replaced revisions are listed
    /// but left out of the drift chart and the comparisons).
    pub replaced: bool,
    /// Least favourable conformity outcome.
    pub outcome: String,
    /// SHA-256 of its snapshot.
    pub sha256: String,
}

/// The deviation found at one set point by one calibration.
#[derive(Debug, Clone, Serialize)]
pub struct DriftPoint {
    /// Calibration date.
    pub calibrated_on: String,
    /// Certificate number.
    pub number: String,
    /// Mean reference temperature, °C.
    pub t_ref_c: f64,
    /// Deviation (indication − reference), °C.
    pub deviation_c: f64,
    /// Its expanded uncertainty, °C.
    pub expanded_uncertainty_c: f64,
}

/// The deviations at one nominal temperature over time.
#[derive(Debug, Clone, Serialize)]
pub struct DriftSeries {
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
    /// Oldest first.
    pub points: Vec<DriftPoint>,
}

/// The change at one set point between two consecutive calibrations.
#[derive(Debug, Clone, Serialize)]
pub struct Change {
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
    /// Earlier certificate.
    pub from_number: String,
    /// Its calibration date.
    pub from_calibrated_on: String,
    /// Later certificate.
    pub to_number: String,
    /// Its calibration date.
    pub to_calibrated_on: String,
    /// Later deviation − earlier deviation, °C.
    pub change_c: f64,
    /// Normalized error of the change.
    pub e_n: f64,
    /// |E_n| ≤ 1: "consistent"; otherwise "significant change".
    pub verdict: String,
}

/// The whole history.
#[derive(Debug, Clone, Serialize)]
pub struct History {
    /// Serial number.
    pub serial: String,
    /// Every certificate, oldest calibration first.
    pub certificates: Vec<HistoryEntry>,
    /// Deviation by set point over time (current revisions only).
    pub drift: Vec<DriftSeries>,
    /// Changes between consecutive current certificates at the set points
    /// both share.
    pub changes: Vec<Change>,
}

/// Builds the history from the instrument's certificates (as
/// [`crate::store::certificates::history`] returns them) and their outcomes.
///
/// # Errors
/// A stored snapshot that cannot be read.
pub fn build(
    serial: &str,
    rows: &[(Certificate, String, String)],
) -> Result<History, serde_json::Error> {
    let mut certificates = Vec::new();
    let mut current = Vec::new();
    for (c, calibrated_on, outcome) in rows {
        certificates.push(HistoryEntry {
            number: c.number.clone(),
            revision: c.revision,
            calibrated_on: calibrated_on.clone(),
            issued_on: c.issued_on.clone(),
            replaced: c.replaced_by_id.is_some(),
            outcome: outcome.clone(),
            sha256: c.sha256.clone(),
        });
        if c.replaced_by_id.is_none() {
            let s: CertificateSnapshot = serde_json::from_str(&c.snapshot)?;
            current.push((c.number.clone(), calibrated_on.clone(), s));
        }
    }

    let mut drift: Vec<DriftSeries> = Vec::new();
    for (number, calibrated_on, s) in &current {
        for row in &s.results {
            let point = DriftPoint {
                calibrated_on: calibrated_on.clone(),
                number: number.clone(),
                t_ref_c: row.t_ref_c,
                deviation_c: row.deviation_c,
                expanded_uncertainty_c: row.expanded_uncertainty_c,
            };
            match drift
                .iter_mut()
                .find(|d| (d.nominal_t_c - row.nominal_t_c).abs() < SAME_SET_POINT_C)
            {
                Some(series) => series.points.push(point),
                None => drift.push(DriftSeries {
                    nominal_t_c: row.nominal_t_c,
                    points: vec![point],
                }),
            }
        }
    }
    drift.sort_by(|a, b| a.nominal_t_c.total_cmp(&b.nominal_t_c));

    let mut changes = Vec::new();
    for pair in current.windows(2) {
        let (n1, d1, s1) = &pair[0];
        let (n2, d2, s2) = &pair[1];
        for r2 in &s2.results {
            let Some(r1) = s1
                .results
                .iter()
                .find(|r| (r.nominal_t_c - r2.nominal_t_c).abs() < SAME_SET_POINT_C)
            else {
                continue;
            };
            let Ok(e_n) = normalized_error(
                r1.deviation_c,
                r1.expanded_uncertainty_c,
                r2.deviation_c,
                r2.expanded_uncertainty_c,
            ) else {
                continue;
            };
            changes.push(Change {
                nominal_t_c: r2.nominal_t_c,
                from_number: n1.clone(),
                from_calibrated_on: d1.clone(),
                to_number: n2.clone(),
                to_calibrated_on: d2.clone(),
                change_c: r2.deviation_c - r1.deviation_c,
                e_n,
                verdict: if e_n.abs() <= 1.0 {
                    "consistent".to_owned()
                } else {
                    "significant change".to_owned()
                },
            });
        }
    }
    Ok(History {
        serial: serial.to_owned(),
        certificates,
        drift,
        changes,
    })
}
