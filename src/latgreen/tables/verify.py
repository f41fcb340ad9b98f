"""Verify a published table: its files against the descriptor, and every row against a fresh
computation; or every table of a catalogue.

The data files of a table are byte-for-byte reproducible from the parameters its descriptor
records (lattice, quantity, extent or energy grid, energy, digits, verify level, with or
without exact forms), so verification rebuilds the table through the very pipeline that
made it (:func:`~latgreen.tables.make.make_table`, :func:`make_dos_table`,
:func:`make_return_probability_table`) in a temporary directory and compares: identical
data hashes prove every field of every row; otherwise the rows are matched by key and each
difference is named by its line and columns.  In order:

1. the descriptor is read and checked for structure (:mod:`latgreen.tables.read`: only the
   table's own plain files are opened, nothing is fetched);
2. each data file's size and sha256 against the descriptor (and against ``catalogue.json``
   when verifying a catalogue);
3. the package validates as a Frictionless Data Package (a sanitized copy of the
   descriptor, with the copied data files, in a temporary directory);
4. the parameters pass the same limits as ``latgreen table``, and the region they describe
   is not far larger than the rows the file holds (else nothing is recomputed);
5. the rows: the set of keys must be the table's region (sites up to the extent, the energy
   grid, the listed lattices) in order, values.json must hold the rows of values.csv, and
   every column of every row must equal the recomputed one.

With ``sample`` (site tables only) the batches holding about that many rows, spread over
the table, are recomputed instead of all (the region and the two files are still checked
row by row); the report says how many rows were recomputed.
"""

from __future__ import annotations

import re
import shutil
import tempfile
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..errors import InputError, LatgreenError
from .read import (
    CATALOGUE_FILE,
    CSV_FILE,
    DESCRIPTOR,
    JSON_FILE,
    Descriptor,
    Rows,
    TableDir,
    TableFileError,
    csv_rows,
    digest,
    hash_problems,
    json_rows,
    open_version,
    read_catalogue,
    read_descriptor,
    show,
    typed,
)

MAX_LISTED = 50  # problems listed per table (the rest are counted)
FRICTIONLESS_MAX_BYTES = 64 << 20  # larger tables skip the Frictionless validation
_END = object()


@dataclass
class VerifyReport:
    path: Path
    problems: list[str] = field(default_factory=list)
    more_problems: int = 0
    checked_rows: int = 0  # rows recomputed
    total_rows: int = 0
    notes: list[str] = field(default_factory=list)
    table_id: str | None = None
    version: str | None = None
    seconds: float = 0.0
    descriptor: Descriptor | None = None  # as read (None: not readable)

    def problem(self, text: str) -> None:
        if len(text) > 600:  # a message quoting an absurd field of the descriptor
            text = text[:597] + "..."
        if len(self.problems) < MAX_LISTED:
            self.problems.append(text)
        else:
            self.more_problems += 1

    @property
    def ok(self) -> bool:
        return not self.problems and not self.more_problems


@dataclass
class _Plan:
    """How to recompute a table: its region (sorted positions), the position of a row's
    key fields (None: not a key of this table), how to name a key, and the rebuild."""

    region: Callable[[], Iterator[Any]]
    position: Callable[[list[str]], Any]
    name: Callable[[Any], str]
    rebuild: Callable[[Path], dict[str, Any]]
    size: int  # rows of the region
    nkey: int = 1  # key columns
    sampled: Callable[[_Merge], int] | None = None  # recompute a sample, return its rows


def verify_table(path: Path, all_rows: bool = True, sample: int | None = None,
                 workers: int | None = None, progress: bool = False,
                 catalogue_hashes: dict[str, str] | None = None,
                 directory: TableDir | None = None) -> VerifyReport:
    """Verify the table in ``path`` (a version directory, or its datapackage.json).

    ``all_rows`` is accepted for compatibility: every row is recomputed unless ``sample``
    asks for about that many.  Raises :class:`InputError` when ``path`` is not a usable
    table (no descriptor, or one that is not a latgreen descriptor); every other finding is
    a problem in the report.
    """
    started = time.monotonic()
    d = directory if directory is not None else open_version(Path(path))[0]
    with d:
        desc = read_descriptor(d)
        rep = VerifyReport(d.path, table_id=desc.name, descriptor=desc)
        tmp = Path(tempfile.mkdtemp(prefix="latgreen-verify-"))
        try:
            _verify(d, desc, rep, tmp, sample, workers, progress, catalogue_hashes)
        finally:
            shutil.rmtree(tmp, ignore_errors=True)
    rep.seconds = time.monotonic() - started
    return rep


