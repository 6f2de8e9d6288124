"""Generates the ill-conditioned least-squares check problems and their reference solutions.

Run: python3 reference_gen.py  (mpmath 1.3.0; Python 3.11 fractions for an exact cross-check)

The data are built deterministically (no random library): x and y are written with a fixed
number of decimals, and the reference solution is the exact least-squares solution of the
binary64 values those decimal strings denote (mpf(float(s)) is exact), computed with
mpmath at mp.dps = 100 from the normal equations, and cross-checked against an exact rational
solution (fractions.Fraction). High precision makes the normal equations harmless here.
"""
from fractions import Fraction
import mpmath as mp

mp.mp.dps = 100


def lcg(seed):
    state = seed
    while True:
        state = (6364136223846793005 * state + 1442695040888963407) % (1 << 64)
        yield (state >> 11) / float(1 << 53)


def filip_like():
    # 82 points on [-8.781, -3.132] clustered towards both ends (cosine spacing), rounded to 4
    # decimals; y = smooth curve + deterministic noise, rounded to 5 decimals.
    g = lcg(20240917)
    xs, ys = [], []
    for i in range(82):
        u = 0.5 - 0.5 * float(mp.cos(mp.pi * i / 81))
        x = round(-8.781 + 5.649 * u, 4)
        base = 0.83 + 0.012 * float(mp.sin(1.7 * x)) + 0.0009 * (x + 6.0) ** 3 / 10.0
        noise = (next(g) - 0.5) * 0.004
        y = round(base + noise, 5)
        xs.append(f"{x:.4f}")
        ys.append(f"{y:.5f}")
    return xs, ys


def wampler_like():
    # x = 0..20, y = 1 + x + ... + x^5 + an alternating integer perturbation (exact integers).
    xs = [str(i) for i in range(21)]
    ys = []
    for i in range(21):
        p = sum(i ** k for k in range(6))
        e = 100 * (((7 * i) % 11) - 5)
        ys.append(str(p + e))
    return xs, ys


def clustered():
    # 41 points crowded towards x = 10 (quartic spacing on [10, 12]), degree 8, rounded to 6
    # decimals; y = smooth curve + deterministic noise, rounded to 6 decimals.
    g = lcg(7)
    xs, ys = [], []
    for i in range(41):
        x = round(10.0 + 2.0 * (i / 40) ** 4, 6)
        y = round(float(mp.exp(0.3 * (x - 10.0))) + (next(g) - 0.5) * 1e-4, 6)
        xs.append(f"{x:.6f}")
        ys.append(f"{y:.6f}")
    return xs, ys


def offset_no_intercept():
    # 21 points on [100, 101] (x = 100 + i/20), model without constant term, degree 4:
    # the columns x, x^2, x^3, x^4 are nearly collinear. y rounded to 7 decimals.
    g = lcg(99)
    xs, ys = [], []
    for i in range(21):
        x = 100.0 + i / 20.0
        y = round(2.0 + 0.01 * (x - 100.0) ** 2 + (next(g) - 0.5) * 1e-4, 7)
        xs.append(f"{x:.2f}")
        ys.append(f"{y:.7f}")
    return xs, ys


def solve_mp(xs, ys, degree, first_power=0):
    x = [mp.mpf(float(s)) for s in xs]
    y = [mp.mpf(float(s)) for s in ys]
    m = degree + 1 - first_power
    n = len(x)
    X = mp.matrix(n, m)
    for i in range(n):
        for j in range(m):
            X[i, j] = x[i] ** (j + first_power)
    G = X.T * X
    rhs = X.T * mp.matrix(y)
    c = mp.lu_solve(G, rhs)
    r = mp.matrix(y) - X * c
    ssr = sum(r[i] ** 2 for i in range(n))
    s2 = ssr / (n - m)
    Ginv = mp.inverse(G)
    sd = [mp.sqrt(s2 * Ginv[j, j]) for j in range(m)]
    return [c[j] for j in range(m)], sd, mp.sqrt(s2), ssr


def solve_exact(xs, ys, degree, first_power=0):
    x = [Fraction(float(s)) for s in xs]
    y = [Fraction(float(s)) for s in ys]
    m = degree + 1 - first_power
    p = first_power
    G = [[sum(xi ** (j + k + 2 * p) for xi in x) for k in range(m)] for j in range(m)]
    b = [sum(xi ** (j + p) * yi for xi, yi in zip(x, y)) for j in range(m)]
    # Gauss-Jordan elimination in exact rationals.
    A = [row[:] + [bj] for row, bj in zip(G, b)]
    for col in range(m):
        piv = next(r for r in range(col, m) if A[r][col] != 0)
        A[col], A[piv] = A[piv], A[col]
        for r in range(m):
            if r != col and A[r][col] != 0:
                f = A[r][col] / A[col][col]
                A[r] = [a - f * c for a, c in zip(A[r], A[col])]
    return [A[j][m] / A[j][j] for j in range(m)]


def report(name, xs, ys, degree, first_power=0):
    c, sd, s, ssr = solve_mp(xs, ys, degree, first_power)
    exact = solve_exact(xs, ys, degree, first_power)
    for cj, ej in zip(c, exact):
        rel = abs((cj - mp.mpf(ej.numerator) / ej.denominator) / cj)
        assert rel < mp.mpf(10) ** -60, (name, rel)
    print(f"== {name} (degree {degree}, n = {len(xs)})")
    for j in range(degree + 1 - first_power):
        print(f"c{j + first_power} = {mp.nstr(c[j], 20)}   sd = {mp.nstr(sd[j], 20)}")
    print(f"s = {mp.nstr(s, 20)}   ssr = {mp.nstr(ssr, 20)}")


if __name__ == "__main__":
    fx, fy = filip_like()
    with open("filip_like.csv", "w") as fh:
        fh.write("x,y\n")
        for a, b in zip(fx, fy):
            fh.write(f"{a},{b}\n")
    wx, wy = wampler_like()
    with open("wampler_like.csv", "w") as fh:
        fh.write("x,y\n")
        for a, b in zip(wx, wy):
            fh.write(f"{a},{b}\n")
    cx, cy = clustered()
    with open("clustered.csv", "w") as fh:
        fh.write("x,y\n")
        for a, b in zip(cx, cy):
            fh.write(f"{a},{b}\n")
    report("filip_like", fx, fy, 10)
    report("clustered", cx, cy, 8)
    report("wampler_like", wx, wy, 5)
    ox, oy = offset_no_intercept()
    with open("offset_no_intercept.csv", "w") as fh:
        fh.write("x,y\n")
        for a, b in zip(ox, oy):
            fh.write(f"{a},{b}\n")
    report("offset_no_intercept", ox, oy, 4, first_power=1)
