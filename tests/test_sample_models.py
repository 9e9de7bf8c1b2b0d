"""The Nettlebrook Depot sample models: rebuilt identically, readable, and holding what README says.

The checks here read the files with ifcopenshell and compare them with published section and
material values, not with modelcheck's own reader.
"""

from __future__ import annotations

import importlib.util
import json
import math
from functools import cache
from pathlib import Path
from types import ModuleType
from typing import Any

import ifcopenshell
import ifcopenshell.util.placement
import numpy as np
import pandas as pd
import pytest

from modelcheck.materials.library import plausible_range
from tests.helpers import SAMPLES, UREG, run_modelcheck

MODELS = {  # file stem: (schema identifier, member count, load-table key column, force unit)
    "nettlebrook-hall": ("IFC4", 30, "tag", "kN"),
    "nettlebrook-canopy": ("IFC2X3", 22, "tag", "kip"),
    "nettlebrook-pipebridge": ("IFC4X3_ADD2", 29, "global_id", "kN"),
}


def _build_module() -> ModuleType:
    spec = importlib.util.spec_from_file_location("sample_models_build", SAMPLES / "build.py")
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@cache
def model(stem: str) -> ifcopenshell.file:
    return ifcopenshell.open(str(SAMPLES / f"{stem}.ifc"))


@cache
def forces(stem: str) -> pd.DataFrame:
    return pd.read_csv(SAMPLES / f"{stem}-forces.csv")


def members(stem: str) -> list[Any]:
    f = model(stem)
    return [e for cls in ("IfcMember", "IfcColumn") for e in f.by_type(cls)]


def by_tag(stem: str) -> dict[str, Any]:
    return {e.Tag: e for e in members(stem)}


def force_of(stem: str, key: str, case: str) -> float:
    t = forces(stem)
    col = t.columns[0]
    row = t[(t[col] == key) & (t["load_case"] == case)]
    assert len(row) == 1, (key, case)
    return float(row.iloc[0, 2])


def _unit_factor(f: ifcopenshell.file, unit_type: str) -> float:
    """SI size of a named unit of the file's unit assignment (SI or conversion-based, one level)."""
    for u in f.by_type("IfcProject")[0].UnitsInContext.Units:
        if getattr(u, "UnitType", None) != unit_type:
            continue
        if u.is_a("IfcSIUnit"):
            prefix = {"MILLI": 1e-3, "KILO": 1e3, "MEGA": 1e6, None: 1.0}[u.Prefix]
            power = {"SQUARE_METRE": 2, "CUBIC_METRE": 3}.get(u.Name, 1)
            return prefix ** power
        if u.is_a("IfcConversionBasedUnit"):
            inner = u.ConversionFactor.UnitComponent
            value = u.ConversionFactor.ValueComponent.wrappedValue
            if inner.is_a("IfcConversionBasedUnit"):   # kip = 1000 lbf
                return value * inner.ConversionFactor.ValueComponent.wrappedValue
            return value
    raise AssertionError(f"no {unit_type}")


# ------------------------------------------------------------------ rebuild

def test_rebuild_gives_identical_files(tmp_path: Path) -> None:
    build = _build_module()
    written = build.build_all(tmp_path)
    assert sorted(p.name for p in written) == sorted(
        [f"{s}.ifc" for s in MODELS] + [f"{s}-forces.csv" for s in MODELS])
    for p in written:
        new = p.read_text(encoding="utf-8").splitlines()
        old = (SAMPLES / p.name).read_text(encoding="utf-8").splitlines()
        # the FILE_NAME header line names the ifcopenshell version that wrote the file
        drop = [i for i, line in enumerate(old) if line.startswith("FILE_NAME(")]
        assert [x for i, x in enumerate(new) if i not in drop] == \
            [x for i, x in enumerate(old) if i not in drop], f"{p.name}: run python sample_models/build.py"


# ------------------------------------------------------------------ files, schemas, units

@pytest.mark.parametrize("stem", list(MODELS))
def test_models_open_with_schema_and_members(stem: str) -> None:
    schema, count, _, _ = MODELS[stem]
    f = model(stem)
    assert f.schema_identifier == schema
    els = members(stem)
    assert len(els) == count
    tags = [e.Tag for e in els]
    assert all(tags) and len(set(tags)) == len(tags)            # every member has a unique mark
    assert len({e.GlobalId for e in els}) == len(els)


