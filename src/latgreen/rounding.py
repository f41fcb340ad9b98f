"""Correct rounding of certified intervals to D significant digits, and fixed formatting.

Everything here works on exact integers: an interval [lo, hi] is given as integer numerators
over one positive integer denominator, so no binary floating point touches a printed digit.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

LOG10_2 = 0.30102999566398120


@dataclass(frozen=True)
class Rounded:
    """sign * 0.d1 d2 ... dD * 10^(exp+1): ``digits`` has exactly D characters.

    ``exp`` is the decimal exponent of the leading digit (value = d1.d2... * 10^exp).
    The zero value has digits "" and is printed as "0".
    """

    sign: int
    digits: str
    exp: int

    def __str__(self) -> str:
        return format_rounded(self)

    def half_ulp(self) -> str:
        """Rigorous bound on |printed - true| for a correctly rounded value: half a unit in
        the last printed place, e.g. ``5e-51``."""
        if not self.digits:
            return "0"
        return f"5e{self.exp - len(self.digits):d}"

    def to_fraction(self) -> Fraction:
        if not self.digits:
            return Fraction(0)
        k = self.exp - len(self.digits) + 1
        v = Fraction(int(self.digits)) * (Fraction(10) ** k)
        return v if self.sign > 0 else -v


ZERO = Rounded(1, "", 0)


def format_rounded(r: Rounded) -> str:
    """Positional notation for exponents -6..D-1, otherwise ``d.ddde+XX``.

    >>> format_rounded(Rounded(1, "12345", 0))
    '1.2345'
    >>> format_rounded(Rounded(-1, "12345", -3))
    '-0.0012345'
    >>> format_rounded(Rounded(1, "12", 40))
    '1.2e+40'
    """
    if not r.digits:
        return "0"
    s, e, d = r.digits, r.exp, len(r.digits)
    sign = "-" if r.sign < 0 else ""
    if -6 <= e < d:
        if e >= 0:
            body = s[: e + 1] + ("." + s[e + 1 :] if e + 1 < d else "")
        else:
            body = "0." + "0" * (-e - 1) + s
    else:
        body = s[0] + ("." + s[1:] if d > 1 else "") + f"e{e:+03d}"
    return sign + body


def _decade(num: int, den: int) -> int:
    """floor(log10(num/den)) for num, den > 0, exactly."""
    e = int((num.bit_length() - den.bit_length()) * LOG10_2)
    # correct the estimate (off by at most a couple of units)
    while True:
        if e >= 0:
            lo_ok = num >= den * 10**e
            hi_ok = num < den * 10 ** (e + 1)
        else:
            lo_ok = num * 10**-e >= den
            hi_ok = num * 10 ** (-e - 1) < den
        if lo_ok and hi_ok:
            return e
        e += -1 if not lo_ok else 1


def _round_scaled(num: int, den: int, k: int) -> int:
    """round-half-up of num/den * 10^k to an integer (num >= 0)."""
    if k >= 0:
        return (2 * num * 10**k + den) // (2 * den)
    return (2 * num + den * 10**-k) // (2 * den * 10**-k)


def round_interval(lo: int, hi: int, den: int, digits: int) -> Rounded | None:
    """The D-significant-digit rounding shared by every point of [lo/den, hi/den].

    Returns None when the interval is too wide to decide (the caller raises precision),
    also when it contains zero.

    >>> round_interval(314159, 314160, 100000, 4)
    Rounded(sign=1, digits='3142', exp=0)
    >>> round_interval(314150, 314160, 100000, 5) is None
    True
    """
    if lo > hi:
        lo, hi = hi, lo
    if lo <= 0 <= hi:
        return None
    sign = 1
    if hi < 0:
        sign, lo, hi = -1, -hi, -lo
    e = _decade(lo, den)
    k = digits - 1 - e
    qa = _round_scaled(lo, den, k)
    qb = _round_scaled(hi, den, k)
    if qa != qb:
        return None
    if qa == 10**digits:  # rounded up into the next decade
        return Rounded(sign, str(qa // 10), e + 1)
    return Rounded(sign, str(qa), e)


def round_rational(x: Fraction, digits: int) -> Rounded:
    """Exact rational to D significant digits, ties to even.

    >>> str(round_rational(Fraction(1, 2), 5))
    '0.50000'
    >>> str(round_rational(Fraction(1, 8), 2))
    '0.12'
    """
    if x == 0:
        return ZERO
    sign = 1 if x > 0 else -1
    num, den = abs(x.numerator), x.denominator
    e = _decade(num, den)
    k = digits - 1 - e
    scaled = Fraction(num, den) * Fraction(10) ** k
    q = round(scaled)  # Fraction.__round__ rounds half to even
    if q == 10**digits:
        return Rounded(sign, str(q // 10), e + 1)
    return Rounded(sign, str(q), e)


def agreement_digits(a: Fraction, b: Fraction, cap: int) -> int:
    """Significant digits two values share: floor(-log10(|a-b|/|a|)), clipped to [0, cap].

    >>> agreement_digits(Fraction(314159, 100000), Fraction(314160, 100000), 50)
    5
    """
    if a == b:
        return cap
    if a == 0:
        return 0
    rel = abs((a - b) / a)
    if rel >= 1:
        return 0
    # largest k with rel <= 10^-k
    k = _decade(rel.denominator, rel.numerator)  # floor(log10(1/rel))
    return max(0, min(cap, k))
