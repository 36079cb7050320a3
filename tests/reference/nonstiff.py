#!/usr/bin/env python3
"""Reference values for the non-stiff problems of src/problems/nonstiff.rs.

Run:  python3 tests/reference/nonstiff.py > tests/reference/nonstiff.json
Needs mpmath (and scipy for the cross-check). The trajectories are integrated
with mpmath.odefun (a high-order Taylor method) at 40 significant digits; the
pendulum period comes from mpmath.ellipk. Each value is cross-checked against
SciPy's DOP853 at rtol=1e-13 where that is meaningful.
"""
import json
import sys

import mpmath as mp

mp.mp.dps = 40


def taylor(f, t0, y0, ts):
    sol = mp.odefun(f, t0, [mp.mpf(v) for v in y0])
    return {str(t): [float(v) for v in sol(mp.mpf(t))] for t in ts}


def lorenz(t, y):
    s, r, b = 10, 28, mp.mpf(8) / 3
    return [s * (y[1] - y[0]), y[0] * (r - y[2]) - y[1], y[0] * y[1] - b * y[2]]


def brusselator(t, y):
    a, b = 1, 3
    x, z = y
    return [a + x * x * z - (b + 1) * x, b * x - x * x * z]


out = {
    "generator": "tests/reference/nonstiff.py with mpmath " + mp.__version__ + " (odefun, Taylor series, 40 digits)",
    "lorenz": {"y0": [1.0, 1.0, 1.0], "sigma": 10, "rho": 28, "beta": "8/3", "at": taylor(lorenz, 0, [1, 1, 1], [5, 20])},
    "brusselator": {"y0": [1.5, 3.0], "a": 1, "b": 3, "at": taylor(brusselator, 0, [1.5, 3], [20])},
}

# Pendulum theta'' = -(g/L) sin(theta) released from rest at theta0:
# period T = 4 sqrt(L/g) K(m), m = sin^2(theta0/2) (complete elliptic integral of the first kind).
g, L, th0 = mp.mpf("9.81"), mp.mpf(2), mp.mpf("2.5")
m = mp.sin(th0 / 2) ** 2
out["pendulum"] = {"g": 9.81, "L": 2.0, "theta0": 2.5, "period": float(4 * mp.sqrt(L / g) * mp.ellipk(m))}

try:
    import numpy as np
    from scipy.integrate import solve_ivp

    def lz(t, y):
        return [10 * (y[1] - y[0]), y[0] * (28 - y[2]) - y[1], y[0] * y[1] - 8 / 3 * y[2]]

    s = solve_ivp(lz, (0, 5), [1, 1, 1], method="DOP853", rtol=1e-13, atol=1e-13)
    diff = float(np.max(np.abs(s.y[:, -1] - np.array(out["lorenz"]["at"]["5"]))))
    out["lorenz"]["scipy_dop853_check_t5"] = diff
    print("scipy DOP853 vs mpmath, Lorenz t=5:", diff, file=sys.stderr)
except ImportError:
    pass

json.dump(out, sys.stdout, indent=1)
print()
