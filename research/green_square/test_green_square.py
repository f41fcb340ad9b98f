"""Tests for green_square: known values (with sources), independent methods, prefix and
enclosure checks, bad input. Run: /tmp/v/bin/python -m pytest /work/scratch/green_square"""
from fractions import Fraction
from math import comb

import mpmath
import pytest
from flint import arb, ctx

import green_square as gs
from green_square import (dos, evaluate_exact, green, green00, green11, green_exact_octant,
                          green_quad, local_dos, parse_energy, resistance_exact)


def mpc_of(E: str) -> mpmath.mpc:
    er, ei = parse_energy(E)
    return mpmath.mpc(mpmath.mpf(er.numerator) / er.denominator,
                      mpmath.mpf(ei.numerator) / ei.denominator)


def rel(a, b) -> mpmath.mpf:
    return abs(a - b) / abs(b)


# ---------------------------------------------------------------- parse_energy, bad input

@pytest.mark.parametrize("text, want", [
    ("4.5", (Fraction(9, 2), 0)),
    ("9/2", (Fraction(9, 2), 0)),
    ("-1.25", (Fraction(-5, 4), 0)),
    ("4.1", (Fraction(41, 10), 0)),  # exact decimal, not the binary float 4.1
    ("1.5+0.5j", (Fraction(3, 2), Fraction(1, 2))),
    (" (1.5 + 0.5j) ", (Fraction(3, 2), Fraction(1, 2))),
    ("0.5j", (0, Fraction(1, 2))),
    ("-3+j", (-3, 1)),
    ("1e-3+2e-40j", (Fraction(1, 1000), Fraction(2, 10**40))),
    ("1/3+2/7j", (Fraction(1, 3), Fraction(2, 7))),
])
def test_parse_energy_forms(text, want):
    assert parse_energy(text) == (Fraction(want[0]), Fraction(want[1]))


@pytest.mark.parametrize("text, words", [
    ("4", "resistance"), ("-4", "resistance"), ("4.000", "resistance"), ("8/2", "band edge"),
    ("0", "diverges"), ("0.0+0j", "diverges"),
    ("1.5-0.5j", "retarded"), ("-0.5j", "retarded"),
    ("abc", "cannot parse"), ("1.5+0.5", "cannot parse"), ("", "cannot parse"),
    ("1/0", "cannot parse"), ("1.5j+2", "cannot parse"), ("--1", "cannot parse"),
])
def test_bad_energies(text, words):
    with pytest.raises(ValueError, match=words):
        parse_energy(text)


@pytest.mark.parametrize("bad", [4.5, 1.5 + 0.5j, (1.5, 0.5), None, True])
def test_binary_floats_and_junk_refused(bad):
    with pytest.raises(ValueError):
        green00(bad, 64)


def test_bad_energies_in_every_public_function():
    for call in (lambda: green00("4", 64), lambda: green_quad("-4", 1, 0, 10),
                 lambda: green_exact_octant("0", 3), lambda: dos("4", 10),
                 lambda: local_dos("1-1j", 0, 0, 10), lambda: dos("1+1j", 10)):
        with pytest.raises(ValueError):
            call()
    with pytest.raises(ValueError):
        green_quad("9/2", 1.5, 0, 10)  # site must be integers
    with pytest.raises(ValueError):
        green_exact_octant("9/2", -1)


# ---------------------------------------------------------------- closed form

@pytest.mark.parametrize("E", ["9/2", "-4.5", "40", "1.5+0.5j", "-1.5+0.5j", "0.5j",
                               "-3+2j", "4.000001", "1e-3+1e-3j"])
def test_closed_form_vs_mpmath_ellipk(E):
    """Off the cut G = (2/(pi E)) K(16/E^2), K of parameter m (DLMF 19.2), principal
    branch: mpmath.ellipk is an independent implementation."""
    with mpmath.workdps(50):
        z = mpc_of(E)
        want = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
        got = gs._mpc(green00(E, 200))
        assert rel(got, want) < mpmath.mpf(10) ** -45


def test_closed_form_on_cut_vs_mpmath():
    """E + i0 on the cut: G = (K(q) - i K(1-q))/(2 pi), q = E^2/16 (NOTES.md 2.2), against
    mpmath's ellipk just above the cut (E + i 10^-60, principal formula, DLMF 19.2)."""
    with mpmath.workdps(50):
        for E in ["2.5", "-2.5", "0.1", "-3.99", "1"]:
            z = mpc_of(E) + mpmath.mpc(0, mpmath.mpf(10) ** -60)
            want = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
            got = gs._mpc(green00(E, 200))
            assert rel(got, want) < mpmath.mpf(10) ** -40
            assert got.imag < 0