def _verify(d: TableDir, desc: Descriptor, rep: VerifyReport, tmp: Path, sample: int | None,
            workers: int | None, progress: bool,
            catalogue_hashes: dict[str, str] | None) -> None:
    # 1-2. sizes and hashes (the files copied for Frictionless if small)
    small = sum(size for size, _ in desc.files.values()) <= FRICTIONLESS_MAX_BYTES
    copies = tmp / "copy"
    copies.mkdir()
    lines: dict[str, int] = {}
    actual: dict[str, str | None] = {}
    for name, (size, sha) in desc.files.items():
        try:
            dg = digest(d, name, size, copies / name if small else None)
        except TableFileError as e:
            rep.problem(str(e))
            continue
        lines[name], actual[name] = dg.lines, dg.sha256
        for p in hash_problems(dg, size, sha):
            rep.problem(p)
        if catalogue_hashes is not None and catalogue_hashes.get(name) != sha:
            rep.problem(f"{name}: the descriptor's sha256 differs from {CATALOGUE_FILE}'s")
    if CSV_FILE not in lines or JSON_FILE not in lines:
        return
    rep.total_rows = max(0, lines[CSV_FILE] - 1)
    # 3. Frictionless
    if small:
        _frictionless(rep, desc, copies)
    else:
        rep.notes.append("Frictionless validation skipped: the data files are larger than "
                         f"{FRICTIONLESS_MAX_BYTES >> 20} MiB")
    # 4. parameters and region
    try:
        plan = _plan(d, desc, rep, sample, workers, progress)
    except (InputError, TableFileError) as e:
        rep.problem(f"cannot recompute: {e}")
        plan = None
    if plan is not None and plan.size > 2 * rep.total_rows + 16:
        rep.problem(f"the descriptor's parameters describe {plan.size:,} rows, the file holds "
                    f"{rep.total_rows:,}: not recomputed (rows were deleted or the descriptor "
                    "was edited)")
        plan = None
    # 5. rows
    if plan is None:
        _check_files(d, desc, rep, None)
        return
    if plan.sampled is not None:
        _check_files(d, desc, rep, plan, sampled=True)
        return
    out = tmp / "rebuilt"
    if progress:
        import sys

        print(f"latgreen verify: recomputing {plan.size:,} rows of {desc.name} (a fresh build "
              "in a temporary directory, removed afterwards)", file=sys.stderr, flush=True)
    try:
        fresh = plan.rebuild(out)
    except LatgreenError as e:
        rep.problem(f"the recomputation failed: {e}")
        _check_files(d, desc, rep, None)
        return
    except BaseException as e:
        # an interrupted build offers to resume from its checkpoint: not this one (the
        # temporary directory goes)
        notes = getattr(e, "__notes__", None)
        if notes:
            e.__notes__ = [n for n in notes if "--resume" not in n]
        raise
    _compare_descriptors(rep, desc, fresh)
    fresh_hash = {r["path"]: r["hash"] for r in fresh["resources"]}
    if all(actual.get(n) == fresh_hash.get(n) for n in (CSV_FILE, JSON_FILE)):
        rep.checked_rows = fresh["latgreen"]["cross_check"]["rows"]
        return  # byte for byte the files a fresh build writes
    _check_files(d, desc, rep, plan, rebuilt=out)


