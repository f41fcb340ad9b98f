"""Tests for honeycomb.py (sources beside every check value)."""
from fractions import Fraction as F
import itertools

import mpmath
import pytest

import honeycomb as H
import network
import triangular as T


def test_geometry():
    assert H.Z == 3 and H.BAND == (-3, 3)                                     # DESIGN.md
    assert H.neighbours(0, 0, 0) == [(0, 0, 1), (-1, 0, 1), (0, -1, 1)]       # DESIGN.md
    for x in [(0, 0, 0), (2, -1, 1), (-3, 4, 0)]:                             # bond length 1
        for y in H.neighbours(*x):
            u, v = H.thirds(*x)
            p, q = H.thirds(*y)
            assert F((u - p) ** 2 + (u - p) * (v - q) + (v - q) ** 2, 3) == 1
            assert x in H.neighbours(*y)


def test_point_group_maps_the_lattice_to_itself():
    G = H.point_group()
    assert len(G) == 12 and sum(e[1] for e in G) == 6      # six exchange A and B
    sites = [(m, n, s) for m in range(-3, 4) for n in range(-3, 4) for s in (0, 1)]
    for e in G:
        for x in sites:
            y = H.apply(e, x)
            assert (y[2] != x[2]) == e[1]
            assert sorted(H.apply(e, z) for z in H.neighbours(*x)) == sorted(H.neighbours(*y))


def test_canonical_is_constant_on_orbits_of_the_stabiliser():
    sites = [(m, n, s) for m in range(-6, 7) for n in range(-6, 7) for s in (0, 1)]
    for x in sites:
        c = H.canonical(*x)
        assert H.distance2(*c) == H.distance2(*x) and c[2] == x[2]
        for g in H._STAB:
            u, v = H.thirds(*x)
            y = H.from_thirds(g[0][0] * u + g[0][1] * v, g[1][0] * u + g[1][1] * v)
            assert H.canonical(*y) == c
    assert H.canonical(-1, 0, 1) == H.canonical(0, -1, 1) == (0, 0, 1)


@pytest.mark.parametrize("bad", [(0, 0, 2), (0, 0, -1), (1.0, 0, 0), (0, 0, True), (0, "1", 1)])
def test_invalid_sites_rejected(bad):
    with pytest.raises(ValueError):
        H.canonical(*bad)
    with pytest.raises(ValueError):
        H.resistance_quad(*bad, dps=20)


def test_hexagon_centre_is_not_a_site():
    with pytest.raises(ValueError, match="not a honeycomb site"):
        H.from_thirds(-1, -1)


def test_published_values():
    R = H.resistance_exact(2)
    assert R[(0, 0, 1)] == (F(2, 3), 0)          # nearest neighbours 2/z (common practice)
    # second neighbours R = 1 (Markowsky & Palacios, arXiv:1602.06002)
    for x in [(1, 0, 0), (0, 1, 0), (-1, 1, 0)]:
        assert R[H.canonical(*x)] == (1, 0)


def test_lattice_equation_on_both_sublattices():
    R = H.resistance_exact(12)
    assert H.lattice_residual(R, 0, 0, 0) == (-2, 0)
    for x in H.sector_sites(10)[1:]:
        assert H.lattice_residual(R, *x) == (0, 0), x


def test_relative_uses_translation_and_sublattice_exchange():
    R = H.resistance_exact(6)
    assert H.relative((0, 0, 1), (0, 0, 0)) == (0, 0, 1)
    assert H.relative((5, 5, 1), (3, 3, 1)) == (2, 2, 0)
    # by symmetry, R(x, y) = R(y, x)
    for x, y in [((1, 2, 1), (-2, 3, 0)), ((0, 0, 1), (3, -1, 1)), ((2, 0, 0), (-1, -2, 1))]:
        assert R[H.relative(x, y)] == R[H.relative(y, x)]


def test_exact_vs_quadrature_40_digits():
    # two independent methods of ours (lattice relations vs honeycomb Brillouin-zone integral)
    R = H.resistance_exact(4)
    sites = [x for x in H.sector_sites(3) if x != (0, 0, 0)][::3] + [(4, 4, 1), (4, -2, 1)]
    with mpmath.workdps(60):
        for x in sites:
            q = H.resistance_quad(*x, dps=45)
            mid, _ = T.evaluate(*R[x], 50)
            assert abs(q - mid) < mpmath.mpf(10) ** -40 * mid, x


def test_foster_theorem_on_a_finite_patch():
    # Foster, Contributions to Applied Mechanics (Reissner Anniversary Volume), pp. 333-340
    # (1949), from memory: sum over bonds of R_bond = nodes - 1 for any connected unit-resistor
    # network.  Checks the finite-network solver, not the infinite-lattice values.
    nodes = sorted({y for m in range(-1, 2) for n in range(-1, 2)
                    for y in [(m, n, 0), (m, n, 1)]})
    edges = [(x, y) for x in nodes if x[2] == 0 for y in H.neighbours(*x) if y in nodes]
    M = network.grounded_inverse(nodes, edges)
    assert sum(network.two_point(M, u, v) for u, v in edges) == len(nodes) - 1