def test_units_of_each_model() -> None:
    # SI prefixes (ISO 80000-1) and the international inch of 1959, 0.0254 m exactly (common practice)
    assert _unit_factor(model("nettlebrook-hall"), "LENGTHUNIT") == pytest.approx(1e-3)
    assert _unit_factor(model("nettlebrook-hall"), "FORCEUNIT") == pytest.approx(1.0)
    assert _unit_factor(model("nettlebrook-canopy"), "LENGTHUNIT") == pytest.approx(
        UREG.Quantity(1, "inch").to("m").magnitude, rel=1e-12)
    assert _unit_factor(model("nettlebrook-canopy"), "FORCEUNIT") == pytest.approx(
        UREG.Quantity(1, "kip").to("N").magnitude, rel=1e-9)
    assert _unit_factor(model("nettlebrook-pipebridge"), "LENGTHUNIT") == pytest.approx(1.0)
    assert _unit_factor(model("nettlebrook-pipebridge"), "FORCEUNIT") == pytest.approx(1e3)


# ------------------------------------------------------------------ coverage of issue 2

def test_every_profile_class_of_issue_2_occurs() -> None:
    present = set()
    for stem in MODELS:
        for p in model(stem).by_type("IfcProfileDef"):
            present.add(p.is_a())
    required = {
        "IfcCircleProfileDef", "IfcCircleHollowProfileDef", "IfcRectangleProfileDef",
        "IfcRoundedRectangleProfileDef", "IfcRectangleHollowProfileDef", "IfcIShapeProfileDef",
        "IfcAsymmetricIShapeProfileDef", "IfcLShapeProfileDef", "IfcTShapeProfileDef",
        "IfcUShapeProfileDef", "IfcCShapeProfileDef", "IfcZShapeProfileDef", "IfcEllipseProfileDef",
        "IfcArbitraryClosedProfileDef", "IfcArbitraryProfileDefWithVoids", "IfcDerivedProfileDef",
        "IfcMirroredProfileDef", "IfcCompositeProfileDef",
    }
    assert required <= present, required - present


def test_special_geometry_occurs() -> None:
    bridge = model("nettlebrook-pipebridge")
    outer = {p.OuterCurve.is_a() for p in bridge.by_type("IfcArbitraryClosedProfileDef")}
    assert {"IfcPolyline", "IfcIndexedPolyCurve", "IfcCompositeCurve"} <= outer
    assert any(s.is_a("IfcArcIndex") for c in bridge.by_type("IfcIndexedPolyCurve") for s in c.Segments)
    assert any(s.ParentCurve.is_a("IfcTrimmedCurve") for s in bridge.by_type("IfcCompositeCurveSegment"))
    disks = bridge.by_type("IfcSweptDiskSolid")
    assert any(d.InnerRadius for d in disks) and any(d.InnerRadius is None for d in disks)
    i_sloped = [p for p in bridge.by_type("IfcIShapeProfileDef") if p.FlangeSlope]
    # DIN 1025-1 IPN: 14 % flange slope (from memory)
    assert i_sloped and math.tan(i_sloped[0].FlangeSlope) == pytest.approx(0.14)
    for stem in ("nettlebrook-hall", "nettlebrook-canopy"):
        mapped = [e for e in members(stem) if e.Representation and any(
            it.is_a("IfcMappedItem") for r in e.Representation.Representations for it in r.Items)]
        assert len(mapped) == 1


def _has_own_material(e: Any) -> bool:
    return any(r.is_a("IfcRelAssociatesMaterial") for r in e.HasAssociations)


def _type_of(e: Any) -> Any:
    rels = e.IsTypedBy if hasattr(e, "IsTypedBy") else [
        r for r in e.IsDefinedBy if r.is_a("IfcRelDefinesByType")]
    return rels[0].RelatingType if rels else None


@pytest.mark.parametrize(("stem", "tags"), [
    ("nettlebrook-hall", {"HR-05", "HR-06", "HR-07", "HR-08", "BR-04", "BR-05", "PO-02"}),
    ("nettlebrook-canopy", {"HR-14", "HR-15", "HR-16"}),
    ("nettlebrook-pipebridge", {"CH-03", "CH-04"}),
])
def test_type_inherited_material(stem: str, tags: set[str]) -> None:
    inherited = {e.Tag for e in members(stem) if not _has_own_material(e) and _type_of(e) is not None
                 and any(r.is_a("IfcRelAssociatesMaterial") for r in _type_of(e).HasAssociations)}
    assert inherited == tags


def test_members_lacking_data() -> None:
    hall = by_tag("nettlebrook-hall")
    # BR-06: no material anywhere
    assert not _has_own_material(hall["BR-06"]) and _type_of(hall["BR-06"]) is None
    # ST-05: no section: axis only, no profile set, no quantities
    reps = {r.RepresentationIdentifier for r in hall["ST-05"].Representation.Representations}
    assert reps == {"Axis"}
    assert not any(r.RelatingMaterial.is_a("IfcMaterialProfileSetUsage") for r in hall["ST-05"].HasAssociations)
    # TR-05: no length: no representation, no quantities
    assert hall["TR-05"].Representation is None
    assert not any(r.RelatingPropertyDefinition.is_a("IfcElementQuantity") for r in hall["TR-05"].IsDefinedBy)


