"""Hostile and bad input to the single-value API and the energy grid: every case is a quick
InputError (one line, exit status 2 on the command line), never a TypeError, an overflow, a
hang or a number computed from a misread input.  Each test is named after what broke."""

from __future__ import annotations

import time
from fractions import Fraction

import numpy as np
import pytest

import latgreen
from conftest import run_cli
from latgreen.energy import parse_energy, parse_energy_grid
from latgreen.lattices import LATTICES, get_lattice

SITES = {"square": (3, 1), "triangular": (2, 1), "honeycomb": (1, 0, 1), "sc": (2, 1, 0),
         "bcc": (2, 0, 0), "fcc": (2, 1, 1)}
IN_BAND = {"square": "1", "triangular": "1", "honeycomb": "2", "sc": "1", "bcc": "1",
           "fcc": "1"}


def _quick(call, match: str, seconds: float = 3.0) -> None:
    t = time.perf_counter()
    with pytest.raises(latgreen.InputError, match=match):
        call()
    assert time.perf_counter() - t < seconds, "the refusal must come at once"


# ------------------------------------------------------------------------------ sites

ENTRY_POINTS = {
    "resistance": lambda lat, site: latgreen.resistance(lat, site, digits=10),
    "green": lambda lat, site: latgreen.green(lat, site, energy="9/2", digits=10),
    "local_dos": lambda lat, site: latgreen.local_dos(lat, site, energy="1", digits=10),
}


@pytest.mark.parametrize("entry", sorted(ENTRY_POINTS))
def test_string_site_is_not_split_into_characters(entry):
    # resistance("square", "31") used to be R(3, 1)
    _quick(lambda: ENTRY_POINTS[entry]("square", "31"), "not the str '31'")
    _quick(lambda: ENTRY_POINTS[entry]("square", b"31"), "not the bytes")


@pytest.mark.parametrize("site", [None, 3.0, 3, iter((3, 1)), (x for x in (3, 1)),
                                  {3: 1, 1: 2}, {3, 1}, [[3], [1]], (3.0, 1), (True, 1),
                                  (np.True_, 1), (np.float64(3), 1), np.array([3.0, 1.0]),
                                  (1 + 0j, 1), ("3.0", "1"), ("1_0", "1"), ("0x3", "1")])
def test_bad_site_types_are_input_errors_not_type_errors(site):
    for entry in ENTRY_POINTS.values():
        _quick(lambda e=entry: e("square", site), "site|coordinate")


def test_numpy_integer_sites_are_accepted():
    # R(3, 1) = 46/(3 pi) - 4: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999)
    for site in (np.array([3, 1]), (np.int64(3), np.uint8(1)), [3, 1], ("3", "-1")):
        assert latgreen.resistance("square", site, digits=12).value == "0.880751588151"


def test_unicode_digit_coordinate_is_refused():
    # int('٣') == 3: an Arabic-Indic digit used to pass as the coordinate 3
    _quick(lambda: latgreen.resistance("square", ("٣", "1"), digits=10), "0-9")
    _quick(lambda: latgreen.green("square", (3, 1), energy="٣", digits=10), "cannot parse")


def test_very_long_coordinate_string_is_refused():
    _quick(lambda: get_lattice("square").site(("1" * 5000, "1")), "at most 1000")


@pytest.mark.parametrize("name", [["square"], ("sc",), {"a": 1}, 3, None, b"square"])
def test_list_as_lattice_name_is_an_input_error(name):
    for call in (lambda: latgreen.resistance(name, (1, 0), digits=10),
                 lambda: latgreen.green(name, (1, 0), energy="5", digits=10),
                 lambda: latgreen.dos(name, energy="1", digits=10),
                 lambda: latgreen.local_dos(name, (1, 0), energy="1", digits=10),
                 lambda: latgreen.return_probability(name, digits=10)):
        _quick(call, "lattice")


@pytest.mark.parametrize("digits", [10.0, "10", True, np.True_, None, 10.5, b"10"])
def test_digits_of_the_wrong_type_are_refused(digits):
    for call in (lambda: latgreen.resistance("square", (1, 0), digits=digits),
                 lambda: latgreen.green("square", (1, 0), energy="5", digits=digits),
                 lambda: latgreen.dos("square", energy="1", digits=digits),
                 lambda: latgreen.return_probability("sc", digits=digits)):
        _quick(call, "digits must be an integer")


