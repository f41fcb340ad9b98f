"""Tests for asymptotics.py (sources beside every check value)."""
import functools

import mpmath
import pytest
from flint import arb, ctx

import asymptotics as AS
import honeycomb as H
import triangular as T


@functools.lru_cache(maxsize=None)
def _tables():
    return T.resistance_exact(120), H.resistance_exact(120)


def _exact_value(ab, prec):
    a, b = ab
    return arb(a.numerator) / a.denominator + arb(b.numerator) / b.denominator * arb(3).sqrt() / arb.pi()


def test_constant_matches_oeis_prefix():
    # OEIS A355954: A = 0.3344120313924198... (16 digits listed there)
    assert AS.constant_tri(40).str(16, radius=False) == "0.3344120313924198"


def test_elementary_integral_of_the_derivation_120_digits():
    # NOTES.md D.1: int_0^1 [1/sqrt(3+w^2) - 1/sqrt3] dw / (w sqrt(1-w^2)) = -(1/sqrt3) ln(4/3)
    # (our derivation; checked here by tanh-sinh quadrature)
    with mpmath.workdps(130):
        f = lambda p: -2 / (mpmath.sqrt(3) * mpmath.sqrt(4 - p * p) * (mpmath.sqrt(3) + mpmath.sqrt(4 - p * p)))
        # the same integral after w = sqrt(1 - p^2) (no cancellation at w -> 0)
        J = mpmath.quad(f, [0, 1])
        closed = -(2 / mpmath.sqrt(3)) * mpmath.log(2 / mpmath.sqrt(3))
        assert abs(J - closed) < mpmath.mpf(10) ** -120
        g = lambda w: (1 / mpmath.sqrt(3 + w * w) - 1 / mpmath.sqrt(3)) / (w * mpmath.sqrt(1 - w * w))
        assert abs(mpmath.quad(g, [0, 1]) - closed / 2) < mpmath.mpf(10) ** -60


def test_constant_by_extrapolation_of_exact_axis_values_110_digits():
    # independent check of the closed form: Neville extrapolation in x = 1/m^2 of
    # R(m,0) - ln(m)/(sqrt3 pi), m = 800, 820, ..., 1400 (exact values from the recurrence)
    ax = T._axis(1400)
    ms = list(range(800, 1401, 20))
    old = ctx.prec
    try:
        ctx.prec = 7000
        c = arb(3).sqrt() * arb.pi()
        ys = [_exact_value(ax[m], 7000) - arb(m).log() / c for m in ms]
        with mpmath.workprec(7000):
            xs = [mpmath.mpf(1) / (m * m) for m in ms]
            P = [mpmath.mpf(y.mid().str(2000, radius=False)) for y in ys]
            for k in range(1, len(xs)):
                for i in range(len(xs) - k):
                    P[i] = (xs[i + k] * P[i] - xs[i] * P[i + 1]) / (xs[i + k] - xs[i])
            A = mpmath.mpf(AS.constant_tri(150).mid().str(160, radius=False))
            assert abs(P[0] - A) < mpmath.mpf(10) ** -110
    finally:
        ctx.prec = old


@pytest.mark.parametrize("site", [(60, 0), (60, 60), (100, 37), (120, 60)])
def test_triangular_far_field_orders(site):
    # exact values vs expansion: the remainder after each order shrinks as claimed
    R = _tables()[0]
    old = ctx.prec
    try:
        ctx.prec = 3000
        r = _exact_value(R[site], 3000)
        d2 = T.distance2(*site)
        e4 = abs(r - AS.far_field_tri(*site, 40, order=4))
        e6 = abs(r - AS.far_field_tri(*site, 40, order=6))
        assert e4 < 0.012 / arb(d2) ** 3          # d^-6 coefficient 5/(84 sqrt3 pi) = 0.01094
        assert e6 < 0.07 / arb(d2) ** 4           # observed d^-8 coefficient about 0.0644
    finally:
        ctx.prec = old


@pytest.mark.parametrize("site", [(60, 0, 0), (60, 60, 1), (60, -30, 1), (120, 37, 1), (40, 0, 1)])
def test_honeycomb_far_field_orders(site):
    R = _tables()[1]
    old = ctx.prec
    try:
        ctx.prec = 3000
        r = _exact_value(R[site], 3000)
        q = H.distance2(*site)
        d2 = arb(q.numerator) / q.denominator
        assert abs(r - AS.far_field_hc(*site, 40, order=7)) < 17 / d2 ** 4
        assert abs(r - AS.far_field_hc(*site, 40, order=0)) > 17 / d2 ** 4   # the terms matter
    finally:
        ctx.prec = old


def test_honeycomb_constant_relation():
    # 3 A_tri - (sqrt3/(2 pi)) ln 3 = (sqrt3/pi)(gamma + ln 2)  (R_hc,A = 3 R_tri, d_hc = sqrt3 d)
    old = ctx.prec
    try:
        ctx.prec = 400
        lhs = 3 * AS.constant_tri(100) - arb(3).sqrt() * arb(3).log() / (2 * arb.pi())
        assert lhs.overlaps(AS.constant_hc(100))
    finally:
        ctx.prec = old


def test_invalid_arguments():
    with pytest.raises(ValueError):
        AS.far_field_tri(0, 0, 10)
    with pytest.raises(ValueError):
        AS.far_field_hc(0, 0, 0, 10)
    with pytest.raises(ValueError):
        AS.far_field_tri(3, 1, 10, order=5)
    with pytest.raises(ValueError):
        AS.far_field_hc(3, 1, 2, 10)
