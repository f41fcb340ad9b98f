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

``--resume`` trusts nothing in the checkpoint it can check: the plan must be exactly the plan
the table's parameters give (:func:`latgreen.tables.build.plan_units` with the recorded
number of parts), and a unit counts as done only if both its files match their hashes, hold
exactly the rows the region puts in that unit (their site keys, read from every CSV line and
JSON row, hash to those of the unit's sites in order), its JSON rows are its CSV lines, and
its summary (rows, first and last site, minimum agreement, rows checked at full digits) is what
its CSV lines say (:meth:`Checkpoint.done`); any other unit is computed again.  The values
themselves are not recomputed: the checkpoint is a local file of the user's own run, whose
threats are storage corruption, truncation and editing or mixing of its files (all caught
above); someone who rewrites a value and its hash in both files could as well rewrite a
published table and its descriptor, which is what ``latgreen verify`` (a recomputed
sample, ``--all`` every row) is for.
"""

from __future__ import annotations

import hashlib
import json
import mmap
import os
import re
import shutil
from collections import Counter
from collections.abc import Iterable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import InputError
from .export import make_dirs, remove_dirs
from .render import Chunk, Stored, merge

FORMAT = 2  # 2: plan.json records how the plan was made ("planning"), to check it
SCAN_BYTES = 1 << 24  # a unit's files are checked in slices of about this size


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


@dataclass(frozen=True)
class UnitShape:
    """What the region puts in one work unit: its rows, first and last site, and the sha256
    of its site keys (``m,n`` and a newline per row, in order)."""

    rows: int
    first: tuple[int, ...] | None
    last: tuple[int, ...] | None
    keys_sha256: str


def unit_shapes(batch_sites: Iterable[Sequence[tuple[int, ...]]], units: list[tuple[int, int]],
                wanted: Iterable[int]) -> dict[int, UnitShape]:
    """The shapes of the units ``wanted``, from the sites of each batch (one pass, nothing
    computed)."""
    unit_of = {bi: i for i, (a, b) in enumerate(units) for bi in range(a, b)}
    acc: dict[int, list[Any]] = {i: [0, None, None, hashlib.sha256()] for i in wanted}
    for bi, sites in enumerate(batch_sites):
        st = acc.get(unit_of.get(bi, -1))
        if st is None or not sites:
            continue
        st[0] += len(sites)
        st[1] = st[1] if st[1] is not None else tuple(sites[0])
        st[2] = tuple(sites[-1])
        st[3].update(("\n".join([",".join(map(str, s)) for s in sites]) + "\n").encode())
    return {i: UnitShape(n, first, last, h.hexdigest()) for i, (n, first, last, h) in acc.items()}


@dataclass(frozen=True)
class _Layout:
    """The rows of a table with ``coords`` site coordinates and ``fields`` text columns
    before ``methods, agreement_digits``, as the scan reads them.  Every pattern starts with
    a newline, which the regular-expression engine searches for fast (a pattern that begins
    with a character class runs about ten times slower): the keys at the start of each CSV
    line and JSON row, and the agreement and methods at the end of each CSV line, read in
    the reversed text."""

    coords: int
    fields: int

    @property
    def csv_keys(self) -> re.Pattern[bytes]:
        return re.compile(rb"\n(-?[0-9]+(?:,-?[0-9]+){%d})," % (self.coords - 1))

    @property
    def csv_tails(self) -> re.Pattern[bytes]:  # on the reversed text: "\n41,sdohtem,"
        return re.compile(rb"\n([0-9]+),([^,\n]*),")

    @property
    def json_keys(self) -> re.Pattern[bytes]:
        return re.compile(rb'\n\[(-?[0-9]+(?:,-?[0-9]+){%d}),"' % (self.coords - 1))


def _slices(data: Any, cut: bytes, after: bool) -> Iterable[bytes]:
    """``data`` in slices of about SCAN_BYTES, each ending just before (or ``after``) an
    occurrence of ``cut``, or at the end."""
    start, size = 0, len(data)
    while start < size:
        end = data.find(cut, start + SCAN_BYTES) if start + SCAN_BYTES < size else -1
        end = size if end < 0 else end + (len(cut) if after else 0)
        yield data[start:end]
        start = end


@dataclass
class _Scan:
    sha256: str
    rows: int
    keys_sha256: str
    min_agreement: int | None = None
    full_rows: int = 0
    as_csv_sha256: str | None = None  # of a JSON file: the sha256 of its rows as CSV lines


_DEFINITION = b"definition"[::-1]
_FLOAT_CHECK = b"quadrature-float64"[::-1]


def _scan_csv(part: bytes, lay: _Layout, keys: Any, tally: Counter[tuple[bytes, bytes]]
              ) -> int | None:
    """The rows of a slice of CSV lines (keys hashed into ``keys``, (agreement, methods)
    reversed counted into ``tally``), or None if a line is not a table row."""
    n = part.count(b"\n")
    if (not part.endswith(b"\n") or b'"' in part or b"\r" in part
            or part.count(b",") != n * (lay.coords + lay.fields + 1)):
        return None
    found = lay.csv_keys.findall(b"\n" + part)
    tails = lay.csv_tails.findall(part[::-1])
    if len(found) != n or len(tails) != n:
        return None
    keys.update(b"\n".join(found) + b"\n")
    tally.update(tails)
    return n


def _scan_json(part: bytes, lay: _Layout, keys: Any, as_csv: Any) -> int | None:
    """The rows of a slice of JSON rows (each ``,\\n[...]``; keys hashed into ``keys``, the
    rows turned into CSV lines into ``as_csv``), or None if a row is not a table row."""
    n = part.count(b"\n")
    if (not part.startswith(b",\n[") or not part.endswith(b"]")
            or part.count(b'"') != 2 * (lay.fields + 1) * n
            or part.count(b'","') != lay.fields * n):
        return None
    found = lay.json_keys.findall(part)
    if len(found) != n:
        return None
    keys.update(b"\n".join(found) + b"\n")
    # the rows as CSV lines: the fields hold no quotes, and "],\n[" only parts rows (no
    # field holds a newline)
    as_csv.update(part.replace(b'"', b"").replace(b"],\n[", b"\n")[3:-1] + b"\n")
    return n


def _scan(path: Path, lay: _Layout, is_csv: bool) -> _Scan | None:
    """Hash a unit file (in a second thread) while reading the keys of every row, for the
    CSV their agreement and methods, for the JSON hashing its rows turned into CSV lines;
    None if a line is not a table row."""
    keys, as_csv = hashlib.sha256(), hashlib.sha256()
    tally: Counter[tuple[bytes, bytes]] = Counter()
    rows, ok = 0, True
    with open(path, "rb") as f:
        size = os.fstat(f.fileno()).st_size
        data: Any = mmap.mmap(f.fileno(), 0, access=mmap.ACCESS_READ) if size else b""
        try:
            with ThreadPoolExecutor(1) as ex:
                whole = ex.submit(lambda: hashlib.sha256(data).hexdigest())
                for part in _slices(data, b"\n" if is_csv else b",\n[", is_csv):
                    n = (_scan_csv(part, lay, keys, tally) if is_csv else
                         _scan_json(part, lay, keys, as_csv))
                    if n is None:
                        ok = False
                        break
                    rows += n
                sha = whole.result()
        finally:
            if isinstance(data, mmap.mmap):
                data.close()
    if not ok:
        return None
    try:
        checked = [(int(a[::-1]), m) for a, m in tally if m != _DEFINITION]
    except ValueError:  # pragma: no cover - the pattern reads digits only
        return None
    low = min((a for a, _ in checked), default=None)
    full = sum(k for (_, m), k in tally.items() if m != _DEFINITION and _FLOAT_CHECK not in m)
    return _Scan(sha, rows, keys.hexdigest(), low, full,
                 None if is_csv else as_csv.hexdigest())


class Checkpoint:
    """The checkpoint ``.NAME.partial`` of the output directory ``out`` (an absolute path
    from :func:`latgreen.tables.export.check_output_dir`), beside it."""

    def __init__(self, out: Path) -> None:
        self.dir = out.parent / f".{out.name}.partial"
        self.created: list[Path] = []  # parent directories made for it (removed with it)
        self.valid: dict[int, Chunk] = {}  # units checked by done()
        if self.dir.is_symlink() or (self.dir.exists() and not self.dir.is_dir()):
            raise InputError(f"{self.dir} is in the way of this table's checkpoint (it is "
                             "not a directory): move it away")

    def exists(self) -> bool:
        return (self.dir / "plan.json").is_file()

    def start(self, params: dict[str, Any], planning: dict[str, Any],
              units: list[tuple[int, int]]) -> None:
        if self.dir.exists():
            shutil.rmtree(self.dir)
        try:
            self.created = make_dirs(self.dir.parent)
            self.dir.mkdir()
        except OSError as e:
            remove_dirs(self.created)
            raise InputError(f"cannot write to {self.dir.parent}: {e.strerror}") from None
        _atomic_write(self.dir / "plan.json", (json.dumps(
            {"format": FORMAT, "params": params, "planning": planning, "units": units},
            indent=1) + "\n").encode("utf-8"), sync=True)

    def plan(self) -> tuple[dict[str, Any], dict[str, Any], list[tuple[int, int]]]:
        """(parameters, how the plan was made, units) as recorded."""
        try:
            d = json.loads((self.dir / "plan.json").read_text(encoding="utf-8"))
            if d.get("format") != FORMAT:
                raise ValueError("format")
            planning = d["planning"]
            parts, parallel = planning["parts"], planning["parallel"]
            if (not isinstance(parts, int) or isinstance(parts, bool) or parts < 1
                    or not isinstance(parallel, bool) or not isinstance(d["params"], dict)):
                raise ValueError("planning")
            units = [(a, b) for a, b in d["units"]]
            if not all(type(a) is int and type(b) is int for a, b in units):
                raise ValueError("units")
            return d["params"], planning, units
        except (OSError, ValueError, KeyError, TypeError, AttributeError, RecursionError):
            raise InputError(f"the checkpoint at {self.dir} is unreadable (or from another "
                             "version of latgreen); use --force to start over") from None

    def save(self, i: int, ch: Chunk) -> None:
        """Save a finished unit (nothing to do if the worker saved it already)."""
        if not ch.saved:
            save_unit(self.dir, i, ch)

    def kept(self, count: int) -> list[int]:
        """The units that have a meta file (cheap; :meth:`done` checks them on resuming)."""
        return [i for i in range(count) if _paths(self.dir, i)[2].is_file()]

    def done(self, shapes: dict[int, UnitShape], coords: int, fields: int
             ) -> list[tuple[int, str]]:
        """Check the units that have a meta file against ``shapes`` (what the region puts in
        each unit) and their own files; keep those that pass (:attr:`valid`), drop the meta
        file of the others (they are computed again) and return [(unit, what is wrong)]."""
        lay = _Layout(coords, fields)
        rejected = []
        for i in sorted(shapes):
            if not _paths(self.dir, i)[2].is_file():
                continue
            why = self._check(i, shapes[i], lay)
            if isinstance(why, Chunk):
                self.valid[i] = why
            else:
                rejected.append((i, why))
                _paths(self.dir, i)[2].unlink(missing_ok=True)
        return rejected

    def _check(self, i: int, shape: UnitShape, lay: _Layout) -> Chunk | str:
        csv_p, json_p, meta_p = _paths(self.dir, i)
        try:
            meta = json.loads(meta_p.read_text(encoding="utf-8"))
            claims = (meta["rows"], meta["first"], meta["last"], meta["min_agreement"],
                      meta["full_rows"], meta["csv_sha256"], meta["json_sha256"])
        except (OSError, ValueError, KeyError, TypeError, RecursionError):
            return "its meta file is unreadable"
        rows, first, last, low, full, csv_sha, json_sha = claims
        if not (csv_p.is_file() and json_p.is_file()):
            return "a file is missing"
        try:
            c = _scan(csv_p, lay, True)
            j = _scan(json_p, lay, False)
        except OSError as e:
            return f"cannot read it ({e.strerror})"
        if c is None or j is None:
            return "a line of it is not a table row"
        if (c.sha256, j.sha256) != (csv_sha, json_sha):
            return "its files do not match their sha256"
        if j.as_csv_sha256 != c.sha256:
            return "its CSV and JSON rows differ"
        if not (c.rows == j.rows == shape.rows == rows):
            return f"it holds {c.rows} rows where the region puts {shape.rows} in it"
        if not (c.keys_sha256 == j.keys_sha256 == shape.keys_sha256):
            return "its rows are not the sites of the unit, in order"
        if [first, last] != [list(shape.first or ()), list(shape.last or ())]:
            return "its first or last site is not the unit's"
        if (low, full) != (c.min_agreement, c.full_rows):
            return "its summary does not match its rows"
        return Chunk(stored=Stored(csv_p, json_p, csv_sha, json_sha), rows=c.rows,
                     first=shape.first, last=shape.last, min_agreement=c.min_agreement,
                     full_rows=c.full_rows)

    def _load(self, i: int) -> Chunk | None:
        """Unit ``i`` (written by this run) as a chunk whose texts stay in their files (the
        writer checks their hashes while it copies them)."""
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
        except (OSError, ValueError, KeyError, TypeError, RecursionError):
            return None

    def chunk(self, i: int) -> Chunk:
        ch = self.valid.get(i) or self._load(i)
        if ch is None:
            raise InputError(f"work unit {i} in {self.dir} changed or vanished during the "
                             "build; use --force to start over")
        return ch

    def remove(self) -> None:
        shutil.rmtree(self.dir, ignore_errors=True)
        remove_dirs(self.created)
