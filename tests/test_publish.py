"""`latgreen publish DIR --into ROOT`, and kill -9 of build and regen at random moments."""

from __future__ import annotations

import contextlib
import json
import os
import random
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import ROOT, run_cli
from latgreen.tables.make import TableRequest, make_dos_table, make_table
from latgreen.tables.regen import regenerate
from latgreen.tables.versions import WORK_DIR, load_catalogue, publish_dir


def _tree(d: Path) -> dict[str, bytes]:
    return {str(p.relative_to(d)): p.read_bytes() for p in sorted(d.rglob("*")) if p.is_file()}


def test_publish_copies_a_table_as_the_next_version_and_never_modifies_it(tmp_path):
    src = tmp_path / "g"
    make_table(TableRequest("square", "green", 2, 12, src, progress=False, energy="9/2"))
    before = _tree(src)
    p = run_cli("publish", str(src), "--into", str(tmp_path / "cat"))
    assert p.returncode == 0 and "square-green-e4.5: new" in p.stdout, p.stderr
    assert _tree(src) == before
    v1 = tmp_path / "cat" / "square-green-e4.5" / "v1"
    assert _tree(v1) == before
    rec = load_catalogue(tmp_path / "cat")["tables"]["square-green-e4.5"]["versions"]["v1"]
    assert rec["made_by"] == "publish" and rec["energy"] == "4.5"
    # the same data again: nothing new; fewer digits: refused (versions only move forward)
    assert publish_dir(src, tmp_path / "cat")[1] == "data unchanged"
    less = tmp_path / "less"
    make_table(TableRequest("square", "green", 2, 10, less, progress=False, energy="9/2"))
    p = run_cli("publish", str(less), "--into", str(tmp_path / "cat"))
    assert p.returncode == 2 and "10 digits < 12" in p.stderr
    # a published green table regenerates
    rep = regenerate(tmp_path / "cat" / "square-green-e4.5", 14, progress=False)
    assert rep["new_version"] == "v2"


def test_publish_of_a_dos_table_and_its_regeneration(tmp_path):
    src = tmp_path / "d"
    make_dos_table("honeycomb", "-0.5:0.5:3", 12, src, progress=False)
    tid, state, _ = publish_dir(src, tmp_path / "cat")
    assert (tid, state) == ("honeycomb-dos", "new")
    rep = regenerate(tmp_path / "cat" / tid / "v1", 14, progress=False)
    assert rep["discrepancies"] == 0 and rep["rows_new"] == 3


def test_publish_rechecks_hashes_and_the_descriptor(tmp_path):
    src = tmp_path / "t"
    make_table(TableRequest("square", "resistance", 3, 10, src, progress=False))
    bad = tmp_path / "edited"
    shutil.copytree(src, bad)
    (bad / "values.csv").write_text((bad / "values.csv").read_text().replace("0.5", "0.6", 1))
    p = run_cli("publish", str(bad), "--into", str(tmp_path / "cat"))
    assert p.returncode == 2 and "sha256" in p.stderr and not (tmp_path / "cat").exists()
    renamed = tmp_path / "renamed"
    shutil.copytree(src, renamed)
    d = json.loads((renamed / "datapackage.json").read_text())
    d["name"] = "../x"
    (renamed / "datapackage.json").write_text(json.dumps(d))
    p = run_cli("publish", str(renamed), "--into", str(tmp_path / "cat"))
    assert p.returncode == 2 and "disagrees with its parameters" in p.stderr
    p = run_cli("publish", str(src), "--into", str(src / "values.csv"))
    assert p.returncode == 2 and "not a directory" in p.stderr
    p = run_cli("publish", str(src), "--into", str(src))
    assert p.returncode == 2 and "is a table, not a catalogue" in p.stderr


SPEC = """
[[table]]
lattice = "square"
quantity = "resistance"
extent = {extent}
digits = {digits}
"""


def _cli(*args: str) -> list[str]:
    return [sys.executable, "-m", "latgreen", *args]


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT / "src") + os.pathsep + env.get("PYTHONPATH", "")
    return env


def _published(root: Path) -> dict[str, bytes]:
    out = {"catalogue.json": (root / "catalogue.json").read_bytes()}
    for tid, e in json.loads(out["catalogue.json"])["tables"].items():
        for v in e["versions"]:
            out.update({f"{tid}/{v}/{k}": b for k, b in _tree(root / tid / v).items()})
    return out


