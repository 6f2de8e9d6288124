#!/usr/bin/env python3
"""Expected values for the unit tests of src/metrology/calib/switch.rs and
src/metrology/calib/media.rs, computed independently of the crate with numpy
and scipy from the same invented test data (Larchmere Thermal Metrology).

    python3 tests/data/switch_media_expected.py

Formulas: midpoint of the bracketing readings and half their step; mean,
experimental standard deviation (ddof=1) and s/sqrt(n) (JCGM 100:2008 4.2);
rectangular u = a/sqrt(3) (4.3.7); u_c by quadrature (5.1.2); Welch-Satterthwaite
nu_eff (G.4.1); k = t.ppf((1 + p)/2, nu_eff) with p = erf(2/sqrt(2)) (6.3.3);
U = k u_c. Differential: the terms common to switch and reset point left out,
the lag doubled (see the module docs of switch.rs).
"""
import math

import numpy as np
from scipy import special, stats

P = special.erf(2 / math.sqrt(2))
R3 = math.sqrt(3)


def budget(rows):
    """rows: list of (u, nu); returns u_c, nu_eff, k, U."""
    uc = math.sqrt(sum(u * u for u, _ in rows))
    den = sum(u**4 / nu for u, nu in rows if math.isfinite(nu) and u > 0)
    nu_eff = math.inf if den == 0 else uc**4 / den
    k = stats.norm.ppf((1 + P) / 2) if math.isinf(nu_eff) else stats.t.ppf((1 + P) / 2, nu_eff)
    return uc, nu_eff, k, k * uc


def change(readings):
    """readings: list of (t, state); the single change: midpoint and half step."""
    for (t0, s0), (t1, s1) in zip(readings, readings[1:]):
        if s0 != s1:
            return (t0 + t1) / 2, abs(t1 - t0) / 2
    raise ValueError("no change")


def show(name, v):
    print(f"{name} = {v!r}")


# ---------------------------------------------------------------- switch A
# LTM thermostat, opens on rising, nominal 70 degC; ramps as in switch.rs tests.
C, O = "closed", "open"
rising = [
    [(69.6, C), (69.8, C), (70.0, C), (70.2, O), (70.4, O)],
    [(69.9, C), (70.05, C), (70.25, O), (70.4, O)],
    [(69.8, C), (69.95, C), (70.1, C), (70.4, O)],
]
falling = [
    [(66.4, O), (66.2, O), (66.0, C), (65.8, C)],
    [(66.3, O), (66.15, O), (65.95, C)],
    [(66.5, O), (66.35, O), (66.15, C), (66.0, C)],
]
sw = [change(r) for r in rising]
rs = [change(r) for r in falling]
sw_t = np.array([c[0] for c in sw])
rs_t = np.array([c[0] for c in rs])
sw_det = max(c[1] for c in sw)
rs_det = max(c[1] for c in rs)
lag = 0.5 / 60 * 12  # 0.5 degC/min, tau = 12 s
u_ref = 0.05 / 2  # U = 0.05 degC, k = 2
u_unif = 0.04 / R3
u_stab = 0.02 / R3
u_cust = 0.05 / R3

print("# switch A")
for name, t, det in [("SW", sw_t, sw_det), ("RS", rs_t, rs_det)]:
    m, s = t.mean(), t.std(ddof=1)
    sm = s / math.sqrt(len(t))
    rows = [(u_ref, math.inf), (u_unif, math.inf), (u_stab, math.inf), (u_cust, math.inf),
            (lag / R3, math.inf), (det / R3, math.inf), (sm, len(t) - 1)]
    uc, nu, k, U = budget(rows)
    show(f"A_{name}_MEAN", m)
    show(f"A_{name}_S", s)
    show(f"A_{name}_SM", sm)
    show(f"A_{name}_DET", det)
    show(f"A_{name}_UC", uc)
    show(f"A_{name}_NU", nu)
    show(f"A_{name}_K", k)
    show(f"A_{name}_U", U)
d = abs(sw_t.mean() - rs_t.mean())
rows = [(u_stab, math.inf), (u_cust, math.inf), (sw_det / R3, math.inf),
        (u_stab, math.inf), (u_cust, math.inf), (rs_det / R3, math.inf),
        (2 * lag / R3, math.inf),
        (sw_t.std(ddof=1) / math.sqrt(3), 2), (rs_t.std(ddof=1) / math.sqrt(3), 2)]
uc, nu, k, U = budget(rows)
show("A_D", d)
show("A_D_UC", uc)
show("A_D_NU", nu)
show("A_D_K", k)
show("A_D_U", U)

