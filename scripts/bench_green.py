#!/usr/bin/env python3
"""Benchmark: the square-lattice Green's function over an octant, exact forms against
per-site quadrature.

    PYTHONPATH=src python scripts/bench_green.py              # extent 200, 40 digits
    PYTHONPATH=src python scripts/bench_green.py --extent 60  # a quicker run

For each energy (9/2, outside the band; 1.5+0.5j, off the axis) it measures

  exact   the exact forms a*G00 + b*G11 + c of every site of the octant 0 <= n <= m <= N
          (recurrence on Gaussian rationals), then every value certified and correctly
          rounded per component from python-flint balls (what a table build does before
          its independent check);
  quad    the tanh-sinh quadrature of the reduced 1-D integral (the independent method, and
          the obvious way to get D digits without the recurrence) at a sample of sites; the
          octant's total is extrapolated from the sample's mean time per site (the sites
          grow more expensive with their distance, so the sample spans the octant).

It prints the times, the ratio, and the agreement of the two methods on the sample.  Not a
test: nothing is asserted.
"""

from __future__ import annotations

import argparse
import time
from fractions import Fraction

import mpmath

from latgreen.energy import parse_energy
from latgreen.exact import square_green as sg
from latgreen.methods.square_green_quadrature import green_quad


def sample_sites(N: int) -> list[tuple[int, int]]:
    pts = [(N // 20, N // 60), (N // 4, N // 10), (N // 2, 0), (3 * N // 4, 3 * N // 8),
           (N, N // 20)]
    return sorted({(max(m, 1), min(n, m)) for m, n in pts})


def fmp(x: Fraction) -> mpmath.mpf:
    return mpmath.mpf(x.numerator) / x.denominator


def bench(E_text: str, N: int, digits: int) -> None:
    E = parse_energy(E_text)
    t0 = time.perf_counter()
    forms = {(m, n): f for m, col in sg.columns(E, N) for n, f in enumerate(col)}
    t1 = time.perf_counter()
    vals = {s: sg.evaluate(f, E, s, digits) for s, f in forms.items()}
    t2 = time.perf_counter()
    sites = len(forms)
    biggest = max(f.size_bits() for f in forms.values())
    print(f"E = {E}: octant N = {N} ({sites} sites), {digits} digits per component")
    print(f"  exact forms            {t1 - t0:9.2f} s   (largest numerator {biggest} bits)")
    print(f"  certified evaluation   {t2 - t1:9.2f} s")
    exact_total = t2 - t0
    times, worst = [], 0.0
    for s in sample_sites(N):
        t = time.perf_counter()
        with mpmath.workdps(digits + 10):
            q = green_quad(E, s[0], s[1], digits)
            dt = time.perf_counter() - t
            v = vals[s]
            c = mpmath.mpc(fmp(v.center[0]), fmp(v.center[1]))
            r = float(abs(q - c) / abs(c))
        times.append(dt)
        worst = max(worst, r)
        print(f"  quadrature at {s!s:>11}  {dt:9.2f} s   |quad - exact|/|G| = {r:.1e}")
    per_site = sum(times) / len(times)
    quad_total = per_site * sites
    print(f"  quadrature extrapolated to the octant: {quad_total:,.0f} s "
          f"({quad_total / 3600:.1f} h; {per_site:.2f} s per site)")
    print(f"  exact total {exact_total:.2f} s; ratio quadrature / exact = "
          f"{quad_total / exact_total:,.0f}x; worst relative difference on the sample "
          f"{worst:.1e}\n")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--extent", type=int, default=200)
    ap.add_argument("--digits", type=int, default=40)
    ap.add_argument("--energies", nargs="+", default=["9/2", "1.5+0.5j"])
    a = ap.parse_args()
    for E in a.energies:
        bench(E, a.extent, a.digits)


if __name__ == "__main__":
    main()
