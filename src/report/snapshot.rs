//! The certificate snapshot: everything a certificate prints, frozen at
//! issue as canonical JSON with its SHA-256. HTML, PDF and JSON are all
//! rendered from this value alone, so they agree and never change.

use serde::{Deserialize, Serialize};

/// Format tag written into every snapshot.
pub const SNAPSHOT_FORMAT: &str = "juncture-certificate/1";

/// Everything printed on a certificate (ISO/IEC 17025:2017 7.8.2.1, 7.8.4).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CertificateSnapshot {
    /// [`SNAPSHOT_FORMAT`].
    pub format: String,
    /// Title, e.g. "Calibration Certificate".
    pub title: String,
    /// Unique certificate number.
    pub number: String,
    /// Revision, 0 for the first issue.
    pub revision: u32,
    /// The revision this one replaces, with the reason (amendments).
    pub replaces: Option<Replaced>,
    /// The issuing laboratory.
    pub lab: LabBlock,
    /// The customer.
    pub customer: CustomerBlock,
    /// The item calibrated.
    pub item: ItemBlock,
    /// Procedure identifier and revision.
    pub method: String,
    /// Where the calibration was performed.
    pub location: String,
    /// Dates (YYYY-MM-DD).
    pub dates: DatesBlock,
    /// Conditions that influence the results.
    pub conditions: ConditionsBlock,
    /// Results per set point.
    pub results: Vec<ResultRow>,
    /// The fitted deviation function, if any.
    pub deviation_function: Option<FunctionBlock>,
    /// The conformity statement, if one was agreed.
    pub conformity: Option<ConformityBlock>,
    /// Reference standards and readouts used, with their certificates.
    pub traceability: Vec<TraceRow>,
    /// Fixed statements (results relate only to the item, uncertainty
    /// statement, reproduction).
    pub statements: Vec<String>,
    /// Who performed the calibration.
    pub performed_by: String,
    /// Who authorised the certificate.
    pub approved_by: String,
    /// Data for the deviation plot.
    pub plot: PlotBlock,
    /// Results of a temperature-switch test (absent for sensor
    /// calibrations, and then not written, so earlier snapshots keep their
    /// bytes and fingerprints).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub switch: Option<SwitchBlock>,
}

/// The results of a temperature-switch test as printed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SwitchBlock {
    /// Nominal switch point, °C.
    pub nominal_t_c: f64,
    /// What the switch does, e.g. "opens on rising temperature".
    pub actuation: String,
    /// How the state changes were found, e.g. "4 rising and 4 falling
    /// ramps at 0.5 °C/min, contact state read at every reading".
    pub method: String,
    /// Switch point (mean of the actuating changes).
    pub switch_point: SwitchPointBlock,
    /// Reset point (mean of the other changes), if reset ramps were run.
    pub reset_point: Option<SwitchPointBlock>,
    /// Differential (hysteresis) |switch − reset|, °C, with its U.
    pub differential: Option<SwitchValue>,
    /// Every state change found, in test order.
    pub changes: Vec<SwitchChange>,
    /// Outcome of the switch point against nominal ± tolerance, if stated
    /// ("pass", "fail", "conditional pass", "conditional fail").
    pub outcome: Option<String>,
    /// Warnings printed with the results (e.g. one cycle only).
    pub notes: Vec<String>,
}

/// A switch or reset point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SwitchPointBlock {
    /// "rising" or "falling".
    pub direction: String,
    /// Number of changes averaged.
    pub n: u32,
    /// Mean temperature with its U.
    pub value: SwitchValue,
    /// Experimental standard deviation of the changes, °C (n ≥ 2).
    pub std_dev_c: Option<f64>,
}

/// A value in °C with its expanded uncertainty, and how it prints.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SwitchValue {
    /// Value, °C.
    pub value_c: f64,
    /// Expanded uncertainty U, °C.
    pub expanded_uncertainty_c: f64,
    /// Coverage factor k.
    pub coverage_factor: f64,
    /// Rounded value as printed, °C.
    pub printed_value_c: String,
    /// Rounded U as printed, °C.
    pub printed_uncertainty_c: String,
}

/// One observed state change.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SwitchChange {
    /// Ramp number (1-based).
    pub ramp: u32,
    /// "rising" or "falling".
    pub direction: String,
    /// Temperature of the change, °C.
    pub t_c: f64,
    /// The state after the change ("open", "closed"), when recorded.
    pub new_state: Option<String>,
}

/// The revision replaced by an amendment.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Replaced {
    /// Certificate number (the same number for a revision).
    pub number: String,
    /// The replaced revision.
    pub revision: u32,
    /// Why it was replaced.
    pub reason: String,
}

/// The issuing laboratory.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LabBlock {
    /// Name.
    pub name: String,
    /// Address (lines separated by newlines).
    pub address: String,
    /// Accreditation body and number.
    pub accreditation: String,
    /// Contact e-mail and telephone.
    pub contact: String,
}

/// The customer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CustomerBlock {
    /// Name.
    pub name: String,
    /// Address.
    pub address: String,
}

/// The item calibrated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ItemBlock {
    /// Serial number.
    pub serial: String,
    /// Kind in words, e.g. "type N thermocouple".
    pub kind: String,
    /// Description.
    pub description: String,
    /// Manufacturer.
    pub manufacturer: String,
    /// Model.
    pub model: String,
}

/// Dates.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DatesBlock {
    /// Date of receipt, if recorded.
    pub received_on: Option<String>,
    /// Date of the measurements.
    pub calibrated_on: String,
    /// Date of issue.
    pub issued_on: String,
}

