"""Versioned tables and regeneration with proof: immutability, forward-only versions, refusal
to publish a discrepancy, each table kind regenerated, malformed catalogues and descriptors,
the cron entry point (lock, log, exit statuses)."""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from conftest import ROOT, run_cli
from latgreen.errors import InputError, VerificationError
from latgreen.tables.catalogue import build_catalogue
from latgreen.tables.make import TableRequest, make_table
from latgreen.tables.regen import regenerate, regenerate_all
from latgreen.tables.spec import parse_spec
from latgreen.tables.versions import (
    WORK_DIR,
    CatalogueBusy,
    catalogue_lock,
    load_catalogue,
)

SQUARE = """
[[table]]
lattice = "square"
quantity = "resistance"
extent = 4
digits = 12
"""
OTHERS = """
[[table]]
quantity = "return-probability"
lattices = ["sc"]
digits = 12

[[table]]
lattice = "square"
quantity = "dos"
energies = "0.5:3.5:3"
digits = 12

[[table]]
lattice = "square"
quantity = "green"
energy = "9/2"
extent = 2
digits = 12
"""


def _build(root: Path, text: str = SQUARE, **kw):
    out = build_catalogue(root, parse_spec(text, "test"), progress=False, **kw)
    assert not [o for o in out if o.failed], [o.message for o in out]
    return {o.table_id: o for o in out}


def _current(root: Path, tid: str) -> str:
    return load_catalogue(root)["tables"][tid]["current"]


def _snapshot(root: Path) -> dict[str, bytes]:
    """Every published byte: catalogue.json and the files of every version directory."""
    snap = {"catalogue.json": (root / "catalogue.json").read_bytes()}
    for tid, e in load_catalogue(root)["tables"].items():
        for v in e["versions"]:
            for f in sorted((root / tid / v).iterdir()):
                snap[f"{tid}/{v}/{f.name}"] = f.read_bytes()
    return snap


@pytest.fixture
def root(tmp_path):
    r = tmp_path / "tables"
    _build(r)
    return r


def test_publish_numbers_versions_and_never_overwrites(root):
    v1 = root / "square-resistance" / "v1"
    before = {f.name: f.read_bytes() for f in v1.iterdir()}
    assert _build(root, SQUARE, rebuild=True)["square-resistance"].state == "data unchanged"
    more = SQUARE.replace("digits = 12", "digits = 14")
    o = _build(root, more)["square-resistance"]
    assert o.state == "new version v2" and o.descriptor["version"] == "v2"
    assert {f.name: f.read_bytes() for f in v1.iterdir()} == before
    assert _current(root, "square-resistance") == "v2"
    with pytest.raises(InputError, match="not empty"):  # a published version is not a target
        make_table(TableRequest("square", "resistance", 3, 10, v1, progress=False))


def test_build_records_spec_software_and_inputs_hash_and_skips_up_to_date(root, monkeypatch):
    import latgreen.tables.spec as spec_mod

    rec = load_catalogue(root)["tables"]["square-resistance"]["versions"]["v1"]
    assert rec["spec"] == parse_spec(SQUARE, "t")[0].canonical()
    assert rec["software"] == __import__("latgreen").__version__
    assert rec["inputs_hash"] == spec_mod.inputs_hash(rec["spec"])
    assert _build(root)["square-resistance"].state == "up to date"
    # another mpmath: the inputs hash differs, the table is computed (same bytes: unchanged)
    real = spec_mod.library_versions
    monkeypatch.setattr(spec_mod, "library_versions", lambda: {**real(), "mpmath": "0.0"})
    assert _build(root)["square-resistance"].state == "data unchanged"


def test_regen_proves_the_old_digits_and_publishes(root):
    rep = regenerate(root / "square-resistance" / "v1", 16, progress=False)
    assert rep["discrepancies"] == 0 and rep["rows_old"] == 15 and rep["digits_after"] == 16
    cat = load_catalogue(root)["tables"]["square-resistance"]
    assert cat["current"] == "v2" and cat["versions"]["v2"]["digits"] == 16
    assert cat["versions"]["v2"]["regenerated_from"] == "v1"
    report = json.loads((root / "square-resistance" / "v2" / "regen-report.json").read_text())
    assert report["old_version"] == "v1" and report["digits_before"] == 12
    assert report["verify_before"] == report["verify_after"] == "full"
    assert report["min_agreement_after"] == 16


