"""Joining forces to members: precedence, per-model matching and the report of every gap."""

from __future__ import annotations

import json
import time
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest

from modelcheck.common.table import FORCE_COLUMNS
from modelcheck.ifc.index import build_index
from modelcheck.loads.analysis import forces_from_analysis
from modelcheck.loads.join import ForceReport, join_forces
from modelcheck.loads.properties import forces_from_property
from modelcheck.loads.sources import ForceOptions, LoadTables, SourceForces, ranked, source_messages
from modelcheck.loads.tables import LoadTable, read_load_table
from modelcheck.testing.author import ModelBuilder
from modelcheck.testing.author_analysis import AnalysisWriter
from tests.helpers import KN, axial_force


def members(rows: list[tuple[str, str, str | None]]) -> pd.DataFrame:
    """A member table by hand: (model, global_id, tag)."""
    return pd.DataFrame({"model": [r[0] for r in rows], "global_id": [r[1] for r in rows],
                         "tag": [r[2] for r in rows], "ifc_class": "IfcMember", "name": None})


def loads(rows: list[tuple[str, str, str, float, str]]) -> LoadTable:
    """A load table as read_load_table returns it: (key_kind, key, load_case, N, source)."""
    return LoadTable(pd.DataFrame(rows, columns=["key_kind", "key", "load_case", "axial_force", "source"]), "utf-8")


def forces(rows: list[tuple[str, str, str, float, str]]) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=list(FORCE_COLUMNS))


def join(mem: pd.DataFrame, tables: list[LoadTable] | None = None, prop: pd.DataFrame | None = None,
         analysis: pd.DataFrame | None = None, messages: list[str] | None = None,
         **kw: Any) -> tuple[pd.DataFrame, ForceReport]:
    """join_forces over the shipped sources, as the pipeline hands them over: the load tables
    read by their source (its notes first among the messages), the other two as given."""
    empty = forces([])
    results = [LoadTables().read(None, mem, ForceOptions(tables=tuple(tables or ()))),
               SourceForces("property", prop if prop is not None else empty),
               SourceForces("analysis", analysis if analysis is not None else empty)]
    return join_forces(mem, ranked(results), messages=source_messages(results) + list(messages or []),
                       **kw)


def as_dict(df: pd.DataFrame) -> dict[tuple[str, str, str], tuple[float, str]]:
    return {(m, g, c): (v, s) for m, g, c, v, s in df[list(FORCE_COLUMNS)].itertuples(index=False)}


def test_end_to_end_three_routes_and_precedence(tmp_path: Path) -> None:
    """A: table + analysis + property; B: analysis + property; C: property only; D: nothing."""
    mb = ModelBuilder(schema="IFC4", units="m")
    prop = axial_force(1.0)
    a, b, c, d = (mb.member("IfcMember", tag=t, length=3.0, start=(i, 0, 0), psets=prop if t != "D" else None)
                  for i, t in enumerate("ABCD"))
    an = AnalysisWriter(mb)
    lc1 = an.result_group("LC1")
    for el, fx in ((a, 2.0), (b, 3.0)):
        cm = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=el)
        an.curve_reaction(cm, an.single_force(fx=fx), lc1)
    path = tmp_path / "m.ifc"
    an.write(str(path))
    idx = build_index(path)
    mem = members([(idx.path, e.GlobalId, e.Tag) for e in (a, b, c, d)])
    csv = tmp_path / "export.csv"
    csv.write_text("tag,load_case,axial_force [kN]\nA,LC1,4\nA,LC2,5\n")
    prop_f, prop_msgs = forces_from_property(idx, mem, "MC_MemberForces", "AxialForce", load_case="LC1")
    an_f, an_msgs = forces_from_analysis(idx, mem)
    out, report = join(mem, [read_load_table(csv)], prop_f, an_f, messages=prop_msgs + an_msgs)
    got = as_dict(out)
    # kN file / kN table: values × 1000 (SI prefix kilo)
    assert got[(idx.path, a.GlobalId, "LC1")] == (pytest.approx(4 * KN), f"{csv}:row 2")   # table wins
    assert got[(idx.path, a.GlobalId, "LC2")] == (pytest.approx(5 * KN), f"{csv}:row 3")
    assert got[(idx.path, b.GlobalId, "LC1")][0] == pytest.approx(3 * KN)                     # analysis over property
    assert got[(idx.path, b.GlobalId, "LC1")][1].startswith("IFC analysis")
    assert got[(idx.path, c.GlobalId, "LC1")] == (pytest.approx(1 * KN), "MC_MemberForces.AxialForce (occurrence)")
    assert len(got) == 4
    assert [(m.model, m.global_id) for m in report.missing] == [(idx.path, d.GlobalId)]
    over = {(o.global_id, o.overridden.split(" ")[0]) for o in report.overridden}
    assert over == {(a.GlobalId, "IFC"), (a.GlobalId, "MC_MemberForces.AxialForce"),
                    (b.GlobalId, "MC_MemberForces.AxialForce")}
    assert report.used_by_route == {"table": 2, "analysis": 1, "property": 1}
    assert report.counts["unmatched"] == 0 and report.counts["duplicates"] == 0


