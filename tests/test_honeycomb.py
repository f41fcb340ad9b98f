"""Honeycomb lattice: geometry, published values, exact forms, independent methods."""

from __future__ import annotations

import itertools
from fractions import Fraction as F

import mpmath
import pytest

import latgreen
from finite_network import grounded_inverse, two_point
from latgreen.exact import honeycomb as eh
from latgreen.exact.evaluate import FixedPointEvaluator, evaluate_form
from latgreen.lattices.honeycomb import _STAB, HONEYCOMB, distance2, from_thirds, thirds
from latgreen.methods import honeycomb_quadrature as hq
from latgreen.methods import triangular_asymptotic as asy
from latgreen.quantities import mpf_fraction
from latgreen.rounding import agreement_digits, round_rational
from latgreen.tables.make import check_region


def neighbours(m: int, n: int, s: int) -> list[tuple[int, int, int]]:
    # DESIGN.md: the neighbours of A(0,0) are B(0,0), B(-1,0), B(0,-1)
    if s == 0:
        return [(m, n, 1), (m - 1, n, 1), (m, n - 1, 1)]
    return [(m, n, 0), (m + 1, n, 0), (m, n + 1, 0)]


def test_bonds_have_length_one_and_are_symmetric():
    assert HONEYCOMB.z == 3
    for x in [(0, 0, 0), (2, -1, 1), (-3, 4, 0)]:
        for y in neighbours(*x):
            u, v = thirds(*x)
            p, q = thirds(*y)
            assert F((u - p) ** 2 + (u - p) * (v - q) + (v - q) ** 2, 3) == 1
            assert x in neighbours(*y)


def test_canonical_is_constant_on_orbits_and_the_region_is_complete():
    for x in itertools.product(range(-6, 7), range(-6, 7), (0, 1)):
        c = HONEYCOMB.canonical(x)
        assert distance2(c) == distance2(x) and c[2] == x[2]
        for g in _STAB:
            u, v = thirds(*x)
            y = from_thirds(g[0][0] * u + g[0][1] * v, g[1][0] * u + g[1][1] * v)
            assert HONEYCOMB.canonical(y) == c
    for N in (0, 1, 4, 7):
        seen = {HONEYCOMB.canonical(x) for x in itertools.product(
            range(-3 * N - 3, 3 * N + 4), range(-3 * N - 3, 3 * N + 4), (0, 1))}
        assert list(HONEYCOMB.region(N)) == sorted(c for c in seen if c[0] <= N)
        assert HONEYCOMB.region_size(N) == len(list(HONEYCOMB.region(N)))


def test_hexagon_centre_is_not_a_site():
    with pytest.raises(latgreen.InputError, match="not a honeycomb site"):
        from_thirds(-1, -1)


def test_nearest_and_second_neighbours():
    # nearest neighbours 2/z = 2/3: common practice; second neighbours (the six A sites at
    # distance sqrt 3) R = 1: Markowsky & Palacios, arXiv:1602.06002
    assert str(eh.resistance_form(-1, 0, 1)) == "2/3"
    for x in [(1, 0, 0), (0, 1, 0), (-1, 1, 0), (0, -1, 0)]:
        assert str(eh.resistance_form(*x)) == "1"
    r = latgreen.resistance("honeycomb", (1, -1, 0), digits=30)
    assert r.value == "1." + "0" * 29 and r.agreement_digits == 30


def test_lattice_equation_holds_exactly_on_both_sublattices():
    # 3 R(x) - sum over the three neighbours = 0 off the origin, -2 at it (unit current)
    sites = list(HONEYCOMB.region(10))
    need = {HONEYCOMB.canonical(y) for x in sites for y in neighbours(*x)} | set(sites)
    R = dict(zip(need, eh.forms_at(need), strict=True))

    def residual(x: tuple[int, int, int]) -> tuple[F, ...]:
        r = [F(3) * c for c in R[HONEYCOMB.canonical(x)].coeffs]
        for y in neighbours(*x):
            r = [a - b for a, b in zip(r, R[HONEYCOMB.canonical(y)].coeffs, strict=True)]
        return tuple(r)

    assert residual((0, 0, 0)) == (-2, 0)
    for x in sites[1:]:
        assert residual(x) == (0, 0), x


def test_columns_agree_with_single_site_forms():
    for col in eh.columns(12):
        if col.m in (0, 5, 12):
            for k, x in enumerate(col.sites):
                assert col.form(k).coeffs == eh.resistance_form(*x).coeffs


