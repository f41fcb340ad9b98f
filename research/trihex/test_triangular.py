"""Tests for triangular.py (sources beside every check value)."""
from fractions import Fraction as F
import itertools
import math
import time

import mpmath
import pytest

import network
import triangular as T

# Atkinson & van Steenwijk, Am. J. Phys. 67, 486-492 (1999), p. 489, converted to our
# 60-degree coordinates as listed in /work/shared/REFERENCES.md.  Values R = a + b sqrt3/pi.
ATKINSON_1999 = {
    (1, 0): (F(1, 3), F(0)),        # 1/3
    (1, 1): (F(-2, 3), F(2)),       # 2 sqrt3/pi - 2/3
    (2, 0): (F(8, 3), F(-4)),       # 8/3 - 4 sqrt3/pi
    (2, 1): (F(-5), F(10)),         # 10 sqrt3/pi - 5
    (3, 0): (F(27), F(-48)),        # 27 - 48 sqrt3/pi
    (2, 2): (F(16), F(-28)),        # 16 - 28 sqrt3/pi
}


def test_point_group_is_a_group_of_12_isometries():
    G = T.point_group()
    assert len({g for g in G}) == 12
    for g in G:   # preserves m^2 + mn + n^2 and maps neighbours to neighbours
        for m, n in itertools.product(range(-3, 4), repeat=2):
            p, q = g[0][0] * m + g[0][1] * n, g[1][0] * m + g[1][1] * n
            assert T.distance2(p, q) == T.distance2(m, n)
        imgs = {(g[0][0] * a + g[0][1] * b, g[1][0] * a + g[1][1] * b) for a, b in T.NEIGHBOURS}
        assert imgs == set(T.NEIGHBOURS)
    for g, h in itertools.product(G, G):   # closed under composition
        gh = tuple(tuple(sum(g[i][k] * h[k][j] for k in range(2)) for j in range(2)) for i in range(2))
        assert gh in G


def test_geometry_constants():
    assert T.Z == len(T.NEIGHBOURS) == 6 and T.BAND == (-3, 6)      # DESIGN.md conventions
    assert T.distance2(1, 1) == 3 and T.distance2(2, 1) == 7          # DESIGN.md: sqrt3, sqrt7


def test_canonical_is_in_sector_and_constant_on_orbits():
    for m, n in itertools.product(range(-7, 8), repeat=2):
        c = T.canonical(m, n)
        assert 0 <= c[1] <= c[0] and T.distance2(*c) == T.distance2(m, n)
        for g in T.point_group():
            assert T.canonical(g[0][0] * m + g[0][1] * n, g[1][0] * m + g[1][1] * n) == c
    assert T.sector_sites(2) == [(0, 0), (1, 0), (1, 1), (2, 0), (2, 1), (2, 2)]
    assert T.extent(-3, 1) == 2 and T.extent(0, -2) == 2 and T.extent(-4, 1) == 3  # (2,1),(2,0),(3,1)


@pytest.mark.parametrize("bad", [(1.0, 0), (1, "2"), (True, 0), (None, 1)])
def test_invalid_sites_rejected(bad):
    with pytest.raises(ValueError, match="integers"):
        T.canonical(*bad)
    with pytest.raises(ValueError):
        T.resistance_quad(*bad, dps=20)


def test_invalid_arguments_rejected():
    for bad in (-1, 2.0, True):
        with pytest.raises(ValueError, match="extent"):
            T.resistance_exact(bad)
        with pytest.raises(ValueError, match="extent"):
            T.sector_sites(bad)
    with pytest.raises(ValueError, match="digits"):
        T.evaluate(1, 1, 0)
    with pytest.raises(ValueError, match="dps"):
        T.resistance_quad(1, 0, 2)


def test_published_values():
    R = T.resistance_exact(3)
    for site, ab in ATKINSON_1999.items():
        assert R[site] == ab, site


def test_nearest_neighbour_is_two_over_z():
    # R(nn) = 2/z on any lattice with all sites equivalent (common practice, superposition)
    assert T.resistance_exact(1)[(1, 0)] == (F(2, T.Z), 0)


def test_lattice_equation_holds_on_the_table():
    R = T.resistance_exact(14)
    assert T.lattice_residual(R, 0, 0) == (-2, 0)    # current 1 injected at the origin
    for m, n in T.sector_sites(12):
        if (m, n) != (0, 0):
            assert T.lattice_residual(R, m, n) == (0, 0), (m, n)


