"""The square lattice: sites (m, n) at m*x + n*y, four neighbours, band [-4, 4]."""

from __future__ import annotations

from collections.abc import Iterator
from fractions import Fraction

from .base import Lattice, Site


class Square(Lattice):
    def canonical(self, site: Site) -> Site:
        """Reduce by the 8-element point group to the octant 0 <= n <= m.

        >>> SQUARE.canonical((-1, 3))
        (3, 1)
        """
        m, n = abs(site[0]), abs(site[1])
        return (m, n) if n <= m else (n, m)

    def region(self, extent: int) -> Iterator[Site]:
        """The octant sites 0 <= n <= m <= extent, sorted by (m, n).

        >>> list(SQUARE.region(2))
        [(0, 0), (1, 0), (1, 1), (2, 0), (2, 1), (2, 2)]
        """
        for m in range(extent + 1):
            for n in range(m + 1):
                yield (m, n)

    def region_size(self, extent: int) -> int:
        return (extent + 1) * (extent + 2) // 2


SQUARE = Square(
    name="square",
    dim=2,
    coordinate_names=("m", "n"),
    neighbours=((1, 0), (-1, 0), (0, 1), (0, -1)),
    band=(Fraction(-4), Fraction(4)),
    description="square lattice, site (m, n) at m*x + n*y, bond length 1",
)
