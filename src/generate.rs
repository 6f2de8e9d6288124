//! `juncture generate`: fills a database that holds the demonstration
//! laboratory with invented customers, instruments, approved runs and
//! issued certificates, for measuring how Juncture behaves at scale.
//!
//! Every name, serial number and reading is invented. The certificates are
//! built from template runs that are evaluated for real: for each kind of
//! instrument the generator records a few runs with physically consistent
//! readings (from the reference functions), computes their results and
//! issues their certificates with the real snapshot builder. Every other
//! certificate copies one template's run records and results and gets its
//! own number, customer, instrument, dates and traceability (the lab's
//! equipment certificates in force on its date), with its own canonical
//! JSON, SHA-256 and register facts. The output depends only on the seed
//! and the counts (plus the database it starts from).

use std::collections::{HashMap, HashSet};

use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use serde_json::json;
use sqlx::{SqliteConnection, SqlitePool};

use crate::domain::certificates::{Issue, build_snapshot, compute, expand_pattern};
use crate::metrology::thermo::{CvdCoefficients, Sprt, SprtSubRange, ThermocoupleType};
use crate::report::snapshot::{CertificateSnapshot, TraceRow};
use crate::store::runs::{self, Reading, Run, RunFields};
use crate::store::{self, accounts, audit, bulk, certificates, equipment, records};

/// Serial numbers of generated instruments start with this.
pub const SERIAL_PREFIX: &str = "GEN-";
/// Templates per kind of instrument (each a real, evaluated run).
pub const VARIANTS_PER_KIND: usize = 6;
/// Certificates written per transaction.
const BATCH: usize = 2000;
/// Generated calibration dates fall in these years (templates in 2026).
const FIRST_YEAR: i64 = 2016;
const LAST_YEAR: i64 = 2025;

/// What to generate.
#[derive(Debug, Clone, Copy)]
pub struct Plan {
    /// Certificates (at least `instruments`).
    pub certificates: usize,
    /// Instruments (at least 3: one of each kind).
    pub instruments: usize,
    /// Seed of the invented data.
    pub seed: u64,
}

/// What a load wrote.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Summary {
    /// Customers added.
    pub customers: usize,
    /// Instruments added.
    pub instruments: usize,
    /// Runs (and certificates) added.
    pub certificates: usize,
    /// Template runs evaluated for real.
    pub templates: usize,
}

/// Why a load was refused or failed.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum GenerateError {
    /// Bad counts.
    #[error("{0}")]
    Input(String),
    /// The database lacks the demonstration laboratory, or already holds
    /// generated records.
    #[error("{0}")]
    Database(String),
    /// A template run could not be evaluated.
    #[error("a template run could not be evaluated: {0}")]
    Results(String),
    /// A database error.
    #[error(transparent)]
    Db(#[from] sqlx::Error),
    /// A snapshot could not be written as JSON.
    #[error("cannot write a snapshot: {0}")]
    Json(#[from] serde_json::Error),
}

impl Plan {
    /// Checks the counts.
    ///
    /// # Errors
    /// [`GenerateError::Input`] naming the bad count and what is allowed.
    pub fn check(&self) -> Result<(), GenerateError> {
        if self.instruments < 3 {
            return Err(GenerateError::Input(format!(
                "--instruments must be at least 3 (one of each kind the generator makes: PRT, thermocouple, indicating thermometer); got {}",
                self.instruments
            )));
        }
        if self.certificates < self.instruments {
            return Err(GenerateError::Input(format!(
                "--certificates must be at least --instruments ({}), so that every instrument has a certificate; got {}",
                self.instruments, self.certificates
            )));
        }
        if self.instruments > 1_000_000 || self.certificates > 10_000_000 {
            return Err(GenerateError::Input(
                "at most 1 000 000 instruments and 10 000 000 certificates".to_owned(),
            ));
        }
        Ok(())
    }
}

/// The three kinds of instrument the generator makes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Kind {
    Prt,
    Thermocouple,
    Indicating,
}

const KINDS: [Kind; 3] = [Kind::Prt, Kind::Thermocouple, Kind::Indicating];

impl Kind {
    fn of_index(i: usize) -> Self {
        KINDS[i % 3]
    }
    fn code(self) -> &'static str {
        match self {
            Kind::Prt => "PT",
            Kind::Thermocouple => "TC",
            Kind::Indicating => "DT",
        }
    }
}