def _check_files(d: TableDir, desc: Descriptor, rep: VerifyReport, plan: _Plan | None,
                 rebuilt: Path | None = None, sampled: bool = False) -> None:
    """Read values.csv and values.json row by row: structure, the JSON rows against the CSV
    rows, and (with a plan) the keys against the region and the rows against the
    recomputed ones (from the rebuilt table, or from sampled batches)."""
    log = Rows()
    types = [t for _, t in desc.fields]
    with d.open(CSV_FILE) as fc, d.open(JSON_FILE) as fj:
        head, jrows = json_rows(fj, log)
        if head is not None:
            _check_json_head(rep, desc, head)

        def file_rows() -> Iterator[tuple[int, list[str]]]:
            jit = iter(jrows)
            for line, parts in csv_rows(fc, desc.columns, log):
                row = typed(parts, types)
                j = next(jit, None)
                if row is None:
                    rep.problem(f"{CSV_FILE} line {line}: an integer column holds "
                                "something else")
                    continue
                if j is not None and j[1] != row:
                    rep.problem(f"{CSV_FILE} line {line} and {JSON_FILE} line {j[0]} hold "
                                "different rows")
                yield line, parts
            extra = sum(1 for _ in jit)
            if extra:
                rep.problem(f"{JSON_FILE} holds {extra} row(s) more than {CSV_FILE}")

        if plan is None:
            for _ in file_rows():
                pass
        else:
            m = _Merge(rep, file_rows(), plan, desc.columns)
            if rebuilt is not None:
                flog = Rows()
                with open(rebuilt / CSV_FILE, "rb") as fr:
                    for _, parts in csv_rows(fr, desc.columns, flog):
                        m.expected(plan.position(parts[:plan.nkey]), parts)
                if flog.problems:
                    rep.problem("a fresh build has other columns than the descriptor's")
            elif sampled and plan.sampled is not None:
                plan.sampled(m)
            m.finish()
            rep.checked_rows = m.fed
        for p in log.problems:
            rep.problem(p)


def _check_json_head(rep: VerifyReport, desc: Descriptor, head: dict[str, Any]) -> None:
    want = {"lattice": desc.lattice, "quantity": desc.quantity, "digits": desc.digits,
            "fields": desc.columns}
    for k, v in want.items():
        if head.get(k) != v:
            rep.problem(f"{JSON_FILE}: its {k!r} differs from the descriptor's")


class _Merge:
    """Walks the file's rows (sorted by key), the region and the recomputed rows together."""

    def __init__(self, rep: VerifyReport, file_rows: Iterator[tuple[int, list[str]]],
                 plan: _Plan, columns: list[str]) -> None:
        self.rep, self.rows, self.plan, self.columns = rep, file_rows, plan, columns
        self.nkey = plan.nkey
        self.region = plan.region()
        self.rnext = next(self.region, _END)
        self.last: Any = None
        self.cur: tuple[int, Any, list[str]] | None = None
        self.fed = 0

    def _in_region(self, pos: Any) -> bool:
        while self.rnext is not _END and self.rnext < pos:
            self._missing(self.rnext)
            self.rnext = next(self.region, _END)
        if self.rnext is not _END and self.rnext == pos:
            self.rnext = next(self.region, _END)
            return True
        return False

    def _missing(self, pos: Any) -> None:
        self.rep.problem(f"{CSV_FILE}: no row for {self.plan.name(pos)} of the table's region "
                         "(deleted?)")

    def _pull(self) -> tuple[int, Any, list[str]] | None:
        for line, parts in self.rows:
            key = parts[:self.nkey]
            pos = self.plan.position(key)
            label = f"{CSV_FILE} line {line}"
            if pos is None:
                self.rep.problem(f"{label}: {show(','.join(key))} is not a key of this table")
                continue
            if self.last is not None and not self.last < pos:
                self.rep.problem(f"{label}: {self.plan.name(pos)} is out of order or repeated")
                continue
            self.last = pos
            if not self._in_region(pos):
                self.rep.problem(f"{label}: {self.plan.name(pos)} is not in the table's "
                                 "region")
                continue
            return line, pos, parts
        return None

    def expected(self, pos: Any, parts: list[str]) -> None:
        """The recomputed row at ``pos`` (positions fed in increasing order)."""
        self.fed += 1
        while True:
            if self.cur is None:
                self.cur = self._pull()
            if self.cur is None or not self.cur[1] < pos:
                break
            self.cur = None
        if self.cur is None or self.cur[1] != pos:
            return  # the file has no row here: the region walk names it
        line, _, have = self.cur
        self.cur = None
        diff = [f"{c} {show(a)} (recomputed {show(b)})"
                for c, a, b in zip(self.columns, have, parts, strict=False) if a != b]
        if diff:
            self.rep.problem(f"{CSV_FILE} line {line}: {self.plan.name(pos)} has "
                             + "; ".join(diff))

    def finish(self) -> None:
        self.cur = None
        while self._pull() is not None:
            pass
        while self.rnext is not _END:
            self._missing(self.rnext)
            self.rnext = next(self.region, _END)


