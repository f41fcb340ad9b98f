"""The green, dos and local-dos quantities of the triangular and honeycomb lattices: closed
forms, exact forms, quadrature, densities of states, the band-edge limit, precision,
enclosures, bad input, files and command line.

Conventions (DESIGN.md): hopping +1, G(E;r) = <0|(E-H)^-1|r>, E + i0 on the band; triangular
sites (m, n) in 60-degree coordinates, honeycomb (m, n, s)."""

from __future__ import annotations

import functools
import json
from fractions import Fraction

import mpmath
import pytest
from flint import acb, arb

import latgreen
from conftest import run_cli
from latgreen.energy import Energy, parse_energy, parse_energy_grid
from latgreen.errors import InputError
from latgreen.exact import honeycomb as exact_hc
from latgreen.exact import triangular as exact_tri
from latgreen.exact import trihex_green as tg
from latgreen.lattices.honeycomb import HONEYCOMB
from latgreen.methods.trihex_green_closed import dos_ball, tri_basis
from latgreen.methods.trihex_green_quadrature import tri_quad
from latgreen.quantities import get_provider
from latgreen.rounding import agreement_digits

TRI_STEPS = ((1, 0), (-1, 0), (0, 1), (0, -1), (-1, 1), (1, -1))


def mp_of_acb(x: acb) -> mpmath.mpc:
    """The exact centre of a ball as an mpmath number (at the caller's precision)."""
    def f(a: arb) -> mpmath.mpf:
        man, exp = (int(v) for v in a.mid().man_exp())
        with mpmath.workprec(max(53, man.bit_length() + 2)):
            return mpmath.mpf((man, exp)) if man else mpmath.mpf(0)
    return mpmath.mpc(f(x.real), f(x.imag))


def mpc_of(E: Energy) -> mpmath.mpc:
    return mpmath.mpc(mpmath.mpf(E.re.numerator) / E.re.denominator,
                      mpmath.mpf(E.im.numerator) / E.im.denominator)


def rel(a, b):
    return abs(a - b) / abs(b)


def tri_e(text: str) -> Energy:
    return parse_energy(text, "triangular")


def hc_e(text: str) -> Energy:
    return parse_energy(text, "honeycomb")


# ------------------------------------------------------------------------------ walk counts

@functools.cache
def tri_walks(nmax: int) -> tuple[int, ...]:
    """Closed walks on the triangular lattice by our own dynamic programming (the moments of H:
    G(E;0) = sum_n w_n / E^(n+1) for |E| > 6, common practice)."""
    cur, out = {(0, 0): 1}, [1]
    for _ in range(nmax):
        nxt: dict = {}
        for (x, y), c in cur.items():
            for dx, dy in TRI_STEPS:
                nxt[(x + dx, y + dy)] = nxt.get((x + dx, y + dy), 0) + c
        cur = nxt
        out.append(cur.get((0, 0), 0))
    return tuple(out)


@functools.cache
def hc_walks(nmax: int, target: tuple[int, int, int]) -> tuple[int, ...]:
    """Walks from A(0,0) to ``target`` on the honeycomb (steps A -> B(m,n), B(m-1,n),
    B(m,n-1) and back), by our own dynamic programming."""
    cur, out = {(0, 0, 0): 1}, [1 if target == (0, 0, 0) else 0]
    for _ in range(nmax):
        nxt: dict = {}
        for (m, n, s), c in cur.items():
            for y in ([(m, n, 1), (m - 1, n, 1), (m, n - 1, 1)] if s == 0
                      else [(m, n, 0), (m + 1, n, 0), (m, n + 1, 0)]):
                nxt[y] = nxt.get(y, 0) + c
        cur = nxt
        out.append(cur.get(target, 0))
    return tuple(out)


def test_walk_counts():
    # triangular closed walks 1, 0, 6, 12, 90, 360: OEIS A002898 (from memory; 6 = z and
    # 12 = 2 x the 6 triangles at a site, common practice)
    assert tri_walks(5) == (1, 0, 6, 12, 90, 360)
    # honeycomb closed walks 1, 3, 15, 93, 639 at even lengths: OEIS A002893 (from memory)
    assert hc_walks(8, (0, 0, 0))[::2] == (1, 3, 15, 93, 639)


