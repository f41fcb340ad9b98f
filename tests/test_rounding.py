"""Correct rounding of certified intervals and exact rationals (pure arithmetic facts)."""

from __future__ import annotations

from fractions import Fraction

import pytest

from latgreen.rounding import Rounded, agreement_digits, round_interval, round_rational


def test_interval_straddling_a_rounding_boundary_is_undecided():
    # [0.12345, 0.12346] rounds to 0.1234|0.1235 at 4 digits depending on the point: common
    # practice (round half up / half even would both be undecided on such an interval)
    assert round_interval(12344, 12346, 100000, 4) is None


def test_rounding_up_into_the_next_decade():
    r = round_interval(99996, 99998, 10000, 4)  # 9.9996..9.9998 -> 10.00
    assert r == Rounded(1, "1000", 1) and str(r) == "10.00"


def test_negative_interval():
    r = round_interval(-31416, -31415, 10000, 3)
    assert str(r) == "-3.14"


def test_interval_containing_zero_is_undecided():
    assert round_interval(-1, 1, 10**6, 5) is None


@pytest.mark.parametrize(("x", "d", "want"), [
    (Fraction(1, 8), 2, "0.12"),      # tie, round half to even (common practice)
    (Fraction(3, 8), 2, "0.38"),      # tie, round half to even
    (Fraction(1, 3), 5, "0.33333"),
    (Fraction(-2, 3), 3, "-0.667"),
    (Fraction(123456789), 3, "1.23e+08"),
    (Fraction(1, 10**9), 2, "1.0e-09"),
])
def test_round_rational(x, d, want):
    assert str(round_rational(x, d)) == want


def test_half_ulp_bound():
    assert round_rational(Fraction(1, 3), 5).half_ulp() == "5e-6"


def test_agreement_digits():
    assert agreement_digits(Fraction(1), Fraction(1), 30) == 30
    assert agreement_digits(Fraction(1), Fraction(1) + Fraction(1, 10**12), 30) == 12
    assert agreement_digits(Fraction(1), Fraction(3), 30) == 0
