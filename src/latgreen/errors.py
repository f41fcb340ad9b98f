"""Exceptions of latgreen.

Every problem with what a user asked for is an :class:`InputError`; the command line turns it
into one line on stderr and exit status 2.  Anything else escaping is a bug.
"""


class LatgreenError(Exception):
    """Base class of the errors latgreen raises on purpose."""


class InputError(LatgreenError, ValueError):
    """A request that cannot be served as asked (bad lattice, site, digits, path, ...)."""


class VerificationError(LatgreenError):
    """Two independent methods disagree beyond their stated bounds."""


class PrecisionError(LatgreenError):
    """A method could not reach the requested number of verified digits."""