/// A template: a real run with its issued certificate.
#[derive(Debug)]
struct Template {
    run: Run,
    /// (nominal, readings) in order.
    points: Vec<(f64, Vec<Reading>)>,
    snapshot: CertificateSnapshot,
}

// ---- invented names ------------------------------------------------------

const PLACE_HEADS: [&str; 24] = [
    "Ash", "Brack", "Cold", "Dun", "Elder", "Fen", "Gorse", "Hollin", "Ivel", "Kester", "Lark",
    "Marl", "Nether", "Orrin", "Pell", "Quarn", "Rook", "Sallow", "Thorn", "Umber", "Vell", "Wyck",
    "Yarrow", "Zell",
];
const PLACE_TAILS: [&str; 16] = [
    "ford", "mere", "wick", "by", "stead", "worth", "combe", "ley", "holt", "bridge", "thwaite",
    "ham", "dale", "moor", "field", "gate",
];
const TRADES: [&str; 20] = [
    "Process Controls",
    "Foods",
    "Pharma Services",
    "Kilnworks",
    "Glassworks",
    "Dairy Cooperative",
    "Brewing",
    "Aero Components",
    "Heat Treatment",
    "Water Authority",
    "Cold Storage",
    "Plastics",
    "Forge",
    "Hospital Trust",
    "Test House",
    "Ceramics",
    "Biologics",
    "Power Station",
    "Castings",
    "Laboratories",
];
const FORMS: [&str; 5] = ["Ltd", "plc", "& Co.", "Group", "Partners"];
const STREETS: [&str; 8] = [
    "Mill Lane",
    "Station Road",
    "Quarry Way",
    "Canal Street",
    "Furnace Row",
    "Orchard Close",
    "Kiln Yard",
    "Weir Road",
];

fn place(rng: &mut Pcg64) -> String {
    format!(
        "{}{}",
        PLACE_HEADS[rng.random_range(0..PLACE_HEADS.len())],
        PLACE_TAILS[rng.random_range(0..PLACE_TAILS.len())]
    )
}

/// An invented company name, e.g. "Kesterholt Cold Storage Ltd (invented)".
fn company_name(rng: &mut Pcg64) -> String {
    format!(
        "{} {} {} (invented)",
        place(rng),
        TRADES[rng.random_range(0..TRADES.len())],
        FORMS[rng.random_range(0..FORMS.len())]
    )
}

fn slug(name: &str) -> String {
    name.split_whitespace()
        .next()
        .unwrap_or("customer")
        .to_ascii_lowercase()
        .chars()
        .filter(char::is_ascii_alphanumeric)
        .collect()
}

// ---- dates -----------------------------------------------------------------

fn date_in_year(year: i64, day_of_year: u16) -> String {
    let start = time::Date::from_calendar_date(year as i32, time::Month::February, 1)
        .unwrap_or(time::Date::MIN);
    let d = start + time::Duration::days(i64::from(day_of_year));
    format!("{:04}-{:02}-{:02}", d.year(), u8::from(d.month()), d.day())
}

fn plus_days(date: &str, days: i64) -> String {
    let format = time::macros::format_description!("[year]-[month]-[day]");
    time::Date::parse(date, &format)
        .ok()
        .and_then(|d| d.checked_add(time::Duration::days(days)))
        .and_then(|d| d.format(&format).ok())
        .unwrap_or_else(|| date.to_owned())
}

// ---- template runs -----------------------------------------------------------

async fn equipment_id(conn: &mut SqliteConnection, asset_id: &str) -> Result<i64, GenerateError> {
    equipment::by_asset_id(conn, asset_id)
        .await?
        .map(|e| e.id)
        .ok_or_else(|| {
            GenerateError::Database(format!(
                "the database has no equipment item {asset_id}: `juncture generate` needs the demonstration laboratory (load it first with `juncture demo --database FILE`)"
            ))
        })
}

