"""The green quantity (square lattice): energies, closed forms, exact forms, quadrature,
densities of states, the band-edge limit, precision and enclosures.

Conventions (DESIGN.md): hopping +1, G(E;r) = <0|(E-H)^-1|r>, E + i0 on the band."""

from __future__ import annotations

from fractions import Fraction
from math import comb

import mpmath
import pytest
from flint import acb, arb

import latgreen
from latgreen.energy import Energy, parse_energy, parse_energy_grid
from latgreen.errors import InputError
from latgreen.exact import square_green as sg
from latgreen.exact.complex_eval import certify_complex
from latgreen.methods.square_green_closed import basis_balls, dos_ball
from latgreen.methods.square_green_quadrature import green_quad
from latgreen.rounding import round_rational


def mpc_of(E: str) -> mpmath.mpc:
    e = parse_energy(E)
    return mpmath.mpc(mpmath.mpf(e.re.numerator) / e.re.denominator,
                      mpmath.mpf(e.im.numerator) / e.im.denominator)


def mp_of_acb(x: acb) -> mpmath.mpc:
    """The exact centre of a ball as an mpmath number (at the caller's precision)."""
    def f(a: arb) -> mpmath.mpf:
        man, exp = (int(v) for v in a.mid().man_exp())
        with mpmath.workprec(max(53, man.bit_length() + 2)):
            return mpmath.mpf((man, exp)) if man else mpmath.mpf(0)
    return mpmath.mpc(f(x.real), f(x.imag))


def rel(a, b):
    return abs(a - b) / abs(b)


def fmp(x: Fraction) -> mpmath.mpf:
    """A Fraction at the current mpmath precision."""
    return mpmath.mpf(x.numerator) / x.denominator


def frac(x: mpmath.mpf) -> Fraction:
    sign, man, exp, _ = x._mpf_
    v = Fraction(int(man)) * Fraction(2) ** int(exp) if man else Fraction(0)
    return -v if sign else v


# ------------------------------------------------------------------------------ energies

@pytest.mark.parametrize(("text", "want"), [
    ("4.5", (Fraction(9, 2), 0)),
    ("9/2", (Fraction(9, 2), 0)),
    ("-4.5", (Fraction(-9, 2), 0)),
    ("4.1", (Fraction(41, 10), 0)),  # exact decimal, not the binary float 4.1
    ("1.5+0.5j", (Fraction(3, 2), Fraction(1, 2))),
    (" (1.5 + 0.5i) ", (Fraction(3, 2), Fraction(1, 2))),
    ("0.5j", (0, Fraction(1, 2))),
    ("-3+j", (-3, 1)),
    ("1e-3+2e-40j", (Fraction(1, 1000), Fraction(2, 10**40))),
    ("1/3+2/7j", (Fraction(1, 3), Fraction(2, 7))),
])
def test_energy_forms(text, want):
    e = parse_energy(text)
    assert (e.re, e.im) == (Fraction(want[0]), Fraction(want[1]))


@pytest.mark.parametrize(("text", "words"), [
    ("4", "resistance"), ("-4", "resistance"), ("4.000", "resistance"), ("8/2", "band edge"),
    ("0", "band centre"), ("0.0+0j", "band centre"),
    ("1.5-0.5j", "negative imaginary"), ("-0.5j", "negative imaginary"),
    ("abc", "cannot parse"), ("1.5+0.5", "cannot parse"), ("", "cannot parse"),
    ("1/0", "cannot parse"), ("1.5j+2", "cannot parse"), ("--1", "cannot parse"),
    ("1e999999999", "too long"), ("1+1e-999999j", "too long"), ("1" * 500, "too long"),
])
def test_bad_energies(text, words):
    with pytest.raises(InputError, match=words):
        parse_energy(text)


@pytest.mark.parametrize("bad", [4.5, 1.5 + 0.5j, None, True, (1, 2)])
def test_binary_floats_and_junk_refused(bad):
    with pytest.raises(InputError):
        latgreen.green("square", (1, 0), energy=bad, digits=10)


