"""latgreen: verified high-precision tables of lattice Green's functions and resistances.

Public API::

    >>> import latgreen
    >>> r = latgreen.resistance("square", (1, 1), digits=20)
    >>> r.value, str(r.exact)
    ('0.63661977236758134308', '2/pi')

The numerical modules are imported on first use, so that ``import latgreen`` (and the
command line's start, which must answer Ctrl-C cleanly from its first instant) stays cheap.
"""

from typing import Any

from ._version import __version__
from .errors import InputError, LatgreenError, PrecisionError, VerificationError

_LAZY = {"MAX_DIGITS", "GreenResult", "Result", "dos", "green", "local_dos", "resistance",
         "return_probability"}


_TABLES = {"read_table", "Table", "NotInTable"}


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        from . import quantities

        return getattr(quantities, name)
    if name in _TABLES:
        from .tables import read

        return getattr(read, name)
    raise AttributeError(f"module 'latgreen' has no attribute {name!r}")


def table_id(lattice: str, quantity: str, energy: str | None = None) -> str:
    """The id of a table (its datapackage ``name`` and its directory in a catalogue): the
    lattice and the quantity, and for a green table its energy (an exact energy as a string,
    as for ``--energy``), with ``m`` for a minus sign, ``p`` for the plus before the
    imaginary part and ``_`` for a fraction bar.  The one-row-per-lattice table of return
    probabilities has the lattice ``cubic``.

    >>> table_id("square", "resistance"), table_id("cubic", "return-probability")
    ('square-resistance', 'cubic-return-probability')
    >>> [table_id("square", "green", e) for e in ("4.5", "-4.5", "1.5+0.5j", "7/3")]
    ['square-green-e4.5', 'square-green-em4.5', 'square-green-e1.5p0.5j', 'square-green-e7_3']
    """
    from .energy import parse_energy
    from .lattices import get_lattice
    from .quantities import QUANTITIES
    from .tables.export import table_id as _table_id

    if quantity == "return-probability":
        if lattice != "cubic" or energy is not None:
            raise InputError("the return probabilities are one table, lattice 'cubic', "
                             "without an energy")
        return _table_id(lattice, quantity)
    lat = get_lattice(lattice)
    if quantity not in QUANTITIES:
        raise InputError(f"unknown quantity {quantity!r}; available: "
                         f"{', '.join((*QUANTITIES, 'return-probability'))}")
    if (quantity == "green") != (energy is not None):
        raise InputError("a green table has an energy and no other table has one"
                         if quantity == "green" or energy is None else
                         f"a {quantity} table has no energy")
    return _table_id(lat.name, quantity, None if energy is None else
                     parse_energy(energy, lat.name))


__all__ = ["MAX_DIGITS", "GreenResult", "InputError", "LatgreenError", "NotInTable",
           "PrecisionError", "Result", "Table", "VerificationError", "__version__", "dos",
           "green", "local_dos", "read_table", "resistance", "return_probability",
           "table_id"]