@pytest.mark.parametrize("E", ["60", "-45", "40+30j", "-30+41j"])
def test_triangular_closed_form_vs_moment_series(E):
    """G00 (R_F closed form, acb ball) against sum_n w_n/E^(n+1) with our own walk counts,
    40 digits; w_n <= 6^n bounds the tail after 80 terms by (6/|E|)^80/(|E| - 6) < 1e-58."""
    e = tri_e(E)
    g0, _ = tri_basis(e.re, e.im, 1, 200)
    with mpmath.workdps(60):
        z = mpc_of(e)
        series = mpmath.fsum(c / z ** (n + 1) for n, c in enumerate(tri_walks(80)))
        assert rel(mp_of_acb(g0), series) < mpmath.mpf(10) ** -40


@pytest.mark.parametrize(("E", "site"), [("40", (0, 0, 0)), ("25+20j", (0, 0, 0)),
                                         ("30+7j", (0, 0, 1)), ("-35", (1, 0, 0))])
def test_honeycomb_exact_forms_vs_moment_series(E, site):
    """Honeycomb exact forms (through G_tri(E^2 - 3)) against walk counts from A(0,0) to the
    site (our own dynamic programming: independent of H^2 = 3 + H_tri and of the B-site
    relation), 40 digits; tail after 90 terms below (3/|E|)^90 < 1e-80."""
    e = hc_e(E)
    f = tg.green_form("honeycomb", e, site)
    g = tg.ball(f, "honeycomb", e, 250)
    with mpmath.workdps(60):
        z = mpc_of(e)
        series = mpmath.fsum(c / z ** (n + 1) for n, c in enumerate(hc_walks(90, site)))
        assert rel(mp_of_acb(g), series) < mpmath.mpf(10) ** -40


# ------------------------------------------------------------------------------ closed forms

@pytest.mark.parametrize("E", ["7", "-5", "-3.5", "1", "-2.5", "5.9", "0", "-1.99", "-2.01",
                               "2+0.1j", "-1+3j", "-2.5+0.001j", "8+2j"])
def test_basis_closed_forms_vs_quadrature_40_digits(E):
    """G00 (R_F / K closed forms) and G20 (Picard-Fuchs: G00 and dG00/dE by R_D / dK/dm)
    against the quadrature of the reduced integral: two independent methods of ours, off the
    band, in both in-band regions (E + i0), complex, and close to the band."""
    e = tri_e(E)
    g0, g2 = tri_basis(e.re, e.im, 1, 200)
    with mpmath.workdps(60):
        assert rel(mp_of_acb(g0), tri_quad(e.re, e.im, 0, 0, 45)) < mpmath.mpf(10) ** -40
        assert rel(mp_of_acb(g2), tri_quad(e.re, e.im, 2, 0, 45)) < mpmath.mpf(10) ** -40


def test_im_g_nonpositive_on_the_band_and_real_outside():
    """Retarded G: Im G(E + i0; 0) <= 0 (DESIGN.md); real off the band."""
    for x in ["-2.9", "-2.2", "-1.5", "0", "3", "5.99"]:
        e = tri_e(x)
        assert tri_basis(e.re, e.im, 1, 100)[0].imag < 0
    for x in ["-2.9", "-1.5", "-0.5", "0.5", "1.5", "2.9"]:  # both signs of E
        e = hc_e(x)
        assert tg.ball(tg.green_form("honeycomb", e, (0, 0, 0)), "honeycomb", e, 100).imag < 0
    for x in ["6.01", "50", "-3.01", "-100"]:
        e = tri_e(x)
        g0, g2 = tri_basis(e.re, e.im, 1, 100)
        assert g0.imag.contains(0) and g2.imag.contains(0) and not g0.real.contains(0)


