"""Triangular lattice: geometry, published values, exact forms, independent methods."""

from __future__ import annotations

import itertools
import math
from fractions import Fraction as F

import flint
import mpmath
import pytest
import sympy

import latgreen
from finite_network import grounded_inverse, two_point
from latgreen.exact.evaluate import FixedPointEvaluator, evaluate_form
from latgreen.exact.triangular import (
    _SEEDS,
    BASIS,
    Sector,
    axis_part,
    reduce_column,
    resistance_form,
)
from latgreen.lattices.triangular import POINT_GROUP, TRIANGULAR, apply
from latgreen.methods import triangular_asymptotic as asy
from latgreen.methods import triangular_quadrature as tq
from latgreen.quantities import mpf_fraction
from latgreen.rounding import agreement_digits, round_rational
from latgreen.tables.make import check_region

# Atkinson & van Steenwijk, "Infinite resistive lattices", Am. J. Phys. 67, 486-492 (1999),
# p. 489, converted from their coordinates to our 60-degree ones (the conversion as listed in
# the project's REFERENCES.md).  R = a + b sqrt(3)/pi stored as (a, b).
ATKINSON_1999 = {
    (1, 0): (F(1, 3), F(0)),
    (1, 1): (F(-2, 3), F(2)),
    (2, 0): (F(8, 3), F(-4)),
    (2, 1): (F(-5), F(10)),
    (3, 0): (F(27), F(-48)),
    (2, 2): (F(16), F(-28)),
}


def d2(m: int, n: int) -> int:
    return m * m + m * n + n * n


def test_point_group_is_twelve_isometries_preserving_the_neighbours():
    assert len(set(POINT_GROUP)) == 12
    nb = set(TRIANGULAR.neighbours)
    for g in POINT_GROUP:
        assert {apply(g, *v) for v in nb} == nb
        for m, n in itertools.product(range(-3, 4), repeat=2):
            assert d2(*apply(g, m, n)) == d2(m, n)


def test_canonical_is_in_the_sector_and_constant_on_orbits():
    for m, n in itertools.product(range(-7, 8), repeat=2):
        c = TRIANGULAR.canonical((m, n))
        assert 0 <= c[1] <= c[0] and d2(*c) == d2(m, n)
        assert all(TRIANGULAR.canonical(apply(g, m, n)) == c for g in POINT_GROUP)
    assert TRIANGULAR.region_size(9) == len(list(TRIANGULAR.region(9))) == 55
    # DESIGN.md: (1,1) is at distance sqrt(3), (2,1) at sqrt(7)
    assert math.isclose(TRIANGULAR.distance((1, 1)), math.sqrt(3))
    assert math.isclose(TRIANGULAR.distance((2, 1)), math.sqrt(7))


@pytest.mark.parametrize("site", sorted(ATKINSON_1999))
def test_exact_forms_match_atkinson_1999(site):
    # source: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), p. 489 (converted)
    assert resistance_form(*site).coeffs == ATKINSON_1999[site]
    a, b = ATKINSON_1999[site]
    expr = sympy.sympify(str(resistance_form(*site)))
    assert sympy.simplify(expr - (sympy.Rational(a.numerator, a.denominator)
                                  + sympy.Rational(b.numerator, b.denominator)
                                  * sympy.sqrt(3) / sympy.pi)) == 0


def test_nearest_neighbour_is_two_over_z():
    # R = 2/z between neighbours of a lattice whose sites are all equivalent: common practice
    r = latgreen.resistance("triangular", (0, -1), digits=40)
    assert str(r.exact) == "1/3" and r.value == "0." + "3" * 40


def test_digits_from_the_published_form():
    # 10 sqrt3/pi - 5 (Atkinson & van Steenwijk 1999, p. 489, converted), evaluated directly
    with mpmath.workdps(80):
        want = mpmath.nstr(10 * mpmath.sqrt(3) / mpmath.pi - 5, 60, strip_zeros=False)
    assert latgreen.resistance("triangular", (-3, 1), digits=60).value == want


def test_lattice_equation_holds_exactly_on_the_sector():
    # 6 R(r) - sum over the six neighbours = 0 off the origin, -2 at it (unit current);
    # the diagonal sites were never used by the recurrence, so this is a real check
    sec = Sector.for_extent(14)

    def residual(m: int, n: int) -> tuple[int, int]:
        a0, b0 = sec.nums(m, n)
        nb = [sec.nums(m + dm, n + dn) for dm, dn in TRIANGULAR.neighbours]
        return 6 * a0 - sum(a for a, _ in nb), 6 * b0 - sum(b for _, b in nb)

    assert residual(0, 0) == (-2 * sec.a.den, 0)
    for m, n in TRIANGULAR.region(12):
        if (m, n) != (0, 0):
            assert residual(m, n) == (0, 0), (m, n)


