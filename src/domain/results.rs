//! From a run's records to the calibration model's input: the reference's
//! certificate in force on the run date, the readouts' specifications, the
//! medium's characterisation, the lab's CMC table, the agreed tolerance and
//! decision rule, and the raw readings. Then the model does the numbers.

use serde::{Deserialize, Serialize};
use sqlx::SqliteConnection;

use super::coefficients::{CertificateCoefficients, sub_range_of};
use crate::metrology::calib::{
    self, BudgetItem, CalibError, CmcRange, CmcTable, ConformitySpec, FitDegree, ItemKind,
    JunctionMethod, ReadoutSpec, ReferenceProbe, Side, Spread, ToleranceSpec, UnitUnderTest,
};
use crate::metrology::stats::{DecisionRule, P_K2};
use crate::metrology::thermo::{
    CvdCoefficients, ElementKind, PrtClass, ThermocoupleClass, ThermocoupleType,
};
use crate::store::equipment::{self, Equipment};
use crate::store::runs::Run;
use crate::store::{lab, records, runs};

/// Why results cannot be computed.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ResultsError {
    /// The records do not allow a computation; the message says what is missing.
    #[error("{message}")]
    Records {
        /// The record field concerned.
        field: String,
        /// What is wrong.
        message: String,
    },
    /// The calibration model refused the data.
    #[error(transparent)]
    Calc(#[from] CalibError),
    /// A database error.
    #[error(transparent)]
    Db(#[from] sqlx::Error),
}

fn records_error(field: &str, message: impl Into<String>) -> ResultsError {
    ResultsError::Records {
        field: field.to_owned(),
        message: message.into(),
    }
}

/// A lab-entered budget row stored with the run (or a budget template).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExtraBudgetRow {
    /// Name.
    pub name: String,
    /// rectangular, triangular, u_shaped or normal (normal: `value_c` is a
    /// standard uncertainty).
    pub distribution: String,
    /// Half-width or standard uncertainty, °C.
    pub value_c: f64,
    /// What the row is: `custom` (sensitivity 1, the default),
    /// `reference_junction` (sensitivity S(t_rj)/S(t) of the thermocouple
    /// under test), `reference_drift`, or `uut_resolution` (the display
    /// step of an indicating thermometer, °C).
    #[serde(default = "custom")]
    pub kind: String,
}

fn custom() -> String {
    "custom".to_owned()
}

/// The row kinds accepted.
pub const EXTRA_ROW_KINDS: &str = "custom, reference_junction, reference_drift, uut_resolution";

impl ExtraBudgetRow {
    /// The budget item.
    ///
    /// # Errors
    /// A sentence naming the bad distribution or kind.
    pub fn item(&self) -> Result<BudgetItem, String> {
        let spread = match self.distribution.as_str() {
            "rectangular" => Spread::Rectangular,
            "triangular" => Spread::Triangular,
            "u_shaped" => Spread::UShaped,
            "normal" => Spread::Standard,
            other => {
                return Err(format!(
                    "unknown distribution {other:?}; expected rectangular, triangular, u_shaped or normal"
                ));
            }
        };
        let kind = match self.kind.as_str() {
            "custom" => ItemKind::Custom {
                spread,
                value_c: self.value_c,
            },
            "reference_junction" => ItemKind::ReferenceJunction {
                half_width_c: self.value_c,
                side: Side::Uut,
            },
            "reference_drift" => ItemKind::ReferenceDrift {
                half_width_c: self.value_c,
            },
            "uut_resolution" => ItemKind::UutResolution {
                resolution_c: self.value_c,
            },
            other => {
                return Err(format!(
                    "unknown kind {other:?}; expected one of {EXTRA_ROW_KINDS}"
                ));
            }
        };
        Ok(BudgetItem::new(self.name.clone(), kind))
    }
}

