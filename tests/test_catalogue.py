"""The committed catalogue is what the default spec and the code produce: every spec entry is
built and up to date (its current version records this spec, software version and a
consistent inputs hash, or exceeds the spec), the hashes hold, and sampled rows agree with a
fresh computation (so a hand edit, or code that drifted from the tables, fails)."""

from __future__ import annotations

import csv
import hashlib
import json

import pytest

import latgreen
from conftest import ROOT
from latgreen.exact.evaluate import evaluate_form
from latgreen.quantities import get_provider
from latgreen.tables.spec import default_spec, inputs_hash
from latgreen.tables.versions import exceeds, params

TABLES = ROOT / "tables"
SPECS = default_spec()


def _current(spec):
    index = json.loads((TABLES / "catalogue.json").read_text())
    entry = index["tables"][spec.table_id]
    d = TABLES / spec.table_id / entry["current"]
    desc = json.loads((d / "datapackage.json").read_text())
    with open(d / "values.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    return entry, d, desc, rows


@pytest.mark.parametrize("spec", SPECS, ids=lambda s: s.table_id)
def test_catalogue_table_is_built_up_to_date_and_intact(spec):
    entry, d, desc, rows = _current(spec)
    rec = entry["versions"][entry["current"]]
    assert desc["version"] == entry["current"] and desc["name"] == spec.table_id
    assert rec["hashes"] == {r["path"]: r["hash"] for r in desc["resources"]}
    for res in desc["resources"]:
        data = (d / res["path"]).read_bytes()
        assert res["hash"] == "sha256:" + hashlib.sha256(data).hexdigest(), res["path"]
        assert res["bytes"] == len(data)
    assert rec["software"] == latgreen.__version__
    assert rec["inputs_hash"] == inputs_hash(rec["spec"], desc["latgreen"]["libraries"])
    if rec["spec"] != spec.canonical():  # only a regenerated version may differ
        from latgreen.tables.catalogue import spec_params

        assert exceeds(params(desc), spec_params(spec)), rec["spec"]
    lg = desc["latgreen"]
    assert lg["digits"] >= spec.digits and len(rows) == lg["cross_check"]["rows"]
    assert lg["cross_check"]["rows_checked_at_full_digits"] >= len(rows) - 1  # all but 0


@pytest.mark.parametrize("spec", [s for s in SPECS if s.quantity == "resistance"],
                         ids=lambda s: s.table_id)
def test_resistance_rows_agree_with_the_code(spec):
    _, _, desc, rows = _current(spec)
    digits = desc["latgreen"]["digits"]
    coords = desc["resources"][0]["schema"]["primaryKey"]
    provider = get_provider(spec.lattice, spec.quantity)
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


@pytest.mark.parametrize("spec", [s for s in SPECS if s.quantity == "green"],
                         ids=lambda s: s.table_id)
def test_green_rows_agree_with_the_code(spec):
    """Every row's components and exact form, from the provider's forms alone (the check
    costs seconds per row on the cubic lattices and ran when the table was built)."""
    _, _, desc, rows = _current(spec)
    lg = desc["latgreen"]
    assert lg["energy"] == spec.energy
    provider = get_provider(spec.lattice, "green", spec.energy)
    coords = desc["resources"][0]["schema"]["primaryKey"]
    fresh = {}
    for _, eb in provider.evaluated_batches(lg["extent"], lg["digits"], True):
        exacts = eb.texts[0] if eb.texts is not None else [
            "" if f is None else str(f) for f in (eb.forms or [None] * len(eb.sites))]
        for k, st in enumerate(eb.sites):
            fresh[st] = (eb.rounded.values[k], eb.imag.values[k], exacts[k])
    assert len(fresh) == len(rows)
    for r in rows:
        site = tuple(int(r[c]) for c in coords)
        assert (r["value_re"], r["value_im"], r["exact"]) == fresh[site], site


@pytest.mark.parametrize("spec", [s for s in SPECS if s.quantity == "dos"],
                         ids=lambda s: s.table_id)
def test_dos_grid_and_a_row_agree_with_the_code(spec):
    _, _, desc, rows = _current(spec)
    assert desc["latgreen"]["energies"] == spec.energies
    count = int(spec.energies.split(":")[2])
    assert len(rows) == count
    r = rows[len(rows) // 2]
    fresh = latgreen.dos(spec.lattice, energy=r["energy"], digits=desc["latgreen"]["digits"])
    assert r["value"] == fresh.value


def test_catalogue_entries_are_documented():
    text = (TABLES / "README.md").read_text()
    for spec in SPECS:
        assert f"`{spec.table_id}`" in text, spec.table_id
    # the frictionless command names a version directory
    assert "frictionless validate tables/<id>/v<N>/datapackage.json" in text


def test_catalogue_lists_nothing_but_the_spec():
    index = json.loads((TABLES / "catalogue.json").read_text())
    assert sorted(index["tables"]) == sorted(s.table_id for s in SPECS)


@pytest.mark.parametrize("spec", [s for s in SPECS if s.quantity == "return-probability"],
                         ids=lambda s: s.table_id)
def test_one_row_per_lattice_tables_are_current(spec):
    _, _, desc, rows = _current(spec)
    assert [r["lattice"] for r in rows] == sorted(spec.lattices)
    for r in rows:
        fresh = latgreen.return_probability(r["lattice"], digits=desc["latgreen"]["digits"])
        assert r["value"] == fresh.value and r["exact"] == str(fresh.exact)


def test_readme_lists_each_table_command_once():
    lines = [ln for ln in (ROOT / "README.md").read_text().splitlines()
             if ln.startswith("$ latgreen table ")]
    outs = [ln.split("--out")[1].split()[0] for ln in lines]
    assert len(outs) == len(set(outs)), "a second run into the same --out directory fails"
