"""Checking models on a Dask cluster: a LocalCluster started here stands in for a real one."""

from __future__ import annotations

import os
import time
import uuid

import distributed
import pandas as pd
import pytest

from modelcheck.common.errors import UsageError
from modelcheck.core.check import check_model
from modelcheck.core.model import ForceOptions
from modelcheck.loads.tables import LoadTable
from modelcheck.run.cluster import run_on_cluster
from modelcheck.testing.author import ModelBuilder


def echo_task(path, ruleset_ref, forces, validate, units="model"):
    """Stand-in for check_model: what arrived on the worker, and a fresh token per run."""
    rows = int(sum(len(t.frame) for t in forces.tables))
    return {"path": path, "ruleset": ruleset_ref, "rows": rows, "validate": validate, "units": units,
            "pid": os.getpid(),
            "token": uuid.uuid4().hex}


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=True,
                                  dashboard_address=":0") as c:
        yield c


def test_results_come_back_in_input_order_from_another_process(cluster):
    table = LoadTable(pd.DataFrame({"key": ["H1"], "source": ["loads.csv:2"]}), "utf-8")
    ticks = []
    out = run_on_cluster(cluster.scheduler_address, ["b.ifc", "a.ifc", "b.ifc"], "steel-asd-us",
                         ForceOptions(tables=(table,)), True, progress=lambda: ticks.append(1),
                         task=echo_task, units="US")
    assert [o["path"] for o in out] == ["b.ifc", "a.ifc", "b.ifc"]
    assert all(o["ruleset"] == "steel-asd-us" and o["rows"] == 1 and o["validate"] and o["units"] == "US"
               for o in out)
    assert all(o["pid"] != os.getpid() for o in out)  # the work ran on the worker process
    assert out[0]["token"] != out[2]["token"]          # the same path twice runs twice (pure=False)
    assert len(ticks) == 3


def _rod_model(path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S235", category="steel", E=210000.0, Fy=235.0, Fu=360.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    for i in range(3):
        mb.member("IfcMember", name=f"Hanger H{i}", profile=rod, material=steel, length=2400.0 + 100 * i,
                  predefined_type="MEMBER")
    mb.write(str(path))


def test_check_model_on_the_cluster_equals_a_local_run(cluster, tmp_path):
    good, bad = tmp_path / "good.ifc", tmp_path / "bad.ifc"
    _rod_model(good)
    bad.write_text("not a model\n", encoding="utf-8")
    paths = [str(good), str(bad)]
    remote = run_on_cluster(cluster.scheduler_address, paths, "steel-asd-us", None, False)
    local = [check_model(p, "steel-asd-us", None, False) for p in paths]
    assert [r.data.path for r in remote] == paths
    assert remote[1].data.error == local[1].data.error and "bad.ifc" in remote[1].data.error
    assert remote[1].results is None
    assert remote[0].data.member_count == local[0].data.member_count == 3
    pd.testing.assert_frame_equal(remote[0].results, local[0].results)


def test_unreachable_scheduler_is_a_usage_error_naming_it():
    t0 = time.monotonic()
    with pytest.raises(UsageError, match=r"tcp://127\.0\.0\.1:9"):
        run_on_cluster("tcp://127.0.0.1:9", ["a.ifc"], "steel-asd-us", None, False, timeout=1.0)
    assert time.monotonic() - t0 < 15