def test_naive_formula_wrong_on_negative_cut():
    """Regression for the branch: mpmath.ellipk(m > 1) is K(m - i0), so the naive
    (2/(pi E)) K(16/E^2) at real -4 < E < 0 gives Im G > 0 (advanced branch); ours must
    have Im G < 0 (DESIGN.md convention E + i0): the naive value is G(E - i0) = conj G(E + i0)."""
    with mpmath.workdps(30):
        z = mpc_of("-2.5")
        naive = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
        got = gs._mpc(green00("-2.5", 120))
        assert naive.imag > 0 and got.imag < 0
        assert abs(got - mpmath.conj(naive)) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("E", ["40", "30+40j"])
def test_moment_expansion(E):
    """G(E;0,0) = sum_k c_{2k} / E^(2k+1), c_{2k} = binomial(2k,k)^2 (OEIS A002894),
    odd moments 0. Since c_{2k} <= 16^k the tail after K terms is at most
    (16/|E|^2)^K / (|E| (1 - 16/|E|^2))."""
    K = 40
    with mpmath.workdps(60):
        z = mpc_of(E)
        s = sum(comb(2 * k, k) ** 2 / z ** (2 * k + 1) for k in range(K))
        r = 16 / abs(z) ** 2
        tail = r**K / (abs(z) * (1 - r))
        got = gs._mpc(green00(E, 250))
        assert abs(got - s) <= tail + mpmath.mpf(10) ** -58
        assert tail < mpmath.mpf(10) ** -45


def test_green11_moments():
    """G(E;1,1) = sum_N W_N / E^(N+1), W_N = walks of length N from (0,0) to (1,1)
    = C(N, (N+2)/2) C(N, N/2) (common practice: rotated coordinates factorise the walk):
    W_2 = 2, W_4 = 24, W_6 = 300. Checked at E = 1000 where the next term is 300/E^7."""
    with mpmath.workdps(40):
        z = mpmath.mpf(1000)
        got = gs._mpc(green11("1000", 200)).real
        assert abs(got - (2 / z**3 + 24 / z**5)) < 400 / z**7


# ---------------------------------------------------------------- quadrature vs closed form

@pytest.mark.parametrize("E", ["9/2", "-4.5", "1.5+0.5j", "2.5", "-2.5", "0.5j", "0.01",
                               "-3.99", "3.999999", "4.000001", "2.5+1e-8j",
                               "-1.5+1e-12j", "21/10", "-3+2j"])
def test_quad_vs_closed_form_00_11(E):
    """Two independent routes (ours): reduced 1-D quadrature vs elliptic closed forms,
    at sites (0,0) and (1,1), inside the band (+i0), near the real axis and off it."""
    with mpmath.workdps(40):
        assert rel(green_quad(E, 0, 0, 30), gs._mpc(green00(E, 140))) < mpmath.mpf(10) ** -29
        assert rel(green_quad(E, 1, 1, 30), gs._mpc(green11(E, 140))) < mpmath.mpf(10) ** -29


# ---------------------------------------------------------------- exact forms

def test_exact_forms_satisfy_lattice_equation():
    """Structural: E G(r) - sum_nbrs G(r') = delta_{r,0} exactly for every site with
    m <= 11 (symmetry G(m,n) = G(|m|,|n|) = G(n,m)), and real and complex paths agree."""
    E = (Fraction(7, 3), Fraction(2, 5))
    N = 12
    oc = green_exact_octant(E, N)
    e = (gs.mpq(7, 3), gs.mpq(2, 5))

    def get(m, n):
        m, n = abs(m), abs(n)
        return oc[(max(m, n), min(m, n))]

    for m in range(N):
        for n in range(m + 1):
            lhs = []
            for j in range(3):
                x = get(m, n)[j]
                s = (e[0] * x[0] - e[1] * x[1], e[0] * x[1] + e[1] * x[0])
                for dm, dn in ((1, 0), (-1, 0), (0, 1), (0, -1)):
                    y = get(m + dm, n + dn)[j]
                    s = (s[0] - y[0], s[1] - y[1])
                lhs.append(s)
            # coefficient of G00, G11, 1 of (E G - sum) must be (0, 0, delta)
            want = [(0, 0), (0, 0), (1 if (m, n) == (0, 0) else 0, 0)]
            assert lhs == want, (m, n)
    real = gs._octant(Fraction(9, 2), Fraction(0), 15)
    cplx = gs._octant_complex(gs.mpq(9, 2), gs.mpq(0), 15)
    for m, col in enumerate(cplx):
        for n, abc in enumerate(col):
            assert real[(m, n)] == abc


