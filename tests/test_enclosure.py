"""The two rigorous evaluation paths agree digit for digit, and their bounds hold."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

from latgreen.exact.evaluate import FixedPointEvaluator, round_enclosures
from latgreen.exact.square import BASIS, columns, enclosure_bits, enclosure_columns


@pytest.mark.parametrize("digits", [1, 7, 45])
def test_fixed_point_enclosure_matches_exact_forms(digits):
    # the table path (fixed-point enclosure of the recurrence) and the single-value path
    # (exact forms through the fixed-point evaluator) print the same strings everywhere
    extent = 70
    bits = enclosure_bits(extent, digits)
    for (m, V, err), col in zip(enclosure_columns(extent, bits), columns(extent), strict=True):
        rc = round_enclosures(V, err, bits, digits)
        ev = FixedPointEvaluator(BASIS, col.dens, digits)
        for n in range(m + 1):
            want = ev.evaluate((col.A[n], col.B[n])).rounded
            if n in rc.undecided:
                continue
            assert rc.values[n] == str(want), (m, n)
            assert rc.bounds[n] == want.half_ulp()
    # and the enclosure really encloses: compare with the exact forms at 80 digits
    for (m, V, err), col in zip(enclosure_columns(30, 300), columns(30), strict=True):
        ev = FixedPointEvaluator(BASIS, col.dens, 80)
        for n in range(m + 1):
            exact = ev.evaluate((col.A[n], col.B[n])).center
            assert abs(Fraction(V[n], 2**300) - exact) <= Fraction(err + 1, 2**300)


def test_evaluator_precision_follows_unreduced_numerators():
    # regression: with a common denominator L ~ 2^40 the numerator of b is 2^40 times larger
    # than b itself; sizing the precision from b lost 13 of 40 digits at R(25, 0)
    col = next(c for c in columns(25) if c.m == 25)
    ev = FixedPointEvaluator(BASIS, col.dens, 40)
    e = ev.evaluate((col.A[0], col.B[0]))
    with mpmath.workdps(200):
        ref = mpmath.mpf(int(col.A[0])) / 2 + mpmath.mpf(int(col.B[0])) / int(col.L) / mpmath.pi
        c = mpmath.mpf(e.center.numerator) / e.center.denominator
        assert abs(c - ref) < mpmath.mpf(10) ** -45


@pytest.mark.parametrize("digits", [1, 2, 33])
def test_vectorised_evaluator_matches_row_by_row(digits):
    for col in columns(90):
        if col.m % 11:
            continue
        ev = FixedPointEvaluator(BASIS, col.dens, digits)
        rows = list(zip(col.A, col.B, strict=True))
        assert [e.rounded for e in ev.evaluate_many(rows)] == \
            [ev.evaluate(r).rounded for r in rows]


def test_rounding_up_into_the_next_decade_is_left_to_the_exact_path():
    # 0.99996 to 4 digits is 1.000: the fast path does not guess the new decade
    bits = 80
    x = Fraction(99996, 100000)
    v = int(x * 2**bits)
    rc = round_enclosures([v], 1, bits, 4)
    assert rc.undecided == [0]
    ev = FixedPointEvaluator(BASIS, (100000, 1), 4)
    assert str(ev.evaluate_many([(99996, 0)])[0].rounded) == "1.000"  # exact rational path


@pytest.mark.parametrize("digits", [1, 2, 33])
def test_one_digit_values_take_the_right_decade(digits):
    # regression: at 1 digit 0.6366 rounded within the wrong decade gave "1" instead of "0.6"
    col = next(c for c in columns(1) if c.m == 1)
    ev = FixedPointEvaluator(BASIS, col.dens, digits)
    got = ev.evaluate_many([(col.A[1], col.B[1])])[0].rounded
    assert got == ev.evaluate((col.A[1], col.B[1])).rounded
    assert str(got).startswith("0.6")


def test_table_texts_of_the_forms_are_str_of_the_forms():
    # tables print the exact forms with gmpy2 (Column.texts) instead of str(ExactForm):
    # the same strings, including zero terms, halves and both signs
    for col in columns(150):
        assert col.texts() == [str(col.form(n)) for n in range(col.m + 1)], col.m
