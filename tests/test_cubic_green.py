"""G(E; r), the DOS and the local DOS of the sc and bcc lattices at an exact energy.

Conventions (DESIGN.md): hopping +1, G(E;r) = <0|(E-H)^-1|r>, E + i0 on the band; bcc sites in
units of half the cube edge."""

from __future__ import annotations

from fractions import Fraction
from math import comb

import mpmath
import pytest

import latgreen
from conftest import run_cli
from latgreen.energy import Energy, parse_energy, parse_energy_grid
from latgreen.errors import InputError
from latgreen.methods.cubic_green_closed import origin_ball
from latgreen.methods.cubic_green_integral import green_integral, square_value
from latgreen.methods.cubic_quadrature import green_energy_quad
from latgreen.methods.fcc_green_nested import green_fcc_nested
from latgreen.methods.sc_green_bessel import green_bessel


def ball_mpc(b) -> mpmath.mpc:
    """The centre of an acb ball at the current mpmath precision."""
    return mpmath.mpc(mpmath.mpf(b.real.mid().str(mpmath.mp.dps + 5, radius=False)),
                      mpmath.mpf(b.imag.mid().str(mpmath.mp.dps + 5, radius=False)))


def rel(a, b):
    return abs(a - b) / abs(b)


# ------------------------------------------------------------------ published values

def test_band_edge_watson_values():
    """G_sc(6; 0) = 3 W_sc/18 with 3 W_sc = 1.516386059151978018156012159681 (OEIS A086231),
    G_bcc(8; 0) = W_bcc/8 with W_bcc = 1.39320392968567685918424626032536824265748
    (OEIS A091670); the factors 1/6 and 1/8 are the normalisation conversions of NOTES A
    (z G(z;0) = 3 W_sc, W_bcc: common practice)."""
    sc = latgreen.green("sc", (0, 0, 0), energy="6", digits=30)
    bcc = latgreen.green("bcc", (0, 0, 0), energy="8", digits=40)
    with mpmath.workdps(50):
        assert rel(sc.mpc.real, mpmath.mpf("1.516386059151978018156012159681") / 6) < 1e-29
        assert rel(bcc.mpc.real, mpmath.mpf("1.39320392968567685918424626032536824265748") / 8) \
            < 1e-39
    assert sc.value_im == "0" and bcc.value_im == "0"  # real at the band edge
    assert sc.methods == ("closed-form", "integral")


def test_sc_band_centre_equals_fcc_watson_constant():
    """G_sc(0 + i0; 0) = -i I_fcc with I_fcc = 0.448220394388381432116385450017...
    (Watson 1939; Glasser & Zucker 1977).  That these agree is an observation of ours (from
    memory a known identity of Joyce's), checked here to 30 digits on both of our methods."""
    g = latgreen.green("sc", (0, 0, 0), energy="0", digits=30)
    assert g.value_re == "0"
    with mpmath.workdps(40):
        assert rel(-g.mpc.imag, mpmath.mpf("0.448220394388381432116385450017")) < 1e-29
    d = latgreen.dos("sc", energy="0", digits=25)
    with mpmath.workdps(40):
        assert rel(d.mpf, mpmath.mpf("0.448220394388381432116385450017") / mpmath.pi) < 1e-24


def _sc_walks(N: int) -> list[int]:
    """Closed walks of length 0..N on the sc lattice, counted by brute force (the first terms
    1, 0, 6, 0, 90, 0, 1860, 0, 44730 are OEIS A002896 interleaved with zeros)."""
    cur = {(0, 0, 0): 1}
    out = [1]
    steps = ((1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1))
    for _ in range(N):
        nxt: dict = {}
        for (a, b, c), v in cur.items():
            for x, y, z in steps:
                k = (a + x, b + y, c + z)
                nxt[k] = nxt.get(k, 0) + v
        cur = nxt
        out.append(cur.get((0, 0, 0), 0))
    return out