EXACT_SITES = [(1, 0), (2, 1), (7, 2), (10, 0), (10, 7), (10, 10)]


@pytest.mark.parametrize("E", ["9/2", "1.5+0.5j", "2.5"])
def test_exact_vs_quadrature_40_digits(E):
    """Exact form (recurrence, ball evaluation) vs quadrature, 40 digits, sample of the
    octant of extent 10 (the whole octant: test_exact_vs_quadrature_full_octant, slow).
    Two independent methods of ours."""
    oc = green_exact_octant(E, 10)
    with mpmath.workdps(50):
        for s in EXACT_SITES:
            mid, rad = evaluate_exact(oc[s], E, 42)
            q = green_quad(E, s[0], s[1], 45)
            assert rel(q, mid) < mpmath.mpf(10) ** -42, s
            assert rad < abs(mid) * mpmath.mpf(10) ** -44


@pytest.mark.slow
@pytest.mark.parametrize("E", ["9/2", "1.5+0.5j", "2.5", "-4.5"])
def test_exact_vs_quadrature_full_octant(E):
    oc = green_exact_octant(E, 10)
    with mpmath.workdps(50):
        for s, c in oc.items():
            mid, _ = evaluate_exact(c, E, 42)
            assert rel(green_quad(E, s[0], s[1], 45), mid) < mpmath.mpf(10) ** -42, s


@pytest.mark.slow
@pytest.mark.parametrize("E", ["9/2", "1.5+0.5j", "2.5", "-4.5"])
def test_exact_vs_quadrature_far_sites(E):
    oc = green_exact_octant(E, 40)
    with mpmath.workdps(50):
        for s in [(30, 0), (30, 17), (30, 30), (40, 1), (40, 39)]:
            mid, _ = evaluate_exact(oc[s], E, 42)
            assert rel(green_quad(E, s[0], s[1], 45), mid) < mpmath.mpf(10) ** -42, s


def test_octant_200_far_site_is_tiny_and_certified():
    """N = 200 at E = 9/2: the coefficients are ~2^500 while G(200,0) ~ 1e-62, so this only
    works with the size-following precision. Checked against the quadrature to 20 digits
    (the quadrature must raise its precision by the ~26 digits of oscillatory
    cancellation at (200,200); that one is in the slow tests)."""
    oc = green_exact_octant("9/2", 200)
    assert len(oc) == 201 * 202 // 2
    mid, rad = evaluate_exact(oc[(200, 0)], "9/2", 20)
    assert 0 < rad < abs(mid) * mpmath.mpf(10) ** -22
    with mpmath.workdps(30):
        assert rel(green_quad("9/2", 200, 0, 22), mid) < mpmath.mpf(10) ** -20


# ---------------------------------------------------------------- symmetry

@pytest.mark.parametrize("E", ["1.5+0.5j", "2.5", "0.3", "-3+2j"])
def test_bipartite_symmetry(E):
    """G(-E;m,n) = -(-1)^(m+n) G(E;m,n) off the cut (common practice: H -> -H under the
    sublattice sign). With conjugation to stay in Im E >= 0 (G(conj E) = conj G(E)):
    G(-conj E;m,n) = -(-1)^(m+n) conj G(E;m,n); on the cut G(-x+i0) = -(-1)^(m+n) conj G(x+i0).
    Checked with the quadrature, which computes both sides directly."""
    er, ei = parse_energy(E)
    Em = (-er, ei)
    with mpmath.workdps(40):
        for m, n in [(0, 0), (1, 0), (3, 2)]:
            a = green_quad(Em, m, n, 25)
            b = -(-1) ** (m + n) * mpmath.conj(green_quad((er, ei), m, n, 25))
            assert abs(a - b) < mpmath.mpf(10) ** -24 * abs(b)
            # the exact forms use the symmetry internally for E < 0 only via G00, G11
            mid, _ = green(Em, m, n, 25)
            assert abs(mid - a) < mpmath.mpf(10) ** -24 * abs(a)


# ---------------------------------------------------------------- densities of states

def test_dos_sum_rule():
    """int_{-4}^{4} rho(E) dE = 1 (common practice: normalised density of states)."""
    def rho(x):
        man, exp = x.man_exp
        return dos(Fraction(int(man)) * Fraction(2) ** int(exp), 25)
    with mpmath.workdps(25):
        total = mpmath.quad(rho, [-4, 0, 4])
    assert abs(total - 1) < mpmath.mpf(10) ** -20