/// What the model was given besides the readings, for the record.
#[derive(Debug, Clone, Serialize)]
pub struct Provenance {
    /// Reference standard asset id.
    pub reference: String,
    /// Its certificate number in force on the run date.
    pub reference_certificate: String,
    /// Its due date.
    pub reference_due_on: String,
    /// Other equipment used (asset ids).
    pub equipment: Vec<String>,
    /// Medium characterisation date, if a medium was used.
    pub medium_characterised_on: Option<String>,
    /// Coverage probability.
    pub coverage_probability: f64,
}

/// The model's input for a run, with where its values came from.
#[derive(Debug)]
pub struct Prepared {
    /// The input.
    pub model: calib::Run,
    /// Where it came from.
    pub provenance: Provenance,
}

fn signal_unit_of_reference(kind: &str) -> &'static str {
    match kind {
        "reference_thermocouple" => "mV",
        "reference_indicating" => "degC",
        _ => "ohm",
    }
}

fn readout(item: &Equipment, unit: &str, role: &str) -> Result<Option<ReadoutSpec>, ResultsError> {
    let Some(spec_unit) = item.spec_unit.as_deref() else {
        return Ok(None);
    };
    if spec_unit != unit {
        return Err(records_error(
            role,
            format!(
                "{} is specified in {spec_unit}, but the {} signal is in {unit}",
                item.asset_id,
                role.replace('_', " ")
            ),
        ));
    }
    Ok(Some(ReadoutSpec {
        offset_signal_unit: item.spec_offset.unwrap_or(0.0),
        relative: item.spec_relative.unwrap_or(0.0),
        spread: Spread::Rectangular,
        resolution_signal_unit: item.spec_resolution.unwrap_or(0.0),
    }))
}

async fn item(conn: &mut SqliteConnection, id: i64) -> Result<Equipment, ResultsError> {
    equipment::by_id(conn, id)
        .await?
        .ok_or_else(|| records_error("equipment", format!("equipment {id} is missing")))
}

