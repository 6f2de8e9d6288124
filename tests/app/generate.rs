//! `juncture generate`: invented certificates for scale measurements are
//! real certificates (fingerprints that verify, register facts, snapshots
//! the renderers read), deterministic for a seed, and bad counts are
//! refused with a clear message.

use std::collections::BTreeMap;

use sha2::{Digest, Sha256};
use sqlx::SqlitePool;

use juncture::demo;
use juncture::generate::{GenerateError, Plan, generate};
use juncture::report::snapshot::CertificateSnapshot;
use juncture::store::{self, audit, bulk};

/// Number -> (fingerprint, snapshot, outcome) of every certificate.
async fn certificates_of(pool: &SqlitePool) -> BTreeMap<String, (String, String, String)> {
    let mut conn = pool.acquire().await.expect("connection");
    let mut out = BTreeMap::new();
    let mut before = i64::MAX;
    loop {
        let page = store::certificates::register(
            &mut conn,
            &store::certificates::RegisterFilter::default(),
            before,
            500,
        )
        .await
        .expect("register");
        let Some(last) = page.last() else { break };
        before = last.id;
        for line in page {
            let c = store::certificates::by_number(&mut conn, &line.number, Some(line.revision))
                .await
                .expect("by number")
                .expect("the register's certificate");
            out.insert(line.number, (c.sha256, c.snapshot, line.outcome));
        }
    }
    out
}

const PLAN: Plan = Plan {
    certificates: 60,
    instruments: 21,
    seed: 7,
};

#[sqlx::test]
async fn generated_certificates_verify_and_are_in_the_register(pool: SqlitePool) {
    demo::load(&pool).await.expect("demo");
    let mut conn = pool.acquire().await.expect("connection");
    let before = bulk::counts(&mut conn).await.expect("counts");
    assert_eq!(before[3], 0, "the demo lab has issued no certificate");
    drop(conn);
    let summary = generate(&pool, PLAN).await.expect("generate");
    assert_eq!(summary.certificates, 60);
    assert_eq!(summary.instruments, 21);
    assert_eq!(summary.templates, 18);

    let mut conn = pool.acquire().await.expect("connection");
    let after = bulk::counts(&mut conn).await.expect("counts");
    let added: Vec<i64> = after.iter().zip(before).map(|(a, b)| a - b).collect();
    // customers (one per five instruments), instruments, runs, certificates,
    // register facts: one run and one facts row per certificate.
    assert_eq!(added, [4, 21, 60, 60, 60]);

    let all = certificates_of(&pool).await;
    assert_eq!(all.len(), 60);
    let mut set_points = BTreeMap::new();
    for (number, (sha256, snapshot, outcome)) in &all {
        assert_eq!(
            &hex::encode(Sha256::digest(snapshot.as_bytes())),
            sha256,
            "{number}: the fingerprint is the SHA-256 of the stored snapshot"
        );
        let s: CertificateSnapshot = serde_json::from_str(snapshot).expect("snapshot parses");
        assert_eq!(&s.number, number);
        assert_eq!(
            s.canonical_json().expect("json"),
            *snapshot,
            "canonical form"
        );
        assert_eq!(
            s.overall_outcome(),
            outcome,
            "{number}: facts match the snapshot"
        );
        assert!(
            s.customer.name.ends_with("(invented)"),
            "{}",
            s.customer.name
        );
        assert!(s.item.serial.starts_with("GEN-"));
        assert!(s.deviation_function.is_some());
        // Traceability: the reference standard's certificate was in force
        // on the calibration date.
        let reference = &s.traceability[0];
        assert!(
            reference.calibrated_on <= s.dates.calibrated_on
                && s.dates.calibrated_on < reference.due_on,
            "{number}: {reference:?} on {}",
            s.dates.calibrated_on
        );
        *set_points.entry(s.results.len()).or_insert(0) += 1;
        // The register's verification finds it current.
        let verdict = store::certificates::verify(&mut conn, number, sha256)
            .await
            .expect("verify");
        assert_eq!(verdict, Some((0, None)));
    }
    // Pt100s at 10 set points, type N thermocouples at 7, handhelds at 6.
    assert_eq!(set_points, BTreeMap::from([(6, 20), (7, 20), (10, 20)]));

    // Deviations differ between certificates (template variants).
    let deviations: std::collections::BTreeSet<String> = all
        .values()
        .map(|(_, s, _)| {
            let s: CertificateSnapshot = serde_json::from_str(s).expect("snapshot");
            s.results[0].printed.deviation_c.clone()
        })
        .collect();
    assert!(deviations.len() >= 6, "{deviations:?}");

    // The audit trail still verifies, with one event for the whole load.
    assert!(matches!(
        audit::verify(&mut conn).await.expect("audit"),
        audit::Verification::Intact { .. }
    ));

    // A second load into the same database is refused.
    let again = generate(&pool, PLAN).await;
    assert!(
        matches!(&again, Err(GenerateError::Database(m)) if m.contains("already holds generated records")),
        "{again:?}"
    );
}