def test_conjugation_symmetry_and_limit_onto_the_band():
    a = tri_basis(Fraction(1, 3), Fraction(1, 2), 1, 120)
    b = tri_basis(Fraction(1, 3), Fraction(-1, 2), 1, 120)
    assert a[0].conjugate().overlaps(b[0]) and a[1].conjugate().overlaps(b[1])
    # the off-band formulas at E + i 10^-40 join the in-band ones at E + i0 (both regions)
    for x in [Fraction(1), Fraction(-5, 2), Fraction(59, 10)]:
        on = tri_basis(x, Fraction(0), 1, 150)
        near = tri_basis(x, Fraction(1, 10**40), 1, 150)
        with mpmath.workdps(40):
            for u, v in zip(on, near, strict=True):
                assert abs(mp_of_acb(u) - mp_of_acb(v)) < 1e-35


def test_van_hove_real_part_jumps():
    """From the in-band forms with K(0) = pi/2 (DLMF 19.6.1): Re G(-2 + 0) = 1/4,
    Re G(-2 - 0) = -1/2; Im G -> -infinity (logarithmically)."""
    eps = Fraction(1, 10**80)
    right = tri_basis(Fraction(-2) + eps, Fraction(0), 1, 200)[0]
    left = tri_basis(Fraction(-2) - eps, Fraction(0), 1, 200)[0]
    assert abs(right.real - arb(1) / 4) < 1e-15 and abs(left.real + arb(1) / 2) < 1e-15
    assert right.imag < -40 and left.imag < -40


# ------------------------------------------------------------------------------ exact forms

def _check_lattice_equation(lattice: str, E: Energy, N: int) -> None:
    forms = {s: f.coeffs for _, sites, fs in tg.columns(lattice, E, N + 1)
             for s, f in zip(sites, fs, strict=True)}
    lat = latgreen.lattices.get_lattice(lattice)

    def get(site):
        return forms[lat.canonical(site)]

    def mul(e, x):
        return (e.re * x[0] - e.im * x[1], e.re * x[1] + e.im * x[0])

    for site in lat.region(N):
        if lattice == "triangular":
            nbrs = [(site[0] + dm, site[1] + dn) for dm, dn in TRI_STEPS]
        else:
            m, n, s = site
            nbrs = ([(m, n, 1), (m - 1, n, 1), (m, n - 1, 1)] if s == 0
                    else [(m, n, 0), (m + 1, n, 0), (m, n + 1, 0)])
        for j in range(3):
            acc = mul(E, get(site)[j])
            for y in nbrs:
                c = get(y)[j]
                acc = (acc[0] - c[0], acc[1] - c[1])
            want = (Fraction(1 if (j == 2 and not any(site)) else 0), Fraction(0))
            assert acc == want, (site, j)


@pytest.mark.parametrize("lattice", ["triangular", "honeycomb"])
def test_exact_forms_satisfy_the_lattice_equation(lattice):
    """E G(r) - sum_nbrs G(r') = delta_(r,0) exactly for the coefficients of both basis
    functions and of 1, at every canonical site of extent <= 9 (including the diagonal and
    B-site equations never used in the fill), at a Gaussian-rational energy and a real one."""
    for text in ("7/3+2/5j", "-5/2"):
        _check_lattice_equation(lattice, parse_energy(text, lattice), 9)


def test_axis_recurrence_at_e6_is_the_resistance_recurrence():
    """At E = 6 the five-term recurrence's coefficients are those of exact/triangular.py."""
    e = 6
    for m in range(1, 20):
        assert ((e + 2) * (2 * m + 1), (e * e - 6) * m, (e + 2) * (2 * m - 1)) == \
            (16 * m + 8, 30 * m, 16 * m - 8)