def _qto_area(e: Any) -> float:
    for r in e.IsDefinedBy:
        d = r.RelatingPropertyDefinition
        if d.is_a("IfcElementQuantity"):
            for q in d.Quantities:
                if q.Name == "CrossSectionArea":
                    return float(q.AreaValue)
    raise AssertionError(e.Tag)


def test_inconsistent_quantity_against_published_area() -> None:
    hall = by_tag("nettlebrook-hall")
    hea140 = 31.4e2   # EN 10365: HEA 140, A = 31.4 cm² (from memory), in mm²
    assert _qto_area(hall["PO-01"]) == pytest.approx(hea140, rel=0.005)           # consistent
    assert abs(_qto_area(hall["PO-03"]) / hea140 - 1) > 0.25                       # deliberately not
    # HEA 140 profile dimensions as in EN 10365 (from memory)
    p = [r.RelatingMaterial.ForProfileSet.MaterialProfiles[0].Profile for r in hall["PO-03"].HasAssociations][0]
    assert (p.OverallWidth, p.OverallDepth, p.WebThickness, p.FlangeThickness) == (140.0, 133.0, 5.5, 8.5)


def _material_value(f: ifcopenshell.file, name: str, prop: str) -> float:
    for m in f.by_type("IfcMaterial"):
        if m.Name != name:
            continue
        if f.schema_identifier == "IFC2X3":
            for mp in f.by_type("IfcMechanicalSteelMaterialProperties"):
                if mp.Material == m:
                    return float(getattr(mp, prop))
        for mp in m.HasProperties:
            for p in mp.Properties:
                if p.Name == prop:
                    return float(p.NominalValue.wrappedValue)
    raise AssertionError((name, prop))


def test_implausible_moduli_are_outside_the_steel_range() -> None:
    lo, hi = plausible_range("steel")["E"]
    # hall: N/mm² file; S275JR modulus typed as 210 (GPa) instead of 210000
    e_hall = UREG.Quantity(_material_value(model("nettlebrook-hall"), "S275JR", "YoungModulus"), "N/mm**2")
    assert not lo <= e_hall.to("Pa").magnitude <= hi
    # canopy: ksi file; modulus written in psi (29,000,000) instead of ksi (AISC 360-16: 29,000 ksi)
    e_can = UREG.Quantity(_material_value(model("nettlebrook-canopy"), "ASTM A36 (mill cert 24-117)",
                                          "YoungModulus"), "ksi")
    assert not lo <= e_can.to("Pa").magnitude <= hi
    # the HSS material of the same file states a plausible 29,000 ksi
    e_ok = UREG.Quantity(_material_value(model("nettlebrook-canopy"), "ASTM A500 Gr C (rect. HSS)",
                                         "YoungModulus"), "ksi")
    assert lo <= e_ok.to("Pa").magnitude <= hi


# ------------------------------------------------------------------ forces

@pytest.mark.parametrize("stem", list(MODELS))
def test_load_tables(stem: str) -> None:
    _, _, key, unit = MODELS[stem]
    t = forces(stem)
    assert list(t.columns) == [key, "load_case", f"axial_force [{unit}]"]
    assert UREG.Quantity(1, unit).check("[force]")
    assert t["load_case"].nunique() >= 2
    assert not t.duplicated([key, "load_case"]).any()
    ids = {getattr(e, "Tag" if key == "tag" else "GlobalId") for e in members(stem)}
    unmatched = set(t[key]) - ids
    assert len(unmatched) == 1                       # exactly one row keyed to no member
    assert (t[f"axial_force [{unit}]"] > 0).any() and (t[f"axial_force [{unit}]"] < 0).any()


def test_member_force_property_on_hangers() -> None:
    hall = model("nettlebrook-hall")
    with_prop = set()
    for rel in hall.by_type("IfcRelDefinesByProperties"):
        d = rel.RelatingPropertyDefinition
        if d.is_a("IfcPropertySet") and d.Name == "MC_MemberForces":
            prop = {p.Name: p for p in d.HasProperties}["AxialForce"]
            assert prop.NominalValue.is_a("IfcForceMeasure")
            with_prop |= {e.Tag for e in rel.RelatedObjects}
    assert with_prop == {f"HR-0{i}" for i in range(1, 8)}
    typ = _type_of(by_tag("nettlebrook-hall")["HR-08"])      # HR-08 inherits it from its type
    assert any(ps.Name == "MC_MemberForces" for ps in typ.HasPropertySets)


