"""What worker processes run.  Kept free of heavy imports at module level: a worker sets
SIGINT aside (:func:`ignore_sigint`) before it imports the numerical libraries, so a Ctrl-C
that reaches the whole process group is handled by the main process alone."""

from __future__ import annotations

import signal
from typing import Any


def ignore_sigint() -> None:
    """Worker start-up: Ctrl-C is the main process's business; SIGTERM (how the pool is
    terminated) ends the worker at once, whatever handler the parent had."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)


def check_job(args: tuple[str, str, str | None, list[tuple[int, ...]], int, bool]) -> list[Any]:
    """One batch's independent values: (lattice, quantity, energy, sites, digits, full)."""
    from ..quantities import get_provider, mpf_fraction

    lattice, quantity, energy, sites, digits, full = args
    p = get_provider(lattice, quantity, energy)
    if p.complex_valued:
        return p.quad_sites(sites, digits)  # (re, im) pairs of Fractions
    if full:
        return [mpf_fraction(q) for q in p.quad_sites(sites, digits)]
    return list(p.quad_float_sites(sites))
