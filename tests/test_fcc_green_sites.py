"""The per-site fcc integral inside the band (methods/fcc_green_sites.py) against our other
methods and the lattice equation.

Conventions (DESIGN.md): hopping +1, G(E; r) = <0|(E - H)^-1|r>, E + i0 in the band [-4, 12],
fcc sites (l, m, n) with l + m + n even."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

from latgreen.energy import Energy, parse_energy
from latgreen.errors import InputError
from latgreen.methods.cubic_green_closed import origin_ball
from latgreen.methods.fcc_green_nested import green_fcc_nested
from latgreen.methods.fcc_green_sites import fcc_green_sites

NEIGHBOURS = [(a, b, 0) for a in (1, -1) for b in (1, -1)] + \
    [(a, 0, b) for a in (1, -1) for b in (1, -1)] + [(0, a, b) for a in (1, -1) for b in (1, -1)]


def ball_mpc(b) -> mpmath.mpc:
    """The centre of an acb ball at the current mpmath precision."""
    return mpmath.mpc(mpmath.mpf(b.real.mid().str(mpmath.mp.dps + 5, radius=False)),
                      mpmath.mpf(b.imag.mid().str(mpmath.mp.dps + 5, radius=False)))


def canon(site):
    return tuple(sorted((abs(v) for v in site), reverse=True))


def rel(a, b):
    return abs(a - b) / abs(b)


@pytest.mark.parametrize("E", ["1/2", "5", "21/2", "-5/2"])
def test_origin_against_closed_form_and_nested_integral(E):
    """G(E + i0; 0) against the closed form of methods/cubic_green_closed.py (its prefactor
    identified by an exact rational fit, see that module) and against the nested 1-D
    integral of Carlson's R_F (methods/fcc_green_nested.py): three methods of ours that share
    only the definition of G, 30 digits."""
    e = parse_energy(E, "fcc")
    g = fcc_green_sites(e, [(0, 0, 0)], 30)[0]
    with mpmath.workdps(50):
        a = ball_mpc(origin_ball("fcc", e, 250))
        assert rel(g, a) < mpmath.mpf(10) ** -30
    if E in ("5", "-5/2"):
        with mpmath.workdps(50):
            b = green_fcc_nested(e, 30)
            assert rel(g, b) < mpmath.mpf(10) ** -30
    assert g.imag < 0  # Im G(E + i0; 0) = -pi DOS < 0 inside the band (common practice)


@pytest.mark.parametrize("E", ["-3", "1/2", "7"])
def test_nearest_neighbour_from_lattice_equation_at_origin(E):
    """E G(E; 0) - 1 = 12 G(E; 1,1,0): the lattice equation (E - H) G = delta at the origin
    with the 12 equal neighbours (common practice); 30 digits."""
    e = parse_energy(E, "fcc")
    g0, g1 = fcc_green_sites(e, [(0, 0, 0), (1, 1, 0)], 30)
    x = mpmath.mpf(e.re.numerator) / e.re.denominator
    with mpmath.workdps(50):
        assert abs(x * g0 - 1 - 12 * g1) < mpmath.mpf(10) ** -30 * abs(g0)


@pytest.mark.parametrize("E", ["-5/2", "3"])
def test_lattice_equation_away_from_origin(E):
    """E G(r) = sum of G over the 12 neighbours of r for r != 0 (the lattice equation, common
    practice), at sites up to (3,2,1); a consistency check of the integral at 30 digits (the
    rule sees each site separately, it knows nothing of this relation)."""
    e = parse_energy(E, "fcc")
    centres = [(1, 1, 0), (2, 0, 0), (2, 1, 1), (2, 2, 0), (3, 1, 0)]
    need = sorted({canon((r[0] + a, r[1] + b, r[2] + c)) for r in centres
                   for a, b, c in NEIGHBOURS} | set(centres))
    val = dict(zip(need, fcc_green_sites(e, need, 30), strict=True))
    x = mpmath.mpf(e.re.numerator) / e.re.denominator
    big = max(abs(v) for v in val.values())
    with mpmath.workdps(50):
        for r in centres:
            s = sum(val[canon((r[0] + a, r[1] + b, r[2] + c))] for a, b, c in NEIGHBOURS)
            assert abs(x * val[r] - s) < mpmath.mpf(10) ** -30 * big


def test_band_centre_and_symmetric_sites():
    """E = 0 (the layout where three singular lines meet): the origin against the closed
    form's E = 0 limit (methods/cubic_green_closed.py, identified prefactor), 25 digits; sites
    related by cubic symmetry (signs, order) are reduced to one canonical site and give the
    same number."""
    e = parse_energy("0", "fcc")
    g = fcc_green_sites(e, [(0, 0, 0), (2, 1, 1), (-1, 2, -1), (1, 1, 2)], 25)
    with mpmath.workdps(45):
        assert rel(g[0], ball_mpc(origin_ball("fcc", e, 250))) < mpmath.mpf(10) ** -25
    assert g[1] == g[2] == g[3]


def test_higher_precision_is_a_prefix():
    """Repetition at more digits: the 15-digit values agree with the 30-digit ones to 15
    digits (relative to max |G|)."""
    e = parse_energy("9/2", "fcc")
    sites = [(0, 0, 0), (3, 3, 0), (4, 2, 2)]
    lo = fcc_green_sites(e, sites, 15)
    hi = fcc_green_sites(e, sites, 30)
    big = max(abs(v) for v in hi)
    with mpmath.workdps(50):
        assert all(abs(a - b) < mpmath.mpf(10) ** -15 * big for a, b in zip(lo, hi,
                                                                           strict=True))


@pytest.mark.parametrize("E", [Energy(Fraction(12), Fraction(0)),
                               Energy(Fraction(-4), Fraction(0)),
                               Energy(Fraction(13), Fraction(0)),
                               Energy(Fraction(1), Fraction(1, 2))])
def test_energy_outside_band_refused(E):
    with pytest.raises(InputError) as ex:
        fcc_green_sites(E, [(0, 0, 0)], 10)
    assert "\n" not in str(ex.value)


@pytest.mark.parametrize("site", [(1, 0, 0), (1, 1, 1), (1.0, 1, 0), (1, 1), "110"])
def test_bad_site_refused(site):
    with pytest.raises(InputError) as ex:
        fcc_green_sites(parse_energy("5", "fcc"), [(0, 0, 0), site], 10)
    assert "\n" not in str(ex.value)


def test_bad_energy_type_and_dps_refused():
    with pytest.raises(InputError):
        fcc_green_sites("5", [(0, 0, 0)], 10)  # type: ignore[arg-type]
    with pytest.raises(InputError):
        fcc_green_sites(parse_energy("5", "fcc"), [(0, 0, 0)], 0)
    with pytest.raises(InputError):
        fcc_green_sites(parse_energy("5", "fcc"), [], 10)