def test_precedence_is_per_load_case_by_default() -> None:
    mem = members([("m.ifc", "G1", "H1")])
    table = loads([("global_id", "G1", "LC1", 10.0, "t.csv:row 2")])
    analysis = forces([("m.ifc", "G1", "LC1", 20.0, "IFC analysis #1"), ("m.ifc", "G1", "LC2", 30.0, "IFC analysis #2")])
    prop = forces([("m.ifc", "G1", "default", 40.0, "P.F (occurrence)")])
    out, report = join(mem, [table], prop, analysis)
    assert {c: (v, s) for c, v, s in out[["load_case", "axial_force", "source"]].itertuples(index=False)} == {
        "LC1": (10.0, "t.csv:row 2"), "LC2": (30.0, "IFC analysis #2"), "default": (40.0, "P.F (occurrence)")}
    assert [(o.load_case, o.used, o.overridden) for o in report.overridden] == [("LC1", "t.csv:row 2", "IFC analysis #1")]


def test_precedence_by_member() -> None:
    mem = members([("m.ifc", "G1", "H1"), ("m.ifc", "G2", "H2")])
    table = loads([("global_id", "G1", "LC1", 10.0, "t.csv:row 2")])
    analysis = forces([("m.ifc", "G1", "LC2", 30.0, "IFC analysis #2"), ("m.ifc", "G2", "LC2", 31.0, "IFC analysis #3")])
    out, report = join(mem, [table], None, analysis, precedence_by="member")
    assert sorted(out[["global_id", "load_case"]].itertuples(index=False, name=None)) == [("G1", "LC1"), ("G2", "LC2")]
    assert [(o.global_id, o.load_case, o.used) for o in report.overridden] == [("G1", "LC2", "t.csv:row 2")]


def test_unmatched_rows_are_listed() -> None:
    mem = members([("m.ifc", "G1", "H1")])
    table = loads([("global_id", "G1", "LC1", 1.0, "t.csv:row 2"),
                   ("global_id", "NOPE", "LC1", 2.0, "t.csv:row 3"),
                   ("tag", "H404", "LC1", 3.0, "t.csv:row 4")])
    stray = forces([("m.ifc", "GONE", "LC1", 5.0, "IFC analysis #9")])
    out, report = join(mem, [table], None, stray)
    assert len(out) == 1
    assert [(u.key_kind, u.key, u.source) for u in report.unmatched] == [
        ("global_id", "NOPE", "t.csv:row 3"), ("tag", "H404", "t.csv:row 4"), ("global_id", "GONE", "IFC analysis #9")]
    assert report.counts["unmatched"] == 3


def test_duplicates_first_row_is_used_and_others_listed() -> None:
    mem = members([("m.ifc", "G1", "H1"), ("m.ifc", "G2", "H2")])
    t1 = loads([("global_id", "G1", "LC1", 1.0, "a.csv:row 2"), ("tag", "H1", "LC1", 2.0, "a.csv:row 3"),
                ("tag", "H2", "LC1", 4.0, "a.csv:row 4")])
    t2 = loads([("global_id", "G1", "LC1", 3.0, "b.csv:row 2"), ("global_id", "G1", "LC2", 9.0, "b.csv:row 3")])
    out, report = join(mem, [t1, t2])
    got = {(g, c): v for g, c, v in out[["global_id", "load_case", "axial_force"]].itertuples(index=False)}
    assert got == {("G1", "LC1"): 1.0, ("G1", "LC2"): 9.0, ("G2", "LC1"): 4.0}  # values passed through unchanged
    assert [(d.global_id, d.load_case, d.used, d.ignored) for d in report.duplicates] == [
        ("G1", "LC1", "a.csv:row 2", ("a.csv:row 3", "b.csv:row 2"))]


