"""verify and read_table on hostile, truncated and malformed tables: only the table's own
plain files are read, nothing is fetched, and every case ends in a problem line (exit 1) or
one line on stderr (exit 2), quickly: never a traceback, never a hang."""

from __future__ import annotations

import json
import os
import shutil
import socket
import time

import pytest

from conftest import run_cli
from inprocess import cli
from latgreen.errors import InputError
from latgreen.tables.make import TableRequest, make_table
from latgreen.tables.read import read_table
from latgreen.tables.verify import verify_table

SECRET = "TOP-SECRET-CONTENT-7f3a"


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    out = tmp_path_factory.mktemp("s") / "t"
    make_table(TableRequest("square", "resistance", 3, 12, out, progress=False, workers=1))
    return out


@pytest.fixture
def copy(table, tmp_path):
    d = tmp_path / "t"
    shutil.copytree(table, d)
    (tmp_path / "secret.txt").write_text(f"m,n\n{SECRET}\n")
    return d


def _desc(d):
    return json.loads((d / "datapackage.json").read_text())


def _write_desc(d, desc):
    (d / "datapackage.json").write_text(json.dumps(desc))


def _one_line_error(p):
    assert p.returncode == 2, (p.returncode, p.stdout, p.stderr)
    assert "Traceback" not in p.stderr and SECRET not in p.stderr + p.stdout
    assert p.stderr.startswith("latgreen: error: ") and p.stderr.count("\n") == 1, p.stderr


@pytest.mark.parametrize("path", ["../secret.txt", "/etc/passwd", "sub/values.csv",
                                  "https://example.invalid/values.csv"])
def test_resource_paths_outside_the_table_are_refused_without_reading(copy, path):
    """verify followed the descriptor's paths (it printed an outside file's content) and
    handed URLs to frictionless."""
    desc = _desc(copy)
    desc["resources"][0]["path"] = path
    _write_desc(copy, desc)
    p = cli("verify", str(copy), "--quiet")
    _one_line_error(p)
    assert "only values.csv and values.json" in p.stderr
    with pytest.raises(InputError, match="only values.csv and values.json"):
        read_table(copy)


def test_symlinked_data_file_is_refused_and_its_target_never_read(copy):
    (copy / "values.csv").unlink()
    os.symlink(copy.parent / "secret.txt", copy / "values.csv")
    p = cli("verify", str(copy), "--quiet")
    assert p.returncode == 1 and "values.csv: a symbolic link, not a regular file" in p.stdout
    assert SECRET not in p.stdout + p.stderr and "Traceback" not in p.stderr
    with pytest.raises(InputError, match="symbolic link"):
        read_table(copy)


def test_symlinked_descriptor_is_refused(copy):
    (copy.parent / "elsewhere.json").write_text((copy / "datapackage.json").read_text())
    (copy / "datapackage.json").unlink()
    os.symlink(copy.parent / "elsewhere.json", copy / "datapackage.json")
    p = cli("verify", str(copy), "--quiet")
    _one_line_error(p)
    assert "symbolic link" in p.stderr


def test_fifo_in_place_of_a_data_file_does_not_hang(copy):
    (copy / "values.json").unlink()
    os.mkfifo(copy / "values.json")
    started = time.monotonic()
    p = run_cli("verify", str(copy), "--quiet", timeout=60)
    assert time.monotonic() - started < 30
    assert p.returncode == 1 and "values.json: a FIFO, not a regular file" in p.stdout
    with pytest.raises(InputError, match="FIFO"):
        read_table(copy)


def test_huge_file_in_place_of_a_data_file_is_refused_quickly(copy):
    with open(copy / "values.csv", "wb") as f:
        f.truncate(8 << 30)  # a sparse 8 GiB file of zero bytes
    started = time.monotonic()
    rep = verify_table(copy)
    assert time.monotonic() - started < 20
    assert not rep.ok and any("truncated or extended" in p for p in rep.problems)


def test_verify_never_touches_the_network(copy, monkeypatch):
    """The descriptor has https URLs ($schema, licence): nothing may be fetched."""
    def refuse(*args, **kwargs):
        raise AssertionError("verify opened a network connection")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    assert verify_table(copy).ok


@pytest.mark.parametrize("text", [
    "",                                   # empty
    '{"name": "x", "resources": [',       # truncated
    "[1, 2, 3]",                          # not an object
    "[" * 100_000 + "]" * 100_000,        # deep nesting
    '{"name": 1' + "0" * 5000 + "}",      # a number too long to parse
    '{"name": "t", "resources": "values.csv", "latgreen": {}}',
    '{"name": "t", "resources": [{"name": "values", "path": "values.csv", "bytes": "9"}],'
    ' "latgreen": {}}',
])
def test_malformed_descriptor_is_one_line_exit_2(copy, text):
    (copy / "datapackage.json").write_text(text)
    p = cli("verify", str(copy), "--quiet")
    _one_line_error(p)
    with pytest.raises(InputError):
        read_table(copy)


@pytest.mark.parametrize("key,value,expect", [
    ("extent", 10**6, "cannot recompute"),
    ("extent", 10**15, "cannot recompute"),
    ("extent", 2000, "describe"),          # within the limits, far more rows than the file
    ("digits", 10**9, "cannot recompute"),
    ("digits", 1e300, "not a latgreen table descriptor"),
    ("lattice", "cubic", "cannot recompute"),
    ("verify", "auto", "cannot recompute"),
])
def test_descriptor_with_absurd_parameters_fails_quickly(copy, key, value, expect):
    desc = _desc(copy)
    desc["latgreen"][key] = value
    _write_desc(copy, desc)
    started = time.monotonic()
    p = cli("verify", str(copy), "--quiet")
    assert time.monotonic() - started < 30
    assert "Traceback" not in p.stderr
    assert expect in p.stdout + p.stderr, (p.stdout, p.stderr)
    assert p.returncode == (2 if "descriptor" in expect else 1)


@pytest.mark.parametrize("damage", ["cut-mid-line", "bad-int", "quoted", "binary", "fields"])
def test_malformed_data_rows_are_problems_not_tracebacks(copy, damage):
    lines = (copy / "values.csv").read_bytes().split(b"\n")
    if damage == "cut-mid-line":
        data = b"\n".join(lines[:4]) + b"\n" + lines[4][:7]
    else:
        lines[4] = {"bad-int": b"x" + lines[4], "quoted": b'"' + lines[4] + b'"',
                    "binary": b"\xff\xfe" + lines[4], "fields": lines[4] + b",extra"}[damage]
        data = b"\n".join(lines)
    (copy / "values.csv").write_bytes(data)
    p = cli("verify", str(copy), "--quiet")
    assert p.returncode == 1 and "Traceback" not in p.stderr
    assert "values.csv line 5" in p.stdout, p.stdout
