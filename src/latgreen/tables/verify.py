"""Verify a published table: its files against the descriptor, and its rows against a fresh
computation.

Checks, in order: the descriptor is readable and names our files; each data file's byte
count and sha256 match (a truncated or edited file is named); the CSV and JSON agree row by
row; the package validates as a Frictionless Data Package (when the frictionless library is
installed); and a sample of rows (every row with ``all_rows``) is recomputed with the
parameters recorded in the descriptor and compared digit for digit, naming the first row
that differs with its line number.
"""

from __future__ import annotations

import csv
import hashlib
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..errors import InputError
from ..quantities import get_provider
from .build import rows as table_rows


@dataclass
class VerifyReport:
    path: Path
    problems: list[str] = field(default_factory=list)
    checked_rows: int = 0
    total_rows: int = 0
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not self.problems


def _sha256(path: Path) -> tuple[str, int]:
    h = hashlib.sha256()
    n = 0
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
            n += len(block)
    return h.hexdigest(), n


def verify_table(path: Path, all_rows: bool = False, sample: int = 200) -> VerifyReport:
    path = Path(path)
    if path.is_file() and path.name == "datapackage.json":
        path = path.parent
    desc_path = path / "datapackage.json"
    if not desc_path.is_file():
        raise InputError(f"{path} has no datapackage.json: not a latgreen table")
    try:
        desc = json.loads(desc_path.read_text(encoding="utf-8"))
        meta = desc["latgreen"]
        resources = {r["name"]: r for r in desc["resources"]}
    except (ValueError, KeyError, TypeError):
        raise InputError(f"{desc_path} is not a latgreen table descriptor") from None
    rep = VerifyReport(path)
    # 1. bytes and hashes
    for r in resources.values():
        f = path / r["path"]
        if not f.is_file():
            rep.problems.append(f"{r['path']}: missing")
            continue
        digest, n = _sha256(f)
        if n != r.get("bytes"):
            rep.problems.append(f"{r['path']}: {n} bytes, the descriptor says {r.get('bytes')}"
                                " (truncated or extended)")
        if f"sha256:{digest}" != r.get("hash"):
            rep.problems.append(f"{r['path']}: sha256 differs from the descriptor (the file "
                                "was changed after publication)")
    csv_path = path / resources.get("values", {}).get("path", "values.csv")
    json_path = path / resources.get("values-json", {}).get("path", "values.json")
    try:
        with open(csv_path, newline="", encoding="utf-8") as f:
            reader = csv.reader(f)
            header = next(reader)
            csv_rows = [(reader.line_num, row) for row in reader]
        js = json.loads(json_path.read_text(encoding="utf-8"))
    except (OSError, ValueError, StopIteration, UnicodeDecodeError) as e:
        rep.problems.append(f"cannot read the data files: {e}")
        return rep
    rep.total_rows = len(csv_rows)
    # 2. the two data files agree
    jrows = js.get("rows", []) if isinstance(js, dict) else []
    if len(jrows) != len(csv_rows):
        rep.problems.append(f"values.csv has {len(csv_rows)} rows, values.json {len(jrows)}")
    for (line, row), jrow in zip(csv_rows, jrows, strict=False):
        if [str(x) for x in jrow] != row:
            rep.problems.append(f"values.csv line {line} and values.json row "
                                f"{line - 1} differ")
            break
    # 3. Frictionless validation
    try:
        import frictionless
    except ImportError:
        rep.notes.append("frictionless is not installed: package validation skipped")
    else:
        report = frictionless.Package(str(desc_path)).validate()
        if not report.valid:
            kinds = sorted({e for row in report.flatten(["type"]) for e in row})
            rep.problems.append(f"Frictionless validation failed: {', '.join(kinds)}")
    # 4. recompute rows
    if header and header[0] == "energy":
        _recompute_grid(rep, meta, csv_rows, all_rows, sample)
    else:
        _recompute_sites(rep, meta, header, csv_rows, all_rows, sample)
    return rep