def test_one_member_per_model_has_no_force() -> None:
    table_keys = {s: set(forces(s).iloc[:, 0]) for s in MODELS}
    hall_props = {f"HR-0{i}" for i in range(1, 9)}
    hall_tags = {e.GlobalId: e.Tag for e in members("nettlebrook-hall")}
    hall_analysis = {hall_tags[gid] for gid, _case in analysis_forces("nettlebrook-hall")}
    no_force = {
        "nettlebrook-hall": set(hall_tags.values()) - table_keys["nettlebrook-hall"] - hall_props - hall_analysis,
        "nettlebrook-canopy": {e.Tag for e in members("nettlebrook-canopy")} - table_keys["nettlebrook-canopy"],
        "nettlebrook-pipebridge": {e.Tag for e in members("nettlebrook-pipebridge")
                                   if e.GlobalId not in table_keys["nettlebrook-pipebridge"]},
    }
    assert no_force == {"nettlebrook-hall": {"HR-09"}, "nettlebrook-canopy": {"SR-12"},
                        "nettlebrook-pipebridge": {"TB-02"}}


def _hanger_force_kN(tag: str) -> float:
    e = by_tag("nettlebrook-hall")[tag]
    for r in e.IsDefinedBy:
        d = r.RelatingPropertyDefinition
        if d.is_a("IfcPropertySet") and d.Name == "MC_MemberForces":
            return {p.Name: p for p in d.HasProperties}["AxialForce"].NominalValue.wrappedValue / 1e3
    raise AssertionError(tag)


def _chi(lam_bar: float, alpha: float) -> float:
    """EN 1993-1-1 6.3.1.2 (6.49): buckling reduction factor (from memory)."""
    phi = 0.5 * (1 + alpha * (lam_bar - 0.2) + lam_bar ** 2)
    return min(1.0, 1 / (phi + math.sqrt(phi ** 2 - lam_bar ** 2)))


def _aisc_fcr(fy: float, kl_r: float, e: float = 29000.0) -> float:
    """AISC 360-16 E3-2 / E3-3 flexural buckling stress (ksi)."""
    fe = math.pi ** 2 * e / kl_r ** 2
    return 0.658 ** (fy / fe) * fy if fy / fe <= 2.25 else 0.877 * fe


def test_deliberate_failures_exceed_capacity_by_10_to_60_percent() -> None:
    rd = lambda d: math.pi * d * d / 4   # noqa: E731  (gross area of a round bar)
    ratios = {
        # ISO 898-1 class 4.6: ReL = 240 MPa (from memory); EN 1993-1-1 6.2.3 A·fy/γM0, γM0 = 1.0
        "HR-03": _hanger_force_kN("HR-03") * 1e3 / (rd(16) * 240),
        # EN 1993-1-4 Table 2.1, 1.4401 bars: fy = 200 MPa (from memory)
        "TR-02": force_of("nettlebrook-hall", "TR-02", "1.35G+1.5S") * 1e3 / (rd(20) * 200),
        # EN 10056-1: L 70x70x7, A = 9.40 cm² (from memory); S235: fy = 235 MPa (EN 1993-1-1 Table 3.1)
        "BR-03": force_of("nettlebrook-hall", "BR-03", "G+1.5W") * 1e3 / (940 * 235),
        # EN 10210-2: CHS 88.9x4.0, A = 10.7 cm², i = 3.00 cm (from memory); L = 4 m, S355; curve a
        # (EN 1993-1-1 Table 6.2, hot-finished hollow sections): the most favourable curve, so the
        # member fails whichever curve applies (the steel-ec3 rule set takes curve c)
        "ST-02": -force_of("nettlebrook-hall", "ST-02", "1.35G+1.5S") * 1e3 / (
            _chi(4000 / 30.0 / (93.9 * math.sqrt(235 / 355)), 0.21) * 1070 * 355),
        # AISC Manual: 3/4 in rod Ag = 0.442 in²; A36 Fy = 36 ksi; D2 Ω = 1.67 (from memory)
        "HR-13": force_of("nettlebrook-canopy", "HR-13", "D+0.75L+0.75S") / (36 * 0.442 / 1.67),
        # AISC Shapes Database: L4x4x3/8, A = 2.86 in² (from memory)
        "BR-13": force_of("nettlebrook-canopy", "BR-13", "D+0.6W") / (36 * 2.86 / 1.67),
        # AISC Shapes Database: HSS4x4x1/4, A = 3.37 in², r = 1.52 in; A500 Gr C Fy = 50 ksi (from memory)
        "ST-12": -force_of("nettlebrook-canopy", "ST-12", "D+S") / (_aisc_fcr(50, 144 / 1.52) * 3.37 / 1.67),
    }
    bridge = {e.Tag: e.GlobalId for e in members("nettlebrook-pipebridge")}
    # EN 10219-2: RHS 120x80x5, A = 18.4 cm² (from memory); S355
    ratios["DG-02"] = force_of("nettlebrook-pipebridge", bridge["DG-02"], "1.35G+1.5Q") * 1e3 / (1840 * 355)
    # ASTM A240 S31600: 205 MPa (from memory); round bar 24 mm
    ratios["SU-03"] = force_of("nettlebrook-pipebridge", bridge["SU-03"], "1.35G+1.5Q") * 1e3 / (rd(24) * 205)
    for tag, ratio in ratios.items():
        assert 1.1 <= ratio <= 1.6, (tag, ratio)