def _frictionless(rep: VerifyReport, desc: Descriptor, copies: Path) -> None:
    """Validate a sanitized copy of the descriptor (only the fields we checked, local
    paths, no profile URLs) over the copied data files."""
    try:
        import frictionless
    except ImportError:
        rep.notes.append("frictionless is not installed: package validation skipped")
        return
    csv_bytes, csv_hash = desc.files[CSV_FILE]
    json_bytes, json_hash = desc.files[JSON_FILE]
    pkg = {"name": "latgreen-table", "resources": [
        {"name": "values", "path": CSV_FILE, "type": "table", "format": "csv",
         "mediatype": "text/csv", "encoding": "utf-8", "bytes": csv_bytes, "hash": csv_hash,
         "dialect": {"delimiter": ",", "lineTerminator": "\n", "header": True},
         "schema": {"fields": [{"name": n, "type": t} for n, t in desc.fields],
                    "primaryKey": desc.primary_key}},
        {"name": "values-json", "path": JSON_FILE, "type": "json", "format": "json",
         "mediatype": "application/json", "encoding": "utf-8", "bytes": json_bytes,
         "hash": json_hash}]}
    try:
        report = frictionless.Package(pkg, basepath=str(copies)).validate()
        kinds = sorted({str(e) for row in report.flatten(["type"]) for e in row})
        valid = report.valid
    except Exception as e:  # frictionless raises its own exception types on odd input
        rep.problem(f"Frictionless validation could not run ({type(e).__name__})")
        return
    if not valid:
        rep.problem(f"Frictionless validation failed: {', '.join(kinds)}")


def _compare_descriptors(rep: VerifyReport, desc: Descriptor, fresh: dict[str, Any]) -> None:
    """The descriptor's facts that a fresh build fixes (not its times, library versions or
    source revision)."""
    if desc.name != fresh["name"]:
        rep.problem(f"{DESCRIPTOR}: name {show(desc.name)}, a fresh build gives "
                    f"{show(fresh['name'])}")
    schema = fresh["resources"][0]["schema"]
    if desc.fields != [(f["name"], f["type"]) for f in schema["fields"]] or \
            desc.primary_key != schema["primaryKey"]:
        rep.problem(f"{DESCRIPTOR}: the columns differ from a fresh build's")
    for k in ("region", "verify", "energy", "energies", "energy_grid", "cross_check"):
        if desc.meta.get(k) != fresh["latgreen"].get(k):
            rep.problem(f"{DESCRIPTOR}: latgreen.{k} differs from a fresh build's")


# -- what to recompute, per kind of table ---------------------------------------------------

def _first_row(d: TableDir, desc: Descriptor) -> list[str] | None:
    with d.open(CSV_FILE) as f:
        return next(csv_rows(f, desc.columns, Rows()), (0, None))[1]


def _plan(d: TableDir, desc: Descriptor, rep: VerifyReport, sample: int | None,
          workers: int | None, progress: bool) -> _Plan:
    if desc.kind == "grid":
        if sample is not None:
            rep.notes.append("--sample applies to site tables: the energy grid is recomputed "
                             "whole")
        return _grid_plan(desc, progress)
    if desc.kind == "keys":
        if sample is not None:
            rep.notes.append("--sample applies to site tables: every row is recomputed")
        return _keys_plan(desc)
    return _site_plan(d, desc, rep, sample, workers, progress)