/// Readings of template `variant` of `kind` (invented, physically
/// consistent through the reference functions; same scatter pattern as
/// the demo lab).
fn template_points(kind: Kind, variant: usize, date: &str) -> Vec<(f64, Vec<Reading>)> {
    const SCATTER: [f64; 6] = [0.0, 0.6, -0.4, 0.3, -0.5, 0.1];
    let v = variant as f64;
    let mut out = Vec::new();
    let stamp =
        |i: usize, hour: usize| Some(format!("{date}T{:02}:{:02}:00Z", 8 + hour % 9, i * 2));
    match kind {
        Kind::Prt => {
            let Ok(sprt) = Sprt::new(
                25.546_91,
                SprtSubRange::WaterToZinc {
                    a: -2.1e-5,
                    b: 1.4e-6,
                },
            ) else {
                return out;
            };
            let pt100 = CvdCoefficients::pt100();
            for (h, t) in (0..10u32).map(|i| (i as usize, 20.0 * f64::from(i))) {
                let mut readings = Vec::new();
                for (i, s) in SCATTER.iter().enumerate() {
                    let actual = t + 0.004 * s + 0.001 * i as f64;
                    let (Ok(r_ref), Ok(r_uut)) = (
                        sprt.resistance(actual + 273.15),
                        pt100.resistance(
                            actual + 0.01 + 0.012 * v + (0.0001 + 0.00003 * v) * t + 0.002 * s,
                        ),
                    ) else {
                        continue;
                    };
                    readings.push(Reading {
                        position: i as i64 + 1,
                        taken_at: stamp(i, h),
                        reference_signal: (r_ref * 1e5).round() / 1e5,
                        uut_signal: (r_uut * 1e4).round() / 1e4,
                        rj_t_c: None,
                    });
                }
                out.push((t, readings));
            }
        }
        Kind::Thermocouple => {
            let (n, r) = (ThermocoupleType::N, ThermocoupleType::R);
            for (h, t) in (0..7u32).map(|i| (i as usize, 400.0 + 100.0 * f64::from(i))) {
                let mut readings = Vec::new();
                for (i, s) in SCATTER.iter().take(5).enumerate() {
                    let actual = t - 1.2 + 0.05 * s;
                    let (Ok(e_ref), Ok(e_uut)) = (
                        r.emf(actual),
                        n.emf(
                            actual + 0.4 + 0.3 * v + (0.0008 + 0.0002 * v) * (t - 400.0) + 0.03 * s,
                        ),
                    ) else {
                        continue;
                    };
                    let e_ref = e_ref + 2.0e-6 * actual - 1.0e-9 * actual * actual;
                    readings.push(Reading {
                        position: i as i64 + 1,
                        taken_at: stamp(i, h),
                        reference_signal: (e_ref * 1e4).round() / 1e4,
                        uut_signal: (e_uut * 1e4).round() / 1e4,
                        rj_t_c: None,
                    });
                }
                out.push((t, readings));
            }
        }
        Kind::Indicating => {
            for (h, t) in [-20.0, 0.0, 20.0, 50.0, 80.0, 120.0]
                .into_iter()
                .enumerate()
            {
                let mut readings = Vec::new();
                for (i, s) in SCATTER.iter().enumerate() {
                    let actual: f64 = t + 0.01 * s;
                    let indication = actual - 0.012 + 1.0e-4 * actual;
                    let uut =
                        actual - 0.02 - 0.015 * v - (0.0003 + 0.0001 * v) * t.abs() + 0.01 * s;
                    readings.push(Reading {
                        position: i as i64 + 1,
                        taken_at: stamp(i, h),
                        reference_signal: (indication * 1e3).round() / 1e3,
                        uut_signal: (uut * 1e2).round() / 1e2,
                        rj_t_c: None,
                    });
                }
                out.push((t, readings));
            }
        }
    }
    out
}

