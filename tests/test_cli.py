"""The command line through a subprocess, as users run it."""

from __future__ import annotations

import json
import os
import re
import stat
import sys

import pytest

from conftest import run_cli


def test_resistance_plain_value():
    # 46/(3 pi) - 4: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), Table I
    p = run_cli("resistance", "square", "3", "1", "--digits", "20")
    assert p.returncode == 0, p.stderr
    assert p.stdout == "0.88075158815145696358\n"


def test_resistance_exact():
    p = run_cli("resistance", "square", "3", "1", "--exact")
    assert p.returncode == 0 and p.stdout == "46/(3*pi) - 4\n"  # Atkinson & van Steenwijk 1999


def test_resistance_json_has_the_contract_keys():
    p = run_cli("resistance", "square", "-1", "-3", "--digits", "25", "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    for key in ("lattice", "quantity", "site", "digits", "value", "exact", "error_bound",
                "methods", "agreement_digits"):
        assert key in d
    assert d["site"] == [-1, -3] and d["canonical_site"] == [3, 1]
    assert isinstance(d["value"], str) and len(d["value"].replace("0.", "", 1)) == 25
    assert d["exact"] == "46/(3*pi) - 4"  # Atkinson & van Steenwijk (1999), Table I
    assert d["agreement_digits"] == 25 and d["methods"] == ["recurrence", "quadrature"]


def test_check_exits_zero_on_agreement():
    p = run_cli("check", "square", "--extent", "12", "--digits", "30", "--quiet")
    assert p.returncode == 0, p.stderr
    assert "disagreements" in p.stdout


def test_check_json():
    p = run_cli("check", "square", "--extent", "6", "--digits", "20", "--json", "--quiet")
    d = json.loads(p.stdout)
    assert d["ok"] is True and d["sites"] == 28 and d["failures"] == []


def test_table_writes_the_three_files(tmp_path):
    out = tmp_path / "t"
    p = run_cli("table", "square", "--quantity", "resistance", "--extent", "8", "--digits",
                "30", "--out", str(out))
    assert p.returncode == 0, p.stderr
    assert sorted(x.name for x in out.iterdir()) == ["datapackage.json", "values.csv",
                                                     "values.json"]
    lines = (out / "values.csv").read_text().splitlines()
    assert len(lines) == 1 + 45


def test_lattices_lists_square():
    p = run_cli("lattices")
    assert p.returncode == 0 and "square" in p.stdout
    assert "triangular" in p.stdout and "honeycomb" in p.stdout and "m, n, s" in p.stdout


def test_triangular_resistance_value_and_exact():
    # 10 sqrt3/pi - 5: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), p. 489, in our
    # 60-degree coordinates; (-3, 1) is an image of (2, 1)
    p = run_cli("resistance", "triangular", "-3", "1", "--digits", "20")
    assert p.returncode == 0 and p.stdout == "0.51328895421792049511\n", p.stderr
    p = run_cli("resistance", "triangular", "2", "1", "--exact")
    assert p.returncode == 0 and p.stdout == "10*sqrt(3)/pi - 5\n"


