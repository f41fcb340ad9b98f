"""Checkpoints of a table build: the completed work units, kept beside the output.

A build writes each finished work unit into a hidden directory ``.NAME.partial`` next to
the output directory ``NAME``: ``plan.json`` (the parameters and the units), and for unit i
``unit-i.csv`` and ``unit-i.json`` (its rendered rows) followed by ``unit-i.meta.json``
(row counts, first and last site, summary, and the sha256 of both texts).  Every file is
written under a temporary name and renamed, and the meta file comes last, so a unit counts
only when it is complete and its hashes match: a build killed at any moment (even with
SIGKILL) resumes from exactly the units that finished.  The output directory itself appears
only when the whole table is assembled; then the checkpoint is removed.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
from pathlib import Path
from typing import Any

from ..errors import InputError
from .render import Chunk

FORMAT = 1


def _atomic_write(path: Path, text: str) -> None:
    tmp = path.with_name(path.name + ".tmp")
    with open(tmp, "w", encoding="utf-8", newline="\n") as f:
        f.write(text)
        f.flush()
        os.fsync(f.fileno())
    os.replace(tmp, path)


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


class Checkpoint:
    def __init__(self, out: Path) -> None:
        self.dir = out.resolve().parent / f".{out.name}.partial"

    def exists(self) -> bool:
        return (self.dir / "plan.json").is_file()

    def start(self, params: dict[str, Any], units: list[tuple[int, int]]) -> None:
        if self.dir.exists():
            shutil.rmtree(self.dir)
        self.dir.mkdir(parents=True)
        _atomic_write(self.dir / "plan.json", json.dumps(
            {"format": FORMAT, "params": params, "units": units}, indent=1) + "\n")

    def plan(self) -> tuple[dict[str, Any], list[tuple[int, int]]]:
        try:
            d = json.loads((self.dir / "plan.json").read_text(encoding="utf-8"))
            if d.get("format") != FORMAT:
                raise ValueError("format")
            return d["params"], [(int(a), int(b)) for a, b in d["units"]]
        except (OSError, ValueError, KeyError, TypeError):
            raise InputError(f"the checkpoint at {self.dir} is unreadable; use --force to "
                             "start over") from None

    def _paths(self, i: int) -> tuple[Path, Path, Path]:
        base = self.dir / f"unit-{i:05d}"
        return (base.with_suffix(".csv"), base.with_suffix(".json"),
                base.with_suffix(".meta.json"))

    def save(self, i: int, ch: Chunk) -> None:
        csv_p, json_p, meta_p = self._paths(i)
        _atomic_write(csv_p, ch.csv)
        _atomic_write(json_p, ch.json)
        meta = {"rows": ch.rows, "first": ch.first, "last": ch.last,
                "min_agreement": ch.min_agreement, "full_rows": ch.full_rows,
                "csv_sha256": _sha(ch.csv), "json_sha256": _sha(ch.json)}
        _atomic_write(meta_p, json.dumps(meta) + "\n")

    def done(self, count: int) -> set[int]:
        """The units whose files are complete and match their hashes."""
        out = set()
        for i in range(count):
            if self._load(i) is not None:
                out.add(i)
        return out

    def _load(self, i: int) -> Chunk | None:
        csv_p, json_p, meta_p = self._paths(i)
        try:
            meta = json.loads(meta_p.read_text(encoding="utf-8"))
            csv = csv_p.read_text(encoding="utf-8")
            js = json_p.read_text(encoding="utf-8")
        except (OSError, ValueError):
            return None
        if _sha(csv) != meta.get("csv_sha256") or _sha(js) != meta.get("json_sha256"):
            return None
        return Chunk(csv=csv, json=js, rows=meta["rows"],
                     first=tuple(meta["first"]) if meta["first"] is not None else None,
                     last=tuple(meta["last"]) if meta["last"] is not None else None,
                     min_agreement=meta["min_agreement"], full_rows=meta["full_rows"])

    def chunk(self, i: int) -> Chunk:
        ch = self._load(i)
        if ch is None:
            raise InputError(f"work unit {i} in {self.dir} changed or vanished during the "
                             "build; use --force to start over")
        return ch

    def remove(self) -> None:
        shutil.rmtree(self.dir, ignore_errors=True)