#[sqlx::test]
async fn the_same_seed_gives_the_same_certificates(pool: SqlitePool) {
    demo::load(&pool).await.expect("demo");
    generate(&pool, PLAN).await.expect("generate");
    let first = certificates_of(&pool).await;

    let other = store::connect_in_memory().await.expect("memory");
    store::migrate(&other).await.expect("migrate");
    demo::load(&other).await.expect("demo");
    generate(&other, PLAN).await.expect("generate");
    let second = certificates_of(&other).await;
    let fingerprints = |m: &BTreeMap<String, (String, String, String)>| {
        m.iter()
            .map(|(n, (sha, _, _))| (n.clone(), sha.clone()))
            .collect::<Vec<_>>()
    };
    assert_eq!(fingerprints(&first), fingerprints(&second));

    let third = store::connect_in_memory().await.expect("memory");
    store::migrate(&third).await.expect("migrate");
    demo::load(&third).await.expect("demo");
    generate(&third, Plan { seed: 8, ..PLAN })
        .await
        .expect("generate");
    assert_ne!(
        fingerprints(&first),
        fingerprints(&certificates_of(&third).await)
    );
}

#[sqlx::test]
async fn bad_counts_and_a_database_without_the_demo_are_refused(pool: SqlitePool) {
    let refuse = |p: Plan| match p.check() {
        Err(GenerateError::Input(m)) => m,
        other => panic!("{other:?}"),
    };
    assert!(
        refuse(Plan {
            certificates: 0,
            ..PLAN
        })
        .contains("--certificates must be at least --instruments")
    );
    assert!(
        refuse(Plan {
            instruments: 0,
            ..PLAN
        })
        .contains("--instruments must be at least 3")
    );
    assert!(
        refuse(Plan {
            instruments: 2,
            certificates: 2,
            seed: 1
        })
        .contains("got 2")
    );

    let empty = generate(&pool, PLAN).await;
    assert!(
        matches!(&empty, Err(GenerateError::Database(m)) if m.contains("juncture demo")),
        "{empty:?}"
    );
}

#[sqlx::test]
async fn every_register_statement_gives_the_same_answer(pool: SqlitePool) {
    use juncture::store::certificates::RegisterFilter;
    use juncture::store::register::{Driver, search, search_with};
    demo::load(&pool).await.expect("demo");
    generate(
        &pool,
        Plan {
            certificates: 150,
            instruments: 30,
            seed: 3,
        },
    )
    .await
    .expect("generate");
    let mut conn = pool.acquire().await.expect("connection");
    let dig = store::equipment::by_asset_id(&mut conn, "LTM-DIG-04")
        .await
        .expect("query")
        .expect("demo item")
        .id;
    let bath = store::equipment::by_asset_id(&mut conn, "LTM-BATH-07")
        .await
        .expect("query")
        .expect("demo item")
        .id;
    let filters = [
        RegisterFilter {
            equipment_id: dig,
            ..Default::default()
        },
        RegisterFilter {
            equipment_id: bath,
            kind: "prt".into(),
            ..Default::default()
        },
        RegisterFilter {
            outcome: "conditional_pass".into(),
            ..Default::default()
        },
        RegisterFilter {
            outcome: "pass".into(),
            from: "2020-01-01".into(),
            to: "2022-12-31".into(),
            ..Default::default()
        },
        RegisterFilter {
            outcome: "fail".into(),
            ..Default::default()
        },
        RegisterFilter {
            text: "GEN-TC-00001".into(),
            ..Default::default()
        },
        RegisterFilter {
            text: "invented".into(),
            kind: "indicating".into(),
            ..Default::default()
        },
        RegisterFilter {
            text: "LTM-2019".into(),
            ..Default::default()
        },
        RegisterFilter {
            text: "no such thing".into(),
            ..Default::default()
        },
        RegisterFilter {
            from: "2019-01-01".into(),
            to: "2019-06-30".into(),
            ..Default::default()
        },
        RegisterFilter {
            to: "2018-12-31".into(),
            kind: "prt".into(),
            ..Default::default()
        },
    ];
    let mut non_empty = 0;
    for f in &filters {
        let driver = Driver::for_filter(f);
        assert_ne!(driver, Driver::Scan, "{f:?}");
        assert!(
            !(f.outcome == "pass" && driver == Driver::Outcome),
            "pass is the common outcome: another statement drives"
        );
        for (before, limit) in [(i64::MAX, 500), (i64::MAX, 7), (100, 10)] {
            let scan = search_with(&mut conn, f, before, limit, Driver::Scan)
                .await
                .expect("scan");
            let driven = search(&mut conn, f, before, limit).await.expect("driven");
            assert_eq!(
                scan, driven,
                "{f:?} before {before} limit {limit} by {driver:?}"
            );
            non_empty += usize::from(!scan.is_empty());
        }
    }
    assert!(non_empty >= 15, "most filters match something: {non_empty}");
}
