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
from fractions import Fraction
from multiprocessing.pool import Pool
from typing import Any

import numpy as np

from ..errors import VerificationError
from ..quantities import Provider
from ..rounding import agreement_digits
from .render import Chunk, RowBlock, render
from .workers import check_job, init_worker, unit_job

FAST_MIN_AGREEMENT = 12
FLOAT_MAX_AGREEMENT = 15  # a float64 check cannot confirm more than this
FULL_AUTO_LIMIT = 2_000_000  # "auto" picks full when sites * digits stays below this


def choose_verify(mode: str, sites: int, digits: int, limit: int = FULL_AUTO_LIMIT) -> str:
    """``auto`` is ``full`` while sites x digits <= ``limit`` (a provider's own limit where
    its checks cost more per row), else ``fast``."""
    if mode != "auto":
        return mode
    return "full" if sites * digits <= limit else "fast"


def sampled(key: int, count: int) -> bool:
    """The batches (of ``count``, numbered from 0) a ``fast`` build checks at full
    precision: the first eleven, the middle one and the last.  (For the square lattice,
    whose batches are the columns m = 0..extent, this is m <= 10, m = extent // 2 and
    m = extent; the 3-D lattices batch by columns (l, m), so the sample stays small.)

    >>> [k for k in range(30) if sampled(k, 30)]
    [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 14, 29]
    """
    return key <= 10 or key == count - 1 or key == (count - 1) // 2


def default_workers() -> int:
    return os.cpu_count() or 1


def _progress_queue() -> Any:
    return multiprocessing.get_context("fork" if "fork" in multiprocessing.get_all_start_methods()
                                       else "spawn").SimpleQueue()


def _pool(workers: int, progress: Any) -> Pool:
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
        return multiprocessing.get_context("spawn").Pool(workers, initializer=init_worker,
                                                         initargs=(progress,))
    ctx = multiprocessing.get_context("fork")
    old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        with warnings.catch_warnings():
            # Python 3.12+ warns about fork in a process with threads (numpy's BLAS pool);
            # the workers only run our pure functions, and take no lock those threads hold
            warnings.simplefilter("ignore", DeprecationWarning)
            return ctx.Pool(workers, initializer=init_worker, initargs=(progress,))
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)



def rows(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool = True,
         start: int = 0, stop: int | None = None,
         on_batch: Callable[[int], None] | None = None) -> Iterator[RowBlock]:
    """Yield the verified rows of batches ``start`` <= index < ``stop``, in site order, one
    block per batch, computed in this process."""
    name, quantity = provider.lattice.name, provider.quantity
    count = provider.batch_count(extent) if verify != "full" else 0
    for bi, eb in provider.evaluated_batches(extent, digits, with_exact, start, stop):
        full = verify == "full" or sampled(bi, count)
        checks = check_job((name, quantity, eb.sites, digits, full))
        yield _block(provider, eb, checks, full, digits, with_exact)
        if on_batch is not None:
            on_batch(len(eb.sites))


def plan_units(provider: Provider, extent: int, parts: int) -> list[tuple[int, int]]:
    """Split the batches into ``parts`` contiguous work units of about equal row counts.

    A unit is computed by one worker from scratch (the recurrence up to its first batch is
    run again there: cheap next to rounding, checking and rendering), so the number of units
    stays small: the number of workers, or more where one unit's text would be large."""
    sizes = [len(s) for s in provider.batch_sites(extent)]
    total = sum(sizes)
    parts = max(1, min(parts, len(sizes)))
    bounds, acc, k = [0], 0, 1
    for i, n in enumerate(sizes):
        acc += n
        if k < parts and acc >= total * k / parts and i + 1 < len(sizes):
            bounds.append(i + 1)
            k += 1
    bounds.append(len(sizes))
    return list(zip(bounds[:-1], bounds[1:], strict=True))


UNIT_TEXT_BYTES = 200_000_000  # aim at most this much rendered text per unit


def chunks(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool = True,
           on_rows: Callable[[int], None] | None = None, workers: int = 1,
           text_estimate: int = 0) -> Iterator[Chunk]:
    """The table's rendered rows, in order.  With ``workers`` > 1 (and a table large enough
    to pay for it) contiguous work units run in a pool of forked workers, which report
    progress through a queue; the text is the same whatever the split."""
    total = provider.lattice.region_size(extent)
    if workers <= 1 or total < provider.parallel_min_sites:
        for blk in rows(provider, extent, digits, verify, with_exact, on_batch=on_rows):
            yield render(blk)
        return
    parts = max(workers, -(-text_estimate // UNIT_TEXT_BYTES))
    units = plan_units(provider, extent, parts)
    ctx_queue = _progress_queue()
    pool = _pool(workers, ctx_queue)
    args = [(provider.lattice.name, provider.quantity, extent, digits, verify, with_exact,
             a, b) for a, b in units]
    ok = False
    try:
        it = pool.imap(unit_job, args, chunksize=1)
        for _ in units:
            while True:
                try:
                    ch = it.next(timeout=0.25)
                    break
                except multiprocessing.TimeoutError:
                    _drain(ctx_queue, on_rows)
            _drain(ctx_queue, on_rows)
            yield ch
        ok = True
    finally:
        if ok:
            pool.close()
        else:
            pool.terminate()
        pool.join()


def _drain(q: Any, on_rows: Callable[[int], None] | None) -> None:
    # a SimpleQueue (no feeder thread in the workers) with one reader: empty() then get()
    # never blocks
    while not q.empty():
        k = q.get()
        if on_rows is not None:
            on_rows(k)


def _block(provider: Provider, eb: Any, checks: Sequence[Any], full: bool, digits: int,
           with_exact: bool) -> RowBlock:
    method = "quadrature" if full else "quadrature-float64"
    need = digits if full else min(FAST_MIN_AGREEMENT, digits)
    rc = eb.rounded
    origin = [k for k, site in enumerate(eb.sites) if not any(site)]
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
