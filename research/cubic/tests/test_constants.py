"""(A) geometry, Watson constants, return probabilities."""
from fractions import Fraction

import flint
import mpmath
import pytest

import cubic

# Watson constants, Watson normalisation, 50+ digits; sources beside each value.
# sc: Glasser & Zucker, PNAS 74, 1800-1801 (1977) (value as listed in latgreen REFERENCES.md)
W_SC_30 = "0.505462019717326006052004053227"
# bcc: OEIS A091670
W_BCC_57 = "1.39320392968567685918424626032536824265748121751561787897"
# fcc: Watson 1939; Glasser & Zucker, PNAS 74, 1800 (1977)
W_FCC_30 = "0.448220394388381432116385450017"
# Polya's sc return probability p(3): OEIS A086230
P_SC_51 = "0.340537329550999142826273184432902896710608217124302"
# expected number of returns 3 W_sc: OEIS A086231
U_SC_31 = "1.516386059151978018156012159681"


def _contains(ball: flint.arb, text: str) -> bool:
    """True if the decimal `text`, read as an interval of half an ulp, overlaps the ball."""
    digits = len(text.split(".")[1])
    old = flint.ctx.prec
    try:
        flint.ctx.prec = 400
        ref = flint.arb(text, flint.arb(10) ** (-digits) / 2)
        return ball.overlaps(ref) and ball.rad() < flint.arb(10) ** (-digits)
    finally:
        flint.ctx.prec = old


@pytest.mark.parametrize("lattice,text", [("sc", W_SC_30), ("bcc", W_BCC_57), ("fcc", W_FCC_30)])
def test_watson_constants_published(lattice, text):
    assert _contains(cubic.watson(lattice, 60), text)


def test_polya_sc_return_probability_A086230():
    assert _contains(cubic.return_probability("sc", 60), P_SC_51)


def test_expected_returns_sc_A086231():
    assert _contains(cubic.expected_returns("sc", 50), U_SC_31)


def test_bcc_fcc_return_probability_consistent_with_watson():
    # P = 1 - 1/(z G(z;0)); z G(z;0) = W_bcc (A091670) for bcc, 3 W_fcc for fcc.
    with mpmath.workdps(60):
        pb = 1 - 1 / mpmath.mpf(W_BCC_57)
        pf = 1 - 1 / (3 * mpmath.mpf(W_FCC_30))
        assert _contains(cubic.return_probability("bcc", 60), mpmath.nstr(pb, 50))
        assert _contains(cubic.return_probability("fcc", 60), mpmath.nstr(pf, 25))


def test_watson_normalisation_factors():
    # G(z;0) = W/2, W/8, W/4 (derivation in cubic.py docstring / NOTES.md A)
    for lattice, f in (("sc", 2), ("bcc", 8), ("fcc", 4)):
        g = cubic.green_edge_origin(lattice, 40)
        w = cubic.watson(lattice, 40)
        assert (g * f - w).contains(0)


def test_balls_contain_higher_precision_values():
    for lattice in cubic.LATTICES:
        lo = cubic.watson(lattice, 20)
        hi = cubic.watson(lattice, 80)
        assert lo.contains(hi)
        assert lo.rad() < flint.arb("1e-20")


def test_higher_precision_prefix():
    a = cubic.arb_digits(cubic.return_probability("sc", 70), 40)
    b = cubic.arb_digits(cubic.return_probability("sc", 90), 60)
    assert b.startswith(a[:-1])


def test_arb_digits_refuses_uncertified():
    with pytest.raises(ValueError):
        cubic.arb_digits(cubic.watson("sc", 20), 40)


@pytest.mark.parametrize("lattice,z", [("sc", 6), ("bcc", 8), ("fcc", 12)])
def test_neighbours_and_z(lattice, z):
    nb = cubic.neighbours(lattice)
    assert len(nb) == len(set(nb)) == z == cubic.coordination(lattice)
    for e in nb:
        cubic.check_site(lattice, e)
        assert tuple(-c for c in e) in nb


def test_bands():
    assert cubic.band("sc") == (-6, 6)
    assert cubic.band("bcc") == (-8, 8)
    assert cubic.band("fcc") == (-4, 12)


def test_canonical():
    assert cubic.canonical(-1, 3, -2) == (3, 2, 1)
    assert cubic.canonical(0, 0, -5) == (5, 0, 0)
    # 48 images of a generic site all map to one representative
    from itertools import permutations, product
    imgs = {cubic.canonical(*[s * c for s, c in zip(sg, p)])
            for p in permutations((1, 2, 3)) for sg in product((1, -1), repeat=3)}
    assert imgs == {(3, 2, 1)}


@pytest.mark.parametrize("lattice,site", [
    ("bcc", (1, 0, 0)), ("bcc", (2, 1, 1)), ("fcc", (1, 0, 0)), ("fcc", (1, 1, 1)),
    ("sc", (1, 2)), ("sc", (1.0, 0, 0)), ("sc", "abc"), ("sc", (True, 0, 0)),
])
def test_invalid_sites_rejected(lattice, site):
    with pytest.raises(ValueError):
        cubic.check_site(lattice, site)


def test_invalid_site_message():
    with pytest.raises(ValueError, match="not a bcc site: bcc coordinates are all even or all odd"):
        cubic.check_site("bcc", (1, 0, 0))


def test_unknown_lattice():
    with pytest.raises(ValueError, match="unknown cubic lattice"):
        cubic.watson("hcp", 10)


def test_canonical_sites_counts():
    # sc: all l >= m >= n >= 0 up to 30: C(33, 3) = 5456 (common practice: count of triples)
    assert len(cubic.canonical_sites("sc", 30)) == 5456
    assert Fraction(len(cubic.canonical_sites("sc", 2))) == 10
