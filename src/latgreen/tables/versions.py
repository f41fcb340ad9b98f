"""Versioned tables and the catalogue index.

Layout: ``ROOT/<table-id>/v<N>/`` holds one published version of a table (the three files of
:mod:`latgreen.tables.export`), N = 1, 2, ... in order of publication.  A published version
is immutable: nothing here ever writes into an existing version directory.  A new version is
built in the work area ``ROOT/.latgreen-work/<pid>/`` (a name no version can have), renamed
to a fresh ``v<N>`` and only then listed in ``ROOT/catalogue.json``, which is replaced
atomically (written under a temporary name, then renamed): a run killed at any moment leaves
the published catalogue exactly as it was.  A version directory the catalogue does not list
is not published (a run was killed between the rename and the index update); it is never
used or made current, and the next publication takes a higher number.

Versions only move forward: a new current version never has fewer digits, a smaller extent
or a weaker check (``fast`` < ``full``) than the one it replaces (:func:`behind`).

Every change to a catalogue happens under its lock (:func:`catalogue_lock`, ``ROOT/.lock``);
whoever holds it removes the work directories of dead runs (:func:`clean_stale`).

catalogue.json::

    {"name": "latgreen-catalogue",
     "tables": {"<table-id>": {"current": "vN",
                               "versions": {"vN": RECORD, ...}}}}

RECORD: ``path`` (``<table-id>/vN``), ``lattice``, ``quantity``, ``digits``, ``extent``
(null for tables not over sites), ``energy`` (green) / ``energies`` (dos) / ``lattices``
(return-probability), ``verify`` (the check level, full or fast), ``rows``,
``min_agreement_digits``, ``created``, ``hashes`` (data file -> sha256), ``made_by`` (build,
regen, publish), ``regenerated_from`` (regen), and, to tell when a rebuild is needed,
``spec`` (the canonical spec entry, :meth:`latgreen.tables.spec.TableSpec.canonical`),
``software`` (the latgreen version) and ``inputs_hash``
(:func:`latgreen.tables.spec.inputs_hash`).
"""

from __future__ import annotations

import contextlib
import fcntl
import json
import os
import re
import shutil
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

from ..errors import InputError, LatgreenError

CATALOGUE_FILE = "catalogue.json"
LOCK_FILE = ".lock"
WORK_DIR = ".latgreen-work"
_VERSION = re.compile(r"^v([1-9][0-9]*)$")
# staging left by earlier releases: <table>/.staging-PID, <table>/..staging-PID.partial, ...
_LEGACY = re.compile(r"^\.\.?staging-([0-9]+)(\..*)?$")
_SAFE_ID = re.compile(r"^[a-z0-9][a-z0-9._-]*$")


class CatalogueBusy(LatgreenError):
    """Another run holds the catalogue's lock (the command line exits 3)."""


def version_number(name: str) -> int | None:
    m = _VERSION.match(name)
    return int(m.group(1)) if m else None


def check_table_id(tid: object) -> str:
    if not isinstance(tid, str) or not _SAFE_ID.match(tid) or ".." in tid:
        raise InputError(f"{tid!r} is not a table id (lower-case letters, digits, '.', '_', "
                         "'-'; no path)")
    return tid


def load_catalogue(root: Path) -> dict[str, Any]:
    path = root / CATALOGUE_FILE
    if not path.exists():
        return {"name": "latgreen-catalogue", "tables": {}}
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        if not isinstance(data, dict) or not isinstance(data.get("tables"), dict):
            raise ValueError
        return data
    except (OSError, ValueError):
        raise InputError(f"{path} is not a readable catalogue index") from None


def save_catalogue(root: Path, data: dict[str, Any]) -> None:
    path = root / CATALOGUE_FILE
    tmp = root / f".{CATALOGUE_FILE}.tmp-{os.getpid()}"
    with open(tmp, "w", encoding="utf-8", newline="\n") as f:
        json.dump(data, f, indent=2, sort_keys=True)
        f.write("\n")
        f.flush()
        os.fsync(f.fileno())
    os.replace(tmp, path)