def test_sister_members_pass_comfortably() -> None:
    # same sections and capacities as above: every other member of the group stays below 0.7
    rd16 = math.pi * 16 ** 2 / 4
    for tag in ("HR-01", "HR-02", "HR-04", "HR-05", "HR-06", "HR-07"):
        assert _hanger_force_kN(tag) * 1e3 / (rd16 * 240) < 0.7, tag   # ISO 898-1 4.6 (from memory)
    hall = forces("nettlebrook-hall")
    braces = hall[hall["tag"].str.startswith("BR-") & (hall["tag"] != "BR-03")]
    assert (braces["axial_force [kN]"] * 1e3 / (940 * 235) < 0.7).all()   # EN 10056-1 L70x70x7 (from memory)
    can = forces("nettlebrook-canopy")
    rods = can[can["tag"].isin(["HR-11", "HR-12", "HR-14", "HR-15", "HR-16"])]
    assert (rods["axial_force [kip]"] / (36 * 0.442 / 1.67) < 0.7).all()   # AISC, A36 3/4 in rod (from memory)


# ------------------------------------------------------------------ structural-analysis results
#
# Read straight from the files with ifcopenshell and numpy, by the IFC schema's definitions
# (IfcStructuralCurveMember edge = local x; LOCAL_COORDS ForceX = N; GLOBAL_COORDS force
# projected on the member axis; member end forces N = -Fx(start) = +Fx(end), common practice).

HALL_ANALYSED = {f"BR-0{i}" for i in range(1, 6)} | {"ST-01", "ST-02", "ST-03"}


def _assigned_products(f: ifcopenshell.file) -> dict[int, Any]:
    """curve member id -> the physical element it is assigned to (IfcRelAssignsToProduct)."""
    out: dict[int, Any] = {}
    for rel in f.by_type("IfcRelAssignsToProduct"):
        for o in rel.RelatedObjects:
            if o.is_a("IfcStructuralCurveMember"):
                out[o.id()] = rel.RelatingProduct
    return out


def _edge(cm: Any) -> tuple[np.ndarray, np.ndarray]:
    edges = [it for r in cm.Representation.Representations for it in r.Items if it.is_a("IfcEdge")]
    assert len(edges) == 1, cm
    e = edges[0]
    return (np.array(e.EdgeStart.VertexGeometry.Coordinates, dtype=float),
            np.array(e.EdgeEnd.VertexGeometry.Coordinates, dtype=float))


def _result_group(act: Any) -> Any:
    groups = [r.RelatingGroup for r in act.HasAssignments
              if r.is_a("IfcRelAssignsToGroup") and r.RelatingGroup.is_a("IfcStructuralResultGroup")]
    assert len(groups) == 1, act
    return groups[0]


@cache
def analysis_results(stem: str) -> tuple[tuple[str, str, float, str], ...]:
    """(GlobalId the force belongs to, load case, N in newtons, how it is written) per result."""
    f = model(stem)
    newton = _unit_factor(f, "FORCEUNIT")
    owner = _assigned_products(f)
    out = []
    for rel in f.by_type("IfcRelConnectsStructuralActivity"):
        cm, act = rel.RelatingElement, rel.RelatedStructuralActivity
        if not act.is_a("IfcStructuralReaction"):
            continue
        a, b = _edge(cm)
        x = (b - a) / np.linalg.norm(b - a)
        load = act.AppliedLoad
        if load.is_a("IfcStructuralLoadSingleForce"):
            vec = np.array([load.ForceX or 0.0, load.ForceY or 0.0, load.ForceZ or 0.0])
            n = float(vec @ x) if act.GlobalOrLocal == "GLOBAL_COORDS" else float(vec[0])
            how = act.GlobalOrLocal
        else:
            assert load.is_a("IfcStructuralLoadConfiguration")
            locs = [float(loc[0]) for loc in load.Locations]
            start, end = load.Values[locs.index(min(locs))], load.Values[locs.index(max(locs))]
            n_start, n_end = -start.ForceX, end.ForceX
            assert n_start == pytest.approx(n_end, rel=1e-9)   # both ends give the same N
            n, how = float(n_end), "end forces"
        key = owner[cm.id()].GlobalId if cm.id() in owner else cm.GlobalId
        out.append((key, _result_group(act).Name, n * newton, how))
    return tuple(out)


