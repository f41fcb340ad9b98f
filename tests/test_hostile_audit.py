"""latgreen audit against hostile files and options: one line and exit 2 for a bad file or
option, an ``invalid`` row for a bad row, never a traceback, a hang or an infinite number."""

from __future__ import annotations

import json
import time

import pytest

from latgreen import cli


def _audit(capsys, path, *extra):
    code = cli.main(["audit", str(path), "--lattice", "square", "--json", *extra])
    out, err = capsys.readouterr()
    return code, out, err


def _refused(capsys, path, *extra):
    code, out, err = _audit(capsys, path, *extra)
    assert code == 2, (code, out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("latgreen: error:"), err
    return lines[0]


def _refused_file(tmp_path, capsys, name, data):
    f = tmp_path / name
    f.write_bytes(data)
    return _refused(capsys, f)


def _rows(out):
    return {r["line"]: r for r in json.loads(out)["rows"]}


def test_nonzero_value_at_the_origin_is_a_mismatch_not_a_crash(tmp_path, capsys):
    # R(0) = 0 on every lattice (common practice): the relative error of 1e-3 is infinite
    f = tmp_path / "o.csv"
    f.write_text("m,n,value\n0,0,1e-3\n0,0,0\n1,0,0.5\n")  # R(1,0) = 1/2: common practice
    code, out, _ = _audit(capsys, f)
    assert code == 1
    rows = _rows(out)
    assert rows[2]["status"] == "mismatch" and rows[2]["relative_error"] is None
    assert rows[2]["agreeing_digits"] == 0 and "R(0) = 0" in rows[2]["message"]
    assert rows[3]["status"] == "ok" and rows[4]["status"] == "ok"
    assert "Infinity" not in out and "NaN" not in out  # the report is valid JSON


def test_huge_exponents_do_not_hang(tmp_path, capsys):
    f = tmp_path / "e.csv"
    f.write_text("m,n,value\n1,0,1e999999999\n1,0,1e-999999999\n1,0,0e999999999\n"
                 f"1,0,{'9' * 5000}\n1,0,5e-1\n1,0,1e3000\n")
    t = time.monotonic()
    code, out, _ = _audit(capsys, f)
    assert time.monotonic() - t < 10
    rows = _rows(out)
    assert code == 1
    assert rows[2]["status"] == rows[3]["status"] == "invalid"
    assert "out of range" in rows[2]["message"] and "out of range" in rows[3]["message"]
    assert rows[4]["status"] == "mismatch"  # exactly 0 against 1/2
    assert rows[5]["status"] == "invalid" and "too long" in rows[5]["message"]
    assert rows[6]["status"] == "ok"
    # 1e3000 is in range: a mismatch whose relative error is too large for a float
    assert rows[7]["status"] == "mismatch" and rows[7]["relative_error"] is None


@pytest.mark.parametrize("scale", ["1e999999999", "1e-999999999", "10**10**10", "9" * 5000,
                                   "0", "1/0", "nan", "inf", ""])
def test_scale_with_huge_exponent_is_refused_at_once(tmp_path, capsys, scale):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n1,0,0.5\n")
    t = time.monotonic()
    line = _refused(capsys, f, "--scale", scale)
    assert "scale" in line and time.monotonic() - t < 5


@pytest.mark.parametrize("tol", ["nan", "-1", "0", "inf", "1e999", "-inf"])
def test_tolerance_nan_negative_or_infinite_is_refused(tmp_path, capsys, tol):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n1,0,0.5\n")
    assert "tolerance" in _refused(capsys, f, f"--tolerance={tol}")


def test_very_long_fields_are_invalid_rows_quickly(tmp_path, capsys):
    f = tmp_path / "long.csv"
    f.write_text("m,n,value\n1,0," + "1" * 10_000_000 + "\n" + "1" * 1_000_000
                 + ",0,0.5\n1,1,0.6366197723675814\n")  # 2/pi: common practice
    g = tmp_path / "long.json"
    g.write_text(json.dumps([{"m": 1, "n": 0, "value": "1" * 10_000_000},
                             {"m": "1" * 1_000_000, "n": 0, "value": "0.5"}]))
    for path in (f, g):
        t = time.monotonic()
        code, out, _ = _audit(capsys, path)
        assert time.monotonic() - t < 10
        rows = json.loads(out)["rows"]
        assert code == 1 and [r["status"] for r in rows][:2] == ["invalid", "invalid"]
        assert len(out) < 10_000  # the report shows the long fields cut


@pytest.mark.parametrize(("text", "needle"), [
    ("5", "got a single value"),
    ('"a string"', "got a single value"),
    ("null", "got null"),
    ("[[1, 0, 0.5], [1, 1, 0.6]]", "no row is a JSON object"),
    ('{"fields": 5, "rows": [[1, 0, 0.5]]}', "'fields' must be a list"),
    ('{"fields": ["m", null, "value"], "rows": []}', "'fields' must be a list"),
    ('{"fields": ["m", "n", "value"], "rows": 3}', "needs a list 'rows'"),
    ('{"fields": ["m", "m", "value"], "rows": [[1, 0, 0.5]]}', "more than once"),
    ('{"rows": {"m": 1}}', "got an object without"),
    ("[" * 100_000 + "]" * 100_000, "nested too deeply"),
    ("[]", "has no rows"),
    ("{not json", "not valid JSON"),
])
def test_json_of_wrong_shape_is_one_line_exit_2(tmp_path, capsys, text, needle):
    assert needle in _refused_file(tmp_path, capsys, "f.json", text.encode())


def test_json_rows_that_are_not_objects_are_invalid_rows(tmp_path, capsys):
    f = tmp_path / "f.json"
    f.write_text('[{"m": 1, "n": 0, "value": "0.5"}, [1, 0, 0.5], 7, null, '
                 '{"m": true, "n": [0], "value": {"x": 1}}]')
    code, out, _ = _audit(capsys, f)
    rows = _rows(out)
    assert code == 1 and rows[1]["status"] == "ok"
    assert all(rows[k]["status"] == "invalid" for k in (2, 3, 4, 5))
    assert "not an object" in rows[2]["message"]
    g = tmp_path / "g.json"
    g.write_text('{"fields": ["m", "n", "value"], "rows": [[1, 0, "0.5"], [1, 0], '
                 '[1, 0, 0.5, 9]]}')
    code, out, _ = _audit(capsys, g)
    rows = _rows(out)
    assert rows[1]["status"] == "ok" and "has 2 values" in rows[2]["message"]
    assert rows[3]["status"] == "invalid"


def test_json_numbers_keep_their_digits(tmp_path, capsys):
    # 2/pi = 0.63661977236758134307553505349005744813783858296182...: common practice; as a
    # float the value would round to 17 digits and fail a 1e-25 tolerance
    f = tmp_path / "f.json"
    f.write_text('[{"m": 1, "n": 1, "value": 0.636619772367581343075535053490057448}]')
    code, out, _ = _audit(capsys, f, "--tolerance", "1e-25")
    assert code == 0, out


def test_line_numbers_count_only_newlines(tmp_path, capsys):
    # U+2028, U+2029, U+0085, form feed and vertical tab are no line ends in a CSV file
    f = tmp_path / "ls.csv"
    f.write_text("m,n,value,note\n1,0,0.5,a\u2028b\n1,1,0.7,c\u2029d\x0ce\x0bf\u0085g\n"
                 "2,0,0.72676045526483731,h\r\n3,1,0.88075158815145696\n", newline="")
    code, out, _ = _audit(capsys, f, "--tolerance", "1e-15")
    rows = _rows(out)
    # 2 - 4/pi and 46/(3 pi) - 4: Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999)
    assert sorted(rows) == [2, 3, 4, 5]
    assert [rows[k]["status"] for k in (2, 3, 4, 5)] == ["ok", "mismatch", "ok", "ok"]


def test_utf8_byte_order_mark_before_the_header_is_accepted(tmp_path, capsys):
    f = tmp_path / "bom.csv"
    f.write_bytes(b"\xef\xbb\xbfm,n,value\n1,0,0.5\n")
    code, out, _ = _audit(capsys, f)
    assert code == 0 and json.loads(out)["summary"]["ok"] == 1


@pytest.mark.parametrize(("data", "needle"), [
    (b"m,n,value\n1,0,0.5\n1,1,\xff0.6\n", "offset 22 (line 3)"),
    (b"m,n,value\n1,0,0.5\n1,\x001,0.6\n", "NUL byte on line 3"),
    (b"", "is empty"),
    (b"\n\n", "is empty"),
    (b"m,n,value\n", "has no rows"),
    (b"m,n,value\n\n", "has no rows"),
    (b"m,n,value,m\n1,0,0.5,2\n", "more than once"),
    (b"m,n,R\n1,0,0.5\n", "no column(s) value"),
    (b"m,n,R\n", "has no rows"),
])
def test_bad_csv_files_are_one_line_exit_2(tmp_path, capsys, data, needle):
    assert needle in _refused_file(tmp_path, capsys, "f.csv", data)


def test_duplicate_columns_not_used_are_ignored(tmp_path, capsys):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value,x,x\n1,0,0.5,a,b\n")
    code, _, _ = _audit(capsys, f)
    assert code == 0


def test_same_column_for_site_and_value_is_refused(tmp_path, capsys):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n1,0,0.5\n")
    assert "different columns" in _refused(capsys, f, "--site-columns", "m,m")
    assert "different columns" in _refused(capsys, f, "--value-column", "n")


def test_unicode_digits_and_underscores_are_not_coordinates(tmp_path, capsys):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n\u0661,0,0.5\n1_0,0,0.5\n1,0,0.5\n")
    code, out, _ = _audit(capsys, f)
    rows = _rows(out)
    assert code == 1 and rows[2]["status"] == rows[3]["status"] == "invalid"
    assert rows[4]["status"] == "ok"


def test_origin_option_with_huge_integers_is_refused(tmp_path, capsys):
    f = tmp_path / "f.csv"
    f.write_text("m,n,value\n1,0,0.5\n")
    assert "--origin" in _refused(capsys, f, "--origin", "9" * 5000 + ",0")


def test_one_far_green_site_does_not_build_a_whole_table(tmp_path, capsys):
    # a green table to extent 80 checks 3321 rows by quadrature (about an hour); the
    # reference of one far site is computed alone.  The value is ours, from the same API
    # (checked against the closed form elsewhere, DLMF 19.2), so the row must be ok.
    from latgreen.quantities import green

    v = complex(green("square", (80, 1), energy="9/2", digits=20).value)
    f = tmp_path / "g.csv"
    f.write_text(f"m,n,G\n80,1,{v!r}\n")
    t = time.monotonic()
    code = cli.main(["audit", str(f), "--lattice", "square", "--quantity", "green",
                     "--energy", "9/2", "--value-column", "G", "--tolerance", "1e-14"])
    capsys.readouterr()
    assert code == 0 and time.monotonic() - t < 30
