"""Regeneration: recompute the current version of a published table at more digits (or, for
a table over sites, a larger extent) into a new version, and prove that every old value
stands.

What is regenerated is always the *current* version of a table of a catalogue
(``ROOT/catalogue.json`` beside ``ROOT/<table-id>/``): an older version, or a directory the
catalogue does not list, is refused with the command to run instead; a table that is not in
a catalogue is refused with the way to publish it (``latgreen publish DIR --into ROOT``).
The table id comes from the directory and the catalogue, and a descriptor whose name,
lattice or quantity disagrees with that place is refused.

For every row of the old version the new value, rounded to the old number of digits, must
give exactly the old string — each of ``value_re`` and ``value_im`` for a green table — and
the exact forms must be identical.  Double rounding could make that comparison undecidable
when the true value lies within half a unit of the new last digit from a rounding boundary
of the old one; such a row is recomputed at 30 more digits before it is judged.  Any row
that fails is a discrepancy: the new version is not published, and the run ends with a
VerificationError that lists them.  The new version is checked at least as the old one was
(``verify``: ``auto`` keeps the old level, ``fast`` is refused after ``full``).  Otherwise it
is published (:func:`latgreen.tables.versions.publish`) with a comparison report,
``regen-report.json``, beside its data files, and the catalogue index is updated last.
"""

from __future__ import annotations

import contextlib
import csv
import datetime as dt
import json
import sys
import time
from collections.abc import Callable
from fractions import Fraction
from pathlib import Path
from typing import Any

from ..errors import InputError, LatgreenError, VerificationError
from ..rounding import round_rational
from .catalogue import Outcome, _message, make_spec_table
from .spec import LEVELS, TableSpec
from .versions import (
    CATALOGUE_FILE,
    CatalogueBusy,
    catalogue_lock,
    check_hashes,
    check_root,
    current_version,
    load_catalogue,
    params,
    publish,
    read_descriptor,
    spec_of,
    version_number,
)

VALUE_COLUMNS = {"green": ("value_re", "value_im")}  # others: ("value",)


def locate(target: Path) -> tuple[Path, str, str]:
    """(catalogue root, table id, current version) of ``target``: ``ROOT/<table-id>/vN`` (the
    current version) or ``ROOT/<table-id>``."""
    target = Path(target)
    if not target.is_dir():
        raise InputError(f"{target} is not a directory (a published version, "
                         "ROOT/<table-id>/vN)")
    target = target.resolve()
    named = version_number(target.name) is not None
    table_root = target.parent if named else target
    root = table_root.parent
    if not (root / CATALOGUE_FILE).is_file():
        raise InputError(f"{target} is not inside a catalogue (no {CATALOGUE_FILE} in "
                         f"{root}); to publish a table made with 'latgreen table', run "
                         "'latgreen publish DIR --into ROOT' and regenerate it there")
    tid = table_root.name
    cat = load_catalogue(root)
    if tid not in cat["tables"]:
        raise InputError(f"{tid} is not a table of the catalogue {root}")
    cur, _ = current_version(root, tid, cat)  # type: ignore[misc]
    if named and target.name != cur:
        listed = sorted(cat["tables"][tid]["versions"], key=lambda v: version_number(v) or 0)
        if target.name in listed:
            raise InputError(f"{target.name} is not the current version of {tid} ({cur} is): "
                             f"regeneration starts from the current version (latgreen regen "
                             f"{table_root / cur})")
        raise InputError(f"{target.name} is not a published version of {tid} (the catalogue "
                         f"lists {', '.join(listed)}): an unlisted version is never used")
    return root, tid, cur


def _read_rows(dir_: Path, desc: dict[str, Any]) -> tuple[list[str], list[list[str]]]:
    try:
        with open(dir_ / "values.csv", newline="", encoding="utf-8") as f:
            rows = list(csv.reader(f))
    except (OSError, UnicodeDecodeError, csv.Error) as e:
        raise InputError(f"{dir_ / 'values.csv'}: not readable ({e})") from None
    if not rows:
        raise InputError(f"{dir_ / 'values.csv'} is empty")
    return rows[0], rows[1:]


