"""Checkpoints of a table build: the completed work units, kept beside the output.

A build writes each finished work unit into a hidden directory ``.NAME.partial`` next to
the output directory ``NAME``: ``plan.json`` (the parameters and the units), and for unit i
``unit-i.csv`` and ``unit-i.json`` (its rendered rows) followed by ``unit-i.meta.json``
(row counts, first and last site, summary, and the sha256 of both texts).  Every file is
written under a temporary name and renamed, and the meta file comes last, so a unit counts
only when it is complete and its hashes match: a build killed at any moment (even with
SIGKILL) resumes from exactly the units that finished.  The output directory itself appears
only when the whole table is assembled; then the checkpoint is removed.

A worker process on the same machine, and a serial build, write a unit block by block as
they are rendered (:class:`UnitWriter`), so the texts cross no pipe and no unit's text is
ever held whole.  Only ``plan.json`` is fsynced: a unit file that did not reach the
disk before a crash fails its hash and the unit is simply computed again.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
from pathlib import Path
from typing import Any

from ..errors import InputError
from .render import Chunk, Stored, merge

FORMAT = 1


def _atomic_write(path: Path, data: bytes, sync: bool = False) -> None:
    tmp = path.with_name(path.name + ".tmp")
    with open(tmp, "wb") as f:
        f.write(data)
        if sync:
            f.flush()
            os.fsync(f.fileno())
    os.replace(tmp, path)


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _intact(st: Stored) -> bool:
    try:
        return (_sha(st.csv.read_bytes()) == st.csv_sha256
                and _sha(st.json.read_bytes()) == st.json_sha256)
    except OSError:
        return False


def _paths(directory: Path, i: int) -> tuple[Path, Path, Path]:
    base = directory / f"unit-{i:05d}"
    return (base.with_suffix(".csv"), base.with_suffix(".json"),
            base.with_suffix(".meta.json"))


class UnitWriter:
    """Writes unit ``i`` into the checkpoint block by block, as the blocks are rendered (so
    a unit's text is never held whole), hashing as it goes; :meth:`finish` renames the text
    files into place and writes the meta file with their hashes last."""

    def __init__(self, directory: Path, i: int) -> None:
        self.paths = _paths(directory, i)
        self.tmps = [p.with_name(p.name + ".tmp") for p in self.paths[:2]]
        self.files = [open(t, "wb") for t in self.tmps]  # noqa: SIM115 - closed in finish
        self.hashes = [hashlib.sha256(), hashlib.sha256()]
        self.parts: list[Chunk] = []

    def add(self, ch: Chunk) -> None:
        if not ch.rows:
            return
        for f, h, text in zip(self.files, self.hashes, (ch.csv, ch.json), strict=True):
            b = text.encode("utf-8")
            f.write(b)
            h.update(b)
        self.parts.append(Chunk(rows=ch.rows, first=ch.first, last=ch.last,
                                min_agreement=ch.min_agreement, full_rows=ch.full_rows))

    def finish(self) -> Chunk:
        """Complete the unit; the chunk returned has no texts (``saved``)."""
        for f in self.files:
            f.close()
        for tmp, path in zip(self.tmps, self.paths[:2], strict=True):
            os.replace(tmp, path)
        ch = merge(self.parts)  # the summary (and a check of the row order)
        meta = {"rows": ch.rows, "first": ch.first, "last": ch.last,
                "min_agreement": ch.min_agreement, "full_rows": ch.full_rows,
                "csv_sha256": self.hashes[0].hexdigest(),
                "json_sha256": self.hashes[1].hexdigest()}
        _atomic_write(self.paths[2], (json.dumps(meta) + "\n").encode("utf-8"))
        return Chunk(rows=ch.rows, first=ch.first, last=ch.last,
                     min_agreement=ch.min_agreement, full_rows=ch.full_rows, saved=True)

    def abort(self) -> None:
        """Drop an unfinished unit (its temporary files)."""
        for f in self.files:
            f.close()
        for tmp in self.tmps:
            tmp.unlink(missing_ok=True)


def save_unit(directory: Path, i: int, ch: Chunk) -> Chunk:
    """Save a whole unit ``i`` at once; returns the chunk without its texts."""
    w = UnitWriter(directory, i)
    try:
        w.add(ch)
        return w.finish()
    except BaseException:
        w.abort()
        raise


class Checkpoint:
    def __init__(self, out: Path) -> None:
        self.dir = out.resolve().parent / f".{out.name}.partial"

    def exists(self) -> bool:
        return (self.dir / "plan.json").is_file()

    def start(self, params: dict[str, Any], units: list[tuple[int, int]]) -> None:
        if self.dir.exists():
            shutil.rmtree(self.dir)
        self.dir.mkdir(parents=True)
        _atomic_write(self.dir / "plan.json", (json.dumps(
            {"format": FORMAT, "params": params, "units": units}, indent=1) + "\n"
        ).encode("utf-8"), sync=True)

    def plan(self) -> tuple[dict[str, Any], list[tuple[int, int]]]:
        try:
            d = json.loads((self.dir / "plan.json").read_text(encoding="utf-8"))
            if d.get("format") != FORMAT:
                raise ValueError("format")
            return d["params"], [(int(a), int(b)) for a, b in d["units"]]
        except (OSError, ValueError, KeyError, TypeError):
            raise InputError(f"the checkpoint at {self.dir} is unreadable; use --force to "
                             "start over") from None

    def save(self, i: int, ch: Chunk) -> None:
        """Save a finished unit (nothing to do if the worker saved it already)."""
        if not ch.saved:
            save_unit(self.dir, i, ch)

    def done(self, count: int) -> set[int]:
        """The units whose files are complete and match their hashes."""
        out = set()
        for i in range(count):
            ch = self._load(i)
            if ch is not None and ch.stored is not None and _intact(ch.stored):
                out.add(i)
        return out

    def _load(self, i: int) -> Chunk | None:
        """Unit ``i`` as a chunk whose texts stay in their files (the writer checks their
        hashes while it copies them)."""
        csv_p, json_p, meta_p = _paths(self.dir, i)
        try:
            meta = json.loads(meta_p.read_text(encoding="utf-8"))
            stored = Stored(csv_p, json_p, meta["csv_sha256"], meta["json_sha256"])
            if not (csv_p.is_file() and json_p.is_file()):
                return None
            return Chunk(stored=stored, rows=meta["rows"],
                         first=tuple(meta["first"]) if meta["first"] is not None else None,
                         last=tuple(meta["last"]) if meta["last"] is not None else None,
                         min_agreement=meta["min_agreement"], full_rows=meta["full_rows"])
        except (OSError, ValueError, KeyError, TypeError):
            return None

    def chunk(self, i: int) -> Chunk:
        ch = self._load(i)
        if ch is None:
            raise InputError(f"work unit {i} in {self.dir} changed or vanished during the "
                             "build; use --force to start over")
        return ch

    def remove(self) -> None:
        shutil.rmtree(self.dir, ignore_errors=True)