def test_moment_series_at_large_energy():
    """G(E; 0) = sum_N c_N E^(-N-1), c_N = closed N-step walks: sc counted by brute force
    (OEIS A002896: 1, 6, 90, 1860, 44730, ...), bcc C(2N, N)^3 (derived: each coordinate
    steps +-1 independently)."""
    c = _sc_walks(24)
    assert c[:9] == [1, 0, 6, 0, 90, 0, 1860, 0, 44730]  # OEIS A002896
    with mpmath.workdps(40):
        E = mpmath.mpf(60)
        s = sum(mpmath.mpf(v) / E ** (k + 1) for k, v in enumerate(c))
        tail = mpmath.mpf(c[24]) * 36 / E**27  # next term c_26 < 36 c_24, ratio < 36/E^2
        g = ball_mpc(origin_ball("sc", parse_energy("60", "sc"), 200))
        assert abs(g - s) < 2 * tail
        s = sum(mpmath.mpf(comb(2 * N, N)) ** 3 / mpmath.mpf(80) ** (2 * N + 1)
                for N in range(40))
        g = ball_mpc(origin_ball("bcc", parse_energy("80", "bcc"), 200))
        assert rel(g, s) < mpmath.mpf(10) ** -35


def _fcc_walks(N: int) -> list[int]:
    """Closed walks of length 0..N on the fcc lattice, counted by brute force on a grid."""
    import numpy as np

    L = 2 * N + 3
    a = np.zeros((L, L, L), dtype=np.int64)
    a[0, 0, 0] = 1
    steps = [(x, y, 0) for x in (1, -1) for y in (1, -1)]
    steps = [p for q in steps for p in {q, (q[0], 0, q[1]), (0, q[0], q[1])}]
    assert len(set(steps)) == 12
    out = [1]
    for _ in range(N):
        a = sum(np.roll(a, st, axis=(0, 1, 2)) for st in set(steps))
        out.append(int(a[0, 0, 0]))
    return out


def test_fcc_band_edge_and_moment_series():
    """G_fcc(12; 0) = I_fcc/4 with I_fcc = 0.448220394388381432116385450017 (Watson 1939;
    Glasser & Zucker 1977; 12 - eps = 4(3 - sum c_i c_j), NOTES A); the large-E series
    against closed-walk counts recounted by brute force (first terms 1, 0, 12, 48, 540, 4320,
    42240: OEIS A002899, from memory)."""
    g = latgreen.green("fcc", (0, 0, 0), energy="12", digits=30)
    assert g.exact.how == "identified" and g.methods == ("closed-form", "quadrature")
    with mpmath.workdps(40):
        assert rel(g.mpc.real, mpmath.mpf("0.448220394388381432116385450017") / 4) < 1e-29
    c = _fcc_walks(16)  # 12^16 < 2^63
    assert c[:7] == [1, 0, 12, 48, 540, 4320, 42240]
    with mpmath.workdps(40):
        for E in (300, -300):
            s = sum(mpmath.mpf(v) / mpmath.mpf(E) ** (k + 1) for k, v in enumerate(c))
            tail = mpmath.mpf(12) ** 17 / mpmath.mpf(300) ** 18
            b = ball_mpc(origin_ball("fcc", parse_energy(str(E), "fcc"), 200))
            assert abs(b - s) < 2 * tail


@pytest.mark.parametrize("E", ["-3.5", "0", "7"])
def test_fcc_closed_form_vs_nested_integral_in_band(E):
    """Inside the fcc band (E + i0): the identified closed form (with its documented
    branches and the E = 0 limit) against the nested 1-D integral of Carlson's R_F, two
    methods of ours sharing only the definition of G, 30 digits."""
    e = parse_energy(E, "fcc")
    with mpmath.workdps(45):
        a = ball_mpc(origin_ball("fcc", e, 200))
        b = green_fcc_nested(e, 25)
        assert rel(a, b) < mpmath.mpf(10) ** -25
    assert a.imag < 0  # Im G(E + i0; 0) < 0 in the band (common practice)


def test_fcc_dos_sum_rules():
    """int rho = 1, int E rho = 0, int E^2 rho = 12, int E^3 rho = 48 (closed walks, OEIS
    A002899, recounted above) for the fcc DOS from the closed form."""
    with mpmath.workdps(15):
        def f(x):
            if not -4 < x < 12:
                return 0.0
            # the closed form at a quadrature node (some lie closer to -4, 0, 12 than the
            # API's 1e-8 limit): an Energy built directly, not a user's input
            e = Energy(Fraction(mpmath.nstr(x, 25)), Fraction(0))
            return float(-origin_ball("fcc", e, 64).imag.mid()) / float(mpmath.pi)
        pts = [-4, mpmath.mpf(-4) + mpmath.mpf(1) / 1000, 0, 12]  # log at -4: keep away
        m = [mpmath.quad(lambda x, k=k: x**k * f(x), pts) for k in range(4)]
    for got, want in zip(m, (1, 0, 12, 48), strict=True):
        assert abs(got - want) < 1e-7