def check_root(root: Path, create: bool = False) -> Path:
    """A catalogue directory: refuse a file in the way; with ``create`` make it."""
    root = Path(root)
    if root.exists() and not root.is_dir():
        raise InputError(f"{root} is not a directory (a catalogue is a directory with "
                         f"{CATALOGUE_FILE})")
    if (root / "datapackage.json").exists():
        raise InputError(f"{root} is a table, not a catalogue (publish it into one: latgreen "
                         f"publish {root} --into ROOT)")
    if not root.exists():
        if not create:
            raise InputError(f"no catalogue at {root}: the directory does not exist")
        try:
            root.mkdir(parents=True)
        except OSError as e:
            raise InputError(f"cannot create {root}: {e.strerror}") from None
    return root


@contextlib.contextmanager
def catalogue_lock(root: Path) -> Iterator[None]:
    """Hold ``ROOT/.lock`` (fcntl, released when the process dies) for the block; raise
    :class:`CatalogueBusy` at once if another run holds it.  The holder removes stale work
    directories (:func:`clean_stale`) on entry."""
    path = root / LOCK_FILE
    try:
        f = open(path, "a+")  # noqa: SIM115 - held for the duration of the block
    except OSError as e:
        raise InputError(f"cannot open the lock {path}: {e.strerror}") from None
    try:
        try:
            fcntl.flock(f, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            raise CatalogueBusy(f"another run is changing the catalogue {root} (lock "
                                f"{path})") from None
        clean_stale(root)
        yield
    finally:
        f.close()


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def clean_stale(root: Path) -> list[Path]:
    """Remove the work directories of runs that died (killed, power cut): every
    ``ROOT/.latgreen-work/<pid>`` and legacy ``<table>/.staging-<pid>*`` whose process is
    gone.  Called under the lock, so no live publisher of this catalogue owns them."""
    gone: list[Path] = []
    work = root / WORK_DIR
    if work.is_dir():
        for d in work.iterdir():
            if not d.name.isdigit() or not _alive(int(d.name)):
                gone.append(d)
    for t in root.iterdir():
        if t.is_dir() and not t.name.startswith("."):
            for d in t.iterdir():
                m = _LEGACY.match(d.name)
                if m and not _alive(int(m.group(1))):
                    gone.append(d)
    for d in gone:
        if d.is_dir() and not d.is_symlink():
            shutil.rmtree(d, ignore_errors=True)
        else:
            d.unlink(missing_ok=True)
    return gone


def next_version(table_root: Path) -> int:
    nums = [version_number(p.name) for p in table_root.iterdir()] if table_root.is_dir() else []
    return max([n for n in nums if n is not None], default=0) + 1


def read_descriptor(version_dir: Path) -> dict[str, Any]:
    """A table's datapackage.json, checked for every key the catalogue relies on (one line
    naming the file and the key otherwise)."""
    from .read import DESCRIPTOR, MAX_DESCRIPTOR_BYTES, TableDir, TableFileError, load_json

    path = Path(version_dir) / DESCRIPTOR
    # through the table reader of verify: a regular file of bounded size, no link followed
    # (a FIFO here would block for ever, a link would read outside the table)
    with TableDir(Path(version_dir), (DESCRIPTOR,)) as d:
        if not d.exists(DESCRIPTOR):
            raise InputError(f"{version_dir} has no datapackage.json: not a latgreen table")
        try:
            desc = load_json(d, DESCRIPTOR, MAX_DESCRIPTOR_BYTES)
        except TableFileError as e:
            raise InputError(f"{version_dir}: {e}") from None

    def bad(what: str) -> InputError:
        return InputError(f"{path}: {what}: not a latgreen table descriptor")

    if not isinstance(desc, dict):
        raise bad("not an object")
    lg = desc.get("latgreen")
    if not isinstance(desc.get("name"), str) or not isinstance(lg, dict):
        raise bad("'name' or the 'latgreen' block missing")
    for key, kind in (("lattice", str), ("quantity", str), ("digits", int)):
        if not isinstance(lg.get(key), kind) or isinstance(lg.get(key), bool):
            raise bad(f"latgreen.{key} missing or of the wrong type")
    res = desc.get("resources")
    if not isinstance(res, list) or not res or not all(
            isinstance(r, dict) and isinstance(r.get("path"), str)
            and isinstance(r.get("hash"), str) for r in res):
        raise bad("'resources' (each with path and hash) missing or malformed")
    for r in res:
        p = r["path"]
        if "/" in p or "\\" in p or p in ("", ".", "..") or p == "datapackage.json":
            raise bad(f"resource path {p!r} is not a plain file name")
    try:
        schema = res[0]["schema"]
        names = [f["name"] for f in schema["fields"]]
        keys = schema["primaryKey"]
        if not all(isinstance(x, str) for x in names + keys) or not set(keys) <= set(names):
            raise TypeError
    except (KeyError, TypeError, IndexError):
        raise bad("resources[0].schema (fields, primaryKey) missing or malformed") from None
    q = lg["quantity"]
    if q in ("resistance", "green") and (not isinstance(lg.get("extent"), int)
                                         or isinstance(lg["extent"], bool)):
        raise bad("latgreen.extent missing or not an integer")
    if q == "green" and not isinstance(lg.get("energy"), str):
        raise bad("latgreen.energy missing")
    if q == "dos" and not isinstance(lg.get("energies"), str):
        raise bad("latgreen.energies missing")
    cc = lg.get("cross_check")
    if not isinstance(cc, dict) or not all(
            isinstance(cc.get(k), int) for k in ("rows", "rows_checked_at_full_digits",
                                                 "min_agreement_digits")):
        raise bad("latgreen.cross_check missing or malformed")
    return desc


def expected_id(desc: dict[str, Any]) -> str:
    """The table id a descriptor's parameters give (never its ``name`` alone)."""
    from ..energy import parse_energy
    from .export import table_id

    lg = desc["latgreen"]
    if lg["quantity"] == "return-probability":
        return table_id("cubic", "return-probability")
    try:
        energy = parse_energy(lg["energy"], lg["lattice"]) if lg["quantity"] == "green" \
            else None
    except InputError as e:
        raise InputError(f"descriptor {desc['name']!r}: {e}") from None
    return table_id(lg["lattice"], lg["quantity"], energy)


def check_level(desc: dict[str, Any]) -> str:
    """The descriptor's ``verify`` (full or fast); a table without one (dos) is ``full`` when
    every row was checked at full digits."""
    lg = desc["latgreen"]
    if lg.get("verify") in ("full", "fast"):
        return str(lg["verify"])
    cc = lg["cross_check"]
    return "full" if cc["rows_checked_at_full_digits"] >= cc["rows"] else "fast"


def lattices_of(desc: dict[str, Any]) -> list[str]:
    """The key column of a table with one row per lattice (from its region text)."""
    region = str(desc["latgreen"].get("region", ""))
    return sorted(x.strip() for x in region.split(":", 1)[-1].split(",") if x.strip())


def params(desc: dict[str, Any]) -> dict[str, Any]:
    """What a version holds, for the catalogue record and the forward-only rule."""
    lg = desc["latgreen"]
    p: dict[str, Any] = {"lattice": lg["lattice"], "quantity": lg["quantity"],
                         "digits": lg["digits"], "extent": lg.get("extent"),
                         "verify": check_level(desc), "rows": lg["cross_check"]["rows"],
                         "min_agreement_digits": lg["cross_check"]["min_agreement_digits"]}
    if lg["quantity"] == "green":
        p["energy"] = lg["energy"]
    elif lg["quantity"] == "dos":
        p["energies"] = lg["energies"]
    elif lg["quantity"] == "return-probability":
        p["lattices"] = lattices_of(desc)
    return p


def behind(cur: dict[str, Any], new: dict[str, Any]) -> list[str]:
    """How ``new`` (:func:`params`) would fall behind ``cur``: fewer digits, a smaller extent,
    a weaker check, fewer lattices.  Empty when ``new`` may replace ``cur``."""
    from .spec import LEVELS

    out = []
    if new["digits"] < cur["digits"]:
        out.append(f"{new['digits']} digits < {cur['digits']}")
    if cur.get("extent") is not None and new.get("extent") is not None and \
            new["extent"] < cur["extent"]:
        out.append(f"extent {new['extent']} < {cur['extent']}")
    if LEVELS[new["verify"]] < LEVELS[cur["verify"]]:
        out.append(f"check {new['verify']} weaker than {cur['verify']}")
    if not set(cur.get("lattices", ())) <= set(new.get("lattices", ())):
        out.append(f"lattices {new.get('lattices')} lack some of {cur.get('lattices')}")
    return out


def exceeds(cur: dict[str, Any], want: dict[str, Any]) -> bool:
    """``cur`` holds at least everything ``want`` asks for and more of something."""
    return not behind(want, cur) and any(
        cur.get(k) != want.get(k) for k in ("digits", "extent", "verify", "lattices"))


def current_version(root: Path, table_id: str,
                    cat: dict[str, Any] | None = None) -> tuple[str, dict[str, Any]] | None:
    """(vN, descriptor) of the current version of ``table_id``, None when the catalogue does
    not list it; a broken entry (no ``current``, or one naming a version that is not listed
    or not on disk) is an InputError."""
    cat = load_catalogue(root) if cat is None else cat
    entry = cat["tables"].get(table_id)
    if entry is None:
        return None
    where = f"{root / CATALOGUE_FILE}: table {table_id}"
    if not isinstance(entry, dict) or not isinstance(entry.get("versions"), dict):
        raise InputError(f"{where}: the entry has no 'versions'")
    cur = entry.get("current")
    if not isinstance(cur, str) or version_number(cur) is None:
        raise InputError(f"{where}: the entry has no valid 'current' version")
    if cur not in entry["versions"]:
        raise InputError(f"{where}: 'current' names {cur}, which is not listed")
    d = root / table_id / cur
    if not (d / "datapackage.json").is_file():
        raise InputError(f"{where}: the current version {cur} is missing from {d}")
    return cur, read_descriptor(d)


def data_hashes(desc: dict[str, Any]) -> dict[str, str]:
    return {r["path"]: r["hash"] for r in desc["resources"]}


def check_hashes(dir_: Path, desc: dict[str, Any], copy_to: Path | None = None) -> None:
    """Every data file's byte count and sha256 as the descriptor says (InputError naming the
    first that differs); with ``copy_to``, each file is also copied there as it is hashed.
    Files are opened by verify's table reader: regular files only, no link followed."""
    from .read import TableDir, TableFileError, digest

    names = tuple(r["path"] for r in desc["resources"])
    with TableDir(Path(dir_), names) as d:
        for r in desc["resources"]:
            f = Path(dir_) / r["path"]
            try:
                dg = digest(d, r["path"], r.get("bytes"),
                            None if copy_to is None else copy_to / r["path"])
            except TableFileError as e:
                raise InputError(f"{dir_}: {e} (listed in its datapackage.json)") from None
            if dg.sha256 != r["hash"] or dg.size != r.get("bytes", dg.size):
                raise InputError(f"{f}: its sha256 or byte count differs from the descriptor "
                                 "(the file was changed after it was written)")


def work_dir(root: Path) -> Path:
    """This process's work area, ``ROOT/.latgreen-work/<pid>``."""
    return root / WORK_DIR / str(os.getpid())


def publish(root: Path, table_id: str, build: Callable[[Path, str], dict[str, Any]],
            spec: dict[str, Any], made_by: str, if_changed: bool = True,
            check: Callable[[Path, dict[str, Any]], None] | None = None,
            extra: dict[str, Any] | None = None) -> tuple[str, dict[str, Any]]:
    """Build a table with ``build(out_dir, version)`` and publish it as the next version of
    ``table_id``; the caller holds :func:`catalogue_lock`.  With ``if_changed``, a build whose
    data equal the current version's is discarded (the current record then gets the
    ``spec``, software and inputs hash of this build: the same bytes); ``check(staging,
    descriptor)`` may raise to refuse publication; a build that falls behind the current
    version (:func:`behind`) is refused.  Returns (state, descriptor), state "new" / "new
    version vN" / "data unchanged"."""
    from .._version import __version__
    from .spec import inputs_hash

    check_table_id(table_id)
    table_root = root / table_id
    table_root.mkdir(exist_ok=True)
    work = work_dir(root)
    work.mkdir(parents=True, exist_ok=True)
    staging = work / table_id
    if staging.exists():
        shutil.rmtree(staging)
    n = next_version(table_root)
    try:
        desc = build(staging, f"v{n}")
        desc = read_descriptor(staging)
        if expected_id(desc) != table_id:
            raise InputError(f"the table built is {expected_id(desc)}, not {table_id}")
        cat = load_catalogue(root)
        cur = current_version(root, table_id, cat)
        new = params(desc)
        fields = {"spec": spec, "software": __version__,
                  "inputs_hash": inputs_hash(spec, desc["latgreen"].get("libraries") or {})}
        if cur is not None:
            cur_v, cur_desc = cur
            if if_changed and data_hashes(cur_desc) == data_hashes(desc):
                rec = cat["tables"][table_id]["versions"][cur_v]
                if not isinstance(rec, dict):
                    rec = cat["tables"][table_id]["versions"][cur_v] = {}
                upd = {**params(cur_desc), **fields}
                if any(rec.get(k) != v for k, v in upd.items()):
                    rec.update(upd)
                    save_catalogue(root, cat)
                return "data unchanged", desc
            short = behind(params(cur_desc), new)
            if short:
                raise InputError(f"{table_id}: the new version would fall behind the current "
                                 f"{cur_v} ({'; '.join(short)}): versions only move forward")
        if check is not None:
            check(staging, desc)
        final = table_root / f"v{n}"
        os.rename(staging, final)  # fails rather than overwrite: v<n> is new by construction
        cat = load_catalogue(root)
        first = table_id not in cat["tables"]
        entry = cat["tables"].setdefault(table_id, {"versions": {}})
        entry.setdefault("versions", {})
        entry["versions"][f"v{n}"] = {
            "path": f"{table_id}/v{n}", **new, "created": desc.get("created"),
            "hashes": data_hashes(desc), "made_by": made_by, **(extra or {}), **fields,
        }
        entry["current"] = f"v{n}"
        save_catalogue(root, cat)
        return ("new" if first else f"new version v{n}"), desc
    finally:
        if staging.exists():
            shutil.rmtree(staging, ignore_errors=True)
        with contextlib.suppress(OSError):
            if not any(work.iterdir()):
                work.rmdir()
                work.parent.rmdir()


def publish_dir(src: Path, root: Path) -> tuple[str, str, dict[str, Any]]:
    """Publish a table written by ``latgreen table`` as the next version of its table id in
    ``root``: the descriptor must be consistent (its name is the id its parameters give), the
    hashes of the files are checked in ``src`` and again in the copy, and the forward-only
    rule holds.  ``src`` is copied, never moved or modified.  Returns (table id, state,
    descriptor)."""
    src = Path(src)
    if not src.is_dir():
        raise InputError(f"{src} is not a directory (a table made with latgreen table)")
    desc = read_descriptor(src)
    tid = check_table_id(expected_id(desc))
    if desc["name"] != tid or desc["latgreen"].get("table_id", tid) != tid:
        raise InputError(f"{src}: the descriptor's name {desc['name']!r} disagrees with its "
                         f"parameters (table {tid})")
    check_hashes(src, desc)
    root = check_root(root, create=True)
    spec = spec_of(desc)

    def copy(staging: Path, version: str) -> dict[str, Any]:
        staging.mkdir()
        # the data files copied by the same safe reader that hashes them (no link followed)
        check_hashes(src, desc, copy_to=staging)
        shutil.copyfile(src / "datapackage.json", staging / "datapackage.json")
        copied = read_descriptor(staging)  # a swap since it was read shows as a difference
        if copied != desc:
            raise InputError(f"{src}/datapackage.json changed while it was copied")
        check_hashes(staging, copied)
        return copied

    with catalogue_lock(root):
        state, d = publish(root, tid, copy, spec, "publish")
    return tid, state, d


def spec_of(desc: dict[str, Any]) -> dict[str, Any]:
    """The canonical spec entry of what a descriptor holds (:meth:`TableSpec.canonical`)."""
    from .spec import TableSpec

    lg = desc["latgreen"]
    p = params(desc)
    q = lg["quantity"]
    if q == "return-probability":
        s = TableSpec(q, p["digits"], lattices=tuple(p["lattices"]), verify=p["verify"])
    else:
        exact = True
        if q in ("resistance", "green"):
            exact = bool(lg.get("with_exact", True))
        s = TableSpec(q, p["digits"], p["lattice"], extent=p["extent"],
                      energy=p.get("energy"), energies=p.get("energies"), verify=p["verify"],
                      exact=exact)
    return s.canonical()
