"""What worker processes run.  Kept free of heavy imports at module level: a worker sets
SIGINT aside (:func:`ignore_sigint`) before it imports the numerical libraries, so a Ctrl-C
that reaches the whole process group is handled by the main process alone.

A worker dies with the main process, even one killed by SIGKILL (which runs no clean-up):
on Linux the kernel sends it SIGKILL when its parent dies (``PR_SET_PDEATHSIG``), and
everywhere it checks between batches that its parent is still the one that started it (an
orphan is re-parented), so no worker goes on computing, or writing into a checkpoint that a
resumed build is filling, after the build is gone."""

from __future__ import annotations

import os
import signal
import sys
from typing import Any

_progress: Any = None
_parent: int | None = None  # the pid of the process that started this worker

PR_SET_PDEATHSIG = 1  # from <linux/prctl.h>


def init_worker(progress: Any = None, parent: int | None = None) -> None:
    """Worker start-up: signals as below, death with the ``parent`` process, and the queue
    to report finished rows to."""
    global _progress, _parent
    _progress = progress
    ignore_sigint()
    if parent is not None:
        _parent = parent
        die_with_parent()
        orphan_check()  # the parent may have died before the kernel was told


def die_with_parent() -> None:
    """Ask the kernel (Linux) to SIGKILL this process when its parent dies."""
    if not sys.platform.startswith("linux"):  # pragma: no cover - the ppid check covers it
        return
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0)
    except (OSError, AttributeError):  # pragma: no cover - no prctl: the ppid check
        pass


def orphan_check() -> None:
    """End this worker at once if the process that started it is gone."""
    if _parent is not None and os.getppid() != _parent:
        os._exit(1)


def _report(k: int) -> None:
    orphan_check()
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

    orphan_check()
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
