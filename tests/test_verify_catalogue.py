"""latgreen verify ROOT: every table of a catalogue, against catalogue.json's hashes; one
summary line per table, exit 0 only if all pass."""

from __future__ import annotations

import hashlib
import json
import os
import shutil

import pytest

from inprocess import cli
from latgreen.tables.catalogue import make_return_probability_table
from latgreen.tables.make import TableRequest, make_table


def _entry(root, tid, v, lattice, quantity, digits, extent):
    hashes = {}
    for name in ("values.csv", "values.json"):
        data = (root / tid / v / name).read_bytes()
        hashes[name] = "sha256:" + hashlib.sha256(data).hexdigest()
    return {"path": f"{tid}/{v}", "lattice": lattice, "quantity": quantity,
            "digits": digits, "extent": extent, "hashes": hashes}


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    """square-resistance v1 (extent 3) and v2 (extent 4, current), and the return
    probabilities of sc and bcc, with a catalogue.json written from their files."""
    root = tmp_path_factory.mktemp("cat") / "tables"
    for v, extent in (("v1", 3), ("v2", 4)):
        make_table(TableRequest("square", "resistance", extent, 12,
                                root / "square-resistance" / v, progress=False, workers=1))
    make_return_probability_table(root / "cubic-return-probability" / "v1", ("sc", "bcc"), 12)
    cat = {"name": "latgreen-catalogue", "tables": {
        "square-resistance": {"current": "v2", "versions": {
            "v1": _entry(root, "square-resistance", "v1", "square", "resistance", 12, 3),
            "v2": _entry(root, "square-resistance", "v2", "square", "resistance", 12, 4)}},
        "cubic-return-probability": {"current": "v1", "versions": {
            "v1": _entry(root, "cubic-return-probability", "v1", "cubic",
                         "return-probability", 12, None)}}}}
    (root / "catalogue.json").write_text(json.dumps(cat, indent=2))
    return root


@pytest.fixture
def root(built, tmp_path):
    r = tmp_path / "tables"
    shutil.copytree(built, r, symlinks=True)
    return r


def test_verify_of_a_catalogue_checks_every_current_version(root):
    p = cli("verify", str(root))
    assert p.returncode == 0, p.stdout
    lines = p.stdout.splitlines()
    assert lines[0].startswith("cubic-return-probability v1: ok; 2 rows, 2 recomputed")
    assert lines[1].startswith("square-resistance v2: ok; 15 rows, 15 recomputed")
    assert lines[-1] == "2 table(s): all ok"
    assert "latgreen verify: square-resistance v2 ..." in p.stderr  # progress on stderr
    d = json.loads(cli("verify", str(root), "--json", "--quiet").stdout)
    assert d["ok"] and [t["table"] for t in d["tables"]] == ["cubic-return-probability",
                                                              "square-resistance"]


def test_catalogue_verify_catches_an_edited_old_version(root):
    f = root / "square-resistance" / "v1" / "values.csv"
    f.write_text(f.read_text().replace("0.5000", "0.5001", 1))
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 1
    assert "square-resistance v2: 1 problem(s)" in p.stdout
    assert "problem: v1: values.csv: sha256 differs from catalogue.json" in p.stdout
    assert p.stdout.splitlines()[-1] == "2 table(s): 1 fail"


def test_catalogue_verify_catches_a_current_version_rehashed_in_its_descriptor(root):
    d = root / "square-resistance" / "v2"
    f = d / "values.csv"
    f.write_text(f.read_text().replace("0.5000", "0.5001", 1))
    desc = json.loads((d / "datapackage.json").read_text())
    desc["resources"][0]["hash"] = "sha256:" + hashlib.sha256(f.read_bytes()).hexdigest()
    (d / "datapackage.json").write_text(json.dumps(desc))
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 1
    assert "values.csv: the descriptor's sha256 differs from catalogue.json's" in p.stdout


@pytest.mark.parametrize("path", ["../outside/v1", "/tmp", "square-resistance/../x"])
def test_catalogue_paths_outside_the_root_are_refused(root, path):
    cat = json.loads((root / "catalogue.json").read_text())
    cat["tables"]["square-resistance"]["versions"]["v2"]["path"] = path
    (root / "catalogue.json").write_text(json.dumps(cat))
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 1 and "is not a plain relative path" in p.stdout


def test_symlinked_version_directory_is_refused(root, tmp_path):
    v2 = root / "square-resistance" / "v2"
    shutil.move(v2, tmp_path / "elsewhere")
    os.symlink(tmp_path / "elsewhere", v2)
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 1 and "a symbolic link" in p.stdout


def test_unreadable_catalogue_is_one_line_exit_2(root):
    (root / "catalogue.json").write_text('{"tables": {"x": ')
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 2 and p.stderr.count("\n") == 1 and "catalogue.json" in p.stderr


def test_catalogue_parameters_must_be_the_descriptors(root):
    cat = json.loads((root / "catalogue.json").read_text())
    cat["tables"]["square-resistance"]["versions"]["v2"]["digits"] = 13
    (root / "catalogue.json").write_text(json.dumps(cat))
    p = cli("verify", str(root), "--quiet")
    assert p.returncode == 1 and "catalogue.json: digits '13', the descriptor says '12'" \
        in p.stdout
