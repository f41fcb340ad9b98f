"""Far-field expansions of the two-point resistance (bond length 1).

Triangular (derived in NOTES.md, section D):
    R(m,n) = ln(d)/(sqrt3 pi) + A - sqrt3 cos(6 theta) / (90 pi d^4)
             - 5 cos(6 theta) / (84 sqrt3 pi d^6) + O(d^-8),
    A = (gamma + ln 2 + (1/2) ln 3) / (sqrt3 pi) = (gamma + ln(2 sqrt3)) / (sqrt3 pi)
      = 0.33441203139241980204...   (OEIS A355954 lists 0.3344120313924198...),
    d^2 = m^2 + m n + n^2, theta the polar angle of m a1 + n a2.
Honeycomb, from A(0,0) (derived from the triangular expansion, NOTES.md):
    A sites: R = (sqrt3/pi)(ln d + gamma + ln 2) - 3 sqrt3 cos(6 theta)/(10 pi d^4)
                 - 45 sqrt3 cos(6 theta)/(28 pi d^6) + O(d^-8)
    B sites: R = (sqrt3/pi)(ln d + gamma + ln 2) - sqrt3 sin(3 theta)/(3 pi d^3)
                 - 3 sqrt3 cos(6 theta)/(10 pi d^4) + 5 sqrt3 cos(6 theta)/(84 pi d^6)
                 - 21 sqrt3 sin(9 theta)/(2 pi d^7) + O(d^-8)
    (theta measured from a1 at A(0,0)).
"""
from __future__ import annotations

from fractions import Fraction

from flint import arb, ctx

import honeycomb as hc
import triangular as tri


def _prec(digits: int) -> int:
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be a positive integer, got {digits!r}")
    return int(digits * 3.33) + 30


def constant_tri(digits: int) -> arb:
    """A = (gamma + ln 2 + ln 3 / 2)/(sqrt3 pi), the constant of the triangular far field.

    Derived (NOTES.md D.1): split of the axis integral into a harmonic sum and an
    elementary integral.  Confirmed by extrapolating exact R(m,0), m <= 1600 (NOTES.md).

    >>> constant_tri(30).str(30, radius=False)
    '0.334412031392419802043913912221'
    """
    old = ctx.prec
    try:
        ctx.prec = _prec(digits)
        return (arb.const_euler() + arb(2).log() + arb(3).log() / 2) / (arb(3).sqrt() * arb.pi())
    finally:
        ctx.prec = old


def constant_hc(digits: int) -> arb:
    """(sqrt3/pi)(gamma + ln 2): the honeycomb far-field constant (A and B sublattices)."""
    old = ctx.prec
    try:
        ctx.prec = _prec(digits)
        return arb(3).sqrt() * (arb.const_euler() + arb(2).log()) / arb.pi()
    finally:
        ctx.prec = old


def _polar(x: arb, y: arb) -> tuple[arb, arb, arb]:
    """d^2, cos(theta), sin(theta) of the point (x, y)."""
    d2 = x * x + y * y
    return d2, x / d2.sqrt(), y / d2.sqrt()


def _cos6(c: arb, s: arb) -> arb:
    c2, s2 = c * c, s * s
    return c2 * c2 * c2 - 15 * c2 * c2 * s2 + 15 * c2 * s2 * s2 - s2 * s2 * s2


def _sin3(c: arb, s: arb) -> arb:
    return 3 * s - 4 * s ** 3


def far_field_tri(m: int, n: int, digits: int, order: int = 6) -> arb:
    """Triangular far-field expansion truncated after the d^-order term (order 0, 4 or 6):

        ln(d)/(sqrt3 pi) + A - sqrt3 cos(6 theta)/(90 pi d^4) - 5 cos(6 theta)/(84 sqrt3 pi d^6)

    The remainder O(d^-(order+2)) is NOT in the ball: this is an asymptotic value, not an
    enclosure.  Observed remainder after order 6: about 0.011/d^8 x angular factor (NOTES.md).
    """
    m, n = tri.check_site(m, n)
    if (m, n) == (0, 0):
        raise ValueError("the far-field expansion is not defined at the origin")
    if order not in (0, 4, 6):
        raise ValueError("order must be 0, 4 or 6")
    A = constant_tri(digits)
    old = ctx.prec
    try:
        ctx.prec = _prec(digits)
        r3, pi = arb(3).sqrt(), arb.pi()
        d2, c, s = _polar(arb(m) + arb(n) / 2, arb(n) * r3 / 2)
        val = d2.log() / (2 * r3 * pi) + A
        if order >= 4:
            val -= r3 * _cos6(c, s) / (90 * pi * d2 * d2)
        if order >= 6:
            val -= 5 * _cos6(c, s) / (84 * r3 * pi * d2 ** 3)
        return val
    finally:
        ctx.prec = old


def far_field_hc(m: int, n: int, s: int, digits: int, order: int = 7) -> arb:
    """Honeycomb far-field expansion from A(0,0), truncated after d^-order (0, 3, 4, 6, 7):

        (sqrt3/pi)(ln d + gamma + ln 2)
        - [B only] sqrt3 sin(3 theta)/(3 pi d^3)
        - 3 sqrt3 cos(6 theta)/(10 pi d^4)
        + k6 cos(6 theta)/d^6,  k6 = -45 sqrt3/(28 pi) on A, +5 sqrt3/(84 pi) on B
        - [B only] 21 sqrt3 sin(9 theta)/(2 pi d^7)

    Remainder O(d^-8) (derived, NOTES.md D.3; checked numerically there).  Not an enclosure.
    """
    m, n, s = hc.check_site(m, n, s)
    if (m, n, s) == (0, 0, 0):
        raise ValueError("the far-field expansion is not defined at the origin")
    if order not in (0, 3, 4, 6, 7):
        raise ValueError("order must be 0, 3, 4, 6 or 7")
    C = constant_hc(digits)
    old = ctx.prec
    try:
        ctx.prec = _prec(digits)
        u, v = hc.thirds(m, n, s)
        r3, pi = arb(3).sqrt(), arb.pi()
        # cartesian position (u a1 + v a2)/3 with a1 = (sqrt3, 0), a2 = (sqrt3/2, 3/2)
        d2, c, sn = _polar((arb(u) + arb(v) / 2) * r3 / 3, arb(v) / 2)
        val = r3 * d2.log() / (2 * pi) + C
        if order >= 3 and s == 1:
            val -= r3 * _sin3(c, sn) / (3 * pi * d2 * d2.sqrt())
        if order >= 4:
            val -= 3 * r3 * _cos6(c, sn) / (10 * pi * d2 * d2)
        if order >= 6:
            k6 = -45 * r3 / (28 * pi) if s == 0 else 5 * r3 / (84 * pi)
            val += k6 * _cos6(c, sn) / d2 ** 3
        if order >= 7 and s == 1:
            sin9 = _sin3(4 * c ** 3 - 3 * c, _sin3(c, sn))    # sin(3 * 3 theta)
            val -= 21 * r3 * sin9 / (2 * pi * d2 ** 3 * d2.sqrt())
        return val
    finally:
        ctx.prec = old
