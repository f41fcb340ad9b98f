"""latgreen verify: an intact table passes; every kind of damage is named."""

from __future__ import annotations

import hashlib
import json
import shutil

import pytest

from conftest import run_cli
from latgreen.tables.make import TableRequest, make_table


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    out = tmp_path_factory.mktemp("v") / "t"
    make_table(TableRequest("square", "resistance", 20, 30, out, progress=False, workers=1))
    return out


def _copy(table, tmp_path):
    d = tmp_path / "copy"
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


def test_intact_table_passes(table):
    p = run_cli("verify", str(table), "--all", "--json")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"] and d["rows_recomputed"] == d["rows"] == 231


def test_edited_value_is_caught_by_hash(table, tmp_path):
    d = _copy(table, tmp_path)
    text = (d / "values.csv").read_text()
    (d / "values.csv").write_text(text.replace("0.50000000000000000000000000000",
                                               "0.50000000000000000000000000001", 1))
    p = run_cli("verify", str(d))
    assert p.returncode == 1
    assert "values.csv: sha256 differs" in p.stdout


def test_truncated_file_is_caught(table, tmp_path):
    d = _copy(table, tmp_path)
    data = (d / "values.json").read_bytes()
    (d / "values.json").write_bytes(data[: len(data) // 2])
    p = run_cli("verify", str(d))
    assert p.returncode == 1 and "values.json" in p.stdout and "truncated" in p.stdout


def test_forged_value_with_forged_hashes_is_caught_by_recomputation(table, tmp_path):
    d = _copy(table, tmp_path)
    lines = (d / "values.csv").read_text().splitlines(keepends=True)
    # line 14 of the file is the site (4, 2); change one digit of its value
    parts = lines[13].split(",")
    assert parts[:2] == ["4", "2"]
    parts[2] = parts[2][:-1] + ("1" if parts[2][-1] != "1" else "2")
    lines[13] = ",".join(parts)
    (d / "values.csv").write_text("".join(lines))
    js = json.loads((d / "values.json").read_text())
    js["rows"][12][2] = parts[2]
    (d / "values.json").write_text(json.dumps(js))
    _rehash(d)
    p = run_cli("verify", str(d), "--all")
    assert p.returncode == 1
    assert "values.csv line 14: site (4, 2) has" in p.stdout


def test_not_a_table_is_an_input_error(tmp_path):
    p = run_cli("verify", str(tmp_path))
    assert p.returncode == 2 and "no datapackage.json" in p.stderr


def _forge_row(d, line, col):
    """Change the last digit of column ``col`` on CSV line ``line`` (and the JSON row), then
    forge the hashes; returns the site/energy text of the row."""
    lines = (d / "values.csv").read_text().splitlines(keepends=True)
    parts = lines[line - 1].rstrip("\n").split(",")
    parts[col] = parts[col][:-1] + ("1" if parts[col][-1] != "1" else "2")
    lines[line - 1] = ",".join(parts) + "\n"
    (d / "values.csv").write_text("".join(lines))
    js = json.loads((d / "values.json").read_text())
    js["rows"][line - 2][col] = type(js["rows"][line - 2][col])(parts[col])
    (d / "values.json").write_text(json.dumps(js))
    _rehash(d)
    return parts


def test_tables_at_an_energy_and_energy_grids_are_recomputed(tmp_path):
    """verify recomputes a green table at its energy (complex rows: both components and the
    exact form) and a dos table over its energy grid; a forged imaginary part and a forged
    density, with forged hashes, are named by line."""
    g = tmp_path / "g"
    p = run_cli("table", "triangular", "--quantity", "green", "--energy", "1.5+0.5j",
                "--extent", "2", "--digits", "15", "--out", str(g), "--quiet")
    assert p.returncode == 0, p.stderr
    p = run_cli("verify", str(g), "--all", "--json")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"] and d["rows_recomputed"] == d["rows"] == 6
    parts = _forge_row(g, 4, 3)  # line 4: site (1, 1); column 3: value_im
    assert parts[:2] == ["1", "1"]
    p = run_cli("verify", str(g), "--all")
    assert p.returncode == 1 and "values.csv line 4: site (1, 1) has" in p.stdout

    t = tmp_path / "dos"
    p = run_cli("table", "honeycomb", "--quantity", "dos", "--energies", "0.5:2.5:3",
                "--digits", "15", "--out", str(t), "--quiet")
    assert p.returncode == 0, p.stderr
    p = run_cli("verify", str(t), "--all", "--json")
    d = json.loads(p.stdout)
    assert p.returncode == 0 and d["ok"] and d["rows_recomputed"] == 3
    _forge_row(t, 3, 1)  # E = 1.5
    p = run_cli("verify", str(t), "--all")
    assert p.returncode == 1 and "values.csv line 3: E = 1.5 has" in p.stdout
