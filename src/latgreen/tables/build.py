"""Compute and cross-check the rows of a table, batch by batch.

Every row's value is certified to the table's digits by the provider (an enclosure of the
exact recurrence, or the exact form through the fixed-point evaluator: both carry a proven
error term).  An independent method then confirms it:

* ``full``: the high-precision quadrature at the table's digits, for every row; a row
  whose two values agree to fewer than ``digits`` digits stops the build;
* ``fast``: the float64 quadrature for every row (at least ``FAST_MIN_AGREEMENT`` digits
  required), plus the high-precision quadrature on a deterministic sample of batches
  (:func:`sampled`), which must agree to all digits.

Each row records the methods that confirmed it and to how many digits they agree, so a
reader of a ``fast`` table sees exactly which rows carry a full independent check.

The independent checks need nothing from the exact side, so with ``workers`` > 1 they run in
worker processes from the start while this process runs the recurrence; results are
consumed in batch order, so the output does not depend on the number of workers.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
import warnings
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction
from multiprocessing.pool import Pool
from typing import Any

import numpy as np

from ..errors import VerificationError
from ..quantities import Provider
from ..rounding import agreement_digits
from .workers import check_job, ignore_sigint

FAST_MIN_AGREEMENT = 12
FLOAT_MAX_AGREEMENT = 15  # a float64 check cannot confirm more than this
FULL_AUTO_LIMIT = 2_000_000  # "auto" picks full when sites * digits stays below this
PARALLEL_MIN_SITES = 3000  # below this a worker pool costs more than it saves


@dataclass
class RowBlock:
    """The rows of one batch, column by column (a million Row objects would cost more
    than computing them)."""

    sites: list[tuple[int, ...]]
    values: list[str]
    exacts: list[str]
    hows: list[str]
    bounds: list[str]
    methods: list[str]
    agreements: list[int]
    imags: list[str] | None = None  # complex quantities: values holds the real parts
    imag_bounds: list[str] | None = None

    def __len__(self) -> int:
        return len(self.sites)


def choose_verify(mode: str, sites: int, digits: int) -> str:
    if mode != "auto":
        return mode
    return "full" if sites * digits <= FULL_AUTO_LIMIT else "fast"


def sampled(key: int, extent: int) -> bool:
    """The batches a ``fast`` build checks at full precision: the first ten, the middle one
    and the last."""
    return key <= 10 or key == extent or key == extent // 2


def default_workers() -> int:
    return os.cpu_count() or 1


def _pool(workers: int) -> Pool:
    """A pool whose workers are all forked at once, with SIGINT blocked.

    multiprocessing.Pool (unlike concurrent.futures) starts every worker in its constructor,
    and a forked child keeps the parent's signal mask, so no worker ever sees the Ctrl-C that
    a terminal sends to the whole process group: the main process alone handles it, then
    terminates the pool.  Forking copies the loaded modules, so workers start in
    milliseconds.  (forkserver and spawn start fresh interpreters that import everything
    again, and an interruption during those imports printed tracebacks.)  Where fork is not
    available, spawn.
    """
    if "fork" not in multiprocessing.get_all_start_methods() or not hasattr(
            signal, "pthread_sigmask"):  # pragma: no cover - not POSIX
        return multiprocessing.get_context("spawn").Pool(workers, initializer=ignore_sigint)
    ctx = multiprocessing.get_context("fork")
    old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        with warnings.catch_warnings():
            # Python 3.12+ warns about fork in a process with threads (numpy's BLAS pool);
            # the workers only run our pure functions, and take no lock those threads hold
            warnings.simplefilter("ignore", DeprecationWarning)
            return ctx.Pool(workers, initializer=ignore_sigint)
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)



def rows(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool = True,
         on_batch: Callable[[int], None] | None = None,
         workers: int = 1) -> Iterator[RowBlock]:
    """Yield the verified rows of the table in site order, one block per batch."""
    name, quantity = provider.lattice.name, provider.quantity
    plan = [(sites, verify == "full" or sampled(bi, extent))
            for bi, sites in enumerate(provider.batch_sites(extent))]
    total = sum(len(s) for s, _ in plan)
    pool = _pool(workers) if workers > 1 and total >= PARALLEL_MIN_SITES else None
    energy = None if provider.energy is None else str(provider.energy)
    jobs = ((name, quantity, energy, sites, digits, full) for sites, full in plan)
    results: Iterator[list[Any]] = (pool.imap(check_job, jobs, chunksize=1)
                                    if pool is not None else map(check_job, jobs))
    ok = False
    try:
        for bi, eb in enumerate(provider.evaluated_batches(extent, digits, with_exact)):
            sites, full = plan[bi]
            if eb.sites != sites:  # pragma: no cover - a provider bug
                raise AssertionError(f"batch {bi}: planned and computed sites differ")
            checks: Sequence[Any] = next(results)
            yield _block(provider, eb, checks, full, digits, with_exact)
            if on_batch is not None:
                on_batch(len(sites))
        ok = True
    finally:
        if pool is not None:
            if ok:
                pool.close()
            else:
                pool.terminate()
            pool.join()


def _complex_block(provider: Provider, eb: Any, checks: Sequence[Any], digits: int,
                   with_exact: bool) -> RowBlock:
    """Rows of a complex quantity: each component confirmed by the full-precision quadrature
    (``checks`` holds (re, im) pairs as Fractions); a component 0 by symmetry must have a
    quadrature value below 10^-digits |G|."""
    from ..quantities.green_api import component_agreement

    re_c, im_c = eb.rounded, eb.imag
    agree = []
    for k in range(len(eb.sites)):
        centre = (re_c.center(k), im_c.center(k))
        zero = (re_c.values[k] == "0", im_c.values[k] == "0")
        agree.append(component_agreement(centre, checks[k], zero, digits))
    bad = [k for k, g in enumerate(agree) if g < digits]
    if bad:
        k = bad[0]
        raise VerificationError(
            f"{provider.lattice.name} {provider.quantity} at E = {provider.energy}, site "
            f"{eb.sites[k]}: recurrence and quadrature agree to only {agree[k]} digits "
            f"(need {digits})")
    forms = eb.forms if with_exact and eb.forms is not None else None
    n = len(eb.sites)
    return RowBlock(
        sites=eb.sites, values=re_c.values,
        exacts=[str(f) for f in forms] if forms is not None else [""] * n,
        hows=[f.how for f in forms] if forms is not None else [""] * n,
        bounds=re_c.bounds, methods=["recurrence;quadrature"] * n, agreements=agree,
        imags=im_c.values, imag_bounds=im_c.bounds)


def _block(provider: Provider, eb: Any, checks: Sequence[Any], full: bool, digits: int,
           with_exact: bool) -> RowBlock:
    method = "quadrature" if full else "quadrature-float64"
    need = digits if full else min(FAST_MIN_AGREEMENT, digits)
    rc = eb.rounded
    origin = [k for k, site in enumerate(eb.sites) if not any(site)]
    if eb.imag is not None:
        return _complex_block(provider, eb, checks, digits, with_exact)
    if full:
        agree = [agreement_digits(rc.center(k), checks[k] if isinstance(checks[k], Fraction)
                                  else Fraction(checks[k]), digits)
                 for k in range(len(eb.sites))]
    else:
        x = rc.center_floats()
        y = np.asarray(checks, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            rel = np.abs(x - y) / np.abs(x)
            a = np.where(rel == 0, FLOAT_MAX_AGREEMENT, np.floor(-np.log10(rel)))
        a = np.clip(np.nan_to_num(a, nan=0.0), 0, min(digits, FLOAT_MAX_AGREEMENT))
        agree = a.astype(int).tolist()
    methods = [f"recurrence;{method}"] * len(eb.sites)
    for k in origin:
        agree[k], methods[k] = digits, "definition"
    bad = [k for k, g in enumerate(agree) if g < need and k not in origin]
    if bad:
        k = bad[0]
        raise VerificationError(
            f"{provider.lattice.name} {provider.quantity} at {eb.sites[k]}: recurrence and "
            f"{method} agree to only {agree[k]} digits (need {need})")
    forms = eb.forms if with_exact and eb.forms is not None else None
    n = len(eb.sites)
    return RowBlock(
        sites=eb.sites,
        values=rc.values,
        exacts=[str(f) for f in forms] if forms is not None else [""] * n,
        hows=[f.how for f in forms] if forms is not None else [""] * n,
        bounds=rc.bounds,
        methods=methods,
        agreements=agree,
    )
