"""Regeneration: recompute a published table at more digits (or a larger extent) into a new
version, and prove that every old value stands.

For every row of the old version the new value, rounded to the old number of digits, must
give exactly the old string (and the exact forms must be identical).  Double rounding could
make that comparison undecidable when the true value lies within half a unit of the new
last digit from a rounding boundary of the old one; such a row is recomputed at 30 more
digits before it is judged.  Any row that fails is a discrepancy: the new version is not
published, and the run ends with a VerificationError that lists them.  Otherwise the new
version is published (:func:`latgreen.tables.versions.publish`) with a comparison report,
``regen-report.json``, beside its data files, and the catalogue index is updated last.

A lock file, ``ROOT/.regenerate.lock``, keeps two regenerations of one catalogue from
running at once: the second refuses at once.
"""

from __future__ import annotations

import contextlib
import csv
import fcntl
import json
import time
from collections.abc import Iterator
from fractions import Fraction
from pathlib import Path
from typing import Any

from ..errors import InputError, VerificationError
from ..rounding import round_rational
from .make import TableRequest, make_table
from .versions import publish, version_number


@contextlib.contextmanager
def catalogue_lock(root: Path) -> Iterator[None]:
    root.mkdir(parents=True, exist_ok=True)
    path = root / ".regenerate.lock"
    f = open(path, "a+")  # noqa: SIM115 - held for the duration of the block
    try:
        try:
            fcntl.flock(f, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            raise InputError(f"another regeneration of {root} is running (lock {path})") \
                from None
        yield
    finally:
        f.close()


def _read(dir_: Path) -> tuple[dict[str, Any], list[list[str]], int]:
    desc = json.loads((dir_ / "datapackage.json").read_text(encoding="utf-8"))
    coords = len(desc["resources"][0]["schema"]["primaryKey"])
    with open(dir_ / "values.csv", newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))[1:]
    return desc, rows, coords


def _stands(old: str, new: str, old_digits: int, new_digits: int, lattice: str,
            site: tuple[int, ...]) -> bool:
    if old == new == "0":
        return True
    if old == "0" or new == "0":
        return False
    if str(round_rational(Fraction(new), old_digits)) == old:
        return True
    # maybe double rounding: decide with more digits
    import latgreen

    sharper = latgreen.resistance(lattice, site, digits=new_digits + 30).value
    return str(round_rational(Fraction(sharper), old_digits)) == old


def regenerate(version_dir: Path, digits: int, extent: int | None = None,
               progress: bool = True, locked: bool = False) -> dict[str, Any]:
    """Recompute ``version_dir`` at ``digits`` (and ``extent``) as the next version."""
    version_dir = Path(version_dir).resolve()
    if version_number(version_dir.name) is None or not (version_dir /
                                                       "datapackage.json").is_file():
        raise InputError(f"{version_dir} is not a published table version (ROOT/<table>/vN)")
    table_root = version_dir.parent
    root = table_root.parent
    old_desc, old_rows, coords = _read(version_dir)
    names = [f["name"] for f in old_desc["resources"][0]["schema"]["fields"]]
    if names[coords] != "value" or names[coords + 1] != "exact":
        raise InputError(f"{version_dir}: regeneration handles tables of real values (columns "
                         "value, exact, ...) for now")
    lg = old_desc["latgreen"]
    old_digits, old_extent = int(lg["digits"]), int(lg["extent"])
    extent = old_extent if extent is None else extent
    if digits < old_digits or extent < old_extent:
        raise InputError(f"regeneration only adds: digits >= {old_digits} and extent >= "
                         f"{old_extent}")
    if digits == old_digits and extent == old_extent:
        raise InputError(f"{version_dir} already has {digits} digits at extent {extent}: "
                         "nothing to regenerate")
    report: dict[str, Any] = {}
    started = time.monotonic()

    def build(staging: Path, version: str) -> dict[str, Any]:
        return make_table(TableRequest(lg["lattice"], lg["quantity"], extent, digits, staging,
                                       verify="auto", progress=progress, version=version,
                                       with_exact=any(r[coords + 1] for r in old_rows)))

    def check(staging: Path) -> None:
        _, new_rows, _ = _read(staging)
        new = {tuple(r[:coords]): r for r in new_rows}
        bad = []
        for r in old_rows:
            key = tuple(r[:coords])
            nr = new.get(key)
            site = tuple(int(x) for x in key)
            if nr is None:
                bad.append(f"site {site}: missing from the new version")
            elif not _stands(r[coords], nr[coords], old_digits, digits, lg["lattice"], site):
                bad.append(f"site {site}: old {r[coords]} is not the rounding of new "
                           f"{nr[coords]}")
            elif r[coords + 1] and r[coords + 1] != nr[coords + 1]:
                bad.append(f"site {site}: exact form {r[coords + 1]} became {nr[coords + 1]}")
        report.update({
            "old_version": version_dir.name, "table": old_desc["name"],
            "rows_old": len(old_rows), "rows_new": len(new_rows),
            "digits_before": old_digits, "digits_after": digits,
            "extent_before": old_extent, "extent_after": extent,
            "seconds": round(time.monotonic() - started, 1),
            "discrepancies": len(bad), "first_discrepancies": bad[:20],
        })
        if bad:
            raise VerificationError(
                f"{len(bad)} old value(s) of {old_desc['name']} {version_dir.name} do not "
                f"stand; nothing was published. First: {'; '.join(bad[:3])}")
        with open(staging / "regen-report.json", "w", encoding="utf-8", newline="\n") as f:
            json.dump(report, f, indent=2)
            f.write("\n")

    with contextlib.nullcontext() if locked else catalogue_lock(root):
        state, desc = publish(root, old_desc["name"], build, if_changed=False, check=check)
    report["new_version"] = desc.get("version")
    report["state"] = state
    return report
