"""Tests for green.py (sources beside every check value)."""
from fractions import Fraction as F
import functools

import mpmath
import pytest
from flint import acb, arb, ctx

import green as G
import triangular as T


@functools.lru_cache(maxsize=None)
def walks(steps, nmax):
    """Closed-walk counts w_0..w_nmax by dynamic programming on the lattice (our own count;
    the moments of H: G(E;0) = sum_n w_n / E^(n+1) for |E| > band radius, common practice)."""
    cur = {(0, 0): 1}
    out = [1]
    for _ in range(nmax):
        nxt = {}
        for (x, y), c in cur.items():
            for dx, dy in steps:
                key = (x + dx, y + dy)
                nxt[key] = nxt.get(key, 0) + c
        cur = nxt
        out.append(cur.get((0, 0), 0))
    return out


def as_mpc(g: acb) -> mpmath.mpc:
    return mpmath.mpc(g.real.mid().str(80, radius=False), g.imag.mid().str(80, radius=False))


def test_walk_counts_sanity():
    # first counts of closed walks on the triangular lattice: 1, 0, 6, 12, 90
    # (OEIS A002898, from memory; also 6 = z and 12 = 2 x number of triangles at a site)
    assert walks(T.NEIGHBOURS, 4) == [1, 0, 6, 12, 90]


@pytest.mark.parametrize("E", ["60", "-45", ("40", "30"), ("-30", "-41")])
def test_closed_form_vs_moment_series_40_digits(E):
    # moment series from our own walk counts: an independent derivation of G off the band
    w = walks(T.NEIGHBOURS, 70)
    g = G.green_tri(E, 40)
    with mpmath.workdps(60):
        re_, im_ = G.energy(E)
        z = mpmath.mpc(mpmath.mpf(re_.numerator) / re_.denominator,
                       mpmath.mpf(im_.numerator) / im_.denominator)
        series = mpmath.fsum(c / z ** (n + 1) for n, c in enumerate(w))
        assert abs(as_mpc(g) - series) < mpmath.mpf(10) ** -40 * abs(series)


@pytest.mark.parametrize("E", ["7", "-5", "-3.5", "1", "-2.5", "5.9", "0", "-1.99", "-2.01",
                               ("2", "1/10"), ("-1", "-3"), ("-2.5", "1/1000"), ("-3", "2"),
                               ("8", "-2")])
def test_closed_form_vs_quadrature_40_digits(E):
    # two independent methods of ours: elliptic closed form (arb ball) vs reduced 1-D integral
    g = G.green_tri(E, 42)
    with mpmath.workdps(60):
        q = G.green_quad(E, 0, 0, 45)
        assert abs(as_mpc(g) - q) < mpmath.mpf(10) ** -40 * abs(q)


def test_im_g_nonpositive_in_band_and_real_outside():
    for E in ["-2.9", "-2.2", "-1.5", "0", "3", "5.99"]:
        assert G.green_tri(E, 20).imag < 0
    for E in ["6.01", "50", "-3.01", "-100"]:
        g = G.green_tri(E, 20)
        assert g.imag.contains(0) and not g.real.contains(0)


def test_conjugation_symmetry_and_limit_onto_the_band():
    a = G.green_tri(("1/3", "1/2"), 30)
    b = G.green_tri(("1/3", "-1/2"), 30)
    assert a.conjugate().overlaps(b)
    # the off-band formula at E + i 10^-40 joins the in-band formula at E + i0
    for E in ["1", "-2.5", "5.9", "-1/3"]:
        x, y = G.green_tri(E, 30), G.green_tri((E, "1e-40"), 30)
        assert abs(as_mpc(x) - as_mpc(y)) < 1e-35


def test_higher_precision_ball_is_inside_and_digits_are_prefix():
    for E in ["1", ("-1", "-3"), "-2.5", "9"]:
        lo, hi = G.green_tri(E, 20), G.green_tri(E, 60)
        assert lo.contains(hi)
        assert lo.real.rad() < 1e-21 * abs(lo.real.mid()) + 1e-21
    assert ctx.prec == 53


@pytest.mark.parametrize("bad", [1.5, 2j, "abc", "1/0", None, ("1", "2j"), True])
def test_invalid_energy_rejected(bad):
    with pytest.raises(ValueError):
        G.green_tri(bad, 10)


@pytest.mark.parametrize("E", ["-3", "-2", "6"])
def test_singular_energies_rejected(E):
    with pytest.raises(ValueError, match="singularity|van Hove"):
        G.green_tri(E, 10)
    with pytest.raises(ValueError, match="singularity"):
        G.green_quad(E, 0, 0, 10)


def test_energy_parsing():
    assert G.energy("4.1") == (F(41, 10), 0)          # DESIGN.md: "4.1" means 41/10
    assert G.energy("1/2+3/10j") == (F(1, 2), F(3, 10))
    assert G.energy("-2.5-0.1j") == (F(-5, 2), F(-1, 10))
    assert G.energy(("1", "-1/3")) == (1, F(-1, 3))


def test_lattice_equation_for_quadrature_off_origin():
    # (E - H) G = delta: E G(0) - 6 G(1,0) = 1 and
    # E G(1,0) - G(0,0) - G(2,0) - 2 G(1,1) - 2 G(1,0) = 0  (neighbours of (1,0), canonical)
    for E in [("1", "1/2"), "1.5", "8"]:
        with mpmath.workdps(40):
            g = {s: G.green_quad(E, *s, dps=30) for s in [(0, 0), (1, 0), (2, 0), (1, 1)]}
            re_, im_ = G.energy(E)
            z = mpmath.mpc(float(re_), float(im_))   # exact: these are dyadic rationals
            assert abs(z * g[(0, 0)] - 6 * g[(1, 0)] - 1) < 1e-25
            assert abs(z * g[(1, 0)] - g[(0, 0)] - g[(2, 0)] - 2 * g[(1, 1)] - 2 * g[(1, 0)]) < 1e-25


