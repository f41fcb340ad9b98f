"""Square lattice x green (G at one energy) and the density of states.

The provider is bound to one exact energy (``SquareGreen(E)``): its batches are the octant's
columns, evaluated from the exact forms a G00 + b G11 + c (``exact/square_green.py``) with
python-flint balls for G00, G11 (``methods/square_green_closed.py``); the independent method
is the quadrature of the reduced integral (``methods/square_green_quadrature.py``).  Values
are complex: two rounded components per row (see ``exact/complex_eval.py``).
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from fractions import Fraction

import mpmath

from ..energy import Energy
from ..exact import square_green as exact_green
from ..exact.complex_eval import ComplexRounded
from ..exact.evaluate import RoundedColumn
from ..lattices import Site
from ..lattices.square import SQUARE
from ..methods.square_green_quadrature import green_quad
from .base import EvaluatedBatch, Provider


def _frac(x: mpmath.mpf) -> Fraction:
    sign, man, exp, _ = x._mpf_
    if not man:
        return Fraction(0)
    v = Fraction(int(man)) * Fraction(2) ** int(exp)
    return -v if sign else v


def column_of(values: list[ComplexRounded], part: int) -> RoundedColumn:
    """One component (0: real, 1: imaginary) of a batch as a RoundedColumn with exact centres."""
    rs = [v.re if part == 0 else v.im for v in values]
    return RoundedColumn([str(r) for r in rs], [r.half_ulp() for r in rs], [], 0,
                         {k: v.center[part] for k, v in enumerate(values)}, [])


class SquareGreen(Provider):
    lattice = SQUARE
    quantity = "green"
    exact_limit = 2000
    complex_valued = True

    energy: Energy

    def __init__(self, energy: Energy) -> None:
        self.energy = energy

    def evaluated_batches(self, extent: int, digits: int, with_exact: bool, start: int = 0,
                          stop: int | None = None) -> Iterator[tuple[int, EvaluatedBatch]]:
        """Column m of the octant: every site's exact form evaluated as a certified ball
        (columns before ``start`` are only run through by the recurrence)."""
        last = extent if stop is None else min(extent, stop - 1)
        for m, forms in exact_green.columns(self.energy, last):
            if m < start:
                continue
            vals = [exact_green.evaluate(f, self.energy, (m, n), digits)
                    for n, f in enumerate(forms)]
            yield m, EvaluatedBatch([(m, n) for n in range(m + 1)], column_of(vals, 0),
                                    forms if with_exact else None,  # type: ignore[arg-type]
                                    imag=column_of(vals, 1))

    def exact_form(self, site: Site) -> exact_green.GreenForm | None:  # type: ignore[override]
        m, n = site
        if m > self.exact_limit:
            return None
        return exact_green.green_form(self.energy, m, n)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for m in range(extent + 1):
            yield [(m, n) for n in range(m + 1)]

    def quad_complex(self, site: Site, digits: int) -> tuple[Fraction, Fraction]:
        """Both components to ``digits`` digits of their own: a 15-digit scouting pass says
        how much smaller than |G| the smaller non-zero component is, and the quadrature
        (whose accuracy is relative to |G|) is run with that many more digits."""
        m, n = site
        zre, zim = exact_green.zero_parts(self.energy, m, n)
        with mpmath.workdps(20):
            q = green_quad(self.energy, m, n, 15)
            comps = [abs(c) for c, z in ((q.real, zre), (q.imag, zim)) if not z]
            small = min(comps) if comps else abs(q)
            extra = max(0, int(mpmath.ceil(mpmath.log10(abs(q) / small)))) if small else 30
        dps = digits + extra + 3
        with mpmath.workdps(dps + 5):
            q = green_quad(self.energy, m, n, dps)
            return _frac(q.real), _frac(q.imag)

    def quad_sites(self, sites: list[Site], digits: int) -> list:
        return [self.quad_complex(s, digits) for s in sites]

    def memory_estimate(self, extent: int) -> int:
        # two columns of (extent+1) triples of Gaussian rationals of up to ~2.7*extent bits
        per_int = 2.7 * extent / 8 + 60
        return int(2 * (extent + 1) * 3 * 4 * per_int) + 50_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        per_row = 2 * (2 * digits + 80)
        if with_exact:
            per_row += int(4 * 3 * 0.8 * extent) + 80
        return self.lattice.region_size(extent) * per_row


def quad_digits_needed(v: ComplexRounded, digits: int) -> int:
    """Digits of the quadrature (relative to |G|) that confirm both components to ``digits``
    significant digits of their own."""
    re_, im = abs(v.center[0]), abs(v.center[1])
    big = max(re_, im)
    small = min(x for x in (re_, im) if x) if (re_ or im) else big
    return digits + max(0, math.ceil(math.log10(big / small))) + 3 if small else digits + 3