def _sharper(quantity: str, lattice: str, key: tuple[str, ...], energy: str | None,
             digits: int) -> tuple[str, ...]:
    """The row's value(s) at ``digits`` by the single-value API."""
    import latgreen

    if quantity == "resistance":
        return (latgreen.resistance(lattice, tuple(map(int, key)), digits=digits).value,)
    if quantity == "green":
        g = latgreen.green(lattice, tuple(map(int, key)), energy=energy, digits=digits)
        return g.value_re, g.value_im
    if quantity == "dos":
        return (latgreen.dos(lattice, energy=key[0], digits=digits).value,)
    return (latgreen.return_probability(key[0], digits=digits).value,)


def _rounds_to(new: str, old: str, old_digits: int) -> bool:
    if old == "0" or new == "0":
        return old == new
    return str(round_rational(Fraction(new), old_digits)) == old


def compare(old_desc: dict[str, Any], old_dir: Path, new_dir: Path, digits: int) -> list[str]:
    """The rows of the old version that do not stand in the new one."""
    lg = old_desc["latgreen"]
    q, lattice, old_digits = lg["quantity"], lg["lattice"], lg["digits"]
    cols = VALUE_COLUMNS.get(q, ("value",))
    keys = old_desc["resources"][0]["schema"]["primaryKey"]
    oh, old_rows = _read_rows(old_dir, old_desc)
    nh, new_rows = _read_rows(new_dir, old_desc)
    try:
        ok_i = [oh.index(k) for k in keys]
        ov_i = [oh.index(c) for c in cols]
        oe_i = oh.index("exact")
        nk_i = [nh.index(k) for k in keys]
        nv_i = [nh.index(c) for c in cols]
        ne_i = nh.index("exact")
    except ValueError:
        raise InputError(f"{old_dir}: values.csv lacks the columns {', '.join(keys + list(cols))}"
                         ", exact") from None
    new = {tuple(r[i] for i in nk_i): r for r in new_rows if len(r) == len(nh)}
    bad: list[str] = []
    for line, r in enumerate(old_rows, 2):
        if len(r) != len(oh):
            bad.append(f"values.csv line {line}: malformed row")
            continue
        key = tuple(r[i] for i in ok_i)
        where = f"{'site' if q in ('resistance', 'green') else keys[0]} " + (
            f"({', '.join(key)})" if len(key) > 1 else key[0])
        nr = new.get(key)
        if nr is None:
            bad.append(f"{where}: missing from the new version")
            continue
        olds = [r[i] for i in ov_i]
        news = [nr[i] for i in nv_i]
        if not all(_rounds_to(n, o, old_digits) for n, o in zip(news, olds, strict=True)):
            try:  # maybe double rounding: decide with more digits
                news = list(_sharper(q, lattice, key, lg.get("energy"), digits + 30))
                fails = not all(_rounds_to(n, o, old_digits)
                                for n, o in zip(news, olds, strict=True))
            except LatgreenError as e:
                fails, news = True, [f"undecided ({e})"]
            if fails:
                bad.append(f"{where}: old {'/'.join(olds)} is not the rounding of new "
                           f"{'/'.join(news)}")
                continue
        if r[oe_i] and r[oe_i] != nr[ne_i]:
            bad.append(f"{where}: exact form {r[oe_i]} became {nr[ne_i]}")
    return bad


def _old_spec(desc: dict[str, Any], old_dir: Path) -> TableSpec:
    c = spec_of(desc)
    if desc["latgreen"]["quantity"] in ("resistance", "green"):
        head, rows = _read_rows(old_dir, desc)
        i = head.index("exact") if "exact" in head else None
        c["exact"] = i is not None and any(len(r) > i and r[i] for r in rows)
    return TableSpec(c["quantity"], c["digits"], c.get("lattice", "cubic"),
                     extent=c.get("extent"), energy=c.get("energy"),
                     energies=c.get("energies"), lattices=tuple(c.get("lattices", ())),
                     verify=c["verify"], exact=c.get("exact", True))


