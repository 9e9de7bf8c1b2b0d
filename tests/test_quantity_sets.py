"""Quantities as exporters write them: ``Qto_*BaseQuantities`` first, then the IFC2X3-era
``BaseQuantities``, then any other IfcElementQuantity with the same quantity names; a length from
NetVolume / area only as a last resort, marked as derived."""

from __future__ import annotations

import math
from typing import Any

import pytest

from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder
from tests.helpers import read_built as members

#: HEA 360 (EN 10365, from memory): h 350, b 300, tw 10, tf 17.5, r 27 mm; A = 142.8 cm²
HEA360 = dict(OverallWidth=300.0, OverallDepth=350.0, WebThickness=10.0, FlangeThickness=17.5, FilletRadius=27.0)
#: its area from those dimensions: 2·b·tf + (h − 2tf)·tw + (4 − π)·r² (common practice)
HEA360_AREA = 2 * 300 * 17.5 + (350 - 2 * 17.5) * 10 + (4 - math.pi) * 27**2


def faceted_box(mb: ModelBuilder, b: float, h: float, length: float) -> Any:
    """A body as a faceted B-rep (a box b × h × length): no profile and no depth to read."""
    f = mb.f
    c = [f.createIfcCartesianPoint((x, y, z)) for z in (0.0, length) for y in (-h / 2, h / 2) for x in (-b / 2, b / 2)]
    quads = [(0, 2, 3, 1), (4, 5, 7, 6), (0, 1, 5, 4), (2, 6, 7, 3), (0, 4, 6, 2), (1, 3, 7, 5)]
    faces = [f.createIfcFace([f.createIfcFaceOuterBound(f.createIfcPolyLoop([c[i] for i in q]), True)]) for q in quads]
    brep = f.createIfcFacetedBrep(f.createIfcClosedShell(faces))
    return f.createIfcShapeRepresentation(mb.body_ctx, "Body", "Brep", [brep])


def with_faceted_body(mb: ModelBuilder, el: Any, b: float, h: float, length: float) -> None:
    el.Representation = mb.f.createIfcProductDefinitionShape(None, None, [faceted_box(mb, b, h, length)])


def hea360_column_ifc2x3(mb: ModelBuilder, name: str) -> Any:
    """An IFC2X3 column as a steel-detailing export writes it: a faceted body, the material
    direct, the HEA 360 profile through IfcStructuralProfileProperties (its ProfileDefinition)."""
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    prof = f.createIfcIShapeProfileDef("AREA", "HEA360", f.createIfcAxis2Placement2D(
        f.createIfcCartesianPoint((0.0, 0.0)), None), *HEA360.values())
    col = mb.member("IfcColumn", name=name, material=steel, material_via="direct", body=None, axis=False)
    with_faceted_body(mb, col, 300.0, 350.0, 12000.0)
    props = f.create_entity("IfcStructuralProfileProperties", ProfileName="HEA360", ProfileDefinition=prof)
    f.create_entity("IfcRelAssociatesProfileProperties", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                    RelatedObjects=[col], RelatingProfileProperties=props)
    return col


def test_an_ifc2x3_column_with_base_quantities_gets_its_length(tmp_path):
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    col = hea360_column_ifc2x3(mb, "C1")
    mb.quantities(col, "BaseQuantities", length=12000.0, more={"NetVolume": HEA360_AREA * 12000.0,
                                                                 "GrossWeight": 1345.0})
    m = members(mb, tmp_path).loc["C1"]
    assert m["length"] == pytest.approx(12.0, rel=1e-12)    # BaseQuantities.Length = 12000 mm
    assert m["length_source"] == "BaseQuantities.Length [mm]"
    assert m["area"] == pytest.approx(HEA360_AREA * 1e-6, rel=1e-9)   # the profile's own dimensions
    assert m["area"] == pytest.approx(142.8e-4, rel=1e-3)              # EN 10365 table (from memory)
    assert m["profile_type"] == "IfcIShapeProfileDef" and m["section_name"] == "HEA360"


QTO, BASE, OWN = "Qto_MemberBaseQuantities", "BaseQuantities", "ExportQuantities"


