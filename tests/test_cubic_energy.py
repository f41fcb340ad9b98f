"""Exact forms a + b G0 + c G0' + d G0'' of the cubic lattices at a real energy
(exact/cubic_energy.py) and the jets of the closed forms (methods/cubic_green_closed.py).

Sources of the check values: the walk expansion G(E; r) = sum_N W_N(r) E^(-N-1) for |E| above
the band (common practice), with W_N counted here by formulas or by brute force; our
1-D integral (methods/cubic_green_integral.py), an independent method of ours sharing only the
definition of G; the lattice equation (common practice).
"""

from __future__ import annotations

from fractions import Fraction
from math import comb, factorial

import flint
import mpmath
import pytest
import sympy

import latgreen
from latgreen.energy import Energy, parse_energy
from latgreen.exact import cubic_energy
from latgreen.exact.cubic import LATTICE, _canon
from latgreen.methods.cubic_green_closed import origin_ball, origin_jet
from latgreen.methods.cubic_green_integral import green_integral


def mp(x: flint.acb) -> mpmath.mpc:
    with mpmath.workdps(90):  # the number keeps this precision after the block
        return mpmath.mpc(x.real.mid().str(85, radius=False),
                          x.imag.mid().str(85, radius=False))


def value(lattice: str, E: Fraction, site: tuple[int, int, int], bits: int) -> mpmath.mpc:
    v = cubic_energy.green_vectors(lattice, E, site[0])[site]
    jet = origin_jet(lattice, Energy(E, Fraction(0)), bits)
    old = flint.ctx.prec
    try:
        flint.ctx.prec = bits
        return mp(cubic_energy.ball(v, jet))
    finally:
        flint.ctx.prec = old


# ------------------------------------------------------------------ walk counts

