"""latgreen table against hostile checkpoints, output paths and process deaths: a forged or
inconsistent checkpoint unit is computed again (or the resume refused with one line), never
published; a bad --out is one line and exit 2 with nothing left on disk; workers die with
the main process."""

from __future__ import annotations

import hashlib
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import ROOT
from latgreen import cli
from latgreen.tables import make
from latgreen.tables.make import TableRequest, make_table

# square resistance, extent 40, 15 digits, fast check: 861 rows, 5 work units when serial
ARGS = ("square", "resistance", 40, 15)


def _req(out, **kw):
    return TableRequest(*ARGS, out, verify="fast", progress=False, workers=1, **kw)


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    out = tmp_path_factory.mktemp("ref") / "t"
    make_table(_req(out))
    return {n: (out / n).read_bytes() for n in ("values.csv", "values.json")}


def _interrupt(req, monkeypatch):
    """Build, stopping at the last step (after every unit is saved in the checkpoint)."""
    def stop(*a, **k):
        raise KeyboardInterrupt

    with monkeypatch.context() as m:
        m.setattr(make, "write_table", stop)
        with pytest.raises(KeyboardInterrupt):
            make_table(req)


def _interrupted(tmp_path, monkeypatch):
    """A checkpoint holding every unit of the table: the build stops at the last step."""
    out = tmp_path / "t"
    _interrupt(_req(out), monkeypatch)
    ckpt = tmp_path / ".t.partial"
    assert len(list(ckpt.glob("unit-*.meta.json"))) == 5
    return out, ckpt


def _refix(ckpt, i):
    """Rewrite unit i's hashes in its meta file to match its (edited) files."""
    meta_p = ckpt / f"unit-{i:05d}.meta.json"
    meta = json.loads(meta_p.read_text())
    for kind in ("csv", "json"):
        meta[f"{kind}_sha256"] = hashlib.sha256(
            (ckpt / f"unit-{i:05d}.{kind}").read_bytes()).hexdigest()
    meta_p.write_text(json.dumps(meta))
    return meta


def _refixed_resume(ckpt, i, out, reference, capsys, why):
    """Fix unit i's hashes after an edit, resume: the unit is computed again, for ``why``."""
    _refix(ckpt, i)
    _resume_gives_the_reference(out, reference)
    err = capsys.readouterr().err
    assert "computing them again" in err and why in err, err


def _resume_gives_the_reference(out, reference, capsys=None):
    make_table(TableRequest(*ARGS, out, verify="fast", progress=True, workers=1,
                            resume=True))
    for name, data in reference.items():
        assert (out / name).read_bytes() == data
    assert sorted(p.name for p in out.parent.iterdir()) == ["t"]  # the checkpoint is gone


def _edit(path, old, new):
    data = path.read_bytes()
    assert old in data
    path.write_bytes(data.replace(old, new, 1))


def test_resume_recomputes_a_unit_whose_sites_were_edited_with_its_hash_fixed(
        tmp_path, monkeypatch, reference, capsys):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    # unit 1 starts at column 18 (plan_units by rows): relabel its first site in both files
    csv_p, json_p = ckpt / "unit-00001.csv", ckpt / "unit-00001.json"
    first = csv_p.read_bytes().split(b",", 2)
    _edit(csv_p, first[0] + b"," + first[1] + b",", first[0] + b",99,")
    _edit(json_p, b"[" + first[0] + b"," + first[1] + b",", b"[" + first[0] + b",99,")
    _refixed_resume(ckpt, 1, out, reference, capsys, "not the sites of the unit")


def test_resume_recomputes_a_unit_whose_csv_value_was_edited_with_its_hash_fixed(
        tmp_path, monkeypatch, reference, capsys):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    csv_p = ckpt / "unit-00002.csv"
    line = csv_p.read_bytes().split(b"\n")[3]
    value = line.split(b",")[2]
    _edit(csv_p, line, line.replace(value, value[:-1] + (b"1" if value[-1:] != b"1" else b"2")))
    _refixed_resume(ckpt, 2, out, reference, capsys, "CSV and JSON rows differ")


