"""Registry of lattices.  Adding a lattice: a module here and one line in ``LATTICES``."""

from __future__ import annotations

from ..errors import InputError
from .base import Lattice, Site, short_repr
from .cubic import BCC, FCC, SC
from .honeycomb import HONEYCOMB
from .square import SQUARE
from .triangular import TRIANGULAR

LATTICES: dict[str, Lattice] = {
    lat.name: lat for lat in (SQUARE, TRIANGULAR, HONEYCOMB, SC, BCC, FCC)
}


def get_lattice(name: object) -> Lattice:
    """Look a lattice up by name, with a helpful error (a name that is not a string, e.g. a
    list, is refused the same way, never a TypeError).

    >>> get_lattice("square").z
    4
    """
    if not isinstance(name, str):
        raise InputError(f"a lattice is named by a string, one of: {', '.join(sorted(LATTICES))}; "
                         f"got {type(name).__name__} {short_repr(name)}")
    try:
        return LATTICES[name]
    except KeyError:
        pass
    raise InputError(f"unknown lattice {short_repr(name)}; "
                     f"available: {', '.join(sorted(LATTICES))}")


__all__ = ["LATTICES", "Lattice", "Site", "get_lattice"]
