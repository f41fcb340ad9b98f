"""Exact two-point resistances of the honeycomb lattice from A(0,0): R = a + b*sqrt(3)/pi.

Coordinates (m, n, s), see :mod:`latgreen.lattices.honeycomb`.  Every form is ``derived``:

* A sites.  The hopping operator maps A to B and back; on the A sublattice H^2 = 3 + H_tri:
  each A site has 3 returning two-step paths and reaches each of its 6 A neighbours, which
  form a triangular lattice with the same (m, n) coordinates, by exactly one path (via B(0,0)
  to A(1,0), A(0,1); via B(-1,0) to A(-1,0), A(-1,1); via B(0,-1) to A(0,-1), A(1,-1)).
  Since (E - H)^-1 = (E + H)(E^2 - H^2)^-1 and H has no A -> A matrix elements,
  G_hc(E; A(0,0) -> A(m,n)) = E G_tri(E^2 - 3; m, n).  At the band edge E -> 3, E^2 - 3 -> 6,
  the triangular band edge, so R = 2[G(0) - G(r)] gives

      R(A(m, n)) = 3 R_tri(m, n)            (second neighbours: 3 x 1/3 = 1).

* B sites.  No current enters at B(m, n), so R there is the mean over its three neighbours
  A(m,n), A(m+1,n), A(m,n+1) (lattice equation):

      R(B(m, n)) = R_tri(m, n) + R_tri(m+1, n) + R_tri(m, n+1).

The triangular forms come from :mod:`latgreen.exact.triangular`, over its common denominators.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from fractions import Fraction

from ..lattices.base import Site
from ..lattices.honeycomb import HONEYCOMB, column_sites
from .forms import ExactForm
from .triangular import BASIS, Sector, reduce_column

__all__ = ["BASIS", "Column", "columns", "resistance_form", "tri_sites"]


def tri_sites(site: Site) -> list[tuple[int, int]]:
    """The triangular sites whose resistances make up R at the honeycomb ``site``."""
    m, n, s = site
    return [(m, n)] if s == 0 else [(m, n), (m + 1, n), (m, n + 1)]


def _nums(sec: Sector, site: Site) -> tuple[int, int]:
    parts = [sec.nums(p, q) for p, q in tri_sites(site)]
    a, b = sum(x for x, _ in parts), sum(y for _, y in parts)
    return (3 * a, 3 * b) if site[2] == 0 else (a, b)


@dataclass(frozen=True)
class Column:
    """Canonical sites with first coordinate m and their numerators over ``dens``."""

    m: int
    sites: list[Site]
    nums: list[tuple[int, ...]]
    dens: tuple[int, int]

    def form(self, k: int) -> ExactForm:
        (p, q), (da, db) = self.nums[k], self.dens
        return ExactForm((Fraction(p, da), Fraction(q, db)), BASIS)


def columns(extent: int) -> Iterator[Column]:
    """Columns m = 0..extent in table order (sorted by (m, n, s)).

    >>> [str(c.form(k)) for c in columns(1) for k in range(len(c.sites))][2:]
    ['2*sqrt(3)/pi', '1', '7/3 - 2*sqrt(3)/pi', '6*sqrt(3)/pi - 2', '22*sqrt(3)/pi - 32/3']
    """
    if extent < 0:
        return
    sec = Sector.for_extent(extent + 1)
    for m in range(extent + 1):
        sites = column_sites(m)
        nums, dens = reduce_column([_nums(sec, x) for x in sites], sec.dens)
        yield Column(m, sites, nums, dens)


def forms_at(sites: Iterable[Site]) -> list[ExactForm]:
    """Exact forms at canonical honeycomb sites (one triangular sector for all of them)."""
    sites = [HONEYCOMB.canonical(x) for x in sites]
    sec = Sector.for_sites([t for x in sites for t in tri_sites(x)])
    out = []
    for x in sites:
        p, q = _nums(sec, x)
        out.append(ExactForm((Fraction(p, sec.a.den), Fraction(q, sec.b.den)), BASIS))
    return out


def resistance_form(m: int, n: int, s: int) -> ExactForm:
    """Exact R between A(0,0) and (m, n, s).

    >>> str(resistance_form(0, 0, 1)), str(resistance_form(1, 0, 0))
    ('2/3', '1')
    """
    return forms_at([(m, n, s)])[0]