def test_energy_grid():
    g = parse_energy_grid("0.5:3.5:7")
    assert [str(e) for e in g] == ["0.5", "1", "1.5", "2", "2.5", "3", "3.5"]
    with pytest.raises(InputError, match="band centre"):
        parse_energy_grid("-1:1:3")  # hits E = 0
    with pytest.raises(InputError, match="A:B:COUNT"):
        parse_energy_grid("1:2")


# ------------------------------------------------------------------------------ closed forms

@pytest.mark.parametrize("E", ["9/2", "-4.5", "40", "1.5+0.5j", "-1.5+0.5j", "0.5j",
                               "-3+2j", "4.000001", "1e-3+1e-3j"])
def test_closed_form_vs_mpmath_ellipk(E):
    """Off the cut G = (2/(pi E)) K(16/E^2), K of parameter m (DLMF 19.2), principal branch:
    mpmath.ellipk is an implementation independent of flint's."""
    g00, _ = basis_balls(parse_energy(E), 200)
    with mpmath.workdps(50):
        z = mpc_of(E)
        want = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
        assert rel(mp_of_acb(g00), want) < mpmath.mpf(10) ** -45


def test_cut_formula_vs_mpmath_just_above_the_cut():
    """E + i0: G = (K(q) - i K(1-q))/(2 pi), q = E^2/16 (methods/square_green_closed.py),
    against mpmath's principal formula at E + 10^-60 i (DLMF 19.2)."""
    with mpmath.workdps(50):
        for E in ["2.5", "-2.5", "0.1", "-3.99", "1"]:
            g00, _ = basis_balls(parse_energy(E), 200)
            z = mpc_of(E) + mpmath.mpc(0, mpmath.mpf(10) ** -60)
            want = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
            got = mp_of_acb(g00)
            assert rel(got, want) < mpmath.mpf(10) ** -40
            assert got.imag < 0  # retarded: Im G(E + i0; 0) <= 0 (DESIGN.md)


def test_naive_formula_wrong_on_negative_cut():
    """Regression for the branch: mpmath.ellipk(m > 1) is K(m - i0), so the naive formula at
    real -4 < E < 0 gives conj G(E + i0) (advanced, Im > 0); ours must be retarded."""
    g00, _ = basis_balls(parse_energy("-2.5"), 120)
    with mpmath.workdps(30):
        z = mpc_of("-2.5")
        naive = 2 / (mpmath.pi * z) * mpmath.ellipk(16 / z**2)
        got = mp_of_acb(g00)
        assert naive.imag > 0 and got.imag < 0
        assert abs(got - mpmath.conj(naive)) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("E", ["40", "30+40j"])
def test_moment_expansion(E):
    """G(E;0,0) = sum_k c_2k / E^(2k+1), c_2k = binomial(2k,k)^2 (OEIS A002894), odd
    moments 0.  c_2k <= 16^k bounds the tail after K terms by (16/|E|^2)^K/(|E|(1-16/|E|^2))."""
    K = 40
    g00, _ = basis_balls(parse_energy(E), 250)
    with mpmath.workdps(60):
        z = mpc_of(E)
        s = sum(comb(2 * k, k) ** 2 / z ** (2 * k + 1) for k in range(K))
        r = 16 / abs(z) ** 2
        tail = r**K / (abs(z) * (1 - r))
        assert abs(mp_of_acb(g00) - s) <= tail + mpmath.mpf(10) ** -58
        assert tail < mpmath.mpf(10) ** -45


def test_green11_moments():
    """G(E;1,1) = sum_N W_N / E^(N+1), W_N = walks of length N from (0,0) to (1,1)
    = C(N, (N+2)/2) C(N, N/2) (common practice: rotated coordinates factorise the walk):
    W_2 = 2, W_4 = 24; at E = 1000 the next term is 300/E^7 (W_6 = 300)."""
    _, g11 = basis_balls(parse_energy("1000"), 200)
    with mpmath.workdps(40):
        z = mpmath.mpf(1000)
        assert abs(mp_of_acb(g11).real - (2 / z**3 + 24 / z**5)) < 400 / z**7