def _site_plan(d: TableDir, desc: Descriptor, rep: VerifyReport, sample: int | None,
               workers: int | None, progress: bool) -> _Plan:
    from ..quantities import check_digits, get_provider
    from .make import TableRequest, check_extent, make_table

    provider = get_provider(desc.lattice, desc.quantity, desc.energy)
    lat = provider.lattice
    digits = provider.check_digits(check_digits(desc.digits))
    if desc.extent is None:
        raise InputError("the descriptor records no extent")
    extent = check_extent(provider, desc.extent)
    if list(lat.coordinate_names) != desc.primary_key:
        raise InputError(f"the key columns are not the {lat.name} coordinates "
                         f"({', '.join(lat.coordinate_names)})")
    verify = desc.verify
    if verify not in ("full", "fast") or (provider.complex_valued and verify != "full"):
        raise InputError(f"latgreen.verify is {show(verify)}, not a level this table can "
                         "have been built with")
    flag = desc.meta.get("with_exact")
    if isinstance(flag, bool):
        with_exact = flag
    else:  # a table without exact forms has an empty exact column from its first row on
        first = _first_row(d, desc)
        col = desc.columns.index("exact") if "exact" in desc.columns else None
        with_exact = bool(first and col is not None and first[col])
    energy = None if provider.energy is None else str(provider.energy)
    nk = len(lat.coordinate_names)
    # the region before any work: its size must be in proportion to the file
    size = lat.region_size(extent)

    def position(key: list[str]) -> Any:
        try:
            return tuple(int(x) for x in key) if all(
                len(x) < 19 for x in key) else None
        except ValueError:
            return None

    def rebuild(out: Path) -> dict[str, Any]:
        return make_table(TableRequest(lat.name, desc.quantity, extent, digits, out,
                                       verify=verify, with_exact=with_exact,
                                       progress=progress, workers=workers, energy=energy))

    plan = _Plan(region=lambda: lat.region(extent), position=position,
                 name=lambda pos: f"site {tuple(pos)}", rebuild=rebuild, size=size, nkey=nk)
    if sample is not None:
        def sampled(m: _Merge) -> int:
            return _run_sample(m, provider, extent, digits, verify, with_exact, sample,
                               workers, progress)
        plan.sampled = sampled
    return plan


def _run_sample(m: _Merge, provider: Any, extent: int, digits: int, verify: str,
                with_exact: bool, sample: int, workers: int | None, progress: bool) -> int:
    """Recompute the batches that hold ``sample`` rows spread evenly over the table, through
    the build's own work units; feed their rows to the merge in order."""
    from ..progress import Progress
    from .build import run_units

    sizes = provider.batch_sizes(extent)
    todo = spread(sizes, sample)
    units = [(b, b + 1) for b in range(len(sizes))]
    bar = Progress(sum(sizes[b] for b in todo), f"verify {provider.lattice.name} sample",
                   enabled=progress)
    pending: dict[int, Any] = {}
    order = iter(todo)
    want = [next(order, None)]

    def on_unit(i: int, ch: Any) -> None:
        pending[i] = ch
        while want[0] is not None and want[0] in pending:
            for line in pending.pop(want[0]).csv.splitlines():
                parts = line.split(",")
                m.expected(m.plan.position(parts[:m.nkey]), parts)
            want[0] = next(order, None)

    run_units(provider, extent, digits, verify, with_exact, units, todo, on_unit=on_unit,
              on_rows=bar.advance, workers=1 if workers is None else workers)
    bar.finish(f"{m.fed:,} rows recomputed")
    return m.fed


def spread(sizes: list[int], sample: int) -> list[int]:
    """Batches, evenly spaced over the table (the first and the last among them), whose
    rows add up to about ``sample``.

    >>> spread([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], 20)
    [0, 3, 6, 9]
    >>> spread([5] * 4, 1000)
    [0, 1, 2, 3]
    """
    count = len(sizes)
    if count <= 1:
        return list(range(count))
    per = sum(sizes) / count
    k = max(2, min(count, round(sample / per)))
    return sorted({round(j * (count - 1) / (k - 1)) for j in range(k)})


def _grid_plan(desc: Descriptor, progress: bool) -> _Plan:
    from ..energy import parse_energy_grid
    from ..lattices import get_lattice
    from ..quantities import check_digits
    from .make import make_dos_table

    lat = get_lattice(desc.lattice)
    digits = check_digits(desc.digits)
    if desc.energies is None:
        raise InputError("the descriptor records no energy grid (latgreen.energies)")
    grid = [str(e) for e in parse_energy_grid(desc.energies, lat.name)]
    if desc.primary_key != ["energy"]:
        raise InputError("the key column of an energy grid must be 'energy'")
    where = {e: i for i, e in enumerate(grid)}
    energies = desc.energies
    return _Plan(region=lambda: iter(range(len(grid))),
                 position=lambda key: where.get(key[0]),
                 name=lambda pos: f"E = {grid[pos]}",
                 rebuild=lambda out: make_dos_table(lat.name, energies, digits, out,
                                                    progress=progress),
                 size=len(grid))


_REGION_KEYS = re.compile(r"^one row per lattice: ([a-z]+(?:, [a-z]+)*)$")


