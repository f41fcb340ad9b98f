"""Repetition at higher precision and enclosure: lower-precision digits are the correct
rounding of the higher-precision value, and the stated bound contains it."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

import latgreen
from latgreen.exact.evaluate import evaluate_form
from latgreen.exact.square import resistance_form
from latgreen.rounding import round_rational

SITES = [(1, 0), (2, 1), (7, 0), (25, 0), (40, 13), (80, 80), (120, 1)]


@pytest.mark.parametrize("site", SITES)
def test_lower_precision_is_rounding_of_higher(site):
    hi = evaluate_form(resistance_form(*site), 200).rounded.to_fraction()
    for d in (5, 17, 50, 101):
        lo = evaluate_form(resistance_form(*site), d).rounded
        assert lo == round_rational(hi, d), (site, d)


@pytest.mark.parametrize("site", SITES)
def test_error_bound_contains_higher_precision_value(site):
    hi = evaluate_form(resistance_form(*site), 300).rounded.to_fraction()
    r = latgreen.resistance("square", site, digits=40)
    low = Fraction(r.value)
    bound = Fraction(r.error_bound)
    assert abs(low - hi) <= bound
    assert bound <= abs(hi) * Fraction(1, 10**39)  # and the bound is small


def test_axis_cancellation_at_m300():
    # a + b/pi with a near 10^230: float64 gets no digit right, the evaluator gets all 50
    form = resistance_form(300, 0)
    a, b = form.coeffs
    assert abs(a) > 10**220
    naive = float(a) + float(b) / 3.141592653589793 if abs(a) < 1e300 else float("nan")
    r = latgreen.resistance("square", (300, 0), digits=50)
    assert not abs(naive - float(r.value)) < 1  # the float64 sum is garbage
    with mpmath.workdps(400):  # a direct evaluation with 400 digits to spare, for reference
        ref = mpmath.mpf(a.numerator) / a.denominator + \
            mpmath.mpf(b.numerator) / b.denominator / mpmath.pi
        assert r.value == mpmath.nstr(ref, 50, strip_zeros=False)
    assert r.agreement_digits == 50 and r.methods == ("recurrence", "quadrature")


def test_far_site_beyond_exact_range_uses_quadrature_and_far_field():
    r = latgreen.resistance("square", (2500, 3), digits=20)
    assert r.exact is None and r.methods == ("quadrature", "asymptotic")
    assert r.agreement_digits == 20
    with pytest.raises(latgreen.InputError, match="at most --digits"):
        latgreen.resistance("square", (2500, 3), digits=40)


def test_thousand_digits_at_the_ceiling():
    # regression: panels as wide as 0.4 limited the quadrature to about 745 digits, so the
    # documented ceiling of 1000 digits failed its own cross-check
    r = latgreen.resistance("square", (2, 1), digits=latgreen.MAX_DIGITS)
    assert r.agreement_digits == 1000 and len(r.value) == len("0.") + 1000
    with mpmath.workdps(1020):  # 4/pi - 1/2: Atkinson & van Steenwijk (1999), Table I
        assert r.value == mpmath.nstr(4 / mpmath.pi - mpmath.mpf(1) / 2, 1000,
                                      strip_zeros=False)
