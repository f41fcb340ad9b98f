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


def _read_rows(path: Path) -> list[tuple[int, dict[str, str]]]:
    """(line number, row as strings) from a CSV or JSON file."""
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as e:
        raise InputError(f"cannot read {path}: {e.strerror}") from None
    except UnicodeDecodeError:
        raise InputError(f"{path} is not UTF-8 text") from None
    if path.suffix.lower() == ".json" or text.lstrip().startswith(("[", "{")):
        try:
            data = json.loads(text)
        except ValueError as e:
            raise InputError(f"{path} is not valid JSON: {e}") from None
        if isinstance(data, dict) and "fields" in data and "rows" in data:
            fields = [str(f) for f in data["fields"]]
            items = [dict(zip(fields, r, strict=False)) if isinstance(r, list) else r
                     for r in data["rows"]]
        elif isinstance(data, dict) and isinstance(data.get("rows"), list):
            items = data["rows"]
        elif isinstance(data, list):
            items = data
        else:
            raise InputError(f"{path}: expected a list of rows, or an object with 'rows'")
        out = []
        for k, item in enumerate(items, start=1):
            if isinstance(item, dict):
                out.append((k, {str(a): "" if b is None else str(b) for a, b in item.items()}))
            else:
                out.append((k, {}))
        return out
    reader = csv.DictReader(text.splitlines())
    if reader.fieldnames is None:
        raise InputError(f"{path} has no header line")
    out = []
    for row in reader:
        out.append((reader.line_num, {k: (v if v is not None else "") for k, v in row.items()
                                      if k is not None}))
    return out


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
    data = _read_rows(path)
    if data:
        present = set().union(*(set(r) for _, r in data))
        missing = [c for c in [*site_columns, value_column] if c not in present]
        if missing:
            raise InputError(f"{path} has no column(s) {', '.join(missing)}; it has: "
                             f"{', '.join(sorted(present))}")
    report = AuditReport(lat.name, quantity, tolerance)
    parsed: list[tuple[AuditRow, tuple[int, ...], Fraction]] = []
    for line, row in data:
        raw_site = [row.get(c, "") for c in site_columns]
        ar = AuditRow(line=line, site=raw_site, status="invalid")
        report.rows.append(ar)
        try:
            coords = [int(str(x).strip()) for x in raw_site]
        except ValueError:
            ar.message = f"site {raw_site} is not integer coordinates"
            continue
        if conv.origin is not None:
            coords = [c - o for c, o in zip(coords, conv.origin, strict=True)]
        try:
            site = lat.site(coords)
        except InputError as e:
            ar.message = str(e)
            continue
        text = row.get(value_column, "").strip()
        ar.value = text
        try:
            z = complex(text) if cplx else complex(float(text))
        except ValueError:
            ar.message = f"value {text!r} is not a number"
            continue
        if not (math.isfinite(z.real) and math.isfinite(z.imag)):
            ar.message = f"value {text!r} is not finite"
            continue
        sign = -1 if conv.negate != (conv.hopping == -1 and energy is not None) else 1
        ours: Any = (Fraction(z.real) / conv.scale * sign, Fraction(z.imag) / conv.scale * sign)
        if not cplx:
            ours = Fraction(text) / conv.scale * sign
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
                den = math.hypot(float(rre), float(rim))
                diff = math.hypot(float(ours[0] - rre), float(ours[1] - rim))
                rel = (0.0 if diff == 0 else math.inf) if den == 0 else diff / den
            else:
                theirs = Fraction(ref) * conv.scale * sign
                ar.expected = str(round_rational(theirs, 17)) if theirs else "0"
                rel = _relative_error(ours, Fraction(ref))
            ar.relative_error = rel
            ar.agreeing_digits = (min(cap, digits) if rel == 0 else
                                  max(0, min(cap, digits, math.floor(-math.log10(rel)))))
            ar.status = "ok" if rel <= tolerance else "mismatch"
    return report


def _sig_digits(text: str) -> int:
    """Significant digits written in a decimal string (``1.2500e3`` has 5)."""
    mant = text.strip().lstrip("+-").lower().split("e")[0].replace(".", "")
    return len(mant.lstrip("0")) or 1


def _relative_error(x: Fraction, ref: Fraction) -> float:
    if ref == 0:
        return 0.0 if x == 0 else math.inf
    return float(abs(x - ref) / abs(ref))


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
