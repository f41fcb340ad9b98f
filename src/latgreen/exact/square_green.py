"""Exact forms of the square lattice's Green's function at a (Gaussian-)rational energy:

    G(E; m, n) = a G00 + b G11 + c,   G00 = G(E;0,0), G11 = G(E;1,1),

with a, b, c polynomials in E with rational coefficients (Morita, J. Math. Phys. 12, 1744
(1971), uses a basis of K and E; ours is equivalent by the G(E;1,1) closed form in
``methods/square_green_closed.py`` and keeps the coefficients polynomial).  For rational or
Gaussian-rational E the coefficients are exact Gaussian rationals, produced column by column.

Derivation (only the lattice equation and the symmetry are given; every step is an identity,
so every form is ``derived``):

1. Lattice equation, from (E - H) G = delta: E G(m,n) - sum_(4 neighbours) G = delta_(r,0).
2. Symmetry: G(m,n) = G(|m|,|n|) = G(n,m).
3. Diagonal recurrence, from (D) of the closed-form module by parts.  With
   I_n = (1/2pi) int cos(n phi) (A - B cos phi)^(-1/2) dphi, A = E^2 - 8, B = 8, the integral
   J_n = (1/2pi) int cos(n phi) (A - B cos phi)^(1/2) dphi equals A I_n - (B/2)(I_(n+1) + I_(n-1))
   (multiply out) and -(B/(4n))(I_(n-1) - I_(n+1)) (integrate by parts).  Equating:

       (2k+1) G(k+1,k+1) = k (E^2 - 8)/2 G(k,k) - (2k-1) G(k-1,k-1),   k >= 1

   (the Legendre-function recurrence of Q_(k-1/2)); derived for real E > 4, it holds as an
   identity between analytic functions off the cut and in the limit on it.

Fill order (octant 0 <= n <= m, column by column):
* seeds G(0,0) = (1,0,0), G(1,1) = (0,1,0) and, from 1. at the origin (four equal neighbours),
  G(1,0) = (E G00 - 1)/4;
* column m+1 from columns m, m-1 (m >= 1):
  G(m+1,m) = E G(m,m)/2 - G(m,m-1)                 (1. at (m,m): 2G(m+1,m) + 2G(m,m-1) = E G(m,m)),
  G(m+1,n) = E G(m,n) - G(m-1,n) - G(m,n+1) - G(m,n-1), 0 <= n < m, with G(m,-1) = G(m,1),
  G(m+1,m+1) from the diagonal recurrence.
Every lattice equation at an octant site is used once; the diagonal recurrence closes the system
(the lattice equations alone leave the diagonal free).  The recurrences divide only by 2, 4 and
2k+1, never by E.  Cost O(N^2) rational operations; real E keeps one rational per coefficient.

Checks: every lattice equation with m <= 11 holds exactly at E = 7/3 + 2i/5
(tests/test_green.py); the exact values agree with the quadrature to 40+ digits; the band-edge
limit 2 b(4)/pi - 2 c(4) reproduces Atkinson & van Steenwijk's Table I exactly.

Symmetry zeros used when printing: for real E outside the band every coefficient and G00, G11
are real, so Im G = 0 exactly; for E = iy (y > 0), -E = conj E and the bipartite symmetry
G(-E) = -(-1)^(m+n) G(E) with G(conj E) = conj G(E) give conj G = -(-1)^(m+n) G: Re G = 0 when
m + n is even, Im G = 0 when m + n is odd.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

from flint import acb, arb, ctx, fmpq
from gmpy2 import mpq

from ..energy import Energy
from ..methods.square_green_closed import basis_balls
from .complex_eval import ComplexRounded, certify_complex

LOG2_10 = 3.3219280948873623
Cq = tuple[Fraction, Fraction]  # a Gaussian rational (re, im)


def _fmt_q(x: Fraction) -> str:
    return str(x.numerator) if x.denominator == 1 else f"{x.numerator}/{x.denominator}"


@dataclass(frozen=True)
class GreenForm:
    """a G00 + b G11 + c with Gaussian-rational a, b, c, for one energy (other lattices name
    their two basis functions in ``names``).

    >>> f = GreenForm(((Fraction(9, 8), Fraction(0)), (Fraction(0), Fraction(0)),
    ...                (Fraction(-1, 4), Fraction(0))))
    >>> str(f)
    '9/8*G00 - 1/4'
    >>> str(GreenForm(((Fraction(1, 2), Fraction(-3, 4)), (Fraction(0), Fraction(1)),
    ...                (Fraction(0), Fraction(0)))))
    '(1/2 - 3/4*I)*G00 + I*G11'
    """

    coeffs: tuple[Cq, ...]  # one per name, then the constant
    how: str = "derived"
    names: tuple[str, ...] = ("G00", "G11")  # the basis functions (the lattice's)

    def __str__(self) -> str:
        parts: list[str] = []
        for (re_, im), name in zip(self.coeffs, (*self.names, "1"), strict=True):
            if re_ == 0 and im == 0:
                continue
            if im == 0 or re_ == 0:
                x, unit = (re_, "") if im == 0 else (im, "I")
                mag = _fmt_q(abs(x))
                body = (unit if abs(x) == 1 else f"{mag}*{unit}") if unit else mag
                if name != "1":
                    body = name if body == "1" else f"{body}*{name}"
                sign = "-" if x < 0 else "+"
            else:
                inner = f"{_fmt_q(re_)} {'-' if im < 0 else '+'} {_fmt_q(abs(im))}*I"
                body = f"({inner})" + ("" if name == "1" else f"*{name}")
                sign = "+"
            parts.append(f"{sign} {body}" if parts else (f"-{body}" if sign == "-" else body))
        return " ".join(parts) if parts else "0"

    def size_bits(self) -> int:
        """An upper bound of log2 of the largest numerator (what the cancellation costs)."""
        return max((abs(x.numerator).bit_length() for c in self.coeffs for x in c), default=0)


def _columns_real(e: mpq, N: int) -> Iterator[list[Any]]:
    Z, ONE = mpq(0), mpq(1)
    c0 = [(ONE, Z, Z)]
    yield c0
    if N == 0:
        return
    c1 = [(e / 4, Z, mpq(-1, 4)), (Z, ONE, Z)]
    yield c1
    e2h = (e * e - 8) / 2
    dprev, dcur = c0[0], c1[1]  # G(k-1,k-1), G(k,k)
    prev, cur = c0, c1
    for mm in range(1, N):
        k = mm
        f1, f2, d = k * e2h, mpq(2 * k - 1), 2 * k + 1
        dnext = tuple((f1 * x - f2 * y) / d for x, y in zip(dcur, dprev, strict=True))
        new = []
        for nn in range(mm):
            below = cur[nn - 1] if nn > 0 else cur[1]
            a, b, c = cur[nn]
            p, q, r = prev[nn]
            u, v, w = cur[nn + 1]
            x, y, z = below
            new.append((e * a - p - u - x, e * b - q - v - y, e * c - r - w - z))
        a, b, c = cur[mm]
        x, y, z = cur[mm - 1]
        new.append(((e * a) / 2 - x, (e * b) / 2 - y, (e * c) / 2 - z))
        new.append(dnext)
        yield new
        prev, cur = cur, new
        dprev, dcur = dcur, dnext


def _columns_complex(er: mpq, ei: mpq, N: int) -> Iterator[list[Any]]:
    Z, ONE = mpq(0), mpq(1)
    z2 = (Z, Z)
    c0: list = [((ONE, Z), z2, z2)]
    yield c0
    if N == 0:
        return
    c1: list = [((er / 4, ei / 4), z2, (mpq(-1, 4), Z)), (z2, (ONE, Z), z2)]
    yield c1
    hr, hi = (er * er - ei * ei - 8) / 2, er * ei  # (E^2 - 8)/2
    dprev, dcur = c0[0], c1[1]
    prev, cur = c0, c1
    for mm in range(1, N):
        k = mm
        d, fr, fi, f2 = 2 * k + 1, k * hr, k * hi, 2 * k - 1
        dnext = tuple(((fr * x[0] - fi * x[1] - f2 * y[0]) / d,
                       (fr * x[1] + fi * x[0] - f2 * y[1]) / d)
                      for x, y in zip(dcur, dprev, strict=True))
        new = []
        for nn in range(mm):
            below = cur[nn - 1] if nn > 0 else cur[1]
            ent = []
            for j in range(3):
                s = cur[nn][j]
                p, u, x = prev[nn][j], cur[nn + 1][j], below[j]
                ent.append((er * s[0] - ei * s[1] - p[0] - u[0] - x[0],
                            er * s[1] + ei * s[0] - p[1] - u[1] - x[1]))
            new.append(tuple(ent))
        ent = []
        for j in range(3):
            s, x = cur[mm][j], cur[mm - 1][j]
            ent.append(((er * s[0] - ei * s[1]) / 2 - x[0], (er * s[1] + ei * s[0]) / 2 - x[1]))
        new.append(tuple(ent))
        new.append(dnext)
        yield new
        prev, cur = cur, new
        dprev, dcur = dcur, dnext


def _fr(x: mpq) -> Fraction:
    return Fraction(int(x.numerator), int(x.denominator))


def columns(E: Energy, N: int) -> Iterator[tuple[int, list[GreenForm]]]:
    """(m, [form of G(E;m,n) for n = 0..m]) for m = 0..N, in order; O(N) columns kept.

    >>> from latgreen.energy import parse_energy
    >>> [str(f) for _, col in columns(parse_energy("9/2"), 2) for f in col][3:]
    ['65/16*G00 - 2*G11 - 9/8', '-9/8*G00 + 9/4*G11 + 1/4', '-1/3*G00 + 49/24*G11']
    """
    Z = Fraction(0)
    if E.im == 0:
        for m, col in enumerate(_columns_real(mpq(E.re.numerator, E.re.denominator), N)):
            yield m, [GreenForm(((_fr(a), Z), (_fr(b), Z), (_fr(c), Z))) for a, b, c in col]
    else:
        cols = _columns_complex(mpq(E.re.numerator, E.re.denominator),
                                mpq(E.im.numerator, E.im.denominator), N)
        for m, col in enumerate(cols):
            yield m, [GreenForm(tuple((_fr(x[0]), _fr(x[1])) for x in abc))
                      for abc in col]


def green_form(E: Energy, m: int, n: int) -> GreenForm:
    """The exact form of G(E; m, n) (any integer site; reduced to the octant)."""
    m, n = abs(m), abs(n)
    if n > m:
        m, n = n, m
    last: list[GreenForm] = []
    for _, last in columns(E, m):  # noqa: B007 - the last column is the one wanted
        pass
    return last[n]


def zero_parts(E: Energy, m: int, n: int) -> tuple[bool, bool]:
    """(Re G = 0, Im G = 0) exactly, by the symmetries in the module docstring."""
    if E.im == 0:
        return False, abs(E.re) > 4
    if E.re == 0:
        even = (m + n) % 2 == 0
        return even, not even
    return False, False


def _acb_cq(x: Cq) -> acb:
    return acb(arb(fmpq(x[0].numerator, x[0].denominator)),
               arb(fmpq(x[1].numerator, x[1].denominator)))


def combine(form: GreenForm, b0: acb, b1: acb, bits: int) -> acb:
    """a B0 + b B1 + c for a form's coefficients (a, b, c) and its basis balls, at ``bits``
    of working precision (every lattice's two-function forms)."""
    a, b, c = form.coeffs
    old = ctx.prec
    try:
        ctx.prec = bits
        return _acb_cq(a) * b0 + _acb_cq(b) * b1 + _acb_cq(c)
    finally:
        ctx.prec = old


def neg_imag_over_pi(x: acb, bits: int) -> arb:
    """-Im(x)/pi at ``bits`` (a local density of states from a ball of G)."""
    old = ctx.prec
    try:
        ctx.prec = bits
        return -x.imag / arb.pi()
    finally:
        ctx.prec = old


def ball(form: GreenForm, E: Energy, bits: int) -> acb:
    """a G00 + b G11 + c as a ball at ``bits`` of working precision."""
    return combine(form, *basis_balls(E, bits), bits)


def start_bits(form: GreenForm, digits: int) -> int:
    """Coefficient size + the digits asked for + guard bits, in steps of 128 bits (so that
    the cached basis balls are shared between sites of similar size)."""
    need = form.size_bits() + math.ceil((digits + 2) * LOG2_10) + 64
    return -(-need // 128) * 128


def evaluate(form: GreenForm, E: Energy, site: tuple[int, int], digits: int) -> ComplexRounded:
    """Both components of a G00 + b G11 + c correctly rounded to ``digits`` significant
    digits each (or exactly 0 by symmetry), certified by python-flint balls whose working
    precision follows the coefficient sizes (cancellation: at extent 200 and E = 9/2 the
    coefficients reach 2^527 while G(200,200) ~ 1e-88)."""
    return certify_complex(lambda bits: ball(form, E, bits), start_bits(form, digits), digits,
                           zero_parts(E, *site), f"G({E};{site[0]},{site[1]})")




def band_edge_limit(m: int, n: int) -> tuple[Fraction, Fraction]:
    """R(m, n) = lim_(E -> 4+) 2[G(E;0,0) - G(E;m,n)] = p + q/pi from the exact forms, as
    (p, q).

    G00 - G(m,n) = (1 - a - b) G00 + b (G00 - G11) - c, and by the G11 closed form
    G00 - G11 = ((16 - E^2)/8) G00 + (E/(4 pi)) E(16/E^2) -> 1/pi (E(1) = 1, DLMF 19.6.1)
    while G00 = O(log 1/(E-4)).  a, b, c are polynomials in E, so when a(4) + b(4) = 1 the
    term (1 - a - b) G00 = O((E-4) log) vanishes and R = 2 b(4)/pi - 2 c(4).  The condition
    is checked (ArithmeticError otherwise), not assumed.  The recurrence runs at E = 4, which
    the public energy check refuses: here only polynomial coefficients are evaluated there.

    >>> band_edge_limit(3, 1)
    (Fraction(-4, 1), Fraction(46, 3))
    """
    m, n = abs(m), abs(n)
    if n > m:
        m, n = n, m
    last: list[Any] = []
    for last in _columns_real(mpq(4), m):  # noqa: B007 - the last column is the one wanted
        pass
    a, b, c = last[n]
    if a + b != 1:
        raise ArithmeticError(f"a(4) + b(4) = {a + b} != 1 at site ({m},{n})")
    return _fr(-2 * c), _fr(2 * b)
