"""latgreen.read_table: the shipped tables read back, values as mpmath numbers, lookups by
any site, refusals of edited tables; latgreen.table_id against the README's examples."""

from __future__ import annotations

import shutil
import sys

import mpmath
import pytest

import latgreen
from conftest import ROOT
from latgreen.errors import InputError
from latgreen.tables.make import TableRequest, make_dos_table, make_table

TABLES = ROOT / "tables"


@pytest.fixture(scope="module")
def square():
    return latgreen.read_table(TABLES / "square-resistance" / "v1")


def test_read_table_of_the_shipped_square_table_gives_known_values(square):
    t = square
    assert (t.lattice, t.quantity, t.digits, t.extent, len(t)) == ("square", "resistance",
                                                                   50, 100, 5151)
    with mpmath.workdps(60):
        assert t.value((1, 0)) == mpmath.mpf(1) / 2  # R(1,0) = 1/2: common practice
        # R(1,1) = 2/pi: common practice; the table has 50 correctly rounded digits
        assert abs(t.value((1, 1)) - 2 / mpmath.pi) < mpmath.mpf(10) ** -50
        # R(3,1) = 46/(3 pi) - 4: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999),
        # Table I
        assert t[(3, 1)].exact == "46/(3*pi) - 4"
        assert abs(t.value((3, 1)) - (46 / (3 * mpmath.pi) - 4)) < mpmath.mpf(10) ** -50
    assert mpmath.mp.dps == 15  # nothing leaked (the autouse fixture checks too)


def test_lookup_maps_any_site_to_its_canonical_row(square):
    row = square[(3, -5)]
    assert row.site == (5, 3) and square.lookup((-5, 3)).site == (5, 3)
    assert row["m"] == 5 and row["agreement_digits"] == 50
    assert row.as_dict()["exact_how"] == "derived"


def test_site_outside_the_region_or_off_the_lattice_is_a_clear_error(square):
    with pytest.raises(latgreen.NotInTable, match=r"site \(101, 0\) .* outside the region"):
        square[(101, 0)]
    with pytest.raises(KeyError):  # NotInTable is a KeyError too
        square[(0, 101)]
    with pytest.raises(InputError, match="square sites have 2 coordinates"):
        square[(1, 2, 3)]
    bcc = latgreen.read_table(TABLES, "bcc-resistance")  # a catalogue root and a table id
    with pytest.raises(InputError, match="not a bcc site"):
        bcc[(1, 0, 0)]
    assert bcc[(-1, 1, -1)].site == (1, 1, 1)


def test_read_table_of_an_edited_table_is_refused(tmp_path):
    out = tmp_path / "t"
    make_table(TableRequest("square", "resistance", 3, 12, out, progress=False, workers=1))
    assert len(latgreen.read_table(out)) == 10
    f = out / "values.csv"
    f.write_text(f.read_text().replace("0.5000", "0.5001", 1))
    with pytest.raises(InputError, match="changed after publication"):
        latgreen.read_table(out)


def test_return_probability_and_dos_tables_read_back(tmp_path):
    rp = latgreen.read_table(TABLES / "cubic-return-probability" / "v1")
    # P(sc) = 0.3405373295...: Watson's integral, common practice
    assert mpmath.nstr(rp["sc"].value, 10) == "0.3405373296"
    with pytest.raises(latgreen.NotInTable, match="rows: bcc, fcc, sc"):
        rp["square"]
    out = tmp_path / "dos"
    make_dos_table("square", "0.5:2.5:5", 15, out, progress=False)
    t = latgreen.read_table(out)
    assert t.energies == "0.5:2.5:5" and t["5/2"].key == ("2.5",)
    # rho(2.5) = 0.0992860252627009...: the README's square dos example
    assert mpmath.nstr(t.value("2.5"), 10) == "0.09928602526"
    with pytest.raises(latgreen.NotInTable, match="not on the energy grid"):
        t["2.6"]


def test_green_table_values_are_mpc(tmp_path):
    out = tmp_path / "g"
    make_table(TableRequest("square", "green", 2, 15, out, progress=False, workers=1,
                            energy="9/2"))
    t = latgreen.read_table(out)
    v = t.value((0, 1))
    assert isinstance(v, mpmath.mpc) and v.imag == 0
    # G(9/2; 1, 0) = 0.105764484470048643156...: the README's example (the same site)
    assert mpmath.nstr(v.real, 14) == "0.10576448447005"
    assert t.energy == "4.5"


def test_to_pandas_keeps_the_strings():
    pytest.importorskip("pandas")
    df = latgreen.read_table(TABLES / "cubic-return-probability" / "v1").to_pandas()
    assert list(df.columns) == ["lattice", "value", "exact", "exact_how", "error_bound",
                                "methods", "agreement_digits"]
    assert df["value"].iloc[2] == "0.34053732955099914282627318443290289671060821712430"
    assert isinstance(df["value"].iloc[2], str)
    assert df["agreement_digits"].dtype.kind == "i"


def test_to_pandas_without_pandas_is_a_one_line_error(monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)
    t = latgreen.read_table(TABLES / "cubic-return-probability" / "v1")
    with pytest.raises(InputError, match=r"pip install 'latgreen\[pandas\]'"):
        t.to_pandas()


def test_read_table_refuses_a_table_with_a_symlinked_version(tmp_path):
    root = tmp_path / "tables"
    shutil.copytree(TABLES / "cubic-return-probability", root / "cubic-return-probability")
    shutil.copy(TABLES / "catalogue.json", root / "catalogue.json")
    v1 = root / "cubic-return-probability" / "v1"
    shutil.move(v1, tmp_path / "v1")
    v1.symlink_to(tmp_path / "v1")
    with pytest.raises(InputError, match="symbolic link"):
        latgreen.read_table(root, "cubic-return-probability")


def test_table_id_named_in_the_readme_exists():
    """The README named latgreen.table_id, which did not exist."""
    assert [latgreen.table_id("square", "green", e) for e in ("4.5", "-4.5", "1.5+0.5j",
                                                               "7/3")] == [
        "square-green-e4.5", "square-green-em4.5", "square-green-e1.5p0.5j",
        "square-green-e7_3"]
    assert latgreen.table_id("square", "green", "9/2") == "square-green-e4.5"
    assert latgreen.table_id("square", "resistance") == "square-resistance"
    assert latgreen.table_id("cubic", "return-probability") == "cubic-return-probability"
    with pytest.raises(InputError, match="unknown lattice"):
        latgreen.table_id("cubic", "resistance")
    with pytest.raises(InputError):
        latgreen.table_id("square", "green")  # a green table has an energy
    with pytest.raises(InputError, match="band edge"):
        latgreen.table_id("square", "green", "4")


def test_readme_reading_examples_run(monkeypatch):
    """The README's "Reading tables back" examples, run as a doctest from the project root."""
    import doctest

    text = (ROOT / "README.md").read_text()
    start = text.index("### Reading tables back")
    block = text[text.index("```python", start) + 9: text.index("```\n", start + 30)]
    monkeypatch.chdir(ROOT)
    test = doctest.DocTestParser().get_doctest(block, {}, "README", "README.md", 0)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    runner.run(test)
    assert runner.failures == 0 and runner.tries >= 8
