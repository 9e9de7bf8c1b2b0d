"""Unit assignments that contradict the data: an area read in a stated area unit that is orders of
magnitude away from the area of the same profile's own dimensions is reported on the member (both
values, both sources) and not used; the profile's class is reported beside profile properties."""

from __future__ import annotations

import math
from typing import Any

import pytest

from modelcheck.common.units import Q_
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder
from tests.helpers import read_built as members
from tests.test_quantity_sets import HEA360, HEA360_AREA, with_faceted_body

#: an IPE 200 by its dimensions (EN 10365, from memory: h 200, b 100, tw 5.6, tf 8.5, r 12):
#: A = 2·b·tf + (h − 2tf)·tw + (4 − π)·r² = 2848.4 mm² (common practice)
IPE200 = (100.0, 200.0, 5.6, 8.5, 12.0)
IPE200_AREA = 2 * 100 * 8.5 + (200 - 2 * 8.5) * 5.6 + (4 - math.pi) * 12**2


def origin2(f: Any) -> Any:
    return f.createIfcAxis2Placement2D(f.createIfcCartesianPoint((0.0, 0.0)), None)


def contradictions(m: Any) -> list[str]:
    return [w for w in m["warnings"] if w.startswith("unit contradiction")]


def ipe_member(mb: ModelBuilder, name: str, area_value: float, where: str) -> Any:
    """An IPE 200 member (profile set, extruded body) whose Pset_ProfileMechanical (IFC4: an
    IfcProfileProperties on the profile) or quantity set states ``area_value`` in the AREAUNIT."""
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    ipe = f.createIfcIShapeProfileDef("AREA", "IPE200", origin2(f), *IPE200)
    el = mb.member("IfcMember", name=name, profile=ipe, material=steel, length=3000.0)
    if where == "profile properties":
        f.createIfcProfileProperties("Pset_ProfileMechanical", None, [
            f.createIfcPropertySingleValue("CrossSectionArea", None, f.createIfcAreaMeasure(area_value), None),
            # I about the weak axis, 142 cm⁴ (EN 10365, from memory), written in the same slip
            f.createIfcPropertySingleValue("MomentOfInertiaY", None,
                                           f.createIfcMomentOfInertiaMeasure(area_value * 680.0), None),
            f.createIfcPropertySingleValue("MomentOfInertiaZ", None,
                                           f.createIfcMomentOfInertiaMeasure(area_value * 50.0), None)], ipe)
    else:
        mb.quantities(el, "Qto_MemberBaseQuantities", area=area_value)
    return el


@pytest.mark.parametrize("where", ["profile properties", "quantity set"])
def test_an_area_a_million_times_off_its_profile_is_reported_and_not_used(tmp_path, where):
    mb = ModelBuilder(units="mm")   # LENGTHUNIT mm, AREAUNIT mm²
    # the exporter wrote the area in m² under an AREAUNIT of mm²: 0.0028484 mm², a million times too small
    ipe_member(mb, "small", IPE200_AREA * 1e-6, where)
    # and the other way: mm² numbers read as m² would be a million times too large (pint: 1 m² = 1e6 mm²)
    ipe_member(mb, "ok", IPE200_AREA, where)
    ms = members(mb, tmp_path)
    small, ok = ms.loc["small"], ms.loc["ok"]
    assert small["area"] == pytest.approx(IPE200_AREA * 1e-6, rel=1e-9)     # from the profile's dimensions
    assert small["area_source"].startswith("IfcIShapeProfileDef")
    assert small["r_min_source"].startswith("IfcIShapeProfileDef")
    [w] = contradictions(small)   # (too small for the outline bound to see)
    assert "2848.4" in w and "0.0028484" in w and "1e+06 times less" in w   # both values
    assert "IfcIShapeProfileDef #" in w and ("Pset_ProfileMechanical" in w or "Qto_MemberBaseQuantities" in w)
    assert not contradictions(ok)


def test_a_stated_area_unit_of_square_metres_in_a_millimetre_file(tmp_path):
    """LENGTHUNIT mm but AREAUNIT m²: a Pset value written in mm² (2848.4) reads as 2848.4 m²."""
    mb = ModelBuilder(units="mm")
    f = mb.f
    ua = f.by_type("IfcUnitAssignment")[0]
    area = next(u for u in ua.Units if u.is_a("IfcSIUnit") and u.UnitType == "AREAUNIT")
    area.Prefix = None
    ipe_member(mb, "big", IPE200_AREA, "profile properties")
    m = members(mb, tmp_path).loc["big"]
    assert m["area"] == pytest.approx(Q_(IPE200_AREA, "mm**2").to("m**2").m, rel=1e-9)   # pint
    # a million times more is more than the profile's 100 × 200 mm outline can hold: said so, both
    # values and both sources, and not used
    [w] = [w for w in m["warnings"] if "Pset_ProfileMechanical" in w]
    assert "2.84841e+09 mm²" in w and "IfcIShapeProfileDef #" in w and "100 × 200 mm" in w and "not used" in w


