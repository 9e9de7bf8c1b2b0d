"""The annotated copy: MC_CheckResult on each checked element, read back with ifcopenshell."""

from __future__ import annotations

import math
import os

import ifcopenshell
import ifcopenshell.util.element as ue
import pandas as pd
import pytest

from modelcheck.common.errors import ModelcheckError, UsageError
from modelcheck.report.annotate import PSET_NAME, annotate_model
from modelcheck.testing.author import ModelBuilder
from tests.helpers import digest
from tests.report_runs import result_row, results_frame


def _model(schema: str = "IFC4", n: int = 3) -> tuple[ModelBuilder, list[str]]:
    mb = ModelBuilder(schema=schema, units="mm")
    steel = mb.material("S235", category="steel", E=210000.0, Fy=235.0, Fu=360.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    els = [mb.member("IfcMember", name=f"Hanger H{i}", profile=rod, material=steel, length=2400.0,
                     predefined_type="MEMBER") for i in range(n)]
    return mb, [e.GlobalId for e in els]


def _results(path, gids):
    m = str(path)
    return results_frame([
        # ratio = demand / capacity (definition): 150/120 = 1.25 governs over 60/120 in LC1
        result_row(m, gids[0], "axial_stress", "LC1", 60.0, 120.0),
        result_row(m, gids[0], "axial_stress", "LC2", 150.0, 120.0),
        result_row(m, gids[0], "slenderness", None, 150.0, 300.0, unit=""),
        result_row(m, gids[1], "axial_stress", "LC1", 90.0, 120.0),
        result_row(m, gids[1], "slenderness", None, 240.0, 300.0, unit=""),
        result_row(m, gids[2], "axial_stress", "LC1", None, None, missing=["area (profile)"]),
        result_row(m, gids[2], "slenderness", None, None, None, unit="", missing=["r_min (profile)"]),
    ])


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3"])
def test_annotated_copy_carries_the_results(tmp_model, tmp_path, schema):
    mb, gids = _model(schema)
    src = tmp_model(mb, "in.ifc")
    before = digest(src)
    out = tmp_path / "out" / "annotated.ifc"
    assert annotate_model(src, out, _results(src, gids)) == 3
    assert digest(src) == before  # the input's bytes are unchanged
    f = ifcopenshell.open(str(out))
    fail, ok, un = (ue.get_psets(f.by_guid(g))[PSET_NAME] for g in gids)
    assert fail["Status"] == "fail" and fail["GoverningCheck"] == "axial_stress"
    assert fail["GoverningLoadCase"] == "LC2" and math.isclose(fail["WorstRatio"], 1.25, rel_tol=1e-12)
    assert "Missing" not in fail
    # worst over checks: slenderness 240/300 = 0.8 beats stress 90/120 = 0.75 (ratio = demand / capacity)
    assert ok["Status"] == "pass" and ok["GoverningCheck"] == "slenderness"
    assert math.isclose(ok["WorstRatio"], 0.8, rel_tol=1e-12) and "GoverningLoadCase" not in ok
    assert un["Status"] == "unchecked" and "WorstRatio" not in un
    assert un["Missing"] == "area (profile); r_min (profile)"
    # the measure types are the ones documented
    pset = next(r.RelatingPropertyDefinition for r in f.by_type("IfcRelDefinesByProperties")
                if r.RelatingPropertyDefinition.Name == PSET_NAME and gids[0] in
                [o.GlobalId for o in r.RelatedObjects])
    types = {p.Name: p.NominalValue.is_a() for p in pset.HasProperties}
    assert types == {"WorstRatio": "IfcRatioMeasure", "Status": "IfcLabel", "GoverningCheck": "IfcLabel",
                     "GoverningLoadCase": "IfcLabel"}


def test_refuses_to_write_over_its_input(tmp_model, tmp_path):
    mb, gids = _model()
    src = tmp_model(mb, "in.ifc")
    before = digest(src)
    res = _results(src, gids)
    other = tmp_path / "sub" / ".." / "in.ifc"  # the same file, spelled differently
    (tmp_path / "sub").mkdir()
    link = tmp_path / "hard.ifc"
    os.link(src, link)
    for target in (src, other, link):
        with pytest.raises(UsageError, match="refusing to write over it"):
            annotate_model(src, target, res)
    assert digest(src) == before


def test_rejects_results_of_another_model(tmp_model, tmp_path):
    mb, gids = _model()
    src = tmp_model(mb, "in.ifc")
    res = results_frame([result_row(str(src), "3" * 22, "axial_stress", "LC1", 1.0, 2.0)])
    with pytest.raises(ModelcheckError, match="3333333333333333333333"):
        annotate_model(src, tmp_path / "out.ifc", res)
    assert not (tmp_path / "out.ifc").exists()


def test_annotating_an_annotated_copy_replaces_its_sets(tmp_model, tmp_path):
    mb, gids = _model()
    src = tmp_model(mb, "in.ifc")
    first = tmp_path / "first.ifc"
    annotate_model(src, first, _results(src, gids))
    second = tmp_path / "second.ifc"
    only_one = results_frame([result_row(str(first), gids[1], "axial_stress", "LC1", 30.0, 120.0)])
    assert annotate_model(first, second, only_one) == 1
    f = ifcopenshell.open(str(second))
    sets = [r for r in f.by_type("IfcRelDefinesByProperties") if r.RelatingPropertyDefinition.Name == PSET_NAME]
    assert len(sets) == 1 and sets[0].RelatedObjects[0].GlobalId == gids[1]
    assert math.isclose(ue.get_psets(f.by_guid(gids[1]))[PSET_NAME]["WorstRatio"], 0.25)  # 30/120


def test_results_of_other_models_in_the_table_are_ignored(tmp_model, tmp_path):
    mb, gids = _model()
    src = tmp_model(mb, "in.ifc")
    res = _results(src, gids)
    other = results_frame([result_row("other.ifc", "3" * 22, "axial_stress", "LC1", 1.0, 2.0)])
    res = pd.concat([res, other], ignore_index=True)
    assert annotate_model(src, tmp_path / "out.ifczip", res) == 3
    f = ifcopenshell.open(str(tmp_path / "out.ifczip"))
    assert ue.get_psets(f.by_guid(gids[0]))[PSET_NAME]["Status"] == "fail"


def test_writes_only_ifc_files(tmp_model, tmp_path):
    mb, gids = _model()
    src = tmp_model(mb, "in.ifc")
    with pytest.raises(UsageError, match=r"\.ifc or \.ifczip"):
        annotate_model(src, tmp_path / "out.json", _results(src, gids))
    with pytest.raises(UsageError, match="folder"):
        annotate_model(src, tmp_path, _results(src, gids))


def test_a_partly_checked_member_carries_no_ratio_of_the_checks_that_ran(tmp_model, tmp_path):
    """A member with one passing check and one that could not run is unchecked (never shown as
    fine, common practice): no WorstRatio a viewer could colour green, Missing says what lacks."""
    mb, gids = _model(n=2)
    src = tmp_model(mb, "in.ifc")
    m = str(src)
    res = results_frame([
        # ratio = demand / capacity (definition): 30/120 = 0.25 would read as comfortably passing
        result_row(m, gids[0], "axial_stress", "LC1", 30.0, 120.0),
        result_row(m, gids[0], "elongation", "LC1", None, None, unit="mm", missing=["E (material)"]),
        # a failing member keeps its ratio (it is shown as failing whatever else it lacks)
        result_row(m, gids[1], "axial_stress", "LC1", 150.0, 120.0),
        result_row(m, gids[1], "elongation", "LC1", None, None, unit="mm", missing=["E (material)"]),
    ])
    out = tmp_path / "out.ifc"
    assert annotate_model(src, out, res) == 2
    f = ifcopenshell.open(str(out))
    part, fail = (ue.get_psets(f.by_guid(g))[PSET_NAME] for g in gids)
    assert part["Status"] == "unchecked" and "WorstRatio" not in part
    assert part["GoverningCheck"] == "elongation" and part["Missing"] == "E (material)"
    assert fail["Status"] == "fail" and math.isclose(fail["WorstRatio"], 1.25, rel_tol=1e-12)
    assert fail["Missing"] == "E (material)"
