"""Catalogue spec files: validated whole before any work, one line naming file, table and key;
the default catalogue is such a file; the example spec builds; `latgreen build --spec`."""

from __future__ import annotations

import json

import pytest

from conftest import ROOT, run_cli
from latgreen.errors import InputError
from latgreen.tables.spec import default_spec, default_spec_text, inputs_hash, parse_spec

GOOD = """
[[table]]
lattice = "square"
quantity = "resistance"
extent = 3
digits = 10
"""


@pytest.mark.parametrize(("text", "match"), [
    ("[[table]]\nlattice = 'square'\nquantity = 'resistance'\nextent = 3\ndigits = 10\n"
     "extnt = 4\n", r"table 1 \(square-resistance\): unknown key 'extnt'"),
    ("[[table]]\nlattice = 'square'\nquantity = 'resistance'\nextent = '3'\ndigits = 10\n",
     r"key 'extent': expected an integer"),
    ("[[table]]\nlattice = 'square'\nquantity = 'resistance'\nextent = 3\ndigits = true\n",
     r"key 'digits': expected an integer"),
    ("[[table]]\nlattice = 'hexagonal'\nquantity = 'resistance'\nextent = 3\ndigits = 10\n",
     r"key 'lattice': unknown lattice"),
    ("[[table]]\nlattice = 'square'\nquantity = 'resistivity'\nextent = 3\ndigits = 10\n",
     r"key 'quantity': 'resistivity' is not one of"),
    ("[[table]]\nlattice = 'square'\nquantity = 'resistance'\ndigits = 10\n",
     r"missing key 'extent'"),
    (GOOD + GOOD, r"table 2 \(square-resistance\): the same table id as table 1"),
    ("[[table]]\nlattice = 'square'\nquantity = 'green'\nenergy = 4.5\nextent = 3\n"
     "digits = 10\n", r"key 'energy': write it as a string"),
    ("[[table]]\nlattice = 'square'\nquantity = 'green'\nenergy = '4'\nextent = 3\n"
     "digits = 10\n", r"key 'energy': energy '4' is on the band edge"),
    ("[[table]]\nlattice = 'square'\nquantity = 'dos'\nenergies = '-1:1:3'\ndigits = 10\n",
     r"key 'energies': energy .*point 1 of the grid"),
    ("[[table]]\nlattice = 'square'\nquantity = 'dos'\nenergies = '0.5:1:3'\nextent = 3\n"
     "digits = 10\n", r"unknown key 'extent' for a dos table"),
    ("[[table]]\nquantity = 'return-probability'\nlattices = ['sc', 'square']\ndigits = 10\n",
     r"key 'lattices': expected distinct names"),
    ("[[table]]\nlattice = 'square'\nquantity = 'green'\nenergy = '9/2'\nextent = 3\n"
     "digits = 10\nverify = 'fast'\n", r"key 'verify': fast is available for resistance"),
    ("[[table]]\nlattice = 'sc'\nquantity = 'resistance'\nextent = 500\ndigits = 10\n",
     r"key 'extent': extent 500 is beyond"),
    ("[tables]\n", r"unknown top-level key 'tables'"),
    ("[[table]\n", r"not valid TOML"),
    ("", r"no \[\[table\]\] entries"),
])
def test_spec_is_validated_with_file_table_and_key(text, match):
    with pytest.raises(InputError, match=match) as e:
        parse_spec(text, "my.toml")
    assert str(e.value).startswith("spec file my.toml") and "\n" not in str(e.value)


def test_spec_canonical_entry_and_inputs_hash():
    (s,) = parse_spec("[[table]]\nlattice = 'square'\nquantity = 'green'\nenergy = '4.50'\n"
                      "extent = 3\ndigits = 10\n", "t")
    assert s.table_id == "square-green-e4.5"
    assert s.canonical() == {"digits": 10, "energy": "4.5", "exact": True, "extent": 3,
                             "lattice": "square", "quantity": "green", "verify": "full"}
    libs = {"mpmath": "1", "python-flint": "2", "gmpy2": "3", "numpy": "ignored"}
    h = inputs_hash(s.canonical(), libs)
    assert h == inputs_hash(s.canonical(), {**libs, "numpy": "other"})
    assert h != inputs_hash(s.canonical(), {**libs, "mpmath": "1.1"})
    assert h != inputs_hash({**s.canonical(), "digits": 11}, libs)


def test_default_catalogue_is_a_valid_spec_shipped_in_the_package():
    specs = default_spec()
    kinds = {(s.lattice, s.quantity) for s in specs}
    for lat in ("square", "triangular", "honeycomb", "sc", "bcc", "fcc"):
        assert (lat, "resistance") in kinds and (lat, "dos") in kinds and (lat, "green") in kinds
    assert "[[table]]" in default_spec_text()


def test_build_refuses_a_bad_spec_before_any_work(tmp_path):
    spec = tmp_path / "s.toml"
    spec.write_text(GOOD + "\n[[table]]\nlattice = 'square'\nquantity = 'dos'\n"
                    "energies = '0:1:3'\ndigits = 10\n")
    p = run_cli("build", "--spec", str(spec), "--out", str(tmp_path / "cat"))
    assert p.returncode == 2 and len(p.stderr.strip().splitlines()) == 1, p.stderr
    assert f"spec file {spec}: table 2 (square-dos): key 'energies'" in p.stderr
    assert not (tmp_path / "cat").exists()
    p = run_cli("build", "--spec", str(tmp_path / "missing.toml"))
    assert p.returncode == 2 and "missing.toml" in p.stderr


def test_example_spec_builds_and_a_second_build_is_up_to_date(tmp_path):
    spec = ROOT / "examples" / "catalogue-spec" / "my-catalogue.toml"
    out = tmp_path / "cat"
    p = run_cli("build", "--spec", str(spec), "--out", str(out), "--quiet")
    assert p.returncode == 0, p.stderr
    cat = json.loads((out / "catalogue.json").read_text())
    assert len(cat["tables"]) == len(parse_spec(spec.read_text(), "x"))
    p = run_cli("build", "--spec", str(spec), "--out", str(out), "--quiet")
    assert p.returncode == 0 and p.stdout.count("up to date") == len(cat["tables"])
    a = run_cli("build", "--spec", str(spec), "--out", str(out), "--quiet", "--rebuild")
    assert a.returncode == 0 and a.stdout.count("data unchanged") == len(cat["tables"])