def analysis_forces(stem: str) -> dict[tuple[str, str], float]:
    """(GlobalId, load case) -> N in newtons (one result per member and case in the samples)."""
    res = analysis_results(stem)
    d = {(k, c): n for k, c, n, _how in res}
    assert len(d) == len(res)
    return d


def test_hall_analysis_model_links_braces_and_struts() -> None:
    f = model("nettlebrook-hall")
    (am,) = f.by_type("IfcStructuralAnalysisModel")
    # its SharedPlacement is the world axes: edge coordinates are global coordinates
    assert np.allclose(ifcopenshell.util.placement.get_local_placement(am.SharedPlacement), np.eye(4))
    owner = _assigned_products(f)
    cms = f.by_type("IfcStructuralCurveMember")
    assert len(cms) == len(owner) == len(HALL_ANALYSED)
    assert {p.Tag for p in owner.values()} == HALL_ANALYSED
    assert all(p.is_a("IfcMember") for p in owner.values())
    for cm in cms:
        # the analysis edge lies on the physical member's axis, start to end (placement x Axis polyline)
        el = owner[cm.id()]
        m = np.asarray(ifcopenshell.util.placement.get_local_placement(el.ObjectPlacement), dtype=float)
        axis = [r for r in el.Representation.Representations if r.RepresentationIdentifier == "Axis"][0]
        pts = [m @ np.array([*p.Coordinates, 0.0][:3] + [1.0]) for p in axis.Items[0].Points]
        a, b = _edge(cm)
        assert np.allclose(a, pts[0][:3], atol=1e-6) and np.allclose(b, pts[-1][:3], atol=1e-6), el.Tag


def test_hall_analysis_result_groups_are_load_cases() -> None:
    f = model("nettlebrook-hall")
    groups = f.by_type("IfcStructuralResultGroup")
    names = {g.Name for g in groups}
    assert len(names) == len(groups)                         # one group per load case
    for g in groups:
        assert g.ResultForLoadGroup is not None and g.ResultForLoadGroup.Name == g.Name
    t = forces("nettlebrook-hall")
    table_cases = set(t.loc[t["tag"].isin(HALL_ANALYSED), "load_case"])
    assert table_cases <= names                              # the table's names, where it has those members
    assert names - set(t["load_case"])                       # and a case only the analysis has
    am = f.by_type("IfcStructuralAnalysisModel")[0]
    assert set(am.HasResults) == set(groups)


def test_hall_analysis_result_forms() -> None:
    """LOCAL single forces; GLOBAL forces on exactly one, inclined, member; end forces on one."""
    f = model("nettlebrook-hall")
    owner = _assigned_products(f)
    hows: dict[str, set[str]] = {}
    for rel in f.by_type("IfcRelConnectsStructuralActivity"):
        act = rel.RelatedStructuralActivity
        assert act.is_a("IfcStructuralCurveReaction")
        load = act.AppliedLoad
        how = "configuration" if load.is_a("IfcStructuralLoadConfiguration") else act.GlobalOrLocal
        hows.setdefault(how, set()).add(owner[rel.RelatingElement.id()].Tag)
        if how == "GLOBAL_COORDS":
            a, b = _edge(rel.RelatingElement)
            d = (b - a) / np.linalg.norm(b - a)
            assert 0.2 < abs(d[2]) < 0.9                      # inclined: neither level nor plumb
            vec = np.array([load.ForceX, load.ForceY, load.ForceZ])
            assert np.linalg.norm(vec - (vec @ d) * d) > 0    # it carries shear too: a real projection
        if how == "configuration":
            assert act.PredefinedType == "DISCRETE" and len(load.Values) == 2
            a, b = _edge(rel.RelatingElement)
            locs = sorted(float(x[0]) for x in load.Locations)
            assert locs == pytest.approx([0.0, float(np.linalg.norm(b - a))])   # at the member's two ends
        if how == "LOCAL_COORDS":
            assert load.is_a("IfcStructuralLoadSingleForce") and act.PredefinedType == "CONST"
    assert set(hows) == {"LOCAL_COORDS", "GLOBAL_COORDS", "configuration"}
    assert len(hows["GLOBAL_COORDS"]) == 1 and len(hows["configuration"]) == 1
    assert hows["LOCAL_COORDS"] | hows["GLOBAL_COORDS"] | hows["configuration"] == HALL_ANALYSED


