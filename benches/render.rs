//! Certificate rendering: the PDF and the HTML page of a certificate with
//! 10 set points, a deviation function and its plot, rendered from the
//! stored snapshot as the service does; and reading the snapshot back from
//! its canonical JSON.
//!
//! The certificate is a real one: the demo lab plus `juncture generate`'s
//! template runs (a Pt100 calibrated at 10 set points, evaluated and issued
//! through the real snapshot builder) in an in-memory database.
//!
//! Run: `cargo bench --bench render`.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use juncture::report::snapshot::CertificateSnapshot;
use juncture::web::pages::Nav;
use juncture::web::pages::review::{certificate_page_html, certificate_plot_svg};
use juncture::{demo, generate, store};

/// The snapshot JSON and fingerprint of the generated Pt100 certificate.
fn ten_point_certificate() -> (String, String) {
    let runtime = tokio::runtime::Runtime::new().expect("tokio runtime");
    runtime.block_on(async {
        let pool = store::connect_in_memory()
            .await
            .expect("in-memory database");
        store::migrate(&pool).await.expect("migrations");
        demo::load(&pool).await.expect("demo lab");
        generate::generate(
            &pool,
            generate::Plan {
                certificates: 3,
                instruments: 3,
                seed: 1,
            },
        )
        .await
        .expect("generated certificates");
        let mut conn = pool.acquire().await.expect("connection");
        let instrument = store::records::instrument_by_serial(&mut conn, "GEN-PT-000001")
            .await
            .expect("query")
            .expect("the generated Pt100");
        let c = store::certificates::current_for_instrument(&mut conn, instrument.id)
            .await
            .expect("query")
            .expect("its certificate");
        (c.snapshot, c.sha256)
    })
}

fn render(c: &mut Criterion) {
    let (json, sha256) = ten_point_certificate();
    let snapshot: CertificateSnapshot = serde_json::from_str(&json).expect("snapshot");
    assert_eq!(
        snapshot.results.len(),
        10,
        "the benchmark certificate has 10 set points"
    );
    assert!(
        !snapshot.plot.curve.is_empty(),
        "and a plotted deviation function"
    );

    c.bench_function("certificate PDF, 10 set points with plot", |b| {
        b.iter(|| juncture::report::pdf::render_pdf(black_box(&snapshot)).expect("PDF"));
    });
    c.bench_function("certificate HTML page, 10 set points with plot", |b| {
        b.iter(|| {
            let plot = certificate_plot_svg(black_box(&snapshot));
            certificate_page_html(
                Nav::default(),
                String::new(),
                false,
                black_box(&snapshot),
                sha256.clone(),
                false,
                &plot,
            )
            .expect("HTML")
        });
    });
    c.bench_function(
        "certificate snapshot parse (canonical JSON -> value)",
        |b| {
            b.iter(|| {
                serde_json::from_str::<CertificateSnapshot>(black_box(&json)).expect("parse")
            });
        },
    );
}

criterion_group!(benches, render);
criterion_main!(benches);
