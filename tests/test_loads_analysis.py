"""Forces from IFC structural-analysis results: local/global forces, end forces, load cases."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from modelcheck.common.table import FORCE_COLUMNS
from modelcheck.common.units import Q_
from modelcheck.ifc.index import ModelIndex, build_index
from modelcheck.loads.analysis import forces_from_analysis
from modelcheck.testing.author import ModelBuilder
from modelcheck.testing.author_analysis import AnalysisWriter
from tests.helpers import KN, LBF_NIST
from tests.tables import members_of


def setup(schema: str = "IFC4", units: str = "m", **kw: Any) -> tuple[ModelBuilder, AnalysisWriter, Any]:
    mb = ModelBuilder(schema=schema, units=units, **kw)
    steel = mb.material("S355", category="steel")
    return mb, AnalysisWriter(mb), steel


def profile(mb: ModelBuilder) -> Any:
    f = mb.f
    return f.createIfcCircleProfileDef("AREA", "RD20", f.createIfcAxis2Placement2D(
        f.createIfcCartesianPoint((0.0, 0.0)), None), 0.01)


def write(tmp_path: Path, an: AnalysisWriter) -> ModelIndex:
    path = tmp_path / "a.ifc"
    an.write(str(path))
    return build_index(path)


def table(forces: pd.DataFrame) -> dict[tuple[str, str], float]:
    return {(g, c): v for g, c, v in forces[["global_id", "load_case", "axial_force"]].itertuples(index=False)}


@pytest.mark.parametrize("schema", ["IFC4", "IFC4X3"])
def test_local_force_x_and_load_case_names(tmp_path: Path, schema: str) -> None:
    mb, an, steel = setup(schema)
    rod = mb.member("IfcMember", tag="H1", profile=profile(mb), material=steel, length=3.0)
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=rod, profile=profile(mb), material=steel)
    dead = an.load_group("LC1 dead")
    # 0.25 kN across: 2 % of the force, within what a pin-ended member's self-weight gives
    an.curve_reaction(cm, an.single_force(fx=12.5, fz=0.25), an.result_group("LC1 dead results", dead))
    an.curve_reaction(cm, an.single_force(fx=-7.0), an.result_group(None, an.load_group("LC2 live")))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod))
    assert list(forces.columns) == list(FORCE_COLUMNS)
    assert table(forces) == {
        (rod.GlobalId, "LC1 dead results"): pytest.approx(12.5 * KN),  # ForceX only; ForceZ is a little shear
        (rod.GlobalId, "LC2 live"): pytest.approx(-7.0 * KN),          # load group's name when the group has none
    }
    assert all(s.startswith("IFC analysis IfcStructuralCurveReaction #") for s in forces["source"])
    assert msgs == []


# 3-4-5 right triangle (common practice): the member runs along (3, 0, 4) / 5.
@pytest.mark.parametrize("force, expected_kn", [
    ((30.0, 0.0, 40.0), 50.0),    # along the axis: |F| = 50
    ((30.0, 1.0, 40.0), 50.0),    # the y part, 2 % of the force, is a little shear: N = 30·3/5 + 40·4/5
    ((-6.0, 0.2, -8.0), -10.0),   # against the axis: compression; the y part (2 %) is a little shear
])
def test_global_force_projected_on_inclined_member(tmp_path: Path, force: tuple[float, float, float],
                                                   expected_kn: float) -> None:
    mb, an, steel = setup()
    brace = mb.member("IfcMember", tag="B1", profile=profile(mb), material=steel, length=5.0, direction=(3, 0, 4))
    cm = an.curve_member((1.0, 2.0, 0.0), (4.0, 2.0, 4.0), physical=brace)
    an.curve_reaction(cm, an.single_force(*force), an.result_group("LC1"), global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, brace))
    assert forces["axial_force"].iloc[0] == pytest.approx(expected_kn * KN, abs=1e-9)
    assert "global force on member axis" in forces["source"].iloc[0]
    assert msgs == []


def test_global_force_uses_the_analysis_models_axes(tmp_path: Path) -> None:
    """Edge and force both in the analysis model's axes, rotated 90° about Z against the world."""
    mb, an, steel = setup()
    f = mb.f
    an.placement.RelativePlacement = f.createIfcAxis2Placement3D(
        f.createIfcCartesianPoint((10.0, 0.0, 0.0)), f.createIfcDirection((0.0, 0.0, 1.0)),
        f.createIfcDirection((0.0, 1.0, 0.0)))
    cm = an.curve_member((0, 0, 0), (3.0, 0.0, 4.0))
    an.curve_reaction(cm, an.single_force(30.0, 0.0, 40.0), an.result_group("LC1"), global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, _ = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(50.0 * KN)  # 3-4-5 triangle (common practice)


def test_oriented_edge_reversed_flips_local_x(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (3.0, 0.0, 4.0), oriented=False)
    an.curve_reaction(cm, an.single_force(30.0, 0.0, 40.0), an.result_group("LC1"), global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, _ = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(-50.0 * KN)  # 3-4-5, x now runs end -> start


@pytest.mark.parametrize("connect_to", ["curve member without topology", "physical element"])
def test_global_force_axis_from_physical_member(tmp_path: Path, connect_to: str) -> None:
    mb, an, steel = setup()
    brace = mb.member("IfcMember", tag="B1", profile=profile(mb), material=steel, length=5.0, direction=(3, 0, 4))
    target = brace
    if connect_to != "physical element":
        target = an.curve_member((0, 0, 0), (3, 0, 4), physical=brace, with_topology=False)
    an.curve_reaction(target, an.single_force(6.0, 0.0, 8.0), an.result_group("LC1"),
                      global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, brace))
    assert forces["axial_force"].iloc[0] == pytest.approx(10.0 * KN)  # 6·3/5 + 8·4/5, 3-4-5 triangle (common practice)
    assert "axis from Axis of IfcMember" in forces["source"].iloc[0]
    assert msgs == []


def test_global_force_without_any_axis_is_reported(tmp_path: Path) -> None:
    mb, an, steel = setup()
    el = mb.member("IfcMember", tag="X", length=None, axis=False, body=None)
    an.curve_reaction(el, an.single_force(0.0, 0.0, 10.0), an.result_group("LC1"), global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, el))
    assert forces.empty
    assert len(msgs) == 1 and "cannot be found" in msgs[0]


