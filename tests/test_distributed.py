"""The same work units on a Dask distributed cluster give the same bytes."""

from __future__ import annotations

import pytest

from latgreen.tables.make import TableRequest, make_table

distributed = pytest.importorskip("distributed")


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None, host="127.0.0.1") as c:
        yield c


def test_dask_build_equals_serial_build(tmp_path, cluster):
    serial = tmp_path / "serial"
    dask = tmp_path / "dask"
    make_table(TableRequest("square", "resistance", 120, 30, serial, verify="fast",
                            progress=False, workers=1))
    make_table(TableRequest("square", "resistance", 120, 30, dask, verify="fast",
                            progress=False, scheduler=cluster.scheduler_address))
    for name in ("values.csv", "values.json"):
        assert (dask / name).read_bytes() == (serial / name).read_bytes()
    assert not any(p.name.startswith(".") for p in tmp_path.iterdir())  # no checkpoint left


def test_unreachable_scheduler_is_a_clear_error(tmp_path):
    from latgreen.errors import InputError

    with pytest.raises(InputError, match="cannot reach the Dask scheduler"):
        make_table(TableRequest("square", "resistance", 80, 20, tmp_path / "t",
                                verify="fast", progress=False,
                                scheduler="tcp://127.0.0.1:9"))
