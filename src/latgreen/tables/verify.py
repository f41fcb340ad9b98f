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
    coords = len(header) - 6
    try:
        provider = get_provider(meta["lattice"], meta["quantity"])
        extent, digits = int(meta["extent"]), int(meta["digits"])
    except (KeyError, ValueError, InputError) as e:
        rep.problems.append(f"cannot recompute: {e}")
        return rep
    with_exact = any(row[coords + 1] for _, row in csv_rows)
    if all_rows:
        wanted = {tuple(int(x) for x in row[:coords]) for _, row in csv_rows}
    else:
        step = max(1, len(csv_rows) // sample)
        wanted = {tuple(int(x) for x in row[:coords]) for _, row in csv_rows[::step]}
        if csv_rows:
            wanted.add(tuple(int(x) for x in csv_rows[-1][1][:coords]))
    fresh: dict[tuple[int, ...], tuple[str, str]] = {}
    for blk in table_rows(provider, extent, digits, "fast", with_exact):
        for k, s in enumerate(blk.sites):
            if s in wanted:
                fresh[s] = (blk.values[k], blk.exacts[k])
    for line, row in csv_rows:
        try:
            site = tuple(int(x) for x in row[:coords])
        except ValueError:
            rep.problems.append(f"values.csv line {line}: malformed site {row[:coords]}")
            continue
        if site not in wanted:
            continue
        rep.checked_rows += 1
        got = fresh.get(site)
        if got is None:
            rep.problems.append(f"values.csv line {line}: site {site} is not in the region")
        elif row[coords] != got[0]:
            rep.problems.append(f"values.csv line {line}: site {site} has {row[coords]}, "
                                f"recomputed {got[0]}")
        elif with_exact and row[coords + 1] != got[1]:
            rep.problems.append(f"values.csv line {line}: site {site} has exact form "
                                f"{row[coords + 1]}, recomputed {got[1]}")
    return rep


def report_json(rep: VerifyReport) -> dict[str, Any]:
    return {"path": str(rep.path), "ok": rep.ok, "problems": rep.problems,
            "rows": rep.total_rows, "rows_recomputed": rep.checked_rows, "notes": rep.notes}