/// Influence conditions.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConditionsBlock {
    /// Comparison medium, e.g. "LTM-BATH-07 stirred silicone-oil bath".
    pub medium: Option<String>,
    /// Immersion depth, mm.
    pub immersion_mm: Option<f64>,
    /// Reference-junction method in words (thermocouples).
    pub reference_junction: Option<String>,
    /// Ambient temperature, °C.
    pub ambient_t_c: Option<f64>,
    /// Ambient relative humidity, %.
    pub ambient_rh_percent: Option<f64>,
    /// "as found" or "as left".
    pub condition: String,
}

/// One set point's results.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResultRow {
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
    /// Mean reference temperature, °C.
    pub t_ref_c: f64,
    /// Mean indication of the unit under test, °C.
    pub t_uut_c: f64,
    /// Deviation (indication − reference), °C.
    pub deviation_c: f64,
    /// Correction (−deviation), °C.
    pub correction_c: f64,
    /// Expanded uncertainty, °C.
    pub expanded_uncertainty_c: f64,
    /// Coverage factor.
    pub coverage_factor: f64,
    /// Coverage probability.
    pub coverage_probability: f64,
    /// Emf deviation, mV (thermocouples).
    pub deviation_emf_mv: Option<f64>,
    /// Rounded for printing: reference temperature, deviation, U.
    pub printed: PrintedRow,
    /// Conformity outcome at this point, if stated.
    pub outcome: Option<String>,
}

/// Printed (rounded) values of a result row.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PrintedRow {
    /// Reference temperature, °C.
    pub t_ref_c: String,
    /// Indication, °C.
    pub t_uut_c: String,
    /// Deviation, °C.
    pub deviation_c: String,
    /// Correction, °C.
    pub correction_c: String,
    /// U, °C.
    pub expanded_uncertainty_c: String,
    /// k.
    pub coverage_factor: String,
}

/// The deviation function as printed and served by the API.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FunctionBlock {
    /// "polynomial".
    pub form: String,
    /// "t_c".
    pub variable: String,
    /// `coefficients[i]` multiplies t_c^i (deviation in °C).
    pub coefficients: Vec<f64>,
    /// Their covariance.
    pub covariance: Vec<Vec<f64>>,
    /// Emf deviation coefficients (mV), thermocouples.
    pub emf_coefficients: Option<Vec<f64>>,
    /// Lower end of validity, °C.
    pub valid_from_t_c: f64,
    /// Upper end of validity, °C.
    pub valid_to_t_c: f64,
    /// Expanded uncertainty of a corrected reading (largest U of the set
    /// points), °C.
    pub expanded_uncertainty_c: f64,
    /// Its coverage factor.
    pub coverage_factor: f64,
    /// How to use it, in words.
    pub usage: String,
}

/// The conformity statement.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConformityBlock {
    /// The specification, e.g. "IEC 60751:2008 class A".
    pub specification: String,
    /// The decision rule as printed.
    pub decision_rule: String,
    /// The overall statement.
    pub statement: String,
}

/// One traceability entry.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TraceRow {
    /// Its role: reference standard, readout, medium.
    pub role: String,
    /// The lab's asset id.
    pub asset_id: String,
    /// Description.
    pub description: String,
    /// Its calibration certificate number (empty for media).
    pub certificate_number: String,
    /// Who issued that certificate.
    pub issuer: String,
    /// Its calibration date.
    pub calibrated_on: String,
    /// Its due date.
    pub due_on: String,
}

/// Plot data: points with U, the fitted curve with its band, tolerance
/// limits (°C).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct PlotBlock {
    /// (t_ref_c, deviation_c, U_c).
    pub points: Vec<[f64; 3]>,
    /// (t_c, value_c, band half-width_c).
    pub curve: Vec<[f64; 3]>,
    /// (t_c, upper limit_c).
    pub tolerance_upper: Vec<[f64; 2]>,
    /// (t_c, lower limit_c).
    pub tolerance_lower: Vec<[f64; 2]>,
}

impl CertificateSnapshot {
    /// The canonical JSON: fields in declaration order, no whitespace,
    /// numbers as serde_json prints them (shortest round-trip form).
    ///
    /// # Errors
    /// Only if serialisation fails (it does not for these types).
    pub fn canonical_json(&self) -> Result<String, serde_json::Error> {
        serde_json::to_string(self)
    }

    /// The least favourable conformity outcome over the set points, as the
    /// register stores it: "fail", "conditional_fail", "conditional_pass",
    /// "pass", or "no_statement" when no point carries one.
    ///
    /// # Reference
    /// ILAC-G8:09/2019 4.2.3 (the four outcomes of a decision).
    #[must_use]
    pub fn overall_outcome(&self) -> &'static str {
        let switch_outcome = self.switch.as_ref().and_then(|s| s.outcome.as_deref());
        let has = |label: &str| {
            switch_outcome == Some(label)
                || self
                    .results
                    .iter()
                    .any(|r| r.outcome.as_deref() == Some(label))
        };
        if has("fail") {
            "fail"
        } else if has("conditional fail") {
            "conditional_fail"
        } else if has("conditional pass") {
            "conditional_pass"
        } else if has("pass") {
            "pass"
        } else {
            "no_statement"
        }
    }

    /// SHA-256 of the canonical JSON, lowercase hex: the fingerprint.
    ///
    /// # Errors
    /// As [`Self::canonical_json`].
    pub fn fingerprint(&self) -> Result<String, serde_json::Error> {
        use sha2::{Digest, Sha256};
        Ok(hex::encode(Sha256::digest(
            self.canonical_json()?.as_bytes(),
        )))
    }
}