def test_fcc_in_band_values_and_dos():
    g = latgreen.green("fcc", (0, 0, 0), energy="3", digits=15)
    assert g.methods == ("closed-form", "integral") and g.exact.how == "identified"
    n = latgreen.green("fcc", (1, 0, 1), energy="3", digits=15)
    with mpmath.workdps(35):
        assert rel(n.mpc, (3 * g.mpc - 1) / 12) < 1e-14
    d = latgreen.dos("fcc", energy="3", digits=15)
    with mpmath.workdps(35):
        assert rel(d.mpf, -g.mpc.imag / mpmath.pi) < 1e-14


@pytest.mark.parametrize("E", ["13", "-6+0.5j"])
def test_fcc_closed_form_vs_quadrature(E):
    """The identified fcc closed form against the reduced 2-D rule (30 digits)."""
    e = parse_energy(E, "fcc")
    with mpmath.workdps(40):
        a = ball_mpc(origin_ball("fcc", e, 200))
        b = green_energy_quad("fcc", (0, 0, 0), e, 30)
        assert rel(a, b) < mpmath.mpf(10) ** -30


# ------------------------------------------------------------------ two methods of ours

@pytest.mark.parametrize(("lattice", "E"), [
    ("sc", "3"), ("sc", "1.5+0.5j"), ("sc", "-2.5"), ("sc", "2"), ("sc", "9"),
    ("sc", "0.001"), ("bcc", "3"), ("bcc", "-7"), ("bcc", "0.5j"), ("bcc", "12"),
])
def test_closed_form_vs_1d_integral(lattice, E):
    """Closed form (Joyce's for sc; (1/E)(2K(u)/pi)^2 for bcc) against the 1-D integral of
    the square lattice's closed form, at 35 digits (our two independent methods)."""
    e = parse_energy(E, lattice)
    with mpmath.workdps(45):
        a = ball_mpc(origin_ball(lattice, e, 200))
        b = green_integral(lattice, e, (0, 0, 0), 35)
        assert rel(a, b) < mpmath.mpf(10) ** -35


def test_branches_on_a_grid_of_the_upper_half_plane():
    """The closed forms' branches (continuation off the band, E + i0 on it) on a grid, at
    12 digits, against the 1-D integral."""
    for lattice in ("sc", "bcc"):
        for re_, ims in (("-5", ("2",)), ("-1", ("0",)), ("0", ("0", "2")),
                         ("1", ("0.01",)), ("2", ("0",)), ("5", ("0",)), ("7", ("0",))):
            for im in ims:
                E = re_ if im == "0" else f"{re_}+{im}j"
                if lattice == "bcc" and E == "0":
                    continue
                e = parse_energy(E, lattice)
                with mpmath.workdps(20):
                    a = ball_mpc(origin_ball(lattice, e, 64))
                    b = green_integral(lattice, e, (0, 0, 0), 10)
                    assert rel(a, b) < 1e-10, (lattice, E)


@pytest.mark.parametrize(("lattice", "site", "E"), [
    ("sc", (0, 0, 0), "7"), ("sc", (2, 1, 0), "-7"), ("bcc", (1, 1, 1), "9"),
    ("sc", (1, 1, 1), "6"),
])
def test_1d_integral_vs_2d_rule(lattice, site, E):
    """The 1-D integral against the reduced 2-D polar rule (off the band / band edge)."""
    e = parse_energy(E, lattice)
    with mpmath.workdps(30):
        a = green_integral(lattice, e, site, 20)
        b = green_energy_quad(lattice, site, e, 20)
        assert rel(a, b) < 1e-19