def test_exact_vs_brillouin_zone_quadrature_over_the_region_at_40_digits():
    # our two independent methods, every canonical site up to extent 10
    rep = check_region("honeycomb", 10, 40, progress=False)
    assert rep.sites == 162 and rep.failures == [] and rep.worst_agreement == 40


def test_exact_vs_quadrature_at_the_far_end_of_the_extent_60_table():
    col = list(eh.columns(60))[60]
    ev = FixedPointEvaluator(eh.BASIS, col.dens, 50)
    q = hq.quad_sites(col.sites, 50)
    for k in range(len(col.sites)):
        assert agreement_digits(ev.evaluate(col.nums[k]).center, mpf_fraction(q[k]), 50) == 50


@pytest.mark.parametrize("site", [(0, 0, 1), (2, -1, 1), (3, 2, 0)])
def test_adaptive_tanh_sinh_agrees_with_the_panel_rule(site):
    a = hq.quad_adaptive(site, 40)
    b = hq.quad_sites([site], 40)[0]
    assert agreement_digits(mpf_fraction(a), mpf_fraction(b), 40) >= 39


@pytest.mark.parametrize("digits", [3, 120])
def test_quadrature_at_low_and_high_digits(digits):
    for col in eh.columns(7):
        if col.m in (0, 1, 7):
            ev = FixedPointEvaluator(eh.BASIS, col.dens, digits)
            q = hq.quad_sites(col.sites, digits)
            for k, x in enumerate(col.sites):
                if any(x):
                    got = agreement_digits(ev.evaluate(col.nums[k]).center, mpf_fraction(q[k]),
                                           digits)
                    assert got == digits, x


def test_float64_quadrature_reaches_13_digits():
    for col in eh.columns(80):
        if col.m in (1, 33, 80):
            ev = FixedPointEvaluator(eh.BASIS, col.dens, 20)
            f = hq.quad_float_sites(col.sites)
            for k in range(len(col.sites)):
                got = F(f[k])
                assert agreement_digits(ev.evaluate(col.nums[k]).center, got, 20) >= 13


@pytest.mark.parametrize("site", [(0, 0, 1), (1, 1, 1), (7, -4, 1), (50, 20, 0)])
def test_lower_precision_is_rounding_of_higher_and_bound_contains_it(site):
    hi = evaluate_form(eh.resistance_form(*site), 300).rounded.to_fraction()
    for d in (5, 17, 50):
        assert evaluate_form(eh.resistance_form(*site), d).rounded == round_rational(hi, d)
    r = latgreen.resistance("honeycomb", site, digits=40)
    assert abs(F(r.value) - hi) <= F(r.error_bound) <= abs(hi) * F(1, 10**39)


def test_far_field_error_estimate_holds_to_extent_80():
    worst = 0.0
    for col in eh.columns(80):
        ev = FixedPointEvaluator(eh.BASIS, col.dens, 30)
        for k, x in enumerate(col.sites):
            if distance2(x) < asy.MIN_D**2:
                continue
            v, err = asy.far_field_hc(*x, 30)
            gap = abs(ev.evaluate(col.nums[k]).center - mpf_fraction(v))
            assert gap <= mpf_fraction(err), x
            worst = max(worst, float(gap / mpf_fraction(err)))
    assert 0.05 < worst < 1


def test_far_field_constant_relation():
    # R_A = 3 R_tri at d_hc = sqrt3 d_tri: 3 A - (sqrt3/(2 pi)) ln 3 = (sqrt3/pi)(gamma + ln 2)
    # (our derivation; a consistency check of the two expansions' constants)
    with mpmath.workdps(60):
        lhs = 3 * asy.constant_tri(50) - mpmath.sqrt(3) * mpmath.log(3) / (2 * mpmath.pi)
        rhs = mpmath.sqrt(3) * (mpmath.euler + mpmath.ln2) / mpmath.pi
        assert abs(lhs - rhs) < mpmath.mpf(10) ** -45


def test_foster_theorem_on_a_finite_patch():
    # Foster, Contributions to Applied Mechanics (Reissner Anniversary Volume), 333-340
    # (1949), from memory: the bond resistances of a connected unit-resistor network sum to
    # (nodes - 1).  Checks the finite-network solver on a honeycomb patch, not the
    # infinite-lattice values.
    nodes = sorted({(m, n, s) for m in range(-1, 2) for n in range(-1, 2) for s in (0, 1)})
    edges = [(x, y) for x in nodes if x[2] == 0 for y in neighbours(*x) if y in nodes]
    M = grounded_inverse(nodes, edges)
    assert sum(two_point(M, u, v) for u, v in edges) == len(nodes) - 1