@pytest.mark.parametrize("start, end, expected_kn", [
    ((-20.0, 0, 0), (20.0, 0, 0), 20.0),     # tie: pulled outwards at both ends -> tension
    ((15.0, 0, 0), (-15.0, 0, 0), -15.0),    # strut: pushed inwards -> compression
    ((-20.0, 0, 0), (20.1, 0, 0), 20.1),     # 0.5 % apart: within the 1 % tolerance, larger used
])
def test_end_forces_agreeing(tmp_path: Path, start: Any, end: Any, expected_kn: float) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    an.curve_reaction(cm, an.end_forces(start, end, 3.0), an.result_group("LC1"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    # member end-force convention (common practice): N = -Fx(start) = +Fx(end)
    assert forces["axial_force"].iloc[0] == pytest.approx(expected_kn * KN)
    assert "end forces" in forces["source"].iloc[0]
    assert msgs == []


def test_end_forces_disagreeing_are_reported(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    an.curve_reaction(cm, an.end_forces((-20.0, 0, 0), (25.0, 0, 0), 3.0), an.result_group("LC1"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(25.0 * KN)  # larger of N = 20 and N = 25 (kN)
    assert len(msgs) == 1
    assert "disagree" in msgs[0] and cm.GlobalId in msgs[0] and "20000" in msgs[0] and "25000" in msgs[0]


def test_end_forces_global_on_inclined_member(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (3.0, 0.0, 4.0))
    an.curve_reaction(cm, an.end_forces((-30.0, 0, -40.0), (30.0, 0, 40.0), 5.0), an.result_group("LC1"),
                      global_or_local="GLOBAL_COORDS")
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(50.0 * KN)  # 3-4-5 triangle (common practice)
    assert msgs == []


def test_end_forces_known_by_name_without_locations(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    end = an.single_force(9.0, name="end")
    start = an.single_force(-9.0, name="start")
    an.curve_reaction(cm, an.configuration([end, start], None), an.result_group("LC1"))
    cm2 = an.curve_member((1, 0, 0), (1, 0, 3.0))
    an.curve_reaction(cm2, an.configuration([an.single_force(-9.0, name="a"), an.single_force(9.0, name="b")], None),
                      an.result_group("LC2"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm, cm2))
    assert table(forces) == {(cm.GlobalId, "LC1"): pytest.approx(9.0 * KN)}  # N = -Fx(start), common practice
    assert len(msgs) == 1 and "start" in msgs[0] and "unknown" in msgs[0]


def test_linear_distribution_is_internal_force_not_end_forces(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    cfg = an.configuration([an.single_force(10.0), an.single_force(12.0)], [0.0, 3.0])
    an.curve_reaction(cm, cfg, an.result_group("LC1"), predefined_type="LINEAR")
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(12.0 * KN)  # largest N along the member
    assert "LINEAR" in forces["source"].iloc[0] and "largest of 2" in forces["source"].iloc[0]
    assert msgs == []


def test_ifc2x3_point_reaction_in_newton_file(tmp_path: Path) -> None:
    mb, an, steel = setup("IFC2X3", "mm")
    rod = mb.member("IfcMember", tag="H1", profile=profile(mb), material=steel, length=3000.0)
    cm = an.curve_member((0, 0, 0), (0, 0, 3000.0), physical=rod, material=steel)
    an.point_reaction(cm, an.single_force(fx=-4200.0), an.result_group("ULS", an.load_group("ULS")),
                      at=(0, 0, 1500.0))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod))
    assert table(forces) == {(rod.GlobalId, "ULS"): pytest.approx(-4200.0)}  # file unit: newton
    assert "IfcStructuralPointReaction" in forces["source"].iloc[0]
    assert msgs == []
    with pytest.raises(ValueError, match="IFC2X3 has no IfcStructuralCurveReaction"):
        an.curve_reaction(cm, an.single_force(1.0), None)


def test_kip_file_against_nist_and_pint(tmp_path: Path) -> None:
    mb, an, steel = setup("IFC4", "inch-kip")
    cm = an.curve_member((0, 0, 0), (0, 0, 96.0))
    an.curve_reaction(cm, an.single_force(fx=2.5), an.result_group("D"))
    idx = write(tmp_path, an)
    forces, _ = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(2500 * LBF_NIST, rel=1e-12)  # NIST SP 811
    assert forces["axial_force"].iloc[0] == pytest.approx(Q_(2.5, "kip").to("N").magnitude, rel=1e-12)  # pint


def test_unassigned_curve_member_is_keyed_by_its_own_global_id(tmp_path: Path) -> None:
    mb, an, steel = setup()
    rod = mb.member("IfcMember", tag="H1", profile=profile(mb), material=steel, length=3.0)
    assigned = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=rod)
    alone = an.curve_member((5, 0, 0), (5, 0, 3.0), name="A7", profile=profile(mb), material=steel)
    lc = an.result_group("LC1")
    an.curve_reaction(assigned, an.single_force(fx=1.0), lc)
    an.curve_reaction(alone, an.single_force(fx=2.0), lc)
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod, alone))
    assert table(forces) == {(rod.GlobalId, "LC1"): pytest.approx(1.0 * KN),     # SI prefix kilo
                             (alone.GlobalId, "LC1"): pytest.approx(2.0 * KN)}   # SI prefix kilo
    assert assigned.GlobalId not in set(forces["global_id"])
    assert msgs == []


def test_no_forceunit_gives_no_forces_and_a_message(tmp_path: Path) -> None:
    mb, an, steel = setup(force_unit=False)
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    an.curve_reaction(cm, an.single_force(fx=1.0), an.result_group("LC1"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces.empty
    assert len(msgs) == 1 and "no FORCEUNIT" in msgs[0]


def test_result_in_no_group_is_default_case_with_message(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    r = an.curve_reaction(cm, an.single_force(fx=3.0), None)
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert table(forces) == {(cm.GlobalId, "default"): pytest.approx(3.0 * KN)}  # SI prefix kilo
    assert len(msgs) == 1 and "no result group" in msgs[0] and f"#{r.id()}" in msgs[0]


def test_results_of_non_members_are_counted(tmp_path: Path) -> None:
    mb, an, steel = setup()
    beam = mb.member("IfcBeam", tag="BM1", profile=profile(mb), material=steel, length=6.0, direction=(1, 0, 0))
    cm = an.curve_member((0, 0, 0), (6.0, 0, 0), physical=beam)
    an.curve_reaction(cm, an.single_force(fx=1.0), an.result_group("LC1"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path))
    assert forces.empty
    assert len(msgs) == 1 and "not in the member table" in msgs[0] and beam.GlobalId in msgs[0]


def test_several_results_for_one_case_take_the_largest(tmp_path: Path) -> None:
    mb, an, steel = setup()
    rod = mb.member("IfcMember", tag="H1", profile=profile(mb), material=steel, length=4.0)
    lower = an.curve_member((0, 0, 0), (0, 0, 2.0), physical=rod)
    upper = an.curve_member((0, 0, 2.0), (0, 0, 4.0), physical=rod)
    lc = an.result_group("LC1")
    an.curve_reaction(lower, an.single_force(fx=5.0), lc)
    an.curve_reaction(upper, an.single_force(fx=6.5), lc)
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod))
    assert table(forces) == {(rod.GlobalId, "LC1"): pytest.approx(6.5 * KN)}  # max |N| of 5 and 6.5 kN
    assert "largest of 2" in forces["source"].iloc[0]
    assert msgs == []


def test_mixed_signs_in_one_case_are_reported(tmp_path: Path) -> None:
    mb, an, steel = setup()
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0))
    lc = an.result_group("LC1")
    an.point_reaction(cm, an.single_force(fx=2.0), lc, at=(0, 0, 0))
    an.point_reaction(cm, an.single_force(fx=-3.0), lc, at=(0, 0, 3.0))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, cm))
    assert forces["axial_force"].iloc[0] == pytest.approx(-3.0 * KN)  # larger magnitude
    assert len(msgs) == 1 and "tension in one place and compression" in msgs[0]


