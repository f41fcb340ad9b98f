"""What worker processes run.  Kept free of heavy imports at module level: a worker sets
SIGINT aside (:func:`ignore_sigint`) before it imports the numerical libraries, so a Ctrl-C
that reaches the whole process group is handled by the main process alone."""

from __future__ import annotations

import signal
from typing import Any

_progress: Any = None


def init_worker(progress: Any = None) -> None:
    """Worker start-up: signals as below, and the queue to report finished rows to."""
    global _progress
    _progress = progress
    ignore_sigint()


def _report(k: int) -> None:
    if _progress is not None:
        _progress.put(k)


UnitArgs = tuple[str, str, str | None, int, int, str, bool, int, int]


def unit_job(args: UnitArgs, save_dir: str | None = None, index: int = 0) -> Any:
    """One work unit: batches [start, stop) of a table, computed, checked and rendered.
    (lattice, quantity, energy, extent, digits, verify, with_exact, start, stop).  With
    ``save_dir`` the unit is written there as unit ``index`` block by block, and the chunk
    returned carries no texts."""
    from ..quantities import get_provider
    from .build import rows
    from .render import merge, render

    lattice, quantity, energy, extent, digits, verify, with_exact, start, stop = args
    p = get_provider(lattice, quantity, energy)
    blocks = rows(p, extent, digits, verify, with_exact, start, stop, on_batch=_report)
    if save_dir is None:
        return merge([render(blk) for blk in blocks])
    from pathlib import Path

    from .checkpoint import UnitWriter

    w = UnitWriter(Path(save_dir), index)
    try:
        for blk in blocks:
            w.add(render(blk))
        return w.finish()
    except BaseException:
        w.abort()
        raise


def indexed_unit_job(job: tuple[int, UnitArgs] | tuple[int, UnitArgs, str]) -> Any:
    """(index, unit arguments[, checkpoint directory]) -> (index, chunk): for pools and
    clusters that return results in any order.  With a checkpoint directory (a worker on the
    machine of the build) the unit saves itself there and returns its chunk without texts."""
    i, args = job[0], job[1]
    return i, unit_job(args, job[2] if len(job) > 2 else None, i)


def ignore_sigint() -> None:
    """Worker start-up: Ctrl-C is the main process's business; SIGTERM (how the pool is
    terminated) ends the worker at once, whatever handler the parent had."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)


def check_job(args: tuple[str, str, str | None, list[tuple[int, ...]], int, bool]
              ) -> list[Any]:
    """One batch's independent values: (lattice, quantity, energy, sites, digits, full)."""
    from ..quantities import get_provider, mpf_fraction

    lattice, quantity, energy, sites, digits, full = args
    p = get_provider(lattice, quantity, energy)
    if p.complex_valued:
        return p.quad_sites(sites, digits)  # (re, im) pairs of Fractions
    if full:
        return [mpf_fraction(q) for q in p.quad_sites(sites, digits)]
    return list(p.quad_float_sites(sites))