def test_table_is_a_prefix_of_larger_tables():
    small, big = T.resistance_exact(10), T.resistance_exact(25)
    assert all(big[k] == v for k, v in small.items())
    assert set(big) == set(T.sector_sites(25))


def test_exact_table_speed():
    t = time.perf_counter()
    T.resistance_exact(60)
    assert time.perf_counter() - t < 1.0


def test_exact_vs_quadrature_region_45_digits():
    # two independent methods of ours (recurrence vs reduced 1-D integral)
    R = T.resistance_exact(5)
    with mpmath.workdps(60):
        for site in T.sector_sites(5)[1:]:
            q = T.resistance_quad(*site, dps=50)
            mid, rad = T.evaluate(*R[site], 55)
            assert abs(q - mid) < mpmath.mpf(10) ** -45 * mid, site


def test_exact_vs_quadrature_far_sites_45_digits():
    R = T.resistance_exact(30)
    with mpmath.workdps(60):
        for site in [(30, 0), (30, 17), (29, 29)]:
            q = T.resistance_quad(*site, dps=50)
            mid, _ = T.evaluate(*R[site], 55)
            assert abs(q - mid) < mpmath.mpf(10) ** -45 * mid, site


def test_quadrature_digits_are_a_prefix():
    with mpmath.workdps(80):
        lo = T.resistance_quad(4, 1, dps=30)
        hi = T.resistance_quad(4, 1, dps=60)
        assert abs(lo - hi) < mpmath.mpf(10) ** -28


def test_ball_contains_higher_precision_value_and_digits_are_prefix():
    R = T.resistance_exact(200)
    for site in [(200, 0), (200, 200), (150, 77), (3, 0)]:
        a, b = R[site]
        m1, r1 = T.evaluate(a, b, 30)
        m2, r2 = T.evaluate(a, b, 120)
        with mpmath.workprec(2000):
            assert abs(m2 - m1) <= r1 + r2
            assert r1 < mpmath.mpf(10) ** -31 * abs(m1)
        s30, s120 = T.decimal(a, b, 30), T.decimal(a, b, 120)
        assert len(s30.replace(".", "").lstrip("0")) == 30
        # correctly rounded 30 digits may differ from the 120-digit prefix only by rounding
        assert abs(F(s30) - F(s120)) <= F(1, 2) * F(10) ** (-29) * 10


def test_axis_cancellation_at_m200():
    # regression: a + b sqrt3/pi at m = 200 has |a| ~ 2^750; float64 would give garbage
    a, b = T.resistance_exact(200)[(200, 0)]
    assert abs(a) > F(10) ** 200
    mid, rad = T.evaluate(a, b, 40)
    assert 1.2 < float(mid) < 1.4            # far field: ln(200)/(sqrt3 pi) + 0.334 = 1.308
    assert float(a + b * F(math.sqrt(3) / math.pi)) != pytest.approx(float(mid), rel=1e-3)


def test_foster_theorem_on_a_finite_patch():
    # Foster, "The average impedance of an electrical network", Contributions to Applied
    # Mechanics (Reissner Anniversary Volume), pp. 333-340 (1949), from memory: on a connected network
    # with unit resistors, sum over bonds of R_bond = (number of nodes - 1).  Checks the exact
    # finite-network solver in network.py only, not the infinite-lattice values.
    nodes = [(m, n) for m in range(-2, 3) for n in range(-2, 3) if abs(m + n) <= 2]
    edges = [(u, (u[0] + dm, u[1] + dn)) for u in nodes for dm, dn in T.NEIGHBOURS
             if (u[0] + dm, u[1] + dn) in nodes and u < (u[0] + dm, u[1] + dn)]
    M = network.grounded_inverse(nodes, edges)
    total = sum(network.two_point(M, u, v) for u, v in edges)
    assert len(nodes) == 19 and total == len(nodes) - 1
    # patch values exceed the infinite-lattice ones (Rayleigh monotonicity)
    assert network.two_point(M, (0, 0), (1, 0)) > F(1, 3)


@pytest.mark.slow
def test_exact_vs_quadrature_at_extent_200_40_digits():
    # two independent methods of ours at the far end of the extent-200 table
    a, b = T.resistance_exact(200)[(200, 77)]
    with mpmath.workdps(60):
        q = T.resistance_quad(200, 77, dps=45)
        mid, _ = T.evaluate(a, b, 50)
        assert abs(q - mid) < mpmath.mpf(10) ** -40 * mid
