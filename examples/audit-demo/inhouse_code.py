#!/usr/bin/env python3
"""A made-up in-house code, for the audit demo (invented scenario, not real data).

A lab models a large mesh of 100-ohm resistors and computes the resistance between two
nodes with the five-point lattice recurrence in float64, the way many quick scripts do.  The
recurrence is exact in exact arithmetic but, in float64, it cancels catastrophically along
the axis: the digits it gets right fall with the distance.  The lab exports `inhouse.csv`
with its own column names (`x`, `y`, `R_ohm`), values in ohms for 100-ohm resistors, and a
few rows damaged by a hand edit.  Run `python inhouse_code.py > inhouse.csv`.
"""

import math

OHMS = 100
N = 30

cols = [[0.0], [0.5, 2 / math.pi]]
h = 1.0
for m in range(1, N):
    cur, prev = cols[m], cols[m - 1]
    new = [4 * cur[0] - prev[0] - 2 * cur[1]]
    new += [4 * cur[k] - prev[k] - cur[k + 1] - cur[k - 1] for k in range(1, m)]
    new.append(2 * cur[m] - cur[m - 1])
    h += 1 / (2 * m + 1)
    new.append(2 / math.pi * h)
    cols.append(new)

print("x,y,R_ohm")
for m in range(1, N + 1):
    for n in (0, m // 2, m):
        print(f"{m},{n},{OHMS * cols[m][n]!r}")
# rows damaged by a hand edit
print("7,,92.1")
print("3,1,n/a")
print("2.5,1,80.0")
