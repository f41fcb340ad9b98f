"""What every lattice provides: geometry, validation and symmetry reduction.

A lattice knows its sites (integer coordinate tuples, conventions in the README), its
nearest-neighbour offsets, its coordination number z, its band (the spectrum of the hopping
operator with amplitude +1) and its point group, used to map a site to a canonical
representative.  It knows nothing of quantities or methods.
"""

from __future__ import annotations

import math
import operator
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction

from ..errors import InputError

Site = tuple[int, ...]


@dataclass(frozen=True)
class Lattice:
    """Geometry of one lattice.  Subclasses override :meth:`canonical` and :meth:`region`."""

    name: str
    dim: int
    coordinate_names: tuple[str, ...]
    neighbours: tuple[Site, ...]
    band: tuple[Fraction, Fraction]
    description: str

    @property
    def z(self) -> int:
        """Coordination number."""
        return len(self.neighbours)

    # -- validation ---------------------------------------------------------------------
    def site(self, coords: Sequence[object]) -> Site:
        """Validate user coordinates and return them as a tuple of ints.

        Accepts ints and strings of integers; refuses anything else with a message.
        """
        if len(coords) != len(self.coordinate_names):
            raise InputError(
                f"{self.name} sites have {len(self.coordinate_names)} coordinates "
                f"({', '.join(self.coordinate_names)}), got {len(coords)}"
            )
        out = []
        for name, c in zip(self.coordinate_names, coords, strict=True):
            out.append(_as_int(name, c))
        site = tuple(out)
        self.check_on_lattice(site)
        return site

    def check_on_lattice(self, site: Site) -> None:
        """Raise :class:`InputError` if ``site`` is not a lattice point (default: all are)."""

    # -- symmetry -----------------------------------------------------------------------
    def canonical(self, site: Site) -> Site:
        """The representative of ``site`` in the fundamental region of the point group."""
        raise NotImplementedError

    def region(self, extent: int) -> Iterator[Site]:
        """Canonical sites up to ``extent``, in table order (sorted)."""
        raise NotImplementedError

    def region_size(self, extent: int) -> int:
        return sum(1 for _ in self.region(extent))

    def distance(self, site: Site) -> float:
        """Euclidean distance from the origin in units of the bond length (for display)."""
        return math.sqrt(sum(c * c for c in site))


def _as_int(name: str, value: object) -> int:
    if isinstance(value, bool):
        raise InputError(f"coordinate {name} must be an integer, got {value!r}")
    if isinstance(value, int):
        return value
    if isinstance(value, str):
        text = value.strip()
        try:
            return int(text, 10)
        except ValueError:
            raise InputError(f"coordinate {name} must be an integer, got {value!r}") from None
    try:
        return operator.index(value)  # type: ignore[arg-type]
    except TypeError:
        raise InputError(f"coordinate {name} must be an integer, got {value!r}") from None
