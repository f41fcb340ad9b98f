"""Known values with their sources: the exact forms and the digits they give."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

import latgreen
from latgreen.exact.square import resistance_form

# Atkinson & van Steenwijk, "Infinite resistive lattices", Am. J. Phys. 67, 486-492 (1999),
# Table I; the same exact forms are listed in OEIS A355565.  Written as (a, b) for a + b/pi.
ATKINSON_TABLE_I = {
    (1, 0): (Fraction(1, 2), Fraction(0)),
    (1, 1): (Fraction(0), Fraction(2)),
    (2, 0): (Fraction(2), Fraction(-4)),
    (2, 1): (Fraction(-1, 2), Fraction(4)),
    (2, 2): (Fraction(0), Fraction(8, 3)),
    (3, 0): (Fraction(17, 2), Fraction(-24)),
    (3, 1): (Fraction(-4), Fraction(46, 3)),
    (3, 2): (Fraction(1, 2), Fraction(4, 3)),
    (3, 3): (Fraction(0), Fraction(46, 15)),
    (4, 0): (Fraction(40), Fraction(-368, 3)),
    (4, 1): (Fraction(-49, 2), Fraction(80)),
    (4, 2): (Fraction(6), Fraction(-236, 15)),
    (4, 3): (Fraction(-1, 2), Fraction(24, 5)),
    (4, 4): (Fraction(0), Fraction(352, 105)),
    (5, 0): (Fraction(401, 2), Fraction(-1880, 3)),
    (5, 1): (Fraction(-140), Fraction(6646, 15)),
    (5, 2): (Fraction(97, 2), Fraction(-2236, 15)),
    (5, 3): (Fraction(-8), Fraction(998, 35)),
    (5, 4): (Fraction(1, 2), Fraction(40, 21)),
    (5, 5): (Fraction(0), Fraction(1126, 315)),
}


@pytest.mark.parametrize("site", sorted(ATKINSON_TABLE_I))
def test_exact_forms_match_atkinson_table_i(site):
    # source: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), Table I; OEIS A355565
    assert resistance_form(*site).coeffs == ATKINSON_TABLE_I[site]


@pytest.mark.parametrize("site", sorted(ATKINSON_TABLE_I))
def test_printed_exact_form_parses_back_with_sympy(site):
    a, b = ATKINSON_TABLE_I[site]  # source: Atkinson & van Steenwijk (1999), Table I
    text = str(resistance_form(*site))
    expr = sympy.sympify(text)
    assert sympy.simplify(expr - (sympy.Rational(a.numerator, a.denominator)
                                  + sympy.Rational(b.numerator, b.denominator) / sympy.pi)) == 0


@pytest.mark.parametrize("site", [(2, 1), (4, 3), (5, 0), (5, 5)])
def test_digits_from_the_published_forms(site):
    # source: Atkinson & van Steenwijk (1999), Table I, evaluated independently with mpmath at
    # 120 digits (the largest coefficient here is 1880/3, so 120 digits are plenty)
    a, b = ATKINSON_TABLE_I[site]
    with mpmath.workdps(120):
        ref = mpmath.mpf(a.numerator) / a.denominator + \
            mpmath.mpf(b.numerator) / b.denominator / mpmath.pi
        want = mpmath.nstr(ref, 60, strip_zeros=False)
    got = latgreen.resistance("square", site, digits=60).value
    assert got == want


def test_nearest_neighbour_is_one_half():
    # R = 1/2 between neighbours: common practice (superposition of two current sources)
    r = latgreen.resistance("square", (1, 0), digits=40)
    assert r.value == "0." + "5" + "0" * 39
    assert str(r.exact) == "1/2"


def test_square_diagonal_is_two_over_pi():
    # R across a square's diagonal = 2/pi: common practice
    r = latgreen.resistance("square", (1, 1), digits=30)
    with mpmath.workdps(40):
        assert r.value == mpmath.nstr(2 / mpmath.pi, 30, strip_zeros=False)


@pytest.mark.parametrize("n", [1, 2, 7, 20, 64])
def test_diagonal_formula(n):
    # R(n,n) = (2/pi) sum_{k=1..n} 1/(2k-1): Atkinson & van Steenwijk, Am. J. Phys. 67, 486
    # (1999); Cserti, Am. J. Phys. 68, 896 (2000)
    b = 2 * sum(Fraction(1, 2 * k - 1) for k in range(1, n + 1))
    assert resistance_form(n, n).coeffs == (Fraction(0), b)


@pytest.mark.parametrize(("m", "prefix"), [
    (106, "1.999103258858"),        # source: OEIS A355955 (R(106,0) = 1.999103258858...)
    (107, "2.002092149977722"),     # source: OEIS A355955 (R(107,0) = 2.002092149977722...)
])
def test_far_axis_values_listed_in_oeis(m, prefix):
    r = latgreen.resistance("square", (m, 0), digits=len(prefix) + 10)
    assert r.value.startswith(prefix)


def test_logarithmic_growth():
    # R grows like (1/pi) ln r: common practice.  Doubling the distance adds (ln 2)/pi.
    a = latgreen.resistance("square", (200, 0), digits=20).mpf
    b = latgreen.resistance("square", (400, 0), digits=20).mpf
    assert abs((b - a) - mpmath.ln2 / mpmath.pi) < 1e-5


@pytest.mark.parametrize("name", ["1/pi", "sqrt(3)/pi", "elliptic_k(39/64)/pi**2",
                                  "gamma(1/4)**4/(4*pi**3)"])
@pytest.mark.parametrize("c", [Fraction(1), Fraction(-1, 2), Fraction(46, 3)])
def test_printed_terms_mean_what_they_say(name, c):
    # regression: splitting a constant's name at its first "/" printed
    # elliptic_k(39/(2*64)/pi**2) for elliptic_k(39/64)/pi**2 / 2 (a different number)
    from latgreen.exact.forms import Constant, ExactForm

    text = str(ExactForm((c,), (Constant(name, lambda: None),)))
    want = sympy.Rational(c.numerator, c.denominator) * sympy.sympify(name)
    assert sympy.simplify(sympy.sympify(text) - want) == 0
