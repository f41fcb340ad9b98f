"""Read a published table back, safely: shared by ``latgreen verify`` and
:func:`latgreen.read_table`.

Only the table's own plain files are ever opened: ``datapackage.json``, ``values.csv`` and
``values.json`` directly in the table's directory (``catalogue.json`` in a catalogue root),
each by that fixed name relative to the directory's descriptor, with ``O_NOFOLLOW`` and
``O_NONBLOCK``, and only if it is a regular file (a symbolic link, FIFO, device or
directory in its place is refused before a byte is read).  The descriptor's resource paths
are checked, never followed: a path other than those two names (``../x``, an absolute path,
a URL) makes the descriptor unusable.  Nothing here touches the network, and no message
quotes the content of a file (only names, sizes, hashes and the table's own fields).

Sizes are bounded before anything is parsed (a descriptor of at most 1 MiB, a CSV line of
at most 4 MiB) and every field of the descriptor is type-checked, so truncated, malformed
or hostile files give one clear message, never a traceback or a hang.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import stat
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import IO, Any

import mpmath

from ..errors import InputError

DESCRIPTOR = "datapackage.json"
CSV_FILE, JSON_FILE = "values.csv", "values.json"
DATA_FILES = {"values": CSV_FILE, "values-json": JSON_FILE}
CATALOGUE_FILE = "catalogue.json"
MAX_DESCRIPTOR_BYTES = 1 << 20
MAX_CATALOGUE_BYTES = 16 << 20
MAX_LINE_BYTES = 4 << 20
_HASH = re.compile(r"^sha256:[0-9a-f]{64}$")
_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,199}$")
_INT = re.compile(r"^-?[0-9]{1,18}$")
_FIELD_TYPES = ("integer", "string")


class TableFileError(InputError):
    """A file of a table that cannot be read as one (missing, not a regular file, too
    large, malformed)."""


def show(text: object, limit: int = 60) -> str:
    """A field of the table, quoted and shortened for a message.

    >>> show("0." + "3" * 100)
    "'0.3333333333333333333333333333333333333333333333333333333...'"
    """
    s = str(text)
    return repr(s if len(s) <= limit else s[: limit - 3] + "...")


class TableDir:
    """An open directory from which only the names in ``allowed`` can be read."""

    def __init__(self, path: Path, allowed: tuple[str, ...], fd: int | None = None) -> None:
        self.path = Path(path)
        self.allowed = allowed
        if fd is None:
            try:
                fd = os.open(self.path, os.O_RDONLY | os.O_DIRECTORY | os.O_CLOEXEC)
            except OSError as e:
                raise InputError(f"{self.path}: cannot open the directory "
                                 f"({e.strerror})") from None
        self.fd = fd

    def close(self) -> None:
        if self.fd >= 0:
            os.close(self.fd)
            self.fd = -1

    def __enter__(self) -> TableDir:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def exists(self, name: str) -> bool:
        try:
            os.stat(name, dir_fd=self.fd, follow_symlinks=False)
        except OSError:
            return False
        return True

    def subdir(self, rel: str, allowed: tuple[str, ...]) -> TableDir:
        """A directory below this one, by a relative path of plain names (each component
        opened without following symbolic links)."""
        parts = rel.split("/")
        if not parts or any(not _NAME.match(p) or p in (".", "..") for p in parts):
            raise InputError(f"{self.path}: {show(rel)} is not a plain relative path")
        fd = self.fd
        try:
            for p in parts:
                nxt = os.open(p, os.O_RDONLY | os.O_DIRECTORY | os.O_NOFOLLOW | os.O_CLOEXEC,
                              dir_fd=fd)
                if fd != self.fd:
                    os.close(fd)
                fd = nxt
        except OSError as e:
            if fd != self.fd:
                os.close(fd)
            why = "a symbolic link" if os.path.islink(self.path / rel) else e.strerror
            raise InputError(f"{self.path / rel}: not a table directory ({why})") from None
        return TableDir(self.path / rel, allowed, fd)

    def open(self, name: str) -> IO[bytes]:
        """The regular file ``name`` of this directory, opened for reading."""
        if name not in self.allowed:  # pragma: no cover - callers pass constants
            raise TableFileError(f"{name}: not a file of a table")
        where = self.path / name
        try:
            st = os.stat(name, dir_fd=self.fd, follow_symlinks=False)
        except FileNotFoundError:
            raise TableFileError(f"{name}: missing") from None
        except OSError as e:
            raise TableFileError(f"{where}: {e.strerror}") from None
        if not stat.S_ISREG(st.st_mode):
            raise TableFileError(f"{name}: {_kind(st.st_mode)}, not a regular file (refused)")
        try:
            fd = os.open(name, os.O_RDONLY | os.O_NOFOLLOW | os.O_NONBLOCK | os.O_CLOEXEC,
                         dir_fd=self.fd)
        except OSError as e:
            raise TableFileError(f"{where}: {e.strerror}") from None
        if not stat.S_ISREG(os.fstat(fd).st_mode):  # replaced between stat and open
            os.close(fd)
            raise TableFileError(f"{name}: not a regular file (refused)")
        return os.fdopen(fd, "rb")

    def size(self, f: IO[bytes]) -> int:
        return os.fstat(f.fileno()).st_size


def _kind(mode: int) -> str:
    for test, what in ((stat.S_ISLNK, "a symbolic link"), (stat.S_ISFIFO, "a FIFO"),
                       (stat.S_ISDIR, "a directory"), (stat.S_ISCHR, "a device"),
                       (stat.S_ISBLK, "a device"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return what
    return "not a plain file"  # pragma: no cover


def load_json(d: TableDir, name: str, limit: int) -> Any:
    with d.open(name) as f:
        if d.size(f) > limit:
            raise TableFileError(f"{name}: {d.size(f):,} bytes, more than a {name} can be "
                                 f"({limit:,})")
        data = f.read(limit + 1)
    if len(data) > limit:  # pragma: no cover - grew while read
        raise TableFileError(f"{name}: larger than {limit:,} bytes")
    try:
        return json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, ValueError, RecursionError):
        raise TableFileError(f"{name}: not valid JSON (truncated or malformed)") from None


# -- the descriptor -------------------------------------------------------------------------

@dataclass
class Descriptor:
    """The parts of a ``datapackage.json`` that reading and verifying rely on, checked."""

    raw: dict[str, Any]
    name: str
    meta: dict[str, Any]  # the "latgreen" block
    files: dict[str, tuple[int, str]]  # file name -> (bytes, "sha256:...")
    fields: list[tuple[str, str]]  # (name, type) of the CSV columns
    primary_key: list[str]
    lattice: str
    quantity: str
    digits: int
    extent: int | None
    energy: str | None
    energies: str | None  # "A:B:COUNT" of a dos table
    grid: list[str] | None
    verify: str | None
    region: str | None

    @property
    def columns(self) -> list[str]:
        return [n for n, _ in self.fields]

    @property
    def kind(self) -> str:
        """``sites``, ``grid`` (one row per energy) or ``keys`` (one row per name)."""
        if self.quantity == "dos" or self.primary_key == ["energy"]:
            return "grid"
        if self.quantity == "return-probability" or self.primary_key == ["lattice"]:
            return "keys"
        return "sites"


def _bad(why: str) -> InputError:
    return InputError(f"{DESCRIPTOR} is not a latgreen table descriptor: {why}")


def _get(d: dict[str, Any], key: str, types: type | tuple[type, ...], where: str,
         optional: bool = False) -> Any:
    if key not in d or (optional and d[key] is None):
        if optional:
            return None
        raise _bad(f"{where} has no {key!r}")
    v = d[key]
    if isinstance(v, bool) and bool not in (types if isinstance(types, tuple) else (types,)):
        raise _bad(f"{where}.{key} has the wrong type")
    if not isinstance(v, types):
        raise _bad(f"{where}.{key} has the wrong type")
    return v


def _small_int(v: Any, what: str) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or not -10**18 < v < 10**18:
        raise _bad(f"{what} is not an integer of reasonable size")
    return v


def parse_descriptor(desc: Any) -> Descriptor:
    """Check the structure of a loaded descriptor (raises :class:`InputError`)."""
    if not isinstance(desc, dict):
        raise _bad("not a JSON object")
    name = _get(desc, "name", str, "the descriptor")
    meta = _get(desc, "latgreen", dict, "the descriptor")
    resources = _get(desc, "resources", list, "the descriptor")
    files: dict[str, tuple[int, str]] = {}
    fields: list[tuple[str, str]] = []
    pkey: list[str] = []
    for r in resources:
        if not isinstance(r, dict):
            raise _bad("a resource is not an object")
        rname = _get(r, "name", str, "a resource")
        path = _get(r, "path", str, f"resource {show(rname)}")
        want = DATA_FILES.get(rname)
        if want is None or path != want:
            raise _bad(f"resource {show(rname)} has path {show(path)}: only values.csv and "
                       "values.json directly in the table's directory are read (no other "
                       "names, no directories, absolute paths or URLs)")
        if path in files:
            raise _bad(f"{path} is listed twice")
        nbytes = _small_int(r.get("bytes"), f"{path}: bytes")
        digest = r.get("hash")
        if not isinstance(digest, str) or not _HASH.match(digest):
            raise _bad(f"{path}: hash is not 'sha256:' and 64 hex digits")
        files[path] = (nbytes, digest)
        if path == CSV_FILE:
            schema = _get(r, "schema", dict, "resource values")
            for f in _get(schema, "fields", list, "the schema"):
                if not isinstance(f, dict):
                    raise _bad("a schema field is not an object")
                fname = _get(f, "name", str, "a schema field")
                ftype = _get(f, "type", str, f"field {show(fname)}")
                if ftype not in _FIELD_TYPES or not _NAME.match(fname):
                    raise _bad(f"field {show(fname)} of type {show(ftype)}")
                fields.append((fname, ftype))
            pk = _get(schema, "primaryKey", list, "the schema")
            if not pk or not all(isinstance(k, str) for k in pk):
                raise _bad("the primaryKey is not a list of column names")
            pkey = pk
    if set(files) != {CSV_FILE, JSON_FILE}:
        raise _bad("it must list values.csv and values.json")
    names = [n for n, _ in fields]
    if len(set(names)) != len(names) or names[: len(pkey)] != pkey:
        raise _bad("the key columns must come first, each column once")
    lattice = _get(meta, "lattice", str, "latgreen")
    quantity = _get(meta, "quantity", str, "latgreen")
    digits = _small_int(meta.get("digits"), "latgreen.digits")
    extent = meta.get("extent")
    if extent is not None:
        extent = _small_int(extent, "latgreen.extent")
    grid = meta.get("energy_grid")
    if grid is not None and (not isinstance(grid, list)
                             or not all(isinstance(e, str) for e in grid)):
        raise _bad("latgreen.energy_grid is not a list of strings")
    return Descriptor(
        raw=desc, name=name, meta=meta, files=files, fields=fields, primary_key=pkey,
        lattice=lattice, quantity=quantity, digits=digits, extent=extent,
        energy=_get(meta, "energy", str, "latgreen", optional=True),
        energies=_get(meta, "energies", str, "latgreen", optional=True), grid=grid,
        verify=_get(meta, "verify", str, "latgreen", optional=True),
        region=_get(meta, "region", str, "latgreen", optional=True))


def read_descriptor(d: TableDir) -> Descriptor:
    if not d.exists(DESCRIPTOR):
        raise InputError(f"{d.path} has no {DESCRIPTOR}: not a latgreen table")
    return parse_descriptor(load_json(d, DESCRIPTOR, MAX_DESCRIPTOR_BYTES))


# -- data files -------------------------------------------------------------------------

@dataclass
class Digest:
    name: str
    size: int
    sha256: str | None  # None when the file is far larger than recorded (not read)
    lines: int = 0


def digest(d: TableDir, name: str, expected_size: int | None = None,
           copy_to: Path | None = None) -> Digest:
    """sha256, size and newline count of a data file (with ``copy_to``, also written
    there).  A file much larger than ``expected_size`` is not read at all (it cannot
    match, and a huge file would cost time for nothing)."""
    with d.open(name) as f:
        size = d.size(f)
        if expected_size is not None and size > 2 * expected_size + (1 << 20):
            return Digest(name, size, None)  # far from the recorded size: not the file
        h = hashlib.sha256()
        lines = 0
        out = open(copy_to, "wb") if copy_to is not None else None  # noqa: SIM115
        try:
            for block in iter(lambda: f.read(1 << 20), b""):
                h.update(block)
                lines += block.count(b"\n")
                if out is not None:
                    out.write(block)
        finally:
            if out is not None:
                out.close()
        return Digest(name, size, "sha256:" + h.hexdigest(), lines)


def hash_problems(dg: Digest, size: int, sha: str, against: str = "the descriptor"
                  ) -> list[str]:
    if dg.size != size:
        return [f"{dg.name}: {dg.size:,} bytes, {against} says {size:,} (truncated or "
                "extended)"]
    if dg.sha256 != sha:
        return [f"{dg.name}: sha256 differs from {against} (the file was changed after "
                "publication)"]
    return []


@dataclass
class Rows:
    """A strict reader of values.csv (or values.json) rows: each item is (line number,
    fields as text); a malformed line is recorded in ``problems`` and skipped; reading stops
    at a line longer than MAX_LINE_BYTES or undecodable bytes."""

    problems: list[str] = field(default_factory=list)
    count: int = 0


def csv_rows(f: IO[bytes], columns: list[str], rows: Rows, name: str = CSV_FILE
             ) -> Iterator[tuple[int, list[str]]]:
    """The data lines of a latgreen CSV (header ``columns``; fields never quoted)."""
    header = f.readline(MAX_LINE_BYTES + 1)
    if header.decode("utf-8", "replace").rstrip("\n").split(",") != columns:
        rows.problems.append(f"{name} line 1: the header is not the descriptor's columns "
                             f"({','.join(columns)})")
        return
    n = len(columns)
    line = 1
    while True:
        raw = f.readline(MAX_LINE_BYTES + 1)
        if not raw:
            return
        line += 1
        if not raw.endswith(b"\n"):
            rows.problems.append(f"{name} line {line}: " + (
                "longer than any row of a table; reading stopped" if len(raw) > MAX_LINE_BYTES
                else "no line end (the file is truncated)"))
            return
        try:
            text = raw[:-1].decode("ascii")
        except UnicodeDecodeError:
            rows.problems.append(f"{name} line {line}: bytes that are not ASCII")
            continue
        if '"' in text or "\r" in text:
            rows.problems.append(f"{name} line {line}: quoted or CR-terminated fields (latgreen "
                                 "writes neither)")
            continue
        parts = text.split(",")
        if len(parts) != n:
            rows.problems.append(f"{name} line {line}: {len(parts)} fields, expected {n}")
            continue
        rows.count += 1
        yield line, parts


_JSON_TAIL = ', "rows": ['


def json_rows(f: IO[bytes], rows: Rows) -> tuple[dict[str, Any] | None,
                                                 Iterator[tuple[int, list[Any]]]]:
    """The head object and the rows of a latgreen values.json (laid out one row a line)."""
    first = f.readline(MAX_LINE_BYTES + 1).decode("utf-8", "replace").rstrip("\n")
    head: Any = None
    if first.endswith(_JSON_TAIL):
        try:
            head = json.loads(first[: -len(_JSON_TAIL)] + "}")
        except (ValueError, RecursionError):
            head = None
    if not isinstance(head, dict):
        rows.problems.append(f"{JSON_FILE} line 1: not the head of a latgreen values.json")
        return None, iter(())

    def it() -> Iterator[tuple[int, list[Any]]]:
        line, ended = 1, False
        while True:
            raw = f.readline(MAX_LINE_BYTES + 1)
            if not raw:
                if not ended:
                    rows.problems.append(f"{JSON_FILE}: ends before ']}}' (truncated)")
                return
            line += 1
            if ended:
                rows.problems.append(f"{JSON_FILE} line {line}: data after the end")
                return
            if not raw.endswith(b"\n"):
                rows.problems.append(f"{JSON_FILE} line {line}: no line end (truncated or "
                                     "too long)")
                return
            text = raw.decode("utf-8", "replace").rstrip("\n")
            if text == "]}":
                ended = True
                continue
            try:
                row = json.loads(text[:-1] if text.endswith(",") else text)
            except (ValueError, RecursionError):
                row = None
            if not isinstance(row, list):
                rows.problems.append(f"{JSON_FILE} line {line}: not a row array")
                continue
            rows.count += 1
            yield line, row

    return head, it()


def typed(parts: list[str], types: list[str]) -> list[Any] | None:
    """A CSV row with its integer columns as ints (as values.json holds them); None if an
    integer column is not an integer."""
    out: list[Any] = []
    for p, t in zip(parts, types, strict=True):
        if t == "integer":
            if not _INT.match(p):
                return None
            out.append(int(p))
        else:
            out.append(p)
    return out


# -- the catalogue ------------------------------------------------------------------------

@dataclass
class CatalogueEntry:
    table_id: str
    current: str
    versions: dict[str, dict[str, Any]]  # vN -> {"path", "hashes", ...}


def read_catalogue(root: TableDir) -> list[CatalogueEntry]:
    """The tables listed in ``root/catalogue.json``, checked for structure."""
    data = load_json(root, CATALOGUE_FILE, MAX_CATALOGUE_BYTES)
    bad = f"{CATALOGUE_FILE} is not a latgreen catalogue index"
    if not isinstance(data, dict) or not isinstance(data.get("tables"), dict):
        raise InputError(f"{bad}: no 'tables' object")
    out = []
    for tid, entry in sorted(data["tables"].items()):
        if not _NAME.match(tid) or not isinstance(entry, dict):
            raise InputError(f"{bad}: table id {show(tid)}")
        cur, versions = entry.get("current"), entry.get("versions")
        if not isinstance(versions, dict) or not isinstance(cur, str) or cur not in versions:
            raise InputError(f"{bad}: {tid} has no current version among its versions")
        for v, ve in versions.items():
            if not isinstance(ve, dict) or not isinstance(ve.get("path"), str) or \
                    not isinstance(ve.get("hashes"), dict) or not _NAME.match(v):
                raise InputError(f"{bad}: {tid} {show(v)} lacks a path or hashes")
            for k, h in ve["hashes"].items():
                if k not in (CSV_FILE, JSON_FILE) or not isinstance(h, str) or \
                        not _HASH.match(h):
                    raise InputError(f"{bad}: {tid} {v}: hash of {show(k)}")
        out.append(CatalogueEntry(tid, cur, versions))
    return out


# -- the public reader --------------------------------------------------------------------

class NotInTable(InputError, KeyError):
    """A site or energy the table has no row for (outside its region or grid)."""

    def __str__(self) -> str:
        return str(self.args[0]) if self.args else ""


class Row:
    """One row of a table: ``row["column"]`` is the field as written (text, or int for the
    integer columns); :attr:`value` is the value as an mpmath number."""

    __slots__ = ("_fields", "_table")

    def __init__(self, table: Table, fields: tuple[Any, ...]) -> None:
        self._table = table
        self._fields = fields

    def __getitem__(self, column: str) -> Any:
        return self._fields[self._table._col[column]]

    def as_dict(self) -> dict[str, Any]:
        return dict(zip(self._table.columns, self._fields, strict=True))

    @property
    def key(self) -> tuple[Any, ...]:
        """The key columns: the canonical site, or the energy / lattice name (1-tuple)."""
        return self._fields[: len(self._table.key_columns)]

    @property
    def site(self) -> tuple[int, ...] | None:
        return self.key if self._table.kind == "sites" else None

    @property
    def exact(self) -> str | None:
        """The exact form (sympy syntax), or None where the table has none for this row."""
        col = self._table._col.get("exact")
        return (self._fields[col] or None) if col is not None else None

    @property
    def value(self) -> mpmath.mpf | mpmath.mpc:
        """The printed value as an mpmath number: an ``mpf``, or an ``mpc`` for a green table
        (value_re + i value_im), exact to far below the last printed digit (parsed with
        10 guard digits; the global precision is left as it was)."""
        t = self._table
        with mpmath.workdps(t.digits + 10):
            if t.complex_valued:
                return mpmath.mpc(mpmath.mpf(self["value_re"]), mpmath.mpf(self["value_im"]))
            return mpmath.mpf(self["value"])

    def __repr__(self) -> str:
        return f"Row({self.as_dict()!r})"


class Table:
    """A published table read back (see :func:`read_table`)."""

    def __init__(self, path: Path, desc: Descriptor, rows: list[tuple[Any, ...]]) -> None:
        self.path = path
        self.descriptor = desc.raw
        self.table_id = desc.name
        self.lattice = desc.lattice
        self.quantity = desc.quantity
        self.digits = desc.digits
        self.extent = desc.extent
        self.energy = desc.energy
        self.energies = desc.energies
        self.energy_grid = desc.grid
        self.kind = desc.kind
        self.columns = tuple(desc.columns)
        self.key_columns = tuple(desc.primary_key)
        self.complex_valued = "value_re" in self.columns
        self._col = {c: i for i, c in enumerate(self.columns)}
        self._rows = rows
        nk = len(self.key_columns)
        self._index: dict[Any, int] = {}
        for i, r in enumerate(rows):
            self._index[self._norm_key(r[:nk])] = i

    def _norm_key(self, key: tuple[Any, ...]) -> Any:
        if self.kind == "grid":
            from ..energy import parse_energy

            return parse_energy(key[0], self.lattice, "dos")
        return key if self.kind == "sites" else key[0]

    def __len__(self) -> int:
        return len(self._rows)

    def __iter__(self) -> Iterator[Row]:
        return (Row(self, r) for r in self._rows)

    @property
    def rows(self) -> list[Row]:
        return list(self)

    def lookup(self, key: Any) -> Row:
        """The row of a site (any site: it is mapped to its canonical representative under
        the lattice's point group), of an energy (dos tables: a string such as ``"2.5"`` or
        ``"5/2"``), or of a lattice name (one-row-per-lattice tables)."""
        if self.kind == "sites":
            from ..lattices import get_lattice

            lat = get_lattice(self.lattice)
            c = lat.canonical(lat.site(key))
            i = self._index.get(c)
            if i is None:
                where = (f"up to extent {self.extent}" if self.extent is not None else "")
                raise NotInTable(f"site {tuple(key)} (canonical {c}) is outside the region of "
                                 f"{self.table_id} (canonical sites {where})")
            return Row(self, self._rows[i])
        if self.kind == "grid":
            from ..energy import parse_energy

            i = self._index.get(parse_energy(key, self.lattice, "dos"))
            if i is None:
                raise NotInTable(f"E = {key} is not on the energy grid of {self.table_id} "
                                 f"({self.energies})")
            return Row(self, self._rows[i])
        i = self._index.get(key)
        if i is None:
            raise NotInTable(f"{show(key)} has no row in {self.table_id} (rows: "
                             f"{', '.join(str(r[0]) for r in self._rows)})")
        return Row(self, self._rows[i])

    __getitem__ = lookup

    def value(self, key: Any) -> mpmath.mpf | mpmath.mpc:
        """``lookup(key).value``."""
        return self.lookup(key).value

    def to_pandas(self) -> Any:
        """The rows as a pandas DataFrame, one column per table column (integer columns as
        integers; values, exact forms and bounds stay strings, unrounded).  Needs pandas
        (``pip install 'latgreen[pandas]'``)."""
        try:
            import pandas as pd
        except ImportError:
            raise InputError("to_pandas needs pandas, which is not installed (pip install "
                             "'latgreen[pandas]')") from None
        return pd.DataFrame.from_records(self._rows, columns=list(self.columns))

    def __repr__(self) -> str:
        return f"<Table {self.table_id} from {self.path}: {len(self)} rows>"


def open_version(path: Path, table_id: str | None = None, version: str | None = None
                 ) -> tuple[TableDir, dict[str, str] | None]:
    """The directory of a table: ``path`` itself, or with ``table_id`` the version
    ``version`` (default: the current one) listed in the catalogue at ``path``, with the
    hashes the catalogue records for it."""
    path = Path(path)
    if table_id is None:
        if path.name == DESCRIPTOR and not path.is_dir():
            path = path.parent
        return TableDir(path, (DESCRIPTOR, CSV_FILE, JSON_FILE)), None
    with TableDir(path, (CATALOGUE_FILE,)) as root:
        if not root.exists(CATALOGUE_FILE):
            raise InputError(f"{path} has no {CATALOGUE_FILE}: not a catalogue root")
        entries = {e.table_id: e for e in read_catalogue(root)}
        e = entries.get(table_id)
        if e is None:
            raise InputError(f"{path}: no table {show(table_id)} in the catalogue (tables: "
                             f"{', '.join(entries)})")
        v = e.current if version is None else version
        if v not in e.versions:
            raise InputError(f"{path}: {table_id} has no version {show(v)} (versions: "
                             f"{', '.join(e.versions)})")
        ve = e.versions[v]
        return root.subdir(ve["path"], (DESCRIPTOR, CSV_FILE, JSON_FILE)), ve["hashes"]


def read_table(path: str | os.PathLike[str], table_id: str | None = None,
               version: str | None = None) -> Table:
    """Read a published table: ``read_table("tables/square-resistance/v1")`` (a version
    directory), or ``read_table("tables", "square-resistance")`` (a catalogue root and a
    table id: its current version, or ``version="v1"``; the catalogue's hashes are then
    checked too).

    The data files must have the sha256 and size their descriptor records (a table edited
    after publication is refused with :class:`InputError`); rows are not recomputed (that
    is ``latgreen verify``).

    >>> t = read_table("tables/square-resistance/v1")
    >>> t.lattice, t.quantity, t.digits, t.extent, len(t)
    ('square', 'resistance', 50, 100, 5151)
    >>> t[(3, -1)]["exact"], t[(1, 3)].site     # any site: its canonical row (3, 1)
    ('46/(3*pi) - 4', (3, 1))
    >>> import mpmath
    >>> mpmath.nstr(t.value((1, 1)), 32)        # 2/pi, as an mpmath number
    '0.63661977236758134307553505349006'
    """
    d, cat_hashes = open_version(Path(path), table_id, version)
    with d:
        desc = read_descriptor(d)
        for name, (size, sha) in desc.files.items():
            dg = digest(d, name, size)
            bad = hash_problems(dg, size, sha)
            if cat_hashes is not None and name in cat_hashes and cat_hashes[name] != sha:
                bad.append(f"{name}: the descriptor's sha256 differs from the catalogue's")
            if bad:
                raise InputError(f"{d.path}: {bad[0]}; not read (latgreen verify names what "
                                 "changed)")
        rows_log = Rows()
        types = [t for _, t in desc.fields]
        out: list[tuple[Any, ...]] = []
        with d.open(CSV_FILE) as f:
            for line, parts in csv_rows(f, desc.columns, rows_log):
                row = typed(parts, types)
                if row is None:
                    rows_log.problems.append(f"{CSV_FILE} line {line}: an integer column is "
                                             "not an integer")
                    break
                out.append(tuple(row))
        if rows_log.problems:
            raise InputError(f"{d.path}: {rows_log.problems[0]}")
        try:
            return Table(d.path, desc, out)
        except InputError as e:
            raise InputError(f"{d.path}: a key of the table is malformed ({e})") from None