def test_lattice_equation_inside_the_band():
    """(E - H) G = delta at the origin and at (1,0,0) (sc) and (1,1,1) (bcc) at real E inside
    the band: the 1-D integral at r != 0 against the closed form at r = 0."""
    with mpmath.workdps(40):
        e = parse_energy("3", "sc")
        g0 = ball_mpc(origin_ball("sc", e, 200))
        g = {s: green_integral("sc", e, s, 30) for s in [(1, 0, 0), (2, 0, 0), (1, 1, 0)]}
        assert abs(3 * g0 - 6 * g[(1, 0, 0)] - 1) < 1e-29
        assert abs(3 * g[(1, 0, 0)] - g0 - g[(2, 0, 0)] - 4 * g[(1, 1, 0)]) < 1e-29
        e = parse_energy("5/2", "bcc")
        g0 = ball_mpc(origin_ball("bcc", e, 200))
        g = {s: green_integral("bcc", e, s, 30)
             for s in [(1, 1, 1), (2, 2, 2), (2, 2, 0), (2, 0, 0)]}
        assert abs(mpmath.mpf(5) / 2 * g0 - 8 * g[(1, 1, 1)] - 1) < 1e-29
        # neighbours of (1,1,1): (2,2,2), 3 x (2,2,0), 3 x (2,0,0), (0,0,0)
        lhs = mpmath.mpf(5) / 2 * g[(1, 1, 1)]
        assert abs(lhs - g[(2, 2, 2)] - 3 * g[(2, 2, 0)] - 3 * g[(2, 0, 0)] - g0) < 1e-29


def test_square_values_match_the_package_exact_forms():
    """The 1-D integrand's G_sq(w; p, q) (values run through the recurrence, and the walk
    series for |w| >= 32) against the package's certified square-lattice green."""
    for E, site in (("9/2", (3, 1)), ("1.5+0.5j", (4, 2)), ("2.5", (2, 2)), ("40", (3, 1))):
        g = latgreen.green("square", site, energy=E, digits=25)
        e = parse_energy(E)
        with mpmath.workdps(35):
            w = mpmath.mpc(mpmath.mpf(e.re.numerator) / e.re.denominator,
                           mpmath.mpf(e.im.numerator) / e.im.denominator)
            if e.im == 0:
                w = w.real
            v = square_value(w, w - 4, w + 4, site[0], site[1], e.im == 0)
            assert rel(v, g.mpc) < 1e-24, E


# ------------------------------------------------------------------ dos and symmetries

def _dos_float(lattice: str, x) -> float:
    # quadrature nodes come closer to the singular points than the API's 1e-8 limit: the
    # closed form is called with an Energy built directly
    e = Energy(Fraction(mpmath.nstr(x, 25)) if x else Fraction(0), Fraction(0))
    return float(-origin_ball(lattice, e, 64).imag.mid()) / float(mpmath.pi)


@pytest.mark.parametrize(("lattice", "pts", "z"), [("sc", [0, 2, 6], 6), ("bcc", [0, 8], 8)])
def test_dos_sum_rules(lattice, pts, z):
    """int rho = 1, int E^2 rho = z, int E^4 rho = closed 4-walks (sc 90: A002896; bcc
    C(4,2)^3 = 216, derived): the DOS is even, integrate over [0, z] and double."""
    with mpmath.workdps(15):
        def f(x):
            return _dos_float(lattice, x) if 0 < x < z else 0.0
        if lattice == "bcc":  # log^2 at 0: leave the point itself out of the node set
            pts = [0, mpmath.mpf(1) / 1000] + pts[1:]
        m = [2 * mpmath.quad(lambda x, k=k: x**k * f(x), pts) for k in (0, 2, 4)]
    assert abs(m[0] - 1) < 1e-9
    assert abs(m[1] - z) < 1e-8
    assert abs(m[2] - (90 if lattice == "sc" else 216)) < 1e-7


@pytest.mark.parametrize(("lattice", "E"), [("sc", "0.5"), ("sc", "2"), ("sc", "5.9"),
                                            ("bcc", "0.01"), ("bcc", "4"), ("bcc", "-7.5")])
def test_dos_positive_in_band_and_zero_outside(lattice, E):
    """Im G(E + i0; 0) < 0 inside the band (common practice), rho = 0 outside."""
    d = latgreen.dos(lattice, energy=E, digits=20)
    assert d.mpf > 0 and d.methods == ("closed-form", "integral")
    z = 6 if lattice == "sc" else 8
    for x in (str(z), str(-z), f"{z}.5", "-100"):
        assert latgreen.dos(lattice, energy=x, digits=20).value == "0"


