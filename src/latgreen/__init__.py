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


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        from . import quantities

        return getattr(quantities, name)
    raise AttributeError(f"module 'latgreen' has no attribute {name!r}")


__all__ = ["MAX_DIGITS", "GreenResult", "InputError", "LatgreenError", "PrecisionError",
           "Result", "VerificationError", "__version__", "dos", "green", "local_dos",
           "resistance", "return_probability"]
