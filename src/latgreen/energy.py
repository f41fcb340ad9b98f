"""Energies: exact complex numbers E = re + i im with rational parts, parsed from text.

An energy is given as a string such as ``"4.5"``, ``"9/2"``, ``"-1.25"``, ``"1.5+0.5j"``,
``"0.5j"`` (``i`` is accepted for ``j``; blanks and one pair of enclosing parentheses are
ignored).  Decimals are exact: ``"4.1"`` is 41/10 (through ``fractions.Fraction(str)``), never
the binary float nearest to it.  Binary floats themselves are refused.

Conventions (DESIGN.md): G(E; r) = <0|(E - H)^-1|r>, analytic off the band; for a real E inside
the band the retarded limit E + i0 is taken, so only Im E >= 0 is accepted (for Im E < 0 use
G(conj E) = conj G(E)).  The real energies where G(E; 0) is infinite depend on the lattice
(``SINGULAR``) and are refused with a one-line message saying why:

* square: E = +-4 (band edge): G(E; 0, 0) diverges logarithmically; the finite band-edge
  limit 2[G(0) - G(r)] is the ``resistance`` quantity; E = 0 (band centre): the density of
  states diverges logarithmically, so Im G(0 + i0; 0, 0) is infinite;
* triangular: E = 6 (upper band edge, resistance as for the square), E = -3 (lower band edge,
  Re G diverges logarithmically), E = -2 (van Hove point: the density of states diverges
  logarithmically);
* honeycomb: E = +-3 (band edges), E = +-1 (van Hove points).  Its Dirac point E = 0 is
  accepted: G(0; r) is the finite limit E -> 0 (0 on the A sites, p + q sqrt(3)/pi on the B
  sites; ``exact/trihex_green.py``), the density of states is 0 there.
* bcc: E = 0 (band centre): the density of states diverges (like log^2|E|), so
  Im G(0 + i0; 0) is infinite;
* fcc: E = -4 (lower band edge): the density of states diverges logarithmically.

The sc lattice has no such point: G(E; 0) is finite on the whole real axis (at the band
edges +-6 it is Watson's integral).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from fractions import Fraction

from .errors import InputError

MAX_ENERGY_CHARS = 400
MAX_EXPONENT = 300
_DEC = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_NUM = rf"(?:[0-9]+/[0-9]+|{_DEC})"
_RE_REAL = re.compile(rf"^([+-]?{_NUM})$")
_RE_IMAG = re.compile(rf"^([+-]?)({_NUM})?[ji]$")
_RE_CPLX = re.compile(rf"^([+-]?{_NUM})([+-])({_NUM})?[ji]$")


def _text(x: Fraction) -> str:
    """A rational as a terminating decimal when it is one, else p/q.

    >>> _text(Fraction(9, 2)), _text(Fraction(-7, 3)), _text(Fraction(3)), _text(Fraction(1, 1000))
    ('4.5', '-7/3', '3', '0.001')
    """
    d = x.denominator
    for p in (2, 5):
        while d % p == 0:
            d //= p
    if d != 1:
        return f"{x.numerator}/{x.denominator}"
    if x.denominator == 1:
        return str(x.numerator)
    k = 0
    while (x * 10**k).denominator != 1:
        k += 1
    n = abs(x.numerator * 10**k // x.denominator)
    s = str(n).rjust(k + 1, "0")
    return ("-" if x < 0 else "") + s[:-k] + "." + s[-k:]


@dataclass(frozen=True)
class Energy:
    """An exact energy re + i im (Fractions), Im E >= 0."""

    re: Fraction
    im: Fraction

    @property
    def is_real(self) -> bool:
        return self.im == 0

    def __str__(self) -> str:
        """Canonical text: ``4.5``, ``-7/3``, ``1.5+0.5j``, ``0.5j``.

        >>> str(parse_energy(" (1.50 + 0.5j) ")), str(parse_energy("14/6"))
        ('1.5+0.5j', '7/3')
        """
        if self.im == 0:
            return _text(self.re)
        im = _text(self.im)
        if self.re == 0:
            return f"{im}j"
        return f"{_text(self.re)}+{im}j"

    def slug(self) -> str:
        """The energy inside file and table names, characters [a-z0-9._] only: ``e`` then the
        canonical text with ``m`` for a minus sign, ``p`` for the plus before the imaginary
        part and ``_`` for a fraction bar.

        >>> [parse_energy(t).slug() for t in ("9/2", "-4.5", "1.5+0.5j", "-7/3+1/2j")]
        ['e4.5', 'em4.5', 'e1.5p0.5j', 'em7_3p0.5j']
        """
        return "e" + str(self).replace("-", "m").replace("+", "p").replace("/", "_")


_EDGE = ("on the band edge {x} where G(E;0) diverges (logarithmically); the finite band-edge "
         "limit 2[G(0)-G(r)] is the 'resistance' quantity (latgreen resistance {lat} ...)")
_LOWER = "on the lower band edge {x} where Re G(E;0) diverges logarithmically"
_HOVE = ("the van Hove point E = {x} where the density of states diverges logarithmically and "
         "Im G(E+i0;0) is infinite")
# lattice -> {real energy: why it is refused}
SINGULAR: dict[str, dict[Fraction, str]] = {
    "square": {Fraction(4): "on the band edge +-4 where G(E;0,0) diverges (logarithmically); "
                            "the finite band-edge limit 2[G(0)-G(r)] is the 'resistance' "
                            "quantity (latgreen resistance square M N)",
               Fraction(0): "the band centre E = 0 where the density of states diverges "
                            "logarithmically and Im G(E+i0;0,0) is infinite"},
    "triangular": {Fraction(6): _EDGE.format(x=6, lat="triangular"),
                   Fraction(-3): _LOWER.format(x=-3),
                   Fraction(-2): _HOVE.format(x=-2)},
    "honeycomb": {Fraction(3): _EDGE.format(x="+-3", lat="honeycomb"),
                  Fraction(1): _HOVE.format(x="+-1")},
    "bcc": {Fraction(0): "the bcc band centre E = 0 where the density of states diverges "
                         "(like log^2|E|) and Im G(E+i0;0) is infinite"},
    "fcc": {Fraction(-4): "the fcc lower band edge E = -4 where the density of states "
                          "diverges logarithmically and G(E;0) is infinite"},
}
# symmetric spectra: a refused E refuses -E too
_SYMMETRIC = {"square", "honeycomb"}


# the real energies where G(E; r) is not analytic (band edges, van Hove points, band centres,
# the honeycomb's Dirac point): an energy equal to one is refused or taken as a limit above;
# one closer to it than MIN_DISTANCE is refused (the methods' cost grows without bound as
# the singularity is approached, and the quadratures no longer separate the two sides)
SPECIAL: dict[str, tuple[Fraction, ...]] = {
    lat: tuple(Fraction(x) for x in pts) for lat, pts in {
        "square": (-4, 0, 4), "triangular": (-3, -2, 6), "honeycomb": (-3, -1, 0, 1, 3),
        "sc": (-6, -2, 0, 2, 6), "bcc": (-8, 0, 8), "fcc": (-4, 0, 12)}.items()}
MIN_DISTANCE_EXP = 8  # |E - special point| >= 10^-8
MAX_ABS_ENERGY_EXP = 6  # |E| <= 10^6
MAX_ENERGY_DIGITS = MAX_ENERGY_CHARS  # decimal digits of a numerator or denominator


def _sqrt_sci(x: Fraction) -> str:
    """sqrt(x) of a positive rational, rounded to two digits in scientific notation (for
    messages; no float overflow or underflow at any size).

    >>> _sqrt_sci(Fraction(1, 10**100)), _sqrt_sci(Fraction(9, 7)), _sqrt_sci(Fraction(10**600))
    ('1e-50', '1.1e0', '1e300')
    """
    lg = (math.log10(x.numerator) - math.log10(x.denominator)) / 2
    e = math.floor(lg)
    lead = round(10 ** (lg - e), 1)
    if lead >= 10:
        lead, e = 1.0, e + 1
    return f"{lead:g}e{e}"


def check_range(er: Fraction, ei: Fraction, text: str, lattice: str) -> None:
    """Refuse energies the methods cannot serve within seconds: too many digits, |E| above
    10^MAX_ABS_ENERGY_EXP, or within 10^-MIN_DISTANCE_EXP of a singular point (SPECIAL)
    without being on it."""
    shown = text if len(text) <= 40 else text[:37] + "..."
    for x in (er, ei):
        if max(len(str(abs(x.numerator))), len(str(x.denominator))) > MAX_ENERGY_DIGITS:
            raise InputError(f"energy {shown!r} is too long: numerators and denominators of "
                             f"at most {MAX_ENERGY_DIGITS} digits")
    size2 = er * er + ei * ei
    if size2 > Fraction(10) ** (2 * MAX_ABS_ENERGY_EXP):
        raise InputError(f"energy {shown!r}: |E| above the limit 1e{MAX_ABS_ENERGY_EXP} (there "
                         "G(E; r) is the first terms of its 1/E series, and the methods "
                         "lose their precision)")
    limit = Fraction(1, 10**MIN_DISTANCE_EXP)
    for p in SPECIAL.get(lattice, ()):
        d2 = (er - p) ** 2 + ei * ei
        if 0 < d2 < limit * limit:
            dist = _sqrt_sci(d2)
            raise InputError(
                f"energy {shown!r} is too close to the singular energy E = {p} of the "
                f"{lattice} lattice for the methods to separate: distance {dist}; the limit is "
                f"1e-{MIN_DISTANCE_EXP} (E = {p} itself is "
                + ("refused" if p in _refused(lattice) else "allowed") + ")")


def _refused(lattice: str) -> set[Fraction]:
    bad = set(SINGULAR.get(lattice, {}))
    if lattice in _SYMMETRIC:
        bad |= {-x for x in bad}
    return bad


def check_energy(er: Fraction, ei: Fraction, text: str, lattice: str = "square",
                 quantity: str = "green") -> Energy:
    """The refusals: the lower half plane, and the lattice's singular real energies
    (``SINGULAR``; the honeycomb's Dirac point E = 0 is taken as the limit E -> 0)."""
    if ei < 0:
        raise InputError(
            f"energy {text!r} has a negative imaginary part: latgreen takes the retarded "
            "branch E + i0 (Im E >= 0); use the complex conjugate, G(conj E) = conj G(E)")
    if ei == 0:
        bad = SINGULAR.get(lattice, {})
        key = abs(er) if lattice in _SYMMETRIC else er
        why = bad.get(key)
        if why is not None:
            raise InputError(f"energy {text!r} is {why}")
    check_range(er, ei, text, lattice)
    return Energy(er, ei)


def parse_energy(text: object, lattice: str = "square", quantity: str = "green") -> Energy:
    """Exact energy from a string; ints, Fractions and Energy objects pass through checked
    (against ``lattice``'s singular energies, see :func:`check_energy`).

    >>> parse_energy("9/2"), str(parse_energy("0.5j"))
    (Energy(re=Fraction(9, 2), im=Fraction(0, 1)), '0.5j')
    >>> parse_energy("1.5-0.5j")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    latgreen.errors.InputError: energy '1.5-0.5j' has a negative imaginary part: ...
    """
    if isinstance(text, Energy):
        return check_energy(text.re, text.im, str(text), lattice, quantity)
    if isinstance(text, bool | float | complex):
        raise InputError(f"energy {text!r} is a binary float: pass a string ('4.1') or a "
                         "Fraction instead")
    if isinstance(text, int | Fraction):
        return check_energy(Fraction(text), Fraction(0), str(text), lattice, quantity)
    if type(text).__module__.startswith("numpy") and hasattr(text, "__index__"):
        return check_energy(Fraction(int(text)), Fraction(0), str(text), lattice, quantity)
    if not isinstance(text, str):
        raise InputError(f"cannot use {text!r} as an energy: pass a string such as '9/2' or "
                         "'1.5+0.5j'")
    s = "".join(text.split())
    if len(s) >= 2 and s[0] == "(" and s[-1] == ")":
        s = s[1:-1]
    # an exponent such as 1e999999999 would build a huge integer before any check
    if len(s) > MAX_ENERGY_CHARS or any(abs(int(x)) > MAX_EXPONENT
                                        for x in re.findall(r"[eE]([+-]?[0-9]+)", s)):
        raise InputError(f"energy {text[:40]!r}{'...' if len(text) > 40 else ''} is too long: "
                         f"at most {MAX_ENERGY_CHARS} characters and exponents up to "
                         f"+-{MAX_EXPONENT}")
    try:
        if mt := _RE_REAL.match(s):
            er, ei = Fraction(mt.group(1)), Fraction(0)
        elif mt := _RE_IMAG.match(s):
            er = Fraction(0)
            ei = Fraction(mt.group(2) or "1") * (-1 if mt.group(1) == "-" else 1)
        elif mt := _RE_CPLX.match(s):
            er = Fraction(mt.group(1))
            ei = Fraction(mt.group(3) or "1") * (-1 if mt.group(2) == "-" else 1)
        else:
            raise ValueError
    except (ValueError, ZeroDivisionError):
        raise InputError(f"cannot parse energy {text!r}: expected e.g. '4.5', '9/2', "
                         "'1.5+0.5j', '0.5j'") from None
    return check_energy(er, ei, text, lattice, quantity)


MAX_GRID_POINTS = 10_000  # a dos table's rows (each a few seconds at 30+ digits)
_COUNT = re.compile(r"[+-]?[0-9]+", re.ASCII)


def parse_energy_grid(text: object, lattice: str = "square", quantity: str = "dos"
                      ) -> list[Energy]:
    """``A:B:COUNT`` -> COUNT equally spaced exact real energies from A to B inclusive,
    A < B and 2 <= COUNT <= MAX_GRID_POINTS; ``A:A:1`` (COUNT = 1, A = B) is the single
    energy A.  Every point goes through the energy checks, so a grid that hits 0 or +-4 is
    refused with the offending point named.  A grid with A = B and COUNT > 1 (which would
    repeat one energy), B < A, or a COUNT that is not a plain positive integer is refused.

    >>> [str(e) for e in parse_energy_grid("0.5:2:4")]
    ['0.5', '1', '1.5', '2']
    >>> parse_energy_grid("1:1:3")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    latgreen.errors.InputError: energy grid '1:1:3': A = B with COUNT = 3 ...
    """
    parts = text.split(":") if isinstance(text, str) else []
    shown = text if not isinstance(text, str) or len(text) <= 60 else text[:57] + "..."
    if len(parts) != 3:
        raise InputError(f"cannot parse energy grid {shown!r}: expected A:B:COUNT, e.g. "
                         "'0.5:3.5:7'")
    ct = parts[2].strip()
    if not _COUNT.fullmatch(ct) or len(ct) > 12:
        raise InputError(f"energy grid {shown!r}: COUNT must be a whole number from 1 to "
                         f"{MAX_GRID_POINTS}, got {ct[:20]!r}")
    count = int(ct)
    if count < 1 or count > MAX_GRID_POINTS:
        raise InputError(f"energy grid {shown!r}: COUNT must be between 1 and "
                         f"{MAX_GRID_POINTS} (the rows of one table), got {count}")
    a, b = parse_energy(parts[0], lattice, quantity), parse_energy(parts[1], lattice, quantity)
    if not (a.is_real and b.is_real):
        raise InputError(f"energy grid {shown!r}: the end points must be real")
    if count == 1:
        if a.re != b.re:
            raise InputError(f"energy grid {shown!r}: COUNT = 1 is the single energy A:A:1; "
                             "from A to B give COUNT >= 2")
        return [a]
    if a.re == b.re:
        raise InputError(f"energy grid {shown!r}: A = B with COUNT = {count} would repeat "
                         f"one energy {count} times; for a single energy write "
                         f"{parts[0].strip()}:{parts[0].strip()}:1")
    if b.re < a.re:
        raise InputError(f"energy grid {shown!r}: B < A; the grid runs upwards, from A to B "
                         f"(write {parts[1].strip()}:{parts[0].strip()}:{count})")
    step = (b.re - a.re) / (count - 1)
    out = []
    for k in range(count):
        x = a.re + k * step
        out.append(check_energy(x, Fraction(0), f"{_text(x)} (point {k} of the grid {shown})",
                                lattice, quantity))
    return out
