"""sc, bcc, fcc: resistances and return probabilities (published values with their sources,
independent methods, precision, the command line)."""

from __future__ import annotations

import json
from fractions import Fraction

import flint
import mpmath
import pytest
import sympy

import latgreen
from conftest import run_cli
from latgreen.exact import cubic as exact_cubic
from latgreen.exact.evaluate import evaluate_form
from latgreen.lattices import get_lattice
from latgreen.methods import cubic_asymptotic, cubic_quadrature
from latgreen.quantities import mpf_fraction
from latgreen.rounding import agreement_digits, round_rational
from latgreen.tables.make import check_region

# Polya's return probability of the sc walk, OEIS A086230 (51 digits)
A086230 = "0.340537329550999142826273184432902896710608217124302"
# expected number of returns to the origin on sc, 3 W_sc, OEIS A086231 (31 digits)
A086231 = "1.516386059151978018156012159681"
# bcc Watson integral Gamma(1/4)^4/(4 pi^3), OEIS A091670 (57 digits)
A091670 = "1.39320392968567685918424626032536824265748121751561787897"
# sc Watson integral, Glasser & Zucker, PNAS 74, 1800-1801 (1977) (30 digits)
W_SC_GLASSER_ZUCKER = "0.505462019717326006052004053227"
# fcc Watson integral 3 Gamma(1/3)^6/(2^(14/3) pi^4), Watson (1939); Glasser & Zucker (1977)
W_FCC_WATSON = "0.448220394388381432116385450017"


def _ball(f, digits):
    old = flint.ctx.prec
    try:
        flint.ctx.prec = int(digits * 3.33) + 40
        return f().str(digits, radius=False)
    finally:
        flint.ctx.prec = old


def _digits_agree(ours: str, published: str) -> None:
    """Our value rounded to the published length equals the published truncated value up
    to one unit in its last place (published digits may be truncated, not rounded)."""
    n = len(published.split(".")[1])
    a = Fraction(ours)
    b = Fraction(published)
    assert abs(a - b) <= Fraction(1, 10**n), (ours, published)


@pytest.mark.parametrize(("lattice", "published"), [
    ("sc", W_SC_GLASSER_ZUCKER),   # Glasser & Zucker, PNAS 74, 1800 (1977)
    ("bcc", A091670),              # OEIS A091670
    ("fcc", W_FCC_WATSON),         # Watson (1939); Glasser & Zucker (1977)
])
def test_watson_constants(lattice, published):
    _digits_agree(_ball(exact_cubic.watson(lattice), 60), published)


def test_watson_sc_to_50_digits_through_a086230():
    # W_sc = 1/(3 (1 - P)) with P from OEIS A086230 (51 digits): W_sc to about 50 digits
    with mpmath.workdps(80):
        w = 1 / (3 * (1 - mpmath.mpf(A086230)))
        ours = mpmath.mpf(_ball(exact_cubic.watson("sc"), 70))
        assert abs(w - ours) < mpmath.mpf(10) ** -50


def test_polya_sc_matches_a086230():
    # OEIS A086230 (51 digits)
    r = latgreen.return_probability("sc", digits=51)
    assert r.methods == ("closed-form", "quadrature") and r.agreement_digits == 51
    _digits_agree(r.value, A086230)
    assert r.value[:50] == A086230[:50]


def test_expected_returns_sc_matches_a086231():
    # OEIS A086231: 1/(1 - P) = 3 W_sc
    with mpmath.workdps(60):
        p = latgreen.return_probability("sc", digits=45).mpf
        _digits_agree(mpmath.nstr(1 / (1 - p), 40), A086231)


def test_polya_bcc_from_a091670():
    # P = 1 - 1/W_bcc with W_bcc from OEIS A091670 (57 digits)
    with mpmath.workdps(80):
        want = 1 - 1 / mpmath.mpf(A091670)
        got = latgreen.return_probability("bcc", digits=50).mpf
        assert abs(got - want) < mpmath.mpf(10) ** -50


def test_polya_fcc_from_watson():
    # P = 1 - 1/(3 W_fcc), W_fcc: Watson (1939), 30 digits
    with mpmath.workdps(60):
        want = 1 - 1 / (3 * mpmath.mpf(W_FCC_WATSON))
        got = latgreen.return_probability("fcc", digits=40).mpf
        assert abs(got - want) < mpmath.mpf(10) ** -29


def test_return_probability_lower_precision_is_rounding_of_higher():
    # our own two-method-checked values: the 20-digit value is the rounding of the 60-digit one
    hi = Fraction(latgreen.return_probability("fcc", digits=60).value)
    lo = latgreen.return_probability("fcc", digits=20).value
    assert lo == str(round_rational(hi, 20))