def _exact(x: mpmath.mpf) -> F:
    """The exact dyadic rational value of an mpf (energies passed on exactly)."""
    if x == 0:
        return F(0)
    sign, man, exp, _ = x._mpf_
    return (-1) ** sign * F(int(man)) * F(2) ** int(exp)


def test_dos_sum_rule_and_moments_triangular():
    # integral of rho = 1, first moment = tr H = 0, second moment = z = 6 (common practice)
    def rho(x):
        return mpmath.mpf(G.dos_tri(_exact(x), 20).mid().str(25, radius=False))
    with mpmath.workdps(20):
        m0 = mpmath.quad(rho, [-3, -2, 6])
        m1 = mpmath.quad(lambda x: x * rho(x), [-3, -2, 6])
        m2 = mpmath.quad(lambda x: x * x * rho(x), [-3, -2, 6])
    assert abs(m0 - 1) < 1e-12 and abs(m1) < 1e-12 and abs(m2 - 6) < 1e-11


def test_dos_sum_rule_honeycomb():
    def rho(x):
        return mpmath.mpf(G.dos_hc(_exact(x), 20).mid().str(25, radius=False))
    with mpmath.workdps(20):
        m0 = mpmath.quad(rho, [-3, -1, 0, 1, 3])
        m2 = mpmath.quad(lambda x: x * x * rho(x), [-3, -1, 0, 1, 3])
    assert abs(m0 - 1) < 1e-12 and abs(m2 - 3) < 1e-11


def test_honeycomb_closed_form_vs_moment_series():
    # closed walks A -> A on the honeycomb, counted by our own dynamic programming on the
    # triangular-coordinate cells: steps alternate A->B, B->A
    cur = {(0, 0, 0): 1}
    w = [1]
    for _ in range(80):
        nxt = {}
        for (m, n, s), c in cur.items():
            for y in ([(m, n, 1), (m - 1, n, 1), (m, n - 1, 1)] if s == 0
                      else [(m, n, 0), (m + 1, n, 0), (m, n + 1, 0)]):
                nxt[y] = nxt.get(y, 0) + c
        cur = nxt
        w.append(cur.get((0, 0, 0), 0))
    assert w[:7] == [1, 0, 3, 0, 15, 0, 93]   # OEIS A002893 (1, 3, 15, 93), from memory
    for E in ["40", ("25", "-20")]:
        g = G.green_hc(E, 40)
        re_, im_ = G.energy(E)
        with mpmath.workdps(60):
            z = mpmath.mpc(mpmath.mpf(re_.numerator) / re_.denominator,
                           mpmath.mpf(im_.numerator) / im_.denominator)
            series = mpmath.fsum(c / z ** (n + 1) for n, c in enumerate(w))
            assert abs(as_mpc(g) - series) < mpmath.mpf(10) ** -40 * abs(series)


@pytest.mark.parametrize("E", ["2", "-2", "0.5", "-0.5", ("1", "1/3"), "3.5", ("-2", "-1")])
def test_honeycomb_relation_and_quadrature(E):
    # closed form E G_tri(E^2 - 3) vs quadrature of the honeycomb Bloch integral
    g = G.green_hc(E, 30)
    with mpmath.workdps(50):
        q = G.green_hc_quad(E, (0, 0, 0), 35)
        assert abs(as_mpc(g) - q) < mpmath.mpf(10) ** -30 * abs(q)
    re_, im_ = G.energy(E)
    if im_ == 0 and abs(re_) < 3:
        assert g.imag < 0        # E + i0 convention, both signs of E


def test_honeycomb_lattice_equation_with_quadrature():
    # (E - H) G = delta at A(0,0): E G(A0) - [G(B00) + G(B-10) + G(B0-1)] = 1, the three
    # B neighbours being equivalent
    for E in [("1", "1/2"), "2"]:
        with mpmath.workdps(40):
            gA = G.green_hc_quad(E, (0, 0, 0), 30)
            gB = G.green_hc_quad(E, (0, 0, 1), 30)
            gB2 = G.green_hc_quad(E, (-1, 0, 1), 30)
            re_, im_ = G.energy(E)
            z = mpmath.mpc(float(re_), float(im_))
            assert abs(gB - gB2) < 1e-25
            assert abs(z * gA - 3 * gB - 1) < 1e-25


def test_honeycomb_special_points():
    assert G.green_hc("0", 10).is_zero()         # Dirac point: rho(0) = 0, Re G -> 0
    for E in ["1", "-1", "3", "-3"]:
        with pytest.raises(ValueError, match="singularity"):
            G.green_hc(E, 10)


def test_van_hove_point_real_part_jumps():
    # derived from the in-band formulas (NOTES.md C.2) with K(0) = pi/2 (DLMF 19.6.1):
    # Re G(-2 + 0) = 1/4, Re G(-2 - 0) = -1/2, Im G -> -infinity (logarithmically)
    eps = "1e-80"
    right = G.green_tri(str(F(-2) + F(eps)), 20)
    left = G.green_tri(str(F(-2) - F(eps)), 20)
    assert abs(right.real - arb(1) / 4) < 1e-15 and abs(left.real + arb(1) / 2) < 1e-15
    assert right.imag < -40 and left.imag < -40
