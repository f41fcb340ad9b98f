#!/usr/bin/env python3
"""Timings of the triangular and honeycomb resistance tables (one process, no workers).

    PYTHONPATH=src python scripts/bench_trihex.py            # extents 60 and 200, 50 digits

For each lattice it prints: the exact forms of the whole region (recurrence only), the same
plus the rigorous evaluation to D digits with the exact forms attached, the batch quadrature
at D digits for every row of the extent-60 region (the full check), its float64 variant, and
per-site times of the adaptive tanh-sinh rule against the panel rule at three sites.
It measures, it does not assert (speed targets are not unit tests).
"""

from __future__ import annotations

import argparse
import time

from latgreen.methods import honeycomb_quadrature as hq
from latgreen.methods import triangular_quadrature as tq
from latgreen.quantities import get_provider


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--digits", type=int, default=50)
    ap.add_argument("--extents", type=int, nargs="+", default=[60, 200])
    ap.add_argument("--check-extent", type=int, default=60)
    a = ap.parse_args()
    D = a.digits
    for lat in ("triangular", "honeycomb"):
        p = get_provider(lat, "resistance")
        for N in a.extents:
            t = time.perf_counter()
            sites = sum(len(b.sites) for b in p.batches(N))
            t1 = time.perf_counter() - t
            t = time.perf_counter()
            for _ in p.evaluated_batches(N, D, True):
                pass
            t2 = time.perf_counter() - t
            print(f"{lat:10s} extent {N:4d} ({sites} sites): exact forms {t1:6.2f} s, "
                  f"exact + evaluation to {D} digits {t2:6.2f} s")
        t = time.perf_counter()
        for s in p.batch_sites(a.check_extent):
            p.quad_sites(s, D)
        t3 = time.perf_counter() - t
        t = time.perf_counter()
        for s in p.batch_sites(a.check_extent):
            p.quad_float_sites(s)
        t4 = time.perf_counter() - t
        print(f"{lat:10s} extent {a.check_extent}: batch quadrature at {D} digits {t3:6.2f} s, "
              f"float64 {t4:6.3f} s")
    for site in [(5, 2), (30, 17), (60, 30)]:
        t = time.perf_counter()
        tq.reduced_adaptive(*site, D)
        ta = time.perf_counter() - t
        t = time.perf_counter()
        tq.resistance_quad(*site, D)
        tb = time.perf_counter() - t
        print(f"triangular {site}: adaptive tanh-sinh {ta:6.2f} s, panel rule {tb:6.3f} s")
    t = time.perf_counter()
    hq.quad_adaptive((30, -10, 1), D)
    ta = time.perf_counter() - t
    t = time.perf_counter()
    hq.quad_sites([(30, -10, 1)], D)
    tb = time.perf_counter() - t
    print(f"honeycomb (30, -10, 1): adaptive tanh-sinh {ta:6.2f} s, panel rule {tb:6.3f} s")


if __name__ == "__main__":
    main()