@pytest.mark.parametrize(("lattice", "site", "z"), [
    ("sc", (0, -1, 0), 6), ("bcc", (1, -1, 1), 8), ("fcc", (0, 1, -1), 12)])
def test_nearest_neighbours_two_over_z(lattice, site, z):
    # R = 2/z between nearest neighbours: common practice (superposition)
    r = latgreen.resistance(lattice, site, digits=30)
    assert str(r.exact) == f"1/{z // 2}" and r.exact.how == "derived"
    assert Fraction(r.value) == round_rational(Fraction(2, z), 30).to_fraction()
    assert abs(cubic_quadrature.resistance_sites_float(lattice, [r.canonical_site])[0]
               - 2 / z) < 1e-13


def test_second_neighbour_sc_from_memory():
    # R(1,1,0) on sc = 0.395... (from memory)
    assert latgreen.resistance("sc", (1, 1, 0), digits=10).value.startswith("0.395")


@pytest.mark.parametrize("lattice", ["sc", "bcc", "fcc"])
def test_far_away_tends_to_2g0(lattice):
    # R -> 2 G(z; 0) = 2/z * 1/(1 - P) far away, with 2 G(z;0) - R ~ 2a/r: common practice
    # (the Green's function decays like 1/(4 pi alpha r))
    g = exact_cubic.watson(lattice)
    two_g0 = Fraction(_ball(lambda: g() / exact_cubic.WATSON_FACTOR[lattice], 40)) * 2
    site = (14, 14, 14) if lattice != "fcc" else (14, 14, 0)
    r = evaluate_form(exact_cubic.resistance_form(lattice, site), 20).center
    assert 0 < two_g0 - r < Fraction(1, 10)


def test_identified_seeds_and_derived_sites():
    # the seeds found by integer-relation search are labelled, with their digits
    for lattice, seeds in exact_cubic.SEEDS.items():
        for site in seeds:
            f = exact_cubic.resistance_form(lattice, site)
            assert f.how == "identified" and f.verified_digits == seeds[site][1]
    assert exact_cubic.resistance_form("sc", (1, 0, 0)).how == "derived"


@pytest.mark.parametrize("lattice", ["sc", "bcc", "fcc"])
def test_lattice_equation_exact(lattice):
    # z G(s) - sum_e G(s + e) = delta_{s,0}, exactly, including the seed coordinates (a wrong
    # recursion step would leave a nonzero rational).  For sc only part of these equations
    # is used by the recursion; for bcc/fcc all are imposed (bookkeeping check).
    lat = get_lattice(lattice)
    extent = {"sc": 14, "bcc": 10, "fcc": 8}[lattice]
    G = exact_cubic.green_vectors(lattice, extent + 1)
    for s in lat.region(extent):
        acc = [lat.z * x for x in G[s]]
        for e in lat.neighbours:
            t = lat.canonical((s[0] + e[0], s[1] + e[1], s[2] + e[2]))
            acc = [a - x for a, x in zip(acc, G[t], strict=True)]
        if not any(s):
            acc[2] -= 1
        assert not any(acc), s


def test_sc_relation_between_axes_exact():
    # s_j [G(s - e_i) - G(s + e_i)] = s_i [G(s - e_j) - G(s + e_j)] (the derivative relation
    # eliminated between two axes; proven in exact/cubic.py), checked on sites not used to
    # build the recursion's steps
    lat = get_lattice("sc")
    G = exact_cubic.green_vectors("sc", 13)

    def g(t):
        return G[lat.canonical(tuple(t))]

    for s in lat.region(12):
        for i in range(3):
            for j in range(i + 1, 3):
                if s[i] and s[j]:
                    def d(k, s=s):
                        a, b = list(s), list(s)
                        a[k] -= 1
                        b[k] += 1
                        return [x - y for x, y in zip(g(a), g(b), strict=True)]
                    assert [s[j] * x for x in d(i)] == [s[i] * y for y in d(j)], s


@pytest.mark.parametrize(("lattice", "extent"), [("sc", 2), ("bcc", 3), ("fcc", 3)])
def test_exact_against_quadrature_at_40_digits(lattice, extent):
    # every canonical site up to the extent: the exact forms (two seeds identified by PSLQ)
    # against the polar quadrature (independent), to all 40 digits
    rep = check_region(lattice, extent, 40, progress=False)
    assert rep.failures == [] and rep.worst_agreement == 40


def test_float_quadrature_every_site_to_extent_12():
    # the float64 check reaches 13 digits on every site (what --verify fast relies on)
    for lattice in ("sc", "bcc", "fcc"):
        lat = get_lattice(lattice)
        for l in range(13):
            for m in range(l + 1):
                sites = lat.column(l, m)
                if not sites or not any(sites[-1]):
                    continue
                fl = cubic_quadrature.resistance_sites_float(lattice, sites)
                for s, v in zip(sites, fl, strict=True):
                    e = evaluate_form(exact_cubic.resistance_form(lattice, s), 20).center
                    assert agreement_digits(e, Fraction(v), 20) >= 13, (lattice, s)