def test_band_edge_limit_gives_the_resistances():
    """R(r) = lim_{E -> z} 2[G(E;0) - G(E;r)] (DESIGN.md).  With G(r) = a G00 + b G20 + c
    (a, b, c polynomials in E): 2[G00 - G(r)] = 2[(1 - a - b) G00 + b (G00 - G20) - c], G00 is
    only logarithmically divergent and G00 - G20 -> R(2,0)/2, so when a(6) + b(6) = 1 (checked)
    R(r) = b(6) R(2,0) - 2 c(6), R(2,0) = 8/3 - 4 sqrt3/pi (Atkinson & van Steenwijk,
    Am. J. Phys. 67, 486 (1999), p. 489).  Must equal the resistance exact forms (Atkinson &
    van Steenwijk's values at the first sites; the recurrence of exact/triangular.py beyond).
    The honeycomb likewise at E = 3 with G(0) = E T00 (w = 6)."""
    sec = tg.TriSector(Fraction(6), Fraction(0), 16, 8)
    for m in range(9):
        for n in range(m + 1):
            a, b, c = (Fraction(int(x.numerator), int(x.denominator)) for x in sec.coeffs(m, n))
            assert a + b == 1
            want = exact_tri.resistance_form(m, n).coeffs  # (rational, sqrt3/pi) parts
            assert (b * Fraction(8, 3) - 2 * c, -4 * b) == want, (m, n)
    e3 = Energy(Fraction(3), Fraction(0))  # the band edge, refused by the public check
    for m in range(4):
        for site in [(m, n, s) for n in range(-m, m + 1) for s in (0, 1)]:
            site = HONEYCOMB.canonical(site)
            co = tg.green_form("honeycomb", e3, site).coeffs
            a, b, c = (x[0] for x in co)
            assert 3 - a - b == 0
            assert (b * Fraction(8, 3) - 2 * c, -4 * b) == \
                exact_hc.resistance_form(*site).coeffs, site


def test_zero_parts():
    assert tg.zero_parts("triangular", tri_e("7"), (1, 0)) == (False, True)
    assert tg.zero_parts("triangular", tri_e("1"), (1, 0)) == (False, False)
    assert tg.zero_parts("honeycomb", hc_e("0.5j"), (1, 0, 0)) == (True, False)
    assert tg.zero_parts("honeycomb", hc_e("0.5j"), (1, 0, 1)) == (False, True)


@pytest.mark.parametrize(("lattice", "E", "extent"), [
    ("triangular", "1.5+0.5j", 3), ("triangular", "-2.5", 2), ("triangular", "7", 2),
    ("honeycomb", "2", 1), ("honeycomb", "-1.5+0.5j", 1), ("honeycomb", "0.5j", 1),
])
def test_exact_vs_quadrature_over_a_region_40_digits(lattice, E, extent):
    """Every row of a small table: the certified exact form against the per-site quadrature,
    both components to 40 digits of their own (the provider's full check)."""
    p = get_provider(lattice, "green", E)
    for _, batch in p.evaluated_batches(extent, 40, False):
        qs = p.quad_sites(batch.sites, 40)
        assert batch.imag is not None
        for k, q in enumerate(qs):
            for part, col in ((0, batch.rounded), (1, batch.imag)):
                c = col.exact[k]
                if col.values[k] == "0":  # zero by symmetry: the quadrature's is tiny
                    size = abs(q[0]) + abs(q[1])
                    assert abs(q[part]) < Fraction(1, 10**40) * size
                else:
                    assert agreement_digits(c, q[part], 40) == 40, (batch.sites[k], part)


def test_higher_precision_is_a_prefix_and_the_ball_contains_it():
    for lattice, E, site in [("triangular", "1.5+0.5j", (5, 2)), ("triangular", "-2.5", (4, 4)),
                             ("honeycomb", "-2+0.25j", (3, -1, 1)), ("honeycomb", "4", (4, 2, 0))]:
        e = parse_energy(E, lattice)
        f = tg.green_form(lattice, e, site)
        lo, hi = tg.evaluate(f, lattice, e, site, 20), tg.evaluate(f, lattice, e, site, 60)
        for a, b in ((lo.re, hi.re), (lo.im, hi.im)):
            if a.digits:  # the 20-digit value is the 60-digit value rounded (no tie here)
                with mpmath.workdps(80):
                    x = mpmath.mpf(str(b))
                    assert abs(x - mpmath.mpf(str(a))) <= mpmath.mpf(a.half_ulp())
        small, big = tg.ball(f, lattice, e, 128), tg.ball(f, lattice, e, 512)
        assert small.contains(big) and big.rad() < small.rad()