def _pick(csv_rows: list[tuple[int, list[str]]], all_rows: bool, sample: int
          ) -> list[tuple[int, list[str]]]:
    """All rows, or about ``sample`` of them spread over the file plus the last one."""
    if all_rows or not csv_rows:
        return csv_rows
    step = max(1, len(csv_rows) // sample)
    picked = csv_rows[::step]
    return picked if picked[-1] is csv_rows[-1] else [*picked, csv_rows[-1]]


def _recompute_sites(rep: VerifyReport, meta: dict[str, Any], header: list[str],
                     csv_rows: list[tuple[int, list[str]]], all_rows: bool,
                     sample: int) -> None:
    """Rows over sites (real: value, exact, exact_how, error_bound, methods, agreement after
    the coordinates; complex: value_re, value_im, exact, ...): the values and exact forms
    recomputed by the provider (bound to the table's energy where it has one)."""
    cplx = "value_re" in header
    tail = 8 if cplx else 6
    coords = len(header) - tail
    nval = 2 if cplx else 1
    try:
        provider = get_provider(meta["lattice"], meta["quantity"], meta.get("energy"))
        extent, digits = int(meta["extent"]), int(meta["digits"])
    except (KeyError, ValueError, InputError) as e:
        rep.problems.append(f"cannot recompute: {e}")
        return
    with_exact = any(row[coords + nval] for _, row in csv_rows if len(row) == len(header))
    picked = _pick(csv_rows, all_rows, sample)
    wanted: set[tuple[int, ...]] = set()
    for line, row in picked:
        try:
            wanted.add(tuple(int(x) for x in row[:coords]))
        except ValueError:
            rep.problems.append(f"values.csv line {line}: malformed site {row[:coords]}")
    fresh: dict[tuple[int, ...], tuple[tuple[str, ...], str]] = {}
    if cplx:
        # the values and forms alone (the independent check is what the table itself ran)
        for _, eb in provider.evaluated_batches(extent, digits, with_exact):
            if eb.texts is not None:
                exacts = eb.texts[0]
            elif eb.forms is not None:
                exacts = ["" if f is None else str(f) for f in eb.forms]
            else:
                exacts = [""] * len(eb.sites)
            assert eb.imag is not None
            for k, st in enumerate(eb.sites):
                if st in wanted:
                    fresh[st] = ((eb.rounded.values[k], eb.imag.values[k]), exacts[k])
    else:
        for blk in table_rows(provider, extent, digits, "fast", with_exact):
            for k, st in enumerate(blk.sites):
                if st in wanted:
                    fresh[st] = ((blk.values[k],), blk.exacts[k])
    for line, row in picked:
        try:
            site = tuple(int(x) for x in row[:coords])
        except ValueError:
            continue
        rep.checked_rows += 1
        got = fresh.get(site)
        have = tuple(row[coords:coords + nval])
        if got is None:
            rep.problems.append(f"values.csv line {line}: site {site} is not in the region")
        elif have != got[0]:
            rep.problems.append(f"values.csv line {line}: site {site} has {', '.join(have)}, "
                                f"recomputed {', '.join(got[0])}")
        elif with_exact and row[coords + nval] != got[1]:
            rep.problems.append(f"values.csv line {line}: site {site} has exact form "
                                f"{row[coords + nval]}, recomputed {got[1]}")


def _recompute_grid(rep: VerifyReport, meta: dict[str, Any],
                    csv_rows: list[tuple[int, list[str]]], all_rows: bool,
                    sample: int) -> None:
    """Rows over an energy grid (energy, value, exact, error_bound, methods, agreement): each
    value recomputed by the single-value API (closed form confirmed by its check)."""
    from ..quantities import dos

    try:
        lattice, quantity, digits = meta["lattice"], meta["quantity"], int(meta["digits"])
    except (KeyError, ValueError) as e:
        rep.problems.append(f"cannot recompute: {e}")
        return
    if quantity != "dos":
        rep.problems.append(f"cannot recompute: an energy grid of {quantity!r}")
        return
    for line, row in _pick(csv_rows, all_rows, sample):
        if len(row) < 3:
            rep.problems.append(f"values.csv line {line}: malformed row")
            continue
        try:
            r = dos(lattice, row[0], digits)
        except InputError as e:
            rep.problems.append(f"values.csv line {line}: energy {row[0]!r}: {e}")
            continue
        rep.checked_rows += 1
        exact = "" if r.exact is None else str(r.exact)
        if row[1] != r.value:
            rep.problems.append(f"values.csv line {line}: E = {row[0]} has {row[1]}, "
                                f"recomputed {r.value}")
        elif row[2] != exact:
            rep.problems.append(f"values.csv line {line}: E = {row[0]} has exact form "
                                f"{row[2]}, recomputed {exact}")


def report_json(rep: VerifyReport) -> dict[str, Any]:
    return {"path": str(rep.path), "ok": rep.ok, "problems": rep.problems,
            "rows": rep.total_rows, "rows_recomputed": rep.checked_rows, "notes": rep.notes}