def test_sector_is_a_prefix_of_larger_sectors_and_of_single_sites():
    small, big = Sector.for_extent(10), Sector.for_extent(25)
    for m, n in TRIANGULAR.region(10):
        assert small.form(m, n).coeffs == big.form(m, n).coeffs
    for site in [(25, 0), (25, 25), (17, 9), (-30, 4)]:
        c = TRIANGULAR.canonical(site)
        want = Sector.for_extent(c[0]).form(*c).coeffs
        assert resistance_form(*site).coeffs == want


def test_exact_vs_batch_quadrature_over_the_region_at_40_digits():
    # our two independent methods, every site of the sector up to extent 24
    rep = check_region("triangular", 24, 40, progress=False)
    assert rep.sites == 325 and rep.failures == [] and rep.worst_agreement == 40
    assert rep.far_checks > 250


def test_exact_vs_batch_quadrature_at_the_far_end_of_the_extent_200_table():
    sec = Sector.for_extent(200)
    for m, ns in [(200, [0, 1, 77, 199, 200]), (143, [0, 71, 143])]:
        nums, dens = reduce_column([sec.nums(m, n) for n in ns], sec.dens)
        ev = FixedPointEvaluator(BASIS, dens, 45)
        q = tq.reduced_batch([tq.pair(-n, m + n) for n in ns], 45)
        for k in range(len(ns)):
            assert agreement_digits(ev.evaluate(nums[k]).center, mpf_fraction(q[k]), 45) == 45


@pytest.mark.parametrize("site", [(1, 0), (2, 1), (5, 5), (13, 4)])
def test_adaptive_tanh_sinh_agrees_with_the_panel_rule(site):
    # the per-site adaptive rule on the canonical image (exponent n) against the batch rule
    # on the image (-n, m + n) (exponent m + n): two integrands, two discretisations
    a = tq.reduced_adaptive(*site, 45)
    b = tq.resistance_quad(*site, 45)
    assert agreement_digits(mpf_fraction(a), mpf_fraction(b), 45) >= 44


@pytest.mark.parametrize("digits", [3, 120])
def test_batch_quadrature_at_low_and_high_digits(digits):
    sec = Sector.for_extent(9)
    for m in (1, 4, 9):
        nums, dens = reduce_column([sec.nums(m, n) for n in range(m + 1)], sec.dens)
        ev = FixedPointEvaluator(BASIS, dens, digits)
        q = tq.reduced_batch([tq.pair(-n, m + n) for n in range(m + 1)], digits)
        for n in range(m + 1):
            assert agreement_digits(ev.evaluate(nums[n]).center, mpf_fraction(q[n]),
                                    digits) == digits, (m, n)


def test_float64_quadrature_reaches_13_digits():
    sec = Sector.for_extent(120)
    for m in (1, 7, 60, 120):
        nums, dens = reduce_column([sec.nums(m, n) for n in range(m + 1)], sec.dens)
        ev = FixedPointEvaluator(BASIS, dens, 20)
        f = tq.reduced_batch_float([tq.pair(-n, m + n) for n in range(m + 1)])
        for n in range(m + 1):
            got = F(float(f[n]))
            assert agreement_digits(ev.evaluate(nums[n]).center, got, 20) >= 13, (m, n)


@pytest.mark.parametrize("site", [(1, 0), (2, 1), (9, 0), (40, 13), (120, 120), (200, 0)])
def test_lower_precision_is_rounding_of_higher_and_bound_contains_it(site):
    hi = evaluate_form(resistance_form(*site), 300).rounded.to_fraction()
    for d in (5, 17, 50):
        assert evaluate_form(resistance_form(*site), d).rounded == round_rational(hi, d)
    r = latgreen.resistance("triangular", site, digits=40)
    assert abs(F(r.value) - hi) <= F(r.error_bound) <= abs(hi) * F(1, 10**39)


def test_axis_cancellation_at_m200():
    # |a| ~ 2^750 on the axis: float64 of a + b sqrt3/pi is garbage, the evaluator is not
    a, b = resistance_form(200, 0).coeffs
    assert abs(a) > 10**200
    naive = float(a) + float(b) * math.sqrt(3) / math.pi if abs(a) < 1e300 else math.nan
    r = latgreen.resistance("triangular", (200, 0), digits=50)
    assert not abs(naive - float(r.value)) < 1
    with mpmath.workdps(400):  # direct evaluation with 300 digits to spare
        ref = mpmath.mpf(a.numerator) / a.denominator \
            + mpmath.mpf(b.numerator) / b.denominator * mpmath.sqrt(3) / mpmath.pi
        assert r.value == mpmath.nstr(ref, 50, strip_zeros=False)


def test_far_field_constant_matches_oeis_prefix():
    # OEIS A355954: 0.3344120313924198... (16 digits listed there)
    assert mpmath.nstr(asy.constant_tri(30), 16) == "0.3344120313924198"


