"""latgreen: verified high-precision tables of lattice Green's functions and resistances.

Public API::

    >>> import latgreen
    >>> r = latgreen.resistance("square", (1, 1), digits=20)
    >>> r.value, str(r.exact)
    ('0.63661977236758134308', '2/pi')
"""

from ._version import __version__
from .errors import InputError, LatgreenError, PrecisionError, VerificationError
from .quantities import MAX_DIGITS, Result, resistance

__all__ = ["MAX_DIGITS", "InputError", "LatgreenError", "PrecisionError", "Result",
           "VerificationError", "__version__", "resistance"]
