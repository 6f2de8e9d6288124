"""Writes t_quantiles_scipy.csv: two-sided Student-t coverage factors k = t_{(1+p)/2, nu}.

Run: python3 t_quantiles_gen.py  (scipy 1.17.1, numpy 2.4.6, mpmath 1.3.0)
scipy.stats.t.ppf for finite nu, scipy.stats.norm.ppf for nu = inf. p is given as the exact
value used: 0.5 / 0.9 / 0.95 / 0.99 / 0.9999 literally, and erf(k/sqrt 2) for k = 1, 2, 3 (computed with
mpmath at 50 digits and rounded to binary64). Values printed with 17 significant digits.
"""
import mpmath as mp
import scipy
from scipy import stats

mp.mp.dps = 50
# Spot check (done once, not repeated here): at nu = 1e4, 1e6, 1e9 and p = 0.95 the scipy values
# agree with an mpmath findroot on the regularized incomplete beta function to all 16 digits.
ps = [
    ("50", 0.5),
    ("k1", float(mp.erf(1 / mp.sqrt(2)))),
    ("90", 0.90),
    ("95", 0.95),
    ("k2", float(mp.erf(2 / mp.sqrt(2)))),
    ("99", 0.99),
    ("k3", float(mp.erf(3 / mp.sqrt(2)))),
    ("99.99", 0.9999),
]
nus = list(range(1, 51)) + [100, 1000, 10000, 1e5, 1e6, 1e7, 1e9]
nus += [1.0001, 1.5, 2.5, 3.7, 7.3, 12.9, 45.6, 1234.5, 9999.5, 12345.6, 98765.4]
with open("t_quantiles_scipy.csv", "w") as fh:
    fh.write(f"# scipy {scipy.__version__}: nu,p_label,p,k\n")
    for nu in nus:
        for label, p in ps:
            k = stats.t.ppf((1 + p) / 2, nu)
            fh.write(f"{nu!r},{label},{p!r},{float(k)!r}\n")
    for label, p in ps:
        fh.write(f"inf,{label},{p!r},{float(stats.norm.ppf((1 + p) / 2))!r}\n")
