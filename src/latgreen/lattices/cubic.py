"""The cubic lattices sc, bcc and fcc: sites (l, m, n), the 48-element cubic point group.

* sc: any integer triple (l, m, n) at l*x + m*y + n*z, bond length 1; neighbours
  (+-1, 0, 0) and permutations, z = 6, band [-6, 6].
* bcc: (l, m, n) in units of *half the cube edge* (as in the classic literature): l, m, n
  all even or all odd; neighbours (+-1, +-1, +-1), z = 8, band [-8, 8].
* fcc: (l, m, n) in units of half the cube edge: l + m + n even; neighbours the
  permutations of (+-1, +-1, 0), z = 12, band [-4, 12].

All three are invariant under sign changes and permutations of the coordinates (the full
cubic group, 48 elements), so the canonical representative of a site is its absolute
coordinates sorted, l >= m >= n >= 0.
"""

from __future__ import annotations

from collections.abc import Iterator
from fractions import Fraction
from itertools import permutations, product

from ..errors import InputError
from .base import Lattice, Site


class Cubic(Lattice):
    def canonical(self, site: Site) -> Site:
        """Reduce by the 48-element cubic group to 0 <= n <= m <= l.

        >>> SC.canonical((-1, 3, -2))
        (3, 2, 1)
        """
        a, b, c = sorted((abs(site[0]), abs(site[1]), abs(site[2])), reverse=True)
        return (a, b, c)

    def _member(self, l: int, m: int, n: int) -> bool:
        return True

    def column(self, l: int, m: int) -> list[Site]:
        """The canonical sites (l, m, n), 0 <= n <= m, of the lattice, by increasing n."""
        return [(l, m, n) for n in range(m + 1) if self._member(l, m, n)]

    def region(self, extent: int) -> Iterator[Site]:
        """The canonical sites 0 <= n <= m <= l <= extent, sorted.

        >>> list(BCC.region(2))
        [(0, 0, 0), (1, 1, 1), (2, 0, 0), (2, 2, 0), (2, 2, 2)]
        """
        for l in range(extent + 1):
            for m in range(l + 1):
                yield from self.column(l, m)

    def region_size(self, extent: int) -> int:
        """Number of canonical sites up to ``extent``.

        >>> [lat.region_size(20) for lat in (SC, BCC, FCC)]  # sc: C(23, 3), common practice
        [1771, 506, 891]
        """
        if extent < 0:
            return 0
        return sum(len(self.column(l, m)) for l in range(extent + 1) for m in range(l + 1))


class SimpleCubic(Cubic):
    pass


class BodyCentredCubic(Cubic):
    def _member(self, l: int, m: int, n: int) -> bool:
        return l % 2 == m % 2 == n % 2

    def check_on_lattice(self, site: Site) -> None:
        if not self._member(*site):
            raise InputError(f"{site} is not a bcc site: in units of half the cube edge, bcc "
                             "coordinates are all even or all odd, e.g. (1, 1, 1) or (2, 0, 0)")


class FaceCentredCubic(Cubic):
    def _member(self, l: int, m: int, n: int) -> bool:
        return (l + m + n) % 2 == 0

    def check_on_lattice(self, site: Site) -> None:
        if not self._member(*site):
            raise InputError(f"{site} is not an fcc site: in units of half the cube edge, fcc "
                             "coordinates have an even sum l + m + n, e.g. (1, 1, 0) or "
                             "(2, 0, 0)")


def _fcc_neighbours() -> tuple[Site, ...]:
    out: set[Site] = set()
    for a, b in product((1, -1), repeat=2):
        out.update(permutations((a, b, 0)))
    return tuple(sorted(out, reverse=True))


COORDS = ("l", "m", "n")

SC = SimpleCubic(
    name="sc", dim=3, coordinate_names=COORDS,
    neighbours=((1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)),
    band=(Fraction(-6), Fraction(6)),
    description="simple cubic lattice, site (l, m, n) at l*x + m*y + n*z, bond length 1",
)
BCC = BodyCentredCubic(
    name="bcc", dim=3, coordinate_names=COORDS,
    neighbours=tuple(product((1, -1), repeat=3)),
    band=(Fraction(-8), Fraction(8)),
    description="body-centred cubic lattice, site (l, m, n) in units of half the cube edge "
                "(l, m, n all even or all odd)",
)
FCC = FaceCentredCubic(
    name="fcc", dim=3, coordinate_names=COORDS,
    neighbours=_fcc_neighbours(),
    band=(Fraction(-4), Fraction(12)),
    description="face-centred cubic lattice, site (l, m, n) in units of half the cube edge "
                "(l + m + n even)",
)