def test_quadrature_of_g0_matches_the_gamma_forms():
    # two independent methods for G(z; 0): quadrature vs the Gamma closed forms, 45 digits
    for lattice in ("sc", "bcc", "fcc"):
        q = mpf_fraction(cubic_quadrature.green_origin(lattice, 45))
        g = exact_cubic.watson(lattice)
        ref = Fraction(_ball(lambda g=g, lat=lattice: g() / exact_cubic.WATSON_FACTOR[lat], 60))
        assert agreement_digits(ref, q, 60) >= 45, lattice


def test_far_field_error_estimate_holds():
    # the far-field error estimate (fitted, not proven) against the exact values for every
    # canonical site with r >= 8 up to extent 14
    for lattice in ("sc", "bcc", "fcc"):
        for s in get_lattice(lattice).region(14):
            if sum(c * c for c in s) < cubic_asymptotic.MIN_R**2:
                continue
            e = evaluate_form(exact_cubic.resistance_form(lattice, s), 25).center
            v, err = cubic_asymptotic.resistance_asymptotic(lattice, s, 20)
            assert abs(e - mpf_fraction(v)) <= mpf_fraction(err), (lattice, s)


@pytest.mark.parametrize(("lattice", "site"), [("sc", (5, 3, 2)), ("bcc", (7, 5, 1)),
                                               ("fcc", (6, 4, 2))])
def test_exact_form_parses_in_sympy_to_the_value(lattice, site):
    # the printed exact form is self-contained sympy: it evaluates to our digits
    r = latgreen.resistance(lattice, site, digits=40)
    v = sympy.N(sympy.sympify(str(r.exact)), 60)
    assert abs(Fraction(str(v)) - Fraction(r.value)) < Fraction(1, 10**40)


@pytest.mark.parametrize(("lattice", "site"), [("sc", (14, 0, 0)), ("bcc", (9, 7, 3)),
                                               ("fcc", (10, 8, 2))])
def test_lower_precision_is_rounding_and_bound_contains(lattice, site):
    form = exact_cubic.resistance_form(lattice, site)
    hi = evaluate_form(form, 150).rounded.to_fraction()
    for d in (5, 33, 80):
        assert evaluate_form(form, d).rounded == round_rational(hi, d), d
    r = latgreen.resistance(lattice, site, digits=30)
    assert abs(Fraction(r.value) - hi) <= Fraction(r.error_bound) <= abs(hi) / 10**29


def test_axis_cancellation_at_l30_sc():
    # R(30,0,0) on sc has coefficients of dozens of digits: the evaluator follows them
    form = exact_cubic.resistance_form("sc", (30, 0, 0))
    assert max(abs(c) for c in form.coeffs) > 10**25
    hi = evaluate_form(form, 100).rounded.to_fraction()
    lo = evaluate_form(form, 30).rounded
    assert lo == round_rational(hi, 30)
    # and the far field confirms the value to its error estimate
    v, err = cubic_asymptotic.resistance_asymptotic("sc", (30, 0, 0), 20)
    assert abs(hi - mpf_fraction(v)) <= mpf_fraction(err)


def test_cli_resistance_and_return_probability():
    p = run_cli("resistance", "bcc", "1", "1", "1", "--digits", "20")
    assert p.returncode == 0 and p.stdout == "0.25000000000000000000\n"  # 2/z, common practice
    p = run_cli("resistance", "sc", "0", "1", "1", "--digits", "25", "--json")
    d = json.loads(p.stdout)
    assert d["canonical_site"] == [1, 1, 0] and d["exact_how"] == "identified"
    assert d["agreement_digits"] == 25 and d["methods"] == ["recurrence", "quadrature"]
    p = run_cli("return-probability", "sc", "--digits", "40")
    with mpmath.workdps(60):
        want = mpmath.nstr(mpmath.mpf(A086230), 40)  # OEIS A086230, rounded to 40 digits
    assert p.returncode == 0 and p.stdout == want + "\n"


