"""Catalogue specifications: which tables a catalogue holds, declared in a TOML file.

A spec file is a list of ``[[table]]`` entries, one per table::

    [[table]]                 # a table over sites
    lattice = "square"
    quantity = "resistance"   # resistance | green | dos | return-probability
    extent = 12
    digits = 20
    verify = "full"           # full (default) | auto | fast (resistance only)

    [[table]]                 # a green table at one energy (a string: exact, never binary)
    lattice = "square"
    quantity = "green"
    energy = "9/2"
    extent = 4
    digits = 20

    [[table]]                 # a density of states over COUNT energies from A to B
    lattice = "square"
    quantity = "dos"
    energies = "0.5:3.5:7"
    digits = 20

    [[table]]                 # one row per cubic lattice
    quantity = "return-probability"
    lattices = ["sc", "bcc", "fcc"]
    digits = 20

Optional for site tables: ``exact = false`` leaves the exact forms out.  The whole file is
validated before any work (unknown keys, wrong types, values the table command would
refuse, two entries with one table id), each problem reported in one line naming the file,
the entry and the key.  The default catalogue is such a file, ``catalogue.toml`` in this
package (:func:`default_spec`).

Every table's *canonical* entry (:meth:`TableSpec.canonical`: only its keys, defaults filled
in, the energy in canonical text) is what the catalogue records; its *inputs hash*
(:func:`inputs_hash`) is the sha256 of the canonical entry together with the versions of the
libraries that compute the numbers (mpmath, python-flint, gmpy2).
"""

from __future__ import annotations

import hashlib
import json
import tomllib
from dataclasses import dataclass, replace
from importlib import resources
from pathlib import Path
from typing import Any

from ..errors import InputError

QUANTITY_KEYS = {
    "resistance": ({"lattice", "quantity", "extent", "digits"}, {"verify", "exact"}),
    "green": ({"lattice", "quantity", "energy", "extent", "digits"}, {"verify", "exact"}),
    "dos": ({"lattice", "quantity", "energies", "digits"}, {"verify"}),
    "return-probability": ({"quantity", "lattices", "digits"}, {"verify"}),
}
LEVELS = {"fast": 0, "full": 1}  # check levels, weakest first ("auto" resolves to one)
CUBIC = ("bcc", "fcc", "sc")
LIBRARIES = ("gmpy2", "mpmath", "python-flint")  # the libraries that compute the values


@dataclass(frozen=True)
class TableSpec:
    """One table of a catalogue (validated: see :func:`parse_spec`)."""

    quantity: str
    digits: int
    lattice: str = "cubic"
    extent: int | None = None
    energy: str | None = None  # canonical text (green)
    energies: str | None = None  # canonical A:B:COUNT (dos)
    lattices: tuple[str, ...] = ()  # return-probability
    verify: str = "full"
    exact: bool = True

    @property
    def table_id(self) -> str:
        from ..energy import parse_energy
        from .export import table_id

        energy = None if self.energy is None else parse_energy(self.energy, self.lattice)
        return table_id(self.lattice, self.quantity, energy)

    def canonical(self) -> dict[str, Any]:
        """The entry as recorded in catalogue.json: its own keys only, defaults filled in."""
        d: dict[str, Any] = {"quantity": self.quantity, "digits": self.digits,
                             "verify": self.verify}
        if self.quantity == "return-probability":
            d["lattices"] = list(self.lattices)
        else:
            d["lattice"] = self.lattice
        if self.quantity in ("resistance", "green"):
            d["extent"] = self.extent
            d["exact"] = self.exact
        if self.energy is not None:
            d["energy"] = self.energy
        if self.energies is not None:
            d["energies"] = self.energies
        return dict(sorted(d.items()))

    def resolved_verify(self) -> str:
        """The check level the spec gets: ``auto`` resolved as ``latgreen table`` does."""
        if self.verify != "auto":
            return self.verify
        if self.quantity != "resistance":
            return "full"
        from ..quantities import get_provider
        from .build import choose_verify

        provider = get_provider(self.lattice, self.quantity)
        assert self.extent is not None
        return choose_verify("auto", provider.lattice.region_size(self.extent), self.digits,
                             provider.full_auto_limit)

    def at_least(self, digits: int, extent: int | None, verify: str) -> TableSpec:
        """This spec raised to at least these digits, extent and check level (a new version
        never falls behind the current one)."""
        new_extent = self.extent
        if self.extent is not None and extent is not None:
            new_extent = max(self.extent, extent)
        level = self.verify
        if LEVELS.get(verify, 0) > LEVELS.get(self.verify, 0) or self.verify == "auto" and \
                verify == "full":
            level = verify
        return replace(self, digits=max(self.digits, digits), extent=new_extent, verify=level)


def library_versions() -> dict[str, str]:
    import flint
    import gmpy2
    import mpmath

    return {"gmpy2": gmpy2.version(), "mpmath": mpmath.__version__,
            "python-flint": flint.__version__}


def inputs_hash(canonical: dict[str, Any], libraries: dict[str, Any] | None = None) -> str:
    """sha256 of the canonical spec entry and the versions of the computing libraries
    (``libraries``: a descriptor's ``latgreen.libraries``; default: those installed), as
    compact JSON with sorted keys."""
    libs = library_versions() if libraries is None else libraries
    text = json.dumps({"spec": canonical, "libraries": {k: str(libs.get(k)) for k in LIBRARIES}},
                      sort_keys=True, separators=(",", ":"))
    return "sha256:" + hashlib.sha256(text.encode()).hexdigest()