def test_numpy_integer_digits_are_accepted():
    assert latgreen.resistance("square", (1, 0), digits=np.int64(5)).value == "0.50000"


# ------------------------------------------------------------------------- far sites

@pytest.mark.parametrize("lattice", ["sc", "bcc", "fcc"])
@pytest.mark.parametrize("scale", [1000, 10**6, 10**30, 10**1000],
                         ids=["1e3", "1e6", "1e30", "1e1000"])
def test_far_cubic_resistance_is_refused_quickly(lattice, scale):
    # sc (10000, 0, 0) used to allocate 9.5 GB; 10**30 raised OverflowError
    site = {"sc": (scale, 0, 0), "bcc": (scale + 1, 1, 1), "fcc": (scale, scale, 0)}[lattice]
    _quick(lambda: latgreen.resistance(lattice, site, digits=10), "coordinates up to 60 ")


@pytest.mark.parametrize("lattice", sorted(LATTICES))
def test_huge_coordinates_do_not_overflow(lattice):
    # 10**1000 used to raise OverflowError (int too large to convert to float)
    big = 10**1000
    site = {"square": (big, 1), "triangular": (big, 1), "honeycomb": (big, 1, 1),
            "sc": (big, 1, 1), "bcc": (big + 1, 1, 1), "fcc": (big, 1, 1)}[lattice]
    _quick(lambda: latgreen.resistance(lattice, site, digits=10), "too far out")
    _quick(lambda: latgreen.green(lattice, site, energy="20", digits=10), "offered")
    _quick(lambda: latgreen.local_dos(lattice, site, energy=IN_BAND[lattice], digits=10),
           "offered")
    assert get_lattice(lattice).distance(site) == float("inf")


@pytest.mark.parametrize("lattice", sorted(LATTICES))
def test_local_dos_far_site_is_refused_like_green(lattice):
    # local_dos lacked the range refusal of green: square (10**6, 0) ran out of time,
    # sc (10**6, 0, 0) out of memory
    far = {"square": (10**6, 0), "triangular": (10**6, 0), "honeycomb": (10**6, 0, 0),
           "sc": (10**6, 0, 0), "bcc": (10**6, 10**6, 10**6), "fcc": (10**6, 10**6, 0)}
    _quick(lambda: latgreen.local_dos(lattice, far[lattice], energy=IN_BAND[lattice],
                                      digits=10), "canonical coordinates up to")


def test_far_site_digits_beyond_reach_are_refused_before_the_quadrature():
    # (10**30, 1) at 1000 digits ran the quadrature for 5 minutes before refusing
    _quick(lambda: latgreen.resistance("square", (10**30, 1), digits=1000),
           "at most --digits 240")


def test_far_triangular_site_far_out_is_computed():
    # beyond the exact range: quadrature confirmed by the far-field expansion; the value
    # against ln(d)/(sqrt(3) pi) + 0.33441... (README, from memory) to 6 digits
    r = latgreen.resistance("triangular", (10**12, 0), digits=10)
    assert r.methods == ("quadrature", "asymptotic")
    assert abs(float(r.value) - (12 * 2.302585092994046 / (3**0.5 * 3.141592653589793)
                                 + 0.3344)) < 1e-4


# --------------------------------------------------------------------------- energies

@pytest.mark.parametrize(("lattice", "energy", "distance"), [
    ("square", "4+1e-50j", "1e-50"), ("square", "1e-100", "1e-100"),
    ("square", "1e-300j", "1e-300"), ("square", "3.999999999999", "1e-12"),
    ("triangular", "-2+1e-50j", "1e-50"), ("honeycomb", "1.000000000000000000001", "1e-21"),
    ("sc", "6+1e-50j", "1e-50"), ("bcc", "1e-100", "1e-100"), ("fcc", "12+1e-50j", "1e-50"),
])
def test_energy_next_to_a_singular_point_is_refused_with_its_distance(lattice, energy,
                                                                     distance):
    # 4+1e-50j used to end in "ValueError: man_exp requires an exact, finite value"
    msg = f"too close to the singular energy .*distance {distance}; the limit is 1e-8"
    _quick(lambda: latgreen.green(lattice, SITES[lattice], energy=energy, digits=15), msg)


@pytest.mark.parametrize("energy", ["1e300", "1e300j", "-1e7", "1" + "0" * 350,
                                    Fraction(10**400), 10**7, np.int64(10**7)])
