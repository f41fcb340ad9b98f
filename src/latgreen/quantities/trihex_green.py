"""Triangular and honeycomb lattices x green (G at one energy).

A provider is bound to one exact energy (``TriangularGreen(E)``, ``HoneycombGreen(E)``): its
batches are the canonical region's columns, evaluated from the exact forms a B0 + b B2 + c
(``exact/trihex_green.py``) with python-flint balls for the basis
(``methods/trihex_green_closed.py``); the independent method is the per-site quadrature of the
reduced integral (``methods/trihex_green_quadrature.py``).  Values are complex: two rounded
components per row (``exact/complex_eval.py``).
"""

from __future__ import annotations

from collections.abc import Iterator
from fractions import Fraction
from typing import Any

import mpmath

from ..energy import Energy
from ..exact import trihex_green as exact_green
from ..exact.square_green import GreenForm
from ..lattices import Lattice, Site
from ..lattices.honeycomb import HONEYCOMB
from ..lattices.triangular import TRIANGULAR
from ..methods.trihex_green_quadrature import hc_quad, tri_quad
from .base import EvaluatedBatch, Provider
from .square_green import _frac, column_of

EXACT_LIMIT = 300  # largest canonical first coordinate of a single exact form

BASIS_TEXT = {
    "triangular": (
        "G00 = G(E;0,0) = 2*elliptic_rf(0, p, q)/(pi*(E + 2)), p = (s - 1)*(s + 3)/(s + 1)**2, "
        "q = (s + 1)*(s - 3)/(s - 1)**2, s = sqrt(E + 3); G20 = G(E;2,0) = "
        "-(E**2 - 4*E - 18)/6*G00 - (E - 6)*(E + 2)*(E + 3)/3*diff(G00, E) - (E + 2)/6 "
        "(principal branches, off the cut; on the cut the E + i0 limits of the README)"),
    "honeycomb": (
        "T00 = G_tri(w;0,0), T20 = G_tri(w;2,0): the triangular lattice's basis functions "
        "G00, G20 (see 'latgreen green triangular') at w = E**2 - 3; on the cut E + i0 "
        "means w + i0*sign(E)"),
}


DIRAC_TEXT = ("the honeycomb's Dirac point E = 0: G(0; r) is the limit E -> 0, 0 on the A sites "
              "and p*sqrt(3)/pi + q (rational p, q) on the B sites, from the triangular forms "
              "at w = -3 (see exact/trihex_green.py)")


def basis_text(lattice: str, E: Energy) -> str:
    """What the names in the exact forms stand for at E."""
    return DIRAC_TEXT if exact_green.is_dirac(lattice, E) else BASIS_TEXT[lattice]


def quad_value(lattice: str, E: Energy, site: Site, dps: int) -> Any:
    """The independent value of G(E; site) (canonical site) to about ``dps`` digits."""
    if lattice == "triangular":
        return tri_quad(E.re, E.im, site[0], site[1], dps)
    return hc_quad(E.re, E.im, site, dps)  # type: ignore[arg-type]


def quad_complex(lattice: str, E: Energy, site: Site, digits: int) -> tuple[Fraction, Fraction]:
    """Both components to ``digits`` digits of their own: a 15-digit scouting pass says how
    much smaller than |G| the smaller non-zero component is, and the quadrature (whose
    accuracy is relative to |G|) is run with that many more digits."""
    zre, zim = exact_green.zero_parts(lattice, E, site)
    with mpmath.workdps(20):
        q = quad_value(lattice, E, site, 15)
        comps = [abs(c) for c, z in ((q.real, zre), (q.imag, zim)) if not z]
        small = min(comps) if comps else abs(q)
        extra = max(0, int(mpmath.ceil(mpmath.log10(abs(q) / small)))) if small else 30
    dps = digits + extra + 3
    with mpmath.workdps(dps + 5):
        q = quad_value(lattice, E, site, dps)
        return _frac(q.real), _frac(q.imag)


class _TrihexGreen(Provider):
    quantity = "green"
    exact_limit = EXACT_LIMIT
    table_limit = 200
    complex_valued = True
    parallel_min_sites = 200  # a row's quadrature costs 0.1-1 s
    max_digits = 200
    primary_text = ("recurrence: exact forms a B0 + b B2 + c (axis recurrence from the "
                    "reduced integral, lattice equation) with Gaussian-rational coefficients, "
                    "evaluated as certified python-flint balls")
    check_text = "quadrature of the reduced one-dimensional integral, every row"

    energy: Energy

    def __init__(self, energy: Energy) -> None:
        self.energy = energy

    @property
    def name(self) -> str:
        return self.lattice.name

    def evaluated_batches(self, extent: int, digits: int, with_exact: bool, start: int = 0,
                          stop: int | None = None) -> Iterator[tuple[int, EvaluatedBatch]]:
        """Column m of the region, every site's exact form evaluated as a certified ball."""
        last = extent if stop is None else min(extent, stop - 1)
        for m, sites, forms in exact_green.columns(self.name, self.energy, last):
            if m < start:
                continue
            vals = [exact_green.evaluate(f, self.name, self.energy, s, digits)
                    for s, f in zip(sites, forms, strict=True)]
            yield m, EvaluatedBatch(sites, column_of(vals, 0),
                                    forms if with_exact else None,  # type: ignore[arg-type]
                                    imag=column_of(vals, 1))

    def exact_form(self, site: Site) -> GreenForm | None:  # type: ignore[override]
        if site[0] > self.exact_limit:
            return None
        return exact_green.green_form(self.name, self.energy, site)

    def quad_sites(self, sites: list[Site], digits: int) -> list:
        return [quad_complex(self.name, self.energy, s, digits) for s in sites]

    def memory_estimate(self, extent: int) -> int:
        # the sector: three sequences over ~ (2 extent)^2 / 2 sites of Gaussian rationals of
        # up to ~ 8 extent bits per part (hc: extent + 1)
        e = extent + 1
        per = 2 * (8 * 2 * e / 8 + 60)
        return int(3 * 2 * e * e * per) + 50_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        per_row = 2 * (2 * digits + 80)
        if with_exact:
            per_row += int(4 * 6 * 1.5 * extent) + 80
        return self.lattice.region_size(extent) * per_row


class TriangularGreen(_TrihexGreen):
    lattice: Lattice = TRIANGULAR

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for m in range(extent + 1):
            yield [(m, n) for n in range(m + 1)]


class HoneycombGreen(_TrihexGreen):
    lattice: Lattice = HONEYCOMB

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        from ..lattices.honeycomb import column_sites

        for m in range(extent + 1):
            yield column_sites(m)