def _forge(root: Path, tid: str, line_start: str, column: int) -> None:
    """An old version that claims a wrong last digit, with its hashes made to match (so only
    the proof can catch it)."""
    v = root / tid / _current(root, tid)
    lines = (v / "values.csv").read_text().splitlines(keepends=True)
    i = next(k for k, ln in enumerate(lines) if ln.startswith(line_start))
    parts = lines[i].split(",")
    parts[column] = parts[column][:-1] + str((int(parts[column][-1]) + 1) % 10)
    lines[i] = ",".join(parts)
    (v / "values.csv").write_text("".join(lines))
    desc = json.loads((v / "datapackage.json").read_text())
    data = (v / "values.csv").read_bytes()
    desc["resources"][0]["hash"] = "sha256:" + hashlib.sha256(data).hexdigest()
    desc["resources"][0]["bytes"] = len(data)
    (v / "datapackage.json").write_text(json.dumps(desc))


def test_regen_refuses_to_publish_a_discrepancy(root):
    _forge(root, "square-resistance", "3,1,", 2)
    before = _snapshot(root)
    with pytest.raises(VerificationError, match=r"site \(3, 1\)"):
        regenerate(root / "square-resistance" / "v1", 15, progress=False)
    assert _snapshot(root) == before
    assert sorted(p.name for p in (root / "square-resistance").iterdir()) == ["v1"]


def test_regen_needs_more_digits_or_extent(root):
    with pytest.raises(InputError, match="nothing to regenerate"):
        regenerate(root / "square-resistance" / "v1", 12, progress=False)
    with pytest.raises(InputError, match="only adds"):
        regenerate(root / "square-resistance" / "v1", 10, progress=False)


def test_regen_all_goes_on_after_a_table_fails_and_an_error_is_not_a_discrepancy(root):
    _build(root, OTHERS)
    # a broken table sorted first: its descriptor is truncated
    broken = root / "cubic-return-probability" / "v1" / "datapackage.json"
    broken.write_text(broken.read_text()[:100])
    p = run_cli("regen", "--all", str(root), "--digits", "14")
    assert p.returncode == 2, p.stderr  # an error, not a discrepancy (1)
    assert "cubic-return-probability: error" in p.stderr and "Traceback" not in p.stderr
    for tid in ("square-dos", "square-green-e4.5", "square-resistance"):
        assert _current(root, tid) == "v2", tid
    assert _current(root, "cubic-return-probability") == "v1"


def test_regen_all_exit_status_1_is_a_discrepancy_and_the_others_go_on(root):
    _build(root, OTHERS)
    _forge(root, "square-dos", "2,", 1)
    p = run_cli("regen", "--all", str(root), "--digits", "14")
    assert p.returncode == 1, p.stderr
    assert "square-dos: discrepancy" in p.stderr and "energy 2:" in p.stderr
    assert _current(root, "square-dos") == "v1"
    assert _current(root, "square-resistance") == "v2"


def test_regen_of_return_probability_table_does_not_crash(root):
    _build(root, OTHERS)
    rep = regenerate(root / "cubic-return-probability", 14, progress=False)
    assert rep["state"] == "new version v2" and rep["extent_after"] is None


def test_regen_of_dos_table_does_not_crash(root):
    _build(root, OTHERS)
    rep = regenerate(root / "square-dos" / "v1", 15, progress=False)
    assert rep["rows_new"] == 3 and rep["discrepancies"] == 0
    d = json.loads((root / "square-dos" / "v2" / "datapackage.json").read_text())
    assert d["latgreen"]["energies"] == "0.5:3.5:3" and d["version"] == "v2"
    with pytest.raises(InputError, match="not a table over sites"):
        regenerate(root / "square-dos", 16, extent=5, progress=False)


def test_regen_of_green_table_rounds_each_component(root):
    _build(root, OTHERS)
    rep = regenerate(root / "square-green-e4.5" / "v1", 15, progress=False)
    assert rep["discrepancies"] == 0 and rep["rows_old"] == 6
    old = (root / "square-green-e4.5" / "v1" / "values.csv").read_text().splitlines()
    new = (root / "square-green-e4.5" / "v2" / "values.csv").read_text().splitlines()
    assert old[0].split(",")[2:5] == ["value_re", "value_im", "exact"]
    for a, b in zip(old[1:], new[1:], strict=True):
        assert a.split(",")[4] == b.split(",")[4]  # the exact forms are unchanged
    # a forged imaginary part is caught although the real part stands
    _forge(root, "square-green-e4.5", "1,0,", 2)
    with pytest.raises(VerificationError, match=r"site \(1, 0\)"):
        regenerate(root / "square-green-e4.5", 18, progress=False)


