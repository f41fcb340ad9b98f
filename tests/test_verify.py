"""latgreen verify: an intact table passes; every kind of damage is named.

Tables here are tiny (extent <= 8, 15 digits); every forged row also gets forged hashes (a
forger who edits the descriptor too), so only the recomputation can catch it.
"""

from __future__ import annotations

import hashlib
import json
import shutil

import pytest

from conftest import ROOT
from inprocess import cli
from latgreen.tables.catalogue import make_return_probability_table
from latgreen.tables.make import TableRequest, make_table
from latgreen.tables.verify import verify_table

SQUARE_ROWS = 45  # canonical square sites 0 <= n <= m <= 8: 9 * 10 / 2 (common practice)


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    out = tmp_path_factory.mktemp("v") / "t"
    make_table(TableRequest("square", "resistance", 8, 15, out, progress=False, workers=1))
    return out


def _copy(table, tmp_path, name="copy"):
    d = tmp_path / name
    shutil.copytree(table, d)
    return d


def _rehash(d):
    """Make the descriptor agree with edited files (a forger who also edits hashes)."""
    desc = json.loads((d / "datapackage.json").read_text())
    for r in desc["resources"]:
        data = (d / r["path"]).read_bytes()
        r["bytes"] = len(data)
        r["hash"] = "sha256:" + hashlib.sha256(data).hexdigest()
    (d / "datapackage.json").write_text(json.dumps(desc, indent=2))


def _forge_row(d, line, col, new=None):
    """Change column ``col`` on CSV line ``line`` (and the same JSON row): to ``new``, or
    its last character to another digit; then forge the hashes.  Returns the CSV fields."""
    lines = (d / "values.csv").read_text().splitlines(keepends=True)
    parts = lines[line - 1].rstrip("\n").split(",")
    parts[col] = new if new is not None else (
        parts[col][:-1] + ("1" if parts[col][-1] != "1" else "2"))
    lines[line - 1] = ",".join(parts) + "\n"
    (d / "values.csv").write_text("".join(lines))
    js = (d / "values.json").read_text().split("\n")
    row = json.loads(js[line - 1].rstrip(","))
    row[col] = type(row[col])(parts[col])
    js[line - 1] = json.dumps(row, separators=(",", ":")) + ("," if js[line - 1].endswith(",")
                                                             else "")
    (d / "values.json").write_text("\n".join(js))
    _rehash(d)
    return parts


def _delete_line(d, line):
    lines = (d / "values.csv").read_text().splitlines(keepends=True)
    del lines[line - 1]
    (d / "values.csv").write_text("".join(lines))
    js = (d / "values.json").read_text().split("\n")
    del js[line - 1]  # a row in the middle: the commas stay right
    (d / "values.json").write_text("\n".join(js))
    _rehash(d)


def test_intact_table_passes(table):
    p = cli("verify", str(table), "--json")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"], p.stdout
    assert d["rows_recomputed"] == d["rows"] == SQUARE_ROWS


def test_edited_value_is_caught_by_hash(table, tmp_path):
    d = _copy(table, tmp_path)
    text = (d / "values.csv").read_text()
    (d / "values.csv").write_text(text.replace("0.500000000000000", "0.500000000000001", 1))
    p = cli("verify", str(d), "--quiet")
    assert p.returncode == 1
    assert "values.csv: sha256 differs" in p.stdout
    assert "values.csv line 3: site (1, 0) has value" in p.stdout


