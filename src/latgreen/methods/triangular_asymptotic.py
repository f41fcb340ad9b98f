"""Far-field expansions of the triangular- and honeycomb-lattice resistances (bond length 1).

Triangular, site (m, n), d^2 = m^2 + m n + n^2, theta the polar angle of m a1 + n a2:

    R = ln(d)/(sqrt3 pi) + A - sqrt3 cos(6 theta)/(90 pi d^4) - 5 cos(6 theta)/(84 sqrt3 pi d^6)
        + O(d^-8),
    A = (gamma + ln 2 + (1/2) ln 3)/(sqrt3 pi) = 0.33441203139241980204...

(OEIS A355954 lists A to 16 digits and says no closed form was known.)  Derivation of A: on the
axis R(m,0) = (1/pi) int_0^pi (1 - cos mk) h(k) / (2 sin(k/2)) dk, h = 1/sqrt(3 + sin^2(k/2)).
With h = h(0) + (h - h(0)): (1 - cos mk)/(2 sin(k/2)) = sum_{j<=m} sin((j - 1/2)k) gives
(2/(sqrt3 pi)) sum_{j<=m} 1/(2j - 1) = (ln m + 2 ln 2 + gamma)/(sqrt3 pi) + O(m^-2); the smooth
rest tends to C = (1/pi) int_0^pi (h - h(0))/(2 sin(k/2)) dk (Riemann-Lebesgue), and the
substitutions w = sin(k/2), p = sqrt(1 - w^2), p = 2 sin(phi) turn it into
-(1/(sqrt3 pi)) int_0^{pi/6} dphi/(sqrt3 + 2 cos phi) = -(1/(sqrt3 pi)) ln(2/sqrt3).
Correction terms: near k = 0 the denominator 3 - sum_j cos(k.e_j) has the angular moments
sum cos^6 = (30 + 3 cos 6phi)/32, sum cos^8 = (105 + 24 cos 6phi)/128; only non-polynomial
homogeneous terms of 1/D have long-range Fourier transforms (Hankel transform of
k^lambda e^{i l phi}), which gives the d^-4 and d^-6 terms above (derived; the extrapolated
axis coefficients agree with them to 160 digits).

Honeycomb from A(0,0), site (m, n, s) at distance d, theta measured from a1 (derived from the
triangular expansion with R_A = 3 R_tri at d_hc = sqrt3 d_tri, and R_B = the mean over the
three A neighbours, expanded in 1/d):

    A sites: (sqrt3/pi)(ln d + gamma + ln 2) - 3 sqrt3 cos6t/(10 pi d^4)
             - 45 sqrt3 cos6t/(28 pi d^6)
    B sites: (sqrt3/pi)(ln d + gamma + ln 2) - sqrt3 sin3t/(3 pi d^3) - 3 sqrt3 cos6t/(10 pi d^4)
             + 5 sqrt3 cos6t/(84 pi d^6) - 21 sqrt3 sin9t/(2 pi d^7)

The remainders are O(d^-8); the error estimates ERROR_C8_TRI/d^8 and ERROR_C8_HC/d^8 were
measured against exact values (the next term on the triangular axis, identified numerically,
is -7/(20 sqrt3 pi d^8) = -0.064/d^8) and include a safety factor; the test suite checks them
for every canonical site with MIN_D <= d and extent <= 120.  They are estimates, not proofs:
the asymptotic method only ever confirms digits computed otherwise.
"""

from __future__ import annotations

from fractions import Fraction

import flint
import mpmath

MIN_D = 10
ERROR_C8_TRI = 0.2
ERROR_C8_HC = 50


def _prec(digits: int) -> int:
    return int(digits * 3.33) + 40


def _mpf(x: flint.arb) -> mpmath.mpf:
    """The ball's midpoint as an exact mpmath number."""
    man, exp = x.mid().man_exp()
    with mpmath.workprec(max(53, int(man).bit_length())):
        return mpmath.mpf((int(man), int(exp)))


def _cos6(c: flint.arb, s: flint.arb) -> flint.arb:
    c2, s2 = c * c, s * s
    return c2 * c2 * c2 - 15 * c2 * c2 * s2 + 15 * c2 * s2 * s2 - s2 * s2 * s2


