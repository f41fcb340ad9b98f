"""Audit: compare a file of values produced by another code with our references.

The other code's file is CSV or JSON (a list of objects, an object with a ``rows`` list of
objects, or our own values.json layout with ``fields`` and array rows).  The user names the
columns that hold the site coordinates and the value, and the other code's conventions:

* ``scale``: their value = scale * ours (another resistor value, the Watson normalisation, a
  factor z or 2 between Laplacian and hopping conventions);
* ``negate``: their sign convention is the opposite of ours;
* ``origin``: their sites are measured from another origin: our site = their site - origin.

Every row gets a status: ``ok`` (relative error within the tolerance), ``mismatch``, or
``invalid`` (unparseable, NaN or infinite, not a site of the lattice, wrong number of
coordinates), with its line number; malformed rows never stop the audit.  References come
from the same verified machinery as the tables (exact forms evaluated with a proven bound,
confirmed by the independent quadrature).
"""

from __future__ import annotations

import csv
import json
import math
import re
from dataclasses import dataclass, field
from fractions import Fraction
from pathlib import Path
from typing import Any

from ..errors import InputError
from ..quantities import MAX_DIGITS, check_digits, get_provider
from ..rounding import round_rational
from .build import rows as table_rows

REF_DIGITS = 20  # references to 20 digits: more than any float64 value can carry
AGREE_CAP = 17   # a float64 value carries at most about 17 significant digits
# sites x this < the region's rows: references one by one, not from a table pass
SPARSE_COMPLEX, SPARSE_REAL = 4, 20_000


@dataclass
class Conventions:
    scale: Fraction = Fraction(1)
    negate: bool = False
    origin: tuple[int, ...] | None = None
    hopping: int = 1  # the other code's hopping amplitude: +1 (ours) or -1


@dataclass
class AuditRow:
    line: int
    site: list[str]
    status: str
    value: str | None = None
    reference: str | None = None  # ours, in our conventions
    expected: str | None = None  # ours, mapped to the file's conventions (17 digits)
    relative_error: float | None = None
    agreeing_digits: int | None = None
    message: str = ""
    canonical: tuple[int, ...] | None = None

    def to_json(self) -> dict[str, Any]:
        return {"line": self.line, "site": self.site, "status": self.status,
                "value": self.value, "reference": self.reference, "expected": self.expected,
                "relative_error": self.relative_error,
                "agreeing_digits": self.agreeing_digits, "message": self.message}