def test_truncated_file_is_caught(table, tmp_path):
    d = _copy(table, tmp_path)
    data = (d / "values.json").read_bytes()
    (d / "values.json").write_bytes(data[: len(data) // 2])
    p = cli("verify", str(d), "--quiet")
    assert p.returncode == 1 and "values.json" in p.stdout and "truncated" in p.stdout


def test_default_verify_catches_an_edited_row_the_old_sample_skipped(table, tmp_path):
    """The old default recomputed every 25th row; line 14 (site (4, 2)) was not among them.
    Now every row is recomputed unless --sample is given."""
    d = _copy(table, tmp_path)
    parts = _forge_row(d, 14, 2)
    assert parts[:2] == ["4", "2"]
    rep = verify_table(d)
    assert not rep.ok and rep.checked_rows == rep.total_rows == SQUARE_ROWS
    assert any(p.startswith("values.csv line 14: site (4, 2) has value") for p in rep.problems)
    # --all is still accepted (it is the default)
    p = cli("verify", str(d), "--all", "--quiet")
    assert p.returncode == 1 and "values.csv line 14: site (4, 2) has value" in p.stdout


@pytest.mark.parametrize("col,name,new", [
    (3, "exact", "1/3"), (4, "exact_how", "identified"), (5, "error_bound", "5e-10"),
    (6, "methods", "recurrence;quadrature-float64"), (7, "agreement_digits", "14")])
def test_columns_other_than_the_value_are_checked(table, tmp_path, col, name, new):
    """error_bound, agreement_digits, methods and exact_how were never compared."""
    d = _copy(table, tmp_path)
    parts = _forge_row(d, 10, col, new)  # line 10: site (3, 2)
    assert parts[:2] == ["3", "2"]
    rep = verify_table(d)
    assert not rep.ok
    hit = [p for p in rep.problems if p.startswith("values.csv line 10: site (3, 2) has")]
    assert hit and f"{name} '{new}'" in hit[0], rep.problems


def test_deleted_row_with_forged_hashes_is_caught(table, tmp_path):
    d = _copy(table, tmp_path)
    _delete_line(d, 14)  # site (4, 2)
    rep = verify_table(d)
    assert not rep.ok
    assert "values.csv: no row for site (4, 2) of the table's region (deleted?)" in rep.problems
    # also when only a sample is recomputed: the region is checked row by row
    rep = verify_table(d, sample=3)
    assert "values.csv: no row for site (4, 2) of the table's region (deleted?)" in rep.problems


def test_extra_row_outside_the_region_is_caught(table, tmp_path):
    d = _copy(table, tmp_path)
    lines = (d / "values.csv").read_text().splitlines(keepends=True)
    lines.append(lines[-1].replace("8,8,", "9,0,", 1))
    (d / "values.csv").write_text("".join(lines))
    _rehash(d)
    rep = verify_table(d)
    assert any("site (9, 0) is not in the table's region" in p for p in rep.problems)


def test_sample_option_recomputes_fewer_rows_and_says_so(table):
    p = cli("verify", str(table), "--sample", "10", "--json", "--quiet")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"]
    assert 0 < d["rows_recomputed"] < d["rows"] == SQUARE_ROWS
    p = cli("verify", str(table), "--sample", "0")
    assert p.returncode == 2 and "sample must be at least 1" in p.stderr


def test_not_a_table_is_an_input_error(tmp_path):
    p = cli("verify", str(tmp_path))
    assert p.returncode == 2 and "no datapackage.json" in p.stderr


def test_tables_at_an_energy_and_energy_grids_are_recomputed(tmp_path):
    """verify recomputes a green table at its energy (complex rows: both components and the
    exact form) and a dos table over its energy grid; a forged imaginary part and a forged
    density, with forged hashes, are named by line."""
    g = tmp_path / "g"
    p = cli("table", "triangular", "--quantity", "green", "--energy", "1.5+0.5j",
                "--extent", "2", "--digits", "15", "--out", str(g), "--quiet")
    assert p.returncode == 0, p.stderr
    p = cli("verify", str(g), "--json", "--quiet")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"] and d["rows_recomputed"] == d["rows"] == 6
    parts = _forge_row(g, 4, 3)  # line 4: site (1, 1); column 3: value_im
    assert parts[:2] == ["1", "1"]
    p = cli("verify", str(g), "--quiet")
    assert p.returncode == 1 and "values.csv line 4: site (1, 1) has value_im" in p.stdout

    t = tmp_path / "dos"
    p = cli("table", "honeycomb", "--quantity", "dos", "--energies", "0.5:2.5:3",
                "--digits", "15", "--out", str(t), "--quiet")
    assert p.returncode == 0, p.stderr
    p = cli("verify", str(t), "--json", "--quiet")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"] and d["rows_recomputed"] == 3
    _forge_row(t, 3, 1)  # E = 1.5
    p = cli("verify", str(t), "--quiet")
    assert p.returncode == 1 and "values.csv line 3: E = 1.5 has value" in p.stdout
    _delete_line(t, 3)
    rep = verify_table(t)
    assert "values.csv: no row for E = 1.5 of the table's region (deleted?)" in rep.problems


def test_shipped_return_probability_table_verifies():
    """It failed with "unknown lattice 'cubic'": one row per lattice is recomputed by the
    single-value API the table was made with."""
    rep = verify_table(ROOT / "tables" / "cubic-return-probability" / "v1")
    assert rep.ok, rep.problems
    assert rep.checked_rows == rep.total_rows == 3


def test_forged_return_probability_row_is_caught(tmp_path):
    out = tmp_path / "rp"
    make_return_probability_table(out, ("sc", "bcc"), 15)
    assert verify_table(out).ok
    _forge_row(out, 3, 1)  # line 3: sc
    rep = verify_table(out)
    assert any(p.startswith("values.csv line 3: lattice sc has value") for p in rep.problems)


def test_cubic_table_verifies_and_a_forged_row_is_caught(tmp_path):
    out = tmp_path / "sc"
    make_table(TableRequest("sc", "resistance", 3, 15, out, verify="full", progress=False,
                            workers=1))
    assert verify_table(out).ok
    _forge_row(out, 5, 4, "1/7")  # line 5: site (1, 1, 1); column 4: exact
    rep = verify_table(out)
    assert any(p.startswith("values.csv line 5: site (1, 1, 1) has exact '1/7'")
               for p in rep.problems), rep.problems
