"""Cancellation-aware, rigorously bounded evaluation of exact forms.

A value sum_i (c_i / d_i) * k_i with integer c_i, d_i and constants k_i is evaluated in
fixed point: with P bits, K_i = floor(k_i * 2^P / d_i) is obtained from a python-flint ball
that contains a single integer floor, so |K_i - k_i 2^P / d_i| < 1, and

    |sum_i c_i K_i - 2^P * value| <= sum_i |c_i|          (the proven error term).

The interval is then rounded to D significant digits (:func:`round_interval`); when the
interval straddles a rounding boundary, P is raised and the row evaluated again.  P starts
from the coefficient sizes, so R(300, 0) on the square lattice (rational part near 10^230)
gets the hundreds of guard digits it needs without being asked.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

import flint
import gmpy2

from ..errors import PrecisionError
from ..rounding import ZERO, Rounded, round_interval, round_rational
from .forms import Constant, ExactForm

LOG2_10 = 3.3219280948873623
MAX_BITS = 4_000_000  # refuse beyond this working precision (about 1.2 million digits)


@dataclass(frozen=True)
class Evaluated:
    """A correctly rounded value with the working precision that certified it."""

    rounded: Rounded
    bits: int  # fixed-point bits used (0 for exact rationals)
    center: Fraction  # centre of the certified interval (the exact value for rationals)


def _fixed_constants(basis: Sequence[Constant], dens: Sequence[int], bits: int) -> list[int]:
    """K_i = floor(k_i * 2^bits / d_i), each certified by a ball with a unique floor."""
    out = []
    old = flint.ctx.prec
    try:
        for c, d in zip(basis, dens, strict=True):
            extra = 64 + int(d).bit_length()
            while True:
                flint.ctx.prec = bits + extra
                x = (c.ball() * flint.arb(2) ** bits / flint.arb(int(d))).floor()
                k = x.unique_fmpz()
                if k is not None:
                    out.append(gmpy2.mpz(int(k)))
                    break
                extra *= 2
                if extra > MAX_BITS:  # pragma: no cover - floor exactly on an integer
                    raise PrecisionError(f"cannot certify floor of {c.name} at {bits} bits")
    finally:
        flint.ctx.prec = old
    return out


class FixedPointEvaluator:
    """Evaluates many rows sharing one basis and one set of per-element denominators.

    Constants are computed once per precision level and reused for every row.
    """

    def __init__(self, basis: Sequence[Constant], dens: Sequence[int], digits: int) -> None:
        self.basis = tuple(basis)
        self.dens = tuple(int(d) for d in dens)
        self.digits = digits
        self._cache: dict[int, list[int]] = {}
        self._irrational = [b.name != "1" for b in self.basis]

    def _constants(self, bits: int) -> list[int]:
        k = self._cache.get(bits)
        if k is None:
            k = self._cache[bits] = _fixed_constants(self.basis, self.dens, bits)
        return k

    def start_bits(self, nums: Sequence[int]) -> int:
        # each K_i is within one unit of 2^-P, so the error is sum |c_i| units: P must exceed
        # the numerators' size (not the size of c_i / d_i) by the digits asked for
        size = max((abs(int(c)).bit_length() for c in nums), default=0)
        need = size + int(self.digits * LOG2_10) + 40
        # 64-bit granularity so that rows of similar size share cached constants
        return (need + 63) // 64 * 64

    def evaluate(self, nums: Sequence[int]) -> Evaluated:
        if not any(c for c, irr in zip(nums, self._irrational, strict=True) if irr):
            exact = sum(
                (Fraction(int(c), d) for c, d, irr in zip(nums, self.dens, self._irrational,
                 strict=True) if not irr),
                Fraction(0),
            )
            return Evaluated(round_rational(exact, self.digits) if exact else ZERO, 0, exact)
        bits = self.start_bits(nums)
        cs = [gmpy2.mpz(int(c)) for c in nums]
        err = sum(abs(c) for c in cs) + 1
        while bits <= MAX_BITS:
            ks = self._constants(bits)
            v = sum(c * k for c, k in zip(cs, ks, strict=True))
            r = round_interval(int(v - err), int(v + err), 1 << bits, self.digits)
            if r is not None:
                return Evaluated(r, bits, Fraction(int(v), 1 << bits))
            bits = (bits + bits // 2 + 63) // 64 * 64
        raise PrecisionError(
            f"could not certify {self.digits} digits within {MAX_BITS} bits of working precision"
        )


def evaluate_form(form: ExactForm, digits: int) -> Evaluated:
    """Evaluate one exact form to ``digits`` correctly rounded significant digits.

    >>> from latgreen.exact.forms import ONE, INV_PI
    >>> f = ExactForm((Fraction(-4), Fraction(46, 3)), (ONE, INV_PI))
    >>> str(evaluate_form(f, 30).rounded)
    '0.880751588151456963579102076757'
    """
    nums, dens = form.integer_row()
    return FixedPointEvaluator(form.basis, dens, digits).evaluate(nums)