# ------------------------------------------------------------------------------ DOS

def _rho(lattice: str, x: mpmath.mpf) -> mpmath.mpf:
    sign, man, exp, _ = x._mpf_
    q = Fraction(int(man)) * Fraction(2) ** int(exp) * (-1 if sign else 1)
    return mpmath.mpf(dos_ball(lattice, q, 80).mid().str(25, radius=False))


def test_dos_sum_rules():
    """int rho = 1, int E rho = tr H = 0, int E^2 rho = z (common practice), to 1e-12."""
    with mpmath.workdps(20):
        for lattice, pts, z in (("triangular", [-3, -2, 6], 6),
                                ("honeycomb", [-3, -1, 0, 1, 3], 3)):
            m0 = mpmath.quad(lambda x, la=lattice: _rho(la, x), pts)
            m1 = mpmath.quad(lambda x, la=lattice: x * _rho(la, x), pts)
            m2 = mpmath.quad(lambda x, la=lattice: x * x * _rho(la, x), pts)
            assert abs(m0 - 1) < 1e-12 and abs(m1) < 1e-12 and abs(m2 - z) < 1e-11


def test_dos_api_and_local_dos_at_the_origin():
    r = latgreen.dos("triangular", "1", digits=25)
    assert r.methods == ("closed-form", "quadrature") and r.agreement_digits == 25
    assert latgreen.local_dos("triangular", (0, 0), "1", digits=25).value == r.value
    h = latgreen.dos("honeycomb", "-2", digits=25)
    assert h.value == latgreen.dos("honeycomb", "2", digits=25).value  # rho(-E) = rho(E)
    # rho_hc(E) = |E| rho_tri(E^2 - 3): at E = 2, 2 rho_tri(1)
    with mpmath.workdps(30):
        assert abs(mpmath.mpf(h.value) - 2 * mpmath.mpf(r.value)) < 1e-24
    assert latgreen.dos("honeycomb", "0", digits=10).value == "0"  # Dirac point
    assert latgreen.dos("triangular", "7", digits=10).value == "0"  # outside the band
    ld = latgreen.local_dos("honeycomb", (1, 0, 1), "1.5", digits=20)
    assert ld.methods == ("recurrence", "quadrature")


def test_dos_exact_text_parses_in_sympy():
    import sympy

    for lattice, E in (("triangular", "1"), ("triangular", "-2.5"), ("honeycomb", "-0.5")):
        r = latgreen.dos(lattice, E, digits=20)
        v = sympy.sympify(str(r.exact), locals={"elliptic_k": sympy.elliptic_k})
        assert abs(float(v.evalf(30)) - float(r.value)) < 1e-15


# ------------------------------------------------------------------------------ API, input

def test_green_api():
    g = latgreen.green("triangular", (2, 1), energy="1.5+0.5j", digits=30)
    assert g.methods == ("recurrence", "quadrature") and g.agreement_digits == 30
    assert "G20" in g.basis and g.canonical_site == (2, 1)
    assert latgreen.green("triangular", (-1, 3), energy="1.5+0.5j", digits=30).value == g.value
    h = latgreen.green("honeycomb", (1, 0, 1), energy="4", digits=20)
    assert h.value_im == "0" and "T00" in str(h.exact)
    # the honeycomb's A-site values are E G_tri(E^2 - 3) (H^2 = 3 + H_tri on A)
    a = latgreen.green("honeycomb", (2, 1, 0), energy="2.5", digits=20)
    t = latgreen.green("triangular", (2, 1), energy="3.25", digits=22)
    with mpmath.workdps(30):
        assert abs(a.mpc - mpmath.mpf(2.5) * t.mpc) < 1e-19