@pytest.mark.parametrize("E", ["9/2", "1.5+0.5j", "-2.5", "0.5j", "3.999999", "2.5+1e-8j"])
def test_quadrature_vs_closed_forms(E):
    """Two independent routes of ours: reduced 1-D quadrature vs the elliptic closed forms,
    at (0,0) and (1,1): off the cut, on it (+i0), near it and near the band edge."""
    e = parse_energy(E)
    g00, g11 = basis_balls(e, 120)
    with mpmath.workdps(30):
        assert rel(green_quad(e, 0, 0, 20), mp_of_acb(g00)) < mpmath.mpf(10) ** -19
        assert rel(green_quad(e, 1, 1, 20), mp_of_acb(g11)) < mpmath.mpf(10) ** -19


# ------------------------------------------------------------------------------ exact forms

def test_exact_forms_satisfy_the_lattice_equation():
    """E G(r) - sum_nbrs G(r') = delta_(r,0), exactly, at every site with m <= 11 (symmetry
    G(m,n) = G(|m|,|n|) = G(n,m)) at a Gaussian-rational energy: the coefficient of G00, G11
    and 1 of the left side must be (0, 0, delta)."""
    E = parse_energy("7/3+2/5j")
    N = 12
    oc = {(m, n): f.coeffs for m, col in sg.columns(E, N) for n, f in enumerate(col)}

    def get(m, n):
        m, n = abs(m), abs(n)
        return oc[(max(m, n), min(m, n))]

    for m in range(N):
        for n in range(m + 1):
            for j in range(3):
                x = get(m, n)[j]
                s = (E.re * x[0] - E.im * x[1], E.re * x[1] + E.im * x[0])
                for dm, dn in ((1, 0), (-1, 0), (0, 1), (0, -1)):
                    y = get(m + dm, n + dn)[j]
                    s = (s[0] - y[0], s[1] - y[1])
                want = (1 if (j == 2 and (m, n) == (0, 0)) else 0, 0)
                assert s == want, (m, n, j)


def test_real_and_complex_recurrences_agree():
    """The real path (one rational per coefficient) and the Gaussian-rational path give the
    same forms where both apply (the complex path with Im E = 0 is reached directly)."""
    E = parse_energy("9/2")
    real = [f.coeffs for _, col in sg.columns(E, 15) for f in col]
    cplx = [tuple((Fraction(int(x[0].numerator), int(x[0].denominator)),
                   Fraction(int(x[1].numerator), int(x[1].denominator))) for x in abc)
            for col in sg._columns_complex(sg.mpq(9, 2), sg.mpq(0), 15) for abc in col]
    assert real == cplx


OCTANT_ENERGIES = ["9/2", "1.5+0.5j", "2.5", "-4.5", "0.5j"]


@pytest.mark.parametrize("E", OCTANT_ENERGIES)
def test_exact_vs_quadrature_over_an_octant(E):
    """Exact forms (certified balls) vs the quadrature, 40 digits per component, at every
    site of the octant of extent 3 for real E (outside the band and on it), of extent 2 at
    1.5+0.5j and 1 at 0.5j (slower quadrature off the axis; (1,0), (1,1) cover both parities
    of the symmetry zeros).  Two independent methods of ours."""
    e = parse_energy(E)
    with mpmath.workdps(60):
        for m, col in sg.columns(e, 3 if e.is_real else 2 if e.re else 1):
            for n, f in enumerate(col):
                v = sg.evaluate(f, e, (m, n), 40)
                q = green_quad(e, m, n, 46)
                for c, x, z in zip(v.center, (q.real, q.imag), sg.zero_parts(e, m, n),
                                   strict=True):
                    if z:
                        assert c == 0 and abs(x) < mpmath.mpf(10) ** -44 * abs(q)
                    else:
                        c = fmp(c)
                        assert abs(c - x) < mpmath.mpf(10) ** -41 * abs(c), (m, n)


def test_far_site_with_cancellation():
    """(60, 7) at E = 9/2: the coefficients are ~2^150 while G ~ 1e-19, so only the
    size-following precision certifies it; vs the quadrature to 25 digits (ours)."""
    e = parse_energy("9/2")
    for s in [(60, 7)]:
        f = sg.green_form(e, *s)
        assert f.size_bits() > 120
        v = sg.evaluate(f, e, s, 25)
        with mpmath.workdps(40):
            q = green_quad(e, s[0], s[1], 28)
            assert rel(q.real, fmp(v.center[0])) < mpmath.mpf(10) ** -25