def test_pipebridge_has_one_analysis_only_member() -> None:
    f = model("nettlebrook-pipebridge")
    (cm,) = f.by_type("IfcStructuralCurveMember")
    assert cm.id() not in _assigned_products(f)                           # stands for no element
    (assoc,) = [r.RelatingMaterial for r in cm.HasAssociations if r.is_a("IfcRelAssociatesMaterial")]
    assert assoc.is_a("IfcMaterialProfileSet")
    (mp,) = assoc.MaterialProfiles
    assert mp.Profile.is_a("IfcCircleProfileDef") and mp.Material is not None
    a, b = _edge(cm)
    assert float(np.linalg.norm(b - a)) == pytest.approx(math.hypot(6.0, 2.0))   # 6 x 2 m deck panel diagonal
    res = analysis_results("nettlebrook-pipebridge")
    assert res and {k for k, *_ in res} == {cm.GlobalId}
    assert {c for _k, c, *_ in res} <= set(forces("nettlebrook-pipebridge")["load_case"])


def test_analysis_forces_keep_every_documented_status() -> None:
    """Where the analysis supplies a case (no table row), members pass below 0.7; where a table row
    exists it is within a few per cent of the analysis (the table wins, README)."""
    hall = {e.GlobalId: e.Tag for e in members("nettlebrook-hall")}
    t = forces("nettlebrook-hall")
    table = {(r.tag, r.load_case): r._3 * 1e3 for r in t.itertuples()}   # kN -> N
    # EN 1993-1-1 6.2.3 (tension, A fy) and 6.3.1 (buckling, L = 4 m), γM = 1.0; curve c (Table 6.2,
    # cold-formed hollow sections), as the steel-ec3 rule set takes every hollow section
    rd = lambda d: math.pi * d * d / 4   # noqa: E731  (gross area of a round bar)
    lam1 = lambda fy: 93.9 * math.sqrt(235 / fy)   # noqa: E731  EN 1993-1-1 6.3.1.3: λ1 = 93.9 ε
    sections = {
        # EN 10056-1: L 70x70x7, A = 9.40 cm² (from memory); S235 fy = 235 MPa (EN 1993-1-1 Table 3.1)
        "BR": (940.0, 235.0, None),
        # EN 10210-2: CHS 88.9x4.0, A = 10.7 cm², i = 3.00 cm (from memory); S355
        "ST-01": (1070.0, 355.0, 30.0), "ST-02": (1070.0, 355.0, 30.0),
        # EN 10219-2: SHS 80x80x4, A = 11.7 cm², I = 111 cm⁴ (from memory): i = √(I/A) = 3.08 cm; S355
        "ST-03": (1170.0, 355.0, 30.8),
    }
    supplied = 0
    for (gid, case), n in analysis_forces("nettlebrook-hall").items():
        tag = hall[gid]
        if (tag, case) in table:
            assert n / table[(tag, case)] == pytest.approx(1.0, abs=0.05), (tag, case)
            continue
        supplied += 1
        area, fy, i = sections["BR" if tag.startswith("BR") else tag]
        if n >= 0:
            ratio = n / (area * fy)
        else:
            assert i is not None, tag        # braces are tension-only (L/i ≈ 281)
            ratio = -n / (_chi(4000 / i / lam1(fy), 0.49) * area * fy)
        assert ratio < 0.7, (tag, case, ratio)
    assert supplied >= 2 * len(HALL_ANALYSED)
    # the deliberate failures also fail on the analysis values alone (README: without --loads)
    by_tag = {(hall[g], c): n for (g, c), n in analysis_forces("nettlebrook-hall").items()}
    assert by_tag[("BR-03", "G+1.5W")] / (940 * 235) > 1.1                      # EN 10056-1 L70x70x7 (from memory)
    assert -by_tag[("ST-02", "1.35G+1.5S")] / (_chi(4000 / 30.0 / lam1(355), 0.49) * 1070 * 355) > 1.1
    # pipe bridge AT-01: RD 30 S355 (EN 10025-2: fy = 355 MPa for t <= 16 mm, from memory)
    for (_gid, _case), n in analysis_forces("nettlebrook-pipebridge").items():
        assert 0 < n / (rd(30) * 355) < 0.7


# ------------------------------------------------------------------ the three routes through the CLI