def walks_sc(N: int, r: tuple[int, int, int]) -> int:
    """Walks of N unit steps from 0 to r on the sc lattice: split the steps among the axes
    (multinomial) and count each axis's 1-D walks (binomial), common practice."""
    total = 0
    for n1 in range(N + 1):
        for n2 in range(N - n1 + 1):
            n3 = N - n1 - n2
            parts = 1
            for n, x in ((n1, r[0]), (n2, r[1]), (n3, r[2])):
                if (n + x) % 2 or abs(x) > n:
                    parts = 0
                    break
                parts *= comb(n, (n + x) // 2)
            if parts:
                total += factorial(N) // (factorial(n1) * factorial(n2) * factorial(n3)) * parts
    return total


def walks_bcc(N: int, r: tuple[int, int, int]) -> int:
    """bcc steps change every coordinate by +-1 independently: a product of three 1-D walk
    counts (common practice)."""
    out = 1
    for x in r:
        if (N + x) % 2 or abs(x) > N:
            return 0
        out *= comb(N, (N + x) // 2)
    return out


def walks_fcc(Nmax: int, r: tuple[int, int, int]) -> list[int]:
    """fcc walk counts W_0..W_Nmax to r by brute-force dynamic programming over the twelve
    steps (+-1, +-1, 0) and permutations, pruned to the sites that can still reach r."""
    steps = [(a, b, 0) for a in (1, -1) for b in (1, -1)]
    steps = [p for s in steps for p in (s, (s[0], 0, s[1]), (0, s[0], s[1]))]
    cur = {(0, 0, 0): 1}
    out = [cur.get(r, 0)]
    for N in range(1, Nmax + 1):
        left = Nmax - N
        nxt: dict[tuple[int, int, int], int] = {}
        for (x, y, z), w in cur.items():
            for a, b, c in steps:
                t = (x + a, y + b, z + c)
                if max(abs(t[0] - r[0]), abs(t[1] - r[1]), abs(t[2] - r[2])) <= left:
                    nxt[t] = nxt.get(t, 0) + w
        cur = nxt
        out.append(cur.get(r, 0))
    return out


def series(counts: list[int], E: int, order: int = 0) -> Fraction:
    """d^order/dE^order of sum_N W_N E^(-N-1), term by term (exact)."""
    total = Fraction(0)
    for N, w in enumerate(counts):
        c = Fraction(w)
        for k in range(order):
            c *= -(N + 1 + k)
        total += c / Fraction(E) ** (N + 1 + order)
    return total


# ------------------------------------------------------------------ closure and relations

@pytest.mark.parametrize("lattice", ["sc", "bcc", "fcc"])
@pytest.mark.parametrize("E", [Fraction(7, 2), Fraction(-5, 2), Fraction(1, 3), Fraction(31, 2)])
def test_seeds_are_determined_and_stable(lattice, E):
    """The derivative system determines the seeds (closure) and a larger region gives the
    same vectors (the determination does not depend on where the finite system stops)."""
    small = cubic_energy._solve_block(lattice, E, 4)
    big = cubic_energy._solve_block(lattice, E, 6)
    assert small is not None and small == big
    assert all(any(x for x in v[1:]) for v in small.values())


@pytest.mark.parametrize(("lattice", "E", "extent"), [
    ("sc", Fraction(7, 2), 9), ("bcc", Fraction(-5, 2), 9), ("fcc", Fraction(5), 7),
    ("fcc", Fraction(-3), 6), ("sc", Fraction(13, 2), 7)])
def test_lattice_equation_exactly(lattice, E, extent):
    """E G(s) - sum_e G(s + e) = delta_{s,0} holds exactly, on the basis, at every canonical
    site one layer inside the computed region (common practice)."""
    lat = LATTICE[lattice]
    G = cubic_energy.green_vectors(lattice, E, extent)
    for s in lat.region(extent - 1):
        acc = [E * x for x in G[s]]
        for e in lat.neighbours:
            t = G[_canon((s[0] + e[0], s[1] + e[1], s[2] + e[2]))]
            acc = [a - x for a, x in zip(acc, t, strict=True)]
        want = list(cubic_energy.UNIT) if not any(s) else [0, 0, 0, 0]
        assert acc == want, s


def test_excluded_energies():
    """Band edges, van Hove points and E = 0: a derivative of G(E; 0) is infinite (or the
    closed form is singular) there, so no exact form is offered."""
    for lattice, bad in cubic_energy.EXCLUDED.items():
        for E in bad:
            assert not cubic_energy.available(lattice, Fraction(E))
            with pytest.raises(ArithmeticError):
                cubic_energy.seed_vectors(lattice, Fraction(E))
            with pytest.raises(ValueError, match="not finite"):
                origin_jet(lattice, Energy(Fraction(E), Fraction(0)), 64)


# ------------------------------------------------------------------ against the walk series

@pytest.mark.parametrize(("lattice", "E", "site", "terms"), [
    ("sc", 20, (0, 0, 0), 90), ("sc", 20, (3, 2, 1), 90), ("sc", -20, (4, 1, 0), 90),
    ("bcc", 24, (2, 2, 0), 90), ("bcc", 24, (5, 3, 1), 90),
    ("fcc", 120, (2, 1, 1), 28), ("fcc", 120, (3, 2, 1), 28)])
def test_exact_forms_vs_walk_series(lattice, E, site, terms):
    """Off the band the exact form (certified ball) equals the walk expansion, whose counts
    are formulas (sc, bcc) or brute force (fcc): 40 digits (sc, bcc), 22 (fcc)."""
    if lattice == "fcc":
        counts = walks_fcc(terms, site)
    else:
        f = walks_sc if lattice == "sc" else walks_bcc
        counts = [f(N, site) for N in range(terms)]
    want = series(counts, E)
    got = value(lattice, Fraction(E), site, 400)
    with mpmath.workdps(60):
        w = mpmath.mpf(want.numerator) / want.denominator
        tol = mpmath.mpf(10) ** (-22 if lattice == "fcc" else -40)
        assert abs(got.imag) < tol * abs(w)
        assert abs(got.real - w) < tol * abs(w)


@pytest.mark.parametrize("lattice", ["sc", "bcc"])
def test_jets_vs_walk_series(lattice):
    """G0' and G0'' from the closed form in power-series arithmetic equal the term-by-term
    derivatives of the walk expansion, 40 digits."""
    E = 20 if lattice == "sc" else 24
    f = walks_sc if lattice == "sc" else walks_bcc
    counts = [f(N, (0, 0, 0)) for N in range(110)]
    jet = origin_jet(lattice, Energy(Fraction(E), Fraction(0)), 300)
    with mpmath.workdps(60):
        for k in range(3):
            want = series(counts, E, k)
            w = mpmath.mpf(want.numerator) / want.denominator
            assert abs(mp(jet[k]) - w) < mpmath.mpf(10) ** -40 * abs(w)


@pytest.mark.parametrize(("lattice", "E"), [("sc", "5/2"), ("bcc", "-7/2"), ("fcc", "-2"),
                                            ("fcc", "7"), ("sc", "3+1j")])
def test_jets_vs_differences(lattice, E):
    """Inside the band (E + i0) and at a complex energy: the jet against central differences
    of the closed form's ball, step 10^-15 (error ~ 10^-30 relative)."""
    e = parse_energy(E, lattice)
    jet = [mp(x) for x in origin_jet(lattice, e, 300)]
    h = Fraction(1, 10**15)
    with mpmath.workdps(80):
        g = [mp(origin_ball(lattice, Energy(e.re + d, e.im), 330)) for d in (-h, 0, h)]
        hh = mpmath.mpf(h.numerator) / h.denominator
        d1 = (g[2] - g[0]) / (2 * hh)
        d2 = (g[2] - 2 * g[1] + g[0]) / hh**2
        assert abs(jet[0] - g[1]) < mpmath.mpf(10) ** -70
        assert abs(jet[1] - d1) < mpmath.mpf(10) ** -25 * abs(d1)
        assert abs(jet[2] - d2) < mpmath.mpf(10) ** -25 * abs(d2)


# ------------------------------------------------------------------ inside the band

@pytest.mark.parametrize(("lattice", "E", "site"), [
    ("sc", "7/2", (15, 3, 1)), ("sc", "-1/2", (4, 4, 3)), ("bcc", "-5/2", (8, 4, 2)),
    ("bcc", "13/2", (3, 3, 1))])
def test_exact_forms_vs_1d_integral_inside_the_band(lattice, E, site):
    """E + i0 inside the band, far and near sites: exact form vs the 1-D integral over k3 of
    the square lattice's closed form (our independent method), 35 digits."""
    e = parse_energy(E, lattice)
    got = value(lattice, e.re, site, 300)
    with mpmath.workdps(50):
        q = green_integral(lattice, e, site, 35)
        assert abs(got - q) < mpmath.mpf(10) ** -35 * abs(q)


def test_api_result_and_form():
    """``latgreen.green`` gives the exact form, says how it was made, and the printed form
    evaluates (sympy, with the jets for its names) to the printed value."""
    g = latgreen.green("sc", (3, 1, 0), energy="5/2", digits=30)
    # the coefficients are derived; the label is that of the closed form of G0 (sc: Joyce)
    assert g.methods == ("recurrence", "integral")
    assert g.exact.how == "from the literature (Joyce 1973)"
    assert "dG0 = " not in str(g.exact) and "dG0" in g.basis
    e = parse_energy("5/2", "sc")
    jet = [mp(x) for x in origin_jet("sc", e, 200)]
    G0, dG0, d2G0 = sympy.symbols("G0 dG0 d2G0")
    expr = sympy.sympify(str(g.exact))
    with mpmath.workdps(50):
        f = sympy.lambdify((G0, dG0, d2G0), expr, "mpmath")
        v = f(*jet)
        assert abs(v - g.mpc) < mpmath.mpf(10) ** -29 * abs(v)


# ------------------------------------------------------------------ complex energies

@pytest.mark.parametrize(("lattice", "E", "site"), [
    ("sc", "3+1j", (5, 3, 1)), ("bcc", "-2+1/2j", (4, 2, 2)), ("fcc", "3+4j", (3, 2, 1)),
    ("fcc", "13+1/2j", (4, 2, 0))])
def test_exact_forms_at_complex_energies(lattice, E, site):
    """Gaussian-rational coefficients (the realified solves): the exact form vs the 1-D
    integral (sc, bcc) or the reduced 2-D rule (fcc), our independent methods, 35 digits."""
    from latgreen.methods.cubic_quadrature import green_energy_quad

    e = parse_energy(E, lattice)
    f = cubic_energy.field(e)
    v = cubic_energy.green_vectors(lattice, f, site[0])[site]
    assert any(isinstance(x, cubic_energy.QI) and x.im for x in v)
    jet = origin_jet(lattice, e, 300)
    old = flint.ctx.prec
    try:
        flint.ctx.prec = 300
        got = mp(cubic_energy.ball(v, jet))
    finally:
        flint.ctx.prec = old
    with mpmath.workdps(50):
        q = (green_integral(lattice, e, site, 35) if lattice != "fcc"
             else green_energy_quad(lattice, site, e, 35))
        assert abs(got - q) < mpmath.mpf(10) ** -35 * abs(q)


def test_fcc_at_a_complex_energy_api():
    g = latgreen.green("fcc", (2, 1, 1), energy="3+4j", digits=25)
    assert g.methods == ("recurrence", "quadrature") and "*I" in str(g.exact)


# ------------------------------------------------------------------ fcc inside the band

@pytest.mark.parametrize(("E", "sites"), [("7/2", [(2, 1, 1), (4, 2, 2), (5, 3, 0)]),
                                          ("-5/2", [(2, 0, 0), (3, 3, 2)]),
                                          ("9", [(4, 1, 1)])])
def test_fcc_exact_forms_vs_nested_site_integral(E, sites):
    """E + i0 inside the fcc band: the exact forms against the nested per-site integral
    (methods/fcc_green_sites.py, our independent method from the integral alone), 30
    digits."""
    from latgreen.methods.fcc_green_sites import fcc_green_sites

    e = parse_energy(E, "fcc")
    with mpmath.workdps(50):
        qs = fcc_green_sites(e, sites, 32)
        for s, q in zip(sites, qs, strict=True):
            got = value("fcc", e.re, s, 300)
            assert abs(got - q) < mpmath.mpf(10) ** -30 * abs(q), s


def test_fcc_green_api_inside_the_band():
    g = latgreen.green("fcc", (3, 1, 0), energy="7/2", digits=25)
    assert g.methods == ("recurrence", "integral") and g.exact.how == "identified"
    assert any("identified" in n for n in g.notes)  # the prefactor of the fcc G0