def test_resume_recomputes_a_truncated_unit_with_its_hash_and_rows_fixed(
        tmp_path, monkeypatch, reference, capsys):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    csv_p, json_p = ckpt / "unit-00003.csv", ckpt / "unit-00003.json"
    csv_p.write_bytes(b"\n".join(csv_p.read_bytes().split(b"\n")[:-2]) + b"\n")
    json_p.write_bytes(json_p.read_bytes().rsplit(b",\n[", 1)[0])
    meta = _refix(ckpt, 3)
    meta["rows"] -= 1
    (ckpt / "unit-00003.meta.json").write_text(json.dumps(meta))
    _resume_gives_the_reference(out, reference)
    assert "rows where the region puts" in capsys.readouterr().err


def test_resume_recomputes_a_unit_swapped_for_another(tmp_path, monkeypatch, reference,
                                                      capsys):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    for ext in ("csv", "json", "meta.json"):
        (ckpt / f"unit-00001.{ext}").write_bytes((ckpt / f"unit-00004.{ext}").read_bytes())
    _resume_gives_the_reference(out, reference)
    assert "computing them again" in capsys.readouterr().err


@pytest.mark.parametrize(("key", "value", "why"), [
    ("min_agreement", 15, "summary"),
    ("full_rows", 7, "summary"),
    ("first", [0, 0], "first or last site"),
    ("rows", 10**6, "rows where the region"),
    ("csv_sha256", "0" * 64, "sha256"),
    ("rows", "many", "rows where the region"),
])
def test_resume_recomputes_a_unit_whose_meta_was_edited(tmp_path, monkeypatch, reference,
                                                        capsys, key, value, why):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    meta_p = ckpt / "unit-00002.meta.json"
    meta = json.loads(meta_p.read_text())
    assert meta[key] != value
    meta[key] = value
    meta_p.write_text(json.dumps(meta))
    _resume_gives_the_reference(out, reference)
    assert why in capsys.readouterr().err


def _plan_edited(ckpt, units):
    plan_p = ckpt / "plan.json"
    plan = json.loads(plan_p.read_text())
    plan["units"] = units(plan["units"])
    plan_p.write_text(json.dumps(plan))


