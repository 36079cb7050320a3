"""Work-precision helpers shared by the bench parts (imported, or run by
them for `fastest`; the file is not executable, so scripts/bench skips it).

A side's ladder is its runs of one method on one problem over a range of
tolerances. Costs are compared at equal achieved error: the peer's cost at our
error is interpolated log-log along its ladder. An error outside the peer's
ladder gives a bound, not a measurement."""

import json
import sys

import numpy as np


def fastest(paths):
    """The rows of several runs of the same wasm cases (JSON arrays, one per
    Node process, in the same order), each with its fastest `seconds`. A Node
    process settles into a fast or a slow mode for the same module (measured:
    0.22 or 0.33 ms for one stiff case, build after build), so each case is
    timed in several processes, as each side times each case in several
    passes."""
    runs = [json.load(open(p)) for p in paths]
    rows = runs[0]
    for other in runs[1:]:
        for row, again in zip(rows, other):
            row["seconds"] = min(row["seconds"], again["seconds"])
    return rows


if __name__ == "__main__":
    # python3 workprec.py A.json B.json ...: the merged rows on stdout.
    print(json.dumps(fastest(sys.argv[1:])))


def _points(ladder, cost):
    return [(r["error"], cost(r)) for r in ladder if r["error"] > 0 and cost(r) > 0]


def brackets(ladder, err, cost):
    """cost(row) at achieved error `err` at every pair of consecutive ladder
    points whose errors bracket it (log-log between the two), loosest first.
    More than one value means the peer's error is not monotone in its work
    around `err`."""
    out = []
    pts = _points(ladder, cost)
    for (e0, c0), (e1, c1) in zip(pts, pts[1:]):
        if min(e0, e1) <= err <= max(e0, e1):
            if e0 == e1:
                out.append(min(c0, c1))
                continue
            w = (np.log(err) - np.log(e0)) / (np.log(e1) - np.log(e0))
            out.append(float(np.exp(np.log(c0) + w * (np.log(c1) - np.log(c0)))))
    return out


def at_error(ladder, err, cost):
    """cost(row) at achieved error `err`, log-log between the first two
    consecutive ladder points whose errors bracket it. Returns (value, where):
    where = "in" (interpolated), "unreached" (every point less accurate: the
    value is the tightest point's cost, a lower bound on the true cost) or
    "overshot" (every point more accurate: the loosest point's cost, an upper
    bound).

    With the ladder loosest tolerance first, where a noisy error curve
    brackets `err` more than once the first bracket is the one the peer
    reaches with the least work: the comparison never favours the side
    measured against it (see `brackets` for the others)."""
    pts = _points(ladder, cost)
    if not pts:
        return None, "none"
    found = brackets(ladder, err, cost)
    if found:
        return found[0], "in"
    if err < min(e for e, _ in pts):
        return min(pts, key=lambda x: x[0])[1], "unreached"
    return max(pts, key=lambda x: x[0])[1], "overshot"


# How a value from `at_error` is marked in a table.
MARK = {"in": "", "unreached": "≥", "overshot": "≤", "none": "?"}
