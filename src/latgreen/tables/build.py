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

import bisect
import multiprocessing
import os
import signal
import warnings
from collections.abc import Callable, Iterator, Sequence
from fractions import Fraction
from multiprocessing.pool import Pool
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, LatgreenError, VerificationError
from ..quantities import Provider
from ..rounding import agreement_digits
from .render import Chunk, RowBlock, merge, render
from .workers import check_job, indexed_unit_job, init_worker

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
                                                         initargs=(progress, os.getpid()))
    ctx = multiprocessing.get_context("fork")
    old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        with warnings.catch_warnings():
            # Python 3.12+ warns about fork in a process with threads (numpy's BLAS pool);
            # the workers only run our pure functions, and take no lock those threads hold
            warnings.simplefilter("ignore", DeprecationWarning)
            return ctx.Pool(workers, initializer=init_worker,
                            initargs=(progress, os.getpid()))
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)



def rows(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool = True,
         start: int = 0, stop: int | None = None,
         on_batch: Callable[[int], None] | None = None) -> Iterator[RowBlock]:
    """Yield the verified rows of batches ``start`` <= index < ``stop``, in site order, one
    block per batch, computed in this process."""
    name, quantity = provider.lattice.name, provider.quantity
    energy = None if provider.energy is None else str(provider.energy)
    count = provider.batch_count(extent) if verify != "full" else 0
    for bi, eb in provider.evaluated_batches(extent, digits, with_exact, start, stop):
        full = verify == "full" or sampled(bi, count)
        checks = check_job((name, quantity, energy, eb.sites, digits, full))
        yield _block(provider, eb, checks, full, digits, with_exact)
        if on_batch is not None:
            on_batch(len(eb.sites))


def plan_units(sizes: Sequence[int], parts: int, costs: Sequence[float] | None = None,
               prefix: float = 0.0) -> list[tuple[int, int]]:
    """Split batches of ``sizes`` rows into at most ``parts`` contiguous work units.

    A unit is computed by one worker from scratch (the recurrence up to its first batch is
    run again there: cheap next to rounding, checking and rendering), so the number of units
    stays small: the number of workers, or more where one unit's text would be large.

    Without ``costs`` the units have about equal row counts (a serial build, which runs
    them in one pass).  With ``costs`` (per batch, in units of one row's work) a unit
    [a, b) costs sum(costs[a:b]) + prefix * sum(sizes[:a]) (the recurrence it runs again
    before its first batch), and the split minimises the largest unit cost: the smallest
    bound C for which cutting greedily at C needs no more than ``parts`` units.

    >>> plan_units([1] * 10, 2)
    [(0, 5), (5, 10)]
    >>> plan_units([1] * 10, 2, [1.0] * 10, prefix=0.5)
    [(0, 6), (6, 10)]
    """
    parts = max(1, min(parts, len(sizes)))
    if costs is None or parts == 1:
        total = sum(sizes)
        bounds, acc, k = [0], 0, 1
        for i, n in enumerate(sizes):
            acc += n
            if k < parts and acc >= total * k / parts and i + 1 < len(sizes):
                bounds.append(i + 1)
                k += 1
        bounds.append(len(sizes))
        return list(zip(bounds[:-1], bounds[1:], strict=True))
    cum_c = [0.0]
    for c in costs:
        cum_c.append(cum_c[-1] + c)
    cum_s = [0]
    for n in sizes:
        cum_s.append(cum_s[-1] + n)
    count = len(sizes)

    def cut(limit: float) -> list[int]:
        bounds = [0]
        while bounds[-1] < count:
            a = bounds[-1]
            base = prefix * cum_s[a] - cum_c[a]
            b = bisect.bisect_right(cum_c, limit - base, a + 1) - 1
            bounds.append(max(b, a + 1))  # a batch costlier than the limit: a unit of its own
        return bounds

    lo, hi = 0.0, cum_c[-1] + prefix * cum_s[-1]
    for _ in range(60):
        mid = (lo + hi) / 2
        if len(cut(mid)) - 1 <= parts:
            hi = mid
        else:
            lo = mid
    bounds = cut(hi)
    return list(zip(bounds[:-1], bounds[1:], strict=True))


UNIT_TEXT_BYTES = 200_000_000  # aim at most this much rendered text per unit


