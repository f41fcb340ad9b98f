"""Exact forms: rational coefficients over a named basis of constants.

A value such as R(3,1) = 46/(3 pi) - 4 on the square lattice is stored as the coefficients
(-4, 46/3) over the basis (1, 1/pi).  Each basis element knows how to print a term in a plain
syntax that sympy parses, and how to give its value as a rigorous python-flint ball at any
working precision.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import flint


@dataclass(frozen=True)
class Constant:
    """A basis constant: its sympy-style name and a rigorous evaluator ``ball(prec)``."""

    name: str  # sympy syntax, e.g. "1", "1/pi", "sqrt(3)/pi"
    ball: Callable[[], flint.arb]  # evaluated at the caller's flint precision
    # for a quotient name such as "gamma(1/4)**4/pi**3": its two parts, so that a term
    # prints as "5*gamma(1/4)**4/(24*pi**3)" rather than "5*gamma(1/4)**4/pi**3/24"
    top: str | None = None
    bottom: str | None = None

    def term(self, c: Fraction) -> str:
        """Print ``|c| * self`` (sign handled by the caller) in sympy syntax.

        >>> Constant("gamma(1/4)**4/pi**3", flint.arb, "gamma(1/4)**4", "pi**3").term(
        ...     Fraction(-5, 24))
        '5*gamma(1/4)**4/(24*pi**3)'
        """
        p, q = abs(c.numerator), c.denominator
        if self.top is not None and self.bottom is not None:
            num = self.top if p == 1 else f"{p}*{self.top}"
            den = self.bottom if q == 1 else f"{q}*{self.bottom}"
            return f"{num}/({den})" if compound(den) else f"{num}/{den}"
        if self.name == "1":
            return f"{p}" if q == 1 else f"{p}/{q}"
        if self.name.startswith("1/"):
            rest = self.name[2:]
            return f"{p}/{rest}" if q == 1 else f"{p}/({q}*{rest})"
        head = "" if p == 1 else f"{p}*"
        cut = _top_level_slash(self.name)
        if cut is not None:  # "sqrt(3)/pi": 4*sqrt(3)/(3*pi), not 4*sqrt(3)/pi/3
            top, bottom = self.name[:cut], self.name[cut + 1:]
            if _top_level_slash(bottom) is not None or any(
                    ch in bottom for ch in "+-") and not bottom.startswith("("):
                bottom = f"({bottom})"
            return f"{head}{top}/{bottom}" if q == 1 else f"{head}{top}/({q}*{bottom})"
        return f"{head}{self.name}" if q == 1 else f"{head}{self.name}/{q}"


def _top_level_slash(text: str) -> int | None:
    """Index of the first "/" outside parentheses (None if there is none).

    >>> _top_level_slash("elliptic_k(39/64)/pi**2"), _top_level_slash("f(1/2)")
    (17, None)
    """
    depth = 0
    for i, ch in enumerate(text):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
        elif ch == "/" and depth == 0:
            return i
    return None


def compound(text: str) -> bool:
    """True if ``text`` has a product or quotient outside parentheses (so that it needs
    parentheses as a divisor); powers ``**`` do not count.

    >>> compound("gamma(1/4)**4"), compound("2**(2/3)*pi**4")
    (False, True)
    """
    depth = 0
    t = text.replace("**", "^")
    for ch in t:
        depth += ch == "("
        depth -= ch == ")"
        if depth == 0 and ch in "*/":
            return True
    return False


ONE = Constant("1", lambda: flint.arb(1))
INV_PI = Constant("1/pi", lambda: 1 / flint.arb.pi())
SQRT3_OVER_PI = Constant("sqrt(3)/pi", lambda: flint.arb(3).sqrt() / flint.arb.pi())


@dataclass(frozen=True)
class ExactForm:
    """sum_i coeffs[i] * basis[i], with how the form was obtained.

    ``how`` is ``"derived"`` (by a proven recurrence from proven seeds) or ``"identified"``
    (integer-relation search, verified to ``verified_digits``).

    >>> f = ExactForm((Fraction(-4), Fraction(46, 3)), (ONE, INV_PI))
    >>> str(f)
    '46/(3*pi) - 4'
    >>> str(ExactForm((Fraction(-5), Fraction(10)), (ONE, SQRT3_OVER_PI)))
    '10*sqrt(3)/pi - 5'
    >>> str(ExactForm((Fraction(8, 3), Fraction(-4, 3)), (ONE, SQRT3_OVER_PI)))
    '8/3 - 4*sqrt(3)/(3*pi)'
    """

    coeffs: tuple[Fraction, ...]
    basis: tuple[Constant, ...]
    how: str = "derived"
    verified_digits: int | None = None

    def is_rational(self) -> bool:
        return all(c == 0 for c, b in zip(self.coeffs, self.basis, strict=True) if b.name != "1")

    def __str__(self) -> str:
        # positive terms first, irrational before rational: "46/(3*pi) - 4", "17/2 - 24/pi"
        order = sorted(range(len(self.basis)),
                       key=lambda i: (self.coeffs[i] < 0, self.basis[i].name == "1"))
        parts: list[str] = []
        for i in order:
            c = self.coeffs[i]
            if c == 0:
                continue
            t = self.basis[i].term(c)
            if not parts:
                parts.append(t if c > 0 else f"-{t}")
            else:
                parts.append(f"+ {t}" if c > 0 else f"- {t}")
        return " ".join(parts) if parts else "0"

    def integer_row(self) -> tuple[tuple[int, ...], tuple[int, ...]]:
        """Numerators and per-element denominators, for the fixed-point evaluator."""
        return (
            tuple(c.numerator for c in self.coeffs),
            tuple(c.denominator for c in self.coeffs),
        )


def form_from_integers(
    nums: Sequence[int], dens: Sequence[int], basis: tuple[Constant, ...], how: str = "derived"
) -> ExactForm:
    return ExactForm(
        tuple(Fraction(int(p), int(q)) for p, q in zip(nums, dens, strict=True)), basis, how
    )
