"""latgreen audit: statuses, line numbers, conventions, exit codes, the demo."""

from __future__ import annotations

import csv
import json
import subprocess
import sys

import pytest

from conftest import ROOT, run_cli
from latgreen.tables.make import TableRequest, make_table

DEMO = ROOT / "examples" / "audit-demo"


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    out = tmp_path_factory.mktemp("ref") / "t"
    make_table(TableRequest("square", "resistance", 8, 25, out, progress=False, workers=1))
    with open(out / "values.csv", newline="") as f:
        return list(csv.DictReader(f))


def test_good_wrong_and_malformed_rows(tmp_path):
    f = tmp_path / "theirs.csv"
    f.write_text(
        "m,n,R\n"
        "1,0,0.5\n"                      # 1/2: common practice
        "1,1,0.6366197723675814\n"       # 2/pi: common practice
        "3,1,0.880751588151457\n"        # 46/(3 pi) - 4: Atkinson & van Steenwijk (1999)
        "2,0,0.7268\n"                   # wrong beyond the tolerance (2 - 4/pi = 0.72676...)
        "4,x,1.0\n"                      # not a site
        "2,2,\n"                         # no value
        "5,5,nan\n"                      # not finite
        "1,2,3,4\n"                      # too many fields: the extra value is ignored by csv
    )
    p = run_cli("audit", str(f), "--lattice", "square", "--value-column", "R",
                "--tolerance", "1e-12", "--json")
    assert p.returncode == 1, p.stderr
    d = json.loads(p.stdout)
    status = {r["line"]: r["status"] for r in d["rows"]}
    assert status == {2: "ok", 3: "ok", 4: "ok", 5: "mismatch", 6: "invalid", 7: "invalid",
                      8: "invalid", 9: "mismatch"}
    # line 9 is the site (1, 2) with value 3: R(1,2) = R(2,1) = 4/pi - 1/2, so a mismatch
    assert d["summary"]["ok"] == 3 and d["summary"]["invalid"] == 3
    for r in d["rows"]:
        assert {"line", "site", "status", "agreeing_digits"} <= set(r)
    row5 = next(r for r in d["rows"] if r["line"] == 5)
    assert row5["agreeing_digits"] == 4  # |0.7268 - 0.726760...| / 0.7268 = 5.5e-5


def test_all_ok_exits_zero(tmp_path, reference):
    f = tmp_path / "copy.csv"
    with open(f, "w", newline="") as out:
        w = csv.writer(out)
        w.writerow(["m", "n", "value"])
        for r in reference:
            w.writerow([r["m"], r["n"], r["value"]])
    p = run_cli("audit", str(f), "--lattice", "square", "--tolerance", "1e-20")
    assert p.returncode == 0, p.stdout + p.stderr
    assert "mismatch" in p.stdout and "invalid" in p.stdout


def test_conventions_map_a_transformed_copy(tmp_path, reference):
    # their values: 2 x ours, opposite sign, sites measured from (3, -1), in JSON objects
    rows = [{"i": int(r["m"]) + 3, "j": -int(r["n"]) - 1,
             "G": str(-2 * float(r["value"]))} for r in reference]
    f = tmp_path / "theirs.json"
    f.write_text(json.dumps({"rows": rows}))
    args = ["audit", str(f), "--lattice", "square", "--site-columns", "i,j",
            "--value-column", "G", "--tolerance", "1e-15", "--json"]
    p = run_cli(*args, "--scale", "2", "--negate", "--origin", "3,-1")
    d = json.loads(p.stdout)
    assert p.returncode == 0, d["summary"]
    assert d["summary"]["ok"] == len(reference)
    p = run_cli(*args, "--scale", "2", "--origin", "3,-1")  # forgetting the sign convention
    assert p.returncode == 1
    assert json.loads(p.stdout)["summary"]["mismatch"] >= len(reference) - 1


def test_our_own_values_json_layout_is_read(tmp_path, reference):
    out = tmp_path / "t"
    make_table(TableRequest("square", "resistance", 5, 20, out, progress=False, workers=1))
    p = run_cli("audit", str(out / "values.json"), "--lattice", "square", "--tolerance",
                "1e-19")
    assert p.returncode == 0, p.stdout + p.stderr


@pytest.mark.parametrize(("args", "needle"), [
    (("--lattice", "square", "--value-column", "nope"), "no column"),
    (("--lattice", "square", "--site-columns", "m"), "2 coordinates"),
    (("--lattice", "hexagon"), "unknown lattice"),
    (("--lattice", "square", "--tolerance", "-1"), "tolerance"),
    (("--lattice", "square", "--scale", "two"), "--scale"),
    (("--lattice", "square", "--origin", "1,a"), "--origin"),
    (("--lattice", "square", "--energy", "4.5"), "takes no energy"),
])
def test_input_errors_exit_2(tmp_path, args, needle):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n1,0,0.5\n")
    p = run_cli("audit", str(f), *args)
    assert p.returncode == 2, p.stdout + p.stderr
    assert needle in p.stderr and "Traceback" not in p.stderr


def test_missing_file_exit_2(tmp_path):
    p = run_cli("audit", str(tmp_path / "none.csv"), "--lattice", "square")
    assert p.returncode == 2 and "no such file" in p.stderr


def test_demo_is_reproducible(tmp_path):
    gen = subprocess.run([sys.executable, str(DEMO / "inhouse_code.py")], capture_output=True,
                         text=True, check=True)
    assert gen.stdout == (DEMO / "inhouse.csv").read_text()
    png = tmp_path / "audit.png"
    p = run_cli("audit", str(DEMO / "inhouse.csv"), "--lattice", "square", "--site-columns",
                "x,y", "--value-column", "R_ohm", "--scale", "100", "--tolerance", "1e-9",
                "--plot", str(png))
    assert p.returncode == 1
    assert p.stdout == (DEMO / "expected-report.txt").read_text()
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_green_audit_with_complex_values_and_hopping_minus_one(tmp_path):
    # our own references at E = 9/2 (checked elsewhere against the closed form, DLMF 19.2),
    # written as another code would: Python complex syntax; then the same numbers as a code
    # with hopping -1 reports them at E = -9/2: G_-(E) = -G(-E)
    from latgreen.quantities import green

    sites = [(0, 0), (1, 0), (2, 1), (4, 2)]
    vals = [complex(green("square", s, energy="9/2", digits=20).value) for s in sites]
    f = tmp_path / "g.csv"
    f.write_text("m,n,G\n" + "".join(f"{m},{n},{v!r}\n" for (m, n), v in zip(sites, vals,
                                                                          strict=True)))
    p = run_cli("audit", str(f), "--lattice", "square", "--quantity", "green", "--energy",
                "9/2", "--value-column", "G", "--tolerance", "1e-14", "--json")
    assert p.returncode == 0, p.stdout + p.stderr
    assert json.loads(p.stdout)["summary"]["ok"] == 4
    g = tmp_path / "gm.csv"
    g.write_text("m,n,G\n" + "".join(f"{m},{n},{-v!r}\n" for (m, n), v in zip(sites, vals,
                                                                           strict=True)))
    p = run_cli("audit", str(g), "--lattice", "square", "--quantity", "green",
                "--energy=-9/2", "--hopping", "-1", "--value-column", "G", "--tolerance",
                "1e-14")
    assert p.returncode == 0, p.stdout + p.stderr
    p = run_cli("audit", str(g), "--lattice", "square", "--quantity", "green",
                "--energy=-9/2", "--value-column", "G", "--tolerance", "1e-14")
    assert p.returncode == 1  # without the convention, the odd sites disagree
