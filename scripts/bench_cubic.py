#!/usr/bin/env python3
"""The cubic resistance tables: exact region tables against per-site quadrature.

    PYTHONPATH=src python scripts/bench_cubic.py                 # sc, extent 30, 50 digits
    PYTHONPATH=src python scripts/bench_cubic.py --lattices sc bcc fcc --extent 20
    PYTHONPATH=src python scripts/bench_cubic.py --energy 7/2 --lattices sc bcc --digits 30

With --energy E (a real energy with exact forms) it times the green table at E instead:
  exact   the forms a + b G0 + c G0' + d G0'' of every site, each evaluated as a certified
          ball and correctly rounded (both components);
  site    the alternative without them: the table's own second method (the 1-D integral
          over k3 for sc and bcc, the nested per-site integral or the 2-D rule for the fcc),
          one call per site, timed on a sample and extrapolated.

For each lattice it measures, in one run and one process:
  exact   the exact forms r1 K + r2/(pi^2 K) + r3 of every site of the canonical region up to
          the extent (recurrence), each evaluated rigorously to D digits (fixed point with a
          proven error term) and correctly rounded;
  batch   the independent check as the table builder runs it: the reduced 2-D quadrature
          at D digits, one column (l, m) of sites per pass over the nodes (timed on a sample
          of columns and extrapolated, unless --full-batch);
  site    the alternative a user without the exact forms has: one reduced 2-D quadrature
          per site at D digits (the same rule, one site per call), timed on a sample of
          sites spread over the region and extrapolated to all of them.
It prints the wall times and the ratios site/exact and batch/exact.  It measures, it does
not assert: speed targets are not unit tests.
"""

from __future__ import annotations

import argparse
import random
import time

from latgreen.quantities import get_provider


def _fmt(seconds: float) -> str:
    if seconds < 120:
        return f"{seconds:8.2f} s"
    if seconds < 7200:
        return f"{seconds / 60:8.1f} min"
    return f"{seconds / 3600:8.1f} h"


def _green(name: str, energy: str, N: int, D: int, sample: int, rng: random.Random) -> None:
    p = get_provider(name, "green", energy)
    t = time.perf_counter()
    n_sites = sum(len(eb.sites) for _bi, eb in p.evaluated_batches(N, D, True))
    t_exact = time.perf_counter() - t
    sites = [s for col in p.batch_sites(N) for s in col if any(s)]
    picks = [max(sites), sites[len(sites) // 2]]
    picks += rng.sample(sites, max(0, sample - len(picks)))
    t = time.perf_counter()
    for s in picks:
        p.quad_sites([s], D)
    per_site = (time.perf_counter() - t) / len(picks)
    t_site = per_site * len(sites)
    print(f"{name} green at E = {energy}, extent {N}, {D} digits, {n_sites} sites")
    print(f"  exact forms + certified balls     : {_fmt(t_exact)}")
    print(f"  per-site {p.check_name:<25}: {_fmt(t_site)}  ({per_site:.2f} s/site on "
          f"{len(picks)} sites, extrapolated)")
    print(f"  ratio per-site / exact            : {t_site / t_exact:10.0f}x")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lattices", nargs="+", default=["sc"], choices=["sc", "bcc", "fcc"])
    ap.add_argument("--extent", type=int, default=30)
    ap.add_argument("--digits", type=int, default=50)
    ap.add_argument("--sample", type=int, default=6, help="sites timed one by one")
    ap.add_argument("--energy", help="time the green table at this real energy instead")
    ap.add_argument("--full-batch", action="store_true",
                    help="time the batch quadrature on every column instead of a sample")
    a = ap.parse_args()
    D, N = a.digits, a.extent
    rng = random.Random(20261202)
    if a.energy is not None:
        for name in a.lattices:
            _green(name, a.energy, N, D, a.sample, rng)
        return
    for name in a.lattices:
        p = get_provider(name, "resistance")
        t = time.perf_counter()
        n_sites = 0
        for _bi, eb in p.evaluated_batches(N, D, True):
            n_sites += len(eb.sites)
        t_exact = time.perf_counter() - t

        columns = [s for s in p.batch_sites(N)]
        sites = [s for col in columns for s in col if any(s)]
        # the sample: the far corner, a mid-region site and random ones
        picks = [max(sites), sites[len(sites) // 2]]
        picks += rng.sample(sites, max(0, a.sample - len(picks)))
        t = time.perf_counter()
        for s in picks:
            p.quad_sites([s], D)
        per_site = (time.perf_counter() - t) / len(picks)
        t_site = per_site * len(sites)

        cols = columns if a.full_batch else rng.sample(columns, min(len(columns), a.sample))
        t = time.perf_counter()
        done = 0
        for col in cols:
            p.quad_sites(col, D)
            done += len(col)
        t_batch = (time.perf_counter() - t) * (len(sites) / done)
        how = "measured" if a.full_batch else f"extrapolated from {len(cols)} columns"
        print(f"{name} resistance, extent {N}, {D} digits, {n_sites} sites")
        print(f"  exact forms + rigorous evaluation : {_fmt(t_exact)}")
        print(f"  batch quadrature check            : {_fmt(t_batch)}  ({how})")
        print(f"  per-site quadrature               : {_fmt(t_site)}  ({per_site:.2f} s/site "
              f"on {len(picks)} sites, extrapolated)")
        print(f"  ratio per-site quadrature / exact : {t_site / t_exact:10.0f}x")
        print(f"  ratio batch check / exact         : {t_batch / t_exact:10.1f}x")


if __name__ == "__main__":
    main()