def regenerate(target: Path, digits: int, extent: int | None = None, verify: str = "auto",
               progress: bool = True, locked: bool = False) -> dict[str, Any]:
    """Recompute the current version of the table at ``target`` at ``digits`` (and
    ``extent``) as its next version; returns the comparison report."""
    if verify not in ("auto", "full", "fast"):
        raise InputError(f"verify must be auto, full or fast, got {verify!r}")
    root, _, _ = locate(target)
    with contextlib.nullcontext() if locked else catalogue_lock(root):
        root, tid, cur = locate(target)  # again, under the lock
        return _regenerate(root, tid, cur, digits, extent, verify, progress)


def _regenerate(root: Path, tid: str, cur: str, digits: int, extent: int | None, verify: str,
                progress: bool) -> dict[str, Any]:
    version_dir = root / tid / cur
    old_desc = read_descriptor(version_dir)
    # the old values are what is proved: they must be the published bytes (a file edited
    # after publication, a link or a FIFO in its place is refused before any work)
    check_hashes(version_dir, old_desc)
    lg = old_desc["latgreen"]
    cat = load_catalogue(root)
    rec = cat["tables"][tid]["versions"][cur]
    rec = rec if isinstance(rec, dict) else {}
    from .versions import expected_id

    for key in ("lattice", "quantity"):
        if key in rec and rec[key] != lg[key]:
            raise InputError(f"{version_dir}: the descriptor's {key} {lg[key]!r} disagrees "
                             f"with the catalogue's {rec[key]!r}: refused")
    if old_desc["name"] != tid or expected_id(old_desc) != tid or \
            lg.get("table_id", tid) != tid:
        raise InputError(f"{version_dir}: the descriptor describes {old_desc['name']!r} "
                         f"({expected_id(old_desc)}), not {tid}, the table it is published "
                         "as: refused")
    old = params(old_desc)
    spec = _old_spec(old_desc, version_dir)
    if extent is not None and spec.extent is None:
        raise InputError(f"{tid} is not a table over sites: --extent does not apply "
                         "(regeneration adds digits)")
    new_extent = spec.extent if extent is None else extent
    if digits < old["digits"] or (new_extent or 0) < (spec.extent or 0):
        raise InputError(f"regeneration only adds: digits >= {old['digits']}"
                         + (f" and extent >= {spec.extent}" if spec.extent is not None else ""))
    if digits == old["digits"] and new_extent == spec.extent:
        raise InputError(f"{tid} {cur} already has {digits} digits"
                         + (f" at extent {new_extent}" if new_extent is not None else "")
                         + ": nothing to regenerate")
    if verify == "fast" and LEVELS["fast"] < LEVELS[old["verify"]]:
        raise InputError(f"{tid} {cur} was checked {old['verify']} (every row at full digits): "
                         "a new version is never checked less (use --verify full or auto)")
    if verify == "fast" and spec.quantity != "resistance":
        raise InputError(f"--verify fast is for resistance tables; {tid} checks every row at "
                         "full digits")
    level = old["verify"] if verify == "auto" and old["verify"] == "full" else verify
    new_spec = TableSpec(spec.quantity, digits, spec.lattice, new_extent, spec.energy,
                         spec.energies, spec.lattices, level, spec.exact)
    if new_spec.quantity in ("resistance", "green"):
        from .spec import parse_spec

        new_spec = parse_spec(_toml(new_spec), f"regeneration of {tid}")[0]  # validated
    report: dict[str, Any] = {}
    started = time.monotonic()

    def build(staging: Path, version: str) -> dict[str, Any]:
        return make_spec_table(new_spec, staging, version, progress)

    def check(staging: Path, desc: dict[str, Any]) -> None:
        bad = compare(old_desc, version_dir, staging, digits)
        new = params(desc)
        report.update({
            "table": tid, "old_version": cur,
            "rows_old": old["rows"], "rows_new": new["rows"],
            "digits_before": old["digits"], "digits_after": new["digits"],
            "extent_before": old["extent"], "extent_after": new["extent"],
            "verify_before": old["verify"], "verify_after": new["verify"],
            "min_agreement_before": old["min_agreement_digits"],
            "min_agreement_after": new["min_agreement_digits"],
            "seconds": round(time.monotonic() - started, 1),
            "discrepancies": len(bad), "first_discrepancies": bad[:20],
        })
        if bad:
            raise VerificationError(
                f"{len(bad)} old value(s) of {tid} {cur} do not stand; nothing was "
                f"published. First: {'; '.join(bad[:3])}")
        with open(staging / "regen-report.json", "w", encoding="utf-8", newline="\n") as f:
            json.dump(report, f, indent=2)
            f.write("\n")

    state, desc = publish(root, tid, build, new_spec.canonical(), "regen", if_changed=False,
                          check=check, extra={"regenerated_from": cur})
    report["new_version"] = desc.get("version")
    report["state"] = state
    return report