def test_ambiguous_tag_is_applied_to_none() -> None:
    mem = members([("m.ifc", "G1", "H9"), ("m.ifc", "G2", "H9"), ("m.ifc", "G3", "H3")])
    table = loads([("tag", "H9", "LC1", 1.0, "t.csv:row 2"), ("tag", "H3", "LC1", 2.0, "t.csv:row 3")])
    out, report = join(mem, [table])
    assert out["global_id"].tolist() == ["G3"]
    assert [(a.model, a.tag, a.global_ids, a.source) for a in report.ambiguous] == [
        ("m.ifc", "H9", ("G1", "G2"), "t.csv:row 2")]
    assert sorted(m.global_id for m in report.missing) == ["G1", "G2"]
    assert report.unmatched == ()


def test_matching_is_per_model() -> None:
    mem = members([("rev1.ifc", "G1", "H1"), ("rev2.ifc", "G1", "H1"), ("rev2.ifc", "G2", "H2"),
                   ("rev1.ifc", "G5", "H5"), ("rev2.ifc", "G6", "H5"), ("rev2.ifc", "G7", "H5")])
    table = loads([("tag", "H1", "LC1", 1.0, "t.csv:row 2"), ("tag", "H2", "LC1", 2.0, "t.csv:row 3"),
                   ("global_id", "G1", "LC2", 3.0, "t.csv:row 4"), ("tag", "H5", "LC1", 4.0, "t.csv:row 5")])
    out, report = join(mem, [table])
    got = sorted(out[["model", "global_id", "load_case"]].itertuples(index=False, name=None))
    assert got == [("rev1.ifc", "G1", "LC1"), ("rev1.ifc", "G1", "LC2"), ("rev1.ifc", "G5", "LC1"),
                   ("rev2.ifc", "G1", "LC1"), ("rev2.ifc", "G1", "LC2"), ("rev2.ifc", "G2", "LC1")]
    assert report.unmatched == ()   # H2 only exists in rev2: matched there, not unmatched
    assert [(a.model, a.global_ids) for a in report.ambiguous] == [("rev2.ifc", ("G6", "G7"))]
    assert sorted((m.model, m.global_id) for m in report.missing) == [("rev2.ifc", "G6"), ("rev2.ifc", "G7")]


def test_report_is_json_serialisable_and_carries_messages(tmp_path: Path) -> None:
    csv = tmp_path / "w.csv"
    csv.write_bytes("tag,axial_force [kN]\nHé1,1\nX,2\n".encode("cp1252"))
    mem = members([("m.ifc", "G1", "Hé1"), ("m.ifc", "G2", None)])
    out, report = join(mem, [read_load_table(csv)], messages=["m.ifc: something from a route"])
    assert isinstance(report, ForceReport)
    d = json.loads(json.dumps(report.to_dict()))
    assert d["counts"] == {"unmatched": 1, "duplicates": 0, "ambiguous": 0, "missing": 1, "overridden": 0,
                           "messages": 2}
    assert d["unmatched"] == [{"key_kind": "tag", "key": "X", "load_case": "default", "source": f"{csv}:row 3"}]
    assert d["missing"] == [{"model": "m.ifc", "global_id": "G2"}]
    assert d["used_by_route"] == {"table": 1, "analysis": 0, "property": 0}
    assert any("cp1252" in m for m in d["messages"]) and "m.ifc: something from a route" in d["messages"]
    assert out["axial_force"].tolist() == [pytest.approx(1 * KN)]  # SI prefix kilo


def test_no_routes_at_all() -> None:
    mem = members([("m.ifc", "G1", "H1")])
    out, report = join(mem)
    assert out.empty and list(out.columns) == list(FORCE_COLUMNS)
    assert [m.global_id for m in report.missing] == ["G1"]


def test_large_join_is_vectorised() -> None:
    n = 100_000
    gids = [f"G{i:07d}" for i in range(n)]
    mem = members([("m.ifc", g, f"T{i}") for i, g in enumerate(gids)])
    half = n // 2
    table = loads([("global_id", g, "LC1", float(i), f"t.csv:row {i + 2}") for i, g in enumerate(gids[:half])]
                  + [("tag", f"T{i}", "LC1", float(i), f"t.csv:row {i + 2}") for i in range(half, n)])
    analysis = forces([("m.ifc", g, "LC1", -1.0, "IFC analysis") for g in gids[::2]])
    t0 = time.perf_counter()
    out, report = join(mem, [table], None, analysis)
    elapsed = time.perf_counter() - t0
    assert len(out) == n and report.missing == ()
    assert np.array_equal(np.sort(out["axial_force"].to_numpy()), np.arange(n, dtype=float))  # table wins everywhere
    assert len(report.overridden) == n // 2
    assert elapsed < 3.0, f"{elapsed:.2f} s"
