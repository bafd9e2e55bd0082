#!/usr/bin/python3
"""Optimal dam-to-sire allocations of random instances, solved with
scipy.optimize.linear_sum_assignment (Debian python3-scipy) with every sire
repeated by its limit, for mating/reference_test.go.

Run from testdata/: /usr/bin/python3 tools/assignment_scipy.py
Writes mating/assignment_scipy.json: a list of cases, each with sires,
dams, limits, ceiling (null: none), cost (sire-major, sires*dams values)
and optimum (the minimum total cost, or null when scipy finds no feasible
assignment). Pairs above the ceiling are given an infinite cost, which
linear_sum_assignment treats as forbidden. Costs are invented (uniform in
[-0.05, 0.25), like coancestries) from a fixed seed.
"""
import json
import numpy as np
from scipy.optimize import linear_sum_assignment

rng = np.random.default_rng(20261202)
cases = []
# (sires, dams, limit rule, ceiling)
plans = [
    (1, 4, "loose", None), (2, 5, "loose", None), (3, 9, "tight", None),
    (5, 20, "loose", None), (5, 20, "tight", None), (5, 20, "random", 0.15),
    (8, 40, "tight", 0.2), (10, 60, "random", None), (10, 60, "loose", 0.1),
    (12, 100, "tight", None), (20, 150, "enough", 0.18), (7, 50, "enough", 0.12), (25, 200, "tight", None),
    (30, 240, "tight", 0.22), (4, 30, "short", None), (6, 30, "random", 0.0),
]
for ns, nd, rule, ceiling in plans:
    cost = rng.uniform(-0.05, 0.25, size=(ns, nd))
    if rule == "loose":
        limits = [nd] * ns
    elif rule == "tight":  # capacity exactly the number of dams
        base = nd // ns
        limits = [base] * ns
        for s in range(nd - base * ns):
            limits[s] += 1
    elif rule == "short":  # not enough capacity
        limits = [nd // ns - 1] * ns
    else:  # random limits; "enough" tops them up to at least 1.1 x the dams
        limits = [int(x) for x in rng.integers(1, max(2, 2 * nd // ns), size=ns)]
        s = 0
        while rule == "enough" and sum(limits) < 1.1 * nd:
            limits[s % ns] += 1
            s += 1
    c = cost.copy()
    if ceiling is not None:
        c[c > ceiling] = np.inf
    cols = [s for s in range(ns) for _ in range(min(limits[s], nd))]
    big = c[cols, :].T  # dams x places
    optimum = None
    if len(cols) >= nd:
        try:
            r, k = linear_sum_assignment(big)
            total = big[r, k].sum()
            if np.isfinite(total):
                optimum = float(total)
        except ValueError:  # infeasible cost matrix
            optimum = None
    cases.append({"sires": ns, "dams": nd, "limits": limits, "ceiling": ceiling,
                  "cost": [float(v) for v in cost.ravel()], "optimum": optimum})
    print(ns, nd, rule, ceiling, optimum)

with open("mating/assignment_scipy.json", "w") as f:
    json.dump(cases, f)