@cache
def members_json(stem: str) -> dict[str, Any]:
    """``modelcheck members sample_models/STEM.ifc --loads sample_models/STEM-forces.csv --format json``"""
    r = run_modelcheck("members", f"sample_models/{stem}.ifc", "--loads", f"sample_models/{stem}-forces.csv",
                       "--format", "json")
    assert r.returncode == 0, r.stderr
    (m,) = json.loads(r.stdout)["models"]
    return m


def _newton(q: dict[str, Any]) -> float:
    return UREG.Quantity(q["value"], q["unit"]).to("N").magnitude   # pint's definition of kN


def test_members_command_fills_forces_from_all_three_routes() -> None:
    m = members_json("nettlebrook-hall")
    t = forces("nettlebrook-hall")
    table = {(r.tag, r.load_case): r._3 * 1e3 for r in t.itertuples()}   # kN -> N
    ana = analysis_forces("nettlebrook-hall")
    got = {(mem["global_id"], case): q for mem in m["members"] for case, q in mem["axial_force"].items()}
    tag = {mem["global_id"]: mem["tag"] for mem in m["members"]}
    sources = [q["source"] for q in got.values()]
    assert any(s.startswith("IFC analysis") for s in sources)                 # analysis route
    assert any("nettlebrook-hall-forces.csv:row" in s for s in sources)       # load-table route
    assert any(s.startswith("MC_MemberForces.AxialForce") for s in sources)   # model-property route
    overridden = set()
    for (gid, case), n in ana.items():
        q = got[(gid, case)]
        if (tag[gid], case) in table:     # the table wins (modelcheck/loads/join.py)
            assert "nettlebrook-hall-forces.csv:row" in q["source"]
            assert _newton(q) == pytest.approx(table[(tag[gid], case)], rel=1e-6)
            overridden.add((gid, case))
        else:
            assert q["source"].startswith("IFC analysis"), (tag[gid], case, q)
            assert _newton(q) == pytest.approx(n, rel=1e-5, abs=0.5)
    # every analysis result a table row displaced is reported, and nothing else
    rep = m["forces"]
    assert {(o["global_id"], o["load_case"]) for o in rep["overridden"]} == overridden
    assert all(o["overridden"].startswith("IFC analysis") for o in rep["overridden"])
    assert rep["used_by_route"]["analysis"] == len(ana) - len(overridden)
    # the provenance says how the analysis result was read
    gid_of = {v: k for k, v in tag.items()}
    assert "global force" in got[(gid_of["BR-02"], "1.35G+1.5Q+0.9W")]["source"]
    assert "end forces" in got[(gid_of["ST-01"], "1.35G+1.5Q+0.9W")]["source"]
    assert "local ForceX" in got[(gid_of["BR-01"], "1.35G+1.5Q+0.9W")]["source"]
    # the case only the analysis has reaches the members; HR-09 still has no force
    only_analysis = {c for (_g, c) in ana} - set(t["load_case"])
    assert only_analysis
    assert {tag[g] for (g, c) in got if c in only_analysis} == HALL_ANALYSED
    assert rep["members_without_force"] == [gid_of["HR-09"]]


def test_members_command_lists_the_analysis_only_member() -> None:
    m = members_json("nettlebrook-pipebridge")
    # 29 physical members (test_models_open_with_schema_and_members) + the analysis-only one
    assert len(m["members"]) == MODELS["nettlebrook-pipebridge"][1] + 1
    (mem,) = [x for x in m["members"] if x["ifc_class"] == "IfcStructuralCurveMember"]
    assert mem["tag"] is None and "AT-01" in mem["name"]
    # length from its edge: the 6 m x 2 m panel diagonal (geometry)
    assert UREG.Quantity(mem["length"]["value"], mem["length"]["unit"]).to("m").magnitude == pytest.approx(
        math.hypot(6.0, 2.0), rel=1e-5)
    assert "IfcEdge" in mem["length"]["source"]
    # section from its material profile set: a 30 mm round bar, π d²/4
    area = UREG.Quantity(mem["section"]["area"]["value"], mem["section"]["area"]["unit"]).to("mm**2").magnitude
    assert area == pytest.approx(math.pi * 30 ** 2 / 4, rel=1e-5)
    # EN 10025-2 S355: fy = 355 MPa (t <= 16 mm, from memory)
    assert UREG.Quantity(mem["material"]["Fy"]["value"], mem["material"]["Fy"]["unit"]).to("MPa").magnitude \
        == pytest.approx(355.0)
    ana = analysis_forces("nettlebrook-pipebridge")
    assert set(mem["axial_force"]) == {c for (_g, c) in ana}
    for case, q in mem["axial_force"].items():
        assert q["source"].startswith("IFC analysis")
        assert _newton(q) == pytest.approx(ana[(mem["global_id"], case)], rel=1e-6)