/// The run fields of a kind (equipment, procedure, tolerance), as the demo
/// lab records them.
async fn run_fields(
    conn: &mut SqliteConnection,
    kind: Kind,
    instrument_id: i64,
    date: &str,
) -> Result<RunFields, GenerateError> {
    let (reference, readout, medium, procedure, rj, class, limit, rule, extra) = match kind {
        Kind::Prt => (
            "LTM-SPRT-01",
            Some("LTM-BRG-05"),
            "LTM-BATH-07",
            "LTM-P-04 rev 3 (PRT by comparison)",
            "not_applicable",
            Some("A"),
            None,
            "guarded_non_binary",
            json!([{"name": "immersion", "distribution": "rectangular", "value_c": 0.005},
                   {"name": "self-heating", "distribution": "rectangular", "value_c": 0.003}]),
        ),
        Kind::Thermocouple => (
            "LTM-TCR-03",
            Some("LTM-DMM-06"),
            "LTM-FURN-08",
            "LTM-P-09 rev 1 (thermocouples in the tube furnace)",
            "ice_point",
            Some("2"),
            None,
            "simple",
            json!([{"name": "ice point", "distribution": "rectangular", "value_c": 0.02, "kind": "reference_junction"},
                   {"name": "inhomogeneity", "distribution": "rectangular", "value_c": 0.3}]),
        ),
        Kind::Indicating => (
            "LTM-DIG-04",
            None,
            "LTM-DRY-09",
            "LTM-P-02 rev 5 (indicating thermometers)",
            "not_applicable",
            None,
            Some(0.2),
            "guarded_non_binary",
            json!([{"name": "display resolution", "distribution": "rectangular", "value_c": 0.01, "kind": "uut_resolution"}]),
        ),
    };
    let readout_id = match readout {
        Some(a) => Some(equipment_id(conn, a).await?),
        None => None,
    };
    Ok(RunFields {
        instrument_id,
        reference_id: equipment_id(conn, reference).await?,
        reference_readout_id: readout_id,
        uut_readout_id: readout_id,
        medium_id: Some(equipment_id(conn, medium).await?),
        performed_on: date.to_owned(),
        procedure_ref: procedure.to_owned(),
        location: "Larchmere main laboratory".to_owned(),
        ambient_t_c: Some(21.8),
        ambient_rh_percent: Some(43.0),
        rj_method: rj.to_owned(),
        immersion_mm: Some(200.0),
        condition: "as_found".to_owned(),
        decision_rule: rule.to_owned(),
        guard_band_factor: 1.0,
        tolerance_class: class.map(str::to_owned),
        tolerance_limit_c: limit,
        fit_degree: None,
        extra_budget: extra.to_string(),
    })
}

// ---- the load -------------------------------------------------------------------

/// Adds invented yearly certificates (same coefficients and uncertainty
/// table as the item's first certificate) for every item a template run
/// uses except the media, so that each generated date has its traceability.
async fn equipment_history(
    conn: &mut SqliteConnection,
    items: &[i64],
) -> Result<(), GenerateError> {
    for &id in items {
        let all = equipment::certificates(conn, id).await?;
        let Some(first) = all.last() else { continue };
        let uncertainties = equipment::certificate_uncertainties(conn, first.id).await?;
        for year in FIRST_YEAR..=LAST_YEAR {
            let fields = equipment::CertificateFields {
                number: format!(
                    "{}-{}-{:04}",
                    first.number.split('-').next().unwrap_or("EQ"),
                    year % 100,
                    9000 + id
                ),
                issuer: first.issuer.clone(),
                calibrated_on: format!("{year}-01-10"),
                due_on: format!("{}-01-31", year + 1),
                coefficients: first.coefficients.clone(),
                uncertainties: uncertainties.clone(),
            };
            equipment::add_certificate(conn, id, &fields).await?;
        }
    }
    Ok(())
}

/// The traceability rows of `template` for a calibration on `date`.
async fn trace_on(
    conn: &mut SqliteConnection,
    template: &Template,
    date: &str,
) -> Result<Vec<TraceRow>, GenerateError> {
    let run = &template.run;
    let ids = [
        Some(run.reference_id),
        run.reference_readout_id,
        run.uut_readout_id,
    ];
    let mut rows = template.snapshot.traceability.clone();
    for (row, id) in rows.iter_mut().zip(ids.into_iter().flatten()) {
        if let Some(c) = equipment::certificate_on(conn, id, date).await? {
            row.certificate_number = c.number;
            row.issuer = c.issuer;
            row.calibrated_on = c.calibrated_on;
            row.due_on = c.due_on;
        }
    }
    Ok(rows)
}

/// One certificate to write: instrument index, kind, variant, date.
#[derive(Debug, Clone)]
struct Job {
    instrument: usize,
    variant: usize,
    date: String,
}

