"""Registry of lattices.  Adding a lattice: a module here and one line in ``LATTICES``."""

from __future__ import annotations

from ..errors import InputError
from .base import Lattice, Site
from .cubic import BCC, FCC, SC
from .honeycomb import HONEYCOMB
from .square import SQUARE
from .triangular import TRIANGULAR

LATTICES: dict[str, Lattice] = {
    lat.name: lat for lat in (SQUARE, TRIANGULAR, HONEYCOMB, SC, BCC, FCC)
}


def get_lattice(name: str) -> Lattice:
    """Look a lattice up by name, with a helpful error.

    >>> get_lattice("square").z
    4
    """
    try:
        return LATTICES[name]
    except KeyError:
        pass
    raise InputError(f"unknown lattice {name!r}; available: {', '.join(sorted(LATTICES))}")


__all__ = ["LATTICES", "Lattice", "Site", "get_lattice"]