@pytest.mark.parametrize("units", [
    lambda u: [[0, 41]],                       # one giant unit: unit 0's files hold 18 columns
    lambda u: [[b, a] for a, b in u],          # reversed units
    lambda u: u[:-1],                          # the last columns in no unit
    lambda u: [u[0], u[0], *u[1:]],            # a unit twice
    lambda u: [[0, 20], [18, 41]],             # overlapping
    lambda u: [[0.5, 18], *u[1:]],             # not integers
    lambda u: "all",                           # not a list of pairs
])
def test_resume_refuses_a_plan_that_is_not_the_tables(tmp_path, monkeypatch, capsys, units):
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    _plan_edited(ckpt, units)
    before = sorted(p.name for p in ckpt.iterdir())
    code = cli.main(["table", "square", "--extent", "40", "--digits", "15", "--verify",
                     "fast", "--out", str(out), "--quiet", "--workers", "1", "--resume"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1, err
    assert err.startswith("latgreen: error: ") and "--force" in err
    assert not out.exists() and sorted(p.name for p in ckpt.iterdir()) == before


def test_resume_with_fewer_rows_than_the_region_is_never_published(tmp_path, monkeypatch):
    # a unit that lies about its rows consistently everywhere cannot exist (the region
    # decides), but the assembly also counts: fewer rows than the region are refused
    out, ckpt = _interrupted(tmp_path, monkeypatch)
    monkeypatch.setattr(make, "unit_shapes", lambda sites, units, wanted: {})
    real = make.Checkpoint.chunk

    def short(self, i):
        ch = real(self, i)
        return ch if i != 4 else type(ch)()
    monkeypatch.setattr(make.Checkpoint, "chunk", short)
    with pytest.raises(make.InputError, match="rows where the region has 861"):
        make_table(_req(out, resume=True))
    assert not out.exists()


# -- output paths --------------------------------------------------------------------------

def _table(tmp_path, *args, cwd=None):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    return subprocess.run([sys.executable, "-m", "latgreen", "table", "square", "--extent",
                           "2", "--digits", "10", "--quiet", *args], capture_output=True,
                          text=True, cwd=cwd or tmp_path, env=env, timeout=120)


def _one_line(p):
    assert p.returncode == 2, (p.returncode, p.stderr)
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("latgreen: error:"), p.stderr
    return lines[0]


def _tree(root):
    return sorted(str(p.relative_to(root)) for p in root.rglob("*"))


def test_out_a_dangling_symlink_writes_nothing_at_its_target(tmp_path):
    work = tmp_path / "w"
    work.mkdir()
    (work / "link").symlink_to(tmp_path / "elsewhere" / "deep" / "t")
    assert "symbolic link" in _one_line(_table(work, "--out", "link"))
    assert not (tmp_path / "elsewhere").exists() and _tree(work) == ["link"]


def test_out_a_symlink_to_a_directory_is_refused(tmp_path):
    (tmp_path / "real").mkdir()
    (tmp_path / "link").symlink_to(tmp_path / "real")
    assert "symbolic link" in _one_line(_table(tmp_path, "--out", "link", "--force"))
    assert _tree(tmp_path) == ["link", "real"]


@pytest.mark.parametrize(("out", "needle"), [
    ("", "empty"),
    (".", "names no new directory"),
    ("..", "names no new directory"),
    ("/", "names no new directory"),
    ("sub/..", "names no new directory"),
])
def test_out_empty_dot_or_root_leaves_no_checkpoint_in_the_parent(tmp_path, out, needle):
    work = tmp_path / "w"
    work.mkdir()
    assert needle in _one_line(_table(work, "--out", out, "--force"))
    assert _tree(tmp_path) == ["w"]


def test_out_the_current_directory_or_a_parent_is_refused(tmp_path):
    deep = tmp_path / "a" / "b"
    deep.mkdir(parents=True)
    for out in (str(deep), str(tmp_path / "a"), "../b", "../../a"):
        assert "current directory" in _one_line(_table(tmp_path, "--out", out, "--force",
                                                       cwd=deep))
    assert _tree(tmp_path) == ["a", "a/b"]


@pytest.mark.parametrize(("make_path", "needle"), [
    (lambda t: ((t / "f").write_text("x"), "f")[1], "not a directory"),
    (lambda t: ((t / "f").write_text("x"), "f/t")[1], "not a directory"),
    (lambda t: ((t / "f").write_text("x"), "f/deeper/t")[1], "not a directory"),
    (lambda t: "/proc/latgreen-test/t", "cannot write"),
    (lambda t: "x" * 300, "cannot use the output path"),
])
def test_out_a_file_or_a_path_through_a_file(tmp_path, make_path, needle):
    out = make_path(tmp_path)
    before = _tree(tmp_path)
    assert needle in _one_line(_table(tmp_path, "--out", out))
    assert _tree(tmp_path) == before


def test_out_through_a_symlink_loop_is_one_line(tmp_path):
    (tmp_path / "loop").symlink_to(tmp_path / "loop")
    assert "cannot use the output path" in _one_line(_table(tmp_path, "--out", "loop/t"))


def test_checkpoint_path_in_the_way_is_one_line(tmp_path):
    (tmp_path / ".t.partial").write_text("mine")
    assert "in the way" in _one_line(_table(tmp_path, "--out", "t"))
    assert (tmp_path / ".t.partial").read_text() == "mine"


def test_failed_build_removes_the_parent_directories_it_made(tmp_path, monkeypatch, capsys):
    from latgreen.quantities.square_resistance import SquareResistance

    real = SquareResistance.quad_float_sites

    def skewed(self, sites):
        # (14, 3) is in the first work unit and checked in float64 only
        return [q * 1.001 if s == (14, 3) else q for q, s in zip(real(self, sites), sites,
                                                                 strict=True)]

    monkeypatch.setattr(SquareResistance, "quad_float_sites", skewed)
    code = cli.main(["table", "square", "--extent", "40", "--digits", "15", "--verify",
                     "fast", "--out", str(tmp_path / "a" / "b" / "t"), "--quiet",
                     "--workers", "1"])
    assert code == 1 and "verification failed" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


def test_dos_table_removes_the_parent_directories_it_made(tmp_path, monkeypatch, capsys):
    from latgreen.tables import export

    def broken(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(export, "_utc_now", broken)  # the first step of writing the files
    code = cli.main(["table", "square", "--quantity", "dos", "--energies", "0.5:1.5:3",
                     "--digits", "10", "--out", str(tmp_path / "a" / "b" / "t"), "--quiet"])
    assert code == 2 and "No space left" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("workers", ["100000", "0", "-3", "9" * 5000, "two"])
def test_workers_huge_or_malformed_is_one_line(tmp_path, workers):
    assert "workers" in _one_line(_table(tmp_path, "--out", "t", "--workers", workers))
    assert _tree(tmp_path) == []


@pytest.mark.parametrize("address", ["tcp://127.0.0.1:99999", "foo://x", "nonsense",
                                     "tcp://host:port"])
def test_scheduler_malformed_address_is_one_line(tmp_path, address):
    pytest.importorskip("distributed")
    t = time.monotonic()
    p = _table(tmp_path, "--out", "t", "--scheduler", address)
    assert "scheduler" in _one_line(p) and time.monotonic() - t < 30
    assert _tree(tmp_path) == []


def test_table_with_stderr_closed_still_writes_it(tmp_path):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    p = subprocess.run(["sh", "-c", f'exec 2>&-; exec "{sys.executable}" -m latgreen table '
                        "square --extent 3 --digits 10 --out t"], cwd=tmp_path, env=env,
                       timeout=120, capture_output=False, stdout=subprocess.DEVNULL)
    assert p.returncode == 0 and (tmp_path / "t" / "values.csv").is_file()


# -- process deaths ------------------------------------------------------------------------

def _children(pid):
    out = []
    for d in Path("/proc").iterdir():
        if d.name.isdigit():
            try:
                stat = (d / "stat").read_text()
            except OSError:
                continue
            fields = stat.rsplit(")", 1)[1].split()
            if int(fields[1]) == pid and fields[0] != "Z":
                out.append(int(d.name))
    return out


def _alive(pid):
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


def _start_pool_build(tmp_path):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    p = subprocess.Popen([sys.executable, "-X", "faulthandler", "-m", "latgreen", "table",
                          "square", "--extent",
                          "300", "--digits", "40", "--verify", "fast", "--workers", "2",
                          "--out", str(tmp_path / "big")], env=env, stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True, start_new_session=True)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        kids = _children(p.pid)
        if len(kids) >= 2:
            return p, kids
        time.sleep(0.05)
    _stop(p)
    raise AssertionError("the pool did not start")


def _stop(p):
    """Kill a build left running by a failed test, and its workers, and wait for them."""
    for k in _children(p.pid):
        os.kill(k, signal.SIGKILL)
    if p.poll() is None:
        p.kill()
        p.communicate()


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_sigkill_of_the_main_process_kills_the_workers(tmp_path):
    p, kids = _start_pool_build(tmp_path)
    os.kill(p.pid, signal.SIGKILL)  # the main process only, not its group
    p.communicate()
    deadline = time.monotonic() + 5
    while time.monotonic() < deadline and any(_alive(k) for k in kids):
        time.sleep(0.05)
    survivors = [k for k in kids if _alive(k)]
    for k in survivors:
        os.kill(k, signal.SIGKILL)
    assert not survivors


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_a_killed_worker_stops_the_build_instead_of_hanging(tmp_path):
    p, kids = _start_pool_build(tmp_path)
    os.kill(kids[0], signal.SIGKILL)  # as the out-of-memory killer would
    try:
        _, err = p.communicate(timeout=60)
    except subprocess.TimeoutExpired:
        os.kill(p.pid, signal.SIGABRT)  # faulthandler prints where the build waits
        _, err = p.communicate(timeout=30)
        _stop(p)
        raise AssertionError(f"the build hangs after a worker died:\n{err}") from None
    assert p.returncode == 2, err
    assert "latgreen: error: a worker process was killed by signal 9" in err
    assert "Traceback" not in err and not (tmp_path / "big").exists()


@pytest.mark.parametrize(("lattice", "quantity", "extent", "energy", "verify"), [
    ("honeycomb", "resistance", 16, None, "fast"),   # three coordinates, two units
    ("sc", "resistance", 8, None, "fast"),           # the cubic layout, several units
    ("square", "green", 2, "9/2", "full"),           # complex rows: six text columns
])
def test_resume_reuses_every_intact_unit_of_each_row_layout(tmp_path, monkeypatch, lattice,
                                                            quantity, extent, energy, verify):
    def req(out, resume=False):
        return TableRequest(lattice, quantity, extent, 12, out, verify=verify, progress=False,
                            workers=1, resume=resume, energy=energy)

    ref = tmp_path / "ref"
    make_table(req(ref))
    out = tmp_path / "t"
    _interrupt(req(out), monkeypatch)
    real = make.run_units

    def nothing_to_do(*a, **k):
        assert a[6] == [], f"units {a[6]} were computed again"
        return real(*a, **k)

    monkeypatch.setattr(make, "run_units", nothing_to_do)
    make_table(req(out, resume=True))
    for name in ("values.csv", "values.json"):
        assert (out / name).read_bytes() == (ref / name).read_bytes()