def test_dos_formula_and_edges():
    """rho(E) = K(1 - E^2/16)/(2 pi^2) inside the band (NOTES.md 2.2); rho(0+) diverges;
    rho = 0 outside."""
    with mpmath.workdps(30):
        x = mpmath.mpf(5) / 2
        assert rel(dos("2.5", 25), mpmath.ellipk(1 - x**2 / 16) / (2 * mpmath.pi**2)) < 1e-24
    assert dos("9/2", 20) == 0 and dos("-5", 20) == 0
    assert dos("0.5", 15) == dos("-0.5", 15)


def test_spectral_representation():
    """G(z;0,0) = int rho(x)/(z - x) dx at z = 1.5 + 0.5j (common practice): links the cut
    formula (dos) to the off-cut formula (green00)."""
    z = mpmath.mpc(1.5, 0.5)

    def f(x):
        man, exp = x.man_exp
        return dos(Fraction(int(man)) * Fraction(2) ** int(exp), 22) / (z - x)
    with mpmath.workdps(22):
        s = mpmath.quad(f, [-4, 0, 1, 1.5, 2, 4])
        assert rel(s, gs._mpc(green00("1.5+0.5j", 120))) < mpmath.mpf(10) ** -18


def test_local_dos_vs_quadrature():
    """-Im G(E+i0;m,n)/pi from the exact form vs the quadrature (two methods of ours)."""
    with mpmath.workdps(40):
        for m, n in [(0, 0), (3, 1), (6, 6), (9, 4)]:
            q = -green_quad("5/2", m, n, 35).imag / mpmath.pi
            assert rel(local_dos("5/2", m, n, 32), q) < mpmath.mpf(10) ** -31
    assert local_dos("-5", 3, 1, 10) == 0


# ---------------------------------------------------------------- resistance limit

# Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), Table I: R = p + q/pi
ATKINSON = {
    (1, 0): ("1/2", "0"), (1, 1): ("0", "2"), (2, 0): ("2", "-4"), (2, 1): ("-1/2", "4"),
    (2, 2): ("0", "8/3"), (3, 0): ("17/2", "-24"), (3, 1): ("-4", "46/3"),
    (3, 2): ("1/2", "4/3"), (3, 3): ("0", "46/15"), (4, 0): ("40", "-368/3"),
    (4, 1): ("-49/2", "80"), (4, 2): ("6", "-236/15"), (4, 3): ("-1/2", "24/5"),
    (4, 4): ("0", "352/105"), (5, 0): ("401/2", "-1880/3"), (5, 1): ("-140", "6646/15"),
    (5, 2): ("97/2", "-2236/15"), (5, 3): ("-8", "998/35"), (5, 4): ("1/2", "40/21"),
    (5, 5): ("0", "1126/315"),
}


def test_resistance_exact_limit_table():
    """Exact band-edge limit of the exact forms (NOTES.md 5) vs Atkinson & van Steenwijk,
    Am. J. Phys. 67, 486 (1999), Table I (R(1,0) = 1/2 is also common practice)."""
    for (m, n), (p, q) in ATKINSON.items():
        assert resistance_exact(m, n) == (Fraction(p), Fraction(q)), (m, n)
        assert resistance_exact(n, m) == resistance_exact(m, n)


def test_resistance_diagonal_formula():
    """R(n,n) = (2/pi) sum_{i=1..n} 1/(2i-1) (Atkinson & van Steenwijk 1999; Cserti,
    Am. J. Phys. 68, 896 (2000))."""
    for k in range(1, 40):
        assert resistance_exact(k, k) == (0, 2 * sum(Fraction(1, 2 * i - 1)
                                                    for i in range(1, k + 1)))


def test_resistance_far_axis_value():
    """R(106,0) = 1.999103258858... (OEIS A355955), evaluated with a ball (the rational part
    is ~5.83^106: float64 would return noise)."""
    p, q = resistance_exact(106, 0)
    assert abs(p) > 10**70
    prec = 600
    old = ctx.prec
    try:
        ctx.prec = prec
        r = arb(gs.fmpq(p.numerator, p.denominator)) + arb(
            gs.fmpq(q.numerator, q.denominator)) / arb.pi()
        assert r.rad() < arb(10) ** -30
        assert abs(r - arb("1.999103258858")) < arb(10) ** -12
    finally:
        ctx.prec = old


