"""Table files: round trip, hashes, Frictionless validation, determinism, atomicity."""

from __future__ import annotations

import csv
import hashlib
import json
import os
import signal
import subprocess
import sys
import time
from fractions import Fraction
from pathlib import Path

import pytest
import sympy

from conftest import ROOT
from latgreen.lattices.square import SQUARE
from latgreen.quantities import get_provider
from latgreen.tables.build import rows
from latgreen.tables.export import write_table
from latgreen.tables.make import TableRequest, make_table
from latgreen.tables.render import RowBlock, render

frictionless = pytest.importorskip("frictionless")


@pytest.fixture(scope="module")
def table(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("tables") / "sq"
    make_table(TableRequest("square", "resistance", 12, 35, out, progress=False))
    return out


def test_hashes_and_bytes_match_the_descriptor(table):
    d = json.loads((table / "datapackage.json").read_text())
    assert d["$schema"].endswith("/2.0/datapackage.json")
    for res in d["resources"]:
        data = (table / res["path"]).read_bytes()
        assert res["bytes"] == len(data)
        assert res["hash"] == "sha256:" + hashlib.sha256(data).hexdigest()


def test_frictionless_validates_the_package(table):
    report = frictionless.Package(str(table / "datapackage.json")).validate()
    assert report.valid, report.flatten(["type", "note"])


def test_frictionless_validates_a_honeycomb_package(tmp_path):
    # three coordinate columns (m, n, s) as the primary key
    out = tmp_path / "hc"
    d = make_table(TableRequest("honeycomb", "resistance", 5, 25, out, progress=False))
    assert d["resources"][0]["schema"]["primaryKey"] == ["m", "n", "s"]
    report = frictionless.Package(str(out / "datapackage.json")).validate()
    assert report.valid, report.flatten(["type", "note"])


def test_tampered_file_is_detected(table, tmp_path):
    copy = tmp_path / "copy"
    copy.mkdir()
    for f in table.iterdir():
        (copy / f.name).write_bytes(f.read_bytes())
    text = (copy / "values.csv").read_text()
    (copy / "values.csv").write_text(text.replace("0.5000", "0.5001", 1))
    report = frictionless.Package(str(copy / "datapackage.json")).validate()
    assert not report.valid
    assert "hash-count" in {e for e in report.flatten(["type"]) for e in e}


def test_round_trip_values_and_exact_forms(table):
    with open(table / "values.csv", newline="", encoding="utf-8") as f:
        data = list(csv.DictReader(f))
    assert len(data) == SQUARE.region_size(12) == 91
    sites = [(int(r["m"]), int(r["n"])) for r in data]
    assert sites == sorted(sites) == list(SQUARE.region(12))
    js = json.loads((table / "values.json").read_text())
    assert js["fields"] == list(data[0].keys())
    assert [tuple(r[:2]) for r in js["rows"]] == sites
    for r, j in zip(data, js["rows"], strict=True):
        assert [str(x) for x in j] == list(r.values())  # the same row, field by field
        if r["methods"] == "definition":
            continue
        # the exact form, parsed back by sympy, rounds to the tabulated value
        v = sympy.N(sympy.sympify(r["exact"]), 60)
        assert abs(Fraction(str(v)) - Fraction(r["value"])) <= Fraction(r["error_bound"]) * 2
        assert int(r["agreement_digits"]) == 35
        assert r["methods"] == "recurrence;quadrature"


def test_provenance_block(table):
    d = json.loads((table / "datapackage.json").read_text())
    prov = d["prov:wasGeneratedBy"]
    assert prov["prov:wasAssociatedWith"]["prov:type"] == "prov:SoftwareAgent"
    assert prov["prov:startedAtTime"] <= prov["prov:endedAtTime"]
    assert d["latgreen"]["cross_check"]["min_agreement_digits"] == 35
    assert "infinite lattices" in d["latgreen"]["conventions"]["caveat"]


def test_data_bytes_are_deterministic(table, tmp_path):
    again = tmp_path / "again"
    make_table(TableRequest("square", "resistance", 12, 35, again, progress=False))
    for name in ("values.csv", "values.json"):
        assert (again / name).read_bytes() == (table / name).read_bytes()


def test_fast_verification_records_what_was_checked(tmp_path):
    out = tmp_path / "fast"
    d = make_table(TableRequest("square", "resistance", 40, 30, out, verify="fast",
                                progress=False))
    cc = d["latgreen"]["cross_check"]
    assert cc["rows"] == 861 and 0 < cc["rows_checked_at_full_digits"] < 861
    with open(out / "values.csv", newline="") as f:
        data = list(csv.DictReader(f))
    floats = [r for r in data if r["methods"] == "recurrence;quadrature-float64"]
    assert floats and all(12 <= int(r["agreement_digits"]) < 30 for r in floats)


def test_interrupted_write_leaves_no_partial_files(tmp_path):
    out = tmp_path / "t"
    provider = get_provider("square", "resistance")

    def broken():
        for i, block in enumerate(rows(provider, 10, 20, "full")):
            if i == 6:
                raise KeyboardInterrupt
            yield render(block)

    meta = {"lattice": "square", "quantity": "resistance", "extent": 10, "digits": 20,
            "verify": "full", "region": "", "methods": {}}
    with pytest.raises(KeyboardInterrupt):
        write_table(out, SQUARE, "resistance", broken(), meta)
    assert list(tmp_path.iterdir()) == []


def test_failed_rewrite_keeps_the_old_table(tmp_path, table):
    out = tmp_path / "t"
    out.mkdir()
    for f in table.iterdir():
        (out / f.name).write_bytes(f.read_bytes())
    before = {f.name: f.read_bytes() for f in out.iterdir()}

    def broken():
        yield render(RowBlock([(0, 0)], ["0"], ["0"], ["derived"], ["0"], ["definition"],
                              [5]))
        raise RuntimeError("simulated failure")

    meta = {"lattice": "square", "quantity": "resistance", "extent": 1, "digits": 5,
            "verify": "full", "region": "", "methods": {}}
    with pytest.raises(RuntimeError):
        write_table(out, SQUARE, "resistance", broken(), meta, force=True)
    assert {f.name: f.read_bytes() for f in out.iterdir()} == before
    assert [p.name for p in tmp_path.iterdir()] == ["t"]


def _start_build(tmp_path, *extra):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    return subprocess.Popen([sys.executable, "-m", "latgreen", "table", "square", "--extent",
                             "300", "--digits", "40", "--verify", "fast", "--out",
                             str(tmp_path / "big"), *extra],
                            env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            start_new_session=True, preexec_fn=_default_sigint)


def _default_sigint():
    # a test run started in the background without job control inherits SIGINT ignored, and
    # Python then installs no Ctrl-C handler in the child: restore what a terminal gives
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _wait_for_units(tmp_path, count, timeout=90):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if len(list(tmp_path.glob(".big.partial/unit-*.meta.json"))) >= count:
            return
        time.sleep(0.02)
    raise AssertionError("the build saved no work unit in time")


@pytest.fixture(scope="module")
def reference_big(tmp_path_factory):
    """The same table built in one go, for comparison."""
    out = tmp_path_factory.mktemp("ref") / "big"
    make_table(TableRequest("square", "resistance", 300, 40, out, verify="fast",
                            progress=False, workers=1))
    return out


@pytest.mark.parametrize(("sig", "code", "word", "workers"), [
    (signal.SIGINT, 130, "interrupted", "1"),   # Ctrl-C on a terminal: the process group
    (signal.SIGTERM, 143, "terminated", "2"),   # kill, cron timeouts: the main process only
    (signal.SIGKILL, -9, None, "2"),            # no clean-up at all
])
def test_interrupted_build_resumes_to_identical_files(tmp_path, reference_big, sig, code,
                                                      word, workers):
    p = _start_build(tmp_path, "--workers", workers)
    _wait_for_units(tmp_path, 1)
    if sig in (signal.SIGINT, signal.SIGKILL):  # SIGKILL: the whole job dies at once
        os.killpg(p.pid, sig)
    else:
        p.send_signal(sig)
    _, err = p.communicate(timeout=60)
    assert p.returncode == code, err
    if word:
        assert word in err and "Traceback" not in err and "--resume" in err
    assert not (tmp_path / "big").exists()  # nothing at the output path
    # a plain re-run is refused; --resume finishes from the saved units
    again = _start_build(tmp_path, "--workers", workers, "--quiet")
    _, err = again.communicate(timeout=120)
    assert again.returncode == 2 and "--resume" in err, err
    done = _start_build(tmp_path, "--workers", workers, "--resume")
    _, err = done.communicate(timeout=300)
    assert done.returncode == 0, err
    for name in ("values.csv", "values.json"):
        assert (tmp_path / "big" / name).read_bytes() == (reference_big / name).read_bytes()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["big"]  # the checkpoint is gone


def test_workers_and_units_do_not_change_the_bytes(tmp_path, reference_big):
    out = tmp_path / "par"
    make_table(TableRequest("square", "resistance", 300, 40, out, verify="fast",
                            progress=False, workers=2))
    for name in ("values.csv", "values.json"):
        assert (out / name).read_bytes() == (reference_big / name).read_bytes()


@pytest.mark.parametrize("kernel_copy", [True, False])
def test_stored_units_are_copied_whole_and_checked(tmp_path, monkeypatch, kernel_copy):
    # the writer appends a checkpoint file by copy_file_range (or by hand where the kernel
    # cannot), hashing the output as it goes and refusing a file that changed
    from latgreen.errors import InputError
    from latgreen.tables.export import _Hashing

    if not kernel_copy:
        def no_copy(*args):
            raise OSError(18, "cross-device link")
        monkeypatch.setattr(os, "copy_file_range", no_copy)
    src = tmp_path / "unit.json"
    src.write_bytes(b',\n[1,"0.5"]' * 5000)
    sha = hashlib.sha256(src.read_bytes()).hexdigest()
    sink = _Hashing(tmp_path / "out")
    sink.write_text("[")
    sink.copy_file(src, sha, skip=2)
    sink.copy_file(src, sha)
    sink.close()
    want = b"[" + src.read_bytes()[2:] + src.read_bytes()
    assert (tmp_path / "out").read_bytes() == want
    assert (sink.n, sink.h.hexdigest()) == (len(want), hashlib.sha256(want).hexdigest())
    sink = _Hashing(tmp_path / "out2")
    with pytest.raises(InputError, match="changed during the build"):
        sink.copy_file(src, "0" * 64)
    sink.close()
