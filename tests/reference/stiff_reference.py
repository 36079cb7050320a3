#!/usr/bin/env python3
"""Reference values for the stiff problems of ratebook's shared set.

Each problem is solved twice with SciPy's solve_ivp, Radau and LSODA at a
tight rtol with tiny atol (Van der Pol: rtol 1e-13, atol 1e-15; Robertson:
rtol 1e-12, atol 1e-20); the JSON records both runs' end states, the Radau
values as the reference, and the largest relative disagreement between the two
as the reference's own error bar. Van der Pol's earlier atol of 1e-10 left the
reference about 5e-10 off (relative) from tighter runs, too coarse for the
benchmark's errors at rtol 1e-8 and below; at these settings successive
tightenings (rtol 1e-12 → 1e-13, atol 1e-13 → 1e-15) move it by under 2e-12. Run: python3 stiff_reference.py > stiff_reference.json
"""
import json
import sys

import numpy as np
import scipy
from scipy.integrate import solve_ivp

MU = 1000.0


def vdp(t, y):
    return [y[1], MU * (1.0 - y[0] ** 2) * y[1] - y[0]]


def vdp_jac(t, y):
    return [[0.0, 1.0], [-2.0 * MU * y[0] * y[1] - 1.0, MU * (1.0 - y[0] ** 2)]]


def rober(t, y):
    a = 0.04 * y[0]
    b = 1e4 * y[1] * y[2]
    c = 3e7 * y[1] ** 2
    return [-a + b, a - b - c, c]


def rober_jac(t, y):
    return [
        [-0.04, 1e4 * y[2], 1e4 * y[1]],
        [0.04, -1e4 * y[2] - 6e7 * y[1], -1e4 * y[1]],
        [0.0, 6e7 * y[1], 0.0],
    ]


PROBLEMS = {
    "van_der_pol_1000": (vdp, vdp_jac, [2.0, 0.0], [1000.0, 2000.0, 3000.0], 1e-13, 1e-15),
    "robertson": (rober, rober_jac, [1.0, 0.0, 0.0], [40.0, 1e3, 1e5, 1e7, 1e9, 1e11], 1e-12, 1e-20),
}


def run(method, f, jac, y0, times, rtol, atol):
    sol = solve_ivp(f, (0.0, times[-1]), y0, method=method, t_eval=times,
                    rtol=rtol, atol=atol, jac=jac)
    if not sol.success:
        raise SystemExit(f"{method} failed: {sol.message}")
    return sol.y.T.tolist()


out = {"generator": "tests/reference/stiff_reference.py",
       "scipy": scipy.__version__, "numpy": np.__version__,
       "problems": {}}
for name, (f, jac, y0, times, rtol, atol) in PROBLEMS.items():
    radau = run("Radau", f, jac, y0, times, rtol, atol)
    lsoda = run("LSODA", f, jac, y0, times, rtol, atol)
    spread = max(abs(a - b) / max(abs(a), 1e-300) if abs(a) > 1e-30 else 0.0
                 for ra, la in zip(radau, lsoda) for a, b in zip(ra, la))
    out["problems"][name] = {"y0": y0, "rtol": rtol, "atol": atol, "times": times,
                             "radau": radau, "lsoda": lsoda,
                             "max_relative_spread": spread}
    print(name, "spread", spread, file=sys.stderr)
json.dump(out, sys.stdout, indent=1)
print()
