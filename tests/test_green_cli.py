"""The green and dos commands and tables, through a subprocess as users run them."""

from __future__ import annotations

import csv
import json

import mpmath
import pytest

import latgreen
from conftest import run_cli
from latgreen.energy import parse_energy
from latgreen.exact import square_green as sg


def g00_mpmath(E: mpmath.mpf) -> mpmath.mpf:
    """G(E;0,0) = (2/(pi E)) K(16/E^2) for real E > 4 (K of parameter m, DLMF 19.2)."""
    return 2 / (mpmath.pi * E) * mpmath.ellipk(16 / E**2)


def test_green_plain_value():
    # G(1,0) = (E G(0,0) - 1)/4: the lattice equation at the origin (common practice), with
    # G(0,0) from mpmath's K (DLMF 19.2); real E outside the band: Im G = 0 exactly
    p = run_cli("green", "square", "1", "0", "--energy", "9/2", "--digits", "30")
    assert p.returncode == 0, p.stderr
    re_, im = p.stdout.strip().rsplit("+", 1)
    assert im == "0j"
    with mpmath.workdps(50):
        want = (mpmath.mpf(9) / 2 * g00_mpmath(mpmath.mpf(9) / 2) - 1) / 4
        assert abs(mpmath.mpf(re_) - want) <= mpmath.mpf("5e-31")
    assert len(re_.replace("0.", "", 1)) == 30


def test_green_exact_and_json():
    p = run_cli("green", "square", "0", "1", "--energy", "9/2", "--exact")
    assert p.returncode == 0 and p.stdout == "9/8*G00 - 1/4\n"  # (E G00 - 1)/4, common practice
    p = run_cli("green", "square", "-3", "1", "--energy", "1.5+0.5j", "--digits", "25",
                "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    for key in ("lattice", "quantity", "site", "canonical_site", "digits", "value", "exact",
                "exact_how", "error_bound", "methods", "agreement_digits", "notes", "energy",
                "value_re", "value_im", "error_bound_re", "error_bound_im"):
        assert key in d, key
    assert d["energy"] == "1.5+0.5j" and d["quantity"] == "green"
    assert d["site"] == [-3, 1] and d["canonical_site"] == [3, 1]
    assert complex(d["value"]) == complex(float(d["value_re"]), float(d["value_im"]))
    assert d["agreement_digits"] == 25 and d["methods"] == ["recurrence", "quadrature"]
    # the library's certified evaluation gives the same digits
    v = sg.evaluate(sg.green_form(parse_energy("1.5+0.5j"), 3, 1), parse_energy("1.5+0.5j"),
                    (3, 1), 25)
    assert (d["value_re"], d["value_im"]) == (str(v.re), str(v.im))


def test_negative_energy_after_the_option():
    # argparse would take "-1.5+0.5j" for an option; the command line must accept it
    p = run_cli("green", "square", "1", "0", "--energy", "-1.5+0.5j", "--digits", "10")
    assert p.returncode == 0, p.stderr
    # bipartite symmetry G(-conj E) = -(-1)^(m+n) conj G(E) (common practice): m+n odd
    E = parse_energy("1.5+0.5j")
    v = sg.evaluate(sg.green_form(E, 1, 0), E, (1, 0), 10)
    assert complex(p.stdout) == complex(float(str(v.re)), -float(str(v.im)))


