"""Versioned tables and the catalogue index.

Layout: ``ROOT/<table-id>/v<N>/`` holds one published version of a table (the three files of
:mod:`latgreen.tables.export`), N = 1, 2, ... in order of publication.  A published version
is immutable: nothing here ever writes into an existing version directory — a new version is
built in a temporary directory beside it and renamed into place under a fresh number.
``ROOT/catalogue.json`` names the current version of every table with its parameters and
data hashes; it is replaced atomically (written under a temporary name, then renamed), and
only after the version it points to is complete, so a run killed at any moment leaves the
published catalogue exactly as it was.  A version directory that the catalogue does not list
is not published (a run was killed between the rename and the index update); the next
publication simply takes the next number.
"""

from __future__ import annotations

import json
import os
import re
import shutil
from collections.abc import Callable
from pathlib import Path
from typing import Any

from ..errors import InputError

CATALOGUE_FILE = "catalogue.json"
_VERSION = re.compile(r"^v([1-9][0-9]*)$")


def version_number(name: str) -> int | None:
    m = _VERSION.match(name)
    return int(m.group(1)) if m else None


def load_catalogue(root: Path) -> dict[str, Any]:
    path = root / CATALOGUE_FILE
    if not path.is_file():
        return {"name": "latgreen-catalogue", "tables": {}}
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        if not isinstance(data.get("tables"), dict):
            raise ValueError
        return data
    except (OSError, ValueError, AttributeError):
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


def current_dir(root: Path, table_id: str) -> Path | None:
    entry = load_catalogue(root)["tables"].get(table_id)
    return root / table_id / entry["current"] if entry else None


def next_version(table_root: Path) -> int:
    nums = [version_number(p.name) for p in table_root.iterdir()] if table_root.is_dir() else []
    return max([n for n in nums if n is not None], default=0) + 1


def data_hashes(version_dir: Path) -> dict[str, str]:
    desc = json.loads((version_dir / "datapackage.json").read_text(encoding="utf-8"))
    return {r["path"]: r["hash"] for r in desc["resources"]}


def publish(root: Path, table_id: str, build: Callable[[Path, str], dict[str, Any]],
            if_changed: bool = True,
            check: Callable[[Path], None] | None = None) -> tuple[str, dict[str, Any]]:
    """Build a table with ``build(out_dir, version)`` and publish it as the next version of
    ``table_id``; with ``if_changed``, a build whose data equal the current version's is
    discarded; ``check(staging_dir)`` may raise to refuse publication.  Returns
    (state, descriptor) with state "new" / "new version vN" / "data unchanged"."""
    root.mkdir(parents=True, exist_ok=True)
    table_root = root / table_id
    table_root.mkdir(exist_ok=True)
    staging = table_root / f".staging-{os.getpid()}"
    if staging.exists():
        shutil.rmtree(staging)
    n = next_version(table_root)
    try:
        desc = build(staging, f"v{n}")
        cur = current_dir(root, table_id)
        if if_changed and cur is not None and (cur / "datapackage.json").is_file() and \
                data_hashes(cur) == {r["path"]: r["hash"] for r in desc["resources"]}:
            return "data unchanged", desc
        if check is not None:
            check(staging)
        final = table_root / f"v{n}"
        os.rename(staging, final)  # fails rather than overwrite: v<n> is new by construction
        cat = load_catalogue(root)
        first = table_id not in cat["tables"]
        entry = cat["tables"].setdefault(table_id, {"versions": {}})
        lg = desc["latgreen"]
        entry["versions"][f"v{n}"] = {
            "path": f"{table_id}/v{n}", "lattice": lg["lattice"], "quantity": lg["quantity"],
            "extent": lg["extent"], "digits": lg["digits"],
            "created": desc.get("created"),
            "hashes": {r["path"]: r["hash"] for r in desc["resources"]},
        }
        entry["current"] = f"v{n}"
        save_catalogue(root, cat)
        return ("new" if first else f"new version v{n}"), desc
    finally:
        if staging.exists():
            shutil.rmtree(staging, ignore_errors=True)
