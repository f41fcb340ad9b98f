"""Exact two-point resistances of the square lattice: R(m, n) = a + b/pi, a, b rational.

Derivation (all steps are identities, so every form is ``derived``):

* Seeds: R(0,0) = 0, R(1,0) = 1/2 (superposition: each of the 4 bonds carries 1/4 of a unit
  current injected and 1/4 of one extracted), and the diagonal closed form
  R(n,n) = (2/pi) sum_{k=1..n} 1/(2k-1)  (Atkinson & van Steenwijk, Am. J. Phys. 67, 486
  (1999); Cserti, Am. J. Phys. 68, 896 (2000)).
* Lattice equation: away from the origin R is discrete-harmonic,
  4 R(m,n) = R(m+1,n) + R(m-1,n) + R(m,n+1) + R(m,n-1).
* Column m -> m+1 of the octant 0 <= n <= m:
  - at a diagonal site (m,m), m >= 1, symmetry R(m+1,m) = R(m,m+1), R(m,m-1) = R(m-1,m) gives
    R(m+1, m) = 2 R(m,m) - R(m, m-1);
  - at (m, n), 0 <= n <= m-1: R(m+1, n) = 4 R(m,n) - R(m-1,n) - R(m,n+1) - R(m,n-1), with
    R(m,-1) = R(m,1);
  - R(m+1, m+1) from the diagonal formula.

Arithmetic is on integers with common denominators: in column m,
R(m,n) = A[n]/2 + B[n]/(L_m pi), where L_m = lcm(1, 3, ..., 2m-1).  When L grows, the two
columns kept are rescaled; nothing else is stored, so memory is O(m) big integers.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from fractions import Fraction
from math import gcd

import gmpy2

from .forms import INV_PI, ONE, Constant, ExactForm

BASIS: tuple[Constant, ...] = (ONE, INV_PI)


@dataclass(frozen=True)
class Column:
    """Column m of the octant: R(m,n) = A[n]/2 + B[n]/(L*pi), n = 0..m."""

    m: int
    A: list[gmpy2.mpz]
    B: list[gmpy2.mpz]
    L: gmpy2.mpz

    @property
    def dens(self) -> tuple[int, int]:
        """Per-basis-element denominators, for :class:`FixedPointEvaluator`."""
        return (2, int(self.L))

    def form(self, n: int) -> ExactForm:
        return ExactForm((Fraction(int(self.A[n]), 2), Fraction(int(self.B[n]), int(self.L))),
                         BASIS)

    def texts(self) -> list[str]:
        """``[str(self.form(n)) for n in 0..m]``, the same strings, computed with gmpy2 (the
        reduction B/L and the decimal digits of thousand-digit integers are much faster than
        through Fraction and int): terms ``p``, ``p/2``, ``p/pi``, ``p/(q*pi)``, positive
        terms first, the 1/pi term before the rational one (ExactForm.__str__).

        >>> c = list(columns(3))[-1]
        >>> c.texts() == [str(c.form(n)) for n in range(c.m + 1)]
        True
        """
        L = self.L
        out = []
        for a, b in zip(self.A, self.B, strict=True):
            terms = []  # (negative, rational, text), sorted as ExactForm.__str__ orders them
            if b:
                g = gmpy2.gcd(b, L)
                p, q = abs(b) // g, L // g
                terms.append((b < 0, False, f"{p}/pi" if q == 1 else f"{p}/({q}*pi)"))
            if a:
                terms.append((a < 0, True, f"{abs(a) // 2}" if a % 2 == 0 else f"{abs(a)}/2"))
            if not terms:
                out.append("0")
                continue
            terms.sort(key=lambda t: (t[0], t[1]))
            text = ("-" if terms[0][0] else "") + terms[0][2]
            for neg, _, t in terms[1:]:
                text += (" - " if neg else " + ") + t
            out.append(text)
        return out


def columns(extent: int) -> Iterator[Column]:
    """Yield the octant columns m = 0..extent in order.

    >>> [str(c.form(n)) for c in columns(3) for n in range(c.m + 1)][-4:]
    ['17/2 - 24/pi', '46/(3*pi) - 4', '4/(3*pi) + 1/2', '46/(15*pi)']
    """
    mpz = gmpy2.mpz
    if extent < 0:
        return
    L = mpz(1)
    yield Column(0, [mpz(0)], [mpz(0)], L)
    if extent == 0:
        return
    # S = L * sum_{k=1..m} 1/(2k-1): the diagonal's B is 2*S
    S = mpz(1)
    prev_A, prev_B = [mpz(0)], [mpz(0)]
    cur_A, cur_B = [mpz(1), mpz(0)], [mpz(0), 2 * S]
    yield Column(1, cur_A, cur_B, L)
    for m in range(1, extent):
        odd = 2 * m + 1
        g = gcd(int(L), odd)
        if g != odd:  # L grows: rescale what is kept
            f = mpz(odd // g)
            L *= f
            S *= f
            prev_B = [b * f for b in prev_B]
            cur_B = [b * f for b in cur_B]
        S += L // odd
        new_A = [mpz(0)] * (m + 2)
        new_B = [mpz(0)] * (m + 2)
        # n = 0 uses R(m,-1) = R(m,1)
        new_A[0] = 4 * cur_A[0] - prev_A[0] - 2 * cur_A[1]
        new_B[0] = 4 * cur_B[0] - prev_B[0] - 2 * cur_B[1]
        for n in range(1, m):
            new_A[n] = 4 * cur_A[n] - prev_A[n] - cur_A[n + 1] - cur_A[n - 1]
            new_B[n] = 4 * cur_B[n] - prev_B[n] - cur_B[n + 1] - cur_B[n - 1]
        new_A[m] = 2 * cur_A[m] - cur_A[m - 1]
        new_B[m] = 2 * cur_B[m] - cur_B[m - 1]
        new_A[m + 1] = mpz(0)
        new_B[m + 1] = 2 * S
        prev_A, prev_B, cur_A, cur_B = cur_A, cur_B, new_A, new_B
        yield Column(m + 1, cur_A, cur_B, L)


def resistance_form(m: int, n: int) -> ExactForm:
    """Exact R(m, n) for a canonical site 0 <= n <= m (cost O(m^2) big-integer operations).

    >>> str(resistance_form(5, 1))
    '6646/(15*pi) - 140'
    """
    if not 0 <= n <= m:
        raise ValueError("resistance_form expects a canonical site 0 <= n <= m")
    for col in columns(m):
        if col.m == m:
            return col.form(n)
    raise AssertionError("unreachable")


def enclosure_bits(extent: int, digits: int) -> int:
    """Fixed-point bits for :func:`enclosure_columns`: the error bound of column m grows at
    most like (3 + sqrt 10)^m = 2^(2.624 m), plus the digits asked for and 64 guard bits."""
    return int(2.625 * extent) + int(digits * 3.3219280948873623) + 128


def enclosure_columns(extent: int, bits: int) -> Iterator[tuple[int, list[int], int]]:
    """The same recurrence run on fixed-point enclosures: yields (m, V, err) with
    |R(m, n) - V[n] / 2^bits| <= err / 2^bits for every n = 0..m.

    Nothing is rounded inside the recurrence (only integer additions and multiplications by
    small integers), so the only errors come from the seeds:
    * R(1,0) = 1/2 is exact; K = floor(2^(bits+1)/pi) is within 1 unit of (2/pi) 2^bits;
    * the diagonal S_m = sum_{k<=m} floor(K/(2k-1)) is within 2m units of R(m,m) 2^bits;
    and the lattice equation propagates them: err(m+1) <= 6 err(m) + err(m-1) (coefficients
    4, 1, 1, 1 in absolute value, with R(m,-1) = R(m,1) counted twice), err <= 3 err(m) at
    (m+1, m).  This costs one integer of ``bits`` bits per site instead of two exact
    rationals, and no multiplication by pi at all.

    >>> b = 200
    >>> m, V, err = list(enclosure_columns(3, b))[-1]
    >>> abs(Fraction(V[1], 2**b) - (Fraction(-4) + Fraction(46, 3) / Fraction(
    ...     "3.14159265358979323846264338327950288419716939937510"))) < Fraction(1, 10**45)
    True
    """
    import flint

    old = flint.ctx.prec
    try:
        flint.ctx.prec = bits + 64
        k = (flint.arb(2) ** (bits + 1) / flint.arb.pi()).floor().unique_fmpz()
    finally:
        flint.ctx.prec = old
    if k is None:  # pragma: no cover - 2^(bits+1)/pi is never an integer
        raise ArithmeticError("could not certify 2/pi in fixed point")
    K = int(k)
    yield 0, [0], 0
    if extent == 0:
        return
    S, err_s = K, 1
    prev, err_prev = [0], 0
    cur, err_cur = [1 << (bits - 1), K], 1
    yield 1, cur, err_cur
    for m in range(1, extent):
        S += K // (2 * m + 1)
        err_s += 2
        new = [4 * cur[0] - prev[0] - 2 * cur[1]]
        # n = 1..m-1: 4 cur[n] - prev[n] - cur[n+1] - cur[n-1], over zipped slices
        new += [(c << 2) - p - u - d for c, p, u, d in zip(cur[1:m], prev[1:m], cur[2:m + 1],
                                                           cur[:m - 1], strict=True)]
        new.append(2 * cur[m] - cur[m - 1])
        new.append(S)
        err_new = max(6 * err_cur + err_prev, err_s)
        prev, err_prev, cur, err_cur = cur, err_cur, new, err_new
        yield m + 1, cur, err_cur