def default_spec_text() -> str:
    return resources.files("latgreen.tables").joinpath("catalogue.toml").read_text("utf-8")


def default_spec() -> list[TableSpec]:
    """The default catalogue (``catalogue.toml`` shipped in this package)."""
    return parse_spec(default_spec_text(), "catalogue.toml (default)")


def load_spec(path: Path) -> list[TableSpec]:
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as e:
        why = e.strerror if isinstance(e, OSError) and e.strerror else "not readable UTF-8"
        raise InputError(f"spec file {path}: {why}") from None
    return parse_spec(text, str(path))


def parse_spec(text: str, name: str) -> list[TableSpec]:
    """Validate a whole spec; every problem is one line: ``FILE: table K (ID): key: why``."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise InputError(f"spec file {name}: not valid TOML: {e}") from None
    extra = sorted(set(data) - {"table"})
    if extra:
        raise InputError(f"spec file {name}: unknown top-level key {extra[0]!r} (a spec is a "
                         "list of [[table]] entries)")
    tables = data.get("table")
    if not isinstance(tables, list) or not tables:
        raise InputError(f"spec file {name}: no [[table]] entries")
    out: list[TableSpec] = []
    seen: dict[str, int] = {}
    for k, entry in enumerate(tables, 1):
        spec = _entry(entry, f"spec file {name}: table {k}")
        tid = spec.table_id
        if tid in seen:
            raise InputError(f"spec file {name}: table {k} ({tid}): the same table id as table "
                             f"{seen[tid]}")
        seen[tid] = k
        out.append(spec)
    return out


def _entry(entry: object, where: str) -> TableSpec:
    if not isinstance(entry, dict):
        raise InputError(f"{where}: not a table of keys")
    q = entry.get("quantity")
    if q not in QUANTITY_KEYS:
        raise InputError(f"{where}: key 'quantity': {q!r} is not one of "
                         f"{', '.join(QUANTITY_KEYS)}")
    required, optional = QUANTITY_KEYS[q]
    lat = entry.get("lattice", "cubic" if q == "return-probability" else "?")
    label = f"{where} ({lat}-{q})"
    for key in sorted(entry):
        if key not in required | optional:
            raise InputError(f"{label}: unknown key {key!r} for a {q} table (keys: "
                             f"{', '.join(sorted(required | optional))})")
    for key in sorted(required - set(entry)):
        raise InputError(f"{label}: missing key {key!r}")

    def typed(key: str, kind: type | tuple[type, ...], what: str) -> Any:
        v = entry[key]
        if isinstance(v, bool) and kind is not bool or not isinstance(v, kind):
            raise InputError(f"{label}: key {key!r}: expected {what}, got {v!r}")
        return v

    def checked(key: str, fn: Any, *args: Any) -> Any:
        try:
            return fn(*args)
        except InputError as e:
            raise InputError(f"{label}: key {key!r}: {e}") from None

    from ..quantities import check_digits

    digits = checked("digits", check_digits, typed("digits", int, "an integer"))
    verify = typed("verify", str, "a string") if "verify" in entry else "full"
    if verify not in ("auto", "full", "fast"):
        raise InputError(f"{label}: key 'verify': {verify!r} is not one of auto, full, fast")
    if verify == "fast" and q != "resistance":
        raise InputError(f"{label}: key 'verify': fast is available for resistance tables "
                         "only (the others check every row at full digits)")
    exact = typed("exact", bool, "true or false") if "exact" in entry else True
    if q == "return-probability":
        lats = typed("lattices", list, "a list of lattice names")
        if not lats or any(not isinstance(x, str) or x not in CUBIC for x in lats) or \
                len(set(lats)) != len(lats):
            raise InputError(f"{label}: key 'lattices': expected distinct names out of "
                             f"{', '.join(CUBIC)}, got {lats!r}")
        return TableSpec(q, digits, lattices=tuple(sorted(lats)), verify=verify)
    from ..lattices import get_lattice

    lattice = checked("lattice", get_lattice, typed("lattice", str, "a lattice name")).name
    if q == "dos":
        from ..energy import parse_energy_grid
        from .make import DOS_METHODS

        if lattice not in DOS_METHODS:
            raise InputError(f"{label}: key 'lattice': no dos table for {lattice}")
        grid = typed("energies", str, "a string A:B:COUNT")
        pts = checked("energies", parse_energy_grid, grid, lattice)
        from ..energy import parse_energy

        _, b, count = grid.split(":")
        canon = f"{pts[0]}:{parse_energy(b, lattice)}:{int(count)}"
        return TableSpec(q, digits, lattice, energies=canon, verify=verify)
    from ..quantities import get_provider
    from .make import check_extent

    energy = None
    if q == "green":
        e = entry["energy"]
        if isinstance(e, float):
            raise InputError(f"{label}: key 'energy': write it as a string (e.g. \"4.5\"): a "
                             "TOML float is binary, not the exact number")
        energy = typed("energy", (str, int), "an exact energy such as \"9/2\"")
    provider = checked("energy" if q == "green" else "quantity", get_provider, lattice, q,
                       None if energy is None else str(energy))
    checked("digits", provider.check_digits, digits)
    extent = checked("extent", check_extent, provider, typed("extent", int, "an integer"))
    canon_e = None if provider.energy is None else str(provider.energy)
    return TableSpec(q, digits, lattice, extent=extent, energy=canon_e, verify=verify,
                     exact=exact)


__all__ = ["LEVELS", "TableSpec", "default_spec", "inputs_hash", "library_versions",
           "load_spec", "parse_spec"]
