//! The demonstration laboratory: an invented lab with invented customers,
//! instruments, equipment and serial numbers, for trying Juncture out.
//! Nothing here describes a real organisation, and the demo accounts'
//! shared password exists only in demo databases.

use serde_json::json;
use sqlx::{SqliteConnection, SqlitePool};

use crate::store::accounts::{self, Role};
use crate::store::equipment::{
    self as eq, CertificateFields, CertificateUncertainty, Characterisation, Cmc, EquipmentFields,
};
use crate::store::records::{self, CustomerFields, InstrumentFields};
use crate::store::{self, audit, lab::LabSettings};

/// Why the demo could not be loaded.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DemoError {
    /// The database already holds a laboratory; the demo never overwrites.
    #[error(
        "the database already holds the laboratory \"{0}\"; the demo loads only into an empty database (choose another file with --database)"
    )]
    NotEmpty(String),
    /// A database error.
    #[error(transparent)]
    Db(#[from] sqlx::Error),
    /// The demo accounts' password could not be hashed.
    #[error("cannot hash the demo password: {0}")]
    Hash(String),
}

/// Actor recorded in the audit trail for demo records.
pub const DEMO_ACTOR: &str = "demo loader";

/// Name of the invented demonstration laboratory.
pub const DEMO_LAB_NAME: &str = "Larchmere Thermal Metrology (demonstration)";

/// Password of the demo accounts. It exists only in databases the demo
/// created; a real lab adds its users with `juncture user add`.
pub const DEMO_PASSWORD: &str = "juncture-demo";

/// The demo accounts: (username, display name, role).
pub const DEMO_USERS: [(&str, &str, Role); 3] = [
    (
        "demo-tech",
        "Tamsin Hale (demo technician)",
        Role::Technician,
    ),
    (
        "demo-reviewer",
        "Rowan Pike (demo reviewer)",
        Role::Reviewer,
    ),
    (
        "demo-admin",
        "Ada Marsh (demo administrator)",
        Role::Administrator,
    ),
];

/// The demonstration laboratory's identity and settings.
#[must_use]
pub fn demo_lab() -> LabSettings {
    LabSettings {
        name: DEMO_LAB_NAME.to_owned(),
        address: "Unit 7, Foundry Lane\nLarchmere LM4 2QT".to_owned(),
        accreditation: "Demonstration accreditation no. 0000 (invented; not a real accreditation)"
            .to_owned(),
        contact_email: "lab@larchmere.invalid".to_owned(),
        contact_phone: "+00 0000 000000".to_owned(),
        certificate_number_pattern: "LTM-{year}-{seq:4}".to_owned(),
        coverage_probability: 0.9545,
        due_warning_days: 30,
        characterisation_interval_days: 365,
        updated_at: String::new(),
    }
}

async fn note(
    conn: &mut SqliteConnection,
    entity: &str,
    id: &str,
    after: serde_json::Value,
) -> sqlx::Result<()> {
    audit::append(
        conn,
        &audit::NewEvent {
            actor: DEMO_ACTOR,
            action: "create",
            entity,
            entity_id: id,
            before: None,
            after: Some(&after),
        },
    )
    .await?;
    Ok(())
}

struct Item<'a> {
    asset_id: &'a str,
    kind: &'a str,
    description: &'a str,
    manufacturer: &'a str,
    model: &'a str,
    tc_type: Option<&'a str>,
    spec: Option<(&'a str, f64, f64, f64)>,
}

async fn item(conn: &mut SqliteConnection, i: Item<'_>) -> sqlx::Result<i64> {
    let fields = EquipmentFields {
        asset_id: i.asset_id.to_owned(),
        kind: i.kind.to_owned(),
        description: i.description.to_owned(),
        manufacturer: i.manufacturer.to_owned(),
        model: i.model.to_owned(),
        serial: format!("{}-SN", i.asset_id),
        firmware: if i.kind == "readout" {
            "3.02".to_owned()
        } else {
            String::new()
        },
        location: "Larchmere main laboratory".to_owned(),
        status: "in_service".to_owned(),
        status_reason: String::new(),
        tc_type: i.tc_type.map(str::to_owned),
        spec_unit: i.spec.map(|s| s.0.to_owned()),
        spec_offset: i.spec.map(|s| s.1),
        spec_relative: i.spec.map(|s| s.2),
        spec_resolution: i.spec.map(|s| s.3),
    };
    let created = eq::create(conn, &fields).await?;
    note(
        conn,
        "equipment",
        i.asset_id,
        serde_json::to_value(&created).unwrap_or_default(),
    )
    .await?;
    Ok(created.id)
}

