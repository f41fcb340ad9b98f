"""The committed catalogue is what the code produces: hashes hold and sampled rows agree
with a fresh computation (so a hand edit, or code that drifted from the tables, fails)."""

from __future__ import annotations

import csv
import hashlib
import json

import pytest

import latgreen
from conftest import ROOT
from latgreen.tables.make import CATALOGUE

TABLES = ROOT / "tables"


@pytest.mark.parametrize(("lattice", "quantity", "extent", "digits"), CATALOGUE)
def test_catalogue_table_is_current(lattice, quantity, extent, digits):
    index = json.loads((TABLES / "catalogue.json").read_text())
    entry = index["tables"][f"{lattice}-{quantity}"]
    d = TABLES / f"{lattice}-{quantity}" / entry["current"]
    desc = json.loads((d / "datapackage.json").read_text())
    assert desc["version"] == entry["current"]
    assert entry["versions"][entry["current"]]["hashes"] == {
        r["path"]: r["hash"] for r in desc["resources"]}
    assert desc["latgreen"]["extent"] == extent and desc["latgreen"]["digits"] == digits
    for res in desc["resources"]:
        data = (d / res["path"]).read_bytes()
        assert res["hash"] == "sha256:" + hashlib.sha256(data).hexdigest(), res["path"]
        assert res["bytes"] == len(data)
    with open(d / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    coords = desc["resources"][0]["schema"]["primaryKey"]
    for r in rows[:: max(1, len(rows) // 25)] + rows[-1:]:
        site = tuple(int(r[c]) for c in coords)
        fresh = latgreen.resistance(lattice, site, digits=digits)
        assert r["value"] == fresh.value, site
        assert r["exact"] == (str(fresh.exact) if fresh.exact is not None else ""), site