def test_huge_energy_is_refused(energy):
    # 1e300 used to run 90 s into a PrecisionError, 1e300j to hang
    _quick(lambda: latgreen.green("square", (2, 1), energy=energy, digits=15),
           "limit 1e6|too long")


@pytest.mark.parametrize("energy", ["1e999999999", "1e-999999999j", "1" * 500,
                                    Fraction(1, 10**500) + 5, "nan", "inf", "-inf", "1e",
                                    "4.5.1", "", "1jj", "++1"])
def test_malformed_or_giant_energy_is_refused_at_once(energy):
    _quick(lambda: parse_energy(energy, "sc"), "energy", seconds=0.5)


def test_energy_just_inside_the_limit_is_still_computed():
    # E = 9/2 + 1e-7 i, off the band: the two methods agree (the refusals bite only at 1e-8)
    g = latgreen.green("square", (1, 0), energy="4.5+1e-7j", digits=15)
    assert g.methods == ("recurrence", "quadrature") and g.agreement_digits == 15


# ----------------------------------------------------------------------- energy grid

@pytest.mark.parametrize(("grid", "match"), [
    ("1:1:3", "would repeat one energy"), ("2:1:3", "B < A"), ("1:2:0", "between 1 and"),
    ("1:2:-2", "between 1 and"), ("1:2:10001", "between 1 and 10000"),
    ("1:2:99999999999999999999", "whole number"), ("1:2:2.5", "whole number"),
    ("1:2:1e3", "whole number"), ("1:2:٣", "whole number"), ("1:2:1", "COUNT = 1"),
    ("1:2", "A:B:COUNT"), ("1e999999999:2:3", "too long"),
])
def test_energy_grid_that_repeats_or_runs_backwards_is_refused(grid, match):
    # 1:1:3 used to write three identical rows
    _quick(lambda: parse_energy_grid(grid), match, seconds=0.5)


def test_single_point_grid_is_a_to_a_count_one():
    assert [str(e) for e in parse_energy_grid("2.5:2.5:1")] == ["2.5"]


# ----------------------------------------------------------------------- command line

@pytest.mark.parametrize("args", [
    ("resistance", "sc", "10000", "0", "0"),
    ("resistance", "triangular", "1" + "0" * 30, "0"),
    ("green", "square", "1", "0", "--energy", "4+1e-50j"),
    ("green", "square", "1", "0", "--energy", "1e999999999"),
    ("dos", "square", "--energy", "1e-300"),
    ("resistance", "square", "٣", "1"),
])
def test_cli_bad_input_is_one_line_and_exit_2(args):
    t = time.perf_counter()
    p = run_cli(*args, timeout=60)
    assert p.returncode == 2, p.stderr
    assert p.stderr.startswith("latgreen: error: ") and p.stderr.count("\n") == 1, p.stderr
    assert time.perf_counter() - t < 30


def test_cli_dos_grid_with_duplicate_rows_leaves_nothing(tmp_path):
    out = tmp_path / "dup"
    p = run_cli("table", "square", "--quantity", "dos", "--energies", "1:1:3", "--digits",
                "10", "--out", str(out), timeout=60)
    assert p.returncode == 2 and p.stderr.count("\n") == 1, p.stderr
    assert "repeat" in p.stderr
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("digits", ["٣", "1_0", "10.0", "99999999999999999"])
def test_cli_digits_in_unicode_or_with_underscores_are_refused(digits):
    # int('٣') == 3 and int('1_0') == 10: --digits used to accept both
    p = run_cli("resistance", "square", "1", "0", "--digits", digits, timeout=60)
    assert p.returncode == 2 and p.stderr.count("\n") == 1, p.stderr
    assert "digits must be an integer" in p.stderr


def test_square_far_site_with_both_coordinates_large_does_not_hang():
    # (10**30, 10**30) ran the cosine recurrence 10**30 steps (killed after 2 minutes); the
    # recurrence now starts at a far n.  The far-field expansion confirms the value:
    # pi R ~ ln r + gamma + (3/2) ln 2 (Cserti, Am. J. Phys. 68, 896 (2000))
    t = time.perf_counter()
    r = latgreen.resistance("square", (10**30, 10**30), digits=12)
    assert time.perf_counter() - t < 10
    assert r.methods == ("quadrature", "asymptotic")
    import math
    want = (math.log(10**30 * math.sqrt(2)) + 0.5772156649015329 + 1.5 * math.log(2)) / math.pi
    assert abs(float(r.value) - want) < 1e-9
