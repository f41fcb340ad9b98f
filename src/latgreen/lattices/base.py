"""What every lattice provides: geometry, validation and symmetry reduction.

A lattice knows its sites (integer coordinate tuples, conventions in the README), its
nearest-neighbour offsets, its coordination number z, its band (the spectrum of the hopping
operator with amplitude +1) and its point group, used to map a site to a canonical
representative.  It knows nothing of quantities or methods.
"""

from __future__ import annotations

import math
import operator
import re
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
    def site(self, coords: object) -> Site:
        """Validate user coordinates and return them as a tuple of ints.

        ``coords`` is a sequence (tuple, list, 1-D numpy array) of integers (Python or numpy
        integers; bool refused) or of strings of decimal integers (the command line's
        arguments, ASCII digits only).  A string, bytes, a mapping, a set, an iterator, a
        number or nested sequences are refused with a message, never split or guessed at.
        """
        items = site_items(coords, self.name)
        if len(items) != len(self.coordinate_names):
            raise InputError(
                f"{self.name} sites have {len(self.coordinate_names)} coordinates "
                f"({', '.join(self.coordinate_names)}), got {len(items)}"
            )
        out = []
        for name, c in zip(self.coordinate_names, items, strict=True):
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
        """Euclidean distance from the origin in units of the bond length (for display;
        inf beyond float64's range rather than an OverflowError)."""
        return float_sqrt(sum(c * c for c in site))


def float_sqrt(x: int | Fraction) -> float:
    """sqrt of a non-negative exact number as a float, inf where it exceeds float64's range
    (math.sqrt(int) raises OverflowError from 2^1024 on).

    >>> float_sqrt(10**400), float_sqrt(10**1000), float_sqrt(Fraction(9, 4))
    (1e+200, inf, 1.5)
    """
    if x <= 0:
        return 0.0
    try:
        return math.sqrt(x)
    except OverflowError:
        root = math.isqrt(int(x))  # the fraction's part below 1 does not show in a float
        return float(root) if root.bit_length() <= 1023 else math.inf


MAX_COORD_CHARS = 1000  # a coordinate written out: far beyond any site a method reaches
_INT_TEXT = re.compile(r"[+-]?[0-9]+", re.ASCII)


def short_repr(value: object) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def site_items(coords: object, lattice: str) -> list[object]:
    """The coordinates of a site as a list, refusing what is not a finite sequence of
    scalars (strings are not split into characters, iterators are not consumed)."""
    if isinstance(coords, str | bytes | bytearray):
        raise InputError(f"a {lattice} site is a sequence of integer coordinates such as "
                         f"(3, 1), not the {type(coords).__name__} {short_repr(coords)}")
    if isinstance(coords, Sequence):
        return list(coords)
    if type(coords).__module__.startswith("numpy") and getattr(coords, "ndim", None) == 1:
        return list(coords)  # type: ignore[call-overload]
    raise InputError(f"a {lattice} site is a tuple or list of integer coordinates such as "
                     f"(3, 1), got {type(coords).__name__} {short_repr(coords)}")


def _as_int(name: str, value: object) -> int:
    bad = f"coordinate {name} must be an integer, got {short_repr(value)}"
    if isinstance(value, bool):
        raise InputError(bad)
    if isinstance(value, int):
        return value
    if isinstance(value, str):
        text = value.strip()
        if len(text) > MAX_COORD_CHARS:
            raise InputError(f"coordinate {name} has {len(text)} characters: at most "
                             f"{MAX_COORD_CHARS}")
        if not _INT_TEXT.fullmatch(text):
            raise InputError(bad + " (decimal digits 0-9 with an optional sign)")
        return int(text, 10)
    try:
        return operator.index(value)  # type: ignore[arg-type]
    except TypeError:
        raise InputError(bad) from None
