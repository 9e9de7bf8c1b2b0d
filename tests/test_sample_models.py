"""The Nettlebrook Depot sample models: rebuilt identically, readable, and holding what README says.

The checks here read the files with ifcopenshell and compare them with published section and
material values, not with modelcheck's own reader.
"""

from __future__ import annotations

import importlib.util
import math
from functools import cache
from pathlib import Path
from types import ModuleType
from typing import Any

import ifcopenshell
import pandas as pd
import pint
import pytest

from modelcheck.materials import plausible_range

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "sample_models"
UREG = pint.UnitRegistry()   # independent conversion reference

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
    no_force = {
        "nettlebrook-hall": {e.Tag for e in members("nettlebrook-hall")} - table_keys["nettlebrook-hall"] - hall_props,
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
        # EN 10210-2: CHS 88.9x4.0, A = 10.7 cm², i = 3.00 cm (from memory); curve a, L = 4 m, S355
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