@pytest.mark.parametrize(("lattice", "E", "words"), [
    ("triangular", "6", "resistance"), ("triangular", "-3", "lower band edge"),
    ("triangular", "-2", "van Hove"), ("honeycomb", "3", "band edge"),
    ("honeycomb", "-3", "band edge"), ("honeycomb", "1", "van Hove"),
    ("honeycomb", "-1", "van Hove"),
    ("triangular", "1-1j", "negative imaginary"),
])
def test_singular_energies_refused(lattice, E, words):
    with pytest.raises(InputError, match=words):
        latgreen.green(lattice, (1, 0) if lattice == "triangular" else (0, 0, 1), E, digits=10)


def test_other_bad_inputs():
    assert str(parse_energy("4", "triangular")) == "4"  # the square's band edge is in band here
    assert str(parse_energy("0", "triangular")) == "0"
    with pytest.raises(InputError, match="real energies"):
        latgreen.dos("triangular", "1+1j", digits=10)
    with pytest.raises(InputError):
        latgreen.green("honeycomb", (0, 0, 2), "1.5", digits=10)
    with pytest.raises(InputError, match="coordinates up to 30 "):
        latgreen.green("triangular", (31, 0), "7", digits=10)
    with pytest.raises(InputError, match="van Hove"):
        parse_energy_grid("-2:2:5", "honeycomb")  # hits -1
    assert [str(e) for e in parse_energy_grid("-0.5:0.5:3", "honeycomb")] == ["-0.5", "0", "0.5"]


# ------------------------------------------------------------------------------ Dirac point

def _dirac_value(site):
    """The exact form at E = 0 evaluated in mpmath (p*sqrt(3)/pi + q, the limit E -> 0)."""
    f = tg.green_form("honeycomb", hc_e("0"), HONEYCOMB.canonical(site))
    (p, pi_), (b, bi), (q, qi) = f.coeffs
    assert pi_ == bi == qi == b == 0  # real, and over (sqrt(3)/pi, 1) only
    return (mpmath.mpf(p.numerator) / p.denominator * mpmath.sqrt(3) / mpmath.pi
            + mpmath.mpf(q.numerator) / q.denominator)


def test_dirac_point_forms_against_the_independent_integral():
    """The B-site limits p sqrt(3)/pi + q (triangular forms at w = -3, derived in
    exact/trihex_green.py) against the Dirac-point 1-D integral (hc_dirac_quad), 30 digits,
    every B site with |m|, |n| <= 3; the A sites are 0."""
    from latgreen.methods.trihex_green_quadrature import hc_dirac_quad

    with mpmath.workdps(40):
        for m in range(-3, 4):
            for n in range(-3, 4):
                want = hc_dirac_quad((m, n, 1), 32)
                assert abs(_dirac_value((m, n, 1)) - want) < mpmath.mpf(10) ** -30, (m, n)
                assert str(tg.green_form("honeycomb", hc_e("0"), HONEYCOMB.canonical(
                    (m, n, 0)))) == "0"


def test_dirac_point_lattice_equation_exactly():
    """At E = 0 the lattice equation at A(m, n) reads -[G(B(m,n)) + G(B(m-1,n)) + G(B(m,n-1))]
    = delta: the three neighbours' exact forms sum to -1 at the origin, 0 elsewhere."""
    E = hc_e("0")
    for m in range(-4, 5):
        for n in range(-4, 5):
            tot = [Fraction(0)] * 3
            for b in ((m, n, 1), (m - 1, n, 1), (m, n - 1, 1)):
                f = tg.green_form("honeycomb", E, HONEYCOMB.canonical(b))
                tot = [t + c[0] for t, c in zip(tot, f.coeffs, strict=True)]
            assert tot == [0, 0, -1 if (m, n) == (0, 0) else 0], (m, n)