@pytest.mark.parametrize("site", [(1, 0), (1, 1), (2, 0), (3, 1)])
def test_resistance_numerical_approach(site):
    """2[G(E;0,0) - G(E;m,n)] -> R(m,n) as E -> 4+, with E = 4 + 10^-k: the error shrinks
    like (E - 4) log(1/(E - 4)). R from Atkinson & van Steenwijk (1999), Table I."""
    p, q = (Fraction(s) for s in ATKINSON[site])
    with mpmath.workdps(60):
        R = mpmath.mpf(p.numerator) / p.denominator + (
            mpmath.mpf(q.numerator) / q.denominator) / mpmath.pi
        errs = []
        for k in (4, 8, 16):
            E = (Fraction(4) + Fraction(1, 10**k), Fraction(0))
            g0, _ = green(E, 0, 0, 50)
            gr, _ = green(E, site[0], site[1], 50)
            errs.append(abs(2 * (g0 - gr).real - R))
        for k, err in zip((4, 8, 16), errs, strict=True):
            assert err < mpmath.mpf(10) ** -(k - 3), (k, err)
        assert errs[0] > errs[1] > errs[2]


# ---------------------------------------------------------------- precision, enclosure

def test_prefix_and_enclosure_exact():
    """Digits at higher precision are a prefix of the lower-precision ones, and the
    low-precision ball contains the high-precision value."""
    for E in ["9/2", "1.5+0.5j", "2.5"]:
        oc = green_exact_octant(E, 25)
        for s in [(25, 3), (17, 17), (4, 0)]:
            lo, rlo = evaluate_exact(oc[s], E, 30)
            hi, rhi = evaluate_exact(oc[s], E, 80)
            assert abs(hi - lo) <= rlo
            assert rhi < rlo
            with mpmath.workdps(90):
                assert mpmath.nstr(lo, 30) == mpmath.nstr(hi, 30)


def test_prefix_and_enclosure_balls():
    for E in ["9/2", "1.5+0.5j", "2.5", "-0.3"]:
        lo, hi = green00(E, 100), green00(E, 400)
        assert lo.contains(hi) and hi.rad() < lo.rad()
        lo, hi = green11(E, 100), green11(E, 400)
        assert lo.contains(hi)


def test_prefix_quadrature():
    with mpmath.workdps(70):
        lo = green_quad("2.5", 7, 3, 30)
        hi = green_quad("2.5", 7, 3, 60)
        assert mpmath.nstr(lo, 28) == mpmath.nstr(hi, 28)
        assert rel(lo, hi) < mpmath.mpf(10) ** -29


def test_dos_prefix():
    with mpmath.workdps(60):
        assert mpmath.nstr(dos("1.3", 20), 18) == mpmath.nstr(dos("1.3", 50), 18)


@pytest.mark.slow
def test_octant_200_diagonal_vs_quadrature():
    """(200,200) at E = 9/2: G ~ 1.4e-88, coefficients ~2^500, quadrature cancels ~26 digits."""
    oc = green_exact_octant("9/2", 200)
    for s in [(200, 200), (200, 100)]:
        mid, _ = evaluate_exact(oc[s], "9/2", 30)
        with mpmath.workdps(40):
            assert rel(green_quad("9/2", s[0], s[1], 32), mid) < mpmath.mpf(10) ** -30


def test_quadrature_far_site_regression():
    """Regression: with mpmath's absolute tolerance the quadrature returned G(9/2;150,0)
    ~ 1e-52 with only 8 correct digits; the rescaled passes must give 25."""
    mid, _ = green("9/2", 150, 0, 27)
    with mpmath.workdps(35):
        assert rel(green_quad("9/2", 150, 0, 25), mid) < mpmath.mpf(10) ** -24


def test_zero_and_uncertifiable_values_refused():
    """A value that is 0 cannot be given to relative digits: ValueError, not a number."""
    z = (gs.mpq(0), gs.mpq(0))
    with pytest.raises(ValueError, match="exactly 0"):
        evaluate_exact((z, z, z), "9/2", 10)
    # a ball that always contains 0 (G00 - G00): the precision loop must give up
    with pytest.raises(ValueError, match="could not certify"):
        gs._certify(lambda extra: (green00("9/2", 64 + extra) - green00("9/2", 64 + extra),
                                   64 + extra), 10, "G00 - G00")
    one, mone = (gs.mpq(1), gs.mpq(0)), (gs.mpq(-1), gs.mpq(0))
    with pytest.raises(ValueError, match="digits"):
        evaluate_exact((one, mone, z), "9/2", 0)