def test_far_field_constant_by_extrapolation_of_exact_axis_values():
    # the derived closed form of A against our exact values (a separate derivation):
    # Neville extrapolation in 1/m^2 of R(m,0) - ln(m)/(sqrt3 pi), m = 800, 820, ..., 1400
    # (the expansion has only even powers of 1/m on the axis); agreement 3e-133 when written
    ms = list(range(800, 1401, 20))
    (XA, LA), (XB, LB) = axis_part(_SEEDS[0], 1400), axis_part(_SEEDS[1], 1400)
    old = flint.ctx.prec
    try:
        flint.ctx.prec = 7000
        a = flint.arb
        c, den = a(3).sqrt() / a.pi(), a(3).sqrt() * a.pi()
        ys = [a(XA[m]) / LA + a(XB[m]) / LB * c - a(m).log() / den for m in ms]
    finally:
        flint.ctx.prec = old
    with mpmath.workprec(7000):
        xs = [mpmath.mpf(1) / (m * m) for m in ms]
        P = [mpmath.mpf(y.mid().str(2000, radius=False)) for y in ys]
        for k in range(1, len(xs)):
            for i in range(len(xs) - k):
                P[i] = (xs[i + k] * P[i] - xs[i] * P[i + 1]) / (xs[i + k] - xs[i])
        assert abs(P[0] - asy.constant_tri(150)) < mpmath.mpf(10) ** -120


def test_elementary_integral_of_the_constant_derivation():
    # the two steps of the derivation in methods/triangular_asymptotic.py (ours), by tanh-sinh:
    # int_0^1 [1/sqrt(3 + w^2) - 1/sqrt3] dw / (w sqrt(1 - w^2))
    #   = -(1/sqrt3) int_0^{pi/6} dphi / (sqrt3 + 2 cos phi) = -(1/sqrt3) ln(2/sqrt3)
    # (the first integral with w = sin(theta), which removes the end-point singularity)
    with mpmath.workdps(70):
        r3 = mpmath.sqrt(3)

        def g(th):
            w = mpmath.sin(th)
            return (1 / mpmath.sqrt(3 + w * w) - 1 / r3) / w

        phi = mpmath.quad(lambda p: 1 / (r3 + 2 * mpmath.cos(p)), [0, mpmath.pi / 6])
        assert abs(phi - mpmath.log(2 / r3)) < mpmath.mpf(10) ** -65
        assert abs(mpmath.quad(g, [0, mpmath.pi / 2]) + mpmath.log(2 / r3) / r3) \
            < mpmath.mpf(10) ** -60


def test_far_field_error_estimate_holds_to_extent_120():
    # every sector site with d >= MIN_D and m <= 120: |exact - expansion| <= stated estimate
    sec = Sector.for_extent(120)
    worst = 0.0
    for m in range(asy.MIN_D // 2, 121):
        nums, dens = reduce_column([sec.nums(m, n) for n in range(m + 1)], sec.dens)
        ev = FixedPointEvaluator(BASIS, dens, 30)
        for n in range(m + 1):
            if d2(m, n) < asy.MIN_D**2:
                continue
            v, err = asy.far_field_tri(m, n, 30)
            gap = abs(ev.evaluate(nums[n]).center - mpf_fraction(v))
            assert gap <= mpf_fraction(err), (m, n)
            worst = max(worst, float(gap / mpf_fraction(err)))
    assert 0.05 < worst < 1  # neither violated nor absurdly loose


def test_far_site_beyond_the_exact_range():
    r = latgreen.resistance("triangular", (900, -7), digits=20)
    assert r.exact is None and r.methods == ("quadrature", "asymptotic")
    assert r.canonical_site == (893, 7)
    with pytest.raises(latgreen.InputError, match="at most --digits"):
        latgreen.resistance("triangular", (900, 7), digits=40)


def test_foster_theorem_on_a_finite_patch():
    # Foster, "The average impedance of an electrical network", Contributions to Applied
    # Mechanics (Reissner Anniversary Volume), 333-340 (1949), from memory: on a connected
    # unit-resistor network the resistances across the bonds sum to (nodes - 1).  This checks
    # the finite-network solver of the tests (on a hexagonal patch of our triangular
    # coordinates), not the infinite-lattice values.
    nodes = [(m, n) for m in range(-2, 3) for n in range(-2, 3) if abs(m + n) <= 2]
    edges = [(u, (u[0] + dm, u[1] + dn)) for u in nodes for dm, dn in TRIANGULAR.neighbours
             if (u[0] + dm, u[1] + dn) in nodes and u < (u[0] + dm, u[1] + dn)]
    M = grounded_inverse(nodes, edges)
    assert len(nodes) == 19 and sum(two_point(M, u, v) for u, v in edges) == 18
    # a finite patch conducts worse than the infinite lattice (Rayleigh monotonicity,
    # common practice)
    assert two_point(M, (0, 0), (1, 0)) > F(1, 3)