@pytest.mark.parametrize(("lattice", "E", "site"), [
    ("sc", "3+2j", (0, 0, 0)), ("bcc", "9+1j", (1, 1, 1)),
])
def test_bipartite_symmetry(lattice, E, site):
    """G(-conj E; r) = -(-1)^p conj G(E; r), p = l+m+n (sc), l (bcc): H -> -H under the
    sublattice sign and G(conj E) = conj G(E) (common practice)."""
    e = parse_energy(E, lattice)
    a = latgreen.green(lattice, site, energy=E, digits=20)
    b = latgreen.green(lattice, site, energy=f"{-e.re}+{e.im}j", digits=20)
    p = (sum(site) if lattice == "sc" else site[0]) % 2
    s = -1 if p == 0 else 1
    with mpmath.workdps(30):
        assert rel(b.mpc, s * mpmath.conj(a.mpc)) < 1e-19


def test_zero_components_by_symmetry():
    """Im G = 0 off the band; Re G = 0 (even sites) / Im G = 0 (odd) at E = iy."""
    assert latgreen.green("sc", (1, 0, 0), energy="-7", digits=15).value_im == "0"
    g = latgreen.green("bcc", (0, 0, 0), energy="2j", digits=15)
    assert g.value_re == "0" and g.mpc.imag < 0
    g = latgreen.green("bcc", (1, 1, 1), energy="3j", digits=15)
    assert g.value_im == "0"


def test_sites_beyond_the_neighbour_say_estimate():
    """Where no exact form is offered (band edges, van Hove points): the 1-D integral with 10
    guard digits, confirmed by the 2-D rule (bcc at its upper band edge) or the Bessel
    integral (sc, also inside the band)."""
    g = latgreen.green("bcc", (2, 0, 0), energy="8", digits=15)
    assert g.methods == ("integral", "quadrature") and g.exact is None
    assert "estimate" in g.notes[0]
    with mpmath.workdps(40):
        e = parse_energy("8", "bcc")
        assert rel(g.mpc, green_energy_quad("bcc", (2, 0, 0), e, 20)) < 1e-14
    g = latgreen.green("sc", (2, 1, 0), energy="2", digits=12)
    assert g.methods == ("integral", "bessel") and "estimate" in g.notes[0]
    assert g.value_im != "0" and g.value_re != "0"
    d = latgreen.local_dos("sc", (1, 1, 1), energy="2", digits=10)  # a van Hove point
    assert d.methods == ("integral", "bessel")
    with mpmath.workdps(30):
        v = green_integral("sc", parse_energy("2", "sc"), (1, 1, 1), 15)
        assert rel(d.mpf, -v.imag / mpmath.pi) < 1e-9


@pytest.mark.parametrize(("E", "site"), [("1/2", (3, 1, 1)), ("2", (1, 1, 0))])
def test_bessel_integral_vs_1d_integral(E, site):
    """The time-domain Bessel integral against the 1-D integral over the square lattice's
    closed form (two methods of ours sharing only the definition of G), 30 digits.  E = 2,
    (1,1,0): regression, the integral along the third axis stalls at the van Hove energy
    (about 29 digits) and another axis is taken."""
    e = parse_energy(E, "sc")
    with mpmath.workdps(45):
        a = green_bessel(e, site, 30)
        b = green_integral("sc", e, site, 30)
        assert rel(a, b) < mpmath.mpf(10) ** -30


def test_local_dos():
    assert latgreen.local_dos("sc", (0, 0, 0), energy="3", digits=20).value == \
        latgreen.dos("sc", energy="3", digits=20).value
    assert latgreen.local_dos("bcc", (1, 1, 1), energy="9", digits=20).value == "0"
    # beyond the neighbour inside the band: the exact form, checked by the 1-D integral
    d = latgreen.local_dos("bcc", (2, 0, 0), energy="3", digits=20)
    assert d.methods == ("recurrence", "integral")
    with mpmath.workdps(40):
        v = green_integral("bcc", parse_energy("3", "bcc"), (2, 0, 0), 25)
        assert rel(d.mpf, -v.imag / mpmath.pi) < 1e-19
    # nearest neighbour: (E G0 - 1)/z, so -Im G(x + i0; 1,0,0)/pi = x rho(x)/6 (derived)
    with mpmath.workdps(30):
        a = latgreen.local_dos("sc", (0, 1, 0), energy="3", digits=20).mpf
        assert rel(a, 3 * latgreen.dos("sc", energy="3", digits=22).mpf / 6) < 1e-19