/// Builds the model input for `run` from the records.
///
/// # Errors
/// [`ResultsError::Records`] naming what is missing or inconsistent.
pub async fn prepare(conn: &mut SqliteConnection, run: &Run) -> Result<Prepared, ResultsError> {
    let instrument = records::instrument_by_id(conn, run.instrument_id)
        .await?
        .ok_or_else(|| records_error("instrument", "the run's instrument is missing"))?;
    let junction = match run.rj_method.as_str() {
        "measured" => JunctionMethod::Measured,
        "compensated" => JunctionMethod::Compensated,
        _ => JunctionMethod::IcePoint,
    };
    let (uut, uut_unit) = match instrument.kind.as_str() {
        "thermocouple" => {
            let kind: ThermocoupleType = instrument
                .tc_type
                .as_deref()
                .unwrap_or("")
                .parse()
                .map_err(|e: crate::metrology::thermo::ThermoError| {
                    records_error("instrument", e.to_string())
                })?;
            let unit = if junction == JunctionMethod::Compensated {
                "degC"
            } else {
                "mV"
            };
            (UnitUnderTest::Thermocouple { kind, junction }, unit)
        }
        "prt" => (
            UnitUnderTest::Prt {
                r0_ohm: instrument.r0_ohm.unwrap_or(100.0),
            },
            "ohm",
        ),
        "indicating" => (UnitUnderTest::Indicating, "degC"),
        other => {
            return Err(records_error(
                "instrument",
                format!(
                    "results for a {other} under test are not computed by comparison runs yet; thermocouples, PRTs and indicating thermometers are"
                ),
            ));
        }
    };

    let reference = item(conn, run.reference_id).await?;
    let certificate = equipment::certificate_on(conn, reference.id, &run.performed_on)
        .await?
        .ok_or_else(|| {
            records_error(
                "reference",
                format!(
                    "{} has no certificate dated on or before {}",
                    reference.asset_id, run.performed_on
                ),
            )
        })?;
    let uncertainty_table = equipment::certificate_uncertainties(conn, certificate.id).await?;
    let coefficients: CertificateCoefficients = serde_json::from_str(&certificate.coefficients)
        .map_err(|e| {
            records_error(
                "reference",
                format!(
                    "certificate {} holds unreadable coefficients: {e}",
                    certificate.number
                ),
            )
        })?;
    let probe = match (reference.kind.as_str(), &coefficients) {
        ("reference_prt", CertificateCoefficients::Cvd { r0_ohm, a, b, c }) => {
            ReferenceProbe::Prt {
                curve: CvdCoefficients::from_certificate(*r0_ohm, *a, *b, *c, -200.0, 850.0)
                    .map_err(|e| records_error("reference", e.to_string()))?,
            }
        }
        (
            "reference_sprt",
            CertificateCoefficients::Its90 {
                r_tpw_ohm,
                sub_range,
                a,
                b,
                c,
            },
        ) => ReferenceProbe::Sprt {
            r_tpw_ohm: *r_tpw_ohm,
            sub_range: sub_range_of(sub_range, *a, *b, *c)
                .map_err(|e| records_error("reference", e))?,
        },
        ("reference_thermocouple", c) => {
            let kind: ThermocoupleType =
                reference.tc_type.as_deref().unwrap_or("").parse().map_err(
                    |e: crate::metrology::thermo::ThermoError| {
                        records_error("reference", e.to_string())
                    },
                )?;
            let emf_deviation_mv = match c {
                CertificateCoefficients::EmfDeviation { coefficients_mv } => {
                    coefficients_mv.clone()
                }
                _ => Vec::new(),
            };
            let junction = if junction == JunctionMethod::Measured {
                JunctionMethod::Measured
            } else {
                JunctionMethod::IcePoint
            };
            ReferenceProbe::Thermocouple {
                kind,
                junction,
                emf_deviation_mv,
            }
        }
        ("reference_indicating", c) => {
            let correction_c = match c {
                CertificateCoefficients::Correction { coefficients_c } => coefficients_c.clone(),
                _ => Vec::new(),
            };
            let lo = uncertainty_table
                .iter()
                .map(|u| u.t_lo_c)
                .fold(f64::INFINITY, f64::min);
            let hi = uncertainty_table
                .iter()
                .map(|u| u.t_hi_c)
                .fold(f64::NEG_INFINITY, f64::max);
            if !(lo.is_finite() && hi.is_finite()) {
                return Err(records_error(
                    "reference",
                    format!("certificate {} states no range", certificate.number),
                ));
            }
            ReferenceProbe::Digital {
                correction_c,
                range_c: (lo, hi),
            }
        }
        (kind, c) => {
            return Err(records_error(
                "reference",
                format!(
                    "{} is a {kind} but its certificate {} carries {} coefficients",
                    reference.asset_id,
                    certificate.number,
                    c.form()
                ),
            ));
        }
    };

    let mut template = Vec::new();
    let mut used = Vec::new();
    if let Some(id) = run.reference_readout_id {
        let r = item(conn, id).await?;
        if let Some(spec) = readout(
            &r,
            signal_unit_of_reference(&reference.kind),
            "reference_readout",
        )? {
            template.push(BudgetItem::new(
                format!("reference readout {}", r.asset_id),
                ItemKind::ReferenceReadout(spec),
            ));
        }
        used.push(r.asset_id);
    }
    if let Some(id) = run.uut_readout_id {
        let r = item(conn, id).await?;
        if let Some(spec) = readout(&r, uut_unit, "uut_readout")? {
            template.push(BudgetItem::new(
                format!("UUT readout {}", r.asset_id),
                ItemKind::UutReadout(spec),
            ));
        }
        used.push(r.asset_id);
    }
    let extra: Vec<ExtraBudgetRow> = serde_json::from_str(&run.extra_budget).map_err(|e| {
        records_error(
            "extra_budget",
            format!("the run's budget rows are unreadable: {e}"),
        )
    })?;
    for (i, row) in extra.iter().enumerate() {
        template.push(
            row.item()
                .map_err(|e| records_error(&format!("extra_budget[{i}]"), e))?,
        );
    }

    let (medium, characterisation, medium_run) = match run.medium_id {
        Some(id) => {
            let m = item(conn, id).await?;
            let ranges = equipment::characterisation_on(conn, id, &run.performed_on).await?;
            let measured =
                crate::store::switches::characterisation_run_on(conn, id, &run.performed_on)
                    .await?;
            // A characterisation run from readings takes precedence over
            // entered ranges unless the ranges are more recent.
            let measured = measured.filter(|r| {
                ranges
                    .first()
                    .is_none_or(|c| r.characterised_on >= c.characterised_on)
            });
            let measured = match measured {
                Some(r) => Some(
                    medium_characterisation(&m.asset_id, &r)
                        .map_err(|e| records_error("medium", e))?,
                ),
                None => None,
            };
            (Some(m), ranges, measured)
        }
        None => (None, Vec::new(), None),
    };

    let mut set_points = Vec::new();
    for sp in runs::set_points(conn, run.id).await? {
        // Only the signals: time stamps play no part in the numbers, and a
        // logger file may hold a million readings.
        let capacity = usize::try_from(runs::reading_count(conn, sp.id).await?).unwrap_or(0);
        let mut readings = Vec::with_capacity(capacity);
        runs::for_each_signals(conn, sp.id, |r| {
            readings.push(calib::Reading {
                timestamp: None,
                reference_signal: r.reference_signal,
                uut_signal: r.uut_signal,
                t_rj_c: r.rj_t_c,
            });
        })
        .await?;
        let t = sp.nominal_t_c;
        let mut items = Vec::new();
        let u = uncertainty_table
            .iter()
            .find(|u| (u.t_lo_c..=u.t_hi_c).contains(&t))
            .ok_or_else(|| {
                records_error(
                    "reference",
                    format!(
                        "certificate {} of {} states no uncertainty at the set point {t} °C",
                        certificate.number, reference.asset_id
                    ),
                )
            })?;
        items.push(BudgetItem::new(
            format!("reference calibration ({})", certificate.number),
            ItemKind::ReferenceCalibration {
                expanded_c: u.expanded_c,
                k: u.k,
            },
        ));
        if let Some(mc) = &medium_run {
            let at = mc
                .at(t)
                .map_err(|e| records_error("medium", e.to_string()))?;
            items.extend(at.budget_items());
        } else if let Some(m) = &medium
            && !characterisation.is_empty()
        {
            let c = characterisation.iter().find(|c| (c.t_lo_c..=c.t_hi_c).contains(&t)).ok_or_else(|| {
                let lo = characterisation.iter().map(|c| c.t_lo_c).fold(f64::INFINITY, f64::min);
                let hi = characterisation.iter().map(|c| c.t_hi_c).fold(f64::NEG_INFINITY, f64::max);
                records_error(
                    "medium",
                    format!("{} is characterised from {lo} °C to {hi} °C; the set point {t} °C lies outside", m.asset_id),
                )
            })?;
            items.push(BudgetItem::new(
                format!("{} uniformity", m.asset_id),
                ItemKind::MediumUniformity {
                    half_width_c: c.uniformity_half_width_c,
                },
            ));
            items.push(BudgetItem::new(
                format!("{} stability", m.asset_id),
                ItemKind::MediumStability {
                    half_width_c: c.stability_half_width_c,
                },
            ));
        }
        set_points.push(calib::SetPoint::new(t, readings).with_items(items));
    }

    let cmc = CmcTable::new(
        equipment::cmc_table(conn)
            .await?
            .into_iter()
            .filter(|c| c.instrument_kind == instrument.kind)
            .map(|c| CmcRange {
                t_lo_c: c.t_lo_c,
                t_hi_c: c.t_hi_c,
                expanded_c: c.expanded_c,
            })
            .collect(),
    );
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
    let tolerance = match (
        &run.tolerance_class,
        run.tolerance_limit_c,
        instrument.kind.as_str(),
    ) {
        (Some(class), _, "thermocouple") => Some(ToleranceSpec::ThermocoupleClass(
            class
                .parse::<ThermocoupleClass>()
                .map_err(|e| records_error("tolerance_class", e.to_string()))?,
        )),
        (Some(class), _, "prt") => Some(ToleranceSpec::PrtClass {
            class: class
                .parse::<PrtClass>()
                .map_err(|e| records_error("tolerance_class", e.to_string()))?,
            element: ElementKind::WireWound,
        }),
        (None, Some(limit), _) => Some(ToleranceSpec::Symmetric {
            half_width_c: limit,
        }),
        _ => None,
    };
    let conformity = match (tolerance, rule) {
        (Some(tolerance), Some(rule)) => Some(ConformitySpec { tolerance, rule }),
        _ => None,
    };
    let coverage_probability = lab::get(conn)
        .await?
        .map_or(P_K2, |l| l.coverage_probability);
    let mut model = calib::Run::new(probe, uut, set_points);
    // The results carry the statistics; each reading stays in the records.
    model.keep_reading_results = false;
    model.budget_template = template;
    model.coverage_probability = coverage_probability;
    model.cmc = cmc;
    model.conformity = conformity;
    model.fit_degree = match run.fit_degree {
        Some(d) => FitDegree::Fixed(usize::try_from(d).unwrap_or(0)),
        None => FitDegree::Auto,
    };
    if let Some(m) = &medium {
        used.push(m.asset_id.clone());
    }
    Ok(Prepared {
        model,
        provenance: Provenance {
            reference: reference.asset_id,
            reference_certificate: certificate.number,
            reference_due_on: certificate.due_on,
            equipment: used,
            medium_characterised_on: match &medium_run {
                Some(mc) => Some(mc.date().to_string()),
                None => characterisation.first().map(|c| c.characterised_on.clone()),
            },
            coverage_probability,
        },
    })
}

