"""Building a catalogue from its spec (:mod:`latgreen.tables.spec`): every table computed,
cross-checked and published as a new version only where its data changed.

Per table, in order:

1. the current version already exceeds the spec (at least its digits, extent and check
   level, more of one of them — e.g. after a regeneration): kept, "current vN exceeds the
   spec";
2. the current version's record has this spec, this software version and this inputs hash:
   "up to date", nothing computed (``rebuild`` computes anyway);
3. otherwise the table is computed — at the spec raised to the current version where that
   is ahead in some respect, since versions only move forward — and published when its data
   bytes differ from the current version's ("data unchanged" otherwise).

One table's failure (an error, a disagreement between methods) never stops the others.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .._version import __version__
from ..errors import VerificationError
from .spec import TableSpec, inputs_hash


@dataclass
class Outcome:
    """One table of a build or regeneration run."""

    table_id: str
    state: str  # new / new version vN / data unchanged / up to date / ... / error / discrepancy
    version: str | None = None
    descriptor: dict[str, Any] | None = None
    message: str = ""

    @property
    def failed(self) -> bool:
        return self.state in ("error", "discrepancy")


def make_return_probability_table(out: Path, lattices: tuple[str, ...], digits: int,
                                  force: bool = False, version: str = "1") -> dict[str, Any]:
    """Polya's return probabilities, one row per lattice (sorted by name), written through
    the same export as the site tables: each value by the closed form, confirmed by the
    quadrature of G(z; 0) to all its digits."""
    from ..quantities import check_digits, return_probability
    from .export import Keys, check_output_dir, write_table
    from .render import Chunk

    digits = check_digits(digits)
    check_output_dir(Path(out), force)
    csv, js, agrees = [], [], []
    for lat in sorted(lattices):
        r = return_probability(lat, digits)
        row = (lat, r.value, str(r.exact), r.exact.how if r.exact else "", r.error_bound,
               ";".join(r.methods), r.agreement_digits)
        csv.append(",".join(map(str, row)) + "\n")
        js.append(',\n["{}","{}","{}","{}","{}","{}",{}]'.format(*row))
        agrees.append(r.agreement_digits)
    keys = sorted(lattices)
    chunk = Chunk(csv="".join(csv), json="".join(js), rows=len(keys), first=(keys[0],),
                  last=(keys[-1],), min_agreement=min(agrees), full_rows=len(keys))
    meta = {"lattice": "cubic", "quantity": "return-probability", "extent": None,
            "digits": digits, "verify": "full", "version": version,
            "region": f"one row per lattice: {', '.join(keys)}",
            "methods": {"primary": "closed form P = 1 - 1/(z G(z; 0)) with G(z; 0) from "
                                   "Watson's integral in Gamma values, evaluated in fixed "
                                   "point with a proven error term",
                        "check": "polar Gauss-Legendre quadrature of G(z; 0) at full digits"}}
    keys_t = Keys("cubic", ("lattice",), "lattice name (conventions in the README)",
                  f"Polya's return probability of the random walk on the {', '.join(keys)} "
                  f"lattices, {digits} digits")
    return write_table(Path(out), keys_t, "return-probability", [chunk], meta, force=force)


def make_spec_table(spec: TableSpec, out: Path, version: str,
                    progress: bool = True) -> dict[str, Any]:
    """Compute, cross-check and write the table ``spec`` declares into ``out``."""
    from .make import TableRequest, make_dos_table, make_table

    if spec.quantity == "return-probability":
        return make_return_probability_table(out, spec.lattices, spec.digits, version=version)
    if spec.quantity == "dos":
        assert spec.energies is not None
        return make_dos_table(spec.lattice, spec.energies, spec.digits, out,
                              progress=progress, version=version)
    assert spec.extent is not None
    return make_table(TableRequest(spec.lattice, spec.quantity, spec.extent, spec.digits, out,
                                   verify=spec.verify, with_exact=spec.exact,
                                   progress=progress, version=version, energy=spec.energy))


def spec_params(spec: TableSpec) -> dict[str, Any]:
    """A spec in the terms of :func:`latgreen.tables.versions.params`."""
    p: dict[str, Any] = {"digits": spec.digits, "extent": spec.extent,
                         "verify": spec.resolved_verify()}
    if spec.quantity == "return-probability":
        p["lattices"] = list(spec.lattices)
    return p


def build_one(root: Path, spec: TableSpec, rebuild: bool = False,
              progress: bool = True) -> Outcome:
    """Steps 1-3 of the module docstring for one table; the caller holds the lock."""
    from .versions import current_version, exceeds, load_catalogue, params, publish

    tid = spec.table_id
    cat = load_catalogue(root)
    cur = current_version(root, tid, cat)
    effective = spec
    if cur is not None:
        cur_v, cur_desc = cur
        have = params(cur_desc)
        same_grid = have.get("energies") == spec.energies
        if not rebuild and same_grid and exceeds(have, spec_params(spec)):
            return Outcome(tid, f"current {cur_v} exceeds the spec", cur_v, cur_desc)
        rec = cat["tables"][tid]["versions"].get(cur_v) or {}
        canon = spec.canonical()
        if not rebuild and rec.get("spec") == canon and rec.get("software") == __version__ \
                and rec.get("inputs_hash") == inputs_hash(canon):
            return Outcome(tid, "up to date", cur_v, cur_desc)
        effective = spec.at_least(have["digits"], have.get("extent"), have["verify"])
        if effective.quantity == "return-probability":
            effective = TableSpec(spec.quantity, effective.digits, lattices=tuple(sorted(
                set(spec.lattices) | set(have.get("lattices", ())))), verify=spec.verify)

    def build(out: Path, version: str) -> dict[str, Any]:
        return make_spec_table(effective, out, version, progress)

    state, desc = publish(root, tid, build, effective.canonical(), "build")
    version = desc.get("version") if state != "data unchanged" else \
        current_version(root, tid)[0]  # type: ignore[index]
    if effective != spec and state != "data unchanged":
        state += " (raised to the current version's digits/extent/check)"
    return Outcome(tid, state, version, desc)


def build_catalogue(root: Path, specs: list[TableSpec], rebuild: bool = False,
                    progress: bool = True, on_outcome: Any = None) -> list[Outcome]:
    """Build every table of ``specs`` into the catalogue ``root`` (under its lock); one
    table's failure is recorded in its :class:`Outcome` and the next table goes on."""
    from .versions import catalogue_lock, check_root, load_catalogue

    root = check_root(root, create=True)
    out = []
    with catalogue_lock(root):
        load_catalogue(root)  # an unreadable index stops the run before any work
        for spec in specs:
            try:
                o = build_one(root, spec, rebuild, progress)
            except VerificationError as e:
                o = Outcome(spec.table_id, "discrepancy", message=str(e))
            except Exception as e:  # noqa: BLE001 - reported; the other tables go on
                o = Outcome(spec.table_id, "error", message=_message(e))
            if on_outcome is not None:
                on_outcome(o)
            out.append(o)
    return out


def _message(e: BaseException) -> str:
    from ..errors import LatgreenError

    if isinstance(e, LatgreenError):
        return str(e)
    if isinstance(e, OSError):
        return f"{e.strerror or e}: {e.filename or ''}".rstrip(": ")
    return f"{type(e).__name__}: {e} (a bug: please report it)"


__all__ = ["Outcome", "build_catalogue", "build_one", "make_return_probability_table",
           "make_spec_table"]
