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
import numpy as np

from ..errors import PrecisionError
from ..rounding import ZERO, Rounded, format_rounded, round_interval, round_rational
from .forms import Constant, ExactForm

LOG2_10 = 3.3219280948873623
MAX_BITS = 4_000_000  # refuse beyond this working precision (about 1.2 million digits)


@dataclass(frozen=True)
class Evaluated:
    """A correctly rounded value with the working precision that certified it.

    The centre of the certified interval is ``center_num / 2^bits`` (for exact rationals,
    ``bits`` is 0 and ``exact`` holds the value); it is kept as integers because building a
    Fraction costs a gcd of big numbers, which a table of a million rows does not need.
    """

    rounded: Rounded
    bits: int  # fixed-point bits used (0 for exact rationals)
    center_num: int
    exact: Fraction | None = None

    @property
    def center(self) -> Fraction:
        if self.exact is not None:
            return self.exact
        return Fraction(int(self.center_num), 1 << self.bits)

    def center_float(self) -> float:
        if self.exact is not None:
            return float(self.exact)
        shift = self.bits - 64
        if shift <= 0:
            return float(Fraction(int(self.center_num), 1 << self.bits))
        return float(int(self.center_num) >> shift) / 2.0**64


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
            return Evaluated(round_rational(exact, self.digits) if exact else ZERO, 0, 0, exact)
        bits = self.start_bits(nums)
        cs = [gmpy2.mpz(int(c)) for c in nums]
        err = sum(abs(c) for c in cs) + 1
        while bits <= MAX_BITS:
            ks = self._constants(bits)
            v = sum(c * k for c, k in zip(cs, ks, strict=True))
            r = round_interval(int(v - err), int(v + err), 1 << bits, self.digits)
            if r is not None:
                return Evaluated(r, bits, v)
            bits = (bits + bits // 2 + 63) // 64 * 64
        raise PrecisionError(
            f"could not certify {self.digits} digits within {MAX_BITS} bits of working precision"
        )


    def evaluate_many(self, rows: Sequence[Sequence[int]]) -> list[Evaluated]:
        """Evaluate a batch of rows; the same results as :meth:`evaluate` row by row.

        The fast path uses one precision and one error bound for the whole batch (the largest
        sum_i |c_i|, valid for every row), a shift instead of a product for rational basis
        elements with power-of-two denominators, and decides the rounding from the remainder:
        with x = 10^k v and y = x + 2^(P-1), q = floor(y / 2^P) is the rounded digit string
        of every point of the interval when errp <= y mod 2^P < 2^P - errp, where
        errp = 10^k * err.  Rows it cannot settle (exact rationals, intervals on a rounding
        boundary, values outside the decades tried) go through :meth:`evaluate`.
        """
        n = len(rows)
        if n == 0:
            return []
        D = self.digits
        mpz = gmpy2.mpz
        rows = [tuple(c if isinstance(c, type(mpz(0))) else mpz(int(c)) for c in r)
                for r in rows]
        size = max(int(abs(c)).bit_length() for r in rows for c in r)
        bits = (size + int(D * LOG2_10) + 40 + 63) // 64 * 64
        ks = self._constants(bits)
        ops: list[tuple[int, int]] = []  # (0, shift) or (1, factor) per basis element
        for b, d, k in zip(self.basis, self.dens, ks, strict=True):
            if b.name == "1" and d & (d - 1) == 0:
                ops.append((0, bits - (d.bit_length() - 1)))
            else:
                ops.append((1, k))
        err = sum(max(abs(r[i]) for r in rows) for i in range(len(self.basis))) + 1
        one = mpz(1) << bits
        mask = one - 1
        half = one >> 1
        lo_q, hi_q = 10 ** (D - 1), 10**D
        decades = [(e, mpz(10) ** (D - 1 - e)) for e in (0, -1, 1, -2) if D - 1 - e >= 0]
        irr_idx = [i for i, irr in enumerate(self._irrational) if irr]
        out: list[Evaluated] = []
        for r in rows:
            if not any(r[i] for i in irr_idx):
                out.append(self.evaluate(r))
                continue
            v = mpz(0)
            for c, (kind, x) in zip(r, ops, strict=True):
                v += (c << x) if kind == 0 else c * x
            sign = 1
            av = v
            if v < 0:
                sign, av = -1, -v
            done = None
            for e, p10 in decades:
                t = av * p10
                fl = t >> bits  # the decade is decided by the value, not by its rounding
                if fl < lo_q:
                    continue
                if fl >= hi_q:
                    break
                y = t + half
                q = y >> bits
                if q >= hi_q:  # rounds up into the next decade: the exact path
                    break
                rem = y & mask
                errp = err * p10
                if errp <= rem < one - errp:
                    done = Evaluated(Rounded(sign, str(q), e), bits, v)
                break
            out.append(done if done is not None else self.evaluate(r))
        return out


def evaluate_form(form: ExactForm, digits: int) -> Evaluated:
    """Evaluate one exact form to ``digits`` correctly rounded significant digits.

    >>> from latgreen.exact.forms import ONE, INV_PI
    >>> f = ExactForm((Fraction(-4), Fraction(46, 3)), (ONE, INV_PI))
    >>> str(evaluate_form(f, 30).rounded)
    '0.880751588151456963579102076757'
    """
    nums, dens = form.integer_row()
    return FixedPointEvaluator(form.basis, dens, digits).evaluate(nums)


@dataclass
class RoundedColumn:
    """A batch of values rounded to D digits, kept columnar for speed.

    ``values`` and ``bounds`` are the printed strings; the centre of row k's certified
    interval is ``nums[k] / 2^bits`` unless ``exact`` has an entry for k.  Rows listed in
    ``undecided`` are empty strings: the caller evaluates them another way and calls
    :meth:`put`.
    """

    values: list[str]
    bounds: list[str]
    nums: list[int]
    bits: int
    exact: dict[int, Fraction]
    undecided: list[int]

    def center(self, k: int) -> Fraction:
        e = self.exact.get(k)
        return e if e is not None else Fraction(int(self.nums[k]), 1 << self.bits)

    def center_floats(self) -> np.ndarray:
        """The centres as float64 (for comparisons with float64 checks)."""
        if self.bits and len(self.nums) == len(self.values):
            # floor to 64 fractional bits, then one correctly rounded conversion per row
            top = np.array(self.nums, dtype=object) >> max(0, self.bits - 64)
            x = top.astype(float)
            x *= 2.0 ** -min(64, self.bits)
        else:
            x = np.zeros(len(self.values))
        for k, e in self.exact.items():
            x[k] = float(e)
        return x

    def put(self, k: int, ev: Evaluated) -> None:
        self.values[k] = str(ev.rounded)
        self.bounds[k] = ev.rounded.half_ulp()
        self.exact[k] = ev.center


def round_enclosures(values: Sequence[int], err: int, bits: int, digits: int) -> RoundedColumn:
    """Round fixed-point enclosures |x_k - values[k] / 2^bits| <= err / 2^bits to ``digits``
    significant digits.  The values are first cut down to the bits the digits need (one more
    unit of error), so the per-row work is on small integers.  Rows whose enclosure does not
    decide the rounding are listed as undecided.

    With v = |values[k]| >> s (b = bits - s fractional bits, error below e_small units) and
    p10 = 10^(D-1-e), row k lies in decade e when 10^(D-1) <= floor(v p10 / 2^b) < 10^D,
    i.e. ceil(10^(D-1) 2^b / p10) <= v < ceil(10^D 2^b / p10) (tested before any product);
    then y = v p10 + 2^(b-1), q = floor(y / 2^b) is the rounding of every point of the
    enclosure when errp <= y mod 2^b < 2^b - errp, errp = e_small p10.

    >>> col = round_enclosures([3 << 100, -(1 << 99)], 1, 102, 5)
    >>> col.values, col.bounds
    (['0.75000', '-0.12500'], ['5e-6', '5e-6'])
    """
    keep = int(digits * LOG2_10) + 72
    s = max(0, bits - keep)
    e_small = (err >> s) + 2
    b = bits - s
    one = 1 << b
    mask = one - 1
    half = one >> 1
    lo_q, hi_q = 10 ** (digits - 1), 10**digits
    n = len(values)
    # vectorised over the batch (numpy object arrays of Python ints: the loops run in C)
    big = np.array(values, dtype=object)
    v = big >> s
    negative = n > 0 and min(values) < 0
    neg = v < 0 if negative else np.zeros(n, dtype=bool)
    av = np.where(neg, -v, v) if negative else v
    exact: dict[int, Fraction] = {}
    out_v = np.full(n, "", dtype=object)
    out_b = np.full(n, "", dtype=object)
    todo = np.ones(n, dtype=bool)
    if err == 0:
        for k in np.nonzero(big == 0)[0].tolist():
            out_v[k], out_b[k], exact[k] = "0", "0", Fraction(0)
            todo[k] = False
    todo &= av > e_small
    for e in (0, -1, 1, -2, 2, -3):
        if digits - 1 - e < 0:
            continue
        idx = np.nonzero(todo)[0]
        if not len(idx):
            break
        p10 = 10 ** (digits - 1 - e)
        a = av[idx] if len(idx) < n else av
        # the decade is decided by the value (floor(v p10 / 2^b)), not by its rounding
        in_decade = (a >= -(-(lo_q << b) // p10)) & (a < -(-(hi_q << b) // p10))
        sel = idx[in_decade]
        if not len(sel):
            continue
        y = (a[in_decade] if len(sel) < len(a) else a) * p10 + half
        q = y >> b
        rem = y & mask
        errp = e_small * p10
        # q == hi_q: rounds up into the next decade; left to the exact path
        ok = (q < hi_q) & (rem >= errp) & (rem < one - errp)
        texts = _positional(list(map(str, q[ok].tolist())), e, digits)
        rows = sel[ok]
        if negative:
            texts = ["-" + t if m else t for t, m in zip(texts, neg[rows].tolist(), strict=True)]
        out_v[rows] = texts
        out_b[rows] = f"5e{e - digits:d}"
        # rows in this decade are settled (rounded, or undecided at this precision)
        todo[sel] = False
    values_out: list[str] = out_v.tolist()
    undecided = np.nonzero(out_v == "")[0].tolist()
    return RoundedColumn(values_out, out_b.tolist(), v.tolist(), b, exact, undecided)


def _positional(qs: list[str], e: int, digits: int) -> list[str]:
    """The texts of D-digit strings ``qs`` with leading digit at 10^e (as format_rounded)."""
    if 0 <= e < digits:
        if e + 1 == digits:
            return qs
        if e == 0:
            return [f"{q[0]}.{q[1:]}" for q in qs]
        return [f"{q[: e + 1]}.{q[e + 1:]}" for q in qs]
    if -6 <= e < 0:
        lead = "0." + "0" * (-e - 1)
        return [lead + q for q in qs]
    return [format_rounded(Rounded(1, q, e)) for q in qs]