def test_a_disagreement_under_two_orders_of_magnitude_is_an_inconsistency_not_a_unit(tmp_path):
    mb = ModelBuilder(units="mm")
    ipe_member(mb, "off", IPE200_AREA / 10.7639, "quantity set")   # ft²-for-m²-sized, 10.76 (pint)
    m = members(mb, tmp_path).loc["off"]
    assert not contradictions(m)
    assert any(w.startswith("inconsistent area") for w in m["warnings"])
    assert m["area"] == pytest.approx(IPE200_AREA * 1e-6, rel=1e-9)


def test_ifc2x3_structural_profile_properties_beside_the_profile(tmp_path):
    """IFC2X3, a faceted body: the profile comes only through IfcStructuralProfileProperties. Its
    ProfileDefinition gives the section and the class; its CrossSectionArea, stated in an AREAUNIT
    of mm² but written in m², is reported and not used."""
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    hea = f.createIfcIShapeProfileDef("AREA", "HEA360", origin2(f), *HEA360.values())
    made = {}
    for name, area_value in (("slip", HEA360_AREA * 1e-6), ("fine", HEA360_AREA)):
        col = mb.member("IfcColumn", name=name, material=steel, material_via="direct", body=None, axis=False)
        with_faceted_body(mb, col, 300.0, 350.0, 12000.0)
        props = f.create_entity("IfcStructuralProfileProperties", ProfileName="HEA360", ProfileDefinition=hea,
                                CrossSectionArea=area_value)
        f.create_entity("IfcRelAssociatesProfileProperties", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                        RelatedObjects=[col], RelatingProfileProperties=props)
        made[name] = col
    ms = members(mb, tmp_path)
    for name in made:
        m = ms.loc[name]
        assert m["profile_type"] == "IfcIShapeProfileDef" and m["section_name"] == "HEA360"
        assert m["shape"] == "I"
        assert m["area"] == pytest.approx(HEA360_AREA * 1e-6, rel=1e-9)   # the profile's dimensions
        assert m["area"] == pytest.approx(142.8e-4, rel=1e-3)              # EN 10365 (from memory)
    assert len(contradictions(ms.loc["slip"])) == 1 and not contradictions(ms.loc["fine"])
    assert not any(w.startswith("inconsistent area") for w in ms.loc["fine", "warnings"])


def test_profile_properties_alone_still_name_the_profile_class(tmp_path):
    """Where the named profile cannot be computed, the stated area is used (nothing contradicts
    it) and the member still reports the profile's class and name."""
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    curve = f.createIfcPolyline([f.createIfcCartesianPoint((0.0, 0.0)), f.createIfcCartesianPoint((100.0, 0.0))])
    open_profile = f.createIfcArbitraryOpenProfileDef("CURVE", "PL-LINE", curve)
    col = mb.member("IfcColumn", name="C", material=steel, material_via="direct", body=None, axis=False)
    with_faceted_body(mb, col, 300.0, 350.0, 3000.0)
    props = f.create_entity("IfcStructuralProfileProperties", ProfileName="PL-LINE", ProfileDefinition=open_profile,
                            CrossSectionArea=1200.0)
    f.create_entity("IfcRelAssociatesProfileProperties", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                    RelatedObjects=[col], RelatingProfileProperties=props)
    m = members(mb, tmp_path).loc["C"]
    assert m["area"] == pytest.approx(1200e-6)    # 1200 mm², as stated
    assert m["profile_type"] == "IfcArbitraryOpenProfileDef" and m["section_name"] == "PL-LINE"
    assert m["area_source"].startswith("IfcStructuralProfileProperties #")


def test_the_canopy_strut_reads_the_profile_its_properties_name() -> None:
    """Sample model: ST-14 states its section only through IfcStructuralProfileProperties."""
    from tests.helpers import SAMPLES

    ms = read_members(build_index(str(SAMPLES / "nettlebrook-canopy.ifc"))).frame.set_index("tag")
    st = ms.loc["ST-14"]
    assert st["profile_type"] == "IfcRectangleHollowProfileDef" and st["section_name"] == "HSS4X4X1/4"
    # AISC Manual Table 1-12, HSS4X4X1/4: A = 3.37 in², r = 1.52 in (from memory)
    assert st["area"] == pytest.approx(Q_(3.37, "in**2").to("m**2").m, rel=2e-3)
    assert st["r_min"] == pytest.approx(Q_(1.52, "in").to("m").m, rel=2e-3)
    assert not contradictions(st)