def _sin3(c: flint.arb, s: flint.arb) -> flint.arb:
    return 3 * s - 4 * s**3


def constant_tri(digits: int) -> mpmath.mpf:
    """A = (gamma + ln 2 + (ln 3)/2)/(sqrt3 pi).

    >>> mpmath.nstr(constant_tri(30), 20)
    '0.33441203139241980204'
    """
    old = flint.ctx.prec
    try:
        flint.ctx.prec = _prec(digits)
        a = flint.arb
        return _mpf((a.const_euler() + a(2).log() + a(3).log() / 2) / (a(3).sqrt() * a.pi()))
    finally:
        flint.ctx.prec = old


def far_field_tri(m: int, n: int, digits: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(value, error estimate) of the triangular expansion at (m, n), d >= MIN_D.

    >>> from latgreen.exact.evaluate import evaluate_form
    >>> from latgreen.exact.triangular import resistance_form
    >>> v, e = far_field_tri(60, 0, 30)
    >>> x = str(evaluate_form(resistance_form(60, 0), 30).rounded)
    >>> with mpmath.workdps(40): ok = e / 10 < abs(mpmath.mpf(x) - v) <= e
    >>> mpmath.nstr(e, 3), ok
    ('1.19e-15', True)
    """
    d2 = m * m + m * n + n * n
    if d2 < MIN_D**2:
        raise ValueError(f"the far-field expansion is only used for d >= {MIN_D}")
    old = flint.ctx.prec
    try:
        flint.ctx.prec = _prec(digits)
        a = flint.arb
        r3, pi = a(3).sqrt(), a.pi()
        x, y = a(m) + a(n) / 2, a(n) * r3 / 2
        D2 = a(d2)
        d = D2.sqrt()
        c6 = _cos6(x / d, y / d)
        val = (D2.log() / (2 * r3 * pi)
               + (a.const_euler() + a(2).log() + a(3).log() / 2) / (r3 * pi)
               - r3 * c6 / (90 * pi * D2 * D2) - 5 * c6 / (84 * r3 * pi * D2**3))
        return _mpf(val), _mpf(a(ERROR_C8_TRI) / D2**4)
    finally:
        flint.ctx.prec = old


def far_field_hc(m: int, n: int, s: int, digits: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(value, error estimate) of the honeycomb expansion at (m, n, s), d >= MIN_D.

    >>> from latgreen.exact.evaluate import evaluate_form
    >>> from latgreen.exact.honeycomb import resistance_form
    >>> v, e = far_field_hc(30, 0, 1, 30)
    >>> x = str(evaluate_form(resistance_form(30, 0, 1), 30).rounded)
    >>> with mpmath.workdps(40): ok = abs(mpmath.mpf(x) - v) <= e
    >>> ok
    True
    """
    u, v = 3 * m + s, 3 * n + s
    d2 = Fraction(u * u + u * v + v * v, 3)
    if d2 < MIN_D**2:
        raise ValueError(f"the far-field expansion is only used for d >= {MIN_D}")
    old = flint.ctx.prec
    try:
        flint.ctx.prec = _prec(digits)
        a = flint.arb
        r3, pi = a(3).sqrt(), a.pi()
        x, y = (a(u) + a(v) / 2) * r3 / 3, a(v) / 2
        D2 = a(d2.numerator) / d2.denominator
        d = D2.sqrt()
        c, sn = x / d, y / d
        c6 = _cos6(c, sn)
        val = r3 * (D2.log() / 2 + a.const_euler() + a(2).log()) / pi \
            - 3 * r3 * c6 / (10 * pi * D2 * D2)
        if s == 0:
            val -= 45 * r3 * c6 / (28 * pi * D2**3)
        else:
            sin9 = _sin3(4 * c**3 - 3 * c, _sin3(c, sn))  # sin(3 * 3 theta)
            val += (-r3 * _sin3(c, sn) / (3 * pi * D2 * d) + 5 * r3 * c6 / (84 * pi * D2**3)
                    - 21 * r3 * sin9 / (2 * pi * D2**3 * d))
        return _mpf(val), _mpf(a(ERROR_C8_HC) / D2**4)
    finally:
        flint.ctx.prec = old