/// Fills `pool` (which must hold the demonstration laboratory) with the
/// invented records of `plan`.
///
/// # Errors
/// [`GenerateError::Input`] for bad counts, [`GenerateError::Database`]
/// when the demo lab is missing or generated records are already there,
/// or a database error (the batch being written is rolled back).
pub async fn generate(pool: &SqlitePool, plan: Plan) -> Result<Summary, GenerateError> {
    plan.check()?;
    let mut rng = Pcg64::seed_from_u64(plan.seed);
    let mut tx = store::begin_write(pool).await?;
    let lab = store::lab::get(&mut tx).await?.ok_or_else(|| {
        GenerateError::Database(
            "the database holds no laboratory: load the demonstration laboratory first (`juncture demo --database FILE`)".to_owned(),
        )
    })?;
    let technician = accounts::user_by_username(&mut tx, "demo-tech").await?;
    let reviewer = accounts::user_by_username(&mut tx, "demo-reviewer").await?;
    let (Some(technician), Some(reviewer)) = (technician, reviewer) else {
        return Err(GenerateError::Database(
            "the database has no demo-tech and demo-reviewer accounts: `juncture generate` needs the demonstration laboratory (`juncture demo --database FILE`)".to_owned(),
        ));
    };
    if records::instruments(&mut tx)
        .await?
        .iter()
        .any(|i| i.serial.starts_with(SERIAL_PREFIX))
    {
        return Err(GenerateError::Database(format!(
            "the database already holds generated records (serial numbers {SERIAL_PREFIX}...); generate into a fresh copy of the demo database"
        )));
    }

    // Customers.
    let n_customers = (plan.instruments / 5).max(1);
    let mut names: HashSet<String> = records::customers(&mut tx)
        .await?
        .into_iter()
        .map(|c| c.name)
        .collect();
    let mut customer_ids = Vec::with_capacity(n_customers);
    let mut customer_blocks = Vec::with_capacity(n_customers);
    for _ in 0..n_customers {
        let mut name = company_name(&mut rng);
        let mut attempt = 2;
        while names.contains(&name) {
            name = company_name(&mut rng);
            if attempt > 20 {
                name = name.replace(" (invented)", &format!(" No. {attempt} (invented)"));
            }
            attempt += 1;
        }
        names.insert(name.clone());
        let town = place(&mut rng);
        let fields = records::CustomerFields {
            address: format!(
                "{} {}\n{} {}{} {}{}",
                rng.random_range(1..200),
                STREETS[rng.random_range(0..STREETS.len())],
                town,
                (b'A' + rng.random_range(0..26u8)) as char,
                (b'A' + rng.random_range(0..26u8)) as char,
                rng.random_range(1..20),
                (b'A' + rng.random_range(0..26u8)) as char,
            ),
            contact_email: format!("calibration@{}.invalid", slug(&name)),
            contact_phone: format!(
                "+00 {:04} {:06}",
                rng.random_range(0..10000),
                rng.random_range(0..1_000_000)
            ),
            name,
        };
        let c = records::create_customer(&mut tx, &fields).await?;
        customer_ids.push(c.id);
        customer_blocks.push((c.name, c.address));
    }

    // Instruments: kinds in turn, owners at random.
    let mut instrument_ids = Vec::with_capacity(plan.instruments);
    let mut serials = Vec::with_capacity(plan.instruments);
    let mut owners = Vec::with_capacity(plan.instruments);
    let mut items = Vec::with_capacity(plan.instruments);
    for i in 0..plan.instruments {
        let kind = Kind::of_index(i);
        let length = [150, 200, 300, 450, 600][rng.random_range(0..5)];
        let (k, tc_type, r0, description, model) = match kind {
            Kind::Prt => (
                "prt",
                None,
                Some(100.0),
                format!("Pt100 probe, 4-wire, {length} mm"),
                format!("P{}-{length}", rng.random_range(1..9)),
            ),
            Kind::Thermocouple => (
                "thermocouple",
                Some("N".to_owned()),
                None,
                format!("type N mineral-insulated thermocouple, 6 mm x {length} mm"),
                format!("MI-N{}", rng.random_range(10..99)),
            ),
            Kind::Indicating => (
                "indicating",
                None,
                None,
                "handheld digital thermometer with probe".to_owned(),
                format!("HD-{}", rng.random_range(100..999)),
            ),
        };
        let serial = format!("{SERIAL_PREFIX}{}-{:06}", kind.code(), i + 1);
        let owner = rng.random_range(0..customer_ids.len());
        owners.push(owner);
        let fields = records::InstrumentFields {
            serial: serial.clone(),
            kind: k.to_owned(),
            tc_type,
            r0_ohm: r0,
            description,
            manufacturer: [
                "Example Probe Works",
                "Example Sensor Co.",
                "Example Instruments",
            ][rng.random_range(0..3)]
            .to_owned(),
            model,
            customer_id: customer_ids[owner],
        };
        instrument_ids.push(records::create_instrument(&mut tx, &fields).await?.id);
        items.push((fields.description, fields.manufacturer, fields.model));
        serials.push(serial);
    }

    // Template runs, evaluated and issued for real (the newest certificate
    // of the first instruments).
    let n_templates = (3 * VARIANTS_PER_KIND).min(plan.instruments);
    let mut templates: HashMap<(Kind, usize), Template> = HashMap::new();
    let mut used_equipment = Vec::new();
    let year_now = 2026;
    for (t, &instrument_id) in instrument_ids.iter().enumerate().take(n_templates) {
        let kind = Kind::of_index(t);
        let variant = t / 3;
        let date = format!("2026-11-{:02}", 2 + t);
        let fields = run_fields(&mut tx, kind, instrument_id, &date).await?;
        for id in [Some(fields.reference_id), fields.reference_readout_id] {
            if let Some(id) = id.filter(|id| !used_equipment.contains(id)) {
                used_equipment.push(id);
            }
        }
        let run = runs::create(&mut tx, &fields, technician.id).await?;
        let points = template_points(kind, variant, &date);
        for (nominal, readings) in &points {
            let sp = runs::add_set_point(&mut tx, run.id, *nominal).await?;
            runs::append_readings(&mut tx, sp.id, readings).await?;
        }
        runs::submit(&mut tx, run.id).await?;
        let results = compute(&mut tx, &run)
            .await
            .map_err(|e| GenerateError::Results(format!("{e:?}")))?;
        let seq = certificates::next_sequence(&mut tx, year_now).await?;
        let number = expand_pattern(&lab.certificate_number_pattern, year_now, seq);
        let issued_on = plus_days(&date, 3);
        let snapshot = build_snapshot(
            &mut tx,
            Issue {
                run: &run,
                results: &results,
                number: &number,
                revision: 0,
                replaces: None,
                issued_on: &issued_on,
                approved_by: &reviewer.display_name,
            },
        )
        .await
        .map_err(|e| GenerateError::Results(format!("{e:?}")))?;
        let json = snapshot.canonical_json()?;
        let sha256 = snapshot.fingerprint()?;
        certificates::insert(
            &mut tx,
            &certificates::NewCertificate {
                number: &number,
                revision: 0,
                run_id: run.id,
                instrument_id: run.instrument_id,
                issued_on: &issued_on,
                approved_by: reviewer.id,
                snapshot: &json,
                sha256: &sha256,
                replaces_id: None,
                amendment_reason: None,
                outcome: snapshot.overall_outcome(),
            },
        )
        .await?;
        runs::set_review_state(&mut tx, run.id, "approved", None).await?;
        templates.insert(
            (kind, variant),
            Template {
                run,
                points,
                snapshot,
            },
        );
    }
    let variants_of = |kind: Kind| {
        (0..VARIANTS_PER_KIND)
            .filter(|v| templates.contains_key(&(kind, *v)))
            .count()
    };
    let variant_counts: HashMap<Kind, usize> =
        KINDS.iter().map(|k| (*k, variants_of(*k))).collect();
    equipment_history(&mut tx, &used_equipment).await?;
    tx.commit().await?;

    // The other certificates: instrument i gets certificates in turn; its
    // history runs back one year per certificate, each from a template of
    // its kind whose variant drifts from one calibration to the next.
    let base: Vec<usize> = (0..plan.instruments)
        .map(|_| rng.random_range(0..VARIANTS_PER_KIND))
        .collect();
    let mut jobs = Vec::with_capacity(plan.certificates - n_templates);
    for j in n_templates..plan.certificates {
        let instrument = j % plan.instruments;
        let nth = j / plan.instruments - usize::from(instrument < n_templates);
        let span = (LAST_YEAR - FIRST_YEAR + 1) as usize;
        let year = LAST_YEAR - (nth % span) as i64;
        let kind = Kind::of_index(instrument);
        let variant = (base[instrument] + nth) % variant_counts[&kind].max(1);
        jobs.push(Job {
            instrument,
            variant,
            date: date_in_year(year, rng.random_range(0..320)),
        });
    }
    jobs.sort_by(|a, b| a.date.cmp(&b.date).then(a.instrument.cmp(&b.instrument)));

    let mut trace_cache: HashMap<(Kind, usize, i64), Vec<TraceRow>> = HashMap::new();
    let mut sequence: HashMap<i64, i64> = HashMap::new();
    for chunk in jobs.chunks(BATCH) {
        let mut tx = store::begin_write(pool).await?;
        for job in chunk {
            let kind = Kind::of_index(job.instrument);
            let Some(template) = templates.get(&(kind, job.variant)) else {
                continue;
            };
            let year: i64 = job.date[..4].parse().unwrap_or(LAST_YEAR);
            let key = (kind, job.variant, year);
            if let std::collections::hash_map::Entry::Vacant(slot) = trace_cache.entry(key) {
                slot.insert(trace_on(&mut tx, template, &format!("{year}-12-31")).await?);
            }
            let submitted_at = format!("{}T16:30:00Z", job.date);
            let r = &template.run;
            let fields = RunFields {
                instrument_id: instrument_ids[job.instrument],
                reference_id: r.reference_id,
                reference_readout_id: r.reference_readout_id,
                uut_readout_id: r.uut_readout_id,
                medium_id: r.medium_id,
                performed_on: job.date.clone(),
                procedure_ref: r.procedure_ref.clone(),
                location: r.location.clone(),
                ambient_t_c: r.ambient_t_c,
                ambient_rh_percent: r.ambient_rh_percent,
                rj_method: r.rj_method.clone(),
                immersion_mm: r.immersion_mm,
                condition: r.condition.clone(),
                decision_rule: r.decision_rule.clone(),
                guard_band_factor: r.guard_band_factor,
                tolerance_class: r.tolerance_class.clone(),
                tolerance_limit_c: r.tolerance_limit_c,
                fit_degree: r.fit_degree,
                extra_budget: r.extra_budget.clone(),
            };
            let run_id =
                bulk::insert_approved_run(&mut tx, &fields, technician.id, &submitted_at).await?;
            for (nominal, readings) in &template.points {
                let moved: Vec<Reading> = readings
                    .iter()
                    .map(|r| Reading {
                        taken_at: r
                            .taken_at
                            .as_ref()
                            .map(|t| format!("{}{}", job.date, &t[10..])),
                        ..r.clone()
                    })
                    .collect();
                bulk::insert_set_point_with_readings(
                    &mut tx,
                    run_id,
                    *nominal,
                    &submitted_at,
                    &moved,
                )
                .await?;
            }
            let seq = sequence.entry(year).or_insert(0);
            *seq += 1;
            let number = expand_pattern(&lab.certificate_number_pattern, year, *seq);
            let issued_on = plus_days(&job.date, 2 + (*seq % 5));
            let (customer_name, customer_address) = &customer_blocks[owners[job.instrument]];
            let mut s = template.snapshot.clone();
            s.number.clone_from(&number);
            s.customer.name.clone_from(customer_name);
            s.customer.address.clone_from(customer_address);
            s.item.serial.clone_from(&serials[job.instrument]);
            let (description, manufacturer, model) = &items[job.instrument];
            s.item.description.clone_from(description);
            s.item.manufacturer.clone_from(manufacturer);
            s.item.model.clone_from(model);
            s.dates.calibrated_on.clone_from(&job.date);
            s.dates.issued_on.clone_from(&issued_on);
            if let Some(rows) = trace_cache.get(&key) {
                s.traceability.clone_from(rows);
            }
            let json = s.canonical_json()?;
            let sha256 = s.fingerprint()?;
            certificates::insert(
                &mut tx,
                &certificates::NewCertificate {
                    number: &number,
                    revision: 0,
                    run_id,
                    instrument_id: instrument_ids[job.instrument],
                    issued_on: &issued_on,
                    approved_by: reviewer.id,
                    snapshot: &json,
                    sha256: &sha256,
                    replaces_id: None,
                    amendment_reason: None,
                    outcome: s.overall_outcome(),
                },
            )
            .await?;
        }
        tx.commit().await?;
    }

    let mut tx = store::begin_write(pool).await?;
    for (year, last) in &sequence {
        bulk::raise_sequence(&mut tx, *year, *last).await?;
    }
    let after = json!({
        "seed": plan.seed,
        "customers": n_customers,
        "instruments": plan.instruments,
        "certificates": plan.certificates,
        "templates": n_templates,
        "note": "invented records for scale measurements",
    });
    audit::append(
        &mut tx,
        &audit::NewEvent {
            actor: "generator",
            action: "generate",
            entity: "database",
            entity_id: "invented records",
            before: None,
            after: Some(&after),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Summary {
        customers: n_customers,
        instruments: plan.instruments,
        certificates: plan.certificates,
        templates: n_templates,
    })
}