# ---------------------------------------------------------------- switch B
# Low-temperature alarm, closes on falling, nominal 5 degC, observed changes
# with a resolution of 0.1 degC (a = 0.05), lag half-width 0.05 degC, no items.
print("# switch B")
sw_t = np.array([4.8, 4.9, 4.85])
rs_t = np.array([6.3, 6.2])
for name, t in [("SW", sw_t), ("RS", rs_t)]:
    sm = t.std(ddof=1) / math.sqrt(len(t))
    uc, nu, k, U = budget([(0.05 / R3, math.inf), (0.05 / R3, math.inf), (sm, len(t) - 1)])
    show(f"B_{name}_MEAN", t.mean())
    show(f"B_{name}_SM", sm)
    show(f"B_{name}_UC", uc)
    show(f"B_{name}_NU", nu)
    show(f"B_{name}_U", U)
rows = [(0.05 / R3, math.inf), (0.05 / R3, math.inf), (0.1 / R3, math.inf),
        (sw_t.std(ddof=1) / math.sqrt(3), 2), (rs_t.std(ddof=1) / math.sqrt(2), 1)]
uc, nu, k, U = budget(rows)
show("B_D", abs(sw_t.mean() - rs_t.mean()))
show("B_D_UC", uc)
show("B_D_NU", nu)
show("B_D_U", U)

# ---------------------------------------------------------------- switch C
# One cycle, observed 70.1 rising / 66.1 falling, resolution 0.1, no lag;
# pooled s_p = 0.08 degC with 9 degrees of freedom.
print("# switch C")
uc, nu, k, U = budget([(0.05 / R3, math.inf), (0.08, 9)])
show("C_SW_UC", uc)
show("C_SW_NU", nu)
show("C_SW_U", U)
uc, nu, k, U = budget([(0.05 / R3, math.inf), (0.05 / R3, math.inf), (0.08 * math.sqrt(2), 9)])
show("C_D_UC", uc)
show("C_D_NU", nu)
show("C_D_U", U)
uc, nu, k, U = budget([(0.05 / R3, math.inf)])
show("C_NOPOOL_K", k)
show("C_NOPOOL_U", U)

# ---------------------------------------------------------------- media
print("# media LTM-DRY-09")
stab60 = np.array([60.002, 60.006, 59.998, 60.004, 60.001, 59.997, 60.003])
ax60 = max(abs(v - 60.000) for v in [59.985, 59.962])
rad60 = max([60.004, 60.011, 59.995, 60.008]) - min([60.004, 60.011, 59.995, 60.008])
uni60 = math.hypot(ax60, rad60)
st60 = (stab60.max() - stab60.min()) / 2
load60 = 0.012
show("M60_AX", ax60)
show("M60_RAD", rad60)
show("M60_UNI", uni60)
show("M60_STAB", st60)
show("M60_S", stab60.std(ddof=1))
show("M60_UCOMB", math.sqrt((uni60**2 + st60**2 + load60**2) / 3))

stabm20 = np.array([-20.004, -19.997, -20.001, -20.006, -19.999, -20.002, -19.998])
axm20 = max(abs(v - (-20.000)) for v in [-19.978, -19.951])
radm20 = max(abs(v) for v in [0.012, -0.021, 0.007])
unim20 = math.hypot(axm20, radm20)
stm20 = (stabm20.max() - stabm20.min()) / 2
show("MM20_AX", axm20)
show("MM20_RAD", radm20)
show("MM20_UNI", unim20)
show("MM20_STAB", stm20)

stab140 = np.array([140.011, 139.992, 140.004, 139.987, 140.009, 139.996, 140.001])
ax140 = max(abs(v - 140.000) for v in [139.93, 139.86])
st140 = (stab140.max() - stab140.min()) / 2
show("M140_AX", ax140)
show("M140_STAB", st140)
show("M140_UCOMB", math.sqrt((ax140**2 + st140**2) / 3))

# Linear interpolation (numpy.interp) at 0 degC and 100 degC.
T = [-20.0, 60.0, 140.0]
show("I0_UNI", np.interp(0.0, T, [unim20, uni60, ax140]))
show("I0_STAB", np.interp(0.0, T, [stm20, st60, st140]))
show("I0_LOAD", np.interp(0.0, T[:2], [0.025, 0.012]))
show("I100_UNI", np.interp(100.0, T, [unim20, uni60, ax140]))
show("I100_STAB", np.interp(100.0, T, [stm20, st60, st140]))