@pytest.mark.parametrize(("args", "needle"), [
    (("resistance", "bcc", "1", "0", "0"), "not a bcc site"),
    (("resistance", "fcc", "1", "1", "1"), "not an fcc site"),
    (("resistance", "sc", "1", "0"), "3 coordinates"),
    (("resistance", "fcc", "1.5", "0.5", "0"), "must be an integer"),
    (("return-probability", "square"), "available for sc, bcc, fcc"),
    (("return-probability", "sc", "--digits", "0"), "positive"),
    (("table", "fcc", "--extent", "31", "--out", "x"), "beyond the largest"),
    (("resistance", "sc", "1", "1", "0", "--digits", "301"), "at most 300 digits"),
    (("return-probability", "bcc", "--digits", "1000"), "at most 300 digits"),
    (("table", "bcc", "--extent", "2", "--digits", "400", "--out", "x"), "at most 300"),
])
def test_bad_input_one_line_exit_2(args, needle, tmp_path):
    p = run_cli(*args, cwd=tmp_path)
    assert p.returncode == 2 and "Traceback" not in p.stderr
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and needle in lines[0], p.stderr
    assert not any(tmp_path.iterdir())


def test_return_probability_table(tmp_path):
    # one row per lattice, through the same export as the site tables; sc against A086230
    import csv

    from latgreen.tables.catalogue import make_return_probability_table

    d = make_return_probability_table(tmp_path / "rp", ("sc", "bcc", "fcc"), 30)
    assert d["name"] == "cubic-return-probability"
    assert d["latgreen"]["cross_check"] == {"rows": 3, "rows_checked_at_full_digits": 3,
                                            "min_agreement_digits": 30}
    with open(tmp_path / "rp" / "values.csv", newline="") as f:
        rows = {r["lattice"]: r for r in csv.DictReader(f)}
    assert list(rows) == ["bcc", "fcc", "sc"]
    _digits_agree(rows["sc"]["value"], A086230[:32])  # OEIS A086230
    data = json.loads((tmp_path / "rp" / "values.json").read_text())
    assert data["fields"][0] == "lattice" and len(data["rows"]) == 3


def test_sc_seeds_are_the_values_that_make_g_decay():
    # our own check of the two identified sc seeds without quadrature: the recursion's
    # solutions that grow (coefficients of sigma_1, sigma_2 near 10^17 at l = 20) must be absent, so
    # solving G(20,0,0) and G(20,20,20) = far field for the seed corrections gives ~0
    G = exact_cubic.green_vectors("sc", 20)
    with mpmath.workdps(60):
        g = mpmath.mpf(_ball(exact_cubic.watson("sc"), 60))
        rows, rhs = [], []
        for s in ((20, 0, 0), (20, 20, 20)):
            v = [mpmath.mpf(x.numerator) / x.denominator for x in G[s]]
            base = v[0] * g + v[1] / (mpmath.pi**2 * g) + v[2]
            rows.append([v[3], v[4]])
            rhs.append(cubic_asymptotic.green_asymptotic("sc", s, 40) - base)
        assert max(abs(x) for r in rows for x in r) > 10**17  # the growing solutions
        sigma = mpmath.lu_solve(mpmath.matrix(rows), mpmath.matrix(rhs))
        assert abs(sigma[0]) < 1e-20 and abs(sigma[1]) < 1e-20


def test_check_exits_one_on_an_injected_disagreement(monkeypatch, capsys):
    # a wrong independent value at one fcc site: `check` must report it and exit 1
    from latgreen import cli
    from latgreen.quantities.cubic_resistance import CubicResistance

    real = CubicResistance.quad_sites

    def skewed(self, sites, digits):
        out = real(self, sites, digits)
        with mpmath.workdps(60):
            return [q * (1 + mpmath.mpf(10) ** -15) if s == (2, 1, 1) else q
                    for q, s in zip(out, sites, strict=True)]

    monkeypatch.setattr(CubicResistance, "quad_sites", skewed)
    code = cli.main(["check", "fcc", "--extent", "2", "--digits", "25", "--quiet"])
    out = capsys.readouterr().out
    assert code == 1 and "(2, 1, 1): recurrence vs quadrature agree to" in out


def test_cubic_table_files(tmp_path):
    # a small fcc table through the command line: columns, sites, labels, checks
    import csv

    out = tmp_path / "t"
    p = run_cli("table", "fcc", "--extent", "4", "--digits", "20", "--out", str(out),
                "--quiet", "--workers", "1")
    assert p.returncode == 0, p.stderr
    with open(out / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    lat = get_lattice("fcc")
    assert [tuple(int(r[c]) for c in "lmn") for r in rows] == list(lat.region(4))
    how = {tuple(int(r[c]) for c in "lmn"): r["exact_how"] for r in rows}
    assert how[(0, 0, 0)] == how[(1, 1, 0)] == "derived"  # origin; R = 2/z, common practice
    assert {how[s] for s in how if s not in ((0, 0, 0), (1, 1, 0))} == {"identified"}
    assert all(r["agreement_digits"] == "20" for r in rows)
    desc = json.loads((out / "datapackage.json").read_text())
    assert desc["latgreen"]["verify"] == "full"  # auto: small enough
    assert "identified" in desc["latgreen"]["methods"]["primary"]