def test_regen_keeps_the_full_check_where_auto_would_pick_fast(root, monkeypatch):
    from latgreen.quantities import get_provider

    # a large table at more digits would make auto choose fast: the old level holds
    monkeypatch.setattr(type(get_provider("square", "resistance")), "full_auto_limit", 1)
    with pytest.raises(InputError, match="never checked less"):
        regenerate(root / "square-resistance", 14, verify="fast", progress=False)
    rep = regenerate(root / "square-resistance", 14, progress=False)
    assert rep["verify_before"] == rep["verify_after"] == "full"
    assert rep["min_agreement_before"] == 12 and rep["min_agreement_after"] == 14


def test_build_after_regen_keeps_the_more_precise_current_version(root):
    regenerate(root / "square-resistance" / "v1", 14, progress=False)
    before = _snapshot(root)
    o = _build(root)["square-resistance"]
    assert o.state == "current v2 exceeds the spec" and _current(root, "square-resistance") \
        == "v2"
    assert _snapshot(root) == before
    # a spec with a larger extent builds at the current version's 14 digits, never 12
    o = _build(root, SQUARE.replace("extent = 4", "extent = 5"), rebuild=True)
    assert o["square-resistance"].descriptor["latgreen"]["digits"] == 14


def test_regen_of_an_older_version_is_refused_and_never_demotes_the_current(root):
    regenerate(root / "square-resistance" / "v1", 14, progress=False)
    before = _snapshot(root)
    with pytest.raises(InputError, match="v1 is not the current version.*v2 is"):
        regenerate(root / "square-resistance" / "v1", 16, progress=False)
    assert _snapshot(root) == before


def test_unlisted_version_is_never_used_or_made_current(root):
    # a run killed between its rename and the index update leaves an unlisted v2
    shutil.copytree(root / "square-resistance" / "v1", root / "square-resistance" / "v2")
    with pytest.raises(InputError, match="not a published version"):
        regenerate(root / "square-resistance" / "v2", 14, progress=False)
    rep = regenerate(root / "square-resistance", 14, progress=False)
    assert rep["old_version"] == "v1" and rep["new_version"] == "v3"
    assert _current(root, "square-resistance") == "v3"


def test_regen_takes_the_table_id_from_its_place_not_the_descriptor_name(root):
    tri = root.parent / "tri"
    make_table(TableRequest("triangular", "resistance", 3, 12, tri, progress=False))
    # a triangular version placed (and renamed) as the square table's current version
    fake = root / "square-resistance" / "v1"
    shutil.rmtree(fake)
    shutil.copytree(tri, fake)
    d = json.loads((fake / "datapackage.json").read_text())
    d["name"] = "square-resistance"
    (fake / "datapackage.json").write_text(json.dumps(d))
    with pytest.raises(InputError, match="lattice 'triangular' disagrees"):
        regenerate(fake, 14, progress=False)
    d["latgreen"]["lattice"] = "square"  # consistent with the catalogue, not with its data
    d["name"] = "../x"
    (fake / "datapackage.json").write_text(json.dumps(d))
    with pytest.raises(InputError, match="refused"):
        regenerate(fake, 14, progress=False)
    assert not (root.parent / "x").exists() and not (root / "x").exists()


def test_regen_of_a_table_outside_a_catalogue_is_refused(tmp_path):
    t = tmp_path / "a" / "my-table"
    make_table(TableRequest("square", "resistance", 3, 10, t, progress=False))
    p = run_cli("regen", str(t), "--digits", "12")
    assert p.returncode == 2 and "not inside a catalogue" in p.stderr
    assert "latgreen publish" in p.stderr
    assert sorted(x.name for x in tmp_path.rglob("*")) == sorted(
        ["a", "my-table", "datapackage.json", "values.csv", "values.json"])


def test_stale_staging_of_dead_runs_is_removed_under_the_lock(root):
    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()
    stale = [root / WORK_DIR / str(dead.pid) / ".square-resistance.partial",
             root / "square-resistance" / f".staging-{dead.pid}",
             root / "square-resistance" / f"..staging-{dead.pid}.partial"]
    for s in stale:
        s.mkdir(parents=True)
    live = root / WORK_DIR / str(os.getppid())
    live.mkdir()
    with catalogue_lock(root):
        assert not any(s.exists() for s in stale)
        assert live.exists()  # a live process's work is left alone
    assert sorted(p.name for p in (root / "square-resistance").iterdir()) == ["v1"]