async fn certificate(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    number: &str,
    dates: (&str, &str),
    coefficients: serde_json::Value,
    uncertainties: &[(f64, f64, f64)],
) -> sqlx::Result<()> {
    let fields = CertificateFields {
        number: number.to_owned(),
        issuer: "Example National Standards Laboratory (invented)".to_owned(),
        calibrated_on: dates.0.to_owned(),
        due_on: dates.1.to_owned(),
        coefficients: coefficients.to_string(),
        uncertainties: uncertainties
            .iter()
            .map(|&(t_lo_c, t_hi_c, expanded_c)| CertificateUncertainty {
                t_lo_c,
                t_hi_c,
                expanded_c,
                k: 2.0,
            })
            .collect(),
    };
    let c = eq::add_certificate(conn, equipment_id, &fields).await?;
    note(
        conn,
        "equipment_certificate",
        &c.number,
        serde_json::to_value(&c).unwrap_or_default(),
    )
    .await
}

/// Loads the demonstration laboratory into an empty, migrated database, in
/// one transaction: either all of it is stored or nothing is.
///
/// # Errors
/// [`DemoError::NotEmpty`] when a laboratory is already set up; any
/// database error.
pub async fn load(pool: &SqlitePool) -> Result<(), DemoError> {
    // Hash before taking the write lock: argon2 is deliberately slow.
    let password_hash = crate::web::auth::hash_password(DEMO_PASSWORD).map_err(DemoError::Hash)?;
    let mut tx = store::begin_write(pool).await?;
    if let Some(existing) = store::lab::get(&mut tx).await? {
        return Err(DemoError::NotEmpty(existing.name));
    }
    let lab = demo_lab();
    store::lab::put(&mut tx, &lab).await?;
    note(
        &mut tx,
        "lab_settings",
        "1",
        serde_json::to_value(&lab).unwrap_or_default(),
    )
    .await?;

    for (username, display, role) in DEMO_USERS {
        let id = accounts::create_user(&mut tx, username, display, role, &password_hash).await?;
        note(
            &mut tx,
            "user",
            &id.to_string(),
            json!({"username": username, "role": role.as_str()}),
        )
        .await?;
    }

    // Reference standards, readouts and media (all invented).
    let sprt = item(
        &mut tx,
        Item {
            asset_id: "LTM-SPRT-01",
            kind: "reference_sprt",
            description: "25.5 Ω quartz-sheathed SPRT",
            manufacturer: "Example Thermometry",
            model: "QS-25",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    certificate(&mut tx, sprt, "ENSL-26-0310", ("2026-03-10", "2028-03-10"),
        json!({"form": "its90", "r_tpw_ohm": 25.546_91, "sub_range": "water-to-zinc", "a": -2.1e-5, "b": 1.4e-6}),
        &[(0.0, 420.0, 0.003)]).await?;
    let prt = item(
        &mut tx,
        Item {
            asset_id: "LTM-PRT-02",
            kind: "reference_prt",
            description: "100 Ω reference PRT, 450 mm",
            manufacturer: "Example Thermometry",
            model: "RP-100",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    certificate(&mut tx, prt, "ENSL-26-0504", ("2026-05-04", "2027-05-04"),
        json!({"form": "cvd", "r0_ohm": 100.0231, "a": 3.908_02e-3, "b": -5.7753e-7, "c": -4.1821e-12}),
        &[(-80.0, 420.0, 0.015)]).await?;
    let tcr = item(
        &mut tx,
        Item {
            asset_id: "LTM-TCR-03",
            kind: "reference_thermocouple",
            description: "type R reference thermocouple, alumina sheath",
            manufacturer: "Example Thermometry",
            model: "R-600",
            tc_type: Some("R"),
            spec: None,
        },
    )
    .await?;
    certificate(
        &mut tx,
        tcr,
        "ENSL-26-0220",
        ("2026-02-20", "2027-02-20"),
        json!({"form": "emf_deviation", "coefficients_mv": [0.0, 2.0e-6, -1.0e-9]}),
        &[(0.0, 1100.0, 0.6)],
    )
    .await?;
    let dig = item(
        &mut tx,
        Item {
            asset_id: "LTM-DIG-04",
            kind: "reference_indicating",
            description: "digital reference thermometer with PRT probe",
            manufacturer: "Example Instruments",
            model: "DT-9",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    certificate(
        &mut tx,
        dig,
        "ENSL-26-0615",
        ("2026-06-15", "2027-06-15"),
        json!({"form": "correction", "coefficients_c": [0.012, -1.0e-4]}),
        &[(-30.0, 250.0, 0.03)],
    )
    .await?;
    let bridge = item(
        &mut tx,
        Item {
            asset_id: "LTM-BRG-05",
            kind: "readout",
            description: "resistance bridge",
            manufacturer: "Example Instruments",
            model: "RB-8",
            tc_type: None,
            spec: Some(("ohm", 0.0002, 2e-6, 0.00001)),
        },
    )
    .await?;
    certificate(
        &mut tx,
        bridge,
        "EEL-26-1102",
        ("2026-04-02", "2027-04-02"),
        json!({"form": "none"}),
        &[],
    )
    .await?;
    let dmm = item(
        &mut tx,
        Item {
            asset_id: "LTM-DMM-06",
            kind: "readout",
            description: "8½-digit voltmeter for thermocouples",
            manufacturer: "Example Instruments",
            model: "DV-85",
            tc_type: None,
            spec: Some(("mV", 0.002, 20e-6, 0.0001)),
        },
    )
    .await?;
    certificate(
        &mut tx,
        dmm,
        "EEL-26-1103",
        ("2026-04-02", "2027-04-02"),
        json!({"form": "none"}),
        &[],
    )
    .await?;
    let bath = item(
        &mut tx,
        Item {
            asset_id: "LTM-BATH-07",
            kind: "bath",
            description: "stirred silicone-oil bath",
            manufacturer: "Example Baths",
            model: "SB-30",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    let furnace = item(
        &mut tx,
        Item {
            asset_id: "LTM-FURN-08",
            kind: "furnace",
            description: "horizontal tube furnace with equalising block",
            manufacturer: "Example Furnaces",
            model: "TF-12",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    let block = item(
        &mut tx,
        Item {
            asset_id: "LTM-DRY-09",
            kind: "dry_block",
            description: "Peltier dry-block calibrator",
            manufacturer: "Example Instruments",
            model: "PB-140",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    for (id, ranges) in [
        (
            bath,
            vec![(-30.0, 100.0, 0.005, 0.003), (100.0, 200.0, 0.008, 0.004)],
        ),
        (
            furnace,
            vec![(300.0, 800.0, 0.4, 0.1), (800.0, 1200.0, 0.6, 0.15)],
        ),
        (block, vec![(-25.0, 140.0, 0.03, 0.01)]),
    ] {
        for (t_lo_c, t_hi_c, uniformity_half_width_c, stability_half_width_c) in ranges {
            let c = Characterisation {
                characterised_on: "2026-09-01".to_owned(),
                t_lo_c,
                t_hi_c,
                uniformity_half_width_c,
                stability_half_width_c,
            };
            eq::add_characterisation(&mut tx, id, &c).await?;
        }
    }
    // One readout out of service and one reference past its due date, so
    // the blocks can be seen.
    let spare = item(
        &mut tx,
        Item {
            asset_id: "LTM-DMM-10",
            kind: "readout",
            description: "spare voltmeter",
            manufacturer: "Example Instruments",
            model: "DV-65",
            tc_type: None,
            spec: Some(("mV", 0.004, 30e-6, 0.001)),
        },
    )
    .await?;
    certificate(
        &mut tx,
        spare,
        "EEL-26-0107",
        ("2026-01-07", "2027-01-07"),
        json!({"form": "none"}),
        &[],
    )
    .await?;
    eq::set_status(
        &mut tx,
        spare,
        "out_of_service",
        "failed its intermediate check on 2026-11-03",
    )
    .await?;
    let old = item(
        &mut tx,
        Item {
            asset_id: "LTM-PRT-11",
            kind: "reference_prt",
            description: "working reference PRT awaiting recalibration",
            manufacturer: "Example Thermometry",
            model: "RP-100",
            tc_type: None,
            spec: None,
        },
    )
    .await?;
    certificate(
        &mut tx,
        old,
        "ENSL-25-0930",
        ("2025-09-30", "2026-10-01"),
        json!({"form": "cvd", "r0_ohm": 99.9874, "a": 3.9083e-3, "b": -5.775e-7, "c": -4.183e-12}),
        &[(-80.0, 250.0, 0.02)],
    )
    .await?;

    for (kind, t_lo_c, t_hi_c, expanded_c) in [
        ("thermocouple", 0.0, 1100.0, 0.6),
        ("prt", -30.0, 250.0, 0.02),
        ("indicating", -30.0, 250.0, 0.03),
    ] {
        let row = Cmc {
            instrument_kind: kind.to_owned(),
            t_lo_c,
            t_hi_c,
            expanded_c,
        };
        eq::add_cmc(&mut tx, &row).await?;
        note(
            &mut tx,
            "cmc",
            kind,
            serde_json::to_value(&row).unwrap_or_default(),
        )
        .await?;
    }

    // Budget rows the lab enters per kind of unit under test (values
    // invented for the demo; a real lab takes them from its procedures).
    let row = |name: &str, distribution: &str, value_c: f64, kind: &str| {
        crate::domain::results::ExtraBudgetRow {
            name: name.to_owned(),
            distribution: distribution.to_owned(),
            value_c,
            kind: kind.to_owned(),
        }
    };
    for (kind, rows) in [
        (
            "thermocouple",
            vec![
                row("ice point", "rectangular", 0.02, "reference_junction"),
                row("inhomogeneity", "rectangular", 0.3, "custom"),
            ],
        ),
        (
            "prt",
            vec![
                row("immersion", "rectangular", 0.005, "custom"),
                row("self-heating", "rectangular", 0.003, "custom"),
            ],
        ),
        (
            "indicating",
            vec![row(
                "display resolution",
                "rectangular",
                0.01,
                "uut_resolution",
            )],
        ),
    ] {
        store::templates::replace(&mut tx, kind, &rows).await?;
        note(
            &mut tx,
            "budget_template",
            kind,
            serde_json::to_value(&rows).unwrap_or_default(),
        )
        .await?;
    }

    // Customers and their instruments (invented).
    let customers = [
        (
            "Brackenridge Foods Ltd (invented)",
            "qa@brackenridge.invalid",
        ),
        (
            "Corrow Valley Water Authority (invented)",
            "metrology@corrow.invalid",
        ),
        (
            "Peregrine Aero Components (invented)",
            "calibration@peregrine.invalid",
        ),
    ];
    let mut customer_ids = Vec::new();
    for (name, email) in customers {
        let c = records::create_customer(
            &mut tx,
            &CustomerFields {
                name: name.to_owned(),
                address: String::new(),
                contact_email: email.to_owned(),
                contact_phone: String::new(),
            },
        )
        .await?;
        note(
            &mut tx,
            "customer",
            &c.id.to_string(),
            serde_json::to_value(&c).unwrap_or_default(),
        )
        .await?;
        customer_ids.push(c.id);
    }
    for (serial, kind, tc_type, r0, description, owner) in [
        (
            "BRF-TC-0412",
            "thermocouple",
            Some("N"),
            None,
            "type N mineral-insulated thermocouple, 6 mm x 1000 mm",
            0,
        ),
        (
            "CVW-PT-1187",
            "prt",
            None,
            Some(100.0),
            "Pt100 class A, 4-wire, 6 mm x 300 mm",
            1,
        ),
        (
            "PAC-DT-0093",
            "indicating",
            None,
            None,
            "handheld digital thermometer with probe, 0.01 °C resolution",
            2,
        ),
        (
            "PAC-TC-2210",
            "thermocouple",
            Some("K"),
            None,
            "type K probe with miniature connector",
            2,
        ),
    ] {
        let i = records::create_instrument(
            &mut tx,
            &InstrumentFields {
                serial: serial.to_owned(),
                kind: kind.to_owned(),
                tc_type: tc_type.map(str::to_owned),
                r0_ohm: r0,
                description: description.to_owned(),
                manufacturer: "Example Sensors".to_owned(),
                model: String::new(),
                customer_id: customer_ids[owner],
            },
        )
        .await?;
        note(
            &mut tx,
            "instrument",
            serial,
            serde_json::to_value(&i).unwrap_or_default(),
        )
        .await?;
    }
    demo_runs(&mut tx).await?;
    demo_media(&mut tx).await?;
    demo_switches(&mut tx).await?;
    tx.commit().await?;
    Ok(())
}

/// A small deterministic scatter pattern for invented readings.
const SCATTER: [f64; 6] = [0.0, 0.6, -0.4, 0.3, -0.5, 0.1];

async fn id_of(conn: &mut SqliteConnection, asset_id: &str) -> sqlx::Result<i64> {
    eq::by_asset_id(conn, asset_id)
        .await?
        .map(|e| e.id)
        .ok_or(sqlx::Error::RowNotFound)
}

/// A set point with its readings: (reference signal, UUT signal, t_rj).
type DemoPoint = (f64, Vec<(f64, f64, Option<f64>)>);

struct DemoRun<'a> {
    serial: &'a str,
    reference: &'a str,
    reference_readout: Option<&'a str>,
    uut_readout: Option<&'a str>,
    medium: &'a str,
    date: &'a str,
    procedure: &'a str,
    rj_method: &'a str,
    tolerance_class: Option<&'a str>,
    tolerance_limit_c: Option<f64>,
    decision_rule: &'a str,
    extra: serde_json::Value,
    /// (set point, readings (reference, uut, rj))
    points: Vec<DemoPoint>,
    submit: bool,
}

async fn demo_run(
    conn: &mut SqliteConnection,
    technician: i64,
    r: DemoRun<'_>,
) -> sqlx::Result<i64> {
    let instrument = records::instrument_by_serial(conn, r.serial)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    let reference_readout_id = match r.reference_readout {
        Some(a) => Some(id_of(conn, a).await?),
        None => None,
    };
    let uut_readout_id = match r.uut_readout {
        Some(a) => Some(id_of(conn, a).await?),
        None => None,
    };
    let fields = store::runs::RunFields {
        instrument_id: instrument.id,
        reference_id: id_of(conn, r.reference).await?,
        reference_readout_id,
        uut_readout_id,
        medium_id: Some(id_of(conn, r.medium).await?),
        performed_on: r.date.to_owned(),
        procedure_ref: r.procedure.to_owned(),
        location: "Larchmere main laboratory".to_owned(),
        ambient_t_c: Some(21.8),
        ambient_rh_percent: Some(43.0),
        rj_method: r.rj_method.to_owned(),
        immersion_mm: Some(200.0),
        condition: "as_found".to_owned(),
        decision_rule: r.decision_rule.to_owned(),
        guard_band_factor: 1.0,
        tolerance_class: r.tolerance_class.map(str::to_owned),
        tolerance_limit_c: r.tolerance_limit_c,
        fit_degree: None,
        extra_budget: r.extra.to_string(),
    };
    let run = store::runs::create(conn, &fields, technician).await?;
    note(
        conn,
        "run",
        &run.id.to_string(),
        serde_json::to_value(&run).unwrap_or_default(),
    )
    .await?;
    for (t, readings) in r.points {
        let sp = store::runs::add_set_point(conn, run.id, t).await?;
        let rows: Vec<store::runs::Reading> = readings
            .iter()
            .enumerate()
            .map(
                |(i, &(reference_signal, uut_signal, rj_t_c))| store::runs::Reading {
                    position: 0,
                    taken_at: Some(format!(
                        "{}T{:02}:{:02}:00Z",
                        r.date,
                        9 + (t.abs() as usize / 100) % 8,
                        (i * 2) % 60
                    )),
                    reference_signal,
                    uut_signal,
                    rj_t_c,
                },
            )
            .collect();
        store::runs::append_readings(conn, sp.id, &rows).await?;
        note(
            conn,
            "run",
            &run.id.to_string(),
            json!({"set_point": t, "readings": rows.len()}),
        )
        .await?;
    }
    if r.submit {
        store::runs::submit(conn, run.id).await?;
        audit::append(
            conn,
            &audit::NewEvent {
                actor: DEMO_ACTOR,
                action: "submit",
                entity: "run",
                entity_id: &run.id.to_string(),
                before: None,
                after: None,
            },
        )
        .await?;
    }
    Ok(run.id)
}

/// Three runs with invented readings, generated from the reference
/// functions so that the numbers are physically consistent.
async fn demo_runs(conn: &mut SqliteConnection) -> sqlx::Result<()> {
    use crate::metrology::thermo::{CvdCoefficients, Sprt, ThermocoupleType};
    let bad =
        |e: crate::metrology::thermo::ThermoError| sqlx::Error::Protocol(format!("demo data: {e}"));
    let technician = accounts::user_by_username(conn, "demo-tech")
        .await?
        .ok_or(sqlx::Error::RowNotFound)?
        .id;

    // 1. Pt100 against the SPRT in the oil bath (submitted for review).
    let sprt = Sprt::new(
        25.546_91,
        crate::metrology::thermo::SprtSubRange::WaterToZinc {
            a: -2.1e-5,
            b: 1.4e-6,
        },
    )
    .map_err(bad)?;
    let pt100 = CvdCoefficients::pt100();
    let mut points = Vec::new();
    for t in [0.0, 50.0, 100.0, 150.0] {
        let mut readings = Vec::new();
        for (i, s) in SCATTER.iter().enumerate() {
            let actual = t + 0.004 * s + 0.001 * i as f64;
            let r_ref = sprt.resistance(actual + 273.15).map_err(bad)?;
            // The customer's Pt100 reads 0.03 °C to 0.05 °C high (invented).
            let r_uut = pt100
                .resistance(actual + 0.03 + 0.00013 * t + 0.002 * s)
                .map_err(bad)?;
            readings.push((
                (r_ref * 1e5).round() / 1e5,
                (r_uut * 1e4).round() / 1e4,
                None,
            ));
        }
        points.push((t, readings));
    }
    demo_run(
        conn,
        technician,
        DemoRun {
            serial: "CVW-PT-1187",
            reference: "LTM-SPRT-01",
            reference_readout: Some("LTM-BRG-05"),
            uut_readout: Some("LTM-BRG-05"),
            medium: "LTM-BATH-07",
            date: "2026-11-18",
            procedure: "LTM-P-04 rev 3 (PRT by comparison)",
            rj_method: "not_applicable",
            tolerance_class: Some("A"),
            tolerance_limit_c: None,
            decision_rule: "guarded_non_binary",
            extra: json!([{"name": "immersion", "distribution": "rectangular", "value_c": 0.005},
                      {"name": "self-heating", "distribution": "rectangular", "value_c": 0.003}]),
            points,
            submit: true,
        },
    )
    .await?;

    // 2. Type N thermocouple against the type R reference in the furnace.
    let (n, r) = (ThermocoupleType::N, ThermocoupleType::R);
    let mut points = Vec::new();
    for t in [400.0, 600.0, 800.0, 1000.0] {
        let mut readings = Vec::new();
        for s in SCATTER.iter().take(5) {
            let actual = t - 1.2 + 0.05 * s;
            let e_ref = r.emf(actual).map_err(bad)? + 2.0e-6 * actual - 1.0e-9 * actual * actual;
            // The customer's type N reads about 1.1 °C to 2.4 °C high (invented drift).
            let e_uut = n
                .emf(actual + 1.1 + 0.0013 * (t - 400.0) + 0.03 * s)
                .map_err(bad)?;
            readings.push((
                (e_ref * 1e4).round() / 1e4,
                (e_uut * 1e4).round() / 1e4,
                None,
            ));
        }
        points.push((t, readings));
    }
    demo_run(conn, technician, DemoRun {
        serial: "BRF-TC-0412", reference: "LTM-TCR-03", reference_readout: Some("LTM-DMM-06"), uut_readout: Some("LTM-DMM-06"),
        medium: "LTM-FURN-08", date: "2026-11-24", procedure: "LTM-P-09 rev 1 (thermocouples in the tube furnace)", rj_method: "ice_point",
        tolerance_class: Some("2"), tolerance_limit_c: None, decision_rule: "simple",
        extra: json!([{"name": "ice point", "distribution": "rectangular", "value_c": 0.02, "kind": "reference_junction"},
                      {"name": "inhomogeneity", "distribution": "rectangular", "value_c": 0.3}]),
        points, submit: false,
    }).await?;

    // 3. Handheld digital thermometer against the digital reference in the
    //    Peltier dry block.
    let mut points = Vec::new();
    for t in [-20.0, 0.0, 50.0, 120.0] {
        let mut readings = Vec::new();
        for s in SCATTER {
            let actual: f64 = t + 0.01 * s;
            // The reference indicates t - c(t); the handheld reads 0.04 °C to 0.12 °C low.
            let indication = actual - 0.012 + 1.0e-4 * actual;
            let uut = actual - 0.04 - 0.0006 * t.abs() + 0.01 * s;
            readings.push((
                (indication * 1e3).round() / 1e3,
                (uut * 1e2).round() / 1e2,
                None,
            ));
        }
        points.push((t, readings));
    }
    demo_run(conn, technician, DemoRun {
        serial: "PAC-DT-0093", reference: "LTM-DIG-04", reference_readout: None, uut_readout: None,
        medium: "LTM-DRY-09", date: "2026-11-26", procedure: "LTM-P-02 rev 5 (indicating thermometers)", rj_method: "not_applicable",
        tolerance_class: None, tolerance_limit_c: Some(0.2), decision_rule: "guarded_non_binary",
        extra: json!([{"name": "display resolution", "distribution": "rectangular", "value_c": 0.01, "kind": "uut_resolution"}]),
        points, submit: false,
    }).await?;
    Ok(())
}

/// Characterisation runs of the three comparison media, with invented
/// readings: axial profile at 0, 20 and 40 mm, the bores, a 30-minute
/// stability record and the loading effect at each temperature.
async fn demo_media(conn: &mut SqliteConnection) -> sqlx::Result<()> {
    use crate::web::api::media::{
        CharacterisationRunBody, DepthBody, StabilityBody, TemperatureBody, derive_points,
        inputs_of,
    };
    let admin = accounts::user_by_username(conn, "demo-admin")
        .await?
        .ok_or(sqlx::Error::RowNotFound)?
        .id;
    // (asset, date, [(t, axial gradient over 40 mm, bore spread, stability peak-to-peak, loading)])
    type Effects = (f64, f64, f64, f64, f64);
    let media: [(&str, &str, &[Effects]); 3] = [
        (
            "LTM-BATH-07",
            "2026-09-15",
            &[
                (-30.0, 0.006, 0.003, 0.005, 0.002),
                (0.0, 0.004, 0.002, 0.004, 0.001),
                (100.0, 0.007, 0.003, 0.006, 0.002),
                (200.0, 0.012, 0.005, 0.008, 0.004),
            ],
        ),
        (
            "LTM-FURN-08",
            "2026-09-15",
            &[
                (300.0, 0.35, 0.15, 0.12, 0.10),
                (600.0, 0.45, 0.20, 0.16, 0.15),
                (900.0, 0.60, 0.25, 0.22, 0.20),
                (1200.0, 0.80, 0.30, 0.30, 0.30),
            ],
        ),
        (
            "LTM-DRY-09",
            "2026-09-15",
            &[
                (-25.0, 0.030, 0.012, 0.012, 0.010),
                (20.0, 0.010, 0.006, 0.006, 0.004),
                (80.0, 0.025, 0.010, 0.010, 0.008),
                (140.0, 0.045, 0.015, 0.016, 0.015),
            ],
        ),
    ];
    for (asset, date, temps) in media {
        let body = CharacterisationRunBody {
            characterised_on: date.to_owned(),
            temperatures: temps
                .iter()
                .map(|&(t, axial, radial, pp, loading)| TemperatureBody {
                    temperature_c: t,
                    axial: Some(
                        [0.0, 20.0, 40.0]
                            .iter()
                            .map(|&h| DepthBody {
                                height_mm: h,
                                t_c: t - axial * h / 40.0,
                            })
                            .collect(),
                    ),
                    radial_bores_c: Some(vec![t, t + radial, t + 0.4 * radial, t + 0.7 * radial]),
                    radial_differences_c: None,
                    stability: SCATTER
                        .iter()
                        .enumerate()
                        .map(|(i, s)| StabilityBody {
                            time_s: 360.0 * i as f64,
                            t_c: t + pp * s,
                        })
                        .collect(),
                    loading_difference_c: Some(-loading),
                    reference_expanded_c: None,
                })
                .collect(),
        };
        let demo = |e: crate::web::AppError| sqlx::Error::Protocol(format!("demo media: {e}"));
        let inputs = inputs_of(&body).map_err(demo)?;
        let (points, _) = derive_points(asset, date, &inputs).map_err(demo)?;
        let id = id_of(conn, asset).await?;
        let input = serde_json::to_string(&body).unwrap_or_default();
        let run = store::switches::add_characterisation_run(conn, id, date, &input, admin, &points)
            .await?;
        note(
            conn,
            "medium_characterisation_run",
            &run.to_string(),
            json!({"asset_id": asset, "characterised_on": date, "temperatures": points.len()}),
        )
        .await?;
    }
    Ok(())
}

/// Two switch tests: a bimetal thermostat opening on rising temperature,
/// with its ramps recorded reading by reading, and an electronic
/// low-temperature alarm whose changes were read directly.
async fn demo_switches(conn: &mut SqliteConnection) -> sqlx::Result<()> {
    let technician = accounts::user_by_username(conn, "demo-tech")
        .await?
        .ok_or(sqlx::Error::RowNotFound)?
        .id;
    let mut owners = Vec::new();
    for (name, email) in [
        (
            "Hollin Dairy Co-operative (invented)",
            "engineering@hollin.invalid",
        ),
        (
            "Tarrant Cold Stores (invented)",
            "facilities@tarrant.invalid",
        ),
    ] {
        let c = records::create_customer(
            conn,
            &CustomerFields {
                name: name.to_owned(),
                address: String::new(),
                contact_email: email.to_owned(),
                contact_phone: String::new(),
            },
        )
        .await?;
        note(
            conn,
            "customer",
            &c.id.to_string(),
            serde_json::to_value(&c).unwrap_or_default(),
        )
        .await?;
        owners.push(c.id);
    }
    for (serial, description, owner) in [
        (
            "HD-TS-0085",
            "bimetal thermostat, 85 °C, opens on rising temperature",
            owners[0],
        ),
        (
            "TCS-ES-0018",
            "electronic low-temperature alarm switch, -18 °C, closes on falling temperature",
            owners[1],
        ),
    ] {
        let i = records::create_instrument(
            conn,
            &InstrumentFields {
                serial: serial.to_owned(),
                kind: "switch".to_owned(),
                tc_type: None,
                r0_ohm: None,
                description: description.to_owned(),
                manufacturer: "Example Controls".to_owned(),
                model: String::new(),
                customer_id: owner,
            },
        )
        .await?;
        note(
            conn,
            "instrument",
            serial,
            serde_json::to_value(&i).unwrap_or_default(),
        )
        .await?;
    }
    for (serial, medium, date, nominal, direction, action, tolerance) in [
        (
            "HD-TS-0085",
            "LTM-BATH-07",
            "2026-11-27",
            85.0,
            "rising",
            "opens",
            2.0,
        ),
        (
            "TCS-ES-0018",
            "LTM-DRY-09",
            "2026-11-28",
            -18.0,
            "falling",
            "closes",
            1.0,
        ),
    ] {
        let run = demo_run(
            conn,
            technician,
            DemoRun {
                serial,
                reference: "LTM-DIG-04",
                reference_readout: None,
                uut_readout: None,
                medium,
                date,
                procedure: "LTM-P-21 rev 1 (temperature switches)",
                rj_method: "not_applicable",
                tolerance_class: None,
                tolerance_limit_c: Some(tolerance),
                decision_rule: "simple",
                extra: json!([]),
                points: Vec::new(),
                submit: false,
            },
        )
        .await?;
        let settings = store::switches::SwitchSettings {
            run_id: run,
            nominal_t_c: nominal,
            actuation_direction: direction.to_owned(),
            contact_action: action.to_owned(),
            ramp_rate_c_per_min: (serial == "HD-TS-0085").then_some(0.5),
            time_constant_s: (serial == "HD-TS-0085").then_some(15.0),
            lag_half_width_c: (serial != "HD-TS-0085").then_some(0.05),
            observed_resolution_c: 0.01,
        };
        store::switches::put_settings(conn, &settings).await?;
        note(
            conn,
            "run",
            &run.to_string(),
            serde_json::to_value(&settings).unwrap_or_default(),
        )
        .await?;
        if serial == "HD-TS-0085" {
            // Three cycles: opening near 85.6 °C, closing again near 79.2 °C.
            for (cycle, s) in SCATTER.iter().take(3).enumerate() {
                for (dir, from, to, at, before, after) in [
                    ("rising", 83.0, 87.0, 85.6 + 0.2 * s, "closed", "open"),
                    ("falling", 81.0, 77.0, 79.2 + 0.2 * s, "open", "closed"),
                ] {
                    let step = if to > from { 0.1 } else { -0.1 };
                    let readings: Vec<(f64, &str)> = (0..=40)
                        .map(|i| {
                            let t = ((from + step * f64::from(i)) * 1000.0).round() / 1000.0;
                            let changed = if step > 0.0 { t > at } else { t < at };
                            (t, if changed { after } else { before })
                        })
                        .collect();
                    let text = serde_json::to_string(&readings).unwrap_or_default();
                    store::switches::add_ramp(conn, run, dir, Some(&text), None).await?;
                    note(
                        conn,
                        "run",
                        &run.to_string(),
                        json!({"ramp": dir, "cycle": cycle + 1}),
                    )
                    .await?;
                }
            }
        } else {
            for (dir, t) in [
                ("falling", -18.32),
                ("rising", -16.85),
                ("falling", -18.27),
                ("rising", -16.91),
                ("falling", -18.35),
                ("rising", -16.88),
            ] {
                store::switches::add_ramp(conn, run, dir, None, Some(t)).await?;
                note(
                    conn,
                    "run",
                    &run.to_string(),
                    json!({"ramp": dir, "observed_t_c": t}),
                )
                .await?;
            }
        }
    }
    Ok(())
}
