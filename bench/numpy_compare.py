#!/usr/bin/env python3
"""The same numerical work as `cargo bench --bench stats`, done with numpy,
for a side-by-side comparison. Run after `pip install numpy scipy`:

    python3 bench/numpy_compare.py

Prints the median time per operation over repeated runs. The data and models
mirror benches/stats.rs: a 15-point weighted cubic fit with covariance, a
20-component GUM budget with Welch-Satterthwaite and a Student-t coverage
factor, and Monte Carlo with 1e6 trials of a 10-input additive model
(vectorised, shortest 95 % interval from the sorted output).
"""
import statistics
import time

import numpy as np
from scipy import stats


def timed(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def cubic_data():
    x = np.array([-40.0 + 40.0 * i for i in range(15)])
    wiggle = np.array([0.003 if i % 2 == 0 else -0.002 for i in range(15)])
    y = 0.05 + 1.2e-3 * x - 2.5e-6 * x**2 + 1.5e-9 * x**3 + wiggle
    u = 0.01 + 2e-5 * np.abs(x)
    return x, y, u


def fit(x, y, u):
    # numpy.polyfit takes weights 1/sigma; cov="unscaled" matches known
    # point uncertainties.
    return np.polyfit(x, y, 3, w=1.0 / u, cov="unscaled")


def components(n):
    out = []
    for i in range(n):
        u = 0.001 * (1.0 + i)
        kind = i % 4
        if kind == 0:
            out.append((2.0 * u / 2.0, np.inf, "normal", u))
        elif kind == 1:
            out.append((u * np.sqrt(3) / np.sqrt(3), np.inf, "rect", u * np.sqrt(3)))
        elif kind == 2:
            out.append((u * np.sqrt(6) / np.sqrt(6), np.inf, "tri", u * np.sqrt(6)))
        else:
            out.append((u, 9.0, "typea", u))
    return out


def budget(comps):
    u = np.array([c[0] for c in comps])
    nu = np.array([c[1] for c in comps])
    c = 1.0 + 0.01 * np.arange(len(comps))
    contrib = c * u
    uc = np.sqrt(np.sum(contrib**2))
    finite = np.isfinite(nu)
    nu_eff = uc**4 / np.sum(contrib[finite] ** 4 / nu[finite]) if finite.any() else np.inf
    p = 0.9544997361036416
    k = stats.norm.ppf(0.5 + p / 2) if not np.isfinite(nu_eff) else stats.t.ppf(0.5 + p / 2, nu_eff)
    return uc, nu_eff, k * uc, contrib**2 / uc**2


def monte_carlo(comps, rng, m=1_000_000):
    y = np.zeros(m)
    for i, (u, nu, kind, a) in enumerate(comps):
        ci = 1.0 + 0.01 * i
        if kind == "normal":
            x = rng.normal(0.0, u, m)
        elif kind == "rect":
            x = rng.uniform(-a, a, m)
        elif kind == "tri":
            x = rng.triangular(-a, 0.0, a, m)
        else:
            x = u * rng.standard_t(nu, m)
        y += ci * x
    ys = np.sort(y)
    q = int(0.95 * m + 0.5)
    widths = ys[q:] - ys[: m - q]
    j = int(np.argmin(widths))
    return y.mean(), y.std(ddof=1), (ys[j], ys[j + q])


def main():
    x, y, u = cubic_data()
    comps20 = components(20)
    comps10 = components(10)
    rng = np.random.default_rng(1)
    print(f"numpy {np.__version__}, scipy {__import__('scipy').__version__}")
    t_fit = timed(lambda: fit(x, y, u), 2000)
    t_budget = timed(lambda: budget(comps20), 2000)
    t_mc = timed(lambda: monte_carlo(comps10, rng), 10)
    print(f"fit: 15-point weighted cubic with covariance     {t_fit * 1e6:10.2f} µs")
    print(f"budget: 20 components, Welch-Satterthwaite and k {t_budget * 1e6:10.2f} µs")
    print(f"monte carlo: 1e6 trials, 10-input additive model {t_mc * 1e3:10.2f} ms")


if __name__ == "__main__":
    main()
