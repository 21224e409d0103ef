"""Exhaustive minimum-link search through vertical windows, for small cases (tests only).

Every path of ``L`` links is a sequence of lines, each covering a run of
consecutive windows, joined either where the two lines cross inside the gap
between their runs (two sign cases) or by a connector segment inside that gap.
For each choice the remaining problem is a linear feasibility problem in the
lines' slopes and intercepts (scipy.optimize.linprog, HiGHS). ``L`` is raised
until some choice is feasible.
"""

from __future__ import annotations

import itertools

import numpy as np
from scipy.optimize import linprog


def _feasible(x, lo, hi, cuts, joints):
    """Lines ``k`` cover windows ``cuts[k]+1 … cuts[k+1]``; ``joints`` per gap."""
    w = len(cuts) - 1
    nv = 2 * w  # (s_k, c_k): ℓ_k(t) = c_k + s_k (t - x0)
    a_ub, b_ub = [], []

    def row(k, t, sign):  # sign · ℓ_k(t) as coefficients
        r = np.zeros(nv)
        r[2 * k] = sign * (t - x[0])
        r[2 * k + 1] = sign
        return r

    for k in range(w):
        for j in range(cuts[k] + 1, cuts[k + 1] + 1):
            a_ub.append(row(k, x[j], -1.0))
            b_ub.append(-lo[j])
            a_ub.append(row(k, x[j], 1.0))
            b_ub.append(hi[j])
    for k, kind in enumerate(joints):
        e = cuts[k + 1]
        if kind == "connector":  # ℓ_k(x_e) ≤ ℓ_{k+1}(x_{e+1})
            a_ub.append(row(k, x[e], 1.0) + row(k + 1, x[e + 1], -1.0))
            b_ub.append(0.0)
        else:
            sg = 1.0 if kind == "+" else -1.0  # sg·(ℓ_k − ℓ_{k+1})(x_e) ≥ 0 ≥ … (x_{e+1})
            a_ub.append(-sg * (row(k, x[e], 1.0) + row(k + 1, x[e], -1.0)))
            b_ub.append(0.0)
            a_ub.append(sg * (row(k, x[e + 1], 1.0) + row(k + 1, x[e + 1], -1.0)))
            b_ub.append(0.0)
    bounds = [(0, None) if i % 2 == 0 else (None, None) for i in range(nv)]
    res = linprog(np.zeros(nv), A_ub=np.asarray(a_ub), b_ub=np.asarray(b_ub), bounds=bounds,
                  method="highs")  # fmt: skip
    return res.status == 0


def brute_min_links(x, lo, hi, start, end, max_links=6):
    """Fewest links, by trying every path shape with 1, 2, … links."""
    x = np.asarray(x, float)
    b = x.size - 1
    lo = np.array(lo, float)
    hi = np.array(hi, float)
    lo[0], hi[0] = start
    lo[b], hi[b] = end
    for links in range(1, max_links + 1):
        for w in range(1, links + 1):
            c = links - w
            if c > w - 1:
                continue
            for inner in itertools.combinations(range(b), w - 1):
                cuts = [-1, *inner, b]
                for conn in itertools.combinations(range(w - 1), c):
                    rest = [g for g in range(w - 1) if g not in conn]
                    for signs in itertools.product("+-", repeat=len(rest)):
                        joints = ["connector"] * (w - 1)
                        for g, sg in zip(rest, signs, strict=True):
                            joints[g] = sg
                        if _feasible(x, lo, hi, cuts, joints):
                            return links
    return None