def _toml(spec: TableSpec) -> str:
    """One [[table]] entry of ``spec`` (to validate it as a spec file would be)."""
    lines = ["[[table]]"]
    for k, v in spec.canonical().items():
        lines.append(f"{k} = {json.dumps(v)}")
    return "\n".join(lines) + "\n"


def regenerate_all(root: Path, digits: int, verify: str = "auto", log: Path | None = None,
                   progress: bool = False,
                   on_outcome: Callable[[Outcome], None] | None = None) -> list[Outcome]:
    """Regenerate every table of the catalogue ``root`` whose current version has fewer than
    ``digits`` digits (the others: "nothing to do"), under the catalogue's lock; one table's
    failure — an error, or a discrepancy — never stops the others.  Logs with times to
    ``log`` (default ``ROOT/regenerate.log``) and stderr."""
    root = check_root(root)
    if not (root / CATALOGUE_FILE).is_file():
        raise InputError(f"{root} is not a catalogue (no {CATALOGUE_FILE})")
    log_path = root / "regenerate.log" if log is None else Path(log)
    try:
        logf = open(log_path, "a", encoding="utf-8")  # noqa: SIM115 - closed below
    except OSError as e:
        raise InputError(f"cannot write the log {log_path}: {e.strerror}") from None

    def say(msg: str) -> None:
        line = f"{dt.datetime.now(dt.UTC).strftime('%Y-%m-%dT%H:%M:%SZ')} {msg}"
        print(line, file=sys.stderr, flush=True)
        logf.write(line + "\n")
        logf.flush()

    outcomes: list[Outcome] = []
    try:
        say(f"start: target {digits} digits in {root}")
        try:
            with catalogue_lock(root):
                for tid in sorted(load_catalogue(root)["tables"]):
                    o = _regen_one(root, tid, digits, verify, progress)
                    say(f"{o.table_id}: {o.state}" + (f": {o.message}" if o.message else ""))
                    outcomes.append(o)
                    if on_outcome is not None:
                        on_outcome(o)
        except CatalogueBusy as e:
            say(f"refused: {e}")
            raise
        bad = [o.state for o in outcomes if o.failed]
        say(f"end: {len(outcomes)} table(s), {bad.count('discrepancy')} discrepancy, "
            f"{bad.count('error')} error")
    finally:
        logf.close()
    return outcomes


def _regen_one(root: Path, tid: str, digits: int, verify: str, progress: bool) -> Outcome:
    try:
        cur = current_version(root, tid)
        assert cur is not None
        v, desc = cur
        have = desc["latgreen"]["digits"]
        if have >= digits:
            return Outcome(tid, "nothing to do", v, desc, f"{v} has {have} digits")
        rep = _regenerate(root, tid, v, digits, None, verify, progress)
        return Outcome(tid, f"{v} ({have} digits) -> {rep['new_version']} ({digits} digits)",
                       rep["new_version"], None,
                       f"{rep['rows_old']} old rows proved, check {rep['verify_before']} -> "
                       f"{rep['verify_after']}, min agreement {rep['min_agreement_before']} -> "
                       f"{rep['min_agreement_after']}, {rep['seconds']} s")
    except VerificationError as e:
        return Outcome(tid, "discrepancy", message=str(e))
    except Exception as e:  # noqa: BLE001 - reported; the other tables go on
        return Outcome(tid, "error", message=_message(e))


def exit_status(outcomes: list[Outcome]) -> int:
    """0 every table done or nothing to do; 1 a discrepancy (nothing published for that
    table); 2 an error in some table (the others were done)."""
    if any(o.state == "discrepancy" for o in outcomes):
        return 1
    return 2 if any(o.state == "error" for o in outcomes) else 0
