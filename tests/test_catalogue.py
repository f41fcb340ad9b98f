"""The committed catalogue is what the code produces: hashes hold and sampled rows agree
with a fresh computation (so a hand edit, or code that drifted from the tables, fails)."""

from __future__ import annotations

import csv
import hashlib
import json

import pytest

from conftest import ROOT
from latgreen.exact.evaluate import evaluate_form
from latgreen.quantities import get_provider
from latgreen.tables.make import CATALOGUE, SCALAR_TABLES

TABLES = ROOT / "tables"


@pytest.mark.parametrize("entry", CATALOGUE, ids=lambda e: f"{e[0]}-{e[1]}")
def test_catalogue_table_is_current(entry):
    lattice, quantity, extent, digits = entry[:4]
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
    provider = get_provider(lattice, quantity)
    for r in rows[:: max(1, len(rows) // 25)] + rows[-1:]:
        site = tuple(int(r[c]) for c in coords)
        # the exact path of the single-value API (its quadrature check is tested elsewhere
        # and costs seconds per site on the 3-D lattices)
        form = provider.exact_form(site) if any(site) else None
        value = str(evaluate_form(form, digits).rounded) if form is not None else "0"
        assert r["value"] == value, site
        assert r["exact"] == (str(form) if form is not None else "0"), site
        if form is not None:
            assert r["exact_how"] == form.how, site


def test_catalogue_entries_are_documented():
    text = (TABLES / "README.md").read_text()
    for lattice, quantity, *_ in CATALOGUE:
        assert f"`{lattice}-{quantity}`" in text
    for quantity, *_ in SCALAR_TABLES:
        assert f"`cubic-{quantity}`" in text


@pytest.mark.parametrize("entry", SCALAR_TABLES, ids=lambda e: e[0])
def test_one_row_per_lattice_tables_are_current(entry):
    import latgreen

    quantity, lattices, digits = entry
    index = json.loads((TABLES / "catalogue.json").read_text())
    current = index["tables"][f"cubic-{quantity}"]["current"]
    d = TABLES / f"cubic-{quantity}" / current
    desc = json.loads((d / "datapackage.json").read_text())
    for res in desc["resources"]:
        data = (d / res["path"]).read_bytes()
        assert res["hash"] == "sha256:" + hashlib.sha256(data).hexdigest(), res["path"]
    with open(d / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    assert [r["lattice"] for r in rows] == sorted(lattices)
    for r in rows:
        fresh = latgreen.return_probability(r["lattice"], digits=digits)
        assert r["value"] == fresh.value and r["exact"] == str(fresh.exact)
