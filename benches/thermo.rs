//! Throughput of the reference functions (conversions per second).
//!
//! Run: `cargo bench --bench thermo`. Criterion reports the time per
//! iteration; each iteration is one conversion, so conversions per second
//! is 1 / time (criterion also prints it as "thrpt" in elements/s).

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use juncture::metrology::thermo::{CvdCoefficients, Sprt, SprtSubRange, ThermocoupleType};

fn thermocouples(c: &mut Criterion) {
    let mut group = c.benchmark_group("thermocouple");
    group.throughput(Throughput::Elements(1));
    let k = ThermocoupleType::K;
    group.bench_function("type K E(t) at 800 °C", |b| {
        b.iter(|| k.emf(black_box(800.0)))
    });
    group.bench_function("type K S(t) at 800 °C", |b| {
        b.iter(|| k.seebeck_uv_per_k(black_box(800.0)))
    });
    group.bench_function("type K t(E) at 33.275 mV", |b| {
        b.iter(|| k.temperature(black_box(33.275)))
    });
    let s = ThermocoupleType::S;
    group.bench_function("type S t(E) at 9.587 mV", |b| {
        b.iter(|| s.temperature(black_box(9.587)))
    });
    group.finish();
}

fn resistance_thermometers(c: &mut Criterion) {
    let mut group = c.benchmark_group("resistance thermometer");
    group.throughput(Throughput::Elements(1));
    let pt100 = CvdCoefficients::pt100();
    group.bench_function("Pt100 t(R) at 138.5055 Ω (closed form)", |b| {
        b.iter(|| pt100.temperature(black_box(138.5055)))
    });
    group.bench_function("Pt100 t(R) at 60.2558 Ω (Newton)", |b| {
        b.iter(|| pt100.temperature(black_box(60.2558)))
    });
    let sprt = Sprt::new(
        25.5,
        SprtSubRange::WaterToZinc {
            a: -1.2e-4,
            b: 1.5e-5,
        },
    )
    .expect("valid SPRT");
    let r = sprt.resistance(373.15).expect("in range");
    group.bench_function("SPRT W -> T90 at 100 °C", |b| {
        b.iter(|| sprt.temperature(black_box(r)))
    });
    group.finish();
}

criterion_group!(benches, thermocouples, resistance_thermometers);
criterion_main!(benches);