def unit_count(workers: int, batches: int, text_estimate: int, distributed: bool) -> int:
    """How many work units: enough for every worker (twice that on a cluster, whose workers
    may differ in speed), enough to keep each unit's text under UNIT_TEXT_BYTES, and for a
    serial build enough to checkpoint often (a serial build runs its units in one pass, so
    more units cost nothing there)."""
    by_text = -(-text_estimate // UNIT_TEXT_BYTES)
    if distributed:
        n = max(2 * workers, by_text)
    elif workers > 1:
        n = max(workers, by_text)
    else:
        n = max(by_text, min(8, batches // 8))
    return max(1, min(n, batches))


def run_units(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool,
              units: list[tuple[int, int]], todo: list[int],
              on_unit: Callable[[int, Chunk], None],
              on_rows: Callable[[int], None] | None = None, workers: int = 1,
              scheduler: str | None = None, save_dir: Path | None = None) -> None:
    """Compute the work units ``todo`` (indices into ``units``) and hand each finished one
    to ``on_unit`` (in any order): serially in one pass, in a pool of forked workers, or on
    a Dask distributed cluster at ``scheduler``.  The text of a unit does not depend on
    where it ran.  Pool workers save their unit into the checkpoint directory ``save_dir``
    themselves (if given) and hand ``on_unit`` a chunk without texts (``saved``)."""
    if not todo:
        return
    name, quantity = provider.lattice.name, provider.quantity
    energy = None if provider.energy is None else str(provider.energy)

    def args(i: int) -> tuple[Any, ...]:
        return (name, quantity, energy, extent, digits, verify, with_exact, units[i][0],
                units[i][1])

    if scheduler is not None:
        _run_dask(scheduler, [(i, args(i)) for i in todo], on_unit, on_rows)
        return
    if workers <= 1 or len(todo) == 1:
        _run_serial(provider, extent, digits, verify, with_exact, units, todo, on_unit,
                    on_rows, save_dir)
        return
    progress = _progress_queue()
    pool = _pool(min(workers, len(todo)), progress)
    started = list(getattr(pool, "_pool", ()))  # the worker processes, to notice a death
    ok = False
    try:
        jobs = [(i, args(i)) if save_dir is None else (i, args(i), str(save_dir))
                for i in todo]
        it = pool.imap_unordered(indexed_unit_job, jobs, chunksize=1)
        for _ in todo:
            while True:
                try:
                    i, ch = it.next(timeout=0.25)
                    break
                except multiprocessing.TimeoutError:
                    _drain(progress, on_rows)
                    _check_alive(started)
            _drain(progress, on_rows)
            on_unit(i, ch)
        ok = True
    except WorkerDied:
        _abandon(pool, started)
        raise
    finally:
        if ok:
            pool.close()
            pool.join()
        elif not getattr(pool, "_abandoned", False):
            pool.terminate()
            pool.join()


class WorkerDied(LatgreenError):
    """A worker process ended without finishing its unit (killed, out of memory): the pool
    would wait for its result for ever."""


def _abandon(pool: Pool, started: Sequence[Any]) -> None:
    """Kill every worker and leave the pool: after a worker died, Pool.terminate() can wait
    for ever on the task queue's lock (a killed process may hold it, and the worker started
    in its place takes it).  The pool's exit-time clean-up would do the same, so it is
    cancelled; its threads are daemons.  The thread that starts replacement workers is
    stopped first (one started after the kill below would outlive the build)."""
    handler = getattr(pool, "_worker_handler", None)
    notifier = getattr(pool, "_change_notifier", None)
    if handler is not None:
        handler._state = "TERMINATE"  # what Pool.terminate sets: the thread's loop ends
        for _ in range(20):
            if notifier is not None:
                notifier.put(None)
            handler.join(0.5)
            if not handler.is_alive():
                break
    # every child left (a worker started in place of the dead one included): one still
    # alive at exit would be sent SIGTERM and waited for, and a worker forked from a thread
    # may hang before it can act on SIGTERM
    for _ in range(3):
        alive = [p for p in {*started, *getattr(pool, "_pool", ()),
                             *multiprocessing.active_children()} if p.exitcode is None]
        if not alive:
            break
        for p in alive:
            p.kill()
        for p in alive:
            p.join(5)
    fin = getattr(pool, "_terminate", None)
    if fin is not None and hasattr(fin, "cancel"):
        fin.cancel()
    pool._state = "TERMINATE"  # type: ignore[attr-defined]  # no "unclosed pool" warning
    pool._abandoned = True  # type: ignore[attr-defined]


def _check_alive(procs: Sequence[Any]) -> None:
    for p in procs:
        code = p.exitcode
        if code:
            how = f"was killed by signal {-code}" if code < 0 else f"exited with status {code}"
            raise WorkerDied(f"a worker process {how} (out of memory?) before finishing its "
                             "work unit")


def _run_serial(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool,
                units: list[tuple[int, int]], todo: list[int],
                on_unit: Callable[[int, Chunk], None],
                on_rows: Callable[[int], None] | None, save_dir: Path | None = None) -> None:
    """One pass over the batches from the first unit to do; units already done are passed
    over (their batches are still computed where the recurrence needs them).  With
    ``save_dir`` each unit is written there block by block (:class:`UnitWriter`)."""
    from .checkpoint import UnitWriter

    want = set(todo)
    start = units[min(todo)][0]
    stop = units[max(todo)][1]
    unit_of = {}
    for i, (a, b) in enumerate(units):
        for bi in range(a, b):
            unit_of[bi] = i
    parts: list[Chunk] = []
    writer: UnitWriter | None = None
    current = None

    def close(i: int) -> None:
        nonlocal parts, writer
        if writer is not None:
            on_unit(i, writer.finish())
            writer = None
        else:
            on_unit(i, merge(parts))
            parts = []

    try:
        for blk_index, blk in _indexed_rows(provider, extent, digits, verify, with_exact,
                                            start, stop, want, unit_of):
            i = unit_of[blk_index]
            if current is not None and i != current:
                close(current)
            if i != current and save_dir is not None:
                writer = UnitWriter(save_dir, i)
            current = i
            if i in want:
                if writer is not None:
                    writer.add(render(blk))
                else:
                    parts.append(render(blk))
                if on_rows is not None:
                    on_rows(len(blk))
        if current is not None and current in want:
            close(current)
    finally:
        if writer is not None:
            writer.abort()


def _indexed_rows(provider: Provider, extent: int, digits: int, verify: str,
                  with_exact: bool, start: int, stop: int, want: set[int],
                  unit_of: dict[int, int]) -> Iterator[tuple[int, RowBlock]]:
    name, quantity = provider.lattice.name, provider.quantity
    energy = None if provider.energy is None else str(provider.energy)
    count = provider.batch_count(extent) if verify != "full" else 0
    for bi, eb in provider.evaluated_batches(extent, digits, with_exact, start, stop):
        if unit_of[bi] not in want:
            continue
        full = verify == "full" or sampled(bi, count)
        checks = check_job((name, quantity, energy, eb.sites, digits, full))
        yield bi, _block(provider, eb, checks, full, digits, with_exact)


def _run_dask(scheduler: str, jobs: list[tuple[int, tuple[Any, ...]]],
              on_unit: Callable[[int, Chunk], None],
              on_rows: Callable[[int], None] | None) -> None:
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise InputError("--scheduler needs the 'distributed' package (pip install "
                         "'latgreen[distributed]')") from None
    try:
        client = Client(scheduler, timeout="10s")
    except (OSError, TimeoutError, ValueError) as e:
        raise InputError(f"cannot reach the Dask scheduler at {scheduler}: {e}") from None
    try:
        futures = {client.submit(indexed_unit_job, job, pure=False): job[0] for job in jobs}
        for fut in as_completed(futures):
            i, ch = fut.result()
            if on_rows is not None:
                on_rows(ch.rows)
            on_unit(i, ch)
    finally:
        client.close()


def _drain(q: Any, on_rows: Callable[[int], None] | None) -> None:
    # a SimpleQueue (no feeder thread in the workers) with one reader: empty() then get()
    # never blocks
    while not q.empty():
        k = q.get()
        if on_rows is not None:
            on_rows(k)


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
            f"{eb.sites[k]}: the primary method and the quadrature agree to only "
            f"{agree[k]} digits (need {digits})")
    forms = eb.forms if with_exact and eb.forms is not None else None
    n = len(eb.sites)
    return RowBlock(
        sites=eb.sites, values=re_c.values,
        exacts=[str(f) for f in forms] if forms is not None else [""] * n,
        hows=[f.how for f in forms] if forms is not None else [""] * n,
        bounds=re_c.bounds, methods=_row_methods(provider, eb.sites), agreements=agree,
        imags=im_c.values, imag_bounds=im_c.bounds)


def _row_methods(provider: Provider, sites: Sequence[Any]) -> list[str]:
    """The methods column of complex rows: the provider's ``row_method(site)`` if it has
    one (the cubic green tables), else the square green's recurrence and quadrature."""
    f = getattr(provider, "row_method", None)
    return [f(s) for s in sites] if f is not None else ["recurrence;quadrature"] * len(sites)


def _block(provider: Provider, eb: Any, checks: Sequence[Any], full: bool, digits: int,
           with_exact: bool) -> RowBlock:
    method = "quadrature" if full else "quadrature-float64"
    need = digits if full else min(FAST_MIN_AGREEMENT, digits)
    rc = eb.rounded
    zero = (0,) * len(eb.sites[0]) if eb.sites else ()
    origin = [eb.sites.index(zero)] if zero in eb.sites else []
    if getattr(eb, "imag", None) is not None:
        return _complex_block(provider, eb, checks, digits, with_exact)
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
    low = np.nonzero(np.asarray(agree) < need)[0].tolist() if agree else []
    bad = [k for k in low if k not in origin]
    if bad:
        k = bad[0]
        raise VerificationError(
            f"{provider.lattice.name} {provider.quantity} at {eb.sites[k]}: recurrence and "
            f"{method} agree to only {agree[k]} digits (need {need})")
    forms = eb.forms if with_exact and eb.forms is not None else None
    n = len(eb.sites)
    if with_exact and eb.texts is not None:
        exacts, hows = eb.texts
    else:
        exacts = [str(f) for f in forms] if forms is not None else [""] * n
        hows = [f.how for f in forms] if forms is not None else [""] * n
    return RowBlock(
        sites=eb.sites,
        values=rc.values,
        exacts=exacts,
        hows=hows,
        bounds=rc.bounds,
        methods=methods,
        agreements=agree,
    )
