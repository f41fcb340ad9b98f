#!/usr/bin/env python3
"""Timings of the triangular and honeycomb resistance tables (one process, no workers).

    PYTHONPATH=src python scripts/bench_trihex.py            # extents 60 and 200, 50 digits
    PYTHONPATH=src python scripts/bench_trihex.py --green-only --green-extent 40

For each lattice it prints: the exact forms of the whole region (recurrence only), the same
plus the rigorous evaluation to D digits with the exact forms attached, the batch quadrature
at D digits for every row of the extent-60 region (the full check), its float64 variant, and
per-site times of the adaptive tanh-sinh rule against the panel rule at three sites per
lattice, and the ratio of the per-site adaptive quadrature of the whole extent-60 region
(extrapolated from those sites' mean) to the exact table of the same region.

Green section (``--green-extent N``, energies ``--green-energies``, default 7 and 1.5+0.5j for
the triangular lattice, 4 and 1.5+0.5j for the honeycomb): the exact forms a B0 + b B2 + c of
the whole region, each certified per component from python-flint balls, against the per-site
quadrature of the reduced integral at a sample of sites spread over the region, extrapolated
to the region from the sample's mean time per site; prints the ratio and the agreement on the
sample.
It measures, it does not assert (speed targets are not unit tests).
"""

from __future__ import annotations

import argparse
import time
from fractions import Fraction

import mpmath

from latgreen.energy import parse_energy
from latgreen.exact import trihex_green as tg
from latgreen.lattices import get_lattice
from latgreen.methods import honeycomb_quadrature as hq
from latgreen.methods import triangular_quadrature as tq
from latgreen.quantities import get_provider


def _fmp(x: Fraction) -> mpmath.mpf:
    return mpmath.mpf(x.numerator) / x.denominator


def bench_green(lattice: str, E_text: str, N: int, digits: int) -> None:
    """Exact forms + certified evaluation of the region against extrapolated quadrature."""
    from latgreen.quantities.trihex_green import quad_value

    E = parse_energy(E_text, lattice)
    t0 = time.perf_counter()
    forms = {s: f for _, sites, fs in tg.columns(lattice, E, N)
             for s, f in zip(sites, fs, strict=True)}
    t1 = time.perf_counter()
    vals = {s: tg.evaluate(f, lattice, E, s, digits) for s, f in forms.items()}
    t2 = time.perf_counter()
    print(f"{lattice} green E = {E}: region of extent {N} ({len(forms)} sites), {digits} "
          f"digits per component")
    print(f"  exact forms {t1 - t0:8.2f} s (largest numerator "
          f"{max(f.size_bits() for f in forms.values())} bits), certified evaluation "
          f"{t2 - t1:8.2f} s")
    lat = get_lattice(lattice)
    picks = [lat.canonical(x) for x in
             ([(N // 10, N // 30), (N // 3, N // 6), (N // 2, 0), (N, N // 4)]
              if lattice == "triangular" else
              [(N // 10, 0, 1), (N // 3, -(N // 8), 1), (N // 2, N // 5, 0), (N, 0, 1)])]
    times, worst = [], 0.0
    for x in sorted(set(picks)):
        t = time.perf_counter()
        with mpmath.workdps(digits + 10):
            q = quad_value(lattice, E, x, digits)
            dt = time.perf_counter() - t
            v = vals[x]
            c = mpmath.mpc(_fmp(v.center[0]), _fmp(v.center[1]))
            r = float(abs(q - c) / abs(c))
        times.append(dt)
        worst = max(worst, r)
        print(f"  quadrature at {x!s:>13} {dt:8.2f} s   |quad - exact|/|G| = {r:.1e}")
    quad_total = sum(times) / len(times) * len(forms)
    exact_total = t2 - t0
    print(f"  quadrature extrapolated to the region {quad_total:,.0f} s; exact {exact_total:.2f} "
          f"s; ratio {quad_total / exact_total:,.0f}x; worst difference on the sample "
          f"{worst:.1e}\n")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--digits", type=int, default=50)
    ap.add_argument("--extents", type=int, nargs="+", default=[60, 200])
    ap.add_argument("--check-extent", type=int, default=60)
    ap.add_argument("--green-extent", type=int, default=40)
    ap.add_argument("--green-digits", type=int, default=40)
    ap.add_argument("--green-only", action="store_true")
    a = ap.parse_args()
    for lat, energies in (("triangular", ("7", "1.5+0.5j")), ("honeycomb", ("4", "1.5+0.5j"))):
        for E in energies:
            bench_green(lat, E, a.green_extent, a.green_digits)
    if a.green_only:
        return
    D = a.digits
    exact_time: dict[tuple[str, int], tuple[float, int]] = {}
    for lat in ("triangular", "honeycomb"):
        p = get_provider(lat, "resistance")
        for N in sorted(set(a.extents) | {a.check_extent}):
            t = time.perf_counter()
            sites = sum(len(b.sites) for b in p.batches(N))
            t1 = time.perf_counter() - t
            t = time.perf_counter()
            for _ in p.evaluated_batches(N, D, True):
                pass
            t2 = time.perf_counter() - t
            exact_time[(lat, N)] = (t2, sites)
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
    per_site: dict[str, list[float]] = {"triangular": [], "honeycomb": []}
    for site in [(5, 2), (30, 17), (60, 30)]:
        t = time.perf_counter()
        tq.reduced_adaptive(*site, D)
        ta = time.perf_counter() - t
        per_site["triangular"].append(ta)
        t = time.perf_counter()
        tq.resistance_quad(*site, D)
        tb = time.perf_counter() - t
        print(f"triangular {site}: adaptive tanh-sinh {ta:6.2f} s, panel rule {tb:6.3f} s")
    for hsite in [(5, 2, 1), (30, -10, 1), (60, 30, 0)]:
        t = time.perf_counter()
        hq.quad_adaptive(hsite, D)
        ta = time.perf_counter() - t
        per_site["honeycomb"].append(ta)
        t = time.perf_counter()
        hq.quad_sites([hsite], D)
        tb = time.perf_counter() - t
        print(f"honeycomb {hsite}: adaptive tanh-sinh {ta:6.2f} s, panel rule {tb:6.3f} s")
    N = a.check_extent
    for lat, times in per_site.items():
        t_exact, sites = exact_time[(lat, N)]
        est = sum(times) / len(times) * sites
        print(f"{lat:10s} resistance, extent {N}, {D} digits: exact table {t_exact:6.2f} s; "
              f"per-site adaptive tanh-sinh ~{est / 3600:6.2f} h (mean of {len(times)} sites "
              f"x {sites} sites); ratio {est / t_exact:,.0f}x")

if __name__ == "__main__":
    main()
