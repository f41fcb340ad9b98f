"""The honeycomb lattice (bond length 1): site (m, n, s) in cell m*a1 + n*a2,
a1 = (sqrt(3), 0), a2 = (sqrt(3)/2, 3/2); s = 0 is the A site at m*a1 + n*a2, s = 1 the B site
at m*a1 + n*a2 + (a1 + a2)/3.  The neighbours of A(0,0) are B(0,0), B(-1,0), B(0,-1); those of
B(m,n) are A(m,n), A(m+1,n), A(m,n+1).  z = 3, band [-3, 3].

Positions are handled in "thirds": site (m, n, s) sits at (u a1 + v a2)/3 with
(u, v) = (3m + s, 3n + s); hexagon centres are the class (2, 2) mod 3.

Symmetry of R(A(0,0), x): the stabiliser of A(0,0) in the point group about the hexagon centre
(u, v) = (-1, -1), i.e. the six matrices g of the triangular group with g(1, 1) = (1, 1) mod 3
(C3v; its mirrors run along the three bonds).  On the A sublattice also x -> -x (reciprocity
R(0, x) = R(x, 0) plus a translation), so A sites have the full 12-element triangular symmetry.

Canonical sites: A(m, n) with 0 <= n <= m; B(m, n) with u >= v >= -u/2 in thirds (the wedge
between the mirror lines at -30 and +30 degrees), i.e. -(m + 1)/2 <= n <= m.  The extent of a
site is m of its canonical representative (then |n| <= m on both sublattices).
"""

from __future__ import annotations

from collections.abc import Iterator
from fractions import Fraction

from ..errors import InputError
from .base import Lattice, Site, float_sqrt
from .triangular import POINT_GROUP, apply, canonical_pair

_STAB = tuple(g for g in POINT_GROUP
              if ((g[0][0] + g[0][1] - 1) % 3, (g[1][0] + g[1][1] - 1) % 3) == (0, 0))


def thirds(m: int, n: int, s: int) -> tuple[int, int]:
    """Position in units of (a1/3, a2/3)."""
    return 3 * m + s, 3 * n + s


def from_thirds(u: int, v: int) -> Site:
    """Inverse of :func:`thirds`; a hexagon centre is not a site."""
    s = u % 3
    if s not in (0, 1) or (v - u) % 3:
        raise InputError(f"position {(u, v)} (in thirds of a1, a2) is not a honeycomb site")
    return ((u - s) // 3, (v - s) // 3, s)


def distance2(site: Site) -> Fraction:
    """Squared distance from A(0,0): (u^2 + u v + v^2)/3 with (u, v) in thirds.

    >>> distance2((0, 0, 1)), distance2((1, 0, 0))
    (Fraction(1, 1), Fraction(3, 1))
    """
    u, v = thirds(*site)
    return Fraction(u * u + u * v + v * v, 3)


class Honeycomb(Lattice):
    def check_on_lattice(self, site: Site) -> None:
        if site[2] not in (0, 1):
            raise InputError(f"honeycomb sublattice index s must be 0 (A site) or 1 (B site), "
                             f"got {site[2]}")

    def canonical(self, site: Site) -> Site:
        """The representative of ``site`` for the resistance from A(0,0).

        >>> HONEYCOMB.canonical((-1, 0, 1)), HONEYCOMB.canonical((0, -1, 1))
        ((0, 0, 1), (0, 0, 1))
        >>> HONEYCOMB.canonical((-1, 1, 0)), HONEYCOMB.canonical((-2, 0, 1))
        ((1, 0, 0), (1, 0, 1))
        """
        m, n, s = site
        if s == 0:
            p, q = canonical_pair(m, n)
            return (p, q, 0)
        u, v = thirds(m, n, s)
        for g in _STAB:
            x, y = apply(g, u, v)
            if x >= y and x + 2 * y >= 0:
                return from_thirds(x, y)
        raise AssertionError("unreachable: every orbit meets the wedge")  # pragma: no cover

    def region(self, extent: int) -> Iterator[Site]:
        """Canonical sites of extent <= ``extent``, sorted by (m, n, s).

        >>> list(HONEYCOMB.region(1))
        [(0, 0, 0), (0, 0, 1), (1, -1, 1), (1, 0, 0), (1, 0, 1), (1, 1, 0), (1, 1, 1)]
        """
        for m in range(extent + 1):
            yield from column_sites(m)

    def region_size(self, extent: int) -> int:
        # per m: m + 1 A sites and m + 1 + (m + 1) // 2 B sites
        return sum(2 * m + 2 + (m + 1) // 2 for m in range(extent + 1))

    def distance(self, site: Site) -> float:
        return float_sqrt(distance2(site))


def column_sites(m: int) -> list[Site]:
    """The canonical sites with first coordinate m, sorted by (n, s)."""
    out: list[Site] = []
    for n in range(-((m + 1) // 2), m + 1):
        if n >= 0:
            out.append((m, n, 0))
        out.append((m, n, 1))
    return out


HONEYCOMB = Honeycomb(
    name="honeycomb",
    dim=2,
    coordinate_names=("m", "n", "s"),
    # the neighbours of A(0,0) (those of a B site are the opposite offsets)
    neighbours=((0, 0, 1), (-1, 0, 1), (0, -1, 1)),
    band=(Fraction(-3), Fraction(3)),
    description="honeycomb lattice, bond length 1: site (m, n, s) in cell m*a1 + n*a2, "
                "a1 = (sqrt(3), 0), a2 = (sqrt(3)/2, 3/2); s = 0 the A site at the cell "
                "origin, s = 1 the B site at (a1 + a2)/3",
)