@pytest.mark.parametrize(("lattice", "site", "E"), [
    ("sc", (1, 0, 0), "3"), ("sc", (0, 0, -1), "0"), ("bcc", (1, -1, 1), "-2.5"),
    ("bcc", (1, 1, 1), "2j"), ("fcc", (1, 0, 1), "13"), ("fcc", (0, 1, 1), "-6+0.5j"),
])
def test_nearest_neighbour_from_the_lattice_equation(lattice, site, E):
    """G(E; nn) = (E G(E; 0) - 1)/z (lattice equation at the origin) as a certified ball,
    confirmed by the 1-D integral (sc, bcc; also inside the band) or the 2-D rule (fcc)."""
    g = latgreen.green(lattice, site, energy=E, digits=25)
    assert g.methods[0] == "closed-form" and str(g.exact).startswith("(E*G0 - 1)/")
    if E == "0":  # G_sc(0; 1,0,0) = -1/6 exactly
        assert g.value == "-0.1666666666666666666666667+0j"


# ------------------------------------------------------------------ bad inputs

@pytest.mark.parametrize(("call", "words"), [
    (lambda: latgreen.green("bcc", (0, 0, 0), energy="0"), "band centre"),
    (lambda: latgreen.local_dos("sc", (13, 0, 0), energy="2"), "coordinates up to 10"),
    (lambda: latgreen.green("bcc", (1, 0, 0), energy="9"), "not a bcc site"),
    (lambda: latgreen.green("sc", (0, 0, 0), energy="1-1j"), "negative imaginary"),
    (lambda: latgreen.green("sc", (0, 0, 0), energy=1.5), "binary float"),
    (lambda: latgreen.dos("sc", energy="1+1j"), "real energies"),
    (lambda: latgreen.green("fcc", (2, 0, 0), energy="0"), "every energy other than"),
    (lambda: latgreen.green("fcc", (0, 0, 0), energy="-4"), "lower band edge"),
    (lambda: latgreen.green("sc", (11, 0, 0), energy="7"), "coordinates up to 10"),
    (lambda: latgreen.green("sc", (2, 0, 0), energy="7", digits=101), "at most 100"),
    (lambda: latgreen.dos("bcc", energy="1", digits=301), "at most 300"),
])
def test_bad_inputs(call, words):
    with pytest.raises(InputError, match=words):
        call()


def test_energy_checks_are_per_lattice():
    """E = 4 and E = 0 are refused for the square lattice only; the sc has no refused real
    energy, the bcc refuses 0, the fcc -4."""
    assert parse_energy("4", "sc").re == 4 and parse_energy("0", "sc").re == 0
    with pytest.raises(InputError, match="bcc band centre"):
        parse_energy("0", "bcc")
    with pytest.raises(InputError, match="fcc lower band edge"):
        parse_energy("-4", "fcc")
    assert [str(e) for e in parse_energy_grid("-6:6:5", "sc")] == ["-6", "-3", "0", "3", "6"]
    with pytest.raises(InputError, match="band centre"):
        parse_energy_grid("-8:8:3", "bcc")


def test_cli_green_dos_and_errors():
    r = run_cli("green", "sc", "1", "0", "0", "--energy", "7", "--digits", "20")
    assert r.returncode == 0 and r.stdout.strip() == "0.032277774773286530851+0j"
    r = run_cli("dos", "bcc", "--energy", "3", "--digits", "20")
    assert r.returncode == 0 and r.stdout.strip().startswith("0.05526398330491892848")
    r = run_cli("green", "fcc", "2", "0", "0", "--energy", "0")
    assert r.returncode == 2 and r.stderr.count("\n") == 1 and "Traceback" not in r.stderr
    # --exact where no exact form exists: one line, exit 2 (not "None")
    r = run_cli("green", "sc", "1", "1", "0", "--energy", "2", "--digits", "15", "--exact")
    assert r.returncode == 2 and "no exact form" in r.stderr and r.stdout == ""
    r = run_cli("green", "sc", "1", "1", "0", "--energy", "10", "--digits", "15", "--exact")
    assert r.returncode == 0 and "*d2G0" in r.stdout
    r = run_cli("green", "sc", "1", "0", "0", "--energy", "7", "--digits", "15", "--exact")
    assert r.returncode == 0 and r.stdout.startswith("(E*G0 - 1)/6")