def test_dos_command():
    p = run_cli("dos", "square", "--energy", "2.5", "--digits", "25", "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    with mpmath.workdps(40):  # rho = K(1 - E^2/16)/(2 pi^2), DLMF 19.2 for K
        want = mpmath.ellipk(1 - mpmath.mpf(2.5) ** 2 / 16) / (2 * mpmath.pi**2)
        assert abs(mpmath.mpf(d["value"]) - want) <= mpmath.mpf(d["error_bound"])
    assert d["energy"] == "2.5" and d["quantity"] == "dos"
    p = run_cli("dos", "square", "--energy", "-5")
    assert p.returncode == 0 and p.stdout == "0\n"


@pytest.mark.parametrize(("args", "words"), [
    (("green", "square", "1", "0", "--energy", "4"), "resistance"),
    (("green", "square", "1", "0", "--energy", "-4"), "band edge"),
    (("green", "square", "1", "0", "--energy", "0"), "band centre"),
    (("green", "square", "1", "0", "--energy", "1-1j"), "negative imaginary"),
    (("green", "square", "1", "0", "--energy", "4.5x"), "cannot parse"),
    (("green", "square", "1", "0", "--energy", "9/2", "--digits", "0"), "digits"),
    (("dos", "square", "--energy", "1+1j"), "real energies"),
    (("dos", "square", "--energy", "-4"), "band edge"),
    (("table", "square", "--quantity", "green", "--energy", "0", "--extent", "2", "--out",
      "x"), "band centre"),
    (("table", "square", "--quantity", "green", "--energy", "9/2", "--extent", "2",
      "--verify", "fast", "--out", "x"), "not available"),
    (("table", "square", "--quantity", "dos", "--energies", "-1:1:3", "--out", "x"),
     "band centre"),
    (("table", "square", "--quantity", "dos", "--extent", "3", "--out", "x"), "--energies"),
    (("check", "square", "--quantity", "green", "--extent", "2"), "resistance quantity"),
])
def test_bad_energies_one_line_exit_2(args, words, tmp_path):
    p = run_cli(*args, cwd=tmp_path)
    assert p.returncode == 2, (p.returncode, p.stderr)
    assert p.stdout == ""
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and words in lines[0] and "Traceback" not in p.stderr
    assert not (tmp_path / "x").exists()


def test_green_table(tmp_path):
    out = tmp_path / "g"
    p = run_cli("table", "square", "--quantity", "green", "--energy", "1.5+0.5j", "--extent",
                "1", "--digits", "15", "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    desc = json.loads((out / "datapackage.json").read_text())
    assert desc["name"] == "square-green-e1.5p0.5j"
    assert desc["latgreen"]["energy"] == "1.5+0.5j"
    assert (desc["latgreen"]["energy_re"], desc["latgreen"]["energy_im"]) == ("3/2", "1/2")
    assert desc["prov:wasGeneratedBy"]["prov:used"]["energy"] == "1.5+0.5j"
    with open(out / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [(r["m"], r["n"]) for r in rows] == [("0", "0"), ("1", "0"), ("1", "1")]
    g = latgreen.green("square", (1, 0), energy="1.5+0.5j", digits=15)  # the API, one row
    r = rows[1]
    assert (r["value_re"], r["value_im"], r["exact"]) == (g.value_re, g.value_im, str(g.exact))
    assert {r["methods"] for r in rows} == {"recurrence;quadrature"}
    assert {r["agreement_digits"] for r in rows} == {"15"}
    js = json.loads((out / "values.json").read_text())
    assert js["energy"] == "1.5+0.5j" and js["fields"][2:4] == ["value_re", "value_im"]
    assert [str(x) for x in js["rows"][2][:4]] == [rows[2][k] for k in
                                                  ("m", "n", "value_re", "value_im")]
    frictionless = pytest.importorskip("frictionless")
    assert frictionless.Package(str(out / "datapackage.json")).validate().valid


def test_real_energy_table_prints_zero_imaginary_parts(tmp_path):
    out = tmp_path / "g"
    p = run_cli("table", "square", "--quantity", "green", "--energy", "-4.5", "--extent", "2",
                "--digits", "15", "--out", str(out), "--quiet", "--no-exact")
    assert p.returncode == 0, p.stderr
    with open(out / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    assert {r["value_im"] for r in rows} == {"0"} and {r["error_bound_im"] for r in rows} == {"0"}
    assert json.loads((out / "datapackage.json").read_text())["name"] == "square-green-em4.5"


def test_dos_table(tmp_path):
    out = tmp_path / "d"
    p = run_cli("table", "square", "--quantity", "dos", "--energies", "-4.5:4.5:4",
                "--digits", "20", "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    with open(out / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [r["energy"] for r in rows] == ["-4.5", "-1.5", "1.5", "4.5"]
    assert rows[0]["value"] == rows[3]["value"] == "0"  # outside the band
    assert rows[1]["value"] == rows[2]["value"] == latgreen.dos("square", "1.5", 20).value
    desc = json.loads((out / "datapackage.json").read_text())
    assert desc["latgreen"]["energy_grid"] == ["-4.5", "-1.5", "1.5", "4.5"]
    frictionless = pytest.importorskip("frictionless")
    assert frictionless.Package(str(out / "datapackage.json")).validate().valid


def test_green_table_bytes_do_not_depend_on_workers(tmp_path, monkeypatch):
    """A pool of worker processes (forced for a tiny table) rebuilds the provider at the
    energy and gives the same data bytes as one process."""
    from latgreen.quantities.square_green import SquareGreen
    from latgreen.tables.make import TableRequest, make_table

    monkeypatch.setattr(SquareGreen, "parallel_min_sites", 0)
    outs = []
    for w in (1, 2):
        out = tmp_path / f"w{w}"
        make_table(TableRequest("square", "green", 1, 12, out, progress=False, workers=w,
                                energy="2.5"))
        outs.append(out)
    for name in ("values.csv", "values.json"):
        assert (outs[0] / name).read_bytes() == (outs[1] / name).read_bytes()
