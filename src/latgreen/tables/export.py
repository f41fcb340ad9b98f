"""Write a table: values.csv, values.json and a Frictionless Data Package v2 descriptor with
W3C PROV provenance, atomically (temporary directory, then rename).

Data files are byte-for-byte deterministic (rows sorted by site, UTF-8, ``\\n`` line ends,
fixed number formatting); only ``datapackage.json`` carries timestamps and the source
revision.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import io
import json
import mmap
import os
import platform
import shutil
import subprocess
import tempfile
from collections.abc import Callable, Iterable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .._version import __version__
from ..errors import InputError
from ..lattices import Lattice
from .render import UNSAFE, Chunk

CONVENTIONS = {
    "hopping": "amplitude +1 between nearest neighbours; G(E; r) = <0|(E - H)^-1|r>",
    "resistance": "unit resistors on every nearest-neighbour bond of the infinite lattice; "
                  "R(r) between the origin and site r",
    "digits": "significant decimal digits, correctly rounded (ties cannot occur for "
              "irrational values; exact rationals round half to even)",
    "error_bound": "bound on |value - true value|: half a unit in the last printed place",
    "agreement_digits": "floor(-log10(|x - y| / |x|)) between the exact form's value and the "
                        "independent method's, capped at the table's digits",
    "caveat": "values describe idealised infinite lattices; they are no substitute for the "
              "engineering analysis of a real network under local codes and practice",
}


def _utc_now() -> str:
    return _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")


def _source_revision() -> str | None:
    here = Path(__file__).resolve().parent
    try:
        out = subprocess.run(["git", "-C", str(here), "rev-parse", "HEAD"], capture_output=True,
                             text=True, timeout=5, check=False)
    except (OSError, subprocess.SubprocessError):
        return None
    rev = out.stdout.strip()
    return rev if out.returncode == 0 and len(rev) == 40 else None


def _library_versions() -> dict[str, str]:
    import flint
    import gmpy2
    import mpmath
    import numpy

    return {
        "python": platform.python_version(),
        "mpmath": mpmath.__version__,
        "gmpy2": gmpy2.version(),
        "python-flint": flint.__version__,
        "numpy": numpy.__version__,
    }


class _Hashing(io.RawIOBase):
    """Text sink that writes UTF-8 bytes to a file while hashing and counting them."""

    def __init__(self, path: Path) -> None:
        self.f = open(path, "wb")  # noqa: SIM115 - closed in close()
        self.h = hashlib.sha256()
        self.n = 0

    def write_text(self, s: str) -> None:
        self.write_bytes(s.encode("utf-8"))

    def write_bytes(self, b: bytes | memoryview) -> None:
        self.f.write(b)
        self.h.update(b)
        self.n += len(b)

    def copy_file(self, path: Path, sha256: str, skip: int = 0) -> None:
        """Append the file at ``path`` from byte ``skip`` on, after checking that the whole
        file has the hash ``sha256`` (computed in a second thread while this one hashes the
        output; hashlib releases the GIL).  The bytes are copied by the kernel
        (copy_file_range) where it can, else read and written."""
        with open(path, "rb") as src:
            size = os.fstat(src.fileno()).st_size
            data: bytes | mmap.mmap = b""
            if size:
                data = mmap.mmap(src.fileno(), 0, access=mmap.ACCESS_READ)
            view = memoryview(data)
            try:
                with ThreadPoolExecutor(1) as ex:
                    check = ex.submit(lambda: hashlib.sha256(view).hexdigest())
                    with view[skip:] as part:
                        self.h.update(part)
                    ok = check.result() == sha256
                if not ok:
                    raise InputError(f"{path} changed during the build; use --force to "
                                     "start over")
                off, left = skip, size - skip
                self.f.flush()  # the kernel copy writes at the file's position
                try:
                    while left > 0:
                        k = os.copy_file_range(src.fileno(), self.f.fileno(), left, off)
                        if k <= 0:
                            break
                        off, left = off + k, left - k
                except (OSError, AttributeError):
                    pass  # no kernel copy here: copy the rest by hand
                if off < size:
                    with view[off:] as rest:
                        self.f.write(rest)
                self.n += size - skip
            finally:
                view.release()
                if isinstance(data, mmap.mmap):
                    data.close()

    def close(self) -> None:
        self.f.close()
        super().close()


def check_output_dir(out: Path | str, force: bool) -> Path:
    """Refuse, before any work starts, an output path that names no new directory (empty,
    ``.``, ``..``, a root, the current directory or one of its ancestors), a symbolic link
    (a table is never written through a link), an existing non-empty directory (unless
    force), a file in the way, or a parent we cannot write to.  Returns the absolute path of
    the output directory (its parent resolved), whose hidden siblings ``.NAME.*`` hold the
    staging directory and the checkpoint."""
    if str(out) == "":
        raise InputError("the output path is empty: name the directory to create")
    out = Path(out)
    if out.name in ("", ".", ".."):
        raise InputError(f"the output path {out} names no new directory (not '.', '..' or a "
                         "root): give the name of the directory to create")
    try:
        if out.is_symlink():
            raise InputError(f"{out} is a symbolic link: give the directory itself (a table "
                             "is never written through a link)")
        target = out.parent.resolve() / out.name
    except (OSError, RuntimeError) as e:  # RuntimeError: a symlink loop on the way
        raise InputError(f"cannot use the output path {out}: "
                         f"{getattr(e, 'strerror', None) or e}") from None
    try:
        here: Path | None = Path.cwd().resolve()
    except OSError:  # the current directory was removed: it cannot be the output
        here = None
    if here is not None and (target == here or target in here.parents):
        raise InputError(f"the output path {out} is the current directory or one of its "
                         "parents: give the name of a new directory")
    if target.exists() and not target.is_dir():
        raise InputError(f"{out} exists and is not a directory")
    if target.is_dir() and any(target.iterdir()) and not force:
        raise InputError(f"output directory {out} exists and is not empty (use --force to "
                         "replace it)")
    probe = target.parent
    while not probe.exists() and not probe.is_symlink():
        probe = probe.parent
    if not probe.is_dir():
        raise InputError(f"cannot write to {probe}: not a directory")
    try:  # os.access says yes to root everywhere; only an attempt tells
        tempfile.TemporaryDirectory(prefix=".latgreen-probe-", dir=probe).cleanup()
    except OSError as e:
        raise InputError(f"cannot write to {probe}: {e.strerror}") from None
    return target


def make_dirs(path: Path) -> list[Path]:
    """``mkdir -p path``, returning the directories it created (outermost first), so that a
    failed run can remove them again (:func:`remove_dirs`)."""
    missing = []
    p = path
    while not p.exists():
        missing.append(p)
        p = p.parent
    created = []
    try:
        for d in reversed(missing):
            d.mkdir()
            created.append(d)
    except OSError:
        remove_dirs(created)
        raise
    return created


def remove_dirs(dirs: list[Path]) -> None:
    """Remove the directories :func:`make_dirs` created, innermost first, while empty."""
    for d in reversed(dirs):
        try:
            d.rmdir()
        except OSError:
            return


def _staged(out: Path, force: bool, fill: Callable[[Path], dict[str, Any]]) -> dict[str, Any]:
    """Run ``fill(tmp)`` (which writes the data files and returns the descriptor) in a fresh
    temporary directory beside ``out``, write the descriptor, then move the directory into
    place.  On any error or interruption the temporary directory (and any parent directory
    made for it) is removed and ``out`` is left as it was."""
    target = check_output_dir(out, force)
    parent = target.parent
    created: list[Path] = []
    try:
        created = make_dirs(parent)
        tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.tmp-", dir=parent))
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o777 & ~umask)  # mkdtemp makes it private; a table is for sharing
    except OSError as e:
        remove_dirs(created)
        raise InputError(f"cannot write to {parent}: {e.strerror}") from None
    try:
        descriptor = fill(tmp)
        with open(tmp / "datapackage.json", "w", encoding="utf-8", newline="\n") as f:
            json.dump(descriptor, f, indent=2, ensure_ascii=False)
            f.write("\n")
        _replace_dir(tmp, target)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        remove_dirs(created)
        raise
    return descriptor


def write_table(out: Path, lattice: Table, quantity: str, chunks: Iterable[Chunk],
                meta: dict[str, Any], force: bool = False) -> dict[str, Any]:
    """The three files of a table over sites, written atomically (:func:`_staged`)."""

    def fill(tmp: Path) -> dict[str, Any]:
        started = _utc_now()
        summary = _write_files(tmp, lattice, quantity, chunks, meta)
        return _descriptor(lattice, quantity, meta, summary, started, _utc_now())

    return _staged(out, force, fill)


def _replace_dir(tmp: Path, out: Path) -> None:
    """Move ``tmp`` to ``out`` (an absolute path whose last component is no link), putting
    an existing ``out`` aside first and back if the move fails."""
    if out.exists():
        if out.is_dir() and not any(out.iterdir()):
            out.rmdir()
        else:
            old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-", dir=out.parent))
            old.rmdir()
            os.rename(out, old)
            try:
                os.rename(tmp, out)
            except BaseException:
                os.rename(old, out)
                raise
            shutil.rmtree(old, ignore_errors=True)
            return
    os.rename(tmp, out)


@dataclass(frozen=True)
class Keys:
    """The key columns of a table whose rows are not lattice sites (e.g. one row per
    lattice): written through the same files, descriptor and checks as a site table."""

    name: str  # the table's subject, as in its id "<name>-<quantity>"
    coordinate_names: tuple[str, ...]
    description: str  # of the key columns
    title: str


Table = Lattice | Keys


GREEN_CONVENTIONS = {
    "green": "G(E; r) = <0|(E - H)^-1|r>; for a real energy inside the band the retarded limit "
             "E + i0 (Im G(E; 0) <= 0)",
    "energy": "exact: the decimal or fraction given, never a binary float",
    "complex_values": "value_re and value_im are each correctly rounded to the table's "
                      "significant digits of their own; a component that is exactly 0 by "
                      "symmetry is 0 with error bound 0",
    "exact": "a*G00 + b*G11 + c with G00 = G(E;0,0), G11 = G(E;1,1) and Gaussian-rational "
             "a, b, c (I is the imaginary unit)",
}


CUBIC_GREEN_EXACT = ("at a real energy other than a band edge, a van Hove point or 0: "
                     "a*G0 + b*dG0 + c*d2G0 + d with rational a, b, c, d, G0 = G(E;0) the "
                     "closed form named in methods.primary and dG0, d2G0 its first and second "
                     "derivatives in E; at other energies: G0 at the origin, (E*G0 - 1)/z at "
                     "the nearest neighbour (the lattice equation at the origin) and empty "
                     "elsewhere (no exact form: the value is the 1-D integral rounded with 10 "
                     "guard digits and its error bound is an estimate)")


TRIHEX_GREEN_EXACT = {
    "triangular": "a*G00 + b*G20 + c with G00 = G(E;0,0), G20 = G(E;2,0) = "
                  "-(E**2 - 4*E - 18)/6*G00 - (E - 6)*(E + 2)*(E + 3)/3*diff(G00, E) - (E + 2)/6 "
                  "and Gaussian-rational a, b, c (I is the imaginary unit)",
    "honeycomb": "a*T00 + b*T20 + c with T00, T20 the triangular lattice's G00, G20 at "
                 "w = E**2 - 3 (w + i0*sign(E) on the band) and Gaussian-rational a, b, c (I is "
                 "the imaginary unit); at the Dirac point E = 0 the limit p*sqrt(3)/pi + q with "
                 "rational p, q (0 on the A sites)",
}


def _green_conventions(lattice: Table) -> dict[str, str]:
    """GREEN_CONVENTIONS, with the meaning of the exact column of the lattice."""
    if lattice.name in ("sc", "bcc", "fcc"):
        return {**GREEN_CONVENTIONS, "exact": CUBIC_GREEN_EXACT}
    if lattice.name in TRIHEX_GREEN_EXACT:
        return {**GREEN_CONVENTIONS, "exact": TRIHEX_GREEN_EXACT[lattice.name]}
    return GREEN_CONVENTIONS


# fields shared by the site tables and the energy-grid tables
_ERROR_FIELD = {"name": "error_bound", "type": "string",
                "description": "bound on |value - true value| (half a unit in the last place)"}
_METHODS_FIELD = {"name": "methods", "type": "string",
                  "description": "independent methods that confirmed the value, separated by "
                                 "';'"}
_AGREEMENT_FIELD = {"name": "agreement_digits", "type": "integer",
                    "description": "significant digits on which those methods agree"}


def _fields(lattice: Table, complex_valued: bool = False) -> list[dict[str, Any]]:
    if isinstance(lattice, Keys):
        coords = [{"name": c, "type": "string", "description": lattice.description}
                  for c in lattice.coordinate_names]
    else:
        coords = [{"name": c, "type": "integer",
                   "description": f"site coordinate {c} ({lattice.description})"}
                  for c in lattice.coordinate_names]
    if complex_valued:
        comp = "decimal {} part, correctly rounded to the table's significant digits of its own"
        return coords + [
            {"name": "value_re", "type": "string", "description": comp.format("real")},
            {"name": "value_im", "type": "string", "description": comp.format("imaginary")},
            {"name": "exact", "type": "string",
             "description": "exact form in sympy syntax (latgreen.conventions.exact says what "
                            "its names stand for)"},
            {"name": "exact_how", "type": "string",
             "description": "how the exact form was obtained: derived (proven recurrence), "
                            "identified (fitted, verified to stated digits) or the literature "
                            "source of a closed form; empty where there is no exact form"},
            {"name": "error_bound_re", "type": "string",
             "description": "bound on |value_re - Re G| (half a unit in its last place)"},
            {"name": "error_bound_im", "type": "string",
             "description": "bound on |value_im - Im G| (half a unit in its last place)"},
            _METHODS_FIELD,
            dict(_AGREEMENT_FIELD, description=_AGREEMENT_FIELD["description"]
                 + " (each component)"),
        ]
    return coords + [
        {"name": "value", "type": "string",
         "description": "decimal value, correctly rounded to the table's significant digits "
                        "(a string: a JSON number or a spreadsheet would round it)"},
        {"name": "exact", "type": "string",
         "description": "exact form in sympy syntax (empty where none is known)"},
        {"name": "exact_how", "type": "string",
         "description": "derived (proven recurrence) or identified (integer-relation search)"},
        _ERROR_FIELD, _METHODS_FIELD, _AGREEMENT_FIELD,
    ]


def _write_files(tmp: Path, lattice: Table, quantity: str, chunks: Iterable[Chunk],
                 meta: dict[str, Any]) -> dict[str, Any]:
    cplx = bool(meta.get("complex"))
    names = [f["name"] for f in _fields(lattice, cplx)]
    csv_sink = _Hashing(tmp / "values.csv")
    json_sink = _Hashing(tmp / "values.json")
    csv_sink.write_text(",".join(names) + "\n")
    # values.json: the same rows as values.csv, as arrays in the order of "fields" (one row
    # a line; numbers that must not be rounded are strings, as in the CSV)
    head = {"lattice": lattice.name, "quantity": quantity, "digits": meta["digits"],
            "extent": meta["extent"], "coordinates": list(lattice.coordinate_names),
            "fields": names}
    if "energy" in meta:
        head = {**head, "energy": str(meta["energy"])}
    json_sink.write_text(json.dumps(head, ensure_ascii=False)[:-1] + ', "rows": [')
    count = 0
    min_agree: int | None = None
    full_rows = 0
    prev_site: tuple[Any, ...] | None = None
    try:
        for ch in chunks:
            if not ch.rows:
                continue
            if prev_site is not None and ch.first is not None and ch.first <= prev_site:
                raise AssertionError(f"rows out of order near {ch.first}")
            prev_site = ch.last
            # json rows each start with ",\n": the first row of the table drops the comma
            if ch.stored is not None:
                st = ch.stored
                csv_sink.copy_file(st.csv, st.csv_sha256)
                if count == 0:
                    json_sink.write_bytes(b"\n")
                json_sink.copy_file(st.json, st.json_sha256, skip=2 if count == 0 else 0)
            else:
                csv_sink.write_text(ch.csv)
                json_sink.write_text("\n" + ch.json[2:] if count == 0 else ch.json)
            count += ch.rows
            if ch.min_agreement is not None:
                min_agree = (ch.min_agreement if min_agree is None
                             else min(min_agree, ch.min_agreement))
            full_rows += ch.full_rows
        json_sink.write_text("\n]}\n")
    finally:
        csv_sink.close()
        json_sink.close()
    return {
        "rows": count,
        "min_agreement_digits": min_agree,
        "rows_checked_at_full_digits": full_rows,
        "files": {
            "values.csv": (csv_sink.h.hexdigest(), csv_sink.n),
            "values.json": (json_sink.h.hexdigest(), json_sink.n),
        },
    }


def table_id(lattice: str, quantity: str, energy: Any = None) -> str:
    """``square-resistance``; a table at an energy carries it: ``square-green-e4.5``,
    ``square-green-e1.5p0.5j`` (see :meth:`latgreen.energy.Energy.slug`)."""
    base = f"{lattice}-{quantity}"
    return base if energy is None else f"{base}-{energy.slug()}"


def _package(name: str, title: str, version: str, started: str, ended: str,
             files: dict[str, tuple[str, int]], fields: list[dict[str, Any]],
             primary_key: list[str], used: dict[str, Any],
             block: dict[str, Any]) -> dict[str, Any]:
    """The descriptor every table shares: Frictionless Data Package v2 with the two data
    resources (sha256 and byte counts), W3C PROV provenance and our ``latgreen`` block."""
    (csv_hash, csv_bytes), (json_hash, json_bytes) = files["values.csv"], files["values.json"]
    return {
        "$schema": "https://datapackage.org/profiles/2.0/datapackage.json",
        "name": name,
        "title": title,
        "description": "Generated by latgreen; never edit by hand. " + CONVENTIONS["caveat"],
        "version": version,
        "created": ended,
        "licenses": [{"name": "CC0-1.0",
                      "path": "https://creativecommons.org/publicdomain/zero/1.0/",
                      "title": "CC0 1.0"}],
        "resources": [
            {
                "name": "values",
                "path": "values.csv",
                "type": "table",
                "format": "csv",
                "mediatype": "text/csv",
                "encoding": "utf-8",
                "bytes": csv_bytes,
                "hash": f"sha256:{csv_hash}",
                "dialect": {"$schema": "https://datapackage.org/profiles/2.0/tabledialect.json",
                            "delimiter": ",", "lineTerminator": "\n", "header": True},
                "schema": {
                    "$schema": "https://datapackage.org/profiles/2.0/tableschema.json",
                    "fields": fields,
                    "primaryKey": primary_key,
                },
            },
            {
                "name": "values-json",
                "path": "values.json",
                "type": "json",
                "format": "json",
                "mediatype": "application/json",
                "encoding": "utf-8",
                "bytes": json_bytes,
                "hash": f"sha256:{json_hash}",
            },
        ],
        "prov:wasGeneratedBy": {
            "prov:type": "latgreen table build",
            "prov:startedAtTime": started,
            "prov:endedAtTime": ended,
            "prov:wasAssociatedWith": {
                "prov:type": "prov:SoftwareAgent",
                "name": "latgreen",
                "version": __version__,
                "source_revision": _source_revision(),
            },
            "prov:used": used,
        },
        "latgreen": block,
    }


def _descriptor(lattice: Table, quantity: str, meta: dict[str, Any], summary: dict[str, Any],
                started: str, ended: str) -> dict[str, Any]:
    energy = meta.get("energy")
    tid = table_id(lattice.name, quantity, energy)
    at = "" if energy is None else f" at E = {energy}"
    title = (lattice.title if isinstance(lattice, Keys) else
             f"{quantity} of the infinite {lattice.name} lattice{at}, extent "
             f"{meta['extent']}, {meta['digits']} digits")
    used = {k: meta[k] for k in ("lattice", "quantity", "extent", "digits", "verify")}
    block: dict[str, Any] = {
        "table_id": tid,
        "lattice": lattice.name,
        "quantity": quantity,
        "extent": meta["extent"],
        "region": meta["region"],
        "digits": meta["digits"],
        "verify": meta["verify"],
        "methods": meta["methods"],
        "conventions": CONVENTIONS,
        "libraries": _library_versions(),
        "cross_check": {
            "rows": summary["rows"],
            "rows_checked_at_full_digits": summary["rows_checked_at_full_digits"],
            "min_agreement_digits": summary["min_agreement_digits"],
        },
    }
    if energy is not None:
        # the resistance descriptors stay as they were: energy keys only where there is one
        e = {"energy": str(energy), "energy_re": str(energy.re), "energy_im": str(energy.im)}
        used.update(e)
        block = {**{k: block[k] for k in ("table_id", "lattice", "quantity")}, **e,
                 **{k: v for k, v in block.items() if k not in ("table_id", "lattice",
                                                               "quantity")}}
        block["conventions"] = {**CONVENTIONS, **_green_conventions(lattice)}
    return _package(tid, title, meta.get("version", "1"), started, ended, summary["files"],
                    _fields(lattice, bool(meta.get("complex"))),
                    list(lattice.coordinate_names), used, block)


DOS_FIELDS = [
    {"name": "energy", "type": "string",
     "description": "exact real energy (terminating decimal, or p/q); E + i0"},
    {"name": "value", "type": "string",
     "description": "density of states per site, correctly rounded to the table's significant "
                    "digits (0 outside the band)"},
    {"name": "exact", "type": "string",
     "description": "closed form K(1 - E^2/16)/(2 pi^2) in sympy syntax (elliptic_k of "
                    "parameter m), 0 outside the band"},
    _ERROR_FIELD, _METHODS_FIELD, _AGREEMENT_FIELD,
]


# what the exact column of a dos table holds, per lattice (the square's text is DOS_FIELDS')
DOS_EXACT = {
    **{lat: "closed form of rho(E) in sympy syntax (complete elliptic integral elliptic_k of "
            "parameter m; the honeycomb's is |E| rho_tri(E^2 - 3) written out), 0 outside the "
            "band" for lat in ("triangular", "honeycomb")},
    **{lat: "empty: rho(E) = -Im G(E + i0; 0)/pi of the closed form of G(E; 0) named in "
            "methods.primary (the value is 0 outside the band)" for lat in ("sc", "bcc", "fcc")},
}


def dos_fields(lattice: str) -> list[dict[str, str]]:
    """DOS_FIELDS with the exact column described for ``lattice``."""
    if lattice not in DOS_EXACT:
        return DOS_FIELDS
    return [dict(f, description=DOS_EXACT[lattice]) if f["name"] == "exact" else f
            for f in DOS_FIELDS]


def write_energy_table(out: Path, lattice: Lattice, quantity: str,
                       rows: Iterable[tuple[str, str, str, str, str, int]],
                       meta: dict[str, Any], force: bool = False) -> dict[str, Any]:
    """A table over an energy grid (one row per energy, in grid order): the same files,
    atomicity and descriptor layout as a table over sites."""

    def fill(tmp: Path) -> dict[str, Any]:
        started = _utc_now()
        names = [f["name"] for f in DOS_FIELDS]
        csv_sink, json_sink = _Hashing(tmp / "values.csv"), _Hashing(tmp / "values.json")
        count, min_agree = 0, None
        try:
            csv_sink.write_text(",".join(names) + "\n")
            head = {"lattice": lattice.name, "quantity": quantity, "digits": meta["digits"],
                    "energies": meta["energies"], "fields": names}
            json_sink.write_text(json.dumps(head)[:-1] + ', "rows": [')
            for r in rows:
                text = "".join(map(str, r))
                if not text.isascii() or UNSAFE.search(text):
                    raise AssertionError(f"unexpected character in the row at E = {r[0]}")
                csv_sink.write_text(",".join(map(str, r)) + "\n")
                json_sink.write_text(("\n" if count == 0 else ",\n") + "["
                                     + ",".join(f'"{x}"' for x in r[:5]) + f",{r[5]}]")
                count += 1
                min_agree = r[5] if min_agree is None else min(min_agree, r[5])
            json_sink.write_text("\n]}\n")
        finally:
            csv_sink.close()
            json_sink.close()
        ended = _utc_now()
        tid = f"{lattice.name}-{quantity}"
        desc = _package(
            tid,
            f"{quantity} of the infinite {lattice.name} lattice at {count} energies "
            f"({meta['energies']}), {meta['digits']} digits",
            meta.get("version", "1"), started, ended,
            {"values.csv": (csv_sink.h.hexdigest(), csv_sink.n),
             "values.json": (json_sink.h.hexdigest(), json_sink.n)},
            dos_fields(lattice.name), ["energy"],
            {"lattice": lattice.name, "quantity": quantity, "energies": meta["energies"],
             "digits": meta["digits"]},
            {
                "table_id": tid, "lattice": lattice.name, "quantity": quantity,
                "energies": meta["energies"], "energy_grid": meta["grid"],
                "digits": meta["digits"], "methods": meta["methods"],
                "conventions": {**CONVENTIONS, **GREEN_CONVENTIONS,
                                "dos": "rho(E) = -Im G(E + i0; 0, 0)/pi, per site, "
                                       "normalised to 1 over the band"}
                if lattice.name == "square" else
                {**CONVENTIONS, **GREEN_CONVENTIONS,
                 "exact": DOS_EXACT.get(lattice.name, ""),
                 "dos": "rho(E) = -Im G(E + i0; 0)/pi, per site, normalised to 1 over the "
                        "band"},
                "libraries": _library_versions(),
                "cross_check": {"rows": count, "rows_checked_at_full_digits": count,
                                "min_agreement_digits": min_agree},
            })
        return desc

    return _staged(out, force, fill)
