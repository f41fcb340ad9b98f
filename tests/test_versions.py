"""Versioned tables, regeneration with proof, the cron script: immutability, refusal to
publish a discrepancy, interruption at any moment, concurrent runs."""

from __future__ import annotations

import json
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import ROOT, run_cli
from latgreen.errors import InputError, VerificationError
from latgreen.tables.make import TableRequest, make_table
from latgreen.tables.regen import catalogue_lock, regenerate
from latgreen.tables.versions import load_catalogue, publish

SCRIPT = ROOT / "scripts" / "regenerate"


def _builder(extent, digits):
    def build(staging: Path, version: str):
        return make_table(TableRequest("square", "resistance", extent, digits, staging,
                                       progress=False, workers=1, version=version))
    return build


@pytest.fixture
def root(tmp_path):
    r = tmp_path / "tables"
    publish(r, "square-resistance", _builder(12, 20))
    return r


def test_publish_numbers_versions_and_never_overwrites(root):
    assert sorted(p.name for p in (root / "square-resistance").iterdir()) == ["v1"]
    v1 = root / "square-resistance" / "v1"
    before = {f.name: f.read_bytes() for f in v1.iterdir()}
    state, _ = publish(root, "square-resistance", _builder(12, 20))
    assert state == "data unchanged"  # identical data: nothing new, v1 untouched
    state, desc = publish(root, "square-resistance", _builder(12, 25))
    assert state == "new version v2" and desc["version"] == "v2"
    assert {f.name: f.read_bytes() for f in v1.iterdir()} == before
    assert load_catalogue(root)["tables"]["square-resistance"]["current"] == "v2"
    # a table written over a published version is refused (it is not empty)
    with pytest.raises(InputError, match="not empty"):
        make_table(TableRequest("square", "resistance", 3, 10, v1, progress=False))


def test_regen_proves_the_old_digits_and_publishes(root):
    rep = regenerate(root / "square-resistance" / "v1", 35, progress=False)
    assert rep["discrepancies"] == 0 and rep["rows_old"] == 91 and rep["digits_after"] == 35
    cat = load_catalogue(root)["tables"]["square-resistance"]
    assert cat["current"] == "v2" and cat["versions"]["v2"]["digits"] == 35
    report = json.loads((root / "square-resistance" / "v2" / "regen-report.json").read_text())
    assert report["old_version"] == "v1" and report["digits_before"] == 20


def test_regen_refuses_to_publish_a_discrepancy(root):
    v1 = root / "square-resistance" / "v1"
    text = (v1 / "values.csv").read_text()
    # injected: the old table claims a wrong last digit at (3, 1)
    lines = text.splitlines(keepends=True)
    i = next(k for k, ln in enumerate(lines) if ln.startswith("3,1,"))
    parts = lines[i].split(",")
    parts[2] = parts[2][:-1] + str((int(parts[2][-1]) + 1) % 10)
    lines[i] = ",".join(parts)
    (v1 / "values.csv").write_text("".join(lines))
    cat_before = (root / "catalogue.json").read_bytes()
    with pytest.raises(VerificationError, match=r"site \(3, 1\)"):
        regenerate(v1, 30, progress=False)
    assert (root / "catalogue.json").read_bytes() == cat_before
    assert sorted(p.name for p in (root / "square-resistance").iterdir()) == ["v1"]


def test_regen_needs_more_digits_or_extent(root):
    with pytest.raises(InputError, match="nothing to regenerate"):
        regenerate(root / "square-resistance" / "v1", 20, progress=False)
    with pytest.raises(InputError, match="only adds"):
        regenerate(root / "square-resistance" / "v1", 10, progress=False)


def test_two_regenerations_cannot_overlap(root):
    with catalogue_lock(root):
        p = subprocess.run([sys.executable, str(SCRIPT), "--digits", "30", "--root",
                            str(root)], capture_output=True, text=True, timeout=120)
    assert p.returncode == 3 and "another regeneration" in p.stderr


def test_cron_script_is_idempotent_and_logs(root):
    args = [sys.executable, str(SCRIPT), "--digits", "30", "--root", str(root)]
    p = subprocess.run(args, capture_output=True, text=True, timeout=300)
    assert p.returncode == 0, p.stderr
    assert load_catalogue(root)["tables"]["square-resistance"]["current"] == "v2"
    cat = (root / "catalogue.json").read_bytes()
    p = subprocess.run(args, capture_output=True, text=True, timeout=300)
    assert p.returncode == 0 and "nothing to do" in p.stderr
    assert (root / "catalogue.json").read_bytes() == cat
    log = (root / "regenerate.log").read_text()
    assert "v1 (20 digits) -> v2 (30 digits)" in log and "nothing to do" in log


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_kill_9_at_a_random_moment_leaves_the_catalogue_as_it_was(root, seed):
    cat_before = (root / "catalogue.json").read_bytes()
    delay = random.Random(seed).uniform(0.05, 2.5)
    p = subprocess.Popen([sys.executable, str(SCRIPT), "--digits", "40", "--root",
                          str(root)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                         start_new_session=True)
    time.sleep(delay)
    os.killpg(p.pid, signal.SIGKILL)
    p.wait(timeout=60)
    after = (root / "catalogue.json").read_bytes()
    if after != cat_before:  # the run finished before the kill: then it must be complete
        cur = json.loads(after)["tables"]["square-resistance"]["current"]
        assert cur == "v2"
        assert run_cli("verify", str(root / "square-resistance" / cur)).returncode == 0
    # published versions are intact, and a new run completes normally
    assert run_cli("verify", str(root / "square-resistance" / "v1")).returncode == 0
    q = subprocess.run([sys.executable, str(SCRIPT), "--digits", "40", "--root", str(root)],
                       capture_output=True, text=True, timeout=300)
    assert q.returncode == 0, q.stderr
    cur = load_catalogue(root)["tables"]["square-resistance"]["current"]
    assert run_cli("verify", str(root / "square-resistance" / cur)).returncode == 0


def test_regen_cli(root):
    p = run_cli("regen", str(root / "square-resistance" / "v1"), "--digits", "26", "--quiet",
                "--json")
    assert p.returncode == 0, p.stderr
    assert json.loads(p.stdout)["new_version"] == "v2"
    p = run_cli("regen", str(root / "square-resistance"), "--digits", "30")
    assert p.returncode == 2 and "not a published table version" in p.stderr