def test_dirac_point_api_values_and_limit():
    # nearest neighbour -1/3: the lattice equation at the origin at E = 0 with three
    # equivalent neighbours (common practice)
    g = latgreen.green("honeycomb", (0, 0, 1), "0", digits=30)
    assert g.value == "-0.333333333333333333333333333333+0j" and str(g.exact) == "-1/3"
    # a B site where G(0) vanishes exactly: our own form, confirmed by the integral
    z = latgreen.green("honeycomb", (3, -1, 1), "0", digits=30)
    assert z.value == "0+0j" and z.methods == ("recurrence", "quadrature")
    a = latgreen.green("honeycomb", (2, 1, 0), "0", digits=20)
    assert a.value == "0+0j"
    assert latgreen.local_dos("honeycomb", (1, 0, 1), "0", digits=10).value == "0"
    # continuity: at E = 1/1000 (the regular path, basis at w = 10^-6 - 3) G is within
    # O(E^2 log E) of the limit
    g0 = latgreen.green("honeycomb", (1, -1, 1), "0", digits=25)
    g1 = latgreen.green("honeycomb", (1, -1, 1), "1/1000", digits=25)
    assert str(g0.exact) == "1/2*sqrt(3)/pi"
    d = abs(g1.mpc - g0.mpc)
    assert 0 < d < mpmath.mpf("1e-4")


def test_dirac_point_table(tmp_path):
    out = tmp_path / "dirac"
    p = run_cli("table", "honeycomb", "--quantity", "green", "--energy", "0", "--extent", "3",
                "--digits", "20", "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    rows = {tuple(r.split(",")[:3]): r.split(",") for r in
            (out / "values.csv").read_text().splitlines()[1:]}
    assert rows[("3", "-1", "1")][3:6] == ["0", "0", "0"]  # value_re, value_im, exact
    assert rows[("1", "1", "1")][5] == "sqrt(3)/pi - 2/3"


# ------------------------------------------------------------------------------ CLI, files

def test_cli_green_dos_and_errors():
    p = run_cli("green", "honeycomb", "1", "0", "1", "--energy", "4", "--digits", "20")
    assert p.returncode == 0 and p.stdout.strip().endswith("+0j")
    p = run_cli("green", "triangular", "2", "1", "--energy", "1.5+0.5j", "--json")
    d = json.loads(p.stdout)
    assert d["agreement_digits"] == 50 and d["exact_basis"].startswith("G00")
    p = run_cli("dos", "triangular", "--energy", "1", "--digits", "20")
    # our own value, confirmed by two independent methods of ours (the K closed form and the
    # quadrature; the command checks them against each other at every call)
    assert p.stdout.strip() == "0.084905841283555519446"
    for args in (("green", "triangular", "1", "0", "--energy", "-2"),
                 ("green", "honeycomb", "1", "0", "--energy", "0"),
                 ("dos", "honeycomb", "--energy", "1")):
        p = run_cli(*args)
        assert p.returncode == 2 and p.stderr.count("\n") == 1 and "Traceback" not in p.stderr


def test_cli_tables(tmp_path):
    out = tmp_path / "tri"
    p = run_cli("table", "triangular", "--quantity", "green", "--energy", "7", "--extent", "2",
                "--digits", "20", "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    rows = (out / "values.csv").read_text().splitlines()
    assert rows[0].startswith("m,n,value_re,value_im") and len(rows) == 1 + 6
    # G(1,0) = (E G00 - 1)/6: the lattice equation at the origin (common practice)
    assert rows[2].split(",")[4] == "7/6*G00 - 1/6"
    desc = json.loads((out / "datapackage.json").read_text())
    assert desc["latgreen"]["energy"] == "7"
    # the descriptor names this lattice's basis (G20), not the square's (G11)
    conv = desc["latgreen"]["conventions"]["exact"]
    assert "G20" in conv and "G11" not in conv
    out = tmp_path / "dos"
    p = run_cli("table", "honeycomb", "--quantity", "dos", "--energies", "-0.5:0.5:3",
                "--digits", "15", "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    rows = (out / "values.csv").read_text().splitlines()
    assert len(rows) == 4 and rows[2].startswith("0,0,")
    # the descriptor describes this lattice's exact column, not the square's closed form
    desc = json.loads((out / "datapackage.json").read_text())
    fields = desc["resources"][0]["schema"]["fields"]
    exact = next(f for f in fields if f["name"] == "exact")["description"]
    assert "rho_tri(E^2 - 3)" in exact and "16" not in exact
