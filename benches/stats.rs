//! Numerical core throughput: a weighted cubic fit, a GUM budget and a
//! Monte Carlo propagation, the same work as `bench/numpy_compare.py`.
//!
//! Run: `cargo bench --bench stats`.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use juncture::metrology::stats::{
    self, BudgetOptions, Component, CovarianceConvention, Distribution, McInput, McModel,
    McOptions, PolyOptions,
};

/// 15 set points from -40 °C to 520 °C with a smooth deviation curve and
/// point uncertainties growing with temperature (invented benchmark data).
fn cubic_data() -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let x: Vec<f64> = (0..15).map(|i| -40.0 + 40.0 * f64::from(i)).collect();
    let y: Vec<f64> = x
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let wiggle = if i % 2 == 0 { 0.003 } else { -0.002 };
            0.05 + 1.2e-3 * t - 2.5e-6 * t * t + 1.5e-9 * t * t * t + wiggle
        })
        .collect();
    let w: Vec<f64> = x
        .iter()
        .map(|t| {
            let u = 0.01 + 2e-5 * t.abs();
            1.0 / (u * u)
        })
        .collect();
    (x, y, w)
}

fn budget_components(n: usize) -> Vec<Component> {
    (0..n)
        .map(|i| {
            let u = 0.001 * (1.0 + i as f64);
            let d = match i % 4 {
                0 => Distribution::NormalExpanded {
                    expanded: 2.0 * u,
                    k: 2.0,
                },
                1 => Distribution::Rectangular {
                    half_width: u * 3f64.sqrt(),
                },
                2 => Distribution::Triangular {
                    half_width: u * 6f64.sqrt(),
                },
                _ => Distribution::TypeA {
                    std_dev_of_mean: u,
                    n: 10,
                },
            };
            Component::new(format!("component {i}"), 0.0, d).with_sensitivity(1.0 + 0.01 * i as f64)
        })
        .collect()
}

fn numerical_core(c: &mut Criterion) {
    let (x, y, w) = cubic_data();
    let options = PolyOptions {
        degree: 3,
        intercept: true,
        covariance: CovarianceConvention::Unscaled,
    };
    c.bench_function("fit: 15-point weighted cubic with covariance", |b| {
        b.iter(|| {
            stats::fit_polynomial(black_box(&x), black_box(&y), Some(black_box(&w)), &options)
        })
    });

    let components = budget_components(20);
    c.bench_function("budget: 20 components, Welch-Satterthwaite and k", |b| {
        b.iter(|| stats::evaluate_budget(black_box(&components), &[], &BudgetOptions::default()))
    });

    let ten = budget_components(10);
    let inputs: Vec<McInput> = ten
        .iter()
        .map(|c| McInput::from_component(c).expect("valid component"))
        .collect();
    let sensitivities: Vec<f64> = ten.iter().map(|c| c.sensitivity).collect();
    let mut group = c.benchmark_group("monte carlo");
    group.sample_size(10);
    group.bench_function("1e6 trials, 10-input additive model", |b| {
        b.iter(|| {
            stats::run_fixed(
                black_box(&inputs),
                McModel::Additive(&sensitivities),
                1_000_000,
                &McOptions {
                    coverage_probability: 0.95,
                    seed: 1,
                },
            )
        })
    });
    group.finish();
}

criterion_group!(benches, numerical_core);
criterion_main!(benches);