@pytest.mark.parametrize(("sets", "winner"), [
    ({QTO: 3000.0, BASE: 3100.0, OWN: 3200.0}, QTO),
    ({BASE: 3100.0, OWN: 3200.0}, BASE),
    ({OWN: 3200.0, BASE: 3100.0}, BASE),       # the rank, not the order the sets are met
    ({OWN: 3200.0}, OWN),
])
@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4"])
def test_quantity_sets_rank_qto_then_base_quantities_then_any_other(tmp_path, schema, sets, winner):
    mb = ModelBuilder(schema=schema, units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    flat = mb.f.createIfcRectangleProfileDef("AREA", "FL200x10", mb.f.createIfcAxis2Placement2D(
        mb.f.createIfcCartesianPoint((0.0, 0.0)), None), 200.0, 10.0)
    el = mb.member("IfcMember", name="M1", profile=flat, material=steel, body=None, axis=False)
    with_faceted_body(mb, el, 200.0, 10.0, 3000.0)
    for name, length in sets.items():
        mb.quantities(el, name, length=length)
    m = members(mb, tmp_path).loc["M1"]
    assert m["length"] == pytest.approx(sets[winner] / 1000, rel=1e-12)   # the value written, mm -> m
    assert m["length_source"] == f"{winner}.Length [mm]"


def test_a_quantity_set_on_a_property_set_name_is_not_read(tmp_path):
    """Quantities are IfcElementQuantity sets: a property set of the same shape is not one."""
    mb = ModelBuilder(units="mm")
    el = mb.member("IfcMember", name="M1", body=None, axis=False,
                   psets={"ExportQuantities": {"Length": ("IfcLengthMeasure", 3000.0)}})
    m = members(mb, tmp_path).loc["M1"]
    assert math.isnan(m["length"]) and m["length_source"] is None
    assert el is not None


def test_a_columns_height_is_its_length_a_beams_is_not(tmp_path):
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    col = mb.member("IfcColumn", name="C1", body=None, axis=False)
    beam = mb.member("IfcBeam", name="B1", body=None, axis=False)
    # architecture exports: a column's Height is how tall it stands; a beam's its section depth
    mb.quantities(col, "BaseQuantities", more={"Height": 3500.0, "Width": 300.0, "Depth": 300.0})
    mb.quantities(beam, "BaseQuantities", more={"Height": 300.0, "Width": 200.0})
    ms = members(mb, tmp_path)
    assert ms.loc["C1", "length"] == pytest.approx(3.5)    # 3500 mm
    assert ms.loc["C1", "length_source"] == "BaseQuantities.Height [mm]"
    assert math.isnan(ms.loc["B1", "length"]) and ms.loc["B1", "length_source"] is None


@pytest.mark.parametrize(("units", "scale"), [("mm", 1.0), ("m", 1e-3), ("foot-kip", 1 / 304.8)])
def test_a_length_from_net_volume_over_area_is_the_last_resort(tmp_path, units, scale):
    """A 200 × 10 flat, 3000 long: V = 2000 mm² × 3000 mm = 6e6 mm³, so V / A = 3 m (common
    practice), in each unit system's VOLUMEUNIT (mm³, m³, ft³)."""
    mb = ModelBuilder(schema="IFC4", units=units)
    f = mb.f
    steel = mb.material("S355", category="steel")
    flat = f.createIfcRectangleProfileDef("AREA", "FL200x10", f.createIfcAxis2Placement2D(
        f.createIfcCartesianPoint((0.0, 0.0)), None), 200.0 * scale, 10.0 * scale)
    volume = 200.0 * 10.0 * 3000.0 * scale**3
    lone = mb.member("IfcMember", name="lone", profile=flat, material=steel, body=None, axis=False)
    with_faceted_body(mb, lone, 200.0 * scale, 10.0 * scale, 3000.0 * scale)
    mb.quantities(lone, "BaseQuantities", more={"NetVolume": volume})
    ranked = mb.member("IfcMember", name="ranked", profile=flat, material=steel, body=None, axis=False)
    with_faceted_body(mb, ranked, 200.0 * scale, 10.0 * scale, 3000.0 * scale)
    mb.quantities(ranked, "BaseQuantities", length=2900.0 * scale, more={"NetVolume": volume})
    ms = members(mb, tmp_path)
    lone_m = ms.loc["lone"]
    assert lone_m["length"] == pytest.approx(3.0, rel=1e-9)
    src = lone_m["length_source"]
    assert src.startswith("BaseQuantities.NetVolume [") and "IfcRectangleProfileDef" in src and "(derived)" in src
    # a stated length wins over the derived one, whatever the two say
    assert ms.loc["ranked", "length"] == pytest.approx(2.9, rel=1e-9)
    assert ms.loc["ranked", "length_source"].startswith("BaseQuantities.Length")


def test_a_quantity_with_a_unit_of_its_own_is_read_in_it_or_says_why_not(tmp_path):
    """A millimetre model whose member's Length quantity carries its own Unit: a foot (0.3048 m,
    by definition) is read in feet; a kilogram is no length, and the warning names that unit as
    the quantity's own, not the model's unit assignment (which has a usable LENGTHUNIT)."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    metre = f.createIfcSIUnit(None, "LENGTHUNIT", None, "METRE")
    foot = f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 0, 0, 0, 0, 0, 0), "LENGTHUNIT", "FOOT",
                                          f.createIfcMeasureWithUnit(f.createIfcLengthMeasure(0.3048), metre))
    kilogram = f.createIfcSIUnit(None, "MASSUNIT", "KILO", "GRAM")
    for name, unit in (("FT", foot), ("KG", kilogram)):
        el = mb.member("IfcMember", name=name, material=steel, body=None, axis=False)
        qset = mb.quantities(el, "Qto_MemberBaseQuantities", 8.0, 314.16)
        qset.Quantities[0].Unit = unit
    path = tmp_path / "own-units.ifc"
    mb.write(str(path))
    ms = read_members(build_index(str(path))).frame.set_index("name")
    assert ms.loc["FT", "length"] == pytest.approx(8 * 0.3048, rel=1e-12)   # 1 ft = 0.3048 m (exact)
    assert math.isnan(ms.loc["KG", "length"])
    warning = next(w for w in ms.loc["KG", "warnings"] if "Length not used" in w)
    assert f"its own unit is not usable (#{kilogram.id()}" in warning and "[mass]" in warning, warning
    assert "IfcUnitAssignment" not in warning