@pytest.mark.parametrize("damage", ["truncated", "digits-a-string", "no-latgreen",
                                    "no-resources", "extent-missing"])
def test_regen_of_malformed_descriptor_gives_one_line(root, damage):
    f = root / "square-resistance" / "v1" / "datapackage.json"
    d = json.loads(f.read_text())
    if damage == "truncated":
        f.write_text(f.read_text()[: len(f.read_text()) // 2])
    else:
        if damage == "digits-a-string":
            d["latgreen"]["digits"] = "12"
        elif damage == "no-latgreen":
            del d["latgreen"]
        elif damage == "no-resources":
            d["resources"] = {}
        else:
            del d["latgreen"]["extent"]
        f.write_text(json.dumps(d))
    p = run_cli("regen", str(f.parent), "--digits", "14")
    assert p.returncode == 2 and len(p.stderr.strip().splitlines()) == 1, p.stderr
    assert "Traceback" not in p.stderr and "datapackage.json" in p.stderr


def test_regen_all_of_a_file_gives_one_line(tmp_path):
    f = tmp_path / "f"
    f.write_text("x")
    for args in (["regen", "--all", str(f), "--digits", "14"],
                 ["regen", "--all", str(tmp_path / "missing"), "--digits", "14"]):
        p = run_cli(*args)
        assert p.returncode == 2 and len(p.stderr.strip().splitlines()) == 1, p.stderr


@pytest.mark.parametrize("damage", ["no-current", "current-unlisted", "current-missing"])
def test_catalogue_entry_without_current_gives_one_line(root, damage):
    cat = load_catalogue(root)
    e = cat["tables"]["square-resistance"]
    if damage == "no-current":
        del e["current"]
    elif damage == "current-unlisted":
        e["current"] = "v7"
    else:
        e["current"] = "v7"
        e["versions"]["v7"] = dict(e["versions"]["v1"])
    (root / "catalogue.json").write_text(json.dumps(cat))
    p = run_cli("regen", str(root / "square-resistance"), "--digits", "14")
    assert p.returncode == 2 and len(p.stderr.strip().splitlines()) == 1, p.stderr
    assert "square-resistance" in p.stderr and "Traceback" not in p.stderr


def test_two_runs_cannot_overlap(root):
    with catalogue_lock(root):
        for args in (["regen", "--all", str(root), "--digits", "14"],
                     ["regen", str(root / "square-resistance"), "--digits", "14"]):
            p = run_cli(*args)
            assert p.returncode == 3 and "another run" in p.stderr
        with pytest.raises(CatalogueBusy):
            regenerate_all(root, 14)


def test_readme_cron_command_runs_as_written(root, tmp_path):
    """The README's cron line, run from a project directory set up by its main command (a
    .venv with latgreen installed), with the catalogue at ./tables."""
    text = (ROOT / "README.md").read_text()
    line = next(ln for ln in text.splitlines() if "regen --all" in ln and ln.startswith(".venv"))
    assert line.split()[:4] == [".venv/bin/latgreen", "regen", "--all", "tables"]
    exe = Path(sys.executable).parent / "latgreen"
    assert exe.is_file(), "the console entry point is installed beside python"
    (tmp_path / ".venv").symlink_to(Path(sys.executable).parent.parent)
    argv = line.split("#")[0].split()
    argv[argv.index("--digits") + 1] = "14"
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    p = subprocess.run(argv, cwd=tmp_path, capture_output=True, text=True, timeout=120, env=env)
    assert p.returncode == 0, p.stderr
    log = (tmp_path / "tables" / "regenerate.log").read_text()
    assert "v1 (12 digits) -> v2 (14 digits)" in log
    cat = (root / "catalogue.json").read_bytes()
    p = subprocess.run(argv, cwd=tmp_path, capture_output=True, text=True, timeout=120, env=env)
    assert p.returncode == 0 and "nothing to do" in p.stderr  # idempotent
    assert (root / "catalogue.json").read_bytes() == cat


def test_regen_cli(root):
    p = run_cli("regen", str(root / "square-resistance" / "v1"), "--digits", "14", "--quiet",
                "--json")
    assert p.returncode == 0, p.stderr
    rep = json.loads(p.stdout)
    assert rep["new_version"] == "v2" and rep["verify_after"] == "full"
    p = run_cli("regen", str(root / "square-resistance" / "v2"), "--digits", "16")
    assert p.returncode == 0 and "min_agreement_before" in p.stdout
    p = run_cli("regen", "--digits", "30")
    assert p.returncode == 2 and "either a table" in p.stderr