def test_octant_200_is_certified():
    """Extent 200 at E = 9/2: G(200,200) ~ 1e-88 from coefficients ~2^500 (about 250 digits
    cancel); the ball must still certify 40 digits and be positive (G > 0 for real E > 4:
    every term of the walk expansion is positive, common practice)."""
    e = parse_energy("9/2")
    f = sg.green_form(e, 200, 200)
    assert f.size_bits() > 450
    v = sg.evaluate(f, e, (200, 200), 40)
    assert v.re.sign > 0 and len(v.re.digits) == 40 and v.re.exp < -80 and str(v.im) == "0"


# ------------------------------------------------------------------------------ symmetries

@pytest.mark.parametrize("E", ["1.5+0.5j", "2.5", "0.3", "-3+2j"])
def test_bipartite_symmetry(E):
    """G(-conj E; m,n) = -(-1)^(m+n) conj G(E; m,n) (the sublattice sign maps H to -H, and
    G(conj E) = conj G(E): common practice).  Exact forms at both energies, to 30 digits."""
    e = parse_energy(E)
    f = parse_energy(f"{-e.re}+{e.im}j" if e.im else str(-e.re))
    for m, n in [(0, 0), (1, 0), (3, 2), (7, 4)]:
        a = sg.evaluate(sg.green_form(f, m, n), f, (m, n), 30)
        b = sg.evaluate(sg.green_form(e, m, n), e, (m, n), 30)
        sgn = -((-1) ** (m + n))  # G(-conj E) = sgn * conj G(E)
        assert a.re == (b.re if sgn > 0 else _neg(b.re)), (m, n)
        assert a.im == (_neg(b.im) if sgn > 0 else b.im), (m, n)


def _neg(r):
    from latgreen.rounding import Rounded
    return Rounded(-r.sign, r.digits, r.exp) if r.digits else r


def test_components_zero_by_symmetry_print_as_zero():
    """Im G = 0 for real E outside the band; at E = iy, Re G = 0 for m+n even and Im G = 0
    for m+n odd (module docstring of exact/square_green.py): printed as 0, bound 0."""
    g = latgreen.green("square", (2, 1), energy="9/2", digits=15)
    assert g.value_im == "0" and g.error_bound_im == "0" and g.value.endswith("+0j")
    g = latgreen.green("square", (2, 0), energy="0.5j", digits=15)
    assert g.value_re == "0" and g.value_im.startswith("-")
    g = latgreen.green("square", (1, 0), energy="0.5j", digits=15)
    assert g.value_im == "0" and g.value_re != "0"


def test_a_component_that_never_certifies_is_refused():
    """A ball whose component always contains 0 (and is not declared 0 by symmetry) must give
    PrecisionError, never digits."""
    e = parse_energy("9/2")

    def build(bits):
        g00, _ = basis_balls(e, bits)
        return g00 - g00

    with pytest.raises(latgreen.PrecisionError, match="could not certify"):
        certify_complex(build, 64, 10, (False, True), "G00 - G00")


# ------------------------------------------------------------------------------ DOS

def test_dos_sum_rule():
    """int_{-4}^{4} rho(E) dE = 1 (common practice: the density of states per site is
    normalised); rho(x) = K(1 - x^2/16)/(2 pi^2) as balls at tanh-sinh nodes."""
    def rho(x):
        b = dos_ball(abs(frac(x)), 100)
        return mp_of_acb(acb(b)).real
    with mpmath.workdps(25):
        total = 2 * mpmath.quad(rho, [0, 4])
    assert abs(total - 1) < mpmath.mpf(10) ** -20


def test_spectral_representation():
    """G(z;0,0) = int rho(x)/(z - x) dx at z = 1.5 + 0.5j (common practice): ties the cut
    formula (dos) to the off-cut formula (closed form)."""
    z = mpmath.mpc(1.5, 0.5)

    def f(x):
        b = dos_ball(abs(frac(x)), 90)
        return mp_of_acb(acb(b)).real / (z - x)
    g00, _ = basis_balls(parse_energy("1.5+0.5j"), 120)
    with mpmath.workdps(22):
        s = mpmath.quad(f, [-4, 0, 1, 1.5, 2, 4])
        assert rel(s, mp_of_acb(g00)) < mpmath.mpf(10) ** -18