def _keys_plan(desc: Descriptor) -> _Plan:
    from ..quantities import check_digits
    from .catalogue import make_return_probability_table
    from .spec import CUBIC

    quantities = {"return-probability": CUBIC}
    if desc.quantity not in quantities:
        raise InputError(f"no one-row-per-lattice table of {show(desc.quantity)}")
    digits = check_digits(desc.digits)
    m = _REGION_KEYS.match(desc.region or "")
    if m is None:
        raise InputError("latgreen.region does not list the table's lattices")
    names = m.group(1).split(", ")
    allowed = quantities[desc.quantity]
    if any(n not in allowed for n in names) or names != sorted(set(names)):
        raise InputError(f"latgreen.region lists lattices other than {', '.join(allowed)}")
    if desc.primary_key != ["lattice"]:
        raise InputError("the key column of this table must be 'lattice'")
    where = {n: i for i, n in enumerate(names)}
    return _Plan(region=lambda: iter(range(len(names))),
                 position=lambda key: where.get(key[0]),
                 name=lambda pos: f"lattice {names[pos]}",
                 rebuild=lambda out: make_return_probability_table(out, tuple(names), digits),
                 size=len(names))


# -- a whole catalogue ----------------------------------------------------------------------

def verify_catalogue(root: Path, sample: int | None = None, workers: int | None = None,
                     progress: bool = False,
                     on_table: Callable[[VerifyReport], None] | None = None
                     ) -> list[VerifyReport]:
    """Verify the current version of every table listed in ``root/catalogue.json`` (its
    hashes against the catalogue's, then as :func:`verify_table`), and check every other
    listed version's data files against the catalogue's hashes."""
    import sys

    out = []
    with TableDir(Path(root), (CATALOGUE_FILE,)) as r:
        if not r.exists(CATALOGUE_FILE):
            raise InputError(f"{root} has no {CATALOGUE_FILE}: not a catalogue root")
        entries = read_catalogue(r)
        for e in entries:
            if progress:
                print(f"latgreen verify: {e.table_id} {e.current} ...", file=sys.stderr,
                      flush=True)
            started = time.monotonic()
            cur = e.versions[e.current]
            try:
                vd = r.subdir(cur["path"], (DESCRIPTOR, CSV_FILE, JSON_FILE))
                rep = verify_table(vd.path, sample=sample, workers=workers,
                                   progress=progress, catalogue_hashes=cur["hashes"],
                                   directory=vd)
                _check_entry(rep, cur)
            except InputError as ex:
                rep = VerifyReport(Path(root) / str(cur["path"]))
                rep.problem(str(ex))
            rep.table_id, rep.version = e.table_id, e.current
            for v, ve in sorted(e.versions.items()):
                if v != e.current:
                    _check_old_version(rep, r, v, ve)
            rep.seconds = time.monotonic() - started
            out.append(rep)
            if on_table is not None:
                on_table(rep)
    return out


def _check_entry(rep: VerifyReport, entry: dict[str, Any]) -> None:
    """The catalogue's copy of the parameters must be the descriptor's."""
    desc = rep.descriptor
    if desc is None:  # pragma: no cover - verify_table raises instead
        return
    for k, have in (("lattice", desc.lattice), ("quantity", desc.quantity),
                    ("digits", desc.digits), ("extent", desc.extent)):
        if k in entry and entry[k] != have:
            rep.problem(f"{CATALOGUE_FILE}: {k} {show(entry[k])}, the descriptor says "
                        f"{show(have)}")


def _check_old_version(rep: VerifyReport, root: TableDir, v: str, ve: dict[str, Any]) -> None:
    try:
        with root.subdir(ve["path"], (CSV_FILE, JSON_FILE)) as vd:
            for name, sha in ve["hashes"].items():
                dg = digest(vd, name)
                if dg.sha256 != sha:
                    rep.problem(f"{v}: {name}: sha256 differs from {CATALOGUE_FILE} (the "
                                "published version was changed)")
    except InputError as e:
        rep.problem(f"{v}: {e}")


def report_json(rep: VerifyReport) -> dict[str, Any]:
    d: dict[str, Any] = {"path": str(rep.path), "ok": rep.ok, "problems": rep.problems,
                         "more_problems": rep.more_problems, "rows": rep.total_rows,
                         "rows_recomputed": rep.checked_rows, "notes": rep.notes,
                         "seconds": round(rep.seconds, 2)}
    if rep.table_id is not None:
        d["table"] = rep.table_id
    if rep.version is not None:
        d["version"] = rep.version
    return d