def test_cli_dos_table(tmp_path):
    out = tmp_path / "t"
    r = run_cli("table", "sc", "--quantity", "dos", "--energies", "0:6:4", "--digits", "15",
                "--out", str(out), "--quiet")
    assert r.returncode == 0, r.stderr
    text = (out / "sc-dos.csv").read_text() if (out / "sc-dos.csv").exists() else \
        next(out.glob("*.csv")).read_text()
    assert "0.142672982723019" in text  # rho_sc(0) = I_fcc/pi (see the band-centre test)
    import json

    desc = json.loads((out / "datapackage.json").read_text())
    exact = next(f for f in desc["resources"][0]["schema"]["fields"] if f["name"] == "exact")
    assert exact["description"].startswith("empty")  # the sc's dos has no exact column


def test_green_table_at_an_energy(tmp_path):
    """A sc green table at a van Hove point (no exact forms there): every row equals the
    single value, the exact column names the closed form only where there is one, and the
    descriptor says what G0 is."""
    import json

    out = tmp_path / "g"
    r = run_cli("table", "sc", "--quantity", "green", "--energy", "2", "--extent", "1",
                "--digits", "15", "--out", str(out), "--quiet", "--workers", "1")
    assert r.returncode == 0, r.stderr
    lines = (out / "values.csv").read_text().splitlines()
    assert lines[0].startswith("l,m,n,value_re,value_im,exact,exact_how")
    rows = [ln.split(",") for ln in lines[1:]]
    assert [tuple(map(int, x[:3])) for x in rows] == [(0, 0, 0), (1, 0, 0), (1, 1, 0),
                                                      (1, 1, 1)]
    assert rows[0][5] == "G0" and rows[1][5] == "(E*G0 - 1)/6" and rows[2][5] == ""
    assert [x[9] for x in rows] == ["closed-form;bessel"] * 2 + ["integral;bessel"] * 2
    g = latgreen.green("sc", (1, 1, 1), energy="2", digits=15)
    assert (rows[3][3], rows[3][4]) == (g.value_re, g.value_im)
    meta = json.loads((out / "datapackage.json").read_text())["latgreen"]
    assert "G0 = G(E;0) = (1/E)(1 - 9 xi^4)" in meta["methods"]["primary"]
    assert "estimate" in meta["conventions"]["exact"]
    r = run_cli("table", "fcc", "--quantity", "green", "--energy", "0", "--extent", "2",
                "--out", str(tmp_path / "h"))
    assert r.returncode == 2 and "energy other than" in r.stderr


def test_green_table_inside_the_band(tmp_path):
    """A bcc green table inside the band: every row is its exact form a + b G0 + c G0' +
    d G0'' (a certified ball), checked by the 1-D integral; ``latgreen verify`` recomputes
    the values and the forms."""
    out = tmp_path / "g"
    r = run_cli("table", "bcc", "--quantity", "green", "--energy", "3", "--extent", "3",
                "--digits", "20", "--out", str(out), "--quiet", "--workers", "1")
    assert r.returncode == 0, r.stderr
    rows = [ln.split(",") for ln in (out / "values.csv").read_text().splitlines()[1:]]
    assert len(rows) == 8 and all(x[9] == "recurrence;integral" for x in rows)
    assert all(x[6] == "derived" and int(x[10]) >= 20 for x in rows)  # bcc: G0 derived
    assert rows[0][5] == "G0" and rows[1][5] == "3/8*G0 - 1/8"  # (E G0 - 1)/8 at E = 3
    g = latgreen.green("bcc", (3, 3, 1), energy="3", digits=20)
    row = next(x for x in rows if x[:3] == ["3", "3", "1"])
    assert (row[3], row[4], row[5]) == (g.value_re, g.value_im, str(g.exact))
    r = run_cli("verify", str(out))
    assert r.returncode == 0 and "ok" in r.stdout, r.stdout + r.stderr