def _kill_at_random(argv: list[str], root: Path, seed: int) -> None:
    """Start the run, wait until it starts working in the catalogue (its work directory
    appears), then kill it -9 after a random fraction of a second: while computing, writing,
    renaming or updating the index, or just after it finished."""
    delay = random.Random(seed).uniform(0.0, 0.5)
    p = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                         start_new_session=True, env=_env())
    deadline = time.monotonic() + 60
    while p.poll() is None and not (root / WORK_DIR).exists() and time.monotonic() < deadline:
        time.sleep(0.005)
    time.sleep(delay)
    with contextlib.suppress(ProcessLookupError):
        os.killpg(p.pid, signal.SIGKILL)
    p.wait(timeout=60)


@pytest.mark.parametrize("command", ["build", "regen"])
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_kill_9_at_a_random_moment_leaves_the_catalogue_as_it_was(tmp_path, command, seed):
    root = tmp_path / "cat"
    spec = tmp_path / "s.toml"
    spec.write_text(SPEC.format(extent=6, digits=12))
    assert subprocess.run(_cli("build", "--spec", str(spec), "--out", str(root), "--quiet"),
                          env=_env(), capture_output=True, timeout=120).returncode == 0
    before = _published(root)
    if command == "build":
        spec.write_text(SPEC.format(extent=30, digits=16))
        argv = _cli("build", "--spec", str(spec), "--out", str(root), "--quiet")
    else:
        argv = _cli("regen", "--all", str(root), "--digits", "16")
    _kill_at_random(argv, root, seed)
    after = _published(root)
    if after["catalogue.json"] == before["catalogue.json"]:
        assert after == before  # nothing published, nothing changed
    else:  # the run finished before the kill: then it is complete
        assert {k: v for k, v in after.items() if k in before and k != "catalogue.json"} == \
            {k: v for k, v in before.items() if k != "catalogue.json"}
        cur = json.loads(after["catalogue.json"])["tables"]["square-resistance"]["current"]
        assert cur == "v2" and run_cli("verify", str(root / "square-resistance" / cur)
                                       ).returncode == 0
    # a re-run succeeds, and leaves no work of the killed run behind
    q = subprocess.run(argv, env=_env(), capture_output=True, text=True, timeout=120)
    assert q.returncode == 0, q.stderr
    cur = load_catalogue(root)["tables"]["square-resistance"]["current"]
    assert load_catalogue(root)["tables"]["square-resistance"]["versions"][cur]["digits"] == 16
    assert not (root / WORK_DIR).exists()
    assert all(p.name.startswith("v") for p in (root / "square-resistance").iterdir())


def test_publish_of_a_fifo_descriptor_is_one_line_not_a_hang(tmp_path):
    # a FIFO in place of datapackage.json blocked `publish` for ever (it read it as a file)
    src = tmp_path / "t"
    src.mkdir()
    os.mkfifo(src / "datapackage.json")
    p = run_cli("publish", str(src), "--into", str(tmp_path / "cat"), timeout=60)
    assert p.returncode == 2 and "FIFO" in p.stderr and "Traceback" not in p.stderr, p.stderr
    assert len(p.stderr.strip().splitlines()) == 1


def test_publish_of_a_linked_data_file_is_refused_without_reading_it(tmp_path):
    src = tmp_path / "t"
    make_table(TableRequest("square", "resistance", 2, 10, src, progress=False))
    outside = tmp_path / "outside.txt"
    outside.write_text("not for the catalogue\n")
    (src / "values.csv").unlink()
    (src / "values.csv").symlink_to(outside)
    p = run_cli("publish", str(src), "--into", str(tmp_path / "cat"))
    assert p.returncode == 2 and "symbolic link" in p.stderr, p.stderr
    assert "not for the catalogue" not in p.stderr
    assert not (tmp_path / "cat" / "square-resistance").exists()


def test_regen_of_a_version_edited_after_publication_is_refused(tmp_path):
    # regen proved the new values against whatever the old files held, even when they were
    # no longer the published bytes: the old version's hashes are now checked first
    src = tmp_path / "t"
    make_table(TableRequest("square", "resistance", 3, 10, src, progress=False))
    cat = tmp_path / "cat"
    publish_dir(src, cat)
    v1 = cat / "square-resistance" / "v1"
    text = (v1 / "values.csv").read_text()
    forged = text.replace("\n1,0,0.5", "\n1,0,0.6", 1)
    assert forged != text
    (v1 / "values.csv").write_text(forged)
    before = (cat / "catalogue.json").read_bytes()
    p = run_cli("regen", str(cat / "square-resistance"), "--digits", "12", "--quiet")
    assert p.returncode == 2 and "sha256 or byte count differs" in p.stderr, p.stderr
    assert (cat / "catalogue.json").read_bytes() == before