@dataclass
class AuditReport:
    lattice: str
    quantity: str
    tolerance: float
    rows: list[AuditRow] = field(default_factory=list)

    def summary(self) -> dict[str, Any]:
        counts = {s: sum(1 for r in self.rows if r.status == s)
                  for s in ("ok", "mismatch", "invalid")}
        digits = [r.agreeing_digits for r in self.rows if r.agreeing_digits is not None]
        return {"lattice": self.lattice, "quantity": self.quantity,
                "tolerance": self.tolerance, "rows": len(self.rows), **counts,
                "min_agreeing_digits": min(digits) if digits else None,
                "median_agreeing_digits": sorted(digits)[len(digits) // 2] if digits else None}

    def exit_status(self) -> int:
        return 0 if all(r.status == "ok" for r in self.rows) else 1


MAX_CELL = 4000  # characters in a site or value field (a 1000-digit value fits; int() of
#                  more than 4300 digits is refused by Python itself)
MAX_EXPONENT = 4000  # |decimal exponent| of a value or scale: far beyond any reference

_DECIMAL = re.compile(r"([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?")
_NOT_FINITE = {"nan", "inf", "infinity"}


class _Cell(str):
    """A cell that holds no number or site coordinate (a JSON list, object or boolean): its
    text is shown in the report and never parsed."""


def parse_decimal(text: str, what: str = "value") -> Fraction:
    """A decimal string (``-1.25e-3``; ``p/q`` too) as an exact Fraction, refusing (with
    ValueError) what is not one, not finite, too long or has an exponent beyond
    +-MAX_EXPONENT: ``Fraction('1e999999999')`` would build a billion-digit integer.

    >>> parse_decimal("1.25e-1"), parse_decimal(" -3/6 "), parse_decimal("0e999999999")
    (Fraction(1, 8), Fraction(-1, 2), Fraction(0, 1))
    >>> parse_decimal("1e999999999")
    Traceback (most recent call last):
    ...
    ValueError: value '1e999999999' is out of range (decimal exponent beyond +-4000)
    """
    t = text.strip()
    if len(t) > MAX_CELL:
        raise ValueError(f"{what} of {len(t):,} characters is too long (at most {MAX_CELL:,})")
    if "/" in t:
        p, _, q = t.partition("/")
        if _INTEGER.fullmatch(p.strip()) and q.strip().isdigit() and q.strip().isascii():
            den = int(q)
            if den:
                return Fraction(int(p), den)
        raise ValueError(f"{what} {t!r} is not a number")
    m = _DECIMAL.fullmatch(t)
    if m is None or not (m[2] or m[3]):
        if t.lower().lstrip("+-") in _NOT_FINITE:
            raise ValueError(f"{what} {t!r} is not finite")
        raise ValueError(f"{what} {t!r} is not a number")
    sign, whole, frac, exp_text = m[1], m[2], m[3] or "", m[4] or "0"
    digits = (whole + frac).lstrip("0")
    if not digits:
        return Fraction(0)
    if len(exp_text.lstrip("+-").lstrip("0")) > 6:
        raise ValueError(f"{what} {t!r} is out of range (decimal exponent beyond "
                         f"+-{MAX_EXPONENT})")
    exp = int(exp_text) - len(frac)
    if abs(exp + len(digits)) > MAX_EXPONENT:
        raise ValueError(f"{what} {t!r} is out of range (decimal exponent beyond "
                         f"+-{MAX_EXPONENT})")
    x = Fraction(int(digits)) * (Fraction(10) ** exp)
    return -x if sign == "-" else x


def _read_text(path: Path) -> str:
    """The file as text: UTF-8 (a byte-order mark is dropped), refused with the byte offset
    and line of the first byte that is not UTF-8, or of a NUL byte."""
    try:
        data = path.read_bytes()
    except OSError as e:
        raise InputError(f"cannot read {path}: {e.strerror}") from None
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        line = data.count(b"\n", 0, e.start) + 1
        raise InputError(f"{path} is not UTF-8 text: byte 0x{data[e.start]:02x} at offset "
                         f"{e.start} (line {line})") from None
    nul = text.find("\0")
    if nul >= 0:
        raise InputError(f"{path} is not a text file: a NUL byte on line "
                         f"{text.count(chr(10), 0, nul) + 1}")
    if not text.strip():
        raise InputError(f"{path} is empty")
    return text


def _json_cell(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return _Cell("true" if v else "false")
    if isinstance(v, str):
        return v
    return _Cell("<a JSON list>" if isinstance(v, list) else "<a JSON object>")


def _read_json(path: Path, text: str) -> tuple[list[str] | None, list[tuple[int, Any]]]:
    """(column names if the file declares them, [(row number, row)]) of a JSON file."""
    try:
        # numbers keep their text (a float would round a 30-digit value; int() refuses
        # 5000 digits); NaN and Infinity arrive as text and are refused row by row
        data = json.loads(text, parse_float=str, parse_int=str, parse_constant=str)
    except RecursionError:
        raise InputError(f"{path}: JSON nested too deeply to read") from None
    except ValueError as e:
        raise InputError(f"{path} is not valid JSON: {e}") from None
    if isinstance(data, dict) and "fields" in data:
        fields = data["fields"]
        if not (isinstance(fields, list) and fields
                and all(isinstance(f, str) for f in fields)):
            raise InputError(f"{path}: 'fields' must be a list of column names")
        if len(set(fields)) != len(fields):
            dup = sorted({f for f in fields if fields.count(f) > 1})
            raise InputError(f"{path}: 'fields' names {', '.join(dup)} more than once")
        items = data.get("rows")
        if not isinstance(items, list):
            raise InputError(f"{path}: an object with 'fields' needs a list 'rows'")
        out: list[tuple[int, Any]] = []
        for k, r in enumerate(items, start=1):
            if not isinstance(r, list):
                out.append((k, _json_row(r)))
            elif len(r) != len(fields):
                out.append((k, f"has {len(r)} values where 'fields' names {len(fields)}"))
            else:
                out.append((k, {f: _json_cell(v) for f, v in zip(fields, r, strict=True)}))
        return fields, out
    if isinstance(data, dict) and isinstance(data.get("rows"), list):
        items = data["rows"]
    elif isinstance(data, list):
        items = data
    else:
        got = ("an object without a list 'rows'" if isinstance(data, dict) else
               "null" if data is None else "a single value")
        raise InputError(f"{path}: expected a list of rows, or an object with a list 'rows' "
                         f"(and optionally 'fields'); got {got}")
    return None, [(k, _json_row(r)) for k, r in enumerate(items, start=1)]


def _json_row(r: Any) -> Any:
    """A row as {column: text}, or the reason it is not a row (a str)."""
    if isinstance(r, dict):
        return {str(a): _json_cell(b) for a, b in r.items()}
    kind = ("a list" if isinstance(r, list) else "null" if r is None else
            "a boolean" if isinstance(r, bool) else "a single value")
    return f"is {kind}, not an object (array rows need the column names in 'fields')"


def _read_csv(path: Path, text: str) -> tuple[list[str], list[tuple[int, Any]]]:
    """(header, [(line, row or the reason it is not one)]) of a CSV file.  Lines end at
    ``\\n`` (or ``\\r\\n``) only, so line numbers are what an editor shows (str.splitlines
    would also break at U+2028, form feeds, ...)."""
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    reader = csv.reader(line + "\n" for line in lines)
    try:
        header = next(reader)
    except csv.Error as e:
        raise InputError(f"{path}: the header line is not CSV: {e}") from None
    except StopIteration:  # pragma: no cover - an empty file is refused before
        raise InputError(f"{path} has no header line") from None
    if not any(h.strip() for h in header):
        raise InputError(f"{path} has no header line")
    out: list[tuple[int, Any]] = []
    while True:
        start = reader.line_num + 1
        try:
            fields = next(reader)
        except StopIteration:
            break
        except csv.Error as e:
            out.append((start, f"is not a CSV record: {e}"))
            continue
        if not fields:
            continue  # a blank line
        out.append((start, dict(zip(header, fields + [""] * (len(header) - len(fields)),
                                    strict=False))))
    return header, out


def _read_rows(path: Path, wanted: list[str]) -> list[tuple[int, Any]]:
    """(line number, row as {column: text} or the reason the row is unreadable) from a CSV
    or JSON file; bad files (not UTF-8, NUL bytes, empty, no rows, JSON of another shape,
    the columns ``wanted`` missing or named twice) are refused with InputError."""
    text = _read_text(path)
    if path.suffix.lower() == ".json" or text.lstrip().startswith(("[", "{")):
        names, data = _read_json(path, text)
        if names is None:
            objects = [r for _, r in data if isinstance(r, dict)]
            if data and not objects:
                raise InputError(f"{path}: no row is a JSON object of named columns")
            names = sorted(set().union(*(set(r) for r in objects)))
    else:
        names, data = _read_csv(path, text)
        dup = sorted({c for c in wanted if names.count(c) > 1})
        if dup:
            raise InputError(f"{path}: the header names the column(s) {', '.join(dup)} more "
                             "than once")
    if not data:
        raise InputError(f"{path} has no rows")
    missing = [c for c in wanted if c not in names]
    if missing:
        shown = ", ".join(n[:40] for n in names[:30]) + (", ..." if len(names) > 30 else "")
        raise InputError(f"{path} has no column(s) {', '.join(missing)}; it has: {shown}")
    return data


def audit(path: Path, lattice: str, quantity: str, site_columns: list[str], value_column: str,
          tolerance: float = 1e-12, conventions: Conventions | None = None,
          digits: int = REF_DIGITS, energy: str | None = None) -> AuditReport:
    """Audit a foreign file; see the module docstring.

    Energy-dependent quantities (``green``) take ``energy``; their values in the file are
    complex numbers written as Python does (``0.1+0.2j``, ``-0.3j``, ``0.5``).  A code with
    hopping -1 has G_-(E) = -G(-E) in ours: ``conventions.hopping = -1`` evaluates our
    reference at -E and flips its sign.
    """
    conv = conventions or Conventions()
    if energy is not None and conv.hopping == -1:
        from ..energy import parse_energy

        e = parse_energy(energy, lattice)
        energy = str(type(e)(-e.re, e.im)) if hasattr(e, "re") else energy
    provider = get_provider(lattice, quantity, energy)
    cplx = bool(getattr(provider, "complex_valued", False))
    digits = check_digits(digits)
    if not (tolerance > 0 and math.isfinite(tolerance)):
        raise InputError(f"tolerance must be a positive number, got {tolerance}")
    if conv.scale == 0:
        raise InputError("scale must not be zero")
    lat = provider.lattice
    if len(site_columns) != len(lat.coordinate_names):
        raise InputError(f"a {lat.name} site has {len(lat.coordinate_names)} coordinates; "
                         f"--site-columns names {len(site_columns)}")
    if conv.origin is not None and len(conv.origin) != len(site_columns):
        raise InputError("the origin needs as many coordinates as a site")
    if len(set(site_columns)) != len(site_columns) or value_column in site_columns:
        raise InputError("--site-columns and --value-column must name different columns")
    data = _read_rows(path, [*site_columns, value_column])
    report = AuditReport(lat.name, quantity, tolerance)
    sign = -1 if conv.negate != (conv.hopping == -1 and energy is not None) else 1
    parsed: list[tuple[AuditRow, tuple[int, ...], Any]] = []
    for line, row in data:
        if isinstance(row, str):  # why the row could not be read
            report.rows.append(AuditRow(line=line, site=[], status="invalid",
                                        message=f"the row {row}"))
            continue
        raw_site = [row.get(c, "") for c in site_columns]
        ar = AuditRow(line=line, site=[_shown(x) for x in raw_site], status="invalid")
        report.rows.append(ar)
        if not all(_INTEGER.fullmatch(x.strip()) and not isinstance(x, _Cell)
                   and len(x) <= MAX_CELL for x in raw_site):
            ar.message = f"site {ar.site} is not integer coordinates"
            continue
        coords = [int(x) for x in raw_site]
        if conv.origin is not None:
            coords = [c - o for c, o in zip(coords, conv.origin, strict=True)]
        try:
            site = lat.site(coords)
        except InputError as e:
            ar.message = _shown(str(e), 200)
            continue
        text = row.get(value_column, "")
        ar.value = _shown(text.strip())
        try:
            if isinstance(text, _Cell):
                raise ValueError(f"value {text} is not a number")
            if cplx:
                z = _parse_complex(text)
                ours: Any = (Fraction(z.real) / conv.scale * sign,
                             Fraction(z.imag) / conv.scale * sign)
            else:
                ours = parse_decimal(text) / conv.scale * sign
        except ValueError as e:
            ar.message = _shown(str(e), 200)
            continue
        ar.canonical = lat.canonical(site)
        parsed.append((ar, ar.canonical, ours))
    if parsed:
        # the references carry more digits than any value in the file
        given = max(_sig_digits(ar.value or "") for ar, _, _ in parsed)
        digits = min(MAX_DIGITS, max(digits, given + 5))
        cap = max(AGREE_CAP, given)
        refs = _references(provider, {s for _, s, _ in parsed}, digits)
        for ar, site, ours in parsed:
            ref = refs.get(site)
            if ref is None:
                ar.message = f"site {site} is beyond the reference range"
                continue
            ar.reference = ref
            if cplx:
                rre, rim = (Fraction(x) for x in ref.removesuffix("j").rsplit("|", 1))
                ar.reference = _complex_text(rre, rim)
                ar.expected = _complex_text(rre * conv.scale * sign, rim * conv.scale * sign,
                                            17)
                zero = rre == 0 and rim == 0
                rel = _relative_error(_hypot(ours[0] - rre, ours[1] - rim),
                                      _hypot(rre, rim))
            else:
                theirs = Fraction(ref) * conv.scale * sign
                ar.expected = str(round_rational(theirs, 17)) if theirs else "0"
                zero = Fraction(ref) == 0
                rel = _relative_error(abs(ours - Fraction(ref)), abs(Fraction(ref)))
            if rel is None:
                ar.status, ar.agreeing_digits = "mismatch", 0
                ar.message = (("our value is exactly 0 here" + (" (R(0) = 0)" if quantity ==
                                                                "resistance" else ""))
                              + ": the relative error of a nonzero value is infinite"
                              if zero else "the relative error is beyond 1e300")
                continue
            ar.relative_error = rel
            ar.agreeing_digits = (min(cap, digits) if rel == 0 else
                                  max(0, min(cap, digits, math.floor(-math.log10(rel)))))
            ar.status = "ok" if rel <= tolerance else "mismatch"
    return report


_INTEGER = re.compile(r"[+-]?[0-9]+")


def _shown(text: str, width: int = 60) -> str:
    """A field as the report shows it: long ones cut (a megabyte site stays out of it)."""
    return text if len(text) <= width else f"{text[:width]}... ({len(text):,} characters)"


def _parse_complex(text: str) -> complex:
    """A complex value written as Python does (``0.1+0.2j``), finite."""
    t = text.strip()
    if len(t) > MAX_CELL:
        raise ValueError(f"value of {len(t):,} characters is too long (at most {MAX_CELL:,})")
    try:
        z = complex(t)
    except ValueError:
        raise ValueError(f"value {_shown(t)!r} is not a number") from None
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        raise ValueError(f"value {_shown(t)!r} is not finite")
    return z


def _hypot(x: Fraction, y: Fraction) -> Fraction:
    """|x + iy| to well within float precision, as a Fraction (exact where y = 0)."""
    if y == 0 or x == 0:
        return abs(x) or abs(y)
    return Fraction(math.hypot(float(x), float(y)))


def _sig_digits(text: str) -> int:
    """Significant digits written in a decimal string (``1.2500e3`` has 5)."""
    mant = text.strip().lstrip("+-").lower().split("e")[0].replace(".", "")
    return len(mant.lstrip("0")) or 1


def _relative_error(diff: Fraction, ref: Fraction) -> float | None:
    """|x - ref| / |ref| as a float; None where it is infinite (ref = 0, x != 0) or beyond
    1e300 (a float would overflow).

    >>> _relative_error(Fraction(1, 100), Fraction(1)), _relative_error(Fraction(1), Fraction(0))
    (0.01, None)
    """
    if diff == 0:
        return 0.0
    if ref == 0 or diff > ref * 10**300:
        return None
    return float(diff / ref)


def _complex_text(re: Fraction, im: Fraction, digits: int | None = None) -> str:
    def f(x: Fraction) -> str:
        return str(round_rational(x, digits)) if digits and x else str(x if not digits else 0)

    r, i = (f(re), f(im)) if digits else (str(re), str(im))
    return f"{r}{'' if i.startswith('-') else '+'}{i}j"


def _references(provider: Any, sites: set[tuple[int, ...]], digits: int) -> dict[Any, str]:
    """Verified reference values for the canonical sites asked, from one table pass (complex
    values as "re|im")."""
    extent = max(max(s) for s in sites)
    extent = min(extent, provider.exact_limit)
    cplx = bool(getattr(provider, "complex_valued", False))
    refs: dict[Any, str] = {}
    # a table pass costs about one full-digit check per row for a complex quantity, a few
    # microseconds per row otherwise; a single value costs about one full-digit check: a
    # few sites far out are computed one by one (a green table to the extent of one far
    # site would take hours)
    inside = [s for s in sites if max(s) <= extent]
    if provider.quantity in ("green", "resistance") and len(inside) * (
            SPARSE_COMPLEX if cplx else SPARSE_REAL) < provider.lattice.region_size(extent):
        from ..quantities import green, resistance

        name = provider.lattice.name
        for s in inside:
            if cplx:
                g = green(name, s, energy=str(provider.energy), digits=digits)
                refs[s] = f"{g.value_re}|{g.value_im}"
            else:
                refs[s] = resistance(name, s, digits=digits).value
        return refs
    for blk in table_rows(provider, extent, digits, "full" if cplx else "fast",
                          with_exact=False):
        for k, s in enumerate(blk.sites):
            if s in sites:
                refs[s] = (f"{blk.values[k]}|{blk.imags[k]}" if cplx and blk.imags
                           else blk.values[k])
    return refs


def plot(report: AuditReport, path: Path) -> None:
    """Agreeing digits against distance from the origin (PNG)."""
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        raise InputError("--plot needs matplotlib (pip install 'latgreen[plot]')") from None
    from ..lattices import get_lattice

    lat = get_lattice(report.lattice)
    xs, ys = [], []
    for r in report.rows:
        if r.agreeing_digits is None or r.canonical is None:
            continue
        xs.append(lat.distance(r.canonical))
        ys.append(r.agreeing_digits)
    fig, ax = plt.subplots(figsize=(7, 4.2), dpi=110)
    ax.scatter(xs, ys, s=9, color="#1f5fa8")
    ax.axhline(-math.log10(report.tolerance), color="#b03030", lw=1, ls="--",
               label=f"tolerance {report.tolerance:g}")
    ax.set_xlabel("distance from the origin (bond lengths)")
    ax.set_ylabel("agreeing significant digits")
    ax.set_title(f"audit: {report.lattice} {report.quantity}")
    ax.set_ylim(-0.5, AGREE_CAP + 0.5)
    ax.legend(loc="lower left")
    fig.tight_layout()
    try:
        fig.savefig(path)
    except OSError as e:
        raise InputError(f"cannot write {path}: {e.strerror}") from None
    finally:
        plt.close(fig)