def test_dos_api():
    """rho(2.5) = K(1 - 2.5^2/16)/(2 pi^2) (formula of methods/square_green_closed.py, DLMF
    19.2 for K) against mpmath.ellipk; 0 outside the band; even in E; prefix property."""
    r = latgreen.dos("square", energy="2.5", digits=30)
    with mpmath.workdps(40):
        want = mpmath.ellipk(1 - mpmath.mpf(2.5) ** 2 / 16) / (2 * mpmath.pi**2)
        assert abs(mpmath.mpf(r.value) - want) <= mpmath.mpf(r.error_bound)
    assert r.methods == ("closed-form", "quadrature") and r.energy == "2.5"
    assert latgreen.dos("square", energy="-2.5", digits=30).value == r.value
    assert latgreen.dos("square", energy="9/2", digits=10).value == "0"
    hi = latgreen.dos("square", energy="2.5", digits=50)
    assert str(round_rational(Fraction(hi.value), 30)) == r.value
    with pytest.raises(InputError, match="real energies"):
        latgreen.dos("square", energy="1+1j", digits=10)


def test_local_dos_vs_quadrature():
    """-Im G(E+i0;m,n)/pi from the exact form vs the quadrature (two methods of ours); an
    off-diagonal local density can be negative."""
    r = latgreen.local_dos("square", (3, 1), energy="5/2", digits=25)
    with mpmath.workdps(40):
        q = -green_quad(parse_energy("5/2"), 3, 1, 30).imag / mpmath.pi
        assert abs(mpmath.mpf(r.value) - q) < mpmath.mpf(10) ** -25
    assert r.value.startswith("-")


# ------------------------------------------------------------------------------ band edge

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


def test_band_edge_limit_is_the_resistance():
    """lim_(E->4+) 2[G(0) - G(r)] (DESIGN.md) from the exact forms vs Atkinson & van
    Steenwijk, Am. J. Phys. 67, 486 (1999), Table I, exactly."""
    for (m, n), (p, q) in ATKINSON.items():
        assert sg.band_edge_limit(m, n) == (Fraction(p), Fraction(q)), (m, n)


@pytest.mark.parametrize("site", [(1, 0), (2, 0), (3, 1)])
def test_resistance_approached_from_above_the_band(site):
    """2[G(E;0,0) - G(E;m,n)] -> R(m,n) as E -> 4+ at E = 4 + 10^-k: the error shrinks like
    (E - 4) log(1/(E - 4)).  R from Atkinson & van Steenwijk (1999), Table I."""
    p, q = (Fraction(s) for s in ATKINSON[site])
    errs = []
    with mpmath.workdps(50):
        R = mpmath.mpf(p.numerator) / p.denominator + (
            mpmath.mpf(q.numerator) / q.denominator) / mpmath.pi
        for k in (4, 8, 16):
            # closer to the band edge than the API's 1e-8 limit: the exact forms are
            # evaluated at an Energy built directly
            e = Energy(Fraction(4) + Fraction(1, 10**k), Fraction(0))
            g0 = sg.evaluate(sg.green_form(e, 0, 0), e, (0, 0), 40)
            gr = sg.evaluate(sg.green_form(e, *site), e, site, 40)
            errs.append(abs(2 * (fmp(g0.center[0]) - fmp(gr.center[0])) - R))
    for k, err in zip((4, 8, 16), errs, strict=True):
        assert err < mpmath.mpf(10) ** -(k - 3), (k, err)
    assert errs[0] > errs[1] > errs[2]


# ------------------------------------------------------------------------------ precision

@pytest.mark.parametrize("E", ["9/2", "1.5+0.5j", "2.5"])
def test_higher_precision_is_a_refinement(E):
    """At 60 digits each component rounds back to the 30-digit value, and the 30-digit
    component bounds contain the 60-digit centre (enclosure)."""
    e = parse_energy(E)
    for s in [(25, 3), (17, 17), (4, 0)]:
        f = sg.green_form(e, *s)
        lo, hi = sg.evaluate(f, e, s, 30), sg.evaluate(f, e, s, 60)
        for a, b, c in ((lo.re, hi.re, hi.center[0]), (lo.im, hi.im, hi.center[1])):
            if not a.digits:
                assert not b.digits
                continue
            assert round_rational(b.to_fraction(), 30) == a
            assert abs(a.to_fraction() - c) <= Fraction(a.half_ulp())