def test_model_without_analysis(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="m")
    rod = mb.member("IfcMember", tag="H1", length=3.0)
    mb.write(str(tmp_path / "m.ifc"))
    idx = build_index(tmp_path / "m.ifc")
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod))
    assert forces.empty and list(forces.columns) == list(FORCE_COLUMNS) and msgs == []


def test_writer_output_is_schema_valid(tmp_path: Path) -> None:
    import ifcopenshell.validate

    for schema in ("IFC2X3", "IFC4", "IFC4X3"):
        mb, an, steel = setup(schema)
        # body=None: the validation is of the analysis part
        rod = mb.member("IfcMember", tag="H1", profile=profile(mb), material=steel, length=3.0, body=None)
        cm = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=rod, profile=profile(mb), material=steel)
        # IFC2X3: a group must group something, and only results are written here
        lc = an.result_group("LC1", an.load_group("LC1") if schema != "IFC2X3" else None)
        an.point_reaction(cm, an.single_force(fx=1.0), lc, at=(0, 0, 0))
        if schema != "IFC2X3":
            an.curve_reaction(cm, an.end_forces((-1.0, 0, 0), (1.0, 0, 0), 3.0), lc)
        logger = ifcopenshell.validate.json_logger()
        ifcopenshell.validate.validate(an.finish(), logger)
        errors = [s["message"] for s in logger.statements if str(s.get("level")).lower() == "error"]
        assert errors == [], schema


def test_a_member_with_next_to_no_force_is_not_taken_for_one_in_bending(tmp_path: Path) -> None:
    """A truss's zero member: an analysis leaves a few tenths of a newton in any direction (here
    0.1 N along, 0.3 N across). Below the 1 N tolerance the direction means nothing: N ≈ 0 is read."""
    mb, an, steel = setup()
    rod = mb.member("IfcMember", tag="Z1", profile=profile(mb), material=steel, length=3.0)
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=rod)
    an.curve_reaction(cm, an.end_forces((-1e-4, 3e-4, 0.0), (1e-4, -3e-4, 0.0), 3.0), an.result_group("LC1"))
    idx = write(tmp_path, an)
    forces, msgs = forces_from_analysis(idx, members_of(idx.path, rod))
    assert forces["axial_force"].iloc[0] == pytest.approx(0.1, abs=1e-9)   # N = +Fx(end) = 1e-4 kN
    assert not any("bending" in m for m in msgs)