/// The temperature range (°C) over which a sensor kind's reference function
/// is defined, if it has one: thermocouples by their letter type (NIST
/// Monograph 175 / IEC 60584-1), industrial PRTs over IEC 60751's range,
/// SPRTs from the triple point of equilibrium hydrogen to the freezing point
/// of silver (ITS-90). Indicating thermometers and switches have none.
#[must_use]
pub fn defined_range(kind: &str, tc_type: Option<&str>) -> Option<(f64, f64)> {
    use crate::metrology::thermo::{ThermocoupleType, prt};
    match kind {
        "thermocouple" | "reference_thermocouple" => tc_type
            .and_then(|t| t.parse::<ThermocoupleType>().ok())
            .map(ThermocoupleType::temperature_range),
        "prt" | "reference_prt" => Some((prt::IEC_T_MIN_C, prt::IEC_T_MAX_C)),
        "sprt" | "reference_sprt" => Some((
            crate::metrology::thermo::its90::E_H2_TRIPLE_POINT_K - 273.15,
            961.78,
        )),
        _ => None,
    }
}

/// The interpolating characterisation of a medium from a stored
/// characterisation run.
///
/// # Errors
/// A sentence when the stored points cannot form a characterisation.
pub fn medium_characterisation(
    asset_id: &str,
    run: &crate::store::switches::CharacterisationRun,
) -> Result<calib::MediumCharacterisation, String> {
    calib::MediumCharacterisation::new(
        asset_id,
        &run.characterised_on,
        run.points
            .iter()
            .map(|p| calib::MediumPoint {
                temperature_c: p.temperature_c,
                uniformity_half_width_c: p.uniformity_half_width_c,
                stability_half_width_c: p.stability_half_width_c,
                loading_half_width_c: p.loading_half_width_c,
            })
            .collect(),
    )
    .map_err(|e| e.to_string())
}