def test_honeycomb_resistance_json():
    # second neighbour A(1,0): R = 1 (Markowsky & Palacios, arXiv:1602.06002)
    p = run_cli("resistance", "honeycomb", "1", "0", "0", "--digits", "25", "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert d["exact"] == "1" and d["value"] == "1." + "0" * 24
    assert d["methods"] == ["recurrence", "quadrature"] and d["agreement_digits"] == 25


def test_honeycomb_table_has_three_coordinate_columns(tmp_path):
    out = tmp_path / "hc"
    p = run_cli("table", "honeycomb", "--extent", "3", "--digits", "20", "--out", str(out),
                "--quiet")
    assert p.returncode == 0, p.stderr
    lines = (out / "values.csv").read_text().splitlines()
    # 2 + 5 + 7 + 10 canonical sites for m = 0..3 (2m + 2 + (m + 1) // 2 per column)
    assert lines[0].startswith("m,n,s,value,") and len(lines) == 1 + 24
    assert lines[2].startswith("0,0,1,0.66666666666666666667,2/3,")  # 2/z: common practice


def _one_line_error(p):
    assert p.returncode == 2, (p.returncode, p.stdout, p.stderr)
    assert "Traceback" not in p.stderr
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("latgreen: error:"), p.stderr
    return lines[0]


@pytest.mark.parametrize(("args", "needle"), [
    (("resistance", "hexagonal", "1", "0"), "unknown lattice"),
    (("resistance", "triangular", "1"), "2 coordinates"),
    (("resistance", "triangular", "1", "0", "1"), "2 coordinates"),
    (("resistance", "triangular", "x", "0"), "must be an integer"),
    (("resistance", "honeycomb", "1", "0"), "3 coordinates"),
    (("resistance", "honeycomb", "1", "0", "2"), "must be 0 (A site) or 1 (B site)"),
    (("resistance", "honeycomb", "1", "0", "-1"), "must be 0 (A site) or 1 (B site)"),
    (("resistance", "honeycomb", "1", "0.5", "1"), "must be an integer"),
    (("resistance", "triangular", "900", "1", "--digits", "60"), "at most --digits"),
    (("table", "honeycomb", "--extent", "-1", "--out", "x"), "extent must be >= 0"),
    (("table", "triangular", "--extent", "100000", "--out", "x"), "would need about"),
    (("resistance", "square", "1"), "2 coordinates"),
    (("resistance", "square", "1", "0", "0"), "2 coordinates"),
    (("resistance", "square", "1.5", "0"), "must be an integer"),
    (("resistance", "square", "one", "0"), "must be an integer"),
    (("resistance", "square", "1", "0", "--digits", "0"), "positive"),
    (("resistance", "square", "1", "0", "--digits", "-3"), "positive"),
    (("resistance", "square", "1", "0", "--digits", "1001"), "ceiling"),
    (("resistance", "square", "1", "0", "--digits", "many"), "digits must be an integer"),
    (("resistance", "square", "1", "0", "--quantity", "x"), "unrecognized"),
    (("table", "square", "--extent", "-1", "--out", "x"), "extent must be >= 0"),
    (("table", "square", "--extent", "200000", "--out", "x"), "would need about"),
    (("table", "square", "--extent", "3", "--quantity", "magnetisation", "--out", "x"),
     "unknown quantity"),
    (("table", "square", "--extent", "3", "--quantity", "green", "--out", "x"),
     "needs an energy"),
    (("check", "square", "--extent", "-2"), "extent must be >= 0"),
    (("table", "square", "--extent", "3", "--out", "x", "--workers", "0"), "at least 1"),
    (("resistance", "square", "9000", "0", "--digits", "60"), "at most --digits"),
])
def test_bad_input_is_one_line_and_exit_2(args, needle, tmp_path):
    p = run_cli(*args, cwd=tmp_path)
    assert needle in _one_line_error(p)
    assert not any(tmp_path.iterdir())  # nothing was written


def test_existing_non_empty_output_dir_is_refused_unless_force(tmp_path):
    out = tmp_path / "t"
    out.mkdir()
    (out / "keep.txt").write_text("mine")
    p = run_cli("table", "square", "--extent", "3", "--digits", "10", "--out", str(out))
    assert "not empty" in _one_line_error(p)
    assert (out / "keep.txt").read_text() == "mine"
    p = run_cli("table", "square", "--extent", "3", "--digits", "10", "--out", str(out),
                "--force", "--quiet")
    assert p.returncode == 0, p.stderr
    assert not (out / "keep.txt").exists() and (out / "values.csv").exists()


def test_empty_existing_output_dir_is_used(tmp_path):
    out = tmp_path / "t"
    out.mkdir()
    p = run_cli("table", "square", "--extent", "2", "--digits", "10", "--out", str(out),
                "--quiet")
    assert p.returncode == 0, p.stderr


def test_output_path_that_is_a_file(tmp_path):
    f = tmp_path / "f"
    f.write_text("x")
    p = run_cli("table", "square", "--extent", "2", "--out", str(f))
    assert "not a directory" in _one_line_error(p)


@pytest.mark.skipif(sys.platform == "win32" or os.geteuid() == 0,
                    reason="root can write anywhere; see the read-only-filesystem test")
def test_unwritable_directory(tmp_path):  # pragma: no cover - CI runs as root
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(stat.S_IRUSR | stat.S_IXUSR)
    p = run_cli("table", "square", "--extent", "2", "--out", str(ro / "t"))
    assert "cannot write" in _one_line_error(p)


def test_unwritable_path_under_proc():
    # /proc refuses new directories even to root
    p = run_cli("table", "square", "--extent", "2", "--out", "/proc/latgreen-test/t")
    assert "cannot write" in _one_line_error(p)


def test_check_exits_one_on_a_disagreement(monkeypatch, capsys):
    # inject a wrong independent value at one site: `check` must report it and exit 1
    from latgreen import cli
    from latgreen.quantities.square_resistance import SquareResistance

    real = SquareResistance.quad_sites

    def skewed(self, sites, digits):
        import mpmath

        out = real(self, sites, digits)
        with mpmath.workdps(60):
            return [q * (1 + mpmath.mpf(10) ** -20) if s == (4, 1) else q
                    for q, s in zip(out, sites, strict=True)]

    monkeypatch.setattr(SquareResistance, "quad_sites", skewed)
    code = cli.main(["check", "square", "--extent", "5", "--digits", "30", "--quiet"])
    out = capsys.readouterr().out
    assert code == 1
    # a relative skew of 1e-20 leaves 19 or 20 agreeing digits, by where the digits fall
    assert re.search(r"\(4, 1\): recurrence vs quadrature agree to (19|20) of 30 digits", out)


def test_table_refuses_to_publish_a_disagreement(monkeypatch, tmp_path, capsys):
    from latgreen import cli
    from latgreen.quantities.square_resistance import SquareResistance

    real = SquareResistance.quad_sites

    def skewed(self, sites, digits):
        import mpmath

        out = real(self, sites, digits)
        with mpmath.workdps(60):
            return [q * (1 + mpmath.mpf(10) ** -25) if s == (3, 0) else q
                    for q, s in zip(out, sites, strict=True)]

    monkeypatch.setattr(SquareResistance, "quad_sites", skewed)
    out = tmp_path / "t"
    code = cli.main(["table", "square", "--extent", "5", "--digits", "30", "--out", str(out),
                     "--quiet", "--workers", "1"])
    err = capsys.readouterr().err
    assert code == 1 and "verification failed" in err and "(3, 0)" in err
    assert list(tmp_path.iterdir()) == []