def test_ball_enclosures_nest():
    for E in ["9/2", "1.5+0.5j", "2.5", "-0.3"]:
        e = parse_energy(E)
        (a0, a1), (b0, b1) = basis_balls(e, 100), basis_balls(e, 400)
        assert a0.contains(b0) and a1.contains(b1) and b0.rad() < a0.rad()


def test_api_result():
    g = latgreen.green("square", (-1, 3), energy="1.5+0.5j", digits=30)
    assert g.canonical_site == (3, 1) and str(g.energy) == "1.5+0.5j"
    assert g.methods == ("recurrence", "quadrature") and g.agreement_digits == 30
    assert complex(g.value) == complex(float(g.value_re), float(g.value_im))
    with mpmath.workdps(60):  # g.mpc carries the printed decimals at digits + 5
        assert abs(g.mpc - mpmath.mpc(g.value_re, g.value_im)) < mpmath.mpf(10) ** -34
    assert str(g.exact) == str(sg.green_form(parse_energy("1.5+0.5j"), 3, 1))
    d = g.to_json()
    for key in ("lattice", "quantity", "site", "canonical_site", "digits", "value", "exact",
                "exact_how", "error_bound", "methods", "agreement_digits", "notes", "energy",
                "value_re", "value_im", "error_bound_re", "error_bound_im"):
        assert key in d


def test_tiny_band_energy_is_resolved():
    """Regression: at E = 10^-30 the argument 1 - E^2/16 of K must not round to 1 (K(1) is
    infinite); rho = K(1 - E^2/16)/(2 pi^2) vs mpmath.ellipk at 100 digits (DLMF 19.2)."""
    x = Fraction(1, 10**30)
    b = dos_ball(x, 100)
    with mpmath.workdps(100):
        want = mpmath.ellipk(1 - fmp(x) ** 2 / 16) / (2 * mpmath.pi**2)
        assert rel(mp_of_acb(acb(b)).real, want) < mpmath.mpf(10) ** -25


def test_small_component_gets_its_own_digits():
    """Im G(4.5 + 10^-20 i; 2, 1) is ~10^-20 |G|: it is still printed with 20 significant
    digits of its own, and the quadrature confirms both components (it runs with the ~20
    extra digits the ratio needs).  Its sign: Im G(x + i eps) ~ eps G'(x) < 0 for x > 4
    where G decreases in E (G'(E) = -<0|(E-H)^-2|r> and every walk term is positive, common
    practice)."""
    g = latgreen.green("square", (2, 1), energy="4.5+1e-20j", digits=20)
    re_, im = Fraction(g.value_re), Fraction(g.value_im)
    assert im < 0 and abs(im) < abs(re_) * Fraction(1, 10**19)
    assert len(g.value_im.split("e")[0].replace("-", "").replace(".", "").lstrip("0")) == 20
    assert g.agreement_digits == 20


def test_worker_check_job_matches_the_api():
    """The independent check of a table batch as a worker process computes it (the energy
    travels as text and the provider is rebuilt there)."""
    from latgreen.tables.workers import check_job

    E = parse_energy("1.5+0.5j")
    (re_, im), = check_job(("square", "green", str(E), [(2, 1)], 15, True))
    v = sg.evaluate(sg.green_form(E, 2, 1), E, (2, 1), 15)
    assert abs(re_ - v.center[0]) < Fraction(1, 10**16) * abs(v.center[0])
    assert abs(im - v.center[1]) < Fraction(1, 10**16) * abs(v.center[1])


def test_symmetry_zero_check_works_below_float_range():
    """Regression: the check that a symmetry-zero component of the quadrature is negligible
    used a float64 |G|, which underflows for far sites (G ~ 1e-400); it is exact now."""
    from latgreen.quantities.green_api import component_agreement

    tiny = Fraction(1, 10**400)
    assert component_agreement((Fraction(0), 3 * tiny), (tiny / 10**30, 3 * tiny),
                               (True, False), 20) == 20
    assert component_agreement((Fraction(0), 3 * tiny), (tiny, 3 * tiny),
                               (True, False), 20) == 0
