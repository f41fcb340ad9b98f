"""Correct rounding of complex balls, component by component.

Decision (documented in the README): a complex value is printed as two real numbers, each
correctly rounded to D *significant digits of its own* (not D digits relative to |G|), each
with its own rigorous error bound (half a unit in its last place).  A component known to be
exactly 0 by a symmetry (Im G for real E outside the band; one component of G at a purely
imaginary E) is printed as ``0`` with error bound ``0``; the caller states which components
are exactly 0 and the ball is checked to contain 0 there.  Any other component must be
certified to D digits (the precision is raised until its ball rounds to one D-digit decimal),
so digits the ball does not guarantee are never printed: per-component digits cost extra
precision when one component is much smaller than the other, which is the honest price.

A ball component x = mid +- rad (python-flint arb, both dyadic) is turned into the integer
interval [lo, hi] / 2^k exactly and rounded by :func:`latgreen.rounding.round_interval`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

from flint import acb, arb

from ..errors import PrecisionError
from ..rounding import ZERO, Rounded, round_interval


def arb_interval(x: arb) -> tuple[int, int, int, Fraction]:
    """(lo, hi, den, centre): x is contained in [lo/den, hi/den], den a power of two, and
    centre is the exact midpoint of the ball."""
    mm, me = (int(v) for v in x.mid().man_exp())
    rm, re_ = (int(v) for v in x.rad().man_exp())
    e0 = min(me, re_, 0)
    mid = mm << (me - e0)
    rad = rm << (re_ - e0)
    den = 1 << -e0
    return mid - rad, mid + rad, den, Fraction(mid, den)


def round_arb(x: arb, digits: int) -> tuple[Rounded | None, Fraction]:
    """The D-digit rounding shared by every point of the ball (None if undecided) and the
    ball's exact centre."""
    lo, hi, den, c = arb_interval(x)
    return round_interval(lo, hi, den, digits), c


@dataclass(frozen=True)
class ComplexRounded:
    """re + i im, each correctly rounded to ``digits`` significant digits (or exactly 0)."""

    re: Rounded
    im: Rounded
    center: tuple[Fraction, Fraction]  # exact centre of the certifying ball
    bits: int  # working precision that certified it

    def text(self) -> str:
        """Python/mpmath complex syntax ``RE+IMj`` / ``RE-IMj`` (``complex()`` parses it).

        >>> from latgreen.rounding import Rounded
        >>> ComplexRounded(Rounded(1, "31", -1), Rounded(-1, "25", -2), (0, 0), 0).text()
        '0.31-0.025j'
        """
        im = str(self.im)
        return f"{self.re}{'' if im.startswith('-') else '+'}{im}j"

    def bounds(self) -> tuple[str, str]:
        return self.re.half_ulp(), self.im.half_ulp()


def certify_complex(build: Callable[[int], acb], start_bits: int, digits: int,
                    zero: tuple[bool, bool], what: str) -> ComplexRounded:
    """Raise the precision from ``start_bits`` until each component of ``build(bits)``
    (a ball) rounds to a single D-digit decimal, or is exactly 0 by symmetry (``zero``).
    Gives up with PrecisionError at 8 * start_bits + 4096 bits."""
    cap = 8 * start_bits + 4096
    bits = start_bits
    while True:
        v = build(bits)
        parts: list[Rounded | None] = []
        centre: list[Fraction] = []
        for comp, z in ((v.real, zero[0]), (v.imag, zero[1])):
            if z:
                if not comp.contains(0):  # pragma: no cover - a symmetry or a ball is wrong
                    raise AssertionError(f"{what}: a component that is 0 by symmetry is not")
                parts.append(ZERO)
                centre.append(Fraction(0))
            else:
                r, c = round_arb(comp, digits)
                parts.append(r)
                centre.append(c)
        if parts[0] is not None and parts[1] is not None:
            return ComplexRounded(parts[0], parts[1], (centre[0], centre[1]), bits)
        if bits > cap:
            raise PrecisionError(f"could not certify {digits} digits of {what} (precision "
                                 f"{bits} bits reached; a component may be 0)")
        bits = (bits + bits // 2 + 63) // 64 * 64
