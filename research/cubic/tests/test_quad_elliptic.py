"""(B) quadrature and (D) G(E;0) closed forms, DOS."""
from math import comb

import mpmath
import pytest

import cubic
import elliptic
import quad


@pytest.mark.parametrize("lattice", ["sc", "bcc", "fcc"])
def test_quadrature_origin_matches_watson_gamma_form(lattice):
    # two independent methods: Gamma-function form (Glasser & Zucker 1977, A091670, Watson
    # 1939) vs our reduced polar quadrature, 45 digits
    q = quad.green_edge_quad(lattice, (0, 0, 0), 45)
    g = cubic.green_edge_origin(lattice, 60)
    with mpmath.workdps(70):
        assert abs(q - mpmath.mpf(g.str(60, radius=False))) < mpmath.mpf(10) ** -45


@pytest.mark.parametrize("lattice,site,z", [("sc", (0, 1, 0), 6), ("bcc", (1, -1, 1), 8),
                                            ("fcc", (0, 1, 1), 12)])
def test_resistance_nearest_neighbours_quadrature(lattice, site, z):
    # R = 2/z between nearest neighbours (common practice)
    r = quad.resistance_quad(lattice, site, 30)
    with mpmath.workdps(40):
        assert abs(r - mpmath.mpf(2) / z) < mpmath.mpf(10) ** -30


def test_quadrature_higher_precision_prefix():
    a = quad.green_edge_quad("bcc", (2, 2, 0), 25)
    b = quad.green_edge_quad("bcc", (2, 2, 0), 45)
    with mpmath.workdps(50):
        assert abs(a - b) < mpmath.mpf(10) ** -25


def test_quadrature_rejects_bad_input():
    with pytest.raises(ValueError):
        quad.green_edge_quad("fcc", (1, 0, 0), 20)
    with pytest.raises(ValueError):
        quad.green_quad("sc", (0, 0, 0), 20, E="3")      # inside the band
    with pytest.raises(ValueError):
        quad.green_quad("sc", (0, 0, 0), 20, E=7.0)      # binary float


@pytest.mark.parametrize("lattice,E", [("sc", "6.5+1j"), ("sc", "-3+2j"), ("sc", "7"),
                                       ("bcc", "1+3j"), ("bcc", "-2+2j"), ("bcc", "-9"), ("bcc", "8")])
def test_closed_form_vs_quadrature_complex_energy(lattice, E):
    a = elliptic.green_origin(lattice, E, 25)
    b = quad.green_quad(lattice, (0, 0, 0), 18, E=E)
    with mpmath.workdps(30):
        assert abs(a - b) < mpmath.mpf(10) ** -17


def _walks_sc(n):
    # closed 2n-step walks on sc: C(2n,n) sum_k C(n,k)^2 C(2k,k)  (OEIS A002896)
    return comb(2 * n, n) * sum(comb(n, k) ** 2 * comb(2 * k, k) for k in range(n + 1))


def test_large_energy_series():
    # G(E;0) = sum_n a_n E^-(2n+1): sc a_n from OEIS A002896, bcc a_n = C(2n,n)^3 (A002897)
    with mpmath.workdps(40):
        E = mpmath.mpf(40)
        ssc = sum(_walks_sc(n) / E ** (2 * n + 1) for n in range(40))
        sbc = sum(mpmath.mpf(comb(2 * n, n)) ** 3 / E ** (2 * n + 1) for n in range(40))
        assert abs(elliptic.green_origin("sc", "40", 30) - ssc) < mpmath.mpf(10) ** -28
        assert abs(elliptic.green_origin("bcc", "40", 30) - sbc) < mpmath.mpf(10) ** -28


def test_band_edge_closed_form_equals_watson():
    for lattice in ("sc", "bcc"):
        a = elliptic.green_origin(lattice, str(cubic.coordination(lattice)), 40)
        g = cubic.green_edge_origin(lattice, 50)
        with mpmath.workdps(50):
            assert abs(a - mpmath.mpf(g.str(45, radius=False))) < mpmath.mpf(10) ** -40


@pytest.mark.parametrize("lattice,pts,m4", [("sc", [-6, -2, 0, 2, 6], 90),
                                           ("bcc", [-8, 0, 8], 216)])
def test_dos_sum_rules(lattice, pts, m4):
    # int rho = 1, int E^2 rho = z, int E^4 rho = closed 4-step walks
    # (sc 90: OEIS A002896; bcc 216 = C(4,2)^3: OEIS A002897)
    z = cubic.coordination(lattice)
    with mpmath.workdps(15):
        f = lambda e: elliptic.dos(lattice, e, 12)
        assert abs(mpmath.quad(f, pts) - 1) < 1e-10
        assert abs(mpmath.quad(lambda e: e ** 2 * f(e), pts) - z) < 1e-8
        assert abs(mpmath.quad(lambda e: e ** 4 * f(e), pts) - m4) < 1e-7


def test_dos_sc_against_square_convolution():
    # rho_sc(E) = (1/pi) int_0^pi rho_sq(E - 2 cos w) dw with the square-lattice DOS
    # rho_sq(x) = K(1 - x^2/16) / (2 pi^2) (common practice; K with parameter m, DLMF 19.2)
    E = mpmath.mpf(3)
    with mpmath.workdps(20):
        def rsq(x):
            return mpmath.ellipk(1 - x ** 2 / 16) / (2 * mpmath.pi ** 2) if abs(x) < 4 else 0
        w0 = mpmath.acos((E - 4) / 2)
        val = mpmath.quad(lambda w: rsq(E - 2 * mpmath.cos(w)), [0, w0]) / mpmath.pi
        assert abs(elliptic.dos("sc", "3", 15) - val) < 1e-14


def test_E_plus_i0_sign_and_symmetry():
    for lattice in ("sc", "bcc"):
        g = elliptic.green_origin(lattice, "3", 20)
        h = elliptic.green_origin(lattice, "-3", 20)
        assert mpmath.im(g) < 0 and mpmath.im(h) < 0
        with mpmath.workdps(30):
            assert abs(h + mpmath.conj(g)) < mpmath.mpf(10) ** -25
    with pytest.raises(ValueError):
        elliptic.green_origin("bcc", "0", 20)
    with pytest.raises(ValueError):
        elliptic.green_origin("fcc", "13", 20)
